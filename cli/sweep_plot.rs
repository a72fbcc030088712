//! `--plot out.svg|png` for sweeps: the first metric against the parameter of a one-axis grid,
//! or a heat map with contour lines over a two-axis grid, drawn by [`crate::plot`] and written
//! atomically.

use crate::BadInput;
use crate::plot::{self, HeatMap, LinePlot, Scale};
use std::path::Path;

/// Contour lines of a sweep heat map, evenly spaced inside the metric's range.
const CONTOURS: usize = 8;

/// Whether the plot is SVG (else PNG), from its file name.
fn is_svg(plot: &Path) -> anyhow::Result<bool> {
    match plot.extension().and_then(|e| e.to_str()) {
        Some("svg") => Ok(true),
        Some("png") => Ok(false),
        _ => Err(BadInput(format!(
            "--plot {}: the file name must end in .svg or .png",
            plot.display()
        ))
        .into()),
    }
}

/// Checks made before the sweep starts: an .svg or .png name and a one- or two-axis grid.
pub fn check(plot: &Path, grid_counts: Option<&[usize]>) -> anyhow::Result<()> {
    is_svg(plot)?;
    match grid_counts {
        Some(c) if c.len() == 2 && c.iter().any(|&n| n < 2) => Err(BadInput(format!(
            "--plot {}: a heat map needs at least 2 values on each axis (the axes have {} and {})",
            plot.display(),
            c[0],
            c[1]
        ))
        .into()),
        Some(c) if c.len() == 1 || c.len() == 2 => Ok(()),
        _ => Err(BadInput(format!(
            "--plot {}: plots need a grid of one or two axes (no groups, no [sample])",
            plot.display()
        ))
        .into()),
    }
}

/// The unit of an axis key's values: lengths in m, tilts in degrees, turn counts in turns.
fn axis_unit(key: &str) -> &'static str {
    let field = key.rsplit('.').next().unwrap_or(key);
    if field == "tilt_deg" {
        "deg"
    } else if field == "turns" || field == "tap_turns" {
        "turns"
    } else if field == "segments_per_turn" {
        "per turn"
    } else {
        "m"
    }
}

/// The plot axis of a grid key.
fn key_axis(key: &str) -> plot::Axis<'_> {
    plot::Axis {
        name: key,
        unit: axis_unit(key),
    }
}

/// The plot axis of a metric (its SI unit; a pure number has none).
fn metric_axis(name: &str) -> plot::Axis<'_> {
    plot::Axis {
        name,
        unit: crate::output::metric_unit(name),
    }
}

/// The title of a heat map of metric `name` over values `lo..hi` (its SI unit): the metric with
/// the unit it reads in, SI-prefixed by the axes' rule ([`plot::axis_reading`]:
/// "mutual.a.b (µH)", not "(H)"), against the two swept keys.
fn heat_map_title(name: &str, lo: f64, hi: f64, u_key: &str, v_key: &str) -> String {
    let (_, metric) = plot::axis_reading(metric_axis(name), lo, hi);
    format!("{metric} against {u_key} and {v_key}")
}

/// Indices that sort `v` increasing (grid values may be listed in any order).
fn increasing(v: &[f64]) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..v.len()).collect();
    idx.sort_by(|&a, &b| v[a].total_cmp(&v[b]));
    idx
}

/// The smallest and largest finite value of `values`, if any.
fn finite_bounds(values: &[f64]) -> Option<(f64, f64)> {
    let (lo, hi) = values
        .iter()
        .filter(|x| x.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
            (a.min(x), b.max(x))
        });
    (lo <= hi).then_some((lo, hi))
}

/// `CONTOURS` levels evenly inside the finite range of `values` (none if it is flat or empty).
fn contour_levels(values: &[f64], unit: &str) -> Vec<(f64, String)> {
    let Some((lo, hi)) = finite_bounds(values) else {
        return Vec::new();
    };
    if hi <= lo {
        return Vec::new();
    }
    (1..=CONTOURS)
        .map(|k| {
            let level = lo + (hi - lo) * k as f64 / (CONTOURS + 1) as f64;
            (level, crate::output::si(level, unit, 4))
        })
        .collect()
}

