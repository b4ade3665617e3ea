"""The auto model choice: its error estimates must not undershoot the real error."""
import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants

import ekexplore as ek
from ekexplore.models import estimated_model_errors
from ekexplore.regimes import regime_verdict

VT25 = constants.k * 298.15 / constants.e
K_GRID = np.logspace(-3, 5, 33)[:, None]
PHI_GRID = np.array([0.01, 0.1, 0.5, 1.0, 2.0, 4.0, 8.0, 15.0])[None, :]


def _channel(shape, K, e):
    size = np.clip(2 * K * float(e.debye_length), 1e-9, 1e-2)
    return shape(size)


@pytest.mark.parametrize("salt", ["KCl", "CaCl2", "Na2SO4"])
@pytest.mark.parametrize("shape", [ek.Slit, ek.Tube])
@pytest.mark.parametrize("condition", ["potential", "charge"])
def test_estimates_bound_the_error_against_pb(salt, shape, condition):
    # The reference is the full Poisson-Boltzmann solution (validated against the
    # first-integral quadrature in test_doublelayer.py); an estimate that undershoots
    # would let "auto" return a result worse than the tolerance.
    e = ek.Electrolyte.salt(salt, 0.01)
    zmax = np.max(np.abs(e.valences))
    ch = _channel(shape, K_GRID, e)
    zeta = -PHI_GRID * VT25 / zmax
    if condition == "potential":
        wall = ek.Wall(zeta=zeta)
    else:
        wall = ek.Wall(charge_density=np.clip(ek.grahame_charge(e, zeta), -1, 1))
    rp = ek.solve(ch, e, wall, model="pb")
    c = e.concentrations
    w = (c / np.sum(e.valences[:, None]**2 * c, axis=0)).reshape(-1, 1, 1)
    est = estimated_model_errors(rp.kappa_size, rp.wall_potential / VT25, e.valences,
                                 0 if shape is ek.Slit else 1, condition, weights=w)
    for model in ("thin", "dh"):
        r = ek.solve(ch, e, wall, model=model)
        err = np.max(np.abs(r.matrix - rp.matrix) / np.abs(rp.matrix), axis=(-2, -1))
        meaningful = err > 1e-5   # below that the pb reference's own error matters
        assert np.all(err[meaningful] <= est[model][meaningful]), model


@pytest.mark.parametrize("tol", [0.1, 0.01, 1e-3])
def test_auto_meets_its_tolerance(tol):
    e = ek.Electrolyte.salt("NaCl", 0.01)
    ch = _channel(ek.Slit, K_GRID, e)
    wall = ek.Wall(zeta=-PHI_GRID * VT25)
    ra = ek.solve(ch, e, wall, model="auto", tol=tol)
    rp = ek.solve(ch, e, wall, model="pb")
    err = np.max(np.abs(ra.matrix - rp.matrix) / np.abs(rp.matrix), axis=(-2, -1))
    assert np.all(err <= tol + 1e-6)
    # the cheap models are used where they may be, and the choice is recorded
    models = set(np.unique(ra.model))
    assert models <= {"thin", "dh", "pb"} and len(models) >= 2
    assert np.all(ra.error_estimate[ra.model != "pb"] <= tol)
    assert "Richardson" in ra.error_method and "G/(1-G)" in ra.error_method


def test_auto_prefers_cheap_models_in_their_regimes():
    e = ek.Electrolyte.salt("KCl", 100.0)
    r = ek.solve(ek.Tube(diameter=1e-4), e, ek.Wall(zeta=-0.1), model="auto")
    assert r.model == "thin"
    e = ek.Electrolyte.salt("KCl", 1.0)
    r = ek.solve(ek.Tube(diameter=50e-9), e, ek.Wall(zeta=-0.0005), model="auto")
    assert r.model == "dh"
    r = ek.solve(ek.Tube(diameter=50e-9), e, ek.Wall(zeta=-0.1), model="auto")
    assert r.model == "pb"


def test_regime_verdict_reads_the_numbers():
    e = ek.Electrolyte.salt("KCl", 0.1)
    ch = ek.Slit(gap=20e-9)
    w = ek.Wall(zeta=-0.1)
    r = ek.solve(ch, e, w, model="pb")
    thin = ek.solve(ch, e, w, model="thin")
    ratio = float(thin.electroosmotic / r.electroosmotic)
    text = regime_verdict(float(r.kappa_size), ratio, float(r.dukhin), float(r.counterion_share))
    assert text.startswith("double layers overlap")
    assert f"{ratio:.2g}x" in text
    assert "perm-selective" in text
    assert regime_verdict(500.0, 1.01, 0.01, 0.5).startswith("thin double layers")


def test_estimate_inputs_broadcast():
    est = estimated_model_errors(np.array([1.0, 10.0, 100.0]), 2.0)
    assert est["thin"].shape == (3,)
    assert np.all(np.diff(est["thin"]) < 0)
    assert np.all(np.diff(est["dh"]) < 0)  # overlapped layers are the harder case for dh
