//! Errors of the geometry crate, the one error type for every input file (design, sweep, seek):
//! each names the file, the item and the key, and says what to fix.
//!
//! Every message starts `<file>: <item>: key '<key>': ...`, where the item is
//! `winding '<name>'`, or `winding #<n>` (counted from 1 in file order) for a winding without a
//! usable name, or `top level` for keys outside any winding. Messages about the whole file
//! (syntax, no windings) start with the file label alone.

/// A design file that cannot be used. Each variant's doc says how to fix it.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum DesignError {
    /// The text is not valid TOML. Fix the syntax at the line and column given.
    #[error("{source_name}: TOML syntax error at line {line}, column {column}: {reason}")]
    Syntax {
        /// File label.
        source_name: String,
        /// Line of the error, counted from 1.
        line: usize,
        /// Column of the error in characters, counted from 1.
        column: usize,
        /// What the TOML parser expected.
        reason: String,
    },

    /// The file describes no winding. Add at least one `[[winding]]` table.
    #[error(
        "{source_name}: {}; add at least one [[winding]] table with name, shape, sizes and \
         wire_diameter",
        if *.empty_file { "the file is empty" } else { "the design has no windings" }
    )]
    NoWindings {
        /// File label.
        source_name: String,
        /// Whether the file held nothing but blanks and comments.
        empty_file: bool,
    },

    /// A key outside any table that the design format does not know. Check its spelling.
    #[error(
        "{source_name}: top level: key '{key}': unknown key; allowed top-level keys: {allowed}"
    )]
    UnknownTopLevelKey {
        /// File label.
        source_name: String,
        /// The key as written.
        key: String,
        /// The allowed top-level keys, comma separated.
        allowed: String,
    },

    /// A `version` other than the ones this build reads. Write `version = 1` or leave it out.
    #[error(
        "{source_name}: top level: key 'version': unknown design-file version {found}; this \
         program reads version 1 only (write version = 1 or leave the key out)"
    )]
    UnsupportedVersion {
        /// File label.
        source_name: String,
        /// The version as written.
        found: String,
    },

    /// A tap key (`tap_turns`, `tap_from`) that cannot be used: on a winding that is not the
    /// primary, a tap of more turns than the winding has or below the smallest tap, or
    /// `tap_from` without `tap_turns`. The message says which; fix that key.
    #[error("{source_name}: {item}: key '{key}': {reason}")]
    BadTap {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// `tap_turns` or `tap_from`.
        key: String,
        /// What is wrong and what to give.
        reason: String,
    },

    /// A key in a winding that the format does not know. Check its spelling against the list.
    #[error(
        "{source_name}: {item}: key '{key}': unknown key for a {shape}; allowed keys for a \
         {shape}: {allowed}"
    )]
    UnknownKey {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key as written.
        key: String,
        /// The winding's shape.
        shape: String,
        /// Keys allowed for that shape, comma separated.
        allowed: String,
    },

    /// A known key that means nothing for this shape (e.g. `points` on a helix). Remove it, or
    /// change the shape.
    #[error(
        "{source_name}: {item}: key '{key}': does not apply to a {shape}; it is used only by: \
         {applies_to}"
    )]
    KeyNotForShape {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key as written.
        key: String,
        /// The winding's shape.
        shape: String,
        /// What the key does apply to.
        applies_to: String,
    },

    /// A required key is absent. Add it.
    #[error("{source_name}: {item}: key '{key}': missing; {hint}")]
    MissingKey {
        /// File label.
        source_name: String,
        /// Which winding (or `top level`).
        item: String,
        /// The missing key.
        key: String,
        /// What to write.
        hint: String,
    },

    /// A value of the wrong TOML type (e.g. a string where a number is needed). Fix the value.
    #[error("{source_name}: {item}: key '{key}': wrong type: {reason}")]
    WrongType {
        /// File label.
        source_name: String,
        /// Which winding (or `top level`).
        item: String,
        /// The key, with an index for array elements (e.g. `origin[1]`).
        key: String,
        /// What was found and what was expected.
        reason: String,
    },

    /// A quantity string that cannot be read (unknown unit, a unit of another quantity, no
    /// number, misplaced gauge). Write a number and one of the units named.
    #[error("{source_name}: {item}: key '{key}': {reason}")]
    BadUnit {
        /// File label.
        source_name: String,
        /// Which winding or table.
        item: String,
        /// The key, with an index for array elements.
        key: String,
        /// What is wrong with the string and what to write instead.
        reason: String,
    },

    /// A sweep or seek file, or one of its keys, is wrong (the key path says where).
    #[error("{source_name}: {key}: {reason}")]
    SweepFile {
        /// The sweep or seek file.
        source_name: String,
        /// The key at fault (`axis #2 key`, `sample.count`, ...).
        key: String,
        /// What is wrong and how to fix it.
        reason: String,
    },

    /// A size or count that is zero or negative. Give a positive value.
    #[error("{source_name}: {item}: key '{key}': must be {expected}, got {value}")]
    NotPositive {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key, with an index for array elements.
        key: String,
        /// What the key needs, e.g. "a positive length in metres".
        expected: String,
        /// The value as written, with its value in metres when it had a unit.
        value: String,
    },

    /// A value that is NaN or infinite. Give a finite number.
    #[error(
        "{source_name}: {item}: key '{key}': must be {expected}, got {value}, which is not finite"
    )]
    NotFinite {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key, with an index for array elements.
        key: String,
        /// What the key needs.
        expected: String,
        /// The value as written.
        value: String,
    },

    /// A count that must be a whole number (ring turns, segments per turn) is fractional.
    #[error("{source_name}: {item}: key '{key}': must be {expected}, got {value}")]
    NotInteger {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key.
        key: String,
        /// What the key needs.
        expected: String,
        /// The value as written.
        value: String,
    },

    /// A value too large for this program (e.g. a million turns). Reduce it.
    #[error("{source_name}: {item}: key '{key}': {value} is too large; {limit}")]
    TooLarge {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key.
        key: String,
        /// The value as written.
        value: String,
        /// The limit and why it exists.
        limit: String,
    },

    /// A value outside the range this program accepts for its key (see [`crate::limits`]):
    /// a size below a nanometre or beyond 100 km, a coordinate beyond 100 km, a quantity far
    /// outside anything a coil carries. Give a value inside the range.
    #[error("{source_name}: {item}: key '{key}': {} is outside the accepted range: {range}", elide(.value))]
    OutOfRange {
        /// File label.
        source_name: String,
        /// Which item.
        item: String,
        /// The key, with an index for array elements.
        key: String,
        /// The value as written.
        value: String,
        /// The accepted range, with its unit and reason.
        range: String,
    },

    /// A word key (`shape`, `role`, `model`) with a value outside its list. Pick one from the list.
    #[error("{source_name}: {item}: key '{key}': unknown value \"{value}\"; allowed: {allowed}")]
    UnknownValue {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key.
        key: String,
        /// The value as written.
        value: String,
        /// Allowed values, comma separated.
        allowed: String,
    },

    /// `model = "ring"` on a polyline, which has no axis. Use `model = "filament"` or leave it out.
    #[error(
        "{source_name}: {item}: key 'model': a polyline has no axis, so it has no ring model; \
         write model = \"filament\" or leave the key out"
    )]
    ModelNotForShape {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
    },

    /// An axis of zero length gives no direction. Give any nonzero vector.
    #[error(
        "{source_name}: {item}: key '{key}': the axis has zero length and gives no direction; \
         give any nonzero vector, e.g. [0.0, 0.0, 1.0]"
    )]
    ZeroAxis {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key.
        key: String,
    },

    /// A name outside `[A-Za-z0-9_-]+`. Use only letters, digits, `_` and `-`.
    #[error(
        "{source_name}: {item}: key 'name': \"{}\" is not a valid name; use 1 to {} \
         letters A-Z a-z, digits, '_' or '-'",
        elide(.name),
        crate::limits::MAX_NAME_CHARS
    )]
    BadName {
        /// File label.
        source_name: String,
        /// Which winding (by number, since its name is unusable).
        item: String,
        /// The name as written.
        name: String,
    },

    /// Two windings share a name. Rename one; names identify windings in results.
    #[error(
        "{source_name}: {item}: key 'name': the name '{name}' is already used by {first}; \
         names must be unique in a design"
    )]
    DuplicateName {
        /// File label.
        source_name: String,
        /// The later winding, by number.
        item: String,
        /// The shared name.
        name: String,
        /// The earlier winding, by number.
        first: String,
    },

    /// Adjacent turns would overlap: the wire (with its insulation, for a helix) is too thick for
    /// the pitch. The message names the smallest valid size; use fewer turns, more room
    /// (length, pitch, radii, height) or thinner wire.
    #[error(
        "{source_name}: {item}: key '{key}': the pitch ({} m, {pitch_rule}) is too small for the \
         wire ({} m bare), so adjacent turns would overlap; {remedy}",
        sig(*.pitch_m),
        sig(*.wire_diameter_m)
    )]
    WireThickerThanPitch {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key that sets the pitch (`length`, `pitch`, `outer_radius`, ...).
        key: &'static str,
        /// Bare wire diameter (m).
        wire_diameter_m: f64,
        /// Centre-to-centre distance of adjacent turns (m).
        pitch_m: f64,
        /// How the pitch is computed for this shape.
        pitch_rule: &'static str,
        /// The smallest valid sizes (with the insulated diameter, where given) and other ways
        /// out.
        remedy: String,
    },

    /// A radius not larger than the wire's own radius: the wire would cross the axis. Make it
    /// larger.
    #[error(
        "{source_name}: {item}: key '{key}': the radius ({} m) must exceed the wire radius \
         ({} m, half of wire_diameter)",
        sig(*.radius_m),
        sig(*.wire_radius_m)
    )]
    RadiusBelowWire {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The key of the radius.
        key: String,
        /// The radius (m).
        radius_m: f64,
        /// Half the wire diameter (m).
        wire_radius_m: f64,
    },

    /// A spiral or cone whose outer radius is not larger than its inner radius. Swap or fix them.
    #[error(
        "{source_name}: {item}: key 'outer_radius': must be larger than inner_radius, got \
         outer_radius = {} m and inner_radius = {} m",
        sig(*.outer_radius_m),
        sig(*.inner_radius_m)
    )]
    RadiiOrder {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// Inner radius (m).
        inner_radius_m: f64,
        /// Outer radius (m).
        outer_radius_m: f64,
    },

    /// A polyline with too few points (2 when open, 3 when closed). Add points.
    #[error(
        "{source_name}: {item}: key 'points': {kind} polyline needs at least {needed} points, \
         got {found}",
        kind = if *.closed { "a closed" } else { "an open" }
    )]
    TooFewPoints {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// Points given.
        found: usize,
        /// Points needed.
        needed: usize,
        /// Whether the polyline is closed.
        closed: bool,
    },

    /// Two consecutive polyline points coincide, giving a piece of zero length. Remove one. A
    /// closed polyline joins its last point to the first by itself: do not repeat the first point.
    #[error(
        "{source_name}: {item}: key 'points': points[{index_a}] and points[{index_b}] are \
         consecutive and coincide{hint}",
        hint = if *.closing {
            "; a closed polyline joins its last point to the first by itself, so do not repeat \
             the first point at the end"
        } else {
            "; remove one of them"
        }
    )]
    CoincidentPoints {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// Index (from 0) of the first point.
        index_a: usize,
        /// Index (from 0) of the second point.
        index_b: usize,
        /// Whether the pair is the closing piece (last point, first point).
        closing: bool,
    },

    /// `segments_per_turn` below 3, too few for a closed turn. Give 3 or more (or leave it out).
    #[error(
        "{source_name}: {item}: key 'segments_per_turn': must be a whole number of at least 3, \
         got {value}"
    )]
    TooFewSegments {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// The value as written.
        value: String,
    },

    /// The wires of two windings touch or cross. Move or resize one of them.
    #[error(
        "{source_name}: {item}: key '{key}': its wire touches or crosses the wire of {other} \
         (surface gap {gap_m:.3e} m, i.e. the wires overlap by {overlap_m:.3e} m, near \
         {} m); move or resize one of them",
        point(.near_m), overlap_m = -.gap_m
    )]
    Overlap {
        /// File label.
        source_name: String,
        /// The later winding in file order.
        item: String,
        /// The key that places it (`origin`, or `points` for a polyline).
        key: &'static str,
        /// The earlier winding.
        other: String,
        /// Smallest surface-to-surface distance found (m), zero or negative.
        gap_m: f64,
        /// A point midway between the two closest centreline points (m).
        near_m: [f64; 3],
    },

    /// A name in `connect`, `[drive] currents` or `[drive] potentials` that names no conductor
    /// of the right kind. Check its spelling against the list.
    #[error("{source_name}: {item}: key '{key}': '{name}' is not {wanted}; known: {known}")]
    UnknownConductor {
        /// File label.
        source_name: String,
        /// Which electrode, or `drive`.
        item: String,
        /// The key (e.g. `connect`, `currents.primry`; boxed to keep the error type small).
        key: Box<str>,
        /// The name as written (boxed to keep the error type small).
        name: Box<str>,
        /// What kind of conductor the key needs (e.g. "a winding").
        wanted: &'static str,
        /// Names of that kind, comma separated (boxed to keep the error type small).
        known: Box<str>,
    },

    /// An electrode's `connect` that is not `"<winding>:top"` or `"<winding>:base"`.
    #[error(
        "{source_name}: {item}: key 'connect': \"{value}\" is not a terminal; write \
         \"<winding>:top\" or \"<winding>:base\""
    )]
    BadTerminal {
        /// File label.
        source_name: String,
        /// Which electrode.
        item: String,
        /// The value as written.
        value: String,
    },

    /// A connected electrode also has a potential in `[drive] potentials`: it takes its
    /// terminal's potential. Remove one of the two.
    #[error(
        "{source_name}: drive: key 'potentials.{name}': electrode '{name}' is connected to \
         {terminal} and takes that terminal's potential; remove its entry from potentials or \
         its connect key"
    )]
    ConnectedWithPotential {
        /// File label.
        source_name: String,
        /// The electrode.
        name: String,
        /// Its terminal, as written in `connect`.
        terminal: String,
    },

    /// An electrode touches or crosses a winding's wire or another electrode, or comes closer
    /// than the contact check resolves. Move or resize it.
    #[error(
        "{source_name}: {item}: key '{key}': it {contact} near {} m; move or resize one of \
         them",
        point(.near_m)
    )]
    ElectrodeIntersects {
        /// File label.
        source_name: String,
        /// The electrode (the later one for two electrodes).
        item: String,
        /// The key that places it.
        key: &'static str,
        /// How and what it meets, e.g. "touches or crosses electrode 'topload'".
        contact: String,
        /// A point of the contact (m).
        near_m: [f64; 3],
    },

    /// A setting (e.g. in `[clearance]`) with a value outside its range or with a wrong unit.
    /// Fix the value as the message says.
    #[error("{source_name}: {item}: key '{key}': {reason}")]
    BadSetting {
        /// File label.
        source_name: String,
        /// Which table (`clearance`, `clearance threshold 'fence'`).
        item: String,
        /// The key, with an index for list elements.
        key: String,
        /// What is wrong and what to give.
        reason: String,
    },

    /// A conductor reaches down to or through the ground plane. Raise it or lower the plane.
    #[error(
        "{source_name}: {item}: key '{key}': part of it is at z = {} m, at or below the \
         ground plane z = {} m; raise it or lower [ground] z",
        sig(*.lowest_z_m), sig(*.ground_z_m)
    )]
    BelowGround {
        /// File label.
        source_name: String,
        /// The electrode or winding.
        item: String,
        /// The key that places it.
        key: &'static str,
        /// The height (m) of a point of it at or below the plane: an electrode's lowest point,
        /// a wire's first point found there.
        lowest_z_m: f64,
        /// The plane (m).
        ground_z_m: f64,
    },

    /// A computation needs a `[drive]` value that is missing or zero. Add it.
    #[error("{source_name}: drive: key '{key}': {reason}")]
    MissingDrive {
        /// File label.
        source_name: String,
        /// The key (`frequency`, `currents`, `potentials`).
        key: String,
        /// What is missing and which computation needs it.
        reason: String,
    },

    /// The electric solver needs all electrodes and the secondary on one axis, perpendicular to
    /// the ground plane if there is one. Align the named conductor.
    #[error("{source_name}: {item}: key '{key}': not axisymmetric: {reason}")]
    NotAxisymmetric {
        /// File label.
        source_name: String,
        /// The conductor off the common axis.
        item: String,
        /// The key to change (`origin` or `axis`).
        key: &'static str,
        /// What is off and by how much.
        reason: String,
    },

    /// Two non-neighbouring pieces of a polyline touch or cross. Move its points apart.
    #[error(
        "{source_name}: {item}: key 'points': the piece points[{piece_a}]-points[{}] touches or \
         crosses the piece points[{piece_b}]-points[{}] (surface gap {gap_m:.3e} m, near \
         {} m); move the points apart",
        .piece_a_end, .piece_b_end, point(.near_m)
    )]
    SelfIntersection {
        /// File label.
        source_name: String,
        /// Which winding.
        item: String,
        /// Index (from 0) of the start point of the first piece.
        piece_a: usize,
        /// Index of its end point.
        piece_a_end: usize,
        /// Index (from 0) of the start point of the second piece.
        piece_b: usize,
        /// Index of its end point.
        piece_b_end: usize,
        /// Smallest surface-to-surface distance found (m), zero or negative.
        gap_m: f64,
        /// A point midway between the two closest centreline points (m).
        near_m: [f64; 3],
    },
}

