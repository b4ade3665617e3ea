"""Geometry and pressure-driven flow of the 2D sections (ekexplore.sections)."""
import numpy as np
import pytest
from numpy.testing import assert_allclose

import ekexplore as ek
from ekexplore.sections import Ellipse, IsotropicEtch, Polygon, Rectangle, Trapezoid
from ekexplore.sections.solutions import flow_solution
from ekexplore.sections.meshes import build_mesh
from ekexplore.sections.shapes import KOH_SIDEWALL_ANGLE, _flow_mean_2d

ETA = 1e-3


def white_mean_velocity(w, h, n_terms=2000):
    """White (2006), Viscous Fluid Flow, 3rd ed., eq. 3-48 (from memory):
    Q = (h^3 w / 12 eta) G [1 - (192 h / (pi^5 w)) sum_{n odd} tanh(n pi w / 2h) / n^5],
    h <= w; returned as <u>/(G/eta) = Q eta / (G w h)."""
    h, w = min(w, h), max(w, h)
    n = np.arange(1, 2 * n_terms, 2, dtype=float)
    return h**2 / 12.0 * (1.0 - 192.0 * h / (np.pi**5 * w) * np.sum(np.tanh(n * np.pi * w / (2 * h)) / n**5))


# Shah & London (1978), Laminar Flow Forced Convection in Ducts, Academic Press,
# fully developed f Re of rectangular ducts (values from memory, 5 digits).
SHAH_LONDON_RECT = [(1.0, 14.227), (0.5, 15.548), (0.25, 18.233), (0.125, 20.585)]


@pytest.mark.parametrize("aspect, fre", SHAH_LONDON_RECT)
def test_rectangle_poiseuille_number_shah_london(aspect, fre):
    # the Rectangle uses White's series; 5 quoted digits -> rtol 1e-4
    r = Rectangle(width=1e-6, depth=aspect * 1e-6)
    assert_allclose(r.poiseuille_number, fre, rtol=1e-4)


@pytest.mark.parametrize("aspect, fre", SHAH_LONDON_RECT)
def test_rectangle_2d_flow_shah_london(aspect, fre):
    # the same rectangle through the graded 2D solver (a Trapezoid with equal
    # widths); 5 quoted digits -> rtol 1e-4
    t = Trapezoid(top_width=1e-6, bottom_width=1e-6, depth=aspect * 1e-6)
    assert_allclose(t.poiseuille_number, fre, rtol=1e-4)


@pytest.mark.parametrize("w, h", [(1e-6, 1e-6), (3e-6, 1e-6), (1e-6, 20e-6), (100e-6, 1e-6)])
def test_rectangle_hydraulic_against_white_series(w, h):
    # closed form computed here; both the series path (thin model) and the 2D
    # solver path (Trapezoid) must match, the latter to its Richardson level (1e-6)
    exact = white_mean_velocity(w, h) / ETA
    e = ek.Electrolyte.salt("KCl", 10.0)
    r = ek.solve(Rectangle(w, h), e, ek.Wall(zeta=-0.02), model="thin", accuracy=1e-3)
    assert_allclose(r.hydraulic * r.viscosity / ETA, exact, rtol=1e-10)
    t = Trapezoid(w, w, h)
    dims = t._point_geometry(w, w, h)
    assert_allclose(_flow_mean_2d(dims[0], dims[1]) * dims[2]**2 / ETA, exact, rtol=2e-6)


@pytest.mark.parametrize("w, h", [(2e-6, 1e-6), (1e-6, 1e-6), (1e-6, 5e-6)])
def test_ellipse_exact_flow(w, h):
    # exact elliptical duct: Q = pi a^3 b^3 G / (4 eta (a^2 + b^2)) (Shah & London 1978;
    # common practice); the 2D solver converges to it (Richardson level, 1e-5)
    a, b = w / 2, h / 2
    exact = np.pi * a**3 * b**3 / (4 * (a**2 + b**2)) / (np.pi * a * b)
    ell = Ellipse(w, h)
    kind, dims, L = ell._point_geometry(w, h)
    assert_allclose(_flow_mean_2d(kind, dims) * L**2, exact, rtol=1e-5)
    assert_allclose(ell.hydraulic_diameter**2 / (2 * exact), ell.poiseuille_number, rtol=1e-12)


def test_circle_is_a_tube():
    # Hagen-Poiseuille, f Re = 16 (common practice)
    assert_allclose(Ellipse(1e-6, 1e-6).poiseuille_number, 16.0, rtol=1e-12)
    assert_allclose(Ellipse(1e-6, 1e-6).perimeter, np.pi * 1e-6, rtol=1e-12)


def test_equilateral_triangle_polygon():
    # exact equilateral triangle of side s: Q = sqrt(3) s^4 G / (320 eta)
    # (Shah & London 1978; common practice); the 2D fan mesh at its Richardson level
    s = 2e-6
    tri = Polygon([[0, 0], [s, 0], [s / 2, s * np.sqrt(3) / 2]])
    area = np.sqrt(3) / 4 * s**2
    assert_allclose(tri.area, area, rtol=1e-14)
    assert_allclose(tri.perimeter, 3 * s, rtol=1e-14)
    assert_allclose(tri.half_size, s / (2 * np.sqrt(3)), rtol=1e-9)   # inradius
    mean_u = np.sqrt(3) * s**4 / 320 / area
    assert_allclose(tri.hydraulic_diameter**2 / (2 * mean_u), tri.poiseuille_number, rtol=1e-6)


