//! The axisymmetric problem in the (r, z) half-plane: conductor outlines, dielectric regions and
//! the outer boundary, from a design or built directly (for geometries a design file cannot
//! express: spherical shells, long coaxial cylinders).

use crate::error::SolverError;
use coilfield_geometry::{
    Axis, Design, DesignError, ElectrodeShape, PotentialSpec, Role, Shape, check_axisymmetric,
    dielectric_section_m,
};
use nalgebra::Unit;
use std::f64::consts::TAU;

/// A piece of outline in (r, z) (m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Piece {
    /// A straight piece from `p0` to `p1`; `edge0` / `edge1` say whether that end is an edge of
    /// a conductor (a rim, a corner, the end of a sheet), where the mesh is graded finer.
    Line {
        /// Start (r, z) (m).
        p0: [f64; 2],
        /// End (r, z) (m).
        p1: [f64; 2],
        /// Grade towards `p0`.
        edge0: bool,
        /// Grade towards `p1`.
        edge1: bool,
    },
    /// A circular arc: `centre` + `radius` (cos t, sin t) for t from `t0` to `t1` (rad).
    Arc {
        /// Centre (r, z) (m).
        centre: [f64; 2],
        /// Radius (m).
        radius: f64,
        /// Start angle (rad).
        t0: f64,
        /// End angle (rad).
        t1: f64,
    },
}

/// A region of the half-plane (the section of a solid of revolution).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Area {
    /// r0 <= r <= r1, z0 <= z <= z1 (m).
    Rect {
        /// Inner radius (m).
        r0: f64,
        /// Outer radius (m).
        r1: f64,
        /// Lower z (m).
        z0: f64,
        /// Upper z (m).
        z1: f64,
    },
    /// |p - centre| <= radius (a sphere's or a torus's section) (m).
    Disk {
        /// Centre (r, z) (m).
        centre: [f64; 2],
        /// Radius (m).
        radius: f64,
    },
    /// r0 <= |p - centre| <= r1: a spherical shell's section (m).
    Shell {
        /// Centre (r, z) (m).
        centre: [f64; 2],
        /// Inner radius (m).
        r0: f64,
        /// Outer radius (m).
        r1: f64,
    },
}

impl Area {
    /// Whether (r, z) lies in the closed region, to `tol` (m).
    pub fn contains(&self, p: [f64; 2], tol: f64) -> bool {
        match *self {
            Area::Rect { r0, r1, z0, z1 } => {
                p[0] >= r0 - tol && p[0] <= r1 + tol && p[1] >= z0 - tol && p[1] <= z1 + tol
            }
            Area::Disk { centre, radius } => {
                (p[0] - centre[0]).hypot(p[1] - centre[1]) <= radius + tol
            }
            Area::Shell { centre, r0, r1 } => {
                let d = (p[0] - centre[0]).hypot(p[1] - centre[1]);
                d >= r0 - tol && d <= r1 + tol
            }
        }
    }

    /// Its outline, without pieces on the axis r = 0.
    pub fn outline(&self) -> Vec<Piece> {
        let line = |p0: [f64; 2], p1: [f64; 2]| Piece::Line {
            p0,
            p1,
            edge0: false,
            edge1: false,
        };
        match *self {
            Area::Rect { r0, r1, z0, z1 } => {
                let mut v = vec![line([r0, z0], [r1, z0]), line([r1, z0], [r1, z1])];
                v.push(line([r1, z1], [r0, z1]));
                if r0 > 0.0 {
                    v.push(line([r0, z1], [r0, z0]));
                }
                v
            }
            Area::Disk { centre, radius } => vec![disk_arc(centre, radius)],
            Area::Shell { centre, r0, r1 } => vec![disk_arc(centre, r0), disk_arc(centre, r1)],
        }
    }
}

/// The part of a circle in r >= 0 (m, rad): the whole circle when it stays off the axis, else
/// the arc between its two crossings of the axis, at the angles t with cos t = -centre_r /
/// radius (the half from -pi/2 to pi/2 for a circle centred on the axis).
fn disk_arc(centre: [f64; 2], radius: f64) -> Piece {
    if centre[0] >= radius {
        Piece::Arc {
            centre,
            radius,
            t0: 0.0,
            t1: TAU,
        }
    } else {
        // acos of a value in [-1, 0]: from pi/2 (centre on the axis) towards pi.
        let t = (-centre[0].max(0.0) / radius).acos();
        Piece::Arc {
            centre,
            radius,
            t0: -t,
            t1: t,
        }
    }
}

