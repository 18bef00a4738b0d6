//! Growing a run that fails the convergence gate (`[sampler] max_draws`, src/run/grow.rs):
//! a grown run holds the same draws and bands as a run configured with its final length;
//! `max_draws = draws` turns growth off; a projection beyond the limit is declined with
//! its reason; a run of some of the chains never grows; a bad `max_draws` names its key.

mod robust_support;

use robust_support::{assert_input_error, assert_ok, manifest, mixture_csv, stderr, Scratch};

fn config(draws: usize, extra: &str) -> String {
    format!(
        "[data]\nfile = \"d.csv\"\ncolumn = \"value\"\n\n[sampler]\nchains = 4\nwarmup = 100\n\
         draws = {draws}\nseed = 5\n{extra}"
    )
}

fn setup(name: &str, text: &str) -> Scratch {
    let s = Scratch::new(name);
    s.write("c.toml", text);
    s.write("d.csv", mixture_csv(500));
    s
}

fn sample(s: &Scratch) -> std::process::Output {
    s.sample("run", "2")
}

fn read(s: &Scratch, rel: &str) -> Vec<u8> {
    std::fs::read(s.path(rel)).unwrap()
}

/// The run in `s` was neither grown nor judged for growth, and kept its `draws`.
fn assert_never_considered(s: &Scratch, draws: u64) {
    let m = manifest(&s.path("run"));
    assert!(
        m.get("grown").is_none() && m.get("not_grown").is_none(),
        "{m}"
    );
    assert_eq!(m["config"]["sampler"]["draws"], draws);
}

#[test]
fn a_grown_run_equals_a_run_of_its_final_length() {
    // 4 chains × 100 draws of the location-scale defaults on 500 values fall short of the
    // gate's ESS of 400 (common practice, Vehtari et al. 2021), so the run grows.
    let short = setup("grow_short", &config(100, "max_draws = 400\n"));
    let out = sample(&short);
    assert_ok(&out);
    let m = manifest(&short.path("run"));
    let grown = m["grown"].as_array().expect("the run grew");
    assert_eq!(grown[0]["from_draws"], 100);
    let to = grown.last().unwrap()["to_draws"].as_u64().unwrap();
    assert!(to > 100 && to <= 400, "{m}");
    assert!(grown[0]["lowest_ess"].as_f64().unwrap() < 400.0, "{m}");
    assert_eq!(m["config"]["sampler"]["draws"], to);
    let err = stderr(&out);
    assert!(err.contains("the run was grown from 100 to"), "{err}");
    let d = std::fs::read_to_string(short.path("run/diagnostics.json")).unwrap();
    assert!(d.contains("the run was grown from 100"), "{d}");
    let page = std::fs::read_to_string(short.path("run/report.html")).unwrap();
    assert!(page.contains("<dt>growth</dt>"), "report names the growth");

    // The same config with the final length from the start: the same draws and bands.
    let long = setup("grow_long", &config(to as usize, "max_draws = 400\n"));
    assert_ok(&sample(&long));
    assert!(manifest(&long.path("run")).get("grown").is_none());
    for f in [
        "draws/chain-1.csv",
        "draws/chain-4.csv",
        "bands.csv",
        "config.toml",
    ] {
        assert!(
            read(&short, &format!("run/{f}")) == read(&long, &format!("run/{f}")),
            "{f}"
        );
    }
}

#[test]
fn max_draws_equal_to_draws_turns_growth_off() {
    let s = setup("grow_off", &config(100, "max_draws = 100\n"));
    let out = sample(&s);
    assert_eq!(out.status.code(), Some(3), "{}", stderr(&out));
    assert_never_considered(&s, 100);
}

#[test]
fn a_projection_beyond_max_draws_is_declined_with_its_reason() {
    // An ESS threshold no 4 × 400 draws can reach.
    let s = setup(
        "grow_declined",
        &config(100, "max_draws = 400\n\n[gate]\nmin_ess = 100000\n"),
    );
    let out = sample(&s);
    assert_eq!(out.status.code(), Some(3), "{}", stderr(&out));
    let m = manifest(&s.path("run"));
    assert!(m.get("grown").is_none(), "{m}");
    let why = m["not_grown"].as_str().unwrap();
    assert!(why.contains("max_draws = 400"), "{why}");
    assert!(
        stderr(&out).contains("the run was not grown"),
        "{}",
        stderr(&out)
    );
    assert_eq!(m["config"]["sampler"]["draws"], 100);
    // More draws by hand make the reason stale: it is dropped, the growth history kept.
    let more = s.run(&["extend", "run", "--draws", "100", "--quiet"]);
    assert_eq!(more.status.code(), Some(3), "{}", stderr(&more));
    let m = manifest(&s.path("run"));
    assert!(m.get("not_grown").is_none(), "{m}");
    assert_eq!(m["config"]["sampler"]["draws"], 200);
}

#[test]
fn a_run_of_some_chains_never_grows() {
    let s = setup("grow_part", &config(100, "max_draws = 400\n"));
    let out = s.run(&[
        "sample", "c.toml", "--out", "run", "--quiet", "--chains", "1,2",
    ]);
    let code = out.status.code();
    assert!(code == Some(0) || code == Some(3), "{}", stderr(&out));
    assert_never_considered(&s, 100);
}

#[test]
fn a_bad_max_draws_names_its_key_and_line() {
    let s = setup("grow_bad", &config(100, "max_draws = 50\n"));
    assert_input_error(
        &sample(&s),
        &["[sampler] max_draws", "line 10", "at least draws (100)"],
    );
}
