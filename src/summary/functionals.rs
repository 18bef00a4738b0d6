//! Posterior summaries of scalar features of the distribution: its quantiles, mean and
//! standard deviation. Each feature is computed exactly for every draw — the mean as
//! Σ w_k μ_k, the variance as Σ w_k (σ_k² + μ_k²) − mean², a quantile by solving the
//! draw's CDF by bisection — and then summarised over draws by its posterior mean, median,
//! sd and equal-tailed credible intervals. Under `[data] transform = "log"` the features
//! are those of x = e^y: quantiles map through exp, and each component is log-normal with
//! mean e^(μ+σ²/2) and variance (e^(σ²) − 1) e^(2μ+σ²) (log-normal moments; common
//! practice, no source). Under `transform = "logit"` a component's x = l + (u − l) σ(y)
//! has no closed-form moments; they are integrated over y ~ N(μ, σ²) by the trapezoid rule
//! in z = (y − μ)/σ (see [`logit_moments`]).

use serde::Serialize;

use super::cdf::mixture_cdf;
use super::finite_json::number_or_words;
use super::quantile::quantile_sorted;
use crate::data::{Bounds, Transform};
use crate::store::DrawRow;

/// An equal-tailed credible interval.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Interval {
    pub level: f64,
    #[serde(serialize_with = "number_or_words")]
    pub lower: f64,
    #[serde(serialize_with = "number_or_words")]
    pub upper: f64,
}

/// The posterior of one scalar feature. Serialised with every value that is not a finite
/// float written as "not finite" ([`super::finite_json`]), never as `null`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Posterior {
    #[serde(serialize_with = "number_or_words")]
    pub mean: f64,
    #[serde(serialize_with = "number_or_words")]
    pub median: f64,
    #[serde(serialize_with = "number_or_words")]
    pub sd: f64,
    pub intervals: Vec<Interval>,
}

impl Posterior {
    /// Summarises the draws `v` (non-empty) at each level.
    pub fn of(v: &[f64], levels: &[f64]) -> Posterior {
        let mut s = v.to_vec();
        s.sort_by(f64::total_cmp);
        let n = s.len() as f64;
        let mean = s.iter().sum::<f64>() / n;
        let ss: f64 = s.iter().map(|&x| (x - mean) * (x - mean)).sum();
        Posterior {
            mean,
            median: quantile_sorted(&s, 0.5),
            sd: if s.len() > 1 {
                (ss / (n - 1.0)).sqrt()
            } else {
                0.0
            },
            intervals: levels
                .iter()
                .map(|&level| Interval {
                    level,
                    lower: quantile_sorted(&s, 0.5 * (1.0 - level)),
                    upper: quantile_sorted(&s, 0.5 * (1.0 + level)),
                })
                .collect(),
        }
    }
}

/// Mean of one draw's mixture (fitted scale).
pub fn mixture_mean(row: &DrawRow) -> f64 {
    row.weight.iter().zip(&row.mean).map(|(w, m)| w * m).sum()
}

/// Standard deviation of one draw's mixture (fitted scale), by the law of total variance:
/// Σ w_k σ_k² + Σ w_k (μ_k − mean)².
pub fn mixture_sd(row: &DrawRow) -> f64 {
    let m = mixture_mean(row);
    let v: f64 = (0..row.weight.len())
        .map(|k| row.weight[k] * (row.sd[k] * row.sd[k] + (row.mean[k] - m).powi(2)))
        .sum();
    v.sqrt()
}

/// Mean of one draw's distribution on the original scale.
pub fn mixture_mean_on(row: &DrawRow, t: Transform) -> f64 {
    match t {
        Transform::None => mixture_mean(row),
        Transform::Log => lognormal_mixture_moments(row).0,
        Transform::Logit(b) => (0..row.weight.len())
            .map(|k| row.weight[k] * logit_moments(row.mean[k], row.sd[k], b).0)
            .sum(),
    }
}

