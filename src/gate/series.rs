//! The scalar quantities the gate looks at, cut from the stored draws: one series per
//! chain, every chain cut to the length of the shortest (an incomplete run).

use serde::{Deserialize, Serialize};

use crate::store::{DrawRow, RunDraws};

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
    /// Builds a series from `f` applied to the first `len` rows of every chain.
    pub fn from_rows(
        name: &str,
        kind: QuantityKind,
        label_invariant: bool,
        run: &RunDraws,
        f: impl Fn(&DrawRow) -> f64,
    ) -> Self {
        let len = run.min_len();
        Series {
            name: name.to_string(),
            kind,
            label_invariant,
            chains: run
                .chains
                .iter()
                .map(|c| c.rows[..len].iter().map(&f).collect())
                .collect(),
        }
    }

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
    let mut out = vec![
        Series::from_rows("loglik", QuantityKind::Continuous, true, run, |r| r.loglik),
        Series::from_rows("occupied", QuantityKind::Count, true, run, |r| {
            f64::from(r.occupied)
        }),
    ];
    if concentration_sampled {
        out.push(Series::from_rows(
            "concentration",
            QuantityKind::Continuous,
            true,
            run,
            |r| r.concentration,
        ));
    }
    if location_kernel && run.k > 0 {
        out.push(Series::from_rows(
            "sigma",
            QuantityKind::Continuous,
            true,
            run,
            |r| r.sd[0],
        ));
    }
    out
}

/// Per-component parameters `weight_k`, `mean_k` and (location-scale kernel) `sd_k`:
/// shown for information only, since labels switch between and within chains.
pub fn component_series(run: &RunDraws, location_kernel: bool) -> Vec<Series> {
    let mut out = Vec::new();
    for j in 0..run.k {
        let n = j + 1;
        out.push(Series::from_rows(
            &format!("weight_{n}"),
            QuantityKind::Continuous,
            false,
            run,
            |r| r.weight[j],
        ));
        out.push(Series::from_rows(
            &format!("mean_{n}"),
            QuantityKind::Continuous,
            false,
            run,
            |r| r.mean[j],
        ));
        if !location_kernel {
            out.push(Series::from_rows(
                &format!("sd_{n}"),
                QuantityKind::Continuous,
                false,
                run,
                |r| r.sd[j],
            ));
        }
    }
    out
}
