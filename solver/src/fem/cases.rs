//! The finite-element reference cases of the validation tables `validation/fem.csv` (closed
//! forms and image series, `validation/fem_refs.py`) and `validation/fem_skfem.csv` (scikit-fem
//! on meshes of its own, `validation/fem_skfem.py`): the half-plane problem of a table row,
//! built from its `case` and `parameters` columns.
//!
//! One builder for the `verify` command and the finite-element tests, so that what the tests
//! check and what `verify` recomputes cannot drift apart. Most of these geometries (spherical
//! shells, a grounded spherical enclosure, long coaxial cylinders) have no design file: they are
//! built as a [`Domain`] directly.
//!
//! `parameters` is `key=value` pairs separated by `;` (as in `validation/circuits.csv`); every
//! key of the case must be given once and no other. Lengths (keys ending in `_m`) lie in the
//! design file's range of sizes ([`limits::MIN_SIZE_M`] to [`limits::MAX_SIZE_M`]), a centre
//! height in its range of coordinates, `eps_r` (relative permittivity) in 1 to [`MAX_EPS_R`],
//! `density` (the mesh refinement factor of `[mesh] density`) in (0, 16] (a design file's
//! range), and the parts nest as their case says (a sphere inside its enclosure, a shell
//! between them): a row outside these is refused, naming its column and key, before anything
//! is meshed, as is one whose lengths span more than [`MAX_LENGTH_RATIO`]. A row that asks
//! for more than [`CASE_MAX_ELEMENTS`] elements is refused by the mesher.
//!
//! The cases (the conductor is always the first and only one; its capacitance is entry
//! (0, 0) of the capacitance matrix):
//! - `isolated_sphere` (`a_m`, `kelvin_radius_m`, `density`): a sphere of radius a at the
//!   origin in open space, the exterior of the disc of radius `kelvin_radius_m` by the Kelvin
//!   transformation.
//! - `sphere_over_plane` (`a_m`, `h_m`, `kelvin_radius_m`, `density`): the sphere with its
//!   centre h above a grounded plane z = 0, open space above.
//! - `sphere_in_enclosure` (`a_m`, `b_m`, `density`): the sphere inside a concentric grounded
//!   sphere of radius b.
//! - `concentric_shell` (`a_m`, `c_m`, `b_m`, `eps_r`, `density`): the same with a dielectric
//!   shell a < r < c of relative permittivity `eps_r`.
//! - `eccentric_sphere` (`a_m`, `centre_z_m`, `b_m`, `density`): the sphere with its centre at
//!   z = `centre_z_m` inside a grounded sphere of radius b about the origin.
//! - `isolated_disc` (`a_m`, `kelvin_radius_m`, `density`): a thin disc of radius a in the
//!   plane z = 0 (a sheet with its singular rim field, as the winding's ends have) in open
//!   space, through the Kelvin disc of radius `kelvin_radius_m`.
//! - `coaxial_layer` (`a_m`, `c_m`, `b_m`, `eps_r`, `h_m`, `density`): a length h of coaxial
//!   cylinders, inner radius a, grounded outer radius b, a dielectric layer a < r < c; the ends
//!   are symmetry planes (no normal flux), the section of an infinitely long pair.

use super::domain::{Area, Conductor, Domain, Outer, Piece, Profile2d, Region};
use coilfield_geometry::file::dielectric::MAX_MESH_DENSITY;
use coilfield_geometry::limits;
use coilfield_geometry::model::media::MAX_MESH_ELEMENTS;
use std::collections::BTreeMap;

/// Names of the cases, in the order of the module documentation.
pub const CASE_NAMES: [&str; 7] = [
    "isolated_sphere",
    "sphere_over_plane",
    "sphere_in_enclosure",
    "concentric_shell",
    "eccentric_sphere",
    "isolated_disc",
    "coaxial_layer",
];

/// Largest relative permittivity of a case (dimensionless): far above any insulator of a coil
/// (PVC about 3, glass under 10; common practice, no source), while eps_r times the energy stays
/// far from overflow.
pub const MAX_EPS_R: f64 = 1e6;

/// Largest ratio of two lengths of one case. The mesh grades from the conductor's edge length
/// to the outer boundary's; far beyond this ratio the conductor is no longer resolved and the
/// capacitance is meaningless (a sphere of 1e-9 m in an enclosure of 1e5 m came out as
/// 1.4e-8 F against 1.1e-19 F), so such a row is refused rather than reported as a failure.
pub const MAX_LENGTH_RATIO: f64 = 1e3;

