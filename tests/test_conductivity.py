"""Bulk conductivity against the conductivity standards (ekexplore.conductivity and
Electrolyte.conductivity / diffusivities)."""
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants

import ekexplore as ek
from ekexplore import Electrolyte, water_density, water_relative_permittivity, water_viscosity
from ekexplore.conductivity import MOBILITY_MODELS, msa_factors, walden_ratio

T25 = constants.zero_Celsius + 25.0
F = constants.physical_constants["Faraday constant"][0]

# KCl molar conductivity at 25 degC [S cm^2/mol] against molarity [mol/L]:
# CRC Handbook of Chemistry and Physics, "Equivalent conductivity of electrolytes
# in aqueous solution" (from memory).
KCL_CRC = [(0.0005, 147.74), (0.001, 146.88), (0.005, 143.48), (0.01, 141.20),
           (0.02, 138.27), (0.05, 133.30), (0.1, 128.90)]
# NaCl, same table (from memory).
NACL_CRC = [(0.0005, 124.44), (0.001, 123.68), (0.005, 120.59), (0.01, 118.45),
            (0.02, 115.70), (0.05, 111.01), (0.1, 106.69)]
# 1/2 CaCl2, same table, per equivalent against normality [eq/L] (from memory;
# the table's source is Shedlovsky & Brown 1934, "The electrolytic conductivity
# of alkaline earth chlorides in water at 25 degC", J. Am. Chem. Soc. 56, 1066;
# citation also from memory). At 0.5 meq/L the recalled value is within 0.1 %
# of the limiting law built on the published 25 degC CRC ion conductivities.
CACL2_CRC = [(0.0005, 131.84), (0.001, 130.30), (0.005, 124.19), (0.01, 120.30),
             (0.02, 115.59), (0.05, 108.42), (0.1, 102.41)]

# KCl primary standards against temperature [uS/cm] at 0.01, 0.1 and 1.0 mol/kg
# (CO2-saturated water's conductivity already subtracted): CRC Handbook of
# Chemistry and Physics, table "Standard KCl solutions for calibrating
# conductivity cells", built on Wu, Koch & Pratt 1991, "Proposed new
# electrolytic conductivity primary standards for KCl solutions", J. Res. NIST
# 96, 191, doi:10.6028/jres.096.008 (0.01 and 0.1 mol/kg); Wu, Koch, Feng,
# Holland, Juhasz, Arvay & Tomek 1994, J. Res. NIST 99, 241 (1.0 mol/kg); Pratt, Koch,
# Wu & Berezansky 2001, "Molality-based primary standards of electrolytic
# conductivity (IUPAC Technical Report)", Pure Appl. Chem. 73, 1783,
# doi:10.1351/pac200173111783. Uncertainty 0.03-0.04 %. Values read from the
# published table (not from memory).
KCL_STANDARDS_T = [
    (0, 772.92, 7116.85, 63488), (5, 890.96, 8183.70, 72030),
    (10, 1013.95, 9291.72, 80844), (15, 1141.45, 10437.1, 89900),
    (18, 1219.93, 11140.6, None), (20, 1273.03, 11615.9, 99170),
    (25, 1408.23, 12824.6, 108620), (30, 1546.63, 14059.2, 118240),
    (35, 1687.79, 15316.0, 127970), (40, 1831.27, 16591.0, 137810),
    (45, 1976.62, 17880.6, 147720), (50, 2123.43, 19180.9, 157670)]


def _molarity_from_molality(m, v_phi=27e-6, T=T25):
    """mol/kg -> mol/m^3: c = m / (1/rho_w + m V_phi), apparent molar volume of
    KCl about 27 cm^3/mol (from memory; a 3 % error in it moves c by 0.1 % at
    1 mol/kg)."""
    return m / (1.0 / float(water_density(T)) + m * v_phi)


@pytest.mark.parametrize("c, lam", KCL_CRC)
def test_kcl_within_1_percent_to_100mM(c, lam):
    # Source: CRC Handbook, equivalent conductivity table (KCL_CRC above).
    e = Electrolyte.salt("KCl", c * 1000.0)
    measured = float(e.conductivity()) / (c * 1000.0) * 1e4
    assert_allclose(measured, lam, rtol=0.01)
    # the earlier ideal sum is high, by more the higher c (1.4 % -> 16 %)
    ideal = float(e.conductivity("ideal")) / (c * 1000.0) * 1e4
    assert ideal > lam * (1.0 + 0.01 * (c > 0.0009))


