//! The catalogue of bad input, end to end: each case writes a broken design file, runs
//! `coilfield inductance FILE --format json` and checks the contract for bad input: exit code 2,
//! `error: <message>` on stderr naming the file, the winding and the key, nothing on stdout, and
//! no panic.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A valid two-winding design; each case breaks one thing in it.
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

[[winding]]
name = "primary"
shape = "spiral"
role = "primary"
origin = [0.0, 0.0, 0.08]
axis = [0.0, 0.0, 1.0]
inner_radius = "70 mm"
outer_radius = "130 mm"
turns = 6
wire_diameter = "AWG 10"
"#;

/// `GOOD` with one exact line replaced; panics if the line is not there, so a change to `GOOD`
/// cannot silently turn a case into a valid file.
fn good_with(old: &str, new: &str) -> String {
    assert!(GOOD.contains(old), "GOOD has no line {old:?}");
    GOOD.replacen(old, new, 1)
}

fn write(dir: &Path, text: &str) -> PathBuf {
    let path = dir.join("design.toml");
    std::fs::write(&path, text).expect("write the design file");
    path
}

fn run_inductance(path: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_coilfield"))
        .arg("inductance")
        .arg(path)
        .args(["--format", "json"])
        .output()
        .expect("run coilfield")
}

/// Run on `path` and check the bad-input contract; return stderr for case-specific checks.
fn expect_bad_input(path: &Path, parts: &[&str]) -> String {
    let out = run_inductance(path);
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    assert_eq!(
        out.status.code(),
        Some(2),
        "exit status {:?}, stderr:\n{stderr}",
        out.status
    );
    assert!(
        !stderr.contains("panicked"),
        "panic on bad input:\n{stderr}"
    );
    assert!(stderr.starts_with("error: "), "stderr:\n{stderr}");
    assert!(
        out.stdout.is_empty(),
        "stdout should be empty on bad input, got:\n{}",
        String::from_utf8_lossy(&out.stdout)
    );
    let label = path.display().to_string();
    assert!(
        stderr.contains(&label),
        "stderr does not name {label}:\n{stderr}"
    );
    for part in parts {
        assert!(stderr.contains(part), "stderr lacks {part:?}:\n{stderr}");
    }
    stderr
}

/// Write `text` to a fresh temporary design file and expect the bad-input contract.
fn case(text: &str, parts: &[&str]) -> String {
    let dir = tempfile::tempdir().expect("temporary folder");
    let path = write(dir.path(), text);
    expect_bad_input(&path, parts)
}

