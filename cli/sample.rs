//! Where fields are sampled: `--at x,y,z` points, a CSV of points, a plane or a box grid, and
//! the memory limit on grids.

use crate::BadInput;
use nalgebra::Point3;
use std::path::Path;

/// Most grid points one `map` may ask for. Each point holds its position, E, B and two
/// magnitudes in f64 plus the VTK copies: about 200 bytes, so the limit is near 0.8 GB, a third
/// of what a 2-core, 24 GB build machine can spare while other work runs.
pub const MAX_GRID_POINTS: usize = 4_000_000;

/// Largest magnitude of a grid coordinate (`--extent`, `--offset`, `--box`, m): 1000 km, ten
/// times a design's own bound ([`coilfield_geometry::limits::MAX_COORDINATE_M`]). Beyond it a
/// grid says nothing about a coil, and its spacing and the plot's axis ticks overflow (an extent
/// of +-1e307 m never finished).
pub const MAX_GRID_COORDINATE_M: f64 = 1e6;

/// Bytes held per grid point (see [`MAX_GRID_POINTS`]).
pub const BYTES_PER_GRID_POINT: usize = 200;

/// Parse `n` comma-separated finite numbers for option `key`.
pub fn numbers(key: &str, text: &str, n: usize) -> Result<Vec<f64>, BadInput> {
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    if parts.len() != n {
        return Err(BadInput(format!(
            "{key}: expected {n} comma-separated numbers, got {:?}",
            text
        )));
    }
    parts
        .iter()
        .map(|p| {
            p.parse::<f64>()
                .ok()
                .filter(|x| x.is_finite())
                .ok_or_else(|| {
                    BadInput(format!("{key}: {p:?} is not a finite number (in {text:?})"))
                })
        })
        .collect()
}

/// A point `x,y,z` in metres for option `key`.
pub fn point(key: &str, text: &str) -> Result<Point3<f64>, BadInput> {
    let v = numbers(key, text, 3)?;
    Ok(Point3::new(v[0], v[1], v[2]))
}

/// Points from a CSV file with the header `x,y,z` (metres), one point a row.
pub fn points_csv(path: &Path) -> Result<Vec<Point3<f64>>, BadInput> {
    let label = path.display();
    // Through the one reader of input files: a regular file, size-limited before reading.
    let text =
        crate::load::text(path, "points file").map_err(|e| BadInput(format!("--points {e}")))?;
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let header = reader
        .headers()
        .map_err(|e| BadInput(format!("--points {label}: cannot read the header: {e}")))?
        .clone();
    let cols: Vec<&str> = header.iter().collect();
    if cols != ["x", "y", "z"] {
        return Err(BadInput(format!(
            "--points {label}: the header must be x,y,z (metres), got {}",
            cols.join(",")
        )));
    }
    let mut out = Vec::new();
    for (row, rec) in reader.records().enumerate() {
        let line = row + 2;
        let rec = rec.map_err(|e| BadInput(format!("--points {label}: line {line}: {e}")))?;
        let mut v = [0.0; 3];
        for (k, name) in ["x", "y", "z"].iter().enumerate() {
            let cell = rec.get(k).unwrap_or("");
            v[k] = cell.parse::<f64>().ok().filter(|x| x.is_finite()).ok_or_else(|| {
                BadInput(format!(
                    "--points {label}: line {line}, column {name}: \"{}\" is not a finite number of metres",
                    coilfield_geometry::error::elide(cell)
                ))
            })?;
        }
        out.push(Point3::new(v[0], v[1], v[2]));
    }
    if out.is_empty() {
        return Err(BadInput(format!(
            "--points {label}: no points after the header"
        )));
    }
    Ok(out)
}

/// A plane of a grid.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Plane {
    /// u = x, v = z, at y = offset.
    Xz,
    /// u = y, v = z, at x = offset.
    Yz,
    /// u = x, v = y, at z = offset.
    Xy,
}

impl Plane {
    /// The coordinates (u, v) the plane's axes show (both in m).
    pub fn axis_names(self) -> (&'static str, &'static str) {
        match self {
            Plane::Xz => ("x", "z"),
            Plane::Yz => ("y", "z"),
            Plane::Xy => ("x", "y"),
        }
    }
}

/// A rectilinear grid: coordinate lines in metres; points run x fastest, then y, then z.
#[derive(Debug, Clone, PartialEq)]
pub struct Grid {
    /// x coordinates (m).
    pub xs_m: Vec<f64>,
    /// y coordinates (m).
    pub ys_m: Vec<f64>,
    /// z coordinates (m).
    pub zs_m: Vec<f64>,
    /// The plane, for a plane grid.
    pub plane: Option<Plane>,
}

