"""Reference values for the logit transform (tests/transform_logit.rs).

Run with any Python that has numpy and scipy:

    python tests/reference/beta_logit.py

Writes fixtures/beta_logit.json with library versions:

* "cases": REPLICATES samples of n = 500 each from Beta densities on (lower, upper) drawn
  by scipy.stats.beta.rvs (numpy Generator, fixed seed), with the true density
  scipy.stats.beta.pdf on a grid of midpoints of equal cells of (lower, upper), for the
  integrated-squared-error comparison of the logit fit with a kernel estimate.
  Beta(2, 5) and Beta(5, 1.5) on (0, 1) and Beta(2, 2) on (10, 30) (loc = 10, scale = 20);
  none is U-shaped, so every density is finite on the closed interval.
* "logit_normal": the mean and sd of x = lower + (upper - lower) * expit(y) for
  y ~ N(mu, sd^2), by scipy.integrate.quad over y (adaptive quadrature, independent of the
  trapezoid rule mixband uses), and the CDF at a few x as norm.cdf of the logit of x (the
  definition of the map).
"""

import json
import os
import platform

import numpy as np
import scipy
from scipy import integrate
from scipy.special import expit, logit
from scipy.stats import beta, norm

HERE = os.path.dirname(os.path.abspath(__file__))

CASES = [
    # name, a, b, lower, upper, seed
    ("beta_2_5", 2.0, 5.0, 0.0, 1.0, 2025),
    ("beta_5_1.5", 5.0, 1.5, 0.0, 1.0, 2026),
    ("beta_2_2_on_10_30", 2.0, 2.0, 10.0, 30.0, 2027),
]
N = 500
REPLICATES = 3
GRID_POINTS = 1000

LOGIT_NORMAL = [
    # lower, upper, mu, sd
    (0.0, 1.0, 0.0, 1.0),
    (0.0, 1.0, -1.2, 0.4),
    (0.0, 1.0, 2.5, 3.0),
    (10.0, 30.0, 0.3, 0.8),
    (-3.0, 5.0, -4.0, 0.05),
    (0.0, 1.0, 0.5, 10.0),
]


def main():
    out = {
        "generator": "tests/reference/beta_logit.py",
        "python": platform.python_version(),
        "numpy_version": np.__version__,
        "scipy_version": scipy.__version__,
        "cases": [],
        "logit_normal": [],
    }
    for name, a, b, lo, hi, seed in CASES:
        dist = beta(a, b, loc=lo, scale=hi - lo)
        rng = np.random.default_rng(seed)
        samples = [dist.rvs(size=N, random_state=rng) for _ in range(REPLICATES)]
        h = (hi - lo) / GRID_POINTS
        grid = lo + h * (np.arange(GRID_POINTS) + 0.5)
        out["cases"].append(
            {
                "name": name,
                "a": a,
                "b": b,
                "lower": lo,
                "upper": hi,
                "seed": seed,
                "samples": [[float(v) for v in x] for x in samples],
                "grid": [float(v) for v in grid],
                "pdf": [float(v) for v in dist.pdf(grid)],
            }
        )
    for lo, hi, mu, sd in LOGIT_NORMAL:
        w = hi - lo

        def moment(k, m=0.0):
            f = lambda y: (lo + w * expit(y) - m) ** k * norm.pdf(y, mu, sd)
            val, _ = integrate.quad(f, mu - 40 * sd, mu + 40 * sd, epsabs=0, epsrel=1e-13, limit=500,
                                    points=[mu - sd, mu, mu + sd])
            return val

        mean = moment(1)
        var = moment(2, mean)
        xs = [lo + w * p for p in (0.05, 0.3, 0.5, 0.8, 0.97)]
        out["logit_normal"].append(
            {
                "lower": lo,
                "upper": hi,
                "mu": mu,
                "sd": sd,
                "mean": mean,
                "sd_x": float(np.sqrt(var)),
                "x": xs,
                "cdf": [float(norm.cdf(logit((v - lo) / w), mu, sd)) for v in xs],
            }
        )
    path = os.path.join(HERE, "fixtures", "beta_logit.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print("wrote", path)
    for c in out["logit_normal"]:
        print(c["lower"], c["upper"], c["mu"], c["sd"], c["mean"], c["sd_x"])


if __name__ == "__main__":
    main()
