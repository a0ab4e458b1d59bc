// The split-plot and strip-plot generators (core/design/split_plot.hpp): the defining constraints over a
// range of sizes, fairness and independence of the randomization, reproducibility, refusals and notes.
//
// Sources: Gomez & Gomez, Statistical Procedures for Agricultural Research, 2nd ed. 1984 (from memory):
// 3.4 split-plot (main-plot levels randomized over the main plots of each block, subplot levels randomized
// separately within each main plot; main-plot error blocks x A with (r-1)(a-1) df); 3.5 strip-plot (A
// levels on vertical strips and B levels on horizontal strips of each block, each randomized separately per
// block). Usual sizes (2 to 4 main levels, at least 3 blocks): common practice. Chi-square critical values:
// Boost.Math (tests/unit/design_fairness.hpp).
#include <catch2/catch.hpp>

#include <cstdint>
#include <map>
#include <set>
#include <string>
#include <tuple>
#include <vector>

#include "core/design/split_plot.hpp"
#include "core/error.hpp"
#include "design_fairness.hpp"

namespace {

using Units = std::vector<const pw::DesignUnit*>;

std::map<int, Units> by_block(const pw::DesignAssignment& a) {
    std::map<int, Units> m;
    for (const auto& u : a.units) m[u.block].push_back(&u);
    return m;
}

std::vector<int> treatments(const pw::DesignAssignment& a) {
    std::vector<int> v;
    for (const auto& u : a.units) v.push_back(u.treatment);
    return v;
}

std::string place(const char* what, int block, int k) {
    return std::string(what) + " " + std::to_string(k) + " of block " + std::to_string(block);
}

}  // namespace

TEST_CASE("Split-plot: each block holds every main level on one main plot, and every main plot every subplot "
          "level once", "[design][split]") {
    // Gomez & Gomez 1984, 3.4. Main plot m of a block is the contiguous run of cells m*b .. m*b+b-1 in the
    // block's single row (split_plot.hpp). Sizes a, b in 2..6, blocks 2..4, 5 seeds each.
    for (int a = 2; a <= 6; ++a)
        for (int b = 2; b <= 6; ++b)
            for (int r = 2; r <= 4; ++r)
                for (std::uint64_t seed = 1; seed <= 5; ++seed) {
                    CAPTURE(a, b, r, seed);
                    pw::Rng rng(seed);
                    const auto d = pw::split_plot(a, b, r, rng);
                    REQUIRE(d.design_id == "split/1");
                    REQUIRE(d.columns == std::vector<std::string>{"rep", "main", "sub"});
                    REQUIRE(d.shapes.size() == static_cast<std::size_t>(r));
                    REQUIRE(d.units.size() == static_cast<std::size_t>(a * b * r));
                    const auto blocks = by_block(d);
                    REQUIRE(blocks.size() == static_cast<std::size_t>(r));
                    for (const auto& [block, units] : blocks) {
                        REQUIRE(block >= 1);
                        REQUIRE(block <= r);
                        const auto& shape = d.shapes[static_cast<std::size_t>(block - 1)];
                        REQUIRE((shape.rows == 1 && shape.cols == a * b));
                        std::map<int, std::set<int>> a_levels_of_main, b_levels_of_main, cells_of_main;
                        std::set<int> cells, all_treatments;
                        for (const auto* u : units) {
                            REQUIRE(u->rep == block);
                            REQUIRE(u->cell_row == 0);
                            REQUIRE((u->main >= 1 && u->main <= a && u->sub >= 1 && u->sub <= b));
                            REQUIRE((u->treatment >= 0 && u->treatment < a * b));
                            // The documented cell layout: cell_col = (main - 1) * b + (sub - 1).
                            REQUIRE(u->cell_col == (u->main - 1) * b + (u->sub - 1));
                            cells.insert(u->cell_col);
                            all_treatments.insert(u->treatment);
                            a_levels_of_main[u->main].insert(u->treatment / b);
                            b_levels_of_main[u->main].insert(u->treatment % b);
                            cells_of_main[u->main].insert(u->cell_col);
                        }
                        CHECK(cells.size() == static_cast<std::size_t>(a * b));
                        CHECK(all_treatments.size() == static_cast<std::size_t>(a * b));
                        std::set<int> a_levels;
                        for (int m = 1; m <= a; ++m) {
                            REQUIRE(a_levels_of_main[m].size() == 1);  // one main level per main plot
                            a_levels.insert(*a_levels_of_main[m].begin());
                            CHECK(b_levels_of_main[m].size() == static_cast<std::size_t>(b));  // subplots complete
                            // Contiguous: b consecutive cells.
                            CHECK(*cells_of_main[m].rbegin() - *cells_of_main[m].begin() == b - 1);
                            CHECK(cells_of_main[m].size() == static_cast<std::size_t>(b));
                        }
                        CHECK(a_levels.size() == static_cast<std::size_t>(a));  // each main level once per block
                    }
                }
}

