//! Lumped circuits of the resonance model: the normal modes of a winding cut into a ladder of
//! sections, coupled resonant loops in time (exact propagation of the linear system), their
//! steady state under sinusoidal drive (phasors) and their lossless normal modes.
//!
//! Pure linear algebra with nalgebra: no I/O, no clock. Every function validates its inputs
//! (finite, positive where physical, sizes, symmetric positive definite matrices) and returns a
//! [`SolverError`] rather than a non-finite number.
//!
//! # Conventions
//! - SI units: farads, henries, ohms, volts, amperes, coulombs, seconds, hertz (cycles per
//!   second) and rad/s (angular frequency, named so).
//! - Phasors are peak amplitudes (not rms): x(t) = Re(X e^{j omega t}).
//! - A loop's current i and its capacitor's charge q are related by dq/dt = i; the capacitor
//!   voltage is q / C and opposes the current (M di/dt = -R i - q / C). A series source in a
//!   loop drives the current forward: M di/dt = -R i - q / C + v.
//! - Inductance and capacitance matrices must be symmetric to [`SYMMETRY_TOLERANCE`] of their
//!   largest entry (a capacitance matrix from a collocation solve should be symmetrised
//!   first, (C + C^T) / 2) and positive definite; the symmetric part is used.
//!
//! # Sources
//! - Normal modes of a lossless linear network as a symmetric-definite generalised eigenproblem
//!   omega^2 T x = V x: the small-oscillation theory of Lagrange's equations (e.g. H. Goldstein,
//!   *Classical Mechanics*, Addison-Wesley 1950, ch. 10 "Small oscillations"; chapter from
//!   memory), with the circuit's magnetic energy 1/2 i^T L i as the kinetic and the electric
//!   energy 1/2 q^T C^-1 q as the potential energy.
//! - Exact propagation of a linear time-invariant system, x(t + h) = exp(A h) x(t): C. Moler
//!   and C. Van Loan, "Nineteen dubious ways to compute the exponential of a matrix,
//!   twenty-five years later", *SIAM Review* 45(1), 2003, pp. 3-49. The exponential itself is
//!   nalgebra's `exp`, a port of SciPy's `expm`, the scaling-and-squaring Pade algorithm of
//!   A. H. Al-Mohy and N. J. Higham, "A new scaling and squaring algorithm for the matrix
//!   exponential", *SIAM J. Matrix Anal. Appl.* 31(3), 2009, pp. 970-989.
//! - The energy coordinates of the time integration (below) are our own derivation from the
//!   loop equations; the derivation is in [`simulate`].

use crate::error::SolverError;
use crate::optimise::brent_root;
use nalgebra::{Cholesky, Complex, DMatrix, DVector, Dyn, Schur, SymmetricEigen};
use std::f64::consts::PI;

/// Accepted asymmetry of an inductance or capacitance matrix: |A_ij - A_ji| at most this
/// fraction of the largest |A_ij|.
pub const SYMMETRY_TOLERANCE: f64 = 1e-9;

/// Fewest samples per period of the fastest natural frequency a simulation takes.
pub const MIN_SAMPLES_PER_PERIOD: usize = 40;

/// Most values a simulation stores (samples x 2 x loops; 2^25 values, 256 MiB).
pub const MAX_STORED_VALUES: usize = 1 << 25;

/// Iteration cap of the symmetric eigen-solver and the Schur decomposition per unit of matrix
/// size (they converge in a few sweeps per eigenvalue; the cap only bounds the time on inputs
/// that would not converge).
const ITERATIONS_PER_ROW: usize = 1000;

/// Relative size under which a mode's top voltage or base current counts as zero.
const VANISHING: f64 = 1e-12;

// ---------------------------------------------------------------------------------------------
// Input checks
// ---------------------------------------------------------------------------------------------

fn invalid(quantity: String, value: f64, requirement: &'static str) -> SolverError {
    SolverError::InvalidCircuitValue {
        quantity,
        value,
        requirement,
    }
}

fn require_positive(value: f64, quantity: impl FnOnce() -> String) -> Result<(), SolverError> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(invalid(quantity(), value, "finite and positive"))
    }
}

fn require_non_negative(value: f64, quantity: impl FnOnce() -> String) -> Result<(), SolverError> {
    if value.is_finite() && value >= 0.0 {
        Ok(())
    } else {
        Err(invalid(quantity(), value, "finite and not negative"))
    }
}

fn require_finite(value: f64, quantity: impl FnOnce() -> String) -> Result<(), SolverError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(invalid(quantity(), value, "finite"))
    }
}

fn require_len(
    found: usize,
    expected: usize,
    quantity: impl FnOnce() -> String,
) -> Result<(), SolverError> {
    if found == expected {
        Ok(())
    } else {
        Err(SolverError::CircuitSizeMismatch {
            quantity: quantity(),
            expected,
            found,
        })
    }
}

/// A checked symmetric positive definite matrix: its symmetric part and its Cholesky factor.
struct Spd {
    symmetric: DMatrix<f64>,
    cholesky: Cholesky<f64, Dyn>,
}

/// Checks that `matrix` is `size` x `size`, finite, symmetric to [`SYMMETRY_TOLERANCE`] and
/// positive definite; returns its symmetric part with its Cholesky factor.
fn spd_matrix(matrix: &DMatrix<f64>, quantity: &str, size: usize) -> Result<Spd, SolverError> {
    require_len(matrix.nrows(), size, || {
        format!("the row count of the {quantity}")
    })?;
    require_len(matrix.ncols(), size, || {
        format!("the column count of the {quantity}")
    })?;
    for c in 0..size {
        for r in 0..size {
            let v = matrix[(r, c)];
            require_finite(v, || format!("{quantity} [{r}, {c}]"))?;
        }
    }
    let scale = matrix.amax();
    let mut worst = (0.0, 0, 0);
    for c in 0..size {
        for r in 0..c {
            let d = (matrix[(r, c)] - matrix[(c, r)]).abs();
            if d > worst.0 {
                worst = (d, r, c);
            }
        }
    }
    if worst.0 > SYMMETRY_TOLERANCE * scale {
        return Err(SolverError::NotSymmetric {
            quantity: quantity.to_string(),
            row: worst.1,
            col: worst.2,
            relative: worst.0 / scale,
            limit: SYMMETRY_TOLERANCE,
        });
    }
    let symmetric = (matrix + matrix.transpose()) * 0.5;
    let cholesky =
        Cholesky::new(symmetric.clone()).ok_or_else(|| SolverError::NotPositiveDefinite {
            quantity: quantity.to_string(),
        })?;
    Ok(Spd {
        symmetric,
        cholesky,
    })
}

fn numerical(step: &'static str, reason: &'static str) -> SolverError {
    SolverError::CircuitNumerical { step, reason }
}

// ---------------------------------------------------------------------------------------------
// 1. Ladder modes of a distributed winding
// ---------------------------------------------------------------------------------------------

/// One lossless normal mode of a ladder (see [`ladder_modes`]).
#[derive(Debug, Clone, PartialEq)]
pub struct LadderMode {
    /// Natural frequency (Hz).
    pub frequency_hz: f64,
    /// Node-voltage profile over nodes 0..=n (node 0 the base, 0; node n the top, 1).
    pub node_voltage: Vec<f64>,
    /// Branch-current profile over sections 1..=n (entry k-1 for section k), 1 in the first
    /// section (the base current). Positive means the same direction as the base current. With
    /// the node voltages V_top v_i cos(omega t), the current in section k, positive from node
    /// k-1 towards node k, is I_base b_k sin(omega t), b_k = `branch_current[k-1]`, with
    /// I_base = -omega V_top sum_j (C v)_j: the base current feeds the charging current of
    /// every node above it.
    pub branch_current: Vec<f64>,
    /// Modal capacitance referred to the top, C_top = v^T C v with v_top = 1 (F): the mode's
    /// peak energy is 1/2 C_top V_top^2.
    pub top_capacitance_f: f64,
    /// Modal inductance referred to the top, 1 / (omega^2 C_top) (H).
    pub top_inductance_h: f64,
    /// |V_top / I_base| (ohm): the top voltage per ampere of base current, both peak.
    pub top_to_base_ohm: f64,
}

/// The lowest modes of a ladder (see [`ladder_modes`]).
#[derive(Debug, Clone, PartialEq)]
pub struct LadderModes {
    /// The modes, lowest frequency first.
    pub modes: Vec<LadderMode>,
    /// The winding's low-frequency inductance, all sections in series: the sum of every entry
    /// of the branch inductance matrix (H). With the first mode's frequency it gives the
    /// equivalent capacitance ([`equivalent_capacitance_f`]).
    pub series_inductance_h: f64,
}

/// The lowest `n_modes` lossless normal modes of a winding cut into n sections in a chain.
///
/// Nodes 0..=n: node 0 (the base) is held at 0 V, nodes 1..=n are free; section (branch) k runs
/// from node k-1 to node k. `node_capacitance_f` is the n x n nodal (Maxwell) capacitance
/// matrix of the free nodes (F; symmetric positive definite, full: it includes connected
/// electrodes and the ground); `branch_inductance_h` the n x n inductance matrix of the
/// sections (H; symmetric positive definite, full mutual inductances).
///
/// Equations, with node voltages v and branch currents i (positive from node k-1 to node k):
/// C dv/dt = (current in from below) - (out above) = -D^T i and L di/dt = D v, where
/// (D v)_k = v_{k-1} - v_k. The normal modes solve omega^2 C v = D^T L^-1 D v, a
/// symmetric-definite generalised eigenproblem (Goldstein's small oscillations; see the module
/// sources). It is solved in its inverse form, which needs neither L^-1 nor any other inverse:
/// D^-1 = -P with P the lower triangle of ones, so (D^T L^-1 D)^-1 = P L P^T =: F, the
/// flexibility matrix, F_ab = sum_{j <= a, l <= b} L_jl (the mutual inductance between the
/// winding from the base to node a and the winding from the base to node b). Then
/// F C v = omega^-2 v; with the Cholesky factor C = G G^T and w = G^T v this is the symmetric
/// eigenproblem G^T F G w = omega^-2 w. The lowest frequencies are its largest eigenvalues,
/// which a symmetric eigen-solver gets to a few units of rounding relative to the largest, so
/// the first modes are accurate to rounding even for hundreds of sections. The branch currents
/// follow from charge conservation, i = omega D^-T C v (in quadrature with v), again without a
/// solve.
///
/// Accuracy (validation/circuits.csv): within 3e-15 relative of the uniform ladder's closed
/// form up to 256 sections, and of an mpmath eigen-solve on a full 4-section ladder
/// (frequencies, profiles and top figures).
///
/// Errors: sizes, non-finite entries, matrices not symmetric or not positive definite,
/// `n_modes` not in 1..=n, and a requested mode whose top voltage or base current vanishes
/// (it cannot be normalised).
pub fn ladder_modes(
    node_capacitance_f: &DMatrix<f64>,
    branch_inductance_h: &DMatrix<f64>,
    n_modes: usize,
) -> Result<LadderModes, SolverError> {
    let n = node_capacitance_f.nrows();
    if n == 0 {
        return Err(invalid(
            "the number of sections (rows of the node capacitance matrix)".into(),
            0.0,
            "at least 1",
        ));
    }
    let c = spd_matrix(node_capacitance_f, "node capacitance matrix (F)", n)?;
    let l = spd_matrix(branch_inductance_h, "branch inductance matrix (H)", n)?;
    if n_modes == 0 || n_modes > n {
        return Err(invalid(
            "n_modes".into(),
            n_modes as f64,
            "between 1 and the number of sections",
        ));
    }
    let flex = flexibility(&l.symmetric);
    let g = c.cholesky.l();
    let s = g.tr_mul(&flex) * &g;
    let s = (&s + s.transpose()) * 0.5;
    let eigen = SymmetricEigen::try_new(s, f64::EPSILON, ITERATIONS_PER_ROW * n)
        .ok_or_else(|| numerical("the ladder's symmetric eigen-solve", "no convergence"))?;
    let mut order: Vec<usize> = (0..n).collect();
    // Largest omega^-2 first = lowest frequency first.
    order.sort_by(|&a, &b| eigen.eigenvalues[b].total_cmp(&eigen.eigenvalues[a]));
    let mut modes = Vec::with_capacity(n_modes);
    for (m, &idx) in order.iter().take(n_modes).enumerate() {
        modes.push(ladder_mode(
            m + 1,
            eigen.eigenvalues[idx],
            &eigen.eigenvectors.column(idx).into_owned(),
            &g,
            &c.symmetric,
        )?);
    }
    Ok(LadderModes {
        modes,
        series_inductance_h: flex[(n - 1, n - 1)],
    })
}

