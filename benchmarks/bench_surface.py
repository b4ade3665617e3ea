"""B6: the cost of a charge-regulating wall against a fixed one.

1D batch: the same slits (silica walls, KCl 1 uM - 1 M, gaps 10 nm - 10 um,
pH 4-10) solved with ``Wall(surface=Surface.silica(), pH=...)`` and with a
fixed charge of the same size, for each model, in the same process.
2D section: one rectangle 200 x 40 nm, dh and pb, regulated against fixed.
Prints the time per point and the ratio regulated / fixed.

Run: python benchmarks/bench_surface.py [--quick]
"""
from __future__ import annotations

import argparse
import time

import numpy as np

import ekexplore as ek


def batch(n, seed=0):
    rng = np.random.default_rng(seed)
    c = 10 ** rng.uniform(-3, 3, n)
    h = 10 ** rng.uniform(-8, -5, n)
    pH = rng.uniform(4, 10, n)
    return c, h, pH


def timed(fn, repeat=3):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def main(quick=False):
    n = 200 if quick else 2000
    c, h, pH = batch(n)
    e = ek.Electrolyte.salt("KCl", c)
    regulated = ek.Wall(surface=ek.Surface.silica(), pH=pH)
    # a fixed charge of the size the regulated walls reach, for a like-for-like batch
    sigma = ek.solve(ek.Slit(h), e, regulated, model="thin").wall_charge
    fixed = ek.Wall(charge_density=sigma)
    print(f"1D: {n} slits, silica in KCl: time per point [us], ratio regulated/fixed")
    print(f"{'model':>6} {'fixed':>10} {'regulated':>10} {'ratio':>7}")
    for model in ("thin", "dh", "pb"):
        tf = timed(lambda: ek.solve(ek.Slit(h), e, fixed, model=model))
        tr = timed(lambda: ek.solve(ek.Slit(h), e, regulated, model=model))
        print(f"{model:>6} {tf / n * 1e6:10.1f} {tr / n * 1e6:10.1f} {tr / tf:7.2f}")
    rect = ek.Rectangle(width=200e-9, depth=40e-9)
    e2 = ek.Electrolyte.salt("KCl", 1.0)
    reg2 = ek.Wall(surface=ek.Surface.silica(), pH=7.0)
    print("2D: rectangle 200 x 40 nm, 1 mM KCl, pH 7: time per point [s], ratio")
    for model in ("dh", "pb"):
        sig2 = float(ek.solve(rect, e2, reg2, model=model).wall_charge)
        fix2 = ek.Wall(charge_density=sig2)
        tf = timed(lambda: ek.solve(rect, e2, fix2, model=model), repeat=1 if quick else 2)
        tr = timed(lambda: ek.solve(rect, e2, reg2, model=model), repeat=1 if quick else 2)
        print(f"{model:>6} {tf:10.3f} {tr:10.3f} {tr / tf:7.2f}")


if __name__ == "__main__":
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    main(ap.parse_args().quick)
