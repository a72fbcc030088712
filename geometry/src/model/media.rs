//! What the electric field sees besides the conductors: dielectric regions of revolution, a
//! grounded enclosure, and the mesh settings of the finite-element solver.
//!
//! These act on E only: the inductances, couplings and B ignore them (the materials are
//! non-magnetic and the enclosure is an electrostatic boundary, not a current path).

use nalgebra::{Point3, Unit, Vector3};

/// Cross-section of a dielectric region of revolution, sizes in metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DielectricShape {
    /// A tube (a coil form, enamel): `inner_radius_m` < r < `outer_radius_m`, from its base
    /// along the axis for `length_m`.
    Tube {
        /// Inner radius (m).
        inner_radius_m: f64,
        /// Outer radius (m).
        outer_radius_m: f64,
        /// Length along the axis (m).
        length_m: f64,
    },
    /// A solid disc (a base plate, a spacer): r < `outer_radius_m`, from its lower face along
    /// the axis for `length_m` (its thickness).
    Disc {
        /// Radius (m).
        outer_radius_m: f64,
        /// Thickness along the axis (m).
        length_m: f64,
    },
}

/// One dielectric region of revolution (`[[dielectric]]`).
#[derive(Debug, Clone, PartialEq)]
pub struct Dielectric {
    /// Unique name among the dielectrics.
    pub name: String,
    /// Its cross-section.
    pub shape: DielectricShape,
    /// Centre of its base (tube) or of its lower face (disc) (m).
    pub origin_m: Point3<f64>,
    /// Its axis (the electric model's axis, up or down).
    pub axis: Unit<Vector3<f64>>,
    /// Relative permittivity (dimensionless, >= 1).
    pub relative_permittivity: f64,
    /// The material name when the permittivity came from the built-in table.
    pub material: Option<String>,
}

impl Dielectric {
    /// The cross-section in the (r, z) half-plane of its own frame: (r_min, r_max, z_min,
    /// z_max) (m), z along its axis from its origin.
    pub fn section_m(&self) -> [f64; 4] {
        match self.shape {
            DielectricShape::Tube {
                inner_radius_m,
                outer_radius_m,
                length_m,
            } => [inner_radius_m, outer_radius_m, 0.0, length_m],
            DielectricShape::Disc {
                outer_radius_m,
                length_m,
            } => [0.0, outer_radius_m, 0.0, length_m],
        }
    }
}

/// A grounded cylindrical room standing on the ground plane (`[enclosure]`): its floor is the
/// plane, its wall the cylinder r = `radius_m` about the electric axis, its ceiling the plane
/// `height_m` above the floor. All three are at 0 V.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Enclosure {
    /// Wall radius (m).
    pub radius_m: f64,
    /// Ceiling height above the floor (m).
    pub height_m: f64,
}

/// Most elements a mesh may have (`[mesh] max_elements` may lower it, never raise it).
pub const MAX_MESH_ELEMENTS: usize = 2_000_000;

/// Default element limit of a mesh.
pub const DEFAULT_MAX_ELEMENTS: usize = 400_000;

/// The `[mesh] density` (dimensionless) at which the invented demo room resonator
/// (`meshes-demo/room-resonator.toml`) has its top electrode's capacitance and the
/// secondary's self-capacitance within 0.1 % of their limit under refinement (the README's
/// convergence table, `tests/fem.rs` `demo_convergence_table`: 0.07 % and 0.06 % from the
/// Richardson extrapolation, second order observed). Not the default: it takes about 8 times
/// the default's elements, and a sweep re-meshes at every point.
pub const TENTH_PERCENT_DENSITY: f64 = 4.0;

/// Settings of the finite-element mesh (`[mesh]`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MeshSettings {
    /// Refinement factor (dimensionless, 1 = default): edge lengths on conductors and
    /// interfaces scale as 1 / density, so the element count grows about as density^2.
    pub density: f64,
    /// Element limit: a mesh that would need more is refused.
    pub max_elements: usize,
    /// Radius (m) of the inner disc of the open far boundary (its Kelvin-transformed exterior
    /// is meshed as a second disc); None: chosen from the design's size.
    pub outer_radius_m: Option<f64>,
}

impl Default for MeshSettings {
    fn default() -> Self {
        MeshSettings {
            density: 1.0,
            max_elements: DEFAULT_MAX_ELEMENTS,
            outer_radius_m: None,
        }
    }
}

/// Dielectrics, enclosure and mesh settings of a design.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Media {
    /// Dielectric regions in file order.
    pub dielectrics: Vec<Dielectric>,
    /// The grounded room, if any (needs a ground plane).
    pub enclosure: Option<Enclosure>,
    /// Mesh settings.
    pub mesh: MeshSettings,
}

impl Media {
    /// Whether anything here changes E from the free-space (boundary-element) model: a
    /// dielectric or an enclosure.
    pub fn acts_on_field(&self) -> bool {
        !self.dielectrics.is_empty() || self.enclosure.is_some()
    }
}

/// A material of the built-in table: name and relative permittivity.
pub struct Material {
    /// Name as written in `material = "..."` (matched without regard to case).
    pub name: &'static str,
    /// Relative permittivity (dimensionless) at about 100 kHz to 1 MHz, room temperature.
    pub relative_permittivity: f64,
}

/// Typical relative permittivities of insulating materials used for coil forms and supports,
/// at about 100 kHz to 1 MHz and room temperature. All values from memory, none checked
/// against a source at hand: those of PTFE, polyethylene, polystyrene, acrylic, PVC and nylon
/// as recalled from the tables in A. R. von Hippel (ed.), *Dielectric Materials and
/// Applications* (MIT Press, 1954); polypropylene, polycarbonate and FR4 postdate or are not in
/// those tables and are typical data-sheet figures, from memory, no source; real grades
/// differ by several percent (fillers, plasticisers, moisture): give `relative_permittivity`
/// from the material's data sheet when it matters.
pub const MATERIALS: &[Material] = &[
    Material {
        name: "PTFE",
        relative_permittivity: 2.1,
    },
    Material {
        name: "polypropylene",
        relative_permittivity: 2.25,
    },
    Material {
        name: "polyethylene",
        relative_permittivity: 2.3,
    },
    Material {
        name: "polystyrene",
        relative_permittivity: 2.55,
    },
    Material {
        name: "acrylic",
        relative_permittivity: 2.6,
    },
    Material {
        name: "polycarbonate",
        relative_permittivity: 2.9,
    },
    Material {
        name: "PVC",
        relative_permittivity: 3.0,
    },
    Material {
        name: "nylon",
        relative_permittivity: 3.4,
    },
    Material {
        name: "FR4",
        relative_permittivity: 4.4,
    },
];

/// The material of that name (case-insensitive), if the table has it.
pub fn material(name: &str) -> Option<&'static Material> {
    MATERIALS.iter().find(|m| m.name.eq_ignore_ascii_case(name))
}
