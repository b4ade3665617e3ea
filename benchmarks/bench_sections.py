"""2D sections: time of one nonlinear solve at the default accuracy, of a solve
with about 1e5 unknowns, and the accuracy against closed forms and the 1D core.

Run: python benchmarks/run.py bench_sections   (or python benchmarks/bench_sections.py)

Distribution mode: ``python benchmarks/bench_sections.py distribution [N] [--out FILE]``
solves N (default 64) random valid sections one by one, each in a fresh
process (cold mesh cache, as a first call), at the default accuracy: every
shape, model (thin, dh, pb, auto) and wall (constant zeta, constant charge),
three salts, sizes 10 nm to 3 um, 0.1 to 300 mM. It prints the median, 90th
percentile and maximum of the solve time, in seconds and as ratios to a
reference task timed in the same run (a sparse LU of a fixed 2D Laplacian,
numpy/scipy only), so runs of two checkouts on a loaded machine compare by
the ratios. The points depend on the seed only; run it once per checkout
with that checkout first on PYTHONPATH (a point the checkout refuses as out
of range is counted, not timed). A point over the cap (B7_CAP, default
120 s) counts as the cap.

Before/after on the same load: ``python benchmarks/bench_sections.py
distribution N --before=FOLDER`` solves each point with this checkout and
with the package in FOLDER (e.g. a ``git worktree`` of an older commit)
back to back, and reports both distributions and the per-point ratios.
"""
import json
import os
import subprocess
import sys
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


DIST_CHILD = r"""
import json, sys, time, warnings
import numpy as np
import ekexplore as ek
seed = int(sys.argv[1])
rng = np.random.default_rng(1000 + seed)
name = ["Rectangle", "Trapezoid", "IsotropicEtch", "Ellipse", "Polygon"][seed % 5]
s = 10 ** rng.uniform(-8, -5.5)                      # depth or height, 10 nm to 3 um
if name == "Rectangle":
    ch = ek.Rectangle(s * rng.uniform(1, 5), s)
elif name == "Trapezoid":
    ch = ek.Trapezoid.from_sidewall_angle(s * rng.uniform(2, 5), s)
elif name == "IsotropicEtch":
    ch = ek.IsotropicEtch(s * rng.uniform(0, 4), s)
elif name == "Ellipse":
    ch = ek.Ellipse(s * rng.uniform(1, 4), s)
else:
    ch = ek.Polygon(np.array([[0, 0], [3, 0], [3.5, 1.5], [1.5, 2.5], [-0.5, 1.5]]) * s / 2.5)
salt = ["KCl", "CaCl2", "Na2SO4"][int(rng.integers(3))]
e = ek.Electrolyte.salt(salt, 10 ** rng.uniform(-1, 2.5))
sign = -1.0 if rng.random() < 0.75 else 1.0
if rng.random() < 0.5:
    w, wall = ek.Wall(zeta=sign * 10 ** rng.uniform(-3, np.log10(0.15))), "zeta"
else:
    w, wall = ek.Wall(charge_density=sign * 10 ** rng.uniform(-4, -1.5)), "charge"
model = ["thin", "dh", "pb", "auto"][(seed // 5) % 4]
row = {"seed": seed, "shape": name, "model": model, "wall": wall, "salt": salt}
t = time.perf_counter()
with warnings.catch_warnings(record=True) as caught:
    warnings.simplefilter("always")
    try:
        r = ek.solve(ch, e, w, model=model)
    except ValueError as exc:   # outside the accepted range: not a timing point
        row["refused"] = str(exc)[:100]
        print(json.dumps(row))
        sys.exit()
row.update(seconds=time.perf_counter() - t, error=float(r.error_estimate),
           kappa_size=float(r.kappa_size),
           warnings=sorted({type(w.message).__name__ for w in caught}))
print(json.dumps(row))
"""

