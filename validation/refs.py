"""Independent high-precision references for coilfield's validation tables.

Everything here is computed with mpmath (arbitrary precision, default mp.dps = 30) straight from
the published formula or integral named in each docstring; nothing is taken from the Rust code.
SI units throughout. mu0 = 4*pi*1e-7 H/m exactly (the classical value; CODATA 2018 differs from
it by about 5.5e-10 relative, far below every tolerance used with these tables except where a
table says otherwise).

Elliptic integrals use the parameter m = k^2, as mpmath.ellipk(m) / mpmath.ellipe(m) do.

Inputs may be Python floats (taken as their exact binary value, which is what an f64 program sees),
ints, decimal strings (taken as the exact decimal), or mpf.

Functions whose formulas cancel badly (Maxwell's formula for distant rings, the vector potential
near the axis, Nagaoka's coefficient for long coils) raise the working precision internally by as
many digits as the cancellation costs, so the returned value is good to about mp.dps digits.
"""

from mpmath import mp, mpf, pi, sqrt, log, ellipk, ellipe, quad, cos, sin, atan2, atan, asinh
from mpmath import fabs, log10, ceil, floor

mp.dps = 30


def MU0():
    """mu0 = 4*pi*1e-7 H/m (classical exact value), at the current working precision."""
    return 4 * pi * mpf(10) ** -7


def _m(x):
    """Convert an input to mpf: floats exactly, strings as exact decimals."""
    if isinstance(x, str):
        return mpf(x)
    return mpf(x)


def _vec(v):
    return [_m(c) for c in v]


def _guard(*small):
    """Extra decimal digits to carry when quantities as small as `small` enter a cancellation."""
    extra = 10
    for s in small:
        s = fabs(s)
        if s == 0:
            continue
        if s < 1:
            extra += int(ceil(-log10(s)))
    return extra


# ---------------------------------------------------------------------------------------------
# Elliptic integrals
# ---------------------------------------------------------------------------------------------

def K(m):
    """Complete elliptic integral of the first kind K(m), parameter m = k^2 (mpmath.ellipk)."""
    return ellipk(_m(m))


def E(m):
    """Complete elliptic integral of the second kind E(m), parameter m = k^2 (mpmath.ellipe)."""
    return ellipe(_m(m))


def _cel_integrand(kc, p, a, b):
    def f(phi):
        c2 = cos(phi) ** 2
        s2 = sin(phi) ** 2
        return (a * c2 + b * s2) / ((c2 + p * s2) * sqrt(c2 + kc * kc * s2))
    return f


def _cel_breaks(kc, lo, hi):
    """Breakpoints for the cel integrand: when |kc| is small the factor 1/sqrt(cos^2 + kc^2 sin^2)
    peaks in a layer of width ~|kc| at phi = pi/2; geometric breakpoints pi/2 - |kc|*4^j resolve it."""
    pts = [lo]
    akc = fabs(kc)
    if akc < mpf('0.1'):
        js = []
        w = akc
        while w < (hi - lo) / 4:
            js.append(hi - w)
            w *= 4
        pts.extend(sorted(x for x in js if x > lo))
    pts.append(hi)
    return pts


def cel(kc, p, a, b):
    """Bulirsch's general complete elliptic integral, by direct quadrature (p > 0 only):

        cel(kc, p, a, b) = int_0^{pi/2} (a cos^2 t + b sin^2 t)
                           / ((cos^2 t + p sin^2 t) sqrt(cos^2 t + kc^2 sin^2 t)) dt

    Definition: R. Bulirsch, "Numerical calculation of elliptic integrals and elliptic functions
    III", Numer. Math. 13, 305-315, 1969. Identities: cel(kc,1,1,1) = K(1-kc^2),
    cel(kc,1,1,kc^2) = E(1-kc^2), and cel(kc,1,-1,1) = ((2-m)K(m) - 2E(m))/m with m = 1-kc^2
    (the combination in Maxwell's formula). Computed with mpmath.quad (tanh-sinh), with
    geometric breakpoints near pi/2 when kc is small. For p < 0 see cel_pv.
    """
    kc, p, a, b = map(_m, (kc, p, a, b))
    if not p > 0:
        raise ValueError("cel: this quadrature takes p > 0 only (use cel_pv for p < 0)")
    if kc == 0:
        raise ValueError("cel: kc = 0 is the logarithmic singularity")
    with mp.extradps(10):
        f = _cel_integrand(kc, p, a, b)
        v = quad(f, _cel_breaks(kc, mpf(0), pi / 2))
    return +v


