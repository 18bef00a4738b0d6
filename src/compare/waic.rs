//! The widely applicable information criterion on the log scale (Watanabe 2010, JMLR 11,
//! 3571–3594; in the form of Vehtari, Gelman & Gabry 2017, eq. 11–12):
//! elpd_waic = Σ_i [ln((1/S) Σ_s p(y_i | θ_s)) − Var_s ln p(y_i | θ_s)], with the
//! population variance over draws (as ArviZ), p_waic = Σ_i Var_s, and standard error
//! √(n · Var(elpd_waic,i)).

use serde::Serialize;

use super::LogLik;
use crate::dist::log_sum_exp;

/// Pointwise variances above this suggest WAIC is failing (Vehtari, Gelman & Gabry 2017,
/// §2.2; the threshold ArviZ warns at).
pub const MAX_POINTWISE_VAR: f64 = 0.4;

/// WAIC estimate with pointwise values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Waic {
    pub elpd: f64,
    pub se: f64,
    pub p_waic: f64,
    #[serde(skip)]
    pub pointwise: Vec<f64>,
    /// Observations (1-based) whose log-likelihood variance over draws exceeds 0.4.
    pub high_variance: Vec<usize>,
}

pub fn waic(ll: &LogLik) -> Waic {
    waic_counted(ll, &vec![1; ll.obs])
}

/// [`waic`] with column i standing for `counts[i]` identical observations (sums and the
/// standard error over the sample with every column repeated; `pointwise` and
/// `high_variance` stay one per column).
pub fn waic_counted(ll: &LogLik, counts: &[u64]) -> Waic {
    let (s, n) = (ll.draws, ll.obs);
    assert_eq!(counts.len(), n, "one count per column");
    let mut col = vec![0.0; s];
    let mut pointwise = Vec::with_capacity(n);
    let mut p_waic = 0.0;
    let mut high_variance = Vec::new();
    for (i, &count) in counts.iter().enumerate() {
        ll.column(i, &mut col);
        let lppd = log_sum_exp(&col) - (s as f64).ln();
        let mean = col.iter().sum::<f64>() / s as f64;
        let var = col.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / s as f64;
        if var > MAX_POINTWISE_VAR {
            high_variance.push(i + 1);
        }
        p_waic += count as f64 * var;
        pointwise.push(lppd - var);
    }
    Waic {
        elpd: pointwise
            .iter()
            .zip(counts)
            .map(|(v, &c)| c as f64 * v)
            .sum(),
        se: super::sum_se_counted(&pointwise, counts),
        p_waic,
        pointwise,
        high_variance,
    }
}
