r"""Which double-layer model is good enough where: the ``auto`` choice.

The cheap models fail in known ways, and their errors have simple
estimates:

``thin`` ignores the finite thickness of the double layer. Its error on the
electro-osmotic coefficient is, in the Debye–Hückel regime, exactly
:math:`G/(1-G)`, where :math:`G = \langle\psi\rangle/\zeta` is the
Debye–Hückel mean-potential factor (tanh K/K for a slit, 2 I1/(K I0) for a
tube; K = kappa x half-size). Nonlinear screening thins the layer and makes
the real error smaller, so this is an upper estimate; the same factor bounds
the error of its surface conduction.

``dh`` linearises the Boltzmann factor. Its error grows as the square of
:math:`\Phi = \max_i|z_i|\,e|\zeta|/kT` and is largest for the conduction:
in thin layers the diffuse-layer conductance goes as cosh(Phi/2) - 1
against Phi²/8 in DH, an error :math:`(\cosh(\Phi/2) - 1)/(\Phi^2/8) - 1`;
in overlapped layers the mean charge goes as sinh(Phi) against Phi, an error
:math:`\sinh\Phi/\Phi - 1`. The estimate blends the two with G, times a
safety factor, doubled for constant-charge walls.

``pb`` is the reference; its own error is the Richardson estimate of the
two-grid solve.

The estimates are checked against the full Poisson–Boltzmann solution in
``tests/test_regimes.py`` (they must not underestimate the real error).
"""
from __future__ import annotations

import numpy as np
from scipy import special

from ._validate import as_float_array, broadcast_named, check_positive, check_scalar

__all__ = ["estimated_model_errors", "choose_models", "ERROR_METHOD", "MODEL_RANGES",
           "regime_verdict"]

#: How ``auto`` estimates errors, in words (stored on every result).
ERROR_METHOD = ("a-priori estimates: thin -> G/(1-G) with G the Debye-Hueckel mean-potential "
                "factor at kappa*half-size; dh -> G (sinh(Phi)/Phi - 1) + (1-G) "
                "((cosh(Phi/2)-1)/(Phi^2/8) - 1) with Phi = max|z| e|zeta|/kT; both times "
                "safety factors; pb -> Richardson difference of a two-grid solve")

#: Validity range of each model, as data (kappa*half-size K, scaled wall potential Phi).
MODEL_RANGES = {
    "thin": {"K": (1e-3, 1e5), "Phi": (0.0, 40.0),
             "note": "accurate when K >> 1 (error ~ (m+1)/K)"},
    "dh": {"K": (1e-3, 1e5), "Phi": (0.0, 40.0),
           "note": "accurate when Phi << 1 (error ~ Phi^2/48 in conduction)"},
    "pb": {"K": (1e-3, 1e5), "Phi": (0.0, 20.0),
           "note": "validated to 1e-6 for K in [1e-3, 1e5] and Phi <= 20; accepted to 40"},
}

_SAFETY_THIN = 1.5
_SAFETY_DH = 3.0


def _mean_factor(m, K):
    K = np.asarray(K, dtype=float)
    if m == 0:
        return np.tanh(K) / K
    if m == 1:
        return 2.0 * special.ive(1, K) / (K * special.ive(0, K))
    # 2D sections: interpolate between the slit and tube behaviour
    return 0.5 * (_mean_factor(0, K) + _mean_factor(1, K))


