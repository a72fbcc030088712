//! Plots as PNG or SVG (plotters, no system libraries; the DejaVu Sans font is embedded, licence
//! beside it in `cli/assets/`): heat maps with contour lines (field magnitudes on a plane, a
//! metric over a two-axis sweep) and line plots (a metric against one swept parameter).
//!
//! Colours: the Viridis map (van der Walt and Smith, matplotlib, 2015), chosen because it
//! stays readable in grey and for colour-blind readers; logarithmic for near fields, which span
//! decades, linear for sweep metrics. Cells without a value (inside a conductor, on a wire, a
//! sweep point that failed) are grey.

use plotters::prelude::*;
use plotters::style::colors::colormaps::ViridisRGB;
use std::sync::Once;

/// Embedded font for every label (Bitstream Vera licence, `cli/assets/DejaVu-LICENSE.txt`).
const FONT: &[u8] = include_bytes!("assets/DejaVuSans.ttf");

/// The family every label asks for; registered with the embedded font's bytes.
const FONT_FAMILY: &str = "sans-serif";

/// The family name of the embedded font inside SVG: a name of our own, because a generic family
/// such as `sans-serif` cannot be given a font by `@font-face`; `sans-serif` stays as the
/// fallback.
pub const SVG_FONT_FAMILY: &str = "coilfield-dejavu-sans";

/// The CSS rule that carries the embedded font (TrueType, base64 in a `data:` URL), so SVG text
/// renders in DejaVu Sans without system fonts and without fetching anything.
pub fn svg_font_face_css() -> String {
    use base64::Engine;
    format!(
        "@font-face {{ font-family: \"{SVG_FONT_FAMILY}\"; src: url(data:font/ttf;base64,{}) \
         format(\"truetype\"); }}",
        base64::engine::general_purpose::STANDARD.encode(FONT)
    )
}

/// SVG text of `figure` whose labels ask for the embedded font first, without the font itself:
/// a page that holds several figures carries [`svg_font_face_css`] once.
pub fn figure_svg_fragment(figure: &impl Figure) -> anyhow::Result<String> {
    register_font();
    let mut s = String::new();
    {
        let root = SVGBackend::with_string(&mut s, (W, H)).into_drawing_area();
        figure.draw_on(&root)?;
        root.present()
            .map_err(|e| anyhow::anyhow!("cannot draw the SVG: {e}"))?;
    }
    Ok(s.replace(
        &format!("font-family=\"{FONT_FAMILY}\""),
        &format!("font-family=\"{SVG_FONT_FAMILY}, {FONT_FAMILY}\""),
    ))
}

/// A whole SVG file: [`figure_svg_fragment`] with the font embedded in its `<defs>`.
fn standalone_svg(figure: &impl Figure) -> anyhow::Result<String> {
    let s = figure_svg_fragment(figure)?;
    let defs = format!("<defs><style>{}</style></defs>", svg_font_face_css());
    // After the end of the opening <svg ...> tag.
    let at = s
        .find("<svg")
        .and_then(|i| s[i..].find('>').map(|j| i + j + 1))
        .ok_or_else(|| anyhow::anyhow!("cannot draw the SVG: no <svg> element"))?;
    Ok(format!("{}{defs}{}", &s[..at], &s[at..]))
}

fn register_font() {
    static ONCE: Once = Once::new();
    ONCE.call_once(|| {
        // The bytes are a valid TrueType font shipped with the binary; a failure here is a
        // build mistake, reported when text is drawn.
        let _ = plotters::style::register_font(FONT_FAMILY, FontStyle::Normal, FONT);
    });
}

/// How values map to colours and contour levels are interpolated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scale {
    /// log10 of the value; non-positive values have none.
    Log,
    /// The value itself.
    Linear,
}

impl Scale {
    /// The coordinate of `x` on this scale, NaN where it has none.
    fn of(self, x: f64) -> f64 {
        match self {
            Scale::Log if x > 0.0 => x.log10(),
            Scale::Log => f64::NAN,
            Scale::Linear => x,
        }
    }
}

/// A sampled scalar on a rectangular grid.
#[derive(Debug, Clone)]
pub struct HeatMap<'a> {
    /// Coordinates of the columns, increasing (m for a plane; a swept parameter's unit).
    pub u: &'a [f64],
    /// Coordinates of the rows, increasing.
    pub v: &'a [f64],
    /// Values, `u` fastest: `values[j * u.len() + i]`; NaN (or non-positive on a log scale)
    /// = no value.
    pub values: &'a [f64],
    /// Colour and contour scale.
    pub scale: Scale,
    /// The horizontal axis (the quantity of `u` and its SI unit).
    pub u_axis: Axis<'a>,
    /// The vertical axis (the quantity of `v` and its SI unit).
    pub v_axis: Axis<'a>,
    /// Title, with the quantity and its unit.
    pub title: &'a str,
    /// SI unit of the values (`"V/m"`, `"T"`, `"F"`; `""` for a pure number): the colour bar's
    /// ticks read in it with an SI prefix at any scale.
    pub unit: &'a str,
    /// Contour levels (same unit as `values`) with a short name for the legend.
    pub contours: &'a [(f64, String)],
}

/// An axis of a figure: the quantity shown and the unit of the values given (SI: `"m"`, `"H"`,
/// `"F"`; `""` for a pure number; a unit that takes no prefix, such as `"deg"` or `"turns"`,
/// is shown as it is).
#[derive(Debug, Clone, Copy)]
pub struct Axis<'a> {
    /// What the axis shows, e.g. `x` or `mutual.a.b`.
    pub name: &'a str,
    /// Unit of the values given.
    pub unit: &'a str,
}

