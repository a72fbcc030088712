//! The finite-element electrostatic solver through the library API, against closed forms and
//! series (validation/fem.csv, recomputed with mpmath by validation/fem_refs.py in .ci/test)
//! and scikit-fem on its own meshes (validation/fem_skfem.csv, validation/fem_skfem.py).
//!
//! Each table row's problem comes from `coilfield_solver::fem::cases::reference_domain`, the
//! builder `coilfield verify` uses for the same rows, and is checked at the row's own
//! tolerance (the reach of linear elements at the row's mesh density; the scripts give the
//! measured errors behind each).

use coilfield_solver::fem::cases::reference_domain;
use coilfield_solver::fem::{Area, Domain, FemProblem, Region};

/// One row of a finite-element validation table.
#[derive(Debug)]
struct TableRow {
    case: String,
    parameters: String,
    /// Capacitance (F).
    reference: f64,
    /// Relative tolerance.
    tolerance: f64,
}

/// The rows of case `case` of `validation/{table}.csv`.
fn rows(table: &str, case: &str) -> Vec<TableRow> {
    let path = format!("{}/validation/{table}.csv", env!("CARGO_MANIFEST_DIR"));
    let mut reader = csv::Reader::from_path(&path).expect("a validation table");
    let headers = reader.headers().unwrap().clone();
    let column = |name: &str| headers.iter().position(|h| h == name).unwrap();
    let (c, p, r, t, k) = (
        column("case"),
        column("parameters"),
        column("reference"),
        column("tolerance"),
        column("tolerance_kind"),
    );
    let rows: Vec<TableRow> = reader
        .records()
        .map(|rec| rec.unwrap())
        .filter(|rec| &rec[c] == case)
        .map(|rec| {
            assert_eq!(&rec[k], "rel", "{table}.csv: {case}");
            TableRow {
                case: rec[c].to_string(),
                parameters: rec[p].to_string(),
                reference: rec[r].parse().unwrap(),
                tolerance: rec[t].parse().unwrap(),
            }
        })
        .collect();
    assert!(!rows.is_empty(), "no case {case} in {path}");
    rows
}

