// The analysis of every design (core/stats/analysis.hpp) against R 4.2.2.
//
// Sources, each named beside its checks:
//   tests/data/stats/r-classic/   copies of the project's shared reference set: R 4.2.2's aov, TukeyHSD and
//                                 t.test on PlantGrowth, chickwts, InsectSprays, MASS::cabbages and sleep
//                                 (numbers rounded by R to 15 significant digits);
//   tests/data/stats/designs/     designs_reference.R (R 4.2.2, MASS 7.3.58.2): npk (factorial in blocks,
//                                 N:P:K confounded), MASS::oats (split plot), OrchardSprays (Latin square),
//                                 and invented strip-plot, augmented and alpha-lattice trials, written with
//                                 sprintf("%.17g") and the R call beside the numbers;
//   tests/data/stats/immer_*      R's RCBD and missing-plot fits of MASS::immer (rcbd_reference.R).
// Tolerances (the shared reference set's suggestion): SS, MS, F, means 1e-10 relative (1e-9 where R's
// numbers carry 15 digits only); p-values 1e-8; Tukey quantities 1e-6 (R's qtukey: 4 decimals by its
// own documentation, closer in practice).
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <set>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "core/error.hpp"
#include "core/stats/analysis.hpp"
#include "storage/csv_table.hpp"
#include "stats_data.hpp"

