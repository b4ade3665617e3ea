"""Regression record: the numbers of a fixed set of points must not move.

The file ``tests/data/regression_v1.npz`` holds the coupling matrix, the two
parts of the conductive coefficient, the per-ion currents, the wall potential
and charge, the error estimate and the model chosen, for several hundred
fixed points: every shape (Slit, Tube, Rectangle, Trapezoid, IsotropicEtch,
Ellipse, Polygon), every model (thin, dh, pb, auto), both wall conditions,
four electrolytes (1:1, 2:1, 1:2 and a three-ion mixture) and four
temperatures. It was recorded before the model layer was restructured, so
this test guards the restructuring: every number must agree to 1e-12
relative (the round-off of a double-precision computation done in a
different order), apart from the changes listed in ``EXPLAINED`` below, each
with its reason.

Every electrolyte is built by :func:`electrolyte` from ions defined here,
with fixed diffusivities, so that changes to the package's ion table do not
move the record. To record again (only when a change of the numbers is
intended and explained): ``python tests/test_regression.py --record``.
"""
from __future__ import annotations

import os
import sys
import warnings
from types import SimpleNamespace

import numpy as np
import pytest

import ekexplore as ek

DATA = os.path.join(os.path.dirname(__file__), "data", "regression_v1.npz")
RTOL = 1e-12
#: Error estimates are differences of nearly equal values on two grids (or
#: levels), so a round-off of 1e-16 in those values shows in them as about
#: 1e-16 absolute, however small the estimate: they are compared to 1e-14
#: absolute as well (a change far below any accuracy asked for). The 2D
#: Newton iteration stops at 1e-12 of the potential's spread, so there a
#: different start (the Donnan offset, found by one shared bisection since
#: the model layer) moves the levels by up to that: 1e-12 absolute.
ERROR_ATOL = 1e-14
ERROR_ATOL_SECTIONS = 1e-12

SECTIONS = ("Rectangle", "Trapezoid", "IsotropicEtch", "Ellipse", "Polygon")


def _is_section(label):
    return label.split("|")[0] in SECTIONS


def _bulk_advection(result):
    """Per-ion current of the bulk carried at the mean electro-osmotic
    velocity, z_i F c_i L12 [S/m], shape (n_ions, *shape)."""
    from scipy import constants
    F = constants.physical_constants["Faraday constant"][0]
    return result._cond.z_b() * F * result._cond.concentrations * result.electroosmotic


def _refined_tolerance(old_error, result):
    # A section point whose levels missed the accuracy after one refinement
    # stopped there before (silently; e.g. Ellipse, charge wall, kappa a = 178:
    # mesh error 6e-3 at n = 48 for accuracy 1e-3); since targets are met or
    # said, it refines on as far as its estimate asks (n = 96: 2e-5). Such a
    # point may move, but only within the error its old result reported.
    # Since the 2D estimate describes the extrapolated value (four levels,
    # ekexplore.sections.extrapolation.extrapolated_error), a point stops
    # refining where its own estimate meets the accuracy, which may be earlier
    # or later than before: both results bound their distance to the same exact
    # value by their estimates, so they may differ by the sum of the two.
    return np.maximum(RTOL, old_error + np.asarray(result.error_estimate))


def _sections_values(new, old, result, old_error):
    if np.allclose(new, old, rtol=RTOL, atol=0.0):
        return
    tol = _refined_tolerance(old_error, result)
    tol = tol.reshape(np.shape(tol) + (1,) * (np.ndim(new) - np.ndim(tol)))
    assert np.all(np.abs(new - old) <= tol * np.abs(old)), "moved beyond the old error"


