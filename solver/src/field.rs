//! Quasi-static magnetic flux density B of a design's windings, batch over points.
//!
//! # Public API (final signatures; bodies land in the following commits)
//! ```text
//! pub enum Source { Ring(RingSource), Segment(SegmentSource), Sheet(SheetSource), RingStack(RingStack) }
//! pub fn sources_from_design(design: &Design) -> Result<Vec<Source>, DesignError>
//!     // drive currents from [drive] currents (peak A); image windings added when
//!     // [ground] conducting = true
//! pub fn b_field(sources: &[Source], points_m: &[Point3<f64>], par: Par) -> Vec<Option<Vector3<f64>>>
//!     // T, peak; None = the point lies inside a wire ("no answer")
//! pub fn b_field_point(sources: &[Source], point_m: &Point3<f64>) -> Option<Vector3<f64>>
//! pub fn image_warning(design: &Design) -> Option<String>
//! pub fn inductance_with_images(design: &Design, par: Par) -> Result<Vec<Vec<f64>>, SolverError>
//! ```
//! Image windings themselves: `coilfield_geometry::design::image_windings(&Design) -> Vec<Winding>`.
