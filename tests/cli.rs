//! End-to-end tests of the `coilfield` binary: JSON shape, worked examples, signs, the report,
//! the self-check command and atomic output.

mod common;

use common::*;

const WORKED_EXAMPLE: &str = r#"
[[winding]]
name = "solenoid"
shape = "helix"
origin = [0.0, 0.0, 0.0]
axis = [0.0, 0.0, 1.0]
radius = 0.05
length = 0.02
turns = 10
wire_diameter = 0.001
"#;

#[test]
fn json_has_the_documented_shape() {
    let dir = tempfile::tempdir().unwrap();
    let demo = root().join("meshes-demo/tabletop-resonator.toml");
    let _ = dir;
    let j = inductance_json(&demo);
    let windings = j["windings"].as_array().unwrap();
    assert_eq!(windings.len(), 3);
    let names: Vec<&str> = windings
        .iter()
        .map(|w| w["name"].as_str().unwrap())
        .collect();
    assert_eq!(names, ["secondary", "primary", "pickup"]);
    // The shape only: values are checked against independent references elsewhere
    // (tests/properties.rs against a brute-force Neumann sum, tests/validation.rs against
    // published tables).
    for w in windings {
        assert!(w["self_inductance_h"].as_f64().unwrap() > 0.0);
        assert_eq!(w["model"], "ring");
    }
    for key in ["mutual_h", "coupling"] {
        let rows = j[key].as_array().unwrap();
        assert_eq!(rows.len(), 3, "{key}");
        for row in rows {
            let row = row.as_array().unwrap();
            assert_eq!(row.len(), 3, "{key}");
            assert!(row.iter().all(|v| v.as_f64().is_some_and(f64::is_finite)));
        }
    }
    // Coaxial secondary/primary by Maxwell; the tilted pickup by the line integral.
    let kernels = j["kernels"].as_array().unwrap();
    let kernel_of = |a: &str, b: &str| {
        kernels
            .iter()
            .find(|k| k["pair"][0] == a && k["pair"][1] == b)
            .map(|k| k["kernel"].as_str().unwrap().to_string())
            .unwrap()
    };
    assert_eq!(kernel_of("secondary", "primary"), "maxwell-coaxial");
    assert_eq!(kernel_of("secondary", "pickup"), "stack-line-integral");
    assert_eq!(kernel_of("secondary", "secondary"), "toeplitz-ring-sum");
    assert_eq!(kernel_of("primary", "primary"), "ring-sum");
    assert!(j["warnings"].is_array());
}

#[test]
fn worked_solenoid_example_and_its_cross_check() {
    // Worked example: a = 0.05 m, N = 10, p = 2 mm, d = 1 mm; ring sum 15.700160 uH, Lorenz
    // sheet with Rosa's corrections 15.701001 uH (mpmath 30 digits, validation/solenoid.csv;
    // E. B. Rosa & F. W. Grover, Bull. Bureau of Standards 8(1), 1912).
    let dir = tempfile::tempdir().unwrap();
    let path = design_file(dir.path(), "solenoid.toml", WORKED_EXAMPLE);
    let j = inductance_json(&path);
    let w = &j["windings"][0];
    assert!(rel(w["self_inductance_h"].as_f64().unwrap(), 15.700_160e-6) < 1e-6);
    assert!(rel(w["cross_check_h"].as_f64().unwrap(), 15.701_001e-6) < 1e-6);
}

#[test]
fn reversing_one_axis_flips_the_sign_of_m_and_k() {
    let dir = tempfile::tempdir().unwrap();
    let same = ring_toml("a", [0.0; 3], [0.0, 0.0, 1.0], 0.1)
        + &ring_toml("b", [0.0, 0.0, 0.05], [0.0, 0.0, 1.0], 0.08);
    let flipped = ring_toml("a", [0.0; 3], [0.0, 0.0, 1.0], 0.1)
        + &ring_toml("b", [0.0, 0.0, 0.05], [0.0, 0.0, -1.0], 0.08);
    let j1 = inductance_json(&design_file(dir.path(), "same.toml", &same));
    let j2 = inductance_json(&design_file(dir.path(), "flip.toml", &flipped));
    let m1 = j1["mutual_h"][0][1].as_f64().unwrap();
    let m2 = j2["mutual_h"][0][1].as_f64().unwrap();
    assert!(m1 > 0.0);
    assert_eq!(m1, -m2);
    assert!(j2["coupling"][0][1].as_f64().unwrap() < 0.0);
}

