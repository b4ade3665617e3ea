"""The scaled 2D solutions on one mesh and on the levels of a point.

:func:`scaled_solution` solves the potential (dh or pb) and returns the
area means the coefficients need; :func:`flow_solution` the Poiseuille flow
and the wall shear; :func:`levels` runs the four levels of a potential and
:func:`hydraulic` the three of the flow (see :mod:`.extrapolation`).
"""
from __future__ import annotations

import numpy as np

from ..coefficients import dh_means
from ..doublelayer import gouy_chapman_length
from .extrapolation import N_MAX, THIN_LAYER_K, estimate, extrapolated_error, refined, rich
from .meshes import build_mesh
from .solvers import flow_profile, harmonic_extension, solve_potential

__all__ = ["gouy_scale", "scaled_solution", "prolong", "flow_solution", "levels", "hydraulic"]


def gouy_scale(lam, z, phi_w):
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


def levels(kind, dims, n, lam, gouy, kl2, w, z, condition, value, model, lam_c, conv_c):
    """Solutions on the meshes with n/2, 3n/4, n and 2n cells.

    Returns the solutions with n and 2n cells (their Richardson combination is
    the result) and the estimated relative error of that combination
    (:func:`.extrapolation.extrapolated_error`), largest over the
    electro-osmotic, streaming and conductive coefficients. (The wall charge
    of a constant-potential wall, from the mean charge density, converges
    more slowly: about 20 times the relative error of the coefficients on
    coarse levels of a rectangle at kappa a = 33; it is not covered.) ``lam_c``
    (lambda_i c_i) and ``conv_c`` (z_i F c_i eps kT/(e eta)) turn the scaled
    means into the migration and convection parts of the conductive
    coefficient [S/m]. (The hydraulic coefficient comes from meshes graded for
    the flow alone, see :func:`hydraulic`.)
    """
    meshes = [build_mesh(kind, dims, k, lam, gouy) for k in (n // 2, n, 2 * n)]
    sols = [scaled_solution(meshes[0], kl2, w, z, condition, value, model)]
    for i in (1, 2):
        sols.append(scaled_solution(meshes[i], kl2, w, z, condition, value, model,
                                    guess=prolong(meshes[i - 1], meshes[i], sols[-1]["phi"])))
    # the 3n/4 level (not nested in the others: started from the n/2 solution
    # carried over by nearest nodes)
    quarter = build_mesh(kind, dims, (3 * n) // 4, lam, gouy)
    sols.append(scaled_solution(quarter, kl2, w, z, condition, value, model,
                                guess=prolong(meshes[0], quarter, sols[0]["phi"])))

    def coeffs(r):
        out = [lam_c @ r["mean_c"] + conv_c @ r["conv"]]        # conductive coefficient
        if abs(sols[2]["l12"]) > 1e-300:
            out += [r["l12"], r["l21"]]
        return np.array(out)

    c0, c1, c2, cq = (coeffs(r) for r in sols)
    return sols[1], sols[2], extrapolated_error(c0, cq, c1, c2, thin=kl2 > THIN_LAYER_K**2)


def hydraulic(channel, values, kind, dims, L, n, accuracy, need_shear=True):
    """<u>/(G/eta) [m^2], its estimated error and the scaled wall-shear integral,
    from meshes graded for the flow alone (exact closed forms where they exist).
    Three levels as in :func:`levels`; the resolution is refined once if the
    estimate misses ``accuracy``."""
    exact = channel._exact_flow_mean_values(*values)
    if exact is not None and not need_shear:
        return exact, 0.0, None
    for attempt in range(2):
        f0, f1, f2 = (flow_solution(build_mesh(kind, dims, k)) for k in (n // 2, n, 2 * n))
        r2 = rich(f1["u_mean"], f2["u_mean"])
        err = estimate(*(np.array([f["u_mean"]]) for f in (f0, f1, f2)))
        if err <= accuracy or n >= N_MAX:
            break
        n = refined(n, err, accuracy)
    shear = rich(f1["shear"], f2["shear"])
    if exact is not None:
        return exact, 0.0, shear
    return L**2 * r2, err, shear
