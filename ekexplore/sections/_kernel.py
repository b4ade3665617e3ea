"""The transport kernel shared by every 2D section (see ``ekexplore._state``).

Per parameter point it builds (or takes from the cache) three graded meshes
with n/2, n and 2n cells across, solves the potential (Debye-Hueckel or
Poisson-Boltzmann) and the flow on each, and returns the Richardson
extrapolation of the two finer levels. The reported error is the difference
between that and the extrapolation of the two coarser levels (the error
estimate of the coarser extrapolation) when the levels converge at second
order, and the error estimate of the finest level itself when they do not
yet (checked against closed forms and the 1D core in the tests). If it misses the target accuracy the resolution is
raised once, as far as the estimate asks.
"""
from __future__ import annotations

import numpy as np

from .._constants import F
from ..coefficients import coefficients, dh_means, neutrality_charge, thin_means
from ..doublelayer import gouy_chapman_length
from ..wall import isolated_wall_charge, isolated_wall_potential
from ._meshes import build_mesh
from ._numerics import flow_profile, harmonic_extension, solve_potential

__all__ = ["section_kernel", "DEFAULT_ACCURACY", "resolution", "scaled_solution",
           "flow_solution"]

#: Target relative error of the 2D solution when none is given [-].
DEFAULT_ACCURACY = 1e-3
#: Accuracy below which the mesh is not refined further.
ACCURACY_FLOOR = 1e-7
#: Middle-level cells across the narrow direction at the default accuracy.
_N_DEFAULT = 16
#: Largest middle-level resolution (the fine level doubles it).
_N_MAX = 128
#: kappa * half-size above which a constant-charge wall starts from 32 cells.
_THIN_CHARGE_K = 2000.0


def resolution(accuracy):
    """Middle-level cells n (a multiple of 16) for a target relative error.

    Three levels n/2, n, 2n are solved; the extrapolated error falls about as
    n^-4, so n grows as accuracy^-1/4 from 16 cells at 1e-3.
    """
    acc = max(float(accuracy), ACCURACY_FLOOR)
    n = _N_DEFAULT * (DEFAULT_ACCURACY / acc) ** 0.25
    return int(min(_N_MAX, max(16, 16 * int(np.ceil(n / 16.0 - 1e-9)))))


def _refined(n, err, accuracy):
    """The resolution the error estimate asks for (error ~ n^-4), a multiple of 16."""
    return int(min(_N_MAX, 16 * int(np.ceil(1.05 * n * (err / accuracy) ** 0.25 / 16))))


def _gouy(lam, z, phi_w):
    """Scaled inner length of a strongly charged wall (the Gouy-Chapman length),
    or None below |z phi_w| = 2, where the Debye length is the inner scale."""
    if min(abs(np.max(np.abs(z)) * phi_w), 80.0) < 2.0:
        return None
    return float(gouy_chapman_length(lam, z, phi_w))


def scaled_solution(mesh, kl2, w, z, condition, value, model, guess=None):
    """Potential and the scaled area means on one mesh.

    Returns a dict: ``phi`` nodal potential, ``d`` = phi - h with h the
    discrete harmonic function equal to phi on the wall (u_eo over
    eps kT/(e eta) E), ``u`` the scaled Poiseuille profile, ``g`` the scaled
    charge density, and the means ``u_mean`` <u>, ``l12`` <d>, ``l21``
    (kappa L)^2 <g u>, ``mean_c`` <c_i>/c_i and ``conv`` <(c_i/c_i - 1) d> per ion
    (the convection of the ion's excess over the bulk),
    ``phi_wall`` the wall-averaged potential and ``mean_g`` <g>.
    """
    offset, dev, info = solve_potential(mesh, kl2, w, z, condition, value, model, guess)
    phi = offset + dev
    u = flow_profile(mesh)
    m = mesh.m / mesh.area
    if condition == "potential":
        d = dev
    else:
        d = dev - harmonic_extension(mesh, dev)
    zc = z[:, None]
    if model == "pb":
        conc = np.exp(-zc * offset) * np.exp(-zc * dev[None, :])
        g = w @ conc
        mean_c = conc @ m
        # convection of each ion's excess over the bulk
        conv = (np.expm1(-zc * phi[None, :]) * d[None, :]) @ m
    else:   # dh: linear charge density
        g = -phi
        mean_c, conv = (a[:, 0] for a in dh_means(z, np.array([m @ phi]),
                                                   np.array([m @ phi**2]),
                                                   np.array([m @ (phi * d)])))
    wall = mesh.wall
    return {
        "phi": phi, "d": d, "u": u, "g": g, "info": info,
        "u_mean": float(m @ u),
        "l12": float(m @ d),
        "l21": float(kl2 * (m @ (g * u))),
        "mean_c": mean_c,
        "conv": conv,
        "phi_wall": float(offset + mesh.b[wall] @ dev[wall] / mesh.b[wall].sum()),
        "mean_g": float(m @ g),
        "area": mesh.area, "perimeter": mesh.perimeter,
    }


