//! `--plot out.svg` for sweeps: the first metric against the parameter of a one-axis grid, or a
//! heat map with contour lines over a two-axis grid. Plain SVG written by hand (no fonts or
//! system libraries needed; any browser shows it), written atomically.

use crate::BadInput;
use std::fmt::Write as _;
use std::path::Path;

const W: f64 = 640.0;
const H: f64 = 480.0;
const LEFT: f64 = 90.0;
const RIGHT: f64 = 120.0;
const TOP: f64 = 30.0;
const BOTTOM: f64 = 60.0;

/// Checks made before the sweep starts: an .svg name and a one- or two-axis grid.
pub fn check(plot: &Path, grid_counts: Option<&[usize]>) -> anyhow::Result<()> {
    if plot.extension().and_then(|e| e.to_str()) != Some("svg") {
        return Err(BadInput(format!(
            "--plot {}: only .svg plots are written (PNG is not supported yet)",
            plot.display()
        ))
        .into());
    }
    match grid_counts {
        Some(c) if c.len() == 1 || c.len() == 2 => Ok(()),
        _ => Err(BadInput(format!(
            "--plot {}: plots need a grid of one or two axes (no groups, no [sample])",
            plot.display()
        ))
        .into()),
    }
}

/// `x` as a short label.
fn label(x: f64) -> String {
    format!("{x:.4e}")
}

fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
}

/// Line plot of `ys` (NaN: a gap) against `xs`.
pub fn line(xs: &[f64], ys: &[f64], x_name: &str, y_name: &str) -> String {
    let (x0, x1) = range(xs);
    let (y0, y1) = range(ys);
    let px = |x: f64| LEFT + (x - x0) / (x1 - x0).max(f64::MIN_POSITIVE) * (W - LEFT - RIGHT);
    let py = |y: f64| H - BOTTOM - (y - y0) / (y1 - y0).max(f64::MIN_POSITIVE) * (H - TOP - BOTTOM);
    let mut s = header(x_name, y_name, (x0, x1), (y0, y1));
    let mut path = String::new();
    let mut pen_up = true;
    for (&x, &y) in xs.iter().zip(ys) {
        if !y.is_finite() {
            pen_up = true;
            continue;
        }
        let _ = write!(
            path,
            "{}{:.2},{:.2} ",
            if pen_up { "M" } else { "L" },
            px(x),
            py(y)
        );
        pen_up = false;
    }
    let _ = writeln!(
        s,
        "<path d=\"{path}\" fill=\"none\" stroke=\"#1f5fa8\" stroke-width=\"2\"/>"
    );
    s.push_str("</svg>\n");
    s
}

/// Heat map of `z[i][j]` (NaN: grey) over `xs[i]` x `ys[j]` with 8 contour lines.
pub fn heat(xs: &[f64], ys: &[f64], z: &[Vec<f64>], names: [&str; 3]) -> String {
    let (x0, x1) = range(xs);
    let (y0, y1) = range(ys);
    let flat: Vec<f64> = z.iter().flatten().copied().collect();
    let (z0, z1) = range(&flat);
    let px = |x: f64| LEFT + (x - x0) / (x1 - x0).max(f64::MIN_POSITIVE) * (W - LEFT - RIGHT);
    let py = |y: f64| H - BOTTOM - (y - y0) / (y1 - y0).max(f64::MIN_POSITIVE) * (H - TOP - BOTTOM);
    let mut s = header(names[0], names[1], (x0, x1), (y0, y1));
    let (nx, ny) = (xs.len(), ys.len());
    // Each sample is drawn as the cell between the midpoints to its neighbours.
    let edge = |v: &[f64], k: usize| -> (f64, f64) {
        let lo = if k == 0 {
            v[0]
        } else {
            0.5 * (v[k - 1] + v[k])
        };
        let hi = if k + 1 == v.len() {
            v[k]
        } else {
            0.5 * (v[k] + v[k + 1])
        };
        (lo, hi)
    };
    for (i, column) in z.iter().enumerate().take(nx) {
        for (j, &v) in column.iter().enumerate().take(ny) {
            let (xa, xb) = edge(xs, i);
            let (ya, yb) = edge(ys, j);
            let colour = if v.is_finite() {
                ramp((v - z0) / (z1 - z0).max(f64::MIN_POSITIVE))
            } else {
                "#bbbbbb".to_string()
            };
            let _ = writeln!(
                s,
                "<rect x=\"{:.2}\" y=\"{:.2}\" width=\"{:.2}\" height=\"{:.2}\" fill=\"{colour}\"/>",
                px(xa),
                py(yb),
                (px(xb) - px(xa)).abs() + 0.5,
                (py(ya) - py(yb)).abs() + 0.5
            );
        }
    }
    // Contours by marching squares (W. E. Lorensen, H. E. Cline, "Marching cubes", SIGGRAPH
    // 1987, in two dimensions): in each cell, the crossings of a level on its edges, joined.
    for l in 1..8 {
        let level = z0 + (z1 - z0) * l as f64 / 8.0;
        let mut d = String::new();
        for i in 0..nx.saturating_sub(1) {
            for j in 0..ny.saturating_sub(1) {
                let c = [
                    (xs[i], ys[j], z[i][j]),
                    (xs[i + 1], ys[j], z[i + 1][j]),
                    (xs[i + 1], ys[j + 1], z[i + 1][j + 1]),
                    (xs[i], ys[j + 1], z[i][j + 1]),
                ];
                if c.iter().any(|p| !p.2.is_finite()) {
                    continue;
                }
                let mut pts = Vec::new();
                for k in 0..4 {
                    let (a, b) = (c[k], c[(k + 1) % 4]);
                    if (a.2 < level) != (b.2 < level) {
                        let t = (level - a.2) / (b.2 - a.2);
                        pts.push((a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1)));
                    }
                }
                for pair in pts.chunks(2) {
                    if let [p, q] = pair {
                        let _ = write!(
                            d,
                            "M{:.2},{:.2} L{:.2},{:.2} ",
                            px(p.0),
                            py(p.1),
                            px(q.0),
                            py(q.1)
                        );
                    }
                }
            }
        }
        let _ = writeln!(
            s,
            "<path d=\"{d}\" fill=\"none\" stroke=\"black\" stroke-width=\"0.8\"/>"
        );
    }
    // Colour bar.
    for k in 0..50 {
        let t = k as f64 / 49.0;
        let y = H - BOTTOM - t * (H - TOP - BOTTOM);
        let _ = writeln!(
            s,
            "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"16\" height=\"{:.1}\" fill=\"{}\"/>",
            W - RIGHT + 20.0,
            y - (H - TOP - BOTTOM) / 49.0,
            (H - TOP - BOTTOM) / 49.0 + 0.5,
            ramp(t)
        );
    }
    let _ = writeln!(
        s,
        "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"11\">{}</text>\n<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"11\">{}</text>\n<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"11\" text-anchor=\"end\">{}</text>",
        W - RIGHT + 40.0,
        TOP + 10.0,
        label(z1),
        W - RIGHT + 40.0,
        H - BOTTOM,
        label(z0),
        W - 5.0,
        TOP - 10.0,
        esc(names[2])
    );
    s.push_str("</svg>\n");
    s
}

