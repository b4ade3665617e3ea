r"""Test reference: the double layer across a slit or a tube whose walls
regulate their charge, solved by a second, differently built Newton solver.

It lives under ``tests/`` on purpose: it shares no code with the package's
solver (:func:`ekexplore.doublelayer.solve_pb` with
:class:`ekexplore.surface.RegulatedCharge`), only the grid and the scaled
variables, so ``tests/test_surface.py`` can compare the two. Here the charged
plane is one more unknown joined to the wall node by the Stern layer; the
package instead carries the sites as a nonlinear boundary term.

Prototype of the regulated Poisson–Boltzmann solve, on the log-mapped
finite-volume grid of :mod:`ekexplore.doublelayer` (same scaled variables:
:math:`\phi = e\psi/kT`, s = r/R, K = κR, weights
:math:`w_i = c_i/\sum_j z_j^2 c_j`). The wall condition is nonlinear:

.. math:: \phi'(1) = \tilde\sigma, \qquad
          \tilde\sigma = \tilde c_S\,(\phi_0 - \phi_w) = \tilde\sigma_{sites}(\phi_0)

with :math:`\phi_0` the potential of the charged plane, :math:`\phi_w` that
of the diffuse layer at the wall (ζ), :math:`\tilde c_S = C R/\varepsilon`
the scaled Stern capacitance and
:math:`\tilde\sigma = \sigma R e/(\varepsilon kT)`. The charged plane is one
more unknown, joined to the wall node by the Stern layer as by one more
face of the grid, so each Newton step stays one symmetric tridiagonal
solve. The discrete free energy

.. math:: E = \tfrac12\sum_f c_f(\Delta\phi)^2 + \tfrac{m+1}{2}\tilde c_S
          (\phi_0-\phi_w)^2 + \sum_j K^2V_j g(\phi_j)
          - (m+1)\,\tilde F_{sites}(\phi_0)

is convex (the site charge falls with :math:`\phi_0`, so its antiderivative
:math:`\tilde F_{sites}` is concave), and Newton with backtracking on E
converges from any start.
"""
from __future__ import annotations

import numpy as np
from scipy import constants, special
from scipy import linalg

from ekexplore.doublelayer import ConvergenceError, make_grid, PB_PHI_CLIP
from ekexplore.kernels1d import _refine_guess
from ekexplore.wall import _osmotic_root

__all__ = ["solve_regulated_pb", "regulated_layer", "regulated_wall", "isolated_scaled",
           "dh_scaled"]

#: Computational spacing of the coarse grid in the log-mapped coordinate.
DXI = 0.12
#: Fewest cells of the coarse grid.
MIN_CELLS = 32


def _f(z, w, phi):
    """Scaled charge density f = sum z w e^{-z phi} and f' for phi (B, n); exact
    near phi = 0 for a neutral bulk (sum z w = 0)."""
    em1 = np.expm1(-z[:, None, None] * phi[None])
    zw = (z[:, None] * w)[:, :, None]
    f = np.sum(zw * em1, axis=0)
    fp = -np.sum(zw * z[:, None, None] * (em1 + 1.0), axis=0)
    return f, fp


def _g(z, w, phi):
    """Antiderivative of -f: sum w (e^{-z phi} - 1)."""
    return np.sum(w[:, :, None] * np.expm1(-z[:, None, None] * phi[None]), axis=0)


class _Sites:
    """Scaled site charge of a flat batch: sigma~, d sigma~/d phi0, int sigma~ dphi0."""

    def __init__(self, surface, pH, scale):
        self.surface, self.pH, self.scale = surface, pH, scale

    def __call__(self, phi0, idx=None):
        surf = self.surface if idx is None else self.surface._take(idx)
        pH = self.pH if idx is None else self.pH[idx]
        sc = self.scale if idx is None else self.scale[idx]
        sig, dsig, free, frac = surf._site_terms(phi0, pH)
        return sig * sc, dsig * sc, free * sc, frac


