"""Graded node positions along one direction of a mesh block.

Node positions equidistribute a monitor function that is large within a few
Debye (or Gouy-Chapman) lengths of a wall and within a flow length of a
corner, so the double layer and the corners are resolved. Lengths are
scaled by the section's reference length ``L``.
"""
from __future__ import annotations

import numpy as np

__all__ = ["graded", "monitor_mass"]

#: Fraction of the nodes drawn to each wall per length scale.
_PULL = 0.35


def _cumulative(x, scales, logs, walls, log_weight):
    """Integral from 0 to x of the monitor function (see :func:`graded`)."""
    a = _PULL
    left, right = walls
    out = np.array(x, dtype=float)
    for e in scales:
        if left:
            out = out + a * (-np.expm1(-x / e))
        if right:
            out = out + a * (np.exp(-(1.0 - x) / e) - np.exp(-1.0 / e))
    for entry in logs:
        d0, d1 = entry[0], entry[1]
        lw = entry[2] if len(entry) > 2 else log_weight

        def part(y):
            return np.log1p(y / d0) - np.log1p(y / d1)
        if left:
            out = out + lw * part(x)
        if right:
            out = out + lw * (part(1.0) - part(1.0 - x))
    return out


def graded(n, scales=(), walls=(True, True), logs=(), log_weight=0.0):
    """n+1 nodes on [0, 1] that equidistribute the monitor function

    w(x) = 1 + sum_k a/e_k exp(-x/e_k) + b sum_l [1/(x + d0_l) - 1/(x + d1_l)]

    (and its mirror image at the end wall). The exponential terms put about
    a/(1 + 2 a K) of the nodes within a few e_k of each wall; the log terms
    space nodes evenly in log(distance) between d0 and d1 (the
    Gouy-Chapman layer of a strongly charged wall; an entry (d0, d1, b) sets
    its own weight b). Scales of 0.5 or more add
    nothing. The mapping is smooth, so halving the spacing (doubling n)
    refines it uniformly in the computational coordinate.
    """
    scales = [e for e in np.atleast_1d(scales) if 0.0 < e < 0.5]
    logs = [e for e in logs if 0.0 < e[0] < e[1]]
    total = _cumulative(np.array(1.0), scales, logs, walls, log_weight)
    target = np.linspace(0.0, 1.0, n + 1) * total
    lo = np.zeros(n + 1)
    hi = np.ones(n + 1)
    for _ in range(64):  # bisection: the cumulative monitor is increasing
        mid = 0.5 * (lo + hi)
        below = _cumulative(mid, scales, logs, walls, log_weight) < target
        lo = np.where(below, mid, lo)
        hi = np.where(below, hi, mid)
    x = 0.5 * (lo + hi)
    x[0], x[-1] = 0.0, 1.0
    return x


def monitor_mass(scales=(), walls=(True, True), logs=(), log_weight=0.0):
    """Total mass of the monitor function: nodes scale with it at fixed density."""
    scales = [e for e in np.atleast_1d(scales) if 0.0 < e < 0.5]
    logs = [e for e in logs if 0.0 < e[0] < e[1]]
    return float(_cumulative(np.array(1.0), scales, logs, walls, log_weight))
