"""Walls, the Grahame relation and flat-wall surface conductance (ekexplore.wall)."""
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import constants
from scipy.integrate import quad, solve_ivp

from ekexplore import (Electrolyte, Ion, Wall, bikerman_conductance,
                       diffuse_layer_conductance, grahame_charge, grahame_potential,
                       water_relative_permittivity, water_viscosity)
from ekexplore.wall import SIGMA_MAX, STERN_MAX, ZETA_MAX

F = constants.physical_constants["Faraday constant"][0]
R = constants.R
T25 = constants.zero_Celsius + 25.0


def thermal_voltage(T):
    return constants.k * T / constants.e


def mixture_3ion(c=1.0, T=T25):
    """Na+ / Ca2+ / Cl-, electroneutral: a mixture with no closed form."""
    return Electrolyte(["Na+", "Ca2+", "Cl-"], [c, 0.5 * c, 2.0 * c], temperature=T)


MIXTURES = {
    "CaCl2": lambda c=1.0, T=T25: Electrolyte.salt("CaCl2", c, temperature=T),
    "Na2SO4": lambda c=1.0, T=T25: Electrolyte.salt("Na2SO4", c, temperature=T),
    "Na/Ca/Cl": mixture_3ion,
}


# --- Grahame: closed form for z:z ----------------------------------------------------

@pytest.mark.parametrize("z", [1, 2, 3])
@pytest.mark.parametrize("c, T", [(0.1, 280.0), (10.0, T25), (500.0, 340.0)])
def test_grahame_zz_closed_form(z, c, T):
    # Grahame (1947), Chem. Rev. 41, 441, doi:10.1021/cr60130a002, for a z:z salt:
    # sigma = (2 eps kappa kT / ze) sinh(z e zeta / 2kT), computed here.
    e = Electrolyte.symmetric(z, c, temperature=T)
    eps = water_relative_permittivity(T) * constants.epsilon_0
    kappa = 1.0 / e.debye_length
    zeta = np.linspace(-0.15, 0.15, 13) / z
    expected = (2 * eps * kappa * constants.k * T / (z * constants.e)) \
        * np.sinh(z * zeta / (2 * thermal_voltage(T)))
    # quadrature-free formula on both sides: float rounding only
    assert_allclose(grahame_charge(e, zeta), expected, rtol=1e-12, atol=1e-18)
    # and its inverse (2kT/ze) asinh(sigma ze / (2 eps kappa kT))
    sigma = expected
    back = (2 * thermal_voltage(T) / z) * np.arcsinh(
        sigma * z * constants.e / (2 * eps * kappa * constants.k * T))
    assert_allclose(grahame_potential(e, sigma), back, rtol=1e-12, atol=1e-15)


@pytest.mark.parametrize("c_molar", [1e-3, 1e-2, 0.1])
def test_grahame_rule_of_thumb(c_molar):
    # Israelachvili, Intermolecular and Surface Forces (from memory): for 1:1
    # salts at 25 degC sigma = 0.117 sqrt(c [M]) sinh(zeta / 51.4 mV) C/m^2.
    # Tolerance 0.7 %: 0.117 is rounded to 3 figures (0.43 %) and 51.4 mV to
    # +-0.05 mV, which moves sinh by up to 0.2 % for |zeta| <= 100 mV. Measured
    # deviation: 0.25-0.28 %.
    e = Electrolyte.salt("KCl", c_molar * 1000.0)
    zeta = np.array([-0.1, -0.05, -0.02, -0.005, 0.01, 0.03, 0.08])
    rule = 0.117 * np.sqrt(c_molar) * np.sinh(zeta / 0.0514)
    assert_allclose(grahame_charge(e, zeta), rule, rtol=7e-3)


def test_grahame_mixture_by_gauss_law():
    # Independent check of the mixture formula: integrate the nonlinear PB
    # equation across the diffuse layer (scipy solve_ivp on the first integral
    # in x) and get the wall charge from Gauss's law as minus the total
    # diffuse charge, sigma = -int rho_e dx (Grahame 1947, doi:10.1021/cr60130a002).
    for name, make in MIXTURES.items():
        e = make(2.0)
        for zeta in (-0.12, -0.03, 0.04, 0.1):
            prof = _ode_profile_integrals(e, zeta)
            # ODE accumulated error up to ~1e-9 (see below)
            assert_allclose(grahame_charge(e, zeta), prof["sigma"], rtol=1e-8), (name, zeta)