namespace {

using nlohmann::json;
using pw_test::data_path;
using pw_test::read_text;
using pw_test::read_json;
using pw_test::Csv;
using pw_test::read_csv;

void require_rel(double got, double want, double tol) {
    CAPTURE(got, want, tol);
    if (want == 0) {
        REQUIRE(std::abs(got) <= tol);
    } else {
        REQUIRE(std::abs(got - want) <= tol * std::abs(want));
    }
}

const pw::AnalysisRow& row_of(const pw::AnalysisResult& r, const std::string& source) {
    for (const auto& row : r.anova) {
        if (row.source == source) return row;
    }
    FAIL("no ANOVA row named " << source);
    throw;
}

const json& term(const json& rows, const std::string& name) {
    for (const auto& r : rows) {
        if (r.at("term") == name) return r;
    }
    FAIL("reference table has no term " << name);
    throw;
}

// One of our rows against one row of R's table; `tol` for SS, MS and F.
void require_row(const pw::AnalysisResult& res, const std::string& source, const json& ref, double tol = 1e-10) {
    INFO("row " << source << " against R term " << ref.at("term").get<std::string>());
    const pw::AnalysisRow& row = row_of(res, source);
    REQUIRE(row.df == ref.at("df").get<int>());
    require_rel(row.ss, ref.at("ss").get<double>(), tol);
    if (ref.contains("ms")) require_rel(row.ms, ref.at("ms").get<double>(), tol);
    if (ref.contains("f") && !ref.at("f").is_null()) {
        REQUIRE(row.f.has_value());
        require_rel(*row.f, ref.at("f").get<double>(), tol);
        require_rel(*row.p, ref.at("p").get<double>(), 1e-8);
    } else {
        REQUIRE_FALSE(row.f.has_value());
    }
}

const pw::MeansTable& table_of(const pw::AnalysisResult& r, const std::string& term) {
    for (const auto& t : r.means) {
        if (t.term == term) return t;
    }
    FAIL("no means table " << term);
    throw;
}

double mean_of(const pw::MeansTable& t, const std::string& label) {
    for (const auto& row : t.rows) {
        if (row.label == label) {
            REQUIRE(row.mean.has_value());
            return *row.mean;
        }
    }
    FAIL("no mean for " << label << " in table " << t.term);
    return 0;
}

void require_means(const pw::MeansTable& t, const json& ref, double tol = 1e-10) {
    REQUIRE(t.rows.size() == ref.size());
    for (const auto& [label, v] : ref.items()) {
        INFO("mean of " << label);
        require_rel(mean_of(t, label), v.get<double>(), tol);
    }
}

pw::TrialData crd(const Csv& c, const std::string& trt, const std::string& y) {
    pw::TrialData d;
    d.design = "crd";
    d.treatment = c.col(trt);
    d.y = c.num(y);
    return d;
}

// R's TukeyHSD rows "b-a" against our pairs (a, b): diff = mean b − mean a.
void require_tukey(const pw::MeansTable& t, const json& ref, double tol = 1e-6) {
    for (const auto& r : ref) {
        const std::string cmp = r.at("comparison");
        const std::size_t dash = cmp.find('-');
        const std::string b = cmp.substr(0, dash), a = cmp.substr(dash + 1);
        INFO("Tukey comparison " << cmp);
        const pw::PairComparison* pc = nullptr;
        double sign = 1;
        for (const auto& p : t.pairs) {
            if (p.a == a && p.b == b) pc = &p, sign = -1;
            if (p.a == b && p.b == a) pc = &p, sign = 1;
        }
        REQUIRE(pc != nullptr);
        require_rel(sign * pc->difference, r.at("diff").get<double>(), 1e-10);
        REQUIRE(pc->tukey_p.has_value());
        REQUIRE(std::abs(*pc->tukey_p - r.at("p_adj").get<double>()) <= tol);
        const double lwr = sign > 0 ? *pc->tukey_lower : -*pc->tukey_upper;
        const double upr = sign > 0 ? *pc->tukey_upper : -*pc->tukey_lower;
        REQUIRE(std::abs(lwr - r.at("lwr").get<double>()) <= tol * std::max(1.0, std::abs(lwr)));
        REQUIRE(std::abs(upr - r.at("upr").get<double>()) <= tol * std::max(1.0, std::abs(upr)));
    }
}

// Letters against R's Tukey p-values: two means share a letter exactly when R finds them not
// significantly different at 5 % (the definition of the display, Piepho 2004).
void require_letters_agree(const pw::MeansTable& t, const json& tukey) {
    auto group = [&](const std::string& label) {
        for (const auto& r : t.rows) {
            if (r.label == label) return r.hsd_group;
        }
        FAIL("no row " << label);
        return std::string();
    };
    for (const auto& r : tukey) {
        const std::string cmp = r.at("comparison");
        const std::size_t dash = cmp.find('-');
        const std::string ga = group(cmp.substr(0, dash)), gb = group(cmp.substr(dash + 1));
        REQUIRE_FALSE(ga.empty());
        bool share = false;
        for (char c : ga) share = share || gb.find(c) != std::string::npos;
        INFO(cmp << ": letters " << ga << " / " << gb << ", R p adj " << r.at("p_adj").get<double>());
        REQUIRE(share == (r.at("p_adj").get<double>() >= 0.05));
    }
}

}  // namespace

TEST_CASE("PlantGrowth as a CRD reproduces R's aov, LSD, HSD and TukeyHSD", "[stats][designs]") {
    // Source: R 4.2.2 aov(weight ~ group), TukeyHSD (r-classic/PlantGrowth/expected.json).
    const json ref = read_json("r-classic/PlantGrowth/expected.json");
    const auto res = pw::analyze_trial(crd(read_csv("r-classic/PlantGrowth/data.csv"), "group", "weight"));
    require_row(res, "treatment", term(ref.at("anova"), "group"), 1e-9);
    require_row(res, "residual", term(ref.at("anova"), "Residuals"), 1e-9);
    const auto& st = ref.at("stats");
    require_rel(res.grand_mean, st.at("grand_mean"), 1e-12);
    require_rel(res.cv_percent, st.at("cv_percent"), 1e-9);
    const auto& t = res.means[0];
    require_means(t, ref.at("treatment_means"));
    require_rel(*t.sed, st.at("sed"), 1e-9);
    require_rel(*t.lsd_5pct, st.at("lsd_5pct"), 1e-9);
    require_rel(*t.hsd_5pct, st.at("hsd_5pct"), 1e-6);
    require_rel(*res.lsd_5pct, st.at("lsd_5pct"), 1e-9);
    require_tukey(t, ref.at("tukey_hsd"));
    require_letters_agree(t, ref.at("tukey_hsd"));
    // Standard error of a mean, √(MSE/r) (Gomez & Gomez 1984, ch. 2; common practice).
    require_rel(*t.rows[0].se, std::sqrt(st.at("residual_ms").get<double>() / 10), 1e-9);
}

