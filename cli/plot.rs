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
    if !PREFIXED_UNITS.contains(&axis.unit) {
        return (1.0, format!("{} ({})", axis.name, axis.unit));
    }
    let largest = [lo, hi]
        .into_iter()
        .filter(|x| x.is_finite())
        .fold(0.0f64, |m, x| m.max(x.abs()));
    let (scale, prefix) = coilfield_solver::numtext::si_prefix(largest, 3);
    (scale, format!("{} ({prefix}{})", axis.name, axis.unit))
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
        let mut chart = ChartBuilder::on(root)
            .caption(self.title, (FONT_FAMILY, 20))
            .margin(16)
            .x_label_area_size(44)
            .y_label_area_size(90)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(err)?;
        let x_tick = |x: &f64| coilfield_solver::numtext::axis_tick(*x, x1 - x0);
        let y_tick = |y: &f64| coilfield_solver::numtext::axis_tick(*y, y1 - y0);
        chart
            .configure_mesh()
            .x_desc(x_caption)
            .y_desc(y_caption)
            .x_label_formatter(&x_tick)
            .y_label_formatter(&y_tick)
            .label_style((FONT_FAMILY, 14))
            .draw()
            .map_err(err)?;
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
    let (plot_area, bar_area) = root.split_horizontally(780);
    // Coordinates as the axes read them (mm for a plane a few decimetres across).
    let (su, u_caption) = axis_reading(map.u_axis, map.u[0], map.u[nu - 1]);
    let (sv, v_caption) = axis_reading(map.v_axis, map.v[0], map.v[nv - 1]);
    let u: Vec<f64> = map.u.iter().map(|x| x / su).collect();
    let v: Vec<f64> = map.v.iter().map(|x| x / sv).collect();
    let (u0, u1) = (u[0], u[nu - 1]);
    let (v0, v1) = (v[0], v[nv - 1]);
    let mut chart = ChartBuilder::on(&plot_area)
        .caption(map.title, (FONT_FAMILY, 20))
        .margin(12)
        .x_label_area_size(44)
        .y_label_area_size(70)
        .build_cartesian_2d(u0..u1, v0..v1)
        .map_err(err)?;
    let u_tick = |x: &f64| coilfield_solver::numtext::axis_tick(*x, u1 - u0);
    let v_tick = |y: &f64| coilfield_solver::numtext::axis_tick(*y, v1 - v0);
    chart
        .configure_mesh()
        .disable_mesh()
        .x_desc(u_caption)
        .y_desc(v_caption)
        .x_label_formatter(&u_tick)
        .y_label_formatter(&v_tick)
        .label_style((FONT_FAMILY, 14))
        .draw()
        .map_err(err)?;
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
    let palette = [
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
    for (k, (level, name)) in map.contours.iter().enumerate() {
        let colour = palette[k % palette.len()];
        let segs = contour_segments(&u, &v, map.values, *level, map.scale);
        chart
            .draw_series(
                segs.iter()
                    .map(|&(a, b)| PathElement::new(vec![a, b], colour.stroke_width(2))),
            )
            .map_err(err)?
            .label(name.clone())
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2))
            });
    }
    if !map.contours.is_empty() {
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperLeft)
            .background_style(WHITE.mix(0.8))
            .border_style(BLACK)
            .label_font((FONT_FAMILY, 13))
            .draw()
            .map_err(err)?;
    }
    // Colour bar: the value on its scale.
    let mut bar = ChartBuilder::on(&bar_area)
        .margin_top(44)
        .margin_bottom(52)
        .margin_right(8)
        .y_label_area_size(58)
        .caption(colour_bar_caption(map.scale, map.unit), (FONT_FAMILY, 14))
        .build_cartesian_2d(0.0..1.0, lo..hi)
        .map_err(err)?;
    let tick = |y: &f64| colour_bar_tick(*y, map.scale, map.unit);
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

/// The colour bar's caption: the unit and the scale ("V/m, log scale").
fn colour_bar_caption(scale: Scale, unit: &str) -> String {
    let unit = if unit.is_empty() { "value" } else { unit };
    match scale {
        Scale::Log => format!("{unit}, log scale"),
        Scale::Linear => unit.to_string(),
    }
}

