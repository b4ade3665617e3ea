"""Pieces shared by the dashboard views: BokehJS loading, figures, palette,
status area and the setup controls bound to a :class:`State`."""
from __future__ import annotations

import base64
import html

import ipywidgets as w
import traitlets

import ekexplore as ek

from .state import CUSTOM, SIZE_RANGE, State, listed_shapes, size_parameter

__all__ = ["load_bokeh", "new_figure", "bokeh_widget", "PALETTE", "Status", "SetupControls",
           "download_link", "section_title", "SAFETY_NOTE", "Worker", "ViewUpdates", "error_text"]

#: Okabe & Ito (2008), "Color Universal Design", colour-blind-safe qualitative palette.
PALETTE = ("#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000",
           "#F0E442")

TOOLS = "pan,box_zoom,wheel_zoom,reset,save"

_BOKEH_LOADED = False

CSS = """
<style>
.ekx-title {font-size: 18px; font-weight: 600; margin: 0; color: #1b2a38;}
.ekx-sub {font-size: 12px; color: #4a5a68; margin: 0;}
.ekx-status {font-size: 13px; padding: 3px 8px; border-radius: 3px; min-height: 20px;}
.ekx-ok {background: #eef5ee; color: #1f4d2b;}
.ekx-busy {background: #fff6dd; color: #5c4400;}
.ekx-error {background: #fbe9e4; color: #7a1f0c; font-weight: 600;}
.ekx-verdict {font-size: 13.5px; line-height: 1.35; padding: 4px 10px; background: #eef3f8;
              border-left: 4px solid #0072B2; margin: 4px 0;}
.ekx-table {border-collapse: collapse; font-size: 12.5px; margin: 2px 6px 2px 0;}
.ekx-table th, .ekx-table td {border: 1px solid #c9d3dc; padding: 2px 6px; text-align: right;}
.ekx-table th {background: #f1f4f7; font-weight: 600;}
.ekx-table td.l, .ekx-table th.l {text-align: left;}
.ekx-small {font-size: 11.5px; line-height: 1.3; color: #4a5a68;}
.ekx-caution {font-size: 12.5px; padding: 6px 10px; background: #fff3e6;
              border-left: 4px solid #D55E00; margin: 4px 0;}
.ekx-head {font-size: 13px; font-weight: 600; margin: 2px 0 0 0; color: #1b2a38;}
</style>
"""

SAFETY_NOTE = (
    "<div class='ekx-caution'><b>Cautions.</b> Electroosmosis uses voltages that can kill: "
    "follow local electrical-safety rules and institutional practice. Chips and fittings "
    "have pressure ratings: stay below them. These figures are model estimates; confirm "
    "them by measurement.</div>")


def load_bokeh():
    """Put BokehJS on the page once per kernel (inline, works offline)."""
    global _BOKEH_LOADED
    if _BOKEH_LOADED:
        return
    from bokeh.io import output_notebook
    from bokeh.resources import Resources
    output_notebook(Resources(mode="inline", components=["bokeh"]), hide_banner=True)
    _BOKEH_LOADED = True


def new_figure(width, height, title="", x_label="", y_label="", x_log=False, y_log=False,
               **kwargs):
    """A bokeh figure with our look: labelled axes, PNG save tool, no logo."""
    from bokeh.plotting import figure
    fig = figure(width=width, height=height, title=title, tools=TOOLS,
                 x_axis_type="log" if x_log else "linear",
                 y_axis_type="log" if y_log else "linear",
                 x_axis_label=x_label, y_axis_label=y_label, **kwargs)
    fig.toolbar.logo = None
    fig.toolbar.autohide = True
    fig.title.text_font_size = "12px"
    fig.axis.axis_label_text_font_size = "11px"
    fig.axis.axis_label_text_font_style = "normal"
    fig.axis.major_label_text_font_size = "10px"
    fig.min_border_left = 50
    return fig


def bokeh_widget(layout):
    """Wrap a bokeh layout as an ipywidget (jupyter_bokeh)."""
    from jupyter_bokeh import BokehModel
    load_bokeh()
    return BokehModel(layout)


def section_title(text):
    return w.HTML(f"<div class='ekx-head'>{html.escape(text)}</div>")


def download_link(filename, text_data, label):
    """An HTML anchor that downloads ``text_data`` as ``filename`` (no server needed)."""
    b64 = base64.b64encode(text_data.encode("utf-8")).decode("ascii")
    return (f"<a download='{html.escape(filename)}' href='data:text/csv;base64,{b64}' "
            f"style='margin-right:14px'>⬇ {html.escape(label)}</a>")