def cel_pv(kc, p, a, b):
    """Cauchy principal value of Bulirsch's cel integral for p < 0 (the integrand then has a
    simple pole at tan^2 t0 = -1/p). Same definition as `cel` (Bulirsch 1969), evaluated as
        PV = int_0^{t0-h} f + int_{t0+h}^{pi/2} f + int_0^h [f(t0+u) + f(t0-u)] du,
    where the symmetric sum in the last integral is analytic (the 1/u parts cancel); it is
    integrated by Gauss-Legendre (nodes away from u = 0) at doubled precision. Used only to
    cross-check Bulirsch's printed p < 0 test value; the tables take that value as printed.
    """
    kc, p, a, b = map(_m, (kc, p, a, b))
    if not p < 0:
        return cel(kc, p, a, b)
    with mp.workdps(2 * mp.dps + 20):
        f = _cel_integrand(kc, p, a, b)
        t0 = atan(1 / sqrt(-p))
        h = min(t0, pi / 2 - t0) / 2
        v = quad(f, [0, t0 - h]) + quad(f, [t0 + h, pi / 2])
        v += quad(lambda u: f(t0 + u) + f(t0 - u), [0, h / 4, h / 2, h], method='gauss-legendre')
    return +v


# ---------------------------------------------------------------------------------------------
# Coaxial circular filaments
# ---------------------------------------------------------------------------------------------

def maxwell(a, b, d):
    """Mutual inductance (H) of two coaxial circular filaments, radii a, b (m), axial distance d (m).

    Maxwell's formula (J. C. Maxwell, A Treatise on Electricity and Magnetism, 1873, vol. 2 [article
    number from memory: art. 701]; same statement in F. W. Grover, Inductance Calculations, 1946):
        M = mu0 sqrt(ab) [ (2/k - k) K(m) - (2/k) E(m) ],   m = k^2 = 4ab / ((a+b)^2 + d^2).
    Both small m (distant rings: the bracket cancels to O(k^3)) and m -> 1 (rings nearly touching:
    1 - m = ((a-b)^2 + d^2)/((a+b)^2 + d^2) is formed from the geometry) are handled by carrying
    the digits the cancellation costs. Far apart, M -> mu0 pi a^2 b^2 / (2 d^3).
    """
    a, b, d = map(_m, (a, b, d))
    den = (a + b) ** 2 + d ** 2
    m = 4 * a * b / den
    kc2 = ((a - b) ** 2 + d ** 2) / den
    with mp.extradps(_guard(m, m, kc2)):
        a, b, d = +a, +b, +d
        den = (a + b) ** 2 + d ** 2
        m = 4 * a * b / den
        k = sqrt(m)
        v = MU0() * sqrt(a * b) * ((2 / k - k) * ellipk(m) - 2 / k * ellipe(m))
    return +v


def maxwell_cel(a, b, d):
    """Same M as `maxwell` through the stable Bulirsch form (an independent route: quadrature
    instead of the AGM inside ellipk/ellipe):
        M = mu0 sqrt(ab m) cel(kc, 1, -1, 1),  kc^2 = ((a-b)^2 + d^2)/((a+b)^2 + d^2).
    Identity (2-m)K - 2E = m cel(kc,1,-1,1) follows from the cel definition (Bulirsch 1969)."""
    a, b, d = map(_m, (a, b, d))
    den = (a + b) ** 2 + d ** 2
    m = 4 * a * b / den
    kc = sqrt(((a - b) ** 2 + d ** 2) / den)
    return MU0() * sqrt(a * b * m) * cel(kc, 1, -1, 1)


def maxwell_dipole(a, b, d):
    """Far-field limit of Maxwell's formula: mu0 pi a^2 b^2 / (2 d^3) (leading term; the relative
    error is O((a^2+b^2)/d^2))."""
    a, b, d = map(_m, (a, b, d))
    return MU0() * pi * a ** 2 * b ** 2 / (2 * d ** 3)


# ---------------------------------------------------------------------------------------------
# Circular filaments in general position
# ---------------------------------------------------------------------------------------------

