//! Interruptions: Ctrl-C (SIGINT) while sampling flushes the draws so far, marks the run
//! incomplete and exits 130; a killed process (SIGKILL) leaves a store that reads up to its
//! last complete row; `mixband resume` then finishes either run with exactly the bytes of
//! a run that was never interrupted.
#![cfg(unix)]

mod robust_support;

mod common;

use std::path::{Path, PathBuf};
use std::process::Child;
use std::sync::OnceLock;
use std::time::{Duration, Instant};

use robust_support::{assert_ok, assert_same_results, manifest, mixture_csv, stderr, Scratch};

/// Long enough (a few seconds of sampling per chain) that the signal arrives mid-run on a
/// fast machine too.
const CONFIG: &str = "[data]\nfile = \"d.csv\"\ncolumn = \"value\"\n\n[model]\ncomponents = 6\n\n\
[sampler]\nchains = 2\nwarmup = 100\ndraws = 5000\nseed = 424242\n";

/// Checkpoint interval for these tests; it changes when checkpoints happen, never the draws.
const CHECKPOINT_SECS: &str = "0.1";

fn setup(name: &str) -> Scratch {
    let s = Scratch::new(name);
    s.write("c.toml", CONFIG);
    s.write("d.csv", mixture_csv(4000));
    s
}

/// The uninterrupted run every interrupted one is compared with (made once).
fn reference() -> &'static Path {
    static REF: OnceLock<PathBuf> = OnceLock::new();
    REF.get_or_init(|| {
        let s = setup("interrupt_reference");
        let out = s.sample("run", "2");
        assert_ok(&out);
        s.path("run")
    })
}

fn start(s: &Scratch) -> Child {
    s.command(&Scratch::sample_args("run", "2"))
        .env("MIXBAND_CHECKPOINT_SECS", CHECKPOINT_SECS)
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .unwrap()
}

/// Waits until every chain has stored a checkpoint with at least one draw.
fn wait_for_checkpoints(s: &Scratch, child: &mut Child) {
    let t0 = Instant::now();
    loop {
        let ready = (1..=2).all(|i| {
            std::fs::read_to_string(s.path(&format!("run/state/chain-{i}.json")))
                .ok()
                .and_then(|t| serde_json::from_str::<serde_json::Value>(&t).ok())
                .is_some_and(|v| v["draws_written"].as_u64().unwrap_or(0) > 0)
        });
        if ready {
            return;
        }
        if let Some(status) = child.try_wait().unwrap() {
            panic!(
                "sampling ended ({status}) before the test could interrupt it; make CONFIG longer"
            );
        }
        assert!(
            t0.elapsed() < Duration::from_secs(120),
            "no checkpoint after 120 s"
        );
        std::thread::sleep(Duration::from_millis(5));
    }
}

/// Complete rows of a chain table (every line that ends in a newline).
fn complete_lines(path: &Path) -> Vec<String> {
    let bytes = std::fs::read(path).unwrap();
    let text = String::from_utf8_lossy(&bytes);
    let end = text.rfind('\n').map_or(0, |i| i + 1);
    text[..end].lines().map(str::to_string).collect()
}

#[test]
fn sigint_flushes_marks_incomplete_exits_130_and_resume_matches() {
    let reference = reference();
    let s = setup("interrupt_sigint");
    let mut child = start(&s);
    wait_for_checkpoints(&s, &mut child);
    // SAFETY: kill(2) with a pid of our own child process and a valid signal number.
    assert_eq!(
        unsafe { libc::kill(child.id() as libc::pid_t, libc::SIGINT) },
        0
    );
    let out = child.wait_with_output().unwrap();
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(130), "stderr: {err}");
    assert!(!err.contains("panicked"), "{err}");
    assert!(err.contains("mixband resume"), "{err}");

    let run = s.path("run");
    let m = manifest(&run);
    assert_eq!(m["status"], "incomplete");
    let planned = 100 + 5000; // warmup + draws of CONFIG
    let mut stopped_early = 0;
    for c in m["chains"].as_array().unwrap() {
        let id = c["id"].as_u64().unwrap();
        let done = c["sweeps_done"].as_u64().unwrap();
        assert_eq!(c["sweeps_planned"].as_u64().unwrap(), planned);
        if done < planned {
            stopped_early += 1;
        }
        // Flushed: the table holds exactly the rows the manifest counts, each complete,
        // and they are the first rows of the uninterrupted run.
        let file = run.join(format!("draws/chain-{id}.csv"));
        let bytes = std::fs::read(&file).unwrap();
        assert_eq!(bytes.last(), Some(&b'\n'));
        let rows = complete_lines(&file);
        assert_eq!(rows.len() as u64 - 1, c["draws_written"].as_u64().unwrap());
        let full = complete_lines(&reference.join(format!("draws/chain-{id}.csv")));
        assert_eq!(
            rows[..],
            full[..rows.len()],
            "chain {id} rows differ from the reference"
        );
        // The checkpoint agrees with the manifest about how far the chain got.
        let cp: serde_json::Value = serde_json::from_str(
            &std::fs::read_to_string(run.join(format!("state/chain-{id}.json"))).unwrap(),
        )
        .unwrap();
        assert_eq!(cp["checkpoint"]["sweeps_done"].as_u64().unwrap(), done);
    }
    assert!(stopped_early > 0, "no chain was stopped early: {m}");
    assert!(
        !run.join("bands.csv").exists(),
        "an interrupted run must not be summarised"
    );

    let out = s.run(&["resume", "run", "--quiet", "--threads", "1"]);
    assert_ok(&out);
    assert_eq!(manifest(&run)["status"], "complete");
    assert_same_results(reference, &run);
}

