//! Comparing runs fitted to the same data by their expected log predictive density:
//! PSIS-LOO with Pareto-k diagnostics ([`loo`]) and WAIC ([`waic`]), with differences
//! between runs and their standard errors.
//!
//! The pointwise log-likelihood ln p(x_i | θ_s) is recomputed from each run's stored
//! draws and its data (located through RUN/manifest.json and RUN/config.toml, checked
//! against the recorded SHA-256). It is on the original data scale — under
//! `transform = "log"` the Jacobian −ln x_i is included — so runs fitted on different
//! scales are comparable. Draws are treated as independent (relative efficiency 1).
//!
//! Tabulated data (`[data] weights`) have one column per row, standing for its count of
//! identical observations: each copy has the same leave-one-out predictive, so elpd,
//! p_loo, WAIC and their standard errors are the sums and variances over the sample with
//! every row repeated (tested against the expanded matrix). Data recorded at a resolution
//! are scored by the probability of each cell, ln Σ_k w_k P_k(cell), one column per cell
//! with its count; a probability is not a density, so such runs are compared only with
//! runs of the same resolution.

pub mod loo;
pub mod psis;
pub mod waic;

use std::path::Path;

use serde::Serialize;

use crate::check::recorded::{fitted_edges, ln_cell_probability};
use crate::config::parse_config_str;
use crate::dist::{ln_normal_pdf, log_sum_exp};
use crate::error::{Error, Result};
use crate::run::Prepared;
use crate::store::{read_run_draws, DrawRow, Manifest, RunLayout};

pub use self::loo::{loo, loo_counted, Loo};
pub use self::waic::{waic, waic_counted, Waic};

/// A pointwise log-likelihood matrix: `values[s * obs + i]` = ln p(x_i | θ_s).
#[derive(Debug, Clone, PartialEq)]
pub struct LogLik {
    pub draws: usize,
    pub obs: usize,
    pub values: Vec<f64>,
}

impl LogLik {
    /// Observation i over all draws, into `out` (length `draws`).
    pub fn column(&self, i: usize, out: &mut [f64]) {
        for (d, o) in out.iter_mut().enumerate() {
            *o = self.values[d * self.obs + i];
        }
    }
}

/// √(n · Var(v)) with the population variance: the standard error of Σ v_i (Vehtari,
/// Gelman & Gabry 2017, eq. 23; as ArviZ computes it).
pub fn sum_se(v: &[f64]) -> f64 {
    let n = v.len() as f64;
    let mean = v.iter().sum::<f64>() / n;
    let var = v.iter().map(|x| (x - mean) * (x - mean)).sum::<f64>() / n;
    (n * var).sqrt()
}

/// √(N · Var_c(v)) for values v_i each standing for `counts[i]` observations: the
/// [`sum_se`] of the sample with every row repeated its count's times.
pub fn sum_se_counted(v: &[f64], counts: &[u64]) -> f64 {
    let n: f64 = counts.iter().map(|&c| c as f64).sum();
    let mean = v
        .iter()
        .zip(counts)
        .map(|(x, &c)| c as f64 * x)
        .sum::<f64>()
        / n;
    let var = v
        .iter()
        .zip(counts)
        .map(|(x, &c)| c as f64 * (x - mean) * (x - mean))
        .sum::<f64>()
        / n;
    (n * var).sqrt()
}

/// A run's data and log-likelihood matrix.
#[derive(Debug, Clone)]
pub struct RunLogLik {
    pub run: String,
    pub manifest: Manifest,
    /// One column per distinct row (or cell) of the data.
    pub ll: LogLik,
    /// How many observations each column stands for (frequency weights, or the count of
    /// a cell); all 1 for a plain sample.
    pub counts: Vec<u64>,
    /// `[data] resolution` of the run: its columns are then log cell probabilities, one
    /// per cell in value order, and compare only sets it beside runs of the same cells.
    pub resolution: Option<f64>,
}

impl RunLogLik {
    /// Observations in the data (counts summed).
    pub fn observations(&self) -> u64 {
        self.counts.iter().sum()
    }
}

