//! Shards of a sweep and the resumption of an interrupted output.
//!
//! An output is append-only: a run that was stopped holds the rows of its first points, in
//! order, perhaps followed by part of a row (a torn last line). Resuming keeps the complete
//! lines, cuts the torn one and computes the rest; the result is the file an uninterrupted run
//! writes.

use crate::error::SolverError;
use crate::sweep::merge::{json_row_problem, params_problem};
use crate::sweep::plan::SweepPlan;
use crate::sweep::rows::{OutFormat, csv_row_problem, point_of};
use std::io::Read;

/// Which share of the points one process runs: those with index % n == k.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    k: usize,
    n: usize,
}

impl Shard {
    /// Every point: shard 0 of 1.
    pub const ALL: Shard = Shard { k: 0, n: 1 };

    /// Shard `k` of `n`, or None unless 0 <= k < n.
    pub fn new(k: usize, n: usize) -> Option<Shard> {
        (k < n).then_some(Shard { k, n })
    }

    /// This shard's number K.
    pub fn k(self) -> usize {
        self.k
    }

    /// The number of shards N.
    pub fn n(self) -> usize {
        self.n
    }

    /// The indices of this shard's points among `n_points`, in order.
    pub fn indices(self, n_points: usize) -> Vec<usize> {
        (self.k..n_points).step_by(self.n).collect()
    }
}

/// What an existing output holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Resumed {
    /// How many of the shard's points (its first, in order) the output holds.
    pub done: usize,
    /// Length (bytes) of the complete lines: a torn last line starts here, and the caller cuts
    /// the output to this length before appending.
    pub complete_bytes: usize,
    /// The output holds no header yet (CSV): the caller writes [`SweepPlan::header`] first.
    pub needs_header: bool,
}

impl SweepPlan {
    /// Read an existing output of this sweep's `shard` from `output` (`label` names it in
    /// messages) and say where to continue: how many points it holds and where a torn last
    /// line starts. The CSV header must be this sweep's and the rows must be the shard's first
    /// points in order; anything else was written by another sweep or shard and is refused.
    pub fn resume<R: Read>(
        &self,
        mut output: R,
        format: OutFormat,
        shard: Shard,
        label: &str,
    ) -> Result<Resumed, SolverError> {
        let mut bytes = Vec::new();
        output
            .read_to_end(&mut bytes)
            .map_err(|e| SolverError::BadSweep {
                message: format!("{label}: cannot read: {e}"),
            })?;
        let complete_bytes = bytes.iter().rposition(|&b| b == b'\n').map_or(0, |p| p + 1);
        let text = String::from_utf8_lossy(&bytes[..complete_bytes]);
        let lines: Vec<&str> = text.lines().collect();
        let mine = shard.indices(self.points().len());
        let header = self.header(format);
        let mut rows = lines.as_slice();
        let mut needs_header = false;
        if format == OutFormat::Csv {
            match rows.first() {
                None => needs_header = true,
                Some(h) if format!("{h}\n") == header => rows = &rows[1..],
                Some(_) => {
                    return Err(SolverError::BadSweep {
                        message: format!(
                            "{label}: its header is not this sweep's ({}); it was written by another sweep",
                            header.trim_end()
                        ),
                    });
                }
            }
        }
        let columns = header.trim_end().split(',').count();
        for (pos, line) in rows.iter().enumerate() {
            if pos >= mine.len() || point_of(line, format) != Some(mine[pos]) {
                return Err(SolverError::BadSweep {
                    message: format!(
                        "{label}: line {} is not point {} of this sweep and shard {}/{}; it was \
                         written by another sweep or shard",
                        pos + 1 + format.header_lines(),
                        mine.get(pos).map_or("-".into(), |p| p.to_string()),
                        shard.k,
                        shard.n
                    ),
                });
            }
            // A kept row must be a whole row of this sweep (field count, status, parameters),
            // not only carry the expected index: it goes into the output unchanged.
            let problem = match format {
                OutFormat::Csv => csv_row_problem(line, columns),
                OutFormat::JsonLines => json_row_problem(line),
            }
            .or_else(|| params_problem(line, format, self, mine[pos]));
            if let Some(why) = problem {
                return Err(SolverError::BadSweep {
                    message: format!(
                        "{label}: line {}: not a row of this sweep: {why}; remove the output to \
                         start again",
                        pos + 1 + format.header_lines(),
                    ),
                });
            }
        }
        Ok(Resumed {
            done: rows.len(),
            complete_bytes,
            needs_header,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shards_split_the_points_by_index_modulo_n() {
        // index % n == k, each point in exactly one shard (a partition of 0..10).
        let mut all: Vec<usize> = (0..3)
            .flat_map(|k| Shard::new(k, 3).unwrap().indices(10))
            .collect();
        assert_eq!(Shard::new(1, 3).unwrap().indices(10), [1, 4, 7]);
        all.sort_unstable();
        assert_eq!(all, (0..10).collect::<Vec<_>>());
        assert_eq!(Shard::ALL.indices(3), [0, 1, 2]);
        // K must be below N, and N at least 1.
        assert!(Shard::new(3, 3).is_none() && Shard::new(0, 0).is_none());
    }
}