/// How a conductor's potential varies over it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Profile2d {
    /// One potential everywhere.
    Uniform,
    /// Linear in z, 0 at `z_base` and 1 at `z_top` (m): the secondary's winding surface.
    Linear {
        /// z of the base (m).
        z_base: f64,
        /// z of the top (m).
        z_top: f64,
    },
}

impl Profile2d {
    /// The fraction of the conductor's (top) potential at height `z` (m).
    pub fn fraction(&self, z: f64) -> f64 {
        match *self {
            Profile2d::Uniform => 1.0,
            Profile2d::Linear { z_base, z_top } => {
                ((z - z_base) / (z_top - z_base)).clamp(0.0, 1.0)
            }
        }
    }
}

/// A conductor: its outline, its inside (None for a sheet: a disc, the winding surface) and
/// its potential profile.
#[derive(Debug, Clone, PartialEq)]
pub struct Conductor {
    /// Name (electrode or winding).
    pub name: String,
    /// Outline pieces.
    pub pieces: Vec<Piece>,
    /// Its inside, for a closed surface.
    pub area: Option<Area>,
    /// Potential profile.
    pub profile: Profile2d,
}

/// A dielectric region.
#[derive(Debug, Clone, PartialEq)]
pub struct Region {
    /// Name.
    pub name: String,
    /// The region.
    pub area: Area,
    /// Relative permittivity (dimensionless).
    pub relative_permittivity: f64,
}

/// The outer boundary of the half-plane problem.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Outer {
    /// Open space: a disc of `radius` (m) about (0, `centre_z`) meshed directly, its exterior
    /// by the Kelvin transformation onto a second disc; with `ground` the plane z = centre_z
    /// is a grounded conductor and only z >= centre_z is meshed.
    Open {
        /// Centre on the axis (m): the ground's height when there is a ground.
        centre_z: f64,
        /// Radius (m).
        radius: f64,
        /// Whether z = centre_z is a grounded plane.
        ground: bool,
    },
    /// A grounded closed cylinder: wall r = `r_max`, floor `z_min`, ceiling `z_max` (m), all
    /// at 0 V unless `insulated_ends` (then floor and ceiling carry no flux: the section of an
    /// infinitely long structure).
    Cylinder {
        /// Wall radius (m).
        r_max: f64,
        /// Floor (m).
        z_min: f64,
        /// Ceiling (m).
        z_max: f64,
        /// Floor and ceiling as symmetry planes (zero normal flux) instead of grounded.
        insulated_ends: bool,
    },
    /// A grounded sphere of `radius` (m) about (0, `centre_z`).
    Sphere {
        /// Centre on the axis (m).
        centre_z: f64,
        /// Radius (m).
        radius: f64,
    },
}

/// The problem in the half-plane: conductors, dielectrics, outer boundary, mesh settings.
#[derive(Debug, Clone, PartialEq)]
pub struct Domain {
    /// Conductors (electrodes in file order, then the secondary).
    pub conductors: Vec<Conductor>,
    /// Dielectric regions (disjoint).
    pub regions: Vec<Region>,
    /// The outer boundary.
    pub outer: Outer,
    /// Mesh density (dimensionless, 1 = default; edge lengths scale as 1 / density).
    pub density: f64,
    /// Element limit of the mesh.
    pub max_elements: usize,
    /// For a design: its electric axis (the frame of (r, z)); z is measured along it from its
    /// origin.
    pub axis: Option<Axis>,
    /// Potential (V) of each conductor under the design's drive (its top potential for the
    /// secondary), and of the secondary's base.
    pub drive: Option<DriveV>,
}

/// The drive's potentials in a domain built from a design.
#[derive(Debug, Clone, PartialEq)]
pub struct DriveV {
    /// Per conductor: (potential at its base, potential at its top) (V); equal for a uniform
    /// conductor.
    pub conductor_v: Vec<(f64, f64)>,
    /// Index of the secondary among the conductors.
    pub secondary: Option<usize>,
    /// Per conductor: whether it is connected to the secondary's top (true, false) or base.
    pub connected: Vec<Option<bool>>,
    /// The secondary's potential profile under a drive model: node values at equal steps from
    /// base to top, 1 at the top (a mode of the resonance model); None: linear.
    pub secondary_profile: Option<Vec<f64>>,
}

