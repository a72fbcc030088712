//! Thresholds from the command line: `--threshold NAME,E|B,LIMIT,rms|peak` and
//! `--long-gap-gradient`, merged with the design's by [`coilfield_solver::thresholds`].

use crate::BadInput;
use coilfield_geometry::Design;
use coilfield_solver::thresholds::{self, Basis, Method, Quantity, Threshold};

/// `set_by` of a long-gap gradient given by `--long-gap-gradient`.
const LONG_GAP_SET_BY: &str = "command line (--long-gap-gradient)";

/// The thresholds of a run ([`thresholds::for_design`]) with the command line's long-gap
/// gradient (`cli_long_gap_v_per_m`, V/m) and `--threshold` texts (`cli_extra`) last.
pub fn for_design(
    design: &Design,
    label: &str,
    frequency_hz: Option<f64>,
    cli_long_gap_v_per_m: Option<f64>,
    cli_extra: &[String],
) -> Result<(Vec<Threshold>, Vec<String>), BadInput> {
    let extra: Vec<Threshold> = cli_extra
        .iter()
        .map(|t| parse_user(t))
        .collect::<Result<_, _>>()?;
    Ok(thresholds::for_design(
        design,
        label,
        frequency_hz,
        cli_long_gap_v_per_m.map(|v| (v, LONG_GAP_SET_BY)),
        &extra,
    ))
}

/// A user threshold from `--threshold NAME,E|B,LIMIT,rms|peak` (limit in V/m or T).
pub fn parse_user(text: &str) -> Result<Threshold, BadInput> {
    let parts: Vec<&str> = text.split(',').map(str::trim).collect();
    let bad = |why: &str| {
        BadInput(format!(
            "--threshold {text:?}: {why}; expected NAME,E|B,LIMIT,rms|peak with LIMIT in V/m (E) or T (B)"
        ))
    };
    if parts.len() != 4 {
        return Err(bad("four comma-separated fields needed"));
    }
    let name = parts[0];
    if name.is_empty()
        || !name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-')
    {
        return Err(bad("the name must match [A-Za-z0-9_-]+"));
    }
    let (quantity, unit) = match parts[1] {
        "E" | "e" => (Quantity::E, "V/m"),
        "B" | "b" => (Quantity::B, "T"),
        _ => return Err(bad("the quantity must be E or B")),
    };
    let limit = parts[2]
        .parse::<f64>()
        .ok()
        .filter(|x| x.is_finite() && *x > 0.0)
        .ok_or_else(|| bad("the limit must be a positive number"))?;
    let basis = match parts[3] {
        "rms" => Basis::Rms,
        "peak" => Basis::Peak,
        _ => return Err(bad("the basis must be rms or peak")),
    };
    Ok(Threshold {
        name: name.into(),
        quantity,
        limit,
        unit,
        basis,
        source: "user setting (--threshold), no source given".into(),
        method: Method::FieldSearch,
        set_by: "command line (--threshold)".into(),
        rms_factor: None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn user_thresholds() {
        let t = parse_user("fence,B,5e-6,rms").unwrap();
        assert_eq!(t.quantity, Quantity::B);
        assert!(
            parse_user("fence,X,1,rms")
                .unwrap_err()
                .0
                .contains("--threshold")
        );
        assert!(parse_user("fence,E,-1,rms").is_err());
    }

    #[test]
    fn command_line_thresholds_come_last_and_say_who_set_them() {
        let text = "[[winding]]\nshape = \"ring\"\norigin = [0.0, 0.0, 1.0]\naxis = [0.0, 0.0, 1.0]\nradius = 0.1\nwire_diameter = 0.001\n[clearance]\ndefaults = [\"long_gap_gradient\"]\n";
        let d = coilfield_geometry::parse_design(text, "d.toml").unwrap();
        let (t, w) = for_design(&d, "d.toml", None, Some(2e5), &["x,E,1,peak".into()]).unwrap();
        assert!(w.is_empty(), "{w:?}");
        assert_eq!(t.len(), 2);
        // The long-gap threshold carries the command line's value, not the default 300 kV/m.
        assert_eq!((t[0].limit, t[0].set_by.as_str()), (2e5, LONG_GAP_SET_BY));
        assert_eq!(t[1].name, "x");
        assert!(for_design(&d, "d.toml", None, None, &["x,Q,1,peak".into()]).is_err());
    }
}
