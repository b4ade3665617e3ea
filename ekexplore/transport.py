r"""``solve``: the electrokinetic coupling matrix of a channel, and what follows from it.

.. math:: \begin{pmatrix}\bar u\\ \bar\imath\end{pmatrix} =
          \begin{pmatrix}L_{11} & L_{12}\\ L_{21} & L_{22}\end{pmatrix}
          \begin{pmatrix}-dp/dx\\ E_x\end{pmatrix}

with the area-mean velocity [m/s] and current density [A/m²]; L11 is the
hydraulic, L12 the electro-osmotic, L21 the streaming and L22 the
conductive coefficient.
"""
from __future__ import annotations

import copy
import warnings
from dataclasses import fields, replace

import numpy as np

from ._constants import thermal_voltage
from ._state import Conditions
from ._validate import (broadcast_named, check_choice, check_finite_result, check_positive,
                        check_range, check_scalar)
from .channels import Channel
from .electrolyte import Electrolyte
from .models import ERROR_METHOD, MODEL_CHOICES, MODEL_NAMES, MODEL_TABLE, PHI_MAX, auto_choice
from .wall import Wall

__all__ = ["solve", "Result", "MODEL_CHOICES", "ModelRangeWarning", "CrowdingWarning",
           "ImpossibleResultWarning", "CROWDING_LIMIT"]

#: Wall concentration of a counter-ion [mol/m³] above which the point-ion
#: (Poisson–Boltzmann) picture is questionable: at 1 mol/L hydrated ions of
#: about 0.6-0.7 nm fill of the order of 10-20 % of the volume, and steric
#: (finite ion size) effects, which the model leaves out, start to limit the
#: crowding (Kilic, Bazant & Ajdari 2007, Phys. Rev. E 75, 021502,
#: doi:10.1103/PhysRevE.75.021502; common practice).
CROWDING_LIMIT = 1000.0
#: Default time a 2D solve may spend refining toward its accuracy [s].
DEFAULT_TIME_BUDGET = 60.0
#: Points per chunk of a slit or tube batch: ``solve`` checks, chooses the
#: models, runs the kernel and keeps the compact result one chunk at a time,
#: so its working memory above the result stays of the order of 100 MiB at
#: any batch size (benchmarks/bench_memory.py).
SOLVE_CHUNK = 65536
#: Bytes a :class:`Result` keeps per point: the matrix (32), error estimate,
#: wall potential, wall charge and counter-ion current (8 each) and the model
#: (1). Everything else is computed on access.
RESULT_BYTES_PER_POINT = 65
#: Keep the kernel's two parts of L22 and the per-ion currents on the result
#: (``Result._parts``), for the regression record only: they cost 8 (k + 2)
#: bytes a point for k ions and no public figure needs them.
_KEEP_PARTS = False

#: The per-point results of :class:`Result` that tables list (``Result.as_dict``,
#: the columns of ``sweep``), in table order, with their units ("-": none).
RESULT_UNITS = {
    "hydraulic": "m^2/(Pa s)", "electroosmotic": "m^2/(V s)", "streaming": "A/(Pa m)",
    "conductive": "S/m", "reciprocity_residual": "-", "streaming_potential_coefficient": "V/Pa",
    "electroviscous_ratio": "-", "dukhin": "-", "coupling_degree": "-", "max_efficiency": "-",
    "counterion_share": "-", "kappa_size": "-", "debye_length": "m", "wall_potential": "V",
    "wall_charge": "C/m^2", "bulk_conductivity": "S/m", "error_estimate": "-", "model": "-",
}
#: Their names, in table order.
RESULT_NAMES = tuple(RESULT_UNITS)
#: The properties of the liquid on a :class:`Result`, with units.
MEDIUM_UNITS = {"permittivity": "F/m", "viscosity": "Pa s", "temperature": "K"}
#: The whole-channel figures of :meth:`Result.conductances`, with units.
CONDUCTANCE_UNITS = {"flow_per_pressure": "m^3/(s Pa)", "flow_per_volt": "m^3/(s V)",
                     "current_per_pressure": "A/Pa", "conductance": "S"}


class ModelRangeWarning(UserWarning):
    """A model was forced outside the range where it is accurate."""


class CrowdingWarning(UserWarning):
    """Counter-ions at the wall are too concentrated for point ions."""