impl<'a> Axis<'a> {
    /// A length axis (values in metres), as the field maps' plane axes are.
    pub fn metres(name: &'a str) -> Axis<'a> {
        Axis { name, unit: "m" }
    }
}

/// Units an axis reads with an SI prefix (the others, degrees or turns, as they are).
const PREFIXED_UNITS: [&str; 11] = ["m", "H", "F", "V/m", "T", "Hz", "V", "A", "s", "W", "A/m"];

/// How an axis reads: the factor dividing values in the axis's unit and the caption naming
/// the unit read. One rule for every axis, the SI prefix of the tables
/// ([`coilfield_solver::numtext::si_prefix`]) chosen for the largest magnitude on the axis: a
/// plane 0.02 m to 0.3 m across reads in mm, an inductance near 8e-5 H in µH, 2e-11 F in pF.
pub(crate) fn axis_reading(axis: Axis<'_>, lo: f64, hi: f64) -> (f64, String) {
    if axis.unit.is_empty() {
        return (1.0, axis.name.to_string());
    }
    let (scale, unit) = unit_reading(axis.unit, lo, hi);
    (scale, format!("{} ({unit})", axis.name))
}

/// The factor dividing values `lo..hi` given in `unit` and the unit they then read in, with
/// the SI prefix of the largest magnitude (`"µH"` for 7.9e-5..8.4e-5 H); a unit that takes no
/// prefix (or none) as it is, with factor 1. The rule of [`axis_reading`] and linear colour bars.
pub(crate) fn unit_reading(unit: &str, lo: f64, hi: f64) -> (f64, String) {
    if !PREFIXED_UNITS.contains(&unit) {
        return (1.0, unit.to_string());
    }
    let largest = [lo, hi]
        .into_iter()
        .filter(|x| x.is_finite())
        .fold(0.0f64, |m, x| m.max(x.abs()));
    let (scale, prefix) = coilfield_solver::numtext::si_prefix(largest, 3);
    (scale, format!("{prefix}{unit}"))
}

/// One straight piece of a contour line, in plane coordinates (m).
pub type Segment = ((f64, f64), (f64, f64));

/// Marching squares: the pieces of the level line `level` of `values` on the grid.
/// Interpolates the values on `scale` along cell edges (log10 for fields, which vary by
/// decades); cells with a missing corner are skipped, so a line stops at a conductor instead of
/// crossing it.
pub fn contour_segments(
    u: &[f64],
    v: &[f64],
    values: &[f64],
    level: f64,
    scale: Scale,
) -> Vec<Segment> {
    let nu = u.len();
    let lg = |x: f64| scale.of(x);
    let l = lg(level);
    let mut out = Vec::new();
    if nu < 2 || v.len() < 2 || !l.is_finite() {
        return out;
    }
    for j in 0..v.len() - 1 {
        for i in 0..nu - 1 {
            // Corners counter-clockwise from (i, j).
            let c = [
                (u[i], v[j], lg(values[j * nu + i])),
                (u[i + 1], v[j], lg(values[j * nu + i + 1])),
                (u[i + 1], v[j + 1], lg(values[(j + 1) * nu + i + 1])),
                (u[i], v[j + 1], lg(values[(j + 1) * nu + i])),
            ];
            if c.iter().any(|p| !p.2.is_finite()) {
                continue;
            }
            let mut cuts = Vec::with_capacity(4);
            for k in 0..4 {
                let (a, b) = (c[k], c[(k + 1) % 4]);
                if (a.2 >= l) != (b.2 >= l) {
                    let t = (l - a.2) / (b.2 - a.2);
                    cuts.push((a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1)));
                }
            }
            // Two cuts: one piece; four (a saddle): pair neighbours, a choice that keeps lines
            // apart and is as good as any without a finer sample.
            for pair in cuts.chunks_exact(2) {
                out.push((pair[0], pair[1]));
            }
        }
    }
    out
}

/// Steps of the colour ramp a reader can tell apart: 8-bit colour, 256 shades along the
/// Viridis map (common practice, no source: the map is published as a 256-entry table).
const COLOUR_STEPS: f64 = 256.0;

/// One contour line of a heat map: its level (the values' unit) and its legend text (the names
/// of every threshold it stands for).
#[derive(Debug, Clone, PartialEq)]
pub struct ContourLine {
    /// Level, in the unit of the values.
    pub level: f64,
    /// Legend text.
    pub label: String,
}

/// What a heat map does with its contour levels: the lines it draws and, in words, the
/// levels it cannot draw.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct ContourPlan {
    /// Lines to draw, by increasing level.
    pub lines: Vec<ContourLine>,
    /// One sentence per level (or group of coincident levels) outside the map's values.
    pub notes: Vec<String>,
}

/// The contour lines and notes of `contours` (level, legend text) over `values` on `scale`,
/// `unit` the values' SI unit. Two rules:
/// - Coincident levels are one line: levels whose places on the colour scale (log10 of the value
///   on a log scale) differ by less than one of the [`COLOUR_STEPS`] shades of the map's range
///   would be drawn over each other and read as one colour; they are drawn once, at the lowest
///   of them, and the legend names them all ("A: peak 30.3 µT; B: peak 30.3 µT"). Equal levels
///   are always one line.
/// - A level above the map's largest value or below its smallest crosses no cell, so it gets no
///   line and a note says so with the map's extreme ("..., above this map's maximum 300 kV/m,
///   not drawn"); so does a level a log scale cannot place (not positive).
pub fn plan_contours(
    values: &[f64],
    contours: &[(f64, String)],
    scale: Scale,
    unit: &str,
) -> ContourPlan {
    // The map's smallest and largest value with a place on the scale.
    let (min, max) = values
        .iter()
        .copied()
        .filter(|&x| scale.of(x).is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
            (a.min(x), b.max(x))
        });
    let shade = if max > min {
        (scale.of(max) - scale.of(min)) / COLOUR_STEPS
    } else {
        0.0
    };
    let mut order: Vec<usize> = (0..contours.len()).collect();
    order.sort_by(|&a, &b| contours[a].0.total_cmp(&contours[b].0));
    // Groups of coincident levels, each led by its lowest level.
    let mut groups: Vec<(f64, Vec<&str>)> = Vec::new();
    for k in order {
        let (level, label) = (&contours[k].0, contours[k].1.as_str());
        match groups.last_mut() {
            Some((lead, names))
                if *lead == *level || (scale.of(*level) - scale.of(*lead)).abs() < shade =>
            {
                names.push(label);
            }
            _ => groups.push((*level, vec![label])),
        }
    }
    let mut plan = ContourPlan::default();
    for (level, names) in groups {
        let label = names.join("; ");
        let place = scale.of(level);
        if !place.is_finite() {
            plan.notes.push(format!(
                "{label}: not positive, no place on a log scale, not drawn"
            ));
        } else if min > max {
            plan.notes.push(format!(
                "{label}: this map has no value to draw it on, not drawn"
            ));
        } else if level > max {
            plan.notes.push(format!(
                "{label}, above this map's maximum {}, not drawn",
                value_text(max, unit)
            ));
        } else if level < min {
            plan.notes.push(format!(
                "{label}, below this map's minimum {}, not drawn",
                value_text(min, unit)
            ));
        } else {
            plan.lines.push(ContourLine { level, label });
        }
    }
    plan
}

