//! Reading a design file from disk: the size limit and the messages for unreadable files.

use crate::BadInput;
use coilfield_geometry::{Design, parse_design};
use std::path::Path;

/// Largest design file accepted (bytes). Real designs are a few kilobytes; a bigger file is a
/// mistake (a wrong path, a data file) and would only waste memory.
pub const MAX_DESIGN_BYTES: u64 = 16 * 1024 * 1024;

/// Read and validate a design file.
pub fn design(path: &Path) -> anyhow::Result<Design> {
    let label = path.display().to_string();
    let meta = std::fs::metadata(path)
        .map_err(|e| BadInput(format!("{label}: cannot read the design file: {e}")))?;
    if meta.len() > MAX_DESIGN_BYTES {
        return Err(BadInput(format!(
            "{label}: file is {} bytes, larger than the limit of {MAX_DESIGN_BYTES} bytes for a design file",
            meta.len()
        ))
        .into());
    }
    let text = std::fs::read_to_string(path)
        .map_err(|e| BadInput(format!("{label}: cannot read the design file: {e}")))?;
    Ok(parse_design(&text, &label)?)
}
