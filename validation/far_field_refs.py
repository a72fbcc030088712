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

3. Windings over a conducting ground plane (solver/src/field_model.rs,
   far_b_over_a_conducting_plane_is_the_pair_of_winding_and_image): B of a winding and its
   image in the plane z = z0, the image being the mirror of each current element with its
   direction reversed, J' = (-J_x, -J_y, J_z) at (x, y, 2 z0 - z) (J. D. Jackson, "Classical
   Electrodynamics", 3rd ed., 1999, method of images for a perfect conductor: normal B = 0 on
   the plane). A ring's image is then the mirrored ring circulating right-handed about the
   mirrored axis (the mirror reverses orientation, the reversal restores it); its field is the
   closed-form loop field in K and E (Jackson 1999, sec. 5.5, eqs. 5.37-5.41; W. R. Smythe,
   "Static and Dynamic Electricity", ch. 7) with mpmath's ellipk and ellipe. A filament helix's
   image is the mirrored polygon run backwards, summed as in part 2. Far away the pair cancels
   to about h / r of either side's field, and each ring's closed form to (a / r)^2 of its
   terms, so the working precision is 30 digits plus three times the decades of distance over
   size. Written to `far_field_ground.csv` (20 digits); `--check` recomputes every row.

    python3 validation/far_field_refs.py            # print the values, rewrite the CSVs
    python3 validation/far_field_refs.py --check    # recompute and compare (.ci/test)
"""
import csv
import io
import math
import re
import sys
from pathlib import Path

from mpmath import mp, mpf, pi, sqrt, cos, sin, nstr, ellipk, ellipe

ROOT = Path(__file__).resolve().parent.parent
HELIX_CSV = ROOT / "validation" / "far_field_helix.csv"
GROUND_CSV = ROOT / "validation" / "far_field_ground.csv"
GROUND_SOURCE = (
    "mpmath, winding plus its image in the conducting plane (Jackson 1999, method of images): "
    "closed-form loop field (Jackson 1999, sec. 5.5) or straight-wire sums (Griffiths 2013, "
    "example 5.5); validation/far_field_refs.py"
)
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


# The windings over a conducting plane of the test (invented for it): name, kind ("ring" in
# the ring model, "helix" in the filament model), origin (m), axis, radius (m), length (m),
# turns, current (A), plane height z0 (m). The same values are in FAR_FIELD_GROUND
# (solver/src/field_model.rs).
GROUND_CASES = [
    ("ring", "ring", (0.1, -0.2, 0.4), (0.0, 0.0, 1.0), 0.25, 0.0, 1.0, 3.0, 0.0),
    ("tilted_ring", "ring", (-0.5, 0.3, 0.6), (0.3, 0.0, 1.0), 0.1, 0.0, 1.0, 1e-6, 0.1),
    ("helix", "helix", (0.0, 0.0, 0.05), (0.0, 0.0, 1.0), 0.05, 0.1, 4.0, 2.0, 0.0),
]
# Distances (m) from the plane point below the winding's centre, and directions: up the
# normal, along the plane, obliquely.
GROUND_DISTANCES = ["3", "1e1", "1e2", "1e3", "1e5", "1e7", "1e12", "1e30", "1e60", "1e100", "1e140", "1e149"]
GROUND_DIRECTIONS = {
    "normal": (0.0, 0.0, 1.0),
    "plane": (0.6, 0.8, 0.0),
    "oblique": (0.36, -0.48, 0.8),
}


def ground_centre(case):
    """The winding's centre (its ring's centre, or the helix's middle) in floats."""
    _, kind, origin, axis, _, length, _, _, _ = case
    n = [v / math.sqrt(sum(w * w for w in axis)) for v in axis]
    if kind == "ring":
        return list(origin)
    return [origin[i] + 0.5 * length * n[i] for i in range(3)]


def ground_points(case):
    """(direction name, distance text, point) of the test's points about case `case`: from the
    plane point below the winding's centre."""
    c = ground_centre(case)
    o = [c[0], c[1], case[8]]
    out = []
    for dist in GROUND_DISTANCES:
        r = float(dist)
        for name, d in GROUND_DIRECTIONS.items():
            out.append((name, dist, [o[i] + r * d[i] for i in range(3)]))
    return out


