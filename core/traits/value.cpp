// Checking a value typed for a trait and turning it into its canonical text (core/traits/value.hpp).
//
// Rules (docs/spec.md, "Trait values"):
//   number  optional '-', digits with at most one '.', as many decimals as the trait keeps (extra digits are
//           refused, except trailing zeros, which lose nothing); a comma is refused with a hint rather than
//           guessed at, since "1,234" reads as 1.234 in much of Europe and as 1234 elsewhere. Canonical text has
//           exactly `decimals` digits after the point, built from the typed digits (no binary rounding).
//   count   digits only (a whole number of 0 or more), up to 2^53 so it stays exact as a double.
//   score   a whole number on the trait's scale, or one of its labels (case-insensitive); canonical text is
//           the number.
//   date    YYYY-MM-DD, a real day of the proleptic Gregorian calendar (ISO 8601) checked with
//           std::chrono::year_month_day, years 1900 to 2199 (a typed year outside is a typing slip).
//   text    valid UTF-8 without control characters (C0, DEL, C1), not blank, at most max_length characters
//           (Unicode code points) after trimming.
// Surrounding blanks are ignored for every kind. Every refusal is an InputError naming the trait's label and
// what it accepts (describe_trait).
#include "core/traits/value.hpp"

#include <algorithm>
#include <charconv>
#include <chrono>
#include <cmath>
#include <cstdint>

#include <fmt/format.h>

#include "core/error.hpp"

namespace pw {

namespace {

constexpr int kMaxIntegerDigits = 15;                 // 10^15 < 2^53: every such integer is exact in a double
constexpr std::uint64_t kMaxCount = 9007199254740992;  // 2^53

bool is_blank(char c) { return c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == '\v' || c == '\f'; }
bool is_digit(char c) { return c >= '0' && c <= '9'; }

std::string_view trim(std::string_view s) {
    while (!s.empty() && is_blank(s.front())) s.remove_prefix(1);
    while (!s.empty() && is_blank(s.back())) s.remove_suffix(1);
    return s;
}

std::string lower_ascii(std::string_view s) {
    std::string out(s);
    for (char& c : out)
        if (c >= 'A' && c <= 'Z') c = static_cast<char>(c - 'A' + 'a');
    return out;
}

std::string show(double v) { return fmt::format("{}", v); }

// The typed text quoted in a message: control bytes shown as '?', long input shortened.
std::string quoted(std::string_view typed) {
    std::string s;
    for (char c : typed.substr(0, 40)) s += (static_cast<unsigned char>(c) < 0x20 || c == 0x7f) ? '?' : c;
    if (typed.size() > 40) s += "...";
    return "'" + s + "'";
}

std::string range_text(const TraitSpec& t, std::optional<double> min) {
    if (min && t.max) return fmt::format("{} to {}", show(*min), show(*t.max));
    if (min) return fmt::format("at least {}", show(*min));
    if (t.max) return fmt::format("at most {}", show(*t.max));
    return "any value";
}

std::string with_unit(const TraitSpec& t, double v) {
    return t.unit.empty() ? show(v) : fmt::format("{} {}", show(v), t.unit);
}

[[noreturn]] void refuse(const TraitSpec& t, const std::string& what) {
    throw InputError(fmt::format("{}: {} (expected {})", t.label.empty() ? t.name : t.label, what, describe_trait(t)));
}

void check_range(const TraitSpec& t, double v, std::string_view shown, std::optional<double> min) {
    if (min && v < *min) refuse(t, fmt::format("{} is below the minimum {}", shown, with_unit(t, *min)));
    if (t.max && v > *t.max) refuse(t, fmt::format("{} is above the maximum {}", shown, with_unit(t, *t.max)));
}

double to_double(std::string_view canonical) {
    double v = 0;
    std::from_chars(canonical.data(), canonical.data() + canonical.size(), v);
    return v;
}

TraitValue parse_number(const TraitSpec& t, std::string_view s) {
    std::size_t i = 0;
    const bool negative = !s.empty() && s[0] == '-';
    if (negative) ++i;
    std::string_view int_digits, frac_digits;
    const std::size_t int_begin = i;
    while (i < s.size() && is_digit(s[i])) ++i;
    int_digits = s.substr(int_begin, i - int_begin);
    if (i < s.size() && s[i] == '.') {
        const std::size_t frac_begin = ++i;
        while (i < s.size() && is_digit(s[i])) ++i;
        frac_digits = s.substr(frac_begin, i - frac_begin);
    }
    if (i != s.size() || (int_digits.empty() && frac_digits.empty())) {
        if (s.find(',') != std::string_view::npos)
            refuse(t, fmt::format("{} uses a comma; write the decimal point as '.'", quoted(s)));
        refuse(t, fmt::format("{} is not a number", quoted(s)));
    }
    while (int_digits.size() > 1 && int_digits.front() == '0') int_digits.remove_prefix(1);
    if (static_cast<int>(int_digits.size()) > kMaxIntegerDigits) refuse(t, fmt::format("{} is too large", quoted(s)));

    // Digits beyond `decimals` are refused unless they are zeros: nothing is rounded.
    const auto keep = static_cast<std::size_t>(t.decimals);
    if (frac_digits.size() > keep) {
        const auto extra = frac_digits.substr(keep);
        if (extra.find_first_not_of('0') != std::string_view::npos)
            refuse(t, fmt::format("{} has {} decimals, more than the {} kept; values are not rounded, so type at most {}",
                                  quoted(s), frac_digits.size(), keep, keep));
        frac_digits = frac_digits.substr(0, keep);
    }
    std::string digits = int_digits.empty() ? "0" : std::string(int_digits);
    std::string fraction(frac_digits);
    fraction.resize(keep, '0');
    const bool zero = digits == "0" && fraction.find_first_not_of('0') == std::string::npos;
    std::string canonical = (negative && !zero ? "-" : "") + digits + (keep > 0 ? "." + fraction : "");

    const double v = to_double(canonical);
    check_range(t, v, canonical, t.min);
    return TraitValue{canonical, v};
}

std::optional<double> count_min(const TraitSpec& t) { return t.min ? t.min : std::optional<double>(0.0); }

TraitValue parse_count(const TraitSpec& t, std::string_view s) {
    if (s[0] == '-') refuse(t, fmt::format("{} is negative; a count is a whole number of 0 or more", quoted(s)));
    for (char c : s)
        if (!is_digit(c)) {
            if (c == '.' || c == ',') refuse(t, fmt::format("{} is not a whole number written with digits only", quoted(s)));
            refuse(t, fmt::format("{} is not a count", quoted(s)));
        }
    while (s.size() > 1 && s.front() == '0') s.remove_prefix(1);
    std::uint64_t n = 0;
    const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), n);
    if (ec != std::errc{} || end != s.data() + s.size() || n > kMaxCount) refuse(t, fmt::format("{} is too large", quoted(s)));
    const std::string canonical(s);
    const auto v = static_cast<double>(n);
    check_range(t, v, canonical, count_min(t));
    return TraitValue{canonical, v};
}