/// A value with an SI prefix and its unit (three significant digits), or the number alone for
/// a pure number: the colour bar's log ticks and the contour notes.
fn value_text(v: f64, unit: &str) -> String {
    if unit.is_empty() {
        let d = 2;
        return coilfield_solver::numtext::shortest(format!("{v:.d$e}").parse().unwrap_or(v));
    }
    crate::output::si(v, unit, 3)
}

/// Something drawn on a plotters drawing area of any backend.
pub trait Figure {
    /// Draw on `root`.
    fn draw_on<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, plotters::coord::Shift>,
    ) -> anyhow::Result<()>
    where
        DB::ErrorType: 'static;
}

impl Figure for HeatMap<'_> {
    fn draw_on<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, plotters::coord::Shift>,
    ) -> anyhow::Result<()>
    where
        DB::ErrorType: 'static,
    {
        draw(root, self)
    }
}

/// Size (pixels) of every figure.
const W: u32 = 900;
const H: u32 = 760;

/// Draw `figure` as SVG (`svg = true`) or PNG and return the bytes, so the caller can write
/// them atomically.
pub fn figure_bytes(figure: &impl Figure, svg: bool) -> anyhow::Result<Vec<u8>> {
    register_font();
    if svg {
        Ok(standalone_svg(figure)?.into_bytes())
    } else {
        let mut buf = vec![0u8; (W * H * 3) as usize];
        {
            let root = BitMapBackend::with_buffer(&mut buf, (W, H)).into_drawing_area();
            figure.draw_on(&root)?;
            root.present()
                .map_err(|e| anyhow::anyhow!("cannot draw the PNG: {e}"))?;
        }
        encode_png(&buf, W, H)
    }
}

/// [`figure_bytes`] of a heat map.
pub fn heat_map_bytes(map: &HeatMap<'_>, svg: bool) -> anyhow::Result<Vec<u8>> {
    figure_bytes(map, svg)
}

/// A curve y(x): a metric against one swept parameter.
#[derive(Debug, Clone)]
pub struct LinePlot<'a> {
    /// Abscissae, increasing.
    pub x: &'a [f64],
    /// Ordinates; NaN = no value (a gap in the line).
    pub y: &'a [f64],
    /// The abscissa's quantity and unit.
    pub x_axis: Axis<'a>,
    /// The ordinate's quantity and unit.
    pub y_axis: Axis<'a>,
    /// Title.
    pub title: &'a str,
}

/// The smallest and largest finite value, widened when they are equal; (0, 1) when none.
fn finite_range(v: impl Iterator<Item = f64>) -> (f64, f64) {
    let (lo, hi) = v
        .filter(|x| x.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
            (a.min(x), b.max(x))
        });
    if lo > hi {
        // No finite value (the fold's start).
        (0.0, 1.0)
    } else if hi > lo {
        (lo, hi)
    } else {
        let pad = if lo == 0.0 { 0.5 } else { 0.05 * lo.abs() };
        (lo - pad, hi + pad)
    }
}

/// The frame of a chart: title, margin, room for the y labels (px), and whether grid lines
/// are drawn; the same fonts and tick labels for every chart.
struct Frame<'a> {
    title: &'a str,
    margin_px: u32,
    y_labels_px: u32,
    grid: bool,
}

impl Frame<'_> {
    /// A chart on `area` over x in `x` and y in `y` (as the axes read them), with its axes,
    /// captions and tick labels drawn.
    fn chart<'a, DB: DrawingBackend>(
        &self,
        area: &'a DrawingArea<DB, plotters::coord::Shift>,
        x: (f64, f64),
        y: (f64, f64),
        captions: (&str, &str),
    ) -> anyhow::Result<
        ChartContext<
            'a,
            DB,
            Cartesian2d<
                plotters::coord::types::RangedCoordf64,
                plotters::coord::types::RangedCoordf64,
            >,
        >,
    >
    where
        DB::ErrorType: 'static,
    {
        let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow::anyhow!("cannot draw: {e:?}");
        let mut chart = ChartBuilder::on(area)
            .caption(self.title, (FONT_FAMILY, 20))
            .margin(self.margin_px)
            .x_label_area_size(44)
            .y_label_area_size(self.y_labels_px)
            .build_cartesian_2d(x.0..x.1, y.0..y.1)
            .map_err(err)?;
        let x_tick = |v: &f64| coilfield_solver::numtext::axis_tick(*v, x.1 - x.0);
        let y_tick = |v: &f64| coilfield_solver::numtext::axis_tick(*v, y.1 - y.0);
        let mut mesh = chart.configure_mesh();
        if !self.grid {
            mesh.disable_mesh();
        }
        mesh.x_desc(captions.0)
            .y_desc(captions.1)
            .x_label_formatter(&x_tick)
            .y_label_formatter(&y_tick)
            .label_style((FONT_FAMILY, 14))
            .draw()
            .map_err(err)?;
        Ok(chart)
    }
}

