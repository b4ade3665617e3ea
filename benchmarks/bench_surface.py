"""B6: the cost of a charge-regulating wall against a fixed one (1D batch).

The same batch of slits (silica walls, KCl 1 uM - 1 M, gaps 10 nm - 10 um,
pH 4-10) is solved with a fixed charge and with walls whose charge follows the
chemistry, for each model, in the same process. The regulated wall is
resolved to its zeta (isolated wall for thin, the linear layer for dh, the
regulated Poisson-Boltzmann solve for pb), then the transport coefficients
follow from the constant-potential kernel at that zeta. Prints the time per
point and the ratio regulated / fixed.

Run: python benchmarks/bench_surface.py [--quick]
"""
from __future__ import annotations

import argparse
import time

import numpy as np

import ekexplore as ek
from ekexplore._regulated import regulated_wall


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
    surface = ek.Surface.silica()
    # a fixed charge of the size the regulated walls reach, for a like-for-like batch
    sigma = regulated_wall("thin", 0, h / 2, e, surface, pH)["charge_density"]
    print(f"{n} slits, silica in KCl: time per point [us] and ratio regulated/fixed")
    print(f"{'model':>6} {'fixed':>10} {'regulated':>10} {'ratio':>7}")
    for model in ("thin", "dh", "pb"):
        def fixed():
            ek.solve(ek.Slit(h), e, ek.Wall(charge_density=sigma), model=model)

        def regulated():
            z = regulated_wall(model, 0, h / 2, e, surface, pH)["zeta"]
            ek.solve(ek.Slit(h), e, ek.Wall(zeta=z), model=model)
        tf, tr = timed(fixed), timed(regulated)
        print(f"{model:>6} {tf / n * 1e6:10.1f} {tr / n * 1e6:10.1f} {tr / tf:7.2f}")


if __name__ == "__main__":
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true")
    main(ap.parse_args().quick)
