// Grain yield from weight, moisture and net harvest area ([[yields]], core/traits/yield.hpp): the moisture
// adjustment, the scaling to t/ha and kg/ha, the crops' standard moisture bases, the spec's refusals, and
// the yields computed from a trial database's values in force (storage/trait_values.hpp).
//
// Outside sources the checks rest on (the expected numbers were computed outside the project with
// R 4.2.2 from the formulas named here, in a reference set of agronomic worked examples):
//   - adjusted = fresh × (100 − M) / (100 − Mstd), dry-matter conservation (from memory); the calculation
//     of Mulvaney & Devkota (2020), "Adjusting crop yield to a standard moisture content", UF/IFAS EDIS
//     SS-AGR-443, whose setting (10 000 lb/ac of corn at 20 % to 15.5 %) gives 9467.456 lb/ac, and whose
//     "common mistake" (subtract the water, add 15.5 % of the dry matter) gives 9240;
//   - t/ha = kg per m² of net harvest area × 10 (SI definitions of the hectare and the tonne);
//   - the standard moistures: maize 15.5 % (Mulvaney & Devkota 2020, published); wheat 13.5 %, rice 14 %,
//     soybean 13 %, barley 14.5 %, sorghum 14 % (common practice, US trade standards, from memory).
#include <catch2/catch.hpp>

#include <string>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/traits/yield.hpp"
#include "storage/export_tables.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"
#include "storage/trait_values.hpp"
#include "temp_dir.hpp"

using namespace pw;
using Catch::Matchers::Contains;
using Catch::Matchers::EndsWith;

namespace {

// A maize plot 5 m long, 3 m wide, whose centre 2.4 m are harvested over its whole length: a net harvest
// area of 12 m², the reference set's worked example.
std::string spec_text(const std::string& crop, const std::string& yields) {
    return R"toml(
[trial]
code = "YLD26"
title = "Yield conversion"
site = "Test strip"
crop = ")toml" + crop + R"toml("
design = "rcbd"
blocks = 2
seed = 7

[field]
plot_length_m = 5.0
plot_width_m = 3.0
alley_m = 1.0
harvest_length_m = 5.0
harvest_width_m = 2.4

[gradient]
bearing_deg = 0
label = "slope"

[[treatments]]
label = "A"

[[treatments]]
label = "B"

[[traits]]
name = "grain_kg"
unit = "kg"
kind = "number"
min = 0
max = 20
decimals = 2

[[traits]]
name = "grain_g"
unit = "g"
kind = "number"
min = 0
max = 20000
decimals = 0

[[traits]]
name = "moisture"
unit = "%"
kind = "number"
min = 5
max = 40
decimals = 1

[[traits]]
name = "height_cm"
unit = "cm"
kind = "number"
)toml" + yields;
}

const char* const kYield = R"toml(
[[yields]]
name = "yield_t_ha"
weight = "grain_kg"
moisture = "moisture"
)toml";

TrialSpec parse(const std::string& crop, const std::string& yields) { return parse_trial_spec(spec_text(crop, yields), "yld.toml"); }

std::string refusal(const std::string& crop, const std::string& yields) {
    try {
        parse(crop, yields);
    } catch (const SpecError& e) {
        return e.what();
    }
    return "(accepted)";
}

}  // namespace

TEST_CASE("Moisture adjustment keeps the dry matter: the reference set's worked examples", "[yield]") {
    // 10 kg of grain at 22 % moisture to each crop's basis; R 4.2.2, fresh × (100 − M) / (100 − Mstd).
    CHECK(moisture_adjusted(10, 22, 15.5) == Approx(9.23076923076923).epsilon(1e-13));   // maize
    CHECK(moisture_adjusted(10, 22, 13.5) == Approx(9.01734104046243).epsilon(1e-13));   // wheat
    CHECK(moisture_adjusted(10, 22, 14) == Approx(9.06976744186047).epsilon(1e-13));     // rice, sorghum
    CHECK(moisture_adjusted(10, 22, 13) == Approx(8.96551724137931).epsilon(1e-13));     // soybean
    CHECK(moisture_adjusted(10, 22, 14.5) == Approx(9.12280701754386).epsilon(1e-13));   // barley
    // Grain drier than the basis gains weight: 10 kg maize at 12 % → 10.414201 kg at 15.5 %.
    CHECK(moisture_adjusted(10, 12, 15.5) == Approx(10.414201183432).epsilon(1e-13));
    // The dry matter itself: basis 0 %.
    CHECK(moisture_adjusted(10, 22, 0) == Approx(7.8).epsilon(1e-14));
    // At the basis the factor is exactly 1.
    CHECK(moisture_adjusted(8.75, 15.5, 15.5) == 8.75);
}

