r"""``solve``: the electrokinetic coupling matrix of a channel, and what follows from it.

.. math:: \begin{pmatrix}\bar u\\ \bar\imath\end{pmatrix} =
          \begin{pmatrix}L_{11} & L_{12}\\ L_{21} & L_{22}\end{pmatrix}
          \begin{pmatrix}-dp/dx\\ E_x\end{pmatrix}

with the area-mean velocity [m/s] and current density [A/m²]; L11 is the
hydraulic, L12 the electro-osmotic, L21 the streaming and L22 the
conductive coefficient.
"""
from __future__ import annotations

import numpy as np

from ._state import Conditions
from ._validate import (broadcast_named, check_choice, check_finite_result, check_positive,
                        check_range, check_scalar)
from .channels import Channel
from .electrolyte import Electrolyte
from .models import ERROR_METHOD, MODEL_CHOICES, MODEL_TABLE, PHI_MAX, auto_choice
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


def _warn_model_ranges(cond, half_size, models, estimates):
    """Warn where thin or dh was forced outside its accurate range (model table)."""
    import warnings
    K = cond.kappa * np.broadcast_to(half_size, cond.shape)
    for name in ("thin", "dh"):
        sel = np.asarray(models) == name
        if not np.any(sel) or estimates is None:
            continue
        spec = MODEL_TABLE[name]
        bad = sel & (estimates[name] > spec.accurate_error)
        if not np.any(bad):
            continue
        k = np.unravel_index(int(np.argmax(np.where(bad, estimates[name], -1.0))), bad.shape)
        warnings.warn(
            f"model={name!r} is outside its range at {int(bad.sum())} of {bad.size} points "
            f"({spec.accurate_range}); worst at kappa*half_size = {float(K[k]):.3g}: "
            f"estimated error {float(estimates[name][k]):.3g}, "
            f"{float(estimates[name][k]) / spec.accurate_error:.3g} times the "
            f"{spec.accurate_error:g} limit; use model='auto' or 'pb'",
            ModelRangeWarning, stacklevel=3)


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
    K = cond.kappa * np.broadcast_to(channel.half_size, cond.shape)
    check_range("kappa*half_size", K, 1e-3, 1e5,
                hint="the channel is too narrow or too wide for the Debye length; change "
                     "the size or the concentration")
    zmax = float(np.max(np.abs(cond.valences)))
    if cond.wall_condition == "potential":
        check_range("zeta", cond.wall_value, -PHI_MAX * cond.thermal_voltage.min() / zmax,
                    PHI_MAX * cond.thermal_voltage.min() / zmax, unit="V",
                    hint=f"|z e zeta/kT| must stay below {PHI_MAX:g}")
    models, estimates = _models(channel, cond, model, tol)
    out = channel._kernel(cond, models, {"accuracy": accuracy, "model_errors": estimates,
                                         "time_budget": time_budget})
    if cond.wall_condition != "potential":
        # the same range for every model (model table): a linear (dh) wall
        # potential of kilovolts is refused like a pb one
        phi = np.abs(out["wall_potential"]) / cond.thermal_voltage * zmax
        over = phi > PHI_MAX
        if np.any(over):
            bad = float(np.max(np.abs(out["wall_potential"])[over]))
            name = str(_first(over, np.broadcast_to(out["model"], over.shape)))
            raise ValueError(f"charge_density gives a wall potential of {bad:g} V under "
                             f"model={name!r}, beyond the range |z e zeta/kT| <= {PHI_MAX:g} "
                             "of every model; lower the charge or raise the concentration")
    if model != "auto":
        _warn_model_ranges(cond, channel.half_size, out["model"], estimates)
    result = Result(channel, electrolyte, wall, cond, out, model, tol)
    result._check()
    return result


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

    def __init__(self, channel, electrolyte, wall, conditions, out, model, tol):
        self.channel, self.electrolyte, self.wall = channel, electrolyte, wall
        self.requested_model = model
        self.tol = tol
        self._cond = conditions
        self._out = out
        shape = conditions.shape
        area = np.broadcast_to(channel.area, shape)
        perim = np.broadcast_to(channel.perimeter, shape)
        self._p_over_a = perim / area
        stern = self._p_over_a * conditions.stern_conductance
        L11 = out["L11"]
        L12 = out["L12"]
        L21 = out["L21"]
        L22 = out["L22_migration"] + out["L22_convection"] + stern
        M = np.empty(shape + (2, 2))
        M[..., 0, 0], M[..., 0, 1], M[..., 1, 0], M[..., 1, 1] = L11, L12, L21, L22
        self.matrix = check_finite_result("matrix", M)
        self._stern = stern
        self.model = np.asarray(out["model"])
        self.error_estimate = np.asarray(out["error"])
        self.error_method = ERROR_METHOD if model == "auto" else (
            "Richardson difference of a two-grid solve" if model == "pb" else
            "none: closed form of the chosen model (see ekexplore.regimes for its range)")
        self.permittivity = conditions.permittivity
        self.viscosity = conditions.viscosity
        self.temperature = conditions.temperature
        self.debye_length = 1.0 / conditions.kappa
        self.kappa_size = conditions.kappa * np.broadcast_to(channel.half_size, shape)
        self.wall_potential = np.asarray(out["wall_potential"])
        self.wall_charge = np.asarray(out.get("wall_charge", np.full(shape, np.nan)))
        self.bulk_conductivity = conditions.bulk_conductivity()
        # a charge-regulating wall: the state of its sites at the solved zeta
        self.surface_potential = np.full(shape, np.nan)
        self.charged_fraction = np.full(shape, np.nan)
        if conditions.wall.nonlinear:
            b = conditions.flat(np.ones(shape))
            phi0, frac = conditions.wall.surface_state(
                b.scaled_value, self.wall_potential.reshape(-1) / b.VT)
            self.surface_potential = (phi0 * b.VT).reshape(shape)
            self.charged_fraction = np.asarray(frac).reshape(shape)

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
        phi = self.wall_potential / self._cond.thermal_voltage
        return self._cond.concentrations * np.exp(np.minimum(-self._cond.z_b() * phi, 700.0))

    @property
    def physical(self):
        """True where the matrix is positive definite, the counter-ion share in
        [0, 1] and the maximum efficiency at most 1 (False flags a model used
        outside its range; :class:`ImpossibleResultWarning` is issued too)."""
        M = self.matrix
        sym = 0.25 * (M[..., 0, 1] + M[..., 1, 0])**2
        pd = (M[..., 0, 0] > 0) & (M[..., 1, 1] > 0) & (M[..., 0, 0] * M[..., 1, 1] > sym)
        share = self.counterion_share
        eps = 1e-9
        return pd & (share >= -eps) & (share <= 1 + eps) & (self.coupling_degree <= 1)

    def _check(self):
        """Warn, naming the numbers, where a result is impossible or crowded."""
        import warnings
        ok = self.physical
        if not np.all(ok):
            bad = ~ok
            k = np.unravel_index(int(np.flatnonzero(bad)[0]), bad.shape)
            warnings.warn(
                f"{int(bad.sum())} of {bad.size} results are not physical (model "
                f"{str(self.model[k])!r} at kappa*half_size = {float(self.kappa_size[k]):.3g}: "
                f"coupling degree {float(self.coupling_degree[k]):.3g}, counter-ion share "
                f"{float(self.counterion_share[k]):.3g}); the model is outside its range, "
                "use model='auto' or 'pb'. Result.physical flags them.",
                ImpossibleResultWarning, stacklevel=3)
        cw = np.max(self.wall_concentrations, axis=0)
        crowded = cw > CROWDING_LIMIT
        if np.any(crowded):
            k = np.unravel_index(int(np.argmax(np.where(crowded, cw, -1.0))), crowded.shape)
            warnings.warn(
                f"counter-ions at the wall reach {float(cw[k]) / 1000:.3g} mol/L at "
                f"{int(crowded.sum())} of {crowded.size} points, above "
                f"{CROWDING_LIMIT / 1000:g} mol/L: steric (finite ion size) effects, which "
                "the point-ion Poisson-Boltzmann model leaves out, limit the crowding there; "
                "treat zeta and the conduction as upper estimates",
                CrowdingWarning, stacklevel=3)

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
        z = self._cond.z_b()
        sgn = np.sign(self.wall_potential)
        sgn = np.where(sgn == 0, -1.0, sgn)
        counter = np.sign(z) == -sgn
        carried = np.sum(np.where(counter, self._out["ion_current"], 0.0), axis=0) + self._stern
        return carried / self.conductive

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
        return self._out["profiles"](G, E)

    def as_dict(self):
        """Flat dict of every coefficient and derived quantity (arrays of the input
        shape): the names of :data:`RESULT_NAMES` and of :data:`MEDIUM_UNITS`."""
        return {n: getattr(self, n) for n in RESULT_NAMES + tuple(MEDIUM_UNITS)}

    def __repr__(self):
        return (f"Result(shape={self.matrix.shape[:-2]}, model={self.requested_model!r}, "
                f"channel={type(self.channel).__name__})")
