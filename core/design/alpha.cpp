// Alpha designs: construction from random alpha arrays, improvement by interchange, randomization.
// Recipe and sources in docs/alpha.md; the output contract in alpha.hpp.
//
// 1. Construction (Patterson & Williams 1976). With s blocks per replicate and k' = ceil(v/s)
//    plots in the largest block, label the design's treatments t = i*s + j (i = 0..k'-1, j = 0..s-1). An
//    alpha array a (k' rows x r columns, entries mod s, first row and first column 0) gives replicate c's
//    block b (b = 0..s-1) the treatments  i*s + (b + a[i][c]) mod s,  i = 0..k'-1: column c developed
//    cyclically. Labels t >= v are deleted, one from each of s*k' - v blocks, which leaves the block sizes of
//    alpha.hpp. Every replicate holds every label once by construction. The array's free entries are drawn
//    from the Rng; several arrays are developed and the most efficient connected one kept.
// 2. Improvement (an interchange algorithm as in John & Williams 1995, from memory): swap two treatments between two
//    blocks of one replicate, and keep the swap when the efficiency factor rises. E is exact, not a surrogate:
//    with Omega = (C + J/v)^-1, trace C^+ = trace Omega - 1 and E = (v-1) / (r trace C^+), and a swap changes
//    C by the rank-two term -(w d' + d w'), so the change of trace Omega follows from the Woodbury identity in
//    O(v) per candidate (derivation in docs/alpha.md). Omega is refreshed exactly before every pass. Passes
//    visit the block pairs of each replicate in an Rng-shuffled order until a pass keeps nothing or the
//    work budget (counted in candidates, not time) is spent.
// 3. Randomization (Patterson & Williams 1976; common practice): replicates in random order, blocks at random
//    within each replicate (larger blocks first), plots at random within each block, entries assigned to the
//    design's labels by a random permutation.
//
// Portability: decisions compare floating-point changes against a margin of 1e-9 relative, so rounding
// differences between machines (fused multiply-add, vector widths) do not change which swaps are kept.
#include "core/design/alpha.hpp"

#include <algorithm>
#include <cmath>
#include <cstddef>
#include <limits>
#include <numeric>

#include <Eigen/Dense>
#include <fmt/format.h>

#include "core/design/efficiency.hpp"
#include "core/error.hpp"

