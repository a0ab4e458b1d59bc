// Split-plot and strip-plot assignments (core/design/split_plot.hpp).
//
// Invariants of every result: blocks 1..B; a split-plot block holds a*b units in one row, main plot m
// covering cells m*b .. m*b+b-1 with a single A level and every B level once; a strip-plot block holds a b x a
// grid in which each column carries one A level, each row one B level, and every (A, B) pair occurs once.
#include "core/design/split_plot.hpp"

#include <numeric>

#include <fmt/format.h>

#include "core/error.hpp"

namespace pw {

namespace {

void validate(const char* design, const char* a_name, int a, const char* b_name, int b, int blocks) {
    if (a < 2)
        throw DesignError(fmt::format("{}: {} must be at least 2, got {}", design, a_name, a));
    if (b < 2)
        throw DesignError(fmt::format("{}: {} must be at least 2, got {}", design, b_name, b));
    // Two blocks at least, or the main-plot error (blocks x A) has no degrees of freedom.
    if (blocks < 2 || blocks > kFactorialMaxBlocks)
        throw DesignError(fmt::format("{}: blocks must be from 2 to {}, got {}", design, kFactorialMaxBlocks, blocks));
    if (a * b > kFactorialMaxPlotsPerBlock)
        throw DesignError(fmt::format("{}: {} x {} = {} plots per block, more than the {} a block can number",
                                      design, a, b, a * b, kFactorialMaxPlotsPerBlock));
}

std::vector<int> shuffled(int n, Rng& rng) {
    std::vector<int> v(static_cast<std::size_t>(n));
    std::iota(v.begin(), v.end(), 0);
    rng.shuffle(v);
    return v;
}

}  // namespace

DesignAssignment split_plot(int main_levels, int sub_levels, int blocks, Rng& rng) {
    validate("split-plot", "main_levels", main_levels, "sub_levels", sub_levels, blocks);
    const int a = main_levels, b = sub_levels;
    DesignAssignment out;
    out.design_id = "split/1";
    out.columns = {"rep", "main", "sub"};
    out.shapes.assign(static_cast<std::size_t>(blocks), BlockShape{1, a * b});
    out.units.reserve(static_cast<std::size_t>(a * b * blocks));
    for (int block = 1; block <= blocks; ++block) {
        const auto pa = shuffled(a, rng);
        for (int m = 0; m < a; ++m) {
            const auto pb = shuffled(b, rng);
            for (int s = 0; s < b; ++s) {
                DesignUnit u;
                u.block = block;
                u.rep = block;
                u.main = m + 1;
                u.sub = s + 1;
                u.treatment = pa[static_cast<std::size_t>(m)] * b + pb[static_cast<std::size_t>(s)];
                u.cell_row = 0;
                u.cell_col = m * b + s;
                out.units.push_back(u);
            }
        }
    }
    return out;
}

DesignAssignment strip_plot(int a_levels, int b_levels, int blocks, Rng& rng) {
    validate("strip-plot", "a_levels", a_levels, "b_levels", b_levels, blocks);
    const int a = a_levels, b = b_levels;
    DesignAssignment out;
    out.design_id = "strip/1";
    out.columns = {"rep", "main", "sub"};
    out.shapes.assign(static_cast<std::size_t>(blocks), BlockShape{b, a});
    out.units.reserve(static_cast<std::size_t>(a * b * blocks));
    for (int block = 1; block <= blocks; ++block) {
        const auto pa = shuffled(a, rng);
        const auto pb = shuffled(b, rng);
        for (int r = 0; r < b; ++r)
            for (int c = 0; c < a; ++c) {
                DesignUnit u;
                u.block = block;
                u.rep = block;
                u.main = c + 1;
                u.sub = r + 1;
                u.treatment = pa[static_cast<std::size_t>(c)] * b + pb[static_cast<std::size_t>(r)];
                u.cell_row = r;
                u.cell_col = c;
                out.units.push_back(u);
            }
    }
    return out;
}

std::vector<std::string> split_plot_notes(int main_levels, int blocks) {
    std::vector<std::string> notes;
    // Main-plot error (blocks x A): (r - 1)(a - 1) degrees of freedom (Gomez & Gomez 1984, 3.4, from memory).
    const int df_a = (blocks - 1) * (main_levels - 1);
    if (blocks < 3)
        notes.push_back(fmt::format(
            "{} blocks: split-plot and strip-plot trials commonly have at least 3, because the main-plot factor "
            "is tested against blocks x main plots with only {} degrees of freedom.",
            blocks, df_a));
    if (main_levels > 4)
        notes.push_back(fmt::format(
            "{} main-plot levels: commonly 2 to 4, since main plots are large and their factor is estimated less "
            "precisely than the subplot factor.",
            main_levels));
    return notes;
}

}  // namespace pw
