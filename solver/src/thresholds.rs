//! Field thresholds for clearance estimates and contour lines, each with its source.
//!
//! Exposure reference levels are rms values of the unperturbed field; the solver gives peak
//! amplitudes of a sinusoidal drive, so a reference level L (rms) is compared with
//! |peak| / sqrt(2), i.e. the peak field is compared with sqrt(2) L. Breakdown strengths are
//! compared with the peak field directly.
//!
//! [`for_design`] gives the thresholds of a run: the built-in sets a design's `[clearance]`
//! table keeps, its own thresholds, then the caller's; each says who set it.

use crate::constants::MU0;
use coilfield_geometry::{ClearanceSettings, DefaultSet, Design, FieldQuantity, LimitBasis};
use serde::Serialize;

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
    /// rms over time of a pulsed drive (a spark gap's bangs, averaged over one break period):
    /// compared with peak times the drive's rms factor ([`Threshold::rms_factor`]).
    #[serde(rename = "time-averaged")]
    TimeAveraged,
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
    /// Who set it: a built-in default, the design file or the command line.
    pub set_by: String,
    /// For [`Basis::TimeAveraged`]: the drive's rms over time divided by its peak.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub rms_factor: Option<f64>,
}

impl Threshold {
    /// The limit expressed as a peak amplitude (unit as `unit`).
    pub fn peak_limit(&self) -> f64 {
        match self.basis {
            Basis::Rms => self.limit * std::f64::consts::SQRT_2,
            Basis::Peak => self.limit,
            Basis::TimeAveraged => {
                self.limit / self.rms_factor.unwrap_or(std::f64::consts::FRAC_1_SQRT_2)
            }
        }
    }
}

/// Whether a threshold's reference level averages over time: the ICNIRP 2020 levels (whole
/// body over 30 minutes, local over 6 minutes: heating). The ICNIRP 2010 levels (nerve
/// stimulation) and breakdown act on the instantaneous field.
pub fn averages_over_time(t: &Threshold) -> bool {
    t.name.starts_with("icnirp2020_")
}

/// Time-averaged versions of the thresholds that average over time, for a pulsed drive whose
/// fields have rms over time / peak = `rms_factor_e` (E) and `rms_factor_b` (B): each named
/// `<name>_time_averaged`, compared with peak x factor instead of peak / sqrt(2).
pub fn time_averaged_variants(
    thresholds: &[Threshold],
    rms_factor_e: f64,
    rms_factor_b: f64,
) -> Vec<Threshold> {
    thresholds
        .iter()
        .filter(|t| averages_over_time(t) && t.basis == Basis::Rms)
        .map(|t| Threshold {
            name: format!("{}_time_averaged", t.name),
            basis: Basis::TimeAveraged,
            rms_factor: Some(match t.quantity {
                Quantity::E => rms_factor_e,
                Quantity::B => rms_factor_b,
            }),
            source: format!(
                "{}; compared with the field's rms over one break period of the spark gap",
                t.source
            ),
            ..t.clone()
        })
        .collect()
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
        set_by: BUILT_IN.into(),
        rms_factor: None,
    }
}

/// `set_by` of a built-in threshold.
pub const BUILT_IN: &str = "built-in default";

fn b(name: &str, limit: f64, source: &str) -> Threshold {
    Threshold {
        name: name.into(),
        quantity: Quantity::B,
        limit,
        unit: "T",
        basis: Basis::Rms,
        source: source.into(),
        method: Method::FieldSearch,
        set_by: BUILT_IN.into(),
        rms_factor: None,
    }
}

