//! Helpers shared by the integration tests: run the real binary in a temporary folder.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Path of the built `coilfield` binary.
pub fn bin() -> &'static str {
    env!("CARGO_BIN_EXE_coilfield")
}

/// Repository root.
pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Run `coilfield` with `args`.
pub fn run(args: &[&str]) -> Output {
    Command::new(bin())
        .args(args)
        .output()
        .expect("run coilfield")
}

/// Run `coilfield` with `args`, which must succeed (its stderr in the message if not).
pub fn run_ok(args: &[&str]) -> Output {
    let out = run(args);
    assert!(
        out.status.success(),
        "coilfield {args:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    out
}

/// The stdout of a successful `coilfield` run with `args`.
pub fn stdout_of(args: &[&str]) -> String {
    String::from_utf8(run_ok(args).stdout).expect("UTF-8")
}

/// The JSON a successful `coilfield` run with `args` prints.
pub fn json_of(args: &[&str]) -> serde_json::Value {
    serde_json::from_slice(&run_ok(args).stdout).expect("valid JSON")
}

/// Write `text` as a design file in `dir`.
pub fn design_file(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, text).expect("write design");
    path
}

/// Run `coilfield inductance FILE --format json` and parse the JSON.
pub fn inductance_json(path: &Path) -> serde_json::Value {
    json_of(&["inductance", path.to_str().unwrap(), "--format", "json"])
}

/// A ring winding as TOML.
pub fn ring_toml(name: &str, origin: [f64; 3], axis: [f64; 3], radius: f64) -> String {
    format!(
        "[[winding]]\nname = \"{name}\"\nshape = \"ring\"\norigin = [{:?}, {:?}, {:?}]\naxis = [{:?}, {:?}, {:?}]\nradius = {radius:?}\nwire_diameter = 0.0001\n\n",
        origin[0], origin[1], origin[2], axis[0], axis[1], axis[2]
    )
}

/// Relative difference.
pub fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

/// The texts of an SVG's `<text>` elements in document order, trimmed, with XML's entities
/// decoded (plotters writes `'` as `&apos;`).
pub fn svg_texts(svg: &str) -> Vec<String> {
    svg.split("<text")
        .skip(1)
        .filter_map(|t| {
            let body = &t[t.find('>')? + 1..t.find("</text>")?];
            Some(
                body.trim()
                    .replace("&apos;", "'")
                    .replace("&#39;", "'")
                    .replace("&quot;", "\"")
                    .replace("&lt;", "<")
                    .replace("&gt;", ">")
                    .replace("&amp;", "&"),
            )
        })
        .collect()
}