def _frame(normal):
    """Unit axis n and the in-plane frame of ring S: x_hat = normalise(z x n), or (1,0,0) when n is
    parallel to z; y_hat = n x x_hat (so x_hat x y_hat = n: the parametrisation runs right-handed
    about n)."""
    n = _vec(normal)
    nn = sqrt(sum(c * c for c in n))
    if nn == 0:
        raise ValueError("normal must be non-zero")
    n = [c / nn for c in n]
    zx = [-n[1], n[0], mpf(0)]          # z_hat x n = (0*nz - 1*ny, 1*nx - 0*nz, 0)
    zn = sqrt(zx[0] ** 2 + zx[1] ** 2)
    if zn == 0:
        xh = [mpf(1), mpf(0), mpf(0)]
    else:
        xh = [zx[0] / zn, zx[1] / zn, mpf(0)]
    yh = [n[1] * xh[2] - n[2] * xh[1], n[2] * xh[0] - n[0] * xh[2], n[0] * xh[1] - n[1] * xh[0]]
    return n, xh, yh


def _ring_s(rs, centre, normal):
    """Point and tangent (d/dt) of ring S: C + rs (cos t x_hat + sin t y_hat)."""
    c = _vec(centre)
    n, xh, yh = _frame(normal)

    def point(t):
        ct, st = cos(t), sin(t)
        return [c[i] + rs * (ct * xh[i] + st * yh[i]) for i in range(3)]

    def tangent(t):
        ct, st = cos(t), sin(t)
        return [rs * (-st * xh[i] + ct * yh[i]) for i in range(3)]

    return point, tangent


def _closest_t(rp, point):
    """Parameter t* of ring S closest to the wire of ring P (radius rp in the z = 0 plane):
    distance^2 from a point to the circle is (rho - rp)^2 + z^2. Coarse sampling, then golden-
    section refinement. Used only to place quadrature breakpoints (need not be exact)."""
    def dist2(t):
        q = point(t)
        rho = sqrt(q[0] ** 2 + q[1] ** 2)
        return (rho - rp) ** 2 + q[2] ** 2

    n = 256
    ts = [2 * pi * i / n for i in range(n)]
    ds = [dist2(t) for t in ts]
    i = min(range(n), key=lambda j: ds[j])
    lo, hi = ts[i] - 2 * pi / n, ts[i] + 2 * pi / n
    g = (sqrt(5) - 1) / 2
    x1, x2 = hi - g * (hi - lo), lo + g * (hi - lo)
    f1, f2 = dist2(x1), dist2(x2)
    for _ in range(60):
        if f1 < f2:
            hi, x2, f2 = x2, x1, f1
            x1 = hi - g * (hi - lo)
            f1 = dist2(x1)
        else:
            lo, x1, f1 = x1, x2, f2
            x2 = lo + g * (hi - lo)
            f2 = dist2(x2)
    t = (lo + hi) / 2
    return t, sqrt(dist2(t))


def _graded(centre, h, ratio=8):
    """Breakpoints over one period [centre, centre + 2 pi], graded geometrically (first width h,
    growing by `ratio`) toward both ends, where a near-singular peak sits at `centre`. With h >= 1/4
    the period is simply cut in quarters."""
    if h >= mpf(1) / 4:
        return [centre + pi * i / 2 for i in range(5)]
    pts = [mpf(0)]
    w = h
    while w < pi / 2:
        pts.append(w)
        w *= ratio
    pts.append(pi)
    pts = pts + [2 * pi - x for x in reversed(pts[:-1])]
    return [centre + x for x in pts]


