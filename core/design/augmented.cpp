// The augmented design's assignment and notes (core/design/augmented.hpp).
//
// Invariants of every result: B blocks; block k holds checks 0..c-1 once each and q+1 (k <= e) or q new
// entries; each new entry c..c+n-1 occurs once in the whole trial; block k's cells are 0..size_k-1 in row 0.
#include "core/design/augmented.hpp"

#include <numeric>

#include <fmt/format.h>

#include "core/error.hpp"

namespace pw {

DesignAssignment augmented(int checks, int new_entries, int blocks, Rng& rng) {
    if (checks < 2)
        throw DesignError(fmt::format(
            "augmented design: checks must be at least 2 (the error is estimated from the checks with "
            "(checks - 1)(blocks - 1) degrees of freedom), got {}",
            checks));
    if (new_entries < 1)
        throw DesignError(fmt::format("augmented design: new_entries must be at least 1, got {}", new_entries));
    if (blocks < 2 || blocks > kAugmentedMaxBlocks)
        throw DesignError(fmt::format(
            "augmented design: blocks must be from 2 to {} (each check needs at least two replicates), got {}",
            kAugmentedMaxBlocks, blocks));
    const int q = new_entries / blocks, e = new_entries % blocks;
    const int largest = checks + q + (e > 0 ? 1 : 0);
    if (largest > kAugmentedMaxPlotsPerBlock)
        throw DesignError(fmt::format(
            "augmented design: {} checks and {} new entries in {} blocks give blocks of {} plots, more than the "
            "{} a block can number; use more blocks",
            checks, new_entries, blocks, largest, kAugmentedMaxPlotsPerBlock));

    DesignAssignment out;
    out.design_id = "augmented/1";
    out.columns = {"incomplete_block"};
    out.units.reserve(static_cast<std::size_t>(checks * blocks + new_entries));

    // Step 1: the new entries in random order, dealt to blocks in consecutive runs.
    std::vector<int> entries(static_cast<std::size_t>(new_entries));
    std::iota(entries.begin(), entries.end(), checks);
    rng.shuffle(entries);

    // Step 2: each block's checks and new entries shuffled over its cells.
    std::size_t next = 0;
    for (int block = 1; block <= blocks; ++block) {
        const int n_new = q + (block <= e ? 1 : 0);
        std::vector<int> cells(static_cast<std::size_t>(checks));
        std::iota(cells.begin(), cells.end(), 0);
        for (int i = 0; i < n_new; ++i) cells.push_back(entries[next++]);
        rng.shuffle(cells);
        out.shapes.push_back(BlockShape{1, static_cast<int>(cells.size())});
        for (std::size_t p = 0; p < cells.size(); ++p) {
            DesignUnit u;
            u.block = block;
            u.incomplete_block = block;
            u.rep = 0;
            u.treatment = cells[p];
            u.cell_row = 0;
            u.cell_col = static_cast<int>(p);
            out.units.push_back(u);
        }
    }
    return out;
}

std::vector<std::string> augmented_notes(int checks, int new_entries, int blocks) {
    std::vector<std::string> notes;
    // Common practice (docs/designs-more.md): 2 to 4 checks per block.
    if (checks > 4)
        notes.push_back(fmt::format(
            "{} checks in every block: commonly 2 to 4; more checks take plots from the new entries.", checks));
    // Common practice: checks 10 to 20% of the plots.
    const int check_plots = checks * blocks, plots = check_plots + new_entries;
    if (plots > 0) {
        const double share = 100.0 * check_plots / plots;
        if (share < 10.0 || share > 20.0)
            notes.push_back(fmt::format(
                "Checks fill {} of {} plots ({:.1f}%): commonly 10 to 20%; {}.", check_plots, plots, share,
                share < 10.0 ? "block effects and the error rest on few check plots"
                             : "fewer blocks or checks would leave more plots to new entries"));
    }
    // Error from the checks: (c - 1)(B - 1) degrees of freedom (Federer 1956, from memory); at least 12 asked
    // for by EPPO PP 1/152(4), 2012.
    const int df = (checks - 1) * (blocks - 1);
    if (df < 12)
        notes.push_back(fmt::format(
            "The error is estimated from the checks with ({} - 1) x ({} - 1) = {} degrees of freedom, fewer than "
            "the 12 commonly asked for (EPPO PP 1/152): add blocks or checks.",
            checks, blocks, df));
    return notes;
}

}  // namespace pw
