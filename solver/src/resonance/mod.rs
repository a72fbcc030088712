//! Resonance, tuning and drive: from the geometry to the secondary's frequency, the primary's
//! tuning capacitance or tap, the Q of both, and the top voltage a drive produces.
//!
//! # Method
//! **Distributed model of the secondary.** The secondary (the one winding with
//! `role = "secondary"`, a helix) is cut into n sections of equal turns along its winding. The
//! sections' inductance matrix is made of blocks of the turn-to-turn matrix of its ring model
//! (`sections`: Toeplitz along the uniform stack, its image part over a conducting ground Hankel,
//! every entry through the one path [`crate::assembly::inductance_entry`]), so the sections add
//! up exactly to the winding's inductance. The nodal capacitance matrix comes from the
//! boundary-element solver with the potential linear within each section between its end nodes
//! (hat functions; [`crate::electrostatic::Solution::nodal_capacitance`]), electrodes
//! connected to the secondary attached to their node, the ground plane included; the base node
//! is held at 0 V. The lowest modes solve the symmetric generalised eigenproblem of the
//! lumped-element ladder with full inductance and capacitance matrices
//! ([`crate::circuit::ladder_modes`]): the treatment of a winding as a chain of sections with
//! mutual inductances and capacitances, as for transformer windings under impulses
//! (P. A. Abetti, "Transformer models for the determination of transient voltages", AIEE
//! Trans. 72, 1953; F. de Leon and A. Semlyen, "Efficient calculation of elementary parameters
//! of transformers", IEEE Trans. Power Delivery 7(1), 1992; both from memory for the details).
//! n is doubled from 8 until the first frequency changes by less than 1e-4 relative (cap 256
//! sections, at most one per turn); the last change is f1's error estimate.
//!
//! **Lumped model.** f = 1 / (2 pi sqrt(L_s (C_self + C_top))) with the linear-profile
//! self-capacitance C_self and the capacitance the top electrode adds at the top, C_top (the
//! secondary's linear-profile capacitance with the electrode minus without it): the usual
//! builder's estimate, reported beside the distributed one.
//!
//! **Primary, coupling and drive.** The primary in use (its tap) against each section gives the
//! mode's coupling; the first mode, referred to the top voltage (C_top_modal = v^T C v,
//! L_top = 1 / (omega1^2 C_top_modal)), is the secondary loop of a two-loop circuit with the
//! primary (its tap's inductance plus the lead inductance, the tank capacitor, the losses),
//! whose normal modes split the frequency and which a spark gap rings down or a driver holds
//! in steady state ([`crate::circuit`]).
//!
//! # What it leaves out
//! - Losses in the eigenproblem (the modes are lossless; Q enters the drive models only).
//! - The fields of individual wires: the winding is a sheet in the electric model.
//! - Retardation: quasi-static throughout; the secondary's wire may be a sizeable fraction of a
//!   wavelength (the distributed model accounts for the standing wave along the winding, not
//!   for radiation other than the radiation resistance).
//! - The primary's own potentials in the electric model.
//!
//! **Dielectrics and an enclosure.** With a coil form or a grounded room (chosen by
//! [`ResonanceParams::electric`], automatically when the design has one) the nodal capacitance
//! matrix comes from the finite-element model instead ([`crate::fem::FemNodal`]: one solve per
//! vertex of the winding surface, meshed with at least two vertices per section of the finest
//! section count, and C_n = P^T C P for every n without another solve); the bare
//! self-capacitance from the same model without the connected electrodes. They act on the
//! capacitances only: L and M ignore them.

mod drive;
mod sections;

use crate::assembly::{WindingModel, inductance_entry};
use crate::circuit::{LadderMode, Loops, equivalent_capacitance_f, ladder_modes, loop_modes};
use crate::electrostatic::{Params, Problem, SelfCapacitance, Solution};
use crate::error::SolverError;
use crate::fem::{Domain, ElectricSolver, FemNodal, FemProblem, FromDesignError};
use crate::losses::{self, ProximityModel};
use crate::numtext::{percent, shortest, si};
use crate::par::Par;
use coilfield_geometry::{
    Design, DriveKind, End, PotentialSpec, Role, SecondaryBase, Shape, Winding,
};
use nalgebra::DMatrix;
use sections::{TurnMatrix, equal_bounds};
use serde::Serialize;
use std::f64::consts::TAU;

pub use drive::{DriveResult, Envelope};

/// Air breakdown in a uniform field (V/m, peak): about 3 MV/m for dry air at sea level
/// (American Meteorological Society, Glossary of Meteorology, "dielectric strength"; edition
/// from memory).
pub const AIR_BREAKDOWN_V_PER_M: f64 = 3e6;

/// Most sections of the distributed model.
pub const MAX_SECTIONS: usize = 256;

/// Sections the convergence in n starts from.
pub const FIRST_SECTIONS: usize = 8;

/// Most turns of a secondary the distributed model takes: its section blocks sum every pair
/// of turns (a 30,000-turn winding takes about a second).
pub const MAX_TURNS: f64 = 30_000.0;

/// Relative change of the first frequency at which the doubling of sections stops.
pub const SECTION_TOLERANCE: f64 = 1e-4;

/// Modes reported.
pub const MODES: usize = 3;

/// Options of the resonance model; every value is valid.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ResonanceParams {
    /// Sections of the distributed model: None to converge (doubling from
    /// [`FIRST_SECTIONS`] until f1 changes by less than [`SECTION_TOLERANCE`]).
    pub sections: Option<usize>,
    /// Panels of each boundary-element solve (the secondary gets at least 4 per section).
    pub panels: usize,
    /// With `sections` given: whether to solve at half the sections too for f1's error
    /// estimate (else the estimate is NaN: a sweep's points reuse the base's count).
    pub estimate_error: bool,
    /// The electric solver of the capacitances.
    pub electric: ElectricSolver,
}

