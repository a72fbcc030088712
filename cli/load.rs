//! Reading a design file from disk: the size limit and the messages for unreadable files.

use crate::BadInput;
use coilfield_geometry::{Design, parse_design};
use std::path::Path;

/// Largest input file accepted (bytes): design, sweep, seek and shard files. Real designs are a
/// few kilobytes; a bigger file is a mistake (a wrong path, a data file) and would only waste
/// memory. (Sweep outputs of a few million points stay below it.)
pub const MAX_FILE_BYTES: u64 = 16 * 1024 * 1024;

/// The text of the file at `path`, `what` naming it in messages ("design file", ...).
///
/// Only a regular file is read (a device such as `/dev/zero`, a FIFO or a folder is refused by
/// its kind), and never more than [`MAX_FILE_BYTES`] + 1 bytes whatever its size says, so no
/// input can exhaust memory. Invalid UTF-8 is refused with its line and column.
pub fn text(path: &Path, what: &str) -> anyhow::Result<String> {
    use std::io::Read as _;
    let label = path.display();
    let cannot = |e: std::io::Error| BadInput(format!("{label}: cannot read the {what}: {e}"));
    let file = std::fs::File::open(path).map_err(cannot)?;
    // The kind of the file opened, not of the path (which could change in between).
    let meta = file.metadata().map_err(cannot)?;
    if !meta.is_file() {
        return Err(BadInput(format!(
            "{label}: the {what} is not a regular file (a {}); give the path of a file",
            kind_of(&meta.file_type())
        ))
        .into());
    }
    let too_large = |len: u64| {
        BadInput(format!(
            "{label}: file is {len} bytes, larger than the limit of {MAX_FILE_BYTES} bytes for a {what}"
        ))
    };
    if meta.len() > MAX_FILE_BYTES {
        return Err(too_large(meta.len()).into());
    }
    let mut bytes = Vec::new();
    file.take(MAX_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(cannot)?;
    if bytes.len() as u64 > MAX_FILE_BYTES {
        return Err(too_large(bytes.len() as u64).into());
    }
    utf8(bytes).map_err(|e| BadInput(format!("{label}: {e}")).into())
}

/// `bytes` as text, or where the first invalid UTF-8 byte is (1-based line and column in
/// characters) and how to fix it.
pub fn utf8(bytes: Vec<u8>) -> Result<String, String> {
    String::from_utf8(bytes).map_err(|e| {
        let bytes = e.as_bytes();
        let at = e.utf8_error().valid_up_to();
        // The prefix up to `at` is valid UTF-8 by definition.
        let before = std::str::from_utf8(&bytes[..at]).unwrap_or("");
        let line = before.matches('\n').count() + 1;
        let column = before[before.rfind('\n').map_or(0, |i| i + 1)..]
            .chars()
            .count()
            + 1;
        format!(
            "invalid UTF-8 at line {line}, column {column} (byte 0x{:02x} at offset {at}); save \
             the file as UTF-8 text",
            bytes[at]
        )
    })
}

/// "folder", "character device", ... for a message.
fn kind_of(t: &std::fs::FileType) -> &'static str {
    use std::os::unix::fs::FileTypeExt as _;
    if t.is_dir() {
        "folder"
    } else if t.is_char_device() {
        "character device"
    } else if t.is_block_device() {
        "block device"
    } else if t.is_fifo() {
        "FIFO"
    } else if t.is_socket() {
        "socket"
    } else {
        "special file"
    }
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
    design_resolved_with(path, coilfield_solver::fem::ElectricSolver::Auto)
}

/// [`design_resolved`] with the drive model's capacitances from the electric solver `electric`.
pub fn design_resolved_with(
    path: &Path,
    electric: coilfield_solver::fem::ElectricSolver,
) -> anyhow::Result<coilfield_solver::resonance::Resolved> {
    let design = design(path)?;
    Ok(coilfield_solver::resonance::resolve_with(
        &design,
        &path.display().to_string(),
        coilfield_solver::Par::Rayon,
        electric,
    )?)
}
