//! The field model of a design: E from the electrostatic solution and B from the windings'
//! currents, as one batch evaluator that every command (`field`, `map`, `clearance`, sweeps)
//! calls.
//!
//! All fields are peak amplitudes of the `[drive]`. A drive without currents gives B = 0 and
//! one without potentials E = 0, each with a warning. One rule says where a field has no value
//! ([`NoValue`], the rule of [`Sample`]): on a wire or inside an electrode neither field (a
//! conductor at the drive frequency shuts the field out, which the free-space magnetic model
//! does not see), below the ground plane no E, beyond [`MAX_FIELD_DISTANCE_M`] neither; a
//! value below the smallest normal f64 is 0.

use crate::electrostatic::{FieldSample, Params, Problem, Solution};
use crate::error::SolverError;
use crate::fem::{E_ONLY_WARNING, ElectricSolver, FemProblem, FemSolution, FromDesignError};
use crate::field::{self, Source};
use crate::par::Par;
use coilfield_geometry::{
    Design, DesignError, DriveNeeds, Electrode, Ground, PotentialSpec, validate_drive,
};
use nalgebra::{Point3, Vector3};

/// Why a point has no value of a field (the no-value marker: `null` in JSON, NaN in CSV, VTK and
/// tables).
#[derive(Debug, Clone, PartialEq)]
pub enum NoValue {
    /// Within a wire's radius of a winding's centreline: neither E nor B (a wire is a
    /// conductor; its own field inside it is not the free-space field modelled here).
    OnWire,
    /// Inside the named electrode: neither E nor B (a conductor at the drive frequency shuts
    /// the field out, which the free-space magnetic model does not see).
    Inside(String),
    /// Below the grounded plane: no E (B keeps its value).
    BelowGround,
    /// Farther than [`MAX_FIELD_DISTANCE_M`] from the design's centre: neither E nor B.
    BeyondRange,
}

impl NoValue {
    /// Why there is no value, for a warning ("lies on a winding's wire", ...).
    pub fn reason(&self) -> String {
        match self {
            NoValue::OnWire => "lies on a winding's wire (within its radius of the centreline): \
                                E and B are not defined there"
                .to_string(),
            NoValue::Inside(name) => format!(
                "lies inside electrode '{name}': E and B are not defined there (a conductor \
                 shuts the field out)"
            ),
            NoValue::BelowGround => {
                "lies below the ground plane: E is not defined there".to_string()
            }
            NoValue::BeyondRange => format!(
                "lies beyond the model's range ({MAX_FIELD_DISTANCE_M:e} m from the design's \
                 centre): E and B are not given there"
            ),
        }
    }
}

/// Distance (m) from the design's centre beyond which a point has no field value
/// ([`NoValue::BeyondRange`]): the model's range, a choice. Within it squared distances stay
/// finite (1e300, below the f64 overflow at 1.8e308 with room for sums of three), and every
/// field keeps its relative accuracy to the end. A dipole field (closed windings, a charged
/// design over the ground plane) is below the smallest normal f64 there for any design within
/// the accepted input ranges (moment at most 1e6 turns x 1e7 A x pi (1e5 m)^2 = 3e23 A m^2:
/// mu0 m / (2 pi r^3) < 1e-380 T), but the 1/r^2 fields are not: the charge of an isolated
/// conductor (V a / r^2 up to 1e9 V x 1e5 m / 1e300 m^2 = 1e-286 V/m) and the net current
/// element of an open wire (a helix's base-to-top current I l: mu0 I l / (4 pi r^2) up to
/// 1e-295 T) still have normal values beyond, where they are given no value.
pub const MAX_FIELD_DISTANCE_M: f64 = 1e150;

/// A field's value at a point, or why there is none.
pub type FieldValue = Result<Vector3<f64>, NoValue>;

/// E and B at one point (peak values of the drive).
///
/// The one rule for every command: a field whose magnitude is below the smallest normal f64
/// (2.2e-308 V/m or T) is given as 0; a point on a wire or inside an electrode has neither
/// field, one below the ground plane no E, one beyond [`MAX_FIELD_DISTANCE_M`] neither.
#[derive(Debug, Clone, PartialEq)]
pub struct Sample {
    /// Electric field (V/m).
    pub e: FieldValue,
    /// Magnetic flux density (T).
    pub b: FieldValue,
}

impl Sample {
    /// |E| (V/m), or None where E has no value ([`magnitude`]: normal wherever E is).
    pub fn e_mag(&self) -> Option<f64> {
        self.e.as_ref().ok().map(magnitude)
    }

    /// |B| (T), or None where B has no value ([`magnitude`]: normal wherever B is).
    pub fn b_mag(&self) -> Option<f64> {
        self.b.as_ref().ok().map(magnitude)
    }

    /// Why the point lacks a value of E or B, if it does (E's reason first).
    pub fn no_value(&self) -> Option<&NoValue> {
        self.e.as_ref().err().or(self.b.as_ref().err())
    }
}

/// E and B of a design, ready to evaluate at any points (plan once, evaluate many).
#[derive(Debug, Clone)]
pub struct FieldModel {
    sources: Vec<Source>,
    electric: Electric,
    /// "bem" or "fem": the electric solver that serves E.
    solver_name: &'static str,
    electrodes: Vec<Electrode>,
    ground: Option<Ground>,
    /// Every winding's wire (unit currents, no images): the on-wire test, whatever the drive.
    wires: Vec<Source>,
    /// The design's centre (m), from which [`MAX_FIELD_DISTANCE_M`] is measured.
    centre_m: Point3<f64>,
    par: Par,
    /// Warnings about the model itself (image currents, a zero field).
    pub warnings: Vec<String>,
}

/// Where E comes from.
#[derive(Debug, Clone)]
enum Electric {
    /// No conductor has a potential: E = 0.
    Zero,
    /// Boundary elements.
    Bem(Box<Solution>),
    /// Finite elements.
    Fem(Box<FemSolution>),
}

