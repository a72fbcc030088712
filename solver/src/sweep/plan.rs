//! A sweep planned once: the sweep file with its base design, the evaluator of its metrics and
//! constraints, its points, and the base tables of the parts its axes edit.

use crate::Par;
use crate::clearance::metrics::ClearanceMetrics;
use crate::error::SolverError;
use crate::metrics::{
    Evaluator, Metric, PointResult, Status, parse_constraint_with, parse_metric_with,
};
use coilfield_geometry::file::sweep::{Part, Sweep, Values, apply_to_item, item_table, points};
use coilfield_geometry::{Design, electrode_from_table, parse_design, winding_from_table};

/// The base table of one winding or electrode that some axes edit, and those axes.
#[derive(Debug, Clone)]
struct Edit {
    part: Part,
    /// Place in the design (file order, from 0).
    index: usize,
    table: toml::Table,
    /// The axes (indices into the sweep's axes) that edit it.
    axes: Vec<usize>,
}

/// A sweep file with its base design, checked and ready to evaluate: plan once, evaluate every
/// point.
///
/// The plan reads no files: the caller parses the sweep file
/// ([`coilfield_geometry::file::sweep::parse_sweep`]) and passes the base design's text.
pub struct SweepPlan {
    sweep_label: String,
    base_label: String,
    sweep: Sweep,
    base_design: Design,
    evaluator: Evaluator,
    points: Vec<Vec<f64>>,
    edits: Vec<Edit>,
    /// Every point's design passed the checks at planning: a sweep of one axis whose values
    /// (not a sampled range) are its points, each checked alone (see
    /// [`SweepPlan::check_axes_alone`]), so a point's design is built again unchecked.
    points_checked: bool,
}

fn bad(message: String) -> SolverError {
    SolverError::BadSweep { message }
}

impl SweepPlan {
    /// The plan of `sweep` (labelled `sweep_label` in messages) on the base design whose text
    /// is `base_text` (labelled `base_label`). Checks, before any point is computed: the base
    /// design, every metric and constraint against it (the clearance metrics with the base's
    /// thresholds), every axis's key against the base's tables, the points, and every value of
    /// every axis set alone in the base design (a sampled axis: both bounds), those values in
    /// parallel under `par` (the first failing value in axis and value order is reported,
    /// whatever the threads).
    pub fn new(
        sweep: Sweep,
        sweep_label: &str,
        base_text: &str,
        base_label: &str,
        par: Par,
    ) -> Result<SweepPlan, SolverError> {
        let base_design = parse_design(base_text, base_label)?;
        let base_table: toml::Table = base_text
            .parse()
            .map_err(|e| bad(format!("{base_label}: {e}")))?;
        let clearance = ClearanceMetrics::new(&base_design, base_label);
        let mut metrics = Vec::new();
        for (i, m) in sweep.metrics.iter().enumerate() {
            metrics.push(
                parse_metric_with(m, &base_design, Some(&clearance))
                    .map_err(|e| bad(format!("{sweep_label}: metrics[{i}]: {e}")))?,
            );
        }
        let mut constraints = Vec::new();
        for (i, c) in sweep.constraints.iter().enumerate() {
            constraints.push(
                parse_constraint_with(c, &base_design, Some(&clearance))
                    .map_err(|e| bad(format!("{sweep_label}: constraints[{i}]: {e}")))?,
            );
        }
        let evaluator = Evaluator::with_external(
            &base_design,
            metrics,
            constraints,
            Some(Box::new(clearance)),
        );
        let edits = edits_of(&sweep, &base_table, sweep_label)?;
        let pts = points(&sweep, sweep_label)?;
        let points_checked = sweep.sample.is_none()
            && matches!(sweep.axes.as_slice(), [axis]
                if axis.grid_len().is_some());
        let plan = SweepPlan {
            sweep_label: sweep_label.to_string(),
            base_label: base_label.to_string(),
            sweep,
            base_design,
            evaluator,
            points: pts,
            edits,
            points_checked,
        };
        plan.check_axes_alone(par)?;
        Ok(plan)
    }

