//! `coilfield report --html FILE`: the report as one self-contained HTML page. The text
//! report's sections become tables (one row per line, cells where the text aligns columns with
//! two or more spaces) and three figures are drawn inline as SVG: a side view of the design to
//! scale, a heat map of the peak field with the threshold contours, and the coupling against
//! the primary's height. Nothing is fetched: no scripts, style sheets, fonts or images from
//! elsewhere.

use crate::map::{contour_warnings, threshold_contours};
use crate::plot::{self, HeatMap, LinePlot};
use crate::sample::{Grid, Plane};
use coilfield_geometry::{Design, ElectrodeShape, Role, Shape, Winding, local_frame};
use coilfield_solver::Par;
use coilfield_solver::assembly::{WindingModel, image_model, inductance_entry};
use coilfield_solver::coupling::coupling;
use coilfield_solver::field_model::{FieldModel, has_potentials};
use coilfield_solver::thresholds::Quantity;
use nalgebra::{Point3, Vector3};
use std::fmt::Write as _;

/// One figure of the page: its element id, caption and inline SVG.
pub struct Figure {
    /// The `id` of the figure element.
    pub id: &'static str,
    /// What the figure shows, in words.
    pub caption: String,
    /// The SVG document, inlined as it is.
    pub svg: String,
}

/// Element ids of the figures, in page order.
pub const SIDE_VIEW_ID: &str = "fig-side-view";
/// Id of the field heat map.
pub const FIELD_MAP_ID: &str = "fig-field-map";
/// Id of k against the primary's height.
pub const COUPLING_ID: &str = "fig-coupling-height";

/// `&`, `<`, `>` and `"` as entities, so report text never reads as markup.
fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            _ => out.push(c),
        }
    }
    out
}

/// The cells of one report line: split where the text lines up columns (two or more spaces).
fn cells(line: &str) -> Vec<&str> {
    line.trim()
        .split("  ")
        .map(str::trim)
        .filter(|c| !c.is_empty())
        .collect()
}