/// P L P^T with P the lower triangle of ones: cumulative sums down the columns, then along the
/// rows.
fn flexibility(l: &DMatrix<f64>) -> DMatrix<f64> {
    let n = l.nrows();
    let mut f = l.clone();
    for b in 0..n {
        for a in 1..n {
            f[(a, b)] += f[(a - 1, b)];
        }
    }
    for b in 1..n {
        for a in 0..n {
            f[(a, b)] += f[(a, b - 1)];
        }
    }
    f
}

/// One mode from an eigenpair (mu = omega^-2, w = G^T v) of the symmetric problem.
fn ladder_mode(
    mode: usize,
    mu: f64,
    w: &DVector<f64>,
    g: &DMatrix<f64>,
    c: &DMatrix<f64>,
) -> Result<LadderMode, SolverError> {
    if !(mu.is_finite() && mu > 0.0) {
        return Err(SolverError::DegenerateMode {
            mode,
            reason: "its eigenvalue is not positive (the matrices are too ill-conditioned)",
        });
    }
    let omega = 1.0 / mu.sqrt();
    let v = g
        .tr_solve_lower_triangular(w)
        .ok_or_else(|| numerical("the ladder's back substitution", "zero pivot"))?;
    let n = v.len();
    let top = v[n - 1];
    if top.abs() <= VANISHING * v.amax() {
        return Err(SolverError::DegenerateMode {
            mode,
            reason: "its top-node voltage vanishes",
        });
    }
    let v = v / top;
    let cv = c * &v;
    // Suffix sums: the charge amplitude of every node at and above node k, whose rate is the
    // current in section k (charge conservation, i = omega D^-T C v up to sign).
    let mut above = vec![0.0; n];
    let mut acc = 0.0;
    for k in (0..n).rev() {
        acc += cv[k];
        above[k] = acc;
    }
    let base = above[0];
    let total: f64 = cv.iter().map(|x| x.abs()).sum();
    if base.abs() <= VANISHING * total {
        return Err(SolverError::DegenerateMode {
            mode,
            reason: "its base current vanishes",
        });
    }
    let top_capacitance_f = v.dot(&cv);
    let mut node_voltage = Vec::with_capacity(n + 1);
    node_voltage.push(0.0);
    node_voltage.extend(v.iter());
    let result = LadderMode {
        frequency_hz: omega / (2.0 * PI),
        node_voltage,
        branch_current: above.iter().map(|a| a / base).collect(),
        top_capacitance_f,
        top_inductance_h: 1.0 / (omega * omega * top_capacitance_f),
        top_to_base_ohm: 1.0 / (omega * base.abs()),
    };
    let finite = result.frequency_hz.is_finite()
        && result.top_capacitance_f > 0.0
        && result.top_inductance_h.is_finite()
        && result.top_to_base_ohm.is_finite()
        && result.node_voltage.iter().all(|x| x.is_finite())
        && result.branch_current.iter().all(|x| x.is_finite());
    if finite {
        Ok(result)
    } else {
        Err(numerical("a ladder mode", "non-finite result"))
    }
}

/// The capacitance and inductance matrices (F, H) of the invented, fully coupled ladder of `n`
/// sections of the validation table `validation/circuits.csv` (case `full_ladder`, computed by
/// `validation/circuits_refs.py`, whose indices i, j are 1-based): L_ij = l0 s_i s_j 2^-|i-j|
/// with s_i = 1 + i/4, and the node capacitance matrix from c0 4^-|i-j| between nodes, c0 (1 +
/// i/8) to ground and 4 c0 more at the top. One definition for the `verify` command and this
/// module's tests, so the two cannot check different ladders. Returns (C, L).
pub fn validation_full_ladder(n: usize, l0_h: f64, c0_f: f64) -> (DMatrix<f64>, DMatrix<f64>) {
    let s = |i: usize| 1.0 + (i + 1) as f64 / 4.0;
    let l = DMatrix::from_fn(n, n, |i, j| {
        l0_h * s(i) * s(j) * 2f64.powi(-(i.abs_diff(j) as i32))
    });
    let off = |i: usize, j: usize| c0_f * 4f64.powi(-(i.abs_diff(j) as i32));
    let c = DMatrix::from_fn(n, n, |i, j| {
        if i != j {
            -off(i, j)
        } else {
            let mut d = c0_f * (1.0 + (i + 1) as f64 / 8.0);
            d += (0..n).filter(|&k| k != i).map(|k| off(i, k)).sum::<f64>();
            if i == n - 1 {
                d += 4.0 * c0_f;
            }
            d
        }
    });
    (c, l)
}

/// Equivalent lumped capacitance C_eq = 1 / ((2 pi f)^2 L) (F) of a resonance at `frequency_hz`
/// with the inductance `inductance_h` (H): Thomson's formula f = 1 / (2 pi sqrt(L C)) solved for
/// C (W. Thomson, "On transient electric currents", *Phil. Mag.* 5, 1853, pp. 393-405; page
/// range from memory). With a winding's first ladder mode and its low-frequency series
/// inductance ([`LadderModes::series_inductance_h`]) this is the capacitance that, in series
/// with that inductance, resonates at f1.
///
/// Errors: either argument not finite and positive.
pub fn equivalent_capacitance_f(frequency_hz: f64, inductance_h: f64) -> Result<f64, SolverError> {
    require_positive(frequency_hz, || "frequency_hz".into())?;
    require_positive(inductance_h, || "inductance_h".into())?;
    let omega = 2.0 * PI * frequency_hz;
    let c = 1.0 / (omega * omega * inductance_h);
    if c.is_finite() && c > 0.0 {
        Ok(c)
    } else {
        Err(invalid(
            "equivalent capacitance (F)".into(),
            c,
            "finite and positive (the inputs are out of range)",
        ))
    }
}

// ---------------------------------------------------------------------------------------------
// Coupled loops: the circuit and its checks
// ---------------------------------------------------------------------------------------------

/// N coupled series loops, each with an inductance (row of the full inductance matrix), an
/// optional series capacitor and a series resistance. Loop j obeys
/// sum_k M_jk di_k/dt + R_j i_j + q_j / C_j = v_j (source v_j; 0 unless driven), dq_j/dt = i_j.
#[derive(Debug, Clone, PartialEq)]
pub struct Loops {
    /// N x N inductance matrix (H): self-inductances on the diagonal, mutual inductances off it
    /// (signs follow the loops' current directions). Symmetric positive definite.
    pub inductance_h: DMatrix<f64>,
    /// Series capacitance of each loop (F, positive), `None` for a loop closed without a
    /// capacitor.
    pub capacitance_f: Vec<Option<f64>>,
    /// Series resistance of each loop (ohm, not negative).
    pub resistance_ohm: Vec<f64>,
}

impl Loops {
    /// Number of loops (the size of the inductance matrix).
    pub fn loop_count(&self) -> usize {
        self.inductance_h.nrows()
    }

    /// Checks every field: at least one loop, sizes agree, capacitances finite and positive,
    /// resistances finite and not negative, the inductance matrix finite, symmetric and
    /// positive definite.
    pub fn validate(&self) -> Result<(), SolverError> {
        self.checked().map(|_| ())
    }

    /// The symmetric part of the inductance matrix after every check.
    fn checked(&self) -> Result<DMatrix<f64>, SolverError> {
        let n = self.loop_count();
        if n == 0 {
            return Err(invalid(
                "the number of loops (rows of the inductance matrix)".into(),
                0.0,
                "at least 1",
            ));
        }
        require_len(self.capacitance_f.len(), n, || {
            "the length of capacitance_f".into()
        })?;
        require_len(self.resistance_ohm.len(), n, || {
            "the length of resistance_ohm".into()
        })?;
        for (j, c) in self.capacitance_f.iter().enumerate() {
            if let Some(c) = c {
                require_positive(*c, || format!("capacitance_f of loop {j}"))?;
            }
        }
        for (j, r) in self.resistance_ohm.iter().enumerate() {
            require_non_negative(*r, || format!("resistance_ohm of loop {j}"))?;
        }
        Ok(spd_matrix(&self.inductance_h, "loop inductance matrix (H)", n)?.symmetric)
    }

    fn check_index(&self, index: usize) -> Result<(), SolverError> {
        if index < self.loop_count() {
            Ok(())
        } else {
            Err(SolverError::NoSuchLoop {
                index,
                loops: self.loop_count(),
            })
        }
    }

    fn capacitor(&self, index: usize, figure: &'static str) -> Result<f64, SolverError> {
        self.check_index(index)?;
        self.capacitance_f[index].ok_or(SolverError::LoopWithoutCapacitor { index, figure })
    }

    /// Stored energy W = 1/2 i^T M i + 1/2 sum_j q_j^2 / C_j (J) of a state of these loops
    /// (loops without a capacitor contribute their currents only).
    ///
    /// Errors: the loops' own checks, or a state of the wrong size or not finite.
    pub fn energy_j(&self, state: &LoopState) -> Result<f64, SolverError> {
        let m = self.checked()?;
        state.check(self)?;
        Ok(energy_of(
            &m,
            &self.capacitance_f,
            &state.charge_c,
            &state.current_a,
        ))
    }
}

fn energy_of(
    m: &DMatrix<f64>,
    capacitance_f: &[Option<f64>],
    charge: &[f64],
    current: &[f64],
) -> f64 {
    let n = current.len();
    let mut w = 0.0;
    for a in 0..n {
        for b in 0..n {
            w += 0.5 * current[a] * m[(a, b)] * current[b];
        }
        if let Some(c) = capacitance_f[a] {
            w += 0.5 * charge[a] * charge[a] / c;
        }
    }
    w
}

/// The state of N loops at one instant: capacitor charges (C) and loop currents (A).
#[derive(Debug, Clone, PartialEq)]
pub struct LoopState {
    /// Charge on each loop's capacitor (C), with dq/dt = i; 0 for a loop without a capacitor.
    pub charge_c: Vec<f64>,
    /// Current of each loop (A).
    pub current_a: Vec<f64>,
}

impl LoopState {
    /// Sizes match the loops, entries are finite, and loops without a capacitor carry no charge.
    fn check(&self, loops: &Loops) -> Result<(), SolverError> {
        let n = loops.loop_count();
        require_len(self.charge_c.len(), n, || "the length of charge_c".into())?;
        require_len(self.current_a.len(), n, || "the length of current_a".into())?;
        for j in 0..n {
            require_finite(self.charge_c[j], || format!("charge_c of loop {j}"))?;
            require_finite(self.current_a[j], || format!("current_a of loop {j}"))?;
            if loops.capacitance_f[j].is_none() && self.charge_c[j] != 0.0 {
                return Err(invalid(
                    format!("charge_c of loop {j}"),
                    self.charge_c[j],
                    "0 (the loop has no capacitor)",
                ));
            }
        }
        Ok(())
    }
}

// ---------------------------------------------------------------------------------------------
// 2. Coupled loops in time
// ---------------------------------------------------------------------------------------------

/// A spark gap that quenches: from `time_s` on, loop `loop_index` is open (its current is 0,
/// its capacitor keeps its charge) and the other loops continue without it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Quench {
    /// The loop that opens.
    pub loop_index: usize,
    /// When it opens (s, within the run).
    pub time_s: f64,
}

/// What to simulate: the run's length, the sampling density and an optional quench.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SimulationSettings {
    /// Length of the run from t = 0 (s).
    pub duration_s: f64,
    /// Samples per period of the fastest natural frequency; at least
    /// [`MIN_SAMPLES_PER_PERIOD`].
    pub samples_per_period: usize,
    /// A loop that opens during the run.
    pub quench: Option<Quench>,
}

impl SimulationSettings {
    /// A run of `duration_s` seconds at [`MIN_SAMPLES_PER_PERIOD`] samples per period, no quench.
    pub fn new(duration_s: f64) -> Self {
        SimulationSettings {
            duration_s,
            samples_per_period: MIN_SAMPLES_PER_PERIOD,
            quench: None,
        }
    }
}

/// Peaks of |x| of a sampled signal, one per half-cycle (between zero crossings).
#[derive(Debug, Clone, PartialEq)]
pub struct Envelope {
    /// Time of each peak (s).
    pub times_s: Vec<f64>,
    /// |x| at each peak, in the signal's unit (V for a capacitor voltage, A for a current).
    pub peaks: Vec<f64>,
}