    /// The sweep file's label, as given.
    pub fn sweep_label(&self) -> &str {
        &self.sweep_label
    }

    /// The base design's label, as given.
    pub fn base_label(&self) -> &str {
        &self.base_label
    }

    /// The sweep.
    pub fn sweep(&self) -> &Sweep {
        &self.sweep
    }

    /// The base design.
    pub fn base_design(&self) -> &Design {
        &self.base_design
    }

    /// The evaluator of the sweep's metrics and constraints (clearance metrics included).
    pub fn evaluator(&self) -> &Evaluator {
        &self.evaluator
    }

    /// The points: one value per axis (SI), in point order.
    pub fn points(&self) -> &[Vec<f64>] {
        &self.points
    }

    /// Every value of every axis (a sampled axis: both bounds), set alone in the base design,
    /// must give a valid design. The values are checked under `par`; the error is the first
    /// failing value's in axis and value order.
    fn check_axes_alone(&self, par: Par) -> Result<(), SolverError> {
        // A set of bit patterns: checking each distinct value once stays linear in the
        // number of values (a list scanned per value made a million steps take minutes).
        let mut seen = std::collections::HashSet::new();
        let mut alone: Vec<(usize, f64)> = Vec::new();
        for (j, axis) in self.sweep.axes.iter().enumerate() {
            let values = match (&axis.values, axis.grid_values()) {
                (_, Some(v)) => v,
                (Values::Range { from, to, .. }, None) => vec![*from, *to],
                (Values::List(v), None) => v.clone(),
            };
            alone.extend(
                values
                    .into_iter()
                    .filter(|v| seen.insert((j, v.to_bits())))
                    .map(|v| (j, v)),
            );
        }
        let label = |(j, v): (usize, f64)| {
            format!(
                "{}: axis #{} `{}` = {} (set alone in {})",
                self.sweep_label,
                j + 1,
                self.sweep.axes[j].key,
                shown_value(v),
                self.base_label
            )
        };
        let failures = crate::par::map_indexed(alone.len(), par, |k| {
            self.design_with(&[alone[k]], &label(alone[k])).err()
        });
        match failures
            .into_iter()
            .zip(&alone)
            .find_map(|(e, &a)| Some((e?, a)))
        {
            Some((e, a)) => Err(bad(prefixed(&label(a), e))),
            None => Ok(()),
        }
    }

    /// The design at point `i`, or the message of why there is none.
    pub fn design_at(&self, i: usize) -> Result<Design, String> {
        let values = self
            .points
            .get(i)
            .ok_or_else(|| format!("no point {i}: the sweep has {}", self.points.len()))?;
        let pairs: Vec<(usize, f64)> = values.iter().copied().enumerate().collect();
        let label = format!("point {i}");
        if self.points_checked {
            // Checked at planning as the axis's value alone: the same design.
            self.edited_design(&pairs, &label)
        } else {
            self.design_with(&pairs, &label)
        }
    }

    /// The design with the axes at `values` (one per axis, in order; see
    /// [`SweepPlan::design_with`]); `label` names it in messages.
    pub fn design_for(&self, values: &[f64], label: &str) -> Result<Design, String> {
        let pairs: Vec<(usize, f64)> = values.iter().copied().enumerate().collect();
        self.design_with(&pairs, label)
    }

