//! The design-file layer: TOML text to the typed model, with units, key paths and positions in
//! every message. Design files (`[[winding]]`, `[[electrode]]`, `[ground]`, `[drive]`,
//! `[clearance]`) and sweep and seek files.
//!
//! This is the top layer of the crate: it builds the model ([`crate::model`]) and runs the
//! checks of [`crate::query`] on it; nothing beneath imports it.

pub mod clearance;
pub mod design;
pub mod dielectric;
pub mod drive;
pub mod electrode;
pub mod raw;
pub mod sweep;
pub mod units;
pub mod winding;