def ring_b(centre, axis, radius, current, p):
    """B (T) at p of a ring about `axis` (unit, mpf) through `centre`, current right-handed
    about it: the K, E closed form (Jackson 1999, sec. 5.5; Smythe, ch. 7)."""
    mu0 = 4 * pi * mpf(10) ** -7
    a = radius
    d = sub(p, centre)
    z = dot(d, axis)
    perp = sub(d, scale(axis, z))
    rho = norm(perp)
    big = (a + rho) ** 2 + z * z
    small = (a - rho) ** 2 + z * z
    if rho == 0:
        bz = mu0 * current * a * a / (2 * (a * a + z * z) ** mpf(1.5))
        return scale(axis, bz)
    m = 4 * a * rho / big
    k, e = ellipk(m), ellipe(m)
    pre = mu0 * current / (2 * pi * sqrt(big))
    bz = pre * (k + (a * a - rho * rho - z * z) / small * e)
    brho = pre * z / rho * (-k + (a * a + rho * rho + z * z) / small * e)
    return add(scale(axis, bz), scale(perp, brho / rho))


def mirror(p, z0):
    return [p[0], p[1], 2 * z0 - p[2]]


def ground_field(case, p):
    """B (T) at p of the winding of `case` and its image, at the current precision."""
    _, kind, origin, axis, radius, length, turns, current, z0 = case
    z0 = mpf(z0)
    cur = mpf(current)
    pv = vec(p)
    if kind == "ring":
        n = vec(axis)
        n = scale(n, 1 / norm(n))
        c = vec(origin)
        b = ring_b(c, n, mpf(radius), cur, pv)
        image_axis = [n[0], n[1], -n[2]]
        return add(b, ring_b(mirror(c, z0), image_axis, mpf(radius), cur, pv))
    verts = vertices(origin, axis, radius, length, turns)
    image = [mirror(v, z0) for v in verts]
    b = [mpf(0)] * 3
    for k in range(len(verts) - 1):
        b = add(b, segment_b(verts[k], verts[k + 1], cur, pv))
        # The image element: mirrored, direction reversed.
        b = add(b, segment_b(image[k + 1], image[k], cur, pv))
    return b


def ground_rows():
    """Every row of far_field_ground.csv, as strings: case, direction, r, x, y, z, Bx, By, Bz."""
    rows = []
    for case in GROUND_CASES:
        name, kind, origin, axis, radius, length = case[:6]
        size = radius + math.hypot(length, 2 * abs(ground_centre(case)[2] - case[8]))
        for direction, dist, p in ground_points(case):
            decades = max(0, math.ceil(math.log10(float(dist) / size)))
            mp.dps = 30 + 3 * decades + 5
            b = ground_field(case, p)
            rows.append(
                [name, direction, dist] + [repr(v) for v in p] + [nstr(v, 20, strip_zeros=False) for v in b]
            )
    mp.dps = 30
    return rows


def read_csv(text):
    return list(csv.reader(io.StringIO(text)))


def helix_table(rows, first="helix", source=SOURCE):
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow([first, "direction", "r_m", "x_m", "y_m", "z_m", "bx_t", "by_t", "bz_t", "source"])
    for row in rows:
        w.writerow(row + [source])
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


def check_helix_table(rows, path=HELIX_CSV, first="helix") -> None:
    name = path.name
    stored = read_csv(path.read_text())
    assert stored[0][0] == first, f"{name}: no header"
    stored = stored[1:]
    assert len(stored) == len(rows), f"{name}: {len(stored)} rows, {len(rows)} recomputed"
    for got, want in zip(stored, rows):
        assert got[:6] == want[:6], f"{name}: inputs {got[:6]} differ from {want[:6]}"
        for g, w in zip(got[6:9], want[6:9]):
            scale_ = max(abs(float(x)) for x in want[6:9])
            assert abs(float(g) - float(w)) <= 1e-15 * scale_, f"{name} {got[:3]}: {g} vs {w}"
    print(f"far_field_refs: {name} agrees with mpmath ({len(rows)} rows)")


def main() -> None:
    value = axial_b()
    print("sheet axial B at 1000 s:", mp.nstr(value, 17))
    rows = helix_rows()
    for row in rows:
        print(" ".join(row[:3]), " ".join(row[6:9]))
    pair_rows = ground_rows()
    for row in pair_rows:
        print(" ".join(row[:3]), " ".join(row[6:9]))
    if "--check" in sys.argv:
        check_sheet_literal(value)
        check_helix_table(rows)
        check_helix_table(pair_rows, GROUND_CSV, "case")
    else:
        HELIX_CSV.write_text(helix_table(rows))
        print(f"wrote {HELIX_CSV}")
        GROUND_CSV.write_text(helix_table(pair_rows, "case", GROUND_SOURCE))
        print(f"wrote {GROUND_CSV}")


if __name__ == "__main__":
    main()
