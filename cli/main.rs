//! `coilfield`: inductance, coupling and near fields of air-core coils placed anywhere in space.
//!
//! The binary is the only part of the project that reads files, the environment or the
//! terminal; the `coilfield-geometry` and `coilfield-solver` crates stay pure.

/// `eprintln!` without the panic: std's panics when standard error cannot be written (closed,
/// a reader gone as in `coilfield sweep ... 2>&1 | head -1`, a full device), turning a
/// diagnostic into exit 101. A diagnostic that cannot be written has nowhere else to go, so it
/// is dropped. Defined before the modules, so every `eprintln!` in the crate is this one.
macro_rules! eprintln {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        let _ = writeln!(std::io::stderr(), $($arg)*);
    }};
}

/// `eprint!` without the panic, as [`eprintln!`] above.
macro_rules! eprint {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        let _ = write!(std::io::stderr(), $($arg)*);
    }};
}

mod capacitance;
mod capacitance_fem;
mod clearance;
mod export;
mod fields;
mod inductance;
mod load;
mod map;
mod output;
mod plot;
mod report;
mod report_html;
mod resonance;
mod sample;
mod seek;
mod sweep;
mod sweep_plot;
mod thresholds;
mod verify;
mod vtk;

use clap::{Parser, Subcommand, ValueEnum};

/// Every allocation of the program goes through mimalloc (see Cargo.toml for why).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;
use std::path::PathBuf;
use std::process::ExitCode;

/// Air-core coil solver: self and mutual inductance and coupling of windings placed anywhere.
///
/// All quantities are SI: lengths in metres (design files may also say "55 mm", "1.5 in",
/// "AWG 22"), inductances in henries. Exit codes: 0 success, 1 a check failed, 2 bad input.
#[derive(Debug, Parser)]
#[command(name = "coilfield", version)]
struct Cli {
    /// Worker threads for the parallel kernels (default: SLURM_CPUS_PER_TASK when set, else all
    /// cores).
    #[arg(long, global = true, value_name = "N")]
    threads: Option<usize>,
    #[command(subcommand)]
    command: Command,
}

