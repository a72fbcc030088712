//! Electrodes (conductors other than windings), the ground plane, and the checks the electric
//! solver needs: no contact with windings or each other, nothing through the ground plane, and
//! one common axis ([`crate::query::axisymmetric::check_axisymmetric`]).
//!
//! # Design-file keys (`[[electrode]]`, one table per electrode)
//! - `name`: `[A-Za-z0-9_-]+`, unique across windings and electrodes (default `electrode-<n>`).
//! - `shape`: `torus` | `sphere` | `disc` | `cylinder`.
//! - `origin` (lengths, m): the centre (torus, sphere, disc) or the centre of the base
//!   (cylinder, whose ends are closed by flat discs).
//! - `axis` (direction, normalised): the symmetry axis; a cylinder extends from its base along
//!   it. Optional for a sphere (default `[0, 0, 1]`).
//! - sizes (lengths, m, positive): torus `major_radius` (centre to tube centre) and
//!   `minor_radius` (tube radius, below `major_radius`), or as a builder measures it
//!   `outside_diameter` (across the outer edge) and `tube_diameter` (major radius =
//!   (outside - tube) / 2, minor radius = tube / 2); sphere `radius`; disc `radius` (a
//!   disc has no thickness); cylinder `radius` and `length`.
//! - `connect` (optional): `"<winding>:top"` or `"<winding>:base"`: the electrode takes that
//!   terminal's potential. The top of a winding is its end (t = 1), the base its start.
//!
//! `[ground]`: `z` (length, m): a grounded plane z = const; `conducting` (bool, default
//! false): whether it also mirrors currents (image windings) for B, L and M.
//!
//! # Checks and their resolution
//! Contacts are found from closed-form distances to each surface, not from samples (see
//! [`crate::query::contact`]): a wire is accepted only if its surface provably clears the electrode,
//! and refused if it touches, crosses or comes within min(wire radius / 1000, 1 um) of it;
//! two electrodes likewise, to 1e-9 of their size. The lowest point of an electrode, for the
//! ground-plane check, is in closed form.

use crate::error::DesignError;
use crate::file::raw::{Ctx, RawLength, RawNumber, is_valid_name, type_phrase};
use crate::model::electrode::{Electrode, ElectrodeShape, End, Ground, Terminal};
use nalgebra::Vector3;
use serde::Deserialize;
use toml::{Table, Value};

/// Values of an electrode's `shape` key.
pub const ELECTRODE_SHAPE_NAMES: &[&str] = &["torus", "sphere", "disc", "cylinder"];

/// An electrode as written.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawElectrode {
    origin: Option<[RawLength; 3]>,
    axis: Option<[RawNumber; 3]>,
    radius: Option<RawLength>,
    major_radius: Option<RawLength>,
    minor_radius: Option<RawLength>,
    outside_diameter: Option<RawLength>,
    tube_diameter: Option<RawLength>,
    length: Option<RawLength>,
    connect: Option<String>,
}

/// A torus's major and minor radius (m): `major_radius` and `minor_radius`, or
/// `outside_diameter` D and `tube_diameter` d as a builder measures them (major = (D - d) / 2,
/// minor = d / 2); one pair, not a mix.
fn torus_radii(raw: &RawElectrode, ctx: &Ctx<'_>) -> Result<(f64, f64), DesignError> {
    let measured = raw.outside_diameter.is_some() || raw.tube_diameter.is_some();
    if !measured {
        let major_radius_m = ctx.required_size(
            "major_radius",
            &raw.major_radius,
            "give the distance from the axis to the tube centre, e.g. major_radius = \"30 cm\", \
             or outside_diameter and tube_diameter",
        )?;
        let minor_radius_m = ctx.required_size(
            "minor_radius",
            &raw.minor_radius,
            "give the tube radius, e.g. minor_radius = \"8 cm\"",
        )?;
        return Ok((major_radius_m, minor_radius_m));
    }
    if raw.major_radius.is_some() || raw.minor_radius.is_some() {
        return Err(DesignError::BadSetting {
            source_name: ctx.source.to_string(),
            item: ctx.item.clone(),
            key: "outside_diameter".into(),
            reason: "give either major_radius and minor_radius or outside_diameter and \
                     tube_diameter, not a mix"
                .into(),
        });
    }
    let outside_m = ctx.required_size(
        "outside_diameter",
        &raw.outside_diameter,
        "give the diameter across the torus's outer edge, e.g. outside_diameter = \"60 cm\"",
    )?;
    let tube_m = ctx.required_size(
        "tube_diameter",
        &raw.tube_diameter,
        "give the diameter of the tube, e.g. tube_diameter = \"15 cm\"",
    )?;
    if 2.0 * tube_m >= outside_m {
        return Err(DesignError::BadSetting {
            source_name: ctx.source.to_string(),
            item: ctx.item.clone(),
            key: "tube_diameter".into(),
            reason: format!(
                "the tube ({} m) must be less than half the outside diameter ({} m), or the \
                 torus has no hole",
                crate::error::sig(tube_m),
                crate::error::sig(outside_m)
            ),
        });
    }
    Ok((0.5 * (outside_m - tube_m), 0.5 * tube_m))
}

