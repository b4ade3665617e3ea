"""Input checks shared by every public constructor and function.

Each check raises a ValueError that names the parameter, the offending value
and the allowed range, so a dashboard can show the message as it is.
"""
from __future__ import annotations

import numpy as np

__all__ = ["as_float_array", "check_range", "check_positive", "check_nonnegative",
           "check_finite_result"]


def _first_bad(arr: np.ndarray, bad: np.ndarray) -> float:
    return float(np.asarray(arr)[bad].ravel()[0])


def as_float_array(name: str, value, unit: str = "") -> np.ndarray:
    """Return ``value`` as a float ndarray (a copy is never needed: inputs are
    not modified), refusing NaN, inf and non-numeric input."""
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a number or an array of numbers, got {value!r}") from None
    if not np.all(np.isfinite(arr)):
        bad = ~np.isfinite(arr)
        u = f" {unit}" if unit else ""
        raise ValueError(f"{name} must be finite, got {_first_bad(arr, bad)}{u}")
    return arr


def check_range(name: str, value, lo: float | None = None, hi: float | None = None,
                unit: str = "", lo_open: bool = False, hi_open: bool = False,
                hint: str = "") -> np.ndarray:
    """Check ``lo <= value <= hi`` element-wise (open ends where asked) and
    return the value as a float array.

    Examples
    --------
    >>> check_range("gap", [1e-6, 2e-6], 1e-9, 1e-2, unit="m").shape
    (2,)
    >>> check_range("gap", 0.5, 1e-9, 1e-2, unit="m")
    Traceback (most recent call last):
    ...
    ValueError: gap = 0.5 m is outside the allowed range [1e-09, 0.01] m
    """
    arr = as_float_array(name, value, unit)
    bad = np.zeros(arr.shape, dtype=bool)
    if lo is not None:
        bad |= (arr <= lo) if lo_open else (arr < lo)
    if hi is not None:
        bad |= (arr >= hi) if hi_open else (arr > hi)
    if np.any(bad):
        u = f" {unit}" if unit else ""
        left = "(" if lo_open else "["
        right = ")" if hi_open else "]"
        lo_s = "-inf" if lo is None else f"{lo:g}"
        hi_s = "inf" if hi is None else f"{hi:g}"
        msg = (f"{name} = {_first_bad(arr, bad):g}{u} is outside the allowed range "
               f"{left}{lo_s}, {hi_s}{right}{u}")
        if hint:
            msg += f"; {hint}"
        raise ValueError(msg)
    return arr


def check_positive(name: str, value, unit: str = "") -> np.ndarray:
    """Check ``value > 0`` element-wise."""
    return check_range(name, value, lo=0.0, unit=unit, lo_open=True)


def check_nonnegative(name: str, value, unit: str = "") -> np.ndarray:
    """Check ``value >= 0`` element-wise."""
    return check_range(name, value, lo=0.0, unit=unit)


def check_finite_result(name: str, value) -> np.ndarray:
    """Guard on outputs: a NaN or inf leaving the package is a bug, so say so."""
    arr = np.asarray(value)
    if not np.all(np.isfinite(arr)):
        raise FloatingPointError(
            f"internal error: {name} is not finite for some inputs; please report "
            "the inputs that caused it")
    return arr
