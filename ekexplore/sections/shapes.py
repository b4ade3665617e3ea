"""The 2D cross-sections: rectangle, trapezoid, isotropic etch, ellipse, polygon.

Each shape knows its exact geometry and how to mesh itself; the transport
comes from the shared 2D kernel (``ekexplore.sections.kernel``).
Coordinates: x across the width (centred), y up from the floor.
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy import special

from ..channels import Channel, ParameterInfo, SIZE_MAX, SIZE_MIN, _size, register_shape
from .._validate import as_float_array, check_range
from .kernel import section_kernel
from .meshes import build_mesh
from .series import rectangle_dh, rectangle_flow_mean

__all__ = ["Rectangle", "Trapezoid", "IsotropicEtch", "Ellipse", "Polygon",
           "KOH_SIDEWALL_ANGLE"]

#: Angle between the {111} sidewalls and the (100) surface of silicon [deg]:
#: arctan(sqrt(2)) = 54.7356 deg, the sidewall of anisotropic (KOH) etching
#: (crystal geometry; common practice).
KOH_SIDEWALL_ANGLE = float(np.degrees(np.arctan(np.sqrt(2.0))))

def _width(name, value):
    """A width that may be zero (a V-groove floor, an etch without mask opening)."""
    return check_range(name, value, 0.0, SIZE_MAX, unit="m",
                       hint="a width must be zero or positive, up to 1 cm")


@lru_cache(maxsize=256)
def _flow_mean_2d(kind, dims):
    """<u>/(G/eta) in units of L^2 from two fine meshes (Richardson), for f Re."""
    from .solutions import flow_solution
    c = flow_solution(build_mesh(kind, dims, 96))["u_mean"]
    f = flow_solution(build_mesh(kind, dims, 192))["u_mean"]
    return (4.0 * f - c) / 3.0


def _chebyshev_centre(V):
    """Centre and radius of the largest circle inside all inner half-planes of
    the edges of the counter-clockwise polygon V (the polygon's kernel)."""
    from scipy.optimize import linprog
    # the LP works in units of the polygon's span (its tolerances are absolute)
    scale = float(np.max(np.ptp(V, axis=0)))
    origin = V.mean(axis=0)
    V = (V - origin) / scale
    W = np.roll(V, -1, axis=0)
    e = W - V
    L = np.linalg.norm(e, axis=1)
    nrm = np.stack([e[:, 1], -e[:, 0]], 1) / L[:, None]      # outward normals (CCW)
    # n.x + r <= n.v  for every edge; maximise r
    A = np.hstack([nrm, np.ones((len(V), 1))])
    bnd = np.sum(nrm * V, axis=1)
    res = linprog([0.0, 0.0, -1.0], A_ub=A, b_ub=bnd, bounds=[(None, None)] * 2 + [(0, None)],
                  method="highs")
    if res.status != 0:
        return None, 0.0
    return origin + scale * res.x[:2], scale * float(res.x[2])


class _Section(Channel):
    """Common machinery of the 2D sections."""

    kind = "section"

    # subclasses: _point_geometry(*values) -> (mesh kind, scaled dims, L)
    def _values(self, shape):
        return [np.broadcast_to(getattr(self, p), shape).reshape(-1) for p in self.parameters]

    def _geometry_arrays(self, shape):
        vals = self._values(shape)
        B = int(np.prod(shape)) if shape else 1
        specs = [self._point_geometry(*(v[k] for v in vals)) for k in range(B)]
        return {"spec": specs, "values": [tuple(v[k] for v in vals) for k in range(B)],
                "area": np.broadcast_to(self.area, shape).reshape(-1).astype(float),
                "perimeter": np.broadcast_to(self.perimeter, shape).reshape(-1).astype(float),
                "half_size": np.broadcast_to(self.half_size, shape).reshape(-1).astype(float)}

    def _dh_series_values(self, *vals_and_kappa):
        """Closed-form Debye-Hueckel means (constant potential), or None."""
        return None

    def _flow_mean(self):
        """<u>/(G/eta) [m^2], broadcast over the parameters."""
        shape = self.shape
        vals = self._values(shape)
        out = np.empty(int(np.prod(shape)) if shape else 1)
        for k in range(out.size):
            kind, dims, L = self._point_geometry(*(v[k] for v in vals))
            ex = self._exact_flow_mean_values(*(v[k] for v in vals))
            out[k] = ex if ex is not None else L**2 * _flow_mean_2d(kind, dims)
        return out.reshape(shape)

    def _exact_flow_mean_values(self, *vals):
        """Exact <u>/(G/eta) [m^2] for one point's dimensions, or None."""
        return None

    @property
    def poiseuille_number(self):
        """Fanning friction factor times Reynolds number on the hydraulic
        diameter, f Re = D_h^2 / (2 <u>/(G/eta)) [-]: exact where a closed
        form exists, else from the 2D flow solve (Richardson, about 1e-6)."""
        return self.hydraulic_diameter**2 / (2.0 * self._flow_mean())

    def _kernel(self, conditions, models, options):
        return section_kernel(self, conditions, models, options)

    def mesh(self, accuracy=None, debye_length=None):
        """The fine-level mesh used at ``accuracy`` (for plots and checks):
        (points [m], triangles). Only for a scalar shape."""
        from .extrapolation import DEFAULT_ACCURACY, resolution
        if self.shape != ():
            raise ValueError("mesh: only for a shape with scalar dimensions")
        kind, dims, L = self._point_geometry(*(v[0] for v in self._values(())))
        lam = None if debye_length is None else debye_length / L
        m = build_mesh(kind, dims, 2 * resolution(accuracy or DEFAULT_ACCURACY), lam)
        return m.points * L, m.triangles


def _dims(*values, L):
    return tuple(float(v) / L for v in values)


@register_shape
class Rectangle(_Section):
    """A rectangular channel (soft lithography, dry etching).

    Parameters
    ----------
    width : array_like
        Width w [m], 1e-9 to 1e-2.
    depth : array_like
        Depth d [m], 1e-9 to 1e-2.

    Notes
    -----
    Flow from White's series; the Debye-Hueckel model at a constant-potential
    wall uses its closed-form series (the same sine expansion), every other
    case the graded 2D solver. ``half_size`` is min(w, d)/2.

    References
    ----------
    .. [1] White, F. M. (2006). *Viscous Fluid Flow*, 3rd ed., McGraw-Hill, eq. 3-48.
    .. [2] Shah, R. K.; London, A. L. (1978). *Laminar Flow Forced Convection in
       Ducts*, Academic Press (Advances in Heat Transfer, Suppl. 1).

    Examples
    --------
    >>> r = Rectangle(width=2e-6, depth=1e-6)
    >>> float(r.hydraulic_diameter)
    1.3333333333333333e-06
    >>> f"{float(r.poiseuille_number):.3f}"
    '15.548'
    """

    parameters = ("width", "depth")
    parameter_info = {"width": ParameterInfo("width", 2e-6),
                      "depth": ParameterInfo("depth", 1e-6)}

    def __init__(self, width, depth):
        self.width = _size("width", width)
        self.depth = _size("depth", depth)

    @property
    def area(self):
        return self.width * self.depth

    @property
    def perimeter(self):
        return 2.0 * (self.width + self.depth)

    @property
    def half_size(self):
        return 0.5 * np.minimum(self.width, self.depth)

    def _point_geometry(self, w, d):
        L = 0.5 * min(w, d)
        return "trapezoid", _dims(w, w, d, L=L), L

    def _exact_flow_mean_values(self, w, d):
        return rectangle_flow_mean(w, d)

    def _dh_series_values(self, w, d, kappa):
        return rectangle_dh(w, d, kappa)


@register_shape
class Trapezoid(_Section):
    """A trapezoidal channel: a flat floor, a flat top and straight sidewalls.

    Parameters
    ----------
    top_width : array_like
        Width at the top (the cover) [m], 0 to 1e-2.
    bottom_width : array_like
        Width of the floor [m], 0 to 1e-2 (0 gives a V-groove).
    depth : array_like
        Depth [m], 1e-9 to 1e-2.

    Notes
    -----
    Anisotropic (KOH) etching of (100) silicon gives sidewalls at 54.74 deg
    to the surface: use :meth:`from_sidewall_angle`. ``half_size`` is the
    radius of the largest inscribed circle.

    Examples
    --------
    >>> t = Trapezoid.from_sidewall_angle(top_width=3e-6, depth=1e-6)
    >>> f"{float(t.bottom_width) * 1e6:.3f} um"
    '1.586 um'
    >>> f"{float(t.sidewall_angle):.2f} deg"
    '54.74 deg'
    >>> float(Trapezoid(2e-6, 2e-6, 1e-6).poiseuille_number) > 15.5
    True
    """

    parameters = ("top_width", "bottom_width", "depth")
    parameter_info = {"top_width": ParameterInfo("top width", 3e-6),
                      "bottom_width": ParameterInfo("bottom width", 1.586e-6, minimum=0.0),
                      "depth": ParameterInfo("depth", 1e-6)}

    def __init__(self, top_width, bottom_width, depth):
        self.top_width = _width("top_width", top_width)
        self.bottom_width = _width("bottom_width", bottom_width)
        self.depth = _size("depth", depth)
        wide = np.maximum(self.top_width, self.bottom_width)
        if np.any(wide < SIZE_MIN):
            bad = float(np.min(wide))
            raise ValueError(f"top_width and bottom_width: the wider of the two is {bad:g} m, "
                             f"below the allowed minimum {SIZE_MIN:g} m; at most one may be zero")

    @classmethod
    def from_sidewall_angle(cls, top_width, depth, angle=KOH_SIDEWALL_ANGLE):
        """The trapezoid of a given top width, depth and sidewall angle.

        Parameters
        ----------
        top_width : array_like
            Mask opening (width at the top) [m].
        depth : array_like
            Etch depth [m].
        angle : array_like
            Angle between sidewall and top surface [deg], 1 to 179; default
            54.74 (KOH on (100) silicon). Above 90 the channel widens downward.

        Returns
        -------
        Trapezoid
            With bottom_width = top_width - 2 depth / tan(angle).
        """
        top = _width("top_width", top_width)
        d = _size("depth", depth)
        ang = check_range("angle", angle, 1.0, 179.0, unit="deg")
        bottom = top - 2.0 * d / np.tan(np.radians(ang))
        if np.any(bottom < -1e-12 * top):
            raise ValueError(f"depth = {float(np.max(d)):g} m is too deep for top_width = "
                             f"{float(np.min(top)):g} m at angle = {float(np.min(ang)):g} deg: "
                             "the sidewalls meet above the floor (bottom width "
                             f"{float(np.min(bottom)):g} m < 0)")
        return cls(top, np.maximum(bottom, 0.0), d)

    @property
    def sidewall_angle(self):
        """Angle between a sidewall and the top surface [deg] (90: a rectangle)."""
        return np.degrees(np.arctan2(self.depth, 0.5 * (self.top_width - self.bottom_width)))

    @property
    def area(self):
        return 0.5 * (self.top_width + self.bottom_width) * self.depth

    @property
    def perimeter(self):
        side = np.hypot(self.depth, 0.5 * (self.top_width - self.bottom_width))
        return self.top_width + self.bottom_width + 2.0 * side

    @property
    def half_size(self):
        """Radius of the largest inscribed circle [m] (closed form, see :meth:`_inradius`)."""
        return self._inradius(self.top_width, self.bottom_width, self.depth)

    @staticmethod
    def _outline(t, b, d):
        return np.array([[-0.5 * b, 0.0], [0.5 * b, 0.0], [0.5 * t, d], [-0.5 * t, d]])

    @staticmethod
    def _inradius(t, b, d):
        """Radius of the largest circle inside the trapezoid (array-wise).

        The centre lies on the symmetry axis at height y; the radius is the
        least of its distances to the floor (y), the top (d - y) and a
        sidewall, (b/2 + s y)/sqrt(1 + s^2) with s = (t - b)/(2 d). That
        minimum of linear functions is concave in y, so its maximum sits where
        two of them cross: at y = d/2, at floor = sidewall and at
        top = sidewall (common practice; checked against a linear program in
        tests/test_sections_shapes.py).
        """
        t, b, d = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (t, b, d)))
        s = (t - b) / (2.0 * d)
        q = np.sqrt(1.0 + s**2)

        def radius(y):
            y = np.clip(y, 0.0, d)
            return np.minimum(np.minimum(y, d - y), (0.5 * b + s * y) / q)
        crossings = (0.5 * d, 0.5 * b / (q - s), (d * q - 0.5 * b) / (q + s))
        out = np.max([radius(y) for y in crossings], axis=0)
        return out if out.ndim else float(out)

    def _point_geometry(self, t, b, d):
        L = self._inradius(t, b, d)
        if min(t, b) <= 0.0:
            # a V-groove is a triangle: the fan mesh of a polygon resolves its
            # apex better than a collapsed tensor grid
            V = self._outline(t, b, d)
            V = V[[0, 2, 3]] if b <= 0.0 else V[[0, 1, 2]]
            c, _ = _chebyshev_centre(V)
            return "polygon", tuple(float(v) / L for v in np.concatenate([c, V.ravel()])), L
        return "trapezoid", _dims(t, b, d, L=L), L


