//! Assembly of the inductance matrix of a design: one kernel chosen per pair of windings, and
//! the image windings of a conducting ground plane. [`inductance_entry`] is the one path to an
//! entry of the matrix: the `inductance` and `report` commands ([`inductance_report`]) and the
//! sweep metrics all call it.

use crate::coupling::coupling_matrix;
use crate::error::SolverError;
use crate::euler_maclaurin::mutual_ring_stack_coaxial;
use crate::mutual::{
    Circle, mutual_ring_ring_coaxial, mutual_ring_rings_coaxial, mutual_rings_ring,
};
use crate::par::{Par, map_indexed, sum_indexed};
use crate::segment::{mutual_rings_segment, mutual_segment_segment};
use crate::self_inductance::{rosa_solenoid, self_filament_model, self_ring_model, wheeler_spiral};
use coilfield_geometry::discretise::{filament_model, ring_model};
use coilfield_geometry::{
    Design, FilamentModel, Ground, Model, RingModel, Shape, Winding, image_windings,
};
use serde::Serialize;

/// The discretised form that answers for a winding.
#[derive(Debug, Clone, PartialEq)]
pub enum WindingModel {
    /// Axisymmetric ring model.
    Rings(RingModel),
    /// 3-D chain of straight filaments.
    Filament(FilamentModel),
}

impl WindingModel {
    /// The model a winding asks for (`model = "ring"` by default; a polyline is always a chain
    /// of filaments, having no axis).
    pub fn of(winding: &Winding) -> WindingModel {
        match (winding.model, ring_model(winding)) {
            (Model::Ring, Some(rings)) => WindingModel::Rings(rings),
            _ => WindingModel::Filament(filament_model(winding)),
        }
    }

    /// Number of rings or straight pieces.
    pub fn n_elements(&self) -> usize {
        match self {
            WindingModel::Rings(r) => r.rings.len(),
            WindingModel::Filament(f) => f.n_segments(),
        }
    }
}

/// Which kernel served a pair of windings (or a winding's self-inductance).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Kernel {
    /// Self: Toeplitz ring sum of a uniform stack, O(turns) Maxwell calls.
    ToeplitzRingSum,
    /// Self: full ring sum with Maxwell's formula.
    RingSum,
    /// Self: Toeplitz sum over straight filaments with a screw symmetry.
    ToeplitzFilamentSum,
    /// Self: full sum over straight filaments (Neumann).
    FilamentSum,
    /// Mutual: coaxial rings, Maxwell's formula.
    MaxwellCoaxial,
    /// Mutual: rings with offset or tilted axes, single line integral of the vector potential.
    RingLineIntegral,
    /// Mutual: rings with offset or tilted axes against a long uniform ring stack: line integral
    /// of the stack's vector potential, summed over its turns by the Euler-Maclaurin formula.
    StackLineIntegral,
    /// Mutual: rings against straight filaments, line integral of the rings' vector potential.
    RingFilamentLineIntegral,
    /// Mutual: straight filaments against straight filaments, Neumann's integral.
    NeumannSegments,
}

/// One winding's line of an [`InductanceReport`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WindingInductance {
    /// Winding name.
    pub name: String,
    /// `ring` or `filament`: the model that answered.
    pub model: Model,
    /// Self-inductance (H).
    pub self_inductance_h: f64,
    /// An independent estimate (H), where one exists: Lorenz's sheet with Rosa's corrections
    /// for a helix of whole turns, Wheeler's formula for a spiral, the ring model for a winding
    /// answered by its filament model.
    pub cross_check_h: Option<f64>,
    /// How `cross_check_h` was obtained.
    pub cross_check_method: Option<String>,
    /// Number of rings or straight pieces in the model.
    pub elements: usize,
}

/// Kernel used for the pair (`pair[0]`, `pair[1]`) of windings, by name.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PairKernel {
    /// The two winding names (equal for a self term).
    pub pair: [String; 2],
    /// The kernel.
    pub kernel: Kernel,
}

/// Self and mutual inductances and couplings of all windings of a design, in file order.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct InductanceReport {
    /// One entry per winding.
    pub windings: Vec<WindingInductance>,
    /// Inductance matrix (H); the diagonal is the self-inductance, the sign of M_ij follows the
    /// current directions set by each winding's axis (or point order).
    pub mutual_h: Vec<Vec<f64>>,
    /// Coupling coefficients k_ij = M_ij / sqrt(L_i L_j); 1 on the diagonal.
    pub coupling: Vec<Vec<f64>>,
    /// Which kernel served each pair (upper triangle with diagonal, row by row).
    pub kernels: Vec<PairKernel>,
    /// Caveats of the answer.
    pub warnings: Vec<String>,
}

