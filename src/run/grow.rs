//! Growing a run that failed the convergence gate: when the same chains, continued, are
//! projected to pass the gate within `[sampler] max_draws` kept draws each, the job
//! continues them (as `mixband extend` would) and assesses the gate again, at most
//! [`MAX_ROUNDS`] times. A run whose figures project far beyond that limit is not grown:
//! at n = 10^5 the default run's lowest ESS of 6–7 in 4000 draws and R-hat of 1.6–1.9 ask
//! for 75–130 times the draws, and the user is told so instead of waiting for them.
//!
//! The projection is [`crate::gate::projection`]'s: a failing ESS e against the threshold
//! E asks for E/e times the draws, a failing R-hat r against the limit t for
//! (r² − 1)/(t² − 1) times; the run grows to the largest of these, times its margin,
//! rounded up to a hundred, and at most [`MAX_STEP`] times the draws it has. A growth
//! continues each chain's own random stream, so a grown run holds the same draws as one
//! configured with its final length (tests/grow_run.rs).

use crate::gate::projection::{ess_factor, projected_draws, rhat_factor};
use crate::gate::{DiagnosticsReport, QuantityStatus};
use crate::store::Growth;

/// Rounds of growth a job makes at most.
pub const MAX_ROUNDS: usize = 4;

/// The most one round multiplies the draws by. The ESS of a short run understates the
/// ESS per draw of a longer one (its early draws still carry the end of the warm-up's
/// drift): at n = 10^4 a run judged at 1000 draws a chain projected 7500 where 5900
/// passed when judged at 3000. Growing at most threefold and judging again stops that
/// overshoot at the cost of one more assessment.
pub const MAX_STEP: usize = 3;

/// What to do with a run that failed the gate.
#[derive(Debug, Clone, PartialEq)]
pub enum Decision {
    /// Continue every chain to this many kept draws.
    Grow(Growth),
    /// Leave it as it is, for the reason given (a sentence for people).
    Stop(String),
}

/// One gated figure set: status, R-hat, bulk and tail ESS, and whether it passed.
struct Figures<'a> {
    name: &'a str,
    status: QuantityStatus,
    passed: bool,
    rhat: Option<f64>,
    ess: [Option<f64>; 2],
}

/// Decides whether the failed run `report` (at `draws` kept draws per chain) grows, and
/// to how many draws, without passing `max_draws`.
pub fn decide(report: &DiagnosticsReport, draws: usize, max_draws: usize) -> Decision {
    let t = &report.thresholds;
    if !report.run_complete {
        return Decision::Stop("the run is incomplete (`mixband resume` first)".into());
    }
    if report.chains < t.min_chains {
        return Decision::Stop(format!(
            "it has {} chain(s), fewer than [gate] min_chains = {}; more draws cannot change that",
            report.chains, t.min_chains
        ));
    }
    if draws >= max_draws {
        return Decision::Stop(format!(
            "it holds [sampler] max_draws = {max_draws} draws a chain already"
        ));
    }
    let quantities = report
        .quantities
        .iter()
        .filter(|q| q.gated)
        .map(|q| Figures {
            name: &q.name,
            status: q.status,
            passed: q.passed,
            rhat: q.rhat,
            ess: [q.ess_bulk, q.ess_tail],
        });
    let grid = report.density_grid.iter().map(|p| Figures {
        name: "the density",
        status: p.status,
        passed: p.passed,
        rhat: p.rhat,
        ess: [p.ess_bulk, p.ess_tail],
    });
    let (mut need, mut lowest_ess, mut largest_rhat) = (1.0f64, f64::INFINITY, 1.0f64);
    for f in quantities.chain(grid) {
        for e in f.ess.iter().flatten() {
            lowest_ess = lowest_ess.min(*e);
        }
        if let Some(r) = f.rhat {
            largest_rhat = largest_rhat.max(r);
        }
        if f.passed {
            continue;
        }
        // A failing figure that is missing or not finite projects nothing (and must not
        // reach the manifest).
        let readable = f.rhat.is_some_and(f64::is_finite)
            && f.ess.iter().all(|e| e.is_some_and(f64::is_finite));
        if !readable
            || matches!(
                f.status,
                QuantityStatus::StuckChain | QuantityStatus::Unavailable
            )
        {
            return Decision::Stop(format!(
                "{} could not be assessed or stayed at one value in a chain; more draws of \
                 the same chains are not projected to help",
                f.name
            ));
        }
        for e in f.ess.iter().flatten() {
            need = need.max(ess_factor(*e, t.min_ess));
        }
        if let Some(r) = f.rhat {
            need = need.max(rhat_factor(r, t.max_rhat));
        }
    }
    if draws as f64 * need > max_draws as f64 {
        return Decision::Stop(format!(
            "its lowest ESS ({lowest_ess:.0}) and largest R-hat ({largest_rhat:.3}) project to \
             about {need:.1} times the draws, some {:.0} a chain, beyond [sampler] max_draws = \
             {max_draws}; the chains mix too slowly for more of the same to be worth the wait",
            (draws as f64 * need).ceil()
        ));
    }
    let rounded = projected_draws(draws, need);
    // At least a quarter more, so that a round is worth its assessment; at most MAX_STEP
    // times as many.
    let to = rounded
        .max(draws + draws.div_ceil(4))
        .min(draws * MAX_STEP)
        .min(max_draws);
    Decision::Grow(Growth {
        from_draws: draws,
        to_draws: to,
        lowest_ess,
        largest_rhat,
    })
}

