#!/usr/bin/env python3
"""The sun and the streaming statistics against pvlib, astropy and scipy, side by side.

  sky_stats_peers.py sun WORK ROUNDS      sun_position vs pvlib spa_python (exact, one instant
                                          each); SunTrack::at vs spa_python on a 60 s grid plus
                                          numpy.interp (a series at 1 kHz)
  sky_stats_peers.py stats WORK ROUNDS    HeadingAccumulator (mean, r, Rayleigh p, n_eff) vs
                                          astropy rayleightest + circmean, and scipy circmean +
                                          circvar, on the same 10^7 headings

Each contender is timed in its own process's CPU time over the same inputs (1 ms apart from
2026-06-21T08:00:00.250Z at the demo site 43.2170 N, 5.4420 E, 210 m; or the same headings), in
ROUNDS interleaved rounds; input preparation (timestamps, radians) is not timed. Prints the
median ns per item of each and its ratio to ours, after checking that the results agree:
PSA (ours) against SPA (pvlib) within the tolerances of tests/sky_reference.rs (0.03 degrees
azimuth, 0.012 degrees elevation), statistics within 1e-9.

The Rust side is benches/peer_timing.rs, run through `cargo bench --bench peer_timing`.
"""

import json
import platform
import statistics
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

LAT, LON, ALT = 43.2170, 5.4420, 210.0
START = "2026-06-21T08:00:00.250Z"
N_EXACT = 200_000
N_SERIES = 2_000_000
N_ANGLES = 10_000_000


def rust(*args):
    out = subprocess.run(
        ["cargo", "bench", "--quiet", "--bench", "peer_timing", "--", *map(str, args)],
        check=True, capture_output=True, text=True).stdout
    return json.loads(out.strip().splitlines()[-1])


def cpu(f):
    t0 = time.process_time()
    out = f()
    return time.process_time() - t0, out


def pvlib_exact(n):
    import pandas as pd
    import pvlib

    times = pd.date_range(START, periods=n, freq="1ms")
    pres = pvlib.atmosphere.alt2pres(ALT)
    t, sp = cpu(lambda: pvlib.solarposition.spa_python(
        times, LAT, LON, altitude=ALT, pressure=pres, temperature=12.0, how="numpy"))
    return t, sp["azimuth"].to_numpy(), sp["apparent_elevation"].to_numpy()


def pvlib_series(n):
    import pandas as pd
    import pvlib

    t_s = np.arange(n) * 0.001
    start = pd.Timestamp(START)
    pres = pvlib.atmosphere.alt2pres(ALT)

    def work():
        nodes_s = np.arange(0.0, t_s[-1] + 60.0, 60.0)
        nodes = start + pd.to_timedelta(nodes_s, unit="s")
        sp = pvlib.solarposition.spa_python(nodes, LAT, LON, altitude=ALT, pressure=pres,
                                            temperature=12.0, how="numpy")
        az = np.unwrap(sp["azimuth"].to_numpy(), period=360.0)
        return (np.interp(t_s, nodes_s, az) % 360.0,
                np.interp(t_s, nodes_s, sp["apparent_elevation"].to_numpy()))

    t, (az, el) = cpu(work)
    return t, az, el


def read_pairs(path):
    a = np.fromfile(path, dtype="<f8").reshape(-1, 2)
    return a[:, 0], a[:, 1]


def check_sun(ours, theirs, name):
    daz = np.abs((ours[0] - theirs[0] + 180.0) % 360.0 - 180.0).max()
    del_ = np.abs(ours[1] - theirs[1]).max()
    if daz > 0.03 or del_ > 0.012:
        sys.exit(f"{name}: azimuth differs by {daz:.4f}, elevation by {del_:.4f} degrees")
    return daz, del_


def table(rows, unit):
    print(f"| contender | median {unit} | runs | relative to ours |")
    print("| --- | --- | --- | --- |")
    base = statistics.median(rows[0][1])
    for name, runs in rows:
        med = statistics.median(runs)
        rel = "1.0" if runs is rows[0][1] else (
            f"{med / base:.1f}x slower" if med >= base else f"{base / med:.1f}x faster")
        print(f"| {name} | {med:.1f} | {' '.join(f'{x:.1f}' for x in runs)} | {rel} |")


