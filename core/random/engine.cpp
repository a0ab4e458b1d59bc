// Bounded integers for the portable engine (core/random/engine.hpp).
//
// uniform_below(n) maps one 64-bit output x of mt19937_64 to floor(x * n / 2^64) and rejects the few x whose
// low 64 bits of x * n fall below (2^64 mod n): Lemire, "Fast random integer generation in an interval",
// ACM TOMACS 29(1), 2019, algorithm 5 ("nearly divisionless"). After rejection every value in [0, n) is hit
// by exactly floor(2^64 / n) accepted x, so the draw is exactly uniform given a uniform engine. The
// division computing the threshold runs only when the low half is already below n (probability n / 2^64).
#include "core/random/engine.hpp"

#include "core/error.hpp"

namespace pw {

std::uint64_t Rng::uniform_below(std::uint64_t n) {
    if (n == 0) throw Error("Rng::uniform_below: the bound must be positive (got 0)");
    __extension__ typedef unsigned __int128 u128;  // GCC/Clang extension; -Wpedantic knows __extension__
    u128 m = static_cast<u128>(next()) * n;
    auto low = static_cast<std::uint64_t>(m);
    if (low < n) {
        // (2^64 - n) mod n == 2^64 mod n, computed in 64-bit unsigned arithmetic (Lemire 2019, alg. 5).
        const std::uint64_t threshold = (0 - n) % n;
        while (low < threshold) {
            m = static_cast<u128>(next()) * n;
            low = static_cast<std::uint64_t>(m);
        }
    }
    return static_cast<std::uint64_t>(m >> 64);
}

}  // namespace pw