/// Recomputes the pointwise log-likelihood of the run in `dir` from its draws and data.
pub fn run_loglik(dir: &Path) -> Result<RunLogLik> {
    let layout = RunLayout::new(dir);
    let manifest = Manifest::read(&layout.manifest())?;
    let cfg_path = layout.config();
    if !cfg_path.exists() {
        return Err(Error::input(format!(
            "{}: no config.toml; is this a mixband run directory?",
            dir.display()
        )));
    }
    // The data as RUN/config.toml names it (relative to the run directory, absolute, or a
    // copy inside it); failing that, the absolute path recorded in the manifest.
    let prep = match Prepared::from_config_file(&cfg_path) {
        Ok(p) => p,
        Err(first) => {
            let recorded = Path::new(&manifest.data.file);
            if !(recorded.is_absolute() && recorded.exists()) {
                return Err(first);
            }
            let origin = cfg_path.display().to_string();
            let text = std::fs::read_to_string(&cfg_path).map_err(|e| Error::io(&cfg_path, e))?;
            let mut raw = parse_config_str(&text, &origin)?;
            if let Some(d) = raw.data.as_mut() {
                d.file = Some(manifest.data.file.clone());
            }
            let text = toml::to_string(&raw)
                .map_err(|e| Error::internal(format!("cannot re-encode {origin}: {e}")))?;
            Prepared::from_text(&text, &origin, dir, None)?
        }
    };
    let file = &prep.config.data_file;
    if prep.record.sha256 != manifest.data.sha256 {
        return Err(Error::input(format!(
            "{}: the data file {} has changed since the run (SHA-256 {} then, {} now)",
            dir.display(),
            file.display(),
            manifest.data.sha256,
            prep.record.sha256
        )));
    }
    let draws = read_run_draws(&layout.draws_dir(), &manifest.chain_ids())?;
    let per_chain = draws.min_len();
    if per_chain == 0 {
        return Err(Error::input(format!(
            "{}: no draws stored yet",
            dir.display()
        )));
    }
    let rows: Vec<&DrawRow> = draws
        .chains
        .iter()
        .flat_map(|c| c.rows[..per_chain].iter())
        .collect();
    let (values, counts) = match &prep.cells {
        // Data recorded at a resolution: the log probability of each cell, which no
        // transform changes, so no Jacobian.
        Some(cells) => {
            let (lo, hi) = fitted_edges(cells, prep.data.centre, prep.data.scale);
            let mut values = Vec::with_capacity(rows.len() * cells.len());
            for row in &rows {
                let lw: Vec<f64> = row.weight.iter().map(|w| w.ln()).collect();
                let mut terms = vec![0.0; lw.len()];
                for (&a, &b) in lo.iter().zip(&hi) {
                    values.push(ln_cell_probability(row, &lw, a, b, &mut terms));
                }
            }
            (values, cells.count.clone())
        }
        None => {
            let t = prep.config.transform;
            let y: Vec<f64> = prep.data.z.iter().map(|&z| prep.data.to_data(z)).collect();
            let jac: Vec<f64> = y.iter().map(|&v| t.log_jacobian_fitted(v)).collect();
            let mut values = Vec::with_capacity(rows.len() * y.len());
            let mut terms = Vec::new();
            for row in &rows {
                let lw: Vec<f64> = row.weight.iter().map(|w| w.ln()).collect();
                for (i, &yi) in y.iter().enumerate() {
                    terms.clear();
                    terms.extend(
                        (0..lw.len()).map(|k| lw[k] + ln_normal_pdf(yi, row.mean[k], row.sd[k])),
                    );
                    values.push(log_sum_exp(&terms) + jac[i]);
                }
            }
            let counts = prep.data.counts.clone().unwrap_or_else(|| vec![1; y.len()]);
            (values, counts)
        }
    };
    let obs = counts.len();
    Ok(RunLogLik {
        run: dir.display().to_string(),
        manifest,
        ll: LogLik {
            draws: rows.len(),
            obs,
            values,
        },
        counts,
        resolution: prep.config.resolution,
    })
}

