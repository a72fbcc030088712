"""References of the far-field tests.

1. The solenoid sheet (solver/src/field.rs, sheet_field_keeps_its_digits_far_away): the exact
   axial field of an ideal solenoid,
   B_z = (mu0 K / 2) [(z + b)/sqrt((z + b)^2 + a^2) - (z - b)/sqrt((z - b)^2 + a^2)]
   (J. D. Jackson, "Classical Electrodynamics", 3rd ed., 1999, sec. 5.5), at 40 digits, for
   a = 0.05 m, b = 0.2 m, K = 1000 A/m, z = 1000 sqrt(a^2 + b^2). `--check` checks the literal in
   the test against it.

2. Helices of straight filaments (solver/src/field_model.rs,
   far_b_of_a_filament_helix_is_its_polygons_to_the_models_range): B of the polygon the filament model
   draws through the helix (`segments_per_turn` vertices a turn on the exact curve, in the
   winding's local frame: x_hat = normalise(z_hat x axis), or (1, 0, 0) along z, y_hat = axis x
   x_hat; the wire starts at origin + radius x_hat), summed segment by segment with the
   textbook field of a finite straight wire, B = mu0 I / (4 pi s) (sin b2 - sin b1) phi_hat
   (D. J. Griffiths, "Introduction to Electrodynamics", 4th ed., 2013, example 5.5; equation
   number from memory), a different formula from the solver's (it takes r1 x (b - a) with the
   lengths of r1 and r2). Far away the segments' fields cancel to the dipole's: the working
   precision is 30 digits plus twice the decades of distance over size, so that at 1e150 m the
   sum still holds 20 digits of its 1/r^3 part. Written to `far_field_helix.csv` (20 digits);
   `--check` recomputes every row and compares.

   The script also states what the far field of an open helix is: its wire runs from one end to
   the other, so besides the turns' dipole m = N I pi a^2 along the axis it carries the net
   current element D = I (end - start) (I l along the axis for whole turns), whose field
   mu0 (D x R) / (4 pi R^3) falls as 1/r^2 only and outgrows the dipole's beyond
   r ~ N pi a^2 / l. It prints both terms' share at each point and asserts that the polygon's
   field is their sum to the order of the terms left out (the ends' offset from the axis and
   the polygon's area deficit, relative size pitch / (2 pi a) and (2 pi / n)^2 / 6 of the dipole,
   and (size / r) of the whole).

    python3 validation/far_field_refs.py            # print the values, rewrite the CSV
    python3 validation/far_field_refs.py --check    # recompute and compare (.ci/test)
"""
import csv
import io
import math
import re
import sys
from pathlib import Path

from mpmath import mp, mpf, pi, sqrt, cos, sin, nstr

ROOT = Path(__file__).resolve().parent.parent
HELIX_CSV = ROOT / "validation" / "far_field_helix.csv"
SOURCE = (
    "mpmath, straight-wire field summed over the filament polygon (Griffiths 2013, "
    "example 5.5); validation/far_field_refs.py"
)

# The helices of the test (invented for it): name, origin (m), axis, radius (m), length (m),
# turns, current (A). The same values are in the test's design text.
HELICES = [
    ("whole", (0.0, 0.0, -0.05), (0.0, 0.0, 1.0), 0.05, 0.1, 4.0, 2.0),
    ("tilted", (1.0, -2.0, 0.5), (0.6, 0.0, 0.8), 0.002, 0.03, 3.3, 1e-9),
]
SEGMENTS_PER_TURN = 128
# Distances (m) from the helix's centre and directions (global frame) of the points.
DISTANCES = ["1e2", "1e4", "1e7", "3e7", "1e9", "1e12", "1e30", "1e60", "1e100", "1e144", "1e149"]
DIRECTIONS = {
    "axis": "axis",
    "minus_axis": "-axis",
    "x": (1.0, 0.0, 0.0),
    "y": (0.0, 1.0, 0.0),
    "oblique": (0.36, -0.48, 0.8),
}


def vec(x):
    return [mpf(v) for v in x]


def sub(a, b):
    return [a[i] - b[i] for i in range(3)]


def add(a, b):
    return [a[i] + b[i] for i in range(3)]