# --- Grahame: inversion ---------------------------------------------------------------

@pytest.mark.parametrize("name", sorted(MIXTURES))
def test_grahame_inversion_mixtures(name):
    e = MIXTURES[name](np.array([0.05, 1.0, 50.0]))
    zeta = np.array([-0.2, -0.08, -1e-3, -1e-7, 0.0, 2e-6, 0.01, 0.09, 0.15])[:, None]
    sigma = grahame_charge(e, zeta)
    assert sigma.shape == (9, 3)
    ok = np.abs(sigma) <= SIGMA_MAX
    back = grahame_potential(e, np.where(ok, sigma, 0.0))
    # bisection to machine precision; a few ulp of zeta, with an absolute floor
    assert_allclose(np.where(ok, back, 0), np.where(ok, zeta, 0), rtol=1e-12, atol=1e-20)


@settings(max_examples=60, deadline=None)
@given(zeta=st.floats(min_value=-ZETA_MAX, max_value=ZETA_MAX).filter(
           lambda v: v == 0.0 or abs(v) > 1e-280),  # no subnormal potentials
       log_c=st.floats(min_value=-3.0, max_value=3.0),
       T=st.floats(min_value=274.0, max_value=372.0),
       name=st.sampled_from(["KCl", "MgSO4", "CaCl2", "Na2SO4", "Na/Ca/Cl"]))
def test_grahame_inversion_property(zeta, log_c, T, name):
    # Property over the whole zeta range: potential(charge(zeta)) = zeta to
    # 1e-11 relative even for vanishing zeta, the charge has the sign of zeta,
    # and nothing is NaN.
    c = 10.0**log_c
    e = MIXTURES[name](c, T) if name in MIXTURES else Electrolyte.salt(name, c, temperature=T)
    sigma = grahame_charge(e, zeta)
    assume(abs(float(sigma)) <= SIGMA_MAX)
    assert np.isfinite(sigma)
    assert np.sign(sigma) == np.sign(zeta)
    assert_allclose(grahame_potential(e, sigma), zeta, rtol=1e-11, atol=0)


def test_grahame_is_odd_for_zz_and_monotone_for_mixtures():
    e = Electrolyte.salt("KCl", 3.0)
    zeta = np.linspace(0, 0.3, 31)
    assert_allclose(grahame_charge(e, -zeta), -grahame_charge(e, zeta), rtol=1e-14)
    for make in MIXTURES.values():
        s = grahame_charge(make(3.0), np.linspace(-0.3, 0.3, 121))
        assert np.all(np.diff(s) > 0)


def test_grahame_broadcasting():
    e = Electrolyte.salt("NaCl", [1.0, 10.0], temperature=[[290.0], [310.0], [330.0]])
    zeta = np.array([-0.05, 0.02])
    assert grahame_charge(e, zeta).shape == (3, 2)
    assert grahame_charge(Electrolyte.salt("NaCl", 1.0), zeta[:, None, None]).shape == (2, 1, 1)
    z3 = np.full((4, 3, 2), -0.03)
    z3_before = z3.copy()
    s = grahame_charge(e, z3)
    assert s.shape == (4, 3, 2)
    np.testing.assert_array_equal(z3, z3_before)
    assert grahame_potential(e, s).shape == (4, 3, 2)


def test_grahame_validation():
    e = Electrolyte.salt("KCl", 1.0)
    with pytest.raises(ValueError, match="zeta") as err:
        grahame_charge(e, 0.7)
    assert "0.6" in str(err.value) and "V" in str(err.value)
    with pytest.raises(ValueError, match="charge_density") as err:
        grahame_potential(e, -1.5)
    assert "C/m^2" in str(err.value)


# --- flat-wall diffuse-layer conductance ----------------------------------------------

