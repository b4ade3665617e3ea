"""Engineering-unit formatting for the dashboards (display only)."""
from __future__ import annotations

import math

import numpy as np

_PREFIXES = [(1e-18, "a"), (1e-15, "f"), (1e-12, "p"), (1e-9, "n"), (1e-6, "µ"), (1e-3, "m"), (1.0, ""),
             (1e3, "k"), (1e6, "M"), (1e9, "G")]


def _prefix(value):
    """(scale, prefix) of the largest SI prefix not above |value| (a value that
    rounds up to the next prefix at 4 digits takes it); atto at the least."""
    scale, prefix = _PREFIXES[0]
    for s, p in _PREFIXES:
        if abs(value) >= s * 0.9995:
            scale, prefix = s, p
    return scale, prefix


def eng(value, unit="", digits=3):
    """``value`` [SI] with an SI prefix on ``unit``, e.g. ``eng(3.2e-9, "S")`` -> '3.2 nS'.

    >>> eng(3.2e-9, "S")
    '3.2 nS'
    >>> eng(-0.0512, "V")
    '-51.2 mV'
    >>> eng(0.0, "A")
    '0 A'
    """
    v = float(np.asarray(value).reshape(-1)[0]) if np.ndim(value) else float(value)
    if not math.isfinite(v):
        return f"{v} {unit}".strip()
    if v == 0.0:
        return f"0 {unit}".strip()
    scale, prefix = _prefix(v)
    return f"{v / scale:.{digits}g} {prefix}{unit}".strip()


def num(value, digits=3):
    """A plain number with ``digits`` significant figures.

    >>> num(0.123456), num(12345.0), num(1.5e-7)
    ('0.123', '1.23e+04', '1.5e-07')
    """
    v = float(value) + 0.0          # no "-0" on screen
    text = f"{v:.{digits}g}"
    return "0" if text == "-0" else text


def length_unit(scale_m):
    """(factor, label) to show lengths around ``scale_m`` [m] in nm, µm or mm.

    >>> length_unit(2e-8)
    (1000000000.0, 'nm')
    >>> length_unit(5e-5)
    (1000000.0, 'µm')
    """
    s = abs(float(scale_m))
    if s < 1e-6:
        return 1e9, "nm"
    if s < 1e-3:
        return 1e6, "µm"
    return 1e3, "mm"


def prefix_scale(max_abs):
    """(factor, prefix) so that ``max_abs * factor`` reads between 1 and 1000.

    >>> prefix_scale(6e5)
    (0.001, 'k')
    >>> prefix_scale(0.002)
    (1000.0, 'm')
    """
    v = abs(float(max_abs))
    if not math.isfinite(v) or v == 0.0:
        return 1.0, ""
    scale, prefix = _prefix(v)
    return 1.0 / scale, prefix


# ---------------------------------------------------------------------------
# SI -> screen units: the one place where the dashboards convert.
# Each factor is checked against a hand value in tests/test_dashboards_units.py.
# ---------------------------------------------------------------------------
#: m^3/s -> L/min: 1 m^3 = 1000 L, 1 min = 60 s
M3S_TO_L_PER_MIN = 1e3 * 60.0
#: S/m -> mS/cm: 1 S/m = 1000 mS / 100 cm
S_PER_M_TO_MS_PER_CM = 1e3 / 1e2
#: m^2/(V s) -> µm·cm/(V s): 1 m = 1e6 µm = 1e2 cm
MOBILITY_TO_UM_CM = 1e6 * 1e2
#: K -> °C offset
ZERO_CELSIUS = 273.15


def litre_per_minute(q):
    """Flow rate [m³/s] in L/min.

    >>> litre_per_minute(1e-3 / 60)
    1.0
    """
    return float(q) * M3S_TO_L_PER_MIN


def flow(q):
    """Flow rate [m³/s] as text in L/min with a prefix.

    >>> flow(1.0e-12 / 60)
    '1 nL/min'
    """
    return eng(litre_per_minute(q), "L/min")


def millivolt(v):
    """Potential [V] in mV."""
    return float(v) * 1e3


def potential(v):
    """Potential [V] as text, always in mV (how ζ is given on screen).

    >>> potential(-0.0512)
    '-51.2 mV'
    """
    return f"{num(millivolt(v))} mV"


def voltage(v):
    """Voltage [V] as text with a prefix (kV, V, mV)."""
    return eng(v, "V")


def current(i):
    """Current [A] as text with a prefix."""
    return eng(i, "A")


def power(p):
    """Power [W] as text with a prefix."""
    return eng(p, "W")


def pressure(p):
    """Pressure [Pa] as text in kPa (the unit of the pressure inputs).

    >>> pressure(2500.0), pressure(8.32e7)
    ('2.5 kPa', '83.2 MPa')
    """
    v = float(p)
    if abs(v) >= 1e7:       # from 10 MPa on, MPa (never an exponent)
        return f"{num(v / 1e6)} MPa"
    return f"{num(v / 1e3)} kPa"


def charge_density(s):
    """Surface charge [C/m²] as text in mC/m².

    >>> charge_density(-0.012)
    '-12 mC/m²'
    """
    return f"{num(float(s) * 1e3)} mC/m²"


def conductivity(k):
    """Conductivity [S/m] as text in mS/cm (or µS/cm below 1 mS/cm).

    >>> conductivity(0.1408), conductivity(1.0)
    ('1.41 mS/cm', '10 mS/cm')
    """
    v = float(k) * S_PER_M_TO_MS_PER_CM
    if v != 0.0 and abs(v) < 1.0:
        return f"{num(v * 1e3)} µS/cm"
    return f"{num(v)} mS/cm"


def concentration(c):
    """Concentration [mol/m³] as text in mM (1 mol/m³ = 1 mmol/L).

    >>> concentration(10.0)
    '10 mM'
    """
    return f"{num(c)} mM"


def length(x):
    """Length [m] as text with a prefix (nm, µm, mm)."""
    return eng(x, "m")


def mobility(mu):
    """Electrophoretic or electro-osmotic mobility [m²/(V·s)] in µm·cm/(V·s).

    >>> mobility(3.9e-8)
    '3.9 µm·cm/(V·s)'
    """
    return f"{num(float(mu) * MOBILITY_TO_UM_CM)} µm·cm/(V·s)"


def celsius(T):
    """Temperature [K] in °C."""
    return float(T) - ZERO_CELSIUS


def percent(x, digits=3):
    """A fraction [-] as text in %.

    >>> percent(0.0123), percent(1.7)
    ('1.23 %', '170 %')
    """
    v = float(x) * 100
    if math.isfinite(v) and abs(v) >= 10 ** digits:
        return f"{v:.0f} %"
    return f"{v:.{digits}g} %"


def conductance(g):
    """Conductance [S] as text with a prefix."""
    return eng(g, "S")