TEST_CASE("Strip-plot: each column carries one A level, each row one B level, every pair once per block",
          "[design][strip]") {
    // Gomez & Gomez 1984, 3.5. Shape {b, a}: B strips are rows (along the gradient), A strips columns.
    for (int a = 2; a <= 6; ++a)
        for (int b = 2; b <= 6; ++b)
            for (int r = 2; r <= 4; ++r)
                for (std::uint64_t seed = 1; seed <= 5; ++seed) {
                    CAPTURE(a, b, r, seed);
                    pw::Rng rng(seed);
                    const auto d = pw::strip_plot(a, b, r, rng);
                    REQUIRE(d.design_id == "strip/1");
                    REQUIRE(d.columns == std::vector<std::string>{"rep", "main", "sub"});
                    REQUIRE(d.shapes.size() == static_cast<std::size_t>(r));
                    REQUIRE(d.units.size() == static_cast<std::size_t>(a * b * r));
                    const auto blocks = by_block(d);
                    REQUIRE(blocks.size() == static_cast<std::size_t>(r));
                    for (const auto& [block, units] : blocks) {
                        const auto& shape = d.shapes[static_cast<std::size_t>(block - 1)];
                        REQUIRE((shape.rows == b && shape.cols == a));
                        std::map<int, std::set<int>> a_of_col, b_of_row;
                        std::set<std::pair<int, int>> cells;
                        std::set<int> all_treatments;
                        for (const auto* u : units) {
                            REQUIRE(u->rep == block);
                            REQUIRE((u->cell_row >= 0 && u->cell_row < b && u->cell_col >= 0 && u->cell_col < a));
                            REQUIRE(u->main == u->cell_col + 1);
                            REQUIRE(u->sub == u->cell_row + 1);
                            cells.insert({u->cell_row, u->cell_col});
                            all_treatments.insert(u->treatment);
                            a_of_col[u->cell_col].insert(u->treatment / b);
                            b_of_row[u->cell_row].insert(u->treatment % b);
                        }
                        CHECK(cells.size() == static_cast<std::size_t>(a * b));
                        CHECK(all_treatments.size() == static_cast<std::size_t>(a * b));  // every A x B pair once
                        for (const auto& [c, levels] : a_of_col) CHECK(levels.size() == 1);
                        for (const auto& [row, levels] : b_of_row) CHECK(levels.size() == 1);
                    }
                }
}