def sun(work, rounds):
    import pandas as pd
    import pvlib

    ours_exact, ours_series, pv_exact, pv_series = [], [], [], []
    for _ in range(rounds):
        r = rust("sun_exact", N_EXACT, work / "sun_exact.f64")
        ours_exact.append(r["ns_each"])
        t, az, el = pvlib_exact(N_EXACT)
        pv_exact.append(t / N_EXACT * 1e9)
        d1 = check_sun(read_pairs(work / "sun_exact.f64"), (az, el), "exact")
        r = rust("sun_track", N_SERIES, work / "sun_track.f64")
        ours_series.append(r["ns_each"])
        t, az, el = pvlib_series(N_SERIES)
        pv_series.append(t / N_SERIES * 1e9)
        d2 = check_sun(read_pairs(work / "sun_track.f64"), (az, el), "series")
    print(f"python {platform.python_version()}, pvlib {pvlib.__version__}, "
          f"numpy {np.__version__}, pandas {pd.__version__}; CPU time, {rounds} rounds")
    print(f"\nexact, {N_EXACT} instants 1 ms apart (max difference azimuth {d1[0]:.4f}, "
          f"elevation {d1[1]:.4f} degrees)")
    table([("skybearing sun_position (PSA, one call per instant)", ours_exact),
           ("pvlib spa_python (NREL SPA, numpy, vectorised)", pv_exact)], "ns/instant")
    print(f"\nseries, {N_SERIES} instants at 1 kHz (max difference azimuth {d2[0]:.4f}, "
          f"elevation {d2[1]:.4f} degrees)")
    table([("skybearing SunTrack::at (exact every 60 s, cubic)", ours_series),
           ("pvlib spa_python every 60 s + numpy.interp", pv_series)], "ns/instant")


def stats(work, rounds):
    import astropy
    import scipy
    from astropy.stats.circstats import circmean as a_circmean, rayleightest
    from scipy.stats import circmean, circvar

    rng = np.random.default_rng(7)
    # A wandering heading with jitter (as the benchmark in benches/circular.rs).
    deg = (120.0 + np.cumsum((rng.random(N_ANGLES) - 0.5) * 4.0)
           + (rng.random(N_ANGLES) - 0.5) * 20.0) % 360.0
    deg.astype("<f8").tofile(work / "angles.f64")
    th = np.deg2rad(deg)
    ours, ast, sci = [], [], []
    for _ in range(rounds):
        r = rust("stats", work / "angles.f64")
        ours.append(r["ns_each"])
        t, (p, am) = cpu(lambda: (rayleightest(th), a_circmean(th)))
        ast.append(t / N_ANGLES * 1e9)
        t, (sm, sv) = cpu(lambda: (circmean(th), circvar(th)))
        sci.append(t / N_ANGLES * 1e9)
    c, s = np.cos(th).mean(), np.sin(th).mean()
    r_np = float(np.hypot(c, s))
    mean_np = float(np.rad2deg(np.arctan2(s, c)) % 360.0)
    dmean = lambda m: abs((m - mean_np + 180.0) % 360.0 - 180.0)  # noqa: E731
    checks = [abs(r["r"] - r_np), dmean(r["mean_deg"]), dmean(float(np.rad2deg(am)) % 360.0),
              dmean(float(np.rad2deg(sm))), abs((1.0 - sv) - r_np)]
    if max(checks) > 1e-9 or not (p == r["rayleigh_p"] or abs(p - r["rayleigh_p"]) < 1e-9):
        sys.exit(f"statistics disagree: {checks}, p {p} vs {r['rayleigh_p']}")
    print(f"python {platform.python_version()}, numpy {np.__version__}, astropy "
          f"{astropy.__version__}, scipy {scipy.__version__}; CPU time, {rounds} rounds")
    print(f"\n{N_ANGLES} headings (a wandering heading with jitter); mean {mean_np:.6f} deg, "
          f"r {r_np:.6f}, Rayleigh p {p:.3g}: all agree within 1e-9")
    table([("skybearing HeadingAccumulator (degrees in; mean, r, Rayleigh p, n_eff)", ours),
           ("astropy rayleightest + circmean (radians in)", ast),
           ("scipy circmean + circvar (radians in)", sci)], "ns/heading")


def main():
    what, work, rounds = sys.argv[1], Path(sys.argv[2]), int(sys.argv[3])
    work.mkdir(parents=True, exist_ok=True)
    {"sun": sun, "stats": stats}[what](work.resolve(), rounds)


if __name__ == "__main__":
    main()
