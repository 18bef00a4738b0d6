//! The summaries of a run computed from every draw held in memory ([`RunDraws`] and the
//! curves of every draw on the grid, [`DensityDraws`]): the straightforward form, kept as
//! the reference that [`super::summarise::summarise_stored`] must match bit for bit
//! (tests/summaries_streamed.rs). Its memory grows with K and the grid for every draw.

use super::outputs::QUANTILE_PROBS;
use super::summarise::{Summaries, SummaryPlan};
use crate::gate::assess;
use crate::store::RunDraws;
use crate::summary::{cdf_draws, Bands, DensityDraws, DrawFeatures};

/// The summaries `plan` asks for (its window width is ignored), from draws in memory.
pub fn summarise_in_memory(draws: &RunDraws, plan: &SummaryPlan) -> Summaries {
    let (grid, t) = (plan.grid, plan.transform);
    let dens = DensityDraws::new_on(draws, grid, t);
    let report = plan.gate.map(|spec| assess(draws, &dens, &spec));
    let Some(levels) = plan.levels else {
        return Summaries {
            report,
            bands: None,
            cdf: None,
            features: None,
        };
    };
    let cdf = Bands::new_clipped(&cdf_draws(draws, grid, t), levels, 0.0, 1.0);
    let n = draws.min_len();
    let g = grid.len();
    let mut features = DrawFeatures::new(&QUANTILE_PROBS).with_shape(plan.shape);
    for (c, chain) in draws.chains.iter().enumerate() {
        for (d, row) in chain.rows[..n].iter().enumerate() {
            let at = (c * n + d) * g;
            features.push(row, t, grid, &dens.values[at..at + g]);
        }
    }
    Summaries {
        report,
        bands: Some(Bands::new(&dens, levels)),
        cdf: Some(cdf),
        features: Some(features),
    }
}
