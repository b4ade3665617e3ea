r"""Ion mobilities in real solutions: limiting conductivities against temperature
and their fall with concentration (mean spherical approximation).

Two corrections turn the textbook Nernst–Einstein sum into what a conductivity
meter reads:

1. **Temperature.** Limiting (infinite-dilution) ionic conductivities are
   interpolated from tabulated values between 0 and 100 °C, not scaled by the
   Walden rule. Between table points the *Walden ratio*
   :math:`w(T) = \lambda^\circ(T)\,\eta(T) / (\lambda^\circ_{25}\,\eta_{25})`
   is interpolated (monotone cubic), because it varies slowly; ions with no
   table keep :math:`w = 1` (Walden rule, stated for them).
2. **Concentration.** The mean spherical approximation (MSA) transport theory
   of Bernard, Turq, Blum and co-workers multiplies each ion's limiting
   mobility by an electrophoretic and a relaxation factor, both functions of
   the MSA screening parameter :math:`\Gamma` and an ion contact diameter
   :math:`\sigma`:

   .. math::

      D_i = D_i^\circ\,\Bigl(1 - \frac{k T\,\Gamma}{3\pi\eta\,D_i^\circ\,(1+\Gamma\sigma)}\Bigr)
            \Bigl(1 + \frac{\delta X}{X}\Bigr)_i

      \frac{\delta X}{X} = -\frac{|z_i z_c|\,\ell_B\,\kappa_q^2}{6\sigma}\,
            \frac{1 - e^{-2\kappa_q\sigma}}{(1+\Gamma\sigma)^2\,
            \bigl(\kappa_q^2 + 2\Gamma\kappa_q + 2\Gamma^2(1-e^{-\kappa_q\sigma})\bigr)}

   with :math:`2\Gamma\sigma = \sqrt{1+2\kappa\sigma} - 1`, the Bjerrum length
   :math:`\ell_B = e^2/(4\pi\varepsilon k T)` and Onsager's
   :math:`\kappa_q^2 = q\,\kappa^2`. As :math:`c \to 0` both factors reduce
   to the Debye–Hückel–Onsager limiting law (checked in the tests).

Mixtures: the binary formulas are applied to each ion with a *mean counter-ion*
(valence and diffusivity averaged over the ions of opposite sign with weights
:math:`z^2 c`) and :math:`\sigma` the sum of the mean cation and mean anion
radii (same weights). For a binary salt this is exact to the theory.

The structure of the relaxation term was written from the published MSA
expressions recalled from memory (Bernard et al. 1992) and fixed by its
Debye–Hückel–Onsager limit; the model was then *chosen by measurement*
against the KCl conductivity standards (see the README table), not fitted.
The electrophoretic factor is the restricted-primitive-model form (one mean
diameter); the unequal-size MSA of Durand-Vidal et al. and Roger et al. 2009
(doi:10.1021/jp901916r) is not used. Its main change at these concentrations,
Blum's screening parameter for unequal diameters and each ion's own diameter
in the electrophoretic term, was measured with a prototype: CaCl2 +0.1, +0.3,
+0.5 % at 5, 25, 50 mM, NaCl −0.03 % at 100 mM (Kielland sizes).

Ion diameters are Kielland's (1937) sizes of the hydrated ions (H⁺ and OH⁻, which move
by proton hopping, keep Marcus's H₃O⁺ and OH⁻ radii), not crystal
radii: a small divalent cation keeps its hydration shell between itself and a
chloride, and with Pauling's crystal radii CaCl2 came out 3.4 % low at 50 mM
(between the two choices KCl moved by less than 0.3 % to 100 mM, NaCl at
100 mM from −0.6 % to +0.7 %).

References
----------
.. [1] Bernard, O.; Kunz, W.; Turq, P.; Blum, L. (1992). Conductance in
   electrolyte solutions using the mean spherical approximation.
   J. Phys. Chem. 96, 3833. doi:10.1021/j100188a051
.. [2] Durand-Vidal, S.; Turq, P.; Bernard, O.; Treiner, C.; Blum, L. (1996).
   New perspectives in transport phenomena in electrolytes. Physica A 231, 123.
   doi:10.1016/0378-4371(95)00454-8
.. [3] CRC Handbook of Chemistry and Physics, "Ionic conductivity and
   diffusion at infinite dilution" (25 °C) and the table of limiting ionic
   conductivities at 0-100 °C (values here from memory; the 25 °C ½Ca²⁺
   value 59.47 checked against the published table).
.. [4] Kielland, J. (1937). Individual activity coefficients of ions in
   aqueous solutions. J. Am. Chem. Soc. 59, 1675. doi:10.1021/ja01288a032
   (ion-size parameters, the MSA diameters here; read from the reproduction
   of the table in Freeze & Cherry 1979, Groundwater, appendix IV).

Measured against published standards (``tests/test_conductivity.py``): KCl at
0.01 and 0.1 mol/kg within 0.51 % from 0 to 50 °C (the primary standards of
Wu, Koch & Pratt 1991 and Pratt et al. 2001, doi:10.1351/pac200173111783);
1 mol/kg −2.4 % at 25 °C, −6.1 % at 0 °C, −0.6 % at 50 °C; CaCl2 within
1.8 % to 50 mM at 25 °C. Not modelled: ion association, so a 2:2 salt such as
MgSO4 (strongly paired) is predicted far too conducting: +64 % at 0.5 % by
mass (42 mM, 20 °C) against the CRC table "Electrical conductivity of aqueous
solutions" (4.1 mS/cm; a table of two or three digits).
"""
from __future__ import annotations

