//! Checks that wires do not intersect, on the wires themselves (not bounding boxes).
//!
//! # Method
//! Each winding's exact curve ([`Shape::point_at`]) is sampled into a chain of straight pieces
//! fine enough that no chord strays from the curve by more than [`sampling_sagitta_m`]:
//! min(wire radius / 10, 5 um). A polyline is already straight; its pieces are only subdivided.
//! The wire is then the set of points within the wire radius of that chain, and two wires
//! overlap when their chains come closer than the sum of the radii. Because each chain is within
//! the sagitta of its curve, a computed gap is within 2 x 5 um = 10 um of the true one.
//!
//! Distances between pieces are exact segment-to-segment distances (closest points of two
//! segments: C. Ericson, "Real-Time Collision Detection", Morgan Kaufmann, 2005, section 5.1.9).
//! [`check_overlaps`] asks whether any pair of pieces is closer than a fixed radius (the sum of
//! the wire radii). Candidate pairs come from a uniform spatial hash grid whose cell is at least
//! that radius and the longest piece: the grid holds the larger chain's pieces near the smaller
//! chain, and each piece of the smaller chain meets only the pieces in the few cells around it.
//!
//! [`min_surface_gap_m`] needs the distance at any range, where no single cell size suits both
//! near and far windings (small cells find nothing far away, large ones hold everything nearby).
//! It runs a branch and bound over bounding-box trees of runs of consecutive pieces instead,
//! which is exact at every range.
//!
//! Measured (release build, one thread, on a busy 2-core machine): the 800-turn, 0.4 mm-wire
//! reference secondary (178 000 pieces) against a 10-turn spiral 1 mm below it, sampling
//! included: `check_overlaps` 10-15 ms, `min_surface_gap_m` 15-20 ms. Against a 100-turn helix
//! wound 2 mm outside it over its whole length: about 50-90 ms and 100 ms.
//!
//! # Limitations
//! - The bare wire is checked; insulation is not modelled.
//! - A ring of N coincident turns is a bundle: it is checked as one wire of the given diameter
//!   against the other windings, never against itself.
//! - Helices, spirals and cones are not checked against themselves: the pitch checks of
//!   [`crate::parse_design`] cover that. Polylines are, for pieces further apart along the wire
//!   than [`SELF_SKIP_DIAMETERS`] wire diameters (nearer pieces meet at a bend by design).
//! - A winding needing more than [`MAX_PIECES`] pieces (in the part near the other winding, for
//!   [`check_overlaps`]; whole, for [`min_surface_gap_m`]) is sampled at that count, with a
//!   coarser sagitta than stated.

use crate::error::DesignError;
use crate::model::design::Design;
use crate::model::winding::{Shape, Winding};
use crate::query::distance::segment_distance2;
use nalgebra::{Point3, Vector3};
use std::f64::consts::TAU;
use std::sync::OnceLock;

/// Largest chord sagitta aimed for when sampling a curve (m), whatever the wire.
pub const MAX_SAGITTA_M: f64 = 5e-6;

/// Most pieces one winding is sampled into (bounds memory to some tens of MB per winding).
pub const MAX_PIECES: usize = 2_000_000;

/// Polyline pieces closer than this many wire diameters along the wire are not checked against
/// each other: they meet at a bend by design.
pub const SELF_SKIP_DIAMETERS: f64 = 3.0;

/// Pieces of a polyline are split to at most this many wire diameters, so that the skip window
/// of [`SELF_SKIP_DIAMETERS`] spans several pieces and a long piece folded back along its
/// neighbour is still caught.
const POLYLINE_PIECE_DIAMETERS: f64 = 1.0;

/// Most pieces a polyline is split into for the check (beyond it pieces get longer).
const MAX_POLYLINE_PIECES: f64 = 200_000.0;

/// Chord sagitta (m) used when sampling `winding`: min(wire radius / 10, [`MAX_SAGITTA_M`]).
///
/// A tenth of the wire radius keeps the sampling error well below the size of the wire it
/// describes; the absolute cap keeps gaps meaningful to 10 um for thick wires.
pub fn sampling_sagitta_m(winding: &Winding) -> f64 {
    (0.1 * winding.wire_radius_m()).min(MAX_SAGITTA_M)
}

/// Check that no two windings' wires touch or cross, and that no polyline crosses itself.
///
/// Pairs are checked in file order; the first failure is returned, naming the later winding of
/// the pair. `source` labels messages.
///
/// A pair whose bounding boxes, grown by the wire radii, are apart passes without sampling;
/// otherwise each winding is sampled only where it comes within reach of the other's box, so a
/// 100 000-turn helix costs little next to a small pickup loop.
pub fn check_overlaps(design: &Design, source: &str) -> Result<(), DesignError> {
    let boxes: Vec<Aabb> = design
        .windings
        .iter()
        .map(|w| curve_bounds(&w.shape))
        .collect();
    for (j, wj) in design.windings.iter().enumerate() {
        check_self_overlap(wj, source)?;
        for (i, wi) in design.windings[..j].iter().enumerate() {
            if let Some(contact) = wires_touch(wi, wj, &boxes[i], &boxes[j]) {
                return Err(overlap_error(wi, wj, &contact, source));
            }
        }
    }
    Ok(())
}

/// Check that a polyline does not cross itself (other shapes pass: their pitch checks cover
/// that). `source` labels messages.
pub fn check_self_overlap(w: &Winding, source: &str) -> Result<(), DesignError> {
    let Shape::Polyline { points_m, .. } = &w.shape else {
        return Ok(());
    };
    let chain = Chain::of(w, None);
    let Some(hit) = self_overlap(&chain) else {
        return Ok(());
    };
    let n = points_m.len();
    let a = chain.orig[hit.ia] as usize;
    let b = chain.orig[hit.ib] as usize;
    Err(DesignError::SelfIntersection {
        source_name: source.to_string(),
        item: label(w),
        piece_a: a,
        piece_a_end: (a + 1) % n,
        piece_b: b,
        piece_b_end: (b + 1) % n,
        gap_m: hit.d2.sqrt() - 2.0 * chain.wire_radius_m,
        near_m: hit.near(),
    })
}

/// Where two wires touch or cross: the surface gap at their closest approach (m, zero or
/// negative) and a point midway between the two closest centreline points (m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WireContact {
    /// Smallest surface-to-surface distance found (m), zero or negative.
    pub gap_m: f64,
    /// A point midway between the two closest centreline points (m).
    pub near_m: [f64; 3],
}

impl WireContact {
    fn of(hit: &Hit, touch_m: f64) -> Self {
        WireContact {
            gap_m: hit.d2.sqrt() - touch_m,
            near_m: hit.near(),
        }
    }
}

/// The error of two touching wires, naming the later winding `wj` and its placing key.
pub fn overlap_error(wi: &Winding, wj: &Winding, c: &WireContact, source: &str) -> DesignError {
    let key = match wj.shape {
        Shape::Polyline { .. } => "points",
        _ => "origin",
    };
    DesignError::Overlap {
        source_name: source.to_string(),
        item: label(wj),
        key,
        other: label(wi),
        gap_m: c.gap_m,
        near_m: c.near_m,
    }
}

/// Whether the wires of `a` and `b` (with their boxes) touch or cross: apart boxes pass at
/// once; coaxial windings pass in closed form when their meridian traces keep them apart
/// ([`coaxial_gap_lower_bound_m`]); otherwise each winding is sampled near the other's box and
/// the pieces are compared through a hash grid.
fn wires_touch(a: &Winding, b: &Winding, box_a: &Aabb, box_b: &Aabb) -> Option<WireContact> {
    let touch_m = a.wire_radius_m() + b.wire_radius_m();
    if !box_a.inflated(touch_m).intersects(box_b) || coaxial_clear(a, b) {
        return None;
    }
    // The smaller winding's exact curve against the larger one's trace first, unsampled.
    let (small, large) = if estimated_pieces(a) <= estimated_pieces(b) {
        (a, b)
    } else {
        (b, a)
    };
    if curve_clears_trace(large, small) == Some(true) {
        return None;
    }
    let ca = Chain::of(a, Some(&box_b.inflated(touch_m)));
    let cb = Chain::of(b, Some(&box_a.inflated(touch_m)));
    if trace_clears(a, &cb, b) || trace_clears(b, &ca, a) {
        return None;
    }
    nearest_within_grid(&ca, &cb, touch_m).map(|hit| WireContact::of(&hit, touch_m))
}

/// Whether two coaxial windings are certainly apart by their meridian traces: the lower bound
/// of their surface gap exceeds the sampled check's own tolerance (the two sampling sagittas),
/// so that the closed form never accepts a pair the sampled check would refuse.
fn coaxial_clear(a: &Winding, b: &Winding) -> bool {
    coaxial_gap_lower_bound_m(a, b)
        .is_some_and(|gap_m| gap_m > sampling_sagitta_m(a) + sampling_sagitta_m(b))
}

/// The straight piece of the meridian half-plane that an axisymmetric winding's centreline
/// passes through, as (distance from the axis, height along it) (m) of its two ends, in the
/// frame of the axis through `origin_m` along `axis`: a helix's wire passes every height of its
/// span at its radius (a vertical segment), a flat spiral every radius from inner to outer at
/// one height, a cone both at once (a slanted segment), a ring one point. None for a polyline.
fn meridian_trace(
    shape: &Shape,
    origin_m: &Point3<f64>,
    axis: &Vector3<f64>,
) -> Option<[(f64, f64); 2]> {
    let (o, n) = shape.origin_axis()?;
    let z0 = (o - origin_m).dot(axis);
    let sign = n.dot(axis).signum();
    Some(match *shape {
        Shape::Helix {
            radius_m, length_m, ..
        } => [(radius_m, z0), (radius_m, z0 + sign * length_m)],
        Shape::Spiral {
            inner_radius_m,
            outer_radius_m,
            ..
        } => [(inner_radius_m, z0), (outer_radius_m, z0)],
        Shape::Cone {
            inner_radius_m,
            outer_radius_m,
            height_m,
            ..
        } => [(inner_radius_m, z0), (outer_radius_m, z0 + sign * height_m)],
        Shape::Ring { radius_m, .. } => [(radius_m, z0), (radius_m, z0)],
        Shape::Polyline { .. } => return None,
    })
}