def _bisect_wall(lo, hi, balance, n=64):
    """Root of a decreasing ``balance`` between ``lo`` and ``hi`` by bisection."""
    for _ in range(n):
        mid = 0.5 * (lo + hi)
        up = balance(mid) > 0
        lo = np.where(up, mid, lo)
        hi = np.where(up, hi, mid)
    return 0.5 * (lo + hi)


def isolated_scaled(z, w, K, c_s, sites):
    """Regulated isolated wall in scaled units: (phi_w, phi_0, sigma~).

    Grahame's charge of the diffuse layer, sigma~_G = sgn(phi) K sqrt(2 sum w
    (e^{-z phi} - 1)), from :func:`ekexplore.wall._osmotic_root` (the core of
    :func:`ekexplore.wall.grahame_charge`), balances the sites at
    phi_0 = phi_w + sigma~/c_s; bisection on phi_w to 5e-18.
    """
    zc = np.asarray(z, dtype=float)[:, None]

    def grahame(phi):
        return np.sign(phi) * K * np.sqrt(2.0) * _osmotic_root(zc, w, phi)

    lim = np.full(K.shape, PB_PHI_CLIP / np.max(np.abs(z)))
    phi_w = _bisect_wall(-lim, lim, lambda p: sites(p + grahame(p) / c_s)[0] - grahame(p))
    sg = grahame(phi_w)
    return phi_w, phi_w + sg / c_s, sg


def dh_scaled(m, K, c_s, sites):
    """Regulated wall of the Debye–Hückel model in scaled units: (phi_w, phi_0, sigma~).

    The linear double layer across the channel gives sigma~ = phi_w K tanh K
    (slit) or phi_w K I1(K)/I0(K) (tube); it balances the (nonlinear) sites at
    phi_0 = phi_w + sigma~/c_s; bisection on phi_w.
    """
    if m == 0:
        slope = K * np.tanh(K)
    else:
        slope = K * special.ive(1, K) / special.ive(0, K)
    lim = np.full(K.shape, PB_PHI_CLIP)
    phi_w = _bisect_wall(-lim, lim, lambda p: sites(p + slope * p / c_s)[0] - slope * p)
    return phi_w, phi_w + slope * phi_w / c_s, slope * phi_w


def _start(grid, K, z, phi_w):
    """Gouy–Chapman profile of the nearest wall (counter-ion valence)."""
    zc = np.max(np.abs(z))
    t = np.tanh(zc * phi_w / 4.0)[:, None] * np.exp(-K[:, None] * grid.x)
    return 4.0 / zc * np.arctanh(np.clip(t, -1 + 1e-16, 1 - 1e-16))


