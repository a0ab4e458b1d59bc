// The recording session: the field-day logic behind every recorder screen.
//
// A technician scans a tag (the scanner types "PW1:TRIAL-PLOT-C" and Enter) or types the human code; the
// plot opens, and the session asks for each trait in the spec's order. Each accepted value is handed to the
// RecordSink at once, which commits it before returning, so a power cut loses nothing already confirmed.
//
// One line in, messages out: the line recorder prints them, the full-screen recorder draws the same state.
// The session never reads a clock or a file itself: the clock is injected, the store is a RecordSink.
//
// Lines the session understands (docs/recording.md):
//   plot code              open that plot (any time; a scanned code also interrupts trait entry)
//   value                  the answer to the trait being asked; an empty line leaves the trait unrecorded
//   /skip                  leave the plot, recording nothing more on it
//   /flag NAME NOTE        flag the open plot with one of the spec's flags (TrialSpec::flags) and a note;
//                          a flag that treats the plot as missing closes it
//   /fix [REASON]          enter again the last value confirmed in this session; the new value supersedes it
//   /undo                  take back the last value confirmed in this session (a stack: again and again, back
//                          to the session's start). The store stays append-only: the earlier value is
//                          written again, or a withdrawal when there was none, superseding the undone one
//   /next  /missing        where to go next; plots of the current block still without records
//   /help  /quit
#pragma once
#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <set>
#include <string>
#include <string_view>
#include <unordered_map>
#include <vector>

#include "core/design/layout.hpp"
#include "core/record/observation.hpp"
#include "core/spec/trial_spec.hpp"

namespace pw {

enum class Severity { Info, Warning, Refused };

struct Message {
    Severity severity = Severity::Info;
    std::string text;
    bool card = false;   // a line of the plot card: a full-screen view draws the card itself
};

struct RecorderIdentity {
    std::string device;
    std::string observer;
};

class RecordingSession {
public:
    using Clock = std::function<std::string()>;  // returns ISO 8601 UTC, e.g. 2026-06-14T09:31:05Z

    // `done_plots`: plots that already hold observations or a flag when the session starts.
    RecordingSession(const TrialSpec& spec, const Layout& layout, RecordSink& sink, RecorderIdentity who,
                     Clock clock, std::set<int> done_plots);

    std::vector<Message> handle(std::string_view line);

    // What the next line will be taken as, e.g. "grain_kg (kg, 0 to 40, 2 decimals) [was 12.40]".
    std::string prompt() const;
    bool finished() const { return finished_; }

    // Read-only state for views.
    const PlotPlacement* open_plot() const;
    std::optional<std::size_t> asking_trait() const;          // index into spec.traits
    std::vector<std::string> plot_card() const;               // lines describing the open plot
    int plots_done() const { return static_cast<int>(done_.size()); }
    int plots_total() const { return static_cast<int>(layout_.plots.size()); }
    const PlotPlacement* next_in_walk() const;                 // first plot in walking order not done
    std::vector<int> missing_in_block(int block) const;        // plot ids of the block not done
    std::string treatment_shown(const PlotPlacement& p) const; // label, or "(blind)"

private:
    struct Pending {               // a correction waiting for its new value
        std::int64_t supersedes = 0;
        int plot = 0;
        std::size_t trait = 0;
        std::string note;
        std::optional<std::size_t> resume;  // trait to go back to afterwards (same plot only)
    };
    struct Confirmed {             // one confirmation of this session, on the undo stack
        std::int64_t id = 0;
        int plot = 0;
        std::size_t trait = 0;
        std::string value;
        // The value it superseded (empty when that was a withdrawal), or none when it was the first.
        std::optional<NewObservation> before;
    };

    std::vector<Message> open(int plot_id, bool scanned);
    std::vector<Message> take_value(std::string_view line);
    std::vector<Message> command(std::string_view line);
    std::vector<Message> close_plot(const char* why);
    std::vector<Message> flag(std::string_view arg);
    std::vector<Message> undo();
    std::vector<Message> go_to(int plot, std::size_t trait, const char* why);
    bool has_records(int plot) const;
    void advance_trait(std::vector<Message>& out);
    std::optional<std::string> current_value(int plot, const std::string& trait) const;
    std::optional<std::int64_t> current_id(int plot, const std::string& trait) const;
    std::string next_hint() const;

    const TrialSpec& spec_;
    const Layout& layout_;
    RecordSink& sink_;
    RecorderIdentity who_;
    Clock clock_;
    void mark_done(int plot_id);
    void mark_not_done(int plot_id);

    // Done plots, and the rest by layout index (= walking order), so that the next plot and a block's
    // missing plots cost an index lookup, not a pass over the whole trial (docs/benchmarks.md).
    std::set<int> done_;
    std::set<std::size_t> not_done_;                            // layout indices of plots not done
    std::unordered_map<int, std::vector<std::size_t>> by_block_;  // block -> layout indices, walking order
    std::unordered_map<int, std::size_t> by_id_;  // plot id -> index in layout_.plots

    const PlotPlacement* plot_ = nullptr;         // open plot, or null
    std::optional<std::size_t> trait_;            // trait being asked
    std::vector<ObservationRecord> plot_current_; // current observations of the open plot (withdrawals too)
    std::vector<PlotEvent> plot_flags_;           // flags of the open plot
    std::optional<Pending> pending_;
    std::vector<Confirmed> confirmed_;            // the undo stack, oldest first; back() is the last value
    std::map<std::pair<int, std::size_t>, std::int64_t> head_;  // (plot, trait) -> newest row written here
    int undone_ = 0;                              // values taken back in this session
    int last_block_ = 0;
    bool finished_ = false;
};

}  // namespace pw
