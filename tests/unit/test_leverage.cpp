// Leverages and standardized residuals of every plot (core/stats/analysis.hpp, PlotFit) against R 4.2.2.
//
// Source: tests/data/stats/designs/leverage.json, written by leverage_reference.R in the same folder with
// R 4.2.2: hatvalues(fit) and rstandard(fit) of the design's fixed-effects lm (the R call of each case is
// stored beside its numbers), per data row in file order, null for rows left out as missing plots and, as
// R gives NaN, for rstandard where the leverage is 1. Data: MASS::immer (RCBD, complete and with a missing
// plot), datasets::chickwts (CRD, unequal replication), datasets::OrchardSprays (Latin square), MASS::oats
// (split plot as lm(Y ~ B + V + B:V + N + V:N)), and the invented strip-plot, augmented and alpha-lattice
// trials of designs_reference.R.
// Tolerances: leverage 1e-12 absolute (it lies in [0, 1]; R's QR and our swept g-inverse agree to a few
// units of 1e-15 on these sizes); standardized residual 1e-10·max(1, |r|).
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "core/stats/analysis.hpp"
#include "storage/csv_table.hpp"
#include "stats_data.hpp"

namespace {

using nlohmann::json;
using pw_test::data_path;
using pw_test::read_text;
using pw_test::Csv;
using pw_test::read_csv;

// The trial of each reference case, with the design plotwright analyses it as.
pw::TrialData trial_of(const std::string& file) {
    const Csv c = read_csv(file);
    pw::TrialData d;
    if (file == "immer_y1.csv") {
        d.design = "rcbd";
        d.block = c.col("Loc");
        d.treatment = c.col("Var");
        d.y = c.num("Y1");
    } else if (file == "r-classic/chickwts/data.csv") {
        d.design = "crd";
        d.treatment = c.col("feed");
        d.y = c.num("weight");
    } else if (file == "designs/orchardsprays.csv") {
        d.design = "latin";
        d.row = c.col("rowpos");
        d.col = c.col("colpos");
        d.treatment = c.col("treatment");
        d.y = c.num("decrease");
    } else if (file == "designs/oats.csv" || file == "designs/strip_invented.csv") {
        const bool split = file == "designs/oats.csv";
        d.design = split ? "split" : "strip";
        d.block = c.col(split ? "B" : "block");
        d.factor_names = split ? std::vector<std::string>{"V", "N"} : std::vector<std::string>{"A", "B"};
        d.factor_levels = {c.col(d.factor_names[0]), c.col(d.factor_names[1])};
        for (std::size_t i = 0; i < c.table.rows.size(); ++i)
            d.treatment.push_back(d.factor_levels[0][i] + " x " + d.factor_levels[1][i]);
        d.y = c.num(split ? "Y" : "y");
    } else if (file == "designs/augmented_invented.csv") {
        d.design = "augmented";
        d.block = c.col("block");
        d.treatment = c.col("entry");
        d.y = c.num("y");
    } else if (file == "designs/alpha_invented.csv") {
        d.design = "alpha";
        d.rep = c.col("rep");
        d.block = c.col("block");
        d.treatment = c.col("entry");
        d.y = c.num("y");
    } else {
        FAIL("no trial for " << file);
    }
    return d;
}

}  // namespace

