// Field geometry (core/design/geometry.hpp): gradients turned into the field frame, block 1 at the low end,
// blocks as strips, strips that wrap, refusals when the trial does not fit, guard plots, harvest areas,
// plot numbers, and the Latin square's columns along the second gradient.
//
// Sources: Gomez & Gomez, Statistical Procedures for Agricultural Research, 2nd ed. 1984, 2.2.1 (from
// memory: blocks are strips across the gradient, plots' long axis along it); compass bearings clockwise
// from north and a field's y axis 90° anticlockwise of its x axis (common practice, as on a map); guard
// plots ringing a trial and block*100 numbering (common practice). Every distance is worked by hand in the
// comment beside its check. Assignments are written out by hand where the placer alone is tested, so no
// generator's output is compared with itself.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <map>
#include <set>
#include <string>
#include <vector>

#include "core/design/assignment.hpp"
#include "core/design/geometry.hpp"
#include "core/design/layout.hpp"
#include "core/error.hpp"

namespace {

constexpr double kEps = 1e-9;

pw::TrialSpec rcbd_spec(int treatments, int blocks, double bearing_deg, double x_bearing_deg = 90) {
    pw::TrialSpec s;
    s.code = "GEO1";
    s.design = "rcbd";
    s.blocks = blocks;
    s.field.plot_length_m = 6.0;
    s.field.plot_width_m = 3.0;
    s.field.alley_m = 1.5;
    s.field.x_bearing_deg = x_bearing_deg;
    s.gradient.bearing_deg = bearing_deg;
    for (int i = 0; i < treatments; ++i) s.treatments.push_back({"T" + std::to_string(i + 1), "", false});
    return s;
}

struct Box {
    double x0, x1, y0, y1;
};
Box box(double x, double y, double wx, double wy) { return {x - wx / 2, x + wx / 2, y - wy / 2, y + wy / 2}; }
Box box(const pw::PlotPlacement& p) { return box(p.x_m, p.y_m, p.width_x_m, p.width_y_m); }
Box box(const pw::GuardPlot& p) { return box(p.x_m, p.y_m, p.width_x_m, p.width_y_m); }
bool overlap(const Box& a, const Box& b) {
    // Plane geometry: two axis-parallel rectangles overlap when both their x and y intervals overlap.
    return a.x0 < b.x1 - kEps && b.x0 < a.x1 - kEps && a.y0 < b.y1 - kEps && b.y0 < a.y1 - kEps;
}

Box block_box(const pw::Layout& l, int block) {
    Box b{1e300, -1e300, 1e300, -1e300};
    for (const auto& p : l.plots)
        if (p.block == block) {
            const Box q = box(p);
            b = {std::min(b.x0, q.x0), std::max(b.x1, q.x1), std::min(b.y0, q.y0), std::max(b.y1, q.y1)};
        }
    return b;
}

// Everything inside the trial area, nothing overlapping, distinct cells and ids of at most 6 digits.
void check_sound(const pw::Layout& l) {
    std::vector<Box> all;
    for (const auto& p : l.plots) all.push_back(box(p));
    for (const auto& g : l.guards) all.push_back(box(g));
    for (std::size_t i = 0; i < all.size(); ++i) {
        CHECK(all[i].x0 >= -kEps);
        CHECK(all[i].y0 >= -kEps);
        CHECK(all[i].x1 <= l.field_x_m + kEps);
        CHECK(all[i].y1 <= l.field_y_m + kEps);
        for (std::size_t j = i + 1; j < all.size(); ++j) {
            CAPTURE(i, j);
            CHECK_FALSE(overlap(all[i], all[j]));
        }
    }
    std::set<std::pair<int, int>> cells;
    std::set<int> ids;
    for (std::size_t i = 0; i < l.plots.size(); ++i) {
        const auto& p = l.plots[i];
        CHECK(p.walk_order == static_cast<int>(i) + 1);
        CHECK(p.row >= 1);
        CHECK(p.col >= 1);
        CHECK(p.id > 0);
        CHECK(p.id <= 999999);  // the tag format carries the plot number in at most 6 digits (docs/tags.md)
        cells.insert({p.row, p.col});
        ids.insert(p.id);
    }
    CHECK(cells.size() == l.plots.size());
    CHECK(ids.size() == l.plots.size());
}

std::string refusal(const pw::TrialSpec& s) {
    try {
        (void)pw::design_trial(s, 1);
    } catch (const pw::DesignError& e) {
        return e.what();
    }
    return "laid out";
}

}  // namespace

