//! `coilfield sweep` and `coilfield merge`: parameter sweeps written append-only in point order,
//! resumable, shardable over Slurm array tasks.

use crate::BadInput;
use crate::clearance::ClearanceMetrics;
use coilfield_geometry::file::sweep::{
    Part, Sweep, Values, apply_to_item, item_table, parse_sweep, points,
};
use coilfield_geometry::{Design, electrode_from_table, parse_design, winding_from_table};
use coilfield_solver::metrics::{Evaluator, PointResult, parse_constraint_with, parse_metric_with};
use std::collections::BTreeMap;
use std::fs::{File, OpenOptions};
use std::io::{IsTerminal, Read, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
use std::time::{Duration, Instant};

/// Output format, from the extension of `--out`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OutFormat {
    /// Comma-separated values with a header line.
    Csv,
    /// One JSON object per line.
    JsonLines,
}

impl OutFormat {
    pub fn of(path: &Path) -> anyhow::Result<OutFormat> {
        match path.extension().and_then(|e| e.to_str()) {
            Some("csv") => Ok(OutFormat::Csv),
            Some("jsonl") => Ok(OutFormat::JsonLines),
            _ => Err(BadInput(format!(
                "{}: the output file name must end in .csv or .jsonl",
                path.display()
            ))
            .into()),
        }
    }
}

/// The base table of one winding or electrode that some axes edit, and those axes.
struct Edit {
    part: Part,
    /// Place in the design (file order, from 0).
    index: usize,
    table: toml::Table,
    /// The axes (indices into the sweep's axes) that edit it.
    axes: Vec<usize>,
}

/// A sweep file with its base design, checked and ready to evaluate.
pub struct Plan {
    pub sweep_label: String,
    pub base_label: String,
    pub sweep: Sweep,
    pub base_design: Design,
    pub evaluator: Evaluator,
    pub points: Vec<Vec<f64>>,
    edits: Vec<Edit>,
}

impl Plan {
    /// Read the sweep file and its base, and check every axis value alone.
    pub fn load(path: &Path) -> anyhow::Result<Plan> {
        let text = crate::load::text(path, "sweep file")?;
        Plan::from_text(&text, path)
    }

    /// As [`Plan::load`], with the text of the file at `path` given.
    pub fn from_text(text: &str, path: &Path) -> anyhow::Result<Plan> {
        let sweep_label = path.display().to_string();
        let sweep = parse_sweep(text, &sweep_label).map_err(|e| BadInput(e.to_string()))?;
        let base_path = path.parent().unwrap_or(Path::new(".")).join(&sweep.base);
        let base_label = base_path.display().to_string();
        let base_text = crate::load::text(&base_path, "base design named by `base`")?;
        let base_design = parse_design(&base_text, &base_label)?;
        let base_table: toml::Table = base_text
            .parse()
            .map_err(|e| BadInput(format!("{base_label}: {e}")))?;
        let clearance = ClearanceMetrics::new(&base_design, &base_label)?;
        let mut metrics = Vec::new();
        for (i, m) in sweep.metrics.iter().enumerate() {
            metrics.push(
                parse_metric_with(m, &base_design, Some(&clearance))
                    .map_err(|e| BadInput(format!("{sweep_label}: metrics[{i}]: {e}")))?,
            );
        }
        let mut constraints = Vec::new();
        for (i, c) in sweep.constraints.iter().enumerate() {
            constraints.push(
                parse_constraint_with(c, &base_design, Some(&clearance))
                    .map_err(|e| BadInput(format!("{sweep_label}: constraints[{i}]: {e}")))?,
            );
        }
        let evaluator = Evaluator::with_external(
            &base_design,
            metrics,
            constraints,
            Some(Box::new(clearance)),
        );
        let edits = edits_of(&sweep, &base_table, &sweep_label)?;
        let pts = points(&sweep, &sweep_label).map_err(|e| BadInput(e.to_string()))?;
        let plan = Plan {
            sweep_label,
            base_label,
            sweep,
            base_design,
            evaluator,
            points: pts,
            edits,
        };
        plan.check_axes_alone()?;
        Ok(plan)
    }