REF_CHILD = r"""
import time
import numpy as np
from scipy import sparse
from scipy.sparse.linalg import splu
n = 250
T = sparse.diags([-np.ones(n - 1), 2 * np.ones(n), -np.ones(n - 1)], [-1, 0, 1])
A = (sparse.kron(sparse.eye(n), T) + sparse.kron(T, sparse.eye(n))).tocsc()
b = np.ones(n * n)
t = time.perf_counter()
lu = splu(A)
for _ in range(20):
    lu.solve(b)
print(time.perf_counter() - t)
"""


def _reference():
    out = subprocess.run([sys.executable, "-c", REF_CHILD], capture_output=True, text=True,
                         check=True)
    return float(out.stdout.strip().splitlines()[-1])


def distribution(n=64, out=None, cap=None):
    """Median, 90th percentile and maximum of one 2D solve over random valid
    inputs, in seconds and in units of the same run's reference task."""
    import ekexplore
    cap = float(os.environ.get("B7_CAP", "120")) if cap is None else cap
    print(f"package: {os.path.dirname(ekexplore.__file__)}")
    refs, rows = [_reference()], []
    for seed in range(n):
        try:
            res = subprocess.run([sys.executable, "-c", DIST_CHILD, str(seed)],
                                 capture_output=True, text=True, timeout=cap + 60)
            row = json.loads(res.stdout.strip().splitlines()[-1]) if res.stdout.strip() else \
                {"seed": seed, "failed": (res.stderr.strip().splitlines() or ["?"])[-1][:120]}
        except subprocess.TimeoutExpired:
            row = {"seed": seed, "seconds": cap, "over_cap": True}
        if row.get("seconds", 0) > cap:
            row.update(seconds=cap, over_cap=True)
        rows.append(row)
        if "seconds" in row:
            print(f"  {seed:3d} {row.get('shape', '?'):13s} {row.get('model', '?'):4s} "
                  f"{row.get('wall', '?'):6s} {row['seconds']:8.2f} s  err "
                  f"{row.get('error', float('nan')):.1e} {' '.join(row.get('warnings', []))}",
                  flush=True)
        else:
            print(f"  {seed:3d} {row.get('refused') or row.get('failed')}", flush=True)
        if seed % 16 == 15:
            refs.append(_reference())
    ref = float(np.median(refs))
    t = np.array([r["seconds"] for r in rows if "seconds" in r])
    refused = sum("refused" in r for r in rows)
    failed = [r["seed"] for r in rows if "failed" in r]
    over = [r["seed"] for r in rows if r.get("over_cap")]
    summary = {"points": n, "timed": int(t.size), "refused": refused, "failed": failed,
               "over_cap": over, "cap": cap, "reference_s": ref, "references": refs,
               "median_s": float(np.median(t)), "p90_s": float(np.percentile(t, 90)),
               "max_s": float(t.max())}
    print(f"2D solve time over {t.size} random valid points ({refused} refused as out of "
          f"range, failed {failed}, over the {cap:g} s cap {over}):")
    print(f"  median {summary['median_s']:.3f} s, 90th percentile {summary['p90_s']:.3f} s, "
          f"max {summary['max_s']:.2f} s")
    print(f"  reference task {ref:.3f} s (median of {len(refs)}): median "
          f"{summary['median_s'] / ref:.2f}, 90th percentile {summary['p90_s'] / ref:.2f}, "
          f"max {summary['max_s'] / ref:.1f} references")
    for model in ("thin", "dh", "pb", "auto"):
        tm = np.array([r["seconds"] for r in rows if r.get("model") == model and "seconds" in r])
        if tm.size:
            print(f"  {model:4s}: {tm.size:2d} points, median {np.median(tm):.3f} s, "
                  f"max {tm.max():.2f} s")
    if out:
        with open(out, "w") as f:
            json.dump({"summary": summary, "rows": rows}, f, indent=1)
    return summary


