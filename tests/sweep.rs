//! End-to-end tests of `coilfield sweep` and `coilfield merge`: values against Maxwell's
//! formula (checked by mpmath), thread independence, resume after a torn line, shards and
//! merge, and bad input.

mod common;

use common::*;
use std::path::Path;

/// Two coaxial rings of 1 m radius; the sweep moves the second along the axis. Invented.
const BASE: &str = r#"
[[winding]]
name = "a"
shape = "ring"
origin = [0.0, 0.0, 0.0]
axis = [0.0, 0.0, 1.0]
radius = 1.0
wire_diameter = 0.001

[[winding]]
name = "b"
shape = "ring"
origin = [0.0, 0.0, 1.0]
axis = [0.0, 0.0, 1.0]
radius = 1.0
wire_diameter = 0.001
"#;

const SWEEP: &str = r#"
base = "base.toml"
metrics = ["mutual.a.b", "coupling.a.b"]
constraints = ["coupling.a.b <= 0.1"]

[[axis]]
key = "winding.b.origin[2]"
values = [1.0, 0.5, 2.0]

[[axis]]
key = "winding.b.radius"
from = 1.0
to = 2.0
steps = 5
"#;

fn setup(dir: &Path, sweep: &str) -> std::path::PathBuf {
    design_file(dir, "base.toml", BASE);
    design_file(dir, "sweep.toml", sweep)
}

fn sweep(args: &[&str]) -> std::process::Output {
    let mut all = vec!["sweep"];
    all.extend_from_slice(args);
    run(&all)
}

/// Run the sweep file `text` (written as `name` in `dir`) that must be refused before any work:
/// exit 2, no output file. Returns the message.
fn refused(dir: &Path, name: &str, text: &str) -> String {
    let s = design_file(dir, name, text);
    let out = dir.join("refused.csv");
    let o = sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    let err = String::from_utf8_lossy(&o.stderr).into_owned();
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(!out.exists(), "output written: {err}");
    err
}

#[test]
fn csv_rows_hold_maxwell_values_in_point_order() {
    let dir = tempfile::tempdir().unwrap();
    let s = setup(dir.path(), SWEEP);
    let out = dir.path().join("r.csv");
    let o = sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(&out).unwrap();
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(
        lines[0],
        "point,winding.b.origin[2],winding.b.radius,mutual.a.b,coupling.a.b,status,message"
    );
    assert_eq!(lines.len(), 1 + 15);
    // Point 0: rings of 1 m, 1 m apart. Maxwell 1873; mpmath 30 digits: 4.9407846308e-7 H
    // (validation/inline_refs.py, re-run by .ci/test with --check).
    let f: Vec<&str> = lines[1].split(',').collect();
    assert_eq!(&f[..3], &["0", "1", "1"]);
    let m: f64 = f[3].parse().unwrap();
    assert!((m - 4.940_784_630_8e-7).abs() < 1e-16, "{m}");
    // Floats are written in shortest round-trip form: the fewest digits, and the exponent form
    // when it is shorter.
    assert_eq!(f[3], format!("{m:e}"));
    assert_eq!(f[2], "1");
    // Point 5 (second height, first radius): 0.5 m apart, k above 0.1 -> infeasible.
    let f5: Vec<&str> = lines[6].split(',').collect();
    assert_eq!(&f5[..3], &["5", "0.5", "1"]);
    assert_eq!(f5[5], "infeasible");
    assert!(f5[6].contains("coupling.a.b <= 0.1"), "{}", lines[6]);
    // Rings of 1 m radius 0.5 m apart: mpmath 30 digits (Maxwell in K and E): 1.1126108935e-6 H
    // (validation/inline_refs.py).
    let m5: f64 = f5[3].parse().unwrap();
    assert!(rel(m5, 1.112_610_893_52e-6) < 1e-11, "{m5}");
}

#[test]
fn results_do_not_depend_on_threads_and_jsonl_matches_csv() {
    let dir = tempfile::tempdir().unwrap();
    let s = setup(dir.path(), SWEEP);
    let mut outs = Vec::new();
    for t in ["1", "2", "3"] {
        let out = dir.path().join(format!("r{t}.csv"));
        let o = sweep(&[
            s.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--threads",
            t,
        ]);
        assert!(o.status.success());
        outs.push(std::fs::read(&out).unwrap());
    }
    assert_eq!(outs[0], outs[1]);
    assert_eq!(outs[0], outs[2]);
    let out = dir.path().join("r.jsonl");
    assert!(
        sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()])
            .status
            .success()
    );
    let csv = String::from_utf8(outs[0].clone()).unwrap();
    let jsonl = std::fs::read_to_string(&out).unwrap();
    for (c, j) in csv.lines().skip(1).zip(jsonl.lines()) {
        let v: serde_json::Value = serde_json::from_str(j).unwrap();
        let f: Vec<&str> = c.split(',').collect();
        assert_eq!(v["point"].as_u64().unwrap().to_string(), f[0]);
        // serde_json's default float parser may be one ulp off the written shortest form.
        let m: f64 = f[3].parse().unwrap();
        assert!(
            rel(v["metrics"]["mutual.a.b"].as_f64().unwrap(), m) < 4e-16,
            "{j}"
        );
        let r: f64 = f[2].parse().unwrap();
        assert!(
            rel(v["params"]["winding.b.radius"].as_f64().unwrap(), r) < 4e-16,
            "{j}"
        );
        assert_eq!(v["status"], f[5]);
    }
}

