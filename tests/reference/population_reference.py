#!/usr/bin/env python3
"""Reference values for the population tests of uniformity (src/circular/uniformity.rs).

Writes tests/fixtures/population_reference.json: for a few fixed samples of animal mean
headings (degrees),
- Rao's spacing test: pycircstat2.hypothesis.rao_spacing_test (U in degrees; its p is a
  Monte Carlo p with numpy's generator, n_simulation draws, so the program's p agrees only
  within Monte Carlo error);
- the Hermans-Rasson statistic T (Hermans & Rasson 1985, in the form of Landler, Ruxton &
  Malkemper 2019, beta = 2.895; formula recalled from memory, transcribed here independently
  with numpy since none of the reference libraries has the test) and its Monte Carlo p;
- the library versions used.

Usage: python3 tests/reference/population_reference.py tests/fixtures/population_reference.json
(needs `pip install pycircstat2 scipy numpy`).
"""

import json
import sys

import numpy as np
import pycircstat2
import scipy
from pycircstat2.hypothesis import rao_spacing_test

DRAWS = 100_000
RNG = np.random.default_rng(20261202)

SAMPLES = {
    "unimodal_8": [10, 20, 15, 5, 25, 12, 18, 8],
    "bimodal_10": [35, 40, 45, 38, 42, 215, 220, 225, 218, 222],
    "spread_12": [3, 31, 62, 88, 122, 149, 181, 212, 238, 271, 299, 332],
    "weak_6": [12, 80, 130, 200, 250, 330],
    "moderate_7": [10, 50, 100, 30, 200, 70, 300],
    "moderate_9": [350, 20, 75, 40, 160, 10, 300, 95, 220],
    "axial_8": [80, 95, 270, 250, 110, 300, 60, 265],
    "clustered_20": [
        200, 210, 190, 205, 195, 215, 185, 220, 180, 225,
        198, 202, 207, 193, 188, 212, 230, 170, 201, 199,
    ],
}


def hr_t(rad):
    beta = 2.895
    d = rad[:, None] - rad[None, :]
    return float(
        (np.abs(np.pi - np.abs(d)) - np.pi / 2 - beta * (np.abs(np.sin(d)) - 2 / np.pi)).sum()
        / len(rad)
    )


def hr_p(rad):
    t = hr_t(rad)
    k = 0
    for _ in range(DRAWS // 1000):
        th = RNG.uniform(0, 2 * np.pi, size=(1000, len(rad)))
        d = th[:, :, None] - th[:, None, :]
        ts = (
            np.abs(np.pi - np.abs(d)) - np.pi / 2 - 2.895 * (np.abs(np.sin(d)) - 2 / np.pi)
        ).sum((1, 2)) / len(rad)
        k += int((ts >= t - 1e-9 * abs(t)).sum())
    return t, (1 + k) / (1 + DRAWS)


def main():
    out = {"samples": {}, "draws": DRAWS}
    for name, deg in SAMPLES.items():
        rad = np.deg2rad(np.mod(np.asarray(deg, dtype=float), 360.0))
        rao = rao_spacing_test(rad, n_simulation=DRAWS, seed=2046)
        t, p = hr_p(rad)
        out["samples"][name] = dict(
            angles_deg=deg,
            rao_spacing_u_deg=rao.statistic,
            rao_spacing_p=rao.pval,
            hermans_rasson_t=t,
            hermans_rasson_p=p,
        )
    out["versions"] = dict(
        python=sys.version.split()[0],
        numpy=np.__version__,
        scipy=scipy.__version__,
        pycircstat2=pycircstat2.__version__,
    )
    with open(sys.argv[1], "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
