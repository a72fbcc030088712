"""References for the tapped primary: self- and mutual inductances of the part of a winding in use.

Writes validation/tap.csv; `--check` recomputes every row from its input columns and exits 1 on a
mismatch. Written from the formulas and from the model's description (README, "tap_turns"), not
from coilfield's code; mpmath at 30 digits.

    python3 validation/tap_refs.py --write   # regenerate validation/tap.csv
    python3 validation/tap_refs.py --check   # recompute every row; exit 1 on a mismatch

Columns: kind,design,tap_from,tap_turns,reference,tolerance,tolerance_kind,source.
- design: a design file in validation/ (read here with tomllib): its winding "primary" is a flat
  spiral or a helix, tapped at `tap_turns` turns counted from `tap_from` (outer | inner for a
  spiral, top | bottom for a helix). The Rust tests add the same two keys to the same file.
- kind "self": the self-inductance (H) of the primary's tapped part; kind "mutual": its mutual
  inductance (H) with the winding "secondary" (a coaxial helix, both axes +z).

The model (the ring model of a winding, one coaxial ring per turn): with N turns, turn k is the
part of the curve from k to min(k + 1, N) turns from its start (the inner radius of a spiral, the
base of a helix). A tap of T turns from the end leaves the turns in [N - T, N] in use, from the
start those in [0, T]. Each turn's part in use, [a, b], is one ring carrying b - a times the
current at the curve's radius and height at its middle, (a + b)/2 turns from the start:
r = r_in + (r_out - r_in) u / N on a spiral (Archimedean: the radius grows linearly with the
angle), z = z_0 + length u / N at radius r on a helix. The secondary's turn j is the ring at
z_0 + (j + 1/2) pitch.

L = sum_i w_i^2 L_ring(a_i) + 2 sum_{i<j} w_i w_j M(a_i, a_j, z_i - z_j), M = sum_ij w_i M(...)
with
- Maxwell's formula for coaxial circular filaments, M = mu0 sqrt(a b) [(2/k - k) K(m) - (2/k) E(m)],
  m = k^2 = 4 a b / ((a + b)^2 + d^2) (J. C. Maxwell, A Treatise on Electricity and Magnetism, 1873,
  vol. 2, art. 701; E. B. Rosa, F. W. Grover, Bull. Bureau of Standards 8(1), 1912, formula (1));
  cross-checked below against the single integral
  M = mu0 a b / 2 int_0^{2 pi} cos(phi) / sqrt(a^2 + b^2 + d^2 - 2 a b cos(phi)) dphi;
- the self-inductance of one ring of round wire at low frequency,
  L_ring = mu0 a (ln(8 a / rho) - 7/4), rho the wire radius (Rosa & Grover 1912), times the
  square of the ring's weight for a whole turn;
- for a partial turn (weight w < 1) the partial self-inductance of the arc of angle 2 pi w:
  Neumann's integral between the centreline and a parallel line on the wire's surface plus the
  internal mu0 l / (8 pi) (E. B. Rosa, Bull. Bureau of Standards 4, 1908; Rosa & Grover 1912),
  L_arc(phi) = (mu0/4pi) int_0^phi int_0^phi a^2 cos(t - s) / sqrt(4 a^2 sin^2((t-s)/2) + rho^2)
  ds dt + mu0 a phi / (8 pi), evaluated here as the double integral itself; plus w^2 times
  (L_ring - L_arc(2 pi)), which makes a whole turn exactly Rosa's.
  Kind "arc" rows give L_arc(phi) alone for radius 0.1 m, wire radius 1 mm: `design` holds the
  angle in turns, and are checked against the limits (a whole turn: Rosa's ring; a short arc:
  Rosa's straight wire (mu0 l / 2 pi)(ln(2 l / rho) - 3/4)).

mu0 = 4 pi 1e-7 H/m (classical). Inputs are binary64: every number is the double nearest to the
printed decimal (the number the Rust code reads).
"""

import csv
import os
import sys
import tomllib

from mpmath import mp, mpf, pi, sqrt, log, ellipk, ellipe, quad, cos, sin, fabs

mp.dps = 30
HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "tap.csv")
MU0 = 4 * pi * mpf(10) ** -7
HEADER = ["kind", "design", "tap_from", "tap_turns", "reference", "tolerance", "tolerance_kind",
          "source"]
TOLERANCE = "1e-12"
SOURCE = ("mpmath 30 digits, rings of the tapped turns: Maxwell's formula in K and E for each pair, "
          "mu0 a (ln(8a/r) - 7/4) w^2 for a whole ring (Rosa & Grover 1912), the partial "
          "inductance of the arc for a partial one (Rosa 1908, double integral)")
