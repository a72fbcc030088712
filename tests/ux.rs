//! What a builder reads and types: one number formatter for every output, grid values snapped
//! to the decimals a person means, inputs as builders measure them.

mod common;

use common::{root, run, stdout_of, svg_texts};

fn demo(name: &str) -> String {
    root()
        .join("meshes-demo")
        .join(name)
        .to_str()
        .unwrap()
        .to_string()
}

/// Every number token of a CSV line must read back as the shortest text of its value: no
/// exponent where the plain form is as short ("3e-1"), and no "-0".
fn assert_shortest_csv(text: &str) {
    for line in text.lines().skip(1) {
        for field in line.split(',') {
            let Ok(v) = field.parse::<f64>() else {
                continue;
            };
            assert_ne!(field, "-0", "negative zero in {line}");
            let plain = format!("{}", if v == 0.0 { 0.0 } else { v });
            let exp = format!("{:e}", if v == 0.0 { 0.0 } else { v });
            let shortest = if exp.len() < plain.len() { exp } else { plain };
            assert_eq!(field, shortest, "not the shortest text in {line}");
        }
    }
}

#[test]
fn field_csv_and_json_numbers_are_shortest_and_never_negative_zero() {
    let design = demo("spark-gap-resonator.toml");
    let csv = stdout_of(&[
        "field",
        &design,
        "--at",
        "0.3,0,0.5",
        "--at",
        "0,-0.3,0.5",
        "--format",
        "csv",
    ]);
    // The point as typed, not "3e-1,0e0,5e-1".
    assert!(
        csv.lines().nth(1).unwrap().starts_with("0.3,0,0.5,"),
        "{csv}"
    );
    assert_shortest_csv(&csv);
    for point in ["0,0,0.9", "0,-0.3,0.5", "-0.3,0,0.5"] {
        let json = stdout_of(&["field", &design, "--at", point, "--format", "json"]);
        assert!(
            !json.contains("-0.0,") && !json.contains("-0.0\n"),
            "{json}"
        );
    }
}

