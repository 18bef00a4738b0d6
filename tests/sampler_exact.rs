//! One-component posteriors with known predictive densities, run through the whole
//! pipeline: config file → `Prepared` → `execute` (trace store on disk) → stored draws →
//! densities on the grid → `Bands` mean. The pointwise posterior mean density must match
//! the exact posterior predictive density within 4 Monte Carlo standard errors at every
//! grid point (batch means per chain, combined over chains), and a slightly wrong
//! predictive must be rejected by the same check, so the check has power.

mod common;

use std::path::Path;

use common::{batch_means_se, run_to_density, scratch_dir};
use mixband::summary::{linspace, Bands};
use statrs::distribution::{Continuous, StudentsT};

/// An invented sample (n = 12).
const DATA: [f64; 12] = [
    9.1, 10.4, 11.8, 12.2, 8.7, 10.9, 11.3, 13.5, 10.1, 9.8, 12.9, 11.0,
];
const GRID_POINTS: usize = 25;
const CHAINS: usize = 2;

/// Runs `config_body` (everything but [data] and [grid]) on [`DATA`] and returns the grid,
/// the bands' posterior mean and its Monte Carlo standard error at every grid point.
fn run_pipeline(
    tag: &str,
    config_body: &str,
    from: f64,
    to: f64,
) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let dir = scratch_dir(tag);
    let mut csv = String::from("y\n");
    for v in DATA {
        csv.push_str(&format!("{v}\n"));
    }
    std::fs::write(dir.join("data.csv"), csv).unwrap();
    let config = format!(
        "[data]\nfile = \"data.csv\"\ncolumn = \"y\"\n\n{config_body}\n[grid]\nfrom = {from}\nto = {to}\npoints = {GRID_POINTS}\n"
    );
    let (prep, _draws, dens) = run_to_density(&dir, &config, (from, to, GRID_POINTS));
    let grid = dens.grid.clone();
    let bands = Bands::new(&dens, &prep.config.levels);
    assert_eq!(dens.chains, CHAINS);
    let se = (0..grid.len())
        .map(|g| {
            let v: f64 = (0..dens.chains)
                .map(|c| batch_means_se(&dens.series(c, g)).powi(2))
                .sum();
            v.sqrt() / dens.chains as f64
        })
        .collect();
    remove(&dir);
    (grid, bands.mean, se)
}

fn remove(dir: &Path) {
    let _ = std::fs::remove_dir_all(dir);
}

/// Number of grid points where |estimate − reference| exceeds 4 standard errors.
fn misses(grid: &[f64], est: &[f64], se: &[f64], reference: impl Fn(f64) -> f64) -> usize {
    grid.iter()
        .zip(est.iter().zip(se))
        .filter(|(&x, (&m, &s))| (m - reference(x)).abs() > 4.0 * s)
        .count()
}

fn data_stats() -> (f64, f64, f64) {
    let n = DATA.len() as f64;
    let xbar = DATA.iter().sum::<f64>() / n;
    let ss = DATA.iter().map(|v| (v - xbar) * (v - xbar)).sum::<f64>();
    (n, xbar, ss)
}

/// Location-scale kernel, K = 1, fixed normal-inverse-gamma prior NIG(m, κ, a, b):
/// the posterior predictive is Student-t with 2a_n degrees of freedom, location m_n and
/// squared scale b_n (κ_n + 1)/(a_n κ_n), where κ_n = κ + n, m_n = (κ m + n x̄)/κ_n,
/// a_n = a + n/2, b_n = b + SS/2 + κ n (x̄ − m)²/(2κ_n)
/// (Murphy 2007, "Conjugate Bayesian analysis of the Gaussian distribution", NIG posterior
/// predictive; Gelman et al., BDA3 §3.3). Draws are iid here; the standard error is still
/// estimated by batch means.
#[test]
fn location_scale_one_component_matches_student_t_predictive() {
    let (m, kappa, a, b) = (10.0, 0.5, 3.0, 4.0);
    let (n, xbar, ss) = data_stats();
    let kn = kappa + n;
    let mn = (kappa * m + n * xbar) / kn;
    let an = a + n / 2.0;
    let bn = b + 0.5 * ss + kappa * n * (xbar - m).powi(2) / (2.0 * kn);
    let scale = (bn * (kn + 1.0) / (an * kn)).sqrt();
    let exact = StudentsT::new(mn, scale, 2.0 * an).unwrap();
    let body = format!(
        "[model]\nkernel = \"location-scale\"\nweights = \"dirichlet\"\ncomponents = 1\n\n\
         [prior]\ncentre = {m}\ncentre_shrink = {kappa}\nvar_shape = {a}\nvar_scale_prior = \"fixed\"\nvar_scale = {b}\n\n\
         [sampler]\nchains = {CHAINS}\nwarmup = 10\ndraws = 6000\nseed = 424242\n"
    );
    let (grid, est, se) = run_pipeline("exact-ls", &body, mn - 4.0 * scale, mn + 4.0 * scale);
    let bad = misses(&grid, &est, &se, |x| exact.pdf(x));
    assert_eq!(
        bad, 0,
        "posterior mean density misses the Student-t predictive at {bad} of {GRID_POINTS} points"
    );
    // Power: dropping the (κ_n + 1)/κ_n factor (the predictive of a known-mean model) is
    // about a 4% change of scale and must be detected.
    let wrong = StudentsT::new(mn, (bn / an).sqrt(), 2.0 * an).unwrap();
    let bad = misses(&grid, &est, &se, |x| wrong.pdf(x));
    assert!(
        bad >= 5,
        "a wrong predictive passed at all but {bad} points; the check has no power"
    );
}

