// Chi-square goodness of fit for the randomization of design generators (tests/unit/test_latin.cpp,
// test_split_plot.cpp, test_augmented.cpp).
//
// Each tally counts, over a fixed list of seeds (one independent design per seed), which category
// (treatment, level) fell at ONE place of the design (a cell, a main plot position, ...), against the
// probabilities the design's randomization promises. Counts for one place over independent seeds are
// multinomial, so Pearson's statistic is approximately chi-square with (categories - 1) degrees of freedom
// (Pearson 1900; any statistics text). Places of one design are not independent of each other (a Latin
// square row holds each symbol once), so the tallies are not pooled into one statistic: each is tested on
// its own, at a Bonferroni-corrected level, so that the whole family fails a correct generator with
// probability at most `family_alpha`. Critical values: Boost.Math chi_squared quantile, a general-purpose
// reference implementation. The seeds are fixed, so the outcome is the same on every run.
#pragma once
#include <catch2/catch.hpp>

#include <boost/math/distributions/chi_squared.hpp>

#include <algorithm>
#include <cstddef>
#include <string>
#include <utility>
#include <vector>

namespace pw_test {

struct Tally {
    std::string place;                 // e.g. "block 2 cell 3", for the failure message
    std::vector<double> probability;   // promised probability of each category
    std::vector<double> observed;      // counts, same length

    Tally(std::string where, std::vector<double> p)
        : place(std::move(where)), probability(std::move(p)), observed(probability.size(), 0.0) {}
};

// Pearson's X^2 of one tally: sum over categories of (O - E)^2 / E, E = total * probability.
inline double pearson(const Tally& t) {
    double total = 0;
    for (double o : t.observed) total += o;
    double x2 = 0;
    for (std::size_t k = 0; k < t.observed.size(); ++k) {
        const double e = total * t.probability[k];
        x2 += (t.observed[k] - e) * (t.observed[k] - e) / e;
    }
    return x2;
}

// The worst tally at level family_alpha / tallies.size(): its X^2 over its critical value (below 1 passes)
// and where it is. Each category must expect at least 5 counts (the usual condition for the chi-square
// approximation, from memory).
struct Verdict {
    double worst_ratio = 0;
    std::string worst_place;
};

inline Verdict fairness(const std::vector<Tally>& tallies, double family_alpha = 0.001) {
    REQUIRE(!tallies.empty());
    const double level = family_alpha / static_cast<double>(tallies.size());
    Verdict v;
    for (const auto& t : tallies) {
        double total = 0, psum = 0, pmin = 1;
        for (double o : t.observed) total += o;
        for (double p : t.probability) psum += p, pmin = std::min(pmin, p);
        REQUIRE(psum == Approx(1.0));
        REQUIRE(total * pmin >= 5.0);
        const double df = static_cast<double>(t.probability.size() - 1);
        const double critical = boost::math::quantile(boost::math::chi_squared(df), 1.0 - level);
        const double ratio = pearson(t) / critical;
        if (ratio > v.worst_ratio) v = {ratio, t.place};
    }
    return v;
}

inline std::vector<double> equal_probabilities(std::size_t k) {
    return std::vector<double>(k, 1.0 / static_cast<double>(k));
}

}  // namespace pw_test