/// The finite-element solution of a design (its drive resolved already), meshed and solved
/// once; a design the half-plane model refuses is an error naming it.
pub fn fem_solution(design: &Design, source: &str) -> Result<FemSolution, SolverError> {
    let problem = FemProblem::from_design(design, source).map_err(|e| match e {
        FromDesignError::Design(d) => SolverError::Design(d),
        FromDesignError::Solver(s) => s,
    })?;
    problem.solve()
}

/// The drive a field computation needs: at least winding currents or conductor potentials.
/// `what` names the computation in the message, `source` labels it.
// The error is geometry's own type, returned once per design: its size costs nothing here.
#[allow(clippy::result_large_err)]
pub fn check_field_drive(design: &Design, source: &str, what: &str) -> Result<(), DesignError> {
    let has_currents = design.drive.currents_a.iter().any(|(_, i)| *i != 0.0);
    let needs = DriveNeeds {
        currents: !has_currents && design.drive.potentials_v.is_empty(),
        potentials: !has_currents,
        frequency: false,
    };
    validate_drive(design, needs, what, source)
}

/// Whether the drive puts any conductor at a nonzero potential.
pub fn has_potentials(design: &Design) -> bool {
    design.drive.potentials_v.iter().any(|(_, p)| match *p {
        PotentialSpec::Uniform(v) => v != 0.0,
        PotentialSpec::Ends { base_v, top_v } => base_v != 0.0 || top_v != 0.0,
    })
}

/// The boundary-element solution of a design at the default panel count (its drive model
/// resolved first, [`crate::resonance::resolve`]).
pub fn electrostatic_solution(
    design: &Design,
    source: &str,
    par: Par,
) -> Result<Solution, SolverError> {
    let resolved = crate::resonance::resolve(design, source, par)?;
    Problem::from_design(&resolved.design, &Params::default(), source)?.solve(par)
}

impl FieldModel {
    /// The field model of a validated design: B from [`crate::field`] (zero when no winding
    /// carries current), E from [`crate::electrostatic`] (zero when no conductor has a
    /// potential). `solved` is the design's electrostatic solution when the caller has it
    /// already (default panels); `par` says how both are solved and evaluated. `source`
    /// labels messages. The electric solver is chosen automatically
    /// ([`ElectricSolver::Auto`]: finite elements with a dielectric or an enclosure).
    pub fn new(
        design: &Design,
        source: &str,
        par: Par,
        solved: Option<Solution>,
    ) -> Result<FieldModel, SolverError> {
        FieldModel::with_solver(design, source, par, solved, ElectricSolver::Auto)
    }

    /// [`FieldModel::new`] with the electric solver `choice`; `solved` (a boundary-element
    /// solution) is used only when boundary elements serve.
    pub fn with_solver(
        design: &Design,
        source: &str,
        par: Par,
        solved: Option<Solution>,
        choice: ElectricSolver,
    ) -> Result<FieldModel, SolverError> {
        // A drive model sets the currents and potentials (and their profiles) first.
        let resolved = crate::resonance::resolve_with(design, source, par, choice)?;
        let design = &resolved.design;
        let solved = if resolved.resonance.is_some() {
            None
        } else {
            solved
        };
        check_field_drive(design, source, "the field")?;
        let has_currents = design.drive.currents_a.iter().any(|(_, i)| *i != 0.0);
        let sources = if has_currents {
            field::sources_from_design(design, source)?
        } else {
            Vec::new()
        };
        let mut warnings: Vec<String> = field::image_warning(design).into_iter().collect();
        if let Some(how) = &design.drive.derived {
            warnings.push(format!("fields from the {how}"));
        }
        if !has_currents {
            warnings.push("no winding carries current in [drive] currents: B is zero".into());
        }
        let fem = choice.uses_fem(design);
        let electric = if !has_potentials(design) {
            warnings.push("no conductor has a potential in [drive] potentials: E is zero".into());
            Electric::Zero
        } else if fem {
            Electric::Fem(Box::new(fem_solution(design, source)?))
        } else {
            match solved {
                Some(sol) => Electric::Bem(Box::new(sol)),
                None => Electric::Bem(Box::new(electrostatic_solution(design, source, par)?)),
            }
        };
        if fem {
            warnings.push(E_ONLY_WARNING.to_string());
        }
        let wires = design
            .windings
            .iter()
            .flat_map(|w| field::sources_of_winding(w, 1.0))
            .collect();
        Ok(FieldModel {
            sources,
            wires,
            centre_m: design_centre_m(design),
            electric,
            solver_name: choice.name_for(design),
            electrodes: design.electrodes.clone(),
            ground: design.ground,
            par,
            warnings,
        })
    }

    /// E and B at `points_m`, by the rule of [`Sample`].
    pub fn eval(&self, points_m: &[Point3<f64>]) -> Vec<Sample> {
        let b = field::b_field(&self.sources, points_m, self.par);
        let e: Vec<FieldValue> = match &self.electric {
            Electric::Bem(sol) => sol
                .e_field(points_m, self.par)
                .into_iter()
                .map(|s| match s {
                    FieldSample::Field(v) => Ok(v),
                    FieldSample::InsideConductor(name) => Err(NoValue::Inside(name)),
                    FieldSample::BelowGround => Err(NoValue::BelowGround),
                })
                .collect(),
            // Inside an electrode and below the ground the same verdicts as the boundary
            // elements give; elsewhere the finite-element field, 0 beyond a grounded wall.
            Electric::Fem(sol) => points_m
                .iter()
                .zip(sol.e_field(points_m))
                .map(|(p, e)| self.zero_e_at(p).map(|zero| e.map_or(zero, |(_, v)| v)))
                .collect(),
            // E is zero without potentials, but still undefined inside a conductor: the
            // points are told apart the same way as with a solution.
            Electric::Zero => points_m.iter().map(|p| self.zero_e_at(p)).collect(),
        };
        points_m
            .iter()
            .zip(e.into_iter().zip(b))
            .map(|(p, (e, b))| self.sample_at(p, e, b))
            .collect()
    }

