//! `coilfield sweep` and `coilfield merge`: the files, the environment, the Ctrl-C handler and
//! the progress display around the library's sweeps ([`coilfield_solver::sweep`]): rows
//! written append-only in point order, resumable, shardable over Slurm array tasks.

use crate::BadInput;
use coilfield_geometry::file::sweep::parse_sweep;
use coilfield_solver::Par;
use coilfield_solver::sweep::{self, OutFormat, RowSink, Shard, SweepPlan};
use std::fs::{File, OpenOptions};
use std::io::{IsTerminal, Read, Seek, SeekFrom, Write};
use std::os::unix::fs::OpenOptionsExt as _;
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::{Duration, Instant};

/// Output format, from the extension of `path` (`.csv` or `.jsonl`).
pub fn out_format(path: &Path) -> anyhow::Result<OutFormat> {
    path.extension()
        .and_then(|e| e.to_str())
        .and_then(OutFormat::of_extension)
        .ok_or_else(|| {
            BadInput(format!(
                "{}: the output file name must end in .csv or .jsonl",
                path.display()
            ))
            .into()
        })
}

/// Read the sweep file at `path` and its base, and plan the sweep (every axis value checked
/// alone).
pub fn load_plan(path: &Path) -> anyhow::Result<SweepPlan> {
    let text = crate::load::text(path, "sweep file")?;
    plan_from_text(&text, path)
}

/// As [`load_plan`], with the text of the file at `path` given; the base design is read from
/// the sweep's `base`, relative to `path`.
pub fn plan_from_text(text: &str, path: &Path) -> anyhow::Result<SweepPlan> {
    let sweep_label = path.display().to_string();
    let sweep = parse_sweep(text, &sweep_label).map_err(|e| BadInput(e.to_string()))?;
    let base_path = path.parent().unwrap_or(Path::new(".")).join(&sweep.base);
    let base_label = base_path.display().to_string();
    let base_text = crate::load::text(&base_path, "base design named by `base`")?;
    Ok(SweepPlan::new(
        sweep,
        &sweep_label,
        &base_text,
        &base_label,
        coilfield_solver::Par::Rayon,
    )?)
}

/// The cautions the outputs of `plan` carry, one per line, or nothing.
pub fn cautions(plan: &SweepPlan) -> String {
    let names = plan.sweep().metrics.iter().chain(&plan.sweep().constraints);
    cautions_for(names.map(String::as_str))
}

/// Metrics of high-voltage figures (capacitances, surface fields, clearances).
const ELECTRIC_PREFIXES: &[&str] = &[
    "capacitance.",
    "self_capacitance.",
    "surface_field.",
    "clearance.",
    "clearance_top.",
    "frequency.",
    "equivalent_capacitance.",
    "tuning_capacitance.",
    "tap_turns.",
    "q.",
    "peak_voltage.",
];

/// Metrics of clearance distances (screening estimates).
const CLEARANCE_PREFIXES: &[&str] = &["clearance.", "clearance_top."];

/// The cautions that outputs showing the metrics or constraints `names` carry, one per line,
/// or nothing.
pub fn cautions_for<'a>(names: impl Iterator<Item = &'a str> + Clone) -> String {
    let uses = |prefixes: &[&str]| {
        names
            .clone()
            .any(|t| prefixes.iter().any(|p| t.trim_start().starts_with(p)))
    };
    let mut s = String::new();
    if uses(ELECTRIC_PREFIXES) {
        s.push_str(crate::report::CAUTION);
        s.push('\n');
    }
    if uses(CLEARANCE_PREFIXES) {
        s.push_str(&format!(
            "CAUTION: {}\n",
            coilfield_solver::thresholds::CAUTION
        ));
    }
    s
}

/// `--shard K/N`.
pub fn parse_shard(s: &str) -> anyhow::Result<Shard> {
    let parsed = s
        .split_once('/')
        .and_then(|(k, n)| Some((k.trim().parse().ok()?, n.trim().parse().ok()?)));
    match parsed.and_then(|(k, n)| Shard::new(k, n)) {
        Some(shard) => Ok(shard),
        None => Err(BadInput(format!(
            "--shard {s}: expected K/N with 0 <= K < N, e.g. --shard 0/4"
        ))
        .into()),
    }
}