/// Pieces (straight filament pairs) above which a filament-filament sum is refused.
pub const MAX_SEGMENT_PAIRS: u128 = 4_000_000_000;

/// Self-inductance (H) of a winding model and the kernel used.
pub fn self_inductance(model: &WindingModel, par: Par) -> (f64, Kernel) {
    match model {
        WindingModel::Rings(r) => (
            self_ring_model(r, par),
            if r.uniform_pitch_m.is_some() {
                Kernel::ToeplitzRingSum
            } else {
                Kernel::RingSum
            },
        ),
        WindingModel::Filament(f) => (
            self_filament_model(f, par),
            if f.screw.is_some() {
                Kernel::ToeplitzFilamentSum
            } else {
                Kernel::FilamentSum
            },
        ),
    }
}

fn circles(model: &RingModel) -> Vec<(Circle, f64)> {
    model
        .rings
        .iter()
        .map(|r| {
            (
                Circle {
                    centre_m: r.centre_m,
                    axis: model.axis,
                    radius_m: r.radius_m,
                },
                r.weight,
            )
        })
        .collect()
}

/// Whether two ring models share one axis line (parallel or antiparallel), with the sign of
/// their axes' dot product.
fn coaxial_sign(a: &RingModel, b: &RingModel) -> Option<f64> {
    let na = a.axis.as_ref();
    let nb = b.axis.as_ref();
    let size = a.rings[0].radius_m.max(b.rings[0].radius_m);
    let offset = b.origin_m - a.origin_m;
    let lateral = (offset - na * offset.dot(na)).norm();
    // Geometric tolerance: well below any manufacturing tolerance, well above rounding.
    (na.cross(nb).norm() < 1e-12 && lateral < 1e-12 * size.max(offset.norm()))
        .then(|| na.dot(nb).signum())
}

/// Whole turns of a ring model that form a uniform stack (0 when it is not one).
///
/// A uniform stack's rings are whole turns but possibly the last
/// ([`RingModel::uniform_pitch_m`]), so only the last ring is read: sweeps ask this of a
/// thousand-turn secondary at every point.
fn stack_len(r: &RingModel) -> usize {
    match (r.uniform_pitch_m, r.rings.last()) {
        (Some(_), Some(last)) => {
            let n = r.rings.len() - usize::from(last.weight != 1.0);
            debug_assert_eq!(n, r.rings.iter().take_while(|x| x.weight == 1.0).count());
            n
        }
        _ => 0,
    }
}

/// Vector potential (T m, unit current) at `p` of the first `n_full` rings of the uniform stack
/// `stack` (pitch `pitch_m`), summed over the rings by the Euler-Maclaurin formula where safe
/// ([`mutual_ring_stack_coaxial`]): for a point at distance rho from the axis, the coaxial
/// mutual inductance of the stack with a ring of radius rho through the point is
/// M = 2 pi rho A_phi (Stokes), so A = M / (2 pi rho^2) (n x r_perp).
fn stack_potential(
    stack: &RingModel,
    n_full: usize,
    pitch_m: f64,
    p: &nalgebra::Point3<f64>,
) -> nalgebra::Vector3<f64> {
    let n = stack.axis.as_ref();
    let r = p - stack.origin_m;
    let z = r.dot(n);
    let perp = r - n * z;
    let rho2 = perp.norm_squared();
    if rho2 == 0.0 {
        return nalgebra::Vector3::zeros();
    }
    let (m, _) =
        mutual_ring_stack_coaxial(stack.rings[0].radius_m, rho2.sqrt(), -z, pitch_m, n_full);
    n.cross(&perp) * (m / (std::f64::consts::TAU * rho2))
}

