"""Fields over a 2D cross-section, with their coordinates, cuts and images."""
from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree

from .._constants import F
from .extrapolation import resolution
from .meshes import build_mesh
from .solutions import flow_solution, gouy_scale, scaled_solution
from ..doublelayer import gouy_chapman_potential
from ..wall import isolated_wall_potential
from ..profiles import UNITS as PROFILE_UNITS, Profiles

__all__ = ["SectionMesh", "SectionProfiles", "UNITS", "section_profiles_factory"]

#: Unit of every field (the one table of :mod:`ekexplore.profiles`).
UNITS = PROFILE_UNITS

#: A section's profiles are :class:`ekexplore.Profiles`, the same class as a
#: slit's or tube's; the older name stays for code that imports it.
SectionProfiles = Profiles

#: (mesh, query points) digest -> (triangle index, barycentric weights); small FIFO.
_LOCATE_CACHE: dict = {}


class SectionMesh:
    """The triangle mesh behind a section's :class:`~ekexplore.Profiles`: it
    locates points in triangles and interpolates the fields linearly inside.

    Attributes
    ----------
    x, y : ndarray (N,)
        Node coordinates [m]: x across the width, y up from the floor.
    triangles : ndarray (nt, 3)
        Node indices of the mesh triangles.
    wall : ndarray of bool (N,)
        True at wall nodes.
    wall_edges : ndarray (ne, 2)
        Node indices of the wall edges.
    centre : ndarray (2,)
        The point the centre cuts go through [m].
    """

    def __init__(self, x, y, triangles, wall, wall_edges, centre):
        self.x, self.y, self.triangles, self.wall = x, y, triangles, wall
        self.wall_edges = wall_edges
        self.centre = np.asarray(centre, dtype=float)
        self._tree = None

    def wall_distance(self):
        """Distance of every node from the nearest wall edge [m]."""
        return _wall_distance(np.stack([self.x, self.y], 1), self.wall_edges)

    def _locate(self, q):
        """Triangle index and barycentric weights of points q (nq, 2); -1 outside.

        Remembered for the last few (mesh, query) pairs: a dashboard asks for the
        same image grid on the same cached mesh at every update.
        """
        import hashlib
        h = hashlib.blake2b(digest_size=16)
        for a in (self.x, self.y, self.triangles, q):
            h.update(np.ascontiguousarray(a).tobytes())
        key = h.hexdigest()
        hit = _LOCATE_CACHE.get(key)
        if hit is not None:
            return hit
        out = self._locate_uncached(q)
        _LOCATE_CACHE[key] = out
        while len(_LOCATE_CACHE) > 16:
            _LOCATE_CACHE.pop(next(iter(_LOCATE_CACHE)))
        return out

    def _locate_uncached(self, q):
        P = np.stack([self.x, self.y], 1)
        T = self.triangles
        if self._tree is None:
            self._tree = cKDTree(P[T].mean(axis=1))
        k = min(64, len(T))
        _, cand = self._tree.query(q, k=k)
        cand = np.atleast_2d(cand)
        a, b, c = P[T[cand, 0]], P[T[cand, 1]], P[T[cand, 2]]
        v0, v1 = b - a, c - a
        v2 = q[:, None, :] - a
        den = v0[..., 0] * v1[..., 1] - v0[..., 1] * v1[..., 0]
        l1 = (v2[..., 0] * v1[..., 1] - v2[..., 1] * v1[..., 0]) / den
        l2 = (v0[..., 0] * v2[..., 1] - v0[..., 1] * v2[..., 0]) / den
        l0 = 1.0 - l1 - l2
        tol = 1e-9
        inside = (l0 >= -tol) & (l1 >= -tol) & (l2 >= -tol)
        first = np.argmax(inside, axis=1)
        found = inside[np.arange(len(q)), first]
        tri = np.where(found, cand[np.arange(len(q)), first], -1)
        lam = np.stack([l0, l1, l2], -1)[np.arange(len(q)), first]
        return tri, lam

    def sample(self, prof, xq, yq):
        """Fields of ``prof`` interpolated at points (xq, yq) [m]; NaN outside."""
        xq, yq = np.broadcast_arrays(np.asarray(xq, float), np.asarray(yq, float))
        q = np.stack([xq.ravel(), yq.ravel()], 1)
        tri, lam = self._locate(q)
        ok = tri >= 0
        nodes = self.triangles[np.where(ok, tri, 0)]
        out = {"x": xq, "y": yq}
        for name, v in prof.nodal_fields().items():
            val = np.sum(v[nodes] * lam, axis=1)
            out[name] = np.where(ok, val, np.nan).reshape(xq.shape)
        return out

    def on_grid(self, prof, nx=101, ny=101):
        """Fields of ``prof`` on a regular nx x ny grid over the bounding box:
        ``x`` (nx,), ``y`` (ny,) [m] and each field (ny, nx), NaN outside."""
        gx = np.linspace(self.x.min(), self.x.max(), nx)
        gy = np.linspace(self.y.min(), self.y.max(), ny)
        X, Y = np.meshgrid(gx, gy)
        out = self.sample(prof, X, Y)
        out["x"], out["y"] = gx, gy
        return out

    def _wall_hits(self, origin, direction):
        """Parameters t >= 0 where origin + t direction meets a wall edge."""
        P = np.stack([self.x, self.y], 1)
        a, b = P[self.wall_edges[:, 0]], P[self.wall_edges[:, 1]]
        e = b - a
        den = direction[0] * e[:, 1] - direction[1] * e[:, 0]
        ok = np.abs(den) > 1e-300
        w = a - origin
        t = np.where(ok, (w[:, 0] * e[:, 1] - w[:, 1] * e[:, 0]) / np.where(ok, den, 1), np.nan)
        s = np.where(ok, (w[:, 0] * direction[1] - w[:, 1] * direction[0]) / np.where(ok, den, 1),
                     np.nan)
        hit = ok & (s >= -1e-12) & (s <= 1 + 1e-12)
        return t[hit]

    def cut(self, prof, start, end, n=201):
        """Fields of ``prof`` along start -> end [m], n points; adds ``distance`` [m]."""
        start, end = np.asarray(start, float), np.asarray(end, float)
        s = np.linspace(0.0, 1.0, n)
        pts = start[None] + s[:, None] * (end - start)[None]
        out = self.sample(prof, pts[:, 0], pts[:, 1])
        out["distance"] = s * np.linalg.norm(end - start)
        return out

    def span(self, prof, direction, n):
        """Cut of ``prof`` through the centre along ``direction``, wall to wall."""
        d = np.asarray(direction, float)
        t = self._wall_hits(self.centre, d)
        lo, hi = t[t <= 0].max(), t[t >= 0].min()
        return self.cut(prof, self.centre + lo * d, self.centre + hi * d, n)

    def wall_normal(self, prof, n=201):
        """Cut of ``prof`` from the wall point nearest the centre to the centre
        (``distance`` is then the distance from the wall)."""
        P = np.stack([self.x, self.y], 1)
        a, b = P[self.wall_edges[:, 0]], P[self.wall_edges[:, 1]]
        e = b - a
        t = np.clip(np.sum((self.centre - a) * e, 1) / np.sum(e * e, 1), 0.0, 1.0)
        foot = a + t[:, None] * e
        j = int(np.argmin(np.linalg.norm(foot - self.centre, axis=1)))
        # a geometric cut, graded toward the wall so the double layer shows
        return self._graded_cut(prof, foot[j], self.centre, n)

    def _graded_cut(self, prof, wall_point, centre, n):
        s = np.linspace(0.0, 1.0, n)
        length = np.linalg.norm(centre - wall_point)
        lam = min(float(prof.debye_length) / max(length, 1e-300), 1.0)
        # when the layer is thin, half the points within five Debye lengths of the wall
        g = s
        if lam < 0.2:
            inner = 5 * lam * (s[s < 0.5] / 0.5)
            outer = 5 * lam + (1 - 5 * lam) * (s[s >= 0.5] - 0.5) / 0.5
            g = np.concatenate([inner, outer])
        pts = wall_point[None] + g[:, None] * (centre - wall_point)[None]
        out = self.sample(prof, pts[:, 0], pts[:, 1])
        out["distance"] = g * length
        return out


