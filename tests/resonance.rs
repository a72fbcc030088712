//! The resonance model end to end: `coilfield resonance` against Medhurst's self-capacitance
//! data, the lumped estimate where it must hold, the tap that tunes the tank, the coupled
//! pair's modes, the drive models feeding the fields, the sweep metrics, and bad input.

mod common;

use common::*;
use serde_json::Value;
use std::path::Path;

/// Run `coilfield resonance FILE --format json` (plus `extra` options) and parse it.
fn resonance_json(path: &Path, extra: &[&str]) -> Value {
    let mut args = vec!["resonance", path.to_str().unwrap(), "--format", "json"];
    args.extend_from_slice(extra);
    let out = run(&args);
    assert!(
        out.status.success(),
        "coilfield failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("valid JSON")
}

/// Rows of validation/resonance.csv of `kind`: (x, reference, tolerance).
fn reference_rows(kind: &str) -> Vec<(f64, f64, f64)> {
    let text = std::fs::read_to_string(root().join("validation/resonance.csv")).unwrap();
    text.lines()
        .skip(1)
        .filter(|l| l.starts_with(&format!("{kind},")))
        .map(|l| {
            let f: Vec<&str> = l.splitn(6, ',').collect();
            (
                f[1].parse().unwrap(),
                f[2].parse().unwrap(),
                f[3].parse().unwrap(),
            )
        })
        .collect()
}

/// A single-layer solenoid of diameter 10 cm, pitch 1 mm, 0.5 mm wire, its base half a
/// diameter above a grounded plane (Medhurst's set-up; invented sizes).
fn solenoid(l_over_d: f64) -> String {
    let d = 0.1;
    let l = l_over_d * d;
    let turns = (l / 0.001).round();
    format!(
        "[[winding]]\nname = \"coil\"\nshape = \"helix\"\nrole = \"secondary\"\n\
         origin = [0.0, 0.0, {:?}]\naxis = [0.0, 0.0, 1.0]\nradius = {:?}\nlength = {l:?}\n\
         turns = {turns:?}\nwire_diameter = 0.0005\n\n[ground]\nz = 0.0\n",
        d / 2.0,
        d / 2.0 - 0.00025
    )
}

#[test]
fn distributed_capacitance_matches_medhursts_self_capacitance() {
    // Source: validation/resonance.csv, R. G. Medhurst, Wireless Engineer 24, 1947: C = H D
    // (H from memory); the distributed model's C_eq within 12 %; the linear-profile figure
    // (Medhurst-style comparisons put it 15-20 % low) printed beside it.
    let dir = tempfile::tempdir().unwrap();
    let rows = reference_rows("medhurst");
    assert!(rows.len() >= 5);
    for (l_over_d, h, tol) in rows {
        let path = design_file(dir.path(), "c.toml", &solenoid(l_over_d));
        let j = resonance_json(&path, &[]);
        let s = &j["secondary"];
        let medhurst_f = h * 10.0 * 1e-12;
        let c_eq = s["equivalent_capacitance_f"].as_f64().unwrap();
        let linear = s["self_capacitance_f"].as_f64().unwrap();
        println!(
            "l/D {l_over_d}: C_eq / Medhurst {:.3}, linear profile / Medhurst {:.3}",
            c_eq / medhurst_f,
            linear / medhurst_f
        );
        assert!(
            rel(c_eq, medhurst_f) < tol,
            "l/D {l_over_d}: {c_eq:e} vs {medhurst_f:e}"
        );
        // The linear profile understates it: the mode's voltage is not a line.
        assert!(linear < c_eq, "l/D {l_over_d}");
    }
}

#[test]
fn the_first_mode_rises_from_base_to_top_and_the_second_has_a_node() {
    // A bare coil's first mode: the voltage rises monotonically from 0 at the grounded base to
    // 1 at the top (a quarter-wave-like standing wave, no node between); the second mode has
    // one sign change (a node) along the winding, as a line's second resonance has (the
    // uniform line's modes sin((2k - 1) pi x / 2), validation/circuits.csv).
    let dir = tempfile::tempdir().unwrap();
    let j = resonance_json(&design_file(dir.path(), "c.toml", &solenoid(4.0)), &[]);
    let profile = |k: usize| -> Vec<f64> {
        j["secondary"]["modes"][k]["voltage_profile"]
            .as_array()
            .unwrap()
            .iter()
            .map(|x| x.as_f64().unwrap())
            .collect()
    };
    let v = profile(0);
    let n = v.len() - 1;
    assert_eq!((v[0], v[n]), (0.0, 1.0));
    assert!(v.windows(2).all(|w| w[1] > w[0]), "monotone: {v:?}");
    let v2 = profile(1);
    let sign_changes = v2[1..]
        .windows(2)
        .filter(|w| w[0].signum() != w[1].signum())
        .count();
    assert_eq!(sign_changes, 1, "{v2:?}");
}

#[test]
fn a_heavily_top_loaded_secondary_agrees_with_the_lumped_formula() {
    // When the top load dominates (C_top >> C_self), the winding carries nearly the same
    // current all along and the lumped 1/(2 pi sqrt(L (C_self + C_top))) holds: within 3 %.
    let dir = tempfile::tempdir().unwrap();
    let text = format!(
        "{}\n[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.5]\n\
         radius = 0.2\nconnect = \"coil:top\"\n",
        solenoid(2.0)
    );
    let j = resonance_json(&design_file(dir.path(), "t.toml", &text), &[]);
    let s = &j["secondary"];
    let (c_self, c_top) = (
        s["self_capacitance_f"].as_f64().unwrap(),
        s["top_capacitance_f"].as_f64().unwrap(),
    );
    assert!(c_top > 4.0 * c_self, "{c_top} vs {c_self}");
    let (f, f_lumped) = (
        s["frequency_hz"].as_f64().unwrap(),
        s["lumped_frequency_hz"].as_f64().unwrap(),
    );
    assert!(rel(f_lumped, f) < 0.03, "{f_lumped} vs {f}");
    // Thomson's formula with the model's own equivalent capacitance gives f1 back.
    let l = s["inductance_h"].as_f64().unwrap();
    let c_eq = s["equivalent_capacitance_f"].as_f64().unwrap();
    let thomson = 1.0 / (2.0 * std::f64::consts::PI * (l * c_eq).sqrt());
    assert!(rel(thomson, f) < 1e-12);
}

#[test]
fn the_tap_found_tunes_the_tank_and_the_pair_splits_as_coupled_resonators() {
    // The spark-gap demo: the tap found for the 30 nF tank, put back into the design as
    // tap_turns, gives (through `coilfield inductance`, another command) an inductance that
    // with the lead resonates at f1 to 1e-6 (Thomson's formula). Two tuned resonators coupled
    // by k split to f0/sqrt(1 +- k) (F. E. Terman, Radio Engineers' Handbook, 1943, section
    // from memory; validation/circuits.csv).
    let demo = root().join("meshes-demo/spark-gap-resonator.toml");
    let j = resonance_json(&demo, &[]);
    let f1 = j["secondary"]["frequency_hz"].as_f64().unwrap();
    let p = &j["primary"];
    let tap = p["tap_for_tank_turns"].as_f64().unwrap();
    assert_eq!(p["tap_found"], true);
    assert!(rel(p["tap_turns"].as_f64().unwrap(), tap) < 1e-12);
    let text = std::fs::read_to_string(&demo).unwrap().replace(
        "wire_diameter = \"6.35 mm\"",
        &format!("wire_diameter = \"6.35 mm\"\ntap_turns = {tap:?}"),
    );
    let dir = tempfile::tempdir().unwrap();
    let inductance = inductance_json(&design_file(dir.path(), "tapped.toml", &text));
    let l_tap = inductance["mutual_h"][1][1].as_f64().unwrap();
    let f_tuned = 1.0 / (2.0 * std::f64::consts::PI * ((l_tap + 1e-6) * 30e-9).sqrt());
    assert!(rel(f_tuned, f1) < 1e-6, "{f_tuned} vs {f1}");
    // f against the tap falls with every turn added.
    let curve = p["frequency_against_tap"].as_array().unwrap();
    assert_eq!(curve.len(), 12);
    for w in curve.windows(2) {
        assert!(w[1]["frequency_hz"].as_f64() < w[0]["frequency_hz"].as_f64());
    }
    let k = p["modal_coupling"].as_f64().unwrap();
    let split = j["split_frequencies_hz"].as_array().unwrap();
    let (lo, hi) = (split[0].as_f64().unwrap(), split[1].as_f64().unwrap());
    assert!(rel(lo, f1 / (1.0 + k).sqrt()) < 1e-6, "{lo}");
    assert!(rel(hi, f1 / (1.0 - k).sqrt()) < 1e-6, "{hi}");
}

#[test]
fn the_spark_gap_respects_its_energy_bound_and_feeds_the_fields() {
    let demo = root().join("meshes-demo/spark-gap-resonator.toml");
    let j = resonance_json(&demo, &[]);
    let d = &j["drive"];
    assert_eq!(d["kind"], "spark_gap");
    let peak = d["peak_top_voltage_v"].as_f64().unwrap();
    let bound = d["energy_bound_top_voltage_v"].as_f64().unwrap();
    // Energy conservation: 1/2 C_p V_p^2 >= 1/2 C_top V_top^2 for any loss.
    assert!(peak > 0.0 && peak <= bound, "{peak} vs {bound}");
    assert!(
        (bound
            - 12e3 * (30e-9 / j["secondary"]["modal_top_capacitance_f"].as_f64().unwrap()).sqrt())
        .abs()
            < 1e-9 * bound
    );
    assert!(d["first_notch_half_cycles"].as_u64().unwrap() >= 1);
    // The energy per bang and the mean power: 1/2 C V^2 and times 120 Hz.
    assert!(
        rel(
            d["energy_per_bang_j"].as_f64().unwrap(),
            0.5 * 30e-9 * 12e3 * 12e3
        ) < 1e-12
    );
    assert!(rel(d["mean_power_w"].as_f64().unwrap(), 120.0 * 2.16) < 1e-12);
    // The drive feeds the electric model: the toroid's peak surface field from `capacitance`
    // (its own solve with the mode's profile at the peak top voltage) against the resonance's
    // breakout voltage (the nodal solves): E_peak = 3 MV/m x peak / breakout, to the
    // discretisation's 1 %.
    let out = run(&["capacitance", demo.to_str().unwrap(), "--format", "json"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let cap: Value = serde_json::from_slice(&out.stdout).unwrap();
    let toroid = cap["peak_surface_fields"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["name"] == "toroid")
        .unwrap()["field_v_per_m"]
        .as_f64()
        .unwrap();
    let breakout = j["secondary"]["breakout_top_voltage_v"].as_f64().unwrap();
    assert!(rel(toroid, 3e6 * peak / breakout) < 0.01, "{toroid}");
    // And the clearance uses the drive's frequency and fields, with time-averaged rows.
    let out = run(&["clearance", demo.to_str().unwrap(), "--format", "json"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let cl: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(
        rel(
            cl["frequency_hz"].as_f64().unwrap(),
            j["secondary"]["frequency_hz"].as_f64().unwrap()
        ) < 1e-12
    );
    let names: Vec<&str> = cl["thresholds"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| t["name"].as_str().unwrap())
        .collect();
    assert!(names.contains(&"icnirp2020_public_whole_body_e_time_averaged"));
}

#[test]
fn the_exciter_is_driven_at_its_coupled_resonance() {
    // A driven primary without a capacitor: one coupled resonance, where the driver locks;
    // the steady state there puts the top voltage at |V_top| with the input power the losses
    // take: P = 1/2 R_top |I_top|^2 + 1/2 R_p I_p^2 >= 0.
    let demo = root().join("meshes-demo/exciter.toml");
    let j = resonance_json(&demo, &[]);
    let d = &j["drive"];
    assert_eq!(d["kind"], "driven");
    let f_d = d["drive_frequency_hz"].as_f64().unwrap();
    assert!(rel(f_d, j["coupled_frequency_hz"].as_f64().unwrap()) < 1e-12);
    assert!(rel(d["peak_primary_current_a"].as_f64().unwrap(), 3.0) < 1e-12);
    assert!(d["input_power_w"].as_f64().unwrap() > 0.0);
    assert!(d["peak_top_voltage_v"].as_f64().unwrap() > 0.0);
    assert!(j["split_frequencies_hz"].is_null());
    // The report and the plots run on both demos (the spark gap's report is read in
    // the_report_gives_the_resonance_and_the_clearance_at_the_drive_voltage).
    for demo in ["exciter.toml", "spark-gap-resonator.toml"] {
        let path = root().join("meshes-demo").join(demo);
        let dir = tempfile::tempdir().unwrap();
        let plot = dir.path().join("r.png");
        let out = run(&[
            "resonance",
            path.to_str().unwrap(),
            "--plot",
            plot.to_str().unwrap(),
        ]);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        assert!(std::fs::metadata(&plot).unwrap().len() > 1000);
        if demo == "exciter.toml" {
            let out = run(&["report", path.to_str().unwrap()]);
            assert!(
                out.status.success(),
                "{}",
                String::from_utf8_lossy(&out.stderr)
            );
            let text = String::from_utf8_lossy(&out.stdout);
            assert!(text.contains("peak top voltage (driven)"), "{text}");
        }
    }
}

/// The number in SI-prefixed text such as "139.16 kHz" or "3.00 MV/m", in base units.
fn si_value(text: &str) -> f64 {
    let mut parts = text.split_whitespace();
    let number: f64 = parts.next().unwrap().parse().unwrap();
    let unit = parts.next().unwrap();
    let prefixes = [
        ('p', 1e-12),
        ('n', 1e-9),
        ('µ', 1e-6),
        ('u', 1e-6),
        ('m', 1e-3),
        ('k', 1e3),
        ('M', 1e6),
        ('G', 1e9),
    ];
    let scale = prefixes
        .iter()
        .find(|(p, _)| unit.starts_with(*p) && unit.chars().count() > 1)
        .map_or(1.0, |(_, s)| *s);
    number * scale
}

/// The value printed after `label` on its line of `text`.
fn labelled<'a>(text: &'a str, label: &str) -> &'a str {
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with(label))
        .unwrap_or_else(|| panic!("no line '{label}' in:\n{text}"));
    line.trim_start()[label.len()..].trim()
}

#[test]
fn the_report_gives_the_resonance_and_the_clearance_at_the_drive_voltage() {
    // The report's summary must carry the same figures as the resonance and clearance
    // commands (one model behind all three): f1 to its 5 printed digits, the peak top voltage
    // and the tap to theirs, and the breakdown and exposure distances to the millimetre printed.
    let demo = root().join("meshes-demo/spark-gap-resonator.toml");
    let out = run(&["report", demo.to_str().unwrap()]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout).into_owned();
    let j = resonance_json(&demo, &[]);
    let f1 = j["secondary"]["frequency_hz"].as_f64().unwrap();
    let sections = j["secondary"]["sections"].as_u64().unwrap();
    let printed_f1 = si_value(labelled(
        &text,
        &format!("f1, distributed model ({sections} sections)"),
    ));
    assert!(rel(printed_f1, f1) < 5e-5, "{printed_f1} vs {f1}");
    let v = j["drive"]["peak_top_voltage_v"].as_f64().unwrap();
    let printed_v = si_value(labelled(&text, "peak top voltage (spark gap)"));
    assert!(rel(printed_v, v) < 5e-4, "{printed_v} vs {v}");
    let tap = j["primary"]["tap_for_tank_turns"].as_f64().unwrap();
    let printed_tap: f64 = labelled(&text, "tap")
        .split_whitespace()
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!((printed_tap - tap).abs() < 6e-4, "{printed_tap} vs {tap}");
    assert!(labelled(&text, "energy per bang").ends_with(" J"));
    let out = run(&["clearance", demo.to_str().unwrap(), "--format", "json"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let c: Value = serde_json::from_slice(&out.stdout).unwrap();
    for name in [
        "air_breakdown",
        "icnirp2010_public_e",
        "icnirp2020_public_whole_body_b",
    ] {
        let t = c["thresholds"]
            .as_array()
            .unwrap()
            .iter()
            .find(|t| t["name"] == name)
            .unwrap();
        let rest = labelled(&text, &format!("{name} "));
        let axis: f64 = rest
            .split("from axis ")
            .nth(1)
            .unwrap()
            .trim_start_matches('>')
            .split(' ')
            .next()
            .unwrap()
            .parse()
            .unwrap();
        let expected = t["distance_from_axis_m"].as_f64().unwrap();
        assert!(
            (axis - expected).abs() <= 6e-4,
            "{name}: {axis} vs {expected}"
        );
    }
    assert!(text.contains("CAUTION"));
}

#[test]
fn sweep_metrics_of_the_resonance_reuse_the_secondary() {
    // A sweep of the primary's height: the secondary's frequency is the resonance command's
    // to the last bit at every point (the secondary's part is the base's), and the tuning
    // capacitance follows the primary's inductance: C = 1 / ((2 pi f1)^2 (L + L_lead)).
    let dir = tempfile::tempdir().unwrap();
    let demo = std::fs::read_to_string(root().join("meshes-demo/spark-gap-resonator.toml"))
        .unwrap()
        .replace(
            "wire_diameter = \"6.35 mm\"",
            "wire_diameter = \"6.35 mm\"\ntap_turns = 8",
        );
    design_file(dir.path(), "d.toml", &demo);
    std::fs::write(
        dir.path().join("s.toml"),
        "base = \"d.toml\"\nmetrics = [\"frequency.secondary\", \"tuning_capacitance.primary\", \
         \"q.secondary\", \"peak_voltage.secondary\"]\n\n[[axis]]\n\
         key = \"winding.primary.origin[2]\"\nvalues = [0.40, 0.43]\n",
    )
    .unwrap();
    let csv = dir.path().join("o.csv");
    let out = run(&[
        "sweep",
        dir.path().join("s.toml").to_str().unwrap(),
        "--out",
        csv.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let j = resonance_json(&dir.path().join("d.toml"), &[]);
    let f1 = j["secondary"]["frequency_hz"].as_f64().unwrap();
    let text = std::fs::read_to_string(&csv).unwrap();
    let rows: Vec<Vec<&str>> = text
        .lines()
        .skip(1)
        .map(|l| l.split(',').collect())
        .collect();
    assert_eq!(rows.len(), 2);
    for r in &rows {
        assert_eq!(
            r[2].parse::<f64>().unwrap().to_bits(),
            f1.to_bits(),
            "{r:?}"
        );
        assert_eq!(r[6], "ok");
    }
    // At the design's own height the tuning capacitance is the resonance command's.
    let c = rows[1][3].parse::<f64>().unwrap();
    assert!(rel(c, j["primary"]["tuning_capacitance_f"].as_f64().unwrap()) < 1e-12);
    let l = j["primary"]["tap_inductance_h"].as_f64().unwrap();
    let thomson = 1.0 / ((2.0 * std::f64::consts::PI * f1).powi(2) * (l + 1e-6));
    assert!(rel(c, thomson) < 1e-12);
}

#[test]
fn bad_resonance_input_is_refused_naming_the_key() {
    let dir = tempfile::tempdir().unwrap();
    let demo =
        std::fs::read_to_string(root().join("meshes-demo/spark-gap-resonator.toml")).unwrap();
    let cases: Vec<(String, Vec<&str>, &[&str])> = vec![
        // No secondary: the resonance model names `role`.
        (
            demo.replace("role = \"secondary\"", "role = \"other\""),
            vec![],
            &["role", "secondary"],
        ),
        // Explicit potentials together with a drive model.
        (
            demo.replace(
                "kind = \"spark_gap\"",
                "kind = \"spark_gap\"\npotentials = { toroid = 1.0 }",
            ),
            vec![],
            &["drive", "potentials"],
        ),
        // A frequency for a spark gap.
        (
            demo.replace(
                "kind = \"spark_gap\"",
                "kind = \"spark_gap\"\nfrequency = \"171 kHz\"",
            ),
            vec![],
            &["frequency", "spark gap"],
        ),
        // A drive that cannot resonate: no tank capacitance.
        (
            demo.replace("\"30 nF\"", "0"),
            vec![],
            &["tank_capacitance", "positive"],
        ),
        // A capacitance with the unit of an inductance.
        (
            demo.replace("\"30 nF\"", "\"30 nH\""),
            vec![],
            &["tank_capacitance", "unit of an inductance"],
        ),
        // A tap beyond the winding's turns.
        (
            demo.replace(
                "wire_diameter = \"6.35 mm\"",
                "wire_diameter = \"6.35 mm\"\ntap_turns = 13",
            ),
            vec![],
            &["tap_turns"],
        ),
        // A conductor the table of resistivities does not know.
        (
            demo.replace("tube_wall = \"0.8 mm\"", "conductor = \"unobtainium\""),
            vec![],
            &["conductor", "unobtainium"],
        ),
        // A tube wall thicker than the tube's radius.
        (
            demo.replace("\"0.8 mm\"", "\"4 mm\""),
            vec![],
            &["tube_wall", "thinner"],
        ),
        // A section count out of range.
        (demo.clone(), vec!["--sections", "0"], &["sections"]),
        (
            demo.clone(),
            vec!["--sections", "400"],
            &["sections", "256"],
        ),
    ];
    for (i, (text, extra, needles)) in cases.iter().enumerate() {
        let path = design_file(dir.path(), &format!("b{i}.toml"), text);
        let mut args = vec!["resonance", path.to_str().unwrap()];
        args.extend(extra.iter().copied());
        let out = run(&args);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "case {i}: {err}");
        assert!(
            err.contains(path.to_str().unwrap()) || !extra.is_empty(),
            "case {i}: {err}"
        );
        for n in *needles {
            assert!(err.contains(n), "case {i}: `{n}` not in {err}");
        }
    }
}
