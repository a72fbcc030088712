//! The drive models: a spark gap ringing the tuned pair down in time, and a driven primary in
//! steady state; the top voltage, the currents, the energy and power, and the streamer length.
//!
//! The pair is the primary circuit (its tap's inductance plus the leads, the tank capacitor,
//! the wire's and the gap's resistance) and the secondary's first mode referred to its top
//! voltage (C_top_modal, L_top = 1 / (omega1^2 C_top_modal), its loss resistance referred to
//! the same current), coupled by the mode's mutual inductance (the primary's mutual inductance
//! with each section, weighted by the mode's current profile). The system is linear: the spark
//! gap's ring-down is integrated exactly ([`crate::circuit::simulate`]).

use crate::circuit::{
    Drive, LoopState, Loops, Quench, SimulationSettings, loop_modes, simulate, steady_state,
};
use crate::error::SolverError;
use crate::thresholds::LONG_GAP_GRADIENT_V_PER_M;
use coilfield_geometry::{Design, DriveKind, PrimaryAmplitude};
use nalgebra::DMatrix;
use serde::Serialize;
use std::f64::consts::{E, TAU};

/// The tuned pair's elements (SI).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Pair {
    /// Primary circuit inductance: the tap in use plus the leads (H).
    pub l_primary_h: f64,
    /// The primary wire's loss resistance at f1 (ohm).
    pub r_primary_ohm: f64,
    /// The tank (series) capacitor (F), if the primary has one.
    pub c_primary_f: Option<f64>,
    /// The secondary's first mode: inductance referred to the top voltage (H).
    pub l_top_h: f64,
    /// Its capacitance referred to the top voltage, C_top_modal (F).
    pub c_top_f: f64,
    /// Its loss resistance referred to the same current (ohm).
    pub r_top_ohm: f64,
    /// Mutual inductance of the primary with the top-referred mode (H).
    pub m_top_h: f64,
    /// The secondary's first resonance (Hz).
    pub f1_hz: f64,
    /// |V_top / I_base| of the first mode (ohm).
    pub top_to_base_ohm: f64,
}

/// The envelope of a spark-gap bang: peaks per half-cycle.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Envelope {
    /// Times of the top voltage's peaks (s).
    pub top_voltage_times_s: Vec<f64>,
    /// Top voltage at its peaks (V).
    pub top_voltage_v: Vec<f64>,
    /// Times of the primary current's peaks (s).
    pub primary_current_times_s: Vec<f64>,
    /// Primary current at its peaks (A).
    pub primary_current_a: Vec<f64>,
}

