// Alpha designs (core/design/alpha.hpp) and block-design efficiency (core/design/efficiency.hpp).
//
// Sources of the expected values:
//  - Resolvability (each entry once per replicate, s = ceil(v/k) incomplete blocks): Patterson & Williams
//    1976, Biometrika 63(1):83-92. Block sizes differing by at most one when k does not divide v: common
//    practice (John & Williams 1995, Cyclic and Computer Generated Designs, ch. 4, from memory).
//  - Efficiency factor of a balanced incomplete block design, E = v(k-1) / (k(v-1)), every canonical factor
//    equal to it: Cochran & Cox 1957, Experimental Designs, ch. 11; John & Williams 1995, ch. 2 (from memory).
//  - Square lattices (v = k^2, replicates from rows, columns and Latin squares): canonical factors 1 and
//    (r-1)/r, E = (k+1)/(k+3) for two replicates and (2k+2)/(2k+5) for three (Cochran & Cox 1957, ch. 10;
//    John & Williams 1995, ch. 4; from memory). Lattices attain the Patterson & Williams bound
//    (v-1)(r-1) / ((v-1)(r-1) + r(s-1)) (Patterson & Williams 1976, from memory).
//  - A small design with unequal block sizes: canonical factors worked by hand from C = R - N K^-1 N'.
//  - The goal: E within 2% of the upper bound for v=24,k=4,r=2; 48,6,3; 100,10,3; 200,10,2.
//  - Chi-square critical values: Boost.Math's chi_squared quantile (a general-purpose reference).
#include <catch2/catch.hpp>

#include <boost/math/distributions/chi_squared.hpp>

#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <string>
#include <tuple>
#include <vector>

#include "core/design/alpha.hpp"
#include "core/design/efficiency.hpp"
#include "core/error.hpp"

namespace {

constexpr double kTol = 1e-10;

// Square lattice on k^2 treatments t = i*k + j: replicate 1 groups rows i, replicate 2 columns j,
// replicate 3 the symbols of the Latin square (i + j) mod k, replicate 4 those of (i + 2j) mod k (orthogonal
// to the third for prime k). Yates 1936; Cochran & Cox 1957, ch. 10.
pw::BlockContents square_lattice(int k, int replicates) {
    pw::BlockContents blocks;
    for (int rep = 0; rep < replicates; ++rep)
        for (int b = 0; b < k; ++b) {
            std::vector<int> block;
            for (int i = 0; i < k; ++i)
                for (int j = 0; j < k; ++j) {
                    const int key = rep == 0 ? i : rep == 1 ? j : rep == 2 ? (i + j) % k : (i + 2 * j) % k;
                    if (key == b) block.push_back(i * k + j);
                }
            blocks.push_back(block);
        }
    return blocks;
}

struct Size {
    int v, k, r;
};

// Parameter sets for the structural checks: k dividing v and not, k < s, k = s and k > s.
const std::vector<Size> kSizes = {
    {24, 4, 2}, {25, 4, 2}, {30, 7, 3}, {10, 6, 2}, {12, 3, 4}, {13, 5, 2},
    {48, 6, 3}, {9, 3, 2}, {50, 8, 3}, {36, 6, 4}, {7, 2, 3}, {64, 8, 2},
};

pw::DesignAssignment generate(const Size& z, std::uint64_t seed, pw::AlphaQuality* q = nullptr) {
    pw::Rng rng(seed);
    return pw::alpha_design({z.v, z.k, z.r}, rng, q);
}

double chi_square_critical(double df, double p) {
    return boost::math::quantile(boost::math::chi_squared(df), p);
}

}  // namespace

TEST_CASE("Every replicate of an alpha design holds each entry exactly once", "[design][alpha]") {
    // Patterson & Williams 1976: a resolvable design; each replicate is a complete set of entries.
    for (const Size& z : kSizes)
        for (std::uint64_t seed : {1u, 2u, 3u}) {
            CAPTURE(z.v, z.k, z.r, seed);
            const pw::DesignAssignment d = generate(z, seed);
            REQUIRE(d.units.size() == static_cast<std::size_t>(z.v * z.r));
            std::map<std::pair<int, int>, int> seen;  // (rep, entry) -> count
            for (const auto& u : d.units) {
                REQUIRE(u.rep >= 1);
                REQUIRE(u.rep <= z.r);
                REQUIRE(u.treatment >= 0);
                REQUIRE(u.treatment < z.v);
                ++seen[{u.rep, u.treatment}];
            }
            REQUIRE(seen.size() == static_cast<std::size_t>(z.v * z.r));
            for (const auto& [key, count] : seen) REQUIRE(count == 1);
        }
}

