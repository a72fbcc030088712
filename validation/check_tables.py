#!/usr/bin/env python3
"""Check the validation CSV tables against an independent recomputation (mpmath, refs.py).

    python3 validation/check_tables.py           # everything (about a minute and a half)
    python3 validation/check_tables.py --quick   # skip the slow Neumann double integrals

For every row of every table:
  * the format: header = input columns + reference,tolerance,tolerance_kind,source; tolerance a
    positive number; tolerance_kind rel or abs; a non-empty source;
  * computed rows (source mentions mpmath): the reference is recomputed from the row's own input
    columns and must agree to 1e-15 relative (1e-6 of the tolerance for abs rows);
  * printed rows (Grover's Table 36, Bulirsch's test values, the 4-digit AWG 22 diameter): the
    printed value must agree with the exact recomputation within the row's own tolerance.
Then cross-checks by independent routes (each counted as one check):
  * rings_general: Neumann double integral (mp.dps = 15) vs the CSV (>= 12 digits); coaxial rows
    vs Maxwell's formula;
  * maxwell_coaxial: Bulirsch-cel quadrature route vs the AGM route; distant rows vs the dipole
    limit;
  * solenoid: ring sum vs Rosa's corrected sheet (~5e-5); nagaoka: Wheeler's approximation
    within 1 % for d/l <= 3; spiral: Wheeler's spiral formula within 5 % of the ring sum;
  * cel identities (K, E, Maxwell combination); Rosa's B(N) increasing towards ln(2 pi) - 3/2;
  * straight filaments: plain 2-D Neumann quadrature vs the semi-analytic route vs the closed form
    for parallel filaments; AWG 4/0 = 0.46 in and AWG 36 = 0.005 in exactly;
  * reference.py: the JSON protocol answers a few table rows correctly.
Exits 1 on any failure; the last line is "N passed, M failed".
"""
import csv
import json
import os
import subprocess
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)

from mpmath import mp, mpf, fabs, log, pi  # noqa: E402

import refs  # noqa: E402
import tables  # noqa: E402
from tables import TABLES, TAIL, num, is_computed  # noqa: E402

mp.dps = 30

COMPUTED_REL = mpf("1e-15")


class Tally:
    def __init__(self):
        self.passed = 0
        self.failed = 0

    def check(self, ok, what):
        if ok:
            self.passed += 1
        else:
            self.failed += 1
            print("FAIL " + what)
        return ok


T = Tally()


def rel(a, b):
    a, b = mpf(a), mpf(b)
    if b == 0:
        return fabs(a)
    return fabs(a - b) / fabs(b)


def read(fname):
    with open(os.path.join(HERE, fname), newline="") as fh:
        rdr = csv.reader(fh)
        header = next(rdr)
        rows = [dict(zip(header, r)) for r in rdr if r]
        return header, rows


def check_table(fname, cols, func):
    header, rows = read(fname)
    if not T.check(header == cols + TAIL, "%s: header %s, expected %s" % (fname, header, cols + TAIL)):
        return rows
    for i, r in enumerate(rows, start=2):
        where = "%s line %d" % (fname, i)
        ok = True
        try:
            tol = mpf(r["tolerance"])
            ref = mpf(r["reference"])
            ok = tol > 0 and r["tolerance_kind"] in ("rel", "abs") and r["source"].strip() != ""
        except (ValueError, TypeError, KeyError):
            ok = False
        if not T.check(ok, where + ": bad reference/tolerance/tolerance_kind/source"):
            continue
        val = func(r)
        if is_computed(r["source"]):
            if r["tolerance_kind"] == "abs":
                good = fabs(ref - val) <= tol * mpf("1e-6")
            else:
                good = rel(ref, val) <= COMPUTED_REL
            T.check(good, "%s: computed reference %s, recomputed %s" % (where, r["reference"], mp.nstr(val, 20)))
        else:
            err = fabs(ref - val) if r["tolerance_kind"] == "abs" else rel(ref, val)
            T.check(err <= tol, "%s: printed value %s vs exact %s (%s %s > %s)"
                    % (where, r["reference"], mp.nstr(val, 20), r["tolerance_kind"], mp.nstr(err, 3), r["tolerance"]))
    return rows