class Status:
    """The status area: ok, busy or a readable error (never a traceback)."""

    def __init__(self):
        self.widget = w.HTML(self._html("ok", "ready"))
        self.widget.add_class("ekx-status-box")
        self.kind = "ok"
        self.message = "ready"

    @staticmethod
    def _html(kind, message):
        icon = {"ok": "✓", "busy": "⏳", "error": "⚠"}[kind]
        return f"<div class='ekx-status ekx-{kind}'>{icon} {html.escape(message)}</div>"

    def set(self, kind, message):
        self.kind, self.message = kind, message
        self.widget.value = self._html(kind, message)

    def ok(self, message="up to date"):
        self.set("ok", message)

    def busy(self, message="computing…"):
        self.set("busy", message)

    def error(self, message):
        self.set("error", message)


def _link(widget, state, name, to_state=None, to_widget=None):
    """Two-way link of ``state.<name>`` and ``widget.value`` with unit transforms;
    the state's value wins at the start."""
    if to_state is None:
        return traitlets.link((state, name), (widget, "value"))
    return traitlets.link((state, name), (widget, "value"), transform=(to_widget, to_state))


def _slider():
    """Keyword arguments of a slider: a fresh Layout each time (a shared Layout
    would hide every widget at once)."""
    return dict(continuous_update=False, style={"description_width": "125px"},
                layout=w.Layout(width="335px"))


def _text():
    return dict(style={"description_width": "125px"}, layout=w.Layout(width="260px"))


class SetupControls:
    """Electrolyte, wall, channel and model controls bound to a state.

    ``include_drive`` adds channel length, voltage and pressure drop (used
    for the whole-channel figures and the profiles).
    """

    def __init__(self, state: State, include_drive=True, include_model=True):
        self.state = state
        s = state
        self.links = []
        # electrolyte
        self.salt = w.Dropdown(options=list(ek.SALTS) + [CUSTOM], description="electrolyte",
                               **_text())
        self.valence = w.Dropdown(options=[1, 2, 3, 4], description="valence z (z:z)", **_text())
        self.concentration = w.FloatLogSlider(
            base=10, min=-3, max=3, step=0.05, readout_format=".3g",
            description="salt conc. [mM]", **_slider())
        self.temperature = w.FloatSlider(min=0.0, max=100.0, step=1.0, readout_format=".0f",
                                         description="temperature [°C]", **_slider())
        # wall
        self.wall_mode = w.ToggleButtons(options=[("ζ potential", "zeta"),
                                                  ("surface charge", "charge")],
                                         style={"button_width": "115px"})
        self.zeta = w.FloatSlider(min=-200.0, max=200.0, step=1.0, readout_format=".0f",
                                  description="ζ [mV]", **_slider())
        self.charge = w.FloatSlider(min=-300.0, max=300.0, step=1.0, readout_format=".0f",
                                    description="charge [mC/m²]", **_slider())
        self.stern = w.FloatText(description="Stern cond. [nS]", **_text())
        # channel
        self.shape = w.Dropdown(options=listed_shapes(), description="shape", **_text())
        lo, hi = SIZE_RANGE
        self.size = w.FloatLogSlider(base=10, min=_log10(lo * 1e6), max=_log10(hi * 1e6),
                                     step=0.02, readout_format=".3g",
                                     description="size [µm]", **_slider())
        self.extra_box = w.VBox([])
        self.extra = {}
        self.model = w.ToggleButtons(options=list(State.MODELS), description="model",
                                     style={"button_width": "52px"})
        self.length = w.FloatLogSlider(base=10, min=-2, max=3, step=0.05, readout_format=".3g",
                                       description="length [mm]", **_slider())
        self.voltage = w.FloatText(description="voltage [V]", **_text())
        self.pressure = w.FloatText(description="pressure drop [kPa]", **_text())

        L = self.links.append
        L(_link(self.salt, s, "salt"))
        L(_link(self.valence, s, "valence"))
        L(_link(self.concentration, s, "concentration"))
        L(_link(self.temperature, s, "temperature", lambda c: c + 273.15, lambda k: k - 273.15))
        L(_link(self.wall_mode, s, "wall_mode"))
        L(_link(self.zeta, s, "zeta", lambda v: v * 1e-3, lambda v: v * 1e3))
        L(_link(self.charge, s, "charge_density", lambda v: v * 1e-3, lambda v: v * 1e3))
        L(_link(self.stern, s, "stern_conductance", lambda v: v * 1e-9, lambda v: v * 1e9))
        L(_link(self.shape, s, "shape"))
        L(_link(self.model, s, "model"))
        L(_link(self.length, s, "length", lambda v: v * 1e-3, lambda v: v * 1e3))
        L(_link(self.voltage, s, "voltage"))
        L(_link(self.pressure, s, "pressure_drop", lambda v: v * 1e3, lambda v: v * 1e-3))

        self.size.observe(self._size_from_widget, "value")
        s.observe(self._params_from_state, "shape_params")
        s.observe(self._shape_from_state, "shape")
        s.observe(self._visibility, ["salt", "wall_mode"])
        self._busy_sync = False
        self._build_extra()
        self._params_from_state()
        self._visibility()

        rows = [section_title("Electrolyte"), self.salt, self.valence, self.concentration,
                self.temperature, section_title("Wall"), self.wall_mode, self.zeta, self.charge,
                self.stern, section_title("Channel"), self.shape, self.size, self.extra_box]
        if include_model:
            rows += [self.model]
        if include_drive:
            rows += [section_title("Channel length and driving"), self.length, self.voltage,
                     self.pressure]
        self.stern.tooltip = "surface conductance of the Stern layer [nS]"
        self.widget = w.VBox(rows, layout=w.Layout(width="345px", min_width="345px"))

    # -- shape parameters -------------------------------------------------------
    def _build_extra(self):
        cls = ek.channels.SHAPES.get(self.state.shape)
        self.extra = {}
        size_name = size_parameter(self.state.shape) if cls else None
        self.size.description = (f"{cls.parameter_info[size_name].label} [µm]"
                                 if cls else "size [µm]")
        self.size.tooltip = self.size.description
        for p in (cls.parameters if cls else ()):
            if p == size_name:
                continue
            info = cls.parameter_info[p]
            if info.kind == "length":
                lo = max(info.minimum, SIZE_RANGE[0]) * 1e6
                hi = min(info.maximum, SIZE_RANGE[1]) * 1e6
                wid = w.FloatLogSlider(base=10, min=_log10(lo), max=_log10(hi), step=0.02,
                                       readout_format=".3g", description=f"{info.label} [µm]",
                                       **_slider())
                scale = 1e-6
            elif info.kind == "angle":
                wid = w.FloatSlider(min=info.minimum, max=info.maximum, step=0.5,
                                    readout_format=".1f", description=f"{info.label} [°]",
                                    **_slider())
                scale = 1.0
            else:
                wid = w.FloatSlider(min=info.minimum, max=info.maximum,
                                    step=(info.maximum - info.minimum) / 200,
                                    readout_format=".3g", description=f"{info.label} [-]",
                                    **_slider())
                scale = 1.0
            wid.tooltip = wid.description
            wid.observe(lambda ch, p=p, scale=scale: self._param_from_widget(p, ch, scale),
                        "value")
            self.extra[p] = (wid, scale)
        self.extra_box.children = [wid for wid, _ in self.extra.values()]

    def _shape_from_state(self, change=None):
        self._build_extra()
        self._params_from_state()

    def _params_from_state(self, change=None):
        if self._busy_sync:
            return
        self._busy_sync = True
        try:
            params = self.state.shape_params
            if self.state.shape in ek.channels.SHAPES:
                name = size_parameter(self.state.shape)
                if name in params:
                    self.size.value = params[name] * 1e6
            for p, (wid, scale) in self.extra.items():
                if p in params:
                    wid.value = params[p] / scale
        finally:
            self._busy_sync = False

    def _size_from_widget(self, change):
        if not self._busy_sync and self.state.shape in ek.channels.SHAPES:
            self.state.size = change["new"] * 1e-6

    def _param_from_widget(self, name, change, scale):
        if not self._busy_sync:
            self.state.set_param(name, change["new"] * scale)

    def _visibility(self, change=None):
        self.valence.layout.display = None if self.state.salt == CUSTOM else "none"
        zeta = self.state.wall_mode == "zeta"
        self.zeta.layout.display = None if zeta else "none"
        self.charge.layout.display = "none" if zeta else None