/// Every built-in threshold at drive frequency `frequency_hz`, with a warning for each family
/// whose frequency range does not cover it.
pub fn defaults(frequency_hz: f64, long_gap_v_per_m: f64) -> (Vec<Threshold>, Vec<String>) {
    let mut out = vec![
        e(
            "air_breakdown",
            AIR_BREAKDOWN_V_PER_M,
            Basis::Peak,
            "American Meteorological Society, Glossary of Meteorology, 2nd ed., 2000 (edition and year from memory), entry \"dielectric strength\": about 3 MV/m for dry air at sea level in a uniform field",
        ),
        Threshold {
            method: Method::MeanGradient,
            ..e(
                "long_gap_mean_gradient",
                long_gap_v_per_m,
                Basis::Peak,
                "common practice, no published source: mean breakdown gradient of gaps of metres (a user setting: [clearance] long_gap_gradient or --long-gap-gradient)",
            )
        },
    ];
    let mut warnings = Vec::new();
    let f_mhz = frequency_hz / 1e6;
    const S2010: &str = "ICNIRP 2010, Guidelines for limiting exposure to time-varying electric and magnetic fields (1 Hz to 100 kHz), Health Phys. 99(6):818-836, reference level 3 kHz-10 MHz (rms, unperturbed)";
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
        const L2020: &str = "ICNIRP 2020, Guidelines for limiting exposure to electromagnetic fields (100 kHz to 300 GHz), Health Phys. 118(5):483-524, local exposure reference level 0.1-30 MHz (rms, unperturbed; B = mu0 H)";
        const W2020: &str = "ICNIRP 2020, Guidelines for limiting exposure to electromagnetic fields (100 kHz to 300 GHz), Health Phys. 118(5):483-524, whole-body reference level 0.1-30 MHz (rms, 30-min average; B = mu0 H); values quoted from memory, check them against the published table";
        let ef = f_mhz.powf(0.7);
        out.push(e(
            "icnirp2020_occupational_local_e",
            1504.0 / ef,
            Basis::Rms,
            L2020,
        ));
        out.push(b(
            "icnirp2020_occupational_local_b",
            MU0 * 10.8 / f_mhz,
            L2020,
        ));
        out.push(e(
            "icnirp2020_public_local_e",
            671.0 / ef,
            Basis::Rms,
            L2020,
        ));
        out.push(b("icnirp2020_public_local_b", MU0 * 4.9 / f_mhz, L2020));
        out.push(e(
            "icnirp2020_occupational_whole_body_e",
            660.0 / ef,
            Basis::Rms,
            W2020,
        ));
        out.push(b(
            "icnirp2020_occupational_whole_body_b",
            MU0 * 4.9 / f_mhz,
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
            MU0 * 2.2 / f_mhz,
            W2020,
        ));
    } else {
        warnings.push(format!(
            "drive frequency {frequency_hz} Hz is outside 0.1-30 MHz: ICNIRP 2020 reference levels not applied"
        ));
    }
    (out, warnings)
}

/// The built-in set a default threshold belongs to.
fn set_of(name: &str) -> DefaultSet {
    if name == "air_breakdown" {
        DefaultSet::Breakdown
    } else if name == "long_gap_mean_gradient" {
        DefaultSet::LongGapGradient
    } else if name.contains("_public_") {
        DefaultSet::IcnirpPublic
    } else {
        DefaultSet::IcnirpOccupational
    }
}

/// The long-gap gradient (V/m) and who set it, for `set_by`: the caller's override, else the
/// design file's, else the default.
fn long_gap_origin(
    over: Option<(f64, &str)>,
    settings: &ClearanceSettings,
    label: &str,
) -> (f64, String) {
    match (over, settings.long_gap_gradient_v_per_m) {
        (Some((v, set_by)), _) => (v, set_by.to_string()),
        (None, Some(v)) => (
            v,
            format!("design file {label} ([clearance] long_gap_gradient)"),
        ),
        (None, None) => (LONG_GAP_GRADIENT_V_PER_M, BUILT_IN.into()),
    }
}

/// A threshold of the design file's `[[clearance.threshold]]`.
fn from_design(t: &coilfield_geometry::ThresholdSpec, label: &str) -> Threshold {
    let (quantity, unit) = match t.quantity {
        FieldQuantity::E => (Quantity::E, "V/m"),
        FieldQuantity::B => (Quantity::B, "T"),
    };
    Threshold {
        name: t.name.clone(),
        quantity,
        limit: t.limit_si,
        unit,
        basis: match t.basis {
            LimitBasis::Rms => Basis::Rms,
            LimitBasis::Peak => Basis::Peak,
        },
        source: t.source.clone(),
        method: Method::FieldSearch,
        set_by: format!("design file {label} ([[clearance.threshold]])"),
        rms_factor: None,
    }
}