    /// The base design with the axes `(axis index, value)` set.
    ///
    /// Each winding or electrode that the axes edit is its base table with the values set, read
    /// again with every check of a design file for one item ([`winding_from_table`],
    /// [`electrode_from_table`]); the others are the base's. The checks between items run on
    /// the whole result, over the pairs that involve an edited part
    /// ([`PreparedDesign::check`](coilfield_geometry::query::checks::PreparedDesign::check),
    /// with the base's wires prepared once), as [`parse_design`] runs them. Names cannot be
    /// swept, so they stay unique.
    pub fn design_with(&self, values: &[(usize, f64)], label: &str) -> Result<Design, String> {
        let design = self.edited_design(values, label)?;
        self.evaluator
            .prepared()
            .check(&design, label)
            .map_err(|e| e.to_string())?;
        Ok(design)
    }

    /// As [`SweepPlan::design_with`] without the checks between items (each edited item's own
    /// checks still run).
    fn edited_design(&self, values: &[(usize, f64)], label: &str) -> Result<Design, String> {
        let mut design = self.base_design.clone();
        for edit in &self.edits {
            let mut table = None;
            for &(j, v) in values.iter().filter(|(j, _)| edit.axes.contains(j)) {
                let axis = &self.sweep.axes[j];
                let t = table.get_or_insert_with(|| edit.table.clone());
                apply_to_item(t, &axis.target, v).map_err(|e| format!("{}: {e}", axis.key))?;
            }
            let Some(table) = table else { continue };
            let number = edit.index + 1;
            match edit.part {
                Part::Winding => {
                    design.windings[edit.index] =
                        winding_from_table(table, number, label).map_err(|e| e.to_string())?;
                }
                Part::Electrode => {
                    design.electrodes[edit.index] =
                        electrode_from_table(table, number, label).map_err(|e| e.to_string())?;
                }
            }
        }
        Ok(design)
    }

    /// Evaluate point `i` (sequentially: the result does not depend on threads). A point whose
    /// design fails, or an `i` beyond the points, has status `error` with the reason.
    pub fn evaluate(&self, i: usize) -> PointResult {
        match self.design_at(i) {
            Ok(d) => self.evaluator.evaluate(&d),
            Err(message) => PointResult {
                values: Vec::new(),
                status: Status::Error,
                message,
            },
        }
    }

    /// The value of `metric` (parsed by [`Evaluator::parse_metric`]) with the axes at `values`
    /// (one per axis, in order; `label` names the design in messages), where the design is
    /// valid and every constraint holds; else why not (the design's error, the violated
    /// constraints). Goal seeking searches over it.
    pub fn feasible_value(
        &self,
        values: &[f64],
        metric: Metric,
        label: &str,
    ) -> Result<f64, String> {
        let d = self.design_for(values, label)?;
        let r = self.evaluator.evaluate(&d);
        match r.status {
            Status::Ok => self.evaluator.metric_value(&d, metric),
            Status::Infeasible | Status::Error => Err(r.message),
        }
    }
}

/// The base tables the axes edit, one per winding or electrode, in the order of first use.
fn edits_of(
    sweep: &Sweep,
    base: &toml::Table,
    sweep_label: &str,
) -> Result<Vec<Edit>, SolverError> {
    let mut edits: Vec<Edit> = Vec::new();
    for (j, axis) in sweep.axes.iter().enumerate() {
        let part = axis.target.part();
        let (index, table) = item_table(base, part, axis.target.name()).map_err(|e| {
            bad(format!(
                "{sweep_label}: axis #{} key `{}`: {e}",
                j + 1,
                axis.key
            ))
        })?;
        match edits
            .iter_mut()
            .find(|e| e.part == part && e.index == index)
        {
            Some(e) => e.axes.push(j),
            None => edits.push(Edit {
                part,
                index,
                table: table.clone(),
                axes: vec![j],
            }),
        }
    }
    Ok(edits)
}

/// A message with `label` in front unless it starts with it already.
/// An axis value as a message shows it: exponent form outside the usual range (5e-324, not 324
/// digits).
fn shown_value(v: f64) -> String {
    if v == 0.0 || !v.is_finite() || (1e-4..1e15).contains(&v.abs()) {
        v.to_string()
    } else {
        format!("{v:e}")
    }
}

