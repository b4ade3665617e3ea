"""2D sections: time of one nonlinear solve at the default accuracy, of a solve
with about 1e5 unknowns, and the accuracy against closed forms and the 1D core.

Run: python benchmarks/run.py bench_sections   (or python benchmarks/bench_sections.py)
"""
import time

import numpy as np

import ekexplore as ek
from ekexplore.sections import Ellipse, IsotropicEtch, Polygon, Rectangle, Trapezoid
from ekexplore.sections.solutions import prolong, scaled_solution
from ekexplore.sections.meshes import _cached, build_mesh


def _time(fn, repeat=3):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    return best, out


def shapes():
    return [("rectangle 200x100 nm", Rectangle(200e-9, 100e-9)),
            ("KOH trapezoid 300 nm top", Trapezoid.from_sidewall_angle(300e-9, 100e-9)),
            ("isotropic etch 100/80 nm", IsotropicEtch(100e-9, 80e-9)),
            ("semicircle r = 80 nm", IsotropicEtch(0.0, 80e-9)),
            ("ellipse 200x120 nm", Ellipse(200e-9, 120e-9)),
            ("polygon (quadrilateral)", Polygon([[0, 0], [200e-9, 0], [260e-9, 120e-9],
                                                 [40e-9, 160e-9]]))]


def bench_default(quick):
    e = ek.Electrolyte.salt("KCl", 1.0)
    wall = ek.Wall(zeta=-0.08)
    print("one pb solve at the default accuracy 1e-3 (KCl 1 mM, zeta -80 mV)")
    print(f"{'shape':28s} {'cold [s]':>9s} {'warm [s]':>9s} {'error est':>10s} {'reciprocity':>12s}")
    for name, ch in shapes():
        _cached.cache_clear()
        t0 = time.perf_counter()
        ek.solve(ch, e, wall, model="pb", accuracy=1e-3)
        cold = time.perf_counter() - t0
        # warm: a new zeta reuses the meshes and factorisations
        warm, r = _time(lambda: ek.solve(ch, e, ek.Wall(zeta=-0.07), model="pb", accuracy=1e-3),
                        1 if quick else 3)
        print(f"{name:28s} {cold:9.3f} {warm:9.3f} {float(r.error_estimate):10.1e} "
              f"{float(r.reciprocity_residual):12.1e}")


