#!/usr/bin/env bash
# Whole-program benchmarks of the sweeps (figures go into README.md):
#   - the 10,000-point sweeps meshes-demo/bench-sweep-below.toml (primary below the secondary's
#     base) and meshes-demo/bench-sweep-overlap.toml (primary across its lower turns): wall time
#     with 1 and 2 threads over 9 runs each (median and best), parallel efficiency from the
#     medians, the ratio overlap / below, and the numpy/scipy baseline of the same k
#     (validation/sweep_baseline.py, best of 3) with its agreement check;
#   - the 1,000-point sweep meshes-demo/bench-sweep-tilted.toml (primary offset and tilted):
#     wall time, and where the time goes (callgrind instruction counts, inclusive).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=${CARGO_TARGET_DIR:-target}/release/coilfield
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

# Wall time (s) of each of $3 runs of the whole process (start-up and file writing included).
times() {
    for _ in $(seq "$3"); do
        rm -f "$tmp/k.csv"
        t0=$(date +%s%N)
        "$bin" sweep "$1" --out "$tmp/k.csv" --threads "$2" >/dev/null 2>&1
        t1=$(date +%s%N)
        awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.4f\n", (b - a) / 1e9 }'
    done
}
median() { sort -g | awk '{ v[NR] = $1 } END { print v[int((NR + 1) / 2)] }'; }
best() { sort -g | head -1; }

echo "commit $(git rev-parse --short HEAD), $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | xargs)"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
declare -A med2
for case in below overlap; do
    sweep=meshes-demo/bench-sweep-$case.toml
    t1=$(times "$sweep" 1 9)
    t2=$(times "$sweep" 2 9)
    m1=$(echo "$t1" | median)
    m2=$(echo "$t2" | median)
    med2[$case]=$m2
    base=$(for _ in 1 2 3; do python3 validation/sweep_baseline.py --sweep "$sweep" | awk '{print $(NF-1)}'; done | best)
    rm -f "$tmp/k.csv"
    "$bin" sweep "$sweep" --out "$tmp/k.csv" >/dev/null 2>&1
    check=$(python3 validation/sweep_baseline.py --sweep "$sweep" --check "$tmp/k.csv" | tail -1)
    echo "$case: 1 thread median ${m1} s (best $(echo "$t1" | best)), 2 threads median ${m2} s (best $(echo "$t2" | best))"
    awk -v a="$m1" -v b="$m2" -v p="$base" 'BEGIN {
        printf "  parallel efficiency 1 -> 2 threads (medians of 9): %.0f %%\n", 100 * a / (2 * b);
        printf "  numpy/scipy baseline: %s s; speed-up (2 threads, median): %.1fx\n", p, p / b }'
    echo "  $check"
done
awk -v a="${med2[overlap]}" -v b="${med2[below]}" 'BEGIN {
    printf "overlap / below (2 threads, medians): %.2f\n", a / b }'

sweep=meshes-demo/bench-sweep-tilted.toml
t1=$(times "$sweep" 1 3 | median)
t2=$(times "$sweep" 2 3 | median)
echo "tilted (1,000 points): 1 thread ${t1} s, 2 threads ${t2} s (medians of 3)"
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
                total / 1e6, 100 * g / total, 100 * f / total, 100 * (total - g - f) / total }'
fi
