"""Slit and tube coefficients against closed forms and limits."""
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants, special

import ekexplore as ek
from ekexplore import transport

VT25 = constants.k * 298.15 / constants.e
MODELS = ("thin", "dh", "pb")


def kcl(c=1.0, T=298.15):
    return ek.Electrolyte.salt("KCl", c, temperature=T)


@pytest.mark.parametrize("model", MODELS)
def test_hagen_poiseuille_and_plane_poiseuille(model):
    # Hagen-Poiseuille: <u> = a^2 G/(8 eta); plane Poiseuille: <u> = h^2 G/(12 eta)
    # (common practice; e.g. White, Viscous Fluid Flow, 3rd ed., ch. 3).
    e = kcl(10.0)
    eta = float(e.viscosity)
    d = np.array([50e-9, 2e-6, 1e-4])
    rt = ek.solve(ek.Tube(diameter=d), e, ek.Wall(zeta=-0.03), model=model)
    rs = ek.solve(ek.Slit(gap=d), e, ek.Wall(zeta=-0.03), model=model)
    assert_allclose(rt.hydraulic, (d / 2)**2 / (8 * eta), rtol=1e-13)
    assert_allclose(rs.hydraulic, d**2 / (12 * eta), rtol=1e-13)
    # whole channel: Q/dp = pi a^4/(8 eta L) for the tube
    L = 1e-2
    assert_allclose(rt.conductances(L)["flow_per_pressure"], np.pi * (d / 2)**4 / (8 * eta * L),
                    rtol=1e-13)


@pytest.mark.parametrize("Ka", [0.01, 0.3, 1.0, 3.0, 10.0, 100.0, 1e4])
def test_rice_whitehead_electroosmotic_factor(Ka):
    # Rice & Whitehead (1965), J. Phys. Chem. 69, 4017, doi:10.1021/j100782a002:
    # <u_eo> = -(eps zeta E/eta) [1 - 2 I1(Ka)/(Ka I0(Ka))]. Closed form in the dh model
    # (to rounding), and the pb model reaches it at small zeta (error ~ Phi^2/6 = 1.7e-7).
    c = 1e-3 if Ka < 0.1 else 10.0
    e = kcl(c)
    lam = float(e.debye_length)
    zeta = -0.001 * VT25
    r_dh = ek.solve(ek.Tube(diameter=2 * Ka * lam), e, ek.Wall(zeta=zeta), model="dh")
    hs = -float(e.permittivity) * zeta / float(e.viscosity)
    factor = 1 - 2 * special.iv(1, Ka) / (Ka * special.iv(0, Ka)) if Ka < 500 else \
        1 - 2 * special.ive(1, Ka) / (Ka * special.ive(0, Ka))
    # scipy.special near Ka = 0.01 loses digits in 1 - ~1: compare with 1e-9 there
    assert_allclose(float(r_dh.electroosmotic), hs * factor, rtol=1e-9)
    assert_allclose(float(r_dh.streaming), hs * factor, rtol=1e-9)
    r_pb = ek.solve(ek.Tube(diameter=2 * Ka * lam), e, ek.Wall(zeta=zeta), model="pb")
    assert_allclose(float(r_pb.electroosmotic), hs * factor, rtol=1e-6)


@pytest.mark.parametrize("Kd", [0.01, 0.5, 2.0, 20.0, 1e4])
def test_slit_debye_huckel_factor(Kd):
    # Slit DH: psi = zeta cosh(kappa y)/cosh(kappa d); <u_eo> = -(eps zeta E/eta)(1 - tanh(Kd)/Kd)
    # (Burgreen & Nakache 1964, doi:10.1021/j100787a019, low-potential limit).
    c = 1e-3 if Kd < 0.1 else 10.0
    e = kcl(c)
    lam = float(e.debye_length)
    zeta = -0.001 * VT25
    r = ek.solve(ek.Slit(gap=2 * Kd * lam), e, ek.Wall(zeta=zeta), model="dh")
    hs = -float(e.permittivity) * zeta / float(e.viscosity)
    assert_allclose(float(r.electroosmotic), hs * (1 - np.tanh(Kd) / Kd), rtol=1e-8)
    rp = ek.solve(ek.Slit(gap=2 * Kd * lam), e, ek.Wall(zeta=zeta), model="pb")
    assert_allclose(float(rp.electroosmotic), hs * (1 - np.tanh(Kd) / Kd), rtol=1e-6)


