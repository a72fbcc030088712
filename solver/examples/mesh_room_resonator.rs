//! Meshes the invented demo room resonator once at `TENTH_PERCENT_DENSITY` and prints its
//! element and vertex counts: a single run of the `fem` benchmark's `mesh_room_resonator`
//! case, for instruction counts under callgrind (`valgrind --tool=callgrind
//! target/release/examples/mesh_room_resonator`), where the benchmark's repetitions and its
//! larger set-up would dominate.

#[path = "../benches/support/room_resonator.rs"]
mod room_resonator;

use coilfield_solver::fem::FemProblem;

fn main() {
    let (design, path) = room_resonator::room_resonator_at_tenth_percent();
    let problem = FemProblem::from_design(&design, &path).expect("mesh");
    let mesh = problem.mesh();
    println!(
        "{} elements, {} vertices",
        mesh.elements(),
        mesh.nodes.len()
    );
}