/// `rows` as an HTML table appended to `out` (nothing when there are none); `rows` is emptied.
fn flush_table(rows: &mut Vec<Vec<&str>>, out: &mut String) {
    if rows.is_empty() {
        return;
    }
    out.push_str("<table>\n");
    for r in rows.drain(..) {
        out.push_str("<tr>");
        for c in r {
            let _ = write!(out, "<td>{}</td>", escape(c));
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</table>\n");
}

/// The text report as HTML: a heading per section (a line that is not indented and has one
/// cell) and the section's other lines as a table.
fn text_as_tables(text: &str) -> String {
    let mut out = String::new();
    let mut rows: Vec<Vec<&str>> = Vec::new();
    for line in text.lines() {
        if line.trim().is_empty() {
            flush_table(&mut rows, &mut out);
        } else if line.starts_with(' ') || cells(line).len() >= 2 {
            // Indented lines, and lines of aligned columns (a matrix's header and rows).
            rows.push(cells(line));
        } else {
            flush_table(&mut rows, &mut out);
            let _ = writeln!(out, "<h2>{}</h2>", escape(line.trim()));
        }
    }
    flush_table(&mut rows, &mut out);
    out
}

/// The whole page: title, the figures, then the report's sections as tables. `notes` say why
/// a figure is missing (a design without a drive has no field map).
pub fn page(title: &str, text: &str, figures: &[Figure], notes: &[String]) -> String {
    let mut s = String::new();
    s.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    let _ = writeln!(s, "<title>{}</title>", escape(title));
    // Fixed sizes for the title and the figures' boxes: the page lays out the same with any
    // fonts, and figure k's picture is at (16, 48 + 840 k) px (the browser test relies on it).
    // The embedded font once for the page and its figures (no system fonts, nothing fetched).
    let _ = writeln!(s, "<style>\n{}\n</style>", plot::svg_font_face_css());
    let _ = writeln!(
        s,
        "<style>\nbody {{ font-family: \"{}\", sans-serif; }}\n</style>",
        plot::SVG_FONT_FAMILY
    );
    s.push_str(
        "<style>\nbody { margin: 0; padding: 0 16px; }\n\
         h1 { font-size: 20px; margin: 0; height: 48px; line-height: 48px; overflow: hidden; }\n\
         figure { margin: 0; width: 960px; height: 840px; overflow: hidden; }\n\
         figure svg { display: block; }\nfigcaption { margin-top: 4px; font-size: 13px; }\n\
         table { border-collapse: collapse; margin-bottom: 12px; }\n\
         td { border: 1px solid #bbb; padding: 2px 6px; font-size: 13px; }\n\
         h2 { font-size: 16px; margin: 18px 0 6px 0; }\n</style>\n</head>\n<body>\n",
    );
    let _ = writeln!(s, "<h1>{}</h1>", escape(title));
    for f in figures {
        let _ = writeln!(
            s,
            "<figure id=\"{}\">\n{}\n<figcaption>{}</figcaption>\n</figure>",
            f.id,
            f.svg.trim(),
            escape(&f.caption)
        );
    }
    for n in notes {
        let _ = writeln!(s, "<p>{}</p>", escape(n));
    }
    s.push_str(&text_as_tables(text));
    s.push_str("</body>\n</html>\n");
    s
}

/// The unit vector in the x-z plane perpendicular to `axis` (the side view's radial
/// direction), or the local frame's first vector when `axis` is along y.
fn side_radial(axis: &Vector3<f64>) -> Vector3<f64> {
    let r = axis.cross(&Vector3::y());
    if r.norm() > 1e-9 {
        r.normalize()
    } else {
        local_frame(&nalgebra::Unit::new_normalize(*axis)).0
    }
}

/// The outline of an electrode seen from the side (x, z in m): its meridian section in the
/// plane of its axis and the side view's radial direction; a torus as its two tube circles.
fn electrode_outline(shape: &ElectrodeShape) -> Vec<Vec<(f64, f64)>> {
    let (o, n) = shape.origin_axis();
    let e = side_radial(n.as_ref());
    let n_s = 120;
    let point = |rho: f64, zeta: f64| {
        let p = o + n.as_ref() * zeta + e * rho;
        (p.x, p.z)
    };
    let half: Vec<(f64, f64)> = (0..=n_s)
        .map(|k| shape.generatrix_at(k as f64 / n_s as f64))
        .collect();
    match shape {
        ElectrodeShape::Torus { .. } => vec![
            half.iter().map(|&(r, z)| point(r, z)).collect(),
            half.iter().map(|&(r, z)| point(-r, z)).collect(),
        ],
        _ => {
            let mut ring: Vec<(f64, f64)> = half.iter().map(|&(r, z)| point(r, z)).collect();
            ring.extend(half.iter().rev().map(|&(r, z)| point(-r, z)));
            vec![ring]
        }
    }
}

/// A winding's centreline seen from the side (x, z in m), sampled finely enough to show its
/// turns (at most 12,000 points).
fn winding_trace(w: &Winding) -> Vec<(f64, f64)> {
    let n = match &w.shape {
        Shape::Polyline { points_m, .. } => 4 * points_m.len(),
        s => (s.turns().unwrap_or(1.0) * 24.0).ceil() as usize,
    }
    .clamp(64, 12_000);
    (0..=n)
        .map(|k| {
            let p = w.shape.point_at(k as f64 / n as f64);
            (p.x, p.z)
        })
        .collect()
}

/// Colours of the windings in the side view, in file order.
const WINDING_COLOURS: [&str; 6] = [
    "#b5651d", "#1f5fa8", "#2e8b57", "#8b3a8b", "#c0392b", "#d4a017",
];

/// The side view of the design to scale (x across, z up, m): windings' centrelines, electrodes'
/// sections, the ground plane and a scale bar.
pub fn side_view(design: &Design) -> Figure {
    let traces: Vec<(&Winding, Vec<(f64, f64)>)> = design
        .windings
        .iter()
        .map(|w| (w, winding_trace(w)))
        .collect();
    let outlines: Vec<Vec<Vec<(f64, f64)>>> = design
        .electrodes
        .iter()
        .map(|e| electrode_outline(&e.shape))
        .collect();
    let all = traces
        .iter()
        .flat_map(|(_, t)| t.iter())
        .chain(outlines.iter().flatten().flatten());
    let (mut x0, mut x1, mut z0, mut z1) =
        (f64::INFINITY, -f64::INFINITY, f64::INFINITY, -f64::INFINITY);
    for &(x, z) in all {
        x0 = x0.min(x);
        x1 = x1.max(x);
        z0 = z0.min(z);
        z1 = z1.max(z);
    }
    if let Some(g) = design.ground {
        z0 = z0.min(g.z_m);
        z1 = z1.max(g.z_m);
    }
    if !(x0.is_finite() && z0.is_finite()) {
        (x0, x1, z0, z1) = (-0.1, 0.1, -0.1, 0.1);
    }
    let span = (x1 - x0).max(z1 - z0).max(1e-3);
    let pad = 0.08 * span;
    (x0, x1, z0, z1) = (x0 - pad, x1 + pad, z0 - pad, z1 + pad);
    // One scale for both directions: the view is to scale.
    let scale = (860.0 / (x1 - x0)).min(640.0 / (z1 - z0));
    let (w_px, h_px) = ((x1 - x0) * scale + 40.0, (z1 - z0) * scale + 70.0);
    let px = |x: f64| 20.0 + (x - x0) * scale;
    let pz = |z: f64| 20.0 + (z1 - z) * scale;
    let path = |pts: &[(f64, f64)]| {
        let mut d = String::new();
        for (k, &(x, z)) in pts.iter().enumerate() {
            let _ = write!(
                d,
                "{}{:.2},{:.2} ",
                if k == 0 { "M" } else { "L" },
                px(x),
                pz(z)
            );
        }
        d
    };
    let mut s = String::new();
    let _ = writeln!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w_px:.0}\" height=\"{h_px:.0}\" \
         viewBox=\"0 0 {w_px:.0} {h_px:.0}\" font-family=\"{}, sans-serif\" font-size=\"13\">",
        plot::SVG_FONT_FAMILY
    );
    let _ = writeln!(
        s,
        "<rect x=\"0\" y=\"0\" width=\"{w_px:.0}\" height=\"{h_px:.0}\" fill=\"#f4f8fb\"/>"
    );
    if let Some(g) = design.ground {
        let y = pz(g.z_m);
        let _ = writeln!(
            s,
            "<rect x=\"20\" y=\"{y:.2}\" width=\"{:.2}\" height=\"{:.2}\" fill=\"#d9c7a7\"/>\
             <line x1=\"20\" y1=\"{y:.2}\" x2=\"{:.2}\" y2=\"{y:.2}\" stroke=\"#6b4f2a\" \
             stroke-width=\"2\"/><text x=\"24\" y=\"{:.2}\" fill=\"#4a3520\">ground plane{}</text>",
            w_px - 40.0,
            (pz(z0) - y).max(0.0),
            w_px - 20.0,
            y + 16.0,
            if g.conducting { " (conducting)" } else { "" }
        );
    }
    // The secondary's axis, dashed.
    if let Some((o, n)) = design
        .windings
        .iter()
        .find(|w| w.role == Role::Secondary)
        .and_then(|w| w.shape.origin_axis())
    {
        let (a, b) = (o + n.as_ref() * (-span), o + n.as_ref() * (2.0 * span));
        let _ = writeln!(
            s,
            "<line x1=\"{:.2}\" y1=\"{:.2}\" x2=\"{:.2}\" y2=\"{:.2}\" stroke=\"#888\" \
             stroke-dasharray=\"6 4\" stroke-width=\"1\"/>",
            px(a.x),
            pz(a.z),
            px(b.x),
            pz(b.z)
        );
    }
    for (e, parts) in design.electrodes.iter().zip(&outlines) {
        for part in parts {
            let _ = writeln!(
                s,
                "<path d=\"{}Z\" fill=\"#a9b8c6\" stroke=\"#3b4d5e\" stroke-width=\"1.5\"/>",
                path(part)
            );
        }
        let (lx, lz) =
            parts.iter().flatten().fold(
                (f64::NEG_INFINITY, 0.0),
                |a, &p| if p.0 > a.0 { p } else { a },
            );
        let _ = writeln!(
            s,
            "<text x=\"{:.2}\" y=\"{:.2}\" fill=\"#3b4d5e\">{}</text>",
            px(lx) + 6.0,
            pz(lz),
            escape(&e.name)
        );
    }
    for (k, (w, trace)) in traces.iter().enumerate() {
        let colour = WINDING_COLOURS[k % WINDING_COLOURS.len()];
        let width = (w.wire_diameter_m * scale).max(1.0);
        let _ = writeln!(
            s,
            "<path d=\"{}\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"{width:.2}\" \
             stroke-linejoin=\"round\"/>",
            path(trace)
        );
        let (lx, lz) = trace.iter().fold(
            (f64::NEG_INFINITY, 0.0),
            |a, &p| if p.0 > a.0 { p } else { a },
        );
        let _ = writeln!(
            s,
            "<text x=\"{:.2}\" y=\"{:.2}\" fill=\"{colour}\">{}</text>",
            px(lx) + 6.0,
            pz(lz) + 4.0,
            escape(&w.name)
        );
    }
    // Scale bar: a round length near a fifth of the view.
    let bar_m = round_length_m(0.2 * (x1 - x0));
    let y = h_px - 22.0;
    let _ = writeln!(
        s,
        "<line x1=\"20\" y1=\"{y:.2}\" x2=\"{:.2}\" y2=\"{y:.2}\" stroke=\"#000\" \
         stroke-width=\"3\"/><text x=\"{:.2}\" y=\"{:.2}\">{}</text>",
        20.0 + bar_m * scale,
        28.0 + bar_m * scale,
        y + 5.0,
        crate::output::si(bar_m, "m", 3)
    );
    s.push_str("</svg>\n");
    Figure {
        id: SIDE_VIEW_ID,
        caption: "Side view to scale (x across, z up): winding centrelines, electrode sections, \
                  the ground plane and the secondary's axis (dashed)."
            .into(),
        svg: s,
    }
}

