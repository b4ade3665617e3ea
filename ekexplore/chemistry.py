r"""Acid–base chemistry of aqueous recipes: water's ionisation, weak acids and
bases with pK(T), Davies activities, CO₂ from air, and the speciation solver.

Conventions: the equilibrium constants are thermodynamic (ionic strength 0,
molality basis, standard state 1 mol/kg). Recipes are given in mol/m³
(= mM) and converted with the density of water, :math:`m = c/\rho_w`
(the solute volume is neglected: below 0.3 % at 0.1 mol/kg). The pH is
:math:`-\log_{10} a_{H^+}` with :math:`a_{H^+} = \gamma_{H^+} m_{H^+}` and
Davies activity coefficients.

In the double layer every species follows its own Boltzmann law with the
same bulk reference, so for ideal species the acid–base equilibria hold at
every point by themselves (:math:`c_j \propto e^{-z_j e\psi/kT}` and the
charge of each reaction is balanced by its proton): the transport solvers
need no chemistry, only the bulk species.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np
from scipy import constants

from ._constants import R
from ._validate import check_nonnegative, check_range
from .medium import check_temperature, water_density, water_relative_permittivity

__all__ = ["AcidBase", "ACIDS", "SUBSTANCES", "BUFFERS", "RECIPES", "pKw", "pK_at",
           "davies_log_gamma", "debye_huckel_A", "co2_henry", "speciate",
           "T_PK_MIN", "T_PK_MAX", "CO2_AIR_PA"]

LN10 = np.log(10.0)
THETA = constants.zero_Celsius + 25.0
#: Temperature range of the pK(T) equations [K] (Goldberg et al. 2002 state
#: about 274-350 K; 0 degC is 1 K beyond, accepted).
T_PK_MIN = constants.zero_Celsius
T_PK_MAX = 350.0
#: Partial pressure of CO2 in air [Pa]: 420 ppm of 101325 Pa (NOAA global mean
#: of 2023 about 419 ppm; from memory).
CO2_AIR_PA = 420e-6 * 101325.0


def check_pk_temperature(temperature):
    """Temperature [K] within the range of the pK(T) equations."""
    check_temperature(temperature)
    return check_range("temperature", temperature, T_PK_MIN, T_PK_MAX, unit="K",
                       hint="the pK(T) equations of the buffer data (Goldberg et al. "
                            "2002) hold from about 274 to 350 K")


# -- water ------------------------------------------------------------------------

def pKw(temperature):
    r"""Ionisation constant of water, :math:`pK_w = -\log_{10}(a_{H^+} a_{OH^-})`
    (Bandura & Lvov 2006), at 0.1 MPa.

    .. math:: pK_w = -2n\Bigl[\log_{10}(1+Q) - \frac{Q}{Q+1}\,\rho\,(\beta_0 +
              \beta_1 T^{-1} + \beta_2\rho)\Bigr] + pK_w^G + 2\log_{10}(M_w/1000)

    with :math:`Q = \rho\exp(\alpha_0 + \alpha_1 T^{-1} + \alpha_2 T^{-2}\rho^{2/3})`,
    ρ in g/cm³ (Kell density at 1 atm) and :math:`pK_w^G` the ideal-gas term.

    Parameters
    ----------
    temperature : array_like
        Temperature [K], 273.15-373.15.

    Returns
    -------
    ndarray
        :math:`pK_w` [-] (molality basis).

    Notes
    -----
    The formulation holds from 0 to 1000 °C and 0.1 to 1000 MPa; here only
    liquid water at 0.1 MPa. Its coefficients are quoted from memory; the
    tests check it against the values tabulated by Bandura & Lvov and the
    older Harned & Owen data.

    References
    ----------
    .. [1] Bandura, A. V.; Lvov, S. N. (2006). The ionization constant of water
       over wide ranges of temperature and density. J. Phys. Chem. Ref. Data
       35, 15. doi:10.1063/1.1928231

    Examples
    --------
    >>> f"{float(pKw(298.15)):.3f}"
    '13.995'
    """
    T = check_temperature(temperature)
    rho = water_density(T) / 1000.0
    n = 6
    a0, a1, a2 = -0.864671, 8659.19, -22786.2
    b0, b1, b2 = 0.642044, -56.8534, -0.375754
    Q = rho * np.exp(a0 + a1 / T + a2 / T**2 * rho ** (2.0 / 3.0))
    pKG = 0.61415 + 48251.33 / T - 67707.93 / T**2 + 10102100.0 / T**3
    return (-2 * n * (np.log10(1 + Q) - Q / (Q + 1) * rho * (b0 + b1 / T + b2 * rho))
            + pKG + 2 * np.log10(18.015268 / 1000.0))


# -- activities -------------------------------------------------------------------

def debye_huckel_A(temperature):
    r"""Debye–Hückel constant A [kg^½ mol^-½] (log10 basis) of water.

    .. math:: A = \frac{e^3 (2 N_A \rho_w)^{1/2}}{\ln 10\;8\pi\,(\varepsilon_0\varepsilon_r k T)^{3/2}}

    Examples
    --------
    >>> f"{float(debye_huckel_A(298.15)):.4f}"
    '0.5108'
    """
    T = check_temperature(temperature)
    eps = water_relative_permittivity(T) * constants.epsilon_0
    rho = water_density(T)
    e = constants.e
    return (e**3 * np.sqrt(2 * constants.N_A * rho)
            / (LN10 * 8 * np.pi * (eps * constants.k * T) ** 1.5))


def davies_log_gamma(valence, ionic_strength, temperature):
    r"""Davies activity coefficient, :math:`\log_{10}\gamma`.

    .. math:: \log_{10}\gamma_i = -A z_i^2\Bigl(\frac{\sqrt I}{1+\sqrt I} - 0.3\,I\Bigr)

    Parameters
    ----------
    valence : array_like
        Charge number z [-].
    ionic_strength : array_like
        Ionic strength [mol/kg], 0 to about 0.5.
    temperature : array_like
        Temperature [K].

    Returns
    -------
    ndarray
        :math:`\log_{10}\gamma` [-].

    Notes
    -----
    Validity: good to a few percent in γ up to I ≈ 0.1 mol/kg and usable to
    about 0.5 mol/kg (Davies 1962); beyond that the pH is an estimate. A is
    computed from the permittivity and density of water at T.

    References
    ----------
    .. [1] Davies, C. W. (1962). *Ion Association*. Butterworths, London.

    Examples
    --------
    >>> f"{float(davies_log_gamma(1, 0.1, 298.15)):.4f}"
    '-0.1074'
    """
    sI = np.sqrt(np.asarray(ionic_strength, dtype=float))
    A = debye_huckel_A(temperature)
    return -A * np.asarray(valence, dtype=float) ** 2 * (sI / (1 + sI) - 0.3 * sI**2)


# -- weak acids and bases ---------------------------------------------------------

def pK_at(pK25, dH, dCp, temperature):
    r"""pK of an ionisation reaction at T from its values at 25 °C.

    .. math:: pK(T) = pK(\theta) + \frac{\Delta_rH^\circ}{R\ln 10}\Bigl(\frac1T -
              \frac1\theta\Bigr) - \frac{\Delta_rC_p^\circ}{R\ln 10}\Bigl(\frac\theta T
              - 1 + \ln\frac T\theta\Bigr), \qquad \theta = 298.15\ \mathrm K

    Parameters
    ----------
    pK25 : float
        pK at 25 °C, I = 0.
    dH : float
        :math:`\Delta_rH^\circ` [J/mol].
    dCp : float
        :math:`\Delta_rC_p^\circ` [J/(K mol)].
    temperature : array_like
        Temperature [K], 273.15-350.

    Returns
    -------
    ndarray
        pK [-].

    References
    ----------
    .. [1] Goldberg, R. N.; Kishore, N.; Lennen, R. M. (2002). Thermodynamic
       quantities for the ionization reactions of buffers. J. Phys. Chem. Ref.
       Data 31, 231, eq. (4). doi:10.1063/1.1416902

    Examples
    --------
    >>> f"{float(pK_at(8.072, 47450.0, -59.0, 310.15)):.3f}"
    '7.753'
    """
    T = np.asarray(temperature, dtype=float)
    return (pK25 + dH / (R * LN10) * (1.0 / T - 1.0 / THETA)
            - dCp / (R * LN10) * (THETA / T - 1.0 + np.log(T / THETA)))


@dataclass(frozen=True)
class AcidBase:
    r"""A weak acid/base system: its protonation states and their ionisation.

    Parameters
    ----------
    name : str
        Name of the system, e.g. ``"phosphate"``.
    species : tuple of str
        Species from the most protonated to the least, one more than the
        number of reactions.
    top_charge : int
        Charge number of the most protonated species; each reaction removes
        one proton (charge -1).
    pK : tuple of float
        pK of each ionisation at 25 °C, I = 0, ascending.
    dH : tuple of float
        :math:`\Delta_rH^\circ` of each reaction [J/mol].
    dCp : tuple of float
        :math:`\Delta_rC_p^\circ` of each reaction [J/(K mol)].
    conductivity : tuple
        Limiting molar conductivity of each species at 25 °C per mole
        [S cm²/mol] (None for neutral species).
    source : str
        Where the numbers come from.
    pk_function : callable, optional
        ``f(T) -> list of pK arrays`` replacing the pK(T) equation (used for
        carbonic acid).

    Notes
    -----
    A user-defined system is built the same way, e.g.
    ``AcidBase("myacid", ("HA", "A-"), 0, (4.2,), (0.0,), (0.0,), (None, 35.0))``
    (with zero ΔrH° and ΔrCp° the pK is taken as independent of T).

    Examples
    --------
    >>> ACIDS["Tris"].species
    ('TrisH+', 'Tris')
    """

    name: str
    species: tuple
    top_charge: int
    pK: tuple
    dH: tuple
    dCp: tuple
    conductivity: tuple
    source: str = ""
    pk_function: object = field(default=None, compare=False, repr=False)

    def __post_init__(self):
        n = len(self.pK)
        if n < 1:
            raise ValueError(f"pK of acid {self.name!r}: give at least one ionisation")
        for label, v in (("species", self.species), ("conductivity", self.conductivity)):
            if len(v) != n + 1:
                raise ValueError(f"{label} of acid {self.name!r}: need {n + 1} entries "
                                 f"(one per protonation state), got {len(v)}")
        for label, v in (("dH", self.dH), ("dCp", self.dCp)):
            if len(v) != n:
                raise ValueError(f"{label} of acid {self.name!r}: need {n} entries, got {len(v)}")
        for k, p in enumerate(self.pK):
            check_range(f"pK[{k}] of acid {self.name!r}", p, -2.0, 16.0)
        for z, lam in zip(self.charges, self.conductivity):
            if z != 0 and (lam is None or not 1.0 <= lam <= 1000.0):
                raise ValueError(f"conductivity of the charged species of acid {self.name!r}"
                                 f" = {lam!r}; give a limiting molar conductivity in "
                                 "[1, 1000] S cm^2/mol")

    @property
    def charges(self):
        """Charge number of each species."""
        return tuple(self.top_charge - j for j in range(len(self.species)))

    def pKs(self, temperature):
        """pK of each reaction at ``temperature`` [K] (list of arrays)."""
        T = np.asarray(temperature, dtype=float)
        if self.pk_function is not None:
            return self.pk_function(T)
        return [pK_at(p, h, c, T) for p, h, c in zip(self.pK, self.dH, self.dCp)]

    def useful_range(self, reaction=None):
        """pH range where the system buffers, pK ± 1 (common practice)."""
        ks = self.pK if reaction is None else (self.pK[reaction],)
        return min(ks) - 1.0, max(ks) + 1.0


_G = ("Goldberg, Kishore & Lennen 2002, J. Phys. Chem. Ref. Data 31, 231, "
      "doi:10.1063/1.1416902 (values from memory)")


def _carbonic_pks(T):
    """Carbonic acid pK1, pK2 (Plummer & Busenberg 1982, Geochim. Cosmochim.
    Acta 46, 1011, doi:10.1016/0016-7037(82)90056-4; coefficients from memory)."""
    lgT = np.log10(T)
    logK1 = -356.3094 - 0.06091964 * T + 21834.37 / T + 126.8339 * lgT - 1684915.0 / T**2
    logK2 = -107.8871 - 0.03252849 * T + 5151.79 / T + 38.92561 * lgT - 563713.9 / T**2
    return [-logK1, -logK2]


def co2_henry(temperature):
    r"""Henry constant of CO₂ in water, :math:`K_H = m_{CO_2(aq)}/p_{CO_2}`
    [mol/(kg·Pa)] (Plummer & Busenberg 1982).

    .. math:: \log_{10} K_H[\mathrm{mol\,kg^{-1}\,atm^{-1}}] = 108.3865 + 0.01985076\,T
              - 6919.53/T - 40.45154\log_{10}T + 669365/T^2

    Parameters
    ----------
    temperature : array_like
        Temperature [K], 273-363.

    References
    ----------
    .. [1] Plummer, L. N.; Busenberg, E. (1982). The solubilities of calcite,
       aragonite and vaterite in CO2-H2O solutions between 0 and 90 °C.
       Geochim. Cosmochim. Acta 46, 1011. doi:10.1016/0016-7037(82)90056-4
       (coefficients from memory; checked in the tests against the
       Weiss 1974 solubility).

    Examples
    --------
    >>> f"{float(co2_henry(298.15)) * 101325:.4f} mol/(kg atm)"
    '0.0340 mol/(kg atm)'
    """
    T = np.asarray(temperature, dtype=float)
    lg = 108.3865 + 0.01985076 * T - 6919.53 / T - 40.45154 * np.log10(T) + 669365.0 / T**2
    return 10.0**lg / 101325.0


#: Acid–base systems. pK, ΔrH° [J/mol], ΔrCp° [J/(K mol)] at 25 °C, I = 0.
#: Limiting molar conductivities per mole of the charged species [S cm²/mol].
ACIDS = MappingProxyType({a.name: a for a in (
    AcidBase("acetate", ("CH3COOH", "CH3COO-"), 0, (4.756,), (-410.0,), (-142.0,),
             (None, 40.9), _G + "; CH3COO- conductivity: CRC Handbook"),
    AcidBase("phosphate", ("H3PO4", "H2PO4-", "HPO4^2-", "PO4^3-"), 0,
             (2.148, 7.198, 12.35), (-8000.0, 3600.0, 16000.0), (-141.0, -230.0, -242.0),
             (None, 36.0, 114.0, 278.4),
             _G + "; conductivities: CRC Handbook (H2PO4- 36, 1/2 HPO4 57, 1/3 PO4 "
                  "92.8; from memory)"),
    AcidBase("borate", ("B(OH)3", "B(OH)4-"), 0, (9.237,), (13800.0,), (-240.0,),
             (None, 32.0),
             _G + "; B(OH)4- conductivity: about 32 S cm^2/mol from its electrophoretic "
                  "mobility (Hirokawa et al. 1983, J. Chromatogr. 252, 49; from memory, "
                  "+-10 %)"),
    AcidBase("carbonate", ("H2CO3", "HCO3-", "CO3^2-"), 0, (6.352, 10.329),
             (9150.0, 14700.0), (-371.0, -249.0), (None, 44.5, 138.6),
             "pK(T): Plummer & Busenberg 1982 (doi:10.1016/0016-7037(82)90056-4); "
             "H2CO3 stands for CO2(aq) + H2CO3; conductivities: CRC Handbook (HCO3- 44.5, "
             "1/2 CO3 69.3)", pk_function=_carbonic_pks),
    AcidBase("citrate", ("H3Cit", "H2Cit-", "HCit^2-", "Cit^3-"), 0,
             (3.128, 4.761, 6.396), (4070.0, 2230.0, -3380.0), (-131.0, -178.0, -254.0),
             (None, 23.4, 93.6, 210.6),
             _G + "; Cit3- conductivity: CRC Handbook (1/3 citrate 70.2, from memory); "
                  "the other forms estimated with the same diffusivity (same size, "
                  "Stokes-Einstein)"),
    AcidBase("Tris", ("TrisH+", "Tris"), 1, (8.072,), (47450.0,), (-59.0,), (28.5, None),
             _G + "; TrisH+ conductivity from its electrophoretic mobility 29.5e-9 "
                  "m^2/(V s) (Hirokawa et al. 1983; from memory)"),
    AcidBase("HEPES", ("HEPES", "HEPES-"), 0, (7.564,), (20400.0,), (47.0,), (None, 21.0),
             _G + "; HEPES- conductivity from its mobility 21.8e-9 m^2/(V s) "
                  "(Hirokawa et al. tables; from memory)"),
    AcidBase("MES", ("MES", "MES-"), 0, (6.270,), (14800.0,), (5.0,), (None, 25.9),
             _G + "; MES- conductivity from its mobility 26.8e-9 m^2/(V s) "
                  "(Hirokawa et al. tables; from memory)"),
    AcidBase("MOPS", ("MOPS", "MOPS-"), 0, (7.184,), (21100.0,), (25.0,), (None, 23.5),
             _G + "; MOPS- conductivity from its mobility 24.4e-9 m^2/(V s) "
                  "(Hirokawa et al. tables; from memory)"),
    AcidBase("glycine", ("H2Gly+", "HGly", "Gly-"), 1, (2.351, 9.780),
             (4000.0, 44200.0), (-139.0, -57.0), (36.1, None, 36.1),
             _G + "; Gly- conductivity from its mobility 37.4e-9 m^2/(V s) (from memory); "
                  "H2Gly+ estimated with the same diffusivity"),
    AcidBase("EDTA", ("H6EDTA^2+", "H5EDTA+", "H4EDTA", "H3EDTA-", "H2EDTA^2-",
                      "HEDTA^3-", "EDTA^4-"), 2,
             (0.0, 1.5, 2.00, 2.69, 6.28, 10.948),
             (1700.0, 2000.0, 1900.0, 2300.0, 19800.0, 23200.0),
             (0.0, 0.0, 0.0, 0.0, 0.0, 0.0),
             (31.2, 15.6, None, 15.6, 62.4, 140.4, 249.6),
             _G + " (pK and dH; dCp not used); conductivities estimated: all forms with "
                  "D = 0.6e-9 m^2/s, the size of citrate (Stokes-Einstein estimate)"),
    AcidBase("phthalate", ("H2Phth", "HPhth-", "Phth^2-"), 0, (2.950, 5.408),
             (2700.0, -2170.0), (0.0, -295.0), (None, 30.0, 105.0),
             _G + "; dCp of the first ionisation not known here, taken 0; "
                  "conductivities estimated (HPhth- 30, 1/2 Phth 52.5 S cm^2/mol, "
                  "from memory)"),
)})


def _s(strong=None, acids=None, note=""):
    return MappingProxyType({"strong": MappingProxyType(dict(strong or {})),
                             "acids": MappingProxyType(dict(acids or {})), "note": note})


#: Substances a recipe may name: strong ions released and acid systems added,
#: per mole of substance. Protons need no bookkeeping: charge balance with free
#: H+ fixes them, so any protonation state of the same system gives the same
#: solution once the counter-ions are counted.
SUBSTANCES = MappingProxyType({
    # strong acids, bases and salts
    "HCl": _s({"Cl-": 1}), "HNO3": _s({"NO3-": 1}), "H2SO4": _s({"SO4^2-": 1}),
    "NaOH": _s({"Na+": 1}), "KOH": _s({"K+": 1}), "LiOH": _s({"Li+": 1}),
    "KCl": _s({"K+": 1, "Cl-": 1}), "NaCl": _s({"Na+": 1, "Cl-": 1}),
    "LiCl": _s({"Li+": 1, "Cl-": 1}), "KNO3": _s({"K+": 1, "NO3-": 1}),
    "NaNO3": _s({"Na+": 1, "NO3-": 1}), "CaCl2": _s({"Ca2+": 1, "Cl-": 2}),
    "MgCl2": _s({"Mg2+": 1, "Cl-": 2}), "Na2SO4": _s({"Na+": 2, "SO4^2-": 1}),
    "K2SO4": _s({"K+": 2, "SO4^2-": 1}), "MgSO4": _s({"Mg2+": 1, "SO4^2-": 1}),
    # phosphate
    "H3PO4": _s(acids={"phosphate": 1}),
    "NaH2PO4": _s({"Na+": 1}, {"phosphate": 1}), "KH2PO4": _s({"K+": 1}, {"phosphate": 1}),
    "Na2HPO4": _s({"Na+": 2}, {"phosphate": 1}), "K2HPO4": _s({"K+": 2}, {"phosphate": 1}),
    "Na3PO4": _s({"Na+": 3}, {"phosphate": 1}), "K3PO4": _s({"K+": 3}, {"phosphate": 1}),
    # borate
    "H3BO3": _s(acids={"borate": 1}),
    "Na2B4O7": _s({"Na+": 2}, {"borate": 4}, "borax, Na2B4O7.10H2O (polyborates neglected)"),
    # carbonate
    "H2CO3": _s(acids={"carbonate": 1}, note="dissolved CO2"),
    "NaHCO3": _s({"Na+": 1}, {"carbonate": 1}), "KHCO3": _s({"K+": 1}, {"carbonate": 1}),
    "Na2CO3": _s({"Na+": 2}, {"carbonate": 1}), "K2CO3": _s({"K+": 2}, {"carbonate": 1}),
    # acetate, citrate
    "CH3COOH": _s(acids={"acetate": 1}), "CH3COONa": _s({"Na+": 1}, {"acetate": 1}),
    "CH3COOK": _s({"K+": 1}, {"acetate": 1}),
    "citric acid": _s(acids={"citrate": 1}),
    "Na3citrate": _s({"Na+": 3}, {"citrate": 1}),
    # Good's buffers and amines
    "Tris": _s(acids={"Tris": 1}), "Tris-HCl": _s({"Cl-": 1}, {"Tris": 1}),
    "HEPES": _s(acids={"HEPES": 1}), "HEPES-Na": _s({"Na+": 1}, {"HEPES": 1}),
    "MES": _s(acids={"MES": 1}), "MES-Na": _s({"Na+": 1}, {"MES": 1}),
    "MOPS": _s(acids={"MOPS": 1}), "MOPS-Na": _s({"Na+": 1}, {"MOPS": 1}),
    "glycine": _s(acids={"glycine": 1}),
    # EDTA: free acid H4EDTA and disodium salt Na2H2EDTA
    "EDTA": _s(acids={"EDTA": 1}), "Na2EDTA": _s({"Na+": 2}, {"EDTA": 1}),
    # potassium hydrogen phthalate
    "KHP": _s({"K+": 1}, {"phthalate": 1}, "potassium hydrogen phthalate"),
})

#: Buffers for :meth:`ekexplore.Electrolyte.buffer`: name -> (starting
#: substance, titrant, index of the buffering pK). Useful range pK ± 1.
BUFFERS = MappingProxyType({
    "phosphate": ("NaH2PO4", "NaOH", 1),
    "acetate": ("CH3COOH", "NaOH", 0),
    "citrate": ("citric acid", "NaOH", None),
    "borate": ("H3BO3", "NaOH", 0),
    "carbonate": ("NaHCO3", "NaOH", 1),
    "Tris": ("Tris", "HCl", 0),
    "HEPES": ("HEPES", "NaOH", 0),
    "MES": ("MES", "NaOH", 0),
    "MOPS": ("MOPS", "NaOH", 0),
    "glycine": ("glycine", "NaOH", 1),
})

#: Named recipes [mol/m³ per 1x] (common practice; Sambrook & Russell,
#: *Molecular Cloning*, 3rd ed., 2001, appendix 1; from memory).
#: TBE: the model gives pH 8.63 at 25 °C against about 8.3 for the mixed
#: buffer (common practice), a gap of about 0.3: Tris and borate form
#: borate esters (Tris is a 1,3-diol), which release protons, and no published
#: formation constant for that complex was found for this package, so it is
#: not a species here. Treat the TBE pH, and the borate and TrisH+ shares of
#: the current, as estimates good to about 0.3 pH.
RECIPES = MappingProxyType({
    "TBE": MappingProxyType({"Tris": 89.0, "H3BO3": 89.0, "Na2EDTA": 2.0}),
    "PBS": MappingProxyType({"NaCl": 137.0, "KCl": 2.7, "Na2HPO4": 10.0, "KH2PO4": 1.8}),
})

_ALIASES = {"boric acid": "H3BO3", "borax": "Na2B4O7", "acetic acid": "CH3COOH",
            "sodium acetate": "CH3COONa", "trizma": "Tris", "tris base": "Tris",
            "tris-hcl": "Tris-HCl", "citricacid": "citric acid", "co2": "H2CO3"}


def lookup_substance(name):
    """The :data:`SUBSTANCES` entry for ``name`` (case-insensitive, a few aliases)."""
    if name in SUBSTANCES:
        return name, SUBSTANCES[name]
    low = {k.lower(): k for k in SUBSTANCES}
    key = _ALIASES.get(name.lower(), low.get(name.lower()))
    if key is None:
        raise ValueError(f"recipe: unknown substance {name!r}; known substances are "
                         f"{', '.join(SUBSTANCES)}; named recipes {', '.join(RECIPES)}; "
                         "or pass acids={...} with your own AcidBase")
    return key, SUBSTANCES[key]


# -- speciation -------------------------------------------------------------------

def _fractions_log(pKs, charges, pH, log_gamma):
    """log10 of each species relative to the most protonated one, shape (k, *shape)."""
    # log c_j - log c_0 = sum_{i<=j} (pH - pK_i) + lg_0 - lg_j
    out = [np.zeros_like(pH)]
    acc = np.zeros_like(pH)
    for i, pk in enumerate(pKs):
        acc = acc + (pH - pk)
        out.append(acc)
    lg0 = log_gamma(charges[0])
    return np.stack([o + lg0 - log_gamma(z) for o, z in zip(out, charges)])


def speciate(strong, acids, totals, temperature, open_co2=None, fixed_pH=None,
             tol=1e-10, max_iter=60):
    r"""Solve charge balance and the acid–base equilibria of a recipe.

    Parameters
    ----------
    strong : dict
        Strong ion name -> (valence, molality [mol/kg] array).
    acids : list of AcidBase
        The acid systems present.
    totals : list of array_like
        Total molality of each system [mol/kg] (ignored for carbonate when
        ``open_co2`` is given).
    temperature : array_like
        Temperature [K].
    open_co2 : array_like, optional
        CO₂ partial pressure [Pa]: the carbonate system is open to that gas
        (its neutral form fixed by Henry's law) instead of a fixed total.
    fixed_pH : array_like, optional
        Impose the pH instead of solving for it; the charge balance residual
        is returned (used to titrate a buffer).

    Returns
    -------
    dict
        ``pH``, ``ionic_strength`` [mol/kg], ``species`` (name -> (valence,
        molality)), ``residual`` (net charge [mol/kg] at the pH; ~0 when solved).

    Notes
    -----
    Vectorised: the pH is found by bisection on arrays (46 halvings of
    [-2, 16]), inside a fixed-point iteration on the ionic strength for the
    Davies activity coefficients. Water's ionisation by :func:`pKw`.
    """
    T = np.asarray(temperature, dtype=float)
    shape = np.broadcast_shapes(T.shape, *(np.shape(m) for _, m in strong.values()),
                                *(np.shape(t) for t in totals),
                                np.shape(open_co2) if open_co2 is not None else (),
                                np.shape(fixed_pH) if fixed_pH is not None else ())
    T = np.broadcast_to(T, shape)
    kw = pKw(T)
    pks = [a.pKs(T) for a in acids]
    totals = [np.broadcast_to(np.asarray(t, dtype=float), shape) for t in totals]
    zs = np.array([z for z, _ in strong.values()], dtype=float)
    ms = [np.broadcast_to(np.asarray(m, dtype=float), shape) for _, m in strong.values()]
    strong_charge = sum((z * m for z, m in zip(zs, ms)), np.zeros(shape))
    strong_I = 0.5 * sum((z * z * m for z, m in zip(zs, ms)), np.zeros(shape))
    if open_co2 is not None:
        m_co2 = co2_henry(T) * np.broadcast_to(np.asarray(open_co2, dtype=float), shape)

    A = debye_huckel_A(T)

    def species_at(pH, I):
        sI = np.sqrt(I)
        base = -A * (sI / (1 + sI) - 0.3 * I)     # Davies, per z^2
        cache = {}

        def lg(z):
            if z not in cache:
                cache[z] = z * z * base
            return cache[z]
        out = {}
        for a, pk, tot in zip(acids, pks, totals):
            lf = _fractions_log(pk, a.charges, pH, lg)
            if open_co2 is not None and a.name == "carbonate":
                # neutral form fixed; its activity coefficient taken as 1
                m = m_co2 * 10.0 ** (lf - lg(0))
            else:
                top = lf.max(axis=0)
                e = 10.0 ** (lf - top)
                m = tot * e / e.sum(axis=0)
            for name, z, mj in zip(a.species, a.charges, m):
                out[name] = (z, out.get(name, (z, 0.0))[1] + mj)
        aH = 10.0 ** (-pH)
        out["H+"] = (1, aH / 10.0 ** lg(1))
        out["OH-"] = (-1, 10.0 ** (-kw) / aH / 10.0 ** lg(1))
        return out

    def charge_and_I(sp):
        q = strong_charge.copy()
        I = strong_I.copy()
        for z, m in sp.values():
            q = q + z * m
            I = I + 0.5 * z * z * m
        return q, I

    I = strong_I + 1e-7
    for _ in range(max_iter):
        if fixed_pH is not None:
            pH = np.broadcast_to(np.asarray(fixed_pH, dtype=float), shape)
        else:
            lo = np.full(shape, -2.0)
            hi = np.full(shape, 16.0)
            for _b in range(46):          # 18 / 2**46 = 3e-13 in pH
                mid = 0.5 * (lo + hi)
                q, _ = charge_and_I(species_at(mid, I))
                up = q > 0        # net positive: too acidic, raise the pH
                lo = np.where(up, mid, lo)
                hi = np.where(up, hi, mid)
            pH = 0.5 * (lo + hi)
        sp = species_at(pH, I)
        q, I_new = charge_and_I(sp)
        done = np.all(np.abs(I_new - I) <= tol * np.maximum(I_new, 1e-12))
        I_used, I = I, I_new
        if done:
            break
    # sp, q belong to the pH solved at I_used; I is their ionic strength
    return {"pH": np.asarray(pH), "ionic_strength": I, "species": sp, "residual": q,
            "activity_ionic_strength": I_used,
            "strong": dict(zip(strong, zip(zs, ms)))}