/// The drive model's figures (peak values unless a name says otherwise).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DriveResult {
    /// `spark_gap` or `driven`.
    pub kind: &'static str,
    /// Peak top voltage (V): for a spark gap, with the gap quenching at the first notch.
    pub peak_top_voltage_v: f64,
    /// Spark gap: the peak top voltage if the gap never quenched (V).
    pub peak_top_voltage_no_quench_v: Option<f64>,
    /// Spark gap: the lossless energy bound V_p sqrt(C_p / C_top_modal) (V).
    pub energy_bound_top_voltage_v: Option<f64>,
    /// Spark gap: time of the first notch of the primary current's envelope (s).
    pub first_notch_s: Option<f64>,
    /// Spark gap: the primary's half-cycles before the first notch.
    pub first_notch_half_cycles: Option<usize>,
    /// Peak primary current (A).
    pub peak_primary_current_a: f64,
    /// Peak current at the secondary's base (A).
    pub peak_base_current_a: f64,
    /// Spark gap: the energy of one bang, 1/2 C_p V_p^2 (J).
    pub energy_per_bang_j: Option<f64>,
    /// Spark gap: mean power, energy per bang times the break rate (W).
    pub mean_power_w: Option<f64>,
    /// Spark gap: bangs per second (Hz).
    pub break_rate_hz: Option<f64>,
    /// Spark gap: from the bang until the top voltage's envelope has fallen to 1/e of its peak
    /// (s).
    pub ring_down_s: Option<f64>,
    /// Spark gap: break rate times ring-down time.
    pub duty_cycle: Option<f64>,
    /// Driven: the drive frequency (Hz).
    pub drive_frequency_hz: Option<f64>,
    /// Driven: the power the source delivers (W).
    pub input_power_w: Option<f64>,
    /// The frequency the exposure levels are taken at (Hz): f1 for a spark gap, the drive
    /// frequency for a driven primary.
    pub exposure_frequency_hz: f64,
    /// rms over time divided by the peak, for E (from the top voltage): a spark gap's
    /// time average over one break period (None without a break rate), 1/sqrt(2) driven.
    pub rms_factor_e: Option<f64>,
    /// The same for B, from the larger of the primary's and the secondary's current factors.
    pub rms_factor_b: Option<f64>,
    /// Streamer length by the long-gap gradient rule: peak top voltage / the mean breakdown
    /// gradient of long gaps (m; common practice, no source).
    pub streamer_length_gradient_m: f64,
    /// Streamer length by a power rule of the trade, L = 1.7 sqrt(P / 1 W) inches with the mean
    /// power (spark gap, with a break rate) or the input power (driven) (m; common practice, no
    /// source).
    pub streamer_length_power_rule_m: Option<f64>,
    /// Spark gap: the envelopes of the bang with the quench.
    pub envelope: Option<Envelope>,
}

/// A stored envelope keeps at most this many peaks (the run's first ones).
const MAX_ENVELOPE_PEAKS: usize = 4000;

/// The drive model's figures for `design`'s `[drive] kind` (None for an explicit drive).
pub(crate) fn run(
    design: &Design,
    pair: &Pair,
    warnings: &mut Vec<String>,
) -> Result<Option<DriveResult>, SolverError> {
    let gradient = design
        .clearance
        .long_gap_gradient_v_per_m
        .unwrap_or(LONG_GAP_GRADIENT_V_PER_M);
    match design.drive.kind {
        DriveKind::Explicit => Ok(None),
        DriveKind::SparkGap(s) => spark_gap(pair, s, gradient, warnings).map(Some),
        DriveKind::Driven(d) => {
            let r = driven(pair, d.amplitude, design.drive.frequency_hz, gradient)?;
            if design.drive.frequency_hz.is_none() {
                warnings.push(format!(
                    "driven: no [drive] frequency: driven at the coupled system's resonance \
                     nearest f1, {}, where a self-oscillating driver locks",
                    crate::numtext::si(r.drive_frequency_hz.unwrap_or(f64::NAN), "Hz", 6)
                ));
            }
            Ok(Some(r))
        }
    }
}

fn loops(pair: &Pair, gap_ohm: f64, with_capacitor: bool) -> Loops {
    Loops {
        inductance_h: DMatrix::from_row_slice(
            2,
            2,
            &[pair.l_primary_h, pair.m_top_h, pair.m_top_h, pair.l_top_h],
        ),
        capacitance_f: vec![
            if with_capacitor {
                pair.c_primary_f
            } else {
                None
            },
            Some(pair.c_top_f),
        ],
        resistance_ohm: vec![pair.r_primary_ohm + gap_ohm, pair.r_top_ohm],
    }
}

/// The power rule of the trade for the streamer length: 1.7 sqrt(P / W) inches (common
/// practice, no source), in metres.
fn streamer_power_rule_m(power_w: f64) -> f64 {
    1.7 * 0.0254 * power_w.max(0.0).sqrt()
}

/// The base current (A) that goes with a top-referred loop current `i_top` (A): equal energy,
/// 1/2 L_top i_top^2 = 1/2 L_base i_base^2, and V_top / I_base = top_to_base_ohm at f1.
fn base_current_a(pair: &Pair, peak_top_v: f64) -> f64 {
    peak_top_v / pair.top_to_base_ohm
}

