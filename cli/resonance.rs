//! `coilfield resonance`: the secondary's resonance (distributed and lumped), the primary's
//! tuning and tap, Q, the coupled pair's split frequencies and the drive's top voltage.

use crate::output::si;
use crate::plot::{self, LinePlot};
use crate::{BadInput, Format, load, output};
use coilfield_solver::Par;
use coilfield_solver::resonance::{PrimaryTuning, Resonance, ResonanceParams, resonance};
use serde::Serialize;
use std::fmt::Write as _;
use std::path::Path;
use std::process::ExitCode;

/// The caution every resonance output carries: the top voltage is what the drive produces.
pub const CAUTION: &str = "CAUTION: the top voltage and the currents here are design estimates \
    of a lossy resonator driven hard; a resonant transformer can kill or cause deep RF burns. \
    Follow local electrical codes and licensed, qualified practice.";

#[derive(Serialize)]
struct Out<'a> {
    caution: &'a str,
    #[serde(flatten)]
    resonance: &'a Resonance,
}

/// Run `coilfield resonance`.
pub fn run(
    design_path: &Path,
    sections: Option<usize>,
    format: Format,
    plot: Option<&Path>,
    plot_tap: Option<&Path>,
    electric: crate::capacitance_fem::ElectricSolver,
) -> anyhow::Result<ExitCode> {
    let design = load::design(design_path)?;
    let label = design_path.display().to_string();
    for p in [plot, plot_tap].into_iter().flatten() {
        is_svg(p)?;
    }
    let params = ResonanceParams {
        sections,
        electric: electric.choice(),
        ..ResonanceParams::default()
    };
    let r = resonance(&design, &label, &params, Par::Rayon)?;
    if let Some(p) = plot_tap {
        let Some(primary) = r
            .primary
            .as_ref()
            .filter(|p| !p.frequency_against_tap.is_empty())
        else {
            return Err(BadInput(format!(
                "--plot-tap: {label} has no tank capacitor to tune (a primary with \
                 [drive] tank_capacitance)"
            ))
            .into());
        };
        tap_plot(p, primary, r.secondary.frequency_hz)?;
    }
    if let Some(p) = plot {
        resonance_plot(p, &r)?;
    }
    match format {
        Format::Json => {
            let text = crate::output::json_text(&Out {
                caution: CAUTION,
                resonance: &r,
            })?;
            crate::output::print_stdout(&(text + "\n"))?;
        }
        Format::Table => {
            crate::output::print_stdout(&table(&r))?;
            for w in &r.warnings {
                eprintln!("warning: {w}");
            }
        }
    }
    Ok(ExitCode::SUCCESS)
}

/// Whether a plot is SVG (else PNG), from its file name.
fn is_svg(plot: &Path) -> anyhow::Result<bool> {
    match plot.extension().and_then(|e| e.to_str()) {
        Some("svg") => Ok(true),
        Some("png") => Ok(false),
        _ => Err(BadInput(format!(
            "{}: a plot's file name must end in .svg or .png",
            plot.display()
        ))
        .into()),
    }
}

/// `--plot-tap`: the primary's resonance with the tank capacitor against the turns in use.
fn tap_plot(path: &Path, p: &PrimaryTuning, f1_hz: f64) -> anyhow::Result<()> {
    let x: Vec<f64> = p
        .frequency_against_tap
        .iter()
        .map(|t| t.tap_turns)
        .collect();
    let y: Vec<f64> = p
        .frequency_against_tap
        .iter()
        .map(|t| t.frequency_hz)
        .collect();
    let title = format!(
        "primary '{}' with the tank: f against the tap (secondary f1 = {:.2} kHz)",
        p.name,
        f1_hz / 1e3
    );
    let bytes = plot::figure_bytes(
        &LinePlot {
            x: &x,
            y: &y,
            x_axis: plot::Axis {
                name: "turns in use",
                unit: "",
            },
            y_axis: plot::Axis {
                name: "frequency",
                unit: "Hz",
            },
            title: &title,
        },
        is_svg(path)?,
    )?;
    output::write_atomic(path, &bytes)
}

