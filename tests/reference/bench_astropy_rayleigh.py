#!/usr/bin/env python3
"""Times astropy.stats.circstats.rayleightest on 10^7 angles, for comparison with
`cargo bench --bench circular` (benchmark accumulator_push_deg_1e7_then_r_rayleigh_p_n_eff).

astropy takes radians; our accumulator takes degrees and converts each one, so the comparison
does not favour us. Prints versions, the best and median of several runs, and ns per sample.

    python3 tests/reference/bench_astropy_rayleigh.py
"""

import platform
import timeit

import astropy
import numpy as np
from astropy.stats.circstats import rayleightest

N = 10_000_000
REPEAT = 7


def main():
    rng = np.random.default_rng(7)
    # A wandering heading with jitter, like the Rust benchmark's data (radians here).
    th = np.deg2rad(120.0 + np.cumsum((rng.random(N) - 0.5) * 4.0) + (rng.random(N) - 0.5) * 20.0)
    rayleightest(th)  # warm up
    times = timeit.repeat(lambda: rayleightest(th), number=1, repeat=REPEAT)
    best, median = min(times), float(np.median(times))
    print(f"python {platform.python_version()}, numpy {np.__version__}, astropy {astropy.__version__}")
    print(f"astropy.stats.circstats.rayleightest on {N} angles, {REPEAT} runs")
    print(f"best   {best * 1e3:8.1f} ms  {best / N * 1e9:6.2f} ns/sample  {N / best / 1e6:7.1f} Msamples/s")
    print(f"median {median * 1e3:8.1f} ms  {median / N * 1e9:6.2f} ns/sample  {N / median / 1e6:7.1f} Msamples/s")


if __name__ == "__main__":
    main()
