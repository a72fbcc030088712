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
    // The demo's own drive model gives way to an explicit drive.
    let undriven = base.split("\n[drive]").next().unwrap();
    let drive =
        format!("{undriven}\n[drive]\nfrequency = 200e3\ncurrents = {{ secondary = 1e308 }}\n");
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

/// The demo base and a sweep file of `steps` heights of its primary, in `dir`.
fn long_sweep(dir: &Path, steps: usize) {
    std::fs::copy(
        root().join("meshes-demo/tabletop-resonator.toml"),
        dir.join("base.toml"),
    )
    .unwrap();
    std::fs::write(
        dir.join("s.toml"),
        format!(
            "base = \"base.toml\"\nmetrics = [\"gap.secondary.primary\"]\n[[axis]]\n\
             key = \"winding.primary.origin[2]\"\nfrom = 0.0\nto = 0.09\nsteps = {steps}\n"
        ),
    )
    .unwrap();
}

#[test]
fn a_second_writer_of_a_sweep_output_is_refused() {
    // Before: two `--resume` runs on one --out both exited 0 and every row was written twice.
    let dir = tempfile::tempdir().unwrap();
    long_sweep(dir.path(), 20_000);
    let out = dir.path().join("o.csv");
    let mut first = Command::new(bin())
        .current_dir(dir.path())
        .args(["sweep", "s.toml", "--out", "o.csv", "--threads", "1"])
        .stderr(std::process::Stdio::null())
        .spawn()
        .unwrap();
    let started = std::time::Instant::now();
    while std::fs::read_to_string(&out).map_or(0, |t| t.lines().count()) < 2 {
        assert!(started.elapsed().as_secs() < 120, "no rows after 120 s");
        std::thread::sleep(std::time::Duration::from_millis(20));
    }
    let second = run_in(
        dir.path(),
        &["sweep", "s.toml", "--out", "o.csv", "--resume"],
    );
    let still_running = first.try_wait().unwrap().is_none();
    Command::new("kill")
        .args(["-INT", &first.id().to_string()])
        .status()
        .unwrap();
    let status = first.wait().unwrap();
    assert!(still_running && status.code() == Some(130), "{status:?}");
    refused(&second, &["o.csv", "locked"]);
    // The file holds each point once, in order.
    let text = std::fs::read_to_string(&out).unwrap();
    for (i, row) in text.lines().skip(1).enumerate() {
        assert!(row.starts_with(&format!("{i},")), "row {i}: {row}");
    }
}

