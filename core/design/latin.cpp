// Latin squares (core/design/latin.hpp): the list of reduced squares for t <= 6, the randomized square and
// the agronomist's notes.
//
// Invariant of every result: each symbol 0..t-1 once in every square row and once in every square column;
// t*t units in one block of shape {t, t}, one per cell.
#include "core/design/latin.hpp"

#include <array>
#include <numeric>

#include <fmt/format.h>

#include "core/error.hpp"

namespace pw {

namespace {

using Square = std::vector<std::uint8_t>;

// Every reduced square of order t: cells (i, j), i, j >= 1, filled row by row, trying symbols 0..t-1 in
// increasing order, skipping symbols already in the row or column. Completed squares come out in
// lexicographic order of their row-by-row string. Order 6 visits well under a million partial squares.
std::vector<Square> enumerate_reduced(int t) {
    const auto n = static_cast<std::size_t>(t);
    Square s(n * n, 0);
    std::vector<std::uint32_t> row_used(n, 0), col_used(n, 0);  // bit k: symbol k used
    for (std::size_t k = 0; k < n; ++k) {
        s[k] = static_cast<std::uint8_t>(k);       // first row 0..t-1
        s[k * n] = static_cast<std::uint8_t>(k);   // first column 0..t-1
        row_used[0] |= 1u << k;
        col_used[0] |= 1u << k;
        row_used[k] |= 1u << k;
        col_used[k] |= 1u << k;
    }
    std::vector<Square> out;
    const std::size_t cells = (n - 1) * (n - 1);
    // Iterative depth-first search over the (t-1)^2 free cells; next_symbol[d] is the next symbol to try.
    std::vector<int> next_symbol(cells + 1, 0);
    std::size_t d = 0;
    while (true) {
        if (d == cells) {
            out.push_back(s);
            if (d == 0) break;
            --d;
            const std::size_t i = 1 + d / (n - 1), j = 1 + d % (n - 1);
            row_used[i] &= ~(1u << s[i * n + j]);
            col_used[j] &= ~(1u << s[i * n + j]);
            continue;
        }
        const std::size_t i = 1 + d / (n - 1), j = 1 + d % (n - 1);
        int k = next_symbol[d];
        while (k < t && (((row_used[i] | col_used[j]) >> k) & 1u)) ++k;
        if (k < t) {
            s[i * n + j] = static_cast<std::uint8_t>(k);
            row_used[i] |= 1u << k;
            col_used[j] |= 1u << k;
            next_symbol[d] = k + 1;
            ++d;
            next_symbol[d] = 0;
        } else {
            if (d == 0) break;
            --d;
            const std::size_t pi = 1 + d / (n - 1), pj = 1 + d % (n - 1);
            row_used[pi] &= ~(1u << s[pi * n + pj]);
            col_used[pj] &= ~(1u << s[pi * n + pj]);
        }
    }
    return out;
}

void check_side(int t, int max_side, const char* what) {
    if (t < kLatinMinSide || t > max_side)
        throw DesignError(fmt::format("{}: expected a square side (number of treatments) from {} to {}, got {}",
                                      what, kLatinMinSide, max_side, t));
}

}  // namespace

const std::vector<std::vector<std::uint8_t>>& latin_reduced_squares(int t) {
    check_side(t, 6, "latin_reduced_squares");
    // Built once, on first use, for all four orders (C++ guarantees a thread-safe initialization).
    static const std::array<std::vector<Square>, 4> lists = {enumerate_reduced(3), enumerate_reduced(4),
                                                             enumerate_reduced(5), enumerate_reduced(6)};
    return lists[static_cast<std::size_t>(t - 3)];
}

DesignAssignment latin_square(int t, Rng& rng) {
    check_side(t, kLatinMaxSide, "Latin square");
    const auto n = static_cast<std::size_t>(t);

    // Step 1: the starting square.
    Square start(n * n);
    if (t <= 6) {
        const auto& list = latin_reduced_squares(t);
        start = list[static_cast<std::size_t>(rng.uniform_below(list.size()))];
    } else {
        for (std::size_t i = 0; i < n; ++i)
            for (std::size_t j = 0; j < n; ++j) start[i * n + j] = static_cast<std::uint8_t>((i + j) % n);
    }

    // Step 2: row order, column order, symbol map, in that order.
    std::vector<int> rows(n), cols(n), symbols(n);
    std::iota(rows.begin(), rows.end(), 0);
    std::iota(cols.begin(), cols.end(), 0);
    std::iota(symbols.begin(), symbols.end(), 0);
    rng.shuffle(rows);
    rng.shuffle(cols);
    rng.shuffle(symbols);

    // Step 3: L[i][j] = symbols[start[rows[i]][cols[j]]].
    DesignAssignment a;
    a.design_id = "latin/1";
    a.shapes = {BlockShape{t, t}};
    a.columns = {"square_row", "square_col"};
    a.units.reserve(n * n);
    for (std::size_t i = 0; i < n; ++i)
        for (std::size_t j = 0; j < n; ++j) {
            DesignUnit u;
            u.block = 1;
            u.rep = 1;
            u.cell_row = static_cast<int>(i);
            u.cell_col = static_cast<int>(j);
            u.square_row = u.cell_row + 1;
            u.square_col = u.cell_col + 1;
            const auto from = static_cast<std::size_t>(rows[i]) * n + static_cast<std::size_t>(cols[j]);
            u.treatment = symbols[start[from]];
            a.units.push_back(u);
        }
    return a;
}

std::vector<std::string> latin_square_notes(int t) {
    std::vector<std::string> notes;
    // Error degrees of freedom of one square: t^2 - 1 - 3(t - 1) = (t - 1)(t - 2) (Gomez & Gomez 1984, 2.3,
    // from memory). Residual df of at least 12: EPPO PP 1/152(4), 2012.
    const int df = (t - 1) * (t - 2);
    if (df < 12)
        notes.push_back(fmt::format(
            "A single {0}x{0} Latin square leaves {1} error degrees of freedom, fewer than the 12 commonly asked "
            "for (EPPO PP 1/152): consider replicating the square or another design.",
            t, df));
    // Usual sizes 4 to 8 treatments (Gomez & Gomez 1984, 2.3, from memory).
    if (t > 8)
        notes.push_back(fmt::format(
            "A {0}x{0} Latin square is larger than the usual 4 to 8 treatments: rows and columns {0} plots long may "
            "no longer be uniform; consider an incomplete block or row-column design.",
            t));
    return notes;
}

}  // namespace pw