class ImpossibleResultWarning(UserWarning):
    """A coupling matrix that is not positive definite, a counter-ion share
    outside [0, 1] or an efficiency above 1: the model is outside its range."""


def _first(mask, values):
    return values[np.unravel_index(int(np.flatnonzero(mask)[0]), mask.shape)]


class _Findings:
    """What the checks found over the chunks of one solve, said once at the end."""

    def __init__(self, size):
        self.size = size
        self.ranges = {}        # model -> [count, worst estimate, kappa*half-size there]
        self.impossible = None  # [count, model, kappa*half-size, coupling degree, share]
        self.crowded = [0, -1.0]

    def model_ranges(self, K, models, estimates):
        """Points where thin or dh was forced outside its accurate range (model table)."""
        if estimates is None:
            return
        for name in ("thin", "dh"):
            sel = np.asarray(models) == name
            if not np.any(sel):
                continue
            spec = MODEL_TABLE[name]
            bad = sel & (estimates[name] > spec.accurate_error)
            if not np.any(bad):
                continue
            k = np.unravel_index(int(np.argmax(np.where(bad, estimates[name], -1.0))), bad.shape)
            rec = self.ranges.setdefault(name, [0, -1.0, 0.0])
            rec[0] += int(bad.sum())
            if float(estimates[name][k]) > rec[1]:
                rec[1:] = [float(estimates[name][k]), float(K[k])]

    def results(self, part, cond, K):
        """Impossible results and crowded walls among a chunk's compact results."""
        M, carried = part["matrix"], part["carried"]
        bad = ~_physical(M, carried)
        if np.any(bad):
            k = np.unravel_index(int(np.flatnonzero(bad)[0]), bad.shape)
            if self.impossible is None:
                q2 = M[k + (0, 1)] * M[k + (1, 0)] / (M[k + (0, 0)] * M[k + (1, 1)])
                self.impossible = [0, MODEL_NAMES[int(part["model_code"][k])], float(K[k]),
                                   float(q2), float(carried[k] / M[k + (1, 1)])]
            self.impossible[0] += int(bad.sum())
        cw = np.max(_wall_concentrations(cond, part["wall_potential"]), axis=0)
        crowded = cw > CROWDING_LIMIT
        if np.any(crowded):
            self.crowded[0] += int(crowded.sum())
            self.crowded[1] = max(self.crowded[1], float(np.max(cw[crowded])))

    def say(self):
        """Issue the warnings, each once for the whole batch."""
        for name, (count, worst, K) in self.ranges.items():
            spec = MODEL_TABLE[name]
            warnings.warn(
                f"model={name!r} is outside its range at {count} of {self.size} points "
                f"({spec.accurate_range}); worst at kappa*half_size = {K:.3g}: "
                f"estimated error {worst:.3g}, {worst / spec.accurate_error:.3g} times the "
                f"{spec.accurate_error:g} limit; use model='auto' or 'pb'",
                ModelRangeWarning, stacklevel=3)
        if self.impossible is not None:
            count, name, K, q2, share = self.impossible
            warnings.warn(
                f"{count} of {self.size} results are not physical (model {name!r} at "
                f"kappa*half_size = {K:.3g}: coupling degree {q2:.3g}, counter-ion share "
                f"{share:.3g}); the model is outside its range, use model='auto' or 'pb'. "
                "Result.physical flags them.", ImpossibleResultWarning, stacklevel=3)
        count, worst = self.crowded
        if count:
            warnings.warn(
                f"counter-ions at the wall reach {worst / 1000:.3g} mol/L at {count} of "
                f"{self.size} points, above {CROWDING_LIMIT / 1000:g} mol/L: steric (finite "
                "ion size) effects, which the point-ion Poisson-Boltzmann model leaves out, "
                "limit the crowding there; treat zeta and the conduction as upper estimates",
                CrowdingWarning, stacklevel=3)


def _physical(M, carried):
    """Positive definite, counter-ion share in [0, 1], coupling degree at most 1."""
    sym = 0.25 * (M[..., 0, 1] + M[..., 1, 0])**2
    pd = (M[..., 0, 0] > 0) & (M[..., 1, 1] > 0) & (M[..., 0, 0] * M[..., 1, 1] > sym)
    share = carried / M[..., 1, 1]
    q2 = M[..., 0, 1] * M[..., 1, 0] / (M[..., 0, 0] * M[..., 1, 1])
    eps = 1e-9
    return pd & (share >= -eps) & (share <= 1 + eps) & (q2 <= 1)


