#!/usr/bin/env python3
"""The straightforward pandas way to get the per-epoch statistics of many sessions: the
baseline that `skybearing batch` is timed against (benches/batch_compare.sh).

For every session folder under DIR: read samples.csv with pandas, keep the scored samples,
group by epoch, and compute n, mean world heading, r, mean arena heading, the Rayleigh p
(Zar 2010 eq. 27.4) and the AR(1) effective sample size of the world headings with its Rayleigh
p (pairs only inside runs of consecutive scored samples). Writes one epochs.csv.

Usage: python3 tests/reference/batch_pandas_bench.py DIR OUT.csv
"""

import json
import sys
from pathlib import Path

import numpy as np
import pandas as pd


def rayleigh_p(n, r):
    big_r = n * r
    return float(np.exp(np.sqrt(1 + 4 * n + 4 * (n * n - big_r * big_r)) - (1 + 2 * n)))


def n_eff(c, s, chain):
    n = len(c)
    same = chain[1:] == chain[:-1]
    pairs = same.sum()
    if pairs == 0:
        return float(n)
    mc, ms = c.mean(), s.mean()
    g0 = 1 - (mc * mc + ms * ms)
    if g0 <= 1e-14:
        return 1.0
    dc, ds = c - mc, s - ms
    g1 = ((dc[1:] * dc[:-1] + ds[1:] * ds[:-1])[same]).sum() / pairs
    rho = min(max(g1 / g0, -1.0), 1.0)
    if rho <= 0:
        return float(n)
    return float(min(max(n * (1 - rho) / (1 + rho), 1.0), n))


def main():
    root, out = Path(sys.argv[1]), Path(sys.argv[2])
    rows = []
    for sj in sorted(root.rglob("session.json")):
        folder = sj.parent
        if not (folder / "samples.csv").is_file():
            continue
        meta = json.loads(sj.read_text())
        df = pd.read_csv(folder / "samples.csv")
        df["chain"] = ((df["scored"] == 0) | (df["epoch"] != df["epoch"].shift())).cumsum()
        sc = df[(df["scored"] == 1) & (df["epoch"] > 0)]
        for ep, g in sc.groupby("epoch"):
            w = np.deg2rad(g["world_heading_deg"].to_numpy())
            a = np.deg2rad(g["arena_heading_deg"].to_numpy())
            c, s = np.cos(w), np.sin(w)
            n = len(w)
            r = float(np.hypot(c.mean(), s.mean()))
            ne = n_eff(c, s, g["chain"].to_numpy())
            rows.append(
                dict(
                    session_id=meta["id"],
                    animal=meta.get("animal", ""),
                    epoch=int(ep),
                    n=n,
                    mean_world_deg=float(np.rad2deg(np.arctan2(s.sum(), c.sum())) % 360),
                    r=r,
                    mean_arena_deg=float(
                        np.rad2deg(np.arctan2(np.sin(a).sum(), np.cos(a).sum())) % 360
                    ),
                    rayleigh_p=rayleigh_p(n, r),
                    n_eff=ne,
                    rayleigh_p_eff=rayleigh_p(ne, r),
                )
            )
    pd.DataFrame(rows).to_csv(out, index=False)
    print(f"{len(rows)} epochs -> {out}")


if __name__ == "__main__":
    main()
