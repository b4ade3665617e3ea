"""The transport kernel shared by every 2D section (see ``ekexplore._state``).

Per parameter point it builds (or takes from the cache) graded meshes with
n/2, 3n/4, n and 2n cells across, solves the potential (Debye-Hueckel or
Poisson-Boltzmann) and the flow on each, and returns the Richardson
extrapolation of the two finer levels. The reported error is the estimated
error of that extrapolated value (:func:`.extrapolation.extrapolated_error`;
checked against finer solves, closed forms and the 1D core in the tests).
If it misses the target accuracy the resolution is raised as far as the
estimate asks, until the finest resolution or the time budget.
"""
from __future__ import annotations

import time
import warnings

import numpy as np

from .._constants import F
from ..models import AccuracyWarning
from ..coefficients import coefficients, dh_means, neutrality_charge, thin_means
from ..wall import isolated_wall_charge, isolated_wall_potential
from .extrapolation import DEFAULT_ACCURACY, N_MAX, refined, resolution, rich
from .meshes import trim_mesh_cache
from .profiles import section_profiles_factory
from .solutions import gouy_scale, hydraulic, levels

__all__ = ["section_kernel"]

#: kappa * half-size above which a constant-charge wall starts from 32 cells.
_THIN_CHARGE_K = 2000.0
#: kappa * half-size above which the level estimate of a wall that is not at
#: constant potential is multiplied by _CHARGE_LAYER_SAFETY: with layers this
#: thin the coarse levels of a charged wall are not yet asymptotic although
#: their differences look it; with the finest level's own error as a floor
#: (extrapolation.THIN_LAYER_K) the estimate still fell to 1.05 times the error
#: against levels 4 times finer (kappa a 4,900, polygon; 20 random charged
#: points with kappa a 300-9,400, measured 2026-12), so 2.
_CHARGE_LAYER_K = 300.0
_CHARGE_LAYER_SAFETY = 2.0
#: A dh point stops refining its mesh once the mesh error is below this share
#: of the model's own error estimate (the larger of the two is reported).
_MODEL_SHARE = 0.1
#: Time of the levels against their cells across, to predict the next
#: refinement: unknowns grow as n^2 and a solve as unknowns^1.05-1.19
#: (README, B4), plus the build of the new meshes and the factorisations:
#: measured 2.6-3 from 64 to 128 cells on a trapezoid; 3 errs on the long side.
_COST_EXPONENT = 3.0

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
    if bk.wall.nonlinear:   # the regulated isolated wall
        phi_w = float(bk.wall.isolated_potential(bk.z, bk.weights, bk.K, bk.scaled_value)[0])
    else:
        phi_w = float(bk.scaled_value[0]) if bk.wall.dirichlet else float(
            isolated_wall_potential(bk.z, bk.weights, bk.K, bk.scaled_value)[0])
    u_mean, err, shear = hydraulic(channel, geo["values"][k], kind, dims, L, n, accuracy)
    per_area = geo["perimeter"][k] / geo["area"][k] / bk.kappa
    means = thin_means(bk, np.array([phi_w]), per_area, shear)
    means = {"l12": means["l12"], "l21": means["l21"], "mean_c": means["mean_c"][:, 0],
             "conv": means["conv_excess"][:, 0]}
    sigma = bk.value[0] if not bk.wall.dirichlet else float(
        bk.eps[0] * bk.VT[0] * bk.kappa[0]
        * isolated_wall_charge(bk.z[:, None], bk.weights, np.array([phi_w]))[0])
    if bk.wall.nonlinear:
        sigma = float(bk.wall.charge_density(bk.scaled_value, np.array([phi_w]))[0])
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


