//! Loss models of a resonator: resistivity of conductors, skin effect in round wire and tubing
//! (exact Bessel-function solutions), proximity effect in single-layer coils, radiation
//! resistance of short radiators, and the Q that follows from them.
//!
//! Every function is pure and takes SI values; invalid input is a [`SolverError`], never a
//! panic, an infinity or a NaN.
//!
//! # Conventions
//! - Time dependence e^{j omega t}; an internal impedance is R + j omega L_int per unit length.
//! - Skin depth delta = sqrt(rho / (pi f mu0 mu_r)), with the classical mu0 of
//!   [`crate::constants::MU0`].
//! - The Kelvin argument of a round wire of radius a is x = sqrt(2) a / delta (the argument of
//!   ber and bei); F. E. Terman's tables use the same x.
//!
//! # What is modelled
//! - [`internal_impedance_round_wire`]: the exact skin effect of an isolated straight round
//!   wire with the return current far away.
//! - [`internal_impedance_tube`]: the same for a tube (return current far outside).
//! - [`proximity_factor`]: the extra loss of a close-wound single-layer coil, by Dowell's
//!   one-layer formula or Butterworth's uniform-field formula, each tested against its closed form;
//!   neither is checked here against measured coil resistances, so their docs state the range
//!   each one's assumptions cover.
//! - [`radiation_resistance_monopole_ohm`], [`radiation_resistance_dipole_ohm`] with the
//!   effective height from charges or a current profile.
//! - [`winding_losses`] and [`q_factor`]: the parts of a winding's resistance and its Q.

use std::f64::consts::{FRAC_PI_4, PI, SQRT_2};

use nalgebra::Complex;

use crate::SolverError;
use crate::constants::{C0, MU0};

type C64 = Complex<f64>;

/// A conductor material: its resistivity at 20 C and where the value comes from.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Conductor {
    /// Lowercase name used by [`conductor`].
    pub name: &'static str,
    /// Resistivity at 20 C (ohm m).
    pub resistivity_ohm_m: f64,
    /// Relative permeability (1 for the non-magnetic metals listed).
    pub relative_permeability: f64,
    /// Published source of the resistivity.
    pub source: &'static str,
}

const CRC: &str = "CRC Handbook of Chemistry and Physics, table 'Electrical resistivity of pure \
                   metals', value at 293 K (after R. A. Matula, J. Phys. Chem. Ref. Data 8, 1979, \
                   for Cu, Ag, Au); edition from memory";

/// The conductor table (resistivity at 20 C, all non-magnetic).
pub const CONDUCTORS: &[Conductor] = &[
    Conductor {
        name: "copper",
        resistivity_ohm_m: 1.678e-8,
        relative_permeability: 1.0,
        source: CRC,
    },
    Conductor {
        name: "annealed copper",
        resistivity_ohm_m: 1.7241e-8,
        relative_permeability: 1.0,
        source: "International Annealed Copper Standard (100 % IACS = 1/58 ohm mm^2/m at 20 C), \
                 IEC 1913 (IEC 60028) and NBS Circular 31 'Copper wire tables' (1914)",
    },
    Conductor {
        name: "silver",
        resistivity_ohm_m: 1.587e-8,
        relative_permeability: 1.0,
        source: CRC,
    },
    Conductor {
        name: "gold",
        resistivity_ohm_m: 2.214e-8,
        relative_permeability: 1.0,
        source: CRC,
    },
    Conductor {
        name: "aluminium",
        resistivity_ohm_m: 2.65e-8,
        relative_permeability: 1.0,
        source: CRC,
    },
    Conductor {
        name: "brass",
        resistivity_ohm_m: 6.2e-8,
        relative_permeability: 1.0,
        source: "cartridge brass (70 Cu / 30 Zn), about 28 % IACS: from memory (alloy \
                 resistivities vary by several per cent with composition and temper)",
    },
];

/// The conductor of a lowercase name ("aluminum" is accepted for "aluminium", "iacs" for
/// "annealed copper").
pub fn conductor(name: &str) -> Result<&'static Conductor, SolverError> {
    let key = match name {
        "aluminum" => "aluminium",
        "iacs" => "annealed copper",
        other => other,
    };
    CONDUCTORS
        .iter()
        .find(|c| c.name == key)
        .ok_or_else(|| SolverError::UnknownConductor {
            name: name.to_string(),
            known: CONDUCTORS
                .iter()
                .map(|c| c.name)
                .collect::<Vec<_>>()
                .join(", "),
        })
}

fn positive(name: &'static str, value: f64) -> Result<f64, SolverError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(SolverError::InvalidLossInput {
            name,
            value,
            requirement: "must be finite and positive",
        })
    }
}

fn finite_non_negative(name: &'static str, value: f64) -> Result<f64, SolverError> {
    if value.is_finite() && value >= 0.0 {
        Ok(value)
    } else {
        Err(SolverError::InvalidLossInput {
            name,
            value,
            requirement: "must be finite and not negative",
        })
    }
}

/// Skin depth delta = sqrt(rho / (pi f mu0 mu_r)) (m) of a conductor of resistivity
/// `resistivity_ohm_m` and relative permeability `relative_permeability` at `frequency_hz`.
///
/// Source: the depth at which a plane wave in a good conductor falls by 1/e (e.g. S. Ramo,
/// J. R. Whinnery, T. Van Duzer, *Fields and Waves in Communication Electronics*, Wiley 1965,
/// section on the skin effect; section from memory). Copper (1.678e-8 ohm m): 206 um at
/// 100 kHz, 65.2 um at 1 MHz.
pub fn skin_depth_m(
    resistivity_ohm_m: f64,
    frequency_hz: f64,
    relative_permeability: f64,
) -> Result<f64, SolverError> {
    let rho = positive("resistivity_ohm_m", resistivity_ohm_m)?;
    let f = positive("frequency_hz", frequency_hz)?;
    let mu_r = positive("relative_permeability", relative_permeability)?;
    positive("skin depth (m)", (rho / (PI * f * MU0 * mu_r)).sqrt())
}

/// DC resistance per unit length rho / (pi a^2) (ohm/m) of a round wire of radius `radius_m`.
pub fn dc_resistance_round_wire_ohm_per_m(
    radius_m: f64,
    resistivity_ohm_m: f64,
) -> Result<f64, SolverError> {
    let a = positive("radius_m", radius_m)?;
    let rho = positive("resistivity_ohm_m", resistivity_ohm_m)?;
    positive("DC resistance (ohm/m)", rho / (PI * a * a))
}

/// An internal impedance per unit length, R + j omega L_int.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct InternalImpedance {
    /// Resistance per unit length (ohm/m).
    pub resistance_ohm_per_m: f64,
    /// Internal inductance per unit length (H/m): the flux inside the conductor only.
    pub inductance_h_per_m: f64,
}

// ---------------------------------------------------------------------------------------------
// Bessel functions of complex argument, for arguments with a positive real part (all the
// arguments here lie on the ray arg z = pi/4, where I and K are the Kelvin functions:
// I0(x e^{i pi/4}) = ber x + i bei x, K0(x e^{i pi/4}) = ker x + i kei x).
// ---------------------------------------------------------------------------------------------

/// Below this |z| the modified Bessel functions come from their power series (cancellation at
/// |z| = 2 costs at most a few ulps, and the series of K0 needs no more than 20 terms).
const BESSEL_SERIES_MAX_ABS: f64 = 2.0;
/// From this |z| on, I0 and I1 come from Hankel's asymptotic series; for arg z = pi/4 the
/// neglected exponentially small part is e^{-sqrt(2) |z|} = 4e-19 relative at |z| = 30, and the
/// smallest term of the series is far below 1e-17.
const ASYMPTOTIC_MIN_ABS: f64 = 30.0;
/// Below this Kelvin argument the wire's impedance ratio comes from the quotient of power
/// series (rounding error below 3e-16 relative up to x = 10; it grows like e^{0.29 x}).
const WIRE_SERIES_MAX_X: f64 = 10.0;
const MAX_ITERATIONS: usize = 100_000;

