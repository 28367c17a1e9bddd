#!/usr/bin/env python3
"""Reference values for skybearing's circular statistics (src/circular/).

Writes tests/fixtures/circular_reference.json, read by tests/circular_reference.rs and
tests/stats_cli.rs. Run from the repository root:

    python3 tests/reference/circular_reference.py

Sources (their versions are recorded in the fixture):
- astropy.stats.circstats: circmean, circvar, circstd (angular and circular), rayleightest,
  vtest.
- scipy.stats: circmean, circstd, circvar, directional_stats; scipy.stats.f for Hotelling's
  test (generic T^2 written here with numpy.linalg, not Zar's closed form).
- pycircstat2: rayleigh_test, V_test, circ_mean_ci (approximate = Zar 26.7), circ_kappa,
  watson_williams_test, circ_mean_and_r_of_means.
- numpy Monte Carlo: the null distribution of Moore's R* (pycircstat2 has no Moore test).

All angles in the fixture are degrees; the libraries work in radians.
"""

import json
import platform
import sys
from pathlib import Path

import astropy
import numpy as np
import pycircstat2
import scipy
from astropy.stats import circstats as ac
from pycircstat2 import descriptive as pd_
from pycircstat2 import hypothesis as ph
from scipy import stats as st

OUT = Path(__file__).resolve().parents[1] / "fixtures" / "circular_reference.json"
RNG = np.random.default_rng(20261201)


def wrap360(x):
    return float(np.mod(x, 360.0))


def wrap180(x):
    return float(np.mod(x, 180.0))


def direction_case(name, deg, expect_deg):
    rad = np.deg2rad(deg)
    n = len(deg)
    case = {"name": name, "angles_deg": [float(a) for a in deg], "expect_deg": expect_deg}
    # astropy
    case["astropy"] = {
        "circmean_deg": wrap360(np.rad2deg(ac.circmean(rad))),
        "circvar": float(ac.circvar(rad)),
        "circstd_angular_deg": float(np.rad2deg(ac.circstd(rad, method="angular"))),
        "circstd_circular_deg": float(np.rad2deg(ac.circstd(rad, method="circular"))),
        "rayleightest_p": float(ac.rayleightest(rad)),
        "vtest_p": float(ac.vtest(rad, mu=np.deg2rad(expect_deg))),
    }
    # scipy
    ds = st.directional_stats(np.column_stack([np.cos(rad), np.sin(rad)]))
    case["scipy"] = {
        "circmean_deg": wrap360(np.rad2deg(st.circmean(rad))),
        "circstd_deg": float(np.rad2deg(st.circstd(rad))),
        "circvar": float(st.circvar(rad)),
        "mean_resultant_length": float(ds.mean_resultant_length),
    }
    # pycircstat2
    ray = ph.rayleigh_test(alpha=rad)
    vt = ph.V_test(angle=np.deg2rad(expect_deg), alpha=rad)
    mean, r = pd_.circ_mean_and_r(rad)
    pc = {
        "mean_deg": wrap360(np.rad2deg(mean)),
        "r": float(r),
        "rayleigh_z": float(ray.z),
        "rayleigh_p": float(ray.pval),
        "v": float(vt.V),
        "v_u": float(vt.u),
        "v_p": float(vt.pval),
        "kappa_uncorrected": float(pd_.circ_kappa(r)),
        "kappa_n": float(pd_.circ_kappa(r, n)),
    }
    try:
        lo, hi = pd_.circ_mean_ci(alpha=rad, method="approximate")
        pc["ci95_deg"] = [wrap360(np.rad2deg(lo)), wrap360(np.rad2deg(hi))]
    except ValueError:
        pc["ci95_deg"] = None
    case["pycircstat2"] = pc
    return case


def axial_case(name, deg):
    """Axial statistics by angle doubling, computed with the libraries on doubled angles."""
    rad2 = np.deg2rad(2.0 * np.asarray(deg))
    ray = ph.rayleigh_test(alpha=rad2)
    return {
        "name": name,
        "angles_deg": [float(a) for a in deg],
        "astropy_doubled": {
            "half_circmean_deg": wrap180(np.rad2deg(ac.circmean(rad2)) / 2.0),
            "half_circstd_circular_deg": float(
                np.rad2deg(ac.circstd(rad2, method="circular")) / 2.0
            ),
            "half_circstd_angular_deg": float(
                np.rad2deg(ac.circstd(rad2, method="angular")) / 2.0
            ),
            "r": float(1.0 - ac.circvar(rad2)),
        },
        "pycircstat2_doubled": {"rayleigh_z": float(ray.z), "rayleigh_p": float(ray.pval)},
    }


def watson_williams_case(name, groups_deg):
    res = ph.watson_williams_test([np.deg2rad(g) for g in groups_deg])
    return {
        "name": name,
        "groups_deg": [[float(a) for a in g] for g in groups_deg],
        "pycircstat2": {
            "f": float(res.F),
            "p": float(res.pval),
            "df_between": int(res.df_between),
            "df_within": int(res.df_within),
        },
    }


