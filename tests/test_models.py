"""The model table, its error estimates and the auto choice: the estimates must not
undershoot the real error, in slits, tubes and 2D sections."""
import zlib

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants

import ekexplore as ek
from ekexplore.models import estimated_model_errors

VT25 = constants.k * 298.15 / constants.e
K_GRID = np.logspace(-3, 5, 33)[:, None]
PHI_GRID = np.array([0.01, 0.1, 0.5, 1.0, 2.0, 4.0, 8.0, 15.0])[None, :]


def _channel(shape, K, e):
    size = np.clip(2 * K * float(e.debye_length), 1e-9, 1e-2)
    return shape(size)


def _solve_each(build, n, model):
    """Matrix and error estimate per point; NaN where solve refuses the point
    (a charge whose linear (dh) wall potential leaves the range of every model).
    ``build(k)`` gives (channel, electrolyte, wall) for an index array k."""
    import warnings
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        try:
            r = ek.solve(*build(np.arange(n)), model=model)
            return r.matrix, r.error_estimate
        except ValueError:
            pass
        M = np.full((n, 2, 2), np.nan)
        est = np.full(n, np.nan)
        for k in range(n):
            try:
                r = ek.solve(*build(k), model=model)
            except ValueError as exc:
                assert "range" in str(exc)
                continue
            M[k], est[k] = r.matrix, r.error_estimate
        return M, est


def _check_estimates(build, n, within):
    """Every thin and dh estimate bounds the true error against pb, and is within
    10 times of it at a fraction ``within`` of the points at least."""
    Mp, _ = _solve_each(build, n, "pb")
    for model in ("thin", "dh"):
        M, est = _solve_each(build, n, model)
        err = np.max(np.abs(M - Mp) / np.abs(Mp), axis=(-2, -1))
        meaningful = err > 1e-5   # below that the pb reference's own error matters
        ratio = est[meaningful] / err[meaningful]
        assert np.all(ratio >= 1.0), (model, np.min(ratio))
        assert np.mean(ratio <= 10.0) >= within[model], (
            model, np.mean(ratio <= 10.0), np.quantile(ratio, [0.5, 0.9]))


# Estimate / true error measured with benchmarks/estimate_ratios.py (seeds 1 and 2,
# 60 and 100 points per salt, shape and wall; pb at accuracy 1e-9), within 1-10 at:
# thin 100 % (potential), 100 % (charge), 99-100 % (regulated silica, alumina, a
# user-defined surface); dh 99.5 %, 98.7 %, 92-96 %. The fractions asserted leave
# a margin for the smaller samples here (150 points, 80 per salt when regulated).
WITHIN = {"potential": {"thin": 0.95, "dh": 0.9}, "charge": {"thin": 0.95, "dh": 0.85},
          "regulated": {"thin": 0.9, "dh": 0.8}}


@pytest.mark.parametrize("salt", ["KCl", "CaCl2", "Na2SO4"])
@pytest.mark.parametrize("shape", [ek.Slit, ek.Tube])
@pytest.mark.parametrize("condition", ["potential", "charge"])
def test_results_carry_an_upper_bound_of_their_error(salt, shape, condition):
    # Every thin and dh result carries an error estimate (the a-priori estimate of
    # the model table); over random points of the whole documented range (kappa a
    # 1e-3 to 1e5, |z e zeta/kT| up to 20 of either sign or the charge that gives
    # it, 0.01-100 mM) it must bound the true error against the full
    # Poisson-Boltzmann solution (validated against the first-integral quadrature
    # in test_doublelayer.py), and be within 10x of it at most points.
    # a seed that is the same in every run (hash() of strings is salted per process)
    rng = np.random.default_rng(zlib.crc32(f"{salt}|{shape.__name__}|{condition}".encode()))
    n = 150
    c = 10 ** rng.uniform(-2, 2, n)
    e = ek.Electrolyte.salt(salt, c)
    zmax = np.max(np.abs(e.valences))
    sizes = np.clip(2 * 10 ** rng.uniform(-3, 5, n) * e.debye_length, 1e-9, 1e-2)
    zeta = rng.choice([-1.0, 1.0], n) * 10 ** rng.uniform(-4, np.log10(20.0), n) * VT25 / zmax
    sigma = np.clip(ek.grahame_charge(e, zeta), -1, 1)

    def build(k):
        wall = ek.Wall(zeta=zeta[k]) if condition == "potential" else ek.Wall(
            charge_density=sigma[k])
        return shape(sizes[k]), ek.Electrolyte.salt(salt, c[k]), wall
    _check_estimates(build, n, WITHIN[condition])


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
    assert "Richardson" in ra.error_method and "g/(1-g)" in ra.error_method


def test_auto_prefers_cheap_models_in_their_regimes():
    e = ek.Electrolyte.salt("KCl", 100.0)
    r = ek.solve(ek.Tube(diameter=1e-4), e, ek.Wall(zeta=-0.1), model="auto")
    assert r.model == "thin"
    e = ek.Electrolyte.salt("KCl", 1.0)
    r = ek.solve(ek.Tube(diameter=50e-9), e, ek.Wall(zeta=-0.0005), model="auto")
    assert r.model == "dh"
    r = ek.solve(ek.Tube(diameter=50e-9), e, ek.Wall(zeta=-0.1), model="auto")
    assert r.model == "pb"


