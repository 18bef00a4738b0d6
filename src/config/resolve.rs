//! Checking a parsed config and filling in every default, some of which depend on the data
//! (prior scales and the grid are set from the sample's centre and spread).

use std::path::{Path, PathBuf};

use serde::Serialize;

use super::locate::{key_line, section_line};
use super::raw::*;
use crate::data::{DataSummary, Transform, TransformKind};
use crate::error::{Error, Result};

/// Reads and parses a config file. Errors name the file and, from the TOML parser, the
/// line and column.
pub fn parse_config_file(path: &Path) -> Result<(RawConfig, String)> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| Error::input(format!("cannot read config file {}: {e}", path.display())))?;
    let raw = parse_config_str(&text, &path.display().to_string())?;
    Ok((raw, text))
}

/// Parses config text; `origin` names it in messages.
pub fn parse_config_str(text: &str, origin: &str) -> Result<RawConfig> {
    toml::from_str::<RawConfig>(text).map_err(|e| {
        let msg = e
            .to_string()
            .trim_end()
            .replace("expected i64", "expected an integer")
            .replace("expected f64", "expected a number")
            .replace("as i128", "");
        Error::input(format!("{origin}: invalid config: {msg}"))
    })
}

/// Most re-split or relocation moves a sweep (each costs a few passes over the data or its cells).
const MAX_RESPLIT: i64 = 1000;

/// Largest sample for which `[sampler] allocation` defaults to "collapsed".
pub const COLLAPSED_MAX_N: usize = 20_000;

/// Most observations a weighted table may stand for on the collapsed scan, which writes it
/// out one row per observation (8 bytes each in memory, and a sweep as long as N).
pub const MAX_SCAN_ROWS: usize = 50_000_000;

/// The allocation step a run uses: the one the config names, else the collapsed scan up
/// to [`COLLAPSED_MAX_N`] observations (counted with their frequency weights) and the
/// conditional step beyond. The collapsed scan is sequential and costs a few times the
/// vectorised conditional step per sweep, for two to six times the effective draws per
/// sweep (docs/model.md). `n` is None before the data are read.
pub fn allocation_for(given: Option<AllocationKind>, n: Option<usize>) -> AllocationKind {
    match (given, n) {
        (Some(a), _) => a,
        (None, Some(n)) if n > COLLAPSED_MAX_N => AllocationKind::Conditional,
        (None, _) => AllocationKind::Collapsed,
    }
}

/// Largest accepted values of the count keys: beyond them a run could not finish or would
/// exhaust memory, so they are refused as input errors instead.
const MAX_CHAINS: i64 = 1000;
const MAX_COMPONENTS: i64 = 10_000;
const MAX_SWEEPS: i64 = 1_000_000_000;
/// The least default of `[sampler] max_draws`: what a run of the default length may grow
/// to (docs/model.md, "Run length").
const DEFAULT_MAX_DRAWS: usize = 12_000;
const MAX_THIN: i64 = 1_000_000;
const MAX_POINTS: i64 = 1_000_000;

/// Data-independent settings of a run.
#[derive(Debug, Clone, PartialEq)]
pub struct RunConfig {
    /// Data file as resolved against the config's folder.
    pub data_file: PathBuf,
    /// Data file as it is to be written into a resolved config.
    pub data_file_text: String,
    pub column: String,
    pub units: Option<String>,
    pub missing: MissingPolicy,
    /// `[data] transform` with its bounds (`[data] lower` and `upper` under the logit).
    pub transform: Transform,
    /// `[data] weights`: column of integer frequency weights, if any.
    pub freq_weights: Option<String>,
    /// `[data] resolution`: each value stands for [x − r/2, x + r/2), in data units.
    pub resolution: Option<f64>,
    /// `[data] subsample`: fit at most this many observations, drawn at random.
    pub subsample: Option<u64>,
    pub kernel: Kernel,
    pub weights: WeightsKind,
    pub components: usize,
    pub prior: PriorValues,
    pub chains: usize,
    /// The chains this run samples: `[sampler] chain_ids`, or 1..=chains.
    pub chain_ids: Option<Vec<u64>>,
    pub warmup: usize,
    pub draws: usize,
    /// `[sampler] max_draws`: the run may grow to this many kept draws per chain when the
    /// gate fails (equal to `draws`: never).
    pub max_draws: usize,
    pub thin: usize,
    pub seed: u64,
    pub label_moves: bool,
    pub allocation: AllocationKind,
    /// `[sampler] resplit_moves`: re-split moves per sweep (0: none).
    pub resplit_moves: usize,
    /// `[sampler] relocate_moves`: relocation moves per sweep (0: none).
    pub relocate_moves: usize,
    pub grid_from: f64,
    pub grid_to: f64,
    pub grid_points: usize,
    pub levels: Vec<f64>,
    pub max_rhat: f64,
    pub min_ess: f64,
    pub min_chains: usize,
    /// `[shape]`: regions of interest and the thresholds of the shape summaries.
    pub shape: crate::summary::ShapeSpec,
    /// `[check]`: the model check's thresholds and sizes.
    pub check: super::check::CheckSettings,
}

