// The least-squares engine (linear_model.hpp): cell-coded indicator columns, the cross-product matrix of
// the centred response, Beaton's SWP operator with a pivot tolerance, sequential and adjusted sums of
// squares, a generalized inverse and the fitted values.
//
// SWP (Beaton 1964, "The use of special matrix operators in statistical calculus", ETS RB-64-51; as
// presented by Goodnight 1979) on pivot k of a matrix M, d = M[k][k]:
//   M[k][k] ← 1/d,  M[k][j] ← M[k][j]/d,  M[i][k] ← −M[i][k]/d,  M[i][j] ← M[i][j] − M[i][k]·M[k][j]/d.
// After sweeping a set S of X'X's columns the S×S block is (X'X)_SS⁻¹, the S×y entries are β_S and the
// y×y entry is the residual SS; each pivot lowers the y×y entry by M[k][y]²/d ≥ 0, which is the pivot's
// share of the term's sum of squares (added up, never obtained by a difference of two large numbers).
#include "core/stats/linear_model.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "core/error.hpp"

namespace pw::lm {

void CompensatedSum::add(double x) {
    const double t = sum + x;
    if (std::fabs(sum) >= std::fabs(x)) {
        carry += (sum - t) + x;
    } else {
        carry += (x - t) + sum;
    }
    sum = t;
}

namespace {

// A dense square matrix, row-major.
struct Square {
    int n = 0;
    std::vector<double> v;
    explicit Square(int dim) : n(dim), v(static_cast<std::size_t>(dim) * dim, 0.0) {}
    double& at(int i, int j) { return v[static_cast<std::size_t>(i) * n + j]; }
    double at(int i, int j) const { return v[static_cast<std::size_t>(i) * n + j]; }
};

// Beaton's SWP on pivot k (see the file comment).
void sweep(Square& m, int k) {
    const int n = m.n;
    const double d = m.at(k, k);
    double* rk = &m.v[static_cast<std::size_t>(k) * n];
    for (int j = 0; j < n; ++j) {
        if (j != k) rk[j] /= d;
    }
    for (int i = 0; i < n; ++i) {
        if (i == k) continue;
        double* ri = &m.v[static_cast<std::size_t>(i) * n];
        const double f = ri[k];
        if (f == 0) continue;
        for (int j = 0; j < n; ++j) {
            if (j != k) ri[j] -= f * rk[j];
        }
        ri[k] = -f / d;
    }
    rk[k] = 1.0 / d;
}

// Sweeps the given pivots of `m` in order (indices into m), skipping aliased ones. `diag` holds each
// pivot's original diagonal; `yi` is the response's index (or −1). Returns the number swept and adds each
// pivot's reduction of the residual SS to `reduction`.
int sweep_group(Square& m, const std::vector<int>& pivots, const std::vector<double>& diag, int yi,
                double& reduction, std::vector<char>* swept) {
    int rank = 0;
    CompensatedSum red;
    for (int k : pivots) {
        const double d = m.at(k, k);
        if (!(d > kAliasTolerance * diag[k])) continue;  // linearly dependent on the pivots already swept
        if (yi >= 0) red.add(m.at(k, yi) * m.at(yi, k) / d);
        sweep(m, k);
        if (swept) (*swept)[k] = 1;
        ++rank;
    }
    reduction += red.value();
    return rank;
}

// Whether term u is marginal to term t: u's factors a proper subset of t's, or u named by t.
bool marginal_to(const std::vector<Term>& terms, int u, int t) {
    if (u == t) return false;
    const auto& tm = terms[t].marginal;
    if (std::find(tm.begin(), tm.end(), u) != tm.end()) return true;
    const auto& fu = terms[u].factors;
    const auto& ft = terms[t].factors;
    if (fu.size() >= ft.size()) return false;
    return std::all_of(fu.begin(), fu.end(), [&](int f) { return std::find(ft.begin(), ft.end(), f) != ft.end(); });
}

// The submatrix of `full` on the listed indices (in that order).
Square submatrix(const Square& full, const std::vector<int>& idx) {
    Square m(static_cast<int>(idx.size()));
    for (int i = 0; i < m.n; ++i) {
        for (int j = 0; j < m.n; ++j) m.at(i, j) = full.at(idx[i], idx[j]);
    }
    return m;
}

// Reduction in residual SS and rank gained when `target`'s columns are swept after those of `before`
// (terms), the intercept always first. `with_y` false: rank only.
std::pair<double, int> reduction_after(const Square& full, const std::vector<double>& diag, int p,
                                       const std::vector<TermFit>& tf, const std::vector<int>& before,
                                       int target, bool with_y) {
    std::vector<int> idx{0};
    for (int u : before) idx.insert(idx.end(), tf[u].columns.begin(), tf[u].columns.end());
    const std::size_t first_target = idx.size();
    idx.insert(idx.end(), tf[target].columns.begin(), tf[target].columns.end());
    if (with_y) idx.push_back(p);
    Square m = submatrix(full, idx);
    std::vector<double> d(idx.size());
    for (std::size_t i = 0; i < idx.size(); ++i) d[i] = diag[idx[i]];
    const int yi = with_y ? m.n - 1 : -1;
    std::vector<int> head, tail;
    for (std::size_t i = 0; i < first_target; ++i) head.push_back(static_cast<int>(i));
    for (std::size_t i = first_target; i < first_target + tf[target].columns.size(); ++i) {
        tail.push_back(static_cast<int>(i));
    }
    double ignored = 0, red = 0;
    sweep_group(m, head, d, yi, ignored, nullptr);
    const int rank = sweep_group(m, tail, d, yi, red, nullptr);
    return {red, rank};
}

}  // namespace

Fit fit(const ModelData& data, const std::vector<Term>& terms) {
    const std::size_t n = data.y.size();
    if (n == 0) throw InputError("no observed values to analyse");
    for (std::size_t f = 0; f < data.factors.size(); ++f) {
        const Factor& fac = data.factors[f];
        if (fac.code.size() != n) {
            throw InputError("factor " + fac.name + ": " + std::to_string(fac.code.size()) + " codes for " +
                             std::to_string(n) + " observations");
        }
        for (int c : fac.code) {
            if (c < -1 || c >= static_cast<int>(fac.labels.size())) {
                throw InputError("factor " + fac.name + ": level code " + std::to_string(c) + " out of range");
            }
        }
    }
    for (std::size_t i = 0; i < n; ++i) {
        if (!std::isfinite(data.y[i])) {
            throw InputError("observation " + std::to_string(i + 1) + ": the value is not a finite number");
        }
    }

    Fit out;
    out.terms.resize(terms.size());
    out.cell_column.resize(terms.size());

    // Columns: 0 the intercept, then each term's cells in order of first appearance.
    int p = 1;
    std::vector<std::vector<int>> active(n, std::vector<int>{0});
    for (std::size_t t = 0; t < terms.size(); ++t) {
        if (terms[t].factors.empty()) throw InputError("term " + terms[t].name + " has no factor");
        auto& index = out.cell_column[t];
        std::vector<int> cell(terms[t].factors.size());
        for (std::size_t i = 0; i < n; ++i) {
            bool present = true;
            for (std::size_t k = 0; k < cell.size(); ++k) {
                cell[k] = data.factors[terms[t].factors[k]].code[i];
                present = present && cell[k] >= 0;
            }
            if (!present) continue;
            auto [it, fresh] = index.emplace(cell, p);
            if (fresh) {
                out.terms[t].columns.push_back(p);
                out.terms[t].cells.push_back(cell);
                ++p;
            }
            active[i].push_back(it->second);
        }
    }
    out.columns = p;

    // Centred response: compensated mean, then one correction pass (the mean deviation from it).
    CompensatedSum s;
    for (double v : data.y) s.add(v);
    double mean = s.value() / static_cast<double>(n);
    CompensatedSum corr;
    for (double v : data.y) corr.add(v - mean);
    mean += corr.value() / static_cast<double>(n);
    out.mean = mean;
    std::vector<double> yc(n);
    CompensatedSum tss;
    for (std::size_t i = 0; i < n; ++i) {
        yc[i] = data.y[i] - mean;
        tss.add(yc[i] * yc[i]);
    }
    out.total_ss = tss.value();
    out.total_df = static_cast<int>(n) - 1;

    // Cross products: counts exact in double (integers below 2^53), response sums compensated.
    Square full(p + 1);
    std::vector<CompensatedSum> xty(p);
    for (std::size_t i = 0; i < n; ++i) {
        for (int a : active[i]) {
            xty[a].add(yc[i]);
            for (int b : active[i]) full.at(a, b) += 1.0;
        }
    }
    for (int a = 0; a < p; ++a) {
        full.at(a, p) = full.at(p, a) = xty[a].value();
    }
    full.at(p, p) = out.total_ss;
    std::vector<double> diag(p + 1);
    for (int a = 0; a <= p; ++a) diag[a] = full.at(a, a);
    out.xtx.assign(static_cast<std::size_t>(p) * p, 0.0);
    for (int a = 0; a < p; ++a) {
        for (int b = 0; b < p; ++b) out.xtx[static_cast<std::size_t>(a) * p + b] = full.at(a, b);
    }

    // Sequential fit of the whole model.
    Square m = full;
    std::vector<char> swept(p + 1, 0);
    double ignored = 0;
    out.rank = sweep_group(m, {0}, diag, p, ignored, &swept);
    for (std::size_t t = 0; t < terms.size(); ++t) {
        TermFit& tf = out.terms[t];
        double red = 0;
        tf.df = sweep_group(m, tf.columns, diag, p, red, &swept);
        tf.ss = red;
        out.rank += tf.df;
    }
    out.aliased.assign(p, 0);
    out.beta.assign(p, 0.0);
    out.ginv.assign(static_cast<std::size_t>(p) * p, 0.0);
    for (int a = 0; a < p; ++a) {
        if (!swept[a]) {
            out.aliased[a] = 1;
            continue;
        }
        out.beta[a] = m.at(a, p);
        for (int b = 0; b < p; ++b) {
            if (swept[b]) out.ginv[static_cast<std::size_t>(a) * p + b] = m.at(a, b);
        }
    }

    // Fitted values and residuals, the residual SS summed from the residuals.
    out.fitted.resize(n);
    out.residuals.resize(n);
    CompensatedSum rss;
    for (std::size_t i = 0; i < n; ++i) {
        CompensatedSum fit_i;
        for (int a : active[i]) fit_i.add(out.beta[a]);
        const double e = yc[i] - fit_i.value();
        out.fitted[i] = mean + fit_i.value();
        out.residuals[i] = e;
        rss.add(e * e);
    }
    out.residual_ss = rss.value();
    out.residual_df = static_cast<int>(n) - out.rank;

    // Leverages: the sum of G over the plot's k indicator columns (k² terms; aliased columns have zero
    // rows and columns in G), clamped into [0, 1] against rounding.
    out.leverage.resize(n);
    for (std::size_t i = 0; i < n; ++i) {
        CompensatedSum h;
        for (int a : active[i]) {
            const double* g = &out.ginv[static_cast<std::size_t>(a) * p];
            for (int b : active[i]) h.add(g[b]);
        }
        double v = h.value();
        if (v > 1 - kLeverageOneTolerance) v = 1;
        out.leverage[i] = std::max(0.0, v);
    }

    // Reference df (after the marginal terms alone) and adjusted SS (after every term not containing it).
    for (std::size_t t = 0; t < terms.size(); ++t) {
        std::vector<int> marg;
        for (std::size_t u = 0; u < terms.size(); ++u) {
            if (marginal_to(terms, static_cast<int>(u), static_cast<int>(t))) marg.push_back(static_cast<int>(u));
        }
        out.terms[t].reference_df =
            reduction_after(full, diag, p, out.terms, marg, static_cast<int>(t), false).second;

        std::vector<int> others;
        bool same_as_sequential = true;
        for (std::size_t u = 0; u < terms.size(); ++u) {
            if (u == t) continue;
            const bool keep = !marginal_to(terms, static_cast<int>(t), static_cast<int>(u));
            if (keep) others.push_back(static_cast<int>(u));
            if (keep != (u < t)) same_as_sequential = false;
        }
        if (same_as_sequential) {
            out.terms[t].ss_adjusted = out.terms[t].ss;
            out.terms[t].df_adjusted = out.terms[t].df;
        } else {
            auto [red, rank] = reduction_after(full, diag, p, out.terms, others, static_cast<int>(t), true);
            out.terms[t].ss_adjusted = red;
            out.terms[t].df_adjusted = rank;
        }
    }
    return out;
}

bool model_row(const ModelData& data, const std::vector<Term>& terms, const Fit& f,
               const std::vector<int>& codes, std::vector<double>& row) {
    row.assign(f.columns, 0.0);
    row[0] = 1.0;
    bool complete = true;
    std::vector<int> cell;
    for (std::size_t t = 0; t < terms.size(); ++t) {
        cell.clear();
        bool present = true;
        for (int fac : terms[t].factors) {
            const int c = fac < static_cast<int>(codes.size()) ? codes[fac] : -1;
            present = present && c >= 0;
            cell.push_back(c);
        }
        if (!present) continue;
        auto it = f.cell_column[t].find(cell);
        if (it == f.cell_column[t].end()) {
            complete = false;
            continue;
        }
        row[it->second] = 1.0;
    }
    (void)data;
    return complete;
}

double estimate(const Fit& f, const std::vector<double>& l) {
    CompensatedSum s;
    s.add(f.mean * l[0]);
    for (int a = 0; a < f.columns; ++a) {
        if (l[a] != 0) s.add(l[a] * f.beta[a]);
    }
    return s.value();
}

double quadratic_form(const Fit& f, const std::vector<double>& l, const std::vector<double>& m) {
    const int p = f.columns;
    double s = 0;
    for (int a = 0; a < p; ++a) {
        if (l[a] == 0) continue;
        const double* g = &f.ginv[static_cast<std::size_t>(a) * p];
        double inner = 0;
        for (int b = 0; b < p; ++b) inner += g[b] * m[b];
        s += l[a] * inner;
    }
    return s;
}

std::vector<double> estimability_matrix(const ModelData& data, const std::vector<Term>& terms, const Fit& f) {
    (void)data;
    (void)terms;
    const int p = f.columns;
    std::vector<double> h(static_cast<std::size_t>(p) * p, 0.0);
    for (int a = 0; a < p; ++a) {
        const double* g = &f.ginv[static_cast<std::size_t>(a) * p];
        double* ha = &h[static_cast<std::size_t>(a) * p];
        for (int k = 0; k < p; ++k) {
            if (g[k] == 0) continue;
            const double* x = &f.xtx[static_cast<std::size_t>(k) * p];
            for (int b = 0; b < p; ++b) ha[b] += g[k] * x[b];
        }
    }
    return h;
}

bool estimable(const std::vector<double>& h, const std::vector<double>& l) {
    if (h.empty()) return true;
    const std::size_t p = l.size();
    double scale = 0;
    for (double v : l) scale = std::max(scale, std::fabs(v));
    // l'H, column by column: H is G X'X, so (l'H)_b = Σ_a l_a H[a][b].
    std::vector<double> lh(p, 0.0);
    for (std::size_t a = 0; a < p; ++a) {
        if (l[a] == 0) continue;
        const double* ha = &h[a * p];
        for (std::size_t b = 0; b < p; ++b) lh[b] += l[a] * ha[b];
    }
    for (std::size_t b = 0; b < p; ++b) {
        if (std::fabs(lh[b] - l[b]) > 1e-8 * std::max(1.0, scale)) return false;
    }
    return true;
}

}  // namespace pw::lm
