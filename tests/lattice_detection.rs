//! How the values were recorded, end to end through `mixband sample`: a sample rounded to
//! 0.1 and treated as exact gets a note on stderr naming the lattice and the
//! `[data] resolution` key, `manifest.json` records it under `data.recording`, and
//! report.html states that the values are treated as exact and shows the note. With the
//! resolution set there is no lattice note and the report states the cells; heaping on
//! whole units is reported whatever the resolution.
//!
//! The samples are the normal quantiles 50 + 2·Φ⁻¹((i + ½)/n) (statrs), rounded to 0.1,
//! so they are fixed without a random stream; that they lie on the 0.1 lattice and which
//! share of them sits on whole units are exact facts of that construction. The thresholds
//! the detector uses are common practice, no source (docs/model.md).

mod common;

use std::path::Path;
use std::process::Command;

use common::scratch_dir;
use statrs::distribution::{ContinuousCDF, Normal};

const N: usize = 400;

/// The sample: every value to 0.1, and with `heaped` every fourth to a whole unit.
fn csv(heaped: bool) -> String {
    let d = Normal::new(50.0, 2.0).unwrap();
    let mut s = String::from("wing\n");
    for i in 0..N {
        let x = d.inverse_cdf((i as f64 + 0.5) / N as f64);
        if heaped && i % 4 == 0 {
            s.push_str(&format!("{:.0}\n", x.round()));
        } else {
            s.push_str(&format!("{:.1}\n", x));
        }
    }
    s
}

struct Ran {
    stderr: String,
    manifest: serde_json::Value,
    report: String,
}

/// Runs `mixband sample` (2 chains, 40 draws: the note does not depend on the draws).
fn sample(tag: &str, heaped: bool, resolution: Option<f64>) -> Ran {
    sample_then(tag, heaped, resolution, |_| {})
}

/// [`sample`], then `after(run directory)` before the outputs are read.
fn sample_then(tag: &str, heaped: bool, resolution: Option<f64>, after: impl Fn(&Path)) -> Ran {
    let dir = scratch_dir(tag);
    std::fs::write(dir.join("data.csv"), csv(heaped)).unwrap();
    let res = resolution.map_or(String::new(), |r| format!("resolution = {r}\n"));
    std::fs::write(
        dir.join("run.toml"),
        format!(
            "[data]\nfile = \"data.csv\"\ncolumn = \"wing\"\n{res}\n\
             [model]\ncomponents = 4\n\n[sampler]\nchains = 2\nwarmup = 20\ndraws = 40\nseed = 8\n"
        ),
    )
    .unwrap();
    let run = dir.join("run");
    let out = Command::new(env!("CARGO_BIN_EXE_mixband"))
        .args(["sample", "-q", "--threads", "2", "--out"])
        .arg(&run)
        .arg(dir.join("run.toml"))
        .output()
        .unwrap();
    let stderr = String::from_utf8_lossy(&out.stderr).into_owned();
    // 0: converged; 3: the gate failed (README, exit codes), expected of a run this short.
    assert!(
        matches!(out.status.code(), Some(0 | 3)),
        "sample failed: {stderr}"
    );
    let read = |p: &Path| std::fs::read_to_string(p).unwrap();
    after(&run);
    let ran = Ran {
        stderr,
        manifest: serde_json::from_str(&read(&run.join("manifest.json"))).unwrap(),
        report: read(&run.join("report.html")),
    };
    let _ = std::fs::remove_dir_all(&dir);
    ran
}

/// The text of the element with id `id` in the (polyglot XHTML) report, if any.
fn element_text(html: &str, id: &str) -> Option<String> {
    let opt = roxmltree::ParsingOptions {
        allow_dtd: true,
        ..Default::default()
    };
    let doc = roxmltree::Document::parse_with_options(html, opt).expect("well-formed report");
    doc.descendants()
        .find(|n| n.attribute("id") == Some(id))
        .map(|n| {
            n.descendants()
                .filter(|d| d.is_text())
                .filter_map(|d| d.text())
                .collect()
        })
}

/// The "recording" row of the report's metadata.
fn recording_row(html: &str) -> String {
    let start = html.find("<dt>recording</dt><dd>").expect("recording row") + 22;
    html[start..start + html[start..].find("</dd>").unwrap()].to_string()
}

