"""Ions and electrolytes against published data and closed forms (ekexplore.electrolyte)."""
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import constants

from ekexplore import (ION_TABLE, SALTS, Electrolyte, Ion, debye_length, water_density,
                       water_relative_permittivity, water_viscosity)

F = constants.physical_constants["Faraday constant"][0]
R = constants.R
T25 = constants.zero_Celsius + 25.0

# CRC Handbook of Chemistry and Physics, "Ionic conductivity and diffusion at
# infinite dilution", 25 degC (Haynes, W. M., ed., CRC Press; values from memory,
# as listed here). Values are per
# equivalent for the multivalent ions (1/2 Ca2+, 1/2 Mg2+, 1/2 SO4^2-), in
# S cm^2/mol: name -> (z, lambda per equivalent).
CRC_LAMBDA = {
    "H+": (1, 349.65), "Li+": (1, 38.66), "Na+": (1, 50.08), "K+": (1, 73.48),
    "Ca2+": (2, 59.47), "Mg2+": (2, 53.0),
    "OH-": (-1, 198.0), "Cl-": (-1, 76.31), "NO3-": (-1, 71.42), "SO4^2-": (-2, 80.0),
    "HCO3-": (-1, 44.5), "CH3COO-": (-1, 40.9),
}


def molar_ionic_conductivity_SI(name):
    """Molar (per mole of ion) limiting conductivity [S m^2/mol] from the CRC table."""
    z, lam_eq = CRC_LAMBDA[name]
    return abs(z) * lam_eq * 1e-4


REQUIRED_PRESETS = {
    # name -> {ion: stoichiometric number}, ionic strength per mol of salt
    "KCl": ({"K+": 1, "Cl-": 1}, 1.0),
    "NaCl": ({"Na+": 1, "Cl-": 1}, 1.0),
    "LiCl": ({"Li+": 1, "Cl-": 1}, 1.0),
    "KNO3": ({"K+": 1, "NO3-": 1}, 1.0),
    "HCl": ({"H+": 1, "Cl-": 1}, 1.0),
    "NaOH": ({"Na+": 1, "OH-": 1}, 1.0),
    "CaCl2": ({"Ca2+": 1, "Cl-": 2}, 3.0),
    "MgCl2": ({"Mg2+": 1, "Cl-": 2}, 3.0),
    "Na2SO4": ({"Na+": 2, "SO4^2-": 1}, 3.0),
    "MgSO4": ({"Mg2+": 1, "SO4^2-": 1}, 4.0),
}


# --- ions and their diffusivities ---------------------------------------------------

@pytest.mark.parametrize("name", sorted(CRC_LAMBDA))
def test_diffusivity_from_crc_conductivity(name):
    # Source: CRC Handbook, "Ionic conductivity and diffusion at infinite
    # dilution" (values in CRC_LAMBDA above); D = R T Lambda / (z^2 F^2)
    # with Lambda the molar ionic conductivity (= |z| x the per-equivalent value).
    z, _ = CRC_LAMBDA[name]
    expected = R * T25 * molar_ionic_conductivity_SI(name) / (z**2 * F**2)
    ion = ION_TABLE[name]
    assert ion.valence == z
    assert_allclose(ion.diffusivity, expected, rtol=1e-12)


# CRC Handbook, same table, diffusion column [1e-9 m^2/s] (from memory).
CRC_D = {"H+": 9.311, "Li+": 1.029, "Na+": 1.334, "K+": 1.957, "Ca2+": 0.792,
         "Mg2+": 0.706, "OH-": 5.273, "Cl-": 2.032, "NO3-": 1.902, "SO4^2-": 1.065,
         "HCO3-": 1.185, "CH3COO-": 1.089}


@pytest.mark.parametrize("name", sorted(CRC_D))
def test_diffusivity_matches_crc_diffusion_column(name):
    # Source: CRC Handbook diffusion column (from memory). Printed to 4
    # significant figures (<= 0.07 % rounding) and derived with older constants:
    # 0.1 % tolerance.
    assert_allclose(ION_TABLE[name].diffusivity * 1e9, CRC_D[name], rtol=1e-3)