def _sections_ion_current(new, old, result, old_error):
    # The 2D kernel counted each ion's convection as <c_i/c_i,b d>, which
    # includes the bulk advected at the electro-osmotic velocity, z_i F c_i
    # L12; the slit and tube kernels (and the counter-ion share's definition)
    # count only the excess over the bulk, <(c_i/c_i,b - 1) d>. Since the one
    # model layer, sections count the excess too: the change must be exactly
    # that bulk term.
    bulk = _bulk_advection(result)
    tol = _refined_tolerance(old_error, result)
    scale = np.maximum(np.abs(old), np.max(np.abs(bulk)))
    assert np.all(np.abs(new + bulk - old) <= tol * scale), "ion currents beyond the bulk term"


def _sections_convection(new, old, result, old_error):
    # The old sum over ions included the bulk terms above, which cancel
    # (sum_i z_i c_i = 0) but leave a round-off of about 1e-16 of their size;
    # compare to 1e-12 of that size.
    bulk = _bulk_advection(result)
    tol = _refined_tolerance(old_error, result)
    assert np.all(np.abs(new - old) <= tol * np.maximum(np.abs(old), np.max(np.abs(bulk))))


def result_label(result):
    return type(result.channel).__name__


def _sections_error(new, old, result, old_error):
    # The 2D estimate was the difference of the extrapolations of levels (n/2, n)
    # and (n, 2n), about 15 times the error of the value returned where the
    # levels converge at fourth order; it is now the error of the returned value
    # itself (levels n/2, 3n/4, n, 2n; ekexplore.sections.extrapolation), so it
    # can be lower or higher (at thin layers and corners it was not an upper
    # bound). tests/test_sections_kernel.py checks it against finer solves and
    # the tube; here it must stay positive wherever the old one was (a zero
    # would claim an exact result) and, since both bound the same error,
    # within the factor 2,000 of each other that their measured ranges allow
    # (old 0.82-509, new 1.17-315 times the error at the same 189 points).
    assert np.all(new[old > 0] > 0)
    ratio = new[old > 0] / old[old > 0]
    assert np.all((ratio > 1.0 / 2000.0) & (ratio < 2000.0)), ratio


def _forced_closed_form(label):
    return label.split("|")[3] in ("thin", "dh")


def _forced_estimates(new, old, result, old_error):
    # A thin or dh result asked for by name reported an error estimate of 0 in
    # slits and tubes, and only the mesh error in sections; it now carries the
    # a-priori estimate of the model table (the one auto uses), an upper bound
    # of its true error (tests/test_models.py). So it can only have grown, and
    # must be positive.
    assert np.all(new > 0)
    if not _is_section(result_label(result)):
        assert np.all(new >= old)


def _charge_newton(label):
    parts = label.split("|")
    return (not _is_section(label) and parts[2].startswith("charge_density")
            and parts[3] in ("pb", "auto"))


def _charge_newton_values(new, old, result, old_error):
    # 1D pb at constant-charge walls: Newton now stops at 1e-10 instead of 1e-6
    # (the old stop left errors that showed as reciprocity residuals up to 1e-6 at
    # strongly charged walls); here that moves values by up to 2e-12 relative
    np.testing.assert_allclose(new, old, rtol=1e-11, atol=0.0)


#: Changes of the recorded numbers that are intended: (field, predicate on the
#: case label) -> the check that replaces plain agreement, with its reason.
EXPLAINED: dict = {
    ("ion_current", _is_section): _sections_ion_current,
    ("L22_convection", _is_section): _sections_convection,
    ("error_estimate", _forced_closed_form): _forced_estimates,
}


def _pb_1d(label):
    return not _is_section(label) and label.split("|")[3] in ("pb", "auto")