def test_estimate_inputs_broadcast():
    est = estimated_model_errors(np.array([1.0, 10.0, 100.0]), 2.0)
    assert est["thin"].shape == (3,)
    assert np.all(np.diff(est["thin"]) < 0)
    assert np.all(np.diff(est["dh"]) < 0)  # overlapped layers are the harder case for dh


SECTION_CASES = [
    # (shape, salt concentration [mol/m^3], wall): auto picks thin, dh or pb here
    (ek.Rectangle(width=600e-9, depth=300e-9), 100.0, ek.Wall(zeta=-0.002)),
    (ek.Rectangle(width=60e-9, depth=30e-9), 10.0, ek.Wall(zeta=-0.001)),
    (ek.Trapezoid(top_width=900e-9, bottom_width=300e-9, depth=450e-9), 100.0,
     ek.Wall(zeta=-0.08)),
    (ek.IsotropicEtch(mask_width=100e-9, depth=50e-9), 10.0, ek.Wall(charge_density=-2e-4)),
    (ek.Ellipse(width=90e-9, height=60e-9), 3.0, ek.Wall(zeta=-0.05)),
    (ek.Polygon(np.array([[0.0, 0.0], [3.0, 0.0], [3.5, 1.5], [1.5, 2.5], [-0.5, 1.5]])
                * 100e-9), 100.0, ek.Wall(charge_density=-0.005)),
]


@pytest.mark.parametrize("case", range(len(SECTION_CASES)))
def test_auto_choice_in_sections_against_pb(case):
    # For 2D sections the estimates interpolate between the slit and the tube
    # (ekexplore.models); the reference is the 2D pb solve itself at a tighter
    # accuracy (1e-4, checked against closed forms in test_sections_doublelayer.py).
    # auto's result must be within tol of it on every coefficient.
    ch, c, wall = SECTION_CASES[case]
    e = ek.Electrolyte.salt("KCl", c)
    tol = 0.01
    ra = ek.solve(ch, e, wall, model="auto", tol=tol)
    rp = ek.solve(ch, e, wall, model="pb", accuracy=1e-4)
    err = np.max(np.abs(ra.matrix - rp.matrix) / np.abs(rp.matrix))
    assert err <= tol + float(rp.error_estimate), (str(ra.model), err)


def test_auto_choice_in_sections_uses_every_model():
    models = set()
    for ch, c, wall in SECTION_CASES:
        models.add(str(ek.solve(ch, ek.Electrolyte.salt("KCl", c), wall, model="auto").model))
    assert models == {"thin", "dh", "pb"}


def _user_surface():
    from ekexplore.surface import Site, Surface
    # a user-defined wall: carboxyl and amine sites (illustrative numbers, not a material's)
    return Surface([Site(4.8, 2e18, charge=0, name="carboxyl"),
                    Site(9.5, 0.5e18, charge=1, name="amine")], 1.0, name="user")


@pytest.mark.parametrize("surface", ["silica", "alumina", "user"])
@pytest.mark.parametrize("shape", [ek.Slit, ek.Tube])
def test_regulated_wall_estimates_are_upper_bounds(shape, surface):
    # Charge-regulating walls: silica (site parameters of Behrens & Grier 2001,
    # J. Chem. Phys. 115, 6716, doi:10.1063/1.1404988), alumina (van Hal, Eijkel &
    # Bergveld 1996, Adv. Colloid Interface Sci. 69, 31,
    # doi:10.1016/S0001-8686(96)00307-7, as in ekexplore.surface) and a
    # user-defined two-site surface; pH 4-10, KCl, CaCl2 and Na2SO4 0.01-100 mM,
    # kappa a 1e-2-1e4: the thin and dh estimates bound the error against pb and
    # are within 10x of it at most points. (Before the overlapped potential of the
    # regulated wall entered the dh estimate it fell to 0.04 times the error at
    # kappa a ~ 0.2, pH ~ 4.7; the estimate that followed was 17-100 times the
    # error at the median, up to 5e6, and fell to 0.7 on alumina and the user
    # surface in 2:1 and 1:2 salts.)
    from ekexplore.surface import Surface
    make = {"silica": Surface.silica, "alumina": lambda: Surface.alumina(1.0),
            "user": _user_surface}[surface]
    for salt in ("KCl", "CaCl2", "Na2SO4"):
        rng = np.random.default_rng(zlib.crc32(f"{salt}|{shape.__name__}|{surface}".encode()))
        n = 80
        c = 10 ** rng.uniform(-2, 2, n)
        e = ek.Electrolyte.salt(salt, c)
        sizes = np.clip(2 * 10 ** rng.uniform(-2, 4, n) * e.debye_length, 1e-9, 1e-2)
        pH = rng.uniform(4, 10, n)

        def build(k):
            return (shape(sizes[k]), ek.Electrolyte.salt(salt, c[k]),
                    ek.Wall(surface=make(), pH=pH[k]))
        _check_estimates(build, n, WITHIN["regulated"])