TEST_CASE("Leverages and standardized residuals equal R's hatvalues and rstandard for every design",
          "[stats][leverage]") {
    // Source: R 4.2.2 hatvalues(fit), rstandard(fit) (designs/leverage.json, leverage_reference.R).
    const json ref = json::parse(read_text("designs/leverage.json"));
    REQUIRE(ref.at("cases").size() >= 9);
    for (const auto& cs : ref.at("cases")) {
        INFO(cs.at("name").get<std::string>() << ": " << cs.at("r_call").get<std::string>());
        pw::TrialData d = trial_of(cs.at("file"));
        for (int row : cs.at("removed_rows")) d.y[static_cast<std::size_t>(row - 1)] = std::nan("");
        const pw::AnalysisResult res = pw::analyze_trial(d);
        const auto& h = cs.at("hatvalues");
        const auto& z = cs.at("rstandard");
        REQUIRE(res.plots.size() == h.size());
        // R's residual standard error is √ of the plot-level (last) error row's MS.
        const pw::AnalysisRow* err = nullptr;
        for (const auto& r : res.anova)
            if (r.is_error) err = &r;
        REQUIRE(err != nullptr);
        const double sigma = cs.at("sigma");
        REQUIRE(std::abs(std::sqrt(err->ms) - sigma) <= 1e-10 * sigma);
        for (std::size_t i = 0; i < h.size(); ++i) {
            const pw::PlotFit& p = res.plots[i];
            CAPTURE(i + 1, p.plot, p.treatment);
            if (h[i].is_null()) {  // left out as missing: neither
                REQUIRE_FALSE(p.y.has_value());
                REQUIRE_FALSE(p.leverage.has_value());
                REQUIRE_FALSE(p.standardized.has_value());
                continue;
            }
            REQUIRE(p.leverage.has_value());
            const double want_h = h[i];
            CAPTURE(*p.leverage, want_h);
            REQUIRE(std::abs(*p.leverage - want_h) <= 1e-12);
            if (z[i].is_null()) {  // R: NaN where h = 1
                REQUIRE(*p.leverage == 1.0);
                REQUIRE_FALSE(p.standardized.has_value());
                continue;
            }
            REQUIRE(p.standardized.has_value());
            const double want_z = z[i];
            CAPTURE(*p.standardized, want_z);
            REQUIRE(std::abs(*p.standardized - want_z) <= 1e-10 * std::max(1.0, std::abs(want_z)));
        }
    }
}

TEST_CASE("An augmented design's new entries in one plot have leverage 1 and no standardized residual",
          "[stats][leverage]") {
    // Source: R 4.2.2 hatvalues = 1 and rstandard NaN for the 12 single-plot new entries of the invented
    // augmented trial (designs/leverage.json, case "augmented"); lm.influence's rule, h = 1 when the plot
    // alone fixes its fitted value (Kutner et al. 2005, §10.3: 0 ≤ h_ii ≤ 1).
    const json ref = json::parse(read_text("designs/leverage.json"));
    const json* aug = nullptr;
    for (const auto& cs : ref.at("cases"))
        if (cs.at("name") == "augmented") aug = &cs;
    REQUIRE(aug != nullptr);
    int nan_in_r = 0;
    for (const auto& v : aug->at("rstandard")) nan_in_r += v.is_null() ? 1 : 0;
    REQUIRE(nan_in_r == 12);
    const pw::AnalysisResult res = pw::analyze_trial(trial_of("designs/augmented_invented.csv"));
    int undefined = 0;
    for (const auto& p : res.plots) {
        if (p.treatment[0] != 'N') continue;
        REQUIRE(p.leverage == 1.0);
        REQUIRE(std::abs(*p.residual) <= 1e-12);
        REQUIRE_FALSE(p.standardized.has_value());
        ++undefined;
    }
    REQUIRE(undefined == nan_in_r);
}

TEST_CASE("Balanced designs give the textbook leverages", "[stats][leverage]") {
    // Source (from memory, the hat matrix of a one-way and a two-way additive layout; e.g. Cook & Weisberg
    // 1982, Residuals and Influence in Regression, §2.1): CRD h_ii = 1/n_j; complete RCBD with r blocks and
    // t treatments h_ii = 1/r + 1/t − 1/(rt); a t × t Latin square h_ii = 3/t − 2/t².
    SECTION("chickwts, a CRD with 10 to 14 plots per treatment") {
        const pw::AnalysisResult res = pw::analyze_trial(trial_of("r-classic/chickwts/data.csv"));
        std::map<std::string, int> n;
        for (const auto& p : res.plots) ++n[p.treatment];
        for (const auto& p : res.plots) REQUIRE(std::abs(*p.leverage - 1.0 / n[p.treatment]) <= 1e-12);
    }
    SECTION("Immer's barley, 6 locations x 5 varieties") {
        const pw::AnalysisResult res = pw::analyze_trial(trial_of("immer_y1.csv"));
        const double want = 1.0 / 6 + 1.0 / 5 - 1.0 / 30;
        for (const auto& p : res.plots) REQUIRE(std::abs(*p.leverage - want) <= 1e-12);
    }
    SECTION("OrchardSprays, an 8 x 8 Latin square") {
        const pw::AnalysisResult res = pw::analyze_trial(trial_of("designs/orchardsprays.csv"));
        const double want = 3.0 / 8 - 2.0 / 64;
        for (const auto& p : res.plots) REQUIRE(std::abs(*p.leverage - want) <= 1e-12);
    }
}
