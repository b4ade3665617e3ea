"""Ions and electrolytes: valence, diffusivity, ionic strength, Debye length,
bulk conductivity, and presets for common salts.

Concentrations are in mol/m³ (numerically equal to mM).
"""
from __future__ import annotations

from dataclasses import dataclass
from types import MappingProxyType

import numpy as np
from scipy import constants

from . import chemistry
from ._constants import F, R
from ._validate import (broadcast_named, check_choice, check_integer, check_nonnegative,
                        check_positive, check_range)
from .conductivity import ION_RADIUS, MOBILITY_MODELS, msa_factors, walden_ratio
from .medium import check_temperature, water_density, water_permittivity, water_viscosity

__all__ = ["Ion", "ION_TABLE", "SALTS", "Electrolyte", "debye_length"]

T_REF = constants.zero_Celsius + 25.0


def _diffusivity_from_equivalent_conductivity(lam_eq_S_cm2, valence):
    """D = R T lambda_eq / (|z| F^2) at 25 °C, lambda_eq per equivalent [S cm²/mol]."""
    return R * T_REF * (lam_eq_S_cm2 * 1e-4) / (abs(valence) * F**2)


@dataclass(frozen=True)
class Ion:
    """An ion species: name, valence and diffusivity at 25 °C.

    Parameters
    ----------
    name : str
        Label, e.g. ``"Na+"``.
    valence : int
        Charge number z [-], non-zero.
    diffusivity : float
        Diffusivity at 25 °C [m²/s], positive.
    radius : float, optional
        Ion radius [m] for the concentration correction of the mobility
        (``mobility="msa"``), 0.3-10 Å. Default: the tabulated radius of
        :data:`ekexplore.conductivity.ION_RADIUS`, else the Stokes radius
        :math:`kT/(6\\pi\\eta D)` at 25 °C (an estimate).

    Notes
    -----
    :meth:`diffusivity_at` follows the Stokes–Einstein (Walden) scaling
    :math:`D(T) = D_{25}\\,(T/298.15)\\,\\eta(298.15)/\\eta(T)` (the earlier
    behaviour, ``mobility="ideal"``); :meth:`limiting_diffusivity` corrects it
    with tabulated limiting conductivities where the ion has a table (H+, OH-,
    Li+, Na+, K+, Cl-, Ca2+, Mg2+, NO3-, SO4^2-, acetate), which the Walden
    rule misses by 10-75 % at the ends of 0-100 °C.

    Examples
    --------
    >>> Ion("Na+", 1, 1.334e-9).valence
    1
    """

    name: str
    valence: int
    diffusivity: float
    radius: float | None = None

    def __post_init__(self):
        check_integer(f"valence of ion {self.name!r}", self.valence, nonzero=True)
        check_range(f"diffusivity of ion {self.name!r}", self.diffusivity, 1e-12, 1e-7,
                    unit="m^2/s")
        if self.radius is not None:
            check_range(f"radius of ion {self.name!r}", self.radius, 3e-11, 1e-9, unit="m")

    @property
    def contact_radius(self):
        """Radius [m] used by the concentration correction (see ``radius``)."""
        if self.radius is not None:
            return float(self.radius)
        if self.name in ION_RADIUS:
            return ION_RADIUS[self.name]
        return float(constants.k * T_REF / (6 * np.pi * water_viscosity(T_REF)
                                             * self.diffusivity))

    def limiting_diffusivity(self, temperature):
        r"""Infinite-dilution diffusivity [m²/s] at ``temperature`` [K] from the
        tabulated limiting conductivities (Walden rule for ions with no table).

        :math:`D^\circ(T) = D(T)_{\mathrm{Walden}}\,w(T)` with the tabulated
        Walden ratio :func:`ekexplore.conductivity.walden_ratio`.

        Examples
        --------
        >>> f"{float(ION_TABLE['H+'].limiting_diffusivity(273.15)):.3e}"
        '5.489e-09'
        """
        return self.diffusivity_at(temperature) * walden_ratio(self.name, temperature)

    def diffusivity_at(self, temperature):
        r"""Diffusivity [m²/s] at ``temperature`` [K] by Stokes–Einstein scaling.

        :math:`D(T) = D_{25}\,(T/298.15)\,\eta(298.15)/\eta(T)`, with the
        IAPWS 2008 viscosity; temperature 273.15-373.15 K.

        Examples
        --------
        >>> f"{float(ION_TABLE['K+'].diffusivity_at(310.15)):.3e}"
        '2.621e-09'
        """
        T = check_temperature(temperature)
        return self.diffusivity * (T / T_REF) * (water_viscosity(T_REF) / water_viscosity(T))

    def molar_conductivity_at(self, temperature):
        """Limiting molar ionic conductivity z²F²D/(RT) [S m²/mol] at
        ``temperature`` [K] (Nernst–Einstein), per mole of ion.

        Examples
        --------
        >>> f"{float(ION_TABLE['Ca2+'].molar_conductivity_at(298.15)) * 1e4:.2f} S cm2/mol"
        '118.94 S cm2/mol'
        """
        T = check_temperature(temperature)
        return self.valence**2 * F**2 * self.diffusivity_at(T) / (R * T)


