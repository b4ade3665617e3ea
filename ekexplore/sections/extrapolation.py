"""Resolution ladder and Richardson extrapolation of the 2D levels.

Four levels with n/2, 3n/4, n and 2n cells are solved; the result is the
extrapolation of the two finer ones, whose error falls about as n^-4. Its
error estimate (:func:`extrapolated_error`) compares it with the
extrapolations (n/2, n) and (3n/4, n); the flow alone uses the three-level
:func:`estimate`.
"""
from __future__ import annotations

import numpy as np

__all__ = ["DEFAULT_ACCURACY", "ACCURACY_FLOOR", "N_MAX", "ESTIMATE_SAFETY", "THIN_LAYER_K",
           "resolution",
           "refined", "estimate", "extrapolated_error", "rich", "richardson"]

#: Target relative error of the 2D solution when none is given [-].
DEFAULT_ACCURACY = 1e-3
#: Accuracy below which the mesh is not refined further.
ACCURACY_FLOOR = 1e-7
#: Middle-level cells across the narrow direction at the default accuracy.
N_DEFAULT = 16
#: Largest middle-level resolution (the fine level doubles it).
N_MAX = 128
#: Safety factor of :func:`extrapolated_error`. Each of its two differences is
#: exactly the error of the returned extrapolation when the extrapolated values
#: converge at fourth order; corners (third order) and levels not yet
#: asymptotic (thin layers at constant-charge walls) make them smaller. On 189
#: random points of every shape (pb and dh, both walls, KCl, CaCl2 and Na2SO4,
#: kappa*half-size 1e-2-1e4, |z e zeta/kT| 0.05-25) the estimate (with
#: THIN_LAYER_K and the kernel's charged-wall factor) was 1.17-315 times the
#: error of the returned value against levels 4 and 8 times finer, median 4.5,
#: 71 % within 10 times (the earlier estimate, the difference of the
#: extrapolations (n/2, n) and (n, 2n): 0.82-509, median 10.9, 47 %; measured
#: 2026-12; checked in tests/test_sections_kernel.py).
ESTIMATE_SAFETY = 4.0
#: kappa * reference length above which the coarse levels of the double layer
#: are not yet asymptotic although their differences look it: there the
#: estimate is at least the finest level's own, (c2 - c1)/3. Without it the
#: estimate was 0.62-0.89 times the error at 3 of 20 random points with kappa
#: a 450-1800 (polygons at constant potential; measured 2026-12).
THIN_LAYER_K = 200.0


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


def extrapolated_error(c0, cq, c1, c2, thin=False):
    """Relative error of the extrapolation rich(c1, c2) of the levels with n and
    2n cells, from two more levels with n/2 (``c0``) and 3n/4 (``cq``) cells.

    Where the extrapolated values converge at fourth order, the extrapolation
    of (n/2, n) differs from the returned one by 15 times its error, that of
    (3n/4, n) by 64/9 - 1 times (the error of an extrapolation of levels with
    a and b cells falls as 1/(a b)^2). The larger of the two, times
    :data:`ESTIMATE_SAFETY`, is returned, largest over the components; where
    the levels are not yet in the second-order range (successive differences
    shrinking by less than 2.5 or more than 6.5 per halving), and at ``thin``
    layers (see :data:`THIN_LAYER_K`) always, it is at least the error
    estimate of the finest level itself, (c2 - c1)/3.
    """
    scale = np.maximum(np.abs(c2), 1e-300)
    best = rich(c1, c2)
    half = np.abs(rich(c0, c1) - best) / 15.0
    quarter = np.abs(richardson(cq, c1, 4.0 / 3.0) - best) / (64.0 / 9.0 - 1.0)
    err = ESTIMATE_SAFETY * np.maximum(half, quarter) / scale
    d1, d2 = c1 - c0, c2 - c1
    tiny = np.abs(d2) <= 1e-12 * scale
    ratio = np.where(tiny, 4.0, d1 / np.where(tiny, 1.0, d2))
    asymptotic = tiny | ((ratio >= 2.5) & (ratio <= 6.5))
    err = np.where(asymptotic & (not thin), err, np.maximum(err, np.abs(d2) / 3.0 / scale))
    return float(np.max(err))


def richardson(c, f, r):
    """Second-order Richardson extrapolation of levels whose cells differ by r."""
    return f + (f - c) / (r * r - 1.0)


def rich(c, f):
    return (4.0 * f - c) / 3.0