TEST_CASE("Moisture adjustment follows EDIS SS-AGR-443, not the subtract-then-add mistake", "[yield]") {
    // Mulvaney & Devkota (2020): 10 000 lb/ac of corn at 20 % moisture, reported at 15.5 %.
    const double adjusted = moisture_adjusted(10000, 20, 15.5);
    CHECK(adjusted == Approx(9467.45562130177).epsilon(1e-13));
    // The method the bulletin warns against: 8000 lb of dry matter + 15.5 % of it = 9240.
    CHECK(std::abs(adjusted - 9240.0) > 200);
}

TEST_CASE("A moisture or basis of 100 % or more, or below 0, is refused", "[yield]") {
    CHECK_THROWS_WITH(moisture_adjusted(10, 100, 15.5), Contains("expected 0 to below 100 %"));
    CHECK_THROWS_WITH(moisture_adjusted(10, 22, 100), Contains("standard moisture 100 %"));
    CHECK_THROWS_AS(moisture_adjusted(10, -1, 15.5), InputError);
}

TEST_CASE("Plot yield per hectare: the reference set's maize plot", "[yield]") {
    // 4.20 kg at 24 % from 12 m² net: adjusted 3.77751479 kg, 0.3147929 kg/m², 3.147929 t/ha, 3147.929 kg/ha.
    const TrialSpec t = parse("maize", kYield);
    REQUIRE(t.yields.size() == 1);
    const YieldSpec& y = t.yields[0];
    CHECK(y.area_m2 == Approx(12.0).epsilon(1e-15));
    CHECK(*y.standard_moisture_pct == 15.5);
    const PlotYield py = plot_yield(y, 4.20, 24.0);
    REQUIRE(py.value);
    CHECK(*py.value == Approx(3.14792899408284).epsilon(1e-13));

    YieldSpec kg_ha = y;
    kg_ha.unit = YieldUnit::KilogramsPerHectare;
    CHECK(*plot_yield(kg_ha, 4.20, 24.0).value == Approx(3147.92899408284).epsilon(1e-13));
    YieldSpec per_plot = y;
    per_plot.unit = YieldUnit::KilogramsPerPlot;
    CHECK(*plot_yield(per_plot, 4.20, 24.0).value == Approx(3.77751479289941).epsilon(1e-13));

    // Without moisture adjustment: 4.20 kg / 12 m² × 10 = 3.5 t/ha (the reference set's unadjusted figure).
    const TrialSpec plain = parse("maize", "[[yields]]\nname = \"raw_t_ha\"\nweight = \"grain_kg\"\n");
    CHECK(*plot_yield(plain.yields[0], 4.20, std::nullopt).value == Approx(3.5).epsilon(1e-15));
}

TEST_CASE("A weight in grams is converted to kilograms", "[yield]") {
    // 4200 g is 4.20 kg (SI): the same 3.147929 t/ha as the maize plot above.
    const TrialSpec t = parse("maize", "[[yields]]\nname = \"y\"\nweight = \"grain_g\"\nmoisture = \"moisture\"\n");
    CHECK(*plot_yield(t.yields[0], 4200, 24.0).value == Approx(3.14792899408284).epsilon(1e-13));
}

TEST_CASE("A missing moisture leaves the yield missing, never adjusted with a guess", "[yield]") {
    const TrialSpec t = parse("maize", kYield);
    const PlotYield py = plot_yield(t.yields[0], 4.20, std::nullopt);
    CHECK_FALSE(py.value);
    CHECK_THAT(py.why, Contains("no moisture"));
    const PlotYield none = plot_yield(t.yields[0], std::nullopt, 24.0);
    CHECK_FALSE(none.value);
    CHECK_THAT(none.why, Contains("no grain_kg recorded"));
}