/// Mutual inductance (H) of a long uniform ring stack with the rings of `other` in any
/// position: each ring of `other` is the path of a line integral of the stack's vector
/// potential ([`stack_potential`]; the stack's partial last turn as a ring), so the cost
/// follows the other model's rings and a few dozen kernel calls per node, not the stack's
/// turn count. None when `stack` is not a stack of at least
/// [`crate::euler_maclaurin::MIN_RINGS`] turns.
fn mutual_stack_rings(stack: &RingModel, other: &RingModel, par: Par) -> Option<(f64, bool)> {
    let n_full = stack_len(stack);
    let pitch_m = stack.uniform_pitch_m?;
    if n_full < crate::euler_maclaurin::MIN_RINGS {
        return None;
    }
    let tail: Vec<(Circle, f64)> = circles(stack)[n_full..].to_vec();
    let scale = (stack.rings[0].radius_m * other.rings[0].radius_m).sqrt() * n_full as f64;
    let parts = map_indexed(other.rings.len(), par, |j| {
        let ring = &other.rings[j];
        let path = Circle {
            centre_m: ring.centre_m,
            axis: other.axis,
            radius_m: ring.radius_m,
        };
        let potential = |p: &nalgebra::Point3<f64>| -> nalgebra::Vector3<f64> {
            let mut a = stack_potential(stack, n_full, pitch_m, p);
            for (c, w) in &tail {
                a += crate::mutual::vector_potential_ring_point(c, p) * *w;
            }
            a
        };
        let r = crate::mutual::line_integral_ring(&path, potential, scale);
        (ring.weight * r.value, r.converged)
    });
    Some((parts.iter().map(|p| p.0).sum(), parts.iter().all(|p| p.1)))
}

/// Coaxial mutual inductance (H, both currents taken right-handed about one common axis) when one of the two
/// ring models is a long uniform stack: each ring of the other model against the stack's whole
/// turns by [`mutual_ring_stack_coaxial`] (Euler-Maclaurin where safe, else the direct sum),
/// plus the stack's partial last turn directly. None when neither model is such a stack.
fn mutual_coaxial_stack(ra: &RingModel, rb: &RingModel, par: Par) -> Option<f64> {
    // The longer stack is summed by the formula; the other model's rings are the targets.
    let (stack, other) = if stack_len(rb) >= stack_len(ra) {
        (rb, ra)
    } else {
        (ra, rb)
    };
    let pitch_m = stack.uniform_pitch_m?;
    let n_full = stack_len(stack);
    if n_full < crate::euler_maclaurin::MIN_RINGS {
        return None;
    }
    let stack_axis = stack.axis.as_ref();
    let radius_m = stack.rings[0].radius_m;
    let tail = &stack.rings[n_full..];
    Some(sum_indexed(other.rings.len(), par, |i| {
        let ring = &other.rings[i];
        // Axial position of the stack's base seen from this ring, along the stack's axis; M
        // is even in z, so the direction of the other axis does not enter.
        let z0_m = (stack.origin_m - ring.centre_m).dot(stack_axis);
        let (body, _) = mutual_ring_stack_coaxial(radius_m, ring.radius_m, z0_m, pitch_m, n_full);
        let rest: f64 = tail
            .iter()
            .map(|t| {
                t.weight
                    * mutual_ring_ring_coaxial(
                        t.radius_m,
                        ring.radius_m,
                        (t.centre_m - ring.centre_m).dot(stack_axis),
                    )
            })
            .sum();
        ring.weight * (body + rest)
    }))
}

