// The randomized complete block design's assignment (rcbd.hpp) and the serpentine dealing it shares with
// the CRD. Geometry lives in geometry.cpp; validation against common practice in design.cpp.
//
// Invariants: every block holds each treatment 0..t-1 exactly once; block b's cells are the first t cells
// of its R x p grid in serpentine_cells order, so short last rows keep their plots at the stake side.
#include "core/design/rcbd.hpp"

#include <algorithm>
#include <numeric>

namespace pw {

std::vector<std::pair<int, int>> serpentine_cells(int count, int per_row, int first_row_parity) {
    std::vector<std::pair<int, int>> cells;
    cells.reserve(static_cast<std::size_t>(count));
    const int p = std::max(1, std::min(per_row, count));
    const int rows = (count + p - 1) / p;
    for (int k = 0; k < rows; ++k) {
        const int in_row = k + 1 < rows ? p : count - (rows - 1) * p;
        const bool up = (first_row_parity + k) % 2 == 0;
        for (int s = 0; s < in_row; ++s) cells.emplace_back(k, up ? s : in_row - 1 - s);
    }
    return cells;
}

DesignAssignment rcbd_assignment(int treatments, int blocks, int plots_per_row, Rng& rng) {
    const int t = treatments;
    const int p = std::max(1, std::min(plots_per_row, t));
    const int rows = (t + p - 1) / p;
    DesignAssignment a;
    a.design_id = kRcbdDesignId;
    a.shapes.assign(static_cast<std::size_t>(blocks), BlockShape{rows, p});
    a.units.reserve(static_cast<std::size_t>(t) * static_cast<std::size_t>(blocks));
    for (int b = 1; b <= blocks; ++b) {
        std::vector<int> order(static_cast<std::size_t>(t));
        std::iota(order.begin(), order.end(), 0);
        rng.shuffle(order);
        const auto cells = serpentine_cells(t, p, ((b - 1) * rows) % 2);
        for (std::size_t i = 0; i < cells.size(); ++i) {
            DesignUnit u;
            u.block = b;
            u.rep = b;
            u.treatment = order[i];
            u.cell_row = cells[i].first;
            u.cell_col = cells[i].second;
            a.units.push_back(u);
        }
    }
    return a;
}

}  // namespace pw
