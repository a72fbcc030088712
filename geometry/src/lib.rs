//! Typed, validated design model of coilfield.
//!
//! A design file (TOML) is parsed and checked by [`parse_design`] into a [`Design`]: a list of
//! [`Winding`]s, each with an exact [`Shape`]. The [`discretise`] module turns a winding into the
//! values the solver works on: coaxial rings ([`RingModel`]) or chains of straight filaments
//! ([`FilamentModel`]).
//!
//! This crate knows nothing of the solver, reads no files and prints nothing: the caller hands it
//! the text of a design file and a label for messages.
//!
//! # Example
//! ```
//! let text = r#"
//! [[winding]]
//! name = "loop"
//! shape = "ring"
//! origin = [0.0, 0.0, 0.0]
//! axis = [0.0, 0.0, 1.0]
//! radius = "10 cm"
//! wire_diameter = "AWG 22"
//! "#;
//! let design = coilfield_geometry::parse_design(text, "example.toml").unwrap();
//! assert_eq!(design.windings[0].name, "loop");
//! let rings = coilfield_geometry::discretise::ring_model(&design.windings[0]).unwrap();
//! assert_eq!(rings.rings.len(), 1);
//! ```
//!
//! # Conventions
//! - SI units: every length is in metres, whatever unit the file used.
//! - A winding's local frame is `x_hat = normalise(z_hat x axis)` (or `(1, 0, 0)` when the axis is
//!   parallel to z) and `y_hat = axis x x_hat`. A winding starts at `origin + r x_hat` and its angle
//!   grows right-handed about the axis; that is the direction of positive current.
//!
//! # Limitations
//! - Windings are filaments of round wire; no litz, no strip conductors.
//! - Multi-layer windings must be described as several single-layer windings.
#![deny(missing_docs)]

pub mod clearance;
pub mod contact;
pub mod design;
pub mod discretise;
pub mod drive;
pub mod electrode;
pub mod error;
pub mod overlap;
pub mod sweep;
pub mod units;
pub mod winding;

pub use clearance::{ClearanceSettings, DefaultSet, FieldQuantity, LimitBasis, ThresholdSpec};
pub use design::{CURRENT_VERSION, Design, check_design, parse_design, winding_from_table};
pub use discretise::{FilamentModel, Ring, RingModel};
pub use drive::{Drive, DriveNeeds, PotentialSpec, image_windings, validate_drive};
pub use electrode::{
    Axis, Electrode, ElectrodeShape, End, Ground, Terminal, check_axisymmetric,
    electrode_from_table,
};
pub use error::DesignError;
pub use winding::{Model, Role, Shape, Winding, local_frame};
