"""Graded mapped meshes of a cross-section and their P1 (linear) operators.

Every section is a union of a few mapped blocks: a tensor grid on a
(possibly skewed) quadrilateral, a polar grid on a quarter disc or an
ellipse, or a fan from an interior point to one straight wall. Node
positions along each block direction equidistribute a monitor function that
is large within a few Debye lengths of a wall and within a flow length of a
corner, so the double layer and the corners are resolved. Blocks share
their interface nodes exactly and are merged into one triangle mesh.

All lengths here are scaled by the section's reference length ``L``.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.spatial import cKDTree

__all__ = ["graded", "monitor_mass", "Mesh", "merge_blocks", "tensor_block", "polar_block", "fan_block"]

#: Fraction of the nodes drawn to each wall per length scale.
_PULL = 0.35


def _cumulative(x, scales, logs, walls, log_weight):
    """Integral from 0 to x of the monitor function (see :func:`graded`)."""
    a = _PULL
    left, right = walls
    out = np.array(x, dtype=float)
    for e in scales:
        if left:
            out = out + a * (-np.expm1(-x / e))
        if right:
            out = out + a * (np.exp(-(1.0 - x) / e) - np.exp(-1.0 / e))
    for entry in logs:
        d0, d1 = entry[0], entry[1]
        lw = entry[2] if len(entry) > 2 else log_weight

        def part(y):
            return np.log1p(y / d0) - np.log1p(y / d1)
        if left:
            out = out + lw * part(x)
        if right:
            out = out + lw * (part(1.0) - part(1.0 - x))
    return out


def graded(n, scales=(), walls=(True, True), logs=(), log_weight=0.0):
    """n+1 nodes on [0, 1] that equidistribute the monitor function

    w(x) = 1 + sum_k a/e_k exp(-x/e_k) + b sum_l [1/(x + d0_l) - 1/(x + d1_l)]

    (and its mirror image at the end wall). The exponential terms put about
    a/(1 + 2 a K) of the nodes within a few e_k of each wall; the log terms
    space nodes evenly in log(distance) between d0 and d1 (the
    Gouy-Chapman layer of a strongly charged wall; an entry (d0, d1, b) sets
    its own weight b). Scales of 0.5 or more add
    nothing. The mapping is smooth, so halving the spacing (doubling n)
    refines it uniformly in the computational coordinate.
    """
    scales = [e for e in np.atleast_1d(scales) if 0.0 < e < 0.5]
    logs = [e for e in logs if 0.0 < e[0] < e[1]]
    total = _cumulative(np.array(1.0), scales, logs, walls, log_weight)
    target = np.linspace(0.0, 1.0, n + 1) * total
    lo = np.zeros(n + 1)
    hi = np.ones(n + 1)
    for _ in range(64):  # bisection: the cumulative monitor is increasing
        mid = 0.5 * (lo + hi)
        below = _cumulative(mid, scales, logs, walls, log_weight) < target
        lo = np.where(below, mid, lo)
        hi = np.where(below, hi, mid)
    x = 0.5 * (lo + hi)
    x[0], x[-1] = 0.0, 1.0
    return x


def monitor_mass(scales=(), walls=(True, True), logs=(), log_weight=0.0):
    """Total mass of the monitor function: nodes scale with it at fixed density."""
    scales = [e for e in np.atleast_1d(scales) if 0.0 < e < 0.5]
    logs = [e for e in logs if 0.0 < e[0] < e[1]]
    return float(_cumulative(np.array(1.0), scales, logs, walls, log_weight))


def _quads_to_triangles(P, shape):
    """Split each cell of a (ni, nj) structured node array into two triangles
    along its shorter diagonal. P: (ni*nj, 2) node coordinates."""
    ni, nj = shape
    idx = np.arange(ni * nj).reshape(ni, nj)
    a = idx[:-1, :-1].ravel()
    b = idx[1:, :-1].ravel()
    c = idx[1:, 1:].ravel()
    d = idx[:-1, 1:].ravel()
    ac = np.sum((P[a] - P[c]) ** 2, axis=1)
    bd = np.sum((P[b] - P[d]) ** 2, axis=1)
    use_ac = ac <= bd
    t1 = np.where(use_ac[:, None], np.stack([a, b, c], 1), np.stack([a, b, d], 1))
    t2 = np.where(use_ac[:, None], np.stack([a, c, d], 1), np.stack([b, c, d], 1))
    return np.concatenate([t1, t2])


def tensor_block(xl, xr, y, s):
    """Block between a left and a right wall: at height y[j] the nodes run
    from xl[j] to xr[j] at fractions s. Returns (points, triangles)."""
    X = xl[None, :] + s[:, None] * (xr - xl)[None, :]
    Y = np.broadcast_to(y[None, :], X.shape)
    P = np.stack([X.ravel(), Y.ravel()], 1)
    return P, _quads_to_triangles(P, X.shape)


def polar_block(cx, cy, ax, ay, r, theta):
    """Polar block x = cx + ax r cos(theta), y = cy + ay r sin(theta)."""
    R, T = np.meshgrid(r, theta, indexing="ij")
    X = cx + ax * R * np.cos(T)
    Y = cy + ay * R * np.sin(T)
    P = np.stack([X.ravel(), Y.ravel()], 1)
    return P, _quads_to_triangles(P, X.shape)


def fan_block(c, v0, v1, t, s):
    """Fan from interior point c (t = 0) to the straight wall v0-v1 (t = 1)."""
    B = (1.0 - s)[:, None] * v0[None, :] + s[:, None] * v1[None, :]   # (ns, 2)
    P = c[None, None, :] + t[:, None, None] * (B[None, :, :] - c[None, None, :])
    return P.reshape(-1, 2), _quads_to_triangles(P.reshape(-1, 2), (len(t), len(s)))


def merge_blocks(blocks, tol):
    """Merge (points, triangles) blocks, fusing nodes closer than tol and
    dropping collapsed triangles."""
    pts, tris, off = [], [], 0
    for P, T in blocks:
        pts.append(P)
        tris.append(T + off)
        off += len(P)
    P = np.concatenate(pts)
    T = np.concatenate(tris)
    tree = cKDTree(P)
    pairs = tree.query_pairs(tol, output_type="ndarray")
    # union-find by repeatedly pointing to the smallest index
    rep = np.arange(len(P))
    if len(pairs):
        for _ in range(8):
            lo = np.minimum(rep[pairs[:, 0]], rep[pairs[:, 1]])
            np.minimum.at(rep, pairs[:, 0], lo)
            np.minimum.at(rep, pairs[:, 1], lo)
            rep = rep[rep]
    keep, inv = np.unique(rep, return_inverse=True)
    P = P[keep]
    T = inv[T]
    ok = (T[:, 0] != T[:, 1]) & (T[:, 1] != T[:, 2]) & (T[:, 0] != T[:, 2])
    T = T[ok]
    # orient counter-clockwise, drop zero-area triangles
    d1 = P[T[:, 1]] - P[T[:, 0]]
    d2 = P[T[:, 2]] - P[T[:, 0]]
    cross = d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]
    T = np.where((cross < 0)[:, None], T[:, [0, 2, 1]], T)
    T = T[np.abs(cross) > 1e-14 * np.max(np.abs(cross))]
    used = np.unique(T)
    if len(used) != len(P):
        remap = -np.ones(len(P), dtype=int)
        remap[used] = np.arange(len(used))
        P = P[used]
        T = remap[T]
    return P, T


def factorize(A):
    """Sparse LU of a symmetric positive definite matrix: minimum-degree
    ordering on A + A^T and diagonal pivots (no row exchanges are needed for
    SPD matrices, and exchanges would spoil the ordering)."""
    from scipy.sparse.linalg import splu
    return splu(A.tocsc(), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                options={"SymmetricMode": True})


@dataclass
class Mesh:
    """A triangle mesh with its P1 stiffness, lumped mass and wall data.

    ``K`` is the stiffness matrix, ``m`` the lumped nodal areas (their sum is
    the polygonal mesh area), ``b`` the lumped wall lengths per node,
    ``wall`` a boolean mask of wall nodes.
    """

    points: np.ndarray
    triangles: np.ndarray

    def __post_init__(self):
        P, T = self.points, self.triangles
        n = len(P)
        p0, p1, p2 = P[T[:, 0]], P[T[:, 1]], P[T[:, 2]]
        e0, e1, e2 = p2 - p1, p0 - p2, p1 - p0          # edge opposite each vertex
        area = 0.5 * (e2[:, 0] * (-e1[:, 1]) - e2[:, 1] * (-e1[:, 0]))
        if np.any(area <= 0):
            raise RuntimeError("internal error: inverted mesh element")
        E = np.stack([e0, e1, e2], 1)                      # (nt, 3, 2)
        Kloc = np.einsum("tik,tjk->tij", E, E) / (4.0 * area[:, None, None])
        rows = np.repeat(T, 3, axis=1).ravel()
        cols = np.tile(T, (1, 3)).ravel()
        self.K = sp.csr_matrix((Kloc.ravel(), (rows, cols)), shape=(n, n))
        self.m = np.bincount(T.ravel(), weights=np.repeat(area / 3.0, 3), minlength=n)
        self.area = float(area.sum())
        self.element_area = area
        # wall edges: edges of exactly one triangle
        edges = np.concatenate([T[:, [0, 1]], T[:, [1, 2]], T[:, [2, 0]]])
        key = np.sort(edges, axis=1).astype(np.int64)
        code = key[:, 0] * n + key[:, 1]
        uniq, counts = np.unique(code, return_counts=True)
        single = uniq[counts == 1]
        bnd = np.stack([single // n, single % n], 1)
        length = np.linalg.norm(P[bnd[:, 0]] - P[bnd[:, 1]], axis=1)
        self.wall_edges = bnd
        self.perimeter = float(length.sum())
        self.b = np.bincount(bnd.ravel(), weights=np.repeat(length / 2.0, 2), minlength=n)
        self.wall = np.zeros(n, dtype=bool)
        self.wall[bnd.ravel()] = True
        self.interior = np.flatnonzero(~self.wall)
        self.K_II = self.K[self.interior][:, self.interior].tocsc()
        self.K_IB = self.K[self.interior][:, np.flatnonzero(self.wall)].tocsc()
        self._lu = None

    @property
    def n_nodes(self):
        return len(self.points)

    @property
    def lu_dirichlet(self):
        """Cached sparse LU of the Dirichlet stiffness (flow and harmonic extension)."""
        if self._lu is None:
            self._lu = factorize(self.K_II)
        return self._lu