#[test]
fn a_merge_into_a_locked_output_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    long_sweep(dir.path(), 4);
    let o = run_in(dir.path(), &["sweep", "s.toml", "--out", "a.csv"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    // Another merge holds the lock of m.csv.
    let lock = std::fs::File::create(dir.path().join(".m.csv.lock")).unwrap();
    fs4::FileExt::try_lock(&lock).unwrap();
    let out = run_in(dir.path(), &["merge", "a.csv", "--out", "m.csv"]);
    refused(&out, &["m.csv", "locked"]);
    assert!(!dir.path().join("m.csv").exists());
    drop(lock);
    let out = run_in(dir.path(), &["merge", "a.csv", "--out", "m.csv"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

#[test]
fn a_symlink_at_a_sweep_output_is_refused_and_never_followed() {
    // Before: a dangling --out link got its target created.
    let dir = tempfile::tempdir().unwrap();
    long_sweep(dir.path(), 4);
    std::os::unix::fs::symlink(dir.path().join("elsewhere.csv"), dir.path().join("o.csv")).unwrap();
    let out = run_in(dir.path(), &["sweep", "s.toml", "--out", "o.csv"]);
    refused(&out, &["o.csv", "symbolic link"]);
    assert!(!dir.path().join("elsewhere.csv").exists());
    // merge and the other writers replace a link by the file (write_atomic) and leave its
    // target alone.
    let o = run_in(dir.path(), &["sweep", "s.toml", "--out", "a.csv"]);
    assert!(o.status.success());
    let out = run_in(dir.path(), &["merge", "a.csv", "--out", "o.csv"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(!dir.path().join("elsewhere.csv").exists());
    assert!(
        !std::fs::symlink_metadata(dir.path().join("o.csv"))
            .unwrap()
            .file_type()
            .is_symlink()
    );
}

#[test]
fn sweep_and_seek_syntax_errors_carry_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("s.toml"),
        "base = \"x.toml\"\nmetrics = [\n",
    )
    .unwrap();
    let out = run_in(dir.path(), &["sweep", "s.toml", "--out", "o.csv"]);
    refused(&out, &["s.toml", "line 2, column 12"]);
    let out = run_in(dir.path(), &["seek", "s.toml"]);
    refused(&out, &["s.toml", "line 2, column 12"]);
    std::fs::write(dir.path().join("s.toml"), b"base = \"x.toml\"\n\xff\n").unwrap();
    let out = run_in(dir.path(), &["seek", "s.toml"]);
    refused(&out, &["s.toml", "invalid UTF-8 at line 2, column 1"]);
}

#[test]
fn merge_checks_every_row_and_names_the_first_bad_one() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(
        root().join("meshes-demo/tabletop-resonator.toml"),
        dir.path().join("base.toml"),
    )
    .unwrap();
    let sweep_of = |name: &str, last: &str| {
        std::fs::write(
            dir.path().join(format!("{name}.toml")),
            format!(
                "base = \"base.toml\"\nmetrics = [\"coupling.secondary.primary\"]\n[[axis]]\n\
                 key = \"winding.primary.origin[2]\"\nvalues = [0.01, 0.02, 0.03, {last}]\n"
            ),
        )
        .unwrap();
        let o = run_in(
            dir.path(),
            &[
                "sweep",
                &format!("{name}.toml"),
                "--out",
                &format!("{name}.csv"),
            ],
        );
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        std::fs::read_to_string(dir.path().join(format!("{name}.csv"))).unwrap()
    };
    let good = sweep_of("a", "0.04");
    sweep_of("b", "0.05");
    let lines: Vec<&str> = good.lines().collect();
    assert!(
        lines[2].starts_with("1,0.02,") && lines[2].ends_with(",ok,"),
        "{good}"
    );
    let edited = |line: &str| good.replacen(lines[2], line, 1);
    let ok_row = lines[2];
    let cases: Vec<(String, bool, &str)> = vec![
        // Another sweep's output with the same header.
        (
            std::fs::read_to_string(dir.path().join("b.csv")).unwrap(),
            true,
            "line 5: point 3",
        ),
        // A parameter changed.
        (
            edited(&ok_row.replacen("0.02,", "0.025,", 1)),
            true,
            "line 3: point 1",
        ),
        // An unknown status, a missing and an extra field, a torn row mid-file.
        (
            edited(&ok_row.replace(",ok,", ",okay,")),
            false,
            "line 3: not a row",
        ),
        (edited("1,0.02"), false, "line 3: not a row"),
        (
            edited(&format!("{ok_row},extra")),
            false,
            "line 3: not a row",
        ),
        (
            edited(&ok_row[..ok_row.len() / 2]),
            false,
            "line 3: not a row",
        ),
    ];
    // b's output with its own identity file: another sweep, refused by identity (with or
    // without --sweep).
    for with_sweep in [false, true] {
        let mut args = vec!["merge", "a.csv", "b.csv", "--out", "m.csv"];
        if with_sweep {
            args.extend(["--sweep", "a.toml"]);
        }
        let out = run_in(dir.path(), &args);
        refused(&out, &["b.csv", "another sweep"]);
        assert!(!dir.path().join("m.csv").exists());
    }
    // The rows themselves, under a's identity.
    std::fs::copy(
        dir.path().join("a.csv.sweep-id"),
        dir.path().join("bad.csv.sweep-id"),
    )
    .unwrap();
    for (text, with_sweep, expected) in cases {
        std::fs::write(dir.path().join("bad.csv"), &text).unwrap();
        let mut args = vec!["merge", "bad.csv", "--out", "m.csv"];
        if with_sweep {
            args.extend(["--sweep", "a.toml"]);
        }
        let out = run_in(dir.path(), &args);
        refused(&out, &["bad.csv", expected]);
        assert!(!dir.path().join("m.csv").exists());
    }
}

#[test]
fn merge_without_a_sweep_never_builds_a_range_up_to_a_huge_index() {
    // Before: a point index of 1e18 built a range up to it. Now the refusal names it at once
    // (the points are 0..rows).
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("s.csv"),
        "point,winding.a.turns,self_inductance.a,status,message\n\
         1000000000000000000,5,1e-6,ok,\n",
    )
    .unwrap();
    std::fs::write(
        dir.path().join("s.csv.sweep-id"),
        format!(
            "coilfield sweep identity 1\nplan-sha256 {}\n",
            "0".repeat(64)
        ),
    )
    .unwrap();
    let out = run_in(dir.path(), &["merge", "s.csv", "--out", "m.csv"]);
    refused(&out, &["points beyond the sweep: 1000000000000000000"]);
}

#[test]
fn map_extents_beyond_1000_km_are_refused_before_any_work() {
    // Before: `map --extent -1e307,1e307,... --plot m.svg` never finished.
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(
        root().join("meshes-demo/exciter.toml"),
        dir.path().join("d.toml"),
    )
    .unwrap();
    for (key, args) in [
        (
            "--extent",
            ["--plane", "xz", "--extent=-1e307,1e307,-1e307,1e307"],
        ),
        ("--box", ["--box=-1,1,-1,1,-1e300,1", "--plane", "xz"]),
    ] {
        let mut all = vec!["map", "d.toml"];
        if key == "--box" {
            all.extend(&args[..1]);
        } else {
            all.extend(args);
        }
        all.extend([
            "--resolution",
            if key == "--box" { "3,3,3" } else { "20,20" },
        ]);
        all.extend(["--plot", "m.svg"]);
        let out = run_in(dir.path(), &all);
        refused(&out, &[key, "1e6 m"]);
        assert!(!dir.path().join("m.svg").exists());
        // With a design that does not exist, the grid's refusal still comes first: the grid is
        // checked before the design is read, let alone solved.
        all[1] = "missing.toml";
        let out = run_in(dir.path(), &all);
        refused(&out, &[key, "1e6 m"]);
    }
}

/// Unmounts the tmpfs at its path when dropped (pass or fail).
struct Unmount(std::path::PathBuf);

impl Drop for Unmount {
    fn drop(&mut self) {
        let _ = Command::new("umount").arg(&self.0).status();
    }
}

#[test]
#[ignore = "needs root to mount a small tmpfs; .ci/test runs it with --include-ignored"]
fn a_full_disk_is_bad_output_exit_2_and_keeps_what_was_there() {
    // A real full disk (a tmpfs of 16 KiB), beside the injected writer that fails after N
    // bytes (cli/output.rs): a sweep's rows outgrow it, then an atomic JSON output finds it
    // full; both exit 2 naming the file, no panic, and the old JSON file is untouched.
    let dir = tempfile::tempdir().unwrap();
    let mnt = dir.path().join("small");
    std::fs::create_dir(&mnt).unwrap();
    let mounted = Command::new("mount")
        .args(["-t", "tmpfs", "-o", "size=16k", "tmpfs"])
        .arg(&mnt)
        .status()
        .unwrap();
    assert!(mounted.success(), "cannot mount a tmpfs: run as root");
    let _unmount = Unmount(mnt.clone());
    std::fs::write(mnt.join("c.json"), "old contents").unwrap();
    std::fs::write(
        dir.path().join("base.toml"),
        "[[winding]]\nname = \"a\"\nshape = \"ring\"\norigin = [0.0, 0.0, 0.0]\n\
         axis = [0.0, 0.0, 1.0]\nradius = 1.0\nwire_diameter = 0.001\n\n[[winding]]\n\
         name = \"b\"\nshape = \"ring\"\norigin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\n\
         radius = 1.0\nwire_diameter = 0.001\n",
    )
    .unwrap();
    std::fs::write(
        dir.path().join("ball.toml"),
        "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 1.0]\n\
         radius = 0.1\n",
    )
    .unwrap();
    std::fs::write(
        dir.path().join("s.toml"),
        "base = \"base.toml\"\nmetrics = [\"mutual.a.b\"]\n[[axis]]\n\
         key = \"winding.b.origin[2]\"\nfrom = 0.5\nto = 3.0\nsteps = 4000\n",
    )
    .unwrap();
    let out = run_in(
        dir.path(),
        &["sweep", "s.toml", "--out", "small/o.csv", "--threads", "1"],
    );
    refused(&out, &["o.csv", "No space left on device"]);
    let out = run_in(
        dir.path(),
        &[
            "capacitance",
            "ball.toml",
            "--format",
            "json",
            "--out",
            "small/c.json",
        ],
    );
    refused(&out, &["c.json", "No space left on device"]);
    assert_eq!(
        std::fs::read_to_string(mnt.join("c.json")).unwrap(),
        "old contents"
    );
}