TraitValue parse_score(const TraitSpec& t, std::string_view s) {
    long long level = 0;
    const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), level);
    if (ec == std::errc{} && end == s.data() + s.size()) {
        const auto v = static_cast<double>(level);
        check_range(t, v, std::to_string(level), t.min);
        return TraitValue{std::to_string(level), v};
    }
    const std::string key = lower_ascii(s);
    for (std::size_t i = 0; i < t.score_labels.size(); ++i)
        if (lower_ascii(trim(t.score_labels[i])) == key) {
            const double v = t.min.value_or(0) + static_cast<double>(i);
            const auto whole = static_cast<long long>(v);
            return TraitValue{std::to_string(whole), v};
        }
    refuse(t, fmt::format("{} is not a score{}", quoted(s), t.score_labels.empty() ? "" : " or one of its labels"));
}

int digits_value(std::string_view s) {
    int v = 0;
    for (char c : s) v = v * 10 + (c - '0');
    return v;
}

TraitValue parse_date(const TraitSpec& t, std::string_view s) {
    const bool shape = s.size() == 10 && s[4] == '-' && s[7] == '-' &&
                       std::all_of(s.begin(), s.end(), [](char c) { return is_digit(c) || c == '-'; }) &&
                       is_digit(s[0]) && is_digit(s[1]) && is_digit(s[2]) && is_digit(s[3]) && is_digit(s[5]) &&
                       is_digit(s[6]) && is_digit(s[8]) && is_digit(s[9]);
    if (!shape) refuse(t, fmt::format("{} is not a date written YYYY-MM-DD", quoted(s)));
    const int y = digits_value(s.substr(0, 4));
    const int m = digits_value(s.substr(5, 2));
    const int d = digits_value(s.substr(8, 2));
    if (y < 1900 || y > 2199) refuse(t, fmt::format("{}: the year {} is outside 1900 to 2199 (a typing slip?)", quoted(s), y));
    // Proleptic Gregorian calendar (ISO 8601): month lengths and the leap-year rule, as std::chrono implements.
    const std::chrono::year_month_day ymd{std::chrono::year{y}, std::chrono::month{static_cast<unsigned>(m)},
                                          std::chrono::day{static_cast<unsigned>(d)}};
    if (!ymd.ok()) refuse(t, fmt::format("{} is not a day of the calendar", quoted(s)));
    return TraitValue{std::string(s), std::nullopt};
}

