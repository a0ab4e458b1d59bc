// A laid-out trial: every plot with its block, treatment, grid cell and position on the ground.
//
// Local coordinates are metres from the reference stake at the field's south-west corner: x east, y north.
// Grid: row counts along y (1 nearest the stake), col along x (1 nearest the stake).
// Plot ids follow common practice: block * 100 + position (block * 1000 when a block has more than 99 plots),
// positions numbered in walking order, which runs serpentine so numbers follow the seeder's path.
// Geometry, numbering and the randomization recipe: docs/design.md.
#pragma once
#include <cstdint>
#include <string>
#include <vector>

#include "core/spec/trial_spec.hpp"

namespace pw {

struct PlotPlacement {
    int id = 0;               // block*100 + position
    int block = 0;            // 1..blocks, 1 at the low end of the gradient
    int position = 0;         // 1..n within the block, in walking order
    int walk_order = 0;       // 1..N over the whole trial
    int row = 0;
    int col = 0;
    int treatment = 0;        // index into TrialSpec::treatments
    double x_m = 0, y_m = 0;  // plot centre
    double width_x_m = 0;     // extent along x
    double width_y_m = 0;     // extent along y
};

struct Layout {
    std::uint64_t seed = 0;
    std::string algorithm;    // randomization algorithm id + design id, stored with the trial
    double field_x_m = 0;     // extent of the trial area along x and y
    double field_y_m = 0;
    std::vector<PlotPlacement> plots;  // in walking order
    std::vector<std::string> notes;    // plain sentences for the agronomist (gradient off axis, short rows)
};

// Validates the spec for the RCBD and lays it out. Throws DesignError with a message naming the field.
Layout design_rcbd(const TrialSpec& spec, std::uint64_t seed);

// Dispatches on spec.design ("rcbd" today). Throws DesignError for an unknown design.
Layout design_trial(const TrialSpec& spec, std::uint64_t seed);

}  // namespace pw
