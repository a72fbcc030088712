//! Output helpers: atomic file writes and SI-prefixed numbers.

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

/// A value with an SI prefix and unit, e.g. `15.7002 µH`, to `digits` significant digits.
pub fn si(value: f64, unit: &str, digits: usize) -> String {
    if !value.is_finite() {
        return format!("{value} {unit}");
    }
    if value == 0.0 {
        return format!("0 {unit}");
    }
    const PREFIXES: [(f64, &str); 9] = [
        (1e9, "G"),
        (1e6, "M"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
        (1e-9, "n"),
        (1e-12, "p"),
        (1e-15, "f"),
    ];
    let mag = value.abs();
    let (scale, prefix) = PREFIXES
        .iter()
        .copied()
        .find(|(s, _)| mag >= *s)
        .unwrap_or((1e-15, "f"));
    let scaled = value / scale;
    let int_digits = (scaled.abs().log10().floor() as i64 + 1).max(1) as usize;
    let decimals = digits.saturating_sub(int_digits);
    format!("{scaled:.decimals$} {prefix}{unit}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn si_prefixes() {
        assert_eq!(si(15.700_16e-6, "H", 6), "15.7002 µH");
        assert_eq!(si(0.5, "m", 3), "500 mm");
        assert_eq!(si(-2.5e-9, "H", 3), "-2.50 nH");
    }
}
