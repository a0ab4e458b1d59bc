// The full-screen recorder's view: what the handheld's screen shows, composed from the recording session's
// state. Pure: no terminal here, so tests can compose a screen at any size and read it as text.
//
// The screen (top to bottom): a status line (trial, progress, next plot), the plot card or the start card,
// the latest messages, the prompt with what is being typed, and a key bar. While a flag is being chosen,
// the spec's flags take the card's place, each with the one key (1 to 9) that chooses it. Nothing depends on colour alone:
// each line carries a role, and the terminal layer gives roles attributes (bold, reverse, underline) that
// read on monochrome screens.
#pragma once
#include <deque>
#include <string>
#include <vector>

#include "core/record/session.hpp"

namespace pw::app {

enum class Role { Normal, Status, Heading, Warning, Refused, Prompt, Keys };

struct ScreenLine {
    Role role = Role::Normal;
    std::string text;   // already cut to the screen width (in characters)
};

// What the view keeps beside the session: the line being typed, recent messages, a pending question.
struct ViewState {
    std::string typed;
    std::deque<Message> recent;           // newest last
    std::string asking;                   // a question the view asks itself (flag note), "" when none
    bool choosing_flag = false;           // the flag key was pressed: the next key chooses a flag
    bool help = false;
    std::string device;
    std::string observer;
    void add(const std::vector<Message>& ms, std::size_t keep = 6);
};

// One key binding: shown on the key bar and in the help screen.
struct KeyHint {
    std::string key;     // "F2"
    std::string short_label;   // "skip" (key bar)
    std::string long_label;    // "leave this plot" (help)
};
const std::vector<KeyHint>& key_hints();

// The flag chosen by key `ch` ('1' for the first of spec.flags), or null.
const FlagSpec* flag_for_key(const TrialSpec& spec, int ch);

std::vector<ScreenLine> compose_screen(const RecordingSession& s, const TrialSpec& spec, const ViewState& v,
                                       int width, int height);

}  // namespace pw::app
