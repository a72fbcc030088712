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
    /// A loss model (`losses`) was given an input outside its domain: not finite, not positive,
    /// or inconsistent with another input (a wall thicker than the tube's radius, a pitch below
    /// the wire diameter).
    #[error("invalid `{name}` = {value}: {requirement}")]
    InvalidLossInput {
        /// The input's name.
        name: &'static str,
        /// The value given.
        value: f64,
        /// What the input must satisfy.
        requirement: &'static str,
    },
    /// A conductor material that is not in `losses::CONDUCTORS`.
    #[error("unknown conductor material `{name}`; known: {known}")]
    UnknownConductor {
        /// The name asked for.
        name: String,
        /// The names in the table.
        known: String,
    },
    /// A loss model asked for outside the range where it holds (a radiator not short against
    /// the wavelength, a winding too widely spaced for Dowell's formula).
    #[error("{model} does not hold here: {detail}")]
    LossModelOutOfRange {
        /// The model.
        model: &'static str,
        /// Why it does not hold.
        detail: String,
    },
    /// A series or continued fraction of a special function did not converge (not expected for
    /// any finite input; reported rather than returning an unconverged value).
    #[error("{what} did not converge")]
    NoConvergence {
        /// The evaluation that failed.
        what: &'static str,
    },
}
