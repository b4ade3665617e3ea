"""Transport kernels for the slit (m = 0) and the tube (m = 1).

Each model computes its scaled area means here (closed forms or the batched
Poisson–Boltzmann grids) and hands them to :mod:`ekexplore.coefficients`,
which the 2D sections share:

``thin``  Helmholtz–Smoluchowski slip with the flat-wall diffuse layer.
``dh``    Debye–Hückel closed forms (Rice & Whitehead 1965 for the tube, the
          cosh solution for the slit), conduction to second order in zeta.
``pb``    the nonlinear Poisson–Boltzmann equation, solved in batch on a
          wall-resolving grid, two grids combined by Richardson extrapolation;
          the error estimate is that of the extrapolated value, from two
          further, coarser grids.

In scaled form L11 is a number times R²/eta, L12 and L21 numbers times
eps V_T/eta, with V_T = kT/e.
"""
from __future__ import annotations

import numpy as np
from scipy import special

from .coefficients import coefficients, dh_means, neutrality_charge, thin_means
from .doublelayer import (CHARGE_NEWTON_TOL, PB_PHI_MAX, gouy_chapman_length, gouy_chapman_potential, make_grid,
                          solve_pb, wall_potential_estimate)
from .models import MODEL_NAMES, MODEL_TABLE
from .profiles import Profiles
from .wall import isolated_wall_charge, isolated_wall_potential

__all__ = ["transport_1d", "dh_wall_potential"]

#: Computational spacing of the coarse pb grid in the log-mapped coordinate.
PB_DXI = 0.12
#: Fewest cells of the coarse pb grid.
PB_MIN_CELLS = 32
#: Grid nodes per batch chunk of the pb solve (sized for the CPU cache).
PB_CHUNK_NODES = 131072
#: Cells of the grid on which profiles are returned.
PROFILE_CELLS = 200
#: Points per chunk of the closed-form models: the thin model's flat-layer
#: quadrature holds about 13 kB per point, so a chunk stays near 100 MB.
CLOSED_FORM_CHUNK = 8192


# --------------------------------------------------------------------------
# Debye-Hueckel closed forms, safe for K from 1e-3 to 1e5
# --------------------------------------------------------------------------
def _mean_factor(m, K):
    """G1 = <psi>/zeta for the DH potential: tanh(K)/K or 2 I1(K)/(K I0(K))."""
    if m == 0:
        return np.tanh(K) / K
    return 2.0 * special.ive(1, K) / (K * special.ive(0, K))


def _one_minus_mean_factor(m, K):
    """1 - G1 without cancellation at small K (series below K = 1e-3)."""
    small = K < 1e-3
    Ks = np.where(small, 1.0, K)
    if m == 0:
        exact = 1.0 - np.tanh(Ks) / Ks
        series = K**2 / 3.0 - 2.0 * K**4 / 15.0
    else:
        exact = 1.0 - 2.0 * special.ive(1, Ks) / (Ks * special.ive(0, Ks))
        series = K**2 / 8.0 - K**4 / 48.0
    return np.where(small, series, exact)


def _streaming_factor(m, K):
    """<(-f) u_hat> K^2 / (-phi_w) for the DH charge: the streaming integral.

    Slit: int_0^1 (1 - s^2) cosh(Ks) ds K^2 / (2 cosh K) = (K cosh K - sinh K)/(K cosh K).
    Tube: 2 int_0^1 s (1 - s^2) I0(Ks) ds K^2 / (4 I0(K)) = I2(K)/I0(K).
    For the DH potential it equals 1 - G1 (Green's identity), which is why
    dh's L21 = L12 is an identity of the model; it is computed independently
    all the same.
    """
    small = K < 1e-3
    Ks = np.where(small, 1.0, K)
    if m == 0:
        exact = (Ks - np.tanh(Ks)) / Ks
        series = K**2 / 3.0 - 2.0 * K**4 / 15.0
    else:
        exact = special.ive(2, Ks) / special.ive(0, Ks)
        series = K**2 / 8.0 - K**4 / 48.0
    return np.where(small, series, exact)


def _square_factor(m, K):
    """H = <psi^2>/zeta^2 for the DH potential."""
    if m == 0:
        return 0.5 * (1.0 / np.cosh(np.minimum(K, 350.0))**2 + np.tanh(K) / K)
    r = special.ive(1, K) / special.ive(0, K)
    return 1.0 - r**2