@register_shape
class IsotropicEtch(_Section):
    """An isotropically wet-etched channel (glass), closed by a flat cover.

    The floor is as wide as the mask opening and joins the top through
    quarter-round sidewalls of radius equal to the etch depth, so the top
    width is ``mask_width + 2 depth``.

    Parameters
    ----------
    mask_width : array_like
        Width of the mask opening (= the flat floor) [m], 0 to 1e-2. Zero
        gives a semicircle of radius ``depth``.
    depth : array_like
        Etch depth (= sidewall radius) [m], 1e-9 to 1e-2.

    Notes
    -----
    ``half_size`` is depth/2, the radius of the largest inscribed circle.

    Examples
    --------
    >>> e = IsotropicEtch(mask_width=0.0, depth=1e-6)
    >>> f"{float(e.poiseuille_number):.3f}"
    '15.767'
    """

    parameters = ("mask_width", "depth")
    parameter_info = {"mask_width": ParameterInfo("mask opening", 2e-6, minimum=0.0),
                      "depth": ParameterInfo("etch depth", 1e-6)}

    def __init__(self, mask_width, depth):
        self.mask_width = _width("mask_width", mask_width)
        self.depth = _size("depth", depth)

    @property
    def top_width(self):
        """Width at the top, mask_width + 2 depth [m]."""
        return self.mask_width + 2.0 * self.depth

    @property
    def area(self):
        return self.mask_width * self.depth + 0.5 * np.pi * self.depth**2

    @property
    def perimeter(self):
        return 2.0 * self.mask_width + (2.0 + np.pi) * self.depth

    @property
    def half_size(self):
        return 0.5 * self.depth * np.ones_like(self.mask_width)

    def _point_geometry(self, m, d):
        L = 0.5 * d
        return "etch", _dims(m, d, L=L), L


