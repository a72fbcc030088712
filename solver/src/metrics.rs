//! Named figures of a design for sweeps and goal seeking, and constraints on them.
//!
//! Magnetic: `self_inductance.<w>` (H), `mutual.<a>.<b>` (H), `coupling.<a>.<b>`
//! (dimensionless), `gap.<a>.<b>` (m, smallest distance between the two wires' surfaces).
//! Electric (the axisymmetric solve of [`crate::electrostatic`] with its default
//! [`Params`]): `capacitance.<e>` (F, electrode e's diagonal entry of the Maxwell matrix, all
//! other conductors at 0 V), `self_capacitance.<secondary>` (F, the secondary's equivalent
//! self-capacitance at its top with its connected electrodes), `surface_field.<e>` (V/m, the
//! largest surface field on electrode e at the `[drive]` potentials).
//!
//! An [`Evaluator`] is built once from the base design; the self-inductance and the model of a
//! winding that a point leaves unchanged are taken from the base (computed once, on first use),
//! and so is the electric solution of a point that leaves the secondary, the electrodes and the
//! ground plane as they are. Every figure is computed sequentially, so a point's results do not
//! depend on threads.

use crate::Par;
use crate::assembly::{WindingModel, image_model, inductance_entry};
use crate::coupling::coupling;
use crate::electrostatic::{Params, Problem, Solution};
use crate::fem::{ElectricSolver, FemProblem, FemSolution, FromDesignError};
use coilfield_geometry::query::checks::PreparedDesign;
use coilfield_geometry::{Design, Role, Winding};
use std::sync::OnceLock;

/// A figure of a design, by winding index (file order).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Metric {
    /// Self-inductance (H).
    SelfInductance(usize),
    /// Mutual inductance (H), sign from the windings' current directions.
    Mutual(usize, usize),
    /// Coupling coefficient k = M / sqrt(L_a L_b).
    Coupling(usize, usize),
    /// Smallest surface-to-surface distance of the two wires (m).
    Gap(usize, usize),
    /// Capacitance (F) of an electrode (index, file order): its diagonal Maxwell entry.
    Capacitance(usize),
    /// Equivalent self-capacitance (F) of the secondary winding (index) at its top, with its
    /// connected electrodes.
    SelfCapacitance(usize),
    /// Largest surface field (V/m) on an electrode (index) at the drive potentials.
    SurfaceField(usize),
    /// A figure of the resonance model ([`crate::resonance`]) of the winding (index).
    Resonance(ResonanceFigure, usize),
    /// A figure the caller computes ([`External`]), by the caller's id.
    External(usize),
}

/// The resonance model's figures a sweep can ask for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ResonanceFigure {
    /// `frequency.<secondary>`: first resonance of the distributed model (Hz).
    Frequency,
    /// `equivalent_capacitance.<secondary>`: 1 / ((2 pi f1)^2 L_s) (F).
    EquivalentCapacitance,
    /// `tuning_capacitance.<primary>`: the capacitance that tunes the primary in use to f1 (F).
    TuningCapacitance,
    /// `tap_turns.<primary>`: the tap that tunes the tank capacitor to f1 (turns).
    TapTurns,
    /// `q.<winding>`: Q of the secondary's first mode or of the primary circuit.
    Q,
    /// `peak_voltage.<secondary>`: the drive model's peak top voltage (V).
    PeakVoltage,
}

/// Figures the caller computes and the evaluator knows by name: e.g. clearance distances,
/// whose thresholds are the caller's settings. Values are SI.
pub trait External: Send + Sync {
    /// The caller's id of metric `name`: None when the name is not one of these, an error
    /// when it is but does not fit `design` (the base design).
    fn parse(&self, name: &str, design: &Design) -> Option<Result<usize, String>>;

    /// Whether the metrics need the electric solution of `design`: the evaluator then passes
    /// the one it has ([`Params`] default, solved sequentially), the base design's when the
    /// point leaves the electric model as it is.
    fn needs_electric(&self, _design: &Design) -> bool {
        false
    }

    /// The values of the metrics `ids` on `design`, in that order, and notes on them for the
    /// point's message (e.g. "a lower bound"): computed together, since they usually share one
    /// expensive model. `electric` is the design's electric solution when
    /// [`External::needs_electric`] asked for it. Must not depend on the number of threads.
    fn values(
        &self,
        ids: &[usize],
        design: &Design,
        electric: Option<&Solution>,
    ) -> Result<(Vec<f64>, Vec<String>), String>;
}

const KNOWN_METRICS: &str = "self_inductance.<w>, mutual.<a>.<b>, coupling.<a>.<b>, \
                             gap.<a>.<b>, capacitance.<electrode>, self_capacitance.<secondary>, \
                             surface_field.<electrode>, frequency.<secondary>, \
                             equivalent_capacitance.<secondary>, tuning_capacitance.<primary>, \
                             tap_turns.<primary>, q.<winding>, peak_voltage.<secondary>";