/// The row's problem, as `verify` builds it.
fn domain_of(row: &TableRow) -> Domain {
    reference_domain(&row.case, &row.parameters).expect("a valid row")
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

/// Every row of `case` of validation/fem.csv: within the row's tolerance of the closed form,
/// and the recovery estimate above the true error (it runs at about twice the error here).
fn check_against_closed_form(case: &str) {
    for row in rows("fem", case) {
        let (c, est, n) = c11(domain_of(&row));
        let exact = row.reference;
        eprintln!(
            "{case} ({}): C = {c:e} vs {exact:e}: rel err {:e} (tolerance {:e}), estimate {:e}, \
             {n} elements",
            row.parameters,
            c / exact - 1.0,
            row.tolerance,
            est / exact
        );
        assert!(
            (c - exact).abs() < est,
            "{case} ({}): estimate {est} below the error of {c} vs {exact}",
            row.parameters
        );
        assert!(
            (c / exact - 1.0).abs() < row.tolerance,
            "{case} ({}): {c} vs {exact}",
            row.parameters
        );
    }
}

/// C = 4 pi eps0 a (Smythe 1950, from memory; validation/fem_refs.py) at three radii of the
/// Kelvin disc: the mapping is exact at any radius, what remains is the discretisation error.
#[test]
fn isolated_sphere_in_open_space_through_the_kelvin_disc() {
    assert!(rows("fem", "isolated_sphere").len() >= 3);
    check_against_closed_form("isolated_sphere");
}

/// 1/C = [(1/a - 1/c)/eps_r + (1/c - 1/b)] / (4 pi eps0) (validation/fem_refs.py).
#[test]
fn concentric_spheres_with_a_dielectric_shell() {
    check_against_closed_form("concentric_shell");
}

/// C = 2 pi eps0 h / (ln(c/a)/eps_r + ln(b/c)) with symmetry planes at the ends
/// (validation/fem_refs.py).
#[test]
fn coaxial_cylinders_with_a_dielectric_layer() {
    check_against_closed_form("coaxial_layer");
}

/// Image series (validation/fem_refs.py).
#[test]
fn sphere_over_a_grounded_plane() {
    check_against_closed_form("sphere_over_plane");
}

/// C = 4 pi eps0 a b / (b - a) (validation/fem_refs.py).
#[test]
fn sphere_in_a_grounded_spherical_enclosure() {
    check_against_closed_form("sphere_in_enclosure");
}

/// `TENTH_PERCENT_DENSITY` is the `[mesh] density` at which the demo room resonator's
/// capacitances are within 0.1 % of their extrapolated limit (README, `demo_convergence_table`);
/// at that density the graded mesh must reach 0.1 % on closed forms of the demo's two hard parts
/// (the rows of validation/fem.csv at that density, mpmath in validation/fem_refs.py): a sphere
/// in a grounded room twenty radii out (the far field the grading coarsens; C = 4 pi eps0 a b /
/// (b - a), any electromagnetics text) and an isolated thin disc through the Kelvin disc (a
/// sheet with the singular rim field of the winding's ends; C = 8 eps0 a, Smythe, Static and
/// Dynamic Electricity, 1950, chapter from memory).
#[test]
fn tenth_percent_density_reaches_a_tenth_of_a_percent_on_closed_forms() {
    let density = coilfield_geometry::TENTH_PERCENT_DENSITY;
    let at_density: Vec<TableRow> = ["sphere_in_enclosure", "isolated_disc"]
        .iter()
        .flat_map(|case| rows("fem", case))
        .filter(|row| row.parameters.contains(&format!("density={density}")))
        .collect();
    assert_eq!(at_density.len(), 2, "{at_density:?}");
    for row in at_density {
        assert!(row.tolerance <= 1e-3, "{row:?}");
        let (c, est, n) = c11(domain_of(&row));
        let exact = row.reference;
        eprintln!(
            "{} ({}): C = {c:e} vs {exact:e}: {:+e}, estimate {:e}, {n} elements",
            row.case,
            row.parameters,
            c / exact - 1.0,
            est / exact
        );
        assert!((c / exact - 1.0).abs() < 1e-3, "{row:?}: {c} F");
    }
}

/// Convergence under refinement (isolated sphere in a grounded sphere, the row of
/// validation/fem.csv at other densities): the error falls about fourfold per halving of the
/// edge length (second order in the energy, P1 elements), printed as a table with
/// `--nocapture`.
#[test]
fn convergence_table() {
    let row = &rows("fem", "sphere_in_enclosure")[0];
    let exact = row.reference;
    let mut last: Option<f64> = None;
    eprintln!("density  elements  C (F)  relative error  rate per refinement");
    for density in [2.0, 4.0, 8.0, 16.0] {
        let d = Domain {
            density,
            ..domain_of(row)
        };
        let (c, _, n) = c11(d);
        let err = (c / exact - 1.0).abs();
        let rate = last.map(|l| l / err);
        eprintln!("{density:>7} {n:>9} {c:.6e} {err:.3e} {rate:?}");
        if let Some(r) = rate {
            assert!(r > 2.5, "refinement gained only {r}");
        }
        last = Some(err);
    }
}

const DESIGN: &str = r#"
# Invented for this test: a secondary with a sphere on top over a grounded plane.
[[winding]]
name = "secondary"
shape = "helix"
role = "secondary"
origin = [0.0, 0.0, 0.10]
axis = [0.0, 0.0, 1.0]
radius = 0.05
length = 0.40
turns = 800
wire_diameter = 0.0004

[[electrode]]
name = "top"
shape = "sphere"
origin = [0.0, 0.0, 0.62]
radius = "8 cm"
connect = "secondary:top"

[ground]
z = 0.0

[drive]
frequency = 300e3
potentials = { secondary = [0.0, 100e3] }
"#;

/// The finite-element and boundary-element solvers on the same design without dielectrics:
/// the sphere's capacitance and the secondary's self-capacitance within 0.5 %, E at points
/// away from edges within 1 %.
#[test]
fn agrees_with_the_boundary_element_solver() {
    let mut design = coilfield_geometry::parse_design(DESIGN, "design.toml").unwrap();
    design.media.mesh.density = coilfield_geometry::TENTH_PERCENT_DENSITY;
    let fem = FemProblem::from_design(&design, "design.toml")
        .unwrap()
        .solve()
        .unwrap();
    let bem = coilfield_solver::field_model::electrostatic_solution(
        &design,
        "design.toml",
        coilfield_solver::Par::Seq,
    )
    .unwrap();
    let c_f = fem.capacitance_matrix_f()[0][0];
    let c_b = bem.capacitance_matrix_f()[0][0];
    eprintln!("sphere: fem {c_f:e} bem {c_b:e} ({:e})", c_f / c_b - 1.0);
    assert!((c_f / c_b - 1.0).abs() < 5e-3);
    let (s_f, _) = fem.self_capacitance_f().unwrap();
    let s_b = bem.self_capacitance_f().unwrap().total_f;
    eprintln!("self: fem {s_f:e} bem {s_b:e} ({:e})", s_f / s_b - 1.0);
    assert!((s_f / s_b - 1.0).abs() < 5e-3);
    let points = [
        nalgebra::Point3::new(0.3, 0.0, 0.3),
        nalgebra::Point3::new(0.0, 0.2, 0.9),
        nalgebra::Point3::new(0.4, 0.0, 0.6),
    ];
    let e_f = fem.e_field(&points);
    let e_b = bem.e_field(&points, coilfield_solver::Par::Seq);
    for (k, (f, b)) in e_f.iter().zip(&e_b).enumerate() {
        let (_, f) = f.expect("a field point");
        let coilfield_solver::electrostatic::FieldSample::Field(b) = b else {
            panic!("no field at point {k}");
        };
        eprintln!("E at {k}: fem {f:?} bem {b:?}");
        assert!((f - b).norm() < 1e-2 * b.norm(), "point {k}");
    }
}

/// A helix on a PVC form (the demo's winding and form, no room): the change in the
/// secondary's self-capacitance. The model's limits: the winding is a sheet at its outer
/// surface, so the enamel and the field between turns, where a form matters most, are not
/// seen; the result is the form's effect on the outer field only.
#[test]
fn helix_on_a_pvc_form() {
    let text = DESIGN.to_string()
        + r#"
[[dielectric]]
name = "form"
shape = "tube"
origin = [0.0, 0.0, 0.08]
inner_radius = "46.8 mm"
outer_radius = "49.8 mm"
length = "44 cm"
material = "PVC"
"#;
    let with = coilfield_geometry::parse_design(&text, "form.toml").unwrap();
    let without = coilfield_geometry::parse_design(DESIGN, "design.toml").unwrap();
    let c = |d: &coilfield_geometry::Design| {
        let mut d = d.clone();
        d.media.mesh.density = 2.0;
        FemProblem::from_design(&d, "x")
            .unwrap()
            .solve()
            .unwrap()
            .self_capacitance_f()
            .unwrap()
    };
    let (c1, e1) = c(&with);
    let (c0, e0) = c(&without);
    let change = c1 / c0 - 1.0;
    eprintln!(
        "self-capacitance: bare {c0:e} (+-{e0:e}), on the form {c1:e} (+-{e1:e}): {change:+.4}"
    );
    // A dielectric can only raise the energy at fixed potentials; a thin form (3 mm of
    // eps 3 inside a 50 mm sheet) raises it by little.
    assert!(change > 0.0 && change < 0.2, "{change}");
}

fn coilfield(args: &[&str]) -> std::process::Output {
    std::process::Command::new(env!("CARGO_BIN_EXE_coilfield"))
        .args(args)
        .output()
        .expect("run coilfield")
}

fn read_vtk(path: &std::path::Path) -> serde_json::Value {
    let out = std::process::Command::new("python3")
        .arg(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/validation/read_vtk.py"
        ))
        .arg(path)
        .output()
        .expect("run python3 validation/read_vtk.py");
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("JSON from read_vtk.py")
}

