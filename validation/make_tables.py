#!/usr/bin/env python3
"""Regenerate the validation CSV tables from refs.py (mpmath).

    python3 validation/make_tables.py            # all tables
    python3 validation/make_tables.py nagaoka    # only tables whose file name contains "nagaoka"

Computed ([C]) rows get their reference recomputed; printed ([S]) rows keep the published value
given in tables.py. Along the way it asserts what the tables promise:
  * rings_general: Neumann double integral (mp.dps = 20) and vector-potential line integral
    (mp.dps = 30) agree to better than 1e-12 relative (the brief asks for >= 10 digits);
  * maxwell_coaxial: kc^2 >= 1e-14 on every row;
  * every computed row: evaluating at the exact decimal instead of the binary64 input changes the
    value by less than a tenth of the row's tolerance (the conditioning is reported).
The Neumann integrals make a full run take a few minutes.
"""
import csv
import os
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)

from mpmath import mp, mpf, fabs  # noqa: E402

import refs  # noqa: E402
import tables  # noqa: E402
from tables import TABLES, TAIL, fmt, num  # noqa: E402

mp.dps = 30


def rel(a, b):
    a, b = mpf(a), mpf(b)
    if b == 0:
        return fabs(a)
    return fabs(a - b) / fabs(b)


def conditioning(func, row):
    tables.DECIMAL_INPUTS = True
    try:
        return func(row)
    finally:
        tables.DECIMAL_INPUTS = False


def build(fname, cols, func, rows_fn):
    t0 = time.time()
    rows = rows_fn()
    worst = mpf(0)
    for r in rows:
        if fname == "maxwell_coaxial.csv":
            a, b, d = num(r["a_m"]), num(r["b_m"]), num(r["d_m"])
            kc2 = ((a - b) ** 2 + d ** 2) / ((a + b) ** 2 + d ** 2)
            assert kc2 >= mpf("1e-14"), ("kc^2 < 1e-14", r)
        if r["reference"] is not None:
            continue
        if fname == "rings_general.csv":
            v = tables.eval_rings_neumann(r)
            w = tables.eval_rings_line(r)
            assert rel(v, w) < mpf("1e-12"), ("Neumann and line integral disagree", r, v, w)
        else:
            v = func(r)
        r["reference"] = fmt(v)
        # conditioning: exact decimal inputs vs binary64 inputs (line integral for the rings)
        vd = conditioning(tables.eval_rings_line if fname == "rings_general.csv" else func, r)
        c = rel(vd, v)
        tol = mpf(r["tolerance"])
        limit = tol / 10 if r["tolerance_kind"] == "rel" else tol / 10 / max(fabs(v), mpf("1e-300"))
        assert c < limit or (r["tolerance_kind"] == "abs" and fabs(vd - v) < tol / 10), \
            ("input rounding moves the value too much", r, c)
        worst = max(worst, c)
    path = os.path.join(HERE, fname)
    with open(path, "w", newline="") as fh:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(cols + TAIL)
        for r in rows:
            w.writerow([r[c] for c in cols + TAIL])
    print("%-22s %3d rows  %6.1f s  (largest change from binary64 rounding of inputs: %s rel)"
          % (fname, len(rows), time.time() - t0, mp.nstr(worst, 2)))


def main(argv):
    sel = argv[1:] or None
    for fname, cols, func, rows_fn in TABLES:
        if sel and not any(s in fname for s in sel):
            continue
        build(fname, cols, func, rows_fn)


if __name__ == "__main__":
    main(sys.argv)