/// Mutual inductance (H) of two winding models (unit currents) and the kernel used.
pub fn mutual_inductance(
    a: &WindingModel,
    b: &WindingModel,
    par: Par,
) -> Result<(f64, Kernel, bool), SolverError> {
    Ok(match (a, b) {
        (WindingModel::Rings(ra), WindingModel::Rings(rb)) => {
            if let Some(sign) = coaxial_sign(ra, rb) {
                if let Some(m) = mutual_coaxial_stack(ra, rb, par) {
                    return Ok((sign * m, Kernel::MaxwellCoaxial, true));
                }
                let axis = ra.axis.as_ref();
                let m = sum_indexed(ra.rings.len(), par, |i| {
                    let ri = &ra.rings[i];
                    ri.weight * mutual_ring_rings_coaxial(ri, &rb.rings, axis)
                });
                (sign * m, Kernel::MaxwellCoaxial, true)
            } else {
                // A long uniform stack: its potential summed by Euler-Maclaurin along the
                // other model's rings.
                let (stack, other) = if stack_len(rb) >= stack_len(ra) {
                    (rb, ra)
                } else {
                    (ra, rb)
                };
                if let Some((m, ok)) = mutual_stack_rings(stack, other, par) {
                    return Ok((m, Kernel::StackLineIntegral, ok));
                }
                // The path with more rings spreads best over threads.
                let (src, path) = if ra.rings.len() <= rb.rings.len() {
                    (ra, rb)
                } else {
                    (rb, ra)
                };
                let sources = circles(src);
                let path_circles = circles(path);
                let parts = map_indexed(path_circles.len(), par, |j| {
                    let (c, w) = path_circles[j];
                    let r = mutual_rings_ring(&sources, &c);
                    (w * r.value, r.converged)
                });
                let m = parts.iter().map(|p| p.0).sum();
                let ok = parts.iter().all(|p| p.1);
                (m, Kernel::RingLineIntegral, ok)
            }
        }
        (WindingModel::Rings(r), WindingModel::Filament(f))
        | (WindingModel::Filament(f), WindingModel::Rings(r)) => {
            let sources = circles(r);
            let m = sum_indexed(f.n_segments(), par, |k| {
                let (p0, p1) = f.segment(k);
                mutual_rings_segment(&sources, &p0, &p1)
            });
            (f.weight * m, Kernel::RingFilamentLineIntegral, true)
        }
        (WindingModel::Filament(fa), WindingModel::Filament(fb)) => {
            let pairs = fa.n_segments() as u128 * fb.n_segments() as u128;
            if pairs > MAX_SEGMENT_PAIRS {
                return Err(SolverError::TooManyFilamentPairs {
                    pairs,
                    limit: MAX_SEGMENT_PAIRS,
                });
            }
            let m = sum_indexed(fa.n_segments(), par, |i| {
                let (a0, a1) = fa.segment(i);
                (0..fb.n_segments())
                    .map(|j| {
                        let (b0, b1) = fb.segment(j);
                        mutual_segment_segment(&a0, &a1, &b0, &b1)
                    })
                    .sum::<f64>()
            });
            (fa.weight * fb.weight * m, Kernel::NeumannSegments, true)
        }
    })
}

/// The image of a winding's model in a perfectly conducting ground plane (see
/// [`coilfield_geometry::image_windings`]): the geometric mirror, currents reversed in the
/// plane, so that the normal flux density vanishes on it.
pub fn image_model(winding: &Winding, ground: &Ground) -> WindingModel {
    let image = image_windings(std::slice::from_ref(winding), ground);
    WindingModel::of(&image[0])
}

/// Entry (i, j) of a design's inductance matrix (H) from the windings' models: the
/// self-inductance when `same` (a and b one winding), else the mutual inductance, plus, over a
/// conducting ground plane, the mutual inductance of `a` with the image of `b` (`image_b`):
/// L'_ij = L_ij + M(winding i, image of winding j), the flux through winding i per ampere in
/// winding j when the plane's induced currents flow too (method of images; symmetric, since
/// M(i, image j) = M(j, image i) by the mirror symmetry). Returns the value, the kernel of the
/// free-space part and whether every quadrature converged.
pub fn inductance_entry(
    a: &WindingModel,
    b: &WindingModel,
    same: bool,
    image_b: Option<&WindingModel>,
    par: Par,
) -> Result<(f64, Kernel, bool), SolverError> {
    let (free, kernel, converged) = if same {
        let (l, k) = self_inductance(a, par);
        (l, k, true)
    } else {
        mutual_inductance(a, b, par)?
    };
    match image_b {
        None => Ok((free, kernel, converged)),
        Some(img) => {
            let (m, _, ok) = mutual_inductance(a, img, par)?;
            Ok((free + m, kernel, converged && ok))
        }
    }
}

