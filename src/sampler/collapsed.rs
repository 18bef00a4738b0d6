//! The collapsed allocation scan: every z_i in turn is redrawn from
//! p(z_i | z_−i, x, hyperparameters), with the weights and the component parameters
//! integrated out (Neal 2000, "Markov chain sampling methods for Dirichlet process mixture
//! models", JCGS 9:249–265, algorithm 3, here for a finite or truncated prior).
//!
//! The blocked sweep draws every z_i given the parameters and then the parameters given
//! every z_i; when two components overlap, that pair of blocks moves the split of mass
//! between them slowly. Integrating the parameters out lets one observation move while the
//! others hold their places, which is what the density at points between overlapping
//! components needs (docs/model.md, "Collapsed allocation scan").
//!
//! The scan conditions on what it does not integrate out: the variance scale b and the
//! concentration (both kernels), and the common σ² (location kernel). It starts from
//! allocations drawn given the current parameters, so after it the parameters are stale
//! and the sweep redraws all of them (weights, means, variances) given the new
//! allocations; that sequence leaves the posterior invariant.
//!
//! Predictive of one more observation in component k with n_k members, sum S1, sum of
//! squares S2 (the component's own posterior, data in standard units):
//! - location kernel, μ_k ~ N(m, s²), common σ²: v = 1/(1/s² + n_k/σ²),
//!   c = v (m/s² + S1/σ²); x ~ N(c, σ² + v);
//! - location-scale kernel, normal-inverse-gamma (κ, m, a, b): κ_n = κ + n_k,
//!   m_n = (κ m + S1)/κ_n, a_n = a + n_k/2, b_n = b + SS/2 + κ n_k (x̄ − m)²/(2κ_n);
//!   x ~ Student-t with 2a_n degrees of freedom, location m_n, scale² b_n(κ_n + 1)/(a_n κ_n)
//!   (Murphy 2007, "Conjugate Bayesian analysis of the Gaussian distribution", §7.6; the
//!   section number from memory; the density is checked against statrs' Student-t below).
//!
//! Prior weight of component k given the other allocations n (i left out):
//! - Dirichlet(δ): n_k + δ;
//! - truncated stick-breaking, v_j ~ Beta(1, α), with G_k = Σ_{j ≥ k} n_j:
//!   E[w_k | n] = (1 + n_k)/(1 + α + G_k) Π_{j<k} (α + G_{j+1})/(1 + α + G_j) for k < K,
//!   and Π_{j<K} (α + G_{j+1})/(1 + α + G_j) for k = K (v_K = 1).

use rand::Rng;
use statrs::function::gamma::ln_gamma;

use super::allocate::fastexp::exp_fast;
use super::allocate::fastln::{ln_fast_f64, ln_positive};
use super::allocate::reference::pick;
use super::allocate::SuffStats;
use crate::config::{Kernel, WeightsKind};
use crate::dist::LN_SQRT_2PI;
use crate::model::{Prior, State};

/// Per-component terms of the posterior predictive: ln p(x) = c − g(h (x − loc)²), with
/// g(q) = q (normal) or g(q) = power · ln(1 + q) (Student-t).
struct Predictive {
    half: HalfSteps,
    /// Fault injection for the exact tests (see [`scan`]).
    plug_in: bool,
    c: Vec<f64>,
    loc: Vec<f64>,
    h: Vec<f64>,
    power: Vec<f64>,
}

impl Predictive {
    fn new(k: usize, prior: &Prior, n_obs: usize) -> Self {
        Predictive {
            half: HalfSteps::new(prior.var_shape, n_obs),
            plug_in: false,
            c: vec![0.0; k],
            loc: vec![0.0; k],
            h: vec![0.0; k],
            power: vec![0.0; k],
        }
    }

    fn save(&self, j: usize) -> [f64; 4] {
        [self.c[j], self.loc[j], self.h[j], self.power[j]]
    }

    fn restore(&mut self, j: usize, v: [f64; 4]) {
        [self.c[j], self.loc[j], self.h[j], self.power[j]] = v;
    }