def _log10(x):
    import math
    return math.log10(x)


class Worker:
    """Runs a computation now (1D shapes) or on a thread (2D sections, slow),
    and hands only the newest result to the view."""

    def __init__(self):
        import threading
        self._lock = threading.Lock()
        self.generation = 0
        self.thread = None

    def submit(self, fn, done, fail, background=False):
        import threading
        with self._lock:
            self.generation += 1
            gen = self.generation

        def run():
            try:
                out = fn()
            except Exception as exc:   # reported in the status area, never raised
                if gen == self.generation:
                    fail(exc)
                return
            if gen == self.generation:
                done(out)

        if background:
            self.thread = threading.Thread(target=run, name="ekexplore-compute", daemon=True)
            self.thread.start()
        else:
            run()

    def wait(self, timeout=300):
        """Wait for a background computation (tests, scripts)."""
        t = self.thread
        if t is not None:
            t.join(timeout)


class ViewUpdates:
    """Status handling shared by the views: a failed update shows its message and
    keeps the last good plots; a good one shows them and says so."""

    #: what stays on screen after a failure ("plots", "maps")
    shown = "plots"

    def _fail(self, exc):
        self.error = error_text(exc)
        self.status.error(self.error + f" — the {self.shown} show the last valid input.")

    def _ok_text(self, result):
        return "up to date"

    def _done(self, out):
        snap, result = out
        try:
            self._show(result, snap)
        except Exception as exc:  # never a traceback on the dashboard
            self._fail(exc)
            return
        self.error = None
        self.last = result
        self.status.ok(self._ok_text(result))


def error_text(exc):
    """A readable one-line message for a failed computation."""
    if isinstance(exc, (ValueError, ArithmeticError)):
        return str(exc)
    return f"could not compute ({type(exc).__name__}): {exc}"
