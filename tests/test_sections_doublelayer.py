"""Double layer and coupling matrix of the 2D sections (ekexplore.sections)."""
import numpy as np
import pytest
from numpy.testing import assert_allclose

import ekexplore as ek
from ekexplore.sections import Ellipse, IsotropicEtch, Polygon, Rectangle, Trapezoid
from ekexplore.sections.meshes import _cached, build_mesh
from ekexplore.sections.solutions import scaled_solution
from ekexplore.transport import _conditions

KCL = ek.Electrolyte.salt("KCl", 1.0)          # Debye length 9.6 nm
NACL10 = ek.Electrolyte.salt("NaCl", 10.0)     # Debye length 3.0 nm

SHAPES = [Rectangle(200e-9, 100e-9),
          Trapezoid.from_sidewall_angle(300e-9, 100e-9),
          IsotropicEtch(100e-9, 80e-9),
          IsotropicEtch(0.0, 80e-9),
          Ellipse(200e-9, 120e-9),
          Polygon([[0, 0], [200e-9, 0], [260e-9, 120e-9], [40e-9, 160e-9]])]
IDS = ["rectangle", "trapezoid", "etch", "semicircle", "ellipse", "polygon"]


@pytest.mark.parametrize("model", ["thin", "dh", "pb"])
def test_circle_ellipse_reduces_to_tube(model):
    # a circular Ellipse is a Tube; the 1D core is the reference. Extrapolated 2D
    # values agree to about 1e-6; the tolerance is the default accuracy, 1e-3
    for zeta in (-0.025, -0.1):
        wall = ek.Wall(zeta=zeta)
        a = ek.solve(Ellipse(100e-9, 100e-9), KCL, wall, model=model, accuracy=1e-3)
        b = ek.solve(ek.Tube(100e-9), KCL, wall, model=model)
        assert_allclose(a.matrix, b.matrix, rtol=1e-4)
        if model == "pb":   # thin and dh also carry their model error (a priori)
            assert a.error_estimate <= 1e-3


@pytest.mark.parametrize("model", ["thin", "dh", "pb"])
def test_wide_rectangle_reduces_to_slit(model):
    # the side walls add corrections linear in h/w; extrapolating w/h = 25 and 50
    # to infinite width must give the slit of the 1D core. The quadratic
    # remainder is about (h/w)^2 ~ 1e-3 at most; we ask 1e-3.
    h = 100e-9
    wall = ek.Wall(zeta=-0.05)
    r1 = ek.solve(Rectangle(25 * h, h), KCL, wall, model=model, accuracy=1e-3)
    r2 = ek.solve(Rectangle(50 * h, h), KCL, wall, model=model, accuracy=1e-3)
    s = ek.solve(ek.Slit(h), KCL, wall, model=model)
    assert_allclose(2 * r2.matrix - r1.matrix, s.matrix, rtol=1e-3)
    # and the finite rectangle itself is within its side-wall correction, ~4 h/w
    assert_allclose(r2.matrix, s.matrix, rtol=4 * h / (50 * h))


@pytest.mark.parametrize("ch", [Rectangle(200e-9, 100e-9), Rectangle(1e-6, 100e-9),
                                Rectangle(100e-9, 300e-9)], ids=["2:1", "10:1", "1:3"])
def test_rectangle_dh_series_matches_2d_dh(ch):
    # the closed-form series and the 2D DH solver solve the same linear problem;
    # they must agree within the 2D solver's own error estimate (<= 1e-3)
    cond = _conditions(ch, KCL, ek.Wall(zeta=-0.03))
    s = ch._kernel(cond, "dh", {"accuracy": 1e-3})
    n = ch._kernel(cond, "dh", {"accuracy": 1e-3, "rectangle_series": False})
    assert s["error"] < 1e-9 < n["error"] <= 1e-3
    tol = float(n["error"])
    for k in ("L11", "L12", "L21"):
        assert_allclose(s[k], n[k], rtol=tol, err_msg=k)
    L22 = lambda o: o["L22_migration"] + o["L22_convection"]   # noqa: E731
    assert_allclose(L22(s), L22(n), rtol=tol)
    # the error estimate is relative to the whole conductive coefficient
    assert_allclose(s["L22_convection"], n["L22_convection"], atol=tol * float(L22(s)))


def test_rectangle_dh_series_reciprocity():
    # L12 from <zeta - psi> and L21 from <rho u_p> are separate series; Onsager
    # reciprocity holds to the series truncation (1e-10)
    cond = _conditions(Rectangle([200e-9, 5e-6], 100e-9), KCL, ek.Wall(zeta=-0.03))
    out = Rectangle([200e-9, 5e-6], 100e-9)._kernel(cond, "dh", {"accuracy": 1e-3})
    assert_allclose(out["L21"], out["L12"], rtol=1e-9)


