// Field geometry (geometry.hpp): blocks on the ground, guard plots, harvest areas, numbering, walking order.
// The rules are written out, with a worked example, in docs/design.md; this comment is their summary.
//
// Working frame: u along the gradient from its low end, v across it from the stake side.
//  - Strips. Blocks are laid in strips across the gradient, strip 1 at the low end. A block starts a new
//    strip unless it may share the previous block's strip: blocks of the same replicate (rep > 0, the
//    incomplete blocks of an alpha replicate) share one; blocks outside any replicate (rep = 0: pairs,
//    augmented blocks) share one when the field's width across the gradient is given; a block that does not
//    fit beside the others in the room across the gradient starts the next strip (it wraps). A strip is as
//    deep as its deepest block; blocks sit at its low edge, alley_m apart across the gradient.
//  - Plot rows. Every row of plots along the gradient (global index g = 0 at the low end) is plot_length_m
//    deep, consecutive rows alley_m apart: row g starts at u = g (L + A). Cells of a block row are
//    plot_width_m wide, plot_gap_m apart: cell c of a block starting at v0 starts at v0 + c (W + G).
//  - Walk. Row g of the trial is walked away from the stake side when g is even, towards it when odd
//    (serpentine). In a strip whose first row g0 is walked outward the blocks are taken, and numbered, from
//    the stake side; otherwise from the far side, so the walk through a strip of one-row blocks is
//    continuous. Each block is walked completely (its rows in order, serpentine) before the next.
//  - Guard plots (border = around): a ring one plot deep: a row of guard plots across the whole trial at each
//    end of the gradient (alley_m from the plots) and one guard plot at each end of every plot row
//    (plot_gap_m from the plots). border = gradient_edges: only the two rows at the ends of the gradient.
//    The last guard plot of a guard row is cut to end flush with the trial's edge.
//  - Mapping: x or y = u (gradient increasing towards +x or +y) or extent - u; the other = v.
#include "core/design/geometry.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <numbers>
#include <set>

#include <fmt/format.h>

#include "core/error.hpp"
#include "core/random/engine.hpp"

