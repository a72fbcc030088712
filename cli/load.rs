//! Reading a design file from disk: the size limit and the messages for unreadable files.

use crate::BadInput;
use coilfield_geometry::{Design, parse_design};
use std::path::Path;

/// Largest input file accepted (bytes): design, sweep, seek and shard files. Real designs are a
/// few kilobytes; a bigger file is a mistake (a wrong path, a data file) and would only waste
/// memory. (Sweep outputs of a few million points stay below it.)
pub const MAX_FILE_BYTES: u64 = 16 * 1024 * 1024;

/// The text of the file at `path`, `what` naming it in messages ("design file", ...).
pub fn text(path: &Path, what: &str) -> anyhow::Result<String> {
    let label = path.display();
    let meta = std::fs::metadata(path)
        .map_err(|e| BadInput(format!("{label}: cannot read the {what}: {e}")))?;
    if meta.len() > MAX_FILE_BYTES {
        return Err(BadInput(format!(
            "{label}: file is {} bytes, larger than the limit of {MAX_FILE_BYTES} bytes for a {what}",
            meta.len()
        ))
        .into());
    }
    Ok(std::fs::read_to_string(path)
        .map_err(|e| BadInput(format!("{label}: cannot read the {what}: {e}")))?)
}

/// Read and validate a design file.
pub fn design(path: &Path) -> anyhow::Result<Design> {
    let text = text(path, "design file")?;
    Ok(parse_design(&text, &path.display().to_string())?)
}

/// Read and validate a design file, with its drive model (`[drive] kind`) resolved into explicit
/// peak currents and potentials with the first mode's profiles
/// ([`coilfield_solver::resonance::resolve`]): what the field, clearance, capacitance and
/// export commands compute from.
pub fn design_resolved(path: &Path) -> anyhow::Result<coilfield_solver::resonance::Resolved> {
    let design = design(path)?;
    Ok(coilfield_solver::resonance::resolve(
        &design,
        &path.display().to_string(),
        coilfield_solver::Par::Rayon,
    )?)
}