TEST_CASE("An alpha design has s = ceil(v/k) incomplete blocks per replicate, sizes differing by at most one",
          "[design][alpha]") {
    // s = ceil(v/k) blocks per replicate (Patterson & Williams 1976); when k does not divide v, sizes
    // ceil(v/s) and floor(v/s), the larger blocks first (common practice, John & Williams 1995, ch. 4).
    for (const Size& z : kSizes) {
        CAPTURE(z.v, z.k, z.r);
        const int s = (z.v + z.k - 1) / z.k;
        const pw::DesignAssignment d = generate(z, 11);
        CHECK(d.design_id == "alpha/1");
        CHECK(d.columns == std::vector<std::string>{"rep", "incomplete_block"});
        REQUIRE(d.shapes.size() == static_cast<std::size_t>(z.r * s));
        std::map<int, std::set<std::pair<int, int>>> cells;  // block -> cells used
        for (const auto& u : d.units) {
            REQUIRE(u.incomplete_block >= 1);
            REQUIRE(u.incomplete_block <= s);
            REQUIRE(u.block == (u.rep - 1) * s + u.incomplete_block);
            const pw::BlockShape& shape = d.shapes[static_cast<std::size_t>(u.block - 1)];
            // Each incomplete block is one row of plots across the gradient.
            REQUIRE(shape.rows == 1);
            REQUIRE(u.cell_row == 0);
            REQUIRE(u.cell_col >= 0);
            REQUIRE(u.cell_col < shape.cols);
            REQUIRE(cells[u.block].insert({u.cell_row, u.cell_col}).second);
            CHECK(u.main == 0);
            CHECK(u.sub == 0);
            CHECK(u.square_row == 0);
            CHECK(u.square_col == 0);
        }
        const int large = (z.v + s - 1) / s, small = z.v / s;
        for (int b = 1; b <= z.r * s; ++b) {
            const int cols = d.shapes[static_cast<std::size_t>(b - 1)].cols;
            REQUIRE(static_cast<int>(cells[b].size()) == cols);  // the shape is filled
            REQUIRE(cols <= z.k);
            REQUIRE((cols == large || cols == small));
            if ((b - 1) % s > 0) REQUIRE(cols <= d.shapes[static_cast<std::size_t>(b - 2)].cols);
        }
    }
}

TEST_CASE("An alpha design for 25 entries in blocks of 4 has four blocks of 4 and three of 3", "[design][alpha]") {
    // Worked by hand: s = ceil(25/4) = 7; 25 = 4*4 + 3*3 (common practice: sizes k and k-1).
    CHECK(pw::alpha_block_sizes(25, 4) == std::vector<int>{4, 4, 4, 4, 3, 3, 3});
    // s = ceil(10/6) = 2 blocks; 10 = 5 + 5: two equal blocks rather than 6 + 4 (sizes differ by at most one).
    CHECK(pw::alpha_block_sizes(10, 6) == std::vector<int>{5, 5});
    CHECK(pw::alpha_block_sizes(100, 10) == std::vector<int>(10, 10));
}

TEST_CASE("A balanced incomplete block design has every canonical efficiency factor v(k-1)/(k(v-1))",
          "[design][efficiency]") {
    // The Fano plane, v = b = 7, k = r = 3, lambda = 1: the blocks {i, i+1, i+3} mod 7 developed from the
    // perfect difference set {0, 1, 3} mod 7 (from memory). E = 7*2/(3*6) = 7/9.
    pw::BlockContents fano;
    for (int i = 0; i < 7; ++i) fano.push_back({i, (i + 1) % 7, (i + 3) % 7});
    const std::vector<double> e = pw::canonical_efficiency_factors(7, fano);
    REQUIRE(e.size() == 6);
    for (double x : e) CHECK(x == Approx(7.0 / 9.0).epsilon(kTol));
    CHECK(pw::block_design_efficiency(7, fano) == Approx(7.0 / 9.0).epsilon(kTol));

    // The affine plane of order 3 (a resolvable BIBD: the square lattice with 4 replicates), v = 9, k = 3:
    // E = 9*2/(3*8) = 3/4, which is also the bound for v = 9, k = 3, r = 4.
    const pw::BlockContents affine = square_lattice(3, 4);
    CHECK(pw::block_design_efficiency(9, affine) == Approx(0.75).epsilon(kTol));
    CHECK(pw::alpha_upper_bound(9, 3, 4) == Approx(0.75).epsilon(kTol));
}