fn prefixed(label: &str, message: String) -> String {
    if message.starts_with(label) {
        message
    } else {
        format!("{label}: {message}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use coilfield_geometry::file::sweep::parse_sweep;

    const BASE: &str = "[[winding]]\nname = \"a\"\nshape = \"ring\"\norigin = [0.0, 0.0, 0.0]\n\
                        axis = [0.0, 0.0, 1.0]\nradius = 1.0\nwire_diameter = 0.001\n\n\
                        [[winding]]\nname = \"b\"\nshape = \"ring\"\norigin = [0.0, 0.0, 1.0]\n\
                        axis = [0.0, 0.0, 1.0]\nradius = 1.0\nwire_diameter = 0.001\n";

    fn plan(sweep: &str) -> Result<SweepPlan, SolverError> {
        let s = parse_sweep(sweep, "s.toml").unwrap();
        SweepPlan::new(s, "s.toml", BASE, "base.toml", Par::Seq)
    }

    #[test]
    fn a_point_edits_only_the_parts_its_axes_name() {
        let p = plan(
            "base = \"base.toml\"\nmetrics = [\"mutual.a.b\"]\n\
             [[axis]]\nkey = \"winding.b.origin[2]\"\nvalues = [1.0, 2.0]\n\
             [[axis]]\nkey = \"winding.b.radius\"\nvalues = [0.5]\n",
        )
        .unwrap();
        // Both axes edit winding b; winding a is the base's.
        let d = p.design_at(1).unwrap();
        assert_eq!(d.windings[0], p.base_design().windings[0]);
        // The point's ring b, read again from its table: centre at z = 2 m, radius 0.5 m.
        let (origin, _) = d.windings[1].shape.origin_axis().unwrap();
        assert_eq!(origin.z, 2.0);
        assert_eq!((d.windings[1].shape.point_at(0.0) - origin).norm(), 0.5);
        // No axes set: the base design itself.
        assert_eq!(&p.design_with(&[], "base").unwrap(), p.base_design());
        assert!(p.design_at(2).unwrap_err().contains("no point 2"));
    }

    #[test]
    fn a_one_axis_grids_points_are_its_values_checked_at_planning() {
        let one = "base = \"base.toml\"\nmetrics = [\"mutual.a.b\"]\n\
                   [[axis]]\nkey = \"winding.b.origin[2]\"\nfrom = 0.5\nto = 2.0\nsteps = 4\n";
        let p = plan(one).unwrap();
        assert!(p.points_checked);
        // Each point's design, built unchecked, is the design its value gave when checked.
        for (i, values) in p.points().iter().enumerate() {
            let checked = p.design_with(&[(0, values[0])], "checked").unwrap();
            assert_eq!(p.design_at(i).unwrap(), checked);
        }
        // Two axes, or a sampled axis: a point is a combination no planning check saw.
        let two = format!("{one}[[axis]]\nkey = \"winding.b.radius\"\nvalues = [0.5, 1.0]\n");
        assert!(!plan(&two).unwrap().points_checked);
        let sampled =
            one.replace("steps = 4", "") + "[sample]\nmethod = \"random\"\ncount = 3\nseed = 1\n";
        assert!(!plan(&sampled).unwrap().points_checked);
    }

    #[test]
    fn a_value_that_breaks_the_design_alone_is_refused_at_planning() {
        // Ring b moved into ring a's plane with the same radius: the wires cross.
        let e = plan(
            "base = \"base.toml\"\nmetrics = [\"mutual.a.b\"]\n\
             [[axis]]\nkey = \"winding.b.origin[2]\"\nvalues = [1.0, 0.0]\n",
        )
        .err()
        .unwrap()
        .to_string();
        assert!(
            e.starts_with("s.toml: axis #1 `winding.b.origin[2]` = 0 (set alone in base.toml)"),
            "{e}"
        );
    }
}
