// Analysis of a randomized complete block design: one trait, block + treatment model.
//
// Classical sums of squares (Gomez & Gomez 1984, ch. 2), computed in two passes about the grand mean.
// F tail probabilities and t quantiles from Boost.Math. With missing plots the missing values are
// estimated by Yates' method (iterated when more than one) and the residual df reduced by one for each
// (Yates 1933); the result says which cells were estimated.
#pragma once
#include <optional>
#include <string>
#include <vector>

namespace pw {

struct AnovaRow {
    std::string source;       // "block", "treatment", "residual", "total"
    int df = 0;
    double ss = 0;
    double ms = 0;            // 0 for total
    std::optional<double> f;  // not for residual/total
    std::optional<double> p;
};

struct TreatmentMean {
    std::string treatment;
    double mean = 0;
    int n = 0;                // observed plots (estimated cells not counted)
};

struct RcbdObservation {
    std::string block;
    std::string treatment;
    double y = 0;
};

struct EstimatedCell {
    std::string block;
    std::string treatment;
    double estimate = 0;
};

struct RcbdResult {
    std::vector<AnovaRow> anova;          // block, treatment, residual, total
    double grand_mean = 0;
    double cv_percent = 0;
    double sed = 0;                       // standard error of a difference of two treatment means
    double lsd_5pct = 0;                  // Fisher's LSD, two-sided 5%
    int blocks = 0;
    int treatments = 0;
    std::vector<TreatmentMean> means;     // in order of first appearance
    std::vector<EstimatedCell> estimated; // missing plots estimated (empty when complete)
};

// Blocks and treatments are taken from the labels in first-appearance order. Throws InputError for
// fewer than 2 blocks or treatments, duplicate block/treatment cells, or too many missing cells to analyse.
//
// Missing plots: a block × treatment cell that is absent, or present with y = NaN (which keeps a label
// known even when none of its plots was observed). With missing plots:
//   - `estimated` lists each missing cell with its Yates estimate (iterated; see core/stats/missing_plot.hpp
//     for the stopping rule); the estimates equal the least-squares predictions of block + treatment.
//   - the ANOVA rows are the least-squares SS of the observed plots, blocks fitted first: block SS
//     unadjusted, treatment SS adjusted for blocks (exact; Yates' augmented-data treatment SS minus bias),
//     residual SS as from the augmented data; residual and total df reduced by one per missing plot.
//   - `means` and `grand_mean` are taken from the table with the estimates inserted (least-squares means,
//     as Gomez & Gomez 1984, ch. 7); `n` still counts observed plots only.
//   - `sed` and `lsd_5pct` are those for two treatments with no estimated plot.
// Too many missing cells: a whole block or treatment missing, residual df reaching 0, or observed plots
// that leave two treatments unlinked through blocks. With a perfect fit (residual SS 0), F and p are empty.
RcbdResult analyze_rcbd(const std::vector<RcbdObservation>& data);

// Boost.Math; both throw std::domain_error for arguments outside the distribution (a programming error).
double f_upper_tail(double f, double df1, double df2);  // P(F > f), df may be fractional
double t_quantile(double p, double df);                 // inverse CDF of Student's t, 0 < p < 1
double t_upper_tail(double t, double df);               // P(T > t)

// The studentized range distribution (core/stats/studentized_range.cpp: Copenhaver & Holland 1988, the
// algorithm of R's ptukey/qtukey): k means (k >= 2), df error degrees of freedom (df >= 2); throw
// std::domain_error outside these.
double studentized_range_cdf(double q, double k, double df);       // P(Q <= q)
double studentized_range_quantile(double p, double k, double df);  // q with P(Q <= q) = p, 0 < p < 1

}  // namespace pw
