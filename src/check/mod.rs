//! Checking the model against the data (the convergence gate asks whether the sampler
//! worked; this asks whether the model describes the data):
//! - posterior predictive checks ([`stats`], [`pvalue`], [`replicate`]): one replicated data
//!   set per used draw, test statistics of the replicates and of the data, posterior
//!   predictive p-values with their Monte Carlo error;
//! - LOO-PIT ([`loo_pit`]) with Pareto k̂ diagnostics and a simultaneous band for
//!   uniformity of its ECDF ([`ecdf_band`]);
//! - a verdict in plain language ([`verdict`]).
//!
//! The result is RUN/checks.json ([`CheckReport`]); summary.json and the report carry its
//! mark. It is a function of (config, data, seed): every random number comes from
//! [`crate::sampler::rng::check_rng`], keyed by purpose and replicate index, never by
//! thread. The cost is bounded by `[check]`: at most `replicates` replicated sets of at
//! most `max_observations` values, and LOO-PIT over at most `loo_draws` draws and
//! `max_observations` rows.

pub mod ecdf_band;
pub mod loo_pit;
pub mod pvalue;
pub mod recorded;
pub mod replicate;
pub mod stats;
pub mod verdict;

use std::path::Path;

use serde::{Deserialize, Serialize};

use crate::compare::LogLik;
use crate::dist::{ln_normal_pdf, log_sum_exp};
use crate::error::{Error, Result};
use crate::plot::kde::silverman_bandwidth;
use crate::run::Prepared;
use crate::sampler::rng::check_rng;
use crate::store::{write_atomic, DrawRow, Manifest, RunLayout, ScalarDraws, StoredChains};
use crate::summary::mixture_cdf;

pub use pvalue::{StatCheck, Tail};
pub use verdict::{Verdict, HIGH_K};

/// Stream purpose of the LOO-PIT row subsample.
const LOO_ROWS_STREAM: u64 = u64::MAX - 1;
/// Stream purpose of the band simulation.
const BAND_STREAM: u64 = u64::MAX - 2;
/// Simultaneous level of the LOO-PIT band.
pub const BAND_LEVEL: f64 = 0.95;
/// Uniform samples simulated for the band.
pub const BAND_SIMULATIONS: usize = 2000;
/// Intervals between the band's evaluation points (K + 1 points from 0 to 1).
pub const BAND_INTERVALS: usize = 100;
/// The file name inside the run directory.
pub const CHECKS_FILE: &str = "checks.json";

/// How the replicated data sets were made.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ReplicateInfo {
    /// Kept draws, evenly spaced over the pooled chains, each making one replicate.
    pub draws_used: usize,
    pub draws_total: usize,
    /// Observations in each replicated data set (and in the observed sample compared).
    pub size: usize,
    /// Observations in the data (frequency weights counted).
    pub observations: usize,
    /// True when the data were larger than `size` and a random subsample was compared.
    pub subsampled: bool,
    /// Bandwidth of the kernel estimate whose modes are counted (observed data, Silverman).
    pub kde_bandwidth: f64,
}

fn rows_unit() -> String {
    "rows".to_string()
}

/// The LOO-PIT part of checks.json.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PitReport {
    pub draws_used: usize,
    /// Rows (distinct observations with their counts) used, and in the data; for data
    /// recorded at a resolution, cells.
    pub rows_used: usize,
    pub rows_total: usize,
    /// What `rows_used` counts: "rows", or "cells" for data recorded at a resolution.
    #[serde(default = "rows_unit")]
    pub unit: String,
    pub subsampled: bool,
    /// The PIT value and Pareto k̂ of each row used, in data order (k̂ `null` when the
    /// tail was too short to fit).
    pub pit: Vec<f64>,
    pub pareto_k: Vec<Option<f64>>,
    pub counts: Vec<u64>,
    /// Share of the observations used with k̂ > 0.7.
    pub share_k_above_0_7: f64,
    /// The ECDF of the PIT values at the band's points.
    pub ecdf: Vec<f64>,
    pub band: ecdf_band::EcdfBand,
    pub band_method: String,
    /// Whether the ECDF stays inside the band at every point.
    pub within_band: bool,
    /// P(γ of a uniform sample ≤ γ of the PIT values): small when the PIT is not uniform.
    pub uniformity_p_value: f64,
    /// Largest |ECDF(z) − z| over the band's points.
    pub max_abs_deviation: f64,
}