@pytest.mark.parametrize("ch", SHAPES[1:], ids=IDS[1:])
def test_pb_tends_to_dh_at_small_zeta(ch):
    # the nonlinear terms are of relative order (e zeta / kT)^2 = 1.5e-5 at 0.1 mV
    a = ek.solve(ch, KCL, ek.Wall(zeta=-1e-4), model="pb", accuracy=1e-3)
    b = ek.solve(ch, KCL, ek.Wall(zeta=-1e-4), model="dh", accuracy=1e-3)
    assert_allclose(a.matrix, b.matrix, rtol=1e-6)


@pytest.mark.parametrize("ch", SHAPES, ids=IDS)
@pytest.mark.parametrize("model", ["thin", "dh", "pb"])
def test_reciprocity_and_positive_definite(ch, model):
    # Onsager (1931): L21 = L12, each computed independently; discretely exact up
    # to the Newton tolerance, at any resolution (a coarse accuracy keeps the test
    # fast). The dissipation matrix is positive definite.
    for wall in (ek.Wall(zeta=-0.08), ek.Wall(charge_density=-0.02), ek.Wall(zeta=0.03)):
        r = ek.solve(ch, KCL, wall, model=model, accuracy=1e-2)
        assert float(r.reciprocity_residual) <= 1e-8
        eig = np.linalg.eigvalsh(0.5 * (r.matrix + r.matrix.T))
        assert np.all(eig > 0)
        # sign convention: negative wall potential -> positive off-diagonals
        assert np.sign(r.electroosmotic) == -np.sign(r.wall_potential)
        assert np.sign(r.streaming) == -np.sign(r.wall_potential)


def test_constant_charge_matches_constant_potential_in_thin_limit():
    # an isolated flat wall carrying the Grahame charge of zeta has potential zeta
    # (Grahame 1947, Chem. Rev. 41, 441, doi:10.1021/cr60130a002). With
    # kappa * half-size = 80 the coefficients agree to ~1/(kappa a)^2; we ask 1e-3.
    # The wall potential is a perimeter mean: near each of the four corners (a few
    # Debye lengths, 4 x 3 x 3 nm of the 3 um perimeter ~ 1 %) it is locally
    # higher, so the mean is asked to 1e-2.
    ch = Rectangle(1e-6, 0.5e-6)
    zeta = -0.06
    sigma = ek.grahame_charge(NACL10, zeta)
    a = ek.solve(ch, NACL10, ek.Wall(zeta=zeta), model="pb", accuracy=1e-3)
    b = ek.solve(ch, NACL10, ek.Wall(charge_density=sigma), model="pb", accuracy=1e-3)
    assert_allclose(b.matrix, a.matrix, rtol=1e-3)
    assert_allclose(b.wall_potential, zeta, rtol=1e-2)
    assert_allclose(a.wall_charge, sigma, rtol=1e-2)
    # and the thin model with that charge uses the Grahame potential itself
    t = ek.solve(ch, NACL10, ek.Wall(charge_density=sigma), model="thin")
    assert_allclose(t.wall_potential, zeta, rtol=1e-9)


def test_thin_model_limits():
    # Helmholtz-Smoluchowski: L12 = -eps zeta / eta (common practice), and the
    # streaming coefficient from the wall shear equals it by the discrete force balance
    ch = Trapezoid.from_sidewall_angle(3e-6, 1e-6)
    r = ek.solve(ch, NACL10, ek.Wall(zeta=-0.05), model="thin")
    hs = r.permittivity * 0.05 / r.viscosity
    assert_allclose(r.electroosmotic, hs, rtol=1e-12)
    assert_allclose(r.streaming, hs, rtol=1e-10)
    # conduction = bulk + (P/A) x flat-wall diffuse-layer conductance (Bikerman 1940)
    ks = ek.bikerman_conductance(NACL10, -0.05)
    assert_allclose(r.conductive, r.bulk_conductivity + ch.perimeter / ch.area * ks, rtol=1e-9)
    # the pb model at kappa * half-size ~ 130 is within a few 1/(kappa a) of it
    p = ek.solve(ch, NACL10, ek.Wall(zeta=-0.05), model="pb", accuracy=1e-3)
    assert_allclose(p.electroosmotic, hs, rtol=3.0 / float(p.kappa_size))


def test_auto_records_the_model_per_point():
    ch = Rectangle(2e-6, 1e-6)
    e = ek.Electrolyte.salt("KCl", [0.01, 1.0, 100.0])
    r = ek.solve(ch, e, ek.Wall(zeta=-0.05), model="auto", tol=0.01, accuracy=1e-3)
    assert r.model.shape == (3,)
    assert set(r.model.tolist()) <= {"thin", "dh", "pb"}
    assert r.model[0] != "thin"        # kappa h/2 = 5: the layers are thick
    assert r.model[-1] == "thin"       # kappa h/2 = 520: the slip model holds
    assert np.all(r.error_estimate <= 0.01)