    /// Recomputes component `j` from its statistics.
    fn refresh(&mut self, j: usize, stats: &SuffStats, prior: &Prior, state: &State) {
        let t = predictive_terms(
            prior,
            state,
            &self.half,
            (stats.n[j], stats.sum[j], stats.sumsq[j]),
            self.plug_in,
        );
        self.restore(j, t);
    }

    /// out_j = lw_j + ln p_j(x) for every component, in loops the compiler vectorises.
    #[inline]
    fn log_terms(&self, kernel: Kernel, x: f64, lw: &[f64], out: &mut [f64]) {
        let parts = self.c.iter().zip(&self.loc).zip(&self.h).zip(lw);
        match kernel {
            Kernel::Location => {
                for (o, (((&c, &loc), &h), &w)) in out.iter_mut().zip(parts) {
                    let d = x - loc;
                    *o = w + (c - h * d * d);
                }
            }
            Kernel::LocationScale => {
                for (o, ((((&c, &loc), &h), &w), &pw)) in out.iter_mut().zip(parts.zip(&self.power))
                {
                    let d = x - loc;
                    *o = w + (c - pw * ln_fast_f64(1.0 + h * d * d));
                }
            }
        }
    }

    #[cfg(test)]
    fn log_pdf(&self, kernel: Kernel, j: usize, x: f64) -> f64 {
        let d = x - self.loc[j];
        let q = self.h[j] * d * d;
        match kernel {
            Kernel::Location => self.c[j] - q,
            Kernel::LocationScale => self.c[j] - self.power[j] * q.ln_1p(),
        }
    }
}

/// D[n] = ln Γ(a + (n + 1)/2) − ln Γ(a + n/2) for n = 0..=N, by the recurrence
/// D[n + 1] = ln(a + n/2) − D[n] (from Γ(y + 1) = y Γ(y)) started at D[0] from statrs'
/// ln Γ: N logarithms, built once per scan. The recurrence is well conditioned
/// (D[n] ≈ ½ ln(a + n/2)); tested against direct ln Γ differences below.
pub(crate) struct HalfSteps(pub(crate) Vec<f64>);

impl HalfSteps {
    pub(crate) fn new(a: f64, n: usize) -> Self {
        let mut d = Vec::with_capacity(n + 1);
        d.push(ln_gamma(a + 0.5) - ln_gamma(a));
        for m in 0..n {
            d.push((a + 0.5 * m as f64).ln() - d[m]);
        }
        HalfSteps(d)
    }
}

/// Logarithms the stick-breaking prior weights need during one scan (α fixed):
/// ln(1 + g), ln(1 + α + g) and ln(α + g) for g = 0..=N.
pub(crate) struct StickLogs {
    ln1: Vec<f64>,
    ln1a: Vec<f64>,
    lna: Vec<f64>,
}

impl StickLogs {
    pub(crate) fn new(alpha: f64, n: usize) -> Self {
        let g = |f: &dyn Fn(f64) -> f64| (0..=n).map(|v| f(v as f64).ln()).collect();
        StickLogs {
            ln1: g(&|v| 1.0 + v),
            ln1a: g(&|v| 1.0 + alpha + v),
            lna: g(&|v| alpha + v),
        }
    }
}

