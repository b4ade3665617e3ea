"""Pieces shared by the dashboard views: BokehJS loading, figures, palette,
status area and the setup controls bound to a :class:`State`."""
from __future__ import annotations

import base64
import html
import math
import re

import ipywidgets as w
import numpy as np
import traitlets

import ekexplore as ek

from .state import CUSTOM, MATERIALS, SIZE_RANGE, State, listed_shapes, size_parameter

__all__ = ["load_bokeh", "new_figure", "bokeh_widget", "PALETTE", "Status", "SetupControls",
           "download_link", "section_title", "SAFETY_NOTE", "CodeExport", "Worker", "ViewUpdates", "error_text"]

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
.ekx-warn {font-size: 13px; padding: 4px 10px; background: #fbe9e4; color: #7a1f0c;
            border-left: 4px solid #D55E00; margin: 4px 0;}
.ekx-copy {font-size: 12.5px; padding: 2px 10px; margin: 2px 0; cursor: pointer;}
.ekx-wall {font-size: 13px; padding: 3px 10px; margin: 2px 0; border-left: 4px solid #009E73;
            background: #eef6f2;}
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
    from bokeh.models import LogTicker
    for log, axis in ((x_log, fig.xaxis), (y_log, fig.yaxis)):
        if log:   # decades and 2, 5 between: readable labels that never pile up
            axis.ticker = LogTicker(desired_num_ticks=5, mantissas=[1, 2, 5])
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


_COPY_JS = ("var b=this,t=b.closest('.ekx-code-box').querySelector('textarea');"
            "t.select();var ok=false;try{ok=document.execCommand('copy')}catch(e){}"
            "var say=function(x){b.textContent=x;setTimeout(function(){"
            "b.textContent='Copy code'},2500)};"
            "if(navigator.clipboard&&window.isSecureContext){navigator.clipboard.writeText("
            "t.value).then(function(){say('✓ copied')},function(){"
            "say(ok?'✓ copied':'select the text and press Ctrl+C')})}"
            "else{say(ok?'✓ copied':'select the text and press Ctrl+C')}")


class CodeExport:
    """"Show code": a Python cell that reproduces the page through the public
    API (inputs and driving), with a copy button, and optional downloads."""

    def __init__(self, width="900px"):
        self.code = w.Textarea(layout=w.Layout(width=width, height="330px"))
        self.code.add_class("ekx-code")
        self.button = w.ToggleButton(description="Show code", icon="code",
                                     tooltip="a Python cell that reproduces this computation "
                                             "through the public API")
        self.copy = w.HTML("<button class='ekx-copy' title='copy the cell to the clipboard' "
                           f"onclick=\"{_COPY_JS}\">Copy code</button>")
        self.box = w.VBox([self.copy, self.code], layout=w.Layout(display="none"))
        self.box.add_class("ekx-code-box")
        self.downloads = w.HTML()
        self.button.observe(self._toggle, "value")
        self.widget = w.VBox([w.HBox([self.button, self.downloads]), self.box])

    def _toggle(self, change):
        self.box.layout.display = None if change["new"] else "none"

    def show(self, state):
        self.code.value = state.code()


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


class _Honest:
    """Mixin for number widgets: a typed value outside the slider's range widens
    the range when it lies within ``limits`` (what the physics and the solver
    accept), and is otherwise refused: the widget keeps its last good value and
    ``on_reject(message)`` gets a message in the screen's words and units."""

    def setup_honest(self, name, unit, limits, on_reject, log=False, integer=False):
        self._h_name, self._h_unit, self._h_limits = name, unit, limits
        self._h_reject, self._h_log = on_reject, log
        return self

    def _honest(self, proposal, clamp_lo, clamp_hi):
        v = proposal["value"]
        lo, hi, lo_open = self._h_limits
        old = self.value
        try:
            v = float(v)
        except (TypeError, ValueError):
            return self._refuse(v, old)
        if not np.isfinite(v):
            return self._refuse(v, old)
        if clamp_lo <= v <= clamp_hi:
            return v
        ok = (v > lo if lo_open else v >= lo) and v <= hi
        if not ok:
            return self._refuse(v, old)
        if self._h_log:   # exponents
            if v < clamp_lo:
                self.min = math.floor(math.log10(v) * 20) / 20
            else:
                self.max = math.ceil(math.log10(v) * 20) / 20
        else:
            if v < clamp_lo:
                self.min = v
            else:
                self.max = v
        return v

    def _acceptable(self, v):
        lo, hi, lo_open = self._h_limits
        try:
            v = float(v)
        except (TypeError, ValueError):
            return False
        return bool(np.isfinite(v)) and (v > lo if lo_open else v >= lo) and v <= hi

    def set_state(self, sync_data):
        """A value typed in the page: refused here, before traitlets sets it
        (inside ipywidgets' hold the validator would only see it afterwards).
        The page's echo then carries the value in use, so the box shows it."""
        if "value" in sync_data and not self._acceptable(sync_data["value"]):
            typed = sync_data["value"]
            sync_data = dict(sync_data, value=self.value)
            super().set_state(sync_data)
            self._refuse(typed if not isinstance(typed, (int, float)) else float(typed),
                         self.value)
            return
        super().set_state(sync_data)

    def _refuse(self, v, old):
        lo, hi, lo_open = self._h_limits
        shown = f"{v:.4g}" if isinstance(v, float) else str(v)
        u = f" {self._h_unit}" if self._h_unit else ""
        if lo_open and lo == 0.0:
            rng = f"a value above 0 and up to {hi:g}{u}"
        else:
            rng = f"a value from {lo:g} to {hi:g}{u}"
        self._h_reject(f"{self._h_name} {shown}{u}: enter {rng}")
        # the kernel keeps the old value, so no change is synced by itself: send it
        # (a moment later, once the page has had the echo of what it sent), so the
        # box the user typed in shows the value in use again
        import threading

        def resend():
            try:
                self.send_state("value")
            except Exception:   # noqa: BLE001 - no front-end (tests, scripts)
                pass
        timer = threading.Timer(0.3, resend)
        timer.daemon = True
        timer.start()
        return old


class HonestFloatSlider(_Honest, w.FloatSlider):
    @traitlets.validate("value")
    def _validate_value(self, proposal):
        return self._honest(proposal, self.min, self.max)


class HonestFloatLogSlider(_Honest, w.FloatLogSlider):
    @traitlets.validate("value")
    def _validate_value(self, proposal):
        return self._honest(proposal, self.base ** self.min, self.base ** self.max)


class HonestFloatText(_Honest, w.FloatText):
    @traitlets.validate("value")
    def _validate_value(self, proposal):
        lo, hi, lo_open = self._h_limits
        return self._honest(proposal, lo if not lo_open else math.nextafter(lo, math.inf), hi)


def _slider():
    """Keyword arguments of a slider: a fresh Layout each time (a shared Layout
    would hide every widget at once)."""
    return dict(continuous_update=False, readout=False, style={"description_width": "150px"},
                layout=w.Layout(width="300px"))


def _text():
    return dict(style={"description_width": "150px"}, layout=w.Layout(width="260px"))


#: What a typed value may be, per control, in the control's own units:
#: (lowest, highest, lowest excluded). Inside these limits a typed value
#: outside the slider widens it; outside them it is refused with a message.
LIMITS = {
    # 0.1 uM: water's own ions (H+, OH-) are 0.1 uM, below that "salt" means
    # nothing; 5 M: beyond every salt's solubility of interest and far past
    # point-ion theory (common practice).
    "concentration": (1e-4, 5e3, False),
    "temperature": (ek.medium.T_MIN - 273.15, ek.medium.T_MAX - 273.15, False),
    "zeta": (-ek.wall.ZETA_MAX * 1e3, ek.wall.ZETA_MAX * 1e3, False),
    "charge": (-ek.wall.SIGMA_MAX * 1e3, ek.wall.SIGMA_MAX * 1e3, False),
    "stern": (0.0, ek.wall.STERN_MAX * 1e9, False),
    "size": (ek.channels.SIZE_MIN * 1e6, ek.channels.SIZE_MAX * 1e6, False),
    "width": (ek.channels.SIZE_MIN * 1e6, 1e6, False),           # slit width up to 1 m
    "length": (1e-3, 1e4, False),                                 # 1 um to 10 m, in mm
    "voltage": (-1e5, 1e5, False),
    "pressure": (-1e5, 1e5, False),                               # kPa
    "channels": (1, 1_000_000, False),
    "buffer_conc": (1e-3, 5e3, False),                            # as the salt, in mM
    "pH": (0.0, 14.0, False),
    "salt_pH": (ek.surface.PH_RANGE[0], ek.surface.PH_RANGE[1], False),
    "stern_capacitance": (0.0, ek.surface.STERN_CAPACITANCE_MAX, True),      # F/m^2
    "site_pK": (ek.surface.PK_RANGE[0], ek.surface.PK_RANGE[1], False),
    "site_density": (0.0, ek.surface.SITE_DENSITY_MAX * 1e-18, True),        # per nm^2
    "max_pressure": (0.0, 1e5, True),
    "max_voltage": (0.0, 1e5, True),
}


class HonestIntText(_Honest, w.IntText):
    @traitlets.validate("value")
    def _validate_value(self, proposal):
        lo, hi, _ = self._h_limits
        return int(self._honest(proposal, lo, hi))


class SetupControls:
    """Electrolyte, wall, channel and model controls bound to a state.

    ``include_drive`` adds channel length, voltage and pressure drop (used
    for the whole-channel figures and the profiles); ``include_device`` the
    channel count and the chip's pressure and voltage ratings.
    A refused typed value calls every function in ``rejections`` with a
    message in the screen's words.
    """

    def __init__(self, state: State, include_drive=True, include_model=True,
                 include_device=False):
        self.state = state
        s = state
        self.links = []
        self.rejections = []
        self.entries = {}
        self.rows = {}
        rej = self._reject

        def honest(widget, key, name, unit, log=False):
            return widget.setup_honest(name, unit, LIMITS[key], rej, log=log)

        # electrolyte
        self.salt = w.Dropdown(options=list(ek.SALTS) + [CUSTOM], description="electrolyte",
                               **_text())
        self.valence = w.Dropdown(options=[1, 2, 3, 4], description="valence z (z:z)", **_text())
        self.concentration = honest(HonestFloatLogSlider(
            base=10, min=-3, max=3, step=0.05, readout_format=".3g",
            description="salt conc. [mM]", **_slider()), "concentration", "salt conc.", "mM",
            log=True)
        self.temperature = honest(HonestFloatSlider(
            min=0.0, max=100.0, step=1.0, readout_format=".0f",
            description="temperature [°C]", **_slider()), "temperature", "temperature", "°C")
        self.buffer = w.Dropdown(options=[("none", "")] + [(b, b) for b in ek.chemistry.BUFFERS],
                                 description="buffer", **_text())
        self.buffer.tooltip = ("buffer titrated to the pH with its usual strong acid or base "
                               "(the salt above is added)")
        self.buffer_conc = honest(HonestFloatLogSlider(base=10, min=-1, max=3, step=0.05,
                                                       readout_format=".3g",
                                                       description="buffer conc. [mM]",
                                                       **_slider()),
                                  "buffer_conc", "buffer conc.", "mM", log=True)
        self.buffer_pH = honest(HonestFloatSlider(min=0.0, max=14.0, step=0.05,
                                                  readout_format=".2f", description="buffer pH",
                                                  **_slider()), "pH", "buffer pH", "")
        self.in_air = w.Checkbox(description="in air (CO₂ 420 ppm)", indent=False)
        self.electrolyte_info = w.HTML(layout=w.Layout(width="390px"))
        # wall
        self.wall_mode = w.ToggleButtons(options=[("ζ potential", "zeta"),
                                                  ("surface charge", "charge"),
                                                  ("material", "material")],
                                         tooltips=["you give ζ (constant potential)",
                                                   "you give σ (constant charge)",
                                                   "the charge follows the pH and the salt "
                                                   "(surface sites and a Stern layer)"],
                                         style={"button_width": "112px"})
        self.salt_pH = honest(HonestFloatSlider(min=0.0, max=14.0, step=0.05,
                                                readout_format=".2f",
                                                description="pH (no buffer)", **_slider()),
                              "salt_pH", "pH", "")
        self.salt_pH.tooltip = ("pH the wall's sites see: the salt has no buffer and is not "
                                "in air, so you set it (default 7)")
        self.material = w.Dropdown(options=[(v[0], k) for k, v in MATERIALS.items()],
                                   description="material", style={"description_width": "150px"},
                                   layout=w.Layout(width="390px"))
        self.material_info = w.HTML(layout=w.Layout(width="390px"))
        self.stern_cap = honest(HonestFloatText(description="Stern cap. [F/m²]",
                                                **_text()),
                                "stern_capacitance", "Stern capacitance", "F/m²")
        self.stern_cap.tooltip = "capacitance of the Stern layer between the sites and ζ"
        self.site_amphoteric = w.Checkbox(description="two pK (amphoteric: MOH₂⁺/MOH/MO⁻)",
                                          indent=False)
        self.site_pK = honest(HonestFloatText(description="pK (first proton)", **_text()),
                              "site_pK", "pK", "")
        self.site_pK2 = honest(HonestFloatText(description="second pK", **_text()),
                               "site_pK", "second pK", "")
        self.site_density = honest(HonestFloatText(description="sites [1/nm²]", **_text()),
                                   "site_density", "site density", "1/nm²")
        self.site_density.tooltip = "ionisable sites per nm² of wall"
        self.zeta = honest(HonestFloatSlider(min=-200.0, max=200.0, step=1.0,
                                             readout_format=".0f", description="ζ [mV]",
                                             **_slider()), "zeta", "ζ", "mV")
        self.charge = honest(HonestFloatSlider(min=-300.0, max=300.0, step=1.0,
                                               readout_format=".0f",
                                               description="charge σ [mC/m²]", **_slider()),
                             "charge", "charge σ", "mC/m²")
        self.stern = honest(HonestFloatText(description="Stern cond. [nS]", **_text()),
                            "stern", "Stern cond.", "nS")
        # channel
        self.shape = w.Dropdown(options=listed_shapes(), description="shape",
                                style={"description_width": "150px"},
                                layout=w.Layout(width="300px"))
        lo, hi = SIZE_RANGE
        self.size = honest(HonestFloatLogSlider(base=10, min=_log10(lo * 1e6),
                                                max=_log10(hi * 1e6), step=0.02,
                                                readout_format=".3g",
                                                description="size [µm]", **_slider()),
                           "size", "size", "µm", log=True)
        self.width = honest(HonestFloatLogSlider(base=10, min=-2, max=5, step=0.02,
                                                 readout_format=".3g",
                                                 description="slit width [µm]", **_slider()),
                            "width", "slit width", "µm", log=True)
        self.width.tooltip = "width of the slit (its depth is the gap); whole-channel figures"
        self.extra_box = w.VBox([])
        self.extra = {}
        self.model = w.ToggleButtons(options=list(State.MODELS), description="model",
                                     style={"button_width": "52px"})
        self.length = honest(HonestFloatLogSlider(base=10, min=-2, max=3, step=0.05,
                                                  readout_format=".3g",
                                                  description="length [mm]", **_slider()),
                             "length", "length", "mm", log=True)
        self.voltage = honest(HonestFloatText(description="voltage [V]", **_text()),
                              "voltage", "voltage", "V")
        self.pressure = honest(HonestFloatText(description="pressure drop [kPa]", **_text()),
                               "pressure", "pressure drop", "kPa")
        self.channels = honest(HonestIntText(description="parallel channels", **_text()),
                               "channels", "parallel channels", "")
        self.max_pressure = honest(HonestFloatText(description="max. pressure [kPa]",
                                                   **_text()),
                                   "max_pressure", "max. pressure", "kPa")
        self.max_voltage = honest(HonestFloatText(description="max. voltage [V]", **_text()),
                                  "max_voltage", "max. voltage", "V")
        self.max_pressure.tooltip = "pressure rating of the chip and its fittings"
        self.max_voltage.tooltip = "highest voltage the supply (and the lab's rules) allow"

        L = self.links.append
        L(_link(self.salt, s, "salt"))
        L(_link(self.valence, s, "valence"))
        L(_link(self.concentration, s, "concentration"))
        L(_link(self.temperature, s, "temperature", lambda c: c + 273.15, lambda k: k - 273.15))
        L(_link(self.buffer, s, "buffer"))
        L(_link(self.buffer_conc, s, "buffer_concentration"))
        L(_link(self.buffer_pH, s, "pH"))
        L(_link(self.in_air, s, "in_air"))
        L(_link(self.wall_mode, s, "wall_mode"))
        L(_link(self.salt_pH, s, "salt_pH"))
        L(_link(self.material, s, "material"))
        L(_link(self.stern_cap, s, "stern_capacitance"))
        L(_link(self.site_amphoteric, s, "site_amphoteric"))
        L(_link(self.site_pK, s, "site_pK"))
        L(_link(self.site_pK2, s, "site_pK2"))
        L(_link(self.site_density, s, "site_density", lambda v: v * 1e18, lambda v: v * 1e-18))
        L(_link(self.zeta, s, "zeta", lambda v: v * 1e-3, lambda v: v * 1e3))
        L(_link(self.charge, s, "charge_density", lambda v: v * 1e-3, lambda v: v * 1e3))
        L(_link(self.stern, s, "stern_conductance", lambda v: v * 1e-9, lambda v: v * 1e9))
        L(_link(self.shape, s, "shape"))
        L(_link(self.model, s, "model"))
        L(_link(self.length, s, "length", lambda v: v * 1e-3, lambda v: v * 1e3))
        L(_link(self.voltage, s, "voltage"))
        L(_link(self.pressure, s, "pressure_drop", lambda v: v * 1e3, lambda v: v * 1e-3))
        L(_link(self.width, s, "width", lambda v: v * 1e-6, lambda v: v * 1e6))
        L(_link(self.channels, s, "channels"))
        L(_link(self.max_pressure, s, "max_pressure", lambda v: v * 1e3, lambda v: v * 1e-3))
        L(_link(self.max_voltage, s, "max_voltage"))

        self.size.observe(self._size_from_widget, "value")
        s.observe(self._params_from_state, "shape_params")
        s.observe(self._shape_from_state, "shape")
        s.observe(self._visibility, ["salt", "wall_mode", "shape", "buffer", "in_air",
                                     "material", "site_amphoteric"])
        s.observe(self._electrolyte_info, ["salt", "valence", "concentration", "temperature",
                                           "buffer", "buffer_concentration", "pH", "in_air",
                                           "wall_mode", "salt_pH", "material",
                                           "stern_capacitance", "site_amphoteric", "site_pK",
                                           "site_pK2", "site_density"])
        self._electrolyte_info()
        self._busy_sync = False
        self._build_extra()
        self._params_from_state()
        self._visibility()

        rows = [section_title("Electrolyte"), self.salt, self.valence, self.concentration,
                self.temperature, self.buffer, self.buffer_conc, self.buffer_pH, self.in_air,
                self.salt_pH, self.electrolyte_info, section_title("Wall"), self.wall_mode,
                self.zeta, self.charge, self.material, self.stern_cap, self.site_amphoteric,
                self.site_pK, self.site_pK2, self.site_density, self.material_info,
                self.stern, section_title("Channel"), self.shape, self.size, self.width,
                self.extra_box]
        if include_model:
            rows += [self.model]
        if include_drive:
            rows += [section_title("Channel length and driving"), self.length, self.voltage,
                     self.pressure]
        if include_device:
            rows += [section_title("Device"), self.channels, self.max_pressure,
                     self.max_voltage]
        self.stern.tooltip = "surface conductance of the Stern layer [nS]"
        rows = [self.row(r) for r in rows]
        self._visibility()
        self.widget = w.VBox(rows, layout=w.Layout(width="400px", min_width="400px"))

    def _reject(self, message):
        for f in self.rejections:
            f(message)

    def entry(self, slider):
        """The typing box of a slider (the slider's own readout is off: the
        browser would clamp a typed value to the slider's range before the
        kernel saw it). A typed value within the control's limits moves the
        slider, widening its range if needed; outside them it is refused."""
        box = self.entries.get(id(slider))
        if box is not None:
            return box
        box = HonestFloatText(layout=w.Layout(width="86px"))
        box.setup_honest(slider._h_name, slider._h_unit, slider._h_limits, self._reject)
        box.tooltip = f"type a value [{slider._h_unit}]" if slider._h_unit else "type a value"

        def show(v):
            return float(f"{v:.4g}")

        box.value = show(slider.value)

        def from_box(change):
            v, cur = change["new"], slider.value
            if v == cur or (cur != 0 and abs(v - cur) <= 5e-4 * abs(cur)):
                return
            slider.value = v

        def from_slider(change):
            box.value = show(change["new"])

        box.observe(from_box, "value")
        slider.observe(from_slider, "value")
        self.entries[id(slider)] = box
        return box

    def row(self, widget):
        """A slider with its typing box; other widgets as they are."""
        if isinstance(widget, (HonestFloatSlider, HonestFloatLogSlider)):
            box = w.HBox([widget, self.entry(widget)])
            box.layout.display = widget.layout.display
            self.rows[id(widget)] = box
            return box
        return widget

    # -- shape parameters -------------------------------------------------------
    def _build_extra(self):
        cls = ek.channels.SHAPES.get(self.state.shape)
        self.extra = {}
        size_name = size_parameter(self.state.shape) if cls else None
        self.size.description = (f"{cls.parameter_info[size_name].label} [µm]"
                                 if cls else "size [µm]")
        self.size.tooltip = self.size.description
        self.size._h_name = cls.parameter_info[size_name].label if cls else "size"
        for p in (cls.parameters if cls else ()):
            if p == size_name:
                continue
            info = cls.parameter_info[p]
            if info.kind == "length":
                lo = max(info.minimum, SIZE_RANGE[0]) * 1e6
                hi = min(info.maximum, SIZE_RANGE[1]) * 1e6
                wid = HonestFloatLogSlider(base=10, min=_log10(lo), max=_log10(hi), step=0.02,
                                           readout_format=".3g",
                                           description=f"{info.label} [µm]", **_slider())
                wid.setup_honest(info.label, "µm", (max(info.minimum, ek.channels.SIZE_MIN)
                                                    * 1e6, info.maximum * 1e6, False),
                                 self._reject, log=True)
                scale = 1e-6
            elif info.kind == "angle":
                wid = HonestFloatSlider(min=info.minimum, max=info.maximum, step=0.5,
                                        readout_format=".1f", description=f"{info.label} [°]",
                                        **_slider())
                wid.setup_honest(info.label, "°", (info.minimum, info.maximum, False),
                                 self._reject)
                scale = 1.0
            else:
                wid = HonestFloatSlider(min=info.minimum, max=info.maximum,
                                        step=(info.maximum - info.minimum) / 200,
                                        readout_format=".3g",
                                        description=f"{info.label} [-]", **_slider())
                wid.setup_honest(info.label, "", (info.minimum, info.maximum, False),
                                 self._reject)
                scale = 1.0
            wid.tooltip = wid.description
            wid.observe(lambda ch, p=p, scale=scale: self._param_from_widget(p, ch, scale),
                        "value")
            self.extra[p] = (wid, scale)
        self.extra_box.children = [self.row(wid) for wid, _ in self.extra.values()]

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

    def _electrolyte_info(self, change=None):
        """pH, ionic strength, conductivity and Debye length of the electrolyte,
        and what the chosen wall material is."""
        try:
            text = html.escape(self.state.electrolyte_summary())
        except ValueError as exc:
            text = "⚠ " + html.escape(error_text(exc, self.state))
        self.electrolyte_info.value = f"<small>{text}</small>"
        if self.state.wall_mode == "material":
            try:
                text = html.escape(self.state.material_summary())
            except ValueError as exc:
                text = "⚠ " + html.escape(error_text(exc, self.state))
            self.material_info.value = f"<div class='ekx-small'>{text}</div>"

    def _visibility(self, change=None):
        self.valence.layout.display = None if self.state.salt == CUSTOM else "none"
        st = self.state
        buffered = bool(st.buffer)
        mode = st.wall_mode
        mat = mode == "material"
        own = mat and st.material == "custom"
        shown = {self.zeta: mode == "zeta", self.charge: mode == "charge",
                 self.width: st.shape == "Slit",
                 self.buffer_conc: buffered, self.buffer_pH: buffered,
                 self.salt_pH: mat and not st.ph_from_electrolyte,
                 self.material: mat, self.material_info: mat,
                 self.stern_cap: mat and st.material != "silica",
                 self.site_amphoteric: own, self.site_pK: own,
                 self.site_pK2: own and st.site_amphoteric, self.site_density: own}
        for wid, on in shown.items():
            wid.layout.display = None if on else "none"
            if id(wid) in self.rows:
                self.rows[id(wid)].layout.display = None if on else "none"


def _log10(x):
    import math
    return math.log10(x)


class Worker:
    """Runs a computation now (1D shapes) or on a thread (2D sections, slow),
    and hands only the newest result to the view.

    A computation may come in stages (``submit_stages``): the matrix first,
    the fields after. Work for an input that a newer one has replaced is
    dropped at the next stage boundary, and one computation runs at a time
    (the machine's cores are not shared between stale and fresh work).
    """

    def __init__(self):
        import threading
        self._lock = threading.Lock()
        self._run_lock = threading.Lock()
        self.generation = 0
        self.thread = None
        self.dropped = 0          # stages skipped because a newer input arrived

    def submit(self, fn, done, fail, background=False):
        self.submit_stages([(lambda _: fn(), done)], fail, background)

    def submit_stages(self, stages, fail, background=False):
        """``stages``: [(compute(previous output) -> out, show(out)), ...]."""
        import threading
        with self._lock:
            self.generation += 1
            gen = self.generation

        def run():
            with self._run_lock:
                out = None
                for compute_fn, show in stages:
                    if gen != self.generation:
                        self.dropped += 1
                        return
                    try:
                        out = compute_fn(out)
                    except Exception as exc:   # reported in the status area, never raised
                        if gen == self.generation:
                            fail(exc)
                        return
                    if gen != self.generation:
                        self.dropped += 1
                        return
                    try:
                        show(out)
                    except Exception as exc:   # never a traceback on the dashboard
                        fail(exc)
                        return

        if background:
            self.thread = threading.Thread(target=run, name="ekexplore-compute", daemon=True)
            self.thread.start()
        else:
            run()

    def wait(self, timeout=300):
        """Wait for the newest background computation (tests, scripts)."""
        t = self.thread
        if t is not None:
            t.join(timeout)


class ViewUpdates:
    """Status handling shared by the views: a failed update shows its message and
    keeps the last good plots; a good one shows them and says so."""

    #: what stays on screen after a failure ("plots", "maps")
    shown = "plots"

    def _fail(self, exc):
        self.error = error_text(exc, getattr(self, "state", None))
        self.status.error(self.error + f" — the {self.shown} show the last valid input.")

    def _rejected(self, message):
        """A typed value the controls refused (the state did not change)."""
        self.error = message
        self.status.error(message + f" — the {self.shown} show the last valid input.")

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


#: library parameter name -> (screen label, factor from SI, screen unit)
SCREEN_NAMES = {
    "zeta": ("ζ", 1e3, "mV"),
    "charge_density": ("charge σ", 1e3, "mC/m²"),
    "stern_conductance": ("Stern cond.", 1e9, "nS"),
    "stern_capacitance": ("Stern capacitance", 1.0, "F/m²"),
    "concentration": ("salt conc.", 1.0, "mM"),
    "concentrations": ("salt conc.", 1.0, "mM"),
    "temperature": ("temperature", None, "°C"),
    "length": ("length", 1e3, "mm"),
    "width": ("width", 1e6, "µm"),
}

_RANGE_MSG = re.compile(
    r"^(?P<name>[A-Za-z_*]+) = (?P<value>\S+) (?P<unit>\S+) is outside the allowed range "
    r"(?P<left>[\[(])(?P<lo>\S+), (?P<hi>[^\])]+)(?P<right>[\])]) ?\S*(?P<rest>.*)$")


def _screen_value(x, factor):
    v = float(x)
    return v - 273.15 if factor is None else v * factor


def screen_words(message, state=None):
    """A library ValueError message in the screen's words and units
    ("zeta = -0.999 V is outside ..." -> "ζ -999 mV is outside ... mV")."""
    names = dict(SCREEN_NAMES)
    if state is not None and state.shape in ek.channels.SHAPES:
        cls = ek.channels.SHAPES[state.shape]
        for p in cls.parameters:
            info = cls.parameter_info.get(p)
            if info is not None and info.kind == "length":
                names[p] = (info.label, 1e6, "µm")
    if message.startswith("kappa*half_size"):
        m = re.match(r"kappa\*half_size = (\S+)", message)
        ka = m.group(1) if m else "?"
        return (f"κ·a = {ka} is outside the range the solver covers (0.001 to 100000): the "
                "channel is too narrow or too wide for the Debye length; change the size or "
                "the salt conc.")
    m = _RANGE_MSG.match(message)
    if not m or m.group("name") not in names:
        return _wall_potential_words(message)
    label, factor, unit = names[m.group("name")]
    try:
        v = _screen_value(m.group("value"), factor)
        lo = m.group("lo")
        hi = m.group("hi")
        lo_s = lo if lo in ("-inf", "inf") else f"{_screen_value(lo, factor):.4g}"
        hi_s = hi if hi in ("-inf", "inf") else f"{_screen_value(hi, factor):.4g}"
    except ValueError:
        return message
    rest = m.group("rest").strip()
    rest = rest[1:].strip() if rest.startswith(";") else rest
    out = f"{label} {v:.4g} {unit}: enter a value from {lo_s} to {hi_s} {unit}"
    return out + (f" ({rest})" if rest else "")


def _wall_potential_words(message):
    """A wall potential in volts within a message, in the screen's mV and ζ."""
    def mv(m):
        try:
            v = float(m.group(2)) * 1e3
        except ValueError:
            return m.group(0)
        return f"wall potential ζ of {m.group(1) or ''}{v:.3g} mV"
    text = re.sub(r"wall potential of (about )?([-+0-9.eE]+) V", mv, message)
    text = text.replace("|z e zeta/kT| <= ", "|z e ζ/kT| ≤ ")
    return text.replace("the surface's sites", "the wall's sites")


def error_text(exc, state=None):
    """A readable one-line message for a failed computation, in screen words."""
    if isinstance(exc, (ValueError, ArithmeticError)):
        return screen_words(str(exc), state)
    return f"could not compute ({type(exc).__name__}): {exc}"