fn c(re: f64, im: f64) -> C64 {
    Complex::new(re, im)
}

/// Power series of I0(z), I1(z).
fn i01_series(z: C64) -> Result<(C64, C64), SolverError> {
    let w = z * z / 4.0;
    let (mut t0, mut t1) = (c(1.0, 0.0), c(1.0, 0.0));
    let (mut s0, mut s1) = (t0, t1);
    for k in 1..500 {
        let kf = k as f64;
        t0 = t0 * w / (kf * kf);
        t1 = t1 * w / (kf * (kf + 1.0));
        s0 += t0;
        s1 += t1;
        if t0.norm() <= 1e-17 * s0.norm() && t1.norm() <= 1e-17 * s1.norm() {
            return Ok((s0, z / 2.0 * s1));
        }
    }
    Err(SolverError::NoConvergence {
        what: "power series of I0, I1",
    })
}

/// K0(z) = -(ln(z/2) + gamma) I0(z) + sum_k (z^2/4)^k / (k!)^2 H_k (Abramowitz and Stegun
/// 9.6.13), for small |z|.
fn k0_series(z: C64, i0: C64) -> Result<C64, SolverError> {
    const EULER_GAMMA: f64 = 0.577_215_664_901_532_9;
    let w = z * z / 4.0;
    let mut t = c(1.0, 0.0);
    let mut harmonic = 0.0;
    let mut s = c(0.0, 0.0);
    for k in 1..500 {
        let kf = k as f64;
        t = t * w / (kf * kf);
        harmonic += 1.0 / kf;
        let term = t * harmonic;
        s += term;
        if term.norm() <= 1e-17 * s.norm() {
            return Ok(-((z / 2.0).ln() + EULER_GAMMA) * i0 + s);
        }
    }
    Err(SolverError::NoConvergence {
        what: "power series of K0",
    })
}

/// I1(z)/I0(z) by Gauss's continued fraction I1/I0 = 1/(2/z + 1/(4/z + 1/(6/z + ...))),
/// evaluated with the modified Lentz algorithm (W. H. Press et al., *Numerical Recipes*, 3rd
/// ed. 2007, section 5.2 and 6.6, CF1). Every partial denominator has a positive real part for
/// Re z > 0, which keeps the recurrence stable; about |z|^(1/2) * 7 steps are needed.
fn i1_over_i0_cf(z: C64) -> Result<C64, SolverError> {
    const TINY: f64 = 1e-300;
    let mut f = 2.0 / z;
    let mut cc = f;
    let mut d = c(0.0, 0.0);
    for k in 1..MAX_ITERATIONS {
        let b = 2.0 * (k as f64 + 1.0) / z;
        d = b + d;
        if d.norm() < TINY {
            d = c(TINY, 0.0);
        }
        d = d.inv();
        cc = b + cc.inv();
        if cc.norm() < TINY {
            cc = c(TINY, 0.0);
        }
        let delta = cc * d;
        f *= delta;
        if (delta - 1.0).norm() < 1e-16 {
            return Ok(f.inv());
        }
    }
    Err(SolverError::NoConvergence {
        what: "continued fraction of I1/I0",
    })
}

/// e^z K0(z) and e^z K1(z) by Steed's continued fraction CF2 (I. J. Thompson and A. R.
/// Barnett, "Modified Bessel functions I_nu(z) and K_nu(z) of real order and complex argument,
/// to selected accuracy", Comput. Phys. Commun. 47, 1987; the real-argument form in Numerical
/// Recipes, 3rd ed., section 6.6), for |z| > 2 and Re z > 0.
fn k01_scaled_cf2(z: C64) -> Result<(C64, C64), SolverError> {
    let mut b = 2.0 * (z + 1.0);
    let mut d = b.inv();
    let mut h = d;
    let mut delh = d;
    let (mut q1, mut q2) = (c(0.0, 0.0), c(1.0, 0.0));
    let a1 = 0.25;
    let mut q = c(a1, 0.0);
    let mut cc = c(a1, 0.0);
    let mut a = -a1;
    let mut s = 1.0 + q * delh;
    for i in 2..MAX_ITERATIONS {
        let fi = i as f64;
        a -= 2.0 * (fi - 1.0);
        cc = -a * cc / fi;
        let qnew = (q1 - b * q2) / a;
        q1 = q2;
        q2 = qnew;
        q += cc * qnew;
        b += 2.0;
        d = (b + a * d).inv();
        delh = (b * d - 1.0) * delh;
        h += delh;
        let dels = q * delh;
        s += dels;
        if dels.norm() < 1e-17 * s.norm() {
            let k0 = (PI / (2.0 * z)).sqrt() / s;
            let k1 = k0 * (z + 0.5 - a1 * h) / z;
            return Ok((k0, k1));
        }
    }
    Err(SolverError::NoConvergence {
        what: "continued fraction of K0, K1",
    })
}

/// Hankel's asymptotic sum sum_k (-1)^k a_k(nu) / z^k with a_k(nu) = prod_{j<=k} (4 nu^2 -
/// (2j - 1)^2) / (k! 8^k) (DLMF 10.40.1), stopped at the first term below 1e-17 of the sum or
/// before the terms start to grow.
fn hankel_sum_i(nu: f64, z: C64) -> C64 {
    let mu = 4.0 * nu * nu;
    let mut term = c(1.0, 0.0);
    let mut sum = term;
    for k in 1..200 {
        let kf = k as f64;
        let next = -term * (mu - (2.0 * kf - 1.0).powi(2)) / (kf * 8.0 * z);
        if next.norm() > term.norm() {
            break;
        }
        term = next;
        sum += term;
        if term.norm() < 1e-17 * sum.norm() {
            break;
        }
    }
    sum
}

/// e^{-z} I0(z), e^{-z} I1(z), e^{z} K0(z), e^{z} K1(z) for Re z > 0.
///
/// |z| <= 2: power series (K1 from the Wronskian I0 K1 + I1 K0 = 1/z); 2 < |z| < 30: K0, K1 by
/// Steed's CF2, I1/I0 by the Gauss continued fraction and I0 from the Wronskian; |z| >= 30:
/// I0, I1 by Hankel's series, K0, K1 by CF2. Accuracy against mpmath on arg z = pi/4, |z| from
/// 1e-6 to 1e4: 3e-15 relative.
fn bessel_ik01_scaled(z: C64) -> Result<[C64; 4], SolverError> {
    if z.norm() <= BESSEL_SERIES_MAX_ABS {
        let (i0, i1) = i01_series(z)?;
        let k0 = k0_series(z, i0)?;
        let k1 = (z.inv() - i1 * k0) / i0;
        let e = (-z).exp();
        return Ok([i0 * e, i1 * e, k0 / e, k1 / e]);
    }
    let (k0, k1) = k01_scaled_cf2(z)?;
    if z.norm() >= ASYMPTOTIC_MIN_ABS {
        let pre = (2.0 * PI * z).sqrt().inv();
        return Ok([
            pre * hankel_sum_i(0.0, z),
            pre * hankel_sum_i(1.0, z),
            k0,
            k1,
        ]);
    }
    let f = i1_over_i0_cf(z)?;
    let i0 = (z * (k1 + f * k0)).inv();
    Ok([i0, f * i0, k0, k1])
}

