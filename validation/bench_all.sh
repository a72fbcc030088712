#!/usr/bin/env bash
# Every benchmark behind the README's performance table, in one run at one commit:
#   - the sweeps (validation/bench_sweep.sh: 10,000 points below and across the secondary's
#     base, medians of 9 on 1 and 2 threads, the numpy/scipy baseline; 1,000 tilted points);
#   - the resonance model (criterion: 200-section distributed model; the spark-gap solution over
#     2 ms) and the 200-point sweep of f1 against the toroid's height;
#   - the 100-point finite-element sweep of the torus's height over the PVC form (target 60 s);
#   (the inductance and field kernels: `cargo bench -p coilfield-solver --bench inductance`
#   and `--bench fields`, figures in the README's earlier tables).
# Run it on a quiet machine: the script prints the load average before each part.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
bin=${CARGO_TARGET_DIR:-target}/release/coilfield
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
echo "commit $(git rev-parse --short HEAD), $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | xargs)"

echo "== sweeps"
bash validation/bench_sweep.sh

echo "== 200-point sweep of f1 against the toroid's height (wall time, 2 threads, median of 3)"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
for _ in 1 2 3; do
    rm -f "$tmp/f.csv"
    t0=$(date +%s%N)
    "$bin" sweep meshes-demo/bench-sweep-topload-frequency.toml --out "$tmp/f.csv" --threads 2 >/dev/null 2>&1
    t1=$(date +%s%N)
    awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.2f\n", (b - a) / 1e9 }'
done | sort -g | awk '{ v[NR] = $1 } END { print "  median " v[2] " s (runs " v[1] ", " v[2] ", " v[3] " s)" }'

echo "== 100-point sweep of the torus's height over the PVC form, finite elements (wall time, 2 threads, median of 3)"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
for _ in 1 2 3; do
    rm -f "$tmp/c.csv"
    t0=$(date +%s%N)
    "$bin" sweep meshes-demo/bench-sweep-form-topload.toml --out "$tmp/c.csv" --threads 2 >/dev/null 2>&1
    t1=$(date +%s%N)
    awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.2f\n", (b - a) / 1e9 }'
done | sort -g | awk '{ v[NR] = $1 } END { print "  median " v[2] " s (runs " v[1] ", " v[2] ", " v[3] " s)" }'

echo "== criterion: resonance, circuit (low, median, high estimate)"
echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
for b in resonance circuit; do
    cargo bench --quiet -p coilfield-solver --bench "$b" -- --noplot --warm-up-time 1 \
        --measurement-time 4 2>/dev/null |
        awk '/time:/ { if ($0 ~ /^ /) print "  " prev " " $0; else print "  " $0 } { prev = $0 }'
done
