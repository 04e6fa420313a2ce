#!/usr/bin/env bash
# Set up, build and run fulcrum on a Debian 12 machine (as root).
#
#   bash tools/setup.sh demo    install what is missing, build, run `fulcrum demo`
#   bash tools/setup.sh test    install what is missing (with the test references), build, run the tests
#   bash tools/setup.sh build   install what is missing and build only
#
# Idempotent: packages already installed are skipped, and the build is
# incremental. Set FULCRUM_BUILD_DIR to build elsewhere (default: build/).
# FULCRUM_SANITIZE_TESTS=1 makes `test` also build and run the whole suite
# under AddressSanitizer + UndefinedBehaviorSanitizer (build-asan/; slow).
set -euo pipefail
cd "$(dirname "$0")/.."

action="${1:-build}"
build_dir="${FULCRUM_BUILD_DIR:-build}"

build_packages=(build-essential cmake pkg-config libeigen3-dev libceres-dev libcfitsio-dev
                wcslib-dev libcli11-dev catch2 nlohmann-json3-dev libtomlplusplus-dev libcairo2-dev
                fonts-dejavu-core pybind11-dev python3-dev)
# Outside references for the tests (astropy, scipy, shapely, numpy), pytest
# for the Python module's tests, GNU parallel for the shard/merge test,
# Chromium for the HTML report test, pdflatex for the journal-table test,
# pdftoppm (poppler-utils) for the test that renders a figure's PDF, and
# Slurm with munge for the test that runs a sample on a one-node cluster it
# starts itself (tests/cluster/).
test_packages=(python3 python3-astropy python3-numpy python3-scipy python3-shapely python3-pil python3-pytest parallel
               chromium texlive-latex-base poppler-utils slurm-wlm munge)

install_missing() {
  local missing=()
  for p in "$@"; do
    dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
  done
  if ((${#missing[@]})); then
    echo "fulcrum setup: installing ${missing[*]}"
    local sudo=""
    [ "$(id -u)" -eq 0 ] || sudo="sudo"
    $sudo apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
  else
    echo "fulcrum setup: all packages present"
  fi
}

# build [TARGET]: configure and build everything, or only TARGET (the demo
# needs only the `fulcrum` executable, not the test suite).
build() {
  # ccache, when the machine has it, makes rebuilds of unchanged files free.
  local launcher=()
  command -v ccache >/dev/null 2>&1 && launcher=(-DCMAKE_CXX_COMPILER_LAUNCHER=ccache)
  cmake -S . -B "$build_dir" -DCMAKE_BUILD_TYPE=Release "${launcher[@]}" >/dev/null
  cmake --build "$build_dir" -j"$(nproc)" ${1:+--target "$1"}
}

case "$action" in
  build)
    install_missing "${build_packages[@]}"
    build ;;
  demo)
    install_missing "${build_packages[@]}"
    build fulcrum
    # --force: running the README's demo command again replaces the demo's
    # own folder (./fulcrum-demo) instead of refusing it.
    "$build_dir/fulcrum" demo --force ${FULCRUM_DEMO_ARGS:-} ;;
  test)
    install_missing "${build_packages[@]}" "${test_packages[@]}"
    build
    ctest --test-dir "$build_dir" --output-on-failure -j"$(nproc)" --timeout 900
    # The ASan + UBSan suite is opt-in: on 2 cores it does not fit beside the
    # Release build and tests in CI's 20 minutes (docs/reliability.md).
    if [ "${FULCRUM_SANITIZE_TESTS:-0}" = 1 ]; then
      bash tools/run_sanitized_tests.sh
    fi ;;
  *)
    echo "usage: tools/setup.sh [build|demo|test]" >&2
    exit 2 ;;
esac