def test_array_inputs_keep_their_shape():
    ch = Ellipse(width=[100e-9, 200e-9], height=100e-9)
    wall = ek.Wall(zeta=[[-0.02], [-0.06], [-0.1]])
    r = ek.solve(ch, KCL, wall, model="pb", accuracy=1e-3)
    assert r.matrix.shape == (3, 2, 2, 2)
    assert r.model.shape == (3, 2)
    # the (1, 0) point equals a scalar solve of the same point
    s = ek.solve(Ellipse(100e-9, 100e-9), KCL, ek.Wall(zeta=-0.06), model="pb", accuracy=1e-3)
    assert_allclose(r.matrix[1, 0], s.matrix, rtol=1e-13)


def test_cache_reuses_meshes_and_results_are_pure():
    ch = Trapezoid(250e-9, 150e-9, 100e-9)
    wall = ek.Wall(zeta=-0.04)
    first = ek.solve(ch, KCL, wall, model="pb", accuracy=1e-3)
    hits = _cached.cache_info().hits
    second = ek.solve(ch, KCL, wall, model="pb", accuracy=1e-3)
    assert _cached.cache_info().hits > hits
    assert_allclose(second.matrix, first.matrix, rtol=0, atol=0)
    # a nearby ionic strength reuses the mesh (grading bucketed in log2 steps of 1/4)
    misses = _cached.cache_info().misses
    ek.solve(ch, ek.Electrolyte.salt("KCl", 1.02), wall, model="pb", accuracy=1e-3)
    assert _cached.cache_info().misses == misses


@pytest.mark.parametrize("model", ["thin", "dh", "pb"])
def test_circle_ion_currents_are_the_tube_ones(model, monkeypatch):
    # A circular Ellipse is a Tube: the 2D solver and the independent 1D one must
    # give the same per-ion currents (each ion's migration plus the convection of
    # its excess over the bulk) and counter-ion share, to the 2D accuracy.
    # (Before the shared model layer the 2D kernel added the bulk advected at the
    # electro-osmotic velocity: share 1.208 against the tube's 0.557.)
    from ekexplore import transport
    monkeypatch.setattr(transport, "_KEEP_PARTS", True)   # per-ion currents kept on the result
    e = ek.Electrolyte(["Na+", "Ca2+", "Cl-"], [1.0, 0.5, 2.0])
    wall = ek.Wall(zeta=-0.05)
    r2 = ek.solve(Ellipse(200e-9, 200e-9), e, wall, model=model, accuracy=1e-4)
    r1 = ek.solve(ek.Tube(200e-9), e, wall, model=model)
    scale = float(r1.conductive)
    assert_allclose(r2._parts["ion_current"], r1._parts["ion_current"], rtol=0,
                    atol=2e-4 * scale)
    assert_allclose(float(r2.counterion_share), float(r1.counterion_share), atol=2e-4)
    assert 0.0 <= float(r2.counterion_share) <= 1.0


def test_pb_convergence_second_order():
    # successive differences of <phi - phi_w> fall by 4 per halving (order >= 1.8)
    w = np.array([0.5, -0.5])
    z = np.array([1.0, -1.0])
    vals = [scaled_solution(build_mesh("etch", (2.0, 2.0), n, 0.1), 100.0, w, z,
                            "potential", -3.0, "pb")["l12"] for n in (16, 32, 64)]
    order = np.log2(abs(vals[1] - vals[0]) / abs(vals[2] - vals[1]))
    assert order > 1.8, order


def test_reported_error_bounds_the_true_error():
    # against the 1D core (tube, pb) the true error of the 2D result is below
    # the reported estimate, at a coarse accuracy setting too
    for acc in (1e-2, 1e-3):
        a = ek.solve(Ellipse(60e-9, 60e-9), KCL, ek.Wall(zeta=-0.1), model="pb", accuracy=acc)
        b = ek.solve(ek.Tube(60e-9), KCL, ek.Wall(zeta=-0.1), model="pb")
        true = np.max(np.abs(a.matrix / b.matrix - 1))
        assert true <= float(a.error_estimate) <= acc


@pytest.mark.parametrize("wall", [ek.Wall(zeta=-0.1), ek.Wall(charge_density=-0.001)],
                         ids=["potential", "charge"])