TEST_CASE("chickwts with unequal replication gives R's table and Tukey-Kramer intervals", "[stats][designs]") {
    // Source: R 4.2.2 aov(weight ~ feed), TukeyHSD (r-classic/chickwts/expected.json).
    const json ref = read_json("r-classic/chickwts/expected.json");
    const auto res = pw::analyze_trial(crd(read_csv("r-classic/chickwts/data.csv"), "feed", "weight"));
    require_row(res, "treatment", term(ref.at("anova"), "feed"), 1e-9);
    require_row(res, "residual", term(ref.at("anova"), "Residuals"), 1e-9);
    require_rel(res.grand_mean, ref.at("stats").at("grand_mean"), 1e-12);
    require_rel(res.cv_percent, ref.at("stats").at("cv_percent"), 1e-9);
    const auto& t = res.means[0];
    require_means(t, ref.at("treatment_means"));
    for (const auto& [feed, n] : ref.at("treatment_n").items()) {
        for (const auto& r : t.rows) {
            if (r.label == feed) REQUIRE(r.n == n.get<int>());
        }
    }
    // LSD of one pair with unequal n: qt(0.975, dfE)·√(MSE(1/n1 + 1/n2)).
    const auto& ex = ref.at("lsd_5pct_unequal_n_example");
    for (const auto& p : t.pairs) {
        if ((p.a == "casein" && p.b == "horsebean") || (p.a == "horsebean" && p.b == "casein")) {
            require_rel(p.sed * 1.997137908392, ex.at("lsd").get<double>(), 1e-9);
        }
    }
    require_tukey(t, ref.at("tukey_hsd"));
    require_letters_agree(t, ref.at("tukey_hsd"));
}

TEST_CASE("InsectSprays as a CRD reproduces R's aov, LSD and HSD", "[stats][designs]") {
    // Source: R 4.2.2 aov(count ~ spray) (r-classic/InsectSprays/expected.json).
    const json ref = read_json("r-classic/InsectSprays/expected.json");
    const auto res = pw::analyze_trial(crd(read_csv("r-classic/InsectSprays/data.csv"), "spray", "count"));
    require_row(res, "treatment", term(ref.at("anova"), "spray"), 1e-9);
    require_row(res, "residual", term(ref.at("anova"), "Residuals"), 1e-9);
    require_means(res.means[0], ref.at("treatment_means"));
    require_rel(*res.means[0].lsd_5pct, ref.at("stats").at("lsd_5pct"), 1e-9);
    require_rel(*res.means[0].hsd_5pct, ref.at("stats").at("hsd_5pct"), 1e-6);
}

TEST_CASE("The cabbages 2 x 3 factorial gives R's main effects, interaction and tables", "[stats][designs]") {
    // Source: R 4.2.2 + MASS 7.3.58.2 aov(HeadWt ~ Cult * Date) (r-classic/cabbages/expected.json).
    const json ref = read_json("r-classic/cabbages/expected.json");
    const Csv c = read_csv("r-classic/cabbages/data.csv");
    pw::TrialData d;
    d.design = "crd";
    d.factor_names = {"Cult", "Date"};
    d.factor_levels = {c.col("Cult"), c.col("Date")};
    for (std::size_t i = 0; i < c.table.rows.size(); ++i) {
        d.treatment.push_back(d.factor_levels[0][i] + " x " + d.factor_levels[1][i]);
    }
    d.y = c.num("HeadWt");
    const auto res = pw::analyze_trial(d);
    require_row(res, "Cult", term(ref.at("anova"), "Cult"), 1e-9);
    require_row(res, "Date", term(ref.at("anova"), "Date"), 1e-9);
    require_row(res, "Cult:Date", term(ref.at("anova"), "Cult:Date"), 1e-9);
    require_row(res, "residual", term(ref.at("anova"), "Residuals"), 1e-9);
    REQUIRE(res.aliased.empty());
    require_means(table_of(res, "Cult"), ref.at("means_Cult"));
    require_means(table_of(res, "Date"), ref.at("means_Date"));
    // Interaction table: R's layout is keyed by Date, each entry (c39, c52).
    const auto& cells = table_of(res, "Cult:Date");
    for (const auto& [date, pair] : ref.at("means_CultxDate").items()) {
        require_rel(mean_of(cells, "c39 \xc3\x97 " + date), pair[0].get<double>(), 1e-10);
        require_rel(mean_of(cells, "c52 \xc3\x97 " + date), pair[1].get<double>(), 1e-10);
    }
    require_tukey(table_of(res, "Date"), ref.at("tukey_hsd_Date"));
}

