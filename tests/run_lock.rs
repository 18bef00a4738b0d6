//! The run directory's writer lock: while one process writes a run, a second `sample`,
//! `sample --force`, `resume`, `extend` or `merge --out` on it is refused (exit 2) with a
//! message naming the holder, and changes nothing; a lock whose process is gone is taken
//! over; the lock is released after a normal run, an error and a Ctrl-C.
#![cfg(unix)]

mod robust_support;

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};
use std::process::{Child, Stdio};
use std::time::{Duration, Instant};

use mixband::store::{host_name, LockHolder, RunLock, LOCK_FILE};
use robust_support::{assert_input_error, assert_ok, mixture_csv, stderr, Scratch};

fn config(draws: usize) -> String {
    format!(
        "[data]\nfile = \"d.csv\"\ncolumn = \"value\"\n\n[model]\ncomponents = 4\n\n\
         [sampler]\nchains = 2\nwarmup = 20\ndraws = {draws}\nseed = 7\n"
    )
}

fn setup(name: &str, draws: usize) -> Scratch {
    let s = Scratch::new(name);
    s.write("c.toml", config(draws));
    s.write("d.csv", mixture_csv(300));
    s
}

const QUIET: [&str; 4] = ["--quiet", "--no-report", "--threads", "2"];

fn run(s: &Scratch, args: &[&str]) -> std::process::Output {
    let mut all = args.to_vec();
    all.extend_from_slice(&QUIET);
    s.run(&all)
}

/// Every file under `dir` (relative path → bytes), the lock file left out.
fn snapshot(dir: &Path) -> BTreeMap<PathBuf, Vec<u8>> {
    fn walk(root: &Path, d: &Path, out: &mut BTreeMap<PathBuf, Vec<u8>>) {
        for e in std::fs::read_dir(d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                walk(root, &p, out);
            } else if p.file_name().unwrap() != LOCK_FILE {
                out.insert(
                    p.strip_prefix(root).unwrap().to_path_buf(),
                    std::fs::read(&p).unwrap(),
                );
            }
        }
    }
    let mut out = BTreeMap::new();
    walk(dir, dir, &mut out);
    out
}

/// Asserts a refusal that names `pid` on this host.
fn assert_refused_by(out: &std::process::Output, pid: u32) {
    assert_input_error(
        out,
        &[
            "is being written by another mixband process",
            &format!("pid {pid} on host {}", host_name()),
            "started ",
            LOCK_FILE,
        ],
    );
}

#[test]
fn a_held_lock_refuses_every_writer_and_changes_nothing() {
    let s = setup("lock_held", 30);
    assert_ok(&run(&s, &["sample", "c.toml", "--out", "run"]));
    assert_ok(&run(
        &s,
        &["sample", "c.toml", "--out", "p1", "--chains", "1"],
    ));
    assert_ok(&run(
        &s,
        &["sample", "c.toml", "--out", "p2", "--chains", "2"],
    ));
    assert!(
        !s.path("run").join(LOCK_FILE).exists(),
        "released after a normal run"
    );
    let before = snapshot(&s.path("run"));

    // This test process holds the lock, as a concurrent writer would.
    let lock = RunLock::acquire(&s.path("run"), "test holder").unwrap();
    let me = std::process::id();
    let tries: [&[&str]; 3] = [
        &["sample", "c.toml", "--out", "run", "--force"],
        &["sample", "c.toml", "--out", "run"],
        &["extend", "run", "--draws", "5"],
    ];
    for args in tries {
        let out = run(&s, args);
        assert_refused_by(&out, me);
        assert!(stderr(&out).contains("test holder"), "{}", stderr(&out));
    }
    assert_eq!(
        snapshot(&s.path("run")),
        before,
        "a refused writer changed the run"
    );
    // `resume` goes as far as the lock only for a run that is not complete, as a run
    // being written is ("running" in its manifest).
    let manifest = std::fs::read_to_string(s.path("run/manifest.json")).unwrap();
    let running = manifest.replace("\"complete\"", "\"running\"");
    assert_ne!(running, manifest);
    std::fs::write(s.path("run/manifest.json"), &running).unwrap();
    let running_state = snapshot(&s.path("run"));
    assert_refused_by(&run(&s, &["resume", "run"]), me);
    assert_eq!(
        snapshot(&s.path("run")),
        running_state,
        "a refused resume changed the run"
    );
    std::fs::write(s.path("run/manifest.json"), &manifest).unwrap();
    assert!(
        s.path("run").join(LOCK_FILE).exists(),
        "the holder's lock was removed"
    );

    // merge --out into a directory another process holds.
    std::fs::create_dir_all(s.path("joined")).unwrap();
    let join_lock = RunLock::acquire(&s.path("joined"), "test holder").unwrap();
    let out = s.run(&["merge", "p1", "p2", "--out", "joined"]);
    assert_refused_by(&out, me);
    assert_eq!(
        snapshot(&s.path("joined")).len(),
        0,
        "merge wrote into a held directory"
    );
    drop(join_lock);
    let out = s.run(&["merge", "p1", "p2", "--out", "joined"]);
    assert_ok(&out);
    assert!(
        !s.path("joined").join(LOCK_FILE).exists(),
        "merge released its lock"
    );

    // Once released, the same command goes ahead and releases the lock in turn.
    drop(lock);
    assert_ok(&run(&s, &["extend", "run", "--draws", "5"]));
    assert!(!s.path("run").join(LOCK_FILE).exists());
    assert_ok(&run(&s, &["sample", "c.toml", "--out", "run", "--force"]));
    assert!(!s.path("run").join(LOCK_FILE).exists());
}