/// Keys of an electrode of each shape.
fn electrode_keys(shape: &str) -> &'static [&'static str] {
    match shape {
        "torus" => &[
            "name",
            "shape",
            "origin",
            "axis",
            "major_radius",
            "minor_radius",
            "outside_diameter",
            "tube_diameter",
            "connect",
        ],
        "sphere" => &["name", "shape", "origin", "axis", "radius", "connect"],
        "disc" => &["name", "shape", "origin", "axis", "radius", "connect"],
        _ => &[
            "name", "shape", "origin", "axis", "radius", "length", "connect",
        ],
    }
}

/// Parse the `electrode` array of a design file (`number` counts from 1).
pub(crate) fn parse_electrodes(value: Value, source: &str) -> Result<Vec<Electrode>, DesignError> {
    let entries = match value {
        Value::Array(entries) => entries,
        other => {
            return Err(DesignError::WrongType {
                source_name: source.to_string(),
                item: "top level".to_string(),
                key: "electrode".to_string(),
                reason: format!(
                    "expected [[electrode]] tables (double brackets), got {}",
                    type_phrase(&other)
                ),
            });
        }
    };
    entries
        .into_iter()
        .enumerate()
        .map(|(idx, entry)| {
            let number = idx + 1;
            match entry {
                Value::Table(t) => parse_electrode(t, number, source),
                other => Err(DesignError::WrongType {
                    source_name: source.to_string(),
                    item: format!("electrode #{number}"),
                    key: "electrode".to_string(),
                    reason: format!(
                        "expected an [[electrode]] table, got {}",
                        type_phrase(&other)
                    ),
                }),
            }
        })
        .collect()
}

/// Read one `[[electrode]]` table alone, with every check a design file makes of an electrode by
/// itself. `number` counts electrodes from 1 in file order (it names an electrode without a
/// `name` and labels messages, as in a design file).
pub fn electrode_from_table(
    table: Table,
    number: usize,
    source: &str,
) -> Result<Electrode, DesignError> {
    parse_electrode(table, number, source)
}

