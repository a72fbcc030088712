"""Reference of the far-field test of the solenoid sheet (solver/src/field.rs,
sheet_field_keeps_its_digits_far_away): the exact axial field of an ideal solenoid,
B_z = (mu0 K / 2) [(z + b)/sqrt((z + b)^2 + a^2) - (z - b)/sqrt((z - b)^2 + a^2)]
(J. D. Jackson, "Classical Electrodynamics", 3rd ed., 1999, sec. 5.5), at 40 digits, for
a = 0.05 m, b = 0.2 m, K = 1000 A/m, z = 1000 sqrt(a^2 + b^2).

`--check` recomputes it and checks the literal in the test against it.
"""
import re
import sys
from pathlib import Path

from mpmath import mp, mpf, pi, sqrt

mp.dps = 40


def axial_b() -> mpf:
    a, b, k = mpf("0.05"), mpf("0.2"), mpf(1000)
    mu0 = 4 * pi * mpf(10) ** -7
    z = 1000 * sqrt(a * a + b * b)
    return mu0 * k / 2 * ((z + b) / sqrt((z + b) ** 2 + a * a) - (z - b) / sqrt((z - b) ** 2 + a * a))


def main() -> None:
    value = axial_b()
    print(mp.nstr(value, 17))
    if "--check" in sys.argv:
        src = (Path(__file__).resolve().parent.parent / "solver/src/field.rs").read_text()
        m = re.search(r"rel\(bz, ([0-9_.e-]+)\) < 1e-11", src)
        assert m, "the test's reference literal is missing"
        literal = float(m.group(1).replace("_", ""))
        rel = abs(literal - float(value)) / float(value)
        assert rel < 1e-14, f"literal {literal} differs from {value} by {rel}"
        print("far_field_refs: the test's literal agrees with mpmath")


if __name__ == "__main__":
    main()