def _ode_profile_integrals(e, zeta):
    """Independent flat-wall integrals from the nonlinear PB profile in x.

    Integrates, in X = kappa x, d phi/dX = -sgn(phi_w) sqrt(2 sum_j x_j (e^{-z_j phi} - 1)),
    x_j = c_j / sum z^2 c (the first integral of PB for an electroneutral bulk;
    Grahame 1947), together with the integrands of the per-ion excesses, by
    scipy's DOP853 out to X = 50 (tail below 1e-20).
    """
    z = e.valences
    c = np.asarray(e.concentrations, dtype=float).reshape(len(z))
    T = float(e.temperature)
    x = c / np.sum(z**2 * c)
    vt = thermal_voltage(T)
    phi_w = zeta / vt
    n = len(z)

    def rhs(X, y):
        phi = y[0]
        g = 2.0 * np.sum(x * np.expm1(-z * phi))
        dphi = -np.sign(phi_w) * np.sqrt(max(g, 0.0))
        ex = np.expm1(-z * phi)
        return np.concatenate(([dphi], ex, ex * (phi - phi_w), [np.sum(z * x * ex)]))

    sol = solve_ivp(rhs, (0.0, 50.0), np.r_[phi_w, np.zeros(2 * n + 1)],
                    method="DOP853", rtol=1e-12, atol=1e-16)
    assert sol.success
    kappa = 1.0 / float(e.debye_length)
    yend = sol.y[:, -1]
    I_mig, I_conv = yend[1:n + 1] / kappa, yend[n + 1:2 * n + 1] / kappa
    sigma = -constants.e * constants.N_A * np.sum(z**2 * c) * yend[-1] / kappa
    return {"I_mig": I_mig, "I_conv": I_conv, "sigma": sigma}


def _expected_conductances(e, I_mig, I_conv):
    """The per-ion definitions in the docstring, from given integrals [m]."""
    z = e.valences
    c = np.asarray(e.concentrations, dtype=float).reshape(len(z))
    T = float(e.temperature)
    D = np.asarray(e.diffusivities, dtype=float).reshape(len(z))
    eps = water_relative_permittivity(T) * constants.epsilon_0
    eta = water_viscosity(T)
    mig = z**2 * F**2 * D * c / (R * T) * I_mig
    conv = z * F * c * (eps / eta) * thermal_voltage(T) * I_conv
    return mig, conv


@pytest.mark.parametrize("z", [1, 2])
@pytest.mark.parametrize("zeta", [-0.15, -0.05, -0.005, 0.02, 0.12])
def test_conductance_vs_gouy_chapman_quadrature(z, zeta):
    # Independent numerical integration in x on the Gouy-Chapman profile of a
    # z:z salt, tanh(z phi/4) = tanh(z phi_w/4) exp(-kappa x) (Gouy 1910; Chapman
    # 1913: Gouy, G., J. Phys. Theor. Appl. 9, 457, doi:10.1051/jphystap:019100090045700;
    # Chapman, D. L., Phil. Mag. 25, 475, doi:10.1080/14786440408634187), by
    # scipy.integrate.quad.
    T = 300.0
    e = Electrolyte.symmetric(z, 5.0, 1.2e-9, 2.0e-9, temperature=T)
    kappa = 1.0 / float(e.debye_length)
    phi_w = zeta / thermal_voltage(T)
    t_w = np.tanh(z * phi_w / 4)

    def phi(X):
        return (4.0 / z) * np.arctanh(t_w * np.exp(-X))

    I_mig, I_conv = [], []
    for zi in (z, -z):
        f_mig = lambda X: np.expm1(-zi * phi(X))                        # noqa: E731
        f_conv = lambda X: np.expm1(-zi * phi(X)) * (phi(X) - phi_w)   # noqa: E731
        opts = dict(epsabs=0.0, epsrel=1e-12, limit=200)
        I_mig.append(sum(quad(f_mig, a, b, **opts)[0] for a, b in ((0, 1), (1, 60))) / kappa)
        I_conv.append(sum(quad(f_conv, a, b, **opts)[0] for a, b in ((0, 1), (1, 60))) / kappa)
    exp_mig, exp_conv = _expected_conductances(e, np.array(I_mig), np.array(I_conv))
    mig, conv = diffuse_layer_conductance(e, zeta)
    # 96-point Gauss-Legendre vs adaptive quadrature at 1e-12: allow 1e-9
    assert_allclose(mig, exp_mig, rtol=1e-9)
    assert_allclose(conv, exp_conv, rtol=1e-9, atol=1e-9 * np.max(np.abs(exp_conv)))


