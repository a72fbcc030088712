//! The ranges an input value must lie in, beneath every layer: each bounds what a design, sweep
//! or seek file may ask for, so that every number the program computes from valid input is a
//! finite f64 and no typing slip can start unbounded work. The README lists them with their
//! reasons.

/// Smallest size accepted (m): radii, lengths, heights, wire diameters, tube walls, electrode
/// sizes. A nanometre is far below any wire; below it logarithms of size ratios and squared
/// sizes lose their meaning in f64 arithmetic (a wire of 1e-308 m gives an infinite
/// inductance).
pub const MIN_SIZE_M: f64 = 1e-9;

/// Largest size accepted (m): 100 km. Beyond it no coil is meant; squares and products of sizes
/// stay far from overflow (a radius of 1e308 m gives an infinite inductance).
pub const MAX_SIZE_M: f64 = 1e5;

/// Largest magnitude of a coordinate (m): 100 km from the origin, so that differences and
/// squared distances of any two points of a design stay finite (coordinates of 1e200 m give
/// NaN couplings).
pub const MAX_COORDINATE_M: f64 = 1e5;

/// Fewest turns of a helix, spiral or cone: a hundredth of a turn, so that the ring model has at
/// least one ring (a winding of 1e-10 turns has none).
pub const MIN_TURNS: f64 = 0.01;

/// Longest name of a winding, electrode or threshold (characters): names head table columns,
/// CSV headers and file names.
pub const MAX_NAME_CHARS: usize = 64;

/// Most points of a polyline. The self-inductance of a chain of n straight pieces sums n^2 / 2
/// Neumann integrals: 10,000 points are about 5e7 pairs, seconds of work; more is refused
/// before any work rather than left to run for minutes.
pub const MAX_POLYLINE_POINTS: usize = 10_000;

/// `range` as a message reads it: "from 1e-9 m to 100000 m".
pub fn range_phrase(min: f64, max: f64, unit: &str) -> String {
    format!("from {min:e} {unit} to {max:e} {unit}")
}
