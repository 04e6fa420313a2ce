#!/usr/bin/env bash
# Build fulcrum and its tests with AddressSanitizer + UndefinedBehaviorSanitizer
# (-DFULCRUM_SANITIZE=ON) in build-asan/ and run the whole test suite there.
#
#   tools/run_sanitized_tests.sh [CTEST ARGS...]     e.g. -R bad-input
#
# Any sanitizer report fails the test that triggered it: UBSan aborts on the
# first finding (-fno-sanitize-recover), ASan on the first memory error, and
# LeakSanitizer reports leaks at exit with a non-zero status. The fulcrum
# executable the tests run is sanitized too, so the bad-input catalogue is
# checked under the sanitizers as well (a report breaks its one-line check).
# Set FULCRUM_ASAN_JOBS to limit build and test parallelism (default: nproc)
# and FULCRUM_ASAN_NICE for the niceness of both (default: 10).
set -euo pipefail
cd "$(dirname "$0")/.."
build_dir="${FULCRUM_ASAN_BUILD_DIR:-build-asan}"
jobs="${FULCRUM_ASAN_JOBS:-$(nproc)}"
niceness="${FULCRUM_ASAN_NICE:-10}"
start=$(date +%s)

# -O1 (what the ASan documentation recommends) and -g1 (line tables for the
# stack traces): -O2 -g made single Ceres/Eigen files take minutes under ASan.
# No NDEBUG, so Eigen's index assertions are on as well.
cmake -S . -B "$build_dir" -DCMAKE_BUILD_TYPE=Sanitize -DCMAKE_CXX_FLAGS_SANITIZE="-O1 -g1" \
  -DFULCRUM_SANITIZE=ON >/dev/null
nice -n "$niceness" cmake --build "$build_dir" -j"$jobs" --target fulcrum fulcrum_tests
built=$(date +%s)

export ASAN_OPTIONS="detect_leaks=1:halt_on_error=1:detect_stack_use_after_return=1:strict_string_checks=1:check_initialization_order=1"
export UBSAN_OPTIONS="print_stacktrace=1:halt_on_error=1"
export LSAN_OPTIONS="suppressions=$PWD/tools/lsan.supp:print_suppressions=0"
status=0
nice -n "$niceness" ctest --test-dir "$build_dir" --output-on-failure -j"$jobs" --timeout 1800 "$@" || status=$?
end=$(date +%s)
echo "run_sanitized_tests: build $((built - start)) s, tests $((end - built)) s, status $status"
exit $status