/// `--plot`: a spark gap's top-voltage envelope, else the first mode's voltage profile.
fn resonance_plot(path: &Path, r: &Resonance) -> anyhow::Result<()> {
    let svg = is_svg(path)?;
    let bytes = match r.drive.as_ref().and_then(|d| d.envelope.as_ref()) {
        Some(env) => {
            let (x, y) = (&env.top_voltage_times_s, &env.top_voltage_v);
            plot::figure_bytes(
                &LinePlot {
                    x,
                    y,
                    x_axis: plot::Axis {
                        name: "time",
                        unit: "s",
                    },
                    y_axis: plot::Axis {
                        name: "top voltage, peaks",
                        unit: "V",
                    },
                    title: "spark gap: envelope of the top voltage (gap quenched at the first notch)",
                },
                svg,
            )?
        }
        None => {
            let m = &r.secondary.modes[0];
            let n = m.voltage_profile.len() - 1;
            let x: Vec<f64> = (0..=n).map(|k| k as f64 / n as f64).collect();
            let title = format!(
                "first mode of '{}' at {:.2} kHz: node voltages, 1 at the top",
                r.secondary.name,
                m.frequency_hz / 1e3
            );
            plot::figure_bytes(
                &LinePlot {
                    x: &x,
                    y: &m.voltage_profile,
                    x_axis: plot::Axis {
                        name: "fraction of the winding from the base",
                        unit: "",
                    },
                    y_axis: plot::Axis {
                        name: "voltage / top voltage",
                        unit: "",
                    },
                    title: &title,
                },
                svg,
            )?
        }
    };
    output::write_atomic(path, &bytes)
}

/// One labelled line of the table: the label padded to a column, then the value.
fn line(s: &mut String, label: &str, value: String) {
    let _ = writeln!(s, "  {label:<46}  {value}");
}

