//! Prior hyperparameters in standard units, converted from the resolved config.

use serde::{Deserialize, Serialize};

use crate::config::{HyperChoice, Kernel, RunConfig, WeightsKind};

/// The scale b of the Inverse-Gamma(a, b) prior on component variances.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum VarScale {
    Fixed(f64),
    /// b ~ Gamma(shape, rate), updated by its conjugate full conditional.
    Gamma {
        shape: f64,
        rate: f64,
    },
}

/// The weight-prior concentration: δ (Dirichlet) or α (stick-breaking), fixed or with a
/// Gamma(shape, rate) prior.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub enum Concentration {
    Fixed(f64),
    Gamma { shape: f64, rate: f64 },
}

/// Full prior specification in the units the sampler works in.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Prior {
    pub kernel: Kernel,
    pub weights: WeightsKind,
    /// K: number of components (the truncation level for stick-breaking).
    pub components: usize,
    /// m: centre of the component means.
    pub centre: f64,
    /// s: sd of the component means (location kernel).
    pub centre_sd: f64,
    /// κ: μ_k | σ_k² ~ N(m, σ_k²/κ) (location-scale kernel).
    pub centre_shrink: f64,
    /// a: σ² ~ Inverse-Gamma(a, b).
    pub var_shape: f64,
    pub var_scale: VarScale,
    pub concentration: Concentration,
    /// Whether the sweep runs the label-switching moves (stick-breaking weights only).
    pub label_moves: bool,
    /// Whether the sweep adds a collapsed allocation scan (`[sampler] allocation`).
    #[serde(default)]
    pub collapsed: bool,
}

impl Prior {
    /// The config's prior, mapped to standard units z = (x − centre) / scale.
    pub fn from_config(cfg: &RunConfig, centre: f64, scale: f64) -> Prior {
        let p = &cfg.prior;
        let s2 = scale * scale;
        let var_scale = match p.var_scale_prior {
            HyperChoice::Fixed => VarScale::Fixed(p.var_scale / s2),
            // b_std = b / scale², so a Gamma(g, h) prior on b is Gamma(g, h·scale²) on b_std.
            HyperChoice::Gamma => VarScale::Gamma {
                shape: p.var_scale_shape,
                rate: p.var_scale_rate * s2,
            },
        };
        let concentration = match cfg.weights {
            WeightsKind::Dirichlet => match p.delta_prior {
                HyperChoice::Fixed => Concentration::Fixed(p.dirichlet_delta),
                HyperChoice::Gamma => Concentration::Gamma {
                    shape: p.delta_shape,
                    rate: p.delta_rate,
                },
            },
            WeightsKind::StickBreaking => match p.alpha_prior {
                HyperChoice::Fixed => Concentration::Fixed(p.alpha),
                HyperChoice::Gamma => Concentration::Gamma {
                    shape: p.alpha_shape,
                    rate: p.alpha_rate,
                },
            },
        };
        Prior {
            kernel: cfg.kernel,
            weights: cfg.weights,
            components: cfg.components,
            centre: (p.centre - centre) / scale,
            centre_sd: p.centre_sd / scale,
            centre_shrink: p.centre_shrink,
            var_shape: p.var_shape,
            var_scale,
            concentration,
            label_moves: cfg.label_moves,
            collapsed: cfg.allocation == crate::config::AllocationKind::Collapsed,
        }
    }

    /// Number of variance parameters: one common σ² or one per component.
    pub fn n_variances(&self) -> usize {
        match self.kernel {
            Kernel::Location => 1,
            Kernel::LocationScale => self.components,
        }
    }
}