def solve_regulated_pb(grid, K, z, w, c_s, sites, start=None, tol=1e-6, max_iter=200):
    """Batched Newton solve of the scaled Poisson–Boltzmann equation with
    charge-regulating walls.

    Parameters
    ----------
    grid, K, z, w
        Grid (batch size B), kappa R (B,), valences (k,) and weights
        c_i / sum z_j^2 c_j (k, B), as in :func:`ekexplore.doublelayer.solve_pb`.
    c_s : ndarray (B,)
        Scaled Stern capacitance C R / eps.
    sites : callable
        ``sites(phi0, idx)`` -> (sigma~, d sigma~/d phi0, antiderivative, fraction)
        at the points ``idx`` of the batch (all if None).
    start : (phi0 (B,), phi (B, n)), optional
        Initial guess: charged plane and grid potentials.

    Returns
    -------
    phi0 : ndarray (B,)
        Scaled potential of the charged plane.
    phi : ndarray (B, n)
        Scaled potential on the grid, wall first.

    Notes
    -----
    Unknowns per point: [phi0, phi_0 .. phi_{n-1}] in one block of size n+1;
    blocks of the batch stacked with zero coupling in one banded Cholesky solve.
    Newton step capped at 4, backtracking on the convex free energy far from
    the solution, stop after a full step below ``tol`` relative to the largest
    potential. Raises :class:`ConvergenceError` otherwise.
    """
    B, n = grid.x.shape
    m1 = grid.m + 1
    c = grid.area / grid.dx                                  # (B, n-1)
    K2V = (K**2)[:, None] * grid.volume                      # (B, n)
    if start is None:
        phi_w, phi0, _ = isolated_scaled(z, w, K, c_s, sites)
        phi = _start(grid, K, z, phi_w)
    else:
        phi0, phi = start
    u = np.concatenate([np.asarray(phi0, dtype=float)[:, None], phi], axis=1)  # (B, n+1)
    cs = m1 * c_s                                            # Stern face conductance
    # the Stern layer as face 0 of an extended grid
    cext = np.concatenate([cs[:, None], c], axis=1)          # (B, n)
    dbase = np.zeros((B, n + 1))
    dbase[:, :-1] += cext
    dbase[:, 1:] += cext
    ebase = np.concatenate([-cext, np.zeros((B, 1))], axis=1)  # (B, n+1)
    lim = 2.0 * PB_PHI_CLIP / np.min(np.abs(z))

    def energy(v, idx):
        d = np.diff(v, axis=1)
        return (0.5 * np.sum(cext[idx] * d**2, axis=1)
                + np.sum(K2V[idx] * _g(z, w[:, idx], v[:, 1:]), axis=1)
                - m1 * sites(v[:, 0], idx)[2])

    active = np.arange(B)
    for it in range(max_iter):
        ua = u[active]
        f, fp = _f(z, w[:, active], ua[:, 1:])
        s, ds, _, _ = sites(ua[:, 0], active)
        flux = cext[active] * np.diff(ua, axis=1)            # (b, n)
        F = np.zeros_like(ua)
        F[:, :-1] += flux
        F[:, 1:] -= flux
        F[:, 1:] += K2V[active] * f
        F[:, 0] += m1 * s
        d = dbase[active].copy()
        d[:, 1:] -= K2V[active] * fp
        d[:, 0] -= m1 * ds
        delta = _banded_solve(d, ebase[active], F)
        big = np.abs(delta).max(axis=1)
        with np.errstate(divide="ignore"):
            scale = np.minimum(4.0 / big, 1.0)           # Newton step capped at 4
        step = delta * scale[:, None]
        trial = ua + step
        t = np.ones(active.size)
        far = np.flatnonzero(big * scale > 0.25)
        if far.size:
            t[far] = _line_search(energy, ua[far], step[far], active[far])
            trial[far] = ua[far] + t[far, None] * step[far]
            np.clip(trial, -lim, lim, out=trial)
        u[active] = trial
        done = ((big * t * scale <= tol * np.max(np.abs(trial), axis=1) + 1e-280)
                & (t == 1.0) & (scale == 1.0) & (it > 0))
        active = active[~done]
        if active.size == 0:
            return u[:, 0], u[:, 1:]
    raise ConvergenceError(
        f"regulated Poisson-Boltzmann solver did not converge in {max_iter} Newton steps "
        f"for {active.size} of {B} points (e.g. point {int(active[0])})")


def _banded_solve(d, e, F):
    """Solve the stacked symmetric positive definite tridiagonal blocks
    (diagonal ``d``, sub-diagonal ``e`` with a zero block gap, both (b, n+1))
    with a banded Cholesky factorisation (LAPACK pbtrf/pbtrs), a different
    route from the package's dptsv."""
    band = np.zeros((2, d.size))
    band[0] = d.ravel()
    band[1] = e.ravel()
    try:
        x = linalg.solveh_banded(band, F.ravel(), lower=True, check_finite=False)
    except linalg.LinAlgError as err:
        raise ConvergenceError(f"banded Cholesky solve failed: {err}") from err
    return x.reshape(F.shape)


