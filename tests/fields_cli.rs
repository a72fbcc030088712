//! End-to-end tests of the field commands (`export`, `field`, `map`, `clearance`): VTK files read
//! back with the real VTK library (validation/read_vtk.py), the bad-input contract (exit 2, the
//! key named, nothing on stdout, no panic) and atomic replacement of outputs.

mod common;

use common::*;
use serde_json::Value;
use std::path::Path;
use std::process::Command;

/// A resonator with a torus on the secondary's top, a ground plane and a drive.
const RESONATOR: &str = r#"
[[winding]]
name = "secondary"
shape = "helix"
role = "secondary"
origin = [0.0, 0.0, 0.10]
axis = [0.0, 0.0, 1.0]
radius = "55 mm"
length = "450 mm"
turns = 900
wire_diameter = "AWG 26"

[[winding]]
name = "primary"
shape = "spiral"
role = "primary"
origin = [0.0, 0.0, 0.09]
axis = [0.0, 0.0, 1.0]
inner_radius = "80 mm"
outer_radius = "140 mm"
turns = 6
wire_diameter = "4 mm"

[[electrode]]
name = "topload"
shape = "torus"
origin = [0.0, 0.0, 0.62]
axis = [0.0, 0.0, 1.0]
major_radius = "120 mm"
minor_radius = "40 mm"
connect = "secondary:top"

[ground]
z = 0.0

[drive]
frequency = 250e3
currents = { primary = 40.0, secondary = 1.2 }
potentials = { secondary = [0.0, 150e3] }
"#;

/// Read a VTK file with the real VTK library; the JSON of validation/read_vtk.py.
fn read_vtk(path: &Path) -> Value {
    let out = Command::new("python3")
        .arg(root().join("validation/read_vtk.py"))
        .arg(path)
        .output()
        .expect("run python3 (the tests need python3 with the vtk package: pip install vtk)");
    assert!(
        out.status.success(),
        "read_vtk.py failed on {}: {}",
        path.display(),
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("JSON from read_vtk.py")
}

/// Run `export DESIGN --vtk OUT_DIR`, which must succeed, and read its collection back with
/// the real VTK library.
fn export_read(design: &Path, out_dir: &Path) -> Value {
    run_ok(&[
        "export",
        design.to_str().unwrap(),
        "--vtk",
        out_dir.to_str().unwrap(),
    ]);
    read_vtk(&out_dir.join("design.pvd"))
}

/// Check the bad-input contract and return stderr.
fn expect_bad(args: &[&str], parts: &[&str]) -> String {
    let out = run(args);
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(
        out.status.code(),
        Some(2),
        "args {args:?}, stderr:\n{stderr}"
    );
    assert!(!stderr.contains("panicked"), "panic:\n{stderr}");
    assert!(stderr.starts_with("error: "), "stderr:\n{stderr}");
    assert!(
        out.stdout.is_empty(),
        "stdout on bad input: {}",
        String::from_utf8_lossy(&out.stdout)
    );
    for p in parts {
        assert!(stderr.contains(p), "stderr lacks {p:?}:\n{stderr}");
    }
    stderr
}

#[test]
fn export_writes_windings_electrodes_and_a_collection_that_vtk_reads() {
    let dir = tempfile::tempdir().unwrap();
    let design = design_file(dir.path(), "d.toml", RESONATOR);
    let j = export_read(&design, &dir.path().join("vtk"));
    let sets = j["collection"].as_array().unwrap();
    let files: Vec<&str> = sets.iter().map(|s| s["file"].as_str().unwrap()).collect();
    assert_eq!(
        files,
        [
            "winding-secondary.vtp",
            "winding-primary.vtp",
            "electrode-topload.vtp"
        ]
    );

    // The secondary: one polyline cell per turn, the current of the drive, and a first point
    // at origin + r x_hat (the design file's convention), all as VTK reads them.
    let sec = &sets[0];
    assert_eq!(sec["class"], "vtkPolyData");
    assert_eq!(sec["n_cells"], 900);
    let turn = sec["cell_data"]["turn_index"]["values"].as_array().unwrap();
    assert_eq!(turn[0].as_f64(), Some(0.0));
    assert_eq!(turn[899].as_f64(), Some(899.0));
    let current = &sec["point_data"]["current_peak_A"]["values"];
    assert_eq!(current[0].as_f64(), Some(1.2));
    let p0: Vec<f64> = sec["points"][0]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_f64().unwrap())
        .collect();
    assert!((p0[0] - 0.055).abs() < 1e-12 && p0[1].abs() < 1e-12 && (p0[2] - 0.10).abs() < 1e-12);
    // Every point of the helix lies on its cylinder, between its ends.
    for p in sec["points"].as_array().unwrap() {
        let (x, y, z) = (
            p[0].as_f64().unwrap(),
            p[1].as_f64().unwrap(),
            p[2].as_f64().unwrap(),
        );
        assert!((x.hypot(y) - 0.055).abs() < 1e-12);
        assert!((0.10 - 1e-12..=0.55 + 1e-12).contains(&z));
    }
    let pri = &sets[1];
    assert_eq!(pri["n_cells"], 6);
    assert_eq!(
        pri["cell_data"]["current_peak_A"]["values"][5].as_f64(),
        Some(40.0)
    );

    // The torus surface: every point at distance minor_radius from the tube's centre circle.
    let torus = &sets[2];
    assert!(torus["n_cells"].as_u64().unwrap() > 1000);
    for p in torus["points"].as_array().unwrap() {
        let (x, y, z) = (
            p[0].as_f64().unwrap(),
            p[1].as_f64().unwrap(),
            p[2].as_f64().unwrap(),
        );
        let d = (x.hypot(y) - 0.12).hypot(z - 0.62);
        assert!((d - 0.04).abs() < 1e-12, "{d}");
    }
    // Surface data: the largest surface field on the mesh is the peak surface field that
    // `capacitance` reports (the mesh samples the panels, so within 1 %). The values
    // themselves are checked against the sphere's closed form in
    // `export_surface_data_of_a_sphere_is_the_closed_form`.
    let es = torus["point_data"]["E_surface_V_per_m"]["values"]
        .as_array()
        .unwrap();
    let es_max = es.iter().map(f).fold(0.0f64, f64::max);
    let cap = json_of(&["capacitance", design.to_str().unwrap(), "--format", "json"]);
    let peak = f(&cap["peak_surface_fields"][0]["field_v_per_m"]);
    assert_eq!(cap["peak_surface_fields"][0]["name"], "topload");
    assert!(rel(es_max, peak) < 0.01, "{es_max} vs {peak}");
}