/// Position of `wanted` among `names` (a design's windings or electrodes, `kind` says which), or
/// a message for metric `metric` that lists the names there are.
fn position_of<'a>(
    metric: &str,
    kind: &str,
    wanted: &str,
    names: impl Iterator<Item = &'a str> + Clone,
) -> Result<usize, String> {
    names.clone().position(|n| n == wanted).ok_or_else(|| {
        let all: Vec<&str> = names.collect();
        let listed = if all.is_empty() {
            "(none)".to_string()
        } else {
            all.join(", ")
        };
        format!("`{metric}`: no {kind} named `{wanted}` in the base design ({kind}s: {listed})")
    })
}

fn electrode_index(name: &str, e: &str, design: &Design) -> Result<usize, String> {
    position_of(
        name,
        "electrode",
        e,
        design.electrodes.iter().map(|x| x.name.as_str()),
    )
}

/// The check that the electric model of `design` can be built (one axis, a helix secondary),
/// made when an electric metric `name` is parsed, so that a sweep stops before any work.
fn electric_model_of(name: &str, design: &Design) -> Result<(), String> {
    Problem::from_design(design, &Params::default(), "the base design")
        .map(|_| ())
        .map_err(|e| format!("`{name}`: {e}"))
}

/// Parse a metric name against the windings and electrodes of a design.
pub fn parse_metric(name: &str, design: &Design) -> Result<Metric, String> {
    parse_metric_with(name, design, None)
}

/// As [`parse_metric`], with the caller's own figures (`external`) known too.
pub fn parse_metric_with(
    name: &str,
    design: &Design,
    external: Option<&dyn External>,
) -> Result<Metric, String> {
    if let Some(found) = external.and_then(|x| x.parse(name, design)) {
        return found.map(Metric::External);
    }
    let index = |w: &str| {
        position_of(
            name,
            "winding",
            w,
            design.windings.iter().map(|x| x.name.as_str()),
        )
    };
    let parts: Vec<&str> = name.split('.').collect();
    let pair = |parts: &[&str]| -> Result<(usize, usize), String> {
        let (a, b) = (index(parts[1])?, index(parts[2])?);
        if a == b {
            return Err(format!(
                "`{name}`: a pair of two different windings is needed"
            ));
        }
        Ok((a, b))
    };
    match parts.as_slice() {
        ["self_inductance", w] => Ok(Metric::SelfInductance(index(w)?)),
        ["mutual", _, _] => pair(&parts).map(|(a, b)| Metric::Mutual(a, b)),
        ["coupling", _, _] => pair(&parts).map(|(a, b)| Metric::Coupling(a, b)),
        ["gap", _, _] => pair(&parts).map(|(a, b)| Metric::Gap(a, b)),
        ["capacitance", e] => {
            let i = electrode_index(name, e, design)?;
            electric_model_of(name, design)?;
            Ok(Metric::Capacitance(i))
        }
        ["surface_field", e] => {
            let i = electrode_index(name, e, design)?;
            electric_model_of(name, design)?;
            if design.drive.potentials_v.is_empty() {
                return Err(format!(
                    "`{name}`: needs [drive] potentials in the base design (peak V)"
                ));
            }
            Ok(Metric::SurfaceField(i))
        }
        ["self_capacitance", w] => {
            let i = index(w)?;
            if design.windings[i].role != Role::Secondary {
                return Err(format!(
                    "`{name}`: winding `{w}` is not the secondary (role = \"secondary\")"
                ));
            }
            electric_model_of(name, design)?;
            Ok(Metric::SelfCapacitance(i))
        }
        [
            figure @ ("frequency"
            | "equivalent_capacitance"
            | "tuning_capacitance"
            | "tap_turns"
            | "q"
            | "peak_voltage"),
            w,
        ] => {
            let i = index(w)?;
            let role = design.windings[i].role;
            let (figure, wanted) = match *figure {
                "frequency" => (ResonanceFigure::Frequency, Some(Role::Secondary)),
                "equivalent_capacitance" => (
                    ResonanceFigure::EquivalentCapacitance,
                    Some(Role::Secondary),
                ),
                "tuning_capacitance" => (ResonanceFigure::TuningCapacitance, Some(Role::Primary)),
                "tap_turns" => (ResonanceFigure::TapTurns, Some(Role::Primary)),
                "peak_voltage" => (ResonanceFigure::PeakVoltage, Some(Role::Secondary)),
                _ => (ResonanceFigure::Q, None),
            };
            let ok = match wanted {
                Some(r) => role == r,
                None => role != Role::Other,
            };
            if !ok {
                return Err(format!(
                    "`{name}`: winding `{w}` has role = \"{}\"; this figure is of the {}",
                    match role {
                        Role::Secondary => "secondary",
                        Role::Primary => "primary",
                        Role::Other => "other",
                    },
                    match wanted {
                        Some(Role::Secondary) => "secondary",
                        Some(_) => "primary",
                        None => "secondary or the primary",
                    }
                ));
            }
            if figure == ResonanceFigure::PeakVoltage
                && design.drive.kind == coilfield_geometry::DriveKind::Explicit
            {
                return Err(format!(
                    "`{name}`: needs a drive model in the base design ([drive] kind = \
                     \"spark_gap\" or \"driven\")"
                ));
            }
            if figure == ResonanceFigure::TapTurns && design.drive.tank_capacitance().is_none() {
                return Err(format!(
                    "`{name}`: needs a tank capacitor in the base design ([drive] \
                     tank_capacitance with kind = \"spark_gap\" or \"driven\")"
                ));
            }
            // The model must be buildable on the base, so that a sweep stops before any work.
            crate::resonance::resonance_roles(design, "the base design")
                .map_err(|e| format!("`{name}`: {e}"))?;
            electric_model_of(name, design)?;
            Ok(Metric::Resonance(figure, i))
        }
        _ => Err(format!("`{name}`: unknown metric; known: {KNOWN_METRICS}")),
    }
}

