#!/usr/bin/env python3
"""Independent reference for `skybearing batch`.

Reads every session folder under DATA_DIR with pandas (by header name, as the contract lays
them out), recomputes the per-epoch, per-turn, per-session and population statistics with
scipy, astropy and pycircstat2, and writes the expected tables into OUT_DIR:

    sessions.csv epochs.csv turns.csv population.csv comparisons.csv paired.csv animals.csv
    versions.csv   (the library versions used)

Usage: python3 tests/reference/batch_reference.py tests/data tests/fixtures/batch_reference

Sources of each number:
- mean direction: scipy.stats.circmean; mean vector length r: pycircstat2 circ_mean_and_r,
  cross-checked against astropy.stats.circstats (r = 1 - circvar) to 1e-12;
- Rayleigh test: pycircstat2.hypothesis.rayleigh_test (Zar 2010 eq. 27.4), also on n_eff;
- n_eff: AR(1) rule n (1 - rho1) / (1 + rho1) on the lag-1 autocorrelation of the unit vectors,
  pairs only inside runs of consecutive scored samples (Bayley & Hammersley 1946), written out
  here with numpy: the same definition the program documents, computed independently;
- Moore's modified Rayleigh test (Moore 1980; Zar 2010 27.1): R* from ranks (scipy rankdata),
  p = exp(-|sum i u_i|^2 / sum i^2) (the large-sample chi-square(2) law of the ranked sum);
- Hotelling's one-sample test (Batschelet 1981 7.2; Zar 2010 eq. 27.40) with numpy, p from
  scipy.stats.f;
- Watson-Williams: pycircstat2.hypothesis.watson_williams_test;
- V-test: pycircstat2.hypothesis.V_test.

Rule shared with the program (design choices, not statistics): an animal's vector under a
condition pools all scored world headings of that animal in epochs of that condition; only
sessions with status "complete" are used; conditions are compared in name order.
"""

import json
import math
import sys
import warnings
from pathlib import Path

import astropy
import numpy as np
import pandas as pd
import pycircstat2
import scipy
from astropy.stats import circstats
from pycircstat2.descriptive import circ_mean_and_r
from pycircstat2.hypothesis import V_test, rayleigh_test, watson_williams_test
from scipy import stats

warnings.simplefilter("ignore", RuntimeWarning)


def wrap360(x):
    return x % 360.0


def signed(x):
    w = wrap360(x)
    return w - 360.0 if w > 180.0 else w


def circ_desc(deg):
    """(n, mean_deg or None, r) of directions in degrees."""
    deg = np.asarray(deg, dtype=float)
    n = len(deg)
    if n == 0:
        return 0, None, 0.0
    rad = np.deg2rad(deg)
    _, r = circ_mean_and_r(rad)
    r_astropy = 1.0 - float(circstats.circvar(rad))
    assert abs(r - r_astropy) < 1e-12, (r, r_astropy)
    if r < 1e-12:
        return n, None, float(r)
    mean = float(np.rad2deg(stats.circmean(rad, high=2 * np.pi, low=0.0)))
    return n, wrap360(mean), float(r)


def rayleigh_p(n, r):
    if n <= 0:
        return None
    return float(rayleigh_test(r=min(max(r, 0.0), 1.0), n=n).pval)


def n_eff(deg, chain_id):
    """AR(1) effective sample size of headings; pairs only within one chain."""
    deg = np.asarray(deg, dtype=float)
    n = len(deg)
    if n == 0:
        return 0.0
    u = np.column_stack([np.cos(np.deg2rad(deg)), np.sin(np.deg2rad(deg))])
    same = chain_id[1:] == chain_id[:-1]
    pairs = int(same.sum())
    if pairs == 0:
        return float(n)
    m = u.mean(axis=0)
    gamma0 = 1.0 - float(m @ m)
    if gamma0 <= 1e-14:
        return 1.0
    d = u - m
    gamma1 = float((d[1:][same] * d[:-1][same]).sum()) / pairs
    rho = max(-1.0, min(1.0, gamma1 / gamma0))
    if rho <= 0:
        return float(n)
    if rho >= 1:
        return 1.0
    return float(min(max(n * (1 - rho) / (1 + rho), 1.0), n))


def load_session(folder):
    meta = json.loads((folder / "session.json").read_text())
    summary = None
    if (folder / "summary.json").is_file():
        summary = json.loads((folder / "summary.json").read_text())
    df = pd.read_csv(folder / "samples.csv")
    return meta, summary, df


def animal_of(meta):
    return meta.get("animal") or meta.get("animal_id") or meta["id"]


def planned_of(meta):
    """session.json "epochs": index -> (condition, planned turn before the epoch)."""
    return {int(e["index"]): (e["condition"], float(e["turn_before_deg"])) for e in meta["epochs"]}


