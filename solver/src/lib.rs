//! Numerical kernels of coilfield: elliptic integrals, mutual and self inductance of rings and
//! straight filaments, and the assembly of a design's inductance matrix.
//!
//! The crate is pure: no I/O, no printing, no clock. Hot entry points take a [`Par`] saying
//! whether they may use rayon; results are identical either way.
//!
//! Principal entry points:
//! - [`mutual::mutual_ring_ring_coaxial`] (Maxwell's formula) and [`mutual::mutual_ring_ring`]
//!   (rings in any position);
//! - [`segment::mutual_segment_segment`] (Neumann's integral for straight filaments);
//! - [`self_inductance`]: rings of round wire, ring sums, filament chains, Lorenz/Nagaoka and
//!   Rosa's corrections;
//! - [`assembly::inductance_report`]: the whole inductance and coupling matrix of a design;
//! - [`circuit`]: lumped circuits of the resonance model: a winding's ladder modes, coupled
//!   resonant loops in time (exact propagation, spark-gap quench), phasors and normal modes;
//! - [`sweep`]: parameter sweeps planned once, their rows streamed in point order to any
//!   writer, resumed, sharded and merged; [`clearance::search`] and [`thresholds`]: clearance
//!   distances of a design;
//! - [`losses`]: skin effect in round wire and tubing, proximity in single-layer coils, radiation
//!   resistance of short radiators, and the Q of a resonator.
//!
//! # Example
//! ```
//! use coilfield_solver::mutual::mutual_ring_ring_coaxial;
//! // Two rings of 1 m radius, 1 m apart on a common axis.
//! let m = mutual_ring_ring_coaxial(1.0, 1.0, 1.0);
//! assert!((m - 4.940_784_630_8e-7).abs() < 1e-16);
//!
//! let design = coilfield_geometry::parse_design(r#"
//! [[winding]]
//! name = "secondary"
//! shape = "helix"
//! origin = [0.0, 0.0, 0.0]
//! axis = [0.0, 0.0, 1.0]
//! radius = 0.05
//! length = 0.02
//! turns = 10
//! wire_diameter = 0.001
//! "#, "example").unwrap();
//! let report = coilfield_solver::assembly::inductance_report(&design, coilfield_solver::Par::Seq).unwrap();
//! let l = report.windings[0].self_inductance_h;
//! assert!((l - 15.700_160e-6).abs() < 1e-11);
//! ```
//!
//! # Conventions
//! - SI units: metres, henries, amperes. mu0 = 4 pi 1e-7 H/m (classical; see [`constants`]).
//! - Elliptic integrals take the parameter m = k^2; Bulirsch's cel takes kc (see [`elliptic`]).
//! - A ring's current circulates right-handed about its axis; a filament's current runs from
//!   its start to its end. The sign of a mutual inductance follows these directions.
//! - Low-frequency (uniform current) self terms of round wire.
//!
//! # Limitations
//! - Quasi-static: the current is the same all along a winding.
//! - The ring model of a helix neglects its pitch (error O((pitch / circumference)^2)); use the
//!   filament model to include it.
//! - A polygon of n straight pieces approaches its circle with an error O(1/n^2) (below 1e-3 at
//!   128 pieces per turn).
#![deny(missing_docs)]

pub mod assembly;
pub mod circuit;
pub mod clearance;
pub mod constants;
pub mod coupling;
pub mod electrostatic;
pub mod elliptic;
pub mod error;
pub mod euler_maclaurin;
pub mod fem;
pub mod field;
pub mod field_model;
pub mod image_pair_far;
pub mod losses;
pub mod metrics;
pub mod mutual;
pub mod numtext;
pub mod optimise;
pub mod par;
pub mod quadrature;
pub mod resonance;
pub mod segment;
pub mod self_inductance;
pub mod sweep;
pub mod thresholds;

pub use error::SolverError;
pub use par::Par;
