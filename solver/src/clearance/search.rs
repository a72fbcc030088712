//! The clearance of a design: for each threshold, the distance from the coil axis (at several
//! heights) and from the top electrode's surface beyond which the peak field stays below it.
//!
//! Rays start on the axis (horizontal, at four azimuths, at each height) and at the top
//! electrode's centre (a fan in elevation); [`clearance_along_ray`] finds each ray's outer
//! crossing. Points without a value (inside a conductor, on a wire) are neither above nor below
//! a limit; a threshold never exceeded where the field exists is `never_exceeded`, with both
//! distances 0 m (so a sweep constraint on `clearance.<t>` keeps working).
//! A threshold of [`Method::MeanGradient`] is no search: a spark bridges a gap d when the mean
//! gradient V/d exceeds it, so its distance is the top conductor's peak potential over the
//! gradient.

use crate::Par;
use crate::clearance::{
    RayClearance, RayOutcome, RayParams, clearance_along_ray, ladder_m, ray_point,
};
use crate::electrostatic::Solution;
use crate::error::SolverError;
use crate::field_model::{FieldModel, Sample};
use crate::thresholds::{Basis, Method, Quantity, Threshold};
use coilfield_geometry::{Design, Electrode, End, PotentialSpec, Role, local_frame};
use nalgebra::{Point3, Unit, Vector3};
use rayon::prelude::*;
use serde::Serialize;
use std::collections::HashMap;

/// Farthest distance searched along a ray (m) when neither the caller nor the design file's
/// `[clearance] max_distance` sets one.
pub const MAX_DISTANCE_M: f64 = 30.0;

/// Where the rays start: the common axis and the top conductor.
#[derive(Debug, Clone)]
pub struct RayFrame {
    /// A point of the axis: the secondary's origin (m).
    pub origin_m: Point3<f64>,
    /// The secondary's axis.
    pub axis: Unit<Vector3<f64>>,
    /// Heights (m along the axis from `origin_m`) of the horizontal rays, with a label.
    pub heights: Vec<(f64, String)>,
    /// Centre of the top electrode (or the secondary's top) on the axis (m).
    pub top_m: Point3<f64>,
    /// Name of the top electrode (or "`<secondary>` top").
    pub top_name: String,
    /// The top electrode: the one connected to the secondary's top, else the highest.
    pub top_electrode: Option<Electrode>,
    /// Peak potential (V) of the top conductor: the largest of the drive's potentials.
    pub top_v: f64,
    /// Height z (m) of the ground plane, the lowest point a ray reaches.
    pub ground_z_m: Option<f64>,
}

/// The rays' frame of `design` (`label` names it in messages): the secondary's axis, the
/// heights of its base, middle and top, the `[clearance] heights` and the top electrode's
/// centre.
pub fn ray_frame(design: &Design, label: &str) -> Result<RayFrame, SolverError> {
    let no_axis = |reason: String| SolverError::NoClearanceAxis {
        source_name: label.to_string(),
        reason,
    };
    let secondary = design
        .windings
        .iter()
        .find(|w| w.role == Role::Secondary)
        .ok_or_else(|| {
            no_axis(
                "clearance needs a winding with role = \"secondary\" (its axis sets the rays)"
                    .into(),
            )
        })?;
    let (origin_m, axis) = secondary.shape.origin_axis().ok_or_else(|| {
        no_axis(format!(
            "winding {}: a polyline secondary has no axis for the clearance rays",
            secondary.name
        ))
    })?;
    let top_point = secondary.shape.point_at(1.0);
    let h_top = (top_point - origin_m).dot(axis.as_ref());
    let top_electrode = design
        .electrodes
        .iter()
        .find(|e| {
            e.connect
                .as_ref()
                .is_some_and(|t| t.winding == secondary.name && t.end == End::Top)
        })
        .or_else(|| {
            design.electrodes.iter().max_by(|a, b| {
                let ha = (a.shape.origin_axis().0 - origin_m).dot(axis.as_ref());
                let hb = (b.shape.origin_axis().0 - origin_m).dot(axis.as_ref());
                ha.total_cmp(&hb)
            })
        })
        .cloned();
    let mut heights = vec![
        (0.0, format!("{} base", secondary.name)),
        (0.5 * h_top, format!("{} middle", secondary.name)),
        (h_top, format!("{} top", secondary.name)),
    ];
    heights.extend(design.clearance.heights_m.iter().map(|h| {
        (
            *h,
            format!("{h} m above {} base ([clearance] heights)", secondary.name),
        )
    }));
    let (top_m, top_name) = match &top_electrode {
        Some(e) => {
            let c = e.shape.origin_axis().0;
            let h = (c - origin_m).dot(axis.as_ref());
            heights.push((h, format!("{} centre", e.name)));
            (origin_m + axis.as_ref() * h, e.name.clone())
        }
        None => (
            origin_m + axis.as_ref() * h_top,
            format!("{} top", secondary.name),
        ),
    };
    let top_v = design
        .drive
        .potentials_v
        .iter()
        .map(|(_, p)| match *p {
            PotentialSpec::Uniform(v) => v.abs(),
            PotentialSpec::Ends { base_v, top_v } => base_v.abs().max(top_v.abs()),
        })
        .fold(0.0, f64::max);
    Ok(RayFrame {
        origin_m,
        axis,
        heights,
        top_m,
        top_name,
        top_electrode,
        top_v,
        ground_z_m: design.ground.map(|g| g.z_m),
    })
}

