//! Helpers shared by the bad-input, interrupt and resume tests: scratch folders, running
//! the built binary, deterministic test data, and byte-for-byte comparison of run outputs.

#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A scratch folder for one test, emptied at the start.
pub struct Scratch {
    pub dir: PathBuf,
}

impl Scratch {
    pub fn new(name: &str) -> Scratch {
        let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
            .join("robust")
            .join(name);
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        Scratch { dir }
    }

    pub fn path(&self, rel: &str) -> PathBuf {
        self.dir.join(rel)
    }

    pub fn write(&self, rel: &str, bytes: impl AsRef<[u8]>) -> PathBuf {
        let p = self.path(rel);
        if let Some(parent) = p.parent() {
            std::fs::create_dir_all(parent).unwrap();
        }
        std::fs::write(&p, bytes).unwrap();
        p
    }

    /// A `Command` for the mixband binary, run inside the scratch folder.
    pub fn command(&self, args: &[&str]) -> Command {
        let mut c = Command::new(env!("CARGO_BIN_EXE_mixband"));
        c.args(args)
            .current_dir(&self.dir)
            .env_remove("MIXBAND_CHECKPOINT_SECS");
        c
    }

    pub fn run(&self, args: &[&str]) -> Output {
        self.command(args).output().unwrap()
    }

    /// The arguments of `mixband sample c.toml --out OUT --quiet --threads T`.
    pub fn sample_args<'a>(out: &'a str, threads: &'a str) -> [&'a str; 7] {
        [
            "sample",
            "c.toml",
            "--out",
            out,
            "--quiet",
            "--threads",
            threads,
        ]
    }

    /// Runs `mixband sample c.toml` into `out` with `threads` threads.
    pub fn sample(&self, out: &str, threads: &str) -> Output {
        self.run(&Self::sample_args(out, threads))
    }
}

pub fn stderr(out: &Output) -> String {
    String::from_utf8_lossy(&out.stderr).into_owned()
}

/// Asserts a finished run: exit 0, or 3 when the convergence gate failed (outputs are still
/// written; these short test runs are not meant to pass the gate).
pub fn assert_ok(out: &Output) {
    let code = out.status.code();
    assert!(
        matches!(code, Some(0) | Some(3)),
        "exit {code:?}, stderr: {}",
        stderr(out)
    );
    assert!(!stderr(out).contains("panicked"), "stderr: {}", stderr(out));
}

/// Asserts a bad-input exit (code 2) whose message contains every needle, without a panic.
pub fn assert_input_error(out: &Output, needles: &[&str]) {
    let err = stderr(out);
    assert_eq!(out.status.code(), Some(2), "stderr: {err}");
    assert!(!err.contains("panicked"), "panic in stderr: {err}");
    for n in needles {
        assert!(err.contains(n), "expected {n:?} in stderr: {err}");
    }
}

/// `n` draws from a two-component normal mixture, made by a fixed linear congruential
/// generator and Box–Muller, printed with 6 decimals: the same bytes on every machine.
pub fn mixture_csv(n: usize) -> String {
    let mut state: u64 = 0x2545_F491_4F6C_DD1D;
    let mut unif = move || {
        // Knuth's MMIX constants (common practice, no source).
        state = state
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        ((state >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    };
    let mut s = String::from("id,value\n");
    for i in 0..n {
        let z = (-2.0 * unif().ln()).sqrt() * (2.0 * std::f64::consts::PI * unif()).cos();
        let v = if i % 3 == 0 { 4.0 + 0.5 * z } else { z };
        s.push_str(&format!("{i},{v:.6}\n"));
    }
    s
}

/// The files of a run that must be byte-identical between runs of one config and seed:
/// draw tables, checkpoints, bands and (when present) diagnostics.
pub fn result_files(run: &Path) -> Vec<PathBuf> {
    let mut files = Vec::new();
    for sub in ["draws", "state"] {
        let mut v: Vec<PathBuf> = std::fs::read_dir(run.join(sub))
            .unwrap()
            .map(|e| e.unwrap().path())
            .filter(|p| !p.file_name().unwrap().to_string_lossy().starts_with('.'))
            .collect();
        v.sort();
        files.extend(
            v.into_iter()
                .map(|p| p.strip_prefix(run).unwrap().to_path_buf()),
        );
    }
    for name in ["bands.csv", "bands.json", "diagnostics.json"] {
        if run.join(name).exists() {
            files.push(PathBuf::from(name));
        }
    }
    files
}

/// Asserts that two runs wrote the same result files with the same bytes.
pub fn assert_same_results(a: &Path, b: &Path) {
    let fa = result_files(a);
    let fb = result_files(b);
    assert_eq!(
        fa,
        fb,
        "different result files in {} and {}",
        a.display(),
        b.display()
    );
    assert!(
        fa.iter().any(|f| f.starts_with("draws")),
        "no draw tables in {}",
        a.display()
    );
    assert!(
        fa.iter().any(|f| f.ends_with("bands.csv")),
        "no bands in {}",
        a.display()
    );
    for f in fa {
        let x = std::fs::read(a.join(&f)).unwrap();
        let y = std::fs::read(b.join(&f)).unwrap();
        assert!(
            x == y,
            "{} differs between {} and {}",
            f.display(),
            a.display(),
            b.display()
        );
    }
}

/// The manifest of a run as JSON.
pub fn manifest(run: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(run.join("manifest.json")).unwrap()).unwrap()
}