/// One run in the comparison.
#[derive(Debug, Clone, Serialize)]
pub struct Scored {
    pub run: String,
    pub kernel: serde_json::Value,
    pub components: serde_json::Value,
    pub draws: usize,
    pub loo: Loo,
    pub waic: Waic,
    /// Rank by elpd_loo (0 = best).
    pub rank: usize,
    /// elpd_loo of the best run minus this run's (≥ 0), and its standard error.
    pub elpd_diff_loo: f64,
    pub se_diff_loo: f64,
    /// The same for WAIC, relative to the run with the highest elpd_waic.
    pub elpd_diff_waic: f64,
    pub se_diff_waic: f64,
}

/// The standard error of Σ (a_i − b_i).
pub fn diff_se(a: &[f64], b: &[f64]) -> f64 {
    let d: Vec<f64> = a.iter().zip(b).map(|(x, y)| x - y).collect();
    sum_se(&d)
}

/// [`diff_se`] with row i standing for `counts[i]` observations.
pub fn diff_se_counted(a: &[f64], b: &[f64], counts: &[u64]) -> f64 {
    let d: Vec<f64> = a.iter().zip(b).map(|(x, y)| x - y).collect();
    sum_se_counted(&d, counts)
}

/// Scores every run and ranks them by elpd_loo; checks they were fitted to the same data.
pub fn compare(runs: &[RunLogLik]) -> Result<Vec<Scored>> {
    if runs.len() < 2 {
        return Err(Error::input("compare needs at least two run directories"));
    }
    let first = &runs[0].manifest.data;
    for r in &runs[1..] {
        let d = &r.manifest.data;
        if r.resolution != runs[0].resolution {
            let say = |v: Option<f64>| {
                v.map_or("as exact values (a density)".to_string(), |x| {
                    format!("as recorded to {x} (cell probabilities)")
                })
            };
            return Err(Error::input(format!(
                "{} scores the data {} and {} {}; the two are not on one scale, so compare \
                 needs runs with the same [data] resolution",
                runs[0].run,
                say(runs[0].resolution),
                r.run,
                say(r.resolution)
            )));
        }
        if d.sha256 != first.sha256 || d.column != first.column || r.counts != runs[0].counts {
            return Err(Error::input(format!(
                "{} and {} were not fitted to the same data (file SHA-256 {} column \"{}\" n {} vs {} column \"{}\" n {})",
                runs[0].run,
                r.run,
                first.sha256,
                first.column,
                runs[0].observations(),
                d.sha256,
                d.column,
                r.observations()
            )));
        }
    }
    let counts = &runs[0].counts;
    let scored: Vec<(Loo, Waic)> = runs
        .iter()
        .map(|r| (loo_counted(&r.ll, counts, 1.0), waic_counted(&r.ll, counts)))
        .collect();
    let best_loo = (0..runs.len())
        .max_by(|&a, &b| scored[a].0.elpd.total_cmp(&scored[b].0.elpd))
        .unwrap_or(0);
    let best_waic = (0..runs.len())
        .max_by(|&a, &b| scored[a].1.elpd.total_cmp(&scored[b].1.elpd))
        .unwrap_or(0);
    let mut out: Vec<Scored> = runs
        .iter()
        .zip(&scored)
        .map(|(r, (l, w))| {
            let cfg = &r.manifest.config;
            Scored {
                run: r.run.clone(),
                kernel: cfg["model"]["kernel"].clone(),
                components: cfg["model"]["components"].clone(),
                draws: r.ll.draws,
                loo: l.clone(),
                waic: w.clone(),
                rank: 0,
                elpd_diff_loo: scored[best_loo].0.elpd - l.elpd,
                se_diff_loo: diff_se_counted(&scored[best_loo].0.pointwise, &l.pointwise, counts),
                elpd_diff_waic: scored[best_waic].1.elpd - w.elpd,
                se_diff_waic: diff_se_counted(&scored[best_waic].1.pointwise, &w.pointwise, counts),
            }
        })
        .collect();
    out.sort_by(|a, b| b.loo.elpd.total_cmp(&a.loo.elpd));
    for (i, s) in out.iter_mut().enumerate() {
        s.rank = i;
    }
    Ok(out)
}
