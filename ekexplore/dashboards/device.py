"""Device calculator: a channel of given length with an applied voltage and a
pressure drop; flow, current, power, pump curve and streaming generator."""
from __future__ import annotations

import html

import ipywidgets as w
import numpy as np

from . import compute
from .common import (CSS, PALETTE, SAFETY_NOTE, CodeExport, SetupControls, Status, ViewUpdates, Worker,
                     bokeh_widget, new_figure)
from .state import State
from . import units as U
from .units import eng, prefix_scale

__all__ = ["DeviceView"]

TITLE = "ekexplore — device calculator"


def readout_html(d, state):
    eff_bad = bool(d.problems)
    rows = [
        ("flow rate Q", U.flow(d.flow), "net flow at this voltage and pressure drop"),
        ("current I", U.current(d.current), "electric current through the device"),
        ("electrical power V·I", U.power(d.power), "dissipated as Joule heat in the channels"),
        ("EO free flow", U.flow(d.free_flow), "pump flow at zero back-pressure"),
        ("EO stall pressure", U.pressure(d.stall_pressure),
         "back-pressure at which the pump stops"),
        ("streaming voltage", U.voltage(d.streaming_voltage),
         "open-circuit voltage the pressure drop builds"),
        ("streaming current", U.current(d.streaming_current),
         "short-circuit current the pressure drop drives"),
        ("maximum efficiency",
         "not shown: impossible here" if eff_bad else U.percent(d.max_efficiency),
         f"as a generator, at load {eng(d.best_load, 'Ω')}"),
    ]
    cells = [f"<td class='l' title='{html.escape(c)}'>{html.escape(a)}</td>"
             f"<td title='{html.escape(c)}'>{html.escape(b)}</td>" for a, b, c in rows]
    half = (len(cells) + 1) // 2
    body = "".join(f"<tr>{cells[i]}{cells[i + half] if i + half < len(cells) else ''}</tr>"
                   for i in range(half))
    what = (f"{d.channels} identical channel{'s' if d.channels != 1 else ''} in parallel, "
            f"each {U.length(state.length)} long")
    if state.shape == "Slit":
        what += f" and {U.length(state.width)} wide"
    warn = ""
    if d.accuracy is not None and d.accuracy.out_of_range:
        warn += f"<div class='ekx-warn'>⚠ {html.escape(d.accuracy.out_of_range)}</div>"
    for note in d.notes:
        warn += f"<div class='ekx-warn'>⚠ {html.escape(note)}</div>"
    if d.problems:
        warn += ("<div class='ekx-warn'>⚠ Impossible result with the "
                 f"{html.escape(compute.text(d.result.model))} model here: "
                 f"{html.escape('; '.join(d.problems))}. Use pb or auto.</div>")
    if state.narrow_slit:
        warn += (f"<div class='ekx-warn'>⚠ The slit is {U.length(state.width)} wide, under "
                 f"ten gaps ({U.length(10 * state.size)}): the slit model misses the side "
                 "walls. Choose the Rectangle shape for this channel.</div>")
    if state.wall_mode == "material":
        r = d.result
        warn += (f"<div class='ekx-small'><b>Wall</b>, {html.escape(state.material_label())} "
                 f"at pH {state.wall_pH():.2f}: ζ = "
                 f"{html.escape(U.potential(compute.scalar(r.wall_potential)))}, σ = "
                 f"{html.escape(U.charge_density(compute.scalar(r.wall_charge)))}, charged "
                 f"sites {html.escape(U.percent(compute.scalar(r.charged_fraction)))}.</div>")
    return (warn + f"<div class='ekx-small'>{html.escape(what)}; ΔV = "
            f"{html.escape(U.voltage(state.voltage))}, Δp = "
            f"{html.escape(U.pressure(state.pressure_drop))}; model "
            f"{html.escape(compute.text(d.result.model))}. Hover a figure for its meaning."
            f"</div><table class='ekx-table'>{body}</table>")


def caution_html(d, state):
    """The caution box, with the ratings the user set and any that are exceeded."""
    limits = (f" Ratings you set: {html.escape(U.voltage(state.max_voltage))} and "
              f"{html.escape(U.pressure(state.max_pressure))}.")
    extra = ""
    if d is not None and d.warnings:
        extra = ("<br><b>Above your ratings:</b> "
                 + "; ".join(html.escape(x) for x in d.warnings) + ".")
    return SAFETY_NOTE.replace("</div>", limits + extra + "</div>")