/// Comparison of a constraint.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Op {
    /// `<=`
    Le,
    /// `>=`
    Ge,
    /// `<`
    Lt,
    /// `>`
    Gt,
}

/// A constraint `metric op bound`, e.g. `gap.sec.pri >= 0.005` (SI units).
#[derive(Debug, Clone, PartialEq)]
pub struct Constraint {
    /// The constrained figure.
    pub metric: Metric,
    /// The comparison.
    pub op: Op,
    /// The bound (SI units of the metric).
    pub bound: f64,
    /// The constraint as written.
    pub text: String,
}

/// The message of a point whose figure came out `v`, not a finite number.
fn non_finite(what: &str, v: f64) -> String {
    format!("{what}: the computed value is {v}, not a finite number; the point has no result")
}

impl Constraint {
    /// Whether `value` satisfies it (NaN never does).
    pub fn holds(&self, value: f64) -> bool {
        match self.op {
            Op::Le => value <= self.bound,
            Op::Ge => value >= self.bound,
            Op::Lt => value < self.bound,
            Op::Gt => value > self.bound,
        }
    }

    /// How far `value` is on the wrong side of the bound (0 when it holds).
    pub fn violation(&self, value: f64) -> f64 {
        if self.holds(value) {
            0.0
        } else if value.is_nan() {
            f64::INFINITY
        } else {
            (value - self.bound).abs()
        }
    }
}

/// Parse `metric op bound` against the windings of a design.
pub fn parse_constraint(text: &str, design: &Design) -> Result<Constraint, String> {
    parse_constraint_with(text, design, None)
}

/// As [`parse_constraint`], with the caller's own figures (`external`) known too.
pub fn parse_constraint_with(
    text: &str,
    design: &Design,
    external: Option<&dyn External>,
) -> Result<Constraint, String> {
    let words: Vec<&str> = text.split_whitespace().collect();
    let [metric, op, bound] = words.as_slice() else {
        return Err(format!(
            "`{text}`: expected `metric op number`, e.g. `gap.secondary.primary >= 0.005`"
        ));
    };
    let op = match *op {
        "<=" => Op::Le,
        ">=" => Op::Ge,
        "<" => Op::Lt,
        ">" => Op::Gt,
        other => return Err(format!("`{text}`: `{other}` is not one of <=, >=, <, >")),
    };
    let bound: f64 = bound
        .parse()
        .ok()
        .filter(|b: &f64| b.is_finite())
        .ok_or_else(|| format!("`{text}`: `{bound}` is not a finite number"))?;
    Ok(Constraint {
        metric: parse_metric_with(metric, design, external)?,
        op,
        bound,
        text: text.to_string(),
    })
}

/// Outcome of one point.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Status {
    /// All figures computed, all constraints hold.
    Ok,
    /// A constraint does not hold (the message says which).
    Infeasible,
    /// The point could not be computed (the message says why).
    Error,
}

impl Status {
    /// `ok`, `infeasible` or `error`.
    pub fn as_str(self) -> &'static str {
        match self {
            Status::Ok => "ok",
            Status::Infeasible => "infeasible",
            Status::Error => "error",
        }
    }
}

/// The figures of one point.
#[derive(Debug, Clone, PartialEq)]
pub struct PointResult {
    /// One value per requested metric (SI units); empty when `status` is `Error`.
    pub values: Vec<f64>,
    /// Outcome.
    pub status: Status,
    /// Reasons (violated constraints, the error, caveats), or empty.
    pub message: String,
}

struct Cached {
    winding: Winding,
    model: OnceLock<WindingModel>,
    /// The model of its image in a conducting ground plane.
    image: OnceLock<WindingModel>,
    self_h: OnceLock<Result<f64, String>>,
}

