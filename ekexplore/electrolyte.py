"""Ions and electrolytes: valence, diffusivity, ionic strength, Debye length,
bulk conductivity, and presets for common salts.

Concentrations are in mol/m³ (numerically equal to mM).
"""
from __future__ import annotations

from dataclasses import dataclass
from types import MappingProxyType

import numpy as np
from scipy import constants

from ._constants import F, R
from ._validate import (broadcast_named, check_choice, check_integer, check_nonnegative,
                        check_positive, check_range)
from .medium import check_temperature, water_permittivity, water_viscosity

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

    Notes
    -----
    The diffusivity at other temperatures follows the Stokes–Einstein (Walden)
    scaling :math:`D(T) = D_{25}\\,(T/298.15)\\,\\eta(298.15)/\\eta(T)`, good to
    a few percent over 0-100 °C for small ions (Robinson & Stokes,
    *Electrolyte Solutions*, 2nd ed., 1959, ch. 11; common practice).

    Examples
    --------
    >>> Ion("Na+", 1, 1.334e-9).valence
    1
    """

    name: str
    valence: int
    diffusivity: float

    def __post_init__(self):
        check_integer(f"valence of ion {self.name!r}", self.valence, nonzero=True)
        check_range(f"diffusivity of ion {self.name!r}", self.diffusivity, 1e-12, 1e-7,
                    unit="m^2/s")

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

    Examples
    --------
    >>> e = Electrolyte(["Na+", "Cl-"], [10.0, 10.0])
    >>> f"{float(e.debye_length) * 1e9:.2f} nm"
    '3.04 nm'
    """

    def __init__(self, ions, concentrations, temperature=T_REF):
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
        shape = broadcast_named({"temperature": T.shape,
                                 **{f"concentration of {i.name}": c.shape
                                    for i, c in zip(ions, cs)}})
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

    # -- construction helpers -------------------------------------------------
    @classmethod
    def salt(cls, name, concentration, temperature=T_REF):
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
        return cls(ions, [nu * c for nu in nus], temperature)

    @classmethod
    def symmetric(cls, valence, concentration, diffusivity_cation=2.0e-9,
                  diffusivity_anion=2.0e-9, temperature=T_REF):
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
        return cls(ions, [c, c], temperature)

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
    def diffusivities(self):
        """Diffusivities at the temperature [m²/s], shape (n_ions, \\*shape)."""
        return np.stack([np.broadcast_to(i.diffusivity_at(self._T), self.shape)
                         for i in self._ions])

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

    def conductivity(self, model="ideal"):
        r"""Bulk electrical conductivity [S/m].

        Parameters
        ----------
        model : {"ideal", "dho"}
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
        """
        T = self._T
        lam0 = np.stack([np.broadcast_to(i.molar_conductivity_at(T), self.shape)
                         for i in self._ions])
        if model == "ideal":
            return np.sum(lam0 * self._c, axis=0)
        if model != "dho":
            raise ValueError(f"model = {model!r}; choose 'ideal' or 'dho'")
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

    def __repr__(self):
        parts = ", ".join(f"{i.name}" for i in self._ions)
        return f"Electrolyte([{parts}], shape={self.shape})"
