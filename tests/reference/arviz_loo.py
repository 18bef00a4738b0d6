"""Reference PSIS-LOO, Pareto k, WAIC and model differences from ArviZ for
tests/compare_arviz.rs.

The pointwise log-likelihood matrices are ln N(y_i; mu_s, sigma_s) for a small sample y
(with two outlying values, so some Pareto k exceed 0.7) and two sets of S posterior draws
(mu_s, sigma_s) from numpy's default_rng(seed); the draws and y are stored so the Rust test
rebuilds exactly the same matrices. az.loo is called with reff=1 (mixband uses r_eff = 1).

Run: /work/pyref/bin/python tests/reference/arviz_loo.py
Writes tests/reference/fixtures/arviz_loo.json with the library versions.
"""
import json
import os
import warnings

import arviz as az
import numpy as np
import scipy
from scipy.stats import norm

S = 1000
rng = np.random.default_rng(20261201)
y = np.concatenate([rng.normal(0.0, 1.0, 28), [4.5, 7.0]])
models = {
    # A fit that roughly matches the bulk: mu ~ N(0.2, 0.2^2), sigma ~ LogNormal(ln 1.3, 0.1).
    "A": (rng.normal(0.2, 0.2, S), np.exp(rng.normal(np.log(1.3), 0.1, S))),
    # A wider fit: mu ~ N(0.3, 0.35^2), sigma ~ LogNormal(ln 1.8, 0.15).
    "B": (rng.normal(0.3, 0.35, S), np.exp(rng.normal(np.log(1.8), 0.15, S))),
}

out = {"generated_by": "tests/reference/arviz_loo.py",
       "versions": {"arviz": az.__version__, "numpy": np.__version__, "scipy": scipy.__version__},
       "y": y.tolist(), "models": {}}
idatas = {}
loos, waics = {}, {}
for name, (mu, sigma) in models.items():
    ll = norm.logpdf(y[None, :], mu[:, None], sigma[:, None])  # (S, n)
    idata = az.from_dict(log_likelihood={"y": ll[None, :, :]})
    idatas[name] = idata
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        loo = az.loo(idata, pointwise=True, reff=1.0, scale="log")
        waic = az.waic(idata, pointwise=True, scale="log")
    loos[name], waics[name] = loo, waic
    out["models"][name] = {
        "mu": mu.tolist(), "sigma": sigma.tolist(),
        "elpd_loo": float(loo["elpd_loo"]), "se_loo": float(loo["se"]), "p_loo": float(loo["p_loo"]),
        "loo_i": loo["loo_i"].values.tolist(), "pareto_k": loo["pareto_k"].values.tolist(),
        "elpd_waic": float(waic["elpd_waic"]), "se_waic": float(waic["se"]), "p_waic": float(waic["p_waic"]),
        "waic_i": waic["waic_i"].values.tolist(),
    }
with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    # Precomputed ELPDData (compare would otherwise recompute loo with reff from a posterior).
    cmp = az.compare(loos, ic="loo", scale="log")
    cmpw = az.compare(waics, ic="waic", scale="log")
out["compare_loo"] = {n: {"rank": int(cmp.loc[n, "rank"]), "elpd_diff": float(cmp.loc[n, "elpd_diff"]),
                          "dse": float(cmp.loc[n, "dse"])} for n in cmp.index}
out["compare_waic"] = {n: {"rank": int(cmpw.loc[n, "rank"]), "elpd_diff": float(cmpw.loc[n, "elpd_diff"]),
                           "dse": float(cmpw.loc[n, "dse"])} for n in cmpw.index}

here = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(here, "fixtures", "arviz_loo.json"), "w") as f:
    json.dump(out, f)
    f.write("\n")
print({n: (m["elpd_loo"], m["p_loo"], max(m["pareto_k"])) for n, m in out["models"].items()}, out["compare_loo"])