fn parse_electrode(
    mut table: Table,
    number: usize,
    source: &str,
) -> Result<Electrode, DesignError> {
    let mut ctx = Ctx {
        source,
        item: format!("electrode #{number}"),
    };
    let name = ctx.read_name(&table, "electrode", "topload", number)?;
    table.remove("name");
    let shape = ctx.take_shape(&mut table, ELECTRODE_SHAPE_NAMES)?;
    let allowed = electrode_keys(&shape);
    if let Some(key) = table.keys().find(|k| !allowed.contains(&k.as_str())) {
        return Err(DesignError::UnknownKey {
            source_name: source.to_string(),
            item: ctx.item,
            key: key.clone(),
            shape: shape.clone(),
            allowed: allowed.join(", "),
        });
    }
    let raw: RawElectrode = ctx.typed(table)?;
    let origin = raw.origin.as_ref().ok_or_else(|| {
        ctx.missing(
            "origin",
            "give the centre (the base centre for a cylinder) as origin = [x, y, z] (lengths)",
        )
    })?;
    let origin_m = ctx.point("origin", origin)?;
    let axis = if shape == "sphere" && raw.axis.is_none() {
        Vector3::z_axis()
    } else {
        ctx.axis(&raw.axis)?
    };
    let shape = match shape.as_str() {
        "torus" => {
            let (major_radius_m, minor_radius_m) = torus_radii(&raw, &ctx)?;
            if minor_radius_m >= major_radius_m {
                return Err(DesignError::RadiiOrder {
                    source_name: source.to_string(),
                    item: ctx.item,
                    inner_radius_m: minor_radius_m,
                    outer_radius_m: major_radius_m,
                });
            }
            ElectrodeShape::Torus {
                centre_m: origin_m,
                axis,
                major_radius_m,
                minor_radius_m,
            }
        }
        "sphere" => ElectrodeShape::Sphere {
            centre_m: origin_m,
            axis,
            radius_m: ctx.required_size(
                "radius",
                &raw.radius,
                "give the radius, e.g. radius = \"10 cm\"",
            )?,
        },
        "disc" => ElectrodeShape::Disc {
            centre_m: origin_m,
            axis,
            radius_m: ctx.required_size(
                "radius",
                &raw.radius,
                "give the radius, e.g. radius = \"10 cm\"",
            )?,
        },
        _ => ElectrodeShape::Cylinder {
            base_centre_m: origin_m,
            axis,
            radius_m: ctx.required_size(
                "radius",
                &raw.radius,
                "give the radius, e.g. radius = \"10 cm\"",
            )?,
            length_m: ctx.required_size(
                "length",
                &raw.length,
                "give the length along the axis, e.g. length = \"20 cm\"",
            )?,
        },
    };
    let connect = match raw.connect {
        None => None,
        Some(text) => {
            let bad = || DesignError::BadTerminal {
                source_name: source.to_string(),
                item: ctx.item.clone(),
                value: text.clone(),
            };
            let (winding, end) = text.rsplit_once(':').ok_or_else(bad)?;
            let end = match end {
                "top" => End::Top,
                "base" => End::Base,
                _ => return Err(bad()),
            };
            if !is_valid_name(winding) {
                return Err(bad());
            }
            Some(Terminal {
                winding: winding.to_string(),
                end,
            })
        }
    };
    Ok(Electrode {
        name,
        shape,
        connect,
    })
}

/// Parse the `[ground]` table.
pub(crate) fn parse_ground(value: Value, source: &str) -> Result<Ground, DesignError> {
    let ctx = Ctx {
        source,
        item: "ground".to_string(),
    };
    let Value::Table(table) = value else {
        return Err(DesignError::WrongType {
            source_name: source.to_string(),
            item: "top level".to_string(),
            key: "ground".to_string(),
            reason: format!("expected a [ground] table, got {}", type_phrase(&value)),
        });
    };
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    struct RawGround {
        z: Option<RawLength>,
        conducting: Option<bool>,
    }
    if let Some(key) = table
        .keys()
        .find(|k| !["z", "conducting"].contains(&k.as_str()))
    {
        return Err(DesignError::UnknownKey {
            source_name: source.to_string(),
            item: ctx.item,
            key: key.clone(),
            shape: "ground plane".to_string(),
            allowed: "z, conducting".to_string(),
        });
    }
    let raw: RawGround = ctx.typed(table)?;
    let z = raw.z.as_ref().ok_or_else(|| {
        ctx.missing(
            "z",
            "give the height of the grounded plane, e.g. z = 0.0 (length)",
        )
    })?;
    Ok(Ground {
        z_m: ctx.coordinate("z", z)?,
        conducting: raw.conducting.unwrap_or(false),
    })
}

#[cfg(test)]
mod tests {
    use crate::error::DesignError;
    use crate::file::design::parse_design;
    use crate::model::drive::{DriveNeeds, PotentialSpec};
    use crate::model::electrode::{ElectrodeShape, End};
    use crate::model::images::image_windings;
    use crate::query::axisymmetric::check_axisymmetric;
    use crate::query::checks::validate_drive;
    use crate::{Model, Shape};

    const FILE: &str = "design.toml";

