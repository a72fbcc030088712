"""Specification of the validation CSV tables, shared by make_tables.py and check_tables.py.

Each table: file name, input columns, a function that recomputes the reference from a row's input
columns (strings, as read from the CSV), and the rows written by make_tables.py. Every table ends
with the columns  reference,tolerance,tolerance_kind,source.

Input policy: every input is taken as the IEEE binary64 number nearest the decimal printed in the
CSV (float(text), then converted exactly to mpf), because that is the number the Rust code reads.
For the few ill-conditioned rows (K near m = 1, rings nearly touching) the difference from the
exact decimal is reported by make_tables.py (it stays below a tenth of the row's tolerance; see
README.md).

A row whose `source` contains "mpmath" is computed ([C]); every other row carries a value printed in
the publication its source names ([S]) and is checked against the exact recomputation at the row's
own tolerance.
"""

from mpmath import mp, mpf, sin, cos, pi, radians, nstr

import refs

TAIL = ["reference", "tolerance", "tolerance_kind", "source"]


DECIMAL_INPUTS = False   # make_tables.py sets it to measure each row's conditioning


def num(text):
    """CSV input text -> exact mpf of the nearest binary64 (or the exact decimal when
    DECIMAL_INPUTS is set)."""
    if DECIMAL_INPUTS:
        return mpf(text)
    return mpf(float(text))


def fmt(v, digits=20):
    """Reference value as text with `digits` significant digits (exponent form); 0 as "0"."""
    v = mpf(v)
    if v == 0:
        return "0"
    return nstr(v, digits, strip_zeros=False, min_fixed=1, max_fixed=0)


def exact_binary(text):
    """The exact decimal expansion of the binary64 nearest `text` (used for inputs whose rounding
    to binary64 would otherwise move the reference by more than a tenth of its tolerance)."""
    from decimal import Decimal
    return str(Decimal(float(text)))


def fmt_in(v):
    """An input value that is not a short decimal (e.g. cos 30 deg): 20 significant digits."""
    return fmt(v, 20)


# ---------------------------------------------------------------------------------------------
# Sources
# ---------------------------------------------------------------------------------------------

SRC_MAXWELL = "mpmath 30 digits, Maxwell elliptic-integral formula; cross-checked by Bulirsch cel quadrature"
SRC_RINGS = ("mpmath 20 digits, Neumann double integral; cross-checked by the vector-potential line "
             "integral (mpmath 30 digits)")
SRC_RINGS_GROVER = SRC_RINGS + ("; for parallel axes the line integral is Grover's single integral "
                                "(F. W. Grover, Proc. IRE 32, 1944)")
SRC_RINGS_COAX = SRC_RINGS + "; equals Maxwell's formula (coaxial)"
SRC_GROVER36 = ("F. W. Grover, Inductance Calculations: Working Formulas and Tables, Van Nostrand 1946 "
                "(Dover 1973), Table 36")
SRC_NAGAOKA = "mpmath 30 digits, Nagaoka's coefficient in closed form (Lorenz formula in K and E, Grover 1946)"
SRC_RING_SELF = ("mpmath 30 digits, L = mu0 a (ln(8a/r) - 7/4) (E. B. Rosa, F. W. Grover, Bull. Bureau of "
                 "Standards 8(1), 1912)")
SRC_SOL = {
    "ring_sum": ("mpmath 30 digits, coaxial-ring sum N L_turn + 2 sum_s (N-s) M(a,a,s p), Maxwell M, "
                 "L_turn = mu0 a (ln(8a/r) - 7/4) (Rosa & Grover, Bull. BoS 8(1), 1912)"),
    "lorenz_sheet": ("mpmath 30 digits, Lorenz current sheet L = mu0 pi a^2 N^2 K_N / l, l = N p, Nagaoka's "
                     "K_N in K and E (Grover 1946)"),
    "rosa": ("mpmath 30 digits, Rosa's corrections L_sheet - mu0 a N (A + B), A = 5/4 - ln(2p/d), B exact "
             "sum (E. B. Rosa, Bull. Bureau of Standards 4, 1908; Rosa & Grover, Bull. BoS 8(1), 1912)"),
}
SRC_ROSA_B = ("mpmath 30 digits, exact sum B = (2/N) sum (N-s)(ln s - F(s)) (E. B. Rosa, Bull. Bureau of "
              "Standards 4, 1908; Rosa & Grover, Bull. BoS 8(1), 1912)")
SRC_SPIRAL = ("mpmath 30 digits, coplanar ring sum: ring i at radius r_in + (i+1/2)(r_out-r_in)/N, self "
              "mu0 r (ln(8r/r_w) - 7/4), mutual by Maxwell's formula")
