//! `coilfield clearance`: for each threshold, the distance from the coil axis (at several
//! heights) and from the top electrode's surface beyond which the peak field stays below it,
//! and the fields at user-set distances.
//!
//! Rays start on the axis (horizontal, at four azimuths, at each height) and at the top
//! electrode's centre (a fan in elevation); [`clearance_along_ray`] finds each ray's outer
//! crossing. Points without a value (inside a conductor, on a wire) count as above the limit.

use crate::thresholds::{self, Method, Quantity};
use crate::{BadInput, Format, load, output};
use coilfield_geometry::model::clearance::MIN_MAX_DISTANCE_M;
use coilfield_geometry::{Design, Electrode, End, Role, local_frame};
use coilfield_solver::Par;
use coilfield_solver::clearance::{
    RayClearance, RayOutcome, RayParams, clearance_along_ray, ladder_m, ray_point,
};
use coilfield_solver::electrostatic::{Solution, validity_warnings};
use coilfield_solver::field_model::{self, FieldModel, Sample};
use nalgebra::{Point3, Unit, Vector3};
use rayon::prelude::*;
use serde::Serialize;
use std::collections::HashMap;
use std::path::Path;
use std::process::ExitCode;

/// Farthest distance searched along a ray (m) when neither the command line nor the design
/// file sets one.
pub const MAX_DISTANCE_M: f64 = 30.0;

/// Options of `clearance`.
pub struct ClearanceArgs<'a> {
    /// Design file.
    pub design: &'a Path,
    /// Distances (m) from the axis at the top electrode's height.
    pub distances: Option<&'a str>,
    /// Mean breakdown gradient of long gaps (V/m); None: the design file's, else the default.
    pub long_gap_v_per_m: Option<f64>,
    /// Extra thresholds.
    pub extra: &'a [String],
    /// Farthest distance searched (m); None: the design file's, else [`MAX_DISTANCE_M`].
    pub max_distance_m: Option<f64>,
    /// Output format.
    pub format: Format,
}

/// Where the rays start: the common axis and the top conductor.
struct Frame {
    origin_m: Point3<f64>,
    axis: Unit<Vector3<f64>>,
    /// Heights (m along the axis from `origin_m`) of the horizontal rays, with a label.
    heights: Vec<(f64, String)>,
    /// Centre of the top electrode (or the secondary's top), and its name.
    top_m: Point3<f64>,
    top_name: String,
    top_electrode: Option<Electrode>,
    /// Peak potential (V) of the top conductor.
    top_v: f64,
    /// Lowest point allowed (the ground plane), as a height z (m).
    ground_z_m: Option<f64>,
}