impl Default for ResonanceParams {
    fn default() -> Self {
        ResonanceParams {
            sections: None,
            panels: 1000,
            estimate_error: true,
            electric: ElectricSolver::Auto,
        }
    }
}

/// One normal mode of the secondary.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Mode {
    /// Natural frequency (Hz).
    pub frequency_hz: f64,
    /// Node voltages from base to top, 1 at the top.
    pub voltage_profile: Vec<f64>,
    /// Section currents from base to top, 1 in the first section.
    pub current_profile: Vec<f64>,
}

/// The parts of a resonator's loss resistance at its frequency (ohm, referred to the current
/// the resonator's Q is defined with).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LossParts {
    /// DC resistance of the wire (ohm).
    pub dc_ohm: f64,
    /// Skin effect above DC (ohm).
    pub skin_ohm: f64,
    /// Proximity effect of the neighbouring turns (ohm).
    pub proximity_ohm: f64,
    /// Radiation (ohm).
    pub radiation_ohm: f64,
    /// The proximity model used.
    pub proximity_model: &'static str,
}

impl LossParts {
    /// The total (ohm).
    pub fn total_ohm(&self) -> f64 {
        self.dc_ohm + self.skin_ohm + self.proximity_ohm + self.radiation_ohm
    }
}

/// The secondary's resonance.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SecondaryResonance {
    /// Winding name.
    pub name: String,
    /// First resonance of the distributed model (Hz).
    pub frequency_hz: f64,
    /// |f1(n) - f1(n/2)| (Hz): the change at the last doubling of the sections (NaN, null in
    /// JSON, when not estimated: a sweep's points).
    pub frequency_error_estimate_hz: f64,
    /// Lumped estimate 1 / (2 pi sqrt(L_s (C_self + C_top))) (Hz).
    pub lumped_frequency_hz: f64,
    /// Low-frequency inductance L_s (H), images of a conducting ground included.
    pub inductance_h: f64,
    /// C_eq = 1 / ((2 pi f1)^2 L_s) (F): the figure to compare with Medhurst's.
    pub equivalent_capacitance_f: f64,
    /// The first mode's capacitance referred to the top, 2 W / V_top^2 (F).
    pub modal_top_capacitance_f: f64,
    /// The first mode's inductance referred to the top, 1 / ((2 pi f1)^2 C_top_modal) (H).
    pub modal_top_inductance_h: f64,
    /// Linear-profile self-capacitance without the connected electrodes (F).
    pub self_capacitance_f: f64,
    /// What the connected electrodes add at the top (F), linear profile.
    pub top_capacitance_f: f64,
    /// |V_top / I_base| of the first mode (ohm).
    pub top_to_base_ohm: f64,
    /// Sections of the distributed model.
    pub sections: usize,
    /// f1 at each section count tried, (n, f1 (Hz)).
    pub convergence: Vec<(usize, f64)>,
    /// The lowest modes.
    pub modes: Vec<Mode>,
    /// Q of the first mode.
    pub q: f64,
    /// The first mode's loss resistance referred to the base current, by part.
    pub losses: LossParts,
    /// The top voltage (V, peak) at which the top electrode's peak surface field reaches air
    /// breakdown, with the first mode's profile; None without a top electrode.
    pub breakout_top_voltage_v: Option<f64>,
    /// Effective height (m) of the radiator: the charge centroid of the first mode above the
    /// ground plane (above the base without one).
    pub effective_height_m: f64,
    /// Wire length (m).
    pub wire_length_m: f64,
    /// The electric solver of the capacitances: "bem" or "fem".
    pub electric_solver: &'static str,
}

/// One point of f against the tap (at every whole turn).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TapPoint {
    /// Turns in use.
    pub tap_turns: f64,
    /// Inductance of the part in use (H).
    pub inductance_h: f64,
    /// Resonance of that inductance plus the lead with the tank capacitor (Hz).
    pub frequency_hz: f64,
}

/// The primary's tuning.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PrimaryTuning {
    /// Winding name.
    pub name: String,
    /// Inductance of the whole winding (H).
    pub inductance_h: f64,
    /// Turns in use (the design's tap, or the tap found for the tank capacitor).
    pub tap_turns: f64,
    /// Whether `tap_turns` was found here (a spark gap without `tap_turns`).
    pub tap_found: bool,
    /// Inductance of the part in use (H).
    pub tap_inductance_h: f64,
    /// Lead inductance in series (H).
    pub lead_inductance_h: f64,
    /// The capacitance that tunes the part in use (with the leads) to f1 (F).
    pub tuning_capacitance_f: f64,
    /// The tap that tunes the tank capacitor to f1 (turns), when there is a tank capacitor and
    /// one exists within the winding.
    pub tap_for_tank_turns: Option<f64>,
    /// Geometric coupling k of the part in use with the secondary.
    pub coupling_at_tap: f64,
    /// Coupling of the part in use with the secondary's first mode (its current profile).
    pub modal_coupling: f64,
    /// Q of the primary circuit at f1 (wire and leads' own inductance; the gap excluded).
    pub q: f64,
    /// Its wire's loss resistance at f1 (ohm).
    pub resistance_ohm: f64,
    /// f against the tap at every whole turn (with a tank capacitor).
    pub frequency_against_tap: Vec<TapPoint>,
}

/// The whole answer.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Resonance {
    /// The secondary.
    pub secondary: SecondaryResonance,
    /// The primary, when there is one.
    pub primary: Option<PrimaryTuning>,
    /// Geometric coupling of the primary in use and the secondary.
    pub coupling: Option<f64>,
    /// Normal modes of the pair (Hz), low then high: the primary with its tank capacitor, or
    /// (an explicit drive without one) tuned to f1 by the tuning capacitance.
    pub split_frequencies_hz: Option<[f64; 2]>,
    /// A primary without a capacitor (a driven exciter): the one resonance of the coupled
    /// system, the secondary's mode pulled by the primary (Hz).
    pub coupled_frequency_hz: Option<f64>,
    /// The drive model's figures, when `[drive] kind` is set.
    pub drive: Option<DriveResult>,
    /// What the secondary's base is tied to.
    pub secondary_base: &'static str,
    /// Caveats.
    pub warnings: Vec<String>,
}

