//! Parameter sweeps as a library: plan once, evaluate every point, stream the rows in point
//! order to any writer, resume an interrupted output, run a shard, merge the shards.
//!
//! Nothing here touches files, the clock, the environment or a terminal: the caller reads the
//! sweep file and the base design and passes their texts, passes a [`RowSink`] (any
//! [`std::io::Write`] is one) and a stop flag, and decides when to write and sync.
//!
//! - [`SweepPlan::new`]: the parsed sweep file
//!   ([`coilfield_geometry::file::sweep::parse_sweep`]) with the base design's text; checks
//!   the metrics, constraints and every axis value alone before any point is computed.
//! - [`SweepPlan::design_with`]: a point's design, each edited winding or electrode read again
//!   from its base table with the values set, then the checks between parts over the pairs
//!   that involve an edited part.
//! - [`SweepPlan::run`]: rows of the points in parallel ([`Par`](crate::Par)), each point
//!   computed sequentially, so the output does not depend on threads.
//! - [`SweepPlan::header`], [`SweepPlan::row`]: CSV or JSON Lines rows ([`OutFormat`]).
//! - [`Shard`]: the points with index % n == k; [`SweepPlan::resume`]: how much of an output
//!   is done and where its torn last line starts; [`merge`]: the shards' texts joined.
//!
//! # Example
//! ```
//! use coilfield_geometry::file::sweep::parse_sweep;
//! use coilfield_solver::sweep::{OutFormat, Shard, SweepPlan};
//! use std::sync::atomic::AtomicBool;
//!
//! let base = "[[winding]]\nname = \"a\"\nshape = \"ring\"\norigin = [0.0, 0.0, 0.0]\n\
//!             axis = [0.0, 0.0, 1.0]\nradius = 1.0\nwire_diameter = 0.001\n\
//!             [[winding]]\nname = \"b\"\nshape = \"ring\"\norigin = [0.0, 0.0, 1.0]\n\
//!             axis = [0.0, 0.0, 1.0]\nradius = 1.0\nwire_diameter = 0.001\n";
//! let sweep = parse_sweep(
//!     "base = \"base.toml\"\nmetrics = [\"mutual.a.b\"]\n\
//!      [[axis]]\nkey = \"winding.b.origin[2]\"\nvalues = [1.0, 2.0]\n",
//!     "sweep.toml",
//! )
//! .unwrap();
//! let plan = SweepPlan::new(sweep, "sweep.toml", base, "base.toml", coilfield_solver::Par::Seq)
//!     .unwrap();
//! let mut out = plan.header(OutFormat::Csv).into_bytes();
//! let points = Shard::ALL.indices(plan.points().len());
//! let stop = AtomicBool::new(false);
//! let rows = plan
//!     .run(&points, OutFormat::Csv, coilfield_solver::Par::Seq, &stop, &mut out)
//!     .unwrap();
//! assert_eq!(rows, 2);
//! let text = String::from_utf8(out).unwrap();
//! assert!(text.starts_with("point,winding.b.origin[2],mutual.a.b,status,message\n0,1,"));
//! ```

mod identity;
mod merge;
mod plan;
mod resume;
mod rows;
mod run;

pub use identity::identity_hash_of;
pub use merge::merge;
pub use plan::SweepPlan;
pub use resume::{Resumed, Shard};
pub use rows::OutFormat;
pub use run::RowSink;