/// Longest value echoed whole in a message (characters); a longer one is cut in the middle.
pub const MAX_ECHO_CHARS: usize = 80;

/// `text` as a message shows it: whole up to [`MAX_ECHO_CHARS`] characters, else its start and
/// end around "... (N characters) ...", so a 2 MB value never fills a terminal.
pub fn elide(text: &str) -> String {
    let n = text.chars().count();
    if n <= MAX_ECHO_CHARS {
        return text.to_string();
    }
    let head: String = text.chars().take(MAX_ECHO_CHARS / 2).collect();
    let tail: String = text.chars().skip(n - MAX_ECHO_CHARS / 4).collect();
    format!("{head}... ({n} characters) ...{tail}")
}

/// A point as "[x, y, z]" to 0.1 mm, without the "-0.0000" that rounding noise would print.
pub(crate) fn point(p: &[f64; 3]) -> String {
    let c = |x: f64| {
        let text = format!("{x:.4}");
        if text == "-0.0000" {
            "0.0000".to_string()
        } else {
            text
        }
    };
    format!("[{}, {}, {}]", c(p[0]), c(p[1]), c(p[2]))
}

/// `x` to 6 significant digits, without trailing zeros: computed lengths such as a pitch of
/// 0.05 / 30 m read as 0.00166667, not 0.0016666666666666668.
pub(crate) fn sig(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return x.to_string();
    }
    let exponent = x.abs().log10().floor() as i32;
    if !(-4..6).contains(&exponent) {
        return format!("{x:.5e}");
    }
    let decimals = (5 - exponent).max(0) as usize;
    let text = format!("{x:.decimals$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

#[cfg(test)]
mod tests {
    use super::sig;

    #[test]
    fn significant_digits() {
        assert_eq!(sig(0.05 / 30.0), "0.00166667");
        assert_eq!(sig(0.002), "0.002");
        assert_eq!(sig(50.0 * 1e-3), "0.05");
        assert_eq!(sig(-0.05), "-0.05");
        assert_eq!(sig(123456.0), "123456");
        assert_eq!(sig(1.5e6), "1.50000e6");
        assert_eq!(sig(1.5e-7), "1.50000e-7");
        assert_eq!(sig(0.0), "0");
        assert_eq!(sig(f64::NAN), "NaN");
        assert_eq!(sig(12.0), "12");
    }

    #[test]
    fn points_without_negative_zero() {
        assert_eq!(super::point(&[0.1, -1e-9, 5.0]), "[0.1000, 0.0000, 5.0000]");
        assert_eq!(
            super::point(&[-0.25, 0.0, 0.0]),
            "[-0.2500, 0.0000, 0.0000]"
        );
    }
}