def _pb_1d_error(new, old, result, old_error):
    # The 1D pb estimate was the Richardson difference of its two grids, which
    # describes the finer grid, not the extrapolated value returned (measured
    # 340-2.6e5 times its true error); it is now the three-grid estimate of the
    # extrapolated value's own error (tests/test_kernels1d.py checks it against
    # Gouy-Chapman and solve_bvp references: 2-14 times the true error). The
    # values are unchanged; at pb points the estimate must have fallen by at least
    # 10x and stay positive where the wall is charged. Points auto gave to thin
    # or dh carry the a-priori estimates of the model table, which were
    # tightened since (see _auto_choice_changed): positive and within auto's
    # tolerance (1 %).
    pb = np.asarray(result.model) == "pb"
    assert np.all(new[pb] <= 0.1 * old[pb]), (new[pb], old[pb])
    assert np.all(new[pb & (old > 0)] > 0)
    assert np.all((new[~pb] > 0) & (new[~pb] <= 0.01)), new[~pb]


EXPLAINED[("error_estimate", _pb_1d)] = _pb_1d_error
for _field in ("matrix", "L22_migration", "L22_convection", "ion_current", "wall_potential"):
    EXPLAINED[(_field, _charge_newton)] = _charge_newton_values
EXPLAINED[("error_estimate", lambda label: _is_section(label)
            and not _forced_closed_form(label))] = _sections_error
def _sections_wall_values(new, old, result, old_error):
    # The 2D estimate covers the coefficients, not the wall charge (constant
    # potential, from the mean charge density) or potential (other walls),
    # which converge more slowly: at the thin-layer points of the record
    # (kappa a 170-200, dh) the old wall charge was 0.9-1.4 % off an
    # accuracy-1e-5 solve where the estimate said 0.14-0.18 %, and a point that
    # now stops at a coarser level is 0.5 % off with an estimate of 0.05 %
    # (measured 2026-12). So the wall figures may move by up to ten times the
    # two estimates.
    if np.allclose(new, old, rtol=RTOL, atol=0.0):
        return
    tol = 10.0 * _refined_tolerance(old_error, result)
    assert np.all(np.abs(new - old) <= tol * np.abs(old)), "moved beyond the errors"


for _field in ("matrix", "L22_migration"):
    EXPLAINED[(_field, _is_section)] = _sections_values
for _field in ("wall_potential", "wall_charge"):
    EXPLAINED[(_field, _is_section)] = _sections_wall_values

# Ions with fixed diffusivities [m^2/s] (values of the order of K+, Cl-, Ca2+,
# SO4 2-, Na+ at 25 C; only their being fixed matters here).
_CATION = ek.Ion("A+", 1, 1.96e-9)
_ANION = ek.Ion("X-", -1, 2.03e-9)
_DICATION = ek.Ion("B2+", 2, 0.79e-9)
_DIANION = ek.Ion("Y2-", -2, 1.07e-9)
_CATION2 = ek.Ion("C+", 1, 1.33e-9)

SALTS = ("1:1", "2:1", "1:2", "mix")


def electrolyte(salt, c, T):
    """The one place where the test builds an electrolyte.

    ``c`` is the salt concentration [mol/m^3] (array), ``T`` [K].
    """
    c = np.asarray(c, dtype=float)
    if salt == "1:1":
        ions, conc = (_CATION, _ANION), (c, c)
    elif salt == "2:1":
        ions, conc = (_DICATION, _ANION), (c, 2.0 * c)
    elif salt == "1:2":
        ions, conc = (_CATION2, _DIANION), (2.0 * c, c)
    else:   # three ions: 1 part C+, 0.5 part B2+, 2 parts X-
        ions, conc = (_CATION2, _DICATION, _ANION), (c, 0.5 * c, 2.0 * c)
    # mobility="ideal": the recorded numbers predate the concentration- and
    # temperature-dependent mobilities; this option reproduces that model exactly.
    return ek.Electrolyte(ions, conc, temperature=T, mobility="ideal")


MODELS = ("thin", "dh", "pb", "auto")
TEMPERATURES = (283.15, 298.15, 323.15, 353.15)
ZETAS = (-0.025, -0.075, 0.05, -0.1)
CHARGES = (-0.002, -0.01, 0.005, -0.02)


def _shape_1d(name, sizes):
    return ek.Slit(gap=sizes) if name == "Slit" else ek.Tube(diameter=sizes)