impl Envelope {
    /// The peaks after time `t_s` (s): what a loop does once something has happened at `t_s`
    /// (e.g. the secondary ringing alone after the primary's quench).
    pub fn after(&self, t_s: f64) -> Envelope {
        let (times_s, peaks) = self
            .times_s
            .iter()
            .zip(&self.peaks)
            .filter(|(t, _)| **t > t_s)
            .map(|(t, v)| (*t, *v))
            .unzip();
        Envelope { times_s, peaks }
    }
}

/// The first notch of a loop's current envelope (see [`Simulation::first_notch`]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Notch {
    /// Time of the notch (s).
    pub time_s: f64,
    /// Half-cycles of the loop's current (envelope peaks) before the notch.
    pub half_cycles: usize,
    /// The loop's own energy there, 1/2 L_jj i_j^2 + 1/2 q_j^2 / C_j (J).
    pub loop_energy_j: f64,
    /// The loop's own current amplitude there, sqrt(2 W_j / L_jj) (A).
    pub current_amplitude_a: f64,
}

/// The largest |value| of a signal over the run and when it occurs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Peak {
    /// Time (s).
    pub time_s: f64,
    /// |value| there, in the signal's unit.
    pub value: f64,
}

/// A set of active loops written in energy coordinates (see [`simulate`]).
#[derive(Debug, Clone)]
struct EnergyModel {
    /// The active loops' indices in the full circuit, in order.
    active: Vec<usize>,
    /// (position in `active`, sqrt(C)) of each active loop with a capacitor, in order.
    caps: Vec<(usize, f64)>,
    /// Lower Cholesky factor G of the active loops' inductance matrix.
    factor: DMatrix<f64>,
    /// The generator A_y of dy/dt = A_y y.
    generator: DMatrix<f64>,
}

impl EnergyModel {
    fn new(loops: &Loops, m: &DMatrix<f64>, active: Vec<usize>) -> Result<Self, SolverError> {
        let na = active.len();
        let caps: Vec<(usize, f64)> = active
            .iter()
            .enumerate()
            .filter_map(|(pos, &j)| loops.capacitance_f[j].map(|c| (pos, c.sqrt())))
            .collect();
        let nc = caps.len();
        let sub = DMatrix::from_fn(na, na, |r, c| m[(active[r], active[c])]);
        let factor = if na == 0 {
            sub
        } else {
            Cholesky::new(sub)
                .ok_or_else(|| SolverError::NotPositiveDefinite {
                    quantity: "inductance matrix of the loops left after the quench".into(),
                })?
                .l()
        };
        // K^T = G^-1 P^T C^-1/2 (na x nc) and the damping G^-1 R G^-T, both by triangular solves.
        let mut b = DMatrix::zeros(na, nc);
        for (k, &(pos, sqrt_c)) in caps.iter().enumerate() {
            b[(pos, k)] = 1.0 / sqrt_c;
        }
        let r = DMatrix::from_fn(na, na, |i, j| {
            if i == j {
                loops.resistance_ohm[active[i]]
            } else {
                0.0
            }
        });
        let (kt, damping) = if na == 0 {
            (b, r)
        } else {
            let kt = factor
                .solve_lower_triangular(&b)
                .ok_or_else(|| numerical("the loop coordinates", "zero pivot"))?;
            let x = factor
                .solve_lower_triangular(&r)
                .ok_or_else(|| numerical("the loop coordinates", "zero pivot"))?;
            let d = factor
                .solve_lower_triangular(&x.transpose())
                .ok_or_else(|| numerical("the loop coordinates", "zero pivot"))?;
            (kt, (&d + d.transpose()) * 0.5)
        };
        let dim = nc + na;
        let mut generator = DMatrix::zeros(dim, dim);
        generator
            .view_mut((0, nc), (nc, na))
            .copy_from(&kt.transpose());
        generator.view_mut((nc, 0), (na, nc)).copy_from(&(-&kt));
        generator
            .view_mut((nc, nc), (na, na))
            .copy_from(&(-damping));
        if generator.iter().all(|x| x.is_finite()) {
            Ok(EnergyModel {
                active,
                caps,
                factor,
                generator,
            })
        } else {
            Err(numerical("the loop coordinates", "non-finite entries"))
        }
    }

    fn dim(&self) -> usize {
        self.caps.len() + self.active.len()
    }

    /// y = (q_c / sqrt(C_c), G^T i_active) from full-size charges and currents.
    fn energy_coordinates(&self, charge: &[f64], current: &[f64]) -> Vec<f64> {
        let nc = self.caps.len();
        let na = self.active.len();
        let mut y = vec![0.0; nc + na];
        for (k, &(pos, sqrt_c)) in self.caps.iter().enumerate() {
            y[k] = charge[self.active[pos]] / sqrt_c;
        }
        for r in 0..na {
            let mut s = 0.0;
            for c in r..na {
                s += self.factor[(c, r)] * current[self.active[c]];
            }
            y[nc + r] = s;
        }
        y
    }

    /// Writes the active loops' charges and currents of y into full-size slices (back
    /// substitution G^T i = u).
    fn write_loop_values(&self, y: &[f64], charge: &mut [f64], current: &mut [f64]) {
        let nc = self.caps.len();
        let na = self.active.len();
        for (k, &(pos, sqrt_c)) in self.caps.iter().enumerate() {
            charge[self.active[pos]] = y[k] * sqrt_c;
        }
        for r in (0..na).rev() {
            let mut s = y[nc + r];
            for c in r + 1..na {
                s -= self.factor[(c, r)] * current[self.active[c]];
            }
            current[self.active[r]] = s / self.factor[(r, r)];
        }
    }

    /// exp(A_y tau).
    fn propagator(&self, tau: f64) -> Result<DMatrix<f64>, SolverError> {
        let e = (&self.generator * tau).exp();
        if e.iter().all(|x| x.is_finite()) {
            Ok(e)
        } else {
            Err(numerical("the matrix exponential", "non-finite result"))
        }
    }

    /// y(t0 + tau) from y(t0).
    fn advance(&self, y: &[f64], tau: f64) -> Result<Vec<f64>, SolverError> {
        if tau == 0.0 || self.dim() == 0 {
            return Ok(y.to_vec());
        }
        let e = self.propagator(tau)?;
        Ok((e * DVector::from_column_slice(y)).as_slice().to_vec())
    }

    /// The largest |lambda| over the generator's eigenvalues (rad/s): the undamped natural
    /// angular frequency of the fastest mode (|lambda| = omega0 for an underdamped pair), or
    /// the fastest decay rate if that is larger.
    fn fastest_rate(&self) -> Result<f64, SolverError> {
        let dim = self.dim();
        if dim == 0 {
            return Ok(0.0);
        }
        let schur = Schur::try_new(
            self.generator.clone(),
            f64::EPSILON,
            ITERATIONS_PER_ROW * dim,
        )
        .ok_or_else(|| {
            numerical(
                "the Schur decomposition of the loop equations",
                "no convergence",
            )
        })?;
        let rate = schur
            .complex_eigenvalues()
            .iter()
            .map(|l| l.norm())
            .fold(0.0, f64::max);
        if rate.is_finite() {
            Ok(rate)
        } else {
            Err(numerical("the loop eigenvalues", "non-finite result"))
        }
    }
}

/// One stretch of the run with a fixed set of active loops.
#[derive(Debug, Clone)]
struct Segment {
    model: EnergyModel,
    /// Start of the stretch (s): 0, or the quench time.
    start_time_s: f64,
    /// Energy coordinates at the start.
    start_state: Vec<f64>,
    /// Charges of every loop at the start (the inactive loops keep theirs).
    start_charge_c: Vec<f64>,
    /// Samples first_sample..end_sample belong to this stretch.
    first_sample: usize,
    end_sample: usize,
}

/// The sampled solution of [`simulate`], with the exact state at any time of the run.
#[derive(Debug, Clone)]
pub struct Simulation {
    loops: Loops,
    inductance: DMatrix<f64>,
    time_step_s: f64,
    duration_s: f64,
    samples: usize,
    /// Charges, sample-major: [k * N + j].
    charge: Vec<f64>,
    /// Currents, sample-major.
    current: Vec<f64>,
    segments: Vec<Segment>,
    quench: Option<Quench>,
}

/// Simulates N coupled loops from `initial` over `settings.duration_s`, exactly.
///
/// State x = (capacitor charges q, loop currents i), dq/dt = i, M di/dt = -R i - q / C
/// (loops without a capacitor have no q and no q / C term). The system is linear with constant
/// coefficients, so x(t + dt) = exp(A dt) x(t) holds exactly for any step (Moler and Van Loan
/// 2003): the propagator exp(A dt) is computed once per stretch to working precision
/// (Al-Mohy and Higham 2009, via nalgebra) and applied once per sample. There is no step-size
/// (truncation) error; the samples carry only the rounding of the propagator and of the
/// repeated products, and the step only sets how densely the solution is looked at.
///
/// The integration runs in energy coordinates (our derivation): with the Cholesky factor
/// M = G G^T, y = (p, u), p_j = q_j / sqrt(C_j), u = G^T i, so that W = |y|^2 / 2. Then
/// dp/dt = K u, du/dt = -K^T p - G^-1 R G^-T u with K = C^-1/2 P G^-T (P picks the loops with a
/// capacitor): a skew-symmetric generator plus a negative semidefinite damping block. Without
/// losses exp(A_y dt) is orthogonal (and its Pade approximant too), so the energy is conserved
/// to rounding, and every variable is on the same scale whatever the impedance levels of the
/// loops (a 20 uH primary and a 40 mH secondary alike).
///
/// Sampling: t_k = k dt, dt = 2 pi / (samples_per_period |lambda|_max), |lambda|_max the
/// largest modulus of the generator's eigenvalues (the undamped angular frequency of the
/// fastest mode, or a faster decay rate), over the loops before and after the quench. A run
/// with no dynamics at all (no capacitor, no resistance) is sampled at its start and end.
///
/// Quench: at `time_s` the state is evaluated exactly, the quenched loop's current is set to 0
/// (the gap stops conducting; the magnetic energy it still carried, if any, is lost) and its
/// capacitor keeps its charge; the run continues with the remaining loops from that state.
/// The sample at exactly the quench time, if any, is after the quench.
///
/// Accuracy (validation/circuits.csv): lossless energy drift below 4e-14 of the initial
/// energy over a run of thousands of samples; a damped series RLC within 1e-13 of its closed
/// form at any time ([`Simulation::state_at`]).
///
/// Errors: the loops' and the initial state's checks (a loop without a capacitor must start
/// with zero charge), `duration_s` not finite and positive, `samples_per_period` below
/// [`MIN_SAMPLES_PER_PERIOD`], a quench of no loop or outside [0, duration], more than
/// [`MAX_STORED_VALUES`] values to store, and numerical failures (reported, never silent).
pub fn simulate(
    loops: &Loops,
    initial: &LoopState,
    settings: &SimulationSettings,
) -> Result<Simulation, SolverError> {
    let m = loops.checked()?;
    initial.check(loops)?;
    let n = loops.loop_count();
    let duration = settings.duration_s;
    require_positive(duration, || "duration_s".into())?;
    if settings.samples_per_period < MIN_SAMPLES_PER_PERIOD {
        return Err(invalid(
            "samples_per_period".into(),
            settings.samples_per_period as f64,
            "at least MIN_SAMPLES_PER_PERIOD (40)",
        ));
    }
    if let Some(q) = settings.quench {
        loops.check_index(q.loop_index)?;
        if !(q.time_s.is_finite() && q.time_s >= 0.0 && q.time_s <= duration) {
            return Err(invalid(
                "quench time_s".into(),
                q.time_s,
                "finite and within [0, duration_s]",
            ));
        }
    }
    let full = EnergyModel::new(loops, &m, (0..n).collect())?;
    let reduced = match settings.quench {
        Some(q) => Some(EnergyModel::new(
            loops,
            &m,
            (0..n).filter(|&j| j != q.loop_index).collect(),
        )?),
        None => None,
    };
    let mut rate = full.fastest_rate()?;
    if let Some(r) = &reduced {
        rate = rate.max(r.fastest_rate()?);
    }
    let dt = if rate > 0.0 {
        (2.0 * PI / (settings.samples_per_period as f64 * rate)).min(duration)
    } else {
        duration
    };
    let samples_f = (duration / dt).floor() + 1.0;
    let values = samples_f * 2.0 * n as f64;
    if !(dt > 0.0 && values <= MAX_STORED_VALUES as f64) {
        return Err(SolverError::TooManySamples {
            values,
            limit: MAX_STORED_VALUES,
        });
    }
    let mut samples = samples_f as usize;
    while samples > 1 && (samples - 1) as f64 * dt > duration {
        samples -= 1;
    }
    let mut sim = Simulation {
        loops: loops.clone(),
        inductance: m,
        time_step_s: dt,
        duration_s: duration,
        samples,
        charge: vec![0.0; samples * n],
        current: vec![0.0; samples * n],
        segments: Vec::new(),
        quench: settings.quench,
    };
    let pre_end = match settings.quench {
        Some(q) => first_sample_at_or_after(q.time_s, dt, samples),
        None => samples,
    };
    let y0 = full.energy_coordinates(&initial.charge_c, &initial.current_a);
    sim.run_segment(full, 0.0, y0, initial.charge_c.clone(), 0, pre_end)?;
    if let (Some(q), Some(reduced)) = (settings.quench, reduced) {
        // The quenched loop keeps its charge (carried in the stretch's start charges) and
        // drops its current; the others go on from the exact state at the quench.
        let (charge, mut current) = sim.state_in_segment(0, q.time_s)?;
        current[q.loop_index] = 0.0;
        let y = reduced.energy_coordinates(&charge, &current);
        sim.run_segment(reduced, q.time_s, y, charge, pre_end, samples)?;
    }
    Ok(sim)
}