TEST_CASE("A gradient's bearing is turned into the field frame and snapped to the nearest axis", "[design][geometry]") {
    // By hand: relative bearing = gradient - x_bearing; 0 -> +x, 90 -> -y, 180 -> -x, 270 -> +y (y lies 90°
    // anticlockwise of x). Off-axis angle = distance to the nearest of those; a 45° tie goes to x.
    auto [bearing, x_bearing, along_x, increasing, axis_bearing, off] =
        GENERATE(table<double, double, bool, bool, double, double>({
            {90, 90, true, true, 90, 0},      // east on an east-north field: +x
            {0, 90, false, true, 0, 0},       // north: +y
            {180, 90, false, false, 180, 0},  // south: -y
            {270, 90, true, false, 270, 0},   // west: -x
            {45, 90, true, true, 90, 45},     // the tie goes to x
            {30, 90, false, true, 0, 30},
            {30, 30, true, true, 30, 0},      // x axis on bearing 30: the gradient runs along +x
            {210, 30, true, false, 210, 0},
            {300, 30, false, true, 300, 0},   // y axis bearing = 30 - 90 = 300
            {120, 30, false, false, 120, 0},
            {0, 30, true, true, 30, 30},      // 30° from +x (bearing 30), 60° from +y (bearing 300)
        }));
    CAPTURE(bearing, x_bearing);
    const auto d = pw::field_direction(bearing, x_bearing);
    CHECK(d.along_x == along_x);
    CHECK(d.increasing == increasing);
    CHECK(d.axis_bearing_deg == Approx(axis_bearing).margin(kEps));
    CHECK(d.off_axis_deg == Approx(off).margin(kEps));
}

TEST_CASE("Block 1 lies at the low end of the gradient for every bearing, on east and on turned fields",
          "[design][geometry]") {
    // 4 single-row blocks of 6 m plots with 1.5 m alleys: block b spans [7.5 (b-1), 7.5 (b-1) + 6] from the low
    // end, and the trial is 4 x 6 + 3 x 1.5 = 28.5 m along the gradient and 6 x 3 = 18 m across (by hand).
    auto [bearing, x_bearing, along_x, increasing] = GENERATE(table<double, double, bool, bool>({
        {0, 90, false, true}, {90, 90, true, true}, {180, 90, false, false}, {270, 90, true, false},
        {30, 30, true, true}, {210, 30, true, false}, {300, 30, false, true}, {120, 30, false, false},
    }));
    CAPTURE(bearing, x_bearing);
    const auto l = pw::design_trial(rcbd_spec(6, 4, bearing, x_bearing), 5);
    for (int b = 1; b <= 4; ++b) {
        const Box k = block_box(l, b);
        const double lo = along_x ? k.x0 : k.y0, hi = along_x ? k.x1 : k.y1;
        const double from_low = 7.5 * (b - 1);
        if (increasing) {
            CHECK(lo == Approx(from_low).margin(kEps));
            CHECK(hi == Approx(from_low + 6).margin(kEps));
        } else {
            CHECK(hi == Approx(28.5 - from_low).margin(kEps));
            CHECK(lo == Approx(28.5 - from_low - 6).margin(kEps));
        }
        // A strip across the gradient: 18 m across, one plot length (6 m) along it.
        CHECK((along_x ? k.y1 - k.y0 : k.x1 - k.x0) == Approx(18.0));
        CHECK((along_x ? k.x1 - k.x0 : k.y1 - k.y0) == Approx(6.0));
    }
    CHECK((along_x ? l.field_x_m : l.field_y_m) == Approx(28.5));
    CHECK((along_x ? l.field_y_m : l.field_x_m) == Approx(18.0));
    check_sound(l);
}