def neumann_rings(rp, rs, centre, normal):
    """Mutual inductance (H) of ring P (radius rp, centre origin, axis +z) and ring S (radius rs,
    centre `centre`, unit axis `normal`), currents right-handed about their axes, by Neumann's
    double integral (F. E. Neumann, 1845 [year from memory]; stated in Grover 1946):

        M = mu0/(4 pi) oint oint dl_P . dl_S / |r_P - r_S|

    with P(u) = rp (cos u, sin u, 0) and S(t) = C + rs (cos t x_hat + sin t y_hat), frame as in
    `_frame`. Nested mpmath.quad (Gauss-Legendre on each piece) over the full square: the outer
    integral over t runs over one period starting at t*, the point of S closest to P's wire; the
    inner one over u runs over one period starting at the azimuth u_c(t) of S(t), where
    |r_P - r_S| is smallest. When the wires come within delta of each other the peaks (width
    ~delta/r) are resolved by breakpoints graded geometrically from delta/r (see `_graded`).
    The integrand is not simplified by symmetry: both components of the tangent product are
    integrated, so the route shares nothing with `ring_line_integral` but the geometry.
    Cost at mp.dps = 20: ~2-5 s for well separated rings, 10-30 s when the wires pass within
    ~1 % of a radius.
    """
    rp, rs = _m(rp), _m(rs)
    point, tangent = _ring_s(rs, centre, normal)
    tstar, dmin = _closest_t(rp, point)
    trig = {}   # cos/sin of the (reused) inner nodes w = u - u_c

    def inner(t):
        q = point(t)
        dq = tangent(t)
        rho = sqrt(q[0] ** 2 + q[1] ** 2)
        uc = atan2(q[1], q[0]) if rho != 0 else mpf(0)
        cu0, su0 = cos(uc), sin(uc)
        delta = sqrt((rho - rp) ** 2 + q[2] ** 2)
        h = delta / rp
        if h < mpf(1) / 4:   # quantise to a power of 2 so that the nodes (and `trig`) recur
            h = mpf(2) ** int(floor(log(h, 2)))

        def f(w):
            cs = trig.get(w)
            if cs is None:
                cs = trig[w] = (cos(w), sin(w))
            cu = cu0 * cs[0] - su0 * cs[1]
            su = su0 * cs[0] + cu0 * cs[1]
            dx, dy, dz = rp * cu - q[0], rp * su - q[1], -q[2]
            return (-su * dq[0] + cu * dq[1]) * rp / sqrt(dx * dx + dy * dy + dz * dz)
        return quad(f, _graded(mpf(0), h), method='gauss-legendre')

    v = quad(inner, _graded(tstar, dmin / rs), method='gauss-legendre')
    return MU0() / (4 * pi) * v


def a_phi_over_rho(a, rho, z):
    """A_phi / rho (T m / m = T) of a ring of radius a, unit current, at (rho, z) in its own
    cylindrical frame. A_phi = (mu0/(pi k)) sqrt(a/rho) [ (1 - m/2) K(m) - E(m) ],
    m = k^2 = 4 a rho / ((a+rho)^2 + z^2) (W. R. Smythe, Static and Dynamic Electricity; J. D.
    Jackson, Classical Electrodynamics, sec. 5.5 [edition/page from memory]). The bracket cancels to
    pi m^2/32 for small m, so digits are added; on the axis the limit mu0 a^2/(4 (a^2+z^2)^{3/2})
    (the dipole term) is returned."""
    a, rho, z = map(_m, (a, rho, z))
    D2 = (a + rho) ** 2 + z ** 2
    m = 4 * a * rho / D2
    if m < mpf(10) ** (-2 * mp.dps - 10):
        return MU0() * a ** 2 / (4 * D2 ** mpf(1.5))
    kc2 = ((a - rho) ** 2 + z ** 2) / D2
    with mp.extradps(_guard(m, m, kc2)):
        a, rho, z = +a, +rho, +z
        D2 = (a + rho) ** 2 + z ** 2
        m = 4 * a * rho / D2
        k = sqrt(m)
        v = MU0() / (pi * k) * sqrt(a / rho) * ((1 - m / 2) * ellipk(m) - ellipe(m)) / rho
    return +v


def ring_line_integral(rp, rs, centre, normal):
    """Same M as `neumann_rings` by a second, independent route: the line integral of ring P's
    vector potential along ring S,
        M = oint_S A_P . dl = int_0^{2pi} (A_phi/rho)(rho(t), z(t)) (x y' - y x') dt,
    A_phi in K and E (see `a_phi_over_rho`); phi_hat . dl = (x dy - y dx)/rho. mpmath.quad
    (tanh-sinh) over one period starting at t*, the point of S closest to P's wire (where the
    integrand peaks). For parallel axes this is Grover's single integral (F. W. Grover, "The
    calculation of the mutual inductance of circular filaments in any desired positions",
    Proc. IRE 32, 1944) in a different variable."""
    rp, rs = _m(rp), _m(rs)
    point, tangent = _ring_s(rs, centre, normal)
    tstar, _ = _closest_t(rp, point)

    def f(t):
        q = point(t)
        dq = tangent(t)
        rho = sqrt(q[0] ** 2 + q[1] ** 2)
        return a_phi_over_rho(rp, rho, q[2]) * (q[0] * dq[1] - q[1] * dq[0])

    with mp.extradps(5):
        v = quad(f, [tstar, tstar + pi / 2, tstar + pi, tstar + 3 * pi / 2, tstar + 2 * pi])
    return +v


