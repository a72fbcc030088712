//! Field thresholds for clearance estimates and contour lines, each with its source.
//!
//! Exposure reference levels are rms values of the unperturbed field; the solver gives peak
//! amplitudes of a sinusoidal drive, so a reference level L (rms) is compared with
//! |peak| / sqrt(2), i.e. the peak field is compared with sqrt(2) L. Breakdown strengths are
//! compared with the peak field directly.

use crate::BadInput;
use serde::Serialize;

/// mu0 (H/m), classical value, to turn an H reference level (A/m) into B (T).
const MU0_H_PER_M: f64 = 4.0e-7 * std::f64::consts::PI;

/// Which field a threshold limits.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Quantity {
    /// Electric field, V/m.
    E,
    /// Magnetic flux density, T.
    B,
}

/// Whether a limit is an rms or a peak value.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Basis {
    /// rms of a sinusoid: compared with peak / sqrt(2).
    Rms,
    /// Peak: compared with the peak amplitude.
    Peak,
}

/// How the clearance of a threshold is found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Method {
    /// Search along rays for the outer crossing of the local field.
    FieldSearch,
    /// A mean gradient over a gap: distance = peak potential / gradient.
    MeanGradient,
}

/// One threshold.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Threshold {
    /// Short name without spaces.
    pub name: String,
    /// E or B.
    pub quantity: Quantity,
    /// The limit in `unit`, on the `basis` given.
    pub limit: f64,
    /// "V/m" or "T".
    pub unit: &'static str,
    /// rms or peak.
    pub basis: Basis,
    /// Where the value comes from.
    pub source: String,
    /// How its clearance is found.
    pub method: Method,
}

impl Threshold {
    /// The limit expressed as a peak amplitude (unit as `unit`).
    pub fn peak_limit(&self) -> f64 {
        match self.basis {
            Basis::Rms => self.limit * std::f64::consts::SQRT_2,
            Basis::Peak => self.limit,
        }
    }
}

/// Default dielectric strength of dry air at sea level in a uniform field (V/m, peak).
pub const AIR_BREAKDOWN_V_PER_M: f64 = 3.0e6;

/// Default mean breakdown gradient of long air gaps (V/m, peak). Common practice puts it at a
/// few hundred kV/m over gaps of metres; there is no single published value, so it is a user
/// setting (`--long-gap-gradient`).
pub const LONG_GAP_GRADIENT_V_PER_M: f64 = 300.0e3;

/// The caution every clearance output carries.
pub const CAUTION: &str = "These distances are screening estimates from a quasi-static model, not a safety certificate: follow local regulations (electrical and exposure codes) and the advice of qualified, licensed people. Exposure reference levels are rms values of the unperturbed field and are compared here with peak/sqrt(2) of the sinusoidal drive.";

fn e(name: &str, limit: f64, basis: Basis, source: &str) -> Threshold {
    Threshold {
        name: name.into(),
        quantity: Quantity::E,
        limit,
        unit: "V/m",
        basis,
        source: source.into(),
        method: Method::FieldSearch,
    }
}

fn b(name: &str, limit: f64, source: &str) -> Threshold {
    Threshold {
        name: name.into(),
        quantity: Quantity::B,
        limit,
        unit: "T",
        basis: Basis::Rms,
        source: source.into(),
        method: Method::FieldSearch,
    }
}

