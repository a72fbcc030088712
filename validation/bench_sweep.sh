#!/usr/bin/env bash
# Whole-program benchmark of the 10,000-point sweep (meshes-demo/sweep-primary.toml): wall time
# with 1 and 2 threads (best of 9), parallel efficiency, and the numpy/scipy baseline
# (validation/sweep_baseline.py, best of 3) with its agreement check. Figures go into README.md.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=${CARGO_TARGET_DIR:-target}/release/coilfield
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
best() { sort -g | head -1; }
run() {
    for _ in $(seq 9); do
        rm -f "$tmp/k.csv"
        # Wall time (s) of the whole process, start-up and file writing included.
        t0=$(date +%s%N)
        "$bin" sweep meshes-demo/sweep-primary.toml --out "$tmp/k.csv" --threads "$1" \
            >/dev/null 2>&1
        t1=$(date +%s%N)
        awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.3f\n", (b - a) / 1e9 }'
    done | best
}
t1=$(run 1)
t2=$(run 2)
base=$(for _ in 1 2 3; do python3 validation/sweep_baseline.py | awk '{print $(NF-1)}'; done | best)
check=$(python3 validation/sweep_baseline.py --check "$tmp/k.csv" | tail -1)
echo "commit $(git rev-parse --short HEAD), $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | xargs)"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
echo "coilfield sweep, 10,000 points: 1 thread ${t1} s, 2 threads ${t2} s"
awk -v a="$t1" -v b="$t2" -v p="$base" 'BEGIN {
    printf "parallel efficiency 1 -> 2 threads: %.0f %%\n", 100 * a / (2 * b);
    printf "numpy/scipy baseline: %s s; speed-up (2 threads): %.1fx\n", p, p / b }'
echo "$check"