TEST_CASE("Paired plots: the sleep data give R's paired t-test and its RCBD table", "[stats][designs]") {
    // Source: R 4.2.2 t.test(extra[group==1], extra[group==2], paired = TRUE) and
    // aov(extra ~ factor(ID) + group) (r-classic/sleep/expected.json).
    const json ref = read_json("r-classic/sleep/expected.json");
    const Csv c = read_csv("r-classic/sleep/data.csv");
    pw::TrialData d;
    d.design = "paired";
    d.block = c.col("ID");
    d.treatment = c.col("group");
    d.y = c.num("extra");
    const auto res = pw::analyze_trial(d);
    REQUIRE(res.paired.has_value());
    const auto& pt = ref.at("paired_t_test");
    REQUIRE(res.paired->first == "1");
    REQUIRE(res.paired->df == 9);
    require_rel(res.paired->t, pt.at("t"), 1e-10);
    require_rel(res.paired->p, pt.at("p_two_sided"), 1e-8);
    require_rel(res.paired->mean_difference, pt.at("mean_difference"), 1e-12);
    require_rel(res.paired->se, pt.at("se_mean_difference"), 1e-10);
    require_rel(res.paired->sd_difference, pt.at("sd_difference"), 1e-10);
    require_rel(res.paired->ci_lower, pt.at("conf_int_95")[0], 1e-10);
    require_rel(res.paired->ci_upper, pt.at("conf_int_95")[1], 1e-10);
    const auto& aov = ref.at("rcbd_equivalence").at("anova");
    require_row(res, "block", term(aov, "factor(ID)"), 1e-9);
    require_row(res, "treatment", term(aov, "group"), 1e-9);
    require_row(res, "residual", term(aov, "Residuals"), 1e-9);
}