impl Grid {
    /// Number of points.
    pub fn len(&self) -> usize {
        self.xs_m.len() * self.ys_m.len() * self.zs_m.len()
    }

    /// All points, x fastest.
    pub fn points(&self) -> Vec<Point3<f64>> {
        let mut out = Vec::with_capacity(self.len());
        for &z in &self.zs_m {
            for &y in &self.ys_m {
                for &x in &self.xs_m {
                    out.push(Point3::new(x, y, z));
                }
            }
        }
        out
    }

    /// The in-plane coordinates (u, v) of a plane grid.
    pub fn plane_axes(&self) -> Option<(&[f64], &[f64])> {
        Some(match self.plane? {
            Plane::Xz => (&self.xs_m, &self.zs_m),
            Plane::Yz => (&self.ys_m, &self.zs_m),
            Plane::Xy => (&self.xs_m, &self.ys_m),
        })
    }
}

/// `n` coordinates from `a` to `b` (m) by the sweep axes' rule
/// ([`coilfield_geometry::file::sweep::grid_value`]): the ends as given, the values between
/// snapped to the short decimal the user meant (0.32, not 0.31999999999999995), so the VTK
/// coordinates, the JSON points and the plot ticks print that decimal and the field is computed
/// there. One coordinate is the middle of the range.
pub(crate) fn linspace(a: f64, b: f64, n: usize) -> Vec<f64> {
    if n == 1 {
        return vec![coilfield_geometry::file::sweep::snap_to_short_decimal(
            0.5 * (a + b),
        )];
    }
    (0..n)
        .map(|i| coilfield_geometry::file::sweep::grid_value(a, b, i, n, false))
        .collect()
}

fn counts(key: &str, text: &str, n: usize) -> Result<Vec<usize>, BadInput> {
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    if parts.len() != n {
        return Err(BadInput(format!(
            "{key}: expected {n} comma-separated whole numbers, got {text:?}"
        )));
    }
    parts
        .iter()
        .map(|p| {
            p.parse::<usize>().ok().filter(|&k| k >= 2).ok_or_else(|| {
                BadInput(format!(
                    "{key}: {p:?} must be a whole number of points, at least 2"
                ))
            })
        })
        .collect()
}

fn check_size(sizes: &[usize]) -> Result<(), BadInput> {
    let total = sizes
        .iter()
        .try_fold(1usize, |acc, &k| acc.checked_mul(k))
        .unwrap_or(usize::MAX);
    if total > MAX_GRID_POINTS {
        return Err(BadInput(format!(
            "--resolution: the grid asks for {total} points (about {} MB), beyond the limit of {MAX_GRID_POINTS} points (about {} MB); use a coarser resolution or a smaller extent",
            total.saturating_mul(BYTES_PER_GRID_POINT) / 1_000_000,
            MAX_GRID_POINTS * BYTES_PER_GRID_POINT / 1_000_000
        )));
    }
    Ok(())
}

/// Every value of `v` within [`MAX_GRID_COORDINATE_M`].
fn within_grid_bound(key: &str, v: &[f64]) -> Result<(), BadInput> {
    match v.iter().find(|x| x.abs() > MAX_GRID_COORDINATE_M) {
        Some(x) => Err(BadInput(format!(
            "{key}: {x:e} m is beyond the grid's bound of {MAX_GRID_COORDINATE_M:e} m from the \
             origin"
        ))),
        None => Ok(()),
    }
}

fn ordered(key: &str, a: f64, b: f64) -> Result<(), BadInput> {
    if a < b {
        Ok(())
    } else {
        Err(BadInput(format!(
            "{key}: each range must increase (got {a} to {b} m)"
        )))
    }
}

/// A plane grid: `extent` = `U0,U1,V0,V1` (m), `resolution` = `NU,NV`.
pub fn plane_grid(
    plane: Plane,
    offset_m: f64,
    extent: &str,
    resolution: &str,
) -> Result<Grid, BadInput> {
    if !offset_m.is_finite() {
        return Err(BadInput(
            "--offset: must be a finite number of metres".into(),
        ));
    }
    within_grid_bound("--offset", &[offset_m])?;
    let e = numbers("--extent", extent, 4)?;
    within_grid_bound("--extent", &e)?;
    ordered("--extent", e[0], e[1])?;
    ordered("--extent", e[2], e[3])?;
    let n = counts("--resolution", resolution, 2)?;
    check_size(&n)?;
    let u = linspace(e[0], e[1], n[0]);
    let v = linspace(e[2], e[3], n[1]);
    let w = vec![offset_m];
    let (xs_m, ys_m, zs_m) = match plane {
        Plane::Xz => (u, w, v),
        Plane::Yz => (w, u, v),
        Plane::Xy => (u, v, w),
    };
    Ok(Grid {
        xs_m,
        ys_m,
        zs_m,
        plane: Some(plane),
    })
}