/// Evaluates metrics and constraints on variants of one base design.
pub struct Evaluator {
    base: Vec<Cached>,
    /// The base design's secondary model of the resonance (computed on first use).
    base_resonance: OnceLock<Result<crate::resonance::SecondaryModel, String>>,
    /// The base design prepared for the checks between parts and the wire gaps of variants.
    prepared: PreparedDesign,
    base_design: Design,
    base_electric: OnceLock<Result<Solution, String>>,
    /// The base design's finite-element solution (when its media act on E), on first use.
    base_fem: OnceLock<Result<FemSolution, String>>,
    metrics: Vec<Metric>,
    constraints: Vec<Constraint>,
    external: Option<Box<dyn External>>,
    /// The external ids the metrics and constraints use, each once.
    external_ids: Vec<usize>,
}

/// Quantities computed for one point, each at most once.
struct Scratch<'a> {
    design: &'a Design,
    models: Vec<Option<WindingModel>>,
    images: Vec<Option<WindingModel>>,
    self_h: Vec<Option<f64>>,
    mutual_h: Vec<((usize, usize), f64)>,
    gap_m: Vec<((usize, usize), f64)>,
    resonance: Option<Result<crate::resonance::Resonance, String>>,
    electric: Option<Result<Solution, String>>,
    fem: Option<Result<FemSolution, String>>,
    /// The external figures of the point (ids as `Evaluator::external_ids`).
    external: Option<Result<Vec<f64>, String>>,
    notes: Vec<String>,
}

impl<'a> Scratch<'a> {
    fn new(design: &'a Design) -> Scratch<'a> {
        let n = design.windings.len();
        Scratch {
            design,
            models: vec![None; n],
            images: vec![None; n],
            self_h: vec![None; n],
            mutual_h: Vec::new(),
            gap_m: Vec::new(),
            resonance: None,
            electric: None,
            fem: None,
            external: None,
            notes: Vec::new(),
        }
    }
}

/// The electric solution of a design, or why there is none.
fn solve_electric(design: &Design) -> Result<Solution, String> {
    Problem::from_design(design, &Params::default(), "the point's design")
        .map_err(|e| e.to_string())?
        .solve(crate::Par::Seq)
        .map_err(|e| e.to_string())
}

/// The finite-element solution of a design (its own mesh), or why there is none.
fn solve_fem(design: &Design) -> Result<FemSolution, String> {
    FemProblem::from_design(design, "the point's design")
        .map_err(|e| match e {
            FromDesignError::Design(d) => d.to_string(),
            FromDesignError::Solver(s) => s.to_string(),
        })?
        .solve()
        .map_err(|e| e.to_string())
}

/// A solution solved at most once: in the sweep's shared cell when the point's electric model
/// is the base's (`same`), else in the point's own slot.
fn solved_once<'s, T>(
    same: bool,
    base: &'s OnceLock<Result<T, String>>,
    point: &'s mut Option<Result<T, String>>,
    solve: impl FnOnce() -> Result<T, String>,
) -> Result<&'s T, String> {
    let slot = if same {
        base.get_or_init(solve)
    } else {
        point.get_or_insert_with(solve)
    };
    slot.as_ref().map_err(Clone::clone)
}

/// Whether the electric model of `a` and `b` is the same: the secondary windings, the
/// electrodes, the ground plane, the drive, and the dielectrics, enclosure and mesh settings.
fn same_electric_model(a: &Design, b: &Design) -> bool {
    fn secondaries(d: &Design) -> impl Iterator<Item = &Winding> {
        d.windings.iter().filter(|w| w.role == Role::Secondary)
    }
    a.electrodes == b.electrodes
        && a.ground == b.ground
        && a.media == b.media
        && a.drive == b.drive
        && secondaries(a).eq(secondaries(b))
}

impl Evaluator {
    /// An evaluator of `metrics` and `constraints` (parsed against `base`).
    pub fn new(base: &Design, metrics: Vec<Metric>, constraints: Vec<Constraint>) -> Evaluator {
        Evaluator::with_external(base, metrics, constraints, None)
    }

    /// As [`Evaluator::new`], with the caller's figures (`Metric::External` ids of
    /// `external`).
    pub fn with_external(
        base: &Design,
        metrics: Vec<Metric>,
        constraints: Vec<Constraint>,
        external: Option<Box<dyn External>>,
    ) -> Evaluator {
        let mut external_ids: Vec<usize> = Vec::new();
        for m in metrics.iter().chain(constraints.iter().map(|c| &c.metric)) {
            if let Metric::External(id) = *m
                && !external_ids.contains(&id)
            {
                external_ids.push(id);
            }
        }
        Evaluator {
            base: base
                .windings
                .iter()
                .map(|w| Cached {
                    winding: w.clone(),
                    model: OnceLock::new(),
                    image: OnceLock::new(),
                    self_h: OnceLock::new(),
                })
                .collect(),
            prepared: PreparedDesign::new(base),
            base_resonance: OnceLock::new(),
            base_design: base.clone(),
            base_electric: OnceLock::new(),
            base_fem: OnceLock::new(),
            metrics,
            constraints,
            external,
            external_ids,
        }
    }