/// The impedance ratio of a round wire, (u/2) I0(u)/I1(u) with u = x e^{i pi/4}: Z_int / R_dc.
fn wire_ratio(x: f64) -> Result<C64, SolverError> {
    if x < WIRE_SERIES_MAX_X {
        // (u/2) I0/I1 = S0(w)/S1(w), S0 = sum w^k/(k!)^2, S1 = sum w^k/(k!(k+1)!), w = i x^2/4:
        // the quotient of the ber/bei power series, with the factor u/2 cancelled exactly.
        let w = c(0.0, x * x / 4.0);
        let (mut t0, mut t1) = (c(1.0, 0.0), c(1.0, 0.0));
        let (mut s0, mut s1) = (t0, t1);
        for k in 1..500 {
            let kf = k as f64;
            t0 = t0 * w / (kf * kf);
            t1 = t1 * w / (kf * (kf + 1.0));
            s0 += t0;
            s1 += t1;
            if t0.norm() <= 1e-17 * s0.norm() && t1.norm() <= 1e-17 * s1.norm() {
                return Ok(s0 / s1);
            }
        }
        return Err(SolverError::NoConvergence {
            what: "power series of the wire impedance",
        });
    }
    let u = Complex::from_polar(x, FRAC_PI_4);
    if x < ASYMPTOTIC_MIN_ABS {
        return Ok(u / 2.0 / i1_over_i0_cf(u)?);
    }
    Ok(u / 2.0 * hankel_sum_i(0.0, u) / hankel_sum_i(1.0, u))
}

/// The internal impedance of an isolated round wire relative to its DC resistance, as
/// (R_ac / R_dc, omega L_int / R_dc), at Kelvin argument `x` = sqrt(2) a / delta.
///
/// Formula (exact skin effect of a straight round wire, return current far away):
/// Z_int = (k rho / (2 pi a)) J0(k a) / J1(k a), k = (1 - j)/delta, i.e.
/// Z_int / R_dc = (u/2) I0(u) / I1(u), u = x e^{j pi/4}, whose real part is
/// R_ac/R_dc = (x/2) (ber x bei' x - bei x ber' x) / (ber'(x)^2 + bei'(x)^2).
/// Source: S. Ramo, J. R. Whinnery, T. Van Duzer, *Fields and Waves in Communication
/// Electronics*, Wiley 1965, section on the internal impedance of a round wire (section from
/// memory); F. E. Terman, *Radio Engineers' Handbook*, McGraw-Hill 1943, whose table of H = R_ac
/// / R_dc against x it reproduces to the printed 4 digits.
///
/// Limits: 1 + x^4/192 (+ O(x^8)) at low frequency, x/(2 sqrt 2) + 1/4 = a/(2 delta) + 1/4
/// (+ O(1/x)) at high frequency; the reactance ratio tends to x^2/8 (L_int = mu/(8 pi)) and to
/// a/(2 delta).
///
/// Method: the quotient of the power series for x < 10, Gauss's continued fraction for I1/I0
/// for 10 <= x < 30, Hankel's asymptotic series for x >= 30. No exponential is formed, so
/// nothing overflows at any x. Accuracy against mpmath (`validation/losses.csv`, x from 1e-6 to
/// 1e5): within 2e-15 relative for both parts.
pub fn round_wire_impedance_ratio(x: f64) -> Result<(f64, f64), SolverError> {
    let x = positive("kelvin argument x", x)?;
    let z = wire_ratio(x)?;
    Ok((z.re, z.im))
}

/// R_ac / R_dc of an isolated round wire at Kelvin argument `x` = sqrt(2) a / delta: the real
/// part of [`round_wire_impedance_ratio`] (formula, source and accuracy there).
pub fn ac_resistance_ratio_round_wire(x: f64) -> Result<f64, SolverError> {
    Ok(round_wire_impedance_ratio(x)?.0)
}

/// Butterworth's proximity function G(x) of a round wire at Kelvin argument `x`: the loss per
/// unit length of the wire in a uniform transverse alternating field of amplitude H0 is
/// P = 8 pi^2 a^2 R_dc H0^2 G(x) (time average, R_dc per unit length).
///
/// Derivation (the two-dimensional eddy-current problem of a cylinder in a uniform field;
/// S. Butterworth, "Effective resistance of inductance coils at radio frequency", Experimental
/// Wireless 3, 1926, gives G in ber/bei form: pages from memory): inside, A_z = C I1(q r)
/// sin(phi), q = (1 + j)/delta; matching a uniform field outside gives C = 2 mu0 H0 / (q I0(q a))
/// and the Poynting flux P = (2 pi a H0^2 / sigma) Re{q I1(q a)/I0(q a)}, so
/// G(x) = (1/4) Re{z I1(z)/I0(z)}, z = x e^{j pi/4} = x^2 Im(w) / (8 |w|^2) with w the wire
/// ratio of [`round_wire_impedance_ratio`]. Limits x^4/64 (low) and (sqrt(2) x - 1)/8 (high);
/// F. E. Terman's printed table of G (1943) is reproduced to its 4 digits.
/// Accuracy: within 3e-15 relative of mpmath.
pub fn proximity_function_round_wire(x: f64) -> Result<f64, SolverError> {
    let x = positive("kelvin argument x", x)?;
    let w = wire_ratio(x)?;
    Ok(x * x * w.im / (8.0 * w.norm_sqr()))
}

/// Internal impedance per unit length of an isolated straight round wire of radius `radius_m`
/// (resistivity `resistivity_ohm_m`, relative permeability `relative_permeability`) at
/// `frequency_hz`, with the return current far away.
///
/// R = R_dc Re(w), L_int = R_dc Im(w) / omega with w = Z_int / R_dc of
/// [`round_wire_impedance_ratio`] (formula, source and accuracy there), R_dc = rho/(pi a^2).
/// At low frequency L_int -> mu0 mu_r / (8 pi).
pub fn internal_impedance_round_wire(
    radius_m: f64,
    resistivity_ohm_m: f64,
    relative_permeability: f64,
    frequency_hz: f64,
) -> Result<InternalImpedance, SolverError> {
    let r_dc = dc_resistance_round_wire_ohm_per_m(radius_m, resistivity_ohm_m)?;
    let delta = skin_depth_m(resistivity_ohm_m, frequency_hz, relative_permeability)?;
    let (re, im) = round_wire_impedance_ratio(SQRT_2 * radius_m / delta)?;
    Ok(InternalImpedance {
        resistance_ohm_per_m: r_dc * re,
        inductance_h_per_m: r_dc * im / (2.0 * PI * frequency_hz),
    })
}

