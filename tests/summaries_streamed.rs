//! The summaries read from the draw tables as a stream, a window of grid points at a time
//! (`mixband::run::summarise_stored`, what `sample`, `bands` and `diagnose` use), give the
//! same files, bit for bit, as the computation from every draw in memory
//! (`mixband::run::summarise_in_memory`, the form they replaced) — for any window width,
//! on runs whose chains have different lengths and a half-written last row, on the fitted
//! and on the log and logit scales. Source of the requirement: issue #5 ("outputs stay
//! identical"); common practice, no source, for comparing the written files byte by byte.

mod common;

use std::path::Path;

use mixband::gate::GateSpec;
use mixband::run::{
    summarise_in_memory, summarise_stored, summary_file, write_bands, write_summaries, Prepared,
    Summaries, SummaryPlan,
};
use mixband::store::{read_run_draws, Manifest, RunLayout, ScalarDraws, StoredChains};
use mixband::summary::linspace;

/// 150 positive observations in two groups (deterministic, no random numbers).
fn data_csv() -> String {
    let mut s = String::from("value\n");
    for i in 0..150 {
        let x = if i % 3 == 0 {
            5.0 + 0.6 * (i as f64).sin()
        } else {
            1.8 + (0.7 * i as f64).cos()
        };
        s.push_str(&format!("{x}\n"));
    }
    s
}

/// `transform` is the value of `[data] transform` followed by any further `[data]` lines.
fn config(transform: &str, kernel: &str) -> String {
    format!(
        "[data]\nfile = \"data.csv\"\ncolumn = \"value\"\ntransform = {transform}\n\
         [model]\nkernel = \"{kernel}\"\nweights = \"stick-breaking\"\ncomponents = 5\n\
         [sampler]\nchains = 3\nwarmup = 20\ndraws = 45\nseed = 4242\nallocation = \"conditional\"\n\
         [grid]\npoints = 23\n\
         [shape]\nregions = [[1.0, 3.0], [4.0, 6.5]]\n"
    )
}

/// Samples `config` into `dir/run`, then makes the chains uneven: chain 2 loses its last
/// 6 rows and chain 3 gets half a row appended (a crash while writing).
fn uneven_run(dir: &Path, config: &str) -> (Prepared, RunLayout) {
    std::fs::write(dir.join("data.csv"), data_csv()).unwrap();
    let (prep, _, _) = common::run_to_density(dir, config, (0.0, 1.0, 2));
    let layout = RunLayout::new(dir.join("run"));
    let c2 = layout.chain_draws(2);
    let text = std::fs::read_to_string(&c2).unwrap();
    let keep: Vec<&str> = text.lines().collect();
    let cut = keep[..keep.len() - 6].join("\n") + "\n";
    std::fs::write(&c2, cut).unwrap();
    let c3 = layout.chain_draws(3);
    let mut text = std::fs::read_to_string(&c3).unwrap();
    text.push_str("46,-12.5,3,0.7");
    std::fs::write(&c3, text).unwrap();
    (prep, layout)
}

/// The five summary files of `s` as written into `dir` (each absent part skipped).
fn files(dir: &Path, s: &Summaries) -> Vec<(&'static str, Vec<u8>)> {
    std::fs::create_dir_all(dir).unwrap();
    let layout = RunLayout::new(dir);
    let converged = s.report.as_ref().map(|r| r.passed);
    if let Some(r) = &s.report {
        r.write(&layout).unwrap();
    }
    if let (Some(b), Some(c), Some(f)) = (&s.bands, &s.cdf, &s.features) {
        write_bands(&layout, b, converged).unwrap();
        write_summaries(&layout, c, &summary_file(f, b, converged)).unwrap();
    }
    let names = [
        "diagnostics.json",
        "bands.csv",
        "bands.json",
        "cdf.csv",
        "summary.json",
    ];
    names
        .into_iter()
        .filter_map(|n| std::fs::read(dir.join(n)).ok().map(|b| (n, b)))
        .collect()
}

/// Every plan (gate and bands, bands only, gate only) at window widths 1, 7, all columns
/// and the default gives the in-memory summaries: the same files and the same numbers
/// (Debug prints every f64 so that it reads back to the same bits).
fn check_run(tag: &str, transform: &str, kernel: &str) {
    let dir = common::scratch_dir(tag);
    let (prep, layout) = uneven_run(&dir, &config(transform, kernel));
    let c = &prep.config;
    let manifest = Manifest::read(&layout.manifest()).unwrap();
    let draws = read_run_draws(&layout.draws_dir(), &manifest.chain_ids()).unwrap();
    let lens: Vec<usize> = draws.chains.iter().map(|ch| ch.rows.len()).collect();
    assert_eq!(
        lens,
        vec![45, 39, 45],
        "the fixture must have uneven chains"
    );
    let stored = StoredChains::new(&layout.draws_dir(), &manifest.chain_ids());
    let scalars = ScalarDraws::read(&stored).unwrap();
    let grid = linspace(c.grid_from, c.grid_to, c.grid_points);
    let spec = GateSpec::from_config(c, true);
    let plans = [
        (Some(c.levels.as_slice()), Some(spec)),
        (Some(c.levels.as_slice()), None),
        (None, Some(spec)),
    ];
    for (p, (levels, gate)) in plans.into_iter().enumerate() {
        let mut plan = SummaryPlan {
            grid: &grid,
            transform: c.transform,
            levels,
            gate,
            columns_per_pass: None,
            shape: Some(&c.shape),
        };
        let want = summarise_in_memory(&draws, &plan);
        let want_files = files(&dir.join(format!("mem-{p}")), &want);
        let expected = match (levels.is_some(), gate.is_some()) {
            (true, true) => 5,
            (true, false) => 4,
            _ => 1,
        };
        assert_eq!(want_files.len(), expected);
        for width in [Some(1), Some(7), Some(usize::MAX), None] {
            plan.columns_per_pass = width;
            let got = summarise_stored(&stored, &scalars, &plan).unwrap();
            assert!(
                format!("{got:?}") == format!("{want:?}"),
                "{tag}: plan {p}, window {width:?}: the summaries differ"
            );
            let got_files = files(&dir.join(format!("stream-{p}-{width:?}")), &got);
            for ((name, a), (_, b)) in got_files.iter().zip(&want_files) {
                assert!(a == b, "{tag}: plan {p}, window {width:?}: {name} differs");
            }
            assert_eq!(got_files.len(), want_files.len());
        }
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn streamed_summaries_equal_in_memory_on_the_fitted_scale() {
    check_run("stream-none", "\"none\"", "location-scale");
}

#[test]
fn streamed_summaries_equal_in_memory_on_the_log_scale_with_a_common_sd() {
    check_run("stream-log", "\"log\"", "location");
}

#[test]
fn streamed_summaries_equal_in_memory_on_the_logit_scale() {
    // The data lie in (0.8, 5.6); bounds (0, 7), regions inside them.
    check_run(
        "stream-logit",
        "\"logit\"\nlower = 0.0\nupper = 7.0",
        "location-scale",
    );
}