import numpy as np
from scipy import constants
from scipy.interpolate import PchipInterpolator

from .medium import check_temperature, water_permittivity, water_viscosity

__all__ = ["MOBILITY_MODELS", "LAMBDA_T_TABLE", "ION_RADIUS", "walden_ratio",
           "msa_factors"]

T_REF = constants.zero_Celsius + 25.0

#: Mobility models of :class:`ekexplore.Electrolyte`: name -> description.
MOBILITY_MODELS = {
    "msa": "limiting conductivities from tables against temperature, corrected for "
           "concentration by the mean spherical approximation (default)",
    "dilute": "limiting conductivities from tables against temperature, no "
              "concentration correction (infinite dilution)",
    "ideal": "the earlier behaviour: 25 degC limiting values scaled by the Walden rule "
             "D ~ T/eta, no concentration correction",
}

# Limiting ionic conductivities [S cm^2/mol, per equivalent] against temperature
# [degC], CRC Handbook of Chemistry and Physics, table of ionic conductivities at
# various temperatures (from memory; the 25 degC column is the CRC infinite-
# dilution table of shared/references.md).
LAMBDA_T_TABLE = {
    "H+": ((0, 225.0), (5, 250.1), (15, 300.6), (18, 315.0), (25, 349.65), (35, 397.0),
           (45, 441.4), (55, 483.1), (100, 630.0)),
    "Li+": ((0, 19.4), (5, 22.7), (15, 30.5), (18, 32.8), (25, 38.66), (35, 48.0),
            (45, 58.0), (55, 68.7), (100, 115.0)),
    "Na+": ((0, 26.5), (5, 30.3), (15, 39.7), (18, 42.8), (25, 50.08), (35, 61.5),
            (45, 73.7), (55, 86.8), (100, 145.0)),
    "K+": ((0, 40.7), (5, 46.7), (15, 59.6), (18, 63.9), (25, 73.48), (35, 88.2),
           (45, 103.4), (55, 119.2), (100, 195.0)),
    "Cl-": ((0, 41.0), (5, 47.5), (15, 61.4), (18, 66.0), (25, 76.31), (35, 92.2),
            (45, 108.9), (55, 126.4), (100, 212.0)),
    "OH-": ((0, 105.0), (18, 171.0), (25, 198.0), (100, 450.0)),
    "Ca2+": ((0, 31.2), (18, 50.7), (25, 59.47), (100, 187.0)),
    "Mg2+": ((0, 28.9), (18, 44.9), (25, 53.0), (100, 170.0)),
    "NO3-": ((0, 40.0), (18, 62.3), (25, 71.42), (100, 195.0)),
    "SO4^2-": ((0, 41.0), (18, 68.4), (25, 80.0), (100, 260.0)),
    "CH3COO-": ((0, 20.1), (18, 34.0), (25, 40.9), (100, 130.0)),
}

