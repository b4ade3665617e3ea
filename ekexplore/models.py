r"""The double-layer models as data, their error estimates and the ``auto`` choice.

:data:`MODEL_TABLE` lists every model with its validity range, how its
error is estimated and the reason for each safety factor. ``solve``'s range
checks, the ``auto`` choice and the dashboards read it; adding a model is
one entry here plus its coefficient assembly in :mod:`ekexplore.coefficients`
and its kernel parts.

The cheap models fail in known ways, and their errors have simple
estimates:

``thin`` ignores the finite thickness of the double layer. Its error on the
electro-osmotic coefficient is exactly :math:`g/(1-g)`, where
:math:`g = \langle\psi\rangle/\zeta` is the mean-potential factor of the
layer. The Debye–Hückel factor G (tanh K/K for a slit, 2 I1/(K I0) for a
tube; K = kappa x half-size) overstates g once the layer is nonlinear:
counter-ions crowd in and screen it faster. The estimate takes G at an
effective K sqrt(r(psi_c)), r the nonlinear over the linear charge density
at the centre potential psi_c of the channel (sinh(Phi)/Phi for a symmetric
salt), which solves psi_c = zeta C(K sqrt(r(psi_c))) (C the linear centre
factor): at kappa a = 0.01 and |z e zeta/kT| = 20 G/(1-G) is 3e4 and the
true error about 1.6. At a fixed charge thin sees the isolated wall's
potential zeta_iso and pb a larger one zeta_pb (its layer is confined): the
error is then |zeta_iso/(zeta_pb (1 - g)) - 1| with zeta_pb estimated from
the channel's nonlinear layer. A regulated wall's charge follows its
potential, so thin's error is at most g/(1-g) at zeta_iso. The same factor
bounds the error of its surface conduction.

``dh`` linearises the Boltzmann factor. Its error is the sum of the leading
error of each regime, each weighted by how much of the section that regime
fills (G² or G for overlapped layers, G or 1 - G for thin ones), and each
computed ion by ion for any mixture: in overlapped layers the mean charge,
sum_i w_i z_i (exp(-z_i phi) - 1) against -phi (sinh(Phi)/Phi for a
symmetric salt, first order in phi for an asymmetric one), and the
conduction, sum_i c_i (exp(-z_i phi) - 1) against dh's second-order
-z_i phi + z_i² phi²/2, weighted by each ion's share c_i of the bulk
conductivity (so that unequal mobilities cancel as they do in the real
current); in thin layers the Gouy–Chapman mean potential against the linear
one for electro-osmosis (Phi = the counter-ion's |z e zeta/kT|), and for
the conduction Bikerman's excess of a flat layer, (1 + 3m_i/z_i²) times
2(exp(-z_i phi/2) - 1) per ion (migration and convection, m_i the ion's
electro-osmotic to migration ratio), against dh's. At constant potential dh
underestimates every coefficient, so its error stays below 1 and the estimate
is capped at 2. At a fixed charge the linear Grahame relation adds its error
(the Grahame charge over the linear one at the wall potential, weight 1 - G)
and the overlapped conduction is that of the linear Donnan balance; the wall
potential is where the channel's nonlinear layer (the linear layer's charge,
with its curvature, times the geometric mean of the isolated and uniform
gains) holds the charge. At a regulated wall the sites balance dh's linear
layer at zeta_dh and pb's at about zeta_pb (the same nonlinear layer): the
estimate is the constant-potential one at zeta_pb plus |zeta_dh -
zeta_pb|/|zeta_pb|. Safety factors and their measured reasons are in the table.

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
from .doublelayer import PB_PHI_MAX
from .wall import isolated_wall_charge, isolated_wall_potential

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
        error="g/(1-g) with g the Debye-Hueckel mean-potential factor at an effective "
              "kappa*half-size K sqrt(r(psi_c)) (r the nonlinear over the linear charge at "
              "the channel's centre potential psi_c); at constant-charge walls "
              "|zeta_iso/(zeta_pb (1-g)) - 1| (thin's isolated-wall potential against pb's), "
              "at regulated walls g/(1-g) at zeta_iso; times a safety factor",
        safety={"thin": (1.5, "g/(1-g) is exact for the electro-osmotic coefficient given "
                              "the layer's true mean potential; the effective K moves the "
                              "Debye-Hueckel factor toward the nonlinear one. Against pb on "
                              "4,795 random slit and tube points (KCl, CaCl2, Na2SO4, "
                              "0.01-100 mM, constant potential, constant charge, regulated "
                              "silica, alumina and a user-defined surface at pH 4-10; K 1e-3-"
                              "1e5, |z e zeta/kT| to 20) the estimate was 1.25-18 times the "
                              "true error (median 1.7, 99.8 % within 1-10; with the plain "
                              "Debye-Hueckel G/(1-G) 1.27-17,150, median 1.9, 91 %, the worst "
                              "at K ~ 0.01-0.1 and high |zeta|), so 1.5 keeps a margin of "
                              "1.25 (benchmarks/estimate_ratios.py, measured 2026-12; checked "
                              "in tests/test_models.py)"),
                "charge": (1.0, "at a constant-charge wall thin's potential is the isolated "
                                "wall's and pb's the confined layer's, which is larger when "
                                "the layers overlap: the error grows as 1/K there, not "
                                "1/K^2; the ratio of the two potentials carries it (the "
                                "earlier tanh(K) factor: 1.4-120 times the error, 98 % within "
                                "1-10; now 1.25-5.9, 100 %; same points)")}),
    "dh": ModelSpec(
        name="dh",
        summary="Debye-Hueckel (linearised Poisson-Boltzmann) closed forms or linear 2D "
                "solves; conduction to second order in zeta",
        kappa_size=KAPPA_SIZE_RANGE, potential=(0.0, PHI_MAX),
        validated="accurate when Phi << 1 (error about Phi^2/48 in conduction)",
        accurate_error=0.1,
        accurate_range="estimated error at most 10 %: max|z| e|zeta|/kT below about 0.3-1",
        error="sum of the leading errors of each regime, per ion for any mixture, weighted "
              "by the Debye-Hueckel mean factor G: overlapped G^2 (mean charge "
              "sum w z (exp(-z phi) - 1) against -phi, and conduction sum c (exp(-z phi) - 1) "
              "against -z phi + z^2 phi^2/2, c the ion's share of the bulk conductivity); "
              "thin-layer electro-osmosis G (1 - 4 chi2(tanh(Phi/4))/Phi), Phi the "
              "counter-ion's; thin-layer conduction G |sum c ((1 + 3m/z^2) 2(exp(-z phi/2) - "
              "1) - (-z phi + (1 + 3m/z^2) z^2 phi^2/4))| (Bikerman's excess, migration and "
              "convection); asymmetric salts |sum z^3 w| |phi| G (1-G)/6; at charge walls the "
              "linear Grahame relation (1-G) |Grahame charge/linear - 1| and the linear "
              "Donnan balance's conduction; at regulated walls the constant-potential terms "
              "plus |zeta_dh - zeta_pb|/|zeta_pb|; times safety factors",
        safety={"dh": (1.5, "each term is the leading error of its regime (exact in its "
                            "limit: at constant potential the overlapped and asymmetric-salt "
                            "terms reached 1.00 times the true error at kappa*half-size "
                            "0.01, the thin-layer electro-osmosis term 1.05 times at 20); "
                            "1.5 keeps a margin of 1.5 there. On 1,251 random slit and tube "
                            "points at constant potential and charge (KCl, CaCl2, Na2SO4, "
                            "0.01-100 mM, K 1e-3-1e5, |z e zeta/kT| to 20 of either sign) "
                            "the estimate was 1.2-26 times the true error against pb, median "
                            "2.0, 98.7-99.5 % within 1-10 (the earlier table, with "
                            "Phi = max|z| e|zeta|/kT and equal mobilities: 1.03-1,272, median "
                            "2.2, 78-95 %) (benchmarks/estimate_ratios.py, measured "
                            "2026-12; checked in tests/test_models.py)"),
                "potential_cap": (2.0, "at a constant-potential wall dh screens less than pb, "
                                       "so it underestimates every coefficient: the true "
                                       "error stayed below 1 (largest 0.9998 on the same "
                                       "points); the estimate is capped at 2"),
                "charge": (2.0, "at a constant-charge wall: the same terms plus the "
                                "wall-potential error of the linear Grahame relation; with "
                                "1.5 the smallest ratio measured was 0.97 (KCl, tube), so 2"),
                "regulated": (1.5, "at a regulated wall the sites balance dh's linear layer "
                                   "at zeta_dh, pb's nonlinear one at about zeta_pb: the gap "
                                   "|zeta_dh - zeta_pb|/|zeta_pb| (exact for thin layers, "
                                   "where zeta_pb is the isolated wall's) times 1.5 is added "
                                   "to the constant-potential estimate. On 2,875 random "
                                   "silica, alumina and user-defined points (pH 4-10, KCl, "
                                   "CaCl2, Na2SO4 0.01-100 mM, K 1e-2-1e4) 1.13-265 times "
                                   "the error, median 2.5, 92-96 % within 1-10 (the "
                                   "earlier estimate: 0.74-7.2e6, median 57-135, 15-23 %)")}),
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
_DH_POTENTIAL_CAP = MODEL_TABLE["dh"].safety["potential_cap"][0]
_SAFETY_DH_GAP = MODEL_TABLE["dh"].safety["regulated"][0]
#: Weight of the overlapped (mean charge) term at charge walls, where the charge
#: fixes <phi> - phi_w and the term enters only through the conduction; times
#: G (1 - G), so it vanishes in both limits (times G alone it was up to 40 times
#: the true error in overlapped layers of asymmetric salts at low potential).
_DH_CHARGE_OVERLAP = 0.05


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
    # the interpolation, and tests/test_models.py checks the choice against pb.
    # Where the layers span the section, corners overlap them as a curved wall
    # does: there the factor moves to the tube's (weight exp(-K/4); with the
    # plain mean the thin estimate was 0.83-0.95 times the error of a circle
    # against the 1D tube at K = 0.39 and of a rectangle against 2D pb at K = 1,
    # tests/test_sections_kernel.py). Above K of about 20 nothing changes.
    slit, tube = _mean_factor(0, K), _mean_factor(1, K)
    mean = 0.5 * (slit + tube)
    return mean + (tube - mean) * np.exp(-K / 4.0)


def _centre_factor(m, K):
    """psi(centre)/psi(wall) of the Debye-Hueckel layer: 1/cosh K (slit), 1/I0(K)
    (tube), their mean for sections; overflow-free."""
    K = np.asarray(K, dtype=float)
    if m == 0:
        return 2.0 * np.exp(-K) / (1.0 + np.exp(-2.0 * K))
    if m == 1:
        return np.exp(-K) / special.ive(0, K)
    return 0.5 * (_centre_factor(0, K) + _centre_factor(1, K))


def _screening_ratio(z, weights, psi):
    """rho(psi)/rho_linear(psi) = sum_i w_i z_i (1 - exp(-z_i psi)) / psi: how
    much more (or less) a nonlinear layer at potential psi screens than the
    linear one (sinh(Phi)/Phi for a symmetric salt, Phi = z psi). ``z`` (k,),
    ``weights`` (k, ...) or None (a symmetric salt of valence max|z|)."""
    psi = np.asarray(psi, dtype=float)
    zb, w = _ions(z, weights, max(np.ndim(psi), 0 if weights is None else np.ndim(weights) - 1))
    small = np.abs(psi) < 1e-8
    ps = np.where(small, 1.0, psi)
    r = np.sum(w * zb * -np.expm1(np.minimum(-zb * ps, 700.0)), axis=0) / ps
    return np.where(small, np.sum(w * zb**2, axis=0), np.maximum(r, 0.0))


def _per_ion(a, ndim):
    a = np.asarray(a, dtype=float)
    return a.reshape(a.shape + (1,) * (ndim + 1 - a.ndim))


def _ions(valences, weights, ndim):
    """Valences (k, 1...) and weights (k, ...) for ``ndim`` point axes; a
    symmetric salt of valence max|z| when ``weights`` is None."""
    z = np.asarray(valences, dtype=float)
    if weights is None:
        zc = float(np.max(np.abs(z)))
        z = np.array([zc, -zc])
        w = np.full(2, 0.5 / zc**2)
    else:
        w = np.asarray(weights, dtype=float)
    zb = z.reshape((-1,) + (1,) * ndim)
    w = w.reshape(w.shape + (1,) * (ndim + 1 - w.ndim))
    return zb, w


def _nonlinear_mean_factor(m, K, phi_wall, z=(1, -1), weights=None):
    """Mean-potential factor <psi>/psi_w of a nonlinear layer, estimated without a solve.

    The Debye-Hueckel factor at an effective kappa*half-size K sqrt(r(psi_c)),
    r the screening ratio of :func:`_screening_ratio` at the centre potential
    psi_c, which solves psi_c = psi_w C(K sqrt(r(psi_c))) (C the linear layer's
    centre factor; bisection). A nonlinear layer screens at least as much as
    the linear one at its smallest potential (a comparison argument for
    symmetric salts), so this moves G toward the nonlinear value."""
    K = np.asarray(K, dtype=float)
    phi = np.asarray(phi_wall, dtype=float)
    K, phi = np.broadcast_arrays(K, phi)
    shape = K.shape
    K, phi = K.ravel(), phi.ravel()
    w = None
    if weights is not None:
        w = np.asarray(weights, dtype=float)
        w = np.broadcast_to(w.reshape(w.shape + (1,) * (len(shape) + 1 - w.ndim)),
                            w.shape[:1] + shape).reshape(w.shape[0], -1)
    Keff = K.copy()
    # only overlapping, charged layers: beyond K = 50 the centre potential is
    # below 1e-20 of the wall's, and r(psi_c) = 1 to that
    sub = np.flatnonzero((K < 50.0) & (np.abs(phi) > 1e-8))
    if sub.size:
        Ks, ps = K[sub], phi[sub]
        ws = None if w is None else w[:, sub]
        lo = np.zeros(sub.size)
        hi = np.ones(sub.size)
        for _ in range(40):
            t = 0.5 * (lo + hi)
            r = _screening_ratio(z, ws, t * ps)
            up = t > _centre_factor(m, Ks * np.sqrt(r))
            hi = np.where(up, t, hi)
            lo = np.where(up, lo, t)
        Keff[sub] = Ks * np.sqrt(_screening_ratio(z, ws, lo * ps))
    return _mean_factor(m, Keff).reshape(shape)


def estimated_model_errors(kappa_half_size, phi_wall, valences=(1, -1), geometry=0,
                           condition="potential", weights=None, phi_thin=None, phi_dh=None,
                           conduction_weights=None, dukhin_m=None):
    """Estimated relative error of the thin and dh models on the coupling matrix.

    Parameters
    ----------
    kappa_half_size : array_like
        K = kappa x half-size [-].
    phi_wall : array_like
        Scaled wall potential e zeta / kT [-] of the pb solution (an estimate
        for charge and regulated walls, see :func:`auto_choice`).
    valences : sequence of int
        Ion valences.
    geometry : int or str
        0 or "slit", 1 or "tube", "section" for 2D shapes.
    condition : {"potential", "charge", "regulated"}
        Wall condition. A constant charge adds the error of the linear Grahame
        relation; a regulated wall the gap between dh's and pb's potentials.
    weights : array_like, optional
        c_i / sum_j z_j^2 c_j per ion, shape (n_ions, ...). Default: a
        symmetric salt of valence max|z|.
    phi_thin : array_like, optional
        Scaled wall potential of the thin model (the isolated wall's) at
        charge and regulated walls [-]. Default ``phi_wall``.
    phi_dh : array_like, optional
        Scaled wall potential of the dh model [-]; required for a regulated
        wall.
    conduction_weights : array_like, optional
        Each ion's share of the bulk conductivity, lambda_i c_i / sum_j
        lambda_j c_j, shape (n_ions, ...). Default z_i^2 w_i (equal
        diffusivities).
    dukhin_m : array_like, optional
        Each ion's ratio of electro-osmotic to migration transport, m_i = 2 eps
        (kT/e)^2 / (3 eta D_i) [-], shape (n_ions, ...). Default 1/3 (about
        that of small ions in water at 25 °C).

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
    phi_t = phi_wall if phi_thin is None else as_float_array("phi_thin", phi_thin)
    # a regulated wall's thin error is g/(1-g) at thin's own (isolated) potential
    Gn = _nonlinear_mean_factor(m, K, phi_t if condition == "regulated" else phi_wall,
                                valences, weights)
    if condition != "charge":
        thin = _SAFETY_THIN * Gn / np.maximum(1.0 - Gn, 1e-12)
    else:
        ratio_t = np.abs(np.asarray(phi_t) / np.where(phi_wall == 0, 1.0, phi_wall))
        ratio_t = np.where(phi_wall == 0, 1.0, ratio_t)
        thin = _SAFETY_THIN * np.abs(ratio_t / np.maximum(1.0 - Gn, 1e-12) - 1.0)
    K, phi = np.broadcast_arrays(K, np.asarray(phi_wall, dtype=float))
    if weights is not None:
        weights = np.asarray(weights, dtype=float)
        weights = weights.reshape(weights.shape + (1,) * (K.ndim + 1 - weights.ndim))
    zb, w = _ions(valences, weights, K.ndim)
    zmax = float(np.max(np.abs(zb)))
    phi = np.sign(phi) * np.minimum(np.abs(phi), 80.0 / zmax)
    # the counter-ion sets the nonlinearity: Phi = max_i(-z_i phi) over the ions
    # present (max|z| |phi| for a symmetric salt)
    Phi = np.max(np.where(w > 0, -zb * phi, -np.inf), axis=0)
    Phi = np.maximum(Phi, 0.0)
    small = Phi < 1e-3
    Ps = np.where(small, 1.0, Phi)
    # overlapped layers: the mean charge f(phi) = sum_i w_i z_i (exp(-z_i phi) - 1)
    # against -phi (sinh(Phi)/Phi for a symmetric salt; first order in phi for
    # an asymmetric one)
    overlap = np.abs(_screening_ratio(valences, w, phi) - 1.0)
    # thin layers: electro-osmosis (the Gouy-Chapman mean potential against the
    # linear one, 4 chi2(tanh(Phi/4)) against Phi: ~ Phi^2/72)
    chi2 = 0.5 * (special.spence(1.0 - np.tanh(Ps / 4.0)) - special.spence(1.0 + np.tanh(Ps / 4.0)))
    thin_eo = np.where(small, Phi**2 / 72.0, 1.0 - 4.0 * chi2 / Ps)
    # thin-layer conduction, per ion i: Bikerman's excess of a flat layer,
    # (1 + 3 m_i/z_i^2) I_i with I_i = int (exp(-z_i psi) - 1) dX = 2(exp(-z_i
    # phi/2) - 1) for a symmetric salt (migration and convection), against dh's
    # migration -z_i phi + z_i^2 phi^2/4 and convection (3 m_i/z_i^2) z_i^2
    # phi^2/4, each weighted by the ion's share of the bulk conductivity; the
    # first-order terms cancel in the sum. A counter-ion that dominates the
    # layer has |dpsi/dX| = sqrt(2 w_i) exp(-z_i psi/2), so its excess is 2 f_i
    # exp(Phi_i/2), f_i = 1/(|z_i| sqrt(2 w_i)) (1 for a symmetric salt); the
    # linear part is kept exact
    cw = zb**2 * w if conduction_weights is None else _per_ion(conduction_weights, K.ndim)
    mi = 1.0 / 3.0 if dukhin_m is None else _per_ion(dukhin_m, K.ndim)
    a = 3.0 * mi / zb**2
    zp = zb * phi
    f = np.where(zp < 0, 1.0 / (np.abs(zb) * np.sqrt(2.0 * np.maximum(w, 1e-300))), 1.0)
    I_gc = 2.0 * (f * np.expm1(np.minimum(-zp / 2.0, 350.0)) + (f - 1.0) * zp / 2.0)
    ex_gc = np.sum(cw * (1.0 + a) * I_gc, axis=0)
    ex_lin = np.sum(cw * (-zp + (1.0 + a) * zp**2 / 4.0), axis=0)
    thin_cond = G * np.abs(ex_gc - ex_lin) / (1.0 + G * np.maximum(ex_gc, 0.0))
    # asymmetric salts: the Boltzmann factor's quadratic term, first order in phi
    skew = np.abs(np.sum(zb**3 * w, axis=0)) * np.abs(phi)
    if condition in ("potential", "regulated"):
        # overlapped conduction at the wall potential: sum c (exp(-z phi) - 1)
        # against dh's sum c (-z phi + z^2 phi^2/2), c the conductivity shares;
        # the overlapped mean charge carries the asymmetry of a salt exactly, in
        # thin layers about a third of it enters (skew)
        ex_pb = np.sum(cw * np.expm1(np.minimum(-zp, 700.0)), axis=0)
        ex_dh = np.sum(cw * (-zp + zp**2 / 2.0), axis=0)
        overlap_cond = np.abs(ex_dh - ex_pb) / (1.0 + np.abs(ex_pb))
        ratio = (G**2 * (overlap + overlap_cond) + G * thin_eo + thin_cond
                 + skew / 2.0 * G * (1.0 - G) / 3.0)
        dh = np.minimum(_SAFETY_DH * ratio, _DH_POTENTIAL_CAP)
        if condition == "regulated":
            # the sites balance dh's linear layer at phi_dh, pb's layer at about
            # phi_wall (auto_choice's estimate of pb's potential)
            if phi_dh is None:
                raise ValueError("phi_dh: a regulated wall's estimate needs the wall "
                                 "potential of the dh model, got None")
            pw = np.asarray(phi_wall, dtype=float)
            gap = np.abs(as_float_array("phi_dh", phi_dh) - pw) / np.maximum(np.abs(pw), 1e-300)
            dh = dh + _SAFETY_DH_GAP * np.minimum(gap, 1e6)
    else:
        # a fixed charge sets the wall potential through the linear Grahame
        # relation in thin layers: the Grahame charge over the linear one at
        # the wall potential (2 sinh(Phi/2)/Phi for a symmetric salt), weight
        # 1 - G; in overlapped layers through the linear Donnan balance, whose
        # conduction excess sum c (-z phi_L + z^2 phi_L^2/2) (phi_L = r(phi) phi,
        # dh's potential) stands against sum c (exp(-z phi) - 1) (for a
        # symmetric salt of equal mobilities sinh(Phi)^2/2 against cosh(Phi) - 1),
        # weight G
        pn = np.where(phi == 0, 1.0, phi)
        gain = np.where(phi == 0, 1.0, isolated_wall_charge(zb, w, pn) / pn)
        grahame = np.abs(gain - 1.0)
        phi_l = _screening_ratio(valences, w, phi) * phi
        ex_pb = np.sum(cw * np.expm1(-zb * phi), axis=0)
        ex_dh = np.sum(cw * (-zb * phi_l + (zb * phi_l)**2 / 2.0), axis=0)
        overlap_cond = np.abs(ex_dh - ex_pb) / (1.0 + np.abs(ex_pb))
        # a fixed charge fixes <phi> - phi_w of overlapped layers, so the mean
        # charge term enters only through the conduction
        ratio = (_DH_CHARGE_OVERLAP * G * (1.0 - G) * overlap + G * thin_eo + thin_cond
                 + (1.0 - G) * grahame + G * overlap_cond)
        dh = _SAFETY_DH_CHARGE * ratio
    thin, dh = np.broadcast_arrays(np.minimum(thin, 1e6), np.minimum(dh, 1e6))
    return {"thin": thin, "dh": dh}


def choose_models(kappa_half_size, phi_wall, valences, geometry, tol, condition="potential",
                  weights=None, phi_thin=None, phi_dh=None, conduction_weights=None,
                  dukhin_m=None):
    """Pick, per point, the cheapest model whose estimated error is below ``tol``.

    Returns (models, estimates): an array of "thin"/"dh"/"pb" and the dict
    from :func:`estimated_model_errors`.
    """
    est = estimated_model_errors(kappa_half_size, phi_wall, valences, geometry, condition,
                                 weights, phi_thin, phi_dh, conduction_weights, dukhin_m)
    models = np.where(est["thin"] <= tol, "thin", np.where(est["dh"] <= tol, "dh", "pb"))
    return models, est




def _linear_slope(m, K, geometry_factor):
    """Scaled charge per scaled wall potential of the linear layer: K tanh K
    (slit), K I1/I0 (tube), K tanh(K/geometry_factor) for sections (both limits)."""
    if m == 0:
        return K * np.tanh(K)
    if m == 1:
        return K * special.ive(1, K) / special.ive(0, K)
    return K * np.tanh(K / geometry_factor)


def _layer_gain(z, weights, G, phi):
    """Charge of a nonlinear layer at wall potential phi over the linear
    one's: isolated (Grahame charge over linear) in thin layers, uniform (mean
    charge over linear) when they overlap; geometric mean with weights 1 - G
    and G (an arithmetic one lets the exponentially larger uniform gain
    dominate thin layers)."""
    zc = np.asarray(z, dtype=float)[:, None]
    pn = np.where(phi == 0, 1e-300, phi)
    g_iso = np.maximum(isolated_wall_charge(zc, weights, pn) / pn, 1e-300)
    g_uni = np.maximum(_screening_ratio(z, weights, pn), 1e-300)
    return np.exp((1.0 - G) * np.log(g_iso) + G * np.log(g_uni))


def _layer_potential(z, weights, G, slope, sigma_s, iso):
    """Scaled wall potential, at least the isolated wall's ``iso``, at which the
    nonlinear layer of the channel (slope phi gain(phi)) holds the scaled charge
    ``sigma_s``: bisection on log|phi| between |iso| and twice the linear
    layer's potential (the gain stays above about 0.8, for asymmetric salts)."""
    sgn = np.sign(sigma_s)
    a = np.abs(sigma_s)
    lo = np.log(np.maximum(np.abs(iso), 1e-300))
    hi = np.log(np.maximum(np.maximum(2.0 * a / slope, np.abs(iso)), 1e-300))
    for _ in range(40):
        mid = 0.5 * (lo + hi)
        p = sgn * np.exp(mid)
        up = slope * np.abs(p) * _layer_gain(z, weights, G, p) < a
        lo = np.where(up, mid, lo)
        hi = np.where(up, hi, mid)
    return np.where(a == 0, 0.0, sgn * np.exp(0.5 * (lo + hi)))


def auto_choice(b, geometry, geometry_factor, tol):
    """The ``auto`` choice for a flat batch: (models (B,), estimates dict).

    ``b`` is a :class:`ekexplore._state.Batch` with the channel's half-size
    as its length; ``geometry_factor`` is perimeter x half-size / area
    (1 slit, 2 tube). The wall potential of a charge (fixed or regulated) is
    estimated without a solve: pb's (where the channel's nonlinear layer holds
    the charge, :func:`_layer_potential`), thin's (the isolated wall) and, for
    a regulated wall, dh's (the sites against the linear layer).
    """
    lin = None
    lam = b.molar_conductivity * b.c      # each ion's share of the bulk conductivity
    if b.wall.dirichlet:
        phi_est = iso = b.scaled_value
    elif b.wall.nonlinear:
        # a charge-regulating wall: thin's potential is that of the isolated
        # wall, dh's that of the sites against the linear layer of the section
        # (charge per potential K tanh K for the slit, K I1/I0 for the tube, K
        # tanh(K/geometry_factor) for sections: both limits); pb's lies
        # between, nearer the linear one as the layers overlap (weight G): the
        # linear layer screens less, so it bounds the overlapped potential from
        # above
        m = geometry_index(geometry)
        iso = b.wall.isolated_potential(b.z, b.weights, b.K, b.scaled_value)
        gf = np.broadcast_to(np.asarray(geometry_factor, dtype=float), b.K.shape)
        slope = _linear_slope(m, b.K, gf)
        lin = b.wall.linear_potential(slope, b.scaled_value)
        G = _mean_factor(m, b.K)
        # pb's: the sites against the channel's nonlinear layer (the linear
        # layer's charge times the gain of _layer_gain; asymmetric salts can
        # gain less than 1, pb's potential then above dh's)

        def diffuse(p):
            return slope * p * _layer_gain(b.z, b.weights, G, p)
        phi_est = b.wall._balance(b.scaled_value, diffuse, 40.0 / np.max(np.abs(b.z)))
        # a confined layer holds less charge than an isolated wall at the same
        # potential, so pb's potential is at least the isolated wall's
        phi_est = np.where(np.abs(phi_est) < np.abs(iso), iso, phi_est)
    else:
        # a fixed charge: the potential at which the channel's nonlinear layer
        # holds it (isolated in thin layers, Donnan-like when they overlap;
        # the linear layer's charge per potential carries the curvature)
        m = geometry_index(geometry)
        gf = np.broadcast_to(np.asarray(geometry_factor, dtype=float), b.K.shape)
        iso = isolated_wall_potential(b.z, b.weights, b.K, b.scaled_value)
        phi_est = _layer_potential(b.z, b.weights, _mean_factor(m, b.K),
                                   _linear_slope(m, b.K, gf), b.scaled_value, iso)
    return choose_models(b.K, phi_est, b.z, geometry, tol, condition=b.wall.name,
                         weights=b.weights, phi_thin=iso, phi_dh=lin,
                         conduction_weights=lam / np.sum(lam, axis=0),
                         dukhin_m=2.0 * b.eps * b.VT**2 / (3.0 * b.eta * b.D))

