"""Water as the solvent: permittivity, viscosity and density against temperature.

All functions take the absolute temperature in kelvin, accept arrays and
return arrays of the broadcast shape (0-d arrays for scalar input).
"""
from __future__ import annotations

import numpy as np
from scipy import constants

from ._validate import check_range

__all__ = ["T_MIN", "T_MAX", "check_temperature", "water_relative_permittivity",
           "water_permittivity", "water_density", "water_viscosity"]

#: Lowest temperature the property fits cover [K] (0 °C).
T_MIN = constants.zero_Celsius
#: Highest temperature the property fits cover [K] (100 °C).
T_MAX = constants.zero_Celsius + 100.0


def check_temperature(temperature) -> np.ndarray:
    """Check that ``temperature`` [K] lies in the liquid-water range of the fits."""
    return check_range("temperature", temperature, T_MIN, T_MAX, unit="K",
                       hint="the water property fits cover 0-100 degC")


def water_relative_permittivity(temperature):
    r"""Relative permittivity of liquid water (Malmberg & Maryott 1956).

    .. math:: \varepsilon_r = 87.740 - 0.40008\,t + 9.398\times10^{-4}\,t^2
              - 1.410\times10^{-6}\,t^3, \qquad t = T - 273.15

    Parameters
    ----------
    temperature : array_like
        Temperature [K], 273.15-373.15.

    Returns
    -------
    float or ndarray
        Relative permittivity [-].

    Notes
    -----
    Valid 0-100 °C at atmospheric pressure; the fit deviates from the
    measurements by at most about 0.01 (0.015 %).

    References
    ----------
    .. [1] Malmberg, C. G.; Maryott, A. A. (1956). Dielectric constant of water
       from 0 to 100 °C. J. Res. Natl. Bur. Stand. 56, 1.
       doi:10.6028/jres.056.001

    Examples
    --------
    >>> round(float(water_relative_permittivity(298.15)), 2)
    78.3
    """
    t = check_temperature(temperature) - constants.zero_Celsius
    return 87.740 + t * (-0.40008 + t * (9.398e-4 - 1.410e-6 * t))


def water_permittivity(temperature):
    r"""Absolute permittivity of water, :math:`\varepsilon_r(T)\,\varepsilon_0` [F/m].

    Parameters
    ----------
    temperature : array_like
        Temperature [K], 273.15-373.15.

    Returns
    -------
    float or ndarray
        Permittivity [F/m].

    Notes
    -----
    See :func:`water_relative_permittivity` for the fit and its range.

    References
    ----------
    .. [1] Malmberg & Maryott (1956), doi:10.6028/jres.056.001

    Examples
    --------
    >>> f"{float(water_permittivity(298.15)):.4e}"
    '6.9331e-10'
    """
    return water_relative_permittivity(temperature) * constants.epsilon_0


# Kell (1975) density of air-free water at 1 atm, t in degC (IPTS-68).
_KELL_NUM = (999.83952, 16.945176, -7.9870401e-3, -46.170461e-6, 105.56302e-9, -280.54253e-12)
_KELL_DEN = 16.879850e-3


def water_density(temperature):
    r"""Density of liquid water at 1 atm (Kell 1975).

    .. math:: \rho = \frac{\sum_{k=0}^{5} a_k t^k}{1 + b\,t}

    Parameters
    ----------
    temperature : array_like
        Temperature [K], 273.15-373.15.

    Returns
    -------
    float or ndarray
        Density [kg/m³].

    Notes
    -----
    Valid 0-100 °C at 1 atm, to a few ppm below 40 °C and about 10 ppm up to
    100 °C. Used here only inside the viscosity formulation, whose sensitivity
    to density is small.

    References
    ----------
    .. [1] Kell, G. S. (1975). Density, thermal expansivity, and compressibility
       of liquid water from 0 to 150 °C. J. Chem. Eng. Data 20, 97.
       doi:10.1021/je60064a005

    Examples
    --------
    >>> round(float(water_density(298.15)), 1)
    997.0
    """
    t = check_temperature(temperature) - constants.zero_Celsius
    num = np.polynomial.polynomial.polyval(t, _KELL_NUM)
    return num / (1.0 + _KELL_DEN * t)


# IAPWS 2008 viscosity (Huber et al. 2009), Table 1 and Table 2 of the release.
_T_STAR = 647.096      # K
_RHO_STAR = 322.0      # kg/m^3
_MU_STAR = 1.0e-6      # Pa s
_H0 = (1.67752, 2.20462, 0.6366564, -0.241605)
# _H1[i][j] multiplies (1/Tbar - 1)^i (rhobar - 1)^j
_H1 = np.array([
    [5.20094e-1, 2.22531e-1, -2.81378e-1, 1.61913e-1, -3.25372e-2, 0.0, 0.0],
    [8.50895e-2, 9.99115e-1, -9.06851e-1, 2.57399e-1, 0.0, 0.0, 0.0],
    [-1.08374, 1.88797, -7.72479e-1, 0.0, 0.0, 0.0, 0.0],
    [-2.89555e-1, 1.26613, -4.89837e-1, 0.0, 6.98452e-2, 0.0, -4.35673e-3],
    [0.0, 0.0, -2.57040e-1, 0.0, 0.0, 8.72102e-3, 0.0],
    [0.0, 1.20573e-1, 0.0, 0.0, 0.0, 0.0, -5.93264e-4],
])


def _iapws08_viscosity(temperature, density):
    """IAPWS 2008 viscosity [Pa s] from T [K] and rho [kg/m^3], with mu2 = 1."""
    tb = np.asarray(temperature, dtype=float) / _T_STAR
    rb = np.asarray(density, dtype=float) / _RHO_STAR
    mu0 = 100.0 * np.sqrt(tb) / sum(h / tb**i for i, h in enumerate(_H0))
    x = 1.0 / tb - 1.0
    y = rb - 1.0
    s = np.zeros(np.broadcast(tb, rb).shape)
    for i in range(_H1.shape[0]):
        s = s + x**i * np.polynomial.polynomial.polyval(y, _H1[i])
    mu1 = np.exp(rb * s)
    return _MU_STAR * mu0 * mu1


def water_viscosity(temperature):
    r"""Dynamic viscosity of liquid water at 0.1 MPa (IAPWS 2008).

    .. math:: \eta = \eta^*\,\bar\mu_0(\bar T)\,\bar\mu_1(\bar T, \bar\rho),
              \qquad \bar\mu_2 = 1

    with the density :math:`\bar\rho` from :func:`water_density`.

    Parameters
    ----------
    temperature : array_like
        Temperature [K], 273.15-373.15.

    Returns
    -------
    float or ndarray
        Viscosity [Pa·s].

    Notes
    -----
    The IAPWS 2008 formulation with the critical enhancement set to one (far
    from the critical point). Evaluated on the Kell density at 1 atm; the
    difference from 0.1 MPa is below 1 ppm in density and negligible here.
    Uncertainty of the formulation in this range: about 1 %.

    References
    ----------
    .. [1] Huber, M. L. et al. (2009). New international formulation for the
       viscosity of H2O. J. Phys. Chem. Ref. Data 38, 101.
       doi:10.1063/1.3088050

    Examples
    --------
    >>> f"{float(water_viscosity(298.15)) * 1e3:.4f}"
    '0.8900'
    """
    T = check_temperature(temperature)
    return _iapws08_viscosity(T, water_density(T))