@pytest.mark.parametrize("T", [275.0, 288.15, 310.15, 340.0, 370.0])
def test_stokes_einstein_scaling(T):
    # Stokes-Einstein / Walden scaling D(T) = D25 (T/T25) eta(T25)/eta(T)
    # (Robinson & Stokes, Electrolyte Solutions, 2nd ed., 1959, ch. 11; common
    # practice), computed here from the viscosity.
    for name in ("Na+", "Cl-", "Ca2+"):
        ion = ION_TABLE[name]
        expected = ion.diffusivity * (T / T25) * water_viscosity(T25) / water_viscosity(T)
        assert_allclose(ion.diffusivity_at(T), expected, rtol=1e-13)
        # Walden's rule: lambda * eta is independent of temperature.
        assert_allclose(ion.molar_conductivity_at(T) * water_viscosity(T),
                        ion.molar_conductivity_at(T25) * water_viscosity(T25), rtol=1e-13)


def test_molar_conductivity_at_25C_is_the_crc_value():
    # Source: the CRC Handbook table above (CRC_LAMBDA): Nernst-Einstein z^2F^2D/(RT)
    # returns the tabulated molar ionic conductivity.
    for name in CRC_LAMBDA:
        assert_allclose(ION_TABLE[name].molar_conductivity_at(T25),
                        molar_ionic_conductivity_SI(name), rtol=1e-12)


def test_ion_validation():
    with pytest.raises(ValueError, match="valence"):
        Ion("X", 0, 1e-9)
    with pytest.raises(ValueError, match="valence"):
        Ion("X", 1.5, 1e-9)
    with pytest.raises(ValueError, match="diffusivity") as err:
        Ion("X", 1, -1e-9)
    assert "m^2/s" in str(err.value)
    with pytest.raises(ValueError, match="temperature"):
        ION_TABLE["Na+"].diffusivity_at(400.0)


# --- ionic strength, presets, custom salts ----------------------------------------

@pytest.mark.parametrize("name, ions, factor", [
    ("KCl", ("K+", "Cl-"), 1.0),          # 1:1, I = c
    ("CaCl2", ("Ca2+", "Cl-"), 3.0),      # 2:1, I = (4c + 2c)/2 = 3c
    ("Na2SO4", ("Na+", "SO4^2-"), 3.0),   # 1:2, I = (2c + 4c)/2 = 3c
    ("MgSO4", ("Mg2+", "SO4^2-"), 4.0),   # 2:2, I = (4c + 4c)/2 = 4c
])
def test_ionic_strength(name, ions, factor):
    c = 7.0
    e = Electrolyte.salt(name, c)
    assert tuple(i.name for i in e.ions) == ions
    expected = 0.5 * np.sum(e.valences**2 * e.concentrations)   # definition, computed
    assert_allclose(e.ionic_strength, expected, rtol=1e-14)
    assert_allclose(e.ionic_strength, factor * c, rtol=1e-14)


@pytest.mark.parametrize("name", sorted(REQUIRED_PRESETS))
def test_required_presets(name):
    stoich, factor = REQUIRED_PRESETS[name]
    assert name in SALTS
    c = 12.5
    e = Electrolyte.salt(name, c)
    got = {ion.name: float(ci) / c for ion, ci in zip(e.ions, e.concentrations)}
    assert got == {k: float(v) for k, v in stoich.items()}
    assert_allclose(np.sum(e.valences * e.concentrations), 0.0, atol=1e-12)  # neutral
    assert_allclose(e.ionic_strength, factor * c, rtol=1e-14)
    assert all(ion is ION_TABLE[ion.name] for ion in e.ions)


@pytest.mark.parametrize("name", sorted(SALTS))
def test_every_preset_is_electroneutral(name):
    e = Electrolyte.salt(name, 1.0)
    assert_allclose(np.sum(e.valences * e.concentrations), 0.0, atol=1e-14)