def _dh_profile(m, K, x):
    """psi/zeta of the DH solution on wall distances x (B, n)."""
    Kb = K[:, None]
    s = 1.0 - x
    if m == 0:
        return (np.exp(-Kb * x) + np.exp(-Kb * (1.0 + s))) / (1.0 + np.exp(-2.0 * Kb))
    return special.ive(0, Kb * s) / special.ive(0, Kb) * np.exp(-Kb * x)


def dh_wall_potential(m, K, sigma_s):
    """Scaled wall potential of the DH solution for scaled charge sigma R e/(eps kT)."""
    if m == 0:
        return sigma_s / (K * np.tanh(K))
    return sigma_s * special.ive(0, K) / (K * special.ive(1, K))


# --------------------------------------------------------------------------
# one model on a flat batch
# --------------------------------------------------------------------------
def _assemble(b, m, means, phi_w, wall_charge, err, model):
    """The kernel's output arrays (B,) from a model's scaled means."""
    co = coefficients(b, means["l12"], means["l21"], means["mean_c"], means["conv_excess"])
    R = b.length
    return dict(L11=R**2 / (b.eta * (m + 1) * (m + 3)), L12=co["L12"], L21=co["L21"],
                L22_migration=np.sum(co["migration"], axis=0),
                L22_convection=np.sum(co["convection"], axis=0),
                ion_current=co["migration"] + co["convection"],
                wall_potential=phi_w * b.VT, wall_charge=wall_charge, error=err,
                model=np.full(b.B, model))


def _wall_charge(b, phi_w):
    """Imposed charge, or that of the isolated-wall layer at potential phi_w (Grahame)."""
    if b.wall.nonlinear:
        return b.wall.charge_density(b.scaled_value, phi_w)
    if not b.wall.dirichlet:
        return b.value
    return b.eps * b.VT * b.kappa * isolated_wall_charge(b.z[:, None], b.weights, phi_w)


def _thin(b, m):
    if b.wall.nonlinear:   # the regulated isolated wall
        phi_w = b.wall.isolated_potential(b.z, b.weights, b.K, b.scaled_value)
    else:
        phi_w = b.scaled_value if b.wall.dirichlet else isolated_wall_potential(
            b.z, b.weights, b.K, b.scaled_value)
    per_area = (m + 1) / b.length / b.kappa                       # (P/A) / kappa
    means = thin_means(b, phi_w, per_area, shear=1.0)
    return _assemble(b, m, means, phi_w, _wall_charge(b, phi_w), np.zeros(b.B), "thin")


def _dh(b, m):
    K = b.K
    if b.wall.nonlinear:   # sites balancing the linear layer: s = phi_w / dh_wall_potential(1)
        phi_w = b.wall.linear_potential(1.0 / dh_wall_potential(m, K, 1.0), b.scaled_value)
    else:
        phi_w = b.scaled_value if b.wall.dirichlet else dh_wall_potential(m, K, b.scaled_value)
    G1 = _mean_factor(m, K)
    H = _square_factor(m, K)
    mean_c, conv = dh_means(b.z, phi_w * G1, phi_w**2 * H, phi_w**2 * (H - G1))
    means = {"l12": -phi_w * _one_minus_mean_factor(m, K),    # <phi> - phi_w
             "l21": -phi_w * _streaming_factor(m, K),         # K^2 <f u_hat>, f = -phi
             "mean_c": mean_c, "conv_excess": conv}
    sigma = b.value if not b.wall.dirichlet else (
        b.eps * b.VT * phi_w * K**2 * G1 / (b.length * (m + 1)))
    if b.wall.nonlinear:
        sigma = _wall_charge(b, phi_w)
    return _assemble(b, m, means, phi_w, sigma, np.zeros(b.B), "dh")


def _inner_scale(b, phi_w_est):
    """x0 of the log grid: a quarter of the smaller of Debye and Gouy-Chapman lengths."""
    return 0.25 * np.minimum(gouy_chapman_length(1.0 / b.K, b.z, phi_w_est), 1.0)