    #[test]
    fn outer_radius_is_the_largest_rho_of_the_generatrix() {
        let o = nalgebra::Point3::origin();
        let n = nalgebra::Vector3::z_axis();
        for shape in [
            ElectrodeShape::Torus {
                centre_m: o,
                axis: n,
                major_radius_m: 0.15,
                minor_radius_m: 0.05,
            },
            ElectrodeShape::Sphere {
                centre_m: o,
                axis: n,
                radius_m: 0.1,
            },
            ElectrodeShape::Disc {
                centre_m: o,
                axis: n,
                radius_m: 0.2,
            },
            ElectrodeShape::Cylinder {
                base_centre_m: o,
                axis: n,
                radius_m: 0.07,
                length_m: 0.3,
            },
        ] {
            let sampled = (0..=10_000)
                .map(|k| shape.generatrix_at(k as f64 / 10_000.0).0)
                .fold(0.0, f64::max);
            let r = shape.outer_radius_m();
            assert!(
                r >= sampled && r - sampled < 1e-9,
                "{shape:?}: {r} vs {sampled}"
            );
        }
    }

    /// A secondary from z = 0.1 to 0.5 m, radius 5 cm, with a torus on its top and a ground.
    const BASE: &str = r#"
[[winding]]
name = "secondary"
shape = "helix"
role = "secondary"
origin = [0.0, 0.0, 0.10]
axis = [0.0, 0.0, 1.0]
radius = 0.05
length = 0.40
turns = 800
wire_diameter = 0.0004

[[electrode]]
name = "topload"
shape = "torus"
origin = [0.0, 0.0, 0.60]
axis = [0.0, 0.0, 1.0]
major_radius = "15 cm"
minor_radius = "5 cm"
connect = "secondary:top"

[ground]
z = 0.0
conducting = true

[drive]
frequency = 250e3
currents = { secondary = 1.2 }
potentials = { secondary = [0.0, 150e3] }
"#;

    fn err(text: &str) -> String {
        match parse_design(text, FILE) {
            Ok(d) => panic!("expected an error, got {d:?}"),
            Err(e) => e.to_string(),
        }
    }

    fn assert_has(msg: &str, parts: &[&str]) {
        assert!(msg.starts_with("design.toml: "), "{msg}");
        for p in parts {
            assert!(msg.contains(p), "message lacks {p:?}: {msg}");
        }
    }

    #[test]
    fn torus_from_outside_and_tube_diameter() {
        // 40 cm across the outside with a 10 cm tube is the 15 cm / 5 cm torus of BASE.
        let measured = BASE.replace(
            "major_radius = \"15 cm\"\nminor_radius = \"5 cm\"",
            "outside_diameter = \"40 cm\"\ntube_diameter = \"10 cm\"",
        );
        let d = parse_design(&measured, FILE).unwrap();
        match d.electrodes[0].shape {
            ElectrodeShape::Torus {
                major_radius_m,
                minor_radius_m,
                ..
            } => {
                assert!((major_radius_m - 0.15).abs() < 1e-15);
                assert!((minor_radius_m - 0.05).abs() < 1e-15);
            }
            ref s => panic!("{s:?}"),
        }
        let mixed = BASE.replace("minor_radius = \"5 cm\"", "tube_diameter = \"10 cm\"");
        assert_has(&err(&mixed), &["key 'outside_diameter'", "not a mix"]);
        let no_hole = measured.replace("\"10 cm\"", "\"20 cm\"");
        assert_has(&err(&no_hole), &["key 'tube_diameter'", "no hole"]);
    }

    #[test]
    fn full_design_parses() {
        let d = parse_design(BASE, FILE).unwrap();
        assert_eq!(d.electrodes.len(), 1);
        let e = &d.electrodes[0];
        assert_eq!(e.connect.as_ref().unwrap().end, End::Top);
        assert!(
            matches!(e.shape, ElectrodeShape::Torus { major_radius_m, .. } if (major_radius_m - 0.15).abs() < 1e-15)
        );
        assert_eq!(d.ground.unwrap().z_m, 0.0);
        assert!(d.ground.unwrap().conducting);
        assert_eq!(d.drive.frequency_hz, Some(250e3));
        assert_eq!(d.drive.current_a("secondary"), 1.2);
        assert_eq!(
            d.drive.potential("secondary"),
            Some(PotentialSpec::Ends {
                base_v: 0.0,
                top_v: 150e3
            })
        );
        let axis = check_axisymmetric(&d, FILE).unwrap();
        assert!((axis.direction.z - 1.0).abs() < 1e-15);
        validate_drive(
            &d,
            DriveNeeds {
                currents: true,
                potentials: true,
                frequency: true,
            },
            "x",
            FILE,
        )
        .unwrap();
    }

