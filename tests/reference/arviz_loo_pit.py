"""Reference LOO-PIT values and simultaneous ECDF bands from ArviZ for
tests/check_loo_pit.rs.

LOO-PIT: a small sample y (with one outlying value) and S posterior draws (mu_s, sigma_s)
of a normal model from numpy's default_rng(seed); the pointwise log-likelihood is
ln N(y_i; mu_s, sigma_s) and y_hat[i, s] is one posterior predictive draw per (i, s). The
importance weights are az.psislw(-log_lik, reff=1) (mixband uses r_eff = 1) and
az.loo_pit(y=, y_hat=, log_weights=) gives the reference PIT (the share of weighted
predictive draws <= y_i). "pit_cdf" is the same weights applied to the exact normal CDF
(scipy.stats.norm.cdf), the form mixband computes. Draws, y and y_hat are stored so the Rust
test rebuilds the same matrices.

Bands: ArviZ's ecdf_confidence_band(method="optimized") (the optimisation method of
Saeilynoja, Buerkner & Vehtari 2022, computed by ArviZ) for uniform samples of several
sizes at 101 evenly spaced points, prob = 0.95.

Run: python tests/reference/arviz_loo_pit.py
Writes tests/reference/fixtures/arviz_loo_pit.json with the library versions.
"""
import json
import os
import warnings

import arviz as az
import numpy as np
import scipy
from arviz.stats.ecdf_utils import ecdf_confidence_band
from scipy.stats import norm

S, N = 400, 30
rng = np.random.default_rng(20261202)
y = np.concatenate([rng.normal(0.0, 1.0, N - 1), [4.0]])
mu = rng.normal(0.1, 0.2, S)
sigma = np.exp(rng.normal(np.log(1.2), 0.1, S))
ll = norm.logpdf(y[:, None], mu[None, :], sigma[None, :])  # (N, S)
y_hat = rng.normal(mu[None, :], sigma[None, :], (N, S))
with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    lw, k = az.psislw(-ll, reff=1.0)
pit = az.loo_pit(y=y, y_hat=y_hat, log_weights=lw)
pit_cdf = np.sum(np.exp(lw) * norm.cdf(y[:, None], mu[None, :], sigma[None, :]), axis=1)

z = np.linspace(0.0, 1.0, 101)
bands = []
for n in (30, 200, 640):
    lo, hi = ecdf_confidence_band(n, z, z, prob=0.95, method="optimized")
    bands.append({"n": n, "lower": np.asarray(lo).tolist(), "upper": np.asarray(hi).tolist()})

out = {
    "generated_by": "tests/reference/arviz_loo_pit.py",
    "versions": {"arviz": az.__version__, "numpy": np.__version__, "scipy": scipy.__version__},
    "y": y.tolist(),
    "mu": mu.tolist(),
    "sigma": sigma.tolist(),
    "y_hat": y_hat.tolist(),
    "pareto_k": np.asarray(k).tolist(),
    "pit": np.asarray(pit).tolist(),
    "pit_cdf": pit_cdf.tolist(),
    "band_points": z.tolist(),
    "bands": bands,
}
path = os.path.join(os.path.dirname(__file__), "fixtures", "arviz_loo_pit.json")
with open(path, "w") as f:
    json.dump(out, f)
    f.write("\n")
print("wrote", path)