@pytest.mark.parametrize("m, kappa", [
    (0.01, 1408.23e-4),     # 25 degC row of KCL_STANDARDS_T (Wu, Koch & Pratt 1991;
    (0.1, 12824.6e-4),      # Wu et al. 1994; Pratt et al. 2001: sources above)
    (1.0, 108620e-4),
])
def test_kcl_primary_standards(m, kappa):
    e = Electrolyte.salt("KCl", _molarity_from_molality(m))
    tol = 0.01 if m <= 0.1 else 0.03    # the targets; measured -2.4 % at 1 mol/kg
    assert_allclose(e.conductivity(), kappa, rtol=tol)


def test_kcl_0p1mM_follows_the_limiting_law():
    # At 0.1 mM the Debye-Hueckel-Onsager limiting law (Onsager 1927, Robinson &
    # Stokes ch. 7) is exact to < 0.05 %, so it stands for the standard there;
    # the MSA must approach it. Closed form computed here for a 1:1 salt.
    c = 0.1
    T = T25
    e = Electrolyte.salt("KCl", c, mobility="msa")
    lam0 = np.array([ek.ION_TABLE["K+"].molar_conductivity_at(T),
                     ek.ION_TABLE["Cl-"].molar_conductivity_at(T)])
    eps = water_relative_permittivity(T) * constants.epsilon_0
    kappa = np.sqrt(2 * constants.N_A * constants.e**2 * c / (eps * constants.k * T))
    q = 0.5
    relax = constants.e**2 * kappa / (12 * np.pi * eps * constants.k * T) * q / (1 + np.sqrt(q))
    ephor = F * constants.e * kappa / (6 * np.pi * water_viscosity(T))
    dho = c * np.sum(lam0 * (1 - relax) - ephor)
    assert_allclose(e.conductivity(), dho, rtol=5e-4)


@pytest.mark.parametrize("salt", ["CaCl2", "Na2SO4", "MgCl2"])
def test_asymmetric_salt_follows_the_onsager_limiting_law(salt):
    # The asymmetric terms (z+ != |z-|) in their limit: Onsager's 1927 limiting
    # law for a binary z1:z2 salt (Robinson & Stokes, Electrolyte Solutions,
    # ch. 7; Onsager 1927, Phys. Z. 28, 277), written here: each ion loses
    # z_i^2 F e kappa / (6 pi eta) of molar conductivity by electrophoresis and
    # the fraction |z1 z2| l_B kappa q / (3 (1 + sqrt q)) by relaxation, with
    # q = |z1 z2| / (|z1| + |z2|) (L1 + L2) / (|z2| L1 + |z1| L2), L the
    # equivalent conductivities. At 10 uM (ionic strength 30 uM) the MSA
    # agrees to 8e-5 (measured; its size terms are of higher order in kappa)
    # while the correction itself is 0.6 %; a wrong q (the 1:1 value 1/2)
    # would be off by 3.7e-4 (CaCl2) and 4.1e-4 (MgCl2).
    T = T25
    e = Electrolyte.salt(salt, 0.01)
    z = np.abs(np.asarray(e.valences, dtype=float))
    c = np.asarray(e.concentrations, dtype=float)
    lam_molar = np.array([i.molar_conductivity_at(T) for i in e.ions])
    L = lam_molar / z                                  # per equivalent
    eps = water_relative_permittivity(T) * constants.epsilon_0
    kappa = np.sqrt(constants.N_A * constants.e**2 * np.sum(z**2 * c) / (eps * constants.k * T))
    lB = constants.e**2 / (4 * np.pi * eps * constants.k * T)
    q = z[0] * z[1] / (z[0] + z[1]) * (L[0] + L[1]) / (z[1] * L[0] + z[0] * L[1])
    relax = z[0] * z[1] * lB * kappa * q / (3 * (1 + np.sqrt(q)))
    ephor = z**2 * F * constants.e * kappa / (6 * np.pi * water_viscosity(T))
    onsager = np.sum(c * (lam_molar * (1 - relax) - ephor))
    assert relax > 1e-3 and np.sum(c * ephor) > 2e-3 * np.sum(c * lam_molar)
    assert_allclose(e.conductivity(), onsager, rtol=2e-4)


@pytest.mark.parametrize("c, lam", NACL_CRC)
def test_nacl_within_2_percent_to_100mM(c, lam):
    # Source: CRC Handbook equivalent conductivity table (NACL_CRC above);
    # measured: within 0.7 %.
    e = Electrolyte.salt("NaCl", c * 1000.0)
    assert_allclose(float(e.conductivity()) / (c * 1000.0) * 1e4, lam, rtol=0.02)


