//! Typed, validated design model of coilfield.
//!
//! A design file (TOML) is parsed and checked by [`parse_design`] into a [`Design`]: a list of
//! [`Winding`]s, each with an exact [`Shape`], electrodes, a ground plane, a drive and clearance
//! settings. The [`discretise`] module turns a winding into the values the solver works on:
//! coaxial rings ([`RingModel`]) or chains of straight filaments ([`FilamentModel`]).
//!
//! # Layers
//! Imports run one way, top to bottom (a test checks it):
//! - [`mod@file`]: the design-file layer (TOML text, units, key paths in messages; design, sweep and
//!   seek files);
//! - [`query`]: geometric queries on the model (distances, wire overlap, electrode contact, the
//!   common axis) and the checks between the parts of a design;
//! - [`model`]: the typed model (windings, electrodes, drive, clearance settings) and its
//!   discretisation;
//! - [`error`] and [`constants`], which import nothing of the crate.
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

pub mod constants;
pub mod error;
pub mod file;
pub mod limits;
pub mod model;
pub mod query;

pub use error::DesignError;
pub use file::design::parse_design;
pub use file::electrode::electrode_from_table;
pub use file::winding::winding_from_table;
pub use model::clearance::{
    ClearanceSettings, DefaultSet, FieldQuantity, LimitBasis, ThresholdSpec,
};
pub use model::design::{CURRENT_VERSION, Design};
pub use model::discretise::{self, FilamentModel, Ring, RingModel};
pub use model::drive::{
    Drive, DriveKind, DriveNeeds, Driven, PotentialSpec, PrimaryAmplitude, SecondaryBase, SparkGap,
};
pub use model::electrode::{Axis, Electrode, ElectrodeShape, End, Ground, Terminal};
pub use model::images::{image_ring_model, image_windings};
pub use model::media::{
    Dielectric, DielectricShape, Enclosure, Media, MeshSettings, TENTH_PERCENT_DENSITY,
};
pub use model::winding::{Conductor, Model, Role, Shape, Tap, TapEnd, Winding, local_frame};
pub use query::axisymmetric::check_axisymmetric;
pub use query::checks::{check_design, validate_drive};
pub use query::media::{check_media, dielectric_section_m};