TEST_CASE("Each crop's default moisture basis, and the spec's own basis instead", "[yield]") {
    // Maize 15.5 % (Mulvaney & Devkota 2020); the others common practice (US trade standards, from memory).
    CHECK(moisture_basis_for_crop("maize")->percent == 15.5);
    CHECK(moisture_basis_for_crop("Corn")->percent == 15.5);
    CHECK(moisture_basis_for_crop("winter wheat")->percent == 13.5);
    CHECK(moisture_basis_for_crop("paddy rice")->percent == 14.0);
    CHECK(moisture_basis_for_crop("soybean")->percent == 13.0);
    CHECK(moisture_basis_for_crop("Barley")->percent == 14.5);
    CHECK(moisture_basis_for_crop("grain sorghum")->percent == 14.0);
    CHECK_FALSE(moisture_basis_for_crop("lentil"));
    CHECK_FALSE(moisture_basis_for_crop(""));

    // The basis used is shown with its origin; a basis set in the spec replaces the default and changes the
    // yield: 4.20 kg at 24 % on 12 m² is 3.147929 t/ha at 15.5 % and 4.20 × 76 / 85 / 12 × 10 = 3.129412
    // t/ha at 15 % (the same formula, R 4.2.2).
    const TrialSpec by_crop = parse("maize", kYield);
    CHECK_THAT(by_crop.yields[0].basis_origin, Contains("Mulvaney & Devkota (2020)"));
    CHECK_THAT(describe_yield(by_crop.yields[0]), Contains("15.5 % moisture"));
    const TrialSpec own = parse("maize", std::string(kYield) + "standard_moisture_pct = 15\n");
    CHECK(own.yields[0].basis_origin == "set in the spec");
    CHECK(*plot_yield(own.yields[0], 4.20, 24.0).value == Approx(3.12941176470588).epsilon(1e-13));
}

TEST_CASE("The spec refuses a yield it cannot compute, naming the key", "[yield][spec]") {
    // A crop without a default needs its basis.
    CHECK_THAT(refusal("lentil", kYield), Contains("yields[1].standard_moisture_pct") && Contains("lentil"));
    // Unknown traits, wrong kinds and units.
    CHECK_THAT(refusal("maize", "[[yields]]\nname = \"y\"\nweight = \"grain\"\n"),
               Contains("yields[1].weight") && Contains("no trait named 'grain'"));
    CHECK_THAT(refusal("maize", "[[yields]]\nname = \"y\"\nweight = \"height_cm\"\n"),
               Contains("expected a number trait with unit \"kg\" or \"g\""));
    CHECK_THAT(refusal("maize", "[[yields]]\nname = \"y\"\nweight = \"grain_kg\"\nmoisture = \"grain_g\"\n"),
               Contains("yields[1].moisture") && Contains("unit \"%\""));
    CHECK_THAT(refusal("maize", "[[yields]]\nname = \"y\"\nweight = \"grain_kg\"\nstandard_moisture_pct = 14\n"),
               Contains("needs the recorded moisture"));
    CHECK_THAT(refusal("maize", std::string(kYield) + "standard_moisture_pct = 100\n"),
               Contains("expected a moisture from 0 to below 100 %"));
    CHECK_THAT(refusal("maize", std::string(kYield) + "unit = \"bu/ac\"\n"), Contains("unknown unit 'bu/ac'"));
    // Names: a yield is not a trait and has a name of its own.
    CHECK_THAT(refusal("maize", "[[yields]]\nname = \"grain_kg\"\nweight = \"grain_kg\"\n"),
               Contains("already the name of a trait"));
    CHECK_THAT(refusal("maize", std::string(kYield) + kYield), Contains("duplicate yield name"));
}

TEST_CASE("A yield per hectare needs the net harvest area; a moisture trait needs a range below 100 %", "[yield][spec]") {
    std::string text = spec_text("maize", kYield);
    const auto cut = [&](const std::string& line) { text.erase(text.find(line), line.size()); };
    cut("harvest_width_m = 2.4\n");
    try {
        parse_trial_spec(text, "yld.toml");
        FAIL("accepted a yield in t/ha without a harvest area");
    } catch (const SpecError& e) {
        CHECK_THAT(e.what(), Contains("yields[1].unit") && Contains("field.harvest_width_m"));
    }
    // The adjusted weight of the plot needs no area.
    std::string per_plot = spec_text("maize", std::string(kYield) + "unit = \"kg\"\n");
    per_plot.erase(per_plot.find("harvest_width_m = 2.4\n"), 22);
    CHECK(parse_trial_spec(per_plot, "yld.toml").yields.at(0).unit == YieldUnit::KilogramsPerPlot);
    std::string open_range = spec_text("maize", kYield);
    open_range.replace(open_range.find("max = 40\n"), 9, "max = 100\n");
    try {
        parse_trial_spec(open_range, "yld.toml");
        FAIL("accepted a moisture trait whose range reaches 100 %");
    } catch (const SpecError& e) {
        CHECK_THAT(e.what(), Contains("max below 100"));
    }
}