def session_tables(folder):
    meta, summary, df = load_session(folder)
    planned = planned_of(meta)
    conds = {k: v[0] for k, v in planned.items()}
    sid = meta["id"]
    animal = animal_of(meta)
    df = df.reset_index(drop=True)
    # A chain is a run of consecutive scored rows of one epoch.
    brk = (df["scored"] == 0) | (df["epoch"] != df["epoch"].shift())
    df["chain"] = brk.cumsum()
    scored_all = df[df["scored"] == 1]
    scored = scored_all[scored_all["epoch"].isin(list(planned))]
    epochs = []
    world_by_epoch = {}
    arena_by_epoch = {}
    for ep, g in df[df["epoch"].isin(list(planned))].groupby("epoch", sort=True):
        s = g[g["scored"] == 1]
        n, mw, r = circ_desc(s["world_heading_deg"])
        _, ma, ra = circ_desc(s["arena_heading_deg"])
        sun = (s["world_heading_deg"] - s["sun_azimuth_deg"]) % 360.0
        _, msun, rsun = circ_desc(sun)
        ne = n_eff(s["world_heading_deg"].to_numpy(), s["chain"].to_numpy())
        # The arena bearing of the epoch's first scored sample (its first sample if none).
        bearing = float((s if n > 0 else g)["arena_bearing_deg"].iloc[0])
        world_by_epoch[int(ep)] = mw
        arena_by_epoch[int(ep)] = ma
        epochs.append(
            dict(
                session_id=sid,
                animal=animal,
                epoch=int(ep),
                condition=conds.get(int(ep), ""),
                n=n,
                mean_world_deg=mw,
                r=r if n else None,
                mean_arena_deg=ma,
                r_arena=ra if n else None,
                rayleigh_p=rayleigh_p(n, r),
                n_eff=ne if n else None,
                rayleigh_p_eff=rayleigh_p(ne, r) if n else None,
                arena_bearing_deg=bearing,
                mean_sun_relative_deg=msun,
            )
        )
    turns = []
    eps = sorted(world_by_epoch)
    commanded = {t["index"]: t["turn_deg"] for t in (summary or {}).get("turns", [])}
    for a, b in zip(eps, eps[1:]):
        if b != a + 1:
            continue
        # The commanded turn (summary.json), else the planned one (session.json).
        turn = commanded.get(a, planned[b][1])
        ws = (
            signed(world_by_epoch[b] - world_by_epoch[a])
            if world_by_epoch[a] is not None and world_by_epoch[b] is not None
            else None
        )
        turns.append(
            dict(session_id=sid, animal=animal, turn=a, turn_deg=turn, world_shift_deg=ws)
        )
    _, mw_all, rw_all = circ_desc(scored_all["world_heading_deg"])
    _, _, ra_all = circ_desc(scored_all["arena_heading_deg"])
    session = dict(
        session_id=sid,
        animal=animal,
        started_utc=meta.get("started_utc", ""),
        status=meta.get("status", ""),
        r_world=rw_all,
        r_arena=ra_all,
        mean_world_deg=mw_all,
        n=len(scored),
    )
    # Pooled world headings per condition, for the population tables.
    pooled = {}
    for ep, s in scored.groupby("epoch"):
        c = conds.get(int(ep), "")
        pooled.setdefault(c, []).append(s["world_heading_deg"].to_numpy())
    pooled = {c: np.concatenate(v) for c, v in pooled.items()}
    return session, epochs, turns, pooled


def moore(means, lengths):
    n = len(means)
    if n < 2:
        return None, None
    ranks = stats.rankdata(lengths)  # average ranks for ties
    rad = np.deg2rad(means)
    sc = float((ranks * np.cos(rad)).sum())
    ss = float((ranks * np.sin(rad)).sum())
    len2 = sc * sc + ss * ss
    r_star = math.sqrt(len2) / n**1.5
    return r_star, math.exp(-len2 / float((ranks**2).sum()))


def hotelling(means, lengths):
    n = len(means)
    if n < 3:
        return None, None
    rad = np.deg2rad(means)
    x = np.asarray(lengths) * np.cos(rad)
    y = np.asarray(lengths) * np.sin(rad)
    xm, ym = x.mean(), y.mean()
    sxx = ((x - xm) ** 2).sum()
    syy = ((y - ym) ** 2).sum()
    sxy = ((x - xm) * (y - ym)).sum()
    det = sxx * syy - sxy**2
    if det <= 1e-12 * (sxx + syy) ** 2:
        return None, None
    f = n * (n - 2) / 2 * (xm**2 * syy - 2 * xm * ym * sxy + ym**2 * sxx) / det
    return float(f), float(stats.f.sf(f, 2, n - 2))