/// The predictive terms [c, loc, h, power] (see [`Predictive`]) of a component holding
/// `(n, sum, sum of squares)`; `plug_in` is the joint-distribution test's fault.
/// Logarithms by [`ln_positive`] and `ln_fast_f64` (tested against std's in `allocate::fastln`).
pub(crate) fn predictive_terms(
    prior: &Prior,
    state: &State,
    half: &HalfSteps,
    (n, sum, sumsq): (u64, f64, f64),
    plug_in: bool,
) -> [f64; 4] {
    let nk = n as f64;
    match prior.kernel {
        Kernel::Location => {
            let sigma2 = state.var[0];
            let prior_prec = 1.0 / (prior.centre_sd * prior.centre_sd);
            let prec = prior_prec + nk / sigma2;
            let v = 1.0 / prec;
            let pv = if plug_in { sigma2 } else { sigma2 + v };
            let loc = v * (prior.centre * prior_prec + sum / sigma2);
            [-0.5 * ln_positive(pv) - LN_SQRT_2PI, loc, 0.5 / pv, 0.0]
        }
        Kernel::LocationScale => {
            let (m, kappa, a) = (prior.centre, prior.centre_shrink, prior.var_shape);
            let (xbar, ss) = if n > 0 {
                let xbar = sum / nk;
                (xbar, (sumsq - nk * xbar * xbar).max(0.0))
            } else {
                (0.0, 0.0)
            };
            let kn = kappa + nk;
            let an = a + 0.5 * nk;
            let bn = state.var_scale + 0.5 * ss + kappa * nk * (xbar - m) * (xbar - m) / (2.0 * kn);
            // ν s² = 2 a_n · b_n (κ_n + 1)/(a_n κ_n) = 2 b_n (κ_n + 1)/κ_n.
            let nu_s2 = if plug_in {
                2.0 * bn
            } else {
                2.0 * bn * (kn + 1.0) / kn
            };
            let c = half.0[n as usize] - 0.5 * ln_positive(nu_s2) - LN_SQRT_2PI
                + 0.5 * std::f64::consts::LN_2;
            [c, (kappa * m + nk * xbar) / kn, 1.0 / nu_s2, an + 0.5]
        }
    }
}

/// ln of the marginal likelihood of a component's points from their `(n, sum, sum of
/// squares)`, in closed form: location-scale, Γ(a_n)/Γ(a) b^a/b_n^{a_n} (κ/κ_n)^{1/2}
/// (2π)^{−n/2} (Murphy 2007, equation number from memory; checked against the chain rule
/// of predictives below); location (σ² given), the points jointly normal with
/// covariance σ² I + s² 11ᵀ (Sherman–Morrison and the determinant lemma).
pub(crate) fn log_marginal(prior: &Prior, state: &State, (n, sum, sumsq): (u64, f64, f64)) -> f64 {
    if n == 0 {
        return 0.0;
    }
    let nk = n as f64;
    let ln_2pi = (2.0 * std::f64::consts::PI).ln();
    match prior.kernel {
        Kernel::Location => {
            let (s2, t2, m) = (
                state.var[0],
                prior.centre_sd * prior.centre_sd,
                prior.centre,
            );
            let sd = sum - nk * m;
            let sdd = (sumsq - 2.0 * m * sum + nk * m * m).max(0.0);
            let quad = (sdd - t2 * sd * sd / (s2 + nk * t2)) / s2;
            let logdet = (nk - 1.0) * s2.ln() + (s2 + nk * t2).ln();
            -0.5 * (nk * ln_2pi + logdet + quad)
        }
        Kernel::LocationScale => {
            let (m, kappa, a, b) = (
                prior.centre,
                prior.centre_shrink,
                prior.var_shape,
                state.var_scale,
            );
            let xbar = sum / nk;
            let ss = (sumsq - nk * xbar * xbar).max(0.0);
            let kn = kappa + nk;
            let an = a + 0.5 * nk;
            let bn = b + 0.5 * ss + kappa * nk * (xbar - m) * (xbar - m) / (2.0 * kn);
            ln_gamma(an) - ln_gamma(a) + a * b.ln() - an * bn.ln() + 0.5 * (kappa / kn).ln()
                - 0.5 * nk * ln_2pi
        }
    }
}

/// ln p(x) from predictive terms [c, loc, h, power].
#[inline]
pub(crate) fn log_predictive(kernel: Kernel, t: &[f64; 4], x: f64) -> f64 {
    let d = x - t[1];
    let q = t[2] * d * d;
    match kernel {
        Kernel::Location => t[0] - q,
        Kernel::LocationScale => t[0] - t[3] * ln_fast_f64(1.0 + q),
    }
}

