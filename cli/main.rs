//! `coilfield`: inductance, coupling and near fields of air-core coils placed anywhere in space.
//!
//! The binary is the only part of the project that reads files, the environment or the
//! terminal; the `coilfield-geometry` and `coilfield-solver` crates stay pure.

mod inductance;
mod load;
mod output;
mod plot;
mod report;
mod seek;
mod sweep;
mod verify;

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
        /// Also draw the first metric (SVG): against the parameter of a one-axis grid, or as a
        /// heat map with contours over a two-axis grid.
        #[arg(long, value_name = "FILE.svg")]
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
        Command::Report { design } => report::run(&design),
        Command::Verify { tables, format } => verify::run(tables.as_deref(), format),
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
