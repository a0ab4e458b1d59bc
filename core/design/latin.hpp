// The Latin square: t treatments in a t x t square, each once in every row and every column, for a field
// with two gradients at right angles (e.g. slope down the field, shade across it). Square rows follow the
// first gradient, square columns the second (Gomez & Gomez, Statistical Procedures for Agricultural
// Research, 2nd ed. 1984, 2.3, from memory: the design, its analysis with rows, columns and treatments, and
// the randomization of a standard square).
//
// Randomization, "latin/1" (docs/designs-more.md): one Rng, drawing in this order
//   1. the starting square S:
//        t <= 6: k = uniform_below(R_t), S = the k-th reduced (standard) square of order t in the order listed
//                by latin_reduced_squares (R_3 = 1, R_4 = 4, R_5 = 56, R_6 = 9408);
//        t >= 7: the cyclic square S[i][j] = (i + j) mod t (no draw);
//   2. a row order p, a column order q and a symbol map m, each a Fisher-Yates shuffle of 0..t-1, drawn in
//      that order;
//   3. the square L[i][j] = m[S[p[i]][q[j]]].
// For t <= 6 every Latin square of order t is then equally likely: each square arises from exactly one
// reduced square, one column order and one order of rows 2..t (so a uniform reduced square with uniform row
// and column orders is uniform over all squares), and the further row and symbol maps carry the uniform
// distribution onto itself. This is the procedure of Fisher & Yates (Statistical Tables, 1938, from
// memory): a standard square chosen at random from the complete set, then rows, columns and treatments
// permuted. For t >= 7 the full set is too large to list (R_7 = 16 942 080), and the result is uniform only
// over the squares reachable from the cyclic square by permuting rows, columns and symbols (its isotopy
// class; order 7 has 564 isotopy classes, from memory): it does NOT sample every Latin square of that
// order. This "randomized standard square" is the common practice the design asks for.
//
// The assignment (core/design/assignment.hpp): one block, the whole square, shape {t, t}; the unit at
// (cell_row i, cell_col j) has square_row i + 1, square_col j + 1, rep 1, treatment L[i][j].
#pragma once
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "core/design/assignment.hpp"
#include "core/random/engine.hpp"

namespace pw {

inline constexpr int kLatinMinSide = 3;
inline constexpr int kLatinMaxSide = 12;

// A randomized Latin square of side t, 3 <= t <= 12 (DesignError otherwise). design_id "latin/1",
// columns {"square_row", "square_col"}.
DesignAssignment latin_square(int t, Rng& rng);

// The reduced (standard) squares of order t, 3 <= t <= 6: first row and first column 0, 1, ..., t-1. Each
// square is t*t symbols, row by row. Listed in lexicographic order of that row-by-row string (the order a
// cell-by-cell search trying symbols from 0 up finds them). Computed once and kept; DesignError outside 3..6.
const std::vector<std::vector<std::uint8_t>>& latin_reduced_squares(int t);

// Plain sentences for the agronomist about a square of side t (error degrees of freedom (t-1)(t-2) below
// 12, sides outside the usual 4 to 8); empty when there is nothing to say. Does not validate t.
std::vector<std::string> latin_square_notes(int t);

}  // namespace pw
