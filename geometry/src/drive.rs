//! The excitation of a design (`[drive]`) and the image windings of a conducting ground plane.
//!
//! # Design-file keys (`[drive]`)
//! ```toml
//! [drive]
//! frequency = 250e3                                  # Hz, positive
//! currents = { primary = 40.0, secondary = 1.2 }     # signed peak A in each winding
//! potentials = { topload = 150e3, secondary = [0.0, 150e3] }  # peak V; a winding: [base, top]
//! ```
//! A snapshot model: currents are signed peak amplitudes, all in phase; potentials are peak
//! values at the voltage peak. Fields scale linearly with the drive. A winding absent from
//! `currents` carries no current; an electrode absent from `potentials` and not connected is
//! at 0 V. A connected electrode takes its terminal's potential and must not appear in
//! `potentials`. Only the secondary winding has a surface in the electric model, so only it may
//! have a potential.

use crate::design::{Ctx, Design, RawNumber, type_phrase};
use crate::electrode::{End, Ground, names};
use crate::error::DesignError;
use crate::winding::{Model, Role, Shape, Winding};
use nalgebra::{Point3, Unit, Vector3};
use serde::Deserialize;
use toml::Value;

/// A conductor's potential in `[drive] potentials` (peak V).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PotentialSpec {
    /// An electrode's potential (V).
    Uniform(f64),
    /// A winding's potentials at its base (start) and top (end) (V).
    Ends {
        /// Potential at the base (V).
        base_v: f64,
        /// Potential at the top (V).
        top_v: f64,
    },
}

/// The validated `[drive]` table (every part optional; see [`validate_drive`]).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Drive {
    /// Drive frequency (Hz).
    pub frequency_hz: Option<f64>,
    /// Signed peak current (A) per winding name, in name order.
    pub currents_a: Vec<(String, f64)>,
    /// Peak potentials per conductor name, in name order.
    pub potentials_v: Vec<(String, PotentialSpec)>,
}

impl Drive {
    /// Peak current (A) of a winding (0 when absent).
    pub fn current_a(&self, winding: &str) -> f64 {
        self.currents_a
            .iter()
            .find(|(n, _)| n == winding)
            .map_or(0.0, |(_, i)| *i)
    }

    /// Potential entry of a conductor, if any.
    pub fn potential(&self, name: &str) -> Option<PotentialSpec> {
        self.potentials_v
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, p)| *p)
    }

    /// The potential (V) of a winding's end: from its `[base, top]` entry, 0 when absent.
    pub fn terminal_v(&self, winding: &str, end: End) -> f64 {
        match (self.potential(winding), end) {
            (Some(PotentialSpec::Ends { base_v, .. }), End::Base) => base_v,
            (Some(PotentialSpec::Ends { top_v, .. }), End::Top) => top_v,
            _ => 0.0,
        }
    }
}

/// Parse the `[drive]` table (names are checked later, by [`check_drive`]).
pub(crate) fn parse_drive(value: Value, source: &str) -> Result<Drive, DesignError> {
    let ctx = Ctx {
        source,
        item: "drive".to_string(),
    };
    let wrong = |key: &str, reason: String| DesignError::WrongType {
        source_name: source.to_string(),
        item: "drive".to_string(),
        key: key.to_string(),
        reason,
    };
    let Value::Table(table) = value else {
        return Err(DesignError::WrongType {
            source_name: source.to_string(),
            item: "top level".to_string(),
            key: "drive".to_string(),
            reason: format!("expected a [drive] table, got {}", type_phrase(&value)),
        });
    };
    let mut drive = Drive::default();
    for (key, value) in table {
        match key.as_str() {
            "frequency" => {
                let f: RawNumber = RawNumber::deserialize(value.clone()).map_err(|_| {
                    wrong(
                        "frequency",
                        format!("expected a number in Hz, got {}", type_phrase(&value)),
                    )
                })?;
                let hz = f.as_f64();
                if !hz.is_finite() {
                    return Err(ctx.not_finite("frequency", "a finite frequency in Hz", f.shown()));
                }
                if hz <= 0.0 {
                    return Err(ctx.not_positive(
                        "frequency",
                        "a positive frequency in Hz",
                        f.shown(),
                    ));
                }
                drive.frequency_hz = Some(hz);
            }
            "currents" | "potentials" => {
                let Value::Table(entries) = value else {
                    return Err(wrong(
                        &key,
                        format!(
                            "expected a table such as {{ primary = 40.0 }}, got {}",
                            type_phrase(&value)
                        ),
                    ));
                };
                for (name, v) in entries {
                    let sub = format!("{key}.{name}");
                    let number = |v: &Value| -> Result<f64, DesignError> {
                        let x = match v {
                            Value::Integer(n) => *n as f64,
                            Value::Float(x) => *x,
                            other => {
                                return Err(wrong(
                                    &sub,
                                    format!("expected a number, got {}", type_phrase(other)),
                                ));
                            }
                        };
                        if !x.is_finite() {
                            return Err(ctx.not_finite(&sub, "a finite number", x.to_string()));
                        }
                        Ok(x)
                    };
                    if key == "currents" {
                        drive.currents_a.push((name.clone(), number(&v)?));
                    } else {
                        let spec = match &v {
                            Value::Array(a) if a.len() == 2 => PotentialSpec::Ends {
                                base_v: number(&a[0])?,
                                top_v: number(&a[1])?,
                            },
                            Value::Array(_) => {
                                return Err(wrong(
                                    &sub,
                                    "a winding's potentials are two numbers, [base_V, top_V]"
                                        .to_string(),
                                ));
                            }
                            other => PotentialSpec::Uniform(number(other)?),
                        };
                        drive.potentials_v.push((name.clone(), spec));
                    }
                }
            }
            _ => {
                return Err(DesignError::UnknownKey {
                    source_name: source.to_string(),
                    item: "drive".to_string(),
                    key,
                    shape: "[drive] table".to_string(),
                    allowed: "frequency, currents, potentials".to_string(),
                });
            }
        }
    }
    Ok(drive)
}