/// The shard of a Slurm array task: K = (SLURM_ARRAY_TASK_ID - SLURM_ARRAY_TASK_MIN) /
/// SLURM_ARRAY_TASK_STEP, N = SLURM_ARRAY_TASK_COUNT (None outside an array job).
pub fn slurm_shard() -> anyhow::Result<Option<Shard>> {
    let var = |name: &str| std::env::var(name).ok();
    let Some(count) = var("SLURM_ARRAY_TASK_COUNT") else {
        return Ok(None);
    };
    let get = |name: &str, default: Option<&str>| -> anyhow::Result<i64> {
        let v = var(name).or(default.map(str::to_owned)).unwrap_or_default();
        v.trim().parse::<i64>().map_err(|_| {
            BadInput(format!(
                "environment variable {name} = `{v}` is not a whole number"
            ))
            .into()
        })
    };
    let n = get("SLURM_ARRAY_TASK_COUNT", Some(&count))?;
    let id = get("SLURM_ARRAY_TASK_ID", None)?;
    let min = get("SLURM_ARRAY_TASK_MIN", Some("0"))?;
    let step = get("SLURM_ARRAY_TASK_STEP", Some("1"))?;
    let shard = if n < 1 || step < 1 || id < min || (id - min) % step != 0 {
        None
    } else {
        Shard::new(((id - min) / step) as usize, n as usize)
    };
    match shard {
        Some(s) => Ok(Some(s)),
        None => Err(BadInput(format!(
            "Slurm array variables do not give a shard: ID {id}, MIN {min}, STEP {step}, COUNT {n}"
        ))
        .into()),
    }
}

/// The output file and when it was last written and synced, shared by the workers' sink and
/// the syncer thread.
struct OutFile {
    file: File,
    /// Rows in point order not yet handed to the file (one write call for many rows: a call
    /// per row would cost more than a fast point).
    ready: String,
    /// Nothing goes to the file yet: a new output's identity file is not yet on disk (so an
    /// output never holds rows that `--resume` and `merge` cannot tell apart).
    held: bool,
    last_write: Instant,
    /// A write failed: write nothing more.
    broken: bool,
    last_sync: Instant,
    /// Rows written since the last sync.
    dirty: bool,
}

/// Longest time a finished row waits in memory before it is written (the syncer thread also
/// writes every 0.1 s, so no row waits longer than that).
const WRITE_EVERY: Duration = Duration::from_millis(10);

/// Most bytes of rows held before they are written.
const WRITE_BYTES: usize = 1 << 16;

/// Longest time written rows wait for a sync to disk.
const SYNC_EVERY: Duration = Duration::from_millis(500);

impl OutFile {
    /// Hand the ready rows to the file.
    ///
    /// After a failed write nothing more is written: the file may end in part of a row, which
    /// `--resume` cuts off and computes again, and writing the same rows once more would glue
    /// them to that part.
    fn write_ready(&mut self) -> std::io::Result<()> {
        if self.broken || self.held {
            return Ok(());
        }
        if !self.ready.is_empty() {
            if let Err(e) = self.file.write_all(self.ready.as_bytes()) {
                self.broken = true;
                return Err(e);
            }
            self.ready.clear();
            self.dirty = true;
        }
        self.last_write = Instant::now();
        Ok(())
    }

    /// Write the ready rows; whether written rows are due for a sync (the last one half a
    /// second old), counted as synced from now. The caller syncs through its own handle of
    /// the file without the lock, so the workers never wait for a disk (a network file system
    /// may take tens of milliseconds per sync); rows written meanwhile mark the file dirty
    /// again and go with the next sync.
    fn due_for_sync(&mut self) -> std::io::Result<bool> {
        self.write_ready()?;
        let due = self.dirty && self.last_sync.elapsed() >= SYNC_EVERY;
        if due {
            self.last_sync = Instant::now();
            self.dirty = false;
        }
        Ok(due)
    }
}

enum Progress {
    Bar(indicatif::ProgressBar),
    Lines { last: Instant, start: Instant },
}

/// The sink of the library's rows: the shared output file, batched by the clock, and the
/// progress display.
struct FileSink<'a> {
    out: &'a Mutex<OutFile>,
    progress: Progress,
    /// Points of this run.
    total: usize,
}

