//! Axisymmetric electrostatics: boundary elements with ring charges.
//!
//! # Public API (final signatures; bodies land in the following commits)
//! ```text
//! pub struct Params { pub panels: usize, pub profile: Profile }   // Default: 1000 panels, linear
//! pub enum Profile { Linear, Custom(fn(f64) -> f64) }  // V(z)/V_top as a function of z/L
//! impl Problem {
//!     pub fn from_design(design: &Design, params: &Params) -> Result<Problem, DesignError>;
//!     pub fn solve(&self, par: Par) -> Solution;
//! }
//! impl Solution {
//!     pub fn conductor_names(&self) -> &[String];            // electrodes, file order
//!     pub fn capacitance_matrix_f(&self) -> &[Vec<f64>];     // Maxwell matrix (F)
//!     pub fn capacitances_f(&self) -> Vec<f64>;              // diagonal (F)
//!     pub fn self_capacitance_f(&self) -> Option<SelfCapacitance>; // secondary: bare and with electrode
//!     pub fn error_estimate(&self) -> &ErrorEstimate;        // |C(n) - C(n/2)| per entry (F)
//!     pub fn e_field(&self, points_m: &[Point3<f64>], par: Par) -> Vec<FieldSample>; // drive potentials
//!     pub fn panels(&self) -> &[PanelResult];   // generatrix ends (m, 3-D meridian), sigma (C/m^2), E_s (V/m)
//!     pub fn peak_surface_fields(&self) -> Vec<PeakField>;   // per electrode: V/m and where
//! }
//! pub enum FieldSample { Field(Vector3<f64>), InsideConductor(String), OnSurface(String) }
//! pub fn validity_warnings(design: &Design, distances_m: &[f64]) -> Vec<String>;
//! ```