def test_helmholtz_smoluchowski_mobility():
    # Helmholtz-Smoluchowski: mu_eo = -eps zeta/eta, about 7.8e-10 m^2/(V s) per mV of
    # zeta in water at 25 degC (Delgado et al. 2005, Pure Appl. Chem. 77, 1753,
    # doi:10.1351/pac200577101753, for the formula; the figure from memory): 7.79e-10 here.
    e = kcl(10.0)
    r = ek.solve(ek.Slit(gap=1e-5), e, ek.Wall(zeta=-0.001), model="thin")
    assert_allclose(float(r.electroosmotic_mobility), 7.8e-10, rtol=0.01)
    assert_allclose(float(r.electroosmotic_mobility),
                    float(e.permittivity) * 0.001 / float(e.viscosity), rtol=1e-13)


@pytest.mark.parametrize("zeta", [-0.15, -0.05, 0.02])
def test_thin_conduction_is_bulk_plus_bikerman(zeta):
    # Bikerman (1940), Trans. Faraday Soc. 36, 154; Delgado et al. (2005) IUPAC,
    # doi:10.1351/pac200577101753: L22 = K_bulk + (P/A)(K_sigma + K_stern).
    e = kcl(1.0)
    K_st = 1e-9
    for ch in (ek.Slit(gap=2e-6), ek.Tube(diameter=2e-6)):
        r = ek.solve(ch, e, ek.Wall(zeta=zeta, stern_conductance=K_st), model="thin")
        p_over_a = float(ch.perimeter / ch.area)
        ref = float(e.conductivity()) + p_over_a * (float(ek.bikerman_conductance(e, zeta)) + K_st)
        assert_allclose(float(r.conductive), ref, rtol=1e-10)


@pytest.mark.parametrize("shape", [ek.Slit, ek.Tube])
@pytest.mark.parametrize("phi", [-1.0, -6.0, -12.0])
def test_pb_tends_to_thin_for_thin_layers(shape, phi):
    # Helmholtz-Smoluchowski and Bikerman become exact as kappa*a -> infinity; the
    # correction is first order in 1/(kappa a) (common practice), so at kappa a = 1e4
    # the models agree to a few 1e-4.
    e = kcl(100.0)
    lam = float(e.debye_length)
    ch = shape(2e4 * lam)
    w = ek.Wall(zeta=phi * VT25)
    rp = ek.solve(ch, e, w, model="pb")
    rt = ek.solve(ch, e, w, model="thin")
    assert_allclose(rp.matrix, rt.matrix, rtol=5e-4)
    ch2 = shape(2e5 * lam)
    rp2 = ek.solve(ch2, e, w, model="pb")
    rt2 = ek.solve(ch2, e, w, model="thin")
    err1 = np.max(np.abs(rp.matrix - rt.matrix) / rt.matrix)
    err2 = np.max(np.abs(rp2.matrix - rt2.matrix) / rt2.matrix)
    assert 5 < err1 / err2 < 20  # first-order convergence in 1/(kappa a)


@pytest.mark.parametrize("shape", [ek.Slit, ek.Tube])
@pytest.mark.parametrize("Ka", [0.05, 1.0, 20.0])
def test_pb_tends_to_dh_at_low_zeta(shape, Ka):
    # Debye-Hueckel is the small-potential limit of Poisson-Boltzmann: the difference
    # falls as zeta^2 (common practice). Check the magnitude and the quadratic rate.
    e = kcl(1e-3 if Ka < 0.1 else 1.0)
    ch = shape(2 * Ka * float(e.debye_length))
    errs = []
    for phi in (-0.1, -0.01):
        w = ek.Wall(zeta=phi * VT25)
        rp = ek.solve(ch, e, w, model="pb")
        rd = ek.solve(ch, e, w, model="dh")
        errs.append(np.max(np.abs(rp.matrix - rd.matrix) / np.abs(rp.matrix)))
    assert errs[0] < 3e-3
    assert errs[1] < 3e-5 or errs[1] < errs[0] / 50