SRC_WHEELER = ("H. A. Wheeler, \"Simple inductance formulas for radio coils\", Proc. IRE 16(10), 1928: "
               "L[uH] = a^2 n^2/(8a + 11c), inches, \"within 5 %\" (formula value by mpmath 30 digits)")
SRC_ELLIPTIC = "mpmath 30 digits, mpmath.ellipk / mpmath.ellipe (AGM), parameter m = k^2"
SRC_CEL_BULIRSCH = ("R. Bulirsch, \"Numerical calculation of elliptic integrals and elliptic functions "
                    "III\", Numer. Math. 13, 305-315, 1969, section 4.2 (test value as printed)")
SRC_CEL = "mpmath 30 digits, direct quadrature of Bulirsch's cel integral over [0, pi/2]"
SRC_AWG = "mpmath 30 digits, ASTM B258 formula d = 0.127 mm * 92^((36 - n)/39)"
SRC_AWG22 = "ASTM B258 formula d = 0.127 mm * 92^((36 - n)/39), rounded to 4 digits: 0.6438 mm"


def is_computed(source):
    return "mpmath" in source


# ---------------------------------------------------------------------------------------------
# Row recomputation (from the CSV's input columns)
# ---------------------------------------------------------------------------------------------

def eval_maxwell(r):
    return refs.maxwell(num(r["a_m"]), num(r["b_m"]), num(r["d_m"]))


def rings_args(r):
    return (num(r["rp_m"]), num(r["rs_m"]),
            [num(r["cx_m"]), num(r["cy_m"]), num(r["cz_m"])],
            [num(r["nx"]), num(r["ny"]), num(r["nz"])])


def eval_rings_line(r):
    return refs.ring_line_integral(*rings_args(r))


def eval_rings_neumann(r):
    with mp.workdps(20):
        return +refs.neumann_rings(*rings_args(r))


def eval_nagaoka(r):
    return refs.nagaoka(num(r["diameter_over_length"]))


def eval_ring_self(r):
    return refs.ring_self(num(r["radius_m"]), num(r["wire_radius_m"]))


def eval_solenoid(r):
    a, n, p, d = num(r["radius_m"]), int(r["turns"]), num(r["pitch_m"]), num(r["wire_diameter_m"])
    q = r["quantity"]
    if q == "ring_sum":
        return refs.ring_sum_solenoid(a, n, p, d)
    if q == "lorenz_sheet":
        return refs.lorenz_sheet(a, n, n * p)
    if q == "rosa":
        return refs.rosa_corrected(a, n, p, d)
    raise ValueError("unknown solenoid quantity " + q)


def eval_rosa_b(r):
    return refs.rosa_b(int(r["turns"]))


def eval_spiral(r):
    ri, ro, n, rw = num(r["inner_radius_m"]), num(r["outer_radius_m"]), int(r["turns"]), num(r["wire_radius_m"])
    q = r["quantity"]
    if q == "ring_sum":
        return refs.ring_sum_spiral(ri, ro, n, rw)
    if q == "wheeler":
        return refs.wheeler_spiral(ri, ro, n)
    raise ValueError("unknown spiral quantity " + q)


def eval_elliptic(r):
    f = {"K": refs.K, "E": refs.E}[r["function"]]
    return f(num(r["x"]))


def eval_cel(r):
    kc, p, a, b = (num(r[c]) for c in ("kc", "p", "a", "b"))
    return refs.cel_pv(kc, p, a, b) if p < 0 else refs.cel(kc, p, a, b)


def eval_awg(r):
    return refs.awg(int(r["gauge"]))


# ---------------------------------------------------------------------------------------------
# Rows (inputs as printed in the CSV; reference None = computed by the table's function)
# ---------------------------------------------------------------------------------------------

def _maxwell_rows():
    s4 = [("1", "1", "1"), ("0.2", "0.1", "0.1"), ("0.25", "0.2", "0.1"), ("1", "1", "0.01"), ("1", "0.5", "0")]
    near = [("1", "1", "1e-3"), ("1", "1", "1e-4"), ("1", "1", "1e-5"), ("1", "1", "1e-6"),
            ("1", "0.999", "0"), ("1", "0.99999237060546875", "0"), ("1", "0.9999", "1e-4"), ("0.05", "0.05", "1e-7"),
            ("0.02", "0.0201", "0")]
    far = [("1", "1", "100"), ("1", "1", "300"), ("1", "1", "1000"), ("0.5", "0.2", "1000"),
           ("0.05", "0.05", "50")]
    radii = [("1", "1e-3", "0"), ("1", "1e-3", "0.5"), ("1e-3", "1", "2"), ("1", "1e-4", "1e-3")]
    other = [("0.1", "0.3", "0.2"), ("10", "10", "1"), ("1", "2", "0"), ("0.01", "0.01", "0.001")]
    rows = []
    for a, b, d in s4 + near + far + radii + other:
        rows.append({"a_m": a, "b_m": b, "d_m": d, "reference": None, "tolerance": "1e-12",
                     "tolerance_kind": "rel", "source": SRC_MAXWELL})
    return rows


