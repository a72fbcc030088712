//! Output helpers: atomic file writes and JSON text; numbers through the one formatter
//! `coilfield_solver::numtext`.

use crate::BadInput;
pub use coilfield_solver::numtext::si;
use std::io::Write;
use std::path::Path;

/// Write `contents` to `path` atomically: a temporary file created exclusively (never an
/// existing file or link, `tempfile`) in the target's folder, written, synced to disk, renamed
/// over the target, and the folder synced so the rename itself survives a crash. The rename
/// replaces a symbolic link at `path` by the file and never writes through it. A failure
/// (read-only folder, full disk) is bad output (exit 2) and leaves any existing file untouched.
pub fn write_atomic(path: &Path, contents: &[u8]) -> anyhow::Result<()> {
    write_atomic_via(path, contents, |f| Box::new(f))
}

/// [`write_atomic`] with the temporary file's writer wrapped by `wrap`: tests inject a writer
/// that fails after N bytes, as a full disk does.
pub fn write_atomic_via(
    path: &Path,
    contents: &[u8],
    wrap: impl FnOnce(&mut std::fs::File) -> Box<dyn Write + '_>,
) -> anyhow::Result<()> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    if path.file_name().is_none() {
        return Err(BadInput(format!("{}: not a file name", path.display())).into());
    }
    let fail = |e: std::io::Error| BadInput(format!("{}: cannot write: {e}", path.display()));
    // The new file gets the permission bits of the file it replaces (not its set-id or
    // sticky bits), else those of any new file (0o666 less the umask), not the temporary
    // file's owner-only 0o600; set after writing, so a read-only mode cannot stop the write.
    use std::os::unix::fs::PermissionsExt;
    let replaced = std::fs::symlink_metadata(path)
        .ok()
        .filter(std::fs::Metadata::is_file)
        .map(|m| std::fs::Permissions::from_mode(m.permissions().mode() & 0o777));
    let mut tmp = tempfile::Builder::new()
        .prefix(".coilfield-")
        .suffix(".tmp")
        .permissions(std::fs::Permissions::from_mode(0o666))
        .tempfile_in(dir)
        .map_err(fail)?;
    {
        let mut w = wrap(tmp.as_file_mut());
        w.write_all(contents).map_err(fail)?;
        w.flush().map_err(fail)?;
    }
    if let Some(p) = replaced {
        tmp.as_file().set_permissions(p).map_err(fail)?;
    }
    tmp.as_file().sync_all().map_err(fail)?;
    // On error the temporary file is removed when `tmp` drops; the target is untouched.
    tmp.persist(path).map_err(|e| fail(e.error))?;
    sync_dir(dir).map_err(fail)?;
    Ok(())
}

/// The reader of standard output went away (a closed pipe: `coilfield verify | head -3`). The
/// command stops there quietly with exit 0, as command-line tools do when their reader has
/// what it wanted (common practice, no source).
#[derive(Debug)]
pub struct StdoutClosed;

impl std::fmt::Display for StdoutClosed {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("standard output was closed by its reader")
    }
}

impl std::error::Error for StdoutClosed {}

/// Write `text` to standard output, the one way every command prints its results (never
/// `print!`, which panics when the reader has gone). A closed pipe is [`StdoutClosed`] (a quiet
/// exit 0 in `main`); any other failure (a full disk behind a redirection) is bad output
/// (exit 2).
pub fn print_stdout(text: &str) -> anyhow::Result<()> {
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Ok(()) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => Err(StdoutClosed.into()),
        Err(e) => Err(BadInput(format!("standard output: cannot write: {e}")).into()),
    }
}

/// Pretty JSON of a result, numbers in shortest round-trip form and no `-0` (through
/// `coilfield_solver::numtext`, the one number formatter).
pub fn json_text<T: serde::Serialize>(value: &T) -> anyhow::Result<String> {
    let mut v = serde_json::to_value(value)?;
    coilfield_solver::numtext::clean_json(&mut v);
    Ok(serde_json::to_string_pretty(&v)?)
}