TEST_CASE("Square lattices have the published efficiency factors and attain the upper bound",
          "[design][efficiency][alpha]") {
    for (int k = 3; k <= 10; ++k) {
        CAPTURE(k);
        // Simple lattice (two replicates): (k-1)^2 factors 1 and 2(k-1) factors 1/2; E = (k+1)/(k+3).
        const std::vector<double> e2 = pw::canonical_efficiency_factors(k * k, square_lattice(k, 2));
        REQUIRE(e2.size() == static_cast<std::size_t>(k * k - 1));
        const auto halves = std::count_if(e2.begin(), e2.end(), [](double x) { return std::abs(x - 0.5) < 1e-9; });
        const auto ones = std::count_if(e2.begin(), e2.end(), [](double x) { return std::abs(x - 1.0) < 1e-9; });
        CHECK(halves == 2 * (k - 1));
        CHECK(ones == (k - 1) * (k - 1));
        const double simple = (k + 1.0) / (k + 3.0);
        CHECK(pw::block_design_efficiency(k * k, square_lattice(k, 2)) == Approx(simple).epsilon(kTol));
        CHECK(pw::alpha_upper_bound(k * k, k, 2) == Approx(simple).epsilon(kTol));

        // Triple lattice: 3(k-1) factors 2/3, the rest 1; E = (2k+2)/(2k+5).
        const std::vector<double> e3 = pw::canonical_efficiency_factors(k * k, square_lattice(k, 3));
        const auto thirds =
            std::count_if(e3.begin(), e3.end(), [](double x) { return std::abs(x - 2.0 / 3.0) < 1e-9; });
        CHECK(thirds == 3 * (k - 1));
        const double triple = (2.0 * k + 2.0) / (2.0 * k + 5.0);
        CHECK(pw::block_design_efficiency(k * k, square_lattice(k, 3)) == Approx(triple).epsilon(kTol));
        CHECK(pw::alpha_upper_bound(k * k, k, 3) == Approx(triple).epsilon(kTol));
    }
}

TEST_CASE("Canonical efficiency factors with unequal block sizes follow C = R - N K^-1 N'",
          "[design][efficiency]") {
    // Worked by hand: blocks {0,1,2} and {0,1}; R = diag(2,2,1). R^-1/2 C R^-1/2 has eigenvalue 1 on
    // (1,-1,0), 0 on R^1/2 1, and the third is its trace 11/6 minus 1 = 5/6. E = 2 / (6/5 + 1) = 10/11.
    const pw::BlockContents blocks = {{0, 1, 2}, {0, 1}};
    const std::vector<double> e = pw::canonical_efficiency_factors(3, blocks);
    REQUIRE(e.size() == 2);
    CHECK(e[0] == Approx(5.0 / 6.0).epsilon(kTol));
    CHECK(e[1] == Approx(1.0).epsilon(kTol));
    CHECK(pw::block_design_efficiency(3, blocks) == Approx(10.0 / 11.0).epsilon(kTol));
}

TEST_CASE("A disconnected design has efficiency factor 0 and bad input is refused", "[design][efficiency]") {
    // Definition (John & Williams 1995, ch. 2): a disconnected design has a further zero canonical factor.
    const pw::BlockContents split = {{0, 1}, {0, 1}, {2, 3}, {2, 3}};
    CHECK_FALSE(pw::block_design_connected(4, split));
    CHECK(pw::block_design_efficiency(4, split) == 0.0);
    CHECK_THROWS_AS(pw::block_design_efficiency(4, pw::BlockContents{{0, 1}, {2}}), pw::DesignError);  // 3 missing
    CHECK_THROWS_WITH(pw::block_design_efficiency(3, pw::BlockContents{{0, 1}, {}}), Catch::Contains("block 2 is empty"));
    CHECK_THROWS_WITH(pw::block_design_efficiency(3, pw::BlockContents{{0, 1, 2}, {5}}),
                      Catch::Contains("treatment 5"));
}

TEST_CASE("Generated alpha designs never exceed the upper bound", "[design][alpha]") {
    // The bounds are theorems about every resolvable design (Patterson & Williams 1976; John & Williams 1995,
    // 2.8; Williams, Patterson & John 1976 for r = 2): no design may beat them. E is recomputed from the
    // assignment by the eigenvalue route.
    for (const Size& z : kSizes)
        for (std::uint64_t seed : {5u, 6u}) {
            CAPTURE(z.v, z.k, z.r, seed);
            pw::AlphaQuality q;
            const pw::DesignAssignment d = generate(z, seed, &q);
            const double e = pw::alpha_efficiency_factor(d);
            CHECK(e > 0);
            CHECK(e <= q.upper_bound + 1e-12);
            CHECK(q.upper_bound == pw::alpha_upper_bound(z.v, z.k, z.r));
        }
}

