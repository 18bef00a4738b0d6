"""Reference values for mixband's convergence diagnostics, computed with ArviZ.

Run with the project's reference environment:

    /work/pyref/bin/python tests/reference/arviz_diagnostics.py

It writes tests/reference/fixtures/arviz_diagnostics.json, which
tests/diagnostics_arviz.rs reads, so CI needs no Python.

Source of every expected value: ArviZ (PyPI package `arviz`, version recorded in
the JSON), functions
  arviz.rhat(method="rank"), arviz.rhat(method="split"),
  arviz.ess(method="bulk"), arviz.ess(method="tail"), arviz.ess(method="mean"),
  arviz.mcse(method="mean"), arviz.mcse(method="quantile", prob=0.05 / 0.95),
which implement Vehtari, Gelman, Simpson, Carpenter & Buerkner (2021),
"Rank-normalization, folding, and localization: an improved R-hat for assessing
convergence of MCMC", Bayesian Analysis 16(2).  `mean` and `sd` come from numpy
(mean and std with ddof=1 over all draws).

ArviZ's public rhat needs at least two chains and returns NaN for one chain.
For the single-chain case mixband still reports R-hat computed on the two halves
of the chain; the reference for that is ArviZ's own internal R-hat routine
applied to the two halves (arviz.stats.diagnostics._rhat on
_split_chains(x), and on _z_scale of the split / folded split draws for the
rank-normalised version), which is exactly what the public function does after
splitting when there are two or more chains.  The public NaN is recorded too.

Values that ArviZ returns as NaN (R-hat of a constant quantity) are written as
JSON null; the Rust test checks mixband's documented convention there instead.
"""

import json
import math
import os
import platform
import sys
import warnings

import numpy as np
import scipy

warnings.filterwarnings("ignore")
import arviz as az  # noqa: E402
from arviz.stats import diagnostics as azd  # noqa: E402

SEED = 20_240_611
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "fixtures", "arviz_diagnostics.json")


def ar1(rng, n_chains, n_draws, rho, mean=0.0):
    """Stationary Gaussian AR(1): x_t = rho x_{t-1} + e_t, e_t ~ N(0, 1)."""
    out = np.empty((n_chains, n_draws))
    sd0 = 1.0 / math.sqrt(1.0 - rho * rho)
    for c in range(n_chains):
        x = rng.normal() * sd0
        for t in range(n_draws):
            x = rho * x + rng.normal()
            out[c, t] = x
    return out + mean


def build_cases(rng):
    cases = []

    def add(name, description, draws):
        cases.append((name, description, np.asarray(draws, dtype=float)))

    add("iid_normal", "4 chains x 1000 iid N(0,1)", rng.normal(size=(4, 1000)))
    add("ar1_rho_0.5", "4 chains x 1000 stationary AR(1), rho = 0.5", ar1(rng, 4, 1000, 0.5))
    add("ar1_rho_0.95", "4 chains x 1000 stationary AR(1), rho = 0.95", ar1(rng, 4, 1000, 0.95))
    add(
        "ar1_rho_minus_0.9",
        "4 chains x 1000 stationary AR(1), rho = -0.9 (antithetic: exercises the ESS cap)",
        ar1(rng, 4, 1000, -0.9),
    )
    shifted = rng.normal(size=(4, 500)) + np.array([0.0, 0.0, 0.5, 2.0])[:, None]
    add("shifted_means", "4 chains x 500 N(mu_c, 1), mu = (0, 0, 0.5, 2)", shifted)
    add("cauchy", "4 chains x 1000 iid standard Cauchy (heavy tails)", rng.standard_cauchy(size=(4, 1000)))
    add(
        "poisson_ties",
        "4 chains x 600 iid Poisson(3) (many ties: average ranks)",
        rng.poisson(3.0, size=(4, 600)),
    )
    add("odd_length", "3 chains x 501 iid N(0,1) (split drops the middle draw)", rng.normal(size=(3, 501)))
    add("short_chains", "2 chains x 7 iid N(0,1) (short: Geyer loop barely runs)", rng.normal(size=(2, 7)))
    add("minimal_chains", "2 chains x 4 iid N(0,1) (the shortest accepted)", rng.normal(size=(2, 4)))
    stuck = rng.normal(size=(4, 500))
    stuck[3, :] = 0.25
    add("one_constant_chain", "3 chains x 500 iid N(0,1) and one chain stuck at 0.25", stuck)
    add("all_constant", "4 chains x 100 all equal to 1.5", np.full((4, 100), 1.5))
    add("single_chain_ar1", "1 chain x 1000 stationary AR(1), rho = 0.5", ar1(rng, 1, 1000, 0.5))
    return cases


