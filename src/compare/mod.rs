//! Comparing runs fitted to the same data by their expected log predictive density:
//! PSIS-LOO with Pareto-k diagnostics ([`loo`]) and WAIC ([`waic`]), with differences
//! between runs and their standard errors.
//!
//! The pointwise log-likelihood ln p(x_i | θ_s) is recomputed from each run's stored
//! draws and its data (located through RUN/manifest.json and RUN/config.toml, checked
//! against the recorded SHA-256). It is on the original data scale — under
//! `transform = "log"` the Jacobian −ln x_i is included — so runs fitted on different
//! scales are comparable. Draws are treated as independent (relative efficiency 1).

pub mod loo;
pub mod psis;
pub mod waic;

use std::path::Path;

use serde::Serialize;

use crate::config::parse_config_str;
use crate::dist::{ln_normal_pdf, log_sum_exp};
use crate::error::{Error, Result};
use crate::run::Prepared;
use crate::store::{read_run_draws, Manifest, RunLayout};

pub use self::loo::{loo, Loo};
pub use self::waic::{waic, Waic};

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

/// A run's data and log-likelihood matrix.
#[derive(Debug, Clone)]
pub struct RunLogLik {
    pub run: String,
    pub manifest: Manifest,
    pub ll: LogLik,
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
    if let Some(r) = prep.config.resolution {
        return Err(Error::input(format!(
            "{}: the run treats its values as recorded to {r} ([data] resolution); compare's \
             pointwise log-likelihood is that of exact values and does not support such runs yet",
            dir.display()
        )));
    }
    if prep.data.counts.is_some() {
        return Err(Error::input(format!(
            "{}: the run uses [data] weights (frequency weights); compare works on one \
             pointwise log-likelihood per observation and does not support weighted runs",
            dir.display()
        )));
    }
    let t = prep.config.transform;
    let y: Vec<f64> = prep.data.z.iter().map(|&z| prep.data.to_data(z)).collect();
    let jac: Vec<f64> = y.iter().map(|&v| t.log_jacobian_fitted(v)).collect();
    let obs = y.len();
    let mut values = Vec::with_capacity(draws.chains.len() * per_chain * obs);
    let mut terms = Vec::new();
    for c in &draws.chains {
        for row in &c.rows[..per_chain] {
            let lw: Vec<f64> = row.weight.iter().map(|w| w.ln()).collect();
            for (i, &yi) in y.iter().enumerate() {
                terms.clear();
                terms.extend(
                    (0..lw.len()).map(|k| lw[k] + ln_normal_pdf(yi, row.mean[k], row.sd[k])),
                );
                values.push(log_sum_exp(&terms) + jac[i]);
            }
        }
    }
    Ok(RunLogLik {
        run: dir.display().to_string(),
        manifest,
        ll: LogLik {
            draws: draws.chains.len() * per_chain,
            obs,
            values,
        },
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

/// Scores every run and ranks them by elpd_loo; checks they were fitted to the same data.
pub fn compare(runs: &[RunLogLik]) -> Result<Vec<Scored>> {
    if runs.len() < 2 {
        return Err(Error::input("compare needs at least two run directories"));
    }
    let first = &runs[0].manifest.data;
    for r in &runs[1..] {
        let d = &r.manifest.data;
        if d.sha256 != first.sha256 || d.column != first.column || r.ll.obs != runs[0].ll.obs {
            return Err(Error::input(format!(
                "{} and {} were not fitted to the same data (file SHA-256 {} column \"{}\" n {} vs {} column \"{}\" n {})",
                runs[0].run, r.run, first.sha256, first.column, runs[0].ll.obs, d.sha256, d.column, r.ll.obs
            )));
        }
    }
    let scored: Vec<(Loo, Waic)> = runs
        .iter()
        .map(|r| (loo(&r.ll, 1.0), waic(&r.ll)))
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
                se_diff_loo: diff_se(&scored[best_loo].0.pointwise, &l.pointwise),
                elpd_diff_waic: scored[best_waic].1.elpd - w.elpd,
                se_diff_waic: diff_se(&scored[best_waic].1.pointwise, &w.pointwise),
            }
        })
        .collect();
    out.sort_by(|a, b| b.loo.elpd.total_cmp(&a.loo.elpd));
    for (i, s) in out.iter_mut().enumerate() {
        s.rank = i;
    }
    Ok(out)
}