TEST_CASE("npk: a factorial in blocks reports N:P:K as aliased with blocks and matches R", "[stats][designs]") {
    // Source: R 4.2.2 anova(lm(yield ~ block + N*P*K, data = npk)); coef NA for N1:P1:K1 (designs/npk.json).
    const json ref = read_json("designs/npk.json");
    const Csv c = read_csv("designs/npk.csv");
    pw::TrialData d;
    d.design = "rcbd";
    d.block = c.col("block");
    d.factor_names = {"N", "P", "K"};
    d.factor_levels = {c.col("N"), c.col("P"), c.col("K")};
    for (std::size_t i = 0; i < c.table.rows.size(); ++i) {
        d.treatment.push_back(d.factor_levels[0][i] + d.factor_levels[1][i] + d.factor_levels[2][i]);
    }
    d.y = c.num("yield");

    SECTION("complete data") {
        const auto res = pw::analyze_trial(d);
        for (const char* t : {"block", "N", "P", "K", "N:P", "N:K", "P:K"}) require_row(res, t, term(ref.at("anova"), t));
        require_row(res, "residual", term(ref.at("anova"), "Residuals"));
        REQUIRE(res.aliased.size() == 1);
        REQUIRE(res.aliased[0].term == "N:P:K");  // R: coefficient N1:P1:K1 is NA
        REQUIRE(ref.at("aliased")[0] == "N1:P1:K1");
        REQUIRE(res.aliased[0].df == 0);
        REQUIRE(res.aliased[0].df_expected == 1);
        REQUIRE_THAT(res.aliased[0].message, Catch::Contains("block"));
        for (const auto& row : res.anova) REQUIRE(row.source != "N:P:K");
        require_means(table_of(res, "N"), json{{"N0", ref.at("means_N").at("0")}, {"N1", ref.at("means_N").at("1")}});
        const auto& np = table_of(res, "N:P");
        require_rel(mean_of(np, "N0 \xc3\x97 P1"), ref.at("means_NP").at("0 1"), 1e-10);
        require_rel(mean_of(np, "N1 \xc3\x97 P0"), ref.at("means_NP").at("1 0"), 1e-10);
    }
    SECTION("two plots missing: sequential and adjusted SS, prediction and means of the unbalanced data") {
        // Source: R 4.2.2, the same model on npk[-c(3, 17), ]; adjusted SS as differences of deviances.
        d.y[2] = std::nan("");
        d.y[16] = std::nan("");
        const auto res = pw::analyze_trial(d);
        const auto& a = ref.at("missing_anova");
        for (const char* t : {"block", "N", "P", "K", "N:P", "N:K", "P:K"}) require_row(res, t, term(a, t));
        require_row(res, "residual", term(a, "Residuals"));
        require_rel(row_of(res, "block").ss_adjusted, ref.at("missing_block_adjusted_ss"), 1e-10);
        require_rel(row_of(res, "N").ss_adjusted, ref.at("missing_N_adjusted_ss"), 1e-10);
        REQUIRE(res.missing == 2);
        require_rel(res.plots[2].fitted, ref.at("missing_prediction_row3"), 1e-10);
        const auto& mn = ref.at("missing_means_N");
        require_means(table_of(res, "N"), json{{"N0", mn.at("0")}, {"N1", mn.at("1")}});
    }
}

TEST_CASE("MASS::oats as a split plot gives R's strata and the Gomez & Gomez standard errors", "[stats][designs]") {
    // Source: R 4.2.2 + MASS 7.3.58.2 summary(aov(Y ~ V * N + Error(B/V), data = oats)) (designs/oats.json).
    const json ref = read_json("designs/oats.json");
    const Csv c = read_csv("designs/oats.csv");
    pw::TrialData d;
    d.design = "split";
    d.block = c.col("B");
    d.factor_names = {"V", "N"};
    d.factor_levels = {c.col("V"), c.col("N")};
    for (std::size_t i = 0; i < c.table.rows.size(); ++i) {
        d.treatment.push_back(d.factor_levels[0][i] + " x " + d.factor_levels[1][i]);
    }
    d.y = c.num("Y");
    const auto res = pw::analyze_trial(d);
    const auto& b = term(ref.at("stratum_B"), "Residuals");
    REQUIRE(row_of(res, "block").df == b.at("df").get<int>());
    require_rel(row_of(res, "block").ss, b.at("ss"), 1e-10);
    REQUIRE_FALSE(row_of(res, "block").f.has_value());  // R: no test in the block stratum
    require_row(res, "V", term(ref.at("stratum_BV"), "V"));
    require_row(res, "residual (whole plot)", term(ref.at("stratum_BV"), "Residuals"));
    require_row(res, "N", term(ref.at("stratum_within"), "N"));
    require_row(res, "V:N", term(ref.at("stratum_within"), "V:N"));
    require_row(res, "residual (subplot)", term(ref.at("stratum_within"), "Residuals"));
    REQUIRE(row_of(res, "V").error == "residual (whole plot)");
    REQUIRE(row_of(res, "N").error == "residual (subplot)");
    REQUIRE(res.cv.size() == 2);
    require_means(table_of(res, "V"), ref.at("means_V"));
    require_means(table_of(res, "N"), ref.at("means_N"));
    require_rel(res.grand_mean, ref.at("grand_mean"), 1e-12);

    // Gomez & Gomez (1984) ch. 3 (from memory, shared reference agronomy.md §8), with R's strata MS:
    // r = 6 blocks, a = 3 varieties, b = 4 nitrogen levels.
    const double ea = term(ref.at("stratum_BV"), "Residuals").at("ms");
    const double eb = term(ref.at("stratum_within"), "Residuals").at("ms");
    REQUIRE(res.standard_errors.size() == 4);
    require_rel(res.standard_errors[0].sed, std::sqrt(2 * ea / (6 * 4)), 1e-10);
    require_rel(res.standard_errors[1].sed, std::sqrt(2 * eb / (6 * 3)), 1e-10);
    require_rel(res.standard_errors[2].sed, std::sqrt(2 * eb / 6), 1e-10);
    require_rel(res.standard_errors[3].sed, std::sqrt(2 * (3 * eb + ea) / (6 * 4)), 1e-10);
    REQUIRE_FALSE(res.standard_errors[3].df.has_value());  // weighted t'
    require_rel(*table_of(res, "V").sed, std::sqrt(2 * ea / 24), 1e-10);
    REQUIRE(table_of(res, "V").error_df == 10);
}

