#!/usr/bin/env python3
"""Closed forms and series for the finite-element electrostatic checks (tests/fem.rs).

Each row is a capacitance (F) of an axisymmetric geometry, computed here with mpmath at 30
digits from formulas found in any electromagnetics text (e.g. W. R. Smythe, Static and Dynamic
Electricity, chapters 3 and 5; chapters from memory):

* ``isolated_sphere``: C = 4 pi eps0 a.
* ``concentric_shell``: a sphere of radius a in a grounded sphere of radius b, a dielectric
  shell a < r < c of relative permittivity eps: 1/C = [(1/a - 1/c)/eps + (1/c - 1/b)] / (4 pi eps0).
* ``sphere_in_enclosure``: the same with eps = 1 (C = 4 pi eps0 a b / (b - a)).
* ``coaxial_layer``: coaxial cylinders a < c < b, a layer of eps in a < r < c, length h (per
  unit length times h, ends as symmetry planes): C = 2 pi eps0 h / (ln(c/a)/eps + ln(b/c)).
* ``sphere_over_plane``: a sphere of radius a, centre h above a grounded plane, by images:
  C = 4 pi eps0 a sinh(alpha) sum_{n>=1} 1/sinh(n alpha), cosh(alpha) = h/a (summed until the
  terms fall below 1e-30).
* ``sphere_in_room``: ``sphere_in_enclosure`` with the enclosure 20 radii out (a = 0.1 m,
  b = 2 m), the proportions of a top electrode in a room, for the graded mesh's far field.
* ``isolated_disc``: a thin conducting disc of radius a in open space, C = 8 eps0 a (the
  oblate-spheroid limit; Smythe, chapter 5, from memory; also J. D. Jackson, Classical
  Electrodynamics, 3rd ed., 1999, problem 3.3, from memory): a sheet whose rim carries the
  singular field of the secondary's winding ends.

eps0 = 8.8541878128e-12 F/m (CODATA 2018), the value coilfield uses.

Usage: fem_refs.py (writes validation/fem.csv) | fem_refs.py --check (recomputes and compares).
"""
import csv
import os
import sys

import mpmath as mp

mp.mp.dps = 30
EPS0 = mp.mpf("8.8541878128e-12")
HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fem.csv")


def rows():
    four_pi_eps0 = 4 * mp.pi * EPS0
    out = []
    a = mp.mpf("0.1")
    out.append(("isolated_sphere", "a=0.1", four_pi_eps0 * a))
    a, c, b, eps = mp.mpf("0.1"), mp.mpf("0.15"), mp.mpf("0.2"), mp.mpf(3)
    out.append(("concentric_shell", "a=0.1 c=0.15 b=0.2 eps=3",
                four_pi_eps0 / ((1 / a - 1 / c) / eps + (1 / c - 1 / b))))
    out.append(("sphere_in_enclosure", "a=0.1 b=0.2", four_pi_eps0 * a * b / (b - a)))
    a, c, b, eps, h = (mp.mpf("0.01"), mp.mpf("0.02"), mp.mpf("0.05"), mp.mpf("2.5"),
                       mp.mpf("0.05"))
    out.append(("coaxial_layer", "a=0.01 c=0.02 b=0.05 eps=2.5 h=0.05",
                2 * mp.pi * EPS0 * h / (mp.log(c / a) / eps + mp.log(b / c))))
    a, h = mp.mpf("0.1"), mp.mpf("0.25")
    alpha = mp.acosh(h / a)
    total, n = mp.mpf(0), 1
    while True:
        term = 1 / mp.sinh(n * alpha)
        total += term
        if term < mp.mpf("1e-30"):
            break
        n += 1
    out.append(("sphere_over_plane", "a=0.1 h=0.25", four_pi_eps0 * a * mp.sinh(alpha) * total))
    a, b = mp.mpf("0.1"), mp.mpf("2")
    out.append(("sphere_in_room", "a=0.1 b=2", four_pi_eps0 * a * b / (b - a)))
    a = mp.mpf("0.1")
    out.append(("isolated_disc", "a=0.1", 8 * EPS0 * a))
    return out


def main():
    table = [(case, params, mp.nstr(value, 20)) for case, params, value in rows()]
    if "--check" in sys.argv:
        with open(OUT, newline="") as f:
            stored = [(r["case"], r["parameters"], r["capacitance_f"]) for r in csv.DictReader(f)]
        bad = [
            (s, t) for s, t in zip(stored, table)
            if s[0] != t[0] or abs(mp.mpf(s[2]) / mp.mpf(t[2]) - 1) > mp.mpf("1e-15")
        ]
        if bad or len(stored) != len(table):
            print("validation/fem.csv disagrees with fem_refs.py:", bad)
            sys.exit(1)
        print(f"fem.csv: {len(table)} rows agree")
        return
    with open(OUT, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["case", "parameters", "capacitance_f", "source"])
        for case, params, value in table:
            w.writerow([case, params, value, "validation/fem_refs.py (mpmath closed form or image series)"])


if __name__ == "__main__":
    main()
