//! The field model of a design: E from the electrostatic solution and B from the windings'
//! currents, as one batch evaluator that every command (`field`, `map`, `clearance`, sweeps)
//! calls.
//!
//! All fields are peak amplitudes of the `[drive]`. A drive without currents gives B = 0 and
//! one without potentials E = 0, each with a warning. Inside an electrode neither field has a
//! value (a conductor at the drive frequency shuts the field out, which the free-space magnetic
//! model does not see); below the ground plane E has none; on a wire B has none.

use crate::electrostatic::{FieldSample, Params, Problem, Solution};
use crate::error::SolverError;
use crate::fem::{E_ONLY_WARNING, ElectricSolver, FemProblem, FemSolution, FromDesignError};
use crate::field::{self, Source};
use crate::par::Par;
use coilfield_geometry::{
    Design, DesignError, DriveNeeds, Electrode, Ground, PotentialSpec, validate_drive,
};
use nalgebra::{Point3, Vector3};

/// E at a point: a value, or why there is none.
#[derive(Debug, Clone, PartialEq)]
pub enum EValue {
    /// Peak E (V/m).
    Field(Vector3<f64>),
    /// The point lies inside the named electrode.
    Inside(String),
    /// The point lies below the grounded plane.
    BelowGround,
}

/// E and B at one point (peak values of the drive).
#[derive(Debug, Clone, PartialEq)]
pub struct Sample {
    /// Electric field.
    pub e: EValue,
    /// Magnetic flux density (T); None on a wire or inside an electrode.
    pub b: Option<Vector3<f64>>,
}

impl Sample {
    /// |E| (V/m), or None where E has no value.
    pub fn e_mag(&self) -> Option<f64> {
        match &self.e {
            EValue::Field(v) => Some(v.norm()),
            _ => None,
        }
    }

    /// |B| (T), or None where B has no value.
    pub fn b_mag(&self) -> Option<f64> {
        self.b.map(|v| v.norm())
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
        Ok(FieldModel {
            sources,
            electric,
            solver_name: choice.name_for(design),
            electrodes: design.electrodes.clone(),
            ground: design.ground,
            par,
            warnings,
        })
    }

    /// E and B at `points_m`.
    pub fn eval(&self, points_m: &[Point3<f64>]) -> Vec<Sample> {
        let b = field::b_field(&self.sources, points_m, self.par);
        let e: Vec<EValue> = match &self.electric {
            Electric::Bem(sol) => sol
                .e_field(points_m, self.par)
                .into_iter()
                .map(|s| match s {
                    FieldSample::Field(v) => EValue::Field(v),
                    FieldSample::InsideConductor(name) => EValue::Inside(name),
                    FieldSample::BelowGround => EValue::BelowGround,
                })
                .collect(),
            // Inside an electrode and below the ground the same verdicts as the boundary
            // elements give; elsewhere the finite-element field, 0 beyond a grounded wall.
            Electric::Fem(sol) => points_m
                .iter()
                .zip(sol.e_field(points_m))
                .map(|(p, e)| match self.zero_e_at(p) {
                    EValue::Field(zero) => EValue::Field(e.map_or(zero, |(_, v)| v)),
                    other => other,
                })
                .collect(),
            // E is zero without potentials, but still undefined inside a conductor: the
            // points are told apart the same way as with a solution.
            Electric::Zero => points_m.iter().map(|p| self.zero_e_at(p)).collect(),
        };
        e.into_iter()
            .zip(b)
            .map(|(e, b)| match e {
                EValue::Inside(_) => Sample { e, b: None },
                _ => Sample { e, b },
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
    fn zero_e_at(&self, p: &Point3<f64>) -> EValue {
        if let Some(e) = self
            .electrodes
            .iter()
            .find(|e| e.shape.signed_distance_m(p) < 0.0)
        {
            return EValue::Inside(e.name.clone());
        }
        if self.ground.is_some_and(|g| p.z < g.z_m) {
            return EValue::BelowGround;
        }
        EValue::Field(Vector3::zeros())
    }
}

/// Distances (m) of `points_m` from the design's centre (the mean of its winding and electrode
/// origins), for [`crate::electrostatic::validity_warnings`].
pub fn distances_from_centre_m(design: &Design, points_m: &[Point3<f64>]) -> Vec<f64> {
    let mut origins: Vec<Point3<f64>> = design
        .windings
        .iter()
        .filter_map(|w| w.shape.origin_axis().map(|(o, _)| o))
        .collect();
    origins.extend(design.electrodes.iter().map(|e| e.shape.origin_axis().0));
    if origins.is_empty() {
        return Vec::new();
    }
    let c = origins
        .iter()
        .fold(Vector3::zeros(), |acc, o| acc + o.coords)
        / origins.len() as f64;
    points_m.iter().map(|p| (p.coords - c).norm()).collect()
}
