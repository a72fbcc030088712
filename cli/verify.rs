//! `coilfield verify`: recompute every validation case from its inputs and compare it with its
//! reference.
//!
//! Each table in `validation/` is a CSV whose last four columns are
//! `reference,tolerance,tolerance_kind,source`; the columns before them are the inputs. The
//! tables are built into the binary; `--tables DIR` reads them from a folder instead, so an
//! edited input row is recomputed.
//!
//! Two phases: every table is read first, each row's columns checked and its case set up
//! (designs parsed and checked, finite-element problems built, closed forms evaluated: they
//! cost microseconds and check their own arguments), so a bad row anywhere is refused by file,
//! row and column (exit 2) before any solve; then every case is computed (inductance
//! matrices, ring sums, boundary and finite elements, simulations, resonance and field models).

use crate::{BadInput, Format};
use coilfield_geometry::discretise::ring_model;
use coilfield_geometry::file::winding::MAX_TURNS;
use coilfield_geometry::{Design, Winding, limits, parse_design, winding_from_table};
use coilfield_solver::Par;
use coilfield_solver::assembly::{InductanceReport, inductance_report};
use coilfield_solver::circuit::{
    Drive, LadderModes, LoopState, Loops, Quench, SimulationSettings, equivalent_capacitance_f,
    ladder_modes, loop_modes, simulate, steady_state, validation_full_ladder,
};
use coilfield_solver::electrostatic::{Params, Problem, Profile};
use coilfield_solver::elliptic::{cel, ellip_e, ellip_k};
use coilfield_solver::fem::FemProblem;
use coilfield_solver::fem::cases::reference_domain;
use coilfield_solver::field::{b_ring_point, b_sheet_point};
use coilfield_solver::field_model::{
    FAR_FIELD_GROUND, FAR_FIELD_HELICES, FarFieldHelix, FarFieldPair, FieldModel, magnitude,
};
use coilfield_solver::mutual::{Circle, mutual_ring_ring, mutual_ring_ring_coaxial};
use coilfield_solver::numtext::shortest;
use coilfield_solver::self_inductance::{
    lorenz_sheet, nagaoka, rosa_b, rosa_solenoid, self_arc_round_wire, self_ring_model,
    self_ring_round_wire, wheeler_spiral,
};
use nalgebra::{DMatrix, Point3, Unit, Vector3};
use serde::Serialize;
use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;
use std::process::ExitCode;
use std::sync::Mutex;

/// The tables, by name, with their built-in contents.
pub const TABLES: [(&str, &str); 22] = [
    ("elliptic", include_str!("../validation/elliptic.csv")),
    ("cel", include_str!("../validation/cel.csv")),
    (
        "maxwell_coaxial",
        include_str!("../validation/maxwell_coaxial.csv"),
    ),
    (
        "rings_general",
        include_str!("../validation/rings_general.csv"),
    ),
    ("ring_self", include_str!("../validation/ring_self.csv")),
    ("nagaoka", include_str!("../validation/nagaoka.csv")),
    ("rosa_b", include_str!("../validation/rosa_b.csv")),
    ("solenoid", include_str!("../validation/solenoid.csv")),
    ("spiral", include_str!("../validation/spiral.csv")),
    ("awg", include_str!("../validation/awg.csv")),
    ("fields_b", include_str!("../validation/fields_b.csv")),
    ("losses", include_str!("../validation/losses.csv")),
    ("resonance", include_str!("../validation/resonance.csv")),
    ("images", include_str!("../validation/images.csv")),
    ("tap", include_str!("../validation/tap.csv")),
    ("circuits", include_str!("../validation/circuits.csv")),
    (
        "fields_capacitance",
        include_str!("../validation/fields_capacitance.csv"),
    ),
    ("tube_bem", include_str!("../validation/tube_bem.csv")),
    ("fem", include_str!("../validation/fem.csv")),
    ("fem_skfem", include_str!("../validation/fem_skfem.csv")),
    (
        "far_field_helix",
        include_str!("../validation/far_field_helix.csv"),
    ),
    (
        "far_field_ground",
        include_str!("../validation/far_field_ground.csv"),
    ),
];

/// The designs the rows of `tap.csv` name (invented for the check; `validation/tap_refs.py`
/// reads the same files).
const TAP_DESIGNS: [(&str, &str); 2] = [
    (
        "tap_helix.toml",
        include_str!("../validation/tap_helix.toml"),
    ),
    (
        "tap_spiral.toml",
        include_str!("../validation/tap_spiral.toml"),
    ),
];

/// The windings of `images.csv` over the plane z = 0 (invented for the check; the same design
/// as in `validation/images_refs.py` and tests/validation.rs).
const IMAGE_DESIGN: &str = include_str!("../validation/images_design.toml");

/// One validation case, recomputed.
#[derive(Debug, Serialize)]
struct Case {
    table: String,
    row: usize,
    inputs: BTreeMap<String, String>,
    reference: f64,
    computed: f64,
    error: f64,
    tolerance: f64,
    tolerance_kind: String,
    passed: bool,
    source: String,
}

#[derive(Debug, Serialize)]
struct Summary {
    cases: Vec<Case>,
    passed: usize,
    failed: usize,
}

type Row = BTreeMap<String, String>;

fn num(row: &Row, key: &str) -> anyhow::Result<f64> {
    let text = row
        .get(key)
        .ok_or_else(|| BadInput(format!("column '{key}' missing")))?;
    text.trim()
        .parse::<f64>()
        .map_err(|_| BadInput(format!("column '{key}': '{text}' is not a number")).into())
}

fn text<'a>(row: &'a Row, key: &str) -> anyhow::Result<&'a str> {
    row.get(key)
        .map(|s| s.trim())
        .ok_or_else(|| BadInput(format!("column '{key}' missing")).into())
}

fn z_axis() -> Unit<Vector3<f64>> {
    Vector3::z_axis()
}

/// A row's winding through the design file's checks of a winding by itself
/// ([`winding_from_table`]: sizes and turns in range, wire thinner than the pitch), so that a
/// row no design file could hold is refused by name, as in a design file.
fn checked_winding(label: &str, keys: &[(&str, toml::Value)]) -> anyhow::Result<Winding> {
    let mut table = toml::Table::new();
    table.insert("name".into(), "case".into());
    table.insert("model".into(), "ring".into());
    table.insert("origin".into(), toml::Value::Array(vec![0.0.into(); 3]));
    table.insert(
        "axis".into(),
        toml::Value::Array(vec![0.0.into(), 0.0.into(), 1.0.into()]),
    );
    for (k, v) in keys {
        table.insert((*k).into(), v.clone());
    }
    Ok(winding_from_table(table, 1, label)?)
}

/// A size column (m) inside the design file's range ([`limits::MIN_SIZE_M`] to
/// [`limits::MAX_SIZE_M`]).
fn size(row: &Row, key: &str) -> anyhow::Result<f64> {
    let v = num(row, key)?;
    if !(limits::MIN_SIZE_M..=limits::MAX_SIZE_M).contains(&v) {
        anyhow::bail!(BadInput(format!(
            "column '{key}': {v:e} m is outside the accepted range {}",
            limits::range_phrase(limits::MIN_SIZE_M, limits::MAX_SIZE_M, "m")
        )));
    }
    Ok(v)
}

/// A coordinate column (m) inside the design file's range.
fn coordinate(row: &Row, key: &str) -> anyhow::Result<f64> {
    let v = num(row, key)?;
    if !v.is_finite() || v.abs() > limits::MAX_COORDINATE_M {
        anyhow::bail!(BadInput(format!(
            "column '{key}': {v:e} m is outside the accepted range of a coordinate, \
             -{0:e} m to {0:e} m",
            limits::MAX_COORDINATE_M
        )));
    }
    Ok(v)
}

/// A whole count column from 1 to `max`.
fn count(row: &Row, key: &str, max: f64) -> anyhow::Result<usize> {
    let v = num(row, key)?;
    if !v.is_finite() || v < 1.0 || v > max || v.fract() != 0.0 {
        anyhow::bail!(BadInput(format!(
            "column '{key}': {v:e} is not a whole number from 1 to {max:e}"
        )));
    }
    Ok(v as usize)
}

