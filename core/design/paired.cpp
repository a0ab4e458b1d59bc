// The paired-plots assignment (paired.hpp).
//
// Invariants: every pair holds treatment 0 and treatment 1 once each, side by side in cells (0, 0), (0, 1).
#include "core/design/paired.hpp"

namespace pw {

DesignAssignment paired_assignment(int pairs, Rng& rng) {
    DesignAssignment a;
    a.design_id = kPairedDesignId;
    a.shapes.assign(static_cast<std::size_t>(pairs), BlockShape{1, 2});
    for (int b = 1; b <= pairs; ++b) {
        std::vector<int> order{0, 1};
        rng.shuffle(order);
        for (int i = 0; i < 2; ++i) {
            DesignUnit u;
            u.block = b;
            u.treatment = order[static_cast<std::size_t>(i)];
            u.cell_col = i;
            a.units.push_back(u);
        }
    }
    return a;
}

}  // namespace pw