# ---------------------------------------------------------------------------------------------
# Single-layer solenoids
# ---------------------------------------------------------------------------------------------

def _nagaoka_dl(d, l):
    d, l = _m(d), _m(l)
    s2 = d ** 2 + l ** 2
    m = d ** 2 / s2
    with mp.extradps(_guard(m, m)):
        d, l = +d, +l
        s2 = d ** 2 + l ** 2
        m = d ** 2 / s2
        k = d / sqrt(s2)
        kp = l / sqrt(s2)
        Km, Em = ellipk(m), ellipe(m)
        v = 4 / (3 * pi * kp) * ((kp ** 2 / m) * (Km - Em) + Em - k)
    return +v


def nagaoka(d_over_l):
    """Nagaoka's coefficient K_N of a cylindrical current sheet, diameter d, length l, in closed
    form (Lorenz's formula; F. W. Grover, Inductance Calculations: Working Formulas and Tables,
    Van Nostrand 1946 (Dover 1973), chapter on single-layer coils, Table 36):
        K_N = 4/(3 pi k') [ (k'^2/k^2)(K(m) - E(m)) + E(m) - k ],
        k^2 = m = d^2/(d^2 + l^2),  k' = l/sqrt(d^2 + l^2).
    K_N -> 1 for a long coil; Grover's Table 36 gives 0.688423 at d/l = 1."""
    return _nagaoka_dl(_m(d_over_l), mpf(1))


def lorenz_sheet(a, n_turns, length):
    """Inductance (H) of a cylindrical current sheet of radius a, N turns, length l (Lorenz):
        L = mu0 pi a^2 N^2 / l * K_N(2a/l)."""
    a, n, l = _m(a), _m(n_turns), _m(length)
    return MU0() * pi * a ** 2 * n ** 2 / l * _nagaoka_dl(2 * a, l)


def ring_self(a, r_wire):
    """Low-frequency self-inductance (H) of one circular turn of round wire, loop radius a, wire
    radius r, uniform current, a >> r: L = mu0 a (ln(8a/r) - 7/4) (E. B. Rosa and F. W. Grover,
    "Formulas and tables for the calculation of mutual and self-inductance", Bull. Bureau of
    Standards 8(1), 1912)."""
    a, r = _m(a), _m(r_wire)
    return MU0() * a * (log(8 * a / r) - mpf(7) / 4)


def ring_sum_solenoid(a, n, pitch, wire_d):
    """Single-layer solenoid as N coaxial rings of radius a at spacing p (the axisymmetric model
    of a close-wound helix; Rosa & Grover 1912): the turn-to-turn matrix is Toeplitz, so
        L = N L_turn + 2 sum_{s=1}^{N-1} (N - s) M(a, a, s p),
    L_turn = mu0 a (ln(8a/r) - 7/4), r = wire_d/2, M by Maxwell's formula."""
    a, p, dw = _m(a), _m(pitch), _m(wire_d)
    n = int(n)
    total = n * ring_self(a, dw / 2)
    for s in range(1, n):
        total += 2 * (n - s) * maxwell(a, a, s * p)
    return total


def rosa_b(n):
    """Rosa's mutual-inductance correction B(N) as the exact finite sum
        B = (2/N) sum_{s=1}^{N-1} (N - s) (ln s - F(s)),
        F(s) = G(s+1) + G(s-1) - 2 G(s),  G(u) = u^2 ln(u)/2 - 3u^2/4,  G(0) = 0
    (E. B. Rosa, "The self and mutual inductances of linear conductors", Bull. Bureau of
    Standards 4, 1908; Rosa & Grover, Bull. BoS 8(1), 1912). B(2) = 0.1137056; B(N) tends to
    ln(2 pi) - 3/2 for large N."""
    n = int(n)

    def G(u):
        if u == 0:
            return mpf(0)
        u = mpf(u)
        return u * u * log(u) / 2 - 3 * u * u / 4

    with mp.extradps(10):
        total = mpf(0)
        for s in range(1, n):
            F = G(s + 1) + G(s - 1) - 2 * G(s)
            total += (n - s) * (log(s) - F)
        v = 2 * total / n
    return +v


