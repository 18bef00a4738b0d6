"""Generates demo-data/warbler-wings.csv: an INVENTED sample, not real measurements.

Scenario (invented): wing lengths, in millimetres, of 640 reed warblers caught in mist nets
at a made-up ringing station ("Halsmoor") during one autumn. Three groups overlap: first-year
birds (shorter wings, tight spread), adult females and adult males (longer wings), plus a few
long-winged passage migrants of a northern population. The groups show as modes of
different widths, which is what a location-scale mixture's varying bandwidth is for.

Process: numpy default_rng(20261201); group labels drawn with probabilities
(0.45, 0.30, 0.17, 0.08); lengths from normals with means (63.0, 66.2, 68.4, 72.5) mm and
sds (0.9, 1.1, 1.0, 1.6) mm; rounded to 0.1 mm as a ruler reads them.
Run: python demo-data/generate.py (numpy 2.x).
"""
import csv
import pathlib

import numpy as np

rng = np.random.default_rng(20261201)
n = 640
probs = [0.45, 0.30, 0.17, 0.08]
means = [63.0, 66.2, 68.4, 72.5]
sds = [0.9, 1.1, 1.0, 1.6]
groups = rng.choice(len(probs), size=n, p=probs)
wing = np.round(rng.normal(np.take(means, groups), np.take(sds, groups)), 1)
ring = [f"HM{26000 + i:05d}" for i in range(n)]

out = pathlib.Path(__file__).with_name("warbler-wings.csv")
with out.open("w", newline="") as f:
    f.write("# INVENTED demo data (see demo-data/README.md): wing lengths of reed warblers at a made-up station\n")
    w = csv.writer(f, lineterminator="\n")
    w.writerow(["ring", "wing_mm"])
    for r, x in zip(ring, wing):
        w.writerow([r, f"{x:.1f}"])
print(f"wrote {out} ({n} rows)")
