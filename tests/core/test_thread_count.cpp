// Thread counts (core/thread_count.hpp): capped at the cores and the work
// items, never zero; negative requests refused.
#include <catch2/catch.hpp>

#include "fulcrum/core/settings_check.hpp"
#include "fulcrum/core/thread_count.hpp"

using namespace fulcrum;

TEST_CASE("thread count: capped at the cores and the items", "[core][limits]") {
  const int cores = core_count();
  REQUIRE(cores >= 1);
  CHECK(thread_count("threads", 65536, 1000000) == cores);
  CHECK(thread_count("threads", 0, 1000000) == cores);
  CHECK(thread_count("threads", 65536, 1) == 1);
  CHECK(thread_count("threads", 0, 0) == 1);
  CHECK(thread_count("threads", 1, 10) == 1);
  CHECK_THROWS_WITH(thread_count("threads", -1, 10),
                    "threads = -1 is not allowed: must be a whole number >= 0 (0: one thread per core)");
}
