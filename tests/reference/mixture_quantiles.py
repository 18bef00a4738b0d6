"""Reference quantiles, CDF values and moments of normal mixtures for
tests/summary_reference.rs, computed with scipy.stats.norm (CDF) and scipy.optimize.brentq
(root of the mixture CDF).

Run: /work/pyref/bin/python tests/reference/mixture_quantiles.py
Writes tests/reference/fixtures/mixture_quantiles.json and records the library versions.
"""
import json
import os

import numpy as np
import scipy
from scipy.optimize import brentq
from scipy.stats import norm

MIXTURES = [
    {"weight": [1.0], "mean": [2.0], "sd": [0.5]},
    {"weight": [0.3, 0.7], "mean": [-1.0, 3.0], "sd": [0.6, 1.5]},
    {"weight": [0.5, 0.25, 0.25], "mean": [10.0, 14.0, 30.0], "sd": [1.0, 0.5, 4.0]},
    {"weight": [0.98, 0.02], "mean": [0.0, 6.0], "sd": [1.0, 0.8]},
]
PROBS = [0.001, 0.05, 0.25, 0.5, 0.75, 0.95, 0.999]


def cdf(m, x):
    return sum(w * norm.cdf(x, mu, s) for w, mu, s in zip(m["weight"], m["mean"], m["sd"]))


out = []
for m in MIXTURES:
    lo = min(mu - 40 * s for mu, s in zip(m["mean"], m["sd"]))
    hi = max(mu + 40 * s for mu, s in zip(m["mean"], m["sd"]))
    q = [brentq(lambda x: cdf(m, x) - p, lo, hi, xtol=1e-14, rtol=4 * np.finfo(float).eps) for p in PROBS]
    xs = list(np.linspace(lo / 4, hi / 4, 9))
    w, mu, s = (np.array(m[k]) for k in ("weight", "mean", "sd"))
    mean = float(np.sum(w * mu))
    sd = float(np.sqrt(np.sum(w * (s**2 + mu**2)) - mean**2))
    out.append({**m, "probs": PROBS, "quantiles": q, "x": xs, "cdf": [float(cdf(m, x)) for x in xs],
                "mixture_mean": mean, "mixture_sd": sd})

here = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(here, "fixtures", "mixture_quantiles.json"), "w") as f:
    json.dump({"generated_by": "tests/reference/mixture_quantiles.py",
               "versions": {"numpy": np.__version__, "scipy": scipy.__version__},
               "mixtures": out}, f, indent=1)
    f.write("\n")
