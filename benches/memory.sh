#!/usr/bin/env bash
# Peak memory of `roughride simulate` without a history file, for 20 km and
# 200 km generated roads (issue: long runs keep memory bounded).
#
# The road itself is held in memory (8 bytes a sample, plus the FFT buffers
# while it is generated), so the script also measures `roughride profile`
# generating the same road alone: the difference is what the simulation and
# its streaming evaluation add, which should not grow with road length.
#
# Usage: bash benches/memory.sh   (needs GNU time at /usr/bin/time)
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=target/release/roughride
car=profiles/vehicles/demo_hatchback.toml
peak_kib() { /usr/bin/time -f %M "$@" 2>&1 >/dev/null | tail -n 1; }

printf '%-8s %-10s %14s %14s %14s\n' length_km samples profile_MiB simulate_MiB difference_MiB
for km in 20 200; do
  len=$((km * 1000))
  samples=$((len * 20 + 1))
  p=$(peak_kib "$bin" profile --class C --length "$len" --spacing 0.05 --seed 1 -o /dev/null)
  s=$(peak_kib "$bin" simulate --vehicle "$car" --class C --length "$len" --seed 1 --speed 20 --solver exact --json)
  awk -v km="$km" -v n="$samples" -v p="$p" -v s="$s" \
    'BEGIN { printf "%-8s %-10s %14.1f %14.1f %14.1f\n", km, n, p/1024, s/1024, (s-p)/1024 }'
done
