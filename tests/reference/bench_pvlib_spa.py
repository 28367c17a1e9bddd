#!/usr/bin/env python3
"""Time pvlib's numpy spa_python (NREL SPA) per timestamp, for comparison with
`cargo bench --bench sky` (SunTrack::at at 1 kHz and sun_position).

Usage: python3 tests/reference/bench_pvlib_spa.py [N]   (default N = 1_000_000 timestamps,
1 kHz from 2026-06-21T08:00:00.250Z at the demo site 43.2170 N, 5.4420 E, 210 m).
Prints versions, the best of 3 runs in ns per timestamp.
"""
import sys
import time

import numpy as np
import pandas as pd
import pvlib


def main():
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    times = pd.date_range("2026-06-21T08:00:00.250Z", periods=n, freq="1ms")
    best = float("inf")
    for _ in range(3):
        t0 = time.perf_counter()
        sp = pvlib.solarposition.spa_python(times, 43.2170, 5.4420, altitude=210.0,
                                            how="numpy")
        dt = time.perf_counter() - t0
        best = min(best, dt)
    assert len(sp) == n
    print(f"pvlib {pvlib.__version__}, numpy {np.__version__}, pandas {pd.__version__}, "
          f"python {sys.version.split()[0]}")
    print(f"spa_python (numpy) on {n} timestamps: best of 3 {best:.3f} s = "
          f"{best / n * 1e9:.1f} ns/timestamp ({n / best:.3g} timestamps/s)")


if __name__ == "__main__":
    main()
