// The randomized complete block design (RCBD) laid out on the ground. Geometry and recipe: docs/design.md.
//
// Blocks are strips across the gradient, ordered along it from its low end (Gomez & Gomez 1984, 2.2.1:
// blocks long and narrow, perpendicular to the gradient; plots within a block with their long axis along
// it). Every block holds each treatment exactly once in an order shuffled independently per block: one Rng
// seeded with `seed` shuffles 0..t-1 for block 1, then block 2, and so on. The shuffled order is dealt out
// along the walking order, which runs serpentine over the whole trial so the walker's path is continuous.
//
// Working frame: u metres along the gradient from its low end, v metres across it from the stake side
// (x = 0 or y = 0). Rows of plots (global index g = 0 at the low end) sit at u = g * (length + alley);
// cells within a row at v = c * (width + gap). A short last row (t not a multiple of plots_per_row) keeps
// its plots at the stake side. The frame is then mapped onto x east / y north from the south-west stake.
#include <algorithm>
#include <cctype>
#include <cmath>
#include <numeric>

#include <fmt/format.h>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/random/engine.hpp"

namespace pw {

namespace {

constexpr int kMaxBlocks = 99;
constexpr int kMaxTreatments = 999;
constexpr double kOffAxisNoteDeg = 10.0;

// The field axis nearest the gradient's bearing. Compared in degrees so that a bearing of exactly 45°
// ties (|sin b| = |cos b|) and goes to the x axis, as docs/design.md states.
struct GradientAxis {
    bool along_x = false;     // gradient runs along x (east-west), else along y (north-south)
    bool increases_up = true; // increases towards +x (east) or +y (north): the low end is at the stake side
    double axis_bearing = 0;  // 0, 90, 180 or 270
    double off_axis_deg = 0;  // angle between the bearing and that axis
};

double angle_between(double a_deg, double b_deg) {
    return std::fabs(std::fmod(a_deg - b_deg + 540.0, 360.0) - 180.0);
}

GradientAxis gradient_axis(double bearing_deg) {
    const double b = std::fmod(std::fmod(bearing_deg, 360.0) + 360.0, 360.0);
    const double to_x = std::min(angle_between(b, 90), angle_between(b, 270));
    const double to_y = std::min(angle_between(b, 0), angle_between(b, 180));
    GradientAxis g;
    g.along_x = to_x <= to_y;
    if (g.along_x) {
        g.axis_bearing = angle_between(b, 90) <= angle_between(b, 270) ? 90 : 270;
        g.off_axis_deg = to_x;
    } else {
        g.axis_bearing = angle_between(b, 0) <= angle_between(b, 180) ? 0 : 180;
        g.off_axis_deg = to_y;
    }
    g.increases_up = g.axis_bearing == 0 || g.axis_bearing == 90;
    return g;
}

const char* compass(double axis_bearing) {
    if (axis_bearing == 0) return "north";
    if (axis_bearing == 90) return "east";
    if (axis_bearing == 180) return "south";
    return "west";
}

std::string lower(std::string s) {
    for (char& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
    return s;
}

void validate(const TrialSpec& spec) {
    const auto t = spec.treatments.size();
    if (spec.blocks < 2)
        throw DesignError(fmt::format("trial.blocks: a randomized complete block design needs at least 2 blocks, got {}",
                                      spec.blocks));
    if (spec.blocks > kMaxBlocks)
        throw DesignError(fmt::format("trial.blocks: at most {} blocks can be numbered, got {}", kMaxBlocks, spec.blocks));
    if (t < 2)
        throw DesignError(fmt::format("treatments: a randomized complete block design needs at least 2 treatments, got {}", t));
    if (t > static_cast<std::size_t>(kMaxTreatments))
        throw DesignError(fmt::format("treatments: at most {} treatments per block, got {}", kMaxTreatments, t));
    for (std::size_t i = 0; i < t; ++i) {
        if (spec.treatments[i].label.empty())
            throw DesignError(fmt::format("treatments[{}].label: expected a non-empty label", i + 1));
        for (std::size_t j = 0; j < i; ++j)
            if (lower(spec.treatments[i].label) == lower(spec.treatments[j].label))
                throw DesignError(fmt::format("treatments[{}].label: '{}' repeats treatments[{}]; labels must differ",
                                              i + 1, spec.treatments[i].label, j + 1));
    }
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
    if (!std::isfinite(spec.gradient.bearing_deg))
        throw DesignError("gradient.bearing_deg: expected a finite compass bearing in degrees");
}

}  // namespace

Layout design_rcbd(const TrialSpec& spec, std::uint64_t seed) {
    validate(spec);
    const int t = static_cast<int>(spec.treatments.size());
    const int r = spec.blocks;
    const FieldSpec& f = spec.field;
    const int per_row = (f.plots_per_row == 0 || f.plots_per_row >= t) ? t : f.plots_per_row;
    const int rows_per_block = (t + per_row - 1) / per_row;
    const int total_rows = r * rows_per_block;
    const int last_row_plots = t - (rows_per_block - 1) * per_row;
    const int id_base = t > 99 ? 1000 : 100;  // common practice: block * 100 + position, * 1000 past 99 plots

    // Extents (metres): rows of plot_length_m separated by alleys along the gradient; plots of plot_width_m
    // separated by plot_gap_m across it.
    const double along_extent = total_rows * f.plot_length_m + (total_rows - 1) * f.alley_m;
    const double across_extent = per_row * f.plot_width_m + (per_row - 1) * f.plot_gap_m;
    const GradientAxis axis = gradient_axis(spec.gradient.bearing_deg);

    Layout layout;
    layout.seed = seed;
    layout.algorithm = std::string(kRandomAlgorithmId) + ";design=rcbd/1";
    layout.field_x_m = axis.along_x ? along_extent : across_extent;
    layout.field_y_m = axis.along_x ? across_extent : along_extent;
    layout.plots.reserve(static_cast<std::size_t>(t) * static_cast<std::size_t>(r));

    if (axis.off_axis_deg > kOffAxisNoteDeg)
        layout.notes.push_back(fmt::format(
            "The gradient's bearing {}° is {:.1f}° off the nearest field axis ({}, {}°): blocks are laid across that "
            "axis, so they are not quite perpendicular to the gradient.",
            spec.gradient.bearing_deg, axis.off_axis_deg, compass(axis.axis_bearing), axis.axis_bearing));
    const char* stake_side = axis.along_x ? "south" : "west";
    if (last_row_plots < per_row)
        layout.notes.push_back(fmt::format(
            "Each block's {} plots fill rows of {}: the last row of every block holds {} plots at the {} side, and "
            "the walk steps along the alley past the {} empty places.",
            t, per_row, last_row_plots, stake_side, per_row - last_row_plots));

    const double block_depth = rows_per_block * f.plot_length_m + (rows_per_block - 1) * f.alley_m;
    if (block_depth >= across_extent)
        layout.notes.push_back(fmt::format(
            "Each block is {:.2f} m deep along the gradient but only {:.2f} m across it: blocks are meant to be long "
            "and narrow across the gradient; consider more plots per row or narrower plots.",
            block_depth, across_extent));

    Rng rng(seed);
    int walk = 0;
    for (int block = 1; block <= r; ++block) {
        std::vector<int> order(static_cast<std::size_t>(t));
        std::iota(order.begin(), order.end(), 0);
        rng.shuffle(order);
        for (int k = 0; k < rows_per_block; ++k) {
            const int g = (block - 1) * rows_per_block + k;  // global row from the low end of the gradient
            const int in_row = k + 1 < rows_per_block ? per_row : last_row_plots;
            const bool outward = g % 2 == 0;                 // even rows walk away from the stake side
            const double u_centre = g * (f.plot_length_m + f.alley_m) + f.plot_length_m / 2;
            const double u = axis.increases_up ? u_centre : along_extent - u_centre;
            const int along_index = axis.increases_up ? g + 1 : total_rows - g;
            for (int s = 0; s < in_row; ++s) {
                const int cell = outward ? s : in_row - 1 - s;  // 0 at the stake side
                const double v = cell * (f.plot_width_m + f.plot_gap_m) + f.plot_width_m / 2;
                PlotPlacement p;
                p.block = block;
                p.position = k * per_row + s + 1;
                p.id = block * id_base + p.position;
                p.walk_order = ++walk;
                p.treatment = order[static_cast<std::size_t>(p.position - 1)];
                if (axis.along_x) {
                    p.x_m = u, p.y_m = v;
                    p.col = along_index, p.row = cell + 1;
                    p.width_x_m = f.plot_length_m, p.width_y_m = f.plot_width_m;
                } else {
                    p.x_m = v, p.y_m = u;
                    p.row = along_index, p.col = cell + 1;
                    p.width_x_m = f.plot_width_m, p.width_y_m = f.plot_length_m;
                }
                layout.plots.push_back(p);
            }
        }
    }
    return layout;
}

}  // namespace pw