# Limiting equivalent ionic conductivities at 25 °C [S cm^2/mol], CRC Handbook
# of Chemistry and Physics, "Ionic conductivity and diffusion at infinite
# dilution" (values as listed in shared references; K+ etc.).
_LAMBDA_EQ = {
    "H+": (1, 349.65), "Li+": (1, 38.66), "Na+": (1, 50.08), "K+": (1, 73.48),
    "Ca2+": (2, 59.47), "Mg2+": (2, 53.0),
    "OH-": (-1, 198.0), "Cl-": (-1, 76.31), "NO3-": (-1, 71.42), "SO4^2-": (-2, 80.0),
    "HCO3-": (-1, 44.5), "CH3COO-": (-1, 40.9),
}

#: Ions with their 25 °C diffusivities from the CRC limiting conductivities.
ION_TABLE = MappingProxyType({
    name: Ion(name, z, _diffusivity_from_equivalent_conductivity(lam, z))
    for name, (z, lam) in _LAMBDA_EQ.items()
})

#: Salt presets: formula -> ((ion, stoichiometric number), ...).
SALTS = MappingProxyType({
    "KCl": (("K+", 1), ("Cl-", 1)),
    "NaCl": (("Na+", 1), ("Cl-", 1)),
    "LiCl": (("Li+", 1), ("Cl-", 1)),
    "KNO3": (("K+", 1), ("NO3-", 1)),
    "NaNO3": (("Na+", 1), ("NO3-", 1)),
    "HCl": (("H+", 1), ("Cl-", 1)),
    "NaOH": (("Na+", 1), ("OH-", 1)),
    "KOH": (("K+", 1), ("OH-", 1)),
    "NaHCO3": (("Na+", 1), ("HCO3-", 1)),
    "CH3COONa": (("Na+", 1), ("CH3COO-", 1)),
    "CaCl2": (("Ca2+", 1), ("Cl-", 2)),
    "MgCl2": (("Mg2+", 1), ("Cl-", 2)),
    "Na2SO4": (("Na+", 2), ("SO4^2-", 1)),
    "K2SO4": (("K+", 2), ("SO4^2-", 1)),
    "MgSO4": (("Mg2+", 1), ("SO4^2-", 1)),
})


def debye_length(ionic_strength, temperature=T_REF):
    r"""Debye screening length of an electrolyte in water.

    .. math:: \kappa^{-1} = \sqrt{\frac{\varepsilon_r\varepsilon_0 k T}{2 N_A e^2 I}}

    Parameters
    ----------
    ionic_strength : array_like
        Ionic strength :math:`I = \tfrac12\sum z_i^2 c_i` [mol/m³], positive.
    temperature : array_like, optional
        Temperature [K], 273.15-373.15. Default 298.15.

    Returns
    -------
    float or ndarray
        Debye length [m].

    Notes
    -----
    Exact for the Poisson–Boltzmann model of point ions; with the
    Malmberg–Maryott permittivity. At 25 °C and 1:1 salts it reproduces the
    rule of thumb 0.304 nm/√(I in mol/L) (Israelachvili, *Intermolecular and
    Surface Forces*, 3rd ed., 2011; common practice).

    References
    ----------
    .. [1] Debye, P.; Hückel, E. (1923). Phys. Z. 24, 185.
    .. [2] Malmberg & Maryott (1956), doi:10.6028/jres.056.001

    Examples
    --------
    >>> f"{float(debye_length(100.0)) * 1e9:.3f} nm"
    '0.961 nm'
    """
    I = check_positive("ionic_strength", ionic_strength, unit="mol/m^3")
    T = check_temperature(temperature)
    eps = water_permittivity(T)
    return np.sqrt(eps * constants.k * T / (2.0 * constants.N_A * constants.e**2 * I))


