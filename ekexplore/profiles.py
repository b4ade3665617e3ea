"""Fields across the section, with their coordinates and units: one kind of
object for slits, tubes and 2D sections."""
from __future__ import annotations

import numpy as np

__all__ = ["Profiles", "UNITS", "FIELDS", "FieldTotals"]

#: Unit of every field and coordinate a Profiles object holds.
UNITS = {
    "x": "m", "y": "m", "r": "m", "coordinate": "m", "wall_distance": "m", "potential": "V",
    "concentrations": "mol/m^3", "charge_density": "C/m^3", "velocity_pressure": "m/s",
    "velocity_electroosmotic": "m/s", "velocity": "m/s", "current_migration": "A/m^2",
    "current_convective": "A/m^2", "current_density": "A/m^2", "debye_length": "m",
}

#: The nodal fields of every Profiles object, in table order.
FIELDS = ("potential", "charge_density", "velocity_pressure", "velocity_electroosmotic",
          "current_migration", "current_convective")


class FieldTotals:
    """Totals of the velocity and current parts."""

    @property
    def velocity(self):
        """Total axial velocity [m/s]."""
        return self.velocity_pressure + self.velocity_electroosmotic

    @property
    def current_density(self):
        """Total axial current density [A/m²]."""
        return self.current_migration + self.current_convective