/// Internal impedance per unit length of a straight tube (hollow round conductor) of outer
/// radius `outer_radius_m` and wall thickness `wall_m` (0 < wall <= outer radius; wall equal
/// to the radius is the solid wire), with the return current far outside.
///
/// Formula (exact; Bessel functions of both kinds of complex argument): with
/// g = (1 + j)/delta, c = b - t,
/// Z = (rho g / (2 pi b)) [I0(g b) K1(g c) + K0(g b) I1(g c)] / [I1(g b) K1(g c) - K1(g b) I1(g c)],
/// from E_z = A I0(g r) + B K0(g r) with no magnetic field in the bore (H(c) = 0) and
/// H(b) = I/(2 pi b). Source: S. A. Schelkunoff, "The electromagnetic theory of coaxial
/// transmission lines and cylindrical shields", Bell Syst. Tech. J. 13, 1934, pp. 532-579, the
/// internal impedance of a cylindrical shell (equation number from memory); also Ramo, Whinnery
/// and Van Duzer (section from memory).
///
/// Limits: rho / (pi (b^2 - c^2)) at low frequency, rho / (2 pi b delta) at high frequency
/// (with a curvature correction O(delta/b)), the round wire of [`internal_impedance_round_wire`]
/// as c -> 0 (a bore below 1e-9 b is treated as solid: its effect is below 1e-18).
///
/// Method: every Bessel function is evaluated scaled by e^{-+z} (see the private
/// `bessel_ik01_scaled`), and e^{-2 g t} multiplies the terms that are exponentially small, so
/// nothing overflows at any size or frequency. Accuracy against mpmath on copper tubes of outer
/// diameter 0.1 mm to 50 mm at 1 Hz to 30 MHz, walls from b/100 to b: R within 1e-13 relative; thinner
/// walls lose about 1e-16 b/t to the cancellation in the denominator. L_int is the imaginary
/// part of the same complex quotient, whose real part dominates at low frequency, so its
/// relative error is about 1.5e-16 (b/t) R / (omega L_int) (measured): 1e-12 where that bound
/// allows, 1e-6 at 1 Hz on a 2 mm tube with a 10 um wall.
pub fn internal_impedance_tube(
    outer_radius_m: f64,
    wall_m: f64,
    resistivity_ohm_m: f64,
    relative_permeability: f64,
    frequency_hz: f64,
) -> Result<InternalImpedance, SolverError> {
    let b = positive("outer_radius_m", outer_radius_m)?;
    let t = positive("wall_m", wall_m)?;
    if t > b {
        return Err(SolverError::InvalidLossInput {
            name: "wall_m",
            value: t,
            requirement: "must not exceed the outer radius",
        });
    }
    let inner = b - t;
    if inner <= 1e-9 * b {
        return internal_impedance_round_wire(
            b,
            resistivity_ohm_m,
            relative_permeability,
            frequency_hz,
        );
    }
    let rho = positive("resistivity_ohm_m", resistivity_ohm_m)?;
    let delta = skin_depth_m(rho, frequency_hz, relative_permeability)?;
    let g = c(1.0, 1.0) / delta;
    let [i0b, i1b, k0b, k1b] = bessel_ik01_scaled(g * b)?;
    let [_, i1c, _, k1c] = bessel_ik01_scaled(g * inner)?;
    // I0(gb) K1(gc) = e^{g t} (scaled product); K0(gb) I1(gc) = e^{-g t} (...): the common
    // e^{g t} cancels and the second terms carry e^{-2 g t}.
    let e = (-2.0 * g * t).exp();
    let num = i0b * k1c + e * k0b * i1c;
    let den = i1b * k1c - e * k1b * i1c;
    // Z / R_dc = g (b^2 - c^2) / (2 b) * num / den, with b^2 - c^2 = t (2b - t) (no cancellation
    // for thin walls).
    let area_term = t * (2.0 * b - t);
    let ratio = g * area_term / (2.0 * b) * num / den;
    let r_dc = rho / (PI * area_term);
    let out = InternalImpedance {
        resistance_ohm_per_m: r_dc * ratio.re,
        inductance_h_per_m: r_dc * ratio.im / (2.0 * PI * frequency_hz),
    };
    if out.resistance_ohm_per_m.is_finite() && out.inductance_h_per_m.is_finite() {
        Ok(out)
    } else {
        Err(SolverError::NoConvergence {
            what: "tube impedance",
        })
    }
}

// ---------------------------------------------------------------------------------------------
// Proximity effect in a single-layer coil.
// ---------------------------------------------------------------------------------------------

/// Butterworth's coefficient u of a long single-layer coil: pi^2.
///
/// In Butterworth's form R/R_dc = F(x) + u (d/p)^2 G(x), u measures the mean square transverse
/// field on the wires: H0 = (sqrt(u) / (2 pi)) I / p. On the winding of a long solenoid the
/// field is the mean of the field inside (I/p) and outside (0), I/(2p), so u = pi^2 (derived
/// here, not taken from Butterworth's tables, which are not checked). A short coil has a
/// smaller u (a flat strip of current gives pi^2/3).
pub const BUTTERWORTH_U_LONG_COIL: f64 = PI * PI;

/// Dowell's AC resistance factor F_R = R_ac / R_dc of one layer (m = 1) of round wire of
/// diameter `wire_diameter_m` wound at pitch `pitch_m`, at skin depth `skin_depth_m`.
///
/// Formula: F_R = Delta (sinh 2 Delta + sin 2 Delta) / (cosh 2 Delta - cos 2 Delta) (the m = 1
/// case of P. L. Dowell, "Effects of eddy currents in transformer windings", Proc. IEE 113(8),
/// 1966, pp. 1387-1394; the m-layer term (2 (m^2 - 1)/3)(sinh Delta - sin Delta)/(cosh Delta +
/// cos Delta) vanishes), with the round wire replaced by a square conductor of the same area,
/// h = d sqrt(pi)/2, the layer porosity eta = h/p and Delta = (h/delta) sqrt(eta) (Dowell's
/// treatment of round conductors, from memory). Equivalently Re{alpha h coth(alpha h)},
/// alpha h = (1 + j) Delta.
///
/// The model is one-dimensional: the field is parallel to the layer, H = N I / l on one side
/// and zero on the other, as on the winding of a long solenoid. Range: its assumptions fit long
/// coils wound close (a layer that is nearly a sheet); short coils have a field that is not
/// parallel to the layer, and for p/d above about 11 the factor falls below the isolated
/// wire's resistance, which no winding can have (refused).
///
/// Method: the ratio of the all-positive series of sinh y + sin y and cosh y - cos y for
/// Delta <= 1 (no cancellation), else the form divided by cosh 2 Delta (no overflow).
/// Accuracy: within 1e-15 relative of mpmath.
pub fn dowell_one_layer_factor(
    wire_diameter_m: f64,
    pitch_m: f64,
    skin_depth_m: f64,
) -> Result<f64, SolverError> {
    let d = positive("wire_diameter_m", wire_diameter_m)?;
    let p = positive("pitch_m", pitch_m)?;
    let delta = positive("skin_depth_m", skin_depth_m)?;
    if p < d {
        return Err(SolverError::InvalidLossInput {
            name: "pitch_m",
            value: p,
            requirement: "must be at least the wire diameter",
        });
    }
    let h = d * PI.sqrt() / 2.0;
    let big_delta = h / delta * (h / p).sqrt();
    Ok(dowell_m1(big_delta))
}

/// Delta (sinh 2 Delta + sin 2 Delta) / (cosh 2 Delta - cos 2 Delta).
fn dowell_m1(big_delta: f64) -> f64 {
    let y = 2.0 * big_delta;
    if big_delta <= 1.0 {
        // sinh y + sin y = 2 sum y^(4n+1)/(4n+1)!, cosh y - cos y = 2 sum y^(4n+2)/(4n+2)!.
        let y4 = y.powi(4);
        let (mut num_term, mut den_term) = (y, y * y / 2.0);
        let (mut num, mut den) = (num_term, den_term);
        for n in 1..30 {
            let k = 4.0 * n as f64;
            num_term *= y4 / ((k - 2.0) * (k - 1.0) * k * (k + 1.0));
            den_term *= y4 / ((k - 1.0) * k * (k + 1.0) * (k + 2.0));
            num += num_term;
            den += den_term;
            if num_term < 1e-17 * num && den_term < 1e-17 * den {
                break;
            }
        }
        return big_delta * num / den;
    }
    let e = (-y).exp();
    let sech = 2.0 * e / (1.0 + e * e);
    let tanh = (1.0 - e * e) / (1.0 + e * e);
    big_delta * (tanh + y.sin() * sech) / (1.0 - y.cos() * sech)
}

/// How the proximity effect of a single-layer winding is modelled.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ProximityModel {
    /// No proximity effect: the isolated wire (factor 1).
    None,
    /// Dowell's one-layer formula ([`dowell_one_layer_factor`]): long, close-wound coils.
    DowellOneLayer,
    /// Butterworth's form R/R_dc = F(x) + u (d/p)^2 G(x) with the given u
    /// ([`BUTTERWORTH_U_LONG_COIL`] for long coils): spaced windings.
    Butterworth {
        /// Butterworth's coefficient u (> 0).
        u: f64,
    },
    /// A given factor Psi >= 1 (a measured ratio, e.g. from R. G. Medhurst's measurements,
    /// Wireless Engineer 24, 1947).
    Factor {
        /// R(coil) / R(same wire straightened) at the same frequency.
        psi: f64,
    },
}

