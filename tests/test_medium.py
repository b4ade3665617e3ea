"""Water properties against their published sources (ekexplore.medium)."""
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import constants

from ekexplore.medium import (T_MAX, T_MIN, _iapws08_viscosity, check_temperature,
                              water_density, water_permittivity,
                              water_relative_permittivity, water_viscosity)

C0 = constants.zero_Celsius


# --- relative permittivity: Malmberg & Maryott (1956) -------------------------

# Values of the Malmberg & Maryott (1956) table of epsilon_r against t [degC]
# (J. Res. NBS 56, 1, doi:10.6028/jres.056.001; from memory, read the original).
MALMBERG_MARYOTT_TABLE = [(0.0, 87.74), (10.0, 83.83), (20.0, 80.10), (40.0, 73.15),
                          (60.0, 66.81), (80.0, 61.03), (100.0, 55.72)]


@pytest.mark.parametrize("t, eps_r", MALMBERG_MARYOTT_TABLE)
def test_permittivity_against_the_malmberg_maryott_table(t, eps_r):
    # The table is printed to 2 decimals: half a unit in the last place.
    assert_allclose(water_relative_permittivity(C0 + t), eps_r, atol=0.005)


def test_permittivity_matches_measured_value_at_25C():
    # Source: Malmberg & Maryott 1956, doi:10.6028/jres.056.001: measured
    # 78.30 at 25 degC; the fit deviates from the measurements by at most about
    # 0.01-0.02, so that is the tolerance (the fit gives 78.3033).
    assert_allclose(water_relative_permittivity(C0 + 25.0), 78.30, atol=0.02)


def test_permittivity_decreases_with_temperature():
    # Physical trend (common practice): epsilon_r falls monotonically 0-100 degC.
    eps = water_relative_permittivity(np.linspace(T_MIN, T_MAX, 201))
    assert np.all(np.diff(eps) < 0)


def test_absolute_permittivity_at_25C():
    # Malmberg & Maryott 1956 (above): 78.30 at 25 degC, times the vacuum
    # permittivity 8.8541878e-12 F/m (CODATA 2018, from memory): 6.9328e-10 F/m.
    assert_allclose(water_permittivity(C0 + 25.0), 6.9328e-10, rtol=3e-4)


# --- viscosity: IAPWS 2008 (Huber et al. 2009) ----------------------------------

# Table 4 of the IAPWS 2008 release (Huber et al. 2009, J. Phys. Chem. Ref. Data
# 38, 101, doi:10.1063/1.3088050): check points for the correlating equation
# with the critical enhancement mu2 = 1. T [K], rho [kg/m^3], eta [uPa s].
# All points from memory (read the original table).
IAPWS08_TABLE4 = [
    (298.15, 998.0, 889.735100),
    (298.15, 1200.0, 1437.649467),    # from memory
    (373.15, 1000.0, 307.883622),     # from memory
    (433.15, 1.0, 14.538324),         # from memory
    (433.15, 1000.0, 217.685358),     # from memory
    (873.15, 1.0, 32.619287),         # from memory
    (873.15, 100.0, 35.802262),       # from memory
    (873.15, 600.0, 77.430195),       # from memory
    (1173.15, 1.0, 44.217245),        # from memory
    (1173.15, 100.0, 47.640433),      # from memory
    (1173.15, 400.0, 64.154608),      # from memory
]


@pytest.mark.parametrize("T, rho, eta_uPas", IAPWS08_TABLE4)
def test_iapws08_check_points(T, rho, eta_uPas):
    # Source: IAPWS 2008 release, Table 4 (Huber et al. 2009, doi:10.1063/1.3088050).
    # The table prints 6 decimals: allow half a unit in the last place.
    assert_allclose(_iapws08_viscosity(T, rho) * 1e6, eta_uPas, rtol=1e-9, atol=5e-7)


