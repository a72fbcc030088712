//! `coilfield capacitance`: the Maxwell capacitance matrix of the electrodes, each electrode's
//! capacitance, the secondary's equivalent self-capacitance, error estimates and the peak
//! surface field of each electrode at the drive potentials.

use crate::capacitance_fem::{self, ElectricSolver, PeakOut};
use crate::{Format, load, output};
use coilfield_solver::field_model;
use coilfield_solver::numtext::fixed;
use coilfield_solver::thresholds::AIR_BREAKDOWN_V_PER_M;
use serde::Serialize;
use std::path::Path;
use std::process::ExitCode;

#[derive(Serialize)]
struct ConductorOut {
    name: String,
    /// "electrode" (diagonal of the Maxwell matrix, all others at 0 V) or "secondary"
    /// (equivalent self-capacitance at its top, C = 2 W / V_top^2, no electrode connected).
    kind: &'static str,
    capacitance_f: f64,
    error_estimate_f: f64,
    /// Secondary only: with its connected electrodes at their terminals' potentials.
    #[serde(skip_serializing_if = "Option::is_none")]
    with_connected_electrodes_f: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    with_connected_electrodes_error_estimate_f: Option<f64>,
}

/// What the electrodes connected to the secondary's top add there: the secondary's
/// self-capacitance with them minus without them (a second solve with those electrodes
/// removed), the figure a builder adds to the secondary's own.
#[derive(Serialize)]
struct EffectiveTopOut {
    /// The connected electrodes, in file order.
    electrodes: Vec<String>,
    /// C(secondary with them) - C(secondary without them) (F).
    capacitance_f: f64,
    /// The sum of both solves' |C(n) - C(n/2)| estimates (F).
    error_estimate_f: f64,
}

#[derive(Serialize)]
pub(crate) struct CapOut {
    /// Which electric solver served: "bem" here ("fem" in `capacitance_fem`).
    solver: &'static str,
    conductors: Vec<ConductorOut>,
    /// Present when an electrode is connected to the secondary's top.
    #[serde(skip_serializing_if = "Option::is_none")]
    effective_top_capacitance: Option<EffectiveTopOut>,
    matrix_f: Vec<Vec<f64>>,
    matrix_error_estimate_f: Vec<Vec<f64>>,
    n_panels: usize,
    peak_surface_fields: Vec<PeakOut>,
    pub(crate) warnings: Vec<String>,
}

/// Run `coilfield capacitance`.
pub fn run(
    design_path: &Path,
    format: Format,
    out: Option<&Path>,
    solver: ElectricSolver,
    mesh_vtk: Option<&Path>,
) -> anyhow::Result<ExitCode> {
    let design = load::design_resolved(design_path)?.design;
    let label = design_path.display().to_string();
    if solver.uses_fem(&design) {
        return capacitance_fem::run(&design, &label, format, out, mesh_vtk);
    }
    if mesh_vtk.is_some() {
        return Err(crate::BadInput(
            "--mesh-vtk needs the finite-element solver (--electric-solver fem or auto with a \
             dielectric or an enclosure)"
                .to_string(),
        )
        .into());
    }
    let result = compute(&design, &label)?;
    let text = match format {
        Format::Json => crate::output::json_text(&result)? + "\n",
        Format::Table => table(&result),
    };
    if let Some(p) = out {
        output::write_atomic(p, text.as_bytes())?;
    }
    crate::output::print_stdout(&text)?;
    Ok(ExitCode::SUCCESS)
}

/// The capacitances of a design whose drive is resolved: what `capacitance` prints and the
/// report includes.
pub(crate) fn compute(design: &coilfield_geometry::Design, label: &str) -> anyhow::Result<CapOut> {
    let design = design.clone();
    let label = label.to_string();
    let sol = field_model::electrostatic_solution(&design, &label, coilfield_solver::Par::Rayon)?;
    let names = sol.conductor_names();
    let matrix = sol.capacitance_matrix_f().to_vec();
    let err = sol.error_estimate();
    let mut conductors: Vec<ConductorOut> = names
        .iter()
        .enumerate()
        .map(|(i, n)| ConductorOut {
            name: n.clone(),
            kind: "electrode",
            capacitance_f: matrix[i][i],
            error_estimate_f: err.capacitance_matrix_f[i][i],
            with_connected_electrodes_f: None,
            with_connected_electrodes_error_estimate_f: None,
        })
        .collect();
    if let (Some(c), Some(w)) = (
        sol.self_capacitance_f(),
        design
            .windings
            .iter()
            .find(|w| w.role == coilfield_geometry::Role::Secondary),
    ) {
        let e = err.self_capacitance_f;
        conductors.push(ConductorOut {
            name: w.name.clone(),
            kind: "secondary",
            capacitance_f: c.bare_f,
            error_estimate_f: e.map_or(f64::NAN, |e| e.bare_f),
            with_connected_electrodes_f: Some(c.total_f),
            with_connected_electrodes_error_estimate_f: e.map(|e| e.total_f),
        });
    }
    let effective_top_capacitance = effective_top(&design, &label, &sol)?;
    let mut warnings = Vec::new();
    let peak_surface_fields = if field_model::has_potentials(&design) {
        sol.peak_surface_fields()
            .into_iter()
            .map(|p| PeakOut {
                above_air_breakdown: p.field_v_per_m >= AIR_BREAKDOWN_V_PER_M,
                name: p.name,
                field_v_per_m: p.field_v_per_m,
                at_m: [p.at_m.x, p.at_m.y, p.at_m.z],
            })
            .collect()
    } else {
        warnings.push(
            "no conductor has a potential in [drive] potentials: peak surface fields not computed"
                .into(),
        );
        Vec::new()
    };
    for p in &peak_surface_fields {
        if p.above_air_breakdown {
            warnings.push(format!(
                "{}: peak surface field {} is above the dielectric strength of air (about 3 MV/m, AMS Glossary of Meteorology): expect breakout there",
                p.name,
                output::si(p.field_v_per_m, "V/m", 3)
            ));
        }
    }
    warnings.extend(coilfield_solver::electrostatic::validity_warnings(
        &design,
        &[],
    ));
    Ok(CapOut {
        solver: "bem",
        conductors,
        effective_top_capacitance,
        matrix_f: matrix,
        matrix_error_estimate_f: err.capacitance_matrix_f.clone(),
        n_panels: sol.n_panels(),
        peak_surface_fields,
        warnings,
    })
}