#[test]
fn filament_model_of_a_helix_agrees_with_its_ring_model() {
    // Same 10-turn helix, exact helical filament (128 pieces per turn) against the rings; the
    // two differ by the polygon error (< 1e-3 at 128 pieces) and the pitch (O((p/2 pi a)^2)).
    let dir = tempfile::tempdir().unwrap();
    let filament = WORKED_EXAMPLE.replace(
        "wire_diameter = 0.001",
        "wire_diameter = 0.001\nmodel = \"filament\"",
    );
    let j = inductance_json(&design_file(dir.path(), "fil.toml", &filament));
    let w = &j["windings"][0];
    assert_eq!(w["model"], "filament");
    let l_fil = w["self_inductance_h"].as_f64().unwrap();
    let l_ring = w["cross_check_h"].as_f64().unwrap();
    assert!(rel(l_fil, l_ring) < 2e-3, "{l_fil} vs {l_ring}");
    assert!(rel(l_ring, 15.700_160e-6) < 1e-6);
}

#[test]
fn mixed_models_agree_for_an_offset_tilted_pair() {
    // The primary as exact helical filament against the secondary's rings, and both as rings.
    let demo = root().join("meshes-demo/offset-primary.toml");
    let text = std::fs::read_to_string(&demo).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let j_ring = inductance_json(&demo);
    let fil = text.replace(
        "wire_diameter = 0.003",
        "wire_diameter = 0.003\nmodel = \"filament\"",
    );
    let j_fil = inductance_json(&design_file(dir.path(), "fil.toml", &fil));
    assert_eq!(j_ring["kernels"][1]["kernel"], "stack-line-integral");
    assert_eq!(j_fil["kernels"][1]["kernel"], "ring-filament-line-integral");
    let m_ring = j_ring["mutual_h"][0][1].as_f64().unwrap();
    let m_fil = j_fil["mutual_h"][0][1].as_f64().unwrap();
    // A 4-turn primary with a 1 cm pitch on a 9 cm radius: pitch effects ~1e-2 at most.
    assert!(rel(m_fil, m_ring) < 2e-2, "{m_fil} vs {m_ring}");
}

#[test]
fn report_runs_on_the_demo_and_prints_the_caution() {
    let out = run(&[
        "report",
        root()
            .join("meshes-demo/tabletop-resonator.toml")
            .to_str()
            .unwrap(),
    ]);
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("CAUTION"));
    assert!(text.contains("secondary"));
    assert!(text.contains("coupling"));
}

#[test]
fn help_of_every_command_states_units() {
    for cmd in ["inductance", "report", "verify"] {
        let out = run(&[cmd, "--help"]);
        assert!(out.status.success());
        let text = String::from_utf8(out.stdout).unwrap();
        // Each states the unit of what it prints (verify: the relative error of its cases).
        let unit = match cmd {
            "inductance" => "Self-inductance (H)",
            "report" => "inductances (H)",
            _ => "relative error",
        };
        assert!(text.contains(unit), "{cmd} lacks {unit:?}: {text}");
    }
    let out = run(&["--help"]);
    assert!(String::from_utf8(out.stdout).unwrap().contains("metres"));
}

#[test]
fn verify_passes_on_the_built_in_tables_and_reads_every_table() {
    let out = run(&["verify", "--format", "json"]);
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(out.status.success(), "{text}");
    let json: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(json["failed"], 0, "{text}");
    let cases = json["cases"].as_array().unwrap();
    assert!(cases.iter().all(|c| c["passed"] == true));
    assert!(text.contains("Grover"));
    // Every table shipped in validation/ is read (a table added without a reader fails here).
    let read: std::collections::BTreeSet<String> = cases
        .iter()
        .map(|c| c["table"].as_str().unwrap().to_string())
        .collect();
    let shipped: std::collections::BTreeSet<String> = std::fs::read_dir(root().join("validation"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "csv"))
        .map(|p| p.file_stem().unwrap().to_string_lossy().into_owned())
        .collect();
    assert_eq!(
        read, shipped,
        "tables read by verify vs tables in validation/"
    );
}

