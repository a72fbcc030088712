//! The design file (TOML, version 1): parsing and validation into a [`Design`].
//!
//! # Format
//! ```toml
//! version = 1            # optional; 1 is the only version
//!
//! [[winding]]            # one table per winding, in any number
//! name = "secondary"     # optional; [A-Za-z0-9_-]+, unique; default "winding-<n>"
//! shape = "helix"        # helix | spiral | cone | ring | polyline
//! role = "secondary"     # secondary | primary | other (default other)
//! model = "ring"         # ring | filament (default ring; polylines: filament)
//! origin = [0.0, 0.0, 0.10]
//! axis = [0.0, 0.0, 1.0] # any nonzero direction; normalised
//! radius = 0.05
//! length = "400 mm"
//! turns = 800
//! wire_diameter = "AWG 26"
//! ```
//!
//! Lengths are bare numbers in metres or strings with a unit (see [`crate::file::units`]). Keys by
//! shape (besides `name`, `shape`, `role`, `model`, `wire_diameter`, all required unless said):
//! - helix: `origin`, `axis`, `radius`, `length`, `turns` (positive real),
//!   `segments_per_turn` (optional)
//! - spiral: `origin`, `axis`, `inner_radius`, `outer_radius`, `turns`, `segments_per_turn`
//! - cone: as spiral, plus `height` (axial rise from start to end)
//! - ring: `origin`, `axis`, `radius`, `turns` (optional whole number of coincident turns,
//!   default 1), `segments_per_turn`
//! - polyline: `points` = [[x, y, z], ...] in absolute coordinates, `closed` (default false)
//! - on a helix, spiral or cone with `role = "primary"` only: `tap_turns` (optional; the turns in
//!   use, a positive number up to `turns`, fractional allowed) and `tap_from` (optional, with
//!   `tap_turns`: the end they count from, `"outer"` (default) or `"inner"` for a spiral or
//!   cone, `"top"` (default) or `"bottom"` for a helix); see [`crate::model::winding::Tap`]
//!
//! Besides `[[winding]]`, a design may have `[[electrode]]` tables and a `[ground]` table (keys
//! and units in [`crate::file::electrode`]), a `[drive]` table (in [`crate::file::drive`]) and a
//! `[clearance]` table of thresholds and search settings (in [`crate::file::clearance`]). A design of
//! electrodes alone (no winding) is accepted.
//!
//! # Checks
//! Besides types and signs: adjacent turns must not overlap (the wire must be thinner than the
//! pitch), radii must exceed the wire radius, a spiral or cone must grow outwards, polylines need
//! enough distinct points, names are unique (across windings and electrodes), and no two wires
//! may touch (see [`crate::query::overlap::check_overlaps`]); then electrodes must not touch wires or
//! each other, nothing may reach the ground plane, and every name in `connect` and `[drive]`
//! must exist (see [`crate::file::electrode`], [`crate::file::drive`]).

use crate::error::DesignError;
use crate::file::clearance::parse_clearance;
use crate::file::dielectric::{parse_dielectrics, parse_enclosure, parse_mesh};
use crate::file::drive::parse_drive;
use crate::file::electrode::{parse_electrodes, parse_ground};
use crate::file::raw::{syntax_error, type_phrase};
use crate::file::winding::parse_winding;
use crate::model::clearance::ClearanceSettings;
use crate::model::design::{CURRENT_VERSION, Design};
use crate::model::drive::Drive;
use crate::model::media::{Media, MeshSettings};
use crate::model::winding::Winding;
use crate::query::checks::check_design;
use crate::query::media::check_media;
use std::collections::HashMap;
use toml::{Table, Value};

/// Keys allowed at the top level of a design file.
///
/// This is the one place to extend when the format grows (electrodes, ground, drive).
pub const TOP_LEVEL_KEYS: &[&str] = &[
    "version",
    "winding",
    "electrode",
    "ground",
    "drive",
    "clearance",
    "dielectric",
    "enclosure",
    "mesh",
];

/// Parse and validate the text of a design file. `source` labels messages (usually the path).
///
/// Checks run in this order, and the first failure is returned: TOML syntax, top-level keys,
/// version, presence of windings, then each winding in file order (name, shape, keys, types,
/// values, pitch), unique names, and last the overlap of wires.
pub fn parse_design(text: &str, source: &str) -> Result<Design, DesignError> {
    let mut table: Table = text
        .parse()
        .map_err(|err: toml::de::Error| syntax_error(&err, text, source))?;

    // Unknown keys first: a misspelt "windings" should be named as such, not reported as
    // "no windings".
    if let Some(key) = table
        .keys()
        .find(|key| !TOP_LEVEL_KEYS.contains(&key.as_str()))
    {
        return Err(DesignError::UnknownTopLevelKey {
            source_name: source.to_string(),
            key: key.clone(),
            allowed: TOP_LEVEL_KEYS.join(", "),
        });
    }

    let version = read_version(table.get("version"), source)?;

    let empty_file = table.is_empty();
    let electrodes = match table.remove("electrode") {
        Some(value) => parse_electrodes(value, source)?,
        None => Vec::new(),
    };
    let ground = table
        .remove("ground")
        .map(|v| parse_ground(v, source))
        .transpose()?;
    let drive = match table.remove("drive") {
        Some(value) => parse_drive(value, source)?,
        None => Drive::default(),
    };
    let media = parse_media(&mut table, source)?;
    let clearance = match table.remove("clearance") {
        Some(value) => parse_clearance(value, source)?,
        None => ClearanceSettings::default(),
    };
    // A design of electrodes alone is useful for capacitance; without either there is nothing.
    let windings_value = match table.remove("winding") {
        Some(v) => v,
        None if !electrodes.is_empty() => Value::Array(Vec::new()),
        None => {
            return Err(DesignError::NoWindings {
                source_name: source.to_string(),
                empty_file,
            });
        }
    };
    let entries = match windings_value {
        Value::Array(entries) => entries,
        Value::Table(_) => {
            return Err(top_level_type(
                source,
                "winding",
                "a single [winding] table was given; write [[winding]] (double brackets) \
                 before each winding",
            ));
        }
        other => {
            return Err(top_level_type(
                source,
                "winding",
                &format!("expected [[winding]] tables, got {}", type_phrase(&other)),
            ));
        }
    };
    if entries.is_empty() && electrodes.is_empty() {
        return Err(DesignError::NoWindings {
            source_name: source.to_string(),
            empty_file: false,
        });
    }

    let mut windings: Vec<Winding> = Vec::with_capacity(entries.len());
    // Name -> 1-based number of the winding that took it first.
    let mut taken: HashMap<String, usize> = HashMap::new();
    for (idx, entry) in entries.into_iter().enumerate() {
        let number = idx + 1;
        let Value::Table(entry) = entry else {
            return Err(DesignError::WrongType {
                source_name: source.to_string(),
                item: format!("winding #{number}"),
                key: "winding".to_string(),
                reason: format!("expected a [[winding]] table, got {}", type_phrase(&entry)),
            });
        };
        let winding = parse_winding(entry, number, source)?;
        if let Some(&first) = taken.get(&winding.name) {
            return Err(DesignError::DuplicateName {
                source_name: source.to_string(),
                item: format!("winding #{number}"),
                name: winding.name.clone(),
                first: format!("winding #{first}"),
            });
        }
        taken.insert(winding.name.clone(), number);
        windings.push(winding);
    }

    for e in &electrodes {
        if let Some(first) = taken.get(&e.name) {
            return Err(DesignError::DuplicateName {
                source_name: source.to_string(),
                item: format!("electrode '{}'", e.name),
                name: e.name.clone(),
                first: format!("winding #{first}"),
            });
        }
    }
    for (idx, e) in electrodes.iter().enumerate() {
        if let Some(j) = electrodes[..idx].iter().position(|o| o.name == e.name) {
            return Err(DesignError::DuplicateName {
                source_name: source.to_string(),
                item: format!("electrode #{}", idx + 1),
                name: e.name.clone(),
                first: format!("electrode #{}", j + 1),
            });
        }
    }

    let design = Design {
        version,
        windings,
        electrodes,
        ground,
        drive,
        clearance,
        media,
    };
    check_design(&design, source)?;
    check_media(&design, source)?;
    Ok(design)
}

