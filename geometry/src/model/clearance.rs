//! Clearance settings of a design: thresholds and where the clearance search looks.

/// Which field a threshold limits.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FieldQuantity {
    /// Electric field (V/m).
    E,
    /// Magnetic flux density (T).
    B,
}

/// Whether a limit is an rms or a peak value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LimitBasis {
    /// rms of a sinusoid: compared with peak / sqrt(2).
    Rms,
    /// Peak: compared with the peak amplitude.
    Peak,
}

/// A built-in threshold set.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DefaultSet {
    /// Air breakdown in a uniform field.
    Breakdown,
    /// The mean breakdown gradient of long gaps.
    LongGapGradient,
    /// ICNIRP reference levels for the general public.
    IcnirpPublic,
    /// ICNIRP reference levels for occupational exposure.
    IcnirpOccupational,
}

/// Values of `defaults`, in the order of [`DefaultSet`].
pub const DEFAULT_SET_NAMES: &[&str] = &[
    "breakdown",
    "long_gap_gradient",
    "icnirp_public",
    "icnirp_occupational",
];

pub(crate) const ALL_SETS: [DefaultSet; 4] = [
    DefaultSet::Breakdown,
    DefaultSet::LongGapGradient,
    DefaultSet::IcnirpPublic,
    DefaultSet::IcnirpOccupational,
];

/// A threshold from `[[clearance.threshold]]`.
#[derive(Debug, Clone, PartialEq)]
pub struct ThresholdSpec {
    /// Unique name.
    pub name: String,
    /// E or B.
    pub quantity: FieldQuantity,
    /// The limit: V/m for E, T for B, on the `basis` given.
    pub limit_si: f64,
    /// rms or peak.
    pub basis: LimitBasis,
    /// Where the value comes from, as written.
    pub source: String,
}

/// The validated `[clearance]` table.
#[derive(Debug, Clone, PartialEq)]
pub struct ClearanceSettings {
    /// Built-in sets to include (all by default).
    pub defaults: Vec<DefaultSet>,
    /// User thresholds in file order.
    pub thresholds: Vec<ThresholdSpec>,
    /// Mean breakdown gradient of long gaps (V/m, peak), if set.
    pub long_gap_gradient_v_per_m: Option<f64>,
    /// Farthest distance searched (m), if set.
    pub max_distance_m: Option<f64>,
    /// Extra heights of horizontal rays (m along the secondary's axis from its base).
    pub heights_m: Vec<f64>,
    /// Distances (m) from the axis at the top electrode's height where fields are reported.
    pub distances_m: Vec<f64>,
}

impl Default for ClearanceSettings {
    fn default() -> Self {
        ClearanceSettings {
            defaults: ALL_SETS.to_vec(),
            thresholds: Vec::new(),
            long_gap_gradient_v_per_m: None,
            max_distance_m: None,
            heights_m: Vec::new(),
            distances_m: Vec::new(),
        }
    }
}

/// Least `max_distance` (m): the ray search starts at 1 mm and needs room to bisect.
pub const MIN_MAX_DISTANCE_M: f64 = 0.01;
