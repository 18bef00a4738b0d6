//! `[data] weights`: integer frequency weights are handled in the sufficient statistics.
//! Checks: the loader and summary of a tabulated sample equal those of the expanded sample;
//! bad weights are refused with their row; the weighted allocation with every count 1 is
//! the reference allocation bit for bit, and its log-likelihood pass agrees with the
//! separate one bit for bit; K = 1 conjugate runs with weights match the exact Student-t
//! predictive of the expanded data; and weighted and expanded runs of a K = 5 mixture give
//! the same posterior (a two-sample check of the posterior mean density at every grid
//! point and of the mean log-likelihood: common practice, no source).

mod common;

use std::path::Path;

use common::{batch_means_se, mean, run_to_density, scratch_dir};
use mixband::config::MissingPolicy;
use mixband::data::{load_weighted_from_reader, DataSummary, Standardised};
use mixband::model::State;
use mixband::sampler::allocate::{
    allocate_reference, allocate_weighted, loglik_reference, loglik_weighted, ComponentTable,
};
use mixband::sampler::rng::StreamKey;
use statrs::distribution::{Continuous, StudentsT};

/// An invented tabulated sample: (value, count); n = 60, two bumps.
const TABLE: [(f64, u64); 10] = [
    (1.0, 2),
    (1.5, 5),
    (2.0, 9),
    (2.5, 6),
    (3.0, 2),
    (4.5, 1),
    (5.5, 4),
    (6.0, 12),
    (6.5, 13),
    (7.5, 6),
];
const GRID_POINTS: usize = 21;

fn expanded() -> Vec<f64> {
    TABLE
        .iter()
        .flat_map(|&(v, c)| std::iter::repeat_n(v, c as usize))
        .collect()
}

fn weighted_csv() -> String {
    let mut s = String::from("y,count\n");
    for (v, c) in TABLE {
        s.push_str(&format!("{v},{c}\n"));
    }
    // A row of weight 0 is dropped.
    s.push_str("100.0,0\n");
    s
}

fn expanded_csv() -> String {
    let mut s = String::from("y\n");
    for v in expanded() {
        s.push_str(&format!("{v}\n"));
    }
    s
}

fn load(text: &str) -> mixband::error::Result<mixband::data::Sample> {
    load_weighted_from_reader(
        text.as_bytes(),
        "t.csv",
        "y",
        Some("count"),
        MissingPolicy::Error,
    )
}

#[test]
fn weighted_summary_equals_expanded_summary() {
    let s = load(&weighted_csv()).unwrap();
    assert_eq!(s.values.len(), TABLE.len());
    assert_eq!(s.zero_weight, 1);
    let counts = s.counts.clone().unwrap();
    let w = DataSummary::of_counts(&s.values, Some(&counts), "t").unwrap();
    let e = DataSummary::of(&expanded(), "t").unwrap();
    assert_eq!(w.n, 60);
    assert_eq!((w.n, w.min, w.max), (e.n, e.min, e.max));
    assert!(
        (w.mean - e.mean).abs() < 1e-13 * e.mean.abs(),
        "{w:?} {e:?}"
    );
    assert!((w.sd - e.sd).abs() < 1e-13 * e.sd, "{w:?} {e:?}");
    let st = Standardised::with_counts(&s.values, Some(counts), "t").unwrap();
    assert!((st.scale - e.sd).abs() < 1e-13 * e.sd);
    assert_eq!(st.summary.n, 60);
}

#[test]
fn bad_weights_are_refused_with_their_row() {
    for (cell, what) in [("-2", "\"-2\""), ("2.5", "\"2.5\""), ("many", "\"many\"")] {
        let text = format!("y,count\n1.0,3\n2.0,{cell}\n");
        let e = load(&text).unwrap_err().to_string();
        assert!(
            e.contains("line 3") && e.contains("data row 2") && e.contains(what),
            "{e}"
        );
        assert!(e.contains("non-negative integer"), "{e}");
    }
    let e = load("y,count\n1.0,\n").unwrap_err().to_string();
    assert!(e.contains("data row 1") && e.contains("empty"), "{e}");
    let e = load_weighted_from_reader(
        "y,n\n1.0,2\n".as_bytes(),
        "t.csv",
        "y",
        Some("count"),
        MissingPolicy::Error,
    )
    .unwrap_err()
    .to_string();
    assert!(e.contains("no column \"count\""), "{e}");
    // Total weight below 2 is refused like a sample of one observation.
    let s = load("y,count\n1.0,1\n2.0,0\n").unwrap();
    assert!(DataSummary::of_counts(&s.values, s.counts.as_deref(), "t").is_err());
}

