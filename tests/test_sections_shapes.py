"""Input validation of the 2D sections: bad shapes raise named ValueErrors."""
import numpy as np
import pytest
from numpy.testing import assert_allclose

from ekexplore.sections import Ellipse, IsotropicEtch, Polygon, Rectangle, Trapezoid


@pytest.mark.parametrize("make, name", [
    (lambda: Rectangle(width=0.0, depth=1e-6), "width"),
    (lambda: Rectangle(width=1e-6, depth=-1e-6), "depth"),
    (lambda: Rectangle(width=[1e-6, -2e-6], depth=1e-6), "width"),
    (lambda: Rectangle(width=1e-6, depth=1.0), "depth"),
    (lambda: Ellipse(width=1e-6, height=0.0), "height"),
    (lambda: Ellipse(width=np.nan, height=1e-6), "width"),
    (lambda: IsotropicEtch(mask_width=-1e-6, depth=1e-6), "mask_width"),
    (lambda: IsotropicEtch(mask_width=1e-6, depth=0.0), "depth"),
    (lambda: Trapezoid(top_width=-1e-6, bottom_width=1e-6, depth=1e-6), "top_width"),
    (lambda: Trapezoid(top_width=2e-6, bottom_width=-1e-6, depth=1e-6), "bottom_width"),
    (lambda: Trapezoid(top_width=0.0, bottom_width=0.0, depth=1e-6), "top_width"),
    (lambda: Trapezoid(top_width=2e-6, bottom_width=1e-6, depth=0.0), "depth"),
    (lambda: Trapezoid.from_sidewall_angle(top_width=1e-6, depth=2e-6), "depth"),
    (lambda: Trapezoid.from_sidewall_angle(top_width=1e-6, depth=1e-7, angle=0.0), "angle"),
])
def test_bad_sizes_raise_named_errors(make, name):
    with pytest.raises(ValueError, match=name):
        make()


def test_error_message_gives_value_and_range():
    with pytest.raises(ValueError) as info:
        Rectangle(width=-3e-6, depth=1e-6)
    msg = str(info.value)
    assert "width" in msg and "-3e-06" in msg and "[1e-09, 0.01]" in msg


@pytest.mark.parametrize("vertices, words", [
    ([[0, 0], [1e-6, 1e-6], [1e-6, 0], [0, 1e-6]], "self-intersecting"),     # bow tie
    ([[0, 0], [1e-6, 0], [2e-6, 0]], "zero area"),                           # collinear
    ([[0, 0], [1e-6, 0], [1e-6, 0], [0, 1e-6]], "coincide"),                # repeated corner
    ([[0, 0], [1e-6, 0]], "k >= 3"),                                          # too few
    ([[0, 0, 0], [1e-6, 0, 0], [0, 1e-6, 0]], "shape"),                      # not 2D
    ([[0, 0], [1e-6, 0], [np.inf, 1e-6]], "finite"),
    ([[0, 0], [1.0, 0], [0, 1.0]], "span"),                                  # above 1 cm
    # a comb: no interior point sees every wall
    ([[0, 0], [5e-6, 0], [5e-6, 1e-6], [4e-6, 1e-6], [4e-6, 0.2e-6], [3e-6, 0.2e-6],
      [3e-6, 1e-6], [2e-6, 1e-6], [2e-6, 0.2e-6], [1e-6, 0.2e-6], [1e-6, 1e-6], [0, 1e-6]],
     "star-shaped"),
])
def test_bad_polygons_raise_named_errors(vertices, words):
    with pytest.raises(ValueError, match="vertices") as info:
        Polygon(vertices)
    assert words in str(info.value)


def test_polygon_orientation_does_not_matter():
    v = [[0, 0], [2e-6, 0], [2.5e-6, 1e-6], [0.3e-6, 1.4e-6]]
    a, b = Polygon(v), Polygon(v[::-1])
    assert float(a.area) > 0 and float(b.area) > 0
    np.testing.assert_allclose(a.poiseuille_number, b.poiseuille_number, rtol=1e-12)


def test_non_convex_star_polygon_is_accepted():
    # an L-shape is star-shaped about points near its inner corner
    L = Polygon([[0, 0], [2e-6, 0], [2e-6, 1e-6], [1e-6, 1e-6], [1e-6, 2e-6], [0, 2e-6]])
    assert 0 < float(L.half_size) <= 0.5e-6
    assert 10.0 < float(L.poiseuille_number) < 20.0


def test_v_groove_trapezoid_is_accepted():
    v = Trapezoid(top_width=2e-6, bottom_width=0.0, depth=1e-6)
    np.testing.assert_allclose(v.area, 1e-12)
    assert float(v.half_size) < 0.5e-6


@pytest.mark.parametrize("scale", [1e-9, 1e-6, 1e-3])
def test_polygon_geometry_is_scale_free(scale):
    # an L-shape: its kernel is the unit square, whose largest circle has radius 1/2
    # (geometry), whatever the length unit
    v = np.array([[0, 0], [2, 0], [2, 1], [1, 1], [1, 2], [0, 2]]) * 2 * scale
    p = Polygon(v)
    np.testing.assert_allclose(p.half_size, scale, rtol=1e-9)
    np.testing.assert_allclose(p._centre, [scale, scale], rtol=1e-9)
    t = Trapezoid(3 * scale, 1 * scale, 1 * scale)
    np.testing.assert_allclose(t.half_size, 0.5 * scale, rtol=1e-9)   # limited by the depth


def test_trapezoid_inradius_closed_form_against_a_linear_program():
    # The largest inscribed circle of a convex polygon is a linear program
    # (Chebyshev centre: maximise r subject to n_e . x + r <= n_e . v_e for every
    # edge; Boyd & Vandenberghe 2004, Convex Optimization, sec. 8.5.1), solved
    # here by scipy.optimize.linprog independently of the closed form.
    from scipy.optimize import linprog
    rng = np.random.default_rng(3)
    t = rng.uniform(0.0, 5e-6, 40)
    b = rng.uniform(0.0, 5e-6, 40)
    b[:4] = 0.0                      # V-grooves
    d = rng.uniform(0.2e-6, 3e-6, 40)
    ch = Trapezoid(t, b, d)
    for k in range(40):
        V = np.array([[-0.5 * b[k], 0.0], [0.5 * b[k], 0.0], [0.5 * t[k], d[k]],
                      [-0.5 * t[k], d[k]]]) / 1e-6
        keep = np.r_[True, np.linalg.norm(np.diff(V, axis=0), axis=1) > 0]
        V = V[keep]
        e = np.roll(V, -1, axis=0) - V
        n = np.stack([e[:, 1], -e[:, 0]], 1) / np.linalg.norm(e, axis=1)[:, None]
        res = linprog([0, 0, -1], A_ub=np.hstack([n, np.ones((len(V), 1))]),
                      b_ub=np.sum(n * V, axis=1), bounds=[(None, None)] * 2 + [(0, None)],
                      method="highs")
        assert_allclose(ch.half_size[k], res.x[2] * 1e-6, rtol=1e-7)
