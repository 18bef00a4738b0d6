//! Reproducibility and continuation: the same config and seed give byte-identical draws,
//! bands and diagnostics whatever `--threads` is; `extend` by D2 after D1 draws equals a
//! run of D1 + D2; `resume` continues chains that lost their checkpoint, and refuses a
//! changed config or data file.

mod robust_support;

use robust_support::{
    assert_input_error, assert_ok, assert_same_results, manifest, mixture_csv, stderr, Scratch,
};

fn config(draws: usize) -> String {
    format!(
        "[data]\nfile = \"d.csv\"\ncolumn = \"value\"\n\n[model]\nkernel = \"location\"\nweights = \"stick-breaking\"\n\
         components = 8\n\n[sampler]\nchains = 3\nwarmup = 50\ndraws = {draws}\nmax_draws = {draws}\nthin = 2\nseed = 99\n"
    )
}

fn setup(name: &str, draws: usize) -> Scratch {
    let s = Scratch::new(name);
    s.write("c.toml", config(draws));
    s.write("d.csv", mixture_csv(500));
    s
}

fn sample(s: &Scratch, out: &str, threads: &str) {
    assert_ok(&s.sample(out, threads));
}

#[test]
fn threads_do_not_change_any_result_byte() {
    let s = setup("repro_threads", 60);
    sample(&s, "one", "1");
    sample(&s, "two", "2");
    sample(&s, "again", "2");
    assert_same_results(&s.path("one"), &s.path("two"));
    assert_same_results(&s.path("two"), &s.path("again"));
    // Different seeds must give different draws, or the comparison above proves nothing.
    s.write("c.toml", config(60).replace("seed = 99", "seed = 100"));
    sample(&s, "other", "2");
    assert_ne!(
        std::fs::read(s.path("one/draws/chain-1.csv")).unwrap(),
        std::fs::read(s.path("other/draws/chain-1.csv")).unwrap()
    );
}

#[test]
fn extend_equals_a_longer_run() {
    let s = setup("extend_short", 40);
    sample(&s, "run", "2");
    let out = s.run(&[
        "extend",
        "run",
        "--draws",
        "25",
        "--quiet",
        "--threads",
        "1",
    ]);
    assert_ok(&out);
    let long = setup("extend_long", 65);
    sample(&long, "run", "3");
    assert_same_results(&s.path("run"), &long.path("run"));
    let m = manifest(&s.path("run"));
    assert_eq!(m["status"], "complete");
    assert_eq!(m["config"]["sampler"]["draws"], 65);
    for c in m["chains"].as_array().unwrap() {
        assert_eq!(c["draws_written"], 65);
        assert_eq!(c["sweeps_done"], 50 + 65 * 2);
    }
    // The stored config now describes the longer run, so it too is the same.
    let strip = |t: String| {
        t.lines()
            .filter(|l| !l.starts_with("file"))
            .collect::<Vec<_>>()
            .join("\n")
    };
    assert_eq!(
        strip(std::fs::read_to_string(s.path("run/config.toml")).unwrap()),
        strip(std::fs::read_to_string(long.path("run/config.toml")).unwrap())
    );
}

#[test]
fn resume_restarts_a_chain_that_died_before_its_first_checkpoint() {
    let s = setup("resume_no_checkpoint", 30);
    sample(&s, "reference", "2");
    sample(&s, "run", "2");
    // Make chain 2 look as if the process died early: no checkpoint, a partial table.
    let run = s.path("run");
    std::fs::remove_file(run.join("state/chain-2.json")).unwrap();
    let table = std::fs::read(run.join("draws/chain-2.csv")).unwrap();
    std::fs::write(run.join("draws/chain-2.csv"), &table[..table.len() / 3]).unwrap();
    let m = std::fs::read_to_string(run.join("manifest.json")).unwrap();
    std::fs::write(
        run.join("manifest.json"),
        m.replace("\"complete\"", "\"running\""),
    )
    .unwrap();
    std::fs::remove_file(run.join("bands.csv")).unwrap();
    assert_ok(&s.run(&["resume", "run", "--quiet"]));
    assert_same_results(&s.path("reference"), &run);
}

#[test]
fn resume_of_a_complete_run_changes_nothing() {
    let s = setup("resume_complete", 20);
    sample(&s, "run", "2");
    let before = std::fs::read(s.path("run/draws/chain-1.csv")).unwrap();
    let out = s.run(&["resume", "run", "--quiet"]);
    assert_ok(&out);
    assert!(
        stderr(&out).contains("already complete"),
        "{}",
        stderr(&out)
    );
    assert_eq!(
        std::fs::read(s.path("run/draws/chain-1.csv")).unwrap(),
        before
    );
}

#[test]
fn resume_refuses_changed_data_or_config() {
    let s = setup("resume_changed", 20);
    sample(&s, "run", "2");
    let m = std::fs::read_to_string(s.path("run/manifest.json")).unwrap();
    let incomplete = m.replace("\"complete\"", "\"incomplete\"");
    std::fs::write(s.path("run/manifest.json"), &incomplete).unwrap();

    // Extending an incomplete run is refused.
    assert_input_error(
        &s.run(&["extend", "run", "--draws", "5"]),
        &["incomplete", "mixband resume"],
    );

    // An edited config.toml is refused.
    let cfg = std::fs::read_to_string(s.path("run/config.toml")).unwrap();
    std::fs::write(
        s.path("run/config.toml"),
        cfg.replace("seed = 99", "seed = 98"),
    )
    .unwrap();
    assert_input_error(
        &s.run(&["resume", "run"]),
        &["config.toml", "no longer matches"],
    );
    std::fs::write(s.path("run/config.toml"), &cfg).unwrap();

    // A changed data file is refused, naming it.
    let data = mixture_csv(500).replacen("0,", "0,1", 1);
    s.write("d.csv", data);
    assert_input_error(&s.run(&["resume", "run"]), &["d.csv", "has changed"]);
    assert_eq!(
        std::fs::read_to_string(s.path("run/manifest.json")).unwrap(),
        incomplete
    );
}
