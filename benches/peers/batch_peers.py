#!/usr/bin/env python3
"""`skybearing batch` against the tools a user would pick for the same job, side by side.

Each contender computes, for every session under DIR and every epoch > 0, the count n, the mean
direction and the mean vector length r of the scored world headings, and writes them to a CSV:

  polars  lazy scan_csv over all samples.csv files (all cores), group-by (session, epoch)
  duckdb  read_csv over all samples.csv files (all cores), GROUP BY (session, epoch)
  pandas  read_csv with usecols (three columns) per file, groupby epoch (one core)
  polars over Parquet: scan_parquet over a samples.parquet beside each samples.csv (the nine
          columns batch reads, made here once by polars with its defaults), group-by

`skybearing batch` computes much more per epoch (arena statistics, Rayleigh tests, effective
sample size, sun means, flight time, turns, population tables), so the comparison does not
favour it. `cat` of the same files to /dev/null is the cost of reading the bytes. batch reads
each session's samples.columns (the compact copy written at session close, see
src/archive/columns.rs); `batch --csv-only` reads samples.csv, as the peers do, and must write
the same tables to the byte.

  batch_peers.py run CONTENDER DIR OUT.csv        one contender (timed by `compare`)
  batch_peers.py compare BIN DIR WORK REPEATS     all of them, interleaved, REPEATS rounds

`compare` runs every contender as its own process (start-up and imports count, as for the
binary), in a rotated order each round, takes the median wall time of each, checks that all
agree with batch's epochs.csv (n equal, mean within 1e-4 degrees, r within 1e-4) and prints a
table of medians and ratios, of wall time and of CPU time (user + system, all threads: on a
machine that others share, the CPU time is the steadier figure).
"""

import csv
import json
import math
import platform
import resource
import statistics
import subprocess
import sys
import time
from pathlib import Path

SCORED = ("epoch", "world_heading_deg", "scored")


def session_ids(root):
    """Folder name -> session id (from session.json)."""
    out = {}
    for sj in root.glob("*/session.json"):
        out[sj.parent.name] = json.loads(sj.read_text())["id"]
    return out


def write(out, rows):
    with open(out, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["session_id", "epoch", "n", "mean_world_deg", "r"])
        for sid, ep, n, c, s in rows:
            w.writerow([sid, int(ep), int(n), math.degrees(math.atan2(s, c)) % 360.0,
                        math.hypot(c, s) / n])


def polars_epochs(root, scan, out):
    """The per-epoch sums from a polars lazy frame of every session's samples."""
    import polars as pl

    ids = session_ids(root)
    rad = pl.col("world_heading_deg").radians()
    g = (
        scan.select("path", *SCORED)
        .filter((pl.col("scored") == 1) & (pl.col("epoch") > 0))
        .group_by("path", "epoch")
        .agg(pl.len().alias("n"), rad.cos().sum().alias("c"), rad.sin().sum().alias("s"))
        .collect()
    )
    write(out, ((ids[Path(p).parent.name], e, n, c, s) for p, e, n, c, s in g.iter_rows()))


def run_polars(root, out):
    import polars as pl

    polars_epochs(root, pl.scan_csv(str(root / "*" / "samples.csv"), include_file_paths="path"),
                  out)


NEEDED = ("t_s", "epoch", "arena_heading_deg", "arena_bearing_deg", "world_heading_deg",
          "sun_azimuth_deg", "sun_elevation_deg", "flying", "scored")


def make_parquet(root):
    """samples.parquet beside each samples.csv: the nine columns batch reads (polars' defaults:
    zstd), the Parquet alternative to samples.columns."""
    import polars as pl

    for csv_path in sorted(root.glob("*/samples.csv")):
        pq = csv_path.with_name("samples.parquet")
        if not pq.is_file():
            pl.read_csv(csv_path, columns=list(NEEDED)).write_parquet(pq)


def run_polars_parquet(root, out):
    import polars as pl

    polars_epochs(
        root, pl.scan_parquet(str(root / "*" / "samples.parquet"), include_file_paths="path"), out)


def run_duckdb(root, out):
    import duckdb

    ids = session_ids(root)
    g = duckdb.sql(
        f"""SELECT filename, epoch, count(*) AS n,
                   sum(cos(radians(world_heading_deg))) AS c,
                   sum(sin(radians(world_heading_deg))) AS s
            FROM read_csv('{root}/*/samples.csv', filename = true)
            WHERE scored = 1 AND epoch > 0
            GROUP BY filename, epoch"""
    ).fetchall()
    write(out, ((ids[Path(p).parent.name], e, n, c, s) for p, e, n, c, s in g))


def run_pandas(root, out):
    import numpy as np
    import pandas as pd

    rows = []
    for sj in sorted(root.glob("*/session.json")):
        sid = json.loads(sj.read_text())["id"]
        df = pd.read_csv(sj.parent / "samples.csv", usecols=list(SCORED))
        df = df[(df["scored"] == 1) & (df["epoch"] > 0)]
        w = np.deg2rad(df["world_heading_deg"].to_numpy())
        df = df.assign(c=np.cos(w), s=np.sin(w))
        for ep, g in df.groupby("epoch"):
            rows.append((sid, ep, len(g), g["c"].sum(), g["s"].sum()))
    write(out, rows)