/// One line for people about the growths of a run and why it stopped growing, if it did.
pub fn describe(grown: &[Growth], not_grown: Option<&str>) -> Option<String> {
    let mut parts: Vec<String> = grown
        .iter()
        .map(|g| {
            format!(
                "grown from {} to {} kept draws a chain after failing the gate (lowest ESS {:.0}, largest R-hat {:.3})",
                g.from_draws, g.to_draws, g.lowest_ess, g.largest_rhat
            )
        })
        .collect();
    if let Some(why) = not_grown {
        parts.push(format!("not grown: {why}"));
    }
    (!parts.is_empty()).then(|| parts.join("; "))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::gate::{GridPoint, QuantityReport, RhatScope, Thresholds};

    fn point(rhat: f64, bulk: f64, tail: f64, t: &Thresholds) -> GridPoint {
        GridPoint {
            x: 0.0,
            mean: Some(1.0),
            rhat: Some(rhat),
            ess_bulk: Some(bulk),
            ess_tail: Some(tail),
            mcse_mean: Some(0.0),
            status: QuantityStatus::Varying,
            passed: rhat <= t.max_rhat && bulk >= t.min_ess && tail >= t.min_ess,
        }
    }

    fn report(points: Vec<GridPoint>, quantities: Vec<QuantityReport>) -> DiagnosticsReport {
        DiagnosticsReport {
            tool: "mixband".into(),
            version: "test".into(),
            format: 1,
            passed: false,
            thresholds: thresholds(),
            chains: 4,
            draws_per_chain: 1000,
            rhat_scope: RhatScope::BetweenChains,
            run_complete: true,
            quantities,
            density_grid: points,
            failures: vec![],
            advice: vec![],
            notes: vec![],
        }
    }

    fn grown_to(d: Decision) -> usize {
        match d {
            Decision::Grow(g) => g.to_draws,
            d => panic!("{d:?}"),
        }
    }

    fn thresholds() -> Thresholds {
        Thresholds {
            max_rhat: 1.01,
            min_ess: 400.0,
            min_chains: 2,
        }
    }

    #[test]
    fn ess_short_by_half_asks_for_twice_the_draws_and_a_margin() {
        let t = thresholds();
        let r = report(
            vec![
                point(1.001, 900.0, 200.0, &t),
                point(1.002, 1500.0, 800.0, &t),
            ],
            vec![],
        );
        // 400/200 = 2, times 1.2 = 2.4 → 2400 draws.
        match decide(&r, 1000, 12_000) {
            Decision::Grow(g) => {
                assert_eq!((g.from_draws, g.to_draws), (1000, 2400));
                assert_eq!(g.lowest_ess, 200.0);
                assert_eq!(g.largest_rhat, 1.002);
            }
            d => panic!("{d:?}"),
        }
    }

    #[test]
    fn rhat_projects_by_its_square_minus_one() {
        let t = thresholds();
        // (1.02² − 1)/(1.01² − 1) = 0.0404/0.0201 = 2.00995..., times 1.2 and 3000 draws:
        // 7235.8 → 7300.
        let r = report(vec![point(1.02, 5000.0, 5000.0, &t)], vec![]);
        assert_eq!(grown_to(decide(&r, 3000, 12_000)), 7300);
    }

    #[test]
    fn growth_is_capped_and_beyond_the_cap_declined() {
        let t = thresholds();
        // Projection 3.5 × 1000 = 3500 ≤ 4000, with the margin 4200: capped at 3000 by
        // the step.
        let r = report(vec![point(1.0, 400.0 / 3.5, 900.0, &t)], vec![]);
        assert_eq!(grown_to(decide(&r, 1000, 4000)), 3000);
        // Projection 1.9 × 2000 = 3800 ≤ 4000, with the margin 4560: capped by max_draws.
        let r = report(vec![point(1.0, 400.0 / 1.9, 900.0, &t)], vec![]);
        assert_eq!(grown_to(decide(&r, 2000, 4000)), 4000);
        // Eight times the draws is within max_draws = 12 000 from 1000: a threefold step.
        let r = report(vec![point(1.0, 50.0, 900.0, &t)], vec![]);
        assert_eq!(grown_to(decide(&r, 1000, 12_000)), 3000);
        // An ESS of 8 asks for fifty times the draws.
        let r = report(vec![point(1.2, 8.0, 30.0, &t)], vec![]);
        match decide(&r, 3000, 12_000) {
            Decision::Stop(why) => {
                assert!(
                    why.contains("lowest ESS (8)") && why.contains("max_draws = 12000"),
                    "{why}"
                )
            }
            d => panic!("{d:?}"),
        }
        // At the cap already.
        let r = report(vec![point(1.0, 300.0, 900.0, &t)], vec![]);
        assert!(matches!(decide(&r, 4000, 4000), Decision::Stop(_)));
    }

    #[test]
    fn a_small_shortfall_still_grows_by_a_quarter() {
        let t = thresholds();
        let r = report(vec![point(1.0, 395.0, 900.0, &t)], vec![]);
        assert_eq!(grown_to(decide(&r, 3000, 12_000)), 3750);
    }

    #[test]
    fn stuck_or_unreadable_figures_too_few_chains_and_incomplete_runs_are_not_grown() {
        let t = thresholds();
        let mut p = point(1.5, 10.0, 10.0, &t);
        p.status = QuantityStatus::StuckChain;
        assert!(matches!(
            decide(&report(vec![p], vec![]), 1000, 4000),
            Decision::Stop(_)
        ));
        let mut p = point(1.2, 300.0, 900.0, &t);
        p.ess_tail = None;
        assert!(matches!(
            decide(&report(vec![p], vec![]), 1000, 4000),
            Decision::Stop(w) if w.contains("could not be assessed")
        ));
        let mut p = point(1.2, 300.0, 900.0, &t);
        p.rhat = Some(f64::NAN);
        assert!(matches!(
            decide(&report(vec![p], vec![]), 1000, 4000),
            Decision::Stop(_)
        ));
        let mut r = report(vec![point(1.0, 300.0, 900.0, &t)], vec![]);
        r.chains = 1;
        assert!(matches!(decide(&r, 1000, 4000), Decision::Stop(w) if w.contains("min_chains")));
        let mut r = report(vec![point(1.0, 300.0, 900.0, &t)], vec![]);
        r.run_complete = false;
        assert!(matches!(decide(&r, 1000, 4000), Decision::Stop(w) if w.contains("incomplete")));
    }

    #[test]
    fn ungated_quantities_do_not_ask_for_draws() {
        let t = thresholds();
        let q = |gated: bool| QuantityReport {
            name: "weight_1".into(),
            label_invariant: false,
            gated,
            passed: false,
            status: QuantityStatus::Varying,
            mean: Some(0.5),
            sd: Some(0.1),
            rhat: Some(1.5),
            rhat_split: Some(1.5),
            ess_bulk: Some(5.0),
            ess_tail: Some(5.0),
            mcse_mean: None,
            mcse_q05: None,
            mcse_q95: None,
            worst_at: None,
            note: None,
        };
        let grid = vec![point(1.0, 300.0, 900.0, &t)];
        assert_eq!(
            grown_to(decide(&report(grid.clone(), vec![q(false)]), 1000, 4000)),
            1600
        );
        assert!(matches!(
            decide(&report(grid, vec![q(true)]), 1000, 4000),
            Decision::Stop(_)
        ));
    }
}
