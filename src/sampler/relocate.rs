//! Relocation moves: one component of a pair is proposed afresh, where the other
//! components already put mass or from its prior, with a new share of the pair's total
//! weight; accepted or not by Metropolis–Hastings on the posterior with every allocation
//! summed out (`pair_target`).
//!
//! The re-split moves (`resplit`) let a pair re-divide what it holds and so let a
//! component's weight fall to nothing, but a component with no weight comes back only
//! when the sweep's draw from its prior happens to land where the data need it: at large
//! n the tails' small components are born that slowly. This move is the birth to go with
//! that death, and a jump for any component the data do not need where it is.
//!
//! For the chosen component e and its partner o (a pair drawn uniformly at random), with
//! the pair's total weight W, the other components and every hyperparameter held, the
//! state moved is x = (t, μ_e, η_e): t = ln(w_e/w_o), the logit of e's share s of W, and
//! η_e = ln σ_e² (location kernel: x = (t, μ_e)). The proposal is independent of x:
//!
//! - t ~ Cauchy(−3, 2), heavy-tailed so that a share of 1e-40 can be left and reached;
//! - with probability ε = 0.2, (μ_e, σ_e²) from the prior; otherwise a source component
//!   l ≠ e with probability ∝ its weight (o counted with W), μ_e ~ N(μ_l, σ_l²) and
//!   η_e ~ N(ln σ_l² − 1, 1): a narrower component inside one already there.
//!
//! Its density q is a sum over the sources and the prior, O(K). The target in x is
//! ln p(w) + ln p(μ_e, η_e) + ln L + ln(s(1 − s)), the prior's density taken in (μ, η)
//! (σ² times that in (μ, σ²)) and ln(s(1 − s)) the Jacobian of w_e = W s, and a proposal x′ is accepted with probability
//! min(1, π(x′) q(x) / (π(x) q(x′))). ε > 0 keeps q(x) positive wherever the prior is, so
//! the chain can leave a component drawn from the prior.

use rand::Rng;
use statrs::function::gamma::ln_gamma;

use super::label_moves::distinct_pair;
use super::mh::accept;
use super::pair_coords::{ln_shares, Component};
use super::pair_target::{ln_lik_with, ln_weight_prior, store, Kern, PairData, Terms};
use crate::config::Kernel;
use crate::dist::{inv_gamma, log_add_exp, normal, LN_SQRT_2PI};
use crate::model::{Prior, State};

/// Probability that a proposal comes from the prior.
const PRIOR_SHARE: f64 = 0.2;
/// Location and scale of the Cauchy proposal of the share's logit.
const SHARE_LOC: f64 = -3.0;
const SHARE_SCALE: f64 = 2.0;
/// A proposal from a source component: η ~ N(ln σ_l² + NARROWING, NARROW_SD²).
const NARROWING: f64 = -1.0;
const NARROW_SD: f64 = 1.0;

/// Which ratio the moves use. The sampler uses [`RelocateTarget::Exact`]; the
/// joint-distribution test swaps in the ratio without the proposal's densities to show
/// that it would notice.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum RelocateTarget {
    #[default]
    Exact,
    /// Leaves out q(x) / q(x′): wrong, for tests only.
    WithoutProposal,
}

/// Proposals made and accepted in one call.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct RelocateTally {
    pub proposed: u32,
    pub accepted: u32,
}

/// ln of the normal density.
fn ln_normal(x: f64, mean: f64, sd: f64) -> f64 {
    let z = (x - mean) / sd;
    -0.5 * z * z - sd.ln() - LN_SQRT_2PI
}

/// ln of the Cauchy(SHARE_LOC, SHARE_SCALE) density.
fn ln_share_density(t: f64) -> f64 {
    let z = (t - SHARE_LOC) / SHARE_SCALE;
    -(std::f64::consts::PI * SHARE_SCALE).ln() - z.powi(2).ln_1p()
}

/// A proposal's point: the share's logit, μ and η = ln σ² (the common ln σ² for the
/// location kernel, not moved).
#[derive(Debug, Clone, Copy)]
struct Point {
    t: f64,
    mu: f64,
    eta: f64,
}

/// What the proposal reads of the state, fixed during a move.
struct Proposal<'a> {
    prior: &'a Prior,
    var_scale: f64,
    /// (ln weight, μ, σ²) of each source l ≠ e, weights normalised, o carrying W.
    sources: Vec<(f64, f64, f64)>,
}