#[test]
fn sweep_grid_values_are_snapped_and_printed_as_typed() {
    // from 0.05 to 0.1 in 11 steps: binary interpolation gives 0.05500000000000001 and
    // 0.08499999999999999; the grid computes and prints 0.055 and 0.085.
    let dir = tempfile::tempdir().unwrap();
    let sweep = dir.path().join("snap.toml");
    std::fs::write(
        &sweep,
        format!(
            "base = {:?}\nmetrics = [\"self_inductance.primary\"]\n[[axis]]\nkey = \
             \"winding.primary.origin[2]\"\nfrom = 0.05\nto = 0.1\nsteps = 11\n",
            demo("tabletop-resonator.toml")
        ),
    )
    .unwrap();
    let out = dir.path().join("snap.csv");
    stdout_of(&[
        "sweep",
        sweep.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    let text = std::fs::read_to_string(&out).unwrap();
    let axis: Vec<&str> = text
        .lines()
        .skip(1)
        .map(|l| l.split(',').nth(1).unwrap())
        .collect();
    assert_eq!(
        axis,
        [
            "0.05", "0.055", "0.06", "0.065", "0.07", "0.075", "0.08", "0.085", "0.09", "0.095",
            "0.1"
        ]
    );
    assert_shortest_csv(&text);
}

/// The first TOML block of the README's "Design file" section.
fn readme_design() -> String {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let section = &readme[readme.find("## Design file").expect("design section")..];
    let start = section.find("```toml\n").expect("toml block") + "```toml\n".len();
    let end = start + section[start..].find("```").unwrap();
    section[start..end].to_string()
}

/// Run every command that applies to a design: inductance, report and export always;
/// resonance with a secondary; capacitance with an electrode; field, map and clearance with a
/// drive. A command that does not apply by a stated limit must say so and exit 2.
fn run_every_command(design: &std::path::Path, text: &str) {
    let d = design.to_str().unwrap();
    let dir = tempfile::tempdir().unwrap();
    let vtk = dir.path().join("vtk");
    let svg = dir.path().join("map.svg");
    let mut commands: Vec<Vec<&str>> = vec![
        vec!["inductance", d],
        vec!["inductance", d, "--format", "json"],
        vec!["report", d],
        vec!["export", d, "--vtk", vtk.to_str().unwrap()],
    ];
    let has = |needle: &str| text.lines().any(|l| l.trim_start().starts_with(needle));
    let secondary = has("role = \"secondary\"");
    if secondary {
        commands.push(vec!["resonance", d]);
    }
    if has("[[electrode]]") {
        commands.push(vec!["capacitance", d]);
    }
    if has("[drive]") {
        commands.push(vec!["field", d, "--at", "3,0,0.3"]);
        commands.push(vec!["clearance", d]);
        commands.push(vec![
            "map",
            d,
            "--plane",
            "xz",
            "--extent",
            "0.02,1,0,1",
            "--resolution",
            "12,12",
            "--plot",
            svg.to_str().unwrap(),
        ]);
    }
    for args in &commands {
        let out = run(args);
        let stderr = String::from_utf8_lossy(&out.stderr);
        if args[0] == "resonance" && stderr.contains("the distributed model handles up to") {
            // A benchmark design beyond the resonance model's stated turn limit.
            assert_eq!(out.status.code(), Some(2), "{args:?}: {stderr}");
            continue;
        }
        assert!(out.status.success(), "coilfield {args:?} failed: {stderr}");
        assert!(!out.stdout.is_empty(), "coilfield {args:?} printed nothing");
    }
}

#[test]
fn the_readme_design_runs_through_every_command() {
    let text = readme_design();
    // The example shows the builders' keys.
    for key in [
        "insulation = \"heavy\"",
        "turn_spacing",
        "[drive]",
        "[[electrode]]",
    ] {
        assert!(text.contains(key), "README example lacks {key}");
    }
    let dir = tempfile::tempdir().unwrap();
    let path = common::design_file(dir.path(), "readme.toml", &text);
    run_every_command(&path, &text);
}

#[test]
fn every_demo_design_runs_through_every_command_that_applies() {
    let mut seen = 0;
    for entry in std::fs::read_dir(root().join("meshes-demo")).unwrap() {
        let path = entry.unwrap().path();
        let text = std::fs::read_to_string(&path).unwrap();
        // Sweep and seek files name a base design; they run in tests/sweep.rs.
        if path.extension().is_some_and(|e| e == "toml")
            && !text.lines().any(|l| l.starts_with("base ="))
        {
            run_every_command(&path, &text);
            seen += 1;
        }
    }
    assert!(seen >= 12, "only {seen} demo designs");
}

#[test]
fn clearance_of_a_threshold_never_exceeded_says_so() {
    // 1 GV/m is far above any field outside the conductors of the demo; points inside the
    // conductors must not count as above it (they used to give the conductor's edge).
    let design = demo("bench-fields.toml");
    let json = stdout_of(&[
        "clearance",
        &design,
        "--threshold",
        "huge,E,1e9,peak",
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let huge = v["thresholds"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["name"] == "huge")
        .expect("the extra threshold");
    assert_eq!(huge["never_exceeded"], true, "{huge}");
    assert!(huge["distance_from_axis_m"].is_null(), "{huge}");
    assert!(huge["distance_from_top_m"].is_null(), "{huge}");
    let table = stdout_of(&["clearance", &design, "--threshold", "huge,E,1e9,peak"]);
    assert!(
        table.contains("huge: never exceeded outside the conductors"),
        "{table}"
    );
    assert!(table.contains("\"from axis\"") && table.contains("\"from top\""));
}

#[test]
fn capacitance_names_the_effective_top_capacitance_and_the_matrix_diagonal() {
    let design = demo("bench-fields.toml");
    let json = stdout_of(&["capacitance", &design, "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    let top = &v["effective_top_capacitance"];
    let c_top = top["capacitance_f"]
        .as_f64()
        .expect("effective top capacitance");
    // The difference of two solves, checked against the secondary's own figures: with the
    // electrode (total) minus the effective top capacitance is the secondary alone, which
    // lies near its bare figure (the electrode at 0 V shields it a little) and is below the
    // Maxwell diagonal of the electrode (which holds the secondary at 0 V).
    let secondary = v["conductors"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["kind"] == "secondary")
        .unwrap();
    let total = secondary["with_connected_electrodes_f"].as_f64().unwrap();
    let bare = secondary["capacitance_f"].as_f64().unwrap();
    let diagonal = v["matrix_f"][0][0].as_f64().unwrap();
    assert!(c_top > 0.0 && c_top < diagonal, "{c_top} vs {diagonal}");
    assert!(
        ((total - c_top) - bare).abs() < 0.05 * bare,
        "{total} {c_top} {bare}"
    );
    let table = stdout_of(&["capacitance", &design]);
    assert!(
        table.contains("effective top capacitance of topload"),
        "{table}"
    );
    assert!(table.contains("diagonal of the Maxwell matrix"), "{table}");
    // Estimates in the unit of their value: no bare "e-17 F" beside "pF".
    assert!(!table.contains("e-1"), "{table}");
}

#[test]
fn seek_maximises_a_magnitude_within_its_budget_and_flags_a_bound() {
    let seek = demo("seek-pickup.toml");
    let json = stdout_of(&["seek", &seek, "--format", "json"]);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(v["metric"], "abs(coupling.secondary.pickup)");
    let best = v["value"].as_f64().unwrap();
    assert!(v["evaluations"].as_u64().unwrap() <= 120, "{v}");
    // A brute-force reference: |k| on a grid of the same box under the same constraint.
    let dir = tempfile::tempdir().unwrap();
    let sweep = dir.path().join("grid.toml");
    std::fs::write(
        &sweep,
        format!(
            "base = {:?}\nmetrics = [\"coupling.secondary.pickup\"]\nconstraints = \
             [\"gap.secondary.pickup >= 0.02\"]\n[[axis]]\nkey = \"winding.pickup.origin[0]\"\n\
             from = 0.12\nto = 0.4\nsteps = 8\n[[axis]]\nkey = \"winding.pickup.tilt_deg\"\n\
             about = [0.0, 1.0, 0.0]\nfrom = -60.0\nto = 60.0\nsteps = 25\n",
            demo("tabletop-resonator.toml")
        ),
    )
    .unwrap();
    let out = dir.path().join("grid.csv");
    stdout_of(&[
        "sweep",
        sweep.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    let grid_best = std::fs::read_to_string(&out)
        .unwrap()
        .lines()
        .skip(1)
        .filter(|l| l.contains(",ok,"))
        .map(|l| l.split(',').nth(3).unwrap().parse::<f64>().unwrap().abs())
        .fold(0.0, f64::max);
    assert!(best >= 0.99 * grid_best, "seek {best} vs grid {grid_best}");
    // The largest |k| is at the closest allowed distance: the lower bound, flagged.
    let on_bound: Vec<&str> = v["on_bound"]
        .as_array()
        .unwrap()
        .iter()
        .map(|b| b.as_str().unwrap())
        .collect();
    assert!(
        on_bound
            .iter()
            .any(|b| b.contains("origin[0] is on its lower bound")),
        "{on_bound:?}"
    );
    let table = stdout_of(&["seek", &seek]);
    assert!(
        table.contains("winding.pickup.origin[0] = 120.000 mm"),
        "{table}"
    );
    assert!(
        table.contains("note: the optimum sits on a bound"),
        "{table}"
    );
}

#[test]
fn the_wavelength_warning_is_printed_once_with_its_ratio_and_meaning() {
    // 1000 turns of 55 mm radius over 500 mm: N sqrt((2 pi a)^2 + p^2) = 345.6 m of wire;
    // lambda = c / 300 kHz = 999.3 m: 0.346 wavelengths.
    let len = 1000.0 * (std::f64::consts::TAU * 0.055f64).hypot(0.0005);
    let ratio = len / (299_792_458.0 / 300e3);
    let design = demo("bench-fields.toml");
    let out = run(&["field", &design, "--at", "3,0,0.3"]);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(stderr.matches("wavelengths").count(), 1, "{stderr}");
    assert!(
        stderr.contains(&format!("{ratio:.3} wavelengths")),
        "{stderr}"
    );
    assert!(stderr.contains(&format!("{len:.1} m long")), "{stderr}");
    assert!(
        stderr.contains("accounts for the distributed winding"),
        "{stderr}"
    );
    // The report prints the same wire length.
    let report = stdout_of(&["report", &design]);
    assert!(report.contains(&format!("{len:.1} m of wire")), "{report}");
}

#[test]
fn the_demo_report_shows_the_whole_job() {
    // The README's first command.
    let report = stdout_of(&["report", &demo("tabletop-resonator.toml")]);
    for part in [
        "windings",
        "inductance matrix",
        "coupling in brief",
        "electrodes and capacitances",
        "topload: torus, 320.0 mm outside diameter, 80.00 mm tube",
        "effective top capacitance of topload",
        "resonance of the secondary",
        "peak top voltage (driven)",
        "clearance at the drive model's peak top voltage",
        "CAUTION",
    ] {
        assert!(report.contains(part), "report lacks {part:?}:\n{report}");
    }
    // Each warning once.
    assert_eq!(report.matches("wavelengths at").count(), 1, "{report}");
    // The fields at the walk-around distances are what `field` gives at the same point (the
    // torus centre's height, 0.62 m, 1 m from the axis).
    let json: serde_json::Value = serde_json::from_str(&stdout_of(&[
        "field",
        &demo("tabletop-resonator.toml"),
        "--at",
        "1,0,0.62",
        "--format",
        "json",
    ]))
    .unwrap();
    let e_kv = json["points"][0]["e_mag_v_per_m"].as_f64().unwrap() / 1e3;
    let row = report
        .lines()
        .find(|l| l.contains("1.00 m from the axis"))
        .expect("fields at 1 m");
    assert!(
        row.contains(&format!("|E| {:>12}", format!("{e_kv:.3} kV/m"))),
        "{row} vs {e_kv}"
    );
    // The secondary's DC resistance: 900 turns of AWG 26 copper on 55 mm radius over 450 mm,
    // R = rho l / (pi d^2 / 4) with rho = 1.678e-8 ohm m (copper at 20 C, CRC Handbook of
    // Chemistry and Physics; value from memory) and d = 0.127 mm x 92^((36 - 26) / 39)
    // (ASTM B258).
    let len = 900.0 * (std::f64::consts::TAU * 0.055f64).hypot(0.0005);
    let d = 0.127e-3 * 92f64.powf(10.0 / 39.0);
    let r = 1.678e-8 * len / (std::f64::consts::PI * d * d / 4.0);
    assert!(
        report.contains(&format!("DC resistance {r:.2} Ω")),
        "{r:.2} ohm not in:\n{report}"
    );
}

/// `report --html`: the notes the field map's legend draws for thresholds outside its plotted
/// range (in the main demo, exposure levels below the map's smallest |E| and air breakdown
/// above its largest) are the report's warnings too, in `map`'s words ("heat map contour:
/// ..."), once in the text on stdout and once in the page's tables.
#[test]
fn the_html_reports_warnings_carry_the_field_maps_notes() {
    let dir = tempfile::tempdir().unwrap();
    let page = dir.path().join("r.html");
    let report = stdout_of(&[
        "report",
        &demo("tabletop-resonator.toml"),
        "--html",
        page.to_str().unwrap(),
    ]);
    let html = std::fs::read_to_string(&page).unwrap();
    let start = html.find("id=\"fig-field-map\"").expect("the field map");
    let figure = &html[start..start + html[start..].find("</figure>").unwrap()];
    let notes: Vec<String> = svg_texts(figure)
        .into_iter()
        .filter(|t| t.ends_with("not drawn"))
        .collect();
    assert!(!notes.is_empty(), "the demo's map draws every threshold");
    for note in &notes {
        let warning = format!("heat map contour: {note}");
        assert_eq!(
            report.matches(&format!("note: {warning}\n")).count(),
            1,
            "{warning} in:\n{report}"
        );
        assert_eq!(
            html.matches(&format!("<td>note: {warning}</td>")).count(),
            1,
            "{warning} in the page"
        );
    }
}

#[test]
fn field_table_shows_the_vectors() {
    let design = demo("bench-fields.toml");
    let table = stdout_of(&["field", &design, "--at", "0.3,0,0.5"]);
    let json: serde_json::Value = serde_json::from_str(&stdout_of(&[
        "field",
        &design,
        "--at",
        "0.3,0,0.5",
        "--format",
        "json",
    ]))
    .unwrap();
    // E = (185.7, 0, -145.3) kV/m in the table is the JSON's vector to four digits.
    let e = json["points"][0]["e_field_v_per_m"].as_array().unwrap();
    let ex_kv = e[0].as_f64().unwrap() / 1e3;
    let ez_kv = e[2].as_f64().unwrap() / 1e3;
    let row = table
        .lines()
        .find(|l| l.contains("(0.3, 0, 0.5)"))
        .expect("the point's row");
    assert!(row.contains("E (x, y, z)") || table.contains("E (x, y, z)"));
    assert!(
        row.contains(&format!("({ex_kv:.1} kV/m, 0 kV/m, {ez_kv:.1} kV/m)")),
        "{row}"
    );
}

/// Whether `text` holds a number in exponent form ("1e-5", "2.1e+05", "3.0E4").
fn has_exponent(text: &str) -> bool {
    let b = text.as_bytes();
    (1..b.len().saturating_sub(1)).any(|i| {
        (b[i] == b'e' || b[i] == b'E')
            && b[i - 1].is_ascii_digit()
            && (b[i + 1].is_ascii_digit()
                || ((b[i + 1] == b'-' || b[i + 1] == b'+')
                    && b.get(i + 2).is_some_and(u8::is_ascii_digit)))
    })
}

#[test]
fn drive_model_warnings_print_si_prefixes_not_exponents() {
    // The driven demo's fields come from its drive model: the warning says with what figures.
    let json: serde_json::Value = serde_json::from_str(&stdout_of(&[
        "field",
        &demo("tabletop-resonator.toml"),
        "--at",
        "1,0,0.62",
        "--format",
        "json",
    ]))
    .unwrap();
    let warnings: Vec<&str> = json["warnings"]
        .as_array()
        .expect("warnings")
        .iter()
        .filter_map(|w| w.as_str())
        .collect();
    let derived = warnings
        .iter()
        .find(|w| w.contains("drive model: peak top voltage"))
        .unwrap_or_else(|| panic!("no drive-model warning in {warnings:?}"));
    assert!(!has_exponent(derived), "{derived}");
    assert!(
        derived.contains(" kV ") || derived.contains(" MV "),
        "{derived}"
    );
    assert!(derived.contains(" kHz"), "{derived}");
    assert!(has_exponent("error 1e-5 relative") && !has_exponent("AWG 26e"));
}

#[test]
fn verify_prints_values_through_the_one_formatter() {
    // Grover's Table 36 value for d/l = 1 (validation/nagaoka.csv, row 1) reads as printed,
    // not as "6.884230000000e-1".
    let out = run(&["verify"]);
    let text = String::from_utf8(out.stdout).unwrap();
    let row = text
        .lines()
        .skip_while(|l| !l.contains("nagaoka") || !l.contains("#1 "))
        .nth(1)
        .expect("nagaoka row 1");
    assert!(row.contains("reference 0.688423 "), "{row}");
    assert!(!text.contains("000000e"), "{text}");
}