/// Every prior hyperparameter, in the units of the data.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PriorValues {
    pub centre: f64,
    pub centre_sd: f64,
    pub centre_shrink: f64,
    pub var_shape: f64,
    pub var_scale_prior: HyperChoice,
    pub var_scale: f64,
    pub var_scale_shape: f64,
    pub var_scale_rate: f64,
    pub dirichlet_delta: f64,
    pub delta_prior: HyperChoice,
    pub delta_shape: f64,
    pub delta_rate: f64,
    pub alpha_prior: HyperChoice,
    pub alpha: f64,
    pub alpha_shape: f64,
    pub alpha_rate: f64,
}

/// Default number of components for each weight prior.
pub fn default_components(weights: WeightsKind) -> usize {
    match weights {
        WeightsKind::Dirichlet => 10,
        WeightsKind::StickBreaking => 25,
    }
}

struct Checker<'a> {
    text: &'a str,
    origin: &'a str,
}

impl Checker<'_> {
    fn fail(&self, section: &str, key: &str, what: String) -> Error {
        let line = key_line(self.text, section, key)
            .map(|l| format!(" (line {l})"))
            .unwrap_or_default();
        Error::input(format!("{}: [{section}] {key} {what}{line}", self.origin))
    }

    fn missing(&self, section: &str, key: &str) -> Error {
        let place = section_line(self.text, section)
            .map(|l| format!(" (section starts at line {l})"))
            .unwrap_or_else(|| format!(" (add a [{section}] section)"));
        Error::input(format!(
            "{}: missing required key [{section}] {key}{place}",
            self.origin
        ))
    }

    /// A key that `needs` makes required.
    fn missing_with(&self, section: &str, key: &str, needs: &str) -> Error {
        let place = section_line(self.text, section)
            .map(|l| format!(" (section starts at line {l})"))
            .unwrap_or_else(|| format!(" (add a [{section}] section)"));
        Error::input(format!(
            "{}: missing key [{section}] {key}, required by {needs}{place}",
            self.origin
        ))
    }

    #[allow(clippy::too_many_arguments)]
    fn int_in(
        &self,
        section: &str,
        key: &str,
        v: Option<i64>,
        min: i64,
        max: i64,
        default: i64,
    ) -> Result<usize> {
        let v = v.unwrap_or(default);
        if v < min {
            return Err(self.fail(section, key, format!("must be at least {min}, got {v}")));
        }
        if v > max {
            return Err(self.fail(section, key, format!("must be at most {max}, got {v}")));
        }
        usize::try_from(v).map_err(|_| self.fail(section, key, format!("is too large: {v}")))
    }

    fn positive(&self, key: &str, v: Option<f64>) -> Result<Option<f64>> {
        match v {
            Some(x) if !(x.is_finite() && x > 0.0) => Err(self.fail(
                "prior",
                key,
                format!("must be a positive finite number, got {x}"),
            )),
            other => Ok(other),
        }
    }

    fn finite(&self, section: &str, key: &str, v: Option<f64>) -> Result<Option<f64>> {
        match v {
            Some(x) if !x.is_finite() => {
                Err(self.fail(section, key, format!("must be finite, got {x}")))
            }
            other => Ok(other),
        }
    }
}

