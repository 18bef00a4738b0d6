//! The commented starter config printed by `mixband template`; it lists every key.
//! A unit test parses it, so it cannot drift from what the parser accepts.

pub const TEMPLATE: &str = r#"# mixband run configuration. Every key except [data] file and column is optional;
# the values shown are the defaults ("from data" ones are computed from the sample and
# written into RUN/config.toml after a run).

[data]
file = "measurements.csv"     # CSV with a header row; relative to this file's folder
column = "value"              # header name of the numeric column
# units = "mm"                # used in axis labels
missing = "error"             # empty cells: "error" or "drop" (the run reports how many)
transform = "none"            # "none", "log" for positive data: fit ln x, report the density of x,
                              # or "logit" for data between lower and upper: fit ln((x - lower)/(upper - x))
# lower = 0.0                 # bounds of transform = "logit" (required with it, refused otherwise);
# upper = 1.0                 # values on a bound are accepted only with a resolution (censored there)
# weights = "count"           # column of integer frequency weights (binned/tabulated data; 0 drops a row)
# resolution = 0.1            # values were recorded to this step: each x stands for [x - r/2, x + r/2)
# subsample = 10000           # fit at most this many observations, a random subsample (docs/outputs.md)
                              # (`sample` notes on stderr a lattice the values lie on, and heaping)

[model]
kernel = "location-scale"     # "location": one common sd (bandwidth) for all components
                              # "location-scale": each component its own sd
weights = "dirichlet"         # "dirichlet" (finite, symmetric) or "stick-breaking" (truncated)
components = 10               # K; default 10 for dirichlet, 25 for stick-breaking

[prior]                       # in data units; see docs/model.md for each full conditional
# centre = 0.0                # m, centre of component means (default: sample mean)
# centre_sd = 1.0             # s, sd of component means, location kernel (default: data range)
# centre_shrink = 0.02        # kappa: mean_k | var_k ~ N(m, var_k / kappa), location-scale kernel
# var_shape = 2.0             # a: var ~ Inverse-Gamma(a, b)
# var_scale_prior = "gamma"   # "fixed" or "gamma" (default: gamma for location-scale, fixed for location)
# var_scale = 1.0             # b when fixed (default: (range/10)^2)
# var_scale_shape = 0.2       # b ~ Gamma(shape, rate) when var_scale_prior = "gamma"
# var_scale_rate = 1.0        # (default: 10 / range^2)
# delta_prior = "gamma"       # "gamma" (default, a sparse finite mixture) or "fixed"
# dirichlet_delta = 1.0       # delta of the symmetric Dirichlet weights when delta_prior = "fixed"
# delta_shape = 10.0          # delta ~ Gamma(shape, rate) when delta_prior = "gamma"
# delta_rate = 100.0          # (default: 10 K, prior mean 1/K; Malsiner-Walli et al. 2016)
# alpha_prior = "gamma"       # stick-breaking concentration: "fixed" or "gamma"
# alpha = 1.0                 # alpha when fixed
# alpha_shape = 2.0           # alpha ~ Gamma(shape, rate), prior mean 0.5 (docs/model.md)
# alpha_rate = 4.0

[sampler]
chains = 4
warmup = 1000                 # sweeps discarded per chain (defaults: docs/model.md, "Defaults")
draws = 1000                  # kept draws per chain
# max_draws = 12000           # a run that fails the gate may grow to this many (default: 12000 or 4 x draws)
thin = 1                      # keep every thin-th sweep after warm-up
# seed = 12345                # without a seed one is chosen and recorded in RUN/config.toml
label_moves = true            # label-switching moves for stick-breaking weights (docs/model.md)
# allocation = "collapsed"    # "collapsed" (default up to 20 000 observations) or "conditional"
resplit_moves = 0             # re-split moves of a pair of components per sweep (docs/model.md)
relocate_moves = 0            # relocation moves of one component per sweep (docs/model.md)
# chain_ids = [1, 2]          # run only these chains, for jobs joined by `mixband merge`

[grid]                        # where the density is evaluated
# from = 0.0                  # default: data minimum - 10% of the range
# to = 1.0                    # default: data maximum + 10% of the range
points = 200

[bands]
levels = [0.5, 0.9, 0.95]     # central credible levels, each strictly between 0 and 1

[gate]                        # convergence gate (Vehtari et al. 2021 recommendations)
max_rhat = 1.01
min_ess = 400
min_chains = 2

[shape]                       # where the bumps are (docs/model.md, "Bumps, dips and regions")
# regions = [[70.0, 76.0]]    # intervals [from, to] to ask about: P(a mode inside), the mass inside
region_mass = 0.05            # report P(region mass > this) for each region
dip_ratio = 0.9               # a dip is visible when its density is below this share of the lower peak

[check]                       # model check against the data (docs/outputs.md, "Model check")
tail_low = 0.01               # posterior predictive p-value below this: flagged
tail_high = 0.99              # p-value above this: flagged
replicates = 500              # replicated data sets, one per evenly spaced kept draw
max_observations = 2000       # larger samples are checked on a random subsample of this size
loo_draws = 1000              # kept draws used for LOO-PIT
"#;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn template_parses_and_resolves() {
        let raw = crate::config::parse_config_str(TEMPLATE, "template").unwrap();
        let cfg =
            crate::config::resolve(&raw, TEMPLATE, "template", std::path::Path::new("."), None)
                .unwrap();
        assert_eq!(cfg.components, 10);
        assert_eq!(cfg.levels, vec![0.5, 0.9, 0.95]);
        assert_eq!(cfg.shape, crate::summary::ShapeSpec::default());
        // The commented regions line, switched on, parses (integers or floats).
        let on = TEMPLATE.replace("# regions = [[70.0, 76.0]]", "regions = [[70, 76.5]]");
        let raw = crate::config::parse_config_str(&on, "template").unwrap();
        let cfg =
            crate::config::resolve(&raw, &on, "template", std::path::Path::new("."), None).unwrap();
        assert_eq!(cfg.shape.regions.len(), 1);
        assert_eq!(cfg.shape.regions[0].from, 70.0);
        // The logit lines, switched on, resolve to the logit on (0, 1).
        let on = TEMPLATE
            .replace("transform = \"none\"", "transform = \"logit\"")
            .replace("# lower = 0.0", "lower = 0.0")
            .replace("# upper = 1.0", "upper = 1.0");
        let raw = crate::config::parse_config_str(&on, "template").unwrap();
        let cfg =
            crate::config::resolve(&raw, &on, "template", std::path::Path::new("."), None).unwrap();
        assert_eq!(
            cfg.transform,
            crate::data::Transform::logit(0.0, 1.0).unwrap()
        );
    }
}
