// The analysis of one trait of a trial, for every design plotwright lays out: the model of the design
// fitted by least squares (core/stats/linear_model.hpp), the analysis of variance with each F tested
// against its own error stratum, treatment means (least-squares means where the data are unbalanced)
// with standard errors, Fisher's LSD and Tukey's HSD with letter groupings, the relative efficiency of
// the design, the paired t-test for paired plots, and the fitted value and residual of every plot.
//
// Models (docs/analysis.md gives each with its source):
//   crd        treatment structure
//   rcbd       block + treatment structure
//   paired     block (the pair) + treatment; and the paired t-test
//   latin      row + column + treatment structure
//   split      block + A + [block:A = residual (whole plot)] + B + A:B + residual (subplot)
//   strip      block + A + [block:A = residual (main strips)] + B + [block:B = residual (sub strips)]
//              + A:B + residual (intersection)
//   augmented  block + checks vs new entries + checks + new entries (adjusted for blocks) + residual
//   alpha      replicate + block (within replicate) + entry (adjusted for blocks) + residual
// "Treatment structure" is one treatment factor, or with factorial treatments each factor and every
// interaction in order of degree (A, B, C, A:B, A:C, B:C, A:B:C), after a "control vs factorial" term
// when an extra control lies outside the crossing.
//
// Missing plots (y = NaN with labels) are left out of the fit; the sums of squares are then the exact
// least-squares ones of the observed plots (sequential, each term after the terms above it; also the
// adjusted SS, each term after every term not containing it), means are least-squares means, and each
// missing plot gets the model's prediction (for the RCBD this is Yates' estimate). Split- and strip-plot
// strata are analysed as fixed block × factor terms: exact for complete data, an approximation otherwise.
//
// Standardized residuals are R's rstandard(lm): the internally studentized residual
//   r_i = e_i / √(MSE·(1 − h_ii)),   h_ii the plot's leverage (diagonal of the hat matrix)
// (Kutner, Nachtsheim, Neter & Li 2005, Applied Linear Statistical Models, 5th ed., §10.2, eq. 10.15;
// Cook & Weisberg 1982, Residuals and Influence in Regression, §2.2). MSE is the residual mean square of
// the fitted model, which is the plot-level (last) error row. For split and strip plots the leverage is
// that of the whole fixed model with the block × factor strata as terms (the one plotwright fits), so r_i
// equals R's rstandard(lm(y ~ block + A + block:A + B + A:B)) for a split plot and
// rstandard(lm(y ~ block + A + block:A + B + block:B + A:B)) for a strip plot, not a residual of the
// mixed model. A plot with h_ii = 1 (an augmented design's new entry in one plot: residual 0) has no
// standardized residual; a missing plot has neither.
#pragma once
#include <map>
#include <optional>
#include <string>
#include <vector>