/// Checks the config and fills in every default; `summary` describes the loaded data and
/// `config_dir` is the folder data paths are relative to.
///
/// Data-dependent defaults (in data units, `c` the sample mean, `sd` its standard deviation,
/// `R` its range) are documented in docs/model.md.
pub fn resolve(
    raw: &RawConfig,
    text: &str,
    origin: &str,
    config_dir: &Path,
    summary: Option<&DataSummary>,
) -> Result<RunConfig> {
    let ck = Checker { text, origin };
    let data = raw.data.clone().unwrap_or_default();
    let file = data
        .file
        .clone()
        .ok_or_else(|| ck.missing("data", "file"))?;
    if file.trim().is_empty() {
        return Err(ck.fail("data", "file", "must not be empty".into()));
    }
    let column = data
        .column
        .clone()
        .ok_or_else(|| ck.missing("data", "column"))?;
    if column.trim().is_empty() {
        return Err(ck.fail("data", "column", "must not be empty".into()));
    }
    let freq_weights = data.weights.clone();
    if let Some(w) = &freq_weights {
        if w.trim().is_empty() {
            return Err(ck.fail("data", "weights", "must not be empty".into()));
        }
        if w.trim() == column.trim() {
            return Err(ck.fail(
                "data",
                "weights",
                "names the data column itself; give the column of counts".into(),
            ));
        }
    }
    let resolution = match data.resolution {
        Some(r) if !(r.is_finite() && r > 0.0) => {
            return Err(ck.fail(
                "data",
                "resolution",
                format!("must be a positive finite number, got {r}"),
            ))
        }
        r => r,
    };
    let subsample = match data.subsample {
        None => None,
        Some(m) if m < 2 => {
            return Err(ck.fail(
                "data",
                "subsample",
                format!("must be at least 2 observations, got {m}"),
            ))
        }
        Some(m) => Some(m as u64),
    };
    let transform = resolve_transform(&data, &ck)?;
    let data_file = if Path::new(&file).is_absolute() {
        PathBuf::from(&file)
    } else {
        config_dir.join(&file)
    };

    let model = raw.model.clone().unwrap_or_default();
    let kernel = model.kernel.unwrap_or(Kernel::LocationScale);
    let weights = model.weights.unwrap_or(WeightsKind::Dirichlet);
    let components = ck.int_in(
        "model",
        "components",
        model.components,
        1,
        MAX_COMPONENTS,
        default_components(weights) as i64,
    )?;

    let s = raw.sampler.clone().unwrap_or_default();
    let chains = ck.int_in("sampler", "chains", s.chains, 1, MAX_CHAINS, 4)?;
    let warmup = ck.int_in("sampler", "warmup", s.warmup, 0, MAX_SWEEPS, 1000)?;
    let draws = ck.int_in("sampler", "draws", s.draws, 1, MAX_SWEEPS, 1000)?;
    let resplit_moves = ck.int_in(
        "sampler",
        "resplit_moves",
        s.resplit_moves,
        0,
        MAX_RESPLIT,
        0,
    )?;
    let relocate_moves = ck.int_in(
        "sampler",
        "relocate_moves",
        s.relocate_moves,
        0,
        MAX_RESPLIT,
        0,
    )?;
    let thin = ck.int_in("sampler", "thin", s.thin, 1, MAX_THIN, 1)?;
    // The sweeps per chain `key` asks for, at most MAX_SWEEPS.
    let sweeps_within = |key: &str, kept: usize| {
        let sweeps = warmup + kept * thin;
        if sweeps as i64 > MAX_SWEEPS {
            return Err(ck.fail(
                "sampler",
                key,
                format!(
                    "asks for warmup + {key} x thin = {sweeps} sweeps per chain, more than {MAX_SWEEPS}"
                ),
            ));
        }
        Ok(())
    };
    sweeps_within("draws", draws)?;
    // By default 12 000 or four times the draws, whichever is more, and never past the
    // sweep limit (a default must not turn a valid config into an error).
    let max_default = (4 * draws)
        .max(DEFAULT_MAX_DRAWS)
        .min(((MAX_SWEEPS as usize).saturating_sub(warmup) / thin).max(draws));
    let max_draws = ck.int_in(
        "sampler",
        "max_draws",
        s.max_draws,
        1,
        MAX_SWEEPS,
        max_default as i64,
    )?;
    if max_draws < draws {
        return Err(ck.fail(
            "sampler",
            "max_draws",
            format!("must be at least draws ({draws}), got {max_draws}"),
        ));
    }
    sweeps_within("max_draws", max_draws)?;
    let chain_ids = match &s.chain_ids {
        None => None,
        Some(ids) => {
            Some(check_chain_ids(ids, chains).map_err(|m| ck.fail("sampler", "chain_ids", m))?)
        }
    };
    let seed = match s.seed {
        Some(v) if v < 0 => {
            return Err(ck.fail(
                "sampler",
                "seed",
                format!("must be a non-negative integer, got {v}"),
            ))
        }
        Some(v) => v as u64,
        None => fresh_seed(),
    };

    let p = raw.prior.clone().unwrap_or_default();
    let centre = ck.finite("prior", "centre", p.centre)?;
    let centre_sd = ck.positive("centre_sd", p.centre_sd)?;
    let centre_shrink = ck.positive("centre_shrink", p.centre_shrink)?;
    let var_shape = ck.positive("var_shape", p.var_shape)?;
    let var_scale = ck.positive("var_scale", p.var_scale)?;
    let var_scale_shape = ck.positive("var_scale_shape", p.var_scale_shape)?;
    let var_scale_rate = ck.positive("var_scale_rate", p.var_scale_rate)?;
    let dirichlet_delta = ck.positive("dirichlet_delta", p.dirichlet_delta)?;
    let delta_shape = ck.positive("delta_shape", p.delta_shape)?;
    let delta_rate = ck.positive("delta_rate", p.delta_rate)?;
    let alpha = ck.positive("alpha", p.alpha)?;
    let alpha_shape = ck.positive("alpha_shape", p.alpha_shape)?;
    let alpha_rate = ck.positive("alpha_rate", p.alpha_rate)?;

    let allocation = allocation_for(s.allocation, summary.map(|d| d.n));
    // The collapsed scan runs on a table of exact values written out row by row
    // (run/prepare.rs, which leaves a table this large unexpanded), so one standing for
    // more observations than memory should hold is refused.
    if let (AllocationKind::Collapsed, Some(_), None, Some(d)) =
        (allocation, &freq_weights, resolution, summary)
    {
        if d.n > MAX_SCAN_ROWS {
            return Err(ck.fail(
                "sampler",
                "allocation",
                format!(
                    "= \"collapsed\" writes a weighted table out one row per observation, and \
                     this one stands for {} (more than {MAX_SCAN_ROWS}); use \"conditional\", \
                     which works per row, or set [data] resolution",
                    d.n
                ),
            ));
        }
    }
    let g = raw.grid.clone().unwrap_or_default();
    let from = ck.finite("grid", "from", g.from)?;
    let to = ck.finite("grid", "to", g.to)?;
    let points = ck.int_in("grid", "points", g.points, 2, MAX_POINTS, 200)?;
    if let (Some(a), Some(b)) = (from, to) {
        if a >= b {
            return Err(ck.fail(
                "grid",
                "from",
                format!("must be below [grid] to, got from = {a}, to = {b}"),
            ));
        }
    }
    if let Transform::Logit(b) = transform {
        // A grid end given on or beyond a bound is refused rather than clipped, so the
        // grid a run reports is the one written in its config (an end left out defaults
        // inside the bounds).
        let mid = b.lower() + 0.5 * (b.upper() - b.lower());
        transform
            .check_grid(
                from.unwrap_or(mid.min(to.unwrap_or(mid))),
                to.unwrap_or(mid.max(from.unwrap_or(mid))),
            )
            .map_err(|(key, m)| ck.fail("grid", key, m))?;
    }

    let levels = raw
        .bands
        .as_ref()
        .and_then(|b| b.levels.clone())
        .unwrap_or_else(|| vec![0.5, 0.9, 0.95]);
    check_levels(&levels).map_err(|m| ck.fail("bands", "levels", m))?;

    let gate = raw.gate.clone().unwrap_or_default();
    let max_rhat = gate.max_rhat.unwrap_or(1.01);
    if !(max_rhat.is_finite() && max_rhat > 1.0) {
        return Err(ck.fail(
            "gate",
            "max_rhat",
            format!("must be a finite number above 1, got {max_rhat}"),
        ));
    }
    let min_ess = gate.min_ess.unwrap_or(400.0);
    if !(min_ess.is_finite() && min_ess > 0.0) {
        return Err(ck.fail(
            "gate",
            "min_ess",
            format!("must be a positive finite number, got {min_ess}"),
        ));
    }
    let min_chains = ck.int_in("gate", "min_chains", gate.min_chains, 1, MAX_CHAINS, 2)?;
    let shape = super::shape::resolve_shape(raw.shape.as_ref())
        .map_err(|(key, m)| ck.fail("shape", key, m))?;

    // Data-dependent defaults. Without a summary (e.g. `template` checks) use unit scale.
    let (c, lo, hi) = match summary {
        Some(d) => (d.mean, d.min, d.max),
        None => (0.0, -2.0, 2.0),
    };
    let range = hi - lo;
    let prior = PriorValues {
        centre: centre.unwrap_or(c),
        centre_sd: centre_sd.unwrap_or(range),
        centre_shrink: centre_shrink.unwrap_or(0.02),
        var_shape: var_shape.unwrap_or(2.0),
        var_scale_prior: p.var_scale_prior.unwrap_or(match kernel {
            Kernel::Location => HyperChoice::Fixed,
            Kernel::LocationScale => HyperChoice::Gamma,
        }),
        var_scale: var_scale.unwrap_or(0.01 * range * range),
        var_scale_shape: var_scale_shape.unwrap_or(0.2),
        var_scale_rate: var_scale_rate.unwrap_or(10.0 / (range * range)),
        dirichlet_delta: dirichlet_delta.unwrap_or(1.0),
        // A sparse finite mixture by default (docs/model.md, "Defaults").
        delta_prior: p.delta_prior.unwrap_or(HyperChoice::Gamma),
        // Malsiner-Walli, Frühwirth-Schnatter & Grün (2016): δ ~ Gamma(10, 10 K), prior mean 1/K.
        delta_shape: delta_shape.unwrap_or(10.0),
        delta_rate: delta_rate.unwrap_or(10.0 * components as f64),
        alpha_prior: p.alpha_prior.unwrap_or(HyperChoice::Gamma),
        alpha: alpha.unwrap_or(1.0),
        alpha_shape: alpha_shape.unwrap_or(2.0),
        alpha_rate: alpha_rate.unwrap_or(4.0),
    };
    // Data-derived defaults must be usable numbers; the data checks keep the range within
    // 1e±152 so they are, but a user override next to extreme data might not be.
    for (key, v) in [
        ("centre", prior.centre),
        ("centre_sd", prior.centre_sd),
        ("var_scale", prior.var_scale),
        ("var_scale_rate", prior.var_scale_rate),
    ] {
        let ok = v.is_finite() && (key == "centre" || v > 0.0);
        if !ok {
            return Err(ck.fail(
                "prior",
                key,
                format!("works out as {v} for data spanning {lo} to {hi}; set it explicitly"),
            ));
        }
    }
    let pad = 0.1 * range;
    // Round default ends outward to three significant digits of the range, so the grid
    // reads as plain numbers (59.2 rather than 59.220000000000006).
    let step = 10f64.powf((range.log10()).floor() - 2.0);
    let grid_from = from.unwrap_or(((lo - pad) / step).floor() * step);
    let grid_to = to.unwrap_or(((hi + pad) / step).ceil() * step);
    if !(grid_from.is_finite() && grid_to.is_finite()) || grid_from >= grid_to {
        return Err(ck.fail(
            "grid",
            if from.is_some() { "from" } else { "to" },
            format!("leaves an empty grid: from = {grid_from}, to = {grid_to}"),
        ));
    }

    Ok(RunConfig {
        data_file,
        data_file_text: file,
        column,
        units: data.units.clone(),
        missing: data.missing.unwrap_or(MissingPolicy::Error),
        transform,
        freq_weights,
        resolution,
        subsample,
        kernel,
        weights,
        components,
        prior,
        chains,
        chain_ids,
        warmup,
        draws,
        max_draws,
        thin,
        seed,
        label_moves: s.label_moves.unwrap_or(true),
        allocation,
        resplit_moves,
        relocate_moves,
        grid_from,
        grid_to,
        grid_points: points,
        levels,
        max_rhat,
        min_ess,
        min_chains,
        shape,
        check: super::check::CheckSettings::resolve(raw.check.as_ref(), text, origin)?,
    })
}

