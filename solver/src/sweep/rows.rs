//! The rows of a sweep's output: CSV with a header line, or JSON Lines, one line per point.
//!
//! CSV columns: `point`, the axis keys, the metric names, `status` (`ok`, `infeasible`,
//! `error`), `message`; fields with a comma or a quote are quoted (RFC 4180). JSON Lines:
//! `{"point": i, "params": {...}, "metrics": {...}, "status": ..., "message": ...}`. Floats are
//! written in shortest round-trip form; a message's line breaks become spaces, so every row is
//! one line.

use crate::metrics::PointResult;
use crate::numtext::{json_number as json_num, push_shortest};
use crate::sweep::plan::SweepPlan;
use std::fmt::Write;

/// Output format of a sweep.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum OutFormat {
    /// Comma-separated values with a header line.
    Csv,
    /// One JSON object per line.
    JsonLines,
}

impl OutFormat {
    /// The format of a file name's extension: `csv` or `jsonl`.
    pub fn of_extension(extension: &str) -> Option<OutFormat> {
        match extension {
            "csv" => Some(OutFormat::Csv),
            "jsonl" => Some(OutFormat::JsonLines),
            _ => None,
        }
    }

    /// Lines before the first row: 1 for CSV (the header), 0 for JSON Lines.
    pub fn header_lines(self) -> usize {
        usize::from(self == OutFormat::Csv)
    }
}

impl SweepPlan {
    /// The header of the output (with its newline): the CSV column names, or nothing for JSON
    /// Lines.
    pub fn header(&self, format: OutFormat) -> String {
        match format {
            OutFormat::Csv => {
                let mut cols = vec!["point".to_string()];
                cols.extend(self.sweep().axes.iter().map(|a| csv_field(&a.key)));
                cols.extend(self.sweep().metrics.iter().map(|m| csv_field(m)));
                cols.push("status".into());
                cols.push("message".into());
                cols.join(",") + "\n"
            }
            OutFormat::JsonLines => String::new(),
        }
    }

    /// One output line (with its newline) for point `i` with result `r`. An `i` beyond the
    /// points has no axis values: its fields are left empty (CSV) or out (JSON).
    pub fn row(&self, i: usize, r: &PointResult, format: OutFormat) -> String {
        let message = r.message.replace(['\n', '\r'], " ");
        let params: &[f64] = self.points().get(i).map_or(&[], Vec::as_slice);
        let metrics = &self.sweep().metrics;
        match format {
            OutFormat::Csv => {
                // One allocation per row in the usual case: 24 bytes per number at most.
                let n_numbers = self.sweep().axes.len() + metrics.len();
                let mut s = String::with_capacity(32 + 25 * n_numbers + message.len());
                // Writing into a String cannot fail.
                let _ = write!(s, "{i}");
                for k in 0..self.sweep().axes.len() {
                    s.push(',');
                    if let Some(v) = params.get(k) {
                        push_shortest(&mut s, *v);
                    }
                }
                for k in 0..metrics.len() {
                    s.push(',');
                    if let Some(v) = r.values.get(k) {
                        push_shortest(&mut s, *v);
                    }
                }
                s.push(',');
                s.push_str(r.status.as_str());
                s.push(',');
                s.push_str(&csv_field(&message));
                s.push('\n');
                s
            }
            OutFormat::JsonLines => {
                let mut params_json = serde_json::Map::new();
                for (a, v) in self.sweep().axes.iter().zip(params) {
                    params_json.insert(a.key.clone(), json_num(*v));
                }
                let mut metrics_json = serde_json::Map::new();
                for (k, name) in metrics.iter().enumerate() {
                    let v = r.values.get(k).map(|v| json_num(*v));
                    metrics_json.insert(name.clone(), v.unwrap_or(serde_json::Value::Null));
                }
                let obj = serde_json::json!({
                    "point": i,
                    "params": params_json,
                    "metrics": metrics_json,
                    "status": r.status.as_str(),
                    "message": message,
                });
                obj.to_string() + "\n"
            }
        }
    }
}

/// A CSV field, quoted when it holds a comma or a quote (RFC 4180).
fn csv_field(s: &str) -> String {
    if s.contains([',', '"']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// The values of `status` a row may hold.
pub(crate) const STATUS_WORDS: [&str; 3] = ["ok", "infeasible", "error"];

/// Why a CSV row does not have the form of a row under a header of `columns` columns (index,
/// parameters, metrics, status, message): numbers where numbers go, a known status, and a
/// message that is one field (RFC 4180 quoting); `None` when it has it.
pub(crate) fn csv_row_problem(line: &str, columns: usize) -> Option<String> {
    // Every field before the message is a number, a status word or empty: none holds a comma.
    let fields: Vec<&str> = line.splitn(columns, ',').collect();
    if fields.len() < columns {
        return Some(format!(
            "{} fields where the header has {columns}",
            fields.len()
        ));
    }
    if fields[0].parse::<usize>().is_err() {
        return Some("no point index".into());
    }
    for (k, f) in fields[1..columns - 2].iter().enumerate() {
        if !f.is_empty() && f.parse::<f64>().is_err() {
            return Some(format!("field {} is not a number", k + 2));
        }
    }
    let status = fields[columns - 2];
    if !STATUS_WORDS.contains(&status) {
        return Some(format!(
            "unknown status \"{}\" (known: {})",
            status.chars().take(40).collect::<String>(),
            STATUS_WORDS.join(", ")
        ));
    }
    let message = fields[columns - 1];
    let one_field = match message.strip_prefix('"') {
        Some(rest) => rest
            .strip_suffix('"')
            .is_some_and(|inner| !inner.replace("\"\"", "").contains('"')),
        None => !message.contains([',', '"']),
    };
    if !one_field {
        return Some(format!(
            "more than {columns} fields, or a badly quoted message"
        ));
    }
    None
}

/// Point index of an output line (a row; not the CSV header).
pub(crate) fn point_of(line: &str, format: OutFormat) -> Option<usize> {
    match format {
        OutFormat::Csv => line.split(',').next()?.parse().ok(),
        OutFormat::JsonLines => serde_json::from_str::<serde_json::Value>(line)
            .ok()?
            .get("point")?
            .as_u64()
            .map(|p| p as usize),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_fields_are_quoted_as_rfc_4180_says() {
        // RFC 4180, section 2, rules 6 and 7: a field with a comma or a quote is enclosed in
        // quotes, and a quote inside is doubled.
        assert_eq!(csv_field("a,b"), "\"a,b\"");
        assert_eq!(csv_field("say \"x\""), "\"say \"\"x\"\"\"");
        assert_eq!(csv_field("plain"), "plain");
    }
}
