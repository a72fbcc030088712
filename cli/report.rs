//! `coilfield report`: a readable report of a design for people.

use crate::clearance::{self, ClearanceArgs, ClearanceOut};
use crate::output::si;
use crate::{Format, inductance, load};
use coilfield_geometry::discretise::wire_length_m;
use coilfield_geometry::{Design, DriveKind, Role, Shape, TapEnd, Winding};
use coilfield_solver::Par;
use coilfield_solver::assembly::inductance_report;
use coilfield_solver::resonance::{
    Resolved, Resonance, ResonanceParams, resolve, resonance, resonance_roles,
};
use std::fmt::Write as _;
use std::path::Path;
use std::process::ExitCode;

/// Printed with every report: the work can hurt people.
pub const CAUTION: &str = "\
CAUTION: air-core resonant transformers and wireless-power coils run at high voltage and radio
frequency. Contact with a running coil, or an arc from it, can kill or cause deep RF burns that
are not felt at once; strong fields can upset implanted medical devices and nearby electronics.
The figures here are design estimates, not a safety assessment. Follow local electrical codes,
exposure regulations and licensed, qualified practice.";

/// ", tapped at 6.25 turns from the outer end" for a tapped winding, else nothing.
fn describe_tap(w: &Winding) -> String {
    let Some(tap) = w.tap else {
        return String::new();
    };
    let end = match (&w.shape, tap.from) {
        (Shape::Helix { .. }, TapEnd::End) => "top",
        (Shape::Helix { .. }, TapEnd::Start) => "bottom",
        (_, TapEnd::End) => "outer end",
        (_, TapEnd::Start) => "inner end",
    };
    format!(", tapped at {} turns from the {end}", tap.turns)
}

fn describe(w: &Winding) -> String {
    let mm = |v: f64| si(v, "m", 4);
    match &w.shape {
        Shape::Helix {
            radius_m,
            length_m,
            turns,
            ..
        } => format!(
            "helix, {turns} turns, radius {}, length {}, pitch {}",
            mm(*radius_m),
            mm(*length_m),
            mm(length_m / turns)
        ),
        Shape::Spiral {
            inner_radius_m,
            outer_radius_m,
            turns,
            ..
        } => format!(
            "flat spiral, {turns} turns, radius {} to {}",
            mm(*inner_radius_m),
            mm(*outer_radius_m)
        ),
        Shape::Cone {
            inner_radius_m,
            outer_radius_m,
            height_m,
            turns,
            ..
        } => format!(
            "cone, {turns} turns, radius {} to {}, height {}",
            mm(*inner_radius_m),
            mm(*outer_radius_m),
            mm(*height_m)
        ),
        Shape::Ring {
            radius_m, count, ..
        } => format!("ring, {count} coincident turn(s), radius {}", mm(*radius_m)),
        Shape::Polyline { points_m, closed } => format!(
            "{} polyline of {} points",
            if *closed { "closed" } else { "open" },
            points_m.len()
        ),
    }
}

/// Run `coilfield report`: the text report on stdout and, with `html`, the same report as one
/// self-contained HTML page with figures ([`crate::report_html`]), written atomically. With
/// `html` the text (stdout and the page's tables) carries the figures' warnings too.
pub fn run(path: &Path, html: Option<&Path>) -> anyhow::Result<ExitCode> {
    // A wrong file name is refused before any work.
    if let Some(p) = html {
        crate::map::check_ext(p, "--html", &["html", "htm"])?;
    }
    let design = load::design(path)?;
    let report = inductance_report(&design, Par::Rayon)?;
    let mut s = String::new();
    let _ = writeln!(s, "coilfield design report: {}\n", path.display());
    s.push_str("windings\n");
    for w in &design.windings {
        let role = match w.role {
            Role::Secondary => "secondary",
            Role::Primary => "primary",
            Role::Other => "other",
        };
        let _ = writeln!(
            s,
            "  {} ({role}): {}{}; wire {} diameter, {} of wire{}",
            w.name,
            describe(w),
            describe_tap(w),
            si(w.wire_diameter_m, "m", 4),
            si(wire_length_m(w), "m", 4),
            resistance_and_mass(w)
        );
    }
    s.push('\n');
    s.push_str(&inductance::table(&report));
    let n = report.windings.len();
    if n >= 2 {
        s.push_str("\ncoupling in brief\n");
        for i in 0..n {
            for j in (i + 1)..n {
                let _ = writeln!(
                    s,
                    "  {} - {}: M = {}, k = {:.4}",
                    report.windings[i].name,
                    report.windings[j].name,
                    si(report.mutual_h[i][j], "H", 5),
                    report.coupling[i][j]
                );
            }
        }
    }
    for w in &report.windings {
        if let Some(check) = w.cross_check_h {
            let rel = (w.self_inductance_h - check) / check;
            let _ = writeln!(
                s,
                "  {}: self-inductance differs from its cross-check by {:+.2e} (relative)",
                w.name, rel
            );
        }
    }
    let (section, resolved) = resonance_and_clearance(&design, path)?;
    s.push_str(&section);
    // The figures before the text ends: the field map's warnings belong to the report's, in
    // the text and (as its tables) in the page, once each.
    let figures = html
        .map(|_| html_figures(&design, &resolved, path))
        .transpose()?;
    if let Some(f) = &figures {
        s.push_str(&figure_warnings_section(&f.warnings));
    }
    let _ = writeln!(s, "\n{CAUTION}");
    if let (Some(p), Some(f)) = (html, figures) {
        let page = crate::report_html::page(
            &format!("coilfield design report: {}", path.display()),
            &s,
            &f.figures,
            &f.notes,
        );
        crate::output::write_atomic(p, page.as_bytes())?;
    }
    crate::output::print_stdout(&s)?;
    Ok(ExitCode::SUCCESS)
}

