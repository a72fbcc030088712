"""References for the field and capacitance tests (issue 3), computed with mpmath.

Tolerance kinds: "rel" relative to the reference; "rel_to_magnitude" relative to |B| at that point
(so that a component that vanishes there is checked on the scale of the field).

Writes validation/fields_b.csv and validation/fields_capacitance.csv. Nothing is taken from the
Rust code; each row's source column names the formula or integral used. SI units; mu0 = 4 pi 1e-7
H/m (classical), eps0 = 1/(mu0 c^2), c = 299792458 m/s.

    python3 validation/fields_refs.py          # regenerate both tables (a few seconds)
    python3 validation/fields_refs.py --check  # recompute and compare with the tables (.ci/test)
"""

import csv
import io
import os
import sys

from mpmath import mp, mpf, pi, sqrt, cos, sin, quad, ellipk, ellipe, sinh, acosh, legenp, legenq, nsum, inf

mp.dps = 30
MU0 = 4 * pi * mpf(10) ** -7
C0 = mpf(299792458)
EPS0 = 1 / (MU0 * C0 ** 2)
HERE = os.path.dirname(os.path.abspath(__file__))


def b_loop_biot_savart(a, rho, z, current=1):
    """(B_rho, B_z) of a circular loop by direct Biot-Savart quadrature over the azimuth.

    B_rho = mu0 I/(4 pi) int a z cos(phi) / R^3, B_z = mu0 I/(4 pi) int a (a - rho cos(phi)) / R^3,
    R^2 = rho^2 + a^2 - 2 a rho cos(phi) + z^2 (Biot-Savart law; no elliptic integrals used).
    """
    a, rho, z = mpf(a), mpf(rho), mpf(z)
    r3 = lambda p: (rho ** 2 + a ** 2 - 2 * a * rho * cos(p) + z ** 2) ** mpf(1.5)
    k = MU0 * current / (4 * pi)
    br = k * quad(lambda p: a * z * cos(p) / r3(p), [0, pi, 2 * pi])
    bz = k * quad(lambda p: a * (a - rho * cos(p)) / r3(p), [0, pi, 2 * pi])
    return br, bz


def b_loop_elliptic(a, rho, z):
    """(B_rho, B_z) of a 1 A loop from the classical K, E closed form (Smythe; Jackson 5.5)."""
    a, rho, z = mpf(a), mpf(rho), mpf(z)
    D = (a + rho) ** 2 + z ** 2
    d = (a - rho) ** 2 + z ** 2
    m = 4 * a * rho / D
    K, E = ellipk(m), ellipe(m)
    bz = MU0 / (2 * pi * sqrt(D)) * (K + (a ** 2 - rho ** 2 - z ** 2) / d * E)
    if rho == 0:
        return mpf(0), bz
    br = MU0 * z / (2 * pi * rho * sqrt(D)) * (-K + (a ** 2 + rho ** 2 + z ** 2) / d * E)
    return br, bz


def b_sheet(a, half_length, ni, rho, z):
    """(B_rho, B_z) of an ideal solenoid as the integral of loops over its length (not the
    Derby-Olbert closed form it checks)."""
    f = lambda zz, c: b_loop_elliptic(a, rho, z - zz)[c]
    br = ni * quad(lambda zz: f(zz, 0), [-half_length, 0, half_length])
    bz = ni * quad(lambda zz: f(zz, 1), [-half_length, 0, half_length])
    return br, bz


def sphere_over_plane(h_over_a):
    """C / (4 pi eps0 a) of a sphere whose centre is h above a grounded plane: the image series
    sinh(al) sum_{n>=1} 1/sinh(n al), cosh(al) = h/a (W. R. Smythe, Static and Dynamic
    Electricity; series form from memory)."""
    al = acosh(mpf(h_over_a))
    return sinh(al) * nsum(lambda n: 1 / sinh(n * al), [1, inf])


def torus(ratio):
    """C / (4 pi eps0 r) of a torus, major R = ratio r: toroidal harmonics,
    C = 8 eps0 c sum_n eps_n Q_{n-1/2}(l)/P_{n-1/2}(l), l = R/r, c = sqrt(R^2 - r^2), eps_0 = 1,
    eps_n = 2 (toroidal-harmonic expansion; e.g. Smythe, from memory for the section)."""
    l = mpf(ratio)
    c = sqrt(l ** 2 - 1)  # in units of r
    term = lambda n: (1 if n == 0 else 2) * legenq(n - mpf(0.5), 0, l, type=3) / legenp(n - mpf(0.5), 0, l, type=3)
    s = nsum(term, [0, inf])
    return (8 * c * s / (4 * pi)).real