fn some_state() -> State {
    State {
        log_w: vec![0.2f64.ln(), 0.5f64.ln(), 0.3f64.ln()],
        log_v: Vec::new(),
        log_1mv: Vec::new(),
        mu: vec![-1.0, 0.0, 1.5],
        var: vec![0.3, 0.5, 0.2],
        concentration: 1.0,
        var_scale: 1.0,
    }
}

#[test]
fn unit_counts_give_the_reference_allocation_and_logliks_agree() {
    let x: Vec<f64> = (0..2500)
        .map(|i| ((i * 37) % 101) as f64 / 30.0 - 1.7)
        .collect();
    let table = ComponentTable::new(&some_state());
    let key = StreamKey::new(99, 2);
    let ones = vec![1u64; x.len()];
    let w = allocate_weighted(&x, &ones, &table, &key, 7);
    let r = allocate_reference(&x, &table, &key, 7);
    assert_eq!(w, r, "counts of 1 must reproduce the reference bit for bit");
    assert_eq!(
        loglik_weighted(&x, &ones, &table).to_bits(),
        r.loglik.to_bits()
    );
    // Real counts: totals add up, the separate pass agrees bit for bit, and the
    // log-likelihood equals that of the expanded data up to summation order.
    let counts: Vec<u64> = (0..x.len()).map(|i| (i % 4) as u64 + 1).collect();
    let a = allocate_weighted(&x, &counts, &table, &key, 8);
    assert_eq!(a.stats.total(), counts.iter().sum::<u64>());
    assert_eq!(
        a.loglik.to_bits(),
        loglik_weighted(&x, &counts, &table).to_bits()
    );
    let big: Vec<f64> = x
        .iter()
        .zip(&counts)
        .flat_map(|(&v, &c)| std::iter::repeat_n(v, c as usize))
        .collect();
    let e = loglik_reference(&big, &table);
    assert!(
        (a.loglik - e).abs() < 1e-10 * e.abs(),
        "{} vs {e}",
        a.loglik
    );
    // Picks follow the row probabilities: expected count per component Σ_i c_i p_ik,
    // checked within 5 binomial sds (common practice, no source).
    let mut expect = [0.0f64; 3];
    for (&xi, &ci) in x.iter().zip(&counts) {
        let l: Vec<f64> = (0..3)
            .map(|j| table.log_const[j] - (xi - table.mu[j]).powi(2) * table.half_prec[j])
            .collect();
        let top = l.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let z: f64 = l.iter().map(|v| (v - top).exp()).sum();
        for j in 0..3 {
            expect[j] += ci as f64 * (l[j] - top).exp() / z;
        }
    }
    let total = a.stats.total() as f64;
    for (j, &ex) in expect.iter().enumerate() {
        let sd = (ex * (1.0 - ex / total)).sqrt();
        let got = a.stats.n[j] as f64;
        assert!((got - ex).abs() < 5.0 * sd, "component {j}: {got} vs {ex}");
    }
}

struct RunOut {
    grid: Vec<f64>,
    mean: Vec<f64>,
    se: Vec<f64>,
    ll_mean: f64,
    ll_se: f64,
}

/// Runs a config on `csv` through the whole pipeline and returns the posterior mean
/// density on the grid with its Monte Carlo standard error, and the same for the loglik.
fn run(tag: &str, csv: &str, weights: bool, body: &str, from: f64, to: f64) -> RunOut {
    let dir = scratch_dir(tag);
    std::fs::write(dir.join("data.csv"), csv).unwrap();
    let w = if weights { "weights = \"count\"\n" } else { "" };
    let config = format!(
        "[data]\nfile = \"data.csv\"\ncolumn = \"y\"\n{w}\n{body}\n[grid]\nfrom = {from}\nto = {to}\npoints = {GRID_POINTS}\n"
    );
    let (prep, draws, dens) = run_to_density(&dir, &config, (from, to, GRID_POINTS));
    assert_eq!(prep.data.counts.is_some(), weights);
    assert_eq!(prep.record.n, 60);
    let grid = dens.grid.clone();
    let chains = dens.chains as f64;
    let mut m = Vec::new();
    let mut se = Vec::new();
    for g in 0..grid.len() {
        let per: Vec<Vec<f64>> = (0..dens.chains).map(|c| dens.series(c, g)).collect();
        m.push(per.iter().map(|s| mean(s)).sum::<f64>() / chains);
        se.push(
            per.iter()
                .map(|s| batch_means_se(s).powi(2))
                .sum::<f64>()
                .sqrt()
                / chains,
        );
    }
    let ll: Vec<Vec<f64>> = draws
        .chains
        .iter()
        .map(|c| c.rows.iter().map(|r| r.loglik).collect())
        .collect();
    let ll_mean = ll.iter().map(|s| mean(s)).sum::<f64>() / chains;
    let ll_se = ll
        .iter()
        .map(|s| batch_means_se(s).powi(2))
        .sum::<f64>()
        .sqrt()
        / chains;
    remove(&dir);
    RunOut {
        grid,
        mean: m,
        se,
        ll_mean,
        ll_se,
    }
}