TEST_CASE("Pairs fill strips across the field's width and wrap into the next strip", "[design][geometry]") {
    // 8 pairs of 3 m x 6 m plots, no gap, 1 m alleys, gradient north on an east-north field, 20 m across
    // (length_m, along x): a pair is 6 m wide, so 6 + 1 + 6 + 1 + 6 = 20 m holds 3 pairs per strip; 8 pairs
    // need strips of 3, 3 and 2, i.e. 3 x 6 + 2 x 1 = 20 m along the gradient (by hand).
    pw::TrialSpec s = rcbd_spec(2, 8, 0);
    s.design = "paired";
    s.field.alley_m = 1.0;
    s.field.length_m = 20.0;
    const auto l = pw::design_trial(s, 3);
    REQUIRE(l.plots.size() == 16);
    CHECK(l.field_y_m == Approx(20.0));
    CHECK(l.field_x_m == Approx(20.0));
    const std::map<int, double> strip_low = {{1, 0}, {2, 0}, {3, 0}, {4, 7}, {5, 7}, {6, 7}, {7, 14}, {8, 14}};
    for (int b = 1; b <= 8; ++b) {
        const Box k = block_box(l, b);
        CAPTURE(b);
        CHECK(k.y0 == Approx(strip_low.at(b)).margin(kEps));
        CHECK(k.x1 - k.x0 == Approx(6.0));  // the two plots side by side across the gradient
    }
    // Strip 1 is walked eastward: pairs 1, 2, 3 from the stake side; strip 2 westward, so pair 4 sits at the
    // far (east) end: x from 14 to 20 m; strip 3 eastward again.
    CHECK(block_box(l, 1).x0 == Approx(0).margin(kEps));
    CHECK(block_box(l, 3).x0 == Approx(14));
    CHECK(block_box(l, 4).x0 == Approx(14));
    CHECK(block_box(l, 6).x0 == Approx(0).margin(kEps));
    CHECK(block_box(l, 7).x0 == Approx(0).margin(kEps));
    // Consecutive plots in walking order are neighbours (3 m apart beside each other, 3 + 1 = 4 m across an
    // alley between pairs) or face each other over the 1 m alley between strips (7 m apart).
    for (std::size_t i = 1; i < l.plots.size(); ++i) {
        const double dx = std::fabs(l.plots[i].x_m - l.plots[i - 1].x_m);
        const double dy = std::fabs(l.plots[i].y_m - l.plots[i - 1].y_m);
        CAPTURE(i, dx, dy);
        const bool beside = dy < kEps && (std::fabs(dx - 3) < kEps || std::fabs(dx - 4) < kEps);
        const bool facing = dx < kEps && std::fabs(dy - 7) < kEps;
        CHECK((beside || facing));
    }
    check_sound(l);
}

TEST_CASE("The incomplete blocks of one replicate share a strip; the next replicate starts a new one",
          "[design][geometry]") {
    // A hand-written resolvable assignment: 2 replicates x 3 incomplete blocks of 2 entries (6 entries), each
    // block one row of 2 cells. Without the field's width, a replicate is one strip: 3 blocks of 2 x 3 m with
    // 1.5 m alleys = 3 x 6 + 2 x 1.5 = 21 m across; 2 strips = 2 x 6 + 1.5 = 13.5 m along (by hand).
    pw::TrialSpec s = rcbd_spec(6, 0, 0);
    s.design = "alpha";
    pw::DesignAssignment a;
    a.design_id = "hand/1";
    a.columns = {"rep", "incomplete_block"};
    const int entries[2][3][2] = {{{0, 1}, {2, 3}, {4, 5}}, {{0, 2}, {1, 4}, {3, 5}}};
    for (int r = 0; r < 2; ++r)
        for (int ib = 0; ib < 3; ++ib) {
            a.shapes.push_back({1, 2});
            for (int c = 0; c < 2; ++c) {
                pw::DesignUnit u;
                u.block = r * 3 + ib + 1, u.rep = r + 1, u.incomplete_block = ib + 1;
                u.treatment = entries[r][ib][c], u.cell_col = c;
                a.units.push_back(u);
            }
        }
    const auto l = pw::place_on_field(s, a, 9);
    CHECK(l.field_x_m == Approx(21.0));
    CHECK(l.field_y_m == Approx(13.5));
    CHECK(l.algorithm == "mt19937_64+lemire+fisher-yates/1;design=hand/1");
    CHECK(l.columns == std::vector<std::string>{"rep", "incomplete_block"});
    for (const auto& p : l.plots) {
        CHECK(p.y_m == Approx(p.rep == 1 ? 3.0 : 10.5));  // strip centres: 6/2 and 7.5 + 6/2
        // Numbered by replicate: rep*100 + the plot's place in the replicate's walk (common practice).
        CHECK(p.id / 100 == p.rep);
    }
    // Replicate 2's strip is walked westward (serpentine), so its block 1 (number 4) lies at the far side.
    CHECK(block_box(l, 4).x0 == Approx(15.0));
    CHECK(l.plots[6].id == 201);
    CHECK(l.plots[6].block == 4);
    check_sound(l);
}