/// A lower bound (m) of the surface gap of two windings that share one axis line (parallel or
/// antiparallel), from their meridian traces; None when they do not share an axis or either
/// is a polyline.
///
/// Rotation about the common axis preserves the distance from the axis and the height along
/// it, and for points P, Q at azimuths phi_P, phi_Q, |P - Q|^2 = r_P^2 + r_Q^2 -
/// 2 r_P r_Q cos(phi_P - phi_Q) + (z_P - z_Q)^2 >= (r_P - r_Q)^2 + (z_P - z_Q)^2. So the
/// distance between the two traces in the (r, z) half-plane (a segment-segment distance,
/// closed form) bounds the centreline distance from below, and minus both wire radii the
/// surface gap. It is exact when the two closest trace points are met at one azimuth, and
/// short of the true gap by up to about a pitch when they are not (a helix's end against a
/// spiral below it).
pub fn coaxial_gap_lower_bound_m(a: &Winding, b: &Winding) -> Option<f64> {
    let (oa, na) = a.shape.origin_axis()?;
    let (ob, nb) = b.shape.origin_axis()?;
    let offset = ob - oa;
    let lateral = (offset - na.as_ref() * offset.dot(na.as_ref())).norm();
    let size = curve_bounds(&a.shape)
        .diagonal_m()
        .max(curve_bounds(&b.shape).diagonal_m())
        .max(offset.norm());
    // Geometric tolerance: well below any manufacturing tolerance, well above rounding.
    if na.cross(&nb).norm() >= 1e-12 || lateral >= 1e-12 * size {
        return None;
    }
    let ta = meridian_trace(&a.shape, &oa, na.as_ref())?;
    let tb = meridian_trace(&b.shape, &oa, na.as_ref())?;
    let p = |(r, z): (f64, f64)| Point3::new(r, z, 0.0);
    let (d2, _, _) = segment_distance2(&p(ta[0]), &p(ta[1]), &p(tb[0]), &p(tb[1]));
    Some(d2.sqrt() - a.wire_radius_m() - b.wire_radius_m())
}

/// An axisymmetric winding's meridian trace in its own frame: distances of points from it in
/// the (distance from the axis, height along it) half-plane.
struct TraceFrame {
    origin_m: Point3<f64>,
    axis: Vector3<f64>,
    /// First end of the trace (m, m) and the step to the second.
    start: (f64, f64),
    step: (f64, f64),
    step_len2: f64,
}

impl TraceFrame {
    /// The trace of `axisym`, or None when it has no axis (a polyline).
    fn of(axisym: &Winding) -> Option<TraceFrame> {
        let (o, n) = axisym.shape.origin_axis()?;
        let t = meridian_trace(&axisym.shape, &o, n.as_ref())?;
        let step = (t[1].0 - t[0].0, t[1].1 - t[0].1);
        Some(TraceFrame {
            origin_m: o,
            axis: n.into_inner(),
            start: t[0],
            step,
            step_len2: step.0 * step.0 + step.1 * step.1,
        })
    }

    /// Distance (m) of `x`'s (distance from the axis, height) to the trace: a lower bound of
    /// its distance to any point of the winding's centreline (see
    /// [`coaxial_gap_lower_bound_m`]), and 1-Lipschitz in `x`.
    fn distance_m(&self, x: &Point3<f64>) -> f64 {
        let r = x - self.origin_m;
        let z = r.dot(&self.axis);
        let rho = (r - self.axis * z).norm();
        let (u, v) = (rho - self.start.0, z - self.start.1);
        let s = if self.step_len2 > 0.0 {
            ((u * self.step.0 + v * self.step.1) / self.step_len2).clamp(0.0, 1.0)
        } else {
            0.0
        };
        (u - s * self.step.0).hypot(v - s * self.step.1)
    }
}

/// The margin (m) a lower bound of the centreline distance of `a`'s and `b`'s wires must
/// exceed for the pair to pass without the sampled check: both wire radii plus the sampled
/// check's own tolerance (both sampling sagittas), so that no bound passes a pair the sampled
/// check refuses.
fn trace_margin_m(a: &Winding, b: &Winding) -> f64 {
    a.wire_radius_m() + b.wire_radius_m() + sampling_sagitta_m(a) + sampling_sagitta_m(b)
}

/// Whether every piece of `chain` (a sampling of another winding, with its sagitta
/// `chain.sagitta_m`) stays clear of the wire of the axisymmetric winding `axisym`, judged on
/// `axisym`'s meridian trace; false when `axisym` has no axis or any piece comes too near.
///
/// For a point x, the distance to any point of `axisym`'s centreline is at least the distance
/// of x's (distance from the axis, height along it) to the meridian trace (see
/// [`coaxial_gap_lower_bound_m`]), and that map is 1-Lipschitz, so over a piece of length l the
/// distance is at least the trace distance of its midpoint minus l / 2. The pieces stray from
/// their curve by at most the chain's sagitta; a pair passes only when this lower bound of the
/// true surface gap exceeds the sampled check's own tolerance, so it never passes a pair the
/// sampled check refuses. No sampling of `axisym`: a long secondary costs nothing here.
fn trace_clears(axisym: &Winding, chain: &Chain, other: &Winding) -> bool {
    let Some(trace) = TraceFrame::of(axisym) else {
        return false;
    };
    let margin_m = trace_margin_m(axisym, other) + chain.sagitta_m;
    chain
        .segs
        .iter()
        .all(|[p, q]| trace.distance_m(&nalgebra::center(p, q)) - 0.5 * (q - p).norm() > margin_m)
}

/// Most curve points [`curve_clears_trace`] evaluates per piece the sampled check would make:
/// past it, the sampled check is the cheaper way.
const ADAPTIVE_POINTS_PER_PIECE: f64 = 0.5;

/// As [`trace_clears`] for the exact curve of the axisymmetric winding `other` (not a polyline),
/// without sampling it at the check's resolution: its arcs are bisected only where they come
/// near `axisym`'s trace.
///
/// An arc over the parameter interval h (rad) strays from its chord by at most
/// h^2/8 sqrt(R^2 + 4 b^2) (the bound [`sample_curve`] uses), so every point of the arc lies
/// within |chord|/2 + that bow of the chord's midpoint, and by the 1-Lipschitz trace distance
/// the arc clears the trace by at least the midpoint's trace distance minus both. An arc
/// passes when that exceeds the margin of [`trace_margin_m`]; one that does not is halved, down
/// to the sampled check's own step, where the answer is "not clear" (the sampled check decides).
/// A curve far from the trace costs a few points per eighth of a turn; one near it stops once
/// it has cost half the sampled check's points.
///
/// None when the bound cannot tell within that budget, or does not apply (`axisym` or `other`
/// a polyline): the caller falls back on [`trace_clears`] over a sampled chain.
fn curve_clears_trace(axisym: &Winding, other: &Winding) -> Option<bool> {
    let trace = TraceFrame::of(axisym)?;
    let curve = CurveSteps::of(&other.shape, sampling_sagitta_m(other))?;
    let margin_m = trace_margin_m(axisym, other);
    let budget = (ADAPTIVE_POINTS_PER_PIECE * curve.pieces_f).max(64.0);
    let mut evaluated = 0.0;
    // Intervals (start, end) of the parameter t in [0, 1] with their end points, depth first.
    let mut stack: Vec<(f64, f64, Point3<f64>, Point3<f64>)> = Vec::new();
    let n_chunks = curve.n_chunks_f as usize;
    let mut start = other.shape.point_at(0.0);
    for c in 0..n_chunks {
        let t1 = (c + 1) as f64 / curve.n_chunks_f;
        let end = other.shape.point_at(t1);
        stack.push((c as f64 / curve.n_chunks_f, t1, start, end));
        start = end;
    }
    evaluated += curve.n_chunks_f;
    while let Some((t0, t1, p, q)) = stack.pop() {
        let h_rad = (t1 - t0) * curve.total_rad;
        let bow_m = h_rad * h_rad / 8.0 * curve.curvature_scale_m;
        let bound_m = trace.distance_m(&nalgebra::center(&p, &q)) - 0.5 * (q - p).norm() - bow_m;
        if bound_m > margin_m {
            continue;
        }
        if h_rad <= curve.step_rad {
            return Some(false);
        }
        evaluated += 1.0;
        if evaluated > budget {
            return None;
        }
        let tm = 0.5 * (t0 + t1);
        let m = other.shape.point_at(tm);
        stack.push((t0, tm, p, m));
        stack.push((tm, t1, m, q));
    }
    Some(true)
}

/// About how many pieces sampling `w` whole takes (to sample the smaller of two windings).
fn estimated_pieces(w: &Winding) -> f64 {
    match &w.shape {
        Shape::Polyline { points_m, .. } => points_m.len() as f64,
        shape => {
            let turns = match shape {
                Shape::Ring { .. } => 1.0,
                _ => shape.turns().unwrap_or(1.0),
            };
            let radius_m = curve_bounds(shape).diagonal_m();
            turns * TAU / (8.0 * sampling_sagitta_m(w) / radius_m.max(1e-12)).sqrt()
        }
    }
}

/// A winding prepared for many wire checks against windings that change (a sweep): its box
/// and meridian trace come from its sizes, and its whole centreline, sampled with a
/// bounding-box tree over the pieces, is built on first use and then shared read-only.
#[derive(Debug)]
pub struct PreparedWire {
    winding: Winding,
    bounds: Aabb,
    chain: OnceLock<Chain>,
    tree: OnceLock<Vec<Node>>,
}

impl PreparedWire {
    /// Prepare `winding` (nothing is sampled yet).
    pub fn new(winding: &Winding) -> PreparedWire {
        PreparedWire {
            winding: winding.clone(),
            bounds: curve_bounds(&winding.shape),
            chain: OnceLock::new(),
            tree: OnceLock::new(),
        }
    }

    /// The winding.
    pub fn winding(&self) -> &Winding {
        &self.winding
    }

    fn chain(&self) -> &Chain {
        self.chain.get_or_init(|| Chain::of(&self.winding, None))
    }

