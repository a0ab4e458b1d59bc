// The augmented design generator (core/design/augmented.hpp): the defining constraints over a range of
// sizes, fairness of the randomization, reproducibility, refusals and notes.
//
// Sources: Federer, Augmented (or hoonuiaku) designs, Hawaiian Planters' Record 55, 1956 (from memory):
// checks replicated in every block, new entries once each; the error from the checks has (c-1)(B-1) df.
// Division of the new entries as evenly as possible, 2 to 4 checks per block and checks 10 to 20% of the
// plots: common practice. At least 12 error df: EPPO PP 1/152(4), 2012. Chi-square critical values:
// Boost.Math (tests/unit/design_fairness.hpp).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cstdint>
#include <map>
#include <set>
#include <string>
#include <vector>

#include "core/design/augmented.hpp"
#include "core/error.hpp"
#include "design_fairness.hpp"

namespace {

std::vector<int> treatments(const pw::DesignAssignment& a) {
    std::vector<int> v;
    for (const auto& u : a.units) v.push_back(u.treatment);
    return v;
}

// Treatments of each block by cell.
std::vector<std::vector<int>> blocks_by_cell(const pw::DesignAssignment& a) {
    std::vector<std::vector<int>> out(a.shapes.size());
    for (std::size_t k = 0; k < a.shapes.size(); ++k) out[k].assign(static_cast<std::size_t>(a.shapes[k].cols), -1);
    for (const auto& u : a.units) out[static_cast<std::size_t>(u.block - 1)][static_cast<std::size_t>(u.cell_col)] = u.treatment;
    return out;
}

}  // namespace

TEST_CASE("Every check is in every block, every new entry once in the trial, and block sizes differ by at most "
          "one", "[design][augmented]") {
    // Federer 1956: checks in every block, new entries unreplicated. Even division (common practice), the
    // larger blocks first (augmented.hpp). c in 2..5, n in 1..30, B in 2..6, 3 seeds each.
    for (int c = 2; c <= 5; ++c)
        for (int n = 1; n <= 30; ++n)
            for (int nb = 2; nb <= 6; ++nb)
                for (std::uint64_t seed = 1; seed <= 3; ++seed) {
                    CAPTURE(c, n, nb, seed);
                    pw::Rng rng(seed);
                    const auto d = pw::augmented(c, n, nb, rng);
                    REQUIRE(d.design_id == "augmented/1");
                    REQUIRE(d.columns == std::vector<std::string>{"incomplete_block"});
                    REQUIRE(d.shapes.size() == static_cast<std::size_t>(nb));
                    REQUIRE(d.units.size() == static_cast<std::size_t>(c * nb + n));
                    std::map<int, std::multiset<int>> checks_in;
                    std::map<int, std::set<int>> cells_in;
                    std::multiset<int> new_entries;
                    for (const auto& u : d.units) {
                        REQUIRE((u.block >= 1 && u.block <= nb));
                        REQUIRE(u.incomplete_block == u.block);
                        REQUIRE(u.rep == 0);
                        REQUIRE(u.cell_row == 0);
                        REQUIRE((u.cell_col >= 0 && u.cell_col < d.shapes[static_cast<std::size_t>(u.block - 1)].cols));
                        REQUIRE((u.treatment >= 0 && u.treatment < c + n));
                        cells_in[u.block].insert(u.cell_col);
                        if (u.treatment < c) checks_in[u.block].insert(u.treatment);
                        else new_entries.insert(u.treatment);
                    }
                    std::multiset<int> all_checks, all_new;
                    for (int i = 0; i < c; ++i) all_checks.insert(i);
                    for (int i = c; i < c + n; ++i) all_new.insert(i);
                    CHECK(new_entries == all_new);
                    int smallest = 1 << 30, largest = 0;
                    for (int k = 1; k <= nb; ++k) {
                        CHECK(checks_in[k] == all_checks);
                        const auto& shape = d.shapes[static_cast<std::size_t>(k - 1)];
                        CHECK(shape.rows == 1);
                        CHECK(cells_in[k].size() == static_cast<std::size_t>(shape.cols));  // every cell used once
                        smallest = std::min(smallest, shape.cols);
                        largest = std::max(largest, shape.cols);
                        if (k > 1) CHECK(shape.cols <= d.shapes[static_cast<std::size_t>(k - 2)].cols);
                    }
                    CHECK(largest - smallest <= 1);
                }
}

