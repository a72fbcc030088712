//! Output helpers: atomic file writes and JSON text; numbers through the one formatter
//! `coilfield_solver::numtext`.

pub use coilfield_solver::numtext::si;
use std::io::Write;
use std::path::Path;

/// Write `contents` to `path` atomically: a temporary file in the same folder, flushed to disk,
/// then renamed over the target. A failure leaves any existing file untouched.
pub fn write_atomic(path: &Path, contents: &[u8]) -> anyhow::Result<()> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .ok_or_else(|| anyhow::anyhow!("{}: not a file name", path.display()))?;
    let tmp = dir.join(format!(
        ".{}.{}.tmp",
        name.to_string_lossy(),
        std::process::id()
    ));
    let result = (|| -> std::io::Result<()> {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(contents)?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if let Err(e) = result {
        let _ = std::fs::remove_file(&tmp);
        anyhow::bail!("{}: cannot write: {e}", path.display());
    }
    Ok(())
}

/// Pretty JSON of a result, numbers in shortest round-trip form and no `-0` (through
/// `coilfield_solver::numtext`, the one number formatter).
pub fn json_text<T: serde::Serialize>(value: &T) -> anyhow::Result<String> {
    let mut v = serde_json::to_value(value)?;
    coilfield_solver::numtext::clean_json(&mut v);
    Ok(serde_json::to_string_pretty(&v)?)
}
