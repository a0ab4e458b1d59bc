// The completely randomized design (CRD) as a block assignment (core/design/assignment.hpp): one "block"
// holding every plot, for uniform land, greenhouses and pot trials (Gomez & Gomez 1984, 2.1, from memory:
// each treatment's replicates are assigned to plots completely at random).
//
// Recipe "crd/1" (docs/design.md): the list of r copies of each treatment in file order (0, 0, ..., 1, 1, ...)
// is shuffled once with Fisher-Yates (one Rng) and dealt to the cells of one grid of `per_row` cells per row
// in serpentine order (serpentine_cells with parity 0, rcbd.hpp). Units: block 1, rep 0. Columns: none.
#pragma once
#include "core/design/assignment.hpp"
#include "core/random/engine.hpp"

namespace pw {

inline constexpr const char* kCrdDesignId = "crd/1";

// The number of cells per row of a CRD grid of n plots "as square as possible": ceil(sqrt(n)).
int crd_square_row(int plots);

// t >= 1 treatments, replicates >= 1, per_row >= 1 (values above t*r mean t*r).
DesignAssignment crd_assignment(int treatments, int replicates, int per_row, Rng& rng);

}  // namespace pw