SOURCE_ARC = ("mpmath 30 digits, partial self-inductance of a circular arc of round wire: Neumann's "
              "double integral to the wire's surface plus mu0 l/(8 pi) (E. B. Rosa, Bull. Bureau of "
              "Standards 4, 1908)")


def f(x):
    """The binary64 value of a number from a file or the table, as an mpf."""
    return mpf(float(x))


def maxwell(a, b, d):
    """Mutual inductance (H) of coaxial circular filaments of radii a, b at axial distance d."""
    m = 4 * a * b / ((a + b) ** 2 + d ** 2)
    k = sqrt(m)
    return MU0 * sqrt(a * b) * ((2 / k - k) * ellipk(m) - 2 / k * ellipe(m))


def maxwell_by_quadrature(a, b, d):
    """The same by the single integral over the angle between the two elements."""
    g = lambda phi: cos(phi) / sqrt(a * a + b * b + d * d - 2 * a * b * cos(phi))
    return MU0 * a * b / 2 * quad(g, [0, pi / 2, pi, 3 * pi / 2, 2 * pi])


def ring_self(a, rho):
    """Low-frequency self-inductance (H) of a ring of round wire, centreline radius a, wire radius rho."""
    return MU0 * a * (log(8 * a / rho) - mpf(7) / 4)


def arc_self(a, phi, rho):
    """Partial self-inductance (H) of an arc of angle phi (module docstring). The double
    integral's integrand depends on t - s only and is even in it, so it equals
    2 int_0^phi (phi - u) g(u) du (evaluated so here, split where the peak at u = 0 ends);
    `arc_self_double` evaluates the double integral itself as a cross-check."""
    g = lambda u: a * a * cos(u) / sqrt(4 * a * a * sin(u / 2) ** 2 + rho * rho)
    knee = min(8 * rho / a, phi)
    pts = [0, knee / 8, knee, phi] if knee < phi else [0, knee / 8, phi]
    return MU0 / (4 * pi) * 2 * quad(lambda u: (phi - u) * g(u), pts) + MU0 * a * phi / (8 * pi)


def arc_self_double(a, phi, rho):
    """The same as the double integral over both angles, at low precision (cross-check only)."""
    g = lambda t, s: a * a * cos(t - s) / sqrt(4 * a * a * sin((t - s) / 2) ** 2 + rho * rho)
    w = 8 * rho / a
    inner = lambda t: quad(lambda s: g(t, s), [0, max(t - w, 0), t, min(t + w, phi), phi])
    return MU0 / (4 * pi) * quad(inner, [0, phi]) + MU0 * a * phi / (8 * pi)


def ring_term(a, w, rho):
    """Self term of a ring of weight w (module docstring)."""
    if w >= 1:
        return w * w * ring_self(a, rho)
    return arc_self(a, 2 * pi * w, rho) + w * w * (ring_self(a, rho) - arc_self(a, 2 * pi, rho))


def winding(design, name):
    with open(os.path.join(HERE, design), "rb") as fh:
        doc = tomllib.load(fh)
    for w in doc["winding"]:
        if w["name"] == name:
            return w
    raise KeyError(name)


def curve_at(w, u):
    """(radius, height) (m) of a spiral or helix u turns from its start."""
    n = f(w["turns"])
    z0 = f(w["origin"][2])
    if w["shape"] == "spiral":
        ri, ro = f(w["inner_radius"]), f(w["outer_radius"])
        return ri + (ro - ri) * u / n, z0
    if w["shape"] == "helix":
        return f(w["radius"]), z0 + f(w["length"]) * u / n
    raise ValueError(w["shape"])


def tapped_rings(w, tap_from, tap_turns):
    """[(radius, height, weight)] of the turns in use (module docstring)."""
    n = f(w["turns"])
    tap = f(tap_turns)
    assert 0 < tap <= n
    if tap_from in ("outer", "top"):
        u0, u1 = n - tap, n
    elif tap_from in ("inner", "bottom"):
        u0, u1 = mpf(0), tap
    else:
        raise ValueError(tap_from)
    rings = []
    k = 0
    while k < n:
        lo, hi = mpf(k), min(mpf(k + 1), n)
        a, b = max(lo, u0), min(hi, u1)
        if b > a:
            r, z = curve_at(w, (a + b) / 2)
            rings.append((r, z, b - a))
        k += 1
    return rings


def secondary_rings(w):
    """[(radius, height, 1)] of a helix of whole turns, turn j at z0 + (j + 1/2) pitch."""
    n = int(w["turns"])
    assert n == w["turns"]
    pitch = f(w["length"]) / n
    z0 = f(w["origin"][2])
    return [(f(w["radius"]), z0 + (j + mpf(1) / 2) * pitch, 1) for j in range(n)]


