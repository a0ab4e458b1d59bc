// How much treatment information a block design keeps: the canonical efficiency factors and their harmonic
// mean, the efficiency factor E. Works on any block design (proper or not, resolvable or not, binary or not),
// given as lists of treatment indices per block.
//
// Definitions (John & Williams 1995, Cyclic and Computer Generated Designs, 2nd ed., ch. 2; Kempthorne 1956,
// Ann. Math. Statist. 27:846-849): with N the v x b incidence matrix (n_ij = plots of treatment i in block j),
// R = diag(replications), K = diag(block sizes), the intra-block information matrix for treatments is
//     C = R - N K^-1 N'.
// The canonical efficiency factors are the eigenvalues of R^-1/2 C R^-1/2 other than the one zero belonging
// to the all-ones contrast; each lies in [0, 1] and says what fraction of the information an unblocked design
// with the same replication would give is kept for its basic contrast. E is their harmonic mean:
//     E = (v - 1) / sum_i 1/e_i,
// which for an equireplicate design (R = rI) equals (v - 1) / (r trace C^+): the average variance of a
// pairwise difference is 2 sigma^2 / (r E). A disconnected design has a further zero factor and E = 0.
//
// Invariants: every treatment 0..v-1 appears at least once; no block is empty. Anything else throws
// DesignError naming the block or treatment at fault. Eigen is used only inside efficiency.cpp.
#pragma once
#include <vector>

namespace pw {

// blocks[j] lists the treatment (0..treatments-1) of every plot in block j; a treatment may repeat in a block.
using BlockContents = std::vector<std::vector<int>>;

// The v - 1 canonical efficiency factors in ascending order (the trivial zero removed).
std::vector<double> canonical_efficiency_factors(int treatments, const BlockContents& blocks);

// Harmonic mean of the canonical efficiency factors; 0 for a disconnected design.
double block_design_efficiency(int treatments, const BlockContents& blocks);

// Whether every pair of treatments is linked by a chain of shared blocks (exact, by union-find).
bool block_design_connected(int treatments, const BlockContents& blocks);

}  // namespace pw