/// The proximity factor Psi = R(coil) / R(same wire straightened, isolated) at the same
/// frequency, for round wire of diameter `wire_diameter_m` wound at pitch `pitch_m` in a single
/// layer, at skin depth `skin_depth_m`, by `model`.
///
/// - Dowell: Psi = F_R / F(x), F_R of [`dowell_one_layer_factor`], F the isolated wire's
///   R_ac/R_dc, x = d / (sqrt(2) delta).
/// - Butterworth: Psi = 1 + u (d/p)^2 G(x) / F(x) (S. Butterworth, Experimental Wireless 3,
///   1926; F and G exact here). It takes the field on each wire as uniform, which fits widely
///   spaced windings of long coils (u = pi^2) and overstates close windings.
///
/// Neither formula is checked here against measured coil resistances (R. G. Medhurst's
/// measurements, "H.F. resistance and self-capacitance of single-layer solenoids", Wireless
/// Engineer 24, 1947, are the trade's reference; a measured ratio can be given as
/// [`ProximityModel::Factor`]).
///
/// Errors: invalid sizes; p < d; a model factor below 1 (Dowell at wide spacing), which no
/// winding can have and which marks the model as out of its range.
pub fn proximity_factor(
    model: ProximityModel,
    wire_diameter_m: f64,
    pitch_m: f64,
    skin_depth_m: f64,
) -> Result<f64, SolverError> {
    let d = positive("wire_diameter_m", wire_diameter_m)?;
    let p = positive("pitch_m", pitch_m)?;
    let delta = positive("skin_depth_m", skin_depth_m)?;
    if p < d {
        return Err(SolverError::InvalidLossInput {
            name: "pitch_m",
            value: p,
            requirement: "must be at least the wire diameter",
        });
    }
    let x = d / (SQRT_2 * delta);
    let psi = match model {
        ProximityModel::None => 1.0,
        ProximityModel::Factor { psi } => {
            if !(psi.is_finite() && psi >= 1.0) {
                return Err(SolverError::InvalidLossInput {
                    name: "psi",
                    value: psi,
                    requirement: "must be finite and at least 1",
                });
            }
            psi
        }
        ProximityModel::DowellOneLayer => {
            dowell_one_layer_factor(d, p, delta)? / ac_resistance_ratio_round_wire(x)?
        }
        ProximityModel::Butterworth { u } => {
            let u = positive("butterworth u", u)?;
            let (f, g) = (
                ac_resistance_ratio_round_wire(x)?,
                proximity_function_round_wire(x)?,
            );
            1.0 + u * (d / p).powi(2) * g / f
        }
    };
    if psi < 1.0 {
        return Err(SolverError::LossModelOutOfRange {
            model: "Dowell's one-layer formula",
            detail: format!(
                "it gives a coil resistance {psi:.4} times the isolated wire's at p/d = {:.3}: \
                 the winding is too widely spaced for the model",
                p / d
            ),
        });
    }
    Ok(psi)
}

// ---------------------------------------------------------------------------------------------
// Radiation resistance.
// ---------------------------------------------------------------------------------------------

/// Largest effective height (or half effective length) over the wavelength accepted by the
/// short-radiator formulas; there they are high by about (k h)^2/15 = 2.6 % (uniform current).
const SHORT_RADIATOR_MAX_H_OVER_LAMBDA: f64 = 0.1;

fn check_short(h_eff: f64, lambda: f64, what: &'static str) -> Result<(), SolverError> {
    if h_eff / lambda > SHORT_RADIATOR_MAX_H_OVER_LAMBDA {
        return Err(SolverError::LossModelOutOfRange {
            model: what,
            detail: format!(
                "effective height {h_eff} m is {:.3} of the wavelength {lambda} m; the \
                 short-radiator formula needs at most {SHORT_RADIATOR_MAX_H_OVER_LAMBDA}",
                h_eff / lambda
            ),
        });
    }
    Ok(())
}

/// Radiation resistance (ohm, referred to the base current) of a short vertical radiator over
/// a perfectly conducting ground, of effective height `effective_height_m` (see
/// [`effective_height_from_charges_m`], [`effective_height_from_current_m`]) at `frequency_hz`.
///
/// Formula: R = (4 pi / 3) Z0 (h_eff / lambda)^2, Z0 = mu0 c, lambda = c / f. With the image the
/// radiator is a dipole of effective length 2 h_eff, whose resistance is
/// (2 pi / 3) Z0 (2 h_eff / lambda)^2; it radiates into the upper half space only, so half of
/// it. With the textbook Z0 = 120 pi this is 160 pi^2 (h_eff / lambda)^2 (J. D. Kraus,
/// *Antennas*, McGraw-Hill 1950, short vertical antenna; section from memory), 7e-4 above the
/// value here. Uniform current: h_eff = h; current falling linearly to zero at the top: h/2 (a
/// quarter of the resistance).
///
/// Condition: the radiator is short, h << lambda; refused above h_eff = lambda/10, where the
/// formula is already high by about (k h)^2/15 against the Poynting integral of the real
/// current (2.6 % for uniform current, 1.3 % for a linear one).
pub fn radiation_resistance_monopole_ohm(
    effective_height_m: f64,
    frequency_hz: f64,
) -> Result<f64, SolverError> {
    let h = positive("effective_height_m", effective_height_m)?;
    let f = positive("frequency_hz", frequency_hz)?;
    let lambda = C0 / f;
    check_short(h, lambda, "the short-monopole radiation resistance")?;
    Ok(4.0 * PI / 3.0 * MU0 * C0 * (h / lambda).powi(2))
}

/// Radiation resistance (ohm, referred to the feed current) of a short dipole in free space of
/// effective length `effective_length_m` = (1/I_feed) integral of I(z) dz, at `frequency_hz`.
///
/// Formula: R = (2 pi / 3) Z0 (l_eff / lambda)^2 (the Hertzian dipole: the Poynting flux of
/// E_theta = j Z0 k I l_eff sin(theta) e^{-jkr} / (4 pi r)); with Z0 = 120 pi it is the
/// textbook 80 pi^2 (l_eff / lambda)^2 (Kraus 1950; section from memory). Refused above
/// l_eff = lambda/5 (half length lambda/10), see [`radiation_resistance_monopole_ohm`].
pub fn radiation_resistance_dipole_ohm(
    effective_length_m: f64,
    frequency_hz: f64,
) -> Result<f64, SolverError> {
    let l = positive("effective_length_m", effective_length_m)?;
    let f = positive("frequency_hz", frequency_hz)?;
    let lambda = C0 / f;
    check_short(l / 2.0, lambda, "the short-dipole radiation resistance")?;
    Ok(2.0 * PI / 3.0 * MU0 * C0 * (l / lambda).powi(2))
}