/// 1, 2 or 5 times a power of ten (m), at most `m`.
fn round_length_m(m: f64) -> f64 {
    let p = 10f64.powf(m.log10().floor());
    [5.0, 2.0, 1.0]
        .into_iter()
        .map(|f| f * p)
        .find(|&v| v <= m)
        .unwrap_or(p)
}

/// The design's centre line and size for the field map: the secondary's axis (else the first
/// axisymmetric part's), the largest distance of any part from it (m) and the z range (m).
fn field_map_frame(design: &Design) -> (f64, f64, f64, f64, f64) {
    let axis_point = design
        .windings
        .iter()
        .find(|w| w.role == Role::Secondary)
        .and_then(|w| w.shape.origin_axis())
        .map(|(o, _)| o)
        .unwrap_or_else(Point3::origin);
    let mut reach: f64 = 0.0;
    let (mut z0, mut z1) = (f64::INFINITY, f64::NEG_INFINITY);
    let mut take = |x: f64, z: f64| {
        reach = reach.max((x - axis_point.x).abs());
        z0 = z0.min(z);
        z1 = z1.max(z);
    };
    for w in &design.windings {
        for (x, z) in winding_trace(w) {
            take(x, z);
        }
    }
    for e in &design.electrodes {
        for (x, z) in electrode_outline(&e.shape).into_iter().flatten() {
            take(x, z);
        }
    }
    if !z0.is_finite() {
        (z0, z1) = (-0.1, 0.1);
    }
    (axis_point.x, axis_point.y, reach.max(0.01), z0, z1)
}

