//! A mutation fuzzer over the demo designs and sweep files, in process and through the binary.
//!
//! In process: at least 20,000 mutated inputs through parsing, validation and the cheap
//! computations (ring models; sweep points), with panics caught and the input printed; every
//! value computed from an accepted input must be finite. Through the binary: at least 1,000 runs
//! of `inductance` and `sweep` on mutated files, each ending with exit code 0 or 2 and never
//! printing `inf` or `NaN`. The seed (fixed, or COILFIELD_FUZZ_SEED) and the counts are
//! printed. Inputs stay small (the demo files, one to three mutations each, no mutation to a
//! size that takes seconds), so each run takes well under a second. Every failure found is kept
//! in `tests/fuzz_cases/` and run by `kept_cases_end_with_0_or_2`.

mod common;

use coilfield_geometry::discretise::ring_model;
use coilfield_geometry::file::sweep::{parse_sweep, points};
use coilfield_geometry::parse_design;
use common::{bin, root};
use std::path::Path;
use std::process::Command;

/// SplitMix64 (G. L. Steele, D. Lea, C. H. Flood, "Fast splittable pseudorandom number
/// generators", OOPSLA 2014): a small, fixed generator, so a seed replays the same inputs.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n.max(1) as u64) as usize
    }
}

fn seed() -> u64 {
    std::env::var("COILFIELD_FUZZ_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(0x00C0_11F1_E1D5)
}

/// Values a careless user or an attacker writes: out of range, non-finite, wrong type, huge.
fn hostile(rng: &mut Rng) -> String {
    const V: &[&str] = &[
        "0",
        "-1",
        "1e-10",
        "5e-324",
        "1e308",
        "-1e308",
        "nan",
        "inf",
        "-inf",
        "1e-9",
        "1e5",
        "0.01",
        "0.009",
        "3",
        "2.5",
        "-0.0",
        "1e-300",
        "1e200",
        "\"1 mm\"",
        "\"55 mm\"",
        "\"AWG 99\"",
        "\"AWG 10\"",
        "\"\"",
        "true",
        "[]",
        "{}",
        "[0.0, 0.0]",
        "[1e300, 0.0, 0.0]",
        "\"kV\"",
        "\"5e-324 m\"",
    ];
    match rng.below(12) {
        0 => format!("\"{}\"", "x".repeat(70 + rng.below(3000))),
        _ => V[rng.below(V.len())].to_string(),
    }
}

/// One to three mutations of `text`: a value replaced by a hostile one, a line deleted,
/// duplicated or swapped, a byte flipped or inserted, the text cut short.
fn mutate(text: &str, rng: &mut Rng) -> Vec<u8> {
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let mut bytes: Option<Vec<u8>> = None;
    for _ in 0..1 + rng.below(3) {
        if lines.is_empty() {
            break;
        }
        let i = rng.below(lines.len());
        match rng.below(8) {
            0..=3 => {
                // The value of a `key = value` line (or an array element).
                if let Some(eq) = lines[i].find('=') {
                    let key = lines[i][..eq].to_string();
                    lines[i] = format!("{key}= {}", hostile(rng));
                }
            }
            4 => {
                lines.remove(i);
            }
            5 => {
                let l = lines[i].clone();
                lines.insert(i, l);
            }
            6 => {
                let j = rng.below(lines.len());
                lines.swap(i, j);
            }
            _ => {
                let mut b = lines.join("\n").into_bytes();
                if b.is_empty() {
                    continue;
                }
                let at = rng.below(b.len());
                match rng.below(3) {
                    0 => b[at] ^= 1 << rng.below(8),
                    1 => b.insert(at, rng.next() as u8),
                    _ => b.truncate(at),
                }
                bytes = Some(b);
                break;
            }
        }
    }
    bytes.unwrap_or_else(|| (lines.join("\n") + "\n").into_bytes())
}

fn demo(name: &str) -> String {
    std::fs::read_to_string(root().join("meshes-demo").join(name)).unwrap()
}

const DESIGNS: &[&str] = &[
    "tabletop-resonator.toml",
    "square-loop.toml",
    "offset-primary.toml",
    "exciter.toml",
    "spark-gap-resonator.toml",
];
const SWEEPS: &[&str] = &[
    "sweep-small.toml",
    "sweep-primary.toml",
    "seek-coupling.toml",
];

/// Parse, validate and discretise one design; panics (caught by the caller) on a non-finite
/// value from an accepted input.
fn design_case(bytes: &[u8]) -> bool {
    let Ok(text) = std::str::from_utf8(bytes) else {
        return false;
    };
    let Ok(design) = parse_design(text, "fuzz.toml") else {
        return false;
    };
    for w in &design.windings {
        if let Some(m) = ring_model(w) {
            assert!(!m.rings.is_empty(), "a ring model without rings");
            for r in &m.rings {
                assert!(
                    r.radius_m.is_finite()
                        && r.weight.is_finite()
                        && r.centre_m.iter().all(|c| c.is_finite()),
                    "non-finite ring {r:?}"
                );
            }
        }
    }
    true
}

fn sweep_case(bytes: &[u8]) -> bool {
    let Ok(text) = std::str::from_utf8(bytes) else {
        return false;
    };
    let Ok(sweep) = parse_sweep(text, "fuzz.toml") else {
        return false;
    };
    if let Ok(pts) = points(&sweep, "fuzz.toml") {
        assert!(
            pts.iter().flatten().all(|v| v.is_finite()),
            "non-finite point"
        );
        return true;
    }
    false
}

#[test]
fn mutated_inputs_never_panic_in_process() {
    let seed = seed();
    let mut rng = Rng(seed);
    let designs: Vec<String> = DESIGNS.iter().map(|d| demo(d)).collect();
    let sweeps: Vec<String> = SWEEPS.iter().map(|d| demo(d)).collect();
    let (mut runs, mut accepted) = (0usize, 0usize);
    let previous = std::panic::take_hook();
    std::panic::set_hook(Box::new(|_| {}));
    let mut failure = None;
    while runs < 20_000 && failure.is_none() {
        let is_design = rng.below(4) != 0;
        let base = if is_design {
            &designs[rng.below(designs.len())]
        } else {
            &sweeps[rng.below(sweeps.len())]
        };
        let input = mutate(base, &mut rng);
        let result = std::panic::catch_unwind(|| {
            if is_design {
                design_case(&input)
            } else {
                sweep_case(&input)
            }
        });
        match result {
            Ok(ok) => accepted += usize::from(ok),
            Err(e) => {
                let why = e
                    .downcast_ref::<String>()
                    .cloned()
                    .or_else(|| e.downcast_ref::<&str>().map(|s| s.to_string()))
                    .unwrap_or_default();
                failure = Some((input, why));
            }
        }
        runs += 1;
    }
    std::panic::set_hook(previous);
    eprintln!("fuzz (in process): seed {seed}, {runs} inputs, {accepted} accepted");
    if let Some((input, why)) = failure {
        panic!(
            "panic on input {runs} (seed {seed}): {why}\n--- input ---\n{}",
            String::from_utf8_lossy(&input)
        );
    }
    assert!(
        accepted > 100,
        "too few inputs accepted ({accepted}) to exercise the models"
    );
}

/// Run `args` in `dir`; the exit code must be 0 or 2 and stdout must hold no `inf` or `NaN`
/// number. Returns the failure, if any.
fn binary_case(dir: &Path, args: &[&str]) -> Option<String> {
    let out = Command::new(bin())
        .current_dir(dir)
        .args(args)
        .output()
        .expect("run coilfield");
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    let code = out.status.code();
    if !matches!(code, Some(0) | Some(2)) || stderr.contains("panicked") {
        return Some(format!("exit {:?}\n{stderr}", out.status));
    }
    let non_finite = stdout
        .split(|c: char| c.is_whitespace() || c == ',')
        .any(|t| matches!(t.trim_matches(|c| c == '"'), "inf" | "-inf" | "NaN" | "nan"));
    if non_finite {
        return Some(format!("a non-finite number printed:\n{stdout}"));
    }
    None
}

#[test]
fn mutated_files_through_the_binary_exit_0_or_2() {
    let seed = seed() ^ 0xB1;
    let mut rng = Rng(seed);
    let dir = tempfile::tempdir().unwrap();
    let designs: Vec<String> = DESIGNS.iter().map(|d| demo(d)).collect();
    std::fs::write(dir.path().join("tabletop-resonator.toml"), &designs[0]).unwrap();
    let sweep = demo("sweep-small.toml");
    let (mut runs, mut ok) = (0usize, 0usize);
    for _ in 0..1_000 {
        let (args, input): (Vec<String>, Vec<u8>) = if rng.below(5) == 0 {
            let input = mutate(&sweep, &mut rng);
            std::fs::write(dir.path().join("s.toml"), &input).unwrap();
            let _ = std::fs::remove_file(dir.path().join("o.csv"));
            let args = ["sweep", "s.toml", "--out", "o.csv", "--threads", "1"];
            (args.iter().map(|s| s.to_string()).collect(), input)
        } else {
            let input = mutate(&designs[rng.below(designs.len())], &mut rng);
            std::fs::write(dir.path().join("d.toml"), &input).unwrap();
            let args = ["inductance", "d.toml", "--threads", "1"];
            (args.iter().map(|s| s.to_string()).collect(), input)
        };
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        if let Some(why) = binary_case(dir.path(), &args) {
            panic!(
                "run {runs} (seed {seed}) `{}`: {why}\n--- input ---\n{}",
                args.join(" "),
                String::from_utf8_lossy(&input)
            );
        }
        if std::fs::metadata(dir.path().join("o.csv")).is_ok() || args[0] == "inductance" {
            ok += 1;
        }
        runs += 1;
    }
    eprintln!(
        "fuzz (binary): seed {seed}, {runs} runs, all exit 0 or 2 ({ok} inductance or sweep runs)"
    );
    assert_eq!(runs, 1_000);
}

#[test]
fn kept_cases_end_with_0_or_2() {
    let cases = root().join("tests/fuzz_cases");
    let mut n = 0;
    for entry in std::fs::read_dir(&cases).unwrap() {
        let p = entry.unwrap().path();
        if p.extension().is_some_and(|e| e == "toml") {
            let why = binary_case(&cases, &["inductance", p.to_str().unwrap()]);
            assert!(why.is_none(), "{}: {}", p.display(), why.unwrap());
            n += 1;
        }
    }
    assert!(n >= 5, "only {n} kept cases");
}
