//! Physical constants (SI), the one definition for the whole workspace.

/// Magnetic constant (H/m), the classical exact value 4 pi 1e-7.
///
/// CODATA 2018 differs by 5.5e-10 relative; every reference table in `validation/` uses this
/// classical value, so results compare exactly.
pub const MU0: f64 = 4.0e-7 * std::f64::consts::PI;

/// mu0 / (4 pi) (H/m), the prefactor of Neumann's integral.
pub const MU0_OVER_4PI: f64 = 1.0e-7;

/// Speed of light in vacuum (m/s), exact (SI definition).
pub const C0: f64 = 299_792_458.0;

/// Electric constant (F/m), 1 / (mu0 c^2) with the classical mu0 of [`MU0`]
/// (8.854187817e-12; CODATA 2018's measured value differs by 5.5e-10 relative).
pub const EPS0: f64 = 1.0 / (MU0 * C0 * C0);