    /// Every value of every axis (a sampled axis: both bounds), set alone in the base design,
    /// must give a valid design.
    fn check_axes_alone(&self) -> anyhow::Result<()> {
        for (j, axis) in self.sweep.axes.iter().enumerate() {
            let values = match (&axis.values, axis.grid_values()) {
                (_, Some(v)) => v,
                (Values::Range { from, to, .. }, None) => vec![*from, *to],
                (Values::List(v), None) => v.clone(),
            };
            let mut seen: Vec<f64> = Vec::new();
            for v in values {
                if seen.contains(&v) {
                    continue;
                }
                seen.push(v);
                let label = format!(
                    "{}: axis #{} `{}` = {v} (set alone in {})",
                    self.sweep_label,
                    j + 1,
                    axis.key,
                    self.base_label
                );
                self.design_with(&[(j, v)], &label)
                    .map_err(|e| BadInput(prefixed(&label, e)))?;
            }
        }
        Ok(())
    }

    /// The design at point `i`, or the message of why there is none.
    pub fn design_at(&self, i: usize) -> Result<Design, String> {
        self.design_for(&self.points[i], &format!("point {i}"))
    }

    /// The design with the axes at `values` (see [`Plan::design_with`]); `label` names it in
    /// messages.
    pub fn design_for(&self, values: &[f64], label: &str) -> Result<Design, String> {
        let pairs: Vec<(usize, f64)> = values.iter().copied().enumerate().collect();
        self.design_with(&pairs, label)
    }

    /// The base design with the axes `(axis index, value)` set.
    ///
    /// Each winding or electrode that the axes edit is its base table with the values set, read
    /// again with every check of a design file for one item ([`winding_from_table`],
    /// [`electrode_from_table`]); the others are the base's. The checks between items run on
    /// the whole result, over the pairs that involve an edited part
    /// ([`coilfield_geometry::query::checks::PreparedDesign::check`]), as [`parse_design`] runs them. Names cannot be
    /// swept, so they stay unique.
    pub fn design_with(&self, values: &[(usize, f64)], label: &str) -> Result<Design, String> {
        let mut design = self.base_design.clone();
        for edit in &self.edits {
            let mut table = None;
            for &(j, v) in values.iter().filter(|(j, _)| edit.axes.contains(j)) {
                let axis = &self.sweep.axes[j];
                let t = table.get_or_insert_with(|| edit.table.clone());
                apply_to_item(t, &axis.target, v).map_err(|e| format!("{}: {e}", axis.key))?;
            }
            let Some(table) = table else { continue };
            let number = edit.index + 1;
            match edit.part {
                Part::Winding => {
                    design.windings[edit.index] =
                        winding_from_table(table, number, label).map_err(|e| e.to_string())?;
                }
                Part::Electrode => {
                    design.electrodes[edit.index] =
                        electrode_from_table(table, number, label).map_err(|e| e.to_string())?;
                }
            }
        }
        self.evaluator
            .prepared()
            .check(&design, label)
            .map_err(|e| e.to_string())?;
        Ok(design)
    }

    /// The cautions its outputs carry, one per line, or nothing.
    pub fn cautions(&self) -> String {
        let names = self.sweep.metrics.iter().chain(&self.sweep.constraints);
        cautions_for(names.map(String::as_str))
    }

    /// Evaluate point `i`.
    pub fn evaluate(&self, i: usize) -> PointResult {
        match self.design_at(i) {
            Ok(d) => self.evaluator.evaluate(&d),
            Err(message) => PointResult {
                values: Vec::new(),
                status: coilfield_solver::metrics::Status::Error,
                message,
            },
        }
    }