fn spark_gap(
    pair: &Pair,
    s: coilfield_geometry::SparkGap,
    gradient: f64,
    warnings: &mut Vec<String>,
) -> Result<DriveResult, SolverError> {
    let c_p = s.tank_capacitance_f;
    let v_p = s.charge_voltage_v;
    let circuit = loops(pair, s.gap_resistance_ohm, true);
    let start = LoopState {
        charge_c: vec![c_p * v_p, 0.0],
        current_a: vec![0.0, 0.0],
    };
    // Long enough for the transfer (about 1/k half-cycles) and six decay times of the
    // secondary after it; at least 2 ms and 400 periods of f1, at most 50 ms.
    let omega1 = TAU * pair.f1_hz;
    let q_top = omega1 * pair.l_top_h / pair.r_top_ohm.max(1e-300);
    let tau_s = 2.0 * q_top / omega1;
    let k = (pair.m_top_h / (pair.l_primary_h * pair.l_top_h).sqrt()).abs();
    let transfer_s = 1.0 / (pair.f1_hz * k.max(1e-3));
    let duration_s = (transfer_s + 6.0 * tau_s)
        .max(2e-3)
        .max(400.0 / pair.f1_hz)
        .min(50e-3);
    let free = simulate(&circuit, &start, &SimulationSettings::new(duration_s))?;
    let no_quench = free.peak_capacitor_voltage(1)?.value;
    let notch = free.first_notch(0)?;
    let quenched = match notch {
        Some(n) => simulate(
            &circuit,
            &start,
            &SimulationSettings {
                quench: Some(Quench {
                    loop_index: 0,
                    time_s: n.time_s,
                }),
                ..SimulationSettings::new(duration_s)
            },
        )?,
        None => {
            warnings.push(
                "spark gap: the primary current's envelope has no notch within the run (a \
                 lossy or weakly coupled pair): the gap is taken to conduct throughout"
                    .to_string(),
            );
            free.clone()
        }
    };
    let peak_top = quenched.peak_capacitor_voltage(1)?.value;
    let v_env = quenched.voltage_envelope(1)?;
    let i_env = quenched.current_envelope(0)?;
    let peak_primary = i_env.peaks.iter().copied().fold(0.0, f64::max);
    // Ring-down: after the envelope's maximum, the first peak below 1/e of it.
    let (imax, vmax) =
        v_env.peaks.iter().enumerate().fold(
            (0, 0.0),
            |best, (i, &v)| if v > best.1 { (i, v) } else { best },
        );
    let ring_down = v_env.peaks[imax..]
        .iter()
        .zip(&v_env.times_s[imax..])
        .find(|(v, _)| **v < vmax / E)
        .map(|(_, t)| *t)
        .unwrap_or_else(|| v_env.times_s.get(imax).copied().unwrap_or(0.0) + tau_s);
    // Time averages over one break period: mean of the squared signal.
    let dt = quenched.time_step_s();
    let mean_square = |x: &[f64], rate: f64| rate * dt * x.iter().map(|v| v * v).sum::<f64>();
    let (rms_e, rms_b) = match s.break_rate_hz {
        Some(rate) => {
            let v = quenched.capacitor_voltage_v(1)?;
            let ip = quenched.current_a(0)?;
            let is = quenched.current_a(1)?;
            let peak_is = is.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
            let fe = mean_square(&v, rate).sqrt() / peak_top;
            let fp = mean_square(&ip, rate).sqrt() / peak_primary.max(1e-300);
            let fs = mean_square(&is, rate).sqrt() / peak_is.max(1e-300);
            (Some(fe), Some(fp.max(fs)))
        }
        None => {
            warnings.push(
                "spark gap: no break_rate in [drive]: the mean power, the duty cycle and the \
                 time-averaged rms fields are not computed"
                    .to_string(),
            );
            (None, None)
        }
    };
    let energy = 0.5 * c_p * v_p * v_p;
    let mean_power = s.break_rate_hz.map(|r| r * energy);
    let take = |v: &[f64]| {
        v.iter()
            .take(MAX_ENVELOPE_PEAKS)
            .copied()
            .collect::<Vec<f64>>()
    };
    Ok(DriveResult {
        kind: "spark_gap",
        peak_top_voltage_v: peak_top,
        peak_top_voltage_no_quench_v: Some(no_quench),
        energy_bound_top_voltage_v: Some(v_p * (c_p / pair.c_top_f).sqrt()),
        first_notch_s: notch.map(|n| n.time_s),
        first_notch_half_cycles: notch.map(|n| n.half_cycles),
        peak_primary_current_a: peak_primary,
        peak_base_current_a: base_current_a(pair, peak_top),
        energy_per_bang_j: Some(energy),
        mean_power_w: mean_power,
        break_rate_hz: s.break_rate_hz,
        ring_down_s: Some(ring_down),
        duty_cycle: s.break_rate_hz.map(|r| r * ring_down),
        drive_frequency_hz: None,
        input_power_w: None,
        exposure_frequency_hz: pair.f1_hz,
        rms_factor_e: rms_e,
        rms_factor_b: rms_b,
        streamer_length_gradient_m: peak_top / gradient,
        streamer_length_power_rule_m: mean_power.map(streamer_power_rule_m),
        envelope: Some(Envelope {
            top_voltage_times_s: take(&v_env.times_s),
            top_voltage_v: take(&v_env.peaks),
            primary_current_times_s: take(&i_env.times_s),
            primary_current_a: take(&i_env.peaks),
        }),
    })
}