def _wall_distance(P, wall_edges):
    """Distance of every node to the nearest wall edge (chunked brute force)."""
    a, b = P[wall_edges[:, 0]], P[wall_edges[:, 1]]
    e = b - a
    ee = np.sum(e * e, 1)
    out = np.empty(len(P))
    for i in range(0, len(P), 2000):
        q = P[i:i + 2000]
        t = np.clip(np.einsum("qek,ek->qe", q[:, None] - a[None], e) / ee, 0, 1)
        foot = a[None] + t[..., None] * e[None]
        out[i:i + 2000] = np.min(np.linalg.norm(q[:, None] - foot, axis=2), axis=1)
    return out


def section_profiles_factory(channel, cond, models, accuracy):
    """The ``profiles`` callable of a section kernel result: one
    :class:`~ekexplore.Profiles` per point (an object array for a batch)."""

    def make(pressure_gradient=1.0, field=1.0):
        b = cond.flat()
        geo = channel._geometry_arrays(cond.shape)
        mods = np.broadcast_to(np.asarray(models), cond.shape).reshape(-1)
        n = 4 * resolution(accuracy)       # twice the kernel's finest level: smooth images
        result = np.empty(b.B, dtype=object)
        for k in range(b.B):
            kind, dims, L = geo["spec"][k]
            bk = b.take(np.array([k])).with_length(np.array([L]))
            mesh, scaled = _scaled_fields(bk, str(mods[k]), kind, dims, n)
            result[k] = _point_profiles(bk, str(mods[k]), mesh, scaled, kind, dims,
                                        pressure_gradient, field, cond.ion_names)
        if cond.shape == ():
            return result[0]
        return result.reshape(cond.shape)

    return make


