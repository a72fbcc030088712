//! Wiring of the solver's field kernels (`solver::field` for B, `solver::electrostatic` for E)
//! into the CLI's [`FieldModel`].
//!
//! A drive without currents gives B = 0 and one without potentials E = 0, each with a warning.

use crate::fields::{EValue, FieldModel, Sample};
use coilfield_geometry::{Design, DriveNeeds, Electrode, Ground, PotentialSpec, validate_drive};
use coilfield_solver::electrostatic::{self, FieldSample, Params, Problem, Solution};
use coilfield_solver::{Par, field};
use nalgebra::{Point3, Vector3};

/// The drive a field computation needs: at least winding currents or conductor potentials.
pub fn check_drive(design: &Design, label: &str, what: &str) -> anyhow::Result<()> {
    let has_currents = design.drive.currents_a.iter().any(|(_, i)| *i != 0.0);
    let needs = DriveNeeds {
        currents: !has_currents && design.drive.potentials_v.is_empty(),
        potentials: !has_currents,
        frequency: false,
    };
    validate_drive(design, needs, what, label)?;
    Ok(())
}

/// Whether the drive puts any conductor at a nonzero potential.
pub fn has_potentials(design: &Design) -> bool {
    design.drive.potentials_v.iter().any(|(_, p)| match *p {
        PotentialSpec::Uniform(v) => v != 0.0,
        PotentialSpec::Ends { base_v, top_v } => base_v != 0.0 || top_v != 0.0,
    })
}

/// The electrostatic solution of a design at the default panel count.
pub fn electrostatic_solution(design: &Design, label: &str) -> anyhow::Result<Solution> {
    electrostatic_solution_with(design, label, Par::Rayon)
}

fn electrostatic_solution_with(design: &Design, label: &str, par: Par) -> anyhow::Result<Solution> {
    let problem = Problem::from_design(design, &Params::default(), label)?;
    Ok(problem.solve(par))
}

/// The field model of a validated design: B from `solver::field` (zero when no winding
/// carries current); E from `solver::electrostatic` (zero when no conductor has a potential).
pub fn field_model(design: &Design, label: &str) -> anyhow::Result<FieldModel> {
    field_model_with(design, label, Par::Rayon, None)
}

/// As [`field_model`], solving and evaluating in parallel or not (`par`), with the design's
/// electrostatic solution when the caller has it already (`solved`; default panels). A sweep,
/// parallel over its points, builds one model per point sequentially.
pub fn field_model_with(
    design: &Design,
    label: &str,
    par: Par,
    solved: Option<Solution>,
) -> anyhow::Result<FieldModel> {
    check_drive(design, label, "the field")?;
    let has_currents = design.drive.currents_a.iter().any(|(_, i)| *i != 0.0);
    let sources = if has_currents {
        field::sources_from_design(design, label)?
    } else {
        Vec::new()
    };
    let mut warnings: Vec<String> = field::image_warning(design).into_iter().collect();
    if !has_currents {
        warnings.push("no winding carries current in [drive] currents: B is zero".into());
    }
    let solution = if has_potentials(design) {
        match solved {
            Some(sol) => Some(sol),
            None => Some(electrostatic_solution_with(design, label, par)?),
        }
    } else {
        warnings.push("no conductor has a potential in [drive] potentials: E is zero".into());
        None
    };
    let design_geometry = (design.electrodes.clone(), design.ground);
    let eval = move |pts: &[Point3<f64>]| -> Vec<Sample> {
        let b = field::b_field(&sources, pts, par);
        let e: Vec<EValue> = match &solution {
            Some(sol) => sol
                .e_field(pts, par)
                .into_iter()
                .map(|s| match s {
                    FieldSample::Field(v) => EValue::Field(v),
                    FieldSample::InsideConductor(name) => EValue::Inside(name),
                    FieldSample::BelowGround => EValue::BelowGround,
                })
                .collect(),
            // E is zero without potentials, but still undefined inside a conductor: the
            // points are told apart the same way as with a solution.
            None => pts.iter().map(|p| zero_e_at(&design_geometry, p)).collect(),
        };
        // Inside an electrode B has no value either: a conductor at the drive frequency shuts
        // the field out (skin effect), which the free-space magnetic model does not see.
        e.into_iter()
            .zip(b)
            .map(|(e, b)| match e {
                EValue::Inside(_) => Sample { e, b: None },
                _ => Sample { e, b },
            })
            .collect()
    };
    Ok(FieldModel::from_fn(Box::new(eval), warnings))
}

/// E = 0 at `p` when no conductor has a potential, or no value inside an electrode or below
/// the ground plane (as `Solution::e_field` reports them).
fn zero_e_at(geometry: &(Vec<Electrode>, Option<Ground>), p: &Point3<f64>) -> EValue {
    let (electrodes, ground) = geometry;
    if let Some(e) = electrodes
        .iter()
        .find(|e| e.shape.signed_distance_m(p) < 0.0)
    {
        return EValue::Inside(e.name.clone());
    }
    if ground.is_some_and(|g| p.z < g.z_m) {
        return EValue::BelowGround;
    }
    EValue::Field(Vector3::zeros())
}

/// Warnings on the quasi-static assumption for fields at `distances_m` from the coil.
pub fn validity_warnings(design: &Design, distances_m: &[f64]) -> Vec<String> {
    electrostatic::validity_warnings(design, distances_m)
}

/// Distances (m) of `points_m` from the design's centre (the mean of its winding and electrode
/// origins), for [`validity_warnings`].
pub fn distances_from_centre_m(design: &Design, points_m: &[Point3<f64>]) -> Vec<f64> {
    let mut origins: Vec<Point3<f64>> = design
        .windings
        .iter()
        .filter_map(|w| w.shape.origin_axis().map(|(o, _)| o))
        .collect();
    origins.extend(design.electrodes.iter().map(|e| e.shape.origin_axis().0));
    if origins.is_empty() {
        return Vec::new();
    }
    let c = origins
        .iter()
        .fold(Vector3::zeros(), |acc, o| acc + o.coords)
        / origins.len() as f64;
    points_m.iter().map(|p| (p.coords - c).norm()).collect()
}