/// The content of RUN/checks.json.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CheckReport {
    pub tool: String,
    pub version: String,
    pub tail_low: f64,
    pub tail_high: f64,
    pub replicates: ReplicateInfo,
    pub statistics: Vec<StatCheck>,
    pub loo_pit: PitReport,
    pub verdict: Verdict,
    pub caution: String,
}

/// The mark summary.json carries.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CheckMark {
    pub file: String,
    pub misfit: bool,
    pub flagged: Vec<String>,
    pub pit_within_band: bool,
    pub share_k_above_0_7: f64,
}

impl CheckReport {
    pub fn write(&self, layout: &RunLayout) -> Result<()> {
        let mut json = serde_json::to_vec_pretty(self)
            .map_err(|e| Error::internal(format!("cannot encode checks: {e}")))?;
        json.push(b'\n');
        write_atomic(&layout.root.join(CHECKS_FILE), &json)
    }

    /// Reads RUN/checks.json; `None` when the run has none.
    pub fn read(run: &Path) -> Result<Option<CheckReport>> {
        let path = run.join(CHECKS_FILE);
        match std::fs::read_to_string(&path) {
            Ok(t) => serde_json::from_str(&t)
                .map(Some)
                .map_err(|e| Error::input(format!("{}: unreadable checks: {e}", path.display()))),
            Err(_) => Ok(None),
        }
    }

    /// Writes RUN/plots/loo-pit.svg.
    pub fn write_figure(&self, layout: &RunLayout) -> Result<()> {
        let dir = layout.root.join("plots");
        std::fs::create_dir_all(&dir).map_err(|e| Error::io(&dir, e))?;
        let svg = crate::plot::loo_pit::loo_pit_svg(&self.loo_pit)?;
        write_atomic(&dir.join("loo-pit.svg"), svg.as_bytes())
    }

    pub fn mark(&self) -> CheckMark {
        CheckMark {
            file: CHECKS_FILE.into(),
            misfit: self.verdict.misfit,
            flagged: self.verdict.flagged.clone(),
            pit_within_band: self.loo_pit.within_band,
            share_k_above_0_7: self.loo_pit.share_k_above_0_7,
        }
    }
}

/// The mark of the run in `layout`, when it has a readable checks.json.
pub fn mark_of(layout: &RunLayout) -> Option<CheckMark> {
    CheckReport::read(&layout.root)
        .ok()
        .flatten()
        .map(|r| r.mark())
}