/// The first k with k dt >= t (at most `samples`).
fn first_sample_at_or_after(t: f64, dt: f64, samples: usize) -> usize {
    let mut k = (t / dt).ceil().max(0.0) as usize;
    k = k.min(samples);
    while k > 0 && (k - 1) as f64 * dt >= t {
        k -= 1;
    }
    while k < samples && (k as f64) * dt < t {
        k += 1;
    }
    k
}

/// The last k with k dt <= t, within 0..samples (0 if none).
fn last_sample_at_or_before(t: f64, dt: f64, samples: usize) -> usize {
    let mut k = ((t / dt).floor().max(0.0) as usize).min(samples.saturating_sub(1));
    while k > 0 && (k as f64) * dt > t {
        k -= 1;
    }
    while k + 1 < samples && ((k + 1) as f64) * dt <= t {
        k += 1;
    }
    k
}

impl Simulation {
    /// Propagates one stretch and fills its samples.
    fn run_segment(
        &mut self,
        model: EnergyModel,
        start_time_s: f64,
        start_state: Vec<f64>,
        start_charge_c: Vec<f64>,
        first_sample: usize,
        end_sample: usize,
    ) -> Result<(), SolverError> {
        let n = self.loops.loop_count();
        let dt = self.time_step_s;
        let dim = model.dim();
        if first_sample < end_sample {
            let t_first = first_sample as f64 * dt;
            let mut y = model.advance(&start_state, t_first - start_time_s)?;
            // Row-major propagator, applied by hand: no allocation per sample.
            let e = if dim > 0 {
                model.propagator(dt)?.transpose().as_slice().to_vec()
            } else {
                Vec::new()
            };
            let mut next = vec![0.0; dim];
            for k in first_sample..end_sample {
                let row = k * n..(k + 1) * n;
                self.charge[row.clone()].copy_from_slice(&start_charge_c);
                self.current[row.clone()].iter_mut().for_each(|x| *x = 0.0);
                model.write_loop_values(&y, &mut self.charge[row.clone()], &mut self.current[row]);
                for (r, out) in next.iter_mut().enumerate() {
                    let er = &e[r * dim..(r + 1) * dim];
                    *out = er.iter().zip(&y).map(|(a, b)| a * b).sum();
                }
                std::mem::swap(&mut y, &mut next);
            }
            let last = (end_sample - 1) * n;
            let ok = self.charge[first_sample * n..last + n]
                .iter()
                .chain(&self.current[first_sample * n..last + n])
                .all(|x| x.is_finite());
            if !ok {
                return Err(numerical("the time integration", "non-finite samples"));
            }
        }
        self.segments.push(Segment {
            model,
            start_time_s,
            start_state,
            start_charge_c,
            first_sample,
            end_sample,
        });
        Ok(())
    }

    /// Exact (charges, currents) at time t within segment `s` (t at or after its start).
    fn state_in_segment(&self, s: usize, t: f64) -> Result<(Vec<f64>, Vec<f64>), SolverError> {
        let seg = &self.segments[s];
        let n = self.loops.loop_count();
        let dt = self.time_step_s;
        let (y_base, t_base) =
            if seg.first_sample < seg.end_sample && (seg.first_sample as f64) * dt <= t {
                let k = last_sample_at_or_before(t, dt, self.samples)
                    .clamp(seg.first_sample, seg.end_sample - 1);
                let row = k * n..(k + 1) * n;
                (
                    seg.model
                        .energy_coordinates(&self.charge[row.clone()], &self.current[row]),
                    k as f64 * dt,
                )
            } else {
                (seg.start_state.clone(), seg.start_time_s)
            };
        let y = seg.model.advance(&y_base, (t - t_base).max(0.0))?;
        let mut charge = seg.start_charge_c.clone();
        let mut current = vec![0.0; n];
        seg.model.write_loop_values(&y, &mut charge, &mut current);
        Ok((charge, current))
    }

    /// The segment that holds time t (after the quench from the quench time on).
    fn segment_at(&self, t: f64) -> usize {
        let mut s = 0;
        for (i, seg) in self.segments.iter().enumerate() {
            if seg.start_time_s <= t {
                s = i;
            }
        }
        s
    }

    /// Exact state at t, t clamped into the run (for refinements inside it).
    fn state_clamped(&self, t: f64) -> Result<(Vec<f64>, Vec<f64>), SolverError> {
        let t = t.clamp(0.0, self.duration_s);
        self.state_in_segment(self.segment_at(t), t)
    }

    /// The exact state at `time_s` in [0, duration]: exp(A (t - t_k)) x_k from the sample at or
    /// before t (after a quench, the reduced loops'; the quenched loop holds its charge and
    /// carries no current).
    ///
    /// Errors: `time_s` not finite or outside the run.
    pub fn state_at(&self, time_s: f64) -> Result<LoopState, SolverError> {
        if !(time_s.is_finite() && time_s >= 0.0 && time_s <= self.duration_s) {
            return Err(SolverError::TimeOutsideRun {
                time_s,
                end_s: self.duration_s,
            });
        }
        let (charge_c, current_a) = self.state_clamped(time_s)?;
        Ok(LoopState {
            charge_c,
            current_a,
        })
    }

    /// The loops simulated.
    pub fn loops(&self) -> &Loops {
        &self.loops
    }

    /// The quench, if any.
    pub fn quench(&self) -> Option<Quench> {
        self.quench
    }

    /// The sampling step dt (s).
    pub fn time_step_s(&self) -> f64 {
        self.time_step_s
    }

    /// The run's length (s).
    pub fn duration_s(&self) -> f64 {
        self.duration_s
    }

    /// Number of samples (t_k = k dt, k = 0..count).
    pub fn sample_count(&self) -> usize {
        self.samples
    }

    /// Sample times t_k = k dt (s).
    pub fn times_s(&self) -> Vec<f64> {
        (0..self.samples)
            .map(|k| k as f64 * self.time_step_s)
            .collect()
    }

    fn column(&self, data: &[f64], j: usize) -> Vec<f64> {
        let n = self.loops.loop_count();
        (0..self.samples).map(|k| data[k * n + j]).collect()
    }

    /// Capacitor charge of loop `loop_index` at every sample (C).
    ///
    /// Errors: no such loop.
    pub fn charge_c(&self, loop_index: usize) -> Result<Vec<f64>, SolverError> {
        self.loops.check_index(loop_index)?;
        Ok(self.column(&self.charge, loop_index))
    }

    /// Current of loop `loop_index` at every sample (A).
    ///
    /// Errors: no such loop.
    pub fn current_a(&self, loop_index: usize) -> Result<Vec<f64>, SolverError> {
        self.loops.check_index(loop_index)?;
        Ok(self.column(&self.current, loop_index))
    }

    /// Capacitor voltage q / C of loop `loop_index` at every sample (V).
    ///
    /// Errors: no such loop, or a loop without a capacitor.
    pub fn capacitor_voltage_v(&self, loop_index: usize) -> Result<Vec<f64>, SolverError> {
        let c = self.loops.capacitor(loop_index, "capacitor voltage")?;
        Ok(self
            .column(&self.charge, loop_index)
            .into_iter()
            .map(|q| q / c)
            .collect())
    }

    /// Stored energy W = 1/2 i^T M i + 1/2 sum q^2 / C at every sample (J).
    pub fn energy_j(&self) -> Vec<f64> {
        let n = self.loops.loop_count();
        (0..self.samples)
            .map(|k| {
                let row = k * n..(k + 1) * n;
                energy_of(
                    &self.inductance,
                    &self.loops.capacitance_f,
                    &self.charge[row.clone()],
                    &self.current[row],
                )
            })
            .collect()
    }

    /// Envelope of loop `loop_index`'s current (A): see [`envelope`].
    ///
    /// Errors: no such loop.
    pub fn current_envelope(&self, loop_index: usize) -> Result<Envelope, SolverError> {
        Ok(envelope(&self.current_a(loop_index)?, self.time_step_s))
    }

    /// Envelope of loop `loop_index`'s capacitor voltage (V): see [`envelope`].
    ///
    /// Errors: no such loop, or a loop without a capacitor.
    pub fn voltage_envelope(&self, loop_index: usize) -> Result<Envelope, SolverError> {
        Ok(envelope(
            &self.capacitor_voltage_v(loop_index)?,
            self.time_step_s,
        ))
    }

    /// The loop's own energy 1/2 L_jj i_j^2 + 1/2 q_j^2 / C_j.
    fn own_energy(&self, j: usize, c: f64, charge: f64, current: f64) -> f64 {
        0.5 * self.inductance[(j, j)] * current * current + 0.5 * charge * charge / c
    }

    /// The first notch of loop `loop_index`'s current envelope: the first local minimum of the
    /// envelope ([`Simulation::current_envelope`]) after its first local maximum. `None` when
    /// the envelope has no such minimum within the run.
    ///
    /// The notch time is then refined on the exact solution: the envelope of the loop's own
    /// oscillation is its own energy W_j = 1/2 L_jj i_j^2 + 1/2 q_j^2 / C_j (for a free
    /// oscillation at the loop's own frequency it is constant, and it is 0 when the loop holds
    /// no energy), so the notch is taken where W_j is least: the least sample between the
    /// envelope peaks on either side of the minimum, then a golden-section search (J. Kiefer,
    /// "Sequential minimax search for a maximum", *Proc. Amer. Math. Soc.* 4, 1953,
    /// pp. 502-506) on [t_{k-1}, t_{k+1}] around it on [`Simulation::state_at`], to 1e-9 of
    /// the step. `half_cycles` counts the envelope peaks before the notch.
    ///
    /// Errors: no such loop, or a loop without a capacitor (it has no own oscillation).
    pub fn first_notch(&self, loop_index: usize) -> Result<Option<Notch>, SolverError> {
        let c = self
            .loops
            .capacitor(loop_index, "own oscillation (current envelope notch)")?;
        let env = self.current_envelope(loop_index)?;
        let e = &env.peaks;
        let Some(first_max) = (0..e.len().saturating_sub(1)).find(|&i| e[i + 1] < e[i]) else {
            return Ok(None);
        };
        let Some(q) = (first_max + 1..e.len().saturating_sub(1)).find(|&i| e[i + 1] > e[i]) else {
            return Ok(None);
        };
        let n = self.loops.loop_count();
        let dt = self.time_step_s;
        let j = loop_index;
        let ka =
            first_sample_at_or_after(env.times_s[q - 1], dt, self.samples).min(self.samples - 1);
        let kb = last_sample_at_or_before(env.times_s[q + 1], dt, self.samples);
        let mut best = (f64::INFINITY, ka);
        for k in ka..=kb.max(ka) {
            let w = self.own_energy(j, c, self.charge[k * n + j], self.current[k * n + j]);
            if w < best.0 {
                best = (w, k);
            }
        }
        let k = best.1;
        let lo = k.saturating_sub(1) as f64 * dt;
        let hi = ((k + 1).min(self.samples - 1) as f64 * dt).min(self.duration_s);
        let mut failure = None;
        let (t, w) = golden_minimum(
            |t| match self.state_clamped(t) {
                Ok((q_c, i_a)) => self.own_energy(j, c, q_c[j], i_a[j]),
                Err(e) => {
                    failure = Some(e);
                    f64::NAN
                }
            },
            lo,
            hi,
            1e-9 * dt,
        );
        if let Some(e) = failure {
            return Err(e);
        }
        let (time_s, loop_energy_j) = if w <= best.0 {
            (t, w)
        } else {
            (k as f64 * dt, best.0)
        };
        Ok(Some(Notch {
            time_s,
            half_cycles: env.times_s.iter().filter(|&&tp| tp < time_s).count(),
            loop_energy_j,
            current_amplitude_a: (2.0 * loop_energy_j / self.inductance[(j, j)]).sqrt(),
        }))
    }

