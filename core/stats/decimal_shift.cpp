// Exact decimal shift of a column of numbers (decimal_shift.hpp).
//
// A number d₁…dₘ.f₁…f_k × 10^e is held as the integer mantissa M = d₁…dₘf₁…f_k and the exponent e − k.
// Mantissas are aligned to the smallest exponent E (multiplied by 10^(exponent − E)) and the first one is
// subtracted; the difference D is exact, and D·10^E is rounded once to double (D converted, then divided
// by the exact double 10^−E, at most two roundings of half an ulp each, both relative).
#include "core/stats/decimal_shift.hpp"

#include <charconv>
#include <cmath>
#include <limits>
#include <optional>

namespace pw {

namespace {

__extension__ typedef __int128 Int;
constexpr Int kLimit = static_cast<Int>(1) << 120;

struct Decimal {
    Int mantissa = 0;
    int exponent = 0;
};

// Parses [+-]digits[.digits][(e|E)[+-]digits]; nullopt if malformed or too long for exact work.
std::optional<Decimal> parse(const std::string& s, bool& too_long) {
    std::size_t i = 0;
    bool negative = false;
    if (i < s.size() && (s[i] == '+' || s[i] == '-')) negative = s[i++] == '-';
    Decimal d;
    bool any = false;
    for (; i < s.size() && s[i] >= '0' && s[i] <= '9'; ++i, any = true) {
        if (d.mantissa < kLimit / 10) {
            d.mantissa = d.mantissa * 10 + (s[i] - '0');
        } else {
            too_long = true;
            ++d.exponent;
        }
    }
    if (i < s.size() && s[i] == '.') {
        ++i;
        for (; i < s.size() && s[i] >= '0' && s[i] <= '9'; ++i, any = true) {
            if (d.mantissa < kLimit / 10) {
                d.mantissa = d.mantissa * 10 + (s[i] - '0');
                --d.exponent;
            } else {
                too_long = true;
            }
        }
    }
    if (!any) return std::nullopt;
    if (i < s.size() && (s[i] == 'e' || s[i] == 'E')) {
        ++i;
        int e = 0;
        auto [end, ec] = std::from_chars(s.data() + i, s.data() + s.size(), e);
        if (ec != std::errc() || end == s.data() + i) return std::nullopt;
        i = static_cast<std::size_t>(end - s.data());
        d.exponent += e;
    }
    if (i != s.size()) return std::nullopt;
    if (negative) d.mantissa = -d.mantissa;
    return d;
}

std::optional<double> plain(const std::string& s) {
    double v = 0;
    auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
    if (ec != std::errc() || end != s.data() + s.size() || !std::isfinite(v)) return std::nullopt;
    return v;
}

}  // namespace

ShiftedColumn shift_decimal(const std::vector<std::string>& cells, std::size_t& bad) {
    bad = std::numeric_limits<std::size_t>::max();
    ShiftedColumn out;
    std::vector<std::optional<Decimal>> dec(cells.size());
    bool exact = true;
    int finest = std::numeric_limits<int>::max();
    std::optional<std::size_t> first;
    for (std::size_t i = 0; i < cells.size(); ++i) {
        if (cells[i].empty()) continue;
        std::string s = cells[i];
        // Normalise an exponent written with '+' (1e+3), which std::from_chars does not take.
        if (auto e = s.find_first_of("eE"); e != std::string::npos && e + 1 < s.size() && s[e + 1] == '+') {
            s.erase(e + 1, 1);
        }
        if (!plain(s)) {
            bad = i;
            return {};
        }
        bool too_long = false;
        dec[i] = parse(s, too_long);
        if (!dec[i] || too_long) exact = false;
        if (dec[i]) finest = std::min(finest, dec[i]->exponent);
        if (!first) first = i;
    }
    out.values.assign(cells.size(), std::nan(""));
    if (!first) return out;

    if (exact) {
        // Align every mantissa to the finest exponent; give up exactness if one would overflow.
        for (auto& d : dec) {
            if (!d) continue;
            for (int k = d->exponent; k > finest; --k) {
                if (d->mantissa > kLimit / 10 || d->mantissa < -kLimit / 10) {
                    exact = false;
                    break;
                }
                d->mantissa *= 10;
            }
            if (!exact) break;
            d->exponent = finest;
        }
    }
    if (exact && finest < -22) exact = false;  // 10^k is an exact double only up to k = 22
    if (exact && finest > 22) exact = false;

    std::string s0 = cells[*first];
    if (auto e = s0.find_first_of("eE"); e != std::string::npos && e + 1 < s0.size() && s0[e + 1] == '+') {
        s0.erase(e + 1, 1);
    }
    if (!exact) {
        for (std::size_t i = 0; i < cells.size(); ++i) {
            if (cells[i].empty()) continue;
            std::string s = cells[i];
            if (auto e = s.find_first_of("eE"); e != std::string::npos && e + 1 < s.size() && s[e + 1] == '+') {
                s.erase(e + 1, 1);
            }
            out.values[i] = *plain(s);
        }
        return out;
    }
    out.exact = true;
    out.offset = *plain(s0);
    const Int base = dec[*first]->mantissa;
    const double scale = std::pow(10.0, std::abs(finest));  // exact for |finest| <= 22
    for (std::size_t i = 0; i < cells.size(); ++i) {
        if (!dec[i]) continue;
        const double diff = static_cast<double>(dec[i]->mantissa - base);
        out.values[i] = finest < 0 ? diff / scale : diff * scale;
    }
    return out;
}

}  // namespace pw