/// A colour-bar tick: the value (10^y on a log scale) with an SI prefix and the unit, readable
/// at any scale (2e-11 F reads "20.0 pF", not "0.0").
fn colour_bar_tick(y: f64, scale: Scale, unit: &str) -> String {
    let v = match scale {
        Scale::Log => 10f64.powf(y),
        Scale::Linear => y,
    };
    if unit.is_empty() {
        // A pure number: three significant digits in the shortest form.
        let d = 2;
        return coilfield_solver::numtext::shortest(format!("{v:.d$e}").parse().unwrap_or(v));
    }
    crate::output::si(v, unit, 3)
}

#[cfg(test)]
mod tests {
    #[test]
    fn colour_bar_ticks_read_at_any_scale() {
        // Values near 2e-11 F read in pF; a log scale's ticks are the values, not exponents.
        assert_eq!(colour_bar_tick(2.1e-11, Scale::Linear, "F"), "21.0 pF");
        assert_eq!(colour_bar_tick(2.2e-11, Scale::Linear, "F"), "22.0 pF");
        assert_eq!(colour_bar_tick(5.0, Scale::Log, "V/m"), "100 kV/m");
        assert_eq!(colour_bar_tick(-4.0, Scale::Log, "T"), "100 µT");
        assert_eq!(colour_bar_tick(0.00123456, Scale::Linear, ""), "0.00123");
        assert_eq!(colour_bar_caption(Scale::Log, "V/m"), "V/m, log scale");
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
        let map = HeatMap {
            u: &u,
            v: &v,
            values: &vals,
            scale: Scale::Log,
            u_axis: Axis::metres("x"),
            v_axis: Axis::metres("z"),
            title: "|E| (V/m)",
            unit: "V/m",
            contours: &contours,
        };
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
            x_axis: Axis {
                name: "h",
                unit: "m",
            },
            y_axis: Axis {
                name: "k",
                unit: "",
            },
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

    /// The texts of an SVG's `<text>` elements (plotters writes each on its own line).
    pub(crate) fn svg_texts(svg: &str) -> Vec<String> {
        svg.split("<text")
            .skip(1)
            .filter_map(|t| {
                let body = &t[t.find('>')? + 1..t.find("</text>")?];
                Some(body.trim().to_string())
            })
            .collect()
    }

    #[test]
    fn axes_read_in_the_prefix_of_their_largest_value() {
        // A plane 0.02 m to 0.3 m across reads in mm (the tables' SI-prefix rule); ticks are
        // round numbers of mm, not 0.09499999999999999.
        let u: Vec<f64> = (0..12).map(|k| 0.02 + 0.025 * k as f64).collect();
        let v = [0.0, 0.095, 0.19];
        let vals: Vec<f64> = (0..36).map(|k| 1.0 + k as f64).collect();
        let map = HeatMap {
            u: &u,
            v: &v,
            values: &vals,
            scale: Scale::Log,
            u_axis: Axis::metres("x"),
            v_axis: Axis::metres("z"),
            title: "t",
            unit: "V/m",
            contours: &[],
        };
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
            x_axis: Axis {
                name: "winding.b.radius",
                unit: "m",
            },
            y_axis: Axis {
                name: "self_inductance.b",
                unit: "H",
            },
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
        let (s, caption) = axis_reading(
            Axis {
                name: "k",
                unit: "",
            },
            0.0,
            0.3,
        );
        assert_eq!((s, caption.as_str()), (1.0, "k"));
        let (s, caption) = axis_reading(
            Axis {
                name: "tilt",
                unit: "deg",
            },
            0.0,
            0.001,
        );
        assert_eq!((s, caption.as_str()), (1.0, "tilt (deg)"));
        let (s, caption) = axis_reading(
            Axis {
                name: "C",
                unit: "F",
            },
            1.5e-11,
            2.2e-11,
        );
        assert_eq!((s, caption.as_str()), (1e-12, "C (pF)"));
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
