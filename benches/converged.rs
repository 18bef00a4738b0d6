//! Time to a converged answer: `mixband sample` run as a user runs it, with the defaults
//! (a config holding only the data file, its column and a seed), on samples of each
//! benchmark density at several sizes; wall time of the whole command (sampling and
//! summaries, figures and report), the gate's verdict and its lowest ESS.
//!
//! For each density (Marron & Wand 2, 6, 8 and 14 and the demo's generator, see
//! support/densities.rs) and each n it prints: n, wall seconds, the gate verdict, the
//! lowest ESS the gate judged (bulk or tail, over loglik, occupied, concentration and
//! every grid point), the lowest bulk ESS of the density over the grid divided by the
//! kept draws (ESS per draw) and the lowest gated ESS per wall second.
//!
//! `cargo bench --bench converged`. Environment: CONVERGED_SIZES (comma-separated n,
//! default 1000,10000,100000,1000000), CONVERGED_ONLY (substring of a density's name),
//! CONVERGED_TIMEOUT (seconds a run may take before it is stopped and reported as timed
//! out, default 900), CONVERGED_KEEP (a folder to keep the runs in), CONVERGED_DECIMALS
//! (d: every sample is recorded to d decimals and the config says so with
//! `[data] resolution = 10^-d`, the data-recorded-at-a-resolution case; unset: the values
//! are written in full and treated as exact, the demo generator's to one decimal),
//! CONVERGED_RESPLIT and CONVERGED_RELOCATE (m: `[sampler] resplit_moves = m`,
//! `relocate_moves = m`, docs/model.md "Re-split moves" and "Relocation moves").

#[path = "support/densities.rs"]
mod densities;

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use densities::{demo_density, densities, sample_csv_with, Density};

/// What one run gave.
enum Outcome {
    Finished {
        wall: f64,
        passed: bool,
        lowest_gated: f64,
        density_per_draw: f64,
    },
    TimedOut(f64),
    Failed(String),
}

fn env_list(name: &str, default: &[usize]) -> Vec<usize> {
    match std::env::var(name) {
        Ok(v) => v
            .split(',')
            .filter_map(|s| s.trim().replace('_', "").parse().ok())
            .collect(),
        Err(_) => default.to_vec(),
    }
}

/// The lowest ESS over the gated quantities and the grid, and the lowest bulk ESS of the
/// density per kept draw, read from diagnostics.json.
fn read_diagnostics(path: &Path) -> Result<(bool, f64, f64), String> {
    let text = std::fs::read_to_string(path).map_err(|e| format!("{}: {e}", path.display()))?;
    let v: serde_json::Value = serde_json::from_str(&text).map_err(|e| e.to_string())?;
    let passed = v["passed"].as_bool().unwrap_or(false);
    let draws = v["chains"].as_f64().unwrap_or(0.0) * v["draws_per_chain"].as_f64().unwrap_or(0.0);
    let mut lowest = f64::INFINITY;
    let mut take = |q: &serde_json::Value| {
        for key in ["ess_bulk", "ess_tail"] {
            if let Some(e) = q[key].as_f64() {
                lowest = lowest.min(e);
            }
        }
    };
    for q in v["quantities"].as_array().into_iter().flatten() {
        if q["gated"].as_bool() == Some(true) {
            take(q);
        }
    }
    let grid = v["density_grid"].as_array().cloned().unwrap_or_default();
    for q in &grid {
        take(q);
    }
    let density_bulk = grid
        .iter()
        .filter_map(|q| q["ess_bulk"].as_f64())
        .fold(f64::INFINITY, f64::min);
    Ok((passed, lowest, density_bulk / draws))
}

