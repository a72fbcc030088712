#!/usr/bin/env bash
# Every benchmark behind the README's performance table, in one run at one commit, printed as
# that table (markdown: benchmark, target, measured) after the raw output of each part:
#   - the sweeps (validation/bench_sweep.sh: 10,000 points below and across the secondary's
#     base, medians of 9 on 1 and 2 threads, the numpy/scipy baseline; 1,000 tilted points and
#     their callgrind profile);
#   - the 200-point sweep of f1 against the toroid's height and the 100-point finite-element
#     sweep of the torus's height over the PVC form (whole process, 2 threads, median of 3);
#   - the criterion benches of the solver crate (inductance, fields, finite elements, resonance,
#     circuit): criterion's median and its 95 % confidence interval, read from its estimates.
# Run it on a quiet machine (the load average is printed before each part); the benches are
# compiled before anything is timed. Usage: bash validation/bench_all.sh [TABLE.md]
# (the table is also written to TABLE.md when given).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release --quiet
cargo bench --quiet -p coilfield-solver --no-run 2>/dev/null
target=${CARGO_TARGET_DIR:-target}
bin=$target/release/coilfield
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
rows=$tmp/rows.md
: >"$rows"
row() { printf '| %s | %s | %s |\n' "$1" "$2" "$3" >>"$rows"; }
load() { cut -d' ' -f1 /proc/loadavg; }

commit=$(git rev-parse --short HEAD)
machine="$(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | xargs), $(awk '/MemTotal/ { printf "%.0f GiB", $2 / 1048576 }' /proc/meminfo)"
echo "commit $commit, $machine"
loads="before the sweeps $(load)"

echo "== sweeps"
BENCH_ROWS=$rows bash validation/bench_sweep.sh

# Median of 3 wall times (s) of one sweep on 2 threads, whole process.
sweep3() {
    for _ in 1 2 3; do
        rm -f "$tmp/s.csv" "$tmp"/.s.csv*
        # Microseconds from bash's own clock (as bench_sweep.sh).
        t0=${EPOCHREALTIME/[.,]/}
        "$bin" sweep "$1" --out "$tmp/s.csv" --threads 2 >/dev/null 2>&1
        t1=${EPOCHREALTIME/[.,]/}
        awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.2f\n", (b - a) / 1e6 }'
    done | sort -g | paste -sd' ' | awk '{ print $2 " s (runs " $1 ", " $2 ", " $3 " s)" }'
}

echo "== 200-point sweep of f1 against the toroid's height"
loads="$loads, before the f1 sweep $(load)"
f1=$(sweep3 meshes-demo/bench-sweep-topload-frequency.toml)
echo "  median $f1"
row "200-point sweep of f1 against the toroid's height (\`bench-sweep-topload-frequency.toml\`), 2 threads, whole process, median of 3" "<= 60 s" "$f1"

echo "== 100-point finite-element sweep of the torus's height over the PVC form"
loads="$loads, before the form sweep $(load)"
form=$(sweep3 meshes-demo/bench-sweep-form-topload.toml)
echo "  median $form"
row "100-point sweep of the torus's height over the PVC form in its room, finite elements at every point (\`bench-sweep-form-topload.toml\`), 2 threads, whole process, median of 3" "<= 60 s" "$form"

echo "== criterion benches of the solver"
loads="$loads, before the criterion benches $(load)"
rm -rf "$target/criterion"
for b in inductance fields fem resonance circuit; do
    cargo bench --quiet -p coilfield-solver --bench "$b" -- --noplot --warm-up-time 1 \
        --measurement-time 4 2>/dev/null | grep -E 'time:|^[a-z]' || true
done
# Criterion's median of each bench (its 95 % interval), as one table row per line below:
# id | label | target | divisor (the bench's elements per iteration, for a per-element time).
python3 - "$target/criterion" >>"$rows" <<'EOF'
import json, pathlib, sys

root = pathlib.Path(sys.argv[1])
found = {}
for bench in root.glob("**/new/benchmark.json"):
    meta = json.loads(bench.read_text())
    est = json.loads((bench.parent / "estimates.json").read_text())["median"]
    per = (meta.get("throughput") or {}).get("Elements", 1)
    found[meta["full_id"]] = (est["point_estimate"] / per, est["confidence_interval"]["lower_bound"] / per,
                              est["confidence_interval"]["upper_bound"] / per)

