// Catch2's main, alone in its translation unit: it is slow to compile and never changes.
#define CATCH_CONFIG_MAIN
#include <catch2/catch.hpp>