def _phi_quadrature_integrals(e, zeta):
    """Independent flat-wall integrals by quadrature in the potential phi.

    On the first integral of the nonlinear PB equation for an electroneutral
    bulk (Grahame 1947, Chem. Rev. 41, 441, doi:10.1021/cr60130a002),
    (d phi/dX)^2 = g(phi) = 2 sum_j x_j (e^{-z_j phi} - 1 + z_j phi),
    x_j = c_j / sum z^2 c, X = kappa x (the z_j phi term adds zero because
    sum x_j z_j = 0, and removes the cancellation near the bulk), the change of
    variable dX = d|phi| / sqrt(g) turns each integral over the layer into one
    over phi between 0 and phi_w, whose integrand stays finite at phi = 0
    (sqrt(g) ~ |phi|). scipy.integrate.quad (QUADPACK; Piessens et al. 1983,
    "QUADPACK: A Subroutine Package for Automatic Integration", Springer,
    doi:10.1007/978-3-642-61786-7) at epsrel 1e-13 on u = phi/phi_w in [0, 1]:
    its error estimate is asserted below 1e-11, well under the 1e-8 asserted.
    """
    z = np.asarray(e.valences, dtype=float)
    c = np.asarray(e.concentrations, dtype=float).reshape(len(z))
    T = float(e.temperature)
    x = c / np.sum(z**2 * c)
    phi_w = zeta / thermal_voltage(T)

    def em1t(t):
        """e^{-t} - 1 + t, by its series where the difference cancels."""
        if abs(t) < 1e-3:
            return t * t / 2 - t**3 / 6 + t**4 / 24 - t**5 / 120
        return np.expm1(-t) + t

    def weight(u):
        """dX/du along the layer: |phi_w| / sqrt(g(u phi_w))."""
        phi = u * phi_w
        g = 2.0 * sum(xj * em1t(zj * phi) for xj, zj in zip(x, z))
        return abs(phi_w) / np.sqrt(g)

    def integral(f):
        val, err = quad(lambda u: f(u * phi_w) * weight(u), 0.0, 1.0, epsabs=0.0,
                        epsrel=1e-13, limit=200)
        assert err <= 1e-11 * max(abs(val), 1e-300)
        return val

    kappa = 1.0 / float(e.debye_length)
    I_mig = np.array([integral(lambda p, zj=zj: np.expm1(-zj * p)) for zj in z]) / kappa
    I_conv = np.array([integral(lambda p, zj=zj: np.expm1(-zj * p) * (p - phi_w))
                       for zj in z]) / kappa
    return {"I_mig": I_mig, "I_conv": I_conv}


@pytest.mark.parametrize("name", sorted(MIXTURES))
@pytest.mark.parametrize("zeta", [-0.12, -0.04, 0.01, 0.08])
def test_conductance_mixtures_vs_pb_ode(name, zeta):
    # Mixtures have no closed-form profile: compare with the per-ion excess
    # integrals of the nonlinear PB layer computed here by quadrature in phi
    # (_phi_quadrature_integrals: Grahame's first integral, QUADPACK at
    # epsrel 1e-13). An earlier reference integrated the profile in x with
    # solve_ivp (rtol 1e-12); its accumulated error reached 1.5e-8 for CaCl2 at
    # 10 mV, above the tolerance, so it was the inaccurate side. Tolerance 1e-8.
    e = MIXTURES[name](3.0, 305.0)
    prof = _phi_quadrature_integrals(e, zeta)
    exp_mig, exp_conv = _expected_conductances(e, prof["I_mig"], prof["I_conv"])
    mig, conv = diffuse_layer_conductance(e, zeta)
    scale = np.max(np.abs(exp_mig))
    assert_allclose(mig, exp_mig, rtol=1e-8, atol=1e-10 * scale)
    assert_allclose(conv, exp_conv, rtol=1e-8, atol=1e-10 * np.max(np.abs(exp_conv)))


def _bikerman_in_test(e, zeta):
    """Bikerman (1940) per Delgado et al. (2005) eq. (A.2), computed here:
    K = sum_+- (2 F^2 c z^2 D_+- / (R T kappa)) (1 + 3 m_+- / z^2) (exp(-+ z e zeta/2kT) - 1),
    m = (2 eps / (3 eta D)) (kT/e)^2."""
    z = abs(e.valences[0])
    c = float(e.concentrations[0])
    T = float(e.temperature)
    eps = water_relative_permittivity(T) * constants.epsilon_0
    eta = water_viscosity(T)
    kappa = 1.0 / float(e.debye_length)
    vt = thermal_voltage(T)
    total = 0.0
    for ion, sign in zip(e.ions, (-1.0 if e.valences[0] > 0 else 1.0,
                                  1.0 if e.valences[0] > 0 else -1.0)):
        D = float(ion.diffusivity_at(T))
        m = 2 * eps / (3 * eta * D) * vt**2
        total += 2 * F**2 * c * z**2 * D / (R * T * kappa) * (1 + 3 * m / z**2) \
            * np.expm1(sign * z * zeta / (2 * vt))
    return total