/// Output format of a command.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Aligned text for people.
    Table,
    /// JSON for programs (SI units, names carry the unit).
    Json,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Self-inductance (H) of every winding, the mutual-inductance matrix (H) and the coupling
    /// matrix (dimensionless), in file order.
    Inductance {
        /// Design file (TOML).
        design: PathBuf,
        /// table or json.
        #[arg(long, value_enum, default_value_t = Format::Table)]
        format: Format,
        /// Also write the output to this file (replaced atomically; stdout still gets it).
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
    },
    /// A readable report of a design: geometry and wire lengths (m), inductances (H), couplings,
    /// cross-checks, kernels used and the usual high-voltage cautions.
    Report {
        /// Design file (TOML).
        design: PathBuf,
        /// Also write the report as one self-contained HTML page (tables and inline SVG
        /// figures: a side view to scale, a field heat map with threshold contours, k against
        /// the primary's height), replaced atomically.
        #[arg(long, value_name = "FILE.html")]
        html: Option<PathBuf>,
    },
    /// Recompute every case of the validation tables (CSV) and compare with its published or
    /// high-precision reference: inputs, reference, computed, relative error, source.
    Verify {
        /// Folder of validation tables (default: the tables built into this binary).
        #[arg(long, value_name = "DIR")]
        tables: Option<PathBuf>,
        /// table or json.
        #[arg(long, value_enum, default_value_t = Format::Table)]
        format: Format,
    },
    /// Peak E (V/m) and B (T) vectors and magnitudes of the drive at points: `--at x,y,z`
    /// (metres, repeatable) and/or `--points FILE.csv` (header x,y,z). A point on a wire gets
    /// no value and a warning; a point inside an electrode or below the ground plane is an
    /// error with `--at` and gets no E (null in JSON, NaN in CSV and table) and a warning in
    /// `--points`.
    Field {
        /// Design file (TOML).
        design: PathBuf,
        /// A point x,y,z in metres (repeatable).
        #[arg(long, value_name = "X,Y,Z", allow_hyphen_values = true)]
        at: Vec<String>,
        /// CSV file of points (header x,y,z; metres).
        #[arg(long, value_name = "FILE")]
        points: Option<PathBuf>,
        /// table, json or csv.
        #[arg(long, value_enum, default_value_t = fields::FieldFormat::Table)]
        format: fields::FieldFormat,
        /// Also write the output to this file (replaced atomically).
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Electric solver for E: bem, fem, or auto (fem when the design has a dielectric or
        /// an enclosure).
        #[arg(long, value_enum, default_value_t = capacitance_fem::ElectricSolver::Auto)]
        electric_solver: capacitance_fem::ElectricSolver,
    },
    /// Peak E and B sampled on a plane (`--plane`, `--offset`, `--extent`) or in a box
    /// (`--box`), written as VTK RectilinearGrid (.vtr: E_V_per_m, E_mag_V_per_m, B_T,
    /// B_mag_T; NaN where there is no value) and as a heat map (.png or .svg) with contour lines
    /// at the thresholds. Lengths in metres. Prints a JSON summary.
    Map {
        /// Design file (TOML).
        design: PathBuf,
        /// Plane of the grid: xz, yz or xy.
        #[arg(long, value_enum)]
        plane: Option<sample::Plane>,
        /// Position of the plane along its normal (m).
        #[arg(long, default_value_t = 0.0, allow_hyphen_values = true)]
        offset: f64,
        /// U0,U1,V0,V1 (m): the plane's ranges (xz: x then z; yz: y then z; xy: x then y).
        #[arg(long, value_name = "U0,U1,V0,V1", allow_hyphen_values = true)]
        extent: Option<String>,
        /// X0,X1,Y0,Y1,Z0,Z1 (m): a 3-D box instead of a plane.
        #[arg(
            long = "box",
            value_name = "X0,X1,Y0,Y1,Z0,Z1",
            allow_hyphen_values = true
        )]
        bounds: Option<String>,
        /// Points per direction: NU,NV for a plane, NX,NY,NZ for a box (each at least 2).
        #[arg(long, value_name = "N,N[,N]")]
        resolution: String,
        /// VTK output (.vtr), replaced atomically.
        #[arg(long, value_name = "FILE.vtr")]
        vtk: Option<PathBuf>,
        /// Heat map output (.png or .svg), replaced atomically.
        #[arg(long, value_name = "FILE")]
        plot: Option<PathBuf>,
        /// Quantity of the heat map: e or b.
        #[arg(long, value_enum, default_value_t = map::PlotQuantity::E)]
        plot_quantity: map::PlotQuantity,
        /// Electric solver for E: bem, fem, or auto (fem when the design has a dielectric or
        /// an enclosure).
        #[arg(long, value_enum, default_value_t = capacitance_fem::ElectricSolver::Auto)]
        electric_solver: capacitance_fem::ElectricSolver,
    },
    /// The secondary's resonance (a distributed model of its winding, and the lumped estimate),
    /// its modes and Q; the primary's tuning capacitance, the tap that tunes the tank
    /// capacitor and f against the tap; the coupled pair's normal modes; and, with a drive
    /// model in `[drive]` (kind = "spark_gap" | "driven"), the peak top voltage, the currents,
    /// energy and power. Frequencies in Hz, capacitances in F, inductances in H, voltages peak.
    Resonance {
        /// Design file (TOML).
        design: PathBuf,
        /// Sections of the distributed model (default: doubled from 8 until f1 settles to
        /// 1e-4, at most 256).
        #[arg(long, value_name = "N")]
        sections: Option<usize>,
        /// table or json.
        #[arg(long, value_enum, default_value_t = Format::Table)]
        format: Format,
        /// Draw the spark gap's top-voltage envelope, else the first mode's voltage profile
        /// (.svg or .png).
        #[arg(long, value_name = "FILE")]
        plot: Option<PathBuf>,
        /// Draw the primary's frequency with the tank capacitor against the tap (.svg or .png).
        #[arg(long, value_name = "FILE")]
        plot_tap: Option<PathBuf>,
        /// Electric solver of the capacitances: bem, fem, or auto (fem when the design has a
        /// dielectric or an enclosure).
        #[arg(long, value_enum, default_value_t = capacitance_fem::ElectricSolver::Auto)]
        electric_solver: capacitance_fem::ElectricSolver,
    },
    /// Capacitances (F) from the axisymmetric electrostatic model: the Maxwell matrix of the
    /// electrodes (file order), each electrode's capacitance (its diagonal entry), the
    /// secondary's equivalent self-capacitance at its top (bare and with its connected
    /// electrodes), error estimates |C(n) - C(n/2)|, and each electrode's peak surface field
    /// (V/m) with its location at the drive potentials.
    Capacitance {
        /// Design file (TOML).
        design: PathBuf,
        /// table or json.
        #[arg(long, value_enum, default_value_t = Format::Table)]
        format: Format,
        /// Also write the output to this file (replaced atomically).
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Electric solver: bem (boundary elements, free space over a ground plane), fem
        /// (finite elements: dielectrics, enclosure), or auto (fem when the design has a
        /// dielectric or an enclosure).
        #[arg(long, value_enum, default_value_t = capacitance_fem::ElectricSolver::Auto)]
        electric_solver: capacitance_fem::ElectricSolver,
        /// With the finite-element solver: also write its mesh with the potential and E as a
        /// VTK unstructured grid (.vtu) of the (r, z) half-plane.
        #[arg(long, value_name = "FILE")]
        mesh_vtk: Option<PathBuf>,
    },
    /// Screening clearance distances: for each threshold (air breakdown, a long-gap mean
    /// gradient, ICNIRP 2010 and 2020 reference levels at the drive frequency, and any
    /// --threshold), the distance from the coil axis (m, at several heights) and from the top
    /// electrode's surface (m) beyond which the peak field stays below it; and the fields at
    /// --distance values. Reference levels are rms and are compared with peak/sqrt(2). These are
    /// screening estimates, not a safety certificate: follow local regulations and qualified
    /// advice.
    Clearance {
        /// Design file (TOML).
        design: PathBuf,
        /// Distances from the axis (m) at the top electrode's height, comma-separated; replaces
        /// [clearance] distances.
        #[arg(long, value_name = "D1,D2,...")]
        distance: Option<String>,
        /// Mean breakdown gradient of long gaps (V/m, peak); common practice, no published
        /// source: set it for your conditions. Overrides [clearance] long_gap_gradient
        /// (default 300 kV/m).
        #[arg(long, value_name = "V_PER_M")]
        long_gap_gradient: Option<f64>,
        /// Extra threshold NAME,E|B,LIMIT,rms|peak (LIMIT in V/m or T), repeatable; replaces a
        /// threshold of the same name from the defaults or [clearance].
        #[arg(long, value_name = "NAME,Q,LIMIT,BASIS")]
        threshold: Vec<String>,
        /// Farthest distance searched along each ray (m); overrides [clearance] max_distance
        /// (default 30 m).
        #[arg(long, value_name = "M")]
        max_distance: Option<f64>,
        /// table or json.
        #[arg(long, value_enum, default_value_t = Format::Table)]
        format: Format,
        /// Electric solver for E: bem, fem, or auto (fem when the design has a dielectric or
        /// an enclosure).
        #[arg(long, value_enum, default_value_t = capacitance_fem::ElectricSolver::Auto)]
        electric_solver: capacitance_fem::ElectricSolver,
    },
    /// Geometry as VTK XML for any VTK viewer: each winding as polylines (turn index, peak
    /// current in A), each electrode as a surface, one .vtp file each, and a .pvd collection
    /// (design.pvd) of them. Lengths in metres.
    Export {
        /// Design file (TOML).
        design: PathBuf,
        /// Folder for the files (created if missing; files in it are replaced atomically).
        #[arg(long, value_name = "DIR")]
        vtk: PathBuf,
    },
    /// Sweep numeric keys of a design over a grid or random points and write one row of metrics
    /// per point (CSV or JSON Lines, by the extension of --out), append-only in point order.
    Sweep {
        /// Sweep file (TOML): base design, `[[axis]]` tables, metrics, constraints.
        sweep: PathBuf,
        /// Output file, .csv or .jsonl; `{shard}` is replaced by the shard number K.
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
        /// Continue an interrupted output: skip the points already in it, redo a torn last line.
        #[arg(long)]
        resume: bool,
        /// Run only the points with index % N == K (default: from a Slurm array task's
        /// variables, else all points).
        #[arg(long, value_name = "K/N")]
        shard: Option<String>,
        /// Also draw the first metric (.svg or .png, replaced atomically): against the
        /// parameter of a one-axis grid, or as a heat map with contours over a two-axis grid.
        #[arg(long, value_name = "FILE.svg|FILE.png")]
        plot: Option<PathBuf>,
    },
    /// Goal seeking on a design: the value of one parameter that reaches a target metric
    /// (Brent's method), or the minimum / maximum of a metric over 2-4 bounded parameters under
    /// constraints (Nelder-Mead). Reports the optimum, the metric there, evaluations, and why
    /// the search stopped.
    Seek {
        /// Seek file (TOML): base design, `[[axis]]` bounds, target | minimise | maximise,
        /// constraints.
        seek: PathBuf,
        /// table or json.
        #[arg(long, value_enum, default_value_t = Format::Table)]
        format: Format,
    },
    /// Join the outputs of the shards of one sweep into the file a single run would write;
    /// every point must be present exactly once.
    Merge {
        /// Shard outputs (all .csv or all .jsonl).
        #[arg(required = true)]
        files: Vec<PathBuf>,
        /// Merged output (written atomically).
        #[arg(long, value_name = "FILE")]
        out: PathBuf,
        /// The sweep file: gives the number of points, so missing last points are found too.
        #[arg(long, value_name = "SWEEP")]
        sweep: Option<PathBuf>,
    },
}

