"""Mesh builders for each section, in units of the reference length L.

Each builder takes the scaled dimensions, the resolution ``n`` (cells
across the narrow direction) and the grading scales, and returns a
:class:`~ekexplore.sections.assembly.Mesh`. ``lam`` is the scaled Debye length
(None: flow only), ``gouy`` the scaled inner (Gouy-Chapman) length of a
strongly charged wall (None when the wall potential is small).
"""
from __future__ import annotations

import threading
from collections import OrderedDict, namedtuple

import numpy as np

from .assembly import Mesh
from .blocks import fan_block, merge_blocks, polar_block, tensor_block
from .grading import graded, monitor_mass

__all__ = ["build_mesh", "wall_scales"]

_MERGE_TOL = 1e-11
#: Log-layer node weight per end, see :func:`_nodes`.
_LOG_WEIGHT = 0.5
#: Node weight of the log spread along the angle of a polar block (see :func:`_nodes`).
_FAN_WEIGHT = 0.3


def wall_scales(length, lam, extra=()):
    """Grading scales, as fractions of ``length``, for a direction ending at
    walls: the flow scales ``extra``, the Debye length and a quarter of it."""
    out = [e / length for e in extra]
    if lam is not None:
        out += [lam / length, 0.25 * lam / length]
    return out


def _nodes(n, length, lam, gouy, extra=(), walls=(True, True), fan=False):
    """Graded nodes along one direction of ``length`` ending at ``walls``.

    ``n`` cells go to the smooth part; a strongly charged wall (``gouy``
    given) adds cells in proportion to the monitor mass of its log layer.
    ``fan``: the direction is an angle of a polar block whose wall is a ray,
    so the layer spans a fraction lam/(r angle) that grows toward the centre:
    nodes are spread evenly in log(fraction) from lam/length up to 1/2.
    """
    scales = wall_scales(length, lam, extra)
    logs = []
    if gouy is not None and lam is not None:
        logs = [(gouy / length, lam / length)]
    if fan and lam is not None and lam / length < 0.05:
        logs.append((lam / length, 0.5, _FAN_WEIGHT))
    if not logs:
        return graded(n, scales, walls)
    base = monitor_mass(scales, walls)
    total = monitor_mass(scales, walls, logs, _LOG_WEIGHT)
    q = np.ceil(4.0 * total / base) / 4.0
    return graded(int(round(n * q)), scales, walls, logs, _LOG_WEIGHT)


