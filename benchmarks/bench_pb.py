"""B1: the batch Poisson-Boltzmann solver against a per-point solve_bvp loop.

Same points, same accuracy target (1e-6 relative on the electro-osmotic
coefficient, checked against the slit first-integral quadrature), measured in
the same process. Prints per-point times and their ratio, the time and peak
memory of a 256 x 256 regime map.

Run: python benchmarks/bench_pb.py [--quick]
"""
from __future__ import annotations

import argparse
import os
import sys
import time
import tracemalloc
import warnings

import numpy as np
from scipy import constants
from scipy.integrate import solve_bvp

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests"))

import ekexplore as ek  # noqa: E402
from test_doublelayer import first_integral_slit  # noqa: E402

VT = constants.k * 298.15 / constants.e


def points(n_k, n_phi, seed=0):
    """kappa*half-size 0.1-1000 (log), |e zeta/kT| up to 10, 1:1 salt."""
    rng = np.random.default_rng(seed)
    K = 10 ** rng.uniform(-1, 3, n_k * n_phi)
    phi = -rng.uniform(0.1, 10, n_k * n_phi)
    return K, phi


def bvp_point(K, phi_w, m, tol=1e-8):
    """One point by scipy.integrate.solve_bvp: y = [phi, phi', q], q' = (m+1) s^m phi."""
    def fun(s, y):
        ss = np.maximum(s, 1e-300)
        dphi = y[1]
        d2 = K**2 * np.sinh(y[0]) - (m / ss) * y[1] if m else K**2 * np.sinh(y[0])
        if m:
            d2 = np.where(s == 0, K**2 * np.sinh(y[0]) / 2.0, d2)
        return np.vstack([dphi, d2, (m + 1) * ss**m * y[0]])

    def bc(ya, yb):
        return np.array([ya[1], yb[0] - phi_w, ya[2]])

    x = 1.0 - np.geomspace(1.0, min(1e-3, 0.01 / K), 200)[::-1] + min(1e-3, 0.01 / K)
    x = np.unique(np.clip(np.concatenate([[0.0], x, [1.0]]), 0, 1))
    gc = 4 * np.arctanh(np.tanh(phi_w / 4) * np.exp(-K * (1 - x)))
    y0 = np.vstack([gc, np.gradient(gc, x), np.zeros_like(x)])
    sol = solve_bvp(fun, bc, x, y0, tol=tol, max_nodes=200000)
    if not sol.success:
        raise RuntimeError(sol.message)
    return sol.y[2, -1] - phi_w  # <phi> - phi_w


def main(quick=False):
    e = ek.Electrolyte.salt("KCl", 0.1)   # Debye length 30 nm: K 0.1-1000 -> 6 nm-60 um
    lam = float(e.debye_length)
    eps, eta = float(e.permittivity), float(e.viscosity)
    rows = []
    n_ref = 12 if quick else 40
    for shape, m in ((ek.Slit, 0), (ek.Tube, 1)):
        # the batch solver's per-point time, from a large batch of the same distribution
        Kb, phib = points(1024 if quick else 16384, 1, seed=10 + m)
        t0 = time.perf_counter()
        ek.solve(shape(2 * Kb * lam), e, ek.Wall(zeta=phib * VT), model="pb")
        t_batch = (time.perf_counter() - t0) / Kb.size
        # the reference loop, and the batch solver on exactly its points
        K, phi = points(n_ref, 1, seed=m)
        r = ek.solve(shape(2 * K * lam), e, ek.Wall(zeta=phi * VT), model="pb")
        t0 = time.perf_counter()
        ref = np.array([bvp_point(k, p, m) for k, p in zip(K, phi)])
        t_bvp = (time.perf_counter() - t0) / K.size
        L12_bvp = eps * VT / eta * ref
        dev_bvp = np.max(np.abs(r.electroosmotic / L12_bvp - 1))
        rows.append((shape.__name__, K.size, t_batch, t_bvp, t_bvp / t_batch, dev_bvp))

    # accuracy against the grid-free quadrature (slit)
    K, phi = points(10 if quick else 30, 1, seed=7)
    r = ek.solve(ek.Slit(gap=2 * K * lam), e, ek.Wall(zeta=phi * VT), model="pb")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        quad = np.array([first_integral_slit(k, p, [1, -1], [0.5, 0.5])[0]
                         for k, p in zip(K, phi)])
    acc = np.max(np.abs(r.electroosmotic / (eps * VT / eta * (quad - phi)) - 1))

    # a 256 x 256 map: concentration x gap at zeta = -100 mV
    n = 64 if quick else 256
    c = np.logspace(-2, 2, n)[:, None]
    h = np.logspace(-8, -5, n)[None, :]
    em = ek.Electrolyte.salt("KCl", c)
    tracemalloc.start()
    t0 = time.perf_counter()
    rm = ek.solve(ek.Slit(gap=h), em, ek.Wall(zeta=-0.1), model="pb")
    t_map = time.perf_counter() - t0
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()

    print("B1  batch Poisson-Boltzmann vs per-point solve_bvp (same process)")
    print(f"{'shape':6} {'points':>6} {'batch/pt [ms]':>14} {'bvp/pt [ms]':>12} {'speed-up':>9} "
          f"{'max |batch/bvp-1|':>18}")
    for name, npts, tb, tv, ratio, dev in rows:
        print(f"{name:6} {npts:6d} {tb*1e3:14.4f} {tv*1e3:12.2f} {ratio:9.0f} {dev:18.2e}")
    print(f"accuracy vs first-integral quadrature (slit, {K.size} points): max rel. err "
          f"{acc:.2e} (target 1e-6)")
    print(f"{n}x{n} map (KCl 0.01-100 mM x gap 10 nm-10 um, zeta -100 mV): {t_map:.2f} s, "
          f"peak traced memory {peak/2**20:.0f} MiB, kappa*h/2 {rm.kappa_size.min():.2g}-"
          f"{rm.kappa_size.max():.2g}, max error estimate {rm.error_estimate.max():.1e}")
    return rows, acc, t_map, peak


if __name__ == "__main__":
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="fewer points, 64x64 map")
    main(ap.parse_args().quick)