def cross_rings(rows, quick):
    for i, r in enumerate(rows, start=2):
        where = "rings_general.csv line %d" % i
        ref = mpf(r["reference"])
        rp, rs, c, n = tables.rings_args(r)
        if c[0] == 0 and c[1] == 0 and n[0] == 0 and n[1] == 0:
            m = refs.maxwell(rp, rs, c[2]) * (1 if n[2] > 0 else -1)
            T.check(rel(ref, m) < mpf("1e-15"), where + ": coaxial row differs from Maxwell's formula")
        if quick:
            continue
        with mp.workdps(15):
            v = +refs.neumann_rings(rp, rs, c, n)
        good = fabs(v) < mpf("1e-25") if ref == 0 else rel(v, ref) < mpf("1e-12")
        T.check(good, "%s: Neumann double integral %s vs %s" % (where, mp.nstr(v, 17), r["reference"]))


def cross_maxwell(rows):
    for i, r in enumerate(rows, start=2):
        where = "maxwell_coaxial.csv line %d" % i
        a, b, d = num(r["a_m"]), num(r["b_m"]), num(r["d_m"])
        ref = mpf(r["reference"])
        v = refs.maxwell_cel(a, b, d)
        T.check(rel(v, ref) < mpf("1e-18"), "%s: cel route %s vs %s" % (where, mp.nstr(v, 22), r["reference"]))
        if d >= 50 * max(a, b):
            dip = refs.maxwell_dipole(a, b, d)
            T.check(rel(dip, ref) < 2 * (a * a + b * b) / d ** 2, where + ": not near the dipole limit")


def cross_solenoid(rows):
    by = {}
    for r in rows:
        by.setdefault((r["radius_m"], r["turns"], r["pitch_m"], r["wire_diameter_m"]), {})[r["quantity"]] = mpf(r["reference"])
    for key, q in by.items():
        T.check(rel(q["ring_sum"], q["rosa"]) < mpf("1e-4"), "solenoid %s: ring sum vs Rosa %s" % (key, rel(q["ring_sum"], q["rosa"])))
        T.check(q["lorenz_sheet"] > q["rosa"], "solenoid %s: Rosa's corrections should lower the sheet value" % (key,))


def cross_nagaoka(rows):
    for r in rows:
        x = num(r["diameter_over_length"])
        if x <= 3:
            w = 1 / (1 + mpf("0.45") * x)
            T.check(rel(w, mpf(r["reference"])) < mpf("0.01"), "nagaoka d/l=%s: Wheeler's approximation off by > 1 %%" % r["diameter_over_length"])


def cross_spiral(rows):
    by = {}
    for r in rows:
        by.setdefault((r["inner_radius_m"], r["outer_radius_m"], r["turns"]), {})[r["quantity"]] = mpf(r["reference"])
    for key, q in by.items():
        T.check(rel(q["wheeler"], q["ring_sum"]) < mpf("0.05"), "spiral %s: Wheeler not within 5 %% of the ring sum" % (key,))


def cross_cel(rows):
    for r in rows:
        if r["p"] == "1" and r["a"] == "-1" and r["b"] == "1":
            kc = num(r["kc"])
            m = 1 - kc * kc
            with mp.extradps(30):
                v = ((2 - m) * refs.K(m) - 2 * refs.E(m)) / m
            T.check(rel(v, mpf(r["reference"])) < mpf("1e-18"), "cel kc=%s: ((2-m)K-2E)/m disagrees" % r["kc"])
    for kc in ["1e-3", "0.5", "0.9"]:
        kc = mpf(kc)
        T.check(rel(refs.cel(kc, 1, 1, 1), refs.K(1 - kc * kc)) < mpf("1e-25"), "cel(kc,1,1,1) != K(1-kc^2)")
        T.check(rel(refs.cel(kc, 1, 1, kc * kc), refs.E(1 - kc * kc)) < mpf("1e-25"), "cel(kc,1,1,kc^2) != E(1-kc^2)")


