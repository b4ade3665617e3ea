"""Resolution ladder and Richardson extrapolation of the 2D levels.

Three levels with n/2, n and 2n cells are solved; the extrapolated error
falls about as n^-4. The reported error is the difference between the
extrapolations of the two finer and the two coarser levels when the levels
converge at second order, and the error estimate of the finest level itself
when they do not yet.
"""
from __future__ import annotations

import numpy as np

__all__ = ["DEFAULT_ACCURACY", "ACCURACY_FLOOR", "N_MAX", "resolution", "refined",
           "estimate", "rich"]

#: Target relative error of the 2D solution when none is given [-].
DEFAULT_ACCURACY = 1e-3
#: Accuracy below which the mesh is not refined further.
ACCURACY_FLOOR = 1e-7
#: Middle-level cells across the narrow direction at the default accuracy.
N_DEFAULT = 16
#: Largest middle-level resolution (the fine level doubles it).
N_MAX = 128


def resolution(accuracy):
    """Middle-level cells n (a multiple of 16) for a target relative error.

    Three levels n/2, n, 2n are solved; the extrapolated error falls about as
    n^-4, so n grows as accuracy^-1/4 from 16 cells at 1e-3.
    """
    acc = max(float(accuracy), ACCURACY_FLOOR)
    n = N_DEFAULT * (DEFAULT_ACCURACY / acc) ** 0.25
    return int(min(N_MAX, max(16, 16 * int(np.ceil(n / 16.0 - 1e-9)))))


def refined(n, err, accuracy):
    """The resolution the error estimate asks for (error ~ n^-4), a multiple of 16."""
    return int(min(N_MAX, 16 * int(np.ceil(1.05 * n * (err / accuracy) ** 0.25 / 16))))


def estimate(c0, c1, c2):
    """Relative error of the extrapolation of (c1, c2), from three levels.

    Where the successive differences shrink by 2.5-6.5 per halving (the
    second-order asymptotic range), the difference between the two
    extrapolations (c0, c1) and (c1, c2); elsewhere (not yet asymptotic)
    the error estimate of the finest level itself, (c2 - c1)/3, which is
    larger and does not rely on the extrapolation.
    """
    scale = np.maximum(np.abs(c2), 1e-300)
    d1, d2 = c1 - c0, c2 - c1
    tiny = np.abs(d2) <= 1e-12 * scale
    ratio = np.where(tiny, 4.0, d1 / np.where(tiny, 1.0, d2))
    asymptotic = (ratio >= 2.5) & (ratio <= 6.5)
    three = np.abs(rich(c1, c2) - rich(c0, c1)) / scale
    two = np.abs(d2) / 3.0 / scale
    return float(np.max(np.where(asymptotic | tiny, three, np.maximum(three, two))))


def rich(c, f):
    return (4.0 * f - c) / 3.0
