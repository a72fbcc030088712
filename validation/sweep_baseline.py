#!/usr/bin/env python3
"""Baseline for the sweep benchmarks: the straightforward numpy/scipy computation of the
coupling k between the secondary and the primary of meshes-demo/bench-sweep-base.toml over the
grid of a sweep file whose two axes are the primary's height and inner radius
(meshes-demo/bench-sweep-below.toml by default, or --sweep FILE, e.g.
meshes-demo/bench-sweep-overlap.toml).

Per point: Maxwell's formula (J. C. Maxwell, A Treatise on Electricity and Magnetism, 1873,
art. 701), M = mu0 sqrt(ab) ((2/k - k) K - (2/k) E) with scipy's ellipk/ellipe (parameter m = k^2),
vectorised over all secondary-turn x primary-turn ring pairs; the primary's self-inductance from
its ring sum (one turn of round wire: mu0 a (ln(8a/r) - 7/4), Rosa & Grover 1912, plus Maxwell
for every pair of its turns); the secondary's self-inductance computed once, Toeplitz ring sum.
The ring models are those of the design (turn i of a helix at (i + 1/2) pitch; spiral turns at
their mean radius). mu0 = 4 pi 1e-7 H/m.

Usage: sweep_baseline.py [--sweep SWEEP.toml] [--check results.csv] ; prints the time taken and,
with --check, the largest relative difference from a `coilfield sweep` CSV of the same sweep.
"""
import argparse
import os
import sys
import time
import tomllib

import numpy as np
from scipy.special import ellipe, ellipk

MU0 = 4e-7 * np.pi
AWG26 = 0.0254 * 0.005 * 92.0 ** ((36 - 26) / 39.0)  # ASTM B258 diameter formula


def maxwell(a, b, d):
    m = 4.0 * a * b / ((a + b) ** 2 + d ** 2)
    k = np.sqrt(m)
    return MU0 * np.sqrt(a * b) * ((2.0 / k - k) * ellipk(m) - (2.0 / k) * ellipe(m))


def ring_self(a, r):
    return MU0 * a * (np.log(8.0 * a / r) - 1.75)


def axes(sweep_path):
    """The two grid axes of the sweep file (from/to/steps, both ends included, as coilfield)."""
    with open(sweep_path, "rb") as f:
        sweep = tomllib.load(f)
    out = {}
    for axis in sweep["axis"]:
        v = np.linspace(axis["from"], axis["to"], axis["steps"])
        v[-1] = axis["to"]
        out[axis["key"]] = v
    return out["winding.primary.origin[2]"], out["winding.primary.inner_radius"]


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    parser = argparse.ArgumentParser()
    parser.add_argument("--sweep", default=os.path.join(here, "..", "meshes-demo", "bench-sweep-below.toml"))
    parser.add_argument("--check")
    args = parser.parse_args()
    # Secondary: helix, origin z = 0.10 m, radius 55 mm, length 450 mm, 900 turns, AWG 26.
    n_sec, a_sec, z_sec, pitch = 900, 0.055, 0.10, 0.45 / 900
    z_turns = z_sec + (np.arange(n_sec) + 0.5) * pitch
    s = np.arange(1, n_sec)
    l_sec = n_sec * ring_self(a_sec, AWG26 / 2) + 2.0 * np.sum(
        (n_sec - s) * maxwell(a_sec, a_sec, s * pitch)
    )
    # Primary: flat spiral, 6 turns, outer radius 140 mm, 4 mm wire.
    n_pri, outer, r_pri = 6, 0.14, 0.002
    heights, inners = axes(args.sweep)
    iu = np.triu_indices(n_pri, 1)
    out = []
    t0 = time.perf_counter()
    for h in heights:
        for inner in inners:
            radii = inner + (outer - inner) * (np.arange(n_pri) + 0.5) / n_pri
            aa, zz = np.meshgrid(radii, z_turns - h)
            m_sp = np.sum(maxwell(a_sec, aa, zz))
            ri, rj = np.meshgrid(radii, radii, indexing="ij")
            l_pri = np.sum(ring_self(radii, r_pri)) + 2.0 * np.sum(
                maxwell(ri[iu], rj[iu], 0.0)
            )
            out.append(m_sp / np.sqrt(l_sec * l_pri))
    dt = time.perf_counter() - t0
    print(f"baseline: {len(out)} points in {dt:.3f} s")
    if args.check:
        import csv

        with open(args.check) as f:
            rows = list(csv.DictReader(f))
        ours = np.array([float(r["coupling.secondary.primary"]) for r in rows])
        rel = np.max(np.abs(ours - np.array(out)) / np.abs(np.array(out)))
        print(f"largest relative difference from {args.check}: {rel:.3e}")
        if not rel <= 1e-9:
            sys.exit(1)


if __name__ == "__main__":
    main()