/// Standard deviation of one draw's distribution on the original scale (total variance).
pub fn mixture_sd_on(row: &DrawRow, t: Transform) -> f64 {
    match t {
        Transform::None => mixture_sd(row),
        Transform::Log => lognormal_mixture_moments(row).1,
        Transform::Logit(b) => {
            let moments: Vec<(f64, f64)> = (0..row.weight.len())
                .map(|k| logit_moments(row.mean[k], row.sd[k], b))
                .collect();
            let m: f64 = moments
                .iter()
                .zip(&row.weight)
                .map(|((mk, _), w)| w * mk)
                .sum();
            let v: f64 = moments
                .iter()
                .zip(&row.weight)
                .map(|((mk, vk), w)| w * (vk + (mk - m).powi(2)))
                .sum();
            v.sqrt()
        }
    }
}

/// Half-width, in standard deviations, of the range the logit moments are integrated over:
/// the normal mass beyond ±9 is below 1e-18 and x is bounded, so cutting there loses
/// nothing a double can hold.
const LOGIT_Z_MAX: f64 = 9.0;
/// Step of the trapezoid rule in z. For an integrand analytic in a strip |Im z| < a the
/// rule's error on the real line falls like e^(−2πa/h) (Trefethen & Weideman 2014, "The
/// exponentially convergent trapezoidal rule", SIAM Review 56(3); recalled from memory);
/// σ(μ + σz) has its nearest poles at Im z = ±π/σ, so the error is about e^(−2π²/(σh)):
/// below double precision up to σ ≈ 10 on the logit scale, about 1e-6 at σ = 30. Checked
/// against scipy's adaptive quadrature in tests/transform_logit.rs.
const LOGIT_Z_STEP: f64 = 0.05;

/// The trapezoid nodes z_i and normalised weights φ(z_i) h / Σ φ(z_j) h, computed once.
fn logit_nodes() -> &'static [(f64, f64)] {
    static NODES: std::sync::OnceLock<Vec<(f64, f64)>> = std::sync::OnceLock::new();
    NODES.get_or_init(|| {
        let n = (LOGIT_Z_MAX / LOGIT_Z_STEP).round() as i64;
        let raw: Vec<(f64, f64)> = (-n..=n)
            .map(|i| {
                let z = i as f64 * LOGIT_Z_STEP;
                (z, (-0.5 * z * z).exp())
            })
            .collect();
        let total: f64 = raw.iter().map(|p| p.1).sum();
        raw.into_iter().map(|(z, w)| (z, w / total)).collect()
    })
}

/// Mean and variance of x = l + (u − l) σ(y) for y ~ N(μ, σ²), σ the logistic function
/// (the logit-normal on (l, u)), by the trapezoid rule in z; the variance as the mean
/// squared deviation from that mean (two passes, no cancellation).
pub fn logit_moments(mu: f64, sd: f64, b: Bounds) -> (f64, f64) {
    let t = Transform::Logit(b);
    let nodes = logit_nodes();
    let xs: Vec<f64> = nodes.iter().map(|&(z, _)| t.inverse(mu + sd * z)).collect();
    let m: f64 = xs.iter().zip(nodes).map(|(x, &(_, w))| w * x).sum();
    let v: f64 = xs
        .iter()
        .zip(nodes)
        .map(|(x, &(_, w))| w * (x - m) * (x - m))
        .sum();
    (m.clamp(b.lower(), b.upper()), v)
}

/// ln(e^s − 1) for s > 0, without overflow for large s.
fn ln_expm1(s: f64) -> f64 {
    if s > 1.0 {
        s + (-(-s).exp()).ln_1p()
    } else {
        s.exp_m1().ln()
    }
}