/// Location kernel, K = 1, independent priors μ ~ N(m, s²), σ² ~ IG(a, b) (semi-conjugate,
/// no closed-form posterior). Integrating σ² analytically (Inverse-Gamma normalising
/// constant) gives p(μ | x) ∝ N(μ; m, s²) (b + S(μ)/2)^{−a_n}, S(μ) = Σ (x_i − μ)²,
/// a_n = a + n/2, and the predictive given μ is a scale mixture of normals over
/// IG(a_n, b + S(μ)/2), i.e. Student-t with 2a_n degrees of freedom, location μ and squared
/// scale (b + S(μ)/2)/a_n (common practice, no source; derivation above). The remaining
/// integral over μ is done by the trapezoid rule on 20 001 points, far finer than the
/// posterior's width. The Gibbs draws (μ | σ², then σ² | μ) are autocorrelated, so batch
/// means matter here.
#[test]
fn location_one_component_matches_semi_conjugate_predictive() {
    let (m, s, a, b) = (10.0, 3.0, 3.0, 4.0);
    let (n, xbar, ss) = data_stats();
    let an = a + n / 2.0;
    let sx = (ss / (n - 1.0)).sqrt();
    let mus = linspace(xbar - 6.0 * sx, xbar + 6.0 * sx, 20_001);
    let log_post: Vec<f64> = mus
        .iter()
        .map(|&mu| {
            let s_mu = ss + n * (xbar - mu).powi(2);
            -0.5 * ((mu - m) / s).powi(2) - an * (b + 0.5 * s_mu).ln()
        })
        .collect();
    let top = log_post.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let mut w: Vec<f64> = log_post.iter().map(|l| (l - top).exp()).collect();
    w[0] *= 0.5;
    *w.last_mut().unwrap() *= 0.5;
    let total: f64 = w.iter().sum();
    let components: Vec<(f64, StudentsT)> = mus
        .iter()
        .zip(&w)
        .map(|(&mu, &wi)| {
            let s_mu = ss + n * (xbar - mu).powi(2);
            (
                wi / total,
                StudentsT::new(mu, ((b + 0.5 * s_mu) / an).sqrt(), 2.0 * an).unwrap(),
            )
        })
        .collect();
    let exact = |x: f64| components.iter().map(|(wi, t)| wi * t.pdf(x)).sum::<f64>();
    let body = format!(
        "[model]\nkernel = \"location\"\nweights = \"dirichlet\"\ncomponents = 1\n\n\
         [prior]\ncentre = {m}\ncentre_sd = {s}\nvar_shape = {a}\nvar_scale_prior = \"fixed\"\nvar_scale = {b}\n\n\
         [sampler]\nchains = {CHAINS}\nwarmup = 100\ndraws = 6000\nseed = 515151\n"
    );
    let (grid, est, se) = run_pipeline("exact-loc", &body, xbar - 4.0 * sx, xbar + 4.0 * sx);
    let bad = misses(&grid, &est, &se, exact);
    assert_eq!(bad, 0, "posterior mean density misses the semi-conjugate predictive at {bad} of {GRID_POINTS} points");
    // Power: the same mixture with every scale 4% too large must be rejected.
    let wrong = |x: f64| {
        components
            .iter()
            .map(|(wi, t)| {
                wi * StudentsT::new(t.location(), t.scale() * 1.04, t.freedom())
                    .unwrap()
                    .pdf(x)
            })
            .sum::<f64>()
    };
    let bad = misses(&grid, &est, &se, wrong);
    assert!(
        bad >= 5,
        "a wrong predictive passed at all but {bad} points; the check has no power"
    );
}