    pub fn header(&self, format: OutFormat) -> String {
        match format {
            OutFormat::Csv => {
                let mut cols = vec!["point".to_string()];
                cols.extend(self.sweep.axes.iter().map(|a| csv_field(&a.key)));
                cols.extend(self.sweep.metrics.iter().map(|m| csv_field(m)));
                cols.push("status".into());
                cols.push("message".into());
                cols.join(",") + "\n"
            }
            OutFormat::JsonLines => String::new(),
        }
    }

    /// One output line (with its newline) for point `i`.
    pub fn row(&self, i: usize, r: &PointResult, format: OutFormat) -> String {
        let message = r.message.replace(['\n', '\r'], " ");
        match format {
            OutFormat::Csv => {
                let mut s = i.to_string();
                for v in &self.points[i] {
                    s.push(',');
                    s.push_str(&num(*v));
                }
                for k in 0..self.sweep.metrics.len() {
                    s.push(',');
                    if let Some(v) = r.values.get(k) {
                        s.push_str(&num(*v));
                    }
                }
                s.push(',');
                s.push_str(r.status.as_str());
                s.push(',');
                s.push_str(&csv_field(&message));
                s.push('\n');
                s
            }
            OutFormat::JsonLines => {
                let mut params = serde_json::Map::new();
                for (a, v) in self.sweep.axes.iter().zip(&self.points[i]) {
                    params.insert(a.key.clone(), json_num(*v));
                }
                let mut metrics = serde_json::Map::new();
                for (k, name) in self.sweep.metrics.iter().enumerate() {
                    let v = r.values.get(k).map(|v| json_num(*v));
                    metrics.insert(name.clone(), v.unwrap_or(serde_json::Value::Null));
                }
                let obj = serde_json::json!({
                    "point": i,
                    "params": params,
                    "metrics": metrics,
                    "status": r.status.as_str(),
                    "message": message,
                });
                obj.to_string() + "\n"
            }
        }
    }
}

/// Metrics of high-voltage figures (capacitances, surface fields, clearances).
const ELECTRIC_PREFIXES: &[&str] = &[
    "capacitance.",
    "self_capacitance.",
    "surface_field.",
    "clearance.",
    "clearance_top.",
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
        s.push_str(&format!("CAUTION: {}\n", crate::thresholds::CAUTION));
    }
    s
}

/// The base tables the axes edit, one per winding or electrode, in the order of first use.
fn edits_of(sweep: &Sweep, base: &toml::Table, sweep_label: &str) -> anyhow::Result<Vec<Edit>> {
    let mut edits: Vec<Edit> = Vec::new();
    for (j, axis) in sweep.axes.iter().enumerate() {
        let part = axis.target.part();
        let (index, table) = item_table(base, part, axis.target.name()).map_err(|e| {
            BadInput(format!(
                "{sweep_label}: axis #{} key `{}`: {e}",
                j + 1,
                axis.key
            ))
        })?;
        match edits
            .iter_mut()
            .find(|e| e.part == part && e.index == index)
        {
            Some(e) => e.axes.push(j),
            None => edits.push(Edit {
                part,
                index,
                table: table.clone(),
                axes: vec![j],
            }),
        }
    }
    Ok(edits)
}

/// A message with `label` in front unless it starts with it already.
fn prefixed(label: &str, message: String) -> String {
    if message.starts_with(label) {
        message
    } else {
        format!("{label}: {message}")
    }
}

/// Shortest round-trip text of a float: the fewest digits that read back to the same value, in
/// plain or exponent form, whichever is shorter (plain on a tie).
fn num(v: f64) -> String {
    let plain = format!("{v}");
    let exp = format!("{v:e}");
    if exp.len() < plain.len() { exp } else { plain }
}

fn json_num(v: f64) -> serde_json::Value {
    serde_json::Number::from_f64(v)
        .map(serde_json::Value::Number)
        .unwrap_or(serde_json::Value::Null)
}