namespace pw {

namespace {

constexpr int kMaxEntries = 999;
constexpr int kMaxReplicates = 20;
constexpr double kMargin = 1e-9;                    // relative margin for "better" (see Portability above)
constexpr long long kArrayWork = 60'000'000;        // budget for evaluating starting arrays (~v^3 each)
constexpr long long kSwapWork = 40'000'000;         // budget for interchange, in candidates * v
constexpr int kMinArrays = 1, kMaxArrays = 40;      // starting arrays developed
constexpr int kImprovedStarts = 3;                  // of which the best few are improved

using Index = Eigen::Index;

// A resolvable design in design labels: blocks[c * s + b] is block b of replicate c.
struct Resolvable {
    int v = 0, s = 0, r = 0;
    BlockContents blocks;
};

void validate(const AlphaParams& p) {
    if (p.entries < 3 || p.entries > kMaxEntries)
        throw DesignError(fmt::format("alpha design: entries: expected 3..{} entries, got {}", kMaxEntries, p.entries));
    if (p.block_size < 2 || p.block_size >= p.entries)
        throw DesignError(fmt::format(
            "alpha design: block_size: expected 2..{} plots per incomplete block (fewer than the {} entries), got {}",
            p.entries - 1, p.entries, p.block_size));
    if (p.replicates < 2 || p.replicates > kMaxReplicates)
        throw DesignError(fmt::format("alpha design: replicates: expected 2..{} replicates, got {}", kMaxReplicates,
                                      p.replicates));
}

int blocks_per_replicate(int v, int k) { return (v + k - 1) / k; }

// Develops an alpha array (k' rows x r columns, row-major a[i * r + c]) into a resolvable design.
Resolvable develop(int v, int s, int r, const std::vector<int>& a) {
    const int kk = (v + s - 1) / s;
    Resolvable d{v, s, r, BlockContents(static_cast<std::size_t>(r * s))};
    for (int c = 0; c < r; ++c)
        for (int b = 0; b < s; ++b) {
            auto& block = d.blocks[static_cast<std::size_t>(c * s + b)];
            for (int i = 0; i < kk; ++i) {
                const int t = i * s + (b + a[static_cast<std::size_t>(i * r + c)]) % s;
                if (t < v) block.push_back(t);
            }
        }
    return d;
}

std::vector<int> random_array(int kk, int s, int r, Rng& rng) {
    std::vector<int> a(static_cast<std::size_t>(kk * r), 0);
    for (int i = 1; i < kk; ++i)
        for (int c = 1; c < r; ++c) a[static_cast<std::size_t>(i * r + c)] = static_cast<int>(rng.uniform_below(static_cast<std::uint64_t>(s)));
    return a;
}

// Omega = (C + J/v)^-1 with C = rI - sum_j n_j n_j' / k_j. The design must be connected.
Eigen::MatrixXd omega(const Resolvable& d) {
    const Index v = d.v;
    Eigen::MatrixXd m = Eigen::MatrixXd::Constant(v, v, 1.0 / static_cast<double>(v));
    m.diagonal().array() += static_cast<double>(d.r);
    for (const auto& block : d.blocks) {
        const double inv_k = 1.0 / static_cast<double>(block.size());
        for (int a : block)
            for (int b : block) m(a, b) -= inv_k;
    }
    return m.llt().solve(Eigen::MatrixXd::Identity(v, v));
}

// trace C^+ = trace Omega - 1 (the all-ones direction has eigenvalue 1 in C + J/v).
double trace_c_plus(const Resolvable& d) { return omega(d).trace() - 1.0; }

double efficiency_from_trace(const Resolvable& d, double trace) {
    return static_cast<double>(d.v - 1) / (static_cast<double>(d.r) * trace);
}

// Interchange within replicates with exact updates of trace Omega (see the file comment and docs/alpha.md).
class Interchange {
public:
    Interchange(Resolvable& d, long long& budget, AlphaQuality& q) : d_(d), budget_(budget), q_(q) {}

    // Improves d_ until a pass keeps nothing or the budget is spent. Returns the final trace C^+.
    double run(Rng& rng) {
        double trace = refresh();
        while (budget_ > 0) {
            const double before = trace;
            bool kept = false;
            std::vector<int> reps(static_cast<std::size_t>(d_.r));
            std::iota(reps.begin(), reps.end(), 0);
            rng.shuffle(reps);
            for (int c : reps) {
                std::vector<std::pair<int, int>> pairs;
                for (int b1 = 0; b1 < d_.s; ++b1)
                    for (int b2 = b1 + 1; b2 < d_.s; ++b2) pairs.emplace_back(c * d_.s + b1, c * d_.s + b2);
                rng.shuffle(pairs);
                for (const auto& [j1, j2] : pairs) {
                    if (budget_ <= 0) break;
                    kept |= improve_pair(j1, j2, trace);
                }
            }
            trace = refresh();  // exact again, free of accumulated rounding
            if (!kept || trace > before * (1 - kMargin)) break;
        }
        return trace;
    }

private:
    // Rebuilds Omega and Omega N from scratch; returns trace C^+.
    double refresh() {
        om_ = omega(d_);
        const Index v = d_.v;
        on_.resize(v, static_cast<Index>(d_.blocks.size()));
        for (std::size_t j = 0; j < d_.blocks.size(); ++j) {
            Eigen::VectorXd col = Eigen::VectorXd::Zero(v);
            for (int t : d_.blocks[j]) col += om_.col(t);
            on_.col(static_cast<Index>(j)) = col;
        }
        return om_.trace() - 1.0;
    }

