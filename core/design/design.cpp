// Chooses the layout routine named by trial.design. Adding a design means adding its routine here and its
// name to the list the spec parser accepts (core/spec/trial_spec.cpp) and to docs/spec.md.
#include <fmt/format.h>

#include "core/design/layout.hpp"
#include "core/error.hpp"

namespace pw {

Layout design_trial(const TrialSpec& spec, std::uint64_t seed) {
    if (spec.design == "rcbd") return design_rcbd(spec, seed);
    throw DesignError(fmt::format("trial.design: unknown design '{}'; accepted designs: rcbd", spec.design));
}

}  // namespace pw