#[test]
fn export_surface_data_of_a_sphere_is_the_closed_form() {
    // An isolated sphere of radius a at V: uniform charge, sigma = eps0 V / a and E_s = V / a
    // at every surface point (J. C. Maxwell, "A Treatise on Electricity and Magnetism", 1873,
    // vol. 1, the electrified sphere). eps0 = 1/(mu0 c^2) with mu0 = 4 pi 1e-7 H/m and c =
    // 299792458 m/s, as coilfield uses. With curved panels the total charge of a sphere is
    // exact to about 1e-10; the pointwise values at the mesh's vertices reach about 5e-8
    // (seen), so 1e-6.
    let dir = tempfile::tempdir().unwrap();
    let text = "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 1.0]\n\
                radius = 0.1\n\n[drive]\nfrequency = 100e3\npotentials = { ball = 1000.0 }\n";
    let design = design_file(dir.path(), "s.toml", text);
    let j = export_read(&design, &dir.path().join("vtk"));
    let ball = &j["collection"].as_array().unwrap()[0];
    let mu0 = 4e-7 * std::f64::consts::PI;
    let eps0 = 1.0 / (mu0 * 299_792_458.0f64.powi(2));
    let (v, a) = (1000.0, 0.1);
    let sigma = ball["point_data"]["sigma_C_per_m2"]["values"]
        .as_array()
        .unwrap();
    let es = ball["point_data"]["E_surface_V_per_m"]["values"]
        .as_array()
        .unwrap();
    assert!(sigma.len() > 100 && sigma.len() == es.len());
    for (s, e) in sigma.iter().zip(es) {
        assert!(rel(f(s), eps0 * v / a) < 1e-6, "sigma {s}");
        assert!(rel(f(e), v / a) < 1e-6, "E_s {e}");
    }
}

