"""The 2D problems on a section mesh, in scaled units.

Lengths are scaled by the reference length L, the potential by kT/e
(phi = e psi / kT). On a :class:`~ekexplore.sections._mesh.Mesh` with
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

from ._mesh import factorize

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
    """Scaled potential phi at the nodes.

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
        Start of the Newton iteration (pb), e.g. a coarser solution.

    Returns
    -------
    phi : ndarray
        Nodal scaled potential.
    info : dict
        Newton iterations and the final update norm.
    """
    K, m = mesh.K, mesh.m
    keep = w != 0
    w, z = w[keep], z[keep]
    if condition == "potential":
        idx = mesh.interior
        A = mesh.K_II
        phi = np.full(mesh.n_nodes, float(value))
        sb = np.zeros(mesh.n_nodes)
    else:
        idx = np.arange(mesh.n_nodes)
        A = K
        sb = value * mesh.b
    if guess is not None and model == "pb":
        phi = np.array(guess, dtype=float)
        if condition == "potential":
            phi[mesh.wall] = value
    elif condition == "potential":
        # Debye-Hueckel start (exact answer for the dh model)
        rhs = -kl2 * m[idx] * value
        lu = factorize((A + sp.diags(kl2 * m[idx])).tocsc())
        phi[idx] = value + lu.solve(rhs)
        if model == "dh":
            return phi, {"iterations": 1, "update": 0.0}
        # Gouy-Chapman shaped start: keeps the Newton path short at high |zeta|
        f = np.clip((phi - 0.0) / value, 0.0, 1.0) if value != 0 else np.zeros_like(phi)
        zm = np.max(np.abs(z))
        phi = 4.0 / zm * np.arctanh(np.tanh(zm * value / 4.0) * f)
    else:
        lu = factorize((K + sp.diags(kl2 * m)).tocsc())
        phi = lu.solve(sb)
        if model == "dh":
            return phi, {"iterations": 1, "update": 0.0}
    mI = m[idx]
    E0 = _energy(K, m, kl2, w, z, phi, sb)
    update = np.inf
    lu = None
    for it in range(1, _NEWTON_MAXIT + 1):
        g, dg = _g(phi[idx], w, z)
        res = (K @ phi)[idx] - kl2 * mI * g - sb[idx]
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
        step = 1.0
        trial = phi.copy()
        for _ in range(40):
            trial[idx] = phi[idx] + step * d
            E1 = _energy(K, m, kl2, w, z, trial, sb)
            if E1 <= E0 + 1e-4 * step * _dot(res, d) + 1e-13 * abs(E0) or step < 1e-10:
                break
            step *= 0.5
        phi, E0 = trial, E1
        update = step * np.max(np.abs(d))
        if update < _NEWTON_TOL * max(1.0, np.max(np.abs(phi))):
            break
    else:
        raise FloatingPointError(
            f"internal error: 2D Poisson-Boltzmann Newton did not converge "
            f"(last update {update:.3g}); please report the inputs")
    return phi, {"iterations": it, "update": update}
