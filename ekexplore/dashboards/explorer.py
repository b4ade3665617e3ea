"""The coupling-matrix explorer: controls, matrix, derived quantities,
profiles across the section, 2D fields, regime verdict and export."""
from __future__ import annotations

import html

import ipywidgets as w
import numpy as np

from . import compute
from .common import (CSS, PALETTE, CodeExport, SetupControls, Status, ViewUpdates, Worker, bokeh_widget,
                     download_link, new_figure)
from .state import MATERIALS, State
from . import units as U
from .units import eng, length_unit, num, prefix_scale

__all__ = ["ExplorerView"]

TITLE = "ekexplore — coupling matrix explorer"


def ratio_text(x):
    """A ratio for a sentence: 2.5, 38, 1000 (never an exponent)."""
    return f"{x:.0f}" if x >= 100 else num(x, 2)


def symbols(text):
    """Escape ``text`` for HTML and render λ_D as a symbol with a subscript."""
    return html.escape(text).replace("λ_D", "λ<sub>D</sub>")


def matrix_html(ex, state):
    """The matrix per area and for the whole channel, in engineering units."""
    m = ex.matrix
    G1 = 1e6     # 1 kPa/mm in Pa/m
    E1 = 1e2     # 1 V/cm in V/m
    area = (
        "<table class='ekx-table'><tr><th class='l'>per unit area</th>"
        "<th>per −dp/dx = 1 kPa/mm</th><th>per E = 1 V/cm</th></tr>"
        f"<tr><td class='l'>mean velocity ⟨u⟩</td><td>{eng(m[0, 0] * G1, 'm/s')}</td>"
        f"<td>{eng(m[0, 1] * E1, 'm/s')}</td></tr>"
        f"<tr><td class='l'>mean current density ⟨j⟩</td><td>{eng(m[1, 0] * G1, 'A/m²')}</td>"
        f"<td>{eng(m[1, 1] * E1, 'A/m²')}</td></tr></table>")
    c = ex.conductances
    what = (f"one channel, {U.length(state.width)} wide, L = {U.length(state.length)}"
            if state.shape == "Slit" else f"one channel, L = {U.length(state.length)}")
    whole = (
        f"<table class='ekx-table'><tr><th class='l'>{html.escape(what)}</th>"
        "<th>per Δp = 1 kPa</th><th>per ΔV = 1 V</th></tr>"
        f"<tr><td class='l'>flow rate Q</td>"
        f"<td>{U.flow(c['flow_per_pressure'] * 1e3)}</td>"
        f"<td>{U.flow(c['flow_per_volt'])}</td></tr>"
        f"<tr><td class='l'>current I</td><td>{U.current(c['current_per_pressure'] * 1e3)}</td>"
        f"<td>{U.current(c['conductance'])}</td></tr></table>")
    r = ex.result
    acc = ex.accuracy
    if acc.how == "numerical estimate of pb":
        err = f"numerical error estimate {acc.error:.2g}"
    else:
        err = f"error {acc.how}: {U.percent(acc.error, 2)}"
    foot = (f"<div class='ekx-small'>model: <b>{html.escape(ex.model)}</b> "
            f"(asked: {html.escape(state.model)}), {html.escape(err)}; "
            f"reciprocity residual |L12−L21|/L12 = {compute.scalar(r.reciprocity_residual):.2g}."
            "</div>")
    warn = ""
    if acc.out_of_range:
        warn += f"<div class='ekx-warn'>⚠ {html.escape(acc.out_of_range)}</div>"
    for note in ex.notes:
        warn += f"<div class='ekx-warn'>⚠ {html.escape(note)}</div>"
    if ex.problems:
        warn += ("<div class='ekx-warn'>⚠ Impossible result, not shown: "
                 f"{html.escape('; '.join(ex.problems))}. "
                 + ("The forced model is outside its range: use pb or auto."
                    if acc.forced else
                    "This is a known fault of the model at this point; do not rely on the "
                    "derived quantities.") + "</div>")
    if state.narrow_slit:
        warn += (f"<div class='ekx-warn'>⚠ The slit is {U.length(state.width)} wide, under "
                 f"ten gaps ({U.length(10 * state.size)}): the slit model misses the side "
                 "walls. Choose the Rectangle shape for this channel.</div>")
    return f"{warn}<div style='display:flex;flex-wrap:wrap'>{area}{whole}</div>{foot}"


