#!/usr/bin/env bash
# Peak memory (maximum resident set size) of `roughride simulate` without a
# history file, on generated roads (`--class`) and on profile CSV files
# (`--profile`), for 20 km and 200 km of road at the default 0.05 m spacing.
#
# Nothing of the run itself grows with its length (results stream), but the
# road is held in memory whole, and building it takes more than holding it:
# generating keeps the complex spectrum (16 bytes a sample) beside the
# profile (8), reading a CSV keeps the file's bytes (about 27 a row) beside
# the distances and elevations. The script reports the peak per road
# sample: (peak − baseline) / samples, the baseline being the same command
# on a 100 m road.
#
# Usage: bash benches/memory.sh [BINARY]   (needs GNU time at /usr/bin/time;
# BINARY defaults to the release build, which the script builds)
set -euo pipefail
cd "$(dirname "$0")/.."
if [ $# -ge 1 ]; then
  bin=$1
else
  cargo build --release --quiet
  bin=target/release/roughride
fi
car=profiles/vehicles/demo_hatchback.toml
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
peak_kib() { /usr/bin/time -f %M "$@" 2>&1 >/dev/null | tail -n 1; }
sim=("$bin" simulate --vehicle "$car" --speed 20 --solver exact --json)

# Baselines: the same commands on a 100 m road.
"$bin" profile --class C --length 100 --seed 1 -o "$tmp/base.csv" >/dev/null 2>&1
base_class=$(peak_kib "${sim[@]}" --class C --length 100 --seed 1)
base_csv=$(peak_kib "${sim[@]}" --profile "$tmp/base.csv")

printf '%-9s %-6s %10s %10s %12s %15s\n' input km samples peak_MiB baseline_MiB bytes_per_sample
for km in 20 200; do
  len=$((km * 1000))
  samples=$((len * 20 + 1))
  c=$(peak_kib "${sim[@]}" --class C --length "$len" --seed 1)
  "$bin" profile --class C --length "$len" --seed 1 -o "$tmp/road.csv" >/dev/null 2>&1
  p=$(peak_kib "${sim[@]}" --profile "$tmp/road.csv")
  rm -f "$tmp/road.csv"
  for row in "class $c $base_class" "profile $p $base_csv"; do
    set -- $row
    awk -v what="$1" -v km="$km" -v n="$samples" -v peak="$2" -v base="$3" \
      'BEGIN { printf "%-9s %-6s %10s %10.1f %12.1f %15.1f\n", what, km, n, peak/1024, base/1024, (peak-base)*1024/n }'
  done
done