/// Runs the check on the stored draws of the run in `layout` whose data `prep` holds.
pub fn check_run(layout: &RunLayout, prep: &Prepared, threads: usize) -> Result<CheckReport> {
    let manifest = Manifest::read(&layout.manifest())?;
    let stored = StoredChains::new(&layout.draws_dir(), &manifest.chain_ids());
    let scalars = ScalarDraws::read(&stored)?;
    let len = scalars.min_len();
    let total = len * scalars.lens().len();
    if total == 0 {
        return Err(Error::input(format!(
            "{}: no draws stored yet",
            layout.root.display()
        )));
    }
    let c = &prep.config;
    let set = c.check;
    let t = c.transform;
    let seed = c.seed;

    // Posterior predictive checks.
    let rows = replicate::rows_on_scale(&prep.data, t);
    let obs = replicate::observed(&rows, set.max_observations, seed);
    let h = silverman_bandwidth(&obs.sorted);
    let h = if h > 0.0 && h.is_finite() {
        h
    } else {
        // A sample with no spread at Silverman's rule: fall back to a tiny positive width.
        (obs.sorted[obs.sorted.len() - 1] - obs.sorted[0])
            .abs()
            .max(1.0)
            * 1e-3
    };
    let picks = replicate::evenly_spaced(total, set.replicates);
    let draws = replicate::read_draws(&stored, len, &picks)?;
    let size = obs.sorted.len();
    // Data recorded at a resolution are compared with replicates recorded the same way.
    let lattice = c.resolution.map(|r| {
        let values: Vec<f64> = rows.iter().map(|row| row.0).collect();
        recorded::Lattice::new(r, &values)
    });
    let rep_stats = parallel_map(draws.len(), threads, |j| {
        let mut rng = check_rng(seed, j as u64);
        let mut y = replicate::replicate(&draws[j], size, t, &mut rng);
        if let Some(l) = &lattice {
            // Recording is monotone, so the replicate stays in ascending order.
            y.iter_mut().for_each(|v| *v = l.record(*v));
        }
        stats::statistics(&y, h)
    });
    drop(draws);
    let observed = stats::statistics(&obs.sorted, h);
    // A statistic that overflows (a replicate far in a heavy tail mapped back by exp, say)
    // is compared over the replicates where it is finite, and left out when the data's own
    // value or every replicate's is not, so no NaN or infinity reaches checks.json.
    let statistics: Vec<StatCheck> = stats::names()
        .iter()
        .enumerate()
        .filter_map(|(i, name)| {
            let rep: Vec<f64> = rep_stats
                .iter()
                .map(|s| s[i])
                .filter(|v| v.is_finite())
                .collect();
            (observed[i].is_finite() && !rep.is_empty())
                .then(|| pvalue::compare(name, observed[i], &rep, set.tail_low, set.tail_high))
        })
        .collect();

    // LOO-PIT.
    let loo_picks = replicate::evenly_spaced(total, set.loo_draws);
    let loo_draws = replicate::read_draws(&stored, len, &loo_picks)?;
    let (pit, pareto_k, counts, rows_used, rows_total, subsampled) = match &prep.cells {
        Some(cells) => {
            let cp = recorded::cell_loo_pit(
                cells,
                (prep.data.centre, prep.data.scale),
                &loo_draws,
                set.max_observations,
                seed,
                threads,
            );
            let ones = vec![1; cp.pit.len()];
            (
                cp.pit,
                cp.pareto_k,
                ones,
                cp.cells_used,
                cp.cells_total,
                cp.subsampled,
            )
        }
        None => {
            let fitted: Vec<(f64, u64)> = prep
                .data
                .z
                .iter()
                .enumerate()
                .map(|(i, &z)| {
                    (
                        prep.data.to_data(z),
                        prep.data.counts.as_ref().map_or(1, |c| c[i]),
                    )
                })
                .filter(|&(_, c)| c > 0)
                .collect();
            let rows_total = fitted.len();
            let loo_rows: Vec<(f64, u64)> = if rows_total > set.max_observations {
                let mut rng = check_rng(seed, LOO_ROWS_STREAM);
                replicate::distinct_indices(rows_total, set.max_observations, &mut rng)
                    .into_iter()
                    .map(|i| fitted[i])
                    .collect()
            } else {
                fitted
            };
            let (ll, cdf) = loo_matrices(&loo_draws, &loo_rows, threads);
            let lp = loo_pit::loo_pit(&ll, &cdf);
            let counts: Vec<u64> = loo_rows.iter().map(|r| r.1).collect();
            let used = loo_rows.len();
            (
                lp.pit,
                lp.pareto_k,
                counts,
                used,
                rows_total,
                used < rows_total,
            )
        }
    };
    let n_used: u64 = counts.iter().sum();
    let high: u64 = pareto_k
        .iter()
        .zip(&counts)
        .filter(|(k, _)| k.is_nan() || **k > HIGH_K)
        .map(|(_, c)| c)
        .sum();
    let z = ecdf_band::eval_points(BAND_INTERVALS);
    let ecdf_c = ecdf_band::ecdf_counts(&pit, &counts, &z);
    let band = ecdf_band::simulated_band(
        n_used as usize,
        &z,
        BAND_LEVEL,
        BAND_SIMULATIONS,
        &mut check_rng(seed, BAND_STREAM),
    );
    let ecdf: Vec<f64> = ecdf_c.iter().map(|&v| v as f64 / n_used as f64).collect();
    let gamma_obs = ecdf_band::gamma_of(&ecdf_c, n_used, &z);
    let within_band = band.contains(&ecdf);
    let max_abs_deviation = ecdf
        .iter()
        .zip(&z)
        .map(|(f, p)| (f - p).abs())
        .fold(0.0, f64::max);
    let share_high_k = high as f64 / n_used as f64;
    let loo = PitReport {
        draws_used: loo_draws.len(),
        rows_used,
        rows_total,
        unit: if prep.cells.is_some() { "cells" } else { "rows" }.to_string(),
        subsampled,
        pit,
        pareto_k: pareto_k.iter().map(|&k| k.is_finite().then_some(k)).collect(),
        counts,
        share_k_above_0_7: share_high_k,
        ecdf,
        uniformity_p_value: band.p_value(gamma_obs),
        band,
        band_method: format!(
            "simulation method of Säilynoja, Bürkner & Vehtari (2022), {BAND_SIMULATIONS} simulated uniform samples, \
             {BAND_INTERVALS} intervals, simultaneous level {BAND_LEVEL}"
        ),
        within_band,
        max_abs_deviation,
    };
    let data_min = rows.iter().map(|r| r.0).fold(f64::INFINITY, f64::min);
    let verdict = verdict::verdict(
        &verdict::Findings {
            stats: &statistics,
            pit_within_band: within_band,
            share_high_k,
            data_min,
        },
        c,
    );
    Ok(CheckReport {
        tool: "mixband".into(),
        version: env!("CARGO_PKG_VERSION").into(),
        tail_low: set.tail_low,
        tail_high: set.tail_high,
        replicates: ReplicateInfo {
            draws_used: picks.len(),
            draws_total: total,
            size,
            observations: obs.total,
            subsampled: obs.subsampled,
            kde_bandwidth: h,
        },
        statistics,
        loo_pit: loo,
        verdict,
        caution: "The check compares the data with what the fitted model predicts; passing it does not prove the model \
                  right, and p-values of statistics of the same data are not independent. Posterior predictive p-values \
                  are conservative (they concentrate near 0.5 when the model is right), so a value in the tails is strong \
                  evidence of misfit."
            .into(),
    })
}