/// The effective top capacitance of the electrodes connected to the secondary's top: the
/// secondary's self-capacitance (its connected electrodes at its top's potential) minus the
/// same without those electrodes. None when no electrode is connected there.
fn effective_top(
    design: &coilfield_geometry::Design,
    label: &str,
    sol: &coilfield_solver::electrostatic::Solution,
) -> anyhow::Result<Option<EffectiveTopOut>> {
    let Some(secondary) = design
        .windings
        .iter()
        .find(|w| w.role == coilfield_geometry::Role::Secondary)
    else {
        return Ok(None);
    };
    let at_top = |e: &coilfield_geometry::Electrode| {
        e.connect.as_ref().is_some_and(|t| {
            t.winding == secondary.name && t.end == coilfield_geometry::model::electrode::End::Top
        })
    };
    let electrodes: Vec<String> = design
        .electrodes
        .iter()
        .filter(|e| at_top(e))
        .map(|e| e.name.clone())
        .collect();
    let Some(with) = sol.self_capacitance_f() else {
        return Ok(None);
    };
    if electrodes.is_empty() {
        return Ok(None);
    }
    let mut without_design = design.clone();
    without_design.electrodes.retain(|e| !at_top(e));
    let without =
        field_model::electrostatic_solution(&without_design, label, coilfield_solver::Par::Rayon)?;
    let Some(bare) = without.self_capacitance_f() else {
        return Ok(None);
    };
    let estimate = |s: &coilfield_solver::electrostatic::Solution| {
        s.error_estimate()
            .self_capacitance_f
            .map_or(f64::NAN, |e| e.total_f)
    };
    Ok(Some(EffectiveTopOut {
        electrodes,
        capacitance_f: with.total_f - bare.total_f,
        error_estimate_f: estimate(sol) + estimate(&without),
    }))
}

pub(crate) fn table(r: &CapOut) -> String {
    let mut s = format!(
        "Capacitances ({} panels; error estimate = |C(n) - C(n/2)|)\n\n",
        r.n_panels
    );
    s.push_str(
        "kind \"electrode\": the diagonal of the Maxwell matrix (that electrode at 1 V, every other\n\
         conductor, the secondary too, at 0 V): not what it adds at the secondary's top.\n\
         kind \"secondary\": its equivalent self-capacitance at the top (C = 2 W / V_top^2),\n\
         bare (unconnected electrodes at 0 V) and with its connected electrodes.\n\n",
    );
    s.push_str(&format!(
        "{:<24} {:<10} {:>14} {:>14} {:>16}\n",
        "conductor", "kind", "C", "error est.", "with connected"
    ));
    for c in &r.conductors {
        s.push_str(&format!(
            "{:<24} {:<10} {:>14} {:>14} {:>16}\n",
            c.name,
            c.kind,
            output::si(c.capacitance_f, "F", 5),
            coilfield_solver::numtext::si_like(c.error_estimate_f, c.capacitance_f, "F", 2),
            c.with_connected_electrodes_f
                .map_or(String::new(), |v| output::si(v, "F", 5)),
        ));
    }
    if let Some(t) = &r.effective_top_capacitance {
        s.push_str(&format!(
            "\neffective top capacitance of {} (what it adds at the secondary's top: C with it - \
             C without it): {} (error est. {})\n",
            t.electrodes.join(" + "),
            output::si(t.capacitance_f, "F", 5),
            coilfield_solver::numtext::si_like(t.error_estimate_f, t.capacitance_f, "F", 2),
        ));
    }
    if !r.matrix_f.is_empty() {
        s.push_str("\nMaxwell capacitance matrix, electrodes in file order:\n");
        for row in &r.matrix_f {
            let cells: Vec<String> = row
                .iter()
                .map(|v| format!("{:>12}", output::si(*v, "F", 5)))
                .collect();
            s.push_str(&format!("  {}\n", cells.join(" ")));
        }
    }
    if !r.peak_surface_fields.is_empty() {
        s.push_str("\nPeak surface field at the drive potentials (peak values):\n");
        for p in &r.peak_surface_fields {
            s.push_str(&format!(
                "  {:<22} {:>12} at ({}, {}, {}) m\n",
                p.name,
                output::si(p.field_v_per_m, "V/m", 4),
                fixed(p.at_m[0], 4),
                fixed(p.at_m[1], 4),
                fixed(p.at_m[2], 4)
            ));
        }
    }
    for w in &r.warnings {
        s.push_str(&format!("\nwarning: {w}"));
    }
    s.push('\n');
    s
}