/// The secondary's distributed model at n sections.
#[derive(Debug, Clone)]
struct Distributed {
    n: usize,
    /// Section inductance matrix (H).
    inductance: DMatrix<f64>,
    modes: Vec<LadderMode>,
    electric: SectionElectric,
    /// The (n + 1) x (n + 1) nodal capacitance matrix (F), base node first.
    nodal_f: DMatrix<f64>,
    /// Height (m) of each node above the secondary's base, along its axis.
    node_heights_m: Vec<f64>,
    bounds_turns: Vec<f64>,
}

/// The electric part of the distributed model at n sections.
#[derive(Debug, Clone)]
enum SectionElectric {
    /// Boundary elements solved for these sections.
    Bem(Box<Solution>),
    /// The finite-element fine basis, shared by every section count.
    Fem(std::sync::Arc<FemElectric>),
}

/// The finite-element electric model of a secondary: its fine nodal matrix and its bare
/// self-capacitance.
#[derive(Debug, Clone)]
struct FemElectric {
    nodal: FemNodal,
    bare_f: f64,
}

impl FemElectric {
    /// Mesh and solve the secondary's electric model with `sheet_pieces` pieces of its winding
    /// surface.
    fn new(design: &Design, source: &str, sheet_pieces: usize) -> Result<Self, SolverError> {
        let to_solver = |e: FromDesignError| match e {
            FromDesignError::Design(d) => SolverError::Design(d),
            FromDesignError::Solver(s) => s,
        };
        let domain =
            Domain::from_design_sheet(design, source, Some(sheet_pieces)).map_err(to_solver)?;
        let nodal = FemProblem::new(domain.clone())?.nodal()?;
        let bare = FemProblem::new(domain.without_connected())?.solve()?;
        let bare_f =
            bare.self_capacitance_f()
                .map(|(c, _)| c)
                .ok_or_else(|| SolverError::Resonance {
                    reason: "the electric model has no secondary".into(),
                })?;
        Ok(FemElectric { nodal, bare_f })
    }
}

impl SectionElectric {
    /// The secondary's linear-profile self-capacitance, bare and with its connected
    /// electrodes (F).
    fn self_capacitance(&self) -> Option<SelfCapacitance> {
        match self {
            SectionElectric::Bem(sol) => sol.self_capacitance_f(),
            SectionElectric::Fem(f) => Some(SelfCapacitance {
                bare_f: f.bare_f,
                total_f: f.nodal.capacitance_for_nodes_f(&[0.0, 1.0]),
            }),
        }
    }

    /// The largest surface field (V/m) of the named electrodes with node voltages `node_v`.
    fn peak_field_of(&self, names: &[&str], node_v: &[f64]) -> Result<f64, SolverError> {
        Ok(match self {
            SectionElectric::Bem(sol) => sol
                .peak_surface_fields_for_nodes(node_v)?
                .into_iter()
                .filter(|p| names.contains(&p.name.as_str()))
                .map(|p| p.field_v_per_m)
                .fold(0.0, f64::max),
            SectionElectric::Fem(f) => f
                .nodal
                .peak_fields_for_nodes(node_v)?
                .into_iter()
                .zip(&f.nodal.domain().conductors)
                .filter(|(_, c)| names.contains(&c.name.as_str()))
                .filter_map(|(p, _)| p.map(|p| p.0))
                .fold(0.0, f64::max),
        })
    }
}

/// The one winding with `role = "secondary"`, and the primary if there is one.
fn roles<'d>(
    design: &'d Design,
    source: &str,
) -> Result<(&'d Winding, Option<&'d Winding>), SolverError> {
    let with = |r: Role| design.windings.iter().filter(move |w| w.role == r);
    let secondaries: Vec<&Winding> = with(Role::Secondary).collect();
    let primaries: Vec<&Winding> = with(Role::Primary).collect();
    let bad = |reason: String| SolverError::Resonance {
        reason: format!("{source}: key 'role': {reason}"),
    };
    if secondaries.len() != 1 {
        return Err(bad(format!(
            "the resonance model needs exactly one winding with role = \"secondary\", and the \
             design has {}",
            secondaries.len()
        )));
    }
    if primaries.len() > 1 {
        return Err(bad(format!(
            "at most one winding may have role = \"primary\" (the design has {})",
            primaries.len()
        )));
    }
    let s = secondaries[0];
    if s.shape.turns().is_some_and(|t| t > MAX_TURNS) {
        return Err(SolverError::Resonance {
            reason: format!(
                "{source}: winding '{}': key 'turns': the distributed model handles up to \
                 {MAX_TURNS} turns (its section blocks cost the square of the turns)",
                s.name
            ),
        });
    }
    if !matches!(s.shape, Shape::Helix { .. }) {
        return Err(SolverError::Resonance {
            reason: format!(
                "{source}: winding '{}': key 'shape': the distributed model of the secondary \
                 needs a helix",
                s.name
            ),
        });
    }
    Ok((s, primaries.first().copied()))
}

/// Check that the resonance model can be built on `design`: exactly one helix secondary and at
/// most one primary (the error names `role` or `shape`). `source` labels messages.
pub fn resonance_roles(design: &Design, source: &str) -> Result<(), SolverError> {
    roles(design, source).map(|_| ())
}

