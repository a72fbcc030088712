//! Physical constants (SI): the workspace's one definition lives in
//! `coilfield_geometry::constants`; re-exported here so that kernels name them locally.

pub use coilfield_geometry::constants::{C0, EPS0, MU0, MU0_OVER_4PI};
