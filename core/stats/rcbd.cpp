// Analysis of variance of a randomized complete block design (one trait, model block + treatment).
//
// Complete data: the classical decomposition of Gomez & Gomez (1984), ch. 2, each sum of squares
// computed in two passes about the means (deviations first, then their squares), never as
// Σy² − (Σy)²/n, which loses digits when yields are large and alike (NIST StRD one-way ANOVA sets).
//
// Missing plots (a block × treatment cell with no value): see missing_plot.hpp. Estimates fill the
// table by Yates' method; the ANOVA rows are the least-squares sums of squares of the observed plots,
// blocks first, so the treatment row is the exact block-adjusted treatment SS (Yates' augmented-data
// treatment SS is biased upward; this is what his bias correction recovers). Treatment means are
// taken from the filled table, i.e. they are least-squares means (Gomez & Gomez 1984, ch. 7,
// compute means after inserting the estimates; chapter numbers here are from memory).
//
// Invariants: blocks and treatments are numbered in order of first appearance; the table has exactly
// one value or one missing mark per cell; residual df = (r−1)(t−1) − missing ≥ 1.
#include <algorithm>
#include <cmath>
#include <numeric>
#include <string>
#include <unordered_map>

#include "core/error.hpp"
#include "core/stats/anova.hpp"
#include "core/stats/missing_plot.hpp"

