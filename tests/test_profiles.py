"""Profiles across the section: units, values at the wall and the centre, tables."""
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants

import ekexplore as ek
from ekexplore.sections import Ellipse, IsotropicEtch, Polygon, Rectangle, Trapezoid

VT25 = constants.k * 298.15 / constants.e
KCL = ek.Electrolyte.salt("KCl", 1.0)


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


SECTIONS = [Rectangle(200e-9, 100e-9), Ellipse(200e-9, 120e-9), Trapezoid(250e-9, 100e-9, 80e-9),
            IsotropicEtch(60e-9, 80e-9), Polygon([[0, 0], [200e-9, 0], [100e-9, 170e-9]])]


def area_mean(p, values, channel):
    """Area mean of a nodal field, by a quadrature written here, independent of
    the solvers' finite volumes and finite elements: slit and tube by the
    trapezoid rule in the coordinate (slit: dy/R; tube: 2 r dr/R^2); a 2D
    section by the mean of the three node values of every mesh triangle times
    its area (exact for the linear interpolant), over the mesh's own area."""
    if p.mesh is None:
        R = float(channel.half_size)
        m = 0 if isinstance(channel, ek.Slit) else 1
        x = p.coordinate
        order = np.argsort(x)
        return np.trapezoid(((m + 1) * x**m / R**(m + 1) * values)[order], x[order])
    P = np.stack([p.coordinates["x"], p.coordinates["y"]], 1)[p.mesh.triangles]
    e1, e2 = P[:, 1] - P[:, 0], P[:, 2] - P[:, 0]
    area = 0.5 * np.abs(e1[:, 0] * e2[:, 1] - e1[:, 1] * e2[:, 0])
    return np.sum(area * values[p.mesh.triangles].mean(axis=1)) / np.sum(area)


#: What each model's profiles are checked at: (concentration [mM], tolerance
#: of the profile grid itself). dh and pb hold their own coefficients wherever
#: they are used, overlapping layers included. thin's profile is the flat
#: Gouy-Chapman layer of the nearest wall (for a mixture, with the counter-ion
#: valence): it adds up to the thin coefficients only where the layers are
#: thin, so it is checked at 100 mM (kappa*half-size 10 to 1800 here); seen
#: up to 5e-3 at kappa*a = 10 in a tube, and 0.2 at kappa*a = 1 (outside
#: thin's range, where its error estimate says so).
MEANS_AT = {"thin": (100.0, 1e-2), "dh": (1.0, 2e-4), "pb": (1.0, 2e-4)}


@pytest.mark.parametrize("salt", ["KCl", "CaCl2"])
@pytest.mark.parametrize("model", ["thin", "dh", "pb"])
@pytest.mark.parametrize("shape, size", [(ek.Slit, 100e-9), (ek.Tube, 100e-9), (ek.Slit, 2e-6),
                                         (ek.Tube, 20e-9)])
def test_profiles_add_up_to_their_coefficients(salt, model, shape, size):
    # The mean of the velocity and current-density profiles over the section
    # must be the model's own L11 G + L12 E and L21 G + L22 E (what the
    # profiles show is what the coefficients count), to pb's reported
    # numerical accuracy or the profile grid's quadrature, whichever is larger.
    # (A model's error against pb is no tolerance here: thin and dh carry it
    # in error_estimate, and it would hide any mismatch.)
    c, quadrature = MEANS_AT[model]
    r = ek.solve(shape(size), ek.Electrolyte.salt(salt, c), ek.Wall(zeta=-0.025), model=model)
    _check_means(r, quadrature)


@pytest.mark.filterwarnings("ignore:model=", "ignore:.*missed the requested accuracy")
@pytest.mark.parametrize("model", ["thin", "dh", "pb"])
@pytest.mark.parametrize("channel", SECTIONS, ids=lambda c: type(c).__name__)
def test_section_profiles_add_up_to_their_coefficients(channel, model):
    # The same check on every 2D shape, with a constant-charge wall (the wall
    # potential is then the solver's own). The profiles are solved on a mesh
    # twice as fine as the kernel's finest; their linear interpolant integrates
    # to the extrapolated coefficients within that mesh's error: seen up to
    # 2.1e-3 for dh and pb at accuracy 1e-3, hence 5e-3.
    c, _ = MEANS_AT[model]
    r = ek.solve(channel, ek.Electrolyte.salt("KCl", c), ek.Wall(charge_density=-0.005),
                 model=model, accuracy=1e-3)
    _check_means(r, 5e-3)


def _check_means(r, quadrature):
    G, E = 1e5, 1e3
    p = r.profiles(G, E)
    tol = max(float(r.error_estimate), quadrature) if str(r.model) == "pb" else quadrature
    mean_u = area_mean(p, p.velocity, r.channel)
    mean_i = area_mean(p, p.current_density, r.channel)
    want_u = float(r.hydraulic) * G + float(r.electroosmotic) * E
    want_i = float(r.streaming) * G + float(r.conductive) * E
    assert abs(mean_u / want_u - 1.0) <= tol, (mean_u, want_u)
    assert abs(mean_i / want_i - 1.0) <= tol, (mean_i, want_i)


@pytest.mark.parametrize("channel", [ek.Slit(100e-9), ek.Tube(100e-9), Rectangle(200e-9, 100e-9)],
                         ids=lambda c: type(c).__name__)
def test_profiles_are_one_kind_for_every_shape(channel):
    # the same class and names for slits, tubes and sections; units given
    p = ek.solve(channel, KCL, ek.Wall(zeta=-0.05), model="pb", accuracy=1e-2).profiles(1e5, 1e3)
    assert type(p) is ek.Profiles
    n = p.potential.shape[-1]
    for name in ("potential", "charge_density", "velocity_pressure", "velocity_electroosmotic",
                 "velocity", "current_migration", "current_convective", "current_density",
                 "wall_distance"):
        assert getattr(p, name).shape == (n,), name
        assert p.units[name] in ("V", "C/m^3", "m/s", "A/m^2", "m"), name
    assert p.concentrations.shape == (2, n)
    for name, x in p.coordinates.items():
        assert x.shape == (n,) and p.units[name] == "m"
    # the wall distance is zero at the wall and positive inside
    assert_allclose(np.min(p.wall_distance), 0.0, atol=1e-15)
    assert np.max(p.wall_distance) > 0.2 * float(channel.half_size)
    # the potential at the wall is the wall's
    wall = p.wall_distance <= 1e-15
    assert_allclose(p.potential[wall], -0.05, rtol=1e-9)
    cols = p.to_frame().columns
    assert "potential [V]" in cols and "wall_distance [m]" in cols and "c_K+ [mol/m^3]" in cols
    if p.mesh is None:
        with pytest.raises(ValueError, match="2D sections"):
            p.on_grid()
    else:
        assert p.on_grid(11, 11)["potential"].shape == (11, 11)