#[test]
fn resume_redoes_a_torn_line_and_yields_the_uninterrupted_file() {
    let dir = tempfile::tempdir().unwrap();
    let s = setup(dir.path(), SWEEP);
    let full = dir.path().join("full.csv");
    assert!(
        sweep(&[s.to_str().unwrap(), "--out", full.to_str().unwrap()])
            .status
            .success()
    );
    let whole = std::fs::read(&full).unwrap();
    let text = String::from_utf8(whole.clone()).unwrap();
    // A run killed in the middle of line 7: header + 6 rows + half a row.
    let cut: usize = text.lines().take(7).map(|l| l.len() + 1).sum::<usize>() + 9;
    let part = dir.path().join("part.csv");
    std::fs::write(&part, &whole[..cut]).unwrap();
    // The sweep's identity lives beside its output.
    let id = |p: &std::path::Path| {
        p.with_file_name(format!(
            "{}.sweep-id",
            p.file_name().unwrap().to_string_lossy()
        ))
    };
    std::fs::copy(id(&full), id(&part)).unwrap();
    // Without --resume an existing output is refused.
    let o = sweep(&[s.to_str().unwrap(), "--out", part.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--resume"));
    let o = sweep(&[
        s.to_str().unwrap(),
        "--out",
        part.to_str().unwrap(),
        "--resume",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert_eq!(std::fs::read(&part).unwrap(), whole);
    // Resuming a finished file changes nothing.
    let o = sweep(&[
        s.to_str().unwrap(),
        "--out",
        part.to_str().unwrap(),
        "--resume",
    ]);
    assert!(o.status.success());
    assert_eq!(std::fs::read(&part).unwrap(), whole);

    // The sweep changed since (one more value of an axis): refused, nothing touched. Before,
    // the rows of the old sweep were kept under the new one's header.
    let torn = &whole[..cut];
    std::fs::write(&part, torn).unwrap();
    let changed = design_file(
        dir.path(),
        "changed.toml",
        &SWEEP.replace("2.0]", "2.0, 1.7]"),
    );
    let o = sweep(&[
        changed.to_str().unwrap(),
        "--out",
        part.to_str().unwrap(),
        "--resume",
    ]);
    assert_eq!(
        o.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let e = String::from_utf8_lossy(&o.stderr);
    assert!(
        e.contains("part.csv.sweep-id") && e.contains("another sweep"),
        "{e}"
    );
    assert_eq!(std::fs::read(&part).unwrap(), torn);
    // No identity file: refused, naming it.
    std::fs::remove_file(id(&part)).unwrap();
    let o = sweep(&[
        s.to_str().unwrap(),
        "--out",
        part.to_str().unwrap(),
        "--resume",
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("no sweep identity file"));
    std::fs::copy(id(&full), id(&part)).unwrap();
    // A kept row whose parameter, field count or status was changed: refused, naming the line.
    let text = String::from_utf8(torn.to_vec()).unwrap();
    let row = text.lines().nth(2).unwrap().to_string();
    let p1 = row.split(',').nth(1).unwrap().to_string();
    for bad in [
        row.replacen(&format!(",{p1},"), ",9.5,", 1),
        format!("{row},extra"),
        row.replace(",ok,", ",okay,")
            .replace(",infeasible,", ",okay,"),
    ] {
        std::fs::write(&part, text.replacen(&row, &bad, 1)).unwrap();
        let o = sweep(&[
            s.to_str().unwrap(),
            "--out",
            part.to_str().unwrap(),
            "--resume",
        ]);
        assert_eq!(o.status.code(), Some(2), "{bad}");
        let e = String::from_utf8_lossy(&o.stderr);
        assert!(e.contains("line 3: not a row of this sweep"), "{bad}: {e}");
    }
}

#[test]
fn shards_merge_into_the_single_run_file() {
    let dir = tempfile::tempdir().unwrap();
    let s = setup(dir.path(), SWEEP);
    for ext in ["csv", "jsonl"] {
        let full = dir.path().join(format!("full.{ext}"));
        assert!(
            sweep(&[s.to_str().unwrap(), "--out", full.to_str().unwrap()])
                .status
                .success()
        );
        let pattern = dir.path().join(format!("part-{{shard}}.{ext}"));
        for k in 0..4 {
            let o = sweep(&[
                s.to_str().unwrap(),
                "--out",
                pattern.to_str().unwrap(),
                "--shard",
                &format!("{k}/4"),
            ]);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        }
        let parts: Vec<String> = (0..4)
            .map(|k| {
                dir.path()
                    .join(format!("part-{k}.{ext}"))
                    .display()
                    .to_string()
            })
            .collect();
        let merged = dir.path().join(format!("merged.{ext}"));
        let mut args = vec!["merge"];
        args.extend(parts.iter().map(String::as_str));
        args.extend([
            "--out",
            merged.to_str().unwrap(),
            "--sweep",
            s.to_str().unwrap(),
        ]);
        let o = run(&args);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        assert_eq!(
            std::fs::read(&merged).unwrap(),
            std::fs::read(&full).unwrap()
        );
        // A missing shard and a doubled shard are named.
        let mut missing = vec![
            "merge",
            parts[0].as_str(),
            parts[1].as_str(),
            parts[2].as_str(),
        ];
        missing.extend([
            "--out",
            merged.to_str().unwrap(),
            "--sweep",
            s.to_str().unwrap(),
        ]);
        let o = run(&missing);
        assert_eq!(o.status.code(), Some(2));
        let e = String::from_utf8_lossy(&o.stderr);
        assert!(e.contains("missing") && e.contains("3, 7, 11"), "{e}");
        let mut doubled = args.clone();
        doubled.insert(1, parts[2].as_str());
        let o = run(&doubled);
        assert_eq!(o.status.code(), Some(2));
        assert!(String::from_utf8_lossy(&o.stderr).contains("more than once"));
    }
}

#[test]
fn bad_sweeps_exit_2_naming_the_file_and_the_key() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        (
            SWEEP.replace("winding.b.radius", "winding.c.radius"),
            "no winding named `c`",
        ),
        (
            SWEEP.replace("values = [1.0, 0.5, 2.0]", "values = []"),
            "empty axis",
        ),
        (
            SWEEP.replace("winding.b.origin[2]", "winding.b.origin[5]"),
            "out of range",
        ),
        // A radius below the wire radius breaks the design on its own.
        (
            SWEEP.replace("from = 1.0", "from = 0.0001"),
            "axis #2 `winding.b.radius` = 0.0001",
        ),
        (SWEEP.replace("mutual.a.b", "mutual.a.z"), "metrics[0]"),
        (
            SWEEP.replace("coupling.a.b <= 0.1", "coupling.a.b ~ 0.1"),
            "constraints[0]",
        ),
    ];
    for (i, (text, want)) in cases.iter().enumerate() {
        let s = setup(dir.path(), text);
        let out = dir.path().join(format!("bad{i}.csv"));
        let o = sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()]);
        let e = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "case {i}: {e}");
        assert!(
            e.contains("sweep.toml") && e.contains(want),
            "case {i}: {e}"
        );
        assert!(!out.exists(), "case {i}: no output before the checks pass");
    }
}

#[test]
fn an_identity_file_that_cannot_be_written_leaves_no_row_in_the_output() {
    // The identity file is written while the first points are computed; until it is on disk
    // nothing of the output reaches its file, so `--resume` and `merge` never meet rows they
    // cannot tell from another sweep's. A folder where the identity file goes makes its
    // write fail after the output was opened. 20,000 points (a few tenths of a second), so
    // rows are handed to the file during the run and would reach it but for the hold; the
    // output this run created is removed again.
    let dir = tempfile::tempdir().unwrap();
    let s = setup(
        dir.path(),
        &SWEEP
            .replace(
                "values = [1.0, 0.5, 2.0]",
                "from = 0.5\nto = 2.0\nsteps = 200",
            )
            .replace("steps = 5", "steps = 100"),
    );
    let out = dir.path().join("o.csv");
    let id = dir.path().join("o.csv.sweep-id");
    std::fs::create_dir(&id).unwrap();
    std::fs::write(id.join("kept"), "the user's").unwrap();
    for threads in ["1", "2"] {
        let o = sweep(&[
            s.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--threads",
            threads,
        ]);
        let e = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{e}");
        assert!(
            e.contains("o.csv.sweep-id") && e.contains("cannot write"),
            "{e}"
        );
        assert!(!out.exists(), "{threads} threads");
        assert_eq!(
            std::fs::read_to_string(id.join("kept")).unwrap(),
            "the user's"
        );
    }
    // An output that was there before is kept as it was (here: empty, resumed).
    std::fs::write(&out, "").unwrap();
    let o = sweep(&[
        s.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--resume",
    ]);
    assert_eq!(o.status.code(), Some(2));
    let kept = std::fs::read_to_string(&out).unwrap();
    assert!(
        kept.is_empty(),
        "{} bytes reached the output before its identity file",
        kept.len()
    );
}

#[test]
fn a_point_that_breaks_the_design_is_recorded_and_the_sweep_goes_on() {
    // Each value is fine alone, but ring b of radius 0.9995 m moved into ring a's plane
    // (z = 0) touches ring a (1 m): status error at that point alone.
    let dir = tempfile::tempdir().unwrap();
    let text = r#"
base = "base.toml"
metrics = ["coupling.a.b"]
[[axis]]
key = "winding.b.origin[2]"
values = [0.0, 1.0]
[[axis]]
key = "winding.b.radius"
values = [0.9995, 0.7]
"#;
    // Alone, b at z = 0 (radius 0.5 m) and b of radius 0.9995 m (at z = 1 m) are fine.
    design_file(
        dir.path(),
        "base.toml",
        &BASE.replace(
            "origin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\nradius = 1.0",
            "origin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\nradius = 0.5",
        ),
    );
    let s = design_file(dir.path(), "sweep.toml", text);
    let out = dir.path().join("r.csv");
    let o = sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let rows: Vec<String> = std::fs::read_to_string(&out)
        .unwrap()
        .lines()
        .map(str::to_owned)
        .collect();
    assert_eq!(rows.len(), 5);
    assert!(rows[1].starts_with("0,0,0.9995,,error,"), "{}", rows[1]);
    for r in &rows[2..] {
        assert!(r.contains(",ok,"), "{r}");
    }
}

#[test]
fn seek_finds_the_distance_of_a_known_mutual_inductance() {
    // Two rings of 1 m radius 1 m apart: M = 4.94078463079826907e-7 H (Maxwell 1873, mpmath
    // 30 digits; validation/inline_refs.py). Brent's method must find the distance 1 m from that M.
    let dir = tempfile::tempdir().unwrap();
    design_file(dir.path(), "base.toml", BASE);
    let s = design_file(
        dir.path(),
        "seek.toml",
        "base = \"base.toml\"\ntarget = \"mutual.a.b = 4.94078463079826907e-7\"\n\
         [[axis]]\nkey = \"winding.b.origin[2]\"\nfrom = 0.5\nto = 3.0\n",
    );
    let o = run(&["seek", s.to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let j: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let z = j["params"]["winding.b.origin[2]"].as_f64().unwrap();
    assert!((z - 1.0).abs() < 1e-9, "{j}");
    assert!(j["evaluations"].as_u64().unwrap() < 40);
    assert!(j["stop"].as_str().unwrap().starts_with("converged"));
    // A target outside the range of the metric is bad input, with the range named.
    let s = design_file(
        dir.path(),
        "seek2.toml",
        "base = \"base.toml\"\ntarget = \"mutual.a.b = 1.0\"\n\
         [[axis]]\nkey = \"winding.b.origin[2]\"\nfrom = 0.5\nto = 3.0\n",
    );
    let o = run(&["seek", s.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("is not between them"));
}

#[test]
fn ctrl_c_sigterm_and_sighup_stop_mid_run_keeping_whole_rows() {
    // A sweep far longer than the test (20,000 points with the slow wire-gap metric, one
    // thread): the signal is sent only once rows are on disk, and exit code 130 proves it
    // arrived mid-run (a finished run exits 0 and fails the test). SIGTERM is Slurm's time
    // limit and preemption; SIGHUP a closed terminal.
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(
        root().join("meshes-demo/tabletop-resonator.toml"),
        dir.path().join("tabletop-resonator.toml"),
    )
    .unwrap();
    let s = design_file(
        dir.path(),
        "sweep.toml",
        "base = \"tabletop-resonator.toml\"\nmetrics = [\"gap.secondary.primary\", \
         \"coupling.secondary.primary\"]\n[[axis]]\nkey = \"winding.primary.origin[2]\"\n\
         from = 0.0\nto = 0.09\nsteps = 20000\n",
    );
    for signal in ["INT", "TERM", "HUP"] {
        let part = dir.path().join(format!("part-{signal}.csv"));
        let mut child = std::process::Command::new(bin())
            .args([
                "sweep",
                s.to_str().unwrap(),
                "--out",
                part.to_str().unwrap(),
                "--threads",
                "1",
            ])
            .stderr(std::process::Stdio::piped())
            .spawn()
            .unwrap();
        // Wait for the header and two rows (a guard of 120 s, not a measure).
        let started = std::time::Instant::now();
        while std::fs::read_to_string(&part).map_or(0, |t| t.lines().count()) < 3 {
            assert!(started.elapsed().as_secs() < 120, "no rows after 120 s");
            std::thread::sleep(std::time::Duration::from_millis(20));
        }
        let killed = std::process::Command::new("kill")
            .args([format!("-{signal}"), child.id().to_string()])
            .status()
            .unwrap();
        assert!(killed.success());
        let status = child.wait().unwrap();
        let mut stderr = String::new();
        std::io::Read::read_to_string(&mut child.stderr.take().unwrap(), &mut stderr).unwrap();
        assert_eq!(
            status.code(),
            Some(130),
            "SIG{signal}: {status:?}\n{stderr}"
        );
        assert!(stderr.contains("interrupted"), "{stderr}");
        // Whole rows only, points 0, 1, 2, ... in order, fewer than the sweep has.
        let got = std::fs::read_to_string(&part).unwrap();
        assert!(got.ends_with('\n'));
        let rows: Vec<&str> = got.lines().skip(1).collect();
        assert!(
            rows.len() >= 2 && rows.len() < 20_000,
            "{} rows",
            rows.len()
        );
        for (i, row) in rows.iter().enumerate() {
            assert!(row.starts_with(&format!("{i},")), "row {i}: {row}");
            assert_eq!(
                row.split(',').count(),
                got.lines().next().unwrap().split(',').count()
            );
        }
    }
}

#[test]
fn plots_are_heat_maps_or_lines_as_svg_or_png() {
    let dir = tempfile::tempdir().unwrap();
    let s = setup(dir.path(), SWEEP);
    let out = dir.path().join("r.csv");
    let svg = dir.path().join("k.svg");
    let o = sweep(&[
        s.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--plot",
        svg.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(text.starts_with("<svg") && text.trim_end().ends_with("</svg>"));
    // 3 x 5 grid: 15 cells, 100 colour-bar steps, the two backgrounds.
    assert!(text.matches("<rect").count() >= 15 + 100, "{text}");
    assert!(text.contains("mutual.a.b") && text.contains("winding.b.radius"));
    // Contour lines between the smallest and largest M, in the legend's colours (the axes are
    // polylines too, in black).
    let contours = text
        .lines()
        .filter(|l| l.starts_with("<polyline") && l.contains("stroke=\"#FF0000\""))
        .count();
    assert!(contours > 1, "no contour lines");
    assert!(text.contains("winding.b.radius (m)"));
    // The title reads in the SI prefix of the largest |M| (the SI brochure's prefixes, BIPM
    // 2019, table 7), as the axes and tables do, never in raw henries.
    let rows = std::fs::read_to_string(&out).unwrap();
    let header: Vec<&str> = rows.lines().next().unwrap().split(',').collect();
    let col = header.iter().position(|h| *h == "mutual.a.b").unwrap();
    let largest = rows
        .lines()
        .skip(1)
        .filter_map(|l| l.split(',').nth(col)?.parse::<f64>().ok())
        .fold(0.0f64, |m, x| m.max(x.abs()));
    let prefix = [
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
        (1e-9, "n"),
        (1e-12, "p"),
    ]
    .iter()
    .find(|(s, _)| largest >= *s)
    .unwrap()
    .1;
    assert!(
        text.contains(&format!(
            "mutual.a.b ({prefix}H) against winding.b.origin[2] and winding.b.radius"
        )),
        "{prefix}H: {text}"
    );
    assert!(!text.contains("mutual.a.b (H)"));
    // The contour legend (levels with their unit) lies below every heat-map cell: the cells
    // are the rects after the background, 3 x 5 of them.
    let num = |tag: &str, k: &str| -> f64 {
        let key = format!(" {k}=\"");
        let at = tag.find(&key).unwrap() + key.len();
        tag[at..at + tag[at..].find('"').unwrap()].parse().unwrap()
    };
    let cells_bottom = text
        .split("<rect")
        .skip(2)
        .take(15)
        .map(|t| num(t, "y") + num(t, "height"))
        .fold(0.0f64, f64::max);
    let bodies: Vec<(&str, f64)> = text
        .split("<text")
        .skip(1)
        .map(|t| {
            (
                t[t.find('>').unwrap() + 1..t.find("</text>").unwrap()].trim(),
                num(t, "y"),
            )
        })
        .collect();
    let legend: Vec<f64> = bodies
        .iter()
        .filter(|(b, _)| b.ends_with('H') && b.contains(' '))
        .map(|(_, y)| *y)
        .collect();
    assert_eq!(legend.len(), 8, "{bodies:?}");
    assert!(
        legend.iter().all(|&y| y >= cells_bottom),
        "{legend:?} vs {cells_bottom}"
    );
    let png = dir.path().join("k.png");
    let o = sweep(&[
        s.to_str().unwrap(),
        "--out",
        dir.path().join("r2.csv").to_str().unwrap(),
        "--plot",
        png.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&png).unwrap()));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    assert!(info.width >= 600 && info.height >= 400);
    let distinct: std::collections::BTreeSet<&[u8]> = buf.chunks(3).collect();
    assert!(distinct.len() > 20, "a heat map has many colours");
    // One axis: a line.
    let one = design_file(
        dir.path(),
        "one.toml",
        "base = \"base.toml\"\nmetrics = [\"coupling.a.b\"]\n[[axis]]\nkey = \"winding.b.origin[2]\"\nvalues = [1.0, 0.5, 2.0]\n",
    );
    let line = dir.path().join("line.svg");
    let o = sweep(&[
        one.to_str().unwrap(),
        "--out",
        dir.path().join("r3.csv").to_str().unwrap(),
        "--plot",
        line.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(&line).unwrap();
    assert_eq!(text.matches("<circle").count(), 3);
    assert!(text.contains("coupling.a.b against winding.b.origin[2]"));
    let o = sweep(&[
        s.to_str().unwrap(),
        "--out",
        dir.path().join("r4.csv").to_str().unwrap(),
        "--plot",
        dir.path().join("k.pdf").to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains(".svg or .png"));
}

/// A helix secondary with a sphere on its top, over a grounded plane. Invented.
const RESONATOR: &str = r#"
[[winding]]
name = "sec"
shape = "helix"
role = "secondary"
origin = [0.0, 0.0, 0.05]
axis = [0.0, 0.0, 1.0]
radius = 0.05
length = 0.2
turns = 200
wire_diameter = 0.0005

[[electrode]]
name = "ball"
shape = "sphere"
origin = [0.0, 0.0, 0.4]
radius = 0.08
connect = "sec:top"

[ground]
z = 0.0

[drive]
potentials = { sec = [0.0, 1e5] }
"#;

fn csv_rows(path: &Path) -> Vec<Vec<String>> {
    std::fs::read_to_string(path)
        .unwrap()
        .lines()
        .map(|l| l.split(',').map(str::to_owned).collect())
        .collect()
}

#[test]
fn electrode_axes_give_the_capacitance_of_an_isolated_sphere() {
    // C = 4 pi eps0 a, exact (J. C. Maxwell, "A Treatise on Electricity and Magnetism", 1873,
    // vol. 1, the sphere's capacity); the issue asks 0.1 %.
    let dir = tempfile::tempdir().unwrap();
    design_file(
        dir.path(),
        "base.toml",
        "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.0]\nradius = 0.1\n",
    );
    let s = design_file(
        dir.path(),
        "sweep.toml",
        "base = \"base.toml\"\nmetrics = [\"capacitance.ball\"]\n[[axis]]\nkey = \"electrode.ball.radius\"\nvalues = [0.05, 0.1, 0.2]\n",
    );
    let out = dir.path().join("r.csv");
    let o = sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let rows = csv_rows(&out);
    assert_eq!(rows[0][1], "electrode.ball.radius");
    assert_eq!(rows.len(), 4);
    // eps0 = 8.8541878128e-12 F/m (CODATA 2018).
    let eps0 = 8.854_187_812_8e-12;
    for r in &rows[1..] {
        let a: f64 = r[1].parse().unwrap();
        let c: f64 = r[2].parse().unwrap();
        let exact = 4.0 * std::f64::consts::PI * eps0 * a;
        assert!(rel(c, exact) < 1e-3, "a = {a}: {c} vs {exact}");
    }
}

#[test]
fn electrode_sweeps_match_the_capacitance_command_and_recheck_the_wires() {
    let dir = tempfile::tempdir().unwrap();
    design_file(dir.path(), "base.toml", RESONATOR);
    // Alone, the ball lowered to 0.36 m (its bottom at 0.28 m, over the coil's top at 0.25 m)
    // and the longer coil (top at 0.30 m, under the ball's bottom at 0.32 m) are fine; together
    // the ball cuts the wire.
    let s = design_file(
        dir.path(),
        "sweep.toml",
        "base = \"base.toml\"\nmetrics = [\"self_capacitance.sec\", \"surface_field.ball\"]\n\
         [[axis]]\nkey = \"electrode.ball.origin[2]\"\nvalues = [0.4, 0.36]\n\
         [[axis]]\nkey = \"winding.sec.length\"\nvalues = [0.2, 0.25]\n",
    );
    let out = dir.path().join("r.csv");
    let o = sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    // Surface fields are high-voltage figures: the caution goes with them.
    assert!(String::from_utf8_lossy(&o.stderr).contains("CAUTION"));
    let rows = csv_rows(&out);
    assert_eq!(rows.len(), 5);
    for r in &rows[1..4] {
        assert_eq!(r[r.len() - 2], "ok", "{r:?}");
    }
    let last = rows[4].join(",");
    assert!(
        last.contains(",error,") && last.contains("electrode 'ball'") && last.contains("sec"),
        "{last}"
    );
    // Point 1 (ball at 0.4 m, coil 0.25 m long) against `coilfield capacitance` on that design.
    let edited = design_file(
        dir.path(),
        "edited.toml",
        &RESONATOR.replace("length = 0.2", "length = 0.25"),
    );
    let o = run(&["capacitance", edited.to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let total = v["conductors"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == "sec")
        .and_then(|c| c["with_connected_electrodes_f"].as_f64())
        .unwrap_or_else(|| panic!("no secondary total in {v}"));
    let swept: f64 = rows[2][3].parse().unwrap();
    assert!(rel(swept, total) < 1e-12, "{swept} vs {total}");
    // Set alone, a ball that sits on the base coil's wire stops the sweep before any work.
    let err = refused(
        dir.path(),
        "bad.toml",
        "base = \"base.toml\"\nmetrics = [\"self_capacitance.sec\"]\n\
         [[axis]]\nkey = \"electrode.ball.origin[2]\"\nvalues = [0.4, 0.3]\n",
    );
    assert!(
        err.contains("bad.toml")
            && err.contains("electrode.ball.origin[2]")
            && err.contains("ball"),
        "{err}"
    );
}

#[test]
fn clearance_metrics_match_the_clearance_command() {
    // The sweep's clearance figures are the `clearance` command's, point by point; a
    // constraint on them marks points.
    let dir = tempfile::tempdir().unwrap();
    let base = RESONATOR.replace(
        "[drive]\n",
        "[clearance]\ndefaults = [\"breakdown\"]\n[[clearance.threshold]]\nname = \"fence\"\n\
         quantity = \"E\"\nlimit = \"20 kV/m\"\nbasis = \"peak\"\n\
         source = \"invented test value\"\n[drive]\nfrequency = 1e6\n",
    );
    design_file(dir.path(), "base.toml", &base);
    let s = design_file(
        dir.path(),
        "sweep.toml",
        "base = \"base.toml\"\n\
         metrics = [\"clearance.fence\", \"clearance_top.air_breakdown\"]\n\
         constraints = [\"clearance.fence <= 0.5\"]\n\
         [[axis]]\nkey = \"electrode.ball.radius\"\nvalues = [0.08, 0.05]\n",
    );
    let out = dir.path().join("r.csv");
    let o = sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(stderr.contains("screening estimates"), "{stderr}");
    let rows = csv_rows(&out);
    assert_eq!(
        rows[0][2..4],
        ["clearance.fence", "clearance_top.air_breakdown"]
    );
    for (row, design) in [
        (1, base.clone()),
        (2, base.replace("radius = 0.08", "radius = 0.05")),
    ] {
        let path = design_file(dir.path(), "point.toml", &design);
        let o = run(&["clearance", path.to_str().unwrap(), "--format", "json"]);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        let t = |name: &str, key: &str| {
            v["thresholds"]
                .as_array()
                .unwrap()
                .iter()
                .find(|t| t["name"] == name)
                .and_then(|t| t[key].as_f64())
                .unwrap_or_else(|| panic!("{name} {key} in {v}"))
        };
        let fence: f64 = rows[row][2].parse().unwrap();
        let top: f64 = rows[row][3].parse().unwrap();
        assert_eq!(fence, t("fence", "distance_from_axis_m"), "row {row}");
        assert_eq!(top, t("air_breakdown", "distance_from_top_m"), "row {row}");
        let status = &rows[row][rows[row].len() - 2];
        assert_eq!(status == "ok", fence <= 0.5, "row {row}: {status}, {fence}");
    }
    // Each point's searches run sequentially: the file does not depend on the threads.
    let mut files = Vec::new();
    for threads in ["1", "2"] {
        let f = dir.path().join(format!("r{threads}.csv"));
        let args = [
            s.to_str().unwrap(),
            "--out",
            f.to_str().unwrap(),
            "--threads",
            threads,
        ];
        let o = sweep(&args);
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        files.push(std::fs::read(&f).unwrap());
    }
    assert_eq!(files[0], files[1]);
    assert_eq!(files[0], std::fs::read(&out).unwrap());
    // A threshold the base design does not have is named, with the ones it has.
    let err = refused(
        dir.path(),
        "bad.toml",
        "base = \"base.toml\"\nmetrics = [\"clearance.icnirp2010_public_e\"]\n\
         [[axis]]\nkey = \"electrode.ball.radius\"\nvalues = [0.08]\n",
    );
    assert!(
        err.contains("icnirp2010_public_e") && err.contains("fence"),
        "{err}"
    );
}

#[test]
fn seek_finds_the_sphere_radius_of_a_capacitance() {
    // C = 4 pi eps0 a (exact; J. C. Maxwell, "A Treatise on Electricity and Magnetism", 1873,
    // vol. 1): 10 pF needs a = 10e-12 / (4 pi eps0) = 0.0898755 m (eps0 CODATA 2018).
    let dir = tempfile::tempdir().unwrap();
    design_file(
        dir.path(),
        "base.toml",
        "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.0]\nradius = 0.1\n",
    );
    let s = design_file(
        dir.path(),
        "seek.toml",
        "base = \"base.toml\"\ntarget = \"capacitance.ball = 10e-12\"\n\
         [[axis]]\nkey = \"electrode.ball.radius\"\nfrom = 0.01\nto = 0.5\n",
    );
    let o = run(&["seek", s.to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let a = v["params"]["electrode.ball.radius"]
        .as_f64()
        .unwrap_or_else(|| panic!("{v}"));
    let exact = 10e-12 / (4.0 * std::f64::consts::PI * 8.854_187_812_8e-12);
    assert!(rel(a, exact) < 1e-3, "{a} vs {exact}");
    assert!(String::from_utf8_lossy(&o.stderr).contains("CAUTION"));
}

#[test]
fn sweeps_that_cannot_give_their_figures_stop_before_any_work() {
    let dir = tempfile::tempdir().unwrap();
    // Two rings, no secondary, no electrodes: nothing to search or solve.
    design_file(dir.path(), "base.toml", BASE);
    // The sphere off the secondary's axis: no axisymmetric electric model.
    design_file(
        dir.path(),
        "off.toml",
        &RESONATOR.replace("origin = [0.0, 0.0, 0.4]", "origin = [0.02, 0.0, 0.4]"),
    );
    for (base, metric, want) in [
        ("base.toml", "clearance.air_breakdown", "secondary"),
        ("off.toml", "surface_field.ball", "ball"),
        ("off.toml", "self_capacitance.sec", "ball"),
    ] {
        let text = format!(
            "base = \"{base}\"\nmetrics = [\"{metric}\"]\n[[axis]]\nkey = \"winding.{w}.radius\"\nvalues = [0.9, 1.0]\n",
            w = if base == "base.toml" { "b" } else { "sec" }
        );
        let err = refused(dir.path(), "s.toml", &text);
        assert!(
            err.contains("s.toml") && err.contains(metric) && err.contains(want),
            "{err}"
        );
    }
    // A heat map needs two values on each axis: refused before the sweep runs.
    let s = design_file(
        dir.path(),
        "s.toml",
        "base = \"base.toml\"\nmetrics = [\"mutual.a.b\"]\n\
         [[axis]]\nkey = \"winding.b.radius\"\nvalues = [0.9, 1.0]\n\
         [[axis]]\nkey = \"winding.b.origin[2]\"\nvalues = [1.0]\n",
    );
    let out = dir.path().join("r.csv");
    let png = dir.path().join("k.png");
    let o = sweep(&[
        s.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--plot",
        png.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("at least 2 values on each axis"));
    assert!(!out.exists() && !png.exists());
}

#[test]
fn a_clearance_beyond_the_search_is_marked_a_lower_bound() {
    let dir = tempfile::tempdir().unwrap();
    let base = RESONATOR.replace(
        "[drive]\n",
        "[clearance]\ndefaults = []\nmax_distance = \"0.2 m\"\n[[clearance.threshold]]\n\
         name = \"tiny\"\nquantity = \"E\"\nlimit = \"1 V/m\"\nbasis = \"peak\"\n\
         source = \"invented test value\"\n[drive]\n",
    );
    design_file(dir.path(), "base.toml", &base);
    let s = design_file(
        dir.path(),
        "s.toml",
        "base = \"base.toml\"\nmetrics = [\"clearance.tiny\"]\n\
         [[axis]]\nkey = \"electrode.ball.radius\"\nvalues = [0.08]\n",
    );
    let out = dir.path().join("r.jsonl");
    let o = sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let line = std::fs::read_to_string(&out).unwrap();
    let v: serde_json::Value = serde_json::from_str(line.trim()).unwrap();
    assert_eq!(v["status"], "ok");
    let m = v["message"].as_str().unwrap();
    assert!(m.contains("tiny") && m.contains("lower bound"), "{m}");
}

// The library's sweeps (`coilfield_solver::sweep`), run from Rust against the binary's files.

use coilfield_geometry::file::sweep::parse_sweep;
use coilfield_solver::Par;
use coilfield_solver::sweep::{OutFormat, RowSink, Shard, SweepPlan, merge};
use std::sync::atomic::AtomicBool;

/// The plan of the sweep file at `path` as the binary makes it: the same labels, the base
/// design named by `base` beside it.
fn library_plan(path: &Path) -> SweepPlan {
    let text = std::fs::read_to_string(path).unwrap();
    let label = path.display().to_string();
    let sweep = parse_sweep(&text, &label).unwrap();
    let base_path = path.parent().unwrap().join(&sweep.base);
    let base_text = std::fs::read_to_string(&base_path).unwrap();
    SweepPlan::new(
        sweep,
        &label,
        &base_text,
        &base_path.display().to_string(),
        Par::Rayon,
    )
    .unwrap()
}

/// The whole output of `points` of `plan` written from Rust into memory: header, then rows.
fn library_output(plan: &SweepPlan, points: &[usize], format: OutFormat, par: Par) -> Vec<u8> {
    let mut out = plan.header(format).into_bytes();
    let stop = AtomicBool::new(false);
    let rows = plan.run(points, format, par, &stop, &mut out).unwrap();
    assert_eq!(rows, points.len());
    out
}

/// The two test sweeps: the 3 x 5 grid with a constraint, and the sweep with a point whose
/// design breaks (an `error` row).
fn two_sweeps(dir: &Path) -> Vec<std::path::PathBuf> {
    let grid = setup(dir, SWEEP);
    design_file(
        dir,
        "base-small.toml",
        &BASE.replace(
            "origin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\nradius = 1.0",
            "origin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\nradius = 0.5",
        ),
    );
    let broken = design_file(
        dir,
        "broken.toml",
        "base = \"base-small.toml\"\nmetrics = [\"coupling.a.b\", \"gap.a.b\"]\n\
         [[axis]]\nkey = \"winding.b.origin[2]\"\nvalues = [0.0, 1.0]\n\
         [[axis]]\nkey = \"winding.b.radius\"\nvalues = [0.9995, 0.7]\n",
    );
    vec![grid, broken]
}

#[test]
fn a_sweep_run_from_rust_writes_the_binary_s_file_byte_for_byte() {
    let dir = tempfile::tempdir().unwrap();
    for s in two_sweeps(dir.path()) {
        let plan = library_plan(&s);
        let all = Shard::ALL.indices(plan.points().len());
        for (ext, format) in [("csv", OutFormat::Csv), ("jsonl", OutFormat::JsonLines)] {
            let out = dir.path().join(format!("cli.{ext}"));
            let _ = std::fs::remove_file(&out);
            let o = sweep(&[s.to_str().unwrap(), "--out", out.to_str().unwrap()]);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            let file = std::fs::read(&out).unwrap();
            for par in [Par::Seq, Par::Rayon] {
                let mine = library_output(&plan, &all, format, par);
                assert_eq!(
                    String::from_utf8_lossy(&mine),
                    String::from_utf8_lossy(&file),
                    "{} {ext} {par:?}",
                    s.display()
                );
            }
        }
    }
    // The values themselves: point 0 of the grid is two rings of 1 m, 1 m apart (Maxwell 1873;
    // mpmath 30 digits: 4.9407846308e-7 H), point 5 rings 0.5 m apart (1.1126108935e-6 H;
    // both from validation/inline_refs.py).
    let plan = library_plan(&dir.path().join("sweep.toml"));
    let r0 = plan.evaluate(0);
    assert!((r0.values[0] - 4.940_784_630_8e-7).abs() < 1e-16, "{r0:?}");
    let r5 = plan.evaluate(5);
    assert!(rel(r5.values[0], 1.112_610_893_52e-6) < 1e-11, "{r5:?}");
}

#[test]
fn resume_from_bytes_finds_the_torn_line_and_completes_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let s = setup(dir.path(), SWEEP);
    let plan = library_plan(&s);
    let all = Shard::ALL.indices(plan.points().len());
    for format in [OutFormat::Csv, OutFormat::JsonLines] {
        let whole = library_output(&plan, &all, format, Par::Rayon);
        let text = String::from_utf8(whole.clone()).unwrap();
        // Stopped in the middle of the seventh row: six whole rows and 9 bytes of the next.
        let head = format.header_lines();
        let complete: usize = text.lines().take(head + 6).map(|l| l.len() + 1).sum();
        let torn = &whole[..complete + 9];
        let r = plan.resume(torn, format, Shard::ALL, "part").unwrap();
        assert_eq!(
            (r.done, r.complete_bytes, r.needs_header),
            (6, complete, false)
        );
        // The kept lines and the remaining points give the uninterrupted output.
        let mut resumed = torn[..r.complete_bytes].to_vec();
        let stop = AtomicBool::new(false);
        let rows = plan
            .run(&all[r.done..], format, Par::Seq, &stop, &mut resumed)
            .unwrap();
        assert_eq!(rows, all.len() - 6);
        assert_eq!(resumed, whole);
        // A finished output is complete; an empty one needs its header (CSV only).
        let r = plan
            .resume(whole.as_slice(), format, Shard::ALL, "full")
            .unwrap();
        assert_eq!((r.done, r.complete_bytes), (all.len(), whole.len()));
        let r = plan.resume(&b""[..], format, Shard::ALL, "empty").unwrap();
        assert_eq!((r.done, r.needs_header), (0, format == OutFormat::Csv));
        // Another shard's rows are refused, naming the line and the point expected.
        let shard = Shard::new(1, 4).unwrap();
        let e = plan
            .resume(torn, format, shard, "part")
            .unwrap_err()
            .to_string();
        assert!(
            e.starts_with("part: line ") && e.contains("is not point 1") && e.contains("1/4"),
            "{e}"
        );
    }
    // Another sweep's header is refused.
    let e = plan
        .resume(
            &b"point,x,status,message\n"[..],
            OutFormat::Csv,
            Shard::ALL,
            "other",
        )
        .unwrap_err()
        .to_string();
    assert!(e.contains("other: its header is not this sweep's"), "{e}");
}

#[test]
fn merged_shard_texts_equal_the_single_run() {
    let dir = tempfile::tempdir().unwrap();
    let s = setup(dir.path(), SWEEP);
    let plan = library_plan(&s);
    let n = plan.points().len();
    for (ext, format) in [("csv", OutFormat::Csv), ("jsonl", OutFormat::JsonLines)] {
        let single = library_output(&plan, &Shard::ALL.indices(n), format, Par::Rayon);
        let parts: Vec<(String, String)> = (0..4)
            .map(|k| {
                let shard = Shard::new(k, 4).unwrap();
                let out = library_output(&plan, &shard.indices(n), format, Par::Seq);
                (format!("part-{k}.{ext}"), String::from_utf8(out).unwrap())
            })
            .collect();
        // Shard k holds the points k, k + 4, ...: the points of index % 4 == k.
        assert_eq!(Shard::new(3, 4).unwrap().indices(n), [3, 7, 11]);
        let texts: Vec<(&str, &str)> = parts
            .iter()
            .map(|(l, t)| (l.as_str(), t.as_str()))
            .collect();
        let merged = merge(&texts, format, Some(&plan)).unwrap();
        assert_eq!(merged.as_bytes(), single.as_slice(), "{ext}");
        // The order of the shards does not matter.
        let reversed: Vec<(&str, &str)> = texts.iter().rev().copied().collect();
        assert_eq!(merge(&reversed, format, None).unwrap(), merged);
        // A missing shard is named by its points; a torn shard is refused.
        let e = merge(&texts[..3], format, Some(&plan))
            .unwrap_err()
            .to_string();
        assert!(e.contains("3 of 15 points missing (3, 7, 11)"), "{e}");
        let torn = &texts[1].1[..texts[1].1.len() - 3];
        let e = merge(&[texts[0], ("torn", torn)], format, None)
            .unwrap_err()
            .to_string();
        assert!(e.starts_with("torn: the last line is torn"), "{e}");
    }
}

/// A sink that fails after its first call and counts what it took.
struct FailingSink {
    calls: usize,
    progress: Vec<usize>,
}

impl RowSink for FailingSink {
    fn rows(&mut self, _rows: &str) -> std::io::Result<()> {
        self.calls += 1;
        if self.calls > 1 {
            return Err(std::io::Error::other("disk full"));
        }
        Ok(())
    }

    fn progress(&mut self, done: usize) {
        self.progress.push(done);
    }
}

/// A sink that sets the stop flag when it takes its first rows, and keeps what it took.
struct StoppingSink<'a> {
    stop: &'a AtomicBool,
    text: String,
}

impl RowSink for StoppingSink<'_> {
    fn rows(&mut self, rows: &str) -> std::io::Result<()> {
        self.text.push_str(rows);
        self.stop.store(true, std::sync::atomic::Ordering::SeqCst);
        Ok(())
    }
}

#[test]
fn a_stop_in_the_middle_of_a_parallel_run_keeps_a_prefix_of_the_rows() {
    // Workers take runs of consecutive points; a stop between two points of a run keeps the
    // points done. Whatever reached the sink must be the first rows of the sweep, in order and
    // byte for byte those of an uninterrupted sequential run (the reference), and the count
    // returned must be theirs. 600 points, so the first runs are many points long.
    let dir = tempfile::tempdir().unwrap();
    let s = setup(dir.path(), &SWEEP.replace("steps = 5", "steps = 200"));
    let plan = library_plan(&s);
    let all = Shard::ALL.indices(plan.points().len());
    let mut reference = Vec::new();
    let total = plan
        .run(
            &all,
            OutFormat::Csv,
            Par::Seq,
            &AtomicBool::new(false),
            &mut reference,
        )
        .unwrap();
    let reference = String::from_utf8(reference).unwrap();
    for _ in 0..20 {
        let stop = AtomicBool::new(false);
        let mut sink = StoppingSink {
            stop: &stop,
            text: String::new(),
        };
        let n = plan
            .run(&all, OutFormat::Csv, Par::Rayon, &stop, &mut sink)
            .unwrap();
        assert!(n >= 1 && n <= total, "{n} of {total}");
        assert_eq!(sink.text.lines().count(), n);
        assert!(reference.starts_with(&sink.text), "{}", sink.text);
    }
}

#[test]
fn a_stop_flag_or_a_failing_sink_stops_the_run() {
    let dir = tempfile::tempdir().unwrap();
    let s = setup(dir.path(), SWEEP);
    let plan = library_plan(&s);
    let all = Shard::ALL.indices(plan.points().len());
    // Stopped before it starts: no row.
    let stop = AtomicBool::new(true);
    let mut out = Vec::new();
    for par in [Par::Seq, Par::Rayon] {
        let rows = plan
            .run(&all, OutFormat::Csv, par, &stop, &mut out)
            .unwrap();
        assert_eq!(rows, 0);
    }
    assert!(out.is_empty());
    // The sink's error comes back, and nothing is handed over after it.
    let stop = AtomicBool::new(false);
    let mut sink = FailingSink {
        calls: 0,
        progress: Vec::new(),
    };
    let e = plan
        .run(&all, OutFormat::Csv, Par::Seq, &stop, &mut sink)
        .unwrap_err();
    assert_eq!(e.to_string(), "disk full");
    assert_eq!((sink.calls, sink.progress.as_slice()), (2, &[1][..]));
    // A point that is not in the sweep is refused before any work.
    let e = plan
        .run(&[0, 99], OutFormat::Csv, Par::Seq, &stop, &mut out)
        .unwrap_err();
    assert_eq!(e.kind(), std::io::ErrorKind::InvalidInput);
    assert!(out.is_empty());
}