@pytest.mark.parametrize("c, lam", [(0.001, 421.36), (0.01, 412.00), (0.1, 391.13)])
def test_hcl_proton_hopping_size(c, lam):
    # HCl molar conductivity at 25 degC [S cm^2/mol] against molarity [mol/L],
    # CRC Handbook equivalent conductivity table (from memory). H+ keeps the
    # H3O+ radius (Marcus 1988): measured within 0.2 % to 0.1 mol/L; with
    # Kielland's activity size of H+ (9 A) it would be +2.4 % at 0.1 mol/L.
    e = Electrolyte.salt("HCl", c * 1000.0)
    assert_allclose(float(e.conductivity()) / (c * 1000.0) * 1e4, lam, rtol=0.01)


@pytest.mark.parametrize("n, lam", CACL2_CRC)
def test_cacl2_within_2_percent_to_50mM(n, lam):
    # Source: CACL2_CRC above (CRC Handbook / Shedlovsky & Brown 1934, from memory).
    # Measured with Kielland's hydrated ion sizes: +0.1 % at 0.5 meq/L rising to
    # +1.8 % at 0.1 eq/L (50 mM CaCl2, ionic strength 150 mM); with Pauling's
    # crystal radii it was -3.4 % there. The 2 % target of a 2:1 salt to 100 mM
    # of ionic strength and beyond; the recalled values are trusted to about
    # 0.1 %, well inside the 0.2 % left to the target.
    e = Electrolyte.salt("CaCl2", n / 2 * 1000.0)
    per_eq = float(e.conductivity()) / (n * 1000.0) * 1e4
    assert_allclose(per_eq, lam, rtol=0.02)


@pytest.mark.parametrize("t, k01, k1, k10", KCL_STANDARDS_T)
def test_kcl_standards_0_to_50_degC(t, k01, k1, k10):
    # Source: KCL_STANDARDS_T (published table, 0-50 degC). Measured: 0.01 mol/kg
    # within 0.51 % and 0.1 mol/kg within 0.37 % at every temperature from 0 to
    # 50 degC (largest at 18-20 degC); the Walden rule ("ideal") is -3.8 % at
    # 0 degC and +13.5 % at 50 degC. 1.0 mol/kg: -2.4 % at 25 degC (issue
    # target 3 %), -6.1 % at 0 degC, -0.6 % at 50 degC: the concentration
    # correction is weakest where water is coldest, asserted to 6.5 %.
    T = t + constants.zero_Celsius
    for m, kappa, tol in ((0.01, k01, 0.01), (0.1, k1, 0.01), (1.0, k10, 0.065)):
        if kappa is None:
            continue
        e = Electrolyte.salt("KCl", _molarity_from_molality(m, T=T), temperature=T)
        assert_allclose(float(e.conductivity()) * 1e4, kappa, rtol=tol, err_msg=f"{m} mol/kg")
    e = Electrolyte.salt("KCl", _molarity_from_molality(0.01, T=T), temperature=T,
                         mobility="ideal")
    walden_error = abs(float(e.conductivity()) * 1e4 / k01 - 1)
    assert walden_error > 0.01 or 8 <= t <= 12   # Walden crosses the standard near 10 degC


def test_jones_bradshaw_demal_standard():
    # 0.01 demal KCl (0.745263 g KCl per kg of solution, about 0.01 mol/L):
    # 773.6, 1220.5 and 1408.8 uS/cm at 0, 18, 25 degC (Jones & Bradshaw 1933; from
    # memory). Concentration: 0.745263 g / 74.551 g/mol per kg solution.
    m = 0.745263 / 74.551 / (1.0 - 0.745263e-3)   # mol/kg of water
    for t, kappa in ((0, 773.6), (18, 1220.5), (25, 1408.8)):
        T = t + constants.zero_Celsius
        e = Electrolyte.salt("KCl", _molarity_from_molality(m, T=T), temperature=T)
        assert_allclose(float(e.conductivity()) * 1e4, kappa, rtol=0.01)


# Limiting equivalent ionic conductances [S cm^2/equiv] at 0 and 18 degC: Lange's
# Handbook of Chemistry (J. A. Dean, ed., McGraw-Hill), section 8, table 8.32
# "Limiting equivalent ionic conductances in aqueous solutions", p. 8.157
# (read from the published table; 25 degC column also there).
LANGE_0_18 = {"H+": (224.1, 315.8), "K+": (40.3, 64.6), "Li+": (19.1, 33.4),
              "Na+": (25.85, 43.5), "Mg2+": (28.5, 46.0), "Ca2+": (30.8, 51.0)}