#[test]
fn capacitance_of_an_isolated_sphere_and_the_resonator_json() {
    let dir = tempfile::tempdir().unwrap();
    let sphere = "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 1.0]\nradius = 0.1\n";
    let d = design_file(dir.path(), "s.toml", sphere);
    let j = json_of(&["capacitance", d.to_str().unwrap(), "--format", "json"]);
    // C = 4 pi eps0 a (J. C. Maxwell 1873, vol. 1), eps0 = 1/(mu0 c^2) with the classical
    // mu0 = 4 pi 1e-7 H/m as coilfield uses. Curved panels represent the sphere exactly and a
    // uniform charge is the exact solution, so only quadrature and rounding remain: the
    // solver reaches about 1e-10 (seen), checked at 1e-8.
    let mu0 = 4e-7 * std::f64::consts::PI;
    let eps0 = 1.0 / (mu0 * 299_792_458.0f64.powi(2));
    let exact = 4.0 * std::f64::consts::PI * eps0 * 0.1;
    assert_eq!(j["conductors"][0]["name"], "ball");
    let c = f(&j["conductors"][0]["capacitance_f"]);
    assert!(rel(c, exact) < 1e-8, "{c} vs {exact}: {}", rel(c, exact));

    let d = design_file(dir.path(), "r.toml", RESONATOR);
    let out = dir.path().join("c.json");
    let j = json_of(&[
        "capacitance",
        d.to_str().unwrap(),
        "--format",
        "json",
        "--out",
        out.to_str().unwrap(),
    ]);
    let names: Vec<&str> = j["conductors"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["name"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["topload", "secondary"]);
    let sec = &j["conductors"][1];
    assert_eq!(sec["kind"], "secondary");
    // Connecting the torus to the top adds capacitance.
    assert!(f(&sec["with_connected_electrodes_f"]) > f(&sec["capacitance_f"]));
    assert!(f(&sec["capacitance_f"]) > 1e-12 && f(&sec["capacitance_f"]) < 1e-10);
    // The peak surface field lies on the torus.
    let at = j["peak_surface_fields"][0]["at_m"].as_array().unwrap();
    let (x, y, z) = (f(&at[0]), f(&at[1]), f(&at[2]));
    assert!(((x.hypot(y) - 0.12).hypot(z - 0.62) - 0.04).abs() < 2e-3);
    let saved: Value = serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    assert_eq!(saved, j);
}

#[test]
fn export_replaces_files_only_on_success() {
    let dir = tempfile::tempdir().unwrap();
    let out_dir = dir.path().join("vtk");
    std::fs::create_dir(&out_dir).unwrap();
    let old = out_dir.join("design.pvd");
    std::fs::write(&old, "old contents").unwrap();
    // An electrode through the secondary's wire is refused and nothing is written.
    let bad = RESONATOR
        .replace("major_radius = \"120 mm\"", "major_radius = \"55 mm\"")
        .replace("origin = [0.0, 0.0, 0.62]", "origin = [0.0, 0.0, 0.30]");
    let design = design_file(dir.path(), "bad.toml", &bad);
    expect_bad(
        &[
            "export",
            design.to_str().unwrap(),
            "--vtk",
            out_dir.to_str().unwrap(),
        ],
        &["topload"],
    );
    assert_eq!(std::fs::read_to_string(&old).unwrap(), "old contents");
    assert_eq!(
        std::fs::read_dir(&out_dir).unwrap().count(),
        1,
        "no stray files"
    );
    // A good run replaces it.
    let good = design_file(dir.path(), "good.toml", RESONATOR);
    export_read(&good, &out_dir);
    assert!(
        std::fs::read_to_string(&old)
            .unwrap()
            .contains("Collection")
    );
    let leftovers: Vec<_> = std::fs::read_dir(&out_dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
}

#[test]
fn field_bad_points_name_the_option() {
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", RESONATOR);
    let d = d.to_str().unwrap();
    expect_bad(&["field", d, "--at", "1,2"], &["--at", "3 comma-separated"]);
    expect_bad(&["field", d, "--at", "1,2,abc"], &["--at", "abc"]);
    expect_bad(&["field", d], &["--at", "--points"]);
    // Inside the torus's tube: no field there, an error naming the option and the conductor.
    expect_bad(
        &["field", d, "--at", "0.12,0,0.62"],
        &["--at 0.12,0,0.62", "inside electrode 'topload'"],
    );
    let csv = dir.path().join("p.csv");
    std::fs::write(&csv, "x,y\n1,2\n").unwrap();
    expect_bad(
        &["field", d, "--points", csv.to_str().unwrap()],
        &["--points", "header must be x,y,z"],
    );
    std::fs::write(&csv, "x,y,z\n1,2,3\n1,zz,3\n").unwrap();
    expect_bad(
        &["field", d, "--points", csv.to_str().unwrap()],
        &["line 3", "column y"],
    );
}

#[test]
fn missing_or_zero_drive_names_the_key() {
    let dir = tempfile::tempdir().unwrap();
    let no_drive = RESONATOR.split("[drive]").next().unwrap().to_string();
    let d = design_file(dir.path(), "nodrive.toml", &no_drive);
    expect_bad(
        &["field", d.to_str().unwrap(), "--at", "1,0,0.5"],
        &["currents"],
    );
    let zero = RESONATOR
        .replace(
            "currents = { primary = 40.0, secondary = 1.2 }",
            "currents = { primary = 0.0 }",
        )
        .replace(
            "potentials = { secondary = [0.0, 150e3] }",
            "potentials = { secondary = [0.0, 0.0] }",
        );
    let d = design_file(dir.path(), "zero.toml", &zero);
    expect_bad(
        &["field", d.to_str().unwrap(), "--at", "1,0,0.5"],
        &["potentials", "all zero"],
    );
    let no_freq = RESONATOR.replace("frequency = 250e3\n", "");
    let d = design_file(dir.path(), "nofreq.toml", &no_freq);
    expect_bad(&["clearance", d.to_str().unwrap()], &["frequency"]);
}

#[test]
fn map_refuses_bad_grids_with_the_size_and_the_limit() {
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", RESONATOR);
    let d = d.to_str().unwrap();
    let vtr = dir.path().join("m.vtr");
    let vtr = vtr.to_str().unwrap();
    let e = expect_bad(
        &[
            "map",
            d,
            "--plane",
            "xz",
            "--extent",
            "0,1,0,1",
            "--resolution",
            "5000,5000",
            "--vtk",
            vtr,
        ],
        &["--resolution", "25000000 points", "limit of 4000000 points"],
    );
    assert!(e.contains("MB"));
    expect_bad(
        &[
            "map",
            d,
            "--box",
            "0,1,0,1,0,1",
            "--resolution",
            "200,200,200",
            "--vtk",
            vtr,
        ],
        &["8000000 points"],
    );
    expect_bad(
        &["map", d, "--resolution", "10,10", "--vtk", vtr],
        &["--plane", "--box"],
    );
    expect_bad(
        &[
            "map",
            d,
            "--plane",
            "xz",
            "--extent",
            "1,0,0,1",
            "--resolution",
            "10,10",
            "--vtk",
            vtr,
        ],
        &["--extent", "increase"],
    );
    expect_bad(
        &[
            "map",
            d,
            "--box",
            "0,1,0,1,0,1",
            "--resolution",
            "4,4,4",
            "--plot",
            "p.png",
        ],
        &["--plot", "plane"],
    );
    expect_bad(
        &[
            "map",
            d,
            "--plane",
            "xy",
            "--extent",
            "0,1,0,1",
            "--resolution",
            "4,4",
            "--vtk",
            "m.vti",
        ],
        &["--vtk", ".vtr"],
    );
    assert!(!Path::new(vtr).exists());
    // An existing output survives bad input and is replaced by a good run.
    std::fs::write(vtr, "old").unwrap();
    expect_bad(
        &[
            "map",
            d,
            "--plane",
            "xz",
            "--extent",
            "0,1,0,1",
            "--resolution",
            "5000,5000",
            "--vtk",
            vtr,
        ],
        &["--resolution"],
    );
    assert_eq!(std::fs::read_to_string(vtr).unwrap(), "old");
    run_ok(&[
        "map",
        d,
        "--plane",
        "xz",
        "--extent",
        "0.3,1,0,1",
        "--resolution",
        "3,3",
        "--vtk",
        vtr,
    ]);
    assert!(
        std::fs::read_to_string(vtr)
            .unwrap()
            .contains("RectilinearGrid")
    );
}

#[test]
fn clearance_refuses_bad_options() {
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", RESONATOR);
    let d = d.to_str().unwrap();
    expect_bad(
        &["clearance", d, "--distance", "1,-2"],
        &["--distance", "negative"],
    );
    expect_bad(
        &["clearance", d, "--threshold", "x,Q,1,rms"],
        &["--threshold", "E or B"],
    );
    expect_bad(
        &["clearance", d, "--long-gap-gradient", "0"],
        &["--long-gap-gradient"],
    );
    // Without a secondary there is no axis for the rays.
    let ball = "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 1.0]\nradius = 0.1\n\n[drive]\nfrequency = 1e6\npotentials = { ball = 1e4 }\n";
    let b = design_file(dir.path(), "ball.toml", ball);
    expect_bad(
        &["clearance", b.to_str().unwrap()],
        &["role = \"secondary\""],
    );
}

/// A small ring loop as the secondary (it sets the axis), 1,000 A peak at 1 MHz: far from it
/// the field is a magnetic dipole's.
fn dipole_loop() -> String {
    r#"
[[winding]]
name = "loop"
shape = "ring"
role = "secondary"
origin = [0.0, 0.0, 1.0]
axis = [0.0, 0.0, 1.0]
radius = 0.01
wire_diameter = 0.001

[drive]
frequency = 1e6
currents = { loop = 1000.0 }
"#
    .to_string()
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or(f64::NAN)
}

/// `k` hundredths of a metre as the decimal text a person types, read as f64 (integer
/// arithmetic, independent of the grid's floating-point path).
fn hundredths_m(k: i64) -> f64 {
    let sign = if k < 0 { "-" } else { "" };
    format!("{sign}{}.{:02}", k.abs() / 100, k.abs() % 100)
        .parse()
        .unwrap()
}

#[test]
fn map_grid_coordinates_are_the_short_decimals_in_vtk_json_and_ticks() {
    // -0.2 m to 0.44 m in 17 points is every 0.04 m and 0.6 m to 1.4 m in 9 every 0.1 m; plain
    // floating-point interpolation gives values such as 0.31999999999999995 and
    // 0.7999999999999999 (IEEE 754 rounding, common practice, no source). The issue's rule:
    // each grid value is the shortest decimal within 4 ulp, computed and printed. Reference:
    // the decimals by integer arithmetic; the coordinates as the VTK library reads them.
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", &dipole_loop());
    let vtr = dir.path().join("g.vtr");
    let svg = dir.path().join("g.svg");
    let out = run_ok(&[
        "map",
        d.to_str().unwrap(),
        "--plane",
        "xz",
        "--extent",
        "-0.2,0.44,0.6,1.4",
        "--resolution",
        "17,9",
        "--vtk",
        vtr.to_str().unwrap(),
        "--plot",
        svg.to_str().unwrap(),
        "--plot-quantity",
        "b",
    ]);
    let j = read_vtk(&vtr);
    let pts = j["points"].as_array().unwrap();
    assert_eq!(pts.len(), 17 * 9);
    for (k, p) in pts.iter().enumerate() {
        let (i, m) = (k % 17, k / 17);
        let want = [
            hundredths_m(-20 + 4 * i as i64),
            0.0,
            hundredths_m(60 + 10 * m as i64),
        ];
        for c in 0..3 {
            assert_eq!(f(&p[c]).to_bits(), want[c].to_bits(), "point {k}: {p}");
        }
    }
    // The summary prints a grid point: short decimals there too.
    let text = String::from_utf8(out.stdout).unwrap();
    let j: Value = serde_json::from_str(&text).unwrap();
    let at = j["max_b_at_m"].as_array().unwrap();
    for c in at {
        let x = f(c);
        assert!((0..=144).any(|k| hundredths_m(k - 20) == x), "{c}");
    }
}

#[test]
fn map_vtk_read_by_vtk_matches_field_json_at_the_same_points() {
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", RESONATOR);
    let d = d.to_str().unwrap();
    let vtr = dir.path().join("m.vtr");
    let svg = dir.path().join("m.svg");
    let summary = json_of(&[
        "map",
        d,
        "--plane",
        "xz",
        "--offset",
        "0.02",
        "--extent",
        "-0.3,0.3,0.05,0.8",
        "--resolution",
        "7,5",
        "--vtk",
        vtr.to_str().unwrap(),
        "--plot",
        svg.to_str().unwrap(),
        "--plot-quantity",
        "b",
    ]);
    assert_eq!(summary["n_points"], 35);
    let j = read_vtk(&vtr);
    assert_eq!(j["class"], "vtkRectilinearGrid");
    assert_eq!(j["dimensions"], serde_json::json!([7, 1, 5]));
    for name in ["E_V_per_m", "E_mag_V_per_m", "B_T", "B_mag_T"] {
        assert!(j["point_data"].get(name).is_some(), "no array {name}");
    }
    // The same points, as VTK reports them, through `field --points`: points without E in
    // the grid (NaN there) must be inside the torus, and get null E and a warning here too.
    let pts = j["points"].as_array().unwrap();
    let em = j["point_data"]["E_mag_V_per_m"]["values"]
        .as_array()
        .unwrap();
    let ev = j["point_data"]["E_V_per_m"]["values"].as_array().unwrap();
    let bt = j["point_data"]["B_T"]["values"].as_array().unwrap();
    let bm = j["point_data"]["B_mag_T"]["values"].as_array().unwrap();
    let mut n_inside = 0;
    let mut text = String::from("x,y,z\n");
    for (k, p) in pts.iter().enumerate() {
        let (x, y, z) = (f(&p[0]), f(&p[1]), f(&p[2]));
        let in_torus = (x.hypot(y) - 0.12).hypot(z - 0.62) < 0.04;
        assert_eq!(em[k].is_null(), in_torus, "point {k} ({x}, {y}, {z})");
        n_inside += usize::from(in_torus);
        text.push_str(&format!("{x:?},{y:?},{z:?}\n"));
    }
    assert!((1..=5).contains(&n_inside), "{n_inside}");
    let csv = dir.path().join("p.csv");
    std::fs::write(&csv, text).unwrap();
    let fj = json_of(&[
        "field",
        d,
        "--points",
        csv.to_str().unwrap(),
        "--format",
        "json",
    ]);
    let fp = fj["points"].as_array().unwrap();
    assert_eq!(fp.len(), pts.len());
    let inside_warnings = fj["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|w| w.as_str().unwrap().contains("inside electrode 'topload'"))
        .count();
    assert_eq!(inside_warnings, n_inside);
    for (k, p) in fp.iter().enumerate() {
        if em[k].is_null() {
            // Inside the torus: neither field, in the grid (NaN) and here (null).
            assert!(f(&bm[k]).is_nan(), "point {k}: B {} in the grid", bm[k]);
            for key in ["e_field_v_per_m", "e_mag_v_per_m", "b_field_t", "b_mag_t"] {
                assert!(p[key].is_null(), "point {k}: {key} = {}", p[key]);
            }
            continue;
        }
        let b = p["b_field_t"].as_array().expect("B off the wires");
        for c in 0..3 {
            let (a, v) = (f(&b[c]), f(&bt[k][c]));
            assert!(
                (a - v).abs() <= 1e-12 * f(&p["b_mag_t"]),
                "point {k}: B {a} vs {v}"
            );
        }
        assert!(rel(f(&bm[k]), f(&p["b_mag_t"])) < 1e-12);
        if em[k].is_null() {
            assert!(p["e_field_v_per_m"].is_null() && p["e_mag_v_per_m"].is_null());
            continue;
        }
        let e = p["e_field_v_per_m"]
            .as_array()
            .expect("E outside the conductors");
        for c in 0..3 {
            let (a, v) = (f(&e[c]), f(&ev[k][c]));
            assert!(
                (a - v).abs() <= 1e-12 * f(&p["e_mag_v_per_m"]),
                "point {k}: E {a} vs {v}"
            );
        }
        assert!(rel(f(&em[k]), f(&p["e_mag_v_per_m"])) < 1e-12);
    }
    let svg_text = std::fs::read_to_string(&svg).unwrap();
    assert!(svg_text.starts_with("<svg") && svg_text.contains("icnirp2010_public_b"));
}

#[test]
fn field_on_a_wire_is_null_with_a_warning_and_out_is_atomic() {
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", &dipole_loop());
    let d = d.to_str().unwrap();
    let out = dir.path().join("f.json");
    let j = json_of(&[
        "field",
        d,
        "--at",
        "0.01,0,1",
        "--at",
        "0,0,2",
        "--format",
        "json",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(j["points"][0]["b_field_t"].is_null());
    assert!(j["points"][0]["b_mag_t"].is_null());
    let w = j["warnings"].as_array().unwrap();
    assert!(
        w.iter()
            .any(|w| w.as_str().unwrap().contains("--at 0.01,0,1")),
        "{w:?}"
    );
    // On the axis 1 m from a ring: B = mu0 I a^2 / (2 (a^2 + z^2)^(3/2)).
    let mu0 = 4e-7 * std::f64::consts::PI;
    let exact = mu0 * 1000.0 * 1e-4 / (2.0 * (1e-4f64 + 1.0).powf(1.5));
    assert!(rel(f(&j["points"][1]["b_field_t"][2]), exact) < 1e-9);
    let saved: Value = serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    assert_eq!(saved, j);
    // Bad input leaves the old output in place.
    expect_bad(
        &["field", d, "--at", "0,0", "--out", out.to_str().unwrap()],
        &["--at"],
    );
    let again: Value = serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    assert_eq!(again, j);
}

#[test]
fn field_points_inside_an_electrode_or_on_a_wire_get_no_value_and_a_warning() {
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", RESONATOR);
    let d = d.to_str().unwrap();
    // Line 2: in the torus's tube; line 3: on the secondary's wire (its ring model puts turn
    // i at 55 mm from the axis and z = 0.10 m + (i + 1/2) pitches); line 4: below the ground
    // plane; line 5: in free air.
    let pitch = 0.45 / 900.0;
    let csv = dir.path().join("p.csv");
    std::fs::write(
        &csv,
        format!(
            "x,y,z\n0.12,0,0.62\n0.055,0,{:?}\n0.3,0,-0.1\n0.5,0,0.3\n",
            0.10 + 100.5 * pitch
        ),
    )
    .unwrap();
    let csv = csv.to_str().unwrap();
    let j = json_of(&["field", d, "--points", csv, "--format", "json"]);
    let p = j["points"].as_array().unwrap();
    assert_eq!(p.len(), 4);
    let w: Vec<&str> = j["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w.as_str().unwrap())
        .collect();
    let has = |parts: &[&str]| w.iter().any(|w| parts.iter().all(|q| w.contains(q)));
    // Inside the torus: E and B null (JSON has no NaN; the conductor shuts the field out at
    // the drive frequency); a warning names the file line, the point and the electrode.
    assert!(p[0]["e_field_v_per_m"].is_null() && p[0]["e_mag_v_per_m"].is_null());
    assert!(p[0]["b_field_t"].is_null() && p[0]["b_mag_t"].is_null());
    assert!(
        has(&[
            &format!("--points {csv} line 2"),
            "(0.12, 0, 0.62) m",
            "inside electrode 'topload'"
        ]),
        "{w:?}"
    );
    // On the wire: both fields null.
    for key in ["e_field_v_per_m", "e_mag_v_per_m", "b_field_t", "b_mag_t"] {
        assert!(p[1][key].is_null(), "{key}: {}", p[1][key]);
    }
    assert!(has(&["line 3", "on a winding's wire"]), "{w:?}");
    assert!(p[2]["e_mag_v_per_m"].is_null());
    assert!(has(&["line 4", "below the ground plane"]), "{w:?}");
    assert!(f(&p[3]["e_mag_v_per_m"]) > 0.0 && f(&p[3]["b_mag_t"]) > 0.0);

    // CSV and table print NaN where JSON has null.
    let out = run_ok(&["field", d, "--points", csv, "--format", "csv"]);
    let text = String::from_utf8(out.stdout).unwrap();
    let rows: Vec<Vec<&str>> = text
        .lines()
        .skip(1)
        .map(|l| l.split(',').collect())
        .collect();
    assert_eq!(rows.len(), 4);
    assert!(rows[0][3..].iter().all(|c| *c == "NaN"), "{:?}", rows[0]);
    assert!(rows[1][3..].iter().all(|c| *c == "NaN"), "{:?}", rows[1]);
    assert!(
        rows[3]
            .iter()
            .all(|c| c.parse::<f64>().unwrap().is_finite())
    );
    assert!(String::from_utf8_lossy(&out.stderr).contains("inside electrode 'topload'"));
    let out = run_ok(&["field", d, "--points", csv, "--format", "table"]);
    let table = String::from_utf8(out.stdout).unwrap();
    assert!(
        table
            .lines()
            .any(|l| l.contains("(0.12, 0, 0.62)") && l.contains("NaN"))
    );

    // The same point typed with --at is refused: exit 2 naming the option and the electrode.
    expect_bad(
        &["field", d, "--at", "0.12,0,0.62", "--points", csv],
        &["--at 0.12,0,0.62", "inside electrode 'topload'"],
    );
}

#[test]
fn clearance_of_a_small_loop_matches_the_dipole_equator() {
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", &dipole_loop());
    let j = json_of(&[
        "clearance",
        d.to_str().unwrap(),
        "--format",
        "json",
        "--distance",
        "0.05,1",
        "--threshold",
        "test_b,B,2e-5,rms",
    ]);
    assert!(
        j["caution"]
            .as_str()
            .unwrap()
            .contains("not a safety certificate")
    );
    let t = j["thresholds"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["name"] == "test_b")
        .unwrap()
        .clone();
    // Equatorial dipole field |B| = mu0 m / (4 pi r^3), m = I pi a^2, compared with the rms
    // limit times sqrt(2). At r ~ 12 a the dipole is within (a/r)^2 ~ 1 % of the ring.
    let limit_peak = 2e-5 * 2f64.sqrt();
    let m = 1000.0 * std::f64::consts::PI * 1e-4;
    let r = (1e-7 * m / limit_peak).cbrt();
    let got = f(&t["distance_from_axis_m"]);
    assert!(rel(got, r) < 0.02, "{got} vs dipole {r}");
    assert_eq!(t["compared_with"], "peak / sqrt(2)");
    assert_eq!(t["beyond_search"], false);
    // At 1 m everything is below the test limit; at 5 cm it is above.
    let at = j["at_distances"].as_array().unwrap();
    assert!(
        at[0]["exceeded"]
            .as_array()
            .unwrap()
            .iter()
            .any(|n| n == "test_b")
    );
    assert!(
        !at[1]["exceeded"]
            .as_array()
            .unwrap()
            .iter()
            .any(|n| n == "test_b")
    );
    assert!(rel(f(&at[1]["b_rms_t"]) * 2f64.sqrt(), f(&at[1]["b_mag_t"])) < 1e-12);
    // Every default family at 1 MHz is present with its source.
    for n in [
        "air_breakdown",
        "icnirp2010_public_b",
        "icnirp2020_public_whole_body_b",
    ] {
        let th = j["thresholds"]
            .as_array()
            .unwrap()
            .iter()
            .find(|t| t["name"] == n);
        assert!(th.unwrap()["source"].as_str().unwrap().len() > 10);
    }
}

#[test]
fn clearance_table_in_the_design_sets_thresholds_and_the_command_line_overrides_it() {
    let dir = tempfile::tempdir().unwrap();
    let text = format!(
        "{}\n[clearance]\ndefaults = [\"breakdown\", \"long_gap_gradient\"]\nlong_gap_gradient = \"200 kV/m\"\nmax_distance = \"5 m\"\nheights = [\"50 cm\"]\ndistances = [0.05, 1.0]\n\n[[clearance.threshold]]\nname = \"fence\"\nquantity = \"B\"\nlimit = \"20 uT\"\nbasis = \"rms\"\nsource = \"invented for this test\"\n",
        dipole_loop()
    );
    let d = design_file(dir.path(), "d.toml", &text);
    let d = d.to_str().unwrap();
    let j = json_of(&["clearance", d, "--format", "json"]);
    let ths = j["thresholds"].as_array().unwrap();
    let names: Vec<&str> = ths.iter().map(|t| t["name"].as_str().unwrap()).collect();
    // Only the sets asked for, then the file's own threshold; no exposure levels.
    assert_eq!(names, ["air_breakdown", "long_gap_mean_gradient", "fence"]);
    let get = |ths: &[Value], n: &str| ths.iter().find(|t| t["name"] == n).unwrap().clone();
    assert_eq!(get(ths, "air_breakdown")["set_by"], "built-in default");
    let gap = get(ths, "long_gap_mean_gradient");
    assert_eq!(f(&gap["limit"]), 200e3);
    assert!(
        gap["set_by"]
            .as_str()
            .unwrap()
            .contains("[clearance] long_gap_gradient")
    );
    let fence = get(ths, "fence");
    assert!(fence["set_by"].as_str().unwrap().contains("design file"));
    assert_eq!(fence["source"], "invented for this test");
    assert_eq!(fence["basis"], "rms");
    // The file's limit is the one searched for: the equatorial dipole distance, as in the
    // command-line test above (20 uT rms = 2e-5 T).
    let m = 1000.0 * std::f64::consts::PI * 1e-4;
    let r = (1e-7 * m / (2e-5 * 2f64.sqrt())).cbrt();
    assert!(rel(f(&fence["distance_from_axis_m"]), r) < 0.02);
    // The extra height is searched, and labelled as coming from the file.
    let heights = fence["by_height"].as_array().unwrap();
    assert!(heights.iter().any(|h| {
        h["label"].as_str().unwrap().contains("[clearance] heights") && f(&h["height_m"]) == 0.5
    }));
    let at = j["at_distances"].as_array().unwrap();
    assert_eq!(at.len(), 2);
    assert_eq!(f(&at[1]["distance_from_axis_m"]), 1.0);

    // The command line overrides the file: a threshold of the same name, distances, gradient.
    let j = json_of(&[
        "clearance",
        d,
        "--format",
        "json",
        "--threshold",
        "fence,B,1e-5,rms",
        "--distance",
        "2",
        "--long-gap-gradient",
        "1e5",
    ]);
    let ths = j["thresholds"].as_array().unwrap();
    assert_eq!(ths.len(), 3);
    let fence = get(ths, "fence");
    assert_eq!(f(&fence["limit"]), 1e-5);
    assert!(fence["set_by"].as_str().unwrap().contains("command line"));
    let gap = get(ths, "long_gap_mean_gradient");
    assert_eq!(f(&gap["limit"]), 1e5);
    assert!(gap["set_by"].as_str().unwrap().contains("command line"));
    assert_eq!(j["at_distances"].as_array().unwrap().len(), 1);
    // The table says who set each threshold.
    let out = run(&["clearance", d]);
    let table = String::from_utf8(out.stdout).unwrap();
    assert!(
        table.contains("fence: invented for this test [set by design file"),
        "{table}"
    );
    assert!(table.contains("not a safety certificate"));

    // The map's contour lines follow the same thresholds.
    let svg = dir.path().join("m.svg");
    json_of(&[
        "map",
        d,
        "--plane",
        "xz",
        "--extent",
        "-0.2,0.2,0.8,1.2",
        "--resolution",
        "9,9",
        "--plot",
        svg.to_str().unwrap(),
        "--plot-quantity",
        "b",
    ]);
    let svg_text = std::fs::read_to_string(&svg).unwrap();
    assert!(svg_text.contains("fence") && !svg_text.contains("icnirp"));

    // Bad values exit 2 naming the file and the key.
    for (from, to, parts) in [
        (
            "max_distance = \"5 m\"",
            "max_distanse = 5.0",
            &["d.toml", "clearance", "max_distanse", "unknown key"][..],
        ),
        (
            "distances = [0.05, 1.0]",
            "distances = [0.05, -1.0]",
            &["d.toml", "distances[1]", "negative"][..],
        ),
        (
            "quantity = \"B\"",
            "quantity = \"H\"",
            &["d.toml", "clearance threshold 'fence'", "quantity"][..],
        ),
        (
            "limit = \"20 uT\"",
            "limit = nan",
            &["d.toml", "limit", "not finite"][..],
        ),
    ] {
        let bad = design_file(dir.path(), "bad.toml", &text.replace(from, to));
        let mut want = parts.to_vec();
        want[0] = "bad.toml";
        expect_bad(&["clearance", bad.to_str().unwrap()], &want);
    }
}

/// `map --plot` draws coincident threshold contours as one line and notes the thresholds
/// outside the plotted range. The demo bench-fields.toml at 300 kHz has two ICNIRP 2020 B
/// levels of equal value, the public local and the occupational whole-body reference levels,
/// both mu0 x 4.9 A/m / f(MHz) rms as solver/src/thresholds.rs quotes them (ICNIRP 2020,
/// Health Phys. 118(5):483-524; the whole-body values from memory there), and the test adds a site limit of its own (invented) rounded to 20.53 µT rms, 2.4e-4 above
/// them (1e-4 decades): the plotting rule (cli/plot.rs `plan_contours`) draws levels within
/// one of 256 colour shades of the map's log range as one line, and this map spans more than
/// a decade, so a shade is over 0.004 decades. The three are one line, one legend entry naming
/// all three; the thresholds above the map's largest |B| (from the summary, peak = rms x
/// sqrt 2 for rms levels, from `clearance`'s JSON) get a note in the legend and one warning
/// each, and no line.
#[test]
fn map_plot_merges_coincident_contours_and_notes_levels_outside_the_range() {
    let dir = tempfile::tempdir().unwrap();
    let demo = std::fs::read_to_string(root().join("meshes-demo/bench-fields.toml")).unwrap();
    let text = format!(
        "{demo}\n# Invented for this test: a site limit set by hand near an exposure level.\n\
         [[clearance.threshold]]\nname = \"site_fence\"\nquantity = \"B\"\n\
         limit = \"20.53 uT\"\nbasis = \"rms\"\nsource = \"invented for this test\"\n"
    );
    let d = design_file(dir.path(), "d.toml", &text);
    let d = d.to_str().unwrap();
    let svg_path = dir.path().join("m.svg");
    let summary = json_of(&[
        "map",
        d,
        "--plane",
        "xz",
        "--extent",
        "0.3,1.5,0,1.2",
        "--resolution",
        "25,25",
        "--plot",
        svg_path.to_str().unwrap(),
        "--plot-quantity",
        "b",
    ]);
    let svg = std::fs::read_to_string(&svg_path).unwrap();
    let texts = svg_texts(&svg);
    let merged = [
        "icnirp2020_public_local_b",
        "icnirp2020_occupational_whole_body_b",
        "site_fence",
    ];
    // One legend entry names all three; none names one of them alone.
    let naming: Vec<&String> = texts
        .iter()
        .filter(|t| merged.iter().any(|n| t.contains(&format!("{n}: peak"))))
        .collect();
    assert_eq!(naming.len(), 1, "{naming:?}");
    for n in merged {
        assert!(
            naming[0].contains(&format!("{n}: peak 29.0 µT")),
            "{}",
            naming[0]
        );
    }
    // Lines drawn: one colour per line (each with its legend swatch), as many as the legend's
    // line entries.
    let lines: Vec<&String> = texts
        .iter()
        .filter(|t| t.contains(": peak") && !t.ends_with("not drawn"))
        .collect();
    let colours: std::collections::BTreeSet<&str> = svg
        .split("<polyline")
        .skip(1)
        .filter(|t| t.contains("stroke-width=\"2\""))
        .filter_map(|t| t.split("stroke=\"").nth(1)?.split('"').next())
        .collect();
    assert_eq!(colours.len(), lines.len(), "{colours:?} vs {lines:?}");

    // The thresholds above the map's largest |B| are noted, in the legend and once each in the
    // warnings, in the same words.
    let max_b = f(&summary["max_b_mag_t"]);
    let clearance = json_of(&["clearance", d, "--format", "json"]);
    let above: Vec<String> = clearance["thresholds"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|t| t["quantity"] == "B")
        .filter(|t| {
            let factor = if t["basis"] == "rms" {
                2f64.sqrt()
            } else {
                1.0
            };
            f(&t["limit"]) * factor > max_b
        })
        .map(|t| t["name"].as_str().unwrap().to_string())
        .collect();
    assert!(!above.is_empty(), "no threshold above {max_b} T");
    let notes: Vec<&String> = texts.iter().filter(|t| t.ends_with("not drawn")).collect();
    assert_eq!(notes.len(), above.len(), "{notes:?} vs {above:?}");
    let warnings: Vec<&str> = summary["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w.as_str().unwrap())
        .collect();
    for name in &above {
        let note: Vec<&&String> = notes
            .iter()
            .filter(|t| t.starts_with(&format!("{name}: peak")))
            .collect();
        assert_eq!(note.len(), 1, "{name}: {notes:?}");
        assert!(note[0].contains("above this map's maximum"), "{}", note[0]);
        let want = format!("heat map contour: {}", note[0]);
        assert_eq!(
            warnings.iter().filter(|w| **w == want).count(),
            1,
            "{want} in {warnings:?}"
        );
        assert!(!lines.iter().any(|l| l.contains(name.as_str())), "{name}");
    }
}

#[test]
fn clearance_of_the_resonator_is_consistent_with_field() {
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", RESONATOR);
    let d = d.to_str().unwrap();
    let j = json_of(&["clearance", d, "--format", "json", "--distance", "0.5,2"]);
    assert!(j["caution"].as_str().unwrap().contains("local regulations"));
    let ths = j["thresholds"].as_array().unwrap();
    let get = |n: &str| {
        ths.iter()
            .find(|t| t["name"] == n)
            .unwrap_or_else(|| panic!("{n}"))
    };
    for t in ths {
        for key in ["quantity", "limit", "unit", "source"] {
            assert!(!t[key].is_null(), "{} lacks {key}", t["name"]);
        }
        // Distances are null only for a threshold never exceeded outside the conductors.
        let never = t["never_exceeded"].as_bool().expect("never_exceeded");
        for key in ["distance_from_axis_m", "distance_from_top_m"] {
            assert_eq!(t[key].is_null(), never, "{} {key}", t["name"]);
        }
    }
    // A lower limit of the same quantity cannot give a smaller distance.
    for (lo, hi) in [
        ("icnirp2010_public_e", "icnirp2010_occupational_e"),
        ("icnirp2010_public_b", "icnirp2010_occupational_b"),
        (
            "icnirp2020_public_local_e",
            "icnirp2020_occupational_local_e",
        ),
    ] {
        assert!(f(&get(lo)["distance_from_axis_m"]) >= f(&get(hi)["distance_from_axis_m"]));
    }
    assert!(
        get("icnirp2020_public_whole_body_e")["source"]
            .as_str()
            .unwrap()
            .contains("from memory")
    );
    // At the crossing the field equals the limit: check one E distance with `field`.
    let t = get("icnirp2010_public_e");
    let best = t["by_height"]
        .as_array()
        .unwrap()
        .iter()
        .max_by(|a, b| f(&a["distance_from_axis_m"]).total_cmp(&f(&b["distance_from_axis_m"])))
        .unwrap();
    let r = f(&best["distance_from_axis_m"]);
    let h = 0.10 + f(&best["height_m"]);
    let limit_peak = 83.0 * 2f64.sqrt();
    let probe = |x: f64| {
        let at = format!("{x},0,{h}");
        let fj = json_of(&["field", d, "--at", &at, "--format", "json"]);
        f(&fj["points"][0]["e_mag_v_per_m"])
    };
    // Searched at four azimuths; the field is axisymmetric, so +x is one of them.
    assert!(probe(r + 0.01) < limit_peak, "beyond the crossing");
    assert!(probe(r - 0.01) >= limit_peak * 0.999, "inside the crossing");
    // `at_distances` lie where they say: on the report distances from the axis, at the top
    // conductor's height (their values come from the one evaluator checked above).
    for a in j["at_distances"].as_array().unwrap() {
        let p = a["position_m"].as_array().unwrap();
        let r = f(&p[0]).hypot(f(&p[1]));
        assert!(rel(r, f(&a["distance_from_axis_m"])) < 1e-12, "{a}");
    }
}

#[test]
fn field_csv_and_table_agree_with_json_and_the_box_grid_reads_back() {
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", RESONATOR);
    let d = d.to_str().unwrap();
    let args = ["field", d, "--at", "0.5,0,0.3", "--at", "-0.2,0.1,0.9"];
    let j = json_of(&[&args[..], &["--format", "json"]].concat());
    let out = run_ok(&[&args[..], &["--format", "csv"]].concat());
    let text = String::from_utf8(out.stdout).unwrap();
    let mut lines = text.lines();
    assert_eq!(
        lines.next().unwrap(),
        "x_m,y_m,z_m,ex_v_per_m,ey_v_per_m,ez_v_per_m,e_mag_v_per_m,bx_t,by_t,bz_t,b_mag_t"
    );
    for (k, line) in lines.enumerate() {
        let v: Vec<f64> = line.split(',').map(|c| c.parse().unwrap()).collect();
        let p = &j["points"][k];
        // serde_json's default float parser may be 1 ulp off; the printed digits agree.
        assert!(rel(v[6], f(&p["e_mag_v_per_m"])) < 1e-15);
        assert!(rel(v[10], f(&p["b_mag_t"])) < 1e-15);
        assert!(rel(v[3], f(&p["e_field_v_per_m"][0])) < 1e-15);
    }
    let out = run(&[&args[..], &["--format", "table"]].concat());
    let table = String::from_utf8(out.stdout).unwrap();
    assert!(table.contains("(0.5, 0, 0.3)") && table.contains("V/m") && table.contains("T"));

    // The 3-D box form: a RectilinearGrid of NX x NY x NZ points, x fastest.
    let vtr = dir.path().join("box.vtr");
    let s = json_of(&[
        "map",
        d,
        "--box",
        "0.3,0.5,-0.1,0.1,0.2,0.4",
        "--resolution",
        "3,2,2",
        "--vtk",
        vtr.to_str().unwrap(),
    ]);
    assert_eq!(s["n_points"], 12);
    let g = read_vtk(&vtr);
    assert_eq!(g["dimensions"], serde_json::json!([3, 2, 2]));
    let p1 = &g["points"][1];
    assert_eq!((f(&p1[0]), f(&p1[1]), f(&p1[2])), (0.4, -0.1, 0.2));
    let p3 = &g["points"][3];
    assert_eq!((f(&p3[0]), f(&p3[1]), f(&p3[2])), (0.3, 0.1, 0.2));
}

#[test]
fn map_and_field_agree_on_a_wire_inside_an_electrode_and_in_free_air() {
    // One evaluator, one rule: a 3 x 2 grid whose points are on the secondary's wire (turn
    // 100 of the ring model: 55 mm from the axis, z = 0.10 m + 100.5 pitches), inside the
    // torus's tube (0.12, 0, 0.62) and in free air, through `map` (VTK read back by the real
    // VTK library) and `field --points` (JSON): the same values and the same markers (NaN in
    // VTK, null in JSON), and the same reasons in the warnings. Before, `map` gave a value of E
    // on the wire where `field` gave none.
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", RESONATOR);
    let d = d.to_str().unwrap();
    let z_wire = 0.10 + 100.5 * 0.45 / 900.0;
    let vtr = dir.path().join("m.vtr");
    let summary = json_of(&[
        "map",
        d,
        "--plane",
        "xz",
        "--extent",
        &format!("0.055,0.185,{z_wire:?},0.62"),
        "--resolution",
        "3,2",
        "--vtk",
        vtr.to_str().unwrap(),
    ]);
    assert_eq!(summary["n_points"], 6);
    let map_warnings = summary["warnings"].to_string();
    assert!(
        map_warnings.contains("on a winding's wire"),
        "{map_warnings}"
    );
    assert!(
        map_warnings.contains("inside electrode 'topload'"),
        "{map_warnings}"
    );
    let j = read_vtk(&vtr);
    let pts = j["points"].as_array().unwrap();
    let data = &j["point_data"];
    let mut text = String::from("x,y,z\n");
    for p in pts {
        text.push_str(&format!("{:?},{:?},{:?}\n", f(&p[0]), f(&p[1]), f(&p[2])));
    }
    let csv = dir.path().join("p.csv");
    std::fs::write(&csv, text).unwrap();
    let fj = json_of(&[
        "field",
        d,
        "--points",
        csv.to_str().unwrap(),
        "--format",
        "json",
    ]);
    let fp = fj["points"].as_array().unwrap();
    assert_eq!(fp.len(), 6);
    let field_warnings = fj["warnings"].to_string();
    let (mut on_wire, mut inside, mut free) = (0, 0, 0);
    for (k, p) in fp.iter().enumerate() {
        let (x, z) = (f(&pts[k][0]), f(&pts[k][2]));
        let wire = (x - 0.055).hypot(z - z_wire) < 2e-4;
        let torus = (x - 0.12).hypot(z - 0.62) < 0.04;
        for (vtk_vec, vtk_mag, key_vec, key_mag) in [
            (
                "E_V_per_m",
                "E_mag_V_per_m",
                "e_field_v_per_m",
                "e_mag_v_per_m",
            ),
            ("B_T", "B_mag_T", "b_field_t", "b_mag_t"),
        ] {
            let m = f(&data[vtk_mag]["values"][k]);
            if wire || torus {
                assert!(
                    m.is_nan(),
                    "point {k} ({x}, {z}): {vtk_mag} = {m} in the map"
                );
                assert!(
                    p[key_mag].is_null() && p[key_vec].is_null(),
                    "point {k}: {p}"
                );
                continue;
            }
            assert_eq!(m, f(&p[key_mag]), "point {k}: {vtk_mag}");
            for c in 0..3 {
                assert_eq!(
                    f(&data[vtk_vec]["values"][k][c]),
                    f(&p[key_vec][c]),
                    "point {k}: {vtk_vec}[{c}]"
                );
            }
            assert!(m > 0.0);
        }
        on_wire += usize::from(wire);
        inside += usize::from(torus);
        free += usize::from(!wire && !torus);
    }
    assert_eq!((on_wire, inside, free), (1, 1, 4));
    assert!(
        field_warnings.contains("on a winding's wire"),
        "{field_warnings}"
    );
    assert!(
        field_warnings.contains("inside electrode 'topload'"),
        "{field_warnings}"
    );
}

#[test]
fn each_reason_for_no_value_has_its_own_warning() {
    // Before, a point beyond the model's range read as "on a winding's wire". Now: on a wire,
    // inside an electrode (tested above) and beyond the model's range, each in its own words.
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", &dipole_loop());
    let d = d.to_str().unwrap();
    let j = json_of(&[
        "field",
        d,
        "--at",
        "0,0,1e155",
        "--at",
        "0,0,1e60",
        "--format",
        "json",
    ]);
    let w = j["warnings"].to_string();
    assert!(
        w.contains("--at 0,0,1e155") && w.contains("beyond the model's range"),
        "{w}"
    );
    assert!(!w.contains("wire"), "{w}");
    let p = &j["points"][0];
    for key in ["e_field_v_per_m", "e_mag_v_per_m", "b_field_t", "b_mag_t"] {
        assert!(p[key].is_null(), "{key}: {}", p[key]);
    }
    // 1e60 m is within range: a value, and no warning about it.
    assert!(j["points"][1]["b_mag_t"].as_f64().is_some());
    assert!(!w.contains("1e60"), "{w}");
}

#[test]
fn map_summary_sets_aside_the_edge_at_the_grounded_base_and_names_it() {
    // The secondary's base (z = 0.10 m, held at 0 V) is a rim of the thin-sheet model: a grid
    // point 0.2 mm from it read 2.3 MV/m, five times the field anywhere else on this grid (the
    // top at 150 kV), and the summary reported it as the map's peak. Now it is set aside and
    // named: how many points, the largest value among them and its place.
    let dir = tempfile::tempdir().unwrap();
    let d = design_file(dir.path(), "d.toml", RESONATOR);
    let vtr = dir.path().join("m.vtr");
    let j = json_of(&[
        "map",
        d.to_str().unwrap(),
        "--plane",
        "xz",
        "--extent",
        "0,0.2,0,0.3",
        "--resolution",
        "41,31",
        "--vtk",
        vtr.to_str().unwrap(),
    ]);
    let near = &j["near_edge"];
    assert!(near["points_skipped"].as_u64().unwrap() >= 1, "{near}");
    let at = near["max_e_at_m"].as_array().unwrap();
    // At the base rim: 55 mm from the axis, z = 0.10 m.
    assert!(
        (f(&at[0]) - 0.055).abs() < 1e-9 && (f(&at[2]) - 0.10).abs() < 1e-9,
        "{near}"
    );
    let edge = f(&near["max_e_mag_v_per_m"]);
    let peak = f(&j["max_e_mag_v_per_m"]);
    assert!(edge > 3.0 * peak, "edge {edge} vs peak {peak}");
    // The summary's peak is away from the base rim.
    let p = j["max_e_at_m"].as_array().unwrap();
    assert!((f(&p[0]) - 0.055).hypot(f(&p[2]) - 0.10) > 0.01, "{p:?}");
    let w = j["warnings"].to_string();
    assert!(
        w.contains("conductor edge") && w.contains("(0.05500000000000001, 0, 0.1)")
            || w.contains("(0.055, 0, 0.1)"),
        "{w}"
    );
}
