//! Data recorded at a resolution, conditional sweep: the component parameters given the
//! counts per cell, with the exact values integrated out.
//!
//! Given the counts m_ck of [`super::cell_counts`], component k's parameters θ_k = (μ_k, σ_k²)
//! have the conditional p(θ_k) Π_c P_k(c)^{m_ck}, P_k(c) = Φ((hi_c − μ_k)/σ_k) −
//! Φ((lo_c − μ_k)/σ_k): no conjugate form. Each is updated by one Metropolis–Hastings step
//! whose proposal is the conjugate full conditional that the exact values would give,
//! with the values' statistics replaced by their expectations under the current θ_k:
//! S1 = Σ_c m_ck E[y | c, θ_k], S2 = Σ_c m_ck E[y² | c, θ_k] (truncated-normal moments,
//! [`crate::dist::truncated_std_normal_moments`]). The proposal depends on θ_k, so the ratio
//! carries q(θ | S(θ*)) / q(θ* | S(θ)), the statistics recomputed at the proposed point.
//! When the cells are narrow against σ_k the proposal is nearly the conditional itself
//! and almost every proposal is accepted; the acceptance depends on the share of
//! information the rounding removes, not on n (docs/model.md, "Counts per cell").
//!
//! Location-scale kernel: the normal-inverse-gamma conditional, proposing (μ_k, σ_k²)
//! jointly. Location kernel: each μ_k given σ² (normal proposal), then the common σ²
//! given the means (inverse-gamma proposal from the expected residual sum of squares over
//! every component). Components without observations are drawn from their prior, exactly.
//! The variance scale b of the location-scale kernel is drawn given the occupied
//! components' variances only, and the empty ones are drawn next given it, so (b, the
//! empty components) is one block: b | σ²_occupied ~ Gamma(g + K_occ a, h + Σ_occ 1/σ_k²).

use rand::Rng;
use statrs::function::gamma::ln_gamma;

use super::cell_counts::CellCounts;
use super::mh::accept;
use crate::config::Kernel;
use crate::data::Cells;
use crate::dist::{
    gamma_rate, inv_gamma, ln_normal_pdf, normal, truncated_std_normal_moments_given,
    truncated_std_normal_summary,
};
use crate::model::{Prior, State, VarScale};

/// Which Metropolis–Hastings ratio the parameter updates use. The sampler uses
/// [`CellRatio::Exact`]; the joint-distribution test swaps in the ratio without the
/// proposal's correction to show that it would notice.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum CellRatio {
    #[default]
    Exact,
    /// Leaves out q(θ | S(θ*)) / q(θ* | S(θ)): wrong, for tests only.
    WithoutProposal,
}

/// Proposals made and accepted by the parameter updates of one sweep.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct CellTally {
    pub proposed: u32,
    pub accepted: u32,
}

/// One pass over a component's cells at (μ, σ): the log-likelihood and the expected
/// statistics of the exact values.
#[derive(Debug, Clone, Copy, Default)]
struct Pass {
    loglik: f64,
    n: f64,
    s1: f64,
    s2: f64,
    /// Σ m E[(y − μ)²].
    resid: f64,
}

/// With `cached`, (μ, σ) must be the parameters the counts were drawn at, and each cell's
/// ln P is taken from the allocation (the same bits) instead of computed again.
fn pass(cells: &Cells, held: &[(u32, u64, f64)], mu: f64, sd: f64, cached: bool) -> Pass {
    let mut p = Pass::default();
    for &(c, m, kept) in held {
        let (a, b) = (
            (cells.lo[c as usize] - mu) / sd,
            (cells.hi[c as usize] - mu) / sd,
        );
        let m = m as f64;
        let (ln_p, t1, t2) = if cached {
            let (t1, t2) = truncated_std_normal_moments_given(a, b, kept);
            (kept, t1, t2)
        } else {
            truncated_std_normal_summary(a, b)
        };
        p.loglik += m * ln_p;
        p.n += m;
        p.s1 += m * (mu + sd * t1);
        p.s2 += m * (mu * mu + 2.0 * mu * sd * t1 + sd * sd * t2);
        p.resid += m * sd * sd * t2;
    }
    p
}

/// ln Inverse-Gamma(v; a, b) (shape a, scale b).
fn ln_inv_gamma(v: f64, a: f64, b: f64) -> f64 {
    a * b.ln() - ln_gamma(a) - (a + 1.0) * v.ln() - b / v
}

