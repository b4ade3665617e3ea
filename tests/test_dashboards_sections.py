"""Dashboards with 2D cross-sections: they appear from the shape registry,
compute on a background thread, show field images and a cut, and agree with
``ekexplore.solve`` at the dashboards' section accuracy."""
from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

pytest.importorskip("ipywidgets")
pytest.importorskip("jupyter_bokeh")
sections = pytest.importorskip("ekexplore.sections")

import ekexplore as ek  # noqa: E402
from ekexplore.dashboards.device import DeviceView  # noqa: E402
from ekexplore.dashboards.explorer import ExplorerView  # noqa: E402
from ekexplore.dashboards.regimes import RegimesView  # noqa: E402
from ekexplore.dashboards.state import SECTION_ACCURACY, State, listed_shapes  # noqa: E402

# Same inputs and options as the dashboard: only float re-ordering differs.
RTOL = 1e-12


def test_registry_shapes_are_listed():
    listed = listed_shapes()
    for name, cls in ek.SHAPES.items():
        presentable = cls.parameters and all(p in cls.parameter_info for p in cls.parameters)
        assert (name in listed) == bool(presentable)
    assert "Rectangle" in listed


def test_explorer_rectangle_in_background():
    v = ExplorerView(State(concentration=1.0))
    v.controls.shape.value = "Rectangle"
    assert v.status.kind in ("busy", "ok")       # busy until the thread is done
    v.worker.wait(600)
    assert v.status.kind == "ok", v.status.message
    st = v.state
    ref = ek.solve(ek.SHAPES["Rectangle"](**st.shape_params), st.electrolyte(), st.wall(),
                   model="auto", accuracy=SECTION_ACCURACY)
    assert_allclose(v.last.matrix, ref.matrix, rtol=RTOL)
    img = v.last.images
    assert img is not None and img["potential"].ndim == 2
    assert np.isfinite(img["potential"]).any()
    data = v.field_sources["potential"].data
    assert len(data["image"]) == 1 and data["image"][0].shape == img["potential"].shape
    assert v.field_widget is not None and v.field_widget in v.field_box.children
    # the profile curves are the wall-to-centre cut, starting at the wall potential
    assert_allclose(v.sources["potential"].data["y"][0], st.zeta * 1e3, rtol=0.02)
    ns = {}
    exec(st.code(), ns)
    assert_allclose(ns["result"].matrix, v.last.matrix, rtol=RTOL)


def test_explorer_section_bad_input_message():
    v = ExplorerView(State(shape="Rectangle"))
    v.worker.wait(600)
    v.state.set_param("depth", -1e-6)
    v.worker.wait(600)
    assert v.status.kind == "error" and "depth" in v.status.message


def test_regimes_section_uses_slit_proxy_and_says_so():
    st = State(shape="Rectangle")
    v = RegimesView(st, n=8)
    v.worker.wait(600)
    assert v.status.kind == "ok", v.status.message
    assert "2D section" in v.readout.value
    ch = st.channel()
    gap = 2 * float(ch.half_size) / st.size * np.asarray(v.last_size["cells"]["y"])
    pb = ek.solve(ek.Slit(gap=gap), ek.Electrolyte.salt("KCl", v.last_size["cells"]["x"]),
                  ek.Wall(zeta=st.zeta), model="pb")
    assert_allclose(v.last_size["cells"]["dukhin"], pb.dukhin, rtol=1e-10)


def test_device_section():
    v = DeviceView(State(shape="Ellipse", voltage=100.0))
    v.worker.wait(600)
    assert v.status.kind == "ok", v.status.message
    st = v.state
    r = ek.solve(ek.SHAPES["Ellipse"](**st.shape_params), st.electrolyte(), st.wall(),
                 accuracy=SECTION_ACCURACY)
    c = r.conductances(st.length)
    Q = float(c["flow_per_pressure"] * st.pressure_drop + c["flow_per_volt"] * 100.0)
    assert_allclose(v.last.flow, Q, rtol=RTOL)


def test_explorer_section_updates_again_and_again():
    # A second and third change on a 2D section must update the field images too
    # (the field figures are re-shown in a fresh widget each time).
    v = ExplorerView(State(shape="Rectangle", concentration=1.0))
    v.worker.wait(600)
    assert v.status.kind == "ok", v.status.message
    for c in (1.5, 2.0):
        before = v.field_sources["potential"].data["image"][0].copy()
        v.controls.concentration.value = c          # what the slider does
        v.worker.wait(600)
        assert v.status.kind == "ok", v.status.message
        after = v.field_sources["potential"].data["image"][0]
        assert not np.allclose(np.nan_to_num(before), np.nan_to_num(after))
        assert v.field_widget in v.field_box.children
