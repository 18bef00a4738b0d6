//! Posterior predictive p-values (Gelman, Meng & Stern 1996, Statistica Sinica 6,
//! 733–807): p = P(T(y_rep) ≥ T(y) | y), estimated by the share of replicates whose
//! statistic is at least the observed one, with its Monte Carlo standard error
//! √(p(1 − p)/S) (binomial; the replicates come from draws treated as independent).
//!
//! A statistic is in a tail when p < `tail_low` (the data lie above nearly every
//! replicate) or when P(T(y_rep) ≤ T(y)) < 1 − `tail_high` (the data lie below nearly every
//! replicate). For a continuous statistic the second condition is p > `tail_high`; for a
//! count (the number of modes) ties are common, and testing each side with its own
//! inclusive share keeps a tie from being read as extreme (common practice, no source).

use serde::{Deserialize, Serialize};

use crate::summary::quantile_sorted;

/// Where the observed statistic lies among the replicates.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Tail {
    /// The observed value is above nearly every replicate.
    ObservedHigh,
    /// The observed value is below nearly every replicate.
    ObservedLow,
}

/// The posterior predictive comparison of one statistic.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StatCheck {
    pub name: String,
    pub observed: f64,
    /// Median and equal-tailed 95% interval of the replicated statistic.
    pub replicated: Replicated,
    /// P(T(y_rep) ≥ T(y)).
    pub p_value: f64,
    /// Its Monte Carlo standard error.
    pub p_value_mcse: f64,
    /// P(T(y_rep) ≤ T(y)) (1 − p_value for a continuous statistic).
    pub p_value_below: f64,
    /// `null` unless the statistic is in a tail.
    pub tail: Option<Tail>,
}

/// Median and 95% interval of a replicated statistic.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Replicated {
    pub median: f64,
    pub lower_95: f64,
    pub upper_95: f64,
}

/// Compares the observed statistic `observed` with its replicates `rep` (at least one).
pub fn compare(name: &str, observed: f64, rep: &[f64], tail_low: f64, tail_high: f64) -> StatCheck {
    let s = rep.len() as f64;
    let ge = rep.iter().filter(|&&r| r >= observed).count() as f64 / s;
    let le = rep.iter().filter(|&&r| r <= observed).count() as f64 / s;
    let mut sorted = rep.to_vec();
    sorted.sort_by(f64::total_cmp);
    let tail = if ge < tail_low {
        Some(Tail::ObservedHigh)
    } else if le < 1.0 - tail_high {
        Some(Tail::ObservedLow)
    } else {
        None
    };
    StatCheck {
        name: name.to_string(),
        observed,
        replicated: Replicated {
            median: quantile_sorted(&sorted, 0.5),
            lower_95: quantile_sorted(&sorted, 0.025),
            upper_95: quantile_sorted(&sorted, 0.975),
        },
        p_value: ge,
        p_value_mcse: (ge * (1.0 - ge) / s).sqrt(),
        p_value_below: le,
        tail,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shares_and_tails() {
        let rep: Vec<f64> = (1..=100).map(f64::from).collect();
        // 100 replicates 1..100: T(y) = 100.5 is above all of them, p = 0.
        let c = compare("t", 100.5, &rep, 0.01, 0.99);
        assert_eq!(c.p_value, 0.0);
        assert_eq!(c.tail, Some(Tail::ObservedHigh));
        // T(y) = 50: 51 replicates are ≥ 50, 50 are ≤ 50; MCSE √(0.51·0.49/100).
        let c = compare("t", 50.0, &rep, 0.01, 0.99);
        assert_eq!((c.p_value, c.p_value_below), (0.51, 0.5));
        assert!((c.p_value_mcse - (0.51f64 * 0.49 / 100.0).sqrt()).abs() < 1e-15);
        assert_eq!(c.tail, None);
        let c = compare("t", 0.0, &rep, 0.01, 0.99);
        assert_eq!((c.p_value, c.tail), (1.0, Some(Tail::ObservedLow)));
        // A count tied with every replicate is in neither tail although P(≥) = 1.
        let c = compare("modes", 1.0, &[1.0; 50], 0.01, 0.99);
        assert_eq!((c.p_value, c.tail), (1.0, None));
    }
}
