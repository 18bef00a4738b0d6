//! Data recorded at a resolution: the interval-censored likelihood and its data
//! augmentation.
//!
//! A value recorded as x stands for an exact value y in its cell (lo, hi). The observed-data
//! likelihood of a cell is Σ_k w_k [Φ((hi − μ_k)/σ_k) − Φ((lo − μ_k)/σ_k)]. Given the
//! parameters, each observation's component and exact value are drawn jointly:
//! P(z = k | cell) ∝ w_k P_k(cell), then y | z = k ~ N(μ_k, σ_k²) truncated to the cell (data
//! augmentation, Tanner & Wong 1987). The component parameters are then drawn from their
//! usual full conditionals with the statistics of the y's, so the sweep is a two-block Gibbs
//! sampler on (θ) and (z, y) that targets the posterior given the cells, and no latent value
//! needs storing between sweeps. For the collapsed sweep the y's and z's are handed on to
//! the collapsed scan and the split–merge moves, which then update z given y with θ
//! integrated out, as they do for exact data.
//!
//! Cells are visited in blocks of [`BLOCK`] with one random stream each, so the draws depend
//! on the seed and the cells alone: rows given one by one and as (value, count) sample alike.

use rand::Rng;

use super::allocate::reference::pick;
use super::allocate::{Allocation, SuffStats, BLOCK};
use super::rng::StreamKey;
use crate::data::Cells;
use crate::dist::{ln_std_normal_interval, truncated_std_normal};
use crate::model::State;

/// The exact values and components drawn for every observation, in cell order.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Latent {
    pub y: Vec<f64>,
    pub z: Vec<u32>,
}

/// Per-component ln w_k and σ_k of a state.
pub(super) struct Params<'a> {
    log_w: &'a [f64],
    mu: &'a [f64],
    sd: Vec<f64>,
}

impl<'a> Params<'a> {
    pub(super) fn of(state: &'a State) -> Self {
        Params {
            log_w: &state.log_w,
            mu: &state.mu,
            sd: state.var.iter().map(|v| v.sqrt()).collect(),
        }
    }

    /// p_k = ln w_k + ln P_k(lo, hi) − max, exponentiated; returns (max, Σ_k p_k).
    pub(super) fn cell_terms(&self, lo: f64, hi: f64, p: &mut [f64]) -> (f64, f64) {
        self.terms(lo, hi, p, None)
    }

    /// [`Params::cell_terms`] that also keeps each ln P_k(lo, hi) in `ln_p`.
    pub(super) fn cell_terms_keep(
        &self,
        lo: f64,
        hi: f64,
        p: &mut [f64],
        ln_p: &mut [f64],
    ) -> (f64, f64) {
        self.terms(lo, hi, p, Some(ln_p))
    }

    fn terms(&self, lo: f64, hi: f64, p: &mut [f64], mut keep: Option<&mut [f64]>) -> (f64, f64) {
        let mut m = f64::NEG_INFINITY;
        for (j, pj) in p.iter_mut().enumerate() {
            let (mu, sd) = (self.mu[j], self.sd[j]);
            let l = ln_std_normal_interval((lo - mu) / sd, (hi - mu) / sd);
            if let Some(k) = keep.as_deref_mut() {
                k[j] = l;
            }
            *pj = self.log_w[j] + l;
            m = m.max(*pj);
        }
        let mut s = 0.0;
        for pj in p.iter_mut() {
            *pj = (*pj - m).exp();
            s += *pj;
        }
        (m, s)
    }
}

