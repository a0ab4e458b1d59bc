// The Latin square generator (core/design/latin.hpp): the defining constraint for every side, the list of
// reduced squares, uniformity over all squares where it is promised, fairness of each cell, reproducibility,
// refusals and notes.
//
// Sources: Gomez & Gomez, Statistical Procedures for Agricultural Research, 2nd ed. 1984, 2.3 (from memory):
// each treatment once in every row and every column; error degrees of freedom (t-1)(t-2). Numbers of reduced
// squares 1, 4, 56, 9408 for orders 3..6 and of all squares 12 and 576 for orders 3 and 4: OEIS A000315 and
// A002860 (from memory; the 9408 reduced 6x6 squares are Fisher & Yates' count, Proc. Camb. Phil. Soc. 1934).
// Chi-square critical values: Boost.Math (tests/unit/design_fairness.hpp).
#include <catch2/catch.hpp>

#include <boost/math/distributions/chi_squared.hpp>

#include <cstdint>
#include <map>
#include <set>
#include <string>
#include <vector>

#include "core/design/latin.hpp"
#include "core/error.hpp"
#include "design_fairness.hpp"

namespace {

// The square as rows of treatments, indexed by square_row - 1 and square_col - 1.
std::vector<std::vector<int>> grid(const pw::DesignAssignment& a, int t) {
    std::vector<std::vector<int>> g(static_cast<std::size_t>(t), std::vector<int>(static_cast<std::size_t>(t), -1));
    for (const auto& u : a.units) g[static_cast<std::size_t>(u.square_row - 1)][static_cast<std::size_t>(u.square_col - 1)] = u.treatment;
    return g;
}

}  // namespace

TEST_CASE("Each symbol appears once in every row and every column, for every side from 3 to 12", "[design][latin]") {
    // Gomez & Gomez 1984, 2.3: the defining constraint of a Latin square. Sides 3..6 come from the list of
    // reduced squares, 7..12 from the cyclic square; 60 seeds each.
    for (int t = pw::kLatinMinSide; t <= pw::kLatinMaxSide; ++t) {
        for (std::uint64_t seed = 1; seed <= 60; ++seed) {
            CAPTURE(t, seed);
            pw::Rng rng(seed);
            const auto a = pw::latin_square(t, rng);
            REQUIRE(a.design_id == "latin/1");
            REQUIRE(a.columns == std::vector<std::string>{"square_row", "square_col"});
            REQUIRE(a.shapes.size() == 1);
            REQUIRE(a.shapes[0].rows == t);
            REQUIRE(a.shapes[0].cols == t);
            REQUIRE(a.units.size() == static_cast<std::size_t>(t * t));
            std::set<std::pair<int, int>> cells;
            for (const auto& u : a.units) {
                REQUIRE(u.block == 1);
                REQUIRE(u.rep == 1);
                REQUIRE(u.square_row == u.cell_row + 1);
                REQUIRE(u.square_col == u.cell_col + 1);
                REQUIRE(u.cell_row >= 0);
                REQUIRE(u.cell_row < t);
                REQUIRE(u.cell_col >= 0);
                REQUIRE(u.cell_col < t);
                REQUIRE(u.treatment >= 0);
                REQUIRE(u.treatment < t);
                REQUIRE((u.main == 0 && u.sub == 0 && u.incomplete_block == 0));
                cells.insert({u.cell_row, u.cell_col});
            }
            REQUIRE(cells.size() == static_cast<std::size_t>(t * t));
            const auto g = grid(a, t);
            for (int i = 0; i < t; ++i) {
                std::set<int> row, col;
                for (int j = 0; j < t; ++j) {
                    row.insert(g[static_cast<std::size_t>(i)][static_cast<std::size_t>(j)]);
                    col.insert(g[static_cast<std::size_t>(j)][static_cast<std::size_t>(i)]);
                }
                CHECK(row.size() == static_cast<std::size_t>(t));
                CHECK(col.size() == static_cast<std::size_t>(t));
            }
        }
    }
}