def paired(before, n=100, out=None, cap=None):
    """The distribution of this checkout and of the checkout at ``before`` (a
    folder to put first on PYTHONPATH) on the same random points, each point
    solved by both back to back (alternating which goes first), so both see
    the same load: the per-point ratio after/before is load-free where the
    two distributions measured in separate runs are not."""
    import ekexplore
    cap = float(os.environ.get("B7_CAP", "120")) if cap is None else cap
    paths = {"after": os.path.dirname(os.path.dirname(ekexplore.__file__)), "before": before}
    print(f"after: {paths['after']}; before: {paths['before']}")
    rows = {"after": [], "before": []}
    for seed in range(n):
        order = ("after", "before") if seed % 2 == 0 else ("before", "after")
        for which in order:
            env = {**os.environ, "PYTHONPATH": paths[which]}
            try:
                # run in the checkout's folder: a "-c" child puts its working
                # folder first on sys.path, ahead of PYTHONPATH
                res = subprocess.run([sys.executable, "-c", DIST_CHILD, str(seed)], env=env,
                                     cwd=paths[which], capture_output=True, text=True,
                                     timeout=cap + 60)
                row = json.loads(res.stdout.strip().splitlines()[-1]) if res.stdout.strip() \
                    else {"seed": seed, "failed": (res.stderr.strip().splitlines()
                                                   or ["?"])[-1][:120]}
            except subprocess.TimeoutExpired:
                row = {"seed": seed, "seconds": cap, "over_cap": True}
            rows[which].append(row)
        a, b = rows["after"][-1], rows["before"][-1]
        if "seconds" in a and "seconds" in b:
            print(f"  {seed:3d} {a['shape']:13s} {a['model']:4s} {a['wall']:6s} after "
                  f"{a['seconds']:7.2f} s (err {a['error']:.1e}) before {b['seconds']:7.2f} s "
                  f"(err {b['error']:.1e}) {' '.join(a.get('warnings', []))}", flush=True)
        else:
            print(f"  {seed:3d} after {a} before {b}", flush=True)
    both = [(a, b) for a, b in zip(rows["after"], rows["before"])
            if "seconds" in a and "seconds" in b]
    ta = np.array([a["seconds"] for a, _ in both])
    tb = np.array([b["seconds"] for _, b in both])
    print(f"2D solve time, {len(both)} random valid points solved by both checkouts:")
    for name, t in (("before", tb), ("after", ta)):
        print(f"  {name:6s}: median {np.median(t):.3f} s, 90th percentile "
              f"{np.percentile(t, 90):.3f} s, max {t.max():.2f} s")
    r = ta / tb
    print(f"  per-point ratio after/before: median {np.median(r):.2f}, 90th percentile "
          f"{np.percentile(r, 90):.2f}, max {r.max():.1f}; ratio of the medians "
          f"{np.median(ta) / np.median(tb):.2f}, of the 90th percentiles "
          f"{np.percentile(ta, 90) / np.percentile(tb, 90):.2f}, of the maxima "
          f"{ta.max() / tb.max():.2f}")
    for model in ("thin", "dh", "pb", "auto"):
        sel = [i for i, (a, _) in enumerate(both) if a["model"] == model]
        if sel:
            print(f"  {model:4s}: {len(sel):2d} points, median before {np.median(tb[sel]):.3f} s"
                  f" after {np.median(ta[sel]):.3f} s, max before {tb[sel].max():.2f} s after "
                  f"{ta[sel].max():.2f} s")
    if out:
        with open(out, "w") as f:
            json.dump(rows, f, indent=1)


def main(quick=False):
    bench_default(quick)
    bench_large(quick)
    bench_scaling(quick)
    bench_accuracy()


if __name__ == "__main__":
    if len(sys.argv) > 1 and sys.argv[1] == "distribution":
        args = [a for a in sys.argv[2:] if not a.startswith("--")]
        dest = [a.split("=", 1)[1] for a in sys.argv[2:] if a.startswith("--out=")]
        before = [a.split("=", 1)[1] for a in sys.argv[2:] if a.startswith("--before=")]
        if before:
            paired(before[0], int(args[0]) if args else 100, dest[0] if dest else None)
        else:
            distribution(int(args[0]) if args else 64, dest[0] if dest else None)
    else:
        main()
