"""References for the values written inline in the Rust tests, computed with mpmath.

Each literal a test compares against is recomputed here from its formula (30 digits) and
checked: the literal must still appear in the named source file, as written, and agree with the
recomputed value to the tolerance the test states. SI units; mu0 = 4 pi 1e-7 H/m (classical),
eps0 = 1/(mu0 c^2), c = 299792458 m/s, as in coilfield.

    python3 validation/inline_refs.py           # print every value (17 digits)
    python3 validation/inline_refs.py --check   # also check the literals in the sources (.ci/test)
"""

import re
import sys
from pathlib import Path

from mpmath import mp, mpf, pi, sqrt, ellipk, ellipe, diff

mp.dps = 30
MU0 = 4 * pi * mpf(10) ** -7
C0 = mpf(299792458)
EPS0 = 1 / (MU0 * C0 ** 2)
ROOT = Path(__file__).resolve().parent.parent


def maxwell_coaxial(a, b, z):
    """M (H) of coaxial circular filaments of radii a, b, z apart (J. C. Maxwell, "A Treatise on
    Electricity and Magnetism", 1873, vol. 2, art. 701):
    M = mu0 sqrt(a b) ((2/k - k) K(k^2) - (2/k) E(k^2)), k^2 = 4 a b / ((a + b)^2 + z^2)."""
    a, b, z = mpf(a), mpf(b), mpf(z)
    m = 4 * a * b / ((a + b) ** 2 + z ** 2)
    k = sqrt(m)
    return MU0 * sqrt(a * b) * ((2 / k - k) * ellipk(m) - 2 / k * ellipe(m))


def maxwell_g(m):
    """((2 - m) K(m) - 2 E(m)) / m^2, the factor of Maxwell's formula the elliptic module fuses."""
    m = mpf(m)
    return ((2 - m) * ellipk(m) - 2 * ellipe(m)) / m ** 2


def ring_charge_potential(q, a, rho, z):
    """Potential (V) of a ring charge q of radius a in the plane z = 0 (W. R. Smythe, "Static and
    Dynamic Electricity", 1950, ch. 5, the uniformly charged circle):
    phi = q / (4 pi eps0) (2 / pi) K(m) / sqrt((a + rho)^2 + z^2), m = 4 a rho / ((a + rho)^2 + z^2)."""
    a, rho, z = mpf(a), mpf(rho), mpf(z)
    d2 = (a + rho) ** 2 + z ** 2
    return q / (4 * pi * EPS0) * (2 / pi) * ellipk(4 * a * rho / d2) / sqrt(d2)


def loop_b(a, rho, z):
    """(B_rho, B_z) (T) of a 1 A circular loop (J. D. Jackson, "Classical Electrodynamics", 3rd
    ed. 1999, section 5.5; the K, E closed form)."""
    a, rho, z = mpf(a), mpf(rho), mpf(z)
    D = (a + rho) ** 2 + z ** 2
    d = (a - rho) ** 2 + z ** 2
    m = 4 * a * rho / D
    K, E = ellipk(m), ellipe(m)
    bz = MU0 / (2 * pi * sqrt(D)) * (K + (a ** 2 - rho ** 2 - z ** 2) / d * E)
    br = mpf(0) if rho == 0 else MU0 * z / (2 * pi * rho * sqrt(D)) * (-K + (a ** 2 + rho ** 2 + z ** 2) / d * E)
    return br, bz


def sheet_b(a, half, ni, rho, z):
    """(B_rho, B_z) (T) of an ideal solenoid: the loop field integrated over its length times n I
    (an integral, not the Derby-Olbert closed form the test checks)."""
    br = ni * mp.quad(lambda zz: loop_b(a, rho, z - zz)[0], [-half, 0, half])
    bz = ni * mp.quad(lambda zz: loop_b(a, rho, z - zz)[1], [-half, 0, half])
    return br, bz