impl Figure for LinePlot<'_> {
    fn draw_on<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, plotters::coord::Shift>,
    ) -> anyhow::Result<()>
    where
        DB::ErrorType: 'static,
    {
        let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow::anyhow!("cannot draw: {e:?}");
        anyhow::ensure!(
            self.x.len() == self.y.len() && !self.x.is_empty(),
            "a line plot needs as many values as parameters"
        );
        root.fill(&WHITE).map_err(err)?;
        let (x0, x1) = finite_range(self.x.iter().copied());
        let (y0, y1) = finite_range(self.y.iter().copied());
        let (sx, x_caption) = axis_reading(self.x_axis, x0, x1);
        let (sy, y_caption) = axis_reading(self.y_axis, y0, y1);
        let (x0, x1, y0, y1) = (x0 / sx, x1 / sx, y0 / sy, y1 / sy);
        let frame = Frame {
            title: self.title,
            margin_px: 16,
            y_labels_px: 90,
            grid: true,
        };
        let mut chart = frame.chart(root, (x0, x1), (y0, y1), (&x_caption, &y_caption))?;
        // Runs of finite values, each its own line, so a failed point leaves a gap.
        let mut runs: Vec<Vec<(f64, f64)>> = vec![Vec::new()];
        for (&x, &y) in self.x.iter().zip(self.y) {
            if y.is_finite() {
                if let Some(r) = runs.last_mut() {
                    r.push((x / sx, y / sy));
                }
            } else if runs.last().is_some_and(|r| !r.is_empty()) {
                runs.push(Vec::new());
            }
        }
        let blue = RGBColor(31, 95, 168);
        for run in runs.into_iter().filter(|r| !r.is_empty()) {
            chart
                .draw_series(LineSeries::new(run.iter().copied(), blue.stroke_width(2)))
                .map_err(err)?;
            chart
                .draw_series(run.iter().map(|&p| Circle::new(p, 3, blue.filled())))
                .map_err(err)?;
        }
        Ok(())
    }
}

/// PNG encoding of an RGB buffer, in memory so the caller can write it atomically.
fn encode_png(rgb: &[u8], w: u32, h: u32) -> anyhow::Result<Vec<u8>> {
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, w, h);
        enc.set_color(png::ColorType::Rgb);
        enc.set_depth(png::BitDepth::Eight);
        let mut writer = enc.write_header()?;
        writer.write_image_data(rgb)?;
    }
    Ok(out)
}

fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, plotters::coord::Shift>,
    map: &HeatMap<'_>,
) -> anyhow::Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow::anyhow!("cannot draw: {e:?}");
    root.fill(&WHITE).map_err(err)?;
    let (nu, nv) = (map.u.len(), map.v.len());
    anyhow::ensure!(nu >= 2 && nv >= 2, "a heat map needs at least 2 x 2 points");
    anyhow::ensure!(
        map.values.len() == nu * nv,
        "heat map values do not fill the grid"
    );
    let (lo, hi) = finite_range(map.values.iter().map(|&x| map.scale.of(x)));
    let plan = plan_contours(map.values, map.contours, map.scale, map.unit);
    // The legend in a strip of its own below the chart and the colour bar, so it covers no
    // data; the strip is as tall as its rows.
    let (width, height) = root.dim_in_pixel();
    let legend = legend_layout(root, &plan, width)?;
    let chart_height = height.saturating_sub(legend.height).max(height / 2);
    let (chart_area, legend_area) = root.split_vertically(chart_height);
    let (plot_area, bar_area) = chart_area.split_horizontally(780);
    // Coordinates as the axes read them (mm for a plane a few decimetres across).
    let (su, u_caption) = axis_reading(map.u_axis, map.u[0], map.u[nu - 1]);
    let (sv, v_caption) = axis_reading(map.v_axis, map.v[0], map.v[nv - 1]);
    let u: Vec<f64> = map.u.iter().map(|x| x / su).collect();
    let v: Vec<f64> = map.v.iter().map(|x| x / sv).collect();
    let (u0, u1) = (u[0], u[nu - 1]);
    let (v0, v1) = (v[0], v[nv - 1]);
    let frame = Frame {
        title: map.title,
        margin_px: 12,
        y_labels_px: 70,
        grid: false,
    };
    let mut chart = frame.chart(&plot_area, (u0, u1), (v0, v1), (&u_caption, &v_caption))?;
    // Each sample colours the cell around it (half-way to its neighbours).
    let edge = |c: &[f64], k: usize| -> (f64, f64) {
        let a = if k == 0 {
            c[0]
        } else {
            0.5 * (c[k - 1] + c[k])
        };
        let b = if k + 1 == c.len() {
            c[k]
        } else {
            0.5 * (c[k] + c[k + 1])
        };
        (a, b)
    };
    let grey = RGBColor(170, 170, 170);
    chart
        .draw_series(
            (0..nv)
                .flat_map(|j| (0..nu).map(move |i| (i, j)))
                .map(|(i, j)| {
                    let (a, b) = edge(&u, i);
                    let (c, d) = edge(&v, j);
                    let x = map.scale.of(map.values[j * nu + i]);
                    let colour = if x.is_finite() {
                        ViridisRGB::get_color_normalized(x, lo, hi)
                    } else {
                        grey
                    };
                    Rectangle::new([(a, c), (b, d)], colour.filled())
                }),
        )
        .map_err(err)?;
    for (k, line) in plan.lines.iter().enumerate() {
        let colour = contour_colour(k);
        let segs = contour_segments(&u, &v, map.values, line.level, map.scale);
        chart
            .draw_series(
                segs.iter()
                    .map(|&(a, b)| PathElement::new(vec![a, b], colour.stroke_width(2))),
            )
            .map_err(err)?;
    }
    draw_legend(&legend_area, &plan, &legend)?;
    // Colour bar: the value on its scale.
    let mut bar = ChartBuilder::on(&bar_area)
        .margin_top(44)
        .margin_bottom(52)
        .margin_right(8)
        .y_label_area_size(58)
        .caption(
            colour_bar_caption(map.scale, map.unit, lo, hi),
            (FONT_FAMILY, 14),
        )
        .build_cartesian_2d(0.0..1.0, lo..hi)
        .map_err(err)?;
    let tick = |y: &f64| colour_bar_tick(*y, map.scale, map.unit, lo, hi);
    bar.configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_label_formatter(&tick)
        .label_style((FONT_FAMILY, 13))
        .draw()
        .map_err(err)?;
    let steps = 100;
    bar.draw_series((0..steps).map(|k| {
        let a = lo + (hi - lo) * k as f64 / steps as f64;
        let b = lo + (hi - lo) * (k + 1) as f64 / steps as f64;
        Rectangle::new(
            [(0.0, a), (1.0, b)],
            ViridisRGB::get_color_normalized(0.5 * (a + b), lo, hi).filled(),
        )
    }))
    .map_err(err)?;
    Ok(())
}