@register_shape
class Ellipse(_Section):
    """An elliptical channel (drawn capillaries, some moulded channels).

    Parameters
    ----------
    width : array_like
        Full width 2a [m], 1e-9 to 1e-2.
    height : array_like
        Full height 2b [m], 1e-9 to 1e-2.

    Notes
    -----
    Exact flow: Q = pi a^3 b^3 G / (4 eta (a^2 + b^2)); perimeter from the
    complete elliptic integral of the second kind. ``half_size`` is
    min(a, b). A circle (width = height) is a tube.

    References
    ----------
    .. [1] Shah, R. K.; London, A. L. (1978). *Laminar Flow Forced Convection in
       Ducts*, Academic Press, ch. on elliptical ducts.

    Examples
    --------
    >>> float(Ellipse(2e-6, 2e-6).poiseuille_number)
    16.0
    """

    parameters = ("width", "height")
    parameter_info = {"width": ParameterInfo("width", 2e-6),
                      "height": ParameterInfo("height", 1e-6)}

    def __init__(self, width, height):
        self.width = _size("width", width)
        self.height = _size("height", height)

    @property
    def area(self):
        return 0.25 * np.pi * self.width * self.height

    @property
    def perimeter(self):
        a = 0.5 * np.maximum(self.width, self.height)
        b = 0.5 * np.minimum(self.width, self.height)
        return 4.0 * a * special.ellipe(1.0 - (b / a) ** 2)

    @property
    def half_size(self):
        return 0.5 * np.minimum(self.width, self.height)

    def _point_geometry(self, w, h):
        L = 0.5 * min(w, h)
        return "ellipse", _dims(w, h, L=L), L

    def _exact_flow_mean_values(self, w, h):
        a, b = 0.5 * w, 0.5 * h
        return a**2 * b**2 / (4.0 * (a**2 + b**2))