def rosa_a(pitch, wire_d):
    """Rosa's round-wire correction A = 5/4 - ln(2p/d) (p pitch, d bare wire diameter)."""
    return mpf(5) / 4 - log(2 * _m(pitch) / _m(wire_d))


def rosa_corrected(a, n, pitch, wire_d):
    """Rosa's corrected current-sheet inductance (H) of a single-layer round-wire solenoid:
        L = L_sheet - mu0 a N (A + B),   L_sheet = lorenz_sheet(a, N, N p),
    A = 5/4 - ln(2p/d), B = rosa_b(N) (Rosa 1908; Rosa & Grover 1912). The sheet length is taken
    as N p (one pitch per turn)."""
    a, p, dw = _m(a), _m(pitch), _m(wire_d)
    n = int(n)
    return lorenz_sheet(a, n, n * p) - MU0() * a * n * (rosa_a(p, dw) + rosa_b(n))


# ---------------------------------------------------------------------------------------------
# Flat spiral (axisymmetric ring model)
# ---------------------------------------------------------------------------------------------

def spiral_radii(r_in, r_out, n):
    """Ring model of a flat spiral of n turns between r_in and r_out: ring i at the mean radius
    r_in + (i + 1/2)(r_out - r_in)/n, i = 0..n-1 (common practice, no source)."""
    r_in, r_out = _m(r_in), _m(r_out)
    n = int(n)
    w = (r_out - r_in) / n
    return [r_in + (i + mpf(1) / 2) * w for i in range(n)]


def ring_sum_spiral(r_in, r_out, n, r_wire):
    """Inductance (H) of the ring model of a flat spiral: sum of ring self terms (ring_self) and
    2 x the coplanar mutuals maxwell(r_i, r_j, 0) over pairs i < j."""
    rs = spiral_radii(r_in, r_out, n)
    total = sum(ring_self(r, r_wire) for r in rs)
    for i in range(len(rs)):
        for j in range(i + 1, len(rs)):
            total += 2 * maxwell(rs[i], rs[j], 0)
    return total


def wheeler_spiral(r_in, r_out, n):
    """Wheeler's flat-spiral formula (H. A. Wheeler, "Simple inductance formulas for radio coils",
    Proc. IRE 16(10), 1928; stated there to be within 5 %): L[uH] = a^2 n^2 / (8a + 11c) with a the
    mean radius and c the radial depth in inches (1 in = 0.0254 m exactly). Returned in H."""
    r_in, r_out = _m(r_in), _m(r_out)
    inch = mpf('0.0254')
    a = (r_in + r_out) / 2 / inch
    c = (r_out - r_in) / inch
    n = _m(n)
    return a ** 2 * n ** 2 / (8 * a + 11 * c) * mpf(10) ** -6


# ---------------------------------------------------------------------------------------------
# Straight filaments
# ---------------------------------------------------------------------------------------------

def _seg_setup(p0, p1, q0, q1):
    p0, p1, q0, q1 = map(_vec, (p0, p1, q0, q1))
    dp = [p1[i] - p0[i] for i in range(3)]
    dq = [q1[i] - q0[i] for i in range(3)]
    dot = sum(dp[i] * dq[i] for i in range(3))
    return p0, q0, dp, dq, dot


def _seg_closest_s(p0, q0, dp, dq):
    """Parameter s in [0, 1] of filament p closest to filament q (coarse sampling, then golden
    section); used only to place a quadrature breakpoint."""
    qq = sum(c * c for c in dq)

    def dist2(s):
        r = [p0[i] + s * dp[i] - q0[i] for i in range(3)]
        t = min(max(sum(r[i] * dq[i] for i in range(3)) / qq, mpf(0)), mpf(1))
        return sum((r[i] - t * dq[i]) ** 2 for i in range(3))

    n = 64
    ss = [mpf(i) / n for i in range(n + 1)]
    i = min(range(n + 1), key=lambda j: dist2(ss[j]))
    lo, hi = max(ss[i] - mpf(1) / n, mpf(0)), min(ss[i] + mpf(1) / n, mpf(1))
    g = (sqrt(5) - 1) / 2
    for _ in range(50):
        x1, x2 = hi - g * (hi - lo), lo + g * (hi - lo)
        if dist2(x1) < dist2(x2):
            hi = x2
        else:
            lo = x1
    return (lo + hi) / 2