#[test]
fn verify_recomputes_an_edited_input_row() {
    let dir = copied_tables();
    let table = dir.path().join("maxwell_coaxial.csv");
    let text = std::fs::read_to_string(&table).unwrap();
    let mut lines: Vec<String> = text.lines().map(str::to_owned).collect();
    // Change the first input (a_m) of the first case: 1 -> 1.5 or x -> x * 1.5.
    let mut fields: Vec<String> = lines[1].split(',').map(str::to_owned).collect();
    let a: f64 = fields[0].parse().unwrap();
    fields[0] = format!("{}", a * 1.5);
    lines[1] = fields.join(",");
    std::fs::write(&table, lines.join("\n") + "\n").unwrap();

    let json = |dir: &std::path::Path| -> serde_json::Value {
        let out = run(&[
            "verify",
            "--tables",
            dir.to_str().unwrap(),
            "--format",
            "json",
        ]);
        serde_json::from_slice(&out.stdout).unwrap()
    };
    let edited = json(dir.path());
    let original = json(&root().join("validation"));
    let first = |j: &serde_json::Value| {
        j["cases"]
            .as_array()
            .unwrap()
            .iter()
            .find(|c| c["table"] == "maxwell_coaxial" && c["row"] == 1)
            .unwrap()
            .clone()
    };
    let (e, o) = (first(&edited), first(&original));
    assert_ne!(e["computed"], o["computed"]);
    assert_eq!(e["passed"], false);
    assert_eq!(o["passed"], true);
    assert_eq!(edited["failed"], 1);
}

/// A copy of every table of `validation/` in a temporary folder, for `verify --tables`.
fn copied_tables() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    for entry in std::fs::read_dir(root().join("validation")).unwrap() {
        let p = entry.unwrap().path();
        if p.extension().is_some_and(|e| e == "csv") {
            std::fs::copy(&p, dir.path().join(p.file_name().unwrap())).unwrap();
        }
    }
    dir
}

/// `table` in `dir` with the cell of `column` in data row `row` (1-based) replaced by what
/// `edit` makes of it (the tables are read as CSV, so a quoted source stays one cell).
fn edit_cell(
    dir: &std::path::Path,
    table: &str,
    row: usize,
    column: &str,
    edit: &dyn Fn(&str) -> String,
) {
    let path = dir.join(table);
    let mut reader = csv::Reader::from_path(&path).unwrap();
    let headers = reader.headers().unwrap().clone();
    let k = headers.iter().position(|h| h == column).unwrap();
    let mut writer = csv::Writer::from_writer(Vec::new());
    writer.write_record(&headers).unwrap();
    for (i, record) in reader.records().enumerate() {
        let record = record.unwrap();
        let cells: Vec<String> = record
            .iter()
            .enumerate()
            .map(|(j, v)| {
                if i + 1 == row && j == k {
                    edit(v)
                } else {
                    v.to_string()
                }
            })
            .collect();
        writer.write_record(&cells).unwrap();
    }
    std::fs::write(&path, writer.into_inner().unwrap()).unwrap();
}

/// A finite-element reference changed by 1 % fails its row, and only that row: every row of
/// validation/fem.csv and fem_skfem.csv has a tolerance of at most 0.3 % (the reach of linear
/// elements at density 8; validation/fem_refs.py and fem_skfem.py), and verify recomputes the
/// capacitance rather than trusting the table. The table layout is verify's own: one line per
/// row naming the table and row, then reference, computed value, error and source.
#[test]
fn verify_fails_a_finite_element_row_changed_by_one_percent() {
    for (table, row) in [("fem.csv", 4), ("fem_skfem.csv", 2)] {
        let dir = copied_tables();
        edit_cell(dir.path(), table, row, "reference", &|v| {
            format!("{:e}", v.parse::<f64>().unwrap() * 1.01)
        });
        let out = run(&["verify", "--tables", dir.path().to_str().unwrap()]);
        let text = String::from_utf8(out.stdout).unwrap();
        assert_eq!(out.status.code(), Some(1), "{table}: {text}");
        let name = table.trim_end_matches(".csv");
        let failed: Vec<&str> = text.lines().filter(|l| l.starts_with("FAIL")).collect();
        assert_eq!(failed.len(), 1, "{table}: {failed:?}");
        assert!(
            failed[0].contains(&format!("{name:<16} #{row:<3}")),
            "{table}: {}",
            failed[0]
        );
        assert!(text.ends_with("1 failed\n"), "{table}");
    }
}