@pytest.mark.parametrize("z", [1, 2, 3, 4])
def test_symmetric_salt(z):
    c = 3.0
    # mobility="ideal": the given 25 degC diffusivities pass through unchanged
    e = Electrolyte.symmetric(z, c, diffusivity_cation=1.1e-9, diffusivity_anion=1.7e-9,
                              mobility="ideal")
    assert list(e.valences) == [z, -z]
    assert_allclose(e.ionic_strength, z**2 * c, rtol=1e-14)
    assert_allclose(e.diffusivities[:, ...], [1.1e-9, 1.7e-9], rtol=1e-13)
    # the default lowers them with concentration (interionic friction), never raises
    d = Electrolyte.symmetric(z, c, diffusivity_cation=1.1e-9,
                              diffusivity_anion=1.7e-9).diffusivities
    assert np.all(d < e.diffusivities) and np.all(d > 0)
    # Debye length of a z:z salt is that of a 1:1 salt at z^2 c (same I).
    assert_allclose(e.debye_length, debye_length(z**2 * c), rtol=1e-14)


@pytest.mark.parametrize("bad", [0, 5, 1.5, -1])
def test_symmetric_salt_valence_refused(bad):
    with pytest.raises(ValueError, match="valence") as err:
        Electrolyte.symmetric(bad, 1.0)
    assert "[1, 4]" in str(err.value)


def test_electroneutrality_refused():
    with pytest.raises(ValueError, match="electroneutral") as err:
        Electrolyte(["Na+", "Cl-"], [10.0, 9.0])
    assert "= 1 mol/m^3" in str(err.value)  # the net charge is named
    with pytest.raises(ValueError, match="electroneutral"):
        Electrolyte(["Ca2+", "Cl-"], [1.0, 1.0])
    # an array with one bad point is refused too
    with pytest.raises(ValueError, match="electroneutral"):
        Electrolyte(["Na+", "Cl-"], [[1.0, 2.0], [1.0, 2.5]])
    # a balanced mixture of three ions is accepted
    e = Electrolyte(["Na+", "Ca2+", "Cl-"], [1.0, 2.0, 5.0])
    assert_allclose(e.ionic_strength, 0.5 * (1 + 4 * 2 + 5), rtol=1e-14)


def test_negative_concentration_refused():
    with pytest.raises(ValueError) as err:
        Electrolyte(["Na+", "Cl-"], [-1.0, -1.0])
    msg = str(err.value)
    assert "concentration of Na+" in msg and "-1" in msg and "mol/m^3" in msg
    with pytest.raises(ValueError, match="concentration"):
        Electrolyte.salt("KCl", [1.0, -2.0])


def test_zero_ionic_strength_refused():
    with pytest.raises(ValueError, match="ionic strength is zero"):
        Electrolyte.salt("KCl", 0.0)


def test_unknown_ion_and_salt_messages():
    with pytest.raises(ValueError) as err:
        Electrolyte(["Xx+", "Cl-"], [1.0, 1.0])
    msg = str(err.value)
    assert "'Xx+'" in msg and "Na+" in msg     # names the bad ion and lists known ones
    with pytest.raises(ValueError) as err:
        Electrolyte.salt("NaI", 1.0)
    msg = str(err.value)
    assert "'NaI'" in msg and "KCl" in msg
    with pytest.raises(ValueError, match="concentrations"):
        Electrolyte(["Na+", "Cl-"], [1.0])


def test_temperature_refused():
    with pytest.raises(ValueError, match="temperature"):
        Electrolyte.salt("KCl", 1.0, temperature=380.0)


# --- Debye length --------------------------------------------------------------------

