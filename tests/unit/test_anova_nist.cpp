// One-way analysis of variance accuracy on the NIST Statistical Reference Datasets (StRD), ANOVA:
// SiRstv and SmLs01–07 (tests/data/stats/nist-anova, copied from the shared reference set: the certified
// values of NIST's .dat files, 15 significant digits; US Government work, public domain).
//
// Accuracy is judged by NIST's log relative error LRE = −log10(|x − c| / |c|) (capped at 15 here).
// Two paths into the analysis:
//   doubles        the values converted one by one (what any CSV or database gives the engine): the
//                  lower- (SiRstv, SmLs01–03) and average-difficulty (SmLs04–06) sets must keep at least 9
//                  digits; the higher-difficulty SmLs07 (13 constant leading digits, values not
//                  representable in double) keeps what the representation allows (about 4);
//   decimal shift  the values shifted exactly in decimal first (core/stats/decimal_shift.hpp), as
//                  `plotwright analyze --csv` reads them: every set, SmLs07 included.
// The LREs reached are listed in docs/validation-statistics.md.
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <sstream>
#include <string>

#include <nlohmann/json.hpp>

#include "core/stats/analysis.hpp"
#include "core/stats/decimal_shift.hpp"
#include "storage/csv_table.hpp"

namespace {

std::string read_text(const std::string& name) {
    std::ifstream in(std::string(PW_TEST_DATA_DIR) + "/stats/nist-anova/" + name, std::ios::binary);
    REQUIRE(in.good());
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

double lre(double x, double c) {
    if (x == c) return 15;
    return std::min(15.0, -std::log10(std::abs(x - c) / std::abs(c)));
}

struct Lres {
    double between_ss, between_ms, f, within_ss, within_ms;
    double worst() const { return std::min({between_ss, between_ms, f, within_ss, within_ms}); }
};

Lres analyse(const std::string& set, bool shifted) {
    const pw::CsvTable t = pw::parse_csv(read_text(set + ".csv"), set + ".csv");
    const auto cert = nlohmann::json::parse(read_text(set + ".certified.json")).at("certified");
    pw::TrialData d;
    d.design = "crd";
    std::vector<std::string> cells;
    for (const auto& r : t.rows) {
        d.treatment.push_back(r[0]);
        cells.push_back(r[1]);
    }
    if (shifted) {
        std::size_t bad = 0;
        const pw::ShiftedColumn col = pw::shift_decimal(cells, bad);
        REQUIRE(col.exact);
        d.y = col.values;
        d.y_offset = col.offset;
    } else {
        for (const auto& c : cells) d.y.push_back(std::stod(c));
    }
    const pw::AnalysisResult res = pw::analyze_trial(d);
    const auto& between = res.anova[0];
    const auto& within = res.anova[1];
    REQUIRE(between.source == "treatment");
    REQUIRE(within.source == "residual");
    REQUIRE(between.df == cert.at("between").at("df").get<int>());
    REQUIRE(within.df == cert.at("within").at("df").get<int>());
    auto c = [&](const char* part, const char* key) { return std::stod(cert.at(part).at(key).get<std::string>()); };
    return {lre(between.ss, c("between", "ss")), lre(between.ms, c("between", "ms")), lre(*between.f, c("between", "f")),
            lre(within.ss, c("within", "ss")), lre(within.ms, c("within", "ms"))};
}

}  // namespace

TEST_CASE("NIST StRD one-way ANOVA: lower and average difficulty keep 9 digits from doubles", "[stats][nist]") {
    // Source: NIST StRD certified values (SiRstv, SmLs01–06); criterion LRE >= 9 (project requirement).
    for (const char* set : {"SiRstv", "SmLs01", "SmLs02", "SmLs03", "SmLs04", "SmLs05", "SmLs06"}) {
        const Lres l = analyse(set, false);
        INFO(set << ": LRE between SS " << l.between_ss << ", MS " << l.between_ms << ", F " << l.f << ", within SS "
                 << l.within_ss << ", MS " << l.within_ms);
        REQUIRE(l.worst() >= 9);
    }
}

TEST_CASE("NIST StRD SmLs07 from doubles keeps the digits its representation allows", "[stats][nist]") {
    // Source: NIST StRD certified values; the shared reference set's LRE of an ideal double two-pass
    // computation after subtracting the first value in double: 4.03 (between SS) to 4.41 (F).
    const Lres l = analyse("SmLs07", false);
    INFO("LRE between SS " << l.between_ss << ", F " << l.f << ", within SS " << l.within_ss);
    REQUIRE(l.worst() >= 4.0);
}

TEST_CASE("NIST StRD one-way ANOVA with the exact decimal shift: every set, SmLs07 included", "[stats][nist]") {
    // Source: NIST StRD certified values (15 significant digits).
    for (const char* set : {"SiRstv", "SmLs01", "SmLs02", "SmLs03", "SmLs04", "SmLs05", "SmLs06", "SmLs07"}) {
        const Lres l = analyse(set, true);
        INFO(set << ": LRE between SS " << l.between_ss << ", MS " << l.between_ms << ", F " << l.f << ", within SS "
                 << l.within_ss << ", MS " << l.within_ms);
        REQUIRE(l.worst() >= 14);
    }
}