def _wall_concentrations(cond, wall_potential):
    """c_i exp(-z_i e zeta/kT) [mol/m³], shape (n_ions, *shape)."""
    phi = wall_potential / cond.thermal_voltage
    return cond.concentrations * np.exp(np.minimum(-cond.z_b() * phi, 700.0))


def _compact(channel, cond, out):
    """What a Result keeps of a kernel's output (see RESULT_BYTES_PER_POINT)."""
    shape = cond.shape
    p_over_a = np.broadcast_to(channel.perimeter, shape) / np.broadcast_to(channel.area, shape)
    stern = p_over_a * cond.stern_conductance
    M = np.empty(shape + (2, 2))
    M[..., 0, 0], M[..., 0, 1], M[..., 1, 0] = out["L11"], out["L12"], out["L21"]
    M[..., 1, 1] = out["L22_migration"] + out["L22_convection"] + stern
    check_finite_result("matrix", M)
    wall_potential = np.asarray(out["wall_potential"])
    # the current of the counter-ions (sign opposite to the wall potential;
    # cations at zero potential), Stern conduction included
    sgn = np.sign(wall_potential)
    sgn = np.where(sgn == 0, -1.0, sgn)
    counter = np.sign(cond.z_b()) == -sgn
    carried = np.sum(np.where(counter, out["ion_current"], 0.0), axis=0) + stern
    code = np.zeros(shape, dtype=np.uint8)
    for i, name in enumerate(MODEL_NAMES):
        code[np.asarray(out["model"]) == name] = i
    part = {"matrix": M, "error": np.asarray(out["error"]), "wall_potential": wall_potential,
            "wall_charge": np.asarray(out.get("wall_charge", np.full(shape, np.nan))),
            "carried": carried, "model_code": code}
    if _KEEP_PARTS:
        part.update({k: np.asarray(out[k]) for k in ("L22_migration", "L22_convection",
                                                      "ion_current")})
    return part


def _chunks(channel, cond):
    """(channel, conditions, slice) of each chunk of flat points of a slit or
    tube batch, or the whole batch at once."""
    shape = cond.shape
    B = int(np.prod(shape)) if shape else 1
    if channel.kind not in ("slit", "tube") or B <= SOLVE_CHUNK:
        yield channel, cond, None
        return
    for start in range(0, B, SOLVE_CHUNK):
        sl = slice(start, min(B, start + SOLVE_CHUNK))
        index = np.unravel_index(np.arange(sl.start, sl.stop), shape)

        def take(a):
            a = np.asarray(a)
            lead = a.ndim - len(shape)
            return a[(slice(None),) * lead + index]

        part = replace(cond, shape=(sl.stop - sl.start,), **{
            f.name: take(getattr(cond, f.name)) for f in fields(cond)
            if isinstance(getattr(cond, f.name), np.ndarray) and f.name != "valences"})
        piece = copy.copy(channel)
        for name, value in vars(channel).items():
            if isinstance(value, np.ndarray):
                setattr(piece, name, np.broadcast_to(value, shape)[index])
        yield piece, part, sl


def _conditions(channel, electrolyte, wall):
    wall_name = {"potential": "zeta", "charge": "charge_density"}.get(wall.condition,
                                                                       "surface and pH")
    value = wall._regulated_value(electrolyte) if wall.condition == "regulated" else wall.value
    wall_shape = value.shape[1:] if wall.condition == "regulated" else wall.shape
    wall_shape = np.broadcast_shapes(wall_shape, wall.stern_conductance.shape)
    shape = broadcast_named({**channel._parameter_shapes(),
                             "electrolyte (concentration, temperature)": electrolyte.shape,
                             f"wall ({wall_name}, stern_conductance)": wall_shape})
    def bc(a):
        return np.broadcast_to(np.asarray(a, dtype=float), shape)
    def bcn(a):  # (n, *own_shape) -> (n, *shape), aligning the trailing axes
        a = np.asarray(a, dtype=float)
        a = a.reshape(a.shape[:1] + (1,) * (len(shape) - (a.ndim - 1)) + a.shape[1:])
        return np.broadcast_to(a, a.shape[:1] + shape)
    return Conditions(
        shape=shape, temperature=bc(electrolyte.temperature),
        permittivity=bc(electrolyte.permittivity), viscosity=bc(electrolyte.viscosity),
        valences=electrolyte.valences, concentrations=bcn(electrolyte.concentrations),
        diffusivities=bcn(electrolyte.diffusivities),
        ion_names=tuple(i.name for i in electrolyte.ions),
        kappa=bc(1.0 / electrolyte.debye_length), wall_condition=wall.condition,
        wall_value=bcn(value) if wall.condition == "regulated" else bc(value),
        stern_conductance=bc(wall.stern_conductance))


