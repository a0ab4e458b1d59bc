// A least-squares linear model of one response on named factors and their interactions: the engine
// behind every design's analysis of variance (core/stats/analysis.hpp).
//
// Model. y = Xβ + e, X made of indicator columns: an intercept, then for each term one column per
// combination of its factors' levels that occurs in the data (cell coding). A plot whose level of some
// factor is absent (code −1, e.g. the extra control of a factorial) has no column of any term holding
// that factor. The span of a term's columns contains those of its marginal terms, so with terms in
// hierarchical order the sequential sums of squares are those of any contrast coding (R's anova(lm)).
//
// Computation. The cross-product matrix [X'X X'y; y'X y'y] of the centred response is built from the
// sparse indicators (counts exact, response sums compensated), then swept pivot by pivot (Goodnight 1979,
// "A tutorial on the SWEEP operator", The American Statistician 33, 149–158). A pivot whose remaining
// diagonal is below kAliasTolerance times its original value is linearly dependent on the columns
// already swept: it is skipped and counted as aliased, never fails. Sweeping is exact in any order, so
//   sequential (type I) SS of a term  = reduction in residual SS as its columns are swept after the
//                                       terms before it (a sum of positive pivots' reductions);
//   adjusted SS of a term             = reduction when it is swept after every other term that does not
//                                       contain it ("type II"; Searle 1987, Linear Models for Unbalanced
//                                       Data, §4; here a term contains T when its factors include T's, or
//                                       when it names T in `marginal`).
// The residual SS is taken from the residuals themselves (y − fitted, summed with compensation), not by
// subtraction. The swept block of X'X is −(X'X)⁻ restricted to the non-aliased columns: a symmetric
// generalized inverse G (zero rows and columns for aliased ones), β = G X'y, Var(l'β) = σ² l'Gl.
//
// Numerics: the response is centred on its mean (Neumaier-compensated, plus a correction pass) before
// any product, so constant leading digits (NIST StRD SmLs sets) cost nothing beyond the representation of
// the data. Sizes: dense (p+1)² matrix, p the number of columns; sweep cost O(p³) per model.
//
// Leverage. h_ii = x_i'G x_i, the diagonal of the hat matrix H = X(X'X)⁻X', which is the same for every
// generalized inverse (Searle 1971, Linear Models, §1.5; Kutner, Nachtsheim, Neter & Li 2005, Applied
// Linear Statistical Models, §10.3). X here has the intercept column: G is a g-inverse of the whole X'X
// (intercept swept first), and centring y changes only the response's row and column, never G. A plot's
// row is an indicator with k = 1 + (terms present) ones, so h_ii is the sum of the k × k block of G on
// its columns: O(k²) per plot, O(n·k²) in all.
#pragma once
#include <map>
#include <string>
#include <vector>

namespace pw::lm {

// Pivot tolerance, relative to the column's own sum of squares (for indicator columns, its count).
inline constexpr double kAliasTolerance = 1e-10;

// A leverage within this of 1 is taken as 1 (the plot alone determines its fitted value; residual 0).
// R's lm.influence does the same at 10·DBL_EPSILON; G from sweeping carries more rounding than a QR
// factor, hence the wider margin (a field design gives h = 1 or h ≤ 1 − 1/n, far from this).
inline constexpr double kLeverageOneTolerance = 1e-9;

struct Factor {
    std::string name;
    std::vector<std::string> labels;  // level names, code = index
    std::vector<int> code;            // one per observation; −1 = the plot has no level of this factor
};

struct Term {
    std::string name;                 // "block", "N:P", ...
    std::vector<int> factors;         // indices into ModelData::factors, at least one
    std::vector<int> marginal;        // further terms (indices) treated as marginal to this one
};

struct ModelData {
    std::vector<Factor> factors;
    std::vector<double> y;            // finite values only (missing plots are left out by the caller)
};

struct TermFit {
    int df = 0;                       // rank added after the terms before it (sequential)
    int reference_df = 0;             // rank it adds after its marginal terms alone: df < reference_df
                                      // means some of its columns are aliased with earlier terms
    double ss = 0;                    // sequential (type I) SS
    int df_adjusted = 0;
    double ss_adjusted = 0;           // adjusted for every term not containing it (type II)
    std::vector<int> columns;         // its columns in the model matrix
    std::vector<std::vector<int>> cells;  // level codes (one per term factor) of each column
};

struct Fit {
    std::vector<TermFit> terms;       // in model order
    double mean = 0;                  // of y
    double total_ss = 0;              // Σ(y − ȳ)², compensated
    int total_df = 0;                 // n − 1
    double residual_ss = 0;           // Σ(y − ŷ)², compensated
    int residual_df = 0;              // n − rank
    int rank = 0;                     // including the intercept
    int columns = 0;                  // p, including the intercept (column 0)
    std::vector<char> aliased;        // per column
    std::vector<double> beta;         // per column, 0 for aliased ones; fitted = ȳ + Xβ
    std::vector<double> ginv;         // p × p row-major generalized inverse of X'X (σ² G = Var β)
    std::vector<double> fitted;       // per observation
    std::vector<double> residuals;    // per observation
    std::vector<double> leverage;     // per observation: h_ii = x_i'G x_i, in [0, 1]; exactly 1 when within
                                      // kLeverageOneTolerance of it
    std::vector<double> xtx;          // p × p row-major X'X (counts), for estimability
    std::vector<std::map<std::vector<int>, int>> cell_column;  // per term: level codes → column
};

// Throws InputError if a factor code is out of range, the data are empty, or a value is not finite.
Fit fit(const ModelData& data, const std::vector<Term>& terms);

// The model-matrix row of a plot with the given level codes (one per ModelData factor, −1 = absent):
// intercept plus the column of each term whose cell exists. Returns false if some term's cell did not
// occur in the data (the row then has no column for that term).
bool model_row(const ModelData& data, const std::vector<Term>& terms, const Fit& f,
               const std::vector<int>& codes, std::vector<double>& row);

// l'β + ȳ·l₀ (the intercept's coefficient is the mean of the centred fit) and l'Gl.
double estimate(const Fit& f, const std::vector<double>& l);
double quadratic_form(const Fit& f, const std::vector<double>& l, const std::vector<double>& m);

// Whether l'β is estimable: l'(G X'X) = l' within a tolerance (Searle 1987, §5.4). `h` = G X'X, from
// estimability_matrix (p × p, row-major); empty → every function is taken as estimable.
std::vector<double> estimability_matrix(const ModelData& data, const std::vector<Term>& terms, const Fit& f);
bool estimable(const std::vector<double>& h, const std::vector<double>& l);

// Compensated summation (Neumaier 1974, ZAMM 54, 39–51): the running error of each addition is kept.
struct CompensatedSum {
    double sum = 0, carry = 0;
    void add(double x);
    double value() const { return sum + carry; }
};

}  // namespace pw::lm