/// The demo room resonator: auto picks the finite-element solver (a form and a room), the
/// JSON names it, warns that the media act on E only, and the mesh written as VTK reads back
/// with the VTK library with the potential within the drive's range. A design without media
/// stays with the boundary-element solver.
#[test]
fn capacitance_command_names_its_solver_and_writes_the_mesh() {
    let dir = tempfile::tempdir().unwrap();
    let vtu = dir.path().join("mesh.vtu");
    let demo = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes-demo/room-resonator.toml"
    );
    let out = coilfield(&[
        "capacitance",
        demo,
        "--format",
        "json",
        "--mesh-vtk",
        vtu.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(json["solver"], "fem");
    assert!(json["warnings"][0].as_str().unwrap().contains("E only"));
    let secondary = json["conductors"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["kind"] == "secondary")
        .expect("the secondary's self-capacitance");
    assert!(secondary["capacitance_f"].as_f64().unwrap() > 0.0);
    for path in [
        vtu.clone(),
        std::path::PathBuf::from(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/meshes-demo/room-resonator-mesh.vtu"
        )),
    ] {
        let v = read_vtk(&path);
        assert_eq!(v["class"], "vtkUnstructuredGrid");
        assert!(v["n_cells"].as_u64().unwrap() > 1000);
        let phi = v["point_data"]["potential_V"]["values"].as_array().unwrap();
        assert_eq!(phi.len() as u64, v["n_points"].as_u64().unwrap());
        assert!(phi.iter().all(|p| {
            let p = p.as_f64().unwrap();
            (-1.0..=150e3 + 1.0).contains(&p)
        }));
    }
    let bare = dir.path().join("bare.toml");
    std::fs::write(&bare, DESIGN).unwrap();
    let out = coilfield(&["capacitance", bare.to_str().unwrap(), "--format", "json"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(json["solver"], "bem");
}

/// Against scikit-fem (validation/fem_skfem.py, its own structured meshes): every row of
/// validation/fem_skfem.csv within its tolerance (0.1 %), one geometry with a dielectric shell,
/// one eccentric without.
#[test]
fn agrees_with_scikit_fem() {
    for case in ["concentric_shell", "eccentric_sphere"] {
        for row in rows("fem_skfem", case) {
            let (c, _, _) = c11(domain_of(&row));
            let reference = row.reference;
            eprintln!(
                "{case}: {c:e} vs scikit-fem {reference:e} ({:e}, tolerance {:e})",
                c / reference - 1.0,
                row.tolerance
            );
            assert!(
                (c / reference - 1.0).abs() < row.tolerance,
                "{case}: {c} vs {reference}"
            );
        }
    }
}

/// `field` serves E from the finite-element model when the design has a form and a room (the
/// output says which solver served), and from the boundary-element model when asked.
#[test]
fn field_command_names_its_electric_solver() {
    let demo = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes-demo/room-resonator.toml"
    );
    let run = |solver: &str| {
        let out = coilfield(&[
            "field",
            demo,
            "--at",
            "0.5,0,0.5",
            "--format",
            "json",
            "--electric-solver",
            solver,
        ]);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        serde_json::from_slice::<serde_json::Value>(&out.stdout).unwrap()
    };
    let fem = run("auto");
    let bem = run("bem");
    assert_eq!(fem["electric_solver"], "fem");
    assert_eq!(bem["electric_solver"], "bem");
    let e = |v: &serde_json::Value| v["points"][0]["e_mag_v_per_m"].as_f64().unwrap();
    // The grounded room pulls field lines that free space would not: the two differ, both
    // finite and positive.
    assert!(e(&fem) > 0.0 && e(&bem) > 0.0 && e(&fem) != e(&bem));
}

/// The demo with its form made of vacuum (relative permittivity 1): the same mesh as the demo,
/// so the difference between the two is the form's alone.
fn room_resonator_variant(
    dir: &std::path::Path,
    name: &str,
    edit: &dyn Fn(&str) -> String,
) -> String {
    let demo = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes-demo/room-resonator.toml"
    );
    let text = std::fs::read_to_string(demo).unwrap();
    let path = dir.join(name);
    std::fs::write(&path, edit(&text)).unwrap();
    path.display().to_string()
}

