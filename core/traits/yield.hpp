// Grain yield from what was weighed in the field: the agronomic conversions a trial spec declares in
// [[yields]] (core/spec/trial_spec.hpp, docs/spec.md "Yields").
//
//   adjusted weight = fresh weight × (100 − M) / (100 − Mstd)
//       M the grain's measured moisture and Mstd the standard basis, both % of the wet weight. The dry
//       matter is preserved: fresh × (100 − M) = adjusted × (100 − Mstd). Dry-matter conservation, from
//       memory; the calculation is the one treated in Mulvaney & Devkota (2020), "Adjusting crop yield to a
//       standard moisture content", UF/IFAS EDIS SS-AGR-443.
//   t/ha = kg per m² of net harvest area × 10;  kg/ha = kg per m² × 10 000
//       SI arithmetic (1 ha = 10 000 m², 1 t = 1000 kg). The area is the NET harvest area, the plot
//       less its discarded border rows and end trims (common practice).
//
// The standard moisture of a crop is data, not a constant of the code: moisture_bases() lists the defaults
// with their origins, the spec may set its own (standard_moisture_pct), and the report prints the basis
// used and where it came from. A plot whose moisture is not recorded gets no adjusted yield: its weight is
// never adjusted with a guessed moisture.
#pragma once
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/spec/trial_spec.hpp"

namespace pw {

// A crop's standard moisture for reporting grain yield.
struct MoistureBasis {
    std::vector<std::string> names;  // lower case: the crop and its other names ("maize", "corn")
    double percent = 0;              // % of wet weight
    std::string origin;              // its source, or "common practice"
};

// The defaults, one per crop: maize 15.5, wheat 13.5, rice 14, soybean 13, barley 14.5, sorghum 14.
const std::vector<MoistureBasis>& moisture_bases();

// The default for a trial's crop (TrialSpec::crop): the whole name or its last word matches, ignoring
// case ("Winter wheat" → wheat, "paddy rice" → rice). Empty when the crop has no default.
std::optional<MoistureBasis> moisture_basis_for_crop(std::string_view crop);

// fresh × (100 − M) / (100 − Mstd). Throws InputError when M or Mstd is not in [0, 100).
double moisture_adjusted(double fresh_weight, double moisture_pct, double standard_pct);

// A plot's yield in the unit of `y` from its recorded weight (in the weight trait's unit) and moisture (%).
// Empty, with the reason in `why`, when the weight is missing, or when the yield is moisture-adjusted
// and the moisture is missing. Throws InputError for a moisture of 100 % or more.
struct PlotYield {
    std::optional<double> value;
    std::string why;                 // when value is empty: "no grain_kg recorded", "no moisture recorded"
};
PlotYield plot_yield(const YieldSpec& y, std::optional<double> weight, std::optional<double> moisture_pct);

// One line for people: how the yield is computed, with the basis, its origin and the area.
// "grain_kg (kg) adjusted from moisture (%) to 15.5 % moisture (maize default: ...), per 12 m² net harvest
// area, in t/ha"
std::string describe_yield(const YieldSpec& y);

}  // namespace pw
