//! How a hot entry point may use threads.

use rayon::prelude::*;

/// Parallelism of a computation: decided once by the caller, passed down explicitly.
///
/// Results do not depend on the choice: work is cut into fixed chunks whose partial sums are
/// added in index order, so sequential and parallel runs agree to the last bit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Par {
    /// One thread.
    Seq,
    /// rayon's current thread pool (the caller sizes it).
    #[default]
    Rayon,
}

/// Fixed chunk length of [`sum_indexed`]: independent of the thread count, so sums are
/// reproducible bit for bit.
const CHUNK: usize = 64;

/// Sum `f(i)` for `i` in `0..n` in a fixed order (chunks of `CHUNK`, chunk sums added in
/// index order), sequentially or with rayon.
pub fn sum_indexed<F>(n: usize, par: Par, f: F) -> f64
where
    F: Fn(usize) -> f64 + Sync,
{
    let n_chunks = n.div_ceil(CHUNK);
    let chunk_sum = |c: usize| -> f64 {
        let lo = c * CHUNK;
        let hi = (lo + CHUNK).min(n);
        (lo..hi).map(&f).sum()
    };
    match par {
        Par::Seq => (0..n_chunks).map(chunk_sum).sum(),
        Par::Rayon => {
            let partial: Vec<f64> = (0..n_chunks).into_par_iter().map(chunk_sum).collect();
            partial.iter().sum()
        }
    }
}

/// Map `f` over `0..n` into a vector, sequentially or with rayon; order is preserved.
pub fn map_indexed<T, F>(n: usize, par: Par, f: F) -> Vec<T>
where
    T: Send,
    F: Fn(usize) -> T + Sync,
{
    match par {
        Par::Seq => (0..n).map(f).collect(),
        Par::Rayon => (0..n).into_par_iter().map(&f).collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sequential_and_parallel_sums_agree_bitwise() {
        let f = |i: usize| 1.0 / (1.0 + i as f64).powf(1.3);
        let seq = sum_indexed(100_003, Par::Seq, f);
        let par = sum_indexed(100_003, Par::Rayon, f);
        assert_eq!(seq.to_bits(), par.to_bits());
    }
}