impl DriveV {
    /// The fraction of the secondary's top potential at the fraction `t` of its length from
    /// the base: the drive's node profile interpolated linearly, or `t` itself.
    pub fn secondary_fraction(&self, t: f64) -> f64 {
        match &self.secondary_profile {
            Some(v) if v.len() >= 2 => {
                let n = v.len() - 1;
                let x = t.clamp(0.0, 1.0) * n as f64;
                let j = (x.floor() as usize).min(n - 1);
                v[j] + (v[j + 1] - v[j]) * (x - j as f64)
            }
            _ => t,
        }
    }
}

impl Domain {
    /// Largest extent (m) of the conductors and dielectrics from `centre` = (0, z).
    pub(crate) fn reach_m(&self, z: f64) -> f64 {
        let mut reach: f64 = 0.0;
        let mut take = |p: [f64; 2]| reach = reach.max(p[0].hypot(p[1] - z));
        let mut pieces: Vec<Piece> = self
            .conductors
            .iter()
            .flat_map(|c| c.pieces.clone())
            .collect();
        pieces.extend(self.regions.iter().flat_map(|r| r.area.outline()));
        for p in pieces {
            match p {
                Piece::Line { p0, p1, .. } => {
                    take(p0);
                    take(p1);
                }
                Piece::Arc { centre, radius, .. } => {
                    take([centre[0] + radius, centre[1] + radius]);
                    take([centre[0] + radius, centre[1] - radius]);
                }
            }
        }
        reach
    }

    /// Size of the conductors (m): the largest side of their bounding box in (r, z).
    pub(crate) fn conductor_size_m(&self) -> f64 {
        let (mut r1, mut z0, mut z1) = (0.0_f64, f64::INFINITY, f64::NEG_INFINITY);
        for c in &self.conductors {
            for p in &c.pieces {
                let (pr, pz0, pz1) = match *p {
                    Piece::Line { p0, p1, .. } => {
                        (p0[0].max(p1[0]), p0[1].min(p1[1]), p0[1].max(p1[1]))
                    }
                    Piece::Arc { centre, radius, .. } => {
                        (centre[0] + radius, centre[1] - radius, centre[1] + radius)
                    }
                };
                r1 = r1.max(pr);
                z0 = z0.min(pz0);
                z1 = z1.max(pz1);
            }
        }
        r1.max(z1 - z0).max(1e-9)
    }

    /// The half-plane problem of a design's electric model: electrodes, the secondary's
    /// winding surface (radius + wire radius, linear potential profile), dielectrics, ground,
    /// enclosure or open space. `source` labels messages.
    #[allow(clippy::result_large_err)]
    pub fn from_design(design: &Design, source: &str) -> Result<Domain, FromDesignError> {
        Domain::from_design_sheet(design, source, None)
    }

