#!/usr/bin/env python3
"""Independent reference for `skybearing batch`.

Reads every session folder under DATA_DIR with pandas (by header name, as the contract lays
them out), recomputes the per-epoch, per-turn, per-session and population statistics with
scipy, astropy and pycircstat2, and writes the expected tables into OUT_DIR:

    sessions.csv epochs.csv turns.csv population.csv comparisons.csv paired.csv animals.csv
    turns_by_animal.csv turns_population.csv
    versions.csv   (the library versions used)

Usage: python3 tests/reference/batch_reference.py tests/data tests/fixtures/batch_reference

Sources of each number:
- mean direction: scipy.stats.circmean; mean vector length r: pycircstat2 circ_mean_and_r,
  cross-checked against astropy.stats.circstats (r = 1 - circvar) to 1e-12;
- Rayleigh test: pycircstat2.hypothesis.rayleigh_test (Zar 2010 eq. 27.4), also on n_eff;
- n_eff: AR(1) rule n (1 - rho1) / (1 + rho1) on the lag-1 autocorrelation of the unit vectors,
  pairs only inside runs of consecutive scored samples (Bayley & Hammersley 1946), written out
  here with numpy: the same definition the program documents, computed independently;
- Moore's modified Rayleigh test (Moore 1980; Zar 2010 27.6): R* from ranks (scipy rankdata);
  its p is a randomization p (directions drawn uniformly, ranks kept), drawn here with numpy's
  own generator (PCG64, 200000 draws), so it agrees with the program's (SplitMix64, 9999
  draws) only within Monte Carlo error;
- Hotelling's one-sample test (Batschelet 1981 7.2; Zar 2010 eq. 27.40) with numpy; p the
  same kind of randomization p (directions uniform, lengths kept); the F tail from
  scipy.stats.f is kept as hotelling_p_f for comparison;
- Watson-Williams: pycircstat2.hypothesis.watson_williams_test for F, only between conditions
  with disjoint sets of animals; its p is a permutation p of that F (numpy);
- paired tests (Zar 2010 27.13): Hotelling on the differences of unit vectors and Moore's
  paired R*, both with the exact sign-flip p (all 2^n flips enumerated, n <= 12);
- V-test: pycircstat2.hypothesis.V_test (V and u; its p for more than 12 directions);
- Rayleigh and V-test p with few directions (population and animals Rayleigh p, 2-12
  directions; paired and turn V-test p, 3-12): the exact null of n uniform directions, by
  numpy Monte Carlo (400,000 draws), as the program does with its own 40,000 draws;
- the turn test across animals (turns_by_animal.csv, turns_population.csv): per animal the
  mean of its sessions' mean unit vectors of the whole-epoch world shifts (and shift - turn),
  V-tests of the animals' directions toward 0.

Rule shared with the program (design choices, not statistics): an animal's vector under a
condition, per frame (world headings; sun-relative = samples.csv's sun_relative_heading_deg),
is the mean of its sessions' mean vectors (each session pooling its scored headings in epochs
of that condition), so each session weighs equally; only sessions with status "complete" are
used; paired conditions are taken in protocol order (a condition's first planned epoch index
over all sessions, ties by name), within each frame.
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


FRAMES = [("world", "world_heading_deg"), ("sun", "sun_relative_heading_deg")]


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


EXACT_MAX_N = 12
_NULL_DRAWS = 400_000
_null_cache = {}


def _null(kind, n):
    """Sorted resultant length R (kind "R") or V = sum of cosines (kind "V") of n uniform
    directions: the exact null of the Rayleigh and V-tests, drawn with numpy's PCG64 (the
    program draws its own 40,000 with SplitMix64, so the two agree within Monte Carlo error)."""
    key = (kind, n)
    if key not in _null_cache:
        rng = np.random.default_rng(1000 + n + (0 if kind == "R" else 100))
        a = rng.uniform(0.0, 2 * math.pi, size=(_NULL_DRAWS, n))
        c = np.cos(a).sum(axis=1)
        v = np.hypot(c, np.sin(a).sum(axis=1)) if kind == "R" else c
        _null_cache[key] = np.sort(v)
    return _null_cache[key]


def _mc_tail(kind, n, observed):
    d = _null(kind, n)
    ge = len(d) - np.searchsorted(d, observed - 1e-9, side="left")
    return float((1 + ge) / (1 + len(d)))


def rayleigh_p_few(n, r):
    """Rayleigh p of n directions: the exact null (Monte Carlo) for 2 <= n <= 12, else Zar's
    approximation (pycircstat2); None below 2."""
    if n < 2:
        return None
    if n > EXACT_MAX_N:
        return rayleigh_p(n, r)
    return _mc_tail("R", n, n * min(max(r, 0.0), 1.0))


def v_p_few(angles_deg):
    """V-test p toward 0: the exact null (Monte Carlo) for 3 <= n <= 12, else pycircstat2's
    normal approximation; None below 3."""
    n = len(angles_deg)
    if n < 3:
        return None
    if n > EXACT_MAX_N:
        return float(V_test(angle=0.0, alpha=np.deg2rad(angles_deg)).pval)
    return _mc_tail("V", n, float(np.cos(np.deg2rad(angles_deg)).sum()))


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
    scored = scored_all[scored_all["epoch"] > 0]
    epochs = []
    world_by_epoch = {}
    arena_by_epoch = {}
    for ep, g in df[df["epoch"] > 0].groupby("epoch", sort=True):
        s = g[g["scored"] == 1]
        n, mw, r = circ_desc(s["world_heading_deg"])
        _, ma, ra = circ_desc(s["arena_heading_deg"])
        # Mean sun azimuth: linear mean of the offsets from the first scored sample's azimuth
        # (the sun moves a few degrees per epoch); sun-relative = mean world - mean sun az.
        if n > 0:
            az = s["sun_azimuth_deg"].to_numpy()
            w = (az - az[0]) % 360.0
            off = np.where(w > 180.0, w - 360.0, w)
            mean_az = wrap360(az[0] + off.mean())
            msun = wrap360(mw - mean_az) if mw is not None else None
        else:
            mean_az = msun = None
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
                mean_sun_azimuth_deg=mean_az,
                mean_sun_elevation_deg=float(s["sun_elevation_deg"].mean()) if n else None,
            )
        )
    turns = []
    eps = sorted(world_by_epoch)
    commanded = {t["index"]: t["turn_deg"] for t in (summary or {}).get("turns", [])}
    for a, b in zip(eps, eps[1:]):
        if b != a + 1:
            continue
        # The commanded turn (summary.json), else the planned one (session.json).
        turn = commanded.get(a, planned[b][1] if b in planned else None)
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
    # Per frame and condition: this session's mean vector, for the population tables.
    pooled = {}
    for frame, col in FRAMES:
        for ep, s in scored.groupby("epoch"):
            c = conds.get(int(ep), "")
            pooled.setdefault((frame, c), []).append(s[col].to_numpy())
    pooled = {k: circ_desc(np.concatenate(v))[1:] for k, v in pooled.items()}
    _, msun_all, rsun_all = circ_desc(scored["sun_relative_heading_deg"])
    session["mean_sun_deg"] = msun_all
    session["r_sun"] = rsun_all
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
    # p: the moment-corrected exponential tail that skybearing's circular module documents
    # (t = |sum i u_i|^2 / sum i^2, delta = sum i^4 / (sum i^2)^2,
    # p = exp(-t + delta (t/2 - t^2/4)); tends to Moore's exp(-3 R*^2) for large n).
    s2, s4 = float((ranks**2).sum()), float((ranks**4).sum())
    t = len2 / s2
    delta = s4 / s2**2
    return r_star, min(max(math.exp(-t + delta * (t / 2 - t * t / 4)), 0.0), 1.0)


MC_DRAWS = 200_000
RNG = np.random.default_rng(20261202)


def mc_p(observed, draws):
    """(1 + k) / (1 + B) with k the draws at least as extreme (rounding allowed)."""
    k = int((draws >= observed - 1e-9 * abs(observed)).sum())
    return (1 + k) / (1 + len(draws))


def moore_randomization_p(means, lengths):
    ranks = stats.rankdata(lengths)
    rad = np.deg2rad(means)
    obs = (ranks * np.cos(rad)).sum() ** 2 + (ranks * np.sin(rad)).sum() ** 2
    th = RNG.uniform(0, 2 * np.pi, size=(MC_DRAWS, len(means)))
    draws = (ranks * np.cos(th)).sum(1) ** 2 + (ranks * np.sin(th)).sum(1) ** 2
    return mc_p(obs, draws)


def hotelling_f_rows(x, y):
    """Hotelling's one-sample F of each row of x, y (arrays of shape (m, n))."""
    n = x.shape[1]
    xm, ym = x.mean(1, keepdims=True), y.mean(1, keepdims=True)
    sxx = ((x - xm) ** 2).sum(1)
    syy = ((y - ym) ** 2).sum(1)
    sxy = ((x - xm) * (y - ym)).sum(1)
    det = sxx * syy - sxy**2
    xm, ym = xm[:, 0], ym[:, 0]
    with np.errstate(divide="ignore", invalid="ignore"):
        f = n * (n - 2) / 2 * (xm**2 * syy - 2 * xm * ym * sxy + ym**2 * sxx) / det
    return np.where(det <= 1e-12 * (sxx + syy) ** 2, np.inf, f)