/// The heat map of the peak field on the x-z plane through the secondary's axis, with the
/// threshold contours of `map`: |E| when a conductor has a potential, else |B|. `design` has
/// its drive resolved. Returns the figure and its warnings (`map`'s words: thresholds outside
/// the plotted range, [`crate::map::contour_warnings`]). Errors when the drive gives no field.
pub fn field_map(design: &Design, label: &str) -> anyhow::Result<(Figure, Vec<String>)> {
    let (quantity, unit, name) = if has_potentials(design) {
        (Quantity::E, "V/m", "|E|")
    } else {
        (Quantity::B, "T", "|B|")
    };
    let (cx, cy, reach, z0, z1) = field_map_frame(design);
    let half = 1.8 * reach;
    let (mut v0, v1) = (z0 - 0.5 * reach, z1 + 0.8 * reach);
    if let Some(g) = design.ground {
        v0 = v0.max(g.z_m);
    }
    let nu = 71;
    let nv = ((nu as f64) * (v1 - v0) / (2.0 * half))
        .round()
        .clamp(31.0, 151.0) as usize;
    // The map's grid rule: coordinates snapped to short decimals.
    let lin = crate::sample::linspace;
    let grid = Grid {
        xs_m: lin(cx - half, cx + half, nu),
        ys_m: vec![cy],
        zs_m: lin(v0, v1, nv),
        plane: Some(Plane::Xz),
    };
    let model = FieldModel::new(design, label, Par::Rayon, None)?;
    let values: Vec<f64> = model
        .eval(&grid.points())
        .iter()
        .map(|s| {
            match quantity {
                Quantity::E => s.e_mag(),
                Quantity::B => s.b_mag(),
            }
            .unwrap_or(f64::NAN)
        })
        .collect();
    let (contours, _) = threshold_contours(design, label, quantity, unit)?;
    let warnings = contour_warnings(&values, &contours, plot::Scale::Log, unit);
    let title = format!("peak {name} ({unit}) on the x-z plane through the secondary's axis");
    let (ul, vl) = Plane::Xz.axis_names();
    let map = HeatMap {
        u: &grid.xs_m,
        v: &grid.zs_m,
        values: &values,
        scale: plot::Scale::Log,
        u_axis: plot::Axis::metres(ul),
        v_axis: plot::Axis::metres(vl),
        title: &title,
        unit,
        contours: &contours,
    };
    let svg = plot::figure_svg_fragment(&map)?;
    let figure = Figure {
        id: FIELD_MAP_ID,
        caption: format!(
            "Peak {name} of the drive (log colour scale) with the clearance thresholds as \
             contour lines; grey: inside a conductor or on a wire. A screening estimate, not a \
             safety certificate."
        ),
        svg,
    };
    Ok((figure, warnings))
}

