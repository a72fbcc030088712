//! The geometric model: windings and their exact curves, electrodes, the ground plane, the
//! drive, clearance settings, and the discretisation the solver works on.
//!
//! Plain validated values; this layer reads no files and knows nothing of the design-file
//! format ([`crate::file`]) or of the geometric queries ([`crate::query`]).

pub mod clearance;
pub mod design;
pub mod discretise;
pub mod drive;
pub mod electrode;
pub mod images;
pub mod media;
pub mod winding;