/// ln of the prior weight of each component given the counts `n` (the observation being
/// moved left out), written into `out`.
pub(crate) fn log_prior_weights(
    weights: WeightsKind,
    concentration: f64,
    n: &[u64],
    logs: Option<&StickLogs>,
    out: &mut [f64],
) {
    match (weights, logs) {
        (WeightsKind::StickBreaking, Some(l)) => {
            let k = n.len();
            let mut g = n.iter().sum::<u64>() as usize;
            let mut acc = 0.0;
            for j in 0..k {
                if j + 1 == k {
                    out[j] = acc;
                } else {
                    let denom = l.ln1a[g];
                    out[j] = acc + l.ln1[n[j] as usize] - denom;
                    g -= n[j] as usize;
                    acc += l.lna[g] - denom;
                }
            }
        }
        _ => {
            for (o, &c) in out.iter_mut().zip(n) {
                *o = (c as f64 + concentration).ln();
            }
        }
    }
}

/// Replaces each t_j by exp(t_j − max t) and returns their sum (at least 1).
#[inline]
fn exp_relative_to_max(t: &mut [f64]) -> f64 {
    let m = t.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    // Two loops: the first has no reduction, so it vectorises.
    for v in t.iter_mut() {
        *v = exp_fast(*v - m);
    }
    t.iter().sum()
}

/// Counts, sums and sums of squares of `x` under the allocations `z`, summed in
/// observation order.
pub fn stats_from_labels(x: &[f64], z: &[u32], k: usize) -> SuffStats {
    let mut s = SuffStats::zeros(k);
    for (&xi, &zi) in x.iter().zip(z) {
        let j = zi as usize;
        s.n[j] += 1;
        s.sum[j] += xi;
        s.sumsq[j] += xi * xi;
    }
    s
}

/// One collapsed scan over every observation in order, updating the allocations `z` and
/// returning their statistics (recomputed from `z`, so rounding from the running
/// updates does not carry over). `state` supplies b, the concentration and (location
/// kernel) σ²; its weights and component parameters are not read.
pub fn collapsed_scan<R: Rng + ?Sized>(
    x: &[f64],
    z: &mut [u32],
    prior: &Prior,
    state: &State,
    rng: &mut R,
) -> SuffStats {
    scan(x, z, prior, state, rng, false)
}