    // Tries every swap between blocks j1 and j2, keeping each that lowers trace Omega by more than the margin.
    bool improve_pair(int j1, int j2, double& trace) {
        auto& n1 = d_.blocks[static_cast<std::size_t>(j1)];
        auto& n2 = d_.blocks[static_cast<std::size_t>(j2)];
        const double inv_k1 = 1.0 / static_cast<double>(n1.size()), inv_k2 = 1.0 / static_cast<double>(n2.size());
        const double h = 0.5 * (inv_k1 + inv_k2);
        const Index v = d_.v;
        bool kept = false;
        x_.resize(v), y_.resize(v);
        for (std::size_t p1 = 0; p1 < n1.size(); ++p1)
            for (std::size_t p2 = 0; p2 < n2.size(); ++p2) {
                const int a = n1[p1], b = n2[p2];
                budget_ -= v;
                ++q_.swaps_tried;
                // Swap a (in block 1) with b (in block 2): d = e_b - e_a,
                // w = n1/k1 - n2/k2 + h d, and C_new = C - (w d' + d w').  y = Omega d, x = Omega w.
                y_.noalias() = om_.col(b) - om_.col(a);
                x_.noalias() = on_.col(j1) * inv_k1 - on_.col(j2) * inv_k2 + h * y_;
                const double o = x_.squaredNorm(), qq = y_.squaredNorm(), pp = x_.dot(y_);
                double wx = 0;  // w' x = w' Omega w
                for (int t : n1) wx += x_[t] * inv_k1;
                for (int t : n2) wx -= x_[t] * inv_k2;
                wx += h * (x_[b] - x_[a]);
                const double beta = x_[b] - x_[a];   // d' Omega w
                const double gamma = y_[b] - y_[a];  // d' Omega d
                // Woodbury: (M - U V')^-1 = Omega + Omega U G^-1 V' Omega, U = [w d], V = [d w],
                // G = I - V' Omega U = [[1-beta, -gamma], [-wx, 1-beta]];
                // change of trace = trace(G^-1 V' Omega^2 U) = (2(1-beta) pp + gamma o + wx qq) / det G.
                const double det = (1 - beta) * (1 - beta) - wx * gamma;
                if (!(det > 1e-9)) continue;  // the swap would disconnect the design
                const double change = (2 * (1 - beta) * pp + gamma * o + wx * qq) / det;
                if (!(change < -kMargin * trace)) continue;
                // Keep: Omega += [x y] G^-1 [y x]'.
                const double g11 = (1 - beta) / det, g12 = gamma / det, g21 = wx / det, g22 = (1 - beta) / det;
                // [x y] G^-1 = [x g11 + y g21, x g12 + y g22]
                const Eigen::VectorXd left1 = x_ * g11 + y_ * g21;
                const Eigen::VectorXd left2 = x_ * g12 + y_ * g22;
                om_.noalias() += left1 * y_.transpose() + left2 * x_.transpose();
                // Omega N follows: unchanged blocks j gain left1 (y' n_j) + left2 (x' n_j); the two changed
                // blocks are summed afresh from the new Omega.
                n1[p1] = b, n2[p2] = a;
                for (std::size_t j = 0; j < d_.blocks.size(); ++j) {
                    auto col = on_.col(static_cast<Index>(j));
                    if (static_cast<int>(j) == j1 || static_cast<int>(j) == j2) {
                        col.setZero();
                        for (int t : d_.blocks[j]) col += om_.col(t);
                    } else {
                        double yn = 0, xn = 0;
                        for (int t : d_.blocks[j]) yn += y_[t], xn += x_[t];
                        col += left1 * yn + left2 * xn;
                    }
                }
                trace += change;
                ++q_.swaps_kept;
                kept = true;
            }
        return kept;
    }