def wall_html(ex, state):
    """The wall as solved: ζ, σ and (for a material) the charged share of its
    sites, with the relative error estimate of the shown model."""
    wl = ex.wall
    if wl is None:
        return ""
    if state.wall_mode == "material":
        label = MATERIALS.get(state.material, (state.material,))[0]
        src = "the electrolyte" if state.ph_from_electrolyte else "typed, no buffer"
        what = f"{label} at pH {state.wall_pH():.2f} ({src})"
    elif state.wall_mode == "zeta":
        what = "ζ given"
    else:
        what = "σ given"
    parts = [f"ζ = {U.potential(wl['zeta'])}", f"σ = {U.charge_density(wl['sigma'])}"]
    if np.isfinite(wl["fraction"]):
        parts.append(f"charged sites {U.percent(wl['fraction'])}")
    err = wl["error"]
    if wl["how"] == "numerical estimate of pb":
        how = f"estimated error ±{U.percent(err, 2)} (pb, numerical)"
    else:
        how = f"estimated error ±{U.percent(err, 2)} ({wl['how']}, model {ex.model})"
    return (f"<div class='ekx-wall'><b>Wall</b>, {html.escape(what)}: "
            f"{html.escape(' · '.join(parts))} <span class='ekx-small'>— "
            f"{html.escape(how)}</span></div>")


def derived_html(rows):
    body = "".join(f"<tr><td class='l'>{symbols(n)}</td><td>{symbols(v)}</td>"
                   f"<td class='l'>{symbols(m)}</td></tr>" for n, v, m in rows)
    return ("<table class='ekx-table'><tr><th class='l'>quantity</th><th>value</th>"
            f"<th class='l'>meaning</th></tr>{body}</table>")