fn range(v: &[f64]) -> (f64, f64) {
    let lo = v
        .iter()
        .copied()
        .filter(|x| x.is_finite())
        .fold(f64::INFINITY, f64::min);
    let hi = v
        .iter()
        .copied()
        .filter(|x| x.is_finite())
        .fold(f64::NEG_INFINITY, f64::max);
    if lo.is_finite() { (lo, hi) } else { (0.0, 1.0) }
}

/// Blue-white-red ramp for t in [0, 1] (a diverging scheme; common practice, no source).
fn ramp(t: f64) -> String {
    let t = t.clamp(0.0, 1.0);
    let (r, g, b) = if t < 0.5 {
        let u = t / 0.5;
        (40.0 + 215.0 * u, 80.0 + 175.0 * u, 200.0 + 55.0 * u)
    } else {
        let u = (t - 0.5) / 0.5;
        (255.0 - 35.0 * u, 255.0 - 205.0 * u, 255.0 - 215.0 * u)
    };
    format!("#{:02x}{:02x}{:02x}", r as u8, g as u8, b as u8)
}

fn header(x_name: &str, y_name: &str, xr: (f64, f64), yr: (f64, f64)) -> String {
    let mut s = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{W}\" height=\"{H}\" \
         font-family=\"sans-serif\">\n<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n"
    );
    let _ = writeln!(
        s,
        "<rect x=\"{LEFT}\" y=\"{TOP}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"black\"/>",
        W - LEFT - RIGHT,
        H - TOP - BOTTOM
    );
    let _ = writeln!(
        s,
        "<text x=\"{LEFT}\" y=\"{}\" font-size=\"11\">{}</text>\n<text x=\"{}\" y=\"{}\" font-size=\"11\" text-anchor=\"end\">{}</text>\n<text x=\"{}\" y=\"{}\" font-size=\"13\" text-anchor=\"middle\">{}</text>",
        H - BOTTOM + 16.0,
        label(xr.0),
        W - RIGHT,
        H - BOTTOM + 16.0,
        label(xr.1),
        0.5 * (LEFT + W - RIGHT),
        H - 15.0,
        esc(x_name)
    );
    let _ = writeln!(
        s,
        "<text x=\"{}\" y=\"{}\" font-size=\"11\" text-anchor=\"end\">{}</text>\n<text x=\"{}\" y=\"{}\" font-size=\"11\" text-anchor=\"end\">{}</text>\n<text x=\"20\" y=\"{}\" font-size=\"13\" text-anchor=\"middle\" transform=\"rotate(-90 20 {})\">{}</text>",
        LEFT - 5.0,
        H - BOTTOM,
        label(yr.0),
        LEFT - 5.0,
        TOP + 10.0,
        label(yr.1),
        0.5 * (TOP + H - BOTTOM),
        0.5 * (TOP + H - BOTTOM),
        esc(y_name)
    );
    s
}

/// The plot of a finished sweep from its rows: `values[p]` = the first metric at point p.
pub fn write(
    plot: &Path,
    axis_names: &[&str],
    grids: &[Vec<f64>],
    metric_name: &str,
    values: &[f64],
) -> anyhow::Result<()> {
    let svg = if grids.len() == 1 {
        line(&grids[0], values, axis_names[0], metric_name)
    } else {
        let (nx, ny) = (grids[0].len(), grids[1].len());
        // Point p = i * ny + j (first axis slowest).
        let z: Vec<Vec<f64>> = (0..nx)
            .map(|i| (0..ny).map(|j| values[i * ny + j]).collect())
            .collect();
        heat(
            &grids[0],
            &grids[1],
            &z,
            [axis_names[0], axis_names[1], metric_name],
        )
    };
    crate::output::write_atomic(plot, svg.as_bytes())
}
