#!/usr/bin/env python3
"""Command-line reference values for the Rust tests (mpmath, see refs.py).

Protocol: a JSON list on stdin, one object per case, {"kind": KIND, ...parameters}; on stdout a
JSON list of the results in the same order, each a string with 20 significant digits (strings keep
the precision that a JSON double would lose). SI units.

    kind           parameters                                  result
    maxwell        a, b, d                                     M (H), coaxial filaments
    rings_general  rp, rs, centre [x,y,z], normal [x,y,z]      M (H), rings in general position
                   (optional "method": "line" (default) or "neumann")
    lorenz         a, n, length                                L (H), current sheet
    rosa           a, n, pitch, wire_d                         L (H), Rosa-corrected sheet (l = n*pitch)
    ring_sum       a, n, pitch, wire_d                         L (H), coaxial-ring sum
    ring_self      a, r_wire                                   L (H), one round-wire turn, LF
    segments       p0, p1, q0, q1 (each [x,y,z])               M (H), two straight filaments
                   (optional "method": "semi_analytic" (default) or "neumann")
    nagaoka        d_over_l                                    K_N (dimensionless)

Numbers are taken as the exact binary64 values JSON carries (what the Rust side has); a parameter
given as a string is taken as an exact decimal.

rings_general: the Neumann double integral (2-D mpmath.quad) costs ~2-5 s per case at mp.dps = 20
for well separated rings and 10-30 s when the wires pass within ~1 % of a radius, so by default this
CLI answers with the vector-potential line integral (1-D, mp.dps = 30, well under a second); the
two routes agree to ~1e-20 relative on validation/rings_general.csv (checked by check_tables.py).
Pass "method": "neumann" to get the double integral instead.

segments: likewise the plain 2-D Neumann quadrature (refs.neumann_segments) costs 1-5 s per case
and far more for close parallel filaments, so by default the answer comes from
refs.segments_semi_analytic (inner integral in closed form, outer mpmath.quad, ~0.1 s); the two
agree to ~1e-22 relative (check_tables.py). "method": "neumann" selects the 2-D quadrature.

Errors (bad JSON, unknown kind, missing or bad parameter) go to stderr with exit status 2.

Example:
    echo '[{"kind":"maxwell","a":1,"b":1,"d":1}]' | python3 validation/reference.py
    ["4.9407846307982680718e-7"]
"""
import json
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

from mpmath import mp, mpf  # noqa: E402

import refs  # noqa: E402

mp.dps = 30


class BadInput(Exception):
    pass


def _num(item, key):
    if key not in item:
        raise BadInput("missing parameter %r" % key)
    v = item[key]
    if isinstance(v, bool) or not isinstance(v, (int, float, str)):
        raise BadInput("parameter %r must be a number" % key)
    try:
        x = mpf(v)
    except (ValueError, TypeError):
        raise BadInput("parameter %r is not a number: %r" % (key, v))
    if not mp.isfinite(x):
        raise BadInput("parameter %r must be finite" % key)
    return x


def _pos(item, key):
    x = _num(item, key)
    if not x > 0:
        raise BadInput("parameter %r must be > 0" % key)
    return x


def _count(item, key):
    x = _num(item, key)
    if x != int(x) or x < 1:
        raise BadInput("parameter %r must be a positive integer" % key)
    return int(x)


def _vec(item, key):
    if key not in item:
        raise BadInput("missing parameter %r" % key)
    v = item[key]
    if not isinstance(v, list) or len(v) != 3:
        raise BadInput("parameter %r must be a list of 3 numbers" % key)
    return [_num({"c": c}, "c") for c in v]


def evaluate(item):
    if not isinstance(item, dict) or "kind" not in item:
        raise BadInput("each case must be an object with a \"kind\"")
    kind = item["kind"]
    if kind == "maxwell":
        d = _num(item, "d")
        return refs.maxwell(_pos(item, "a"), _pos(item, "b"), d)
    if kind == "rings_general":
        args = (_pos(item, "rp"), _pos(item, "rs"), _vec(item, "centre"), _vec(item, "normal"))
        if all(c == 0 for c in args[3]):
            raise BadInput("normal must be non-zero")
        method = item.get("method", "line")
        if method == "line":
            return refs.ring_line_integral(*args)
        if method == "neumann":
            with mp.workdps(20):
                return +refs.neumann_rings(*args)
        raise BadInput("method must be \"line\" or \"neumann\"")
    if kind == "lorenz":
        return refs.lorenz_sheet(_pos(item, "a"), _pos(item, "n"), _pos(item, "length"))
    if kind == "rosa":
        return refs.rosa_corrected(_pos(item, "a"), _count(item, "n"), _pos(item, "pitch"), _pos(item, "wire_d"))
    if kind == "ring_sum":
        return refs.ring_sum_solenoid(_pos(item, "a"), _count(item, "n"), _pos(item, "pitch"), _pos(item, "wire_d"))
    if kind == "ring_self":
        return refs.ring_self(_pos(item, "a"), _pos(item, "r_wire"))
    if kind == "segments":
        p0, p1, q0, q1 = (_vec(item, k) for k in ("p0", "p1", "q0", "q1"))
        if p0 == p1 or q0 == q1:
            raise BadInput("a segment has zero length")
        method = item.get("method", "semi_analytic")
        try:
            if method == "semi_analytic":
                return refs.segments_semi_analytic(p0, p1, q0, q1)
            if method == "neumann":
                return refs.neumann_segments(p0, p1, q0, q1)
        except ValueError as e:
            raise BadInput(str(e))
        raise BadInput("method must be \"semi_analytic\" or \"neumann\"")
    if kind == "nagaoka":
        return refs.nagaoka(_pos(item, "d_over_l"))
    raise BadInput("unknown kind %r" % (kind,))


def fmt(v):
    v = mpf(v)
    if v == 0:
        return "0"
    return mp.nstr(v, 20, strip_zeros=False, min_fixed=1, max_fixed=0)


def main():
    try:
        cases = json.load(sys.stdin)
    except json.JSONDecodeError as e:
        print("reference.py: bad JSON on stdin: %s" % e, file=sys.stderr)
        return 2
    if not isinstance(cases, list):
        print("reference.py: stdin must hold a JSON list", file=sys.stderr)
        return 2
    out = []
    for i, item in enumerate(cases):
        try:
            out.append(fmt(evaluate(item)))
        except BadInput as e:
            print("reference.py: case %d: %s" % (i, e), file=sys.stderr)
            return 2
    json.dump(out, sys.stdout)
    sys.stdout.write("\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