/// Element limit of a case's mesh: the design file's own limit, so that a row asking for more
/// (too fine a density, parts too close) is refused by the mesher after bounded work.
pub const CASE_MAX_ELEMENTS: usize = MAX_MESH_ELEMENTS;

/// Why a row's case cannot be built: the column (`case` or `parameters`) and the reason.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("column '{column}': {reason}")]
pub struct CaseError {
    /// The column at fault.
    pub column: &'static str,
    /// What is wrong, as a sentence.
    pub reason: String,
}

fn case_error(reason: String) -> CaseError {
    CaseError {
        column: "case",
        reason,
    }
}

fn parameter_error(reason: String) -> CaseError {
    CaseError {
        column: "parameters",
        reason,
    }
}

/// The keys of each case's `parameters`.
fn case_keys(case: &str) -> Option<&'static [&'static str]> {
    Some(match case {
        "isolated_sphere" => &["a_m", "kelvin_radius_m", "density"],
        "sphere_over_plane" => &["a_m", "h_m", "kelvin_radius_m", "density"],
        "sphere_in_enclosure" => &["a_m", "b_m", "density"],
        "concentric_shell" => &["a_m", "c_m", "b_m", "eps_r", "density"],
        "eccentric_sphere" => &["a_m", "centre_z_m", "b_m", "density"],
        "isolated_disc" => &["a_m", "kelvin_radius_m", "density"],
        "coaxial_layer" => &["a_m", "c_m", "b_m", "eps_r", "h_m", "density"],
        _ => return None,
    })
}

/// The parameters of a row, each key once, each a number in its key's range.
struct Parameters(BTreeMap<&'static str, f64>);

impl Parameters {
    fn parse(text: &str, keys: &'static [&'static str]) -> Result<Parameters, CaseError> {
        let mut values = BTreeMap::new();
        for pair in text.split(';').map(str::trim).filter(|p| !p.is_empty()) {
            let (key, value) = pair
                .split_once('=')
                .ok_or_else(|| parameter_error(format!("'{}' is not key=value", elided(pair))))?;
            let key = key.trim();
            let known = keys.iter().find(|k| **k == key).ok_or_else(|| {
                parameter_error(format!(
                    "unknown key '{}' (this case takes {})",
                    elided(key),
                    keys.join(", ")
                ))
            })?;
            let value = value.trim();
            let v: f64 = value.parse().map_err(|_| {
                parameter_error(format!("key '{key}': '{}' is not a number", elided(value)))
            })?;
            check_range(known, v)?;
            if values.insert(*known, v).is_some() {
                return Err(parameter_error(format!("key '{key}' is given twice")));
            }
        }
        if let Some(missing) = keys.iter().find(|k| !values.contains_key(*k)) {
            return Err(parameter_error(format!(
                "key '{missing}' is missing (this case takes {})",
                keys.join(", ")
            )));
        }
        Ok(Parameters(values))
    }

    fn get(&self, key: &str) -> f64 {
        // `parse` has checked that every key of the case is present.
        self.0.get(key).copied().unwrap_or(f64::NAN)
    }
}

/// At most 40 characters of a value a message quotes (a long cell is not echoed whole).
fn elided(text: &str) -> String {
    if text.chars().count() <= 40 {
        text.to_string()
    } else {
        format!("{}...", text.chars().take(40).collect::<String>())
    }
}

/// The range of a key by its kind: a length, a coordinate, a permittivity or a mesh density.
fn check_range(key: &str, v: f64) -> Result<(), CaseError> {
    let (ok, range) = match key {
        "centre_z_m" => (
            v.is_finite() && v.abs() <= limits::MAX_COORDINATE_M,
            format!(
                "-{0:e} m to {0:e} m (a coordinate)",
                limits::MAX_COORDINATE_M
            ),
        ),
        "eps_r" => (
            (1.0..=MAX_EPS_R).contains(&v),
            format!("1 to {MAX_EPS_R:e} (a relative permittivity)"),
        ),
        "density" => (
            v > 0.0 && v <= MAX_MESH_DENSITY,
            format!("above 0, at most {MAX_MESH_DENSITY} (a mesh density)"),
        ),
        _ => (
            (limits::MIN_SIZE_M..=limits::MAX_SIZE_M).contains(&v),
            format!(
                "{} (a size)",
                limits::range_phrase(limits::MIN_SIZE_M, limits::MAX_SIZE_M, "m")
            ),
        ),
    };
    if ok {
        Ok(())
    } else {
        Err(parameter_error(format!(
            "key '{key}': {v:e} is outside the accepted range {range}"
        )))
    }
}