/// A finite number column inside `[lo, hi]`.
fn bounded(row: &Row, key: &str, lo: f64, hi: f64) -> anyhow::Result<f64> {
    let v = num(row, key)?;
    if !(lo..=hi).contains(&v) {
        anyhow::bail!(BadInput(format!(
            "column '{key}': {v:e} is outside the accepted range {lo:e} to {hi:e}"
        )));
    }
    Ok(v)
}

/// `v` unless it is zero.
fn nonzero(v: f64, key: &str) -> anyhow::Result<f64> {
    if v == 0.0 {
        anyhow::bail!(BadInput(format!("column '{key}': must not be 0")));
    }
    Ok(v)
}

fn ring_sum(w: &Winding) -> anyhow::Result<f64> {
    let model = ring_model(w).ok_or_else(|| anyhow::anyhow!("no ring model"))?;
    Ok(self_ring_model(&model, Par::Rayon))
}

/// The computed value of one row, with the magnitude a `rel_to_magnitude` tolerance is taken
/// of (the magnitude of the vector a component belongs to; else the value's own).
struct Computed {
    value: f64,
    magnitude: f64,
}

impl From<f64> for Computed {
    fn from(value: f64) -> Self {
        Computed {
            value,
            magnitude: value.abs(),
        }
    }
}

/// The computation of one row, its columns read and checked: run once every table is read.
type Job = Box<dyn FnOnce() -> anyhow::Result<Computed>>;

/// A row's solve, left for the second phase.
fn later<T: Into<Computed>>(solve: impl FnOnce() -> anyhow::Result<T> + 'static) -> Job {
    Box::new(move || solve().map(Into::into))
}

/// A row's value already at hand (a closed form, evaluated while reading).
fn ready(value: impl Into<Computed>) -> Job {
    let value = value.into();
    Box::new(move || Ok(value))
}

/// One row of a table read and checked: the case's computation, left for the second phase.
fn read_row(table: &str, row: &Row, label: &str) -> anyhow::Result<Job> {
    Ok(match table {
        "fields_b" => ready(fields_b(row)?),
        "losses" => losses(row)?,
        "resonance" => resonance(row)?,
        "images" => images(row)?,
        "tap" => tap(row)?,
        "circuits" => circuits(row)?,
        "fields_capacitance" => fields_capacitance(row)?,
        "tube_bem" => tube_bem(row)?,
        "fem" | "fem_skfem" => finite_element(row)?,
        _ => kernel(table, row, label)?,
    })
}

/// The value of a row's computation, checked finite: inputs in range give finite values; a
/// non-finite one is a defect, never a pass or fail.
fn finite(computed: Computed) -> anyhow::Result<Computed> {
    if !computed.value.is_finite() {
        anyhow::bail!(BadInput(format!(
            "the computed value is {}, not a finite number",
            computed.value
        )));
    }
    Ok(computed)
}

/// A row of `fields_b.csv`: one component (T) of B of a ring carrying 1 A or of a cylindrical
/// current sheet, through the field evaluator's kernels
/// ([`coilfield_solver::field::b_ring_point`], [`coilfield_solver::field::b_sheet_point`]).
fn fields_b(row: &Row) -> anyhow::Result<Computed> {
    let a = size(row, "radius_m")?;
    let rho = bounded(row, "rho_m", 0.0, limits::MAX_COORDINATE_M)?;
    let z = coordinate(row, "z_m")?;
    let (b_rho, b_z) = match text(row, "kind")? {
        "loop" => b_ring_point(a, 1.0, rho, z),
        "sheet" => b_sheet_point(
            a,
            size(row, "half_length_m")?,
            bounded(row, "current_per_length_a_per_m", -1e12, 1e12)?,
            rho,
            z,
        ),
        other => anyhow::bail!(BadInput(format!(
            "column 'kind': '{other}' is not loop or sheet"
        ))),
    };
    let value = match text(row, "quantity")? {
        "b_rho" => b_rho,
        "b_z" => b_z,
        other => anyhow::bail!(BadInput(format!(
            "column 'quantity': '{other}' is not b_rho or b_z"
        ))),
    };
    Ok(Computed {
        value,
        magnitude: b_rho.hypot(b_z),
    })
}

/// Points of the trapezoidal rule for `h_eff_sine`: its error (k h)^2 / (12 n^2) relative
/// (the rule's error term for a smooth integrand) stays below 2e-13 for k h up to 1.5, under
/// the table's 1e-12.
const H_EFF_POINTS: usize = 1_000_000;

/// A row of `losses.csv` through the loss model's functions ([`coilfield_solver::losses`]);
/// the arguments of each kind are listed in `validation/losses_refs.py`.
fn losses(row: &Row) -> anyhow::Result<Job> {
    use coilfield_solver::losses::*;
    let kind = text(row, "kind")?;
    let a1 = || num(row, "arg1");
    let a2 = || num(row, "arg2");
    let a3 = || num(row, "arg3");
    let a4 = || num(row, "arg4");
    let tube = || internal_impedance_tube(a1()?, a2()?, a4()?, 1.0, a3()?).map_err(bad);
    let value = match kind {
        "skin_depth" => skin_depth_m(a1()?, a2()?, a3()?).map_err(bad)?,
        "wire_re" => round_wire_impedance_ratio(a1()?).map_err(bad)?.0,
        "wire_im" => round_wire_impedance_ratio(a1()?).map_err(bad)?.1,
        "wire_low" | "wire_high" | "terman_h" => {
            ac_resistance_ratio_round_wire(a1()?).map_err(bad)?
        }
        "terman_g" | "proximity_g" => proximity_function_round_wire(a1()?).map_err(bad)?,
        "tube_r" | "tube_dc" | "tube_hf" => tube()?.resistance_ohm_per_m,
        "tube_l" => tube()?.inductance_h_per_m,
        "dowell" => dowell_one_layer_factor(a1()?, a2()?, a3()?).map_err(bad)?,
        "rad_monopole_uniform" | "rad_textbook" => {
            radiation_resistance_monopole_ohm(a1()?, a2()?).map_err(bad)?
        }
        "rad_monopole_linear" => {
            // Current falling linearly from the base to 0 at the top.
            let h_eff = effective_height_from_current_m(&[0.0, a1()?], &[1.0, 0.0]).map_err(bad)?;
            radiation_resistance_monopole_ohm(h_eff, a2()?).map_err(bad)?
        }
        "rad_dipole_uniform" => radiation_resistance_dipole_ohm(a1()?, a2()?).map_err(bad)?,
        "h_eff_sine" => {
            // A million points: the one solve of the table, left for the second phase.
            let (h, k) = (size(row, "arg1")?, bounded(row, "arg2", 0.0, 1e6)?);
            return Ok(later(move || {
                let z: Vec<f64> = (0..=H_EFF_POINTS)
                    .map(|i| h * i as f64 / H_EFF_POINTS as f64)
                    .collect();
                let i: Vec<f64> = z.iter().map(|&z| (k * (h - z)).sin()).collect();
                effective_height_from_current_m(&z, &i).map_err(bad)
            }));
        }
        other => anyhow::bail!(BadInput(format!("column 'kind': unknown kind '{other}'"))),
    };
    Ok(ready(value))
}

/// A solver's refusal of a row's inputs, as bad input.
fn bad(e: impl std::fmt::Display) -> anyhow::Error {
    BadInput(e.to_string()).into()
}

/// A design's text through the design file's parser and checks, labelled as the row.
fn design(text: &str) -> anyhow::Result<Design> {
    Ok(parse_design(text, "the row's design")?)
}

