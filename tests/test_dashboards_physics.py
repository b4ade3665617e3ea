"""What the screens show, read as a person reads it, against closed forms.

Each test builds a dashboard for a simple case, takes the RENDERED text of a
readout (a number and its unit prefix, e.g. "1.65 nL/min"), converts it back
to SI with the SI prefixes written here, and compares it with a closed form
computed here from published constants. Nothing on the expected side goes
through ekexplore, so a wrong unit factor or a wrong figure on screen fails.

Material data (25 °C), each from its source:
- relative permittivity of water 78.30, measured value of Malmberg &
  Maryott (1956), "Dielectric constant of water from 0 to 100 °C", J. Res.
  NBS 56, 1, doi:10.6028/jres.056.001;
- viscosity of water 0.8900 mPa·s at 25 °C and 0.1 MPa, CRC Handbook of
  Chemistry and Physics, "Viscosity of water" table (IAPWS 2008, Huber et
  al. 2009, J. Phys. Chem. Ref. Data 38, 101, doi:10.1063/1.3088050, gives
  0.8897 mPa·s: 3e-4 apart);
- limiting molar conductivities K+ 73.48 and Cl- 76.31 S cm²/mol, CRC
  Handbook, "Ionic conductivity and diffusion at infinite dilution".

Tolerances: the screens print 3 significant figures, a rounding error of up
to 0.5 % (half a unit of the third digit over a leading 1); DISPLAY = 0.6 %
adds the 0.03 % spread of the material data above. Where the bulk
conductivity enters, the Kohlrausch limit c·Λ° is used at 0.1 mM, where the
concentration dependence of the ion mobilities lowers the conductivity by
0.6 % (Debye–Hückel–Onsager limiting law, Λ = Λ° − (A + BΛ°)√c with
A = 60.3 S cm² mol⁻¹ (mol/L)^-½, B = 0.229; Robinson & Stokes, "Electrolyte
Solutions", from memory): CONDUCTIVE = 1.3 %. The thin-layer closed forms are
used at κ·a > 1000, where their own error, of order 1/(κ·a), is below 0.1 %.
"""
from __future__ import annotations

import html as _html
import math
import re

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import constants as C

pytest.importorskip("ipywidgets")
pytest.importorskip("bokeh")
pytest.importorskip("jupyter_bokeh")

from ekexplore.dashboards.device import DeviceView  # noqa: E402
from ekexplore.dashboards.explorer import ExplorerView  # noqa: E402
from ekexplore.dashboards.regimes import RegimesView  # noqa: E402
from ekexplore.dashboards.state import State  # noqa: E402

DISPLAY = 6e-3
CONDUCTIVE = 1.3e-2

T = 298.15
EPS = 78.30 * C.epsilon_0            # Malmberg & Maryott 1956 [F/m]
ETA = 0.8900e-3                      # CRC Handbook [Pa s]
LAMBDA_KCL = (73.48 + 76.31) * 1e-4  # CRC, S cm^2/mol -> S m^2/mol


def kohlrausch(c):
    """Bulk conductivity of KCl at infinite dilution, c Λ° [S/m], c in mol/m³."""
    return c * LAMBDA_KCL


def hs_mobility(zeta):
    """Helmholtz–Smoluchowski electro-osmotic mobility −εζ/η [m²/(V s)]
    (von Smoluchowski 1903, Bull. Int. Acad. Sci. Cracovie 184; Delgado et al.
    2005, Pure Appl. Chem. 77, 1753, doi:10.1351/pac200577101753, eq. 47)."""
    return -EPS * zeta / ETA


def hagen_poiseuille(d, L, dp):
    """Flow of a tube of diameter d: Q = π a⁴ Δp/(8 η L), a = d/2 [m³/s]
    (Hagen 1839; Poiseuille 1840; e.g. White, "Viscous Fluid Flow", 3rd ed., eq. 3-52)."""
    a = d / 2
    return math.pi * a**4 * dp / (8 * ETA * L)


def plane_poiseuille(h, w, L, dp):
    """Flow of a slit of gap h and width w: Q = w h³ Δp/(12 η L) [m³/s]
    (plane Poiseuille flow; White, "Viscous Fluid Flow", 3rd ed., sec. 3-3)."""
    return w * h**3 * dp / (12 * ETA * L)


