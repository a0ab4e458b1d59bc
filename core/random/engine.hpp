// Portable randomization: the same seed gives the same draws with every compiler and standard library.
//
// std::mt19937_64's output sequence is fixed by the C++ standard ([rand.predef]: the 10000th output of a
// default-constructed engine is 9981545732273789042). The distributions of the standard library are not
// fixed (libstdc++ and libc++ differ), so bounded integers and shuffles are our own:
//   uniform_below(n)  Lemire's multiply-and-reject method (D. Lemire, "Fast random integer generation in
//                     an interval", ACM TOMACS 29(1), 2019), unbiased.
//   shuffle(v)        Fisher-Yates (Durstenfeld's in-place form), from the last element down.
// Any change to these algorithms changes every layout: bump kAlgorithmId so stored layouts stay verifiable.
#pragma once
#include <cstdint>
#include <random>
#include <utility>
#include <vector>

namespace pw {

inline constexpr const char* kRandomAlgorithmId = "mt19937_64+lemire+fisher-yates/1";

class Rng {
public:
    explicit Rng(std::uint64_t seed) : engine_(seed) {}

    std::uint64_t next() { return engine_(); }

    // Uniform integer in [0, n). n must be > 0.
    std::uint64_t uniform_below(std::uint64_t n);

    template <class T>
    void shuffle(std::vector<T>& v) {
        for (std::size_t i = v.size(); i > 1; --i) {
            std::size_t j = static_cast<std::size_t>(uniform_below(i));
            std::swap(v[i - 1], v[j]);
        }
    }

private:
    std::mt19937_64 engine_;
};

}  // namespace pw