/// The colour bar's caption. A log bar spans decades, so each tick carries its own SI prefix
/// and the caption names the unit and the scale ("V/m, log scale"); a linear bar (`lo..hi` in
/// the unit) is an axis and reads as one, in the prefix [`axis_reading`] chooses ("µH").
fn colour_bar_caption(scale: Scale, unit: &str, lo: f64, hi: f64) -> String {
    match scale {
        Scale::Log if unit.is_empty() => "value, log scale".to_string(),
        Scale::Log => format!("{unit}, log scale"),
        Scale::Linear if unit.is_empty() => "value".to_string(),
        Scale::Linear => unit_reading(unit, lo, hi).1,
    }
}

/// A colour-bar tick at `y` on a bar spanning `lo..hi`: on a log scale the value 10^y with an
/// SI prefix and the unit, readable at any scale (2e-11 F reads "20.0 pF", not "0.0"); on a
/// linear scale the number in the caption's prefix, as an axis tick.
fn colour_bar_tick(y: f64, scale: Scale, unit: &str, lo: f64, hi: f64) -> String {
    match scale {
        Scale::Log => value_text(10f64.powf(y), unit),
        Scale::Linear => {
            let (s, _) = unit_reading(unit, lo, hi);
            coilfield_solver::numtext::axis_tick(y / s, (hi - lo) / s)
        }
    }
}

/// The colours of contour lines, in the order of their levels: strong colours that stand out
/// on the Viridis map (white and yellow too, which the legend shows on a dark swatch).
const CONTOUR_COLOURS: [RGBColor; 10] = [
    WHITE,
    RED,
    MAGENTA,
    CYAN,
    BLACK,
    YELLOW,
    plotters::style::full_palette::ORANGE,
    plotters::style::full_palette::PINK,
    BLUE,
    GREEN,
];

/// The colour of contour line `k`.
fn contour_colour(k: usize) -> RGBColor {
    CONTOUR_COLOURS[k % CONTOUR_COLOURS.len()]
}

/// Font size (pixels) of legend texts.
const LEGEND_FONT: u32 = 13;
/// Height (pixels) of one legend row.
const LEGEND_ROW: u32 = 20;
/// Padding (pixels) around the legend strip and between its entries.
const LEGEND_PAD: u32 = 12;
/// Width (pixels) of a line's swatch in the legend.
const SWATCH: u32 = 26;

/// Where each legend entry goes: (row, x in pixels) per line, then one row per note, and the
/// strip's height (0 without entries).
struct LegendLayout {
    lines: Vec<(u32, u32)>,
    first_note_row: u32,
    height: u32,
}

/// The legend's layout in a strip `width` pixels wide: lines left to right as their text
/// widths allow, wrapping to new rows; each note on a row of its own.
fn legend_layout<DB: DrawingBackend>(
    root: &DrawingArea<DB, plotters::coord::Shift>,
    plan: &ContourPlan,
    width: u32,
) -> anyhow::Result<LegendLayout> {
    let font = TextStyle::from((FONT_FAMILY, LEGEND_FONT).into_font());
    let mut lines = Vec::with_capacity(plan.lines.len());
    let (mut row, mut x) = (0u32, LEGEND_PAD);
    for line in &plan.lines {
        let (w, _) = root
            .estimate_text_size(&line.label, &font)
            .map_err(|e| anyhow::anyhow!("cannot draw: {e:?}"))?;
        let entry = SWATCH + 6 + w;
        if x > LEGEND_PAD && x + entry + LEGEND_PAD > width {
            row += 1;
            x = LEGEND_PAD;
        }
        lines.push((row, x));
        x += entry + 2 * LEGEND_PAD;
    }
    let first_note_row = if plan.lines.is_empty() { 0 } else { row + 1 };
    let rows = first_note_row + plan.notes.len() as u32;
    let height = if rows == 0 {
        0
    } else {
        rows * LEGEND_ROW + 2 * LEGEND_PAD
    };
    Ok(LegendLayout {
        lines,
        first_note_row,
        height,
    })
}