def read_epochs(path):
    with open(path, newline="") as f:
        return {
            (r["session_id"], int(r["epoch"])): (int(r["n"]), float(r["mean_world_deg"] or "nan"),
                                                 float(r["r"] or "nan"))
            for r in csv.DictReader(f)
        }


def agree(ref, other, name):
    ref = {k: v for k, v in ref.items() if v[0] > 0}
    if set(ref) != set(other):
        sys.exit(f"{name}: epochs differ from batch ({len(ref)} vs {len(other)})")
    for k, (n, m, r) in ref.items():
        n2, m2, r2 = other[k]
        dm = abs((m - m2 + 180.0) % 360.0 - 180.0)
        if n != n2 or dm > 1e-4 or abs(r - r2) > 1e-4:
            sys.exit(f"{name}: {k} batch {(n, m, r)} vs {(n2, m2, r2)}")
    return len(ref)


def compare(binary, root, work, repeats):
    work.mkdir(parents=True, exist_ok=True)
    files = sorted(str(p) for p in root.glob("*/samples.csv"))
    columns = sorted(str(p) for p in root.glob("*/samples.columns"))
    make_parquet(root)
    parquet = sum(p.stat().st_size for p in root.glob("*/samples.parquet"))
    print(f"samples.columns {sum(Path(p).stat().st_size for p in columns)} bytes, "
          f"samples.parquet (nine columns, zstd) {parquet} bytes")
    me = [sys.executable, __file__, "run"]
    contenders = {
        "skybearing batch": [binary, "batch", str(root), "--out", str(work / "batch-out"),
                             "--include-incomplete"],
        "skybearing batch --csv-only": [binary, "batch", str(root), "--out",
                                        str(work / "batch-csv-out"), "--include-incomplete",
                                        "--csv-only"],
        "polars (lazy scan_csv, group-by)": me + ["polars", str(root), str(work / "polars.csv")],
        "polars over Parquet copies (scan_parquet, group-by)":
            me + ["polars-parquet", str(root), str(work / "polars-parquet.csv")],
        "DuckDB (read_csv, GROUP BY)": me + ["duckdb", str(root), str(work / "duckdb.csv")],
        "pandas (read_csv usecols, groupby)": me + ["pandas", str(root), str(work / "pandas.csv")],
        "cat > /dev/null (the same bytes)": ["cat", *files],
        "cat > /dev/null of samples.columns": ["cat", *columns],
    }
    # batch must read every session from its samples.columns (not fall back to the CSV).
    said = subprocess.run(contenders["skybearing batch"], check=True, capture_output=True,
                          text=True).stderr
    if f"samples of {len(files)} sessions from samples.columns" not in said:
        sys.exit(f"skybearing batch did not read every samples.columns:\n{said}")
    times = {k: [] for k in contenders}
    cpu = {k: [] for k in contenders}
    names = list(contenders)
    for rnd in range(repeats):
        order = names[rnd % len(names):] + names[:rnd % len(names)]
        for name in order:
            u0 = resource.getrusage(resource.RUSAGE_CHILDREN)
            t0 = time.perf_counter()
            subprocess.run(contenders[name], check=True, stdout=subprocess.DEVNULL,
                           stderr=subprocess.DEVNULL)
            times[name].append(time.perf_counter() - t0)
            u1 = resource.getrusage(resource.RUSAGE_CHILDREN)
            cpu[name].append(u1.ru_utime + u1.ru_stime - u0.ru_utime - u0.ru_stime)
    # The column file changes where the bytes come from, never a number: every table the same.
    for table in sorted((work / "batch-out").glob("*.csv")):
        other = work / "batch-csv-out" / table.name
        if table.read_bytes() != other.read_bytes():
            sys.exit(f"{table.name}: batch and batch --csv-only differ")
    ref = read_epochs(work / "batch-out" / "epochs.csv")
    for key in ("polars", "polars-parquet", "duckdb", "pandas"):
        n = agree(ref, read_epochs(work / f"{key}.csv"), key)
    import duckdb, pandas, polars  # noqa: E401 (versions only)
    print(f"python {platform.python_version()}, polars {polars.__version__}, "
          f"duckdb {duckdb.__version__}, pandas {pandas.__version__}")
    print(f"all five agree on {n} epochs (n equal; mean and r within 1e-4)")
    print(f"| contender | wall, median of {repeats} (s) | relative to batch "
          f"| CPU, median (s) | relative to batch | wall runs (s) |")
    print("| --- | --- | --- | --- | --- | --- |")
    for name in names:
        cells = []
        for t in (times, cpu):
            med, base = statistics.median(t[name]), statistics.median(t["skybearing batch"])
            rel = "1.0" if name == "skybearing batch" else (
                f"{med / base:.1f}x slower" if med >= base else f"{base / med:.1f}x faster")
            cells += [f"{med:.2f}", rel]
        runs = " ".join(f"{t:.2f}" for t in times[name])
        print(f"| {name} | {' | '.join(cells)} | {runs} |")

def main():
    cmd = sys.argv[1]
    if cmd == "run":
        {"polars": run_polars, "polars-parquet": run_polars_parquet, "duckdb": run_duckdb,
         "pandas": run_pandas}[sys.argv[2]](
            Path(sys.argv[3]).resolve(), Path(sys.argv[4]))
    elif cmd == "compare":
        compare(sys.argv[2], Path(sys.argv[3]).resolve(), Path(sys.argv[4]), int(sys.argv[5]))
    else:
        sys.exit(__doc__)


if __name__ == "__main__":
    main()
