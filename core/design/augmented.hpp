// The augmented design in complete blocks: a few check entries (standard varieties) replicated in every
// block, and many new entries (early-generation lines, scarce seed) sown once each. Block effects and the
// error are estimated from the checks alone, and the new entries' means are adjusted for their blocks
// (Federer, Augmented (or hoonuiaku) designs, Hawaiian Planters' Record 55, 1956, from memory).
//
// Treatments: checks are 0..c-1, new entries c..c+n-1 (so a plot is a check exactly when treatment < c).
//
// Block sizes: new entries are divided as evenly as possible: with n = q*B + e (0 <= e < B), blocks 1..e get
// q+1 new entries and blocks e+1..B get q. The larger blocks come first whatever the seed, so the trial's
// shape (and whether it fits the field) does not depend on the randomization. Block k is one row of
// c + (its new entries) cells across the gradient (shape {1, size}, cell_row 0).
//
// Randomization, "augmented/1" (docs/designs-more.md), one Rng:
//   1. a Fisher-Yates shuffle of the list c, c+1, ..., c+n-1; block 1 takes the first entries of the
//      shuffled list, block 2 the next, and so on (so which entries share a block is random);
//   2. for blocks 1..B in order: the list 0..c-1 followed by the block's new entries (in the order taken),
//      shuffled; position p of the result goes to cell_col p.
// Every check is thus in every block once, each new entry in exactly one block, each plot's place within
// its block random. Units: incomplete_block = block, rep = 0.
#pragma once
#include <string>
#include <vector>

#include "core/design/assignment.hpp"
#include "core/random/engine.hpp"

namespace pw {

inline constexpr int kAugmentedMaxBlocks = 99;
inline constexpr int kAugmentedMaxPlotsPerBlock = 999;

// checks >= 2 (with blocks B the error from the checks has (checks-1)(B-1) degrees of freedom, none with one
// check), new_entries >= 1, 2 <= blocks <= 99 (each check needs two replicates at least), and the largest
// block at most 999 plots; DesignError otherwise. design_id "augmented/1", columns {"incomplete_block"}.
DesignAssignment augmented(int checks, int new_entries, int blocks, Rng& rng);

// Plain sentences for the agronomist when the sizes are outside common practice: 2 to 4 checks per block,
// checks 10 to 20% of the plots, at least 12 error degrees of freedom. Empty when there is nothing to say.
// Does not validate its arguments.
std::vector<std::string> augmented_notes(int checks, int new_entries, int blocks);

}  // namespace pw