class DeviceView(ViewUpdates):
    """Build the device calculator on a :class:`State`; ``.widget`` to display."""

    def __init__(self, state: State | None = None):
        from bokeh.layouts import column
        from bokeh.models import ColumnDataSource

        self.state = state if state is not None else State()
        self.controls = SetupControls(self.state, include_drive=True, include_device=True)
        self.controls.rejections.append(self._rejected)
        self.caution = w.HTML(caution_html(None, self.state))
        self.export = CodeExport()
        self.status = Status()
        self.readout = w.HTML()
        self.readout.add_class("ekx-readout")
        self.last = None
        self.error = None
        self._sig = None
        self.sources = {
            "pump": ColumnDataSource(dict(back_pressure=[], flow=[])),
            "pump_point": ColumnDataSource(dict(back_pressure=[], flow=[])),
            "rating": ColumnDataSource(dict(x=[], y=[])),
            "generator": ColumnDataSource(dict(load=[], power=[], efficiency=[])),
            "best": ColumnDataSource(dict(load=[], power=[], efficiency=[])),
        }
        for key, src in self.sources.items():
            src.name = f"ekx-{key}"   # found by name in the page (browser tests)
        S = self.sources
        fp = new_figure(420, 330, "pump curve at the applied voltage", "back-pressure [kPa]",
                        "flow rate [µL/min]")
        fp.line("x", "y", source=S["rating"], color="#7a1f0c", line_width=2,
                line_dash="dashed", legend_label="max. pressure (your rating)")
        fp.line("back_pressure", "flow", source=S["pump"], color=PALETTE[0], line_width=2.5,
                legend_label="electroosmotic pump")
        fp.scatter("back_pressure", "flow", source=S["pump_point"], size=12,
                   marker="circle_cross", fill_color=PALETTE[1], line_color="black",
                   legend_label="operating point")
        fp.legend.label_text_font_size = "10px"
        fp.add_layout(fp.legend[0], "below")
        fp.legend.orientation = "horizontal"
        fg = new_figure(440, 175, "streaming generator driven by Δp", "",
                        "load power [W]", x_log=True, y_log=True)
        fg.line("load", "power", source=S["generator"], color=PALETTE[2], line_width=2.5)
        fe = new_figure(440, 175, "", "load resistance [Ω]", "efficiency [%]", x_log=True,
                        x_range=fg.x_range)
        fe.line("load", "efficiency", source=S["generator"], color=PALETTE[3], line_width=2.5)
        fe.scatter("load", "efficiency", source=S["best"], size=10, marker="triangle",
                   fill_color=PALETTE[3], line_color="black", legend_label="maximum")
        fe.legend.label_text_font_size = "10px"
        fe.add_layout(fe.legend[0], "right")
        self.figures = {"pump": fp, "generator": fg, "efficiency": fe}
        self.worker = Worker()
        self.state.observe(self._changed)
        self.update(sync=True)
        # two widgets that wrap under each other in a narrow notebook column
        self.plots = w.HBox([bokeh_widget(fp), bokeh_widget(column(fg, fe))],
                            layout=w.Layout(flex_flow="row wrap"))
        header = w.HTML(CSS + f"<span class='ekx-title'>{html.escape(TITLE)}</span> "
                        "<span class='ekx-sub'>&nbsp; flow, current and power of identical channels "
                        "in parallel; pump and generator curves</span>")
        right = w.VBox([self.status.widget, self.caution, self.readout, self.plots,
                        self.export.widget],
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
        # pump curve: Q = b V - a p_back, from zero to the stall pressure or the
        # pressure rating, whichever is lower (and the operating point, whose
        # back-pressure is minus the applied pressure drop)
        p_back_op = -st.pressure_drop
        top = min(abs(d.stall_pressure), st.max_pressure) if d.stall_pressure else 0.0
        hi = max(top, abs(p_back_op), 1.0)
        lo = min(0.0, p_back_op)
        p = np.linspace(lo, hi, 101) if d.stall_pressure >= 0 else np.linspace(-hi, -lo, 101)
        q = (b * st.voltage - a * p)
        fq, pre = prefix_scale(max(np.max(np.abs(q)), abs(d.flow), 1e-30) * U.M3S_TO_L_PER_MIN)
        self.figures["pump"].yaxis.axis_label = f"flow rate [{pre}L/min]"
        self.sources["pump"].data = dict(back_pressure=p / 1e3,
                                         flow=q * U.M3S_TO_L_PER_MIN * fq)
        self.sources["pump_point"].data = dict(back_pressure=[p_back_op / 1e3],
                                               flow=[d.flow * U.M3S_TO_L_PER_MIN * fq])
        if abs(d.stall_pressure) > st.max_pressure:
            x = np.sign(d.stall_pressure) * st.max_pressure / 1e3
            ys = q * U.M3S_TO_L_PER_MIN * fq
            self.sources["rating"].data = dict(x=[x, x], y=[float(np.min(ys)),
                                                             float(np.max(ys))])
        else:
            self.sources["rating"].data = dict(x=[], y=[])
        power = np.where(d.load_power > 0, d.load_power, np.nan)
        fpow, ppre = prefix_scale(np.nanmax(power) if np.any(np.isfinite(power)) else 0.0)
        self.figures["generator"].yaxis.axis_label = f"load power [{ppre}W]"
        eff_ok = not d.problems
        self.sources["generator"].data = dict(
            load=d.load, power=power * fpow,
            efficiency=d.load_efficiency * 100 if eff_ok else np.full(d.load.shape, np.nan))
        self.figures["efficiency"].title.text = (
            "" if eff_ok else "efficiency not shown: impossible with this model here")
        if eff_ok and np.any(d.load_efficiency > 0):
            k = int(np.nanargmax(d.load_efficiency))
            self.sources["best"].data = dict(load=[d.load[k]], power=[power[k] * fpow],
                                             efficiency=[d.load_efficiency[k] * 100])
        else:
            self.sources["best"].data = dict(load=[], power=[], efficiency=[])
        self.readout.value = readout_html(d, st)
        self.caution.value = caution_html(d, st)
        self.export.show(st)