def debye_length(c):
    """λ_D = sqrt(ε k T/(2 N_A e² I)) for a 1:1 salt, I = c [mol/m³] [m]
    (Debye & Hückel 1923, Phys. Z. 24, 185)."""
    return math.sqrt(EPS * C.k * T / (2 * C.N_A * C.e**2 * c))


def grahame(c, zeta):
    """Diffuse-layer charge of a 1:1 salt, σ = sqrt(8 ε R T c) sinh(eζ/2kT) [C/m²]
    (Grahame 1947, Chem. Rev. 41, 441, doi:10.1021/cr60130a002)."""
    return math.sqrt(8 * EPS * C.R * T * c) * math.sinh(C.e * zeta / (2 * C.k * T))


# ---- reading the screen ---------------------------------------------------------
#: SI prefixes, BIPM SI Brochure (2019), Table 7
PREFIX = {"a": 1e-18, "f": 1e-15, "p": 1e-12, "n": 1e-9, "µ": 1e-6, "m": 1e-3, "": 1.0, "k": 1e3,
          "M": 1e6, "G": 1e9}
NUMBER = r"(-?\d+(?:\.\d+)?(?:e[+-]?\d+)?)"


def read(text, unit):
    """'1.65 nL/min', 'L/min' -> 1.65e-9 (in the unit without prefix)."""
    m = re.fullmatch(rf"\s*{NUMBER}\s*([afpnµmkMG]?){re.escape(unit)}\s*", text)
    assert m, f"{text!r} does not read as a number in [prefix]{unit}"
    return float(m.group(1)) * PREFIX[m.group(2)]


def plain(fragment):
    """Text of an HTML fragment as the browser renders it."""
    return _html.unescape(re.sub(r"<[^>]+>", "", fragment)).strip()


def tables(page_html):
    """Every table of the page as a list of rows of cell texts."""
    out = []
    for t in re.findall(r"<table.*?</table>", page_html, flags=re.S):
        rows = re.findall(r"<tr.*?</tr>", t, flags=re.S)
        out.append([[plain(c) for c in re.findall(r"<t[dh][^>]*>(.*?)</t[dh]>", r, re.S)]
                    for r in rows])
    return out


def cell(page_html, row_label, column=1, table=None):
    """The cell of the row whose first cell starts with ``row_label``."""
    for i, t in enumerate(tables(page_html)):
        if table is not None and i != table:
            continue
        for r in t:
            if r and r[0].startswith(row_label):
                return r[column]
    raise AssertionError(f"no row {row_label!r} on the screen")


def pair_cell(page_html, label):
    """Device readout: label and value cells alternate in each row."""
    for t in tables(page_html):
        for r in t:
            for k in range(0, len(r) - 1, 2):
                if r[k] == label:
                    return r[k + 1]
    raise AssertionError(f"no readout {label!r} on the screen")