    /// [`Domain::from_design`] with the secondary's winding surface cut into `sheet_pieces`
    /// equal pieces (each meshed with at least one edge), so that a potential profile varying
    /// along the winding (the hat functions of the resonance model's sections) is resolved.
    #[allow(clippy::result_large_err)]
    pub fn from_design_sheet(
        design: &Design,
        source: &str,
        sheet_pieces: Option<usize>,
    ) -> Result<Domain, FromDesignError> {
        let axis0 = check_axisymmetric(design, source).map_err(Box::new)?;
        // With a ground plane, z grows away from it (upwards).
        let axis = match design.ground {
            Some(_) if axis0.direction.z < 0.0 => Axis {
                origin_m: axis0.origin_m,
                direction: Unit::new_unchecked(-axis0.direction.into_inner()),
            },
            _ => axis0,
        };
        let n = axis.direction;
        let axial = |p: &nalgebra::Point3<f64>| (p - axis.origin_m).dot(n.as_ref());
        let mut conductors = Vec::new();
        let mut conductor_v = Vec::new();
        let mut connected = Vec::new();
        let secondary = design.windings.iter().find(|w| w.role == Role::Secondary);
        for e in &design.electrodes {
            let (o, a) = e.shape.origin_axis();
            let zc = axial(&o);
            let sign = a.dot(&n).signum();
            let (pieces, area) = match e.shape {
                ElectrodeShape::Sphere { radius_m, .. } => {
                    let area = Area::Disk {
                        centre: [0.0, zc],
                        radius: radius_m,
                    };
                    (area.outline(), Some(area))
                }
                ElectrodeShape::Torus {
                    major_radius_m,
                    minor_radius_m,
                    ..
                } => {
                    let area = Area::Disk {
                        centre: [major_radius_m, zc],
                        radius: minor_radius_m,
                    };
                    (area.outline(), Some(area))
                }
                ElectrodeShape::Disc { radius_m, .. } => (
                    vec![Piece::Line {
                        p0: [0.0, zc],
                        p1: [radius_m, zc],
                        edge0: false,
                        edge1: true,
                    }],
                    None,
                ),
                ElectrodeShape::Cylinder {
                    radius_m, length_m, ..
                } => {
                    let z1 = zc + sign * length_m;
                    let (lo, hi) = (zc.min(z1), zc.max(z1));
                    let corner = |p0, p1, edge0, edge1| Piece::Line {
                        p0,
                        p1,
                        edge0,
                        edge1,
                    };
                    (
                        vec![
                            corner([0.0, lo], [radius_m, lo], false, true),
                            corner([radius_m, lo], [radius_m, hi], true, true),
                            corner([radius_m, hi], [0.0, hi], true, false),
                        ],
                        Some(Area::Rect {
                            r0: 0.0,
                            r1: radius_m,
                            z0: lo,
                            z1: hi,
                        }),
                    )
                }
            };
            conductors.push(Conductor {
                name: e.name.clone(),
                pieces,
                area,
                profile: Profile2d::Uniform,
            });
            let v = match &e.connect {
                Some(t) => design.drive.terminal_v(&t.winding, t.end),
                None => match design.drive.potential(&e.name) {
                    Some(PotentialSpec::Uniform(v)) => v,
                    _ => 0.0,
                },
            };
            conductor_v.push((v, v));
            connected.push(e.connect.as_ref().and_then(|t| {
                (Some(&t.winding) == secondary.map(|w| &w.name))
                    .then_some(t.end == coilfield_geometry::End::Top)
            }));
        }
        let mut secondary_index = None;
        if let Some(w) = secondary {
            let Shape::Helix {
                origin_m,
                axis: waxis,
                radius_m,
                length_m,
                ..
            } = w.shape
            else {
                return Err(FromDesignError::Design(Box::new(
                    DesignError::NotAxisymmetric {
                        source_name: source.to_string(),
                        item: format!("winding '{}'", w.name),
                        key: "shape",
                        reason: "the electric model represents the secondary as a cylinder and \
                             needs a helix"
                            .to_string(),
                    },
                )));
            };
            let zb = axial(&origin_m);
            let zt = zb + waxis.dot(&n).signum() * length_m;
            let r = radius_m + w.wire_radius_m();
            let (lo, hi) = (zb.min(zt), zb.max(zt));
            secondary_index = Some(conductors.len());
            let k = sheet_pieces.unwrap_or(1).max(1);
            let at = |i: usize| lo + (hi - lo) * i as f64 / k as f64;
            conductors.push(Conductor {
                name: w.name.clone(),
                pieces: (0..k)
                    .map(|i| Piece::Line {
                        p0: [r, at(i)],
                        p1: [r, at(i + 1)],
                        edge0: i == 0,
                        edge1: i + 1 == k,
                    })
                    .collect(),
                area: None,
                profile: Profile2d::Linear {
                    z_base: zb,
                    z_top: zt,
                },
            });
            let (vb, vt) = match design.drive.potential(&w.name) {
                Some(PotentialSpec::Ends { base_v, top_v }) => (base_v, top_v),
                _ => (0.0, 0.0),
            };
            conductor_v.push((vb, vt));
            connected.push(None);
        }
        let regions: Vec<Region> = design
            .media
            .dielectrics
            .iter()
            .map(|d| {
                let [r0, r1, z0, z1] = dielectric_section_m(d, &axis);
                Region {
                    name: d.name.clone(),
                    area: Area::Rect { r0, r1, z0, z1 },
                    relative_permittivity: d.relative_permittivity,
                }
            })
            .collect();
        let ground_z = design.ground.map(|g| (g.z_m - axis.origin_m.z) / n.z);
        let mut domain = Domain {
            conductors,
            regions,
            outer: Outer::Sphere {
                centre_z: 0.0,
                radius: 1.0,
            },
            density: design.media.mesh.density,
            max_elements: design.media.mesh.max_elements,
            axis: Some(axis),
            drive: Some(DriveV {
                conductor_v,
                secondary: secondary_index,
                connected,
                secondary_profile: design.drive.secondary_voltage_profile.clone(),
            }),
        };
        domain.outer = match (design.media.enclosure, ground_z) {
            (Some(enc), Some(zg)) => Outer::Cylinder {
                r_max: enc.radius_m,
                z_min: zg,
                z_max: zg + enc.height_m,
                insulated_ends: false,
            },
            _ => {
                let centre_z = match ground_z {
                    Some(zg) => zg,
                    None => domain.middle_z(),
                };
                let reach = domain.reach_m(centre_z);
                let radius = match design.media.mesh.outer_radius_m {
                    Some(r) if r <= 1.05 * reach => {
                        return Err(FromDesignError::Solver(SolverError::MeshRefused {
                            reason: format!(
                                "{source}: mesh: key 'outer_radius': {r} m does not hold the \
                                 conductors and dielectrics with room to spare (they reach \
                                 {reach:.4} m from the centre of the far boundary); give at \
                                 least {:.4} m",
                                1.05 * reach
                            ),
                        }));
                    }
                    Some(r) => r,
                    None => DEFAULT_OUTER_FACTOR * reach,
                };
                Outer::Open {
                    centre_z,
                    radius,
                    ground: ground_z.is_some(),
                }
            }
        };
        Ok(domain)
    }