def _pb_scaled(b, grid, phi):
    """Scaled means from a converged pb solution on ``grid``."""
    V = grid.volume
    phi_w = phi[:, 0]
    z = b.z
    em1 = np.expm1(-z[:, None, None] * phi[None])                  # (k, B, n)
    fvals = np.sum(b.charge_weights[:, :, None] * em1, axis=0)     # (B, n), exact near 0
    K2 = b.K[:, None]**2
    return {"l12": np.sum(V * phi, axis=1) - phi_w,                # <phi> - phi_w
            "l21": np.sum(V * K2 * fvals * grid.poiseuille, axis=1),  # K^2 <f u_hat>
            "mean_c": np.sum(V[None] * (em1 + 1.0), axis=2),       # <c_i>/c_i
            # <(c/c_b - 1)(phi - phi_w)>: convection of each ion's excess over the bulk
            "conv_excess": np.sum(V[None] * em1 * (phi - phi_w[:, None])[None], axis=2),
            "mean_f": np.sum(V * fvals, axis=1)}


def _pb_wall_estimate(b, m):
    """Scaled wall potential, or for a charge wall an estimate of it."""
    if b.wall.dirichlet:
        return b.scaled_value
    if b.wall.nonlinear:
        return b.wall.isolated_potential(b.z, b.weights, b.K, b.scaled_value)
    return wall_potential_estimate(b.z, b.weights, b.K, b.scaled_value, m + 1)