def _scaled_fields(bk, name, kind, dims, n):
    """Mesh and scaled fields of one point (``bk``, length scaled by L):
    potential phi, flow u, electro-osmotic velocity and the velocity that
    carries the layer's charge (over eps E kT/(e eta)), wall distance (thin)."""
    z = bk.z
    lam = 1.0 / bk.K[0]
    value = bk.scaled_value if bk.wall.rows else float(bk.scaled_value[0])
    if name != "thin":
        gouy = gouy_scale(lam, z, value) if (name == "pb" and bk.wall.dirichlet) else None
        mesh = build_mesh(kind, dims, n, lam, gouy)
        r = scaled_solution(mesh, bk.K[0] ** 2, bk.charge_weights[:, 0], z, bk.wall.name,
                            value, name)
        return mesh, {"phi": r["phi"], "u": r["u"], "ueo": r["d"], "layer": r["d"],
                      "dist": None}
    mesh = build_mesh(kind, dims, n, lam)
    if bk.wall.nonlinear:
        phi_w = float(bk.wall.isolated_potential(z, bk.weights, bk.K, bk.scaled_value)[0])
    else:
        phi_w = value if bk.wall.dirichlet else float(isolated_wall_potential(
            z, bk.weights, bk.K, bk.scaled_value)[0])
    dist = _wall_distance(mesh.points, mesh.wall_edges)
    phi = gouy_chapman_potential(np.max(np.abs(z)), phi_w, np.exp(-dist / lam))
    # the slip velocity everywhere; the charge of the layer moves with the
    # layer's own velocity (the slip is reached across it): what the
    # coefficient counts
    return mesh, {"phi": phi, "u": flow_solution(mesh)["u"], "ueo": np.full_like(phi, -phi_w),
                  "layer": phi - phi_w, "dist": dist}


def _point_profiles(bk, name, mesh, scaled, kind, dims, pressure_gradient, field, ion_names):
    """SI :class:`~ekexplore.Profiles` of one point from its scaled fields."""
    L = bk.length[0]
    eps, eta, VT, kappa = bk.eps[0], bk.eta[0], bk.VT[0], bk.kappa[0]
    c, z, phi = bk.c[:, 0], bk.z, scaled["phi"]
    zc = z[:, None]
    if name == "dh":
        conc = c[:, None] * (1.0 - zc * phi[None] + 0.5 * zc**2 * phi[None] ** 2)
        rho = -eps * kappa**2 * VT * phi
    else:
        conc = c[:, None] * np.exp(-zc * phi[None])
        rho = F * (z @ conc)
    up = pressure_gradient * L**2 / eta * scaled["u"]
    P = mesh.points * L
    centre = (mesh.m @ mesh.points) / mesh.area * L
    if kind == "polygon":
        centre = np.array(dims[:2]) * L
    grid = SectionMesh(P[:, 0], P[:, 1], mesh.triangles, mesh.wall, mesh.wall_edges, centre)
    dist = scaled["dist"]
    return Profiles(
        coordinates={"x": P[:, 0], "y": P[:, 1]}, potential=phi * VT, concentrations=conc,
        ion_names=ion_names, charge_density=rho, velocity_pressure=up,
        velocity_electroosmotic=field * eps * VT / eta * scaled["ueo"],
        current_migration=field * (bk.molar_conductivity[:, 0] @ conc),
        current_convective=rho * (up + field * eps * VT / eta * scaled["layer"]),
        debye_length=(1.0 / bk.K[0]) * L, model=name,
        pressure_gradient=pressure_gradient,
        field=field, mesh=grid, wall_distance=None if dist is None else dist * L)
