//! The checks between the parts of a design: wires apart, electrodes clear of the wires, of each
//! other and of the ground plane, and a drive that names existing conductors.

use crate::error::DesignError;
use crate::model::design::Design;
use crate::model::drive::{DriveNeeds, PotentialSpec};
use crate::model::electrode::{Electrode, End};
use crate::model::winding::{Role, Shape};
use crate::query::contact::{self, Reach};
use crate::query::overlap::check_overlaps;
use nalgebra::Point3;

/// The checks between the parts of a design: wires apart, electrodes clear of the wires, of
/// each other and of the ground plane, and a drive that names existing conductors.
///
/// [`crate::file::design::parse_design`] runs them; a caller that edits a parsed design (a sweep point) runs them
/// again on the result. `source` labels messages.
pub fn check_design(design: &Design, source: &str) -> Result<(), DesignError> {
    check_overlaps(design, source)?;
    check_electrodes(design, source)?;
    check_drive(design, source)
}

/// Electrode-winding, electrode-electrode and ground-plane checks of a parsed design.
pub(crate) fn check_electrodes(design: &Design, source: &str) -> Result<(), DesignError> {
    let item = |e: &Electrode| format!("electrode '{}'", e.name);
    for (idx, e) in design.electrodes.iter().enumerate() {
        if let Some(t) = &e.connect {
            if !design.windings.iter().any(|w| w.name == t.winding) {
                return Err(DesignError::UnknownConductor {
                    source_name: source.to_string(),
                    item: item(e),
                    key: "connect".into(),
                    name: t.winding.as_str().into(),
                    wanted: "a winding",
                    known: names(design.windings.iter().map(|w| w.name.as_str())).into(),
                });
            }
        }
        // Windings: the wire must clear the surface (closed-form distances, see contact).
        for w in &design.windings {
            let reach = contact::wire_electrode(w, &e.shape);
            if let Some((how, at)) = refusal(reach) {
                return Err(DesignError::ElectrodeIntersects {
                    source_name: source.to_string(),
                    item: item(e),
                    key: "origin",
                    contact: format!("{how} the wire of winding '{}'", w.name),
                    near_m: at.coords.into(),
                });
            }
        }
        // Earlier electrodes: surfaces apart and neither inside the other.
        for other in &design.electrodes[..idx] {
            if let Some((how, at)) = refusal(contact::electrode_electrode(&e.shape, &other.shape)) {
                return Err(DesignError::ElectrodeIntersects {
                    source_name: source.to_string(),
                    item: item(e),
                    key: "origin",
                    contact: format!("{how} {}", item(other)),
                    near_m: at.coords.into(),
                });
            }
        }
        if let Some(g) = design.ground {
            let lowest = e.shape.lowest_z_m();
            if lowest <= g.z_m {
                return Err(DesignError::BelowGround {
                    source_name: source.to_string(),
                    item: item(e),
                    key: "origin",
                    lowest_z_m: lowest,
                    ground_z_m: g.z_m,
                });
            }
        }
    }
    if let Some(g) = design.ground {
        for w in &design.windings {
            if let Some((_, at)) = refusal(contact::wire_ground(w, g.z_m)) {
                return Err(DesignError::BelowGround {
                    source_name: source.to_string(),
                    item: format!("winding '{}'", w.name),
                    key: if matches!(w.shape, Shape::Polyline { .. }) {
                        "points"
                    } else {
                        "origin"
                    },
                    lowest_z_m: at.z - w.wire_radius_m(),
                    ground_z_m: g.z_m,
                });
            }
        }
    }
    Ok(())
}

/// The wording of a refused contact check and the point it names; None when apart.
fn refusal(reach: Reach) -> Option<(String, Point3<f64>)> {
    match reach {
        Reach::Clear => None,
        Reach::Contact(p) => Some(("touches or crosses".to_string(), p)),
        Reach::WithinTolerance(p, tol) => Some((
            format!(
                "comes within {} m (the resolution of the contact check) of",
                crate::error::sig(tol)
            ),
            p,
        )),
        Reach::Undecided(p) => Some((
            format!(
                "could not be shown apart (the contact check stopped after {} evaluations) from",
                contact::MAX_EVALUATIONS
            ),
            p,
        )),
    }
}

pub(crate) fn names<'a>(it: impl Iterator<Item = &'a str>) -> String {
    let v: Vec<&str> = it.collect();
    if v.is_empty() {
        "(none)".to_string()
    } else {
        v.join(", ")
    }
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
