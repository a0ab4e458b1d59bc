// Observations: one trait value for one plot at one time, by one observer on one device.
// Append-only: a correction is a new observation that names the one it supersedes; nothing is updated.
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

enum class PlotState { Normal, Damaged, Missing };
const char* to_string(PlotState s);                        // "normal", "damaged", "missing"
std::optional<PlotState> plot_state_from_string(std::string_view s);

struct PlotEvent {
    int plot = 0;
    PlotState state = PlotState::Normal;
    std::string reason;
    std::string recorded_utc;
    std::string device;
    std::string observer;
};

// What the recording session needs from a store. Every call commits before it returns, so a value the
// screen has confirmed survives a power cut. Implemented by storage::Store; tests may use a fake.
class RecordSink {
public:
    virtual ~RecordSink() = default;
    virtual std::int64_t add_observation(const NewObservation& obs) = 0;
    virtual void add_plot_event(const PlotEvent& ev) = 0;
    // Current (not superseded) observations of one plot.
    virtual std::vector<ObservationRecord> current_for_plot(int plot) const = 0;
};

}  // namespace pw