#[test]
fn a_rounded_sample_treated_as_exact_is_named_with_its_key() {
    let r = sample("lattice-exact", false, None);
    assert!(
        r.stderr
            .contains("values lie on a lattice of step 0.1 (100% of 400 values;"),
        "{}",
        r.stderr
    );
    assert!(
        r.stderr.contains("`[data] resolution = 0.1`"),
        "{}",
        r.stderr
    );
    assert!(!r.stderr.contains("heaping"), "{}", r.stderr);
    let rec = &r.manifest["data"]["recording"];
    assert_eq!(rec["resolution"], serde_json::Value::Null);
    assert_eq!(rec["n"], 400);
    assert_eq!(rec["lattice"]["step"], 0.1);
    assert_eq!(rec["lattice"]["share"], 1.0);
    assert!(rec.get("heaping").is_none());
    assert_eq!(recording_row(&r.report), "values treated as exact");
    let note = element_text(&r.report, "recording-note").expect("a note in the report");
    assert!(
        note.contains("lattice of step 0.1") && note.contains("[data] resolution = 0.1"),
        "{note}"
    );
}

#[test]
fn with_the_resolution_set_the_report_states_the_cells_and_no_lattice_note_appears() {
    let r = sample("lattice-set", false, Some(0.1));
    assert!(!r.stderr.contains("lattice"), "{}", r.stderr);
    assert_eq!(r.manifest["data"]["recording"]["resolution"], 0.1);
    assert_eq!(
        recording_row(&r.report),
        "values treated as recorded to 0.1: each stands for [x − 0.05, x + 0.05)"
    );
    assert_eq!(element_text(&r.report, "recording-note"), None);
}

#[test]
fn heaping_on_whole_units_is_reported_with_a_resolution_set() {
    // A quarter of the values on whole units, the rest to 0.1: whole units hold about
    // 25% + 75%·10% = 32.5% (exact arithmetic of the construction, up to the quantiles'
    // spacing), where the neighbouring tenths give about 7.5%.
    let r = sample("lattice-heaped", true, Some(0.1));
    assert!(
        r.stderr.contains("heaping: ")
            && r.stderr
                .contains("lie on multiples of 1, where their neighbours"),
        "{}",
        r.stderr
    );
    assert!(
        !r.stderr.contains("values lie on a lattice"),
        "{}",
        r.stderr
    );
    let h = &r.manifest["data"]["recording"]["heaping"];
    assert_eq!(
        (h["step"].as_f64(), h["within"].as_f64()),
        (Some(1.0), Some(0.1))
    );
    let share = h["share"].as_f64().unwrap();
    let expected = h["expected_share"].as_f64().unwrap();
    assert!((0.30..0.35).contains(&share), "share {share}");
    assert!(
        (0.05..0.10).contains(&expected),
        "expected share {expected}"
    );
    let note = element_text(&r.report, "recording-note").expect("a note in the report");
    assert!(note.contains("[data] resolution = 1"), "{note}");
}

#[test]
fn the_demo_sample_is_found_on_its_lattice_of_a_tenth_without_heaping() {
    // demo-data/generate.py rounds the invented wing lengths to 0.1 mm: 640 values, 123
    // distinct, 69 of them (10.8%) on whole millimetres (counted from the file).
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/warbler-wings.csv");
    let s = mixband::data::load_column(&path, "wing_mm", mixband::config::MissingPolicy::Error)
        .unwrap();
    let whole = s.values.iter().filter(|v| v.fract() == 0.0).count();
    assert_eq!((s.values.len(), whole), (640, 69));
    let r = mixband::data::Recording::detect(&s.values, None, None);
    assert_eq!((r.n, r.distinct), (640, 123));
    let l = r.lattice.expect("a lattice");
    assert_eq!((l.step, l.offset, l.share), (0.1, 0.0, 1.0));
    assert_eq!(r.heaping, None);
}

#[test]
fn extend_prints_the_note_and_records_it_in_a_manifest_from_before_it_existed() {
    let r = sample_then("lattice-extend", false, None, |run| {
        // A manifest written before `data.recording` existed.
        let path = run.join("manifest.json");
        let mut m: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(&path).unwrap()).unwrap();
        m["data"].as_object_mut().unwrap().remove("recording");
        std::fs::write(&path, serde_json::to_vec_pretty(&m).unwrap()).unwrap();
        let out = Command::new(env!("CARGO_BIN_EXE_mixband"))
            .args(["extend", "-q", "--no-report", "--draws", "5"])
            .arg(run)
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(
            matches!(out.status.code(), Some(0 | 3)),
            "extend failed: {err}"
        );
        assert!(err.contains("`[data] resolution = 0.1`"), "{err}");
    });
    assert_eq!(r.manifest["data"]["recording"]["lattice"]["step"], 0.1);
}
