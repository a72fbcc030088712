//! Errors of the solver: requests it refuses rather than answer badly.

/// A computation the solver will not run.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum SolverError {
    /// A filament-filament sum would take too long: lower `segments_per_turn` or use the ring
    /// model for one of the windings.
    #[error(
        "{pairs} straight-filament pairs exceed the limit of {limit}; lower `segments_per_turn` \
         or use `model = \"ring\"` for one of the windings"
    )]
    TooManyFilamentPairs {
        /// Pairs asked for.
        pairs: u128,
        /// The limit.
        limit: u128,
    },
    /// A potential profile given by node values that cannot be used (too few values, a value
    /// that is not finite, or a zero top value, which cannot be normalised).
    #[error("bad node profile: {reason}")]
    BadProfile {
        /// What is wrong with it.
        reason: String,
    },
    /// The secondary's nodal capacitance matrix is not available from this solution.
    #[error("no nodal capacitance matrix: {reason}")]
    NoNodalCapacitance {
        /// Why (no secondary, sections not asked for or out of range, a node-voltage vector of
        /// the wrong length).
        reason: String,
    },
}
