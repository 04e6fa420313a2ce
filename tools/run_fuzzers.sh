#!/bin/sh
# Build the libFuzzer targets with clang (ASan + UBSan + fuzzer coverage) in
# build-fuzz/ and run each for a bounded time, one after the other, niced.
#
#   tools/run_fuzzers.sh [SECONDS_PER_TARGET] [TARGET...]
#
# SECONDS_PER_TARGET defaults to 60 (the reliability check used 600). Targets:
# fuzz_fits_image (FITS header + data from memory through CFITSIO and wcslib)
# and fuzz_toml_manifest (the TOML path of manifests and mock files). Seeds come
# from fixtures/fuzz_corpus/<kind>/; new inputs the fuzzer finds go to
# build-fuzz/corpus-<target>/ (not committed); crashes to build-fuzz/findings/.
# Exit status is non-zero when a target found a crash, leak or timeout.
set -eu
here=$(cd "$(dirname "$0")/.." && pwd)
seconds=${1:-60}
[ $# -gt 0 ] && shift
targets=${*:-"fuzz_fits_image fuzz_toml_manifest"}
build="$here/build-fuzz"

CC=clang CXX=clang++ cmake -S "$here" -B "$build" -DCMAKE_BUILD_TYPE=RelWithDebInfo \
  -DFULCRUM_FUZZ=ON >/dev/null
# shellcheck disable=SC2086
nice -n 10 cmake --build "$build" -j2 --target $targets >/dev/null

mkdir -p "$build/findings"
status=0
for t in $targets; do
  case $t in
    fuzz_fits_image) seeds="$here/fixtures/fuzz_corpus/fits"; dict="-dict=$here/tests/fuzz/fits.dict" ;;
    fuzz_toml_manifest) seeds="$here/fixtures/fuzz_corpus/toml"; dict="" ;;
    *) echo "run_fuzzers: unknown target $t" >&2; exit 2 ;;
  esac
  work="$build/corpus-$t"
  mkdir -p "$work"
  log="$build/$t.log"
  echo "run_fuzzers: $t for ${seconds}s (log: $log)"
  # -rss_limit_mb bounds memory (the pixel limit must keep reads below it);
  # -timeout flags any single input that takes more than 10 s as a hang.
  # shellcheck disable=SC2086
  if ASAN_OPTIONS=detect_leaks=1 UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1 \
     OMP_NUM_THREADS=1 nice -n 10 "$build/$t" "$work" "$seeds" $dict \
       -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 -max_len=20000 \
       -artifact_prefix="$build/findings/$t-" -print_final_stats=1 >"$log" 2>&1; then
    :
  else
    status=1
    echo "run_fuzzers: $t FOUND A PROBLEM; see $log and $build/findings/" >&2
  fi
  execs=$(grep -E '^stat::number_of_executed_units' "$log" | awk '{print $2}')
  echo "run_fuzzers: $t ran ${execs:-?} inputs; corpus now $(ls "$work" | wc -l) files"
done
exit $status
