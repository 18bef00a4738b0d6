//! What to try when the gate fails, chosen from the kinds of failure.

use super::failure::{Failure, FailureKind};
use super::projection::{ess_factor, projected_draws};

/// Facts the advice needs besides the failures.
#[derive(Debug, Clone, Copy)]
pub(super) struct AdviceContext {
    pub chains: usize,
    pub draws_per_chain: usize,
    pub min_ess: f64,
    pub min_chains: usize,
}

/// Beyond this many times the run's length, an extension is called impractical.
const IMPRACTICAL: usize = 10;

/// Extra draws per chain that should lift `lowest` ESS to `min_ess` (see
/// [`super::projection`]), at least 100.
fn extra_draws(draws: usize, lowest: f64, min_ess: f64) -> Option<usize> {
    if draws == 0 || lowest <= 0.0 || !lowest.is_finite() {
        return None;
    }
    let to = projected_draws(draws, ess_factor(lowest, min_ess));
    Some(to.saturating_sub(draws).max(100))
}

/// One piece of advice per kind of failure, in a fixed order.
pub(super) fn advice(failures: &[Failure], c: AdviceContext) -> Vec<String> {
    let has = |k: FailureKind| failures.iter().any(|f| f.kind == k);
    let mut out = Vec::new();
    if has(FailureKind::TooFewChains) {
        out.push(format!(
            "More chains: set [sampler] chains to at least {} and sample again (a run cannot gain chains); \
             with one chain R-hat only compares its two halves and cannot see chains that settle in different places",
            c.min_chains.max(2)
        ));
    }
    if has(FailureKind::Unavailable) {
        out.push(format!(
            "More draws: the diagnostics need at least 4 draws per chain, and the gate needs an ESS of {}; \
             this run has {} per chain",
            c.min_ess, c.draws_per_chain
        ));
    }
    if has(FailureKind::EssBulk) || has(FailureKind::EssTail) {
        let lowest = failures
            .iter()
            .filter(|f| matches!(f.kind, FailureKind::EssBulk | FailureKind::EssTail))
            .filter_map(|f| f.value)
            .fold(f64::INFINITY, f64::min);
        let how = match extra_draws(c.draws_per_chain, lowest, c.min_ess) {
            Some(n) if n > IMPRACTICAL * c.draws_per_chain => format!(
                "; about {n} more per chain (`mixband extend <run> --draws {n}`) would be needed to lift the \
                 lowest ESS ({lowest:.0}) above {}, {} times this run's length, which is unlikely to be \
                 practical: the chains barely move (on a large sample the usual cause is its size: docs/model.md, \"Large \
                 samples mix badly\"; figures in docs/performance.md, \"Time to a converged answer\"; on a \
                 small one, values tied on a lattice and treated as exact: set `[data] resolution`), so \
                 report nothing from this run. If the run has no re-split moves, `[sampler] resplit_moves = 3` raises the ESS \
                 per draw several times over at about six times the cost of a sweep, not always enough to pass \
                 (docs/model.md, \"Re-split moves\"). A random subsample of about 10 000 observations (`[data] subsample = 10000`, \
                 drawn from the seed without looking at the values) passed the gate in about half a minute to two minutes on a 2-core machine for every benchmark density (docs/performance.md); its \
                 bands are honest for the subsample and wider than the whole sample's would be",
                c.min_ess,
                n / c.draws_per_chain.max(1)
            ),
            Some(n) => format!(
                "; about {n} more per chain (`mixband extend <run> --draws {n}`) should lift the lowest ESS \
                 ({lowest:.0}) above {}",
                c.min_ess
            ),
            None => String::new(),
        };
        out.push(format!(
            "More draws: ESS grows roughly in proportion to the number of draws{how}. \
             Thinning does not raise ESS per sweep"
        ));
    }
    if has(FailureKind::Rhat) {
        out.push(
            "Longer warm-up ([sampler] warmup) and more draws: the chains do not agree yet. If R-hat stays high \
             in a long run the chains have settled in different modes (these quantities ignore label switching, \
             so it is not that): try more chains to see how many places they find, another kernel \
             ([model] kernel) or another weights prior ([model] weights, components)"
                .to_string(),
        );
    }
    if has(FailureKind::Stuck) {
        out.push(
            "A chain did not move for half its length or more: use a longer warm-up, and if it persists try \
             another kernel or weights prior, or wider priors on the component variances"
                .to_string(),
        );
    }
    if c.chains == 0 {
        out.push("No chains: is the run directory complete?".to_string());
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn extra_draws_scale_with_the_shortfall() {
        // 1000 draws gave ESS 200; 400 needs about 2000 in all, 2400 with the margin.
        assert_eq!(extra_draws(1000, 200.0, 400.0), Some(1400));
        assert_eq!(extra_draws(1000, 390.0, 400.0), Some(300));
        assert_eq!(extra_draws(0, 200.0, 400.0), None);
    }

    fn ess_failure(value: f64) -> Failure {
        Failure {
            kind: FailureKind::EssBulk,
            quantity: Some("occupied".into()),
            value: Some(value),
            sentence: String::new(),
        }
    }

    fn context() -> AdviceContext {
        AdviceContext {
            chains: 4,
            draws_per_chain: 3000,
            min_ess: 400.0,
            min_chains: 2,
        }
    }

    #[test]
    fn a_hopeless_extension_is_called_impractical() {
        // ESS 8 in 3000 draws a chain (a large sample on the conditional sweep) would need
        // about 177 000 more: said so, and the run is not to be reported.
        let a = advice(&[ess_failure(8.0)], context()).join(" ");
        assert!(a.contains("unlikely to be practical"), "{a}");
        assert!(a.contains("report nothing from this run"), "{a}");
        // ESS 300 needs about 1800 more: the ordinary advice.
        let b = advice(&[ess_failure(300.0)], context()).join(" ");
        assert!(b.contains("should lift the lowest ESS (300)"), "{b}");
        assert!(!b.contains("unlikely"), "{b}");
    }
}