    fn sampled(&self) -> (&Chain, &[Node]) {
        let chain = self.chain();
        (chain, self.tree.get_or_init(|| build_tree(chain)))
    }
}

/// As the check of [`check_overlaps`] for one pair, from prepared wires: apart boxes and
/// coaxial windings apart by their meridian traces pass without sampling; otherwise the two
/// whole sampled centrelines (built once per prepared wire) are searched by branch and bound
/// over their trees for pieces within the sum of the wire radii. Same tolerance as the
/// sampled check: the chains are the same samplings of the same curves.
pub fn wires_touch_prepared(a: &PreparedWire, b: &PreparedWire) -> Option<WireContact> {
    let touch_m = a.winding.wire_radius_m() + b.winding.wire_radius_m();
    if !a.bounds.inflated(touch_m).intersects(&b.bounds) || coaxial_clear(&a.winding, &b.winding) {
        return None;
    }
    // The smaller winding's exact curve is judged against the other's meridian trace first
    // (bisected near it; sampled only when the bisection cannot tell); only when that fails is
    // the larger one sampled too.
    let (small, large) = if estimated_pieces(&a.winding) <= estimated_pieces(&b.winding) {
        (a, b)
    } else {
        (b, a)
    };
    let small_clear = curve_clears_trace(&large.winding, &small.winding)
        .unwrap_or_else(|| trace_clears(&large.winding, small.chain(), &small.winding));
    if small_clear || trace_clears(&small.winding, large.chain(), &large.winding) {
        return None;
    }
    let (ca, ta) = a.sampled();
    let (cb, tb) = b.sampled();
    if ca.n_pieces() == 0 || cb.n_pieces() == 0 {
        return None;
    }
    nearest_pair_tree(ca, ta, cb, tb, touch_m * touch_m).map(|hit| WireContact::of(&hit, touch_m))
}

/// As [`min_surface_gap_m`], from prepared wires (their trees built once).
pub fn min_surface_gap_prepared_m(a: &PreparedWire, b: &PreparedWire) -> f64 {
    let (ca, ta) = a.sampled();
    let (cb, tb) = b.sampled();
    if ca.n_pieces() == 0 || cb.n_pieces() == 0 {
        return f64::INFINITY;
    }
    let radii_m = ca.wire_radius_m + cb.wire_radius_m;
    nearest_pair_tree(ca, ta, cb, tb, f64::INFINITY).map_or(f64::INFINITY, |h| h.d2.sqrt())
        - radii_m
}

/// Smallest distance (m) between the surfaces of the two windings' wires: the smallest distance
/// between their centrelines minus both wire radii. Negative when the wires intersect;
/// `f64::INFINITY` when either winding has no curve (a polyline of fewer than 2 points).
///
/// Accurate to 10 um (see the module docs). Exact over the sampled chains at any range; the cost
/// grows with the number of pieces near the closest approach, not with the product of the piece
/// counts. Both windings are sampled whole, so this suits windings of up to some thousands of
/// turns (see [`MAX_PIECES`]).
pub fn min_surface_gap_m(a: &Winding, b: &Winding) -> f64 {
    let ca = Chain::of(a, None);
    let cb = Chain::of(b, None);
    let radii_m = ca.wire_radius_m + cb.wire_radius_m;
    min_centreline_distance_m(&ca, &cb) - radii_m
}

/// Smallest centreline distance (m) of two chains, or infinity when either is empty.
fn min_centreline_distance_m(a: &Chain, b: &Chain) -> f64 {
    if a.n_pieces() == 0 || b.n_pieces() == 0 {
        return f64::INFINITY;
    }
    let (ta, tb) = (build_tree(a), build_tree(b));
    nearest_pair_tree(a, &ta, b, &tb, f64::INFINITY).map_or(f64::INFINITY, |h| h.d2.sqrt())
}

/// How a winding is named in messages.
fn label(winding: &Winding) -> String {
    format!("winding '{}'", winding.name)
}

/// Box holding a winding's whole centreline, from its sizes alone (no sampling).
///
/// An axisymmetric curve lies in the cylinder of its largest radius around the axis segment from
/// the origin to the end height; along coordinate k such a cylinder reaches R sqrt(1 - a_k^2)
/// beyond the segment, a_k being the axis component.
fn curve_bounds(shape: &Shape) -> Aabb {
    let (radius_m, height_m) = match *shape {
        Shape::Helix {
            radius_m, length_m, ..
        } => (radius_m, length_m),
        Shape::Spiral {
            inner_radius_m,
            outer_radius_m,
            ..
        } => (inner_radius_m.max(outer_radius_m), 0.0),
        Shape::Cone {
            inner_radius_m,
            outer_radius_m,
            height_m,
            ..
        } => (inner_radius_m.max(outer_radius_m), height_m),
        Shape::Ring { radius_m, .. } => (radius_m, 0.0),
        Shape::Polyline { ref points_m, .. } => {
            let mut b = Aabb::empty();
            for p in points_m {
                b.grow_point(p);
            }
            return b;
        }
    };
    let Some((origin_m, axis)) = shape.origin_axis() else {
        return Aabb::empty();
    };
    let end_m = origin_m + axis.as_ref() * height_m;
    let mut b = Aabb::of_segment(&origin_m, &end_m);
    for k in 0..3 {
        let reach_m = radius_m * (1.0 - axis[k] * axis[k]).max(0.0).sqrt();
        b.lo[k] -= reach_m;
        b.hi[k] += reach_m;
    }
    b
}

/// A winding's centreline, or the part of it near some box, as straight pieces.
#[derive(Debug)]
struct Chain {
    /// Start and end of each piece (m). Consecutive pieces usually join; where only part of a
    /// winding is sampled, there are gaps between the runs.
    segs: Vec<[Point3<f64>; 2]>,
    wire_radius_m: f64,
    /// Largest distance (m) of a piece from the curve it samples (0 for a polyline's own
    /// pieces); the stated sagitta unless the piece cap made the sampling coarser.
    sagitta_m: f64,
    /// Longest piece (m).
    max_piece_m: f64,
    /// Polylines only: whether the last point joins the first.
    closed: bool,
    /// Polylines only: index of the polyline segment each piece belongs to.
    orig: Vec<u32>,
    /// Polylines only: arc length (m) from the start of the polyline to each piece's ends.
    arc_m: Vec<[f64; 2]>,
    /// Polylines only: total arc length (m).
    total_arc_m: f64,
}

impl Chain {
    /// Sample `winding`; with `within`, keep only the parts whose boxes meet it.
    fn of(winding: &Winding, within: Option<&Aabb>) -> Self {
        let mut chain = Chain {
            segs: Vec::new(),
            wire_radius_m: winding.wire_radius_m(),
            sagitta_m: 0.0,
            max_piece_m: 0.0,
            closed: false,
            orig: Vec::new(),
            arc_m: Vec::new(),
            total_arc_m: 0.0,
        };
        match &winding.shape {
            Shape::Polyline { points_m, closed } => {
                chain.closed = *closed;
                split_polyline(&mut chain, points_m, winding.wire_diameter_m, within);
            }
            shape => {
                (chain.segs, chain.sagitta_m) =
                    sample_curve(shape, sampling_sagitta_m(winding), within);
            }
        }
        chain.max_piece_m = chain
            .segs
            .iter()
            .map(|[p, q]| (q - p).norm())
            .fold(0.0, f64::max);
        chain
    }

    fn n_pieces(&self) -> usize {
        self.segs.len()
    }

    fn piece(&self, i: usize) -> (Point3<f64>, Point3<f64>) {
        let [p, q] = self.segs[i];
        (p, q)
    }

    fn piece_box(&self, i: usize) -> Aabb {
        let [p, q] = &self.segs[i];
        Aabb::of_segment(p, q)
    }

    fn bounds(&self) -> Aabb {
        let mut b = Aabb::empty();
        for [p, q] in &self.segs {
            b.grow_point(p);
            b.grow_point(q);
        }
        b
    }
}

/// Angle (rad) of one chunk of a sampled curve: an eighth of a turn keeps a chunk's box tight
/// around its arc, and a 100 000-turn winding under a million chunks.
const CHUNK_RAD: f64 = TAU / 8.0;

/// How an axisymmetric curve is sampled for a sagitta: its chunks (eighths of a turn) and the
/// angle step within them (see [`sample_curve`] for the bound behind the step).
struct CurveSteps {
    /// sqrt(R^2 + 4 b^2) (m): the largest |r''| per rad^2 with the angle as parameter.
    curvature_scale_m: f64,
    /// Angle (rad) the whole curve turns through.
    total_rad: f64,
    /// Largest angle step (rad) that keeps the sagitta.
    step_rad: f64,
    /// Number of chunks, and of steps per chunk (at least 1 each, whole numbers).
    n_chunks_f: f64,
    per_chunk_f: f64,
    /// Pieces the whole curve takes at that step.
    pieces_f: f64,
}

impl CurveSteps {
    /// The steps for `shape` at `sagitta_m`; None for a polyline, and for sizes that give no
    /// finite sampling or more than 10^8 chunks (a hand-built winding with zero or NaN sizes:
    /// validated designs give finite, positive values here).
    fn of(shape: &Shape, sagitta_m: f64) -> Option<CurveSteps> {
        let (outer_m, growth_m, turns) = match *shape {
            Shape::Helix {
                radius_m, turns, ..
            } => (radius_m, 0.0, turns),
            Shape::Spiral {
                inner_radius_m,
                outer_radius_m,
                turns,
                ..
            }
            | Shape::Cone {
                inner_radius_m,
                outer_radius_m,
                turns,
                ..
            } => (
                outer_radius_m.max(inner_radius_m),
                (outer_radius_m - inner_radius_m) / (TAU * turns),
                turns,
            ),
            // A ring's curve is one turn whatever its count.
            Shape::Ring { radius_m, .. } => (radius_m, 0.0, 1.0),
            Shape::Polyline { .. } => return None,
        };
        let curvature_scale_m = outer_m.hypot(2.0 * growth_m);
        let total_rad = TAU * turns;
        let step_rad = (8.0 * sagitta_m / curvature_scale_m).sqrt();
        let n_chunks_f = (total_rad / CHUNK_RAD).ceil().max(1.0);
        let per_chunk_f = (total_rad / n_chunks_f / step_rad).ceil().max(1.0);
        if !(n_chunks_f.is_finite() && per_chunk_f.is_finite()) || n_chunks_f > 1e8 {
            return None;
        }
        Some(CurveSteps {
            curvature_scale_m,
            total_rad,
            step_rad,
            n_chunks_f,
            per_chunk_f,
            pieces_f: n_chunks_f * per_chunk_f,
        })
    }
}