def _line_search(energy, u, step, idx, halvings=40):
    """Step lengths t in 1, 1/2, 1/4, ... (one per point) that do not raise
    the convex free energy: each point is halved until E(u + t step) <= E(u)."""
    t = np.ones(len(u))
    e0 = energy(u, idx)
    todo = np.arange(len(u))
    for _ in range(halvings):
        worse = energy(u[todo] + t[todo, None] * step[todo], idx[todo]) \
            > e0[todo] + 1e-12 * np.abs(e0[todo]) + 1e-300
        todo = todo[worse]
        if todo.size == 0:
            break
        t[todo] *= 0.5
    return t


def _refine(phi_c):
    """Cubic interpolation of a coarse solution onto the grid with twice the
    cells (the package's start guess: it only starts Newton)."""
    return _refine_guess(phi_c, (phi_c.shape[0], 2 * phi_c.shape[1] - 1))


def _flat_problem(half_size, electrolyte, surface, pH):
    """Scaled, flat-batch form of a regulated-wall problem (dict of arrays)."""
    half_size = np.asarray(half_size, dtype=float)
    pH = np.asarray(pH, dtype=float)
    shape = np.broadcast_shapes(half_size.shape, pH.shape, electrolyte.shape, surface.shape)
    B = int(np.prod(shape)) if shape else 1

    def flat(a):
        return np.broadcast_to(a, shape).reshape(B).astype(float)

    z = electrolyte.valences.astype(float)
    ce = electrolyte.concentrations
    ce = ce.reshape(ce.shape[:1] + (1,) * (len(shape) - len(electrolyte.shape)) + ce.shape[1:])
    conc = np.broadcast_to(ce, ce.shape[:1] + shape).reshape(len(z), B)
    T = flat(electrolyte.temperature)
    eps = flat(electrolyte.permittivity)
    R = flat(half_size)
    VT = constants.k * T / constants.e
    surf = surface._flat(shape)
    return dict(shape=shape, B=B, z=z, w=conc / np.sum(z[:, None]**2 * conc, axis=0),
                K=R / flat(electrolyte.debye_length), VT=VT, surf=surf,
                c_s=surf.stern_capacitance * R / eps,
                sites=_Sites(surf, flat(pH), R / (eps * VT)))


def _results(p, phi_w, phi0, sigma_s, err):
    """SI results of the broadcast shape from scaled flat ones."""
    sites = p["sites"]
    frac = sites(phi0)[3]
    out = dict(zeta=phi_w * p["VT"], charge_density=sigma_s / sites.scale,
               surface_potential=phi0 * p["VT"], charged_fraction=frac, error=err)
    return {k: np.reshape(v, p["shape"]) for k, v in out.items()}


def regulated_wall(model, m, half_size, electrolyte, surface, pH, accuracy=1e-6):
    """The regulated wall of a slit (m = 0) or tube (m = 1) under one
    double-layer model: zeta, charge and the fraction of charged sites.

    ``thin``: the isolated flat wall (Grahame); ``dh``: the linear double
    layer across the channel; ``pb``: the nonlinear one
    (:func:`regulated_layer`). Each balances the same nonlinear sites and
    Stern layer. Once zeta is known, the double layer of the channel is the
    constant-potential one at that zeta (the same equation with the same
    wall value), so every transport coefficient follows from the model's
    constant-potential kernel.

    Parameters and returns as :func:`regulated_layer` (no profiles for thin
    and dh; their ``error`` is 0: the model error is auto's).
    """
    if model == "pb":
        return regulated_layer(m, half_size, electrolyte, surface, pH, accuracy)
    p = _flat_problem(half_size, electrolyte, surface, pH)
    if model == "thin":
        phi_w, phi0, sig = isolated_scaled(p["z"], p["w"], p["K"], p["c_s"], p["sites"])
    elif model == "dh":
        phi_w, phi0, sig = dh_scaled(m, p["K"], p["c_s"], p["sites"])
    else:
        raise ValueError(f"model = {model!r}: choose thin, dh or pb")
    return _results(p, phi_w, phi0, sig, np.zeros(p["B"]))