/// [`collapsed_scan`], with a deliberate fault when `fault_plug_in` is set, for the
/// exact tests that must reject it: the predictive leaves out the uncertainty of the
/// component mean (σ² instead of σ² + v; b_n/a_n instead of b_n (κ_n + 1)/(a_n κ_n)).
#[doc(hidden)]
pub fn scan<R: Rng + ?Sized>(
    x: &[f64],
    z: &mut [u32],
    prior: &Prior,
    state: &State,
    rng: &mut R,
    fault_plug_in: bool,
) -> SuffStats {
    let k = state.k();
    let mut stats = stats_from_labels(x, z, k);
    let mut pred = Predictive::new(k, prior, x.len());
    pred.plug_in = fault_plug_in;
    for j in 0..k {
        pred.refresh(j, &stats, prior, state);
    }
    let mut lw = vec![0.0; k];
    let mut p = vec![0.0; k];
    let dirichlet = prior.weights == WeightsKind::Dirichlet;
    let logs = (!dirichlet).then(|| StickLogs::new(state.concentration, x.len()));
    if dirichlet {
        log_prior_weights(prior.weights, state.concentration, &stats.n, None, &mut lw);
    }
    for (i, &xi) in x.iter().enumerate() {
        let old = z[i] as usize;
        let saved = pred.save(old);
        stats.n[old] -= 1;
        if stats.n[old] == 0 {
            stats.sum[old] = 0.0;
            stats.sumsq[old] = 0.0;
        } else {
            stats.sum[old] -= xi;
            stats.sumsq[old] -= xi * xi;
        }
        pred.refresh(old, &stats, prior, state);
        if dirichlet {
            lw[old] = ln_positive(stats.n[old] as f64 + state.concentration);
        } else {
            log_prior_weights(
                prior.weights,
                state.concentration,
                &stats.n,
                logs.as_ref(),
                &mut lw,
            );
        }
        pred.log_terms(prior.kernel, xi, &lw, &mut p);
        let s = exp_relative_to_max(&mut p);
        let new = pick(&p, rng.random::<f64>() * s);
        z[i] = new as u32;
        stats.n[new] += 1;
        stats.sum[new] += xi;
        stats.sumsq[new] += xi * xi;
        if new == old {
            pred.restore(old, saved);
        } else {
            pred.refresh(new, &stats, prior, state);
        }
        if dirichlet {
            lw[new] = ln_positive(stats.n[new] as f64 + state.concentration);
        }
    }
    stats_from_labels(x, z, k)
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::config::{Kernel, WeightsKind};
    use crate::model::{Concentration, VarScale};

    pub(crate) fn prior(kernel: Kernel, weights: WeightsKind) -> Prior {
        Prior {
            kernel,
            weights,
            components: 4,
            centre: 0.3,
            centre_sd: 1.7,
            centre_shrink: 0.4,
            var_shape: 2.5,
            var_scale: VarScale::Fixed(0.8),
            concentration: Concentration::Fixed(0.7),
            label_moves: false,
            collapsed: true,
        }
    }

    pub(crate) fn state(k: usize) -> State {
        State {
            log_w: vec![-(k as f64).ln(); k],
            log_v: vec![],
            log_1mv: vec![],
            mu: vec![0.0; k],
            var: vec![1.3; k],
            concentration: 0.7,
            var_scale: 0.8,
        }
    }

    /// Student-t log density from statrs (location-scale form), the reference for the
    /// hand-written predictive.
    #[test]
    fn student_t_predictive_matches_statrs() {
        use statrs::distribution::{Continuous, StudentsT};
        let p = prior(Kernel::LocationScale, WeightsKind::Dirichlet);
        let s = state(4);
        let xs = [0.2, -1.1, 0.9, 2.5, 0.4];
        let stats = stats_from_labels(&xs, &[0, 0, 1, 1, 1], 4);
        let mut pred = Predictive::new(4, &p, 10);
        for j in 0..4 {
            pred.refresh(j, &stats, &p, &s);
        }
        for j in 0..3 {
            let nk = stats.n[j] as f64;
            let (xbar, ss) = if nk > 0.0 {
                let xb = stats.sum[j] / nk;
                (xb, stats.sumsq[j] - nk * xb * xb)
            } else {
                (0.0, 0.0)
            };
            let kn = p.centre_shrink + nk;
            let an = p.var_shape + nk / 2.0;
            let bn = 0.8 + ss / 2.0 + p.centre_shrink * nk * (xbar - p.centre).powi(2) / (2.0 * kn);
            let mn = (p.centre_shrink * p.centre + nk * xbar) / kn;
            let scale = (bn * (kn + 1.0) / (an * kn)).sqrt();
            let t = StudentsT::new(mn, scale, 2.0 * an).unwrap();
            for x in [-3.0, -0.5, 0.0, 1.2, 4.0] {
                let got = pred.log_pdf(Kernel::LocationScale, j, x);
                assert!(
                    (got - t.ln_pdf(x)).abs() < 1e-12,
                    "{j} {x}: {got} vs {}",
                    t.ln_pdf(x)
                );
            }
        }
    }

    /// The vectorised terms used by the scan equal the per-component log densities
    /// checked against statrs above, to 1e-13 absolute (fast ln and exp, see their tests).
    #[test]
    fn vectorised_terms_match_per_component_densities() {
        for kernel in [Kernel::Location, Kernel::LocationScale] {
            let p = prior(kernel, WeightsKind::Dirichlet);
            let s = state(4);
            let xs = [0.2, -1.1, 0.9, 2.5, 0.4, 30.0];
            let stats = stats_from_labels(&xs, &[0, 0, 1, 1, 1, 3], 4);
            let mut pred = Predictive::new(4, &p, 10);
            for j in 0..4 {
                pred.refresh(j, &stats, &p, &s);
            }
            let lw = [-0.1, -2.0, -0.5, -7.0];
            let mut out = [0.0; 4];
            for x in [-40.0, -3.0, 0.0, 1.2, 4.0, 25.0] {
                pred.log_terms(kernel, x, &lw, &mut out);
                for j in 0..4 {
                    let want = lw[j] + pred.log_pdf(kernel, j, x);
                    assert!((out[j] - want).abs() < 1e-13 * want.abs().max(1.0));
                }
            }
        }
    }

    /// The closed-form marginal likelihood equals the chain rule of predictives (each
    /// point's predictive given the ones before it), for both kernels.
    #[test]
    fn marginal_likelihood_is_the_product_of_predictives() {
        for kernel in [Kernel::Location, Kernel::LocationScale] {
            let p = prior(kernel, WeightsKind::Dirichlet);
            let s = state(4);
            let half = HalfSteps::new(p.var_shape, 10);
            let xs = [0.2, -1.1, 0.9, 2.5, 0.4];
            let mut st = (0u64, 0.0, 0.0);
            let mut chain = 0.0;
            for &x in &xs {
                let t = predictive_terms(&p, &s, &half, st, false);
                chain += log_predictive(kernel, &t, x);
                st = (st.0 + 1, st.1 + x, st.2 + x * x);
            }
            let closed = log_marginal(&p, &s, st);
            assert!(
                (chain - closed).abs() < 1e-12,
                "{kernel:?}: {chain} vs {closed}"
            );
        }
    }

    #[test]
    fn half_step_table_matches_direct_ln_gamma() {
        for a in [0.3, 2.0, 7.5] {
            let table = HalfSteps::new(a, 20001);
            for n in [0usize, 1, 2, 3, 10, 101, 5000, 20001] {
                let direct = ln_gamma(a + 0.5 * (n + 1) as f64) - ln_gamma(a + 0.5 * n as f64);
                let got = table.0[n];
                assert!(
                    (got - direct).abs() < 1e-10,
                    "a={a} n={n}: {got} vs {direct}"
                );
            }
        }
    }

    #[test]
    fn normal_predictive_matches_statrs() {
        use statrs::distribution::{Continuous, Normal};
        let p = prior(Kernel::Location, WeightsKind::Dirichlet);
        let s = state(4);
        let xs = [0.2, -1.1, 0.9];
        let stats = stats_from_labels(&xs, &[2, 2, 0], 4);
        let mut pred = Predictive::new(4, &p, 10);
        for j in 0..4 {
            pred.refresh(j, &stats, &p, &s);
        }
        for j in [0, 1, 2] {
            let nk = stats.n[j] as f64;
            let prec = 1.0 / (1.7 * 1.7) + nk / 1.3;
            let mean = (0.3 / (1.7 * 1.7) + stats.sum[j] / 1.3) / prec;
            let d = Normal::new(mean, (1.3 + 1.0 / prec).sqrt()).unwrap();
            for x in [-2.0, 0.1, 3.0] {
                let got = pred.log_pdf(Kernel::Location, j, x);
                assert!((got - d.ln_pdf(x)).abs() < 1e-12);
            }
        }
    }

    /// E[w_k | n] for truncated stick-breaking, from the product of Beta means written
    /// out directly (v_j | n ~ Beta(1 + n_j, α + G_{j+1}); Ishwaran & James 2001).
    #[test]
    fn stick_breaking_prior_weights_are_posterior_mean_weights() {
        let n = [3u64, 0, 5, 1, 2];
        let alpha = 1.4;
        let mut out = [0.0; 5];
        let logs = StickLogs::new(alpha, 11);
        log_prior_weights(WeightsKind::StickBreaking, alpha, &n, Some(&logs), &mut out);
        let mut expected = [0.0; 5];
        let mut rest = 1.0;
        for j in 0..5 {
            let tail: u64 = n[j + 1..].iter().sum();
            if j == 4 {
                expected[j] = rest;
            } else {
                let a = 1.0 + n[j] as f64;
                let b = alpha + tail as f64;
                expected[j] = rest * a / (a + b);
                rest *= b / (a + b);
            }
        }
        let total: f64 = out.iter().map(|v| v.exp()).sum();
        assert!((total - 1.0).abs() < 1e-12);
        for j in 0..5 {
            assert!((out[j].exp() - expected[j]).abs() < 1e-12);
        }
    }
}