fn remove(dir: &Path) {
    let _ = std::fs::remove_dir_all(dir);
}

/// Location-scale kernel, K = 1, NIG(m, κ, a, b) prior: the posterior predictive of the
/// expanded data is Student-t with 2a_n degrees of freedom, location m_n and squared scale
/// b_n (κ_n + 1)/(a_n κ_n) (Murphy 2007, "Conjugate Bayesian analysis of the Gaussian
/// distribution"; the same check as tests/sampler_exact.rs, here fed frequency weights).
#[test]
fn weighted_one_component_matches_student_t_predictive_of_expanded_data() {
    let (m, kappa, a, b) = (4.0, 0.5, 3.0, 4.0);
    let x = expanded();
    let n = x.len() as f64;
    let xbar = x.iter().sum::<f64>() / n;
    let ss = x.iter().map(|v| (v - xbar).powi(2)).sum::<f64>();
    let kn = kappa + n;
    let mn = (kappa * m + n * xbar) / kn;
    let an = a + n / 2.0;
    let bn = b + 0.5 * ss + kappa * n * (xbar - m).powi(2) / (2.0 * kn);
    let scale = (bn * (kn + 1.0) / (an * kn)).sqrt();
    let exact = StudentsT::new(mn, scale, 2.0 * an).unwrap();
    let body = format!(
        "[model]\nkernel = \"location-scale\"\nweights = \"dirichlet\"\ncomponents = 1\n\n\
         [prior]\ncentre = {m}\ncentre_shrink = {kappa}\nvar_shape = {a}\nvar_scale_prior = \"fixed\"\nvar_scale = {b}\n\n\
         [sampler]\nchains = 2\nwarmup = 10\ndraws = 5000\nseed = 31337\nallocation = \"conditional\"\n"
    );
    let r = run(
        "fw-exact",
        &weighted_csv(),
        true,
        &body,
        mn - 4.0 * scale,
        mn + 4.0 * scale,
    );
    let bad: Vec<usize> = (0..GRID_POINTS)
        .filter(|&g| (r.mean[g] - exact.pdf(r.grid[g])).abs() > 4.0 * r.se[g])
        .collect();
    assert!(
        bad.is_empty(),
        "misses the Student-t predictive at grid points {bad:?}"
    );
    // Power: the predictive of the table read without its weights (n = 10 rows) differs.
    let rows: Vec<f64> = TABLE.iter().map(|t| t.0).collect();
    let n0 = rows.len() as f64;
    let xb0 = rows.iter().sum::<f64>() / n0;
    let ss0 = rows.iter().map(|v| (v - xb0).powi(2)).sum::<f64>();
    let (kn0, an0) = (kappa + n0, a + n0 / 2.0);
    let mn0 = (kappa * m + n0 * xb0) / kn0;
    let bn0 = b + 0.5 * ss0 + kappa * n0 * (xb0 - m).powi(2) / (2.0 * kn0);
    let wrong = StudentsT::new(mn0, (bn0 * (kn0 + 1.0) / (an0 * kn0)).sqrt(), 2.0 * an0).unwrap();
    let bad = (0..GRID_POINTS)
        .filter(|&g| (r.mean[g] - wrong.pdf(r.grid[g])).abs() > 4.0 * r.se[g])
        .count();
    assert!(
        bad >= 5,
        "the unweighted predictive passed at all but {bad} points"
    );
}

/// Two-sample check: the same tabulated sample given as weights and as expanded rows,
/// K = 5 location-scale mixture, several chains each. The posterior mean densities must
/// agree within 4.5 combined Monte Carlo standard errors at every grid point, and so must
/// the mean log-likelihoods (common practice, no source).
#[test]
fn weighted_and_expanded_runs_give_the_same_posterior() {
    // Both runs on the conditional step (the only one weighted runs have) with δ fixed, so
    // the comparison is of the weights alone, on a sampler that mixes well here.
    let body = "[model]\nkernel = \"location-scale\"\nweights = \"dirichlet\"\ncomponents = 5\n\n\
         [prior]\ndelta_prior = \"fixed\"\n\n\
         [sampler]\nchains = 4\nwarmup = 500\ndraws = 20000\nseed = 2718\nallocation = \"conditional\"\n";
    let w = run("fw-two-w", &weighted_csv(), true, body, 0.0, 8.5);
    let body_e = body.replace("seed = 2718", "seed = 1414");
    let e = run("fw-two-e", &expanded_csv(), false, &body_e, 0.0, 8.5);
    for g in 0..GRID_POINTS {
        let s = (w.se[g].powi(2) + e.se[g].powi(2)).sqrt();
        assert!(
            (w.mean[g] - e.mean[g]).abs() < 4.5 * s,
            "grid point {}: weighted {} vs expanded {} (se {s})",
            w.grid[g],
            w.mean[g],
            e.mean[g]
        );
    }
    let s = (w.ll_se.powi(2) + e.ll_se.powi(2)).sqrt();
    assert!(
        (w.ll_mean - e.ll_mean).abs() < 4.5 * s,
        "mean loglik: weighted {} vs expanded {} (se {s})",
        w.ll_mean,
        e.ll_mean
    );
}

