//! Clearance distances as sweep and seek metrics: `clearance.<threshold>` (m, from the axis,
//! the largest over the heights) and `clearance_top.<threshold>` (m, from the top electrode's
//! surface), from the same [`search`] as a single design's clearance, given to the
//! [`Evaluator`](crate::metrics::Evaluator) through the [`External`] trait.

use crate::Par;
use crate::clearance::search::{MAX_DISTANCE_M, ray_frame, search};
use crate::electrostatic::{Solution, validity_warnings};
use crate::field_model;
use crate::metrics::External;
use crate::thresholds::{self, Threshold};
use coilfield_geometry::Design;
use std::sync::{Mutex, MutexGuard};

/// Which clearance distance a metric is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Reach {
    /// `clearance.<threshold>`: from the axis, the largest over the heights (m).
    FromAxis,
    /// `clearance_top.<threshold>`: from the top electrode's surface (m).
    FromTop,
}

/// Clearance distances as sweep and seek metrics: `clearance.<threshold>` and
/// `clearance_top.<threshold>` (m), for the thresholds of the base design
/// ([`thresholds::for_design`] with its `[clearance]` table and the built-in sets, no
/// additions), each point searched like a single design, sequentially (a sweep is parallel
/// over its points), out to the base's `[clearance] max_distance` (default
/// [`MAX_DISTANCE_M`]).
pub struct ClearanceMetrics {
    thresholds: Vec<Threshold>,
    /// Why built-in thresholds are missing (no frequency, out of range), for messages.
    left_out: Vec<String>,
    /// Metric ids: the threshold (index into `thresholds`) and the distance.
    ids: Mutex<Vec<(usize, Reach)>>,
    max_distance_m: f64,
}

impl ClearanceMetrics {
    /// The metrics of `base` (labelled `label` in the thresholds' `set_by`).
    pub fn new(base: &Design, label: &str) -> ClearanceMetrics {
        let (ths, left_out) =
            thresholds::for_design(base, label, base.drive.frequency_hz, None, &[]);
        ClearanceMetrics {
            thresholds: ths,
            left_out,
            ids: Mutex::new(Vec::new()),
            max_distance_m: base.clearance.max_distance_m.unwrap_or(MAX_DISTANCE_M),
        }
    }

    /// The thresholds these metrics know, in order.
    pub fn thresholds(&self) -> &[Threshold] {
        &self.thresholds
    }

    fn ids(&self) -> MutexGuard<'_, Vec<(usize, Reach)>> {
        self.ids.lock().unwrap_or_else(|e| e.into_inner())
    }

    /// Why a threshold named `threshold` is not there, listing those that are.
    fn no_threshold(&self, name: &str, threshold: &str) -> String {
        let names: Vec<&str> = self.thresholds.iter().map(|t| t.name.as_str()).collect();
        let listed = if names.is_empty() {
            "(none)".to_string()
        } else {
            names.join(", ")
        };
        let mut m = format!(
            "`{name}`: no threshold named `{threshold}` for the base design (thresholds: {listed})"
        );
        for why in &self.left_out {
            m.push_str(&format!("; {why}"));
        }
        m
    }
}

/// The checks made of a design before any search: a secondary with an axis for the rays, and
/// a drive with currents or potentials.
fn searchable(design: &Design, name: &str) -> Result<(), String> {
    let label = "the base design";
    ray_frame(design, label).map_err(|e| format!("`{name}`: {e}"))?;
    field_model::check_field_drive(design, label, "clearance").map_err(|e| format!("`{name}`: {e}"))
}

impl External for ClearanceMetrics {
    fn parse(&self, name: &str, design: &Design) -> Option<Result<usize, String>> {
        let (reach, threshold) = if let Some(t) = name.strip_prefix("clearance.") {
            (Reach::FromAxis, t)
        } else if let Some(t) = name.strip_prefix("clearance_top.") {
            (Reach::FromTop, t)
        } else {
            return None;
        };
        let Some(k) = self.thresholds.iter().position(|t| t.name == threshold) else {
            return Some(Err(self.no_threshold(name, threshold)));
        };
        if let Err(e) = searchable(design, name) {
            return Some(Err(e));
        }
        let mut ids = self.ids();
        let id = match ids.iter().position(|&x| x == (k, reach)) {
            Some(id) => id,
            None => {
                ids.push((k, reach));
                ids.len() - 1
            }
        };
        Some(Ok(id))
    }

    fn needs_electric(&self, design: &Design) -> bool {
        field_model::has_potentials(design)
    }

    fn values(
        &self,
        ids: &[usize],
        design: &Design,
        electric: Option<&Solution>,
    ) -> Result<(Vec<f64>, Vec<String>), String> {
        let known = self.ids().clone();
        let wanted: Vec<(usize, Reach)> = ids
            .iter()
            .map(|&id| {
                known
                    .get(id)
                    .copied()
                    .ok_or_else(|| format!("no clearance metric #{id}"))
            })
            .collect::<Result<_, _>>()?;
        let mut ths: Vec<Threshold> = Vec::new();
        for &(k, _) in &wanted {
            if !ths.iter().any(|t| t.name == self.thresholds[k].name) {
                ths.push(self.thresholds[k].clone());
            }
        }
        let found = search(
            design,
            "the point's design",
            &ths,
            self.max_distance_m,
            Par::Seq,
            electric.cloned(),
            crate::fem::ElectricSolver::Auto,
        )
        .map_err(|e| e.to_string())?;
        let values: Vec<f64> = wanted
            .iter()
            .map(|&(k, reach)| {
                let name = &self.thresholds[k].name;
                match reach {
                    Reach::FromAxis => found.distance_from_axis_m(name),
                    Reach::FromTop => found.distance_from_top_m(name),
                }
                .ok_or_else(|| format!("threshold `{name}` was not searched"))
            })
            .collect::<Result<_, _>>()?;
        // The search's own warnings (a lower bound at the end of the search, a model without
        // currents or potentials) and the quasi-static limits at the distances found.
        let mut notes: Vec<String> = found.warnings.clone();
        notes.extend(validity_warnings(design, &values));
        Ok((values, notes))
    }
}