/// Names in `[drive]` against the design's conductors, and connected electrodes without a
/// potential of their own.
pub(crate) fn check_drive(design: &Design, source: &str) -> Result<(), DesignError> {
    let unknown = |key: String, name: &str, wanted: &'static str, known: String| {
        DesignError::UnknownConductor {
            source_name: source.to_string(),
            item: "drive".to_string(),
            key: key.into(),
            name: name.into(),
            wanted,
            known: known.into(),
        }
    };
    let winding_names = || names(design.windings.iter().map(|w| w.name.as_str()));
    for (name, _) in &design.drive.currents_a {
        if !design.windings.iter().any(|w| &w.name == name) {
            return Err(unknown(
                format!("currents.{name}"),
                name,
                "a winding",
                winding_names(),
            ));
        }
    }
    for (name, spec) in &design.drive.potentials_v {
        let key = format!("potentials.{name}");
        if let Some(e) = design.electrodes.iter().find(|e| &e.name == name) {
            if let Some(t) = &e.connect {
                return Err(DesignError::ConnectedWithPotential {
                    source_name: source.to_string(),
                    name: name.clone(),
                    terminal: format!(
                        "{}:{}",
                        t.winding,
                        if t.end == End::Top { "top" } else { "base" }
                    ),
                });
            }
            if let PotentialSpec::Ends { .. } = spec {
                return Err(DesignError::WrongType {
                    source_name: source.to_string(),
                    item: "drive".to_string(),
                    key,
                    reason: "an electrode is an equipotential: give one number (V)".to_string(),
                });
            }
        } else if let Some(w) = design.windings.iter().find(|w| &w.name == name) {
            if w.role != Role::Secondary {
                return Err(unknown(
                    key,
                    name,
                    "an electrode or the secondary winding (only the winding with role = \
                     \"secondary\" has a surface in the electric model)",
                    names(
                        design.electrodes.iter().map(|e| e.name.as_str()).chain(
                            design
                                .windings
                                .iter()
                                .filter(|w| w.role == Role::Secondary)
                                .map(|w| w.name.as_str()),
                        ),
                    ),
                ));
            }
            if let PotentialSpec::Uniform(_) = spec {
                return Err(DesignError::WrongType {
                    source_name: source.to_string(),
                    item: "drive".to_string(),
                    key,
                    reason: "a winding's potentials are two numbers, [base_V, top_V]".to_string(),
                });
            }
        } else {
            return Err(unknown(
                key,
                name,
                "an electrode or a winding",
                names(
                    design
                        .electrodes
                        .iter()
                        .map(|e| e.name.as_str())
                        .chain(design.windings.iter().map(|w| w.name.as_str())),
                ),
            ));
        }
    }
    Ok(())
}

/// What a later computation needs from `[drive]`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct DriveNeeds {
    /// At least one nonzero current (B fields).
    pub currents: bool,
    /// At least one nonzero potential (E fields).
    pub potentials: bool,
    /// A frequency (validity warnings, exposure limits).
    pub frequency: bool,
}