def bench_large(quick):
    w = np.array([0.5, -0.5])
    z = np.array([1.0, -1.0])
    n = 80 if quick else 224
    dims, lam = (4.0, 4.0, 2.0), 0.1          # rectangle 2:1, kappa * half-size = 10
    coarse = build_mesh("trapezoid", dims, n // 2, lam)
    mesh = build_mesh("trapezoid", dims, n, lam)
    t0 = time.perf_counter()
    mesh.lu_dirichlet
    t_lu = time.perf_counter() - t0
    t_cold, r = _time(lambda: scaled_solution(mesh, 100.0, w, z, "potential", -3.0, "pb"), 1)
    rc = scaled_solution(coarse, 100.0, w, z, "potential", -3.0, "pb")
    guess = prolong(coarse, mesh, rc["phi"])
    t_warm, r2 = _time(lambda: scaled_solution(mesh, 100.0, w, z, "potential", -3.0, "pb",
                                               guess=guess), 1)
    print(f"\npb on {mesh.n_nodes} nodes ({len(mesh.interior)} unknowns), zeta = -3 kT/e:")
    print(f"  from the Gouy-Chapman start: {t_cold:.2f} s ({r['info']['iterations']} Newton steps)")
    print(f"  from the next coarser level (as the kernel does): {t_warm:.2f} s "
          f"({r2['info']['iterations']} Newton steps)")
    print(f"  flow factorisation {t_lu:.2f} s (once per mesh, cached)")


def bench_accuracy():
    print("\naccuracy against references (default accuracy 1e-3; Richardson-extrapolated)")
    s = 1e-6
    tri = Polygon([[0, 0], [s, 0], [s / 2, s * np.sqrt(3) / 2]])
    rows = [("f Re square, 2D (Shah & London 14.227)", Trapezoid(s, s, s).poiseuille_number,
             14.227),
            ("f Re triangle, 2D (exact 40/3)", tri.poiseuille_number, 40 / 3),
            ("f Re semicircle, 2D (Shah & London 15.767)",
             IsotropicEtch(0.0, s).poiseuille_number, 15.767)]
    for label, got, ref in rows:
        print(f"  {label:48s} {float(got):.6f}  rel. diff {float(got) / ref - 1:+.1e}")
    e = ek.Electrolyte.salt("KCl", 1.0)
    for model in ("dh", "pb"):
        for zeta in (-0.025, -0.1):
            a = ek.solve(Ellipse(100e-9, 100e-9), e, ek.Wall(zeta=zeta), model=model,
                         accuracy=1e-3)
            b = ek.solve(ek.Tube(100e-9), e, ek.Wall(zeta=zeta), model=model)
            d = np.max(np.abs(a.matrix / b.matrix - 1))
            print(f"  circle vs tube, {model}, zeta {zeta * 1e3:5.0f} mV: max rel. diff {d:.1e} "
                  f"(reported error {float(a.error_estimate):.1e})")


def bench_scaling(quick):
    """B4: time and error of one pb solve against the number of unknowns, per shape,
    with the fitted exponent of time ~ unknowns^p (kappa * half-size = 10, zeta = -3 kT/e)."""
    w = np.array([0.5, -0.5])
    z = np.array([1.0, -1.0])
    levels = (16, 32, 64) if quick else (16, 32, 64, 128, 224)
    print("\nB4  pb solve time and error against unknowns (kappa*half-size 10, zeta -3 kT/e)")
    print(f"{'shape':28s} {'cells':>5s} {'unknowns':>9s} {'time [s]':>9s} {'|<d>/ref - 1|':>14s}")
    fits = []
    for name, ch in shapes():
        kind, dims, L = ch._point_geometry(*(v[0] for v in ch._values(())))
        half = float(ch.half_size) / L
        lam = half / 10.0
        kl2 = (1.0 / lam)**2
        rows = []
        for n in levels:
            mesh = build_mesh(kind, dims, n, lam)
            mesh.lu_dirichlet  # the flow factorisation is cached per mesh: not timed
            t, r = _time(lambda: scaled_solution(mesh, kl2, w, z, "potential", -3.0, "pb"),
                         1 if quick else 2)
            rows.append((n, len(mesh.interior), t, r["l12"]))
        # reference: Richardson extrapolation of the two finest levels (2nd order)
        ref = (4.0 * rows[-1][3] - rows[-2][3]) / 3.0 if levels[-1] == 2 * levels[-2] else \
            rows[-1][3] + (rows[-1][3] - rows[-2][3]) / ((levels[-1] / levels[-2])**2 - 1)
        for n, nu, t, l12 in rows:
            print(f"{name:28s} {n:5d} {nu:9d} {t:9.3f} {abs(l12 / ref - 1):14.1e}")
        big = [(nu, t) for _, nu, t, _ in rows if nu >= 1000]
        if len(big) >= 2:
            p = np.polyfit(np.log([b[0] for b in big]), np.log([b[1] for b in big]), 1)[0]
            fits.append((name, p, rows[-1][1], rows[-1][2]))
    for name, p, nu, t in fits:
        print(f"  {name:28s} time ~ unknowns^{p:.2f}; {nu} unknowns in {t:.2f} s (target: "
              f"1e5 unknowns <= 2 s)")


def main(quick=False):
    bench_default(quick)
    bench_large(quick)
    bench_scaling(quick)
    bench_accuracy()


if __name__ == "__main__":
    main()
