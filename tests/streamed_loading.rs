//! Data recorded at a resolution are loaded row by row into their distinct values
//! (`run::load_sample`); the reference holds every row first (`run::load_sample_in_memory`,
//! the loader as it was before streaming). They must agree bit for bit: on random rounded
//! samples with weights, empty cells, −0 and values on a logit bound; in every message about
//! a bad cell or a value outside the transform's support (the same file line); and in a
//! whole run (bands, summaries, draws, checks, figures: the same bytes). Exact results, no
//! statistics: the reference is the straightforward form of the same computation.

mod common;

use std::path::Path;
use std::sync::atomic::AtomicBool;

use common::scratch_dir;
use mixband::run::{run_job, ExecOptions, JobOptions, Mode, Prepared};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

/// A CSV of `rows` values rounded to 0.01 (some printed "+x", "x.x0", padded or as "-0.00"),
/// with a weights column `w` (0 to 4) and empty cells in both columns now and then.
fn rounded_csv(rows: usize, seed: u64, lower: f64) -> String {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut s = String::from("id,x,w\n# a comment line, skipped by the reader\n");
    for i in 0..rows {
        let u: f64 = rng.random();
        let x = lower + (u * u * 300.0).round() / 100.0;
        let cell = match rng.random_range(0..12) {
            0 => String::new(),
            1 => format!("+{x:.2}"),
            2 => format!(" {x} "),
            3 if x == 0.0 => "-0.00".to_string(),
            _ => format!("{x:.2}"),
        };
        let w = match rng.random_range(0..15) {
            0 => String::new(),
            k => (k % 5).to_string(),
        };
        s.push_str(&format!("{i},{cell},{w}\n"));
    }
    s
}

/// Prepared both ways from `config` (its data given as `csv`); the Debug text of both, which
/// prints every f64 in its shortest round-trip form (so −0 and 0 differ).
fn both(config: &str, csv: &str) -> (Result<String, String>, Result<String, String>) {
    let get = |in_memory: bool| {
        let f = if in_memory {
            Prepared::from_text_in_memory
        } else {
            Prepared::from_text
        };
        f(config, "c.toml", Path::new("."), Some(csv.as_bytes()))
            .map(|p| format!("{p:?}"))
            .map_err(|e| e.to_string())
    };
    (get(false), get(true))
}

fn config(extra: &str) -> String {
    format!("[data]\nfile = \"d.csv\"\ncolumn = \"x\"\nresolution = 0.01\n{extra}\n[sampler]\nseed = 1\n")
}

#[test]
fn streamed_tabulation_equals_the_rows_held_in_memory() {
    for seed in 0..6 {
        let csv = rounded_csv(3000, seed, 0.0);
        for extra in [
            "missing = \"drop\"",
            "missing = \"drop\"\nweights = \"w\"",
            // Values of 0 lie on the bound: with a resolution their cell is censored there.
            "missing = \"drop\"\nweights = \"w\"\ntransform = \"logit\"\nlower = 0.0\nupper = 3.0",
        ] {
            let (streamed, in_memory) = both(&config(extra), &csv);
            let streamed = streamed.unwrap_or_else(|e| panic!("{extra}: {e}"));
            assert_eq!(streamed, in_memory.unwrap(), "seed {seed}, {extra}");
            // The table is short: 301 possible values.
            assert!(streamed.contains("cells: Some(Cells"), "{extra}");
        }
    }
    // −0.00 and 0.00 are one value, as they were.
    let csv = "x\n-0.00\n0.00\n0.01\n0.01\n0.02\n-0.00\n";
    let (a, b) = both(&config(""), csv);
    assert_eq!(a, b);
    assert!(a.unwrap().contains("count: [3, 2, 1]"));
}

#[test]
fn bad_cells_are_named_by_their_line_as_before() {
    let good = rounded_csv(200, 7, 0.5);
    let mut lines: Vec<String> = good.lines().map(String::from).collect();
    // Line 1 is the header, line 2 a comment: data row 40 is line 42.
    lines[41] = "39,abc,1".into();
    let bad = lines.join("\n") + "\n";
    let (a, b) = both(&config("missing = \"drop\""), &bad);
    let a = a.unwrap_err();
    assert_eq!(Err(a.clone()), b);
    assert!(
        a.contains("line 42 (data row 40)") && a.contains("\"abc\", not a number"),
        "{a}"
    );
    // An empty cell under missing = "error", and a negative weight.
    let (a, b) = both(&config("weights = \"w\""), "x,w\n1.00,2\n,3\n");
    let a = a.unwrap_err();
    assert_eq!(Err(a.clone()), b);
    assert!(
        a.contains("line 3 (data row 2)") && a.contains("is empty"),
        "{a}"
    );
    let (a, b) = both(&config("weights = \"w\""), "x,w\n1.00,2\n2.00,-3\n");
    let a = a.unwrap_err();
    assert_eq!(Err(a.clone()), b);
    assert!(
        a.contains("line 3 (data row 2)") && a.contains("\"-3\""),
        "{a}"
    );
    // Infinite values and a ragged row.
    let (a, b) = both(&config(""), "x\n1.00\ninf\n");
    assert_eq!(a, b);
    assert!(a.unwrap_err().contains("line 3 (data row 2)"));
    let (a, b) = both(&config(""), "x,y\n1.00,1\n2.00\n");
    assert_eq!(a, b);
    assert!(a
        .unwrap_err()
        .contains("line 3: 1 fields where the header has 2"));
    // No observations left.
    let (a, b) = both(&config("missing = \"drop\""), "x\n\n,\n");
    assert_eq!(a, b);
}

