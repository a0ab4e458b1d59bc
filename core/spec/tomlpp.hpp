// toml++ as plotwright compiles it: the one place that configures the library before including it.
// Included only by the spec reader (trial_spec.cpp) and the blind spec writer (core/sync/blind_spec.cpp);
// toml++ is slow to compile. The include directory is a copy of the installed headers with one upstream fix
// applied by the top-level CMakeLists.txt (the whitespace lookup that reached __builtin_unreachable()).
#pragma once

// toml++ 3.3.0 asserts inside its parser on a table header opened with three brackets ("[[[x]]"), a case its
// own error path then reports properly ("expected bare key starting character"); release builds (NDEBUG)
// compile the assertion out. Found by tests/fuzz/fuzz_spec.cpp; the input is in its corpus. Its assertions
// are compiled out in every build type, so that debug and sanitizer builds refuse such a spec as release
// builds do instead of aborting.
#define TOML_ASSERT(expr) static_cast<void>(0)
#include <toml++/toml.h>