/// A row of `resonance.csv`, kind `medhurst`: Medhurst's H = C / D (pF/cm) of a single-layer
/// solenoid of diameter 10 cm at l/D = `x`, from the distributed model's C_eq of the
/// `resonance` command ([`coilfield_solver::resonance::resonance`]). The set-up is that of
/// tests/resonance.rs: pitch 1 mm, 0.5 mm wire, its base half a diameter above a grounded plane
/// (invented sizes).
fn resonance(row: &Row) -> anyhow::Result<Job> {
    use coilfield_solver::resonance::{ResonanceParams, resonance};
    if text(row, "kind")? != "medhurst" {
        anyhow::bail!(BadInput("column 'kind': only 'medhurst' is known".into()));
    }
    let l_over_d = bounded(row, "x", 0.05, 20.0)?;
    let d = 0.1;
    let l = l_over_d * d;
    let turns = (l / 0.001).round();
    let text = format!(
        "[[winding]]\nname = \"coil\"\nshape = \"helix\"\nrole = \"secondary\"\n\
         origin = [0.0, 0.0, {:?}]\naxis = [0.0, 0.0, 1.0]\nradius = {:?}\nlength = {l:?}\n\
         turns = {turns:?}\nwire_diameter = 0.0005\n\n[ground]\nz = 0.0\n",
        d / 2.0,
        d / 2.0 - 0.00025
    );
    let design = design(&text)?;
    Ok(later(move || {
        let r = resonance(
            &design,
            "the row's design",
            &ResonanceParams::default(),
            Par::Rayon,
        )?;
        // H in pF per cm of diameter.
        Ok(r.secondary.equivalent_capacitance_f / (d * 100.0 * 1e-12))
    }))
}

/// Index of the winding `name` in a report.
fn winding_index(report: &InductanceReport, name: &str) -> anyhow::Result<usize> {
    report
        .windings
        .iter()
        .position(|w| w.name == name)
        .ok_or_else(|| BadInput(format!("the design has no winding '{name}'")).into())
}

/// The computation of an entry (H) of `design`'s inductance matrix, by quantity
/// `self_inductance.A` or `mutual.A.B`, through the `inductance` command's matrix
/// ([`inductance_report`]); the quantity and its windings' names checked now.
fn inductance_entry(design: Design, quantity: &str) -> anyhow::Result<Job> {
    let parts: Vec<&str> = quantity.split('.').collect();
    let (a, b) = match parts.as_slice() {
        ["self_inductance", a] => (*a, *a),
        ["mutual", a, b] => (*a, *b),
        _ => anyhow::bail!(BadInput(format!(
            "column 'quantity': '{quantity}' is not self_inductance.A or mutual.A.B"
        ))),
    };
    for name in [a, b] {
        if !design.windings.iter().any(|w| w.name == name) {
            anyhow::bail!(BadInput(format!(
                "column 'quantity': the design has no winding '{name}'"
            )));
        }
    }
    let (a, b) = (a.to_string(), b.to_string());
    Ok(later(move || {
        let report = inductance_report(&design, Par::Rayon)?;
        Ok(report.mutual_h[winding_index(&report, &a)?][winding_index(&report, &b)?])
    }))
}

/// A row of `images.csv`: an inductance of the invented design [`IMAGE_DESIGN`] in free space
/// or over a conducting ground plane at z = 0.
fn images(row: &Row) -> anyhow::Result<Job> {
    let conducting = match text(row, "case")? {
        "free_space" => false,
        "conducting_ground" => true,
        other => anyhow::bail!(BadInput(format!(
            "column 'case': '{other}' is not free_space or conducting_ground"
        ))),
    };
    let quantity = text(row, "quantity")?;
    let design_text = format!("{IMAGE_DESIGN}\n[ground]\nz = 0.0\nconducting = {conducting}\n");
    inductance_entry(design(&design_text)?, quantity)
}

/// A row of `tap.csv`: the partial inductance (H) of an arc of a ring (kind `arc`: radius
/// 0.1 m, wire radius 1 mm, `design` the turns), or the self or mutual inductance of the tapped
/// primary of a named design (kinds `self`, `mutual`), through the `inductance` command's
/// matrix.
fn tap(row: &Row) -> anyhow::Result<Job> {
    let kind = text(row, "kind")?;
    if kind == "arc" {
        let turns = bounded(row, "design", 1e-6, 1.0)?;
        return Ok(ready(self_arc_round_wire(
            0.1,
            std::f64::consts::TAU * turns,
            1e-3,
        )));
    }
    let name = text(row, "design")?;
    let base = TAP_DESIGNS
        .iter()
        .find(|(n, _)| *n == name)
        .map(|(_, t)| *t)
        .ok_or_else(|| {
            BadInput(format!(
                "column 'design': '{name}' is not one of the built-in designs {}",
                TAP_DESIGNS.map(|(n, _)| n).join(", ")
            ))
        })?;
    let turns = bounded(row, "tap_turns", 0.0, MAX_TURNS)?;
    let from = text(row, "tap_from")?;
    let line = "name = \"primary\"\n";
    // The tap keys go into the primary's table; the design file checks them.
    let text = base.replacen(
        line,
        &format!(
            "{line}tap_turns = {turns:?}\ntap_from = {}\n",
            toml::Value::from(from)
        ),
        1,
    );
    let design = design(&text)?;
    match kind {
        "self" => inductance_entry(design, "self_inductance.primary"),
        "mutual" => inductance_entry(design, "mutual.primary.secondary"),
        other => anyhow::bail!(BadInput(format!(
            "column 'kind': '{other}' is not arc, self or mutual"
        ))),
    }
}

/// The `parameters` column of `circuits.csv` (`key=value` pairs separated by `;`).
fn parameters(row: &Row) -> anyhow::Result<Row> {
    let mut out = Row::new();
    for pair in text(row, "parameters")?.split(';') {
        let (k, v) = pair
            .split_once('=')
            .ok_or_else(|| BadInput(format!("column 'parameters': '{pair}' is not key=value")))?;
        out.insert(k.trim().to_string(), v.trim().to_string());
    }
    Ok(out)
}

/// A parameter of `circuits.csv`, positive and finite.
fn param(p: &Row, key: &str) -> anyhow::Result<f64> {
    bounded(p, key, f64::MIN_POSITIVE, 1e30)
        .map_err(|e| BadInput(format!("column 'parameters': {e}")).into())
}

/// A whole-number parameter of `circuits.csv` from 1 to `max`.
fn param_count(p: &Row, key: &str, max: f64) -> anyhow::Result<usize> {
    count(p, key, max).map_err(|e| BadInput(format!("column 'parameters': {e}")).into())
}

/// Sections a ladder of `circuits.csv` may have (the uniform ladder's rows go to 256).
const MAX_SECTIONS: f64 = 4096.0;

/// Two coupled loops with capacitors `c1`, `c2` (`None`: closed without one), M = k sqrt(L1 L2).
fn pair(p: &Row, c2: bool, r: [f64; 2]) -> anyhow::Result<Loops> {
    let (l1, l2) = (param(p, "l1_h")?, param(p, "l2_h")?);
    let k = bounded(p, "k", -1.0, 1.0)?;
    let m = k * (l1 * l2).sqrt();
    let c2 = if c2 { Some(param(p, "c2_f")?) } else { None };
    Ok(Loops {
        inductance_h: DMatrix::from_row_slice(2, 2, &[l1, m, m, l2]),
        capacitance_f: vec![Some(param(p, "c1_f")?), c2],
        resistance_ohm: r.to_vec(),
    })
}

/// Loop 0 charged to `v_p` (V), everything else at rest.
fn charged(loops: &Loops, v_p: f64) -> LoopState {
    let n = loops.loop_count();
    let mut charge_c = vec![0.0; n];
    charge_c[0] = loops.capacitance_f[0].unwrap_or(0.0) * v_p;
    LoopState {
        charge_c,
        current_a: vec![0.0; n],
    }
}