    #[test]
    fn electrodes_alone_are_a_design() {
        let d = parse_design(
            "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 1.0]\nradius = 0.1\n",
            FILE,
        )
        .unwrap();
        assert!(d.windings.is_empty());
        assert!(matches!(
            d.electrodes[0].shape,
            ElectrodeShape::Sphere { .. }
        ));
    }

    #[test]
    fn connected_electrode_with_a_potential() {
        let text = BASE.replace(
            "potentials = { secondary = [0.0, 150e3] }",
            "potentials = { topload = 1e3 }",
        );
        assert_has(
            &err(&text),
            &["potentials.topload", "connected to secondary:top"],
        );
    }

    #[test]
    fn unknown_names() {
        let text = BASE.replace(
            "currents = { secondary = 1.2 }",
            "currents = { secondry = 1.2 }",
        );
        assert_has(
            &err(&text),
            &[
                "drive",
                "currents.secondry",
                "'secondry' is not a winding",
                "secondary",
            ],
        );
        let text = BASE.replace("secondary:top", "primary:top");
        assert_has(
            &err(&text),
            &[
                "electrode 'topload'",
                "connect",
                "'primary' is not a winding",
            ],
        );
        let text = BASE.replace("secondary:top", "secondary:middle");
        assert_has(
            &err(&text),
            &["electrode 'topload'", "connect", "not a terminal"],
        );
        let text = BASE.replace("potentials = { secondary", "potentials = { nowhere");
        assert_has(
            &err(&text),
            &["potentials.nowhere", "not an electrode or a winding"],
        );
    }

    #[test]
    fn name_shared_by_a_winding_and_an_electrode() {
        let text = BASE.replace("name = \"topload\"", "name = \"secondary\"");
        // The connect line no longer matters: the duplicate name is reported first.
        assert_has(
            &err(&text),
            &["electrode 'secondary'", "already used by winding #1"],
        );
    }

    #[test]
    fn electrode_intersecting_a_winding() {
        let text = BASE
            .replace("origin = [0.0, 0.0, 0.60]", "origin = [0.0, 0.0, 0.45]")
            .replace("major_radius = \"15 cm\"", "major_radius = \"6 cm\"");
        assert_has(
            &err(&text),
            &[
                "electrode 'topload'",
                "origin",
                "the wire of winding 'secondary'",
            ],
        );
    }

    #[test]
    fn electrodes_intersecting_each_other() {
        let text = format!(
            "{BASE}\n[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.70]\nradius = 0.14\n"
        );
        assert_has(
            &err(&text),
            &["electrode 'ball'", "touches or crosses electrode 'topload'"],
        );
    }

    #[test]
    fn electrode_through_the_ground_plane() {
        let text = BASE.replace("z = 0.0\n", "z = 0.58\n");
        let msg = err(&text);
        // The winding is lower than the torus and is reported by the winding pass or the
        // electrode pass; the electrode pass runs first.
        assert_has(
            &msg,
            &[
                "electrode 'topload'",
                "at or below the ground plane z = 0.58 m",
            ],
        );
        let text = BASE.replace("z = 0.0\n", "z = 0.2\n");
        assert_has(
            &err(&text),
            &["winding 'secondary'", "ground plane z = 0.2 m"],
        );
    }

    #[test]
    fn an_electrode_within_the_contact_tolerance_of_the_ground_touches_it() {
        // A ball of 0.1 m resting on the plane z = 0: its lowest point 1e-11 m above the plane
        // is within the contact check's tolerance (1e-9 of its size), 1e-6 m is clear.
        let ball = |z: &str| {
            format!(
                "{BASE}\n[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\n\
                 origin = [2.0, 0.0, {z}]\nradius = 0.1\n"
            )
        };
        for z in ["0.1", "0.10000000001"] {
            assert_has(&err(&ball(z)), &["electrode 'ball'", "ground plane"]);
        }
        assert!(parse_design(&ball("0.100001"), "d.toml").is_ok());
    }

