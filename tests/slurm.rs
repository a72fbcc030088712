//! A sweep run as a real Slurm job array (`.ci/slurm-up.sh` starts a single-node cluster), then
//! merged by a dependent job, must give the single-process file byte for byte; and Slurm itself
//! must report every array task COMPLETED, so a silent fallback to local runs cannot pass.
//!
//! Ignored unless asked for: `.ci/test` starts Slurm and runs it with `--include-ignored`, so a
//! run without a cluster lists it as ignored, never as passed.

mod common;

use common::*;
use std::process::Command;
use std::time::{Duration, Instant};

fn sh(cmd: &str, args: &[&str]) -> String {
    let o = Command::new(cmd)
        .args(args)
        .output()
        .unwrap_or_else(|e| panic!("{cmd}: {e}"));
    assert!(
        o.status.success(),
        "{cmd} {args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8_lossy(&o.stdout).into_owned()
}

/// Final states of the jobs of an array (and its dependent job) from `scontrol show job`.
fn states(job: &str) -> Vec<(String, String)> {
    let o = Command::new("scontrol")
        .args(["show", "job", job])
        .output()
        .expect("scontrol");
    let text = String::from_utf8_lossy(&o.stdout).into_owned();
    text.split("\n\n")
        .filter(|b| b.contains("JobId="))
        .map(|b| {
            let field = |k: &str| {
                b.split_whitespace()
                    .find_map(|w| w.strip_prefix(k))
                    .unwrap_or("")
                    .to_string()
            };
            (field("ArrayTaskId="), field("JobState="))
        })
        .collect()
}

#[test]
#[ignore = "needs a local Slurm (.ci/slurm-up.sh; .ci/test runs it with --include-ignored)"]
fn job_array_shards_merge_into_the_single_process_file() {
    // Slurm jobs run as root on this node and need a folder they can all see.
    std::fs::create_dir_all(root().join("target")).unwrap();
    let dir = tempfile::Builder::new()
        .prefix("coilfield-slurm-")
        .tempdir_in(root().join("target"))
        .unwrap();
    let d = dir.path();
    std::fs::copy(
        root().join("meshes-demo/tabletop-resonator.toml"),
        d.join("tabletop-resonator.toml"),
    )
    .unwrap();
    std::fs::copy(
        root().join("meshes-demo/sweep-small.toml"),
        d.join("sweep.toml"),
    )
    .unwrap();
    let bin = bin();
    let single = d.join("single.csv");
    let o = run(&[
        "sweep",
        d.join("sweep.toml").to_str().unwrap(),
        "--out",
        single.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));

    let array = format!(
        "#!/bin/bash\n#SBATCH --array=0-2\n#SBATCH --cpus-per-task=1\n#SBATCH --output={d}/task-%a.log\n\
         set -e\ncd {d}\n{bin} sweep sweep.toml --out 'part-{{shard}}.csv'\n",
        d = d.display()
    );
    std::fs::write(d.join("array.sh"), array).unwrap();
    let job = sh(
        "sbatch",
        &["--parsable", d.join("array.sh").to_str().unwrap()],
    )
    .trim()
    .to_string();
    let merge = format!(
        "#!/bin/bash\n#SBATCH --output={d}/merge.log\nset -e\ncd {d}\n\
         {bin} merge part-0.csv part-1.csv part-2.csv --sweep sweep.toml --out merged.csv\n",
        d = d.display()
    );
    std::fs::write(d.join("merge.sh"), merge).unwrap();
    let merge_job = sh(
        "sbatch",
        &[
            "--parsable",
            &format!("--dependency=afterok:{job}"),
            d.join("merge.sh").to_str().unwrap(),
        ],
    )
    .trim()
    .to_string();

    let start = Instant::now();
    loop {
        let tasks = states(&job);
        let merged = states(&merge_job);
        let finished =
            |s: &str| !matches!(s, "PENDING" | "RUNNING" | "CONFIGURING" | "COMPLETING" | "");
        if tasks.len() == 3
            && tasks.iter().all(|t| finished(&t.1))
            && merged.iter().all(|t| finished(&t.1))
            && !merged.is_empty()
        {
            break;
        }
        assert!(
            start.elapsed() < Duration::from_secs(300),
            "Slurm jobs did not finish: {tasks:?} {merged:?}"
        );
        std::thread::sleep(Duration::from_millis(500));
    }
    let tasks = states(&job);
    let mut ids: Vec<&str> = tasks.iter().map(|t| t.0.as_str()).collect();
    ids.sort_unstable();
    assert_eq!(ids, ["0", "1", "2"], "{tasks:?}");
    for (id, state) in &tasks {
        let log = std::fs::read_to_string(d.join(format!("task-{id}.log"))).unwrap_or_default();
        assert_eq!(state, "COMPLETED", "array task {id}: {log}");
    }
    let merged_state = states(&merge_job);
    assert_eq!(
        merged_state[0].1, "COMPLETED",
        "merge job: {merged_state:?}"
    );
    // Each task ran its own shard (index % 3 == K) on Slurm's variables alone.
    for k in 0..3 {
        let part = std::fs::read_to_string(d.join(format!("part-{k}.csv"))).unwrap();
        for line in part.lines().skip(1) {
            let p: usize = line.split(',').next().unwrap().parse().unwrap();
            assert_eq!(p % 3, k, "part-{k}.csv holds point {p}");
        }
    }
    assert_eq!(
        std::fs::read(d.join("merged.csv")).unwrap(),
        std::fs::read(&single).unwrap()
    );
}