# ---- explorer ---------------------------------------------------------------------
def test_explorer_tube_against_hagen_poiseuille_and_helmholtz_smoluchowski():
    # 10 µm tube, 10 mm long, 100 mM KCl (κ·a = 5200), ζ = −50 mV
    d, L, c, zeta = 10e-6, 10e-3, 100.0, -0.05
    v = ExplorerView(State(shape="Tube", size=d, concentration=c, zeta=zeta, length=L))
    assert v.status.kind == "ok", v.status.message
    page = v.matrix.value
    A = math.pi * d**2 / 4
    # whole channel: per Δp = 1 kPa (column 1) and per ΔV = 1 V (column 2), table 1
    assert_allclose(read(cell(page, "flow rate Q", 1, table=1), "L/min") / 6e4,
                    hagen_poiseuille(d, L, 1e3), rtol=DISPLAY)       # 1.65 nL/min
    assert_allclose(read(cell(page, "flow rate Q", 2, table=1), "L/min") / 6e4,
                    hs_mobility(zeta) * A / L, rtol=DISPLAY)
    # Smoluchowski streaming current I = −εζ A Δp/(η L) (Delgado et al. 2005, eq. 59)
    assert_allclose(read(cell(page, "current I", 1, table=1), "A"),
                    hs_mobility(zeta) * A * 1e3 / L, rtol=DISPLAY)
    # per unit area, table 0: -dp/dx = 1 kPa/mm = 1e6 Pa/m, E = 1 V/cm = 100 V/m
    assert_allclose(read(cell(page, "mean velocity", 1, table=0), "m/s"),
                    (d / 2)**2 / (8 * ETA) * 1e6, rtol=DISPLAY)
    assert_allclose(read(cell(page, "mean velocity", 2, table=0), "m/s"),
                    hs_mobility(zeta) * 100, rtol=DISPLAY)
    assert_allclose(read(cell(page, "mean current density", 1, table=0), "A/m²"),
                    hs_mobility(zeta) * 1e6, rtol=DISPLAY)
    # derived quantities
    der = v.derived.value
    assert_allclose(read(cell(der, "electroosmotic mobility"), "µm·cm/(V·s)") / 1e8,
                    hs_mobility(zeta), rtol=DISPLAY)
    lam = debye_length(c)
    assert_allclose(read(cell(der, "Debye length"), "m"), lam, rtol=DISPLAY)
    assert_allclose(float(cell(der, "κ·a")), (d / 2) / lam, rtol=DISPLAY)
    assert_allclose(read(cell(der, "wall potential"), "mV") / 1e3, zeta, rtol=DISPLAY)
    assert_allclose(read(cell(der, "wall charge"), "mC/m²") / 1e3, grahame(c, zeta),
                    rtol=DISPLAY)


def test_explorer_slit_against_plane_poiseuille_with_its_width():
    h, wdt, L, c, zeta = 2e-6, 200e-6, 5e-3, 100.0, -0.03
    v = ExplorerView(State(shape="Slit", size=h, width=wdt, concentration=c, zeta=zeta,
                           length=L))
    page = v.matrix.value
    assert "200 µm wide" in plain(page)
    assert_allclose(read(cell(page, "flow rate Q", 1, table=1), "L/min") / 6e4,
                    plane_poiseuille(h, wdt, L, 1e3), rtol=DISPLAY)
    assert_allclose(read(cell(page, "flow rate Q", 2, table=1), "L/min") / 6e4,
                    hs_mobility(zeta) * wdt * h / L, rtol=DISPLAY)
    assert_allclose(read(cell(page, "mean velocity", 1, table=0), "m/s"),
                    h**2 / (12 * ETA) * 1e6, rtol=DISPLAY)
    assert "under ten gaps" not in plain(page)


def test_explorer_narrow_slit_says_so_and_offers_the_rectangle():
    v = ExplorerView(State(shape="Slit", size=2e-6, width=10e-6))
    text = plain(v.matrix.value)
    assert "under ten gaps" in text and "Rectangle" in text


def test_explorer_ohm_law_with_the_bulk_conductivity_at_zero_zeta():
    # uncharged wall: the current is the bulk conduction only, I = K A V/L (Ohm),
    # K = c Λ° (Kohlrausch limit, 0.1 mM); no electro-osmosis, no streaming
    d, L, c = 100e-6, 10e-3, 0.1
    v = ExplorerView(State(shape="Tube", size=d, concentration=c, zeta=0.0, length=L))
    assert v.status.kind == "ok", v.status.message
    page = v.matrix.value
    A = math.pi * d**2 / 4
    assert_allclose(read(cell(page, "current I", 2, table=1), "A"),
                    kohlrausch(c) * A / L, rtol=CONDUCTIVE)
    assert_allclose(read(cell(page, "mean current density", 2, table=0), "A/m²"),
                    kohlrausch(c) * 100, rtol=CONDUCTIVE)
    assert_allclose(read(cell(v.derived.value, "bulk conductivity"), "S/cm") * 100,
                    kohlrausch(c), rtol=CONDUCTIVE)
    # HS at 1 mV would give this; at ζ = 0 the screen shows (next to) nothing
    eo = read(cell(page, "flow rate Q", 2, table=1), "L/min") / 6e4
    assert abs(eo) < 1e-6 * abs(hs_mobility(1e-3)) * A / L
    assert "uncharged wall" in plain(v.verdict.value)


