//! A project moved whole: `RUN/config.toml` names the data relative to the run directory,
//! so after `PROJECT` (holding `run/` and `data.csv`) moves elsewhere, `resume` and
//! `extend` still find the data and write exactly the bytes of a project that never
//! moved; a changed data file is still refused by its SHA-256, and a merge elsewhere finds
//! the data from its own directory.

mod robust_support;

mod common;

use robust_support::{assert_input_error, assert_ok, assert_same_results, mixture_csv, Scratch};

const CONFIG: &str =
    "[data]\nfile = \"data.csv\"\ncolumn = \"value\"\n\n[model]\ncomponents = 4\n\n\
[sampler]\nchains = 2\nwarmup = 20\ndraws = 30\nmax_draws = 30\nseed = 31\n";

const QUIET: [&str; 4] = ["--quiet", "--no-report", "--threads", "2"];

fn run(s: &Scratch, args: &[&str]) {
    let mut all = args.to_vec();
    all.extend_from_slice(&QUIET);
    assert_ok(&s.run(&all));
}

/// PROJECT with its config and data, sampled into PROJECT/run.
fn project(s: &Scratch, name: &str) {
    s.write(&format!("{name}/c.toml"), CONFIG);
    s.write(&format!("{name}/data.csv"), mixture_csv(300));
    run(
        s,
        &[
            "sample",
            &format!("{name}/c.toml"),
            "--out",
            &format!("{name}/run"),
        ],
    );
}

/// Makes the run look like one whose chain 2 died before its first checkpoint.
fn lose_chain_2(s: &Scratch, run: &str) {
    let m = s.path(&format!("{run}/manifest.json"));
    let text = std::fs::read_to_string(&m).unwrap();
    std::fs::write(&m, text.replace("\"complete\"", "\"incomplete\"")).unwrap();
    std::fs::remove_file(s.path(&format!("{run}/state/chain-2.json"))).unwrap();
    std::fs::remove_file(s.path(&format!("{run}/draws/chain-2.csv"))).unwrap();
}

#[test]
fn a_moved_project_resumes_and_extends_as_if_it_had_not_moved() {
    let s = Scratch::new("moved_project");
    project(&s, "stay");
    project(&s, "proj");
    let cfg = std::fs::read_to_string(s.path("proj/run/config.toml")).unwrap();
    assert!(
        cfg.contains("file = \"../data.csv\""),
        "config.toml names the data relative to the run: {cfg}"
    );

    // Move the whole project two levels deeper under another name.
    std::fs::create_dir_all(s.path("elsewhere/deeper")).unwrap();
    std::fs::rename(s.path("proj"), s.path("elsewhere/deeper/moved")).unwrap();
    assert!(!s.path("proj").exists());

    // resume: the moved run and the unmoved one restart chain 2 alike.
    lose_chain_2(&s, "stay/run");
    lose_chain_2(&s, "elsewhere/deeper/moved/run");
    run(&s, &["resume", "stay/run"]);
    run(&s, &["resume", "elsewhere/deeper/moved/run"]);
    assert_same_results(&s.path("stay/run"), &s.path("elsewhere/deeper/moved/run"));

    // extend: the same.
    run(&s, &["extend", "stay/run", "--draws", "10"]);
    run(
        &s,
        &["extend", "elsewhere/deeper/moved/run", "--draws", "10"],
    );
    assert_same_results(&s.path("stay/run"), &s.path("elsewhere/deeper/moved/run"));
    let cfg = std::fs::read_to_string(s.path("elsewhere/deeper/moved/run/config.toml")).unwrap();
    assert!(cfg.contains("file = \"../data.csv\""), "{cfg}");

    // A changed data file is refused by its SHA-256, and the run is left as it was.
    let manifest = std::fs::read(s.path("elsewhere/deeper/moved/run/manifest.json")).unwrap();
    s.write(
        "elsewhere/deeper/moved/data.csv",
        mixture_csv(300).replacen("0,", "0,1", 1),
    );
    assert_input_error(
        &s.run(&[
            "extend",
            "elsewhere/deeper/moved/run",
            "--draws",
            "5",
            "--quiet",
        ]),
        &["data.csv", "has changed since the run started"],
    );
    assert_eq!(
        std::fs::read(s.path("elsewhere/deeper/moved/run/manifest.json")).unwrap(),
        manifest
    );
}

#[test]
fn a_merge_elsewhere_finds_the_data_from_its_own_directory() {
    let s = Scratch::new("moved_project_merge");
    s.write("proj/c.toml", CONFIG);
    s.write("proj/data.csv", mixture_csv(300));
    run(
        &s,
        &[
            "sample",
            "proj/c.toml",
            "--out",
            "proj/parts/a",
            "--chains",
            "1",
        ],
    );
    run(
        &s,
        &[
            "sample",
            "proj/c.toml",
            "--out",
            "proj/parts/b",
            "--chains",
            "2",
        ],
    );
    assert_ok(&s.run(&[
        "merge",
        "proj/parts/a",
        "proj/parts/b",
        "--out",
        "proj/joined",
    ]));
    let cfg = std::fs::read_to_string(s.path("proj/joined/config.toml")).unwrap();
    assert!(cfg.contains("file = \"../data.csv\""), "{cfg}");
    // The joined run equals one run of both chains, and carries on after a move.
    run(&s, &["sample", "proj/c.toml", "--out", "proj/whole"]);
    assert_same_results(&s.path("proj/joined"), &s.path("proj/whole"));
    std::fs::rename(s.path("proj"), s.path("moved")).unwrap();
    run(&s, &["extend", "moved/joined", "--draws", "5"]);
    run(&s, &["extend", "moved/whole", "--draws", "5"]);
    assert_same_results(&s.path("moved/joined"), &s.path("moved/whole"));
}

#[test]
fn a_run_directory_copied_without_its_data_falls_back_to_the_recorded_path() {
    // The copy's "../data.csv" leads nowhere; the manifest's absolute path (the same
    // file, same SHA-256) is used, and the copy continues exactly as the original.
    let s = Scratch::new("moved_run_alone");
    project(&s, "proj");
    common::copy_dir(&s.path("proj/run"), &s.path("alone/deeper/run"));
    assert!(!s.path("alone/deeper/data.csv").exists());
    run(&s, &["extend", "proj/run", "--draws", "10"]);
    run(&s, &["extend", "alone/deeper/run", "--draws", "10"]);
    assert_same_results(&s.path("proj/run"), &s.path("alone/deeper/run"));
}