def prolong(coarse, fine, values):
    """Coarse nodal values carried to the fine mesh, a start for Newton there.

    Fine nodes that coincide with coarse ones (the graded maps are nested)
    take their value; the others the mean of their coinciding neighbours,
    or of the nearest coarse node when none is adjacent.
    """
    from scipy.spatial import cKDTree
    tree = getattr(coarse, "_tree", None)
    if tree is None:
        tree = coarse._tree = cKDTree(coarse.points)
    dist, j = tree.query(fine.points)
    same = dist <= 1e-9 * np.ptp(fine.points[:, 0])
    out = values[j].astype(float)
    adj = (fine.K != 0).astype(float)
    known = np.where(same, out, 0.0)
    num = adj @ known
    cnt = adj @ same.astype(float)
    fill = ~same & (cnt > 0)
    out[fill] = num[fill] / cnt[fill]
    return out


def flow_solution(mesh):
    """Scaled flow means on one mesh: <u> and the wall-shear integral over the area.

    The wall shear is the discrete boundary flux of the flow, sum over wall
    nodes of (m - K u), the force the walls exert per unit length and G.
    """
    u = flow_profile(mesh)
    r = mesh.m - mesh.K @ u
    return {"u": u, "u_mean": float(mesh.m @ u / mesh.area),
            "shear": float(r[mesh.wall].sum() / mesh.area)}