/// The plot of a finished sweep from its rows: `values[p]` = the first metric at point p, the
/// first axis slowest.
pub fn write(
    plot: &Path,
    axis_names: &[&str],
    grids: &[Vec<f64>],
    metric_name: &str,
    values: &[f64],
) -> anyhow::Result<()> {
    let svg = is_svg(plot)?;
    let bytes = if grids.len() == 1 {
        let order = increasing(&grids[0]);
        let x: Vec<f64> = order.iter().map(|&i| grids[0][i]).collect();
        let y: Vec<f64> = order.iter().map(|&i| values[i]).collect();
        let title = format!("{metric_name} against {}", axis_names[0]);
        plot::figure_bytes(
            &LinePlot {
                x: &x,
                y: &y,
                x_axis: key_axis(axis_names[0]),
                y_axis: metric_axis(metric_name),
                title: &title,
            },
            svg,
        )?
    } else {
        let (ou, ov) = (increasing(&grids[0]), increasing(&grids[1]));
        let u: Vec<f64> = ou.iter().map(|&i| grids[0][i]).collect();
        let v: Vec<f64> = ov.iter().map(|&j| grids[1][j]).collect();
        let nv = grids[1].len();
        // Point p = i * nv + j (first axis slowest); the map wants u fastest.
        let z: Vec<f64> = ov
            .iter()
            .flat_map(|&j| ou.iter().map(move |&i| values[i * nv + j]))
            .collect();
        let contours = contour_levels(&z, crate::output::metric_unit(metric_name));
        let (lo, hi) = finite_bounds(&z).unwrap_or((0.0, 0.0));
        let title = heat_map_title(metric_name, lo, hi, axis_names[0], axis_names[1]);
        plot::figure_bytes(
            &HeatMap {
                u: &u,
                v: &v,
                values: &z,
                scale: Scale::Linear,
                u_axis: key_axis(axis_names[0]),
                v_axis: key_axis(axis_names[1]),
                title: &title,
                unit: crate::output::metric_unit(metric_name),
                contours: &contours,
            },
            svg,
        )?
    };
    crate::output::write_atomic(plot, &bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn levels_sit_strictly_inside_the_range() {
        let l = contour_levels(&[1.0, f64::NAN, 10.0], "H");
        assert_eq!(l.len(), CONTOURS);
        assert!(l.iter().all(|(x, _)| *x > 1.0 && *x < 10.0));
        assert!(contour_levels(&[2.0, 2.0], "H").is_empty());
    }

    #[test]
    fn labels_carry_units() {
        assert_eq!(axis_unit("winding.p.origin[2]"), "m");
        assert_eq!(axis_unit("winding.p.tilt_deg"), "deg");
    }

    #[test]
    fn heat_map_titles_read_in_prefixed_units() {
        // The tables' SI-prefix rule (numtext::si_prefix): 7.9e-5..8.4e-5 H reads in µH,
        // 2e-11 F in pF, a surface field near 1.5e6 V/m in MV/m; a pure number has no unit.
        assert_eq!(
            heat_map_title("mutual.a.b", 7.9e-5, 8.4e-5, "winding.b.radius", "x"),
            "mutual.a.b (µH) against winding.b.radius and x"
        );
        assert_eq!(
            heat_map_title("capacitance.top", 1.5e-11, 2.2e-11, "a", "b"),
            "capacitance.top (pF) against a and b"
        );
        assert_eq!(
            heat_map_title("surface_field.top", 9e5, 1.5e6, "a", "b"),
            "surface_field.top (MV/m) against a and b"
        );
        assert_eq!(
            heat_map_title("coupling.a.b", 0.1, 0.2, "a", "b"),
            "coupling.a.b against a and b"
        );
    }

    #[test]
    fn unsorted_grids_are_drawn_in_increasing_order() {
        assert_eq!(increasing(&[1.0, 0.5, 2.0]), vec![1, 0, 2]);
    }
}
