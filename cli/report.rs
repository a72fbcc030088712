//! `coilfield report`: a readable report of a design for people.

use crate::inductance;
use crate::load;
use crate::output::si;
use coilfield_geometry::discretise::wire_length_m;
use coilfield_geometry::{Role, Shape, TapEnd, Winding};
use coilfield_solver::Par;
use coilfield_solver::assembly::inductance_report;
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
    let _ = writeln!(s, "\n{CAUTION}");
    print!("{s}");
    Ok(ExitCode::SUCCESS)
}