def hotelling(means, lengths):
    n = len(means)
    if n < 3:
        return None, None, None
    rad = np.deg2rad(means)
    lengths = np.asarray(lengths)
    x = lengths * np.cos(rad)
    y = lengths * np.sin(rad)
    f = hotelling_f_rows(x[None, :], y[None, :])[0]
    if not np.isfinite(f):
        return None, None, None
    th = RNG.uniform(0, 2 * np.pi, size=(MC_DRAWS, n))
    draws = hotelling_f_rows(lengths * np.cos(th), lengths * np.sin(th))
    return float(f), mc_p(f, draws), float(stats.f.sf(f, 2, n - 2))


def all_signs(n):
    """Every vector of n signs, shape (2^n, n)."""
    m = np.arange(2**n)[:, None]
    return np.where((m >> np.arange(n)) & 1, -1.0, 1.0)


def paired_tests(a_deg, b_deg):
    """Zar 2010 27.13: Hotelling's F and Moore's R* of the unit-vector differences, each with
    its exact sign-flip p."""
    n = len(a_deg)
    if n < 3 or n > 12:
        return None, None, None, None
    a, b = np.deg2rad(a_deg), np.deg2rad(b_deg)
    dx, dy = np.cos(a) - np.cos(b), np.sin(a) - np.sin(b)
    signs = all_signs(n)
    fs = hotelling_f_rows(signs * dx, signs * dy)
    f = float(hotelling_f_rows(dx[None, :], dy[None, :])[0])
    hp = float((fs >= f - 1e-9 * abs(f)).mean())
    ln = np.hypot(dx, dy)
    ranks = stats.rankdata(ln)
    w = np.where(ln > 1e-12, ranks / np.where(ln > 1e-12, ln, 1.0), 0.0)
    sx, sy = (signs * w * dx).sum(1), (signs * w * dy).sum(1)
    rs = np.hypot(sx, sy) / n**1.5
    r0 = float(rs[0])
    mp = float((rs >= r0 - 1e-9 * r0).mean())
    return f, hp, r0, mp


