#!/usr/bin/env python3
"""Copies demo sessions, rewriting their headings as a float-valued tracker's would be archived.

The demo's simulated sensor reports headings in 0.1 degree steps, so a session holds at most
3,600 distinct heading values, and a memo of sines and cosines, or of parsed numbers, would hit
almost always. A tracker that reports floats (archived, like every heading, with three decimals)
does not repeat: this adds a seeded jitter of -0.049..+0.049 degrees in 0.001 degree steps to
arena_heading_deg, and writes world_heading_deg = arena + bearing and sun_relative_heading_deg =
world - sun azimuth (both wrapped to [0, 360)) and raw = arena, with three decimals, as the
archive does. Every other byte of the session is copied unchanged, except samples.columns,
which is left out (`skybearing check --repair` writes it from the new samples.csv), and the
benchmark's samples.parquet (made again from the new samples.csv).

Usage: jitter_headings.py SRC_SESSIONS DST_SESSIONS
"""

import shutil
import sys
from pathlib import Path

import numpy as np
import polars as pl

MILLI = 360_000  # a turn in thousandths of a degree


def milli(col):
    """Thousandths of a degree of a column written with at most three decimals."""
    return (pl.col(col).cast(pl.Float64) * 1000.0).round(0).cast(pl.Int64)


def text(expr):
    """Thousandths of a degree in [0, 360000) written with three decimals."""
    return expr.floordiv(1000).cast(pl.String) + "." + expr.mod(1000).cast(pl.String).str.zfill(3)


def main():
    src, dst = Path(sys.argv[1]), Path(sys.argv[2])
    dst.mkdir(parents=True, exist_ok=True)
    for k, folder in enumerate(sorted(p.parent for p in src.glob("*/samples.csv"))):
        out = dst / folder.name
        if (out / "samples.csv").is_file():
            continue
        tmp = dst / (folder.name + ".tmp")
        shutil.rmtree(tmp, ignore_errors=True)
        shutil.copytree(folder, tmp, ignore=shutil.ignore_patterns("samples.columns", "samples.parquet"))
        df = pl.read_csv(folder / "samples.csv", infer_schema=False)
        rng = np.random.default_rng(1000 + k)
        jitter = rng.integers(-49, 50, size=df.height)
        arena = (milli("arena_heading_deg") + pl.Series(jitter)).mod(MILLI)
        world = (arena + milli("arena_bearing_deg")).mod(MILLI)
        sun_rel = (world - milli("sun_azimuth_deg")).mod(MILLI)
        df = df.with_columns(
            text(arena).alias("arena_heading_deg"),
            text(world).alias("world_heading_deg"),
            text(sun_rel).alias("sun_relative_heading_deg"),
            text(arena).alias("raw"),
        )
        df.write_csv(tmp / "samples.csv", quote_style="never")
        tmp.rename(out)


if __name__ == "__main__":
    main()