namespace pw {

namespace {

constexpr double kOffAxisNoteDeg = 10.0;
constexpr double kFitEps = 1e-9;  // metres: lengths equal to within this fit

double normalize(double deg) { return std::fmod(std::fmod(deg, 360.0) + 360.0, 360.0); }

double angle_between(double a_deg, double b_deg) {
    return std::fabs(std::fmod(a_deg - b_deg + 540.0, 360.0) - 180.0);
}

// A compass direction by name when it is one of the four cardinal points, else by its bearing.
std::string compass_name(double bearing) {
    static const char* names[] = {"north", "east", "south", "west"};
    for (int i = 0; i < 4; ++i)
        if (angle_between(bearing, 90.0 * i) < 1e-9) return names[i];
    return fmt::format("bearing {}°", bearing);
}

// "58.5", "50.0", "8.25": metres with one or two decimals.
std::string metres(double v) {
    std::string s = fmt::format("{:.2f}", v);
    if (s.size() > 1 && s.back() == '0') s.pop_back();
    return s;
}

void check_lengths(const TrialSpec& spec) {
    const FieldSpec& f = spec.field;
    auto positive = [](double v, const char* key) {
        if (!std::isfinite(v) || v <= 0)
            throw DesignError(fmt::format("field.{}: expected a length in metres greater than 0, got {}", key, v));
    };
    auto non_negative = [](double v, const char* key) {
        if (!std::isfinite(v) || v < 0)
            throw DesignError(fmt::format("field.{}: expected a length in metres of 0 or more, got {}", key, v));
    };
    positive(f.plot_length_m, "plot_length_m");
    positive(f.plot_width_m, "plot_width_m");
    non_negative(f.alley_m, "alley_m");
    non_negative(f.plot_gap_m, "plot_gap_m");
    if (f.plots_per_row < 0)
        throw DesignError(fmt::format("field.plots_per_row: expected 0 (whole block in one row) or more, got {}",
                                      f.plots_per_row));
    if (f.length_m) positive(*f.length_m, "length_m");
    if (f.width_m) positive(*f.width_m, "width_m");
    if (f.harvest_length_m) {
        positive(*f.harvest_length_m, "harvest_length_m");
        if (*f.harvest_length_m > f.plot_length_m + kFitEps)
            throw DesignError(fmt::format("field.harvest_length_m: the harvest area ({} m) is longer than the plot ({} m)",
                                          *f.harvest_length_m, f.plot_length_m));
    }
    if (f.harvest_width_m) {
        positive(*f.harvest_width_m, "harvest_width_m");
        if (*f.harvest_width_m > f.plot_width_m + kFitEps)
            throw DesignError(fmt::format("field.harvest_width_m: the harvest area ({} m) is wider than the plot ({} m)",
                                          *f.harvest_width_m, f.plot_width_m));
    }
    if (!std::isfinite(spec.gradient.bearing_deg))
        throw DesignError("gradient.bearing_deg: expected a finite compass bearing in degrees");
    if (!std::isfinite(f.x_bearing_deg))
        throw DesignError("field.x_bearing_deg: expected a finite compass bearing in degrees");
}

struct BlockInfo {
    int number = 0;
    BlockShape shape;
    int rep = 0;
    std::vector<const DesignUnit*> units;
    double width = 0, depth = 0;  // metres across and along the gradient
    int strip = 0;
    double v0 = 0;                // start across, relative to the plots' stake-side edge
    int cell0 = 0;                // cells across before this block in its strip (stake side)
};

void check_assignment(const TrialSpec& spec, const DesignAssignment& a, std::vector<BlockInfo>& blocks) {
    const auto where = [&](const std::string& what) {
        return DesignError(fmt::format("design {}: {} (the generator broke core/design/assignment.hpp)", a.design_id, what));
    };
    if (a.shapes.empty()) throw where("no blocks");
    if (a.units.empty()) throw where("no units");
    blocks.resize(a.shapes.size());
    for (std::size_t b = 0; b < a.shapes.size(); ++b) {
        blocks[b].number = static_cast<int>(b) + 1;
        blocks[b].shape = a.shapes[b];
        if (a.shapes[b].rows < 1 || a.shapes[b].cols < 1) throw where(fmt::format("block {} has an empty shape", b + 1));
    }
    std::set<std::tuple<int, int, int>> cells;
    for (const DesignUnit& u : a.units) {
        if (u.block < 1 || u.block > static_cast<int>(blocks.size()))
            throw where(fmt::format("a unit names block {} of {}", u.block, blocks.size()));
        BlockInfo& b = blocks[static_cast<std::size_t>(u.block - 1)];
        if (u.cell_row < 0 || u.cell_row >= b.shape.rows || u.cell_col < 0 || u.cell_col >= b.shape.cols)
            throw where(fmt::format("cell ({}, {}) lies outside block {}'s {} x {} shape", u.cell_row, u.cell_col, u.block,
                                    b.shape.rows, b.shape.cols));
        if (!cells.insert({u.block, u.cell_row, u.cell_col}).second)
            throw where(fmt::format("cell ({}, {}) of block {} is used twice", u.cell_row, u.cell_col, u.block));
        if (u.treatment < 0 || u.treatment >= static_cast<int>(spec.treatments.size()))
            throw where(fmt::format("treatment index {} but the spec has {} treatments", u.treatment, spec.treatments.size()));
        if (b.units.empty()) b.rep = u.rep;
        b.units.push_back(&u);
    }
    for (const BlockInfo& b : blocks)
        if (b.units.empty()) throw where(fmt::format("block {} holds no unit", b.number));
}

// The spec's field size along the field direction of the gradient (first) and across it (second), with
// the keys that give them.
struct FieldRoom {
    std::optional<double> along, across;
    const char* along_key;
    const char* across_key;
};

FieldRoom field_room(const TrialSpec& spec, const FieldDirection& g) {
    const FieldSpec& f = spec.field;
    if (g.along_x) return {f.length_m, f.width_m, "length_m", "width_m"};
    return {f.width_m, f.length_m, "width_m", "length_m"};
}

void refuse_if_short(std::optional<double> room, double need, const char* key, const char* which, bool guards) {
    if (!room || need <= *room + kFitEps) return;
    throw DesignError(fmt::format("field.{}: the trial needs {} m {} the gradient{} but the field is {} m: {} m short", key,
                                  metres(need), which, guards ? " (guard plots included)" : "", metres(*room),
                                  metres(need - *room)));
}

}  // namespace

FieldDirection field_direction(double bearing_deg, double x_bearing_deg) {
    // Compass bearings run clockwise; y lies 90° anticlockwise from x. Relative to the x axis, a bearing
    // difference of 0 points along +x, 90 along -y, 180 along -x, 270 along +y.
    const double rel = normalize(bearing_deg - x_bearing_deg);
    const double to_x = std::min(angle_between(rel, 0), angle_between(rel, 180));
    const double to_y = std::min(angle_between(rel, 90), angle_between(rel, 270));
    FieldDirection d;
    d.along_x = to_x <= to_y;
    if (d.along_x) {
        d.increasing = angle_between(rel, 0) <= angle_between(rel, 180);
        d.off_axis_deg = to_x;
        d.axis_bearing_deg = normalize(x_bearing_deg + (d.increasing ? 0 : 180));
    } else {
        d.increasing = angle_between(rel, 270) <= angle_between(rel, 90);
        d.off_axis_deg = to_y;
        d.axis_bearing_deg = normalize(x_bearing_deg + (d.increasing ? 270 : 90));
    }
    return d;
}

std::optional<double> room_across_gradient(const TrialSpec& spec) {
    const FieldDirection g = field_direction(spec.gradient.bearing_deg, spec.field.x_bearing_deg);
    const std::optional<double> across = field_room(spec, g).across;
    if (!across) return std::nullopt;
    const double guards = spec.field.border == BorderKind::Around ? 2 * (spec.field.plot_width_m + spec.field.plot_gap_m) : 0;
    return std::max(0.0, *across - guards);
}

int plots_fitting(double room_m, double plot_width_m, double gap_m) {
    // n plots need n W + (n - 1) G <= room, so n = floor((room + G) / (W + G)).
    if (room_m + kFitEps < plot_width_m) return 0;
    return static_cast<int>(std::floor((room_m + gap_m + kFitEps) / (plot_width_m + gap_m)));
}

Layout place_on_field(const TrialSpec& spec, const DesignAssignment& a, std::uint64_t seed) {
    check_lengths(spec);
    std::vector<BlockInfo> blocks;
    check_assignment(spec, a, blocks);

    const FieldSpec& f = spec.field;
    const double L = f.plot_length_m, W = f.plot_width_m, A = f.alley_m, G = f.plot_gap_m;
    const FieldDirection g = field_direction(spec.gradient.bearing_deg, f.x_bearing_deg);
    const FieldRoom room = field_room(spec, g);
    const bool around = f.border == BorderKind::Around;
    const bool end_rows = f.border != BorderKind::None;
    const bool guarded = f.border != BorderKind::None;
    const double side_guard = around ? W + G : 0;  // across: a guard plot and its gap at each side
    // Room across the gradient for blocks (infinite when the field's size that way is not given).
    const bool width_given = room.across.has_value();
    const double room_across =
        width_given ? std::max(0.0, *room.across - 2 * side_guard) : std::numeric_limits<double>::infinity();

    // Latin square: its columns follow the second gradient, which runs across the first; col 1 at its low end.
    bool mirror_cols = false;
    std::optional<double> second_off_axis;
    if (spec.design == "latin" && spec.second_gradient) {
        const double rel = (spec.second_gradient->bearing_deg - f.x_bearing_deg) * std::numbers::pi / 180.0;
        const double dx = std::cos(rel), dy = -std::sin(rel);  // unit vector in the field frame
        const double along_across = g.along_x ? dy : dx;       // its component across the first gradient
        mirror_cols = along_across < 0;
        second_off_axis = std::acos(std::min(1.0, std::fabs(along_across))) * 180.0 / std::numbers::pi;
    }

    // Block sizes, and strips.
    for (BlockInfo& b : blocks) {
        b.width = b.shape.cols * W + (b.shape.cols - 1) * G;
        b.depth = b.shape.rows * L + (b.shape.rows - 1) * A;
    }
    std::vector<std::vector<BlockInfo*>> strips;
    std::vector<double> strip_width;
    for (BlockInfo& b : blocks) {
        if (b.width > room_across + kFitEps)
            refuse_if_short(room.across, b.width + 2 * side_guard, room.across_key, "across", guarded);
        bool join = false;
        if (!strips.empty()) {
            const BlockInfo& prev = *strips.back().back();
            const bool same_rep = b.rep > 0 && b.rep == prev.rep;
            const bool loose = b.rep == 0 && prev.rep == 0 && width_given;
            const bool fits = strip_width.back() + A + b.width <= room_across + kFitEps;
            join = (same_rep || loose) && fits;
        }
        if (!join) {
            strips.emplace_back();
            strip_width.push_back(-A);
        }
        strips.back().push_back(&b);
        strip_width.back() += A + b.width;
        b.strip = static_cast<int>(strips.size());
    }

    // Rows along the gradient: strip s starts at global row g0[s] and is as deep as its deepest block.
    std::vector<int> g0(strips.size() + 1, 0);
    for (std::size_t s = 0; s < strips.size(); ++s) {
        int rows = 0;
        for (const BlockInfo* b : strips[s]) rows = std::max(rows, b->shape.rows);
        g0[s + 1] = g0[s] + rows;
    }
    const int total_rows = g0.back();
    const double u_plots = end_rows ? L + A : 0;   // the guard row at the low end and its alley
    const double v_plots = side_guard;
    const double plots_along = total_rows * L + (total_rows - 1) * A;
    const double extent_along = plots_along + 2 * u_plots;
    const double plots_across = *std::max_element(strip_width.begin(), strip_width.end());
    const double extent_across = plots_across + 2 * side_guard;
    refuse_if_short(room.along, extent_along, room.along_key, "along", guarded);
    refuse_if_short(room.across, extent_across, room.across_key, "across", guarded);

    // Place the blocks across their strip, in walking order (from the stake side when the strip's first row
    // is walked outward, from the far side otherwise).
    for (std::size_t s = 0; s < strips.size(); ++s) {
        const bool outward = g0[s] % 2 == 0;
        double v = outward ? 0 : strip_width[s];
        int cells = 0;
        for (const BlockInfo* b : strips[s]) cells += b->shape.cols;
        int cell = outward ? 0 : cells;
        for (BlockInfo* b : strips[s]) {
            if (outward) {
                b->v0 = v, b->cell0 = cell;
                v += b->width + A, cell += b->shape.cols;
            } else {
                v -= b->width, cell -= b->shape.cols;
                b->v0 = v, b->cell0 = cell;
                v -= A;
            }
        }
    }

    Layout layout;
    layout.seed = seed;
    layout.algorithm = std::string(kRandomAlgorithmId) + ";design=" + a.design_id;
    layout.columns = a.columns;
    layout.field_x_m = g.along_x ? extent_along : extent_across;
    layout.field_y_m = g.along_x ? extent_across : extent_along;

    // Map (u, v) of a rectangle's centre and its extents onto the field frame.
    auto place = [&](double u_centre, double v_centre, double du, double dv, double& x, double& y, double& wx, double& wy) {
        const double along = g.increasing ? u_centre : extent_along - u_centre;
        if (g.along_x) x = along, y = v_centre, wx = du, wy = dv;
        else x = v_centre, y = along, wx = dv, wy = du;
    };

    // Walk and number.
    int walk = 0;
    std::map<int, int> group_count;
    for (const BlockInfo& b : blocks) group_count[b.rep > 0 ? b.rep : b.number] += static_cast<int>(b.units.size());
    int largest_group = 0;
    for (const auto& [key, n] : group_count) largest_group = std::max(largest_group, n);
    if (largest_group > 9999)
        throw DesignError(fmt::format("trial: {} plots in one block or replicate; plot numbers allow at most 9999",
                                      largest_group));
    const int id_base = largest_group <= 99 ? 100 : largest_group <= 999 ? 1000 : 10000;  // common practice
    std::map<int, int> group_next;

    const double hx = f.harvest_length_m.value_or(0), hy = f.harvest_width_m.value_or(0);  // along, across
    for (std::size_t s = 0; s < strips.size(); ++s) {
        for (const BlockInfo* b : strips[s]) {
            int position = 0;
            for (int k = 0; k < b->shape.rows; ++k) {
                const int row_g = g0[s] + k;
                const bool outward = row_g % 2 == 0;
                std::vector<const DesignUnit*> row;
                for (const DesignUnit* u : b->units)
                    if (u->cell_row == k) row.push_back(u);
                auto col_of = [&](const DesignUnit* u) { return mirror_cols ? b->shape.cols - 1 - u->cell_col : u->cell_col; };
                std::sort(row.begin(), row.end(), [&](const DesignUnit* p, const DesignUnit* q) {
                    return outward ? col_of(p) < col_of(q) : col_of(p) > col_of(q);
                });
                const double u_centre = u_plots + row_g * (L + A) + L / 2;
                for (const DesignUnit* u : row) {
                    const int c = col_of(u);
                    const double v_centre = v_plots + b->v0 + c * (W + G) + W / 2;
                    PlotPlacement p;
                    p.block = b->number;
                    p.position = ++position;
                    p.walk_order = ++walk;
                    const int group = b->rep > 0 ? b->rep : b->number;
                    p.id = group * id_base + ++group_next[group];
                    p.treatment = u->treatment;
                    p.rep = u->rep;
                    p.incomplete_block = u->incomplete_block;
                    p.main = u->main;
                    p.sub = u->sub;
                    p.square_row = u->square_row;
                    p.square_col = u->square_col;
                    place(u_centre, v_centre, L, W, p.x_m, p.y_m, p.width_x_m, p.width_y_m);
                    const int along_index = g.increasing ? row_g + 1 : total_rows - row_g;
                    const int across_index = b->cell0 + c + 1;
                    if (g.along_x) p.col = along_index, p.row = across_index;
                    else p.row = along_index, p.col = across_index;
                    p.harvest_x_m = g.along_x ? hx : hy;
                    p.harvest_y_m = g.along_x ? hy : hx;
                    layout.plots.push_back(p);
                }
            }
        }
    }

    // Guard plots.
    auto guard = [&](double u0, double v0, double du, double dv) {
        GuardPlot gp;
        place(u0 + du / 2, v0 + dv / 2, du, dv, gp.x_m, gp.y_m, gp.width_x_m, gp.width_y_m);
        layout.guards.push_back(gp);
    };
    if (end_rows) {
        for (double u0 : {0.0, extent_along - L}) {
            for (double v0 = 0; v0 < extent_across - kFitEps; v0 += W + G)
                guard(u0, v0, L, std::min(W, extent_across - v0));
        }
    }
    if (around) {
        for (std::size_t s = 0; s < strips.size(); ++s)
            for (int row_g = g0[s]; row_g < g0[s + 1]; ++row_g) {
                const double u0 = u_plots + row_g * (L + A);
                guard(u0, 0, L, W);
                guard(u0, v_plots + strip_width[s] + G, L, W);
            }
    }

    // Notes for the agronomist.
    if (g.off_axis_deg > kOffAxisNoteDeg)
        layout.notes.push_back(fmt::format(
            "The gradient's bearing {}° is {:.1f}° off the nearest field axis ({}, {}°): blocks are laid across that "
            "axis, so they are not quite perpendicular to the gradient.",
            spec.gradient.bearing_deg, g.off_axis_deg, compass_name(g.axis_bearing_deg), g.axis_bearing_deg));
    if (second_off_axis && *second_off_axis > kOffAxisNoteDeg + 1e-9)
        layout.notes.push_back(fmt::format(
            "The second gradient's bearing {}° is {:.1f}° off the field axis across the first gradient: the square's "
            "columns follow that axis.",
            spec.second_gradient->bearing_deg, *second_off_axis));

    // Short rows: cells of a block's grid left empty.
    const std::string stake_side = compass_name(normalize(f.x_bearing_deg + (g.along_x ? 90 : 180)));
    const std::string side = stake_side.rfind("bearing", 0) == 0 ? "stake" : stake_side;
    int short_blocks = 0, empty_cells = 0;
    bool uniform_last_row = true;
    int last_row_plots = -1;
    for (const BlockInfo& b : blocks) {
        const int empty = b.shape.rows * b.shape.cols - static_cast<int>(b.units.size());
        if (empty == 0) continue;
        ++short_blocks, empty_cells += empty;
        int in_last = 0;
        bool only_last = true;
        for (const DesignUnit* u : b.units) {
            if (u->cell_row == b.shape.rows - 1) {
                ++in_last;
                if (u->cell_col >= b.shape.cols - empty) only_last = false;
            }
        }
        if (!only_last || (last_row_plots >= 0 && last_row_plots != in_last)) uniform_last_row = false;
        last_row_plots = in_last;
    }
    if (short_blocks == static_cast<int>(blocks.size()) && uniform_last_row &&
        std::all_of(blocks.begin(), blocks.end(), [&](const BlockInfo& b) {
            return b.shape.cols == blocks[0].shape.cols && b.units.size() == blocks[0].units.size();
        }))
        layout.notes.push_back(fmt::format(
            "Each block's {} plots fill rows of {}: the last row of every block holds {} plots at the {} side, and "
            "the walk steps along the alley past the {} empty places.",
            blocks[0].units.size(), blocks[0].shape.cols, last_row_plots, side, blocks[0].shape.cols - last_row_plots));
    else if (short_blocks > 0)
        layout.notes.push_back(fmt::format(
            "{} of the {} blocks leave {} cells of their grid empty; the walk steps past them (sow them as fill plots "
            "if the machine needs a rectangle).",
            short_blocks, blocks.size(), empty_cells));

    // Blocks are meant to be strips across the gradient (not for a CRD, a Latin square, pairs, or a strip-plot
    // block, which is a grid of strips by construction).
    if (spec.design != "crd" && spec.design != "latin" && spec.design != "paired" && spec.design != "strip") {
        const auto deep = std::find_if(blocks.begin(), blocks.end(), [](const BlockInfo& b) { return b.depth >= b.width; });
        if (deep != blocks.end()) {
            const bool all = std::all_of(blocks.begin(), blocks.end(), [](const BlockInfo& b) { return b.depth >= b.width; });
            layout.notes.push_back(fmt::format(
                "{} is {:.2f} m deep along the gradient but only {:.2f} m across it: blocks are meant to be long and "
                "narrow across the gradient; consider more plots per row or narrower plots.",
                all ? std::string("Each block") : fmt::format("Block {}", deep->number), deep->depth, deep->width));
        }
    }
    return layout;
}

}  // namespace pw