def _levels(kind, dims, n, lam, gouy, kl2, w, z, condition, value, model, lam_c, conv_c):
    """Solutions on the meshes with n/2, n and 2n cells.

    Returns the solutions with n and 2n cells (their Richardson combination is
    the result) and its estimated relative error: the difference between the
    Richardson values of the pairs (n, 2n) and (n/2, n), largest over the
    electro-osmotic, streaming and conductive coefficients. It is the error
    estimate of the coarser extrapolation, so it bounds the finer one while
    the solution converges monotonically. ``lam_c`` (lambda_i c_i) and ``conv_c``
    (z_i F c_i eps kT/(e eta)) turn the scaled means into the migration and
    convection parts of the conductive coefficient [S/m].
    (The hydraulic coefficient comes
    from meshes graded for the flow alone, see :func:`_hydraulic`.)
    """
    meshes = [build_mesh(kind, dims, k, lam, gouy) for k in (n // 2, n, 2 * n)]
    sols = [scaled_solution(meshes[0], kl2, w, z, condition, value, model)]
    for i in (1, 2):
        sols.append(scaled_solution(meshes[i], kl2, w, z, condition, value, model,
                                    guess=prolong(meshes[i - 1], meshes[i], sols[-1]["phi"])))

    def coeffs(r):
        out = [lam_c @ r["mean_c"] + conv_c @ r["conv"]]        # conductive coefficient
        if abs(sols[2]["l12"]) > 1e-300:
            out += [r["l12"], r["l21"]]
        return np.array(out)

    c0, c1, c2 = (coeffs(r) for r in sols)
    return sols[1], sols[2], _estimate(c0, c1, c2)


def _estimate(c0, c1, c2):
    """Relative error of the extrapolation of (c1, c2), from three levels.

    Where the successive differences shrink by 2.5-6.5 per halving (the
    second-order asymptotic range), the difference between the two
    extrapolations (c0, c1) and (c1, c2); elsewhere (not yet asymptotic)
    the error estimate of the finest level itself, (c2 - c1)/3, which is
    larger and does not rely on the extrapolation.
    """
    scale = np.maximum(np.abs(c2), 1e-300)
    d1, d2 = c1 - c0, c2 - c1
    tiny = np.abs(d2) <= 1e-12 * scale
    ratio = np.where(tiny, 4.0, d1 / np.where(tiny, 1.0, d2))
    asymptotic = (ratio >= 2.5) & (ratio <= 6.5)
    three = np.abs(_rich(c1, c2) - _rich(c0, c1)) / scale
    two = np.abs(d2) / 3.0 / scale
    return float(np.max(np.where(asymptotic | tiny, three, np.maximum(three, two))))


def _hydraulic(channel, values, kind, dims, L, n, accuracy, need_shear=True):
    """<u>/(G/eta) [m^2], its estimated error and the scaled wall-shear integral,
    from meshes graded for the flow alone (exact closed forms where they exist).
    Three levels as in :func:`_levels`; the resolution is refined once if the
    estimate misses ``accuracy``."""
    exact = channel._exact_flow_mean_values(*values)
    if exact is not None and not need_shear:
        return exact, 0.0, None
    for attempt in range(2):
        f0, f1, f2 = (flow_solution(build_mesh(kind, dims, k)) for k in (n // 2, n, 2 * n))
        r2 = _rich(f1["u_mean"], f2["u_mean"])
        err = _estimate(*(np.array([f["u_mean"]]) for f in (f0, f1, f2)))
        if err <= accuracy or n >= _N_MAX:
            break
        n = _refined(n, err, accuracy)
    shear = _rich(f1["shear"], f2["shear"])
    if exact is not None:
        return exact, 0.0, shear
    return L**2 * r2, err, shear


def _rich(c, f):
    return (4.0 * f - c) / 3.0


def _series_means(s, phi_w, kappa, z):
    """Scaled means of the Debye-Hueckel closed-form series (constant potential)."""
    mean_c, conv = dh_means(z, *(np.array([v]) for v in (
        phi_w * s["mean_phi"], phi_w**2 * s["mean_phi2"],
        phi_w**2 * (s["mean_phi2"] - s["mean_phi"]))))
    return {"l12": -phi_w * s["one_minus_mean_phi"], "l21": -kappa**2 * phi_w * s["mean_phi_u"],
            "mean_c": mean_c[:, 0], "conv": conv[:, 0]}


def _point_thin(channel, bk, geo, k, n, accuracy):
    """The slip model at one point: flow from the mesh, layer from the flat wall."""
    kind, dims, L = geo["spec"][k]
    phi_w = float(bk.scaled_value[0]) if bk.wall.dirichlet else float(isolated_wall_potential(
        bk.z, bk.weights, bk.K, bk.scaled_value)[0])
    u_mean, err, shear = _hydraulic(channel, geo["values"][k], kind, dims, L, n, accuracy)
    per_area = geo["perimeter"][k] / geo["area"][k] / bk.kappa
    means = thin_means(bk, np.array([phi_w]), per_area, shear)
    means = {"l12": means["l12"], "l21": means["l21"], "mean_c": means["mean_c"][:, 0],
             "conv": means["conv_excess"][:, 0]}
    sigma = bk.value[0] if not bk.wall.dirichlet else float(
        bk.eps[0] * bk.VT[0] * bk.kappa[0]
        * isolated_wall_charge(bk.z[:, None], bk.weights, np.array([phi_w]))[0])
    return means, u_mean, sigma, phi_w, err


def _point_series(channel, bk, geo, k, accuracy, model, options):
    """The rectangle's Debye-Hueckel series at one point, or None where it does
    not apply or its tail misses the accuracy."""
    if model != "dh" or not bk.wall.dirichlet or not options.get("rectangle_series", True):
        return None
    kappa = float(bk.kappa[0])
    s = channel._dh_series_values(*geo["values"][k], kappa)
    if s is None or not s["tail"] < 0.1 * accuracy:
        return None
    phi_w = float(bk.scaled_value[0])
    means = _series_means(s, phi_w, kappa, bk.z)
    sigma = float(neutrality_charge(bk, -phi_w * s["mean_phi"],
                                    geo["area"][k] / geo["perimeter"][k])[0])
    return means, s["mean_u"], sigma, phi_w, s["tail"]


def _point_mesh(channel, bk, geo, k, n, accuracy, model):
    """dh or pb at one point on three graded meshes, Richardson-extrapolated."""
    kind, dims, L = geo["spec"][k]
    kappa = float(bk.kappa[0])
    lam = 1.0 / (kappa * L)
    z = bk.z
    value = float(bk.scaled_value[0])
    cond_name = bk.wall.name
    gouy = None
    if model == "pb":
        phi_est = value if bk.wall.dirichlet else float(isolated_wall_potential(
            z, bk.weights, bk.K, bk.scaled_value)[0])
        gouy = _gouy(lam, z, phi_est)
    kl2 = (kappa * L) ** 2
    nk = n
    if not bk.wall.dirichlet and kappa * L > _THIN_CHARGE_K:
        # measured: with a constant-charge wall and layers this thin the
        # coarsest of three 16-cell levels is not yet asymptotic, and
        # the three-level estimate can miss errors of 0.5 %
        nk = max(nk, 32)
    lam_c = (bk.molar_conductivity * bk.c)[:, 0]
    conv_c = (bk.z[:, None] * F * bk.c * bk.eps * bk.VT / bk.eta)[:, 0]
    w = bk.charge_weights[:, 0]
    for attempt in range(2):
        rc, rf, err = _levels(kind, dims, nk, lam, gouy, kl2, w, z, cond_name, value, model,
                              lam_c, conv_c)
        if err <= accuracy or nk >= _N_MAX:
            break
        nk = _refined(nk, err, accuracy)   # refine once, as the estimate asks
    ex = {key: _rich(rc[key], rf[key]) for key in
          ("l12", "l21", "mean_c", "conv", "phi_wall", "mean_g")}
    u_mean, err_flow, _ = _hydraulic(channel, geo["values"][k], kind, dims, L, n, accuracy,
                                     need_shear=False)
    sigma = bk.value[0] if not bk.wall.dirichlet else float(
        neutrality_charge(bk, ex["mean_g"], rf["area"] / rf["perimeter"] * L)[0])
    return ex, u_mean, sigma, ex["phi_wall"], max(err, err_flow)


def section_kernel(channel, cond, models, options):
    """Kernel for a 2D section: see ``ekexplore._state`` for the returned dict."""
    accuracy = options.get("accuracy")
    accuracy = DEFAULT_ACCURACY if accuracy is None else accuracy
    n = resolution(accuracy)
    b = cond.flat()
    shape = cond.shape
    geo = channel._geometry_arrays(shape)          # dict of (B,) arrays and per-point specs
    chosen = np.broadcast_to(np.asarray(models), shape).reshape(b.B)
    keys = ("L11", "L12", "L21", "L22_migration", "L22_convection", "wall_potential",
            "wall_charge", "error")
    out = {key: np.empty(b.B) for key in keys}
    out["ion_current"] = np.empty((len(b.z), b.B))
    for k in range(b.B):
        bk = b.take(np.array([k])).with_length(np.array([geo["spec"][k][2]]))
        name = chosen[k]
        if name == "thin":
            res = _point_thin(channel, bk, geo, k, n, accuracy)
        else:
            res = (_point_series(channel, bk, geo, k, accuracy, name, options)
                   or _point_mesh(channel, bk, geo, k, n, accuracy, name))
        means, u_mean, sigma, phi_w, err = res
        co = coefficients(bk, np.atleast_1d(means["l12"]), np.atleast_1d(means["l21"]),
                          means["mean_c"][:, None], means["conv"][:, None])
        out["L11"][k] = u_mean / bk.eta[0]
        out["L12"][k] = co["L12"][0]
        out["L21"][k] = co["L21"][0]
        out["L22_migration"][k] = np.sum(co["migration"])
        out["L22_convection"][k] = np.sum(co["convection"])
        out["ion_current"][:, k] = (co["migration"] + co["convection"])[:, 0]
        out["wall_potential"][k] = phi_w * bk.VT[0]
        out["wall_charge"][k] = sigma
        out["error"][k] = err
    est = options.get("model_errors")
    if est is not None:
        for name in ("thin", "dh"):
            sel = chosen == name
            out["error"][sel] = np.maximum(out["error"][sel], est[name].reshape(-1)[sel])
    for key in keys:
        out[key] = out[key].reshape(shape)
    out["ion_current"] = out["ion_current"].reshape((len(b.z),) + shape)
    out["model"] = chosen.reshape(shape)
    from .profiles import section_profiles_factory
    out["profiles"] = section_profiles_factory(channel, cond, out["model"], accuracy)
    return out