/// The default thresholds at drive frequency `frequency_hz`, with a warning for each family
/// whose frequency range does not cover it.
pub fn defaults(frequency_hz: f64, long_gap_v_per_m: f64) -> (Vec<Threshold>, Vec<String>) {
    let mut out = vec![
        e(
            "air_breakdown",
            AIR_BREAKDOWN_V_PER_M,
            Basis::Peak,
            "American Meteorological Society, Glossary of Meteorology, \"dielectric strength\": about 3 MV/m for dry air at sea level in a uniform field",
        ),
        Threshold {
            method: Method::MeanGradient,
            ..e(
                "long_gap_mean_gradient",
                long_gap_v_per_m,
                Basis::Peak,
                "common practice, no published source: mean breakdown gradient of gaps of metres (user setting --long-gap-gradient)",
            )
        },
    ];
    let mut warnings = Vec::new();
    let f_mhz = frequency_hz / 1e6;
    const S2010: &str =
        "ICNIRP 2010, Health Phys. 99(6):818-836, reference level 3 kHz-10 MHz (rms, unperturbed)";
    if (3e3..=10e6).contains(&frequency_hz) {
        out.push(e("icnirp2010_occupational_e", 170.0, Basis::Rms, S2010));
        out.push(b("icnirp2010_occupational_b", 100e-6, S2010));
        out.push(e("icnirp2010_public_e", 83.0, Basis::Rms, S2010));
        out.push(b("icnirp2010_public_b", 27e-6, S2010));
    } else {
        warnings.push(format!(
            "drive frequency {frequency_hz} Hz is outside 3 kHz-10 MHz: ICNIRP 2010 reference levels not applied"
        ));
    }
    if (0.1e6..=30e6).contains(&frequency_hz) {
        const L2020: &str = "ICNIRP 2020, Health Phys. 118(5):483-524, local exposure reference level 0.1-30 MHz (rms, unperturbed; B = mu0 H)";
        const W2020: &str = "ICNIRP 2020, Health Phys. 118(5):483-524, whole-body reference level 0.1-30 MHz (rms, 30-min average; B = mu0 H); values quoted from memory, check them against the published table";
        let ef = f_mhz.powf(0.7);
        out.push(e(
            "icnirp2020_occupational_local_e",
            1504.0 / ef,
            Basis::Rms,
            L2020,
        ));
        out.push(b(
            "icnirp2020_occupational_local_b",
            MU0_H_PER_M * 10.8 / f_mhz,
            L2020,
        ));
        out.push(e(
            "icnirp2020_public_local_e",
            671.0 / ef,
            Basis::Rms,
            L2020,
        ));
        out.push(b(
            "icnirp2020_public_local_b",
            MU0_H_PER_M * 4.9 / f_mhz,
            L2020,
        ));
        out.push(e(
            "icnirp2020_occupational_whole_body_e",
            660.0 / ef,
            Basis::Rms,
            W2020,
        ));
        out.push(b(
            "icnirp2020_occupational_whole_body_b",
            MU0_H_PER_M * 4.9 / f_mhz,
            W2020,
        ));
        out.push(e(
            "icnirp2020_public_whole_body_e",
            300.0 / ef,
            Basis::Rms,
            W2020,
        ));
        out.push(b(
            "icnirp2020_public_whole_body_b",
            MU0_H_PER_M * 2.2 / f_mhz,
            W2020,
        ));
    } else {
        warnings.push(format!(
            "drive frequency {frequency_hz} Hz is outside 0.1-30 MHz: ICNIRP 2020 reference levels not applied"
        ));
    }
    (out, warnings)
}

/// A user threshold from `--threshold NAME,E|B,LIMIT,rms|peak` (limit in V/m or T).
pub fn parse_user(text: &str) -> Result<Threshold, BadInput> {
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    let bad = |why: &str| {
        BadInput(format!(
            "--threshold {text:?}: {why}; expected NAME,E|B,LIMIT,rms|peak with LIMIT in V/m (E) or T (B)"
        ))
    };
    if parts.len() != 4 {
        return Err(bad("four comma-separated fields needed"));
    }
    let name = parts[0];
    if name.is_empty()
        || !name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        return Err(bad("the name must match [A-Za-z0-9_-]+"));
    }
    let (quantity, unit) = match parts[1] {
        "E" | "e" => (Quantity::E, "V/m"),
        "B" | "b" => (Quantity::B, "T"),
        _ => return Err(bad("the quantity must be E or B")),
    };
    let limit = parts[2]
        .parse::<f64>()
        .ok()
        .filter(|x| x.is_finite() && *x > 0.0)
        .ok_or_else(|| bad("the limit must be a positive number"))?;
    let basis = match parts[3] {
        "rms" => Basis::Rms,
        "peak" => Basis::Peak,
        _ => return Err(bad("the basis must be rms or peak")),
    };
    Ok(Threshold {
        name: name.into(),
        quantity,
        limit,
        unit,
        basis,
        source: "user setting (--threshold)".into(),
        method: Method::FieldSearch,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn icnirp_levels_at_one_mhz() {
        let (t, w) = defaults(1e6, LONG_GAP_GRADIENT_V_PER_M);
        assert!(w.is_empty());
        let get = |n: &str| t.iter().find(|x| x.name == n).unwrap();
        // At 1 MHz the 2020 formulas reduce to their coefficients.
        assert_eq!(get("icnirp2020_public_local_e").limit, 671.0);
        assert!((get("icnirp2020_occupational_local_b").limit - 10.8 * MU0_H_PER_M).abs() < 1e-18);
        assert!(
            get("icnirp2020_public_whole_body_e")
                .source
                .contains("from memory")
        );
        assert_eq!(get("icnirp2010_public_b").limit, 27e-6);
        let e = get("icnirp2010_occupational_e");
        assert!((e.peak_limit() - 170.0 * 2f64.sqrt()).abs() < 1e-12);
        assert_eq!(get("air_breakdown").peak_limit(), 3e6);
    }

    #[test]
    fn out_of_range_frequencies_drop_families_with_a_warning() {
        let (t, w) = defaults(50e6, LONG_GAP_GRADIENT_V_PER_M);
        assert_eq!(t.len(), 2);
        assert_eq!(w.len(), 2);
    }

    #[test]
    fn user_thresholds() {
        let t = parse_user("fence,B,5e-6,rms").unwrap();
        assert_eq!(t.quantity, Quantity::B);
        assert!(
            parse_user("fence,X,1,rms")
                .unwrap_err()
                .0
                .contains("--threshold")
        );
        assert!(parse_user("fence,E,-1,rms").is_err());
    }
}
