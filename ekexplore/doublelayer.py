r"""The equilibrium double layer across a slit or a tube.

Scaled variables: potential :math:`\phi = e\psi/kT`, radial or transverse
coordinate :math:`s = r/R \in [0, 1]` (R the half-gap or the radius),
:math:`K = \kappa R`. With ion weights :math:`w_i = c_i/\sum_j z_j^2 c_j`
the Poisson–Boltzmann equation reads

.. math:: \frac{1}{s^m}\frac{d}{ds}\left(s^m\frac{d\phi}{ds}\right)
          = -K^2 f(\phi), \qquad f(\phi) = \sum_i z_i w_i e^{-z_i\phi}

with m = 0 (slit) or 1 (tube), symmetry at s = 0 and either
:math:`\phi(1) = \phi_w` (constant potential) or
:math:`\phi'(1) = \tilde\sigma = \sigma R e/(\varepsilon kT)` (constant charge).
The charge density is :math:`\rho_e = \varepsilon\kappa^2 (kT/e) f(\phi)`.

Everything here works on flat batches: arrays of shape (B,) for B parameter
points, (B, n) along the grid, and (n_ions, B) for per-ion data.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.linalg import lapack

from .wall import WALL_CONDITIONS, isolated_wall_potential

__all__ = ["Grid", "make_grid", "solve_pb", "ConvergenceError", "donnan_potential",
           "gouy_chapman_potential", "gouy_chapman_length", "wall_potential_estimate",
           "PB_PHI_MAX", "PB_PHI_CLIP"]

#: Largest scaled wall potential |z e zeta / kT| the nonlinear solver accepts.
#: Newton stalls on round-off above about 31 (an update of 1e-4 that no longer
#: shrinks, seen for 2:1 and 1:2 salts with the divalent ion as counter-ion,
#: e.g. Na2SO4 at +0.21 V), so the accepted range stops at 30; validated to 20.
PB_PHI_MAX = 30.0
#: Internal clip of scaled potentials in the solver's starts and line searches
#: (kept at its earlier value, so results inside the accepted range are unchanged).
PB_PHI_CLIP = 40.0
#: Newton stopping tolerance for walls that are not Dirichlet (see :func:`solve_pb`).
CHARGE_NEWTON_TOL = 1e-10


class ConvergenceError(RuntimeError):
    """The nonlinear double-layer solver did not converge for some points."""


@dataclass(frozen=True)
class Grid:
    """A wall-resolving grid for a batch: nodes ordered from the wall (j = 0)
    to the centre (j = n-1). ``x`` is the distance from the wall over R."""

    m: int
    x: np.ndarray       # (B, n) wall distance / R
    s: np.ndarray       # (B, n) = 1 - x
    dx: np.ndarray      # (B, n-1) node spacing (face lengths)
    area: np.ndarray    # (B, n-1) normalised face areas (m+1) s_f^m
    volume: np.ndarray  # (B, n) normalised control volumes, sum = 1

    @property
    def poiseuille(self):
        """Discrete Poiseuille profile u / (G R^2 / eta) = (1 - s^2) / (2 (m+1))."""
        return self.x * (2.0 - self.x) / (2.0 * (self.m + 1))


def make_grid(m, x0, n_cells):
    """Build the log-mapped grid x = x0 (exp(xi) - 1), xi uniform in [0, ln(1 + 1/x0)].

    Parameters
    ----------
    m : int
        0 slit, 1 tube.
    x0 : ndarray (B,)
        Inner length scale over R; the first cell is about x0 * dxi.
    n_cells : int
        Number of cells between wall and centre.
    """
    x0 = np.asarray(x0, dtype=float)[:, None]
    xi_tot = np.log1p(1.0 / x0)
    xi = np.linspace(0.0, 1.0, n_cells + 1)[None, :] * xi_tot
    x = x0 * np.expm1(xi)
    x[:, -1] = 1.0
    dx = np.diff(x, axis=1)
    s = 1.0 - x
    xf = 0.5 * (x[:, 1:] + x[:, :-1])       # face positions (wall distance)
    sf = 1.0 - xf
    area = (m + 1) * sf**m
    # control-volume bounds: wall, faces, centre; volume = s_a^(m+1) - s_b^(m+1)
    xb = np.concatenate([np.zeros_like(x0), xf, np.ones_like(x0)], axis=1)
    width = np.diff(xb, axis=1)
    if m == 0:
        volume = width
    else:
        sa, sb = 1.0 - xb[:, :-1], 1.0 - xb[:, 1:]
        volume = width * (sa + sb)
    return Grid(m=m, x=x, s=s, dx=dx, area=area, volume=volume)


def _f(z, w, phi):
    """f and f' (B, n) for valences z (k,), weights w (k, B), phi (B, n).

    sum z w = 0 (neutral bulk), so f = sum z w expm1(-z phi) is exact at tiny
    potentials. One expm1 per distinct |z|: expm1(+x) = -expm1(-x)/(1 + expm1(-x))
    serves the ion of opposite sign. In place: no (k, B, n) temporaries.
    """
    f = np.zeros_like(phi)
    fp = np.zeros_like(phi)
    tmp = np.empty_like(phi)
    for a in np.unique(np.abs(z)):
        em = np.multiply(phi, -a)
        np.expm1(em, out=em)                       # expm1(-a phi): ions with z = +a
        ep = None
        if np.any(z == -a):
            ep = np.add(em, 1.0)
            np.divide(em, ep, out=ep)
            np.negative(ep, out=ep)                # expm1(+a phi): ions with z = -a
        for zi, wi in zip(z, w):
            if abs(zi) != a:
                continue
            e = em if zi > 0 else ep
            c1 = (zi * wi)[:, None]
            np.multiply(e, c1, out=tmp)
            f += tmp
            np.add(e, 1.0, out=tmp)
            tmp *= zi * c1
            fp -= tmp
    return f, fp


def _g(z, w, phi):
    """Antiderivative of -f: g = sum w exp(-z phi)."""
    return np.sum(w[:, :, None] * np.exp(-z[:, None, None] * phi[None]), axis=0)


def _laplacian(grid_c, phi):
    """(L phi)_j = sum over faces A_f (phi_nb - phi_j) / dx_f, shape (B, n)."""
    flux = grid_c * np.diff(phi, axis=1)                  # A/dx * (phi_{j+1} - phi_j)
    out = np.zeros_like(phi)
    out[:, :-1] += flux
    out[:, 1:] -= flux
    return out


def gouy_chapman_potential(z_counter, phi_w, decay):
    """Scaled potential of an isolated flat double layer (Gouy–Chapman, z:z form).

    phi = (4/z) artanh(tanh(z phi_w / 4) decay), with ``decay`` = exp(-kappa x)
    at wall distance x (or any factor from 1 at the wall to 0 far away);
    ``z_counter`` the valence that sets the nonlinearity (the largest |z|).

    References: Gouy, G. (1910). J. Phys. Theor. Appl. 9, 457,
    doi:10.1051/jphystap:019100090045700; Chapman, D. L. (1913). Phil. Mag. 25, 475,
    doi:10.1080/14786440408634187.
    """
    t = np.tanh(z_counter * phi_w / 4.0) * decay
    return 4.0 / z_counter * np.arctanh(np.clip(t, -1 + 1e-16, 1 - 1e-16))


def gouy_chapman_length(debye, z, phi_w):
    """Inner length of a charged layer, debye / (1 + sinh(|z_max phi_w| / 2)).

    The Debye length for weak potentials, the Gouy–Chapman length (the
    distance over which the counter-ions screen the wall, 2 debye exp(-|z phi_w|/2)
    at high potential) for strong ones; |z phi_w| is capped at 2 PB_PHI_CLIP.
    """
    zmax = np.max(np.abs(z))
    a = np.minimum(np.abs(zmax * phi_w), 2.0 * PB_PHI_CLIP)
    return debye / (1.0 + np.sinh(0.5 * a))


def wall_potential_estimate(z, w, K, sigma_s, geometry_factor):
    """Scaled wall potential of a constant-charge wall, estimated without a solve.

    The larger of the isolated-wall (Grahame) potential and the uniform
    (Donnan) potential that neutralises the wall charge over the section,
    K^2 f(phi_D) = -geometry_factor sigma_s, with geometry_factor =
    perimeter x L / area (1 slit, 2 tube). ``z`` (k,), ``w`` (k, B).
    """
    iso = isolated_wall_potential(z, w, K, sigma_s)
    don = donnan_potential(z, w, -geometry_factor * sigma_s / K**2)
    return np.where(np.abs(don) > np.abs(iso), don, iso)


def donnan_potential(z, w, target):
    """Solve f(phi) = target for phi by bisection (f is decreasing). Shapes (B,).

    f = sum_i z_i w_i (exp(-z_i phi) - 1) is the scaled charge density of a
    uniform potential phi: the Donnan potential of a section whose space
    charge balances a given wall charge.
    """
    zabs = np.max(np.abs(z))
    lo = np.full(np.shape(target), -PB_PHI_CLIP * 2 / zabs)
    hi = -lo
    for _ in range(100):
        mid = 0.5 * (lo + hi)
        fm = np.sum((z[:, None] * w) * np.expm1(-z[:, None] * mid[None]), axis=0)
        above = fm > target
        lo = np.where(above, mid, lo)
        hi = np.where(above, hi, mid)
    return np.where(target == 0, 0.0, 0.5 * (lo + hi))


def _initial_guess(grid, K, z, w, wall, value):
    """A Gouy-Chapman-like start, shifted to the Donnan level for overlap."""
    zc = np.max(np.abs(z))
    if wall.nonlinear and not wall.dirichlet:
        # a charge that follows the wall potential: start from its isolated wall
        phi_w = wall.isolated_potential(z, w, K, value)
        phi = gouy_chapman_potential(zc, phi_w[:, None], np.exp(-(K[:, None]) * grid.x))
        return phi
    if wall.dirichlet:
        phi_w = value
    else:
        # a rough start only (the z:z form of the inverse Grahame relation,
        # cheaper than the exact one of ekexplore.wall for a start)
        phi_w = 2.0 / zc * np.arcsinh(value * zc / (2.0 * K))
    phi = gouy_chapman_potential(zc, phi_w[:, None], np.exp(-(K[:, None]) * grid.x))
    if not wall.dirichlet:
        # overall charge balance with a uniform potential: K^2 f(phi_D) = -(m+1) sigma
        phi_d = donnan_potential(z, w, -(grid.m + 1) * value / K**2)
        phi = np.where(np.abs(phi_d)[:, None] > np.abs(phi), phi_d[:, None], phi)
    else:
        phi[:, 0] = value
    return phi



class _PBSystem:
    """The discrete Poisson–Boltzmann system of a batch: residual, Jacobian,
    free energy and the damped Newton step of :func:`solve_pb`.

    Conservative finite volumes: residual F = L phi + K^2 V f(phi) + b, with
    the wall's charge (and its slope) added at the wall node when the charge
    follows the wall potential, or phi_w held fixed (Dirichlet).
    """

    def __init__(self, grid, K, z, w, wall, value):
        B, n = grid.x.shape
        self.m1 = grid.m + 1
        self.z, self.w, self.wall, self.value = z, w, wall, value
        self.c = grid.area / grid.dx                             # (B, n-1)
        self.K2V = (K**2)[:, None] * grid.volume                 # (B, n)
        self.dirichlet = wall.dirichlet
        self.nonlinear = wall.nonlinear and not self.dirichlet
        self.bvec = np.zeros((B, n))
        if not self.dirichlet and not self.nonlinear:
            self.bvec[:, 0] = self.m1 * value
        self.lim = 2.0 * PB_PHI_CLIP / np.min(np.abs(z))
        # parts of the Jacobian that do not change between Newton steps
        self.dbase = np.zeros((B, n))
        self.dbase[:, :-1] += self.c
        self.dbase[:, 1:] += self.c
        self.ebase = np.concatenate([-self.c, np.zeros((B, 1))], axis=1)  # last column: block gap
        if self.dirichlet:
            self.dbase[:, 0] = 1.0
            self.ebase[:, 0] = 0.0
        self._eflat = {B: self.ebase.ravel()[:-1]}   # active points only shrink: keyed by count

    def energy(self, ph, idx):
        """Discrete free energy of the points ``idx`` (convex in phi)."""
        dphi = np.diff(ph, axis=1)
        e = 0.5 * np.sum(self.c[idx] * dphi**2, axis=1) + np.sum(
            self.K2V[idx] * _g(self.z, self.w[:, idx], ph), axis=1)
        if self.nonlinear:   # - (m+1) int_0^phi_w s dphi
            return e - self.m1 * self.wall.charge_energy(self.value[..., idx], ph[:, 0])
        return e - np.sum(self.bvec[idx] * ph, axis=1)

    def newton_update(self, ph, active):
        """Newton update -J^-1 F of the ``active`` points at ``ph`` (one stacked
        tridiagonal solve, LAPACK dptsv)."""
        if active.size == self.c.shape[0]:
            ca, K2Va, wa, ba, da = self.c, self.K2V, self.w, self.bvec, self.dbase
        else:
            ca, K2Va, wa, ba, da = (self.c[active], self.K2V[active], self.w[:, active],
                                    self.bvec[active], self.dbase[active])
        f, fp = _f(self.z, wa, ph)
        # residual F = L phi + K^2 V f + b, and the diagonal of -J
        F = _laplacian(ca, ph)
        f *= K2Va
        F += f
        F += ba
        fp *= K2Va
        d = da - fp
        if self.nonlinear:   # the wall charge at the current wall potential, and its slope
            va = self.value[..., active]
            F[:, 0] += self.m1 * self.wall.charge(va, ph[:, 0])
            d[:, 0] -= self.m1 * self.wall.charge_slope(va, ph[:, 0])
        if self.dirichlet:
            d[:, 0] = 1.0
            F[:, 0] = 0.0
        eflat = self._eflat.get(active.size)
        if eflat is None:
            eflat = self._eflat[active.size] = self.ebase[active].ravel()[:-1]
        _, _, delta, info = lapack.dptsv(d.ravel(), eflat, F.reshape(-1, 1),
                                         overwrite_d=1, overwrite_b=1)
        if info != 0:
            raise ConvergenceError(f"tridiagonal solve failed (LAPACK info {info})")
        return delta.reshape(ph.shape)

    def damped_step(self, ph, delta, big, scale, active):
        """The update capped at 4 (scaled units) and, far from the solution
        (where a full Newton step may overshoot), halved until the convex
        energy does not rise; returns (new potentials, step fraction t)."""
        t = np.ones(len(active))
        if np.all(scale == 1.0):
            trial = ph + delta
            step = delta
        else:
            step = delta * scale[:, None]
            trial = ph + step
        far = np.flatnonzero(big * scale > 0.25)
        if far.size:
            sub = active[far]
            e0 = self.energy(ph[far], sub)
            tf = np.ones(far.size)
            for _ in range(30):
                e1 = self.energy(trial[far], sub)
                bad = e1 > e0 + 1e-12 * np.abs(e0) + 1e-300
                if not np.any(bad):
                    break
                tf = np.where(bad, 0.5 * tf, tf)
                trial[far] = ph[far] + tf[:, None] * step[far]
            t[far] = tf
            np.clip(trial, -self.lim, self.lim, out=trial)
        return trial, t


def solve_pb(grid, K, z, w, wall, value, phi0=None, tol=1e-6, max_iter=200):
    """Batched Newton solve of the scaled Poisson–Boltzmann equation.

    Parameters
    ----------
    grid : Grid
        From :func:`make_grid`, batch size B.
    K : ndarray (B,)
        kappa R.
    z : ndarray (k,)
        Valences.
    w : ndarray (k, B)
        Weights c_i / sum z_j^2 c_j.
    wall : ekexplore.wall.WallCondition
        The wall condition: Dirichlet, or a scaled charge s(phi_w) whose value
        and slope enter the residual and the Jacobian at every Newton step
        (a fixed charge when ``wall.nonlinear`` is false).
    value : ndarray (B,) or (P, B)
        Scaled wall potential, or the scaled value of the charge condition
        (sigma R e / (eps k T) for a fixed charge; rows of parameters for a
        charge-regulating wall, indexed on the last axis).
    phi0 : ndarray (B, n), optional
        Initial guess.

    Returns
    -------
    phi : ndarray (B, n)
        Scaled potential on the grid.

    Notes
    -----
    Newton's method on the convex discrete free energy, with a step cap of
    4 (scaled units) and backtracking on the energy, so it converges from any
    start. Each step solves one symmetric positive-definite tridiagonal
    system for the whole batch at once with LAPACK ``dptsv`` (the blocks are
    stacked with zero coupling). Stops when the Newton update is below
    ``tol`` relative to the largest potential in every point, after a full
    (undamped) Newton step; Newton converges quadratically there. At strongly
    charged constant-charge walls (e.g. CaCl2, -1 C/m², kappa a 1e3-1e4) the
    quadratic-convergence constant is large, and a stop at 1e-6 left errors
    that showed as reciprocity residuals of 1e-6: the kernels ask
    :data:`CHARGE_NEWTON_TOL` there (residuals below 1e-13 for about one more
    Newton step). A point whose full updates stop halving below 1e-6 of its
    potential has reached round-off and stops too. Raises
    :class:`ConvergenceError` otherwise.
    """
    if isinstance(wall, str):
        wall = WALL_CONDITIONS[wall]
    pb = _PBSystem(grid, K, z, w, wall, value)
    phi = _initial_guess(grid, K, z, w, wall, value) if phi0 is None else phi0.copy()
    if pb.dirichlet:
        phi[:, 0] = value
    B = phi.shape[0]
    active = np.arange(B)
    last = np.full(B, np.inf)    # each point's previous full-step update
    for it in range(max_iter):
        ph = phi if active.size == B else phi[active]   # no copies while every point iterates
        delta = pb.newton_update(ph, active)
        big = np.max(np.abs(delta), axis=1)
        scale = np.minimum(1.0, 4.0 / np.maximum(big, 1e-300))
        trial, t = pb.damped_step(ph, delta, big, scale, active)
        if active.size == B:
            phi = trial
        else:
            phi[active] = trial
        # at least one full step: near zero potential the problem is linear and
        # one step is exact, whatever the (absolute) accuracy of the start
        full = (t == 1.0) & (scale == 1.0) & (it > 0)
        size = np.max(np.abs(trial), axis=1)
        done = (big <= tol * size + 1e-280) & full
        # or Newton has stalled on round-off below the solvers' 1e-6: a full
        # update that no longer halves (quadratic convergence would shrink it by
        # orders of magnitude). A regulated wall at its point of zero charge has
        # a net charge that is a near-cancellation of its sites' charges, whose
        # round-off (about 1e-10 of the potential) a tol of 1e-10 cannot beat.
        prev = last[active]
        done |= full & (big <= 1e-6 * size) & (big >= 0.5 * prev)
        last[active] = np.where(full, big, np.inf)
        if np.any(done):
            active = active[~done]
            if active.size == 0:
                return phi
    raise ConvergenceError(
        f"Poisson-Boltzmann solver did not converge in {max_iter} Newton steps for "
        f"{active.size} of {B} points (e.g. point {int(active[0])})")
