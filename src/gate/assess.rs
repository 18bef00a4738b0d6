//! Assessing a run: every quantity's diagnostics, the gate's verdict, failure sentences,
//! advice and notes, gathered into a [`DiagnosticsReport`].

use super::advice::{advice, AdviceContext};
use super::density::{assess_grid, GridPoint};
use super::failure::{Failure, FailureKind};
use super::quantity::{evaluate, QuantityReport};
use super::report::{DiagnosticsReport, RhatScope, DIAGNOSTICS_FORMAT};
use super::series::{component_series, label_invariant_series, Series};
use super::thresholds::{ThresholdOverrides, Thresholds};
use crate::config::{parse_config_str, resolve, HyperChoice, Kernel, RunConfig, WeightsKind};
use crate::error::{Error, Result};
use crate::run::{summarise_stored, SummaryPlan};
use crate::store::{Manifest, RunDraws, RunLayout, RunStatus, ScalarDraws, StoredChains};
use crate::summary::{linspace, DensityDraws};

/// What the gate needs to know about the run besides its draws.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct GateSpec {
    pub thresholds: Thresholds,
    /// The weight concentration has a prior (stick-breaking with a Gamma prior on α);
    /// a fixed concentration is not a quantity to assess.
    pub concentration_sampled: bool,
    /// Location kernel: one common σ, assessed as `sigma`.
    pub location_kernel: bool,
    /// Every chain reached its configured length.
    pub run_complete: bool,
}

impl GateSpec {
    /// The spec of a resolved config.
    pub fn from_config(c: &RunConfig, run_complete: bool) -> Self {
        GateSpec {
            thresholds: Thresholds::from_config(c),
            concentration_sampled: c.weights == WeightsKind::StickBreaking
                && c.prior.alpha_prior == HyperChoice::Gamma,
            location_kernel: c.kernel == Kernel::Location,
            run_complete,
        }
    }
}

fn notes(lens: &[usize], spec: &GateSpec) -> Vec<String> {
    let mut out = Vec::new();
    if lens.len() == 1 {
        out.push("one chain: every R-hat compares the two halves of that chain, a within-chain check only".into());
    }
    let min_len = lens.iter().copied().min().unwrap_or(0);
    if lens.iter().any(|&l| l != min_len) {
        let list: Vec<String> = lens.iter().map(usize::to_string).collect();
        out.push(format!(
            "chains hold different numbers of draws ({}); each is cut to the shortest, {}",
            list.join(", "),
            min_len
        ));
    }
    if !spec.run_complete {
        out.push("the run is incomplete: not every chain reached its configured length (`mixband resume`)".into());
    }
    out.push(
        "per-component parameters (weight_k, mean_k, sd_k) change meaning when labels switch: shown, never gated"
            .into(),
    );
    out
}

/// Assesses the draws of a run (chains cut to the shortest) and the density draws on the
/// grid (`dens`, made from the same draws) against `spec`. Never fails: whatever cannot be
/// assessed is reported as `unavailable` and fails the gate.
pub fn assess(run: &RunDraws, dens: &DensityDraws, spec: &GateSpec) -> DiagnosticsReport {
    let lens: Vec<usize> = run.chains.iter().map(|c| c.rows.len()).collect();
    let within_chain = lens.len() == 1;
    let t = &spec.thresholds;
    let components = component_series(run, spec.location_kernel)
        .iter()
        .map(|s| evaluate(s, false, t, within_chain).0)
        .collect();
    assemble(
        spec,
        &lens,
        label_invariant_series(run, spec.concentration_sampled, spec.location_kernel),
        assess_grid(dens, t, within_chain),
        components,
    )
}

/// The density grid, assessed as [`GridAssessment`] or by `assess_grid`.
pub(crate) type AssessedGrid = (Vec<GridPoint>, QuantityReport, Vec<Failure>);

/// The report from its parts: the number of draws of each chain (`lens`), the
/// label-invariant scalar series (cut to the shortest chain), the assessed density grid,
/// and the reports of the per-component parameters (never gated).
pub(crate) fn assemble(
    spec: &GateSpec,
    lens: &[usize],
    scalars: Vec<Series>,
    grid: AssessedGrid,
    components: Vec<QuantityReport>,
) -> DiagnosticsReport {
    let t = spec.thresholds;
    let chains = lens.len();
    let draws_per_chain = lens.iter().copied().min().unwrap_or(0);
    let within_chain = chains == 1;
    let mut failures: Vec<Failure> = Vec::new();
    if chains < t.min_chains {
        failures.push(Failure {
            kind: FailureKind::TooFewChains,
            quantity: None,
            value: Some(chains as f64),
            sentence: format!(
                "chains: the run has {chains} chain(s) and the gate needs at least {} ([gate] min_chains); \
                 with one chain R-hat compares the two halves of that chain only, a within-chain check",
                t.min_chains
            ),
        });
    }
    let mut quantities = Vec::new();
    for s in scalars {
        let (r, f) = evaluate(&s, true, &t, within_chain);
        quantities.push(r);
        failures.extend(f);
    }
    let (density_grid, summary, f) = grid;
    quantities.push(summary);
    failures.extend(f);
    quantities.extend(components);
    let ctx = AdviceContext {
        chains,
        draws_per_chain,
        min_ess: t.min_ess,
        min_chains: t.min_chains,
    };
    DiagnosticsReport {
        tool: "mixband".into(),
        version: env!("CARGO_PKG_VERSION").into(),
        format: DIAGNOSTICS_FORMAT,
        passed: failures.is_empty(),
        thresholds: t,
        chains,
        draws_per_chain,
        rhat_scope: if within_chain {
            RhatScope::WithinChain
        } else {
            RhatScope::BetweenChains
        },
        run_complete: spec.run_complete,
        quantities,
        density_grid,
        advice: advice(&failures, ctx),
        failures: failures.into_iter().map(|f| f.sentence).collect(),
        notes: notes(lens, spec),
    }
}

/// Reads the run directory (manifest, resolved config.toml, draws) and assesses it, with
/// `overrides` replacing the configured thresholds. The data file is not read: the
/// resolved config already holds the grid and every setting the gate needs.
pub fn assess_run(layout: &RunLayout, overrides: &ThresholdOverrides) -> Result<DiagnosticsReport> {
    let manifest = Manifest::read(&layout.manifest())?;
    let path = layout.config();
    let text = std::fs::read_to_string(&path).map_err(|e| {
        Error::input(format!(
            "cannot read {}: {e}; is this a mixband run directory?",
            path.display()
        ))
    })?;
    let origin = path.display().to_string();
    let raw = parse_config_str(&text, &origin)?;
    let cfg = resolve(&raw, &text, &origin, &layout.root, None)?;
    let stored = StoredChains::new(&layout.draws_dir(), &manifest.chain_ids());
    let scalars = ScalarDraws::read(&stored)?;
    let grid = linspace(cfg.grid_from, cfg.grid_to, cfg.grid_points);
    let mut spec = GateSpec::from_config(&cfg, manifest.status == RunStatus::Complete);
    spec.thresholds = spec.thresholds.with(overrides)?;
    // The density that bands.csv reports (on the original scale under a transform), as
    // `sample` and `bands` assess it.
    let plan = SummaryPlan {
        grid: &grid,
        transform: cfg.transform,
        levels: None,
        gate: Some(spec),
        columns_per_pass: None,
        shape: None,
    };
    summarise_stored(&stored, &scalars, &plan)?
        .report
        .ok_or_else(|| Error::internal("the gate was not assessed"))
}