#[test]
fn values_beyond_a_bound_are_listed_with_their_lines_as_before() {
    // Twelve values below the lower bound 1 among good ones: the message lists the first
    // ten with their lines and counts the other two.
    let mut csv = String::from("x\n");
    let mut expect = Vec::new();
    for i in 0..60 {
        if i % 5 == 2 && expect.len() < 12 {
            csv.push_str("0.50\n");
            expect.push(i + 2);
        } else {
            csv.push_str(&format!("{:.2}\n", 1.5 + (i % 7) as f64 / 10.0));
        }
    }
    let extra = "transform = \"logit\"\nlower = 1.0\nupper = 3.0";
    let (a, b) = both(&config(extra), &csv);
    let a = a.unwrap_err();
    assert_eq!(Err(a.clone()), b);
    assert!(
        a.contains("has 12 beyond a bound") && a.contains("and 2 more"),
        "{a}"
    );
    for (k, line) in expect.iter().enumerate() {
        let named = a.contains(&format!("line {line} (data row {}) holds 0.5", line - 1));
        assert_eq!(named, k < 10, "line {line}: {a}");
    }
    // Under the log, non-positive values.
    let (a, b) = both(&config("transform = \"log\""), "x\n1.00\n-0.01\n0.00\n");
    let a = a.unwrap_err();
    assert_eq!(Err(a.clone()), b);
    assert!(a.contains("2 non-positive") && a.contains("line 4 (data row 3) holds 0"));
}

/// Every file of a run directory, by path relative to it, with the manifest's clock
/// readings blanked, and in report.html the run's path, date and sampling time.
fn run_files(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p);
                continue;
            }
            let name = p.strip_prefix(dir).unwrap().display().to_string();
            if name.ends_with(".lock") {
                continue;
            }
            let mut bytes = std::fs::read(&p).unwrap();
            if name == "manifest.json" {
                let mut m: serde_json::Value = serde_json::from_slice(&bytes).unwrap();
                blank_clock(&mut m);
                bytes = serde_json::to_vec_pretty(&m).unwrap();
            }
            if name == "report.html" {
                let text = String::from_utf8(bytes).unwrap();
                let text = text.replace(&dir.display().to_string(), "RUN");
                bytes = text
                    .split('>')
                    .filter(|seg| !(seg.ends_with(" UTC</dd") || seg.contains("s of sampling")))
                    .collect::<Vec<_>>()
                    .join(">")
                    .into_bytes();
            }
            out.push((name, bytes));
        }
    }
    out.sort();
    out
}

fn blank_clock(v: &mut serde_json::Value) {
    match v {
        serde_json::Value::Object(m) => {
            for (k, x) in m.iter_mut() {
                if k.contains("seconds") || k.contains("unix") || k.contains("time") {
                    *x = serde_json::Value::Null;
                } else {
                    blank_clock(x);
                }
            }
        }
        serde_json::Value::Array(a) => a.iter_mut().for_each(blank_clock),
        _ => {}
    }
}

#[test]
fn a_run_on_streamed_data_writes_the_same_bytes_as_on_rows_held_in_memory() {
    let dir = scratch_dir("streamed-run");
    std::fs::write(dir.join("d.csv"), rounded_csv(4000, 11, 0.0)).unwrap();
    let text = "[data]\nfile = \"d.csv\"\ncolumn = \"x\"\nresolution = 0.01\nmissing = \"drop\"\n\
                weights = \"w\"\n[sampler]\nchains = 2\nwarmup = 20\ndraws = 40\nseed = 5\n\
                [check]\nreplicates = 20\nloo_draws = 20\n";
    std::fs::write(dir.join("run.toml"), text).unwrap();
    let streamed = Prepared::from_config_file(&dir.join("run.toml")).unwrap();
    let in_memory = Prepared::from_text_in_memory(text, "run.toml", &dir, None).unwrap();
    assert_eq!(format!("{streamed:?}"), format!("{in_memory:?}"));
    // The SHA-256 taken while streaming is that of the whole file.
    let bytes = std::fs::read(dir.join("d.csv")).unwrap();
    assert_eq!(streamed.record.sha256, mixband::run::sha256_hex(&bytes));
    let stop = AtomicBool::new(false);
    let opts = JobOptions {
        exec: ExecOptions {
            threads: 1,
            quiet: true,
            stop: &stop,
        },
        report: true,
    };
    let fresh = Mode::Fresh { force: false };
    run_job(&streamed, &dir.join("a"), fresh, opts, &[]).unwrap();
    run_job(&in_memory, &dir.join("b"), fresh, opts, &[]).unwrap();
    let (a, b) = (run_files(&dir.join("a")), run_files(&dir.join("b")));
    let names: Vec<&str> = a.iter().map(|f| f.0.as_str()).collect();
    for want in ["bands.csv", "summary.json", "checks.json", "plots/cdf.svg"] {
        assert!(names.contains(&want), "{want} in {names:?}");
    }
    assert!(names.iter().any(|n| n.starts_with("draws/")), "{names:?}");
    assert_eq!(names, b.iter().map(|f| f.0.as_str()).collect::<Vec<_>>());
    for ((name, x), (_, y)) in a.iter().zip(&b) {
        assert!(x == y, "{name} differs");
    }
}