/// With the collapsed scan (the default at this size) a weighted table runs on its rows
/// written out in row order, so the run is the one the expanded rows give: the same
/// standardisation and the same draws, byte for byte (and so the same bands). With the
/// conditional step the table stays weighted.
#[test]
fn weighted_table_on_the_collapsed_scan_is_its_rows_written_out() {
    use mixband::run::Prepared;
    let fit = |tag: &str, csv: &str, weights: bool, extra: &str| {
        let body = format!(
            "[model]\ncomponents = 5\n\n[sampler]\nchains = 2\nwarmup = 200\ndraws = 300\n\
             max_draws = 300\nseed = 4242\n{extra}\n[grid]\nfrom = 0\nto = 8.5\npoints = 41\n"
        );
        let dir = scratch_dir(tag);
        std::fs::write(dir.join("data.csv"), csv).unwrap();
        let w = if weights { "weights = \"count\"\n" } else { "" };
        let cfg = dir.join("run.toml");
        std::fs::write(
            &cfg,
            format!("[data]\nfile = \"data.csv\"\ncolumn = \"y\"\n{w}\n{body}"),
        )
        .unwrap();
        let prep = Prepared::from_config_file(&cfg).unwrap();
        assert_eq!(prep.record.n, 60);
        let out = dir.join("run");
        // The gate may fail on this short run; the outputs are written either way.
        if let Err(e) = common::execute_quiet(&prep, &out, false) {
            eprintln!("{tag}: {e}");
        }
        let read =
            |f: &str| std::fs::read(out.join(f)).unwrap_or_else(|e| panic!("{tag} {f}: {e}"));
        let files = (read("draws/chain-1.csv"), read("draws/chain-2.csv"));
        remove(&dir);
        (prep, files)
    };
    let (pw, w) = fit("fw-scan-w", &weighted_csv(), true, "");
    let (pe, e) = fit("fw-scan-e", &expanded_csv(), false, "");
    assert_eq!(
        pw.config.allocation,
        mixband::config::AllocationKind::Collapsed
    );
    // The sampler reads the rows written out; everything else keeps the table.
    assert_eq!(pw.sampler_data(), (&pe.data.z[..], None));
    assert!(pw.data.counts.is_some() && pw.data.z.len() == TABLE.len());
    assert_eq!(
        (pw.data.centre, pw.data.scale),
        (pe.data.centre, pe.data.scale)
    );
    assert!(w.0 == e.0 && w.1 == e.1, "draws differ");
    // The conditional step keeps the table weighted, and samples something else.
    let (pc, c) = fit(
        "fw-scan-c",
        &weighted_csv(),
        true,
        "allocation = \"conditional\"\n",
    );
    assert!(pc.data.counts.is_some() && pc.scan_rows.is_none());
    assert!(c.0 != w.0);
}

/// A table standing for more observations than the collapsed scan may write out is
/// refused before anything is expanded, naming the key and its line (the table stands
/// for 10^15 observations, so writing it out first would fail to allocate); the
/// conditional step takes it.
#[test]
fn a_huge_table_on_the_collapsed_scan_is_refused_by_key() {
    use mixband::run::Prepared;
    let dir = scratch_dir("fw-huge");
    std::fs::write(
        dir.join("data.csv"),
        "y,count\n1.0,500000000000000\n2.5,500000000000000\n",
    )
    .unwrap();
    let cfg = |allocation: &str| {
        let p = dir.join(format!("{allocation}.toml"));
        std::fs::write(
            &p,
            format!(
                "[data]\nfile = \"data.csv\"\ncolumn = \"y\"\nweights = \"count\"\n\n\
                 [sampler]\nseed = 1\nallocation = \"{allocation}\"\n"
            ),
        )
        .unwrap();
        Prepared::from_config_file(&p)
    };
    let e = cfg("collapsed").unwrap_err().to_string();
    assert!(
        e.contains("[sampler] allocation")
            && e.contains("(line 8)")
            && e.contains("1000000000000000")
            && e.contains("\"conditional\""),
        "{e}"
    );
    let p = cfg("conditional").unwrap();
    assert_eq!(p.record.n, 1_000_000_000_000_000);
    assert!(p.scan_rows.is_none());
    remove(&dir);
}
