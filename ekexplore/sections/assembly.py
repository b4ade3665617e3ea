"""A triangle mesh and its P1 (linear) operators: stiffness, lumped mass,
lumped wall lengths, and the sparse factorisation the solvers share."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

__all__ = ["Mesh", "factorize"]


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

    def nbytes(self):
        """Memory held by the mesh, its operators and what the solvers
        attached to it (factorisation, flow profile, point tree) [bytes]."""
        def sparse(a):
            return a.data.nbytes + a.indices.nbytes + a.indptr.nbytes
        total = sum(a.nbytes for a in (self.points, self.triangles, self.m, self.b,
                                       self.element_area, self.wall_edges, self.wall,
                                       self.interior))
        total += sparse(self.K) + sparse(self.K_II) + sparse(self.K_IB)
        if self._lu is not None:   # L and U: values and row indices
            total += int(self._lu.nnz) * 12 + 8 * len(self.interior) * 2
        for name in ("_flow",):
            a = getattr(self, name, None)
            if a is not None:
                total += a.nbytes
        if getattr(self, "_tree", None) is not None:
            total += 3 * self.points.nbytes      # data, indices and nodes of the tree
        return int(total)

    @property
    def lu_dirichlet(self):
        """Cached sparse LU of the Dirichlet stiffness (flow and harmonic extension)."""
        if self._lu is None:
            self._lu = factorize(self.K_II)
        return self._lu