/// Check that `[drive]` has what a computation needs; `what` names the computation in the
/// message (e.g. "the B field"), `source` labels it.
pub fn validate_drive(
    design: &Design,
    needs: DriveNeeds,
    what: &str,
    source: &str,
) -> Result<(), DesignError> {
    let missing = |key: &str, reason: String| DesignError::MissingDrive {
        source_name: source.to_string(),
        key: key.to_string(),
        reason,
    };
    let d = &design.drive;
    if needs.frequency && d.frequency_hz.is_none() {
        return Err(missing(
            "frequency",
            format!("{what} needs the drive frequency; add frequency = <Hz> to [drive]"),
        ));
    }
    if needs.currents && d.currents_a.iter().all(|(_, i)| *i == 0.0) {
        let why = if d.currents_a.is_empty() {
            "missing"
        } else {
            "all zero"
        };
        return Err(missing(
            "currents",
            format!(
                "{what} needs winding currents, and they are {why}; add currents = {{ <winding> = <peak A> }} to [drive]"
            ),
        ));
    }
    if needs.potentials {
        let any = d.potentials_v.iter().any(|(_, p)| match *p {
            PotentialSpec::Uniform(v) => v != 0.0,
            PotentialSpec::Ends { base_v, top_v } => base_v != 0.0 || top_v != 0.0,
        });
        if !any {
            let why = if d.potentials_v.is_empty() {
                "missing"
            } else {
                "all zero"
            };
            return Err(missing(
                "potentials",
                format!(
                    "{what} needs conductor potentials, and they are {why}; add potentials = {{ <electrode> = <peak V>, <secondary> = [<base V>, <top V>] }} to [drive]"
                ),
            ));
        }
    }
    Ok(())
}

/// Mirror image of a point in the plane z = `z0_m`.
fn mirror_point(p: &Point3<f64>, z0_m: f64) -> Point3<f64> {
    Point3::new(p.x, p.y, 2.0 * z0_m - p.z)
}

/// The image windings of a perfectly conducting ground plane `ground` (for B, L and M).
///
/// A perfect conductor keeps the normal flux density zero on its surface, which an image
/// current does: the geometric mirror of each current element with its direction reversed
/// (J_image = (-J_x, -J_y, J_z) at (x, y, 2 z0 - z); method of images, e.g. J. D. Jackson,
/// *Classical Electrodynamics*, 3rd ed. 1999, sec. 5.13 (section from memory)). The mirror is
/// orientation-reversing, so a ring about `n` becomes a ring about the mirrored `n` with the
/// same current sign; ring-model windings keep their shape with mirrored origin and axis.
/// Filament-model windings (and polylines) become polylines through the mirrored points in
/// reverse order, so that a helix keeps its true (opposite) handedness. Images are named
/// `<name>-image` and have role `other`.
pub fn image_windings(windings: &[Winding], ground: &Ground) -> Vec<Winding> {
    let z0 = ground.z_m;
    let mirror_axis = |a: &Unit<Vector3<f64>>| Unit::new_normalize(Vector3::new(a.x, a.y, -a.z));
    windings
        .iter()
        .map(|w| {
            let shape = match (&w.shape, w.model) {
                (
                    Shape::Helix {
                        origin_m,
                        axis,
                        radius_m,
                        length_m,
                        turns,
                    },
                    Model::Ring,
                ) => Shape::Helix {
                    origin_m: mirror_point(origin_m, z0),
                    axis: mirror_axis(axis),
                    radius_m: *radius_m,
                    length_m: *length_m,
                    turns: *turns,
                },
                (
                    Shape::Spiral {
                        origin_m,
                        axis,
                        inner_radius_m,
                        outer_radius_m,
                        turns,
                    },
                    Model::Ring,
                ) => Shape::Spiral {
                    origin_m: mirror_point(origin_m, z0),
                    axis: mirror_axis(axis),
                    inner_radius_m: *inner_radius_m,
                    outer_radius_m: *outer_radius_m,
                    turns: *turns,
                },
                (
                    Shape::Cone {
                        origin_m,
                        axis,
                        inner_radius_m,
                        outer_radius_m,
                        height_m,
                        turns,
                    },
                    Model::Ring,
                ) => Shape::Cone {
                    origin_m: mirror_point(origin_m, z0),
                    axis: mirror_axis(axis),
                    inner_radius_m: *inner_radius_m,
                    outer_radius_m: *outer_radius_m,
                    height_m: *height_m,
                    turns: *turns,
                },
                (
                    Shape::Ring {
                        origin_m,
                        axis,
                        radius_m,
                        count,
                    },
                    _,
                ) => Shape::Ring {
                    origin_m: mirror_point(origin_m, z0),
                    axis: mirror_axis(axis),
                    radius_m: *radius_m,
                    count: *count,
                },
                _ => {
                    let f = crate::discretise::filament_model(w);
                    let mut points_m: Vec<Point3<f64>> =
                        f.points_m.iter().map(|p| mirror_point(p, z0)).collect();
                    points_m.reverse();
                    Shape::Polyline {
                        points_m,
                        closed: f.closed,
                    }
                }
            };
            let model = match shape {
                Shape::Polyline { .. } => Model::Filament,
                _ => w.model,
            };
            Winding {
                name: format!("{}-image", w.name),
                role: Role::Other,
                model,
                wire_diameter_m: w.wire_diameter_m,
                segments_per_turn: w.segments_per_turn,
                shape,
            }
        })
        .collect()
}