TEST_CASE("The reduced squares of orders 3 to 6 number 1, 4, 56 and 9408", "[design][latin]") {
    // OEIS A000315 (from memory); 9408 for order 6 is Fisher & Yates' enumeration (1934). Each listed square
    // must be reduced (first row and column in natural order), Latin, and listed once, in increasing order.
    const std::map<int, std::size_t> published = {{3, 1}, {4, 4}, {5, 56}, {6, 9408}};
    for (const auto& [t, count] : published) {
        CAPTURE(t);
        const auto& list = pw::latin_reduced_squares(t);
        CHECK(list.size() == count);
        const auto n = static_cast<std::size_t>(t);
        for (std::size_t k = 0; k < list.size(); ++k) {
            const auto& s = list[k];
            REQUIRE(s.size() == n * n);
            for (std::size_t i = 0; i < n; ++i) {
                REQUIRE(s[i] == i);
                REQUIRE(s[i * n] == i);
                std::set<int> row, col;
                for (std::size_t j = 0; j < n; ++j) row.insert(s[i * n + j]), col.insert(s[j * n + i]);
                REQUIRE(row.size() == n);
                REQUIRE(col.size() == n);
            }
            if (k > 0) REQUIRE(list[k - 1] < s);
        }
    }
    CHECK_THROWS_AS(pw::latin_reduced_squares(7), pw::DesignError);
    CHECK_THROWS_AS(pw::latin_reduced_squares(2), pw::DesignError);
}

TEST_CASE("For sides 3 and 4 every Latin square comes up, each equally often", "[design][latin][stats]") {
    // OEIS A002860 (from memory): 12 Latin squares of order 3, 576 of order 4. The header promises a uniform
    // draw over all of them for t <= 6; one square per seed, seeds 1..25*count, so each square expects 25.
    // One multinomial tally with count - 1 degrees of freedom (Boost.Math chi-square quantile 0.999).
    auto [t, count] = GENERATE(table<int, std::size_t>({{3, 12}, {4, 576}}));
    CAPTURE(t);
    std::map<std::vector<std::vector<int>>, double> seen;
    const std::uint64_t seeds = 25 * count;
    for (std::uint64_t seed = 1; seed <= seeds; ++seed) {
        pw::Rng rng(seed);
        seen[grid(pw::latin_square(t, rng), t)] += 1;
    }
    REQUIRE(seen.size() == count);
    pw_test::Tally all("every square of order " + std::to_string(t), pw_test::equal_probabilities(count));
    std::size_t k = 0;
    for (const auto& [square, n] : seen) all.observed[k++] = n;
    const auto v = pw_test::fairness({all});
    CAPTURE(v.worst_ratio);
    CHECK(v.worst_ratio < 1.0);
}

TEST_CASE("Each symbol falls on each cell of the square equally often", "[design][latin][stats]") {
    // Both constructions promise every symbol probability 1/t at every cell (the symbol map is a uniform
    // shuffle). t = 5 (reduced-square list) and t = 8 (cyclic square); 2000 seeds; one tally per cell,
    // t - 1 degrees of freedom each, family level 0.001 (tests/unit/design_fairness.hpp).
    const int t = GENERATE(5, 8);
    CAPTURE(t);
    std::vector<pw_test::Tally> tallies;
    for (int c = 0; c < t * t; ++c)
        tallies.emplace_back("cell " + std::to_string(c), pw_test::equal_probabilities(static_cast<std::size_t>(t)));
    for (std::uint64_t seed = 1; seed <= 2000; ++seed) {
        pw::Rng rng(seed);
        for (const auto& u : pw::latin_square(t, rng).units)
            tallies[static_cast<std::size_t>(u.cell_row * t + u.cell_col)].observed[static_cast<std::size_t>(u.treatment)] += 1;
    }
    const auto v = pw_test::fairness(tallies);
    CAPTURE(v.worst_ratio, v.worst_place);
    CHECK(v.worst_ratio < 1.0);
}