fn json_of(args: &[&str]) -> serde_json::Value {
    let out = coilfield(args);
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap()
}

/// The resonance model takes its capacitances from the finite-element model when the design
/// has a form and a room, and says so; the PVC form raises the self-capacitance and lowers f1
/// against the same form of permittivity 1 (the same mesh: the discrete capacitance matrix
/// grows with the permittivity, so f1 of the ladder must fall).
#[test]
fn resonance_takes_the_form_through_finite_elements() {
    let dir = tempfile::tempdir().unwrap();
    let demo = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes-demo/room-resonator.toml"
    );
    let vacuum = room_resonator_variant(dir.path(), "vacuum-form.toml", &|t| {
        t.replace("material = \"PVC\"", "relative_permittivity = 1.0")
    });
    let run = |path: &str| {
        json_of(&["resonance", path, "--format", "json", "--sections", "8"])["secondary"].clone()
    };
    let (pvc, air) = (run(demo), run(&vacuum));
    assert_eq!(pvc["electric_solver"], "fem");
    assert_eq!(air["electric_solver"], "fem");
    let f = |v: &serde_json::Value, k: &str| v[k].as_f64().unwrap();
    assert!(
        f(&pvc, "self_capacitance_f") > 1.005 * f(&air, "self_capacitance_f"),
        "{pvc} {air}"
    );
    assert!(
        f(&pvc, "frequency_hz") < f(&air, "frequency_hz"),
        "{pvc} {air}"
    );
}

