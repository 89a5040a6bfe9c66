#!/usr/bin/env bash
# Side-by-side timing of `roughride simulate --solver piecewise` (and
# `--solver auto`, which picks the same solver for this vehicle) against the
# numpy/scipy script benches/nonlinear_scipy.py: scipy.integrate.solve_ivp
# (DOP853, rtol 1e-10) stopped at every switch of the piecewise-linear model
# by its event location. Same vehicle file (the demo van with bump and
# rebound stops and asymmetric dampers; tyres may leave the road), same
# ISO 8608 class D profile file (generated once, read by both), same 1 kHz
# output grid, same r.m.s. outputs.
#
# Each repetition runs the programs as whole processes (start-up, reading
# the files and printing included), alternating which goes first. The
# scipy script also reports the seconds spent in its integration loop
# alone. Times go to benches/results/<date>-<machine>/nonlinear-times-<length>m.csv,
# the summary to nonlinear-summary-<length>m.md. The run fails (exit 1) if
# any compared r.m.s. value differs by more than 1e-3 relative, or if auto
# and piecewise disagree.
#
# solve_ivp with events costs a few hundred microseconds per output sample,
# so the default road is short: 1 km at 20 m/s (50 001 samples), 3
# repetitions, about 1.5–2.5 minutes on a shared 2-core machine. The cost
# per sample is the figure to compare; roughride's whole-process time on so
# short a road is mostly start-up (see the criterion bench
# `piecewise_cost` for the solver alone).
#
# Usage: benches/compare_nonlinear.sh        (REPS=3 LENGTH_M=1000 by default)
#        REPS=1 LENGTH_M=300 benches/compare_nonlinear.sh
# Needs: cargo, python3 with numpy and scipy
#        (pip install -r tests/reference/requirements.txt).
set -euo pipefail

cd "$(dirname "$0")/.."
REPS=${REPS:-3}
LENGTH_M=${LENGTH_M:-1000}
# 0.1 m: a multiple of the 0.02 m travelled per output sample at 20 m/s and
# a divisor of the van's 3.2 m wheelbase, so both programs see the same road
# at every output instant.
SPACING_M=${SPACING_M:-0.1}
SPEED_M_S=${SPEED_M_S:-20}
CLASS=${CLASS:-D}
SEED=${SEED:-1}
VEHICLE=${VEHICLE:-profiles/vehicles/demo_van_stops.toml}
LIMIT=${LIMIT:-1e-3}

# The machine first: every figure below belongs to it.
cpu_model=$(grep -m1 'model name' /proc/cpuinfo 2>/dev/null | cut -d: -f2- | sed 's/^ *//' || true)
cpu_model=${cpu_model:-unknown cpu}
cores=$(nproc)
load_before=$(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo "?")
echo "machine: $cores CPU(s), $cpu_model"
echo "load average (1, 5, 15 min) before: $load_before"

python3 -c "import numpy, scipy" 2>/dev/null || {
    echo "compare_nonlinear.sh: python3 with numpy and scipy is needed:" >&2
    echo "  pip install -r tests/reference/requirements.txt" >&2
    exit 2
}
cargo build --release --quiet --bin roughride
BIN=target/release/roughride

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
run_one() { timed_run "$OUT/nonlinear-times-$TAG.csv" 19 "$@"; }

RR=("$BIN" simulate --vehicle "$VEHICLE" --profile "$PROFILE" --speed "$SPEED_M_S" --json)
PY=(python3 benches/nonlinear_scipy.py --vehicle "$VEHICLE" --profile "$PROFILE" --speed "$SPEED_M_S")

echo "rep,order,tool,wall_s,user_s,sys_s" >"$OUT/nonlinear-times-$TAG.csv"
echo "compare_nonlinear.sh: $REPS repetitions, class $CLASS, $LENGTH_M m at $SPACING_M m, $SPEED_M_S m/s, $VEHICLE"
for rep in $(seq 1 "$REPS"); do
    if [ $((rep % 2)) = 1 ]; then
        run_one "$rep" 1 roughride-piecewise "${RR[@]}" --solver piecewise
        run_one "$rep" 2 roughride-auto "${RR[@]}" --solver auto
        run_one "$rep" 3 scipy-solve_ivp "${PY[@]}"
    else
        run_one "$rep" 1 scipy-solve_ivp "${PY[@]}"
        run_one "$rep" 2 roughride-auto "${RR[@]}" --solver auto
        run_one "$rep" 3 roughride-piecewise "${RR[@]}" --solver piecewise
    fi
done
load_after=$(cut -d' ' -f1-3 /proc/loadavg 2>/dev/null || echo "?")
echo "load average (1, 5, 15 min) after: $load_after"
# The scratch folder is the machine's own: results name the profile as road.csv.
for tool in roughride-piecewise roughride-auto; do
    sed "s#$WORK/##g" "$WORK/$tool.json" >"$OUT/nonlinear-$tool-$TAG.json"
done
cp "$WORK/scipy-solve_ivp.json" "$OUT/nonlinear-scipy-$TAG.json"

python3 - "$OUT" <<EOF
import csv, json, statistics, sys
out = sys.argv[1]
limit = float("$LIMIT")
rows = list(csv.DictReader(open(f"{out}/nonlinear-times-$TAG.csv")))
def col(tool, key):
    return [float(r[key]) for r in rows if r["tool"] == tool and r[key] != ""]