#[test]
fn control_the_unbroken_design_is_accepted() {
    // Every case below must fail because of its one change, not because the base is invalid.
    let dir = tempfile::tempdir().unwrap();
    let path = write(dir.path(), GOOD);
    let out = run_inductance(&path);
    assert!(
        out.status.success(),
        "the base design is refused:\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn missing_key() {
    case(
        &good_with("radius = 0.05\n", ""),
        &["winding 'secondary'", "key 'radius'", "missing"],
    );
}

#[test]
fn unknown_key() {
    case(
        &good_with("radius = 0.05", "radios = 0.05"),
        &[
            "winding 'secondary'",
            "key 'radios'",
            "unknown key",
            "radius",
        ],
    );
}

#[test]
fn wrong_type() {
    case(
        &good_with("turns = 800", "turns = \"eight hundred\""),
        &["winding 'secondary'", "key 'turns'", "wrong type"],
    );
}

#[test]
fn negative_size() {
    case(
        &good_with("radius = 0.05", "radius = -0.05"),
        &[
            "winding 'secondary'",
            "key 'radius'",
            "must be a positive length in metres, got -0.05",
        ],
    );
}

#[test]
fn zero_size() {
    case(
        &good_with("length = 0.40", "length = 0.0"),
        &["winding 'secondary'", "key 'length'", "positive", "got 0"],
    );
}

#[test]
fn nan_size() {
    case(
        &good_with("radius = 0.05", "radius = nan"),
        &["winding 'secondary'", "key 'radius'", "NaN", "not finite"],
    );
}

#[test]
fn inf_size() {
    case(
        &good_with("outer_radius = \"130 mm\"", "outer_radius = inf"),
        &[
            "winding 'primary'",
            "key 'outer_radius'",
            "inf",
            "not finite",
        ],
    );
}

#[test]
fn zero_turns() {
    case(
        &good_with("turns = 6", "turns = 0"),
        &[
            "winding 'primary'",
            "key 'turns'",
            "positive number of turns",
        ],
    );
}

#[test]
fn wire_thicker_than_the_pitch() {
    // 800 turns on 0.40 m is a 0.5 mm pitch; 0.6 mm wire cannot fit.
    case(
        &good_with("wire_diameter = 0.0004", "wire_diameter = \"0.6 mm\""),
        &[
            "winding 'secondary'",
            "key 'length'",
            "pitch",
            "a length above 0.48 m for 800 turns",
        ],
    );
}

#[test]
fn close_wound_length_below_the_enamelled_wire() {
    // 800 turns of 0.4 mm wire with 0.05 mm of enamel need 800 x 0.5 mm = 0.40 m; 0.39 m is
    // refused, naming the smallest valid pitch and length.
    let text = good_with("length = 0.40", "length = 0.39").replace(
        "wire_diameter = 0.0004",
        "wire_diameter = 0.0004\ninsulation = \"0.05 mm\"",
    );
    case(
        &text,
        &[
            "key 'length'",
            "0.0005 m insulated",
            "smallest valid pitch is the insulated diameter, 0.0005 m",
            "a length of 0.4 m for 800 turns",
        ],
    );
}

#[test]
fn windings_whose_wires_intersect() {
    // The spiral moved up into the plane of the helix's first turn and reaching inside its
    // radius: its wire crosses the secondary's.
    let text = good_with("origin = [0.0, 0.0, 0.08]", "origin = [0.0, 0.0, 0.10]").replacen(
        "inner_radius = \"70 mm\"",
        "inner_radius = \"30 mm\"",
        1,
    );
    case(
        &text,
        &[
            "winding 'primary'",
            "key 'origin'",
            "winding 'secondary'",
            "touches or crosses",
        ],
    );
}

#[test]
fn duplicate_names() {
    case(
        &good_with("name = \"primary\"", "name = \"secondary\""),
        &["winding #2", "key 'name'", "'secondary'", "already used"],
    );
}

#[test]
fn empty_file() {
    case("", &["empty", "[[winding]]"]);
}

#[test]
fn missing_file() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("no-such-design.toml");
    expect_bad_input(&path, &[]);
}

#[test]
fn file_too_large() {
    // 17 MiB of comment lines: valid TOML, refused for its size before it is read.
    let dir = tempfile::tempdir().unwrap();
    let line = format!("#{}\n", "x".repeat(1023));
    let text = line.repeat(17 * 1024);
    assert!(text.len() > 16 * 1024 * 1024);
    let path = write(dir.path(), &text);
    let stderr = expect_bad_input(&path, &[]);
    let lower = stderr.to_lowercase();
    assert!(
        lower.contains("large") || lower.contains("limit") || lower.contains("bytes"),
        "the message does not say the file is too large:\n{stderr}"
    );
}

#[test]
fn unknown_version() {
    case(
        &format!("version = 2\n{GOOD}"),
        &["key 'version'", "version 2"],
    );
}

#[test]
fn tap_beyond_the_primarys_turns() {
    case(
        &good_with("turns = 6\n", "turns = 6\ntap_turns = 6.5\n"),
        &[
            "winding 'primary'",
            "key 'tap_turns'",
            "6.5 turns",
            "6 turns",
        ],
    );
}

#[test]
fn tap_on_the_secondary() {
    case(
        &good_with("turns = 800\n", "turns = 800\ntap_turns = 400\n"),
        &["winding 'secondary'", "key 'tap_turns'", "primary"],
    );
}

#[test]
fn tap_from_a_helix_end_on_a_spiral() {
    case(
        &good_with(
            "turns = 6\n",
            "turns = 6\ntap_turns = 3\ntap_from = \"bottom\"\n",
        ),
        &["winding 'primary'", "key 'tap_from'", "outer, inner"],
    );
}