def regulated_layer(m, half_size, electrolyte, surface, pH, accuracy=1e-6):
    """Equilibrium double layer of a slit (m = 0) or tube (m = 1) with
    charge-regulating walls: zeta, charge and the fraction of charged sites.

    Parameters
    ----------
    m : int
        0 slit (``half_size`` = half-gap), 1 tube (``half_size`` = radius).
    half_size : array_like
        [m].
    electrolyte : Electrolyte
    surface : Surface
    pH : array_like
        Bulk pH [-].
    accuracy : float
        Target relative accuracy; the grid spacing follows it as in the pb
        kernel (error ~ dxi^4 after Richardson extrapolation).

    Returns
    -------
    dict
        ``zeta`` [V], ``charge_density`` [C/m²], ``surface_potential`` [V],
        ``charged_fraction`` [-], ``error`` (relative difference of the two
        grids over 3: it bounds the error of the fine grid, and the
        extrapolated values are better still), each of the broadcast shape;
        ``phi`` and ``x`` (fine-grid scaled potential and wall distance over
        R, flat batch) for checks.
    """
    p = _flat_problem(half_size, electrolyte, surface, pH)
    z, w, K, c_s, sites, B = p["z"], p["w"], p["K"], p["c_s"], p["sites"], p["B"]
    phi_w, phi0, _ = isolated_scaled(z, w, K, c_s, sites)
    # inner scale of the log grid: a quarter of the smaller of Debye and
    # Gouy-Chapman lengths of the isolated wall (as the pb kernel)
    zc = np.max(np.abs(z))
    a = np.minimum(np.abs(zc * phi_w), 2.0 * PB_PHI_CLIP)
    x0 = 0.25 * np.minimum(1.0 / (K * (1.0 + np.sinh(0.5 * a))), 1.0)
    dxi = float(np.clip(DXI * (accuracy / 1e-6)**0.25, 0.03, 0.3))
    need = np.maximum(MIN_CELLS, np.ceil(np.log1p(1.0 / x0) / dxi))
    level = np.round(MIN_CELLS * 2.0 ** (np.ceil(2.0 * np.log2(need / MIN_CELLS)) / 2.0))
    level = level.astype(int)
    res = {k: np.empty(B) for k in ("phi_w", "phi0", "sigma", "error")}
    phis, xs = [None] * B, [None] * B

    def rich(a_, b_):
        return (4.0 * b_ - a_) / 3.0

    for n in np.unique(level):
        idx = np.flatnonzero(level == n)
        sub_sites = _Sites(p["surf"]._take(idx), sites.pH[idx], sites.scale[idx])
        wi, Ki, ci = w[:, idx], K[idx], c_s[idx]
        coarse = make_grid(m, x0[idx], int(n))
        p0c, pc = solve_regulated_pb(coarse, Ki, z, wi, ci, sub_sites,
                                     start=(phi0[idx], _start(coarse, Ki, z, phi_w[idx])))
        fine = make_grid(m, x0[idx], 2 * int(n))
        p0f, pf = solve_regulated_pb(fine, Ki, z, wi, ci, sub_sites, start=(p0c, _refine(pc)))
        sc, sf = sub_sites(p0c)[0], sub_sites(p0f)[0]
        res["phi_w"][idx] = rich(pc[:, 0], pf[:, 0])
        res["phi0"][idx] = rich(p0c, p0f)
        res["sigma"][idx] = rich(sc, sf)
        err_z = np.abs(pf[:, 0] - pc[:, 0]) / 3.0 / np.maximum(np.abs(pf[:, 0]), 1e-300)
        err_s = np.abs(sf - sc) / 3.0 / np.maximum(np.abs(sf), 1e-300)
        res["error"][idx] = np.maximum(err_z, err_s)
        for j, i in enumerate(idx):
            phis[i], xs[i] = pf[j], fine.x[j]
    out = _results(p, res["phi_w"], res["phi0"], res["sigma"], res["error"])
    out["phi"], out["x"] = phis, xs
    return out
