// Fuzz target: the plot code parser. Whatever a scanner or a gloved thumb types (a damaged tag, another
// barcode, a half-typed code) must give a plot code or an InputError, never a crash or a sanitizer report.
// A code that parses must also survive the round trip: printing it again gives a code that parses to the
// same trial and plot (the human code's own definition, docs/tags.md).
#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <string_view>

#include "core/error.hpp"
#include "core/tags/payload.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
    const std::string_view text(reinterpret_cast<const char*>(data), size);
    try {
        const pw::PlotCode code = pw::parse_plot_code(text);
        const pw::PlotCode again = pw::parse_plot_code(pw::human_code(code.trial, code.plot));
        if (again.trial != code.trial || again.plot != code.plot) std::abort();
    } catch (const pw::Error&) {
    }
    return 0;
}