def test_explorer_smoluchowski_streaming_potential_and_coupling():
    # thin layers (κ·a = 1640), little surface conduction (Du ~ 1e-3)
    d, L, c, zeta = 100e-6, 10e-3, 0.1, -0.025
    v = ExplorerView(State(shape="Tube", size=d, concentration=c, zeta=zeta, length=L))
    der = v.derived.value
    # Smoluchowski: ΔU/Δp = εζ/(η K) (Delgado et al. 2005, eq. 60), per kPa on screen
    assert_allclose(read(cell(der, "streaming potential coefficient"), "V per kPa") / 1e3,
                    EPS * zeta / (ETA * kohlrausch(c)), rtol=CONDUCTIVE)
    # degree of coupling q² = L12 L21/(L11 L22), with L11 = a²/(8η) (Hagen-Poiseuille),
    # L12 = L21 = −εζ/η (Helmholtz-Smoluchowski, Onsager), L22 = K; and the maximum
    # efficiency q²/(1 + sqrt(1 − q²))² (Kedem & Caplan 1965, Trans. Faraday Soc. 61,
    # 1897, doi:10.1039/TF9656101897)
    q2 = hs_mobility(zeta)**2 / ((d / 2)**2 / (8 * ETA) * kohlrausch(c))
    assert_allclose(float(cell(der, "coupling degree")), q2, rtol=2 * CONDUCTIVE)
    assert_allclose(read(cell(der, "maximum efficiency"), "%") / 100,
                    q2 / (1 + math.sqrt(1 - q2))**2, rtol=2 * CONDUCTIVE)


def test_forced_thin_at_small_kappa_a_says_so_and_shows_no_impossible_share():
    v = ExplorerView(State(model="thin", concentration=0.01, size=1e-7))
    text = plain(v.matrix.value)
    assert "outside its range" in text and "error against pb" in text
    assert "within 5 %" not in plain(v.verdict.value)
    for row in tables(v.derived.value)[0][1:]:
        if row[1].endswith("%"):
            assert 0.0 <= float(row[1].split()[0]) <= 100.0, row
    assert "not shown" in cell(v.derived.value, "counter-ion share")


# ---- device -------------------------------------------------------------------------
def test_device_readout_against_closed_forms_with_parallel_channels():
    N, d, L, c, zeta, V, dp = 4, 100e-6, 20e-3, 0.1, -0.025, 100.0, 2e3
    v = DeviceView(State(shape="Tube", size=d, concentration=c, zeta=zeta, length=L,
                         voltage=V, pressure_drop=dp, channels=N))
    assert v.status.kind == "ok", v.status.message
    page = v.readout.value
    A = math.pi * d**2 / 4
    q_hp = hagen_poiseuille(d, L, dp)
    q_eo = hs_mobility(zeta) * A * V / L
    K = kohlrausch(c)
    i_str = hs_mobility(zeta) * A * dp / L          # Smoluchowski streaming current
    I = N * (K * A * V / L + i_str)                 # Ohm plus streaming
    assert_allclose(read(pair_cell(page, "flow rate Q"), "L/min") / 6e4, N * (q_hp + q_eo),
                    rtol=DISPLAY)
    assert_allclose(read(pair_cell(page, "current I"), "A"), I, rtol=CONDUCTIVE)
    # Joule power V·I
    assert_allclose(read(pair_cell(page, "electrical power V·I"), "W"), V * I,
                    rtol=CONDUCTIVE)
    assert_allclose(read(pair_cell(page, "EO free flow"), "L/min") / 6e4, N * q_eo,
                    rtol=DISPLAY)
    # stall: Hagen–Poiseuille back-flow equal to the HS flow, Δp = 8 ε|ζ| V / a²
    assert_allclose(read(pair_cell(page, "EO stall pressure"), "kPa") * 1e3,
                    8 * EPS * abs(zeta) * V / (d / 2)**2, rtol=DISPLAY)
    assert_allclose(read(pair_cell(page, "streaming voltage"), "V"),
                    EPS * zeta * dp / (ETA * K), rtol=CONDUCTIVE)
    assert_allclose(read(pair_cell(page, "streaming current"), "A"), N * i_str,
                    rtol=DISPLAY)
    assert "4 identical channels in parallel" in plain(page)