TEST_CASE("An alpha design for each of the issue's sizes comes within 2% of the upper bound", "[design][alpha][goal]") {
    // The goal stated for the alpha-lattice: E / U >= 0.98 for these four sizes.
    const std::vector<Size> goal = {{24, 4, 2}, {48, 6, 3}, {100, 10, 3}, {200, 10, 2}};
    for (const Size& z : goal) {
        CAPTURE(z.v, z.k, z.r);
        pw::AlphaQuality q;
        const pw::DesignAssignment d = generate(z, 20240601, &q);
        const double e = pw::alpha_efficiency_factor(d);
        CAPTURE(e, q.upper_bound);
        CHECK(e <= q.upper_bound + 1e-12);
        CHECK(e / q.upper_bound >= 0.98);
    }
}

TEST_CASE("The same seed gives the same alpha design and another seed a different one", "[design][alpha]") {
    // Reproducibility of a stored seed (common practice: the seed is kept with the trial).
    const Size z{20, 4, 3};
    const pw::DesignAssignment a = generate(z, 99), b = generate(z, 99), c = generate(z, 100);
    auto key = [](const pw::DesignAssignment& d) {
        std::vector<std::tuple<int, int, int, int>> out;
        for (const auto& u : d.units) out.emplace_back(u.block, u.cell_col, u.treatment, u.rep);
        return out;
    };
    CHECK(key(a) == key(b));
    CHECK(key(a) != key(c));
    // Guard, not validation: the first incomplete block for seed 99 as generated when this test was written.
    // A change here changes every stored alpha layout: bump kAlphaDesignId.
    std::vector<int> first;
    for (const auto& u : a.units)
        if (u.block == 1) first.push_back(u.treatment);
    CHECK(first == std::vector<int>{12, 19, 3, 18});
}

TEST_CASE("Each entry of an alpha design falls in each position of its incomplete block equally often", "[design][alpha][fairness]") {
    // Over 600 seeds, the count of (entry, position within its incomplete block) and of (entry, incomplete
    // block number) should be uniform. Chi-square goodness of fit per entry, summed: df = v(k-1) and v(s-1);
    // critical value at 0.999 from Boost.Math.
    const Size z{12, 4, 2};
    const int s = 3, seeds = 600;
    std::vector<std::vector<int>> position(12, std::vector<int>(4, 0)), block(12, std::vector<int>(3, 0));
    for (int seed = 1; seed <= seeds; ++seed) {
        const pw::DesignAssignment d = generate(z, static_cast<std::uint64_t>(seed) * 7919u);
        for (const auto& u : d.units) {
            ++position[static_cast<std::size_t>(u.treatment)][static_cast<std::size_t>(u.cell_col)];
            ++block[static_cast<std::size_t>(u.treatment)][static_cast<std::size_t>(u.incomplete_block - 1)];
        }
    }
    auto statistic = [](const std::vector<std::vector<int>>& counts, double expected) {
        double x2 = 0;
        for (const auto& row : counts)
            for (int o : row) x2 += (o - expected) * (o - expected) / expected;
        return x2;
    };
    const double x2_position = statistic(position, seeds * z.r / 4.0);
    const double x2_block = statistic(block, seeds * z.r / static_cast<double>(s));
    CAPTURE(x2_position, x2_block);
    CHECK(x2_position < chi_square_critical(12 * 3, 0.999));
    CHECK(x2_block < chi_square_critical(12 * 2, 0.999));
}

TEST_CASE("Out-of-range alpha design parameters are refused with the parameter named", "[design][alpha]") {
    pw::Rng rng(1);
    CHECK_THROWS_WITH(pw::alpha_design({12, 12, 2}, rng), Catch::Contains("block_size"));
    CHECK_THROWS_WITH(pw::alpha_design({12, 1, 2}, rng), Catch::Contains("block_size"));
    CHECK_THROWS_WITH(pw::alpha_design({12, 4, 1}, rng), Catch::Contains("replicates"));
    CHECK_THROWS_WITH(pw::alpha_design({2, 1, 2}, rng), Catch::Contains("entries"));
    CHECK_THROWS_WITH(pw::alpha_design({1000, 10, 2}, rng), Catch::Contains("entries"));
    CHECK_THROWS_AS(pw::alpha_upper_bound(10, 10, 2), pw::DesignError);
}
