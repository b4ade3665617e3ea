"""Channel cross-sections: the shape interface and the two 1D shapes.

A channel knows its geometry (area, perimeter, hydraulic diameter, the
half-size used in kappa*size) and which kernel computes its transport.
:func:`ekexplore.solve` only talks to this interface, so new shapes plug in
without changing it.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._validate import broadcast_named, check_range

__all__ = ["Channel", "Slit", "Tube", "SIZE_MIN", "SIZE_MAX", "SHAPES", "ParameterInfo",
           "register_shape"]

#: Smallest channel dimension accepted [m] (below about 1 nm continuum fails).
SIZE_MIN = 1e-9
#: Largest channel dimension accepted [m].
SIZE_MAX = 1e-2


def _size(name, value):
    """A channel dimension [m], checked against SIZE_MIN..SIZE_MAX (every shape)."""
    return check_range(name, value, SIZE_MIN, SIZE_MAX, unit="m",
                       hint="continuum electrokinetics needs sizes from 1 nm to 1 cm")


@dataclass(frozen=True)
class ParameterInfo:
    """How to present one shape parameter (for dashboards and sweeps).

    ``kind`` is ``"length"`` [m], ``"angle"`` [deg] or ``"ratio"`` [-].
    """

    label: str
    default: float
    kind: str = "length"
    minimum: float = SIZE_MIN
    maximum: float = SIZE_MAX


#: Registry of cross-sections: name -> class. Dashboards list every entry.
SHAPES: dict = {}


def register_shape(cls):
    """Class decorator that adds a :class:`Channel` subclass to :data:`SHAPES`.

    Parameters
    ----------
    cls : type
        A subclass of :class:`Channel` with ``kind``, ``parameters``,
        ``parameter_info`` (name -> :class:`ParameterInfo`, lengths in [m]),
        the geometry properties and ``_kernel`` (see DEVELOPERS.md).

    Returns
    -------
    type
        ``cls`` itself, now listed in :data:`SHAPES` under its class name, so
        that the dashboards and sweeps offer it with no other change.

    Examples
    --------
    >>> @register_shape
    ... class NamedSlit(Slit):
    ...     pass
    >>> SHAPES["NamedSlit"] is NamedSlit
    True
    >>> del SHAPES["NamedSlit"]
    """
    SHAPES[cls.__name__] = cls
    return cls


class Channel:
    """Base class of all cross-sections.

    Subclasses set :attr:`kind` and implement the geometry properties and
    ``_kernel(conditions, models, options)``, which returns the transport
    coefficients as a dict (see ``ekexplore._state``).
    """

    #: ``"slit"``, ``"tube"`` or ``"section"`` (a 2D cross-section).
    kind = "abstract"
    #: Names of the constructor parameters, in order.
    parameters: tuple = ()
    #: name -> ParameterInfo, for dashboards and sweeps.
    parameter_info: dict = {}

    @property
    def shape(self):
        """Broadcast shape of the size parameters."""
        return broadcast_named(self._parameter_shapes())

    def _parameter_shapes(self):
        """name -> shape of each parameter that broadcasts over parameter points."""
        return {p: np.shape(getattr(self, p)) for p in self.parameters}

    @property
    def area(self):
        """Cross-section area [m²]."""
        raise NotImplementedError

    @property
    def perimeter(self):
        """Wetted perimeter [m]."""
        raise NotImplementedError

    @property
    def hydraulic_diameter(self):
        """Hydraulic diameter 4 A / P [m]."""
        return 4.0 * self.area / self.perimeter

    @property
    def half_size(self):
        """Half of the smallest dimension [m]: the length in kappa*size."""
        raise NotImplementedError

    @property
    def poiseuille_number(self):
        """Fanning friction factor times Reynolds number on the hydraulic diameter [-]."""
        raise NotImplementedError

    def _kernel(self, conditions, models, options):  # pragma: no cover - interface
        raise NotImplementedError

    def __repr__(self):
        args = ", ".join(f"{p}={getattr(self, p)!r}" for p in self.parameters)
        return f"{type(self).__name__}({args})"


@register_shape
class Slit(Channel):
    """A slit between two parallel walls.

    Parameters
    ----------
    gap : array_like
        Full wall-to-wall distance h [m], 1e-9 to 1e-2.
    width : array_like, optional
        Width [m] for whole-channel figures. Default None: quantities per
        metre of width (area is then h x 1 m).

    Notes
    -----
    Infinite in width: side walls are ignored. Use a rectangle for finite
    aspect ratios.

    Examples
    --------
    >>> s = Slit(gap=1e-6)
    >>> float(s.half_size), float(s.hydraulic_diameter)
    (5e-07, 2e-06)
    >>> float(s.poiseuille_number)
    24.0
    """

    kind = "slit"
    parameters = ("gap",)
    parameter_info = {"gap": ParameterInfo("gap (wall to wall)", 1e-6)}

    def __init__(self, gap, width=None):
        self.gap = _size("gap", gap)
        self.width = None if width is None else check_range("width", width, SIZE_MIN, 1.0,
                                                            unit="m")

    def _parameter_shapes(self):
        # the width is a parameter too when given: a shape mismatch names it
        out = {"gap": np.shape(self.gap)}
        if self.width is not None:
            out["width"] = np.shape(self.width)
        return out

    @property
    def _w(self):
        return 1.0 if self.width is None else self.width

    @property
    def area(self):
        return self.gap * self._w

    @property
    def perimeter(self):
        return 2.0 * self._w * np.ones_like(self.gap)

    @property
    def hydraulic_diameter(self):
        return 2.0 * self.gap

    @property
    def half_size(self):
        return 0.5 * self.gap

    @property
    def poiseuille_number(self):
        return np.full(np.shape(self.gap), 24.0)

    def _kernel(self, conditions, models, options):
        from .kernels1d import transport_1d
        return transport_1d(0, self.half_size, conditions, models, options)


@register_shape
class Tube(Channel):
    """A circular tube (capillary or pore).

    Parameters
    ----------
    diameter : array_like
        Inner diameter [m], 1e-9 to 1e-2.

    Examples
    --------
    >>> t = Tube(diameter=2e-6)
    >>> float(t.half_size), float(t.poiseuille_number)
    (1e-06, 16.0)
    """

    kind = "tube"
    parameters = ("diameter",)
    parameter_info = {"diameter": ParameterInfo("inner diameter", 1e-6)}

    def __init__(self, diameter):
        self.diameter = _size("diameter", diameter)

    @property
    def area(self):
        return np.pi * self.diameter**2 / 4.0

    @property
    def perimeter(self):
        return np.pi * self.diameter

    @property
    def half_size(self):
        return 0.5 * self.diameter

    @property
    def poiseuille_number(self):
        return np.full(np.shape(self.diameter), 16.0)

    def _kernel(self, conditions, models, options):
        from .kernels1d import transport_1d
        return transport_1d(1, self.half_size, conditions, models, options)
