//! Mixing benchmark (issue 8): effective draws of the density, not sweeps per second.
//!
//! For benchmark densities of Marron & Wand (1992, "Exact mean integrated squared error",
//! Ann. Statist. 20:712–736, Table 1; parameters written from memory) draws n = 500
//! observations, fits each weight prior with 4 chains × 2000 kept draws after 2000 warm-up
//! (MIXING_WARMUP=1000 gives the default run length)
//! through the ordinary config path (every other setting at its default), and prints, over
//! the default 200-point grid, the lowest and median bulk-ESS per kept draw of the density
//! and the largest R-hat, plus the convergence-gate quantities (loglik, occupied,
//! concentration; max R-hat ≤ 1.01, min bulk-ESS ≥ 400) and bulk-ESS per CPU second.
//! Then the shipped demo config is run as it stands and checked against the gate.
//!
//! `cargo bench --bench mixing`. Environment: MIXING_WARMUP, MIXING_DRAWS (per chain),
//! MIXING_ONLY (substring of a row label) to run a part, MIXING_REPEATS (runs of each
//! row with different seeds, one row each: ESS per draw varies from seed to seed by
//! 10–30 %, so compare settings over several).

use std::path::Path;
use std::time::Instant;

use mixband::diagnostics::scalar_diagnostics;
use mixband::run::Prepared;
use mixband::sampler::allocate::{loglik, ComponentTable};
use mixband::sampler::rng::StreamKey;
use mixband::sampler::{initial_state, sweep};
use mixband::summary::linspace;

#[path = "support/densities.rs"]
mod densities;
use densities::{densities, sample_csv};

/// One weight-prior setting, as config lines.
struct Variant {
    label: &'static str,
    model: &'static str,
    prior: &'static str,
    sampler: &'static str,
}

fn variants() -> Vec<Variant> {
    let v = |label, model, prior, sampler| Variant {
        label,
        model,
        prior,
        sampler,
    };
    let (dir, stick) = ("weights = \"dirichlet\"", "weights = \"stick-breaking\"");
    let (fixed, gamma) = ("delta_prior = \"fixed\"", "delta_prior = \"gamma\"");
    let (cond, coll) = ("allocation = \"conditional\"", "allocation = \"collapsed\"");
    vec![
        v("conditional dirichlet d=1 K=10", dir, fixed, cond),
        v("conditional dirichlet d~G(10,10K) K=10", dir, gamma, cond),
        v("conditional stick K=25 moves", stick, "", cond),
        v("collapsed dirichlet d=1 K=10", dir, fixed, coll),
        v("defaults: collapsed dirichlet d~G(10,10K) K=10", "", "", ""),
        v(
            "collapsed stick K=25 a~G(1,1) (earlier default)",
            stick,
            "alpha_shape = 1\nalpha_rate = 1",
            coll,
        ),
        v("stick defaults: collapsed K=25 a~G(2,4)", stick, "", ""),
    ]
}

/// Everything measured on one run.
struct Figures {
    min_ess: f64,
    median_ess: f64,
    max_rhat: f64,
    gate_rhat: f64,
    gate_ess: f64,
    worst: String,
    accept_labels: f64,
    accept_adjacent: f64,
    seconds: f64,
    draws: usize,
}

