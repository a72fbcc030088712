#!/usr/bin/env python3
"""Inductances of windings over a perfectly conducting ground plane, by image rings (mpmath).

    python3 validation/images_refs.py --write   # writes validation/images.csv
    python3 validation/images_refs.py --check   # recomputes every row, exit 1 on a mismatch

Method (written from the formulas, not from coilfield's code): each winding is its ring model,
one coaxial circular filament per turn (a helix of pitch p: turn i at height z0 + (i + 1/2) p; a
flat spiral: turn i at the mean radius r_in + (r_out - r_in)(i + 1/2)/N). A perfect conductor
z = z_g keeps the normal flux density zero on its surface; the image of a horizontal ring at
height z is the same ring at 2 z_g - z with its current reversed (method of images, e.g.
J. D. Jackson, Classical Electrodynamics, 3rd ed. 1999, section 5.13; section from memory).
So, for rings a_i at z_i and b_j at z'_j (heights above the plane h = z - z_g):

    M_free(A, B) = sum_ij M(a_i, b_j, |z_i - z'_j|)             (Maxwell's formula)
    M_image(A, B) = - sum_ij M(a_i, b_j, h_i + h'_j)            (each ring against the other's image)
    L_free(A) = sum_i L_ring(a_i) + sum_{i != j} M(a_i, a_j, |z_i - z_j|)
    L(A) = L_free(A) + M_image(A, A);  M(A, B) = M_free(A, B) + M_image(A, B)

with Maxwell's formula M = mu0 sqrt(ab) [(2/k - k) K(m) - (2/k) E(m)], m = k^2 =
4ab/((a+b)^2 + d^2) (J. C. Maxwell, A Treatise on Electricity and Magnetism, 1873, art. 701),
evaluated by validation/refs.py at 30 digits, and the low-frequency self term of one round-wire
turn L_ring = mu0 a (ln(8a/r) - 7/4) (E. B. Rosa, F. W. Grover, Bull. Bureau of Standards 8(1),
1912).

The design (invented for this check) is written in the CSV's `design` column as a compact spec
and in tests/validation.rs as a TOML design file: a 40-turn helix secondary of radius 50 mm,
length 40 mm, wire 0.5 mm, base 30 mm above the plane, and a 6-turn flat spiral primary
(radii 70 to 100 mm, wire 2 mm) 15 mm above the plane, coaxial; the plane at z = 0.
"""
import csv
import os
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)

from mpmath import mp, mpf, nstr  # noqa: E402

import refs  # noqa: E402

mp.dps = 30
OUT = os.path.join(HERE, "images.csv")
SOURCE = ("mpmath 30 digits, ring model with image rings in a perfect conductor: Maxwell's "
          "formula (Maxwell 1873, art. 701), round-wire ring self term (Rosa & Grover 1912), "
          "images reversed at 2 z_g - z (method of images)")


def helix_rings(radius, length, turns, z0):
    p = mpf(length) / turns
    return [(mpf(radius), mpf(z0) + (i + mpf(1) / 2) * p) for i in range(turns)]


def spiral_rings(r_in, r_out, turns, z0):
    r_in, r_out = mpf(r_in), mpf(r_out)
    return [(r_in + (r_out - r_in) * (i + mpf(1) / 2) / turns, mpf(z0)) for i in range(turns)]


SECONDARY = dict(rings=helix_rings("0.05", "0.04", 40, "0.03"), wire_radius=mpf("0.00025"))
PRIMARY = dict(rings=spiral_rings("0.07", "0.1", 6, "0.015"), wire_radius=mpf("0.001"))
Z_GROUND = mpf(0)


def free_self(w):
    rings = w["rings"]
    total = sum(refs.ring_self(a, w["wire_radius"]) for a, _ in rings)
    for i, (a, za) in enumerate(rings):
        for j, (b, zb) in enumerate(rings):
            if i != j:
                total += refs.maxwell(a, b, abs(za - zb))
    return total


def free_mutual(u, v):
    return sum(refs.maxwell(a, b, abs(za - zb)) for a, za in u["rings"] for b, zb in v["rings"])


def image_mutual(u, v):
    return -sum(refs.maxwell(a, b, (za - Z_GROUND) + (zb - Z_GROUND))
                for a, za in u["rings"] for b, zb in v["rings"])


def rows():
    l_s, l_p, m_sp = free_self(SECONDARY), free_self(PRIMARY), free_mutual(SECONDARY, PRIMARY)
    i_ss, i_pp, i_sp = (image_mutual(SECONDARY, SECONDARY), image_mutual(PRIMARY, PRIMARY),
                        image_mutual(SECONDARY, PRIMARY))
    values = [
        ("free_space", "self_inductance.secondary", l_s),
        ("free_space", "self_inductance.primary", l_p),
        ("free_space", "mutual.secondary.primary", m_sp),
        ("conducting_ground", "self_inductance.secondary", l_s + i_ss),
        ("conducting_ground", "self_inductance.primary", l_p + i_pp),
        ("conducting_ground", "mutual.secondary.primary", m_sp + i_sp),
    ]
    return [(case, q, nstr(v, 20, min_fixed=-30, max_fixed=30)) for case, q, v in values]


HEADER = ["case", "quantity", "reference", "tolerance", "tolerance_kind", "source"]


def write():
    with open(OUT, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(HEADER)
        for case, q, v in rows():
            w.writerow([case, q, v, "1e-11", "rel", SOURCE])
    print(f"wrote {OUT}")


def check():
    fresh = {(c, q): mpf(v) for c, q, v in rows()}
    failed = passed = 0
    with open(OUT) as f:
        for row in csv.DictReader(f):
            ref = mpf(row["reference"])
            new = fresh[(row["case"], row["quantity"])]
            if abs(ref - new) > mpf("1e-15") * abs(new):
                print(f"FAIL {row['case']} {row['quantity']}: {ref} vs {new}")
                failed += 1
            else:
                passed += 1
    # The images lower every inductance of coaxial windings above the plane (flux pushed out).
    ok = all(fresh[("conducting_ground", q)] < fresh[("free_space", q)]
             for q in ["self_inductance.secondary", "self_inductance.primary",
                       "mutual.secondary.primary"])
    passed += ok
    failed += not ok
    print(f"{passed} passed, {failed} failed")
    return failed == 0


if __name__ == "__main__":
    if "--write" in sys.argv:
        write()
    elif "--check" in sys.argv:
        sys.exit(0 if check() else 1)
    else:
        print(__doc__)
        sys.exit(2)
