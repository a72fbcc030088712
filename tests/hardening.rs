//! Hostile and careless input, end to end (project issue 11): every case here once panicked,
//! printed inf or NaN with exit 0, or ran without bound. Each now ends with exit code 2 and a
//! message naming the key, before any work.

mod common;

use common::{bin, root};
use std::path::Path;
use std::process::{Command, Output};

/// A one-helix design with `radius`, `turns`, `wire_diameter` and `name` as given (TOML text).
fn helix(name: &str, radius: &str, turns: &str, wire: &str) -> String {
    format!(
        "version = 1\n[[winding]]\nname = \"{name}\"\nshape = \"helix\"\nrole = \"secondary\"\n\
         origin = [0.0, 0.0, 0.10]\naxis = [0.0, 0.0, 1.0]\nradius = {radius}\n\
         length = \"450 mm\"\nturns = {turns}\nwire_diameter = {wire}\n"
    )
}

fn run_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(bin())
        .current_dir(dir)
        .args(args)
        .output()
        .expect("run coilfield")
}

/// Exit 2, no panic, nothing on stdout, stderr naming every part; returns stderr.
fn refused(out: &Output, parts: &[&str]) -> String {
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(out.status.code(), Some(2), "stderr:\n{stderr}");
    assert!(!stderr.contains("panicked"), "panic:\n{stderr}");
    assert!(
        out.stdout.is_empty(),
        "stdout: {}",
        String::from_utf8_lossy(&out.stdout)
    );
    for p in parts {
        assert!(stderr.contains(p), "stderr lacks {p:?}:\n{stderr}");
    }
    stderr
}

fn inductance(dir: &Path, text: &str) -> Output {
    std::fs::write(dir.join("d.toml"), text).unwrap();
    run_in(dir, &["inductance", "d.toml"])
}

#[test]
fn a_winding_of_almost_no_turns_is_refused_not_a_panic() {
    let dir = tempfile::tempdir().unwrap();
    let out = inductance(dir.path(), &helix("s", "0.055", "1e-10", "\"AWG 26\""));
    refused(&out, &["d.toml", "winding 's'", "'turns'", "0.01"]);
}

#[test]
fn a_name_of_65534_characters_is_refused_and_elided() {
    let dir = tempfile::tempdir().unwrap();
    let long = "a".repeat(65_534);
    let out = inductance(dir.path(), &helix(&long, "0.055", "900", "\"AWG 26\""));
    let stderr = refused(&out, &["d.toml", "'name'", "65534 characters", "64"]);
    assert!(
        stderr.len() < 600,
        "message not elided: {} bytes",
        stderr.len()
    );
    // 64 characters are still a name.
    let ok = inductance(
        dir.path(),
        &helix(&"b".repeat(64), "0.055", "900", "\"AWG 26\""),
    );
    assert!(
        ok.status.success(),
        "{}",
        String::from_utf8_lossy(&ok.stderr)
    );
}

#[test]
fn sizes_outside_a_nanometre_to_100_km_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    for (radius, wire, key) in [
        ("1e308", "\"AWG 26\"", "'radius'"),
        ("0.055", "1e-308", "'wire_diameter'"),
        ("1e5", "1e-9", ""),
    ] {
        let out = inductance(dir.path(), &helix("s", radius, "90", wire));
        if key.is_empty() {
            // The ends of the range are accepted and give finite values.
            assert!(
                out.status.success(),
                "{}",
                String::from_utf8_lossy(&out.stderr)
            );
            assert!(!String::from_utf8_lossy(&out.stdout).contains("inf"));
        } else {
            let e = refused(&out, &["d.toml", key, "1e-9 m to 1e5 m"]);
            assert!(e.contains("e308") || e.contains("e-308"), "{e}");
        }
    }
}

#[test]
fn coordinates_beyond_100_km_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let text = std::fs::read_to_string(root().join("meshes-demo/tabletop-resonator.toml"))
        .unwrap()
        .replace("origin = [0.25, 0.0, 0.30]", "origin = [1e250, 0.0, 1e200]");
    let out = inductance(dir.path(), &text);
    refused(&out, &["winding 'pickup'", "'origin[0]'", "1e250", "1e5 m"]);
}

#[test]
fn equal_rings_a_hair_apart_are_refused_not_infinite() {
    // Before: M = inf and k = inf printed in the table with exit 0 (wire of 1e-210 m).
    let dir = tempfile::tempdir().unwrap();
    let ring = |name: &str, z: &str| {
        format!(
            "[[winding]]\nname = \"{name}\"\nshape = \"ring\"\norigin = [0.0, 0.0, {z}]\n\
             axis = [0.0, 0.0, 1.0]\nradius = 0.05\nwire_diameter = 1e-210\n"
        )
    };
    let out = inductance(dir.path(), &(ring("a", "0.0") + &ring("b", "1e-200")));
    refused(&out, &["winding 'a'", "'wire_diameter'"]);
}