impl Proposal<'_> {
    fn location_scale(&self) -> bool {
        self.prior.kernel == Kernel::LocationScale
    }

    /// ln p(θ) of the component's prior, normalised, in (μ, η) (location kernel: μ).
    fn ln_prior(&self, p: Point) -> f64 {
        let pr = self.prior;
        if self.location_scale() {
            let (a, b, var) = (pr.var_shape, self.var_scale, p.eta.exp());
            // Inverse-gamma(a, b) density of σ², times σ² for η, then N(m, σ²/κ).
            a * b.ln() - ln_gamma(a) - a * p.eta - b / var
                + ln_normal(p.mu, pr.centre, (var / pr.centre_shrink).sqrt())
        } else {
            ln_normal(p.mu, pr.centre, pr.centre_sd)
        }
    }

    fn draw<R: Rng + ?Sized>(&self, eta_now: f64, rng: &mut R) -> Point {
        let u: f64 = rng.random();
        let t = SHARE_LOC + SHARE_SCALE * (std::f64::consts::PI * (u - 0.5)).tan();
        let pr = self.prior;
        let (mu, eta) = if rng.random::<f64>() < PRIOR_SHARE {
            if self.location_scale() {
                let var = inv_gamma(pr.var_shape, self.var_scale, rng);
                (
                    normal(pr.centre, (var / pr.centre_shrink).sqrt(), rng),
                    var.ln(),
                )
            } else {
                (normal(pr.centre, pr.centre_sd, rng), eta_now)
            }
        } else {
            let mut u: f64 = rng.random();
            let mut pick = self.sources[self.sources.len() - 1];
            for &s in &self.sources {
                let w = s.0.exp();
                if u < w {
                    pick = s;
                    break;
                }
                u -= w;
            }
            let (_, mu_l, var_l) = pick;
            let mu = normal(mu_l, var_l.sqrt(), rng);
            let eta = if self.location_scale() {
                normal(var_l.ln() + NARROWING, NARROW_SD, rng)
            } else {
                eta_now
            };
            (mu, eta)
        };
        Point { t, mu, eta }
    }

    /// ln q(x).
    fn ln_density(&self, p: Point) -> f64 {
        let from_sources = self
            .sources
            .iter()
            .map(|&(lw, mu_l, var_l)| {
                let eta = if self.location_scale() {
                    ln_normal(p.eta, var_l.ln() + NARROWING, NARROW_SD)
                } else {
                    0.0
                };
                lw + ln_normal(p.mu, mu_l, var_l.sqrt()) + eta
            })
            .fold(f64::NEG_INFINITY, log_add_exp);
        ln_share_density(p.t)
            + log_add_exp(
                PRIOR_SHARE.ln() + self.ln_prior(p),
                (1.0 - PRIOR_SHARE).ln() + from_sources,
            )
    }
}

/// Runs `moves` relocation proposals on `state`, each on a pair drawn uniformly at
/// random; `terms` holds every component's terms on entry and on return.
pub(crate) fn relocate<R: Rng + ?Sized>(
    data: &PairData<'_>,
    terms: &mut Terms,
    prior: &Prior,
    state: &mut State,
    moves: usize,
    target: RelocateTarget,
    rng: &mut R,
) -> RelocateTally {
    let k = state.k();
    let mut tally = RelocateTally::default();
    if k < 2 || data.len() == 0 {
        return tally;
    }
    let mut rest = vec![0.0; data.len()];
    for _ in 0..moves {
        let (e, o) = distinct_pair(k, rng);
        tally.proposed += 1;
        terms.rest(state, e, o, &mut rest);
        if one_move(data, terms, prior, state, (e, o), &rest, target, rng) {
            tally.accepted += 1;
            terms.update(data, state, e);
        }
    }
    tally
}

