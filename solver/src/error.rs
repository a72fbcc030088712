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
}