def test_device_at_zero_zeta_is_ohm_and_joule():
    d, L, c, V = 100e-6, 10e-3, 0.1, 50.0
    v = DeviceView(State(shape="Tube", size=d, concentration=c, zeta=0.0, length=L,
                         voltage=V, pressure_drop=0.0))
    assert v.status.kind == "ok", v.status.message
    A = math.pi * d**2 / 4
    I = kohlrausch(c) * A * V / L
    assert_allclose(read(pair_cell(v.readout.value, "current I"), "A"), I, rtol=CONDUCTIVE)
    assert_allclose(read(pair_cell(v.readout.value, "electrical power V·I"), "W"), V * I,
                    rtol=CONDUCTIVE)


def test_device_ratings_reach_the_caution_box_and_the_pump_curve():
    v = DeviceView(State(shape="Tube", size=2e-6, concentration=1.0, zeta=-0.05, voltage=500.0,
                         max_voltage=300.0, max_pressure=50e3))
    box = plain(v.caution.value)
    assert "voltages that can kill" in box and "pressure ratings" in box
    assert "500 V is above the maximum you set, 300 V" in box
    # the stall pressure here, 8 ε|ζ| V/a², is above the 50 kPa rating
    stall = 8 * EPS * 0.05 * 500.0 / (1e-6)**2
    assert stall > 50e3 and "above the maximum pressure 50 kPa" in box
    assert max(v.sources["pump"].data["back_pressure"]) <= 50.0 + 1e-9
    assert list(v.sources["rating"].data["x"]) == [50.0, 50.0]


# ---- regimes ------------------------------------------------------------------------
def test_regimes_readout_in_engineering_units_against_closed_forms():
    h, c, zeta = 100e-6, 0.1, -0.025
    v = RegimesView(State(shape="Slit", size=h, concentration=c, zeta=zeta), n=8)
    assert v.status.kind == "ok", v.status.message
    text = plain(v.readout.value)
    lam = debye_length(c)
    m = re.search(r"κ·a = (\S+),", text)
    assert_allclose(float(m.group(1)), (h / 2) / lam, rtol=DISPLAY)
    m = re.search(r"electro-osmotic mobility (\S+ µm·cm/\(V·s\))", text)
    assert_allclose(read(m.group(1), "µm·cm/(V·s)") / 1e8, hs_mobility(zeta), rtol=DISPLAY)
    m = re.search(r"channel conductivity (\S+ \S+)", text)
    assert_allclose(read(m.group(1).rstrip(","), "S/cm") * 100, kohlrausch(c),
                    rtol=CONDUCTIVE)
    m = re.search(r"Debye length λD (\S+ \S+)\.", text)
    assert_allclose(read(m.group(1), "m"), lam, rtol=DISPLAY)
    m = re.search(r"ionic strength (\S+) mM", text)
    assert_allclose(float(m.group(1)), c, rtol=DISPLAY)


@pytest.mark.parametrize("view", [ExplorerView, RegimesView, DeviceView])
@pytest.mark.parametrize("wall", [dict(zeta=0.0), dict(wall_mode="charge", charge_density=0.0)])
def test_uncharged_wall_works_on_every_page(view, wall):
    kw = dict(n=6) if view is RegimesView else {}
    v = view(State(**wall), **kw)
    assert v.status.kind == "ok", v.status.message
    assert "division" not in v.status.message


@pytest.mark.parametrize("view", [RegimesView, DeviceView])
def test_forced_thin_out_of_range_is_said_on_the_other_pages(view):
    kw = dict(n=6) if view is RegimesView else {}
    v = view(State(model="thin", concentration=0.01, size=1e-7), **kw)
    text = plain(v.readout.value)
    assert "outside its range" in text and "error against pb" in text
    assert not re.search(r"(\d{3,}|[2-9]\d\d?)(\.\d+)? %", text.split("maximum efficiency")[-1][:40])
