"""Profiles across the section: units, values at the wall and the centre, tables."""
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants

import ekexplore as ek

VT25 = constants.k * 298.15 / constants.e


def test_profiles_have_units_and_consistent_means():
    e = ek.Electrolyte.salt("KCl", 1.0)
    r = ek.solve(ek.Tube(diameter=200e-9), e, ek.Wall(zeta=-0.05), model="pb")
    p = r.profiles(pressure_gradient=1e9, field=1e4)
    assert p.units["potential"] == "V"
    assert p.potential.shape == p.coordinate.shape
    assert_allclose(p.potential[0], -0.05, rtol=1e-6)
    assert_allclose(p.velocity_pressure[0], 0.0, atol=1e-20)
    assert abs(p.potential[-1]) < abs(p.potential[0])
    # the counter-ion is enriched at the wall: c_K(wall)/c_bulk = exp(e|zeta|/kT)
    assert_allclose(p.concentrations[0][0] / 1.0, np.exp(0.05 / VT25), rtol=1e-6)
    df = p.to_frame()
    assert "potential [V]" in df.columns and len(df) == p.potential.size
    # the area mean of u_p on the grid reproduces L11 G to grid accuracy
    w = 2 * p.coordinate / (0.1e-6)**2
    mean_up = -np.trapezoid(p.velocity_pressure * w, p.coordinate)
    assert_allclose(mean_up, float(r.hydraulic) * 1e9, rtol=1e-3)


def test_profiles_for_every_model_and_batches():
    e = ek.Electrolyte.salt("KCl", np.array([1.0, 10.0]))
    for model in ("thin", "dh", "pb", "auto"):
        r = ek.solve(ek.Slit(gap=100e-9), e, ek.Wall(zeta=-0.05), model=model)
        p = r.profiles()
        assert p.potential.shape[0] == 2
        assert np.all(np.isfinite(p.potential))


@pytest.mark.parametrize("salt", ["KCl", "CaCl2"])
@pytest.mark.parametrize("model", ["thin", "dh", "pb"])
@pytest.mark.parametrize("shape, size", [(ek.Slit, 100e-9), (ek.Tube, 100e-9), (ek.Slit, 2e-6),
                                         (ek.Tube, 20e-9)])
def test_profiles_add_up_to_their_coefficients(salt, model, shape, size):
    # The mean of the current-density profile over the section must be the
    # model's own L21 G + L22 E (charge conservation of the model: what the
    # profiles show is what the coefficients count), to the accuracy the result
    # reports or the profile grid's quadrature (1e-4), whichever is larger.
    # Integrated here with the trapezoid rule in the coordinate (slit: dy/R;
    # tube: 2 r dr / R^2), independently of the solver's finite volumes.
    e = ek.Electrolyte.salt(salt, 1.0)
    r = ek.solve(shape(size), e, ek.Wall(zeta=-0.025), model=model)
    G, E = 1e5, 1e3
    p = r.profiles(G, E)
    R = float(r.channel.half_size)
    m = 0 if shape is ek.Slit else 1
    x = p.coordinate
    order = np.argsort(x)
    w = (m + 1) * x**m / R**(m + 1)
    mean = np.trapezoid((w * p.current_density)[order], x[order])
    want = float(r.streaming) * G + float(r.conductive) * E
    assert abs(mean / want - 1.0) <= max(float(r.error_estimate), 1e-4)