/// Checks chain ids: at least one, each in 1..=chains, no repeats; returns them sorted.
pub fn check_chain_ids(ids: &[i64], chains: usize) -> std::result::Result<Vec<u64>, String> {
    if ids.is_empty() {
        return Err("must list at least one chain id".into());
    }
    let mut out: Vec<u64> = Vec::with_capacity(ids.len());
    for &id in ids {
        if id < 1 || id as u64 > chains as u64 {
            return Err(format!(
                "must lie between 1 and [sampler] chains = {chains}, got {id}"
            ));
        }
        if out.contains(&(id as u64)) {
            return Err(format!("lists {id} twice"));
        }
        out.push(id as u64);
    }
    out.sort_unstable();
    Ok(out)
}

impl RunConfig {
    /// The ids of the chains this run samples.
    pub fn chain_id_list(&self) -> Vec<u64> {
        self.chain_ids
            .clone()
            .unwrap_or_else(|| (1..=self.chains as u64).collect())
    }
}

/// Checks credible levels: each strictly inside (0, 1), no repeats.
pub fn check_levels(levels: &[f64]) -> std::result::Result<(), String> {
    if levels.is_empty() {
        return Err("must list at least one level".into());
    }
    for (i, &l) in levels.iter().enumerate() {
        if !(l > 0.0 && l < 1.0) {
            return Err(format!("must lie strictly between 0 and 1, got {l}"));
        }
        if levels[..i].contains(&l) {
            return Err(format!("lists {l} twice"));
        }
    }
    Ok(())
}