/// The section count the distributed model may use for `turns` turns: at most one section
/// per turn and [`MAX_SECTIONS`].
fn section_cap(turns: f64) -> usize {
    (turns.floor() as usize).clamp(1, MAX_SECTIONS)
}

/// The secondary's length (m) along its axis.
fn secondary_shape_length_m(design: &Design) -> Option<f64> {
    design
        .windings
        .iter()
        .find(|w| w.role == Role::Secondary)
        .and_then(|w| match w.shape {
            Shape::Helix { length_m, .. } => Some(length_m),
            _ => None,
        })
}

/// The distributed model at `n` sections: its capacitances from boundary elements, or from
/// the finite-element model `fem` when one is given.
#[allow(clippy::too_many_arguments)]
fn distributed(
    design: &Design,
    source: &str,
    turn_matrix: &TurnMatrix,
    turns: f64,
    n: usize,
    params: &ResonanceParams,
    par: Par,
    fem: Option<&std::sync::Arc<FemElectric>>,
) -> Result<Distributed, SolverError> {
    let bounds_turns = equal_bounds(turns, n);
    let inductance = turn_matrix.sections(&bounds_turns, par);
    let (electric, nodal_f, node_heights_m) = match fem {
        None => {
            let problem = Problem::from_design(
                design,
                &Params {
                    panels: params.panels,
                    secondary_sections: Some(n),
                    ..Params::default()
                },
                source,
            )?;
            let solution = problem.solve(par)?;
            let nodal = solution.nodal_capacitance()?;
            let (matrix, heights) = (nodal.matrix_f.clone(), nodal.node_heights_m.clone());
            (SectionElectric::Bem(Box::new(solution)), matrix, heights)
        }
        Some(f) => {
            let length_m = match secondary_shape_length_m(design) {
                Some(l) => l,
                None => {
                    return Err(SolverError::Resonance {
                        reason: "the secondary is not a helix".into(),
                    });
                }
            };
            let heights = (0..=n).map(|j| length_m * j as f64 / n as f64).collect();
            (
                SectionElectric::Fem(f.clone()),
                f.nodal.section_matrix_f(n),
                heights,
            )
        }
    };
    // Node 0 (the base) is held at the reference potential: the free nodes are 1..=n.
    let capacitance = nodal_f.view((1, 1), (n, n)).into_owned();
    let modes = ladder_modes(&capacitance, &inductance, MODES.min(n))?.modes;
    Ok(Distributed {
        n,
        inductance,
        modes,
        electric,
        nodal_f,
        node_heights_m,
        bounds_turns,
    })
}

/// A winding's conductor at `f_hz`: its material (copper unless the design names another) and
/// its resistance per metre, DC and AC (ohm/m): solid round wire by the exact Kelvin-function
/// solution, tubing (`tube_wall`) by the exact Bessel solution of a tube. `source` labels
/// messages.
fn conductor_resistance(
    w: &Winding,
    f_hz: f64,
    source: &str,
) -> Result<(&'static losses::Conductor, f64, f64), SolverError> {
    let name = w.conductor.material.as_deref().unwrap_or("copper");
    let material = losses::conductor(name).map_err(|e| SolverError::Resonance {
        reason: format!("{source}: winding '{}': key 'conductor': {e}", w.name),
    })?;
    let (rho, mu_r) = (material.resistivity_ohm_m, material.relative_permeability);
    let b = w.wire_radius_m();
    Ok(match w.conductor.tube_wall_m {
        None => (
            material,
            losses::dc_resistance_round_wire_ohm_per_m(b, rho)?,
            losses::internal_impedance_round_wire(b, rho, mu_r, f_hz)?.resistance_ohm_per_m,
        ),
        Some(t) => {
            let area = std::f64::consts::PI * (b * b - (b - t) * (b - t));
            (
                material,
                rho / area,
                losses::internal_impedance_tube(b, t, rho, mu_r, f_hz)?.resistance_ohm_per_m,
            )
        }
    })
}

/// Length (m) of a winding's wire (the whole wire), or of its part in use: the one wire-length
/// function of the geometry crate, so every output prints the same figure.
fn wire_length_m(w: &Winding, in_use: bool) -> f64 {
    if !in_use {
        return coilfield_geometry::discretise::wire_length_m(w);
    }
    match w.shape {
        // A ring of N coincident turns: N circumferences.
        Shape::Ring {
            radius_m, count, ..
        } => TAU * radius_m * f64::from(count),
        _ => coilfield_geometry::discretise::filament_model(w).length_m(),
    }
}

/// Self-inductance (H) of a winding (its part in use), images over a conducting ground.
fn self_h(w: &Winding, design: &Design, par: Par) -> Result<f64, SolverError> {
    let m = WindingModel::of(w);
    let image = design
        .ground
        .filter(|g| g.conducting)
        .map(|g| crate::assembly::image_model(w, &g));
    Ok(inductance_entry(&m, &m, true, image.as_ref(), par)?.0)
}