@pytest.mark.parametrize("t, eta_mPas", [(20.0, 1.0016), (25.0, 0.8900), (40.0, 0.6527)])
def test_viscosity_at_0p1MPa_crc(t, eta_mPas):
    # Source: CRC Handbook of Chemistry and Physics, "Viscosity of water at
    # 0.1 MPa" (Haynes, W. M., ed., CRC Press; from memory). Printed to 4 decimals: allow
    # half a unit in the last place (the Kell 1-atm density used here differs
    # from 0.1 MPa by < 1 ppm, far below that).
    assert_allclose(water_viscosity(C0 + t) * 1e3, eta_mPas, atol=5e-5)


def test_viscosity_decreases_with_temperature():
    # Physical trend (common practice).
    eta = water_viscosity(np.linspace(T_MIN, T_MAX, 201))
    assert np.all(np.diff(eta) < 0)


# --- density: Kell (1975) ----------------------------------------------------------

def test_density_at_25C():
    # Source: Kell 1975, J. Chem. Eng. Data 20, 97, doi:10.1021/je60064a005;
    # 997.047 kg/m^3 at 25 degC (from memory). Tolerance 1e-5 relative: Kell's
    # fit is good to a few ppm, plus ~3 ppm from the IPTS-68 / ITS-90 scale shift.
    assert_allclose(water_density(C0 + 25.0), 997.047, rtol=1e-5)


def test_density_maximum_near_4C():
    # Source: Kell 1975, doi:10.1021/je60064a005; maximum density 999.972 kg/m^3
    # at 3.98 degC (from memory). Located on a 0.001 K grid.
    t = np.arange(2.0, 6.0, 0.001)
    rho = water_density(C0 + t)
    k = int(np.argmax(rho))
    assert 0 < k < t.size - 1
    assert abs(t[k] - 3.98) < 0.02           # 0.02 K: scale shift and rounding of 3.98
    assert_allclose(rho[k], 999.972, atol=0.002)   # half a unit in the 3rd decimal + 1 ppm


# --- shapes, purity and validation --------------------------------------------------

FUNCS = [water_relative_permittivity, water_permittivity, water_viscosity, water_density]


@pytest.mark.parametrize("f", FUNCS)
def test_scalar_gives_0d_and_array_keeps_shape(f):
    assert np.ndim(f(298.15)) == 0
    T = np.full((3, 1, 2), 300.0)
    T_before = T.copy()
    out = f(T)
    assert out.shape == (3, 1, 2)
    np.testing.assert_array_equal(T, T_before)   # input not modified


@settings(max_examples=40, deadline=None)
@given(st.lists(st.floats(min_value=T_MIN, max_value=T_MAX), min_size=1, max_size=8))
def test_batched_equals_scalar(temps):
    # Property: evaluating an array gives, element by element, the scalar
    # results (to a few ulp: numpy's vector and scalar paths may round differently).
    T = np.array(temps)
    for f in FUNCS:
        batch = f(T)
        single = np.array([float(f(t)) for t in temps])
        assert_allclose(batch, single, rtol=1e-14, atol=0)
        assert np.all(np.isfinite(batch))


@pytest.mark.parametrize("f", FUNCS + [check_temperature])
@pytest.mark.parametrize("bad", [273.0, 373.5, -5.0, [300.0, 400.0]])
def test_temperature_outside_range_is_refused(f, bad):
    with pytest.raises(ValueError) as err:
        f(bad)
    msg = str(err.value)
    assert "temperature" in msg
    assert "273.15" in msg and "373.15" in msg   # the allowed range is stated
    assert "K" in msg


@pytest.mark.parametrize("bad", [np.nan, np.inf, "warm"])
def test_temperature_not_a_number_is_refused(bad):
    with pytest.raises(ValueError, match="temperature"):
        water_viscosity(bad)


def test_range_ends_are_accepted():
    for f in FUNCS:
        assert np.all(np.isfinite(f([T_MIN, T_MAX])))
