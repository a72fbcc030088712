//! `coilfield seek`: the value of one parameter that reaches a target metric (Brent's method),
//! or the minimum / maximum of a metric over 2-4 bounded parameters under constraints
//! (Nelder-Mead).
//!
//! A seek file is a sweep file whose axes give bounds (`from`, `to`), with one goal in place of
//! `metrics`: `target = "coupling.secondary.primary = 0.15"`, `minimise = "..."` or
//! `maximise = "..."`; optional `max_evaluations` (default 200).

use crate::BadInput;
use crate::Format;
use coilfield_solver::metrics::Metric;
use coilfield_solver::optimise::{Found, brent_root, nelder_mead};
use std::path::Path;
use std::process::ExitCode;

enum Goal {
    Target(f64),
    Minimise,
    Maximise,
}

pub fn run(path: &Path, format: Format) -> anyhow::Result<ExitCode> {
    let label = path.display().to_string();
    let text = crate::load::text(path, "seek file")?;
    let mut table: toml::Table = text.parse().map_err(|e: toml::de::Error| {
        coilfield_geometry::file::raw::syntax_error(&e, &text, &label)
    })?;
    let bad = |key: &str, reason: &str| BadInput(format!("{label}: {key}: {reason}"));
    let max_evaluations = match table.remove("max_evaluations") {
        None => 200,
        Some(toml::Value::Integer(n)) if (3..=100_000).contains(&n) => n as usize,
        Some(_) => {
            return Err(bad("max_evaluations", "expected a whole number 3 to 100000").into());
        }
    };
    let goals: Vec<(String, String)> = ["target", "minimise", "maximise"]
        .iter()
        .filter_map(|k| {
            table
                .remove(*k)
                .map(|v| (k.to_string(), v.as_str().unwrap_or("").to_string()))
        })
        .collect();
    let [(kind, spec)] = goals.as_slice() else {
        return Err(bad(
            "target",
            "give exactly one goal: target = \"metric = value\", minimise = \"metric\" or \
             maximise = \"metric\"",
        )
        .into());
    };
    let (spec, absolute) = match spec.trim().strip_prefix("abs(") {
        Some(rest) => {
            let Some(close) = rest.find(')') else {
                return Err(bad(kind, "abs( without its closing parenthesis").into());
            };
            (format!("{}{}", &rest[..close], &rest[close + 1..]), true)
        }
        None => (spec.clone(), false),
    };
    let spec = &spec;
    let (metric_name, goal) = match kind.as_str() {
        "target" => {
            let (m, v) = spec.split_once('=').ok_or_else(|| {
                bad(
                    "target",
                    "expected \"metric = value\", e.g. \"coupling.secondary.primary = 0.15\"",
                )
            })?;
            let v: f64 = v
                .trim()
                .parse()
                .ok()
                .filter(|v: &f64| v.is_finite())
                .ok_or_else(|| bad("target", "the value is not a finite number"))?;
            (m.trim().to_string(), Goal::Target(v))
        }
        "minimise" => (spec.trim().to_string(), Goal::Minimise),
        _ => (spec.trim().to_string(), Goal::Maximise),
    };
    if table.contains_key("metrics") || table.contains_key("sample") {
        return Err(bad(
            "metrics",
            "a seek file names its goal, not metrics or [sample]",
        )
        .into());
    }
    // The axes are checked like a sampled sweep's: bounds only.
    table.insert(
        "metrics".into(),
        toml::Value::Array(vec![toml::Value::String(metric_name.clone())]),
    );
    let mut sample = toml::Table::new();
    sample.insert("method".into(), toml::Value::String("random".into()));
    sample.insert("count".into(), toml::Value::Integer(1));
    sample.insert("seed".into(), toml::Value::Integer(0));
    table.insert("sample".into(), toml::Value::Table(sample));
    let plan = crate::sweep::plan_from_text(&toml::to_string(&table)?, path)?;
    let metric: Metric = plan
        .evaluator()
        .parse_metric(&metric_name, plan.base_design())
        .map_err(|e| BadInput(format!("{label}: {kind}: {e}")))?;
    let bounds: Vec<(f64, f64)> = plan
        .sweep()
        .axes
        .iter()
        .map(|a| match a.values {
            coilfield_geometry::file::sweep::Values::Range { from, to, .. } => (from, to),
            _ => (f64::NAN, f64::NAN),
        })
        .collect();
    let n = bounds.len();
    // Value of the metric (its magnitude for abs(...)) at x; NaN where the design fails or a
    // constraint does not hold, which the optimisers read as a refused point. Values are kept,
    // so reporting the optimum costs no evaluation beyond the limit.
    let seen: std::cell::RefCell<Vec<(Vec<f64>, f64)>> = std::cell::RefCell::new(Vec::new());
    let value_at = |x: &[f64]| -> f64 {
        if let Some((_, v)) = seen.borrow().iter().find(|(p, _)| p.as_slice() == x) {
            return *v;
        }
        let v = plan
            .feasible_value(x, metric, "seek point")
            .unwrap_or(f64::NAN);
        let v = if absolute { v.abs() } else { v };
        seen.borrow_mut().push((x.to_vec(), v));
        v
    };
    let (found, method): (Found, &str) = match goal {
        Goal::Target(t) => {
            if n != 1 {
                return Err(bad("axis", "a target is reached by exactly one [[axis]]").into());
            }
            let (a, b) = bounds[0];
            let r = brent_root(
                |x| value_at(&[x]) - t,
                a,
                b,
                1e-12 * (b - a).abs(),
                max_evaluations,
            )
            .map_err(|(fa, fb)| {
                BadInput(format!(
                    "{label}: {metric_name} goes from {} to {} over {} = {a} .. {b}: the target \
                     {t} is not between them (or an end is infeasible)",
                    fa + t,
                    fb + t,
                    plan.sweep().axes[0].key
                ))
            })?;
            (r, "Brent's method (Brent 1973)")
        }
        Goal::Minimise | Goal::Maximise => {
            if !(2..=4).contains(&n) {
                return Err(bad("axis", "minimise/maximise over 2 to 4 [[axis]] bounds").into());
            }
            let sign = if matches!(goal, Goal::Maximise) {
                -1.0
            } else {
                1.0
            };
            let lo: Vec<f64> = bounds.iter().map(|b| b.0.min(b.1)).collect();
            let hi: Vec<f64> = bounds.iter().map(|b| b.0.max(b.1)).collect();
            let mut r = nelder_mead(
                |x| sign * value_at(x),
                &lo,
                &hi,
                1e-6,
                1e-9,
                max_evaluations,
            );
            r.value *= sign;
            (r, "Nelder-Mead simplex (Nelder & Mead 1965)")
        }
    };
    let value = value_at(&found.x);
    let metric_label = if absolute {
        format!("abs({metric_name})")
    } else {
        metric_name.clone()
    };
    let keys: Vec<&str> = plan.sweep().axes.iter().map(|a| a.key.as_str()).collect();
    // An optimum on a bound of the box may lie beyond it.
    let on_bound: Vec<String> = match goal {
        Goal::Target(_) => Vec::new(),
        _ => keys
            .iter()
            .zip(&found.x)
            .zip(&bounds)
            .filter_map(|((k, x), (a, b))| {
                let tol = 1e-9 * (b - a).abs();
                let which = if (x - a.min(*b)).abs() <= tol {
                    "lower"
                } else if (x - a.max(*b)).abs() <= tol {
                    "upper"
                } else {
                    return None;
                };
                Some(format!("{k} is on its {which} bound"))
            })
            .collect(),
    };
    match format {
        Format::Json => {
            let mut params = serde_json::Map::new();
            for (k, x) in keys.iter().zip(&found.x) {
                params.insert(k.to_string(), serde_json::json!(x));
            }
            let j = serde_json::json!({
                "method": method,
                "params": params,
                "metric": metric_label,
                "value": value,
                "unit": crate::output::metric_unit(&metric_name),
                "evaluations": found.evaluations,
                "max_evaluations": max_evaluations,
                "stop": found.stop.describe(),
                "on_bound": on_bound,
            });
            crate::output::print_stdout(&(crate::output::json_text(&j)? + "\n"))?;
        }
        Format::Table => {
            let mut s = format!("method: {method}\n");
            for (k, x) in keys.iter().zip(&found.x) {
                s += &format!("{k} = {}\n", with_unit(*x, key_unit(k)));
            }
            s += &format!(
                "{metric_label} = {}\n",
                with_unit(value, crate::output::metric_unit(&metric_name))
            );
            s += &format!(
                "evaluations: {} of at most {max_evaluations}\n",
                found.evaluations
            );
            s += &format!("{}\n", found.stop.describe());
            for b in &on_bound {
                s += &format!(
                    "note: the optimum sits on a bound ({b}); the best point may lie beyond it: \
                     widen the bounds\n"
                );
            }
            crate::output::print_stdout(&s)?;
        }
    }
    eprint!("{}", crate::sweep::cautions(&plan));
    if !value.is_finite() {
        eprintln!("seek: no feasible point found");
        return Ok(ExitCode::from(1));
    }
    Ok(ExitCode::SUCCESS)
}

/// The SI unit of a design key set by an axis: metres, except counts, directions and angles.
fn key_unit(key: &str) -> &'static str {
    let field = key.rsplit('.').next().unwrap_or("");
    let field = field.split('[').next().unwrap_or("");
    match field {
        "turns" | "tap_turns" | "segments_per_turn" | "axis" => "",
        "tilt_deg" => "deg",
        _ => "m",
    }
}

/// A value for the table: SI-prefixed with its unit, or the shortest text of a pure number.
fn with_unit(v: f64, unit: &str) -> String {
    match unit {
        "" => coilfield_solver::numtext::shortest(v),
        "deg" => format!("{} deg", coilfield_solver::numtext::shortest(v)),
        u => crate::output::si(v, u, 6),
    }
}
