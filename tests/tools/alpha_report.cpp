// Report of the alpha-design generator (core/design/alpha.hpp) for the sizes docs/alpha.md tabulates:
// v, k, r, the efficiency factor E of the generated design, the upper bound U, E/U and the wall time of one
// generation. Not a test (timings depend on the machine); docs/alpha.md shows its output and command.
//
// Usage: pw_alpha_report [SEED]   (default seed 20240601). E is recomputed from the returned assignment by
// the eigenvalue route (core/design/efficiency.hpp), independent of the generator's own bookkeeping.
#include <chrono>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string>

#include "core/design/alpha.hpp"

int main(int argc, char** argv) {
    const std::uint64_t seed = argc > 1 ? std::strtoull(argv[1], nullptr, 10) : 20240601ULL;
    const pw::AlphaParams sizes[] = {{24, 4, 2}, {48, 6, 3}, {100, 10, 3}, {200, 10, 2}};
    std::printf("seed %llu\n", static_cast<unsigned long long>(seed));
    std::printf("%5s %4s %3s %9s %9s %8s %9s %8s %10s\n", "v", "k", "r", "E", "U", "E/U", "seconds", "starts",
                "swaps kept");
    int status = 0;
    for (const auto& p : sizes) {
        pw::Rng rng(seed);
        pw::AlphaQuality q;
        const auto t0 = std::chrono::steady_clock::now();
        const pw::DesignAssignment d = pw::alpha_design(p, rng, &q);
        const auto t1 = std::chrono::steady_clock::now();
        const double e = pw::alpha_efficiency_factor(d);
        const double seconds = std::chrono::duration<double>(t1 - t0).count();
        std::printf("%5d %4d %3d %9.6f %9.6f %8.4f %9.3f %8d %10lld/%lld\n", p.entries, p.block_size, p.replicates,
                    e, q.upper_bound, e / q.upper_bound, seconds, q.starts, q.swaps_kept, q.swaps_tried);
        if (e / q.upper_bound < 0.98 || seconds >= 1.0) status = 1;
    }
    return status;
}
