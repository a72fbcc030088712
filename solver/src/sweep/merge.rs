//! Merging the outputs of a sweep's shards into the output one process would have written.

use crate::error::SolverError;
use crate::numtext::shortest as num;
use crate::sweep::plan::SweepPlan;
use crate::sweep::rows::{OutFormat, STATUS_WORDS, csv_row_problem, point_of};
use std::collections::BTreeMap;

fn bad(message: String) -> SolverError {
    SolverError::BadSweep { message }
}

/// Join the texts of shard outputs (`(label, text)` pairs; the labels name them in messages),
/// all in `format`, into the text of the whole output: the header once, then every row in
/// point order. Every point must be there exactly once: from 0 to the last one present, or to
/// the last point of `expected` (whose header the CSV header must then be). A torn last line
/// (a stopped run, not yet resumed) is refused.
pub fn merge(
    parts: &[(&str, &str)],
    format: OutFormat,
    expected: Option<&SweepPlan>,
) -> Result<String, SolverError> {
    let mut header: Option<(&str, &str)> = None;
    let mut rows: BTreeMap<usize, (&str, &str)> = BTreeMap::new();
    let mut doubled: Vec<String> = Vec::new();
    for &(label, text) in parts {
        if !text.is_empty() && !text.ends_with('\n') {
            return Err(bad(format!(
                "{label}: the last line is torn (the run was stopped); finish it with --resume first"
            )));
        }
        let mut lines = text.lines();
        if format == OutFormat::Csv {
            let h = lines.next().unwrap_or_default();
            match header {
                None => header = Some((h, label)),
                Some((h0, l0)) if h0 != h => {
                    return Err(bad(format!(
                        "{label}: its header differs from that of {l0}: not the same sweep"
                    )));
                }
                Some(_) => {}
            }
        }
        let columns = header.map_or(0, |(h, _)| h.split(',').count());
        for (n, line) in lines.enumerate() {
            let line_no = n + 1 + format.header_lines();
            let problem = match format {
                OutFormat::Csv => csv_row_problem(line, columns),
                OutFormat::JsonLines => json_row_problem(line),
            };
            if let Some(why) = problem {
                return Err(bad(format!(
                    "{label}: line {line_no}: not a row of this sweep: {why}"
                )));
            }
            let p = point_of(line, format)
                .ok_or_else(|| bad(format!("{label}: line {line_no}: no point index")))?;
            if let Some(plan) = expected
                && let Some(why) = params_problem(line, format, plan, p)
            {
                return Err(bad(format!(
                    "{label}: line {line_no}: point {p}: {why}; not a row of the sweep {}",
                    plan.sweep_label()
                )));
            }
            if let Some((_, first)) = rows.get(&p) {
                doubled.push(format!("point {p} ({first} and {label})"));
            } else {
                rows.insert(p, (line, label));
            }
        }
    }
    if !doubled.is_empty() {
        return Err(bad(format!(
            "merge: {} points appear more than once: {}",
            doubled.len(),
            doubled
                .iter()
                .take(10)
                .cloned()
                .collect::<Vec<_>>()
                .join(", ")
        )));
    }
    let total = match expected {
        Some(plan) => plan.points().len(),
        // Every point appears once, so the points are 0..rows: an index beyond is reported,
        // never a range built up to it (the work stays linear in the rows read).
        None => rows.len(),
    };
    if let Some(plan) = expected
        && format == OutFormat::Csv
        && let Some((h, label)) = header
        && format!("{h}\n") != plan.header(format)
    {
        return Err(bad(format!(
            "{label}: its header is not that of the sweep {}",
            plan.sweep_label()
        )));
    }
    let missing: Vec<usize> = (0..total).filter(|p| !rows.contains_key(p)).collect();
    let beyond: Vec<usize> = rows.keys().copied().filter(|&p| p >= total).collect();
    if !missing.is_empty() || !beyond.is_empty() {
        return Err(bad(format!(
            "merge: {} of {total} points missing ({}){}",
            missing.len(),
            ranges(&missing),
            if beyond.is_empty() {
                String::new()
            } else {
                format!("; points beyond the sweep: {}", ranges(&beyond))
            }
        )));
    }
    let mut text = String::new();
    if let Some((h, _)) = header {
        text.push_str(h);
        text.push('\n');
    }
    for (line, _) in rows.values() {
        text.push_str(line);
        text.push('\n');
    }
    Ok(text)
}

/// `0-4, 7, 9-12` (the first 20 runs).
/// Why a JSON line is not a row (an object with a point index, params, metrics, a known status
/// and a message), or `None`.
pub(crate) fn json_row_problem(line: &str) -> Option<String> {
    let v: serde_json::Value = match serde_json::from_str(line) {
        Ok(v) => v,
        Err(e) => return Some(format!("not JSON: {e}")),
    };
    let Some(obj) = v.as_object() else {
        return Some("not a JSON object".into());
    };
    let mut keys: Vec<&str> = obj.keys().map(String::as_str).collect();
    keys.sort_unstable();
    if keys != ["message", "metrics", "params", "point", "status"] {
        return Some(format!(
            "keys {} (a row has point, params, metrics, status, message)",
            keys.join(", ")
        ));
    }
    match obj["status"].as_str() {
        Some(s) if STATUS_WORDS.contains(&s) => None,
        _ => Some(format!(
            "unknown status (known: {})",
            STATUS_WORDS.join(", ")
        )),
    }
}

/// Why the parameters of row `line` (point `p`) differ from the plan's point `p`, or `None`.
pub(crate) fn params_problem(
    line: &str,
    format: OutFormat,
    plan: &SweepPlan,
    p: usize,
) -> Option<String> {
    let Some(want) = plan.points().get(p) else {
        return Some(format!("beyond the sweep's {} points", plan.points().len()));
    };
    let axes = &plan.sweep().axes;
    match format {
        OutFormat::Csv => {
            let got: Vec<&str> = line.split(',').skip(1).take(axes.len()).collect();
            for (k, (g, w)) in got.iter().zip(want).enumerate() {
                if *g != num(*w) {
                    return Some(format!(
                        "`{}` is {g}, the sweep's is {}",
                        axes[k].key,
                        num(*w)
                    ));
                }
            }
            None
        }
        OutFormat::JsonLines => {
            let v: serde_json::Value = serde_json::from_str(line).ok()?;
            for (a, w) in axes.iter().zip(want) {
                if v["params"][&a.key].as_f64() != Some(*w) {
                    return Some(format!(
                        "`{}` is {}, the sweep's is {}",
                        a.key,
                        v["params"][&a.key],
                        num(*w)
                    ));
                }
            }
            None
        }
    }
}

fn ranges(v: &[usize]) -> String {
    let mut parts: Vec<String> = Vec::new();
    let mut i = 0;
    while i < v.len() {
        let mut j = i;
        while j + 1 < v.len() && v[j + 1] == v[j] + 1 {
            j += 1;
        }
        parts.push(if i == j {
            v[i].to_string()
        } else {
            format!("{}-{}", v[i], v[j])
        });
        i = j + 1;
    }
    let more = parts.len() > 20;
    parts.truncate(20);
    parts.join(", ") + if more { ", ..." } else { "" }
}