namespace pw {

namespace {

std::string quoted(const std::string& s) { return "\"" + s + "\""; }

// Labels in first-appearance order with their index.
struct LabelIndex {
    std::vector<std::string> names;
    std::unordered_map<std::string, int> index;
    int add(const std::string& name) {
        auto [it, inserted] = index.emplace(name, static_cast<int>(names.size()));
        if (inserted) names.push_back(name);
        return it->second;
    }
};

struct Table {
    LabelIndex blocks, treatments;
    missing_plot::CellTable cells;
};

Table build_table(const std::vector<RcbdObservation>& data) {
    Table tab;
    std::vector<int> bi(data.size()), ti(data.size());
    for (std::size_t n = 0; n < data.size(); ++n) {
        const RcbdObservation& o = data[n];
        const std::string where = "observation " + std::to_string(n + 1);
        if (o.block.empty()) throw InputError(where + ": the block label is empty; every plot needs a block");
        if (o.treatment.empty()) {
            throw InputError(where + ": the treatment label is empty; every plot needs a treatment");
        }
        if (std::isinf(o.y)) {
            throw InputError(where + " (block " + quoted(o.block) + ", treatment " + quoted(o.treatment) +
                             "): the value is infinite; expected a finite number, or NaN for a missing plot");
        }
        bi[n] = tab.blocks.add(o.block);
        ti[n] = tab.treatments.add(o.treatment);
    }
    const int r = static_cast<int>(tab.blocks.names.size());
    const int t = static_cast<int>(tab.treatments.names.size());
    if (r < 2) {
        throw InputError("an RCBD needs at least 2 blocks; the data have " + std::to_string(r) +
                         (r == 1 ? " (" + quoted(tab.blocks.names[0]) + ")" : std::string()));
    }
    if (t < 2) {
        throw InputError("an RCBD needs at least 2 treatments; the data have " + std::to_string(t) +
                         (t == 1 ? " (" + quoted(tab.treatments.names[0]) + ")" : std::string()));
    }

    tab.cells.blocks = r;
    tab.cells.treatments = t;
    tab.cells.y.assign(static_cast<std::size_t>(r) * t, std::nan(""));
    std::vector<int> seen_at(static_cast<std::size_t>(r) * t, -1);
    for (std::size_t n = 0; n < data.size(); ++n) {
        const int k = bi[n] * t + ti[n];
        if (seen_at[k] >= 0) {
            throw InputError("block " + quoted(data[n].block) + ", treatment " + quoted(data[n].treatment) +
                             ": duplicate plot (observations " + std::to_string(seen_at[k] + 1) + " and " +
                             std::to_string(n + 1) +
                             "); an RCBD has exactly one plot of each treatment in each block");
        }
        seen_at[k] = static_cast<int>(n);
        tab.cells.y[k] = data[n].y;  // NaN stays NaN: a missing plot with known labels
    }
    return tab;
}

// Refuse missing-plot patterns that leave some quantity inestimable (Yates' method and least squares
// both need a connected table with residual degrees of freedom left).
void require_estimable(const Table& tab, int missing) {
    const int r = tab.cells.blocks;
    const int t = tab.cells.treatments;
    const auto& y = tab.cells.y;
    for (int i = 0; i < r; ++i) {
        bool any = false;
        for (int j = 0; j < t; ++j) any = any || !std::isnan(y[i * t + j]);
        if (!any) {
            throw InputError("block " + quoted(tab.blocks.names[i]) +
                             " has no observed plot; too many missing plots to estimate (drop the block)");
        }
    }
    for (int j = 0; j < t; ++j) {
        bool any = false;
        for (int i = 0; i < r; ++i) any = any || !std::isnan(y[i * t + j]);
        if (!any) {
            throw InputError("treatment " + quoted(tab.treatments.names[j]) +
                             " has no observed plot in any block; too many missing plots to estimate its mean");
        }
    }
    const int full_df = (r - 1) * (t - 1);
    if (missing >= full_df) {
        throw InputError(std::to_string(missing) + " missing plots leave no residual degrees of freedom ((" +
                         std::to_string(r) + "-1)(" + std::to_string(t) + "-1) = " + std::to_string(full_df) +
                         "); too many missing plots to analyse");
    }
    // Connectedness: blocks and treatments are nodes, observed plots the edges (union–find).
    std::vector<int> parent(r + t);
    std::iota(parent.begin(), parent.end(), 0);
    auto find = [&](int a) {
        while (parent[a] != a) a = parent[a] = parent[parent[a]];
        return a;
    };
    for (int i = 0; i < r; ++i) {
        for (int j = 0; j < t; ++j) {
            if (!std::isnan(y[i * t + j])) parent[find(i)] = find(r + j);
        }
    }
    for (int j = 1; j < t; ++j) {
        if (find(r + j) != find(r)) {
            throw InputError("treatments " + quoted(tab.treatments.names[0]) + " and " +
                             quoted(tab.treatments.names[j]) +
                             " cannot be compared: no chain of blocks links them through observed plots; "
                             "too many missing plots to analyse");
        }
    }
}

// Two-pass mean: the plain mean, corrected by the mean deviation from it.
double mean_of(const std::vector<double>& v) {
    const double first = std::accumulate(v.begin(), v.end(), 0.0) / static_cast<double>(v.size());
    double correction = 0;
    for (double x : v) correction += x - first;
    return first + correction / static_cast<double>(v.size());
}

struct Decomposition {
    double block = 0, treatment = 0, residual = 0, total = 0;
};

// Complete r × t table (Gomez & Gomez 1984, ch. 2): block SS = t Σ(ȳ_i. − ȳ)², treatment SS =
// r Σ(ȳ_.j − ȳ)², residual SS = ΣΣ(y_ij − ȳ_i. − ȳ_.j + ȳ)², total SS = ΣΣ(y_ij − ȳ)².
Decomposition classical_ss(const std::vector<double>& y, int r, int t, const std::vector<double>& bmean,
                           const std::vector<double>& tmean, double grand) {
    Decomposition d;
    for (int i = 0; i < r; ++i) d.block += t * (bmean[i] - grand) * (bmean[i] - grand);
    for (int j = 0; j < t; ++j) d.treatment += r * (tmean[j] - grand) * (tmean[j] - grand);
    for (int i = 0; i < r; ++i) {
        for (int j = 0; j < t; ++j) {
            const double dev = y[i * t + j] - grand;
            const double e = y[i * t + j] - bmean[i] - tmean[j] + grand;
            d.total += dev * dev;
            d.residual += e * e;
        }
    }
    return d;
}

}  // namespace

RcbdResult analyze_rcbd(const std::vector<RcbdObservation>& data) {
    Table tab = build_table(data);
    const int r = tab.cells.blocks;
    const int t = tab.cells.treatments;
    const auto& y = tab.cells.y;
    const int missing = static_cast<int>(std::count_if(y.begin(), y.end(), [](double v) { return std::isnan(v); }));
    if (missing > 0) require_estimable(tab, missing);

    RcbdResult res;
    res.blocks = r;
    res.treatments = t;

    // The filled table: observed values, with Yates' estimates in the missing cells.
    std::vector<double> filled = y;
    Decomposition ss;
    if (missing > 0) {
        const missing_plot::YatesEstimates est = missing_plot::yates_estimates(tab.cells);
        filled = est.filled;
        for (std::size_t m = 0; m < est.cells.size(); ++m) {
            const int k = est.cells[m];
            res.estimated.push_back({tab.blocks.names[k / t], tab.treatments.names[k % t], est.values[m]});
        }
        const missing_plot::ObservedPlotSs ls = missing_plot::least_squares_ss(tab.cells);
        ss = {ls.block, ls.treatment, ls.residual, ls.total};
    }

    std::vector<double> bmean(r), tmean(t), slice;
    for (int i = 0; i < r; ++i) {
        slice.assign(filled.begin() + i * t, filled.begin() + (i + 1) * t);
        bmean[i] = mean_of(slice);
    }
    for (int j = 0; j < t; ++j) {
        slice.clear();
        for (int i = 0; i < r; ++i) slice.push_back(filled[i * t + j]);
        tmean[j] = mean_of(slice);
    }
    res.grand_mean = mean_of(filled);
    if (missing == 0) ss = classical_ss(filled, r, t, bmean, tmean, res.grand_mean);

    const int df_block = r - 1;
    const int df_trt = t - 1;
    const int df_res = (r - 1) * (t - 1) - missing;
    const double mse = ss.residual / df_res;

    AnovaRow block{"block", df_block, ss.block, ss.block / df_block, std::nullopt, std::nullopt};
    AnovaRow trt{"treatment", df_trt, ss.treatment, ss.treatment / df_trt, std::nullopt, std::nullopt};
    for (AnovaRow* row : {&block, &trt}) {
        if (mse > 0) {  // with a perfect fit (MSE = 0) there is no F test
            row->f = row->ms / mse;
            row->p = f_upper_tail(*row->f, row->df, df_res);
        }
    }
    res.anova = {block, trt, AnovaRow{"residual", df_res, ss.residual, mse, std::nullopt, std::nullopt},
                 AnovaRow{"total", r * t - 1 - missing, ss.total, 0, std::nullopt, std::nullopt}};

    for (int j = 0; j < t; ++j) {
        int n = 0;
        for (int i = 0; i < r; ++i) n += std::isnan(y[i * t + j]) ? 0 : 1;
        res.means.push_back({tab.treatments.names[j], tmean[j], n});
    }

    // CV% = 100·√MSE / grand mean; SED = √(2·MSE/r); LSD = t(0.975, residual df)·SED
    // (Gomez & Gomez 1984, ch. 2 and 5). With missing plots the SED is the one for two treatments
    // that have no estimated plot.
    res.cv_percent = 100 * std::sqrt(mse) / res.grand_mean;
    res.sed = std::sqrt(2 * mse / r);
    res.lsd_5pct = t_quantile(0.975, df_res) * res.sed;
    return res;
}

}  // namespace pw
