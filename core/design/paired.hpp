// Paired plots: two treatments compared in pairs of adjacent plots (the matched-pairs design on a field,
// analysed by the paired t test). Each pair is a block of two plots side by side across the gradient, so
// the pair's long axis lies across it and both plots sample the same band of the field (common practice).
//
// Recipe "paired/1" (docs/design.md): one Rng; for pair 1, then 2, ..., a Fisher-Yates shuffle of {0, 1}
// (one draw uniform_below(2)); element i goes to cell_col i of the pair. Units: block = pair, rep 0 (pairs
// are not replicates of anything larger, so the placer may put several side by side across the gradient
// when the field's width is given), shape {1, 2}. Columns: none (the block is the pair).
#pragma once
#include "core/design/assignment.hpp"
#include "core/random/engine.hpp"

namespace pw {

inline constexpr const char* kPairedDesignId = "paired/1";

// pairs >= 1.
DesignAssignment paired_assignment(int pairs, Rng& rng);

}  // namespace pw