/// The secondary's loss resistance at `f_hz` referred to the base current of the mode with
/// section current profile `phi` (1 in the first section), and the radiation part from the
/// mode's charges.
fn secondary_losses(
    w: &Winding,
    source: &str,
    d: &Distributed,
    phi: &[f64],
    node_v: &[f64],
    f_hz: f64,
    ground_z: Option<f64>,
) -> Result<(LossParts, f64, f64), SolverError> {
    let Shape::Helix {
        radius_m,
        length_m,
        turns,
        origin_m,
        axis,
    } = w.shape
    else {
        return Err(SolverError::Resonance {
            reason: "the secondary is not a helix".into(),
        });
    };
    let pitch_m = length_m / turns;
    let wire_len = turns * (TAU * radius_m).hypot(pitch_m);
    let (material, r_dc_per_m, r_ac_per_m) = conductor_resistance(w, f_hz, source)?;
    let r_dc = r_dc_per_m * wire_len;
    let r_skin = r_ac_per_m * wire_len;
    let delta = losses::skin_depth_m(
        material.resistivity_ohm_m,
        f_hz,
        material.relative_permeability,
    )?;
    // Close windings: Dowell's one-layer model; spaced ones: Butterworth's uniform field.
    let (model, model_name) = if pitch_m <= 2.5 * w.wire_diameter_m {
        (ProximityModel::DowellOneLayer, "Dowell one layer (1966)")
    } else {
        (
            ProximityModel::Butterworth {
                u: losses::BUTTERWORTH_U_LONG_COIL,
            },
            "Butterworth, u = pi^2 (1926)",
        )
    };
    let psi = losses::proximity_factor(model, w.wire_diameter_m, pitch_m, delta)?;
    let r_wire = r_skin * psi;
    // The wire's resistance spread along the winding by turns; the mode's losses
    // 1/2 sum_k R_k i_k^2 referred to the base current: sum_k R_k phi_k^2.
    let n = d.n;
    let share = |k: usize| (d.bounds_turns[k + 1] - d.bounds_turns[k]) / turns;
    let weight: f64 = (0..n).map(|k| share(k) * phi[k] * phi[k]).sum();
    // Radiation: the mode's nodal charges (C v) at their heights above the ground plane.
    let q: Vec<f64> = (0..=n)
        .map(|i| (0..=n).map(|j| d.nodal_f[(i, j)] * node_v[j]).sum())
        .collect();
    let base_z = origin_m.coords.dot(axis.as_ref());
    let z0 = ground_z.unwrap_or(base_z);
    let heights: Vec<f64> = d.node_heights_m.iter().map(|h| base_z - z0 + h).collect();
    // The charge centroid: the mode's dipole moment over its total charge (the base current
    // charges the whole winding). Nodes near the base may carry a little charge of the other
    // sign (their potential is near zero while their neighbours pull): kept in both sums.
    let total: f64 = q.iter().sum();
    let moment: f64 = heights.iter().zip(&q).map(|(h, q)| h * q).sum();
    let h_eff = moment / total;
    if !(total.is_finite() && total.abs() > 0.0 && h_eff.is_finite() && h_eff > 0.0) {
        return Err(SolverError::Resonance {
            reason: format!(
                "the first mode's charges give no effective height (total {}, moment {})",
                si(total, "C", 4),
                si(moment, "C m", 4)
            ),
        });
    }
    let r_rad = losses::radiation_resistance_monopole_ohm(h_eff, f_hz)?;
    let parts = LossParts {
        dc_ohm: r_dc * weight,
        skin_ohm: (r_skin - r_dc) * weight,
        proximity_ohm: (r_wire - r_skin) * weight,
        radiation_ohm: r_rad,
        proximity_model: model_name,
    };
    Ok((parts, h_eff, wire_len))
}

/// The top voltage (V) at which the top electrode's peak surface field reaches air breakdown,
/// with the node profile `node_v` (1 at the top), from the distributed model's nodal solves.
fn breakout_top_voltage(
    design: &Design,
    secondary: &Winding,
    d: &Distributed,
    node_v: &[f64],
) -> Result<Option<f64>, SolverError> {
    let top: Vec<&str> = design
        .electrodes
        .iter()
        .filter(|e| {
            e.connect
                .as_ref()
                .is_some_and(|t| t.winding == secondary.name && t.end == End::Top)
        })
        .map(|e| e.name.as_str())
        .collect();
    if top.is_empty() {
        return Ok(None);
    }
    let per_volt = d.electric.peak_field_of(&top, node_v)?;
    Ok((per_volt > 0.0).then(|| AIR_BREAKDOWN_V_PER_M / per_volt))
}

/// A converged distributed model, f1's error estimate (Hz) and the history (n, f1 (Hz)).
type Converged = (Distributed, f64, Vec<(usize, f64)>);

/// The secondary's distributed model, converged in the section count.
fn converge(
    design: &Design,
    source: &str,
    turn_matrix: &TurnMatrix,
    turns: f64,
    params: &ResonanceParams,
    par: Par,
    warnings: &mut Vec<String>,
) -> Result<Converged, SolverError> {
    let cap = section_cap(turns);
    // The finite-element model once for every section count: at least two vertices of the
    // winding surface per section of the finest count.
    let fem = if params.electric.uses_fem(design) {
        let finest = params.sections.unwrap_or(cap).max(1);
        Some(std::sync::Arc::new(FemElectric::new(
            design,
            source,
            2 * finest,
        )?))
    } else {
        None
    };
    let fem = fem.as_ref();
    let f1 = |d: &Distributed| d.modes[0].frequency_hz;
    let mut history: Vec<(usize, f64)> = Vec::new();
    if let Some(n) = params.sections {
        if n == 0 || n > MAX_SECTIONS {
            return Err(SolverError::Resonance {
                reason: format!("--sections {n}: give 1 to {MAX_SECTIONS} sections"),
            });
        }
        if n > cap {
            return Err(SolverError::Resonance {
                reason: format!(
                    "--sections {n}: the secondary has {turns} turns; give at most {cap} \
                     sections (one turn each at least)"
                ),
            });
        }
        let d = distributed(design, source, turn_matrix, turns, n, params, par, fem)?;
        history.push((n, f1(&d)));
        // The error estimate: the same at half the sections.
        let error = if n >= 2 && params.estimate_error {
            let half = distributed(design, source, turn_matrix, turns, n / 2, params, par, fem)?;
            history.insert(0, (n / 2, f1(&half)));
            (f1(&d) - f1(&half)).abs()
        } else {
            f64::NAN
        };
        return Ok((d, error, history));
    }
    let mut n = FIRST_SECTIONS.min(cap);
    let mut current = distributed(design, source, turn_matrix, turns, n, params, par, fem)?;
    history.push((n, f1(&current)));
    let mut error = f64::NAN;
    while n < cap {
        n = (2 * n).min(cap);
        let next = distributed(design, source, turn_matrix, turns, n, params, par, fem)?;
        error = (f1(&next) - f1(&current)).abs();
        history.push((n, f1(&next)));
        current = next;
        if error <= SECTION_TOLERANCE * f1(&current) {
            return Ok((current, error, history));
        }
    }
    let settled = error <= SECTION_TOLERANCE * f1(&current);
    if !settled {
        warnings.push(format!(
            "the first frequency did not settle to {} by {} sections (the cap: {}); it stands \
             with an estimated error of {}",
            percent(SECTION_TOLERANCE, 2),
            current.n,
            if cap < MAX_SECTIONS {
                "one section per turn"
            } else {
                "256 sections"
            },
            percent(error / f1(&current), 2)
        ));
    }
    Ok((current, error, history))
}