fn run(prep: &Prepared) -> Figures {
    let cfg = &prep.config;
    let grid = linspace(cfg.grid_from, cfg.grid_to, cfg.grid_points);
    let (c, s) = (prep.data.centre, prep.data.scale);
    let x = &prep.data.z;
    let total = (cfg.warmup + cfg.draws * cfg.thin) as u64;
    let g = grid.len();
    let mut dens: Vec<Vec<Vec<f64>>> = vec![Vec::new(); g];
    let mut scalars: Vec<[Vec<f64>; 3]> = Vec::new();
    let (mut lp, mut la, mut ap, mut aa) = (0u64, 0u64, 0u64, 0u64);
    let mut seconds = 0.0;
    for chain in 1..=cfg.chains as u64 {
        let key = StreamKey::new(cfg.seed, chain);
        let mut state = initial_state(x, &prep.prior, &key);
        let mut chain_d: Vec<Vec<f64>> = vec![Vec::with_capacity(cfg.draws); g];
        let mut sc: [Vec<f64>; 3] = Default::default();
        let mut pending: Option<f64> = None;
        let t0 = Instant::now();
        for t in 1..=total {
            let out = sweep(x, &prep.prior, &mut state, &key, t);
            if let Some(occ) = pending.take() {
                sc[0].push(out.loglik_before);
                sc[1].push(occ);
            }
            lp += out.moves.labels_proposed as u64;
            la += out.moves.labels_accepted as u64;
            ap += out.moves.adjacent_proposed as u64;
            aa += out.moves.adjacent_accepted as u64;
            if t > cfg.warmup as u64 && (t - cfg.warmup as u64).is_multiple_of(cfg.thin as u64) {
                pending = Some(out.occupied as f64);
                sc[2].push(state.concentration);
                for (gi, &xv) in grid.iter().enumerate() {
                    chain_d[gi].push(state.density((xv - c) / s) / s);
                }
            }
        }
        if let Some(occ) = pending {
            sc[0].push(loglik(x, &ComponentTable::new(&state)));
            sc[1].push(occ);
        }
        seconds += t0.elapsed().as_secs_f64();
        for (gi, d) in chain_d.into_iter().enumerate() {
            dens[gi].push(d);
        }
        scalars.push(sc);
    }
    let n_kept = (cfg.chains * cfg.draws) as f64;
    let mut ess = Vec::with_capacity(g);
    let mut max_rhat: f64 = 0.0;
    for chains in &dens {
        let refs: Vec<&[f64]> = chains.iter().map(Vec::as_slice).collect();
        let d = scalar_diagnostics(&refs).expect("density diagnostics");
        ess.push(d.ess_bulk);
        max_rhat = max_rhat.max(d.rhat);
    }
    let min_ess = ess.iter().copied().fold(f64::INFINITY, f64::min);
    let (mut gate_rhat, mut gate_ess) = (max_rhat, min_ess);
    let at = ess.iter().position(|&e| e == min_ess).unwrap_or(0);
    // Where the lowest density ESS sits, as a quantile of the sample (0 = minimum, 1 = maximum).
    let (lo, hi) = (prep.data.summary.min, prep.data.summary.max);
    let mut worst = format!(
        "density ESS {min_ess:.0} at x = {:.2} ({:+.2} of the data range)",
        grid[at],
        (grid[at] - lo) / (hi - lo)
    );
    for (i, name) in ["loglik", "occupied", "concentration"].iter().enumerate() {
        let refs: Vec<&[f64]> = scalars.iter().map(|sc| sc[i].as_slice()).collect();
        let d = scalar_diagnostics(&refs).expect("scalar diagnostics");
        gate_rhat = gate_rhat.max(d.rhat);
        if d.ess_bulk < gate_ess {
            gate_ess = d.ess_bulk;
            worst = format!("{name} ESS {:.0}; {worst}", d.ess_bulk);
        }
    }
    let mut sorted = ess.clone();
    sorted.sort_by(f64::total_cmp);
    let rate = |a: u64, p: u64| {
        if p == 0 {
            f64::NAN
        } else {
            a as f64 / p as f64
        }
    };
    Figures {
        min_ess: min_ess / n_kept,
        median_ess: sorted[g / 2] / n_kept,
        max_rhat,
        gate_rhat,
        gate_ess,
        worst,
        accept_labels: rate(la, lp),
        accept_adjacent: rate(aa, ap),
        seconds,
        draws: n_kept as usize,
    }
}

fn env_usize(name: &str, default: usize) -> usize {
    std::env::var(name)
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

fn print_row(label: &str, f: &Figures) {
    let pass = f.gate_rhat <= 1.01 && f.gate_ess >= 400.0;
    println!(
        "{label:<46} {:>7.3} {:>7.3} {:>7.3} {:>7.3} {:>7.0} {:>5} {:>6.2} {:>6.2} {:>7.1} {:>9.0}  {}",
        f.min_ess,
        f.median_ess,
        f.max_rhat,
        f.gate_rhat,
        f.gate_ess,
        if pass { "pass" } else { "FAIL" },
        f.accept_labels,
        f.accept_adjacent,
        f.seconds,
        f.min_ess * f.draws as f64 / f.seconds,
        f.worst,
    );
}

fn main() {
    let warmup = env_usize("MIXING_WARMUP", 2000);
    let draws = env_usize("MIXING_DRAWS", 2000);
    let only = std::env::var("MIXING_ONLY").unwrap_or_default();
    let repeats = env_usize("MIXING_REPEATS", 1).max(1);
    println!(
        "mixing: n = 500, 4 chains x {draws} kept draws after {warmup} warm-up, 200-point grid"
    );
    println!(
        "{:<46} {:>7} {:>7} {:>7} {:>7} {:>7} {:>5} {:>6} {:>6} {:>7} {:>9}  worst gate quantity",
        "data / weights",
        "minESS/",
        "medESS/",
        "maxRhat",
        "gateRh",
        "gateESS",
        "gate",
        "acc1",
        "acc2",
        "cpu s",
        "minESS/s"
    );
    for (i, d) in densities().iter().enumerate() {
        let csv = sample_csv(d, 500, 1000 + i as u64);
        for v in variants() {
            let label = format!("{} | {}", d.name, v.label);
            if !label.contains(&only) {
                continue;
            }
            for r in 0..repeats {
                let text = format!(
                "[data]\nfile = \"bench.csv\"\ncolumn = \"value\"\n[model]\n{}\n[prior]\n{}\n[sampler]\nchains = 4\nwarmup = {warmup}\ndraws = {draws}\nseed = {}\n{}\n",
                v.model,
                v.prior,
                77 + i + 1000 * r,
                v.sampler
            );
                let prep = Prepared::from_text(&text, "bench", Path::new("."), Some(&csv))
                    .expect("bench config");
                print_row(&label, &run(&prep));
            }
        }
    }
    if "demo".contains(&only) || only.is_empty() {
        let text = include_str!("../configs/demo.toml");
        let data = include_bytes!("../demo-data/warbler-wings.csv");
        let prep = Prepared::from_text(text, "configs/demo.toml", Path::new("."), Some(data))
            .expect("demo config");
        print_row("demo (shipped config, default run length)", &run(&prep));
    }
}
