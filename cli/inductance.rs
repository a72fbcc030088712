//! `coilfield inductance`: self, mutual and coupling matrices of a design.

use crate::Format;
use crate::load;
use crate::output::{si, write_atomic};
use coilfield_solver::Par;
use coilfield_solver::assembly::{InductanceReport, inductance_report};
use std::fmt::Write as _;
use std::path::Path;
use std::process::ExitCode;

pub fn run(path: &Path, format: Format, out: Option<&Path>) -> anyhow::Result<ExitCode> {
    let design = load::design(path)?;
    let report = inductance_report(&design, Par::Rayon)?;
    let text = match format {
        Format::Json => crate::output::json_text(&report)? + "\n",
        Format::Table => table(&report),
    };
    // The file first: a reader that closes stdout early must not cost the user the file.
    if let Some(out) = out {
        write_atomic(out, text.as_bytes())?;
    }
    crate::output::print_stdout(&text)?;
    Ok(ExitCode::SUCCESS)
}

/// Matrix of numbers with winding names as row and column labels.
pub fn matrix_table(names: &[&str], rows: &[Vec<f64>], cell: impl Fn(f64) -> String) -> String {
    let width = names
        .iter()
        .map(|n| n.len())
        .chain(rows.iter().flatten().map(|&v| cell(v).len()))
        .max()
        .unwrap_or(8)
        + 2;
    let mut s = format!("{:width$}", "");
    for n in names {
        let _ = write!(s, "{n:>width$}");
    }
    s.push('\n');
    for (name, row) in names.iter().zip(rows) {
        let _ = write!(s, "{name:width$}");
        for &v in row {
            let _ = write!(s, "{:>width$}", cell(v));
        }
        s.push('\n');
    }
    s
}

pub fn table(report: &InductanceReport) -> String {
    let mut s = String::new();
    let name_w = report
        .windings
        .iter()
        .map(|w| w.name.len())
        .max()
        .unwrap_or(4)
        .max(7);
    let _ = writeln!(
        s,
        "{:name_w$}  {:8}  {:>8}  {:>14}  {:>14}  cross-check method",
        "winding", "model", "elements", "self L", "cross-check"
    );
    for w in &report.windings {
        let model = match w.model {
            coilfield_geometry::Model::Ring => "ring",
            coilfield_geometry::Model::Filament => "filament",
        };
        let check = w
            .cross_check_h
            .map(|c| si(c, "H", 6))
            .unwrap_or_else(|| "-".into());
        let _ = writeln!(
            s,
            "{:name_w$}  {:8}  {:>8}  {:>14}  {:>14}  {}",
            w.name,
            model,
            w.elements,
            si(w.self_inductance_h, "H", 6),
            check,
            w.cross_check_method.as_deref().unwrap_or("-")
        );
    }
    let names: Vec<&str> = report.windings.iter().map(|w| w.name.as_str()).collect();
    s.push_str("\ninductance matrix (diagonal = self-inductance)\n");
    s.push_str(&matrix_table(&names, &report.mutual_h, |v| si(v, "H", 6)));
    s.push_str("\ncoupling coefficient k = M / sqrt(L1 L2)\n");
    s.push_str(&matrix_table(&names, &report.coupling, |v| {
        coilfield_solver::numtext::fixed(v, 6)
    }));
    s.push_str("\nkernels\n");
    for k in &report.kernels {
        let kernel = serde_json::to_value(k.kernel)
            .ok()
            .and_then(|v| v.as_str().map(str::to_owned))
            .unwrap_or_default();
        let _ = writeln!(s, "  {} / {}: {}", k.pair[0], k.pair[1], kernel);
    }
    for w in &report.warnings {
        let _ = writeln!(s, "warning: {w}");
    }
    s
}
