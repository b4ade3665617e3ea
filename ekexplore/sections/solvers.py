"""The 2D problems on a section mesh, in scaled units.

Lengths are scaled by the reference length L, the potential by kT/e
(phi = e psi / kT). On a :class:`~ekexplore.sections.assembly.Mesh` with
stiffness K, lumped nodal areas m and lumped wall lengths b:

* flow:      K u = m            (u = 0 on the wall), so u_p = (G L^2/eta) u;
* potential: K phi = (kappa L)^2 m g(phi) + s b,  g = sum_i w_i exp(-z_i phi),
  with w_i = z_i c_i / sum_j z_j^2 c_j, phi = phi_wall on a constant-potential
  wall, and s = sigma L / (eps kT/e) on a constant-charge wall (then the
  wall nodes are unknowns too). The Debye-Hueckel model replaces g by -phi.

The nonlinear problem is the minimum of the convex energy
0.5 phi.K.phi + (kappa L)^2 sum_j m_j sum_i (w_i/z_i) exp(-z_i phi_j) - s b.phi,
so Newton's method with a backtracking line search on that energy
converges from any start.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from ..doublelayer import donnan_potential, gouy_chapman_potential
from ..wall import WALL_CONDITIONS
from .assembly import factorize

__all__ = ["flow_profile", "harmonic_extension", "solve_potential"]

_NEWTON_TOL = 1e-12
_NEWTON_MAXIT = 80


def flow_profile(mesh):
    """Scaled Poiseuille profile u (K u = m, u = 0 on the wall), cached on the mesh."""
    u = getattr(mesh, "_flow", None)
    if u is None:
        u = np.zeros(mesh.n_nodes)
        u[mesh.interior] = mesh.lu_dirichlet.solve(mesh.m[mesh.interior])
        mesh._flow = u
    return u


def harmonic_extension(mesh, phi):
    """Discrete harmonic function equal to ``phi`` on the wall nodes."""
    h = np.array(phi, dtype=float)
    wall = mesh.wall
    h[mesh.interior] = mesh.lu_dirichlet.solve(-(mesh.K_IB @ phi[wall]))
    return h


def _dot(a, b):
    """Inner product without BLAS (avoids thread start-up cost on short vectors)."""
    return float(np.einsum("i,i->", a, b))


def _g(phi, w, z):
    """g = sum_i w_i exp(-z_i phi) and its derivative -dg/dphi = sum w_i z_i exp(-z_i phi)."""
    g = np.zeros_like(phi)
    dg = np.zeros_like(phi)
    for wi, zi in zip(w, z):
        e = np.exp(-zi * phi)
        g += wi * e
        dg += wi * zi * e
    return g, dg


def _energy(K, m, kl2, w, z, phi, sb):
    pot = np.zeros_like(phi)
    for wi, zi in zip(w, z):
        pot += (wi / zi) * np.exp(-zi * phi)
    return 0.5 * _dot(phi, K @ phi) + kl2 * _dot(m, pot) - _dot(sb, phi)


def _pcg(A, b, precond, rtol=1e-13, maxiter=30):
    """Preconditioned conjugate gradients for SPD A; returns (x, converged)."""
    x = precond(b)
    r = b - A @ x
    z = precond(r)
    p = z.copy()
    rz = _dot(r, z)
    bnorm = np.sqrt(_dot(b, b))
    for _ in range(maxiter):
        if np.sqrt(_dot(r, r)) <= rtol * bnorm:
            return x, True
        Ap = A @ p
        alpha = rz / _dot(p, Ap)
        x += alpha * p
        r -= alpha * Ap
        z = precond(r)
        rz_new = _dot(r, z)
        p = z + (rz_new / rz) * p
        rz = rz_new
    return x, np.sqrt(_dot(r, r)) <= rtol * bnorm


def solve_potential(mesh, kl2, w, z, condition, value, model, guess=None):
    """Scaled potential at the nodes, as a uniform offset plus a deviation.

    Parameters
    ----------
    mesh : Mesh
    kl2 : float
        (kappa L)^2.
    w, z : ndarray
        Charge weights z_i c_i / sum z_j^2 c_j and valences, shape (n,).
    condition : "potential" or "charge"
    value : float
        Scaled wall potential e zeta / kT, or scaled charge s = sigma L e/(eps k T).
    model : "dh" or "pb"
    guess : ndarray, optional
        Start of the Newton iteration (pb) as a full potential, e.g. a coarser solution.

    Returns
    -------
    offset : float
        The wall potential (constant-potential wall) or the uniform potential
        that neutralises the wall charge (constant-charge wall: the Donnan
        potential, DH or PB). The coefficients depend on the deviation only,
        which is solved for directly, so no precision is lost when the offset
        is many times larger than the potential's variation (overlapped layers).
    dev : ndarray
        phi - offset at the nodes (zero on a constant-potential wall).
    info : dict
        Newton iterations and the final update norm.
    """
    if WALL_CONDITIONS[condition].nonlinear:
        return _solve_nonlinear_wall(mesh, kl2, w, z, WALL_CONDITIONS[condition], value, model,
                                     guess)
    keep = w != 0
    w, z = w[keep], z[keep]
    offset, idx, A, sb = _fixed_wall_system(mesh, kl2, w, z, condition, value, model)
    if model == "dh":
        # linear: (K + kl2 M) dev = -kl2 m offset + s b, zero on a potential wall
        dev = np.zeros(mesh.n_nodes)
        rhs = -kl2 * mesh.m[idx] * offset + sb[idx]
        dev[idx] = factorize((A + sp.diags(kl2 * mesh.m[idx])).tocsc()).solve(rhs)
        return offset, dev, {"iterations": 1, "update": 0.0}
    we = w * np.exp(-z * offset)          # g(offset + dev) = sum_i we_i exp(-z_i dev)
    dev = _pb_start(mesh, kl2, we, z, condition, offset, idx, A, sb, guess)
    dev, it, update = _pb_newton(mesh, kl2, we, z, idx, A, sb, dev)
    return offset, dev, {"iterations": it, "update": update}


def _fixed_wall_system(mesh, kl2, w, z, condition, value, model):
    """(offset, unknown nodes, their stiffness matrix, wall charge vector s b)
    of a constant-potential or constant-charge wall."""
    n = mesh.n_nodes
    if condition == "potential":
        return float(value), mesh.interior, mesh.K_II, np.zeros(n)
    sb = value * mesh.b
    total = value * mesh.b.sum() / (kl2 * mesh.m.sum())
    # w here are the charge weights z_i c_i / sum z_j^2 c_j: those of
    # donnan_potential are c_i / sum z_j^2 c_j
    offset = total if model == "dh" else float(
        donnan_potential(z, (w / z)[:, None], np.array([-total]))[0])
    return offset, np.arange(n), mesh.K, sb


def _pb_start(mesh, kl2, we, z, condition, offset, idx, A, sb, guess):
    """Start of the pb Newton iteration for the deviation from ``offset``."""
    if guess is not None:
        dev = np.array(guess, dtype=float) - offset
        if condition == "potential":
            dev[mesh.wall] = 0.0
        return dev
    # linearised about the offset: (K + kl2 g1 M) dev = kl2 m g0 + s b
    dev = np.zeros(mesh.n_nodes)
    zm = np.max(np.abs(z))
    g0, g1 = float(np.sum(we)), float(np.sum(we * z))
    rhs = kl2 * mesh.m[idx] * g0 + sb[idx]
    dev[idx] = factorize((A + sp.diags(kl2 * g1 * mesh.m[idx])).tocsc()).solve(rhs)
    if condition == "potential" and offset != 0.0:
        # Gouy-Chapman shaped start: keeps the Newton path short at high |zeta|
        f = np.clip(1.0 + dev / offset, 0.0, 1.0)
        return gouy_chapman_potential(zm, offset, f) - offset
    return np.clip(dev, -30.0 / zm, 30.0 / zm)


def _pb_newton(mesh, kl2, we, z, idx, A, sb, dev):
    """Newton on the convex pb energy for the deviation on the nodes ``idx``;
    returns (deviation, iterations, last update)."""
    K, m = mesh.K, mesh.m
    mI = m[idx]

    def energy(trial):
        return _energy(K, m, kl2, we, z, trial, sb)
    E0 = energy(dev)
    update = np.inf
    lu = None
    for it in range(1, _NEWTON_MAXIT + 1):
        g, dg = _g(dev[idx], we, z)
        res = (K @ dev)[idx] - kl2 * mI * g - sb[idx]
        J = (A + sp.diags(kl2 * mI * dg)).tocsc()
        d = None
        if lu is not None:
            # inexact Newton: conjugate gradients preconditioned by the last factorisation
            d, ok = _pcg(J, -res, lu.solve)
            if not ok:
                d = None
        if d is None:
            lu = factorize(J)
            d = -lu.solve(res)
        dev, E0, step = _line_search(energy, dev, d, idx, E0, _dot(res, d))
        previous, update = update, step * np.max(np.abs(d))
        if _converged(update, previous, dev, 0.0):
            return dev, it, update
    raise FloatingPointError(
        f"internal error: 2D Poisson-Boltzmann Newton did not converge "
        f"(last update {update:.3g}); please report the inputs")


def _line_search(energy, dev, d, idx, E0, slope):
    """Backtracking (Armijo) on the convex energy along the Newton direction
    ``d`` of the nodes ``idx``: (new deviation, its energy, step length)."""
    step = 1.0
    trial = dev.copy()
    for _ in range(60):
        trial[idx] = dev[idx] + step * d
        with np.errstate(over="ignore", invalid="ignore"):
            E1 = energy(trial)
        if np.isfinite(E1) and (E1 <= E0 + 1e-4 * step * slope + 1e-13 * abs(E0)
                                or step < 1e-10):
            break
        step *= 0.5
    return trial, E1, step


def _converged(update, previous, dev, spread_floor):
    """Converged when the update is negligible against the potential's
    variation across the section (which sets the coefficients; at least
    ``spread_floor``), or at round-off: a small update that no longer shrinks
    (quadratic convergence has stalled at the conditioning limit of very thin
    layers)."""
    spread = float(np.ptp(dev))
    if update <= _NEWTON_TOL * max(spread, spread_floor) or \
            update <= 1e-15 * max(1.0, np.max(np.abs(dev))):
        return True
    return update <= 1e-9 * max(spread, 1.0) and update > 0.25 * previous


def _solve_nonlinear_wall(mesh, kl2, w, z, wall, value, model, guess=None):
    """:func:`solve_potential` for a wall whose charge s(phi) follows its
    potential (a charge-regulating wall): every node is unknown, and each wall
    node j carries the charge b_j s(phi_j) of its wall length.

    Newton on the convex energy
    0.5 phi.K.phi + (kappa L)^2 sum_j m_j P(phi_j) - sum_j b_j S(phi_j),
    with P = sum_i (w_i/z_i) exp(-z_i phi) (pb) or phi^2/2 (dh) and S the
    antiderivative of s (``wall.charge_energy``); the wall adds -b s'(phi)
    >= 0 to the Jacobian's diagonal, so it stays positive definite. The
    offset is the isolated regulated wall's potential, which only shifts the
    variable. ``value`` holds the wall's scaled rows (P, 1).
    """
    K, m = mesh.K, mesh.m
    keep = w != 0
    w, z = w[keep], z[keep]
    wall_nodes = mesh.wall
    bw = mesh.b[wall_nodes]
    K_scale = np.sqrt(kl2)
    offset = float(wall.isolated_potential(z, (w / z)[:, None], np.array([K_scale]), value)[0])
    we = w * np.exp(-z * offset)

    def bulk(dev):
        """(g, -dg/dphi, P) at offset + dev."""
        if model == "dh":
            phi = offset + dev
            return -phi, np.ones_like(dev), 0.5 * phi**2
        g, dg = _g(dev, we, z)
        pot = np.zeros_like(dev)
        for wi, zi in zip(we, z):
            pot += (wi / zi) * np.exp(-zi * dev)
        return g, dg, pot

    def wall_terms(dev):
        phi = offset + dev[wall_nodes]
        return (wall.charge(value, phi), wall.charge_slope(value, phi),
                wall.charge_energy(value, phi))

    def energy(dev):
        g, dg, pot = bulk(dev)
        return 0.5 * _dot(dev, K @ dev) + kl2 * _dot(m, pot) - _dot(bw, wall_terms(dev)[2])

    dev = np.zeros(mesh.n_nodes) if guess is None else np.array(guess, dtype=float) - offset
    E0 = energy(dev)
    update = np.inf
    for it in range(1, _NEWTON_MAXIT + 1):
        g, dg, _ = bulk(dev)
        s_w, ds_w, _ = wall_terms(dev)
        res = K @ dev - kl2 * m * g
        res[wall_nodes] -= bw * s_w
        diag = kl2 * m * dg
        diag[wall_nodes] -= bw * ds_w
        d = -factorize((K + sp.diags(diag)).tocsc()).solve(res)
        dev, E0, step = _line_search(energy, dev, d, slice(None), E0, _dot(res, d))
        previous, update = update, step * np.max(np.abs(d))
        if _converged(update, previous, dev, 1e-3):
            break
    else:
        raise FloatingPointError(
            f"internal error: 2D regulated-wall Newton did not converge "
            f"(last update {update:.3g}); please report the inputs")
    return offset, dev, {"iterations": it, "update": update}
