// Names of plot states as stored and shown.
#include "core/record/observation.hpp"

namespace pw {

const char* to_string(PlotState s) {
    switch (s) {
        case PlotState::Normal: return "normal";
        case PlotState::Damaged: return "damaged";
        case PlotState::Missing: return "missing";
    }
    return "normal";
}

std::optional<PlotState> plot_state_from_string(std::string_view s) {
    for (PlotState st : {PlotState::Normal, PlotState::Damaged, PlotState::Missing})
        if (s == to_string(st)) return st;
    return std::nullopt;
}

}  // namespace pw
