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


# ---- the 2D field images --------------------------------------------------------
def _inside(shape, p, X, Y):
    """Pixel centres strictly inside the exact section (geometry written here), with
    a margin of one pixel diagonal so that the meshed polygon's chords of a
    curved wall do not count against the image."""
    if shape == "Rectangle":
        return np.ones_like(X, dtype=bool)
    if shape == "Ellipse":
        a, b = p["width"] / 2, p["height"] / 2
        return ((X - a) / a) ** 2 + ((Y - b) / b) ** 2 < 1.0
    if shape == "Trapezoid":   # top width at y = depth, bottom width at y = 0, centred
        top, bot, d = p["top_width"], p["bottom_width"], p["depth"]
        half = bot / 2 + (top - bot) / 2 * Y / d
        return np.abs(X - top / 2) < half
    raise AssertionError(shape)


@pytest.mark.parametrize("shape", ["Rectangle", "Ellipse", "Trapezoid"])
def test_field_image_has_no_blank_pixel_inside_the_section(shape):
    v = ExplorerView(State(shape=shape))
    v.worker.wait(600)
    assert v.status.kind == "ok", v.status.message
    img = v.last.images
    a = img["potential"]
    ny, nx = a.shape
    dx, dy = img["width"] / nx, img["height"] / ny
    assert_allclose(dx, dy, rtol=0.05)          # square pixels
    xc = (np.arange(nx) + 0.5) * dx
    yc = (np.arange(ny) + 0.5) * dy
    X, Y = np.meshgrid(xc, yc)
    p = v.state.shape_params
    margin = np.hypot(dx, dy)
    # shrink the exact section by one pixel diagonal: the meshed polygon lies inside it
    core = np.ones_like(X, dtype=bool)
    for sx in (-1, 0, 1):
        for sy in (-1, 0, 1):
            core &= _inside(shape, p, X + sx * margin, Y + sy * margin)
    assert core.sum() > 0.5 * core.size
    assert np.all(np.isfinite(a[core])), f"{np.sum(~np.isfinite(a[core]))} blank pixels"
    # the image spans the section's bounding box exactly
    width = p.get("width", p.get("top_width"))
    height = p.get("depth", p.get("height"))
    assert_allclose([img["width"], img["height"]], [width, height], rtol=1e-6)


def test_field_plots_refit_to_each_shape_with_equal_aspect():
    v = ExplorerView(State(shape="Rectangle"))
    v.worker.wait(600)
    for shape, params in (("Trapezoid", None), ("Ellipse", {"width": 2e-6, "height": 1e-6}),
                          ("Rectangle", {"width": 100e-9, "depth": 50e-9})):
        v.state.shape = shape
        if params:
            v.state.shape_params = params
        v.worker.wait(600)
        assert v.status.kind == "ok", v.status.message
        img = v.last.images
        fig = v.field_figures[0]
        k = 1e9 if max(img["width"], img["height"]) < 1e-6 else 1e6
        # the axes span the section exactly (no window of an earlier shape) ...
        assert_allclose([fig.x_range.start, fig.x_range.end],
                        [img["x0"] * k, (img["x0"] + img["width"]) * k], rtol=1e-9)
        assert_allclose([fig.y_range.start, fig.y_range.end],
                        [img["y0"] * k, (img["y0"] + img["height"]) * k], rtol=1e-9)
        # ... at equal scale on both axes (one pixel of screen per same length)
        sx = (fig.x_range.end - fig.x_range.start) / fig.frame_width
        sy = (fig.y_range.end - fig.y_range.start) / fig.frame_height
        assert_allclose(sx, sy, rtol=0.03)
        if params and params.get("depth") == 50e-9:
            assert fig.xaxis.axis_label == "x [nm]"
            assert_allclose(fig.x_range.end - fig.x_range.start, 100.0, rtol=1e-6)


def test_log_colour_scale_spans_decades_of_the_magnitude():
    v = ExplorerView(State(shape="Rectangle", concentration=100.0))
    v.worker.wait(600)
    v.field_scale.value = "log"
    m = v.field_images_glyphs["potential"].glyph.color_mapper
    assert m is v.field_log_mappers["potential"]
    assert_allclose(m.high / m.low, 10 ** v.LOG_DECADES, rtol=1e-9)
    # the wall potential |ζ| = 50 mV tops the scale
    assert_allclose(m.high, 50.0, rtol=0.02)


def test_centreline_cut_has_no_gap_inside_the_section():
    # a 100 x 50 um ellipse at 1 mM (thin layers, a mesh graded toward the wall)
    v = ExplorerView(State(shape="Ellipse", shape_params={"width": 100e-6, "height": 50e-6}))
    v.worker.wait(600)
    c = v.last.images["centre"]
    assert np.all(np.isfinite(c["velocity_pressure"])) and np.all(np.isfinite(c["potential"]))
    # wall to wall: the cut spans the ellipse's width at its centre height
    assert_allclose(c["x"][-1] - c["x"][0], 100e-6, rtol=1e-3)
    # the pressure-driven velocity is zero at both walls (no slip) and largest inside
    up = c["velocity_pressure"]
    assert abs(up[0]) < 0.05 * up.max() and abs(up[-1]) < 0.05 * up.max()