fn frame(design: &Design, label: &str) -> Result<Frame, BadInput> {
    let secondary = design
        .windings
        .iter()
        .find(|w| w.role == Role::Secondary)
        .ok_or_else(|| {
            BadInput(format!(
                "{label}: clearance needs a winding with role = \"secondary\" (its axis sets the rays)"
            ))
        })?;
    let (origin_m, axis) = secondary.shape.origin_axis().ok_or_else(|| {
        BadInput(format!(
            "{label}: winding {}: a polyline secondary has no axis for the clearance rays",
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
            coilfield_geometry::PotentialSpec::Uniform(v) => v.abs(),
            coilfield_geometry::PotentialSpec::Ends { base_v, top_v } => {
                base_v.abs().max(top_v.abs())
            }
        })
        .fold(0.0, f64::max);
    Ok(Frame {
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

#[derive(Serialize)]
struct HeightOut {
    label: String,
    height_m: f64,
    distance_from_axis_m: f64,
    beyond_search: bool,
}

#[derive(Serialize)]
struct ThresholdOut {
    name: String,
    quantity: Quantity,
    limit: f64,
    unit: &'static str,
    basis: thresholds::Basis,
    compared_with: &'static str,
    peak_limit: f64,
    source: String,
    set_by: String,
    method: Method,
    distance_from_axis_m: f64,
    distance_from_top_m: f64,
    beyond_search: bool,
    by_height: Vec<HeightOut>,
}

impl ThresholdOut {
    /// The threshold's own fields, before any search (no distances yet).
    fn of(t: &thresholds::Threshold) -> ThresholdOut {
        ThresholdOut {
            name: t.name.clone(),
            quantity: t.quantity,
            limit: t.limit,
            unit: t.unit,
            basis: t.basis,
            compared_with: "peak",
            peak_limit: t.peak_limit(),
            source: t.source.clone(),
            set_by: t.set_by.clone(),
            method: t.method,
            distance_from_axis_m: 0.0,
            distance_from_top_m: 0.0,
            beyond_search: false,
            by_height: Vec::new(),
        }
    }
}

#[derive(Serialize)]
struct AtDistanceOut {
    distance_from_axis_m: f64,
    position_m: [f64; 3],
    e_mag_v_per_m: Option<f64>,
    e_rms_v_per_m: Option<f64>,
    b_mag_t: Option<f64>,
    b_rms_t: Option<f64>,
    exceeded: Vec<String>,
}

#[derive(Serialize)]
struct ClearanceOut {
    caution: &'static str,
    frequency_hz: f64,
    top_conductor: String,
    thresholds: Vec<ThresholdOut>,
    at_distances: Vec<AtDistanceOut>,
    warnings: Vec<String>,
}

fn magnitude(s: &Sample, q: Quantity) -> Option<f64> {
    match q {
        Quantity::E => s.e_mag(),
        Quantity::B => s.b_mag(),
    }
}

/// What the ray searches found for each threshold, with the field model and the rays' frame.
pub struct Search {
    frame: Frame,
    model: FieldModel,
    thresholds: Vec<ThresholdOut>,
    warnings: Vec<String>,
}

impl Search {
    /// Distance (m) from the axis, the largest over the heights, beyond which threshold
    /// `name` holds; None when there is no such threshold.
    pub fn distance_from_axis_m(&self, name: &str) -> Option<f64> {
        self.thresholds
            .iter()
            .find(|t| t.name == name)
            .map(|t| t.distance_from_axis_m)
    }

    /// Distance (m) from the top electrode's surface (or the secondary's top) beyond which
    /// threshold `name` holds; None when there is no such threshold.
    pub fn distance_from_top_m(&self, name: &str) -> Option<f64> {
        self.thresholds
            .iter()
            .find(|t| t.name == name)
            .map(|t| t.distance_from_top_m)
    }
}

/// The clearance of every threshold in `ths` for `design`: rays from the axis at each height
/// and a fan from the top conductor, searched out to `max_distance_m`. `par` runs the field
/// evaluations and the rays in parallel or not; the results do not depend on it. `solved` is
/// the design's electrostatic solution when the caller has it (default panels).
pub fn search(
    design: &Design,
    label: &str,
    ths: &[thresholds::Threshold],
    max_distance_m: f64,
    par: Par,
    solved: Option<Solution>,
) -> anyhow::Result<Search> {
    let fr = frame(design, label)?;
    let model = FieldModel::new(design, label, par, solved)?;
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
            None => magnitude(&model.eval(&[p])[0], q),
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
            out.push(ThresholdOut {
                compared_with: "peak potential of the top conductor / distance",
                distance_from_axis_m: r_top + d,
                distance_from_top_m: d,
                beyond_search: false,
                by_height: Vec::new(),
                ..ThresholdOut::of(t)
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
            let best = rays.iter().map(|(r, _)| r.distance_m).fold(0.0, f64::max);
            let hit_end = rays.iter().any(|(r, p)| beyond_search(r, p));
            beyond |= hit_end;
            by_height.push(HeightOut {
                label: hl.clone(),
                height_m: *h,
                distance_from_axis_m: best,
                beyond_search: hit_end,
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
        out.push(ThresholdOut {
            compared_with: match t.basis {
                thresholds::Basis::Rms => "peak / sqrt(2)",
                thresholds::Basis::Peak => "peak",
            },
            distance_from_axis_m: by_height
                .iter()
                .map(|h| h.distance_from_axis_m)
                .fold(0.0, f64::max),
            distance_from_top_m: from_top,
            beyond_search: beyond,
            by_height,
            ..ThresholdOut::of(t)
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
) -> anyhow::Result<Vec<(RayClearance, RayParams)>>
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
    Ok(found.into_iter().collect::<Result<_, _>>()?)
}

/// Run `coilfield clearance`.
pub fn run(args: ClearanceArgs<'_>) -> anyhow::Result<ExitCode> {
    let design = load::design(args.design)?;
    let label = args.design.display().to_string();
    let frequency_hz = design.drive.frequency_hz.ok_or_else(|| {
        BadInput(format!(
            "{label}: [drive] frequency: clearance needs the drive frequency (Hz) for the exposure reference levels; add frequency = <Hz> to [drive]"
        ))
    })?;
    if let Some(g) = args.long_gap_v_per_m
        && !(g.is_finite() && g > 0.0)
    {
        return Err(
            BadInput("--long-gap-gradient: must be a positive number of V/m".into()).into(),
        );
    }
    if let Some(d) = args.max_distance_m
        && !(d.is_finite() && d >= MIN_MAX_DISTANCE_M)
    {
        return Err(BadInput(format!(
            "--max-distance: must be a number of metres, at least {MIN_MAX_DISTANCE_M}"
        ))
        .into());
    }
    // The command line overrides the design file's [clearance], which overrides the default.
    let max_distance_m = args
        .max_distance_m
        .or(design.clearance.max_distance_m)
        .unwrap_or(MAX_DISTANCE_M);
    let distances: Vec<f64> = match args.distances {
        Some(t) => {
            let n = t.split(',').count();
            let v = crate::sample::numbers("--distance", t, n)?;
            if let Some(bad) = v.iter().find(|d| **d < 0.0) {
                return Err(BadInput(format!(
                    "--distance: {bad} m is negative; distances are from the axis"
                ))
                .into());
            }
            v
        }
        None => design.clearance.distances_m.clone(),
    };
    let (ths, mut warnings) = thresholds::for_design(
        &design,
        &label,
        Some(frequency_hz),
        args.long_gap_v_per_m,
        args.extra,
    )?;
    let Search {
        frame: fr,
        model,
        thresholds: out,
        warnings: found_warnings,
    } = search(&design, &label, &ths, max_distance_m, Par::Rayon, None)?;
    warnings.extend(found_warnings);
    let (x_hat, _) = local_frame(&fr.axis);
    let at_pts: Vec<Point3<f64>> = distances.iter().map(|d| fr.top_m + x_hat * *d).collect();
    let at_samples = model.eval(&at_pts);
    let at_distances: Vec<AtDistanceOut> = distances
        .iter()
        .zip(&at_pts)
        .zip(&at_samples)
        .map(|((d, p), s)| {
            let e = s.e_mag();
            let b = s.b_mag();
            let exceeded = ths
                .iter()
                .filter(|t| t.method == Method::FieldSearch)
                .filter(|t| magnitude(s, t.quantity).is_none_or(|v| v >= t.peak_limit()))
                .map(|t| t.name.clone())
                .collect();
            AtDistanceOut {
                distance_from_axis_m: *d,
                position_m: [p.x, p.y, p.z],
                e_mag_v_per_m: e,
                e_rms_v_per_m: e.map(|v| v / std::f64::consts::SQRT_2),
                b_mag_t: b,
                b_rms_t: b.map(|v| v / std::f64::consts::SQRT_2),
                exceeded,
            }
        })
        .collect();
    let mut dist_all: Vec<f64> = out.iter().map(|t| t.distance_from_axis_m).collect();
    dist_all.extend(distances.iter().copied());
    warnings.extend(validity_warnings(&design, &dist_all));
    let result = ClearanceOut {
        caution: thresholds::CAUTION,
        frequency_hz,
        top_conductor: fr.top_name.clone(),
        thresholds: out,
        at_distances,
        warnings,
    };
    match args.format {
        Format::Json => println!("{}", serde_json::to_string_pretty(&result)?),
        Format::Table => print!("{}", table(&result)),
    }
    Ok(ExitCode::SUCCESS)
}

fn table(r: &ClearanceOut) -> String {
    let mut s = format!("CAUTION: {}\n\n", r.caution);
    s.push_str(&format!(
        "Drive frequency {}; distances from the axis and from the surface of {}\n\n",
        output::si(r.frequency_hz, "Hz", 4),
        r.top_conductor
    ));
    s.push_str(&format!(
        "{:<38} {:>5} {:>14} {:>6} {:>12} {:>12}\n",
        "threshold", "field", "limit", "basis", "from axis", "from top"
    ));
    for t in &r.thresholds {
        let more = if t.beyond_search { ">" } else { "" };
        s.push_str(&format!(
            "{:<38} {:>5} {:>14} {:>6} {:>12} {:>12}\n",
            t.name,
            format!("{:?}", t.quantity),
            output::si(t.limit, t.unit, 3),
            format!("{:?}", t.basis).to_lowercase(),
            format!("{more}{:.3} m", t.distance_from_axis_m),
            format!("{more}{:.3} m", t.distance_from_top_m),
        ));
    }
    s.push_str("\nSources:\n");
    for t in &r.thresholds {
        s.push_str(&format!(
            "  {}: {} [set by {}]\n",
            t.name, t.source, t.set_by
        ));
    }
    if !r.at_distances.is_empty() {
        s.push_str("\nAt the top conductor's height (peak; rms = peak / sqrt(2)):\n");
        for a in &r.at_distances {
            let e = a
                .e_mag_v_per_m
                .map_or("-".into(), |v| output::si(v, "V/m", 4));
            let b = a.b_mag_t.map_or("-".into(), |v| output::si(v, "T", 4));
            s.push_str(&format!(
                "  {:>8.3} m  |E| {e:>12}  |B| {b:>12}  above: {}\n",
                a.distance_from_axis_m,
                if a.exceeded.is_empty() {
                    "none".to_string()
                } else {
                    a.exceeded.join(", ")
                }
            ));
        }
    }
    for w in &r.warnings {
        s.push_str(&format!("\nwarning: {w}"));
    }
    s.push_str(&format!("\n\nCAUTION: {}\n", r.caution));
    s
}

/// Which clearance distance a sweep metric is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Reach {
    /// `clearance.<threshold>`: from the axis, the largest over the heights (m).
    FromAxis,
    /// `clearance_top.<threshold>`: from the top electrode's surface (m).
    FromTop,
}

/// Clearance distances as sweep and seek metrics: `clearance.<threshold>` and
/// `clearance_top.<threshold>` (m), for the thresholds `coilfield clearance` uses on the base
/// design (its `[clearance]` table and the built-in sets), each point searched like the
/// command, sequentially (a sweep is parallel over its points).
pub struct ClearanceMetrics {
    thresholds: Vec<thresholds::Threshold>,
    /// Why built-in thresholds are missing (no frequency, out of range), for messages.
    left_out: Vec<String>,
    /// Metric ids: the threshold (index into `thresholds`) and the distance.
    ids: std::sync::Mutex<Vec<(usize, Reach)>>,
    max_distance_m: f64,
}

impl ClearanceMetrics {
    /// The metrics of `base` (labelled `label` in messages).
    pub fn new(base: &Design, label: &str) -> anyhow::Result<ClearanceMetrics> {
        let (ths, left_out) =
            thresholds::for_design(base, label, base.drive.frequency_hz, None, &[])?;
        Ok(ClearanceMetrics {
            thresholds: ths,
            left_out,
            ids: std::sync::Mutex::new(Vec::new()),
            max_distance_m: base.clearance.max_distance_m.unwrap_or(MAX_DISTANCE_M),
        })
    }

    fn ids(&self) -> std::sync::MutexGuard<'_, Vec<(usize, Reach)>> {
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

/// The checks `coilfield clearance` makes of a design before any search: a secondary with an
/// axis for the rays, and a drive with currents or potentials.
fn searchable(design: &Design, name: &str) -> Result<(), String> {
    let label = "the base design";
    frame(design, label).map_err(|e| format!("`{name}`: {}", e.0))?;
    field_model::check_field_drive(design, label, "clearance").map_err(|e| format!("`{name}`: {e}"))
}

impl coilfield_solver::metrics::External for ClearanceMetrics {
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
        let mut ths: Vec<thresholds::Threshold> = Vec::new();
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