def _shape_2d(name, scale):
    if name == "Rectangle":
        return ek.Rectangle(width=4.0 * scale, depth=2.0 * scale)
    if name == "Trapezoid":
        return ek.Trapezoid(top_width=3.0 * scale, bottom_width=1.0 * scale, depth=1.5 * scale)
    if name == "IsotropicEtch":
        return ek.IsotropicEtch(mask_width=2.0 * scale, depth=1.0 * scale)
    if name == "Ellipse":
        return ek.Ellipse(width=3.0 * scale, height=2.0 * scale)
    return ek.Polygon(np.array([[0.0, 0.0], [3.0, 0.0], [3.5, 1.5], [1.5, 2.5], [-0.5, 1.5]])
                      * scale)


def cases():
    """The fixed points, as (label, callable returning a Result)."""
    out = []
    k = 0
    # slits and tubes: 4 sizes x 2 concentrations per group, in one batch call
    for shape in ("Slit", "Tube"):
        for salt in SALTS:
            for wall in ("zeta", "charge_density"):
                for model in MODELS:
                    T = TEMPERATURES[k % 4]
                    v = (ZETAS if wall == "zeta" else CHARGES)[k % 4]
                    sizes = np.array([40e-9, 300e-9, 3e-6, 50e-6])
                    conc = np.array([[1.0], [100.0]])
                    label = f"{shape}|{salt}|{wall}={v}|{model}|T={T}"

                    def run(shape=shape, salt=salt, wall=wall, v=v, model=model, T=T,
                            sizes=sizes, conc=conc):
                        return ek.solve(_shape_1d(shape, sizes), electrolyte(salt, conc, T),
                                        ek.Wall(**{wall: v}), model=model)
                    out.append((label, run))
                    k += 1
    # 2D sections: one or two points per group (the solves take 0.05-0.3 s each)
    for shape in ("Rectangle", "Trapezoid", "IsotropicEtch", "Ellipse", "Polygon"):
        for wall in ("zeta", "charge_density"):
            for model in MODELS:
                salt = SALTS[k % 4]
                T = TEMPERATURES[(k // 4) % 4]
                v = (ZETAS if wall == "zeta" else CHARGES)[k % 4]
                scale = 30e-9 if shape == "Polygon" else (30e-9, 60e-9)[k % 2]
                conc = np.array([0.5, 2.0]) if k % 4 == 0 else 1.0
                label = f"{shape}|{salt}|{wall}={v}|{model}|T={T}|scale={scale}"

                def run(shape=shape, salt=salt, wall=wall, v=v, model=model, T=T,
                        scale=scale, conc=conc):
                    return ek.solve(_shape_2d(shape, scale), electrolyte(salt, conc, T),
                                    ek.Wall(**{wall: v}), model=model)
                out.append((label, run))
                k += 1
        # thin double layers at low potential, where auto picks thin or dh
        for wall, v in (("zeta", -0.004), ("charge_density", -0.0005)):
            T = TEMPERATURES[k % 4]
            label = f"{shape}|1:1|{wall}={v}|auto|T={T}|scale=3e-07|c=30,300"

            def run(shape=shape, wall=wall, v=v, T=T):
                return ek.solve(_shape_2d(shape, 300e-9),
                                electrolyte("1:1", np.array([30.0, 300.0]), T),
                                ek.Wall(**{wall: v}), model="auto")
            out.append((label, run))
            k += 1
    return out


FIELDS = ("matrix", "L22_migration", "L22_convection", "ion_current", "wall_potential",
          "wall_charge", "error_estimate")


def _record(result):
    out = {f: np.asarray(getattr(result, f, None) if f in ("matrix", "wall_potential",
                                                            "wall_charge", "error_estimate")
                         else result._parts[f], dtype=float) for f in FIELDS}
    out["model"] = np.asarray(result.model).astype(str)
    return out


def _run(run):
    # the kernel's parts of L22 and per-ion currents are kept on the result
    # only when asked (they cost memory and no public figure needs them)
    from ekexplore import transport
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        transport._KEEP_PARTS = True
        try:
            return run()
        finally:
            transport._KEEP_PARTS = False


def record():
    data = {}
    labels = []
    for i, (label, run) in enumerate(cases()):
        rec = _record(_run(run))
        labels.append(label)
        for f, v in rec.items():
            data[f"{i}/{f}"] = v
    data["labels"] = np.array(labels)
    os.makedirs(os.path.dirname(DATA), exist_ok=True)
    np.savez_compressed(DATA, **data)
    n = sum(data[f"{i}/matrix"].size // 4 for i in range(len(labels)))
    print(f"recorded {len(labels)} groups, {n} points to {DATA}")


@pytest.fixture(scope="module")
def stored():
    with np.load(DATA) as f:
        return {k: f[k] for k in f.files}


CASES = cases()


def test_record_has_every_case(stored):
    assert list(stored["labels"]) == [label for label, _ in CASES]


def _auto_1d(label):
    return not _is_section(label) and label.split("|")[3] == "auto"


def _auto_choice_changed(rec, old, changed, label):
    # The thin and dh estimates were tightened (estimate / true error against pb
    # from up to 3,551 (thin) and 1.4e6 (dh, regulated walls) down to about 10 at
    # most points, still upper bounds; benchmarks/estimate_ratios.py and
    # tests/test_models.py), so auto (tol 1 %) may now pick another model at a
    # point where the two estimates straddle the tolerance. Both the old and the
    # new choice are within 1 % of pb, so the matrices agree to 2 % plus the pb
    # error; a closed-form choice carries an estimate within the tolerance.
    tol = 0.01
    new_m, old_m = rec["matrix"][changed], old["matrix"][changed]
    assert np.all(np.abs(new_m - old_m) <= 2.0 * tol * np.abs(old_m) + 1e-300), label
    cheap = np.isin(rec["model"][changed], ("thin", "dh"))
    est = rec["error_estimate"][changed]
    assert np.all((est[cheap] > 0) & (est[cheap] <= tol)), label


def _keep(a, mask):
    """The entries of a field at the points of ``mask`` (point axes leading, or
    after the ion axis)."""
    a = np.asarray(a)
    if a.shape[:mask.ndim] == mask.shape:
        return a[mask]
    return a[:, mask]


@pytest.mark.parametrize("i", range(len(CASES)), ids=[label for label, _ in CASES])
def test_numbers_unchanged(stored, i):
    label, run = CASES[i]
    result = _run(run)
    rec = _record(result)
    old = {f: stored[f"{i}/{f}"] for f in FIELDS + ("model",)}
    changed = rec["model"] != old["model"]
    if np.any(changed):
        # only auto in slits and tubes may choose differently (see _auto_choice_changed)
        assert _auto_1d(label), (label, rec["model"], old["model"])
        _auto_choice_changed(rec, old, changed, label)
        same = ~changed
        rec = {f: _keep(v, same) for f, v in rec.items()}
        old = {f: _keep(v, same) for f, v in old.items()}
        result = SimpleNamespace(model=rec["model"], channel=result.channel)
    np.testing.assert_array_equal(rec["model"], old["model"], err_msg=label)
    for f in FIELDS:
        ref = old[f]
        checks = [check for (field, applies), check in EXPLAINED.items()
                  if field == f and applies(label)]
        if checks:
            for check in checks:
                check(rec[f], ref, result, old["error_estimate"])
            continue
        atol = 0.0
        if f == "error_estimate":
            atol = ERROR_ATOL_SECTIONS if _is_section(label) else ERROR_ATOL
        np.testing.assert_allclose(rec[f], ref, rtol=RTOL, atol=atol, err_msg=f"{label}: {f}")


if __name__ == "__main__":
    if "--record" in sys.argv:
        record()
    else:
        print(__doc__)
