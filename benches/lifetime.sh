#!/usr/bin/env bash
# Cost of `roughride lifetime` on a 12-part usage, each part 3 seeds × 2 km
# of generated road (the size the lifetime issue names): wall time, CPU
# time and how busy the cores were ((user + system) / wall / cores), and
# peak memory beside `simulate` on one of the same 2 km roads (memory should
# be bounded by the roads held at once, not grow with the number of parts).
#
# Usage: bash benches/lifetime.sh [REPETITIONS]   (needs GNU time at /usr/bin/time)
# Prints a Markdown summary; nothing here depends on the folder it runs in.
set -euo pipefail
cd "$(dirname "$0")/.."
reps="${1:-3}"
cargo build --release --quiet
bin=target/release/roughride
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cp profiles/vehicles/demo_hatchback.toml "$work/car.toml"
cp profiles/vehicles/demo_van_stops.toml "$work/van.toml"

# Twelve parts: four classes × three speeds; shares add up to 1. Odd parts
# use the linear hatchback (exact solver), even parts the van with stops
# (adaptive solver), so both solvers are in the cost.
{
  echo 'title = "bench: 12 parts, 3 seeds x 2 km each"'
  echo 'target_km = 300000'
  echo 'vehicle = "car.toml"'
  i=0
  for class in A B C D; do
    for speed in 40kmh 70kmh 100kmh; do
      i=$((i + 1))
      echo
      echo '[[part]]'
      echo "name = \"p$i $class $speed\""
      if [ "$i" -eq 12 ]; then echo 'share = 0.12'; else echo 'share = 0.08'; fi
      echo "speed = \"$speed\""
      echo "class = \"$class\""
      echo 'seeds = 3'
      echo 'length = 2000'
      if [ $((i % 2)) -eq 0 ]; then echo 'vehicle = "van.toml"'; fi
    done
  done
} > "$work/usage.toml"

measure() { # prints "wall user sys maxrss_kib" of the command
  /usr/bin/time -f '%e %U %S %M' "$@" 2>&1 >/dev/null | tail -n 1
}

cores=$(nproc)
echo "# roughride lifetime: 12 parts × 3 seeds × 2 km"
echo
echo "- machine: $cores CPU(s), $(grep -m1 'model name' /proc/cpuinfo | sed 's/.*: //'); load average before $(cut -d' ' -f1-3 /proc/loadavg)"
echo "- roughride $(git rev-parse --short HEAD 2>/dev/null || echo unknown), $(rustc --version)"
echo "- 36 runs, 72 km of road; repetitions: $reps (median shown)"
echo
echo "| jobs | wall (s) | user + sys (s) | cores busy | peak memory (MiB) |"
echo "|---|---|---|---|---|"
for jobs in 1 "$cores"; do
  rows=()
  for _ in $(seq "$reps"); do
    rows+=("$(measure "$bin" lifetime --usage "$work/usage.toml" --jobs "$jobs" --json)")
  done
  printf '%s\n' "${rows[@]}" | sort -n | awk -v n="$reps" -v jobs="$jobs" '
    NR == int((n + 1) / 2) {
      cpu = $2 + $3
      printf "| %s | %.2f | %.2f | %.2f of %s | %.1f |\n", jobs, $1, cpu, cpu / $1, jobs, $4 / 1024
    }'
done
one=$(measure "$bin" simulate --vehicle "$work/van.toml" --class D --seed 1 --length 2000 --speed 70kmh --json)
echo
echo "For scale: one \`simulate\` of the van on one 2 km class D road at 70 km/h: $(echo "$one" | awk '{ printf "%.2f s wall, peak memory %.1f MiB", $1, $4 / 1024 }')."
echo "Load average after: $(cut -d' ' -f1-3 /proc/loadavg)."