    /// The largest |capacitor voltage| of loop `loop_index` over the run (V) and its time.
    ///
    /// The largest sample is refined on the exact solution: the voltage q / C is extreme where
    /// its derivative i / C vanishes, so the time is the root of the loop's current next to the
    /// largest sample (Brent's method, [`brent_root`], on [`Simulation::state_at`], to 1e-9 of
    /// the step). A maximum at t = 0 or at the end of the run is the sample there.
    ///
    /// Errors: no such loop, or a loop without a capacitor.
    pub fn peak_capacitor_voltage(&self, loop_index: usize) -> Result<Peak, SolverError> {
        let c = self.loops.capacitor(loop_index, "capacitor voltage")?;
        let n = self.loops.loop_count();
        let j = loop_index;
        let dt = self.time_step_s;
        let mut k = 0;
        for i in 0..self.samples {
            if self.charge[i * n + j].abs() > self.charge[k * n + j].abs() {
                k = i;
            }
        }
        let sample = Peak {
            time_s: k as f64 * dt,
            value: self.charge[k * n + j].abs() / c,
        };
        if k == 0 || k + 1 >= self.samples {
            return Ok(sample);
        }
        let i = |m: usize| self.current[m * n + j];
        let bracket = if i(k) == 0.0 {
            return Ok(sample);
        } else if (i(k - 1) > 0.0) != (i(k) > 0.0) || i(k - 1) == 0.0 {
            (k - 1, k)
        } else if (i(k + 1) > 0.0) != (i(k) > 0.0) || i(k + 1) == 0.0 {
            (k, k + 1)
        } else {
            return Ok(sample);
        };
        let mut failure = None;
        let found = brent_root(
            |t| match self.state_clamped(t) {
                Ok((_, i_a)) => i_a[j],
                Err(e) => {
                    failure = Some(e);
                    f64::NAN
                }
            },
            bracket.0 as f64 * dt,
            bracket.1 as f64 * dt,
            1e-9 * dt,
            200,
        );
        if let Some(e) = failure {
            return Err(e);
        }
        let Ok(found) = found else {
            return Ok(sample);
        };
        let t = found.x[0];
        let (q_c, _) = self.state_clamped(t)?;
        let value = q_c[j].abs() / c;
        if value.is_finite() && value >= sample.value {
            Ok(Peak { time_s: t, value })
        } else {
            Ok(sample)
        }
    }
}

/// Peaks of |x| of a signal sampled every `time_step_s`, one per half-cycle.
///
/// The samples are cut at sign changes (zero samples join the half-cycle they end); in each
/// half-cycle the largest |x| is refined by the parabola through it and its two neighbours
/// (peak at offset d = (x_{k-1} - x_{k+1}) / (2 (x_{k-1} - 2 x_k + x_{k+1})) steps, value
/// x_k - (x_{k-1} - x_{k+1}) d / 4; common practice, no source). For a sinusoid sampled at a
/// phase step h its error is at most h^4/43 of the amplitude (1.4e-5 at 40 samples per
/// period) and 1e-5 of a period in time; more samples per period shrink it as h^4. The
/// figures that need more ([`Simulation::first_notch`], [`Simulation::peak_capacitor_voltage`])
/// are refined on the exact solution instead. A largest sample at t = 0 is kept
/// as it is (a capacitor charged at rest starts at its peak); one at the last sample is
/// dropped (the half-cycle goes on after the run).
pub fn envelope(signal: &[f64], time_step_s: f64) -> Envelope {
    let mut env = Envelope {
        times_s: Vec::new(),
        peaks: Vec::new(),
    };
    let len = signal.len();
    let mut push_half_cycle = |a: usize, b: usize| {
        let mut p = a;
        for k in a..=b {
            if signal[k].abs() > signal[p].abs() {
                p = k;
            }
        }
        if signal[p] == 0.0 || p + 1 == len {
            return;
        }
        let (mut t, mut v) = (p as f64, signal[p]);
        if p > 0 {
            let (y0, y1, y2) = (signal[p - 1], signal[p], signal[p + 1]);
            let denom = y0 - 2.0 * y1 + y2;
            if denom != 0.0 {
                let d = 0.5 * (y0 - y2) / denom;
                if d.abs() <= 1.0 {
                    t += d;
                    v = y1 - 0.25 * (y0 - y2) * d;
                }
            }
        }
        env.times_s.push(t * time_step_s);
        env.peaks.push(v.abs());
    };
    let mut start = 0;
    let mut sign = 0.0;
    for (k, &x) in signal.iter().enumerate() {
        if x != 0.0 {
            let s = x.signum();
            if sign != 0.0 && s != sign {
                push_half_cycle(start, k - 1);
                start = k;
            }
            sign = s;
        }
    }
    if len > 0 {
        push_half_cycle(start, len - 1);
    }
    env
}

/// The least value of f on [a, b] by golden-section search down to an interval of `x_tol`
/// (Kiefer 1953): (argument, value). NaN values count as larger than any number.
fn golden_minimum(mut f: impl FnMut(f64) -> f64, a: f64, b: f64, x_tol: f64) -> (f64, f64) {
    const INV_PHI: f64 = 0.618_033_988_749_894_9;
    let (mut a, mut b) = (a, b);
    let mut c = b - INV_PHI * (b - a);
    let mut d = a + INV_PHI * (b - a);
    let (mut fc, mut fd) = (f(c), f(d));
    let mut best = (f64::NAN, f64::INFINITY);
    let note = |x: f64, fx: f64, best: &mut (f64, f64)| {
        if fx < best.1 {
            *best = (x, fx);
        }
    };
    note(c, fc, &mut best);
    note(d, fd, &mut best);
    for _ in 0..200 {
        if (b - a).abs() <= x_tol {
            break;
        }
        if fc < fd || fd.is_nan() {
            b = d;
            d = c;
            fd = fc;
            c = b - INV_PHI * (b - a);
            fc = f(c);
            note(c, fc, &mut best);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + INV_PHI * (b - a);
            fd = f(d);
            note(d, fd, &mut best);
        }
    }
    if best.0.is_nan() {
        (0.5 * (a + b), f64::INFINITY)
    } else {
        best
    }
}

// ---------------------------------------------------------------------------------------------
// 3. Steady state under sinusoidal drive
// ---------------------------------------------------------------------------------------------

/// The source in the driven loop: a peak amplitude at phase 0 (the phase reference).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Drive {
    /// The driven loop's current is I e^{j omega t}, I this peak value (A): a current source
    /// in series (the loop's source voltage is whatever it takes).
    CurrentA(f64),
    /// A series voltage source V e^{j omega t}, V this peak value (V).
    VoltageV(f64),
}

/// Sinusoidal steady state of driven loops (peak phasors, phase reference the drive).
#[derive(Debug, Clone, PartialEq)]
pub struct SteadyState {
    /// Complex peak current of each loop (A).
    pub current_a: Vec<Complex<f64>>,
    /// Complex peak capacitor voltage q / C = I / (j omega C) of each loop (V); `None` for a
    /// loop without a capacitor.
    pub capacitor_voltage_v: Vec<Option<Complex<f64>>>,
    /// Complex peak source voltage in the driven loop (V): the drive itself, or what the
    /// current source must supply.
    pub source_voltage_v: Complex<f64>,
    /// Average power the source delivers, 1/2 Re(V I*) (W), with V, I the driven loop's source
    /// voltage and current. It equals the power dissipated, 1/2 sum R_j |I_j|^2.
    pub input_power_w: f64,
}

/// Solves the loops' sinusoidal steady state with loop `driven_loop` driven at
/// `angular_frequency_rad_s`: (j omega M + R + 1/(j omega C)) I = V (loop impedance matrix Z,
/// the 1/(j omega C) term only on loops with a capacitor). A voltage drive puts V on the driven
/// loop's row; a current drive fixes that loop's current, solves the other loops' rows
/// Z_oo I_o = -Z_od I_d and reads the source voltage as V_d = sum_k Z_dk I_k. Complex LU
/// solves (nalgebra). Resistances may be 0 as long as Z is not singular. Mesh (loop) analysis
/// with complex impedances: C. P. Steinmetz, "Complex quantities and their use in electrical
/// engineering", Proc. International Electrical Congress, Chicago 1893, pp. 33-74 (pages from
/// memory); the loop equations are those of [`Loops`].
///
/// Errors: the loops' checks, no such loop, a non-finite or negative drive amplitude, a
/// frequency not finite and positive, and a singular impedance matrix (a lossless circuit
/// driven at one of its natural frequencies).
pub fn steady_state(
    loops: &Loops,
    driven_loop: usize,
    drive: Drive,
    angular_frequency_rad_s: f64,
) -> Result<SteadyState, SolverError> {
    let m = loops.checked()?;
    loops.check_index(driven_loop)?;
    let omega = angular_frequency_rad_s;
    require_positive(omega, || "angular_frequency_rad_s".into())?;
    let n = loops.loop_count();
    let z = DMatrix::from_fn(n, n, |r, c| {
        let mut x = Complex::new(0.0, omega * m[(r, c)]);
        if r == c {
            x.re += loops.resistance_ohm[r];
            if let Some(cap) = loops.capacitance_f[r] {
                x.im -= 1.0 / (omega * cap);
            }
        }
        x
    });
    if !z.iter().all(|x| x.re.is_finite() && x.im.is_finite()) {
        return Err(invalid(
            "angular_frequency_rad_s".into(),
            omega,
            "such that the loop impedances are finite",
        ));
    }
    let singular = || SolverError::SingularCircuit {
        angular_frequency_rad_s: omega,
    };
    let d = driven_loop;
    let (current, source) = match drive {
        Drive::VoltageV(v) => {
            require_non_negative(v, || "drive voltage (peak V)".into())?;
            let mut rhs = DVector::from_element(n, Complex::new(0.0, 0.0));
            rhs[d] = Complex::new(v, 0.0);
            let i = z.clone().lu().solve(&rhs).ok_or_else(singular)?;
            (i, Complex::new(v, 0.0))
        }
        Drive::CurrentA(i_d) => {
            require_non_negative(i_d, || "drive current (peak A)".into())?;
            let others: Vec<usize> = (0..n).filter(|&k| k != d).collect();
            let id = Complex::new(i_d, 0.0);
            let mut i = DVector::from_element(n, Complex::new(0.0, 0.0));
            i[d] = id;
            if !others.is_empty() {
                let no = others.len();
                let zoo = DMatrix::from_fn(no, no, |r, c| z[(others[r], others[c])]);
                let rhs = DVector::from_fn(no, |r, _| -z[(others[r], d)] * id);
                let io = zoo.lu().solve(&rhs).ok_or_else(singular)?;
                for (r, &k) in others.iter().enumerate() {
                    i[k] = io[r];
                }
            }
            let v: Complex<f64> = (0..n).map(|k| z[(d, k)] * i[k]).sum();
            (i, v)
        }
    };
    let current_a: Vec<Complex<f64>> = current.iter().copied().collect();
    let capacitor_voltage_v = (0..n)
        .map(|k| loops.capacitance_f[k].map(|cap| current_a[k] / Complex::new(0.0, omega * cap)))
        .collect::<Vec<_>>();
    let input_power_w = 0.5 * (source * current_a[d].conj()).re;
    let finite = |x: &Complex<f64>| x.re.is_finite() && x.im.is_finite();
    let ok = current_a.iter().all(finite)
        && capacitor_voltage_v.iter().flatten().all(finite)
        && finite(&source)
        && input_power_w.is_finite();
    if !ok {
        return Err(singular());
    }
    Ok(SteadyState {
        current_a,
        capacitor_voltage_v,
        source_voltage_v: source,
        input_power_w,
    })
}

// ---------------------------------------------------------------------------------------------
// 4. Lossless normal modes of coupled loops
// ---------------------------------------------------------------------------------------------

/// A lossless normal mode of coupled loops (see [`loop_modes`]).
#[derive(Debug, Clone, PartialEq)]
pub struct LoopMode {
    /// Natural frequency (Hz).
    pub frequency_hz: f64,
    /// Relative current amplitude of each loop (all in phase or in antiphase), largest |entry|
    /// 1 and positive. Loops without a capacitor carry the current that keeps their flux
    /// constant.
    pub current_shape: Vec<f64>,
}

