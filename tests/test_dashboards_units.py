"""The one SI -> screen conversion module (ekexplore.dashboards.units): every
factor and every formatter against a value worked out by hand.

Unit definitions: BIPM (2019), "The International System of Units (SI)",
9th edition (SI Brochure), Tables 7 (prefixes) and 8 (litre, minute, degree
Celsius). 1 L = 1e-3 m^3, 1 min = 60 s, t/°C = T/K - 273.15.
"""
from __future__ import annotations

import pytest
from numpy.testing import assert_allclose

from ekexplore.dashboards import units as U


def test_flow_factor_by_hand():
    # 1 m^3/s = 1000 L per second = 60 000 L per minute
    assert U.M3S_TO_L_PER_MIN == 60_000.0
    # 1 µL/min = 1e-9 m^3 / 60 s = 1.6667e-11 m^3/s
    assert_allclose(U.litre_per_minute(1e-9 / 60.0), 1e-6, rtol=1e-15)
    assert U.flow(1e-9 / 60.0) == "1 µL/min"
    # Hagen-Poiseuille figure of the issue: 2.7577e-14 m^3/s is 1.65 nL/min
    assert U.flow(2.7577e-14) == "1.65 nL/min"
    assert U.flow(0.0) == "0 L/min"


def test_conductivity_factor_by_hand():
    # 1 S/m = 1000 mS / 100 cm = 10 mS/cm
    assert U.S_PER_M_TO_MS_PER_CM == 10.0
    assert U.conductivity(1.0) == "10 mS/cm"
    # 0.01 mol/kg KCl at 25 °C reads 1408 µS/cm = 0.1408 S/m (Wu, Koch & Pratt 1991,
    # J. Res. NIST 96, 191): the screen says 1.41 mS/cm
    assert U.conductivity(0.1408) == "1.41 mS/cm"
    assert U.conductivity(1.5e-3) == "15 µS/cm"


def test_mobility_factor_by_hand():
    # 1 m^2/(V s) = 1e6 µm x 1e2 cm /(V s); Helmholtz-Smoluchowski at 50 mV in water,
    # about 7.8e-10 m^2/(V s) per mV (shared/references.md): 3.9e-8 -> 3.9 µm·cm/(V·s)
    assert U.MOBILITY_TO_UM_CM == 1e8
    assert U.mobility(3.9e-8) == "3.9 µm·cm/(V·s)"


@pytest.mark.parametrize("si, text", [
    (-0.05, "-50 mV"), (0.0, "0 mV"), (0.2, "200 mV")])
def test_potential_in_millivolt(si, text):
    assert U.potential(si) == text


@pytest.mark.parametrize("si, text", [
    (-0.012, "-12 mC/m²"), (-1.0, "-1e+03 mC/m²"), (0.0, "0 mC/m²")])
def test_charge_density_in_mc_per_m2(si, text):
    assert U.charge_density(si) == text


@pytest.mark.parametrize("si, text", [(1e3, "1 kPa"), (2.5e5, "250 kPa"), (-300.0, "-0.3 kPa")])
def test_pressure_in_kpa(si, text):
    assert U.pressure(si) == text


def test_prefixed_quantities_by_hand():
    assert U.current(3.2e-9) == "3.2 nA"
    assert U.current(-4.5e-12) == "-4.5 pA"
    assert U.flow(4.82e-18 / 6e4) == "4.82 aL/min"    # 1 aL = 1e-18 L
    assert U.voltage(1500.0) == "1.5 kV"
    assert U.power(2.5e-3) == "2.5 mW"
    assert U.length(96.1e-9) == "96.1 nm"
    assert U.length(1e-4) == "100 µm"
    assert U.conductance(1e-9) == "1 nS"
    assert U.concentration(0.1) == "0.1 mM"           # 0.1 mol/m^3 = 0.1 mmol/L


def test_temperature_and_percent_by_hand():
    assert_allclose(U.celsius(298.15), 25.0, rtol=1e-14)
    assert U.percent(0.0123) == "1.23 %"
    assert U.percent(1.0) == "100 %"
    assert U.percent(12.5) == "1250 %"   # never an exponent on screen