TEST_CASE("Split-plot: each main level falls on each main plot, and each subplot level on each subplot, "
          "equally often and independently", "[design][split][stats]") {
    // Uniform shuffles promise probability 1/a for each main level at each main-plot position of each block,
    // 1/b for each subplot level at each subplot position, and, since each main plot's shuffle is separate,
    // probability 1/b^2 for each pair of subplot levels found at subplot 1 of main plots 1 and 2 (and 1/a^2
    // for the main levels at main plot 1 of blocks 1 and 2). a = 3, b = 4, 3 blocks, 2000 seeds.
    const int a = 3, b = 4, r = 3;
    std::vector<pw_test::Tally> tallies;
    auto id = [&](int block, int m, int s) { return ((block - 1) * a + (m - 1)) * b + (s - 1); };
    for (int block = 1; block <= r; ++block)
        for (int m = 1; m <= a; ++m)
            for (int s = 1; s <= b; ++s)
                tallies.emplace_back(place("subplot", block, s) + ", main plot " + std::to_string(m), pw_test::equal_probabilities(b));
    const std::size_t main_base = tallies.size();
    for (int block = 1; block <= r; ++block)
        for (int m = 1; m <= a; ++m) tallies.emplace_back(place("main plot", block, m), pw_test::equal_probabilities(a));
    const std::size_t pair_base = tallies.size();
    for (int block = 1; block <= r; ++block)
        tallies.emplace_back("subplot-1 levels of main plots 1 and 2 of block " + std::to_string(block),
                             pw_test::equal_probabilities(b * b));
    tallies.emplace_back("main level pair, main plot 1 of blocks 1 and 2", pw_test::equal_probabilities(a * a));
    for (std::uint64_t seed = 1; seed <= 2000; ++seed) {
        pw::Rng rng(seed);
        const auto d = pw::split_plot(a, b, r, rng);
        std::map<std::tuple<int, int, int>, int> at;
        for (const auto& u : d.units) at[{u.block, u.main, u.sub}] = u.treatment;
        for (int block = 1; block <= r; ++block) {
            for (int m = 1; m <= a; ++m) {
                for (int s = 1; s <= b; ++s)
                    tallies[static_cast<std::size_t>(id(block, m, s))].observed[static_cast<std::size_t>(at[{block, m, s}] % b)] += 1;
                tallies[main_base + static_cast<std::size_t>((block - 1) * a + m - 1)].observed[static_cast<std::size_t>(at[{block, m, 1}] / b)] += 1;
            }
            const int pair = (at[{block, 1, 1}] % b) * b + at[{block, 2, 1}] % b;
            tallies[pair_base + static_cast<std::size_t>(block - 1)].observed[static_cast<std::size_t>(pair)] += 1;
        }
        tallies.back().observed[static_cast<std::size_t>((at[{1, 1, 1}] / b) * a + at[{2, 1, 1}] / b)] += 1;
    }
    const auto v = pw_test::fairness(tallies);
    CAPTURE(v.worst_ratio, v.worst_place);
    CHECK(v.worst_ratio < 1.0);
}

TEST_CASE("Strip-plot: each A level falls on each column and each B level on each row equally often, "
          "independently", "[design][strip][stats]") {
    // Separate uniform shuffles per block promise probability 1/a per A level at each column, 1/b per B level
    // at each row, and 1/(ab) for each (A at column 1, B at row 1) pair. a = 4, b = 3, 3 blocks, 2000 seeds.
    const int a = 4, b = 3, r = 3;
    std::vector<pw_test::Tally> tallies;
    for (int block = 1; block <= r; ++block) {
        for (int c = 1; c <= a; ++c) tallies.emplace_back(place("column", block, c), pw_test::equal_probabilities(a));
        for (int row = 1; row <= b; ++row) tallies.emplace_back(place("row", block, row), pw_test::equal_probabilities(b));
        tallies.emplace_back("A at column 1 with B at row 1 of block " + std::to_string(block), pw_test::equal_probabilities(a * b));
    }
    const std::size_t per_block = static_cast<std::size_t>(a + b + 1);
    for (std::uint64_t seed = 1; seed <= 2000; ++seed) {
        pw::Rng rng(seed);
        for (const auto& u : pw::strip_plot(a, b, r, rng).units) {
            const std::size_t base = static_cast<std::size_t>(u.block - 1) * per_block;
            if (u.cell_row == 0) tallies[base + static_cast<std::size_t>(u.cell_col)].observed[static_cast<std::size_t>(u.treatment / b)] += 1;
            if (u.cell_col == 0) {
                tallies[base + static_cast<std::size_t>(a + u.cell_row)].observed[static_cast<std::size_t>(u.treatment % b)] += 1;
                if (u.cell_row == 0) tallies[base + static_cast<std::size_t>(a + b)].observed[static_cast<std::size_t>(u.treatment)] += 1;
            }
        }
    }
    const auto v = pw_test::fairness(tallies);
    CAPTURE(v.worst_ratio, v.worst_place);
    CHECK(v.worst_ratio < 1.0);
}

TEST_CASE("Split-plot and strip-plot: the same seed gives the same assignment and another seed a different "
          "one", "[design][split][strip]") {
    // Reproducibility of a stored seed (common practice: the seed is kept with the trial).
    pw::Rng r1(5), r2(5), r3(6);
    const auto s1 = treatments(pw::split_plot(3, 4, 4, r1));
    CHECK(s1 == treatments(pw::split_plot(3, 4, 4, r2)));
    CHECK(s1 != treatments(pw::split_plot(3, 4, 4, r3)));
    pw::Rng q1(5), q2(5), q3(6);
    const auto t1 = treatments(pw::strip_plot(3, 4, 4, q1));
    CHECK(t1 == treatments(pw::strip_plot(3, 4, 4, q2)));
    CHECK(t1 != treatments(pw::strip_plot(3, 4, 4, q3)));
}