def scale(a, s):
    return [v * s for v in a]


def dot(a, b):
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2]


def cross(a, b):
    return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]]


def norm(a):
    return sqrt(dot(a, a))


def frame(axis):
    """The winding's local frame (x_hat, y_hat, n) (the README's convention)."""
    n = scale(axis, 1 / norm(axis))
    c = cross([mpf(0), mpf(0), mpf(1)], n)
    x_hat = [mpf(1), mpf(0), mpf(0)] if norm(c) < mpf(10) ** -12 else scale(c, 1 / norm(c))
    return x_hat, cross(n, x_hat), n


def vertices(origin, axis, radius, length, turns):
    """The filament model's polygon: round(turns n) segments, vertex k at t = k / n_seg."""
    x_hat, y_hat, n = frame(vec(axis))
    n_seg = max(1, round(turns * SEGMENTS_PER_TURN))
    out = []
    for k in range(n_seg + 1):
        t = mpf(k) / n_seg
        ang = 2 * pi * mpf(turns) * t
        p = add(vec(origin), scale(n, mpf(length) * t))
        p = add(p, scale(add(scale(x_hat, cos(ang)), scale(y_hat, sin(ang))), mpf(radius)))
        out.append(p)
    return out


def segment_b(a, b, current, p):
    """B (T) at p of a straight wire from a to b (Griffiths 2013, example 5.5)."""
    mu0 = 4 * pi * mpf(10) ** -7
    ab = sub(b, a)
    u = scale(ab, 1 / norm(ab))
    foot = add(a, scale(u, dot(sub(p, a), u)))
    s_vec = sub(p, foot)
    s = norm(s_vec)
    sin2 = dot(sub(b, foot), u) / norm(sub(b, p))
    sin1 = dot(sub(a, foot), u) / norm(sub(a, p))
    return scale(cross(u, s_vec), mu0 * current / (4 * pi * s * s) * (sin2 - sin1))


def helix_points(h):
    """(direction name, distance text, point) of the test's points about helix `h`."""
    _, origin, axis, radius, length, _, _ = h
    n = [v / math.sqrt(sum(w * w for w in axis)) for v in axis]
    centre = [origin[i] + 0.5 * length * n[i] for i in range(3)]
    out = []
    for dist in DISTANCES:
        r = float(dist)
        for name, d in DIRECTIONS.items():
            if d == "axis":
                d = n
            elif d == "-axis":
                d = [-v for v in n]
            out.append((name, dist, [centre[i] + r * d[i] for i in range(3)]))
    return out


def helix_field(h, p, verts):
    """B (T) of helix `h` (its polygon `verts`, computed at the current precision) at p."""
    current = mpf(h[6])
    b = [mpf(0)] * 3
    for k in range(len(verts) - 1):
        b = add(b, segment_b(verts[k], verts[k + 1], current, vec(p)))
    return b


def helix_rows():
    """Every row of far_field_helix.csv, as strings: helix, direction, r, x, y, z, Bx, By, Bz."""
    rows = []
    for h in HELICES:
        name, origin, axis, radius, length, turns, current = h
        size = math.hypot(radius, 0.5 * length)
        for direction, dist, p in helix_points(h):
            decades = max(0, math.ceil(math.log10(float(dist) / size)))
            mp.dps = 30 + 2 * decades + 5
            verts = vertices(origin, axis, radius, length, turns)
            b = helix_field(h, p, verts)
            check_decomposition(h, p, b, verts)
            rows.append(
                [name, direction, dist] + [repr(v) for v in p] + [nstr(v, 20, strip_zeros=False) for v in b]
            )
    mp.dps = 30
    return rows