fn driven(
    pair: &Pair,
    amplitude: PrimaryAmplitude,
    frequency_hz: Option<f64>,
    gradient: f64,
) -> Result<DriveResult, SolverError> {
    // By default the coupled system's normal mode nearest f1, where a self-oscillating driver
    // locks (it follows the current's zero crossings, i.e. a resonance of the pair).
    let f_d = match frequency_hz {
        Some(f) => f,
        None => {
            let circuit = loops(pair, 0.0, true);
            let modes = loop_modes(&Loops {
                resistance_ohm: vec![0.0, 0.0],
                ..circuit
            })?;
            modes
                .iter()
                .map(|m| m.frequency_hz)
                .min_by(|a, b| (a - pair.f1_hz).abs().total_cmp(&(b - pair.f1_hz).abs()))
                .unwrap_or(pair.f1_hz)
        }
    };
    let circuit = loops(pair, 0.0, true);
    let drive = match amplitude {
        PrimaryAmplitude::CurrentA(i) => Drive::CurrentA(i),
        PrimaryAmplitude::VoltageV(v) => Drive::VoltageV(v),
    };
    let st = steady_state(&circuit, 0, drive, TAU * f_d)?;
    let top = st.capacitor_voltage_v[1].map_or(0.0, |v| v.norm());
    let primary = st.current_a[0].norm();
    let input = st.input_power_w;
    Ok(DriveResult {
        kind: "driven",
        peak_top_voltage_v: top,
        peak_top_voltage_no_quench_v: None,
        energy_bound_top_voltage_v: None,
        first_notch_s: None,
        first_notch_half_cycles: None,
        peak_primary_current_a: primary,
        peak_base_current_a: base_current_a(pair, top),
        energy_per_bang_j: None,
        mean_power_w: None,
        break_rate_hz: None,
        ring_down_s: None,
        duty_cycle: None,
        drive_frequency_hz: Some(f_d),
        input_power_w: Some(input),
        exposure_frequency_hz: f_d,
        rms_factor_e: Some(std::f64::consts::FRAC_1_SQRT_2),
        rms_factor_b: Some(std::f64::consts::FRAC_1_SQRT_2),
        streamer_length_gradient_m: top / gradient,
        streamer_length_power_rule_m: Some(streamer_power_rule_m(input)),
        envelope: None,
    })
}
