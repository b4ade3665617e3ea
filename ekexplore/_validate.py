"""Input checks shared by every public constructor and function.

Each check raises a ValueError that names the parameter, the offending value
and the allowed range, so a dashboard can show the message as it is.
"""
from __future__ import annotations

import numpy as np

__all__ = ["as_float_array", "check_range", "check_positive", "check_nonnegative",
           "check_finite_result", "check_scalar", "check_choice", "check_integer",
           "broadcast_named"]


def _first_bad(arr: np.ndarray, bad: np.ndarray) -> float:
    return float(np.asarray(arr)[bad].ravel()[0])


def _short(value, limit: int = 60) -> str:
    s = repr(value)
    return s if len(s) <= limit else s[:limit - 3] + "..."


def _range_text(lo, hi, unit="", lo_open=False, hi_open=False) -> str:
    u = f" {unit}" if unit else ""
    left = "(" if lo_open else "["
    right = ")" if hi_open else "]"
    lo_s = "-inf" if lo is None else f"{lo:g}"
    hi_s = "inf" if hi is None else f"{hi:g}"
    return f"{left}{lo_s}, {hi_s}{right}{u}"


def as_float_array(name: str, value, unit: str = "", allowed: str = "") -> np.ndarray:
    """Return ``value`` as a float ndarray (inputs are never modified).

    Refused, each with a ValueError naming ``name``, the value and (when
    given) the ``allowed`` range: None, text (``"1e-6"`` is refused rather
    than guessed), booleans, empty arrays, NaN and inf.

    Examples
    --------
    >>> as_float_array("gap", [1e-6, 2e-6]).shape
    (2,)
    >>> as_float_array("gap", "1e-6", unit="m", allowed="[1e-09, 0.01] m")
    Traceback (most recent call last):
    ...
    ValueError: gap must be a number [m], got the text '1e-6'; allowed range [1e-09, 0.01] m
    """
    u = f" [{unit}]" if unit else ""
    tail = f"; allowed range {allowed}" if allowed else ""
    if value is None:
        raise ValueError(f"{name} must be a number{u}, got None{tail}")
    if isinstance(value, (str, bytes)):
        raise ValueError(f"{name} must be a number{u}, got the text {value!r}{tail}")
    if isinstance(value, (bool, np.bool_)):
        raise ValueError(f"{name} must be a number{u}, got the boolean {value!r}{tail}")
    raw = value if isinstance(value, np.ndarray) else None
    if raw is None:
        try:
            raw = np.asarray(value)
        except (TypeError, ValueError):  # ragged nested sequences
            raise ValueError(f"{name} must be a number or a regular array of numbers{u}, "
                             f"got {_short(value)}{tail}") from None
    kind = raw.dtype.kind
    if kind in "USa":
        first = raw.ravel()[0] if raw.size else ""
        raise ValueError(f"{name} must be numbers{u}, got text such as {str(first)!r} in "
                         f"{_short(value)}{tail}")
    if kind == "b":
        raise ValueError(f"{name} must be numbers{u}, got booleans {_short(value)}{tail}")
    if kind == "O":
        for x in raw.ravel():
            if x is None or isinstance(x, (str, bytes, bool, np.bool_)):
                raise ValueError(f"{name} must be numbers{u}, got {x!r} in "
                                 f"{_short(value)}{tail}")
    if kind == "c":
        raise ValueError(f"{name} must be real numbers{u}, got complex {_short(value)}{tail}")
    try:
        arr = np.asarray(raw, dtype=float)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a number or an array of numbers{u}, "
                         f"got {_short(value)}{tail}") from None
    if arr.size == 0:
        raise ValueError(f"{name} is empty (shape {arr.shape}); give at least one value"
                         f"{u}{tail}")
    if not np.all(np.isfinite(arr)):
        bad = ~np.isfinite(arr)
        su = f" {unit}" if unit else ""
        raise ValueError(f"{name} must be finite, got {_first_bad(arr, bad)}{su}{tail}")
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
    allowed = _range_text(lo, hi, unit, lo_open, hi_open)
    arr = as_float_array(name, value, unit, allowed)
    bad = np.zeros(arr.shape, dtype=bool)
    if lo is not None:
        bad |= (arr <= lo) if lo_open else (arr < lo)
    if hi is not None:
        bad |= (arr >= hi) if hi_open else (arr > hi)
    if np.any(bad):
        u = f" {unit}" if unit else ""
        msg = f"{name} = {_first_bad(arr, bad):g}{u} is outside the allowed range {allowed}"
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