fn fresh_seed() -> u64 {
    let nanos = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|d| d.as_nanos() as u64)
        .unwrap_or(0);
    // Keep it representable as a TOML integer (i64).
    crate::sampler::rng::splitmix64(nanos) >> 1
}

impl RunConfig {
    /// The resolved config as a [`RawConfig`] with every key that affects the run filled in.
    pub fn to_raw(&self) -> RawConfig {
        let p = &self.prior;
        let loc = self.kernel == Kernel::Location;
        let gamma_b = p.var_scale_prior == HyperChoice::Gamma;
        let dir = self.weights == WeightsKind::Dirichlet;
        let gamma_a = p.alpha_prior == HyperChoice::Gamma;
        let gamma_d = p.delta_prior == HyperChoice::Gamma;
        RawConfig {
            data: Some(DataSection {
                file: Some(self.data_file_text.clone()),
                column: Some(self.column.clone()),
                units: self.units.clone(),
                missing: Some(self.missing),
                transform: Some(self.transform.kind()),
                lower: self.transform.bounds().map(|b| b.lower()),
                upper: self.transform.bounds().map(|b| b.upper()),
                weights: self.freq_weights.clone(),
                resolution: self.resolution,
                subsample: self.subsample.map(|m| m as i64),
            }),
            model: Some(ModelSection {
                kernel: Some(self.kernel),
                weights: Some(self.weights),
                components: Some(self.components as i64),
            }),
            prior: Some(PriorSection {
                centre: Some(p.centre),
                centre_sd: loc.then_some(p.centre_sd),
                centre_shrink: (!loc).then_some(p.centre_shrink),
                var_shape: Some(p.var_shape),
                var_scale_prior: Some(p.var_scale_prior),
                var_scale: (!gamma_b).then_some(p.var_scale),
                var_scale_shape: gamma_b.then_some(p.var_scale_shape),
                var_scale_rate: gamma_b.then_some(p.var_scale_rate),
                dirichlet_delta: (dir && !gamma_d).then_some(p.dirichlet_delta),
                delta_prior: dir.then_some(p.delta_prior),
                delta_shape: (dir && gamma_d).then_some(p.delta_shape),
                delta_rate: (dir && gamma_d).then_some(p.delta_rate),
                alpha_prior: (!dir).then_some(p.alpha_prior),
                alpha: (!dir && !gamma_a).then_some(p.alpha),
                alpha_shape: (!dir && gamma_a).then_some(p.alpha_shape),
                alpha_rate: (!dir && gamma_a).then_some(p.alpha_rate),
            }),
            sampler: Some(SamplerSection {
                chains: Some(self.chains as i64),
                warmup: Some(self.warmup as i64),
                draws: Some(self.draws as i64),
                max_draws: Some(self.max_draws as i64),
                thin: Some(self.thin as i64),
                seed: Some(self.seed as i64),
                chain_ids: self
                    .chain_ids
                    .as_ref()
                    .map(|v| v.iter().map(|&i| i as i64).collect()),
                label_moves: (!dir).then_some(self.label_moves),
                allocation: Some(self.allocation),
                resplit_moves: (self.resplit_moves > 0).then_some(self.resplit_moves as i64),
                relocate_moves: (self.relocate_moves > 0).then_some(self.relocate_moves as i64),
            }),
            grid: Some(GridSection {
                from: Some(self.grid_from),
                to: Some(self.grid_to),
                points: Some(self.grid_points as i64),
            }),
            bands: Some(BandsSection {
                levels: Some(self.levels.clone()),
            }),
            gate: Some(GateSection {
                max_rhat: Some(self.max_rhat),
                min_ess: Some(self.min_ess),
                min_chains: Some(self.min_chains as i64),
            }),
            shape: Some(super::shape::shape_section(&self.shape)),
            check: Some(self.check.to_section()),
        }
    }