def ww_permutation_p(da, db, draws=20_000):
    """Permutation p of pycircstat2's Watson-Williams F (group labels shuffled)."""
    pooled = np.deg2rad(np.concatenate([da, db]))
    obs = float(watson_williams_test([pooled[: len(da)], pooled[len(da) :]]).F)
    k = 0
    for _ in range(draws):
        perm = RNG.permutation(pooled)
        f = float(watson_williams_test([perm[: len(da)], perm[len(da) :]]).F)
        k += f >= obs - 1e-9 * abs(obs)
    return obs, (1 + k) / (1 + draws)


def main():
    data, out = Path(sys.argv[1]), Path(sys.argv[2])
    out.mkdir(parents=True, exist_ok=True)
    folders = sorted(
        p for p in data.rglob("session.json") if (p.parent / "samples.csv").is_file()
    )
    sessions, epochs, turns = [], [], []
    first_index = {}  # condition -> its first planned epoch index over all sessions
    vectors = {}  # (frame, condition) -> animal -> list of session (mean, r)
    for sj in folders:
        meta = json.loads(sj.read_text())
        if meta.get("status") != "complete" or meta.get("format_version", 1) > 1:
            continue
        for c, i in ((v[0], k) for k, v in planned_of(meta).items()):
            first_index[c] = min(first_index.get(c, i), i)
        s, e, t, pooled = session_tables(sj.parent)
        sessions.append(s)
        epochs.extend(e)
        turns.extend(t)
        for k, mr in pooled.items():
            vectors.setdefault(k, {}).setdefault(s["animal"], []).append(mr)
    key = ["session_id"]
    pd.DataFrame(sessions).drop(columns=["mean_sun_deg", "r_sun"]).sort_values(key).to_csv(
        out / "sessions.csv", index=False
    )
    pd.DataFrame(epochs).sort_values(key + ["epoch"]).to_csv(out / "epochs.csv", index=False)
    pd.DataFrame(turns).sort_values(key + ["turn"]).to_csv(out / "turns.csv", index=False)

    animal_vec = {}  # (frame, condition) -> animal -> (mean, r)
    pop = []
    frame_order = {f: i for i, (f, _) in enumerate(FRAMES)}
    for fc in sorted(vectors, key=lambda k: (frame_order[k[0]], k[1])):
        frame, c = fc
        vs = {}
        for a in sorted(vectors[fc]):
            # The second-order mean of the sessions' vectors (Batschelet 1981 10.1).
            ms = [(m, r) for m, r in vectors[fc][a] if m is not None]
            x = np.mean([r * math.cos(math.radians(m)) for m, r in ms])
            y = np.mean([r * math.sin(math.radians(m)) for m, r in ms])
            if ms and math.hypot(x, y) > 0:
                vs[a] = (wrap360(math.degrees(math.atan2(y, x))), math.hypot(x, y))
        animal_vec[fc] = vs
        means = np.array([v[0] for v in vs.values()])
        lengths = np.array([v[1] for v in vs.values()])
        n, m, r = circ_desc(means)
        rt = rayleigh_test(alpha=np.deg2rad(means)) if n else None
        ms, _ = moore(means, lengths)
        mp = moore_randomization_p(means, lengths) if n >= 2 else None
        hf, hp, hpf = hotelling(means, lengths)
        x = (lengths * np.cos(np.deg2rad(means))).mean() if n else None
        y = (lengths * np.sin(np.deg2rad(means))).mean() if n else None
        pop.append(
            dict(
                frame=frame,
                condition=c,
                animals=n,
                mean_deg=m,
                r=r if n else None,
                rayleigh_z=float(rt.z) if rt else None,
                rayleigh_p=rayleigh_p_few(n, r) if rt else None,
                moore_r_star=ms,
                moore_p=mp,
                hotelling_f=hf,
                hotelling_p=hp,
                hotelling_p_f=hpf,
                mean_vector_deg=wrap360(math.degrees(math.atan2(y, x))) if n else None,
                mean_vector_length=math.hypot(x, y) if n else None,
            )
        )
    pd.DataFrame(pop).to_csv(out / "population.csv", index=False)

    comps, paired = [], []
    for frame, _ in FRAMES:
      conds = sorted(
          (k for k in animal_vec if k[0] == frame),
          key=lambda k: (first_index.get(k[1], 10**9), k[1]),
      )
      for i, a in enumerate(conds):
        for b in conds[i + 1 :]:
            da = np.array([v[0] for v in animal_vec[a].values()])
            db = np.array([v[0] for v in animal_vec[b].values()])
            f = p = None
            if set(animal_vec[a]) & set(animal_vec[b]) or frame != "world":
                pass  # the same animals: not independent groups (paired.csv instead)
            else:
                if len(da) and len(db) and len(da) + len(db) > 2:
                    f, p = ww_permutation_p(da, db)
                # comparisons.csv keeps name order (a < b); F is symmetric in the groups.
                (ca, na), (cb, nb) = sorted([(a[1], len(da)), (b[1], len(db))])
                comps.append(
                    dict(condition_a=ca, condition_b=cb, animals_a=na, animals_b=nb,
                         ww_f=f, ww_p=p)
                )
            both = [k for k in animal_vec[a] if k in animal_vec[b]]
            changes = [signed(animal_vec[b][k][0] - animal_vec[a][k][0]) for k in both]
            pf, pp, pr, pm = paired_tests(
                np.array([animal_vec[a][k][0] for k in both]),
                np.array([animal_vec[b][k][0] for k in both]),
            )
            if changes:
                vt = V_test(angle=0.0, alpha=np.deg2rad(changes))
                n, m, r = circ_desc(changes)
                paired.append(
                    dict(frame=frame, condition_a=a[1], condition_b=b[1], animals=len(changes),
                         mean_change_deg=signed(m) if m is not None else None, r=r,
                         v=float(vt.V), v_u=float(vt.u), v_p=v_p_few(changes),
                         hotelling_f=pf, hotelling_p=pp, moore_r_star=pr, moore_p=pm)
                )
    pd.DataFrame(
        comps, columns=["condition_a", "condition_b", "animals_a", "animals_b", "ww_f", "ww_p"]
    ).to_csv(out / "comparisons.csv", index=False)
    pd.DataFrame(paired).to_csv(out / "paired.csv", index=False)

    animals = []
    sdf = pd.DataFrame(sessions)
    for a, g in sdf.groupby("animal", sort=True):
        # World: all scored samples of the session; sun: its scored samples in epochs.
        for frame, mcol, rcol in [("world", "mean_world_deg", "r_world"),
                                  ("sun", "mean_sun_deg", "r_sun")]:
            means = g[mcol].dropna().to_numpy()
            n, m, r = circ_desc(means)
            animals.append(
                dict(animal=a, frame=frame, sessions=len(g), mean_world_deg=m,
                     r_between_sessions=r if n >= 2 else None,
                     rayleigh_p_between_sessions=rayleigh_p_few(n, r) if n >= 2 else None,
                     mean_r_world=float(g[rcol].mean()))
            )
    pd.DataFrame(animals).to_csv(out / "animals.csv", index=False)

    # The turn test across animals: per animal, the mean of its sessions' mean unit vectors of
    # the world shifts (and of shift - turn), each session weighing equally; V-tests of the
    # animals' directions toward 0 (pycircstat2 V_test for V and u; p as v_p_few).
    tdf = pd.DataFrame(turns).dropna(subset=["world_shift_deg", "turn_deg"])
    tdf["residual"] = [signed(d - t) for d, t in zip(tdf["world_shift_deg"], tdf["turn_deg"])]

    def equal_weight(groups):
        xs, ys = [], []
        for g in groups:
            _, m, r = circ_desc(g)
            xs.append(r * math.cos(math.radians(m)) if m is not None else 0.0)
            ys.append(r * math.sin(math.radians(m)) if m is not None else 0.0)
        x, y = np.mean(xs), np.mean(ys)
        ln = math.hypot(x, y)
        return (signed(math.degrees(math.atan2(y, x))) if ln > 1e-12 else None), ln

    by_animal, world_dirs, arena_dirs = [], [], []
    for a, g in tdf.groupby("animal", sort=True):
        ws = [gg["world_shift_deg"].to_numpy() for _, gg in g.groupby("session_id", sort=True)]
        rs = [gg["residual"].to_numpy() for _, gg in g.groupby("session_id", sort=True)]
        mw, lw = equal_weight(ws)
        mr, lr = equal_weight(rs)
        if mw is not None:
            world_dirs.append(mw)
        if mr is not None:
            arena_dirs.append(mr)
        by_animal.append(
            dict(animal=a, sessions=len(ws), turns=len(g), mean_world_shift_deg=mw,
                 r_world_shift=lw, mean_arena_residual_deg=mr, r_arena_residual=lr,
                 p_world_kept=v_p_few(g["world_shift_deg"].to_numpy()),
                 p_arena_kept=v_p_few(g["residual"].to_numpy()))
        )
    pd.DataFrame(by_animal).to_csv(out / "turns_by_animal.csv", index=False)
    row = dict(animals=len(by_animal), sessions=int(tdf["session_id"].nunique()), turns=len(tdf))
    for side, dirs in (("world", world_dirs), ("arena", arena_dirs)):
        name = "world_shift" if side == "world" else "arena_residual"
        _, m, r = circ_desc(dirs)
        vt = V_test(angle=0.0, alpha=np.deg2rad(dirs))
        row[f"mean_{name}_deg"] = signed(m) if m is not None else None
        row[f"r_{name}"] = r
        row[f"v_{side}"] = float(vt.V)
        row[f"v_u_{side}"] = float(vt.u)
        row[f"p_{side}_kept"] = v_p_few(dirs)
    pd.DataFrame([row]).to_csv(out / "turns_population.csv", index=False)

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
