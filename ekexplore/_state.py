"""The contract between :func:`ekexplore.solve` and the shape kernels.

``solve`` validates and broadcasts the inputs into one :class:`Conditions`
and hands it to ``channel._kernel(conditions, models, options)``, with
``models`` the model of every point (an array of names from
:data:`ekexplore.models.MODEL_NAMES`). Kernels flatten the conditions once
with :meth:`Conditions.flat` into a :class:`Batch`, whose names mean one
thing everywhere. A kernel returns a dict with these entries, every array of
shape ``conditions.shape`` unless said otherwise, SI units, per unit
cross-section area:

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
``wall_charge``       charge density of the wall [C/m²]
``error``             estimated relative error of the coefficients [-]
``model``             the model used, ndarray of str
``profiles``          callable(G, E) -> Profiles, or None
====================  ========================================================

Stern conduction, whole-channel figures and derived quantities are added by
``solve`` from these, so each kernel stays small.
"""
from __future__ import annotations

from dataclasses import dataclass, fields, replace
from functools import cached_property

import numpy as np

from ._constants import F, R, thermal_voltage
from .wall import WALL_CONDITIONS

__all__ = ["Conditions", "Batch"]


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
    wall_condition: str            # "potential" | "charge" | "regulated"
    wall_value: np.ndarray         # [V] or [C/m^2], or (P, *shape) surface rows
    stern_conductance: np.ndarray  # [S]

    @property
    def thermal_voltage(self):
        """kT/e [V]."""
        return thermal_voltage(self.temperature)

    @property
    def wall(self):
        """The wall condition object (see :class:`ekexplore.wall.WallCondition`)."""
        return WALL_CONDITIONS[self.wall_condition]

    def z_b(self):
        """Valences reshaped to broadcast against (n, *shape) arrays."""
        return self.valences.reshape((-1,) + (1,) * len(self.shape))

    def bulk_conductivity(self):
        """Nernst-Einstein bulk conductivity [S/m]."""
        z = self.z_b()
        return np.sum(z**2 * F**2 * self.diffusivities * self.concentrations, axis=0) / (
            R * self.temperature)

    def flat(self, half_size=None):
        """The conditions flattened to a :class:`Batch` of B = prod(shape) points.

        ``half_size`` [m] (broadcast to ``shape``) is the length that scales
        the wall charge and sets K = kappa x half_size; sections give it
        per point later (:meth:`Batch.with_length`).
        """
        shape = self.shape
        B = int(np.prod(shape)) if shape else 1

        def f1(a):
            return np.broadcast_to(a, shape).reshape(B).astype(float)

        def fk(a):
            return np.broadcast_to(a, a.shape[:1] + shape).reshape(a.shape[0], B).astype(float)

        value = fk(self.wall_value) if self.wall.rows else f1(self.wall_value)
        b = Batch(z=np.asarray(self.valences, dtype=float), c=fk(self.concentrations),
                  D=fk(self.diffusivities), T=f1(self.temperature),
                  eps=f1(self.permittivity), eta=f1(self.viscosity), kappa=f1(self.kappa),
                  VT=f1(self.thermal_voltage), value=value, wall=self.wall,
                  length=None, ion_names=tuple(self.ion_names))
        return b if half_size is None else b.with_length(f1(half_size))


@dataclass(frozen=True)
class Batch:
    """Conditions at B points as flat arrays: (B,) per point, (k, B) per ion.

    Attributes
    ----------
    z : ndarray (k,)
        Valences.
    c, D : ndarray (k, B)
        Bulk concentrations [mol/m³] and diffusivities [m²/s].
    T, eps, eta, kappa, VT : ndarray (B,)
        Temperature [K], permittivity [F/m], viscosity [Pa s], inverse Debye
        length [1/m], thermal voltage kT/e [V].
    value : ndarray (B,) or (P, B)
        The imposed wall value in SI ([V] or [C/m²]), or the rows of a
        charge-regulating surface (``wall.rows``).
    wall : WallCondition
        The wall condition.
    length : ndarray (B,) or None
        Reference length L [m] (the half-size of slits and tubes).
    """

    z: np.ndarray
    c: np.ndarray
    D: np.ndarray
    T: np.ndarray
    eps: np.ndarray
    eta: np.ndarray
    kappa: np.ndarray
    VT: np.ndarray
    value: np.ndarray
    wall: object
    length: np.ndarray | None
    ion_names: tuple

    @property
    def B(self):
        """Number of points."""
        return self.T.shape[0]

    @cached_property
    def weights(self):
        """c_i / sum_j z_j² c_j (k, B) [-]: the weights of the osmotic terms."""
        return self.c / np.sum(self.z[:, None]**2 * self.c, axis=0)

    @cached_property
    def charge_weights(self):
        """z_i c_i / sum_j z_j² c_j (k, B) [-]: the weights of the charge density."""
        return self.z[:, None] * self.c / np.sum(self.z[:, None]**2 * self.c, axis=0)

    @cached_property
    def molar_conductivity(self):
        """z_i² F² D_i / (R T) (k, B) [S m²/mol] (Nernst–Einstein)."""
        return self.z[:, None]**2 * F**2 * self.D / (R * self.T)

    @property
    def K(self):
        """kappa x L [-]."""
        return self.kappa * self.length

    @cached_property
    def scaled_value(self):
        """The wall value in scaled units at ``length``: e zeta/kT or sigma L e/(eps kT).

        Values below 1e-150 are exactly zero: they carry no physics, and
        subnormal numbers would defeat the relative Newton test.
        """
        s = self.wall.scale(self.value, self.VT, self.eps, self.length)
        return np.where(np.abs(s) < 1e-150, 0.0, s)

    def with_length(self, length):
        """The same points with reference length ``length`` [m] (B,)."""
        return replace(self, length=np.asarray(length, dtype=float))

    def take(self, idx):
        """The points at index array ``idx``."""
        out = {}
        for f in fields(self):
            v = getattr(self, f.name)
            if f.name == "z" or not isinstance(v, np.ndarray):
                out[f.name] = v
            else:
                out[f.name] = v[..., idx]
        return Batch(**out)
