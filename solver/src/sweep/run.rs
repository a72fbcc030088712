//! Evaluating a sweep's points and handing their rows, in point order, to the caller's sink.
//!
//! Points are computed in parallel ([`Par::Rayon`]: one worker per rayon thread, points handed
//! out in order) or one after the other ([`Par::Seq`]); each point is computed sequentially,
//! so every row is the same for any number of threads. A row that finishes before an earlier
//! one waits in memory; rows go to the sink as soon as every earlier row has gone. When to
//! write them to a file and when to sync it is the sink's business.

use crate::Par;
use crate::sweep::plan::SweepPlan;
use crate::sweep::rows::OutFormat;
use std::collections::BTreeMap;
use std::io::{self, Write};
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

/// Where a sweep's rows go: the caller's writer, file, buffer or network.
///
/// Every [`std::io::Write`] is a sink that writes the rows as they come.
pub trait RowSink {
    /// Take `rows`: one or more complete output lines (each with its newline), in point order,
    /// following the rows taken before. An error stops the sweep after the points in progress
    /// and no row is handed over after it.
    fn rows(&mut self, rows: &str) -> io::Result<()>;

    /// `done` rows of this run have been taken (called after [`RowSink::rows`]); nothing by
    /// default. A progress display goes here.
    fn progress(&mut self, _done: usize) {}
}

impl<W: Write> RowSink for W {
    fn rows(&mut self, rows: &str) -> io::Result<()> {
        self.write_all(rows.as_bytes())
    }
}

/// The rows finished out of order, and the sink they go to in order.
struct Ordered<'s, S: ?Sized> {
    sink: &'s mut S,
    /// Finished rows that wait for an earlier one, by position in the run.
    pending: BTreeMap<usize, String>,
    /// Position of the next row to hand over.
    next: usize,
    /// The sink failed: hand over nothing more.
    failed: bool,
}

impl<S: RowSink + ?Sized> Ordered<'_, S> {
    /// Take the row at position `pos`; hand over every row now in order.
    fn push(&mut self, pos: usize, row: String) -> io::Result<()> {
        if self.failed {
            return Ok(());
        }
        self.pending.insert(pos, row);
        let mut ready = String::new();
        while let Some(row) = self.pending.remove(&self.next) {
            ready.push_str(&row);
            self.next += 1;
        }
        if ready.is_empty() {
            return Ok(());
        }
        if let Err(e) = self.sink.rows(&ready) {
            self.failed = true;
            return Err(e);
        }
        self.sink.progress(self.next);
        Ok(())
    }
}

impl SweepPlan {
    /// Evaluate the points `indices` (in this order; e.g. a [`Shard`](crate::sweep::Shard)'s,
    /// less those a resumed output holds) and hand their rows in `format` to `sink`, in that
    /// order.
    ///
    /// `par` says whether points run in parallel; the rows do not depend on it. `stop` is read
    /// before each point: once it is set, the points in progress finish, their rows that follow
    /// the rows handed over go to the sink, and the run returns. Returns how many rows the
    /// sink took (fewer than `indices` after a stop), or the sink's first error; an index
    /// beyond the points is refused (`InvalidInput`) before any work.
    pub fn run<S: RowSink + Send + ?Sized>(
        &self,
        indices: &[usize],
        format: OutFormat,
        par: Par,
        stop: &AtomicBool,
        sink: &mut S,
    ) -> io::Result<usize> {
        if let Some(&i) = indices.iter().find(|&&i| i >= self.points().len()) {
            return Err(io::Error::new(
                io::ErrorKind::InvalidInput,
                format!(
                    "{}: no point {i} (the sweep has {})",
                    self.sweep_label(),
                    self.points().len()
                ),
            ));
        }
        let total = indices.len();
        let ordered = Mutex::new(Ordered {
            sink,
            pending: BTreeMap::new(),
            next: 0,
            failed: false,
        });
        let failure: Mutex<Option<io::Error>> = Mutex::new(None);
        // A failed sink stops the workers without touching the caller's flag.
        let halt = AtomicBool::new(false);
        let stopped = || stop.load(Ordering::SeqCst) || halt.load(Ordering::SeqCst);
        let work = |pos: usize| {
            let i = indices[pos];
            let row = self.row(i, &self.evaluate(i), format);
            let mut o = ordered.lock().unwrap_or_else(|e| e.into_inner());
            if let Err(e) = o.push(pos, row) {
                halt.store(true, Ordering::SeqCst);
                *failure.lock().unwrap_or_else(|e| e.into_inner()) = Some(e);
            }
        };
        match par {
            Par::Seq => {
                for pos in 0..total {
                    if stopped() {
                        break;
                    }
                    work(pos);
                }
            }
            Par::Rayon => {
                let next = AtomicUsize::new(0);
                // Points are handed out in order, so finished rows wait little for earlier
                // ones.
                rayon::scope(|s| {
                    for _ in 0..rayon::current_num_threads() {
                        s.spawn(|_| {
                            loop {
                                if stopped() {
                                    break;
                                }
                                let pos = next.fetch_add(1, Ordering::SeqCst);
                                if pos >= total {
                                    break;
                                }
                                work(pos);
                            }
                        });
                    }
                });
            }
        }
        if let Some(e) = failure.into_inner().unwrap_or_else(|e| e.into_inner()) {
            return Err(e);
        }
        Ok(ordered.into_inner().unwrap_or_else(|e| e.into_inner()).next)
    }
}
