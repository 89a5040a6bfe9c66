#!/usr/bin/env bash
# Instruction counts (valgrind's callgrind, independent of the machine's
# load) of the piecewise-exact solver on the demo van with stops against
# the exact solver on the same van linearised (stops removed, each axle's
# damping the mean of its bump and rebound rates, as benches/piecewise.rs
# `linear_van` builds it), on one ISO 8608 class D road: 1 km, seed 1,
# 0.1 m spacing, 20 m/s, 1 kHz (50 001 samples).
#
# The figure is each solver's own count: the inclusive count of
# `piecewise::run` (or `exact::run`) in the solver's thread minus the
# inclusive count of the hand-over to the evaluators' thread
# (`Feed::accept`, `Feed::accept_slot`). Printed, and written to
# benches/results/<date>-<machine>/piecewise-callgrind.md.
#
# Usage: benches/piecewise_callgrind.sh
# Needs: cargo, valgrind (callgrind_annotate), python3. About 2 minutes.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
B=target/release/roughride
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT

$B profile --class D --length 1000 --spacing 0.1 --seed 1 -o "$WORK/road.csv" >/dev/null
python3 - "$WORK/van_lin.toml" <<'PY'
import re, sys
out, section, rates = [], None, {}
for line in open("profiles/vehicles/demo_van_stops.toml"):
    m = re.match(r"\[(\w+)\]", line)
    if m:
        section = m.group(1)
    key = line.split("=")[0].strip()
    if section in ("front", "rear"):
        if key in ("bump_clearance", "rebound_clearance", "stop_rate"):
            continue
        if key in ("damping_bump", "damping_rebound"):
            rates.setdefault(section, []).append(float(line.split("=")[1]))
            if len(rates[section]) == 2:
                out.append("damping = %r\n" % (sum(rates[section]) / 2))
            continue
    out.append(line)
open(sys.argv[1], "w").write("".join(out))
PY

# own_count SOLVER VEHICLE: the solver's own instruction count.
own_count() {
    local solver=$1 vehicle=$2
    valgrind --tool=callgrind --separate-threads=yes \
        --callgrind-out-file="$WORK/cg.$solver.%p" \
        $B simulate --vehicle "$vehicle" --profile "$WORK/road.csv" --speed 20 \
        --solver "$solver" --json >"$WORK/$solver.json" 2>/dev/null
    callgrind_annotate --inclusive=yes "$(ls "$WORK"/cg."$solver".*-01)" 2>/dev/null |
        python3 -c '
import re, sys
solver = sys.argv[1]
rows = [l for l in sys.stdin if re.match(r"\s*[\d,]+ ", l) and "=>" not in l]
def top(pat):
    v = [int(l.split()[0].replace(",", "")) for l in rows if re.search(pat, l)]
    return max(v) if v else 0
run = top(r"%s::run( |$)" % solver)
hand_over = top(r"SampleSink>::accept( |$)") + top(r"SampleSink>::accept_slot( |$)")
print(run - hand_over)
' "$solver"
}

pw=$(own_count piecewise profiles/vehicles/demo_van_stops.toml)
ex=$(own_count exact "$WORK/van_lin.toml")
switches=$(grep -o '"switches":[0-9]*' "$WORK/piecewise.json" | cut -d: -f2)
cpu_model=$(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')
cores=$(nproc)
load=$(cut -d' ' -f1 /proc/loadavg)
summary=$(python3 -c "
pw, ex = $pw, $ex
print('| run | instructions | per sample | x exact |')
print('|---|---|---|---|')
print('| exact, linearised van | %.1f M | %.0f | 1 |' % (ex / 1e6, ex / 50001))
print('| piecewise, van with stops ($switches switches) | %.1f M | %.0f | %.2f |' % (pw / 1e6, pw / 50001, pw / ex))
")
echo "$summary"
source benches/common.sh
dir=$(machine_results_dir)
mkdir -p "$dir"
{
    echo "# Piecewise-exact vs linear exact, instructions (\`benches/piecewise_callgrind.sh\`)"
    echo
    echo "Machine: $cores CPU(s), $cpu_model, load average $load (instruction"
    echo "counts do not depend on the load). ISO 8608 class D, 1 km, seed 1, 0.1 m spacing, 20 m/s, 1 kHz"
    echo "(50 001 samples); each solver's own count (its run minus the hand-over"
    echo "to the evaluators' thread). Commit $(git rev-parse --short HEAD)."
    echo
    echo "$summary"
} >"$dir/piecewise-callgrind.md"
echo "written to $dir/piecewise-callgrind.md"
