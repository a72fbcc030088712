//! The finite-element electrostatic solver through the library API, against closed forms and
//! series (values from validation/fem_refs.py, recomputed with mpmath by .ci/test).

use coilfield_solver::fem::{Area, Conductor, Domain, FemProblem, Outer, Piece, Profile2d, Region};

const EPS0: f64 = 8.854_187_812_8e-12;

fn sphere(name: &str, zc: f64, a: f64) -> Conductor {
    let area = Area::Disk {
        centre: [0.0, zc],
        radius: a,
    };
    Conductor {
        name: name.to_string(),
        pieces: area.outline(),
        area: Some(area),
        profile: Profile2d::Uniform,
    }
}

fn domain(conductors: Vec<Conductor>, regions: Vec<Region>, outer: Outer, density: f64) -> Domain {
    Domain {
        conductors,
        regions,
        outer,
        density,
        max_elements: 1_000_000,
        axis: None,
        drive: None,
    }
}

fn c11(d: Domain) -> (f64, f64, usize) {
    let p = FemProblem::new(d).expect("mesh");
    let n = p.mesh().elements();
    let s = p.solve().expect("solve");
    (
        s.capacitance_matrix_f()[0][0],
        s.error_estimate_f()[0][0],
        n,
    )
}

#[test]
fn isolated_sphere_in_open_space_through_the_kelvin_disc() {
    // C = 4 pi eps0 a (any electromagnetics text).
    let a = 0.1;
    let exact = 4.0 * std::f64::consts::PI * EPS0 * a;
    for radius in [0.15, 0.3, 1.0] {
        let d = domain(
            vec![sphere("s", 0.0, a)],
            vec![],
            Outer::Open {
                centre_z: 0.0,
                radius,
                ground: false,
            },
            8.0,
        );
        let (c, est, n) = c11(d);
        eprintln!(
            "R = {radius}: C = {c:e}, rel err {:e}, estimate {:e}, {n} elements",
            c / exact - 1.0,
            est / exact
        );
        // The mapping is exact at any radius: what remains is the discretisation error, which
        // the recovery estimate bounds here (it runs at about twice the true error).
        assert!(
            (c - exact).abs() < est,
            "R = {radius}: {c} vs {exact}, estimate {est}"
        );
        assert!(
            (c / exact - 1.0).abs() < 3e-3,
            "R = {radius}: {c} vs {exact}"
        );
    }
}

#[test]
fn concentric_spheres_with_a_dielectric_shell() {
    let (a, c, b, eps) = (0.1, 0.15, 0.2, 3.0);
    let exact =
        4.0 * std::f64::consts::PI * EPS0 / ((1.0 / a - 1.0 / c) / eps + (1.0 / c - 1.0 / b));
    let d = domain(
        vec![sphere("inner", 0.0, a)],
        vec![Region {
            name: "shell".into(),
            area: Area::Shell {
                centre: [0.0, 0.0],
                r0: a,
                r1: c,
            },
            relative_permittivity: eps,
        }],
        Outer::Sphere {
            centre_z: 0.0,
            radius: b,
        },
        8.0,
    );
    let (cap, est, n) = c11(d);
    eprintln!(
        "C = {cap:e} vs {exact:e}: {:e}, estimate {:e}, {n} elements",
        cap / exact - 1.0,
        est / exact
    );
    assert!((cap - exact).abs() < est, "estimate {est} below the error");
    assert!((cap / exact - 1.0).abs() < 2e-3);
}

#[test]
fn coaxial_cylinders_with_a_dielectric_layer() {
    let (a, c, b, eps, h) = (0.01, 0.02, 0.05, 2.5, 0.05);
    let inner = Area::Rect {
        r0: 0.0,
        r1: a,
        z0: 0.0,
        z1: h,
    };
    let d = domain(
        vec![Conductor {
            name: "inner".into(),
            pieces: vec![Piece::Line {
                p0: [a, 0.0],
                p1: [a, h],
                edge0: false,
                edge1: false,
            }],
            area: Some(inner),
            profile: Profile2d::Uniform,
        }],
        vec![Region {
            name: "layer".into(),
            area: Area::Rect {
                r0: a,
                r1: c,
                z0: 0.0,
                z1: h,
            },
            relative_permittivity: eps,
        }],
        Outer::Cylinder {
            r_max: b,
            z_min: 0.0,
            z_max: h,
            insulated_ends: true,
        },
        8.0,
    );
    let exact = 2.0 * std::f64::consts::PI * EPS0 * h / ((c / a).ln() / eps + (b / c).ln());
    let (cap, est, n) = c11(d);
    eprintln!(
        "C = {cap:e} vs {exact:e}: {:e}, estimate {:e}, {n} elements",
        cap / exact - 1.0,
        est / exact
    );
    assert!((cap - exact).abs() < est, "estimate {est} below the error");
    assert!((cap / exact - 1.0).abs() < 2e-3);
}

#[test]
fn sphere_over_a_grounded_plane() {
    // Image series: C = 4 pi eps0 a sinh(alpha) sum_{n>=1} 1 / sinh(n alpha), cosh alpha = h / a.
    let (a, h): (f64, f64) = (0.1, 0.25);
    let alpha = (h / a).acosh();
    let series: f64 = (1..200).map(|n| 1.0 / (n as f64 * alpha).sinh()).sum();
    let exact = 4.0 * std::f64::consts::PI * EPS0 * a * alpha.sinh() * series;
    let d = domain(
        vec![sphere("s", h, a)],
        vec![],
        Outer::Open {
            centre_z: 0.0,
            radius: 0.6,
            ground: true,
        },
        8.0,
    );
    let (cap, est, n) = c11(d);
    eprintln!(
        "C = {cap:e} vs {exact:e}: {:e}, estimate {:e}, {n} elements",
        cap / exact - 1.0,
        est / exact
    );
    assert!((cap - exact).abs() < est, "estimate {est} below the error");
    assert!((cap / exact - 1.0).abs() < 2e-3);
}