/// Least-squares slope of y against x.
fn slope(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len() as f64;
    let (mx, my) = (x.iter().sum::<f64>() / n, y.iter().sum::<f64>() / n);
    let sxy: f64 = x.iter().zip(y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    sxy / sxx
}

/// The frequency (Hz) of an envelope: two peaks per period, the spacing fitted over all.
fn envelope_frequency_hz(times_s: &[f64]) -> f64 {
    let idx: Vec<f64> = (0..times_s.len()).map(|i| i as f64).collect();
    1.0 / (2.0 * slope(&idx, times_s))
}

/// Which figure of a ladder mode a row asks for.
#[derive(Clone, Copy)]
enum LadderFigure {
    Frequency,
    NodeVoltage(usize),
    BranchCurrent(usize),
    TopCapacitance,
    TopInductance,
    TopToBase,
}

/// The mode (0-based) and figure a row of a ladder of `n` sections asks for by `quantity`,
/// of the `n_modes` modes solved.
fn ladder_figure(
    p: &Row,
    quantity: &str,
    n: usize,
    n_modes: usize,
) -> anyhow::Result<(usize, LadderFigure)> {
    let mode_index = param_count(p, "mode", n_modes as f64)? - 1;
    let figure = match quantity {
        "frequency_hz" => LadderFigure::Frequency,
        "node_voltage" => LadderFigure::NodeVoltage(bounded(p, "node", 0.0, n as f64)? as usize),
        "branch_current" => LadderFigure::BranchCurrent(param_count(p, "section", n as f64)? - 1),
        "top_capacitance_f" => LadderFigure::TopCapacitance,
        "top_inductance_h" => LadderFigure::TopInductance,
        "top_to_base_ohm" => LadderFigure::TopToBase,
        q => anyhow::bail!(BadInput(format!(
            "column 'quantity': unknown quantity '{q}'"
        ))),
    };
    Ok((mode_index, figure))
}

/// A figure of mode `mode_index` of a ladder's `modes`.
fn ladder_value(
    modes: &LadderModes,
    (mode_index, figure): (usize, LadderFigure),
) -> anyhow::Result<f64> {
    let mode = modes
        .modes
        .get(mode_index)
        .ok_or_else(|| BadInput(format!("column 'parameters': no mode {}", mode_index + 1)))?;
    Ok(match figure {
        LadderFigure::Frequency => mode.frequency_hz,
        LadderFigure::NodeVoltage(node) => mode.node_voltage[node],
        LadderFigure::BranchCurrent(k) => mode.branch_current[k],
        LadderFigure::TopCapacitance => mode.top_capacitance_f,
        LadderFigure::TopInductance => mode.top_inductance_h,
        LadderFigure::TopToBase => mode.top_to_base_ohm,
    })
}

/// `quantity` when it is one of `known`, else a message naming the case.
fn one_of(quantity: &str, case: &str, known: &[&str]) -> anyhow::Result<String> {
    if known.contains(&quantity) {
        Ok(quantity.to_string())
    } else {
        anyhow::bail!(BadInput(format!(
            "column 'quantity': '{quantity}' is not a quantity of case '{case}' ({})",
            known.join(", ")
        )))
    }
}

/// One loop with inductance `l_h`, capacitance `c_f` and resistance `r_ohm` from `p`.
fn series_loop(p: &Row) -> anyhow::Result<Loops> {
    Ok(Loops {
        inductance_h: DMatrix::from_element(1, 1, param(p, "l_h")?),
        capacitance_f: vec![Some(param(p, "c_f")?)],
        resistance_ohm: vec![param(p, "r_ohm")?],
    })
}

/// The source of a phasor case: `drive` voltage or current of peak `amplitude`.
fn phasor_drive(p: &Row) -> anyhow::Result<Drive> {
    Ok(match text(p, "drive")? {
        "voltage" => Drive::VoltageV(param(p, "amplitude")?),
        "current" => Drive::CurrentA(param(p, "amplitude")?),
        other => anyhow::bail!(BadInput(format!(
            "column 'parameters': drive '{other}' is not voltage or current"
        ))),
    })
}

/// The phasor a `coupled_phasor` quantity names (`i1_re`, `vc2_im`, ...) with its part (re or
/// im); None for `input_power_w`.
fn phasor_part(quantity: &str) -> anyhow::Result<Option<(String, bool)>> {
    if quantity == "input_power_w" {
        return Ok(None);
    }
    let unknown = || {
        BadInput(format!(
            "column 'quantity': '{quantity}' is not a quantity of case 'coupled_phasor' \
             (input_power_w, or i1, i2, vc1, vc2, source_voltage with _re or _im)"
        ))
    };
    let (name, part) = quantity.rsplit_once('_').ok_or_else(unknown)?;
    if !["i1", "i2", "vc1", "vc2", "source_voltage"].contains(&name) {
        return Err(unknown().into());
    }
    match part {
        "re" => Ok(Some((name.to_string(), true))),
        "im" => Ok(Some((name.to_string(), false))),
        _ => Err(unknown().into()),
    }
}

/// A row of `circuits.csv` through the resonance model's circuits
/// ([`coilfield_solver::circuit`]): ladder modes, coupled loops' modes, their exact
/// propagation in time (with a quench) and phasors; the cases and quantities are those of
/// `validation/circuits_refs.py`. Figures read from a run's envelope (a fitted spacing or
/// decay) carry the tolerance of that reading, stated in the table. Every parameter and the
/// quantity are read and checked before the circuit is solved.
fn circuits(row: &Row) -> anyhow::Result<Job> {
    let case = text(row, "case")?;
    let quantity = text(row, "quantity")?;
    let p = parameters(row)?;
    Ok(match case {
        "thomson" => {
            one_of(quantity, case, &["frequency_hz"])?;
            let c = DMatrix::from_element(1, 1, param(&p, "c_f")?);
            let l = DMatrix::from_element(1, 1, param(&p, "l_h")?);
            later(move || Ok(ladder_modes(&c, &l, 1).map_err(bad)?.modes[0].frequency_hz))
        }
        "quarter_wave" => {
            let quantity = one_of(
                quantity,
                case,
                &["frequency_hz", "equivalent_capacitance_f"],
            )?;
            let (c, l, n_modes) = uniform_ladder(&p)?;
            later(move || {
                let modes = ladder_modes(&c, &l, n_modes).map_err(bad)?;
                let f = modes.modes[0].frequency_hz;
                if quantity == "frequency_hz" {
                    Ok(f)
                } else {
                    equivalent_capacitance_f(f, modes.series_inductance_h).map_err(bad)
                }
            })
        }
        "uniform_ladder" => {
            let (c, l, n_modes) = uniform_ladder(&p)?;
            let figure = ladder_figure(&p, quantity, c.nrows(), n_modes)?;
            later(move || ladder_value(&ladder_modes(&c, &l, n_modes).map_err(bad)?, figure))
        }
        "full_ladder" => {
            let n = param_count(&p, "n", MAX_SECTIONS)?;
            let (c, l) = validation_full_ladder(n, param(&p, "l0_h")?, param(&p, "c0_f")?);
            let figure = ladder_figure(&p, quantity, n, n)?;
            later(move || ladder_value(&ladder_modes(&c, &l, n).map_err(bad)?, figure))
        }
        "coupled_pair" => {
            one_of(quantity, case, &["mode_frequency_hz"])?;
            let loops = pair(&p, true, [0.0, 0.0])?;
            let mode = param_count(&p, "mode", loops.loop_count() as f64)?;
            later(move || {
                let modes = loop_modes(&loops).map_err(bad)?;
                modes
                    .get(mode - 1)
                    .map(|m| m.frequency_hz)
                    .ok_or_else(|| BadInput(format!("column 'parameters': no mode {mode}")).into())
            })
        }
        "shorted_turn" => {
            one_of(quantity, case, &["frequency_hz"])?;
            let loops = pair(&p, false, [0.0, 0.0])?;
            later(move || {
                let modes = loop_modes(&loops).map_err(bad)?;
                modes
                    .first()
                    .map(|m| m.frequency_hz)
                    .ok_or_else(|| BadInput("the loops have no mode".into()).into())
            })
        }
        "coupled_transient" => coupled_transient(&p, quantity)?,
        "quench" => quench(&p, quantity, row)?,
        "rlc_decay" => {
            let quantity = one_of(
                quantity,
                case,
                &[
                    "decay_rate_per_s",
                    "damped_frequency_hz",
                    "charge_c",
                    "current_a",
                ],
            )?;
            let loops = series_loop(&p)?;
            let initial = charged(&loops, param(&p, "v_p")?);
            let settings = SimulationSettings::new(param(&p, "duration_s")?);
            let time_s = match quantity.as_str() {
                "charge_c" | "current_a" => param(&p, "time_s")?,
                _ => 0.0,
            };
            later(move || {
                let sim = simulate(&loops, &initial, &settings).map_err(bad)?;
                let env = sim.current_envelope(0).map_err(bad)?;
                Ok(match quantity.as_str() {
                    "decay_rate_per_s" => {
                        let logs: Vec<f64> = env.peaks.iter().map(|p| p.ln()).collect();
                        -slope(&env.times_s, &logs)
                    }
                    "damped_frequency_hz" => envelope_frequency_hz(&env.times_s),
                    "charge_c" => sim.state_at(time_s).map_err(bad)?.charge_c[0],
                    _ => sim.state_at(time_s).map_err(bad)?.current_a[0],
                })
            })
        }
        "series_rlc_phasor" => {
            let quantity = one_of(
                quantity,
                case,
                &[
                    "current_re",
                    "current_im",
                    "capacitor_voltage_re",
                    "capacitor_voltage_im",
                    "input_power_w",
                ],
            )?;
            let loops = series_loop(&p)?;
            let drive = Drive::VoltageV(param(&p, "v_peak_v")?);
            let omega = param(&p, "omega_rad_s")?;
            later(move || {
                let s = steady_state(&loops, 0, drive, omega).map_err(bad)?;
                let vc = s.capacitor_voltage_v[0].unwrap_or_default();
                Ok(match quantity.as_str() {
                    "current_re" => s.current_a[0].re,
                    "current_im" => s.current_a[0].im,
                    "capacitor_voltage_re" => vc.re,
                    "capacitor_voltage_im" => vc.im,
                    _ => s.input_power_w,
                })
            })
        }
        "coupled_phasor" => {
            let loops = pair(&p, true, [param(&p, "r1_ohm")?, param(&p, "r2_ohm")?])?;
            let drive = phasor_drive(&p)?;
            let omega = param(&p, "omega_rad_s")?;
            let part = phasor_part(quantity)?;
            later(move || {
                let s = steady_state(&loops, 0, drive, omega).map_err(bad)?;
                let Some((name, re)) = part else {
                    return Ok(s.input_power_w);
                };
                let z = match name.as_str() {
                    "i1" => s.current_a[0],
                    "i2" => s.current_a[1],
                    "vc1" => s.capacitor_voltage_v[0].unwrap_or_default(),
                    "vc2" => s.capacitor_voltage_v[1].unwrap_or_default(),
                    _ => s.source_voltage_v,
                };
                Ok(if re { z.re } else { z.im })
            })
        }
        other => anyhow::bail!(BadInput(format!("column 'case': unknown case '{other}'"))),
    })
}

/// The uniform ladder of a `uniform_ladder` or `quarter_wave` row: its node capacitance and
/// branch inductance matrices (n sections of equal parts of `l_total_h` and `c_total_f`) and
/// the modes to solve (up to 3).
fn uniform_ladder(p: &Row) -> anyhow::Result<(DMatrix<f64>, DMatrix<f64>, usize)> {
    let n = param_count(p, "n", MAX_SECTIONS)?;
    let (l_tot, c_tot) = (param(p, "l_total_h")?, param(p, "c_total_f")?);
    let c = DMatrix::from_diagonal_element(n, n, c_tot / n as f64);
    let l = DMatrix::from_diagonal_element(n, n, l_tot / n as f64);
    Ok((c, l, n.min(3)))
}

/// A row of case `coupled_transient` of `circuits.csv`: the exact propagation of two coupled
/// loops from the primary's charged capacitor.
fn coupled_transient(p: &Row, quantity: &str) -> anyhow::Result<Job> {
    let quantity = one_of(
        quantity,
        "coupled_transient",
        &[
            "energy_drift_relative",
            "secondary_peak_v",
            "notch_time_s",
            "notch_half_cycles",
            "primary_energy_at_notch_fraction",
        ],
    )?;
    let loops = pair(p, true, [0.0, 0.0])?;
    let initial = charged(&loops, param(p, "v_p")?);
    let settings = SimulationSettings::new(param(p, "duration_s")?);
    let (l1, c1) = (param(p, "l1_h")?, param(p, "c1_f")?);
    Ok(later(move || {
        let sim = simulate(&loops, &initial, &settings).map_err(bad)?;
        let w0 = loops.energy_j(&initial).map_err(bad)?;
        Ok(match quantity.as_str() {
            "energy_drift_relative" => sim
                .energy_j()
                .iter()
                .map(|w| (w / w0 - 1.0).abs())
                .fold(0.0, f64::max),
            "secondary_peak_v" => sim.peak_capacitor_voltage(1).map_err(bad)?.value,
            _ => {
                let notch = sim.first_notch(0).map_err(bad)?.ok_or_else(|| {
                    BadInput("the primary's current has no notch within the run".into())
                })?;
                match quantity.as_str() {
                    "notch_time_s" => notch.time_s,
                    "notch_half_cycles" => notch.half_cycles as f64,
                    // The primary's own energy, from the exact state there.
                    _ => {
                        let s = sim.state_at(notch.time_s).map_err(bad)?;
                        let own =
                            0.5 * l1 * s.current_a[0].powi(2) + 0.5 * s.charge_c[0].powi(2) / c1;
                        own / w0
                    }
                }
            }
        })
    }))
}

/// A row of case `quench` of `circuits.csv`: the primary opens at its first notch and the
/// secondary rings on alone. The amplitude is the envelope peak after the quench farthest
/// from the reference (every peak must be within the tolerance).
fn quench(p: &Row, quantity: &str, row: &Row) -> anyhow::Result<Job> {
    let quantity = one_of(
        quantity,
        "quench",
        &[
            "secondary_frequency_hz",
            "secondary_amplitude_v",
            "energy_retained_fraction",
        ],
    )?;
    let loops = pair(p, true, [0.0, 0.0])?;
    let initial = charged(&loops, param(p, "v_p")?);
    let duration = param(p, "duration_s")?;
    let reference = num(row, "reference")?;
    Ok(later(move || {
        let first = simulate(&loops, &initial, &SimulationSettings::new(duration)).map_err(bad)?;
        let notch = first
            .first_notch(0)
            .map_err(bad)?
            .ok_or_else(|| BadInput("the primary's current has no notch within the run".into()))?;
        let settings = SimulationSettings {
            quench: Some(Quench {
                loop_index: 0,
                time_s: notch.time_s,
            }),
            ..SimulationSettings::new(duration)
        };
        let sim = simulate(&loops, &initial, &settings).map_err(bad)?;
        // The secondary ringing alone, two steps after the quench.
        let ringing = sim
            .voltage_envelope(1)
            .map_err(bad)?
            .after(notch.time_s + 2.0 * sim.time_step_s());
        let (t, v) = (ringing.times_s, ringing.peaks);
        if t.len() < 3 {
            anyhow::bail!(BadInput(
                "the run ends before the secondary has rung alone for a period".into()
            ));
        }
        let value = match quantity.as_str() {
            "secondary_frequency_hz" => Some(envelope_frequency_hz(&t)),
            "secondary_amplitude_v" => v
                .into_iter()
                .max_by(|a, b| (a - reference).abs().total_cmp(&(b - reference).abs())),
            _ => {
                let w = sim.energy_j();
                let w0 = loops.energy_j(&initial).map_err(bad)?;
                w.last().map(|w| w / w0)
            }
        };
        value.ok_or_else(|| BadInput("the run gives no value for the quantity".into()).into())
    }))
}

/// A design's problem for the `capacitance` command's boundary-element solver
/// ([`coilfield_solver::electrostatic`]) with `params`, checked and not yet solved.
fn electrostatic_problem(text: &str, params: &Params) -> anyhow::Result<Problem> {
    let design = design(text)?;
    Ok(Problem::from_design(&design, params, "the row's design")?)
}

/// Panels of the `fields_capacitance.csv` solves, as in the solver's tests: 400 for the sphere
/// over the plane (down to a gap of a tenth of the radius) and the disc, 300 for the torus; the
/// table's tolerances (1e-3, 3e-3) are the reach of these meshes.
const SPHERE_PANELS: usize = 400;
const TORUS_PANELS: usize = 300;

/// A row of `fields_capacitance.csv`: C / (4 pi eps0 r) of an isolated sphere of radius
/// r = 0.1 m, of a thin disc of radius r = 0.2 m, of the sphere with its centre at `ratio`
/// radii over a grounded plane, or of a torus of minor radius r = 0.05 m and major radius
/// `ratio` r (`ratio` 0 for the first two).
fn fields_capacitance(row: &Row) -> anyhow::Result<Job> {
    let ratio = || bounded(row, "ratio", 1.0 + 1e-6, 1e3);
    let (r, text, panels) = match text(row, "shape")? {
        "sphere" => (
            0.1,
            "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, 0.0]\n\
             radius = 0.1\n"
                .to_string(),
            SPHERE_PANELS,
        ),
        "disc" => (
            0.2,
            "[[electrode]]\nname = \"plate\"\nshape = \"disc\"\norigin = [0.0, 0.0, 0.0]\n\
             axis = [0.0, 0.0, 1.0]\nradius = 0.2\n"
                .to_string(),
            SPHERE_PANELS,
        ),
        "sphere_over_plane" => (
            0.1,
            format!(
                "[[electrode]]\nname = \"ball\"\nshape = \"sphere\"\norigin = [0.0, 0.0, {:?}]\n\
                 radius = 0.1\n[ground]\nz = 0.0\n",
                0.1 * ratio()?
            ),
            SPHERE_PANELS,
        ),
        "torus" => (
            0.05,
            format!(
                "[[electrode]]\nname = \"ring\"\nshape = \"torus\"\norigin = [0.0, 0.0, 0.0]\n\
                 axis = [0.0, 0.0, 1.0]\nmajor_radius = {:?}\nminor_radius = 0.05\n",
                0.05 * ratio()?
            ),
            TORUS_PANELS,
        ),
        other => anyhow::bail!(BadInput(format!(
            "column 'shape': '{other}' is not sphere, disc, sphere_over_plane or torus"
        ))),
    };
    let params = Params {
        panels,
        ..Default::default()
    };
    let problem = electrostatic_problem(&text, &params)?;
    Ok(later(move || {
        let c = problem.solve(Par::Rayon)?.capacitances_f()[0];
        Ok(c / (4.0 * std::f64::consts::PI * coilfield_geometry::constants::EPS0 * r))
    }))
}

/// Panels of the sectioned `tube_bem.csv` solves, as in the solver's tests (the tolerance
/// 1e-4 sqrt(C_ii C_jj) is their reach).
const TUBE_PANELS: usize = 1000;

/// Nodal matrices (F) already solved, by tube and sections: the rows of one matrix share a
/// solve.
static NODAL: Mutex<BTreeMap<String, DMatrix<f64>>> = Mutex::new(BTreeMap::new());

/// A row of `tube_bem.csv`: the bare secondary as a tube (radius `tube_radius_m`, length
/// `length_m`, base at `base_z_m`, over a grounded plane at `ground_z_m` when given): its
/// capacitance as one conductor (`tube`), with the linear profile (`linear`), or an entry of
/// its nodal matrix in `sections` sections (`nodal`, entry `i`, `j`). The winding is that of
/// the solver's tests: 0.4 mm wire at a pitch of 0.5 mm.
fn tube_bem(row: &Row) -> anyhow::Result<Job> {
    let a = size(row, "tube_radius_m")?;
    let l = size(row, "length_m")?;
    let zb = coordinate(row, "base_z_m")?;
    let wire = 0.0004;
    let turns = (l / 0.0005).round();
    let mut text = format!(
        "[[winding]]\nname = \"sec\"\nshape = \"helix\"\nrole = \"secondary\"\n\
         origin = [0.0, 0.0, {zb:?}]\naxis = [0.0, 0.0, 1.0]\nradius = {:?}\nlength = {l:?}\n\
         turns = {turns:?}\nwire_diameter = {wire:?}\n",
        a - wire / 2.0
    );
    if !self::text(row, "ground_z_m")?.is_empty() {
        text.push_str(&format!(
            "[ground]\nz = {:?}\n",
            coordinate(row, "ground_z_m")?
        ));
    }
    let by_profile = |profile: Profile| -> anyhow::Result<Job> {
        let params = Params {
            profile,
            ..Default::default()
        };
        let problem = electrostatic_problem(&text, &params)?;
        Ok(later(move || {
            problem
                .solve(Par::Rayon)?
                .self_capacitance_f()
                .map(|c| c.bare_f)
                .ok_or_else(|| BadInput("the design has no secondary".into()).into())
        }))
    };
    match self::text(row, "quantity")? {
        "tube" => by_profile(Profile::Custom(|_| 1.0)),
        "linear" => by_profile(Profile::Linear),
        "nodal" => {
            let n = count(row, "sections", 64.0)?;
            let (i, j) = (
                bounded(row, "i", 0.0, n as f64)? as usize,
                bounded(row, "j", 0.0, n as f64)? as usize,
            );
            let params = Params {
                panels: TUBE_PANELS,
                secondary_sections: Some(n),
                ..Default::default()
            };
            let problem = electrostatic_problem(&text, &params)?;
            let key = format!("{text}{n}");
            Ok(later(move || {
                let cached = NODAL.lock().ok().and_then(|m| m.get(&key).cloned());
                let matrix = match cached {
                    Some(m) => m,
                    None => {
                        let m = problem
                            .solve(Par::Rayon)?
                            .nodal_capacitance()
                            .map_err(bad)?
                            .matrix_f
                            .clone();
                        if let Ok(mut cache) = NODAL.lock() {
                            cache.insert(key, m.clone());
                        }
                        m
                    }
                };
                Ok(matrix[(i, j)])
            }))
        }
        other => anyhow::bail!(BadInput(format!(
            "column 'quantity': '{other}' is not tube, linear or nodal"
        ))),
    }
}

/// A row of `fem.csv` (closed forms and image series) or `fem_skfem.csv` (scikit-fem on its
/// own meshes): the capacitance (F) of the row's conductor through the finite-element solver
/// ([`coilfield_solver::fem`]), its problem built from the `case` and `parameters` columns by
/// [`reference_domain`], the one builder tests/fem.rs uses too (which checks its ranges and
/// names the column at fault).
fn finite_element(row: &Row) -> anyhow::Result<Job> {
    let domain = reference_domain(text(row, "case")?, text(row, "parameters")?).map_err(bad)?;
    Ok(later(move || {
        let solution = FemProblem::new(domain).map_err(bad)?.solve().map_err(bad)?;
        Ok(solution.capacitance_matrix_f()[0][0])
    }))
}

/// One row of a table of kernels and closed forms: the value (a ring sum left for the second
/// phase).
fn kernel(table: &str, row: &Row, label: &str) -> anyhow::Result<Job> {
    let value = match table {
        "elliptic" => {
            let m = bounded(row, "x", -1e15, 1.0)?;
            match text(row, "function")? {
                "K" => ellip_k(m),
                "E" => ellip_e(m),
                other => anyhow::bail!(BadInput(format!("unknown function '{other}'"))),
            }
        }
        "cel" => cel(
            bounded(row, "kc", 1e-300, 1e300)?,
            nonzero(bounded(row, "p", -1e300, 1e300)?, "p")?,
            bounded(row, "a", -1e300, 1e300)?,
            bounded(row, "b", -1e300, 1e300)?,
        ),
        "maxwell_coaxial" => mutual_ring_ring_coaxial(
            size(row, "a_m")?,
            size(row, "b_m")?,
            coordinate(row, "d_m")?,
        ),
        "rings_general" => {
            let p = Circle {
                centre_m: Point3::origin(),
                axis: z_axis(),
                radius_m: size(row, "rp_m")?,
            };
            let normal = Vector3::new(
                bounded(row, "nx", -1.0, 1.0)?,
                bounded(row, "ny", -1.0, 1.0)?,
                bounded(row, "nz", -1.0, 1.0)?,
            );
            if normal.norm() < 1e-6 {
                anyhow::bail!(BadInput("columns nx, ny, nz: no direction".into()));
            }
            let s = Circle {
                centre_m: Point3::new(
                    coordinate(row, "cx_m")?,
                    coordinate(row, "cy_m")?,
                    coordinate(row, "cz_m")?,
                ),
                axis: Unit::new_normalize(normal),
                radius_m: size(row, "rs_m")?,
            };
            mutual_ring_ring(&p, &s)
        }
        "ring_self" => {
            let w = checked_winding(
                label,
                &[
                    ("shape", "ring".into()),
                    ("radius", num(row, "radius_m")?.into()),
                    ("wire_diameter", (2.0 * num(row, "wire_radius_m")?).into()),
                ],
            )?;
            self_ring_round_wire(num(row, "radius_m")?, 0.5 * w.wire_diameter_m)
        }
        "nagaoka" => nagaoka(bounded(row, "diameter_over_length", 1e-9, 1e9)?),
        "rosa_b" => rosa_b(count(row, "turns", MAX_TURNS)?),
        "solenoid" => {
            let a = num(row, "radius_m")?;
            let n = num(row, "turns")?;
            let p = num(row, "pitch_m")?;
            let d = num(row, "wire_diameter_m")?;
            // Every quantity's inputs pass the checks of the helix they describe.
            let helix = checked_winding(
                label,
                &[
                    ("shape", "helix".into()),
                    ("radius", a.into()),
                    ("length", (n * p).into()),
                    ("turns", n.into()),
                    ("wire_diameter", d.into()),
                ],
            )?;
            match text(row, "quantity")? {
                "ring_sum" => return Ok(later(move || ring_sum(&helix))),
                "lorenz_sheet" => lorenz_sheet(a, n, n * p),
                "rosa" => rosa_solenoid(a, count(row, "turns", MAX_TURNS)?, p, d),
                other => anyhow::bail!(BadInput(format!("unknown quantity '{other}'"))),
            }
        }
        "spiral" => {
            let inner = num(row, "inner_radius_m")?;
            let outer = num(row, "outer_radius_m")?;
            let n = num(row, "turns")?;
            let r_w = num(row, "wire_radius_m")?;
            let spiral = checked_winding(
                label,
                &[
                    ("shape", "spiral".into()),
                    ("inner_radius", inner.into()),
                    ("outer_radius", outer.into()),
                    ("turns", n.into()),
                    ("wire_diameter", (2.0 * r_w).into()),
                ],
            )?;
            match text(row, "quantity")? {
                "ring_sum" => return Ok(later(move || ring_sum(&spiral))),
                "wheeler" => wheeler_spiral(inner, outer, n),
                other => anyhow::bail!(BadInput(format!("unknown quantity '{other}'"))),
            }
        }
        "awg" => {
            let gauge = bounded(row, "gauge", -10.0, 100.0)?;
            coilfield_geometry::file::units::awg_diameter_m(gauge as i32)
                .ok_or_else(|| BadInput(format!("gauge {gauge} out of range")))?
        }
        other => anyhow::bail!(BadInput(format!("unknown table '{other}'"))),
    };
    Ok(ready(value))
}

/// The rows of the table `name` (text `contents`), each as column name -> text, in order.
fn csv_rows(name: &str, contents: &str) -> anyhow::Result<Vec<Row>> {
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .from_reader(contents.as_bytes());
    let headers = reader
        .headers()
        .map_err(|e| BadInput(format!("{name}.csv: {e}")))?
        .clone();
    reader
        .records()
        .map(|record| {
            let record = record.map_err(|e| BadInput(format!("{name}.csv: {e}")))?;
            Ok(headers
                .iter()
                .zip(record.iter())
                .map(|(h, v)| (h.to_string(), v.to_string()))
                .collect())
        })
        .collect()
}

/// A table read and checked: the computation of its cases, left for the second phase.
type TableJob = Box<dyn FnOnce() -> anyhow::Result<Vec<Case>>>;

/// One row read and checked, its value still to compute.
struct Pending {
    row: usize,
    inputs: BTreeMap<String, String>,
    reference: f64,
    tolerance: f64,
    tolerance_kind: String,
    source: String,
    job: Job,
}

/// The kinds of tolerance a table's row may name.
const TOLERANCE_KINDS: [&str; 4] = ["rel", "abs", "rel_to_magnitude", "bound_rel"];

/// Read and check every row of the table `name` (text `contents`): the first bad row is
/// refused by file, row and column before any case is computed.
fn read_table(name: &str, contents: &str) -> anyhow::Result<TableJob> {
    let mut pending = Vec::new();
    for (idx, row) in csv_rows(name, contents)?.into_iter().enumerate() {
        let label = |e: anyhow::Error| BadInput(format!("{name}.csv row {}: {e}", idx + 1));
        let reference = num(&row, "reference").map_err(label)?;
        let tolerance = num(&row, "tolerance").map_err(label)?;
        let tolerance_kind = text(&row, "tolerance_kind").map_err(label)?.to_string();
        if !TOLERANCE_KINDS.contains(&tolerance_kind.as_str()) {
            return Err(label(anyhow::anyhow!(
                "column 'tolerance_kind': '{tolerance_kind}' is not rel, abs, rel_to_magnitude \
                 or bound_rel"
            ))
            .into());
        }
        let source = text(&row, "source").map_err(label)?.to_string();
        let job = read_row(name, &row, "the row").map_err(label)?;
        let inputs = row
            .into_iter()
            .filter(|(k, _)| {
                !matches!(
                    k.as_str(),
                    "reference" | "tolerance" | "tolerance_kind" | "source"
                )
            })
            .collect();
        pending.push(Pending {
            row: idx + 1,
            inputs,
            reference,
            tolerance,
            tolerance_kind,
            source,
            job,
        });
    }
    let name = name.to_string();
    Ok(Box::new(move || {
        pending
            .into_iter()
            .map(|p| compute_case(&name, p))
            .collect()
    }))
}

/// The case of a row read and checked: its value computed and compared with its reference.
fn compute_case(table: &str, p: Pending) -> anyhow::Result<Case> {
    let Computed {
        value: computed,
        magnitude,
    } = (p.job)()
        .and_then(finite)
        .map_err(|e| BadInput(format!("{table}.csv row {}: {e}", p.row)))?;
    let reference = p.reference;
    let error = match p.tolerance_kind.as_str() {
        "abs" => (computed - reference).abs(),
        "rel" => ((computed - reference) / reference).abs(),
        // A component beside the magnitude of its vector (a component near 0 has no
        // relative error of its own).
        "rel_to_magnitude" => (computed - reference).abs() / magnitude,
        // An upper bound: how far the value's magnitude goes past it, relative (0 within).
        _ => (computed.abs() / reference - 1.0).max(0.0),
    };
    Ok(Case {
        table: table.to_string(),
        row: p.row,
        inputs: p.inputs,
        reference,
        computed,
        error,
        tolerance: p.tolerance,
        passed: error <= p.tolerance,
        tolerance_kind: p.tolerance_kind,
        source: p.source,
    })
}

/// An invented design of a far-field table: its name in the table's first column, its design
/// file and the tolerance the field model reaches at a distance (m).
trait FarFieldCase {
    fn name(&self) -> &'static str;
    fn design_text(&self) -> String;
    fn tolerance(&self, r_m: f64) -> f64;
}

impl FarFieldCase for FarFieldHelix {
    fn name(&self) -> &'static str {
        self.name
    }
    fn design_text(&self) -> String {
        FarFieldHelix::design_text(self)
    }
    fn tolerance(&self, r_m: f64) -> f64 {
        FarFieldHelix::tolerance(self, r_m)
    }
}

