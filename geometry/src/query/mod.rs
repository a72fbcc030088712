//! Geometric queries on the model: distances, wire overlap, electrode contact, the common axis
//! of the electric model, and the checks between the parts of a design built on them.
//!
//! Queries import the model ([`crate::model`]), never the design-file layer ([`crate::file`]).

pub mod axisymmetric;
pub mod checks;
pub mod contact;
pub mod distance;
pub mod media;
pub mod overlap;