def _models(channel, cond, model, tol):
    """The model of every point (the ``auto`` choice where asked) and the
    a-priori error estimates of the closed-form models (every model: a thin
    or dh result always carries its estimate)."""
    if model == "pb":
        return np.full(cond.shape, model), None
    half = np.broadcast_to(channel.half_size, cond.shape)
    factor = np.broadcast_to(channel.perimeter * channel.half_size / channel.area, cond.shape)
    b = cond.flat(half)
    geometry = channel.kind if channel.kind in ("slit", "tube") else "section"
    chosen, est = auto_choice(b, geometry, factor.reshape(-1), tol)
    if model != "auto":
        chosen = np.full(b.B, model)
    return (chosen.reshape(cond.shape),
            {k: np.broadcast_to(v, (b.B,)).reshape(cond.shape) for k, v in est.items()})


def solve(channel, electrolyte, wall, model="auto", tol=0.01, accuracy=None,
          time_budget=DEFAULT_TIME_BUDGET):
    r"""Compute the electrokinetic coupling matrix and the profiles behind it.

    Parameters
    ----------
    channel : Channel
        ``Slit``, ``Tube`` or a 2D section; its sizes may be arrays.
    electrolyte : Electrolyte
        Ions, concentrations [mol/m³] and temperature [K]; may be arrays.
    wall : Wall
        Constant zeta [V] or constant charge [C/m²], optional Stern
        conductance [S]; may be arrays.
    model : {"auto", "thin", "dh", "pb"}
        Double-layer model. ``"auto"`` picks, per point, the cheapest model
        whose estimated error on every coefficient is below ``tol``.
    tol : float
        Error tolerance for ``"auto"`` [-], 1e-6 to 1. Default 0.01.
    accuracy : float, optional
        Target relative accuracy of the numerical solutions [-], 1e-9 to 0.1.
        Default None: each kernel's own, 1e-6 for slit and tube (pb), 1e-3 for
        2D sections (about 0.05 s a point; 1e-6 there costs about 2 s).
    time_budget : float or None
        Seconds a 2D solve may spend refining to reach ``accuracy`` [s],
        0.1 to 1e5, default 60; None: no limit. Every point is solved at
        least at the resolution ``accuracy`` asks a priori; a point that
        misses the accuracy after refining (finest resolution or budget
        reached) issues an ``ekexplore.models.AccuracyWarning``, and its
        ``error_estimate`` says what was reached.

    Returns
    -------
    Result
        Broadcast over all array inputs; ``matrix`` has shape (..., 2, 2).

    Notes
    -----
    Validity: continuum point-ion electrokinetics (Poisson–Boltzmann with
    Stokes flow), the channel in equilibrium with a reservoir of the given
    electrolyte, no slip at the shear plane (the wall), a uniform axial
    field and pressure gradient (a long channel), water as solvent. The pb
    solver covers kappa*half-size from 1e-3 to 1e5 and |z e zeta/kT| up to 30
    (validated to 20). The two off-diagonals are computed independently,
    L21 = <rho_e u_p>/G and L12 = <u_eo>/E; their relative difference is
    reported as ``reciprocity_residual`` (Onsager 1931).

    References
    ----------
    .. [1] Onsager, L. (1931). Phys. Rev. 37, 405. doi:10.1103/PhysRev.37.405
    .. [2] Rice, C. L.; Whitehead, R. (1965). J. Phys. Chem. 69, 4017.
       doi:10.1021/j100782a002
    .. [3] Burgreen, D.; Nakache, F. R. (1964). J. Phys. Chem. 68, 1084.
       doi:10.1021/j100787a019

    Examples
    --------
    >>> import ekexplore as ek
    >>> r = ek.solve(ek.Slit(gap=100e-9), ek.Electrolyte.salt("KCl", 1.0),
    ...              ek.Wall(zeta=-0.05), model="pb")
    >>> r.matrix.shape
    (2, 2)
    >>> bool(r.electroosmotic > 0 and r.streaming > 0)
    True
    >>> float(r.reciprocity_residual) < 1e-8
    True
    """
    if not isinstance(channel, Channel):
        raise ValueError(f"channel must be a Slit, Tube or another Channel, got {channel!r}")
    if not isinstance(electrolyte, Electrolyte):
        raise ValueError(f"electrolyte must be an Electrolyte, got {electrolyte!r}")
    if not isinstance(wall, Wall):
        raise ValueError(f"wall must be a Wall, got {wall!r}")
    model = check_choice("model", model, MODEL_CHOICES)
    tol = check_scalar("tol", tol, 1e-6, 1.0)
    if accuracy is not None:
        accuracy = check_scalar("accuracy", accuracy, 1e-9, 0.1)
    if time_budget is not None:
        time_budget = check_scalar("time_budget", time_budget, 0.1, 1e5)
    cond = _conditions(channel, electrolyte, wall)
    zmax = float(np.max(np.abs(cond.valences)))
    zeta_max = PHI_MAX * float(thermal_voltage(np.min(cond.temperature))) / zmax
    for piece, part, _ in _chunks(channel, cond):     # every input checked before any work
        K = part.kappa * np.broadcast_to(piece.half_size, part.shape)
        check_range("kappa*half_size", K, 1e-3, 1e5,
                    hint="the channel is too narrow or too wide for the Debye length; change "
                         "the size or the concentration")
        if cond.wall_condition == "potential":
            check_range("zeta", part.wall_value, -zeta_max, zeta_max, unit="V",
                        hint=f"|z e zeta/kT| must stay below {PHI_MAX:g}")
    findings = _Findings(int(np.prod(cond.shape)))
    store, profiles = None, None
    for piece, part, sl in _chunks(channel, cond):
        models, estimates = _models(piece, part, model, tol)
        out = piece._kernel(part, models, {"accuracy": accuracy, "model_errors": estimates,
                                           "time_budget": time_budget})
        if cond.wall_condition != "potential":
            # the same range for every model (model table): a linear (dh) wall
            # potential of kilovolts is refused like a pb one
            phi = np.abs(out["wall_potential"]) / part.thermal_voltage * zmax
            over = phi > PHI_MAX
            if np.any(over):
                bad = float(np.max(np.abs(out["wall_potential"])[over]))
                name = str(_first(over, np.broadcast_to(out["model"], over.shape)))
                what = ("the surface's sites give" if cond.wall_condition == "regulated"
                        else "charge_density gives")
                raise ValueError(f"{what} a wall potential of {bad:g} V under "
                                 f"model={name!r}, beyond the range |z e zeta/kT| <= "
                                 f"{PHI_MAX:g} of every model; lower the charge or raise the "
                                 "concentration")
        K = part.kappa * np.broadcast_to(piece.half_size, part.shape)
        if model != "auto":
            findings.model_ranges(K, out["model"], estimates)
        compact = _compact(piece, part, out)
        findings.results(compact, part, K)
        if sl is None:
            store, profiles = compact, out["profiles"]
        else:
            if store is None:
                store = {k: np.empty(v.shape[:-1] + cond.shape if k == "ion_current" else
                                     cond.shape + v.shape[1:], dtype=v.dtype)
                         for k, v in compact.items()}
            for k, v in compact.items():
                if k == "ion_current":
                    store[k].reshape(v.shape[0], -1)[:, sl] = v
                else:
                    store[k].reshape((-1,) + v.shape[1:])[sl] = v
        del out, models, estimates
    findings.say()
    return Result(channel, electrolyte, wall, cond, store, model, tol, profiles)


