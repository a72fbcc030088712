//! The excitation of a design: drive frequency, peak currents and peak potentials.

use crate::model::electrode::End;

/// A conductor's potential in `[drive] potentials` (peak V).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PotentialSpec {
    /// An electrode's potential (V).
    Uniform(f64),
    /// A winding's potentials at its base (start) and top (end) (V).
    Ends {
        /// Potential at the base (V).
        base_v: f64,
        /// Potential at the top (V).
        top_v: f64,
    },
}

/// How the primary is driven (`[drive] kind`).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum DriveKind {
    /// No drive model: the currents and potentials are given explicitly (`currents`,
    /// `potentials`), a snapshot of peak values.
    #[default]
    Explicit,
    /// A spark gap discharging the tank capacitor into the primary.
    SparkGap(SparkGap),
    /// A sinusoidal primary current or voltage (a solid-state or self-oscillating driver).
    Driven(Driven),
}

/// A spark-gap drive: the tank capacitor charged to a peak voltage, discharged through an arc.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SparkGap {
    /// The primary (tank) capacitor (F).
    pub tank_capacitance_f: f64,
    /// Peak charge voltage of the tank capacitor (V).
    pub charge_voltage_v: f64,
    /// The arc's resistance while it conducts (ohm; the user's value).
    pub gap_resistance_ohm: f64,
    /// Bangs per second (Hz), for the mean power and the duty cycle.
    pub break_rate_hz: Option<f64>,
}

/// The amplitude of a driven primary.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PrimaryAmplitude {
    /// Peak primary current (A).
    CurrentA(f64),
    /// Peak voltage across the primary circuit (V), a series source.
    VoltageV(f64),
}

/// A driven primary: a sinusoidal current or voltage at the drive frequency (`[drive]
/// frequency`, or by default the coupled system's resonance nearest the secondary's first).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Driven {
    /// The amplitude.
    pub amplitude: PrimaryAmplitude,
}

/// What the secondary's base is tied to (`[drive] secondary_base`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SecondaryBase {
    /// The ground (the reference of every potential), the usual arrangement.
    #[default]
    Ground,
    /// The primary circuit's return terminal, itself the reference of the primary's voltages:
    /// in this model it holds the base at the reference potential as `Ground` does.
    PrimaryReturn,
}

/// The validated `[drive]` table (every part optional; see `validate_drive`).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Drive {
    /// Drive frequency (Hz): of the explicit drive or of a driven primary.
    pub frequency_hz: Option<f64>,
    /// Signed peak current (A) per winding name, in name order (explicit drive).
    pub currents_a: Vec<(String, f64)>,
    /// Peak potentials per conductor name, in name order (explicit drive).
    pub potentials_v: Vec<(String, PotentialSpec)>,
    /// The drive model.
    pub kind: DriveKind,
    /// A driven primary's series capacitor (F), if it has one (a spark gap's is in its
    /// [`SparkGap`]).
    pub tank_capacitance_f: Option<f64>,
    /// Inductance of the primary's leads (H) in series with the primary, 0 when not given.
    pub lead_inductance_h: f64,
    /// What the secondary's base is tied to.
    pub secondary_base: SecondaryBase,
    /// The secondary's potential profile: node values at equal steps from base to top,
    /// normalised to 1 at the top (a mode of the resonance model); None: linear.
    pub secondary_voltage_profile: Option<Vec<f64>>,
    /// The secondary's current profile: one value per section of equal turns from base to top,
    /// 1 in the first (a mode of the resonance model): section k carries its `currents` entry
    /// times value k; None: uniform.
    pub secondary_current_profile: Option<Vec<f64>>,
    /// How the currents and potentials were derived, when a drive model set them (for the
    /// messages of the commands that use them); None when they come from the file.
    pub derived: Option<String>,
}

impl Drive {
    /// The tank capacitor (F): a spark gap's, or a driven primary's series capacitor.
    pub fn tank_capacitance(&self) -> Option<f64> {
        match self.kind {
            DriveKind::SparkGap(s) => Some(s.tank_capacitance_f),
            DriveKind::Driven(_) => self.tank_capacitance_f,
            DriveKind::Explicit => None,
        }
    }

    /// Peak current (A) of a winding (0 when absent).
    pub fn current_a(&self, winding: &str) -> f64 {
        self.currents_a
            .iter()
            .find(|(n, _)| n == winding)
            .map_or(0.0, |(_, i)| *i)
    }

    /// Potential entry of a conductor, if any.
    pub fn potential(&self, name: &str) -> Option<PotentialSpec> {
        self.potentials_v
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, p)| *p)
    }

    /// The potential (V) of a winding's end: from its `[base, top]` entry, 0 when absent.
    pub fn terminal_v(&self, winding: &str, end: End) -> f64 {
        match (self.potential(winding), end) {
            (Some(PotentialSpec::Ends { base_v, .. }), End::Base) => base_v,
            (Some(PotentialSpec::Ends { top_v, .. }), End::Top) => top_v,
            _ => 0.0,
        }
    }
}

/// What a later computation needs from `[drive]`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct DriveNeeds {
    /// At least one nonzero current (B fields).
    pub currents: bool,
    /// At least one nonzero potential (E fields).
    pub potentials: bool,
    /// A frequency (validity warnings, exposure limits).
    pub frequency: bool,
}
