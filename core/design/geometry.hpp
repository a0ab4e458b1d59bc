// Field geometry: one placer for every design. A generator (rcbd, crd, paired, latin, split_plot,
// augmented, alpha) says which treatment goes to which cell of which block (core/design/assignment.hpp);
// place_on_field puts the blocks on the ground, numbers the plots and fixes the walking order.
//
// Frames. The FIELD frame runs from the reference stake: x along the field's x axis (compass bearing
// FieldSpec::x_bearing_deg, default 90 = east), y at 90° anticlockwise from it (north when x is east).
// The gradient's compass bearing is turned into that frame (bearing - x_bearing) and snapped to the nearest
// field axis (docs/design.md). The working frame of the placer is u metres along the gradient from its low
// end and v metres across it from the stake side; it is mapped onto x/y at the end.
//
// Invariants of every Layout returned: each unit of the assignment is one plot; plots never overlap each
// other or a guard plot; all lie in [0, field_x_m] x [0, field_y_m]; (row, col) cells are distinct; plot ids
// are distinct, positive and at most 6 digits; walk_order is 1..N in the order of Layout::plots.
#pragma once
#include <cstdint>
#include <optional>

#include "core/design/assignment.hpp"
#include "core/design/layout.hpp"
#include "core/spec/trial_spec.hpp"

namespace pw {

// A compass bearing turned into the field frame and snapped to the nearest field axis.
struct FieldDirection {
    bool along_x = false;     // runs along the field's x axis, else along its y axis
    bool increasing = true;   // points towards +x (or +y): the low end is at the stake side
    double axis_bearing_deg = 0;  // compass bearing of the field direction chosen, 0 <= b < 360
    double off_axis_deg = 0;      // angle between the bearing and that direction, 0..45
};

// The field axis nearest `bearing_deg` for a field whose x axis has compass bearing `x_bearing_deg`.
// An exact tie (45° between two axes) goes to the x axis.
FieldDirection field_direction(double bearing_deg, double x_bearing_deg);

// Room across the gradient for plots (the field's size across it, less the guard plots the border takes),
// or nullopt when the spec does not give the field's size that way. Used by generators that choose how
// many plots go side by side (rcbd, crd).
std::optional<double> room_across_gradient(const TrialSpec& spec);

// How many plots of width `plot_width_m` with `gap_m` between them fit side by side in `room_m` (0 if none).
int plots_fitting(double room_m, double plot_width_m, double gap_m);

// Lays the assignment on the field described by spec.field and spec.gradient (and spec.second_gradient for
// a Latin square). Layout::algorithm = kRandomAlgorithmId + ";design=" + assignment.design_id.
// Throws DesignError naming the spec key when a length is not usable or the trial does not fit the field
// ("field.length_m: the trial needs 58.5 m along the gradient but the field is 50.0 m: 8.5 m short"), and
// when the assignment breaks its own conventions (a bug in a generator).
Layout place_on_field(const TrialSpec& spec, const DesignAssignment& assignment, std::uint64_t seed);

}  // namespace pw