/// The secondary's part of the resonance model: its distributed model (converged in the
/// section count), its resonance figures and Q. It depends on the secondary winding, the
/// electrodes and the ground plane only, so a sweep that moves the primary computes it once.
#[derive(Debug, Clone)]
pub struct SecondaryModel {
    turn_matrix: TurnMatrix,
    distributed: Distributed,
    /// The secondary's figures.
    pub result: SecondaryResonance,
    /// The first mode's inductance referred to the base current, phi^T L phi (H).
    l_base_h: f64,
    warnings: Vec<String>,
}

/// The secondary's part of the resonance model of `design` (see [`SecondaryModel`]).
pub fn secondary_model(
    design: &Design,
    source: &str,
    params: &ResonanceParams,
    par: Par,
) -> Result<SecondaryModel, SolverError> {
    let (secondary, _) = roles(design, source)?;
    let mut warnings = Vec::new();
    let turns = secondary.shape.turns().unwrap_or(1.0);
    let ground = design.ground;
    let turn_matrix = TurnMatrix::new(secondary, ground, par)?;
    let (d, error_hz, convergence) = converge(
        design,
        source,
        &turn_matrix,
        turns,
        params,
        par,
        &mut warnings,
    )?;
    let first = &d.modes[0];
    let f1 = first.frequency_hz;
    let l_s: f64 = d.inductance.sum();
    let c_eq = equivalent_capacitance_f(f1, l_s)?;
    let self_c = d
        .electric
        .self_capacitance()
        .ok_or_else(|| SolverError::Resonance {
            reason: "the electric model has no secondary".into(),
        })?;
    let (c_self, c_top) = (self_c.bare_f, self_c.total_f - self_c.bare_f);
    let f_lumped = 1.0 / (TAU * (l_s * (c_self + c_top)).sqrt());
    let phi = &first.branch_current;
    let node_v = &first.node_voltage;
    // The mode's inductance referred to the base current, phi^T L phi.
    let l_base: f64 = (0..d.n)
        .map(|k| {
            (0..d.n)
                .map(|l| phi[k] * d.inductance[(k, l)] * phi[l])
                .sum::<f64>()
        })
        .sum();
    let ground_z = ground.map(|g| g.z_m);
    let (loss_parts, h_eff, wire_len) =
        secondary_losses(secondary, source, &d, phi, node_v, f1, ground_z)?;
    let q_s = TAU * f1 * l_base / loss_parts.total_ohm();
    let breakout = breakout_top_voltage(design, secondary, &d, node_v)?;
    let modes = d
        .modes
        .iter()
        .map(|m| Mode {
            frequency_hz: m.frequency_hz,
            voltage_profile: m.node_voltage.clone(),
            current_profile: m.branch_current.clone(),
        })
        .collect();
    let secondary_result = SecondaryResonance {
        name: secondary.name.clone(),
        frequency_hz: f1,
        frequency_error_estimate_hz: error_hz,
        lumped_frequency_hz: f_lumped,
        inductance_h: l_s,
        equivalent_capacitance_f: c_eq,
        modal_top_capacitance_f: first.top_capacitance_f,
        modal_top_inductance_h: first.top_inductance_h,
        self_capacitance_f: c_self,
        top_capacitance_f: c_top,
        top_to_base_ohm: first.top_to_base_ohm,
        sections: d.n,
        convergence,
        modes,
        q: q_s,
        losses: loss_parts,
        breakout_top_voltage_v: breakout,
        effective_height_m: h_eff,
        wire_length_m: wire_len,
        electric_solver: params.electric.name_for(design),
    };
    if secondary.model != coilfield_geometry::Model::Ring {
        warnings.push(format!(
            "winding '{}' asks for the filament model: the distributed model uses its ring \
             model (one ring per turn)",
            secondary.name
        ));
    }
    let lambda_m = crate::constants::C0 / f1;
    warnings.push(format!(
        "the secondary's wire is {:.3} of a wavelength at f1 ({:.1} m of wire): the \
         distributed model accounts for the standing wave along the winding",
        wire_len / lambda_m,
        wire_len
    ));

    Ok(SecondaryModel {
        turn_matrix,
        distributed: d,
        result: secondary_result,
        l_base_h: l_base,
        warnings,
    })
}

/// The resonance model of a design (see the module docs). `source` labels messages.
pub fn resonance(
    design: &Design,
    source: &str,
    params: &ResonanceParams,
    par: Par,
) -> Result<Resonance, SolverError> {
    let model = secondary_model(design, source, params, par)?;
    resonance_with(design, source, &model, par)
}