/// A bad finite-element row (a size out of range, a word for a number, an unknown case, parts
/// that do not nest) is refused with exit 2 before anything is meshed, naming the file, the
/// row and the column (the row's case is built and checked before it is meshed); never a panic.
#[test]
fn verify_refuses_a_bad_finite_element_row_by_file_row_and_column() {
    type Edit<'a> = &'a dyn Fn(&str) -> String;
    let cases: [(&str, &str, Edit, &[&str]); 5] = [
        (
            "fem.csv",
            "parameters",
            &|v| v.replace("a_m=0.1", "a_m=1e300"),
            &["'a_m'", "1e300"],
        ),
        (
            "fem.csv",
            "parameters",
            &|v| v.replace("a_m=0.1", "a_m=ten"),
            &["'a_m'", "not a number"],
        ),
        (
            "fem.csv",
            "case",
            &|_| "cube".to_string(),
            &["column 'case'", "unknown case 'cube'"],
        ),
        (
            "fem_skfem.csv",
            "parameters",
            &|v| v.replace("b_m=0.3", "b_m=0.12"),
            &["do not nest"],
        ),
        (
            "fem_skfem.csv",
            "parameters",
            &|v| v.replace("density=8", "density=1e9"),
            &["'density'"],
        ),
    ];
    for (table, column, edit, expected) in cases {
        let dir = copied_tables();
        edit_cell(dir.path(), table, 2, column, edit);
        let out = run(&["verify", "--tables", dir.path().to_str().unwrap()]);
        let stderr = String::from_utf8(out.stderr).unwrap();
        assert_eq!(out.status.code(), Some(2), "{table} {column}: {stderr}");
        assert!(stderr.contains(&format!("{table} row 2")), "{stderr}");
        if column == "parameters" {
            assert!(stderr.contains("column 'parameters'"), "{stderr}");
        }
        for e in expected {
            assert!(stderr.contains(e), "{table} {column}: no {e:?} in {stderr}");
        }
        assert!(!stderr.contains("panicked"), "{stderr}");
    }
}

/// `verify` reads and checks every table before it computes any case. Two edits of a copied
/// table set: in `circuits.csv` (read early) a quench run of 1 µs, far shorter than the
/// primary's period 2 pi sqrt(L1 C1) = 4.9 µs (Thomson's formula, common practice), so the
/// simulation finds no notch: a failure only computing the case can show; in
/// `far_field_helix.csv`, the last table read, a negative distance: a bad column. Table by
/// table, the quench's failure would be reported first, after the work of every table before
/// it; reading first, the bad column is refused (exit 2, file, row and column named) and
/// nothing is printed. The quench edit alone is refused by row too, so the order is what the
/// test sees.
#[test]
fn verify_reads_every_table_before_computing_any_case() {
    let dir = copied_tables();
    let short_run = |v: &str| v.replace("duration_s=6e-05", "duration_s=1e-06");
    edit_cell(dir.path(), "circuits.csv", 94, "parameters", &short_run);
    let verify = |dir: &std::path::Path| run(&["verify", "--tables", dir.to_str().unwrap()]);
    let out = verify(dir.path());
    let stderr = String::from_utf8(out.stderr).unwrap();
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("circuits.csv row 94") && stderr.contains("no notch"),
        "{stderr}"
    );

    edit_cell(dir.path(), "far_field_helix.csv", 3, "r_m", &|_| {
        "-1".into()
    });
    let out = verify(dir.path());
    let stderr = String::from_utf8(out.stderr).unwrap();
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("far_field_helix.csv row 3") && stderr.contains("column 'r_m'"),
        "{stderr}"
    );
    assert!(
        !stderr.contains("circuits"),
        "a case was computed first: {stderr}"
    );
    assert!(
        out.stdout.is_empty(),
        "{}",
        String::from_utf8_lossy(&out.stdout)
    );
    assert!(!stderr.contains("panicked"), "{stderr}");
}

