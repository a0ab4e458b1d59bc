// Composing the recorder's screen from the session (recorder_view.hpp). Sizes: works from 32x12 up; the
// card and the messages share what the fixed lines (status, prompt, typed line, key bar) leave.
#include "firmware_app/recorder_view.hpp"

#include <fmt/format.h>

#include <algorithm>

namespace pw::app {
namespace {

// Characters (UTF-8 code points) in s; terminals show one cell for each of the characters we use.
std::size_t chars(const std::string& s) {
    return static_cast<std::size_t>(std::count_if(s.begin(), s.end(), [](char c) { return (c & 0xC0) != 0x80; }));
}

// The first n characters of s, never cutting a UTF-8 sequence.
std::string first_chars(const std::string& s, std::size_t n) {
    std::size_t count = 0, i = 0;
    for (; i < s.size(); ++i) {
        if ((s[i] & 0xC0) != 0x80) {
            if (count == n) break;
            ++count;
        }
    }
    return s.substr(0, i);
}

// Word-wraps text to lines of at most `width` characters; a word longer than the width is cut.
std::vector<std::string> wrap(const std::string& text, std::size_t width) {
    std::vector<std::string> out;
    std::string line;
    std::size_t pos = 0;
    while (pos <= text.size()) {
        std::size_t end = text.find_first_of(" \n", pos);
        if (end == std::string::npos) end = text.size();
        std::string word = text.substr(pos, end - pos);
        while (chars(word) > width) {
            if (!line.empty()) out.push_back(line), line.clear();
            out.push_back(first_chars(word, width));
            word = word.substr(first_chars(word, width).size());
        }
        if (!line.empty() && chars(line) + 1 + chars(word) > width) out.push_back(line), line.clear();
        if (!word.empty()) line += (line.empty() ? "" : " ") + word;
        if (end < text.size() && text[end] == '\n') out.push_back(line), line.clear();
        pos = end + 1;
    }
    if (!line.empty()) out.push_back(line);
    return out;
}

Role role_of(Severity s) {
    switch (s) {
        case Severity::Warning: return Role::Warning;
        case Severity::Refused: return Role::Refused;
        case Severity::Info: break;
    }
    return Role::Normal;
}

std::vector<std::string> start_card(const RecordingSession& s, const TrialSpec& spec, const ViewState& v) {
    std::vector<std::string> card{spec.title,
                                  fmt::format("{} of {} plots have records", s.plots_done(), s.plots_total())};
    if (const PlotPlacement* n = s.next_in_walk())
        card.push_back(fmt::format("next: plot {} (block {})", n->id, n->block));
    if (spec.blind) card.push_back("blind: treatments hidden");
    card.push_back(fmt::format("{} / {}", v.device, v.observer));
    return card;
}

}  // namespace

void ViewState::add(const std::vector<Message>& ms, std::size_t keep) {
    for (const auto& m : ms)
        if (!m.card) recent.push_back(m);  // the card is drawn from the session's state
    while (recent.size() > keep) recent.pop_front();
}

const std::vector<KeyHint>& key_hints() {
    static const std::vector<KeyHint> hints{
        {"F1", "help", "help (any key returns)"},
        {"F2", "skip", "skip: leave this plot"},
        {"F3", "flag", "flag the plot (then a note)"},
        {"F4", "undo", "undo the last saved value"},
        {"F5", "fix", "fix the last saved value"},
        {"F6", "todo", "plots left in this block"},
        {"F10", "end", "end the session"},
    };
    return hints;
}

const FlagSpec* flag_for_key(const TrialSpec& spec, int ch) {
    if (ch < '1' || ch > '9') return nullptr;
    const auto i = static_cast<std::size_t>(ch - '1');
    return i < spec.flags.size() ? &spec.flags[i] : nullptr;
}

namespace {

// The flag menu: one line per flag, "3 lodged", with "(no data)" beside a flag that treats the plot as
// missing; in two columns without the marker when one per line does not fit.
std::vector<ScreenLine> flag_menu(const RecordingSession& s, const TrialSpec& spec, std::size_t w, std::size_t room) {
    std::vector<ScreenLine> out;
    const std::size_t n = spec.flags.size();
    auto item = [&](std::size_t i, bool marker) {
        return fmt::format("{} {}{}", i + 1, spec.flags[i].label, marker && spec.flags[i].missing ? " (no data)" : "");
    };
    const bool one_per_line = n <= room;
    const std::size_t lines = one_per_line ? n : (n + 1) / 2;
    if (lines + 1 <= room)
        out.push_back({Role::Heading, first_chars(fmt::format("flag plot {}:", s.open_plot() ? s.open_plot()->id : 0), w)});
    if (one_per_line) {
        for (std::size_t i = 0; i < n; ++i) out.push_back({Role::Normal, first_chars(item(i, true), w)});
        return out;
    }
    const std::size_t col = w / 2;
    for (std::size_t i = 0; i < n; i += 2) {
        std::string left = first_chars(item(i, false), col - 1);
        std::string line = left + std::string(col - chars(left), ' ');
        if (i + 1 < n) line += first_chars(item(i + 1, false), w - col);
        out.push_back({Role::Normal, line});
    }
    return out;
}

}  // namespace

std::vector<ScreenLine> compose_screen(const RecordingSession& s, const TrialSpec& spec, const ViewState& v,
                                       int width, int height) {
    const std::size_t w = static_cast<std::size_t>(std::max(width, 16));
    const std::size_t h = static_cast<std::size_t>(std::max(height, 8));
    auto cut = [&](Role r, const std::string& t) { return ScreenLine{r, first_chars(t, w)}; };

    // Fixed lines: status on top; prompt, typed line and key bar at the bottom.
    const PlotPlacement* next = s.next_in_walk();
    ScreenLine status = cut(Role::Status, fmt::format("{} {}/{}{}", spec.code, s.plots_done(), s.plots_total(),
                                                      next ? fmt::format(" next {}", next->id) : " all done"));
    // The key bar is the last line: a terminal cannot be written in its bottom-right cell without
    // scrolling, so the bar stops one short of the width.
    std::string keys;
    for (const auto& k : key_hints()) {
        std::string item = k.key + k.short_label;
        if (chars(keys) + (keys.empty() ? 0 : 1) + chars(item) > w - 1) break;
        keys += (keys.empty() ? "" : " ") + item;
    }
    std::vector<ScreenLine> bottom;
    if (!v.help) {
        std::string ask = v.asking.empty() ? s.prompt() : v.asking;
        if (v.choosing_flag)
            ask = fmt::format("press 1-{} to choose; other keys cancel", spec.flags.size());
        for (const auto& l : wrap(ask, w)) bottom.push_back({Role::Prompt, l});
        if (bottom.size() > 2) bottom.resize(2);
        // The typed line keeps its end visible: that is where the cursor is.
        std::string typed = "> " + v.typed + "_";
        if (chars(typed) > w) typed = typed.substr(first_chars(typed, chars(typed) - w).size());
        bottom.push_back({Role::Normal, typed});
    }
    bottom.push_back(cut(Role::Keys, keys));

    const std::size_t middle = h - 1 - bottom.size();
    std::vector<ScreenLine> body;
    if (v.help) {
        body.push_back(cut(Role::Heading, "keys"));
        for (const auto& k : key_hints()) body.push_back(cut(Role::Normal, k.key + " " + k.long_label));
        body.push_back(cut(Role::Normal, "Enter: confirm; empty: leave the trait"));
    } else if (v.choosing_flag) {
        body = flag_menu(s, spec, w, middle);
    } else {
        // The card first (it may take all but two lines), then the messages in what is left: the newest
        // message from its beginning, older ones above it while room remains.
        std::vector<std::string> card = s.open_plot() ? s.plot_card() : start_card(s, spec, v);
        const std::size_t card_room = middle > 2 ? middle - 2 : 0;
        for (std::size_t i = 0; i < card.size(); ++i)
            for (const auto& l : wrap(card[i], w))
                if (body.size() < card_room) body.push_back({i == 0 ? Role::Heading : Role::Normal, l});
        std::size_t room = middle - body.size();
        std::vector<ScreenLine> msgs;
        for (auto m = v.recent.rbegin(); m != v.recent.rend() && room > 0; ++m) {
            std::string marker = m->severity == Severity::Refused ? "NO: " : m->severity == Severity::Warning ? "! " : "";
            auto lines = wrap(marker + m->text, w);
            if (lines.size() > room) lines.resize(room);
            room -= lines.size();
            std::vector<ScreenLine> block;
            for (const auto& l : lines) block.push_back({role_of(m->severity), l});
            msgs.insert(msgs.begin(), block.begin(), block.end());
        }
        body.resize(middle - msgs.size(), ScreenLine{Role::Normal, ""});
        body.insert(body.end(), msgs.begin(), msgs.end());
    }
    body.resize(middle, ScreenLine{Role::Normal, ""});

    std::vector<ScreenLine> screen{status};
    screen.insert(screen.end(), body.begin(), body.end());
    screen.insert(screen.end(), bottom.begin(), bottom.end());
    return screen;
}

}  // namespace pw::app