def check_decomposition(h, p, b, verts):
    """Assert that the polygon's field is the net current element's 1/r^2 field plus the turns'
    dipole (m = N I pi a^2 along the axis, J. D. Jackson, "Classical Electrodynamics", 3rd ed.,
    1999, eqs. 5.56-5.57) to the order of the terms left out (see the module doc)."""
    _, origin, axis, radius, length, turns, current = h
    mu0 = 4 * pi * mpf(10) ** -7
    _, _, n = frame(vec(axis))
    centre = add(vec(origin), scale(n, mpf(length) / 2))
    rv = sub(vec(p), centre)
    r = norm(rv)
    u = scale(rv, 1 / r)
    d_el = scale(sub(verts[-1], verts[0]), mpf(current))
    m = scale(n, mpf(turns) * mpf(current) * pi * mpf(radius) ** 2)
    b_line = scale(cross(d_el, u), mu0 / (4 * pi * r * r))
    b_dip = scale(sub(scale(u, 3 * dot(m, u)), m), mu0 / (4 * pi * r ** 3))
    err = norm(sub(b, add(b_line, b_dip)))
    size = mpf(radius).__abs__() + mpf(length) / 2
    nseg = SEGMENTS_PER_TURN
    # The terms left out: the ends' offset from the axis (I a l and I a^2 / 2 of the wire's
    # ends, each a 1/r^3 term) and the polygon's area deficit, and the next order's size / r.
    dip_scale = norm(m) * mu0 / (4 * pi * r ** 3)
    ends = 3 * mpf(current) * (mpf(radius) * mpf(length) + mpf(radius) ** 2) * mu0 / (4 * pi * r ** 3)
    deficit = (2 * pi / nseg) ** 2 / 6 * 2 * dip_scale
    whole = norm(b_line) + 2 * dip_scale
    bound = ends + deficit + 4 * size / r * whole
    assert err <= bound, f"{h[0]} at {nstr(r, 5)}: the field is not D + dipole ({nstr(err / whole, 5)})"


def read_csv(text):
    return list(csv.reader(io.StringIO(text)))


def helix_table(rows):
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(["helix", "direction", "r_m", "x_m", "y_m", "z_m", "bx_t", "by_t", "bz_t", "source"])
    for row in rows:
        w.writerow(row + [SOURCE])
    return out.getvalue()


def axial_b() -> mpf:
    mp.dps = 40
    a, b, k = mpf("0.05"), mpf("0.2"), mpf(1000)
    mu0 = 4 * pi * mpf(10) ** -7
    z = 1000 * sqrt(a * a + b * b)
    value = mu0 * k / 2 * ((z + b) / sqrt((z + b) ** 2 + a * a) - (z - b) / sqrt((z - b) ** 2 + a * a))
    mp.dps = 30
    return value


def check_sheet_literal(value) -> None:
    src = (ROOT / "solver/src/field.rs").read_text()
    m = re.search(r"rel\(bz, ([0-9_.e-]+)\) < 1e-11", src)
    assert m, "the test's reference literal is missing"
    literal = float(m.group(1).replace("_", ""))
    rel = abs(literal - float(value)) / float(value)
    assert rel < 1e-14, f"literal {literal} differs from {value} by {rel}"
    print("far_field_refs: the sheet test's literal agrees with mpmath")


def check_helix_table(rows) -> None:
    stored = read_csv(HELIX_CSV.read_text())
    assert stored[0][0] == "helix", "far_field_helix.csv: no header"
    stored = stored[1:]
    assert len(stored) == len(rows), f"far_field_helix.csv: {len(stored)} rows, {len(rows)} recomputed"
    for got, want in zip(stored, rows):
        assert got[:6] == want[:6], f"far_field_helix.csv: inputs {got[:6]} differ from {want[:6]}"
        for g, w in zip(got[6:9], want[6:9]):
            scale_ = max(abs(float(x)) for x in want[6:9])
            assert abs(float(g) - float(w)) <= 1e-15 * scale_, f"far_field_helix.csv {got[:3]}: {g} vs {w}"
    print(f"far_field_refs: far_field_helix.csv agrees with mpmath ({len(rows)} rows)")


def main() -> None:
    value = axial_b()
    print("sheet axial B at 1000 s:", mp.nstr(value, 17))
    rows = helix_rows()
    for row in rows:
        print(" ".join(row[:3]), " ".join(row[6:9]))
    if "--check" in sys.argv:
        check_sheet_literal(value)
        check_helix_table(rows)
    else:
        HELIX_CSV.write_text(helix_table(rows))
        print(f"wrote {HELIX_CSV}")


if __name__ == "__main__":
    main()