/// The `[[dielectric]]`, `[enclosure]` and `[mesh]` tables (see [`crate::file::dielectric`]).
#[allow(clippy::result_large_err)]
fn parse_media(table: &mut Table, source: &str) -> Result<Media, DesignError> {
    Ok(Media {
        dielectrics: match table.remove("dielectric") {
            Some(v) => parse_dielectrics(v, source)?,
            None => Vec::new(),
        },
        enclosure: table
            .remove("enclosure")
            .map(|v| parse_enclosure(v, source))
            .transpose()?,
        mesh: match table.remove("mesh") {
            Some(v) => parse_mesh(v, source)?,
            None => MeshSettings::default(),
        },
    })
}

fn read_version(value: Option<&Value>, source: &str) -> Result<u32, DesignError> {
    match value {
        None => Ok(CURRENT_VERSION),
        Some(Value::Integer(n)) if *n == i64::from(CURRENT_VERSION) => Ok(CURRENT_VERSION),
        Some(Value::Integer(n)) => Err(DesignError::UnsupportedVersion {
            source_name: source.to_string(),
            found: n.to_string(),
        }),
        Some(other) => Err(top_level_type(
            source,
            "version",
            &format!("expected the integer 1, got {}", type_phrase(other)),
        )),
    }
}

fn top_level_type(source: &str, key: &str, reason: &str) -> DesignError {
    DesignError::WrongType {
        source_name: source.to_string(),
        item: "top level".to_string(),
        key: key.to_string(),
        reason: reason.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::file::units::awg_diameter_m;
    use crate::model::winding::{Model, Role, Shape};
    use nalgebra::Point3;

    const FILE: &str = "design.toml";

    /// The reference design of the test suite: a tall secondary and a flat spiral primary 2 cm
    /// below it.
    const GOOD: &str = r#"
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

[[winding]]
name = "primary"
shape = "spiral"
role = "primary"
origin = [0.0, 0.0, 0.08]
axis = [0.0, 0.0, 1.0]
inner_radius = "70 mm"
outer_radius = "130 mm"
turns = 6
wire_diameter = "AWG 10"
"#;

    /// A helix named "coil" with one line replaced (matched by key) or added.
    fn helix(edit: &str) -> String {
        let base = [
            ("name", r#"name = "coil""#),
            ("shape", r#"shape = "helix""#),
            ("origin", "origin = [0.0, 0.0, 0.0]"),
            ("axis", "axis = [0.0, 0.0, 1.0]"),
            ("radius", "radius = 0.05"),
            ("length", "length = 0.1"),
            ("turns", "turns = 50"),
            ("wire_diameter", "wire_diameter = 0.001"),
        ];
        with_edit(&base, edit)
    }

    fn spiral(edit: &str) -> String {
        let base = [
            ("name", r#"name = "flat""#),
            ("shape", r#"shape = "spiral""#),
            ("origin", "origin = [0.0, 0.0, 0.0]"),
            ("axis", "axis = [0.0, 0.0, 1.0]"),
            ("inner_radius", "inner_radius = 0.05"),
            ("outer_radius", "outer_radius = 0.10"),
            ("turns", "turns = 5"),
            ("wire_diameter", "wire_diameter = 0.002"),
        ];
        with_edit(&base, edit)
    }

    fn cone(edit: &str) -> String {
        let base = [
            ("name", r#"name = "funnel""#),
            ("shape", r#"shape = "cone""#),
            ("origin", "origin = [0.0, 0.0, 0.0]"),
            ("axis", "axis = [0.0, 0.0, 1.0]"),
            ("inner_radius", "inner_radius = 0.05"),
            ("outer_radius", "outer_radius = 0.10"),
            ("height", "height = 0.05"),
            ("turns", "turns = 5"),
            ("wire_diameter", "wire_diameter = 0.002"),
        ];
        with_edit(&base, edit)
    }

    fn ring(edit: &str) -> String {
        let base = [
            ("name", r#"name = "loop""#),
            ("shape", r#"shape = "ring""#),
            ("origin", "origin = [0.0, 0.0, 0.0]"),
            ("axis", "axis = [0.0, 0.0, 1.0]"),
            ("radius", "radius = 0.1"),
            ("wire_diameter", "wire_diameter = 0.001"),
        ];
        with_edit(&base, edit)
    }

    fn polyline(edit: &str) -> String {
        let base = [
            ("name", r#"name = "path""#),
            ("shape", r#"shape = "polyline""#),
            (
                "points",
                "points = [[0.0, 0.0, 0.0], [0.1, 0.0, 0.0], [0.1, 0.1, 0.0]]",
            ),
            ("wire_diameter", "wire_diameter = 0.001"),
        ];
        with_edit(&base, edit)
    }

    /// `edit` is "key = value" (replace or add), or "-key" (drop the key).
    fn with_edit(base: &[(&str, &str)], edit: &str) -> String {
        let mut lines: Vec<String> = base.iter().map(|(_, l)| l.to_string()).collect();
        if let Some(key) = edit.strip_prefix('-') {
            let at = base
                .iter()
                .position(|(k, _)| *k == key)
                .expect("key to drop");
            lines.remove(at);
        } else if !edit.is_empty() {
            let key = edit.split('=').next().unwrap().trim();
            match base.iter().position(|(k, _)| *k == key) {
                Some(at) => lines[at] = edit.to_string(),
                None => lines.push(edit.to_string()),
            }
        }
        format!("[[winding]]\n{}\n", lines.join("\n"))
    }

    fn err(text: &str) -> DesignError {
        match parse_design(text, FILE) {
            Ok(design) => panic!("expected an error, got {design:?}"),
            Err(e) => e,
        }
    }

    /// The message names the file, the item and every given part.
    fn assert_names(e: &DesignError, parts: &[&str]) {
        let msg = e.to_string();
        assert!(msg.starts_with("design.toml: "), "{msg}");
        for part in parts {
            assert!(msg.contains(part), "message lacks {part:?}: {msg}");
        }
    }

    // ---- accepted designs ----

    #[test]
    fn reference_design_parses() {
        let design = parse_design(GOOD, FILE).unwrap();
        assert_eq!(design.version, 1);
        assert_eq!(design.windings.len(), 2);
        let sec = &design.windings[0];
        assert_eq!(sec.name, "secondary");
        assert_eq!(sec.role, Role::Secondary);
        assert_eq!(sec.model, Model::Ring);
        assert_eq!(sec.wire_diameter_m, 0.0004);
        match sec.shape {
            Shape::Helix {
                radius_m,
                length_m,
                turns,
                origin_m,
                ..
            } => {
                assert_eq!((radius_m, length_m, turns), (0.05, 0.40, 800.0));
                assert_eq!(origin_m, Point3::new(0.0, 0.0, 0.10));
            }
            ref other => panic!("{other:?}"),
        }
        let pri = &design.windings[1];
        assert_eq!(pri.wire_diameter_m, awg_diameter_m(10).unwrap());
        match pri.shape {
            Shape::Spiral {
                inner_radius_m,
                outer_radius_m,
                turns,
                ..
            } => {
                assert!((inner_radius_m - 0.07).abs() < 1e-15);
                assert!((outer_radius_m - 0.13).abs() < 1e-15);
                assert_eq!(turns, 6.0);
            }
            ref other => panic!("{other:?}"),
        }
    }

    #[test]
    fn defaults_apply() {
        let design = parse_design(&ring(""), FILE).unwrap();
        let w = &design.windings[0];
        assert_eq!(w.role, Role::Other);
        assert_eq!(w.model, Model::Ring);
        assert_eq!(w.segments_per_turn, None);
        assert!(matches!(w.shape, Shape::Ring { count: 1, .. }));
        let design = parse_design(&polyline(""), FILE).unwrap();
        assert_eq!(design.windings[0].model, Model::Filament);
        assert!(matches!(
            design.windings[0].shape,
            Shape::Polyline { closed: false, .. }
        ));
    }

    #[test]
    fn every_shape_parses() {
        for text in [
            helix(""),
            spiral(""),
            cone(""),
            ring("turns = 12"),
            polyline("closed = true"),
        ] {
            parse_design(&text, FILE).unwrap_or_else(|e| panic!("{e}\n{text}"));
        }
    }

    #[test]
    fn explicit_version_one_is_accepted() {
        let design = parse_design(&format!("version = 1\n{}", ring("")), FILE).unwrap();
        assert_eq!(design.version, CURRENT_VERSION);
    }

    #[test]
    fn unnamed_winding_gets_numbered_name() {
        let design = parse_design(&ring("-name"), FILE).unwrap();
        assert_eq!(design.windings[0].name, "winding-1");
    }

    #[test]
    fn axis_is_normalised_and_any_direction() {
        let text = ring("axis = [0, 3, 4]");
        let w = &parse_design(&text, FILE).unwrap().windings[0];
        let (_, axis) = w.shape.origin_axis().unwrap();
        assert!((axis.y - 0.6).abs() < 1e-15 && (axis.z - 0.8).abs() < 1e-15);
        // Tiny and huge components must not under- or overflow the norm.
        for axis in ["[1e-300, 0.0, 0.0]", "[1e300, 1e300, 0.0]"] {
            let text = ring(&format!("axis = {axis}"));
            let w = &parse_design(&text, FILE).unwrap().windings[0];
            let (_, axis) = w.shape.origin_axis().unwrap();
            assert!((axis.norm() - 1.0).abs() < 1e-15);
        }
    }

    #[test]
    fn units_in_every_length() {
        let text = helix(r#"origin = ["1 in", "-2 cm", 0]"#)
            .replace("radius = 0.05", r#"radius = "50mm""#);
        let w = &parse_design(&text, FILE).unwrap().windings[0];
        let (origin, _) = w.shape.origin_axis().unwrap();
        assert!((origin.x - 0.0254).abs() < 1e-15 && (origin.y + 0.02).abs() < 1e-15);
        let text = polyline(r#"points = [["0 mm", "0 mm", "0 mm"], ["1 ft", 0, 0]]"#);
        match &parse_design(&text, FILE).unwrap().windings[0].shape {
            Shape::Polyline { points_m, .. } => assert!((points_m[1].x - 0.3048).abs() < 1e-15),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn ring_turns_as_whole_float_is_accepted() {
        let w = &parse_design(&ring("turns = 3.0"), FILE).unwrap().windings[0];
        assert!(matches!(w.shape, Shape::Ring { count: 3, .. }));
    }

    #[test]
    fn segments_per_turn_is_kept() {
        let w = &parse_design(&helix("segments_per_turn = 64"), FILE)
            .unwrap()
            .windings[0];
        assert_eq!(w.segments_per_turn, Some(64));
    }

    // ---- the catalogue of invalid inputs: one case per failure mode ----

    #[test]
    fn toml_syntax_error_gives_line_and_column() {
        let text = "[[winding]]\nname = \"coil\"\nradius = = 3\n";
        let e = err(text);
        match &e {
            DesignError::Syntax { line, column, .. } => {
                assert_eq!(*line, 3);
                assert_eq!(*column, 10);
            }
            other => panic!("{other:?}"),
        }
        assert_names(&e, &["syntax", "line 3", "column 10"]);
    }

    #[test]
    fn unquoted_unit_gets_a_hint() {
        let e = err(&helix("radius = 5 mm"));
        assert!(matches!(e, DesignError::Syntax { line: 6, .. }), "{e:?}");
        assert_names(&e, &["line 6", "in quotes", "\"5 mm\""]);
    }

    #[test]
    fn computed_lengths_are_shown_rounded() {
        let e = err(&spiral("turns = 30"));
        assert_names(&e, &["(0.00166667 m,"]);
    }

    #[test]
    fn duplicate_key_is_a_syntax_error() {
        let e = err(&format!("{}radius = 0.2\n", ring("")));
        assert!(matches!(e, DesignError::Syntax { line: 8, .. }), "{e:?}");
    }

    #[test]
    fn empty_file() {
        for text in ["", "   \n\n", "# only a comment\n"] {
            let e = err(text);
            assert_eq!(
                e,
                DesignError::NoWindings {
                    source_name: FILE.into(),
                    empty_file: true
                }
            );
            assert_names(&e, &["empty", "[[winding]]"]);
        }
    }

    #[test]
    fn no_windings() {
        for text in ["version = 1\n", "winding = []\n"] {
            let e = err(text);
            assert!(
                matches!(
                    e,
                    DesignError::NoWindings {
                        empty_file: false,
                        ..
                    }
                ),
                "{e:?}"
            );
            assert_names(&e, &["no windings", "[[winding]]"]);
        }
    }

    #[test]
    fn unknown_top_level_key() {
        let e = err(&format!("windings = 3\n{}", ring("")));
        assert!(matches!(e, DesignError::UnknownTopLevelKey { .. }), "{e:?}");
        assert_names(&e, &["top level", "'windings'", "version, winding"]);
    }

    #[test]
    fn winding_written_as_single_table() {
        let e = err(&ring("").replace("[[winding]]", "[winding]"));
        assert!(matches!(e, DesignError::WrongType { .. }), "{e:?}");
        assert_names(&e, &["key 'winding'", "[[winding]]"]);
    }

    #[test]
    fn winding_entry_not_a_table() {
        let e = err("winding = [1, 2]\n");
        assert_names(&e, &["winding #1", "key 'winding'", "integer 1"]);
    }

    #[test]
    fn unknown_version() {
        let e = err(&format!("version = 2\n{}", ring("")));
        assert!(matches!(e, DesignError::UnsupportedVersion { .. }), "{e:?}");
        assert_names(&e, &["key 'version'", "version 2", "version 1"]);
    }

    #[test]
    fn version_of_wrong_type() {
        let e = err(&format!("version = \"1\"\n{}", ring("")));
        assert!(matches!(e, DesignError::WrongType { .. }), "{e:?}");
        assert_names(&e, &["key 'version'", "integer 1"]);
    }

    #[test]
    fn unknown_key_lists_allowed_keys_for_shape() {
        let e = err(&helix("radious = 0.05"));
        assert!(matches!(e, DesignError::UnknownKey { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'coil'",
                "key 'radious'",
                "helix",
                "origin, axis, radius, length, pitch, turns, insulation, insulated_diameter",
            ],
        );
        // The list is the shape's own: a helix has no inner_radius.
        assert!(!e.to_string().contains("inner_radius"));
    }

    #[test]
    fn unknown_key_without_name_uses_number() {
        let text = format!("{}{}", ring(""), ring("-name").replace("radius", "radios"));
        let e = err(&text);
        assert_names(&e, &["winding #2", "key 'radios'"]);
    }

    #[test]
    fn points_on_a_helix() {
        let e = err(&helix("points = [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0]]"));
        assert!(matches!(e, DesignError::KeyNotForShape { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'points'", "helix", "polyline"]);
    }

    #[test]
    fn origin_on_a_polyline() {
        let e = err(&polyline("origin = [0.0, 0.0, 0.0]"));
        assert!(matches!(e, DesignError::KeyNotForShape { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'path'",
                "key 'origin'",
                "polyline",
                "helix, spiral, cone, ring",
            ],
        );
    }

    #[test]
    fn height_on_a_spiral() {
        let e = err(&spiral("height = 0.01"));
        assert_names(&e, &["winding 'flat'", "key 'height'", "cone"]);
    }

    #[test]
    fn segments_per_turn_on_a_polyline() {
        let e = err(&polyline("segments_per_turn = 10"));
        assert!(matches!(e, DesignError::KeyNotForShape { .. }), "{e:?}");
        assert_names(&e, &["winding 'path'", "key 'segments_per_turn'"]);
    }

    #[test]
    fn missing_required_key() {
        let e = err(&helix("-radius"));
        assert!(matches!(e, DesignError::MissingKey { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'radius'", "missing"]);
    }

    #[test]
    fn missing_shape() {
        let e = err(&helix("-shape"));
        assert_names(
            &e,
            &["winding 'coil'", "key 'shape'", "missing", "helix, spiral"],
        );
    }

    #[test]
    fn missing_wire_diameter() {
        for text in [helix("-wire_diameter"), polyline("-wire_diameter")] {
            let e = err(&text);
            assert!(matches!(e, DesignError::MissingKey { .. }), "{e:?}");
            assert_names(&e, &["key 'wire_diameter'", "missing"]);
        }
    }

    #[test]
    fn missing_origin_axis_turns_height_points() {
        for (text, key) in [
            (helix("-origin"), "origin"),
            (ring("-axis"), "axis"),
            (spiral("-turns"), "turns"),
            (cone("-height"), "height"),
            (spiral("-outer_radius"), "outer_radius"),
            (polyline("-points"), "points"),
        ] {
            let e = err(&text);
            assert!(matches!(e, DesignError::MissingKey { .. }), "{e:?}");
            assert_names(&e, &[&format!("key '{key}'"), "missing"]);
        }
    }

    #[test]
    fn wrong_type_string_for_number() {
        let e = err(&helix(r#"turns = "fifty""#));
        assert!(matches!(e, DesignError::WrongType { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'coil'",
                "key 'turns'",
                "wrong type",
                "\"fifty\"",
                "number",
            ],
        );
    }

    #[test]
    fn wrong_type_in_array_element_names_index() {
        let e = err(&helix("origin = [0.0, true, 0.0]"));
        assert_names(&e, &["winding 'coil'", "key 'origin[1]'", "boolean"]);
    }

    #[test]
    fn wrong_type_boolean_for_length() {
        let e = err(&helix("radius = true"));
        assert_names(
            &e,
            &["winding 'coil'", "key 'radius'", "wrong type", "length"],
        );
    }

    #[test]
    fn wrong_array_length() {
        let e = err(&helix("axis = [0.0, 1.0]"));
        assert_names(&e, &["winding 'coil'", "key 'axis'", "length 2"]);
    }

    #[test]
    fn name_of_wrong_type() {
        let e = err(&helix("name = 3"));
        assert_names(&e, &["winding #1", "key 'name'", "integer 3"]);
    }

    #[test]
    fn closed_of_wrong_type() {
        let e = err(&polyline(r#"closed = "yes""#));
        assert_names(&e, &["winding 'path'", "key 'closed'", "boolean"]);
    }

    #[test]
    fn negative_size() {
        let e = err(&helix("radius = -0.05"));
        assert!(matches!(e, DesignError::NotPositive { .. }), "{e:?}");
        assert_eq!(
            e.to_string(),
            "design.toml: winding 'coil': key 'radius': must be a positive length in metres, \
             got -0.05"
        );
    }

    #[test]
    fn negative_size_with_unit_shows_both() {
        let e = err(&helix(r#"radius = "-5 cm""#));
        assert_names(&e, &["key 'radius'", "\"-5 cm\"", "-0.05 m"]);
    }

    #[test]
    fn zero_size() {
        let e = err(&helix("length = 0"));
        assert!(matches!(e, DesignError::NotPositive { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'length'", "positive", "got 0"]);
    }

    #[test]
    fn nan_size() {
        let e = err(&helix("radius = nan"));
        assert!(matches!(e, DesignError::NotFinite { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'radius'", "NaN", "not finite"]);
    }

    #[test]
    fn infinite_size() {
        let e = err(&helix("radius = inf"));
        assert!(matches!(e, DesignError::NotFinite { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'radius'", "inf", "not finite"]);
    }

    #[test]
    fn overflowing_unit_length_is_infinite() {
        let e = err(&helix(r#"length = "1e400 m""#));
        assert!(matches!(e, DesignError::NotFinite { .. }), "{e:?}");
        assert_names(&e, &["key 'length'", "not finite"]);
    }

    #[test]
    fn non_finite_coordinate() {
        let e = err(&helix("origin = [0.0, -inf, 0.0]"));
        assert!(matches!(e, DesignError::NotFinite { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'origin[1]'", "-inf"]);
        let e = err(&polyline("points = [[0.0, 0.0, 0.0], [nan, 0.0, 0.0]]"));
        assert_names(&e, &["winding 'path'", "key 'points[1][0]'", "NaN"]);
    }

    #[test]
    fn zero_wire_diameter() {
        let e = err(&helix("wire_diameter = 0.0"));
        assert!(matches!(e, DesignError::NotPositive { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'wire_diameter'"]);
    }

    #[test]
    fn zero_turns() {
        let e = err(&helix("turns = 0"));
        assert!(matches!(e, DesignError::NotPositive { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'coil'",
                "key 'turns'",
                "positive number of turns",
                "got 0",
            ],
        );
    }

    #[test]
    fn negative_turns() {
        let e = err(&spiral("turns = -2.5"));
        assert!(matches!(e, DesignError::NotPositive { .. }), "{e:?}");
        assert_names(&e, &["winding 'flat'", "key 'turns'", "got -2.5"]);
    }

    #[test]
    fn nan_turns() {
        let e = err(&cone("turns = nan"));
        assert!(matches!(e, DesignError::NotFinite { .. }), "{e:?}");
        assert_names(&e, &["winding 'funnel'", "key 'turns'", "NaN"]);
    }

    #[test]
    fn too_many_turns() {
        let e = err(&helix("turns = 2e6").replace("length = 0.1", "length = 1e4"));
        assert!(matches!(e, DesignError::TooLarge { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'turns'", "at most"]);
    }

    #[test]
    fn ring_turns_must_be_whole() {
        let e = err(&ring("turns = 2.5"));
        assert!(matches!(e, DesignError::NotInteger { .. }), "{e:?}");
        assert_names(
            &e,
            &["winding 'loop'", "key 'turns'", "whole number", "got 2.5"],
        );
    }

    #[test]
    fn ring_turns_zero() {
        let e = err(&ring("turns = 0"));
        assert!(matches!(e, DesignError::NotPositive { .. }), "{e:?}");
        assert_names(&e, &["winding 'loop'", "key 'turns'", "got 0"]);
    }

    #[test]
    fn ring_turns_nan() {
        let e = err(&ring("turns = nan"));
        assert!(matches!(e, DesignError::NotFinite { .. }), "{e:?}");
        assert_names(&e, &["winding 'loop'", "key 'turns'"]);
    }

    #[test]
    fn unknown_shape() {
        let e = err(&helix(r#"shape = "solenoid""#));
        assert!(matches!(e, DesignError::UnknownValue { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'coil'",
                "key 'shape'",
                "\"solenoid\"",
                "helix, spiral, cone, ring, polyline",
            ],
        );
    }

    // ---- taps ----

    /// `text` (one winding) with `lines` appended to its table.
    fn with_lines(text: String, lines: &str) -> String {
        format!("{text}{lines}\n")
    }

    #[test]
    fn tap_keys_are_read_with_their_default_end() {
        use crate::model::winding::{Tap, TapEnd};
        let cases = [
            (
                spiral("role = \"primary\""),
                "tap_turns = 2.5",
                Tap {
                    turns: 2.5,
                    from: TapEnd::End,
                },
            ),
            (
                spiral("role = \"primary\""),
                "tap_turns = 2.5\ntap_from = \"outer\"",
                Tap {
                    turns: 2.5,
                    from: TapEnd::End,
                },
            ),
            (
                spiral("role = \"primary\""),
                "tap_turns = 5\ntap_from = \"inner\"",
                Tap {
                    turns: 5.0,
                    from: TapEnd::Start,
                },
            ),
            (
                cone("role = \"primary\""),
                "tap_turns = 1\ntap_from = \"inner\"",
                Tap {
                    turns: 1.0,
                    from: TapEnd::Start,
                },
            ),
            (
                helix("role = \"primary\""),
                "tap_turns = 12.25",
                Tap {
                    turns: 12.25,
                    from: TapEnd::End,
                },
            ),
            (
                helix("role = \"primary\""),
                "tap_turns = 50\ntap_from = \"bottom\"",
                Tap {
                    turns: 50.0,
                    from: TapEnd::Start,
                },
            ),
        ];
        for (base, lines, want) in cases {
            let text = with_lines(base, lines);
            let w = &parse_design(&text, FILE)
                .unwrap_or_else(|e| panic!("{e}\n{text}"))
                .windings[0];
            assert_eq!(w.tap, Some(want), "{text}");
        }
        assert_eq!(
            parse_design(&spiral(""), FILE).unwrap().windings[0].tap,
            None
        );
    }

    #[test]
    fn tap_on_a_ring() {
        let e = err(&with_lines(ring("role = \"primary\""), "tap_turns = 1"));
        assert!(matches!(e, DesignError::KeyNotForShape { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'loop'",
                "key 'tap_turns'",
                "ring",
                "helix, spiral, cone",
            ],
        );
    }

    #[test]
    fn tap_on_a_polyline() {
        let e = err(&with_lines(
            polyline("role = \"primary\""),
            "tap_from = \"outer\"",
        ));
        assert!(matches!(e, DesignError::KeyNotForShape { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'path'",
                "key 'tap_from'",
                "polyline",
                "helix, spiral, cone",
            ],
        );
    }

    #[test]
    fn tap_on_a_secondary() {
        let e = err(&with_lines(helix("role = \"secondary\""), "tap_turns = 10"));
        assert!(matches!(e, DesignError::BadTap { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'coil'",
                "key 'tap_turns'",
                "role is secondary",
                "primary",
            ],
        );
    }

    #[test]
    fn tap_without_a_role() {
        let e = err(&with_lines(spiral(""), "tap_turns = 2"));
        assert!(matches!(e, DesignError::BadTap { .. }), "{e:?}");
        assert_names(&e, &["winding 'flat'", "key 'tap_turns'", "role is other"]);
    }

    #[test]
    fn tap_beyond_the_turns() {
        let e = err(&with_lines(spiral("role = \"primary\""), "tap_turns = 5.5"));
        assert!(matches!(e, DesignError::BadTap { .. }), "{e:?}");
        assert_names(
            &e,
            &["winding 'flat'", "key 'tap_turns'", "5.5 turns", "5 turns"],
        );
    }

    #[test]
    fn tap_of_no_turns() {
        for value in ["0", "-1.5"] {
            let e = err(&with_lines(
                spiral("role = \"primary\""),
                &format!("tap_turns = {value}"),
            ));
            assert!(matches!(e, DesignError::NotPositive { .. }), "{e:?}");
            assert_names(&e, &["winding 'flat'", "key 'tap_turns'", value]);
        }
    }

    #[test]
    fn tap_not_finite() {
        let e = err(&with_lines(cone("role = \"primary\""), "tap_turns = nan"));
        assert!(matches!(e, DesignError::NotFinite { .. }), "{e:?}");
        assert_names(&e, &["winding 'funnel'", "key 'tap_turns'"]);
    }

    #[test]
    fn tap_below_the_smallest() {
        let e = err(&with_lines(
            spiral("role = \"primary\""),
            "tap_turns = 1e-8",
        ));
        assert!(matches!(e, DesignError::BadTap { .. }), "{e:?}");
        assert_names(&e, &["winding 'flat'", "key 'tap_turns'", "smallest tap"]);
    }

    #[test]
    fn tap_turns_of_wrong_type() {
        let e = err(&with_lines(
            spiral("role = \"primary\""),
            "tap_turns = \"3 turns\"",
        ));
        assert!(matches!(e, DesignError::WrongType { .. }), "{e:?}");
        assert_names(&e, &["winding 'flat'", "key 'tap_turns'"]);
    }

    #[test]
    fn tap_from_without_tap_turns() {
        let e = err(&with_lines(
            spiral("role = \"primary\""),
            "tap_from = \"inner\"",
        ));
        assert!(matches!(e, DesignError::BadTap { .. }), "{e:?}");
        assert_names(&e, &["winding 'flat'", "key 'tap_from'", "tap_turns"]);
    }

    #[test]
    fn tap_from_of_a_helix_on_a_spiral() {
        let e = err(&with_lines(
            spiral("role = \"primary\""),
            "tap_turns = 2\ntap_from = \"top\"",
        ));
        assert!(matches!(e, DesignError::UnknownValue { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'flat'",
                "key 'tap_from'",
                "\"top\"",
                "outer, inner",
            ],
        );
    }

    #[test]
    fn tap_from_of_a_spiral_on_a_helix() {
        let e = err(&with_lines(
            helix("role = \"primary\""),
            "tap_turns = 2\ntap_from = \"outer\"",
        ));
        assert!(matches!(e, DesignError::UnknownValue { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'coil'",
                "key 'tap_from'",
                "\"outer\"",
                "top, bottom",
            ],
        );
    }

    #[test]
    fn tap_from_of_wrong_type() {
        let e = err(&with_lines(
            helix("role = \"primary\""),
            "tap_turns = 2\ntap_from = 1",
        ));
        assert!(matches!(e, DesignError::WrongType { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'tap_from'"]);
    }

    #[test]
    fn unknown_role() {
        let e = err(&helix(r#"role = "tertiary""#));
        assert!(matches!(e, DesignError::UnknownValue { .. }), "{e:?}");
        assert_names(
            &e,
            &["winding 'coil'", "key 'role'", "secondary, primary, other"],
        );
    }

    #[test]
    fn unknown_model() {
        let e = err(&helix(r#"model = "fem""#));
        assert!(matches!(e, DesignError::UnknownValue { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'model'", "ring, filament"]);
    }

    #[test]
    fn ring_model_on_a_polyline() {
        let e = err(&polyline(r#"model = "ring""#));
        assert!(matches!(e, DesignError::ModelNotForShape { .. }), "{e:?}");
        assert_names(&e, &["winding 'path'", "key 'model'", "filament"]);
    }

    #[test]
    fn zero_axis() {
        let e = err(&helix("axis = [0.0, 0.0, 0.0]"));
        assert!(matches!(e, DesignError::ZeroAxis { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'axis'", "zero length"]);
    }

    #[test]
    fn non_finite_axis() {
        let e = err(&helix("axis = [0.0, 0.0, inf]"));
        assert!(matches!(e, DesignError::NotFinite { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'axis[2]'"]);
    }

    #[test]
    fn duplicate_names() {
        let text = format!("{}{}", ring(""), ring("origin = [0.0, 0.0, 1.0]"));
        let e = err(&text);
        assert!(matches!(e, DesignError::DuplicateName { .. }), "{e:?}");
        assert_names(
            &e,
            &["winding #2", "key 'name'", "'loop'", "winding #1", "unique"],
        );
    }

    #[test]
    fn default_name_can_collide_and_is_reported() {
        let text = format!(
            "{}{}",
            ring("name = \"winding-2\""),
            ring("-name").replace("origin = [0.0, 0.0, 0.0]", "origin = [0.0, 0.0, 1.0]",)
        );
        let e = err(&text);
        assert!(matches!(e, DesignError::DuplicateName { .. }), "{e:?}");
        assert_names(&e, &["winding #2", "'winding-2'"]);
    }

    #[test]
    fn bad_name() {
        for name in ["prim ary", "", "sek\u{fc}nd\u{e4}r", "a.b"] {
            let e = err(&helix(&format!("name = \"{name}\"")));
            assert!(matches!(e, DesignError::BadName { .. }), "{e:?}");
            assert_names(&e, &["winding #1", "key 'name'", &format!("\"{name}\"")]);
        }
    }

    #[test]
    fn bad_name_message_lists_allowed_characters() {
        let e = err(&helix(r#"name = "a b""#));
        assert_names(&e, &["letters A-Z a-z, digits, '_' or '-'"]);
    }

    #[test]
    fn unknown_unit() {
        let e = err(&helix(r#"radius = "5 yd""#));
        assert!(matches!(e, DesignError::BadUnit { .. }), "{e:?}");
        assert_names(
            &e,
            &["winding 'coil'", "key 'radius'", "'yd'", "m, cm, mm, um"],
        );
    }

    #[test]
    fn gauge_for_a_radius() {
        let e = err(&helix(r#"radius = "AWG 10""#));
        assert!(matches!(e, DesignError::BadUnit { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'radius'", "wire_diameter"]);
    }

    #[test]
    fn bad_gauge() {
        let e = err(&helix(r#"wire_diameter = "AWG 50""#));
        assert_names(&e, &["winding 'coil'", "key 'wire_diameter'", "1 to 40"]);
    }

    #[test]
    fn helix_wire_thicker_than_pitch() {
        // 100 turns on 0.1 m: pitch 1 mm, the wire is 1.2 mm.
        let e = err(&helix("turns = 100").replace("0.001", "0.0012"));
        assert!(
            matches!(e, DesignError::WireThickerThanPitch { .. }),
            "{e:?}"
        );
        assert_names(
            &e,
            &[
                "winding 'coil'",
                "key 'length'",
                "pitch",
                "length / turns",
                // The smallest valid length for bare 1.2 mm wire, and the way to enamel.
                "a length above 0.12 m for 100 turns",
                "insulated_diameter",
            ],
        );
    }

    // ---- builder inputs: pitch, insulation, turn spacing ----

    /// The shape of a design's only winding.
    fn shape_of(text: &str) -> Shape {
        parse_design(text, FILE).unwrap().windings[0].shape.clone()
    }

    fn helix_length(text: &str) -> f64 {
        match shape_of(text) {
            Shape::Helix { length_m, .. } => length_m,
            s => panic!("not a helix: {s:?}"),
        }
    }

    #[test]
    fn helix_pitch_gives_the_length() {
        // 50 turns at a 2 mm pitch are 0.1 m long, the same helix as length = 0.1.
        let by_pitch = helix("length = 0.1").replace("length = 0.1", r#"pitch = "2 mm""#);
        assert!((helix_length(&by_pitch) - 0.1).abs() < 1e-15);
        let both = helix(r#"pitch = "2 mm""#);
        assert_names(&err(&both), &["key 'pitch'", "not both"]);
    }

    #[test]
    fn close_wound_helix_from_the_insulation() {
        // 50 turns of 1 mm wire with 0.05 mm of enamel: 1.1 mm pitch, 55 mm long.
        let text = helix("-length") + "insulation = \"0.05 mm\"\n";
        assert!((helix_length(&text) - 0.055).abs() < 1e-12);
        let text = helix("-length") + "insulated_diameter = \"1.1 mm\"\n";
        assert!((helix_length(&text) - 0.055).abs() < 1e-12);
        // A length of exactly turns x insulated diameter is close-wound and accepted.
        let text = helix("length = 0.055") + "insulated_diameter = \"1.1 mm\"\n";
        assert!((helix_length(&text) - 0.055).abs() < 1e-15);
        // Heavy-build enamel by AWG from the table (AWG 24: 0.0218 in overall, from memory).
        let text = helix(r#"wire_diameter = "AWG 24""#).replace("length = 0.1\n", "")
            + "insulation = \"heavy\"\n";
        assert!((helix_length(&text) - 50.0 * 0.0218 * 0.0254).abs() < 1e-12);
    }

    #[test]
    fn helix_pitch_below_the_insulated_wire_names_the_smallest_length() {
        // 50 turns in 50 mm: 1 mm pitch, but the enamelled wire is 1.1 mm across.
        let text = helix("length = 0.05") + "insulated_diameter = \"1.1 mm\"\n";
        let e = err(&text);
        assert!(
            matches!(e, DesignError::WireThickerThanPitch { .. }),
            "{e:?}"
        );
        assert_names(
            &e,
            &[
                "key 'length'",
                "0.0011 m insulated",
                "smallest valid pitch is the insulated diameter, 0.0011 m",
                "a length of 0.055 m for 50 turns",
            ],
        );
        // The insulated wire must be thicker than the bare one; no length and no insulation
        // says what to give.
        let thin = helix("-length") + "insulated_diameter = \"0.9 mm\"\n";
        assert_names(
            &err(&thin),
            &["key 'insulated_diameter'", "thicker than the bare"],
        );
        assert_names(
            &err(&helix("-length")),
            &["key 'length'", "pitch", "insulation"],
        );
        let no_gauge = helix("-length") + "insulation = \"heavy\"\n";
        assert_names(&err(&no_gauge), &["key 'insulation'", "AWG 24"]);
    }

    #[test]
    fn spiral_and_cone_from_turn_spacing() {
        // 5 turns at 10 mm radial spacing from 50 mm end at 100 mm.
        let text = spiral("-outer_radius") + "turn_spacing = \"10 mm\"\n";
        match shape_of(&text) {
            Shape::Spiral { outer_radius_m, .. } => assert!((outer_radius_m - 0.1).abs() < 1e-15),
            s => panic!("{s:?}"),
        }
        // A cone's spacing runs along the slant: 5 x 13 mm = 65 mm of slant over a 50 mm rise
        // (height 0.05) leave sqrt(65^2 - 50^2) mm = 41.53 mm of radial growth.
        let text = cone("-outer_radius") + "turn_spacing = \"13 mm\"\n";
        match shape_of(&text) {
            Shape::Cone { outer_radius_m, .. } => {
                let expected = 0.05 + (0.065f64.powi(2) - 0.05f64.powi(2)).sqrt();
                assert!((outer_radius_m - expected).abs() < 1e-15);
            }
            s => panic!("{s:?}"),
        }
        let short = cone("-outer_radius") + "turn_spacing = \"9 mm\"\n";
        assert_names(&err(&short), &["key 'turn_spacing'", "exceed the height"]);
        let both = spiral("turn_spacing = 0.01");
        assert_names(&err(&both), &["key 'turn_spacing'", "not both"]);
    }

    #[test]
    fn wire_equal_to_pitch_is_refused() {
        // Bare wires at a pitch of exactly their diameter touch.
        let e = err(&helix("turns = 100"));
        assert!(
            matches!(e, DesignError::WireThickerThanPitch { .. }),
            "{e:?}"
        );
    }

    #[test]
    fn spiral_wire_thicker_than_radial_pitch() {
        // (0.10 - 0.05) / 30 = 1.7 mm radial pitch, the wire is 2 mm.
        let e = err(&spiral("turns = 30"));
        assert!(
            matches!(e, DesignError::WireThickerThanPitch { .. }),
            "{e:?}"
        );
        assert_names(
            &e,
            &[
                "winding 'flat'",
                "key 'outer_radius'",
                "(outer_radius - inner_radius) / turns",
                "an outer radius above 0.11 m",
            ],
        );
    }

    #[test]
    fn cone_wire_thicker_than_slant_pitch() {
        // sqrt(0.05^2 + 0.05^2) / 40 = 1.77 mm along the slant, the wire is 2 mm.
        let e = err(&cone("turns = 40"));
        assert!(
            matches!(e, DesignError::WireThickerThanPitch { .. }),
            "{e:?}"
        );
        assert_names(&e, &["winding 'funnel'", "key 'outer_radius'", "slant"]);
        // 30 turns give 2.36 mm along the slant although the radial pitch is only 1.7 mm.
        parse_design(&cone("turns = 30"), FILE).unwrap();
    }

    #[test]
    fn spiral_outer_not_above_inner() {
        for outer in ["0.05", "0.04"] {
            let e = err(&spiral(&format!("outer_radius = {outer}")));
            assert!(matches!(e, DesignError::RadiiOrder { .. }), "{e:?}");
            assert_names(
                &e,
                &["winding 'flat'", "key 'outer_radius'", "inner_radius"],
            );
        }
    }

    #[test]
    fn cone_outer_not_above_inner() {
        let e = err(&cone("outer_radius = 0.03"));
        assert!(matches!(e, DesignError::RadiiOrder { .. }), "{e:?}");
        assert_names(&e, &["winding 'funnel'", "key 'outer_radius'"]);
    }

    #[test]
    fn spiral_inner_radius_within_wire() {
        let e = err(&spiral("inner_radius = 0.001"));
        assert!(matches!(e, DesignError::RadiusBelowWire { .. }), "{e:?}");
        assert_names(&e, &["winding 'flat'", "key 'inner_radius'", "wire radius"]);
    }

    #[test]
    fn helix_radius_within_wire() {
        let e = err(&helix("radius = 0.0004"));
        assert!(matches!(e, DesignError::RadiusBelowWire { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'radius'"]);
    }

    #[test]
    fn cone_height_zero() {
        let e = err(&cone("height = 0"));
        assert!(matches!(e, DesignError::NotPositive { .. }), "{e:?}");
        assert_names(&e, &["winding 'funnel'", "key 'height'"]);
    }

    #[test]
    fn polyline_too_few_points() {
        let e = err(&polyline("points = [[0.0, 0.0, 0.0]]"));
        assert!(
            matches!(
                e,
                DesignError::TooFewPoints {
                    found: 1,
                    needed: 2,
                    ..
                }
            ),
            "{e:?}"
        );
        assert_names(
            &e,
            &["winding 'path'", "key 'points'", "at least 2", "got 1"],
        );
    }

    #[test]
    fn closed_polyline_too_few_points() {
        let text = polyline("points = [[0.0, 0.0, 0.0], [0.1, 0.0, 0.0]]");
        let e = err(&format!("{text}closed = true\n"));
        assert!(
            matches!(
                e,
                DesignError::TooFewPoints {
                    found: 2,
                    needed: 3,
                    ..
                }
            ),
            "{e:?}"
        );
        assert_names(
            &e,
            &["winding 'path'", "key 'points'", "closed", "at least 3"],
        );
    }

    #[test]
    fn polyline_coincident_points() {
        let e = err(&polyline(
            r#"points = [[0.0, 0.0, 0.0], [0.05, 0.0, 0.0], ["50 mm", 0.0, 0.0]]"#,
        ));
        assert!(
            matches!(
                e,
                DesignError::CoincidentPoints {
                    index_a: 1,
                    index_b: 2,
                    ..
                }
            ),
            "{e:?}"
        );
        assert_names(
            &e,
            &["winding 'path'", "key 'points'", "points[1]", "points[2]"],
        );
    }

    #[test]
    fn closed_polyline_repeating_first_point() {
        let text = polyline(
            "points = [[0.0, 0.0, 0.0], [0.1, 0.0, 0.0], [0.1, 0.1, 0.0], [0.0, 0.0, 0.0]]",
        );
        let e = err(&format!("{text}closed = true\n"));
        assert!(
            matches!(
                e,
                DesignError::CoincidentPoints {
                    index_a: 3,
                    index_b: 0,
                    closing: true,
                    ..
                }
            ),
            "{e:?}"
        );
        assert_names(&e, &["winding 'path'", "key 'points'", "do not repeat"]);
    }

    #[test]
    fn segments_per_turn_below_three() {
        let e = err(&helix("segments_per_turn = 2"));
        assert!(matches!(e, DesignError::TooFewSegments { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'coil'",
                "key 'segments_per_turn'",
                "at least 3",
                "got 2",
            ],
        );
    }

    #[test]
    fn segments_per_turn_fractional() {
        let e = err(&ring("segments_per_turn = 12.5"));
        assert!(matches!(e, DesignError::NotInteger { .. }), "{e:?}");
        assert_names(&e, &["winding 'loop'", "key 'segments_per_turn'", "12.5"]);
    }

    #[test]
    fn filament_model_too_large() {
        let text = helix("segments_per_turn = 100000")
            .replace("turns = 50", "turns = 1000")
            .replace("length = 0.1", "length = 2.0");
        let e = err(&format!("{text}model = \"filament\"\n"));
        assert!(matches!(e, DesignError::TooLarge { .. }), "{e:?}");
        assert_names(&e, &["winding 'coil'", "key 'segments_per_turn'"]);
    }

    #[test]
    fn windings_whose_wires_intersect() {
        // A ring of radius 50 mm in the plane z = 20 mm cuts straight through the helix wire.
        let text = format!(
            "{}{}",
            helix(""),
            ring("origin = [0.0, 0.0, 0.02]").replace("radius = 0.1", "radius = 0.05")
        );
        let e = err(&text);
        assert!(matches!(e, DesignError::Overlap { .. }), "{e:?}");
        assert_names(
            &e,
            &[
                "winding 'loop'",
                "key 'origin'",
                "winding 'coil'",
                "touches or crosses",
            ],
        );
    }

    #[test]
    fn reference_design_is_clear_of_overlaps() {
        // Checked by parse_design itself; here the gap is pinned too: 20 mm between the planes
        // of the spiral and the helix start, less both wire radii, and the spiral lies outside
        // the helix radially, so the gap is larger than that.
        let design = parse_design(GOOD, FILE).unwrap();
        let gap =
            crate::query::overlap::min_surface_gap_m(&design.windings[0], &design.windings[1]);
        assert!(gap > 0.02 - 0.0002 - 0.0013, "{gap}");
    }
}
