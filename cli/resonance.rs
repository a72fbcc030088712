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
) -> anyhow::Result<ExitCode> {
    let design = load::design(design_path)?;
    let label = design_path.display().to_string();
    for p in [plot, plot_tap].into_iter().flatten() {
        is_svg(p)?;
    }
    let params = ResonanceParams {
        sections,
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
            let text = serde_json::to_string_pretty(&Out {
                caution: CAUTION,
                resonance: &r,
            })?;
            println!("{text}");
        }
        Format::Table => {
            print!("{}", table(&r));
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
        .map(|t| t.frequency_hz / 1e3)
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
            x_label: "turns in use",
            y_label: "frequency (kHz)",
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
            let x: Vec<f64> = env.top_voltage_times_s.iter().map(|t| t * 1e3).collect();
            let y: Vec<f64> = env.top_voltage_v.iter().map(|v| v / 1e3).collect();
            plot::figure_bytes(
                &LinePlot {
                    x: &x,
                    y: &y,
                    x_label: "time (ms)",
                    y_label: "top voltage, peaks (kV)",
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
                    x_label: "fraction of the winding from the base",
                    y_label: "voltage / top voltage",
                    title: &title,
                },
                svg,
            )?
        }
    };
    output::write_atomic(path, &bytes)
}

/// The resonance as text.
pub fn table(r: &Resonance) -> String {
    let mut s = String::new();
    let sec = &r.secondary;
    let _ = writeln!(s, "secondary '{}'", sec.name);
    let _ = writeln!(
        s,
        "  first resonance (distributed, {} sections)  {}  (estimated error {})",
        sec.sections,
        si(sec.frequency_hz, "Hz", 6),
        si(sec.frequency_error_estimate_hz, "Hz", 2)
    );
    let _ = writeln!(
        s,
        "  lumped estimate L_s (C_self + C_top)        {}  ({:+.2} % from the distributed)",
        si(sec.lumped_frequency_hz, "Hz", 6),
        100.0 * (sec.lumped_frequency_hz / sec.frequency_hz - 1.0)
    );
    for (k, m) in sec.modes.iter().enumerate().skip(1) {
        let _ = writeln!(
            s,
            "  mode {}                                      {}",
            k + 1,
            si(m.frequency_hz, "Hz", 6)
        );
    }
    let _ = writeln!(
        s,
        "  inductance L_s                              {}",
        si(sec.inductance_h, "H", 6)
    );
    let _ = writeln!(
        s,
        "  equivalent capacitance 1/((2 pi f1)^2 L_s)  {}",
        si(sec.equivalent_capacitance_f, "F", 5)
    );
    let _ = writeln!(
        s,
        "  modal capacitance at the top 2W/V_top^2     {}",
        si(sec.modal_top_capacitance_f, "F", 5)
    );
    let _ = writeln!(
        s,
        "  self-capacitance (linear profile, bare)     {}",
        si(sec.self_capacitance_f, "F", 5)
    );
    let _ = writeln!(
        s,
        "  top electrode adds (linear profile)         {}",
        si(sec.top_capacitance_f, "F", 5)
    );
    let _ = writeln!(
        s,
        "  top voltage per base current                {}",
        si(sec.top_to_base_ohm, "ohm", 5)
    );
    let l = &sec.losses;
    let _ = writeln!(
        s,
        "  Q {:.0}  (base-referred loss {}: DC {}, skin {}, proximity {} [{}], radiation {})",
        sec.q,
        si(l.total_ohm(), "ohm", 4),
        si(l.dc_ohm, "ohm", 3),
        si(l.skin_ohm, "ohm", 3),
        si(l.proximity_ohm, "ohm", 3),
        l.proximity_model,
        si(l.radiation_ohm, "ohm", 3)
    );
    match sec.breakout_top_voltage_v {
        Some(v) => {
            let _ = writeln!(
                s,
                "  breakout: the top electrode reaches 3 MV/m at a top voltage of {}",
                si(v, "V", 4)
            );
        }
        None => {
            let _ = writeln!(s, "  breakout: no electrode connected to the top");
        }
    }
    if let Some(p) = &r.primary {
        let _ = writeln!(s, "\nprimary '{}'", p.name);
        let _ = writeln!(
            s,
            "  inductance (all turns)                      {}",
            si(p.inductance_h, "H", 6)
        );
        let _ = writeln!(
            s,
            "  turns in use{}                       {:.3}",
            if p.tap_found {
                " (found for the tank)"
            } else {
                "                    "
            },
            p.tap_turns
        );
        let _ = writeln!(
            s,
            "  inductance in use                           {}",
            si(p.tap_inductance_h, "H", 6)
        );
        if p.lead_inductance_h > 0.0 {
            let _ = writeln!(
                s,
                "  lead inductance                             {}",
                si(p.lead_inductance_h, "H", 4)
            );
        }
        let _ = writeln!(
            s,
            "  capacitance that tunes it to f1             {}",
            si(p.tuning_capacitance_f, "F", 5)
        );
        if let Some(t) = p.tap_for_tank_turns {
            let _ = writeln!(
                s,
                "  tap that tunes the tank capacitor to f1     {t:.3} turns"
            );
        }
        let _ = writeln!(
            s,
            "  coupling k (geometric, part in use)         {:.4}",
            p.coupling_at_tap
        );
        let _ = writeln!(
            s,
            "  coupling with the first mode                {:.4}",
            p.modal_coupling
        );
        let _ = writeln!(
            s,
            "  Q {:.0} (wire {} at f1, the gap apart)",
            p.q,
            si(p.resistance_ohm, "ohm", 3)
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
        let _ = writeln!(
            s,
            "\ncoupled pair: normal modes {} and {}",
            si(lo, "Hz", 6),
            si(hi, "Hz", 6)
        );
    }
    if let Some(f) = r.coupled_frequency_hz {
        let _ = writeln!(
            s,
            "\ncoupled system (the primary has no capacitor): resonance {}",
            si(f, "Hz", 6)
        );
    }
    if let Some(d) = &r.drive {
        let _ = writeln!(s, "\ndrive ({})", d.kind.replace('_', " "));
        let _ = writeln!(
            s,
            "  peak top voltage                            {}",
            si(d.peak_top_voltage_v, "V", 4)
        );
        if let Some(v) = d.peak_top_voltage_no_quench_v {
            let _ = writeln!(
                s,
                "  without the quench                          {}",
                si(v, "V", 4)
            );
        }
        if let Some(v) = d.energy_bound_top_voltage_v {
            let _ = writeln!(
                s,
                "  lossless energy bound V_p sqrt(C_p/C_top)   {}",
                si(v, "V", 4)
            );
        }
        if let (Some(t), Some(h)) = (d.first_notch_s, d.first_notch_half_cycles) {
            let _ = writeln!(
                s,
                "  first notch                                 {} ({h} half-cycles)",
                si(t, "s", 4)
            );
        }
        if let Some(b) = sec.breakout_top_voltage_v {
            let _ = writeln!(
                s,
                "  against breakout at the top electrode       {} (peak / breakout {:.2})",
                si(b, "V", 4),
                d.peak_top_voltage_v / b
            );
        }
        let _ = writeln!(
            s,
            "  peak primary current                        {}",
            si(d.peak_primary_current_a, "A", 4)
        );
        let _ = writeln!(
            s,
            "  peak base current of the secondary          {}",
            si(d.peak_base_current_a, "A", 4)
        );
        if let Some(e) = d.energy_per_bang_j {
            let _ = writeln!(
                s,
                "  energy per bang                             {}",
                si(e, "J", 4)
            );
        }
        if let Some(p) = d.mean_power_w {
            let _ = writeln!(
                s,
                "  mean power                                  {}",
                si(p, "W", 4)
            );
        }
        if let (Some(r), Some(dc)) = (d.ring_down_s, d.duty_cycle) {
            let _ = writeln!(
                s,
                "  ring-down {} , duty cycle {:.3} %",
                si(r, "s", 3),
                100.0 * dc
            );
        }
        if let Some(f) = d.drive_frequency_hz {
            let _ = writeln!(
                s,
                "  drive frequency                             {}",
                si(f, "Hz", 6)
            );
        }
        if let Some(p) = d.input_power_w {
            let _ = writeln!(
                s,
                "  input power                                 {}",
                si(p, "W", 4)
            );
        }
        let _ = writeln!(
            s,
            "  streamer length: {} (long-gap gradient rule){}; both common practice, no source",
            si(d.streamer_length_gradient_m, "m", 3),
            d.streamer_length_power_rule_m
                .map_or(String::new(), |l| format!(
                    ", {} (power rule)",
                    si(l, "m", 3)
                ))
        );
        let _ = writeln!(
            s,
            "  exposure levels are taken at {}",
            si(d.exposure_frequency_hz, "Hz", 5)
        );
    }
    let _ = writeln!(s, "\n{CAUTION}");
    s
}