/// The resonance model of `design` with its secondary's part computed already (`model`, of a
/// design with the same secondary, electrodes and ground plane: a sweep's base).
pub fn resonance_with(
    design: &Design,
    source: &str,
    model: &SecondaryModel,
    par: Par,
) -> Result<Resonance, SolverError> {
    let (_, primary) = roles(design, source)?;
    let mut warnings = model.warnings.clone();
    let d = &model.distributed;
    let turn_matrix = &model.turn_matrix;
    let secondary_result = model.result.clone();
    let first = &d.modes[0];
    let f1 = first.frequency_hz;
    let l_s = secondary_result.inductance_h;
    let phi = &first.branch_current;
    let l_base = model.l_base_h;
    let ground = design.ground;
    let Some(primary) = primary else {
        if design.drive.kind != DriveKind::Explicit {
            return Err(SolverError::Resonance {
                reason: format!(
                    "{source}: drive: key 'kind': a drive model needs a winding with role = \
                     \"primary\""
                ),
            });
        }
        return Ok(Resonance {
            secondary: secondary_result,
            primary: None,
            coupling: None,
            split_frequencies_hz: None,
            coupled_frequency_hz: None,
            drive: None,
            secondary_base: base_name(design),
            warnings,
        });
    };

    // The primary: its tap in use (or the tap that tunes the tank capacitor).
    let lead_h = design.drive.lead_inductance_h;
    let tank = match design.drive.kind {
        DriveKind::SparkGap(s) => Some(s.tank_capacitance_f),
        DriveKind::Driven(_) => design.drive.tank_capacitance_f,
        DriveKind::Explicit => None,
    };
    let whole = primary.without_tap();
    let l_whole = self_h(&whole, design, par)?;
    let tappable = whole.shape.turns().is_some() && !matches!(whole.shape, Shape::Ring { .. });
    let inductance_at = |t: f64| -> Result<f64, SolverError> {
        match primary.with_tap_turns(t) {
            Some(w) => self_h(&w, design, Par::Seq),
            None => Ok(l_whole),
        }
    };
    let mut tap_for_tank = None;
    let mut curve = Vec::new();
    if let (Some(c_p), true) = (tank, tappable) {
        let n_p = whole.shape.turns().unwrap_or(1.0);
        let needed = 1.0 / ((TAU * f1).powi(2) * c_p) - lead_h;
        let whole_turns = n_p.floor() as usize;
        for t in 1..=whole_turns {
            let l = inductance_at(t as f64)?;
            curve.push(TapPoint {
                tap_turns: t as f64,
                inductance_h: l,
                frequency_hz: 1.0 / (TAU * ((l + lead_h) * c_p).sqrt()),
            });
        }
        let lo_t = 0.05_f64.min(n_p);
        let (l_lo, l_hi) = (inductance_at(lo_t)?, l_whole);
        if needed > l_hi {
            warnings.push(format!(
                "the tank capacitor {} cannot be tuned to f1 = {} with winding '{}': even all \
                 its turns (with the leads) give {}; more turns or more capacitance are needed",
                si(c_p, "F", 4),
                si(f1, "Hz", 5),
                primary.name,
                si(1.0 / (TAU * ((l_hi + lead_h) * c_p).sqrt()), "Hz", 5)
            ));
        } else if needed < l_lo {
            warnings.push(format!(
                "the tank capacitor {} tunes to f1 only with less than {} turn of winding '{}' \
                 (or less lead inductance): less capacitance is needed",
                si(c_p, "F", 4),
                shortest(lo_t),
                primary.name
            ));
        } else {
            let found = crate::optimise::brent_root(
                |t| inductance_at(t).map_or(f64::NAN, |l| l - needed),
                lo_t,
                n_p,
                1e-9 * n_p,
                200,
            );
            if let Ok(found) = found {
                tap_for_tank = Some(found.x[0]);
            }
        }
    }
    // The tap in use: the design's, or for a spark gap without one, the tap found.
    let (in_use, tap_found) = match (primary.tap, design.drive.kind, tap_for_tank) {
        (None, DriveKind::SparkGap(_), Some(t)) => (
            primary.with_tap_turns(t).unwrap_or_else(|| primary.clone()),
            true,
        ),
        _ => (primary.clone(), false),
    };
    let l_tap = self_h(&in_use, design, par)?;
    let in_use_model = WindingModel::of(&in_use);
    let m_sections =
        turn_matrix.mutual_with_sections(&in_use_model, ground, &d.bounds_turns, par)?;
    let m_geo: f64 = m_sections.iter().sum();
    let k_geo = m_geo / (l_tap * l_s).sqrt();
    let m_modal_base: f64 = m_sections.iter().zip(phi).map(|(m, p)| m * p).sum();
    let l_circuit = l_tap + lead_h;
    let k_modal = m_modal_base / (l_circuit * l_base).sqrt();
    let tuning_c = 1.0 / ((TAU * f1).powi(2) * l_circuit);
    // The primary's wire losses at f1 (isolated wire or tubing; the gap and the capacitor
    // apart).
    let (_, _, r_ac_per_m) = conductor_resistance(&in_use, f1, source)?;
    let r_p = r_ac_per_m * wire_length_m(&in_use, true);
    let q_p = TAU * f1 * l_circuit / r_p;
    let tap_turns = in_use.active_turns().unwrap_or(1.0);
    // The pair: the primary with its tank (or, an explicit drive, the tuning capacitance; a
    // driven primary without a capacitor has none) and the mode.
    let c_primary = match (tank, design.drive.kind) {
        (Some(c), _) => Some(c),
        (None, DriveKind::Driven(_)) => None,
        (None, _) => Some(tuning_c),
    };
    let l_top = first.top_inductance_h;
    let c_top_modal = first.top_capacitance_f;
    let m_top = m_modal_base * (l_top / l_base).sqrt();
    let pair = Loops {
        inductance_h: DMatrix::from_row_slice(2, 2, &[l_circuit, m_top, m_top, l_top]),
        capacitance_f: vec![c_primary, Some(c_top_modal)],
        resistance_ohm: vec![0.0, 0.0],
    };
    let split = loop_modes(&pair)?;
    let split_hz = (split.len() == 2).then(|| {
        let (a, b) = (split[0].frequency_hz, split[1].frequency_hz);
        [a.min(b), a.max(b)]
    });
    let coupled_hz = (split.len() == 1).then(|| split[0].frequency_hz);
    let r_top = loss_parts_top(&secondary_result, l_top, l_base);
    let drive_result = drive::run(
        design,
        &drive::Pair {
            l_primary_h: l_circuit,
            r_primary_ohm: r_p,
            c_primary_f: tank,
            l_top_h: l_top,
            c_top_f: c_top_modal,
            r_top_ohm: r_top,
            m_top_h: m_top,
            f1_hz: f1,
            top_to_base_ohm: first.top_to_base_ohm,
        },
        &mut warnings,
    )?;
    let primary_result = PrimaryTuning {
        name: primary.name.clone(),
        inductance_h: l_whole,
        tap_turns,
        tap_found,
        tap_inductance_h: l_tap,
        lead_inductance_h: lead_h,
        tuning_capacitance_f: tuning_c,
        tap_for_tank_turns: tap_for_tank,
        coupling_at_tap: k_geo,
        modal_coupling: k_modal,
        q: q_p,
        resistance_ohm: r_p,
        frequency_against_tap: curve,
    };
    Ok(Resonance {
        secondary: secondary_result,
        primary: Some(primary_result),
        coupling: Some(k_geo),
        split_frequencies_hz: split_hz,
        coupled_frequency_hz: coupled_hz,
        drive: drive_result,
        secondary_base: base_name(design),
        warnings,
    })
}

