//! Wiring of the solver's field kernels (`solver::field` for B, `solver::electrostatic` for E)
//! into the CLI's [`FieldModel`].
//!
//! The kernels are being written alongside the CLI; until their bodies land, this build says so
//! plainly instead of printing made-up fields.

use crate::fields::FieldModel;
use coilfield_geometry::{Design, DriveNeeds, validate_drive};

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

/// The field model of a validated design.
pub fn field_model(design: &Design, label: &str) -> anyhow::Result<FieldModel> {
    check_drive(design, label, "the field")?;
    anyhow::bail!(
        "{label}: the E and B field kernels (solver::field, solver::electrostatic) are not in this build yet"
    )
}

/// Warnings on the quasi-static assumption for fields at `distances_m` from the coil.
pub fn validity_warnings(design: &Design, distances_m: &[f64]) -> Vec<String> {
    let _ = (design, distances_m);
    Vec::new()
}
