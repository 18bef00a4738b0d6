//! Expected log pointwise predictive density by PSIS leave-one-out cross-validation
//! (Vehtari, Gelman & Gabry 2017, Statistics and Computing 27, 1413–1432): for each
//! observation the importance ratios 1/p(y_i | θ_s) are Pareto smoothed ([`super::psis`])
//! and elpd_i = ln Σ_s w_is p(y_i | θ_s) with normalised smoothed weights w_is. The
//! standard error is √(n · Var(elpd_i)) (population variance, as ArviZ) and
//! p_loo = lppd − elpd_loo.

use serde::Serialize;

use super::psis::psis;
use super::LogLik;
use crate::dist::log_sum_exp;

/// PSIS-LOO estimate with pointwise values.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Loo {
    pub elpd: f64,
    pub se: f64,
    pub p_loo: f64,
    #[serde(skip)]
    pub pointwise: Vec<f64>,
    pub pareto_k: Vec<f64>,
    /// The k above which a PSIS estimate is unreliable for this many draws:
    /// min(1 − 1/log10 S, 0.7) (Vehtari et al. 2024).
    pub k_threshold: f64,
    /// Observations (1-based, in data order) with k̂ above the threshold.
    pub bad_k: Vec<usize>,
}

/// PSIS-LOO of a log-likelihood matrix with relative efficiency `r_eff`.
pub fn loo(ll: &LogLik, r_eff: f64) -> Loo {
    loo_counted(ll, &vec![1; ll.obs], r_eff)
}

/// [`loo`] with column i standing for `counts[i]` identical observations: elpd, p_loo and
/// the standard error are those of the sample with every column repeated its count's
/// times; `pointwise`, `pareto_k` and `bad_k` stay one per column.
pub fn loo_counted(ll: &LogLik, counts: &[u64], r_eff: f64) -> Loo {
    let (s, n) = (ll.draws, ll.obs);
    assert_eq!(counts.len(), n, "one count per column");
    let mut pointwise = Vec::with_capacity(n);
    let mut pareto_k = Vec::with_capacity(n);
    let mut lppd = 0.0;
    let mut col = vec![0.0; s];
    let mut terms = vec![0.0; s];
    for (i, &count) in counts.iter().enumerate() {
        ll.column(i, &mut col);
        let ratios: Vec<f64> = col.iter().map(|v| -v).collect();
        let sm = psis(&ratios, r_eff);
        for d in 0..s {
            terms[d] = sm.log_weights[d] + col[d];
        }
        pointwise.push(log_sum_exp(&terms));
        pareto_k.push(sm.k);
        lppd += count as f64 * (log_sum_exp(&col) - (s as f64).ln());
    }
    let elpd: f64 = pointwise
        .iter()
        .zip(counts)
        .map(|(v, &c)| c as f64 * v)
        .sum();
    let k_threshold = (1.0 - 1.0 / (s as f64).log10()).min(0.7);
    let bad_k = pareto_k
        .iter()
        .enumerate()
        .filter(|(_, &k)| k > k_threshold)
        .map(|(i, _)| i + 1)
        .collect();
    Loo {
        elpd,
        se: super::sum_se_counted(&pointwise, counts),
        p_loo: lppd - elpd,
        pointwise,
        pareto_k,
        k_threshold,
        bad_k,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::compare::{waic, waic_counted};
    use rand::{Rng, SeedableRng};
    use rand_chacha::ChaCha8Rng;

    /// A column standing for c identical observations scores as c repeated columns
    /// (every copy has the same leave-one-out predictive): elpd, p_loo, WAIC, p_waic and
    /// both standard errors equal those of the expanded matrix.
    #[test]
    fn counted_columns_score_as_the_expanded_matrix() {
        let mut rng = ChaCha8Rng::seed_from_u64(5);
        let (draws, obs) = (400, 6);
        let counts = [3u64, 1, 7, 2, 1, 5];
        let values: Vec<f64> = (0..draws * obs)
            .map(|_| -1.5 + rng.random::<f64>() * rng.random::<f64>() * 3.0)
            .collect();
        let ll = LogLik {
            draws,
            obs,
            values: values.clone(),
        };
        let cols: Vec<usize> = (0..obs)
            .flat_map(|i| std::iter::repeat_n(i, counts[i] as usize))
            .collect();
        let expanded = LogLik {
            draws,
            obs: cols.len(),
            values: (0..draws)
                .flat_map(|s| cols.iter().map(move |&i| (s, i)))
                .map(|(s, i)| values[s * obs + i])
                .collect(),
        };
        let (a, b) = (loo_counted(&ll, &counts, 1.0), loo(&expanded, 1.0));
        let close = |x: f64, y: f64| (x - y).abs() < 1e-10 * y.abs().max(1.0);
        assert!(close(a.elpd, b.elpd), "{} vs {}", a.elpd, b.elpd);
        assert!(close(a.p_loo, b.p_loo), "{} vs {}", a.p_loo, b.p_loo);
        assert!(close(a.se, b.se), "{} vs {}", a.se, b.se);
        let (a, b) = (waic_counted(&ll, &counts), waic(&expanded));
        assert!(close(a.elpd, b.elpd), "{} vs {}", a.elpd, b.elpd);
        assert!(close(a.p_waic, b.p_waic), "{} vs {}", a.p_waic, b.p_waic);
        assert!(close(a.se, b.se), "{} vs {}", a.se, b.se);
        // Unit counts are the plain estimate, bit for bit.
        assert_eq!(loo_counted(&ll, &[1; 6], 1.0), loo(&ll, 1.0));
    }
}
