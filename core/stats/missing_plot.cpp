// Missing plots of an RCBD: Yates' iterated estimates and the least-squares sums of squares of the
// observed plots (see missing_plot.hpp for the formulas and their sources).
//
// Both steps work on values centred on the mean of the observed plots, so that totals of large,
// nearly equal yields do not cancel (the loss of digits NIST StRD demonstrates for uncentred sums).
#include "core/stats/missing_plot.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include <Eigen/Dense>

#include "core/error.hpp"

namespace pw::missing_plot {

namespace {

// Mean of the observed (non-NaN) values, with the second-pass correction of the two-pass algorithm.
double observed_mean(const std::vector<double>& y) {
    double sum = 0;
    int n = 0;
    for (double v : y) {
        if (!std::isnan(v)) { sum += v; ++n; }
    }
    const double first = sum / n;
    double correction = 0;
    for (double v : y) {
        if (!std::isnan(v)) correction += v - first;
    }
    return first + correction / n;
}

constexpr int kMaxSweeps = 10000;
constexpr double kRelativeStop = 1e-12;

}  // namespace

YatesEstimates yates_estimates(const CellTable& table) {
    const int r = table.blocks;
    const int t = table.treatments;
    const double centre = observed_mean(table.y);

    YatesEstimates out;
    std::vector<double>& c = out.filled;  // centred values, estimates inserted as they are found
    c.resize(table.y.size());
    double scale = 0;
    for (std::size_t k = 0; k < c.size(); ++k) {
        if (std::isnan(table.y[k])) {
            out.cells.push_back(static_cast<int>(k));
            c[k] = 0;
        } else {
            c[k] = table.y[k] - centre;
            scale = std::max(scale, std::abs(c[k]));
        }
    }

    // Starting values (our choice; any start converges): the additive guess from observed block and
    // treatment means, ȳ_i + ȳ_j − ȳ in centred units.
    std::vector<double> bsum(r, 0), tsum(t, 0);
    std::vector<int> bn(r, 0), tn(t, 0);
    for (int i = 0; i < r; ++i) {
        for (int j = 0; j < t; ++j) {
            if (std::isnan(table.y[i * t + j])) continue;
            bsum[i] += c[i * t + j]; ++bn[i];
            tsum[j] += c[i * t + j]; ++tn[j];
        }
    }
    for (int k : out.cells) c[k] = bsum[k / t] / bn[k / t] + tsum[k % t] / tn[k % t];

    // Gauss–Seidel sweeps of Yates' formula. Totals are recomputed for each cell rather than updated,
    // so rounding does not accumulate over sweeps.
    const double denom = static_cast<double>(r - 1) * static_cast<double>(t - 1);
    const double tolerance = kRelativeStop * scale;
    for (out.sweeps = 1;; ++out.sweeps) {
        double largest_move = 0;
        for (int k : out.cells) {
            const int bi = k / t;
            const int tj = k % t;
            double B = 0, T = 0, G = 0;
            for (int j = 0; j < t; ++j) B += c[bi * t + j];
            for (int i = 0; i < r; ++i) T += c[i * t + tj];
            for (double v : c) G += v;
            B -= c[k]; T -= c[k]; G -= c[k];
            const double x = (r * B + t * T - G) / denom;  // Yates 1933; Gomez & Gomez 1984, ch. 7
            largest_move = std::max(largest_move, std::abs(x - c[k]));
            c[k] = x;
        }
        if (largest_move <= tolerance) break;
        if (out.sweeps == kMaxSweeps) {
            throw InputError("missing plots: Yates' estimates of the " + std::to_string(out.cells.size()) +
                             " missing plots did not settle after " + std::to_string(kMaxSweeps) +
                             " sweeps; too many missing plots to analyse");
        }
    }

    for (double& v : c) v += centre;
    for (int k : out.cells) out.values.push_back(c[k]);
    return out;
}

ObservedPlotSs least_squares_ss(const CellTable& table) {
    const int r = table.blocks;
    const int t = table.treatments;
    const double centre = observed_mean(table.y);

    std::vector<int> cell_of_row;
    for (int k = 0; k < r * t; ++k) {
        if (!std::isnan(table.y[k])) cell_of_row.push_back(k);
    }
    const auto n = static_cast<Eigen::Index>(cell_of_row.size());
    const Eigen::Index p = 1 + (r - 1) + (t - 1);

    // Treatment-contrast coding: intercept, blocks 2..r, treatments 2..t.
    auto fill_row = [&](Eigen::MatrixXd& X, Eigen::Index row, int k) {
        X(row, 0) = 1;
        if (k / t > 0) X(row, k / t) = 1;
        if (k % t > 0) X(row, (r - 1) + k % t) = 1;
    };
    Eigen::MatrixXd X = Eigen::MatrixXd::Zero(n, p);
    Eigen::VectorXd y(n);
    for (Eigen::Index row = 0; row < n; ++row) {
        fill_row(X, row, cell_of_row[row]);
        y(row) = table.y[cell_of_row[row]] - centre;
    }
    const Eigen::VectorXd beta = X.completeOrthogonalDecomposition().solve(y);

    ObservedPlotSs out;
    Eigen::MatrixXd all = Eigen::MatrixXd::Zero(r * t, p);
    for (int k = 0; k < r * t; ++k) fill_row(all, k, k);
    const Eigen::VectorXd fitted_all = all * beta;
    out.predicted.resize(r * t);
    for (int k = 0; k < r * t; ++k) out.predicted[k] = fitted_all(k) + centre;

    // Block-only model: the observed block means (two passes about the centred mean).
    double ybar = 0;
    for (Eigen::Index row = 0; row < n; ++row) ybar += y(row);
    ybar /= static_cast<double>(n);
    std::vector<double> bsum(r, 0);
    std::vector<int> bn(r, 0);
    for (Eigen::Index row = 0; row < n; ++row) {
        bsum[cell_of_row[row] / t] += y(row);
        ++bn[cell_of_row[row] / t];
    }
    std::vector<double> bmean(r);
    for (int i = 0; i < r; ++i) bmean[i] = bsum[i] / bn[i];

    for (int i = 0; i < r; ++i) out.block += bn[i] * (bmean[i] - ybar) * (bmean[i] - ybar);
    for (Eigen::Index row = 0; row < n; ++row) {
        const int k = cell_of_row[row];
        const double fit = fitted_all(k);
        out.total += (y(row) - ybar) * (y(row) - ybar);
        out.residual += (y(row) - fit) * (y(row) - fit);
        // Reduction in residual SS between nested models = squared distance between their fits.
        out.treatment += (fit - bmean[k / t]) * (fit - bmean[k / t]);
    }
    return out;
}

}  // namespace pw::missing_plot