/// A CSV field, quoted when it holds a comma or a quote (RFC 4180).
fn csv_field(s: &str) -> String {
    if s.contains([',', '"']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// Which share of the points this process runs: index % n == k.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    pub k: usize,
    pub n: usize,
}

pub fn parse_shard(s: &str) -> anyhow::Result<Shard> {
    let parsed = s
        .split_once('/')
        .and_then(|(k, n)| Some((k.trim().parse().ok()?, n.trim().parse().ok()?)));
    match parsed {
        Some((k, n)) if n >= 1 && k < n => Ok(Shard { k, n }),
        _ => Err(BadInput(format!(
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
    if n < 1 || step < 1 || id < min || (id - min) % step != 0 || (id - min) / step >= n {
        return Err(BadInput(format!(
            "Slurm array variables do not give a shard: ID {id}, MIN {min}, STEP {step}, COUNT {n}"
        ))
        .into());
    }
    Ok(Some(Shard {
        k: ((id - min) / step) as usize,
        n: n as usize,
    }))
}

/// State of the ordered, append-only writer shared by the workers.
struct Writer {
    file: File,
    /// Finished rows not yet written (they wait for an earlier point).
    pending: BTreeMap<usize, String>,
    /// Position (in this run's list of points) of the next row to write.
    next: usize,
    /// Rows in point order, finished and not yet handed to the file (one write call for many
    /// rows: a call per row would cost more than a fast point).
    ready: String,
    last_write: Instant,
    /// A write failed: write nothing more.
    broken: bool,
    last_sync: Instant,
    /// Rows written since the last sync.
    dirty: bool,
    written: usize,
    progress: Progress,
}

enum Progress {
    Bar(indicatif::ProgressBar),
    Lines { last: Instant, start: Instant },
}

/// Longest time a finished row waits in memory before it is written (the syncer thread also
/// writes every 0.1 s, so no row waits longer than that).
const WRITE_EVERY: Duration = Duration::from_millis(10);

/// Most bytes of rows held before they are written.
const WRITE_BYTES: usize = 1 << 16;

impl Writer {
    /// Hand the ready rows to the file.
    ///
    /// After a failed write nothing more is written: the file may end in part of a row, which
    /// `--resume` cuts off and computes again, and writing the same rows once more would glue
    /// them to that part.
    fn write_ready(&mut self) -> std::io::Result<()> {
        if self.broken {
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

    /// Write the ready rows, and sync written rows to disk when the last sync is half a
    /// second old.
    fn sync_if_due(&mut self) -> std::io::Result<()> {
        self.write_ready()?;
        if self.dirty && self.last_sync.elapsed() >= Duration::from_millis(500) {
            self.file.sync_data()?;
            self.last_sync = Instant::now();
            self.dirty = false;
        }
        Ok(())
    }

    fn push(&mut self, pos: usize, row: String, total: usize) -> std::io::Result<()> {
        if pos == self.next {
            self.ready.push_str(&row);
            self.next += 1;
            self.written += 1;
        } else {
            self.pending.insert(pos, row);
        }
        while let Some(row) = self.pending.remove(&self.next) {
            self.ready.push_str(&row);
            self.next += 1;
            self.written += 1;
        }
        if self.ready.len() >= WRITE_BYTES
            || self.last_write.elapsed() >= WRITE_EVERY
            || self.written == total
        {
            self.sync_if_due()?;
        }
        match &mut self.progress {
            Progress::Bar(bar) => bar.set_position(self.written as u64),
            Progress::Lines { last, start } => {
                if last.elapsed() >= Duration::from_secs(10) {
                    *last = Instant::now();
                    let rate = self.written as f64 / start.elapsed().as_secs_f64().max(1e-9);
                    let eta = (total - self.written) as f64 / rate.max(1e-9);
                    eprintln!(
                        "sweep: {}/{total} points ({:.1} %), {rate:.0} points/s, about {eta:.0} s left",
                        self.written,
                        100.0 * self.written as f64 / total.max(1) as f64
                    );
                }
            }
        }
        Ok(())
    }
}

/// Complete lines of an existing output (a torn last line is cut off the file).
fn resume_lines(path: &Path, file: &mut File) -> anyhow::Result<Vec<String>> {
    let mut bytes = Vec::new();
    file.seek(SeekFrom::Start(0))?;
    file.read_to_end(&mut bytes)
        .map_err(|e| anyhow::anyhow!("{}: cannot read: {e}", path.display()))?;
    let keep = bytes.iter().rposition(|&b| b == b'\n').map_or(0, |p| p + 1);
    if keep < bytes.len() {
        file.set_len(keep as u64)?;
        file.sync_data()?;
    }
    let text = String::from_utf8_lossy(&bytes[..keep]).into_owned();
    Ok(text.lines().map(str::to_owned).collect())
}

/// Point index of an output line.
fn point_of(line: &str, format: OutFormat) -> Option<usize> {
    match format {
        OutFormat::Csv => line.split(',').next()?.parse().ok(),
        OutFormat::JsonLines => serde_json::from_str::<serde_json::Value>(line)
            .ok()?
            .get("point")?
            .as_u64()
            .map(|p| p as usize),
    }
}

pub fn run(
    sweep_path: &Path,
    out: &Path,
    resume: bool,
    shard: Option<Shard>,
    plot: Option<&Path>,
) -> anyhow::Result<ExitCode> {
    let format = OutFormat::of(out)?;
    let plan = Plan::load(sweep_path)?;
    let shard = match shard {
        Some(s) => s,
        None => slurm_shard()?.unwrap_or(Shard { k: 0, n: 1 }),
    };
    let grids: Option<Vec<Vec<f64>>> =
        if plan.sweep.sample.is_none() && plan.sweep.axes.iter().all(|a| a.group.is_none()) {
            plan.sweep.axes.iter().map(|a| a.grid_values()).collect()
        } else {
            None
        };
    if let Some(p) = plot {
        let counts: Option<Vec<usize>> = grids.as_ref().map(|g| g.iter().map(Vec::len).collect());
        crate::sweep_plot::check(p, counts.as_deref())?;
        if shard.n > 1 {
            return Err(BadInput(
                "--plot: plot the merged file's sweep in one run, not a shard".into(),
            )
            .into());
        }
    }
    let out: PathBuf = PathBuf::from(
        out.to_string_lossy()
            .replace("{shard}", &shard.k.to_string()),
    );
    let mine: Vec<usize> = (shard.k..plan.points.len()).step_by(shard.n).collect();
    let header = plan.header(format);

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
        .open(&out)
        .map_err(|e| anyhow::anyhow!("{}: cannot open: {e}", out.display()))?;
    let mut done = 0;
    let lines = if exists {
        resume_lines(&out, &mut file)?
    } else {
        Vec::new()
    };
    let mut rows = lines.as_slice();
    if format == OutFormat::Csv {
        match rows.first() {
            None => file.write_all(header.as_bytes())?,
            Some(h) if format!("{h}\n") == header => rows = &rows[1..],
            Some(_) => {
                return Err(BadInput(format!(
                    "{}: its header is not this sweep's ({}); it was written by another sweep",
                    out.display(),
                    header.trim_end()
                ))
                .into());
            }
        }
    }
    for (pos, line) in rows.iter().enumerate() {
        if pos >= mine.len() || point_of(line, format) != Some(mine[pos]) {
            return Err(BadInput(format!(
                "{}: line {} is not point {} of this sweep and shard {}/{}; it was written by \
                 another sweep or shard",
                out.display(),
                pos + 1 + usize::from(format == OutFormat::Csv),
                mine.get(pos).map_or("-".into(), |p| p.to_string()),
                shard.k,
                shard.n
            ))
            .into());
        }
        done += 1;
    }
    file.sync_data()?;
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
        // A second handler cannot be set in one process; tests run one sweep per process.
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
    let writer = Mutex::new(Writer {
        file,
        pending: BTreeMap::new(),
        next: 0,
        ready: String::new(),
        last_write: Instant::now(),
        broken: false,
        last_sync: Instant::now(),
        dirty: false,
        written: 0,
        progress,
    });
    let next = AtomicUsize::new(0);
    let failure: Mutex<Option<std::io::Error>> = Mutex::new(None);
    let start = Instant::now();
    // Dropping `finished` wakes the syncer at once when the workers are done.
    let (finished, finished_rx) = std::sync::mpsc::channel::<()>();
    std::thread::scope(|outer| {
        // Rows written while the workers are busy with slow points still reach the disk within a
        // second.
        let (writer_ref, failure_ref, stop_ref) = (&writer, &failure, &*stop);
        outer.spawn(move || {
            while let Err(std::sync::mpsc::RecvTimeoutError::Timeout) =
                finished_rx.recv_timeout(Duration::from_millis(100))
            {
                let mut w = writer_ref.lock().unwrap_or_else(|e| e.into_inner());
                if let Err(e) = w.sync_if_due() {
                    *failure_ref.lock().unwrap_or_else(|e| e.into_inner()) = Some(e);
                    stop_ref.store(true, Ordering::SeqCst);
                    break;
                }
            }
        });
        // Points are handed out in order, so finished rows wait little for earlier ones.
        rayon::scope(|s| {
            for _ in 0..rayon::current_num_threads() {
                s.spawn(|_| {
                    loop {
                        if stop.load(Ordering::SeqCst) {
                            break;
                        }
                        let pos = next.fetch_add(1, Ordering::SeqCst);
                        if pos >= total {
                            break;
                        }
                        let i = todo[pos];
                        let row = plan.row(i, &plan.evaluate(i), format);
                        let mut w = writer.lock().unwrap_or_else(|e| e.into_inner());
                        if let Err(e) = w.push(pos, row, total) {
                            stop.store(true, Ordering::SeqCst);
                            *failure.lock().unwrap_or_else(|e| e.into_inner()) = Some(e);
                            break;
                        }
                    }
                });
            }
        });
        drop(finished);
    });
    let mut w = writer.into_inner().unwrap_or_else(|e| e.into_inner());
    // Rows still in memory after a stop (Ctrl-C, a write error) go out first.
    let tail = w.write_ready();
    w.file.sync_all()?;
    tail?;
    if let Progress::Bar(bar) = &w.progress {
        bar.finish_and_clear();
    }
    if let Some(e) = failure.into_inner().unwrap_or_else(|e| e.into_inner()) {
        anyhow::bail!("{}: cannot write: {e}", out.display());
    }
    let written = done + w.written;
    eprint!("{}", plan.cautions());
    if w.written < total {
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
        let n_axes = plan.sweep.axes.len();
        let name = &plan.sweep.metrics[0];
        let values: Vec<f64> = text
            .lines()
            .skip(usize::from(format == OutFormat::Csv))
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
        let names: Vec<&str> = plan.sweep.axes.iter().map(|a| a.key.as_str()).collect();
        crate::sweep_plot::write(p, &names, &grids, name, &values)?;
        eprintln!("sweep: plot of {name} in {}", p.display());
    }
    Ok(ExitCode::SUCCESS)
}

/// `coilfield merge`: join shard outputs into the file one process would have written.
pub fn merge(files: &[PathBuf], out: &Path, sweep: Option<&Path>) -> anyhow::Result<ExitCode> {
    let format = OutFormat::of(out)?;
    if files.is_empty() {
        return Err(BadInput("merge: name at least one shard file".into()).into());
    }
    let expected = match sweep {
        Some(p) => Some(Plan::load(p)?),
        None => None,
    };
    let mut header: Option<(String, &Path)> = None;
    let mut rows: BTreeMap<usize, (String, &Path)> = BTreeMap::new();
    let mut doubled: Vec<String> = Vec::new();
    for f in files {
        if OutFormat::of(f)? != format {
            return Err(BadInput(format!(
                "{}: not the same format as --out {}",
                f.display(),
                out.display()
            ))
            .into());
        }
        let text = crate::load::text(f, "shard file")?;
        if !text.is_empty() && !text.ends_with('\n') {
            return Err(BadInput(format!(
                "{}: the last line is torn (the run was stopped); finish it with --resume first",
                f.display()
            ))
            .into());
        }
        let mut lines = text.lines();
        if format == OutFormat::Csv {
            let h = lines.next().unwrap_or_default().to_string();
            match &header {
                None => header = Some((h, f)),
                Some((h0, f0)) if *h0 != h => {
                    return Err(BadInput(format!(
                        "{}: its header differs from that of {}: not the same sweep",
                        f.display(),
                        f0.display()
                    ))
                    .into());
                }
                Some(_) => {}
            }
        }
        for (n, line) in lines.enumerate() {
            let p = point_of(line, format).ok_or_else(|| {
                BadInput(format!(
                    "{}: line {}: no point index",
                    f.display(),
                    n + 1 + usize::from(format == OutFormat::Csv)
                ))
            })?;
            if let Some((_, first)) = rows.get(&p) {
                doubled.push(format!(
                    "point {p} ({} and {})",
                    first.display(),
                    f.display()
                ));
            } else {
                rows.insert(p, (format!("{line}\n"), f));
            }
        }
    }
    if !doubled.is_empty() {
        return Err(BadInput(format!(
            "merge: {} points appear more than once: {}",
            doubled.len(),
            doubled
                .iter()
                .take(10)
                .cloned()
                .collect::<Vec<_>>()
                .join(", ")
        ))
        .into());
    }
    let total = match &expected {
        Some(plan) => plan.points.len(),
        None => rows.keys().next_back().map_or(0, |p| p + 1),
    };
    if let Some(plan) = &expected
        && format == OutFormat::Csv
        && let Some((h, f)) = &header
        && format!("{h}\n") != plan.header(format)
    {
        return Err(BadInput(format!(
            "{}: its header is not that of the sweep {}",
            f.display(),
            plan.sweep_label
        ))
        .into());
    }
    let missing: Vec<usize> = (0..total).filter(|p| !rows.contains_key(p)).collect();
    let beyond: Vec<usize> = rows.keys().copied().filter(|&p| p >= total).collect();
    if !missing.is_empty() || !beyond.is_empty() {
        return Err(BadInput(format!(
            "merge: {} of {total} points missing ({}){}",
            missing.len(),
            ranges(&missing),
            if beyond.is_empty() {
                String::new()
            } else {
                format!("; points beyond the sweep: {}", ranges(&beyond))
            }
        ))
        .into());
    }
    let mut text = String::new();
    if let Some((h, _)) = header {
        text.push_str(&h);
        text.push('\n');
    }
    for (line, _) in rows.values() {
        text.push_str(line);
    }
    crate::output::write_atomic(out, text.as_bytes())?;
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

/// `0-4, 7, 9-12` (the first 20 runs).
fn ranges(v: &[usize]) -> String {
    let mut parts: Vec<String> = Vec::new();
    let mut i = 0;
    while i < v.len() {
        let mut j = i;
        while j + 1 < v.len() && v[j + 1] == v[j] + 1 {
            j += 1;
        }
        parts.push(if i == j {
            v[i].to_string()
        } else {
            format!("{}-{}", v[i], v[j])
        });
        i = j + 1;
    }
    let more = parts.len() > 20;
    parts.truncate(20);
    parts.join(", ") + if more { ", ..." } else { "" }
}
