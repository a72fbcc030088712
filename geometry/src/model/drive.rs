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

/// The validated `[drive]` table (every part optional; see [`crate::query::checks::validate_drive`]).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Drive {
    /// Drive frequency (Hz).
    pub frequency_hz: Option<f64>,
    /// Signed peak current (A) per winding name, in name order.
    pub currents_a: Vec<(String, f64)>,
    /// Peak potentials per conductor name, in name order.
    pub potentials_v: Vec<(String, PotentialSpec)>,
}

impl Drive {
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