/// A box grid: `bounds` = `X0,X1,Y0,Y1,Z0,Z1` (m), `resolution` = `NX,NY,NZ`.
pub fn box_grid(bounds: &str, resolution: &str) -> Result<Grid, BadInput> {
    let b = numbers("--box", bounds, 6)?;
    within_grid_bound("--box", &b)?;
    for k in 0..3 {
        ordered("--box", b[2 * k], b[2 * k + 1])?;
    }
    let n = counts("--resolution", resolution, 3)?;
    check_size(&n)?;
    Ok(Grid {
        xs_m: linspace(b[0], b[1], n[0]),
        ys_m: linspace(b[2], b[3], n[1]),
        zs_m: linspace(b[4], b[5], n[2]),
        plane: None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn plane_grid_orders_points_x_fastest() {
        let g = plane_grid(Plane::Xz, 0.5, "0,1,2,3", "3,2").unwrap();
        assert_eq!(g.len(), 6);
        let p = g.points();
        assert_eq!(p[1], Point3::new(0.5, 0.5, 2.0));
        assert_eq!(p[3], Point3::new(0.0, 0.5, 3.0));
    }

    /// The exact decimal `(a_c * (n - 1 - i) + b_c * i) / (n - 1)` hundredths, as text, for
    /// ends `a_c` and `b_c` in hundredths of a metre and `n - 1` dividing their difference:
    /// integer arithmetic, independent of the floating-point path the grid takes.
    fn exact_hundredths(a_c: i64, b_c: i64, i: i64, n: i64) -> f64 {
        let h = (a_c * (n - 1 - i) + b_c * i) / (n - 1);
        assert_eq!((a_c * (n - 1 - i) + b_c * i) % (n - 1), 0);
        let sign = if h < 0 { "-" } else { "" };
        format!("{sign}{}.{:02}", h.abs() / 100, h.abs() % 100)
            .parse()
            .unwrap()
    }

    #[test]
    fn grid_coordinates_are_the_decimals_the_range_names() {
        // -0.2 m to 0.44 m in 17 points is every 0.04 m; in binary floating point the plain
        // interpolation gives 0.31999999999999995-like values (common practice, no source:
        // IEEE 754 rounding). The grid holds the decimals themselves, and the VTK file, the
        // JSON and the ticks print them.
        for (a_c, b_c, n) in [(-20, 44, 17), (0, 96, 13), (0, 40, 6), (-30, 30, 7)] {
            let e = format!("{},{},0,1", a_c as f64 / 100.0, b_c as f64 / 100.0);
            let g = plane_grid(Plane::Xz, 0.0, &e, &format!("{n},2")).unwrap();
            for (i, x) in g.xs_m.iter().enumerate() {
                assert_eq!(
                    x.to_bits(),
                    exact_hundredths(a_c, b_c, i as i64, n).to_bits(),
                    "{e}: x[{i}] = {x}"
                );
            }
        }
        let b = box_grid("0,0.96,0,0.4,-0.2,0.44", "13,6,17").unwrap();
        assert_eq!(b.xs_m[7], 0.56);
        assert_eq!(b.ys_m[3], 0.24);
        assert_eq!(b.zs_m[10], 0.2);
    }

    #[test]
    fn bad_grids_name_the_option() {
        assert!(
            plane_grid(Plane::Xy, 0.0, "0,1,2", "2,2")
                .unwrap_err()
                .0
                .contains("--extent")
        );
        assert!(
            plane_grid(Plane::Xy, 0.0, "1,0,0,1", "2,2")
                .unwrap_err()
                .0
                .contains("increase")
        );
        assert!(
            plane_grid(Plane::Xy, 0.0, "0,1,0,1", "1,2")
                .unwrap_err()
                .0
                .contains("--resolution")
        );
        let big = box_grid("0,1,0,1,0,1", "1000,1000,1000").unwrap_err().0;
        assert!(
            big.contains("1000000000 points") && big.contains("4000000"),
            "{big}"
        );
        assert!(point("--at", "1,2,nan").unwrap_err().0.contains("--at"));
    }
}