def check_scalar(name: str, value, lo: float | None = None, hi: float | None = None,
                 unit: str = "") -> float:
    """A single number in ``[lo, hi]`` (arrays of any other size are refused).

    Examples
    --------
    >>> check_scalar("tol", 0.01, 1e-6, 1.0)
    0.01
    >>> check_scalar("tol", [0.01, 0.02], 1e-6, 1.0)
    Traceback (most recent call last):
    ...
    ValueError: tol must be a single number, got an array of shape (2,): [0.01, 0.02]; allowed range [1e-06, 1]
    """
    arr = check_range(name, value, lo, hi, unit=unit)
    if arr.ndim != 0:
        raise ValueError(f"{name} must be a single number, got an array of shape {arr.shape}: "
                         f"{_short(value)}; allowed range {_range_text(lo, hi, unit)}")
    return float(arr)


def check_choice(name: str, value, choices) -> str:
    """One of ``choices`` (strings), refusing lists, arrays and other types.

    Examples
    --------
    >>> check_choice("model", "pb", ("auto", "pb"))
    'pb'
    >>> check_choice("model", ["pb"], ("auto", "pb"))
    Traceback (most recent call last):
    ...
    ValueError: model = ['pb'] must be one name (a string); choose one of auto, pb
    """
    options = ", ".join(str(c) for c in choices)
    if not isinstance(value, str):
        raise ValueError(f"{name} = {_short(value)} must be one name (a string); "
                         f"choose one of {options}")
    if value not in choices:
        raise ValueError(f"{name} = {value!r}; choose one of {options}")
    return value


def check_integer(name: str, value, lo: int | None = None, hi: int | None = None,
                  nonzero: bool = False) -> int:
    """An integer (Python or numpy, never a bool or a float) in ``[lo, hi]``.

    Examples
    --------
    >>> check_integer("valence", 2, 1, 4)
    2
    >>> check_integer("valence", True, 1, 4)
    Traceback (most recent call last):
    ...
    ValueError: valence = True is a boolean; give an integer (allowed range [1, 4])
    """
    if lo is None and hi is None:
        allowed = "allowed: any integer" + (" except 0" if nonzero else "")
    else:
        allowed = "allowed range " + _range_text(lo, hi) + (" except 0" if nonzero else "")
    if isinstance(value, (bool, np.bool_)):
        raise ValueError(f"{name} = {value!r} is a boolean; give an integer ({allowed})")
    if not isinstance(value, (int, np.integer)):
        raise ValueError(f"{name} = {_short(value)} must be an integer ({allowed})")
    if (lo is not None and value < lo) or (hi is not None and value > hi) or (
            nonzero and value == 0):
        raise ValueError(f"{name} = {value!r} is not allowed ({allowed})")
    return int(value)


def broadcast_named(shapes: dict) -> tuple:
    """The common broadcast shape of named parameters, or a ValueError that
    names the parameters and their shapes.

    Examples
    --------
    >>> broadcast_named({"gap": (3,), "concentration": ()})
    (3,)
    >>> broadcast_named({"gap": (3,), "concentration": (4,)})
    Traceback (most recent call last):
    ...
    ValueError: array parameters do not fit together: gap has shape (3,), concentration has shape (4,); give equal shapes or shapes that broadcast (e.g. (3, 1) and (4,) for a grid)
    """
    try:
        return np.broadcast_shapes(*shapes.values())
    except ValueError:
        pass
    listed = ", ".join(f"{k} has shape {tuple(v)}" for k, v in shapes.items() if tuple(v) != ())
    raise ValueError(f"array parameters do not fit together: {listed}; give equal shapes or "
                     "shapes that broadcast (e.g. (3, 1) and (4,) for a grid)")