def neumann_segments(p0, p1, q0, q1):
    """Mutual inductance (H) of two straight filaments p0->p1 and q0->q1 (currents in those
    directions) by Neumann's double integral, evaluated as a plain 2-D mpmath.quad (tanh-sinh)
    over [0,1]^2 with nothing done analytically:
        M = mu0/(4 pi) (p1 - p0).(q1 - q0) int_0^1 int_0^1 ds dt / |p(s) - q(t)|.
    Finite for filaments that touch at an end; infinite for overlapping collinear ones.
    Cost: ~1-5 s at mp.dps = 30, much more when the filaments run close and parallel (the
    integrand then peaks along a line of the square); see segments_semi_analytic."""
    p0, q0, dp, dq, dot = _seg_setup(p0, p1, q0, q1)
    if dot == 0:
        return mpf(0)

    def f(s, t):
        r = [p0[i] + s * dp[i] - q0[i] - t * dq[i] for i in range(3)]
        return 1 / sqrt(r[0] ** 2 + r[1] ** 2 + r[2] ** 2)

    return MU0() / (4 * pi) * dot * quad(f, [0, 1], [0, 1])


def segments_semi_analytic(p0, p1, q0, q1):
    """Same M as `neumann_segments` with the inner integral in closed form: for a point r
    (relative to q0), with L = |q1 - q0|, e = (q1 - q0)/L, u = r.e, rho = |r x e|,
        int_0^1 dt / |r - t (q1 - q0)| = [asinh((L - u)/rho) + asinh(u/rho)] / L
    (or ln((L - u)/(-u))/L, ln(u/(u - L))/L on the line beyond either end), and the outer
    integral by mpmath.quad (tanh-sinh) split at the point of p closest to q. Fast and good to
    ~mp.dps digits even for close parallel filaments; used by reference.py."""
    p0, q0, dp, dq, dot = _seg_setup(p0, p1, q0, q1)
    if dot == 0:
        return mpf(0)
    L = sqrt(sum(c * c for c in dq))
    e = [c / L for c in dq]

    def inner(s):
        r = [p0[i] + s * dp[i] - q0[i] for i in range(3)]
        u = sum(r[i] * e[i] for i in range(3))
        cx = [r[1] * e[2] - r[2] * e[1], r[2] * e[0] - r[0] * e[2], r[0] * e[1] - r[1] * e[0]]
        rho = sqrt(sum(c * c for c in cx))
        if rho == 0:
            if u < 0:
                return log((L - u) / (-u)) / L
            if u > L:
                return log(u / (u - L)) / L
            if u == 0 or u == L:
                # a quadrature node rounded onto the shared end point of touching collinear
                # filaments: the log singularity there is integrable and the node's weight is
                # negligible, so the point contributes nothing
                return mpf(0)
            raise ValueError("filaments overlap: the integral diverges")
        return (asinh((L - u) / rho) + asinh(u / rho)) / L

    sc = _seg_closest_s(p0, q0, dp, dq)
    pts = [mpf(0), sc, mpf(1)] if 0 < sc < 1 else [mpf(0), mpf(1)]
    with mp.extradps(5):
        v = MU0() / (4 * pi) * dot * quad(inner, pts)
    return +v


def parallel_filaments(l, d):
    """Mutual inductance (H) of two equal parallel filaments of length l, side by side at distance
    d: M = (mu0/(2 pi)) [ l asinh(l/d) - sqrt(l^2 + d^2) + d ] (classical closed form, Rosa 1908 /
    Grover 1946 [formula from memory]; used only to cross-check neumann_segments)."""
    l, d = _m(l), _m(d)
    return MU0() / (2 * pi) * (l * asinh(l / d) - sqrt(l ** 2 + d ** 2) + d)


# ---------------------------------------------------------------------------------------------
# Wire gauge
# ---------------------------------------------------------------------------------------------

def awg(n):
    """Bare diameter (m) of AWG gauge n (ASTM B258): d = 0.127 mm * 92^((36 - n)/39).
    Gauges 0, 00, 000, 0000 are n = 0, -1, -2, -3."""
    return mpf('0.127e-3') * mpf(92) ** ((36 - _m(n)) / 39)
