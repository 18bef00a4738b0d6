//! `[data] transform = "logit"` with `[data] lower` and `upper`: the logit-normal summaries
//! against scipy (tests/reference/beta_logit.py, fixtures/beta_logit.json), the Jacobian
//! integrating to one and agreeing with the CDF, no mass outside the bounds, fits to Beta
//! samples against scipy's Beta density compared with a Gaussian kernel estimate, data
//! recorded at a resolution with values on a bound, and the errors for bad keys and values.

mod common;
mod validation_support;

use std::path::{Path, PathBuf};

use mixband::data::Transform;
use mixband::run::Prepared;
use mixband::sampler::ChainPlan;
use mixband::store::DrawRow;
use mixband::summary::{
    mixture_cdf_on, mixture_density_on, mixture_mean_on, mixture_quantile_on, mixture_sd_on,
};
use validation_support::{chain_states, fixture, floats, ise, kde, silverman_bandwidth};

fn row(weight: &[f64], mean: &[f64], sd: &[f64]) -> DrawRow {
    DrawRow {
        iteration: 1,
        loglik: 0.0,
        occupied: weight.len() as u32,
        concentration: 1.0,
        weight: weight.to_vec(),
        mean: mean.to_vec(),
        sd: sd.to_vec(),
    }
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("mixband-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

#[test]
fn one_component_matches_scipy_logit_normal_moments_and_cdf() {
    // Mean and sd by scipy.integrate.quad, CDF by scipy.stats.norm.cdf at the logit
    // (fixtures/beta_logit.json, "logit_normal"); quantiles invert the CDF.
    let fx = fixture("beta_logit.json");
    for c in fx["logit_normal"].as_array().unwrap() {
        let f = |k: &str| c[k].as_f64().unwrap();
        let t = Transform::logit(f("lower"), f("upper")).unwrap();
        let r = row(&[1.0], &[f("mu")], &[f("sd")]);
        let (m, s) = (mixture_mean_on(&r, t), mixture_sd_on(&r, t));
        assert!(
            (m - f("mean")).abs() <= 1e-10 * f("mean").abs().max(1.0),
            "{c}: mean {m}"
        );
        assert!((s / f("sd_x") - 1.0).abs() < 1e-9, "{c}: sd {s}");
        for (x, want) in floats(&c["x"]).into_iter().zip(floats(&c["cdf"])) {
            let got = mixture_cdf_on(&r, x, t);
            // statrs' erfc against scipy's ndtr: agreement to about 1e-11.
            assert!((got - want).abs() < 1e-10, "{c}: cdf at {x}: {got}");
            if !(1e-6..=1.0 - 1e-6).contains(&want) {
                continue; // p this close to 0 or 1 pins x only loosely
            }
            let q = mixture_quantile_on(&r, want, t);
            assert!(
                (q - x).abs() < 1e-9 * (f("upper") - f("lower")),
                "{c}: quantile {q} vs {x}"
            );
        }
    }
}

/// ∫_a^b g by composite Simpson's rule with m (even) intervals.
fn simpson(g: impl Fn(f64) -> f64, a: f64, b: f64, m: usize) -> f64 {
    let h = (b - a) / m as f64;
    let mut acc = g(a) + g(b);
    for i in 1..m {
        acc += g(a + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
    }
    acc * h / 3.0
}

#[test]
fn jacobian_integrates_to_one_and_no_mass_lies_outside_the_bounds() {
    // Change of variables (common practice, no source): ∫_l^u f_X = 1 and ∫_l^x f_X =
    // F_Y(logit x), checked by Simpson's rule on the original scale for a two-component
    // draw with mass near both bounds.
    let t = Transform::logit(2.0, 7.0).unwrap();
    let r = row(&[0.35, 0.65], &[-1.5, 1.2], &[0.6, 0.9]);
    let f = |x: f64| mixture_density_on(&r, x, t);
    let total = simpson(f, 2.0, 7.0, 20_000);
    assert!((total - 1.0).abs() < 1e-9, "mass {total}");
    for x in [2.3, 3.9, 5.0, 6.8] {
        let part = simpson(f, 2.0, x, 20_000);
        let cdf = mixture_cdf_on(&r, x, t);
        assert!((part - cdf).abs() < 1e-9, "at {x}: {part} vs {cdf}");
    }
    // Nothing outside: density 0 on and beyond the bounds, CDF 0 below and 1 above, so a
    // region reaching past a bound gets exactly the mass inside.
    for x in [-5.0, 1.999, 2.0, 7.0, 7.001, 50.0] {
        assert_eq!(f(x), 0.0, "density at {x}");
    }
    assert_eq!(mixture_cdf_on(&r, 2.0, t), 0.0);
    assert_eq!(mixture_cdf_on(&r, -1.0, t), 0.0);
    assert_eq!(mixture_cdf_on(&r, 7.0, t), 1.0);
    assert_eq!(mixture_cdf_on(&r, 9.0, t), 1.0);
}

/// Config text for in-memory data on (lower, upper); `extra` goes into [data].
fn logit_config(lower: f64, upper: f64, extra: &str) -> String {
    format!(
        "[data]\nfile = \"memory.csv\"\ncolumn = \"x\"\ntransform = \"logit\"\nlower = {lower:?}\n\
         upper = {upper:?}\n{extra}\n[sampler]\nseed = 1\n"
    )
}

fn prepare_text(text: &str, x: &[f64]) -> mixband::Result<Prepared> {
    let mut csv = String::from("x\n");
    for v in x {
        csv.push_str(&format!("{v:?}\n"));
    }
    Prepared::from_text(text, "logit-test", Path::new("."), Some(csv.as_bytes()))
}

/// The posterior mean density on the original scale at `grid` from one chain of `plan`:
/// f_X(x) = f_Y(t(x)) |dt/dx|, f_Y from the standard-unit states.
fn fit_logit_mean(prep: &Prepared, grid: &[f64], plan: ChainPlan, seed: u64) -> Vec<f64> {
    let t = prep.config.transform;
    let (c, s) = (prep.data.centre, prep.data.scale);
    let states = chain_states(&prep.data.z, &prep.prior, seed, 1, plan);
    let n = states.len() as f64;
    grid.iter()
        .map(|&x| {
            let z = (t.forward(x) - c) / s;
            let jac = t.log_jacobian(x).exp();
            states.iter().map(|st| st.density(z) / s).sum::<f64>() * jac / n
        })
        .collect()
}

/// ISEs and mass of one replicate.
struct Fit {
    ise_post: f64,
    ise_kde: f64,
    mass_post: f64,
    mass_kde: f64,
}

/// Fits replicate `r` of a fixture case with defaults (one chain of 250 + 250 sweeps; the
/// mean ISEs below moved by under 0.02 in ratio with 400 + 400 and 1500 + 1500).
fn beta_replicate(case: &serde_json::Value, r: usize) -> Fit {
    let (lo, hi) = (
        case["lower"].as_f64().unwrap(),
        case["upper"].as_f64().unwrap(),
    );
    let x = floats(&case["samples"][r]);
    let grid = floats(&case["grid"]);
    let truth = floats(&case["pdf"]);
    let prep = prepare_text(&logit_config(lo, hi, ""), &x).unwrap();
    let plan = ChainPlan {
        warmup: 250,
        draws: 250,
        thin: 1,
    };
    let post = fit_logit_mean(&prep, &grid, plan, 7 + r as u64);
    let k = kde(&x, silverman_bandwidth(&x), &grid);
    // The grid is the midpoints of equal cells of (lower, upper): midpoint-rule masses.
    let h = (hi - lo) / grid.len() as f64;
    let mass = |f: &[f64]| f.iter().sum::<f64>() * h;
    Fit {
        ise_post: ise(&grid, &post, &truth),
        ise_kde: ise(&grid, &k, &truth),
        mass_post: mass(&post),
        mass_kde: mass(&k),
    }
}

/// Fits every replicate of the fixture case `name`, prints the figures, and returns
/// `Err` when the posterior mean's ISE is not below the kernel estimate's on average.
fn beta_benchmark(name: &str) -> Result<(), String> {
    let fx = fixture("beta_logit.json");
    let case = fx["cases"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["name"] == name)
        .unwrap();
    let reps = case["samples"].as_array().unwrap().len();
    let fits: Vec<Fit> = (0..reps).map(|r| beta_replicate(case, r)).collect();
    for (r, f) in fits.iter().enumerate() {
        eprintln!(
            "{name} replicate {r}: ISE posterior mean (logit) {:.5}, ISE Silverman KDE {:.5}, \
             ratio {:.3}; mass inside: posterior {:.4}, KDE {:.4}",
            f.ise_post,
            f.ise_kde,
            f.ise_post / f.ise_kde,
            f.mass_post,
            f.mass_kde
        );
        // Midpoint rule on 1000 cells and one chain of 250 draws: within 0.01.
        assert!(
            (f.mass_post - 1.0).abs() < 0.01,
            "{name} {r}: mass {}",
            f.mass_post
        );
    }
    let mean = |g: &dyn Fn(&Fit) -> f64| fits.iter().map(g).sum::<f64>() / reps as f64;
    let (ip, ik) = (mean(&|f| f.ise_post), mean(&|f| f.ise_kde));
    eprintln!(
        "{name}: mean ISE posterior {ip:.5}, KDE {ik:.5}, ratio {:.3}",
        ip / ik
    );
    if ip < ik {
        Ok(())
    } else {
        Err(format!("{name}: mean ISE {ip:.5} not below KDE {ik:.5}"))
    }
}

#[test]
fn logit_fits_to_beta_samples_beat_the_kernel_estimate() {
    // Three samples of 500 from Beta(2, 5) on (0, 1) and from Beta(2, 2) on (10, 30)
    // (scipy.stats.beta.rvs); truth scipy.stats.beta.pdf (fixture). The kernel estimate at
    // Silverman's bandwidth (Silverman 1986, eq. 3.31) knows nothing of the bounds and
    // spills mass over them. Requirement, as for the Marron-Wand benchmark
    // (tests/validation_marron_wand.rs): the posterior mean of the logit fit has the
    // smaller integrated squared error over (lower, upper) on average over the
    // replicates, and unit mass inside every time. Measured: mean ISE ratio 0.89 on
    // Beta(2, 5) (replicates 1.03, 1.06 and 0.78: two of three slightly worse) and 0.46
    // on Beta(2, 2) (0.45, 0.20, 0.60).
    beta_benchmark("beta_2_5").unwrap();
    beta_benchmark("beta_2_2_on_10_30").unwrap();
}

/// Beta(5, 1.5) on (0, 1), whose density falls to 0 at 1 like (1 − x)^½ (infinite slope):
/// the logit fit with the default prior is WORSE than the kernel estimate here (mean ISE
/// ratio 1.38 over the three replicates: 0.60, 3.5 and 1.35; 1.37 with 1500 + 1500
/// sweeps, so not a mixing problem). The fit overshoots the peak near 0.9 and undershoots
/// the shoulder below it; on the logit scale this density has tails e^(5y) and e^(−1.5y),
/// far from normal, and the Jacobian 1/(x(1 − x)) magnifies errors in the right tail.
/// Kept, ignored and failing, to show the finding (docs/model.md).
#[test]
#[ignore]
fn logit_fit_to_beta_5_1_5_against_the_kernel_estimate() {
    beta_benchmark("beta_5_1.5").unwrap();
}

#[test]
fn default_grid_is_strictly_inside_and_bad_keys_and_values_are_named() {
    let x = [0.2, 0.5, 0.7, 0.98, 0.3, 0.35];
    let prep = prepare_text(&logit_config(0.0, 1.0, ""), &x).unwrap();
    let c = &prep.config;
    // The padded data range (0.2 to 0.98, padded by a tenth of the range) reaches past 1,
    // so the upper end is cut there and moved half a step inside.
    assert!(
        c.grid_from > 0.0 && c.grid_to < 1.0,
        "{} {}",
        c.grid_from,
        c.grid_to
    );
    let h = (1.0 - c.grid_from) / (c.grid_points as f64 - 0.5);
    assert!(
        (c.grid_to - (1.0 - 0.5 * h)).abs() < 1e-12,
        "{} {} {}",
        c.grid_from,
        c.grid_to,
        c.grid_points
    );
    // The fitted scale is the logit: the sampler sees ln(x/(1 − x)).
    assert!((prep.data.summary.max - (0.98f64 / 0.02).ln()).abs() < 1e-12);
    // The resolved config writes the bounds back.
    let back = toml::to_string(&c.to_raw()).unwrap();
    assert!(
        back.contains("transform = \"logit\"")
            && back.contains("lower = 0.0")
            && back.contains("upper = 1.0"),
        "{back}"
    );

    let err = |text: &str, x: &[f64]| prepare_text(text, x).unwrap_err().to_string();
    let base = "[data]\nfile = \"memory.csv\"\ncolumn = \"x\"\n";
    let e = err(&format!("{base}transform = \"logit\"\nupper = 1\n"), &x);
    assert!(e.contains("[data] lower") && e.contains("logit"), "{e}");
    let e = err(&format!("{base}transform = \"logit\"\nlower = 0\n"), &x);
    assert!(e.contains("[data] upper"), "{e}");
    let e = err(&format!("{base}transform = \"log\"\nlower = 0\n"), &x);
    assert!(e.contains("[data] lower") && e.contains("(line 5)"), "{e}");
    let e = err(&format!("{base}upper = 3\n"), &x);
    assert!(e.contains("[data] upper"), "{e}");
    let e = err(&logit_config(1.0, 1.0, ""), &x);
    assert!(e.contains("[data] lower must be below [data] upper"), "{e}");
    let e = err(
        &format!("{base}transform = \"logit\"\nlower = -inf\nupper = 1\n"),
        &x,
    );
    assert!(e.contains("[data] lower must be finite"), "{e}");
    let e = err(
        &format!("{}[grid]\nfrom = 0\n", logit_config(0.0, 1.0, "")),
        &x,
    );
    assert!(e.contains("[grid] from must lie strictly inside"), "{e}");
    let e = err(
        &format!("{}[grid]\nto = 1.2\n", logit_config(0.0, 1.0, "")),
        &x,
    );
    assert!(e.contains("[grid] to must lie strictly inside"), "{e}");

    // Values on or beyond a bound, by line and data row.
    let bad = [0.2, 0.0, 0.5, 1.0, 1.3];
    let e = err(&logit_config(0.0, 1.0, ""), &bad);
    assert!(
        e.contains("memory.csv") && e.contains("3 on or beyond a bound"),
        "{e}"
    );
    for want in [
        "line 3 (data row 2) holds 0",
        "line 5 (data row 4) holds 1",
        "line 6 (data row 5) holds 1.3",
    ] {
        assert!(e.contains(want), "{want}: {e}");
    }
    // With a resolution, values on a bound are accepted; beyond it they are not.
    let e = err(&logit_config(0.0, 1.0, "resolution = 0.1"), &bad);
    assert!(
        e.contains("1 beyond a bound") && e.contains("holds 1.3"),
        "{e}"
    );
    let p = prepare_text(&logit_config(0.0, 1.0, "resolution = 0.1"), &bad[..4]).unwrap();
    let cells = p.cells.unwrap();
    assert_eq!(cells.lo[0], f64::NEG_INFINITY);
    assert_eq!(*cells.hi.last().unwrap(), f64::INFINITY);
}

#[test]
fn rounded_beta_data_with_values_on_the_bounds_fit_through_the_cli() {
    // Beta(2, 2) on (10, 30) (fixture sample) recorded to 2 (a tenth of the width), so a
    // few values fall on 10 and 30: their cells are censored at the bound. The whole
    // `sample` command runs; bands.csv stays inside the bounds with unit mass, and the
    // posterior mean is closer to scipy's Beta density than the kernel estimate of the
    // recorded values.
    let fx = fixture("beta_logit.json");
    let case = &fx["cases"][2];
    assert_eq!(case["name"], "beta_2_2_on_10_30");
    let x: Vec<f64> = floats(&case["samples"][0])
        .iter()
        .map(|v| 10.0 + 2.0 * ((v - 10.0) / 2.0).round())
        .collect();
    let on_bounds = x.iter().filter(|&&v| v == 10.0 || v == 30.0).count();
    assert!(on_bounds >= 2, "{on_bounds} values on a bound");
    let dir = scratch("logit-cli");
    let mut csv = String::from("x\n");
    for v in &x {
        csv.push_str(&format!("{v}\n"));
    }
    std::fs::write(dir.join("d.csv"), csv).unwrap();
    std::fs::write(
        dir.join("run.toml"),
        "[data]\nfile = \"d.csv\"\ncolumn = \"x\"\ntransform = \"logit\"\nlower = 10\nupper = 30\n\
         resolution = 2\n[sampler]\nchains = 2\nwarmup = 200\ndraws = 200\nseed = 5\n\
         [grid]\npoints = 400\n",
    )
    .unwrap();
    let out = dir.join("run");
    // Exit 0, or 3 when the gate fails on this short run; outputs are still written.
    common::sample_in_process(&dir.join("run.toml"), &out);
    let text = std::fs::read_to_string(out.join("bands.csv")).unwrap();
    let rows = common::bands_mean(&out.join("bands.csv"));
    let grid: Vec<f64> = rows.iter().map(|r| r.0).collect();
    let mean: Vec<f64> = rows.iter().map(|r| r.1).collect();
    // The default grid: the midpoints of 400 equal cells of (10, 30).
    assert!((grid[0] - 10.025).abs() < 1e-9 && (grid[399] - 29.975).abs() < 1e-9);
    let h = 20.0 / 400.0;
    let mass = mean.iter().sum::<f64>() * h;
    assert!((mass - 1.0).abs() < 0.01, "mass {mass}");
    // Beta(2, 2) on (10, 30): 6 u (1 − u) / 20 at u = (x − 10)/20 (the Beta(2, 2) density
    // 6u(1 − u), closed form; the fixture's scipy values agree on its own grid).
    let truth: Vec<f64> = grid
        .iter()
        .map(|&v| {
            let u = (v - 10.0) / 20.0;
            6.0 * u * (1.0 - u) / 20.0
        })
        .collect();
    let ip = ise(&grid, &mean, &truth);
    let ik = ise(&grid, &kde(&x, silverman_bandwidth(&x), &grid), &truth);
    eprintln!("rounded beta_2_2_on_10_30 through the CLI: ISE posterior mean {ip:.6}, KDE {ik:.6}");
    assert!(ip < ik, "ISE {ip} not below KDE {ik}");
    // `bands` on a grid reaching a bound is refused by its option, and bands.csv is kept.
    let code = mixband::cli::main_with_args(
        ["mixband", "bands", out.to_str().unwrap(), "--from", "10"].map(std::ffi::OsString::from),
    );
    assert_ne!(code, 0);
    assert_eq!(
        std::fs::read_to_string(out.join("bands.csv")).unwrap(),
        text
    );
    let cfg = std::fs::read_to_string(out.join("config.toml")).unwrap();
    assert!(
        cfg.contains("transform = \"logit\"") && cfg.contains("lower = 10.0"),
        "{cfg}"
    );
    // summary.json: the median on the original scale, near 20 (Beta(2, 2) is symmetric).
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    let median = summary["quantiles"][1]["posterior"]["median"]
        .as_f64()
        .unwrap();
    assert!((median - 20.0).abs() < 1.0, "median {median}");
    let _ = std::fs::remove_dir_all(&dir);
}
