// ISO/IEC 7064 MOD 37,36: the hybrid check character system over the alphabet 0-9 A-Z (values 0..35).
//
// The hybrid systems MOD (M+1),M run a product/sum recurrence (ISO/IEC 7064, hybrid systems):
//   P0 = M;  for each data character a:  t = (P + a) mod M, t = M if t == 0;  P = 2 t mod (M + 1)
//   check value c = (M + 1 - P) mod M
// and a string with its check character is valid when, after the data, (P + c) mod M == 1.
// With M = 36 the check character comes from the same 36-character alphabet as the data, so a plot code
// never needs the '*' of the pure MOD 37-2 system and stays inside the QR alphanumeric set.
// Such a system detects every single substitution and every adjacent transposition (ISO/IEC 7064, from memory;
// asserted exhaustively in tests/unit/test_payload.cpp).
#include "core/tags/payload.hpp"

#include "core/error.hpp"

#include <fmt/format.h>

namespace pw {
namespace {

constexpr int kModulus = 36;  // M of MOD 37,36
constexpr std::string_view kAlphabet = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ";

// Value of an upper-case alphanumeric character (0-9 -> 0..9, A-Z -> 10..35), -1 for anything else.
int char_value(char ch) {
    if (ch >= '0' && ch <= '9') return ch - '0';
    if (ch >= 'A' && ch <= 'Z') return ch - 'A' + 10;
    return -1;
}

// Runs the recurrence over `data`; returns P after the last character, or -1 if a character is outside 0-9 A-Z.
int run_recurrence(std::string_view data) {
    int p = kModulus;
    for (char ch : data) {
        const int a = char_value(ch);
        if (a < 0) return -1;
        int t = (p + a) % kModulus;
        if (t == 0) t = kModulus;
        p = (2 * t) % (kModulus + 1);
    }
    return p;
}

}  // namespace

char iso7064_mod37_36_check(std::string_view data) {
    if (data.empty())
        throw InputError("ISO/IEC 7064 MOD 37,36: no data to compute a check character over");
    const int p = run_recurrence(data);
    if (p < 0)
        throw InputError(fmt::format(
            "ISO/IEC 7064 MOD 37,36: \"{}\" holds a character outside 0-9 A-Z (upper case expected)", data));
    return kAlphabet[static_cast<std::size_t>((kModulus + 1 - p) % kModulus)];
}

bool iso7064_mod37_36_valid(std::string_view data_with_check) {
    if (data_with_check.size() < 2) return false;
    const int p = run_recurrence(data_with_check.substr(0, data_with_check.size() - 1));
    const int c = char_value(data_with_check.back());
    if (p < 0 || c < 0) return false;
    return (p + c) % kModulus == 1;
}

}  // namespace pw