    /// The resolved config as TOML text, with a header line.
    pub fn to_toml(&self) -> Result<String> {
        let body = toml::to_string(&self.to_raw())
            .map_err(|e| Error::internal(format!("cannot write resolved config: {e}")))?;
        Ok(format!(
            "# Resolved by mixband {}: every default filled in. Sampling this file again\n# reproduces the run exactly.\n\n{body}",
            env!("CARGO_PKG_VERSION")
        ))
    }
}

/// `[data] transform` with `lower` and `upper`: the bounds are required by "logit" (both
/// finite, lower < upper) and refused with any other transform.
fn resolve_transform(data: &DataSection, ck: &Checker) -> Result<Transform> {
    let kind = data.transform.unwrap_or_default();
    let lower = ck.finite("data", "lower", data.lower)?;
    let upper = ck.finite("data", "upper", data.upper)?;
    if kind != TransformKind::Logit {
        for (key, v) in [("lower", lower), ("upper", upper)] {
            if v.is_some() {
                return Err(ck.fail(
                    "data",
                    key,
                    "is a bound of transform = \"logit\" and is refused with any other \
                     transform; remove it or set transform = \"logit\""
                        .into(),
                ));
            }
        }
    }
    Ok(match kind {
        TransformKind::None => Transform::None,
        TransformKind::Log => Transform::Log,
        TransformKind::Logit => {
            let l =
                lower.ok_or_else(|| ck.missing_with("data", "lower", "transform = \"logit\""))?;
            let u =
                upper.ok_or_else(|| ck.missing_with("data", "upper", "transform = \"logit\""))?;
            if l >= u {
                return Err(ck.fail(
                    "data",
                    "lower",
                    format!("must be below [data] upper, got lower = {l}, upper = {u}"),
                ));
            }
            Transform::logit(l, u)?
        }
    })
}
