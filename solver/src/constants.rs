//! Physical constants (SI).

/// Magnetic constant (H/m), the classical exact value 4 pi 1e-7.
///
/// CODATA 2018 differs by 5.5e-10 relative; every reference table in `validation/` uses this
/// classical value, so results compare exactly.
pub const MU0: f64 = 4.0e-7 * std::f64::consts::PI;

/// mu0 / (4 pi) (H/m), the prefactor of Neumann's integral.
pub const MU0_OVER_4PI: f64 = 1.0e-7;