/// The figures of the HTML page, the notes on figures it lacks, and the figures' warnings.
struct HtmlFigures {
    figures: Vec<crate::report_html::Figure>,
    notes: Vec<String>,
    warnings: Vec<String>,
}

/// The figures of the report's HTML page: a side view of `design`, the field map of
/// `resolved` (the design with its drive resolved) when it has a drive, and k against the
/// primary's height when it has a primary; a note for each figure it cannot draw.
fn html_figures(design: &Design, resolved: &Design, path: &Path) -> anyhow::Result<HtmlFigures> {
    use crate::report_html as h;
    let label = path.display().to_string();
    let mut out = HtmlFigures {
        figures: vec![h::side_view(design)],
        notes: Vec::new(),
        warnings: Vec::new(),
    };
    let drive = &resolved.drive;
    if drive.currents_a.is_empty() && drive.potentials_v.is_empty() {
        out.notes
            .push("No field map: the design has no drive ([drive]).".to_string());
    } else {
        let (figure, warnings) = h::field_map(resolved, &label)?;
        out.figures.push(figure);
        out.warnings.extend(warnings);
    }
    match h::coupling_against_height(design)? {
        Some(f) => out.figures.push(f),
        None => out
            .notes
            .push("No coupling curve: the design has no primary and secondary pair.".to_string()),
    }
    Ok(out)
}

/// The warnings of the HTML page's figures as a section of the text report (nothing without
/// any): `map`'s words, one note each.
fn figure_warnings_section(warnings: &[String]) -> String {
    if warnings.is_empty() {
        return String::new();
    }
    let mut s = String::from("\nfigures of the HTML page\n");
    for w in warnings {
        let _ = writeln!(s, "  note: {w}");
    }
    s
}

/// The resonance section and, when the design has a drive, the clearance at the drive's
/// voltage and currents; a note instead where the design has no resonance model (no helix
/// secondary). Returns the design with its drive resolved too.
fn resonance_and_clearance(design: &Design, path: &Path) -> anyhow::Result<(String, Design)> {
    let label = path.display().to_string();
    let mut s = String::new();
    let resolved = match resonance_roles(design, &label) {
        Err(why) => {
            let _ = writeln!(s, "\nresonance: not modelled ({why})");
            Resolved {
                design: design.clone(),
                resonance: None,
            }
        }
        Ok(()) if design.drive.kind == DriveKind::Explicit => {
            let r = resonance(design, &label, &ResonanceParams::default(), Par::Rayon)?;
            s.push_str(&resonance_section(&r));
            Resolved {
                design: design.clone(),
                resonance: None,
            }
        }
        Ok(()) => {
            let resolved = resolve(design, &label, Par::Rayon)?;
            if let Some(r) = &resolved.resonance {
                s.push_str(&resonance_section(r));
            }
            resolved
        }
    };
    // Warnings are printed once, at the end of the section that raised them first.
    let (cap_text, mut printed) = capacitance_section(&resolved.design, &label);
    s.push_str(&cap_text);
    let resolved_design = resolved.design.clone();
    let drive = &resolved.design.drive;
    let driven = !(drive.currents_a.is_empty() && drive.potentials_v.is_empty());
    if driven && drive.frequency_hz.is_some() {
        let args = ClearanceArgs {
            design: path,
            // The design's [clearance] distances, else a builder's usual walk-around set.
            distances: design
                .clearance
                .distances_m
                .is_empty()
                .then_some(REPORT_DISTANCES),
            long_gap_v_per_m: None,
            extra: &[],
            max_distance_m: None,
            format: Format::Table,
            electric: crate::capacitance_fem::ElectricSolver::Auto,
        };
        let from_model = resolved.resonance.is_some();
        let c = clearance::compute(&args, resolved)?;
        s.push_str(&clearance_section(&c, from_model, &mut printed));
    } else {
        s.push_str(
            "\nclearance: the design has no drive with a frequency ([drive] kind, or currents or \
             potentials with frequency); no fields or clearance distances\n",
        );
    }
    Ok((s, resolved_design))
}

