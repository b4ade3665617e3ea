"""Sweep scaling: 1,000 2D designs with 1 and 2 worker processes, and a dask
LocalCluster, in the same run. Run: python benchmarks/bench_sweep.py [--quick]"""
from __future__ import annotations

import argparse
import time
from concurrent.futures import ProcessPoolExecutor

import numpy as np

import ekexplore as ek


def designs(n):
    """n rectangular channels: widths 0.2-5 um, depths 50 nm-1 um, 0.1-10 mM KCl."""
    k = int(round(n ** (1 / 3)))
    return {"width": np.geomspace(0.2e-6, 5e-6, k), "depth": np.geomspace(50e-9, 1e-6, k),
            "concentration": np.geomspace(0.1, 10.0, max(1, n // (k * k)))}


def main(quick=False):
    n = 64 if quick else 1000
    grid = designs(n)
    rows = []
    t0 = time.perf_counter()
    serial = ek.sweep(grid=grid, shape="Rectangle", zeta=-0.06, model="auto", progress=False)
    rows.append(("1 process (serial)", time.perf_counter() - t0))
    for workers in (1, 2):
        with ProcessPoolExecutor(max_workers=workers) as pool:
            t0 = time.perf_counter()
            df = ek.sweep(grid=grid, shape="Rectangle", zeta=-0.06, model="auto",
                          executor=pool, progress=False)
            rows.append((f"ProcessPoolExecutor, {workers} worker(s)", time.perf_counter() - t0))
        assert np.allclose(df["electroosmotic"], serial["electroosmotic"], rtol=1e-12, atol=0)
    try:
        from distributed import Client, LocalCluster
        with LocalCluster(n_workers=2, threads_per_worker=1, dashboard_address=None) as cl, \
                Client(cl) as client:
            t0 = time.perf_counter()
            df = ek.sweep(grid=grid, shape="Rectangle", zeta=-0.06, model="auto",
                          executor=client, progress=False)
            rows.append(("dask LocalCluster, 2 workers", time.perf_counter() - t0))
        assert np.allclose(df["electroosmotic"], serial["electroosmotic"], rtol=1e-12, atol=0)
    except ImportError:
        rows.append(("dask LocalCluster (dask not installed)", float("nan")))
    print(f"Sweep of {len(serial)} Rectangle designs (auto model, accuracy 1e-3), models used: "
          f"{dict(serial['model'].value_counts())}")
    print(f"{'executor':42} {'wall time [s]':>13} {'ms/design':>10}")
    for name, t in rows:
        print(f"{name:42} {t:13.1f} {t / len(serial) * 1e3:10.1f}")


if __name__ == "__main__":
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    main(ap.parse_args().quick)
