r"""From the scaled double layer to the coupling coefficients: one assembly per model.

The 1D (slit, tube) and 2D (section) kernels compute area means of the
scaled potential phi = e psi / kT, of the scaled electro-osmotic profile d
(u_eo = (eps kT/(e eta)) d E) and of the Poiseuille profile, by closed forms,
on grids or on meshes. Everything after that is written once, here:

* :func:`coefficients`: the scaled means -> L12, L21 and the per-ion
  migration and convection parts of L22 [SI];
* :func:`thin_means`: the Helmholtz–Smoluchowski slip model with the
  flat-wall diffuse layer (Bikerman-type surface conduction, any mixture);
* :func:`dh_means`: the Debye–Hückel model, Boltzmann factors to second
  order (migration) and first order (convection) in phi;
* :func:`neutrality_charge`: the wall charge from the space charge.

Each ion's convection is that of its excess over the bulk,
<(c_i/c_i,b - 1) d>: the bulk part is the same for every ion's share of a
neutral bulk, adds nothing to L22 and is left out, so the counter-ion share
counts only what the double layer carries.
"""
from __future__ import annotations

import numpy as np

from ._constants import F
from .wall import flat_layer_integrals

__all__ = ["coefficients", "thin_means", "dh_means", "neutrality_charge"]


def coefficients(b, l12, l21, mean_c, conv_excess):
    """SI coefficients of a batch from its scaled means.

    Parameters
    ----------
    b : ekexplore._state.Batch
        The flat conditions, B points.
    l12 : ndarray (B,)
        <d>, the electro-osmotic mean over eps kT/(e eta).
    l21 : ndarray (B,)
        (kappa L)^2 <f u> over the same unit (streaming).
    mean_c : ndarray (k, B)
        <c_i>/c_i,b.
    conv_excess : ndarray (k, B)
        <(c_i/c_i,b - 1) d>.

    Returns
    -------
    dict
        ``L12``, ``L21`` [m²/(V s)], ``migration`` and ``convection`` per ion
        (k, B) [S/m].
    """
    unit = b.eps * b.VT / b.eta
    return {"L12": unit * l12, "L21": unit * l21,
            "migration": b.molar_conductivity * b.c * mean_c,
            "convection": b.z[:, None] * F * b.c * unit * conv_excess}


def thin_means(b, phi_w, per_area, shear):
    """Scaled means of the slip model.

    Slip velocity -eps zeta E/eta everywhere (l12 = -phi_w); streaming from
    the wall shear per unit area and pressure gradient (``shear``, 1 for
    any exact Stokes flow) times the first moment of any Gouy–Chapman
    charge, int rho y dy = -eps zeta; conduction of the flat-wall layers,
    ``per_area`` = P/(A kappa), per ion by :func:`ekexplore.wall.flat_layer_integrals`.
    """
    I_mig, I_conv = flat_layer_integrals(b.z[:, None], b.c, phi_w)
    return {"l12": -phi_w, "l21": -phi_w * shear, "mean_c": 1.0 + per_area * I_mig,
            "conv_excess": per_area * I_conv}


def dh_means(z, mean_phi, mean_phi2, mean_phi_d):
    """<c_i>/c_i,b and the excess convection of the Debye–Hückel model.

    c_i/c_i,b = 1 - z_i phi + z_i² phi²/2 for the migration (second order,
    so that the conduction is right to order zeta²) and 1 - z_i phi for the
    convection, whose excess is then -z_i <phi d>.
    """
    zc = z[:, None]
    mean_c = 1.0 - zc * mean_phi + 0.5 * zc**2 * mean_phi2
    return mean_c, -zc * mean_phi_d


def neutrality_charge(b, mean_f, area_per_perimeter):
    """Wall charge [C/m²] from overall neutrality, sigma P = -int rho dA,
    with rho = eps kappa² (kT/e) f and ``mean_f`` = <f>."""
    return -(b.eps * b.kappa**2 * b.VT) * mean_f * area_per_perimeter