class Electrolyte:
    """A mixture of ions in water at a temperature.

    Parameters
    ----------
    ions : sequence of Ion or str
        The species; strings are looked up in :data:`ION_TABLE`.
    concentrations : sequence of array_like
        Bulk (reservoir) concentration of each ion [mol/m³], non-negative.
        Arrays broadcast with each other and with ``temperature``.
    temperature : array_like, optional
        Temperature [K], 273.15-373.15. Default 298.15.
    mobility : {"msa", "dilute", "ideal"}, optional
        How the ion mobilities (``diffusivities``, hence the conductivity and
        every transport coefficient) are computed. ``"msa"`` (default):
        limiting values from tables against temperature, lowered with
        concentration by the mean spherical approximation, so the bulk
        conductivity matches the KCl standards (within 0.3 % from 0.5 to
        100 mM, 1.7 % at 1 M, 25 °C). ``"dilute"``: tabulated limiting values,
        no concentration correction. ``"ideal"``: the earlier behaviour
        exactly: 25 °C limiting values with the Walden rule, no correction
        (high by 1.7 % at 1 mM, 6 % at 10 mM and 16 % at 100 mM KCl).
    pH : array_like, optional
        The pH of a solution built from ions directly (the trace acid or base
        that sets it is not among the ions). Default: from H+ if it is an
        ion, else None (not defined). Recipes
        (:meth:`mix`, :meth:`buffer`) compute it.

    Raises
    ------
    ValueError
        For unknown ions, negative concentrations, a mixture that is not
        electroneutral (relative charge imbalance above 1e-9), a zero ionic
        strength, or a temperature outside the property fits.

    Notes
    -----
    The ions are point charges in a continuum solvent (Poisson–Boltzmann
    level). Permittivity and viscosity are those of pure water: no
    concentration corrections, which stay below about 2 % up to 100 mM
    (common practice).

    The concentration correction of ``mobility="msa"`` is evaluated at the
    bulk (reservoir) composition and used unchanged across the channel: the
    double-layer models see each ion with this bulk mobility, so a wide
    channel at low zeta reports exactly :meth:`conductivity`. Inside a
    double layer the local ionic strength differs from the bulk, and the
    correction there is an approximation (of the size of the correction
    itself, at most the bulk figures above).

    Examples
    --------
    >>> e = Electrolyte(["Na+", "Cl-"], [10.0, 10.0])
    >>> f"{float(e.debye_length) * 1e9:.2f} nm"
    '3.04 nm'
    """

    def __init__(self, ions, concentrations, temperature=T_REF, mobility="msa", pH=None):
        if mobility not in MOBILITY_MODELS:
            raise ValueError(f"mobility = {mobility!r}; choose one of "
                             f"{', '.join(MOBILITY_MODELS)}")
        self._mobility = mobility
        self._chem = None
        self._D = None
        ions = tuple(ION_TABLE[i] if isinstance(i, str) and i in ION_TABLE else i for i in ions)
        for i in ions:
            if not isinstance(i, Ion):
                raise ValueError(f"ions: unknown ion {i!r}; known names are "
                                 f"{', '.join(ION_TABLE)} (or pass an Ion)")
        if len(ions) == 0:
            raise ValueError("ions: an electrolyte needs at least one cation and one anion")
        if len(concentrations) != len(ions):
            raise ValueError(f"concentrations: got {len(concentrations)} values for "
                             f"{len(ions)} ions")
        cs = [check_nonnegative(f"concentration of {ion.name}", c, unit="mol/m^3")
              for ion, c in zip(ions, concentrations)]
        T = check_temperature(temperature)
        pH_arr = None if pH is None else check_range("pH", pH, -1.0, 15.0)
        shape = broadcast_named({"temperature": T.shape,
                                 **{f"concentration of {i.name}": c.shape
                                    for i, c in zip(ions, cs)},
                                 **({} if pH_arr is None else {"pH": pH_arr.shape})})
        self._ions = ions
        self._c = np.stack([np.broadcast_to(c, shape) for c in cs]).astype(float)
        self._c.setflags(write=False)
        self._T = np.broadcast_to(T, shape)
        z = self.valences.reshape((-1,) + (1,) * len(shape))
        imbalance = np.abs(np.sum(z * self._c, axis=0))
        scale = np.sum(np.abs(z) * self._c, axis=0)
        if np.any(scale <= 0):
            raise ValueError("concentrations: ionic strength is zero; give at least one "
                             "cation and one anion a positive concentration [mol/m^3]")
        bad = imbalance > 1e-9 * scale
        if np.any(bad):
            k = np.flatnonzero(bad.ravel())[0]
            net = float(np.sum(z * self._c, axis=0).ravel()[k])
            raise ValueError(f"concentrations: the mixture is not electroneutral, net charge "
                             f"sum(z*c) = {net:g} mol/m^3 (allowed: 0 within 1e-9 relative)")
        self._pH = None if pH_arr is None else np.broadcast_to(pH_arr, shape)

    # -- construction helpers -------------------------------------------------
    @classmethod
    def salt(cls, name, concentration, temperature=T_REF, mobility="msa", pH=None):
        """A dissolved salt from :data:`SALTS` at ``concentration`` [mol/m³] of salt.

        Parameters
        ----------
        name : str
            A key of :data:`SALTS`, e.g. ``"KCl"``, ``"CaCl2"``, ``"Na2SO4"``.
        concentration : array_like
            Salt concentration [mol/m³] (= mM), non-negative; each ion gets its
            stoichiometric multiple.
        temperature : array_like, optional
            Temperature [K], 273.15-373.15. Default 298.15.
        mobility, pH
            As in :class:`Electrolyte`.

        Returns
        -------
        Electrolyte

        Examples
        --------
        >>> e = Electrolyte.salt("CaCl2", 1.0)
        >>> float(e.ionic_strength)
        3.0
        """
        if not isinstance(name, str):
            check_choice("salt name", name, tuple(SALTS))  # a list or array: named
        if name not in SALTS:
            raise ValueError(f"salt name {name!r} is not a preset; choose one of "
                             f"{', '.join(SALTS)} or build Electrolyte(ions, concentrations)")
        c = check_nonnegative("concentration", concentration, unit="mol/m^3")
        ions, nus = zip(*SALTS[name])
        return cls(ions, [nu * c for nu in nus], temperature, mobility=mobility, pH=pH)

    @classmethod
    def symmetric(cls, valence, concentration, diffusivity_cation=2.0e-9,
                  diffusivity_anion=2.0e-9, temperature=T_REF, mobility="msa"):
        """A custom symmetric z:z salt.

        Parameters
        ----------
        valence : int
            z of the cation (the anion has -z), 1-4.
        concentration : array_like
            Salt concentration [mol/m³].
        diffusivity_cation, diffusivity_anion : float
            Diffusivities at 25 °C [m²/s]; default 2.0e-9, a typical small-ion
            value (common practice).
        temperature : array_like
            Temperature [K].
        mobility : str
            As in :class:`Electrolyte`; the ions have no radius table, so
            ``"msa"`` uses their Stokes radii.

        Examples
        --------
        >>> e = Electrolyte.symmetric(2, 1.0)
        >>> float(e.ionic_strength)
        4.0
        """
        valence = check_integer("valence", valence, 1, 4)
        c = check_nonnegative("concentration", concentration, unit="mol/m^3")
        ions = (Ion(f"cation{valence}+", int(valence), diffusivity_cation),
                Ion(f"anion{valence}-", -int(valence), diffusivity_anion))
        return cls(ions, [c, c], temperature, mobility=mobility)

    @classmethod
    def named(cls, name, concentration, temperature=T_REF, pH=None, co2=None,
              mobility="msa"):
        """A salt preset or a buffer by name: one entry point for sweeps and
        screens.

        Parameters
        ----------
        name : str
            A key of :data:`SALTS` (then ``concentration`` is the salt's and
            ``pH``, optional, is only recorded) or of
            :data:`ekexplore.chemistry.BUFFERS` (then ``concentration`` is the
            buffer's total and ``pH`` the target, required).
        concentration : array_like
            [mol/m³].
        temperature : array_like, optional
            [K].
        pH : array_like, optional
            See ``name``.
        co2 : optional
            For buffers, as in :meth:`mix`.
        mobility : str
            As in :class:`Electrolyte`.

        Examples
        --------
        >>> f"{float(Electrolyte.named('HEPES', 10.0, pH=7.4).pH):.2f}"
        '7.40'
        """
        if isinstance(name, str) and name in chemistry.BUFFERS:
            if pH is None:
                raise ValueError(f"pH: a {name} buffer needs its target pH (useful range "
                                 "pK +- 1)")
            return cls.buffer(name, concentration, pH=pH, temperature=temperature, co2=co2,
                              mobility=mobility)
        if isinstance(name, str) and name in SALTS:
            return cls.salt(name, concentration, temperature=temperature, mobility=mobility,
                            pH=pH)
        check_choice("electrolyte name", name, tuple(SALTS) + tuple(chemistry.BUFFERS))

    # -- properties --------------------------------------------------------------
    @property
    def ions(self):
        """The ion species (tuple of :class:`Ion`)."""
        return self._ions

    @property
    def valences(self):
        """Charge numbers z_i [-], shape (n_ions,)."""
        return np.array([i.valence for i in self._ions], dtype=float)

    @property
    def concentrations(self):
        """Bulk concentrations [mol/m³], shape (n_ions, \\*shape)."""
        return self._c

    @property
    def temperature(self):
        """Temperature [K], broadcast shape."""
        return self._T

    @property
    def shape(self):
        """Broadcast shape of the parameters."""
        return self._T.shape

    @property
    def mobility(self):
        """The mobility model, ``"msa"``, ``"dilute"`` or ``"ideal"``."""
        return self._mobility

    def _diffusivities(self, model):
        T = self._T
        if model == "ideal":
            return np.stack([np.broadcast_to(i.diffusivity_at(T), self.shape)
                             for i in self._ions])
        D0 = np.stack([np.broadcast_to(i.limiting_diffusivity(T), self.shape)
                       for i in self._ions])
        if model == "dilute":
            return D0
        radii = [i.contact_radius for i in self._ions]
        return D0 * msa_factors(self.valences, self._c, D0, radii, T)

    @property
    def diffusivities(self):
        """Diffusivities at the temperature [m²/s], shape (n_ions, \\*shape).

        These are the mobilities of the chosen ``mobility`` model (the ion's
        electric mobility is :math:`|z| e D/kT`); the transport solvers use
        them everywhere in the channel.
        """
        if self._D is None:
            D = self._diffusivities(self._mobility)
            D.setflags(write=False)
            self._D = D
        return self._D

    @property
    def ionic_strength(self):
        """Ionic strength I = ½ Σ z_i² c_i [mol/m³]."""
        z = self.valences.reshape((-1,) + (1,) * len(self.shape))
        return 0.5 * np.sum(z**2 * self._c, axis=0)

    @property
    def permittivity(self):
        """Permittivity of the solvent [F/m]."""
        return water_permittivity(self._T)

    @property
    def viscosity(self):
        """Viscosity of the solvent [Pa·s]."""
        return water_viscosity(self._T)

    @property
    def debye_length(self):
        """Debye length [m] (see :func:`debye_length`)."""
        return debye_length(self.ionic_strength, self._T)

    def conductivity(self, model=None):
        r"""Bulk electrical conductivity [S/m].

        Parameters
        ----------
        model : {None, "msa", "dilute", "ideal", "dho"}
            ``None`` (default): this electrolyte's own ``mobility`` model,
            :math:`K = \sum z_i^2 F^2 D_i c_i/(RT)` with :attr:`diffusivities`
            (what the transport models use). ``"msa"``, ``"dilute"``: the same
            sum with those mobilities (see :class:`Electrolyte`).
            ``"ideal"``: Nernst–Einstein sum
            :math:`K = \sum z_i^2 F^2 D_i c_i/(RT)`, exact at infinite
            dilution; against the KCl conductivity standards at 25 °C it is
            high by 1.7 % at 1 mM, 6 % at 10 mM and 16 % at 100 mM.
            ``"dho"``: Debye–Hückel–Onsager limiting law for a binary
            electrolyte (one cation, one anion, any valences); against the
            same standards it is low by 0.4 % at 1 mM and 0.7 % at 10 mM
            (within 0.8 % up to 10 mM) and by 7 % at 100 mM; refused above an
            ionic strength of 100 mol/m³, where it fails.

        Returns
        -------
        float or ndarray
            Conductivity [S/m].

        Notes
        -----
        The transport models use the ideal form locally, since the
        Poisson–Boltzmann picture has no ion-ion friction. The limiting law:

        .. math:: \lambda_i = \lambda_i^\circ\left(1 - \frac{|z_1 z_2| e^2\kappa}
                  {12\pi\varepsilon k T}\frac{q}{1+\sqrt q}\right)
                  - \frac{z_i^2 F e\kappa}{6\pi\eta}

        with :math:`q = \frac{|z_1z_2|}{|z_1|+|z_2|}\frac{\lambda_1^e+\lambda_2^e}
        {|z_2|\lambda_1^e+|z_1|\lambda_2^e}` (equivalent conductivities).

        References
        ----------
        .. [1] Onsager, L. (1927). Phys. Z. 28, 277.
        .. [2] Robinson, R. A.; Stokes, R. H. (1959). *Electrolyte Solutions*,
           2nd ed., Butterworths, ch. 7.
        .. [3] Wu, Y. C.; Koch, W. F.; Pratt, K. W. (1991). Proposed new
           electrolytic conductivity primary standards for KCl solutions.
           J. Res. Natl. Inst. Stand. Technol. 96, 191
           (the standards the accuracies above are measured against).

        Examples
        --------
        >>> e = Electrolyte.salt("KCl", 1.0)
        >>> f"{float(e.conductivity('dho')) * 1e4:.1f} uS/cm"
        '146.8 uS/cm'
        >>> f"{float(e.conductivity()) * 1e4:.1f} uS/cm"
        '146.9 uS/cm'
        """
        T = self._T
        if model is None or model in MOBILITY_MODELS:
            D = (self.diffusivities if model in (None, self._mobility)
                 else self._diffusivities(model))
            z = self.valences.reshape((-1,) + (1,) * len(self.shape))
            return np.sum(z**2 * F**2 * D * self._c, axis=0) / (R * T)
        lam0 = np.stack([np.broadcast_to(i.molar_conductivity_at(T), self.shape)
                         for i in self._ions])
        if model != "dho":
            raise ValueError(f"model = {model!r}; choose one of None, "
                             f"{', '.join(MOBILITY_MODELS)}, 'dho'")
        present = [k for k in range(len(self._ions)) if np.any(self._c[k] > 0)]
        if len(self._ions) != 2 and len(present) != 2:
            raise ValueError(f"model = 'dho' needs a binary electrolyte (one cation, one "
                             f"anion); this mixture has {len(present)} ions")
        check_range("ionic_strength", self.ionic_strength, 0, 100.0, unit="mol/m^3",
                    hint="the Debye-Hueckel-Onsager limiting law fails above 100 mM; "
                         "use model='ideal'")
        k1, k2 = present if len(present) == 2 else (0, 1)
        z1, z2 = abs(self._ions[k1].valence), abs(self._ions[k2].valence)
        l1e, l2e = lam0[k1] / z1, lam0[k2] / z2
        q = z1 * z2 / (z1 + z2) * (l1e + l2e) / (z2 * l1e + z1 * l2e)
        eps = self.permittivity
        kappa = 1.0 / self.debye_length
        relax = z1 * z2 * constants.e**2 * kappa / (12 * np.pi * eps * constants.k * T) \
            * q / (1 + np.sqrt(q))
        ephor = F * constants.e * kappa / (6 * np.pi * self.viscosity)
        lam = np.stack([lam0[k] * (1 - relax) - self._ions[k].valence**2 * ephor
                        for k in range(len(self._ions))])
        return np.sum(lam * self._c, axis=0)

    # -- acid-base state ---------------------------------------------------------------
    @property
    def pH(self):
        r"""pH, :math:`-\log_{10} a_{H^+}` [-] (molality basis, Davies activity).

        Recipes (:meth:`mix`, :meth:`buffer`) solve it. For an electrolyte
        built from ions: the ``pH`` given to the constructor, else from H+ if
        it is one of the ions, else None: an unbuffered salt takes its pH
        from traces (CO₂ from air brings water to pH 5.6), so it is not
        guessed; use :meth:`mix` with ``co2="air"`` or give ``pH``.

        Examples
        --------
        >>> Electrolyte.salt('KCl', 10.0).pH is None
        True
        >>> f"{float(Electrolyte.salt('KCl', 10.0, pH=7.0).pH):.1f}"
        '7.0'
        """
        if self._chem is not None:
            return self._chem["pH"]
        if self._pH is not None:
            return self._pH
        names = [i.name for i in self._ions]
        if "H+" in names:
            m = self._c[names.index("H+")] / water_density(self._T)
            I = self.ionic_strength / water_density(self._T)
            lg = chemistry.davies_log_gamma(1, I, self._T)
            return -(np.log10(np.maximum(m, 1e-300)) + lg)
        return None

    @property
    def hydrogen_ion_activity(self):
        """Bulk activity of H+, :math:`a_{H^+} = 10^{-pH}` [-] (molal scale).

        This is the quantity surface site equilibria use (with the Boltzmann
        factor of the local potential at a charged plane). None where
        :attr:`pH` is None.
        """
        pH = self.pH
        return None if pH is None else 10.0 ** (-np.asarray(pH))

    @property
    def species(self):
        """Every species' bulk concentration [mol/m³], neutral ones included
        (dict name -> array of the broadcast shape)."""
        if self._chem is not None:
            return dict(self._chem["species"])
        return {i.name: self._c[k] for k, i in enumerate(self._ions)}

    @property
    def recipe(self):
        """The recipe of :meth:`mix` / :meth:`buffer` (dict substance ->
        amount [mol/m³]) or None."""
        return None if self._chem is None else dict(self._chem["recipe"])

    @property
    def titrant(self):
        """For :meth:`buffer`: (substance, amount [mol/m³]) of strong acid or base
        added to reach the pH; else None."""
        return None if self._chem is None else self._chem.get("titrant")

    @classmethod
    def mix(cls, recipe, temperature=T_REF, co2=None, acids=(), mobility="msa"):
        r"""An electrolyte from what was dissolved: charge balance and acid–base
        equilibria solved, with water's ionisation and Davies activities.

        Parameters
        ----------
        recipe : dict or str
            Substance -> dissolved amount [mol/m³] (= mM), non-negative, array_like
            (e.g. ``{"KH2PO4": 25, "Na2HPO4": 25}``, ``{"Tris": 20, "HCl": 10,
            "KCl": 50}``). Names: :data:`ekexplore.chemistry.SUBSTANCES`, the
            ``name`` of a user :class:`~ekexplore.chemistry.AcidBase` given in
            ``acids`` (added as its most protonated form... counted by charge
            balance, so any form), or a named recipe of
            :data:`ekexplore.chemistry.RECIPES` (``"TBE"``, ``"PBS"``) given as a
            string (1x).
        temperature : array_like, optional
            Temperature [K], 273.15-350 (range of the pK(T) data). Default 298.15.
        co2 : float, array_like or "air", optional
            Partial pressure of CO₂ [Pa] the solution is equilibrated with;
            ``"air"`` is 420 ppm of 1 atm (42.6 Pa). Default None (closed,
            CO₂-free).
        acids : sequence of AcidBase, optional
            User-defined weak acids or bases, usable by name in ``recipe``.
        mobility : str
            As in :class:`Electrolyte`.

        Returns
        -------
        Electrolyte
            With every charged species as an ion, and :attr:`pH`,
            :attr:`species`, :attr:`hydrogen_ion_activity`, :attr:`recipe`.

        Raises
        ------
        ValueError
            Unknown substance, negative amount, a temperature outside the pK
            data, or a recipe whose charge balance has no root for pH in
            [-1, 15] (say a strong acid above about 10 mol/L).

        Notes
        -----
        Equilibrium constants at I = 0 with their temperature dependence
        (:func:`ekexplore.chemistry.pK_at`, Goldberg et al. 2002); water by
        Bandura & Lvov 2006; activities by the Davies law (to about
        I = 0.1-0.5 mol/kg; beyond that the pH is an estimate). Amounts are
        converted to molality with the density of water. Neglected: ion
        pairs and complexes (e.g. Ca-phosphate, borate-polyol esters in TBE,
        metal-EDTA), polyborates. Every species then enters the transport
        models as a Poisson–Boltzmann ion; for ideal species each follows its
        own Boltzmann law, so the acid–base equilibria hold at every point of
        the double layer by themselves.

        References
        ----------
        .. [1] Goldberg, Kishore & Lennen (2002), J. Phys. Chem. Ref. Data 31,
           231. doi:10.1063/1.1416902
        .. [2] Bandura & Lvov (2006), J. Phys. Chem. Ref. Data 35, 15.
           doi:10.1063/1.1928231
        .. [3] Davies, C. W. (1962). *Ion Association*. Butterworths.

        Examples
        --------
        >>> e = Electrolyte.mix({"KH2PO4": 25.0, "Na2HPO4": 25.0})
        >>> f"pH {float(e.pH):.2f}"
        'pH 6.88'
        >>> f"{float(Electrolyte.mix({}, co2='air').pH):.2f}"
        '5.60'
        """
        if isinstance(recipe, str):
            if recipe not in chemistry.RECIPES:
                raise ValueError(f"recipe = {recipe!r} is not a named recipe; choose one of "
                                 f"{', '.join(chemistry.RECIPES)} or give a dict")
            recipe = dict(chemistry.RECIPES[recipe])
        if not isinstance(recipe, dict):
            raise ValueError(f"recipe must be a dict substance -> amount [mol/m^3] or a "
                             f"named recipe, got {recipe!r}")
        user = {}
        for a in acids:
            if not isinstance(a, chemistry.AcidBase):
                raise ValueError(f"acids: {a!r} is not an AcidBase")
            user[a.name] = a
        T = chemistry.check_pk_temperature(temperature)
        amounts = {}
        strong_amt = {}
        sys_amt = {}
        systems = {}
        for name, amount in recipe.items():
            a = check_nonnegative(f"amount of {name}", amount, unit="mol/m^3")
            if name in user:
                key, entry = name, {"strong": {}, "acids": {name: 1}}
                systems[name] = user[name]
            else:
                key, entry = chemistry.lookup_substance(name)
            amounts[key] = amounts.get(key, 0.0) + a
            for ion, nu in entry["strong"].items():
                strong_amt[ion] = strong_amt.get(ion, 0.0) + nu * a
            for sysname, nu in entry["acids"].items():
                systems.setdefault(sysname, chemistry.ACIDS.get(sysname))
                sys_amt[sysname] = sys_amt.get(sysname, 0.0) + nu * a
        open_co2 = None
        if co2 is not None:
            p = chemistry.CO2_AIR_PA if (isinstance(co2, str) and co2 == "air") else co2
            if isinstance(p, str):
                raise ValueError(f"co2 = {co2!r}; give a partial pressure [Pa] or 'air'")
            open_co2 = check_range("co2", p, 0.0, 1.0e5, unit="Pa")
            systems.setdefault("carbonate", chemistry.ACIDS["carbonate"])
            sys_amt.setdefault("carbonate", 0.0)
        rho = water_density(T)
        shape = np.broadcast_shapes(T.shape, *(np.shape(v) for v in strong_amt.values()),
                                    *(np.shape(v) for v in sys_amt.values()),
                                    np.shape(open_co2) if open_co2 is not None else ())
        strong = {ion: (ION_TABLE[ion].valence, np.broadcast_to(v / rho, shape))
                  for ion, v in strong_amt.items()}
        acid_list = [systems[k] for k in sys_amt]
        totals = [np.broadcast_to(sys_amt[k] / rho, shape) for k in sys_amt]
        res = chemistry.speciate(strong, acid_list, totals, np.broadcast_to(T, shape),
                                 open_co2=open_co2)
        pH = res["pH"]
        if np.any(pH < -1.0) or np.any(pH > 15.0):
            bad = float(pH[(pH < -1.0) | (pH > 15.0)].ravel()[0])
            raise ValueError(f"recipe: the charge balance has no solution with pH in "
                             f"[-1, 15] (it runs to pH {bad:.1f}); reduce the strong acid "
                             "or base")
        return cls._from_speciation(res, rho, shape, np.broadcast_to(T, shape), amounts,
                                    acid_list, mobility)

    @classmethod
    def _from_speciation(cls, res, rho, shape, T, amounts, acid_list, mobility,
                         titrant=None):
        lam = {}
        for a in acid_list:
            for name, z, l in zip(a.species, a.charges, a.conductivity):
                if z != 0:
                    lam[name] = (z, l)
        conc = {}
        valence = {}
        for name, (z, m) in list(res["strong"].items()) + list(res["species"].items()):
            conc[name] = conc.get(name, 0.0) + np.broadcast_to(m * rho, shape)
            valence[name] = z
        species = {k: np.array(v) for k, v in conc.items()}
        for v in species.values():
            v.setflags(write=False)
        scale = sum(abs(valence[k]) * v for k, v in conc.items())
        ions, cs = [], []
        for name, c in conc.items():
            z = valence[name]
            if z == 0 or not np.any(c > 1e-13 * scale):
                continue
            if name in ION_TABLE:
                ion = ION_TABLE[name]
            else:
                zz, l = lam[name]
                ion = Ion(name, int(zz), _diffusivity_from_equivalent_conductivity(
                    l / abs(zz), zz))
            ions.append(ion)
            cs.append(c)
        e = cls(ions, cs, T, mobility=mobility)
        e._chem = {"pH": np.array(res["pH"]), "species": species,
                   "recipe": amounts, "titrant": titrant}
        e._chem["pH"].setflags(write=False)
        return e

    @classmethod
    def buffer(cls, name, concentration, pH, salt=None, temperature=T_REF, co2=None,
               mobility="msa"):
        r"""A buffer titrated to a target pH with a strong acid or base.

        Parameters
        ----------
        name : str
            A key of :data:`ekexplore.chemistry.BUFFERS`: phosphate (NaH2PO4
            titrated with NaOH), acetate (acetic acid + NaOH), citrate (citric
            acid + NaOH), borate (boric acid + NaOH), carbonate (NaHCO3 +
            NaOH), Tris (Tris base + HCl), HEPES, MES, MOPS (free acids +
            NaOH), glycine (glycine + NaOH).
        concentration : array_like
            Total buffer concentration [mol/m³], positive.
        pH : array_like
            Target pH at ``temperature``, inside the useful range pK ± 1 of
            the buffering ionisation (pK at the temperature).
        salt : dict, optional
            Added substances [mol/m³], e.g. ``{"NaCl": 150}``.
        temperature : array_like, optional
            Temperature [K], 273.15-350. Default 298.15.
        co2 : optional
            As in :meth:`mix`.
        mobility : str
            As in :class:`Electrolyte`.

        Returns
        -------
        Electrolyte
            :attr:`titrant` gives the substance and amount [mol/m³] added.

        Raises
        ------
        ValueError
            Unknown buffer; a pH outside the useful range (the message gives
            the range) or below the pH of the starting substance with the
            salt (the titrant only raises, or for Tris only lowers, the pH).

        Notes
        -----
        At a fixed pH the charge balance is linear in the titrant, so its
        amount is solved directly, iterating only on the ionic strength of
        the activity coefficients. Then :meth:`mix` recomputes the solution
        from the full recipe.

        Examples
        --------
        >>> e = Electrolyte.buffer("Tris", 20.0, pH=8.0)
        >>> sub, amount = e.titrant
        >>> sub, f"{float(amount):.2f} mM", f"pH {float(e.pH):.3f}"
        ('HCl', '11.37 mM', 'pH 8.000')
        """
        if name not in chemistry.BUFFERS:
            raise ValueError(f"buffer name {name!r} is not known; choose one of "
                             f"{', '.join(chemistry.BUFFERS)} or use Electrolyte.mix")
        start, titr, k = chemistry.BUFFERS[name]
        c = check_positive("concentration", concentration, unit="mol/m^3")
        T = chemistry.check_pk_temperature(temperature)
        target = check_range("pH", pH, 0.0, 14.0)
        _, entry = chemistry.lookup_substance(start)
        sysname = next(iter(entry["acids"]))
        acid = chemistry.ACIDS[sysname]
        pks = acid.pKs(T)
        lo = (pks[0] if k is None else pks[k]) - 1.0
        hi = (pks[-1] if k is None else pks[k]) + 1.0
        bad = (target < lo) | (target > hi)
        if np.any(bad):
            i = np.flatnonzero(np.broadcast_to(bad, np.broadcast(target, lo).shape))[0]
            lo_i = float(np.broadcast_to(lo, bad.shape).ravel()[i])
            hi_i = float(np.broadcast_to(hi, bad.shape).ravel()[i])
            raise ValueError(f"pH = {float(np.broadcast_to(target, bad.shape).ravel()[i]):g} "
                             f"is outside the useful range of {name} buffer at this "
                             f"temperature, [{lo_i:.2f}, {hi_i:.2f}] (pK +- 1)")
        base = {start: c}
        for sname, amt in (salt or {}).items():
            base[sname] = base.get(sname, 0.0) + amt
        titr_ion, titr_z = (("Na+", 1) if titr == "NaOH" else ("Cl-", -1))
        # strong ions and acid totals of the base recipe
        rho = water_density(T)
        strong_amt, sys_amt = {}, {}
        for sname, amt in base.items():
            a = check_nonnegative(f"amount of {sname}", amt, unit="mol/m^3")
            _, ent = chemistry.lookup_substance(sname)
            for ion, nu in ent["strong"].items():
                strong_amt[ion] = strong_amt.get(ion, 0.0) + nu * a
            for sn, nu in ent["acids"].items():
                sys_amt[sn] = sys_amt.get(sn, 0.0) + nu * a
        open_co2 = None
        if co2 is not None:
            open_co2 = chemistry.CO2_AIR_PA if co2 == "air" else check_range(
                "co2", co2, 0.0, 1.0e5, unit="Pa")
            sys_amt.setdefault("carbonate", 0.0)
        shape = np.broadcast_shapes(c.shape, T.shape, target.shape,
                                    *(np.shape(v) for v in strong_amt.values()))
        x = np.zeros(shape)      # titrant [mol/kg]
        acid_list = [chemistry.ACIDS[s] for s in sys_amt]
        totals = [np.broadcast_to(v / rho, shape) for v in sys_amt.values()]
        for _ in range(50):
            strong = {ion: (ION_TABLE[ion].valence, np.broadcast_to(v / rho, shape))
                      for ion, v in strong_amt.items()}
            z0, m0 = strong.get(titr_ion, (titr_z, 0.0))
            strong[titr_ion] = (titr_z, m0 + x)
            r = chemistry.speciate(strong, acid_list, totals, np.broadcast_to(T, shape),
                                   open_co2=open_co2, fixed_pH=np.broadcast_to(target, shape))
            dx = -r["residual"] / titr_z
            x = x + dx
            if np.all(np.abs(dx) <= 1e-13 * np.maximum(np.abs(x), 1e-12)):
                break
        if np.any(x < -1e-12 * np.maximum(c / rho, 1e-30)):
            i = np.flatnonzero(x.ravel() < 0)[0]
            direction = "raises" if titr == "NaOH" else "lowers"
            raise ValueError(f"pH = {float(np.broadcast_to(target, shape).ravel()[i]):g} "
                             f"cannot be reached: {start} with the salt gives pH on its own "
                             f"beyond it, and the titrant {titr} only {direction} the pH; "
                             f"choose a pH inside the useful range [{float(np.min(lo)):.2f}, "
                             f"{float(np.max(hi)):.2f}] on the {titr} side")
        amount = np.maximum(x, 0.0) * rho
        full = dict(base)
        full[titr] = full.get(titr, 0.0) + amount
        e = cls.mix(full, temperature=T, co2=co2, mobility=mobility)
        amount.setflags(write=False)
        e._chem["titrant"] = (titr, amount)
        return e

    def __repr__(self):
        parts = ", ".join(f"{i.name}" for i in self._ions)
        return f"Electrolyte([{parts}], shape={self.shape})"