def finite_or_none(x):
    x = float(x)
    return x if math.isfinite(x) else None


def expected_values(draws):
    n_chains = draws.shape[0]
    exp = {
        "mean": float(np.mean(draws)),
        "sd": float(np.std(draws, ddof=1)),
        "ess_bulk": float(az.ess(draws, method="bulk")),
        "ess_tail": float(az.ess(draws, method="tail")),
        "ess_mean": float(az.ess(draws, method="mean")),
        "mcse_mean": float(az.mcse(draws, method="mean")),
        "mcse_q05": float(az.mcse(draws, method="quantile", prob=0.05)),
        "mcse_q95": float(az.mcse(draws, method="quantile", prob=0.95)),
    }
    via = {k: "numpy" if k in ("mean", "sd") else "arviz public" for k in exp}
    if n_chains >= 2:
        exp["rhat_rank"] = finite_or_none(az.rhat(draws, method="rank"))
        exp["rhat_split"] = finite_or_none(az.rhat(draws, method="split"))
        via["rhat_rank"] = via["rhat_split"] = "arviz public"
    else:
        split = azd._split_chains(draws)
        bulk = azd._rhat(azd._z_scale(split))
        folded = azd._rhat(azd._z_scale(np.abs(split - np.median(split))))
        exp["rhat_rank"] = finite_or_none(max(bulk, folded))
        exp["rhat_split"] = finite_or_none(azd._rhat(split))
        via["rhat_rank"] = "arviz internal _rhat(_z_scale(...)) on the two halves"
        via["rhat_split"] = "arviz internal _rhat on the two halves"
        exp["arviz_public_rhat_rank"] = finite_or_none(az.rhat(draws, method="rank"))
    for k, v in exp.items():
        if isinstance(v, float) and not math.isfinite(v):
            exp[k] = None
    return exp, via


def main():
    rng = np.random.default_rng(SEED)
    out_cases = []
    for name, description, draws in build_cases(rng):
        exp, via = expected_values(draws)
        out_cases.append(
            {
                "name": name,
                "description": description,
                "draws": [[float(v) for v in row] for row in draws],
                "expected": exp,
                "expected_from": via,
            }
        )
    doc = {
        "generator": "tests/reference/arviz_diagnostics.py",
        "source": "ArviZ rhat/ess/mcse (Vehtari et al. 2021, Bayesian Analysis 16(2)); mean/sd from numpy",
        "seed": SEED,
        "rng": "numpy.random.default_rng",
        "versions": {
            "python": platform.python_version(),
            "numpy": np.__version__,
            "scipy": scipy.__version__,
            "arviz": az.__version__,
        },
        "null_means": "ArviZ returned NaN (constant quantity); mixband applies its documented convention",
        "cases": out_cases,
    }
    os.makedirs(os.path.dirname(OUT), exist_ok=True)
    with open(OUT, "w") as fh:
        # json writes floats with repr(): shortest string that round-trips exactly.
        json.dump(doc, fh, allow_nan=False)
        fh.write("\n")
    print(f"wrote {OUT} ({os.path.getsize(OUT)} bytes, {len(out_cases)} cases)", file=sys.stderr)


if __name__ == "__main__":
    main()