/// The clearance at one height of the axis.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HeightClearance {
    /// Which height ("`<secondary>` base", "`<electrode>` centre", ...).
    pub label: String,
    /// Height (m) along the axis above the secondary's origin.
    pub height_m: f64,
    /// Distance (m) from the axis, the largest over the four azimuths (0 m where the limit is
    /// never exceeded along them).
    pub distance_from_axis_m: f64,
    /// Whether a ray was still above the limit at the end of the search (a lower bound).
    pub beyond_search: bool,
    /// Whether the field stays below the limit everywhere along these rays where it exists
    /// (outside the conductors).
    pub never_exceeded: bool,
}

/// What the search found for one threshold.
#[derive(Debug, Clone, PartialEq)]
pub struct ThresholdClearance {
    /// The threshold.
    pub threshold: Threshold,
    /// What the limit was compared with ("peak", "peak / sqrt(2)", or the mean gradient's
    /// "peak potential of the top conductor / distance").
    pub compared_with: &'static str,
    /// Distance (m) from the axis, the largest over the heights.
    pub distance_from_axis_m: f64,
    /// Distance (m) from the top electrode's surface (or the secondary's top).
    pub distance_from_top_m: f64,
    /// Whether some ray was still above the limit at the end of the search (the distances are
    /// lower bounds).
    pub beyond_search: bool,
    /// Whether the field stays below the limit along every ray wherever it exists (outside
    /// the conductors): no clearance is needed, and both distances are 0 m.
    pub never_exceeded: bool,
    /// The distances from the axis at each height (empty for a mean gradient).
    pub by_height: Vec<HeightClearance>,
}

/// What the ray searches found for each threshold, with the field model and the rays' frame.
#[derive(Debug, Clone)]
pub struct Search {
    /// Where the rays started.
    pub frame: RayFrame,
    /// The field model searched (for more points at the caller's distances).
    pub model: FieldModel,
    /// One entry per threshold, in the order given.
    pub thresholds: Vec<ThresholdClearance>,
    /// The field model's warnings and the searches' (a distance that is only a lower bound).
    pub warnings: Vec<String>,
}

impl Search {
    /// Distance (m) from the axis, the largest over the heights, beyond which threshold
    /// `name` holds; None when there is no such threshold.
    pub fn distance_from_axis_m(&self, name: &str) -> Option<f64> {
        self.thresholds
            .iter()
            .find(|t| t.threshold.name == name)
            .map(|t| t.distance_from_axis_m)
    }

    /// Distance (m) from the top electrode's surface (or the secondary's top) beyond which
    /// threshold `name` holds; None when there is no such threshold.
    pub fn distance_from_top_m(&self, name: &str) -> Option<f64> {
        self.thresholds
            .iter()
            .find(|t| t.threshold.name == name)
            .map(|t| t.distance_from_top_m)
    }
}

