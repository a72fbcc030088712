//! The secondary cut into sections for its distributed model: the turn-to-turn inductance matrix
//! of its ring model and the sections' inductance matrix as blocks of it, and the mutual
//! inductance of another winding (the primary) with each section.
//!
//! Every entry comes through the one path to an inductance, [`inductance_entry`], applied to
//! single rings of the secondary's ring model (with their images over a conducting ground):
//! along a uniform stack the turn-to-turn matrix is Toeplitz (entry (i, j) depends on |i - j|
//! only) and its image part Hankel (on i + j only), so N turns cost O(N) kernel calls, and the
//! section blocks are sums of those numbers. Section k of n holds the turns from k N / n to
//! (k + 1) N / n; a turn cut by a boundary belongs to both sections in proportion (its current
//! weight split between them, the membership W_ik in turns), so that the blocks add up exactly
//! to the whole winding's inductance: sum_kl (W^T M W)_kl = 1^T M 1, whatever n.

use crate::assembly::{WindingModel, inductance_entry};
use crate::error::SolverError;
use crate::par::{Par, map_indexed};
use coilfield_geometry::discretise::{Ring, RingModel, ring_model};
use coilfield_geometry::{Ground, Winding, image_ring_model};
use nalgebra::DMatrix;

/// The turn-to-turn inductance matrix (H, per ampere in each ring) of a winding's ring model,
/// images of a conducting ground included; entries built on demand from O(N) numbers.
#[derive(Debug, Clone)]
pub(crate) struct TurnMatrix {
    /// The whole winding's ring model.
    model: RingModel,
    /// The rings, start to end, and the turn interval [lo, hi] each stands for.
    rings: Vec<Ring>,
    spans: Vec<(f64, f64)>,
    /// Leading whole rings that form the uniform stack (Toeplitz part).
    n_uniform: usize,
    /// m[s] = entry(i, i + s) within the stack, s >= 0 (m[0] the self term of a whole ring).
    toeplitz: Vec<f64>,
    /// h[t] = the image part of entry(i, j) within the stack, t = i + j.
    hankel: Option<Vec<f64>>,
    /// Full rows (every column) of the rings beyond the stack (a partial last turn).
    rows: Vec<Vec<f64>>,
}

/// One ring as a winding model of its own (its weight kept), and the same ring mirrored.
fn single(model: &RingModel, ring: &Ring) -> RingModel {
    RingModel {
        origin_m: ring.centre_m,
        axis: model.axis,
        rings: vec![*ring],
        wire_radius_m: model.wire_radius_m,
        uniform_pitch_m: None,
    }
}