/// An independent estimate of a winding's self-inductance (H) and how it was obtained.
///
/// Of a tapped winding ([`Winding::is_tapped`]) the estimate is of the part in use: the ring
/// model for a filament model; Rosa's formula for the tapped part of a helix when it is a whole
/// number of turns (it is a helix of that many turns and the same pitch); Wheeler's formula for
/// the tapped part of a spiral (a spiral between the radii at the tap's two ends).
pub fn cross_check(winding: &Winding, model: &WindingModel, par: Par) -> Option<(f64, String)> {
    if let WindingModel::Filament(_) = model
        && let Some(rings) = ring_model(winding)
    {
        return Some((
            self_ring_model(&rings, par),
            "ring model (axisymmetric, turn-by-turn Maxwell sum)".to_string(),
        ));
    }
    if winding.is_tapped() {
        return cross_check_of_tapped_part(winding);
    }
    match winding.shape {
        Shape::Helix {
            radius_m,
            length_m,
            turns,
            ..
        } if turns.fract() == 0.0 && turns >= 2.0 => {
            let n = turns as usize;
            let pitch = length_m / turns;
            Some((
                rosa_solenoid(radius_m, n, pitch, winding.wire_diameter_m),
                "Lorenz current sheet (Nagaoka) with Rosa's round-wire corrections A and B"
                    .to_string(),
            ))
        }
        Shape::Spiral {
            inner_radius_m,
            outer_radius_m,
            turns,
            ..
        } => Some((
            wheeler_spiral(inner_radius_m, outer_radius_m, turns),
            "Wheeler 1928 flat-spiral formula (within 5 %)".to_string(),
        )),
        _ => None,
    }
}

/// [`cross_check`] of the part of a tapped helix or spiral that carries current.
fn cross_check_of_tapped_part(winding: &Winding) -> Option<(f64, String)> {
    let active = winding.active_turns()?;
    let (t0, t1) = winding.active_range();
    match winding.shape {
        Shape::Helix {
            radius_m,
            length_m,
            turns,
            ..
        } if active.fract() == 0.0 && active >= 2.0 => Some((
            rosa_solenoid(
                radius_m,
                active as usize,
                length_m / turns,
                winding.wire_diameter_m,
            ),
            "Lorenz current sheet (Nagaoka) with Rosa's round-wire corrections A and B, of the \
             tapped turns"
                .to_string(),
        )),
        Shape::Spiral { .. } => {
            let (r0, _) = winding.shape.radius_height_at(t0)?;
            let (r1, _) = winding.shape.radius_height_at(t1)?;
            Some((
                wheeler_spiral(r0, r1, active),
                "Wheeler 1928 flat-spiral formula (within 5 %), of the tapped turns".to_string(),
            ))
        }
        _ => None,
    }
}

