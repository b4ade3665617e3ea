"""Geometry of the 1D channel shapes and the shape registry (ekexplore.channels)."""
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from ekexplore.channels import (SHAPES, SIZE_MAX, SIZE_MIN, Channel, ParameterInfo, Slit,
                                Tube, register_shape)

sizes = st.floats(min_value=SIZE_MIN, max_value=SIZE_MAX)


# --- Slit ----------------------------------------------------------------------------

def test_slit_geometry_per_unit_width():
    h = np.array([2e-9, 1e-6, 3e-4])
    s = Slit(gap=h)
    assert_allclose(s.area, h * 1.0, rtol=1e-15)           # per metre of width
    assert_allclose(s.perimeter, 2.0, rtol=1e-15)          # two walls, 1 m wide each
    assert s.perimeter.shape == (3,)
    assert_allclose(s.hydraulic_diameter, 2 * h, rtol=1e-15)
    assert_allclose(s.half_size, h / 2, rtol=1e-15)
    assert s.shape == (3,)


def test_slit_geometry_with_width():
    h = np.array([1e-6, 2e-6, 5e-6])
    w = np.array([[1e-4], [1e-3]])
    s = Slit(gap=h, width=w)
    assert_allclose(s.area, h * w, rtol=1e-15)
    assert_allclose(s.perimeter, np.broadcast_to(2 * w, (2, 3)), rtol=1e-15)
    # side walls ignored: the hydraulic diameter of an infinite slit, 2h
    assert_allclose(s.hydraulic_diameter, 2 * h, rtol=1e-15)
    assert_allclose(4 * s.area / s.perimeter, np.broadcast_to(2 * h, (2, 3)), rtol=1e-15)


def test_tube_geometry():
    d = np.array([5e-9, 1e-6, 2e-3])
    t = Tube(diameter=d)
    assert_allclose(t.area, np.pi * d**2 / 4, rtol=1e-15)
    assert_allclose(t.perimeter, np.pi * d, rtol=1e-15)
    assert_allclose(t.hydraulic_diameter, d, rtol=1e-14)    # 4A/P of a circle
    assert_allclose(t.half_size, d / 2, rtol=1e-15)
    assert t.shape == (3,)


@pytest.mark.parametrize("channel, mean_velocity_per_G_eta", [
    # Plane Poiseuille, slit of full gap h: U = h^2 G / (12 eta) (White, F. M. (2006).
    # Viscous Fluid Flow, 3rd ed., McGraw-Hill, sec. 3-2; common practice)
    (Slit(gap=4e-6), lambda ch: ch.gap**2 / 12.0),
    # Hagen-Poiseuille, tube of radius a: U = a^2 G / (8 eta) (White 2006, same book,
    # sec. 3-3; common practice)
    (Tube(diameter=4e-6), lambda ch: (ch.diameter / 2) ** 2 / 8.0),
])
def test_poiseuille_number_from_the_closed_form_flow(channel, mean_velocity_per_G_eta):
    # Fanning f Re on the hydraulic diameter: tau_w = G Dh/4, Re = rho U Dh/eta, so
    # f Re = G Dh^2 / (2 eta U), computed from the closed-form mean velocity.
    # Shah & London (1978), Laminar Flow Forced Convection in Ducts, tabulate 24
    # for parallel plates and 16 for the circle (from memory).
    Dh = channel.hydraulic_diameter
    fre = Dh**2 / (2.0 * mean_velocity_per_G_eta(channel))
    assert_allclose(channel.poiseuille_number, fre, rtol=1e-13)
    expected = 24.0 if isinstance(channel, Slit) else 16.0
    assert_allclose(channel.poiseuille_number, expected, rtol=1e-13)


def test_poiseuille_number_keeps_shape():
    assert Slit(gap=np.full((2, 3), 1e-6)).poiseuille_number.shape == (2, 3)
    assert Tube(diameter=np.full(4, 1e-6)).poiseuille_number.shape == (4,)


