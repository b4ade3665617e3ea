r"""The double-layer models as data, their error estimates and the ``auto`` choice.

:data:`MODEL_TABLE` lists every model with its validity range, how its
error is estimated and the reason for each safety factor. ``solve``'s range
checks, the ``auto`` choice and the dashboards read it; adding a model is
one entry here plus its coefficient assembly in :mod:`ekexplore.coefficients`
and its kernel parts.

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

``pb`` is the reference; its own error is that of its Richardson-extrapolated
value, from the extrapolations with coarser grids (1D: n/sqrt(2) and n/2
cells beside n and 2n) or levels (2D: n/2, n, 2n).

The estimates are checked against the full Poisson–Boltzmann solution in
``tests/test_models.py`` (they must not underestimate the real error).
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import special

from ._validate import as_float_array, broadcast_named, check_positive
from .doublelayer import PB_PHI_MAX, wall_potential_estimate

__all__ = ["ModelSpec", "MODEL_TABLE", "MODEL_NAMES", "MODEL_CHOICES", "PHI_MAX",
           "KAPPA_SIZE_RANGE", "ERROR_METHOD", "estimated_model_errors", "choose_models",
           "geometry_index", "auto_choice", "AccuracyWarning"]

#: Largest scaled wall potential |z e zeta / kT| any model accepts (the pb solver's).
PHI_MAX = PB_PHI_MAX
#: kappa x half-size range any model accepts.
KAPPA_SIZE_RANGE = (1e-3, 1e5)


class AccuracyWarning(UserWarning):
    """A numerical solve missed the requested accuracy; the result's
    ``error_estimate`` says what was reached."""


@dataclass(frozen=True)
class ModelSpec:
    """One double-layer model as data.

    Attributes
    ----------
    name : str
        The ``model=`` value of :func:`ekexplore.solve`.
    summary : str
        What the model assumes, in one line.
    kappa_size : tuple of float
        Accepted range of kappa x half-size [-].
    potential : tuple of float
        Accepted range of the scaled wall potential max|z| e|zeta|/kT [-].
    validated : str
        Where the model's numbers were checked, in words.
    error : str
        How its error estimate is obtained.
    safety : dict
        Safety factor name -> (value, reason).
    accurate_error : float
        Largest estimated error at which a forced model is still in its
        range; beyond it ``solve`` issues a ``ModelRangeWarning`` [-].
    accurate_range : str
        That range in words.
    """

    name: str
    summary: str
    kappa_size: tuple
    potential: tuple
    validated: str
    error: str
    safety: dict = field(default_factory=dict)
    accurate_error: float = 1.0
    accurate_range: str = ""


MODEL_TABLE = {
    "thin": ModelSpec(
        name="thin",
        summary="Helmholtz-Smoluchowski slip with the flat-wall (Bikerman-type) surface "
                "conduction of any ion mixture",
        kappa_size=KAPPA_SIZE_RANGE, potential=(0.0, PHI_MAX),
        validated="accurate when kappa*half-size >> 1 (error about (m+1)/K)",
        accurate_error=0.1,
        accurate_range="estimated error at most 10 %: kappa*half-size above about 15",
        error="G/(1-G) with G the Debye-Hueckel mean-potential factor at kappa*half-size, "
              "times a safety factor",
        safety={"thin": (1.5, "G/(1-G) is exact for the electro-osmotic coefficient in the "
                              "Debye-Hueckel regime; against pb on about 20,000 random slit "
                              "and tube points (KCl, CaCl2, Na2SO4, both walls, K 0.1-1e4) "
                              "the largest coefficient error reached 1.07 times it (Na2SO4, "
                              "K 8-17, Phi about 1.5), so 1.5 keeps a margin of 1.4 "
                              "(measured 2026-12; checked in tests/test_models.py)")}),
    "dh": ModelSpec(
        name="dh",
        summary="Debye-Hueckel (linearised Poisson-Boltzmann) closed forms or linear 2D "
                "solves; conduction to second order in zeta",
        kappa_size=KAPPA_SIZE_RANGE, potential=(0.0, PHI_MAX),
        validated="accurate when Phi << 1 (error about Phi^2/48 in conduction)",
        accurate_error=0.1,
        accurate_range="estimated error at most 10 %: max|z| e|zeta|/kT below about 0.3-1",
        error="G (sinh(Phi)/Phi - 1) + (1-G) ((cosh(Phi/2)-1)/(Phi^2/8) - 1) + "
              "|sum z^3 w| Phi/2, times safety factors",
        safety={"dh": (3.0, "the blend of the thin-layer and overlapped limits with G is an "
                            "interpolation; on the same 20,000 points the error at "
                            "constant potential reached 0.99 times the plain blend "
                            "(overlapped layers, K about 0.1), so 3 keeps a margin of 3 for "
                            "the shapes in between (2D sections)"),
                "charge": (2.0, "at a constant-charge wall the linear Grahame relation errs "
                                "on the wall potential itself: the error reached 3.07 times "
                                "the plain blend (KCl, K about 5e3, small Phi), so the total "
                                "factor 6 keeps a margin of 2")}),
    "pb": ModelSpec(
        name="pb",
        summary="the nonlinear Poisson-Boltzmann equation solved on wall-resolving grids "
                "(1D) or graded meshes (2D), Richardson-extrapolated",
        kappa_size=KAPPA_SIZE_RANGE, potential=(0.0, PHI_MAX),
        validated="validated to 1e-6 for K in [1e-3, 1e5] and Phi <= 20; accepted to 30 (Newton stalls on round-off above about 31)",
        error="error of the Richardson-extrapolated value: its difference from the "
              "extrapolations with coarser grids (1D) or levels (2D), times a safety factor",
        safety={"pb": (4.0, "1D: the difference of two extrapolations is 4 r^2 - 1 times "
                            "the error of the finer one (r = n/n0); times 4, the estimate "
                            "was 2.2-14 (median 4.0) times the true error against a 4x "
                            "finer grid on 4,350 random slit and tube points (KCl, CaCl2, "
                            "Na2SO4, both walls, K 1e-3-1e5); a single coarser grid (n/2) "
                            "went down to 0.01 near kappa*half-size 3.5, where the grids' "
                            "fourth-order error term changes sign, hence two "
                            "(ekexplore.kernels1d.PB_ERROR_SAFETY; measured 2026-12, "
                            "checked in tests/test_kernels1d.py)")}),
}

#: Names of the double-layer models, cheapest first.
MODEL_NAMES = tuple(MODEL_TABLE)
#: Accepted values of ``model=``.
MODEL_CHOICES = ("auto",) + MODEL_NAMES

#: How ``auto`` estimates errors, in words (stored on every result).
ERROR_METHOD = "a-priori estimates: " + "; ".join(
    f"{s.name} -> {s.error}" for s in MODEL_TABLE.values())

_SAFETY_THIN = MODEL_TABLE["thin"].safety["thin"][0]
_SAFETY_DH = MODEL_TABLE["dh"].safety["dh"][0]
_SAFETY_DH_CHARGE = MODEL_TABLE["dh"].safety["charge"][0]


def geometry_index(geometry):
    """0 slit, 1 tube, 2 section, from an int or a name."""
    return {"slit": 0, "tube": 1, "section": 2}.get(geometry, geometry)


def _mean_factor(m, K):
    K = np.asarray(K, dtype=float)
    if m == 0:
        return np.tanh(K) / K
    if m == 1:
        return 2.0 * special.ive(1, K) / (K * special.ive(0, K))
    # 2D sections: the mean of the slit (flat walls, no curvature) and the tube
    # (the wall curving all around): a section's walls lie between the two,
    # flat sides with curved or cornered ends; the safety factors above cover
    # the interpolation, and tests/test_models.py checks the choice against pb
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
    m = geometry_index(geometry)
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
    # a regulated wall (charge that follows the potential) lies between the
    # fixed-potential and fixed-charge cases: it takes the larger factor
    dh = _SAFETY_DH * ratio * (_SAFETY_DH_CHARGE if condition != "potential" else 1.0)
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




def auto_choice(b, geometry, geometry_factor, tol):
    """The ``auto`` choice for a flat batch: (models (B,), estimates dict).

    ``b`` is a :class:`ekexplore._state.Batch` with the channel's half-size
    as its length; ``geometry_factor`` is perimeter x half-size / area
    (1 slit, 2 tube). A constant-charge wall's potential is estimated by
    :func:`ekexplore.doublelayer.wall_potential_estimate`.
    """
    if b.wall.dirichlet:
        phi_est = b.scaled_value
    elif b.wall.nonlinear:   # a charge-regulating wall: its isolated wall
        phi_est = b.wall.isolated_potential(b.z, b.weights, b.K, b.scaled_value)
    else:
        phi_est = wall_potential_estimate(b.z, b.weights, b.K, b.scaled_value, geometry_factor)
    return choose_models(b.K, phi_est, b.z, geometry, tol, condition=b.wall.name,
                         weights=b.weights)