/// Pieces of an axisymmetric curve at equal angle steps small enough for the given sagitta,
/// keeping only the chunks (eighths of a turn) whose boxes meet `within`.
///
/// The step follows from the error of linear interpolation: a chord over a parameter interval h
/// strays from the curve by at most h^2/8 max|r''| (R. L. Burden and J. D. Faires, "Numerical
/// Analysis", 9th ed., 2011, theorem 3.3, applied along the direction of the deviation). With the
/// angle phi as parameter, r = a + b phi and a linear rise, |r''| = sqrt(r^2 + 4 b^2), largest at
/// the outer radius; so a step of sqrt(8 s / sqrt(R^2 + 4 b^2)) keeps the sagitta below s. The
/// same bound, over a whole chunk, gives how far the chunk's arc strays from the chord between
/// its ends, and so a box that surely holds the arc.
///
/// Returns the pieces and the sagitta (m) they keep: `sagitta_m`, or more where the piece cap
/// made the sampling coarser.
fn sample_curve(
    shape: &Shape,
    sagitta_m: f64,
    within: Option<&Aabb>,
) -> (Vec<[Point3<f64>; 2]>, f64) {
    let Some(CurveSteps {
        curvature_scale_m,
        total_rad,
        n_chunks_f,
        per_chunk_f,
        ..
    }) = CurveSteps::of(shape, sagitta_m)
    else {
        return (Vec::new(), 0.0);
    };
    let n_chunks = n_chunks_f as usize;
    let chunk_rad = total_rad / n_chunks_f;
    let chunk_bow_m = chunk_rad * chunk_rad / 8.0 * curvature_scale_m;
    let t_of = |c: usize, f: f64| (c as f64 + f) / n_chunks_f;

    let mut selected: Vec<usize> = Vec::new();
    let mut start = shape.point_at(0.0);
    for c in 0..n_chunks {
        let end = shape.point_at(t_of(c + 1, 0.0));
        let keep = within.is_none_or(|w| {
            Aabb::of_segment(&start, &end)
                .inflated(chunk_bow_m)
                .intersects(w)
        });
        if keep {
            selected.push(c);
        }
        start = end;
    }
    if selected.is_empty() {
        return (Vec::new(), sagitta_m);
    }
    // Past the memory cap, fewer pieces per chunk: coarser than the stated sagitta, documented.
    let per_chunk = (per_chunk_f as usize)
        .min(MAX_PIECES / selected.len())
        .max(1);
    let mut segs = Vec::with_capacity(selected.len() * per_chunk);
    for c in selected {
        let mut p = shape.point_at(t_of(c, 0.0));
        for k in 1..=per_chunk {
            let q = shape.point_at(t_of(c, k as f64 / per_chunk as f64));
            segs.push([p, q]);
            p = q;
        }
    }
    let step_rad = chunk_rad / per_chunk as f64;
    (
        segs,
        sagitta_m.max(step_rad * step_rad / 8.0 * curvature_scale_m),
    )
}

/// Split each polyline segment into pieces of at most about one wire diameter, keeping those
/// whose boxes meet `within`, with their arc positions and source segments.
fn split_polyline(
    chain: &mut Chain,
    points_m: &[Point3<f64>],
    wire_diameter_m: f64,
    within: Option<&Aabb>,
) {
    let n = points_m.len();
    let n_seg = match (n, chain.closed) {
        (0 | 1, _) => return,
        (_, true) => n,
        (_, false) => n - 1,
    };
    let total_m: f64 = (0..n_seg)
        .map(|i| (points_m[(i + 1) % n] - points_m[i]).norm())
        .sum();
    chain.total_arc_m = total_m;
    let target_m = (POLYLINE_PIECE_DIAMETERS * wire_diameter_m).max(total_m / MAX_POLYLINE_PIECES);
    let mut arc_m = 0.0;
    for i in 0..n_seg {
        let a = points_m[i];
        let b = points_m[(i + 1) % n];
        let len_m = (b - a).norm();
        let parts = (len_m / target_m).ceil();
        // NaN or zero target (hand-built winding) gives one part; the cap guards memory.
        let parts = if parts.is_finite() {
            parts.clamp(1.0, MAX_POLYLINE_PIECES) as usize
        } else {
            1
        };
        for k in 0..parts {
            let f0 = k as f64 / parts as f64;
            let f1 = (k + 1) as f64 / parts as f64;
            let p = a + (b - a) * f0;
            let q = if k + 1 == parts { b } else { a + (b - a) * f1 };
            if within.is_none_or(|w| Aabb::of_segment(&p, &q).intersects(w)) {
                chain.segs.push([p, q]);
                chain.orig.push(i as u32);
                chain.arc_m.push([arc_m + len_m * f0, arc_m + len_m * f1]);
            }
        }
        arc_m += len_m;
    }
}

/// Axis-aligned box.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Aabb {
    lo: Vector3<f64>,
    hi: Vector3<f64>,
}

impl Aabb {
    fn empty() -> Self {
        Aabb {
            lo: Vector3::repeat(f64::INFINITY),
            hi: Vector3::repeat(f64::NEG_INFINITY),
        }
    }

    fn of_segment(p: &Point3<f64>, q: &Point3<f64>) -> Self {
        Aabb {
            lo: p.coords.inf(&q.coords),
            hi: p.coords.sup(&q.coords),
        }
    }

    fn grow_point(&mut self, p: &Point3<f64>) {
        self.lo = self.lo.inf(&p.coords);
        self.hi = self.hi.sup(&p.coords);
    }

    fn union(&self, other: &Aabb) -> Aabb {
        Aabb {
            lo: self.lo.inf(&other.lo),
            hi: self.hi.sup(&other.hi),
        }
    }

    fn inflated(&self, by: f64) -> Aabb {
        Aabb {
            lo: self.lo.add_scalar(-by),
            hi: self.hi.add_scalar(by),
        }
    }

    /// Squared distance between the boxes (0 when they meet).
    /// Length (m) of the box's diagonal (0 for an empty box).
    fn diagonal_m(&self) -> f64 {
        let d = self.hi - self.lo;
        if d.iter().all(|x| x.is_finite() && *x >= 0.0) {
            d.norm()
        } else {
            0.0
        }
    }

    fn dist2(&self, other: &Aabb) -> f64 {
        let mut d2 = 0.0;
        for k in 0..3 {
            let gap = (other.lo[k] - self.hi[k]).max(self.lo[k] - other.hi[k]);
            if gap > 0.0 {
                d2 += gap * gap;
            }
        }
        d2
    }

    fn intersects(&self, other: &Aabb) -> bool {
        (0..3).all(|k| self.lo[k] <= other.hi[k] && other.lo[k] <= self.hi[k])
    }
}

/// Closest approach of two pieces.
#[derive(Debug, Clone, Copy)]
struct Hit {
    /// Squared centreline distance (m^2).
    d2: f64,
    /// Piece of the first chain.
    ia: usize,
    /// Piece of the second chain.
    ib: usize,
    /// Closest point on the first piece.
    ca: Point3<f64>,
    /// Closest point on the second piece.
    cb: Point3<f64>,
}

impl Hit {
    fn near(&self) -> [f64; 3] {
        let mid = nalgebra::center(&self.ca, &self.cb);
        [mid.x, mid.y, mid.z]
    }
}

type CellKey = [i64; 3];

/// Most hash buckets of a grid (16 MB of offsets); beyond it cells share buckets more often,
/// which costs time, never correctness.
const MAX_BUCKETS: usize = 1 << 22;

/// Uniform spatial hash grid over the pieces of one chain.
///
/// Cells are hashed into a flat table of buckets (M. Teschner, B. Heidelberger, M. Mueller,
/// D. Pomeranets and M. Gross, "Optimized Spatial Hashing for Collision Detection of Deformable
/// Objects", Proc. Vision, Modeling, Visualization, 2003: the cell hash
/// (x p1 xor y p2 xor z p3) with large primes p1, p2, p3). The table is filled by a counting
/// sort, two linear passes, instead of a map of vectors. Two cells may share a bucket; their
/// pieces then become extra candidates, which the box test of the scan drops.
struct Grid {
    cell_m: f64,
    /// log2 of the number of buckets.
    bits: u32,
    /// Bucket b holds `items[starts[b]..starts[b + 1]]`.
    starts: Vec<u32>,
    /// Piece indices, grouped by bucket.
    items: Vec<u32>,
}

impl Grid {
    /// Grid over the pieces of `chain` whose boxes meet `within`.
    fn build(chain: &Chain, cell_m: f64, within: &Aabb) -> Self {
        // (cell hash, piece) for every cell each piece's box overlaps.
        let mut entries: Vec<(u64, u32)> = Vec::new();
        for i in 0..chain.n_pieces() {
            let b = chain.piece_box(i);
            if b.intersects(within) {
                for_cells(&b, cell_m, |key| entries.push((cell_hash(&key), i as u32)));
            }
        }
        // About two buckets per entry keeps sharing rare.
        let n_buckets = (2 * entries.len())
            .next_power_of_two()
            .clamp(16, MAX_BUCKETS);
        let bits = n_buckets.trailing_zeros();
        let bucket = |h: u64| (h >> (64 - bits)) as usize;
        let mut starts = vec![0u32; n_buckets + 1];
        for &(h, _) in &entries {
            starts[bucket(h) + 1] += 1;
        }
        for b in 0..n_buckets {
            starts[b + 1] += starts[b];
        }
        let mut fill = starts.clone();
        let mut items = vec![0u32; entries.len()];
        for &(h, i) in &entries {
            let slot = &mut fill[bucket(h)];
            items[*slot as usize] = i;
            *slot += 1;
        }
        Grid {
            cell_m,
            bits,
            starts,
            items,
        }
    }

