//! PSIS-LOO, Pareto k, WAIC and elpd differences against ArviZ on the same pointwise
//! log-likelihood matrices (fixture from tests/reference/arviz_loo.py; ArviZ version is
//! recorded in it). Tolerance: 1e-9 relative (1e-9 absolute near 0) — the computations are
//! the same arithmetic in a different order.

use mixband::compare::{diff_se, loo, waic, LogLik};
use mixband::dist::ln_normal_pdf;
use serde_json::Value;

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn close(a: f64, b: f64, what: &str) {
    assert!(
        (a - b).abs() <= 1e-9 * b.abs().max(1.0),
        "{what}: mixband {a} vs ArviZ {b}"
    );
}

fn matrix(y: &[f64], m: &Value) -> LogLik {
    let (mu, sigma) = (floats(&m["mu"]), floats(&m["sigma"]));
    let values = mu
        .iter()
        .zip(&sigma)
        .flat_map(|(&a, &s)| y.iter().map(move |&yi| ln_normal_pdf(yi, a, s)))
        .collect();
    LogLik {
        draws: mu.len(),
        obs: y.len(),
        values,
    }
}

#[test]
fn loo_waic_and_differences_match_arviz() {
    let fx: Value =
        serde_json::from_str(include_str!("reference/fixtures/arviz_loo.json")).unwrap();
    assert!(fx["versions"]["arviz"].as_str().unwrap().starts_with("0."));
    let y = floats(&fx["y"]);
    let mut fits = Vec::new();
    for name in ["A", "B"] {
        let m = &fx["models"][name];
        let ll = matrix(&y, m);
        let l = loo(&ll, 1.0);
        close(l.elpd, m["elpd_loo"].as_f64().unwrap(), "elpd_loo");
        close(l.se, m["se_loo"].as_f64().unwrap(), "se of elpd_loo");
        close(l.p_loo, m["p_loo"].as_f64().unwrap(), "p_loo");
        for (i, (a, b)) in l.pointwise.iter().zip(floats(&m["loo_i"])).enumerate() {
            close(*a, b, &format!("loo_i[{i}]"));
        }
        let ks = floats(&m["pareto_k"]);
        for (i, (a, b)) in l.pareto_k.iter().zip(&ks).enumerate() {
            close(*a, *b, &format!("pareto_k[{i}]"));
        }
        // The fixture has both reliable and unreliable observations; the warning list is
        // exactly those above the threshold, min(1 − 1/log10 S, 0.7) = 2/3 for S = 1000
        // (Vehtari et al. 2024; ArviZ's good_k).
        assert!((l.k_threshold - 2.0 / 3.0).abs() < 1e-12);
        let want: Vec<usize> = ks
            .iter()
            .enumerate()
            .filter(|(_, &k)| k > l.k_threshold)
            .map(|(i, _)| i + 1)
            .collect();
        assert!(!want.is_empty() && want.len() < ks.len());
        assert_eq!(l.bad_k, want);
        let w = waic(&ll);
        close(w.elpd, m["elpd_waic"].as_f64().unwrap(), "elpd_waic");
        close(w.se, m["se_waic"].as_f64().unwrap(), "se of elpd_waic");
        close(w.p_waic, m["p_waic"].as_f64().unwrap(), "p_waic");
        for (i, (a, b)) in w.pointwise.iter().zip(floats(&m["waic_i"])).enumerate() {
            close(*a, b, &format!("waic_i[{i}]"));
        }
        fits.push((l, w));
    }
    // ArviZ compare ranks B first; A's elpd_diff and dse are relative to B.
    let (a, b) = (&fits[0], &fits[1]);
    for (key, da, db, diff) in [
        (
            "compare_loo",
            &a.0.pointwise,
            &b.0.pointwise,
            b.0.elpd - a.0.elpd,
        ),
        (
            "compare_waic",
            &a.1.pointwise,
            &b.1.pointwise,
            b.1.elpd - a.1.elpd,
        ),
    ] {
        let ref_a = &fx[key]["A"];
        assert_eq!(fx[key]["B"]["rank"].as_i64(), Some(0));
        close(
            diff,
            ref_a["elpd_diff"].as_f64().unwrap(),
            &format!("{key} elpd_diff"),
        );
        close(
            diff_se(db, da),
            ref_a["dse"].as_f64().unwrap(),
            &format!("{key} dse"),
        );
    }
}