def self_inductance(rings, rho):
    total = sum(ring_term(r, wt, rho) for r, _, wt in rings)
    for i in range(len(rings)):
        ri, zi, wi = rings[i]
        for j in range(i + 1, len(rings)):
            rj, zj, wj = rings[j]
            total += 2 * wi * wj * maxwell(ri, rj, zi - zj)
    return total


def mutual_inductance(rings_a, rings_b):
    return sum(wa * wb * maxwell(ra, rb, za - zb)
               for ra, za, wa in rings_a for rb, zb, wb in rings_b)


def compute(kind, design, tap_from, tap_turns):
    if kind == "arc":
        return arc_self(mpf("0.1"), 2 * pi * f(design), mpf("0.001"))
    p = winding(design, "primary")
    rings = tapped_rings(p, tap_from, tap_turns)
    if kind == "self":
        return self_inductance(rings, f(p["wire_diameter"]) / 2)
    if kind == "mutual":
        return mutual_inductance(rings, secondary_rings(winding(design, "secondary")))
    raise ValueError(kind)


def cases():
    spiral_taps = ["1", "2.5", "6", "6.25", "11.75", "12"]
    helix_taps = ["0.4", "1", "3.25", "5", "7.5"]
    out = []
    for end in ("outer", "inner"):
        out += [("self", "tap_spiral.toml", end, t) for t in spiral_taps]
    for end in ("top", "bottom"):
        out += [("self", "tap_helix.toml", end, t) for t in helix_taps]
    for end in ("outer", "inner"):
        out += [("mutual", "tap_spiral.toml", end, t) for t in ["1", "2.5", "6.25", "12"]]
    out += [("arc", t, "", "") for t in ["0.01", "0.1", "0.25", "0.5", "0.9", "1"]]
    return out


def cross_checks():
    """Maxwell's closed form against its single integral, for a neighbouring pair of spiral
    turns, a far pair and a primary ring against a secondary ring; the arc's limits."""
    ok = True
    a, rho = mpf("0.1"), mpf("0.001")
    whole = arc_self(a, 2 * pi, rho)
    if fabs(whole - ring_self(a, rho)) > 3 * (rho / a) ** 2 * log(8 * a / rho) * ring_self(a, rho):
        print("CROSS-CHECK FAILED: whole arc", whole, ring_self(a, rho))
        ok = False
    with mp.workdps(12):
        single, double = arc_self(a, mpf("0.7"), rho), arc_self_double(a, mpf("0.7"), rho)
        if fabs(single - double) > mpf("1e-9") * fabs(single):
            print("CROSS-CHECK FAILED: arc by its double integral", single, double)
            ok = False
    phi = mpf("0.3")
    l = a * phi
    wire = MU0 * l / (2 * pi) * (log(2 * l / rho) - mpf(3) / 4)
    if fabs(arc_self(a, phi, rho) - wire) > mpf("0.02") * wire:
        print("CROSS-CHECK FAILED: short arc", arc_self(a, phi, rho), wire)
        ok = False
    for a, b, d in [(mpf("0.1"), mpf("0.1075"), 0), (mpf("0.06"), mpf("0.15"), mpf("0.3")),
                    (mpf("0.12"), mpf("0.045"), mpf("0.0205"))]:
        x, y = maxwell(a, b, d), maxwell_by_quadrature(a, b, d)
        if fabs(x - y) > mpf("1e-25") * fabs(x):
            print("CROSS-CHECK FAILED", a, b, d, x, y)
            ok = False
    return ok


def fmt(v):
    return mp.nstr(v, 20, min_fixed=-5, max_fixed=5)


def main():
    mode = sys.argv[1] if len(sys.argv) > 1 else "--write"
    if mode == "--write":
        rows = [list(c) + [fmt(compute(*c)), TOLERANCE, "rel", SOURCE_ARC if c[0] == "arc" else SOURCE]
                for c in cases()]
        with open(OUT, "w", newline="") as fh:
            w = csv.writer(fh)
            w.writerow(HEADER)
            w.writerows(rows)
        print("wrote", OUT, len(rows), "rows; cross-checks", "ok" if cross_checks() else "FAILED")
        return 0
    if mode == "--check":
        bad = 0
        n = 0
        with open(OUT, newline="") as fh:
            rd = csv.reader(fh)
            if next(rd) != HEADER:
                print("unexpected header")
                return 1
            for r in rd:
                n += 1
                val = compute(*r[:4])
                if fabs(val - mpf(r[4])) > mpf("1e-19") * fabs(val):
                    print("MISMATCH", r, mp.nstr(val, 20))
                    bad += 1
        if not cross_checks():
            bad += 1
        print("%d passed, %d failed" % (n - bad, bad))
        return 1 if bad else 0
    print(__doc__)
    return 2


if __name__ == "__main__":
    sys.exit(main())
