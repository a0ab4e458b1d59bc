// Writes generated alpha designs for the outside check in alpha_efficiency_check.py: one JSON object per line
// with v, k, r, seed, the efficiency factor and upper bound plotwright reports, and every unit.
//
// Usage: pw_alpha_design_writer V K R SEED [V K R SEED ...]
#include <cstdio>
#include <cstdlib>

#include "core/design/alpha.hpp"
#include "core/error.hpp"

int main(int argc, char** argv) {
    if (argc < 5 || (argc - 1) % 4 != 0) {
        std::fprintf(stderr, "usage: %s V K R SEED [V K R SEED ...]\n", argv[0]);
        return 2;
    }
    try {
        for (int i = 1; i + 3 < argc; i += 4) {
            const pw::AlphaParams p{std::atoi(argv[i]), std::atoi(argv[i + 1]), std::atoi(argv[i + 2])};
            const unsigned long long seed = std::strtoull(argv[i + 3], nullptr, 10);
            pw::Rng rng(seed);
            pw::AlphaQuality q;
            const pw::DesignAssignment d = pw::alpha_design(p, rng, &q);
            std::printf("{\"v\":%d,\"k\":%d,\"r\":%d,\"seed\":%llu,\"E\":%.17g,\"E_assignment\":%.17g,\"U\":%.17g,"
                        "\"shapes\":[",
                        p.entries, p.block_size, p.replicates, seed, q.efficiency_factor,
                        pw::alpha_efficiency_factor(d), q.upper_bound);
            for (std::size_t b = 0; b < d.shapes.size(); ++b)
                std::printf("%s[%d,%d]", b ? "," : "", d.shapes[b].rows, d.shapes[b].cols);
            std::printf("],\"units\":[");
            for (std::size_t n = 0; n < d.units.size(); ++n) {
                const auto& u = d.units[n];
                std::printf("%s[%d,%d,%d,%d,%d,%d]", n ? "," : "", u.block, u.rep, u.incomplete_block, u.treatment,
                            u.cell_row, u.cell_col);
            }
            std::printf("]}\n");
        }
    } catch (const pw::Error& e) {
        std::fprintf(stderr, "%s\n", e.what());
        return 1;
    }
    return 0;
}
