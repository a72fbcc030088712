//! Evaluating a sweep's points and handing their rows, in point order, to the caller's sink.
//!
//! Points are computed in parallel ([`Par::Rayon`]: one worker per rayon thread, points handed
//! out in order in runs of consecutive points) or one after the other ([`Par::Seq`]); each
//! point is computed sequentially, so every row is the same for any number of threads. Rows
//! that finish before an earlier one wait in memory; rows go to the sink as soon as every
//! earlier row has gone. When to write them to a file and when to sync it is the sink's
//! business.
//!
//! A parallel worker takes a run of consecutive points at a time (a variant of guided
//! self-scheduling, Polychronopoulos and Kuck, IEEE Transactions on Computers, 1987, from
//! memory: a share of what is left, at most [`MAX_RUN`] points, one point when few are left),
//! so a sweep of cheap points (about 10 us each) does not pay the shared counter, the ordering
//! lock and a handover to the sink per point: in interleaved runs of the 10,000-point
//! benchmark sweeps on 2 threads this took 1-6 ms off about 60 ms.

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

/// Most consecutive points a parallel worker takes at a time.
const MAX_RUN: usize = 64;

/// How many points a parallel worker takes when `left` points are not yet handed out and
/// `threads` workers share them: a `1 / (8 threads)` share of what is left, from 1 to
/// [`MAX_RUN`], so the last points go out one at a time and no worker is left with a long run
/// while the others wait.
fn run_length(left: usize, threads: usize) -> usize {
    (left / (8 * threads.max(1))).clamp(1, MAX_RUN)
}

/// The rows finished out of order, and the sink they go to in order.
struct Ordered<'s, S: ?Sized> {
    sink: &'s mut S,
    /// Finished rows that wait for an earlier one: by the position of their first row in the
    /// run, their count and their text.
    pending: BTreeMap<usize, (usize, String)>,
    /// Position of the next row to hand over.
    next: usize,
    /// The sink failed: hand over nothing more.
    failed: bool,
}

impl<S: RowSink + ?Sized> Ordered<'_, S> {
    /// Take `count` consecutive rows `rows` whose first is at position `pos`; hand over every
    /// row now in order.
    fn push(&mut self, pos: usize, count: usize, rows: String) -> io::Result<()> {
        if self.failed || count == 0 {
            return Ok(());
        }
        self.pending.insert(pos, (count, rows));
        let mut ready = String::new();
        while let Some((count, rows)) = self.pending.remove(&self.next) {
            if ready.is_empty() {
                ready = rows;
            } else {
                ready.push_str(&rows);
            }
            self.next += count;
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
        // The rows of the points at positions `start..end`, fewer when a stop comes between
        // two of them (the points done are kept: their rows follow in order).
        let work = |start: usize, end: usize| {
            let mut rows = String::new();
            let mut done = 0;
            for &i in &indices[start..end] {
                if done > 0 && stopped() {
                    break;
                }
                rows.push_str(&self.row(i, &self.evaluate(i), format));
                done += 1;
            }
            let mut o = ordered.lock().unwrap_or_else(|e| e.into_inner());
            if let Err(e) = o.push(start, done, rows) {
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
                    work(pos, pos + 1);
                }
            }
            Par::Rayon => {
                let next = AtomicUsize::new(0);
                let threads = rayon::current_num_threads();
                // Points are handed out in order, so finished rows wait little for earlier
                // ones.
                rayon::scope(|s| {
                    for _ in 0..threads {
                        s.spawn(|_| {
                            loop {
                                if stopped() {
                                    break;
                                }
                                let left = total.saturating_sub(next.load(Ordering::SeqCst));
                                let n = run_length(left, threads);
                                let start = next.fetch_add(n, Ordering::SeqCst);
                                if start >= total {
                                    break;
                                }
                                work(start, (start + n).min(total));
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

#[cfg(test)]
mod tests {
    use super::{MAX_RUN, run_length};

    /// Hand out `total` points to `threads` workers as the parallel run does (each worker reads
    /// what is left, then takes a run), one worker after the other in turn: the runs.
    fn schedule(total: usize, threads: usize) -> Vec<(usize, usize)> {
        let (mut next, mut runs) = (0, Vec::new());
        while next < total {
            let n = run_length(total - next, threads);
            runs.push((next, (next + n).min(total)));
            next += n;
        }
        runs
    }

    #[test]
    fn runs_cover_every_point_once_and_end_one_point_at_a_time() {
        // Against a brute-force count of every point's owners (self-scheduling's two
        // guarantees: every point exactly once, in order; the last points one by one, so no
        // worker holds a long run at the end while another waits).
        for total in [0, 1, 2, 7, 15, 16, 17, 100, 200, 1_000, 10_000, 1_000_003] {
            for threads in [1, 2, 3, 8, 64] {
                let runs = schedule(total, threads);
                let mut owners = vec![0u32; total];
                for &(a, b) in &runs {
                    assert!(a < b && b - a <= MAX_RUN, "{total} {threads}: {a}..{b}");
                    for o in &mut owners[a..b] {
                        *o += 1;
                    }
                }
                assert!(owners.iter().all(|&o| o == 1), "{total} {threads}");
                // The runs taken when fewer than 8 per worker were left are single points.
                for &(a, b) in &runs {
                    if total - a < 8 * threads {
                        assert_eq!(b - a, 1, "{total} {threads}: {a}..{b}");
                    }
                }
            }
        }
        // A 10,000-point sweep on 2 threads is handed over in a few hundred runs, not 10,000.
        assert!(schedule(10_000, 2).len() < 400);
    }
}