@pytest.mark.parametrize("salt, c, T", [("KCl", 1.0, T25), ("NaCl", 100.0, 283.15),
                                         ("MgSO4", 0.5, 330.0), ("HCl", 10.0, 360.0)])
@pytest.mark.parametrize("zeta", [-0.2, -0.1, -0.025, -1e-4, 0.03, 0.15])
def test_total_conductance_vs_bikerman(salt, c, T, zeta):
    # Bikerman 1940, Trans. Faraday Soc. 36, 154, doi:10.1039/TF9403600154, as
    # written in Delgado et al. 2005, Pure Appl. Chem. 77, 1753,
    # doi:10.1351/pac200577101753 (closed form computed in the test). Both are
    # exact for the flat-wall Gouy-Chapman layer: agreement to 1e-11.
    # mobility="ideal": the closed form below takes the Walden-scaled table
    # diffusivities (Ion.diffusivity_at), the electrolyte's mobilities in that mode
    e = Electrolyte.salt(salt, c, temperature=T, mobility="ideal")
    mig, conv = diffuse_layer_conductance(e, zeta)
    expected = _bikerman_in_test(e, zeta)
    assert_allclose(np.sum(mig + conv), expected, rtol=1e-11)
    assert_allclose(bikerman_conductance(e, zeta), expected, rtol=1e-12)


@pytest.mark.parametrize("z", [1, 2, 3])
def test_bikerman_high_zeta_custom_salts(z):
    # Same closed form up to |z e zeta / kT| = 20 (the solver range), several
    # temperatures, unequal diffusivities.
    for T in (280.0, 320.0, 365.0):
        e = Electrolyte.symmetric(z, 0.3, 0.7e-9, 2.5e-9, temperature=T, mobility="ideal")
        for zeta in (-min(20.0 * thermal_voltage(T) / z, ZETA_MAX),
                     12.0 * thermal_voltage(T) / z):
            mig, conv = diffuse_layer_conductance(e, zeta)
            assert_allclose(np.sum(mig + conv), _bikerman_in_test(e, zeta), rtol=1e-11)


def test_bikerman_refuses_asymmetric():
    with pytest.raises(ValueError, match="symmetric"):
        bikerman_conductance(Electrolyte.salt("CaCl2", 1.0), -0.05)


def test_conductance_broadcasting():
    e = Electrolyte.salt("KCl", [1.0, 10.0])
    zeta = np.array([-0.1, 0.05, 0.0])[:, None]
    zeta_before = zeta.copy()
    mig, conv = diffuse_layer_conductance(e, zeta)
    assert mig.shape == conv.shape == (2, 3, 2)
    np.testing.assert_array_equal(zeta, zeta_before)
    assert np.all((mig + conv)[:, 2, :] == 0.0)            # zeta = 0: no excess
    bik = bikerman_conductance(e, zeta)
    assert bik.shape == (3, 2)
    assert_allclose(np.sum(mig + conv, axis=0), bik, rtol=1e-11, atol=1e-25)
    for i in range(3):
        for j in range(2):
            s = Electrolyte.salt("KCl", [1.0, 10.0][j])
            m1, c1 = diffuse_layer_conductance(s, float(zeta[i, 0]))
            assert_allclose(mig[:, i, j], m1, rtol=1e-13, atol=1e-30)
            assert_allclose(conv[:, i, j], c1, rtol=1e-13, atol=1e-30)


# --- sign conventions at the shear plane -----------------------------------------------