fn run_one(
    bin: &Path,
    dir: &Path,
    (d, recorded, moves): (&Density, Option<usize>, &str),
    n: usize,
    seed: u64,
    timeout: f64,
) -> Outcome {
    let decimals = recorded.or((d.name == "demo generator").then_some(1));
    let csv = sample_csv_with(d, n, seed, decimals);
    let resolution = recorded.map_or(String::new(), |d| {
        format!("resolution = {}\n", 10f64.powi(-(d as i32)))
    });
    if let Err(e) = std::fs::create_dir_all(dir)
        .and_then(|_| std::fs::write(dir.join("data.csv"), csv))
        .and_then(|_| {
            std::fs::write(
                dir.join("run.toml"),
                format!(
                    "[data]\nfile = \"data.csv\"\ncolumn = \"value\"\n{resolution}\n\
                     [sampler]\nseed = {seed}\n{moves}"
                ),
            )
        })
    {
        return Outcome::Failed(e.to_string());
    }
    let out = dir.join("run");
    let start = Instant::now();
    let child = Command::new(bin)
        .args(["sample", "run.toml", "--out", "run", "--force", "--quiet"])
        .current_dir(dir)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn();
    let mut child = match child {
        Ok(c) => c,
        Err(e) => return Outcome::Failed(e.to_string()),
    };
    loop {
        match child.try_wait() {
            Ok(Some(status)) => {
                let wall = start.elapsed().as_secs_f64();
                // Exit 3 is the gate's "not converged"; anything else but 0 is a failure.
                if !matches!(status.code(), Some(0) | Some(3)) {
                    return Outcome::Failed(format!("exit {status}"));
                }
                return match read_diagnostics(&out.join("diagnostics.json")) {
                    Ok((passed, lowest_gated, density_per_draw)) => Outcome::Finished {
                        wall,
                        passed,
                        lowest_gated,
                        density_per_draw,
                    },
                    Err(e) => Outcome::Failed(e),
                };
            }
            Ok(None) => {
                let t = start.elapsed().as_secs_f64();
                if t > timeout {
                    let _ = child.kill();
                    let _ = child.wait();
                    return Outcome::TimedOut(t);
                }
                std::thread::sleep(Duration::from_millis(100));
            }
            Err(e) => return Outcome::Failed(e.to_string()),
        }
    }
}

fn main() {
    let bin = PathBuf::from(env!("CARGO_BIN_EXE_mixband"));
    let sizes = env_list("CONVERGED_SIZES", &[1000, 10_000, 100_000, 1_000_000]);
    let only = std::env::var("CONVERGED_ONLY").unwrap_or_default();
    let timeout: f64 = std::env::var("CONVERGED_TIMEOUT")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(900.0);
    let keep = std::env::var("CONVERGED_KEEP").ok().map(PathBuf::from);
    let recorded: Option<usize> = std::env::var("CONVERGED_DECIMALS")
        .ok()
        .and_then(|v| v.parse().ok());
    let mut moves = String::new();
    for (var, key) in [
        ("CONVERGED_RESPLIT", "resplit_moves"),
        ("CONVERGED_RELOCATE", "relocate_moves"),
    ] {
        if let Some(m) = std::env::var(var)
            .ok()
            .and_then(|v| v.parse::<usize>().ok())
        {
            moves += &format!("{key} = {m}\n");
        }
    }
    let scratch = std::env::temp_dir().join(format!("mixband-converged-{}", std::process::id()));
    let root = keep.clone().unwrap_or_else(|| scratch.clone());
    let mut all = densities();
    all.push(demo_density());
    println!(
        "Time to a converged answer: `mixband sample` with the defaults, 4 chains, this machine"
    );
    if let Some(d) = recorded {
        println!("samples recorded to {d} decimals, `[data] resolution` set to match");
    }
    if !moves.is_empty() {
        println!("[sampler] {}", moves.trim().replace('\n', ", "));
    }
    println!(
        "{:<18} {:>9} {:>9} {:>14} {:>11} {:>12} {:>10}",
        "density", "n", "wall s", "gate", "lowest ESS", "ESS/draw", "ESS/s"
    );
    for (i, d) in all.iter().enumerate() {
        if !d.name.contains(only.as_str()) {
            continue;
        }
        for &n in &sizes {
            let seed = 7000 + 10 * i as u64;
            let dir = root.join(format!("{}-{n}", d.name.replace(' ', "-")));
            let label = d.name.split_whitespace().next().unwrap_or(d.name);
            match run_one(&bin, &dir, (d, recorded, &moves), n, seed, timeout) {
                Outcome::Finished {
                    wall,
                    passed,
                    lowest_gated,
                    density_per_draw,
                } => println!(
                    "{:<18} {:>9} {:>9.1} {:>14} {:>11.0} {:>12.3} {:>10.1}",
                    label,
                    n,
                    wall,
                    if passed { "pass" } else { "NOT CONVERGED" },
                    lowest_gated,
                    density_per_draw,
                    lowest_gated / wall
                ),
                Outcome::TimedOut(t) => {
                    println!("{label:<18} {n:>9} {t:>9.1} {:>14}", "timed out")
                }
                Outcome::Failed(e) => println!("{label:<18} {n:>9} failed: {e}"),
            }
        }
    }
    if keep.is_none() {
        let _ = std::fs::remove_dir_all(&scratch);
    }
}