def main():
    data, out = Path(sys.argv[1]), Path(sys.argv[2])
    out.mkdir(parents=True, exist_ok=True)
    folders = sorted(
        p for p in data.rglob("session.json") if (p.parent / "samples.csv").is_file()
    )
    sessions, epochs, turns = [], [], []
    vectors = {}  # condition -> animal -> list of world headings
    for sj in folders:
        meta = json.loads(sj.read_text())
        if meta.get("status") != "complete" or meta.get("format_version", 1) > 1:
            continue
        s, e, t, pooled = session_tables(sj.parent)
        sessions.append(s)
        epochs.extend(e)
        turns.extend(t)
        for c, h in pooled.items():
            vectors.setdefault(c, {}).setdefault(s["animal"], []).append(h)
    key = ["session_id"]
    pd.DataFrame(sessions).sort_values(key).to_csv(out / "sessions.csv", index=False)
    pd.DataFrame(epochs).sort_values(key + ["epoch"]).to_csv(out / "epochs.csv", index=False)
    pd.DataFrame(turns).sort_values(key + ["turn"]).to_csv(out / "turns.csv", index=False)

    animal_vec = {}  # condition -> animal -> (mean, r)
    pop = []
    for c in sorted(vectors):
        vs = {}
        for a in sorted(vectors[c]):
            n, m, r = circ_desc(np.concatenate(vectors[c][a]))
            if m is not None:
                vs[a] = (m, r)
        animal_vec[c] = vs
        means = np.array([v[0] for v in vs.values()])
        lengths = np.array([v[1] for v in vs.values()])
        n, m, r = circ_desc(means)
        rt = rayleigh_test(alpha=np.deg2rad(means)) if n else None
        ms, mp = moore(means, lengths)
        hf, hp = hotelling(means, lengths)
        x = (lengths * np.cos(np.deg2rad(means))).mean() if n else None
        y = (lengths * np.sin(np.deg2rad(means))).mean() if n else None
        pop.append(
            dict(
                condition=c,
                animals=n,
                mean_deg=m,
                r=r if n else None,
                rayleigh_z=float(rt.z) if rt else None,
                rayleigh_p=float(rt.pval) if rt else None,
                moore_r_star=ms,
                moore_p=mp,
                hotelling_f=hf,
                hotelling_p=hp,
                mean_vector_deg=wrap360(math.degrees(math.atan2(y, x))) if n else None,
                mean_vector_length=math.hypot(x, y) if n else None,
            )
        )
    pd.DataFrame(pop).to_csv(out / "population.csv", index=False)

    comps, paired = [], []
    conds = sorted(animal_vec)
    for i, a in enumerate(conds):
        for b in conds[i + 1 :]:
            da = np.array([v[0] for v in animal_vec[a].values()])
            db = np.array([v[0] for v in animal_vec[b].values()])
            f = p = None
            if len(da) and len(db) and len(da) + len(db) > 2:
                ww = watson_williams_test([np.deg2rad(da), np.deg2rad(db)])
                f, p = float(ww.F), float(ww.pval)
            comps.append(
                dict(condition_a=a, condition_b=b, animals_a=len(da), animals_b=len(db),
                     ww_f=f, ww_p=p)
            )
            changes = [
                signed(animal_vec[b][k][0] - animal_vec[a][k][0])
                for k in animal_vec[a]
                if k in animal_vec[b]
            ]
            if changes:
                vt = V_test(angle=0.0, alpha=np.deg2rad(changes))
                n, m, r = circ_desc(changes)
                paired.append(
                    dict(condition_a=a, condition_b=b, animals=len(changes),
                         mean_change_deg=signed(m) if m is not None else None, r=r,
                         v=float(vt.V), v_u=float(vt.u), v_p=float(vt.pval))
                )
    pd.DataFrame(comps).to_csv(out / "comparisons.csv", index=False)
    pd.DataFrame(paired).to_csv(out / "paired.csv", index=False)

    animals = []
    sdf = pd.DataFrame(sessions)
    for a, g in sdf.groupby("animal", sort=True):
        means = g["mean_world_deg"].dropna().to_numpy()
        n, m, r = circ_desc(means)
        animals.append(
            dict(animal=a, sessions=len(g), mean_world_deg=m,
                 r_between_sessions=r if n >= 2 else None,
                 rayleigh_p_between_sessions=rayleigh_p(n, r) if n >= 2 else None,
                 mean_r_world=float(g["r_world"].mean()))
        )
    pd.DataFrame(animals).to_csv(out / "animals.csv", index=False)

    pd.DataFrame(
        [
            dict(library="python", version=sys.version.split()[0]),
            dict(library="numpy", version=np.__version__),
            dict(library="pandas", version=pd.__version__),
            dict(library="scipy", version=scipy.__version__),
            dict(library="astropy", version=astropy.__version__),
            dict(library="pycircstat2", version=pycircstat2.__version__),
        ]
    ).to_csv(out / "versions.csv", index=False)
    print(f"{len(sessions)} sessions, {len(epochs)} epochs, {len(turns)} turns -> {out}")


if __name__ == "__main__":
    main()