/// Under a drive model the finite-element path gets the drive's potentials: `field` and `map`
/// give a nonzero E from the finite-element model (named in the output), and `clearance`
/// names it too.
#[test]
fn map_field_and_clearance_take_the_finite_element_solver() {
    let dir = tempfile::tempdir().unwrap();
    let spark = room_resonator_variant(dir.path(), "spark.toml", &|t| {
        let i = t.find("[drive]").unwrap();
        format!(
            "{}[drive]\nkind = \"spark_gap\"\ntank_capacitance = \"30 nF\"\n\
             charge_voltage = \"12 kV\"\ngap_resistance = \"2 ohm\"\nbreak_rate = \"120 Hz\"\n\
             lead_inductance = \"1 uH\"\n",
            &t[..i]
        )
    });
    let vtr = dir.path().join("m.vtr");
    let map = json_of(&[
        "map",
        &spark,
        "--plane",
        "xz",
        "--extent",
        "0,1.5,0,2",
        "--resolution",
        "6,6",
        "--vtk",
        vtr.to_str().unwrap(),
    ]);
    assert_eq!(map["electric_solver"], "fem");
    assert!(map["max_e_mag_v_per_m"].as_f64().unwrap() > 1e3, "{map}");
    assert!(
        map["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .any(|w| w.as_str().unwrap().contains("act on E only")),
        "{map}"
    );
    let field = json_of(&["field", &spark, "--at", "0.5,0,0.9", "--format", "json"]);
    assert_eq!(field["electric_solver"], "fem");
    assert!(field["points"][0]["e_mag_v_per_m"].as_f64().unwrap() > 1e3);
    let demo = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes-demo/room-resonator.toml"
    );
    let clearance = json_of(&["clearance", demo, "--format", "json"]);
    assert_eq!(clearance["electric_solver"], "fem");
    let bem = json_of(&[
        "clearance",
        demo,
        "--format",
        "json",
        "--electric-solver",
        "bem",
    ]);
    assert_eq!(bem["electric_solver"], "bem");
}

/// `capacitance` with finite elements gives each conductor's peak surface field and its place,
/// as the boundary-element path does; on the demo without its form and room (where both
/// solvers apply) the top electrode's peak agrees with the boundary elements' within 8 %
/// (linear elements at the default density recover the surface field to O(h): 6 % low here)
/// and lies on the torus's outer rim.
#[test]
fn finite_element_peak_surface_fields() {
    let dir = tempfile::tempdir().unwrap();
    let bare = room_resonator_variant(dir.path(), "bare.toml", &|t| {
        let i = t.find("[[dielectric]]").unwrap();
        let j = t.find("[drive]").unwrap();
        format!("{}{}", &t[..i], &t[j..])
    });
    let peak = |solver: &str| {
        let v = json_of(&[
            "capacitance",
            &bare,
            "--format",
            "json",
            "--electric-solver",
            solver,
        ]);
        v["peak_surface_fields"]
            .as_array()
            .unwrap()
            .iter()
            .find(|p| p["name"] == "topload")
            .cloned()
            .unwrap()
    };
    let (fem, bem) = (peak("fem"), peak("bem"));
    let e = |p: &serde_json::Value| p["field_v_per_m"].as_f64().unwrap();
    assert!((e(&fem) / e(&bem) - 1.0).abs() < 0.08, "{fem} {bem}");
    let at = fem["at_m"].as_array().unwrap();
    let r = at[0].as_f64().unwrap().hypot(at[1].as_f64().unwrap());
    assert!((r - 0.19).abs() < 0.02, "{fem}");
}

