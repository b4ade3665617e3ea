"""The contract between :func:`ekexplore.solve` and the shape kernels.

``solve`` validates and broadcasts the inputs into one :class:`Conditions`
and hands it to ``channel._kernel(conditions, model, options)``. A kernel
returns a dict with these entries, every array of shape ``conditions.shape``
unless said otherwise, SI units, per unit cross-section area:

====================  ========================================================
``L11``               hydraulic coefficient <u_p>/G [m²/(Pa s)]
``L12``               electro-osmotic coefficient <u_eo>/E [m²/(V s)]
``L21``               streaming coefficient <rho_e u_p>/G [A/(m Pa) ...]
``L22_migration``     <sum z²F²D c/RT> [S/m]
``L22_convection``    <rho_e u_eo>/E [S/m]
``ion_current``       per-ion share of L22 [S/m]: migration plus convection of
                      the ion's excess over the bulk (the bulk part cancels
                      over the ions), shape (n_ions, \\*shape)
``wall_potential``    potential at the wall (zeta) [V]
``error``             estimated relative error of the coefficients [-]
``model``             the model used, str or ndarray of str
``profiles``          callable(G, E) -> Profiles, or None
====================  ========================================================

Stern conduction, whole-channel figures and derived quantities are added by
``solve`` from these, so each kernel stays small.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import constants

__all__ = ["Conditions", "F", "R"]

F = constants.physical_constants["Faraday constant"][0]
R = constants.R


@dataclass(frozen=True)
class Conditions:
    """Validated, broadcast physical conditions at every parameter point."""

    shape: tuple
    temperature: np.ndarray        # [K]
    permittivity: np.ndarray       # [F/m]
    viscosity: np.ndarray          # [Pa s]
    valences: np.ndarray           # (n,) [-]
    concentrations: np.ndarray     # (n, *shape) [mol/m^3]
    diffusivities: np.ndarray      # (n, *shape) [m^2/s]
    ion_names: tuple
    kappa: np.ndarray              # inverse Debye length [1/m]
    wall_condition: str            # "potential" | "charge"
    wall_value: np.ndarray         # [V] or [C/m^2]
    stern_conductance: np.ndarray  # [S]

    @property
    def thermal_voltage(self):
        """kT/e [V]."""
        return constants.k * self.temperature / constants.e

    @property
    def n_ions(self):
        return len(self.valences)

    def z_b(self):
        """Valences reshaped to broadcast against (n, *shape) arrays."""
        return self.valences.reshape((-1,) + (1,) * len(self.shape))

    def bulk_conductivity(self):
        """Nernst-Einstein bulk conductivity [S/m]."""
        z = self.z_b()
        return np.sum(z**2 * F**2 * self.diffusivities * self.concentrations, axis=0) / (
            R * self.temperature)

    def subset(self, index):
        """Conditions at a flat index array (1D result shape)."""
        def take(a):
            return np.broadcast_to(a, self.shape).reshape(-1)[index]

        def take_n(a):
            return np.broadcast_to(a, a.shape[:1] + self.shape).reshape(a.shape[0], -1)[:, index]

        return Conditions(
            shape=(len(index),), temperature=take(self.temperature),
            permittivity=take(self.permittivity), viscosity=take(self.viscosity),
            valences=self.valences, concentrations=take_n(self.concentrations),
            diffusivities=take_n(self.diffusivities), ion_names=self.ion_names,
            kappa=take(self.kappa), wall_condition=self.wall_condition,
            wall_value=take(self.wall_value), stern_conductance=take(self.stern_conductance))
