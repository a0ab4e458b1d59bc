// Grain yield conversions (yield.hpp gives the formulas and their sources).
#include "core/traits/yield.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <cmath>

#include "core/error.hpp"

namespace pw {

const std::vector<MoistureBasis>& moisture_bases() {
    // The standard grain moisture for reporting yield, % wet basis. Only maize has a published source at
    // hand; the others are the usual trade standards (US values where countries differ) and a trial in
    // another market sets its own with standard_moisture_pct.
    static const std::vector<MoistureBasis> bases{
        {{"maize", "corn"}, 15.5,
         "Mulvaney & Devkota (2020), Adjusting crop yield to a standard moisture content, UF/IFAS EDIS SS-AGR-443"},
        {{"wheat"}, 13.5, "common practice (US trade standard)"},
        {{"rice", "paddy"}, 14.0, "common practice (the rice research convention for rough rice)"},
        {{"soybean", "soybeans", "soya", "soy"}, 13.0, "common practice (US trade standard)"},
        {{"barley"}, 14.5, "common practice (US trade standard)"},
        {{"sorghum"}, 14.0, "common practice (US trade standard)"},
    };
    return bases;
}

std::optional<MoistureBasis> moisture_basis_for_crop(std::string_view crop) {
    std::string name;
    for (char c : crop) name += static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    while (!name.empty() && std::isspace(static_cast<unsigned char>(name.back()))) name.pop_back();
    const std::size_t start = name.find_first_not_of(" \t");
    if (start == std::string::npos) return std::nullopt;
    name.erase(0, start);
    const std::size_t space = name.find_last_of(" \t");
    const std::string last = space == std::string::npos ? name : name.substr(space + 1);
    for (const MoistureBasis& b : moisture_bases())
        for (const std::string& n : b.names)
            if (n == name || n == last) return b;
    return std::nullopt;
}

double moisture_adjusted(double fresh_weight, double moisture_pct, double standard_pct) {
    auto in_range = [](double m) { return std::isfinite(m) && m >= 0 && m < 100; };
    if (!in_range(moisture_pct))
        throw InputError(fmt::format("grain moisture {} % is not a moisture; expected 0 to below 100 % of the wet weight",
                                     moisture_pct));
    if (!in_range(standard_pct))
        throw InputError(fmt::format("standard moisture {} % is not a moisture; expected 0 to below 100 %", standard_pct));
    return fresh_weight * (100.0 - moisture_pct) / (100.0 - standard_pct);
}

PlotYield plot_yield(const YieldSpec& y, std::optional<double> weight, std::optional<double> moisture_pct) {
    if (!weight) return {std::nullopt, fmt::format("no {} recorded", y.weight)};
    double kg = *weight * y.weight_kg_per_unit;
    if (!y.moisture.empty()) {
        if (!moisture_pct)
            return {std::nullopt, fmt::format("{} recorded but no {}: the weight is not adjusted without its moisture",
                                              y.weight, y.moisture)};
        kg = moisture_adjusted(kg, *moisture_pct, y.standard_moisture_pct.value_or(0));
    }
    switch (y.unit) {
        case YieldUnit::TonnesPerHectare: return {kg / y.area_m2 * 10.0, ""};
        case YieldUnit::KilogramsPerHectare: return {kg / y.area_m2 * 10000.0, ""};
        case YieldUnit::KilogramsPerPlot: return {kg, ""};
    }
    return {kg, ""};
}

std::string describe_yield(const YieldSpec& y) {
    std::string o = y.weight;
    if (!y.moisture.empty())
        o += fmt::format(" adjusted from the recorded {} to {} % moisture ({})", y.moisture,
                         y.standard_moisture_pct.value_or(0), y.basis_origin);
    else
        o += " as weighed (not adjusted for moisture)";
    if (y.unit != YieldUnit::KilogramsPerPlot) o += fmt::format(", per {} m² of net harvest area", y.area_m2);
    return o + fmt::format(", in {}", to_string(y.unit));
}

}  // namespace pw