/// Mean and sd of a mixture of log-normals (component k: ln x ~ N(μ_k, σ_k²)), computed
/// with every term scaled by e^(−L), L the largest log of a component mean or sd, so a
/// moment overflows only when the moment itself exceeds the largest float (a component
/// variance e^(2μ+σ²)(e^(σ²) − 1) overflows long before its sd does).
fn lognormal_mixture_moments(row: &DrawRow) -> (f64, f64) {
    let k = row.weight.len();
    let ln_mean: Vec<f64> = (0..k)
        .map(|j| row.mean[j] + 0.5 * row.sd[j] * row.sd[j])
        .collect();
    let ln_var: Vec<f64> = (0..k)
        .map(|j| {
            let s2 = row.sd[j] * row.sd[j];
            ln_expm1(s2) + 2.0 * row.mean[j] + s2
        })
        .collect();
    let used = || (0..k).filter(|&j| row.weight[j] > 0.0);
    // ln of the mixture mean by log-sum-exp over the components.
    let lm = used().map(|j| ln_mean[j]).fold(f64::NEG_INFINITY, f64::max);
    // The scale of the variance: the largest component mean or sd.
    let l = used()
        .map(|j| ln_mean[j].max(0.5 * ln_var[j]))
        .fold(f64::NEG_INFINITY, f64::max);
    if !(lm.is_finite() && l.is_finite()) {
        return (f64::NAN, f64::NAN);
    }
    let ln_total = lm
        + used()
            .map(|j| row.weight[j] * (ln_mean[j] - lm).exp())
            .sum::<f64>()
            .ln();
    let centre = (ln_total - l).exp();
    let var: f64 = used()
        .map(|j| {
            let spread = (ln_mean[j] - l).exp() - centre;
            row.weight[j] * ((ln_var[j] - 2.0 * l).exp() + spread * spread)
        })
        .sum();
    (ln_total.exp(), (l + 0.5 * var.ln()).exp())
}

/// The p-quantile on the original scale (quantiles commute with increasing maps).
pub fn mixture_quantile_on(row: &DrawRow, p: f64, t: Transform) -> f64 {
    t.inverse(mixture_quantile(row, p))
}