/// A copy of `shape` moved by `dz_m` along z.
fn raised(shape: &Shape, dz_m: f64) -> Shape {
    let up = Vector3::new(0.0, 0.0, dz_m);
    let mut s = shape.clone();
    match &mut s {
        Shape::Helix { origin_m, .. }
        | Shape::Spiral { origin_m, .. }
        | Shape::Cone { origin_m, .. }
        | Shape::Ring { origin_m, .. } => *origin_m += up,
        Shape::Polyline { points_m, .. } => points_m.iter_mut().for_each(|p| *p += up),
    }
    s
}

/// k of `primary` with the secondary of model `sec_model` and inductance `l_sec_h` (H), with
/// the images in `ground` when it conducts; None where an entry cannot be computed or k is not
/// finite (the primary on the secondary's wire).
fn coupling_with(
    sec_model: &WindingModel,
    l_sec_h: f64,
    primary: &Winding,
    ground: Option<&coilfield_geometry::Ground>,
) -> Option<f64> {
    let model = WindingModel::of(primary);
    let image = ground.map(|g| image_model(primary, g));
    let (l_pri, _, _) = inductance_entry(&model, &model, true, image.as_ref(), Par::Rayon).ok()?;
    let (m, _, _) = inductance_entry(sec_model, &model, false, image.as_ref(), Par::Rayon).ok()?;
    let k = coupling(m, l_sec_h, l_pri);
    k.is_finite().then_some(k)
}