    /// Pieces in the bucket of cell `key` (a superset of the pieces in that cell).
    fn cell_items(&self, key: &CellKey) -> &[u32] {
        let b = (cell_hash(key) >> (64 - self.bits)) as usize;
        &self.items[self.starts[b] as usize..self.starts[b + 1] as usize]
    }
}

/// Hash of a cell: Teschner et al.'s (2003) prime products, then a multiply by an odd constant
/// with well-mixed bits (2^64 / golden ratio) so that the top bits, which pick the bucket,
/// depend on all three coordinates.
fn cell_hash(key: &CellKey) -> u64 {
    let [x, y, z] = *key;
    let h = (x as u64).wrapping_mul(73_856_093)
        ^ (y as u64).wrapping_mul(19_349_663)
        ^ (z as u64).wrapping_mul(83_492_791);
    h.wrapping_mul(0x9e37_79b9_7f4a_7c15)
}

/// Call `f` for every grid cell the box overlaps.
fn for_cells(b: &Aabb, cell_m: f64, mut f: impl FnMut(CellKey)) {
    // `as` saturates, so coordinates far outside the i64 range of cells cannot wrap around.
    let lo: [i64; 3] = std::array::from_fn(|k| (b.lo[k] / cell_m).floor() as i64);
    let hi: [i64; 3] = std::array::from_fn(|k| (b.hi[k] / cell_m).floor() as i64);
    for x in lo[0]..=hi[0] {
        for y in lo[1]..=hi[1] {
            for z in lo[2]..=hi[2] {
                f([x, y, z]);
            }
        }
    }
}

/// Closest pair of pieces of `a` and `b` whose centreline distance is at most `radius_m`, found
/// through a hash grid over the chain with fewer pieces. `None` when no pair is that close.
fn nearest_within_grid(a: &Chain, b: &Chain, radius_m: f64) -> Option<Hit> {
    if a.n_pieces() == 0 || b.n_pieces() == 0 {
        return None;
    }
    // Grid over the larger chain, holding only its pieces near the smaller one; the smaller
    // chain's pieces are the queries. Inserting a piece costs less than querying one (a query
    // visits up to 64 cells), and near the other winding both lists shrink to what matters.
    let (small, large, swapped) = if a.n_pieces() <= b.n_pieces() {
        (a, b, false)
    } else {
        (b, a, true)
    };
    let cell_m = radius_m.max(a.max_piece_m).max(b.max_piece_m);
    if !(cell_m > 0.0 && cell_m.is_finite()) {
        return None;
    }
    let grid = Grid::build(large, cell_m, &small.bounds().inflated(radius_m));
    if grid.items.is_empty() {
        return None;
    }
    let reach = large.bounds().inflated(radius_m);
    let hit = scan(small, large, &grid, radius_m, &reach, |_, _| false)?;
    Some(if swapped {
        // The scan reports (small, large) = (b, a); put it back as (a, b).
        Hit {
            ia: hit.ib,
            ib: hit.ia,
            ca: hit.cb,
            cb: hit.ca,
            ..hit
        }
    } else {
        hit
    })
}

/// For each piece of `query` inside `reach`, visit the pieces of `indexed` in the grid cells
/// around it and keep the closest pair within `radius_m`, except pairs `skip(iq, ii)` rejects.
fn scan(
    query: &Chain,
    indexed: &Chain,
    grid: &Grid,
    radius_m: f64,
    reach: &Aabb,
    skip: impl Fn(usize, usize) -> bool,
) -> Option<Hit> {
    let mut best: Option<Hit> = None;
    let mut best_d2 = radius_m * radius_m;
    // Last query piece that visited each indexed piece: a piece spanning several cells is
    // measured once per query piece.
    let mut seen = vec![u32::MAX; indexed.n_pieces()];
    for iq in 0..query.n_pieces() {
        let qbox = query.piece_box(iq);
        if !qbox.intersects(reach) {
            continue;
        }
        let (p, q) = query.piece(iq);
        let search = qbox.inflated(radius_m);
        for_cells(&search, grid.cell_m, |key| {
            for &ii in grid.cell_items(&key) {
                let ii_usize = ii as usize;
                if seen[ii_usize] == iq as u32 {
                    continue;
                }
                seen[ii_usize] = iq as u32;
                if skip(iq, ii_usize) || qbox.dist2(&indexed.piece_box(ii_usize)) > best_d2 {
                    continue;
                }
                let (r, s) = indexed.piece(ii_usize);
                let (d2, ca, cb) = segment_distance2(&p, &q, &r, &s);
                if d2 <= best_d2 {
                    best_d2 = d2;
                    best = Some(Hit {
                        d2,
                        ia: iq,
                        ib: ii_usize,
                        ca,
                        cb,
                    });
                }
            }
        });
    }
    best
}

/// Closest pair of non-neighbouring pieces of a polyline whose centrelines come within one wire
/// diameter (their surfaces touch or cross). Pieces nearer than [`SELF_SKIP_DIAMETERS`] wire
/// diameters along the wire are neighbours.
fn self_overlap(chain: &Chain) -> Option<Hit> {
    let n = chain.n_pieces();
    if n < 2 {
        return None;
    }
    let touch_m = 2.0 * chain.wire_radius_m;
    let skip_m = SELF_SKIP_DIAMETERS * touch_m;
    let total_m = chain.total_arc_m;
    let cell_m = touch_m.max(chain.max_piece_m);
    if !(cell_m > 0.0 && cell_m.is_finite()) {
        return None;
    }
    let bounds = chain.bounds();
    let grid = Grid::build(chain, cell_m, &bounds);
    let reach = bounds.inflated(touch_m);
    let arc = &chain.arc_m;
    scan(chain, chain, &grid, touch_m, &reach, |i, j| {
        // Each unordered pair once.
        if j <= i {
            return true;
        }
        // Pieces are stored in curve order, so piece j starts after piece i ends.
        let mut along_m = arc[j][0] - arc[i][1];
        if chain.closed {
            along_m = along_m.min(total_m - arc[j][1] + arc[i][0]);
        }
        along_m < skip_m
    })
}

/// Node of a bounding-box tree over a run of consecutive pieces.
#[derive(Debug)]
struct Node {
    bounds: Aabb,
    first: usize,
    count: usize,
    /// Child nodes, or `None` for a leaf.
    children: Option<(usize, usize)>,
}

/// Pieces per leaf: small enough to prune well, large enough that the tree stays shallow.
const LEAF_PIECES: usize = 8;

/// Bounding-box tree over a chain. Consecutive pieces are close in space, so halving index
/// ranges gives tight boxes without any sorting.
fn build_tree(chain: &Chain) -> Vec<Node> {
    fn build(chain: &Chain, first: usize, count: usize, nodes: &mut Vec<Node>) -> usize {
        let idx = nodes.len();
        nodes.push(Node {
            bounds: Aabb::empty(),
            first,
            count,
            children: None,
        });
        if count <= LEAF_PIECES {
            let mut b = Aabb::empty();
            for i in first..first + count {
                b = b.union(&chain.piece_box(i));
            }
            nodes[idx].bounds = b;
        } else {
            let half = count / 2;
            let left = build(chain, first, half, nodes);
            let right = build(chain, first + half, count - half, nodes);
            nodes[idx].bounds = nodes[left].bounds.union(&nodes[right].bounds);
            nodes[idx].children = Some((left, right));
        }
        idx
    }
    let mut nodes = Vec::with_capacity(2 * chain.n_pieces() / LEAF_PIECES + 2);
    build(chain, 0, chain.n_pieces(), &mut nodes);
    nodes
}