def cross_rosa_b(rows):
    vals = [mpf(r["reference"]) for r in rows]
    limit = log(2 * pi) - mpf(3) / 2
    T.check(all(x < y for x, y in zip(vals, vals[1:])) and vals[-1] < limit,
            "rosa_b: B(N) should increase towards ln(2 pi) - 3/2")
    T.check(limit - vals[-1] < mpf("2e-3"), "rosa_b: B(1000) should be within 2e-3 of its limit")


def cross_segments():
    cases = [
        ([0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 1, 0], refs.parallel_filaments(1, 1)),
        ([0, 0, 0], [1, 0, 0], [1, 0, 0], [2, 0, 0], refs.MU0() / (4 * pi) * 2 * log(2)),
        ([0, 0, 0], [1, 0, 0], [1, 0, 0], [1, 1, 0], mpf(0)),
        ([0, 0, 0], [1, 0, 0], [2, 0, 0], [1.5, 0, 0], None),
    ]
    for p0, p1, q0, q1, exact in cases:
        v2 = refs.neumann_segments(p0, p1, q0, q1)
        v1 = refs.segments_semi_analytic(p0, p1, q0, q1)
        T.check(rel(v2, v1) < mpf("1e-20"), "segments %s: 2-D Neumann %s vs semi-analytic %s" % ((p0, p1, q0, q1), v2, v1))
        if exact is not None:
            good = fabs(v1) < mpf("1e-40") if exact == 0 else rel(v1, exact) < mpf("1e-25")
            T.check(good, "segments %s: %s vs closed form %s" % ((p0, p1, q0, q1), v1, exact))
    # collinear, touching at one end: (mu0/4pi)[(l1+l2)ln(l1+l2) - l1 ln l1 - l2 ln l2], l1 = 1, l2 = 0.5
    e = refs.MU0() / (4 * pi) * (mpf(1.5) * log(1.5) - mpf(0.5) * log(0.5))
    v = refs.segments_semi_analytic([0, 0, 0], [1, 0, 0], [1, 0, 0], [1.5, 0, 0])
    T.check(rel(v, e) < mpf("1e-25"), "segments: collinear touching filaments vs closed form")


def cross_awg():
    inch = mpf("0.0254")
    T.check(rel(refs.awg(-3), mpf("0.46") * inch) < mpf("1e-28"), "AWG 4/0 should be 0.46 in")
    T.check(rel(refs.awg(36), mpf("0.005") * inch) < mpf("1e-28"), "AWG 36 should be 0.005 in")


