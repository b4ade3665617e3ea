"""The electrolyte panel of the dashboards: buffer, pH, air, and the readout of pH,
ionic strength, conductivity and Debye length on every page."""
import numpy as np
import pytest
from numpy.testing import assert_allclose

import ekexplore as ek
from ekexplore.dashboards import compute
from ekexplore.dashboards.common import SetupControls
from ekexplore.dashboards.state import State

STATES = [
    dict(),                                                      # plain KCl
    dict(buffer="HEPES", pH=7.4, buffer_concentration=20.0, concentration=5.0),
    dict(buffer="Tris", pH=8.2, salt="NaCl", concentration=50.0, in_air=True),
    dict(in_air=True, concentration=1e-3),                      # 1 uM KCl in air
]


@pytest.mark.parametrize("kw", STATES)
def test_state_builds_the_recipe_and_the_code_rebuilds_it(kw):
    s = State(**kw)
    e = s.electrolyte()
    if kw.get("buffer"):
        # the buffer sits at its target pH (checked against the request)
        assert_allclose(e.pH, kw["pH"], atol=1e-6)
        direct = ek.Electrolyte.buffer(kw["buffer"], kw.get("buffer_concentration", 10.0),
                                       pH=kw["pH"],
                                       salt={kw.get("salt", "KCl"): kw["concentration"]},
                                       co2="air" if kw.get("in_air") else None)
        assert_allclose(e.conductivity(), direct.conductivity(), rtol=1e-12)
    ns = {}
    exec(s.code(), ns)    # the exported cell rebuilds the same electrolyte
    assert_allclose(ns["electrolyte"].conductivity(), e.conductivity(), rtol=1e-12)
    assert_allclose(ns["electrolyte"].debye_length, e.debye_length, rtol=1e-12)
    if e.pH is not None:
        assert_allclose(ns["electrolyte"].pH, e.pH, atol=1e-12)


@pytest.mark.parametrize("page", ["explorer", "regimes", "device"])
def test_every_page_shows_pH_ionic_strength_conductivity_debye_length(page):
    s = State(buffer="MES", pH=6.0, buffer_concentration=10.0)
    c = SetupControls(s, include_drive=page != "regimes", include_device=page == "device")
    text = c.electrolyte_info.value
    e = s.electrolyte()
    # engineering units: mM, mS/cm, nm; values from the electrolyte itself
    assert "pH 6.00" in text
    assert f"{float(e.ionic_strength):.4g} mM" in text
    assert f"{float(e.conductivity()) * 10:.4g} mS/cm" in text
    assert f"{float(e.debye_length) * 1e9:.3g} nm" in text
    assert c.buffer_pH.layout.display is None
    s.buffer = ""
    assert c.buffer_pH.layout.display == "none"
    assert "pH not set" in c.electrolyte_info.value


def test_out_of_range_pH_is_shown_in_words():
    s = State(buffer="Tris", pH=8.0)
    c = SetupControls(s)
    s.pH = 4.0
    assert "useful range" in c.electrolyte_info.value and "7.07" in c.electrolyte_info.value
    with pytest.raises(ValueError, match="useful range"):
        s.solve()


def test_buffer_through_the_explorer_and_maps():
    # the explorer's matrix and the regime maps run on a buffered state; a wide
    # channel at low zeta conducts like the bulk electrolyte shown on the panel
    s = State(buffer="phosphate", pH=7.2, buffer_concentration=10.0, concentration=1.0,
              zeta=-1e-4, size=1e-4)
    ex = compute.explore_matrix(s)
    assert_allclose(np.asarray(ex.result.conductive), s.electrolyte().conductivity(),
                    rtol=1e-5)
    m = compute.map_size(State(buffer="HEPES", pH=7.4), n=6)
    assert any(np.size(v) > 0 for v in m.values())
