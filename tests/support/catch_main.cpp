// The Catch2 test runner's main() (kept apart so the other test files can
// share a precompiled catch.hpp).
#define CATCH_CONFIG_MAIN
#include <catch2/catch.hpp>
