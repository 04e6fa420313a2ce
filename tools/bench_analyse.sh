#!/usr/bin/env bash
# Benchmark (not a test): CPU seconds of one `fulcrum analyse` per invented
# mock galaxy (`fulcrum synth`, 200 x 200 line maps and optical image), for
# one binary or two side by side (alternated galaxy by galaxy, so both see
# the same machine load). Prints one row per galaxy and the medians; with two
# binaries also the median of the per-galaxy ratios B / A.
#
# Usage: tools/bench_analyse.sh [-n GALAXIES] [-g GRID] [-a "ANALYSE ARGS"] BIN_A [BIN_B]
#   -n   galaxies (default 5)       -g  grid side in pixels (default 200)
#   -a   extra arguments for analyse (default "--calibrate 0"; the default
#        calibration is timed by tools/bench_calibration.cpp)
# OMP_NUM_THREADS=1 so that idle OpenMP threads add no CPU time.
set -euo pipefail
n=5 grid=200 extra="--calibrate 0"
while getopts "n:g:a:" opt; do
  case "$opt" in
    n) n="$OPTARG" ;;
    g) grid="$OPTARG" ;;
    a) extra="$OPTARG" ;;
    *) exit 2 ;;
  esac
done
shift $((OPTIND - 1))
[ $# -ge 1 ] || { echo "usage: $0 [-n N] [-g GRID] [-a ARGS] BIN_A [BIN_B]" >&2; exit 2; }
bins=("$@")
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
export OMP_NUM_THREADS=1

cpu() {  # user + system CPU seconds of one analyse: cpu BIN GALAXY_DIR TAIL OUT
  # shellcheck disable=SC2086
  /usr/bin/time -o "$4.time" -f "%U %S" "$1" --quiet analyse --velocity "$2/vel.fits" \
      --velocity-error "$2/vel_err.fits" --intensity "$2/mom0.fits" --intensity-error "$2/mom0_err.fits" \
      --optical "$2/opt.fits" --tail-pa "$3" --no-figures $extra --out "$4" >/dev/null 2>&1
  local t
  t=$(tail -1 "$4.time")
  awk -v t="$t" 'BEGIN { split(t, a, " "); printf "%.3f", a[1] + a[2] }'
}

printf '%-10s' galaxy; for b in "${bins[@]}"; do printf ' %12s' "$(basename "$(dirname "$b")")"; done
[ ${#bins[@]} -eq 2 ] && printf ' %8s' "B/A"; echo
cols=()
for i in $(seq 1 "$n"); do
  g="$work/g$i"
  tail=$(( (i * 37) % 360 ))
  excess=$(awk -v i="$i" 'BEGIN { printf "%.2f", (i % 5 - 2) * 0.1 }')
  "${bins[0]}" --quiet synth --out "$g" --name "bench-$i" --seed "$i" --grid-nx "$grid" --grid-ny "$grid" \
      --leading-excess "$excess" --tail-pa-deg "$tail" --pa-deg $(( (i * 53) % 360 )) >/dev/null
  row=()
  for k in "${!bins[@]}"; do row+=("$(cpu "${bins[$k]}" "$g" "$tail" "$work/out$i-$k")"); done
  printf '%-10s' "bench-$i"; for v in "${row[@]}"; do printf ' %12s' "$v"; done
  if [ ${#bins[@]} -eq 2 ]; then
    printf ' %8s' "$(awk -v a="${row[0]}" -v b="${row[1]}" 'BEGIN { printf "%.3f", b / a }')"
  fi
  echo
  cols+=("${row[*]}")
done
median() { sort -g | awk '{ v[NR] = $1 } END { printf "%.3f", NR % 2 ? v[(NR + 1) / 2] : 0.5 * (v[NR / 2] + v[NR / 2 + 1]) }'; }
printf '%-10s' median
for k in "${!bins[@]}"; do
  printf ' %12s' "$(for r in "${cols[@]}"; do set -- $r; shift "$k"; echo "$1"; done | median)"
done
if [ ${#bins[@]} -eq 2 ]; then
  printf ' %8s' "$(for r in "${cols[@]}"; do set -- $r; awk -v a="$1" -v b="$2" 'BEGIN { print b / a }'; done | median)"
fi
echo
echo "(CPU seconds of one analyse, user + system; ${grid}x${grid} maps; analyse $extra)"