def check_cli(tab_rows):
    mx = tab_rows["maxwell_coaxial.csv"][:3]
    rg = tab_rows["rings_general.csv"][:2]
    so = [r for r in tab_rows["solenoid.csv"] if r["turns"] == "10"]
    na = [r for r in tab_rows["nagaoka.csv"] if r["diameter_over_length"] == "0.5"]
    rself = tab_rows["ring_self.csv"][:1]
    cases, expect = [], []
    for r in mx:
        cases.append({"kind": "maxwell", "a": float(r["a_m"]), "b": float(r["b_m"]), "d": float(r["d_m"])})
        expect.append(r["reference"])
    for r in rg:
        cases.append({"kind": "rings_general", "rp": float(r["rp_m"]), "rs": float(r["rs_m"]),
                      "centre": [float(r[k]) for k in ("cx_m", "cy_m", "cz_m")],
                      "normal": [float(r[k]) for k in ("nx", "ny", "nz")]})
        expect.append(r["reference"])
    for r in so:
        a, n, p, d = float(r["radius_m"]), int(r["turns"]), float(r["pitch_m"]), float(r["wire_diameter_m"])
        if r["quantity"] == "lorenz_sheet":
            cases.append({"kind": "lorenz", "a": a, "n": n, "length": n * p})
            # n*p in binary64 may differ from the table's exact product by an ulp: compare loosely
        else:
            cases.append({"kind": "rosa" if r["quantity"] == "rosa" else "ring_sum", "a": a, "n": n, "pitch": p, "wire_d": d})
        expect.append(r["reference"])
    for r in na:
        cases.append({"kind": "nagaoka", "d_over_l": float(r["diameter_over_length"])})
        expect.append(r["reference"])
    for r in rself:
        cases.append({"kind": "ring_self", "a": float(r["radius_m"]), "r_wire": float(r["wire_radius_m"])})
        expect.append(r["reference"])
    cases.append({"kind": "segments", "p0": [0, 0, 0], "p1": [1, 0, 0], "q0": [0, 1, 0], "q1": [1, 1, 0]})
    expect.append(mp.nstr(refs.parallel_filaments(1, 1), 25))
    p = subprocess.run([sys.executable, os.path.join(HERE, "reference.py")], input=json.dumps(cases),
                       capture_output=True, text=True, timeout=300)
    if not T.check(p.returncode == 0, "reference.py exited %d: %s" % (p.returncode, p.stderr.strip())):
        return
    out = json.loads(p.stdout)
    T.check(isinstance(out, list) and len(out) == len(cases) and all(isinstance(s, str) for s in out),
            "reference.py: expected a list of %d strings, got %r" % (len(cases), p.stdout[:200]))
    for c, got, want in zip(cases, out, expect):
        T.check(rel(mpf(got), mpf(want)) < mpf("1e-14"), "reference.py %s: %s, table %s" % (c["kind"], got, want))
    bad = subprocess.run([sys.executable, os.path.join(HERE, "reference.py")], input='[{"kind": "nope"}]',
                         capture_output=True, text=True, timeout=60)
    T.check(bad.returncode == 2 and bad.stdout == "", "reference.py should exit 2 on an unknown kind")


def main(argv):
    quick = "--quick" in argv[1:]
    t0 = time.time()
    tab_rows = {}
    for fname, cols, func, _rows in TABLES:
        t1 = time.time()
        before = (T.passed, T.failed)
        tab_rows[fname] = check_table(fname, cols, func)
        print("%-22s %3d rows: %d passed, %d failed (%.1f s)" % (fname, len(tab_rows[fname]), T.passed - before[0],
                                                                T.failed - before[1], time.time() - t1))
    t1 = time.time()
    before = (T.passed, T.failed)
    cross_maxwell(tab_rows["maxwell_coaxial.csv"])
    cross_solenoid(tab_rows["solenoid.csv"])
    cross_nagaoka(tab_rows["nagaoka.csv"])
    cross_spiral(tab_rows["spiral.csv"])
    cross_cel(tab_rows["cel.csv"])
    cross_rosa_b(tab_rows["rosa_b.csv"])
    cross_awg()
    cross_segments()
    check_cli(tab_rows)
    print("cross-checks           : %d passed, %d failed (%.1f s)" % (T.passed - before[0], T.failed - before[1], time.time() - t1))
    t1 = time.time()
    before = (T.passed, T.failed)
    cross_rings(tab_rows["rings_general.csv"], quick)
    print("rings cross-checks     : %d passed, %d failed (%.1f s)%s" % (T.passed - before[0], T.failed - before[1],
          time.time() - t1, " (--quick: Neumann skipped)" if quick else ""))
    print("total %.1f s" % (time.time() - t0))
    print("%d passed, %d failed" % (T.passed, T.failed))
    return 1 if T.failed else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
