// RCBD analysis of variance (core/stats/anova.hpp) against R 4.2.2 and published worked examples.
//
// Every expected number is read from tests/data/stats (see its README.md for each file's origin):
// R's aov/lm tables for Student's sleep data and Immer's barley (MASS::immer), Yates' missing-plot
// hand example, and R's least-squares fits with plots removed. Tolerances follow the shared reference
// set: SS, MS, F, means, CV, SED and LSD to 1e-10 relative; p-values to 1e-8 relative.
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <limits>
#include <map>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "core/error.hpp"
#include "core/stats/anova.hpp"
#include "storage/csv_table.hpp"
#include "stats_data.hpp"

namespace {

using nlohmann::json;
using pw_test::data_path;
using pw_test::read_text;
using pw_test::read_json;

constexpr double kStatTol = 1e-10;  // SS, MS, F, means (reference README)
constexpr double kPTol = 1e-8;      // p-values (reference README)

// Rows of a reference CSV as RCBD observations (block, treatment and value columns named).
std::vector<pw::RcbdObservation> read_rcbd_csv(const std::string& name, const std::string& block,
                                               const std::string& treatment, const std::string& value) {
    const pw::CsvTable table = pw::parse_csv(read_text(name), name);
    const std::size_t b = table.column(block, name);
    const std::size_t t = table.column(treatment, name);
    const std::size_t y = table.column(value, name);
    std::vector<pw::RcbdObservation> out;
    for (const auto& row : table.rows) out.push_back({row[b], row[t], std::stod(row[y])});
    return out;
}

void require_rel(double got, double want, double tol) {
    CAPTURE(got, want, tol);
    if (want == 0) {
        REQUIRE(std::abs(got) <= tol);
    } else {
        REQUIRE(std::abs(got - want) <= tol * std::abs(want));
    }
}

const pw::AnovaRow& row_of(const pw::RcbdResult& res, const std::string& source) {
    for (const auto& row : res.anova) {
        if (row.source == source) return row;
    }
    FAIL("no ANOVA row named " << source);
    throw;  // unreachable
}

// One of our rows against one row of an R anova table (written by rcbd_reference.R or copied).
void require_row(const pw::RcbdResult& res, const std::string& source, const json& ref) {
    INFO("row " << source << " against R term " << ref.at("term").get<std::string>());
    const pw::AnovaRow& row = row_of(res, source);
    REQUIRE(row.df == ref.at("df").get<int>());
    require_rel(row.ss, ref.at("ss").get<double>(), kStatTol);
    if (ref.contains("ms")) require_rel(row.ms, ref.at("ms").get<double>(), kStatTol);
    if (ref.contains("f") && !ref.at("f").is_null()) {
        REQUIRE(row.f.has_value());
        REQUIRE(row.p.has_value());
        require_rel(*row.f, ref.at("f").get<double>(), kStatTol);
        require_rel(*row.p, ref.at("p").get<double>(), kPTol);
    } else {
        REQUIRE_FALSE(row.f.has_value());
        REQUIRE_FALSE(row.p.has_value());
    }
}

const json& term(const json& anova, const std::string& name) {
    for (const auto& r : anova) {
        if (r.at("term") == name) return r;
    }
    FAIL("reference table has no term " << name);
    throw;  // unreachable
}

double mean_of(const pw::RcbdResult& res, const std::string& treatment) {
    for (const auto& m : res.means) {
        if (m.treatment == treatment) return m.mean;
    }
    FAIL("no mean for treatment " << treatment);
    return 0;
}

}  // namespace