def estimated_model_errors(kappa_half_size, phi_wall, valences=(1, -1), geometry=0,
                           condition="potential", weights=None):
    """Estimated relative error of the thin and dh models on the coupling matrix.

    Parameters
    ----------
    kappa_half_size : array_like
        K = kappa x half-size [-].
    phi_wall : array_like
        Scaled wall potential e zeta / kT [-] (estimate for charge walls).
    valences : sequence of int
        Ion valences; the largest |z| sets the nonlinearity.
    geometry : int or str
        0 or "slit", 1 or "tube", "section" for 2D shapes.
    condition : {"potential", "charge"}
        Wall condition; constant charge doubles the dh estimate, since the
        linear Grahame relation adds its own error.
    weights : array_like, optional
        c_i / sum_j z_j^2 c_j per ion, shape (n_ions, ...). For asymmetric
        mixtures the Boltzmann factor has a quadratic term, so dh errs at first
        order in Phi: the estimate adds |sum z_i^3 w_i| Phi / 2. Default: a
        symmetric salt.

    Returns
    -------
    dict
        ``{"thin": ndarray, "dh": ndarray}`` of estimated relative errors [-].

    Notes
    -----
    See the module docstring for the formulas; checked against the pb model
    in the tests.

    References
    ----------
    .. [1] Rice, C. L.; Whitehead, R. (1965). J. Phys. Chem. 69, 4017.
       doi:10.1021/j100782a002
    .. [2] Bikerman, J. J. (1940). Trans. Faraday Soc. 36, 154.

    Examples
    --------
    >>> e = estimated_model_errors(100.0, 1.0, geometry="slit")
    >>> bool(e["thin"] < 0.02), bool(e["dh"] < 0.1)
    (True, True)
    """
    m = {"slit": 0, "tube": 1, "section": 2}.get(geometry, geometry)
    K = check_positive("kappa_half_size", kappa_half_size)
    phi_wall = as_float_array("phi_wall", phi_wall)
    broadcast_named({"kappa_half_size": K.shape, "phi_wall": phi_wall.shape})
    G = _mean_factor(m, K)
    thin = _SAFETY_THIN * G / np.maximum(1.0 - G, 1e-12)
    Phi = np.max(np.abs(valences)) * np.abs(np.asarray(phi_wall, dtype=float))
    Phi = np.minimum(Phi, 80.0)
    x = Phi / 2.0
    small = x < 1e-3
    xs = np.where(small, 1.0, x)
    Ps = np.where(small, 1.0, Phi)
    # thin layers: conduction error (cosh(Phi/2)-1)/(Phi^2/8) - 1 ~ Phi^2/48;
    # overlapped layers: the mean charge goes as sinh(Phi) against Phi, ~ Phi^2/6
    thin_layer = np.where(small, x**2 / 12.0, (np.cosh(xs) - 1.0) / (xs**2 / 2.0) - 1.0)
    overlap = np.where(small, Phi**2 / 6.0, np.sinh(np.minimum(Ps, 700.0)) / Ps - 1.0)
    ratio = G * overlap + (1.0 - G) * thin_layer
    if weights is not None:
        zb = np.asarray(valences, dtype=float).reshape((-1,) + (1,) * (np.ndim(weights) - 1))
        skew = np.abs(np.sum(zb**3 * np.asarray(weights), axis=0))
        ratio = ratio + skew * np.abs(np.asarray(phi_wall)) / 2.0
    dh = _SAFETY_DH * ratio * (2.0 if condition == "charge" else 1.0)
    thin, dh = np.broadcast_arrays(np.minimum(thin, 1e6), np.minimum(dh, 1e6))
    return {"thin": thin, "dh": dh}


def choose_models(kappa_half_size, phi_wall, valences, geometry, tol, condition="potential",
                  weights=None):
    """Pick, per point, the cheapest model whose estimated error is below ``tol``.

    Returns (models, estimates): an array of "thin"/"dh"/"pb" and the dict
    from :func:`estimated_model_errors`.
    """
    est = estimated_model_errors(kappa_half_size, phi_wall, valences, geometry, condition,
                                 weights)
    models = np.where(est["thin"] <= tol, "thin", np.where(est["dh"] <= tol, "dh", "pb"))
    return models, est


def regime_verdict(kappa_size, slip_ratio, dukhin, counterion_share):
    """A one-line description of the transport regime, from computed numbers.

    Parameters
    ----------
    kappa_size : float
        kappa x half-size [-].
    slip_ratio : float
        Slip-model electro-osmotic coefficient over the chosen model's [-].
    dukhin : float
        Surface over bulk conduction [-].
    counterion_share : float
        Counter-ion share of the conduction current [-].

    Examples
    --------
    >>> regime_verdict(0.8, 3.2, 5.0, 0.9)
    'double layers overlap: kappa*a = 0.8; the slip model overestimates electro-osmotic flow by 3.2x; surface conduction dominates (Du = 5); perm-selective: counter-ions carry 90% of the current'
    """
    kappa_size = check_scalar("kappa_size", kappa_size, 0.0, None)
    slip_ratio = check_scalar("slip_ratio", slip_ratio)
    dukhin = check_scalar("dukhin", dukhin)
    counterion_share = check_scalar("counterion_share", counterion_share)
    parts = []
    if kappa_size < 1:
        parts.append(f"double layers overlap: kappa*a = {kappa_size:.2g}")
    elif kappa_size < 10:
        parts.append(f"double layers are thick: kappa*a = {kappa_size:.2g}")
    else:
        parts.append(f"thin double layers: kappa*a = {kappa_size:.3g}")
    if abs(slip_ratio - 1.0) > 0.05:
        word = "overestimates" if slip_ratio > 1 else "underestimates"
        parts.append(f"the slip model {word} electro-osmotic flow by {slip_ratio:.2g}x")
    else:
        parts.append("the slip (Helmholtz-Smoluchowski) model holds within 5%")
    if dukhin > 1:
        parts.append(f"surface conduction dominates (Du = {dukhin:.2g})")
    elif dukhin > 0.1:
        parts.append(f"surface conduction matters (Du = {dukhin:.2g})")
    if counterion_share > 0.8:
        parts.append(f"perm-selective: counter-ions carry {counterion_share:.0%} of the current")
    return "; ".join(parts)