    /// Value of the caller's figure `id` at the point; all of the point's external figures
    /// are computed on the first request.
    fn external_value(&self, s: &mut Scratch<'_>, id: usize) -> Result<f64, String> {
        let Some(ext) = &self.external else {
            return Err(format!("external metric #{id} without its evaluator"));
        };
        let design = s.design;
        let position = self.external_ids.iter().position(|&x| x == id);
        if position.is_some() && s.external.is_some() {
            return self.stored_external(s, position);
        }
        let ids = match position {
            Some(_) => self.external_ids.clone(),
            // Not among the metrics and constraints (a goal-seeking target): alone.
            None => vec![id],
        };
        let found = if ext.needs_electric(design) {
            let sol = self.electric(s)?;
            ext.values(&ids, design, Some(sol))
        } else {
            ext.values(&ids, design, None)
        };
        let found = found.map(|(v, notes)| {
            s.notes.extend(notes);
            v
        });
        if position.is_none() {
            return found?
                .first()
                .copied()
                .ok_or_else(|| format!("external metric #{id} was not computed"));
        }
        s.external = Some(found);
        self.stored_external(s, position)
    }

    /// The stored external value at `position` of the point's external figures.
    fn stored_external(&self, s: &Scratch<'_>, position: Option<usize>) -> Result<f64, String> {
        let k = position.ok_or("external metric not among the requested ones")?;
        let values = s
            .external
            .as_ref()
            .map_or(Err("external metrics not computed".to_string()), |r| {
                r.as_ref().map_err(Clone::clone)
            })?;
        values
            .get(k)
            .copied()
            .ok_or_else(|| format!("external metric #{k} was not computed"))
    }