    /// The rule of [`Sample`] applied to the evaluators' answers at `p`.
    fn sample_at(&self, p: &Point3<f64>, e: FieldValue, b: Option<Vector3<f64>>) -> Sample {
        let both = |why: NoValue| Sample {
            e: Err(why.clone()),
            b: Err(why),
        };
        if distance_m(&self.centre_m, p) > MAX_FIELD_DISTANCE_M {
            return both(NoValue::BeyondRange);
        }
        if let Err(NoValue::Inside(name)) = &e {
            return both(NoValue::Inside(name.clone()));
        }
        if field::on_wire(&self.wires, p) {
            return both(NoValue::OnWire);
        }
        // B is None only on a wire: here an image winding's, below a conducting ground.
        let b = b.ok_or(NoValue::OnWire);
        Sample {
            e: e.and_then(normal_or_zero),
            b: b.and_then(normal_or_zero),
        }
    }

    /// Whether each point lies within its stated distance of a conductor edge of the
    /// boundary-element model ([`Solution::edges`], [`crate::electrostatic::Edge`]), where E
    /// is not resolved; all false with finite elements or when no conductor has a potential.
    /// Summaries of E set these points aside.
    pub fn near_edge(&self, points_m: &[Point3<f64>]) -> Vec<bool> {
        let Electric::Bem(sol) = &self.electric else {
            return vec![false; points_m.len()];
        };
        let edges = sol.edges();
        points_m
            .iter()
            .map(|p| {
                let (rho, z) = sol.meridian_m(p);
                edges
                    .iter()
                    .any(|e| (rho - e.rho_z_m.0).hypot(z - e.rho_z_m.1) < e.unresolved_within_m)
            })
            .collect()
    }

    /// The electric solver that serves E: "bem" or "fem".
    pub fn electric_solver(&self) -> &'static str {
        self.solver_name
    }

    /// The largest surface field on each conductor under the drive (V/m, with its place):
    /// the electrodes' from boundary elements, every conductor's from finite elements; empty
    /// when no conductor has a potential.
    pub fn peak_surface_fields(&self) -> Vec<crate::electrostatic::PeakField> {
        match &self.electric {
            Electric::Zero => Vec::new(),
            Electric::Bem(sol) => sol.peak_surface_fields(),
            Electric::Fem(sol) => sol.peak_surface_fields(),
        }
    }

    /// E = 0 at `p` when no conductor has a potential, or no value inside an electrode or
    /// below the ground plane (as `Solution::e_field` reports them).
    fn zero_e_at(&self, p: &Point3<f64>) -> FieldValue {
        if let Some(e) = self
            .electrodes
            .iter()
            .find(|e| e.shape.signed_distance_m(p) < 0.0)
        {
            return Err(NoValue::Inside(e.name.clone()));
        }
        if self.ground.is_some_and(|g| p.z < g.z_m) {
            return Err(NoValue::BelowGround);
        }
        Ok(Vector3::zeros())
    }
}

/// A field vector as given: 0 when its magnitude is below the smallest normal f64 (the true
/// value underflows there: a subnormal has lost digits), no value when it is not finite.
fn normal_or_zero(v: Vector3<f64>) -> FieldValue {
    let m = v.amax();
    if !m.is_finite() {
        Err(NoValue::BeyondRange)
    } else if m < f64::MIN_POSITIVE {
        Ok(Vector3::zeros())
    } else {
        Ok(v)
    }
}

/// The length of `v` (in its own unit: V/m, T, m) scaled by its largest component, so that
/// neither its squares underflow nor overflow: `norm()` squares the components, and a field
/// below 1.5e-154 (E of a charged sphere beyond 1e79 m) came out 0, one above 1.3e154
/// infinite.
pub fn magnitude(v: &Vector3<f64>) -> f64 {
    let scale = v.amax();
    if scale == 0.0 || !scale.is_finite() {
        return scale;
    }
    scale * (v / scale).norm()
}

/// Distance (m) from `a` to `b`, without overflow of its squares.
fn distance_m(a: &Point3<f64>, b: &Point3<f64>) -> f64 {
    magnitude(&(b - a))
}

/// The design's centre (m): the mean of its winding and electrode origins (the origin without
/// any).
pub fn design_centre_m(design: &Design) -> Point3<f64> {
    let mut origins: Vec<Point3<f64>> = design
        .windings
        .iter()
        .filter_map(|w| w.shape.origin_axis().map(|(o, _)| o))
        .collect();
    origins.extend(design.electrodes.iter().map(|e| e.shape.origin_axis().0));
    if origins.is_empty() {
        return Point3::origin();
    }
    Point3::from(
        origins
            .iter()
            .fold(Vector3::zeros(), |acc, o| acc + o.coords)
            / origins.len() as f64,
    )
}

/// Distances (m) of `points_m` from the design's centre ([`design_centre_m`]), for
/// [`crate::electrostatic::validity_warnings`].
pub fn distances_from_centre_m(design: &Design, points_m: &[Point3<f64>]) -> Vec<f64> {
    if design.windings.is_empty() && design.electrodes.is_empty() {
        return Vec::new();
    }
    let c = design_centre_m(design);
    points_m.iter().map(|p| distance_m(&c, p)).collect()
}

/// One invented helix of the far-field validation table `validation/far_field_helix.csv`
/// (`validation/far_field_refs.py` defines the same two), in the filament model, shared by the
/// tests and `coilfield verify`.
#[derive(Debug, Clone, Copy)]
pub struct FarFieldHelix {
    /// Its name in the table's `helix` column.
    pub name: &'static str,
    /// Centre of the base circle (m).
    pub origin_m: [f64; 3],
    /// Axis direction (unit vector).
    pub axis: [f64; 3],
    /// Radius (m).
    pub radius_m: f64,
    /// Length along the axis (m).
    pub length_m: f64,
    /// Turns.
    pub turns: f64,
    /// Drive current (A).
    pub current_a: f64,
}

