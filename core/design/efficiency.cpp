// Canonical efficiency factors of a block design from its information matrix (see efficiency.hpp for the
// definitions and sources). Sizes: a dense v x v symmetric eigenproblem, O(v^3); v = 1000 takes well under
// a second.
#include "core/design/efficiency.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include <Eigen/Dense>
#include <fmt/format.h>

#include "core/error.hpp"

namespace pw {

namespace {

void validate(int treatments, const BlockContents& blocks, std::vector<int>& replications) {
    if (treatments < 2)
        throw DesignError(fmt::format("block design: expected at least 2 treatments, got {}", treatments));
    replications.assign(static_cast<std::size_t>(treatments), 0);
    for (std::size_t j = 0; j < blocks.size(); ++j) {
        if (blocks[j].empty()) throw DesignError(fmt::format("block design: block {} is empty", j + 1));
        for (int t : blocks[j]) {
            if (t < 0 || t >= treatments)
                throw DesignError(fmt::format("block design: block {} holds treatment {}, expected 0..{}", j + 1, t,
                                              treatments - 1));
            ++replications[static_cast<std::size_t>(t)];
        }
    }
    for (int i = 0; i < treatments; ++i)
        if (replications[static_cast<std::size_t>(i)] == 0)
            throw DesignError(fmt::format("block design: treatment {} appears in no block", i));
}

int find_root(std::vector<int>& parent, int i) {
    while (parent[static_cast<std::size_t>(i)] != i) {
        parent[static_cast<std::size_t>(i)] = parent[static_cast<std::size_t>(parent[static_cast<std::size_t>(i)])];
        i = parent[static_cast<std::size_t>(i)];
    }
    return i;
}

}  // namespace

bool block_design_connected(int treatments, const BlockContents& blocks) {
    std::vector<int> replications;
    validate(treatments, blocks, replications);
    std::vector<int> parent(static_cast<std::size_t>(treatments));
    std::iota(parent.begin(), parent.end(), 0);
    int groups = treatments;
    for (const auto& block : blocks)
        for (std::size_t p = 1; p < block.size(); ++p) {
            const int a = find_root(parent, block[0]);
            const int b = find_root(parent, block[p]);
            if (a != b) parent[static_cast<std::size_t>(a)] = b, --groups;
        }
    return groups == 1;
}

std::vector<double> canonical_efficiency_factors(int treatments, const BlockContents& blocks) {
    std::vector<int> replications;
    validate(treatments, blocks, replications);
    const int v = treatments;
    // C = R - N K^-1 N' (John & Williams 1995, ch. 2), accumulated block by block:
    // block j adds n_j n_j' / k_j to N K^-1 N'.
    Eigen::MatrixXd c = Eigen::MatrixXd::Zero(v, v);
    for (int i = 0; i < v; ++i) c(i, i) = replications[static_cast<std::size_t>(i)];
    for (const auto& block : blocks) {
        const double inv_k = 1.0 / static_cast<double>(block.size());
        for (int a : block)
            for (int b : block) c(a, b) -= inv_k;
    }
    // R^-1/2 C R^-1/2: its eigenvalues are the canonical efficiency factors (and the trivial zero).
    Eigen::VectorXd inv_sqrt_r(v);
    for (int i = 0; i < v; ++i) inv_sqrt_r(i) = 1.0 / std::sqrt(static_cast<double>(replications[static_cast<std::size_t>(i)]));
    const Eigen::MatrixXd a = inv_sqrt_r.asDiagonal() * c * inv_sqrt_r.asDiagonal();
    Eigen::SelfAdjointEigenSolver<Eigen::MatrixXd> solver(a, Eigen::EigenvaluesOnly);
    if (solver.info() != Eigen::Success) throw DesignError("block design: the eigenvalue computation did not converge");
    std::vector<double> e(solver.eigenvalues().data(), solver.eigenvalues().data() + v);
    std::sort(e.begin(), e.end());
    e.erase(e.begin());  // the zero of the all-ones contrast (R^1/2 1 is its eigenvector)
    // Rounding leaves values like -1e-16 or 1 + 1e-15: clamp to the factors' range [0, 1].
    for (double& x : e) x = std::clamp(x, 0.0, 1.0);
    return e;
}

double block_design_efficiency(int treatments, const BlockContents& blocks) {
    if (!block_design_connected(treatments, blocks)) return 0.0;
    const std::vector<double> e = canonical_efficiency_factors(treatments, blocks);
    double sum_inverse = 0;
    for (double x : e) {
        if (x <= 0) return 0.0;
        sum_inverse += 1.0 / x;
    }
    return static_cast<double>(e.size()) / sum_inverse;
}

}  // namespace pw
