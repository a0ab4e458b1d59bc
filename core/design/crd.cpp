// The completely randomized design's assignment (crd.hpp).
//
// Invariants: treatment i appears exactly r times; the n = t r plots fill the first n cells of one grid of
// p cells per row in serpentine order (a short last row at the stake side).
#include "core/design/crd.hpp"

#include <algorithm>
#include <cmath>

#include "core/design/rcbd.hpp"

namespace pw {

int crd_square_row(int plots) {
    int p = static_cast<int>(std::ceil(std::sqrt(static_cast<double>(plots))));
    while (p > 1 && (p - 1) * (p - 1) >= plots) --p;  // guard against rounding up past the integer root
    while (p * p < plots) ++p;
    return std::max(1, p);
}

DesignAssignment crd_assignment(int treatments, int replicates, int per_row, Rng& rng) {
    const int n = treatments * replicates;
    const int p = std::max(1, std::min(per_row, n));
    DesignAssignment a;
    a.design_id = kCrdDesignId;
    a.shapes.push_back(BlockShape{(n + p - 1) / p, p});
    std::vector<int> list;
    list.reserve(static_cast<std::size_t>(n));
    for (int i = 0; i < treatments; ++i) list.insert(list.end(), static_cast<std::size_t>(replicates), i);
    rng.shuffle(list);
    const auto cells = serpentine_cells(n, p, 0);
    for (std::size_t i = 0; i < cells.size(); ++i) {
        DesignUnit u;
        u.block = 1;
        u.treatment = list[i];
        u.cell_row = cells[i].first;
        u.cell_col = cells[i].second;
        a.units.push_back(u);
    }
    return a;
}

}  // namespace pw