/// Draw the legend of `plan` in its strip: a swatch of each line's colour (on a dark ground, so
/// white and yellow lines show) with its text, then the notes.
fn draw_legend<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    plan: &ContourPlan,
    layout: &LegendLayout,
) -> anyhow::Result<()>
where
    DB::ErrorType: 'static,
{
    let err = |e: DrawingAreaErrorKind<DB::ErrorType>| anyhow::anyhow!("cannot draw: {e:?}");
    if layout.height == 0 {
        return Ok(());
    }
    let top = |row: u32| (LEGEND_PAD + row * LEGEND_ROW) as i32;
    let font = (FONT_FAMILY, LEGEND_FONT).into_font().color(&BLACK);
    let dark = RGBColor(68, 68, 68);
    for (k, (line, &(row, x))) in plan.lines.iter().zip(&layout.lines).enumerate() {
        let (x, y) = (x as i32, top(row));
        area.draw(&Rectangle::new(
            [(x, y + 2), (x + SWATCH as i32, y + 14)],
            dark.filled(),
        ))
        .map_err(err)?;
        area.draw(&PathElement::new(
            vec![(x + 3, y + 8), (x + SWATCH as i32 - 3, y + 8)],
            contour_colour(k).stroke_width(2),
        ))
        .map_err(err)?;
        area.draw(&Text::new(
            line.label.clone(),
            (x + SWATCH as i32 + 6, y + 1),
            font.clone(),
        ))
        .map_err(err)?;
    }
    for (k, note) in plan.notes.iter().enumerate() {
        let y = top(layout.first_note_row + k as u32);
        area.draw(&Text::new(
            note.clone(),
            (LEGEND_PAD as i32, y + 1),
            font.clone(),
        ))
        .map_err(err)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    #[test]
    fn colour_bar_ticks_read_at_any_scale() {
        // Values near 2e-11 F read in pF; a log scale's ticks are the values, not exponents.
        // A linear bar reads as an axis: values near 2e-11 F in pF, the prefix in the caption.
        let (lo, hi) = (2.0e-11, 2.3e-11);
        assert_eq!(colour_bar_tick(2.1e-11, Scale::Linear, "F", lo, hi), "21");
        assert_eq!(
            colour_bar_tick(2.25e-11, Scale::Linear, "F", lo, hi),
            "22.5"
        );
        assert_eq!(colour_bar_caption(Scale::Linear, "F", lo, hi), "pF");
        assert_eq!(colour_bar_caption(Scale::Linear, "H", 7.9e-5, 8.4e-5), "µH");
        assert_eq!(
            colour_bar_tick(5.0, Scale::Log, "V/m", 3.0, 6.0),
            "100 kV/m"
        );
        assert_eq!(colour_bar_tick(-4.0, Scale::Log, "T", -6.0, -3.0), "100 µT");
        assert_eq!(
            colour_bar_tick(0.00123456, Scale::Linear, "", 0.0, 0.002),
            "0.0012346"
        );
        assert_eq!(
            colour_bar_caption(Scale::Log, "V/m", 3.0, 6.0),
            "V/m, log scale"
        );
    }

    use super::*;

    #[test]
    fn contour_of_a_radial_field_is_a_circle() {
        // f = 1 / r^2 on a grid; the level 1 line is the unit circle.
        let n = 81;
        let c: Vec<f64> = (0..n)
            .map(|i| -2.0 + 4.0 * i as f64 / (n - 1) as f64)
            .collect();
        let vals: Vec<f64> = (0..n * n)
            .map(|k| {
                let (x, y) = (c[k % n], c[k / n]);
                1.0 / (x * x + y * y)
            })
            .collect();
        let segs = contour_segments(&c, &c, &vals, 1.0, Scale::Log);
        assert!(segs.len() > 40);
        for ((x0, y0), (x1, y1)) in segs {
            for r in [x0.hypot(y0), x1.hypot(y1)] {
                // Log-linear interpolation of 1/r^2 on a 0.05 m grid: a few 1e-3 of radius.
                assert!((r - 1.0).abs() < 5e-3, "{r}");
            }
        }
    }

    #[test]
    fn svg_and_png_are_produced() {
        let u = [0.0, 1.0, 2.0];
        let v = [0.0, 1.0];
        let vals = [1.0, 2.0, f64::NAN, 3.0, 4.0, 5.0];
        let contours = [(2.5, "level 2.5".to_string())];
        let map = xz_map(&u, &v, &vals, "|E| (V/m)", &contours);
        let svg = String::from_utf8(heat_map_bytes(&map, true).unwrap()).unwrap();
        assert!(svg.starts_with("<svg"));
        assert!(svg.contains("level 2.5"));
        // The font travels inside the file: the data URL decodes to the shipped TrueType
        // bytes, and every label asks for that family first.
        use base64::Engine;
        let (_, after) = svg.split_once("url(data:font/ttf;base64,").unwrap();
        let encoded = &after[..after.find(')').unwrap()];
        let decoded = base64::engine::general_purpose::STANDARD
            .decode(encoded)
            .unwrap();
        assert_eq!(
            decoded,
            std::fs::read(concat!(
                env!("CARGO_MANIFEST_DIR"),
                "/cli/assets/DejaVuSans.ttf"
            ))
            .unwrap()
        );
        let families: Vec<&str> = svg
            .split("font-family=\"")
            .skip(1)
            .map(|rest| &rest[..rest.find('"').unwrap()])
            .collect();
        assert!(!families.is_empty());
        assert!(
            families.iter().all(|f| f.starts_with(SVG_FONT_FAMILY)),
            "{families:?}"
        );
        let png = heat_map_bytes(&map, false).unwrap();
        assert_eq!(&png[1..4], b"PNG");
    }

    #[test]
    fn line_plots_leave_gaps_at_missing_values() {
        let x = [0.0, 1.0, 2.0, 3.0, 4.0];
        let y = [1.0, 2.0, f64::NAN, 3.0, 2.5];
        let plot = LinePlot {
            x: &x,
            y: &y,
            x_axis: axis("h", "m"),
            y_axis: axis("k", ""),
            title: "k against h",
        };
        let svg = String::from_utf8(figure_bytes(&plot, true).unwrap()).unwrap();
        // Two runs (before and after the gap), one marker per finite value.
        let curves = svg
            .lines()
            .filter(|l| l.starts_with("<polyline") && l.contains("#1F5FA8"))
            .count();
        assert_eq!(curves, 2, "{svg}");
        assert_eq!(svg.matches("<circle").count(), 4);
        assert!(svg.contains("k against h"));
        assert_eq!(&figure_bytes(&plot, false).unwrap()[1..4], b"PNG");
    }

    /// An axis of a test figure.
    fn axis<'a>(name: &'a str, unit: &'a str) -> Axis<'a> {
        Axis { name, unit }
    }

    /// A log-scale heat map of |E| (V/m) on the x-z plane: the tests' fixture.
    fn xz_map<'a>(
        u: &'a [f64],
        v: &'a [f64],
        values: &'a [f64],
        title: &'a str,
        contours: &'a [(f64, String)],
    ) -> HeatMap<'a> {
        HeatMap {
            u,
            v,
            values,
            scale: Scale::Log,
            u_axis: Axis::metres("x"),
            v_axis: Axis::metres("z"),
            title,
            unit: "V/m",
            contours,
        }
    }

    /// The value of attribute `name` in an SVG tag's text.
    fn attr<'t>(tag: &'t str, name: &str) -> Option<&'t str> {
        let key = format!(" {name}=\"");
        let at = tag.find(&key)? + key.len();
        Some(&tag[at..at + tag[at..].find('"')?])
    }

    /// The texts of an SVG's `<text>` elements (plotters writes each on its own line).
    pub(crate) fn svg_texts(svg: &str) -> Vec<String> {
        svg_text_places(svg)
            .into_iter()
            .map(|(_, _, t)| t)
            .collect()
    }

    #[test]
    fn axes_read_in_the_prefix_of_their_largest_value() {
        // A plane 0.02 m to 0.3 m across reads in mm (the tables' SI-prefix rule); ticks are
        // round numbers of mm, not 0.09499999999999999.
        let u: Vec<f64> = (0..12).map(|k| 0.02 + 0.025 * k as f64).collect();
        let v = [0.0, 0.095, 0.19];
        let vals: Vec<f64> = (0..36).map(|k| 1.0 + k as f64).collect();
        let map = xz_map(&u, &v, &vals, "t", &[]);
        let texts = svg_texts(&String::from_utf8(heat_map_bytes(&map, true).unwrap()).unwrap());
        assert!(texts.iter().any(|t| t == "x (mm)"), "{texts:?}");
        assert!(texts.iter().any(|t| t == "z (mm)"), "{texts:?}");
        assert!(texts.iter().any(|t| t == "100"), "{texts:?}");
        let mut ticks = texts.iter().filter(|t| t.parse::<f64>().is_ok());
        assert!(
            ticks.clone().count() > 8 && ticks.all(|t| t.len() <= 3),
            "{texts:?}"
        );
        // An inductance near 80 µH reads in µH, a coupling (a pure number) as it is.
        let x = [0.1, 0.2, 0.3];
        let y = [7.9e-5, 8.1e-5, 8.4e-5];
        let plot = LinePlot {
            x: &x,
            y: &y,
            x_axis: axis("winding.b.radius", "m"),
            y_axis: axis("self_inductance.b", "H"),
            title: "L",
        };
        let texts = svg_texts(&String::from_utf8(figure_bytes(&plot, true).unwrap()).unwrap());
        assert!(
            texts.iter().any(|t| t == "self_inductance.b (µH)"),
            "{texts:?}"
        );
        assert!(
            texts.iter().any(|t| t == "winding.b.radius (mm)"),
            "{texts:?}"
        );
        // Ticks in µH, short: 79.5, not 7.95e-5 or 0.0000795.
        let ticks: Vec<f64> = texts.iter().filter_map(|t| t.parse().ok()).collect();
        assert!(
            ticks.iter().any(|&t| (79.0..=84.0).contains(&t)),
            "{texts:?}"
        );
        assert!(
            texts.iter().all(|t| t.len() < 40 && !t.contains("e-")),
            "{texts:?}"
        );
        let (s, caption) = axis_reading(axis("k", ""), 0.0, 0.3);
        assert_eq!((s, caption.as_str()), (1.0, "k"));
        let (s, caption) = axis_reading(axis("tilt", "deg"), 0.0, 0.001);
        assert_eq!((s, caption.as_str()), (1.0, "tilt (deg)"));
        let (s, caption) = axis_reading(axis("C", "F"), 1.5e-11, 2.2e-11);
        assert_eq!((s, caption.as_str()), (1e-12, "C (pF)"));
    }

    /// A field falling as 1/r^2 from the corner (0, 0): values 1 to 100 over the grid, so its
    /// log10 range is 2 decades and one colour shade is 2/256 of a decade.
    fn falling_field() -> (Vec<f64>, Vec<f64>, Vec<f64>) {
        let n = 41;
        let c: Vec<f64> = (0..n)
            .map(|i| 0.1 + 0.9 * i as f64 / (n - 1) as f64)
            .collect();
        let vals: Vec<f64> = (0..n * n)
            .map(|k| {
                let (x, y) = (c[k % n], c[k / n]);
                // 1 / (x^2 + y^2), scaled so the corner (0.1, 0.1) reads 100.
                2.0 / (x * x + y * y)
            })
            .collect();
        (c.clone(), c, vals)
    }

    #[test]
    fn coincident_levels_are_one_line_and_levels_outside_are_notes() {
        let (_, _, vals) = falling_field();
        let max = vals.iter().cloned().fold(f64::MIN, f64::max);
        let min = vals.iter().cloned().fold(f64::MAX, f64::min);
        // The rule stated in plan_contours, by hand: one shade is
        // log10(max / min) / 256 = 0.0039 decades here (a factor of 1.009).
        let shade = (max / min).log10() / 256.0;
        assert!((max - 100.0).abs() < 1e-12 && (min - 1.0).abs() < 1e-12);
        assert!((shade - 2.0 / 256.0).abs() < 1e-15);
        let contours = vec![
            (30.3, "B public: peak 30.3".to_string()),
            (5.0, "far: peak 5".to_string()),
            (30.3, "B workers: peak 30.3".to_string()),
            // 0.3 of a shade above 30.3: the same colour, the same line.
            (
                30.3 * 10f64.powf(0.3 * shade),
                "near: peak 30.3".to_string(),
            ),
            // 3 shades above: a line of its own.
            (
                30.3 * 10f64.powf(3.0 * shade),
                "apart: peak 30.9".to_string(),
            ),
            (1e4, "spark: peak 10 k".to_string()),
            (1e-3, "tiny: peak 0.001".to_string()),
        ];
        let plan = plan_contours(&vals, &contours, Scale::Log, "V/m");
        let labels: Vec<&str> = plan.lines.iter().map(|l| l.label.as_str()).collect();
        assert_eq!(
            labels,
            [
                "far: peak 5",
                "B public: peak 30.3; B workers: peak 30.3; near: peak 30.3",
                "apart: peak 30.9"
            ]
        );
        assert_eq!(plan.lines[1].level, 30.3);
        assert_eq!(
            plan.notes,
            [
                format!(
                    "tiny: peak 0.001, below this map's minimum {}, not drawn",
                    crate::output::si(min, "V/m", 3)
                ),
                format!(
                    "spark: peak 10 k, above this map's maximum {}, not drawn",
                    crate::output::si(max, "V/m", 3)
                ),
            ]
        );
        // Equal levels are one line on a flat map too, where no shade can be told apart.
        let flat = plan_contours(
            &[2.0; 4],
            &[(2.0, "a".into()), (2.0, "b".into()), (2.5, "c".into())],
            Scale::Linear,
            "",
        );
        assert_eq!(flat.lines.len(), 1);
        assert_eq!(flat.lines[0].label, "a; b");
        assert_eq!(flat.notes, ["c, above this map's maximum 2, not drawn"]);
    }

    /// The box (x0, y0, x1, y1) of every `<rect>` of an SVG with its fill, in document order.
    fn svg_rects(svg: &str) -> Vec<([f64; 4], String)> {
        svg.split("<rect")
            .skip(1)
            .filter_map(|t| {
                let tag = &t[..t.find('>')?];
                let n = |k: &str| attr(tag, k)?.parse::<f64>().ok();
                let (x, y, w, h) = (n("x")?, n("y")?, n("width")?, n("height")?);
                let fill = attr(tag, "fill").unwrap_or_default().to_string();
                Some(([x, y, x + w, y + h], fill))
            })
            .collect()
    }

    /// The top-left corner (x, y) and text of every `<text>` (plotters anchors text at its top
    /// left unless told otherwise, `dy="0.76em"`).
    fn svg_text_places(svg: &str) -> Vec<(f64, f64, String)> {
        svg.split("<text")
            .skip(1)
            .filter_map(|t| {
                let tag = &t[..t.find('>')?];
                let num = |k: &str| -> Option<f64> { attr(tag, k)?.parse().ok() };
                let body = t[t.find('>')? + 1..t.find("</text>")?]
                    .replace("&apos;", "'")
                    .replace("&#39;", "'")
                    .replace("&quot;", "\"")
                    .replace("&lt;", "<")
                    .replace("&gt;", ">")
                    .replace("&amp;", "&");
                Some((num("x")?, num("y")?, body.trim().to_string()))
            })
            .collect()
    }

    #[test]
    fn the_legend_lies_outside_the_data_area() {
        // Geometry read back from the SVG: the data area is the box of the heat map's cells
        // (the rects drawn after the background, one per grid value); every legend text and
        // swatch must lie wholly below it, where it covers no data.
        let (u, v, vals) = falling_field();
        let contours = vec![
            (30.3, "B public: peak 30.3 V/m".to_string()),
            (30.3, "B workers: peak 30.3 V/m".to_string()),
            (5.0, "far: peak 5 V/m".to_string()),
            (1e4, "spark: peak 10 kV/m".to_string()),
        ];
        let map = xz_map(&u, &v, &vals, "|E|", &contours);
        let svg = String::from_utf8(heat_map_bytes(&map, true).unwrap()).unwrap();
        let rects = svg_rects(&svg);
        let cells = &rects[1..=u.len() * v.len()];
        let data = cells
            .iter()
            .fold([f64::MAX, f64::MAX, f64::MIN, f64::MIN], |b, (r, _)| {
                [
                    b[0].min(r[0]),
                    b[1].min(r[1]),
                    b[2].max(r[2]),
                    b[3].max(r[3]),
                ]
            });
        // The cells fill the chart left of the colour bar (sanity of the reading above).
        assert!(
            data[0] > 40.0 && data[2] <= 780.0 && data[1] > 20.0,
            "{data:?}"
        );
        let plan = plan_contours(&vals, &contours, Scale::Log, "V/m");
        assert_eq!(plan.lines.len(), 2);
        assert_eq!(plan.notes.len(), 1);
        let legend_texts: Vec<&String> = plan
            .lines
            .iter()
            .map(|l| &l.label)
            .chain(&plan.notes)
            .collect();
        let places = svg_text_places(&svg);
        for want in &legend_texts {
            let found: Vec<_> = places.iter().filter(|(_, _, t)| t == *want).collect();
            assert_eq!(found.len(), 1, "{want}: {found:?}");
            let (x, y, _) = found[0];
            assert!(
                *y >= data[3],
                "legend text {want:?} at y = {y} over the data ({data:?})"
            );
            assert!(*x >= 0.0 && *y < H as f64);
        }
        // The merged line is named once, with both thresholds.
        assert!(
            places
                .iter()
                .any(|(_, _, t)| t == "B public: peak 30.3 V/m; B workers: peak 30.3 V/m")
        );
        let swatches: Vec<_> = rects.iter().filter(|(_, f)| f == "#444444").collect();
        assert_eq!(swatches.len(), plan.lines.len());
        for (r, _) in swatches {
            assert!(
                r[1] >= data[3] && r[3] <= H as f64,
                "swatch {r:?} over {data:?}"
            );
        }
    }

    #[test]
    fn linear_contours_interpolate_the_values_themselves() {
        // f = x on [0, 1] x [0, 1]: the level 0.25 line is x = 0.25 exactly on a linear scale.
        let c = [0.0, 0.5, 1.0];
        let vals: Vec<f64> = (0..9).map(|k| c[k % 3]).collect();
        let segs = contour_segments(&c, &c, &vals, 0.25, Scale::Linear);
        assert_eq!(segs.len(), 2);
        for ((x0, _), (x1, _)) in segs {
            assert!((x0 - 0.25).abs() < 1e-15 && (x1 - 0.25).abs() < 1e-15);
        }
    }
}