TEST_CASE("Split-plot and strip-plot assignments for seed 20260614 match the pins", "[design][split][strip][pin]") {
    // Pins guard stored layouts against an accidental change of the recipe; they are not a validation.
    // Computed outside the project by tests/tools/design_pins.py (Python 3 integers, the recipe of
    // split_plot.hpp). Split-plot a=2, b=3, 2 blocks, treatments by cell; strip-plot a=3, b=2, 2 blocks,
    // treatments by row then column.
    pw::Rng rng(20260614);
    const auto split = pw::split_plot(2, 3, 2, rng);
    std::vector<std::vector<int>> got(2, std::vector<int>(6, -1));
    for (const auto& u : split.units) got[static_cast<std::size_t>(u.block - 1)][static_cast<std::size_t>(u.cell_col)] = u.treatment;
    CHECK(got == std::vector<std::vector<int>>{{2, 0, 1, 5, 4, 3}, {3, 4, 5, 2, 1, 0}});
    pw::Rng rng2(20260614);
    const auto strip = pw::strip_plot(3, 2, 2, rng2);
    std::vector<std::vector<int>> cells(2, std::vector<int>(6, -1));
    for (const auto& u : strip.units) cells[static_cast<std::size_t>(u.block - 1)][static_cast<std::size_t>(u.cell_row * 3 + u.cell_col)] = u.treatment;
    CHECK(cells == std::vector<std::vector<int>>{{5, 1, 3, 4, 0, 2}, {5, 3, 1, 4, 2, 0}});
}

TEST_CASE("Split-plot and strip-plot sizes that cannot make the design are refused, naming the argument",
          "[design][split][strip][errors]") {
    // Two levels of each factor at least (else it is not a two-factor design); two blocks at least (else the
    // blocks x A error has (r-1)(a-1) = 0 df, Gomez & Gomez 1984, 3.4); blocks numbered to 99 and plots per
    // block to 999 (the plot-numbering convention, common practice).
    struct Case {
        int a, b, r;
        const char* fragment;
    };
    const std::vector<Case> cases = {{1, 3, 3, "main_levels"}, {3, 1, 3, "sub_levels"}, {3, 3, 1, "blocks"},
                                     {3, 3, 100, "blocks"},    {40, 25, 3, "1000 plots"}};
    for (const auto& c : cases) {
        CAPTURE(c.a, c.b, c.r);
        pw::Rng rng(1);
        CHECK_THROWS_WITH(pw::split_plot(c.a, c.b, c.r, rng), Catch::StartsWith("split-plot") && Catch::Contains(c.fragment));
        const std::string strip_fragment = std::string(c.fragment) == "main_levels" ? "a_levels"
                                           : std::string(c.fragment) == "sub_levels" ? "b_levels"
                                                                                     : c.fragment;
        CHECK_THROWS_WITH(pw::strip_plot(c.a, c.b, c.r, rng), Catch::StartsWith("strip-plot") && Catch::Contains(strip_fragment));
        CHECK_THROWS_AS(pw::strip_plot(c.a, c.b, c.r, rng), pw::DesignError);
    }
}

TEST_CASE("Split-plot notes warn of fewer than 3 blocks or more than 4 main levels", "[design][split]") {
    // Common practice (2 to 4 main levels, at least 3 blocks). With 2 blocks and 3 main levels the main-plot
    // error has (2-1)(3-1) = 2 df (Gomez & Gomez 1984, 3.4).
    CHECK(pw::split_plot_notes(3, 4).empty());
    REQUIRE(pw::split_plot_notes(3, 2).size() == 1);
    CHECK_THAT(pw::split_plot_notes(3, 2).at(0), Catch::Contains("2 degrees of freedom"));
    REQUIRE(pw::split_plot_notes(5, 3).size() == 1);
    CHECK_THAT(pw::split_plot_notes(5, 3).at(0), Catch::Contains("2 to 4"));
}