pw = json.load(open(f"{out}/nonlinear-roughride-piecewise-$TAG.json"))
auto = json.load(open(f"{out}/nonlinear-roughride-auto-$TAG.json"))
py = json.load(open(f"{out}/nonlinear-scipy-$TAG.json"))
ok = True
L = []
L.append("# roughride simulate --solver piecewise vs scipy solve_ivp with events")
L.append("")
L.append("- machine: $cores CPU(s), $cpu_model; load average before $load_before, after $load_after")
L.append("- road: ISO 8608 class $CLASS, $LENGTH_M m at $SPACING_M m spacing, seed $SEED (one file, read by both); $SPEED_M_S m/s; vehicle $VEHICLE")
st = pw["solver"]
sw = st["piecewise"]
L.append(f"- roughride: solver {st['solver']} (auto chose {auto['solver']['solver']}), {sw['switches']} switches, {sw['regimes']} regimes, "
         f"stop engagements {sw['stop_engagements']}, lift-offs {sw['lift_offs']}")
L.append(f"- scipy: solve_ivp {py['method']}, rtol {py['rtol']:g}, atol {py['atol']:g}, {py['events']} events located")
L.append("- roughride $(git rev-parse --short HEAD 2>/dev/null || echo '?'), $(rustc --version 2>/dev/null || echo 'rustc ?')")
L.append("- $(python3 -c 'import sys, numpy, scipy; print(f"python {sys.version.split()[0]}, numpy {numpy.__version__}, scipy {scipy.__version__}")')")
L.append(f"- repetitions: $REPS, alternating which program runs first; medians of whole-process wall time")
L.append("")
n_rr, n_py = st["samples"], py["samples"]
if n_rr != n_py:
    ok = False
    L.append(f"**sample counts differ: {n_rr} vs {n_py}**")
L.append("| | samples | wall, median (s) | user CPU, median (s) | wall per sample (µs) |")
L.append("|---|---|---|---|---|")
med = {}
for tool, n in (("roughride-piecewise", n_rr), ("roughride-auto", n_rr), ("scipy-solve_ivp", n_py)):
    w, u = col(tool, "wall_s"), col(tool, "user_s")
    med[tool] = statistics.median(w)
    ucell = f"{statistics.median(u):.3f}" if u else "–"
    L.append(f"| {tool} | {n} | {med[tool]:.3f} | {ucell} | {med[tool] / n * 1e6:.2f} |")
L.append(f"| scipy integration loop only (last rep) | {n_py} | {py['seconds']:.3f} | – | {py['seconds'] / n_py * 1e6:.2f} |")
L.append("")
ratio = med["scipy-solve_ivp"] / med["roughride-piecewise"]
L.append(f"**time ratio scipy / roughride piecewise (whole process, wall): {ratio:.0f}×**; "
         f"scipy integration alone / roughride whole process: {py['seconds'] / med['roughride-piecewise']:.0f}×")
L.append("")
L.append(f"Same results (last repetition; relative difference, limit {limit:g}):")
L.append("")
L.append("| quantity | roughride piecewise | scipy solve_ivp | difference | |")
L.append("|---|---|---|---|---|")
def check(name, x, y):
    global ok
    d = abs(x - y) / abs(y) if y != 0 else abs(x - y)
    good = d <= limit
    ok = ok and good
    L.append(f"| {name} | {x:.9g} | {y:.9g} | {d:.2e} | {'ok' if good else 'FAILS'} |")
for j, seat in enumerate(pw["seats"]):
    check(f"seat {seat['name']} accel_rms (m/s²)", seat["accel_rms"], py["seat_accel_rms"][j])
check("body heave_accel_rms (m/s²)", pw["body"]["heave_accel_rms"], py["heave_accel_rms"])
check("body pitch_accel_rms (rad/s²)", pw["body"]["pitch_accel_rms"], py["pitch_accel_rms"])
check("body heave_rms (m)", pw["body"]["heave_rms"], py["heave_rms"])
for i, axle in enumerate(("front", "rear")):
    check(f"{axle} travel_rms (m)", pw["axles"][axle]["travel_rms"], py["axles"][i]["travel_rms"])
    check(f"{axle} tyre_load_rms (N)", pw["axles"][axle]["tyre_load_rms"], py["axles"][i]["tyre_load_rms"])
for i, axle in enumerate(("front", "rear")):
    a, b = pw["axles"][axle]["time_off_ground_fraction"], py["axles"][i]["time_off_ground_fraction"]
    L.append(f"| {axle} time off the ground (samples, not checked) | {a * n_rr:.0f} | {b * n_py:.0f} | {abs(a - b) * n_rr:.0f} | |")
# auto must have chosen the piecewise solver and printed the same numbers.
same = {k: pw[k] for k in ("seats", "axles", "body")} == {k: auto[k] for k in ("seats", "axles", "body")}
if auto["solver"]["solver"] != "piecewise" or not same:
    ok = False
    L.append("")
    L.append("**--solver auto did not give the piecewise run's results**")
else:
    L.append("")
    L.append("--solver auto chose the piecewise solver and printed the same seat, axle and body values.")
L.append("")
L.append("Caution (seat values): " + pw["caution"])
text = "\n".join(L) + "\n"
open(f"{out}/nonlinear-summary-$TAG.md", "w").write(text)
print()
print(text)
print(f"results in {out}/")
sys.exit(0 if ok else 1)
EOF