/// The normal-inverse-gamma conditional of (μ, σ²) given statistics (n, S1, S2):
/// (m_n, κ_n, a_n, b_n), as in `components.rs` (Murphy 2007, §6).
fn nig_posterior(prior: &Prior, b: f64, n: f64, s1: f64, s2: f64) -> (f64, f64, f64, f64) {
    let (m, kappa, a) = (prior.centre, prior.centre_shrink, prior.var_shape);
    let (xbar, ss) = if n > 0.0 {
        let xbar = s1 / n;
        (xbar, (s2 - n * xbar * xbar).max(0.0))
    } else {
        (0.0, 0.0)
    };
    let kn = kappa + n;
    let mn = (kappa * m + n * xbar) / kn;
    let an = a + 0.5 * n;
    let bn = b + 0.5 * ss + kappa * n * (xbar - m) * (xbar - m) / (2.0 * kn);
    (mn, kn, an, bn)
}

/// ln NIG(μ, v; m, κ, a, b): v ~ IG(a, b), μ | v ~ N(m, v/κ).
fn ln_nig(mu: f64, v: f64, (m, kappa, a, b): (f64, f64, f64, f64)) -> f64 {
    ln_inv_gamma(v, a, b) + ln_normal_pdf(mu, m, (v / kappa).sqrt())
}

/// Updates every component's parameters given the counts (see the module comment), and
/// for the location-scale kernel with b ~ Gamma, b with the empty components.
pub fn update_components_given_cells<R: Rng + ?Sized>(
    prior: &Prior,
    cells: &Cells,
    counts: &CellCounts,
    state: &mut State,
    ratio: CellRatio,
    rng: &mut R,
) -> CellTally {
    match prior.kernel {
        Kernel::LocationScale => {
            update_var_scale_occupied(prior, counts, state, rng);
            location_scale(prior, cells, counts, state, ratio, rng)
        }
        Kernel::Location => location(prior, cells, counts, state, ratio, rng),
    }
}

/// b | σ² of the occupied components, b ~ Gamma(g, h): Gamma(g + K_occ a, h + Σ_occ 1/σ_k²).
fn update_var_scale_occupied<R: Rng + ?Sized>(
    prior: &Prior,
    counts: &CellCounts,
    state: &mut State,
    rng: &mut R,
) {
    let VarScale::Gamma { shape, rate } = prior.var_scale else {
        return;
    };
    let (mut k_occ, mut inv) = (0.0, 0.0);
    for (j, held) in counts.held.iter().enumerate() {
        if !held.is_empty() {
            k_occ += 1.0;
            inv += 1.0 / state.var[j];
        }
    }
    state.var_scale = gamma_rate(shape + k_occ * prior.var_shape, rate + inv, rng);
}

fn location_scale<R: Rng + ?Sized>(
    prior: &Prior,
    cells: &Cells,
    counts: &CellCounts,
    state: &mut State,
    ratio: CellRatio,
    rng: &mut R,
) -> CellTally {
    let b = state.var_scale;
    let prior_nig = (prior.centre, prior.centre_shrink, prior.var_shape, b);
    let mut tally = CellTally::default();
    for (j, held) in counts.held.iter().enumerate() {
        if held.is_empty() {
            let v = inv_gamma(prior.var_shape, b, rng);
            state.var[j] = v;
            state.mu[j] = normal(prior.centre, (v / prior.centre_shrink).sqrt(), rng);
            continue;
        }
        let (mu, v) = (state.mu[j], state.var[j]);
        let cur = pass(cells, held, mu, v.sqrt(), true);
        let q_fwd = nig_posterior(prior, b, cur.n, cur.s1, cur.s2);
        let v_new = inv_gamma(q_fwd.2, q_fwd.3, rng);
        let mu_new = normal(q_fwd.0, (v_new / q_fwd.1).sqrt(), rng);
        let new = pass(cells, held, mu_new, v_new.sqrt(), false);
        let mut log_r =
            new.loglik + ln_nig(mu_new, v_new, prior_nig) - cur.loglik - ln_nig(mu, v, prior_nig);
        if ratio == CellRatio::Exact {
            let q_rev = nig_posterior(prior, b, new.n, new.s1, new.s2);
            log_r += ln_nig(mu, v, q_rev) - ln_nig(mu_new, v_new, q_fwd);
        }
        tally.proposed += 1;
        if accept(log_r, rng) {
            state.mu[j] = mu_new;
            state.var[j] = v_new;
            tally.accepted += 1;
        }
    }
    tally
}

