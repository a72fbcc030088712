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

    /// A circuit quantity is not finite or lies outside its physical range.
    #[error("{quantity} = {value} is not accepted: it must be {requirement}")]
    InvalidCircuitValue {
        /// Which quantity (with its index when it is an entry).
        quantity: String,
        /// The value given.
        value: f64,
        /// What it must be.
        requirement: &'static str,
    },
    /// A vector or matrix of a circuit has the wrong size.
    #[error("{quantity} is {found}, expected {expected}")]
    CircuitSizeMismatch {
        /// Which size (rows of a matrix, length of a list, ...).
        quantity: String,
        /// The size it must have.
        expected: usize,
        /// The size given.
        found: usize,
    },
    /// A matrix that must be symmetric is not (beyond rounding).
    #[error(
        "{quantity} is not symmetric: entries ({row}, {col}) and ({col}, {row}) differ by \
         {relative:e} of its largest entry (accepted: {limit:e}); symmetrise it first"
    )]
    NotSymmetric {
        /// Which matrix.
        quantity: String,
        /// Row of the worst pair.
        row: usize,
        /// Column of the worst pair.
        col: usize,
        /// Their difference relative to the largest entry of the matrix.
        relative: f64,
        /// The accepted relative difference.
        limit: f64,
    },
    /// A matrix that must be positive definite (a capacitance or inductance matrix) is not.
    #[error("{quantity} is not positive definite (its Cholesky factorisation fails)")]
    NotPositiveDefinite {
        /// Which matrix.
        quantity: String,
    },
    /// The finite-element mesh cannot be made as asked (too many elements, a refused vertex,
    /// an outer boundary too small). The reason says what to change.
    #[error("finite-element mesh: {reason}")]
    MeshRefused {
        /// What is wrong and what to change.
        reason: String,
    },
    /// Two parts of a finite-element problem overlap: two conductors touch or overlap (or
    /// one lies inside the other), two dielectric regions overlap, or a part touches or
    /// crosses the outer boundary (the second "part"). Move or resize one of them.
    #[error(
        "finite-element problem: {first} and {second} {how} (near r = {}, z = {})",
        crate::numtext::si(near_rz_m[0], "m", 4),
        crate::numtext::si(near_rz_m[1], "m", 4)
    )]
    PartsOverlap {
        /// The first part ("conductor 'a'", "dielectric region 'b'").
        first: String,
        /// The second part.
        second: String,
        /// How they meet, and the rule.
        how: String,
        /// A point (r, z) (m) of their contact or overlap.
        near_rz_m: [f64; 2],
    },
    /// An index names no loop of the circuit.
    #[error("loop {index} does not exist: the circuit has {loops} loops")]
    NoSuchLoop {
        /// The index given.
        index: usize,
        /// How many loops there are.
        loops: usize,
    },
    /// A figure that needs a loop's capacitor was asked of a loop without one.
    #[error("loop {index} has no capacitor, so it has no {figure}")]
    LoopWithoutCapacitor {
        /// The loop.
        index: usize,
        /// The figure asked for.
        figure: &'static str,
    },
    /// A ladder mode cannot be referred to its top node or to its base.
    #[error("ladder mode {mode} cannot be normalised: {reason}")]
    DegenerateMode {
        /// The mode (1 = lowest frequency).
        mode: usize,
        /// What vanishes.
        reason: &'static str,
    },
    /// No sinusoidal steady state: the loop impedance matrix is singular at that frequency.
    #[error(
        "no steady state at {angular_frequency_rad_s} rad/s: the loop impedance matrix is \
         singular there (a lossless circuit driven at one of its natural frequencies)"
    )]
    SingularCircuit {
        /// The drive's angular frequency (rad/s).
        angular_frequency_rad_s: f64,
    },
    /// A simulation would store more samples than allowed.
    #[error(
        "the simulation would store {values:e} values (samples x 2 x loops), more than the \
         limit of {limit}; shorten the run"
    )]
    TooManySamples {
        /// Values it would store.
        values: f64,
        /// The limit.
        limit: usize,
    },
    /// A time outside the simulated interval.
    #[error("time {time_s} s lies outside the simulated interval [0, {end_s}] s")]
    TimeOutsideRun {
        /// The time asked for (s).
        time_s: f64,
        /// The end of the run (s).
        end_s: f64,
    },
    /// A linear-algebra step of a circuit computation did not converge or gave a non-finite
    /// result.
    #[error("{step} failed: {reason}")]
    CircuitNumerical {
        /// The step.
        step: &'static str,
        /// What went wrong.
        reason: &'static str,
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
    /// A design (the base of a sweep, or the design of a command) that the geometry crate
    /// refuses: its message names the file, the item and the key. (Boxed: a design error is
    /// large, and every result of the solver carries this enum.)
    #[error(transparent)]
    Design(Box<coilfield_geometry::DesignError>),
    /// A clearance search without an axis for its rays: no winding with role = "secondary", or
    /// a polyline one.
    #[error("{source_name}: {reason}")]
    NoClearanceAxis {
        /// Label of the design.
        source_name: String,
        /// What is missing.
        reason: String,
    },
    /// A clearance ray search refused its options (a limit or a distance that is not a finite
    /// positive number).
    #[error("{reason}")]
    RaySearch {
        /// The ray search's message.
        reason: String,
    },
    /// A sweep or seek that cannot run, or a sweep output that cannot be resumed or merged: the
    /// message names the file and the key, axis, metric or line.
    #[error("{message}")]
    BadSweep {
        /// What is wrong, with the file's label first.
        message: String,
    },
    /// The resonance model cannot be built for this design (what is missing or out of range).
    #[error("resonance model: {reason}")]
    Resonance {
        /// What is wrong and how to fix it.
        reason: String,
    },
    /// Clearance ray search: a distance, ratio or tolerance is not a finite positive number in the right order.
    #[error(
        "ray search needs 0 < t_min_m < t_max_m, step_ratio > 1 and tolerance_m > 0 (got t_min_m = {t_min_m}, t_max_m = {t_max_m}, step_ratio = {step_ratio}, tolerance_m = {tolerance_m})"
    )]
    BadRayParams {
        /// First distance (m).
        t_min_m: f64,
        /// Last distance (m).
        t_max_m: f64,
        /// Ladder ratio.
        step_ratio: f64,
        /// Bisection tolerance (m).
        tolerance_m: f64,
    },
    /// A dense linear system whose LU factorisation meets a zero or tiny pivot (relative to the
    /// largest entry of the matrix): the system is singular to working precision, and any
    /// solution of it would be noise.
    #[error(
        "{what}: the matrix is singular to working precision (pivot {index} is {pivot:e}, \
         {relative:e} of the largest entry; accepted: above {limit:e}); the geometry gives \
         the solver no independent equations there"
    )]
    SingularMatrix {
        /// Which system.
        what: &'static str,
        /// The pivot's index (from 0).
        index: usize,
        /// The pivot's value.
        pivot: f64,
        /// The pivot over the largest entry of the matrix.
        relative: f64,
        /// The smallest relative pivot accepted.
        limit: f64,
    },
    /// A result that came out infinite or NaN from inputs in range: refused, never printed as a
    /// number.
    #[error(
        "{what} came out {value}, not a finite number: the inputs lie outside what the model \
         can represent"
    )]
    NotFinite {
        /// Which result, with its names.
        what: String,
        /// The value ("inf", "NaN").
        value: String,
    },
    /// Clearance ray search: the ray direction has zero or non-finite length.
    #[error("ray direction must be a finite non-zero vector")]
    BadRayDirection,
    /// Clearance ray search: the limit is not a finite positive number.
    #[error("limit must be a finite positive number (got {0})")]
    BadRayLimit(f64),
}

impl From<coilfield_geometry::DesignError> for SolverError {
    fn from(e: coilfield_geometry::DesignError) -> SolverError {
        SolverError::Design(Box::new(e))
    }
}