def b_rows():
    rows = []
    src_bs = "mpmath 30 digits, direct Biot-Savart quadrature over the loop"
    for rho, z in [(0, 0), (0, 1), (0.5, 0.5), (2, 0), (0.9, 0.1), (3, 2)]:
        br, bz = b_loop_biot_savart(1, rho, z)
        rows.append(("loop", 1, 0, 0, rho, z, "b_rho", br, 1e-10, "rel_to_magnitude", src_bs))
        rows.append(("loop", 1, 0, 0, rho, z, "b_z", bz, 1e-10, "rel_to_magnitude", src_bs))
    src_sh = "mpmath 30 digits, integral over the length of the loop field (K, E closed form) times n I"
    for rho, z in [(0, 0), (0.5, 0.5), (2, 0), (0.3, 1.5), (1.5, 0.8)]:
        br, bz = b_sheet(1, 1, 1000, rho, z)
        rows.append(("sheet", 1, 1, 1000, rho, z, "b_rho", br, 1e-9, "rel_to_magnitude", src_sh))
        rows.append(("sheet", 1, 1, 1000, rho, z, "b_z", bz, 1e-9, "rel_to_magnitude", src_sh))
    out = io.StringIO(newline="")
    w = csv.writer(out)
    w.writerow(["kind", "radius_m", "half_length_m", "current_per_length_a_per_m", "rho_m", "z_m", "quantity", "reference", "tolerance", "tolerance_kind", "source"])
    for r in rows:
        w.writerow([r[0], r[1], r[2], r[3], r[4], r[5], r[6], mp.nstr(r[7], 20), r[8], r[9], r[10]])
    return out.getvalue()


def capacitance_rows():
    caps = []
    for h in ["1.1", "2", "5"]:
        caps.append(("sphere_over_plane", h, sphere_over_plane(mpf(h)), 1e-3, "rel",
                     "image series sinh(al) sum 1/sinh(n al), cosh(al) = h/a (W. R. Smythe, Static and Dynamic Electricity, 1950; series form from memory), mpmath nsum"))
    for ratio in [2, 5, 10]:
        caps.append(("torus", ratio, torus(ratio), 3e-3, "rel",
                     "toroidal harmonics 8 eps0 c sum eps_n Q_{n-1/2}/P_{n-1/2} (W. R. Smythe, Static and Dynamic Electricity, 1950; section from memory), mpmath legenp/legenq"))
    caps.append(("sphere", 0, mpf(1), 1e-3, "rel", "exact, C = 4 pi eps0 a (J. C. Maxwell, A Treatise on Electricity and Magnetism, 1873, vol. 1)"))
    caps.append(("disc", 0, 8 / (4 * pi), 1e-3, "rel", "exact, C = 8 eps0 a of a thin disc (J. C. Maxwell, A Treatise on Electricity and Magnetism, 1873, vol. 1; article from memory)"))
    out = io.StringIO(newline="")
    w = csv.writer(out)
    w.writerow(["shape", "ratio", "reference", "tolerance", "tolerance_kind", "source"])
    for r in caps:
        w.writerow([r[0], r[1], mp.nstr(r[2], 20), r[3], r[4], r[5]])
    return out.getvalue()


def same_table(name, fresh, stored):
    """True when two CSV texts agree: every text cell equal, every number to 1e-15 relative
    (1e-30 absolute for a reference that vanishes)."""
    a = list(csv.reader(io.StringIO(fresh)))
    b = list(csv.reader(io.StringIO(stored)))
    if len(a) != len(b):
        print(f"{name}: {len(b)} rows stored, {len(a)} recomputed")
        return False
    ok = True
    for i, (ra, rb) in enumerate(zip(a, b)):
        if len(ra) != len(rb):
            print(f"{name} row {i}: {len(rb)} fields stored, {len(ra)} recomputed")
            ok = False
            continue
        for ca, cb in zip(ra, rb):
            try:
                x, y = mpf(ca), mpf(cb)
                same = abs(x - y) <= mpf("1e-15") * max(abs(x), abs(y)) + mpf("1e-30")
            except (ValueError, TypeError):
                same = ca == cb
            if not same:
                print(f"{name} row {i}: stored {cb!r}, recomputed {ca!r}")
                ok = False
    return ok


def main():
    tables = {"fields_b.csv": b_rows(), "fields_capacitance.csv": capacitance_rows()}
    if "--check" in sys.argv:
        bad = [n for n, text in tables.items()
               if not same_table(n, text, open(os.path.join(HERE, n), newline="").read())]
        if bad:
            sys.exit(f"fields_refs.py: {', '.join(bad)} disagree with mpmath; regenerate them")
        print("fields_refs.py: fields_b.csv and fields_capacitance.csv agree with mpmath")
        return
    for name, text in tables.items():
        with open(os.path.join(HERE, name), "w", newline="") as f:
            f.write(text)


if __name__ == "__main__":
    main()
