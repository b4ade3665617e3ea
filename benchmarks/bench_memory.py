"""B7: peak memory of 1D batches per model, and the 2D time distribution.

Memory: each (model, points) case runs in a fresh subprocess, which reports
its peak resident set size (``resource.getrusage``) above the one after
imports and input construction, so the figure is what ``solve`` itself adds.
2D times: random valid sections (shape, size, salt, concentration, wall)
solved one by one at the default accuracy; median, 90th percentile and
maximum of the wall-clock time, with a cap per point (a point over the cap
counts as the cap and is reported).

Run ``python benchmarks/bench_memory.py [memory|sections] [--points 1e6,1e7]``
with the package to measure first on PYTHONPATH (for a before/after pair,
run it once per checkout). Numbers depend on the machine and its load.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
import time

import numpy as np

CHILD = r"""
import json, resource, sys, time, warnings
import numpy as np
import ekexplore as ek
model, n = sys.argv[1], int(float(sys.argv[2]))
rng = np.random.default_rng(0)
gap = 10 ** rng.uniform(-7.5, -4.5, n)
zeta = -10 ** rng.uniform(-3, -1.2, n)
ch, e, w = ek.Slit(gap=gap), ek.Electrolyte.salt("KCl", 10.0), ek.Wall(zeta=zeta)
base = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
t = time.perf_counter()
with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    r = ek.solve(ch, e, w, model=model)
dt = time.perf_counter() - t
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
out = sum(np.asarray(v).nbytes for v in (r.matrix, r.error_estimate, r.wall_potential))
print(json.dumps({"model": model, "points": n, "seconds": dt,
                  "peak_above_inputs_MiB": (peak - base) / 1024.0,
                  "matrix_bytes_per_point": out / n}))
"""

CHILD_2D = r"""
import json, sys, time, warnings
import numpy as np
import ekexplore as ek
seed = int(sys.argv[1])
rng = np.random.default_rng(seed)
shapes = ["Rectangle", "Trapezoid", "IsotropicEtch", "Ellipse", "Polygon"]
name = shapes[seed % 5]
s = 10 ** rng.uniform(-8, -5.5)
if name == "Rectangle":
    ch = ek.Rectangle(s * rng.uniform(1, 5), s)
elif name == "Trapezoid":
    ch = ek.Trapezoid.from_sidewall_angle(s * rng.uniform(2, 5), s)
elif name == "IsotropicEtch":
    ch = ek.IsotropicEtch(s * rng.uniform(0, 4), s)
elif name == "Ellipse":
    ch = ek.Ellipse(s * rng.uniform(1, 4), s)
else:
    ch = ek.Polygon(np.array([[0, 0], [3, 0], [3.5, 1.5], [1.5, 2.5], [-0.5, 1.5]]) * s)
e = ek.Electrolyte.salt(["KCl", "CaCl2", "Na2SO4"][seed % 3], 10 ** rng.uniform(-1, 2.5))
if rng.random() < 0.5:
    w = ek.Wall(zeta=-10 ** rng.uniform(-3, np.log10(0.15)))
else:
    w = ek.Wall(charge_density=-10 ** rng.uniform(-4, -1.5))
model = ["pb", "auto", "dh"][seed % 3]
t = time.perf_counter()
with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    try:
        r = ek.solve(ch, e, w, model=model)
        err = float(r.error_estimate)
    except ValueError as exc:   # outside the accepted range: not a timing point
        print(json.dumps({"seed": seed, "refused": str(exc)[:80]}))
        sys.exit()
print(json.dumps({"seed": seed, "shape": name, "model": model, "seconds": time.perf_counter() - t,
                  "error": err}))
"""


def memory(points):
    rows = []
    for model in ("thin", "dh", "pb", "auto"):
        for n in points:
            if model == "pb" and n > 1e6:
                print(f"{model:5s} {n:9.0e}  skipped (about {n / 2e4 / 60:.0f} min on this machine)")
                continue
            try:
                res = subprocess.run([sys.executable, "-c", CHILD, model, str(n)],
                                     capture_output=True, text=True, timeout=3600)
            except subprocess.TimeoutExpired:
                print(f"{model:5s} {n:9.0e}  over one hour")
                continue
            if res.returncode != 0:
                last = (res.stderr.strip().splitlines() or [f"exit code {res.returncode}"])[-1]
                print(f"{model:5s} {n:9.0e}  failed: {last[:100]}")
                continue
            row = json.loads(res.stdout.strip().splitlines()[-1])
            rows.append(row)
            print(f"{model:5s} {n:9.0e}  {row['seconds']:8.1f} s  peak above inputs "
                  f"{row['peak_above_inputs_MiB']:9.1f} MiB  "
                  f"({row['peak_above_inputs_MiB'] * 2**20 / n:7.0f} B/point)", flush=True)
    return rows


def sections(n, cap):
    times, over, refused = [], [], 0
    for seed in range(n):
        try:
            res = subprocess.run([sys.executable, "-c", CHILD_2D, str(seed)],
                                 capture_output=True, text=True, timeout=cap)
        except subprocess.TimeoutExpired:
            times.append(cap)
            over.append(seed)
            continue
        row = json.loads(res.stdout.strip().splitlines()[-1])
        if "refused" in row:
            refused += 1
            continue
        times.append(row["seconds"])
    t = np.array(times)
    print(f"2D sections, {t.size} timed points ({refused} refused as out of range), cap {cap} s:"
          f" median {np.median(t):.2f} s, 90th percentile {np.percentile(t, 90):.2f} s, "
          f"max {t.max():.2f} s; over the cap: {over}")


if __name__ == "__main__":
    what = sys.argv[1] if len(sys.argv) > 1 else "memory"
    pts = [1e6, 1e7]
    for a in sys.argv:
        if a.startswith("--points="):
            pts = [float(x) for x in a.split("=", 1)[1].split(",")]
    print(f"package: {os.path.dirname(__import__('ekexplore').__file__)}")
    if what == "memory":
        memory(pts)
    else:
        sections(int(os.environ.get("B7_SECTIONS", "40")), float(os.environ.get("B7_CAP", "120")))