/// Self and mutual inductances, couplings and kernels of every winding of a design.
pub fn inductance_report(design: &Design, par: Par) -> Result<InductanceReport, SolverError> {
    let windings = &design.windings;
    let n = windings.len();
    let models: Vec<WindingModel> = windings.iter().map(WindingModel::of).collect();
    let mut warnings = Vec::new();
    for w in windings {
        if let Shape::Polyline { closed: false, .. } = w.shape {
            warnings.push(format!(
                "winding '{}' is an open polyline: its inductances are partial inductances (the \
                 return path is not included)",
                w.name
            ));
        }
    }
    let ground = design.ground.filter(|g| g.conducting);
    let images: Option<Vec<WindingModel>> =
        ground.map(|g| windings.iter().map(|w| image_model(w, &g)).collect());
    if let Some(g) = ground {
        warnings.push(format!(
            "the ground plane z = {} m is conducting: every inductance includes the image \
             windings mirrored in it (a perfect conductor); cross-checks are for free space",
            g.z_m
        ));
    }
    let pairs: Vec<(usize, usize)> = (0..n).flat_map(|i| (i..n).map(move |j| (i, j))).collect();
    let results = map_indexed(pairs.len(), par, |p| {
        let (i, j) = pairs[p];
        let image_j = images.as_ref().map(|v| &v[j]);
        inductance_entry(&models[i], &models[j], i == j, image_j, par)
    });
    let mut matrix = vec![vec![0.0; n]; n];
    let mut kernels = Vec::with_capacity(pairs.len());
    for (&(i, j), r) in pairs.iter().zip(results) {
        let (value, kernel, converged) = r?;
        if !converged {
            warnings.push(format!(
                "mutual inductance of '{}' and '{}': the quadrature did not reach its tolerance \
                 (wires very close); the value may be inaccurate",
                windings[i].name, windings[j].name
            ));
        }
        matrix[i][j] = value;
        matrix[j][i] = value;
        kernels.push(PairKernel {
            pair: [windings[i].name.clone(), windings[j].name.clone()],
            kernel,
        });
    }
    let coupling = coupling_matrix(&matrix);
    // Inputs in range give finite entries; anything else is refused, never printed as a number.
    for (i, j) in pairs.iter().copied() {
        for (what, v) in [
            ("inductance", matrix[i][j]),
            ("coupling coefficient", coupling[i][j]),
        ] {
            if !v.is_finite() {
                return Err(SolverError::NotFinite {
                    what: format!(
                        "the {what} of '{}' and '{}'",
                        windings[i].name, windings[j].name
                    ),
                    value: v.to_string(),
                });
            }
        }
    }
    let lines = windings
        .iter()
        .zip(&models)
        .enumerate()
        .map(|(i, (w, m))| {
            let check = cross_check(w, m, par);
            WindingInductance {
                name: w.name.clone(),
                model: match m {
                    WindingModel::Rings(_) => Model::Ring,
                    WindingModel::Filament(_) => Model::Filament,
                },
                self_inductance_h: matrix[i][i],
                cross_check_h: check.as_ref().map(|c| c.0),
                cross_check_method: check.map(|c| c.1),
                elements: m.n_elements(),
            }
        })
        .collect();
    Ok(InductanceReport {
        windings: lines,
        mutual_h: matrix,
        coupling,
        kernels,
        warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use coilfield_geometry::{Role, discretise::ring_model};
    use nalgebra::{Point3, Unit, Vector3};

    fn helix(turns: f64, length_m: f64) -> Winding {
        Winding {
            name: "s".into(),
            role: Role::Secondary,
            model: Model::Ring,
            wire_diameter_m: 0.4e-3,
            segments_per_turn: None,
            tap: None,
            conductor: Default::default(),
            shape: Shape::Helix {
                origin_m: Point3::new(0.0, 0.0, 0.1),
                axis: Vector3::z_axis(),
                radius_m: 0.055,
                length_m,
                turns,
            },
        }
    }

    fn spiral(centre: [f64; 3], axis: [f64; 3], inner_m: f64) -> Winding {
        Winding {
            name: "p".into(),
            role: Role::Primary,
            model: Model::Ring,
            wire_diameter_m: 4e-3,
            segments_per_turn: None,
            tap: None,
            conductor: Default::default(),
            shape: Shape::Spiral {
                origin_m: Point3::from(centre),
                axis: Unit::new_normalize(Vector3::from(axis)),
                inner_radius_m: inner_m,
                outer_radius_m: 0.14,
                turns: 6.0,
            },
        }
    }

    #[test]
    fn stack_line_integral_matches_the_direct_ring_sum() {
        // The reference: the line integral of every secondary ring's own vector potential
        // (closed form in K and E, no summation formula) along the primary's rings, the path
        // the kernel took before the stack sum existed. Placements: offset and tilted below
        // the base, across the lower turns, far above; a stack with a partial last turn.
        let cases = [
            (
                helix(900.0, 0.45),
                [0.01, 0.0, 0.09],
                [0.17, 0.0, 0.98],
                0.08,
            ),
            (
                helix(900.0, 0.45),
                [0.01, 0.0, 0.15],
                [0.17, 0.0, 0.98],
                0.08,
            ),
            (helix(900.0, 0.45), [0.0, 0.02, 0.2], [0.0, 0.05, 1.0], 0.09),
            (helix(300.5, 0.2), [0.005, 0.0, 0.05], [0.3, 0.0, 1.0], 0.07),
            (helix(200.0, 0.1), [0.3, 0.0, 0.5], [1.0, 0.0, 0.0], 0.06),
        ];
        for (k, (sec, c, n, inner)) in cases.iter().enumerate() {
            let pri = spiral(*c, *n, *inner);
            let (rs, rp) = (ring_model(sec).unwrap(), ring_model(&pri).unwrap());
            let (m, ok) = mutual_stack_rings(&rs, &rp, Par::Seq).unwrap();
            assert!(ok);
            let sources = circles(&rs);
            let direct: f64 = circles(&rp)
                .iter()
                .map(|(path, w)| w * crate::mutual::mutual_rings_ring(&sources, path).value)
                .sum();
            let rel = ((m - direct) / direct).abs();
            assert!(rel < 1e-10, "case {k}: {m} vs {direct} ({rel:e})");
            // The design-level path picks the stack kernel.
            let (m2, kernel, _) = mutual_inductance(
                &WindingModel::Rings(rs.clone()),
                &WindingModel::Rings(rp.clone()),
                Par::Rayon,
            )
            .unwrap();
            assert_eq!(kernel, Kernel::StackLineIntegral);
            assert_eq!(
                m2.to_bits(),
                m.to_bits(),
                "case {k}: threads change the sum"
            );
        }
    }
}