def _segments_cross(p, q, r, s):
    """True when the closed segments p-q and r-s share a point."""
    def orient(a, b, c):
        return np.sign((b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]))

    def on(a, b, c):
        return (min(a[0], b[0]) <= c[0] <= max(a[0], b[0])
                and min(a[1], b[1]) <= c[1] <= max(a[1], b[1]))
    o1, o2, o3, o4 = orient(p, q, r), orient(p, q, s), orient(r, s, p), orient(r, s, q)
    if o1 != o2 and o3 != o4:
        return True
    return ((o1 == 0 and on(p, q, r)) or (o2 == 0 and on(p, q, s))
            or (o3 == 0 and on(r, s, p)) or (o4 == 0 and on(r, s, q)))


@register_shape
class Polygon(_Section):
    """A channel with a polygonal cross-section.

    Parameters
    ----------
    vertices : array_like, shape (k, 2)
        Corner coordinates (x, y) [m], k >= 3, in either orientation. The
        polygon must be simple (no self-intersection) and star-shaped: some
        interior point must see every wall (every convex polygon is).

    Raises
    ------
    ValueError
        For fewer than three vertices, repeated vertices, zero area, crossing
        edges, a polygon that is not star-shaped, or sizes outside 1 nm-1 cm.

    Notes
    -----
    Meshed as fans from the centre of the largest circle that sees every wall;
    ``half_size`` is that circle's radius (the inradius for a convex polygon).

    Examples
    --------
    >>> s = 1e-6
    >>> tri = Polygon([[0, 0], [s, 0], [s / 2, s * 3**0.5 / 2]])
    >>> f"{float(tri.poiseuille_number):.3f}"
    '13.333'
    """

    parameters = ("vertices",)
    parameter_info: dict = {}

    def __init__(self, vertices):
        V = as_float_array("vertices", vertices, unit="m")
        if V.ndim != 2 or V.shape[1] != 2 or V.shape[0] < 3:
            raise ValueError(f"vertices must be an array of shape (k, 2) with k >= 3 corners "
                             f"(x, y) [m], got shape {V.shape}")
        span = float(np.max(np.ptp(V, axis=0)))
        if span > SIZE_MAX:
            raise ValueError(f"vertices span {span:g} m, above the allowed maximum {SIZE_MAX:g} m")
        W = np.roll(V, -1, axis=0)
        edge = np.linalg.norm(W - V, axis=1)
        if np.any(edge <= 1e-12 * max(span, 1e-300)):
            i = int(np.argmin(edge))
            raise ValueError(f"vertices: corners {i} and {(i + 1) % len(V)} coincide "
                             f"({V[i].tolist()}); the polygon is degenerate")
        k = len(V)
        for i in range(k):
            for j in range(i + 1, k):
                if j == i + 1 or (i == 0 and j == k - 1):
                    continue
                if _segments_cross(V[i], W[i], V[j], W[j]):
                    raise ValueError(f"vertices: the polygon is self-intersecting (edge {i} "
                                     f"crosses edge {j})")
        area2 = float(np.sum(V[:, 0] * W[:, 1] - W[:, 0] * V[:, 1]))
        if abs(area2) <= 1e-9 * span**2:
            raise ValueError(f"vertices: the polygon has zero area ({0.5 * area2:g} m^2); "
                             "it is degenerate")
        if area2 < 0:
            V = V[::-1].copy()
            W = np.roll(V, -1, axis=0)
        c, r = _chebyshev_centre(V)
        if c is None or r <= 1e-6 * span:
            raise ValueError("vertices: the polygon is not star-shaped (no interior point sees "
                             "every wall); split it into star-shaped channels")
        if r < 0.5 * SIZE_MIN:
            raise ValueError(f"vertices: the largest inscribed circle has radius {r:g} m, below "
                             f"the allowed minimum {0.5 * SIZE_MIN:g} m")
        self.vertices = V
        self._centre, self._radius = c, r

    def _parameter_shapes(self):
        # the vertex array is one polygon, not an array of parameter points
        return {}

    def _values(self, shape):
        return [np.full(int(np.prod(shape)) if shape else 1, None, dtype=object)]

    @property
    def area(self):
        V, W = self.vertices, np.roll(self.vertices, -1, axis=0)
        return np.asarray(0.5 * np.sum(V[:, 0] * W[:, 1] - W[:, 0] * V[:, 1]))

    @property
    def perimeter(self):
        return np.asarray(np.sum(np.linalg.norm(np.roll(self.vertices, -1, 0) - self.vertices,
                                                axis=1)))

    @property
    def half_size(self):
        """Radius of the largest circle that sees every wall [m] (inradius if convex)."""
        return np.asarray(self._radius)

    def _point_geometry(self, _=None):
        L = self._radius
        flat = np.concatenate([self._centre, self.vertices.ravel()]) / L
        return "polygon", tuple(float(v) for v in flat), L

    def __repr__(self):
        return f"Polygon(vertices={self.vertices.tolist()!r})"
