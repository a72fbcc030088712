#!/usr/bin/env bash
# Whole-program benchmarks of the sweeps (figures go into README.md):
#   - the 10,000-point sweeps meshes-demo/bench-sweep-below.toml (primary below the secondary's
#     base) and meshes-demo/bench-sweep-overlap.toml (primary across its lower turns): wall time
#     with 1 and 2 threads over 9 pairs of runs (median and best), parallel efficiency from the
#     medians, the ratio overlap / below, and the numpy/scipy baseline of the same k
#     (validation/sweep_baseline.py, best of 3) with its agreement check; and the machine's own
#     ceiling for two threads (two independent 1-thread runs at once against one alone);
#   - the 1,000-point sweep meshes-demo/bench-sweep-tilted.toml (primary offset and tilted):
#     wall time, and where the time goes (callgrind instruction counts, inclusive).
# With BENCH_ROWS=FILE the figures are also appended to FILE as rows of the README's
# performance table (markdown: benchmark, target, measured); validation/bench_all.sh does this.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=${CARGO_TARGET_DIR:-target}/release/coilfield
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

# Wall time (s) of one run of the whole process (start-up and file writing included) of sweep
# $1 on $2 threads, read from bash's own clock (microseconds): no clock process is started
# around the timed one (two `date` processes added 1.5-3.5 ms to every run).
# The output is $tmp/k.csv, or $tmp/$3.csv when $3 is given.
once() {
    local out=$tmp/${3:-k}.csv
    rm -f "$out"
    t0=${EPOCHREALTIME/[.,]/}
    if ! "$bin" sweep "$1" --out "$out" --threads "$2" >/dev/null 2>"$out.err"; then
        # A failed run has no time worth reporting: stop the whole benchmark.
        echo "bench_sweep.sh: $1 on $2 threads failed: $(cat "$out.err")" >&2
        kill -TERM $$
    fi
    t1=${EPOCHREALTIME/[.,]/}
    awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.4f\n", (b - a) / 1e6 }'
}
# The machine's own ceiling for two threads: $2 rounds of one 1-thread run of sweep $1 alone,
# then two 1-thread runs of it at once (two processes: no shared memory, no shared work), "alone
# slower-of-the-two" per line. On a machine whose cores do not slow each other the two take
# as long as one alone.
ceiling() {
    once "$1" 1 >/dev/null
    for _ in $(seq "$2"); do
        alone=$(once "$1" 1)
        together=$( (once "$1" 1 p & once "$1" 1 q & wait) | sort -g | tail -1)
        echo "$alone $together"
    done
}
# Wall times of $2 pairs of runs of sweep $1, "t1 t2" per line: one thread, then two threads,
# in each pair, so that a drift of the machine's speed during the benchmark touches both alike;
# one untimed run first (the binary and the files in the page cache).
pairs() {
    once "$1" 2 >/dev/null
    for _ in $(seq "$2"); do
        echo "$(once "$1" 1) $(once "$1" 2)"
    done
}
# Wall times of $3 runs of sweep $1 on $2 threads, one per line.
times() {
    for _ in $(seq "$3"); do once "$1" "$2"; done
}
# One row of the performance table, when asked for.
row() { if [ -n "${BENCH_ROWS:-}" ]; then printf '| %s | %s | %s |\n' "$1" "$2" "$3" >>"$BENCH_ROWS"; fi; }
median() { sort -g | awk '{ v[NR] = $1 } END { print v[int((NR + 1) / 2)] }'; }
best() { sort -g | head -1; }

echo "commit $(git rev-parse --short HEAD), $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | xargs)"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
declare -A med2 med1 eff speed agree base_s
for case in below overlap; do
    sweep=meshes-demo/bench-sweep-$case.toml
    p=$(pairs "$sweep" 9)
    t1=$(echo "$p" | cut -d' ' -f1)
    t2=$(echo "$p" | cut -d' ' -f2)
    m1=$(echo "$t1" | median)
    m2=$(echo "$t2" | median)
    med2[$case]=$m2
    med1[$case]=$m1
    base=$(for _ in 1 2 3; do python3 validation/sweep_baseline.py --sweep "$sweep" | awk '{print $(NF-1)}'; done | best)
    rm -f "$tmp/k.csv"
    "$bin" sweep "$sweep" --out "$tmp/k.csv" >/dev/null 2>&1
    check=$(python3 validation/sweep_baseline.py --sweep "$sweep" --check "$tmp/k.csv" | tail -1)
    echo "$case: 1 thread median ${m1} s (best $(echo "$t1" | best)), 2 threads median ${m2} s (best $(echo "$t2" | best))"
    awk -v a="$m1" -v b="$m2" -v p="$base" 'BEGIN {
        printf "  parallel efficiency 1 -> 2 threads (medians of 9): %.0f %%\n", 100 * a / (2 * b);
        printf "  numpy/scipy baseline: %s s; speed-up (2 threads, median): %.1fx\n", p, p / b }'
    echo "  $check"
    eff[$case]=$(awk -v a="$m1" -v b="$m2" 'BEGIN { printf "%.0f %%", 100 * a / (2 * b) }')
    speed[$case]=$(awk -v b="$m2" -v p="$base" 'BEGIN { printf "%.1fx", p / b }')
    agree[$case]=$(echo "$check" | awk '{ print $NF }')
    base_s[$case]=$base