fn location<R: Rng + ?Sized>(
    prior: &Prior,
    cells: &Cells,
    counts: &CellCounts,
    state: &mut State,
    ratio: CellRatio,
    rng: &mut R,
) -> CellTally {
    let exact = ratio == CellRatio::Exact;
    let (m, s) = (prior.centre, prior.centre_sd);
    let prior_prec = 1.0 / (s * s);
    let v = state.var[0];
    let sd = v.sqrt();
    let mut tally = CellTally::default();
    for (j, held) in counts.held.iter().enumerate() {
        if held.is_empty() {
            state.mu[j] = normal(m, s, rng);
            continue;
        }
        let mu = state.mu[j];
        let cur = pass(cells, held, mu, sd, true);
        let prec = prior_prec + cur.n / v;
        let q_sd = prec.recip().sqrt();
        let fwd_mean = (m * prior_prec + cur.s1 / v) / prec;
        let mu_new = normal(fwd_mean, q_sd, rng);
        let new = pass(cells, held, mu_new, sd, false);
        let mut log_r =
            new.loglik + ln_normal_pdf(mu_new, m, s) - cur.loglik - ln_normal_pdf(mu, m, s);
        if exact {
            let rev_mean = (m * prior_prec + new.s1 / v) / prec;
            log_r += ln_normal_pdf(mu, rev_mean, q_sd) - ln_normal_pdf(mu_new, fwd_mean, q_sd);
        }
        tally.proposed += 1;
        if accept(log_r, rng) {
            state.mu[j] = mu_new;
            tally.accepted += 1;
        }
    }

    // The common σ² given the means.
    let whole = |sd: f64, state: &State| {
        let mut t = Pass::default();
        for (j, held) in counts.held.iter().enumerate() {
            let p = pass(cells, held, state.mu[j], sd, false);
            t.loglik += p.loglik;
            t.n += p.n;
            t.resid += p.resid;
        }
        t
    };
    let (a, b) = (prior.var_shape, state.var_scale);
    let cur = whole(sd, state);
    let an = a + 0.5 * cur.n;
    let v_new = inv_gamma(an, b + 0.5 * cur.resid, rng);
    let new = whole(v_new.sqrt(), state);
    let mut log_r = new.loglik + ln_inv_gamma(v_new, a, b) - cur.loglik - ln_inv_gamma(v, a, b);
    if exact {
        log_r +=
            ln_inv_gamma(v, an, b + 0.5 * new.resid) - ln_inv_gamma(v_new, an, b + 0.5 * cur.resid);
    }
    tally.proposed += 1;
    if accept(log_r, rng) {
        state.var.iter_mut().for_each(|x| *x = v_new);
        tally.accepted += 1;
    }
    tally
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::data::Transform;

    /// Narrow cells: the expected statistics are those of the midpoints, plus the
    /// within-cell variance w²/12 (Sheppard's correction) and the shift of the mean down
    /// the density's slope, −(w²/12)(x − μ)/σ² (a Taylor expansion of the normal across
    /// the cell; common practice, no source). What is left is O(w⁴).
    #[test]
    fn expected_statistics_of_narrow_cells_are_the_midpoints_with_sheppards_term() {
        let x = [-0.3, 0.1, 0.4];
        let m = [2.0, 1.0, 5.0];
        let (w, mu, sd) = (0.01, 0.05, 0.8);
        let cells = Cells::from_rows(&x, None, w, Transform::None, 0.0, 1.0);
        let held: Vec<(u32, u64, f64)> = vec![(0, 2, 0.0), (1, 1, 0.0), (2, 5, 0.0)];
        let p = pass(&cells, &held, mu, sd, false);
        let (mut s1, mut s2) = (0.0, 0.0);
        for (xi, mi) in x.iter().zip(m) {
            let shift = -(w * w / 12.0) * (xi - mu) / (sd * sd);
            s1 += mi * (xi + shift);
            s2 += mi * (xi * xi + 2.0 * xi * shift + w * w / 12.0);
        }
        assert_eq!(p.n, 8.0);
        assert!((p.s1 - s1).abs() < 1e-9, "{} vs {s1}", p.s1);
        assert!((p.s2 - s2).abs() < 1e-9, "{} vs {s2}", p.s2);
        // A wrong statistic (the midpoints alone) is 1e-5 away: the check can tell.
        assert!((p.s1 - 1.5).abs() > 1e-6);
    }

    /// The NIG density integrates to one over (μ, v) (checked on a grid; a wrong
    /// normalising constant would make the MH ratio wrong by a constant per component).
    #[test]
    fn nig_density_is_normalised() {
        let params = (0.3, 2.0, 3.0, 1.5);
        let (mut acc, dm, dv) = (0.0, 0.01, 0.002);
        let mut v = dv * 0.5;
        while v < 40.0 {
            let mut mu = -8.0 + 0.5 * dm;
            while mu < 8.0 {
                acc += ln_nig(mu, v, params).exp() * dm * dv;
                mu += dm;
            }
            v += dv;
        }
        assert!((acc - 1.0).abs() < 2e-3, "{acc}");
    }
}
