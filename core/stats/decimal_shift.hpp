// Reading a column of decimal numbers without losing the digits that matter to an analysis of variance.
//
// Yields such as 1000000000000.4 are not representable in binary floating point: the nearest double is
// 6e-5 away, an error that a sum of squares of deviations of 0.1 cannot recover (NIST StRD SmLs07–09,
// "higher difficulty"). Every SS, F and p is unchanged by subtracting a constant, so the column is shifted
// exactly while still in decimal: each value is read as an integer mantissa and a power of ten, all are
// brought to the finest power, the first value's mantissa is subtracted in integer arithmetic, and only the
// differences become doubles (one rounding each). Means add the offset back.
//
// Falls back to plain conversion (offset 0, `exact` false) when a mantissa would not fit in 120 bits.
#pragma once
#include <string>
#include <vector>

namespace pw {

struct ShiftedColumn {
    double offset = 0;              // the value subtracted (the first number, rounded to double)
    std::vector<double> values;     // value − offset per cell; NaN for a missing cell
    bool exact = false;             // the subtraction was done in decimal
};

// Cells hold decimal numbers ([+-]digits[.digits][e[+-]digits]); `missing(i)` cells (empty or "NA" as
// decided by the caller) are given as empty strings and become NaN. Returns the index of the first cell
// that is not a number in `bad` (and no values) — the caller names it in its refusal.
ShiftedColumn shift_decimal(const std::vector<std::string>& cells, std::size_t& bad);

}  // namespace pw