TEST_CASE("Yields are computed from a trial database's values in force", "[yield][store]") {
    pw_test::TempDir dir;
    const std::string text = spec_text("maize", kYield);
    const TrialSpec spec = parse_trial_spec(text, "yld.toml");
    const Layout layout = design_trial(spec, 7);
    Store store = Store::create(dir.file("yld.pwdb"), text, "yld.toml", spec, layout, "2026-09-01T08:00:00Z");
    const int p1 = layout.plots.at(0).id, p2 = layout.plots.at(1).id, p3 = layout.plots.at(2).id;
    auto record = [&](int plot, const std::string& trait, const std::string& value, double number,
                      const std::string& at, const std::string& device) {
        NewObservation o;
        o.plot = plot;
        o.trait = trait;
        o.value = value;
        o.number = number;
        o.recorded_utc = at;
        o.device = device;
        o.observer = "tech";
        return store.add_observation(o);
    };
    record(p1, "grain_kg", "4.20", 4.20, "2026-09-10T09:00:00Z", "hh1");
    const auto later = record(p1, "moisture", "24.0", 24.0, "2026-09-10T09:05:00Z", "hh2");
    record(p2, "grain_kg", "5.00", 5.00, "2026-09-10T09:10:00Z", "hh1");  // moisture never taken
    record(p3, "moisture", "20.0", 20.0, "2026-09-10T09:20:00Z", "hh1");  // grain never weighed

    const TraitValues v = trait_values(store.trial(), resolved_observations(store), "yield_t_ha");
    REQUIRE(v.yield);
    CHECK(v.trait.unit == "t/ha");
    REQUIRE(v.values.size() == 1);
    const ObservationRecord& y1 = v.values.at(p1);
    // The reference set's maize plot: 3.147929 t/ha.
    CHECK(*y1.obs.number == Approx(3.14792899408284).epsilon(1e-13));
    CHECK(y1.obs.value == "3.148");
    // Dated and attributed like the later of its two recordings.
    CHECK(y1.id == later);
    CHECK(y1.obs.device == "hh2");
    CHECK(y1.obs.recorded_utc == "2026-09-10T09:05:00Z");
    CHECK_THAT(v.not_computed.at(p2), Contains("no moisture"));
    CHECK(v.not_computed.count(p3) == 0);  // nothing weighed: simply no value

    // The exports carry the yield after the traits: a column of the wide CSV headed with its unit, and the
    // JSON's "yields" (computed from the same values in force).
    const std::string wide = export_wide_csv(store).text;
    const std::string header = wide.substr(0, wide.find("\r\n"));
    CHECK_THAT(header, EndsWith(",yield_t_ha [t/ha]"));
    for (const std::string& line : {fmt::format("\r\n{},", p1), fmt::format("\r\n{},", p2)}) {
        const std::size_t at = wide.find(line);
        REQUIRE(at != std::string::npos);
        const std::string row = wide.substr(at + 2, wide.find("\r\n", at + 2) - at - 2);
        CHECK(row.substr(row.rfind(',') + 1) == (line == fmt::format("\r\n{},", p1) ? "3.148" : ""));
    }
    const nlohmann::json j = nlohmann::json::parse(export_json(store).text);
    REQUIRE(j["yields"].size() == 1);
    CHECK(j["yields"][0]["name"] == "yield_t_ha");
    CHECK(j["yields"][0]["heading"] == "yield_t_ha [t/ha]");
    CHECK(j["yields"][0]["standard_moisture_pct"] == 15.5);
    REQUIRE(j["yields"][0]["values"].size() == 1);
    CHECK(j["yields"][0]["values"][0]["plot"] == p1);
    CHECK(j["yields"][0]["values"][0]["value"] == "3.148");

    // A recorded trait comes through as recorded; an unknown name is refused with the names there are.
    CHECK(trait_values(store.trial(), resolved_observations(store), "grain_kg").values.size() == 2);
    CHECK_THROWS_WITH(trait_values(store.trial(), resolved_observations(store), "yield"),
                      Contains("has no such trait or yield") && Contains("yield_t_ha"));
}
