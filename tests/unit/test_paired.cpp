// Paired plots (core/design/paired.hpp through design_trial): two treatments, one of each in every pair of
// adjacent plots side by side across the gradient, in an order randomized fairly within each pair.
//
// Sources: the matched-pairs design (common practice: two treatments on two like units, compared by the
// paired t test); pairs across the gradient so both plots sample one band of it (Gomez & Gomez 1984, 2.2.1,
// from memory, for blocks). Distances by hand. Critical value: Boost.Math's chi_squared quantile,
// cross-checked with R 4.2.2 qchisq(0.999, 1) = 10.827566.
#include <catch2/catch.hpp>

#include <boost/math/distributions/chi_squared.hpp>

#include <cmath>
#include <map>
#include <string>
#include <vector>

#include "core/design/layout.hpp"
#include "core/error.hpp"

namespace {

pw::TrialSpec paired_spec(int pairs, double bearing_deg, int treatments = 2) {
    pw::TrialSpec s;
    s.code = "PAIR1";
    s.design = "paired";
    s.blocks = pairs;
    s.field.plot_length_m = 10.0;
    s.field.plot_width_m = 4.0;
    s.field.alley_m = 2.0;
    s.field.plot_gap_m = 0.5;
    s.gradient.bearing_deg = bearing_deg;
    for (int i = 0; i < treatments; ++i) s.treatments.push_back({"T" + std::to_string(i + 1), "", false});
    return s;
}

}  // namespace

TEST_CASE("Each pair holds both treatments side by side across the gradient", "[design][paired]") {
    // By hand: plots 4 m wide with a 0.5 m gap, so the two centres of a pair are 4.5 m apart across the
    // gradient and level along it.
    for (double bearing : {0.0, 90.0, 180.0, 270.0}) {
        CAPTURE(bearing);
        const bool along_x = bearing == 90.0 || bearing == 270.0;
        const auto l = pw::design_trial(paired_spec(6, bearing), 12);
        REQUIRE(l.plots.size() == 12);
        std::map<int, std::vector<const pw::PlotPlacement*>> pairs;
        for (const auto& p : l.plots) pairs[p.block].push_back(&p);
        CHECK(pairs.size() == 6);
        for (const auto& [b, ps] : pairs) {
            REQUIRE(ps.size() == 2);
            CHECK(ps[0]->treatment + ps[1]->treatment == 1);  // one of 0 and 1 each
            const double d_across = along_x ? std::fabs(ps[0]->y_m - ps[1]->y_m) : std::fabs(ps[0]->x_m - ps[1]->x_m);
            const double d_along = along_x ? std::fabs(ps[0]->x_m - ps[1]->x_m) : std::fabs(ps[0]->y_m - ps[1]->y_m);
            CHECK(d_across == Approx(4.5));
            CHECK(d_along == Approx(0.0).margin(1e-9));
            CHECK(ps[0]->id == b * 100 + 1);  // pair*100 + position (common practice numbering)
            CHECK(ps[1]->id == b * 100 + 2);
        }
    }
}

TEST_CASE("Over many seeds each treatment is first in its pair about half the time", "[design][paired][stats]") {
    // Each pair's order is a fair coin: the 2 x 2 table treatment x position over S seeds and P pairs has
    // expectation S P / 2 per cell; Pearson's statistic with fixed margins has 1 degree of freedom.
    const int pairs = 10, seeds = 2000;
    const auto spec = paired_spec(pairs, 0);
    double counts[2][2] = {{0, 0}, {0, 0}};
    for (std::uint64_t seed = 1; seed <= static_cast<std::uint64_t>(seeds); ++seed)
        for (const auto& p : pw::design_trial(spec, seed).plots) counts[p.treatment][p.position - 1] += 1;
    const double expected = seeds * pairs / 2.0;
    double x2 = 0;
    for (auto& row : counts)
        for (double o : row) x2 += (o - expected) * (o - expected) / expected;
    const double critical = boost::math::quantile(boost::math::chi_squared(1), 0.999);
    CHECK(critical == Approx(10.827566).margin(1e-5));  // R 4.2.2 qchisq(0.999, 1)
    CAPTURE(x2);
    CHECK(x2 < critical);
}

TEST_CASE("Paired plots need exactly two treatments and at least two pairs", "[design][paired][errors]") {
    // A paired comparison is of two treatments; one pair leaves no degrees of freedom for the paired t test.
    CHECK_THROWS_WITH(pw::design_trial(paired_spec(6, 0, 3), 1), Catch::StartsWith("treatments") && Catch::Contains("exactly 2"));
    CHECK_THROWS_WITH(pw::design_trial(paired_spec(1, 0), 1), Catch::StartsWith("trial.blocks") && Catch::Contains("pairs"));
    const auto l = pw::design_trial(paired_spec(2, 0), 1);
    CHECK(l.algorithm == "mt19937_64+lemire+fisher-yates/1;design=paired/1");
}