/// Put `t` in `list`, replacing a threshold of the same name.
fn put(list: &mut Vec<Threshold>, t: Threshold) {
    match list.iter_mut().find(|o| o.name == t.name) {
        Some(slot) => *slot = t,
        None => list.push(t),
    }
}

/// The thresholds of a run: the built-in sets the design's `[clearance] defaults` keeps, then
/// its own thresholds, then `extra` (the caller's, e.g. from a command line); a later one with
/// the name of an earlier one replaces it. The long-gap gradient (V/m) is `long_gap`'s value
/// (with who set it, for `set_by`), else the design file's, else
/// [`LONG_GAP_GRADIENT_V_PER_M`]. Without a drive frequency (`frequency_hz`) the exposure
/// levels are left out with a warning. `label` names the design file in `set_by`. Returns the
/// thresholds and the warnings.
pub fn for_design(
    design: &Design,
    label: &str,
    frequency_hz: Option<f64>,
    long_gap: Option<(f64, &str)>,
    extra: &[Threshold],
) -> (Vec<Threshold>, Vec<String>) {
    let settings = &design.clearance;
    let (long_gap, long_gap_by) = long_gap_origin(long_gap, settings, label);
    let wanted = |set: DefaultSet| settings.defaults.contains(&set);
    let icnirp = wanted(DefaultSet::IcnirpPublic) || wanted(DefaultSet::IcnirpOccupational);
    let (all, mut warnings) = match frequency_hz {
        Some(f) => defaults(f, long_gap),
        None => {
            let mut w = Vec::new();
            if icnirp {
                w.push("no [drive] frequency: exposure reference levels left out".to_string());
            }
            (defaults(0.0, long_gap).0, w)
        }
    };
    if !icnirp {
        // Out-of-range warnings are about sets the user left out.
        warnings.clear();
    }
    let mut out: Vec<Threshold> = all
        .into_iter()
        .filter(|t| wanted(set_of(&t.name)))
        .map(|mut t| {
            if t.method == Method::MeanGradient {
                t.set_by = long_gap_by.clone();
            }
            t
        })
        .collect();
    for t in &settings.thresholds {
        put(&mut out, from_design(t, label));
    }
    for t in extra {
        put(&mut out, t.clone());
    }
    if out.is_empty() {
        warnings.push(format!(
            "no thresholds: {label} [clearance] defaults = [] and no threshold given"
        ));
    }
    (out, warnings)
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
        assert!((get("icnirp2020_occupational_local_b").limit - 10.8 * MU0).abs() < 1e-18);
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
    fn design_sets_pick_their_thresholds() {
        let text = "[[winding]]\nshape = \"ring\"\norigin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\nradius = 0.1\nwire_diameter = 0.001\n[clearance]\ndefaults = [\"icnirp_public\"]\n";
        let d = coilfield_geometry::parse_design(text, "d.toml").unwrap();
        let (t, w) = for_design(&d, "d.toml", Some(1e6), None, &[]);
        assert!(w.is_empty());
        assert_eq!(t.len(), 6, "{t:?}");
        assert!(
            t.iter()
                .all(|x| x.name.contains("_public_") && x.set_by == BUILT_IN)
        );
        // No frequency: the exposure sets fall away with a warning.
        let extra = Threshold {
            name: "x".into(),
            quantity: Quantity::E,
            limit: 1.0,
            unit: "V/m",
            basis: Basis::Peak,
            source: "test value".into(),
            method: Method::FieldSearch,
            set_by: "test".into(),
            rms_factor: None,
        };
        let (t, w) = for_design(&d, "d.toml", None, None, &[extra]);
        assert_eq!(t.len(), 1);
        assert!(w[0].contains("no [drive] frequency"));
    }
}