// Decodes one UTF-8 sequence at s[i] (RFC 3629: shortest form, no surrogates, at most U+10FFFF).
// Returns the code point and advances i, or returns -1 for an invalid sequence.
long next_code_point(std::string_view s, std::size_t& i) {
    const auto b0 = static_cast<unsigned char>(s[i]);
    int len = 0;
    long cp = 0, lowest = 0;
    if (b0 < 0x80) return ++i, b0;
    if ((b0 & 0xE0) == 0xC0) len = 2, cp = b0 & 0x1F, lowest = 0x80;
    else if ((b0 & 0xF0) == 0xE0) len = 3, cp = b0 & 0x0F, lowest = 0x800;
    else if ((b0 & 0xF8) == 0xF0) len = 4, cp = b0 & 0x07, lowest = 0x10000;
    else return -1;
    if (i + static_cast<std::size_t>(len) > s.size()) return -1;
    for (int k = 1; k < len; ++k) {
        const auto b = static_cast<unsigned char>(s[i + static_cast<std::size_t>(k)]);
        if ((b & 0xC0) != 0x80) return -1;
        cp = (cp << 6) | (b & 0x3F);
    }
    if (cp < lowest || cp > 0x10FFFF || (cp >= 0xD800 && cp <= 0xDFFF)) return -1;
    i += static_cast<std::size_t>(len);
    return cp;
}

TraitValue parse_text(const TraitSpec& t, std::string_view s) {
    long count = 0;
    for (std::size_t i = 0; i < s.size();) {
        const long cp = next_code_point(s, i);
        if (cp < 0) refuse(t, "the text is not valid UTF-8");
        if (cp < 0x20 || cp == 0x7F || (cp >= 0x80 && cp <= 0x9F))
            refuse(t, fmt::format("the text contains a control character (U+{:04X})", cp));
        ++count;
    }
    if (count > t.max_length)
        refuse(t, fmt::format("the text has {} characters, more than {}", count, t.max_length));
    return TraitValue{std::string(s), std::nullopt};
}

}  // namespace

TraitValue parse_trait_value(const TraitSpec& trait, std::string_view typed) {
    const std::string_view s = trim(typed);
    if (s.empty()) refuse(trait, "nothing was entered");
    switch (trait.kind) {
        case TraitKind::Number: return parse_number(trait, s);
        case TraitKind::Count: return parse_count(trait, s);
        case TraitKind::Score: return parse_score(trait, s);
        case TraitKind::Date: return parse_date(trait, s);
        case TraitKind::Text: return parse_text(trait, s);
    }
    refuse(trait, "the trait has an unknown kind");
}

std::string describe_trait(const TraitSpec& t) {
    switch (t.kind) {
        case TraitKind::Number: {
            std::string d = t.decimals == 0 ? "no decimals"
                            : t.decimals == 1 ? "1 decimal"
                                              : fmt::format("{} decimals", t.decimals);
            return fmt::format("{}{}, {}", t.unit.empty() ? "" : t.unit + ", ", range_text(t, t.min), d);
        }
        case TraitKind::Count:
            return fmt::format("{}whole number, {}", t.unit.empty() ? "" : t.unit + ", ", range_text(t, count_min(t)));
        case TraitKind::Score: {
            std::string d = fmt::format("score {}", range_text(t, t.min));
            if (!t.score_labels.empty()) {
                d += " or its label (";
                for (std::size_t i = 0; i < t.score_labels.size(); ++i)
                    d += fmt::format("{}{} {}", i ? ", " : "", show(t.min.value_or(0) + static_cast<double>(i)),
                                     t.score_labels[i]);
                d += ")";
            }
            return d;
        }
        case TraitKind::Date: return "date YYYY-MM-DD";
        case TraitKind::Text: return fmt::format("text, at most {} characters", t.max_length);
    }
    return "";
}

}  // namespace pw