/// The lossless normal modes of the loops, lowest frequency first (resistances ignored).
///
/// omega^2 M q = C^-1 q (Goldstein's small oscillations with the magnetic energy as the
/// kinetic and the capacitors' energy as the potential energy). A loop without a capacitor
/// is a closed inductive loop: without losses it keeps its flux, (M q)_f = 0 at every nonzero
/// frequency, so it enters through the Schur complement M_eff = M_cc - M_cf M_ff^-1 M_fc (a
/// shorted turn lowers the inductance the other loops see) and has no mode of its own. With
/// C^-1 diagonal the problem is the symmetric eigenproblem C^1/2 M_eff C^1/2 z = omega^-2 z,
/// q = C^1/2 z, whose largest eigenvalues (the lowest modes) are accurate to rounding. For
/// two identical resonators coupled by k the frequencies are f0 / sqrt(1 + k) and
/// f0 / sqrt(1 - k).
///
/// An empty list when no loop has a capacitor. Errors: the loops' checks, and numerical
/// failures.
pub fn loop_modes(loops: &Loops) -> Result<Vec<LoopMode>, SolverError> {
    let m = loops.checked()?;
    let n = loops.loop_count();
    let caps: Vec<usize> = (0..n)
        .filter(|&j| loops.capacitance_f[j].is_some())
        .collect();
    let free: Vec<usize> = (0..n)
        .filter(|&j| loops.capacitance_f[j].is_none())
        .collect();
    let nc = caps.len();
    if nc == 0 {
        return Ok(Vec::new());
    }
    let block = |rows: &[usize], cols: &[usize]| {
        DMatrix::from_fn(rows.len(), cols.len(), |r, c| m[(rows[r], cols[c])])
    };
    let mcc = block(&caps, &caps);
    // X = M_ff^-1 M_fc: the free loops' charge per unit charge of the capacitor loops.
    let x = if free.is_empty() {
        DMatrix::zeros(0, nc)
    } else {
        let mff =
            Cholesky::new(block(&free, &free)).ok_or_else(|| SolverError::NotPositiveDefinite {
                quantity: "inductance matrix of the loops without a capacitor".into(),
            })?;
        mff.solve(&block(&free, &caps))
    };
    let m_eff = if free.is_empty() {
        mcc
    } else {
        &mcc - block(&caps, &free) * &x
    };
    let sqrt_c: Vec<f64> = caps
        .iter()
        .map(|&j| loops.capacitance_f[j].unwrap_or(0.0).sqrt())
        .collect();
    let s = DMatrix::from_fn(nc, nc, |r, c| sqrt_c[r] * m_eff[(r, c)] * sqrt_c[c]);
    let s = (&s + s.transpose()) * 0.5;
    let eigen = SymmetricEigen::try_new(s, f64::EPSILON, ITERATIONS_PER_ROW * nc)
        .ok_or_else(|| numerical("the loops' symmetric eigen-solve", "no convergence"))?;
    let mut order: Vec<usize> = (0..nc).collect();
    order.sort_by(|&a, &b| eigen.eigenvalues[b].total_cmp(&eigen.eigenvalues[a]));
    let mut modes = Vec::with_capacity(nc);
    for idx in order {
        let mu = eigen.eigenvalues[idx];
        if !(mu.is_finite() && mu > 0.0) {
            return Err(numerical(
                "the loops' normal modes",
                "an eigenvalue is not positive (ill-conditioned inductance matrix)",
            ));
        }
        let qc = DVector::from_fn(nc, |r, _| sqrt_c[r] * eigen.eigenvectors[(r, idx)]);
        let qf = &x * &qc;
        let mut shape = vec![0.0; n];
        for (r, &j) in caps.iter().enumerate() {
            shape[j] = qc[r];
        }
        for (r, &j) in free.iter().enumerate() {
            shape[j] = -qf[r];
        }
        let big = shape
            .iter()
            .copied()
            .fold(0.0, |a: f64, b| if b.abs() > a.abs() { b } else { a });
        shape.iter_mut().for_each(|v| *v /= big);
        let frequency_hz = 1.0 / (2.0 * PI * mu.sqrt());
        if !(frequency_hz.is_finite() && shape.iter().all(|v| v.is_finite())) {
            return Err(numerical("the loops' normal modes", "non-finite result"));
        }
        modes.push(LoopMode {
            frequency_hz,
            current_shape: shape,
        });
    }
    Ok(modes)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::HashMap;

    /// One row of validation/circuits.csv (validation/circuits_refs.py).
    struct Row {
        quantity: String,
        params: HashMap<String, String>,
        reference: f64,
        tolerance: f64,
        kind: String,
        source: String,
    }

    impl Row {
        fn f(&self, key: &str) -> f64 {
            self.params[key].parse().unwrap()
        }
        fn u(&self, key: &str) -> usize {
            self.params[key].parse().unwrap()
        }
        fn s(&self, key: &str) -> &str {
            &self.params[key]
        }
        /// Asserts `value` against the row by its tolerance kind.
        fn check(&self, value: f64) {
            let ok = match self.kind.as_str() {
                "rel" => (value - self.reference).abs() <= self.tolerance * self.reference.abs(),
                "abs" => (value - self.reference).abs() <= self.tolerance,
                "bound_rel" => value.abs() <= self.reference * (1.0 + self.tolerance),
                k => panic!("unknown tolerance kind {k}"),
            };
            assert!(
                ok,
                "{} {:?}: got {value:e}, reference {:e} ({} {:e}; source: {})",
                self.quantity, self.params, self.reference, self.kind, self.tolerance, self.source
            );
        }
    }

    /// The rows of one case of validation/circuits.csv.
    fn rows(case: &str) -> Vec<Row> {
        let text = include_str!(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../validation/circuits.csv"
        ));
        let rows: Vec<Row> = text
            .lines()
            .skip(1)
            .filter(|l| l.starts_with(&format!("{case},")))
            .map(|l| {
                let f: Vec<&str> = l.splitn(7, ',').collect();
                Row {
                    quantity: f[1].to_string(),
                    params: f[2]
                        .split(';')
                        .map(|kv| {
                            let (k, v) = kv.split_once('=').unwrap();
                            (k.to_string(), v.to_string())
                        })
                        .collect(),
                    reference: f[3].parse().unwrap(),
                    tolerance: f[4].parse().unwrap(),
                    kind: f[5].to_string(),
                    source: f[6].to_string(),
                }
            })
            .collect();
        assert!(!rows.is_empty(), "no rows for {case}");
        rows
    }

    fn uniform_ladder(n: usize, l_total_h: f64, c_total_f: f64) -> LadderModes {
        let c = DMatrix::from_diagonal_element(n, n, c_total_f / n as f64);
        let l = DMatrix::from_diagonal_element(n, n, l_total_h / n as f64);
        ladder_modes(&c, &l, n.min(3)).unwrap()
    }

    fn pair(l1: f64, c1: Option<f64>, l2: f64, c2: Option<f64>, k: f64, r: [f64; 2]) -> Loops {
        let m = k * (l1 * l2).sqrt();
        Loops {
            inductance_h: DMatrix::from_row_slice(2, 2, &[l1, m, m, l2]),
            capacitance_f: vec![c1, c2],
            resistance_ohm: r.to_vec(),
        }
    }

    fn pair_from(row: &Row) -> Loops {
        pair(
            row.f("l1_h"),
            Some(row.f("c1_f")),
            row.f("l2_h"),
            Some(row.f("c2_f")),
            row.f("k"),
            [0.0, 0.0],
        )
    }

    /// The primary (loop 0) charged to V_p, everything else at rest.
    fn charged(loops: &Loops, v_p: f64) -> LoopState {
        let n = loops.loop_count();
        let mut charge_c = vec![0.0; n];
        charge_c[0] = loops.capacitance_f[0].unwrap() * v_p;
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

    #[test]
    fn thomson_single_section() {
        // Thomson's formula (circuits.csv, case thomson); measured 1.3e-16 relative.
        for row in rows("thomson") {
            let c = DMatrix::from_element(1, 1, row.f("c_f"));
            let l = DMatrix::from_element(1, 1, row.f("l_h"));
            let modes = ladder_modes(&c, &l, 1).unwrap();
            row.check(modes.modes[0].frequency_hz);
            assert_eq!(modes.modes[0].node_voltage, vec![0.0, 1.0]);
        }
    }

    #[test]
    fn uniform_ladder_against_closed_form() {
        // Closed form w_k = (2/sqrt(LC)) sin((2k-1) pi/(2(2n+1))) and its mode shapes
        // (circuits.csv, case uniform_ladder; derivation in circuits_refs.py). Measured:
        // frequencies within 2.9e-15 relative up to n = 256, shapes and top figures within
        // 3.3e-15 (rows at 1e-13).
        for row in rows("uniform_ladder") {
            let modes = uniform_ladder(row.u("n"), row.f("l_total_h"), row.f("c_total_f"));
            let mode = &modes.modes[row.u("mode") - 1];
            let value = match row.quantity.as_str() {
                "frequency_hz" => mode.frequency_hz,
                "node_voltage" => mode.node_voltage[row.u("node")],
                "branch_current" => mode.branch_current[row.u("section") - 1],
                "top_capacitance_f" => mode.top_capacitance_f,
                "top_inductance_h" => mode.top_inductance_h,
                "top_to_base_ohm" => mode.top_to_base_ohm,
                q => panic!("unknown quantity {q}"),
            };
            row.check(value);
        }
    }

    #[test]
    fn quarter_wave_limit_and_equivalent_capacitance() {
        // w_1 -> pi/(2 sqrt(L_tot C_tot)), C_eq -> (4/pi^2) C_tot (circuits.csv, quarter_wave).
        // Measured: the ladder's own bias, 9.8e-3 (n = 50) and 1.95e-3 (n = 256) for f1,
        // 2.0e-2 and 3.9e-3 for C_eq, as 1/(2n+1) and 2/(2n+1) predict.
        for row in rows("quarter_wave") {
            let modes = uniform_ladder(row.u("n"), row.f("l_total_h"), row.f("c_total_f"));
            let f1 = modes.modes[0].frequency_hz;
            match row.quantity.as_str() {
                "frequency_hz" => row.check(f1),
                "equivalent_capacitance_f" => {
                    assert!((modes.series_inductance_h / row.f("l_total_h") - 1.0).abs() < 1e-13);
                    row.check(equivalent_capacitance_f(f1, modes.series_inductance_h).unwrap())
                }
                q => panic!("unknown quantity {q}"),
            }
        }
    }

    #[test]
    fn full_ladder_against_mpmath_eigsy() {
        // mpmath eigsy on C^-1/2 D^T L^-1 D C^-1/2 (circuits.csv, case full_ladder). Measured:
        // frequencies within 3.2e-15 relative, shapes within 3e-15, top figures 2.2e-15.
        for row in rows("full_ladder") {
            let (c, l) = validation_full_ladder(row.u("n"), row.f("l0_h"), row.f("c0_f"));
            let modes = ladder_modes(&c, &l, row.u("n")).unwrap();
            let mode = &modes.modes[row.u("mode") - 1];
            let value = match row.quantity.as_str() {
                "frequency_hz" => mode.frequency_hz,
                "node_voltage" => mode.node_voltage[row.u("node")],
                "branch_current" => mode.branch_current[row.u("section") - 1],
                "top_capacitance_f" => mode.top_capacitance_f,
                "top_inductance_h" => mode.top_inductance_h,
                "top_to_base_ohm" => mode.top_to_base_ohm,
                q => panic!("unknown quantity {q}"),
            };
            row.check(value);
        }
    }

    #[test]
    fn full_ladder_modes_satisfy_both_circuit_equations() {
        // The modes come from the flexibility form F C v = omega^-2 v and the currents from
        // charge conservation; here they are put back into the equations as written, by
        // another route (an LU solve with L): omega^2 C v = D^T L^-1 D v, and
        // i = L^-1 D v / omega (the inductance equation) in the ratios of `branch_current`.
        // Asserted at 1e-12 relative.
        let n = 4;
        let (c, l) = validation_full_ladder(n, 1e-3, 1e-12);
        let d = DMatrix::from_fn(n, n, |r, k| {
            if r == k {
                -1.0
            } else if k + 1 == r {
                1.0
            } else {
                0.0
            }
        });
        let stiffness = d.transpose() * l.clone().lu().solve(&d).unwrap();
        let modes = ladder_modes(&c, &l, n).unwrap();
        for w in modes.modes.windows(2) {
            assert!(w[0].frequency_hz < w[1].frequency_hz);
        }
        for mode in &modes.modes {
            let omega = 2.0 * PI * mode.frequency_hz;
            let v = DVector::from_iterator(n, mode.node_voltage[1..].iter().copied());
            assert_eq!(mode.node_voltage[0], 0.0);
            let lhs = &c * &v * omega * omega;
            let rhs = &stiffness * &v;
            assert!((&lhs - &rhs).amax() < 1e-12 * rhs.amax());
            let i = l.clone().lu().solve(&(&d * &v)).unwrap() / omega;
            for k in 0..n {
                let ratio = i[k] / i[0];
                assert!((ratio - mode.branch_current[k]).abs() < 1e-12 * ratio.abs().max(1.0));
            }
            assert!((mode.top_to_base_ohm - 1.0 / i[0].abs()).abs() < 1e-12 * mode.top_to_base_ohm);
        }
    }

    #[test]
    fn resonator_with_a_shorted_turn_in_time() {
        // A lossless loop without capacitor keeps its flux: the resonator rings at
        // 1/(2 pi sqrt(L1 (1 - k^2) C1)) (circuits.csv, case shorted_turn), measured from the
        // voltage envelope's peak spacing and asserted at 1e-6 (the envelope's parabola; the
        // row's 1e-14 is for `loop_modes`).
        for row in rows("shorted_turn") {
            let loops = pair(
                row.f("l1_h"),
                Some(row.f("c1_f")),
                row.f("l2_h"),
                None,
                row.f("k"),
                [0.0, 0.0],
            );
            let initial = charged(&loops, 100.0);
            let sim = simulate(&loops, &initial, &SimulationSettings::new(2e-4)).unwrap();
            let env = sim.voltage_envelope(0).unwrap();
            let idx: Vec<f64> = (0..env.times_s.len()).map(|i| i as f64).collect();
            let f = 1.0 / (2.0 * slope(&idx, &env.times_s));
            assert!(
                (f / row.reference - 1.0).abs() < 1e-6,
                "{f} vs {}",
                row.reference
            );
            // The turn's flux L2 i2 + M i1 stays 0 at every sample.
            let m = row.f("k") * (row.f("l1_h") * row.f("l2_h")).sqrt();
            let (i1, i2) = (sim.current_a(0).unwrap(), sim.current_a(1).unwrap());
            let scale = i1.iter().fold(0.0, |a: f64, x| a.max(x.abs())) * m;
            for (a, b) in i1.iter().zip(&i2) {
                assert!((row.f("l2_h") * b + m * a).abs() < 1e-12 * scale);
            }
        }
    }

    #[test]
    fn a_lone_loop_quenched_at_the_start_stays_put() {
        // Nothing is left to move: currents 0, the charge held.
        let loops = Loops {
            inductance_h: DMatrix::from_element(1, 1, 1e-3),
            capacitance_f: vec![Some(1e-9)],
            resistance_ohm: vec![1.0],
        };
        let initial = LoopState {
            charge_c: vec![1e-7],
            current_a: vec![0.5],
        };
        let settings = SimulationSettings {
            quench: Some(Quench {
                loop_index: 0,
                time_s: 0.0,
            }),
            ..SimulationSettings::new(1e-4)
        };
        let sim = simulate(&loops, &initial, &settings).unwrap();
        assert!(sim.current_a(0).unwrap().iter().all(|&i| i == 0.0));
        assert!(sim.charge_c(0).unwrap().iter().all(|&q| q == 1e-7));
        assert_eq!(sim.state_at(5e-5).unwrap().charge_c, vec![1e-7]);
        assert!(sim.first_notch(0).unwrap().is_none());
    }

    #[test]
    fn two_hundred_sections() {
        // A 200-section uniform ladder (timing noted in the bench): mode 1 against the closed
        // form (circuits_refs.py derivation), 1e-12 relative.
        let n = 200;
        let modes = uniform_ladder(n, 0.05, 1e-11);
        let (l, c) = (0.05 / n as f64, 1e-11 / n as f64);
        let w1 = 2.0 / (l * c).sqrt() * (PI / (2.0 * (2 * n + 1) as f64)).sin();
        assert!((modes.modes[0].frequency_hz / (w1 / (2.0 * PI)) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn coupled_pair_and_shorted_turn_modes() {
        // f0/sqrt(1 +- k) (Terman 1943, from memory) and the 2x2 closed form (circuits.csv,
        // coupled_pair); L1 (1 - k^2) for a shorted turn (shorted_turn). Measured within 2.2e-16.
        for row in rows("coupled_pair") {
            let modes = loop_modes(&pair_from(&row)).unwrap();
            assert_eq!(modes.len(), 2);
            row.check(modes[row.u("mode") - 1].frequency_hz);
        }
        for row in rows("shorted_turn") {
            let loops = pair(
                row.f("l1_h"),
                Some(row.f("c1_f")),
                row.f("l2_h"),
                None,
                row.f("k"),
                [0.0, 0.0],
            );
            let modes = loop_modes(&loops).unwrap();
            assert_eq!(modes.len(), 1);
            row.check(modes[0].frequency_hz);
            // The shorted turn's current opposes the flux: i2 = -M i1 / L2.
            let shape = &modes[0].current_shape;
            let m = row.f("k") * (row.f("l1_h") * row.f("l2_h")).sqrt();
            let expect = -m / row.f("l2_h") * shape[0];
            assert!((shape[1] - expect).abs() < 1e-12 * expect.abs().max(1.0));
        }
    }

    #[test]
    fn lossless_transfer_notch_and_energy_bound() {
        // Complete transfer at a t = m pi for k = (2m+1)/(2m^2+2m+1), the energy bound
        // V_s <= V_p sqrt(C1/C2), and energy conservation (circuits.csv, coupled_transient).
        // Measured: notch time within 1.4e-15 relative, half-cycles exact, primary energy at
        // the notch 3e-29 of the total, secondary peak within 2.7e-15 of the bound, energy
        // drift at most 3.1e-14 over a run.
        for row in rows("coupled_transient") {
            let loops = pair_from(&row);
            let initial = charged(&loops, row.f("v_p"));
            let sim = simulate(
                &loops,
                &initial,
                &SimulationSettings::new(row.f("duration_s")),
            )
            .unwrap();
            let w0 = loops.energy_j(&initial).unwrap();
            match row.quantity.as_str() {
                "energy_drift_relative" => {
                    let drift = sim
                        .energy_j()
                        .iter()
                        .map(|w| (w / w0 - 1.0).abs())
                        .fold(0.0, f64::max);
                    row.check(drift);
                }
                "secondary_peak_v" => {
                    let peak = sim.peak_capacitor_voltage(1).unwrap();
                    row.check(peak.value);
                    // No sample exceeds the bound either.
                    let max = sim
                        .capacitor_voltage_v(1)
                        .unwrap()
                        .iter()
                        .fold(0.0, |a: f64, v| a.max(v.abs()));
                    assert!(max <= peak.value * (1.0 + 1e-15));
                }
                "notch_time_s" | "notch_half_cycles" | "primary_energy_at_notch_fraction" => {
                    let notch = sim.first_notch(0).unwrap().expect("a notch within the run");
                    let value = match row.quantity.as_str() {
                        "notch_time_s" => notch.time_s,
                        "notch_half_cycles" => notch.half_cycles as f64,
                        _ => {
                            // The primary's own energy, from the exact state there.
                            let s = sim.state_at(notch.time_s).unwrap();
                            let own = 0.5 * row.f("l1_h") * s.current_a[0].powi(2)
                                + 0.5 * s.charge_c[0].powi(2) / row.f("c1_f");
                            own / w0
                        }
                    };
                    row.check(value);
                }
                q => panic!("unknown quantity {q}"),
            }
        }
    }

    #[test]
    fn quench_at_the_notch_leaves_the_secondary_ringing_alone() {
        // After the primary opens at the first notch, the secondary rings at its own Thomson
        // frequency with the whole energy (circuits.csv, case quench). Measured: frequency
        // 4.1e-8, envelope amplitude 2.2e-6 (the parabola's worst case at this sampling is
        // 2.3e-6), energy retained to 5.2e-14.
        for row in rows("quench") {
            let loops = pair_from(&row);
            let initial = charged(&loops, row.f("v_p"));
            let duration = row.f("duration_s");
            let first = simulate(&loops, &initial, &SimulationSettings::new(duration)).unwrap();
            let notch = first.first_notch(0).unwrap().unwrap();
            let settings = SimulationSettings {
                quench: Some(Quench {
                    loop_index: 0,
                    time_s: notch.time_s,
                }),
                ..SimulationSettings::new(duration)
            };
            let sim = simulate(&loops, &initial, &settings).unwrap();
            // The primary carries no current after the quench and keeps its (tiny) charge.
            let k_after = (notch.time_s / sim.time_step_s()).ceil() as usize + 1;
            assert!(
                sim.current_a(0).unwrap()[k_after..]
                    .iter()
                    .all(|&i| i == 0.0)
            );
            let Envelope {
                times_s: t,
                peaks: v,
            } = sim
                .voltage_envelope(1)
                .unwrap()
                .after(notch.time_s + 2.0 * sim.time_step_s());
            assert!(t.len() > 20);
            match row.quantity.as_str() {
                "secondary_frequency_hz" => {
                    let idx: Vec<f64> = (0..t.len()).map(|i| i as f64).collect();
                    row.check(1.0 / (2.0 * slope(&idx, &t)));
                }
                "secondary_amplitude_v" => {
                    for p in &v {
                        row.check(*p);
                    }
                }
                "energy_retained_fraction" => {
                    let w = sim.energy_j();
                    let w0 = loops.energy_j(&initial).unwrap();
                    row.check(w[w.len() - 1] / w0);
                }
                q => panic!("unknown quantity {q}"),
            }
        }
    }

    #[test]
    fn lossy_rlc_decay_frequency_and_exact_state() {
        // exp(-w0 t/(2Q)), Q = w0 L/R; wd = sqrt(w0^2 - al^2); q(t), i(t) in closed form
        // (circuits.csv, case rlc_decay). Measured: decay rate 2.1e-7 and damped frequency
        // 9.7e-8 relative (fits through the envelope peaks), exact state within 1e-13 of the
        // amplitude at that time.
        for row in rows("rlc_decay") {
            let loops = Loops {
                inductance_h: DMatrix::from_element(1, 1, row.f("l_h")),
                capacitance_f: vec![Some(row.f("c_f"))],
                resistance_ohm: vec![row.f("r_ohm")],
            };
            let initial = charged(&loops, row.f("v_p"));
            let sim = simulate(
                &loops,
                &initial,
                &SimulationSettings::new(row.f("duration_s")),
            )
            .unwrap();
            let env = sim.current_envelope(0).unwrap();
            match row.quantity.as_str() {
                "decay_rate_per_s" => {
                    let logs: Vec<f64> = env.peaks.iter().map(|p| p.ln()).collect();
                    row.check(-slope(&env.times_s, &logs));
                }
                "damped_frequency_hz" => {
                    let idx: Vec<f64> = (0..env.times_s.len()).map(|i| i as f64).collect();
                    row.check(1.0 / (2.0 * slope(&idx, &env.times_s)));
                }
                "charge_c" => row.check(sim.state_at(row.f("time_s")).unwrap().charge_c[0]),
                "current_a" => row.check(sim.state_at(row.f("time_s")).unwrap().current_a[0]),
                q => panic!("unknown quantity {q}"),
            }
        }
    }

    #[test]
    fn samples_match_the_exact_state() {
        // Samples and state_at agree (the same exact solution from two starting points: the
        // sample before, or the run's start advanced in one step).
        let loops = pair(20e-6, Some(30e-9), 0.04, Some(15e-12), 0.3, [0.2, 40.0]);
        let initial = charged(&loops, 1000.0);
        let sim = simulate(&loops, &initial, &SimulationSettings::new(2e-5)).unwrap();
        let k = sim.sample_count() / 2;
        let t = k as f64 * sim.time_step_s();
        let model = &sim.segments[0].model;
        let y = model
            .advance(
                &model.energy_coordinates(&initial.charge_c, &initial.current_a),
                t,
            )
            .unwrap();
        let (mut q, mut i) = (vec![0.0; 2], vec![0.0; 2]);
        model.write_loop_values(&y, &mut q, &mut i);
        let qs = sim.charge_c(0).unwrap()[k];
        let is = sim.current_a(1).unwrap()[k];
        assert!((q[0] - qs).abs() < 1e-10 * 30e-9 * 1000.0);
        assert!((i[1] - is).abs() < 1e-10 * i[1].abs().max(1e-3));
    }

    #[test]
    fn losses_lower_the_secondary_peak() {
        // Energy conservation bounds the lossy peak too (V_s <= V_p sqrt(C1/C2)); losses lower
        // it below the lossless peak.
        let lossless = pair(20e-6, Some(30e-9), 0.04, Some(15e-12), 0.6, [0.0, 0.0]);
        let lossy = pair(20e-6, Some(30e-9), 0.04, Some(15e-12), 0.6, [0.5, 200.0]);
        let settings = SimulationSettings::new(2e-5);
        let a = simulate(&lossless, &charged(&lossless, 2e4), &settings).unwrap();
        let b = simulate(&lossy, &charged(&lossy, 2e4), &settings).unwrap();
        let bound = 2e4 * (30e-9f64 / 15e-12).sqrt();
        let pa = a.peak_capacitor_voltage(1).unwrap().value;
        let pb = b.peak_capacitor_voltage(1).unwrap().value;
        assert!(pb < pa && pa <= bound * (1.0 + 1e-12));
        // The lossy energy never rises.
        let w = b.energy_j();
        assert!(w.windows(2).all(|p| p[1] <= p[0] * (1.0 + 1e-12)));
    }

    #[test]
    fn phasors_against_closed_forms() {
        // Series RLC at resonance draws V/R (case series_rlc_phasor); two coupled loops against
        // the 2x2 closed form (case coupled_phasor). Measured within 6e-16 of each magnitude.
        for row in rows("series_rlc_phasor") {
            let loops = Loops {
                inductance_h: DMatrix::from_element(1, 1, row.f("l_h")),
                capacitance_f: vec![Some(row.f("c_f"))],
                resistance_ohm: vec![row.f("r_ohm")],
            };
            let s = steady_state(
                &loops,
                0,
                Drive::VoltageV(row.f("v_peak_v")),
                row.f("omega_rad_s"),
            )
            .unwrap();
            let vc = s.capacitor_voltage_v[0].unwrap();
            let value = match row.quantity.as_str() {
                "current_re" => s.current_a[0].re,
                "current_im" => s.current_a[0].im,
                "capacitor_voltage_re" => vc.re,
                "capacitor_voltage_im" => vc.im,
                "input_power_w" => s.input_power_w,
                q => panic!("unknown quantity {q}"),
            };
            row.check(value);
        }
        for row in rows("coupled_phasor") {
            let loops = Loops {
                resistance_ohm: vec![row.f("r1_ohm"), row.f("r2_ohm")],
                ..pair_from(&row)
            };
            let drive = match row.s("drive") {
                "voltage" => Drive::VoltageV(row.f("amplitude")),
                _ => Drive::CurrentA(row.f("amplitude")),
            };
            let s = steady_state(&loops, 0, drive, row.f("omega_rad_s")).unwrap();
            let pick = |name: &str| -> Complex<f64> {
                match name {
                    "i1" => s.current_a[0],
                    "i2" => s.current_a[1],
                    "vc1" => s.capacitor_voltage_v[0].unwrap(),
                    "vc2" => s.capacitor_voltage_v[1].unwrap(),
                    "source_voltage" => s.source_voltage_v,
                    n => panic!("unknown quantity {n}"),
                }
            };
            let value = if row.quantity == "input_power_w" {
                s.input_power_w
            } else {
                let (name, part) = row.quantity.rsplit_once('_').unwrap();
                if part == "re" {
                    pick(name).re
                } else {
                    pick(name).im
                }
            };
            row.check(value);
        }
    }

    #[test]
    fn bad_input_is_refused_without_panic() {
        let good_c = DMatrix::from_diagonal_element(2, 2, 1e-12);
        let good_l = DMatrix::from_diagonal_element(2, 2, 1e-3);
        let err = |r: Result<LadderModes, SolverError>| r.unwrap_err();
        // Sizes, non-finite entries, asymmetry, not positive definite, n_modes.
        assert!(matches!(
            err(ladder_modes(
                &good_c,
                &DMatrix::from_diagonal_element(3, 3, 1e-3),
                1
            )),
            SolverError::CircuitSizeMismatch {
                expected: 2,
                found: 3,
                ..
            }
        ));
        let mut nan = good_c.clone();
        nan[(0, 1)] = f64::NAN;
        assert!(matches!(
            err(ladder_modes(&nan, &good_l, 1)),
            SolverError::InvalidCircuitValue { .. }
        ));
        let mut asym = good_l.clone();
        asym[(0, 1)] = 1e-4;
        assert!(matches!(
            err(ladder_modes(&good_c, &asym, 1)),
            SolverError::NotSymmetric { row: 0, col: 1, .. }
        ));
        let indefinite = DMatrix::from_row_slice(2, 2, &[1e-12, 2e-12, 2e-12, 1e-12]);
        assert!(matches!(
            err(ladder_modes(&indefinite, &good_l, 1)),
            SolverError::NotPositiveDefinite { .. }
        ));
        assert!(matches!(
            err(ladder_modes(&good_c, &(-&good_l), 1)),
            SolverError::NotPositiveDefinite { .. }
        ));
        assert!(ladder_modes(&good_c, &good_l, 0).is_err());
        assert!(ladder_modes(&good_c, &good_l, 3).is_err());
        assert!(ladder_modes(&DMatrix::zeros(0, 0), &DMatrix::zeros(0, 0), 1).is_err());
        assert!(equivalent_capacitance_f(0.0, 1.0).is_err());
        assert!(equivalent_capacitance_f(1e5, f64::INFINITY).is_err());
        assert!(equivalent_capacitance_f(1e-300, 1e-300).is_err());

        // Loops.
        let good = pair(20e-6, Some(30e-9), 0.04, Some(15e-12), 0.3, [0.1, 10.0]);
        let at_rest = charged(&good, 100.0);
        let bad_loops = [
            Loops {
                capacitance_f: vec![Some(-1e-9), None],
                ..good.clone()
            },
            Loops {
                capacitance_f: vec![Some(f64::NAN), None],
                ..good.clone()
            },
            Loops {
                resistance_ohm: vec![-1.0, 0.0],
                ..good.clone()
            },
            Loops {
                resistance_ohm: vec![0.0],
                ..good.clone()
            },
            Loops {
                inductance_h: DMatrix::from_row_slice(2, 2, &[1e-6, 2e-6, 2e-6, 1e-6]),
                ..good.clone()
            },
            Loops {
                inductance_h: DMatrix::zeros(0, 0),
                capacitance_f: vec![],
                resistance_ohm: vec![],
            },
        ];
        let settings = SimulationSettings::new(1e-5);
        for bad in &bad_loops {
            assert!(bad.validate().is_err());
            assert!(loop_modes(bad).is_err());
            assert!(steady_state(bad, 0, Drive::VoltageV(1.0), 1e6).is_err());
            let state = LoopState {
                charge_c: vec![0.0; bad.loop_count()],
                current_a: vec![0.0; bad.loop_count()],
            };
            assert!(simulate(bad, &state, &settings).is_err());
        }
        // States, settings, indices, times.
        let short = LoopState {
            charge_c: vec![0.0],
            current_a: vec![0.0, 0.0],
        };
        assert!(matches!(
            simulate(&good, &short, &settings).unwrap_err(),
            SolverError::CircuitSizeMismatch { .. }
        ));
        let inf = LoopState {
            current_a: vec![f64::INFINITY, 0.0],
            ..at_rest.clone()
        };
        assert!(simulate(&good, &inf, &settings).is_err());
        let no_cap = pair(20e-6, Some(30e-9), 1e-6, None, 0.3, [0.1, 0.0]);
        let charged_without_capacitor = LoopState {
            charge_c: vec![0.0, 1e-6],
            current_a: vec![0.0, 0.0],
        };
        assert!(simulate(&no_cap, &charged_without_capacitor, &settings).is_err());
        for s in [
            SimulationSettings::new(0.0),
            SimulationSettings::new(f64::NAN),
            SimulationSettings {
                samples_per_period: 10,
                ..settings
            },
            SimulationSettings {
                quench: Some(Quench {
                    loop_index: 2,
                    time_s: 0.0,
                }),
                ..settings
            },
            SimulationSettings {
                quench: Some(Quench {
                    loop_index: 0,
                    time_s: 2e-5,
                }),
                ..settings
            },
        ] {
            assert!(simulate(&good, &at_rest, &s).is_err());
        }
        assert!(matches!(
            simulate(&good, &at_rest, &SimulationSettings::new(10.0)).unwrap_err(),
            SolverError::TooManySamples { .. }
        ));
        let sim = simulate(&good, &at_rest, &settings).unwrap();
        assert!(matches!(
            sim.state_at(-1e-9).unwrap_err(),
            SolverError::TimeOutsideRun { .. }
        ));
        assert!(sim.state_at(f64::NAN).is_err());
        assert!(matches!(
            sim.current_a(2).unwrap_err(),
            SolverError::NoSuchLoop { index: 2, loops: 2 }
        ));
        let sim2 = simulate(&no_cap, &charged(&no_cap, 10.0), &settings).unwrap();
        assert!(matches!(
            sim2.first_notch(1).unwrap_err(),
            SolverError::LoopWithoutCapacitor { index: 1, .. }
        ));
        assert!(sim2.peak_capacitor_voltage(1).is_err());
        assert!(sim2.voltage_envelope(1).is_err());
        // Phasors: bad frequency, drive, index; a lossless loop driven at resonance.
        assert!(steady_state(&good, 0, Drive::VoltageV(1.0), 0.0).is_err());
        assert!(steady_state(&good, 0, Drive::VoltageV(f64::NAN), 1e6).is_err());
        assert!(steady_state(&good, 0, Drive::CurrentA(-1.0), 1e6).is_err());
        assert!(steady_state(&good, 5, Drive::CurrentA(1.0), 1e6).is_err());
        let lc = Loops {
            inductance_h: DMatrix::from_element(1, 1, 1.0),
            capacitance_f: vec![Some(1.0)],
            resistance_ohm: vec![0.0],
        };
        assert!(matches!(
            steady_state(&lc, 0, Drive::VoltageV(1.0), 1.0).unwrap_err(),
            SolverError::SingularCircuit { .. }
        ));
    }

    #[test]
    fn extreme_but_finite_values_are_refused_or_answered_without_panic() {
        // Entries whose products overflow or underflow: every call returns (an error or a
        // finite answer), none panics or loops.
        for scale in [1e300, 1e-300, 1e154, 1e-160] {
            let c = DMatrix::from_row_slice(2, 2, &[2.0 * scale, -scale, -scale, 2.0 * scale]);
            let l = DMatrix::from_diagonal_element(2, 2, 1.0 / scale);
            if let Ok(m) = ladder_modes(&c, &l, 2) {
                assert!(m.modes.iter().all(|x| x.frequency_hz.is_finite()));
            }
            let loops = Loops {
                inductance_h: DMatrix::from_row_slice(
                    2,
                    2,
                    &[scale, 0.5 * scale, 0.5 * scale, scale],
                ),
                capacitance_f: vec![Some(scale), Some(1.0 / scale)],
                resistance_ohm: vec![scale, 0.0],
            };
            if let Ok(modes) = loop_modes(&loops) {
                assert!(modes.iter().all(|x| x.frequency_hz.is_finite()));
            }
            if let Ok(s) = steady_state(&loops, 1, Drive::VoltageV(scale), scale) {
                assert!(s.input_power_w.is_finite());
            }
            let state = LoopState {
                charge_c: vec![scale, 0.0],
                current_a: vec![0.0, scale],
            };
            let _ = simulate(&loops, &state, &SimulationSettings::new(1e-6));
            let _ = simulate(&loops, &state, &SimulationSettings::new(scale));
        }
    }

    #[test]
    fn envelope_of_a_sampled_cosine() {
        // Peaks of |cos(w t)| are 1 at t = m pi / w (cos itself); the parabola's worst case at
        // 40 samples per period is 1.4e-5 in value and 1e-5 of a period in time (h^4/43 with h
        // the phase step; found by scanning the sampling phase).
        let w = 2.0 * PI * 1e3;
        let dt = 1.0 / (1e3 * 40.0) * 0.987;
        let x: Vec<f64> = (0..400).map(|k| (w * k as f64 * dt).cos()).collect();
        let env = envelope(&x, dt);
        assert!(env.peaks.len() >= 18);
        for (m, (t, p)) in env.times_s.iter().zip(&env.peaks).enumerate() {
            assert!((p - 1.0).abs() < 1.5e-5, "peak {p}");
            assert!((t - m as f64 * PI / w).abs() < 1e-5 * 40.0 * dt, "time {t}");
        }
    }
}