#[test]
fn out_file_is_replaced_only_on_success() {
    let dir = tempfile::tempdir().unwrap();
    let out_path = dir.path().join("result.json");
    std::fs::write(&out_path, "precious").unwrap();
    let bad = design_file(dir.path(), "bad.toml", "[[winding]]\nname = \"x\"\n");
    let out = run(&[
        "inductance",
        bad.to_str().unwrap(),
        "--format",
        "json",
        "--out",
        out_path.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert_eq!(std::fs::read_to_string(&out_path).unwrap(), "precious");

    let good = design_file(dir.path(), "good.toml", WORKED_EXAMPLE);
    let out = run(&[
        "inductance",
        good.to_str().unwrap(),
        "--format",
        "json",
        "--out",
        out_path.to_str().unwrap(),
    ]);
    assert!(out.status.success());
    let written: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&out_path).unwrap()).unwrap();
    assert!(
        written["windings"][0]["self_inductance_h"]
            .as_f64()
            .unwrap()
            > 0.0
    );
    // No temporary files left behind.
    let leftovers = std::fs::read_dir(dir.path())
        .unwrap()
        .filter(|e| {
            e.as_ref()
                .unwrap()
                .file_name()
                .to_string_lossy()
                .ends_with(".tmp")
        })
        .count();
    assert_eq!(leftovers, 0);
}

#[test]
fn thread_count_does_not_change_the_answer() {
    let demo = root().join("meshes-demo/tabletop-resonator.toml");
    let one = run(&[
        "--threads",
        "1",
        "inductance",
        demo.to_str().unwrap(),
        "--format",
        "json",
    ]);
    let two = run(&[
        "--threads",
        "2",
        "inductance",
        demo.to_str().unwrap(),
        "--format",
        "json",
    ]);
    assert!(one.status.success() && two.status.success());
    assert_eq!(one.stdout, two.stdout);
}

#[test]
fn open_polyline_warns_about_partial_inductance() {
    let dir = tempfile::tempdir().unwrap();
    let text = "[[winding]]\nname = \"lead\"\nshape = \"polyline\"\npoints = [[0.0, 0.0, 0.0], [0.1, 0.0, 0.0], [0.1, 0.1, 0.0]]\nwire_diameter = 0.001\n";
    let j = inductance_json(&design_file(dir.path(), "open.toml", text));
    let warnings = j["warnings"].as_array().unwrap();
    assert!(
        warnings
            .iter()
            .any(|w| w.as_str().unwrap().contains("partial"))
    );
}