TEST_CASE("A trial longer than the field is refused with the shortfall in metres", "[design][geometry][errors]") {
    // 6 treatments in rows of 3: 2 rows per block, 4 blocks = 8 rows of 6 m and 7 alleys of 1.5 m
    // = 48 + 10.5 = 58.5 m along the gradient (north, so along y, which the spec's width_m measures);
    // the field is 50 m: 8.5 m short (by hand).
    pw::TrialSpec s = rcbd_spec(6, 4, 0);
    s.field.plots_per_row = 3;
    s.field.width_m = 50.0;
    CHECK(refusal(s) == "field.width_m: the trial needs 58.5 m along the gradient but the field is 50.0 m: 8.5 m short");
    s.field.width_m = 58.5;  // exactly enough
    CHECK(pw::design_trial(s, 1).plots.size() == 24);

    // Across: 3 plots of 3 m = 9 m, field 8 m along x (length_m): 1 m short.
    s.field.length_m = 8.0;
    CHECK(refusal(s) == "field.length_m: the trial needs 9.0 m across the gradient but the field is 8.0 m: 1.0 m short");

    // With guard plots around, the trial needs one plot length and an alley more at each end:
    // 58.5 + 2 x (6 + 1.5) = 73.5 m; a 70 m field is 3.5 m short.
    s.field.length_m.reset();
    s.field.width_m = 70.0;
    s.field.border = pw::BorderKind::Around;
    CHECK(refusal(s) ==
          "field.width_m: the trial needs 73.5 m along the gradient (guard plots included) but the field is 70.0 m: 3.5 m short");
}

TEST_CASE("When the field's width is given an RCBD block wraps into as many plots per row as fit", "[design][geometry]") {
    // 6 plots of 3 m in 10 m across: floor((10 + 0) / 3) = 3 per row, so each block is 2 rows (by hand).
    pw::TrialSpec s = rcbd_spec(6, 2, 0);
    s.field.length_m = 10.0;
    const auto l = pw::design_trial(s, 4);
    CHECK(l.field_x_m == Approx(9.0));
    CHECK(l.field_y_m == Approx(4 * 6 + 3 * 1.5));
    check_sound(l);
    CHECK(pw::plots_fitting(10.0, 3.0, 0.0) == 3);
    CHECK(pw::plots_fitting(10.0, 3.0, 0.5) == 3);  // 3 x 3 + 2 x 0.5 = 10
    CHECK(pw::plots_fitting(9.9, 3.0, 0.5) == 2);
    CHECK(pw::plots_fitting(2.0, 3.0, 0.5) == 0);
}

TEST_CASE("Guard plots ring the trial or cross its gradient ends, outside every plot", "[design][geometry]") {
    // 6 treatments, 4 single-row blocks, 6 m x 3 m plots, 1.5 m alleys, no gap, gradient north (by hand):
    //  around: trial 18 + 2 x 3 = 24 m across, 28.5 + 2 x (6 + 1.5) = 43.5 m along; end rows of 24 / 3 = 8
    //          guard plots each, plus one guard plot at each end of the 4 plot rows: 16 + 8 = 24 guard plots;
    //  gradient_edges: 18 m across, 43.5 m along; 2 rows of 18 / 3 = 6 guard plots = 12.
    SECTION("around") {
        pw::TrialSpec s = rcbd_spec(6, 4, 0);
        s.field.border = pw::BorderKind::Around;
        const auto l = pw::design_trial(s, 2);
        CHECK(l.field_x_m == Approx(24.0));
        CHECK(l.field_y_m == Approx(43.5));
        CHECK(l.guards.size() == 24);
        // The first plot now starts one guard plot in from the stake side: x from 3 m, y from 7.5 m.
        const Box first = box(l.plots.front());
        CHECK(first.x0 == Approx(3.0));
        CHECK(first.y0 == Approx(7.5));
        for (const auto& g : l.guards) {
            CHECK(g.width_x_m == Approx(3.0));
            CHECK(g.width_y_m == Approx(6.0));
        }
        check_sound(l);
    }
    SECTION("gradient edges") {
        pw::TrialSpec s = rcbd_spec(6, 4, 90);
        s.field.border = pw::BorderKind::GradientEdges;
        const auto l = pw::design_trial(s, 2);
        CHECK(l.field_x_m == Approx(43.5));
        CHECK(l.field_y_m == Approx(18.0));
        REQUIRE(l.guards.size() == 12);
        // Gradient east: the guard rows stand at the west (x 0..6) and east (x 37.5..43.5) ends.
        for (const auto& g : l.guards) {
            const Box k = box(g);
            CHECK(((std::fabs(k.x0) < kEps && std::fabs(k.x1 - 6) < kEps) ||
                   (std::fabs(k.x0 - 37.5) < kEps && std::fabs(k.x1 - 43.5) < kEps)));
        }
        check_sound(l);
    }
    SECTION("a guard row ends flush with the trial") {
        // 5 plots of 3 m with 0.5 m gaps: 5 x 3 + 4 x 0.5 = 17 m across; guard plots start at 0, 3.5, 7, 10.5
        // and 14 m, the last one 17 - 14 = 3 m wide: 5 per end row, 10 in all.
        pw::TrialSpec s = rcbd_spec(5, 2, 0);
        s.field.plot_gap_m = 0.5;
        s.field.border = pw::BorderKind::GradientEdges;
        const auto l = pw::design_trial(s, 2);
        CHECK(l.guards.size() == 10);
        CHECK(l.field_x_m == Approx(17.0));
        check_sound(l);
    }
}

