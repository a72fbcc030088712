//! The checks between the parts of a design: wires apart, electrodes clear of the wires, of each
//! other and of the ground plane, and a drive that names existing conductors.

use crate::error::DesignError;
use crate::model::design::Design;
use crate::model::drive::{DriveKind, DriveNeeds, PotentialSpec};
use crate::model::electrode::{Electrode, End};
use crate::model::winding::{Role, Shape};
use crate::query::contact::{self, Reach};
use crate::query::overlap::{
    PreparedWire, check_overlaps, check_self_overlap, min_surface_gap_prepared_m, overlap_error,
    wires_touch_prepared,
};
use nalgebra::Point3;

/// The checks between the parts of a design: wires apart, electrodes clear of the wires, of
/// each other and of the ground plane, and a drive that names existing conductors.
///
/// `parse_design` runs them; a caller that edits a parsed design many times (a sweep)
/// prepares the base once ([`PreparedDesign`]) and checks only what changed. `source` labels
/// messages.
pub fn check_design(design: &Design, source: &str) -> Result<(), DesignError> {
    check_overlaps(design, source)?;
    check_electrodes(design, &Changed::all(design), source)?;
    check_drive(design, source)
}

/// Which windings and electrodes (file order) a variant of a base design changes.
#[derive(Debug, Clone, PartialEq, Eq)]
struct Changed {
    windings: Vec<bool>,
    electrodes: Vec<bool>,
}

impl Changed {
    /// Everything: a design checked alone.
    fn all(design: &Design) -> Changed {
        Changed {
            windings: vec![true; design.windings.len()],
            electrodes: vec![true; design.electrodes.len()],
        }
    }

    /// The items of `design` that differ from `base`'s (both of the same items in order).
    fn between(base: &Design, design: &Design) -> Changed {
        Changed {
            windings: design
                .windings
                .iter()
                .enumerate()
                .map(|(i, w)| base.windings.get(i) != Some(w))
                .collect(),
            electrodes: design
                .electrodes
                .iter()
                .enumerate()
                .map(|(i, e)| base.electrodes.get(i) != Some(e))
                .collect(),
        }
    }
}

/// A base design prepared for the checks of many variants (a sweep, a goal seek): each
/// winding's wire is prepared once ([`PreparedWire`]: box, meridian trace, and the sampled
/// centreline with its tree, built on first use) and shared read-only across variants and
/// threads. A variant is checked only in the pairs that involve a part it changes; an
/// unchanged winding's prepared wire is reused, a changed one prepared for the variant alone.
#[derive(Debug)]
pub struct PreparedDesign {
    base: Design,
    wires: Vec<PreparedWire>,
}

impl PreparedDesign {
    /// Prepare `base` (a valid design: its own checks passed). Nothing is sampled yet.
    pub fn new(base: &Design) -> PreparedDesign {
        PreparedDesign {
            base: base.clone(),
            wires: base.windings.iter().map(PreparedWire::new).collect(),
        }
    }

    /// The base design.
    pub fn base(&self) -> &Design {
        &self.base
    }

    /// The checks of [`check_design`] on `design`, a variant of the base with the same
    /// windings and electrodes in the same order, over the pairs that involve a changed part
    /// only (pairs of unchanged parts passed in the base). `source` labels messages.
    pub fn check(&self, design: &Design, source: &str) -> Result<(), DesignError> {
        if design.windings.len() != self.base.windings.len()
            || design.electrodes.len() != self.base.electrodes.len()
        {
            return check_design(design, source);
        }
        let changed = Changed::between(&self.base, design);
        let fresh: Vec<Option<PreparedWire>> = design
            .windings
            .iter()
            .zip(&changed.windings)
            .map(|(w, &c)| c.then(|| PreparedWire::new(w)))
            .collect();
        let wire = |i: usize| fresh[i].as_ref().unwrap_or(&self.wires[i]);
        for (j, wj) in design.windings.iter().enumerate() {
            if changed.windings[j] {
                check_self_overlap(wj, source)?;
            }
            for (i, wi) in design.windings[..j].iter().enumerate() {
                if !(changed.windings[i] || changed.windings[j]) {
                    continue;
                }
                if let Some(c) = wires_touch_prepared(wire(i), wire(j)) {
                    return Err(overlap_error(wi, wj, &c, source));
                }
            }
        }
        check_electrodes(design, &changed, source)?;
        check_drive(design, source)
    }

    /// The smallest distance (m) between the surfaces of windings `a` and `b` of `design` (a
    /// variant of the base, as for [`PreparedDesign::check`]), as
    /// [`crate::query::overlap::min_surface_gap_m`], with the prepared wires of unchanged
    /// windings.
    pub fn gap_m(&self, design: &Design, a: usize, b: usize) -> f64 {
        let prepared = |i: usize| -> Option<&PreparedWire> {
            let w = design.windings.get(i)?;
            self.wires.get(i).filter(|p| p.winding() == w)
        };
        let (fresh_a, fresh_b);
        let pa = match prepared(a) {
            Some(p) => p,
            None => {
                fresh_a = PreparedWire::new(&design.windings[a]);
                &fresh_a
            }
        };
        let pb = match prepared(b) {
            Some(p) => p,
            None => {
                fresh_b = PreparedWire::new(&design.windings[b]);
                &fresh_b
            }
        };
        min_surface_gap_prepared_m(pa, pb)
    }
}

/// Electrode-winding, electrode-electrode and ground-plane checks of a design, over the pairs
/// that involve a changed part.
fn check_electrodes(design: &Design, changed: &Changed, source: &str) -> Result<(), DesignError> {
    let item = |e: &Electrode| format!("electrode '{}'", e.name);
    for (idx, e) in design.electrodes.iter().enumerate() {
        let e_changed = changed.electrodes[idx];
        if let Some(t) = &e.connect
            && e_changed
            && !design.windings.iter().any(|w| w.name == t.winding)
        {
            return Err(DesignError::UnknownConductor {
                source_name: source.to_string(),
                item: item(e),
                key: "connect".into(),
                name: t.winding.as_str().into(),
                wanted: "a winding",
                known: names(design.windings.iter().map(|w| w.name.as_str())).into(),
            });
        }
        // Windings: the wire must clear the surface (closed-form distances, see contact).
        for (k, w) in design.windings.iter().enumerate() {
            if !(e_changed || changed.windings[k]) {
                continue;
            }
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
        for (k, other) in design.electrodes[..idx].iter().enumerate() {
            if !(e_changed || changed.electrodes[k]) {
                continue;
            }
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
        if let Some(g) = design.ground
            && e_changed
        {
            let lowest = e.shape.lowest_z_m();
            // Within the contact check's tolerance of the plane is touching it (as the
            // finite-element model's check of its parts has it).
            if lowest <= g.z_m + contact::ELECTRODE_TOLERANCE_REL * e.shape.size_m() {
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
        for (k, w) in design.windings.iter().enumerate() {
            if !changed.windings[k] {
                continue;
            }
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
    if design.drive.kind != DriveKind::Explicit {
        for (role, word) in [(Role::Secondary, "secondary"), (Role::Primary, "primary")] {
            let n = design.windings.iter().filter(|w| w.role == role).count();
            if n != 1 {
                return Err(DesignError::BadSetting {
                    source_name: source.to_string(),
                    item: "drive".to_string(),
                    key: "kind".to_string(),
                    reason: format!(
                        "a drive model needs exactly one winding with role = \"{word}\", and \
                         the design has {n}; set `role` on the windings"
                    ),
                });
            }
        }
    }
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
