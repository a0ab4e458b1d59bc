// The completely randomized design (core/design/crd.hpp through design_trial): every treatment replicated
// r times, one grid as square as possible (or rows of plots_per_row), and a fair randomization.
//
// Sources: Gomez & Gomez, Statistical Procedures for Agricultural Research, 2nd ed. 1984, 2.1 (from memory:
// each treatment's r replicates go to plots completely at random, so every plot is equally likely to get
// any treatment). Grid sizes by hand. Critical values: Boost.Math's chi_squared quantile, cross-checked with
// R 4.2.2 qchisq and SciPy 1.10.1 chi2.ppf (both installed here), values quoted beside the checks.
#include <catch2/catch.hpp>

#include <boost/math/distributions/chi_squared.hpp>

#include <map>
#include <set>
#include <string>
#include <vector>

#include "core/design/crd.hpp"
#include "core/design/layout.hpp"
#include "core/error.hpp"

namespace {

pw::TrialSpec crd_spec(int treatments, int replicates, int plots_per_row = 0) {
    pw::TrialSpec s;
    s.code = "CRD1";
    s.design = "crd";
    s.replicates = replicates;
    s.field.plot_length_m = 2.0;
    s.field.plot_width_m = 1.0;
    s.field.alley_m = 0.5;
    s.field.plot_gap_m = 0.25;
    s.field.plots_per_row = plots_per_row;
    s.gradient.bearing_deg = 0;
    for (int i = 0; i < treatments; ++i) s.treatments.push_back({"T" + std::to_string(i + 1), "", false});
    return s;
}

}  // namespace

TEST_CASE("A CRD holds each treatment exactly r times in one block", "[design][crd]") {
    // Gomez & Gomez 1984, 2.1: t treatments x r replicates = t r plots, no blocks.
    auto [t, r] = GENERATE(table<int, int>({{4, 3}, {5, 4}, {2, 2}, {7, 5}}));
    CAPTURE(t, r);
    const auto l = pw::design_trial(crd_spec(t, r), 31);
    REQUIRE(l.plots.size() == static_cast<std::size_t>(t * r));
    std::map<int, int> count;
    for (const auto& p : l.plots) {
        CHECK(p.block == 1);
        ++count[p.treatment];
    }
    CHECK(count.size() == static_cast<std::size_t>(t));
    for (const auto& [trt, n] : count) CHECK(n == r);
    CHECK(l.algorithm == "mt19937_64+lemire+fisher-yates/1;design=crd/1");
    CHECK(l.columns.empty());
}

TEST_CASE("A CRD grid is as square as possible unless plots_per_row is given", "[design][crd]") {
    // By hand: 20 plots -> ceil(sqrt 20) = 5 per row, 4 rows; 12 plots -> 4 per row, 3 rows; 16 -> 4 x 4;
    // 17 -> 5 per row, 4 rows (the last holds 2). With plots_per_row = 6, 20 plots -> 6, 6, 6, 2.
    CHECK(pw::crd_square_row(20) == 5);
    CHECK(pw::crd_square_row(12) == 4);
    CHECK(pw::crd_square_row(16) == 4);
    CHECK(pw::crd_square_row(17) == 5);
    CHECK(pw::crd_square_row(1) == 1);
    auto extent = [](const pw::Layout& l) {
        std::set<int> rows, cols;
        for (const auto& p : l.plots) rows.insert(p.row), cols.insert(p.col);
        return std::pair<std::size_t, std::size_t>{rows.size(), cols.size()};
    };
    CHECK(extent(pw::design_trial(crd_spec(5, 4), 1)) == std::pair<std::size_t, std::size_t>{4, 5});
    CHECK(extent(pw::design_trial(crd_spec(5, 4, 6), 1)) == std::pair<std::size_t, std::size_t>{4, 6});
    // 5 plots of 1 m with 0.25 m gaps = 5 + 4 x 0.25 = 6 m across; 4 rows of 2 m with 3 alleys of 0.5 m = 9.5 m.
    const auto l = pw::design_trial(crd_spec(5, 4), 1);
    CHECK(l.field_x_m == Approx(6.0));
    CHECK(l.field_y_m == Approx(9.5));
}

TEST_CASE("Over many seeds each treatment falls on each plot of a CRD about equally often", "[design][crd][stats]") {
    // Under complete randomization each of the n = t r plots gets treatment i with probability r / n = 1/t,
    // so the t x n table of counts over S seeds has expectation S / t per cell. The table is a sum of S
    // independent random arrangements (row sums r, column sums 1), not a multinomial table: one arrangement
    // has cell covariance (n / (t (n-1))) (I - J/t) (x) (I - J/n) (worked from P(cell) = 1/t, P(two cells of a
    // row) = r (r-1) / (n (n-1)), P(two cells off each other's row and column) = r^2 / (n (n-1)), 0 in one
    // column), so Pearson's sum (O - E)^2 / E tends to n/(n-1) times a chi-square with (t-1)(n-1) degrees of
    // freedom, and (n-1)/n times it is the chi-square itself (a check by simulation with Python's
    // random.shuffle, 300 tables of 400 arrangements for t = 4, r = 3: mean Pearson sum 36.4, against 36
    // predicted here and 33 for a multinomial table). Fixed seed list 1..2000.
    const int t = 4, r = 3, n = t * r;
    const auto spec = crd_spec(t, r);
    std::vector<std::vector<double>> counts(t, std::vector<double>(n, 0.0));
    const int seeds = 2000;
    for (std::uint64_t seed = 1; seed <= static_cast<std::uint64_t>(seeds); ++seed)
        for (const auto& p : pw::design_trial(spec, seed).plots)
            counts[static_cast<std::size_t>(p.treatment)][static_cast<std::size_t>(p.position - 1)] += 1;
    const double expected = static_cast<double>(seeds) / t;
    double pearson = 0;
    for (const auto& row : counts)
        for (double o : row) pearson += (o - expected) * (o - expected) / expected;
    const double x2 = pearson * (n - 1) / n;
    const double critical = boost::math::quantile(boost::math::chi_squared((t - 1) * (n - 1)), 0.999);
    // R 4.2.2 qchisq(0.999, 33) = 63.870099; SciPy 1.10.1 chi2.ppf(0.999, 33) = 63.8700985.
    CHECK(critical == Approx(63.870099).margin(1e-5));
    CAPTURE(x2, critical);
    CHECK(x2 < critical);
}

TEST_CASE("A CRD that cannot be laid out is refused naming the key", "[design][crd][errors]") {
    // A CRD needs replicates to estimate its error (Gomez & Gomez 1984, 2.1) and two treatments to compare.
    CHECK_THROWS_WITH(pw::design_trial(crd_spec(4, 1), 1), Catch::StartsWith("trial.replicates"));
    CHECK_THROWS_WITH(pw::design_trial(crd_spec(1, 4), 1), Catch::StartsWith("treatments"));
}