/// The closest pair of pieces of two non-empty chains whose squared centreline distance is at
/// most `bound_d2` (infinity: the closest pair at any range), by branch and bound over their
/// bounding-box trees `ta`, `tb`: a pair of nodes is opened only while its boxes are no farther
/// than the best pair of pieces found so far (or the bound), nearer pairs first.
fn nearest_pair_tree(a: &Chain, ta: &[Node], b: &Chain, tb: &[Node], bound_d2: f64) -> Option<Hit> {
    let mut best_d2 = bound_d2;
    let mut best: Option<(usize, usize)> = None;
    let mut stack = vec![(0usize, 0usize)];
    while let Some((na, nb)) = stack.pop() {
        let (node_a, node_b) = (&ta[na], &tb[nb]);
        let gap2 = node_a.bounds.dist2(&node_b.bounds);
        if gap2 > best_d2 || (best.is_some() && gap2 >= best_d2) {
            continue;
        }
        match (node_a.children, node_b.children) {
            (None, None) => {
                for i in node_a.first..node_a.first + node_a.count {
                    let (p, q) = a.piece(i);
                    for j in node_b.first..node_b.first + node_b.count {
                        let (r, s) = b.piece(j);
                        let d2 = segment_distance2(&p, &q, &r, &s).0;
                        if d2 < best_d2 || (best.is_none() && d2 <= best_d2) {
                            best_d2 = d2;
                            best = Some((i, j));
                        }
                    }
                }
            }
            (ca, cb) => {
                // Open the larger node; push the farther child pair first so the nearer one is
                // explored first and tightens the bound early.
                let pairs = match (ca, cb) {
                    (Some((l, r)), _) if cb.is_none() || node_a.count >= node_b.count => {
                        [(l, nb), (r, nb)]
                    }
                    (_, Some((l, r))) => [(na, l), (na, r)],
                    // Both None is the arm above; (Some, None) is taken by the first arm.
                    _ => continue,
                };
                let d = |&(x, y): &(usize, usize)| ta[x].bounds.dist2(&tb[y].bounds);
                let (near, far) = if d(&pairs[0]) <= d(&pairs[1]) {
                    (pairs[0], pairs[1])
                } else {
                    (pairs[1], pairs[0])
                };
                stack.push(far);
                stack.push(near);
            }
        }
    }
    let (i, j) = best?;
    let (p, q) = a.piece(i);
    let (r, s) = b.piece(j);
    let (d2, ca, cb) = segment_distance2(&p, &q, &r, &s);
    Some(Hit {
        d2,
        ia: i,
        ib: j,
        ca,
        cb,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::winding::{Model, Role};
    use nalgebra::Unit;

    fn winding(name: &str, wire_diameter_m: f64, shape: Shape) -> Winding {
        Winding {
            name: name.to_string(),
            role: Role::Other,
            model: Model::Ring,
            wire_diameter_m,
            segments_per_turn: None,
            tap: None,
            conductor: Default::default(),
            shape,
        }
    }

    fn z_axis() -> Unit<Vector3<f64>> {
        Vector3::z_axis()
    }

    fn helix(name: &str, z_m: f64, radius_m: f64, length_m: f64, turns: f64, d_m: f64) -> Winding {
        winding(
            name,
            d_m,
            Shape::Helix {
                origin_m: Point3::new(0.0, 0.0, z_m),
                axis: z_axis(),
                radius_m,
                length_m,
                turns,
            },
        )
    }

    fn spiral(name: &str, z_m: f64, inner_m: f64, outer_m: f64, turns: f64, d_m: f64) -> Winding {
        winding(
            name,
            d_m,
            Shape::Spiral {
                origin_m: Point3::new(0.0, 0.0, z_m),
                axis: z_axis(),
                inner_radius_m: inner_m,
                outer_radius_m: outer_m,
                turns,
            },
        )
    }

    fn ring(name: &str, centre_m: Point3<f64>, radius_m: f64, count: u32, d_m: f64) -> Winding {
        winding(
            name,
            d_m,
            Shape::Ring {
                origin_m: centre_m,
                axis: z_axis(),
                radius_m,
                count,
            },
        )
    }

    fn polyline(name: &str, pts: &[[f64; 3]], closed: bool, d_m: f64) -> Winding {
        winding(
            name,
            d_m,
            Shape::Polyline {
                points_m: pts.iter().map(|p| Point3::from(*p)).collect(),
                closed,
            },
        )
    }

    fn design(windings: Vec<Winding>) -> Design {
        Design {
            version: 1,
            windings,
            ..Default::default()
        }
    }

    /// The reference secondary: 800 turns of 0.4 mm wire, radius 50 mm, 0.40 m long from z = 0.10.
    fn secondary() -> Winding {
        helix("secondary", 0.10, 0.05, 0.40, 800.0, 0.0004)
    }

    /// Every pair of pieces: the obviously correct answer the fast paths must reproduce.
    fn brute_min_d(a: &Chain, b: &Chain) -> f64 {
        let mut best = f64::INFINITY;
        for i in 0..a.n_pieces() {
            let (p, q) = a.piece(i);
            for j in 0..b.n_pieces() {
                let (r, s) = b.piece(j);
                best = best.min(segment_distance2(&p, &q, &r, &s).0);
            }
        }
        best.sqrt()
    }

    #[test]
    fn segment_distance_cases() {
        let p = |x, y, z| Point3::new(x, y, z);
        // Crossing at right angles, 1 apart in z.
        let (d2, ..) = segment_distance2(
            &p(-1.0, 0.0, 0.0),
            &p(1.0, 0.0, 0.0),
            &p(0.0, -1.0, 1.0),
            &p(0.0, 1.0, 1.0),
        );
        assert!((d2 - 1.0).abs() < 1e-15);
        // Parallel and overlapping, 2 apart.
        let (d2, ..) = segment_distance2(
            &p(0.0, 0.0, 0.0),
            &p(1.0, 0.0, 0.0),
            &p(0.5, 2.0, 0.0),
            &p(1.5, 2.0, 0.0),
        );
        assert!((d2 - 4.0).abs() < 1e-15);
        // Collinear with a gap of 1 between the ends.
        let (d2, ..) = segment_distance2(
            &p(0.0, 0.0, 0.0),
            &p(1.0, 0.0, 0.0),
            &p(2.0, 0.0, 0.0),
            &p(3.0, 0.0, 0.0),
        );
        assert!((d2 - 1.0).abs() < 1e-15);
        // End point to interior.
        let (d2, ca, cb) = segment_distance2(
            &p(0.0, 0.0, 0.0),
            &p(0.0, 0.0, 1.0),
            &p(-1.0, 3.0, 2.0),
            &p(1.0, 3.0, 2.0),
        );
        assert!((d2 - 10.0).abs() < 1e-14);
        assert_eq!(ca, p(0.0, 0.0, 1.0));
        assert_eq!(cb, p(0.0, 3.0, 2.0));
        // Degenerate (a point) against a segment.
        let (d2, ..) = segment_distance2(
            &p(0.5, 1.0, 0.0),
            &p(0.5, 1.0, 0.0),
            &p(0.0, 0.0, 0.0),
            &p(1.0, 0.0, 0.0),
        );
        assert!((d2 - 1.0).abs() < 1e-15);
    }

    #[test]
    fn sampling_keeps_chords_within_the_sagitta() {
        let shapes = [
            secondary(),
            spiral("s", 0.0, 0.002, 0.13, 6.0, 0.0026),
            winding(
                "c",
                0.001,
                Shape::Cone {
                    origin_m: Point3::origin(),
                    axis: Unit::new_normalize(Vector3::new(1.0, 2.0, 3.0)),
                    inner_radius_m: 0.01,
                    outer_radius_m: 0.2,
                    height_m: 0.05,
                    turns: 7.5,
                },
            ),
            ring("r", Point3::new(0.1, 0.0, 0.0), 0.3, 4, 0.002),
        ];
        for w in &shapes {
            let sagitta = sampling_sagitta_m(w);
            assert!(sagitta <= MAX_SAGITTA_M && sagitta <= 0.1 * w.wire_radius_m());
            let chain = Chain::of(w, None);
            let n = chain.n_pieces();
            let mut worst: f64 = 0.0;
            for i in 0..n {
                let (p, q) = chain.piece(i);
                // Exact curve points inside the piece's parameter interval.
                for f in [0.25, 0.5, 0.75] {
                    let t = (i as f64 + f) / n as f64;
                    let c = w.shape.point_at(t);
                    let (d2, ..) = segment_distance2(&c, &c, &p, &q);
                    worst = worst.max(d2.sqrt());
                }
            }
            assert!(worst <= sagitta, "{}: {worst} > {sagitta}", w.name);
            // And not absurdly fine: within a factor 3 of the bound.
            assert!(worst > sagitta / 3.0, "{}: {worst} << {sagitta}", w.name);
        }
    }

    #[test]
    fn primary_helix_1mm_outside_secondary_is_accepted() {
        // Primary wire 2 mm; its centreline radius puts the two surfaces 1 mm apart.
        let r_m = 0.05 + 0.0002 + 0.001 + 0.001;
        let primary = helix("primary", 0.10, r_m, 0.10, 10.0, 0.002);
        let d = design(vec![secondary(), primary.clone()]);
        check_overlaps(&d, "t.toml").unwrap();
        let gap = min_surface_gap_m(&secondary(), &primary);
        assert!((gap - 0.001).abs() < 1e-5, "{gap}");
    }

    #[test]
    fn primary_helix_crossing_secondary_wire_is_rejected() {
        // 0.1 mm too far in: the wires overlap by 0.1 mm.
        let r_m = 0.05 + 0.0002 + 0.001 - 0.0001;
        let primary = helix("primary", 0.10, r_m, 0.10, 10.0, 0.002);
        let d = design(vec![secondary(), primary.clone()]);
        let e = check_overlaps(&d, "t.toml").unwrap_err();
        match &e {
            DesignError::Overlap {
                item, other, gap_m, ..
            } => {
                assert_eq!(item, "winding 'primary'");
                assert_eq!(other, "winding 'secondary'");
                assert!((gap_m + 0.0001).abs() < 1e-5, "{gap_m}");
            }
            other => panic!("{other:?}"),
        }
        let msg = e.to_string();
        assert!(
            msg.starts_with("t.toml: winding 'primary': key 'origin': "),
            "{msg}"
        );
        assert!(msg.contains("winding 'secondary'"), "{msg}");
        assert!((min_surface_gap_m(&primary, &secondary()) + 0.0001).abs() < 1e-5);
    }

    #[test]
    fn small_coil_nested_inside_secondary_is_accepted() {
        let pickup = helix("pickup", 0.20, 0.02, 0.05, 20.0, 0.001);
        let d = design(vec![secondary(), pickup.clone()]);
        check_overlaps(&d, "t.toml").unwrap();
        let gap = min_surface_gap_m(&secondary(), &pickup);
        let expected = 0.05 - 0.02 - 0.0002 - 0.0005;
        assert!((gap - expected).abs() < 1e-5, "{gap} vs {expected}");
    }

    #[test]
    fn spiral_through_the_secondary_wire_is_rejected() {
        // In the plane of the helix start, from inside to outside the helix radius.
        let flat = spiral("flat", 0.10, 0.03, 0.07, 5.0, 0.001);
        let d = design(vec![secondary(), flat]);
        let e = check_overlaps(&d, "t.toml").unwrap_err();
        assert!(matches!(e, DesignError::Overlap { .. }), "{e:?}");
    }

    #[test]
    fn reference_scenes_give_the_expected_gaps() {
        // The 800-turn secondary (178 000 pieces when sampled whole) against: a 10-turn spiral
        // whose wire passes 1 mm under the helix wire (boxes apart: no sampling at all); a
        // 10-turn spiral inside the helix at mid-height (boxes overlap: the helix is sampled
        // near the spiral's plane only); a 100-turn helix wound 1 mm outside it over its whole
        // length (everything is near: the grid does all the work).
        let d_spiral = 0.001;
        let below = spiral(
            "below",
            0.10 - 0.0002 - 0.5 * d_spiral - 0.001,
            0.03,
            0.07,
            10.0,
            d_spiral,
        );
        let inside = spiral("inside", 0.30, 0.01, 0.045, 10.0, d_spiral);
        let around = helix(
            "around",
            0.10,
            0.05 + 0.0002 + 0.001 + 0.0002,
            0.40,
            100.0,
            0.0004,
        );
        for (other, gap_expected) in [
            (below, 0.001),
            (inside, 0.05 - 0.045 - 0.0002 - 0.0005),
            (around, 0.001),
        ] {
            let d = design(vec![secondary(), other.clone()]);
            check_overlaps(&d, "t.toml").unwrap();
            let gap = min_surface_gap_m(&secondary(), &other);
            // The helix rises 0.5 mm per turn, so the approach to the spiral below can be up
            // to 0.5 mm wider than the gap at the helix's start.
            assert!(
                gap >= gap_expected - 1e-5 && gap <= gap_expected + 5e-4 + 1e-5,
                "{}: {gap} vs {gap_expected}",
                other.name
            );
        }
    }

    #[test]
    fn long_helix_is_sampled_only_near_the_other_winding() {
        // 100 000 turns of 0.08 mm wire at 0.1 mm pitch: some 35 million pieces if sampled
        // whole. A ring beside it, at mid-height, whose wire reaches 0.04 mm into the helix wire.
        let big = helix("big", 0.0, 0.1, 10.0, 100_000.0, 0.00008);
        let pick = winding(
            "pick",
            0.0001,
            Shape::Ring {
                origin_m: Point3::new(0.13, 0.0, 5.0),
                axis: Vector3::y_axis(),
                radius_m: 0.02995,
                count: 1,
            },
        );
        let reach = curve_bounds(&pick.shape).inflated(0.00009);
        let near = Chain::of(&big, Some(&reach));
        assert!(near.n_pieces() < 100_000, "{}", near.n_pieces());
        let e = check_overlaps(&design(vec![big, pick]), "t.toml").unwrap_err();
        match e {
            DesignError::Overlap { gap_m, .. } => assert!((gap_m + 4e-5).abs() < 1e-5, "{gap_m}"),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn curve_bounds_hold_the_sampled_curve() {
        let tilted = Unit::new_normalize(Vector3::new(0.3, -0.5, 0.8));
        let shapes = [
            Shape::Helix {
                origin_m: Point3::new(0.1, 0.2, 0.3),
                axis: tilted,
                radius_m: 0.05,
                length_m: 0.2,
                turns: 7.3,
            },
            Shape::Cone {
                origin_m: Point3::origin(),
                axis: tilted,
                inner_radius_m: 0.02,
                outer_radius_m: 0.09,
                height_m: 0.04,
                turns: 4.0,
            },
            Shape::Spiral {
                origin_m: Point3::origin(),
                axis: Vector3::x_axis(),
                inner_radius_m: 0.02,
                outer_radius_m: 0.09,
                turns: 4.0,
            },
        ];
        for shape in shapes {
            let b = curve_bounds(&shape).inflated(1e-12);
            for k in 0..=10_000 {
                let p = shape.point_at(k as f64 / 10_000.0);
                assert!(b.intersects(&Aabb::of_segment(&p, &p)), "{shape:?} at {k}");
            }
        }
    }

    #[test]
    fn ring_bundle_is_exempt_from_itself_but_not_from_others() {
        let bundle = ring("bundle", Point3::new(0.0, 0.0, 0.3), 0.05, 50, 0.001);
        check_overlaps(&design(vec![bundle.clone()]), "t.toml").unwrap();
        let e = check_overlaps(&design(vec![secondary(), bundle]), "t.toml").unwrap_err();
        assert!(
            matches!(&e, DesignError::Overlap { item, .. } if item == "winding 'bundle'"),
            "{e:?}"
        );
    }

    #[test]
    fn polyline_crossing_itself_is_rejected() {
        // A bow tie: the first and third pieces cross in the middle.
        let bow = polyline(
            "bow",
            &[
                [0.0, 0.0, 0.0],
                [0.1, 0.1, 0.0],
                [0.1, 0.0, 0.0],
                [0.0, 0.1, 0.0],
            ],
            true,
            0.001,
        );
        let e = check_overlaps(&design(vec![bow]), "t.toml").unwrap_err();
        match &e {
            DesignError::SelfIntersection {
                piece_a,
                piece_a_end,
                piece_b,
                piece_b_end,
                near_m,
                ..
            } => {
                assert_eq!((*piece_a, *piece_a_end), (0, 1));
                assert_eq!((*piece_b, *piece_b_end), (2, 3));
                assert!((near_m[0] - 0.05).abs() < 1e-9 && (near_m[1] - 0.05).abs() < 1e-9);
            }
            other => panic!("{other:?}"),
        }
        let msg = e.to_string();
        assert!(
            msg.contains("winding 'bow'") && msg.contains("key 'points'"),
            "{msg}"
        );
    }

    #[test]
    fn polyline_square_with_sharp_corners_is_accepted() {
        let square = polyline(
            "square",
            &[
                [0.0, 0.0, 0.0],
                [0.1, 0.0, 0.0],
                [0.1, 0.1, 0.0],
                [0.0, 0.1, 0.0],
            ],
            true,
            0.002,
        );
        check_overlaps(&design(vec![square]), "t.toml").unwrap();
    }

    #[test]
    fn polyline_hairpin_is_checked_along_its_legs() {
        // Out along x, 1.5 mm across, back along x: the legs are 1.5 mm apart centre to centre.
        let pts = [
            [0.0, 0.0, 0.0],
            [0.1, 0.0, 0.0],
            [0.1, 0.0015, 0.0],
            [0.0, 0.0015, 0.0],
        ];
        let thick = polyline("pin", &pts, false, 0.002);
        let e = check_overlaps(&design(vec![thick]), "t.toml").unwrap_err();
        assert!(
            matches!(
                e,
                DesignError::SelfIntersection {
                    piece_a: 0,
                    piece_b: 2,
                    ..
                }
            ),
            "{e:?}"
        );
        let thin = polyline("pin", &pts, false, 0.001);
        check_overlaps(&design(vec![thin]), "t.toml").unwrap();
    }

    #[test]
    fn polyline_folded_back_on_its_neighbour_is_rejected() {
        // The second piece runs back along the first at a slant: the long neighbours meet far
        // from their shared point, which splitting the pieces exposes.
        let fold = polyline(
            "fold",
            &[[0.0, 0.0, 0.0], [0.1, 0.0, 0.0], [0.0, 0.0005, 0.0]],
            false,
            0.001,
        );
        let e = check_overlaps(&design(vec![fold]), "t.toml").unwrap_err();
        assert!(
            matches!(
                e,
                DesignError::SelfIntersection {
                    piece_a: 0,
                    piece_b: 1,
                    ..
                }
            ),
            "{e:?}"
        );
    }

    #[test]
    fn polyline_against_helix() {
        // A straight lead along the axis of the secondary is clear; one through its wire is not.
        let lead = polyline("lead", &[[0.0, 0.0, 0.0], [0.0, 0.0, 0.6]], false, 0.002);
        check_overlaps(&design(vec![secondary(), lead]), "t.toml").unwrap();
        let tap = polyline("tap", &[[0.0, 0.0, 0.3], [0.1, 0.0, 0.3]], false, 0.002);
        let e = check_overlaps(&design(vec![secondary(), tap]), "t.toml").unwrap_err();
        assert!(
            matches!(&e, DesignError::Overlap { key, .. } if *key == "points"),
            "{e:?}"
        );
    }

    #[test]
    fn far_apart_coaxial_rings_give_the_exact_gap() {
        let a = ring("a", Point3::new(0.0, 0.0, 0.0), 0.1, 1, 0.001);
        let b = ring("b", Point3::new(0.0, 0.0, 1.0), 0.1, 1, 0.002);
        let gap = min_surface_gap_m(&a, &b);
        assert!((gap - (1.0 - 0.0005 - 0.001)).abs() < 1e-12, "{gap}");
    }

    #[test]
    fn far_apart_windings_match_brute_force() {
        // Far apart: the tree must prune whole turns at once and still find the exact pair.
        let a = helix("a", 0.0, 0.05, 0.1, 10.0, 0.001);
        let b = spiral("b", 0.5, 0.01, 0.2, 3.0, 0.002);
        let (ca, cb) = (Chain::of(&a, None), Chain::of(&b, None));
        let fast = min_centreline_distance_m(&ca, &cb);
        let slow = brute_min_d(&ca, &cb);
        assert_eq!(fast, slow);
        // 0.4 m between the helix top and the spiral plane, a little more where the spiral
        // crosses the helix radius away from the helix's end point.
        assert!((0.4..0.402).contains(&fast), "{fast}");
    }

    /// Small deterministic generator for the random scenes (xorshift64*).
    struct Rng(u64);

    impl Rng {
        fn next_f64(&mut self) -> f64 {
            self.0 ^= self.0 >> 12;
            self.0 ^= self.0 << 25;
            self.0 ^= self.0 >> 27;
            (self.0.wrapping_mul(0x2545_f491_4f6c_dd1d) >> 11) as f64 / (1u64 << 53) as f64
        }

        fn range(&mut self, lo: f64, hi: f64) -> f64 {
            lo + (hi - lo) * self.next_f64()
        }
    }

    fn random_winding(rng: &mut Rng, name: &str) -> Winding {
        let origin = Point3::new(
            rng.range(-0.05, 0.05),
            rng.range(-0.05, 0.05),
            rng.range(-0.05, 0.05),
        );
        let axis = Unit::new_normalize(Vector3::new(
            rng.range(-1.0, 1.0),
            rng.range(-1.0, 1.0),
            rng.range(0.1, 1.0),
        ));
        // A thick wire keeps the piece counts small enough for the brute force.
        let d = rng.range(0.01, 0.03);
        let kind = (rng.next_f64() * 4.0) as usize;
        let shape = match kind {
            0 => Shape::Helix {
                origin_m: origin,
                axis,
                radius_m: rng.range(0.02, 0.06),
                length_m: rng.range(0.05, 0.1),
                turns: rng.range(0.5, 2.0),
            },
            1 => Shape::Cone {
                origin_m: origin,
                axis,
                inner_radius_m: rng.range(0.02, 0.04),
                outer_radius_m: rng.range(0.05, 0.08),
                height_m: rng.range(0.0, 0.03),
                turns: rng.range(0.5, 1.5),
            },
            2 => Shape::Ring {
                origin_m: origin,
                axis,
                radius_m: rng.range(0.02, 0.08),
                count: 1,
            },
            _ => Shape::Polyline {
                points_m: (0..5)
                    .map(|_| {
                        Point3::new(
                            rng.range(-0.1, 0.1),
                            rng.range(-0.1, 0.1),
                            rng.range(-0.1, 0.1),
                        )
                    })
                    .collect(),
                closed: rng.next_f64() < 0.5,
            },
        };
        winding(name, d, shape)
    }

    #[test]
    fn grid_and_tree_match_brute_force_on_random_scenes() {
        let mut rng = Rng(0x5eed_c011_f1e1_d000);
        for case in 0..60 {
            let a = random_winding(&mut rng, "a");
            let b = random_winding(&mut rng, "b");
            let (ca, cb) = (Chain::of(&a, None), Chain::of(&b, None));
            let slow = brute_min_d(&ca, &cb);
            // The grid may measure a pair with the segments swapped, which rounds differently
            // (most for nearly parallel pieces): agreement to 1e-12 relative, 1 fm absolute.
            let same = |x: f64| (x - slow).abs() <= 1e-12 * slow + 1e-15;
            let (ta, tb) = (build_tree(&ca), build_tree(&cb));
            let tree = nearest_pair_tree(&ca, &ta, &cb, &tb, f64::INFINITY)
                .unwrap()
                .d2
                .sqrt();
            assert!(same(tree), "case {case}: tree {tree} vs {slow}");
            let combined = min_centreline_distance_m(&ca, &cb);
            assert!(same(combined), "case {case}: combined {combined} vs {slow}");
            // The grid alone, with a radius just above the answer, finds the same pair.
            let grid =
                nearest_within_grid(&ca, &cb, slow * 1.0001 + 1e-12).map(|hit| hit.d2.sqrt());
            assert!(
                grid.is_some_and(same),
                "case {case}: grid {grid:?} vs {slow}"
            );
            // And reports nothing when the radius is below it.
            if slow > 1e-9 {
                assert!(
                    nearest_within_grid(&ca, &cb, slow * 0.999).is_none(),
                    "case {case}"
                );
            }
        }
    }

    #[test]
    fn check_and_gap_agree() {
        let mut rng = Rng(42);
        let (mut n_clear, mut n_overlap) = (0, 0);
        for case in 0..80 {
            let a = random_winding(&mut rng, "a");
            let b = random_winding(&mut rng, "b");
            // Self-crossing polylines are not the point here.
            let both_clear_alone = [&a, &b]
                .iter()
                .all(|w| check_overlaps(&design(vec![(*w).clone()]), "t.toml").is_ok());
            if !both_clear_alone {
                continue;
            }
            let gap = min_surface_gap_m(&a, &b);
            let result = check_overlaps(&design(vec![a, b]), "t.toml");
            assert_eq!(
                result.is_err(),
                gap <= 0.0,
                "case {case}: gap {gap}, {result:?}"
            );
            if gap <= 0.0 {
                n_overlap += 1;
            } else {
                n_clear += 1;
            }
        }
        // The scenes must exercise both outcomes for the agreement to mean anything.
        assert!(
            n_clear >= 5 && n_overlap >= 5,
            "{n_clear} clear, {n_overlap} overlapping"
        );
    }

    #[test]
    fn empty_polyline_gives_infinite_gap() {
        let nothing = polyline("nothing", &[[0.0, 0.0, 0.0]], false, 0.001);
        assert_eq!(min_surface_gap_m(&nothing, &secondary()), f64::INFINITY);
    }

    /// A pair of windings placed as builders place a primary: coaxial (a spiral or helix
    /// across the secondary's lower turns, close outside it), nested inside it, overlapping its
    /// wire, offset sideways or tilted a little; gaps from about -1 mm to 3 mm.
    fn placement(rng: &mut Rng) -> (Winding, Winding) {
        let r_sec = 0.05;
        let d_sec = rng.range(0.2e-3, 0.8e-3);
        let turns = rng.range(8.0, 30.0).floor();
        let length = turns * d_sec * rng.range(1.1, 2.0);
        let secondary = helix("s", 0.1, r_sec, length, turns, d_sec);
        let d_pri = rng.range(0.5e-3, 3e-3);
        let clearance = rng.range(-1e-3, 3e-3);
        let height = 0.1 + rng.range(-0.02, 0.25) * length * 4.0;
        let kind = (rng.next_f64() * 5.0) as usize;
        let edge = r_sec + 0.5 * (d_sec + d_pri) + clearance;
        let mut primary = match kind {
            // A flat spiral starting just outside the secondary, at a height across its span.
            0 => spiral("p", height, edge, edge + 0.03, rng.range(2.0, 6.0), d_pri),
            // A helix wound over the secondary.
            1 => helix("p", height, edge, 0.01, 3.0, d_pri),
            // A helix nested inside it.
            2 => helix(
                "p",
                height,
                r_sec - 0.5 * (d_sec + d_pri) - clearance,
                0.01,
                3.0,
                d_pri,
            ),
            // A spiral whose inner turns reach across the secondary's wire.
            3 => spiral(
                "p",
                height,
                r_sec - rng.range(0.0, 0.01),
                r_sec + 0.02,
                4.0,
                d_pri,
            ),
            // A ring beside the secondary's wire.
            _ => ring("p", Point3::new(0.0, 0.0, height), edge, 1, d_pri),
        };
        // Offset or tilt one in three pairs a little.
        let moved = rng.next_f64();
        if moved < 0.33 {
            let shift = rng.range(-2e-3, 2e-3);
            match &mut primary.shape {
                Shape::Helix { origin_m, .. }
                | Shape::Spiral { origin_m, .. }
                | Shape::Ring { origin_m, .. } => origin_m.x += shift,
                _ => {}
            }
        } else if moved < 0.66 {
            let tilt = rng.range(-0.05, 0.05);
            let n = Unit::new_normalize(Vector3::new(tilt.sin(), 0.0, tilt.cos()));
            match &mut primary.shape {
                Shape::Helix { axis, .. }
                | Shape::Spiral { axis, .. }
                | Shape::Ring { axis, .. } => *axis = n,
                _ => {}
            }
        }
        (secondary, primary)
    }

    #[test]
    fn fast_checks_agree_with_the_sampled_reference_on_random_placements() {
        // The reference: the whole sampled centrelines of both wires, every piece pair within
        // reach found through the hash grid, with no closed form and no box restriction. Its
        // stated tolerance is the two sampling sagittas (each chain strays from its curve by at
        // most one).
        let mut rng = Rng(0x0c0a_c1a1_5eed_0001);
        let (mut coaxial_closed_form, mut near_band, mut touching, mut by_trace) = (0, 0, 0, 0);
        let mut by_curve = 0;
        for case in 0..400 {
            let (a, b) = placement(&mut rng);
            let touch_m = a.wire_radius_m() + b.wire_radius_m();
            let (ca, cb) = (Chain::of(&a, None), Chain::of(&b, None));
            let reference = nearest_within_grid(&ca, &cb, touch_m).is_some();
            let gap = min_centreline_distance_m(&ca, &cb) - touch_m;
            let tol = sampling_sagitta_m(&a) + sampling_sagitta_m(&b);
            let (ba, bb) = (curve_bounds(&a.shape), curve_bounds(&b.shape));
            let one_off = wires_touch(&a, &b, &ba, &bb).is_some();
            let prepared =
                wires_touch_prepared(&PreparedWire::new(&a), &PreparedWire::new(&b)).is_some();
            coaxial_closed_form += usize::from(coaxial_clear(&a, &b));
            by_trace += usize::from(
                !coaxial_clear(&a, &b) && (trace_clears(&a, &cb, &b) || trace_clears(&b, &ca, &a)),
            );
            by_curve += usize::from(
                !coaxial_clear(&a, &b)
                    && (curve_clears_trace(&a, &b) == Some(true)
                        || curve_clears_trace(&b, &a) == Some(true)),
            );
            touching += usize::from(reference);
            for (name, fast) in [("one-off", one_off), ("prepared", prepared)] {
                // Never more permissive than the reference, anywhere.
                assert!(
                    fast || !reference,
                    "case {case} {name}: accepted a pair the reference refuses (gap {gap})"
                );
                if gap.abs() > 2.0 * tol {
                    assert_eq!(fast, reference, "case {case} {name}: gap {gap}, tol {tol}");
                } else {
                    near_band += 1;
                }
            }
            // The closed-form bound never exceeds the sampled gap by more than the tolerance.
            if let Some(bound) = coaxial_gap_lower_bound_m(&a, &b) {
                assert!(bound <= gap + tol, "case {case}: bound {bound} > gap {gap}");
            }
        }
        // The scenes exercise every branch: closed form, touching pairs, the tolerance band.
        assert!(coaxial_closed_form > 50, "{coaxial_closed_form}");
        assert!(by_trace > 20, "{by_trace}");
        assert!(by_curve > 20, "{by_curve}");
        assert!(touching > 20 && touching < 380, "{touching}");
        println!(
            "coaxial closed form {coaxial_closed_form}, by trace {by_trace}, by the bisected \
             curve {by_curve}, touching {touching}, in band {near_band}"
        );
    }

    #[test]
    fn a_spiral_across_the_secondary_is_cleared_in_closed_form() {
        // The placement builders use most: a flat spiral around the secondary's lower turns,
        // 2.8 mm clear of its wire. The meridian traces are a vertical segment at r = 55 mm
        // and a horizontal one from r = 60 mm: 5 mm between centrelines, 2.8 mm between
        // surfaces (wires of 0.4 mm and 4 mm).
        let s = helix("s", 0.1, 0.055, 0.45, 900.0, 0.4e-3);
        let p = spiral("p", 0.15, 0.06, 0.14, 6.0, 4e-3);
        let bound = coaxial_gap_lower_bound_m(&s, &p).unwrap();
        assert!((bound - 2.8e-3).abs() < 1e-12, "{bound}");
        assert!(coaxial_clear(&s, &p));
        // Tilted by 1e-6 rad it is no longer coaxial: the sampled check answers, the same way.
        let mut tilted = p.clone();
        if let Shape::Spiral { axis, .. } = &mut tilted.shape {
            *axis = Unit::new_normalize(Vector3::new(1e-6, 0.0, 1.0));
        }
        assert!(coaxial_gap_lower_bound_m(&s, &tilted).is_none());
        assert!(
            wires_touch_prepared(&PreparedWire::new(&s), &PreparedWire::new(&tilted)).is_none()
        );
    }
}
