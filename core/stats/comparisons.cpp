// Pairwise comparisons of means and their letter display (comparisons.hpp gives the formulas and sources).
#include "core/stats/comparisons.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include "core/stats/anova.hpp"

namespace pw::compare {

namespace {

using Column = std::vector<char>;  // membership of each mean in one letter

bool subset_of(const Column& a, const Column& b) {
    for (std::size_t i = 0; i < a.size(); ++i) {
        if (a[i] && !b[i]) return false;
    }
    return true;
}

// Piepho's absorb step: drop every column contained in another (of two equal columns, keep the first).
std::vector<Column> absorb(const std::vector<Column>& cols) {
    std::vector<Column> out;
    for (std::size_t i = 0; i < cols.size(); ++i) {
        bool drop = false;
        for (std::size_t j = 0; j < cols.size() && !drop; ++j) {
            if (i == j || !subset_of(cols[i], cols[j])) continue;
            drop = !subset_of(cols[j], cols[i]) || j < i;  // strict subset, or an equal column seen first
        }
        if (!drop) out.push_back(cols[i]);
    }
    return out;
}

std::string letter_name(std::size_t k) {
    if (k < 26) return std::string(1, static_cast<char>('a' + k));
    return std::string(1, static_cast<char>('A' + (k - 26)));
}

}  // namespace

std::vector<std::string> letters(const std::vector<double>& means, const std::vector<std::vector<char>>& differs,
                                 bool& ok) {
    const std::size_t k = means.size();
    ok = true;
    std::vector<std::string> out(k);
    if (k == 0) return out;
    std::vector<Column> cols{Column(k, 1)};
    for (std::size_t i = 0; i < k; ++i) {
        for (std::size_t j = i + 1; j < k; ++j) {
            if (!differs[i][j]) continue;
            std::vector<Column> next;
            for (const Column& c : cols) {
                if (c[i] && c[j]) {
                    Column without_i = c, without_j = c;
                    without_i[i] = 0;
                    without_j[j] = 0;
                    next.push_back(without_i);
                    next.push_back(without_j);
                } else {
                    next.push_back(c);
                }
            }
            cols = absorb(next);
            if (cols.size() > 52) {
                ok = false;
                return std::vector<std::string>(k);
            }
        }
    }
    // Name letters by the rank of the largest mean each holds (a = the letter of the top mean).
    std::vector<std::size_t> rank(k);
    std::iota(rank.begin(), rank.end(), 0);
    std::stable_sort(rank.begin(), rank.end(), [&](std::size_t a, std::size_t b) { return means[a] > means[b]; });
    std::vector<std::size_t> pos(k);
    for (std::size_t r = 0; r < k; ++r) pos[rank[r]] = r;
    auto first_member = [&](const Column& c) {
        std::size_t best = k;
        for (std::size_t i = 0; i < k; ++i) {
            if (c[i]) best = std::min(best, pos[i]);
        }
        return best;
    };
    std::stable_sort(cols.begin(), cols.end(),
                     [&](const Column& a, const Column& b) { return first_member(a) < first_member(b); });
    for (std::size_t c = 0; c < cols.size(); ++c) {
        for (std::size_t i = 0; i < k; ++i) {
            if (cols[c][i]) out[i] += letter_name(c);
        }
    }
    return out;
}

void compare_means(MeansTable& table, const std::vector<double>& var_diff) {
    const std::size_t k = table.rows.size();
    std::vector<std::size_t> idx;  // rows with a mean
    for (std::size_t i = 0; i < k; ++i) {
        if (table.rows[i].mean) idx.push_back(i);
    }
    const std::size_t m = idx.size();
    if (m < 2 || table.error_df < 1 || !(table.error_ms > 0)) return;
    const double nu = table.error_df;
    const double t_crit = t_quantile(0.975, nu);
    const bool tukey = table.error_df >= 2;
    const double q_crit = tukey ? studentized_range_quantile(0.95, static_cast<double>(m), nu) : 0;

    double sum_var = 0, vmin = INFINITY, vmax = 0;
    std::vector<std::vector<char>> lsd_diff(m, std::vector<char>(m, 0)), hsd_diff = lsd_diff;
    for (std::size_t a = 0; a < m; ++a) {
        for (std::size_t b = a + 1; b < m; ++b) {
            const double v = var_diff[idx[a] * k + idx[b]];
            sum_var += v;
            vmin = std::min(vmin, v);
            vmax = std::max(vmax, v);
            const double sed = std::sqrt(std::max(v, 0.0));
            const double d = *table.rows[idx[a]].mean - *table.rows[idx[b]].mean;
            lsd_diff[a][b] = lsd_diff[b][a] = std::fabs(d) > t_crit * sed;
            if (tukey) hsd_diff[a][b] = hsd_diff[b][a] = std::fabs(d) > q_crit * sed / std::sqrt(2.0);
            if (m <= static_cast<std::size_t>(kMaxPairedLevels)) {
                PairComparison pc;
                pc.a = table.rows[idx[a]].label;
                pc.b = table.rows[idx[b]].label;
                pc.difference = d;
                pc.sed = sed;
                pc.t = sed > 0 ? d / sed : 0;
                pc.p = sed > 0 ? 2 * t_upper_tail(std::fabs(pc.t), nu) : 1.0;
                if (tukey && sed > 0) {
                    const double q = std::fabs(d) / (sed / std::sqrt(2.0));
                    pc.tukey_p = 1.0 - studentized_range_cdf(q, static_cast<double>(m), nu);
                    pc.tukey_lower = d - q_crit * sed / std::sqrt(2.0);
                    pc.tukey_upper = d + q_crit * sed / std::sqrt(2.0);
                }
                table.pairs.push_back(pc);
            }
        }
    }
    const double pairs = static_cast<double>(m * (m - 1) / 2);
    table.sed = std::sqrt(sum_var / pairs);
    table.sed_min = std::sqrt(vmin);
    table.sed_max = std::sqrt(vmax);
    table.lsd_5pct = t_crit * *table.sed;
    if (tukey) table.hsd_5pct = q_crit * *table.sed / std::sqrt(2.0);

    if (m <= static_cast<std::size_t>(kMaxLetterLevels)) {
        std::vector<double> means(m);
        for (std::size_t a = 0; a < m; ++a) means[a] = *table.rows[idx[a]].mean;
        bool ok = false;
        const auto lsd = letters(means, lsd_diff, ok);
        if (ok) {
            for (std::size_t a = 0; a < m; ++a) table.rows[idx[a]].lsd_group = lsd[a];
        }
        if (tukey) {
            const auto hsd = letters(means, hsd_diff, ok);
            if (ok) {
                for (std::size_t a = 0; a < m; ++a) table.rows[idx[a]].hsd_group = hsd[a];
            }
        }
    }
}

}  // namespace pw::compare
