//! The CLI's JSON against independent references computed by `validation/reference.py`
//! (mpmath: Maxwell's formula at 30 digits, Neumann's double integral for rings in general
//! position and for straight filaments, the turn-by-turn ring sum, Lorenz's sheet with Rosa's
//! corrections). CI installs mpmath (`.ci/test`).

mod common;

use common::*;
use serde_json::{Value, json};
use std::io::Write;
use std::process::{Command, Stdio};

/// Ask `validation/reference.py` for the reference values of `cases`.
fn references(cases: &[Value]) -> Vec<f64> {
    let mut child = Command::new("python3")
        .arg(root().join("validation/reference.py"))
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("python3 must be installed (.ci/test installs mpmath)");
    child
        .stdin
        .take()
        .unwrap()
        .write_all(serde_json::to_string(cases).unwrap().as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    assert!(
        out.status.success(),
        "reference.py failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let values: Vec<Value> = serde_json::from_slice(&out.stdout).unwrap();
    values
        .iter()
        .map(|v| match v {
            Value::String(s) => s.parse().unwrap(),
            other => other.as_f64().unwrap(),
        })
        .collect()
}

#[test]
fn coaxial_rings_match_maxwell_at_30_digits() {
    // (a, b, d) in metres: ordinary, nearly touching (k^2 > 0.9999) and 100-1000 radii apart.
    let cases = [
        (1.0, 1.0, 1.0),
        (0.2, 0.1, 0.1),
        (1.0, 1.0, 0.002),
        (1.0, 0.999, 0.0005),
        (0.05, 0.05, 0.0005),
        (1.0, 0.5, 150.0),
        (0.1, 0.1, 100.0),
        (0.3, 0.01, 2.0),
    ];
    let dir = tempfile::tempdir().unwrap();
    let mut computed = Vec::new();
    let mut refs = Vec::new();
    for (i, &(a, b, d)) in cases.iter().enumerate() {
        let text = ring_toml("a", [0.0; 3], [0.0, 0.0, 1.0], a)
            + &ring_toml("b", [0.0, 0.0, d], [0.0, 0.0, 1.0], b);
        let j = inductance_json(&design_file(dir.path(), &format!("c{i}.toml"), &text));
        assert_eq!(j["kernels"][1]["kernel"], "maxwell-coaxial");
        computed.push(j["mutual_h"][0][1].as_f64().unwrap());
        refs.push(json!({"kind": "maxwell", "a": a, "b": b, "d": d}));
    }
    for ((got, want), case) in computed.iter().zip(references(&refs)).zip(cases) {
        assert!(rel(*got, want) < 1e-12, "{case:?}: {got} vs {want}");
    }
}

#[test]
fn rings_in_general_position_match_neumanns_double_integral() {
    // (rp, rs, centre, normal): offset, tilted, crossing the other's axis, far off.
    let cases = [
        (0.2, 0.1, [0.1, 0.0, 0.1], [0.0, 0.0, 1.0]),
        (
            0.2,
            0.1,
            [0.1, 0.0, 0.1],
            [0.5, 0.0, 0.866_025_403_784_438_6],
        ),
        (1.0, 1.0, [3.0, 0.0, 0.0], [0.0, 0.0, 1.0]),
        (
            0.3,
            0.15,
            [0.05, 0.12, -0.08],
            [0.3, -0.4, 0.866_025_403_784_438_6],
        ),
    ];
    let dir = tempfile::tempdir().unwrap();
    let mut computed = Vec::new();
    let mut refs = Vec::new();
    for (i, &(rp, rs, c, n)) in cases.iter().enumerate() {
        let text = ring_toml("p", [0.0; 3], [0.0, 0.0, 1.0], rp) + &ring_toml("s", c, n, rs);
        let j = inductance_json(&design_file(dir.path(), &format!("g{i}.toml"), &text));
        computed.push(j["mutual_h"][0][1].as_f64().unwrap());
        refs.push(json!({"kind": "rings_general", "rp": rp, "rs": rs, "centre": c, "normal": n}));
    }
    for ((got, want), case) in computed.iter().zip(references(&refs)).zip(cases) {
        assert!(rel(*got, want) < 1e-9, "{case:?}: {got} vs {want}");
    }
}

#[test]
fn solenoids_match_the_ring_sum_and_rosa() {
    let cases = [
        (0.05, 10.0, 0.002, 0.001),
        (0.03, 57.0, 0.0011, 0.0008),
        (0.1, 400.0, 0.0005, 0.0004),
    ];
    let dir = tempfile::tempdir().unwrap();
    let mut refs = Vec::new();
    let mut computed = Vec::new();
    for (i, &(a, n, p, d)) in cases.iter().enumerate() {
        let text = format!(
            "[[winding]]\nname = \"s\"\nshape = \"helix\"\norigin = [0.0, 0.0, 0.0]\naxis = [0.0, 0.0, 1.0]\nradius = {a:?}\nlength = {:?}\nturns = {n:?}\nwire_diameter = {d:?}\n",
            n * p
        );
        let j = inductance_json(&design_file(dir.path(), &format!("s{i}.toml"), &text));
        computed.push(j["windings"][0]["self_inductance_h"].as_f64().unwrap());
        computed.push(j["windings"][0]["cross_check_h"].as_f64().unwrap());
        refs.push(json!({"kind": "ring_sum", "a": a, "n": n, "pitch": p, "wire_d": d}));
        refs.push(json!({"kind": "rosa", "a": a, "n": n, "pitch": p, "wire_d": d}));
    }
    let want = references(&refs);
    for (k, (got, want)) in computed.iter().zip(&want).enumerate() {
        assert!(rel(*got, *want) < 1e-11, "case {k}: {got} vs {want}");
    }
    // The two routes agree to ~5e-5 (Rosa & Grover 1912).
    for pair in computed.chunks(2) {
        assert!(rel(pair[0], pair[1]) < 2e-4, "{pair:?}");
    }
}

#[test]
fn square_loops_match_neumanns_double_integral() {
    // Two closed square polylines, one above the other and twisted: sum over piece pairs.
    let lower = [
        [-0.1, -0.1, 0.0],
        [0.1, -0.1, 0.0],
        [0.1, 0.1, 0.0],
        [-0.1, 0.1, 0.0],
    ];
    let upper = [
        [-0.05, -0.08, 0.04],
        [0.09, -0.02, 0.05],
        [0.03, 0.1, 0.06],
        [-0.07, 0.05, 0.05],
    ];
    let poly = |name: &str, pts: &[[f64; 3]; 4]| {
        let list: Vec<String> = pts
            .iter()
            .map(|p| format!("[{:?}, {:?}, {:?}]", p[0], p[1], p[2]))
            .collect();
        format!(
            "[[winding]]\nname = \"{name}\"\nshape = \"polyline\"\npoints = [{}]\nclosed = true\nwire_diameter = 0.001\n\n",
            list.join(", ")
        )
    };
    let dir = tempfile::tempdir().unwrap();
    let text = poly("lower", &lower) + &poly("upper", &upper);
    let j = inductance_json(&design_file(dir.path(), "sq.toml", &text));
    assert_eq!(j["kernels"][1]["kernel"], "neumann-segments");
    let m = j["mutual_h"][0][1].as_f64().unwrap();
    let mut refs = Vec::new();
    for i in 0..4 {
        for k in 0..4 {
            refs.push(json!({"kind": "segments", "p0": lower[i], "p1": lower[(i + 1) % 4], "q0": upper[k], "q1": upper[(k + 1) % 4]}));
        }
    }
    let want: f64 = references(&refs).iter().sum();
    assert!(rel(m, want) < 1e-9, "{m} vs {want}");
}

/// The windings of `validation/images.csv` (invented for the check) over the plane z = 0.
const IMAGE_DESIGN: &str = include_str!("../validation/images_design.toml");

/// Reference of `validation/images.csv` (mpmath image rings, `validation/images_refs.py`).
fn image_reference(case: &str, quantity: &str) -> f64 {
    let text = std::fs::read_to_string(root().join("validation/images.csv")).unwrap();
    let mut rows = csv_rows(&text);
    let row = rows
        .find(|r| r[0] == case && r[1] == quantity)
        .unwrap_or_else(|| panic!("no row {case} {quantity}"));
    row[2].parse().unwrap()
}

/// Rows of a CSV table with quoted fields (RFC 4180), header skipped.
fn csv_rows(text: &str) -> impl Iterator<Item = Vec<String>> + '_ {
    text.lines().skip(1).map(|line| {
        let mut out = vec![String::new()];
        let mut quoted = false;
        for c in line.chars() {
            match c {
                '"' => quoted = !quoted,
                ',' if !quoted => out.push(String::new()),
                _ => out.last_mut().unwrap().push(c),
            }
        }
        out
    })
}

#[test]
fn a_conducting_ground_changes_l_and_m_as_image_rings_do() {
    // Source: validation/images.csv, mpmath 30 digits: Maxwell's formula for each ring against
    // the other winding's rings and their mirror images in the plane (method of images).
    let dir = tempfile::tempdir().unwrap();
    let quantities = [
        ("self_inductance.secondary", 0, 0),
        ("self_inductance.primary", 1, 1),
        ("mutual.secondary.primary", 0, 1),
    ];
    for (case, ground) in [
        ("free_space", "[ground]\nz = 0.0\nconducting = false\n"),
        (
            "conducting_ground",
            "[ground]\nz = 0.0\nconducting = true\n",
        ),
    ] {
        let path = design_file(dir.path(), "d.toml", &format!("{IMAGE_DESIGN}\n{ground}"));
        let json = inductance_json(&path);
        for (q, i, j) in quantities {
            let got = json["mutual_h"][i][j].as_f64().unwrap();
            let want = image_reference(case, q);
            assert!(rel(got, want) < 1e-11, "{case} {q}: {got} vs {want}");
        }
        let warned = json["warnings"]
            .as_array()
            .unwrap()
            .iter()
            .any(|w| w.as_str().unwrap().contains("image windings"));
        assert_eq!(warned, case == "conducting_ground");
        // The sweep metrics take the same path: a one-point sweep of the primary's height.
        std::fs::write(
            dir.path().join("s.toml"),
            "base = \"d.toml\"\nmetrics = [\"self_inductance.secondary\", \
             \"self_inductance.primary\", \"mutual.secondary.primary\"]\n\n[[axis]]\n\
             key = \"winding.primary.origin[2]\"\nvalues = [0.015]\n",
        )
        .unwrap();
        let out_csv = dir.path().join(format!("{case}.csv"));
        let out = run(&[
            "sweep",
            dir.path().join("s.toml").to_str().unwrap(),
            "--out",
            out_csv.to_str().unwrap(),
        ]);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let text = std::fs::read_to_string(&out_csv).unwrap();
        let row: Vec<&str> = text.lines().nth(1).unwrap().split(',').collect();
        for (k, (q, _, _)) in quantities.iter().enumerate() {
            let got: f64 = row[2 + k].parse().unwrap();
            let want = image_reference(case, q);
            assert!(rel(got, want) < 1e-11, "sweep {case} {q}: {got} vs {want}");
        }
    }
}