impl TurnMatrix {
    /// The turn matrix of `winding`'s ring model (its whole wire, a helix secondary), over
    /// `ground` when that plane is conducting.
    pub(crate) fn new(
        winding: &Winding,
        ground: Option<Ground>,
        par: Par,
    ) -> Result<TurnMatrix, SolverError> {
        let model = ring_model(&winding.without_tap()).ok_or_else(|| SolverError::Resonance {
            reason: format!(
                "winding '{}' has no axis: the distributed model needs a helix",
                winding.name
            ),
        })?;
        let turns = winding.shape.turns().unwrap_or(1.0);
        let ground = ground.filter(|g| g.conducting);
        let n_rings = model.rings.len();
        let n_uniform = match model.uniform_pitch_m {
            Some(_) => model.rings.iter().take_while(|r| r.weight == 1.0).count(),
            None => 0,
        };
        let spans: Vec<(f64, f64)> = (0..n_rings)
            .map(|i| (i as f64, (i as f64 + 1.0).min(turns)))
            .collect();
        let singles: Vec<WindingModel> = model
            .rings
            .iter()
            .map(|r| WindingModel::Rings(single(&model, r)))
            .collect();
        let images: Option<Vec<WindingModel>> = ground.map(|g| {
            model
                .rings
                .iter()
                .map(|r| WindingModel::Rings(image_ring_model(&single(&model, r), &g)))
                .collect()
        });
        // Entry (i, j) per ampere in each ring: the single rings carry their weights.
        let entry = |i: usize, j: usize| -> Result<f64, SolverError> {
            let image = images.as_ref().map(|v| &v[j]);
            let (v, _, _) = inductance_entry(&singles[i], &singles[j], i == j, image, Par::Seq)?;
            Ok(v / (model.rings[i].weight * model.rings[j].weight))
        };
        let toeplitz = map_indexed(n_uniform, par, |s| {
            let free = if s == 0 {
                inductance_entry(&singles[0], &singles[0], true, None, Par::Seq)
            } else {
                inductance_entry(&singles[0], &singles[s], false, None, Par::Seq)
            };
            free.map(|(v, _, _)| v)
        })
        .into_iter()
        .collect::<Result<Vec<f64>, _>>()?;
        let hankel = match &images {
            Some(img) if n_uniform > 0 => Some(
                map_indexed(2 * n_uniform - 1, par, |t| {
                    let a = t.saturating_sub(n_uniform - 1);
                    let b = t - a;
                    crate::assembly::mutual_inductance(&singles[a], &img[b], Par::Seq)
                        .map(|(v, _, _)| v)
                })
                .into_iter()
                .collect::<Result<Vec<f64>, _>>()?,
            ),
            _ => None,
        };
        let rows = (n_uniform..n_rings)
            .map(|i| (0..n_rings).map(|j| entry(i, j)).collect())
            .collect::<Result<Vec<Vec<f64>>, _>>()?;
        Ok(TurnMatrix {
            rings: model.rings.clone(),
            model,
            spans,
            n_uniform,
            toeplitz,
            hankel,
            rows,
        })
    }

    /// The whole winding's inductance (H): the sum of every entry weighted by the rings'
    /// weights, 1^T M 1 in turns.
    #[cfg(test)]
    pub(crate) fn whole_h(&self) -> f64 {
        let bounds = [0.0, self.spans.last().map_or(0.0, |s| s.1)];
        self.sections(&bounds, Par::Seq)[(0, 0)]
    }

    /// Entry (i, j) (H per ampere in each ring).
    fn entry(&self, i: usize, j: usize) -> f64 {
        let (lo, hi) = (i.min(j), i.max(j));
        if hi >= self.n_uniform {
            return self.rows[hi - self.n_uniform][lo];
        }
        let image = self.hankel.as_ref().map_or(0.0, |h| h[i + j]);
        self.toeplitz[hi - lo] + image
    }

    /// Membership of each ring in each section: (ring, section, turns of the ring in it).
    fn membership(&self, bounds_turns: &[f64]) -> Vec<Vec<(usize, f64)>> {
        let n = bounds_turns.len() - 1;
        (0..n)
            .map(|k| {
                let (u0, u1) = (bounds_turns[k], bounds_turns[k + 1]);
                self.spans
                    .iter()
                    .enumerate()
                    .filter_map(|(i, &(lo, hi))| {
                        let w = hi.min(u1) - lo.max(u0);
                        (w > 0.0).then_some((i, w))
                    })
                    .collect()
            })
            .collect()
    }

    /// The n x n inductance matrix (H) of the sections between `bounds_turns` (n + 1 turn
    /// positions from 0 to the winding's turns): L_kl = sum_ij W_ik W_jl M_ij.
    pub(crate) fn sections(&self, bounds_turns: &[f64], par: Par) -> DMatrix<f64> {
        let members = self.membership(bounds_turns);
        let n = members.len();
        let rows = map_indexed(n, par, |k| {
            (k..n)
                .map(|l| {
                    let mut sum = 0.0;
                    for &(i, wi) in &members[k] {
                        for &(j, wj) in &members[l] {
                            sum += wi * wj * self.entry(i, j);
                        }
                    }
                    sum
                })
                .collect::<Vec<f64>>()
        });
        DMatrix::from_fn(n, n, |r, c| {
            let (k, l) = (r.min(c), r.max(c));
            rows[k][l - k]
        })
    }

