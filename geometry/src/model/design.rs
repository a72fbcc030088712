//! The validated design: windings, electrodes, ground plane, drive and clearance settings.

use crate::model::clearance::ClearanceSettings;
use crate::model::drive::Drive;
use crate::model::electrode::{Electrode, Ground};
use crate::model::media::Media;
use crate::model::winding::Winding;

/// Design-file version this build writes and reads by default.
pub const CURRENT_VERSION: u32 = 1;

/// A validated design: windings and electrodes in file order, the ground plane, the drive.
///
/// `Design::default()` is an empty version-1 design in free space with no drive; build one in
/// code with `Design { windings, ..Default::default() }`.
#[derive(Debug, Clone, PartialEq)]
pub struct Design {
    /// Design-file version.
    pub version: u32,
    /// Windings in file order.
    pub windings: Vec<Winding>,
    /// Electrodes in file order (`[[electrode]]`, see [`crate::file::electrode`]).
    pub electrodes: Vec<Electrode>,
    /// The grounded plane (`[ground]`), None for free space.
    pub ground: Option<Ground>,
    /// The excitation (`[drive]`, see [`crate::file::drive`]).
    pub drive: Drive,
    /// Clearance thresholds and search settings (`[clearance]`, see [`crate::file::clearance`]).
    pub clearance: ClearanceSettings,
    /// Dielectrics, enclosure and mesh settings of the finite-element electric solver
    /// (`[[dielectric]]`, `[enclosure]`, `[mesh]`, see [`crate::file::dielectric`]); they act on
    /// E only.
    pub media: Media,
}

impl Default for Design {
    fn default() -> Self {
        Design {
            version: CURRENT_VERSION,
            windings: Vec::new(),
            electrodes: Vec::new(),
            ground: None,
            drive: Drive::default(),
            clearance: ClearanceSettings::default(),
            media: Media::default(),
        }
    }
}
