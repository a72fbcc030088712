//! `coilfield`: inductance, coupling and near fields of air-core coils placed anywhere in space.
//!
//! The binary is the only part of the project that reads files, the environment or the
//! terminal; the `coilfield-geometry` and `coilfield-solver` crates stay pure.

mod export;
mod inductance;
mod load;
mod output;
// The field commands land in steps; these modules are wired in as the solver API appears.
#[allow(dead_code)]
mod plot;
mod report;
#[allow(dead_code)]
mod sample;
#[allow(dead_code)]
mod thresholds;
mod verify;
#[allow(dead_code)]
mod vtk;

use clap::{Parser, Subcommand, ValueEnum};
use std::path::PathBuf;
use std::process::ExitCode;

/// Air-core coil solver: self and mutual inductance and coupling of windings placed anywhere.
///
/// All quantities are SI: lengths in metres (design files may also say "55 mm", "1.5 in",
/// "AWG 22"), inductances in henries. Exit codes: 0 success, 1 a check failed, 2 bad input.
#[derive(Debug, Parser)]
#[command(name = "coilfield", version)]
struct Cli {
    /// Worker threads for the parallel kernels (default: all cores).
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
    if let Some(n) = cli.threads {
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
        Command::Report { design } => report::run(&design),
        Command::Verify { tables, format } => verify::run(tables.as_deref(), format),
        Command::Export { design, vtk } => export::run(&design, &vtk),
    }
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(code) => code,
        Err(err) => {
            let bad_input = err.chain().any(|e| {
                e.is::<BadInput>()
                    || e.is::<coilfield_geometry::DesignError>()
                    || e.is::<coilfield_solver::SolverError>()
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