/// Draws (z, y) for every observation given the state and returns the statistics of the
/// y's with the censored log-likelihood of the state; with `keep_latent`, also the draws.
pub fn allocate_censored(
    cells: &Cells,
    state: &State,
    key: &StreamKey,
    sweep: u64,
    keep_latent: bool,
) -> (Allocation, Option<Latent>) {
    let k = state.k();
    let par = Params::of(state);
    let mut stats = SuffStats::zeros(k);
    let mut block_stats = SuffStats::zeros(k);
    let mut latent = keep_latent.then(|| Latent {
        y: Vec::with_capacity(cells.total() as usize),
        z: Vec::with_capacity(cells.total() as usize),
    });
    let mut p = vec![0.0; k];
    let mut loglik = 0.0;
    for b in 0..cells.len().div_ceil(BLOCK) {
        let range = b * BLOCK..((b + 1) * BLOCK).min(cells.len());
        let mut rng = key.block_rng(sweep, b as u64);
        block_stats.clear();
        let mut block_ll = 0.0;
        for c in range {
            let (lo, hi, count) = (cells.lo[c], cells.hi[c], cells.count[c]);
            let (m, s) = par.cell_terms(lo, hi, &mut p);
            block_ll += count as f64 * (m + s.ln());
            for _ in 0..count {
                let j = pick(&p, rng.random::<f64>() * s);
                let (mu, sd) = (par.mu[j], par.sd[j]);
                let y = mu + sd * truncated_std_normal((lo - mu) / sd, (hi - mu) / sd, &mut rng);
                // Rounding in μ + σ t can step a hair outside a narrow cell; keep y inside.
                let y = y.clamp(lo, hi);
                block_stats.n[j] += 1;
                block_stats.sum[j] += y;
                block_stats.sumsq[j] += y * y;
                if let Some(l) = latent.as_mut() {
                    l.y.push(y);
                    l.z.push(j as u32);
                }
            }
        }
        stats.add(&block_stats);
        loglik += block_ll;
    }
    (Allocation { stats, loglik }, latent)
}