TEST_CASE("OrchardSprays as a Latin square reproduces R's table and TukeyHSD", "[stats][designs]") {
    // Source: R 4.2.2 anova(lm(decrease ~ factor(rowpos) + factor(colpos) + treatment)), TukeyHSD
    // (designs/orchardsprays.json).
    const json ref = read_json("designs/orchardsprays.json");
    const Csv c = read_csv("designs/orchardsprays.csv");
    pw::TrialData d;
    d.design = "latin";
    d.row = c.col("rowpos");
    d.col = c.col("colpos");
    d.treatment = c.col("treatment");
    d.y = c.num("decrease");
    const auto res = pw::analyze_trial(d);
    require_row(res, "row", term(ref.at("anova"), "R"));
    require_row(res, "column", term(ref.at("anova"), "C"));
    require_row(res, "treatment", term(ref.at("anova"), "treatment"));
    require_row(res, "residual", term(ref.at("anova"), "Residuals"));
    require_means(res.means[0], ref.at("means"));
    require_tukey(res.means[0], ref.at("tukey"));
    require_letters_agree(res.means[0], ref.at("tukey"));
    REQUIRE(res.efficiency.size() == 3);
}

TEST_CASE("An invented strip-plot trial gives R's three error strata", "[stats][designs]") {
    // Source: R 4.2.2 summary(aov(y ~ A * B + Error(block/(A * B)))) (designs/strip_invented.json).
    const json ref = read_json("designs/strip_invented.json");
    const Csv c = read_csv("designs/strip_invented.csv");
    pw::TrialData d;
    d.design = "strip";
    d.block = c.col("block");
    d.factor_names = {"A", "B"};
    d.factor_levels = {c.col("A"), c.col("B")};
    for (std::size_t i = 0; i < c.table.rows.size(); ++i) {
        d.treatment.push_back(d.factor_levels[0][i] + " x " + d.factor_levels[1][i]);
    }
    d.y = c.num("y");
    const auto res = pw::analyze_trial(d);
    require_rel(row_of(res, "block").ss, term(ref.at("stratum_block"), "Residuals").at("ss"), 1e-10);
    require_row(res, "A", term(ref.at("stratum_blockA"), "A"));
    require_row(res, "residual (main strips)", term(ref.at("stratum_blockA"), "Residuals"));
    require_row(res, "B", term(ref.at("stratum_blockB"), "B"));
    require_row(res, "residual (sub strips)", term(ref.at("stratum_blockB"), "Residuals"));
    require_row(res, "A:B", term(ref.at("stratum_within"), "A:B"));
    require_row(res, "residual (intersection)", term(ref.at("stratum_within"), "Residuals"));
    require_means(table_of(res, "A"), ref.at("means_A"));
    require_means(table_of(res, "B"), ref.at("means_B"));
    REQUIRE(res.cv.size() == 3);
}

