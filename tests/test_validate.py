"""Bad input is always refused with a ValueError that names the parameter,
its value and the allowed range (the package convention, DEVELOPERS.md).

One test per case; each checks the exception type and that the message
names what the user must fix, not a numpy or Python internal message.
"""
import numpy as np
import pytest

import ekexplore as ek
from ekexplore._validate import (as_float_array, broadcast_named, check_choice,
                                 check_integer, check_range, check_scalar)

KCL = ek.Electrolyte.salt("KCl", 1.0)
WALL = ek.Wall(zeta=-0.05)
SLIT = ek.Slit(100e-9)


def _raises(fn, *fragments):
    with pytest.raises(ValueError) as info:
        fn()
    msg = str(info.value)
    for f in fragments:
        assert f in msg, f"{f!r} not in {msg!r}"
    return msg


# --- shape mismatches between arrays ---------------------------------------------

def test_shape_mismatch_channel_vs_electrolyte_names_both():
    _raises(lambda: ek.solve(ek.Slit(np.full(3, 1e-7)), ek.Electrolyte.salt("KCl", np.ones(4)),
                             WALL),
            "gap has shape (3,)", "concentration", "(4,)")


def test_shape_mismatch_channel_vs_wall_names_both():
    _raises(lambda: ek.solve(ek.Slit(np.full(3, 1e-7)), KCL, ek.Wall(zeta=np.full(2, -0.05))),
            "gap has shape (3,)", "zeta", "(2,)")


def test_shape_mismatch_inside_a_wall():
    _raises(lambda: ek.Wall(zeta=np.full(3, -0.05), stern_conductance=np.full(2, 1e-9)),
            "zeta has shape (3,)", "stern_conductance has shape (2,)")


def test_shape_mismatch_inside_an_electrolyte():
    _raises(lambda: ek.Electrolyte.salt("KCl", np.ones(3), temperature=np.full(2, 300.0)),
            "temperature has shape (2,)", "concentration of K+ has shape (3,)")


def test_shape_mismatch_between_section_dimensions():
    r = ek.SHAPES["Rectangle"](width=np.full(3, 2e-6), depth=np.full(2, 1e-6))
    _raises(lambda: ek.solve(r, KCL, WALL), "width has shape (3,)", "depth has shape (2,)")


def test_broadcastable_shapes_still_work():
    r = ek.solve(ek.Slit(np.full((3, 1), 1e-7)), ek.Electrolyte.salt("KCl", np.ones(4)), WALL,
                 model="dh")
    assert r.matrix.shape == (3, 4, 2, 2)
    assert broadcast_named({"a": (3, 1), "b": (4,)}) == (3, 4)


# --- None, empty arrays ---------------------------------------------------------

@pytest.mark.parametrize("make, name", [
    (lambda: ek.Slit(None), "gap"),
    (lambda: ek.Electrolyte.salt("KCl", None), "concentration"),
    (lambda: ek.Wall(charge_density=-0.01, stern_conductance=None), "stern_conductance"),
    (lambda: ek.Electrolyte.salt("KCl", 1.0, temperature=None), "temperature"),
])
def test_none_is_named(make, name):
    _raises(make, name, "None", "allowed range")


@pytest.mark.parametrize("make, name", [
    (lambda: ek.Slit(np.array([])), "gap"),
    (lambda: ek.Electrolyte.salt("KCl", []), "concentration"),
    (lambda: ek.Wall(zeta=[]), "zeta"),
    (lambda: ek.Tube([]), "diameter"),
])
def test_empty_array_is_named(make, name):
    _raises(make, name, "empty", "allowed range")


# --- tol, accuracy, model -----------------------------------------------------------

def test_array_valued_tol_refused():
    _raises(lambda: ek.solve(SLIT, KCL, WALL, tol=[0.01, 0.02]),
            "tol must be a single number", "(2,)", "[1e-06, 1]")


def test_array_valued_accuracy_refused():
    _raises(lambda: ek.solve(SLIT, KCL, WALL, accuracy=np.array([1e-6])),
            "accuracy must be a single number", "[1e-09, 0.1]")


@pytest.mark.parametrize("model", [np.array(["pb"]), ["pb"], ("pb",), None, 1])
def test_non_string_model_refused(model):
    _raises(lambda: ek.solve(SLIT, KCL, WALL, model=model),
            "model", "one name", "auto, thin, dh, pb")


def test_unknown_model_named():
    _raises(lambda: ek.solve(SLIT, KCL, WALL, model="PB"), "'PB'", "auto, thin, dh, pb")


# --- salt names ---------------------------------------------------------------------

@pytest.mark.parametrize("name", [["KCl"], ("KCl",), None, np.array("KCl")])
def test_salt_name_must_be_a_string(name):
    _raises(lambda: ek.Electrolyte.salt(name, 1.0), "salt name", "KCl, NaCl")


def test_unknown_salt_named():
    _raises(lambda: ek.Electrolyte.salt("KBr", 1.0), "'KBr'", "KCl")


# --- text given as numbers ----------------------------------------------------------

@pytest.mark.parametrize("make, name, text", [
    (lambda: ek.Slit("1e-6"), "gap", "'1e-6'"),
    (lambda: ek.Electrolyte.salt("KCl", "1"), "concentration", "'1'"),
    (lambda: ek.Electrolyte.salt("KCl", ["1", "2"]), "concentration", "'1'"),
    (lambda: ek.Wall(zeta="-0.05"), "zeta", "'-0.05'"),
    (lambda: ek.Electrolyte.salt("KCl", 1.0, temperature="298"), "temperature", "'298'"),
    (lambda: ek.solve(SLIT, KCL, WALL, tol="1e-6"), "tol", "'1e-6'"),
    (lambda: ek.solve(SLIT, KCL, WALL, accuracy="1e-6"), "accuracy", "'1e-6'"),
    (lambda: ek.solve(SLIT, KCL, WALL).conductances("1"), "length", "'1'"),
    (lambda: ek.Electrolyte.salt("KCl", np.array([1.0, "2"], dtype=object)),
     "concentration", "'2'"),
])
def test_text_is_not_a_number(make, name, text):
    _raises(make, name, text, "allowed range")