TEST_CASE("The fairness check rejects a square that is never randomized", "[design][latin][stats]") {
    // The power of the check above: the plain cyclic square (i + j) mod t, repeated 2000 times, puts one
    // symbol on each cell every time; the check must call that unfair.
    const int t = 5;
    std::vector<pw_test::Tally> tallies;
    for (int c = 0; c < t * t; ++c)
        tallies.emplace_back("cell " + std::to_string(c), pw_test::equal_probabilities(static_cast<std::size_t>(t)));
    for (int rep = 0; rep < 2000; ++rep)
        for (int i = 0; i < t; ++i)
            for (int j = 0; j < t; ++j) tallies[static_cast<std::size_t>(i * t + j)].observed[static_cast<std::size_t>((i + j) % t)] += 1;
    CHECK(pw_test::fairness(tallies).worst_ratio > 1.0);
}

TEST_CASE("The same seed gives the same square and another seed a different one", "[design][latin]") {
    // Reproducibility of a stored seed (common practice: the seed is kept with the trial).
    for (int t : {4, 6, 9}) {
        CAPTURE(t);
        pw::Rng r1(77), r2(77), r3(78);
        const auto a = grid(pw::latin_square(t, r1), t);
        CHECK(a == grid(pw::latin_square(t, r2), t));
        CHECK(a != grid(pw::latin_square(t, r3), t));  // equal by chance with probability 1/576 or less
    }
}

TEST_CASE("Squares for seed 20260614 match the pinned squares", "[design][latin][pin]") {
    // Pins guard stored layouts against an accidental change of the recipe; they are not a validation.
    // Computed outside the project by tests/tools/design_pins.py (Python 3 integers, mt19937_64 from its
    // published definition, checked against the C++ standard's fixed value, and the recipe of latin.hpp).
    const std::map<int, std::vector<std::vector<int>>> pins = {
        {4, {{0, 1, 3, 2}, {2, 3, 1, 0}, {3, 0, 2, 1}, {1, 2, 0, 3}}},
        {6, {{0, 5, 3, 2, 4, 1}, {2, 0, 5, 3, 1, 4}, {4, 2, 1, 5, 0, 3}, {1, 3, 4, 0, 2, 5}, {3, 4, 2, 1, 5, 0}, {5, 1, 0, 4, 3, 2}}},
        {7, {{3, 6, 4, 1, 5, 2, 0}, {6, 1, 5, 0, 3, 4, 2}, {5, 3, 2, 6, 4, 0, 1}, {1, 0, 3, 2, 6, 5, 4},
             {0, 2, 6, 4, 1, 3, 5}, {2, 4, 1, 5, 0, 6, 3}, {4, 5, 0, 3, 2, 1, 6}}},
    };
    for (const auto& [t, expected] : pins) {
        CAPTURE(t);
        pw::Rng rng(20260614);
        CHECK(grid(pw::latin_square(t, rng), t) == expected);
    }
}

TEST_CASE("A side outside 3 to 12 is refused, naming the expected range", "[design][latin][errors]") {
    // Sizes 3 to 12: the range the design asks for (a 2x2 square leaves no error degrees of freedom,
    // (t-1)(t-2) = 0, Gomez & Gomez 1984, 2.3).
    for (int t : {-1, 0, 1, 2, 13, 40}) {
        CAPTURE(t);
        pw::Rng rng(1);
        CHECK_THROWS_AS(pw::latin_square(t, rng), pw::DesignError);
        CHECK_THROWS_WITH(pw::latin_square(t, rng), Catch::StartsWith("Latin square") && Catch::Contains("3 to 12") &&
                                                        Catch::Contains("got " + std::to_string(t)));
    }
}

TEST_CASE("Notes warn of a square with few error degrees of freedom or more than 8 treatments", "[design][latin]") {
    // Error df (t-1)(t-2) (Gomez & Gomez 1984, 2.3): 2 at t=3, 6 at t=4, 12 at t=5; at least 12 asked for by
    // EPPO PP 1/152(4). Usual sizes 4 to 8 (Gomez & Gomez 1984, 2.3, from memory).
    CHECK(pw::latin_square_notes(3).size() == 1);
    CHECK_THAT(pw::latin_square_notes(4).at(0), Catch::Contains("6 error degrees of freedom"));
    CHECK(pw::latin_square_notes(5).empty());
    CHECK(pw::latin_square_notes(8).empty());
    REQUIRE(pw::latin_square_notes(9).size() == 1);
    CHECK_THAT(pw::latin_square_notes(9).at(0), Catch::Contains("4 to 8"));
}