/// Effective height (m) of a short vertical radiator over ground from the charges
/// `charges_c` (C) it carries at heights `heights_m` (m above the ground plane).
///
/// h_eff = sum(q_i z_i) / sum(q_i): the current at height z is j omega times the charge above
/// z, so (1/I_base) integral I dz = sum q_i z_i / sum q_i (the charge centroid; equivalently the
/// dipole moment with the images, 2 sum q_i z_i, over 2 sum q_i). All charges must have one
/// sign (the current then flows one way all along the radiator) and not all be zero.
pub fn effective_height_from_charges_m(
    heights_m: &[f64],
    charges_c: &[f64],
) -> Result<f64, SolverError> {
    if heights_m.is_empty() || heights_m.len() != charges_c.len() {
        return Err(SolverError::InvalidLossInput {
            name: "heights_m",
            value: heights_m.len() as f64,
            requirement: "needs at least one height and as many heights as charges",
        });
    }
    let positive_sign = charges_c.iter().any(|&q| q > 0.0);
    let (mut moment, mut total) = (0.0, 0.0);
    for (&z, &q) in heights_m.iter().zip(charges_c) {
        finite_non_negative("heights_m", z)?;
        if !q.is_finite() || (positive_sign && q < 0.0) || (!positive_sign && q > 0.0) {
            return Err(SolverError::InvalidLossInput {
                name: "charges_c",
                value: q,
                requirement: "must be finite and all of one sign",
            });
        }
        moment += q * z;
        total += q;
    }
    if total == 0.0 {
        return Err(SolverError::InvalidLossInput {
            name: "charges_c",
            value: 0.0,
            requirement: "must not all be zero",
        });
    }
    finite_non_negative("effective height (m)", moment / total)
}

/// Effective height (m) of a vertical radiator from its current profile: currents `currents_a`
/// (A, phasor magnitudes of one phase) sampled at heights `heights_m` (m above ground, strictly
/// increasing); the first sample is the feed point, joined to the ground by a lead carrying the
/// same current.
///
/// h_eff = (1/I_base) integral_0^top I(z) dz = z_0 + (1/I_0) integral_{z_0}^{z_n} I dz, the
/// integral by the trapezoidal rule (exact for a piecewise-linear profile; O(spacing^2)
/// otherwise). Uniform current: h; linear fall to zero at the top: h/2.
pub fn effective_height_from_current_m(
    heights_m: &[f64],
    currents_a: &[f64],
) -> Result<f64, SolverError> {
    if heights_m.len() < 2 || heights_m.len() != currents_a.len() {
        return Err(SolverError::InvalidLossInput {
            name: "heights_m",
            value: heights_m.len() as f64,
            requirement: "needs at least two heights and as many heights as currents",
        });
    }
    let base = currents_a[0];
    if !(base.is_finite() && base != 0.0) {
        return Err(SolverError::InvalidLossInput {
            name: "currents_a",
            value: base,
            requirement: "the feed-point current must be finite and not zero",
        });
    }
    let z0 = finite_non_negative("heights_m", heights_m[0])?;
    let mut integral = 0.0;
    for i in 1..heights_m.len() {
        let (za, zb) = (heights_m[i - 1], heights_m[i]);
        if !(zb.is_finite() && zb > za) {
            return Err(SolverError::InvalidLossInput {
                name: "heights_m",
                value: zb,
                requirement: "must be finite and strictly increasing",
            });
        }
        let (ia, ib) = (currents_a[i - 1], currents_a[i]);
        if !ib.is_finite() {
            return Err(SolverError::InvalidLossInput {
                name: "currents_a",
                value: ib,
                requirement: "must be finite",
            });
        }
        integral += 0.5 * (ia + ib) * (zb - za);
    }
    finite_non_negative("effective height (m)", z0 + integral / base)
}

// ---------------------------------------------------------------------------------------------
// A winding's resistance and Q.
// ---------------------------------------------------------------------------------------------

/// A single-layer winding of solid round wire, for [`winding_losses`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RoundWireWinding {
    /// Length of wire in the winding (m).
    pub wire_length_m: f64,
    /// Diameter of the bare wire (m).
    pub wire_diameter_m: f64,
    /// Axial distance between turn centres (m), at least the wire diameter.
    pub pitch_m: f64,
    /// Resistivity of the wire (ohm m), e.g. from [`conductor`].
    pub resistivity_ohm_m: f64,
    /// Relative permeability of the wire (1 for non-magnetic metals).
    pub relative_permeability: f64,
}

/// The parts of a resonator's series loss resistance at one frequency (all in ohm, each the
/// increase over the part before it), for a report.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct LossBreakdown {
    /// Frequency (Hz).
    pub frequency_hz: f64,
    /// DC resistance of the wire, rho l / (pi a^2).
    pub dc_ohm: f64,
    /// Added by the skin effect of the isolated wire: R_dc (F - 1).
    pub skin_ohm: f64,
    /// Added by the proximity of the other turns: R_dc F (Psi - 1).
    pub proximity_ohm: f64,
    /// Radiation resistance referred to the same current.
    pub radiation_ohm: f64,
}

impl LossBreakdown {
    /// The total series resistance (ohm).
    pub fn total_ohm(&self) -> f64 {
        self.dc_ohm + self.skin_ohm + self.proximity_ohm + self.radiation_ohm
    }

    /// Q = omega L / R_total for inductance `inductance_h` (see [`q_factor`]).
    pub fn q_factor(&self, inductance_h: f64) -> Result<f64, SolverError> {
        q_factor(self.frequency_hz, inductance_h, self.total_ohm())
    }
}

/// The loss resistance of `winding` at `frequency_hz`: R = (wire length) x (R_ac per length of
/// the isolated wire, [`internal_impedance_round_wire`]) x (proximity factor Psi of `model`,
/// [`proximity_factor`]) + `radiation_ohm` (e.g. from [`radiation_resistance_monopole_ohm`]),
/// split into its parts. The current is taken as uniform along the wire (a winding short
/// against the wavelength).
pub fn winding_losses(
    winding: &RoundWireWinding,
    frequency_hz: f64,
    model: ProximityModel,
    radiation_ohm: f64,
) -> Result<LossBreakdown, SolverError> {
    let length = positive("wire_length_m", winding.wire_length_m)?;
    let d = positive("wire_diameter_m", winding.wire_diameter_m)?;
    let radiation = finite_non_negative("radiation_ohm", radiation_ohm)?;
    let a = d / 2.0;
    let r_dc = length * dc_resistance_round_wire_ohm_per_m(a, winding.resistivity_ohm_m)?;
    let delta = skin_depth_m(
        winding.resistivity_ohm_m,
        frequency_hz,
        winding.relative_permeability,
    )?;
    let skin = ac_resistance_ratio_round_wire(SQRT_2 * a / delta)?;
    let psi = proximity_factor(model, d, winding.pitch_m, delta)?;
    Ok(LossBreakdown {
        frequency_hz,
        dc_ohm: r_dc,
        skin_ohm: r_dc * (skin - 1.0),
        proximity_ohm: r_dc * skin * (psi - 1.0),
        radiation_ohm: radiation,
    })
}