/// The peak magnitude of quantity `q` in a sample: |E| (V/m) or |B| (T), None where it has no
/// value.
pub fn magnitude(s: &Sample, q: Quantity) -> Option<f64> {
    match q {
        Quantity::E => s.e_mag(),
        Quantity::B => s.b_mag(),
    }
}

/// The clearance of every threshold in `ths` for `design` (`label` names it in messages):
/// rays from the axis at each height and a fan from the top conductor, searched out to
/// `max_distance_m`. `par` runs the field evaluations and the rays in parallel or not; the
/// results do not depend on it. `solved` is the design's boundary-element solution when the
/// caller has it (default panels); `electric` chooses the electric solver of E.
pub fn search(
    design: &Design,
    label: &str,
    ths: &[Threshold],
    max_distance_m: f64,
    par: Par,
    solved: Option<Solution>,
    electric: crate::fem::ElectricSolver,
) -> Result<Search, SolverError> {
    let fr = ray_frame(design, label)?;
    let model = FieldModel::with_solver(design, label, par, solved, electric)?;
    let mut warnings = model.warnings.clone();
    let (x_hat, y_hat) = local_frame(&fr.axis);
    let params = RayParams {
        t_min_m: 1e-3,
        t_max_m: max_distance_m,
        step_ratio: 1.05,
        tolerance_m: 1e-3,
    };
    // Rays that would go below the ground plane stop at it.
    let limited = |o: Point3<f64>, d: Vector3<f64>| -> Option<RayParams> {
        let mut p = params;
        if let Some(zg) = fr.ground_z_m
            && d.z < 0.0
        {
            let t = (o.z - zg) / -d.z;
            if t <= p.t_min_m * 2.0 {
                return None;
            }
            p.t_max_m = p.t_max_m.min(t);
        }
        Some(p)
    };
    // Above the limit at the end of a ray is a lower bound only when the ray ended at the
    // search distance; a ray that ends on the ground plane has been searched to its end.
    let beyond_search = |r: &RayClearance, p: &RayParams| {
        r.outcome == RayOutcome::AboveAtEnd && p.t_max_m >= params.t_max_m
    };
    let azimuths: Vec<Vector3<f64>> = (0..4)
        .map(|k| {
            let phi = std::f64::consts::FRAC_PI_2 * k as f64;
            x_hat * phi.cos() + y_hat * phi.sin()
        })
        .collect();
    // Fan from the top conductor: elevations -75 to 90 degrees in the meridian planes at
    // azimuths 0 and 180 degrees (the electric model is axisymmetric).
    let mut fan = Vec::new();
    for az in [x_hat, -x_hat] {
        for k in 0..=11 {
            let el = (-75.0 + 15.0 * k as f64).to_radians();
            fan.push(az * el.cos() + fr.axis.as_ref() * el.sin());
        }
    }
    // Every ray's ladder is evaluated once, in one batch for E and B together; the searches
    // of all thresholds look these samples up and evaluate only their bisection points.
    let ladder = ladder_m(&params);
    let mut all_rays: Vec<(Point3<f64>, Vector3<f64>)> = Vec::new();
    for (h, _) in &fr.heights {
        let o = fr.origin_m + fr.axis.as_ref() * *h;
        all_rays.extend(azimuths.iter().map(|d| (o, *d)));
    }
    all_rays.extend(fan.iter().map(|d| (fr.top_m, *d)));
    let ladder_pts: Vec<Point3<f64>> = all_rays
        .iter()
        .flat_map(|(o, d)| ladder.iter().map(move |t| ray_point(*o, *d, *t)))
        .collect();
    let cache: HashMap<[u64; 3], Sample> = ladder_pts
        .iter()
        .map(|p| [p.x.to_bits(), p.y.to_bits(), p.z.to_bits()])
        .zip(model.eval(&ladder_pts))
        .collect();
    let field_of = |q: Quantity| {
        let model = &model;
        let cache = &cache;
        move |p: Point3<f64>| match cache.get(&[p.x.to_bits(), p.y.to_bits(), p.z.to_bits()]) {
            Some(s) => magnitude(s, q),
            None => model.eval(&[p]).first().and_then(|s| magnitude(s, q)),
        }
    };
    let mut out = Vec::new();
    for t in ths {
        if t.method == Method::MeanGradient {
            // A spark bridges a gap d when the mean gradient V/d exceeds the threshold.
            let d = fr.top_v / t.limit;
            let r_top = fr
                .top_electrode
                .as_ref()
                .map_or(0.0, |e| e.shape.outer_radius_m());
            out.push(ThresholdClearance {
                threshold: t.clone(),
                compared_with: "peak potential of the top conductor / distance",
                distance_from_axis_m: r_top + d,
                distance_from_top_m: d,
                beyond_search: false,
                never_exceeded: false,
                by_height: Vec::new(),
            });
            continue;
        }
        let f = field_of(t.quantity);
        let limit = t.peak_limit();
        let mut by_height = Vec::new();
        let mut beyond = false;
        for (h, hl) in &fr.heights {
            let o = fr.origin_m + fr.axis.as_ref() * *h;
            let rays = search_rays(&azimuths, o, limit, &f, &limited, par)?;
            let below = |r: &RayClearance| r.outcome == RayOutcome::BelowEverywhere;
            let best = rays
                .iter()
                .filter(|(r, _)| !below(r))
                .map(|(r, _)| r.distance_m)
                .fold(0.0, f64::max);
            let hit_end = rays.iter().any(|(r, p)| beyond_search(r, p));
            beyond |= hit_end;
            by_height.push(HeightClearance {
                label: hl.clone(),
                height_m: *h,
                distance_from_axis_m: best,
                beyond_search: hit_end,
                never_exceeded: rays.iter().all(|(r, _)| below(r)),
            });
        }
        let fan_rays = search_rays(&fan, fr.top_m, limit, &f, &limited, par)?;
        let from_top = fan_rays
            .iter()
            .map(|(r, _)| {
                if r.outcome == RayOutcome::BelowEverywhere {
                    return 0.0;
                }
                let d = match &fr.top_electrode {
                    Some(e) => e.shape.signed_distance_m(&r.point_m),
                    None => (r.point_m - fr.top_m).norm(),
                };
                d.max(0.0)
            })
            .fold(0.0, f64::max);
        beyond |= fan_rays.iter().any(|(r, p)| beyond_search(r, p));
        let never_exceeded = by_height.iter().all(|h| h.never_exceeded)
            && fan_rays
                .iter()
                .all(|(r, _)| r.outcome == RayOutcome::BelowEverywhere);
        out.push(ThresholdClearance {
            threshold: t.clone(),
            compared_with: match t.basis {
                Basis::Rms => "peak / sqrt(2)",
                Basis::Peak => "peak",
                Basis::TimeAveraged => "peak x the drive's rms factor over a break period",
            },
            distance_from_axis_m: by_height
                .iter()
                .map(|h| h.distance_from_axis_m)
                .fold(0.0, f64::max),
            distance_from_top_m: from_top,
            beyond_search: beyond,
            never_exceeded,
            by_height,
        });
        if beyond {
            warnings.push(format!(
                "{}: the field is still above the limit at the end of the search ({} m); the distance given is a lower bound (raise --max-distance or [clearance] max_distance)",
                t.name, max_distance_m
            ));
        }
    }
    Ok(Search {
        frame: fr,
        model,
        thresholds: out,
        warnings,
    })
}

/// The outer crossing of `limit` along each ray from `origin` in `directions` (rays that
/// would start below the ground plane are left out), with the ray's parameters.
fn search_rays<F, L>(
    directions: &[Vector3<f64>],
    origin: Point3<f64>,
    limit: f64,
    field: &F,
    limited: &L,
    par: Par,
) -> Result<Vec<(RayClearance, RayParams)>, SolverError>
where
    F: Fn(Point3<f64>) -> Option<f64> + Sync,
    L: Fn(Point3<f64>, Vector3<f64>) -> Option<RayParams> + Sync,
{
    let one = |d: &Vector3<f64>| {
        limited(origin, *d)
            .map(|p| clearance_along_ray(field, origin, *d, limit, p).map(|r| (r, p)))
    };
    let found: Vec<_> = match par {
        Par::Rayon => directions.par_iter().filter_map(one).collect(),
        Par::Seq => directions.iter().filter_map(one).collect(),
    };
    found
        .into_iter()
        .collect::<Result<_, _>>()
        .map_err(|e| SolverError::RaySearch {
            reason: e.to_string(),
        })
}