/// `Err` naming `what` unless `holds`.
fn require(holds: bool, what: &str) -> Result<(), CaseError> {
    if holds {
        Ok(())
    } else {
        Err(parameter_error(format!("the parts do not nest: {what}")))
    }
}

/// A sphere of radius `a` (m) with its centre on the axis at `zc` (m).
fn sphere(zc: f64, a: f64) -> Conductor {
    let area = Area::Disk {
        centre: [0.0, zc],
        radius: a,
    };
    Conductor {
        name: "sphere".to_string(),
        pieces: area.outline(),
        area: Some(area),
        profile: Profile2d::Uniform,
    }
}

/// A spherical shell a < r < c about the origin of relative permittivity `eps_r`.
fn shell(a: f64, c: f64, eps_r: f64) -> Region {
    Region {
        name: "shell".to_string(),
        area: Area::Shell {
            centre: [0.0, 0.0],
            r0: a,
            r1: c,
        },
        relative_permittivity: eps_r,
    }
}

/// The half-plane problem of a row of `validation/fem.csv` or `validation/fem_skfem.csv`,
/// from its `case` and `parameters` columns (see the module documentation), with the mesh
/// limit [`CASE_MAX_ELEMENTS`].
pub fn reference_domain(case: &str, parameters: &str) -> Result<Domain, CaseError> {
    let keys = case_keys(case).ok_or_else(|| {
        case_error(format!(
            "unknown case '{}' (known: {})",
            elided(case),
            CASE_NAMES.join(", ")
        ))
    })?;
    let p = Parameters::parse(parameters, keys)?;
    let lengths: Vec<f64> = keys
        .iter()
        .filter(|k| k.ends_with("_m") && **k != "centre_z_m")
        .map(|k| p.get(k))
        .collect();
    let (smallest, largest) = lengths
        .iter()
        .fold((f64::INFINITY, 0.0_f64), |(lo, hi), &v| {
            (lo.min(v), hi.max(v))
        });
    if largest > MAX_LENGTH_RATIO * smallest {
        return Err(parameter_error(format!(
            "the lengths span {smallest:e} m to {largest:e} m, more than the factor of \
             {MAX_LENGTH_RATIO:e} the mesh resolves"
        )));
    }
    let a = p.get("a_m");
    let sphere_in = |zc: f64, b: f64| Outer::Sphere {
        centre_z: zc,
        radius: b,
    };
    let (conductors, regions, outer) = match case {
        "isolated_sphere" => {
            let r = p.get("kelvin_radius_m");
            require(a < r, "a_m < kelvin_radius_m")?;
            (
                vec![sphere(0.0, a)],
                vec![],
                Outer::Open {
                    centre_z: 0.0,
                    radius: r,
                    ground: false,
                },
            )
        }
        "sphere_over_plane" => {
            let (h, r) = (p.get("h_m"), p.get("kelvin_radius_m"));
            require(a < h, "a_m < h_m (the sphere clear of the plane)")?;
            require(h + a < r, "h_m + a_m < kelvin_radius_m")?;
            (
                vec![sphere(h, a)],
                vec![],
                Outer::Open {
                    centre_z: 0.0,
                    radius: r,
                    ground: true,
                },
            )
        }
        "sphere_in_enclosure" => {
            let b = p.get("b_m");
            require(a < b, "a_m < b_m")?;
            (vec![sphere(0.0, a)], vec![], sphere_in(0.0, b))
        }
        "concentric_shell" => {
            let (c, b) = (p.get("c_m"), p.get("b_m"));
            require(a < c && c < b, "a_m < c_m < b_m")?;
            (
                vec![sphere(0.0, a)],
                vec![shell(a, c, p.get("eps_r"))],
                sphere_in(0.0, b),
            )
        }
        "eccentric_sphere" => {
            let (zc, b) = (p.get("centre_z_m"), p.get("b_m"));
            require(zc.abs() + a < b, "|centre_z_m| + a_m < b_m")?;
            (vec![sphere(zc, a)], vec![], sphere_in(0.0, b))
        }
        "isolated_disc" => {
            let r = p.get("kelvin_radius_m");
            require(a < r, "a_m < kelvin_radius_m")?;
            let disc = Conductor {
                name: "disc".to_string(),
                // A sheet from the axis to its rim, where the field is singular.
                pieces: vec![Piece::Line {
                    p0: [0.0, 0.0],
                    p1: [a, 0.0],
                    edge0: false,
                    edge1: true,
                }],
                area: None,
                profile: Profile2d::Uniform,
            };
            (
                vec![disc],
                vec![],
                Outer::Open {
                    centre_z: 0.0,
                    radius: r,
                    ground: false,
                },
            )
        }
        "coaxial_layer" => {
            let (c, b, h) = (p.get("c_m"), p.get("b_m"), p.get("h_m"));
            require(a < c && c < b, "a_m < c_m < b_m")?;
            let inner = Area::Rect {
                r0: 0.0,
                r1: a,
                z0: 0.0,
                z1: h,
            };
            let conductor = Conductor {
                name: "inner".to_string(),
                // Only the side faces: the ends lie on the symmetry planes.
                pieces: vec![Piece::Line {
                    p0: [a, 0.0],
                    p1: [a, h],
                    edge0: false,
                    edge1: false,
                }],
                area: Some(inner),
                profile: Profile2d::Uniform,
            };
            let layer = Region {
                name: "layer".to_string(),
                area: Area::Rect {
                    r0: a,
                    r1: c,
                    z0: 0.0,
                    z1: h,
                },
                relative_permittivity: p.get("eps_r"),
            };
            (
                vec![conductor],
                vec![layer],
                Outer::Cylinder {
                    r_max: b,
                    z_min: 0.0,
                    z_max: h,
                    insulated_ends: true,
                },
            )
        }
        other => return Err(case_error(format!("unknown case '{}'", elided(other)))),
    };
    Ok(Domain {
        conductors,
        regions,
        outer,
        density: p.get("density"),
        max_elements: CASE_MAX_ELEMENTS,
        axis: None,
        drive: None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_case_name_has_keys() {
        for case in CASE_NAMES {
            assert!(case_keys(case).is_some(), "{case}");
        }
    }

    #[test]
    fn a_row_outside_its_ranges_is_refused_by_column_and_key() {
        let refused = |case: &str, params: &str| reference_domain(case, params).unwrap_err();
        let e = refused("isolated_sphere", "a_m=1e300;kelvin_radius_m=0.3;density=8");
        assert_eq!(e.column, "parameters");
        assert!(
            e.reason.contains("'a_m'") && e.reason.contains("size"),
            "{e}"
        );
        let e = refused("isolated_sphere", "a_m=abc;kelvin_radius_m=0.3;density=8");
        assert!(e.reason.contains("not a number"), "{e}");
        let e = refused("isolated_sphere", "a_m=0.1;kelvin_radius_m=0.3");
        assert!(e.reason.contains("'density' is missing"), "{e}");
        let e = refused(
            "isolated_sphere",
            "a_m=0.1;a_m=0.2;kelvin_radius_m=0.3;density=8",
        );
        assert!(e.reason.contains("twice"), "{e}");
        let e = refused("isolated_sphere", "a_m=0.1;b_m=0.3;density=8");
        assert!(e.reason.contains("unknown key 'b_m'"), "{e}");
        let e = refused("isolated_sphere", "a_m=0.1;kelvin_radius_m=0.3;density=100");
        assert!(e.reason.contains("mesh density"), "{e}");
        let e = refused(
            "concentric_shell",
            "a_m=0.1;c_m=0.3;b_m=0.2;eps_r=3;density=8",
        );
        assert!(e.reason.contains("a_m < c_m < b_m"), "{e}");
        let e = refused(
            "concentric_shell",
            "a_m=0.1;c_m=0.15;b_m=0.2;eps_r=0.5;density=8",
        );
        assert!(e.reason.contains("permittivity"), "{e}");
        let e = refused("sphere_in_enclosure", "a_m=1e-9;b_m=1e5;density=16");
        assert!(e.reason.contains("the lengths span"), "{e}");
        let e = refused("cube", "a_m=0.1");
        assert_eq!(e.column, "case");
        assert!(e.reason.contains("unknown case 'cube'"), "{e}");
    }
}