class ExplorerView(ViewUpdates):
    """Build the explorer on a :class:`State`; ``.widget`` is what to display."""

    def __init__(self, state: State | None = None):
        from bokeh.layouts import gridplot
        from bokeh.models import ColumnDataSource

        self.state = state if state is not None else State()
        self.controls = SetupControls(self.state)
        self.controls.rejections.append(self._rejected)
        self.status = Status()
        self.verdict = w.HTML()
        self.wall_line = w.HTML()
        self.wall_line.add_class("ekx-wall-line")
        self.matrix = w.HTML()
        self.matrix.add_class("ekx-matrix")
        self.derived = w.HTML()
        self.export = CodeExport()
        self.code, self.code_button = self.export.code, self.export.button
        self.code_box, self.downloads = self.export.box, self.export.downloads
        self.last = None          # last good compute.Explored
        self.error = None         # last error message, or None
        self._signature = None

        # ---- data: one source per figure, replaced in one assignment ----
        # x: position as plotted across the channel; w: distance from the wall
        # (positive, for the log "near the wall" view)
        self.sources = {
            "potential": ColumnDataSource(dict(x=[], w=[], y=[])),
            "concentrations": ColumnDataSource(dict(xs=[], ws=[], ys=[], color=[], name=[])),
            "charge": ColumnDataSource(dict(x=[], w=[], y=[])),
            "velocity": ColumnDataSource(dict(x=[], w=[], pressure=[], eo=[])),
            "current": ColumnDataSource(dict(x=[], w=[], migration=[], convective=[])),
        }
        for key, src in self.sources.items():
            src.name = f"ekx-{key}"   # found by name in the page (browser tests)
        self.figures, self._figure_views, self.debye_markers = [], [], {}
        self.grids = {}
        for view in ("across", "wall"):
            figs = self._profile_figures(view)
            self.grids[view] = gridplot([[figs[0], figs[1], figs[2]], [figs[3], figs[4], None]],
                                        toolbar_location="right", merge_tools=True)
        self.grids["wall"].visible = False
        self.profile_view = w.ToggleButtons(
            options=[("across the channel", "across"), ("near the wall (log)", "wall")],
            value="across", style={"button_width": "150px"},
            tooltips=["linear position across the section",
                      "log distance from the wall: resolves thin double layers"])
        self.profile_view.observe(self._switch_profiles, "value")
        self.note = w.HTML()
        from bokeh.layouts import column
        self._grid = column(self.grids["across"], self.grids["wall"])
        self.field_note = w.HTML(self.NOTE_1D)
        self.field_box = w.VBox([self.field_note])
        self._build_field_figures()
        self.worker = Worker()
        self.state.observe(self._changed)
        self.update(sync=True)   # fill the sources before BokehJS first renders them
        self.plots = bokeh_widget(self._grid)
        self.tabs = w.Tab(children=[w.VBox([w.HBox([self.profile_view]), self.note,
                                            self.plots]), self.field_box,
                                    self.derived,
                                    self.export.widget])
        for i, t in enumerate(["Profiles", "2D field", "Derived quantities", "Export"]):
            self.tabs.set_title(i, t)
        header = w.HTML(CSS + f"<span class='ekx-title'>{html.escape(TITLE)}</span> "
                        "<span class='ekx-sub'>&nbsp; flow and current of an electrolyte in "
                        "a charged channel: [⟨u⟩, ⟨j⟩] = M · [−dp/dx, E]</span>")
        right = w.VBox([self.status.widget, self.verdict, self.wall_line, self.matrix,
                        self.tabs],
                       layout=w.Layout(flex="1 1 auto", max_width="940px", min_width="0",
                                        overflow="auto"))
        self.widget = w.VBox([header, w.HBox([self.controls.widget, right])])

    def _profile_figures(self, view):
        """The five profile figures of one view ("across" linear, "wall" log)."""
        from bokeh.models import ColumnDataSource, LabelSet
        S = self.sources
        log = view == "wall"
        xc = "w" if log else "x"
        fw, fh = 290, 190

        def fig(title, ylab, y_log=False):
            return new_figure(fw, fh, title, "", ylab, x_log=log, y_log=y_log)

        f_phi = fig("potential", "potential [mV]")
        f_phi.line(xc, "y", source=S["potential"], color=PALETTE[0], line_width=2)
        f_c = fig("ion concentrations", "concentration [mM]", y_log=True)
        f_c.multi_line("ws" if log else "xs", "ys", source=S["concentrations"], color="color",
                       line_width=2, legend_field="name")
        f_rho = fig("space charge density", "charge density [C/m³]")
        f_rho.line(xc, "y", source=S["charge"], color=PALETTE[3], line_width=2)
        f_u = fig("axial velocity", "velocity [m/s]")
        f_u.line(xc, "pressure", source=S["velocity"], color=PALETTE[0], line_width=2,
                 legend_label="pressure-driven")
        f_u.line(xc, "eo", source=S["velocity"], color=PALETTE[1], line_width=2,
                 line_dash="dashed", legend_label="electroosmotic")
        f_j = fig("axial current density", "current density [A/m²]")
        f_j.line(xc, "migration", source=S["current"], color=PALETTE[2], line_width=2,
                 legend_label="migration")
        f_j.line(xc, "convective", source=S["current"], color=PALETTE[4], line_width=2,
                 line_dash="dashed", legend_label="convective")
        figs = [f_phi, f_c, f_rho, f_u, f_j]
        # the Debye-length marker of all five figures is one data source per view,
        # so an update moves it with a single message
        marker = ColumnDataSource(dict(x=[1.0 if log else 0.0], text=["λD"]))
        marker.name = f"ekx-debye-marker-{view}"
        self.debye_markers[view] = marker
        for f in figs:
            f.vspan(x="x", source=marker, line_color="#555555", line_dash="dotted",
                    line_width=1.5)
            f.add_layout(LabelSet(x="x", y=5, y_units="screen", text="text", source=marker,
                                  text_font_size="10px", text_color="#444444"))
        for f in (f_c, f_u, f_j):
            f.legend.label_text_font_size = "10px"
            f.legend.padding = 2
            f.legend.spacing = 6
            f.legend.orientation = "horizontal"
            f.legend.border_line_alpha = 0
            f.add_layout(f.legend[0], "below")     # outside the data
        self.figures.extend(figs)
        self._figure_views.extend([view] * len(figs))
        return figs

    def figures_of(self, view):
        return [f for v, f in zip(self._figure_views, self.figures) if v == view]

    def _switch_profiles(self, change):
        self.grids["across"].visible = change["new"] == "across"
        self.grids["wall"].visible = change["new"] == "wall"

    # ---- wiring ----------------------------------------------------------------
    def _changed(self, change):
        self.update()

    NOTE_1D = ("<div class='ekx-small'>This shape is 1D (uniform along its width or "
               "around its axis): its fields across the section are on the Profiles tab.</div>")

    def update(self, sync=False):
        """Recompute from the state; on bad input show the message, keep the plots.

        2D sections run on a background thread with a busy message; call
        ``worker.wait()`` to wait for them.
        """
        sig = tuple(sorted((k, repr(v)) for k, v in self.state.trait_values().items()))
        if sig == self._signature:
            return
        self._signature = sig
        snap = self.state.copy()
        slow = snap.is_section
        self.status.busy("computing a 2D section…" if slow else "computing…")
        # the matrix first (shown as soon as it is known), the fields after; an
        # input replaced by a newer one is dropped between the two
        self.worker.submit_stages(
            [(lambda _: compute.explore_matrix(snap), lambda ex: self._show_matrix(ex, snap)),
             (lambda ex: compute.explore_fields(ex), lambda ex: self._done((snap, ex)))],
            self._fail, background=slow and not sync)

    def _ok_text(self, ex):
        return f"up to date — model {ex.model}"

    def _show_matrix(self, ex, st):
        """First stage: the matrix, verdict and derived quantities."""
        self.verdict.value = f"<div class='ekx-verdict'>{html.escape(ex.verdict)}</div>"
        self.wall_line.value = wall_html(ex, st)
        self.matrix.value = matrix_html(ex, st)
        self.derived.value = derived_html(ex.derived)
        self.code.value = st.code()
        self.matrix_model = ex.model
        self.status.busy("matrix shown; computing the profiles"
                         + (" and 2D fields…" if st.is_section else "…"))

    def _show(self, ex, st):
        self.downloads.value = (download_link("ekexplore_profiles.csv",
                                              compute.profiles_csv(ex), "profiles (CSV)")
                                + download_link("ekexplore_matrix.csv",
                                                compute.matrix_csv(ex, st), "matrix (CSV)"))
        c = ex.curves
        k, unit = length_unit(max(float(np.max(np.abs(c.x))), c.debye_length))
        x = c.x * k
        wd = (c.x - c.wall) if c.from_wall else (c.wall - c.x)
        wd = np.where(wd > 0, wd * k, np.nan)          # log axis: the wall itself is off
        for f in self.figures_of("across"):
            f.xaxis.axis_label = f"{c.label} [{unit}]"
        for f in self.figures_of("wall"):
            f.xaxis.axis_label = f"distance from the wall [{unit}]"
        lam = c.debye_length
        loc = (c.wall + lam) * k if c.from_wall else (c.wall - lam) * k
        inside = 0 <= loc <= float(np.max(x))
        self.debye_markers["across"].data = (dict(x=[loc], text=["λD"]) if inside
                                             else dict(x=[], text=[]))
        self.debye_markers["wall"].data = dict(x=[lam * k], text=["λD"])
        S = self.sources
        S["potential"].data = dict(x=x, w=wd, y=c.potential * 1e3)
        S["concentrations"].data = dict(
            xs=[x] * len(c.ion_names), ws=[wd] * len(c.ion_names),
            ys=[np.maximum(ci, 1e-30) for ci in c.concentrations],
            color=[PALETTE[i % len(PALETTE)] for i in range(len(c.ion_names))],
            name=list(c.ion_names))
        f, pre = prefix_scale(np.nanmax(np.abs(c.charge_density)))
        for fig in (self.figures_of("across")[2], self.figures_of("wall")[2]):
            fig.yaxis.axis_label = f"charge density [{pre}C/m³]"
        S["charge"].data = dict(x=x, w=wd, y=c.charge_density * f)
        up, ue = c.velocity_pressure, c.velocity_electroosmotic
        f, pre = prefix_scale(max(np.nanmax(np.abs(up)), np.nanmax(np.abs(ue))))
        for fig in (self.figures_of("across")[3], self.figures_of("wall")[3]):
            fig.yaxis.axis_label = f"velocity [{pre}m/s]"
        S["velocity"].data = dict(x=x, w=wd, pressure=up * f, eo=ue * f)
        jm, jc = c.current_migration, c.current_convective
        f, pre = prefix_scale(max(np.nanmax(np.abs(jm)), np.nanmax(np.abs(jc))))
        for fig in (self.figures_of("across")[4], self.figures_of("wall")[4]):
            fig.yaxis.axis_label = f"current density [{pre}A/m²]"
        S["current"].data = dict(x=x, w=wd, migration=jm * f, convective=jc * f)
        where = ("λ<sub>D</sub> = " + eng(lam, "m") + " from the wall (dotted line)" if inside
                 else "λ<sub>D</sub> = " + eng(lam, "m") + " is larger than the distance to the "
                 "centre")
        side = ("Across view: wall at the left edge" if c.from_wall else
                "Across view: wall at the right edge")
        self.note.value = (
            f"<div class='ekx-small'>{side}. Driving: "
            f"Δp = {num(st.pressure_drop / 1e3)} kPa and ΔV = {num(st.voltage)} V over "
            f"L = {eng(st.length, 'm')} (−dp/dx = {eng(ex.pressure_gradient, 'Pa/m')}, "
            f"E = {eng(ex.field, 'V/m')}). {where}.</div>")
        self._show_field(ex.images)

    # ---- 2D fields ----------------------------------------------------------------
    FIELDS = (("potential", "potential ψ", "mV", 1e3),
              ("velocity_electroosmotic", "electroosmotic velocity", "m/s", None),
              ("velocity_pressure", "pressure-driven velocity", "m/s", None))
    #: plot-area size of the field images [px]: longest side, shortest allowed side
    FRAME, FRAME_MIN = 250, 60
    #: decades shown by the logarithmic colour scale
    LOG_DECADES = 4

    def _build_field_figures(self):
        from bokeh.models import (ColorBar, ColumnDataSource, LinearColorMapper, LogColorMapper,
                                  Range1d)
        from bokeh.palettes import Cividis256
        self.field_sources = {}
        self.field_mappers = {}
        self.field_log_mappers = {}
        self.field_bars = {}
        self.field_images_glyphs = {}
        self.field_figures = []
        self.cut_source = ColumnDataSource(dict(x=[], y=[]))
        self.cut_source.name = "ekx-field-cut-line"
        for key, title, unit, _ in self.FIELDS:
            src = ColumnDataSource(dict(image=[], x=[], y=[], dw=[], dh=[]))
            src.name = f"ekx-field-{key}"
            mapper = LinearColorMapper(palette=Cividis256, nan_color=(0, 0, 0, 0))
            log_mapper = LogColorMapper(palette=Cividis256, nan_color=(0, 0, 0, 0))
            fig = new_figure(300, 240, title, "x [µm]", "y [µm]", x_range=Range1d(0, 1),
                             y_range=Range1d(0, 1))
            fig.frame_width, fig.frame_height = self.FRAME, self.FRAME // 2
            fig.width = fig.height = None
            g = fig.image(image="image", x="x", y="y", dw="dw", dh="dh", source=src,
                          color_mapper=mapper)
            fig.line("x", "y", source=self.cut_source, color="#D55E00", line_width=2,
                     line_dash="dashed")
            bar = ColorBar(color_mapper=mapper, width=10, title=unit,
                           major_label_text_font_size="9px", title_text_font_size="10px")
            fig.add_layout(bar, "right")
            fig.grid.visible = False
            self.field_sources[key] = src
            self.field_mappers[key] = mapper
            self.field_log_mappers[key] = log_mapper
            self.field_bars[key] = bar
            self.field_images_glyphs[key] = g
            self.field_figures.append(fig)
        self.field_scale = w.ToggleButtons(
            options=[("linear colours", "linear"), ("log |value| (near the wall)", "log")],
            value="linear", style={"button_width": "190px"},
            tooltips=["colour proportional to the value",
                      f"colour on a log scale of the magnitude over {self.LOG_DECADES} decades: "
                      "shows a thin double layer"])
        self.field_scale.observe(self._rescale_fields, "value")
        self.centre_source = ColumnDataSource(dict(x=[], pressure=[], eo=[]))
        self.centre_source.name = "ekx-field-centreline"
        fc = new_figure(470, 220, "cut along the horizontal centreline", "x [µm]",
                        "velocity [m/s]")
        fc.line("x", "pressure", source=self.centre_source, color=PALETTE[0], line_width=2,
                legend_label="pressure-driven")
        fc.line("x", "eo", source=self.centre_source, color=PALETTE[1], line_width=2,
                line_dash="dashed", legend_label="electroosmotic")
        fc.legend.label_text_font_size = "10px"
        fc.add_layout(fc.legend[0], "right")
        self.centre_figure = fc
        self.field_widget = None
        self._images = None

    def _rescale_fields(self, change=None):
        if self._images is not None:
            self._show_field(self._images)

    def frame_size(self, width, height):
        """Plot-area size [px] for a section of ``width`` x ``height``: equal
        aspect, unless the section is so flat that the short side would fall
        under FRAME_MIN pixels; returns (frame_w, frame_h, stretch factor)."""
        if width >= height:
            fw, fh = self.FRAME, self.FRAME * height / width
            stretch = max(1.0, self.FRAME_MIN / fh)
            return fw, int(round(max(fh, self.FRAME_MIN))), stretch
        fw, fh = self.FRAME * width / height, self.FRAME
        stretch = max(1.0, self.FRAME_MIN / fw)
        return int(round(max(fw, self.FRAME_MIN))), fh, stretch

    def _show_field(self, img):
        from bokeh.layouts import column, row
        if img is None:
            self._images = None
            self.field_box.children = [self.field_note]
            self.field_note.value = self.NOTE_1D
            return
        self._images = img
        log = self.field_scale.value == "log"
        k, unit = length_unit(max(img["width"], img["height"]))
        x0, y0 = img["x0"] * k, img["y0"] * k
        W, H = img["width"] * k, img["height"] * k
        fw, fh, stretch = self.frame_size(W, H)
        for key, title, base, factor in self.FIELDS:
            a = img[key]
            fac, pre = (factor, "") if factor else prefix_scale(np.nanmax(np.abs(a)))
            label = f"{pre}{base}" if factor is None else base
            finite = a[np.isfinite(a)]
            glyph = self.field_images_glyphs[key]
            if log:
                m = self.field_log_mappers[key]
                mag = img["magnitude"][key]
                top = float(np.nanmax(mag) * fac) if np.isfinite(mag).any() else 1.0
                top = top if top > 0 else 1.0
                m.low, m.high = top * 10.0 ** -self.LOG_DECADES, top
                shown = mag * fac
                self.field_bars[key].title = f"|value| [{pre}{base}], log" if factor is None \
                    else f"|value| [{base}], log"
            else:
                m = self.field_mappers[key]
                if finite.size:
                    lo, hi = float(np.min(finite) * fac), float(np.max(finite) * fac)
                    if hi - lo <= 1e-3 * max(abs(lo), abs(hi)):
                        # a uniform field (e.g. the slip model's plug flow): one colour,
                        # not round-off speckle; the scale runs from zero
                        lo, hi = min(lo, 0.0), max(hi, 0.0)
                        if lo == hi:
                            lo, hi = -1.0, 1.0
                    m.low, m.high = lo, hi
                shown = a * fac
                self.field_bars[key].title = f"[{pre}{base}]" if factor is None else f"[{base}]"
            glyph.glyph.color_mapper = m
            self.field_bars[key].color_mapper = m
            self.field_sources[key].data = dict(image=[shown], x=[x0], y=[y0], dw=[W], dh=[H])
        for fig in self.field_figures:
            fig.x_range.start, fig.x_range.end = x0, x0 + W
            fig.y_range.start, fig.y_range.end = y0, y0 + H
            fig.frame_width, fig.frame_height = int(fw), int(fh)
            fig.xaxis.axis_label = f"x [{unit}]"
            fig.yaxis.axis_label = f"y [{unit}]"
        self.centre_figure.xaxis.axis_label = f"x [{unit}]"
        nx_, ny_ = img["normal"]
        self.cut_source.data = dict(x=nx_ * k, y=ny_ * k)
        c = img["centre"]
        up, ue = c["velocity_pressure"], c["velocity_electroosmotic"]
        f, pre = prefix_scale(max(np.nanmax(np.abs(up)), np.nanmax(np.abs(ue))))
        self.centre_figure.yaxis.axis_label = f"velocity [{pre}m/s]"
        self.centre_source.data = dict(x=c["x"] * k, pressure=up * f, eo=ue * f)
        flat = (f" The section is {ratio_text(max(W, H) / min(W, H))}:1, so its short side is "
                f"drawn {ratio_text(stretch)}× longer than to scale." if stretch > 1.0 else
                " Both axes to the same scale.")
        self.field_note.value = (
            "<div class='ekx-small'>Fields over the cross-section, "
            f"{html.escape(U.length(img['width']))} × {html.escape(U.length(img['height']))} "
            "(transparent: outside the channel)." + flat + " Dashed orange: the cut from the "
            "nearest wall to the centre shown on the Profiles tab. A thin double layer shows "
            "best with the log colour scale.</div>")
        # a fresh widget each time, so the page gets the new data even if the tab
        # has not been shown yet
        if self.field_widget is not None:
            # bokeh models belong to one document: release them from the old one
            layout = self._field_layout
            if layout.document is not None:
                layout.document.remove_root(layout)
            self.field_widget.close()
        f0, f1, f2 = self.field_figures
        self._field_layout = column(row(f0, f1), row(f2, self.centre_figure))
        self.field_widget = bokeh_widget(self._field_layout)
        self.field_box.children = [self.field_note, w.HBox([self.field_scale]),
                                   self.field_widget]