def _point_mesh(channel, bk, geo, k, n, accuracy, model, deadline, target=None):
    """dh or pb at one point on graded meshes, Richardson-extrapolated.

    Refines until the mesh error meets ``target`` (default ``accuracy``; for a
    dh point forced outside its range the kernel passes a tenth of the model's
    own a-priori error where that is larger, since the reported error is the
    larger of the two). A refinement whose predicted time (the last one's,
    scaled by the cell count) would overrun ``deadline`` is not started.
    Returns the means, the mean flow, the wall charge and potential, the mesh
    error, and why it stopped short of the target (``None``, ``"budget"`` or
    ``"finest"``).
    """
    kind, dims, L = geo["spec"][k]
    kappa = float(bk.kappa[0])
    lam = 1.0 / (kappa * L)
    z = bk.z
    # one number per point, or the rows of a charge-regulating wall (P, 1)
    value = bk.scaled_value if bk.wall.rows else float(bk.scaled_value[0])
    cond_name = bk.wall.name
    gouy = None
    if model == "pb":
        if bk.wall.nonlinear:
            phi_est = float(bk.wall.isolated_potential(z, bk.weights, bk.K, bk.scaled_value)[0])
        else:
            phi_est = value if bk.wall.dirichlet else float(isolated_wall_potential(
                z, bk.weights, bk.K, bk.scaled_value)[0])
        gouy = gouy_scale(lam, z, phi_est)
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
    target = accuracy if target is None else target
    short = None
    while True:
        start = time.monotonic()
        rc, rf, err = levels(kind, dims, nk, lam, gouy, kl2, w, z, cond_name, value, model,
                             lam_c, conv_c)
        spent = max(time.monotonic() - start, 1e-6)
        if not bk.wall.dirichlet and kappa * L > _CHARGE_LAYER_K:
            err *= _CHARGE_LAYER_SAFETY
        if err <= target:
            break
        if nk >= N_MAX:
            short = "finest"
            break
        nxt = refined(nk, err, target)   # as far as the estimate asks
        # the levels cost about (cells)^_COST_EXPONENT: do not start a
        # refinement that would run past the budget; refine as far as it allows
        left = deadline - time.monotonic()
        if spent * (nxt / nk) ** _COST_EXPONENT > left:
            nxt = 16 * int(nk * (max(left, 0.0) / spent) ** (1.0 / _COST_EXPONENT) / 16)
            if nxt <= nk:
                short = "budget"
                break
        nk = nxt
    ex = {key: rich(rc[key], rf[key]) for key in
          ("l12", "l21", "mean_c", "conv", "phi_wall", "mean_g")}
    u_mean, err_flow, _ = hydraulic(channel, geo["values"][k], kind, dims, L, n, accuracy,
                                     need_shear=False)
    # a fixed charge as imposed; otherwise the perimeter-mean charge that
    # neutralises the space charge (for a regulated wall, the mean of the sites)
    sigma = bk.value[0] if not (bk.wall.dirichlet or bk.wall.nonlinear) else float(
        neutrality_charge(bk, ex["mean_g"], rf["area"] / rf["perimeter"] * L)[0])
    return ex, u_mean, sigma, ex["phi_wall"], max(err, err_flow), short


def _say_missed_targets(error, target, chosen, short, accuracy):
    """Warn where a numerical (dh or pb) 2D point missed its mesh target (the
    requested accuracy, or a tenth of a forced dh point's larger model error)
    after refining to the finest resolution or to the time budget."""
    miss = (error > target) & np.isin(chosen, ("dh", "pb"))
    if not np.any(miss):
        return
    why = ("the time budget ran out (a further refinement would have overrun it)"
           if np.any(short[miss] == "budget")
           else f"the finest resolution ({2 * N_MAX} cells) was reached")
    warnings.warn(
        f"{int(miss.sum())} of {miss.size} section points missed the requested accuracy "
        f"{accuracy:g}: estimated error up to {float(np.max(error[miss])):.3g} "
        f"(Result.error_estimate gives each); {why}", AccuracyWarning, stacklevel=5)


def section_kernel(channel, cond, models, options):
    """Kernel for a 2D section: see ``ekexplore._state`` for the returned dict."""
    accuracy = options.get("accuracy")
    accuracy = DEFAULT_ACCURACY if accuracy is None else accuracy
    budget = options.get("time_budget")
    deadline = time.monotonic() + (np.inf if budget is None else budget)
    n = resolution(accuracy)
    b = cond.flat()
    shape = cond.shape
    geo = channel._geometry_arrays(shape)          # dict of (B,) arrays and per-point specs
    chosen = np.broadcast_to(np.asarray(models), shape).reshape(b.B)
    keys = ("L11", "L12", "L21", "L22_migration", "L22_convection", "wall_potential",
            "wall_charge", "error")
    out = {key: np.empty(b.B) for key in keys}
    out["ion_current"] = np.empty((len(b.z), b.B))
    est = options.get("model_errors")
    dh_error = (np.zeros(b.B) if est is None
                else np.broadcast_to(est["dh"], shape).reshape(b.B))
    target = np.where(chosen == "dh", np.maximum(accuracy, _MODEL_SHARE * dh_error), accuracy)
    short = np.full(b.B, None, dtype=object)
    for k in range(b.B):
        bk = b.take(np.array([k])).with_length(np.array([geo["spec"][k][2]]))
        name = chosen[k]
        if name == "thin":
            res = _point_thin(channel, bk, geo, k, n, accuracy)
        else:
            res = _point_series(channel, bk, geo, k, accuracy, name, options)
            if res is None:
                *res, short[k] = _point_mesh(channel, bk, geo, k, n, accuracy, name, deadline,
                                             target[k])
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
        trim_mesh_cache()
    # the mesh accuracy is judged on the mesh error alone, before a thin or dh
    # point takes its model's estimate (a model error above the accuracy is not
    # a missed mesh target; ModelRangeWarning speaks of it). A dh point whose
    # mesh error is at most a tenth of its model estimate reports the latter:
    # the model estimate carries a margin of at least 1.28 over the model's
    # true error (ekexplore.models, MODEL_TABLE["dh"].safety), so it still
    # bounds the sum of the two.
    _say_missed_targets(out["error"], target, chosen, short, accuracy)
    if est is not None:
        for name in ("thin", "dh"):
            sel = chosen == name
            out["error"][sel] = np.maximum(out["error"][sel], est[name].reshape(-1)[sel])
    for key in keys:
        out[key] = out[key].reshape(shape)
    out["ion_current"] = out["ion_current"].reshape((len(b.z),) + shape)
    out["model"] = chosen.reshape(shape)
    out["profiles"] = section_profiles_factory(channel, cond, out["model"], accuracy)
    return out