def _pb(b, m, accuracy=1e-6):
    """pb on a batch: points are grouped by grid size, so that every point's
    grid depends on its own parameters only (a batch gives the same numbers
    as single calls)."""
    phi_est = _pb_wall_estimate(b, m)
    zmax = np.max(np.abs(b.z))
    over = np.abs(zmax * phi_est) > PB_PHI_MAX
    if np.any(over):
        k = np.flatnonzero(over)[0]
        # a charge-regulating wall's value is rows (pH first), not one charge
        what = (f"the surface's sites at pH {float(b.value[0, k]):g} need"
                if getattr(b.wall, "rows", False) else
                f"charge_density = {float(b.value[k]):g} C/m^2 needs")
        raise ValueError(
            f"{what} a wall potential of about "
            f"{phi_est[k] * b.VT[k]:.3g} V, beyond the solver range |z e zeta/kT| <= "
            f"{PB_PHI_MAX:g}; lower the charge, widen the channel or raise the concentration")
    x0 = _inner_scale(b, phi_est)
    # Richardson-extrapolated error goes as dxi^4: 5e-7 at the default spacing
    dxi = float(np.clip(PB_DXI * (accuracy / 1e-6)**0.25, 0.03, 0.3))
    need = np.maximum(PB_MIN_CELLS, np.ceil(np.log1p(1.0 / x0) / dxi))
    # grid sizes come in steps of sqrt(2), so a point's grid depends on itself only
    steps = np.ceil(2.0 * np.log2(need / PB_MIN_CELLS))
    level = np.round(PB_MIN_CELLS * 2.0 ** (steps / 2.0)).astype(int)
    chunks = []
    for n in np.unique(level):
        idx = np.flatnonzero(level == n)
        # chunks of a few thousand points keep the work arrays in cache
        size = max(256, PB_CHUNK_NODES // int(n))
        chunks += [(int(n), idx[i:i + size]) for i in range(0, idx.size, size)]
    return _gather(b.B, ((idx, _pb_group(b.take(idx), m, x0[idx], n)) for n, idx in chunks))


def _refine_guess(phi_c, shape):
    """Cubic interpolation of a coarse solution to the grid with twice the
    cells, in the (uniform) mapped coordinate: error ~ dxi^4, so Newton needs
    about two steps from it."""
    guess = np.empty(shape)
    guess[:, ::2] = phi_c
    mid = 0.5 * (phi_c[:, 1:] + phi_c[:, :-1])
    mid[:, 1:-1] = (9.0 * (phi_c[:, 1:-2] + phi_c[:, 2:-1]) - phi_c[:, :-3] - phi_c[:, 3:]) / 16.0
    mid[:, 0] = (3.0 * phi_c[:, 0] + 6.0 * phi_c[:, 1] - phi_c[:, 2]) / 8.0
    mid[:, -1] = (3.0 * phi_c[:, -1] + 6.0 * phi_c[:, -2] - phi_c[:, -3]) / 8.0
    guess[:, 1::2] = mid
    return guess


def _rich(c, f, ratio=2.0):
    """Richardson extrapolation of second-order values on grids with n and
    ``ratio`` x n cells."""
    r2 = ratio * ratio
    return (r2 * f - c) / (r2 - 1.0)


#: Coarse-grid ratios n/n0 of the two extra grids of the pb error estimate.
PB_ERROR_RATIOS = (2.0 ** 0.5, 2.0)
#: Safety factor of the pb error estimate over the asymptotic error of the
#: extrapolated value (see :func:`_pb_error`); its measured reason is in the
#: model table (``ekexplore.models.MODEL_TABLE["pb"].safety``).
PB_ERROR_SAFETY = MODEL_TABLE["pb"].safety["pb"][0]


def _pb_coefficients(b, s):
    """L12, L21 and L22 (migration + convection) [SI] of one grid's scaled means."""
    co = coefficients(b, s["l12"], s["l21"], s["mean_c"], s["conv_excess"])
    return np.stack([co["L12"], co["L21"], np.sum(co["migration"] + co["convection"], axis=0)])


def _pb_error(c0, c1, c2, ratio0):
    """Estimated relative error of the extrapolation of grids n and 2n.

    ``c0``, ``c1``, ``c2`` (3, B) are the coefficients on grids with n0 =
    n/ratio0, n and 2n cells. With values c(h) = c + a h^2 + b h^4, the
    extrapolation of grids (h1, h1/2) errs by -b h1^4/4 and that of
    (ratio0 h1, h1) by -b ratio0^2 h1^4, so the difference of the two
    extrapolations is (4 ratio0^2 - 1) times the error of the finer one
    (15 for ratio0 = 2). The estimate is that, times ``PB_ERROR_SAFETY``, the
    largest over the coefficients relative to each.
    """
    fine = _rich(c1, c2)
    coarse = _rich(c0, c1, ratio0)
    scale = np.abs(fine)
    rel = PB_ERROR_SAFETY * np.abs(fine - coarse) / (4.0 * ratio0**2 - 1.0) / np.where(
        scale > 0, scale, 1.0)
    return np.max(np.where(scale > 0, rel, 0.0), axis=0)


def _resample(phi, n_cells):
    """Linear interpolation of nodal values (B, n+1) in the uniform mapped
    coordinate onto a grid with ``n_cells`` cells: a start for Newton there."""
    n = phi.shape[1] - 1
    t = np.arange(n_cells + 1) * (n / n_cells)
    j = np.minimum(t.astype(int), n - 1)
    f = t - j
    return phi[:, j] * (1.0 - f) + phi[:, j + 1] * f


def _pb_group(b, m, x0, n):
    tol = 1e-6 if b.wall.dirichlet else CHARGE_NEWTON_TOL
    coarse = make_grid(m, x0, n)
    phi_c = solve_pb(coarse, b.K, b.z, b.weights, b.wall, b.scaled_value, tol=tol)
    fine = make_grid(m, x0, 2 * n)
    phi_f = solve_pb(fine, b.K, b.z, b.weights, b.wall, b.scaled_value,
                     phi0=_refine_guess(phi_c, fine.x.shape), tol=tol)
    sc, sf = _pb_scaled(b, coarse, phi_c), _pb_scaled(b, fine, phi_f)
    means = {k: _rich(sc[k], sf[k]) for k in sc}
    phi_w = _rich(phi_c[:, 0], phi_f[:, 0])
    sigma = b.value if not b.wall.dirichlet else neutrality_charge(
        b, means["mean_f"], b.length / (m + 1))
    if b.wall.nonlinear:   # the sites' charge at the extrapolated zeta
        sigma = _wall_charge(b, phi_w)
    # error estimate of the extrapolated value: two coarser grids (n/sqrt(2)
    # and n/2 cells, started from the solution on n cells) give two more
    # extrapolations; see _pb_error
    cs, cf = _pb_coefficients(b, sc), _pb_coefficients(b, sf)
    err = np.zeros(b.B)
    for ratio in PB_ERROR_RATIOS:
        n0 = int(round(n / ratio))
        grid = make_grid(m, x0, n0)
        phi_0 = solve_pb(grid, b.K, b.z, b.weights, b.wall, b.scaled_value,
                         phi0=_resample(phi_c, n0), tol=tol)
        err = np.maximum(err, _pb_error(_pb_coefficients(b, _pb_scaled(b, grid, phi_0)),
                                        cs, cf, n / n0))
    return _assemble(b, m, means, phi_w, sigma, err, "pb")


def _gather(B, parts):
    """One output dict of B points from (index, output) pairs of sub-batches."""
    out = None
    for idx, part in parts:
        if out is None:
            out = {k: np.empty(v.shape[:-1] + (B,), dtype=v.dtype if k != "model" else "<U4")
                   for k, v in part.items()}
        for k, v in part.items():
            out[k][..., idx] = v
    return out


# --------------------------------------------------------------------------
# profiles on a common grid, any model
# --------------------------------------------------------------------------
def _profile_potential(b, m, model, grid, phi_w):
    if model == "pb":
        return solve_pb(grid, b.K, b.z, b.weights, b.wall, b.scaled_value)
    if model == "dh":
        return phi_w[:, None] * _dh_profile(m, b.K, grid.x)
    # thin: the Gouy-Chapman layer of the nearest wall (counter-ion valence)
    zc = np.max(np.abs(b.z))
    return gouy_chapman_potential(zc, phi_w[:, None], np.exp(-b.K[:, None] * grid.x))


def profiles_1d(m, half_size, cond, models, wall_potential, pressure_gradient=1.0,
                field=1.0):
    """Profiles of a (possibly mixed-model) batch of slits (m = 0) or tubes
    (m = 1) from its conditions, models and wall potentials [V]."""
    b = cond.flat(half_size)
    shape = cond.shape
    phi_w_all = np.broadcast_to(wall_potential, shape).reshape(b.B) / b.VT
    mod = np.broadcast_to(models, shape).reshape(b.B)
    x0 = _inner_scale(b, phi_w_all)
    grid = make_grid(m, x0, PROFILE_CELLS)
    phi = np.empty(grid.x.shape)
    for name in MODEL_NAMES:
        idx = np.flatnonzero(mod == name)
        if idx.size:
            phi[idx] = _profile_potential(b.take(idx), m, name,
                                          make_grid(m, x0[idx], PROFILE_CELLS),
                                          phi_w_all[idx])
    return Profiles.from_1d(m, grid, phi, b, mod, shape, pressure_gradient, field)


def _profiles(half_size, cond, m, models, wall_potential):
    """The profiles callable of a batch: it keeps the conditions (views of the
    inputs) rather than their flat copies, which it rebuilds when called."""
    def make(pressure_gradient=1.0, field=1.0):
        return profiles_1d(m, half_size, cond, models, wall_potential, pressure_gradient, field)
    return make


_KERNELS = {"thin": _thin, "dh": _dh, "pb": _pb}


def _model_parts(b, m, chosen, accuracy):
    """(index, output) of every model's points, in chunks that bound the memory
    (pb chunks its grids itself)."""
    for name in MODEL_NAMES:
        idx = np.flatnonzero(chosen == name)
        if name == "pb":
            if idx.size:
                yield idx, _pb(b.take(idx), m, accuracy)
            continue
        for i in range(0, idx.size, CLOSED_FORM_CHUNK):
            part = idx[i:i + CLOSED_FORM_CHUNK]
            yield part, _KERNELS[name](b.take(part), m)


def transport_1d(m, half_size, cond, models, options):
    """Kernel for slit (m = 0) and tube (m = 1): see ``ekexplore._state``.

    ``models`` gives the model of every point; ``options["model_errors"]``,
    when given, the a-priori error estimate of each closed-form model.
    """
    b = cond.flat(half_size)
    chosen = np.broadcast_to(np.asarray(models), cond.shape).reshape(b.B)
    accuracy = options.get("accuracy") or 1e-6
    out = _gather(b.B, _model_parts(b, m, chosen, accuracy))
    est = options.get("model_errors")
    if est is not None:
        # a closed-form model's error is the a-priori estimate that chose it
        for name in ("thin", "dh"):
            sel = out["model"] == name
            out["error"][sel] = np.broadcast_to(est[name], cond.shape).reshape(b.B)[sel]
    shape = cond.shape
    for k in out:
        out[k] = out[k].reshape(out[k].shape[:-1] + shape)
    out["profiles"] = _profiles(half_size, cond, m, out["model"], out["wall_potential"])
    return out