/// A dielectric outline crossing a conductor's outline (a slab cutting through a sphere, the
/// crossing at an angle that no sample of either outline shares) is split where they cross,
/// never dropped: no triangle outside the conductor straddles the slab's face. (A dropped
/// constraint leaves triangles with vertices on both sides of the face, whose centroid then
/// puts them wholly in one medium.)
#[test]
fn crossing_outlines_are_split_not_dropped() {
    let slab = Area::Rect {
        r0: 0.0,
        r1: 0.2,
        z0: -0.04,
        z1: 0.15,
    };
    for density in [1.0, 2.0, 3.0] {
        // A sphere of 0.1 m in a grounded sphere of 0.3 m, through the tables' builder, with
        // the slab added.
        let mut d = reference_domain(
            "eccentric_sphere",
            &format!("a_m=0.1;centre_z_m=0;b_m=0.3;density={density}"),
        )
        .unwrap();
        d.regions.push(Region {
            name: "slab".to_string(),
            area: slab,
            relative_permittivity: 4.0,
        });
        let p = FemProblem::new(d).expect("mesh");
        let m = p.mesh();
        let tol = 1e-9;
        let mut straddling = 0;
        for (t, tri) in m.triangles.iter().enumerate() {
            if tri.iter().all(|&i| m.conductor[i].is_some()) {
                continue;
            }
            let inside = m.region[t].is_some();
            let agree = tri.iter().all(|&i| {
                let q = m.nodes[i];
                if inside {
                    slab.contains(q, tol)
                } else {
                    // Outside the slab or on its outline.
                    !slab.contains(q, -tol)
                }
            });
            if !agree {
                straddling += 1;
            }
        }
        assert_eq!(
            straddling, 0,
            "density {density}: triangles across the slab's face"
        );
    }
}

/// A sweep's capacitance metrics keep the design's media: over the demo (PVC form, grounded
/// room) they come from the finite-element solver, differ from the same sweep with the form
/// and the room removed (boundary elements, free space over the floor), and equal a single
/// `capacitance` run on the design at the same point (the same mesh, so to rounding).
#[test]
fn sweep_capacitance_keeps_the_design_media() {
    let dir = tempfile::tempdir().unwrap();
    // A coarse mesh keeps the test short; the comparison holds at any density.
    let coarse = |t: &str| t.replace("[enclosure]", "[mesh]\ndensity = 0.5\n\n[enclosure]");
    let with_media = room_resonator_variant(dir.path(), "media.toml", &|t| coarse(t));
    let bare = room_resonator_variant(dir.path(), "bare.toml", &|t| {
        let form = t.find("[[dielectric]]").unwrap();
        let drive = t.find("[drive]").unwrap();
        format!("{}{}", &t[..form], &t[drive..])
    });
    let at_z = room_resonator_variant(dir.path(), "at.toml", &|t| {
        coarse(t).replace("origin = [0.0, 0.0, 0.82]", "origin = [0.0, 0.0, 0.9]")
    });
    let sweep = |base: &str, name: &str| -> Vec<f64> {
        let file = dir.path().join(format!("{name}.toml"));
        std::fs::write(
            &file,
            format!(
                "base = \"{}\"\nmetrics = [\"capacitance.topload\"]\n\n[[axis]]\n\
                 key = \"electrode.topload.origin[2]\"\nfrom = 0.9\nto = 1.0\nsteps = 2\n",
                std::path::Path::new(base)
                    .file_name()
                    .unwrap()
                    .to_str()
                    .unwrap()
            ),
        )
        .unwrap();
        let out = dir.path().join(format!("{name}.jsonl"));
        let run = coilfield(&[
            "sweep",
            file.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ]);
        assert!(
            run.status.success(),
            "{}",
            String::from_utf8_lossy(&run.stderr)
        );
        std::fs::read_to_string(&out)
            .unwrap()
            .lines()
            .map(|l| {
                let v: serde_json::Value = serde_json::from_str(l).unwrap();
                assert_eq!(v["status"], "ok", "{l}");
                v["metrics"]["capacitance.topload"].as_f64().unwrap()
            })
            .collect()
    };
    let media = sweep(&with_media, "s-media");
    let free = sweep(&bare, "s-bare");
    assert_eq!(media.len(), 2);
    for (m, f) in media.iter().zip(&free) {
        assert!((m / f - 1.0).abs() > 0.01, "media {m} F, free space {f} F");
    }
    let single = json_of(&["capacitance", &at_z, "--format", "json"]);
    assert_eq!(single["solver"], "fem");
    let c = single["conductors"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == "topload")
        .unwrap()["capacitance_f"]
        .as_f64()
        .unwrap();
    assert!(
        (media[0] / c - 1.0).abs() < 1e-9,
        "sweep {} F, capacitance {c} F",
        media[0]
    );
}