TEST_CASE("An invented augmented trial: checks, new entries adjusted for blocks, as R's lm", "[stats][designs]") {
    // Source: R 4.2.2 anova(lm(y ~ block + group + check + entry)) and predictions averaged over blocks
    // (designs/augmented_invented.json).
    const json ref = read_json("designs/augmented_invented.json");
    const Csv c = read_csv("designs/augmented_invented.csv");
    pw::TrialData d;
    d.design = "augmented";
    d.block = c.col("block");
    d.treatment = c.col("entry");
    d.y = c.num("y");
    const auto res = pw::analyze_trial(d);
    require_row(res, "block", term(ref.at("anova"), "block"));
    require_row(res, "checks vs new entries", term(ref.at("anova"), "group"));
    require_row(res, "checks", term(ref.at("anova"), "check"));
    require_row(res, "new entries", term(ref.at("anova"), "entry"));
    require_row(res, "residual", term(ref.at("anova"), "Residuals"));
    require_rel(row_of(res, "block").ss_adjusted, ref.at("block_adjusted_ss"), 1e-10);
    REQUIRE(res.aliased.empty());
    require_means(res.means[0], ref.at("adjusted_means"));
    require_rel(res.grand_mean, ref.at("grand_mean"), 1e-12);
}

TEST_CASE("An invented alpha-lattice trial: intra-block analysis and adjusted means as R's lm", "[stats][designs]") {
    // Source: R 4.2.2 anova(lm(terms(y ~ rep + rep:block + entry, keep.order = TRUE))) (R would otherwise
    // fit entry before rep:block), blocks adjusted as a difference of
    // deviances, predictions averaged over the replicate × block cells (designs/alpha_invented.json).
    const json ref = read_json("designs/alpha_invented.json");
    const Csv c = read_csv("designs/alpha_invented.csv");
    pw::TrialData d;
    d.design = "alpha";
    d.rep = c.col("rep");
    d.block = c.col("block");
    d.treatment = c.col("entry");
    d.y = c.num("y");
    const auto res = pw::analyze_trial(d);
    require_row(res, "replicate", term(ref.at("anova"), "rep"));
    require_row(res, "block (within replicate)", term(ref.at("anova"), "rep:block"));
    require_row(res, "entry", term(ref.at("anova"), "entry"));
    require_row(res, "residual", term(ref.at("anova"), "Residuals"));
    require_rel(row_of(res, "block (within replicate)").ss_adjusted, ref.at("block_adjusted_ss"), 1e-10);
    REQUIRE(res.blocks == 9);
    require_means(res.means[0], ref.at("adjusted_means"));
    REQUIRE(res.efficiency.size() == 1);
}

TEST_CASE("Immer's barley as an RCBD through the general engine equals R's fits, with plots missing", "[stats][designs]") {
    // Source: R 4.2.2 + MASS 7.3.58.2 (immer_y1_rcbd.json, immer_y1_missing.json; rcbd_reference.R).
    const json ref = read_json("immer_y1_rcbd.json");
    const Csv c = read_csv("immer_y1.csv");
    pw::TrialData d;
    d.design = "rcbd";
    d.block = c.col("Loc");
    d.treatment = c.col("Var");
    d.y = c.num("Y1");
    auto res = pw::analyze_trial(d);
    require_row(res, "block", term(ref.at("anova"), "Loc"));
    require_row(res, "treatment", term(ref.at("anova"), "Var"));
    require_row(res, "residual", term(ref.at("anova"), "Residuals"));
    require_rel(res.cv_percent, ref.at("cv_percent"), 1e-10);
    require_rel(*res.sed, ref.at("sed"), 1e-10);
    require_rel(*res.lsd_5pct, ref.at("lsd_5pct"), 1e-10);

    const json miss = read_json("immer_y1_missing.json");
    for (const auto& cs : miss.at("cases")) {
        pw::TrialData dm = d;
        for (const auto& e : cs.at("removed")) {
            for (std::size_t i = 0; i < dm.y.size(); ++i) {
                if (dm.block[i] == e.at("Loc") && dm.treatment[i] == e.at("Var")) dm.y[i] = std::nan("");
            }
        }
        INFO(cs.at("r_call").get<std::string>());
        const auto rm = pw::analyze_trial(dm);
        require_row(rm, "block", term(cs.at("anova"), "Loc"));
        require_row(rm, "treatment", term(cs.at("anova"), "Var"));
        require_row(rm, "residual", term(cs.at("anova"), "Residuals"));
        for (const auto& [var, m] : cs.at("ls_means").items()) require_rel(mean_of(rm.means[0], var), m, 1e-10);
        for (const auto& e : cs.at("removed")) {
            for (const auto& p : rm.plots) {
                if (!p.y && p.labels.at("block") == e.at("Loc") && p.treatment == e.at("Var")) {
                    require_rel(p.fitted, e.at("lm_prediction"), 1e-10);
                }
            }
        }
    }
}