impl RowSink for FileSink<'_> {
    fn rows(&mut self, rows: &str) -> std::io::Result<()> {
        let mut out = self.out.lock().unwrap_or_else(|e| e.into_inner());
        out.ready.push_str(rows);
        if out.ready.len() >= WRITE_BYTES || out.last_write.elapsed() >= WRITE_EVERY {
            // Syncing is the syncer thread's, outside the lock.
            out.write_ready()?;
        }
        Ok(())
    }

    fn progress(&mut self, done: usize) {
        let total = self.total;
        match &mut self.progress {
            Progress::Bar(bar) => bar.set_position(done as u64),
            Progress::Lines { last, start } => {
                if last.elapsed() >= Duration::from_secs(10) {
                    *last = Instant::now();
                    let rate = done as f64 / start.elapsed().as_secs_f64().max(1e-9);
                    let eta = (total - done) as f64 / rate.max(1e-9);
                    eprintln!(
                        "sweep: {done}/{total} points ({:.1} %), {rate:.0} points/s, about {eta:.0} s left",
                        100.0 * done as f64 / total.max(1) as f64
                    );
                }
            }
        }
    }
}

/// The bytes of an existing output, for `--resume`.
fn read_existing(path: &Path, file: &mut File) -> anyhow::Result<Vec<u8>> {
    let mut bytes = Vec::new();
    file.seek(SeekFrom::Start(0))?;
    file.read_to_end(&mut bytes)
        .map_err(|e| anyhow::anyhow!("{}: cannot read: {e}", path.display()))?;
    Ok(bytes)
}