def test_booleans_are_not_numbers():
    _raises(lambda: ek.Slit(True), "gap", "boolean", "allowed range")
    _raises(lambda: ek.Wall(zeta=np.array([False, True])), "zeta", "boolean")


# --- valences -----------------------------------------------------------------------

def test_true_is_not_a_valence():
    _raises(lambda: ek.Electrolyte.symmetric(True, 1.0), "valence = True", "boolean", "[1, 4]")


def test_true_is_not_an_ion_valence():
    _raises(lambda: ek.Ion("X+", True, 1e-9), "valence of ion 'X+'", "boolean")


@pytest.mark.parametrize("z", [1.0, "1", 0, 5, None])
def test_bad_symmetric_valence(z):
    _raises(lambda: ek.Electrolyte.symmetric(z, 1.0), "valence", "[1, 4]")


def test_integer_valences_still_accepted():
    assert ek.Electrolyte.symmetric(np.int64(2), 1.0).ions[0].valence == 2
    assert ek.Ion("X2+", np.int32(2), 1e-9).valence == 2


# --- sweeps -------------------------------------------------------------------------

def test_sweep_missing_shape_parameter_named():
    _raises(lambda: ek.sweep(grid={"concentration": [1.0]}, zeta=-0.05), "'gap'", "Slit")
    _raises(lambda: ek.sweep(shape="Rectangle", grid={"concentration": [1.0]}, width=2e-6,
                             zeta=-0.05), "'depth'", "Rectangle")


def test_sweep_empty_grid_named():
    _raises(lambda: ek.sweep(grid={"gap": [], "concentration": [1.0]}, zeta=-0.05),
            "grid['gap'] is empty")


def test_sweep_empty_table_named():
    _raises(lambda: ek.sweep(table={"gap": [], "concentration": []}, zeta=-0.05),
            "table has no rows")


def test_sweep_bad_model_and_salt_named_before_any_work():
    _raises(lambda: ek.sweep(grid={"gap": [1e-7]}, concentration=1.0, zeta=-0.05,
                             model=["pb"]), "model")
    _raises(lambda: ek.sweep(grid={"gap": [1e-7]}, concentration=1.0, zeta=-0.05,
                             salt=["KCl"]), "salt")
    _raises(lambda: ek.sweep(grid={"gap": [1e-7]}, concentration=1.0, zeta=-0.05,
                             tol=[0.1, 0.2]), "tol must be a single number")


# --- the shared helpers themselves ---------------------------------------------------

def test_helpers_accept_what_they_should():
    assert as_float_array("x", [1, 2]).dtype == float
    assert check_range("x", np.int64(3), 0, 5) == 3.0
    assert check_scalar("x", np.float32(0.5), 0, 1) == 0.5
    assert check_choice("m", "a", ("a", "b")) == "a"
    assert check_integer("z", -2, nonzero=True) == -2


def test_nan_and_inf_still_named():
    _raises(lambda: ek.Slit(np.nan), "gap must be finite", "allowed range")
    _raises(lambda: ek.Wall(zeta=[-0.05, np.inf]), "zeta must be finite")


def test_ragged_and_complex_refused():
    _raises(lambda: ek.Slit([[1e-7], [1e-7, 2e-7]]), "gap")
    _raises(lambda: ek.Slit(1e-7 + 0j), "gap", "complex")


def test_sweep_text_or_boolean_columns_refused_up_front(tmp_path):
    _raises(lambda: ek.sweep(grid={"gap": ["1e-6", "2e-6"]}, concentration=1.0, zeta=-0.05,
                             output=tmp_path / "run.csv"), "gap", "'1e-6'")
    _raises(lambda: ek.sweep(grid={"gap": [1e-7]}, concentration="1", zeta=-0.05),
            "concentration", "'1'")
    _raises(lambda: ek.sweep(table={"gap": [1e-7, None], "concentration": [1.0, 1.0]},
                             zeta=-0.05), "gap", "None")
    _raises(lambda: ek.sweep(grid={"gap": [1e-7]}, concentration=1.0, zeta=True), "zeta",
            "boolean")
    assert not (tmp_path / "run.csv").exists()


# --- the other public helpers ----------------------------------------------------------

def test_regime_helpers_name_bad_input():
    _raises(lambda: ek.estimated_model_errors(None, 1.0), "kappa_half_size", "None")
    _raises(lambda: ek.estimated_model_errors("1", 1.0), "kappa_half_size", "'1'")
    _raises(lambda: ek.estimated_model_errors([1.0, 2.0], [1.0, 2.0, 3.0]),
            "kappa_half_size has shape (2,)", "phi_wall has shape (3,)")
    _raises(lambda: ek.regime_verdict(None, 1.0, 1.0, 0.5), "kappa_size", "None")
    _raises(lambda: ek.regime_verdict(1.0, "2", 1.0, 0.5), "slip_ratio", "'2'")


def test_profiles_field_must_be_one_number():
    r = ek.solve(SLIT, KCL, WALL, model="dh")
    _raises(lambda: r.profiles([1.0, 2.0]), "pressure_gradient must be a single number")
    _raises(lambda: r.profiles(1.0, "1"), "field", "'1'")