/// Q = omega L / R of a series resonator of inductance `inductance_h` (H) and loss resistance
/// `resistance_ohm` (ohm) at `frequency_hz` (the definition 2 pi x stored energy / energy lost
/// per cycle for a series RL branch).
pub fn q_factor(
    frequency_hz: f64,
    inductance_h: f64,
    resistance_ohm: f64,
) -> Result<f64, SolverError> {
    let f = positive("frequency_hz", frequency_hz)?;
    let l = positive("inductance_h", inductance_h)?;
    let r = positive("resistance_ohm", resistance_ohm)?;
    positive("Q", 2.0 * PI * f * l / r)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// One row of validation/losses.csv (validation/losses_refs.py, mpmath or a publication).
    struct Row {
        kind: String,
        args: [f64; 4],
        reference: f64,
        tolerance: f64,
        tolerance_kind: String,
        source: String,
    }

    fn rows(kind: &str) -> Vec<Row> {
        let text = include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../validation/losses.csv"
        ));
        let mut out = Vec::new();
        for line in text.lines().skip(1) {
            // The source is the only quoted field and comes last.
            let (head, source) = match line.find('"') {
                Some(i) => (&line[..i], line[i..].trim_matches('"').to_string()),
                None => {
                    let i = line.rfind(',').unwrap();
                    (&line[..=i], line[i + 1..].to_string())
                }
            };
            let f: Vec<&str> = head.trim_end_matches(',').split(',').collect();
            assert_eq!(f.len(), 8, "row {line}");
            let num = |s: &str| {
                if s.is_empty() {
                    f64::NAN
                } else {
                    s.parse::<f64>().unwrap()
                }
            };
            let row = Row {
                kind: f[0].to_string(),
                args: [num(f[1]), num(f[2]), num(f[3]), num(f[4])],
                reference: num(f[5]),
                tolerance: num(f[6]),
                tolerance_kind: f[7].to_string(),
                source,
            };
            if row.kind == kind {
                out.push(row);
            }
        }
        assert!(!out.is_empty(), "no rows of kind {kind}");
        out
    }

    /// Checks `value` against a row; returns the relative deviation.
    fn check(row: &Row, value: f64) -> f64 {
        let dev = (value - row.reference).abs();
        let ok = match row.tolerance_kind.as_str() {
            "rel" => dev <= row.tolerance * row.reference.abs(),
            "abs" => dev <= row.tolerance,
            other => panic!("tolerance kind {other}"),
        };
        assert!(
            ok,
            "{} {:?}: got {value:e}, reference {:e} ({} {}), source: {}",
            row.kind, row.args, row.reference, row.tolerance_kind, row.tolerance, row.source
        );
        dev / row.reference.abs()
    }

    #[test]
    fn skin_depth_matches_closed_form_in_mpmath() {
        // Source: validation/losses.csv, mpmath sqrt(rho/(pi f mu0 mu_r)); 1e-14.
        for r in rows("skin_depth") {
            check(&r, skin_depth_m(r.args[0], r.args[1], r.args[2]).unwrap());
        }
        // The rounded values of the trade for copper (1.678e-8): 206 um at 100 kHz, 65.2 um at
        // 1 MHz (three printed digits).
        let cu = conductor("copper").unwrap().resistivity_ohm_m;
        assert!((skin_depth_m(cu, 1e5, 1.0).unwrap() / 206e-6 - 1.0).abs() < 2.5e-3);
        assert!((skin_depth_m(cu, 1e6, 1.0).unwrap() / 65.2e-6 - 1.0).abs() < 1e-3);
    }

    #[test]
    fn wire_ratio_matches_mpmath_from_1e_minus_6_to_1e5() {
        // Source: validation/losses.csv, mpmath (u/2) I0(u)/I1(u) at 30 digits; 1e-13 relative
        // (measured worst: printed by `cargo test -- --nocapture`).
        let mut worst: f64 = 0.0;
        for r in rows("wire_re") {
            worst = worst.max(check(&r, round_wire_impedance_ratio(r.args[0]).unwrap().0));
        }
        for r in rows("wire_im") {
            worst = worst.max(check(&r, round_wire_impedance_ratio(r.args[0]).unwrap().1));
        }
        println!("round wire: worst relative deviation {worst:e}");
    }

    #[test]
    fn wire_ratio_approaches_its_low_and_high_frequency_limits() {
        // Source: validation/losses.csv: 1 + x^4/192 and a/(2 delta) + 1/4, tolerance 1.5 x the
        // first neglected term.
        for r in rows("wire_low").into_iter().chain(rows("wire_high")) {
            check(&r, ac_resistance_ratio_round_wire(r.args[0]).unwrap());
        }
        // Internal inductance at low frequency: mu0/(8 pi) (Ramo, Whinnery, Van Duzer).
        let z = internal_impedance_round_wire(1e-3, 1.678e-8, 1.0, 1.0).unwrap();
        assert!((z.inductance_h_per_m / (MU0 / (8.0 * PI)) - 1.0).abs() < 1e-9);
    }

    #[test]
    fn wire_ratio_reproduces_terman_table() {
        // Source: F. E. Terman, Radio Engineers' Handbook 1943 (4 printed digits), rows in
        // validation/losses.csv.
        for r in rows("terman_h") {
            check(&r, ac_resistance_ratio_round_wire(r.args[0]).unwrap());
        }
        for r in rows("terman_g") {
            check(&r, proximity_function_round_wire(r.args[0]).unwrap());
        }
    }

    #[test]
    fn proximity_function_matches_mpmath() {
        // Source: validation/losses.csv, mpmath (1/4) Re{z I1/I0}; 1e-12.
        for r in rows("proximity_g") {
            check(&r, proximity_function_round_wire(r.args[0]).unwrap());
        }
    }

    #[test]
    fn tube_matches_schelkunoff_in_mpmath() {
        // Source: validation/losses.csv, mpmath besseli/besselk at 60 digits; R 1e-12 relative,
        // L_int max(1e-12, 5e-16 (b/t) R/(omega L)) (see internal_impedance_tube).
        let (mut worst_r, mut worst_l): (f64, f64) = (0.0, 0.0);
        for r in rows("tube_r") {
            let z = internal_impedance_tube(r.args[0], r.args[1], r.args[3], 1.0, r.args[2]);
            worst_r = worst_r.max(check(&r, z.unwrap().resistance_ohm_per_m));
        }
        for r in rows("tube_l") {
            let z = internal_impedance_tube(r.args[0], r.args[1], r.args[3], 1.0, r.args[2]);
            worst_l = worst_l.max(check(&r, z.unwrap().inductance_h_per_m));
        }
        println!("tube: worst relative deviation R {worst_r:e}, L_int {worst_l:e}");
    }

    #[test]
    fn tube_approaches_dc_and_high_frequency_limits() {
        // Source: validation/losses.csv: rho/(pi (b^2 - c^2)) and rho/(2 pi b delta), tolerance
        // 2 x the correction measured with mpmath.
        for r in rows("tube_dc").into_iter().chain(rows("tube_hf")) {
            let z = internal_impedance_tube(r.args[0], r.args[1], r.args[3], 1.0, r.args[2]);
            check(&r, z.unwrap().resistance_ohm_per_m);
        }
    }

    #[test]
    fn tube_tends_to_the_solid_wire() {
        // A tube whose bore shrinks to nothing is the solid wire (closed form: the limit of
        // Schelkunoff's formula as c -> 0); the wire values are themselves checked against
        // mpmath above. A bore of 1e-4 b changes R by O(1e-8) at most.
        for f in [1.0, 1e4, 1e6, 3e7] {
            let wire = internal_impedance_round_wire(1e-3, 1.678e-8, 1.0, f).unwrap();
            let tube =
                internal_impedance_tube(1e-3, 1e-3 * (1.0 - 1e-4), 1.678e-8, 1.0, f).unwrap();
            let rel = (tube.resistance_ohm_per_m / wire.resistance_ohm_per_m - 1.0).abs();
            assert!(rel < 1e-7, "f {f}: {rel:e}");
        }
    }

    #[test]
    fn dowell_matches_mpmath() {
        // Source: validation/losses.csv, mpmath Dowell m = 1 closed form; 1e-13.
        for r in rows("dowell") {
            check(
                &r,
                dowell_one_layer_factor(r.args[0], r.args[1], r.args[2]).unwrap(),
            );
        }
    }

    #[test]
    fn dowell_refuses_wide_spacing() {
        // Dowell's factor falls below the isolated wire's for p/d above about 11 at high
        // frequency (Psi_HF = sqrt(2) pi^(3/4) sqrt(d/p), closed form of the m = 1 limit).
        let err = proximity_factor(ProximityModel::DowellOneLayer, 1e-3, 20e-3, 1e-5);
        assert!(matches!(err, Err(SolverError::LossModelOutOfRange { .. })));
        let ok = proximity_factor(ProximityModel::DowellOneLayer, 1e-3, 1e-3, 1e-5).unwrap();
        let hf = SQRT_2 * PI.powf(0.75);
        assert!((ok / hf - 1.0).abs() < 0.01, "{ok} vs {hf}");
    }

    #[test]
    fn radiation_resistance_matches_the_poynting_integral() {
        // Source: validation/losses.csv, mpmath far-field Poynting integral of the actual
        // current; tolerance (k h)^2/10, the size of the short-radiator error.
        for r in rows("rad_monopole_uniform") {
            check(
                &r,
                radiation_resistance_monopole_ohm(r.args[0], r.args[1]).unwrap(),
            );
        }
        for r in rows("rad_monopole_linear") {
            let h_eff = effective_height_from_current_m(&[0.0, r.args[0]], &[1.0, 0.0]).unwrap();
            assert!((h_eff - r.args[0] / 2.0).abs() <= 1e-15 * r.args[0]);
            check(
                &r,
                radiation_resistance_monopole_ohm(h_eff, r.args[1]).unwrap(),
            );
        }
        for r in rows("rad_dipole_uniform") {
            check(
                &r,
                radiation_resistance_dipole_ohm(r.args[0], r.args[1]).unwrap(),
            );
        }
        // Kraus's 160 pi^2 (h/lambda)^2 with Z0 = 120 pi: 1e-3.
        for r in rows("rad_textbook") {
            check(
                &r,
                radiation_resistance_monopole_ohm(r.args[0], r.args[1]).unwrap(),
            );
        }
    }

    #[test]
    fn radiation_resistance_refuses_tall_radiators() {
        let lambda = C0 / 1e6;
        assert!(radiation_resistance_monopole_ohm(0.2 * lambda, 1e6).is_err());
        assert!(radiation_resistance_dipole_ohm(0.3 * lambda, 1e6).is_err());
    }

    #[test]
    fn effective_height_from_charges_is_the_charge_centroid() {
        // All charge on top: h; charge spread evenly along the radiator (current falling
        // linearly): h/2 (closed forms of the integral of I dz).
        assert_eq!(
            effective_height_from_charges_m(&[12.0], &[3e-9]).unwrap(),
            12.0
        );
        let n = 1000;
        let z: Vec<f64> = (0..n).map(|i| (i as f64 + 0.5) * 10.0 / n as f64).collect();
        let q = vec![-1e-12; n];
        let h = effective_height_from_charges_m(&z, &q).unwrap();
        assert!((h - 5.0).abs() < 1e-12);
        assert!(effective_height_from_charges_m(&[1.0, 2.0], &[1e-9, -1e-9]).is_err());
        assert!(effective_height_from_charges_m(&[1.0], &[0.0]).is_err());
        assert!(effective_height_from_charges_m(&[1.0], &[1.0, 2.0]).is_err());
    }

    #[test]
    fn effective_height_from_a_sampled_sine_current_converges() {
        // Source: validation/losses.csv, mpmath quad of sin(k (h - z)); the trapezoidal rule
        // with n = 2000 intervals is within (k h)^2 / (12 n^2) relative of the integral.
        for r in rows("h_eff_sine") {
            let (h, k) = (r.args[0], r.args[1]);
            let n = 2000;
            let z: Vec<f64> = (0..=n).map(|i| h * i as f64 / n as f64).collect();
            let i: Vec<f64> = z.iter().map(|&z| (k * (h - z)).sin()).collect();
            let got = effective_height_from_current_m(&z, &i).unwrap();
            let bound = (k * h).powi(2) / (12.0 * (n * n) as f64);
            assert!(
                (got / r.reference - 1.0).abs() < 2.0 * bound,
                "{got} vs {}",
                r.reference
            );
        }
        // A lead from the ground to the feed point carries the base current.
        let h = effective_height_from_current_m(&[2.0, 4.0], &[1.0, 1.0]).unwrap();
        assert_eq!(h, 4.0);
        assert!(effective_height_from_current_m(&[0.0, 0.0], &[1.0, 1.0]).is_err());
        assert!(effective_height_from_current_m(&[0.0, 1.0], &[0.0, 1.0]).is_err());
    }

    #[test]
    fn winding_losses_add_up_from_independent_references() {
        // A 1 mm copper wire, 100 m long, pitch 2 mm, at the frequency where x = 10: the skin
        // ratio F and Butterworth's G at x = 10 come from the mpmath rows of
        // validation/losses.csv, and R_dc = rho l / (pi a^2) by hand.
        let rho = 1.678e-8;
        let a = 0.5e-3;
        // x = sqrt(2) a / delta = 10 -> delta = sqrt(2) a / 10 -> f = rho / (pi mu0 delta^2).
        let delta = SQRT_2 * a / 10.0;
        let f = rho / (PI * MU0 * delta * delta);
        let w = RoundWireWinding {
            wire_length_m: 100.0,
            wire_diameter_m: 2.0 * a,
            pitch_m: 2e-3,
            resistivity_ohm_m: rho,
            relative_permeability: 1.0,
        };
        let reference = |kind: &str| {
            rows(kind)
                .into_iter()
                .find(|r| r.args[0] == 10.0)
                .unwrap()
                .reference
        };
        let (big_f, big_g) = (reference("wire_re"), reference("proximity_g"));
        let r_dc = rho * 100.0 / (PI * a * a);
        let model = ProximityModel::Butterworth {
            u: BUTTERWORTH_U_LONG_COIL,
        };
        let parts = winding_losses(&w, f, model, 0.5).unwrap();
        let expected = r_dc * (big_f + PI * PI * 0.25 * big_g) + 0.5;
        assert!((parts.total_ohm() / expected - 1.0).abs() < 1e-11);
        assert!((parts.dc_ohm / r_dc - 1.0).abs() < 1e-13);
        assert!((parts.skin_ohm / (r_dc * (big_f - 1.0)) - 1.0).abs() < 1e-12);
        // Q = omega L / R with L = 1 mH.
        let q = parts.q_factor(1e-3).unwrap();
        assert!((q / (2.0 * PI * f * 1e-3 / expected) - 1.0).abs() < 1e-11);
    }

    #[test]
    fn conductor_table_lookups() {
        assert_eq!(conductor("copper").unwrap().resistivity_ohm_m, 1.678e-8);
        assert_eq!(conductor("iacs").unwrap().resistivity_ohm_m, 1.7241e-8);
        assert_eq!(conductor("aluminum").unwrap().name, "aluminium");
        assert!(matches!(
            conductor("unobtainium"),
            Err(SolverError::UnknownConductor { .. })
        ));
        for c in CONDUCTORS {
            assert_eq!(c.name, c.name.to_lowercase());
            assert_eq!(c.relative_permeability, 1.0);
        }
    }

    #[test]
    fn invalid_inputs_are_errors() {
        assert!(skin_depth_m(-1.0, 1e6, 1.0).is_err());
        assert!(skin_depth_m(1.678e-8, 0.0, 1.0).is_err());
        assert!(skin_depth_m(1.678e-8, f64::NAN, 1.0).is_err());
        assert!(round_wire_impedance_ratio(0.0).is_err());
        assert!(round_wire_impedance_ratio(f64::INFINITY).is_err());
        assert!(internal_impedance_tube(1e-3, 2e-3, 1.678e-8, 1.0, 1e6).is_err());
        assert!(internal_impedance_tube(1e-3, 0.0, 1.678e-8, 1.0, 1e6).is_err());
        assert!(dowell_one_layer_factor(1e-3, 0.5e-3, 1e-4).is_err());
        assert!(proximity_factor(ProximityModel::Factor { psi: 0.5 }, 1e-3, 1e-3, 1e-4).is_err());
        assert!(q_factor(1e6, 1e-3, 0.0).is_err());
        assert!(radiation_resistance_monopole_ohm(1.0, -1.0).is_err());
    }
}