# Ion radii [m] for the MSA contact diameter: half the ion-size parameter a of
# Kielland 1937, "Individual activity coefficients of ions in aqueous
# solutions", J. Am. Chem. Soc. 59, 1675, doi:10.1021/ja01288a032, table of
# effective diameters of hydrated ions in the Debye-Hueckel distance of closest
# approach, as reproduced in Freeze & Cherry 1979, "Groundwater" (Prentice-Hall),
# appendix IV, "Debye-Hueckel equation and Kielland table for ion-activity
# coefficients" (read there: K+, Cl-, NO3- 3; OH- 3.5; SO4^2-, HPO4^2-, PO4^3-
# 4; Na+, HCO3-, H2PO4-, acetate 4-4.5; CO3^2- 4.5; Li+, Ca2+ 6; Mg2+ 8;
# H+ 9 A; "rounded values for the effective size in water solution"). Where
# the table gives the range 4-4.5 A, its midpoint. These are sizes of the ions as they
# move in water, with their hydration shells, which is what the primitive model
# of the MSA needs: Pauling's crystal radii, used before, put a small strongly
# hydrated cation (Ca2+, Mg2+) in contact with its counter-ion and made CaCl2
# -3.4 % low at 50 mM (measured; README). Ions not listed use their Stokes
# radius kT/(6 pi eta D) (an estimate, stated in Ion.radius_estimate).
# Exception: H+ and OH- move by proton hopping (Grotthuss), not as hydrated
# spheres, so Kielland's activity sizes (9 and 3.5 A) do not describe their
# transport; they keep the H3O+ and OH- radii of Marcus 1988, Chem. Rev. 88,
# 1475, doi:10.1021/cr00090a003 (from memory). Measured for HCl at 0.1 mol/L
# against the CRC table (391.13 S cm^2/mol, from memory): -0.18 % with these,
# +2.4 % with Kielland's 9 A.
ION_RADIUS = {
    "H+": 1.00e-10, "Li+": 3.0e-10, "Na+": 2.125e-10, "K+": 1.5e-10, "Ca2+": 3.0e-10,
    "Mg2+": 4.0e-10, "OH-": 1.33e-10, "Cl-": 1.5e-10, "NO3-": 1.5e-10,
    "SO4^2-": 2.0e-10, "HCO3-": 2.125e-10, "CO3^2-": 2.25e-10, "CH3COO-": 2.125e-10,
    "H2PO4-": 2.125e-10, "HPO4^2-": 2.0e-10, "PO4^3-": 2.0e-10,
}


def _interpolators():
    out = {}
    for name, pts in LAMBDA_T_TABLE.items():
        t = np.array([p[0] for p in pts], dtype=float)
        lam = np.array([p[1] for p in pts], dtype=float)
        T = t + constants.zero_Celsius
        lam25 = lam[np.argmin(np.abs(t - 25.0))]
        w = lam * water_viscosity(T) / (lam25 * water_viscosity(T_REF))
        out[name] = PchipInterpolator(T, w, extrapolate=False)
    return out


_W = _interpolators()


def walden_ratio(name, temperature):
    r"""Deviation of an ion's limiting conductivity from the Walden rule.

    .. math:: w(T) = \frac{\lambda^\circ(T)\,\eta(T)}{\lambda^\circ(25\,^\circ C)\,\eta(25\,^\circ C)}

    so that :math:`D^\circ(T) = D^\circ_{25}\,(T/T_{25})\,(\eta_{25}/\eta(T))\,w(T)`.

    Parameters
    ----------
    name : str
        Ion name; ions without a temperature table return 1 (Walden rule).
    temperature : array_like
        Temperature [K], 273.15-373.15.

    Returns
    -------
    ndarray
        :math:`w` [-], 1 at 25 °C.

    Notes
    -----
    Monotone cubic (PCHIP) interpolation of the tabulated ratio. Table: CRC
    Handbook limiting ionic conductivities at 0-100 °C (from memory).

    Examples
    --------
    >>> f"{float(walden_ratio('K+', 298.15)):.3f}"
    '1.000'
    >>> bool(walden_ratio('H+', 273.15) > 1.2)
    True
    """
    T = check_temperature(temperature)
    if name not in _W:
        return np.ones_like(T)
    return np.asarray(_W[name](T))