/// Sync a folder, so that a rename in it is on disk.
pub fn sync_dir(dir: &Path) -> std::io::Result<()> {
    std::fs::File::open(dir)?.sync_all()
}

/// The SI unit of a metric, from its name's first part ("" for a pure number).
pub fn metric_unit(name: &str) -> &'static str {
    match name.split('.').next().unwrap_or("") {
        "self_inductance" | "mutual" => "H",
        "gap" | "clearance" | "clearance_top" => "m",
        "capacitance" | "self_capacitance" | "equivalent_capacitance" | "tuning_capacitance" => "F",
        "surface_field" => "V/m",
        "frequency" => "Hz",
        "peak_voltage" => "V",
        _ => "",
    }
}

#[cfg(test)]
mod tests {
    /// A writer that accepts `left` bytes and then fails as a full disk does.
    struct FailAfter<'a> {
        inner: &'a mut std::fs::File,
        left: usize,
    }

    impl std::io::Write for FailAfter<'_> {
        fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
            if self.left == 0 {
                return Err(std::io::Error::new(
                    std::io::ErrorKind::StorageFull,
                    "no space left on device",
                ));
            }
            let n = buf.len().min(self.left);
            self.left -= n;
            self.inner.write(&buf[..n])
        }
        fn flush(&mut self) -> std::io::Result<()> {
            self.inner.flush()
        }
    }

    #[test]
    fn a_full_disk_leaves_the_old_file_and_no_temporary() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.json");
        std::fs::write(&path, "old").unwrap();
        for n in [0, 1, 5] {
            let e = super::write_atomic_via(&path, b"new contents", |f| {
                Box::new(FailAfter { inner: f, left: n })
            })
            .unwrap_err();
            assert!(e.is::<crate::BadInput>(), "{e}");
            assert!(e.to_string().contains("no space left"), "{e}");
            assert_eq!(std::fs::read_to_string(&path).unwrap(), "old");
            assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
        }
        super::write_atomic(&path, b"new").unwrap();
        assert_eq!(std::fs::read_to_string(&path).unwrap(), "new");
    }

    #[test]
    fn written_files_get_the_permissions_of_any_new_file_or_of_the_one_they_replace() {
        use std::os::unix::fs::PermissionsExt;
        let dir = tempfile::tempdir().unwrap();
        let mode = |p: &std::path::Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o777;
        // A new file: as std's File::create makes one (0o666 less the umask), not 0o600.
        let plain = dir.path().join("plain.txt");
        std::fs::write(&plain, "x").unwrap();
        let new = dir.path().join("new.json");
        super::write_atomic(&new, b"{}").unwrap();
        assert_eq!(mode(&new), mode(&plain));
        // A replaced file keeps its mode, narrower or wider than the default.
        for m in [0o640, 0o604, 0o444] {
            std::fs::set_permissions(&new, std::fs::Permissions::from_mode(m)).unwrap();
            super::write_atomic(&new, b"[]").unwrap();
            assert_eq!(mode(&new), m);
            assert_eq!(std::fs::read_to_string(&new).unwrap(), "[]");
        }
    }

    #[test]
    fn a_symlink_at_the_target_is_replaced_never_followed() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("elsewhere.txt");
        let link = dir.path().join("out.txt");
        std::os::unix::fs::symlink(&target, &link).unwrap();
        super::write_atomic(&link, b"x").unwrap();
        assert!(!target.exists(), "the dangling link's target was created");
        assert!(
            !std::fs::symlink_metadata(&link)
                .unwrap()
                .file_type()
                .is_symlink()
        );
        assert_eq!(std::fs::read_to_string(&link).unwrap(), "x");
    }

    #[test]
    fn a_read_only_folder_is_bad_output() {
        let e =
            super::write_atomic(std::path::Path::new("/proc/coilfield-out.txt"), b"x").unwrap_err();
        assert!(e.is::<crate::BadInput>(), "{e}");
    }
}
