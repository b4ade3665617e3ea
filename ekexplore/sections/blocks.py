"""Mapped mesh blocks and their merging into one triangle mesh.

Every section is a union of a few mapped blocks: a tensor grid on a
(possibly skewed) quadrilateral, a polar grid on a quarter disc or an
ellipse, or a fan from an interior point to one straight wall, each with
graded node positions (:mod:`.grading`). Blocks share their interface nodes
exactly and are merged into one triangle mesh.
"""
from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree

__all__ = ["tensor_block", "polar_block", "fan_block", "merge_blocks"]


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