TEST_CASE("Student's sleep data analysed with patients as blocks reproduces R's aov table", "[stats][rcbd]") {
    // Source: R 4.2.2, aov(extra ~ factor(ID) + group, data = sleep) (sleep_expected.json, rcbd_equivalence)
    // and the quantities beyond the table from the same fit (sleep_rcbd_extra.json).
    const json expected = read_json("sleep_expected.json");
    const json& aov = expected.at("rcbd_equivalence").at("anova");
    const json extra = read_json("sleep_rcbd_extra.json");

    const pw::RcbdResult res = pw::analyze_rcbd(read_rcbd_csv("sleep_data.csv", "ID", "group", "extra"));

    REQUIRE(res.blocks == 10);
    REQUIRE(res.treatments == 2);
    REQUIRE(res.estimated.empty());
    require_row(res, "block", term(aov, "factor(ID)"));
    require_row(res, "treatment", term(aov, "group"));
    require_row(res, "residual", term(aov, "Residuals"));
    REQUIRE(row_of(res, "total").df == 19);
    require_rel(row_of(res, "total").ss, extra.at("total_ss").get<double>(), kStatTol);

    // The paired t-test of the same data (R's t.test, sleep_expected.json): F for drugs = t².
    const double t = expected.at("paired_t_test").at("t").get<double>();
    require_rel(*row_of(res, "treatment").f, t * t, kStatTol);

    require_rel(res.grand_mean, extra.at("grand_mean").get<double>(), kStatTol);
    require_rel(res.cv_percent, extra.at("cv_percent").get<double>(), kStatTol);
    require_rel(res.sed, extra.at("sed").get<double>(), kStatTol);
    require_rel(res.lsd_5pct, extra.at("lsd_5pct").get<double>(), kStatTol);
    for (const auto& [drug, mean] : extra.at("treatment_means").items()) {
        require_rel(mean_of(res, drug), mean.get<double>(), kStatTol);
    }
}

TEST_CASE("Immer's 1931 barley yields with locations as blocks reproduce R's aov table", "[stats][rcbd]") {
    // Source: R 4.2.2 + MASS 7.3.58.2, aov(Y1 ~ Loc + Var, data = immer) (immer_y1_rcbd.json).
    const json ref = read_json("immer_y1_rcbd.json");
    const pw::RcbdResult res = pw::analyze_rcbd(read_rcbd_csv("immer_y1.csv", "Loc", "Var", "Y1"));

    REQUIRE(res.blocks == 6);
    REQUIRE(res.treatments == 5);
    require_row(res, "block", term(ref.at("anova"), "Loc"));
    require_row(res, "treatment", term(ref.at("anova"), "Var"));
    require_row(res, "residual", term(ref.at("anova"), "Residuals"));
    require_row(res, "total", term(ref.at("anova"), "Total"));
    require_rel(res.grand_mean, ref.at("grand_mean").get<double>(), kStatTol);
    require_rel(res.cv_percent, ref.at("cv_percent").get<double>(), kStatTol);
    require_rel(res.sed, ref.at("sed").get<double>(), kStatTol);
    require_rel(res.lsd_5pct, ref.at("lsd_5pct").get<double>(), kStatTol);

    // Means come out in the order the varieties first appear in the data file (M, S, V, T, P in
    // immer_y1.csv), each over the 6 locations.
    const std::vector<std::string> order{"M", "S", "V", "T", "P"};
    REQUIRE(res.means.size() == order.size());
    for (std::size_t j = 0; j < order.size(); ++j) {
        REQUIRE(res.means[j].treatment == order[j]);
        REQUIRE(res.means[j].n == 6);
        require_rel(res.means[j].mean, ref.at("treatment_means").at(order[j]).get<double>(), kStatTol);
    }
}

