//! The verdict of the model check in plain language: which statistics fall in the tails,
//! whether the LOO-PIT values look uniform, how many observations are too influential for
//! the importance sampling, and what to change in the model when something misfits. The
//! verdict never blocks a run; it is written beside the other outputs and shown in them.

use serde::{Deserialize, Serialize};

use super::pvalue::{StatCheck, Tail};
use crate::config::{Kernel, RunConfig};
use crate::data::Transform;

/// Pareto k̂ above this makes a PSIS estimate unreliable (Vehtari et al. 2024).
pub const HIGH_K: f64 = 0.7;

/// The summary of the check.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Verdict {
    /// True when any statistic is in a tail or the LOO-PIT ECDF leaves its band.
    pub misfit: bool,
    /// Names of the statistics in a tail.
    pub flagged: Vec<String>,
    /// One sentence saying what was found.
    pub summary: String,
    /// What to try, most specific first; empty when nothing misfits.
    pub advice: Vec<String>,
}

/// What the verdict is built from.
pub struct Findings<'a> {
    pub stats: &'a [StatCheck],
    pub pit_within_band: bool,
    /// Share of the LOO observations with k̂ > [`HIGH_K`].
    pub share_high_k: f64,
    /// The smallest observation (original scale).
    pub data_min: f64,
}

fn is_quantile(name: &str) -> bool {
    name.starts_with('q')
}

/// Builds the verdict for a run with config `c`.
pub fn verdict(f: &Findings<'_>, c: &RunConfig) -> Verdict {
    let flagged: Vec<&StatCheck> = f.stats.iter().filter(|s| s.tail.is_some()).collect();
    let names: Vec<String> = flagged.iter().map(|s| s.name.clone()).collect();
    let has = |n: &str| names.iter().any(|m| m == n);
    let shape = has("skewness")
        || has("kurtosis")
        || names.iter().any(|n| is_quantile(n) && n != "q50")
        || has("sd");
    let misfit = !names.is_empty() || !f.pit_within_band;
    let mut advice = Vec::new();
    if shape && c.kernel == Kernel::Location {
        advice.push(
            "Try kernel = \"location-scale\" in [model]: with one common standard deviation the components cannot \
             follow a skewed or heavy-tailed shape without many of them."
                .to_string(),
        );
    }
    if (has("skewness") || names.iter().any(|n| n == "q95" || n == "q99" || n == "q01"))
        && c.transform == Transform::None
        && f.data_min > 0.0
    {
        advice.push(
            "The data are positive and the tails or the skewness misfit: try transform = \"log\" in [data], which \
             fits the mixture to ln x and reports the density of x."
                .to_string(),
        );
    }
    if has("kde_modes") || shape || !f.pit_within_band {
        advice.push(format!(
            "Try more components ([model] components, now {}): a shape the mixture cannot reach with its components \
             shows up as misfit in the tails, the spread or the number of modes.",
            c.components
        ));
    }
    if has("max_gap") {
        let high = flagged
            .iter()
            .any(|s| s.name == "max_gap" && s.tail == Some(Tail::ObservedHigh));
        advice.push(if high {
            "The data have a wider gap between neighbouring values than the model reproduces: look for outliers or a \
             separate group far from the rest."
                .to_string()
        } else {
            "The data have smaller gaps than the model reproduces: heavily rounded or tied values make a continuous \
             model look wrong; consider the rounding when reading the bands."
                .to_string()
        });
    }
    if f.share_high_k > 0.0 {
        advice.push(format!(
            "{:.1}% of the observations have Pareto k̂ above {HIGH_K}: their leave-one-out predictive, and so their PIT, \
             is unreliable; such observations are very influential (often outliers).",
            100.0 * f.share_high_k
        ));
    }
    let summary = if !misfit {
        "No evidence of misfit: no test statistic lies in the tails of its posterior predictive distribution and \
         the LOO-PIT values are consistent with uniformity."
            .to_string()
    } else {
        let mut parts = Vec::new();
        if !names.is_empty() {
            parts.push(format!(
                "{} of {} test statistics lie in the tails of their posterior predictive distribution ({})",
                names.len(),
                f.stats.len(),
                names.join(", ")
            ));
        }
        if !f.pit_within_band {
            parts.push("the LOO-PIT ECDF leaves its simultaneous band for uniformity".to_string());
        }
        format!(
            "Misfit: {}. The model does not describe these features of the data; read the bands with that in mind.",
            parts.join("; ")
        )
    };
    Verdict {
        misfit,
        flagged: names,
        summary,
        advice,
    }
}