    /// The mutual inductance (H) of `other` (the primary's model in use, and its image over a
    /// conducting ground) with each section between `bounds_turns`: sum_i W_ik M(other, ring i),
    /// each M through [`inductance_entry`].
    pub(crate) fn mutual_with_sections(
        &self,
        other: &WindingModel,
        ground: Option<Ground>,
        bounds_turns: &[f64],
        par: Par,
    ) -> Result<Vec<f64>, SolverError> {
        let ground = ground.filter(|g| g.conducting);
        let per_ring = map_indexed(self.rings.len(), par, |i| {
            let ring = single(&self.model, &self.rings[i]);
            let image = ground.map(|g| WindingModel::Rings(image_ring_model(&ring, &g)));
            inductance_entry(
                other,
                &WindingModel::Rings(ring),
                false,
                image.as_ref(),
                Par::Seq,
            )
            .map(|(v, _, _)| v / self.rings[i].weight)
        })
        .into_iter()
        .collect::<Result<Vec<f64>, _>>()?;
        Ok(self
            .membership(bounds_turns)
            .iter()
            .map(|m| m.iter().map(|&(i, w)| w * per_ring[i]).sum())
            .collect())
    }
}

/// Section boundaries (turns from the start) of `turns` turns cut into `n` equal sections.
pub(crate) fn equal_bounds(turns: f64, n: usize) -> Vec<f64> {
    (0..=n)
        .map(|k| {
            if k == n {
                turns
            } else {
                turns * k as f64 / n as f64
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::assembly::inductance_report;
    use coilfield_geometry::parse_design;

    const DESIGN: &str = r#"
[[winding]]
name = "secondary"
shape = "helix"
role = "secondary"
origin = [0.0, 0.0, 0.1]
axis = [0.0, 0.0, 1.0]
radius = 0.05
length = 0.15
turns = 300.5
wire_diameter = 0.0004

[[winding]]
name = "primary"
shape = "spiral"
role = "primary"
origin = [0.01, 0.0, 0.12]
axis = [0.1, 0.0, 1.0]
inner_radius = 0.08
outer_radius = 0.12
turns = 5
wire_diameter = 0.002
"#;

    #[test]
    fn sections_add_up_to_the_windings_inductances_through_the_one_path() {
        // The reference: `inductance_report` (the whole windings through inductance_entry:
        // Euler-Maclaurin stack sums and the stack line integral for the tilted primary),
        // which sums the same ring pairs in another way; with and without the images of a
        // conducting ground. n = 7 and 64 cut turns (300.5 / n is not whole).
        for ground in ["", "[ground]\nz = 0.0\nconducting = true\n"] {
            let design = parse_design(&format!("{DESIGN}\n{ground}"), "t.toml").unwrap();
            let report = inductance_report(&design, Par::Seq).unwrap();
            let (l_s, m_sp) = (report.mutual_h[0][0], report.mutual_h[0][1]);
            let tm = TurnMatrix::new(&design.windings[0], design.ground, Par::Rayon).unwrap();
            assert!(((tm.whole_h() - l_s) / l_s).abs() < 1e-12, "{ground}");
            let primary = WindingModel::of(&design.windings[1]);
            for n in [1, 7, 64] {
                let bounds = equal_bounds(300.5, n);
                let l = tm.sections(&bounds, Par::Rayon);
                assert!(((l.sum() - l_s) / l_s).abs() < 1e-12, "{ground} n={n}");
                // Symmetric and positive definite, as an inductance matrix must be.
                assert!((&l - l.transpose()).amax() <= 1e-15 * l.amax());
                assert!(l.clone().cholesky().is_some(), "n={n}");
                let m = tm
                    .mutual_with_sections(&primary, design.ground, &bounds, Par::Seq)
                    .unwrap();
                let total: f64 = m.iter().sum();
                assert!(
                    ((total - m_sp) / m_sp).abs() < 1e-9,
                    "{ground} n={n}: {total} {m_sp}"
                );
            }
        }
    }
}