@pytest.mark.parametrize("I_molar", [1e-5, 1e-3, 1e-2, 0.1, 1.0])
def test_debye_length_rule_of_thumb(I_molar):
    # Source: Israelachvili, Intermolecular and Surface Forces (3rd ed., 2011):
    # 1/kappa = 0.304 nm / sqrt(I [mol/L]) for 1:1 salts at 25 degC (common
    # practice). 0.304 has 3 significant figures (+-0.16 %): tolerance 0.2 %.
    e = Electrolyte.salt("NaCl", I_molar * 1000.0)
    assert_allclose(e.debye_length * 1e9, 0.304 / np.sqrt(I_molar), rtol=2e-3)


@pytest.mark.parametrize("I, T", [(0.01, 275.0), (1.0, 298.15), (150.0, 310.15), (1e3, 360.0)])
def test_debye_length_formula(I, T):
    # kappa^-1 = sqrt(eps_r eps0 k T / (2 N_A e^2 I)), I in mol/m^3 (Debye & Hueckel
    # 1923, Phys. Z. 24, 185), computed here from scipy constants and the
    # Malmberg-Maryott fit.
    eps = water_relative_permittivity(T) * constants.epsilon_0
    expected = np.sqrt(eps * constants.k * T / (2 * constants.N_A * constants.e**2 * I))
    assert_allclose(debye_length(I, T), expected, rtol=1e-13)


def test_debye_length_validation():
    with pytest.raises(ValueError, match="ionic_strength"):
        debye_length(0.0)
    with pytest.raises(ValueError, match="ionic_strength"):
        debye_length(-1.0)
    with pytest.raises(ValueError, match="temperature"):
        debye_length(1.0, 200.0)


# --- broadcasting and purity -------------------------------------------------------

def test_broadcast_concentration_by_temperature():
    c = np.array([0.1, 1.0, 10.0])[:, None]
    T = np.array([280.0, 298.15, 320.0, 350.0])[None, :]
    c0, T0 = c.copy(), T.copy()
    e = Electrolyte.salt("CaCl2", c, temperature=T)
    assert e.shape == (3, 4)
    assert e.concentrations.shape == (2, 3, 4)
    assert e.diffusivities.shape == (2, 3, 4)
    for q in (e.ionic_strength, e.debye_length, e.permittivity, e.viscosity,
              e.conductivity("ideal"), e.conductivity("dho")):
        assert np.shape(q) == (3, 4)
        assert np.all(np.isfinite(q))
    np.testing.assert_array_equal(c, c0)
    np.testing.assert_array_equal(T, T0)
    # each element equals the scalar construction
    for i in range(3):
        for j in range(4):
            s = Electrolyte.salt("CaCl2", float(c[i, 0]), temperature=float(T[0, j]))
            assert_allclose(e.debye_length[i, j], s.debye_length, rtol=1e-14)
            assert_allclose(e.conductivity("dho")[i, j], s.conductivity("dho"), rtol=1e-14)


@settings(max_examples=30, deadline=None)
@given(st.lists(st.floats(min_value=1e-3, max_value=99.0), min_size=1, max_size=5),
       st.floats(min_value=274.0, max_value=372.0),
       st.sampled_from(sorted(REQUIRED_PRESETS)))
def test_batched_equals_scalar(concs, T, name):
    # Property: a batch of concentrations gives, element by element, the
    # scalar numbers (to a few ulp), and leaves the input untouched.
    c = np.array(concs)
    c0 = c.copy()
    e = Electrolyte.salt(name, c, temperature=T)
    lam = e.conductivity("dho") if e.ionic_strength.max() <= 100.0 else None
    for k, ck in enumerate(concs):
        s = Electrolyte.salt(name, ck, temperature=T)
        assert_allclose(e.debye_length[k], s.debye_length, rtol=1e-14)
        assert_allclose(e.conductivity()[k], s.conductivity(), rtol=1e-14)
        if lam is not None:
            assert_allclose(lam[k], s.conductivity("dho"), rtol=1e-13)
    np.testing.assert_array_equal(c, c0)


def test_concentrations_read_only():
    e = Electrolyte.salt("KCl", [1.0, 2.0])
    with pytest.raises(ValueError):
        e.concentrations[0, 0] = 5.0


# --- bulk conductivity ----------------------------------------------------------------