def second_order_case(name, means_deg, lengths):
    means_deg = np.asarray(means_deg, dtype=float)
    lengths = np.asarray(lengths, dtype=float)
    n = len(means_deg)
    x = lengths * np.cos(np.deg2rad(means_deg))
    y = lengths * np.sin(np.deg2rad(means_deg))
    xy = np.column_stack([x, y])
    m = xy.mean(axis=0)
    cov = np.cov(xy, rowvar=False)  # divisor n - 1
    t2 = float(n * m @ np.linalg.solve(cov, m))
    f = (n - 2) / (2 * (n - 1)) * t2
    p = float(st.f.sf(f, 2, n - 2))
    mm, mr = pd_.circ_mean_and_r_of_means(
        ms=np.deg2rad(means_deg), rs=lengths
    )
    return {
        "name": name,
        "means_deg": [float(a) for a in means_deg],
        "lengths": [float(a) for a in lengths],
        "hotelling_numpy_scipy": {"t2": t2, "f": float(f), "p": p},
        "pycircstat2_mean_of_means": {"mean_deg": wrap360(np.rad2deg(mm)), "r": float(mr)},
    }


def moore_null(ns, reps, alphas):
    """Monte Carlo null distribution of Moore's R*: under uniformity the ranks of the lengths
    are a random permutation independent of the directions, so ranks 1..n with uniform angles
    give the null distribution."""
    rows = []
    for n in ns:
        i = np.arange(1, n + 1)
        stats = np.empty(reps)
        chunk = 20000
        for start in range(0, reps, chunk):
            k = min(chunk, reps - start)
            th = RNG.uniform(0.0, 2.0 * np.pi, (k, n))
            stats[start : start + k] = np.hypot(
                (i * np.cos(th)).sum(1), (i * np.sin(th)).sum(1)
            ) / n**1.5
        rows.append(
            {
                "n": n,
                "replicates": reps,
                "critical": {str(a): float(np.quantile(stats, 1.0 - a)) for a in alphas},
            }
        )
    return rows


def main():
    directions = []
    for n in (5, 20, 100, 1000):
        for kappa in (0.0, 0.5, 2.0, 10.0):
            mu = float(RNG.uniform(0, 360))
            if kappa == 0.0:
                deg = RNG.uniform(0, 360, n)
            else:
                deg = np.rad2deg(RNG.vonmises(np.deg2rad(mu), kappa, n)) % 360.0
            expect = round(float(RNG.uniform(0, 360)), 1) if kappa == 0.0 else round(mu + 20, 1)
            directions.append(direction_case(f"n{n}_kappa{kappa}", deg, expect))
    # Hand-picked: straddling north, negative and >360 inputs.
    directions.append(
        direction_case(
            "around_north",
            np.array([355.0, 2.0, -8.0, 370.0, 15.0, 340.5, 1.0, 359.0, 725.0, 12.0]),
            0.0,
        )
    )
    # Zar-like highly concentrated sample (r > 0.9 branch of the CI).
    directions.append(direction_case("tight_n12", 100.0 + RNG.normal(0, 8, 12), 95.0))

    axial = []
    for n, kappa in ((8, 4.0), (40, 1.0), (300, 8.0)):
        ax = float(RNG.uniform(0, 180))
        base = np.rad2deg(RNG.vonmises(np.deg2rad(2 * ax), kappa, n)) / 2.0
        flip = RNG.integers(0, 2, n) * 180.0  # bimodal headings along one axis
        axial.append(axial_case(f"axial_n{n}_kappa{kappa}", (base + flip) % 360.0))

    ww = []
    for k, n, spread in ((2, 10, 1.5), (3, 25, 4.0), (4, 60, 8.0)):
        groups = []
        for g in range(k):
            mu = 40.0 + 12.0 * g
            groups.append(np.rad2deg(RNG.vonmises(np.deg2rad(mu), spread, n)) % 360.0)
        ww.append(watson_williams_case(f"ww_k{k}_n{n}", groups))
    # Same population for all groups.
    ww.append(
        watson_williams_case(
            "ww_same",
            [np.rad2deg(RNG.vonmises(1.0, 3.0, 15)) % 360.0 for _ in range(3)],
        )
    )

    second = []
    for n, conc in ((6, 2.0), (15, 0.5), (40, 3.0)):
        means = np.rad2deg(RNG.vonmises(np.deg2rad(200.0), conc, n)) % 360.0
        lengths = RNG.uniform(0.05, 0.95, n)
        second.append(second_order_case(f"second_n{n}", means, lengths))

    out = {
        "generated_by": "tests/reference/circular_reference.py",
        "versions": {
            "python": platform.python_version(),
            "numpy": np.__version__,
            "scipy": scipy.__version__,
            "astropy": astropy.__version__,
            "pycircstat2": getattr(pycircstat2, "__version__", "unknown"),
        },
        "seed": 20261201,
        "directions": directions,
        "axial": axial,
        "watson_williams": ww,
        "second_order": second,
        "moore_null_monte_carlo": moore_null(
            (5, 10, 20, 50), 400000, (0.1, 0.05, 0.01)
        ),
    }
    OUT.parent.mkdir(parents=True, exist_ok=True)
    OUT.write_text(json.dumps(out, indent=1) + "\n")
    print(f"wrote {OUT}", file=sys.stderr)


if __name__ == "__main__":
    main()