/// The coupling k of the primary with the secondary as the primary moves along z (its
/// height from its place in the design, m), with the design's conducting ground's images as
/// the inductance matrix has them (`assembly::inductance_entry`, the one path to an entry).
/// None without a primary and a secondary.
pub fn coupling_against_height(design: &Design) -> anyhow::Result<Option<Figure>> {
    let (Some(sec), Some(pri)) = (
        design.windings.iter().find(|w| w.role == Role::Secondary),
        design.windings.iter().find(|w| w.role == Role::Primary),
    ) else {
        return Ok(None);
    };
    let ground = design.ground.filter(|g| g.conducting);
    let sec_model = WindingModel::of(sec);
    let sec_image = ground.map(|g| image_model(sec, &g));
    let (l_sec, _, _) =
        inductance_entry(&sec_model, &sec_model, true, sec_image.as_ref(), Par::Rayon)?;
    // Heights from the primary's place down to the ground (or a secondary's length below) and
    // up to a secondary's length above.
    let sec_len = match sec.shape {
        Shape::Helix { length_m, .. } => length_m,
        Shape::Cone { height_m, .. } => height_m.abs(),
        _ => 0.1,
    }
    .max(0.02);
    let lowest = winding_trace(pri)
        .iter()
        .map(|p| p.1)
        .fold(f64::INFINITY, f64::min);
    let down = match design.ground {
        Some(g) => (lowest - g.z_m - 2.0 * pri.wire_diameter_m).clamp(0.0, 0.5 * sec_len),
        None => 0.5 * sec_len,
    };
    let n = 25;
    let mut dz = Vec::with_capacity(n);
    let mut k = Vec::with_capacity(n);
    for i in 0..n {
        let d = -down + (down + sec_len) * i as f64 / (n - 1) as f64;
        let mut moved = pri.clone();
        moved.shape = raised(&pri.shape, d);
        dz.push(d);
        k.push(coupling_with(&sec_model, l_sec, &moved, ground.as_ref()).unwrap_or(f64::NAN));
    }
    let title = format!(
        "coupling k of '{}' with '{}' against the primary's height",
        pri.name, sec.name
    );
    let curve = LinePlot {
        x: &dz,
        y: &k,
        x_axis: plot::Axis {
            name: "height of the primary from its place in the design",
            unit: "m",
        },
        y_axis: plot::Axis {
            name: "k",
            unit: "",
        },
        title: &title,
    };
    let svg = plot::figure_svg_fragment(&curve)?;
    Ok(Some(Figure {
        id: COUPLING_ID,
        caption: format!(
            "k of the primary '{}' with the secondary '{}' as the primary is raised or lowered \
             along z (0: where the design places it); gaps: heights where no value could be computed.",
            pri.name, sec.name
        ),
        svg,
    }))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn report_lines_become_table_cells_and_markup_is_escaped() {
        let html = text_as_tables("windings\n  a <b>  1.0 mH\n\nnext\nL  M\n  x & y\n");
        assert_eq!(
            html,
            "<h2>windings</h2>\n<table>\n<tr><td>a &lt;b&gt;</td><td>1.0 mH</td></tr>\n</table>\n\
             <h2>next</h2>\n<table>\n<tr><td>L</td><td>M</td></tr>\n<tr><td>x &amp; y</td></tr>\n\
             </table>\n"
        );
    }

    #[test]
    fn scale_bars_are_round_lengths() {
        assert_eq!(round_length_m(0.37), 0.2);
        assert_eq!(round_length_m(0.07), 0.05);
        assert_eq!(round_length_m(1.0), 1.0);
    }
}
