//! `coilfield report`: a readable report of a design for people.

use crate::clearance::{self, ClearanceArgs, ClearanceOut};
use crate::output::si;
use crate::{Format, inductance, load};
use coilfield_geometry::discretise::filament_model;
use coilfield_geometry::{Design, DriveKind, Role, Shape, TapEnd, Winding};
use coilfield_solver::Par;
use coilfield_solver::assembly::inductance_report;
use coilfield_solver::resonance::{
    Resolved, Resonance, ResonanceParams, resolve, resonance, resonance_roles,
};
use std::f64::consts::TAU;
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

/// Length (m) of the wire's centreline: all of it, a tap's idle part included.
fn wire_length_m(w: &Winding) -> f64 {
    match w.shape {
        Shape::Helix {
            radius_m,
            length_m,
            turns,
            ..
        } => turns * (TAU * radius_m).hypot(length_m / turns),
        Shape::Ring {
            radius_m, count, ..
        } => TAU * radius_m * f64::from(count),
        _ => filament_model(&w.without_tap()).length_m(),
    }
}

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

pub fn run(path: &Path) -> anyhow::Result<ExitCode> {
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
            "  {} ({role}): {}{}; wire {} diameter, {} of wire",
            w.name,
            describe(w),
            describe_tap(w),
            si(w.wire_diameter_m, "m", 4),
            si(wire_length_m(w), "m", 4)
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
    s.push_str(&resonance_and_clearance(&design, path)?);
    let _ = writeln!(s, "\n{CAUTION}");
    print!("{s}");
    Ok(ExitCode::SUCCESS)
}

/// The resonance section and, when the design has a drive, the clearance at the drive's
/// voltage and currents; a note instead where the design has no resonance model (no helix
/// secondary).
fn resonance_and_clearance(design: &Design, path: &Path) -> anyhow::Result<String> {
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
    let drive = &resolved.design.drive;
    let driven = !(drive.currents_a.is_empty() && drive.potentials_v.is_empty());
    if driven && drive.frequency_hz.is_some() {
        let args = ClearanceArgs {
            design: path,
            distances: None,
            long_gap_v_per_m: None,
            extra: &[],
            max_distance_m: None,
            format: Format::Table,
        };
        let from_model = resolved.resonance.is_some();
        let c = clearance::compute(&args, resolved)?;
        s.push_str(&clearance_section(&c, from_model));
    } else {
        s.push_str(
            "\nclearance: the design has no drive with a frequency ([drive] kind, or currents or \
             potentials with frequency); no fields or clearance distances\n",
        );
    }
    Ok(s)
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
fn clearance_section(c: &ClearanceOut, from_model: bool) -> String {
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
    for w in &c.warnings {
        let _ = writeln!(s, "  note: {w}");
    }
    s.push_str(
        "  (`coilfield clearance` gives the sources, heights and fields at set distances)\n",
    );
    s
}