    #[test]
    fn missing_and_zero_drive() {
        let text = BASE.replace(
            "currents = { secondary = 1.2 }",
            "currents = { secondary = 0.0 }",
        );
        let d = parse_design(&text, FILE).unwrap();
        let e = validate_drive(
            &d,
            DriveNeeds {
                currents: true,
                ..Default::default()
            },
            "the B field",
            FILE,
        )
        .unwrap_err()
        .to_string();
        assert_has(&e, &["drive", "key 'currents'", "the B field", "all zero"]);
        let text = BASE.replace("frequency = 250e3\n", "");
        let d = parse_design(&text, FILE).unwrap();
        let e = validate_drive(
            &d,
            DriveNeeds {
                frequency: true,
                ..Default::default()
            },
            "the validity check",
            FILE,
        )
        .unwrap_err()
        .to_string();
        assert_has(&e, &["key 'frequency'", "needs the drive frequency"]);
        let text = BASE.replace("potentials = { secondary = [0.0, 150e3] }\n", "");
        let d = parse_design(&text, FILE).unwrap();
        let e = validate_drive(
            &d,
            DriveNeeds {
                potentials: true,
                ..Default::default()
            },
            "the E field",
            FILE,
        )
        .unwrap_err()
        .to_string();
        assert_has(&e, &["key 'potentials'", "missing"]);
        assert_has(
            &err(&BASE.replace("frequency = 250e3", "frequency = -1.0")),
            &["drive", "frequency", "positive"],
        );
        assert_has(
            &err(&BASE.replace("frequency = 250e3", "frequncy = 1.0")),
            &["drive", "frequncy", "unknown key"],
        );
    }

    #[test]
    fn potential_shapes_must_match_the_conductor() {
        let text = BASE.replace("[0.0, 150e3]", "150e3");
        assert_has(&err(&text), &["potentials.secondary", "[base_V, top_V]"]);
    }

    #[test]
    fn off_axis_conductor_is_named() {
        let text = BASE.replace("origin = [0.0, 0.0, 0.60]", "origin = [0.01, 0.0, 0.60]");
        let d = parse_design(&text, FILE).unwrap();
        let e = check_axisymmetric(&d, FILE).unwrap_err();
        assert!(matches!(e, DesignError::NotAxisymmetric { .. }));
        assert_has(
            &e.to_string(),
            &[
                "electrode 'topload'",
                "origin",
                "0.01 m off the common axis",
            ],
        );
    }

    #[test]
    fn tilted_axis_over_a_ground_plane() {
        let text = BASE.replace("axis = [0.0, 0.0, 1.0]", "axis = [0.0, 0.1, 1.0]");
        let d = parse_design(&text, FILE).unwrap();
        let e = check_axisymmetric(&d, FILE).unwrap_err().to_string();
        assert_has(&e, &["winding 'secondary'", "axis", "must be vertical"]);
    }

    #[test]
    fn bad_electrode_keys() {
        assert_has(
            &err(&BASE.replace("minor_radius = \"5 cm\"", "radius = 0.05")),
            &["electrode 'topload'", "'radius'", "unknown key for a torus"],
        );
        assert_has(
            &err(&BASE.replace("minor_radius = \"5 cm\"", "minor_radius = \"25 cm\"")),
            &["electrode 'topload'"],
        );
        assert_has(
            &err(&BASE.replace("shape = \"torus\"", "shape = \"cube\"")),
            &["electrode 'topload'", "cube"],
        );
        assert_has(
            &err(&BASE.replace("major_radius = \"15 cm\"\n", "")),
            &["major_radius", "missing"],
        );
    }

    #[test]
    fn images_mirror_and_reverse() {
        let d = parse_design(BASE, FILE).unwrap();
        let g = d.ground.unwrap();
        let img = image_windings(&d.windings, &g);
        match &img[0].shape {
            Shape::Helix { origin_m, axis, .. } => {
                assert!((origin_m.z + 0.10).abs() < 1e-15);
                assert!((axis.z + 1.0).abs() < 1e-15);
            }
            other => panic!("{other:?}"),
        }
        let mut w = d.windings[0].clone();
        w.model = Model::Filament;
        let img = image_windings(&[w.clone()], &g);
        let Shape::Polyline { points_m, .. } = &img[0].shape else {
            panic!()
        };
        let end = w.shape.point_at(1.0);
        assert!((points_m[0] - nalgebra::Point3::new(end.x, end.y, -end.z)).norm() < 1e-12);
    }
}