def msa_factors(valences, concentrations, diffusivities, radii, temperature):
    r"""Concentration correction of each ion's mobility, MSA transport theory.

    Parameters
    ----------
    valences : array_like
        Charge numbers, shape (n,).
    concentrations : array_like
        Concentrations [mol/m³], shape (n, \*shape), non-negative.
    diffusivities : array_like
        Limiting diffusivities at the temperature [m²/s], shape (n, \*shape).
    radii : array_like
        Ion radii [m], shape (n,).
    temperature : array_like
        Temperature [K], shape broadcastable to \*shape.

    Returns
    -------
    ndarray
        Factor :math:`D_i/D_i^\circ` [-], shape (n, \*shape), in (0, 1].

    Notes
    -----
    Formulas in the module docstring. Validity: the theory was tested on
    aqueous salts up to about 1-2 mol/L (Bernard et al. 1992); here measured
    against the KCl standards (within 1 % from 0.1 to 100 mM at 25 °C; see
    the README table for 1 M and other salts). The factor is floored at 0.05
    so that an extrapolation far beyond that range never returns a
    non-positive mobility.

    References
    ----------
    .. [1] Bernard et al. (1992), J. Phys. Chem. 96, 3833. doi:10.1021/j100188a051

    Examples
    --------
    >>> f = msa_factors([1, -1], [[100.0], [100.0]], [[1.957e-9], [2.032e-9]],
    ...                 [1.33e-10, 1.81e-10], 298.15)
    >>> [round(float(x), 3) for x in f[:, 0]]
    [0.86, 0.863]
    """
    z = np.asarray(valences, dtype=float)
    c = np.asarray(concentrations, dtype=float)
    D = np.asarray(diffusivities, dtype=float)
    r = np.asarray(radii, dtype=float)
    shape = np.broadcast_shapes(c.shape[1:], D.shape[1:], np.shape(temperature))
    c = np.broadcast_to(c, c.shape[:1] + shape)
    D = np.broadcast_to(D, c.shape)
    T = np.broadcast_to(np.asarray(temperature, dtype=float), shape)
    nd = len(shape)
    zb = z.reshape((-1,) + (1,) * nd)
    rb = r.reshape((-1,) + (1,) * nd)
    eps = water_permittivity(T)
    eta = water_viscosity(T)
    kT = constants.k * T
    lB = constants.e**2 / (4 * np.pi * eps * kT)
    w = zb**2 * c                                     # z^2 c weights
    kappa2 = constants.e**2 * constants.N_A * np.sum(w, axis=0) / (eps * kT)
    kappa = np.sqrt(kappa2)
    pos, neg = zb > 0, zb < 0

    def mean(q, mask):
        ww = np.where(mask, w, 0.0)
        s = np.sum(ww, axis=0)
        return np.sum(ww * q, axis=0) / np.where(s > 0, s, 1.0)

    r_pos, r_neg = mean(rb, pos), mean(rb, neg)
    sigma = r_pos + r_neg
    sigma = np.where(sigma > 0, sigma, 1e-10)
    ks = kappa * sigma
    gamma_sigma = 0.5 * (np.sqrt(1.0 + 2.0 * ks) - 1.0)
    Gamma = gamma_sigma / sigma
    # electrophoretic factor (velocity of the ion's atmosphere, MSA screening)
    f_el = 1.0 - kT * Gamma / (3 * np.pi * eta * D * (1.0 + gamma_sigma))
    # relaxation factor with a mean counter-ion of opposite sign
    zc = np.where(pos, mean(np.abs(zb), neg), mean(np.abs(zb), pos))
    Dc = np.where(pos, mean(D, neg), mean(D, pos))
    zi = np.abs(zb)
    li, lc = zi * D, zc * Dc                # equivalent conductances ~ |z| D
    q = zi * zc / np.maximum(zi + zc, 1e-300) * (li + lc) / np.maximum(zc * li + zi * lc,
                                                                          1e-300)
    kq = np.sqrt(q) * kappa
    G = Gamma
    x2 = -np.expm1(-2.0 * kq * sigma)
    x1 = -np.expm1(-kq * sigma)
    relax = zi * zc * lB * kq**2 / (6.0 * sigma) * x2 / (
        (1.0 + gamma_sigma) ** 2 * (kq**2 + 2 * G * kq + 2 * G**2 * x1)
        + np.where(kq > 0, 0.0, 1.0))
    f = f_el * (1.0 - relax)
    return np.maximum(f, 0.05)