@settings(max_examples=50, deadline=None)
@given(st.lists(sizes, min_size=1, max_size=6))
def test_hydraulic_diameter_property(ds):
    # Property: Dh = 4 A / P for both shapes, batched equals scalar, no NaN.
    d = np.array(ds)
    d_before = d.copy()
    for ch in (Slit(gap=d), Tube(diameter=d)):
        assert_allclose(ch.hydraulic_diameter, 4 * ch.area / ch.perimeter, rtol=1e-13)
        assert np.all(np.isfinite(ch.area)) and np.all(ch.area > 0)
    np.testing.assert_array_equal(d, d_before)
    for k, dk in enumerate(ds):
        assert float(Tube(diameter=dk).area) == pytest.approx(float(Tube(diameter=d).area[k]),
                                                             rel=1e-15)
        assert float(Slit(gap=dk).half_size) == float(Slit(gap=d).half_size[k])


# --- validation ----------------------------------------------------------------------

@pytest.mark.parametrize("make, name", [(lambda v: Slit(gap=v), "gap"),
                                        (lambda v: Tube(diameter=v), "diameter")])
@pytest.mark.parametrize("bad", [0.0, -1e-6, 5e-10, 0.02, [1e-6, 2.0]])
def test_size_out_of_range_refused(make, name, bad):
    with pytest.raises(ValueError) as err:
        make(bad)
    msg = str(err.value)
    assert name in msg
    assert "1e-09" in msg and "0.01" in msg and " m" in msg   # the allowed range, in metres


@pytest.mark.parametrize("bad", [np.nan, np.inf, "wide", None])
def test_size_not_a_number_refused(bad):
    with pytest.raises(ValueError, match="diameter"):
        Tube(diameter=bad)


def test_slit_width_refused():
    with pytest.raises(ValueError, match="width") as err:
        Slit(gap=1e-6, width=2.0)
    assert "[1e-09, 1] m" in str(err.value)
    with pytest.raises(ValueError, match="width"):
        Slit(gap=1e-6, width=0.0)


def test_range_ends_accepted():
    Slit(gap=[SIZE_MIN, SIZE_MAX])
    Tube(diameter=[SIZE_MIN, SIZE_MAX])


# --- interface and registry ------------------------------------------------------------

def test_registry_contains_the_1d_shapes():
    assert SHAPES["Slit"] is Slit
    assert SHAPES["Tube"] is Tube
    for cls in (Slit, Tube):
        assert issubclass(cls, Channel)
        assert cls.kind in ("slit", "tube")
        assert set(cls.parameter_info) == set(cls.parameters)
        for info in cls.parameter_info.values():
            assert isinstance(info, ParameterInfo)
            assert info.minimum <= info.default <= info.maximum
        # the defaults build a valid channel
        ch = cls(**{p: cls.parameter_info[p].default for p in cls.parameters})
        assert np.isfinite(ch.area)


def test_register_shape_adds_a_subclass():
    @register_shape
    class _Probe(Channel):
        kind = "section"
        parameters = ("side",)

        def __init__(self, side):
            self.side = np.asarray(side, dtype=float)

        @property
        def area(self):
            return self.side**2

        @property
        def perimeter(self):
            return 4 * self.side

    try:
        assert SHAPES["_Probe"] is _Probe
        p = _Probe([1e-6, 2e-6])
        assert p.shape == (2,)
        assert_allclose(p.hydraulic_diameter, [1e-6, 2e-6], rtol=1e-15)  # base-class 4A/P
        assert "_Probe(side=" in repr(p)
    finally:
        SHAPES.pop("_Probe", None)   # keep the registry clean for the dashboards


def test_base_class_is_abstract():
    ch = Channel()
    for prop in ("area", "perimeter", "half_size", "poiseuille_number"):
        with pytest.raises(NotImplementedError):
            getattr(ch, prop)


def test_repr_names_the_parameters():
    assert repr(Slit(gap=1e-6)).startswith("Slit(gap=")
    assert repr(Tube(diameter=1e-6)).startswith("Tube(diameter=")


def test_slit_width_is_a_declared_parameter():
    # gap and width broadcast together, and a mismatch names the width
    s = Slit(gap=np.array([1e-6, 2e-6]), width=np.array([[1e-3], [2e-3]]))
    assert s.shape == (2, 2)
    with pytest.raises(ValueError, match="width has shape"):
        Slit(gap=np.array([1e-6, 2e-6, 3e-6]), width=np.array([1e-3, 2e-3])).shape
    import ekexplore as ek
    with pytest.raises(ValueError, match="width has shape"):
        ek.solve(Slit(gap=np.array([1e-6, 2e-6, 3e-6]), width=np.array([1e-3, 2e-3])),
                 ek.Electrolyte.salt("KCl", 1.0), ek.Wall(zeta=-0.05))