#[allow(clippy::too_many_arguments)]
fn one_move<R: Rng + ?Sized>(
    data: &PairData<'_>,
    terms: &Terms,
    prior: &Prior,
    state: &mut State,
    (e, o): (usize, usize),
    rest: &[f64],
    target: RelocateTarget,
    rng: &mut R,
) -> bool {
    let ls = prior.kernel == Kernel::LocationScale;
    let log_total = log_add_exp(state.log_w[e], state.log_w[o]);
    let sources: Vec<(f64, f64, f64)> = {
        let raw: Vec<(f64, f64, f64)> = (0..state.k())
            .filter(|&l| l != e)
            .map(|l| {
                let lw = if l == o { log_total } else { state.log_w[l] };
                (lw, state.mu[l], state.var[l])
            })
            .collect();
        let norm = raw.iter().map(|r| r.0).fold(f64::NEG_INFINITY, log_add_exp);
        raw.into_iter()
            .map(|(lw, m, v)| (lw - norm, m, v))
            .collect()
    };
    let q = Proposal {
        prior,
        var_scale: state.var_scale,
        sources,
    };
    let now = Point {
        t: state.log_w[e] - state.log_w[o],
        mu: state.mu[e],
        eta: state.var[e].ln(),
    };
    let proposed = q.draw(now.eta, rng);
    if !(proposed.mu.is_finite() && proposed.eta.is_finite() && proposed.t.is_finite()) {
        return false;
    }
    // ln π(x) up to a constant; `lnf_e` gives e's terms at the point.
    let ln_target = |p: Point, lnf_e: &dyn Fn(usize) -> f64| -> f64 {
        let (ls_e, ls_o) = ln_shares(p.t);
        let (lw_e, lw_o) = (log_total + ls_e, log_total + ls_o);
        let lik = ln_lik_with(data, rest, |i| lw_e + lnf_e(i), |i| lw_o + terms.get(i, o));
        // q.ln_prior is already the density in (μ, η); ln(s(1 − s)) is the share's.
        ln_weight_prior(prior, state, e, o, lw_e, lw_o) + q.ln_prior(p) + lik + ls_e + ls_o
    };
    let var_new = if ls { proposed.eta.exp() } else { state.var[e] };
    let kern = Kern::new(proposed.mu, var_new);
    let t_new = ln_target(proposed, &|i| data.ln_comp(i, &kern));
    let t_now = ln_target(now, &|i| terms.get(i, e));
    let correction = match target {
        RelocateTarget::Exact => q.ln_density(now) - q.ln_density(proposed),
        RelocateTarget::WithoutProposal => 0.0,
    };
    let log_r = t_new - t_now + correction;
    if log_r.is_nan() || !t_new.is_finite() || !accept(log_r, rng) {
        return false;
    }
    let (ls_e, ls_o) = ln_shares(proposed.t);
    let a = Component {
        log_w: log_total + ls_e,
        mu: proposed.mu,
        var: var_new,
    };
    let b = Component {
        log_w: log_total + ls_o,
        mu: state.mu[o],
        var: state.var[o],
    };
    store(prior, state, e, o, a, b);
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{Cauchy, Continuous, InverseGamma, Normal};

    /// The proposal's pieces against statrs' densities: the share's Cauchy, and the prior
    /// in (μ, η) as statrs' inverse-gamma density of σ² times σ² times the normal of μ
    /// (change of variables; common practice, no source).
    #[test]
    fn proposal_densities_match_statrs() {
        let c = Cauchy::new(SHARE_LOC, SHARE_SCALE).unwrap();
        for t in [-40.0, -3.0, 0.5, 7.0] {
            assert!((ln_share_density(t) - c.ln_pdf(t)).abs() < 1e-12);
        }
        let prior = Prior {
            kernel: Kernel::LocationScale,
            weights: crate::config::WeightsKind::Dirichlet,
            components: 3,
            centre: 0.3,
            centre_sd: 1.0,
            centre_shrink: 0.25,
            var_shape: 2.5,
            var_scale: crate::model::VarScale::Fixed(0.7),
            concentration: crate::model::Concentration::Fixed(1.0),
            label_moves: false,
            collapsed: false,
        };
        let q = Proposal {
            prior: &prior,
            var_scale: 0.7,
            sources: vec![],
        };
        let ig = InverseGamma::new(2.5, 0.7).unwrap();
        for (mu, var) in [(0.0, 0.5), (1.2, 2.0), (-3.0, 0.05)] {
            let n = Normal::new(0.3, (var / 0.25f64).sqrt()).unwrap();
            let want = ig.ln_pdf(var) + var.ln() + n.ln_pdf(mu);
            let got = q.ln_prior(Point {
                t: 0.0,
                mu,
                eta: f64::ln(var),
            });
            assert!((got - want).abs() < 1e-10, "{got} against {want}");
        }
    }
}