/// The helices of `validation/far_field_helix.csv`: 4 whole turns on the z axis, and 3.3 turns
/// on a tilted axis off the origin at 1e-9 A, whose field reaches the bottom of the normal
/// range.
pub const FAR_FIELD_HELICES: [FarFieldHelix; 2] = [
    FarFieldHelix {
        name: "whole",
        origin_m: [0.0, 0.0, -0.05],
        axis: [0.0, 0.0, 1.0],
        radius_m: 0.05,
        length_m: 0.1,
        turns: 4.0,
        current_a: 2.0,
    },
    FarFieldHelix {
        name: "tilted",
        origin_m: [1.0, -2.0, 0.5],
        axis: [0.6, 0.0, 0.8],
        radius_m: 0.002,
        length_m: 0.03,
        turns: 3.3,
        current_a: 1e-9,
    },
];

impl FarFieldHelix {
    /// The design file of the helix alone, in the filament model, driven at its current.
    pub fn design_text(&self) -> String {
        let f = |v: [f64; 3]| format!("[{:?}, {:?}, {:?}]", v[0], v[1], v[2]);
        format!(
            "[[winding]]\nname = \"h\"\nshape = \"helix\"\nmodel = \"filament\"\n\
             origin = {}\naxis = {}\nradius = {:?}\nlength = {:?}\nturns = {:?}\n\
             wire_diameter = {:?}\n[drive]\ncurrents = {{ h = {:?} }}\n",
            f(self.origin_m),
            f(self.axis),
            self.radius_m,
            self.length_m,
            self.turns,
            0.1 * self.radius_m,
            self.current_a
        )
    }

    /// Its size (m): the distance from its centre to the rim of an end.
    pub fn size_m(&self) -> f64 {
        self.radius_m.hypot(0.5 * self.length_m)
    }

    /// The relative error of B (of the vector, against its magnitude) the field model reaches
    /// at `r_m` from the helix's centre: the segments' closed forms lose about 1.5e-16 (r /
    /// size) where their 1/r^2 fields cancel to the dipole, so 4e-16 r / size; beyond
    /// [`field::FILAMENT_FAR_RATIO`] sizes the two-term expansion leaves out the open wire's next
    /// order, (size / r) of the 1/r^3 part, so 0.05 size / r; above a floor of 1e-13 (the tilted
    /// axis's rounding, 3e-14 seen).
    pub fn tolerance(&self, r_m: f64) -> f64 {
        let ratio = r_m / self.size_m();
        1e-13
            + if ratio > field::FILAMENT_FAR_RATIO {
                0.05 / ratio
            } else {
                4e-16 * ratio
            }
    }
}

/// One invented winding over a conducting ground plane of the validation table
/// `validation/far_field_ground.csv` (`validation/far_field_refs.py` defines the same three),
/// shared by the tests and `coilfield verify`.
#[derive(Debug, Clone, Copy)]
pub struct FarFieldPair {
    /// Its name in the table's `case` column.
    pub name: &'static str,
    /// A ring in the ring model (true) or a helix in the filament model (false).
    pub ring: bool,
    /// The ring's centre or the helix's base centre (m).
    pub origin_m: [f64; 3],
    /// Axis direction (normalised by the design file's reader).
    pub axis: [f64; 3],
    /// Radius (m).
    pub radius_m: f64,
    /// Length of the helix along its axis (m; 0 for a ring).
    pub length_m: f64,
    /// Turns of the helix (1 for a ring).
    pub turns: f64,
    /// Drive current (A).
    pub current_a: f64,
    /// Height of the conducting ground plane z = z0 (m).
    pub ground_z_m: f64,
}

/// The windings of `validation/far_field_ground.csv`: a level ring 0.4 m over the plane (its
/// image cancels its moment: the pair is a quadrupole), a tilted ring at 1e-6 A (the pair keeps
/// the moment's level part) and a helix of 4 whole turns in the filament model (an open wire:
/// the pair doubles its vertical current element).
pub const FAR_FIELD_GROUND: [FarFieldPair; 3] = [
    FarFieldPair {
        name: "ring",
        ring: true,
        origin_m: [0.1, -0.2, 0.4],
        axis: [0.0, 0.0, 1.0],
        radius_m: 0.25,
        length_m: 0.0,
        turns: 1.0,
        current_a: 3.0,
        ground_z_m: 0.0,
    },
    FarFieldPair {
        name: "tilted_ring",
        ring: true,
        origin_m: [-0.5, 0.3, 0.6],
        axis: [0.3, 0.0, 1.0],
        radius_m: 0.1,
        length_m: 0.0,
        turns: 1.0,
        current_a: 1e-6,
        ground_z_m: 0.1,
    },
    FarFieldPair {
        name: "helix",
        ring: false,
        origin_m: [0.0, 0.0, 0.05],
        axis: [0.0, 0.0, 1.0],
        radius_m: 0.05,
        length_m: 0.1,
        turns: 4.0,
        current_a: 2.0,
        ground_z_m: 0.0,
    },
];

impl FarFieldPair {
    /// The design file of the winding over its conducting plane, driven at its current.
    pub fn design_text(&self) -> String {
        let f = |v: [f64; 3]| format!("[{:?}, {:?}, {:?}]", v[0], v[1], v[2]);
        let shape = if self.ring {
            "shape = \"ring\"\n".to_string()
        } else {
            format!(
                "shape = \"helix\"\nmodel = \"filament\"\nlength = {:?}\nturns = {:?}\n",
                self.length_m, self.turns
            )
        };
        format!(
            "[[winding]]\nname = \"w\"\n{shape}origin = {}\naxis = {}\nradius = {:?}\n\
             wire_diameter = {:?}\n[ground]\nz = {:?}\nconducting = true\n\
             [drive]\ncurrents = {{ w = {:?} }}\n",
            f(self.origin_m),
            f(self.axis),
            self.radius_m,
            0.1 * self.radius_m,
            self.ground_z_m,
            self.current_a
        )
    }

    /// The winding's centre's height over the plane, h (m).
    pub fn height_m(&self) -> f64 {
        let n = Vector3::from(self.axis).normalize();
        self.origin_m[2] + 0.5 * self.length_m * n.z - self.ground_z_m
    }

    /// The pair's size s (m): the largest distance of the winding from the plane point below
    /// its centre, at most the centre's distance plus its half-diagonal.
    pub fn size_m(&self) -> f64 {
        self.height_m() + self.radius_m.hypot(0.5 * self.length_m)
    }

