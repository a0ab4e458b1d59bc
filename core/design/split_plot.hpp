// Split-plot and strip-plot designs: two crossed factors, A with a levels and B with b levels, in complete
// blocks, where factor A (irrigation, tillage, sowing date: hard to change, needs big plots) is laid on
// larger units than factor B. Source of the designs and their randomization: Gomez & Gomez, Statistical
// Procedures for Agricultural Research, 2nd ed. 1984, 3.4 (split-plot) and 3.5 (strip-plot), from memory.
//
// Treatments are the a*b combinations, index = A level * b + B level (factor A slowest, as the factorial
// convention of core/design/assignment.hpp). `main` and `sub` give a unit's place in the block, not the
// levels: the levels are treatment / b and treatment % b.
//
// Split-plot, "split/1" (docs/designs-more.md). Each block is one row of a*b cells across the gradient
// (shape {1, a*b}): a main plots side by side, each a contiguous run of b subplots. The unit in main plot m
// (0-based, in cell order) at subplot position s has cell_col = m*b + s, cell_row 0, main = m+1, sub = s+1,
// rep = block. Randomization, one Rng for the whole trial, block 1 first: for each block, a Fisher-Yates
// shuffle PA of 0..a-1 (the A level of main plot m is PA[m]); then for main plots m = 0..a-1 in cell order a
// fresh shuffle PB_m of 0..b-1 (the B level at subplot s is PB_m[s]). So every block holds each A level on
// one main plot, and every main plot holds each B level once, each randomized independently.
//
// Strip-plot, "strip/1". Each block is a grid of b rows (along the gradient) by a columns (across it),
// shape {b, a}: factor A on vertical strips (the columns), factor B on horizontal strips (the rows), each
// strip crossing the whole block. Randomization, block 1 first: a shuffle PA of 0..a-1, then a shuffle PB
// of 0..b-1; the unit at (cell_row r, cell_col c) has A level PA[c], B level PB[r], main = c+1 (its A
// strip), sub = r+1 (its B strip), rep = block.
#pragma once
#include <string>
#include <vector>

#include "core/design/assignment.hpp"
#include "core/random/engine.hpp"

namespace pw {

// Limits shared with the RCBD: blocks are numbered 1..99, and a block holds at most 999 plots.
inline constexpr int kFactorialMaxBlocks = 99;
inline constexpr int kFactorialMaxPlotsPerBlock = 999;

// Split-plot: main_levels (A) >= 2, sub_levels (B) >= 2, 2 <= blocks <= 99, main_levels * sub_levels <= 999;
// DesignError otherwise. design_id "split/1", columns {"rep", "main", "sub"}.
DesignAssignment split_plot(int main_levels, int sub_levels, int blocks, Rng& rng);

// Strip-plot: a_levels (A, columns) >= 2, b_levels (B, rows) >= 2, 2 <= blocks <= 99, a*b <= 999; DesignError
// otherwise. design_id "strip/1", columns {"rep", "main", "sub"}.
DesignAssignment strip_plot(int a_levels, int b_levels, int blocks, Rng& rng);

// Plain sentences for the agronomist about a split-plot or strip-plot of these sizes (few blocks, many main
// levels, few degrees of freedom for the main-plot error); empty when there is nothing to say.
std::vector<std::string> split_plot_notes(int main_levels, int blocks);

}  // namespace pw
