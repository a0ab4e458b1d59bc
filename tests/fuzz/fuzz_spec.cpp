// Fuzz target: the trial spec loader. A spec arrives as a file from anyone (e-mail, a USB stick, a station's
// share), so any byte string must give a spec or a SpecError, never a crash, a hang or a sanitizer report.
// When a spec parses, its design is laid out too (the layout code then meets every odd spec the parser
// lets through); designs are capped at a few hundred plots so that one input stays fast.
#include <cstddef>
#include <cstdint>
#include <string>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/spec/trial_spec.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string text(reinterpret_cast<const char*>(data), size);
    try {
        const pw::TrialSpec spec = pw::parse_trial_spec(text, "fuzz.toml");
        const auto at_least_1 = [](int n) { return static_cast<std::size_t>(n > 0 ? n : 1); };
        const std::size_t plots =
            spec.treatments.size() * at_least_1(spec.blocks) * at_least_1(spec.replicates);
        if (plots <= 400) (void)pw::design_trial(spec, spec.seed.value_or(1));
    } catch (const pw::Error&) {
        // refused with a message: the expected outcome for most inputs
    }
    return 0;
}
