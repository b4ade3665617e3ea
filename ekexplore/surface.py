r"""Walls whose charge follows the chemistry: surface sites that take up or
release protons, a Stern layer, and the isolated-wall solution.

A surface carries one or more kinds of ionisable site. A site of kind j
passes through the states k = 0 .. n_j by releasing one proton per step,

.. math:: \mathrm{S}^{(q_j - k + 1)} \rightleftharpoons \mathrm{S}^{(q_j - k)}
          + \mathrm{H}^+ ,\qquad pK_{j,k},\quad k = 1 .. n_j,

where q_j is the charge number of the most protonated state: a silanol
group (SiOH/SiO⁻) has n = 1, q = 0; an amphoteric oxide site
(MOH₂⁺/MOH/MO⁻) has n = 2, q = +1. Mass action with the H⁺ activity at
the charged plane, which follows Boltzmann's law from the bulk,

.. math:: a_{H,0} = 10^{-\mathrm{pH}}\, e^{-e\psi_0/kT},

gives the population of every state and the site charge
:math:`\sigma_0 = e\sum_j \Gamma_j \langle q_j - k\rangle`. A Stern layer of
capacitance C separates the charged plane (potential ψ₀) from the start of
the diffuse layer (potential ψ_d, taken as ζ):
:math:`\psi_0 - \psi_d = \sigma_0 / C`. For an isolated flat wall the
diffuse layer obeys Grahame's relation :math:`\sigma_0 = \sigma_G(\psi_d)`
(:func:`ekexplore.wall.grahame_charge`, any ion mixture).

This is the basic Stern model of Behrens & Grier (2001) for silica and glass
(one pK), and the two-pK site-binding model of Yates, Levine & Healy (1974)
for amphoteric oxides.

References
----------
.. [1] Behrens, S. H. & Grier, D. G. (2001). The charge of glass and silica
   surfaces. J. Chem. Phys. 115, 6716. doi:10.1063/1.1404988
.. [2] Yates, D. E., Levine, S. & Healy, T. W. (1974). Site-binding model of
   the electrical double layer at the oxide/water interface. J. Chem. Soc.,
   Faraday Trans. 1, 70, 1807. doi:10.1039/F19747001807
.. [3] van Hal, R. E. G., Eijkel, J. C. T. & Bergveld, P. (1996). A general
   model to describe the electrostatic potential at electrolyte oxide
   interfaces. Adv. Colloid Interface Sci. 69, 31.
   doi:10.1016/S0001-8686(96)00307-7
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import constants, special

from ._validate import as_float_array, check_range
from .medium import check_temperature
from .wall import WALL_CONDITIONS, ZETA_MAX, WallCondition, grahame_charge

__all__ = ["Site", "Surface", "IsolatedWall", "RegulatedCharge", "PK_RANGE", "PH_RANGE", "SITE_DENSITY_MAX",
           "STERN_CAPACITANCE_MAX"]

LN10 = float(np.log(10.0))
T_REF = constants.zero_Celsius + 25.0

#: Accepted range of a site pK [-]: wide enough for the protonation of silanol
#: (pK about -2) and for strongly basic amine sites.
PK_RANGE = (-10.0, 25.0)
#: Accepted range of the bulk pH [-].
PH_RANGE = (0.0, 14.0)
#: Largest site density accepted [1/m²] (1000 per nm²). Real surfaces carry
#: 1-20 per nm²; the wide bound lets the fixed-potential limit be explored.
SITE_DENSITY_MAX = 1e21
#: Largest Stern capacitance accepted [F/m²]. Real values are 0.1-5 F/m²; the
#: wide bound lets the fixed-potential limit be explored.
STERN_CAPACITANCE_MAX = 1e3


#: pK values a site may have (rows reserved per site when packed).
_MAX_PK = 4


def _thermal_voltage(T):
    return constants.k * np.asarray(T, dtype=float) / constants.e


@dataclass(frozen=True, init=False)
class Site:
    """One kind of ionisable surface site.

    Parameters
    ----------
    pK : float, array_like or sequence of them
        The pK of each proton release, from the most protonated state down
        [-], each within ``PK_RANGE`` (-10 to 25). One value for a one-pK
        site (silanol), two for an amphoteric site (pK of MOH₂⁺ then of MOH).
        Each value may be an array (a parameter sweep).
    density : array_like
        Number of sites per area [1/m²], 0 < density <= 1e21
        (8 per nm² = 8e18 1/m²).
    charge : int, optional
        Charge number of the most protonated state, -4 to 4. Default 0
        (a neutral acid such as SiOH).
    name : str, optional
        Label.

    Examples
    --------
    >>> s = Site(7.5, 8e18, name="silanol")
    >>> s.charges
    (0, -1)
    >>> Site((6.0, 10.0), 8e18, charge=1).charges
    (1, 0, -1)
    """

    pK: tuple
    density: np.ndarray
    charge: int
    name: str

    def __init__(self, pK, density, charge=0, name="site"):
        # a list or tuple holds one pK per proton; a number or an array is one pK
        pKs = tuple(pK) if isinstance(pK, (list, tuple)) else (pK,)
        if not 1 <= len(pKs) <= 4:
            raise ValueError(f"pK: a site needs 1 to 4 pK values, got {len(pKs)}")
        pKs = tuple(check_range("pK", p, *PK_RANGE) for p in pKs)
        rho = check_range("site density", density, 0.0, SITE_DENSITY_MAX, unit="1/m^2",
                          lo_open=True)
        if not isinstance(charge, (int, np.integer)) or not -4 <= charge <= 4:
            raise ValueError(f"charge = {charge!r} must be an integer in [-4, 4] (charge "
                             "number of the most protonated state)")
        object.__setattr__(self, "pK", pKs)
        object.__setattr__(self, "density", rho)
        object.__setattr__(self, "charge", int(charge))
        object.__setattr__(self, "name", str(name))

    @property
    def charges(self):
        """Charge numbers of the states, most protonated first."""
        return tuple(self.charge - k for k in range(len(self.pK) + 1))

    @property
    def shape(self):
        """Broadcast shape of the site parameters."""
        return np.broadcast_shapes(self.density.shape, *(p.shape for p in self.pK))

    def _states(self, phi0, pH):
        """Populations of the states at scaled potential ``phi0`` = e psi0/kT.

        Returns (mean charge number, variance of the number of released
        protons, log partition function, fraction in a charged state). The
        log weight of state k is ln10 sum_{i<=k} (pH - pK_i) + k phi0.
        """
        if len(self.pK) == 1:
            # closed forms: the dissociated fraction is expit(u)
            u = LN10 * (pH - self.pK[0]) + phi0
            a = special.expit(u)
            b = special.expit(-u)
            mean_q = self.charge - a
            var = a * b
            logz = np.logaddexp(0.0, u)
            charged = b if self.charge != 0 else a
            return mean_q, var, logz, charged
        lw = [np.zeros(np.broadcast_shapes(np.shape(phi0), np.shape(pH)))]
        for k, pk in enumerate(self.pK, start=1):
            lw.append(lw[-1] + LN10 * (pH - pk) + phi0)
        lw = np.stack(np.broadcast_arrays(*lw))
        logz = special.logsumexp(lw, axis=0)
        p = np.exp(lw - logz)
        k = np.arange(len(self.pK) + 1).reshape((-1,) + (1,) * (lw.ndim - 1))
        mean_k = np.sum(p * k, axis=0)
        var = np.sum(p * (k - mean_k) ** 2, axis=0)
        q = np.array(self.charges).reshape(k.shape)
        charged = np.sum(np.where(q != 0, p, 0.0), axis=0)
        return self.charge - mean_k, var, logz, charged

    def __repr__(self):
        pk = ", ".join(repr(p if p.ndim else float(p)) for p in self.pK)
        d = self.density if self.density.ndim else float(self.density)
        return f"Site(pK=({pk}), density={d!r}, charge={self.charge}, name={self.name!r})"


@dataclass(frozen=True)
class IsolatedWall:
    """Solution of a charge-regulating wall facing a semi-infinite electrolyte.

    Attributes
    ----------
    zeta : ndarray
        Potential at the start of the diffuse layer (shear plane) [V].
    charge_density : ndarray
        Charge of the sites per area [C/m²] (balanced by the diffuse layer).
    surface_potential : ndarray
        Potential at the charged plane, psi_0 = zeta + sigma/C [V].
    charged_fraction : ndarray
        Fraction of all sites that carry a charge [-]; for silanol sites the
        dissociated fraction of Behrens & Grier.
    """

    zeta: np.ndarray
    charge_density: np.ndarray
    surface_potential: np.ndarray
    charged_fraction: np.ndarray


class Surface:
    r"""A wall material whose charge follows the pH: ionisable sites and a Stern layer.

    Parameters
    ----------
    sites : Site or sequence of Site
        The kinds of ionisable site; at least one.
    stern_capacitance : array_like
        Capacitance of the Stern layer between the charged plane and the
        diffuse layer [F/m²], 0 < C <= 1e3 (real surfaces: 0.1-5).
    name : str, optional
        Label of the material.

    Notes
    -----
    Presets: :meth:`silica` (Behrens & Grier 2001), :meth:`alumina` and
    :meth:`tantalum_pentoxide` (site parameters of van Hal, Eijkel & Bergveld
    1996, from memory). There is no polymer preset (PDMS, PMMA, COC): the
    polymer data of Kirby & Hasselbrink (2004, Electrophoresis 25, 203,
    doi:10.1002/elps.200305755) are empirical zeta/pC curves, not site
    parameters, and could not be checked here; build such a wall from its
    measured zeta with :class:`ekexplore.Wall` instead.

    The site pK values are those at 25 °C; no enthalpy of the surface
    reactions is included, so at other temperatures only kT/e changes
    (surface reaction enthalpies are rarely published). The activity of H⁺
    at the charged plane follows Boltzmann's law from the bulk with the
    same activity coefficient (common practice). Only protons bind: no
    specific adsorption of the salt ions (no triple layer).

    References
    ----------
    .. [1] Behrens, S. H. & Grier, D. G. (2001). J. Chem. Phys. 115, 6716.
       doi:10.1063/1.1404988
    .. [2] Yates, D. E., Levine, S. & Healy, T. W. (1974). J. Chem. Soc.,
       Faraday Trans. 1, 70, 1807. doi:10.1039/F19747001807

    Examples
    --------
    >>> from ekexplore import Electrolyte
    >>> wall = Surface.silica().isolated(Electrolyte.salt("KCl", 1.0), pH=7.0)
    >>> f"{float(wall.zeta) * 1e3:.1f} mV, {float(wall.charge_density) * 1e3:.2f} mC/m^2"
    '-90.3 mV, -10.42 mC/m^2'
    """

    def __init__(self, sites, stern_capacitance, name="user-defined surface"):
        if isinstance(sites, Site):
            sites = (sites,)
        sites = tuple(sites)
        if len(sites) == 0:
            raise ValueError("sites: a surface needs at least one kind of site (got none); "
                             "give Site(pK, density) objects")
        for s in sites:
            if not isinstance(s, Site):
                raise ValueError(f"sites: expected Site objects, got {s!r}")
        self._sites = sites
        self._C = check_range("stern_capacitance", stern_capacitance, 0.0,
                              STERN_CAPACITANCE_MAX, unit="F/m^2", lo_open=True)
        self._name = str(name)

    # -- presets ---------------------------------------------------------------
    @classmethod
    def silica(cls, pK=7.5, site_density=8e18, stern_capacitance=2.9):
        """Silica and glass: one-pK silanol sites, the basic Stern model of Behrens & Grier.

        Parameters
        ----------
        pK : array_like, optional
            pK of SiOH = SiO⁻ + H⁺ [-]. Default 7.5.
        site_density : array_like, optional
            Silanol sites per area [1/m²]. Default 8e18 (8 per nm²).
        stern_capacitance : array_like, optional
            [F/m²]. Default 2.9.

        Notes
        -----
        Defaults from Behrens & Grier (2001), who took the site density of
        fully hydroxylated silica and fitted pK and C to titration data of
        silica in monovalent salt. Protonation to SiOH₂⁺ (pK about -2) is left
        out, as they do: it matters only below pH 3. Hence near pH 2 the
        charged plane barely follows the pH (under 1 mV/pH), where SiO₂ gates
        were measured at about 20 mV/pH (Chen et al. 2011, Nano Lett. 11,
        2334, doi:10.1021/nl200623n); from pH 5 to 10 the model's slope rises
        from 10-27 to 43-47 mV/pH (1-100 mM KCl) against their "> 45 mV/pH".

        References
        ----------
        .. [1] Behrens, S. H. & Grier, D. G. (2001). The charge of glass and
           silica surfaces. J. Chem. Phys. 115, 6716. doi:10.1063/1.1404988

        Examples
        --------
        >>> Surface.silica().sites[0].charges
        (0, -1)
        """
        pK = as_float_array("pK", pK)   # an array here is one pK per point, never a list of pKs
        return cls(Site(pK, site_density, charge=0, name="silanol"), stern_capacitance,
                   name="silica")

    @classmethod
    def amphoteric(cls, pK_plus, pK_minus, site_density, stern_capacitance,
                   name="amphoteric oxide"):
        """Two-pK amphoteric sites MOH₂⁺ = MOH + H⁺ (pK_plus), MOH = MO⁻ + H⁺ (pK_minus).

        Parameters
        ----------
        pK_plus, pK_minus : array_like
            The two pK values [-], -10 to 25. The point of zero charge is
            their mean.
        site_density : array_like
            Sites per area [1/m²].
        stern_capacitance : array_like
            [F/m²].
        name : str, optional

        References
        ----------
        .. [1] Yates, D. E., Levine, S. & Healy, T. W. (1974). J. Chem. Soc.,
           Faraday Trans. 1, 70, 1807. doi:10.1039/F19747001807

        Examples
        --------
        >>> s = Surface.amphoteric(6.0, 10.0, 8e18, 1.0)
        >>> float(s.point_of_zero_charge)
        8.0
        """
        pKs = (as_float_array("pK_plus", pK_plus), as_float_array("pK_minus", pK_minus))
        return cls(Site(pKs, site_density, charge=1, name="amphoteric"),
                   stern_capacitance, name=name)

    @classmethod
    def alumina(cls, stern_capacitance):
        """Aluminium oxide: amphoteric sites with pK 6 and 10, 8 sites per nm².

        Parameters
        ----------
        stern_capacitance : array_like
            [F/m²]; required, as the source of the site parameters gives no
            single value for the Stern layer.

        Notes
        -----
        Site parameters from van Hal, Eijkel & Bergveld (1996), their table of
        oxide parameters (pK₊ = 6, pK₋ = 10, N_s = 8e18 1/m²; from memory: the
        table could not be reread here). Point of zero charge 8. No published
        Stern capacitance for these sites was found; the screens start from
        0.8 F/m², an example value from no source.

        Against measurement: atomic-layer-deposited alumina gates gave a
        near-Nernstian 57.8 ± 1.2 mV/pH over pH 2-10 at 22 °C [2]_. The
        surface potential of this preset changes by 42-55 mV/pH there (mean
        47-51 mV/pH with C = 0.8 F/m², 1-100 mM KCl): about 15 % below the
        measurement, and the gap widens for larger C. [2]_ fitted their data
        with a pK difference of about 1.5 instead of 4; treat the preset's ψ₀
        and ζ as estimates.

        References
        ----------
        .. [1] van Hal, R. E. G., Eijkel, J. C. T. & Bergveld, P. (1996). Adv.
           Colloid Interface Sci. 69, 31. doi:10.1016/S0001-8686(96)00307-7
        .. [2] Chen, S., Bomer, J. G., Carlen, E. T. & van den Berg, A. (2011;
           authors from memory). Al2O3/silicon nanoISFET with near ideal
           nernstian response. Nano Lett. 11, 2334. doi:10.1021/nl200623n

        Examples
        --------
        >>> float(Surface.alumina(1.0).point_of_zero_charge)
        8.0
        """
        return cls.amphoteric(6.0, 10.0, 8e18, stern_capacitance, name="alumina")

    @classmethod
    def tantalum_pentoxide(cls, stern_capacitance):
        """Tantalum pentoxide: amphoteric sites with pK 2 and 4, 10 sites per nm².

        Parameters
        ----------
        stern_capacitance : array_like
            [F/m²]; required (see :meth:`alumina`).

        Notes
        -----
        Site parameters from van Hal, Eijkel & Bergveld (1996), their table of
        oxide parameters (pK₊ = 2, pK₋ = 4, N_s = 1e19 1/m²; from memory: the
        table could not be reread here). Point of zero charge 3. No published
        Stern capacitance for these sites was found; the screens start from
        0.8 F/m², an example value from no source.

        Against published behaviour: Ta₂O₅ gates are close to Nernstian and
        their sensitivity hardly depends on the salt [2]_. This preset's
        surface potential changes by 90-99 % of kT ln10/e per pH over pH 2-10
        for C = 0.2-2.9 F/m², within 5 % between 1 and 100 mM KCl (tested).

        References
        ----------
        .. [1] van Hal, R. E. G., Eijkel, J. C. T. & Bergveld, P. (1996). Adv.
           Colloid Interface Sci. 69, 31. doi:10.1016/S0001-8686(96)00307-7
        .. [2] van Hal, R. E. G., Eijkel, J. C. T. & Bergveld, P. (1995). A
           novel description of ISFET sensitivity with the buffer capacity and
           double-layer capacitance as key parameters. Sens. Actuators B
           24-25, 201. doi:10.1016/0925-4005(95)85043-0

        Examples
        --------
        >>> float(Surface.tantalum_pentoxide(1.0).point_of_zero_charge)
        3.0
        """
        return cls.amphoteric(2.0, 4.0, 1e19, stern_capacitance, name="tantalum pentoxide")

    # -- properties --------------------------------------------------------------
    @property
    def sites(self):
        """The kinds of site (tuple of :class:`Site`)."""
        return self._sites

    @property
    def stern_capacitance(self):
        """Stern-layer capacitance [F/m²]."""
        return self._C

    @property
    def name(self):
        """Label of the material."""
        return self._name

    @property
    def shape(self):
        """Broadcast shape of the surface parameters."""
        return np.broadcast_shapes(self._C.shape, *(s.shape for s in self._sites))

    @property
    def total_site_density(self):
        """Sites of all kinds per area [1/m²]."""
        return sum(s.density for s in self._sites)

    @property
    def charge_bounds(self):
        """(most negative, most positive) charge the sites can carry [C/m²]."""
        lo = sum(constants.e * s.density * min(s.charges) for s in self._sites)
        hi = sum(constants.e * s.density * max(s.charges) for s in self._sites)
        return lo, hi

    @property
    def point_of_zero_charge(self):
        """Bulk pH at which the sites carry no net charge [-] (NaN if none in 0-14).

        Found by bisection on the site charge at zero potential (it falls
        monotonically with pH).
        """
        lo = np.zeros(self.shape)
        hi = np.full(self.shape, 14.0)
        f_lo = self._site_terms(0.0, lo)[0]
        f_hi = self._site_terms(0.0, hi)[0]
        for _ in range(80):
            mid = 0.5 * (lo + hi)
            above = self._site_terms(0.0, mid)[0] > 0
            lo = np.where(above, mid, lo)
            hi = np.where(above, hi, mid)
        pzc = 0.5 * (lo + hi)
        return np.where((f_lo > 0) & (f_hi < 0), pzc, np.nan)

    def _pack(self, pH):
        """The surface and the pH as rows of one array (P, *shape) [SI]: the
        value of a regulated :class:`ekexplore.Wall` (see :class:`RegulatedCharge`).

        Rows: pH, C [F/m²], then per site: charge of the most protonated
        state, number of pK values, 4 pK values (unused ones 0), density [1/m²].
        """
        pH = check_range("pH", pH, *PH_RANGE)
        shape = np.broadcast_shapes(pH.shape, self.shape)
        rows = [pH, self._C]
        for s in self._sites:
            pks = list(s.pK) + [0.0] * (_MAX_PK - len(s.pK))
            rows += [float(s.charge), float(len(s.pK))] + pks + [s.density]
        return np.stack([np.broadcast_to(np.asarray(r, dtype=float), shape) for r in rows])

    @staticmethod
    def _unpack(rows, first):
        """(Surface with unit capacitance, pH) from packed rows; site rows start at ``first``."""
        sites = []
        for j in range(first, rows.shape[0], 3 + _MAX_PK):
            q = int(np.round(rows[j].flat[0])) if rows[j].size else 0
            npk = int(np.round(rows[j + 1].flat[0])) if rows[j].size else 1
            sites.append(Site(tuple(rows[j + 2 + i] for i in range(npk)),
                              rows[j + 2 + _MAX_PK], charge=q))
        return Surface(sites, 1.0), rows[0]

    def _flat(self, shape):
        """A copy whose parameters are broadcast to ``shape`` and raveled: one
        value per point of a flat batch (for the batched solvers)."""
        def f(a):
            return np.broadcast_to(a, shape).reshape(-1)
        sites = tuple(Site(tuple(f(p) for p in s.pK), f(s.density), s.charge, s.name)
                      for s in self._sites)
        return Surface(sites, f(self._C), self._name)

    def _take(self, idx):
        """A copy of a flat surface (see :meth:`_flat`) at the batch indices ``idx``."""
        sites = tuple(Site(tuple(p[idx] for p in s.pK), s.density[idx], s.charge, s.name)
                      for s in self._sites)
        return Surface(sites, self._C[idx], self._name)

    # -- the site charge ---------------------------------------------------------
    def _site_terms(self, phi0, pH):
        """(sigma0 [C/m^2], d sigma0/d phi0 [C/m^2], F0 = int sigma0 dphi0 [C/m^2],
        charged fraction) at scaled potential phi0 = e psi0/kT."""
        sigma = dsig = free = 0.0
        charged = 0.0
        for s in self._sites:
            mean_q, var, logz, ch = s._states(phi0, pH)
            sigma = sigma + constants.e * s.density * mean_q
            # d<q>/dphi0 = -var(k): higher potential releases more protons
            dsig = dsig - constants.e * s.density * var
            # antiderivative in phi0: e Gamma (q phi0 - ln Z) with ln Z relative
            # to the most protonated state
            free = free + constants.e * s.density * (s.charge * phi0 - logz)
            charged = charged + s.density * ch
        return sigma, dsig, free, charged / self.total_site_density

    def _check_inputs(self, surface_potential, pH, temperature):
        psi0 = as_float_array("surface_potential", surface_potential, unit="V")
        pH = check_range("pH", pH, *PH_RANGE)
        T = check_temperature(temperature)
        return psi0, pH, T

    def site_charge(self, surface_potential, pH, temperature=T_REF):
        r"""Charge of the sites per area at a potential of the charged plane [C/m²].

        .. math:: \sigma_0 = e\sum_j\Gamma_j\langle q_j\rangle,\qquad
                  p_{j,k}\propto\exp\Big(\ln 10\sum_{i\le k}(\mathrm{pH}-pK_{j,i})
                  + k\,\frac{e\psi_0}{kT}\Big)

        Parameters
        ----------
        surface_potential : array_like
            Potential psi_0 of the charged plane against the bulk [V].
        pH : array_like
            Bulk pH [-], 0-14.
        temperature : array_like, optional
            [K], 273.15-373.15. Default 298.15.

        Returns
        -------
        ndarray
            sigma_0 [C/m²], broadcast over all inputs and the surface parameters.

        Examples
        --------
        >>> s = Surface.silica()
        >>> f"{float(s.site_charge(0.0, 7.5)) * 1e3:.1f} mC/m^2"   # half dissociated
        '-640.9 mC/m^2'
        """
        psi0, pH, T = self._check_inputs(surface_potential, pH, temperature)
        return self._site_terms(psi0 / _thermal_voltage(T), pH)[0]

    def site_charge_derivative(self, surface_potential, pH, temperature=T_REF):
        r"""Derivative of the site charge with the potential of the charged plane [F/m²].

        .. math:: \frac{d\sigma_0}{d\psi_0} = -\frac{e^2}{kT}\sum_j
                  \Gamma_j\,\mathrm{Var}_j(k) \le 0

        (k the number of released protons): the chemical capacitance of the
        sites, with a minus sign. Same parameters as :meth:`site_charge`.

        Examples
        --------
        >>> s = Surface.silica()
        >>> f"{float(s.site_charge_derivative(0.0, 7.5)):.1f} F/m^2"
        '-12.4 F/m^2'
        """
        psi0, pH, T = self._check_inputs(surface_potential, pH, temperature)
        VT = _thermal_voltage(T)
        return self._site_terms(psi0 / VT, pH)[1] / VT

    def charged_fraction(self, surface_potential, pH, temperature=T_REF):
        """Fraction of all sites in a charged state [-] (see :meth:`site_charge`).

        Examples
        --------
        >>> f"{float(Surface.silica().charged_fraction(0.0, 7.5)):.2f}"
        '0.50'
        """
        psi0, pH, T = self._check_inputs(surface_potential, pH, temperature)
        return self._site_terms(psi0 / _thermal_voltage(T), pH)[3]

    # -- the charge seen from the diffuse layer -----------------------------------
    def _diffuse_terms(self, phi_d, pH, c_s):
        """The wall charge as a function of the diffuse-layer potential.

        Scaled: ``phi_d`` = e psi_d/kT, ``c_s`` = C e/kT... in any consistent
        unit where sigma_0 / c_s is a scaled potential (c_s = C kT/e with the
        charge in C/m^2). Solves phi_0 - sigma_0(phi_0)/c_s = phi_d (the left
        side rises with phi_0 with slope >= 1) by bisection in the bracket
        phi_d + [lo, hi]/c_s and two Newton steps.

        Returns (sigma [C/m^2], d sigma/d phi_d [C/m^2], antiderivative
        int sigma dphi_d [C/m^2], phi_0, charged fraction). The derivative is
        s'/(1 - s'/c_s) with s' = d sigma_0/d phi_0 <= 0, and the
        antiderivative F_0(phi_0) - sigma^2/(2 c_s), F_0 that of the sites.
        """
        lo_q, hi_q = self.charge_bounds
        lo = phi_d + lo_q / c_s
        hi = phi_d + hi_q / c_s
        lo, hi = np.broadcast_arrays(lo, hi)
        lo, hi = lo.copy(), hi.copy()
        for _ in range(64):
            mid = 0.5 * (lo + hi)
            up = mid - self._site_terms(mid, pH)[0] / c_s > phi_d
            hi = np.where(up, mid, hi)
            lo = np.where(up, lo, mid)
        phi0 = 0.5 * (lo + hi)
        for _ in range(2):
            sig, dsig = self._site_terms(phi0, pH)[:2]
            phi0 = phi0 - (phi0 - sig / c_s - phi_d) / (1.0 - dsig / c_s)
        sig, dsig, free, frac = self._site_terms(phi0, pH)
        return sig, dsig / (1.0 - dsig / c_s), free - sig**2 / (2.0 * c_s), phi0, frac

    def wall_charge(self, zeta, pH, temperature=T_REF):
        r"""Charge of the wall [C/m²] when its diffuse layer starts at potential ``zeta``.

        The wall condition of the regulated double layer, for any solver: the
        sites at the charged plane, :math:`\psi_0 = \zeta + \sigma/C`, carry

        .. math:: \sigma = \sigma_0(\psi_0), \qquad
                  rac{d\sigma}{d\zeta} = rac{\sigma_0'}{1 - \sigma_0'/C} \le 0

        (:meth:`site_charge`). A solver of the Poisson–Boltzmann equation
        imposes :math:`arepsilon\,\partial\psi/\partial n = \sigma(\psi)` on
        the wall, a nonlinear condition whose slope is
        :meth:`wall_charge_derivative`.

        Parameters
        ----------
        zeta : array_like
            Potential at the start of the diffuse layer [V].
        pH : array_like
            Bulk pH [-], 0-14.
        temperature : array_like, optional
            [K]. Default 298.15.

        Returns
        -------
        ndarray
            [C/m²].

        Examples
        --------
        >>> from ekexplore import Electrolyte
        >>> s = Surface.silica()
        >>> w = s.isolated(Electrolyte.salt("KCl", 1.0), pH=7.0)
        >>> f"{float(s.wall_charge(w.zeta, 7.0) / w.charge_density):.12f}"
        '1.000000000000'
        """
        zeta = as_float_array("zeta", zeta, unit="V")
        pH = check_range("pH", pH, *PH_RANGE)
        VT = _thermal_voltage(check_temperature(temperature))
        return self._diffuse_terms(zeta / VT, pH, self._C * VT)[0]

    def wall_charge_derivative(self, zeta, pH, temperature=T_REF):
        """Slope of :meth:`wall_charge` with ``zeta`` [F/m²], never positive.

        Examples
        --------
        >>> s = Surface.silica()
        >>> bool(s.wall_charge_derivative(-0.05, 7.0) < 0)
        True
        """
        zeta = as_float_array("zeta", zeta, unit="V")
        pH = check_range("pH", pH, *PH_RANGE)
        VT = _thermal_voltage(check_temperature(temperature))
        return self._diffuse_terms(zeta / VT, pH, self._C * VT)[1] / VT

    # -- the isolated wall -------------------------------------------------------
    def isolated(self, electrolyte, pH=None):
        r"""The regulated charge of a flat wall facing a semi-infinite electrolyte.

        Solves, for the diffuse-layer potential :math:`\psi_d` (= ζ),

        .. math:: \sigma_G(\psi_d) = \sigma_0\!\left(\psi_d + \sigma_G(\psi_d)/C\right)

        with Grahame's :math:`\sigma_G` for the electrolyte's ion mixture
        (:func:`ekexplore.wall.grahame_charge`) and the site charge
        :math:`\sigma_0` (:meth:`site_charge`). The left side rises and the
        right side falls with :math:`\psi_d`, so the root is unique; it is
        found by bisection to 1e-17 V.

        Parameters
        ----------
        electrolyte : Electrolyte
            Any ion mixture; its temperature is used.
        pH : array_like, optional
            Bulk pH [-], 0-14. Default: the electrolyte's own ``pH`` where it
            has one; otherwise required.

        Returns
        -------
        IsolatedWall
            zeta [V], charge_density [C/m²], surface_potential [V],
            charged_fraction [-], broadcast over the electrolyte, the pH and
            the surface parameters.

        Raises
        ------
        ValueError
            If no pH is given, or if the balance needs |zeta| > 0.6 V.

        Notes
        -----
        Valid where the double layer is thin against the wall's size and
        curvature (the thin-layer model). The diffuse layer holds only the
        electrolyte's ions: at micromolar salt, include H⁺ and OH⁻ in the
        electrolyte so that they screen too.

        References
        ----------
        .. [1] Behrens, S. H. & Grier, D. G. (2001). J. Chem. Phys. 115, 6716.
           doi:10.1063/1.1404988

        Examples
        --------
        >>> from ekexplore import Electrolyte
        >>> w = Surface.silica().isolated(Electrolyte.salt("KCl", [0.1, 100.0]), pH=7.0)
        >>> [f"{z * 1e3:.1f}" for z in w.zeta]
        ['-111.0', '-46.5']
        """
        if pH is None:
            pH = getattr(electrolyte, "pH", None)
            if pH is None:
                raise ValueError("pH: give the bulk pH [0, 14] (this electrolyte has none)")
        pH = check_range("pH", pH, *PH_RANGE)
        T = electrolyte.temperature
        VT = _thermal_voltage(T)
        shape = np.broadcast_shapes(pH.shape, np.shape(T), self.shape)
        lo = np.full(shape, -ZETA_MAX)
        hi = np.full(shape, ZETA_MAX)
        C = self._C

        def balance(psi_d):
            sig_d = grahame_charge(electrolyte, psi_d)
            sig_0 = self._site_terms((psi_d + sig_d / C) / VT, pH)[0]
            return sig_0 - sig_d

        f_lo, f_hi = balance(lo), balance(hi)
        bad = (f_lo < 0) | (f_hi > 0)
        if np.any(bad):
            k = int(np.flatnonzero(bad.ravel())[0])
            raise ValueError(
                f"the charge of this surface needs |zeta| > {ZETA_MAX:g} V in this "
                f"electrolyte at point {k} (pH {np.broadcast_to(pH, shape).ravel()[k]:g}; "
                "beyond the model range); raise the salt concentration")
        # bisection: 1.2 V / 2^70 < 1e-18 V
        for _ in range(70):
            mid = 0.5 * (lo + hi)
            up = balance(mid) > 0
            lo = np.where(up, mid, lo)
            hi = np.where(up, hi, mid)
        zeta = 0.5 * (lo + hi)
        sigma = grahame_charge(electrolyte, zeta)
        psi0 = zeta + sigma / C
        frac = self._site_terms(psi0 / VT, pH)[3]
        shape = np.broadcast_shapes(zeta.shape, np.shape(sigma))
        return IsolatedWall(zeta=np.broadcast_to(zeta, shape), charge_density=sigma,
                            surface_potential=np.broadcast_to(psi0, shape),
                            charged_fraction=np.broadcast_to(frac, shape))

    def __repr__(self):
        C = self._C if self._C.ndim else float(self._C)
        return f"Surface({list(self._sites)!r}, stern_capacitance={C!r}, name={self._name!r})"


# --------------------------------------------------------------------------
# the regulated wall as a wall condition of every model and shape
# --------------------------------------------------------------------------
class RegulatedCharge(WallCondition):
    r"""A wall whose charge follows the chemistry: a nonlinear charge condition.

    The wall charge is that of the sites behind the Stern layer,
    :math:`\sigma(\zeta)` of :meth:`Surface.wall_charge`, at the potential
    ζ where the diffuse layer starts; the solvers impose
    :math:`\varepsilon\,\partial\psi/\partial n = \sigma(\psi_{wall})` and
    carry its slope in Newton's Jacobian (``nonlinear = True``).

    The value is the surface and the pH packed as rows (``Surface._pack``);
    in scaled units at reference length L the rows are pH, C kT/e, L/(eps kT/e),
    then the site rows, and the scaled charge is s = sigma L e/(eps kT).
    """

    name = "regulated"
    parameter = "surface"
    unit = ""
    dirichlet = False
    nonlinear = True
    #: the value has rows (P, ...) ahead of the point axes
    rows = True

    def scale(self, value, thermal_voltage, permittivity, length):
        value = np.asarray(value, dtype=float)
        return np.concatenate([value[:1], (value[1] * thermal_voltage)[None],
                               (length / (permittivity * thermal_voltage))[None], value[2:]])

    @staticmethod
    def _split(scaled_value):
        surf, pH = Surface._unpack(scaled_value, 3)
        return surf, pH, scaled_value[1], scaled_value[2]

    def _terms(self, scaled_value, phi_w):
        # solvers ask for the charge and then its slope at the same point: keep
        # the last evaluation (the inner solve for the charged plane is the cost)
        key = getattr(self, "_last", None)
        phi_w = np.asarray(phi_w, dtype=float)
        if (key is not None and key[0] is scaled_value and key[1].shape == phi_w.shape
                and np.array_equal(key[1], phi_w)):
            return key[2]
        surf, pH, c_s, to_scaled = self._split(scaled_value)
        sig, dsig, free, phi0, frac = surf._diffuse_terms(phi_w, pH, c_s)
        out = (sig * to_scaled, dsig * to_scaled, free * to_scaled, phi0, frac)
        self._last = (scaled_value, phi_w.copy(), out)
        return out

    def charge(self, scaled_value, phi_w):
        return self._terms(scaled_value, phi_w)[0]

    def charge_slope(self, scaled_value, phi_w):
        return self._terms(scaled_value, phi_w)[1]

    def charge_energy(self, scaled_value, phi_w):
        """int s dphi_w up to a constant of the point (enough for the descent)."""
        return self._terms(scaled_value, phi_w)[2]

    def charge_density(self, scaled_value, phi_w):
        """The wall charge [C/m²] at scaled potential ``phi_w``."""
        return self._terms(scaled_value, phi_w)[0] / scaled_value[2]

    def surface_state(self, scaled_value, phi_w):
        """(potential of the charged plane, scaled, and the charged fraction) at ``phi_w``."""
        return self._terms(scaled_value, phi_w)[3:]

    def _balance(self, scaled_value, diffuse, lim):
        """phi_w where the sites carry the charge ``diffuse(phi_w)`` (scaled) of
        the double layer: bisection on the decreasing
        s_sites(phi_w + q/c_s) - q, q = diffuse(phi_w)."""
        surf, pH, c_s, to_scaled = self._split(scaled_value)
        cs = c_s * to_scaled
        lo = np.broadcast_to(-lim, np.shape(pH)).astype(float)
        hi = -lo

        def f(phi):
            q = diffuse(phi)
            return surf._site_terms(phi + q / cs, pH)[0] * to_scaled - q

        for _ in range(64):
            mid = 0.5 * (lo + hi)
            up = f(mid) > 0
            lo = np.where(up, mid, lo)
            hi = np.where(up, hi, mid)
        return 0.5 * (lo + hi)

    def isolated_potential(self, z, weights, K, scaled_value, lim=40.0):
        """Scaled zeta of the regulated isolated wall (thin model), with the
        scaled Grahame charge of :func:`ekexplore.wall.isolated_wall_charge`."""
        from .wall import isolated_wall_charge
        zc = np.asarray(z, dtype=float)[:, None]
        return self._balance(scaled_value, lambda p: K * isolated_wall_charge(zc, weights, p),
                             lim / np.max(np.abs(z)))

    def linear_potential(self, slope, scaled_value, lim=40.0):
        """Scaled zeta where the sites balance a linear layer s = slope phi_w (dh model)."""
        return self._balance(scaled_value, lambda p: slope * p, lim)


WALL_CONDITIONS[RegulatedCharge.name] = RegulatedCharge()