impl FarFieldCase for FarFieldPair {
    fn name(&self) -> &'static str {
        self.name
    }
    fn design_text(&self) -> String {
        FarFieldPair::design_text(self)
    }
    fn tolerance(&self, r_m: f64) -> f64 {
        FarFieldPair::tolerance(self, r_m)
    }
}

/// The rows of `far_field_helix.csv` (one B vector per row, no tolerance column): B of each
/// invented helix of [`FAR_FIELD_HELICES`] in the filament model at the row's point, against
/// the row's mpmath vector, at the tolerance the model reaches at that distance
/// ([`coilfield_solver::field_model::FarFieldHelix::tolerance`], relative to the vector's magnitude: `rel_vector`). Where the
/// reference is below the smallest normal f64, the model must give 0 (`abs`, tolerance 0).
fn read_far_field_helix(contents: &str) -> anyhow::Result<TableJob> {
    read_far_field("far_field_helix", "helix", &FAR_FIELD_HELICES, contents)
}

/// The rows of `far_field_ground.csv`, read as [`read_far_field_helix`] reads its table: B of
/// each invented winding of [`FAR_FIELD_GROUND`] and its image in a conducting plane
/// ([`coilfield_solver::field_model::FarFieldPair::tolerance`]).
fn read_far_field_ground(contents: &str) -> anyhow::Result<TableJob> {
    read_far_field("far_field_ground", "case", &FAR_FIELD_GROUND, contents)
}