@pytest.mark.parametrize("name", sorted(LANGE_0_18))
def test_cation_limiting_conductivities_against_lange(name):
    # The package's table away from 25 degC is the CRC table from memory; against
    # an independent published table it differs by at most 2.5 % (Na+ at 0 degC;
    # measured): the older data sets themselves disagree by that much.
    ion = ek.ION_TABLE[name]
    for t, lam in zip((0.0, 18.0), LANGE_0_18[name]):
        T = t + constants.zero_Celsius
        ours = F**2 * ion.limiting_diffusivity(T) * abs(ion.valence) / (constants.R * T) * 1e4
        assert_allclose(ours, lam, rtol=0.03, err_msg=f"{name} at {t} degC")


def test_walden_ratio_against_the_table():
    # CRC limiting conductivities at various temperatures (from memory): H+ 225
    # at 0 degC and 630 at 100 degC against 349.65 at 25 degC. The Walden rule
    # misses them; the tabulated dependence reproduces them.
    for T, lam in ((273.15, 225.0), (373.15, 630.0)):
        D = ek.ION_TABLE["H+"].limiting_diffusivity(T)
        assert_allclose(F**2 * D / (constants.R * T) * 1e4, lam, rtol=1e-9)
        walden = ek.ION_TABLE["H+"].diffusivity_at(T)
        assert abs(walden / D - 1) > 0.2
    assert_allclose(walden_ratio("TrisH+", 300.0), 1.0)   # no table: Walden


def test_ideal_option_restores_the_earlier_mobilities():
    # mobility="ideal" is the earlier model exactly: Walden-scaled 25 degC values.
    T = np.array([280.0, 298.15, 350.0])
    e = Electrolyte.salt("NaCl", [[1.0], [100.0]], temperature=T, mobility="ideal")
    for k, name in enumerate(("Na+", "Cl-")):
        assert_allclose(e.diffusivities[k], np.broadcast_to(
            ek.ION_TABLE[name].diffusivity_at(T), (2, 3)), rtol=1e-15)
    assert_allclose(e.conductivity(), e.conductivity("ideal"), rtol=1e-15)


def test_msa_factors_limits_and_bounds():
    # c -> 0: factor -> 1 (within 0.5 % at 1 uM of a 2:2 salt, the limiting law's
    # sqrt(I) term); factors never rise with concentration and stay in (0, 1]
    # for every salt preset over 1 uM - 2 M and 0 - 100 degC (far beyond the
    # theory's range for multivalent salts they stop at the documented floor 0.05).
    c = np.geomspace(1e-3, 2000.0, 30)
    for name in ek.SALTS:
        for T in (273.15, 298.15, 373.15):
            e = Electrolyte.salt(name, c, temperature=T)
            f = e.diffusivities / Electrolyte.salt(name, c, temperature=T,
                                                   mobility="dilute").diffusivities
            assert np.all(f >= 0.05) and np.all(f <= 1.0)
            assert np.all(np.diff(f, axis=1) <= 0)
            assert_allclose(f[:, 0], 1.0, atol=5e-3)


def test_models_listed_and_refused():
    assert set(MOBILITY_MODELS) == {"msa", "dilute", "ideal"}
    with pytest.raises(ValueError, match="mobility"):
        Electrolyte.salt("KCl", 1.0, mobility="walden")
    with pytest.raises(ValueError, match="model"):
        Electrolyte.salt("KCl", 1.0).conductivity("exact")


def test_msa_factors_vectorised():
    c = np.array([[1.0, 10.0, 100.0], [1.0, 10.0, 100.0]])
    D = np.array([[1.957e-9] * 3, [2.032e-9] * 3])
    f = msa_factors([1, -1], c, D, [1.33e-10, 1.81e-10], np.array([280.0, 300.0, 320.0]))
    for j in range(3):
        fj = msa_factors([1, -1], c[:, j:j + 1], D[:, j:j + 1], [1.33e-10, 1.81e-10],
                         [280.0, 300.0, 320.0][j])
        assert_allclose(f[:, j], fj[:, 0], rtol=1e-14)


@pytest.mark.parametrize("model", ["thin", "dh", "pb"])
def test_wide_channel_reports_the_bulk_conductivity(model):
    # A channel much wider than the Debye length at low zeta conducts like the
    # bulk (Ohm's law); the solvers must use the same mobilities as
    # Electrolyte.conductivity(). Double-layer excess at zeta = -0.1 mV over a
    # 100 um slit: below 1e-7 relative.
    for e in (Electrolyte.salt("KCl", 100.0), Electrolyte.buffer("HEPES", 20.0, pH=7.4),
              Electrolyte.mix("TBE", temperature=310.0)):
        r = ek.solve(ek.Slit(gap=1e-4), e, ek.Wall(zeta=-1e-4), model=model)
        assert_allclose(r.conductive, e.conductivity(), rtol=1e-6)
