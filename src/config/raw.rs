//! The config file as written: every section and key, most of them optional.
//! Unknown keys are rejected (serde `deny_unknown_fields`) with their name and line.

use serde::{Deserialize, Serialize};

/// Mixture component family.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Kernel {
    /// N(μ_k, σ²) with one common σ: the model-based counterpart of a Gaussian kernel
    /// density estimate with bandwidth σ.
    Location,
    /// N(μ_k, σ_k²): each component its own bandwidth.
    LocationScale,
}

/// Prior on the mixture weights.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum WeightsKind {
    /// K components with symmetric Dirichlet(δ) weights.
    Dirichlet,
    /// Truncated stick-breaking at K (blocked Gibbs, Ishwaran & James 2001).
    StickBreaking,
}

/// How the sweep updates the allocations.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum AllocationKind {
    /// z_i given the weights and component parameters, all i at once (the fast kernel).
    Conditional,
    /// That, then one scan of z_i given z_−i with weights and parameters integrated out.
    Collapsed,
}

/// Whether a hyperparameter is held fixed or given a Gamma prior.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum HyperChoice {
    Fixed,
    Gamma,
}

/// What to do with empty cells in the data column.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum MissingPolicy {
    Error,
    Drop,
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct RawConfig {
    pub data: Option<DataSection>,
    pub model: Option<ModelSection>,
    pub prior: Option<PriorSection>,
    pub sampler: Option<SamplerSection>,
    pub grid: Option<GridSection>,
    pub bands: Option<BandsSection>,
    pub gate: Option<GateSection>,
    pub shape: Option<super::shape::ShapeSection>,
    pub check: Option<super::check::CheckSection>,
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DataSection {
    pub file: Option<String>,
    pub column: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub units: Option<String>,
    pub missing: Option<MissingPolicy>,
    /// "none", "log" or "logit": the scale the mixture is fitted on (see
    /// src/data/transform.rs).
    pub transform: Option<crate::data::TransformKind>,
    /// The bounds of `transform = "logit"`: the data lie strictly between them.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub lower: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub upper: Option<f64>,
    /// Header name of a column of integer frequency weights (binned or tabulated data).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub weights: Option<String>,
    /// The resolution the values were recorded at: each value x stands for the cell
    /// [x − r/2, x + r/2) (interval-censored likelihood, see src/sampler/censored.rs).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub resolution: Option<f64>,
    /// Fit at most this many observations, a simple random subsample drawn from the
    /// run's seed (src/data/subsample.rs).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub subsample: Option<i64>,
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ModelSection {
    pub kernel: Option<Kernel>,
    pub weights: Option<WeightsKind>,
    pub components: Option<i64>,
}

/// Prior overrides, in the units of the data.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PriorSection {
    /// m: prior centre of the component means.
    pub centre: Option<f64>,
    /// s: prior sd of the component means (location kernel).
    pub centre_sd: Option<f64>,
    /// κ: μ_k | σ_k² ~ N(m, σ_k²/κ) (location-scale kernel).
    pub centre_shrink: Option<f64>,
    /// a: σ² ~ Inverse-Gamma(a, b).
    pub var_shape: Option<f64>,
    /// "fixed" or "gamma": whether b is fixed or b ~ Gamma(var_scale_shape, var_scale_rate).
    pub var_scale_prior: Option<HyperChoice>,
    /// b when fixed (data units squared).
    pub var_scale: Option<f64>,
    pub var_scale_shape: Option<f64>,
    /// Rate of the Gamma prior on b (per data unit squared).
    pub var_scale_rate: Option<f64>,
    /// δ of the symmetric Dirichlet weight prior.
    pub dirichlet_delta: Option<f64>,
    /// "fixed" or "gamma": δ fixed at `dirichlet_delta`, or δ ~ Gamma(delta_shape, delta_rate).
    pub delta_prior: Option<HyperChoice>,
    pub delta_shape: Option<f64>,
    pub delta_rate: Option<f64>,
    /// "fixed" or "gamma" for the stick-breaking concentration α.
    pub alpha_prior: Option<HyperChoice>,
    pub alpha: Option<f64>,
    pub alpha_shape: Option<f64>,
    pub alpha_rate: Option<f64>,
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SamplerSection {
    pub chains: Option<i64>,
    pub warmup: Option<i64>,
    pub draws: Option<i64>,
    /// The most kept draws per chain the run may grow to when the gate fails and more
    /// draws are projected to pass it (docs/outputs.md, "Growing a run to pass the gate").
    #[serde(skip_serializing_if = "Option::is_none")]
    pub max_draws: Option<i64>,
    pub thin: Option<i64>,
    pub seed: Option<i64>,
    /// Run only these chains (ids from 1 to `chains`), with the streams they have in the
    /// full run; for splitting a run into jobs that `mixband merge` joins.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub chain_ids: Option<Vec<i64>>,
    /// Label-switching moves for stick-breaking weights (on by default).
    pub label_moves: Option<bool>,
    /// "conditional" or "collapsed" (see docs/model.md).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub allocation: Option<AllocationKind>,
    /// Re-split moves per sweep (0: none; see docs/model.md, "Re-split moves").
    #[serde(skip_serializing_if = "Option::is_none")]
    pub resplit_moves: Option<i64>,
    /// Relocation moves per sweep (0: none; see docs/model.md, "Relocation moves").
    #[serde(skip_serializing_if = "Option::is_none")]
    pub relocate_moves: Option<i64>,
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GridSection {
    pub from: Option<f64>,
    pub to: Option<f64>,
    pub points: Option<i64>,
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BandsSection {
    pub levels: Option<Vec<f64>>,
}

#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GateSection {
    pub max_rhat: Option<f64>,
    pub min_ess: Option<f64>,
    pub min_chains: Option<i64>,
}

/// The names used in config files, also used in messages and figures.
impl std::fmt::Display for Kernel {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            Kernel::Location => "location",
            Kernel::LocationScale => "location-scale",
        })
    }
}

impl std::fmt::Display for WeightsKind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(match self {
            WeightsKind::Dirichlet => "dirichlet",
            WeightsKind::StickBreaking => "stick-breaking",
        })
    }
}