/// The log-likelihood and CDF matrices of `rows` (fitted scale, with counts) under `draws`.
fn loo_matrices(draws: &[DrawRow], rows: &[(f64, u64)], threads: usize) -> (LogLik, LogLik) {
    let n = rows.len();
    let per_draw = parallel_map(draws.len(), threads, |s| {
        let row = &draws[s];
        let lw: Vec<f64> = row.weight.iter().map(|w| w.ln()).collect();
        let mut terms = vec![0.0; lw.len()];
        let mut ll = Vec::with_capacity(n);
        let mut cdf = Vec::with_capacity(n);
        for &(y, _) in rows {
            for k in 0..lw.len() {
                terms[k] = lw[k] + ln_normal_pdf(y, row.mean[k], row.sd[k]);
            }
            ll.push(log_sum_exp(&terms));
            cdf.push(mixture_cdf(row, y));
        }
        (ll, cdf)
    });
    let s = draws.len();
    let mut ll = Vec::with_capacity(s * n);
    let mut cdf = Vec::with_capacity(s * n);
    for (a, b) in per_draw {
        ll.extend(a);
        cdf.extend(b);
    }
    (
        LogLik {
            draws: s,
            obs: n,
            values: ll,
        },
        LogLik {
            draws: s,
            obs: n,
            values: cdf,
        },
    )
}

/// `f(0..n)` on up to `threads` threads, in index order (each item is computed by the same
/// code whatever the thread count).
fn parallel_map<T: Send>(n: usize, threads: usize, f: impl Fn(usize) -> T + Sync) -> Vec<T> {
    let threads = threads.clamp(1, n.max(1));
    let chunk = n.div_ceil(threads);
    std::thread::scope(|sc| {
        let handles: Vec<_> = (0..threads)
            .map(|t| {
                let f = &f;
                sc.spawn(move || {
                    (t * chunk..((t + 1) * chunk).min(n))
                        .map(f)
                        .collect::<Vec<T>>()
                })
            })
            .collect();
        handles
            .into_iter()
            .flat_map(|h| h.join().unwrap_or_default())
            .collect()
    })
}

/// Runs the check after sampling and writes checks.json; a failure is reported on stderr
/// and never stops the run (an older checks.json is removed so nothing stale remains).
pub fn check_and_write(layout: &RunLayout, prep: &Prepared) -> Option<CheckReport> {
    let threads = std::thread::available_parallelism().map_or(1, |n| n.get());
    let done = check_run(layout, prep, threads)
        .and_then(|r| r.write(layout).map(|_| r))
        .and_then(|r| r.write_figure(layout).map(|_| r));
    match done {
        Ok(r) => Some(r),
        Err(e) => {
            eprintln!("mixband: warning: the model check was skipped: {e}");
            let _ = std::fs::remove_file(layout.root.join(CHECKS_FILE));
            None
        }
    }
}
