//! `coilfield clearance`: for each threshold, the distance from the coil axis (at several
//! heights) and from the top electrode's surface beyond which the peak field stays below it,
//! and the fields at user-set distances. The search is the library's
//! ([`coilfield_solver::clearance::search`]); this module reads the options and prints.

use crate::{BadInput, Format, load, output};
use coilfield_geometry::local_frame;
use coilfield_geometry::model::clearance::MIN_MAX_DISTANCE_M;
use coilfield_solver::Par;
use coilfield_solver::clearance::search::{
    HeightClearance, MAX_DISTANCE_M, Search, ThresholdClearance, magnitude, search,
};
use coilfield_solver::electrostatic::validity_warnings;
use coilfield_solver::thresholds::{self, Method, Quantity};
use nalgebra::Point3;
use serde::Serialize;
use std::path::Path;
use std::process::ExitCode;

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
    /// Electric solver for E.
    pub electric: crate::capacitance_fem::ElectricSolver,
}

#[derive(Serialize)]
pub(crate) struct ThresholdOut {
    pub(crate) name: String,
    pub(crate) quantity: Quantity,
    pub(crate) limit: f64,
    pub(crate) unit: &'static str,
    basis: thresholds::Basis,
    compared_with: &'static str,
    peak_limit: f64,
    source: String,
    set_by: String,
    method: Method,
    /// null when the limit is never exceeded outside the conductors.
    pub(crate) distance_from_axis_m: Option<f64>,
    /// null when the limit is never exceeded outside the conductors.
    pub(crate) distance_from_top_m: Option<f64>,
    pub(crate) beyond_search: bool,
    pub(crate) never_exceeded: bool,
    by_height: Vec<HeightClearance>,
}

impl ThresholdOut {
    /// The threshold's fields with what the search found for it.
    fn of(found: ThresholdClearance) -> ThresholdOut {
        let t = found.threshold;
        ThresholdOut {
            peak_limit: t.peak_limit(),
            name: t.name,
            quantity: t.quantity,
            limit: t.limit,
            unit: t.unit,
            basis: t.basis,
            compared_with: found.compared_with,
            source: t.source,
            set_by: t.set_by,
            method: t.method,
            distance_from_axis_m: (!found.never_exceeded).then_some(found.distance_from_axis_m),
            distance_from_top_m: (!found.never_exceeded).then_some(found.distance_from_top_m),
            beyond_search: found.beyond_search,
            never_exceeded: found.never_exceeded,
            by_height: found.by_height,
        }
    }
}

#[derive(Serialize)]
pub(crate) struct AtDistanceOut {
    pub(crate) distance_from_axis_m: f64,
    position_m: [f64; 3],
    pub(crate) e_mag_v_per_m: Option<f64>,
    e_rms_v_per_m: Option<f64>,
    pub(crate) b_mag_t: Option<f64>,
    b_rms_t: Option<f64>,
    pub(crate) exceeded: Vec<String>,
}

#[derive(Serialize)]
pub(crate) struct ClearanceOut {
    caution: &'static str,
    /// Which electric solver gave E: "bem" or "fem".
    pub(crate) electric_solver: &'static str,
    frequency_hz: f64,
    pub(crate) top_conductor: String,
    pub(crate) thresholds: Vec<ThresholdOut>,
    pub(crate) at_distances: Vec<AtDistanceOut>,
    pub(crate) warnings: Vec<String>,
}

/// Run `coilfield clearance`.
pub fn run(args: ClearanceArgs<'_>) -> anyhow::Result<ExitCode> {
    let resolved = load::design_resolved_with(args.design, args.electric.choice())?;
    let result = compute(&args, resolved)?;
    match args.format {
        Format::Json => crate::output::print_stdout(&(crate::output::json_text(&result)? + "\n"))?,
        Format::Table => crate::output::print_stdout(&table(&result))?,
    }
    Ok(ExitCode::SUCCESS)
}

