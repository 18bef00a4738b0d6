"""Reference values for the kernel estimate drawn on density.svg (--with-kde).

Run with the project's reference environment:

    /work/pyref/bin/python tests/reference/kde_silverman.py

It writes tests/reference/fixtures/kde_silverman.json, which tests/plots.rs reads, so CI
needs no Python.

Bandwidth: Silverman's rule of thumb, h = 0.9 * min(s, IQR / 1.34) * n**(-1/5)
(Silverman 1986, "Density Estimation for Statistics and Data Analysis", eq. 3.31),
with s the sample standard deviation (numpy std, ddof=1) and the quartiles by numpy's
default (linear) quantile.  Density: scipy.stats.gaussian_kde with bw_method set to
h / s, since scipy's kernel standard deviation is bw_method times the data's standard
deviation (ddof=1); evaluated on a grid.  Library versions are recorded in the JSON.
"""
import json
import pathlib

import numpy as np
import scipy
from scipy import stats

rng = np.random.default_rng(20261201)
cases = {
    "bimodal": np.concatenate([rng.normal(-2.0, 0.5, 70), rng.normal(1.5, 1.0, 130)]),
    "skewed_small": rng.gamma(2.0, 1.5, 25),
}
out = {"numpy": np.__version__, "scipy": scipy.__version__, "cases": {}}
for name, x in cases.items():
    x = np.round(x, 6)  # values written exactly as used
    s = np.std(x, ddof=1)
    q75, q25 = np.quantile(x, [0.75, 0.25])
    h = 0.9 * min(s, (q75 - q25) / 1.34) * len(x) ** (-0.2)
    grid = np.linspace(x.min() - 3 * h, x.max() + 3 * h, 41)
    kde = stats.gaussian_kde(x, bw_method=h / s)
    out["cases"][name] = {
        "x": x.tolist(),
        "bandwidth": float(h),
        "grid": grid.tolist(),
        "density": kde(grid).tolist(),
    }
path = pathlib.Path(__file__).parent / "fixtures" / "kde_silverman.json"
path.write_text(json.dumps(out, indent=1) + "\n")
print("wrote", path)