TEST_CASE("Relative efficiency of blocking follows the Gomez & Gomez hand example", "[stats][designs]") {
    // Source: shared reference agronomy_examples.json re_rcbd_hand (formula from memory of Gomez & Gomez
    // 1984, ch. 2; numbers computed with R 4.2.2): r = 4, t = 6, Eb = 12.5, Ee = 2.5.
    const pw::Efficiency e = pw::blocking_efficiency(12.5, 3, 5, 2.5, 15);
    require_rel(e.re, 1.52173913043478, 1e-13);
    REQUIRE(e.df_factor.has_value());
    require_rel(*e.df_factor, 0.982456140350877, 1e-13);
    require_rel(e.re_adjusted, 1.49504195270786, 1e-13);
}

TEST_CASE("Refused inputs name the role, the plot and what was expected", "[stats][designs]") {
    pw::TrialData d;
    d.design = "rcbd";
    d.block = {"1", "1", "2", "2"};
    d.treatment = {"A", "B", "A", "B"};
    d.y = {1, 2, 3, 5};
    d.role_names["block"] = "column Rep (--block)";
    SECTION("unknown design") {
        d.design = "lattice";
        REQUIRE_THROWS_WITH(pw::analyze_trial(d), Catch::Contains("unknown design \"lattice\""));
    }
    SECTION("a role the design needs") {
        d.design = "latin";
        REQUIRE_THROWS_WITH(pw::analyze_trial(d), Catch::Contains("needs the row of every plot"));
    }
    SECTION("an empty label") {
        d.block[2] = "";
        REQUIRE_THROWS_WITH(pw::analyze_trial(d), Catch::Contains("record 3: the column Rep (--block) label is empty"));
    }
    SECTION("duplicate plots of a cell") {
        d.treatment[1] = "A";
        REQUIRE_THROWS_WITH(pw::analyze_trial(d), Catch::Contains("duplicate plot (record 1 and record 2)"));
    }
    SECTION("a treatment with no observed plot") {
        d.y[1] = d.y[3] = std::nan("");
        REQUIRE_THROWS_WITH(pw::analyze_trial(d), Catch::Contains("treatment \"B\"") &&
                                                      Catch::Contains("has no observed plot"));
    }
    SECTION("no residual degrees of freedom") {
        d.y[3] = std::nan("");
        REQUIRE_THROWS_WITH(pw::analyze_trial(d), Catch::Contains("no residual degrees of freedom"));
    }
    SECTION("paired plots of three treatments") {
        d.design = "paired";
        d.treatment = {"A", "B", "C", "B"};
        REQUIRE_THROWS_WITH(pw::analyze_trial(d), Catch::Contains("exactly 2 treatments"));
    }
    SECTION("an infinite value") {
        d.y[0] = INFINITY;
        REQUIRE_THROWS_WITH(pw::analyze_trial(d), Catch::Contains("record 1: the value is infinite"));
    }
}