TEST_CASE("One missing plot in Yates' hand example is estimated by his formula", "[stats][rcbd][missing]") {
    // Sources: yates_hand.json (X = (rB + tT − G)/((r−1)(t−1)) = 145/6, Yates 1933 as in Gomez & Gomez
    // 1984 ch. 7, computed with R 4.2.2) and yates_hand_exact.json (R's anova(lm(y ~ blk + trt)) on the
    // 11 observed plots: the exact block-adjusted treatment SS).
    const json hand = read_json("yates_hand.json").at("yates_rcbd_hand");
    const json exact = read_json("yates_hand_exact.json");
    const json& values = hand.at("data_trt_within_blk");

    std::vector<pw::RcbdObservation> data;
    for (int b = 0; b < 3; ++b) {
        for (int t = 0; t < 4; ++t) {
            const json& v = values.at(b * 4 + t);
            if (v.is_number()) data.push_back({"B" + std::to_string(b + 1), "T" + std::to_string(t + 1), v.get<double>()});
        }
    }
    REQUIRE(data.size() == 11);

    const pw::RcbdResult res = pw::analyze_rcbd(data);

    REQUIRE(res.estimated.size() == 1);
    REQUIRE(res.estimated[0].block == "B3");
    REQUIRE(res.estimated[0].treatment == "T4");
    require_rel(res.estimated[0].estimate, hand.at("X").get<double>(), kStatTol);
    require_rel(res.estimated[0].estimate, exact.at("lm_prediction").get<double>(), kStatTol);
    REQUIRE(row_of(res, "residual").df == hand.at("error_df_after").get<int>());

    require_row(res, "block", term(exact.at("anova"), "blk"));
    require_row(res, "treatment", term(exact.at("anova"), "trt"));
    require_row(res, "residual", term(exact.at("anova"), "Residuals"));
    require_row(res, "total", term(exact.at("anova"), "Total"));

    // Yates' correction: treatment SS of the augmented data minus his bias is the exact SS.
    require_rel(row_of(res, "treatment").ss,
                exact.at("augmented_treatment_ss").get<double>() - hand.at("bias").get<double>(), kStatTol);

    // The treatment mean with the estimate inserted: (T + X) / r, T and X from the hand example.
    require_rel(mean_of(res, "T4"), (hand.at("T").get<double>() + hand.at("X").get<double>()) / 3, kStatTol);
    REQUIRE(res.means[3].n == 2);
}

TEST_CASE("Missing plots in Immer's barley match R's least-squares fit of the remaining plots",
          "[stats][rcbd][missing]") {
    // Source: R 4.2.2 + MASS 7.3.58.2, anova(lm(Y1 ~ Loc + Var, data = immer[-rows, ])) with Loc first,
    // predict() for the removed cells and least-squares means (immer_y1_missing.json).
    const json ref = read_json("immer_y1_missing.json");
    const std::vector<pw::RcbdObservation> full = read_rcbd_csv("immer_y1.csv", "Loc", "Var", "Y1");

    for (int as_nan = 0; as_nan < 2; ++as_nan) {
        for (const json& c : ref.at("cases")) {
            INFO(c.at("r_call").get<std::string>() << (as_nan ? ", removed plots given as NaN" : ", removed plots left out"));
            std::vector<pw::RcbdObservation> data;
            for (const auto& o : full) {
                bool removed = false;
                for (const json& rm : c.at("removed")) {
                    removed = removed || (rm.at("Loc") == o.block && rm.at("Var") == o.treatment);
                }
                if (!removed) {
                    data.push_back(o);
                } else if (as_nan) {
                    data.push_back({o.block, o.treatment, std::numeric_limits<double>::quiet_NaN()});
                }
            }
            const pw::RcbdResult res = pw::analyze_rcbd(data);

            const json& aov = c.at("anova");
            require_row(res, "block", term(aov, "Loc"));
            require_row(res, "treatment", term(aov, "Var"));
            require_row(res, "residual", term(aov, "Residuals"));
            require_row(res, "total", term(aov, "Total"));

            REQUIRE(res.estimated.size() == c.at("removed").size());
            for (const json& rm : c.at("removed")) {
                bool found = false;
                for (const auto& e : res.estimated) {
                    if (rm.at("Loc") == e.block && rm.at("Var") == e.treatment) {
                        found = true;
                        require_rel(e.estimate, rm.at("lm_prediction").get<double>(), kStatTol);
                    }
                }
                REQUIRE(found);
            }
            for (const auto& [variety, mean] : c.at("ls_means").items()) {
                require_rel(mean_of(res, variety), mean.get<double>(), kStatTol);
            }
            require_rel(res.grand_mean, c.at("grand_mean_of_ls_means").get<double>(), kStatTol);
            require_rel(res.cv_percent, c.at("cv_percent").get<double>(), kStatTol);
            require_rel(res.sed, c.at("sed_no_missing").get<double>(), kStatTol);
            require_rel(res.lsd_5pct, c.at("lsd_5pct").get<double>(), kStatTol);
        }
    }
}