/// The p-quantile (0 < p < 1) of one draw's mixture (fitted scale): the root of F(x) = p,
/// bracketed by the component quantiles and found by bisection to the last bit.
pub fn mixture_quantile(row: &DrawRow, p: f64) -> f64 {
    // F(x) = p lies between the smallest and largest component p-quantiles, since F is a
    // weighted average of the component CDFs. ±40 sd covers Φ down to 1e-300.
    let lo0 = (0..row.mean.len())
        .map(|k| row.mean[k] - 40.0 * row.sd[k])
        .fold(f64::INFINITY, f64::min);
    let hi0 = (0..row.mean.len())
        .map(|k| row.mean[k] + 40.0 * row.sd[k])
        .fold(f64::NEG_INFINITY, f64::max);
    let (mut lo, mut hi) = (lo0, hi0);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if mixture_cdf(row, mid) < p {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{ContinuousCDF, Normal};

    fn row(w: &[f64], m: &[f64], s: &[f64]) -> DrawRow {
        DrawRow {
            iteration: 1,
            loglik: 0.0,
            occupied: w.len() as u32,
            concentration: 1.0,
            weight: w.to_vec(),
            mean: m.to_vec(),
            sd: s.to_vec(),
        }
    }

    #[test]
    fn one_component_quantiles_are_normal_quantiles() {
        // K = 1: the p-quantile is μ + σ Φ⁻¹(p) (statrs Normal::inverse_cdf as reference).
        let r = row(&[1.0], &[10.0], &[2.5]);
        let n = Normal::new(10.0, 2.5).unwrap();
        for p in [0.001, 0.05, 0.5, 0.95, 0.999] {
            assert!(
                (mixture_quantile(&r, p) - n.inverse_cdf(p)).abs() < 1e-9,
                "p = {p}"
            );
        }
        assert!((mixture_mean(&r) - 10.0).abs() < 1e-15);
        assert!((mixture_sd(&r) - 2.5).abs() < 1e-15);
    }

    #[test]
    fn mixture_moments_follow_total_variance() {
        // 0.3 N(0, 1) + 0.7 N(4, 2²): mean 2.8, variance 0.3·1 + 0.7·4 + 0.3·0.7·16 = 6.46
        // (law of total variance, common practice, no source).
        let r = row(&[0.3, 0.7], &[0.0, 4.0], &[1.0, 2.0]);
        assert!((mixture_mean(&r) - 2.8).abs() < 1e-12);
        assert!((mixture_sd(&r) - 6.46f64.sqrt()).abs() < 1e-12);
    }

    #[test]
    fn posterior_summary_uses_numpy_style_quantiles() {
        // numpy.quantile([1,2,3,4], [0.05, 0.95]) = [1.15, 3.85]; mean 2.5, sd (ddof 1) √(5/3).
        let p = Posterior::of(&[4.0, 1.0, 3.0, 2.0], &[0.9]);
        assert!((p.mean - 2.5).abs() < 1e-12 && (p.median - 2.5).abs() < 1e-12);
        assert!((p.sd - (5.0f64 / 3.0).sqrt()).abs() < 1e-12);
        assert!((p.intervals[0].lower - 1.15).abs() < 1e-12);
        assert!((p.intervals[0].upper - 3.85).abs() < 1e-12);
    }

    #[test]
    fn log_scale_moments_match_the_lognormal_formulas() {
        // 0.4 LN(0, 0.5²) + 0.6 LN(1, 0.25²): component means e^(μ+σ²/2), variances
        // (e^(σ²) − 1) e^(2μ+σ²) (log-normal moments, common practice, no source), mixed by
        // the law of total variance; computed directly here in ordinary floats.
        let r = row(&[0.4, 0.6], &[0.0, 1.0], &[0.5, 0.25]);
        let m = [0.125f64.exp(), (1.0f64 + 0.03125).exp()];
        let v = [
            0.25f64.exp_m1() * 0.25f64.exp(),
            0.0625f64.exp_m1() * (2.0f64 + 0.0625).exp(),
        ];
        let mean = 0.4 * m[0] + 0.6 * m[1];
        let var = 0.4 * (v[0] + (m[0] - mean).powi(2)) + 0.6 * (v[1] + (m[1] - mean).powi(2));
        let t = Transform::Log;
        assert!((mixture_mean_on(&r, t) / mean - 1.0).abs() < 1e-14);
        assert!((mixture_sd_on(&r, t) / var.sqrt() - 1.0).abs() < 1e-14);
    }

    #[test]
    fn huge_log_scale_moments_stay_finite_while_they_fit_a_float() {
        // One component, ln x ~ N(0, 26²): ln mean = 338, ln sd = σ² + ½ ln(1 − e^(−σ²))
        // = 676 (to 1e-290): the sd ≈ 1e293 fits a float though the variance e^1352 does
        // not (exact log-normal formulas, common practice, no source).
        let r = row(&[1.0], &[0.0], &[26.0]);
        let t = Transform::Log;
        assert!((mixture_mean_on(&r, t).ln() - 338.0).abs() < 1e-12);
        assert!((mixture_sd_on(&r, t).ln() - 676.0).abs() < 1e-12);
        // σ = 40: the mean e^800 and the sd e^1600 exceed the largest float (e^709.78):
        // summary.json writes them, and the posterior summaries over such draws, in words.
        let big = row(&[0.5, 0.5], &[0.0, 1.0], &[40.0, 1.0]);
        let (mean, sd) = (mixture_mean_on(&big, t), mixture_sd_on(&big, t));
        assert!(mean.is_infinite() && sd.is_infinite());
        let p = Posterior::of(&[mean, mixture_mean_on(&r, t)], &[0.9]);
        let json = serde_json::to_string(&p).unwrap();
        assert!(!json.contains("null"), "{json}");
        assert!(json.contains("\"mean\":\"not finite\""), "{json}");
        assert!(json.contains("\"sd\":\"not finite\""), "{json}");
        assert!(json.contains("\"upper\":\"not finite\""), "{json}");
        // The median of two draws (one overflowing) is ∞ too; the lower end is finite.
        let p = Posterior::of(&[1.0, 2.0, mean], &[0.5]);
        let v: serde_json::Value = serde_json::to_value(&p).unwrap();
        assert_eq!(v["median"], 2.0);
        assert_eq!(v["mean"], "not finite");
        assert!(v["intervals"][0]["lower"].is_f64());
    }
}