def _rings_rows():
    s30, c30 = sin(radians(30)), cos(radians(30))
    s60, c60 = sin(radians(60)), cos(radians(60))
    s89, c89 = sin(radians(89)), cos(radians(89))
    spec = [
        # Grover 1944's configurations (tilt t -> normal (sin t, 0, cos t))
        ("0.2", "0.1", "0.1", "0", "0.1", "0", "0", "1", SRC_RINGS_GROVER),
        ("0.2", "0.1", "0.1", "0", "0.1", "0.5", "0", fmt_in(c30), SRC_RINGS),
        ("1.0", "0.5", "0", "0", "0", fmt_in(s60), "0", "0.5", SRC_RINGS),
        ("1.0", "1.0", "3", "0", "0", "0", "0", "1", SRC_RINGS_GROVER),
        # more general positions
        ("0.2", "0.1", "0", "0.05", "0.1", "0", "0", "1", SRC_RINGS_GROVER),       # offset in y
        ("0.2", "0.1", "0.05", "0.02", "0.1", "0", "-0.6", "0.8", SRC_RINGS),        # tilt about x
        ("0.2", "0.1", "0", "0", "0.05", fmt_in(s89), "0", fmt_in(c89), SRC_RINGS),  # tilt 89 deg
        ("1.0", "0.5", "0", "0", "0", "1", "0", "0", None),                          # 90 deg concentric
        ("0.2", "0.1", "0.1", "0", "0.002", "0", "0", "1", SRC_RINGS_GROVER),      # 2 mm above P's wire
        ("0.2", "0.1", "0.1", "0", "0.002", "0", "0.6", "0.8", SRC_RINGS),           # tilted, 2 mm from wire
        ("0.2", "0.1", "0.2", "0", "0", "0", "0.6", "0.8", SRC_RINGS),               # S threads P's wire
        ("0.2", "0.1", "2", "1", "3", "0.36", "0.48", "0.8", SRC_RINGS),             # large offset
        ("0.25", "0.2", "0", "0", "0.1", "0", "0", "1", SRC_RINGS_COAX),             # coaxial
        ("0.25", "0.2", "0", "0", "0.1", "0", "0", "-1", SRC_RINGS_COAX),            # coaxial, opposite sense
        ("0.2", "0.1", "0.15", "0", "0.05", "1", "0", "0", SRC_RINGS),               # perpendicular axes
    ]
    rows = []
    cols = ["rp_m", "rs_m", "cx_m", "cy_m", "cz_m", "nx", "ny", "nz"]
    for *vals, src in spec:
        r = dict(zip(cols, vals))
        if src is None:   # exactly perpendicular and concentric: M = 0 by symmetry
            r.update(reference="0", tolerance="1e-18", tolerance_kind="abs",
                     source=("exact by symmetry (perpendicular concentric rings); " + SRC_RINGS))
        else:
            r.update(reference=None, tolerance="1e-9", tolerance_kind="rel", source=src)
        rows.append(r)
    return rows


def _nagaoka_rows():
    printed = [("1", "0.688423"), (fmt_in(mpf(4) / 3), "0.623011"), ("2", "0.525510"), ("2.5", "0.471865"),
               (fmt_in(mpf(10) / 3), "0.405269"), ("4", "0.365432"), ("5", "0.319825"), ("10", "0.203324"),
               ("100", "0.034960")]
    rows = [{"diameter_over_length": x, "reference": v, "tolerance": "5e-7", "tolerance_kind": "abs",
             "source": SRC_GROVER36} for x, v in printed]
    # Very short coils: E(m) - k cancels as 1/k'^2 in double precision (k' = 1e-3 at d/l = 1000),
    # so the double-precision closed form is good to ~2e-11 there.
    for x, tol in [("0.01", "1e-12"), ("0.1", "1e-12"), ("0.2", "1e-12"), ("0.5", "1e-12"), ("1000", "5e-11")]:
        rows.append({"diameter_over_length": x, "reference": None, "tolerance": tol,
                     "tolerance_kind": "rel", "source": SRC_NAGAOKA})
    return rows


def _ring_self_rows():
    rows = [{"radius_m": "0.1", "wire_radius_m": "1e-3", "reference": None, "tolerance": "1e-7",
             "tolerance_kind": "rel", "source": SRC_RING_SELF}]
    for a, r in [("0.05", "0.2e-3"), ("1", "1e-3"), ("0.3", "2.5e-3")]:
        rows.append({"radius_m": a, "wire_radius_m": r, "reference": None, "tolerance": "1e-12",
                     "tolerance_kind": "rel", "source": SRC_RING_SELF})
    return rows