@pytest.mark.parametrize("name", sorted(REQUIRED_PRESETS))
def test_ideal_conductivity_is_sum_lambda_c(name):
    # Kohlrausch's independent migration at infinite dilution: K = sum lambda_i c_i
    # with the CRC molar ionic conductivities (CRC_LAMBDA above; Kohlrausch 1876, common
    # practice).
    c = 2.0
    stoich, _ = REQUIRED_PRESETS[name]
    expected = sum(nu * c * molar_ionic_conductivity_SI(ion) for ion, nu in stoich.items())
    assert_allclose(Electrolyte.salt(name, c).conductivity("ideal"), expected, rtol=1e-12)


ONE_ONE = ["KCl", "NaCl", "LiCl", "KNO3", "HCl", "NaOH"]


def _limiting_slopes(names, T=T25):
    """Fit Lambda = Lambda0 - S sqrt(c [mol/L]) at micromolar c for each salt."""
    c = np.geomspace(1e-4, 1e-2, 7)   # mol/m^3
    L0, S = [], []
    for name in names:
        e = Electrolyte.salt(name, c, temperature=T)
        lam = e.conductivity("dho") / c * 1e4       # S cm^2/mol
        slope, intercept = np.polyfit(np.sqrt(c / 1000.0), lam, 1)
        L0.append(intercept)
        S.append(-slope)
    return np.array(L0), np.array(S)


def test_dho_limiting_law_coefficients():
    # Onsager limiting law for 1:1 salts, Lambda = Lambda0 - (A + B Lambda0) sqrt(c):
    # fit the slope for six salts, then A and B across them.
    L0, S = _limiting_slopes(ONE_ONE)
    B, A = np.polyfit(L0, S, 1)
    # The intercepts are the CRC Lambda0 (CRC_LAMBDA above).
    for name, l0 in zip(ONE_ONE, L0):
        ions = [i for i, _ in SALTS[name]]
        expected = sum(molar_ionic_conductivity_SI(i) for i in ions) * 1e4
        assert_allclose(l0, expected, rtol=1e-9)
    # Closed forms (Robinson & Stokes, Electrolyte Solutions, 2nd ed., ch. 7;
    # from memory): A = 82.50 / (eta[P] sqrt(eps_r T)), B = 8.204e5 / (eps_r T)^1.5,
    # evaluated with the package's water properties. The constants have 4
    # significant figures and predate CODATA 2018: 0.1 % tolerance.
    eta_P = float(water_viscosity(T25)) * 10.0
    er = float(water_relative_permittivity(T25))
    assert_allclose(A, 82.50 / (eta_P * np.sqrt(er * T25)), rtol=1e-3)
    assert_allclose(B, 8.204e5 / (er * T25) ** 1.5, rtol=1e-3)
    # Tabulated values A ~ 60.3 S cm^2 mol^-1 (mol/L)^-1/2 and B ~ 0.229 at
    # 25 degC (Robinson & Stokes; from memory). Those were evaluated with the
    # older water viscosity 0.8937 mPa s and eps_r = 78.54, 0.4 % and 0.3 % off
    # today's IAPWS / Malmberg-Maryott values: tolerance 1 %. Measured here:
    # A = 60.66, B = 0.2300.
    assert_allclose(A, 60.3, rtol=1e-2)
    assert_allclose(B, 0.229, rtol=1e-2)


def _kcl_molarity(m):
    """mol/kg of KCl -> mol/m^3 at 25 degC: c = m / (1/rho_w + m V_phi), with the
    Kell water density and the apparent molar volume of KCl V_phi ~ 27 cm^3/mol
    (from memory; it shifts c by 0.03 % at 0.01 mol/kg and 0.3 % at 0.1 mol/kg)."""
    v_phi = 27e-6
    return m / (1.0 / float(water_density(T25)) + m * v_phi)