    /// The same problem without the conductors connected to the secondary (the bare
    /// secondary of the resonance model's self-capacitance).
    pub fn without_connected(&self) -> Domain {
        let mut out = self.clone();
        let Some(drive) = &self.drive else {
            return out;
        };
        let keep: Vec<usize> = (0..self.conductors.len())
            .filter(|&i| drive.connected[i].is_none())
            .collect();
        out.conductors = keep.iter().map(|&i| self.conductors[i].clone()).collect();
        out.drive = Some(DriveV {
            conductor_v: keep.iter().map(|&i| drive.conductor_v[i]).collect(),
            secondary: drive
                .secondary
                .and_then(|s| keep.iter().position(|&i| i == s)),
            connected: vec![None; keep.len()],
            secondary_profile: drive.secondary_profile.clone(),
        });
        out
    }

    /// Middle of the conductors' z extent (m).
    fn middle_z(&self) -> f64 {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for c in &self.conductors {
            for p in &c.pieces {
                let zs = match *p {
                    Piece::Line { p0, p1, .. } => [p0[1], p1[1]],
                    Piece::Arc { centre, radius, .. } => [centre[1] - radius, centre[1] + radius],
                };
                lo = lo.min(zs[0]).min(zs[1]);
                hi = hi.max(zs[0]).max(zs[1]);
            }
        }
        0.5 * (lo + hi)
    }
}

/// Default radius of the open boundary's inner disc, in reaches of the design from its centre:
/// the Kelvin transformation is exact for any radius beyond the sources, so this only keeps
/// the mapped exterior smooth (its solution varies on the scale of the radius).
pub const DEFAULT_OUTER_FACTOR: f64 = 1.6;