/// The resonance as text.
pub fn table(r: &Resonance) -> String {
    let mut s = String::new();
    let sec = &r.secondary;
    let _ = writeln!(s, "secondary '{}'", sec.name);
    line(
        &mut s,
        &format!("first resonance (distributed, {} sections)", sec.sections),
        format!(
            "{}  (estimated error {})",
            si(sec.frequency_hz, "Hz", 6),
            si(sec.frequency_error_estimate_hz, "Hz", 2)
        ),
    );
    line(
        &mut s,
        "lumped estimate L_s (C_self + C_top)",
        format!(
            "{}  ({:+.2} % from the distributed)",
            si(sec.lumped_frequency_hz, "Hz", 6),
            100.0 * (sec.lumped_frequency_hz / sec.frequency_hz - 1.0)
        ),
    );
    for (k, m) in sec.modes.iter().enumerate().skip(1) {
        line(
            &mut s,
            &format!("mode {}", k + 1),
            si(m.frequency_hz, "Hz", 6),
        );
    }
    let figures = [
        ("inductance L_s", si(sec.inductance_h, "H", 6)),
        (
            "equivalent capacitance 1/((2 pi f1)^2 L_s)",
            si(sec.equivalent_capacitance_f, "F", 5),
        ),
        (
            "modal capacitance at the top 2W/V_top^2",
            si(sec.modal_top_capacitance_f, "F", 5),
        ),
        (
            "self-capacitance (linear profile, bare)",
            si(sec.self_capacitance_f, "F", 5),
        ),
        (
            "top electrode adds (linear profile)",
            si(sec.top_capacitance_f, "F", 5),
        ),
        (
            "top voltage per base current",
            si(sec.top_to_base_ohm, "ohm", 5),
        ),
    ];
    for (label, value) in figures {
        line(&mut s, label, value);
    }
    let l = &sec.losses;
    line(
        &mut s,
        &format!("Q {:.0}, loss referred to the base", sec.q),
        format!(
            "{}: DC {}, skin {}, proximity {} [{}], radiation {}",
            si(l.total_ohm(), "ohm", 4),
            si(l.dc_ohm, "ohm", 3),
            si(l.skin_ohm, "ohm", 3),
            si(l.proximity_ohm, "ohm", 3),
            l.proximity_model,
            si(l.radiation_ohm, "ohm", 3)
        ),
    );
    line(
        &mut s,
        "top voltage where the top electrode breaks out",
        match sec.breakout_top_voltage_v {
            Some(v) => format!("{} (3 MV/m at its surface)", si(v, "V", 4)),
            None => "no electrode connected to the top".to_string(),
        },
    );
    if let Some(p) = &r.primary {
        let _ = writeln!(s, "\nprimary '{}'", p.name);
        line(&mut s, "inductance (all turns)", si(p.inductance_h, "H", 6));
        line(
            &mut s,
            if p.tap_found {
                "turns in use (found for the tank)"
            } else {
                "turns in use"
            },
            format!("{:.3}", p.tap_turns),
        );
        line(&mut s, "inductance in use", si(p.tap_inductance_h, "H", 6));
        if p.lead_inductance_h > 0.0 {
            line(&mut s, "lead inductance", si(p.lead_inductance_h, "H", 4));
        }
        line(
            &mut s,
            "capacitance that tunes it to f1",
            si(p.tuning_capacitance_f, "F", 5),
        );
        if let Some(t) = p.tap_for_tank_turns {
            line(
                &mut s,
                "tap that tunes the tank capacitor to f1",
                format!("{t:.3} turns"),
            );
        }
        line(
            &mut s,
            "coupling k (geometric, part in use)",
            format!("{:.4}", p.coupling_at_tap),
        );
        line(
            &mut s,
            "coupling with the first mode",
            format!("{:.4}", p.modal_coupling),
        );
        line(
            &mut s,
            &format!("Q {:.0} (the gap apart)", p.q),
            format!("wire {} at f1", si(p.resistance_ohm, "ohm", 3)),
        );
        if !p.frequency_against_tap.is_empty() {
            let _ = writeln!(s, "  tap (turns)   inductance     f with the tank");
            for t in &p.frequency_against_tap {
                let _ = writeln!(
                    s,
                    "  {:>11}   {:>12}   {:>12}",
                    t.tap_turns,
                    si(t.inductance_h, "H", 5),
                    si(t.frequency_hz, "Hz", 5)
                );
            }
        }
    }
    if let Some([lo, hi]) = r.split_frequencies_hz {
        let _ = writeln!(s);
        line(
            &mut s,
            "coupled pair: normal modes",
            format!("{} and {}", si(lo, "Hz", 6), si(hi, "Hz", 6)),
        );
    }
    if let Some(f) = r.coupled_frequency_hz {
        let _ = writeln!(s);
        line(
            &mut s,
            "coupled resonance (no primary capacitor)",
            si(f, "Hz", 6),
        );
    }
    if let Some(d) = &r.drive {
        let _ = writeln!(s, "\ndrive ({})", d.kind.replace('_', " "));
        let mut rows: Vec<(&str, Option<String>)> = vec![
            ("peak top voltage", Some(si(d.peak_top_voltage_v, "V", 4))),
            (
                "without the quench",
                d.peak_top_voltage_no_quench_v.map(|v| si(v, "V", 4)),
            ),
            (
                "lossless energy bound V_p sqrt(C_p/C_top)",
                d.energy_bound_top_voltage_v.map(|v| si(v, "V", 4)),
            ),
            (
                "first notch",
                d.first_notch_s
                    .zip(d.first_notch_half_cycles)
                    .map(|(t, h)| format!("{} ({h} half-cycles)", si(t, "s", 4))),
            ),
            (
                "peak / breakout at the top electrode",
                sec.breakout_top_voltage_v
                    .map(|b| format!("{:.2}", d.peak_top_voltage_v / b)),
            ),
            (
                "peak primary current",
                Some(si(d.peak_primary_current_a, "A", 4)),
            ),
            (
                "peak base current of the secondary",
                Some(si(d.peak_base_current_a, "A", 4)),
            ),
            (
                "energy per bang",
                d.energy_per_bang_j.map(|e| si(e, "J", 4)),
            ),
            ("mean power", d.mean_power_w.map(|p| si(p, "W", 4))),
            (
                "ring-down, duty cycle",
                d.ring_down_s
                    .zip(d.duty_cycle)
                    .map(|(r, dc)| format!("{}, {:.3} %", si(r, "s", 3), 100.0 * dc)),
            ),
            (
                "drive frequency",
                d.drive_frequency_hz.map(|f| si(f, "Hz", 6)),
            ),
            ("input power", d.input_power_w.map(|p| si(p, "W", 4))),
        ];
        rows.push((
            "streamer length (common practice, no source)",
            Some(format!(
                "{} (long-gap gradient rule){}",
                si(d.streamer_length_gradient_m, "m", 3),
                d.streamer_length_power_rule_m
                    .map_or(String::new(), |l| format!(
                        ", {} (power rule)",
                        si(l, "m", 3)
                    ))
            )),
        ));
        rows.push((
            "exposure levels taken at",
            Some(si(d.exposure_frequency_hz, "Hz", 5)),
        ));
        for (label, value) in rows {
            if let Some(v) = value {
                line(&mut s, label, v);
            }
        }
    }
    let _ = writeln!(s, "\n{CAUTION}");
    s
}