/// Convergence of the demo room resonator (`meshes-demo/room-resonator.toml`) under mesh
/// refinement: the torus's capacitance and the secondary's self-capacitance against
/// `[mesh] density` (doubling from row to row, so every edge of the graded mesh halves), the
/// observed rate per doubling from the last three rows, (C2 - C1) / (C3 - C2), the Richardson
/// extrapolation with that rate, C3 + (C3 - C2) / (rate - 1) (L. F. Richardson, "The
/// deferred approach to the limit", Phil. Trans. R. Soc. A 226 (1927) 299-361; as in any
/// numerical-analysis text), and each density's distance from it. The README's convergence
/// table comes from this run:
/// `cargo test --release --test fem demo_convergence -- --ignored --nocapture`
/// (`COILFIELD_STUDY_DENSITIES=0.5,1,2,4` chooses the densities, each double the one before).
#[test]
#[ignore = "a study (minutes): run by hand for the README's table"]
fn demo_convergence_table() {
    let demo = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes-demo/room-resonator.toml"
    );
    let text = std::fs::read_to_string(demo).unwrap();
    let densities: Vec<f64> = std::env::var("COILFIELD_STUDY_DENSITIES")
        .unwrap_or_else(|_| "0.5,1,2,4".to_string())
        .split(',')
        .map(|d| {
            d.trim()
                .parse()
                .expect("densities: numbers separated by commas")
        })
        .collect();
    assert!(densities.len() >= 3, "three densities at least");
    let mut rows = Vec::new();
    for &density in &densities {
        let t = text.replace(
            "[enclosure]",
            &format!("[mesh]\ndensity = {density}\nmax_elements = 2000000\n\n[enclosure]"),
        );
        let design = coilfield_geometry::parse_design(&t, demo).expect("demo");
        let started = std::time::Instant::now();
        let p = FemProblem::from_design(&design, demo).expect("mesh");
        let meshed = started.elapsed().as_secs_f64();
        let n = p.mesh().elements();
        let s = p.solve().expect("solve");
        let names = s.conductor_names();
        let k = names.iter().position(|n| n == "topload").unwrap();
        let c_top = s.capacitance_matrix_f()[k][k];
        let c_self = s.self_capacitance_f().unwrap().0;
        eprintln!("density {density}: {n} elements, meshed in {meshed:.3} s");
        rows.push((density, n, meshed, c_top, c_self));
    }
    let m = rows.len();
    // Observed rate per doubling and the Richardson extrapolation with it.
    let extrapolate = |c: &dyn Fn(usize) -> f64| {
        let (c1, c2, c3) = (c(m - 3), c(m - 2), c(m - 1));
        let rate = (c2 - c1) / (c3 - c2);
        (rate, c3 + (c3 - c2) / (rate - 1.0))
    };
    let (top_rate, top_x) = extrapolate(&|i| rows[i].3);
    let (self_rate, self_x) = extrapolate(&|i| rows[i].4);
    eprintln!(
        "| density | elements | meshing (s) | C torus (pF) | vs extrapolated | C self (pF) | vs extrapolated |"
    );
    eprintln!("|---|---|---|---|---|---|---|");
    for (d, n, t, ct, cs) in &rows {
        eprintln!(
            "| {d} | {n} | {t:.3} | {:.4} | {:+.3} % | {:.4} | {:+.3} % |",
            ct * 1e12,
            (ct / top_x - 1.0) * 100.0,
            cs * 1e12,
            (cs / self_x - 1.0) * 100.0
        );
    }
    eprintln!(
        "| extrapolated | | | {:.4} | rate {top_rate:.2} per doubling | {:.4} | rate {self_rate:.2} per doubling |",
        top_x * 1e12,
        self_x * 1e12
    );
}