#[test]
fn a_thin_cylinder_electrode_and_huge_drive_values_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let base = std::fs::read_to_string(root().join("meshes-demo/tabletop-resonator.toml")).unwrap();
    let cylinder = format!(
        "{base}\n[[electrode]]\nname = \"top\"\nshape = \"cylinder\"\naxis = [0.0, 0.0, 1.0]\n\
         origin = [0.0, 0.0, 0.7]\nradius = 0.05\nlength = 1e-100\n"
    );
    std::fs::write(dir.path().join("c.toml"), cylinder).unwrap();
    let out = run_in(dir.path(), &["capacitance", "c.toml"]);
    refused(&out, &["c.toml", "'length'", "1e-100"]);
    let drive = format!("{base}\n[drive]\nfrequency = 200e3\ncurrents = {{ secondary = 1e308 }}\n");
    std::fs::write(dir.path().join("i.toml"), drive).unwrap();
    let out = run_in(dir.path(), &["field", "i.toml", "--at", "0.3,0,0.3"]);
    refused(&out, &["i.toml", "secondary", "1e308", "A"]);
}

#[test]
fn verify_rows_pass_the_design_checks() {
    // Before: turns = 0 or 1e300 in a solenoid row panicked (index out of bounds) or ran on.
    let dir = tempfile::tempdir().unwrap();
    for entry in std::fs::read_dir(root().join("validation")).unwrap() {
        let p = entry.unwrap().path();
        if p.extension().is_some_and(|e| e == "csv") {
            std::fs::copy(&p, dir.path().join(p.file_name().unwrap())).unwrap();
        }
    }
    let table = dir.path().join("solenoid.csv");
    let original = std::fs::read_to_string(&table).unwrap();
    let first = original.lines().nth(1).unwrap();
    assert!(first.starts_with("0.05,10,"), "{first}");
    for turns in ["0", "1e300"] {
        let row = first.replacen("0.05,10,", &format!("0.05,{turns},"), 1);
        std::fs::write(&table, original.replacen(first, &row, 1)).unwrap();
        let out = run_in(dir.path(), &["verify", "--tables", "."]);
        refused(&out, &["solenoid.csv row 1", "winding 'case'"]);
    }
}

#[test]
fn a_sweep_value_of_5e_324_turns_is_refused_before_any_work() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(
        root().join("meshes-demo/tabletop-resonator.toml"),
        dir.path().join("base.toml"),
    )
    .unwrap();
    std::fs::write(
        dir.path().join("s.toml"),
        "base = \"base.toml\"\nmetrics = [\"coupling.secondary.primary\"]\n[[axis]]\n\
         key = \"winding.primary.turns\"\nvalues = [6, 5e-324]\n",
    )
    .unwrap();
    let out = run_in(dir.path(), &["sweep", "s.toml", "--out", "o.csv"]);
    let e = refused(&out, &["s.toml", "axis #1", "5e-324", "'turns'"]);
    assert!(e.len() < 800, "{e}");
    assert!(
        !dir.path().join("o.csv").exists(),
        "work began before the refusal"
    );
}

#[test]
fn only_regular_files_are_read_and_never_past_the_limit() {
    // Before: a design or sweep base of /dev/zero read until memory ran out.
    let dir = tempfile::tempdir().unwrap();
    let out = run_in(dir.path(), &["inductance", "/dev/zero"]);
    refused(
        &out,
        &["/dev/zero", "not a regular file", "character device"],
    );
    std::fs::write(
        dir.path().join("s.toml"),
        "base = \"/dev/zero\"\nmetrics = [\"self_inductance.s\"]\n[[axis]]\n\
         key = \"winding.s.turns\"\nvalues = [6]\n",
    )
    .unwrap();
    let out = run_in(dir.path(), &["sweep", "s.toml", "--out", "o.csv"]);
    refused(&out, &["/dev/zero", "not a regular file"]);
    let out = run_in(dir.path(), &["inductance", "."]);
    refused(&out, &["not a regular file", "folder"]);
    std::fs::copy(
        root().join("meshes-demo/tabletop-resonator.toml"),
        dir.path().join("d.toml"),
    )
    .unwrap();
    let out = run_in(dir.path(), &["field", "d.toml", "--points", "/dev/zero"]);
    refused(&out, &["--points", "/dev/zero", "not a regular file"]);
}

#[test]
fn invalid_utf8_is_refused_with_its_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("d.toml"), b"version = 1\n# caf\xe9\n").unwrap();
    let out = run_in(dir.path(), &["inductance", "d.toml"]);
    refused(&out, &["d.toml", "invalid UTF-8 at line 2, column 6"]);
}

#[test]
fn a_polyline_of_too_many_points_is_refused_before_any_work() {
    // Before: 1,000,000 points ran past 60 s at 680 MB.
    let dir = tempfile::tempdir().unwrap();
    let points: Vec<String> = (0..20_000)
        .map(|i| format!("[{}, 0.0, 0.0]", i as f64 * 1e-3))
        .collect();
    let text = format!(
        "[[winding]]\nname = \"p\"\nshape = \"polyline\"\nwire_diameter = 1e-4\npoints = [{}]\n",
        points.join(", ")
    );
    let out = inductance(dir.path(), &text);
    refused(&out, &["winding 'p'", "'points'", "20000 points", "10000"]);
}