/// Σ_cells count · ln Σ_k w_k P_k(cell) at `state`, summed exactly as
/// [`allocate_censored`] sums it.
pub fn loglik_censored(cells: &Cells, state: &State) -> f64 {
    let par = Params::of(state);
    let mut p = vec![0.0; state.k()];
    let mut total = 0.0;
    for b in 0..cells.len().div_ceil(BLOCK) {
        let range = b * BLOCK..((b + 1) * BLOCK).min(cells.len());
        let mut block_ll = 0.0;
        for c in range {
            let (m, s) = par.cell_terms(cells.lo[c], cells.hi[c], &mut p);
            block_ll += cells.count[c] as f64 * (m + s.ln());
        }
        total += block_ll;
    }
    total
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{Continuous, Normal};

    fn two_component_state() -> State {
        State {
            log_w: vec![0.3f64.ln(), 0.7f64.ln()],
            log_v: vec![],
            log_1mv: vec![],
            mu: vec![-1.0, 0.8],
            var: vec![0.25, 1.44],
            concentration: 1.0,
            var_scale: 1.0,
        }
    }

    /// ∫_lo^hi Σ_k w_k φ((y − μ_k)/σ_k)/σ_k dy by composite Simpson's rule with statrs'
    /// normal density (the likelihood written out, integrated directly).
    fn integrated(state: &State, lo: f64, hi: f64) -> f64 {
        let f = |y: f64| {
            (0..state.k())
                .map(|j| {
                    let n = Normal::new(state.mu[j], state.var[j].sqrt()).unwrap();
                    state.log_w[j].exp() * n.pdf(y)
                })
                .sum::<f64>()
        };
        let m = 2000;
        let h = (hi - lo) / m as f64;
        let mut acc = f(lo) + f(hi);
        for i in 1..m {
            acc += f(lo + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
        }
        acc * h / 3.0
    }

    #[test]
    fn cell_likelihood_equals_the_density_integrated_over_the_cell() {
        let s = two_component_state();
        let cells = Cells {
            lo: vec![-2.5, -0.6, 0.9, 3.0],
            hi: vec![-2.0, 0.4, 0.95, 5.5],
            count: vec![1, 2, 1, 3],
        };
        let want: f64 = (0..cells.len())
            .map(|c| cells.count[c] as f64 * integrated(&s, cells.lo[c], cells.hi[c]).ln())
            .sum();
        let got = loglik_censored(&cells, &s);
        assert!((got - want).abs() < 1e-9, "{got} vs {want}");
        // The allocation reports the same figure, summed the same way.
        let (a, _) = allocate_censored(&cells, &s, &StreamKey::new(1, 1), 1, false);
        assert_eq!(a.loglik, got);
    }

    #[test]
    fn cells_with_infinite_ends_have_the_tail_probabilities() {
        // A cell censored at a bound of the support is a half-line on the fitted scale:
        // its likelihood is the mixture CDF at its finite end (−∞ below) or one minus it
        // (+∞ above), with statrs' normal CDF as the reference.
        use statrs::distribution::ContinuousCDF;
        let s = two_component_state();
        let cdf = |y: f64| {
            (0..s.k())
                .map(|j| {
                    let n = Normal::new(s.mu[j], s.var[j].sqrt()).unwrap();
                    s.log_w[j].exp() * n.cdf(y)
                })
                .sum::<f64>()
        };
        let cells = Cells {
            lo: vec![f64::NEG_INFINITY, 1.3],
            hi: vec![-2.2, f64::INFINITY],
            count: vec![3, 2],
        };
        let want = 3.0 * cdf(-2.2).ln() + 2.0 * (1.0 - cdf(1.3)).ln();
        let got = loglik_censored(&cells, &s);
        assert!((got - want).abs() < 1e-10, "{got} vs {want}");
        // Far out, where 1 − F rounds badly, the value stays finite (the tail is taken in
        // log space).
        let far = Cells {
            lo: vec![40.0],
            hi: vec![f64::INFINITY],
            count: vec![1],
        };
        assert!(loglik_censored(&far, &s).is_finite());
        // The latent values drawn stay on their half-lines.
        let (_, l) = allocate_censored(&cells, &s, &StreamKey::new(7, 1), 2, true);
        let l = l.unwrap();
        assert!(l.y[..3].iter().all(|&y| y <= -2.2) && l.y[3..].iter().all(|&y| y >= 1.3));
    }

    #[test]
    fn latent_values_stay_in_their_cells_and_make_the_statistics() {
        let s = two_component_state();
        let cells = Cells {
            lo: vec![f64::NEG_INFINITY, -0.05, 2.95],
            hi: vec![-3.0, 0.05, 3.05],
            count: vec![2, 5, 3],
        };
        let (a, l) = allocate_censored(&cells, &s, &StreamKey::new(4, 2), 9, true);
        let l = l.unwrap();
        assert_eq!(l.y.len(), 10);
        let mut i = 0;
        for c in 0..cells.len() {
            for _ in 0..cells.count[c] {
                assert!(cells.lo[c] <= l.y[i] && l.y[i] <= cells.hi[c]);
                i += 1;
            }
        }
        let mut st = SuffStats::zeros(2);
        for (&y, &z) in l.y.iter().zip(&l.z) {
            st.n[z as usize] += 1;
            st.sum[z as usize] += y;
            st.sumsq[z as usize] += y * y;
        }
        assert_eq!(st.n, a.stats.n);
        for j in 0..2 {
            assert!((st.sum[j] - a.stats.sum[j]).abs() < 1e-12);
            assert!((st.sumsq[j] - a.stats.sumsq[j]).abs() < 1e-12);
        }
    }

    #[test]
    fn component_shares_follow_the_cell_probabilities() {
        // P(z = k | cell) ∝ w_k P_k(cell): for a cell on the second component's side the
        // share drawn over many repeats matches the ratio worked out from the integrals.
        let s = two_component_state();
        let cells = Cells {
            lo: vec![0.0],
            hi: vec![0.5],
            count: vec![20_000],
        };
        let w1 = {
            let mut one = s.clone();
            one.log_w = vec![0.3f64.ln(), f64::NEG_INFINITY];
            integrated(&one, 0.0, 0.5)
        };
        let want = w1 / integrated(&s, 0.0, 0.5);
        let (a, _) = allocate_censored(&cells, &s, &StreamKey::new(2, 1), 3, false);
        let got = a.stats.n[0] as f64 / 20_000.0;
        // Binomial sd √(p(1 − p)/n) ≈ 0.0025; four of them.
        assert!((got - want).abs() < 0.01, "{got} vs {want}");
    }
}
