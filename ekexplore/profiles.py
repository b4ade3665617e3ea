"""Fields across the section, with their coordinate and units."""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["Profiles", "UNITS", "FieldTotals"]

#: Unit of every field a Profiles object holds.
UNITS = {
    "coordinate": "m", "wall_distance": "m", "potential": "V", "concentrations": "mol/m^3",
    "charge_density": "C/m^3", "velocity_pressure": "m/s", "velocity_electroosmotic": "m/s",
    "current_migration": "A/m^2", "current_convective": "A/m^2", "debye_length": "m",
}


class FieldTotals:
    """Totals shared by the 1D profiles and the 2D section fields."""

    @property
    def velocity(self):
        """Total axial velocity [m/s]."""
        return self.velocity_pressure + self.velocity_electroosmotic

    @property
    def current_density(self):
        """Total axial current density [A/m²]."""
        return self.current_migration + self.current_convective


@dataclass(frozen=True)
class Profiles(FieldTotals):
    """Profiles across a slit (from the mid-plane) or a tube (from the axis).

    Every field has shape ``(*shape, n)`` for a batch of parameter points of
    shape ``shape`` on n grid nodes, ordered from the wall (index 0) to the
    centre; ``concentrations`` has a leading ion axis. The grid is the
    solver's wall-resolving one, so nodes crowd toward the wall. Velocities
    and currents are for the driving gradients given to
    ``Result.profiles``: ``pressure_gradient`` = -dp/dx [Pa/m] and
    ``field`` = E_x [V/m].

    Attributes
    ----------
    coordinate : ndarray
        Distance from the mid-plane (slit, ``coordinate_name`` "y") or from
        the axis (tube, "r") [m].
    wall_distance : ndarray
        Distance from the wall [m].
    potential : ndarray
        Electric potential psi [V] (zero in the reservoir).
    concentrations : ndarray, shape (n_ions, \\*shape, n)
        Ion concentrations [mol/m³], in the order of ``ion_names``.
    charge_density : ndarray
        Space charge rho_e [C/m³].
    velocity_pressure, velocity_electroosmotic : ndarray
        Axial velocity driven by the pressure gradient and by the field [m/s].
    current_migration, current_convective : ndarray
        Axial current density by migration and by convection of charge [A/m²].
    velocity, current_density : ndarray
        Their totals [m/s], [A/m²].
    debye_length : ndarray, shape (\\*shape)
        Debye length [m].
    model : ndarray of str
        Model of each point.
    units : dict
        Unit of every field.

    Examples
    --------
    >>> import ekexplore as ek
    >>> r = ek.solve(ek.Slit(gap=100e-9), ek.Electrolyte.salt("KCl", 1.0),
    ...              ek.Wall(zeta=-0.05), model="pb")
    >>> p = r.profiles(pressure_gradient=1e5, field=1e3)
    >>> f"{float(p.potential[0]) * 1e3:.1f} mV"
    '-50.0 mV'
    >>> p.units["charge_density"]
    'C/m^3'
    """

    coordinate: np.ndarray
    wall_distance: np.ndarray
    potential: np.ndarray
    concentrations: np.ndarray
    ion_names: tuple
    charge_density: np.ndarray
    velocity_pressure: np.ndarray
    velocity_electroosmotic: np.ndarray
    current_migration: np.ndarray
    current_convective: np.ndarray
    debye_length: np.ndarray
    model: np.ndarray
    pressure_gradient: float
    field: float
    coordinate_name: str = "y"
    units: dict = field(default_factory=lambda: dict(UNITS))

    @classmethod
    def from_1d(cls, m, grid, phi, b, models, shape, pressure_gradient, field):
        """Build from a scaled 1D solution on ``grid`` for the flat batch ``b`` (internal)."""
        n = phi.shape[1]
        R = b.length[:, None]
        VT = b.VT[:, None]
        z = b.z
        em1 = np.expm1(-z[:, None, None] * phi[None])
        dh = (models == "dh")[:, None]
        thin = (models == "thin")[:, None]
        # dh: the model's own linear charge and second-order concentrations,
        # so that the profiles add up to its coefficients
        zp = z[:, None, None] * phi[None]
        conc = b.c[:, :, None] * np.where(dh[None], 1.0 - zp + 0.5 * zp**2, em1 + 1.0)
        fvals = np.where(dh, -phi, np.sum(b.charge_weights[:, :, None] * em1, axis=0))
        rho = (b.eps * b.kappa**2)[:, None] * VT * fvals
        eta = b.eta[:, None]
        up = pressure_gradient * R**2 / eta * grid.poiseuille
        phi_w = phi[:, :1]
        ueo_layer = b.eps[:, None] / eta * VT * (phi - phi_w) * field
        # thin: the model's velocity is the slip (plug) velocity everywhere, but
        # the charge it convects is that of the Gouy-Chapman layer moving with
        # the layer's own velocity (the slip is reached across the layer)
        ueo = np.where(thin, -b.eps[:, None] / eta * VT * phi_w * field * np.ones_like(phi),
                       ueo_layer)
        mig = np.sum(b.molar_conductivity[:, :, None] * conc, axis=0) * field
        conv = rho * (up + ueo_layer)

        def rs(a):
            return a.reshape(shape + (n,))
        return cls(coordinate=rs(grid.s * R), wall_distance=rs(grid.x * R),
                   potential=rs(phi * VT),
                   concentrations=conc.reshape((len(z),) + shape + (n,)),
                   ion_names=tuple(b.ion_names), charge_density=rs(rho),
                   velocity_pressure=rs(up), velocity_electroosmotic=rs(ueo),
                   current_migration=rs(mig), current_convective=rs(conv),
                   debye_length=(1.0 / b.kappa).reshape(shape),
                   model=np.asarray(models).reshape(shape),
                   pressure_gradient=float(pressure_gradient), field=float(field),
                   coordinate_name="y" if m == 0 else "r")

    def as_arrays(self):
        """Dict of the fields (name -> ndarray), with units in :attr:`units`."""
        out = {k: getattr(self, k) for k in UNITS if k != "concentrations"}
        for i, name in enumerate(self.ion_names):
            out[f"c_{name}"] = self.concentrations[i]
        return out

    def to_frame(self):
        """A tidy pandas DataFrame: one row per grid node (and parameter point).

        Column names carry their units, e.g. ``potential [V]``. Needs pandas,
        which is not a core dependency.
        """
        try:
            import pandas as pd
        except ImportError as exc:  # pragma: no cover - depends on the environment
            raise ImportError("to_frame needs pandas: pip install pandas") from exc
        shape = self.potential.shape[:-1]
        n = self.potential.shape[-1]
        cols = {}
        if shape:
            idx = np.indices(shape + (n,)).reshape(len(shape) + 1, -1)
            for k in range(len(shape)):
                cols[f"point_{k}"] = idx[k]
        cols[f"{self.coordinate_name} [m]"] = self.coordinate.ravel()
        cols["wall_distance [m]"] = self.wall_distance.ravel()
        for key in ("potential", "charge_density", "velocity_pressure",
                    "velocity_electroosmotic", "current_migration", "current_convective"):
            cols[f"{key} [{UNITS[key]}]"] = getattr(self, key).ravel()
        for i, name in enumerate(self.ion_names):
            cols[f"c_{name} [mol/m^3]"] = self.concentrations[i].ravel()
        return pd.DataFrame(cols)
