//! Bad input of the finite-element electric model's keys (`[[dielectric]]`, `[enclosure]`,
//! `[mesh]`), end to end in the style of `tests/bad_input.rs`: exit code 2, `error: <message>`
//! naming the file, the table and the key, nothing on stdout, no panic.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A valid design: a secondary (radius 50 mm, wire 0.4 mm, z = 0.10..0.50 m) on a PVC form,
/// a ground plane and a grounded room. Invented for these tests.
const GOOD: &str = r#"
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

[ground]
z = 0.0

[[dielectric]]
name = "form"
shape = "tube"
origin = [0.0, 0.0, 0.08]
axis = [0.0, 0.0, 1.0]
inner_radius = "45 mm"
outer_radius = "49.8 mm"
length = "45 cm"
material = "PVC"

[[dielectric]]
name = "plate"
shape = "disc"
origin = [0.0, 0.0, 0.05]
outer_radius = "10 cm"
length = "3 cm"
relative_permittivity = 2.3

[enclosure]
radius = "2 m"
height = "3 m"

[mesh]
density = 1.0
max_elements = 300000
"#;

fn good_with(old: &str, new: &str) -> String {
    assert!(GOOD.contains(old), "GOOD has no line {old:?}");
    GOOD.replacen(old, new, 1)
}

fn run_inductance(path: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_coilfield"))
        .arg("inductance")
        .arg(path)
        .args(["--format", "json"])
        .output()
        .expect("run coilfield")
}

fn write(dir: &Path, text: &str) -> PathBuf {
    let path = dir.join("design.toml");
    std::fs::write(&path, text).expect("write the design file");
    path
}

fn case(text: &str, parts: &[&str]) {
    let dir = tempfile::tempdir().expect("temporary folder");
    let path = write(dir.path(), text);
    let out = run_inductance(&path);
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(out.status.code(), Some(2), "stderr:\n{stderr}");
    assert!(!stderr.contains("panicked"), "panic:\n{stderr}");
    assert!(stderr.starts_with("error: "), "stderr:\n{stderr}");
    assert!(out.stdout.is_empty(), "stdout on bad input");
    assert!(stderr.contains(&path.display().to_string()), "{stderr}");
    for part in parts {
        assert!(stderr.contains(part), "stderr lacks {part:?}:\n{stderr}");
    }
}

#[test]
fn control_the_unbroken_design_is_accepted() {
    let dir = tempfile::tempdir().unwrap();
    let path = write(dir.path(), GOOD);
    let out = run_inductance(&path);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn overlapping_dielectrics() {
    case(
        &good_with("length = \"3 cm\"", "length = \"4 cm\""),
        &[
            "dielectric 'plate'",
            "key 'origin'",
            "overlaps dielectric 'form'",
        ],
    );
}

#[test]
fn zero_permittivity() {
    case(
        &good_with("relative_permittivity = 2.3", "relative_permittivity = 0.0"),
        &["dielectric 'plate'", "key 'relative_permittivity'"],
    );
}

#[test]
fn nan_permittivity() {
    case(
        &good_with("relative_permittivity = 2.3", "relative_permittivity = nan"),
        &[
            "dielectric 'plate'",
            "key 'relative_permittivity'",
            "finite",
        ],
    );
}

#[test]
fn unknown_material() {
    case(
        &good_with("material = \"PVC\"", "material = \"unobtainium\""),
        &["dielectric 'form'", "key 'material'", "PVC"],
    );
}

#[test]
fn dielectric_below_the_ground_plane() {
    // The plate from z = -1 cm to 2 cm: through the ground plane at z = 0.
    case(
        &good_with("origin = [0.0, 0.0, 0.05]", "origin = [0.0, 0.0, -0.01]"),
        &[
            "dielectric 'plate'",
            "key 'origin'",
            "0.01 m below the ground plane",
        ],
    );
}

#[test]
fn dielectric_resting_on_the_ground_plane_is_accepted() {
    let dir = tempfile::tempdir().unwrap();
    let path = write(
        dir.path(),
        &good_with("origin = [0.0, 0.0, 0.05]", "origin = [0.0, 0.0, 0.0]"),
    );
    let out = run_inductance(&path);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn enclosure_that_does_not_enclose() {
    case(
        &good_with("height = \"3 m\"", "height = \"40 cm\""),
        &["enclosure", "key 'height'", "winding 'secondary'", "beyond"],
    );
}

#[test]
fn conductor_touching_the_enclosure() {
    // The secondary's surface is at 50 mm + 0.2 mm from the axis.
    case(
        &good_with("radius = \"2 m\"", "radius = \"50.2 mm\"").replace(
            "outer_radius = \"10 cm\"\nlength = \"3 cm\"",
            "outer_radius = \"4 cm\"\nlength = \"3 cm\"",
        ),
        &["enclosure", "key 'radius'", "touches the enclosure's wall"],
    );
}

#[test]
fn enclosure_without_ground() {
    case(
        &good_with("[ground]\nz = 0.0\n", ""),
        &["enclosure", "key 'radius'", "[ground]"],
    );
}

#[test]
fn element_limit() {
    case(
        &good_with("max_elements = 300000", "max_elements = 3000000"),
        &["mesh", "key 'max_elements'", "too large", "2000000"],
    );
}

#[test]
fn dielectric_off_the_axis() {
    case(
        &good_with("origin = [0.0, 0.0, 0.05]", "origin = [0.01, 0.0, 0.05]"),
        &[
            "dielectric 'plate'",
            "key 'origin'",
            "off the electric axis",
        ],
    );
}