@pytest.mark.parametrize("shape,coef", [(ek.Slit, 1 / 3), (ek.Tube, 1 / 8)])
def test_electroosmosis_vanishes_for_overlapped_layers(shape, coef):
    # As kappa a -> 0 the EO factor goes as (kappa a)^2/3 (slit) and (kappa a)^2/8 (tube),
    # from the series of the closed forms (Burgreen & Nakache 1964; Rice & Whitehead 1965).
    e = kcl(1e-3)
    lam = float(e.debye_length)
    zeta = -0.05
    for Ka in (0.1, 0.01):
        ch = shape(max(2 * Ka * lam, 1e-9))
        Ka_eff = float(ch.half_size) / lam
        r = ek.solve(ch, e, ek.Wall(zeta=zeta), model="pb")
        hs = -float(e.permittivity) * zeta / float(e.viscosity)
        ratio = float(r.electroosmotic) / hs
        # nonlinear PB at phi_w = -1.95: the ratio is sinh(phi)/phi times the DH series
        phi = zeta / VT25
        assert_allclose(ratio, coef * Ka_eff**2 * np.sinh(phi) / phi, rtol=0.05)
        assert ratio < 0.01


def test_constant_charge_equals_constant_potential_at_grahame_potential():
    # Grahame (1947), doi:10.1021/cr60130a002: in the thin-layer limit a wall of charge
    # sigma behaves as a wall at the Grahame potential.
    e = ek.Electrolyte.salt("NaCl", 10.0)
    sigma = -0.03
    zeta = float(ek.grahame_potential(e, sigma))
    ch = ek.Tube(diameter=2e-5)
    for model in ("thin", "pb"):  # dh uses the linear Grahame relation instead
        rq = ek.solve(ch, e, ek.Wall(charge_density=sigma), model=model)
        rz = ek.solve(ch, e, ek.Wall(zeta=zeta), model=model)
        # thin: identical by construction up to the bisection (1e-12); pb: the
        # curvature correction at kappa a = 3300 is ~1/(kappa a) on the wall potential
        assert_allclose(rq.matrix, rz.matrix, rtol=1e-3)
    rz = ek.solve(ch, e, ek.Wall(zeta=zeta), model="pb")
    assert_allclose(float(rz.wall_charge), sigma, rtol=1e-4)


def test_counterion_share_and_sign_conventions():
    e = kcl(0.1)
    # overlapped, high zeta: counter-ions carry nearly all the current (perm-selectivity,
    # Schoch, Han & Renaud 2008, doi:10.1103/RevModPhys.80.839)
    r = ek.solve(ek.Slit(gap=20e-9), e, ek.Wall(zeta=-0.1), model="pb")
    assert float(r.counterion_share) > 0.95
    assert float(r.electroosmotic) > 0 and float(r.streaming) > 0
    assert float(r.streaming_potential_coefficient) < 0
    # wide channel: close to the bulk transference number of K+ in KCl,
    # 73.48/(73.48 + 76.31) = 0.4905 (CRC limiting conductivities)
    r = ek.solve(ek.Slit(gap=1e-4), e, ek.Wall(zeta=-0.01), model="pb")
    assert 0.48 < float(r.counterion_share) < 0.5
    # positive wall: anions are counter-ions, off-diagonals negative
    r = ek.solve(ek.Slit(gap=20e-9), e, ek.Wall(zeta=0.1), model="pb")
    assert float(r.counterion_share) > 0.95
    assert float(r.electroosmotic) < 0 and float(r.streaming) < 0


def test_asymmetric_and_mixed_electrolytes_run_in_every_model():
    e = ek.Electrolyte(["Na+", "K+", "Cl-", "SO4^2-"], [5.0, 5.0, 6.0, 2.0])
    for model in MODELS:
        r = ek.solve(ek.Tube(diameter=30e-9), e, ek.Wall(zeta=-0.06), model=model)
        assert np.all(np.isfinite(r.matrix))
        if model == "pb":
            assert float(r.reciprocity_residual) < 1e-8