/// The first mode's loss resistance (ohm) referred to its top-referred loop current
/// (V_top = Q / C_top_modal): the base-referred resistance times L_top / (phi^T L phi), the
/// ratio of the squared currents at equal energy.
fn loss_parts_top(s: &SecondaryResonance, l_top: f64, l_base: f64) -> f64 {
    s.losses.total_ohm() * l_top / l_base
}

fn base_name(design: &Design) -> &'static str {
    match design.drive.secondary_base {
        SecondaryBase::Ground => "ground",
        SecondaryBase::PrimaryReturn => "primary_return",
    }
}

/// A design whose drive model has been run: the drive is explicit (peak currents, peak
/// potentials, the exposure frequency) with the first mode's profiles, so that every command
/// that reads currents and potentials (fields, clearance, surface fields, export) uses the
/// drive model's figures; and the resonance behind them.
#[derive(Debug, Clone)]
pub struct Resolved {
    /// The design with its drive made explicit.
    pub design: Design,
    /// The resonance that set it (None when the drive was explicit already).
    pub resonance: Option<Resonance>,
}

/// Resolve `design`'s drive model (`[drive] kind`) into explicit peak currents and potentials
/// with the first mode's voltage and current profiles (see [`Resolved`]); a design with an
/// explicit drive is returned as it is. `source` labels messages.
///
/// The secondary's base current and the primary's current are the drive's peaks; the
/// secondary's top is at the peak top voltage, its base at 0 V; electrodes connected to it
/// follow through their terminals. E and B peak a quarter period apart in a resonator: each is
/// its own peak.
pub fn resolve(design: &Design, source: &str, par: Par) -> Result<Resolved, SolverError> {
    resolve_with(design, source, par, ElectricSolver::Auto)
}

/// [`resolve`] with the resonance model's capacitances from the electric solver `electric`.
pub fn resolve_with(
    design: &Design,
    source: &str,
    par: Par,
    electric: ElectricSolver,
) -> Result<Resolved, SolverError> {
    if design.drive.kind == DriveKind::Explicit {
        return Ok(Resolved {
            design: design.clone(),
            resonance: None,
        });
    }
    let params = ResonanceParams {
        electric,
        ..ResonanceParams::default()
    };
    let r = resonance(design, source, &params, par)?;
    let Some(d) = r.drive.as_ref() else {
        return Err(SolverError::Resonance {
            reason: format!("{source}: drive: the drive model gave no figures"),
        });
    };
    let primary = r
        .primary
        .as_ref()
        .map(|p| p.name.clone())
        .unwrap_or_default();
    let mode = &r.secondary.modes[0];
    let mut out = design.clone();
    out.drive = coilfield_geometry::Drive {
        frequency_hz: Some(d.exposure_frequency_hz),
        currents_a: vec![
            (primary, d.peak_primary_current_a),
            (r.secondary.name.clone(), d.peak_base_current_a),
        ],
        potentials_v: vec![(
            r.secondary.name.clone(),
            PotentialSpec::Ends {
                base_v: 0.0,
                top_v: d.peak_top_voltage_v,
            },
        )],
        secondary_voltage_profile: Some(mode.voltage_profile.clone()),
        secondary_current_profile: Some(mode.current_profile.clone()),
        derived: Some(format!(
            "{} drive model: peak top voltage {} with the first mode's voltage profile ({} \
             sections, f1 = {}), peak primary current {}, peak base current {} with the mode's \
             current profile; exposure levels at {}",
            d.kind.replace('_', " "),
            si(d.peak_top_voltage_v, "V", 4),
            r.secondary.sections,
            si(r.secondary.frequency_hz, "Hz", 6),
            si(d.peak_primary_current_a, "A", 4),
            si(d.peak_base_current_a, "A", 4),
            si(d.exposure_frequency_hz, "Hz", 6)
        )),
        ..design.drive.clone()
    };
    out.drive.kind = DriveKind::Explicit;
    // The primary's tap found for the tank is the one in use.
    if let Some(p) = &r.primary
        && p.tap_found
        && let Some(w) = out.windings.iter_mut().find(|w| w.name == p.name)
        && let Some(tapped) = w.with_tap_turns(p.tap_turns)
    {
        *w = tapped;
    }
    Ok(Resolved {
        design: out,
        resonance: Some(r),
    })
}