/// Distances from the axis (m, at the top conductor's height) at which the report gives the
/// fields when the design's `[clearance]` names none.
const REPORT_DISTANCES: &str = "0.5,1,2,3";

/// Density of copper (kg/m^3), 8.96 g/cm^3 at room temperature (from memory; common practice).
const COPPER_DENSITY_KG_PER_M3: f64 = 8960.0;

/// ", DC resistance 12.3 ohm, mass 45.6 g": R = rho l / A of the conductor's cross-section
/// (a tube's wall, or the solid wire), and the mass of a copper conductor (other materials:
/// no density at hand, so no mass). The AC resistance at f1 is in the resonance section (Q).
fn resistance_and_mass(w: &Winding) -> String {
    let name = w.conductor.material.as_deref().unwrap_or("copper");
    let Ok(material) = coilfield_solver::losses::conductor(name) else {
        return String::new();
    };
    let b = 0.5 * w.wire_diameter_m;
    let area_m2 = match w.conductor.tube_wall_m {
        Some(t) => std::f64::consts::PI * (b * b - (b - t) * (b - t)),
        None => std::f64::consts::PI * b * b,
    };
    let len = wire_length_m(w);
    let mut s = format!(
        ", DC resistance {}",
        si(material.resistivity_ohm_m * len / area_m2, "Ω", 4)
    );
    if name == "copper" || name == "iacs" {
        let _ = write!(
            s,
            ", mass {}",
            si(COPPER_DENSITY_KG_PER_M3 * area_m2 * len * 1000.0, "g", 4)
        );
    }
    s
}

/// An electrode's shape and sizes in the builder's words.
fn describe_electrode(shape: &coilfield_geometry::ElectrodeShape) -> String {
    use coilfield_geometry::ElectrodeShape as E;
    let mm = |v: f64| si(v, "m", 4);
    match shape {
        E::Torus {
            centre_m,
            major_radius_m,
            minor_radius_m,
            ..
        } => format!(
            "torus, {} outside diameter, {} tube, centre at height {}",
            mm(2.0 * (major_radius_m + minor_radius_m)),
            mm(2.0 * minor_radius_m),
            mm(centre_m.z)
        ),
        E::Sphere {
            centre_m, radius_m, ..
        } => format!(
            "sphere, {} diameter, centre at height {}",
            mm(2.0 * radius_m),
            mm(centre_m.z)
        ),
        E::Disc {
            centre_m, radius_m, ..
        } => format!(
            "disc, {} diameter, at height {}",
            mm(2.0 * radius_m),
            mm(centre_m.z)
        ),
        E::Cylinder {
            base_centre_m,
            radius_m,
            length_m,
            ..
        } => format!(
            "closed cylinder, {} diameter, {} long, base at height {}",
            mm(2.0 * radius_m),
            mm(*length_m),
            mm(base_centre_m.z)
        ),
    }
}

/// The electrodes and the capacitances (the `capacitance` command's table: the effective top
/// capacitance, the secondary's self-capacitance, the Maxwell matrix, peak surface fields), or
/// why the electric model does not apply.
fn capacitance_section(design: &Design, label: &str) -> (String, Vec<String>) {
    let mut s = String::from("\nelectrodes and capacitances\n");
    for e in &design.electrodes {
        let connect = e
            .connect
            .as_ref()
            .map_or(String::from("not connected"), |t| {
                format!(
                    "connected to {}'s {}",
                    t.winding,
                    match t.end {
                        coilfield_geometry::model::electrode::End::Top => "top",
                        coilfield_geometry::model::electrode::End::Base => "base",
                    }
                )
            });
        let _ = writeln!(
            s,
            "  {}: {}, {connect}",
            e.name,
            describe_electrode(&e.shape)
        );
    }
    let has_secondary = design.windings.iter().any(|w| w.role == Role::Secondary);
    if design.electrodes.is_empty() && !has_secondary {
        s.push_str("  none: the design has no secondary and no electrode\n");
        return (s, Vec::new());
    }
    match crate::capacitance::compute(design, label) {
        Ok(c) => {
            let printed = c.warnings.clone();
            s.push_str(&crate::capacitance::table(&c));
            (s, printed)
        }
        Err(e) => {
            let _ = writeln!(s, "  not computed: {e:#}");
            (s, Vec::new())
        }
    }
}

