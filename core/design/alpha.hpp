// The alpha-lattice: a resolvable incomplete block design for trials with too many entries for homogeneous
// complete blocks (Patterson & Williams 1976, Biometrika 63(1):83-92). Recipe, formulas and sources:
// docs/alpha.md.
//
// v entries in r replicates; every replicate holds each entry exactly once and is split into s = ceil(v/k)
// incomplete blocks. When k divides v every block holds k plots. Otherwise the block sizes within a
// replicate differ by at most one (ceil(v/s) and floor(v/s), never more than k), the larger blocks first,
// so the smaller blocks close each replicate: the common practice of obtaining such designs by deleting
// entries from a design for s * ceil(v/s) entries (John & Williams 1995, ch. 4).
//
// The generator is pure: all randomness comes from the Rng it is given, so the same seed gives the same
// design. Its output (core/design/assignment.hpp):
//   - one DesignUnit per plot: rep 1..r, incomplete_block 1..s within the replicate, block = the running
//     number (rep - 1) * s + incomplete_block (replicate 1's blocks first), treatment = entry 0..v-1,
//     cell_row 0, cell_col = position 0..size-1 within the incomplete block;
//   - shapes[block - 1] = {1, size}: each incomplete block is one row of plots across the gradient;
//   - design_id "alpha/1", columns {"rep", "incomplete_block"}.
#pragma once
#include <vector>

#include "core/design/assignment.hpp"
#include "core/random/engine.hpp"

namespace pw {

inline constexpr const char* kAlphaDesignId = "alpha/1";

struct AlphaParams {
    int entries = 0;     // v, 3..999
    int block_size = 0;  // k, the largest incomplete block: 2..v-1
    int replicates = 0;  // r, 2..20
};

// What the generator achieved. swaps_* count candidate interchanges over every start.
struct AlphaQuality {
    double efficiency_factor = 0;  // E of the returned design (harmonic mean of canonical efficiency factors)
    double upper_bound = 0;        // alpha_upper_bound(v, k, r)
    int starts = 0;                // random alpha arrays developed and improved
    long long swaps_tried = 0;
    long long swaps_kept = 0;
};

// Generates and randomizes an alpha design. Throws DesignError naming the parameter when v, k or r is out of
// range.
DesignAssignment alpha_design(const AlphaParams& p, Rng& rng, AlphaQuality* quality = nullptr);

// Sizes of the s = ceil(v/k) incomplete blocks of each replicate, larger first.
std::vector<int> alpha_block_sizes(int entries, int block_size);

// Efficiency factor E of an assignment's incomplete blocks (units grouped by `block`, entries by
// `treatment`). Throws DesignError when an entry 0..max is missing.
double alpha_efficiency_factor(const DesignAssignment& design);

// Upper bound on E for any binary resolvable design with v entries, r replicates and s = ceil(v/k) blocks
// per replicate: the least of
//   U0 = (v - s) / (v - 1)                                        average of the factors (John & Williams 1995, 2.8)
//   U1 = (v-1)(r-1) / ((v-1)(r-1) + r(s-1)), when v-1 >= r(s-1)   Patterson & Williams 1976
//   U2 (r = 2 only) = (v-1) / ((v-2s+1) + 4(s-1) / Ec)            through the contraction
//        Ec = 1 - max(0, s/k' - 1) / (s - 1), k' = ceil(v/s)      (Williams, Patterson & John 1976)
// Derivations in docs/alpha.md. Square lattices (v = k^2, r = 2, 3) attain it.
double alpha_upper_bound(int entries, int block_size, int replicates);

}  // namespace pw
