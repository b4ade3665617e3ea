"""B7: peak memory of 1D batches per model, and of a sweep written to a file.

Each case runs in a fresh subprocess, which reports the peak resident set
size of its whole process (``resource.getrusage``: C allocations of LAPACK
and SuperLU included, which tracemalloc misses), its resident size after
imports and input construction (``inputs``) and after ``solve`` with the
result still alive (``held``). ``peak - inputs`` is what ``solve`` itself
needs; ``held - inputs`` what the result keeps. Ratios are against the
result's own arrays (``result``), measured in the same child.

Run ``python benchmarks/bench_memory.py [memory|sweep] [--points=1e6,1e7]
[--models=thin,dh,pb,auto]`` with the package to measure first on
PYTHONPATH (run it once per checkout for a before/after pair). Through
``benchmarks/run.py`` it measures 1e5 points (--quick) or 1e6. Numbers
depend on the machine and its load. The 2D time distribution is in
``bench_sections.py distribution``.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys

CHILD = r"""
import json, resource, sys, time, warnings
import numpy as np
import ekexplore as ek

def rss():
    with open("/proc/self/statm") as f:
        return int(f.read().split()[1]) * resource.getpagesize() / 2**20

model, n = sys.argv[1], int(float(sys.argv[2]))
rng = np.random.default_rng(0)
gap = 10 ** rng.uniform(-7.5, -4.5, n)           # 30 nm to 30 um
zeta = -10 ** rng.uniform(-3, -1.2, n)            # -1 to -63 mV
ch, e, w = ek.Slit(gap=gap), ek.Electrolyte.salt("KCl", 10.0), ek.Wall(zeta=zeta)
inputs = rss()
t = time.perf_counter()
with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    r = ek.solve(ch, e, w, model=model)
dt = time.perf_counter() - t
held = rss()
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
own = sum(v.nbytes for v in vars(r).values() if isinstance(v, np.ndarray) and v.base is None)
own += sum(v.nbytes for d in vars(r).values() if isinstance(d, dict)
           for v in d.values() if isinstance(v, np.ndarray) and v.base is None)
print(json.dumps({"model": model, "points": n, "seconds": dt, "inputs_MiB": inputs,
                  "held_MiB": held, "peak_MiB": peak, "result_MiB": own / 2**20}))
"""

SWEEP_CHILD = r"""
import json, os, resource, sys, tempfile, time, warnings
import numpy as np
import ekexplore as ek

def rss():
    with open("/proc/self/statm") as f:
        return int(f.read().split()[1]) * resource.getpagesize() / 2**20

model, n = sys.argv[1], int(float(sys.argv[2]))
m = int(round(n ** (1 / 3)))
grid = {"gap": np.geomspace(30e-9, 30e-6, m), "concentration": np.geomspace(0.1, 100.0, m),
        "zeta": -np.geomspace(1e-3, 0.06, n // (m * m))}
out = os.path.join(tempfile.mkdtemp(), "sweep.csv")
inputs = rss()
t = time.perf_counter()
with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    ek.sweep(grid=grid, model=model, output=out, in_memory=False, progress=False,
             chunk_size=65536)
dt = time.perf_counter() - t
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
size = os.path.getsize(out)
with open(out) as f:
    rows = sum(1 for _ in f) - 2
os.remove(out)
print(json.dumps({"model": model, "points": rows, "seconds": dt, "inputs_MiB": inputs,
                  "peak_MiB": peak, "file_MiB": size / 2**20}))
"""


def _child(code, model, n, timeout=7200):
    try:
        res = subprocess.run([sys.executable, "-c", code, model, str(n)],
                             capture_output=True, text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        return None, f"over {timeout / 3600:g} h"
    if res.returncode != 0:
        last = (res.stderr.strip().splitlines() or [f"exit code {res.returncode}"])[-1]
        return None, f"failed ({res.returncode}): {last[:100]}"
    return json.loads(res.stdout.strip().splitlines()[-1]), ""


def memory(points, models=("thin", "dh", "pb", "auto")):
    """Peak and kept memory of one solve per model and batch size."""
    rows = []
    print(f"{'model':5s} {'points':>7s} {'time':>8s} {'peak':>9s} {'peak-inputs':>12s} "
          f"{'kept':>9s} {'result':>9s} {'(peak-inputs)/result':>21s}")
    for model in models:
        for n in points:
            row, why = _child(CHILD, model, n)
            if row is None:
                print(f"{model:5s} {n:7.0e}  {why}", flush=True)
                continue
            rows.append(row)
            work = row["peak_MiB"] - row["inputs_MiB"]
            kept = row["held_MiB"] - row["inputs_MiB"]
            print(f"{model:5s} {n:7.0e} {row['seconds']:7.1f}s {row['peak_MiB']:7.0f}Mi "
                  f"{work:10.0f}Mi {kept:7.0f}Mi {row['result_MiB']:7.0f}Mi "
                  f"{work / max(row['result_MiB'], 1e-9):21.2f}   "
                  f"({work * 2**20 / n:.0f} B/point at peak, {kept * 2**20 / n:.0f} kept)",
                  flush=True)
    return rows


def sweep(points, models=("dh",)):
    """Peak memory of a sweep written only to its file (in_memory=False)."""
    rows = []
    for model in models:
        for n in points:
            row, why = _child(SWEEP_CHILD, model, n)
            if row is None:
                print(f"sweep {model:5s} {n:7.0e}  {why}", flush=True)
                continue
            rows.append(row)
            print(f"sweep {model:5s} {row['points']:9d} designs {row['seconds']:8.1f} s  peak "
                  f"{row['peak_MiB']:6.0f} MiB, {row['peak_MiB'] - row['inputs_MiB']:6.0f} MiB "
                  f"above imports and grid; file {row['file_MiB']:.0f} MiB", flush=True)
    return rows


def main(quick=False):
    pts = [1e5] if quick else [1e6]
    memory(pts)
    sweep(pts)


if __name__ == "__main__":
    what = sys.argv[1] if len(sys.argv) > 1 and not sys.argv[1].startswith("--") else "memory"
    pts, models = [1e6, 1e7], None
    for a in sys.argv:
        if a.startswith("--points="):
            pts = [float(x) for x in a.split("=", 1)[1].split(",")]
        if a.startswith("--models="):
            models = tuple(a.split("=", 1)[1].split(","))
    print(f"package: {os.path.dirname(__import__('ekexplore').__file__)}")
    if what == "memory":
        memory(pts, models or ("thin", "dh", "pb", "auto"))
    else:
        sweep(pts, models or ("dh",))