class Result:
    r"""Coupling matrix, whole-channel figures and derived quantities of :func:`solve`.

    Every attribute is an ndarray of the broadcast input shape (0-d for
    scalar inputs) in SI units, per unit cross-section area unless said.
    Built by :func:`solve` only.

    Attributes
    ----------
    matrix : ndarray, shape (..., 2, 2)
        [[L11, L12], [L21, L22]] with [mean velocity, mean current density] =
        matrix @ [-dp/dx, E_x]; L11 [m²/(Pa s)], L12 [m²/(V s)], L21
        [A/(Pa m)], L22 [S/m].
    model : ndarray of str
        Model used at each point ("thin", "dh" or "pb").
    requested_model : str
        The ``model`` argument ("auto" included).
    error_estimate : ndarray
        Estimated relative error of the coefficients [-].
    error_method : str
        How ``error_estimate`` was obtained.
    tol : float
        The tolerance given to ``auto`` [-].
    wall_potential : ndarray
        Potential at the wall (zeta) [V].
    wall_charge : ndarray
        Wall charge density [C/m²].
    surface_potential, charged_fraction : ndarray
        For a wall whose charge follows the chemistry
        (``Wall(surface=..., pH=...)``): the potential of the charged plane [V]
        and the fraction of sites that carry a charge [-], at the solved zeta
        (``wall_potential``; ``wall_charge`` is then the sites' charge). Their
        relative error is of the order of ``error_estimate``. NaN for other walls.
    debye_length : ndarray
        Debye length [m].
    kappa_size : ndarray
        kappa x half-size [-].
    bulk_conductivity : ndarray
        Nernst–Einstein conductivity of the reservoir [S/m].
    permittivity, viscosity, temperature : ndarray
        Of the solution [F/m], [Pa s], [K].
    channel, electrolyte, wall
        The inputs.

    Notes
    -----
    Memory: a result keeps ``RESULT_BYTES_PER_POINT`` (65) bytes a point (the
    matrix, ``error_estimate``, ``wall_potential``, ``wall_charge``, the
    counter-ion current and a model code) besides views of the inputs;
    ``model``, ``debye_length``, ``kappa_size``, ``bulk_conductivity``, the
    surface state and every derived quantity are computed on each access.
    ``solve`` runs slit and tube batches in chunks of ``SOLVE_CHUNK`` points,
    so its working memory above the result stays bounded at any batch size
    (``benchmarks/bench_memory.py``).

    The coefficients, the derived quantities (``electroosmotic_mobility``,
    ``streaming_potential_coefficient``, ``dukhin``, ``coupling_degree``,
    ``max_efficiency``, ``counterion_share``, ...) and the whole-channel
    figures (:meth:`conductances`, :meth:`pump_limits`) are properties and
    methods; :meth:`as_dict` lists them all. The two off-diagonals are
    computed independently (Onsager 1931, doi:10.1103/PhysRev.37.405).

    Examples
    --------
    >>> import ekexplore as ek
    >>> r = ek.solve(ek.Tube(diameter=200e-9), ek.Electrolyte.salt("KCl", 1.0),
    ...              ek.Wall(zeta=-0.05), model="pb")
    >>> str(r.model), r.matrix.shape
    ('pb', (2, 2))
    >>> bool(r.conductive > r.bulk_conductivity)
    True
    """

    def __init__(self, channel, electrolyte, wall, conditions, data, model, tol, profiles):
        self.channel, self.electrolyte, self.wall = channel, electrolyte, wall
        self.requested_model = model
        self.tol = tol
        self._cond = conditions
        self._profiles = profiles
        self.matrix = data["matrix"]
        self.error_estimate = data["error"]
        self.wall_potential = data["wall_potential"]
        self.wall_charge = data["wall_charge"]
        self._carried = data["carried"]      # counter-ion current, Stern included [S/m]
        self._model_code = data["model_code"]
        self._parts = {k: data[k] for k in ("L22_migration", "L22_convection", "ion_current")
                       if k in data}
        self.error_method = ERROR_METHOD if model == "auto" else (
            "error of the Richardson-extrapolated value, from extra coarser grids (1D) or "
            "levels (2D)" if model == "pb" else
            "none: closed form of the chosen model (see ekexplore.regimes for its range)")
        self.permittivity = conditions.permittivity
        self.viscosity = conditions.viscosity
        self.temperature = conditions.temperature

    # -- computed on access (a result keeps RESULT_BYTES_PER_POINT bytes a point) --
    @property
    def model(self):
        """Model used at each point ("thin", "dh" or "pb"), ndarray of str."""
        return np.asarray(np.asarray(MODEL_NAMES)[self._model_code])

    @property
    def _shape(self):
        return self._cond.shape

    @property
    def _p_over_a(self):
        return (np.broadcast_to(self.channel.perimeter, self._shape)
                / np.broadcast_to(self.channel.area, self._shape))

    @property
    def debye_length(self):
        """Debye length [m]."""
        return 1.0 / self._cond.kappa

    @property
    def kappa_size(self):
        """kappa x half-size [-]."""
        return self._cond.kappa * np.broadcast_to(self.channel.half_size, self._shape)

    @property
    def bulk_conductivity(self):
        """Nernst–Einstein conductivity of the reservoir [S/m]."""
        return self._cond.bulk_conductivity()

    def _surface_state(self):
        """Potential of the charged plane [V] and charged fraction of the sites
        [-] of a charge-regulating wall at the solved zeta (NaN for other walls)."""
        shape = self._shape
        if not self._cond.wall.nonlinear:
            return np.full(shape, np.nan), np.full(shape, np.nan)
        b = self._cond.flat(np.ones(shape))
        phi0, frac = self._cond.wall.surface_state(b.scaled_value,
                                                    self.wall_potential.reshape(-1) / b.VT)
        return (phi0 * b.VT).reshape(shape), np.asarray(frac).reshape(shape)

    @property
    def surface_potential(self):
        """Potential of the charged plane of a charge-regulating wall [V] (NaN otherwise)."""
        return self._surface_state()[0]

    @property
    def charged_fraction(self):
        """Fraction of the sites that carry a charge, charge-regulating wall [-] (NaN otherwise)."""
        return self._surface_state()[1]

    # -- the four coefficients -------------------------------------------------
    @property
    def hydraulic(self):
        """L11 = mean velocity per -dp/dx [m²/(Pa·s)]."""
        return self.matrix[..., 0, 0]

    @property
    def electroosmotic(self):
        """L12 = mean velocity per field [m²/(V·s)]."""
        return self.matrix[..., 0, 1]

    @property
    def streaming(self):
        """L21 = mean current density per -dp/dx [A/(Pa·m)]."""
        return self.matrix[..., 1, 0]

    @property
    def conductive(self):
        """L22 = mean current density per field, the effective conductivity [S/m]."""
        return self.matrix[..., 1, 1]

    @property
    def reciprocity_residual(self):
        """|L12 - L21| / max(|L12|, |L21|) [-]: the Onsager check."""
        a, b = self.electroosmotic, self.streaming
        scale = np.maximum(np.maximum(np.abs(a), np.abs(b)), 1e-300)
        return np.abs(a - b) / scale

    # -- derived quantities --------------------------------------------------------
    @property
    def electroosmotic_mobility(self):
        """Mean electro-osmotic velocity per field [m²/(V·s)] (= L12)."""
        return self.electroosmotic

    @property
    def streaming_potential_coefficient(self):
        """Streaming field per pressure gradient at zero current, E/(-dp/dx) = -L21/L22 [V/Pa].

        Equal to eps zeta/(eta K) in the Smoluchowski limit (negative for negative zeta).
        """
        return -self.streaming / self.conductive

    @property
    def streaming_current_coefficient(self):
        """Mean streaming current density per -dp/dx at zero field (= L21) [A/(Pa·m)]."""
        return self.streaming

    @property
    def electroviscous_ratio(self):
        """Apparent over true viscosity at zero current, L11 / (L11 - L12 L21 / L22) [-]."""
        return self.hydraulic / (self.hydraulic - self.electroosmotic * self.streaming
                                 / self.conductive)

    @property
    def surface_conductivity_excess(self):
        """L22 minus the bulk conductivity [S/m]: what the walls add."""
        return self.conductive - self.bulk_conductivity

    @property
    def surface_conductance(self):
        """Surface conductance K_sigma = (L22 - K_bulk) A/P [S]: diffuse and Stern layers."""
        return self.surface_conductivity_excess / self._p_over_a

    @property
    def dukhin(self):
        """Dukhin number Du = K_sigma / (K_bulk a) [-], with a the half-size
        (the radius of a tube, the half-gap of a slit).

        The definition of the IUPAC report (Delgado et al. 2005, Pure Appl.
        Chem. 77, 1753, doi:10.1351/pac200577101753) with the channel's
        half-size as the length. Surface over bulk conduction,
        (L22 - K_bulk)/K_bulk, equals Du times P a/A: Du for a slit, 2 Du for
        a tube.
        """
        half = np.broadcast_to(self.channel.half_size, self.matrix.shape[:-2])
        return self.surface_conductance / (self.bulk_conductivity * half)

    @property
    def wall_concentrations(self):
        """Ion concentrations at the wall, c_i exp(-z_i e zeta/kT) [mol/m³],
        shape (n_ions, ...) (Boltzmann; for dh the same formula is used,
        as an indication)."""
        return _wall_concentrations(self._cond, self.wall_potential)

    @property
    def physical(self):
        """True where the matrix is positive definite, the counter-ion share in
        [0, 1] and the maximum efficiency at most 1 (False flags a model used
        outside its range; :class:`ImpossibleResultWarning` is issued too)."""
        return _physical(self.matrix, self._carried)

    @property
    def coupling_degree(self):
        """q² = L12 L21 / (L11 L22) [-] (Kedem & Caplan 1965)."""
        return self.electroosmotic * self.streaming / (self.hydraulic * self.conductive)

    @property
    def max_efficiency(self):
        """Maximum efficiency of the linear converter, q²/(1 + sqrt(1 - q²))² [-]."""
        q2 = self.coupling_degree
        return q2 / (1.0 + np.sqrt(np.clip(1.0 - q2, 0.0, None)))**2

    @property
    def counterion_share(self):
        """Share of the conduction current carried by counter-ions [-].

        Counter-ions are the ions of sign opposite to the wall potential. Each
        ion's current is its migration plus the convection of its excess over
        the bulk (the convection of the neutral bulk carries no net current);
        the Stern conduction counts as counter-ion current. At zero wall
        potential, cations are counted, which gives their bulk transference
        number. Between 0 and 1 for the pb and dh models; the slip model's
        flat-wall co-ion depletion can exceed the bulk below kappa*a of about
        2, outside its range, and then gives shares above 1.
        """
        return self._carried / self.conductive

    # -- whole channel --------------------------------------------------------------
    def conductances(self, length):
        """Whole-channel transfer coefficients for a channel of ``length`` [m].

        Returns
        -------
        dict
            ``flow_per_pressure`` Q/dp [m³/(s·Pa)], ``flow_per_volt`` Q/V
            [m³/(s·V)], ``current_per_pressure`` I/dp [A/Pa], ``conductance``
            I/V [S]. For a slit without width, per metre of width.
        """
        L = check_positive("length", length, unit="m")
        a = self.channel.area / L
        return {"flow_per_pressure": self.hydraulic * a, "flow_per_volt": self.electroosmotic * a,
                "current_per_pressure": self.streaming * a, "conductance": self.conductive * a}

    def pump_limits(self, voltage, length):
        """Electro-osmotic pump limits at ``voltage`` [V] over ``length`` [m].

        Returns
        -------
        stall_pressure : ndarray
            Pressure rise at zero net flow, L12 V / L11 [Pa].
        free_flow : ndarray
            Flow rate at zero pressure difference, A L12 V / L [m³/s].
        """
        V = check_range("voltage", voltage, -1e5, 1e5, unit="V")
        L = check_positive("length", length, unit="m")
        return self.electroosmotic * V / self.hydraulic, self.channel.area * self.electroosmotic * V / L

    def profiles(self, pressure_gradient=1.0, field=1.0):
        """Profiles across the section for -dp/dx [Pa/m] and E [V/m]; see ``Profiles``."""
        G = check_scalar("pressure_gradient", pressure_gradient, -1e15, 1e15, unit="Pa/m")
        E = check_scalar("field", field, -1e9, 1e9, unit="V/m")
        if self._profiles is None:     # a slit or tube batch solved in chunks
            from .kernels1d import profiles_1d
            return profiles_1d({"slit": 0, "tube": 1}[self.channel.kind], self.channel.half_size,
                               self._cond, self.model, self.wall_potential, G, E)
        return self._profiles(G, E)

    def as_dict(self):
        """Flat dict of every coefficient and derived quantity (arrays of the input
        shape): the names of :data:`RESULT_NAMES` and of :data:`MEDIUM_UNITS`."""
        return {n: getattr(self, n) for n in RESULT_NAMES + tuple(MEDIUM_UNITS)}

    def __repr__(self):
        return (f"Result(shape={self.matrix.shape[:-2]}, model={self.requested_model!r}, "
                f"channel={type(self.channel).__name__})")
