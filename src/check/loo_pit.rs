//! LOO-PIT: the probability integral transform of each observation under its
//! leave-one-out predictive distribution, PIT_i = Σ_s w_is F(y_i | θ_s), with w_is the
//! Pareto-smoothed importance weights of draw s for leaving out observation i (ratios
//! 1/p(y_i | θ_s), smoothed by [`crate::compare::psis`]; Vehtari, Gelman & Gabry 2017,
//! §2.1 and Gabry et al. 2019, "Visualization in Bayesian workflow", JRSS A 182, §5
//! (cited from memory)). For a calibrated model the PIT values are close to uniform.
//!
//! F is each draw's exact CDF, so this is the conditional-expectation form of ArviZ's
//! `loo_pit`, which averages the indicator 1[ŷ_s ≤ y_i] of posterior predictive draws
//! ŷ_s; given indicators instead of CDF values the two coincide (tests/check_loo_pit.rs).
//! The PIT is unchanged by a monotone transform of the data, and the Jacobian of one is the
//! same in every draw, so everything here is on the scale the mixture is fitted on.

use crate::compare::psis::psis;
use crate::compare::LogLik;

/// PIT values and the Pareto k̂ of each observation's importance weights.
#[derive(Debug, Clone, PartialEq)]
pub struct LooPit {
    pub pit: Vec<f64>,
    pub pareto_k: Vec<f64>,
}

/// LOO-PIT from the pointwise log-likelihood `ll` and the matching matrix `cdf` of
/// F(y_i | θ_s) (same layout: draw-major), with relative efficiency 1.
pub fn loo_pit(ll: &LogLik, cdf: &LogLik) -> LooPit {
    let (s, n) = (ll.draws, ll.obs);
    let mut pit = Vec::with_capacity(n);
    let mut pareto_k = Vec::with_capacity(n);
    let mut col = vec![0.0; s];
    let mut f = vec![0.0; s];
    for i in 0..n {
        ll.column(i, &mut col);
        cdf.column(i, &mut f);
        let ratios: Vec<f64> = col.iter().map(|v| -v).collect();
        let sm = psis(&ratios, 1.0);
        let p: f64 = sm
            .log_weights
            .iter()
            .zip(&f)
            .map(|(lw, fv)| lw.exp() * fv)
            .sum();
        pit.push(p.clamp(0.0, 1.0));
        pareto_k.push(sm.k);
    }
    LooPit { pit, pareto_k }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn equal_likelihoods_give_the_plain_average() {
        // With ln p(y_i | θ_s) equal across draws the weights are 1/S, so PIT_i is the
        // mean of the CDF values (PSIS leaves equal ratios as they are).
        let ll = LogLik {
            draws: 4,
            obs: 1,
            values: vec![-1.0; 4],
        };
        let cdf = LogLik {
            draws: 4,
            obs: 1,
            values: vec![0.1, 0.2, 0.3, 0.6],
        };
        let r = loo_pit(&ll, &cdf);
        assert!((r.pit[0] - 0.3).abs() < 1e-12);
    }
}
