"""Engineering-unit formatting for the dashboards (display only)."""
from __future__ import annotations

import math

import numpy as np

_PREFIXES = [(1e-15, "f"), (1e-12, "p"), (1e-9, "n"), (1e-6, "µ"), (1e-3, "m"), (1.0, ""),
             (1e3, "k"), (1e6, "M"), (1e9, "G")]


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
    scale, prefix = _PREFIXES[0]
    for s, p in _PREFIXES:
        if abs(v) >= s * 0.9995:
            scale, prefix = s, p
    return f"{v / scale:.{digits}g} {prefix}{unit}".strip()


def num(value, digits=3):
    """A plain number with ``digits`` significant figures.

    >>> num(0.123456), num(12345.0), num(1.5e-7)
    ('0.123', '1.23e+04', '1.5e-07')
    """
    v = float(value)
    return f"{v:.{digits}g}"


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
    scale, prefix = _PREFIXES[0]
    for s, p in _PREFIXES:
        if v >= s * 0.9995:
            scale, prefix = s, p
    return 1.0 / scale, prefix