TEST_CASE("Data that are not an analysable RCBD are refused with a reason", "[stats][rcbd][errors]") {
    // An RCBD has each treatment exactly once in every block, at least 2 blocks and 2 treatments
    // (Gomez & Gomez 1984, ch. 2, from memory); a treatment with no observed plot has no estimable mean
    // and a missing plot costs one residual df (Yates 1933, via shared reference agronomy.md section 6).
    const double nan = std::numeric_limits<double>::quiet_NaN();
    const std::vector<pw::RcbdObservation> base{{"I", "A", 1.0}, {"I", "B", 2.0}, {"I", "C", 3.5},
                                                {"II", "A", 1.5}, {"II", "B", 2.5}, {"II", "C", 3.0},
                                                {"III", "A", 1.2}, {"III", "B", 2.9}, {"III", "C", 3.3}};

    SECTION("a duplicate block and treatment cell names both labels") {
        auto data = base;
        data.push_back({"II", "B", 2.6});
        REQUIRE_THROWS_AS(pw::analyze_rcbd(data), pw::InputError);
        REQUIRE_THROWS_WITH(pw::analyze_rcbd(data),
                            Catch::Contains("block \"II\", treatment \"B\": duplicate plot (observations 5 and 10)"));
    }
    SECTION("a single block") {
        const std::vector<pw::RcbdObservation> data{{"I", "A", 1.0}, {"I", "B", 2.0}};
        REQUIRE_THROWS_AS(pw::analyze_rcbd(data), pw::InputError);
        REQUIRE_THROWS_WITH(pw::analyze_rcbd(data), Catch::Contains("at least 2 blocks; the data have 1 (\"I\")"));
    }
    SECTION("a single treatment") {
        const std::vector<pw::RcbdObservation> data{{"I", "A", 1.0}, {"II", "A", 2.0}};
        REQUIRE_THROWS_AS(pw::analyze_rcbd(data), pw::InputError);
        REQUIRE_THROWS_WITH(pw::analyze_rcbd(data),
                            Catch::Contains("at least 2 treatments; the data have 1 (\"A\")"));
    }
    SECTION("a treatment missing from every block") {
        auto data = base;
        for (auto& o : data) {
            if (o.treatment == "C") o.y = nan;
        }
        REQUIRE_THROWS_AS(pw::analyze_rcbd(data), pw::InputError);
        REQUIRE_THROWS_WITH(pw::analyze_rcbd(data),
                            Catch::Contains("treatment \"C\" has no observed plot in any block"));
    }
    SECTION("a block with no observed plot") {
        auto data = base;
        for (auto& o : data) {
            if (o.block == "III") o.y = nan;
        }
        REQUIRE_THROWS_WITH(pw::analyze_rcbd(data), Catch::Contains("block \"III\" has no observed plot"));
    }
    SECTION("missing plots that use up every residual degree of freedom") {
        // 3 × 3 has (3−1)(3−1) = 4 residual df; four missing plots leave none.
        auto data = base;
        data[0].y = data[4].y = data[8].y = data[5].y = nan;
        REQUIRE_THROWS_WITH(pw::analyze_rcbd(data), Catch::Contains("4 missing plots leave no residual degrees of freedom"));
    }
    SECTION("observed plots that leave two groups of treatments unlinked") {
        // 4 blocks × 4 treatments, blocks I–II hold only A and B, blocks III–IV only C and D: 8 missing
        // plots, 1 residual df left, yet A and C never meet.
        std::vector<pw::RcbdObservation> data;
        const char* blocks[] = {"I", "II", "III", "IV"};
        const char* trts[] = {"A", "B", "C", "D"};
        for (int b = 0; b < 4; ++b) {
            for (int t = 0; t < 4; ++t) {
                const bool seen = (b < 2) == (t < 2);
                data.push_back({blocks[b], trts[t], seen ? 1.0 + b + 0.3 * t + 0.1 * b * t : nan});
            }
        }
        REQUIRE_THROWS_WITH(pw::analyze_rcbd(data),
                            Catch::Contains("treatments \"A\" and \"C\" cannot be compared"));
    }
    SECTION("an infinite value") {
        auto data = base;
        data[2].y = std::numeric_limits<double>::infinity();
        REQUIRE_THROWS_WITH(pw::analyze_rcbd(data),
                            Catch::Contains("observation 3 (block \"I\", treatment \"C\"): the value is infinite"));
    }
}