def test_sign_conventions():
    # Shear plane at the wall (Wall docstring; common practice): a negative zeta
    # means a negative wall charge; cations are the counter-ions, in excess
    # (positive migration conductance), anions are depleted (negative).
    e = Electrolyte.salt("NaCl", 10.0)
    zeta = -0.08
    assert grahame_charge(e, zeta) < 0
    mig, conv = diffuse_layer_conductance(e, zeta)
    na, cl = 0, 1
    assert e.ions[na].valence > 0 and e.ions[cl].valence < 0
    assert mig[na] > 0 and mig[cl] < 0
    assert conv[na] > 0                          # counter-ions carried by electroosmosis
    assert np.sum(mig + conv) > 0                # the layer conducts more than bulk
    # the conductance is not odd in zeta when D+ != D-, but swapping the sign
    # of zeta swaps the roles of the ions
    mig_p, _ = diffuse_layer_conductance(e, -zeta)
    assert mig_p[na] < 0 and mig_p[cl] > 0


# --- Wall --------------------------------------------------------------------------------

def test_wall_constructs():
    w = Wall(zeta=[-0.05, -0.01])
    assert w.condition == "potential" and w.charge_density is None
    assert_allclose(w.zeta, [-0.05, -0.01])
    assert w.shape == (2,)
    w = Wall(charge_density=-0.02, stern_conductance=[0.0, 1e-9, 1e-8])
    assert w.condition == "charge" and w.zeta is None
    assert_allclose(w.charge_density, -0.02)
    assert w.shape == (3,)
    assert "charge_density" in repr(w)


@pytest.mark.parametrize("kwargs, name, bound", [
    ({}, "zeta", None),
    ({"zeta": -0.1, "charge_density": -0.01}, "zeta", None),
    ({"zeta": -0.61}, "zeta", "0.6"),
    ({"zeta": [0.0, 0.7]}, "zeta", "0.6"),
    ({"charge_density": 1.2}, "charge_density", "1"),
    ({"zeta": -0.1, "stern_conductance": -1e-9}, "stern_conductance", "1e-06"),
    ({"zeta": -0.1, "stern_conductance": 2 * STERN_MAX}, "stern_conductance", "1e-06"),
    ({"zeta": np.nan}, "zeta", None),
    ({"zeta": "low"}, "zeta", None),
])
def test_wall_validation(kwargs, name, bound):
    with pytest.raises(ValueError) as err:
        Wall(**kwargs)
    msg = str(err.value)
    assert name in msg
    if bound is not None:
        assert bound in msg and "allowed range" in msg


def test_wall_accepts_range_ends():
    Wall(zeta=[-ZETA_MAX, ZETA_MAX])
    Wall(charge_density=[-SIGMA_MAX, SIGMA_MAX], stern_conductance=STERN_MAX)


def test_custom_ion_in_wall_functions():
    # any Ion works, not only table entries
    e = Electrolyte([Ion("A+", 1, 1e-9), Ion("B-", -1, 1e-9)], [2.0, 2.0], mobility="ideal")
    mig, conv = diffuse_layer_conductance(e, -0.05)
    assert_allclose(np.sum(mig + conv), _bikerman_in_test(e, -0.05), rtol=1e-11)


@settings(max_examples=25, deadline=None)
@given(zetas=st.lists(st.floats(min_value=-0.3, max_value=0.3), min_size=1, max_size=4),
       concs=st.lists(st.floats(min_value=1e-2, max_value=1e3), min_size=1, max_size=3),
       name=st.sampled_from(["KCl", "CaCl2", "Na2SO4", "Na/Ca/Cl"]))
def test_batched_equals_scalar_property(zetas, concs, name):
    # Property: a (zeta x concentration) batch gives, element by element, the
    # scalar numbers of grahame_charge and diffuse_layer_conductance, and no NaN.
    make = MIXTURES.get(name, lambda c: Electrolyte.salt(name, c))
    e = make(np.array(concs))
    zeta = np.array(zetas)[:, None]
    sig = grahame_charge(e, zeta)
    mig, conv = diffuse_layer_conductance(e, zeta)
    assert sig.shape == (len(zetas), len(concs))
    assert mig.shape == conv.shape == (len(e.ions), len(zetas), len(concs))
    assert np.all(np.isfinite(sig)) and np.all(np.isfinite(mig)) and np.all(np.isfinite(conv))
    for i, zi in enumerate(zetas):
        for j, cj in enumerate(concs):
            s = make(cj)
            assert_allclose(sig[i, j], grahame_charge(s, zi), rtol=1e-13, atol=1e-30)
            m1, c1 = diffuse_layer_conductance(s, zi)
            assert_allclose(mig[:, i, j], m1, rtol=1e-12, atol=1e-30)
            assert_allclose(conv[:, i, j], c1, rtol=1e-12, atol=1e-30)