#[test]
fn sigkill_leaves_a_readable_store_and_resume_matches() {
    let reference = reference();
    let s = setup("interrupt_sigkill");
    let mut child = start(&s);
    wait_for_checkpoints(&s, &mut child);
    // Let rows past the checkpoint reach the file, then kill without warning.
    std::thread::sleep(Duration::from_millis(150));
    child.kill().unwrap();
    let status = child.wait().unwrap();
    assert_eq!(
        status.code(),
        None,
        "the process should have died of SIGKILL"
    );

    let run = s.path("run");
    assert_eq!(
        manifest(&run)["status"],
        "running",
        "a killed run cannot have updated its manifest"
    );
    // Readable up to the last complete row: the library reader accepts every table, and its
    // rows are a prefix of the uninterrupted run's.
    for id in 1..=2u64 {
        let file = run.join(format!("draws/chain-{id}.csv"));
        let rows = mixband::store::read_chain(&file, id).unwrap().rows;
        let full = mixband::store::read_chain(&reference.join(format!("draws/chain-{id}.csv")), id)
            .unwrap()
            .rows;
        assert!(!rows.is_empty() && rows.len() <= full.len());
        assert_eq!(rows[..], full[..rows.len()]);
    }
    // A half-written row at the end (as a crash mid-write leaves) is ignored by readers
    // and cut off by resume.
    let chain1 = run.join("draws/chain-1.csv");
    let before = mixband::store::read_chain(&chain1, 1).unwrap().rows.len();
    let mut f = std::fs::OpenOptions::new()
        .append(true)
        .open(&chain1)
        .unwrap();
    std::io::Write::write_all(&mut f, b"999999,-12.5,3,0.7").unwrap();
    drop(f);
    assert_eq!(
        mixband::store::read_chain(&chain1, 1).unwrap().rows.len(),
        before
    );
    assert_ok(&s.run(&["bands", "run"]));

    assert_ok(&s.run(&["resume", "run", "--quiet", "--threads", "2"]));
    assert_eq!(manifest(&run)["status"], "complete");
    assert_same_results(reference, &run);
}

#[test]
fn half_written_last_row_is_ignored_by_bands() {
    let reference = reference();
    let s = Scratch::new("interrupt_half_row");
    let run = s.path("run");
    common::copy_dir(reference, &run);
    // The copy's config.toml names the data relative to the reference run, which leads
    // nowhere from here: the manifest's absolute path is used, so `bands` works.
    let mut f = std::fs::OpenOptions::new()
        .append(true)
        .open(run.join("draws/chain-2.csv"))
        .unwrap();
    std::io::Write::write_all(&mut f, b"2101,-7012.25,4,0.5,0.1,1.5").unwrap();
    drop(f);
    std::fs::remove_file(run.join("bands.csv")).unwrap();
    assert_ok(&s.run(&["bands", "run"]));
    assert_eq!(
        std::fs::read(run.join("bands.csv")).unwrap(),
        std::fs::read(reference.join("bands.csv")).unwrap()
    );
    // A damaged row in the middle is not a crash artefact: it is refused, naming the line.
    let text = std::fs::read_to_string(run.join("draws/chain-1.csv")).unwrap();
    let mut lines: Vec<&str> = text.lines().collect();
    lines.insert(2, "1,2,3");
    std::fs::write(run.join("draws/chain-1.csv"), lines.join("\n") + "\n").unwrap();
    let out = s.run(&["bands", "run"]);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("chain-1.csv: line 3"),
        "{}",
        stderr(&out)
    );
}