done
# The ceiling, on the slow case.
c=$(ceiling meshes-demo/bench-sweep-overlap.toml 9)
c1=$(echo "$c" | cut -d' ' -f1 | median)
c2=$(echo "$c" | cut -d' ' -f2 | median)
cap=$(awk -v a="$c1" -v b="$c2" 'BEGIN { printf "%.0f %%", 100 * a / b }')
echo "two 1-thread runs of the overlap sweep at once: the slower $c2 s against $c1 s alone (medians of 9): the machine's ceiling for 2 threads $cap"
awk -v a="${med2[overlap]}" -v b="${med2[below]}" 'BEGIN {
    printf "overlap / below (2 threads, medians): %.2f\n", a / b }'
ratio=$(awk -v a="${med2[overlap]}" -v b="${med2[below]}" 'BEGIN { printf "%.2fx", a / b }')
row "10,000-point sweep of k, primary below the secondary's base (\`bench-sweep-below.toml\`), whole process, median of 9, 2 threads (1 thread)" \
    "-" "${med2[below]} s (${med1[below]} s)"
row "the same with the primary's height running across the secondary's lower turns (\`bench-sweep-overlap.toml\`), 2 threads (1 thread); ratio to the case below" \
    "<= 1.5x the case below" "${med2[overlap]} s (${med1[overlap]} s); $ratio"
row "parallel efficiency 1 -> 2 threads, from the medians of 9 (below / overlap)" ">= 85 %" "${eff[below]} / ${eff[overlap]}"
row "the machine's own ceiling for 2 threads: two independent 1-thread runs of the overlap sweep at once, the slower of the two against one alone, medians of 9" \
    "-" "$cap ($c2 s against $c1 s)"
row "speed-up over the numpy/scipy baseline \`validation/sweep_baseline.py\` of the same k, best of 3 (below / overlap; baseline time; largest relative difference)" \
    ">= 25x (stretch 50x)" "${speed[below]} / ${speed[overlap]} (${base_s[below]} s / ${base_s[overlap]} s; ${agree[below]} / ${agree[overlap]})"

sweep=meshes-demo/bench-sweep-tilted.toml
t1=$(times "$sweep" 1 3 | median)
t2=$(times "$sweep" 2 3 | median)
echo "tilted (1,000 points): 1 thread ${t1} s, 2 threads ${t2} s (medians of 3)"
row "1,000-point sweep of a 10-degree-tilted, offset primary's height (\`bench-sweep-tilted.toml\`), whole process, median of 3, 2 threads (1 thread)" "-" "${t2} s (${t1} s)"
# Where the time goes, counted inclusively in instructions (callgrind: repeatable whatever else
# the machine runs; one thread): the geometric checks (every call of the prepared design's check,
# at planning and at the points, with the sampling and the sine, cosine and hypot calls under
# it), the physics (the metrics' evaluation at the points), and the rest (reading, planning,
# building each point's design from its table, output).
if command -v valgrind >/dev/null; then
    valgrind --tool=callgrind --callgrind-out-file="$tmp/cg.out" "$bin" sweep "$sweep" \
        --out "$tmp/t.csv" --threads 1 >/dev/null 2>&1
    callgrind_annotate --inclusive=yes "$tmp/cg.out" 2>/dev/null |
        awk '{ gsub(",", "", $1) }
            /PROGRAM TOTALS/ { total = $1 }
            /checks\.rs:coilfield_geometry::query::checks::PreparedDesign::check \[/ { g = $1 }
            /metrics\.rs:coilfield_solver::metrics::Evaluator::evaluate \[/ { f = $1 }
            END { printf "  profile (1 thread, %.0f million instructions, inclusive): geometric checks %.0f %%, physics %.0f %%, rest %.0f %%\n",
                total / 1e6, 100 * g / total, 100 * f / total, 100 * (total - g - f) / total }' |
        tee "$tmp/profile.txt"
    row "where the tilted sweep's time goes: callgrind, 1 thread, inclusive (every call of the prepared design's check; the metrics' evaluation; the rest)" \
        "geometric checks < half" "$(sed 's/^  profile (1 thread, //; s/, inclusive)//' "$tmp/profile.txt")"
fi