class Profiles(FieldTotals):
    r"""Fields across a channel's cross-section: the same kind for a slit, a
    tube and a 2D section.

    Every field has shape ``(*shape, n)``: ``shape`` is the batch of
    parameter points of a slit or tube (``()`` for a 2D section, whose
    batches are object arrays of Profiles, one mesh per point) and n the
    nodes. A slit's or tube's nodes are the solver's wall-resolving grid,
    ordered from the wall (index 0) to the centre; a section's are the nodes
    of its triangle mesh (:attr:`mesh`). Velocities and currents are for the
    driving gradients given to ``Result.profiles``: ``pressure_gradient`` =
    -dp/dx [Pa/m] and ``field`` = E_x [V/m].

    Attributes
    ----------
    coordinates : dict of str to ndarray
        Node coordinates [m]: ``{"y": ...}`` distance from the mid-plane of
        a slit, ``{"r": ...}`` from the axis of a tube, ``{"x": ..., "y":
        ...}`` across a section's width and up from its floor.
    wall_distance : ndarray
        Distance of every node from the (nearest) wall [m].
    potential : ndarray
        Electric potential psi [V] (zero in the reservoir).
    concentrations : ndarray, shape (n_ions, \*shape, n)
        Ion concentrations [mol/m³], in the order of ``ion_names``.
    ion_names : tuple of str
    charge_density : ndarray
        Space charge rho_e [C/m³].
    velocity_pressure, velocity_electroosmotic : ndarray
        Axial velocity driven by the pressure gradient and by the field [m/s].
    current_migration, current_convective : ndarray
        Axial current density by migration and by convection of charge [A/m²].
    velocity, current_density : ndarray
        Their totals [m/s], [A/m²].
    debye_length : ndarray, shape (\*shape)
        Debye length [m].
    model : ndarray of str, shape (\*shape)
        Model of each point.
    pressure_gradient, field : float
        The driving gradients [Pa/m], [V/m].
    mesh : SectionMesh or None
        A section's triangle mesh (``triangles``, ``wall`` nodes, ``centre``),
        which :meth:`sample`, :meth:`cut`, :meth:`on_grid` and the centre
        cuts use; None for a slit or tube.
    units : dict
        Unit of every field and coordinate.

    Older names stay: ``coordinate`` and ``coordinate_name`` (slit, tube),
    ``x``, ``y``, ``triangles``, ``wall``, ``centre`` (section).

    Examples
    --------
    >>> import ekexplore as ek
    >>> r = ek.solve(ek.Slit(gap=100e-9), ek.Electrolyte.salt("KCl", 1.0),
    ...              ek.Wall(zeta=-0.05), model="pb")
    >>> p = r.profiles(pressure_gradient=1e5, field=1e3)
    >>> f"{float(p.potential[0]) * 1e3:.1f} mV"
    '-50.0 mV'
    >>> list(p.coordinates), p.units["charge_density"]
    (['y'], 'C/m^3')
    """

    def __init__(self, *, coordinates, potential, concentrations, ion_names, charge_density,
                 velocity_pressure, velocity_electroosmotic, current_migration,
                 current_convective, debye_length, model, pressure_gradient, field,
                 wall_distance=None, mesh=None):
        self.coordinates = dict(coordinates)
        self.potential, self.charge_density = potential, charge_density
        self.velocity_pressure = velocity_pressure
        self.velocity_electroosmotic = velocity_electroosmotic
        self.current_migration, self.current_convective = current_migration, current_convective
        self.concentrations = concentrations
        self.ion_names = tuple(ion_names)
        self.debye_length = np.asarray(debye_length, dtype=float)
        self.model = np.asarray(model)
        self.pressure_gradient, self.field = float(pressure_gradient), float(field)
        self.mesh = mesh
        self._wall_distance = wall_distance
        self.units = dict(UNITS)

    # -- coordinates ---------------------------------------------------------------
    @property
    def wall_distance(self):
        """Distance of every node from the nearest wall [m] (a section's is
        computed on first use)."""
        if self._wall_distance is None:
            self._wall_distance = self.mesh.wall_distance()
        return self._wall_distance

    @property
    def coordinate_name(self):
        """Name of the one coordinate of a slit ("y") or tube ("r")."""
        if len(self.coordinates) != 1:
            raise AttributeError("a 2D section has two coordinates: use coordinates['x'] "
                                 "and coordinates['y']")
        return next(iter(self.coordinates))

    @property
    def coordinate(self):
        """The one coordinate of a slit or tube [m]."""
        return self.coordinates[self.coordinate_name]

    @property
    def x(self):
        """Coordinate across a section's width [m]."""
        return self._coordinate("x")

    @property
    def y(self):
        """Coordinate up from a section's floor, or from a slit's mid-plane [m]."""
        return self._coordinate("y")

    def _coordinate(self, name):
        if name not in self.coordinates:
            raise AttributeError(f"these profiles have the coordinates {list(self.coordinates)}")
        return self.coordinates[name]

    @property
    def triangles(self):
        """Node indices of a section's mesh triangles (nt, 3)."""
        return self._section().triangles

    @property
    def wall(self):
        """True at a section's wall nodes."""
        return self._section().wall

    @property
    def centre(self):
        """The point [m] a section's centre cuts go through."""
        return self._section().centre

    def _section(self):
        if self.mesh is None:
            raise ValueError("the profiles of a slit or tube lie along their one coordinate; "
                             "cuts, sampling and images are for 2D sections")
        return self.mesh

    # -- tables ---------------------------------------------------------------------
    def as_arrays(self):
        """Dict name -> ndarray: coordinates, ``wall_distance``, the fields,
        the totals ``velocity`` and ``current_density`` and ``c_<ion>``
        (units in :attr:`units`; ``c_<ion>`` in mol/m³)."""
        out = dict(self.coordinates)
        out["wall_distance"] = self.wall_distance
        out.update(self.nodal_fields())
        return out

    def nodal_fields(self):
        """Dict name -> ndarray of the fields alone (no coordinates)."""
        out = {k: getattr(self, k) for k in FIELDS}
        out["velocity"] = self.velocity
        out["current_density"] = self.current_density
        for i, name in enumerate(self.ion_names):
            out[f"c_{name}"] = self.concentrations[i]
        return out

    def to_frame(self):
        """A tidy pandas DataFrame: one row per node (and parameter point).

        Column names carry their units, e.g. ``potential [V]``; a section
        adds the ``wall`` flag of every node. Needs pandas, which is not a
        core dependency.
        """
        try:
            import pandas as pd
        except ImportError as exc:  # pragma: no cover - depends on the environment
            raise ImportError("to_frame needs pandas: pip install pandas") from exc
        shape, n = self.potential.shape[:-1], self.potential.shape[-1]
        cols = {}
        if shape:
            idx = np.indices(shape + (n,)).reshape(len(shape) + 1, -1)
            for k in range(len(shape)):
                cols[f"point_{k}"] = idx[k]
        for name, value in self.coordinates.items():
            cols[f"{name} [m]"] = np.ravel(value)
        cols["wall_distance [m]"] = np.ravel(self.wall_distance)
        if self.mesh is not None:
            cols["wall"] = self.mesh.wall
        for key in FIELDS:
            cols[f"{key} [{UNITS[key]}]"] = np.ravel(getattr(self, key))
        for i, name in enumerate(self.ion_names):
            cols[f"c_{name} [mol/m^3]"] = np.ravel(self.concentrations[i])
        return pd.DataFrame(cols)

    # -- a section's cuts and images (delegated to its mesh) ------------------------
    def sample(self, xq, yq):
        """Fields of a section interpolated at points (xq, yq) [m] (linear in
        each mesh triangle); NaN outside the section."""
        return self._section().sample(self, xq, yq)

    def on_grid(self, nx=101, ny=101):
        """A section's fields on a regular nx x ny grid over its bounding box,
        for images: ``x`` (nx,), ``y`` (ny,) [m], each field (ny, nx), NaN
        outside."""
        return self._section().on_grid(self, nx, ny)

    def cut(self, start, end, n=201):
        """A section's fields along the segment start -> end [m], n points;
        adds ``distance`` [m] from ``start``."""
        return self._section().cut(self, start, end, n)

    def centreline(self, n=201):
        """Horizontal cut of a section through its centre, wall to wall."""
        return self._section().span(self, (1.0, 0.0), n)

    def vertical_centreline(self, n=201):
        """Vertical cut of a section through its centre, floor to top."""
        return self._section().span(self, (0.0, 1.0), n)

    def wall_normal(self, n=201):
        """Cut of a section from the wall point nearest its centre to the
        centre, graded toward the wall (``distance`` from the wall)."""
        return self._section().wall_normal(self, n)

    def __repr__(self):
        kind = "section" if self.mesh is not None else self.coordinate_name
        return (f"Profiles({kind}, nodes={self.potential.shape[-1]}, "
                f"shape={self.potential.shape[:-1]}, "
                f"pressure_gradient={self.pressure_gradient:g}, field={self.field:g})")

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
        return cls(coordinates={"y" if m == 0 else "r": rs(grid.s * R)},
                   wall_distance=rs(grid.x * R), potential=rs(phi * VT),
                   concentrations=conc.reshape((len(z),) + shape + (n,)),
                   ion_names=tuple(b.ion_names), charge_density=rs(rho),
                   velocity_pressure=rs(up), velocity_electroosmotic=rs(ueo),
                   current_migration=rs(mig), current_convective=rs(conv),
                   debye_length=(1.0 / b.kappa).reshape(shape),
                   model=np.asarray(models).reshape(shape),
                   pressure_gradient=pressure_gradient, field=field)