def _cells(n, f):
    """Cells along a direction: n f with f rounded to eighths, so that the
    count doubles exactly with n (n is a multiple of 8)."""
    return int(n * max(1, round(8 * f)) // 8)


def _bucket(v, step):
    """Round log2(v) to ``step`` so nearby parameter values share one mesh."""
    if v is None:
        return None
    return float(2.0 ** (np.round(np.log2(v) / step) * step))


def mesh_key(kind, dims, n, lam, gouy):
    """Cache key: the scaled geometry, the resolution and the grading scales
    rounded to quarter (Debye) and half (Gouy-Chapman) octaves.

    A Debye length above twice the reference length grades nothing (the
    layers overlap) and is dropped, unless the wall is strongly charged: the
    counter-ions then crowd into a Gouy-Chapman layer at the wall however
    overlapped the rest is, and the log layer from the Gouy-Chapman length
    up to (at most) twice the reference length resolves it. (Without it a
    circle at kappa a = 0.095 and e zeta/kT = -15 gave three times the tube's
    conductive coefficient, unseen by the level estimate.)
    """
    dims = tuple(float(f"{d:.12g}") for d in dims)
    if lam is not None and lam > 2.0:
        lam = 2.0 if gouy is not None and gouy <= 0.5 * 2.0 else None
    lam = None if lam is None else _bucket(lam, 0.25)
    gouy = None if (gouy is None or lam is None or gouy > 0.5 * lam) else _bucket(gouy, 0.5)
    return (kind, dims, int(n), lam, gouy)


#: Memory bound of the mesh cache [bytes]: meshes with their operators,
#: factorisations and flow solutions (measured by :meth:`Mesh.nbytes`).
MESH_CACHE_BYTES = 256 * 2**20


class _MeshCache:
    """Least-recently-used meshes (with their factorisations), bounded in
    bytes (:data:`MESH_CACHE_BYTES`, counting what the solvers attach to a
    mesh later, such as its factorisation) and in number, so that a sweep
    over large meshes cannot exhaust memory. ``cache_info()`` counts hits and
    misses."""

    def __init__(self, max_bytes=None, max_items=128):
        self._d = OrderedDict()
        self.max_bytes = MESH_CACHE_BYTES if max_bytes is None else max_bytes
        self.max_items = max_items
        self.hits = self.misses = 0
        self._lock = threading.Lock()

    def __call__(self, key):
        with self._lock:
            if key in self._d:
                self._d.move_to_end(key)
                self.hits += 1
                return self._d[key]
        kind, dims, n, lam, gouy = key
        mesh = _BUILDERS[kind](dims, n, lam, gouy)
        with self._lock:
            self.misses += 1
            self._d[key] = mesh
            self._evict()
        return mesh

    def trim(self):
        """Evict down to the bounds again: meshes grow after insertion when the
        solvers attach their factorisations (called after every solved point)."""
        with self._lock:
            self._evict()

    def nbytes(self):
        """Memory held by the cached meshes now [bytes]."""
        with self._lock:
            return sum(m.nbytes() for m in self._d.values())

    def _evict(self):
        sizes = [m.nbytes() for m in self._d.values()]
        total = sum(sizes)
        i = 0
        while len(self._d) - i > 1 and (len(self._d) - i > self.max_items
                                        or total > self.max_bytes):
            total -= sizes[i]
            i += 1
        for _ in range(i):
            self._d.popitem(last=False)

    def cache_info(self):
        return _CacheInfo(self.hits, self.misses, len(self._d))

    def cache_clear(self):
        with self._lock:
            self._d.clear()
            self.hits = self.misses = 0


_CacheInfo = namedtuple("CacheInfo", "hits misses currsize")
_cached = _MeshCache()


def trim_mesh_cache():
    """Bring the mesh cache back under its byte bound (see :class:`_MeshCache`)."""
    _cached.trim()


def build_mesh(kind, dims, n, lam=None, gouy=None):
    """The (cached) mesh of section ``kind`` with scaled ``dims``."""
    return _cached(mesh_key(kind, dims, n, lam, gouy))


# ----------------------------------------------------------------------------
def _trapezoid(dims, n, lam, gouy):
    top, bottom, depth = dims
    wide = max(top, bottom)
    slope = abs(top - bottom) / 2.0
    cosa = depth / np.hypot(depth, slope)
    extra_s = [depth] if depth < wide else []
    extra_t = [wide] if wide < depth else []
    ns = _cells(n, max(1.0, min(2.0, wide / depth)))
    # a narrow end (a V-groove apex) makes the sidewalls rays of a fan: the layer
    # then takes a growing fraction of the width toward that end
    s = _nodes(ns, wide * cosa, lam, gouy, extra_s, fan=min(top, bottom) < 0.5 * wide)
    t = _nodes(n, depth, lam, gouy, extra_t)
    y = t * depth
    half = 0.5 * (bottom + (top - bottom) * t)
    P, T = tensor_block(-half, half, y, s)
    return Mesh(*merge_blocks([(P, T)], _MERGE_TOL * depth))


def _etch(dims, n, lam, gouy):
    mask, depth = dims
    d = depth
    t = _nodes(n, d, lam, gouy)                       # floor (0) to top (1)
    y = t * d
    r = d - y[::-1]                                   # 0 at the top corner point
    r[0], r[-1] = 0.0, d
    arc_len = 0.5 * np.pi * d
    nth = _cells(n, 0.875)
    th = _nodes(nth, arc_len, lam, gouy, walls=(False, True), fan=True)   # wall at theta = 0
    theta = -0.5 * np.pi * (1.0 - th)
    blocks = []
    for sgn in (1.0, -1.0):
        cx = sgn * 0.5 * mask
        P, T = polar_block(0.0, 0.0, 1.0, 1.0, r, theta)
        P = P.copy()
        P[:, 0] = cx + sgn * P[:, 0]
        P[:, 1] = d + P[:, 1]
        # the interface ray theta = -pi/2 exactly on x = cx, y = d - r
        R = np.repeat(r, len(theta))
        on = np.tile(np.arange(len(theta)) == 0, len(r))
        P[on, 0] = cx
        P[on, 1] = d - R[on]
        blocks.append((P, T))
    if mask > 0:
        ratio = mask / d
        ns = _cells(n, 0.5 * min(2.0, max(ratio, 0.25)))
        s = _nodes(ns, mask, None, None, extra=[d] if d < mask else [])
        P, T = tensor_block(np.full(len(y), -0.5 * mask), np.full(len(y), 0.5 * mask),
                            d - r[::-1], s)
        blocks.append((P, T))
    return Mesh(*merge_blocks(blocks, _MERGE_TOL * d))


def _ellipse(dims, n, lam, gouy):
    width, height = dims
    a, b = 0.5 * width, 0.5 * height
    small, big = min(a, b), max(a, b)
    nr = _cells(n, 0.5)
    extra = [] if lam is None or big == small else [lam * small / big]
    r = _nodes(nr, small, lam, gouy, extra=extra, walls=(False, True))
    nth = _cells(n, 2.0 * max(1.0, min(2.0, big / small)))
    theta = np.linspace(0.0, 2.0 * np.pi, nth + 1)
    P, T = polar_block(0.0, b, a, b, r, theta)
    return Mesh(*merge_blocks([(P, T)], _MERGE_TOL * small))


def _polygon(dims, n, lam, gouy):
    k = (len(dims) - 2) // 2
    c = np.array(dims[:2])
    V = np.array(dims[2:]).reshape(k, 2)
    W = np.roll(V, -1, axis=0)
    edge = W - V
    length = np.linalg.norm(edge, axis=1)
    normal = np.stack([edge[:, 1], -edge[:, 0]], 1) / length[:, None]
    dist = np.abs(np.sum((V - c) * normal, axis=1))
    # one radial node set for all fans (they share the rays to the corners),
    # graded for the double layer of every wall at its own distance
    dmin = dist.min()
    extra = []
    if lam is not None:
        extra = [lam * dmin / dj for dj in np.unique(np.round(dist / dmin, 1) * dmin)
                 if dj > 1.05 * dmin]
    t = _nodes(_cells(n, 0.5), dmin, lam, gouy, extra=extra,
               walls=(False, True))
    blocks = []
    for i in range(k):
        ns = _cells(n, min(2.0, max(0.5, 0.5 * length[i] / dist[i])))
        s = _nodes(ns, length[i], lam, gouy, extra=[dist[i]] if dist[i] < length[i] else [])
        blocks.append(fan_block(c, V[i], W[i], t, s))
    return Mesh(*merge_blocks(blocks, _MERGE_TOL * dmin))


_BUILDERS = {"trapezoid": _trapezoid, "etch": _etch, "ellipse": _ellipse, "polygon": _polygon}