/// The resonance in brief: f1 (distributed and lumped), Q, the primary's tuning capacitance
/// and tap, and the drive's peak top voltage and energy per bang. `coilfield resonance` prints
/// the whole model.
fn resonance_section(r: &Resonance) -> String {
    let sec = &r.secondary;
    let mut s = format!("\nresonance of the secondary '{}'\n", sec.name);
    let mut line = |label: &str, value: String| {
        let _ = writeln!(s, "  {label:<44}  {value}");
    };
    line(
        &format!("f1, distributed model ({} sections)", sec.sections),
        si(sec.frequency_hz, "Hz", 5),
    );
    line(
        "f1, lumped estimate",
        format!(
            "{} ({:+.1} %)",
            si(sec.lumped_frequency_hz, "Hz", 5),
            100.0 * (sec.lumped_frequency_hz / sec.frequency_hz - 1.0)
        ),
    );
    line(
        "equivalent capacitance at f1",
        si(sec.equivalent_capacitance_f, "F", 4),
    );
    line("Q of the secondary", format!("{:.0}", sec.q));
    if let Some(p) = &r.primary {
        line(
            &format!("capacitance tuning primary '{}' to f1", p.name),
            si(p.tuning_capacitance_f, "F", 4),
        );
        let tap = match p.tap_for_tank_turns {
            Some(t) => format!("{t:.3} turns tune the tank capacitor to f1"),
            None => format!("{:.3} turns in use", p.tap_turns),
        };
        line("tap", tap);
        line("Q of the primary (the gap apart)", format!("{:.0}", p.q));
    }
    if let Some(d) = &r.drive {
        line(
            &format!("peak top voltage ({})", d.kind.replace('_', " ")),
            si(d.peak_top_voltage_v, "V", 4),
        );
        if let Some(e) = d.energy_per_bang_j {
            line("energy per bang", si(e, "J", 4));
        }
        if let Some(p) = d.mean_power_w.or(d.input_power_w) {
            line("mean power", si(p, "W", 4));
        }
    }
    s
}

/// The clearance distances of every threshold at the drive's fields. `from_model`: the drive
/// comes from the resonance model (its peak top voltage), else the design's explicit drive.
fn clearance_section(c: &ClearanceOut, from_model: bool, printed: &mut Vec<String>) -> String {
    let at = if from_model {
        "at the drive model's peak top voltage and currents"
    } else {
        "at the design's explicit drive"
    };
    let mut s = format!(
        "\nclearance {at}: distances beyond which the peak field stays below each limit, from \
         the axis and from the surface of {}\n",
        c.top_conductor
    );
    for t in &c.thresholds {
        let more = if t.beyond_search { ">" } else { "" };
        let where_ = match (t.distance_from_axis_m, t.distance_from_top_m) {
            (Some(axis), Some(top)) => {
                format!("from axis {more}{axis:.3} m, from top {more}{top:.3} m")
            }
            _ => "never exceeded outside the conductors".to_string(),
        };
        let _ = writeln!(
            s,
            "  {:<38} {:?} {:>12}  {where_}",
            t.name,
            t.quantity,
            si(t.limit, t.unit, 3),
        );
    }
    if !c.at_distances.is_empty() {
        s.push_str("  fields at the top conductor's height (peak):\n");
        for a in &c.at_distances {
            let e = a.e_mag_v_per_m.map_or("-".into(), |v| si(v, "V/m", 4));
            let b = a.b_mag_t.map_or("-".into(), |v| si(v, "T", 4));
            let _ = writeln!(
                s,
                "    {:>8} from the axis: |E| {e:>12}  |B| {b:>12}  above: {}",
                si(a.distance_from_axis_m, "m", 3),
                if a.exceeded.is_empty() {
                    "none".to_string()
                } else {
                    a.exceeded.join(", ")
                }
            );
        }
    }
    for w in &c.warnings {
        if printed.contains(w) {
            continue;
        }
        printed.push(w.clone());
        let _ = writeln!(s, "  note: {w}");
    }
    s.push_str(
        "  (`coilfield clearance` gives the sources, heights and fields at set distances)\n",
    );
    s
}