/// An error the user can fix in their input: exit code 2.
#[derive(Debug)]
pub struct BadInput(pub String);

impl std::fmt::Display for BadInput {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for BadInput {}

fn run(cli: Cli) -> anyhow::Result<ExitCode> {
    let threads = match cli.threads {
        Some(n) => Some(n),
        // A Slurm task may use the CPUs it was given, not the whole node.
        None => match std::env::var("SLURM_CPUS_PER_TASK") {
            Ok(v) => Some(v.trim().parse::<usize>().map_err(|_| {
                BadInput(format!(
                    "environment variable SLURM_CPUS_PER_TASK = `{v}` is not a whole number"
                ))
            })?),
            Err(_) => None,
        },
    };
    if matches!(cli.command, Command::Sweep { .. }) {
        sweep::small_pages_only();
    }
    if let Some(n) = threads {
        if n == 0 {
            return Err(BadInput("--threads: must be at least 1".into()).into());
        }
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
            .map_err(|e| anyhow::anyhow!("cannot start {n} threads: {e}"))?;
    }
    match cli.command {
        Command::Inductance {
            design,
            format,
            out,
        } => inductance::run(&design, format, out.as_deref()),
        Command::Report { design, html } => report::run(&design, html.as_deref()),
        Command::Verify { tables, format } => verify::run(tables.as_deref(), format),
        Command::Capacitance {
            design,
            format,
            out,
            electric_solver,
            mesh_vtk,
        } => capacitance::run(
            &design,
            format,
            out.as_deref(),
            electric_solver,
            mesh_vtk.as_deref(),
        ),
        Command::Resonance {
            design,
            sections,
            format,
            plot,
            plot_tap,
            electric_solver,
        } => resonance::run(
            &design,
            sections,
            format,
            plot.as_deref(),
            plot_tap.as_deref(),
            electric_solver,
        ),
        Command::Clearance {
            design,
            distance,
            long_gap_gradient,
            threshold,
            max_distance,
            format,
            electric_solver,
        } => clearance::run(clearance::ClearanceArgs {
            design: &design,
            distances: distance.as_deref(),
            long_gap_v_per_m: long_gap_gradient,
            extra: &threshold,
            max_distance_m: max_distance,
            format,
            electric: electric_solver,
        }),
        Command::Export { design, vtk } => export::run(&design, &vtk),
        Command::Field {
            design,
            at,
            points,
            format,
            out,
            electric_solver,
        } => fields::run(
            &design,
            &at,
            points.as_deref(),
            format,
            out.as_deref(),
            electric_solver,
        ),
        Command::Map {
            design,
            plane,
            offset,
            extent,
            bounds,
            resolution,
            vtk,
            plot,
            plot_quantity,
            electric_solver,
        } => map::run(map::MapArgs {
            design: &design,
            plane,
            offset_m: offset,
            extent: extent.as_deref(),
            bounds: bounds.as_deref(),
            resolution: &resolution,
            vtk: vtk.as_deref(),
            plot: plot.as_deref(),
            plot_quantity,
            electric: electric_solver,
        }),
        Command::Sweep {
            sweep,
            out,
            resume,
            shard,
            plot,
        } => {
            let shard = shard.as_deref().map(sweep::parse_shard).transpose()?;
            sweep::run(&sweep, &out, resume, shard, plot.as_deref())
        }
        Command::Seek { seek, format } => seek::run(&seek, format),
        Command::Merge { files, out, sweep } => sweep::merge(&files, &out, sweep.as_deref()),
    }
}

/// Whether an error in a command's chain is its standard output closed by the reader
/// ([`output::StdoutClosed`], or a broken pipe from a writer of stdout).
fn is_closed_stdout(e: &(dyn std::error::Error + 'static)) -> bool {
    e.is::<output::StdoutClosed>()
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(code) => code,
        // The reader of stdout went away (`| head`): stop quietly, as tools do.
        Err(err) if err.chain().any(is_closed_stdout) => ExitCode::SUCCESS,
        Err(err) => {
            let bad_input = err.chain().any(|e| {
                e.is::<BadInput>()
                    || e.is::<coilfield_geometry::DesignError>()
                    || e.is::<coilfield_solver::SolverError>()
                    // A file that cannot be written (read-only, full disk, a missing folder) is
                    // a bad output path: exit 2 like any other bad input.
                    || e.is::<std::io::Error>()
            });
            let mut message = format!("error: {err}");
            for cause in err.chain().skip(1) {
                message.push_str(&format!("\n  caused by: {cause}"));
            }
            eprintln!("{message}");
            if bad_input {
                ExitCode::from(2)
            } else {
                ExitCode::from(1)
            }
        }
    }
}