/// Why a design has no half-plane problem.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FromDesignError {
    /// The design does not fit the axisymmetric model.
    #[error(transparent)]
    Design(#[from] Box<DesignError>),
    /// A setting the mesher refuses.
    #[error(transparent)]
    Solver(#[from] SolverError),
}

/// Points along a piece with edge lengths about `h` (m), graded towards flagged edges as
/// [`edge_grading`] says for `density`.
pub(crate) fn sample_piece(piece: &Piece, h: f64, density: f64) -> Vec<[f64; 2]> {
    match *piece {
        Piece::Line {
            p0,
            p1,
            edge0,
            edge1,
        } => {
            let len = (p1[0] - p0[0]).hypot(p1[1] - p0[1]);
            let us = graded_params(len, h, edge_grading(h, density), edge0, edge1);
            us.iter()
                .map(|u| [p0[0] + u * (p1[0] - p0[0]), p0[1] + u * (p1[1] - p0[1])])
                .collect()
        }
        Piece::Arc {
            centre,
            radius,
            t0,
            t1,
        } => {
            // At least 48 edges on a whole circle whatever its size: small radii get their share.
            let h_arc = h.min(TAU * radius / 48.0);
            let len = radius * (t1 - t0).abs();
            let n = ((len / h_arc).ceil() as usize).max(4);
            (0..=n)
                .map(|k| {
                    let t = t0 + (t1 - t0) * k as f64 / n as f64;
                    [centre[0] + radius * t.cos(), centre[1] + radius * t.sin()]
                })
                .collect()
        }
    }
}

/// Smallest edge at a conductor's edge at density 1, in parts of the outline's edge length.
pub const EDGE_REFINEMENT: f64 = 24.0;
/// Growth of edge length per edge away from a conductor's edge at density 1.
pub const GRADING: f64 = 1.25;

/// The mesh at a conductor's edge (a disc's rim, a sheet's end, a cylinder's corner): the
/// smallest edge `h_end` (m) at the edge and the growth `slope` of the edge length per metre
/// of distance from it, for outline edges of `h` (m). Above density 1 the slope falls as
/// 1 / density and h_end as 1 / density^2 (h / (EDGE_REFINEMENT density)): the potential
/// near an edge grows as the square root of the distance (the field of a thin sheet's rim,
/// J. D. Jackson, Classical Electrodynamics, 3rd ed., 1999, section 3.4, from memory), so a
/// fixed grading leaves an energy error of order h that halves per doubling of the density,
/// while this one lets it fall with the rest of the mesh (I. Babuska, R. B. Kellogg and J.
/// Pitkaranta, "Direct and inverse error estimates for finite elements with mesh
/// refinement", Numer. Math. 33 (1979) 447-471, on graded meshes at corners; from memory).
/// Returns (h_end, slope).
pub fn edge_grading(h: f64, density: f64) -> (f64, f64) {
    let k = density.max(1.0);
    (h / (EDGE_REFINEMENT * k), (GRADING - 1.0) / k)
}

/// Parameters in [0, 1] along a line of length `len`: edges of `h` (m), graded at flagged
/// ends as `(h_end, slope)` (see [`edge_grading`]).
fn graded_params(
    len: f64,
    h: f64,
    (h_end, slope): (f64, f64),
    edge0: bool,
    edge1: bool,
) -> Vec<f64> {
    // Edge length at distance d from the nearest flagged end.
    let size = |s: f64| {
        let d0 = if edge0 { s } else { f64::INFINITY };
        let d1 = if edge1 { len - s } else { f64::INFINITY };
        let d = d0.min(d1);
        (h_end + slope * d).min(h)
    };
    let mut s = vec![0.0];
    let mut x = 0.0;
    while x < len {
        let step = size(x).min(size((x + size(x)).min(len)));
        x += step;
        s.push(x.min(len));
    }
    // No sliver at the end: a short last edge is merged into the one before.
    if s.len() > 2 && len - s[s.len() - 2] < 0.5 * size(len) {
        s.remove(s.len() - 2);
    }
    let total = *s.last().unwrap_or(&1.0);
    s.iter().map(|v| v / total).collect()
}

#[cfg(test)]
mod tests {
    use super::{Area, Piece};
    use std::f64::consts::PI;

    /// A disc's outline against a brute-force classification of its circle's points: every
    /// point of the circle with r > 0 lies on the outline's arcs and no point with r < 0 does,
    /// for discs off the axis, touching it, centred on it and crossing it off centre.
    #[test]
    fn a_disc_outline_is_the_part_of_its_circle_off_the_axis() {
        for (c, radius) in [(2.0, 1.0), (1.0, 1.0), (0.0, 1.0), (0.3, 1.0), (0.9, 1.0)] {
            let area = Area::Disk {
                centre: [c, 0.5],
                radius,
            };
            let [Piece::Arc { t0, t1, .. }] = area.outline()[..] else {
                panic!("one arc for ({c}, {radius})");
            };
            let on_arc = |t: f64| {
                // t or t + 2 pi k within [t0, t1].
                let k = ((t - t0) / (2.0 * PI)).floor();
                t - 2.0 * PI * k <= t1
            };
            for i in 0..3600 {
                let t = -PI + (i as f64 + 0.5) * (2.0 * PI / 3600.0);
                let r = c + radius * t.cos();
                if r.abs() > 1e-9 {
                    assert_eq!(on_arc(t), r > 0.0, "({c}, {radius}) at t = {t}: r = {r}");
                }
            }
            // The arc's ends lie on the axis when the circle crosses it.
            if c < radius {
                for t in [t0, t1] {
                    assert!((c + radius * t.cos()).abs() < 1e-12, "({c}, {radius})");
                }
            }
        }
    }
}
