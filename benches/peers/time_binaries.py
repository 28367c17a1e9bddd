#!/usr/bin/env python3
"""Times several builds of `skybearing batch` on the same sessions, interleaved.

Usage: time_binaries.py DIR WORK ROUNDS NAME=BINARY...

Runs `BINARY batch DIR --out WORK/NAME --include-incomplete --csv-only` (the variants differ in
how samples.csv is read and in the trigonometry, so every build reads the CSV, not the
sessions' samples.columns) for every build in every round
(rotating the order), prints the median wall and CPU time (user + system) of each and its ratio
to the first build, and says for each build whether its tables are byte-identical to the
first's.
"""

import filecmp
import resource
import statistics
import subprocess
import sys
import time
from pathlib import Path


def main():
    root, work, rounds = Path(sys.argv[1]), Path(sys.argv[2]), int(sys.argv[3])
    builds = [a.split("=", 1) for a in sys.argv[4:]]
    wall = {n: [] for n, _ in builds}
    cpu = {n: [] for n, _ in builds}
    for rnd in range(rounds):
        order = builds[rnd % len(builds):] + builds[:rnd % len(builds)]
        for name, binary in order:
            u0 = resource.getrusage(resource.RUSAGE_CHILDREN)
            t0 = time.perf_counter()
            subprocess.run([binary, "batch", str(root), "--out", str(work / name),
                            "--include-incomplete", "--csv-only"], check=True,
                           stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
            wall[name].append(time.perf_counter() - t0)
            u1 = resource.getrusage(resource.RUSAGE_CHILDREN)
            cpu[name].append(u1.ru_utime + u1.ru_stime - u0.ru_utime - u0.ru_stime)
    first = builds[0][0]
    tables = sorted(p.name for p in (work / first).glob("*.csv"))
    print(f"| build | wall, median of {rounds} (s) | vs {first} | CPU, median (s) | vs {first} "
          "| tables identical |")
    print("| --- | --- | --- | --- | --- | --- |")
    for name, _ in builds:
        w, c = statistics.median(wall[name]), statistics.median(cpu[name])
        w0, c0 = statistics.median(wall[first]), statistics.median(cpu[first])
        same = all(filecmp.cmp(work / first / t, work / name / t, shallow=False)
                   for t in tables)
        print(f"| {name} | {w:.2f} | {w / w0:.2f} | {c:.2f} | {c / c0:.2f} | "
              f"{'yes' if same else 'NO'} |")


if __name__ == "__main__":
    main()
