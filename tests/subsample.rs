//! `[data] subsample = m` (src/data/subsample.rs): a run fits at most m observations, a
//! simple random subsample drawn from the run's seed, and says so; the same config gives
//! the same subsample; a subsample no smaller than the data changes nothing; counts
//! (frequency weights) are subsampled as observations; a bad value names its key.

mod robust_support;

use robust_support::{assert_input_error, assert_ok, manifest, mixture_csv, stderr, Scratch};

fn config(extra: &str) -> String {
    format!(
        "[data]\nfile = \"d.csv\"\ncolumn = \"value\"\n{extra}\n[sampler]\nchains = 2\n\
         warmup = 50\ndraws = 50\nmax_draws = 50\nseed = 17\n"
    )
}

fn setup(name: &str, extra: &str) -> Scratch {
    let s = Scratch::new(name);
    s.write("c.toml", config(extra));
    s.write("d.csv", mixture_csv(900));
    s
}

fn read(s: &Scratch, rel: &str) -> Vec<u8> {
    std::fs::read(s.path(rel)).unwrap()
}

/// Exit 0 or 3: the outputs are written (these runs are far too short for the gate).
fn written(out: &std::process::Output) {
    let code = out.status.code();
    assert!(code == Some(0) || code == Some(3), "{}", stderr(out));
}

#[test]
fn a_subsample_is_recorded_said_and_reproducible() {
    let s = setup("subsample_rows", "subsample = 300\n");
    let out = s.sample("run", "2");
    written(&out);
    let m = manifest(&s.path("run"));
    assert_eq!(m["data"]["n"], 300, "{m}");
    assert_eq!(m["data"]["subsample_of"], 900, "{m}");
    assert!(
        stderr(&out).contains("random subsample of 300 of the 900 observations"),
        "{}",
        stderr(&out)
    );
    let page = std::fs::read_to_string(s.path("run/report.html")).unwrap();
    assert!(page.contains("a random subsample of the 900 observations"));
    // The same config and seed: the same subsample and draws.
    written(&s.sample("again", "1"));
    assert_eq!(read(&s, "run/bands.csv"), read(&s, "again/bands.csv"));
    // Another seed draws another subsample (its summary of the data differs).
    s.write(
        "c.toml",
        config("subsample = 300\n").replace("seed = 17", "seed = 18"),
    );
    written(&s.sample("other", "2"));
    let other = manifest(&s.path("other"));
    assert_ne!(m["data"]["mean"], other["data"]["mean"], "{other}");
}

#[test]
fn a_subsample_no_smaller_than_the_data_changes_nothing() {
    let whole = setup("subsample_none", "");
    written(&whole.sample("run", "2"));
    let same = setup("subsample_big", "subsample = 900\n");
    written(&same.sample("run", "2"));
    assert!(manifest(&same.path("run"))["data"]
        .get("subsample_of")
        .is_none());
    for f in ["draws/chain-1.csv", "draws/chain-2.csv", "bands.csv"] {
        assert!(
            read(&whole, &format!("run/{f}")) == read(&same, &format!("run/{f}")),
            "{f}"
        );
    }
}

#[test]
fn counts_are_subsampled_as_observations() {
    // 600 observations in four rows of counts; a subsample of 100 keeps 100 of them.
    let s = Scratch::new("subsample_counts");
    s.write("d.csv", "value,count\n1.0,150\n2.5,200\n4.0,50\n6.0,200\n");
    s.write("c.toml", config("weights = \"count\"\nsubsample = 100\n"));
    written(&s.sample("run", "2"));
    let m = manifest(&s.path("run"));
    assert_eq!(m["data"]["n"], 100, "{m}");
    assert_eq!(m["data"]["subsample_of"], 600, "{m}");
}

#[test]
fn a_bad_subsample_names_its_key_and_line() {
    let s = setup("subsample_bad", "subsample = 1\n");
    assert_input_error(
        &s.sample("run", "2"),
        &["[data] subsample", "line 4", "at least 2"],
    );
    assert_ok(&s.run(&["template"]));
}