# KCl conductivity standards at 25 degC, molality [mol/kg] -> [S/m].
KCL_STANDARDS = [
    (0.001, 146.9e-4),   # 0.001 mol/L KCl 146.9 uS/cm (common practice; from memory);
                         # mol/L vs mol/kg differ by 0.3 % here, inside the tolerance
    (0.01, 1408e-4),     # Wu, Y. C.; Koch, W. F.; Pratt, K. W. (1991). J. Res. NIST 96, 191,
                         # doi:10.6028/jres.096.008, 0.01 mol/kg at 25 C (from memory)
    (0.1, 12.82e-1),     # same source, 0.1 mol/kg at 25 C (from memory)
]


@pytest.mark.parametrize("m, kappa", KCL_STANDARDS[:2])
def test_kcl_standards_dho_below_10mM(m, kappa):
    # The docstring claims the DHO limiting law within 0.8 % of the KCl
    # standards up to 10 mM (measured: -0.4 % at 1 mM, -0.7 % at 10 mM).
    e = Electrolyte.salt("KCl", _kcl_molarity(m))
    assert_allclose(e.conductivity("dho"), kappa, rtol=8e-3)
    assert e.conductivity("dho") < kappa      # the limiting law errs low
    # ideal form: documented +1.7 % at 1 mM and +6 % at 10 mM
    err_ideal = float(e.conductivity("ideal")) / kappa - 1.0
    assert 0.0 < err_ideal < (0.02 if m < 0.005 else 0.065)


def test_kcl_standard_100mM_documented_error():
    # Wu, Koch & Pratt 1991, J. Res. NIST 96, 191: 0.1 mol/kg KCl, 12.82 mS/cm.
    # The docstring says the limiting law is 7 % low and the ideal sum 16 %
    # high here; check the documented figures to +-1 %.
    m, kappa = KCL_STANDARDS[2]
    e = Electrolyte.salt("KCl", _kcl_molarity(m))
    assert -0.08 < float(e.conductivity("dho")) / kappa - 1.0 < -0.06
    assert 0.15 < float(e.conductivity("ideal")) / kappa - 1.0 < 0.17


def test_dho_refusals():
    with pytest.raises(ValueError, match="ionic_strength") as err:
        Electrolyte.salt("KCl", 150.0).conductivity("dho")
    assert "100" in str(err.value)
    with pytest.raises(ValueError, match="binary"):
        Electrolyte(["Na+", "K+", "Cl-"], [1.0, 1.0, 2.0]).conductivity("dho")
    with pytest.raises(ValueError, match="model"):
        Electrolyte.salt("KCl", 1.0).conductivity("exact")
    # a third ion at zero concentration everywhere is fine
    e3 = Electrolyte(["Na+", "K+", "Cl-"], [1.0, 0.0, 1.0])
    assert_allclose(e3.conductivity("dho"), Electrolyte.salt("NaCl", 1.0).conductivity("dho"),
                    rtol=1e-14)


def test_dho_symmetric_salts_relaxation_parameter():
    # For any z:z salt Onsager's q = 1/2 whatever the mobilities (Onsager 1927;
    # Robinson & Stokes ch. 7), so the relaxation term is e^2 z^2 kappa /
    # (12 pi eps k T) * q/(1+sqrt q), computed here; with equal diffusivities the
    # electrophoretic term is z^2 F e kappa / (6 pi eta) per ion.
    T = T25
    for z in (1, 2):
        c = 0.5
        e = Electrolyte.symmetric(z, c, 1.5e-9, 1.5e-9)
        eps = water_relative_permittivity(T) * constants.epsilon_0
        kappa = 1.0 / float(e.debye_length)
        q = 0.5
        relax = z * z * constants.e**2 * kappa / (12 * np.pi * eps * constants.k * T) \
            * q / (1 + np.sqrt(q))
        ephor = z**2 * F * constants.e * kappa / (6 * np.pi * water_viscosity(T))
        lam0 = z**2 * F**2 * 1.5e-9 / (R * T)
        expected = 2 * c * (lam0 * (1 - relax) - ephor)
        assert_allclose(e.conductivity("dho"), expected, rtol=1e-12)