def _solenoid_rows():
    rows = []
    for a, n, p, d, tol in [("0.05", "10", "2e-3", "1e-3", "1e-6"),
                            ("0.05", "100", "2e-3", "1e-3", "1e-9"),
                            ("0.1", "1000", "0.5e-3", "0.4e-3", "1e-9")]:
        for q in ["ring_sum", "lorenz_sheet", "rosa"]:
            rows.append({"radius_m": a, "turns": n, "pitch_m": p, "wire_diameter_m": d, "quantity": q,
                         "reference": None, "tolerance": tol, "tolerance_kind": "rel", "source": SRC_SOL[q]})
    return rows


def _rosa_b_rows():
    return [{"turns": str(n), "reference": None, "tolerance": "1e-6", "tolerance_kind": "rel",
             "source": SRC_ROSA_B} for n in [2, 5, 10, 100, 1000]]


def _spiral_rows():
    rows = []
    for ri, ro, n, rw, tol in [("0.02", "0.06", "20", "0.5e-3", "1e-7"), ("0.05", "0.15", "25", "1e-3", "1e-9")]:
        base = {"inner_radius_m": ri, "outer_radius_m": ro, "turns": n, "wire_radius_m": rw}
        rows.append(dict(base, quantity="ring_sum", reference=None, tolerance=tol, tolerance_kind="rel",
                         source=SRC_SPIRAL))
        rows.append(dict(base, quantity="wheeler", reference=None, tolerance="0.05", tolerance_kind="rel",
                         source=SRC_WHEELER))
    return rows


def _elliptic_rows():
    rows = []
    for f in ["K", "E"]:
        for x in ["0", "1e-8", "0.1", "0.5", "0.85", "0.9", "0.99", exact_binary("0.999999")]:
            rows.append({"function": f, "x": x, "reference": None, "tolerance": "1e-13",
                         "tolerance_kind": "rel", "source": SRC_ELLIPTIC})
    return rows


def _cel_rows():
    rows = [{"kc": "0.1", "p": "4.1", "a": "1.2", "b": "1.1", "reference": "1.5464442694017956",
             "tolerance": "1e-13", "tolerance_kind": "rel", "source": SRC_CEL_BULIRSCH},
            {"kc": "0.1", "p": "-4.1", "a": "1.2", "b": "1.1", "reference": "-0.67687378198360556",
             "tolerance": "1e-13", "tolerance_kind": "rel", "source": SRC_CEL_BULIRSCH}]
    for kc in ["1e-7", "1e-3", "0.5", "0.9", "0.999", exact_binary("0.9999999")]:
        rows.append({"kc": kc, "p": "1", "a": "-1", "b": "1", "reference": None, "tolerance": "1e-13",
                     "tolerance_kind": "rel", "source": SRC_CEL})
    return rows


def _awg_rows():
    rows = []
    for g in ["-3", "10", "22", "30", "40"]:
        if g == "22":
            rows.append({"gauge": g, "reference": "6.438e-4", "tolerance": "5e-5", "tolerance_kind": "rel",
                         "source": SRC_AWG22})
        else:
            rows.append({"gauge": g, "reference": None, "tolerance": "1e-12", "tolerance_kind": "rel",
                         "source": SRC_AWG})
    return rows


TABLES = [
    # (file, input columns, recompute function, rows)
    ("maxwell_coaxial.csv", ["a_m", "b_m", "d_m"], eval_maxwell, _maxwell_rows),
    ("rings_general.csv", ["rp_m", "rs_m", "cx_m", "cy_m", "cz_m", "nx", "ny", "nz"], eval_rings_line, _rings_rows),
    ("nagaoka.csv", ["diameter_over_length"], eval_nagaoka, _nagaoka_rows),
    ("ring_self.csv", ["radius_m", "wire_radius_m"], eval_ring_self, _ring_self_rows),
    ("solenoid.csv", ["radius_m", "turns", "pitch_m", "wire_diameter_m", "quantity"], eval_solenoid, _solenoid_rows),
    ("rosa_b.csv", ["turns"], eval_rosa_b, _rosa_b_rows),
    ("spiral.csv", ["inner_radius_m", "outer_radius_m", "turns", "wire_radius_m", "quantity"], eval_spiral, _spiral_rows),
    ("elliptic.csv", ["function", "x"], eval_elliptic, _elliptic_rows),
    ("cel.csv", ["kc", "p", "a", "b"], eval_cel, _cel_rows),
    ("awg.csv", ["gauge"], eval_awg, _awg_rows),
]
