#!/usr/bin/env bash
# Benchmark (not a test): a 30-galaxy invented mock sample with 200x200 line
# maps, run end to end with `fulcrum run` on every core; prints the wall time.
# Usage: tools/bench_sample.sh [BUILD_DIR] [WORK_DIR]
set -euo pipefail
build="${1:-build}"
work="${2:-$(mktemp -d)}"
bin="$build/fulcrum"
mkdir -p "$work/data"
manifest="$work/data/sample.toml"
printf '# invented benchmark sample (tools/bench_sample.sh)\n[sample]\nname = "Benchmark sample"\nseed = 3\n' > "$manifest"
for i in $(seq 1 30); do
  name=$(printf 'bench-%02d' "$i")
  excess=$(awk -v i="$i" 'BEGIN { printf "%.2f", (i % 5 - 2) * 0.1 }')
  tail=$(( (i * 37) % 360 ))
  "$bin" --quiet synth --out "$work/data/$name" --name "$name" --seed "$i" --grid-nx 200 --grid-ny 200 \
         --leading-excess "$excess" --tail-pa-deg "$tail" --pa-deg $(( (i * 53) % 360 )) >/dev/null
  printf '\n[[galaxy]]\nname = "%s"\nvelocity = "%s/vel.fits"\nintensity = "%s/mom0.fits"\nintensity_error = "%s/mom0_err.fits"\noptical = "%s/opt.fits"\ntail_pa_deg = %s\ntail_pa_err_deg = 10.0\ndistance_mpc = 90.0\n' \
         "$name" "$name" "$name" "$name" "$name" "$tail" >> "$manifest"
done
start=$(date +%s.%N)
"$bin" --quiet run "$manifest" --out "$work/results" --force > "$work/summary.txt"
end=$(date +%s.%N)
awk -v s="$start" -v e="$end" 'BEGIN { printf "30 galaxies (200x200 maps, optical images, 20000 draws each): %.1f s wall on %d cores\n", e - s, '"$(nproc)"' }'
echo "results in $work/results"