namespace pw {

// One record per plot. Role columns hold a label per record, or are empty when the design has no such role.
struct TrialData {
    std::string design;                        // crd, rcbd, latin, split, strip, paired, augmented, alpha
    std::vector<std::string> plot;             // plot id per record (empty: record numbers 1, 2, ...)
    std::vector<double> y;                     // NaN = missing plot, its labels still known
    double y_offset = 0;                       // already subtracted from y (exact decimal shift); added to means
    std::vector<std::string> treatment;        // treatment (entry) label, every design
    std::vector<std::string> block;            // rcbd, paired (the pair), split, strip, augmented;
                                               // alpha: the incomplete block within its replicate
    std::vector<std::string> rep;              // alpha: the replicate
    std::vector<std::string> row, col;         // latin
    std::vector<std::string> factor_names;     // factorial treatments; split/strip: {main factor, sub factor}
    std::vector<std::vector<std::string>> factor_levels;  // [factor][record]; "" = outside the crossing
                                                          // (an extra control), all factors at once
    std::vector<std::string> checks;           // augmented: check entries (empty: entries in >= 2 blocks)
    // How the person named each role ("block" -> "column Rep (--block)"), for refusals; default: the role.
    std::map<std::string, std::string> role_names;
};

struct AnalysisRow {
    std::string source;               // "block", "treatment", "N:P", "residual", "residual (whole plot)", "total"
    int df = 0;
    double ss = 0;                    // sequential (type I)
    double ms = 0;                    // 0 for total
    std::optional<double> f;          // against `error`; empty for error rows, total, and when MS(error) = 0
    std::optional<double> p;
    std::string stratum;              // "" (one stratum), "whole plot", "subplot", "main strips", ...
    std::string error;                // source of the error row F is tested against
    bool is_error = false;            // an error (residual) row
    int df_adjusted = 0;              // adjusted for every other term not containing it (type II)
    double ss_adjusted = 0;
    std::optional<double> f_adjusted;
    std::optional<double> p_adjusted;
};

// A term that adds fewer degrees of freedom than it would after its marginal terms alone: confounded
// (aliased) with terms before it, or cells of it missing.
struct AliasedTerm {
    std::string term;
    int df = 0;                       // what it adds in this model
    int df_expected = 0;              // what it adds after its marginal terms alone
    std::string message;
};

struct CvRow {
    std::string error;                // source of the error row
    double cv_percent = 0;            // 100·√MS / grand mean
};

struct MeanRow {
    std::string label;                // treatment label, factor level, or levels joined by " × "
    std::vector<std::string> levels;  // one per factor of the table's term (the label for "treatment")
    std::optional<double> mean;       // empty when not estimable from the observed plots
    std::optional<double> se;
    int n = 0;                        // observed plots
    std::string lsd_group;            // letters: means sharing a letter do not differ (LSD 5 %)
    std::string hsd_group;            // same for Tukey's HSD 5 %
};

struct PairComparison {
    std::string a, b;
    double difference = 0;            // mean a − mean b
    double sed = 0;
    double t = 0;                     // difference / SED
    double p = 0;                     // two-sided, t on the error df
    std::optional<double> tukey_p;    // Tukey(-Kramer) adjusted p
    std::optional<double> tukey_lower, tukey_upper;  // 95 % family-wise interval
};

struct MeansTable {
    std::string term;                 // "treatment", "N", "N:P", ...
    std::vector<std::string> factors; // the factors of the term ({"treatment"} for the treatment table)
    std::string error;                // error row used for standard errors
    double error_ms = 0;
    int error_df = 0;
    std::optional<double> sed;        // √(mean over pairs of Var(difference)); the SED when balanced
    std::optional<double> sed_min, sed_max;
    std::optional<double> lsd_5pct;   // t(0.975, df)·sed
    std::optional<double> hsd_5pct;   // q(0.95; levels, df)·sed/√2
    std::vector<MeanRow> rows;
    std::vector<PairComparison> pairs;  // every pair when there are at most kMaxPairedLevels rows
};

inline constexpr int kMaxPairedLevels = 60;   // pairwise list and Tukey p-values up to this many means
inline constexpr int kMaxLetterLevels = 120;  // letter groupings up to this many means

// A standard error of a difference named by the comparison (split- and strip-plot, Gomez & Gomez 1984).
struct SedRow {
    std::string comparison;           // "two Nitrogen means", "two Variety means at the same Nitrogen", ...
    double sed = 0;
    std::optional<int> df;            // error df of t; empty when t_critical is Gomez & Gomez' weighted t'
    double t_critical = 0;            // t(0.975) on `df`, or the weighted t' of two error terms
    double lsd_5pct = 0;
};

struct PairedTest {
    std::string first, second;        // difference = first − second
    int pairs = 0;
    double mean_difference = 0, sd_difference = 0, se = 0, t = 0;
    int df = 0;
    double p = 0;                     // two-sided
    double ci_lower = 0, ci_upper = 0;  // 95 %
};

struct Efficiency {
    std::string versus;               // "crd", "rcbd (rows as blocks)", ...
    double re = 0;                    // variance ratio, 1 = no gain
    std::optional<double> df_factor;  // Gomez & Gomez' adjustment k when error df < 20
    double re_adjusted = 0;           // re·k (= re when no adjustment)
    std::string source;
};

struct PlotFit {
    std::string plot;
    std::string treatment;
    std::map<std::string, std::string> labels;  // the design's role labels (block, row, ...)
    std::optional<double> y;          // empty: missing plot
    double fitted = 0;                // model prediction (the estimate of a missing plot)
    std::optional<double> residual;
    std::optional<double> leverage;      // h_ii; empty for a missing plot
    std::optional<double> standardized;  // residual / √(MSE·(1 − h_ii)) (R's rstandard); empty for a missing
                                         // plot, when h_ii = 1 or when MSE = 0
};

struct AnalysisResult {
    std::string design;
    int observed = 0;
    int missing = 0;
    std::vector<AnalysisRow> anova;   // model rows in order, error rows in their strata, then "total"
    std::vector<AliasedTerm> aliased;
    double grand_mean = 0;            // mean of the least-squares treatment means' plots: see docs
    double cv_percent = 0;            // of the last (plot-level) error row
    std::vector<CvRow> cv;            // one per error stratum
    int blocks = 0;                   // blocks (pairs; alpha: incomplete blocks; latin: rows)
    int treatments = 0;
    std::optional<double> sed;        // SED of two treatment means (docs/analysis.md for each design)
    std::optional<double> lsd_5pct;
    std::vector<MeansTable> means;    // [0] the treatments; then factor margins and interactions
    std::vector<SedRow> standard_errors;  // split and strip plots
    std::optional<PairedTest> paired;
    std::vector<Efficiency> efficiency;
    std::vector<PlotFit> plots;       // one per record, in input order
    std::vector<std::string> notes;
};

// Relative efficiency of blocking against a CRD of the same plots (Gomez & Gomez 1984, ch. 2, from
// memory): RE = [df_b·E_b + (df_t + df_e)·E_e] / [(df_b + df_t + df_e)·E_e], which for complete data is
// [(r−1)E_b + r(t−1)E_e] / [(rt−1)E_e]; when df_e < 20 also k = [(f1+1)(f2+3)] / [(f1+3)(f2+1)] with
// f1 = df_e and f2 = df_e + df_b (the CRD's error df), and re_adjusted = k·RE.
Efficiency blocking_efficiency(double block_ms, int block_df, int treatment_df, double error_ms, int error_df);

// The accepted design names, in docs/analysis.md order.
const std::vector<std::string>& analysis_designs();

// Throws InputError naming the role (as TrialData::role_names gives it), the record and what was
// expected: an unknown design, a role column missing or of the wrong length, an empty label, duplicate
// plots of one cell, a treatment with no observed plot, no residual degrees of freedom left.
AnalysisResult analyze_trial(const TrialData& data);

}  // namespace pw