/// The clearance of a design whose drive is resolved: what `clearance` prints and the report
/// summarises.
pub(crate) fn compute(
    args: &ClearanceArgs<'_>,
    resolved: coilfield_solver::resonance::Resolved,
) -> anyhow::Result<ClearanceOut> {
    let design = resolved.design;
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
    let (mut ths, mut warnings) = crate::thresholds::for_design(
        &design,
        &label,
        Some(frequency_hz),
        args.long_gap_v_per_m,
        args.extra,
    )?;
    // A pulsed drive (a spark gap with a break rate): the levels that average over time are
    // also compared with the fields' rms over one break period.
    if let Some(d) = resolved.resonance.as_ref().and_then(|r| r.drive.as_ref())
        && d.kind == "spark_gap"
        && let (Some(fe), Some(fb)) = (d.rms_factor_e, d.rms_factor_b)
    {
        let averaged = coilfield_solver::thresholds::time_averaged_variants(&ths, fe, fb);
        if !averaged.is_empty() {
            warnings.push(format!(
                "spark gap: the ICNIRP 2020 levels average over time (6 or 30 minutes); their \
                 *_time_averaged rows compare the fields' rms over one break period (E {fe:.3e}, \
                 B {fb:.3e} of the peak) instead of peak / sqrt(2); the ICNIRP 2010 levels and \
                 breakdown act on the instantaneous field"
            ));
        }
        ths.extend(averaged);
    }
    let Search {
        frame: fr,
        model,
        thresholds: found,
        warnings: found_warnings,
    } = search(
        &design,
        &label,
        &ths,
        max_distance_m,
        Par::Rayon,
        None,
        args.electric.choice(),
    )?;
    warnings.extend(found_warnings);
    let out: Vec<ThresholdOut> = found.into_iter().map(ThresholdOut::of).collect();
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
    let mut dist_all: Vec<f64> = out.iter().filter_map(|t| t.distance_from_axis_m).collect();
    dist_all.extend(distances.iter().copied());
    warnings.extend(validity_warnings(&design, &dist_all));
    Ok(ClearanceOut {
        caution: thresholds::CAUTION,
        electric_solver: model.electric_solver(),
        frequency_hz,
        top_conductor: fr.top_name.clone(),
        thresholds: out,
        at_distances,
        warnings,
    })
}

fn table(r: &ClearanceOut) -> String {
    let mut s = format!("CAUTION: {}\n\n", r.caution);
    s.push_str(&format!(
        "Drive frequency {}; distances from the axis and from the surface of {}\n\n",
        output::si(r.frequency_hz, "Hz", 4),
        r.top_conductor
    ));
    s.push_str(
        "Each distance is where the peak field falls below the limit for good. \"from axis\": the\n\
         largest distance from the secondary's axis over the ray heights; \"from top\": the\n\
         distance from the surface of the top conductor over a fan of rays from it. They are\n\
         measured from different places, so \"from top\" may exceed \"from axis\": along its\n\
         axis a coil's B is up to twice its side-on value (a dipole's), so the upward rays reach\n\
         farther.\n\
         Points inside conductors are neither above nor below a limit.\n\n",
    );
    s.push_str(&format!(
        "{:<38} {:>5} {:>14} {:>6} {:>12} {:>12}\n",
        "threshold", "field", "limit", "basis", "from axis", "from top"
    ));
    for t in &r.thresholds {
        let more = if t.beyond_search { ">" } else { "" };
        let distance = |d: Option<f64>| match d {
            Some(d) => format!("{more}{} m", coilfield_solver::numtext::fixed(d, 3)),
            None => "not needed".to_string(),
        };
        s.push_str(&format!(
            "{:<38} {:>5} {:>14} {:>6} {:>12} {:>12}\n",
            t.name,
            format!("{:?}", t.quantity),
            output::si(t.limit, t.unit, 3),
            match t.basis {
                thresholds::Basis::Rms => "rms",
                thresholds::Basis::Peak => "peak",
                thresholds::Basis::TimeAveraged => "time-avg",
            },
            distance(t.distance_from_axis_m),
            distance(t.distance_from_top_m),
        ));
    }
    for t in r.thresholds.iter().filter(|t| t.never_exceeded) {
        s.push_str(&format!(
            "  {}: never exceeded outside the conductors (the field at their surfaces stays \
             below {}); no distance is needed\n",
            t.name,
            output::si(t.limit, t.unit, 3)
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