def cases():
    """(source file, literal as written there, value, relative tolerance, what)."""
    out = []
    # solver/src/elliptic.rs: g_matches_mpmath and agm_k_and_e_from_kc_match_mpmath.
    for m, lit in [(0.1, "0.212_328_877_289_045_17"), (0.5, "0.319_297_015_426_827_5"), (0.9, "0.773_273_900_339_313_4")]:
        out.append(("solver/src/elliptic.rs", lit, maxwell_g(m), 2e-16, f"g({m})"))
    out.append(("solver/src/elliptic.rs", "1.854_074_677_301_371_9", ellipk(mpf("0.5")), 1e-16, "K(0.5)"))
    out.append(("solver/src/elliptic.rs", "1.350_643_881_047_675_5", ellipe(mpf("0.5")), 1e-16, "E(0.5)"))
    # solver/src/euler_maclaurin.rs: MPMATH_DERIVATIVES, d^k M / dz^k for k = 0..7.
    src = (ROOT / "solver/src/euler_maclaurin.rs").read_text()
    block = src[src.index("const MPMATH_DERIVATIVES"):src.index("];", src.index("const MPMATH_DERIVATIVES"))]
    for m in re.finditer(r"\(\s*\(([-0-9.e_]+),\s*([-0-9.e_]+),\s*([-0-9.e_]+)\),\s*\[([^\]]*)\]", block):
        a, b, z = (mpf(g.replace("_", "")) for g in m.groups()[:3])
        lits = [s.strip() for s in m.group(4).split(",") if s.strip()]
        assert len(lits) == 8, lits
        for k, lit in enumerate(lits):
            want = diff(lambda zz: maxwell_coaxial(a, b, zz), z, k)
            out.append(("solver/src/euler_maclaurin.rs", lit, want, 1e-15, f"d^{k}M/dz^{k} at {a}, {b}, {z}"))
    # tests/sweep.rs: rings of 1 m radius 1 m and 0.5 m apart (several tests).
    out.append(("tests/sweep.rs", "4.94078463079826907e-7", maxwell_coaxial(1, 1, 1), 5e-16, "M rings 1 m apart"))
    out.append(("tests/sweep.rs", "4.940_784_630_8e-7", maxwell_coaxial(1, 1, 1), 1e-11, "M rings 1 m apart"))
    out.append(("tests/sweep.rs", "1.112_610_893_52e-6", maxwell_coaxial(1, 1, "0.5"), 5e-12, "M rings 0.5 m apart"))
    # solver/src/electrostatic.rs: ring charge 1 nC, a = 1 m.
    for (rho, z), lit in [((0, 0), "8.987_551_787_368_176"), (("0.5", "0.5"), "8.168_129_056_488_912"), ((2, 0), "4.822_639_433_263_318")]:
        out.append(("solver/src/electrostatic.rs", lit, ring_charge_potential(mpf("1e-9"), 1, mpf(rho), mpf(z)), 1e-15, f"ring charge at {rho}, {z}"))
    # solver/src/field.rs: loop (a = 1 m, 1 A) and sheet (a = 1 m, length 2 m, n I = 1000 A/m).
    for (rho, z), (lr, lz) in [
        ((0, 0), (None, "6.28318530718e-7")),
        ((0, 1), (None, "2.22144146908e-7")),
        (("0.5", "0.5"), ("1.61689084076e-7", "4.34584893594e-7")),
        ((2, 0), (None, "-5.41731848613e-8")),
    ]:
        br, bz = loop_b(1, mpf(rho), mpf(z))
        if lr:
            out.append(("solver/src/field.rs", lr, br, 1e-11, f"loop B_rho at {rho}, {z}"))
        out.append(("solver/src/field.rs", lz, bz, 1e-11, f"loop B_z at {rho}, {z}"))
    for (rho, z), (lr, lz) in [
        ((0, 0), (None, "8.88576587632e-4")),
        (("0.5", "0.5"), ("8.62470791446e-5", "8.49759136948e-4")),
        ((2, 0), (None, "-6.51600496907e-5")),
    ]:
        br, bz = sheet_b(1, 1, 1000, mpf(rho), mpf(z))
        if lr:
            out.append(("solver/src/field.rs", lr, br, 1e-11, f"sheet B_rho at {rho}, {z}"))
        out.append(("solver/src/field.rs", lz, bz, 1e-11, f"sheet B_z at {rho}, {z}"))
    return out


def main() -> None:
    check = "--check" in sys.argv
    bad = 0
    for path, lit, want, tol, what in cases():
        got = mpf(lit.replace("_", ""))
        err = abs((got - want) / want)
        ok = err <= tol
        if check and lit not in (ROOT / path).read_text():
            print(f"MISSING {path}: {lit} ({what}) no longer in the source")
            bad += 1
            continue
        print(f"{'ok  ' if ok else 'BAD '} {path}: {what}: {mp.nstr(want, 17)} literal {lit} rel {mp.nstr(err, 3)}")
        bad += 0 if ok else 1
    if check and bad:
        sys.exit(f"inline_refs.py: {bad} literal(s) disagree with mpmath or are missing")


if __name__ == "__main__":
    main()