TEST_CASE("Yields shifted by a large constant keep R's sums of squares", "[stats][rcbd][accuracy]") {
    // Adding a constant to every plot changes no sum of squares about a mean (any ANOVA text); the
    // NIST StRD one-way sets SmLs04–09 use the same device (offsets of 1e6 and 1e12) to show that naive
    // one-pass sums Σy² − (Σy)²/n lose digits. Expected: R 4.2.2 on the unshifted data
    // (immer_y1_rcbd.json, immer_y1_missing.json). With an offset of 1e6 a double keeps about 10 digits
    // of a deviation of size 10, hence the 1e-9 tolerance here.
    constexpr double offset = 1e6;
    const json complete = read_json("immer_y1_rcbd.json");
    const json missing = read_json("immer_y1_missing.json").at("cases").at(2);  // three plots removed
    std::vector<pw::RcbdObservation> data = read_rcbd_csv("immer_y1.csv", "Loc", "Var", "Y1");
    for (auto& o : data) o.y += offset;

    const pw::RcbdResult res = pw::analyze_rcbd(data);
    for (const auto& [ours, theirs] : {std::pair{"block", "Loc"}, std::pair{"treatment", "Var"},
                                       std::pair{"residual", "Residuals"}, std::pair{"total", "Total"}}) {
        INFO(ours);
        require_rel(row_of(res, ours).ss, term(complete.at("anova"), theirs).at("ss").get<double>(), 1e-9);
    }
    require_rel(res.grand_mean - offset, complete.at("grand_mean").get<double>(), 1e-9);

    std::vector<pw::RcbdObservation> holed;
    for (const auto& o : data) {
        bool removed = false;
        for (const json& rm : missing.at("removed")) removed = removed || (rm.at("Loc") == o.block && rm.at("Var") == o.treatment);
        if (!removed) holed.push_back(o);
    }
    const pw::RcbdResult mres = pw::analyze_rcbd(holed);
    for (const auto& [ours, theirs] : {std::pair{"block", "Loc"}, std::pair{"treatment", "Var"},
                                       std::pair{"residual", "Residuals"}, std::pair{"total", "Total"}}) {
        INFO("three plots missing, " << ours);
        require_rel(row_of(mres, ours).ss, term(missing.at("anova"), theirs).at("ss").get<double>(), 1e-9);
    }
    for (const auto& e : mres.estimated) {
        for (const json& rm : missing.at("removed")) {
            if (rm.at("Loc") == e.block && rm.at("Var") == e.treatment) {
                require_rel(e.estimate - offset, rm.at("lm_prediction").get<double>(), 1e-9);
            }
        }
    }
}
