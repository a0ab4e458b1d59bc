// Observations: one trait value for one plot at one time, by one observer on one device.
// Append-only: a correction is a new observation that names the one it supersedes; nothing is updated.
// A withdrawal (an undo back to "no value") is an observation with an empty value and no number that
// supersedes the value it takes back: the plot and trait then have no current value, and every reader of
// current values treats them as absent. An empty value is never a recorded value.
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace pw {

struct NewObservation {
    int plot = 0;
    std::string trait;
    std::string value;                   // canonical text (core/traits/value.hpp)
    std::optional<double> number;
    std::string recorded_utc;            // ISO 8601, e.g. 2026-06-14T09:31:05Z
    std::string device;
    std::string observer;
    std::optional<std::int64_t> supersedes;  // id of the observation this one corrects
    std::string note;                    // reason for a correction
};

struct ObservationRecord {
    std::int64_t id = 0;
    NewObservation obs;
};

// What a plot event means for the plot's data: Damaged = flagged, values kept; Missing = treated as
// missing. The flag itself (why) is PlotEvent::flag, one of the trial's flags (TrialSpec::flags).
enum class PlotState { Normal, Damaged, Missing };
const char* to_string(PlotState s);                        // "normal", "damaged", "missing"
std::optional<PlotState> plot_state_from_string(std::string_view s);

struct PlotEvent {
    int plot = 0;
    PlotState state = PlotState::Normal;  // Missing exactly when the flag treats the plot as missing
    std::string reason;                   // the technician's note
    std::string recorded_utc;
    std::string device;
    std::string observer;
    std::string flag = {};  // name of a TrialSpec flag; empty when written: the state's name ("damaged", "missing")
};

// True for a withdrawal: an empty value (see above).
inline bool is_withdrawal(const NewObservation& o) { return o.value.empty(); }

// What the recording session needs from a store. Every call commits before it returns, so a value the
// screen has confirmed survives a power cut. Implemented by storage::Store; tests may use a fake.
class RecordSink {
public:
    virtual ~RecordSink() = default;
    virtual std::int64_t add_observation(const NewObservation& obs) = 0;
    virtual void add_plot_event(const PlotEvent& ev) = 0;
    // Current (not superseded) observations of one plot, withdrawals included (a later value supersedes
    // the withdrawal, so each plot and trait keeps one chain).
    virtual std::vector<ObservationRecord> current_for_plot(int plot) const = 0;
    // Every flag put on one plot, oldest first, `flag` filled in.
    virtual std::vector<PlotEvent> events_for_plot(int plot) const = 0;
};

}  // namespace pw