/// Kills the child if the test fails before waiting for it.
struct Reap(Option<Child>);

impl Drop for Reap {
    fn drop(&mut self) {
        if let Some(c) = self.0.as_mut() {
            let _ = c.kill();
            let _ = c.wait();
        }
    }
}

#[test]
fn a_second_process_is_refused_while_the_first_samples() {
    // Long enough that the first process is still sampling when it is stopped below.
    let s = setup("lock_two_processes", 1_000_000);
    let first = s
        .command(&["sample", "c.toml", "--out", "run", "--quiet", "--no-report"])
        .env("MIXBAND_CHECKPOINT_SECS", "0.1")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let pid = first.id();
    let mut first = Reap(Some(first));
    let t0 = Instant::now();
    let state = s.path("run/state/chain-1.json");
    while !(state.exists() && s.path("run").join(LOCK_FILE).exists()) {
        let child = first.0.as_mut().unwrap();
        assert!(
            child.try_wait().unwrap().is_none(),
            "the first run ended early"
        );
        assert!(t0.elapsed() < Duration::from_secs(120), "no checkpoint");
        std::thread::sleep(Duration::from_millis(20));
    }
    let holder: LockHolder =
        serde_json::from_slice(&std::fs::read(s.path("run").join(LOCK_FILE)).unwrap()).unwrap();
    assert_eq!(holder.pid, pid);
    assert!(
        holder.command.contains("sample c.toml --out run"),
        "{holder:?}"
    );

    let second = run(&s, &["sample", "c.toml", "--out", "run", "--force"]);
    assert_refused_by(&second, pid);
    assert!(
        stderr(&second).contains("sample c.toml --out run --quiet --no-report"),
        "the holder's command is named: {}",
        stderr(&second)
    );
    let mut child = first.0.take().unwrap();
    assert!(
        child.try_wait().unwrap().is_none(),
        "the first run must still be sampling"
    );
    assert!(
        state.exists(),
        "the refused --force deleted the first run's files"
    );

    // Ctrl-C: the first run saves, exits 130 and releases the lock.
    // SAFETY: kill(2) with the pid of our own child process and a valid signal number.
    assert_eq!(unsafe { libc::kill(pid as libc::pid_t, libc::SIGINT) }, 0);
    let out = child.wait_with_output().unwrap();
    assert_eq!(out.status.code(), Some(130), "{}", stderr(&out));
    assert!(
        !s.path("run").join(LOCK_FILE).exists(),
        "lock left after Ctrl-C"
    );
    assert!(s.path("run/draws/chain-1.csv").exists());
    assert!(s.path("run/manifest.json").exists());
}

/// The pid of a process that has exited and been reaped.
fn dead_pid() -> u32 {
    let mut c = std::process::Command::new("true").spawn().unwrap();
    let pid = c.id();
    c.wait().unwrap();
    pid
}

fn write_lock(dir: &Path, holder: &LockHolder) {
    std::fs::write(dir.join(LOCK_FILE), serde_json::to_vec(holder).unwrap()).unwrap();
}

#[test]
fn a_stale_lock_is_taken_over_and_a_foreign_host_is_not() {
    let s = setup("lock_stale", 30);
    assert_ok(&run(&s, &["sample", "c.toml", "--out", "run"]));
    let stale = LockHolder {
        pid: dead_pid(),
        host: host_name(),
        command: "mixband sample c.toml --out run".into(),
        action: "sample".into(),
        started_unix: 1_700_000_000,
        process_start: None,
    };
    write_lock(&s.path("run"), &stale);
    let out = run(&s, &["extend", "run", "--draws", "5"]);
    assert_ok(&out);
    assert!(
        stderr(&out).contains("took over the stale lock")
            && stderr(&out).contains(&format!("pid {}", stale.pid)),
        "{}",
        stderr(&out)
    );
    assert!(!s.path("run").join(LOCK_FILE).exists());

    // A stale lock alone in a directory does not make it "not empty".
    std::fs::create_dir_all(s.path("fresh")).unwrap();
    write_lock(&s.path("fresh"), &stale);
    assert_ok(&run(&s, &["sample", "c.toml", "--out", "fresh"]));
    assert!(!s.path("fresh").join(LOCK_FILE).exists());

    // A holder on another host cannot be checked from here: refused.
    let foreign = LockHolder {
        host: format!("{}-elsewhere", host_name()),
        ..stale.clone()
    };
    write_lock(&s.path("run"), &foreign);
    let before = snapshot(&s.path("run"));
    let out = run(&s, &["sample", "c.toml", "--out", "run", "--force"]);
    assert_input_error(&out, &[&format!("on host {}", foreign.host), LOCK_FILE]);
    assert_eq!(snapshot(&s.path("run")), before);
    assert!(
        s.path("run").join(LOCK_FILE).exists(),
        "a foreign lock was removed"
    );
}

#[test]
fn the_lock_is_released_after_an_error() {
    let s = setup("lock_error", 30);
    assert_ok(&run(&s, &["sample", "c.toml", "--out", "run"]));
    // The data changes: extend takes the lock, then refuses by the data's SHA-256.
    s.write("d.csv", mixture_csv(300).replacen("0,", "0,1", 1));
    let out = run(&s, &["extend", "run", "--draws", "5"]);
    assert_input_error(&out, &["has changed since the run started"]);
    assert!(
        !s.path("run").join(LOCK_FILE).exists(),
        "lock left after an error"
    );
}
