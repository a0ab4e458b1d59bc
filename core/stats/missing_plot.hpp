// Missing plots in a randomized complete block design: Yates' estimates and the exact least-squares
// sums of squares of the observed plots. Used by analyze_rcbd (rcbd.cpp); not part of the shared
// interface, but kept in its own file so each step can be read and tested alone.
//
// A CellTable holds r blocks × t treatments, cell index = block · t + treatment, NaN where the plot is
// missing. The caller guarantees the table is estimable: every block and every treatment has an
// observed plot, the observed cells connect all blocks and treatments, and (r−1)(t−1) exceeds the
// number of missing cells.
#pragma once
#include <vector>

namespace pw::missing_plot {

struct CellTable {
    int blocks = 0;
    int treatments = 0;
    std::vector<double> y;  // size blocks · treatments; NaN = missing plot
};

struct YatesEstimates {
    std::vector<int> cells;       // indices of the missing cells, ascending
    std::vector<double> values;   // estimate for each, same order
    std::vector<double> filled;   // the table with the estimates inserted
    int sweeps = 0;               // Gauss–Seidel sweeps until the stopping rule held
};

// Yates (1933): x = (r·B + t·T − G) / ((r−1)(t−1)), B, T, G the block, treatment and grand totals of the
// other plots. Several missing cells are estimated in turn, each with the current estimates of the
// others in place, sweep after sweep (the iterative procedure of Gomez & Gomez 1984, ch. 7), until no
// estimate moves by more than 1e-12 times the largest deviation of an observed plot from the observed
// mean. The limit is the least-squares prediction of the additive block + treatment model.
// Throws InputError if 10 000 sweeps do not settle.
YatesEstimates yates_estimates(const CellTable& table);

// Sums of squares of the observed plots, blocks fitted first (sequential, as R's anova(lm(y ~ block + trt))):
//   block      Σ n_i (ȳ_i − ȳ)²  over blocks, n_i observed plots in block i
//   treatment  reduction in residual SS when treatment is added to the block-only model
//              (= Yates' treatment SS from the augmented data minus his bias, for one missing plot)
//   residual   residual SS of the block + treatment least-squares fit (Eigen
//              CompleteOrthogonalDecomposition, values centred on the observed mean first)
//   total      Σ (y − ȳ)² over the observed plots
// `predicted` is the fitted value at every cell (observed or not) of the block + treatment model.
struct ObservedPlotSs {
    double block = 0, treatment = 0, residual = 0, total = 0;
    std::vector<double> predicted;
};
ObservedPlotSs least_squares_ss(const CellTable& table);

}  // namespace pw::missing_plot
