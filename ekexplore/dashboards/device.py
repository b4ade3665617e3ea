"""Device calculator: a channel of given length with an applied voltage and a
pressure drop; flow, current, power, pump curve and streaming generator."""
from __future__ import annotations

import html

import ipywidgets as w
import numpy as np

from . import compute
from .common import (CSS, PALETTE, SAFETY_NOTE, SetupControls, Status, ViewUpdates, Worker,
                     bokeh_widget, new_figure)
from .state import State
from .units import eng, num

__all__ = ["DeviceView"]

TITLE = "ekexplore — device calculator"
LPM = 6e7   # m^3/s -> L/min


def readout_html(d, state):
    rows = [
        ("flow rate Q", eng(d.flow * LPM, "L/min"), "net flow at this voltage and pressure drop"),
        ("current I", eng(d.current, "A"), "electric current through the channel"),
        ("electrical power V·I", eng(d.power, "W"), "dissipated as Joule heat in the channel"),
        ("EO free flow", eng(d.free_flow * LPM, "L/min"), "pump flow at zero back-pressure"),
        ("EO stall pressure", eng(d.stall_pressure, "Pa"),
         "back-pressure at which the pump stops"),
        ("streaming voltage", eng(d.streaming_voltage, "V"),
         "open-circuit voltage the pressure drop builds"),
        ("streaming current", eng(d.streaming_current, "A"),
         "short-circuit current the pressure drop drives"),
        ("maximum efficiency", f"{d.max_efficiency * 100:.3g} %",
         f"as a generator, at load {eng(d.best_load, 'Ω')}"),
    ]
    cells = [f"<td class='l' title='{html.escape(c)}'>{html.escape(a)}</td>"
             f"<td title='{html.escape(c)}'>{html.escape(b)}</td>" for a, b, c in rows]
    half = (len(cells) + 1) // 2
    body = "".join(f"<tr>{cells[i]}{cells[i + half] if i + half < len(cells) else ''}</tr>"
                   for i in range(half))
    note = " (slit: per metre of width)" if state.shape == "Slit" else ""
    return (f"<div class='ekx-small'>Channel of length {eng(state.length, 'm')}, "
            f"ΔV = {num(state.voltage)} V, Δp = {num(state.pressure_drop / 1e3)} kPa; "
            f"model {html.escape(compute.text(d.result.model))}{note}. "
            "Hover a figure for its meaning.</div>"
            f"<table class='ekx-table'>{body}</table>")


class DeviceView(ViewUpdates):
    """Build the device calculator on a :class:`State`; ``.widget`` to display."""

    def __init__(self, state: State | None = None):
        from bokeh.layouts import column
        from bokeh.models import ColumnDataSource

        self.state = state if state is not None else State()
        self.controls = SetupControls(self.state, include_drive=True)
        self.status = Status()
        self.readout = w.HTML()
        self.readout.add_class("ekx-readout")
        self.last = None
        self.error = None
        self._sig = None
        self.sources = {
            "pump": ColumnDataSource(dict(back_pressure=[], flow=[])),
            "pump_point": ColumnDataSource(dict(back_pressure=[], flow=[])),
            "generator": ColumnDataSource(dict(load=[], power=[], efficiency=[])),
            "best": ColumnDataSource(dict(load=[], power=[], efficiency=[])),
        }
        for key, src in self.sources.items():
            src.name = f"ekx-{key}"   # found by name in the page (browser tests)
        S = self.sources
        fp = new_figure(420, 330, "pump curve at the applied voltage", "back-pressure [kPa]",
                        "flow rate [µL/min]")
        fp.line("back_pressure", "flow", source=S["pump"], color=PALETTE[0], line_width=2.5,
                legend_label="electroosmotic pump")
        fp.scatter("back_pressure", "flow", source=S["pump_point"], size=12,
                   marker="circle_cross", fill_color=PALETTE[1], line_color="black",
                   legend_label="operating point")
        fp.legend.location = "top_right"
        fp.legend.label_text_font_size = "10px"
        fg = new_figure(440, 175, "streaming generator driven by Δp", "",
                        "load power [W]", x_log=True, y_log=True)
        fg.line("load", "power", source=S["generator"], color=PALETTE[2], line_width=2.5)
        fe = new_figure(440, 175, "", "load resistance [Ω]", "efficiency [%]", x_log=True,
                        x_range=fg.x_range)
        fe.line("load", "efficiency", source=S["generator"], color=PALETTE[3], line_width=2.5)
        fe.scatter("load", "efficiency", source=S["best"], size=10, marker="triangle",
                   fill_color=PALETTE[3], line_color="black", legend_label="maximum")
        fe.legend.location = "top_left"
        fe.legend.label_text_font_size = "10px"
        fe.legend.background_fill_alpha = 0.7
        self.figures = {"pump": fp, "generator": fg, "efficiency": fe}
        self.worker = Worker()
        self.state.observe(self._changed)
        self.update(sync=True)
        # two widgets that wrap under each other in a narrow notebook column
        self.plots = w.HBox([bokeh_widget(fp), bokeh_widget(column(fg, fe))],
                            layout=w.Layout(flex_flow="row wrap"))
        header = w.HTML(CSS + f"<span class='ekx-title'>{html.escape(TITLE)}</span> "
                        "<span class='ekx-sub'>&nbsp; flow, current and power of one channel; "
                        "pump and generator curves</span>")
        right = w.VBox([self.status.widget, w.HTML(SAFETY_NOTE), self.plots, self.readout],
                       layout=w.Layout(flex="1 1 auto", max_width="920px", min_width="0",
                                        overflow="auto"))
        self.widget = w.VBox([header, w.HBox([self.controls.widget, right])])

    def _changed(self, change):
        self.update()

    def update(self, sync=False):
        sig = tuple(sorted((k, repr(v)) for k, v in self.state.trait_values().items()))
        if sig == self._sig:
            return
        self._sig = sig
        snap = self.state.copy()
        self.status.busy("computing a 2D section (can take a while)…" if snap.is_section
                         else "computing…")
        self.worker.submit(lambda: (snap, compute.device(snap)), self._done, self._fail,
                           background=snap.is_section and not sync)


    def _show(self, d, st):
        a = d.conductances["flow_per_pressure"]
        b = d.conductances["flow_per_volt"]
        # pump curve: Q = b V - a p_back, from zero to the stall pressure (and the
        # operating point, whose back-pressure is minus the applied pressure drop)
        p_back_op = -st.pressure_drop
        hi = max(abs(d.stall_pressure), abs(p_back_op)) * 1.1 or 1.0
        lo = min(0.0, p_back_op * 1.1, d.stall_pressure * 1.1)
        p = np.linspace(lo, max(hi, d.stall_pressure), 101)
        self.sources["pump"].data = dict(back_pressure=p / 1e3,
                                         flow=(b * st.voltage - a * p) * LPM * 1e6)
        self.sources["pump_point"].data = dict(back_pressure=[p_back_op / 1e3],
                                               flow=[d.flow * LPM * 1e6])
        power = np.where(d.load_power > 0, d.load_power, np.nan)
        self.sources["generator"].data = dict(load=d.load, power=power,
                                              efficiency=d.load_efficiency * 100)
        k = int(np.nanargmax(d.load_efficiency))
        self.sources["best"].data = dict(load=[d.load[k]], power=[power[k]],
                                         efficiency=[d.load_efficiency[k] * 100])
        self.readout.value = readout_html(d, st)
