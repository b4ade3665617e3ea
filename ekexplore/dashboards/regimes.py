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
        self.ph_layer = w.Dropdown(options=[(f"{v[0]} [{v[1]}]", k)
                                            for k, v in compute.PH_LAYERS.items()],
                                   value="zeta", description="pH map layer",
                                   style={"description_width": "100px"},
                                   layout=w.Layout(width="420px"))
        self.ph_readout = w.HTML()
        self.ph_readout.add_class("ekx-ph-readout")
        self.last_ph = None
        self._key_c_done = None
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
            "ph": ColumnDataSource({c: [] for c in cols + ["model"]}),
            "point_ph": ColumnDataSource(dict(x=[], y=[])),
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
        fc = new_figure(560, 380, "pH × ionic strength (material wall)", "ionic strength [mM]",
                        "pH at the wall [-]", x_log=True, x_range=CONCENTRATION_RANGE,
                        y_range=(2.0, 12.0))
        self.ph_mapper = LinearColorMapper(palette=Cividis256, low=-100, high=0,
                                           nan_color="#dddddd")
        qc = fc.quad(left="left", right="right", bottom="bottom", top="top", source=S["ph"],
                     line_color=None, fill_color={"field": "value", "transform": self.ph_mapper})
        fc.background_fill_color = "#dddddd"
        fc.grid.grid_line_alpha = 0.25
        fc.scatter("x", "y", source=S["point_ph"], marker="circle_cross", size=16,
                   fill_color="#D55E00", line_color="white", line_width=2,
                   legend_label="operating point")
        fc.legend.label_text_font_size = "10px"
        fc.add_layout(fc.legend[0], "below")
        fc.add_tools(HoverTool(renderers=[qc], tooltips=[
            ("ionic strength", "@x_text"), ("pH", "@y_text"), ("value", "@value_text"),
            ("model", "@model")]))
        self.ph_colorbar = ColorBar(color_mapper=self.ph_mapper, width=12,
                                    major_label_text_font_size="10px",
                                    title_text_font_size="10px", title="ζ [mV]")
        fc.add_layout(self.ph_colorbar, "right")
        self.ph_figure = fc
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
        fc.on_event(Tap, self._tap_ph)

        self.layer.observe(lambda ch: self._recolour(), "value")
        self.ph_layer.observe(lambda ch: self._recolour_ph(), "value")
        self.state.observe(self._changed)
        self.update(sync=True)
        # one document: both maps share the colour mappers
        from bokeh.layouts import row
        self.plots = bokeh_widget(row(fa, fb))
        self.ph_plots = bokeh_widget(fc)       # its own colour scale: its own document
        self.ph_plots.layout.display = None if self.last_ph is not None else "none"
        header = w.HTML(CSS + f"<span class='ekx-title'>{html.escape(TITLE)}</span> "
                        "<span class='ekx-sub'>&nbsp; tap a map to move the operating point; "
                        "hover to read values; grey: outside the solver range or out of reach; a material wall adds a pH map</span>")
        right = w.VBox([self.status.widget, self.layer, self.plots, self.readout,
                        self.ph_layer, self.ph_plots, self.ph_readout, self.export.widget],
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

    def _tap_ph(self, event):
        self.tap_ph(event.x, event.y)

    def _salt_for(self, ionic_strength, pH=None):
        """Salt [mol/m³] reaching ``ionic_strength`` (buffer ions included), or
        None (with a message) below what the buffer alone gives."""
        c = float(self.state.salt_for_ionic_strength(ionic_strength, pH))
        if not np.isfinite(c):
            self.status.error(
                f"ionic strength {num(ionic_strength)} mM is out of reach: the buffer (or air's "
                "carbonate) alone gives more; the operating point did not move")
            return None
        return _clip(c, *CONCENTRATION_RANGE)

    def tap_size(self, ionic_strength, size):
        """Move the operating point to (ionic strength [mol/m³], size [m]); the
        salt is set so that the electrolyte's real ionic strength is the one tapped."""
        if ionic_strength is None or size is None:
            return
        c = self._salt_for(ionic_strength)
        if c is None:
            return
        with self.state.hold_trait_notifications():
            self.state.concentration = c
            self.state.size = _clip(size, *SIZE_RANGE)

    def tap_ph(self, ionic_strength, pH):
        """Move the operating point of the pH map to (ionic strength [mol/m³], pH)."""
        st = self.state
        if ionic_strength is None or pH is None or self.last_ph is None:
            return
        lo, hi = self.last_ph["pH_range"]
        pH = _clip(pH, lo, hi)
        c = self._salt_for(ionic_strength, pH if st.buffer else None)
        if c is None:
            return
        with st.hold_trait_notifications():
            st.concentration = c
            if st.buffer:
                st.pH = pH
            elif not st.in_air:
                st.salt_pH = pH
        if st.in_air and not st.buffer:
            self.status.ok("in air the carbonate sets the pH: the tap set the salt only")

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
            kind = ("constant-charge wall" if self.state.wall_mode == "charge"
                    else "the material sets ζ")
            self.status.ok(f"{kind}: the tap set the size only")

    def update(self, sync=False):
        st = self.state
        sig = tuple(sorted((k, repr(v)) for k, v in st.trait_values().items()
                           if k not in ("length", "voltage", "pressure_drop")))
        if sig == self._sig:
            return
        self._sig = sig
        snap = st.copy()
        key_a, key_b, key_c = self._key_a(snap), self._key_b(snap), self._key_c(snap)
        need_a = self.last_size is None or key_a != self._key_a_done
        need_b = self.last_kz is None or key_b != self._key_b_done
        need_c = snap.wall_mode == "material" and (self.last_ph is None
                                                   or key_c != self._key_c_done)
        n = self.n

        def work():
            ex = compute.explore_matrix(snap)
            a = compute.map_size(snap, n) if need_a else None
            b = compute.map_kappa_zeta(snap, n) if need_b else None
            c = compute.map_pH(snap, max(n * 2 // 3, 4), n) if need_c else None
            return snap, ex, a, b, c, key_a, key_b, key_c

        self.status.busy("computing the maps…")
        self.worker.submit(work, self._done, self._fail,
                           background=snap.is_section and not sync)


    def _done(self, out):
        snap, ex, a, b, c, key_a, key_b, key_c = out
        if a is not None:
            self.last_size, self._key_a_done = a, key_a
        else:
            self.last_size["point"] = (float(snap.ionic_strength()), snap.size)
        if snap.wall_mode != "material":
            self.last_ph = None
        else:
            if c is not None:
                self.last_ph, self._key_c_done = c, key_c
            else:
                self.last_ph["point"] = (float(snap.ionic_strength()), snap.wall_pH())
            # the readout at the operating point: the real channel (a section too)
            self.last_ph["here"] = {k: (float(v) if k != "model" else str(v))
                                    for k, v in compute._pH_values(ex.result).items()}
        self.snap = snap
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
            self._recolour_ph()
            self.export.show(snap)
        except Exception as exc:  # never a traceback on the dashboard
            self._fail(exc)
            return
        self.status.ok("up to date")

    #: inputs no map depends on (the driving and the device)
    _DRIVE = ("length", "voltage", "pressure_drop", "channels", "max_pressure", "max_voltage")

    @classmethod
    def _inputs(cls, st, skip=(), keep_size=False):
        """Every input the maps may depend on, less ``skip`` (and the size)."""
        vals = {k: v for k, v in st.trait_values().items() if k not in cls._DRIVE + skip}
        params = vals.pop("shape_params")
        if not keep_size:
            params = {k: v for k, v in params.items() if k != st.size_name}
        return repr(sorted(vals.items())) + repr(sorted(params.items()))

    @classmethod
    def _key_a(cls, st):
        """Inputs the size map depends on (not the salt concentration or the size)."""
        return cls._inputs(st, ("concentration",))

    @classmethod
    def _key_b(cls, st):
        """Inputs the kappa-zeta map depends on (not the size or zeta, but the
        sign of zeta; a charge or material wall's sign depends on the size)."""
        return (cls._inputs(st, ("zeta",), keep_size=st.wall_mode != "zeta"),
                float(np.sign(st.zeta)))

    @classmethod
    def _key_c(cls, st):
        """Inputs the pH map depends on (not the salt or the pH: its axes)."""
        return cls._inputs(st, ("concentration", "salt_pH", "pH", "zeta", "charge_density"),
                           keep_size=True)

    def _show_points(self):
        a, b = self.last_size, self.last_kz
        S = self.sources
        st = self.snap
        cells_left = np.asarray(a["cells"]["left"], dtype=float)
        self.figures["size"].x_range.start = (float(cells_left.min()) if cells_left.size
                                              and float(a["floor"]) > 0
                                              else CONCENTRATION_RANGE[0])
        self.figures["size"].xaxis.axis_label = (
            "ionic strength [mM]" if st.pure_salt else
            "ionic strength, buffer ions included [mM]" if st.buffer else
            "ionic strength, carbonate from air included [mM]")
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
            x_start = self.figures["size"].x_range.start
            inside = (y >= SIZE_RANGE[0]) & (y <= SIZE_RANGE[1]) & (x >= 3.0 * x_start)
            if np.any(inside):
                k = np.flatnonzero(inside)[0]
                tx.append(x[k])
                ty.append(y[k] * UM)
                tt.append(f"κ·a = {lev:g}")
        S["contour_labels"].data = dict(x=tx, y=ty, text=tt)

    def _recolour_ph(self):
        """The pH map: its layer, colour scale (the data's own range), the
        operating point and its readout; hidden unless the wall is a material."""
        m = self.last_ph
        fc = self.ph_figure
        on = m is not None
        fc.visible = on
        self.ph_layer.layout.display = None if on else "none"
        if hasattr(self, "ph_plots"):
            self.ph_plots.layout.display = None if on else "none"
        if not on:
            self.sources["ph"].data = {k: [] for k in self.sources["ph"].data}
            self.sources["point_ph"].data = dict(x=[], y=[])
            self.ph_readout.value = ("<div class='ekx-small'>The pH map appears when the "
                                     "wall is a <b>material</b> (Wall panel): its charge then "
                                     "follows the pH.</div>")
            return
        key = self.ph_layer.value
        title, unit, factor = compute.PH_LAYERS[key]
        c = m["cells"]
        v = np.asarray(c[key], dtype=float) * factor
        fin = v[np.isfinite(v)]
        lo, hi = (float(fin.min()), float(fin.max())) if fin.size else (0.0, 1.0)
        if hi - lo <= 1e-9 * max(abs(lo), abs(hi), 1e-30):
            lo, hi = lo - 1.0, hi + 1.0
        self.ph_mapper.low, self.ph_mapper.high = lo, hi
        self.ph_colorbar.title = f"{title} [{unit}]"
        st = self.snap
        pure = st.pure_salt
        fc.title.text = (f"pH × ionic strength — {st.material_label()} wall, "
                         f"{eng(st.size, 'm')} {st.size_name}")
        fc.xaxis.axis_label = ("ionic strength [mM]" if pure else
                               "ionic strength, buffer ions included [mM]" if st.buffer else
                               "ionic strength, carbonate from air included [mM]")
        fc.yaxis.axis_label = ("pH of the buffer [-]" if st.buffer else
                               "pH at the wall (no buffer) [-]")
        fc.y_range.start, fc.y_range.end = m["pH_range"]
        # below the buffer's own ionic strength nothing is reachable: start there
        left = np.asarray(c["left"], dtype=float)
        fc.x_range.start = (float(left.min()) if left.size and not pure
                            else CONCENTRATION_RANGE[0])
        fc.x_range.end = CONCENTRATION_RANGE[1]
        # one assignment each
        self.sources["ph"].data = dict(
            left=c["left"], right=c["right"], bottom=c["bottom"], top=c["top"], x=c["x"],
            y=c["y"], value=v, kappa_size=np.zeros_like(v),
            x_text=[f"{num(x)} mM" for x in c["ionic_strength"]],
            y_text=[f"{y:.2f}" for y in c["y"]],
            value_text=[f"{num(x)} {unit}" for x in v], model=list(c["model"]))
        px, py = m["point"]
        self.sources["point_ph"].data = dict(x=[px], y=[py])
        here = m["here"]
        floor = float(np.asarray(m["floor"]))
        grey = []
        if floor > 0:
            grey.append(f"Below {num(floor)} mM (the {'buffer' if st.buffer else 'carbonate'} "
                        "alone, pH dependent) no salt can reach the ionic strength")
        if m["n_valid"] < m["n_cells"]:
            grey.append("Grey cells are out of reach or outside the solver range")
        acid = ("" if st.buffer else
                " Without a buffer the pH axis is the pH the wall's sites see and the ions are "
                "the salt's: the acid or base that would set that pH is not added, so the cells "
                "where its H⁺ or OH⁻ would pass a tenth of the ionic strength are empty "
                "(low salt at low or high pH).")
        self.ph_readout.value = (
            "<div class='ekx-small'><b>pH map</b>, one batched solve over "
            f"{m['n_valid']} of {m['n_cells']} cells (model {html.escape(st.model)}). "
            f"Operating point: ionic strength {num(px)} mM, pH {py:.2f}: "
            f"ζ {html.escape(U.potential(here['zeta']))}, "
            f"σ {html.escape(U.charge_density(here['sigma']))}, "
            f"charged sites {html.escape(U.percent(here['charged']))}, "
            f"electro-osmotic mobility {html.escape(U.mobility(here['mobility']))}, "
            f"channel conductivity {html.escape(U.conductivity(here['conductivity']))}."
            + (" " + html.escape(". ".join(grey)) + "." if grey else "") + acid
            + (" <b>2D section</b>: mapped as the slit of the same half-size."
               if st.is_section else "") + "</div>")

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
            (f"Left map: the ionic strength counts every ion; below {num(a['floor'])} mM "
               f"(the {'buffer' if st.buffer else 'carbonate from air'} alone) no salt can "
               "reach it, so those cells are empty. " if float(a["floor"]) > 0 else "") +
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
