//! The invented demo room resonator (`meshes-demo/room-resonator.toml`) at
//! `TENTH_PERCENT_DENSITY`, the density that gives its capacitances to 0.1 %: the design the
//! `fem` benchmark's `mesh_room_resonator` meshes, shared with the `mesh_room_resonator`
//! example (one meshing, for instruction counts under callgrind).

use coilfield_geometry::{Design, TENTH_PERCENT_DENSITY, parse_design};

/// The demo design at `TENTH_PERCENT_DENSITY`, and its path (the label of its messages).
pub fn room_resonator_at_tenth_percent() -> (Design, String) {
    let path = format!(
        "{}/../meshes-demo/room-resonator.toml",
        env!("CARGO_MANIFEST_DIR")
    );
    let text = std::fs::read_to_string(&path).expect("demo design");
    let mut design = parse_design(&text, &path).expect("valid demo design");
    design.media.mesh.density = TENTH_PERCENT_DENSITY;
    (design, path)
}