TEST_CASE("Each check and each new entry falls at each place of each block as often as promised",
          "[design][augmented][stats]") {
    // c = 3 checks, n = 13 new entries, B = 3 blocks: 5, 4, 4 new entries, blocks of s_k = 8, 7, 7 plots.
    // Promised probabilities at cell p of block k: 1/s_k for each check (its shuffle within the block is
    // uniform); n_k/(n s_k) for each new entry (in block k with probability n_k/n, then anywhere in it).
    // And for each new entry, block k with probability n_k/n. 3000 seeds; family level 0.001.
    const int c = 3, n = 13, nb = 3;
    const std::vector<int> n_new = {5, 4, 4};
    std::vector<pw_test::Tally> tallies;
    std::vector<std::size_t> cell_base;
    for (int k = 0; k < nb; ++k) {
        const int size = c + n_new[static_cast<std::size_t>(k)];
        std::vector<double> p;
        for (int i = 0; i < c; ++i) p.push_back(1.0 / size);
        for (int i = 0; i < n; ++i) p.push_back(static_cast<double>(n_new[static_cast<std::size_t>(k)]) / (n * size));
        cell_base.push_back(tallies.size());
        for (int cell = 0; cell < size; ++cell)
            tallies.emplace_back("cell " + std::to_string(cell) + " of block " + std::to_string(k + 1), p);
    }
    const std::size_t entry_base = tallies.size();
    for (int e = c; e < c + n; ++e)
        tallies.emplace_back("blocks of new entry " + std::to_string(e), std::vector<double>{5.0 / 13, 4.0 / 13, 4.0 / 13});
    for (std::uint64_t seed = 1; seed <= 3000; ++seed) {
        pw::Rng rng(seed);
        const auto d = pw::augmented(c, n, nb, rng);
        REQUIRE(d.shapes.size() == 3);
        for (int k = 0; k < nb; ++k) REQUIRE(d.shapes[static_cast<std::size_t>(k)].cols == c + n_new[static_cast<std::size_t>(k)]);
        for (const auto& u : d.units) {
            tallies[cell_base[static_cast<std::size_t>(u.block - 1)] + static_cast<std::size_t>(u.cell_col)].observed[static_cast<std::size_t>(u.treatment)] += 1;
            if (u.treatment >= c) tallies[entry_base + static_cast<std::size_t>(u.treatment - c)].observed[static_cast<std::size_t>(u.block - 1)] += 1;
        }
    }
    const auto v = pw_test::fairness(tallies);
    CAPTURE(v.worst_ratio, v.worst_place);
    CHECK(v.worst_ratio < 1.0);
}

TEST_CASE("The same seed gives the same augmented design and another seed a different one", "[design][augmented]") {
    // Reproducibility of a stored seed (common practice: the seed is kept with the trial).
    pw::Rng r1(31), r2(31), r3(32);
    const auto a = treatments(pw::augmented(4, 60, 5, r1));
    CHECK(a == treatments(pw::augmented(4, 60, 5, r2)));
    CHECK(a != treatments(pw::augmented(4, 60, 5, r3)));
}

TEST_CASE("The augmented design for seed 20260614 matches the pin", "[design][augmented][pin]") {
    // A pin guards stored layouts against an accidental change of the recipe; it is not a validation.
    // Computed outside the project by tests/tools/design_pins.py (Python 3 integers, the recipe of
    // augmented.hpp): 3 checks, 5 new entries, 2 blocks, treatments by cell.
    pw::Rng rng(20260614);
    CHECK(blocks_by_cell(pw::augmented(3, 5, 2, rng)) == std::vector<std::vector<int>>{{1, 0, 6, 3, 2, 7}, {4, 2, 1, 0, 5}});
}

TEST_CASE("Augmented sizes that cannot make the design are refused, naming the argument",
          "[design][augmented][errors]") {
    // One check leaves (1-1)(B-1) = 0 error df and one block no replicate of the checks (Federer 1956);
    // blocks numbered to 99 and plots per block to 999 (plot-numbering convention, common practice).
    struct Case {
        int c, n, nb;
        const char* fragment;
    };
    const std::vector<Case> cases = {{1, 20, 4, "checks"},        {0, 20, 4, "checks"},   {3, 0, 4, "new_entries"},
                                     {3, 20, 1, "blocks"},        {3, 20, 100, "blocks"}, {4, 2000, 2, "1004 plots"}};
    for (const auto& c : cases) {
        CAPTURE(c.c, c.n, c.nb);
        pw::Rng rng(1);
        CHECK_THROWS_AS(pw::augmented(c.c, c.n, c.nb, rng), pw::DesignError);
        CHECK_THROWS_WITH(pw::augmented(c.c, c.n, c.nb, rng), Catch::StartsWith("augmented design") && Catch::Contains(c.fragment));
    }
}

TEST_CASE("Augmented notes flag sizes outside common practice", "[design][augmented]") {
    // Worked by hand. 4 checks, 100 entries, 5 blocks: 20 of 120 plots are checks (16.7%), error df 3 x 4 = 12:
    // nothing to say.
    CHECK(pw::augmented_notes(4, 100, 5).empty());
    // 3 checks, 40 entries, 4 blocks: 12 of 52 plots (23.1%) are checks, error df 2 x 3 = 6.
    const auto notes = pw::augmented_notes(3, 40, 4);
    REQUIRE(notes.size() == 2);
    CHECK_THAT(notes[0], Catch::Contains("12 of 52 plots (23.1%)"));
    CHECK_THAT(notes[1], Catch::Contains("= 6 degrees of freedom"));
    // 6 checks, 300 entries, 3 blocks: more than 4 checks per block; 18 of 318 plots (5.7%); error df 10.
    const auto many = pw::augmented_notes(6, 300, 3);
    REQUIRE(many.size() == 3);
    CHECK_THAT(many[0], Catch::Contains("6 checks"));
    CHECK_THAT(many[1], Catch::Contains("(5.7%)"));
}
