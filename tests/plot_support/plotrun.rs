//! A small finished run for the figure and report tests: deterministic data (two normal
//! bumps from a fixed linear congruential sequence), two short chains.

use std::path::{Path, PathBuf};

/// Box–Muller normals from a fixed LCG (Knuth's MMIX constants), so the data need no RNG crate.
fn normals(n: usize, seed: u64) -> Vec<f64> {
    let mut s = seed;
    let mut u = || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((s >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    };
    (0..n)
        .map(|_| {
            let (a, b) = (u(), u());
            (-2.0 * a.ln()).sqrt() * (2.0 * std::f64::consts::PI * b).cos()
        })
        .collect()
}

/// Makes `dir/run` from a bimodal sample of `n` values; returns the run directory.
pub fn make_run(dir: &Path, n: usize, extra_args: &[&str]) -> PathBuf {
    std::fs::create_dir_all(dir).unwrap();
    let z = normals(n, 42);
    let mut csv = String::from("length\n");
    for (i, v) in z.iter().enumerate() {
        let x = if i % 3 == 0 {
            30.0 + 1.5 * v
        } else {
            36.0 + 2.0 * v
        };
        csv.push_str(&format!("{x}\n"));
    }
    std::fs::write(dir.join("data.csv"), csv).unwrap();
    std::fs::write(
        dir.join("run.toml"),
        "[data]\nfile = \"data.csv\"\ncolumn = \"length\"\nunits = \"cm\"\n\n[sampler]\nchains = 2\nwarmup = 150\ndraws = 200\nseed = 5\n\n[bands]\nlevels = [0.5, 0.9, 0.99]\n",
    )
    .unwrap();
    let run = dir.join("run");
    let mut args: Vec<String> = vec!["mixband".into(), "sample".into()];
    args.push(dir.join("run.toml").display().to_string());
    args.push("--out".into());
    args.push(run.display().to_string());
    args.push("--force".into());
    args.push("-q".into());
    args.extend(extra_args.iter().map(|s| s.to_string()));
    let code = mixband::cli::main_with_args(args.into_iter().map(Into::into));
    assert!(code == 0 || code == 3, "sample exited {code}");
    run
}

/// A fresh scratch folder under the target directory.
pub fn scratch(name: &str) -> PathBuf {
    let base = std::env::var_os("CARGO_TARGET_TMPDIR")
        .map(PathBuf::from)
        .unwrap_or_else(std::env::temp_dir)
        .join(format!("mixband-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&base);
    base
}

/// bands.csv as columns by header name.
#[allow(dead_code)]
pub fn read_bands_csv(path: &Path) -> (Vec<String>, Vec<Vec<f64>>) {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    let head: Vec<String> = lines
        .next()
        .unwrap()
        .split(',')
        .map(str::to_string)
        .collect();
    let mut cols = vec![Vec::new(); head.len()];
    for l in lines {
        for (i, c) in l.split(',').enumerate() {
            cols[i].push(c.parse::<f64>().unwrap());
        }
    }
    (head, cols)
}