/// A row of a far-field table read and checked: its index, columns, and the design, point,
/// reference B (T), distance r (m) and source.
type FarFieldRow<C> = (
    usize,
    Row,
    (&'static C, Point3<f64>, Vector3<f64>, f64, String),
);

/// The rows of a far-field table `name` whose first column `key` names one of `designs`, every
/// row checked before any field is computed; the job computes them.
fn read_far_field<C: FarFieldCase + 'static>(
    name: &'static str,
    key: &str,
    designs: &'static [C],
    contents: &str,
) -> anyhow::Result<TableJob> {
    let known: Vec<&str> = designs.iter().map(|d| d.name()).collect();
    let mut rows: Vec<FarFieldRow<C>> = Vec::new();
    for (idx, row) in csv_rows(name, contents)?.into_iter().enumerate() {
        let label = |e: anyhow::Error| BadInput(format!("{name}.csv row {}: {e}", idx + 1));
        let finite = |key: &str| -> anyhow::Result<f64> {
            let v = num(&row, key)?;
            if !v.is_finite() {
                anyhow::bail!(BadInput(format!(
                    "column '{key}': {v} is not a finite number"
                )));
            }
            Ok(v)
        };
        let parsed = (|| -> anyhow::Result<_> {
            let which = text(&row, key)?;
            let design = designs.iter().find(|h| h.name() == which).ok_or_else(|| {
                BadInput(format!(
                    "column '{key}': '{which}' is not one of the table's designs ({})",
                    known.join(", ")
                ))
            })?;
            let r_m = finite("r_m")?;
            if r_m <= 0.0 {
                anyhow::bail!(BadInput(format!("column 'r_m': {r_m:e} m is not positive")));
            }
            let point = Point3::new(finite("x_m")?, finite("y_m")?, finite("z_m")?);
            let b = Vector3::new(finite("bx_t")?, finite("by_t")?, finite("bz_t")?);
            Ok((design, point, b, r_m, text(&row, "source")?.to_string()))
        })()
        .map_err(label)?;
        rows.push((idx, row, parsed));
    }
    Ok(Box::new(move || far_field_cases(name, designs, rows)))
}