    /// The point's electric solution: the base's when its electric model is the base's.
    fn electric<'s>(&'s self, s: &'s mut Scratch<'_>) -> Result<&'s Solution, String> {
        let same = same_electric_model(s.design, &self.base_design);
        let design = s.design;
        solved_once(same, &self.base_electric, &mut s.electric, || {
            solve_electric(if same { &self.base_design } else { design })
        })
    }

    /// The point's finite-element solution: the base's when its electric model is the base's.
    fn fem<'s>(&'s self, s: &'s mut Scratch<'_>) -> Result<&'s FemSolution, String> {
        let same = same_electric_model(s.design, &self.base_design);
        let design = s.design;
        solved_once(same, &self.base_fem, &mut s.fem, || {
            solve_fem(if same { &self.base_design } else { design })
        })
    }

    /// A capacitance or surface-field metric from the finite-element solver (the design has a
    /// dielectric or an enclosure): the same figures as [`Evaluator::electric_value`].
    fn fem_value(&self, s: &mut Scratch<'_>, m: Metric) -> Result<f64, String> {
        let design = s.design;
        let sol = self.fem(s)?;
        let names = sol.conductor_names();
        let position = |e: usize| {
            let name = &design.electrodes[e].name;
            names.iter().position(|n| n == name).ok_or_else(|| {
                format!("electrode `{name}` is not a conductor of the finite-element model")
            })
        };
        match m {
            Metric::Capacitance(e) => {
                let i = position(e)?;
                Ok(sol.capacitance_matrix_f()[i][i])
            }
            Metric::SelfCapacitance(_) => sol
                .self_capacitance_f()
                .map(|(c, _)| c)
                .ok_or_else(|| "the electric model has no secondary".to_string()),
            Metric::SurfaceField(e) => {
                let name = &design.electrodes[e].name;
                sol.peak_surface_fields()
                    .into_iter()
                    .find(|p| &p.name == name)
                    .map(|p| p.field_v_per_m)
                    .ok_or_else(|| format!("electrode `{name}` has no surface field in the mesh"))
            }
            _ => Err(format!("{m:?} is not an electric metric")),
        }
    }

    fn electric_value(&self, s: &mut Scratch<'_>, m: Metric) -> Result<f64, String> {
        // The same automatic rule as `capacitance`: finite elements when a dielectric or an
        // enclosure acts on E.
        if ElectricSolver::Auto.uses_fem(s.design) {
            return self.fem_value(s, m);
        }
        let design = s.design;
        let sol = self.electric(s)?;
        let position = |e: usize| {
            let name = &design.electrodes[e].name;
            sol.conductor_names()
                .iter()
                .position(|n| n == name)
                .ok_or_else(|| {
                    format!("electrode `{name}` is not an equipotential conductor of the solve")
                })
        };
        match m {
            Metric::Capacitance(e) => Ok(sol.capacitances_f()[position(e)?]),
            Metric::SelfCapacitance(_) => sol
                .self_capacitance_f()
                .map(|c| c.total_f)
                .ok_or_else(|| "the electric model has no secondary".to_string()),
            Metric::SurfaceField(e) => {
                let name = &design.electrodes[e].name;
                sol.peak_surface_fields()
                    .into_iter()
                    .find(|p| &p.name == name)
                    .map(|p| p.field_v_per_m)
                    .ok_or_else(|| format!("electrode `{name}` has no panels in the solve"))
            }
            _ => Err(format!("{m:?} is not an electric metric")),
        }
    }

    /// Parse a metric name against `design` with this evaluator's external figures known.
    pub fn parse_metric(&self, name: &str, design: &Design) -> Result<Metric, String> {
        parse_metric_with(name, design, self.external.as_deref())
    }

    /// The requested metrics.
    pub fn metrics(&self) -> &[Metric] {
        &self.metrics
    }

    fn unchanged(&self, design: &Design, i: usize) -> Option<&Cached> {
        self.base
            .get(i)
            .filter(|c| design.windings.get(i) == Some(&c.winding))
    }

    /// Build the model of winding `i` (and its image over a conducting ground) for the point,
    /// or take the base's when the point leaves the winding as it is.
    fn build(&self, s: &mut Scratch<'_>, i: usize) {
        let ground = s.design.ground.filter(|g| g.conducting);
        if let Some(c) = self.unchanged(s.design, i) {
            c.model.get_or_init(|| WindingModel::of(&c.winding));
            if let Some(g) = ground {
                c.image.get_or_init(|| image_model(&c.winding, &g));
            }
            return;
        }
        let w = &s.design.windings[i];
        if s.models[i].is_none() {
            s.models[i] = Some(WindingModel::of(w));
        }
        if let Some(g) = ground
            && s.images[i].is_none()
        {
            s.images[i] = Some(image_model(w, &g));
        }
    }

    /// The model of winding `i` (`image`: of its image) built by [`Evaluator::build`].
    fn built<'s>(&'s self, s: &'s Scratch<'_>, i: usize, image: bool) -> Option<&'s WindingModel> {
        match (self.unchanged(s.design, i), image) {
            (Some(c), false) => c.model.get(),
            (Some(c), true) => c.image.get(),
            (None, false) => s.models[i].as_ref(),
            (None, true) => s.images[i].as_ref(),
        }
    }

    /// Entry (a, b) of the point's inductance matrix through the one path of
    /// [`inductance_entry`] (images of a conducting ground included).
    fn entry(&self, s: &mut Scratch<'_>, a: usize, b: usize) -> Result<f64, String> {
        self.build(s, a);
        self.build(s, b);
        let model_a = self.built(s, a, false).ok_or("model not built")?;
        let model_b = self.built(s, b, false).ok_or("model not built")?;
        let image_b = self.built(s, b, true);
        let (v, _, converged) = inductance_entry(model_a, model_b, a == b, image_b, Par::Seq)
            .map_err(|e| e.to_string())?;
        if !converged {
            s.notes.push(format!(
                "mutual.{}.{}: the quadrature did not reach its tolerance (wires very close)",
                s.design.windings[a].name, s.design.windings[b].name
            ));
        }
        Ok(v)
    }

    fn self_h(&self, s: &mut Scratch<'_>, i: usize) -> Result<f64, String> {
        if let Some(c) = self.unchanged(s.design, i) {
            if let Some(v) = c.self_h.get() {
                return v.clone();
            }
            let v = self.entry(s, i, i);
            return c.self_h.get_or_init(|| v).clone();
        }
        if let Some(v) = s.self_h[i] {
            return Ok(v);
        }
        let v = self.entry(s, i, i)?;
        s.self_h[i] = Some(v);
        Ok(v)
    }

    fn mutual_h(&self, s: &mut Scratch<'_>, a: usize, b: usize) -> Result<f64, String> {
        let key = (a.min(b), a.max(b));
        if let Some(&(_, v)) = s.mutual_h.iter().find(|(k, _)| *k == key) {
            return Ok(v);
        }
        let v = self.entry(s, a, b)?;
        s.mutual_h.push((key, v));
        Ok(v)
    }

    /// The wire gap of windings a and b at the point, computed once per point (a metric that
    /// is also a constraint), with the prepared wires of unchanged windings.
    fn gap_m(&self, s: &mut Scratch<'_>, a: usize, b: usize) -> f64 {
        let key = (a.min(b), a.max(b));
        if let Some(&(_, v)) = s.gap_m.iter().find(|(k, _)| *k == key) {
            return v;
        }
        let v = self.prepared.gap_m(s.design, a, b);
        s.gap_m.push((key, v));
        v
    }

    /// The point's resonance model, computed once per point; the secondary's part is the base
    /// design's when the point leaves the secondary, the electrodes and the ground plane as
    /// they are (a sweep of the primary's place solves E once).
    fn resonance<'s>(
        &'s self,
        s: &'s mut Scratch<'_>,
    ) -> Result<&'s crate::resonance::Resonance, String> {
        if s.resonance.is_none() {
            let design = s.design;
            let params = crate::resonance::ResonanceParams::default();
            let same_secondary = {
                fn secondaries(d: &Design) -> impl Iterator<Item = &Winding> {
                    d.windings.iter().filter(|w| w.role == Role::Secondary)
                }
                design.electrodes == self.base_design.electrodes
                    && design.ground == self.base_design.ground
                    && secondaries(design).eq(secondaries(&self.base_design))
            };
            let label = "the point's design";
            let base = self.base_resonance.get_or_init(|| {
                crate::resonance::secondary_model(
                    &self.base_design,
                    "the base design",
                    &params,
                    Par::Seq,
                )
                .map_err(|e| e.to_string())
            });
            let result = match (same_secondary, base) {
                (true, Ok(model)) => {
                    crate::resonance::resonance_with(design, label, model, Par::Seq)
                        .map_err(|e| e.to_string())
                }
                (true, Err(e)) => Err(e.clone()),
                (false, base) => {
                    // The base's converged section count, without a second solve for the
                    // error estimate.
                    let sections = base.as_ref().ok().map(|m| m.result.sections);
                    let params = crate::resonance::ResonanceParams {
                        sections,
                        estimate_error: sections.is_none(),
                        ..params
                    };
                    crate::resonance::resonance(design, label, &params, Par::Seq)
                        .map_err(|e| e.to_string())
                }
            };
            s.resonance = Some(result);
        }
        s.resonance
            .as_ref()
            .map_or(Err("no resonance".to_string()), |r| {
                r.as_ref().map_err(Clone::clone)
            })
    }

    fn resonance_value(
        &self,
        s: &mut Scratch<'_>,
        figure: ResonanceFigure,
        i: usize,
    ) -> Result<f64, String> {
        let name = s.design.windings[i].name.clone();
        let r = self.resonance(s)?;
        let primary = || {
            r.primary
                .as_ref()
                .filter(|p| p.name == name)
                .ok_or_else(|| format!("winding `{name}` is not the primary of the model"))
        };
        match figure {
            ResonanceFigure::Frequency => Ok(r.secondary.frequency_hz),
            ResonanceFigure::EquivalentCapacitance => Ok(r.secondary.equivalent_capacitance_f),
            ResonanceFigure::TuningCapacitance => Ok(primary()?.tuning_capacitance_f),
            ResonanceFigure::TapTurns => primary()?.tap_for_tank_turns.ok_or_else(|| {
                "no tap within the primary tunes the tank capacitor to f1".to_string()
            }),
            ResonanceFigure::Q => {
                if r.secondary.name == name {
                    Ok(r.secondary.q)
                } else {
                    Ok(primary()?.q)
                }
            }
            ResonanceFigure::PeakVoltage => r
                .drive
                .as_ref()
                .map(|d| d.peak_top_voltage_v)
                .ok_or_else(|| "the design has no drive model".to_string()),
        }
    }

    /// The base design prepared for the checks between the parts of its variants
    /// ([`PreparedDesign::check`]): a sweep or seek checks each point with it.
    pub fn prepared(&self) -> &PreparedDesign {
        &self.prepared
    }

    fn value(&self, s: &mut Scratch<'_>, m: Metric) -> Result<f64, String> {
        Ok(match m {
            Metric::SelfInductance(i) => self.self_h(s, i)?,
            Metric::Mutual(a, b) => self.mutual_h(s, a, b)?,
            Metric::Coupling(a, b) => {
                let m = self.mutual_h(s, a, b)?;
                coupling(m, self.self_h(s, a)?, self.self_h(s, b)?)
            }
            Metric::Gap(a, b) => self.gap_m(s, a, b),
            Metric::Capacitance(_) | Metric::SelfCapacitance(_) | Metric::SurfaceField(_) => {
                self.electric_value(s, m)?
            }
            Metric::Resonance(figure, i) => self.resonance_value(s, figure, i)?,
            Metric::External(id) => self.external_value(s, id)?,
        })
    }

    /// Evaluate the metrics and constraints on `design`, a variant of the base design with the
    /// same windings in the same order.
    pub fn evaluate(&self, design: &Design) -> PointResult {
        let n = design.windings.len();
        let mut s = Scratch::new(design);
        let error = |message: String| PointResult {
            values: Vec::new(),
            status: Status::Error,
            message,
        };
        if n != self.base.len() {
            return error("the point's design has another number of windings".into());
        }
        let mut values = Vec::with_capacity(self.metrics.len());
        for (k, &m) in self.metrics.iter().enumerate() {
            match self.value(&mut s, m) {
                Ok(v) if v.is_finite() => values.push(v),
                Ok(v) => return error(non_finite(&format!("metric #{}", k + 1), v)),
                Err(e) => return error(e),
            }
        }
        let mut violated = Vec::new();
        for c in &self.constraints {
            // A metric that is not a finite number satisfies no constraint: the point is an
            // error, never "ok" (inf >= 0.005 would hold).
            let v = match self.value(&mut s, c.metric) {
                Ok(v) if v.is_finite() => v,
                Ok(v) => return error(non_finite(&format!("constraint `{}`", c.text), v)),
                Err(e) => return error(e),
            };
            if !c.holds(v) {
                violated.push(format!("{} (value {v})", c.text));
            }
        }
        let status = if violated.is_empty() {
            Status::Ok
        } else {
            Status::Infeasible
        };
        let mut message = if violated.is_empty() {
            String::new()
        } else {
            format!("violates {}", violated.join("; "))
        };
        for note in s.notes {
            if !message.is_empty() {
                message.push_str("; ");
            }
            message.push_str(&note);
        }
        PointResult {
            values,
            status,
            message,
        }
    }

    /// Value of one metric on `design` (for goal seeking).
    pub fn metric_value(&self, design: &Design, metric: Metric) -> Result<f64, String> {
        let mut s = Scratch::new(design);
        self.value(&mut s, metric)
    }

    /// The constraints.
    pub fn constraints(&self) -> &[Constraint] {
        &self.constraints
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assembly::inductance_report;
    use crate::mutual::mutual_ring_ring_coaxial;

    fn two_rings(z: f64) -> Design {
        coilfield_geometry::parse_design(
            &format!(
                "[[winding]]\nname = \"a\"\nshape = \"ring\"\norigin = [0.0, 0.0, 0.0]\n\
                 axis = [0.0, 0.0, 1.0]\nradius = 1.0\nwire_diameter = 0.001\n\n\
                 [[winding]]\nname = \"b\"\nshape = \"ring\"\norigin = [0.0, 0.0, {z:?}]\n\
                 axis = [0.0, 0.0, 1.0]\nradius = 1.0\nwire_diameter = 0.001\n"
            ),
            "t.toml",
        )
        .unwrap()
    }

    #[test]
    fn metrics_agree_with_the_full_report_and_constraints_mark_points() {
        let base = two_rings(1.0);
        let names = ["mutual.a.b", "coupling.a.b", "self_inductance.b", "gap.a.b"];
        let metrics = names
            .iter()
            .map(|n| parse_metric(n, &base).unwrap())
            .collect();
        let c = parse_constraint("coupling.a.b <= 0.05", &base).unwrap();
        let ev = Evaluator::new(&base, metrics, vec![c]);
        let moved = two_rings(0.5);
        let r = ev.evaluate(&moved);
        let full = inductance_report(&moved, Par::Seq).unwrap();
        // Maxwell 1873 (two unit rings 1 m apart): 4.9407846308e-7 H, as in the crate docs.
        let base_r = ev.evaluate(&base);
        assert!((base_r.values[0] - 4.940_784_630_8e-7).abs() < 1e-16);
        assert_eq!(r.values[0], mutual_ring_ring_coaxial(1.0, 1.0, 0.5));
        assert_eq!(r.values[1], full.coupling[0][1]);
        assert_eq!(r.values[2], full.mutual_h[1][1]);
        // Coaxial rings of equal radius 0.5 m apart: the wires' surfaces are 0.5 m - 1 mm apart.
        assert!((r.values[3] - 0.499).abs() < 1e-5, "{}", r.values[3]);
        assert_eq!(r.status, Status::Infeasible);
        assert!(r.message.contains("coupling.a.b <= 0.05"), "{}", r.message);
        assert_eq!(base_r.status, Status::Ok);
    }

    #[test]
    fn unknown_names_are_refused() {
        let base = two_rings(1.0);
        assert!(
            parse_metric("coupling.a.c", &base)
                .unwrap_err()
                .contains("no winding named `c`")
        );
        assert!(
            parse_metric("flux.a", &base)
                .unwrap_err()
                .contains("unknown metric")
        );
        assert!(
            parse_metric("capacitance.top", &base)
                .unwrap_err()
                .contains("no electrode named `top`")
        );
        assert!(
            parse_metric("self_capacitance.a", &base)
                .unwrap_err()
                .contains("not the secondary")
        );
        let with_ball = coilfield_geometry::parse_design(
            "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.0]\n\
             radius = 0.1\n",
            "t.toml",
        )
        .unwrap();
        assert!(
            parse_metric("surface_field.ball", &with_ball)
                .unwrap_err()
                .contains("needs [drive] potentials")
        );
        assert!(
            parse_constraint("coupling.a.b == 1", &base)
                .unwrap_err()
                .contains("not one of")
        );
    }
}