@pytest.mark.parametrize("model", ["dh", "pb"])
def test_strongly_overlapped_layers_keep_reciprocity(wall, model):
    # kappa * half-size = 2e-3: the potential is nearly uniform (a large Donnan
    # potential for the charged wall) and the coefficients come from its tiny
    # variation; solving for the deviation keeps reciprocity at round-off
    e = ek.Electrolyte.salt("KCl", 0.001)
    for ch in (Rectangle(2.4e-9, 1.2e-9), Polygon(np.array([[0, 0], [2, 0], [1, 1.5]]) * 1.2e-9)):
        if model == "dh" and wall.condition == "charge":
            # the linear model puts this charge at a wall potential of hundreds of
            # volts, beyond the range of every model: refused, naming the model
            with pytest.raises(ValueError, match="model='dh'"):
                ek.solve(ch, e, wall, model=model, accuracy=1e-3)
            continue
        r = ek.solve(ch, e, wall, model=model, accuracy=1e-3)
        assert float(r.kappa_size) < 3e-3
        assert float(r.reciprocity_residual) <= 1e-8
        assert np.all(np.linalg.eigvalsh(0.5 * (r.matrix + r.matrix.T)) > 0)


def test_rectangle_series_equals_the_double_sine_series():
    # Debye-Hueckel in a rectangle W x H at constant potential, double sine series
    # (eigenfunction expansion; common practice):
    #   <zeta - psi>/zeta = kappa^2 sum_{m,n odd} 64 / (pi^4 m^2 n^2 (a_m^2 + b_n^2 + kappa^2)),
    #   a_m = m pi / W, b_n = n pi / H. Summed here directly to m, n < 4000; the
    # truncation tail is below 1e-4 relative. The package sums one index in closed form.
    from ekexplore.sections.series import rectangle_dh
    W, H, kappa = 300e-9, 100e-9, 1.0 / 9.6e-9
    m = np.arange(1, 4000, 2, dtype=float)[:, None]
    n = np.arange(1, 4000, 2, dtype=float)[None, :]
    terms = 64.0 / (np.pi**4 * m**2 * n**2 * ((m * np.pi / W)**2 + (n * np.pi / H)**2 + kappa**2))
    double = kappa**2 * terms.sum()
    assert_allclose(rectangle_dh(W, H, kappa)["one_minus_mean_phi"], double, rtol=1e-4)
    # and the flow: <u> eta / G = sum 64 / (pi^4 m^2 n^2 (a_m^2 + b_n^2)) (same expansion)
    flow = (64.0 / (np.pi**4 * m**2 * n**2 * ((m * np.pi / W)**2 + (n * np.pi / H)**2))).sum()
    assert_allclose(rectangle_dh(W, H, kappa)["mean_u"], flow, rtol=1e-4)


def test_two_meshers_agree_for_a_charged_wall_with_thin_layers():
    # the same 2:1 rectangle meshed as a tensor grid (Rectangle) and as fans
    # (Polygon), constant charge, kappa * half-size = 1e4: both must agree within
    # the sum of their reported errors (this caught a pre-asymptotic coarse level)
    e = ek.Electrolyte.salt("KCl", 100.0)
    s = 2e-5
    wall = ek.Wall(charge_density=-0.05)
    a = ek.solve(Rectangle(2 * s, s), e, wall, model="pb", accuracy=1e-3)
    b = ek.solve(Polygon([[-s, 0], [s, 0], [s, s], [-s, s]]), e, wall, model="pb", accuracy=1e-3)
    tol = float(a.error_estimate + b.error_estimate)
    assert tol <= 2e-3
    assert_allclose(b.matrix, a.matrix, rtol=tol)


def test_a_missed_accuracy_is_said(monkeypatch):
    # Targets met or said: cap the resolution at the coarsest ladder step, so
    # that accuracy 1e-6 cannot be reached; the result must carry an estimate
    # above the target and an AccuracyWarning must say so.
    import warnings
    from ekexplore.models import AccuracyWarning
    from ekexplore.sections import kernel
    monkeypatch.setattr(kernel, "N_MAX", 16)
    monkeypatch.setattr(kernel, "resolution", lambda accuracy: 16)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        r = ek.solve(Rectangle(60e-9, 30e-9), KCL, ek.Wall(zeta=-0.1), model="pb",
                     accuracy=1e-6)
    assert float(r.error_estimate) > 1e-6
    said = [w for w in caught if issubclass(w.category, AccuracyWarning)]
    assert len(said) == 1 and "missed the requested accuracy" in str(said[0].message)


def test_a_met_accuracy_is_not_warned():
    import warnings
    from ekexplore.models import AccuracyWarning
    with warnings.catch_warnings():
        warnings.simplefilter("error", AccuracyWarning)
        r = ek.solve(Rectangle(60e-9, 30e-9), KCL, ek.Wall(zeta=-0.05), model="pb",
                     accuracy=1e-3)
    assert float(r.error_estimate) <= 1e-3