    Resolvable& d_;
    long long& budget_;
    AlphaQuality& q_;
    Eigen::MatrixXd om_, on_;
    Eigen::VectorXd x_, y_;
};

}  // namespace

std::vector<int> alpha_block_sizes(int entries, int block_size) {
    validate({entries, block_size, 2});
    const int s = blocks_per_replicate(entries, block_size);
    std::vector<int> sizes(static_cast<std::size_t>(s), entries / s);
    for (int b = 0; b < entries % s; ++b) ++sizes[static_cast<std::size_t>(b)];
    return sizes;
}

double alpha_upper_bound(int entries, int block_size, int replicates) {
    validate({entries, block_size, replicates});
    const double v = entries, r = replicates;
    const int si = blocks_per_replicate(entries, block_size);
    const double s = si;
    const double kk = (entries + si - 1) / si;  // largest block
    // U0: the v-1 factors of a binary design sum to v - b/r = v - s (trace of R^-1/2 C R^-1/2); their
    // harmonic mean is at most their arithmetic mean (John & Williams 1995, 2.8).
    double bound = (v - s) / (v - 1);
    // U1 (Patterson & Williams 1976): at least v-1-r(s-1) factors equal 1, the other r(s-1) sum to
    // (r-1)(s-1); the harmonic mean is largest when those are all (r-1)/r.
    if (v - 1 >= r * (s - 1)) bound = std::min(bound, (v - 1) * (r - 1) / ((v - 1) * (r - 1) + r * (s - 1)));
    // U2 (r = 2, Williams, Patterson & John 1976): the factors are 1 (v-2s+1 times) and pairs (1 -+ c_i)/2,
    // with c_i the canonical correlations of the two replicates' blocks; sum c_i^2 >= s/k - 1, so
    // sum 1/e >= (v-2s+1) + 4(s-1) / Ec with Ec = 1 - max(0, s/k - 1)/(s-1).
    if (replicates == 2) {
        const double ec = 1 - std::max(0.0, s / kk - 1) / (s - 1);
        bound = std::min(bound, (v - 1) / ((v - 2 * s + 1) + 4 * (s - 1) / ec));
    }
    return bound;
}

double alpha_efficiency_factor(const DesignAssignment& design) {
    int blocks = 0, entries = 0;
    for (const auto& u : design.units) {
        if (u.block < 1) throw DesignError(fmt::format("alpha design: a unit has block {}, expected 1 or more", u.block));
        if (u.treatment < 0)
            throw DesignError(fmt::format("alpha design: a unit has entry {}, expected 0 or more", u.treatment));
        blocks = std::max(blocks, u.block);
        entries = std::max(entries, u.treatment + 1);
    }
    BlockContents contents(static_cast<std::size_t>(blocks));
    for (const auto& u : design.units) contents[static_cast<std::size_t>(u.block - 1)].push_back(u.treatment);
    std::erase_if(contents, [](const std::vector<int>& b) { return b.empty(); });
    return block_design_efficiency(entries, contents);
}

DesignAssignment alpha_design(const AlphaParams& p, Rng& rng, AlphaQuality* quality) {
    validate(p);
    const int v = p.entries, r = p.replicates;
    const int s = blocks_per_replicate(v, p.block_size);
    const int kk = (v + s - 1) / s;
    AlphaQuality q;

    // 1. Starting designs from random alpha arrays; keep the most efficient connected ones.
    const long long v3 = static_cast<long long>(v) * v * v;
    const int arrays = static_cast<int>(std::clamp<long long>(kArrayWork / v3, kMinArrays, kMaxArrays));
    std::vector<std::pair<double, Resolvable>> starts;  // (trace C^+, design)
    for (int n = 0; n < arrays; ++n) {
        Resolvable d = develop(v, s, r, random_array(kk, s, r, rng));
        if (!block_design_connected(v, d.blocks)) continue;
        // With a single array there is nothing to choose between: skip its O(v^3) evaluation.
        starts.emplace_back(arrays > 1 ? trace_c_plus(d) : 0.0, std::move(d));
    }
    if (starts.empty()) {
        // Every random array gave a disconnected design (possible only for tiny s): the array with rows
        // 0, 1, 2, ... in column c = i * c is a lattice-like start, connected whenever s >= 2 and r >= 2.
        std::vector<int> a(static_cast<std::size_t>(kk * r));
        for (int i = 0; i < kk; ++i)
            for (int c = 0; c < r; ++c) a[static_cast<std::size_t>(i * r + c)] = (i * c) % s;
        Resolvable d = develop(v, s, r, a);
        if (!block_design_connected(v, d.blocks))
            throw DesignError(fmt::format("alpha design: no connected design found for {} entries in blocks of {}", v,
                                          p.block_size));
        starts.emplace_back(trace_c_plus(d), std::move(d));
    }
    // Keep the best few, chosen in draw order: a later start replaces the current choice only when better by
    // more than the margin, so rounding differences between machines cannot reorder near-ties.
    std::vector<Resolvable> chosen;
    while (!starts.empty() && chosen.size() < static_cast<std::size_t>(kImprovedStarts)) {
        std::size_t pick = 0;
        for (std::size_t n = 1; n < starts.size(); ++n)
            if (starts[n].first < starts[pick].first * (1 - kMargin)) pick = n;
        chosen.push_back(std::move(starts[pick].second));
        starts.erase(starts.begin() + static_cast<std::ptrdiff_t>(pick));
    }

    // 2. Interchange on the kept starts, best first, while the budget lasts (the first always runs).
    std::size_t best = 0;
    double best_trace = std::numeric_limits<double>::infinity();
    long long budget = kSwapWork;
    for (std::size_t n = 0; n < chosen.size() && (n == 0 || budget > 0); ++n) {
        Interchange improver(chosen[n], budget, q);
        const double trace = improver.run(rng);
        ++q.starts;
        if (trace < best_trace * (1 - kMargin)) best_trace = trace, best = n;
    }
    Resolvable& d = chosen[best];

    // 3. Randomization: entries to labels, replicate order, block order within replicates (larger blocks
    //    first), plot order within blocks.
    std::vector<int> entry_of(static_cast<std::size_t>(v));
    std::iota(entry_of.begin(), entry_of.end(), 0);
    rng.shuffle(entry_of);
    std::vector<int> rep_order(static_cast<std::size_t>(r));
    std::iota(rep_order.begin(), rep_order.end(), 0);
    rng.shuffle(rep_order);

    DesignAssignment out;
    out.design_id = kAlphaDesignId;
    out.columns = {"rep", "incomplete_block"};
    out.shapes.reserve(static_cast<std::size_t>(r * s));
    out.units.reserve(static_cast<std::size_t>(r * v));
    for (int rep = 1; rep <= r; ++rep) {
        const int c = rep_order[static_cast<std::size_t>(rep - 1)];
        std::vector<int> order(static_cast<std::size_t>(s));
        std::iota(order.begin(), order.end(), c * s);
        rng.shuffle(order);
        std::stable_sort(order.begin(), order.end(), [&](int x, int y) {
            return d.blocks[static_cast<std::size_t>(x)].size() > d.blocks[static_cast<std::size_t>(y)].size();
        });
        for (int ib = 1; ib <= s; ++ib) {
            std::vector<int> plots = d.blocks[static_cast<std::size_t>(order[static_cast<std::size_t>(ib - 1)])];
            rng.shuffle(plots);
            out.shapes.push_back({1, static_cast<int>(plots.size())});
            for (std::size_t pos = 0; pos < plots.size(); ++pos) {
                DesignUnit u;
                u.block = (rep - 1) * s + ib;
                u.rep = rep;
                u.incomplete_block = ib;
                u.treatment = entry_of[static_cast<std::size_t>(plots[pos])];
                u.cell_row = 0;
                u.cell_col = static_cast<int>(pos);
                out.units.push_back(u);
            }
        }
    }

    if (quality) {
        q.efficiency_factor = efficiency_from_trace(d, best_trace);
        q.upper_bound = alpha_upper_bound(v, p.block_size, r);
        *quality = q;
    }
    return out;
}

}  // namespace pw