def semicircle_flow(radius, n_terms=100000):
    """Exact flow in a semicircular duct, derived here: u = -(G/2eta) y^2 + v with v
    harmonic, v = (G a^2/2 eta) sin^2(theta) on r = a, v = 0 on the diameter;
    sin^2 = sum_{n odd} -8/(pi n (n^2 - 4)) sin(n theta) gives
    Q eta/G = a^4 [-pi/16 - (8/pi) sum_{n odd} 1/(n^2 (n - 2) (n + 2)^2)]."""
    n = np.arange(1, 2 * n_terms, 2, dtype=float)
    return radius**4 * (-np.pi / 16 - 8 / np.pi * np.sum(1.0 / (n**2 * (n - 2) * (n + 2)**2)))


def test_semicircle_as_isotropic_etch_with_zero_mask():
    a = 1e-6
    etch = IsotropicEtch(mask_width=0.0, depth=a)
    assert_allclose(etch.area, np.pi * a**2 / 2, rtol=1e-14)
    assert_allclose(etch.perimeter, (np.pi + 2) * a, rtol=1e-14)
    mean_u = semicircle_flow(a) / etch.area
    # 2D solver at its Richardson level: 5e-6
    assert_allclose(etch.hydraulic_diameter**2 / (2 * mean_u), etch.poiseuille_number, rtol=5e-6)
    # Shah & London (1978), semicircular duct f Re = 15.767 (from memory, 5 digits)
    assert_allclose(etch.poiseuille_number, 15.767, rtol=1e-4)


def test_isotropic_etch_geometry():
    m, d = 3e-6, 1e-6
    e = IsotropicEtch(m, d)
    assert_allclose(e.top_width, m + 2 * d)
    assert_allclose(e.area, m * d + np.pi * d**2 / 2, rtol=1e-14)
    assert_allclose(e.perimeter, 2 * m + 2 * d + np.pi * d, rtol=1e-14)
    assert_allclose(e.half_size, d / 2)
    # a wide etch tends to a slit of gap d (f Re -> 24, plane Poiseuille; common practice)
    wide = IsotropicEtch(200e-6, 1e-6)
    assert 23.0 < float(wide.poiseuille_number) < 24.0


def test_trapezoid_from_koh_angle():
    # {111}/(100) angle of silicon: arctan(sqrt 2) = 54.7356 deg (crystal geometry)
    assert_allclose(KOH_SIDEWALL_ANGLE, 54.7356, atol=1e-4)
    t = Trapezoid.from_sidewall_angle(top_width=10e-6, depth=2e-6)
    assert_allclose(t.bottom_width, 10e-6 - 2 * 2e-6 / np.sqrt(2), rtol=1e-12)
    side = np.hypot(2e-6, 2e-6 / np.sqrt(2))
    assert_allclose(t.perimeter, 10e-6 + float(t.bottom_width) + 2 * side, rtol=1e-12)
    assert_allclose(t.area, 0.5 * (10e-6 + float(t.bottom_width)) * 2e-6, rtol=1e-12)
    # a V-groove (bottom width 0) is a triangle: the same flow as that Polygon
    v = Trapezoid.from_sidewall_angle(top_width=2 * np.sqrt(2) * 1e-6, depth=2e-6)
    assert_allclose(v.bottom_width, 0.0, atol=1e-18)
    p = Polygon([[0, 0], [np.sqrt(2) * 1e-6, 2e-6], [-np.sqrt(2) * 1e-6, 2e-6]])
    assert_allclose(v.poiseuille_number, p.poiseuille_number, rtol=1e-5)
    assert_allclose(v.half_size, p.half_size, rtol=1e-9)


def test_rectangle_trapezoid_agree():
    r = Rectangle(3e-6, 1e-6)
    t = Trapezoid(3e-6, 3e-6, 1e-6)
    for attr in ("area", "perimeter", "hydraulic_diameter", "half_size"):
        assert_allclose(getattr(t, attr), getattr(r, attr), rtol=1e-12)
    assert_allclose(t.poiseuille_number, r.poiseuille_number, rtol=2e-6)


@pytest.mark.parametrize("kind, dims", [("trapezoid", (4.0, 4.0, 2.0)), ("ellipse", (4.0, 2.0)),
                                        ("etch", (2.0, 2.0)),
                                        ("polygon", (1.0, 1.0, 0, 0, 2.0, 0.0, 2.0, 2.0, 0, 2.0))])
def test_flow_converges_at_second_order(kind, dims):
    # successive differences of the mean velocity fall by 4 per halving of the
    # spacing (second order); the observed order must be at least 1.8
    u = [flow_solution(build_mesh(kind, dims, n))["u_mean"] for n in (16, 32, 64)]
    order = np.log2(abs(u[1] - u[0]) / abs(u[2] - u[1]))
    assert order > 1.8, order


def test_broadcast_geometry():
    r = Rectangle(width=[1e-6, 2e-6, 4e-6], depth=1e-6)
    assert r.shape == (3,)
    assert r.poiseuille_number.shape == (3,)
    assert_allclose(r.half_size, 0.5e-6)
    t = Trapezoid(top_width=[[2e-6], [3e-6]], bottom_width=1e-6, depth=[1e-6, 0.5e-6])
    assert t.half_size.shape == (2, 2)
    assert t.poiseuille_number.shape == (2, 2)


def test_registry_lists_the_sections():
    from ekexplore.channels import SHAPES
    for name in ("Rectangle", "Trapezoid", "IsotropicEtch", "Ellipse", "Polygon"):
        assert name in SHAPES
        assert SHAPES[name].kind == "section"
    for cls in (Rectangle, Trapezoid, IsotropicEtch, Ellipse):
        assert tuple(cls.parameter_info) == cls.parameters
        kwargs = {p: cls.parameter_info[p].default for p in cls.parameters}
        cls(**kwargs)   # defaults make a valid shape
