// A laid-out trial: every plot with its block, treatment, grid cell and position on the ground.
//
// Coordinates are metres in the FIELD frame from the reference stake (FieldSpec::origin): x along the
// field's x axis (compass bearing FieldSpec::x_bearing_deg, default 90 = east), y along its y axis, 90°
// anticlockwise from x (north when x is east). With the default bearing this is x east, y north from a
// stake at the field's south-west corner.
// Grid: row counts along y (1 nearest the stake), col along x (1 nearest the stake); guard plots are not
// counted in the grid.
// Plot ids follow common practice: group * 100 + ordinal (group * 1000, or * 10000, when a group has more
// than 99, or 999, plots), the group being the replicate when the design has one and the block otherwise,
// the ordinal counting the group's plots in walking order, which runs serpentine so numbers follow the
// seeder's path. For the RCBD the group is the block: block * 100 + position.
// Geometry, numbering and the randomization recipes: docs/design.md.
#pragma once
#include <cstdint>
#include <string>
#include <vector>

#include "core/spec/trial_spec.hpp"

namespace pw {

struct PlotPlacement {
    int id = 0;               // group*100 + ordinal (see above); the RCBD: block*100 + position
    int block = 0;            // 1..blocks, 1 at the low end of the gradient
    int position = 0;         // 1..n within the block, in walking order
    int walk_order = 0;       // 1..N over the whole trial
    int row = 0;
    int col = 0;
    int treatment = 0;        // index into TrialSpec::treatments
    double x_m = 0, y_m = 0;  // plot centre
    double width_x_m = 0;     // extent along x
    double width_y_m = 0;     // extent along y
    // The design's own columns (core/design/assignment.hpp DesignUnit); 0 where they do not apply.
    int rep = 0;
    int incomplete_block = 0;
    int main = 0;
    int sub = 0;
    int square_row = 0;
    int square_col = 0;
    // Harvest (net) area, centred on the plot: its extents along x and y; 0 = the whole plot that way.
    double harvest_x_m = 0;
    double harvest_y_m = 0;
};

// A guard (border) plot: sown like a plot, never randomized, recorded or analysed.
struct GuardPlot {
    double x_m = 0, y_m = 0;  // centre, field frame
    double width_x_m = 0;     // extent along x
    double width_y_m = 0;     // extent along y
};

struct Layout {
    std::uint64_t seed = 0;
    std::string algorithm;    // randomization algorithm id + design id, stored with the trial
    double field_x_m = 0;     // extent of the trial area (plots, alleys, guards) along x and y
    double field_y_m = 0;
    std::vector<PlotPlacement> plots;  // in walking order
    std::vector<std::string> notes;    // plain sentences for the agronomist (gradient off axis, short rows)
    std::vector<std::string> columns;  // the design's columns listed by `plots`: "rep", "main", ...
    std::vector<GuardPlot> guards;     // guard plots, if the spec asks for a border
};

// Lays out a randomized complete block design (spec.design is not consulted). Throws DesignError with a
// message naming the field. Same result as design_trial for an "rcbd" spec.
Layout design_rcbd(const TrialSpec& spec, std::uint64_t seed);

// Dispatches on spec.design: crd, rcbd, latin, split, strip, paired, augmented, alpha. Validates the spec
// for that design, randomizes it with one Rng seeded with `seed` and lays it on the field
// (core/design/geometry.hpp). Throws DesignError for an unknown design or a spec the design cannot use.
Layout design_trial(const TrialSpec& spec, std::uint64_t seed);

// The value of one of the design's own columns of a plot, by the name Layout::columns gives it: rep,
// incomplete_block, main, sub, square_row, square_col. Throws DesignError for any other name.
int design_column(const PlotPlacement& p, const std::string& name);

}  // namespace pw
