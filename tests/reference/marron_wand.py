"""Reference values for the Marron & Wand benchmark densities and the chi-square critical
values used by the simulation-based-calibration tests.

Run with the project's reference environment:

    /work/pyref/bin/python tests/reference/marron_wand.py

Marron, J. S. and Wand, M. P. (1992), "Exact mean integrated squared error", The Annals
of Statistics 20(2), 712-736, Table 1.  The component weights, means and sds below are
recalled from memory of that table (not copied from a scan); they reproduce the shapes
shown in the paper's Figure 1 (#1 Gaussian, #2 skewed unimodal, #4 kurtotic unimodal,
#6 bimodal, #14 smooth comb).  tests/validation_marron_wand.rs holds the same table and
checks its densities against the values written here (scipy.stats.norm mixtures).

Chi-square upper quantiles come from scipy.stats.chi2.ppf (for example the 0.999
quantile with 9 degrees of freedom is 27.877, as in printed tables such as the
NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.6.7.4).

Writes fixtures/marron_wand.json with library versions.
"""

import json
import os
import platform

import numpy as np
import scipy
from scipy.stats import chi2, norm

HERE = os.path.dirname(os.path.abspath(__file__))

DENSITIES = {
    "1_gaussian": [(1.0, 0.0, 1.0)],
    "2_skewed_unimodal": [(1 / 5, 0.0, 1.0), (1 / 5, 1 / 2, 2 / 3), (3 / 5, 13 / 12, 5 / 9)],
    "4_kurtotic_unimodal": [(2 / 3, 0.0, 1.0), (1 / 3, 0.0, 1 / 10)],
    "6_bimodal": [(1 / 2, -1.0, 2 / 3), (1 / 2, 1.0, 2 / 3)],
    "14_smooth_comb": [
        (2 ** (5 - l) / 63, (65 - 96 * 0.5 ** l) / 21, (32 / 63) / 2 ** l) for l in range(6)
    ],
}

POINTS = [-2.5, -1.0, -0.3, 0.0, 0.05, 0.4, 1.0, 1.7, 2.6]


def density(comps, x):
    return sum(w * norm.pdf(x, m, s) for (w, m, s) in comps)


def main():
    out = {
        "generator": "tests/reference/marron_wand.py",
        "python": platform.python_version(),
        "numpy_version": np.__version__,
        "scipy_version": scipy.__version__,
        "points": POINTS,
        "densities": {},
        "chi2_upper": [],
    }
    grid = np.linspace(-8, 8, 160001)
    for name, comps in DENSITIES.items():
        f = density(comps, grid)
        out["densities"][name] = {
            "components": [{"weight": w, "mean": m, "sd": s} for (w, m, s) in comps],
            "values": [float(density(comps, x)) for x in POINTS],
            "integral": float(np.trapezoid(f, grid)),
        }
    for p in [0.99, 0.999, 0.9999]:
        for df in [4, 9, 19]:
            out["chi2_upper"].append({"p": p, "df": df, "quantile": float(chi2.ppf(p, df))})
    path = os.path.join(HERE, "fixtures", "marron_wand.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print("wrote", path)
    for q in out["chi2_upper"]:
        print(q)


if __name__ == "__main__":
    main()