def fmt(ns):
    for unit, scale in (("s", 1e9), ("ms", 1e6), ("us", 1e3), ("ns", 1.0)):
        if ns >= scale:
            return f"{ns / scale:.3g} {unit}"
    return f"{ns:.3g} ns"

def measured(i):
    if i not in found:
        sys.exit(f"bench_all.sh: criterion wrote no estimate for `{i}`")
    m, lo, hi = found[i]
    return f"{fmt(m)} ({fmt(lo)}-{fmt(hi)})"

src = "criterion median (95 % interval)"
rows = [
    ("Maxwell M of coaxial rings, per evaluation, one core (the 1,000 x 10 ring pairs of `bench-pair-coaxial.toml`; `--bench inductance`)",
     "<= 50 ns", ["maxwell_coaxial/one_core"]),
    ("self-inductance of a 100,000-turn uniform helix by the ring sum (`bench-helix-100k.toml`), 2 threads (1 thread)",
     "<= 50 ms", ["helix_100k_self_inductance/parallel", "helix_100k_self_inductance/sequential"]),
    ("full 2x2 matrix, 1,000-turn secondary and coaxial 10-turn flat spiral (`bench-pair-coaxial.toml`), 2 threads (1 thread)",
     "<= 10 ms", ["matrix_2x2_1000_turns_vs_10_turn_spiral/coaxial_parallel",
                  "matrix_2x2_1000_turns_vs_10_turn_spiral/coaxial_sequential"]),
    ("the same with the spiral offset 2 cm and tilted 10 degrees (`bench-pair-tilted.toml`), 2 threads (1 thread)",
     "<= 100 ms", ["matrix_2x2_1000_turns_vs_10_turn_spiral/offset_2cm_tilted_10deg_parallel",
                   "matrix_2x2_1000_turns_vs_10_turn_spiral/offset_2cm_tilted_10deg_sequential"]),
    ("B on a 200x200 plane, 1,000-turn secondary and a primary (`bench-fields.toml`; `--bench fields`), 2 threads",
     "<= 1 s", ["fields/b_plane_200x200"]),
    ("E on the same plane from a 1,000-panel solution", "<= 2 s", ["fields/e_plane_200x200_1000_panels"]),
    ("electrostatic assembly and solve, 2,000 ring panels, coarse error-estimate solve included",
     "<= 2 s", ["fields/assemble_solve_2000_panels"]),
    ("finite elements: 200,000-element mesh (two spheres in a grounded sphere) assembled, factored once, solved for every conductor (`--bench fem`)",
     "<= 5 s", ["fem/assemble_factor_solve_200k"]),
    ("meshing of the room resonator (`room-resonator.toml`) at density 4, the density that gives its capacitances to 0.1 %",
     "<= 1 s", ["fem/mesh_room_resonator"]),
    ("distributed model, 200 sections, of the 1,000-turn secondary of `bench-resonance.toml` (`--bench resonance`), 2 threads",
     "<= 2 s", ["resonance/distributed model, 200 sections, 2 threads"]),
    ("whole resonance with the spark gap, 32 sections, 2 threads", "-",
     ["resonance/whole resonance with the spark gap, 32 sections, 2 threads"]),
    ("spark-gap solution over 2 ms (`--bench circuit`)", "<= 10 ms", ["circuit/simulate_2_loops_2ms"]),
    ("the same, then its first current notch and the peak capacitor voltage found", "-", ["circuit/simulate_2_loops_2ms_notch_peak"]),
    ("lowest 5 modes of a 200-section LC ladder", "-", ["circuit/ladder_modes_200_sections"]),
]
for label, target, ids in rows:
    first = measured(ids[0])
    rest = "".join(f" ({measured(i)})" for i in ids[1:])
    print(f"| {label}; {src} | {target} | {first}{rest} |")
EOF

{
    echo "One run of \`bash validation/bench_all.sh\` at commit $commit ($machine); 1-minute load average $loads."
    echo
    echo "| benchmark | target | measured |"
    echo "|---|---|---|"
    cat "$rows"
} >"$tmp/table.md"
echo
echo "== table"
cat "$tmp/table.md"
if [ $# -ge 1 ]; then cp "$tmp/table.md" "$1"; fi
