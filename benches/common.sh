# Sourced by the side-by-side scripts (compare.sh, compare_nonlinear.sh):
# the results folder named after the machine, and one timed run of a whole
# process. Needs $cpu_model, $cores and $WORK set by the caller.

# benches/results/<date>-<cores>cpu-<cpu model, as a slug>
machine_results_dir() {
    local slug
    slug=$(printf '%s' "$cpu_model" | tr 'A-Z' 'a-z' | tr -cs 'a-z0-9' '-' | sed 's/^-//;s/-$//' | cut -c1-40)
    printf 'benches/results/%s-%scpu-%s\n' "$(date +%F)" "$cores" "$slug"
}

HAVE_TIME=0
if [ -x /usr/bin/time ]; then HAVE_TIME=1; fi

# timed_run TIMES_CSV WIDTH REP ORDER TOOL COMMAND...: runs COMMAND with its
# output kept as $WORK/TOOL.json, appends "rep,order,tool,wall_s,user_s,sys_s"
# to TIMES_CSV and prints the wall time (tool name padded to WIDTH).
timed_run() {
    local times=$1 width=$2 rep=$3 order=$4 tool=$5
    shift 5
    local t0 t1 cpu=","
    t0=$(date +%s%N)
    if [ "$HAVE_TIME" = 1 ]; then
        /usr/bin/time -f "%U,%S" -o "$WORK/cpu" "$@" >"$WORK/$tool.json" 2>"$WORK/$tool.err"
        cpu=$(tail -n 1 "$WORK/cpu")
    else
        "$@" >"$WORK/$tool.json" 2>"$WORK/$tool.err"
    fi
    t1=$(date +%s%N)
    local wall
    wall=$(awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.4f", (b - a) / 1e9 }')
    echo "$rep,$order,$tool,$wall,$cpu" >>"$times"
    printf "  rep %s  %-${width}s %8s s\n" "$rep" "$tool" "$wall"
}
