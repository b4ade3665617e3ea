"""How honest the thin and dh error estimates are: estimate / true error against pb.

Random slit and tube points over the documented range (kappa*half-size 1e-3 to
1e5, |z e zeta/kT| up to 20 or the charge that gives it, both signs; regulated
silica, alumina and a user-defined surface at pH 4-10 and 0.01-100 mM), in
KCl, CaCl2 (2:1) and Na2SO4 (1:2). The true error is max_ij |M - M_pb| / |M_pb|
with pb solved at accuracy 1e-9; points whose error is below 1e-5 (where pb's
own error matters) are left out. Prints, per model and wall kind, the minimum,
median, 90th percentile and maximum of estimate / true and the fraction within
1-10.

    python benchmarks/estimate_ratios.py [--n 60] [--seed 1] [--save rows.npy]
"""
import argparse
import warnings
import zlib

import numpy as np
from scipy import constants

import ekexplore as ek
from ekexplore.surface import Site, Surface

VT25 = constants.k * 298.15 / constants.e
SALTS = ("KCl", "CaCl2", "Na2SO4")
WALLS = ("potential", "charge", "silica", "alumina", "user")


def user_surface():
    """A user-defined wall: carboxyl (pK 4.8, 2/nm^2) and amine (pK 9.5, 0.5/nm^2)
    sites, Stern capacitance 1 F/m^2 (illustrative numbers, not a material's)."""
    return Surface([Site(4.8, 2e18, charge=0, name="carboxyl"),
                    Site(9.5, 0.5e18, charge=1, name="amine")], 1.0, name="user")


def draw(salt, shape, wall, n, seed):
    """Random parameters of n points: a function of an index array giving
    (channel, electrolyte, wall)."""
    rng = np.random.default_rng(zlib.crc32(f"{salt}|{shape.__name__}|{wall}|{seed}".encode()))
    c = 10 ** rng.uniform(-2, 2, n)
    e = ek.Electrolyte.salt(salt, c)
    zmax = np.max(np.abs(e.valences))
    lo, hi = (-3, 5) if wall in ("potential", "charge") else (-2, 4)
    K = 10 ** rng.uniform(lo, hi, n)
    sizes = np.clip(2 * K * e.debye_length, 1e-9, 1e-2)
    zeta = rng.choice([-1, 1], n) * 10 ** rng.uniform(-4, np.log10(20.0), n) * VT25 / zmax
    sigma = np.clip(ek.grahame_charge(e, zeta), -1, 1)
    pH = rng.uniform(4, 10, n)
    surf = {"silica": Surface.silica, "alumina": lambda: Surface.alumina(1.0),
            "user": user_surface}.get(wall)

    def build(k):
        if wall == "potential":
            w = ek.Wall(zeta=zeta[k])
        elif wall == "charge":
            w = ek.Wall(charge_density=sigma[k])
        else:
            w = ek.Wall(surface=surf(), pH=pH[k])
        return shape(sizes[k]), ek.Electrolyte.salt(salt, c[k]), w
    return build


def solve_all(build, n, model, accuracy=None):
    """Matrix, estimate, kappa*half-size and scaled wall potential per point;
    NaN where solve refuses a point."""
    out = (np.full((n, 2, 2), np.nan), np.full(n, np.nan), np.full(n, np.nan),
           np.full(n, np.nan))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            parts = [(np.arange(n), ek.solve(*build(np.arange(n)), model=model,
                                             accuracy=accuracy))]
        except Exception:
            parts = []
            for k in range(n):
                try:
                    parts.append((k, ek.solve(*build(k), model=model, accuracy=accuracy)))
                except Exception:
                    pass
    for k, r in parts:
        out[0][k], out[1][k], out[2][k] = r.matrix, r.error_estimate, r.kappa_size
        out[3][k] = r.wall_potential / VT25
    return out


def measure(n, seed, models=("thin", "dh"), walls=WALLS, shapes=(ek.Slit, ek.Tube),
            salts=SALTS):
    rows = []
    for shape in shapes:
        for wall in walls:
            for salt in salts:
                build = draw(salt, shape, wall, n, seed)
                Mp, _, K, phi = solve_all(build, n, "pb", accuracy=1e-9)
                zmax = 2 if salt != "KCl" else 1
                for model in models:
                    M, est, _, _ = solve_all(build, n, model)
                    rel = np.abs(M - Mp) / np.abs(Mp)
                    err = np.max(rel, axis=(-2, -1))
                    which = np.argmax(np.nan_to_num(rel).reshape(n, 4), axis=1)
                    for k in range(n):
                        rows.append((shape.__name__, wall, salt, model, K[k], phi[k] * zmax,
                                     est[k], err[k], which[k]))
    return rows


def summary(rows, keys=("model", "wall")):
    import collections
    groups = collections.defaultdict(list)
    for r in rows:
        shape, wall, salt, model, K, Phi, est, err, which = r
        if not (err > 1e-5) or not np.isfinite(est):
            continue
        d = {"shape": shape, "wall": wall, "salt": salt, "model": model}
        groups[tuple(d[k] for k in keys)].append(est / err)
    print(f"{'group':32s} {'n':>5s} {'min':>8s} {'median':>8s} {'p90':>8s} {'max':>10s} "
          f"{'in 1-10':>8s}")
    for g in sorted(groups):
        q = np.array(groups[g])
        print(f"{' '.join(g):32s} {q.size:5d} {q.min():8.3g} {np.median(q):8.3g} "
              f"{np.quantile(q, 0.9):8.3g} {q.max():10.4g} "
              f"{np.mean((q >= 1) & (q <= 10)):8.1%}")


def main():
    p = argparse.ArgumentParser()
    p.add_argument("--n", type=int, default=60)
    p.add_argument("--seed", type=int, default=1)
    p.add_argument("--save")
    a = p.parse_args()
    rows = measure(a.n, a.seed)
    summary(rows)
    summary(rows, ("model",))
    if a.save:
        np.save(a.save, np.array(rows, dtype=object), allow_pickle=True)


if __name__ == "__main__":
    main()
