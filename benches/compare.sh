#!/usr/bin/env bash
# Side-by-side timing of `roughride simulate --solver exact` against the
# numpy/scipy script benches/baseline_scipy.py doing the same work: the same
# profile CSV, the same linear half-car model, the same 1 kHz output grid and
# road inputs (scipy.signal.lsim, first-order hold), the same r.m.s. outputs.
#
# Each repetition runs both programs as whole processes (start-up, reading the
# files and printing included), alternating which goes first. Wall and CPU
# times go to benches/results/<date>-<machine>/times-<length>m.csv; summary-<length>m.md gives the
# medians and their ratio, and checks that both programs report the same seat
# acceleration r.m.s. (within 1 %), so that the same work was timed.
#
# Usage: benches/compare.sh            (REPS=5 LENGTH_M=20000 by default)
#        REPS=9 LENGTH_M=5000 benches/compare.sh
# Needs: cargo, python3 with numpy and scipy
#        (pip install -r tests/reference/requirements.txt).
set -euo pipefail

cd "$(dirname "$0")/.."
REPS=${REPS:-5}
LENGTH_M=${LENGTH_M:-20000}
SPACING_M=${SPACING_M:-0.05}
SPEED_M_S=${SPEED_M_S:-20}
CLASS=${CLASS:-C}
SEED=${SEED:-1}
VEHICLE=${VEHICLE:-profiles/vehicles/demo_hatchback.toml}

python3 -c "import numpy, scipy" 2>/dev/null || {
    echo "compare.sh: python3 with numpy and scipy is needed:" >&2
    echo "  pip install -r tests/reference/requirements.txt" >&2
    exit 2
}
cargo build --release --quiet --bin roughride
BIN=target/release/roughride

cpu_model=$(grep -m1 'model name' /proc/cpuinfo 2>/dev/null | cut -d: -f2- | sed 's/^ *//' || true)
cpu_model=${cpu_model:-unknown cpu}
cores=$(nproc)
. benches/common.sh
OUT=$(machine_results_dir)
mkdir -p "$OUT"
TAG="${LENGTH_M}m"

WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
PROFILE="$WORK/road.csv"
"$BIN" profile --class "$CLASS" --length "$LENGTH_M" --spacing "$SPACING_M" --seed "$SEED" \
    -o "$PROFILE" >/dev/null

# One timed run: repetition, order, tool name, then the command.
run_one() { timed_run "$OUT/times-$TAG.csv" 9 "$@"; }

RR=("$BIN" simulate --vehicle "$VEHICLE" --profile "$PROFILE" --speed "$SPEED_M_S" --solver exact --json)
PY=(python3 benches/baseline_scipy.py --vehicle "$VEHICLE" --profile "$PROFILE" --speed "$SPEED_M_S")

echo "rep,order,tool,wall_s,user_s,sys_s" >"$OUT/times-$TAG.csv"
load_before=$(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo "?")
echo "compare.sh: $REPS repetitions, class $CLASS, $LENGTH_M m at $SPACING_M m, $SPEED_M_S m/s, on $cores x $cpu_model"
for rep in $(seq 1 "$REPS"); do
    if [ $((rep % 2)) = 1 ]; then
        run_one "$rep" 1 roughride "${RR[@]}"
        run_one "$rep" 2 scipy "${PY[@]}"
    else
        run_one "$rep" 1 scipy "${PY[@]}"
        run_one "$rep" 2 roughride "${RR[@]}"
    fi
done
load_after=$(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo "?")
# The scratch folder is the machine's own: results name the profile as road.csv.
sed "s#$WORK/##g" "$WORK/roughride.json" >"$OUT/roughride-$TAG.json"
cp "$WORK/scipy.json" "$OUT/scipy-$TAG.json"

python3 - "$OUT" <<EOF
import csv, json, statistics, sys
out = sys.argv[1]
rows = list(csv.DictReader(open(f"{out}/times-$TAG.csv")))
def col(tool, key):
    return [float(r[key]) for r in rows if r["tool"] == tool and r[key] != ""]
rr, py = json.load(open(f"{out}/roughride-$TAG.json")), json.load(open(f"{out}/scipy-$TAG.json"))
lines = []
ok = True
lines.append("# roughride simulate --solver exact vs numpy/scipy (scipy.signal.lsim)")
lines.append("")
lines.append("- machine: $cores CPU(s), $cpu_model; load average before $load_before, after $load_after")
lines.append("- road: ISO 8608 class $CLASS, $LENGTH_M m at $SPACING_M m spacing, seed $SEED; $SPEED_M_S m/s; vehicle $VEHICLE")
lines.append(f"- output samples: {rr['solver']['samples']} (roughride), {py['samples']} (scipy) at 1 kHz")
lines.append("- roughride $(git rev-parse --short HEAD 2>/dev/null || echo '?'), $(rustc --version 2>/dev/null || echo 'rustc ?')")
lines.append("- $(python3 -c 'import sys, numpy, scipy; print(f"python {sys.version.split()[0]}, numpy {numpy.__version__}, scipy {scipy.__version__}")')")
lines.append(f"- repetitions: $REPS, alternating which program runs first")
lines.append("")
lines.append("| | roughride | scipy | ratio scipy/roughride |")
lines.append("|---|---|---|---|")
for key, name in (("wall_s", "wall, median (s)"), ("user_s", "user CPU, median (s)")):
    a, b = col("roughride", key), col("scipy", key)
    if a and b:
        ma, mb = statistics.median(a), statistics.median(b)
        lines.append(f"| {name} | {ma:.3f} | {mb:.3f} | **{mb / ma:.1f}x** |")
a, b = col("roughride", "wall_s"), col("scipy", "wall_s")
lines.append(f"| wall, fastest (s) | {min(a):.3f} | {min(b):.3f} | {min(b) / min(a):.1f}x |")
lines.append("")
lines.append("Same work, checked on the last repetition (relative difference):")
lines.append("")
lines.append("| quantity | roughride | scipy | difference |")
lines.append("|---|---|---|---|")
def check(name, x, y, limit):
    global ok
    d = abs(x - y) / abs(y) if y != 0 else abs(x - y)
    flag = "" if limit is None else (" (ok, limit 1 %)" if d <= limit else " (FAILS the 1 % check)")
    if limit is not None and d > limit:
        ok = False
    lines.append(f"| {name} | {x:.6g} | {y:.6g} | {d:.2e}{flag} |")
for s_rr, s_py in zip(rr["seats"], py["seats"]):
    check(f"seat {s_rr['name']} accel_rms", s_rr["accel_rms"], s_py["accel_rms"], 0.01)
for s_rr, s_py in zip(rr["seats"], py["seats"]):
    check(f"seat {s_rr['name']} aw (different Wk realisations)", s_rr["aw"], s_py["aw"], None)
for axle in ("front", "rear"):
    for key in ("travel_rms", "tyre_load_rms"):
        check(f"{axle} {key}", rr["axles"][axle][key], py["axles"][axle][key], None)
for key in ("heave_accel_rms", "pitch_accel_rms"):
    check(f"body {key}", rr["body"][key], py["body"][key], None)
if len(rr["seats"]) != len(py["seats"]):
    ok = False
    lines.append("seat counts differ")
text = "\n".join(lines) + "\n"
open(f"{out}/summary-$TAG.md", "w").write(text)
print()
print(text)
print(f"results in {out}/")
sys.exit(0 if ok else 1)
EOF
