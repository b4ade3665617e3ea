r"""Closed-form series for the rectangular duct.

With the rectangle -W/2 < x < W/2, 0 < y < H and the sine expansion across
the depth, sin(beta_n y) with beta_n = n pi / H (n odd), each term is solved
in closed form across the width (cosh). This gives

* the Poiseuille flow (White, *Viscous Fluid Flow*, 3rd ed., eq. 3-48):
  u = (G/eta) sum_n (4/(n pi beta_n^2)) sin(beta_n y) [1 - C_{beta_n}(x)],
* the Debye-Hueckel potential at a constant-potential wall,
  psi - zeta = -zeta sum_n (4 kappa^2/(n pi k_n^2)) sin(beta_n y) [1 - C_{k_n}(x)],
  k_n^2 = beta_n^2 + kappa^2,

with C_k(x) = cosh(k x)/cosh(k W/2). Area means follow term by term from
mean(1 - C_k) = 1 - T_k, T_k = tanh(k W/2)/(k W/2), and, for products, from
the closed-form width integral of C_a C_b.
"""
from __future__ import annotations

import numpy as np

__all__ = ["rectangle_flow_mean", "rectangle_dh"]

_N_TERMS_MIN = 4000


def _T(k, h):
    """tanh(k h)/(k h), h = W/2."""
    return np.tanh(k * h) / (k * h)


def _I(a, b, h):
    """mean over the width of C_a C_b, overflow- and cancellation-free (a >= b)."""
    ea, eb = np.exp(-2.0 * a * h), np.exp(-2.0 * b * h)
    plus = (np.tanh(a * h) + np.tanh(b * h)) / (a + b)
    d = a - b
    D = d * h
    safe = np.where(D > 1e-9, d, 1.0)
    ratio = np.where(D > 1e-9, -np.expm1(-2.0 * D) / safe, 2.0 * h)   # (1 - e^{-2D})/d
    minus = 2.0 * eb * ratio / ((1.0 + ea) * (1.0 + eb))               # tanh ah - tanh bh over d
    return (plus + minus) / (2.0 * h)


def _terms(kappa_h):
    """Odd n up to enough terms: the sum converges as n^-4 once n pi > kappa H."""
    n_max = int(max(_N_TERMS_MIN, 40.0 * kappa_h))
    return np.arange(1, 2 * n_max, 2, dtype=float)


def rectangle_flow_mean(width, depth):
    """<u>/(G/eta) [m^2] for the rectangle, White's series summed to 1e-13."""
    W, H = max(width, depth), min(width, depth)
    n = np.arange(1, 2 * _N_TERMS_MIN, 2, dtype=float)
    beta = n * np.pi / H
    return float(np.sum(8.0 / (n**2 * np.pi**2 * beta**2) * (1.0 - _T(beta, 0.5 * W))))


def rectangle_dh(width, depth, kappa):
    """Debye-Hueckel area means for a rectangle at constant wall potential.

    Returns a dict of dimensionless means, for zeta = 1 (scale by the wall
    potential): ``mean_phi`` = <psi>/zeta, ``mean_phi2`` = <psi^2>/zeta^2,
    ``mean_phi_u`` = <psi u>/(zeta G/eta) [m^2], ``mean_u`` = <u>/(G/eta)
    [m^2], ``tail`` an estimate of the relative truncation error.

    The electro-osmotic coefficient uses mean_phi; the streaming one uses
    the product mean_phi_u, a separate series, so their agreement is a check.
    """
    W, H = max(width, depth), min(width, depth)   # the series runs across the narrow side
    h = 0.5 * W
    n = _terms(kappa * H)
    beta = n * np.pi / H
    k2 = beta**2 + kappa**2
    k = np.sqrt(k2)
    A = -4.0 * kappa**2 / (n * np.pi * k2)          # coefficient of phi_n (per zeta)
    Bc = 4.0 / (n * np.pi * beta**2)                # coefficient of u_n (per G/eta)
    Tk, Tb = _T(k, h), _T(beta, h)
    mean_Phi_terms = (2.0 / (n * np.pi)) * A * (1.0 - Tk)
    mean_u_terms = (2.0 / (n * np.pi)) * Bc * (1.0 - Tb)
    Phi2_terms = 0.5 * A**2 * (1.0 - 2.0 * Tk + _I(k, k, h))
    Phiu_terms = 0.5 * A * Bc * (1.0 - Tk - Tb + _I(k, beta, h))
    mean_Phi = np.sum(mean_Phi_terms)
    mean_u = np.sum(mean_u_terms)
    mean_phi = 1.0 + mean_Phi
    mean_phi2 = 1.0 + 2.0 * mean_Phi + np.sum(Phi2_terms)
    mean_phi_u = mean_u + np.sum(Phiu_terms)
    # terms fall as n^-4 beyond kappa H: the tail is about a third of the last term times n
    tail = max(abs(mean_Phi_terms[-1]) * n[-1] / 3.0 / max(abs(mean_Phi), 1e-300),
               abs(Phiu_terms[-1]) * n[-1] / 3.0 / max(abs(mean_phi_u), 1e-300))
    return {"one_minus_mean_phi": float(-mean_Phi), "mean_phi": float(mean_phi), "mean_phi2": float(mean_phi2),
            "mean_phi_u": float(mean_phi_u), "mean_u": float(mean_u), "tail": float(tail)}
