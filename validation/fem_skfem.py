#!/usr/bin/env python3
"""Independent finite-element references with scikit-fem, on meshes of its own.

Two axisymmetric problems, each solved here with scikit-fem's P1 elements on the r-weighted
weak form (integral of eps grad u . grad v r dr dz), on structured meshes built here (nothing
from coilfield's mesher or solver), refined three times and Richardson-extrapolated (second
order in the energy):

* ``concentric_shell``: a sphere (radius a = 0.1 m) in a grounded sphere (b = 0.2 m), a
  dielectric shell a < r < c = 0.15 m of relative permittivity 3: a polar mesh of the
  half-annulus.
* ``eccentric_sphere``: a sphere (radius 0.1 m, centre z = 0.05 m) in a grounded sphere (radius
  0.3 m, centre z = 0): no dielectric, no closed form here; a mesh of rays from the inner centre,
  each cut evenly between the two spheres.

C = 2 pi eps0 u^T K u with u = 1 V on the inner sphere, 0 V on the outer (eps0 = 8.8541878128e-12
F/m, CODATA 2018).

CSV columns: case,parameters,reference,tolerance,tolerance_kind,source, the layout of every table
that `coilfield verify` reads; the case names and `parameters` keys are those of
`coilfield_solver::fem::cases::reference_domain` (validation/fem_refs.py describes them), which
builds each row's problem for both tests/fem.rs and `verify`. `density` is coilfield's mesh
density and does not enter here. The source names the extrapolation's own error estimate
(|C4 - C2| / 3, at most 3e-5 of the value). The tolerance, 1e-3 relative (the value tests/fem.rs
has always used), is the reach of coilfield's linear elements at density 8 on these geometries:
measured 1.5e-4 and 3.4e-4 (`coilfield verify` prints them), with room for the reference's
extrapolation error.

Writes validation/fem_skfem.csv; --check recomputes every row from its own parameters and checks
that the table holds exactly the rows written here.
"""
import os
import sys

import numpy as np
import skfem
from skfem.helpers import dot, grad

from verify_table import write_or_check

EPS0 = 8.8541878128e-12
HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "fem_skfem.csv")
HEADER = ["case", "parameters", "reference", "tolerance", "tolerance_kind", "source"]
SOURCE = "validation/fem_skfem.py: scikit-fem P1 on its own structured meshes, Richardson-extrapolated"

# (case, parameters, tolerance)
ROWS = [
    ("concentric_shell", "a_m=0.1;c_m=0.15;b_m=0.2;eps_r=3;density=8", "1e-3"),
    ("eccentric_sphere", "a_m=0.1;centre_z_m=0.05;b_m=0.3;density=8", "1e-3"),
]


def parse(parameters):
    """`key=value;...` -> {key: float}."""
    return {k.strip(): float(v) for k, v in (pair.split("=") for pair in parameters.split(";"))}


def structured(inner, outer, n_s, n_t):
    """Nodes between the curves inner(t) and outer(t), t in [-pi/2, pi/2]; quads cut in two."""
    ts = np.linspace(-np.pi / 2, np.pi / 2, n_t + 1)
    ss = np.linspace(0.0, 1.0, n_s + 1)
    pts = []
    for t in ts:
        p0, p1 = inner(t), outer(t)
        for s in ss:
            pts.append((1 - s) * p0 + s * p1)
    p = np.array(pts).T
    p[0, np.abs(p[0]) < 1e-14] = 0.0
    idx = lambda i, j: i * (n_s + 1) + j
    tri = []
    for i in range(n_t):
        for j in range(n_s):
            a, b, c, d = idx(i, j), idx(i, j + 1), idx(i + 1, j + 1), idx(i + 1, j)
            tri += [(a, b, c), (a, c, d)]
    return skfem.MeshTri(p, np.array(tri).T), n_s


def capacitance(mesh, eps_of, n_s):
    basis = skfem.Basis(mesh, skfem.ElementTriP1(), intorder=4)

    @skfem.BilinearForm
    def laplace(u, v, w):
        return eps_of(w.x) * w.x[0] * dot(grad(u), grad(v))

    k = laplace.assemble(basis)
    n = mesh.p.shape[1]
    j = np.arange(n) % (n_s + 1)
    u = np.zeros(n)
    inner = j == 0
    outer = j == n_s
    u[inner] = 1.0
    fixed = inner | outer
    free = ~fixed
    rhs = -k[free][:, fixed] @ u[fixed]
    u[free] = skfem.solve(k[free][:, free], rhs)
    return 2 * np.pi * EPS0 * u @ (k @ u)


def extrapolated(build, eps_of):
    values = []
    for level in (1, 2, 4):
        mesh, n_s = build(level)
        values.append(capacitance(mesh, eps_of, n_s))
    c1, c2, c4 = values
    return c4 + (c4 - c2) / 3.0, abs(c4 - c2) / 3.0


def shell(p):
    a, c, b, eps = p["a_m"], p["c_m"], p["b_m"], p["eps_r"]
    circle = lambda r: (lambda t: np.array([r * np.cos(t), r * np.sin(t)]))

    def build(level):
        return structured(circle(a), circle(b), 40 * level, 160 * level)

    eps_of = lambda x: np.where(np.hypot(x[0], x[1]) < c, eps, 1.0)
    # Keep the interface on element edges: 40 levels across b - a must put r = c on one.
    levels = 40 * (c - a) / (b - a)
    if abs(levels - round(levels)) > 1e-9:
        sys.exit(f"concentric_shell: c_m = {c} does not fall on a mesh line (40 levels from a to b)")
    return extrapolated(build, eps_of)


def eccentric(p):
    a, za, b = p["a_m"], p["centre_z_m"], p["b_m"]

    def inner(t):
        return np.array([a * np.cos(t), za + a * np.sin(t)])

    def outer(t):
        # The ray from (0, za) along (cos t, sin t) meets |x| = b at s with
        # s^2 + 2 s za sin t + za^2 - b^2 = 0.
        d = np.array([np.cos(t), np.sin(t)])
        s = -za * d[1] + np.sqrt((za * d[1]) ** 2 - (za * za - b * b))
        return np.array([0.0, za]) + s * d

    def build(level):
        return structured(inner, outer, 40 * level, 160 * level)

    return extrapolated(build, lambda x: np.ones_like(x[0]))


def reference(case, parameters):
    """The capacitance (F) of a row and its extrapolation error estimate (F)."""
    p = parse(parameters)
    if case == "concentric_shell":
        return shell(p)
    if case == "eccentric_sphere":
        return eccentric(p)
    raise ValueError(f"unknown case {case}")


def table():
    out = []
    for case, parameters, tolerance in ROWS:
        value, err = reference(case, parameters)
        source = f"{SOURCE} (extrapolation error estimate {err:.1e} F)"
        out.append([case, parameters, repr(float(value)), tolerance, "rel", source])
    return out


def main():
    def agrees(r):
        value, _ = reference(r[0], r[1])
        return f"stored {r[2]}, recomputed {value!r}" if abs(float(r[2]) / value - 1) > 1e-9 else None

    write_or_check(OUT, HEADER, table(), agrees, "fem_skfem.py")


if __name__ == "__main__":
    main()