pub fn run(
    sweep_path: &Path,
    out: &Path,
    resume: bool,
    shard: Option<Shard>,
    plot: Option<&Path>,
) -> anyhow::Result<ExitCode> {
    let format = out_format(out)?;
    let plan = load_plan(sweep_path)?;
    let shard = match shard {
        Some(s) => s,
        None => slurm_shard()?.unwrap_or(Shard::ALL),
    };
    let grids: Option<Vec<Vec<f64>>> =
        if plan.sweep().sample.is_none() && plan.sweep().axes.iter().all(|a| a.group.is_none()) {
            plan.sweep().axes.iter().map(|a| a.grid_values()).collect()
        } else {
            None
        };
    if let Some(p) = plot {
        let counts: Option<Vec<usize>> = grids.as_ref().map(|g| g.iter().map(Vec::len).collect());
        crate::sweep_plot::check(p, counts.as_deref())?;
        if shard.n() > 1 {
            return Err(BadInput(
                "--plot: plot the merged file's sweep in one run, not a shard".into(),
            )
            .into());
        }
    }
    let out: PathBuf = PathBuf::from(
        out.to_string_lossy()
            .replace("{shard}", &shard.k().to_string()),
    );
    let mine = shard.indices(plan.points().len());

    refuse_symlink(&out)?;
    let exists = out.exists();
    if exists && !resume {
        return Err(BadInput(format!(
            "{}: already exists; pass --resume to continue it, or remove it",
            out.display()
        ))
        .into());
    }
    let mut file = OpenOptions::new()
        .read(true)
        .append(true)
        .create(true)
        // A link put in place after the check above is not followed either.
        .custom_flags(libc::O_NOFOLLOW)
        .open(&out)
        .map_err(|e| BadInput(format!("{}: cannot open: {e}", out.display())))?;
    lock_exclusive(&file, &out)?;
    let existing = if exists {
        read_existing(&out, &mut file)?
    } else {
        Vec::new()
    };
    // The sweep's identity beside its output: checked before any kept row is trusted; for a
    // new output written (atomically, on the syncer thread below, while the first points are
    // computed) before anything of the output reaches its file.
    let id_path = identity_path(&out)?;
    let new_output = existing.is_empty();
    if !new_output {
        let id_text = read_identity(&id_path, &out)?;
        plan.check_identity(&id_text, &id_path.display().to_string())?;
    }
    let resumed = plan.resume(
        existing.as_slice(),
        format,
        shard,
        &out.display().to_string(),
    )?;
    // A torn last line is cut off and computed again.
    if resumed.complete_bytes < existing.len() {
        file.set_len(resumed.complete_bytes as u64)?;
        file.sync_data()?;
    }
    // The header goes out with the first rows (and is synced with them).
    let header = if resumed.needs_header {
        plan.header(format)
    } else {
        String::new()
    };
    let done = resumed.done;
    let todo = &mine[done..];
    let total = todo.len();
    if done > 0 {
        eprintln!(
            "sweep: resuming, {done} points already in {}",
            out.display()
        );
    }

    let stop = std::sync::Arc::new(AtomicBool::new(false));
    {
        let stop = stop.clone();
        // Ctrl-C, SIGTERM (Slurm's time limit and preemption) and SIGHUP (a closed terminal) all
        // stop cleanly: rows written so far are synced and the run can resume. A second handler
        // cannot be set in one process; tests run one sweep per process.
        let _ = ctrlc::set_handler(move || stop.store(true, Ordering::SeqCst));
    }
    let progress = if std::io::stderr().is_terminal() {
        let bar = indicatif::ProgressBar::new(total as u64);
        bar.set_style(
            indicatif::ProgressStyle::with_template(
                "{bar:40} {pos}/{len} points, {per_sec}, eta {eta}",
            )
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        Progress::Bar(bar)
    } else {
        Progress::Lines {
            last: Instant::now(),
            start: Instant::now(),
        }
    };
    // The syncer's own handle of the output, to sync it without holding the workers' lock.
    let sync_file = file.try_clone()?;
    let shared = Mutex::new(OutFile {
        file,
        ready: header,
        held: new_output,
        last_write: Instant::now(),
        broken: false,
        last_sync: Instant::now(),
        dirty: false,
    });
    let mut sink = FileSink {
        out: &shared,
        progress,
        total,
    };
    let failure: Mutex<Option<std::io::Error>> = Mutex::new(None);
    let start = Instant::now();
    // Dropping `finished` wakes the syncer at once when the workers are done.
    let (finished, finished_rx) = std::sync::mpsc::channel::<()>();
    let (result, identity) = std::thread::scope(|outer| {
        // A new output's identity file first (its two syncs off the workers' path), then the
        // output's rows: rows written while the workers are busy with slow points still reach
        // the disk within a second.
        let (shared_ref, failure_ref, stop_ref) = (&shared, &failure, &*stop);
        let (plan_ref, id_path_ref, sync_file) = (&plan, &id_path, &sync_file);
        let syncer = outer.spawn(move || -> anyhow::Result<()> {
            if new_output {
                let written =
                    crate::output::write_atomic(id_path_ref, plan_ref.identity_text().as_bytes());
                let mut w = shared_ref.lock().unwrap_or_else(|e| e.into_inner());
                if let Err(e) = written {
                    // Nothing of the output has reached its file: stop, and report.
                    stop_ref.store(true, Ordering::SeqCst);
                    return Err(e);
                }
                w.held = false;
            }
            while let Err(std::sync::mpsc::RecvTimeoutError::Timeout) =
                finished_rx.recv_timeout(Duration::from_millis(100))
            {
                let due = shared_ref
                    .lock()
                    .unwrap_or_else(|e| e.into_inner())
                    .due_for_sync();
                let synced = match due {
                    Ok(true) => sync_file.sync_data(),
                    Ok(false) => Ok(()),
                    Err(e) => Err(e),
                };
                if let Err(e) = synced {
                    *failure_ref.lock().unwrap_or_else(|e| e.into_inner()) = Some(e);
                    stop_ref.store(true, Ordering::SeqCst);
                    break;
                }
            }
            Ok(())
        });
        let result = plan.run(todo, format, Par::Rayon, &stop, &mut sink);
        drop(finished);
        let identity = syncer
            .join()
            .unwrap_or_else(|panic| std::panic::resume_unwind(panic));
        (result, identity)
    });
    let FileSink { progress, .. } = sink;
    if let Err(e) = identity {
        // Nothing of the output reached its file: an output this run created goes again (a
        // rerun needs no --resume); report, exit 2.
        if let Progress::Bar(bar) = &progress {
            bar.finish_and_clear();
        }
        if !exists {
            let _ = std::fs::remove_file(&out);
        }
        return Err(e);
    }
    let mut w = shared.into_inner().unwrap_or_else(|e| e.into_inner());
    // Rows still in memory after a stop (Ctrl-C, a write error) go out first.
    let tail = w.write_ready();
    w.file.sync_all()?;
    tail?;
    if let Progress::Bar(bar) = &progress {
        bar.finish_and_clear();
    }
    let failed = failure.into_inner().unwrap_or_else(|e| e.into_inner());
    let written_now = match (result, failed) {
        (Err(e), _) | (Ok(_), Some(e)) => {
            // A bad output (full disk, a file system gone read-only): exit 2 like any other.
            return Err(BadInput(format!(
                "{}: cannot write: {e}; the rows written so far are kept: make room and rerun \
                 with --resume",
                out.display()
            ))
            .into());
        }
        (Ok(n), None) => n,
    };
    let written = done + written_now;
    eprint!("{}", cautions(&plan));
    if written_now < total {
        eprintln!(
            "sweep: interrupted; {written} of {} points are in {}; rerun with --resume to finish",
            mine.len(),
            out.display()
        );
        return Ok(ExitCode::from(130));
    }
    eprintln!(
        "sweep: {total} points in {:.2} s, {written} in {}",
        start.elapsed().as_secs_f64(),
        out.display()
    );
    if let (Some(p), Some(grids)) = (plot, grids) {
        // The first metric of every point, read back from the finished output.
        let text = crate::load::text(&out, "sweep output")?;
        let n_axes = plan.sweep().axes.len();
        let name = &plan.sweep().metrics[0];
        let values: Vec<f64> = text
            .lines()
            .skip(format.header_lines())
            .map(|line| match format {
                OutFormat::Csv => line
                    .split(',')
                    .nth(1 + n_axes)
                    .and_then(|v| v.parse().ok())
                    .unwrap_or(f64::NAN),
                OutFormat::JsonLines => serde_json::from_str::<serde_json::Value>(line)
                    .ok()
                    .and_then(|v| v["metrics"][name].as_f64())
                    .unwrap_or(f64::NAN),
            })
            .collect();
        let names: Vec<&str> = plan.sweep().axes.iter().map(|a| a.key.as_str()).collect();
        crate::sweep_plot::write(p, &names, &grids, name, &values)?;
        eprintln!("sweep: plot of {name} in {}", p.display());
    }
    Ok(ExitCode::SUCCESS)
}

/// Transparent huge pages off for this process (Linux; elsewhere nothing to do); called before
/// the thread pool starts.
///
/// A sweep is many small evaluations on every thread, and the allocator's per-thread heaps
/// touch a few dozen KiB here and there: with huge pages every 2 MiB region touched first is
/// zeroed whole (a 10,000-point benchmark sweep held 20-22 MB instead of 9 MB), much of it on
/// the main thread before the workers start (the pool's work queues, the plan), and on a
/// virtual machine whose host backs such a region only when it is first touched this took
/// 5-14 ms instead of under 1 ms in some runs. Other commands keep huge pages: a
/// finite-element solve runs about 10 % faster with them.
pub fn small_pages_only() {
    #[cfg(target_os = "linux")]
    // Not fatal: without it the sweep is the same, only its start may be slower.
    let _ = rustix::thread::disable_transparent_huge_pages(true);
}

/// The identity file of the sweep output `out`: `<out>.sweep-id` beside it.
pub fn identity_path(out: &Path) -> anyhow::Result<PathBuf> {
    let name = out
        .file_name()
        .ok_or_else(|| BadInput(format!("{}: not a file name", out.display())))?;
    Ok(out.with_file_name(format!("{}.sweep-id", name.to_string_lossy())))
}

/// The text of `out`'s identity file `id_path`; a clear refusal when there is none.
fn read_identity(id_path: &Path, out: &Path) -> anyhow::Result<String> {
    if !id_path.exists() {
        return Err(BadInput(format!(
            "{}: no sweep identity file ({}) beside it, so it cannot be told from another \
             sweep's output; remove it to start again",
            out.display(),
            id_path.display()
        ))
        .into());
    }
    crate::load::text(id_path, "sweep identity file")
}

/// The lock file of a merge's `--out`: `.<name>.lock` in its folder.
fn lock_file_of(out: &Path) -> anyhow::Result<PathBuf> {
    let name = out
        .file_name()
        .ok_or_else(|| BadInput(format!("{}: not a file name", out.display())))?;
    Ok(out.with_file_name(format!(".{}.lock", name.to_string_lossy())))
}

/// Refuse a symbolic link at `out`: rows are appended to the file named, never to whatever a
/// link points at (a dangling link would have its target created).
fn refuse_symlink(out: &Path) -> anyhow::Result<()> {
    if std::fs::symlink_metadata(out).is_ok_and(|m| m.file_type().is_symlink()) {
        return Err(BadInput(format!(
            "{}: is a symbolic link; give the path of the file itself",
            out.display()
        ))
        .into());
    }
    Ok(())
}

/// An exclusive advisory lock on `file` (flock), held until it closes: a second sweep or merge
/// writing the same output is refused rather than writing every row twice. Locks on network
/// file systems (NFS, SMB) may not hold; give each writer its own output there.
fn lock_exclusive(file: &File, out: &Path) -> anyhow::Result<()> {
    match fs4::FileExt::try_lock(file) {
        Ok(()) => Ok(()),
        Err(fs4::TryLockError::WouldBlock) => Err(BadInput(format!(
            "{}: another coilfield process is writing it (the file is locked); wait for it to \
             finish or give another --out",
            out.display()
        ))
        .into()),
        Err(fs4::TryLockError::Error(e)) => Err(BadInput(format!(
            "{}: cannot lock it for writing: {e}",
            out.display()
        ))
        .into()),
    }
}

/// `coilfield merge`: join shard outputs into the file one process would have written.
pub fn merge(files: &[PathBuf], out: &Path, sweep: Option<&Path>) -> anyhow::Result<ExitCode> {
    let format = out_format(out)?;
    if files.is_empty() {
        return Err(BadInput("merge: name at least one shard file".into()).into());
    }
    let expected = match sweep {
        Some(p) => Some(load_plan(p)?),
        None => None,
    };
    let mut texts: Vec<(String, String)> = Vec::new();
    for f in files {
        if out_format(f)? != format {
            return Err(BadInput(format!(
                "{}: not the same format as --out {}",
                f.display(),
                out.display()
            ))
            .into());
        }
        let text = crate::load::text(f, "shard file")?;
        texts.push((f.display().to_string(), text));
    }
    let parts: Vec<(&str, &str)> = texts
        .iter()
        .map(|(label, text)| (label.as_str(), text.as_str()))
        .collect();
    // All parts of one sweep (and of `--sweep`'s, when given), by their identity files.
    let mut identity: Option<(String, String)> = None;
    for f in files {
        let id_path = identity_path(f)?;
        let id_text = read_identity(&id_path, f)?;
        let label = id_path.display().to_string();
        if let Some(plan) = &expected {
            plan.check_identity(&id_text, &label)?;
        }
        let hash = sweep::identity_hash_of(&id_text, &label)?.to_string();
        if let Some((first, first_file)) = &identity {
            if sweep::identity_hash_of(first, "")? != hash {
                return Err(BadInput(format!(
                    "{}: written by another sweep than {first_file} (their identity files \
                     differ); merge only the shards of one sweep",
                    f.display()
                ))
                .into());
            }
        } else {
            identity = Some((id_text.clone(), f.display().to_string()));
        }
    }
    let text = sweep::merge(&parts, format, expected.as_ref())?;
    // Two merges into one --out: the second is refused while the first holds the lock file
    // beside it (the output itself is replaced by a rename, so it cannot carry the lock).
    let lock_path = lock_file_of(out)?;
    let lock = OpenOptions::new()
        .write(true)
        .create(true)
        .truncate(false)
        .custom_flags(libc::O_NOFOLLOW)
        .open(&lock_path)
        .map_err(|e| BadInput(format!("{}: cannot open: {e}", lock_path.display())))?;
    lock_exclusive(&lock, out)?;
    if let Some((id_text, _)) = &identity {
        crate::output::write_atomic(&identity_path(out)?, id_text.as_bytes())?;
    }
    crate::output::write_atomic(out, text.as_bytes())?;
    drop(lock);
    let total = text.lines().count().saturating_sub(format.header_lines());
    eprintln!(
        "merge: {total} points from {} files in {}",
        files.len(),
        out.display()
    );
    // The metric names are in the CSV header, or quoted keys of the JSON lines.
    let first = text.lines().next().unwrap_or("");
    eprint!("{}", cautions_for(first.split([',', '"'])));
    Ok(ExitCode::SUCCESS)
}