/// The cases of a far-field table's rows: one field model per design, every row's point
/// evaluated at once.
fn far_field_cases<C: FarFieldCase>(
    name: &str,
    designs: &[C],
    rows: Vec<FarFieldRow<C>>,
) -> anyhow::Result<Vec<Case>> {
    let mut cases = Vec::new();
    for helix in designs {
        let mine: Vec<_> = rows
            .iter()
            .filter(|r| r.2.0.name() == helix.name())
            .collect();
        if mine.is_empty() {
            continue;
        }
        let design = parse_design(&helix.design_text(), name)?;
        let model = FieldModel::new(&design, name, Par::Rayon, None)?;
        let points: Vec<Point3<f64>> = mine.iter().map(|r| r.2.1).collect();
        for ((idx, row, (_, _, want, r_m, source)), sample) in mine.iter().zip(model.eval(&points))
        {
            let got = sample.b.map_err(|e| {
                BadInput(format!(
                    "{name}.csv row {}: the field model gives no value: {e:?}",
                    idx + 1
                ))
            })?;
            let (reference, computed) = (magnitude(want), magnitude(&got));
            let (error, tolerance, kind) = if reference < f64::MIN_POSITIVE {
                (computed, 0.0, "abs")
            } else {
                (
                    magnitude(&(got - want)) / reference,
                    helix.tolerance(*r_m),
                    "rel_vector",
                )
            };
            let inputs = row
                .iter()
                .filter(|(k, _)| !matches!(k.as_str(), "bx_t" | "by_t" | "bz_t" | "source"))
                .map(|(k, v)| (k.clone(), v.clone()))
                .collect();
            cases.push(Case {
                table: name.to_string(),
                row: idx + 1,
                inputs,
                reference,
                computed,
                error,
                tolerance,
                tolerance_kind: kind.to_string(),
                passed: error <= tolerance,
                source: source.clone(),
            });
        }
    }
    cases.sort_by_key(|c| c.row);
    Ok(cases)
}