    /// The relative error of B (of the vector, against its magnitude) the field model reaches
    /// at `r_m` from the plane point below the winding: within
    /// [`crate::image_pair_far::PAIR_FAR_RATIO`] sizes (and a margin) the separate sums of
    /// winding and image, whose own errors (about r / a rounding units seen for the rings'
    /// closed forms and the helix's straight pieces) the pair's cancellation multiplies by
    /// r / h, so 1e-16 (r / a) (r / h) (2e-14 seen at 10 m, where this gives 1e-13); beyond,
    /// the pair's expansion, whose truncation is below 1e-15 there (orders up to
    /// [`crate::image_pair_far::PAIR_ORDER`]); above a floor of 1e-14 (3.6e-15 seen: the
    /// rounding of the moments and of the higher orders' sums).
    pub fn tolerance(&self, r_m: f64) -> f64 {
        let near = r_m <= crate::image_pair_far::PAIR_FAR_RATIO * self.size_m() * 1.5;
        1e-14
            + if near {
                1e-16 * (r_m / self.radius_m) * (r_m / self.height_m())
            } else {
                0.0
            }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn model(text: &str) -> FieldModel {
        let d = coilfield_geometry::parse_design(text, "t.toml").unwrap();
        FieldModel::new(&d, "t.toml", Par::Seq, None).unwrap()
    }

    const LOOP: &str = "[[winding]]\nname = \"loop\"\nshape = \"ring\"\norigin = [0.0, 0.0, 0.0]\n\
        axis = [0.0, 0.0, 1.0]\nradius = 0.5\nwire_diameter = 0.002\n[[winding]]\nname = \"idle\"\n\
        shape = \"ring\"\norigin = [0.0, 0.0, 2.0]\naxis = [0.0, 0.0, 1.0]\nradius = 0.5\n\
        wire_diameter = 0.002\n[drive]\ncurrents = { loop = 1e7 }\n";

    #[test]
    fn one_rule_for_points_without_a_value() {
        let m = model(LOOP);
        let s = m.eval(&[
            Point3::new(0.5, 0.0, 0.0),
            // On the wire of a winding without current: no value either (a wire is a conductor).
            Point3::new(0.0, 0.5, 2.0),
            Point3::new(0.0, 0.0, 2e150),
            Point3::new(0.0, 0.0, 1.0),
        ]);
        assert_eq!(s[0].e, Err(NoValue::OnWire));
        assert_eq!(s[0].b, Err(NoValue::OnWire));
        assert_eq!(s[1].no_value(), Some(&NoValue::OnWire));
        assert_eq!(s[1].b, Err(NoValue::OnWire));
        assert_eq!(s[2].e, Err(NoValue::BeyondRange));
        assert_eq!(s[2].b, Err(NoValue::BeyondRange));
        assert!(s[3].b.as_ref().unwrap().z > 0.0 && s[3].no_value().is_none());
        for why in [
            NoValue::OnWire,
            NoValue::Inside("x".into()),
            NoValue::BelowGround,
            NoValue::BeyondRange,
        ] {
            assert!(why.reason().starts_with("lies "), "{}", why.reason());
        }
    }

    #[test]
    fn far_b_is_the_dipole_and_an_underflowing_value_is_zero() {
        // The loop's dipole m = I pi a^2 on its axis: B = mu0 m / (2 pi z^3) (J. D. Jackson,
        // "Classical Electrodynamics", 3rd ed., 1999, eq. 5.56), within (a/z)^2 of the ring's
        // field; the reference through logarithms. Below the smallest normal f64 the field
        // model gives 0 (its documented rule), never a subnormal or a wrong normal number.
        let m = model(LOOP);
        let moment = 1e7 * PI * 0.25;
        for z in [1e3, 1e10, 1e50, 1e90, 1e100, 1e120, 1e149] {
            let want =
                ((crate::constants::MU0 * moment / (2.0 * PI)).ln() - 3.0 * f64::ln(z)).exp();
            let b = m.eval(&[Point3::new(0.0, 0.0, z)])[0].b.clone().unwrap();
            if want < f64::MIN_POSITIVE {
                assert_eq!(b, Vector3::zeros(), "z = {z}");
            } else {
                let q = 0.5 / z;
                assert!(
                    (b.z - want).abs() < (2.0 * q * q + 1e-12) * want,
                    "z = {z}: {} vs {want}",
                    b.z
                );
            }
        }
    }

    /// The filament model of one helix of validation/far_field_refs.py.
    fn filament_helix(h: &FarFieldHelix) -> FieldModel {
        model(&h.design_text())
    }

    /// A row of validation/far_field_helix.csv.
    struct HelixRow {
        helix: String,
        direction: String,
        r_m: f64,
        point_m: Point3<f64>,
        b_t: Vector3<f64>,
    }

    /// Rows of validation/far_field_helix.csv: helix, direction, r (m), point (m), B (T).
    fn helix_rows() -> Vec<HelixRow> {
        include_str!("../../validation/far_field_helix.csv")
            .lines()
            .skip(1)
            .map(|line| {
                let f: Vec<&str> = line.splitn(10, ',').collect();
                let x = |k: usize| f[k].parse::<f64>().unwrap();
                HelixRow {
                    helix: f[0].to_string(),
                    direction: f[1].to_string(),
                    r_m: x(2),
                    point_m: Point3::new(x(3), x(4), x(5)),
                    b_t: Vector3::new(x(6), x(7), x(8)),
                }
            })
            .collect()
    }

    #[test]
    fn far_b_of_a_filament_helix_is_its_polygons_to_the_models_range() {
        // B of the filament model's polygon through a helix, summed in mpmath at 30 digits plus
        // twice the decades of distance with the textbook field of a finite straight wire
        // (D. J. Griffiths, "Introduction to Electrodynamics", 4th ed., 2013, example 5.5;
        // validation/far_field_refs.py, re-run by .ci/test): 1e2 to 1e149 m, on the axis both
        // ways, across it and obliquely; a helix of whole turns on the z axis and a tilted one
        // of 3.3 turns off the origin at 1e-9 A, whose field reaches the bottom of the normal
        // range (2.5e-306 T at 1e144 m). What the method reaches: the segments' closed forms
        // lose about 1.5e-16 (r / size) where their 1/r^2 fields cancel to the dipole (on the
        // axis of whole turns: seen 2e-11 at 1.4e5 sizes), and beyond 1e8 sizes the two-term
        // expansion leaves out the open wire's next order, (size / r) of the 1/r^3 part (on the
        // axis of whole turns, where the 1/r^3 part is all: seen 0.013 size / r). So 4e-16 r /
        // size, and 0.05 size / r beyond 1e8 sizes, above a floor of 1e-13 (the tilted axis's
        // rounding, 3e-14 seen). Where the reference is below the smallest normal f64 the field
        // model gives 0.
        let rows = helix_rows();
        assert_eq!(rows.len(), 2 * 11 * 5);
        let mut worst: f64 = 0.0;
        for h in &FAR_FIELD_HELICES {
            let m = filament_helix(h);
            let mine: Vec<_> = rows.iter().filter(|r| r.helix == h.name).collect();
            assert_eq!(mine.len(), 55);
            let points: Vec<Point3<f64>> = mine.iter().map(|r| r.point_m).collect();
            let got = m.eval(&points);
            for (row, s) in mine.iter().zip(&got) {
                let want = row.b_t;
                let b = s.b.clone().unwrap();
                if magnitude(&want) < f64::MIN_POSITIVE {
                    assert_eq!(
                        b,
                        Vector3::zeros(),
                        "{} {} {}",
                        h.name,
                        row.direction,
                        row.r_m
                    );
                    continue;
                }
                let err = magnitude(&(b - want)) / magnitude(&want);
                let tol = h.tolerance(row.r_m);
                assert!(
                    err < tol,
                    "{} {} at {} m: {err:e} > {tol:e}: {b} vs {want}",
                    h.name,
                    row.direction,
                    row.r_m
                );
                worst = worst.max(err / tol);
            }
        }
        eprintln!("worst error / tolerance {worst:e}");
    }

    #[test]
    fn far_b_of_a_filament_helix_is_its_dipole_and_its_axial_current() {
        // The open wire of a helix of N whole turns, seen from r >> its size: the turns'
        // dipole m = N I A (A the polygon's area, (n / 2) a^2 sin(2 pi / n) for n segments a
        // turn, elementary geometry; N I pi a^2 for the circle) gives on the axis
        // B_z = mu0 m / (2 pi r^3) and across it B_z = -mu0 m / (4 pi r^3) (J. D. Jackson,
        // "Classical Electrodynamics", 3rd ed., 1999, eq. 5.56), and the wire's net current
        // element I l from its base to its top gives across the axis the 1/r^2 field of a
        // short straight current, B = mu0 I l / (4 pi r^2) (Griffiths 2013, example 5.5, in
        // the limit), which outgrows the dipole beyond r = N pi a^2 / l (6 m here). The terms
        // left out are of relative order size / r: the wire's ends off the axis add 1/r^3
        // terms across the field of the current element (3 a / r of it) and none along the
        // axis, and the next order is (size / r) of each.
        let h = &FAR_FIELD_HELICES[0];
        let m = filament_helix(h);
        let (a, l, n_turns, i) = (h.radius_m, h.length_m, h.turns, h.current_a);
        let n = 128.0;
        let moment = n_turns * i * 0.5 * n * a * a * (2.0 * PI / n).sin();
        let size = a.hypot(0.5 * l);
        let mu0 = crate::constants::MU0;
        // mu0 X / (4 pi r^k) through logarithms (neither overflow nor underflow on the way).
        let law = |x: f64, r: f64, k: f64| ((mu0 * x / (4.0 * PI)).ln() - k * r.ln()).exp();
        for r in [1e2, 1e4, 1e7, 1e9, 1e30, 1e60, 1e90] {
            let q = size / r;
            let s = m.eval(&[Point3::new(0.0, 0.0, r), Point3::new(r, 0.0, 0.0)]);
            let (on, across) = (s[0].b.clone().unwrap(), s[1].b.clone().unwrap());
            let want_on = 2.0 * law(moment, r, 3.0);
            let want_across = -law(moment, r, 3.0);
            let want_line = law(i * l, r, 2.0);
            if want_on >= f64::MIN_POSITIVE {
                assert!(
                    (on.z - want_on).abs() < (4.0 * q + 1e-12) * want_on,
                    "r = {r}: on the axis {} vs {want_on}",
                    on.z
                );
                assert!(
                    (across.z - want_across).abs() < (4.0 * q + 1e-12) * want_across.abs(),
                    "r = {r}: across the axis {} vs {want_across}",
                    across.z
                );
            }
            assert!(
                (across.y - want_line).abs() < (4.0 * q + 1e-12) * want_line,
                "r = {r}: the current element's field {} vs {want_line}",
                across.y
            );
        }
    }

    #[test]
    fn far_b_over_a_conducting_plane_is_the_pair_of_winding_and_image() {
        // B of a winding and its image in a conducting plane (the mirrored current elements
        // reversed: J. D. Jackson, "Classical Electrodynamics", 3rd ed., 1999, method of
        // images), against mpmath at 30 digits plus three times the decades of distance:
        // rings by the closed-form loop field (Jackson 1999, sec. 5.5), the filament helix by
        // straight-wire sums (D. J. Griffiths, "Introduction to Electrodynamics", 4th ed.,
        // 2013, example 5.5); validation/far_field_refs.py, re-run by .ci/test. From 3 m to
        // 1e149 m up the normal, along the plane and obliquely. Before, the two sides' far
        // fields were summed separately and cancelled: a relative error of about 1e-16 r / h
        // (the level ring's quadrupole was all rounding from 1e16 m on). Tolerances
        // ([`FarFieldPair::tolerance`]): the separate sums' errors times r / h within 45 sizes,
        // 1e-14 beyond (3.6e-15 seen). Where the reference is below the smallest normal f64 the
        // model gives 0.
        let text = include_str!("../../validation/far_field_ground.csv");
        let rows: Vec<Vec<&str>> = text
            .lines()
            .skip(1)
            .map(|l| l.splitn(10, ',').collect())
            .collect();
        assert_eq!(rows.len(), 3 * 12 * 3);
        let mut worst: f64 = 0.0;
        for case in &FAR_FIELD_GROUND {
            let m = model(&case.design_text());
            let mine: Vec<&Vec<&str>> = rows.iter().filter(|r| r[0] == case.name).collect();
            assert_eq!(mine.len(), 36, "{}", case.name);
            let x = |r: &Vec<&str>, k: usize| r[k].parse::<f64>().unwrap();
            let points: Vec<Point3<f64>> = mine
                .iter()
                .map(|r| Point3::new(x(r, 3), x(r, 4), x(r, 5)))
                .collect();
            for (row, s) in mine.iter().zip(m.eval(&points)) {
                let want = Vector3::new(x(row, 6), x(row, 7), x(row, 8));
                let b = s.b.clone().unwrap();
                let r_m = x(row, 2);
                if magnitude(&want) < f64::MIN_POSITIVE {
                    assert_eq!(b, Vector3::zeros(), "{} {} {r_m}", case.name, row[1]);
                    continue;
                }
                let err = magnitude(&(b - want)) / magnitude(&want);
                let tol = case.tolerance(r_m);
                assert!(
                    err < tol,
                    "{} {} at {r_m} m: {err:e} > {tol:e}: {b} vs {want}",
                    case.name,
                    row[1]
                );
                worst = worst.max(err / tol);
            }
        }
        eprintln!("worst error / tolerance {worst:e}");
    }

    #[test]
    fn far_e_of_a_charged_sphere_is_its_monopole_to_the_models_range() {
        // An isolated sphere of radius a at V carries Q = 4 pi eps0 a V, and outside it
        // E = Q / (4 pi eps0 r^2) = V a / r^2 radially (J. C. Maxwell, "A Treatise on
        // Electricity and Magnetism", 1873, vol. 1, the electrified sphere), normal in f64 up
        // to the model's range, in every direction. Before, |E| came out 0 beyond 1e79 m: its
        // components squared underflowed in the norm (`magnitude` now). Tolerances: every path
        // takes each panel's charge by the Gauss rule as the capacitances do (4e-10 seen from
        // 1e3 m on, as the capacitance test's 1e-8 allows), so 2e-9; at 30 radii the clusters'
        // and distant panels' ring charges leave their spread (9e-8 seen), so 2e-7. (Before,
        // the nearer paths took sigma times a panel's area by its midpoint radius, 4e-7 off
        // the sphere's charge up to 1e8 sizes.)
        let m = model(
            "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 1.0]\n\
             radius = 0.1\n\n[drive]\nfrequency = 100e3\npotentials = { ball = 1e5 }\n",
        );
        for r in [3.0, 1e3, 1e8, 1e12, 1e50, 1e80, 1e100, 1e140, 9e149] {
            let want = ((1e5f64 * 0.1).ln() - 2.0 * f64::ln(r)).exp();
            let tol = if r > 10.0 { 2e-9 } else { 2e-7 };
            for u in [
                Vector3::new(1.0, 0.0, 0.0),
                Vector3::new(0.0, 0.0, 1.0),
                Vector3::new(0.0, 0.0, -1.0),
                Vector3::new(0.6, 0.0, -0.8),
                Vector3::new(-0.48, 0.36, 0.8),
            ] {
                let s = &m.eval(&[Point3::new(0.0, 0.0, 1.0) + u * r])[0];
                let e = s.e.clone().unwrap();
                let mag = s.e_mag().unwrap();
                assert!(
                    (mag - want).abs() < tol * want,
                    "r = {r}, {u}: {mag} vs {want}"
                );
                assert!(
                    magnitude(&(e / want - u)) < tol,
                    "r = {r}, {u}: {e} not along {u}"
                );
            }
        }
    }

    #[test]
    fn e_has_no_step_where_the_far_expansion_takes_over() {
        // E of an isolated sphere (radius a = 0.1 m at V) on both sides of the hand-over
        // distance of the far expansion (crate::electrostatic::E_FAR_RATIO sizes, the size
        // being the radius here), against V a / r^2 (J. C. Maxwell, "A Treatise on Electricity
        // and Magnetism", 1873, vol. 1, the electrified sphere), in five directions. Before,
        // the nearer path (clusters of panels) took each panel's charge as sigma 2 pi rho l at
        // its midpoint and the far expansion by the Gauss rule: a step of 4e-7 at the hand-over.
        // Both now take the same Gauss-rule charge, so both sides are within what the panels
        // reach (the capacitance's 4e-10 seen: 2e-9), and the step between them (E r^2 just
        // inside against just outside) is rounding: 1e-13.
        let m = model(
            "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 1.0]\n\
             radius = 0.1\n\n[drive]\nfrequency = 100e3\npotentials = { ball = 1e5 }\n",
        );
        let hand_over = crate::electrostatic::E_FAR_RATIO * 0.1;
        for u in [
            Vector3::new(1.0, 0.0, 0.0),
            Vector3::new(0.0, 0.0, 1.0),
            Vector3::new(0.0, 0.0, -1.0),
            Vector3::new(0.6, 0.0, -0.8),
            Vector3::new(-0.48, 0.36, 0.8),
        ] {
            let mut scaled = Vec::new();
            for r in [hand_over * (1.0 - 1e-9), hand_over * (1.0 + 1e-9)] {
                let want = 1e5 * 0.1 / (r * r);
                let s = &m.eval(&[Point3::new(0.0, 0.0, 1.0) + u * r])[0];
                let e = s.e.clone().unwrap();
                let err = magnitude(&(e - u * want)) / want;
                assert!(err < 2e-9, "r = {r}, {u}: {e} vs {want}: {err:e}");
                scaled.push(e * (r * r));
            }
            let step = magnitude(&(scaled[1] - scaled[0])) / magnitude(&scaled[0]);
            assert!(step < 1e-13, "{u}: a step of {step:e} at the hand-over");
        }
    }

    #[test]
    fn far_e_over_a_grounded_plane_is_the_dipole_of_charge_and_image() {
        // A sphere of radius a at V, its centre h above a grounded plane, seen from r >> h:
        // the charge q and its image -q form a dipole p = 2 q h along the axis, E on the axis
        // = p / (2 pi eps0 r^3) (Jackson 1999, eq. 4.13), q = 4 pi eps0 a V (1 + a / (2 h))
        // to first order in a / h (images of a sphere, Maxwell 1873, vol. 1, ch. XI). With
        // a / h = 0.01 the series' next term is about 3e-5 of q, and the field differs from
        // the dipole's by about (h / r)^2 (1e-6 at 1e4 m): 2e-4. Beyond 1e16 h the panel sum
        // alone would have cancelled to nothing (the dipole field is 1e-16 r / h of each
        // charge's own).
        let m = model(
            "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 10.0]\n\
             radius = 0.1\n[ground]\nz = 0.0\n[drive]\nfrequency = 100e3\npotentials = { ball = 1e5 }\n",
        );
        let eps0 = crate::constants::EPS0;
        let q = 4.0 * PI * eps0 * 0.1 * 1e5 * (1.0 + 0.1 / 20.0);
        let p = 2.0 * q * 10.0;
        // In every direction above the plane the dipole's field (3 (p . r^) r^ - p) / (4 pi
        // eps0 r^3) (Jackson 1999, eq. 4.13), to the same tolerance of the dipole's scale;
        // below the plane no value.
        for r in [1e4, 1e7, 1e9, 1e16, 1e40, 1e90, 1e100] {
            let k = ((p / (4.0 * PI * eps0)).ln() - 3.0 * f64::ln(r)).exp();
            for theta in [0.0_f64, 0.6, 1.2, 1.5, 1.57] {
                let (s, c) = theta.sin_cos();
                let want = Vector3::new(3.0 * c * s * k, 0.0, (3.0 * c * c - 1.0) * k);
                let e = m.eval(&[Point3::new(r * s, 0.0, r * c)])[0]
                    .e
                    .clone()
                    .unwrap();
                if 2.0 * k < f64::MIN_POSITIVE {
                    assert_eq!(e, Vector3::zeros(), "r = {r}, theta {theta}");
                    continue;
                }
                assert!(
                    (e - want).norm() < 2e-4 * 2.0 * k,
                    "r = {r}, theta {theta}: {e} vs {want}"
                );
            }
            let below = m.eval(&[Point3::new(0.3 * r, 0.0, -0.5 * r)]);
            assert_eq!(below[0].e, Err(NoValue::BelowGround), "r = {r}");
        }
    }

    #[test]
    fn small_designs_keep_their_far_fields_down_to_the_normal_range() {
        // The smallest sizes and drives the input accepts (1 nm to 1 um, 1e-12 A, 1e-9 V) seen
        // from 1e3 sizes to the model's range, where the fields fall to 1e-300 and below:
        // a ring's B is the dipole's, m = I pi a^2 (J. D. Jackson, "Classical
        // Electrodynamics", 3rd ed., 1999, eq. 5.56), within 3 (a / r)^2 (its next multipole);
        // a sphere's E is V a / r^2 (Maxwell 1873, vol. 1), within 2e-7 at 30 sizes and 2e-9
        // beyond 100 (as in the test above, which the same panels reach at every scale). The
        // references through logarithms; below the smallest normal f64 the field model gives 0.
        let mu0 = crate::constants::MU0;
        for (a, i) in [(1e-6_f64, 1e-12_f64), (1e-9, 1e-12), (1e-6, 1.0)] {
            let m = model(&format!(
                "[[winding]]\nname = \"r\"\nshape = \"ring\"\norigin = [0.0, 0.0, 0.0]\n\
                 axis = [0.0, 0.0, 1.0]\nradius = {a:e}\nwire_diameter = {:e}\n\
                 [drive]\ncurrents = {{ r = {i:e} }}\n",
                (0.01 * a).max(1e-9)
            ));
            let mut r = 1e3 * a;
            while r < 1e150 {
                for theta in [0.0_f64, 0.3, 1.0, PI / 2.0, 2.0, PI] {
                    let k = ((mu0 * i * a * a / 4.0).ln() - 3.0 * r.ln()).exp();
                    let (s, c) = theta.sin_cos();
                    let want = Vector3::new(3.0 * k * c * s, 0.0, k * (3.0 * c * c - 1.0));
                    let b = m.eval(&[Point3::new(r * s, 0.0, r * c)])[0]
                        .b
                        .clone()
                        .unwrap();
                    if 2.0 * k < f64::MIN_POSITIVE {
                        assert_eq!(b, Vector3::zeros(), "a = {a}, r = {r}, theta {theta}");
                        continue;
                    }
                    let q = a / r;
                    assert!(
                        magnitude(&(b - want)) < (3.0 * q * q + 1e-12) * magnitude(&want),
                        "a = {a}, I = {i}, r = {r}, theta {theta}: {b} vs {want}"
                    );
                }
                r *= 37.0;
            }
        }
        for (a, v) in [(1e-9_f64, 1e-9_f64), (1e-6, 1e-9)] {
            let m = model(&format!(
                "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\n\
                 origin = [0.0, 0.0, 0.0]\nradius = {a:e}\n\
                 [drive]\npotentials = {{ ball = {v:e} }}\n"
            ));
            let mut r = 30.0 * a;
            while r < 1e150 {
                let want = ((v * a).ln() - 2.0 * r.ln()).exp();
                let tol = if r > 100.0 * a { 2e-9 } else { 2e-7 };
                for u in [Vector3::new(0.0, 0.0, 1.0), Vector3::new(0.6, 0.0, -0.8)] {
                    let e = m.eval(&[Point3::from(u * r)])[0].e.clone().unwrap();
                    if want < f64::MIN_POSITIVE {
                        assert_eq!(e, Vector3::zeros(), "a = {a}, r = {r}");
                        continue;
                    }
                    assert!(
                        magnitude(&(e - u * want)) < tol * want,
                        "a = {a}, V = {v}, r = {r}: {e} vs {want}"
                    );
                }
                r *= 37.0;
            }
        }
    }
}
