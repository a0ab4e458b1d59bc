// The randomized complete block design as a block assignment (core/design/assignment.hpp), and the
// serpentine dealing shared with the completely randomized design.
//
// Gomez & Gomez, Statistical Procedures for Agricultural Research, 2nd ed. 1984, 2.2 (from memory): every
// block holds each treatment once, in an order randomized independently in each block.
//
// Recipe "rcbd/1" (docs/design.md): one Rng; for block 1, then 2, ..., a Fisher-Yates shuffle of 0..t-1;
// block b's shuffled list is dealt to its cells in serpentine order: with R rows of p cells (p plots per
// row, the last row short when p does not divide t), row k (0 at the low end of the gradient) is dealt from
// cell_col 0 upward when (b-1) R + k is even and from its last used cell down otherwise; a short row uses
// cells 0.. (the stake side). That is the walk of a trial with one block per strip, so the plot in walking
// position i of each block gets element i of the shuffled list, as before the design framework existed.
#pragma once
#include <utility>
#include <vector>

#include "core/design/assignment.hpp"
#include "core/random/engine.hpp"

namespace pw {

inline constexpr const char* kRcbdDesignId = "rcbd/1";

// t >= 1 treatments, blocks >= 1, plots_per_row >= 1 (values above t mean t). Units: rep = block. Columns: none
// (the block is the replicate). The caller validates the counts against common practice.
DesignAssignment rcbd_assignment(int treatments, int blocks, int plots_per_row, Rng& rng);

// The first `count` cells of a grid with `per_row` cells per row, in dealing order: row k from cell_col 0 up when
// (first_row_parity + k) is even, else down; the last row holds count - (rows-1) per_row cells at cols 0...
// Returns (cell_row, cell_col) pairs.
std::vector<std::pair<int, int>> serpentine_cells(int count, int per_row, int first_row_parity);

}  // namespace pw