/// Run `coilfield args` with stdout a pipe that the test closes after reading `bytes` bytes;
/// the exit code and stderr.
fn run_with_stdout_closed_early(args: &[&str], bytes: usize) -> (Option<i32>, String) {
    use std::io::Read;
    use std::process::{Command, Stdio};
    let mut child = Command::new(bin())
        .args(args)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("spawn coilfield");
    let mut stdout = child.stdout.take().expect("stdout");
    let mut first = vec![0u8; bytes];
    stdout
        .read_exact(&mut first)
        .expect("the first bytes of stdout");
    // The reader goes away, as `| head -c N` does (at once for N = 0: before the command,
    // which first reads and computes, has written anything).
    drop(stdout);
    let out = child.wait_with_output().expect("wait for coilfield");
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn a_reader_that_closes_stdout_early_stops_the_command_quietly() {
    // A command whose reader goes away (`coilfield verify | head -3`) stops quietly with exit 0
    // and no message (common practice for command-line tools, no source). Before, `print!`
    // panicked on the broken pipe (exit 101). The short outputs (verify's, inductance's) are
    // written after the reader has gone (it closes at once); the field tables (about 3 MB)
    // are far longer than what a pipe holds (64 KiB on Linux) and the reader closes after 8
    // bytes: either way the write meets the closed pipe.
    let dir = tempfile::tempdir().unwrap();
    // A field table of 20,000 points (about 3 MB of text) of an invented ring.
    let design = design_file(
        dir.path(),
        "ring.toml",
        &(ring_toml("loop", [0.0, 0.0, 0.0], [0.0, 0.0, 1.0], 0.1)
            + "[drive]\ncurrents = { loop = 1.0 }\n"),
    );
    let mut points = String::from("x,y,z\n");
    for k in 0..20_000 {
        points += &format!("{},0.3,{}\n", 0.5 + 1e-4 * k as f64, 0.2);
    }
    let points_file = dir.path().join("points.csv");
    std::fs::write(&points_file, points).unwrap();
    let design = design.to_str().unwrap();
    let cases: [Vec<&str>; 4] = [
        vec!["verify"],
        vec!["inductance", design],
        vec![
            "field",
            design,
            "--points",
            points_file.to_str().unwrap(),
            "--format",
            "csv",
        ],
        vec!["field", design, "--points", points_file.to_str().unwrap()],
    ];
    for (k, args) in cases.iter().enumerate() {
        let (code, stderr) = run_with_stdout_closed_early(args, if k < 2 { 0 } else { 8 });
        assert_eq!(code, Some(0), "{args:?}: {stderr}");
        assert!(!stderr.contains("panicked"), "{args:?}: {stderr}");
        assert!(!stderr.contains("error"), "{args:?}: {stderr}");
    }
}

#[test]
fn a_closed_stderr_loses_the_diagnostics_not_the_exit_code() {
    // Standard error a pipe whose reader has gone before anything is written (as
    // `2>&1 | head -c 0` would leave it): std's `eprintln!` panicked on the write (exit 101);
    // the diagnostics are now dropped and the exit code is the command's own: 2 for a missing
    // design file (its message unwritable), 0 for a sweep whose summary line goes to stderr
    // (common practice for command-line tools, no source).
    use std::process::{Command, Stdio};
    let dir = tempfile::tempdir().unwrap();
    let design = design_file(
        dir.path(),
        "ring.toml",
        &ring_toml("loop", [0.0, 0.0, 0.0], [0.0, 0.0, 1.0], 0.1),
    );
    let sweep = dir.path().join("s.toml");
    std::fs::write(
        &sweep,
        format!(
            "base = {:?}\nmetrics = [\"self_inductance.loop\"]\n[[axis]]\nkey = \"winding.loop.radius\"\nfrom = 0.1\nto = 0.2\nsteps = 3\n",
            design.to_str().unwrap()
        ),
    )
    .unwrap();
    let out_csv = dir.path().join("s.csv");
    let missing = dir.path().join("missing.toml");
    let cases: [(Vec<&str>, i32); 2] = [
        (vec!["inductance", missing.to_str().unwrap()], 2),
        (
            vec![
                "sweep",
                sweep.to_str().unwrap(),
                "--out",
                out_csv.to_str().unwrap(),
            ],
            0,
        ),
    ];
    for (args, want) in cases {
        let mut child = Command::new(bin())
            .args(&args)
            .stdout(Stdio::null())
            .stderr(Stdio::piped())
            .spawn()
            .expect("spawn coilfield");
        drop(child.stderr.take());
        let status = child.wait().expect("wait for coilfield");
        assert_eq!(status.code(), Some(want), "{args:?}");
    }
    assert_eq!(
        std::fs::read_to_string(&out_csv).unwrap().lines().count(),
        4,
        "the sweep's header and 3 rows"
    );
}

#[test]
fn every_stdout_writer_of_the_cli_can_meet_a_closed_pipe() {
    // `print!` and `println!` panic when the reader has gone: every command writes stdout
    // through `output::print_stdout`, which returns the broken pipe as an error (checked here
    // over the CLI's sources, so that a new writer cannot slip past the test above).
    let dir = root().join("cli");
    let mut offenders = Vec::new();
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "rs") {
            let text = std::fs::read_to_string(&path).unwrap();
            for (n, line) in text.lines().enumerate() {
                let code = line.split("//").next().unwrap_or("");
                let bare = code.replace("eprintln!", "").replace("eprint!", "");
                if bare.contains("println!")
                    || bare.contains("print!(")
                    || bare.contains("stdout()") && !path.ends_with("output.rs")
                {
                    offenders.push(format!("{}:{}: {}", path.display(), n + 1, line.trim()));
                }
            }
        }
    }
    assert!(offenders.is_empty(), "{offenders:#?}");
}

#[test]
fn a_full_disk_behind_stdout_is_bad_output() {
    // Standard output redirected to a full device (Linux's /dev/full: every write fails with
    // ENOSPC): exit 2 with a message naming standard output, no panic (before, `print!`
    // panicked, exit 101).
    let full = std::path::Path::new("/dev/full");
    assert!(full.exists(), "/dev/full is missing: this test needs Linux");
    let dir = tempfile::tempdir().unwrap();
    let design = design_file(
        dir.path(),
        "ring.toml",
        &ring_toml("loop", [0.0, 0.0, 0.0], [0.0, 0.0, 1.0], 0.1),
    );
    let out = std::process::Command::new(bin())
        .args(["inductance", design.to_str().unwrap()])
        .stdout(std::fs::OpenOptions::new().write(true).open(full).unwrap())
        .output()
        .expect("run coilfield");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(stderr.contains("standard output: cannot write"), "{stderr}");
}
