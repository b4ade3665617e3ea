"""Fields across the 2D sections: coordinates, cuts, images and tables."""
import numpy as np
import pytest
from numpy.testing import assert_allclose

import ekexplore as ek
from ekexplore.sections import Ellipse, IsotropicEtch, Polygon, Rectangle, SectionProfiles

KCL = ek.Electrolyte.salt("KCl", 1.0)


@pytest.fixture(scope="module")
def wide():
    # a wide rectangle: away from the side walls the fields are those of a slit
    r = ek.solve(Rectangle(2e-6, 100e-9), KCL, ek.Wall(zeta=-0.05), model="dh", accuracy=1e-3)
    return r, r.profiles(pressure_gradient=1e9, field=1e4)


def test_fields_and_coordinates(wide):
    r, p = wide
    assert isinstance(p, SectionProfiles)
    n = len(p.x)
    for name in ("potential", "charge_density", "velocity_pressure", "velocity_electroosmotic",
                 "current_migration", "current_convective", "velocity", "current_density"):
        assert getattr(p, name).shape == (n,)
    assert p.concentrations.shape == (2, n)
    assert_allclose(p.potential[p.wall], -0.05, rtol=1e-12)
    assert_allclose(p.velocity_pressure[p.wall], 0.0, atol=1e-30)
    assert_allclose(p.velocity_electroosmotic[p.wall], 0.0, atol=1e-30)
    assert p.x.min() == pytest.approx(-1e-6) and p.x.max() == pytest.approx(1e-6)
    assert p.y.min() == pytest.approx(0.0, abs=1e-15) and p.y.max() == pytest.approx(100e-9)


def test_wall_normal_cut_is_the_slit_profile(wide):
    # slit DH profile psi = zeta cosh(kappa y)/cosh(kappa d), d the half gap
    # (Burgreen & Nakache 1964, J. Phys. Chem. 68, 1084, doi:10.1021/j100787a019, in
    # its linear limit; common practice); at mid-width the side walls are
    # 1 um (100 Debye lengths) away, so the field is the slit's. The cut
    # interpolates linearly inside mesh cells: error <= h^2/8 max|psi''|, about
    # 2e-3 |zeta| on the default mesh, hence atol = 2.5e-3 |zeta|.
    r, p = wide
    cut = p.wall_normal(101)
    kappa = 1.0 / float(KCL.debye_length)
    d = 50e-9
    y = cut["distance"] - d
    expected = -0.05 * np.cosh(kappa * y) / np.cosh(kappa * d)
    assert_allclose(cut["potential"], expected, rtol=0, atol=2.5e-3 * 0.05)
    # plane Poiseuille, u = G (d^2 - y^2)/(2 eta) (common practice)
    up = 1e9 * (d**2 - y**2) / (2 * float(r.viscosity))
    assert_allclose(cut["velocity_pressure"], up, rtol=0, atol=2.5e-3 * up.max())


def test_centreline_is_symmetric(wide):
    r, p = wide
    c = p.centreline(201)
    assert_allclose(c["distance"][-1], 2e-6, rtol=1e-9)
    assert_allclose(c["velocity"], c["velocity"][::-1], rtol=1e-6, atol=1e-9 * np.nanmax(c["velocity"]))
    v = p.vertical_centreline(51)
    assert_allclose(v["distance"][-1], 100e-9, rtol=1e-9)


def test_image_grid_and_mean(wide):
    r, p = wide
    g = p.on_grid(81, 41)
    assert g["potential"].shape == (41, 81)
    assert not np.any(np.isnan(g["potential"]))        # a rectangle fills its box
    # the area mean of the electro-osmotic velocity is L12 E; trapezoidal rule on
    # the image grid, 41 points across 10 Debye lengths: about 1e-2
    mean = np.trapezoid(np.trapezoid(g["velocity_electroosmotic"], g["x"], axis=1), g["y"])
    assert_allclose(mean / (2e-6 * 100e-9), r.electroosmotic * 1e4, rtol=1e-2)


def test_image_of_a_curved_section_is_masked():
    r = ek.solve(Ellipse(200e-9, 100e-9), KCL, ek.Wall(zeta=-0.05), model="pb", accuracy=1e-2)
    g = r.profiles().on_grid(41, 41)
    nan = np.isnan(g["potential"])
    assert nan[0, 0] and nan[-1, -1] and not nan[20, 20]
    # the masked share is about 1 - pi/4 of the box
    assert 0.15 < nan.mean() < 0.3


@pytest.mark.parametrize("ch", [IsotropicEtch(50e-9, 80e-9),
                                Polygon([[0, 0], [200e-9, 0], [100e-9, 170e-9]])])
@pytest.mark.parametrize("model", ["thin", "pb"])
def test_profiles_for_every_model(ch, model):
    r = ek.solve(ch, KCL, ek.Wall(charge_density=-0.01), model=model, accuracy=1e-2)
    p = r.profiles(pressure_gradient=1e8, field=1e3)
    assert p.model == model
    cut = p.wall_normal(21)
    assert np.all(np.isfinite(cut["potential"]))
    # counter-ions accumulate at the negative wall
    assert cut["c_K+"][0] > cut["c_K+"][-1]


def test_batch_profiles_are_an_array_of_points():
    r = ek.solve(Rectangle([200e-9, 400e-9], 100e-9), KCL, ek.Wall(zeta=-0.05), model="dh",
                 accuracy=1e-2)
    ps = r.profiles()
    assert ps.shape == (2,)
    assert all(isinstance(p, SectionProfiles) for p in ps)
    assert ps[1].x.max() == pytest.approx(200e-9)


def test_to_frame(wide):
    pd = pytest.importorskip("pandas")
    r, p = wide
    df = p.to_frame()
    assert isinstance(df, pd.DataFrame)
    assert len(df) == len(p.x)
    assert "potential [V]" in df.columns and "c_K+ [mol/m^3]" in df.columns