def test_ion_currents_of_a_wide_channel_are_the_bulk_ones(monkeypatch):
    # Far from the walls each ion carries its Nernst-Einstein share of the bulk
    # current, z_i^2 F^2 D_i c_i/(R T) (Kohlrausch's independent migration; common
    # practice); a 100 um tube at 16 mM adds a wall part of order P/(A kappa) ~ 1e-4.
    e = ek.Electrolyte(["Na+", "K+", "Cl-", "SO4^2-"], [5.0, 5.0, 6.0, 2.0])
    F = constants.physical_constants["Faraday constant"][0]
    lam = e.valences**2 * F**2 * e.diffusivities / (constants.R * 298.15) * e.concentrations
    monkeypatch.setattr(transport, "_KEEP_PARTS", True)   # per-ion currents kept on the result
    for model in MODELS:
        r = ek.solve(ek.Tube(diameter=1e-4), e, ek.Wall(zeta=-0.03), model=model)
        assert_allclose(r._parts["ion_current"], lam, rtol=1e-3)
        # the public figure built from them: the cations' share of the current
        assert_allclose(r.counterion_share, np.sum(lam[:2]) / np.sum(lam), rtol=1e-3)


@pytest.mark.parametrize("m", [0, 1])
@pytest.mark.parametrize("K", [1e-2, 0.7, 5.0, 40.0, 300.0])
def test_dh_closed_forms_against_quadrature(m, K):
    # In the dh model L12 = L21 is an identity (Green's identity turns the
    # streaming integral into the electro-osmotic one), so reciprocity cannot
    # fail there; what can fail are the two closed forms. Each is checked here
    # against an independent quadrature (scipy.integrate.quad) of the DH
    # potential psi/zeta = cosh(K s)/cosh K (slit) or I0(K s)/I0(K) (tube; Rice &
    # Whitehead 1965, J. Phys. Chem. 69, 4017, doi:10.1021/j100782a002):
    # electro-osmotic 1 - <psi/zeta>, streaming K^2 <(psi/zeta) u_hat> with the
    # Poiseuille profile u_hat = (1 - s^2)/(2(m+1)), means over the section.
    from scipy.integrate import quad
    from ekexplore.kernels1d import _one_minus_mean_factor, _streaming_factor
    if m == 0:
        def psi(s):
            return np.exp(K * (s - 1.0)) * (1.0 + np.exp(-2.0 * K * s)) / (1.0 + np.exp(-2.0 * K))
    else:
        def psi(s):
            return special.ive(0, K * s) / special.ive(0, K) * np.exp(K * (s - 1.0))
    weight = (lambda s: 1.0) if m == 0 else (lambda s: 2.0 * s)
    pts = [1.0 - 10.0 / K] if K > 10 else None
    mean = quad(lambda s: weight(s) * psi(s), 0.0, 1.0, epsabs=0, epsrel=1e-13, limit=200,
                points=pts)[0]
    stream = K**2 * quad(lambda s: weight(s) * psi(s) * (1 - s**2) / (2.0 * (m + 1)), 0.0, 1.0,
                         epsabs=0, epsrel=1e-13, limit=200, points=pts)[0]
    Ka = np.array([K])
    assert_allclose(_one_minus_mean_factor(m, Ka)[0], 1.0 - mean, rtol=1e-9)
    assert_allclose(_streaming_factor(m, Ka)[0], stream, rtol=1e-9)


@pytest.mark.parametrize("shape", [ek.Slit, ek.Tube])
def test_constant_charge_reciprocity_at_strongly_charged_thin_layers(shape):
    # Onsager (1931), doi:10.1103/PhysRev.37.405: L12 = L21, computed independently.
    # At strongly charged constant-charge walls and kappa a 3e2-2e4 a Newton stop at
    # 1e-6 left residuals up to 1e-6; the discrete scheme is reciprocal by summation
    # by parts, so what remains is the Newton error.
    e = ek.Electrolyte.salt("CaCl2", 0.1)
    K = np.logspace(2.5, 4.3, 24)
    h = 2 * K * float(e.debye_length)
    r = ek.solve(shape(h), e, ek.Wall(charge_density=-1.0), model="pb")
    assert np.max(r.reciprocity_residual) < 1e-10