TEST_CASE("The harvest area is centred in its plot and never larger", "[design][geometry]") {
    // DOMAIN: the net plot is the gross plot less border rows and trimmed ends, centred (common practice).
    // Gradient east: plot length (6 m) along x, so a 4 m x 1.5 m harvest area is 4 m along x, 1.5 m along y.
    pw::TrialSpec s = rcbd_spec(4, 3, 90);
    s.field.harvest_length_m = 4.0;
    s.field.harvest_width_m = 1.5;
    const auto l = pw::design_trial(s, 8);
    for (const auto& p : l.plots) {
        CHECK(p.harvest_x_m == 4.0);
        CHECK(p.harvest_y_m == 1.5);
        CHECK(p.harvest_x_m <= p.width_x_m);
        CHECK(p.harvest_y_m <= p.width_y_m);
    }
    s.field.harvest_length_m = 6.5;
    CHECK_THAT(refusal(s), Catch::StartsWith("field.harvest_length_m"));
    s.field.harvest_length_m.reset();
    s.field.harvest_width_m.reset();
    for (const auto& p : pw::design_trial(s, 8).plots) CHECK((p.harvest_x_m == 0 && p.harvest_y_m == 0));  // whole plot
}

TEST_CASE("A Latin square's columns run along the second gradient from its low end", "[design][geometry][latin]") {
    // A hand-written 3 x 3 square (cyclic, L[i][j] = (i + j) mod 3) with square_row i+1, square_col j+1 on
    // cell (i, j). First gradient north: rows along y. Second gradient east (90): column 1 at the west (x low)
    // end; second gradient west (270): column 1 at the east end (by hand: 3 plots of 3 m = 9 m across).
    pw::TrialSpec s = rcbd_spec(3, 0, 0);
    s.design = "latin";
    pw::DesignAssignment a;
    a.design_id = "hand-latin/1";
    a.shapes = {{3, 3}};
    for (int i = 0; i < 3; ++i)
        for (int j = 0; j < 3; ++j) {
            pw::DesignUnit u;
            u.block = 1, u.rep = 1, u.square_row = i + 1, u.square_col = j + 1;
            u.treatment = (i + j) % 3, u.cell_row = i, u.cell_col = j;
            a.units.push_back(u);
        }
    for (double second : {90.0, 270.0, 100.0}) {
        CAPTURE(second);
        s.second_gradient = pw::GradientSpec{second, "shade"};
        const auto l = pw::place_on_field(s, a, 1);
        for (const auto& p : l.plots) {
            const double col_low_x = second == 270.0 ? 9.0 - 1.5 - 3.0 * (p.square_col - 1) : 1.5 + 3.0 * (p.square_col - 1);
            CHECK(p.x_m == Approx(col_low_x));
            CHECK(p.y_m == Approx(3.0 + 7.5 * (p.square_row - 1)));  // rows along the first gradient
        }
        check_sound(l);
        CHECK(l.notes.empty());  // 100° is 10° off east: not more than 10°, no note
    }
}

TEST_CASE("Plot numbers pass to block*1000 past 99 plots and stay unique", "[design][geometry]") {
    // Common practice: block*100 + position, *1000 when a block has more than 99 plots.
    const auto l = pw::design_trial(rcbd_spec(120, 2, 0), 9);
    CHECK(l.plots.front().id == 1001);
    CHECK(l.plots.back().id == 2120);
    check_sound(l);
}
