"""Regime maps: ionic strength x channel size, and kappa*size x dimensionless
zeta, with switchable colour layers, kappa*size contours, the operating
point, hover readouts, and taps that move the operating point."""
from __future__ import annotations

import html

import ipywidgets as w
import numpy as np

from . import compute
from .common import CSS, CodeExport, SetupControls, Status, ViewUpdates, Worker, bokeh_widget, new_figure
from .state import CONCENTRATION_RANGE, SIZE_RANGE, State
from . import units as U
from .units import eng, num

UM = 1e6   # m -> µm on the size axis

__all__ = ["RegimesView"]

TITLE = "ekexplore — transport regime maps"


def _clip(v, lo, hi):
    return float(min(max(v, lo), hi))


class RegimesView(ViewUpdates):
    """Build the regime maps on a :class:`State`; ``.widget`` is what to display."""

    shown = "maps"

    def __init__(self, state: State | None = None, n=36):
        from bokeh.models import (ColorBar, ColumnDataSource, HoverTool, Label, LinearColorMapper,
                                  LogColorMapper, Span)
        from bokeh.palettes import Cividis256

        self.state = state if state is not None else State()
        self.n = n
        self.controls = SetupControls(self.state, include_drive=False)
        self.controls.rejections.append(self._rejected)
        self.export = CodeExport()
        self.status = Status()
        self.layer = w.Dropdown(options=[(v[0], k) for k, v in compute.LAYERS.items()],
                                value="eo_fraction", description="colour layer",
                                style={"description_width": "90px"},
                                layout=w.Layout(width="620px"))
        self.readout = w.HTML()
        self.readout.add_class("ekx-readout")
        self.last_size = None
        self.last_kz = None
        self._key_a_done = self._key_b_done = None
        self.error = None
        self._sig = None
        self.proxy_note = False
        self.worker = Worker()

        cols = ["left", "right", "bottom", "top", "x", "y", "value", "kappa_size", "x_text",
                "y_text", "value_text"]
        self.sources = {
            "size": ColumnDataSource({c: [] for c in cols}),
            "kz": ColumnDataSource({c: [] for c in cols}),
            "contours": ColumnDataSource(dict(xs=[], ys=[], label=[])),
            "contour_labels": ColumnDataSource(dict(x=[], y=[], text=[])),
            "point_size": ColumnDataSource(dict(x=[], y=[])),
            "point_kz": ColumnDataSource(dict(x=[], y=[])),
        }
        for key, src in self.sources.items():
            src.name = f"ekx-{key}"   # found by name in the page (browser tests)
        S = self.sources
        self.mappers = {"linear": LinearColorMapper(palette=Cividis256, low=0, high=1,
                                                    nan_color="#dddddd"),
                        "log": LogColorMapper(palette=Cividis256, low=1e-4, high=10,
                                              nan_color="#dddddd")}
        fa = new_figure(440, 400, "ionic strength × channel size",
                        "ionic strength [mM]", "size [µm]", x_log=True, y_log=True,
                        x_range=CONCENTRATION_RANGE,
                        y_range=(SIZE_RANGE[0] * UM, SIZE_RANGE[1] * UM))
        fb = new_figure(440, 400, "κ·a × dimensionless wall potential",
                        "κ·a (half-size a over Debye length) [-]", "e|ζ|/kT [-]", x_log=True,
                        x_range=(0.1, 1000.0), y_range=(0.0, 8.0))
        self.figures = {"size": fa, "kz": fb}
        self.quads = {}
        for key, f in self.figures.items():
            q = f.quad(left="left", right="right", bottom="bottom", top="top",
                       source=S[key], line_color=None,
                       fill_color={"field": "value", "transform": self.mappers["linear"]})
            self.quads[key] = q
            f.background_fill_color = "#dddddd"
            f.grid.grid_line_alpha = 0.25
        fa.multi_line("xs", "ys", source=S["contours"], color="white", line_width=1.5,
                      line_dash="dashed")
        fa.text("x", "y", text="text", source=S["contour_labels"], text_color="white",
                text_font_size="11px", text_baseline="bottom")
        self.spans = []
        for lev in compute.KAPPA_LEVELS:
            sp = Span(location=lev, dimension="height", line_color="white", line_dash="dashed",
                      line_width=1.5)
            fb.add_layout(sp)
            fb.add_layout(Label(x=lev, y=7.4, text=f" κ·a = {lev:g}", text_color="white",
                                text_font_size="11px"))
        for key, f in self.figures.items():
            f.scatter("x", "y", source=S["point_" + key], marker="circle_cross", size=16,
                      fill_color="#D55E00", line_color="white", line_width=2,
                      legend_label="operating point")
            f.legend.label_text_font_size = "10px"
            f.add_layout(f.legend[0], "below")
        fa.add_tools(HoverTool(renderers=[self.quads["size"]], tooltips=[
            ("ionic strength", "@x_text"), ("size", "@y_text"),
            ("κ·a", "@kappa_size{0.00}"), ("value", "@value_text")]))
        fb.add_tools(HoverTool(renderers=[self.quads["kz"]], tooltips=[
            ("κ·a", "@x_text"), ("e|ζ|/kT", "@y_text"), ("value", "@value_text")]))
        self.colorbar = ColorBar(color_mapper=self.mappers["linear"], width=12,
                                 major_label_text_font_size="10px", title_text_font_size="10px",
                                 title="")
        fb.add_layout(self.colorbar, "right")
        from bokeh.events import Tap
        fa.on_event(Tap, self._tap_size)
        fb.on_event(Tap, self._tap_kz)

        self.layer.observe(lambda ch: self._recolour(), "value")
        self.state.observe(self._changed)
        self.update(sync=True)
        # one document: both maps share the colour mappers
        from bokeh.layouts import row
        self.plots = bokeh_widget(row(fa, fb))
        header = w.HTML(CSS + f"<span class='ekx-title'>{html.escape(TITLE)}</span> "
                        "<span class='ekx-sub'>&nbsp; tap a map to move the operating point; "
                        "hover to read values; one colour scale (right) for both maps; grey: outside the solver range</span>")
        right = w.VBox([self.status.widget, self.layer, self.plots, self.readout,
                        self.export.widget],
                       layout=w.Layout(flex="1 1 auto", max_width="920px", min_width="0",
                                        overflow="auto"))
        self.widget = w.VBox([header, w.HBox([self.controls.widget, right])])

    # ---- wiring -----------------------------------------------------------------
    def _changed(self, change):
        self.update()

    def _tap_size(self, event):
        self.tap_size(event.x, None if event.y is None else event.y / UM)

    def _tap_kz(self, event):
        self.tap_kz(event.x, event.y)

    def tap_size(self, ionic_strength, size):
        """Move the operating point to (ionic strength [mol/m³], size [m])."""
        if ionic_strength is None or size is None:
            return
        c = ionic_strength / self.state.ionic_strength_factor()
        with self.state.hold_trait_notifications():
            self.state.concentration = _clip(c, *CONCENTRATION_RANGE)
            self.state.size = _clip(size, *SIZE_RANGE)

    def tap_kz(self, kappa_size, phi):
        """Move the operating point to (kappa*half-size, e|zeta|/kT)."""
        if kappa_size is None or phi is None or self.last_kz is None:
            return
        m = self.last_kz
        size = _clip(kappa_size * m["debye_length"] / m["ratio"], *SIZE_RANGE)
        if self.state.wall_mode == "zeta":
            with self.state.hold_trait_notifications():
                self.state.size = size
                self.state.zeta = m["sign"] * max(phi, 0.0) * m["thermal_voltage"]
        else:
            self.state.size = size
            self.status.ok("constant-charge wall: the tap set the size only")

    def update(self, sync=False):
        st = self.state
        sig = tuple(sorted((k, repr(v)) for k, v in st.trait_values().items()
                           if k not in ("length", "voltage", "pressure_drop")))
        if sig == self._sig:
            return
        self._sig = sig
        snap = st.copy()
        key_a, key_b = self._key_a(snap), self._key_b(snap)
        need_a = self.last_size is None or key_a != self._key_a_done
        need_b = self.last_kz is None or key_b != self._key_b_done
        n = self.n

        def work():
            ex = compute.explore_matrix(snap)
            a = compute.map_size(snap, n) if need_a else None
            b = compute.map_kappa_zeta(snap, n) if need_b else None
            return snap, ex, a, b, key_a, key_b

        self.status.busy("computing the maps…")
        self.worker.submit(work, self._done, self._fail,
                           background=snap.is_section and not sync)


    def _done(self, out):
        snap, ex, a, b, key_a, key_b = out
        if a is not None:
            self.last_size, self._key_a_done = a, key_a
        else:
            self.last_size["point"] = (snap.concentration * snap.ionic_strength_factor(),
                                       snap.size)
        if b is not None:
            self.last_kz, self._key_b_done = b, key_b
        else:
            VT = self.last_kz["thermal_voltage"]
            self.last_kz["point"] = (compute.scalar(ex.result.kappa_size),
                                     abs(compute.scalar(ex.result.wall_potential)) / VT)
        self.error = None
        self.explored = ex
        self.proxy_note = snap.is_section
        try:
            self._show_points()
            self._recolour()
            self.export.show(snap)
        except Exception as exc:  # never a traceback on the dashboard
            self._fail(exc)
            return
        self.status.ok("up to date")

    @staticmethod
    def _key_a(st):
        """Inputs the size map depends on (not the concentration or the size)."""
        params = {k: v for k, v in st.shape_params.items() if k != st.size_name}
        return (st.salt, st.valence, st.temperature, st.wall_mode, st.zeta, st.charge_density,
                st.stern_conductance, st.shape, repr(sorted(params.items())))

    @staticmethod
    def _key_b(st):
        """Inputs the kappa-zeta map depends on (not the size or zeta)."""
        params = {k: v for k, v in st.shape_params.items() if k != st.size_name}
        charge = (st.charge_density, st.size) if st.wall_mode == "charge" else ()
        return (st.salt, st.valence, st.concentration, st.temperature, st.wall_mode, charge,
                st.stern_conductance, st.shape, repr(sorted(params.items())),
                float(np.sign(st.zeta)))

    def _show_points(self):
        a, b = self.last_size, self.last_kz
        S = self.sources
        S["point_size"].data = dict(x=[a["point"][0]], y=[a["point"][1] * UM])
        S["point_kz"].data = dict(x=[b["point"][0]], y=[b["point"][1]])
        xs, ys, lab = [], [], []
        for lev, (x, y) in a["contours"].items():
            xs.append(x)
            ys.append(y * UM)
            lab.append(f"κ·a = {lev:g}")
        S["contours"].data = dict(xs=xs, ys=ys, label=lab)
        # label each contour where it leaves the plot on the low-concentration side
        tx, ty, tt = [], [], []
        for lev, (x, y) in a["contours"].items():
            inside = (y >= SIZE_RANGE[0]) & (y <= SIZE_RANGE[1]) & (x >= 3e-3)
            if np.any(inside):
                k = np.flatnonzero(inside)[0]
                tx.append(x[k])
                ty.append(y[k] * UM)
                tt.append(f"κ·a = {lev:g}")
        S["contour_labels"].data = dict(x=tx, y=ty, text=tt)

    def _recolour(self):
        key = self.layer.value
        title, scale, lo, hi = compute.LAYERS[key]
        mapper = self.mappers[scale]
        mapper.low, mapper.high = lo, hi
        for k, q in self.quads.items():
            q.glyph.fill_color = {"field": "value", "transform": mapper}
        self.colorbar.color_mapper = mapper
        self.colorbar.title = title.replace(" [-]", "") + " [-]"
        for name, m in (("size", self.last_size), ("kz", self.last_kz)):
            if m is None:
                continue
            c = m["cells"]
            if name == "size":
                xt = [f"{num(v)} mM" for v in c["x"]]
                yt = [eng(v, "m") for v in c["y"]]
            else:
                xt = [num(v) for v in c["x"]]
                yt = [num(v) for v in c["y"]]
            f = UM if name == "size" else 1.0
            self.sources[name].data = dict(left=c["left"], right=c["right"],
                                           bottom=c["bottom"] * f, top=c["top"] * f, x=c["x"],
                                           y=c["y"] * f,
                                           value=c[key], kappa_size=c["kappa_size"],
                                           x_text=xt, y_text=yt,
                                           value_text=[num(v) for v in c[key]])
        self._show_readout(key, title)

    def _show_readout(self, key, title):
        ex = self.explored
        st = self.state
        r = ex.result
        a, b = self.last_size, self.last_kz
        val = self.value_at(a, a["point"], key)
        self.readout.value = (
            "<div class='ekx-small'>"
            f"<b>Operating point</b>: ionic strength {num(a['point'][0])} mM, "
            f"{html.escape(st.size_name)} {eng(st.size, 'm')}, κ·a = {num(b['point'][0])}, "
            f"e|ζ|/kT = {num(b['point'][1])}; {html.escape(title.split(' [')[0])} here: "
            f"{val}. At the operating point (model {html.escape(ex.model)}): "
            f"electro-osmotic mobility {html.escape(U.mobility(compute.scalar(r.electroosmotic)))}"
            f", channel conductivity {html.escape(U.conductivity(compute.scalar(r.conductive)))}"
            f", Debye length λ<sub>D</sub> {html.escape(U.length(compute.scalar(r.debye_length)))}"
            ".<br>"
            f"<span style='color:#1b2a38'>{html.escape(ex.verdict)}</span><br>"
            + (f"<div class='ekx-warn'>⚠ {html.escape(ex.accuracy.out_of_range)}</div>"
               if ex.accuracy is not None and ex.accuracy.out_of_range else "")
            + (f"<div class='ekx-warn'>⚠ Impossible result of the {html.escape(ex.model)} "
               f"model here: {html.escape('; '.join(ex.problems))}.</div>"
               if ex.problems else "") +
            f"Maps: one batched solve per model (pb reference, thin, dh) on "
            f"{a['n_valid']} of {a['n_cells']} cells (left) and {b['n_valid']} of "
            f"{b['n_cells']} (right); "
            "errors are of the electroosmotic coefficient L12."
            + (" <b>2D section</b>: the maps show the slit of the same half-size (one 2D "
               "solve per cell would take minutes); the readout above is the real section."
               if self.proxy_note else "") + "</div>")

    @staticmethod
    def value_at(m, point, key):
        """The layer ``key`` of map ``m`` in the cell holding ``point``, as text."""
        c = m["cells"]
        x, y = point
        hit = (c["left"] <= x) & (x < c["right"]) & (c["bottom"] <= y) & (y < c["top"])
        if not np.any(hit):
            return "outside the map"
        return num(c[key][np.flatnonzero(hit)[0]])
