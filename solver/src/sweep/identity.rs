//! The identity of a sweep: a SHA-256 hash of its plan in a canonical text form, kept in a
//! small file beside each output (the CLI's `<out>.sweep-id`), so that `--resume` and `merge`
//! can tell the outputs of one sweep from those of another with the same header.
//!
//! The canonical form holds what decides the rows: the parsed base design (its `Debug` form,
//! numbers in shortest round-trip form, so comments, key order, spacing and units of the
//! files do not count), the axis keys, the metrics and constraints without white space, and
//! every point's parameters as their IEEE 754 bit patterns. The file's path does not count.

use crate::error::SolverError;
use crate::sweep::plan::SweepPlan;
use sha2::{Digest, Sha256};

/// First line of an identity file: its kind and the version of the canonical form.
const IDENTITY_HEADER: &str = "coilfield sweep identity 1";
/// Key of the line with the plan's hash.
const HASH_KEY: &str = "plan-sha256 ";

impl SweepPlan {
    /// SHA-256 (lower-case hex) of the plan's canonical form (see the module docs).
    pub fn identity_hash(&self) -> String {
        let mut h = Sha256::new();
        h.update(format!("{IDENTITY_HEADER}\nbase {:?}\n", self.base_design()).as_bytes());
        for a in &self.sweep().axes {
            h.update(format!("axis {}\n", a.key).as_bytes());
        }
        let squeeze = |s: &str| s.split_whitespace().collect::<String>();
        for m in &self.sweep().metrics {
            h.update(format!("metric {}\n", squeeze(m)).as_bytes());
        }
        for c in &self.sweep().constraints {
            h.update(format!("constraint {}\n", squeeze(c)).as_bytes());
        }
        // The points as their IEEE 754 bit patterns (little-endian), after a line with their
        // count and width: exact, and cheap for a million points (formatting each value was
        // the serial part of a sweep's start-up).
        let width = self.points().first().map_or(0, Vec::len);
        h.update(format!("points {} x {width}\n", self.points().len()).as_bytes());
        for p in self.points() {
            for v in p {
                h.update(v.to_bits().to_le_bytes());
            }
        }
        hex(&h.finalize())
    }

    /// The text of the identity file of this sweep's outputs.
    pub fn identity_text(&self) -> String {
        format!(
            "{IDENTITY_HEADER}\n{HASH_KEY}{}\nsweep {}\npoints {}\n",
            self.identity_hash(),
            self.sweep_label(),
            self.points().len()
        )
    }

    /// Checks that the identity file `text` (labelled `label` in messages) is this sweep's.
    pub fn check_identity(&self, text: &str, label: &str) -> Result<(), SolverError> {
        let got = identity_hash_of(text, label)?;
        if got != self.identity_hash() {
            return Err(SolverError::BadSweep {
                message: format!(
                    "{label}: the output beside it was written by another sweep than {} (its \
                     base design, axes, metrics, constraints or points differ); write a new \
                     output, or restore the sweep and design files it was made with",
                    self.sweep_label()
                ),
            });
        }
        Ok(())
    }
}

/// Lower-case hex digits of `bytes`.
fn hex(bytes: &[u8]) -> String {
    const DIGITS: &[u8; 16] = b"0123456789abcdef";
    let mut s = String::with_capacity(2 * bytes.len());
    for b in bytes {
        s.push(char::from(DIGITS[usize::from(b >> 4)]));
        s.push(char::from(DIGITS[usize::from(b & 15)]));
    }
    s
}

/// The plan hash recorded in the identity file `text`, or why it is not one.
pub fn identity_hash_of<'a>(text: &'a str, label: &str) -> Result<&'a str, SolverError> {
    let mut lines = text.lines();
    let hash = (lines.next() == Some(IDENTITY_HEADER))
        .then(|| lines.next().and_then(|l| l.strip_prefix(HASH_KEY)))
        .flatten()
        .filter(|h| h.len() == 64 && h.bytes().all(|b| b.is_ascii_hexdigit()));
    hash.ok_or_else(|| SolverError::BadSweep {
        message: format!(
            "{label}: not a sweep identity file (its first lines must be `{IDENTITY_HEADER}` \
             and `{HASH_KEY}<64 hex digits>`)"
        ),
    })
}

#[cfg(test)]
mod tests {
    use coilfield_geometry::file::sweep::parse_sweep;

    use super::*;

    const BASE: &str = "[[winding]]\nname = \"a\"\nshape = \"ring\"\norigin = [0.0, 0.0, 0.0]\n\
        axis = [0.0, 0.0, 1.0]\nradius = 1.0\nwire_diameter = 0.001\n\n[[winding]]\nname = \"b\"\n\
        shape = \"ring\"\norigin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\nradius = 1.0\n\
        wire_diameter = 0.001\n";

    fn plan(sweep: &str, base: &str) -> SweepPlan {
        let s = parse_sweep(sweep, "s.toml").unwrap();
        SweepPlan::new(s, "s.toml", base, "base.toml", crate::Par::Seq).unwrap()
    }

    const SWEEP: &str = "base = \"base.toml\"\nmetrics = [\"mutual.a.b\"]\n[[axis]]\n\
        key = \"winding.b.origin[2]\"\nvalues = [1.0, 2.0]\n";

    #[test]
    fn the_identity_follows_the_plan_not_the_spelling() {
        let a = plan(SWEEP, BASE);
        // The same plan spelled otherwise: spacing, a comment, "1 m" for 1.0.
        let same = plan(
            &SWEEP.replace("[\"mutual.a.b\"]", "[ \"mutual.a.b\" ]  # the pair"),
            &BASE.replace("radius = 1.0\nwire", "radius = \"1 m\"\nwire"),
        );
        assert_eq!(a.identity_hash(), same.identity_hash());
        a.check_identity(&same.identity_text(), "o.csv.sweep-id")
            .unwrap();
        // Another point, another metric, another base design: another identity.
        for other in [
            plan(&SWEEP.replace("2.0]", "2.5]"), BASE),
            plan(&SWEEP.replace("mutual.a.b", "coupling.a.b"), BASE),
            plan(
                SWEEP,
                &BASE.replace("wire_diameter = 0.001\n\n", "wire_diameter = 0.002\n\n"),
            ),
        ] {
            assert_ne!(a.identity_hash(), other.identity_hash());
            let e = a
                .check_identity(&other.identity_text(), "o.csv.sweep-id")
                .unwrap_err()
                .to_string();
            assert!(e.contains("another sweep"), "{e}");
        }
        // SHA-256 itself against the FIPS 180-2 example ("abc", appendix B.1).
        assert_eq!(
            hex(&Sha256::digest(b"abc")),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert!(identity_hash_of("point,a\n", "x").is_err());
    }
}