/// `v` to `digits` significant digits (an error beside its tolerance needs no more), through
/// its decimal text so that [`shortest`] prints just those digits.
fn round_to(v: f64, digits: usize) -> f64 {
    let d = digits.max(1) - 1;
    format!("{v:.d$e}").parse().unwrap_or(v)
}

/// Run `coilfield verify`: every table read and checked, then every case computed.
pub fn run(dir: Option<&Path>, format: Format) -> anyhow::Result<ExitCode> {
    let mut tables = Vec::new();
    for (name, builtin) in TABLES {
        let contents = match dir {
            Some(dir) => {
                let path = dir.join(format!("{name}.csv"));
                crate::load::text(&path, "validation table")?
            }
            None => builtin.to_string(),
        };
        tables.push(if name == "far_field_helix" {
            read_far_field_helix(&contents)?
        } else if name == "far_field_ground" {
            read_far_field_ground(&contents)?
        } else {
            read_table(name, &contents)?
        });
    }
    let mut cases = Vec::new();
    for table in tables {
        cases.extend(table()?);
    }
    let passed = cases.iter().filter(|c| c.passed).count();
    let failed = cases.len() - passed;
    match format {
        Format::Json => {
            let summary = Summary {
                cases,
                passed,
                failed,
            };
            crate::output::print_stdout(&(crate::output::json_text(&summary)? + "\n"))?;
        }
        Format::Table => {
            let mut s = String::new();
            for c in &cases {
                let inputs: Vec<String> =
                    c.inputs.iter().map(|(k, v)| format!("{k}={v}")).collect();
                let _ = writeln!(
                    s,
                    "{} {:<16} #{:<3} {}\n      reference {}  computed {}  error {} ({} tol {})  source: {}",
                    if c.passed { "PASS" } else { "FAIL" },
                    c.table,
                    c.row,
                    inputs.join(" "),
                    shortest(c.reference),
                    shortest(c.computed),
                    shortest(round_to(c.error, 3)),
                    c.tolerance_kind,
                    shortest(c.tolerance),
                    c.source
                );
            }
            let _ = writeln!(s, "{passed} passed, {failed} failed");
            crate::output::print_stdout(&s)?;
        }
    }
    Ok(if failed == 0 {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    })
}
