//! The scalar quantities the gate looks at, cut from the stored draws: one series per
//! chain, every chain cut to the length of the shortest (an incomplete run).

use serde::{Deserialize, Serialize};

use crate::store::{ChainScalars, DrawRow, RunDraws, ScalarDraws};

/// What kind of values a quantity takes; decides how a stuck half-chain is judged.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum QuantityKind {
    /// A continuous parameter, updated every sweep: equal draws mean a stuck chain.
    Continuous,
    /// An integer count (`occupied`): runs of equal draws are normal.
    Count,
    /// The density at one grid point: continuous, but it can underflow to exactly 0.
    Density,
}

/// The draws of one scalar quantity, one vector per chain, all of equal length.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    pub name: String,
    pub kind: QuantityKind,
    /// Unchanged when component labels are permuted.
    pub label_invariant: bool,
    pub chains: Vec<Vec<f64>>,
}

impl Series {
    /// The chains as slices, the form the diagnostics take.
    pub fn slices(&self) -> Vec<&[f64]> {
        self.chains.iter().map(Vec::as_slice).collect()
    }
}

/// The label-invariant scalars: `loglik`, `occupied`, `concentration` (when sampled) and
/// `sigma`, the common sd of the location kernel (the `sd_1` column; every `sd_k` equals it).
pub fn label_invariant_series(
    run: &RunDraws,
    concentration_sampled: bool,
    location_kernel: bool,
) -> Vec<Series> {
    scalar_series(
        &ScalarDraws::from_run(run),
        concentration_sampled,
        location_kernel,
    )
}

/// [`label_invariant_series`] from the scalars of a run, every chain cut to the shortest.
pub fn scalar_series(
    run: &ScalarDraws,
    concentration_sampled: bool,
    location_kernel: bool,
) -> Vec<Series> {
    let len = run.min_len();
    let series = |name: &str, kind, f: &dyn Fn(&ChainScalars) -> Vec<f64>| Series {
        name: name.to_string(),
        kind,
        label_invariant: true,
        chains: run
            .chains
            .iter()
            .map(|c| {
                let mut v = f(c);
                v.truncate(len);
                v
            })
            .collect(),
    };
    let mut out = vec![
        series("loglik", QuantityKind::Continuous, &|c| c.loglik.clone()),
        series("occupied", QuantityKind::Count, &|c| {
            c.occupied.iter().map(|&o| f64::from(o)).collect()
        }),
    ];
    if concentration_sampled {
        out.push(series("concentration", QuantityKind::Continuous, &|c| {
            c.concentration.clone()
        }));
    }
    if location_kernel && run.k > 0 {
        out.push(series("sigma", QuantityKind::Continuous, &|c| {
            c.sd1.clone()
        }));
    }
    out
}

/// One per-component parameter: `weight_k`, `mean_k` or `sd_k` (index from 0).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ComponentParam {
    Weight(usize),
    Mean(usize),
    Sd(usize),
}

impl ComponentParam {
    /// The parameters shown for K components, in report order: `weight_k`, `mean_k` and
    /// (location-scale kernel) `sd_k` for k = 1..K.
    pub fn all(k: usize, location_kernel: bool) -> Vec<ComponentParam> {
        let mut out = Vec::new();
        for j in 0..k {
            out.push(ComponentParam::Weight(j));
            out.push(ComponentParam::Mean(j));
            if !location_kernel {
                out.push(ComponentParam::Sd(j));
            }
        }
        out
    }

    /// Its value in one draw.
    pub fn value(self, r: &DrawRow) -> f64 {
        match self {
            ComponentParam::Weight(j) => r.weight[j],
            ComponentParam::Mean(j) => r.mean[j],
            ComponentParam::Sd(j) => r.sd[j],
        }
    }

    /// Its draws as a series (not label-invariant), one vector per chain.
    pub fn series(self, chains: Vec<Vec<f64>>) -> Series {
        let (what, j) = match self {
            ComponentParam::Weight(j) => ("weight", j),
            ComponentParam::Mean(j) => ("mean", j),
            ComponentParam::Sd(j) => ("sd", j),
        };
        Series {
            name: format!("{what}_{}", j + 1),
            kind: QuantityKind::Continuous,
            label_invariant: false,
            chains,
        }
    }
}

/// Per-component parameters `weight_k`, `mean_k` and (location-scale kernel) `sd_k`:
/// shown for information only, since labels switch between and within chains.
pub fn component_series(run: &RunDraws, location_kernel: bool) -> Vec<Series> {
    let len = run.min_len();
    ComponentParam::all(run.k, location_kernel)
        .into_iter()
        .map(|p| {
            p.series(
                run.chains
                    .iter()
                    .map(|c| c.rows[..len].iter().map(|r| p.value(r)).collect())
                    .collect(),
            )
        })
        .collect()
}
