"""The dashboard state: validated inputs, independent of any GUI.

One :class:`State` holds every input the dashboards show, in SI units.
Widgets link to its traits, tests set them directly, and several views built
on one state stay in step (in JupyterLab the explorer, the regime maps and the
device calculator can share one). Building the physics objects
(:meth:`State.electrolyte`, :meth:`State.wall`, :meth:`State.channel`) goes
through the public ``ekexplore`` constructors, whose ValueErrors carry the
readable message a dashboard shows.
"""
from __future__ import annotations

import keyword

import numpy as np
import traitlets

import ekexplore as ek
from ekexplore.models import MODEL_CHOICES

__all__ = ["State", "CUSTOM", "SIZE_RANGE", "CONCENTRATION_RANGE", "SECTION_ACCURACY",
           "listed_shapes"]

#: Name of the custom symmetric electrolyte in the preset list.
CUSTOM = "custom z:z"
#: Range of the size slider [m].
SIZE_RANGE = (5e-9, 1e-3)
#: Range of the concentration slider [mol/m^3] (1 uM to 1 M).
CONCENTRATION_RANGE = (1e-3, 1e3)
#: Target accuracy of 2D-section solves in the dashboards [-] (interactive;
#: the 1D shapes use solve's default).
SECTION_ACCURACY = 1e-3


def listed_shapes():
    """Registered shapes the dashboards can present: every parameter has a
    ParameterInfo (a shape given by free-form data, such as a vertex list,
    is left to the Python API)."""
    return [name for name, cls in ek.channels.SHAPES.items()
            if cls.parameters and all(p in cls.parameter_info for p in cls.parameters)]


def shape_defaults(shape):
    """Default parameters of a registered shape, name -> value [SI or deg]."""
    cls = ek.channels.SHAPES[shape]
    return {p: float(cls.parameter_info[p].default) for p in cls.parameters}


def size_parameter(shape):
    """Name of the shape parameter driven by the size slider (its first length)."""
    cls = ek.channels.SHAPES[shape]
    for p in cls.parameters:
        if cls.parameter_info[p].kind == "length":
            return p
    return cls.parameters[0]


class State(traitlets.HasTraits):
    """Inputs of the dashboards, SI units (angles in degrees).

    Examples
    --------
    >>> s = State(concentration=10.0)
    >>> s.size_name, s.size
    ('gap', 1e-06)
    >>> s.shape = "Tube"
    >>> s.size_name, s.size
    ('diameter', 1e-06)
    """

    salt = traitlets.Unicode("KCl")                 # a key of ek.SALTS, or CUSTOM
    valence = traitlets.Int(1)                      # custom z:z only
    concentration = traitlets.Float(1.0)            # salt concentration [mol/m^3]
    temperature = traitlets.Float(298.15)           # [K]
    wall_mode = traitlets.Unicode("zeta")           # "zeta" | "charge"
    zeta = traitlets.Float(-0.05)                   # [V]
    charge_density = traitlets.Float(-0.01)         # [C/m^2]
    stern_conductance = traitlets.Float(0.0)        # [S]
    shape = traitlets.Unicode("Slit")               # a key of ek.channels.SHAPES
    shape_params = traitlets.Dict()                 # name -> value [m, deg or -]
    model = traitlets.Unicode("auto")               # auto | thin | dh | pb
    length = traitlets.Float(1e-2)                  # channel length [m]
    voltage = traitlets.Float(50.0)                 # applied voltage [V]
    pressure_drop = traitlets.Float(1e3)            # applied pressure drop [Pa]
    width = traitlets.Float(100e-6)                 # slit width [m] (its depth is the gap)
    channels = traitlets.Int(1)                     # identical channels in parallel [-]
    max_pressure = traitlets.Float(500e3)           # pressure rating of the chip [Pa]
    max_voltage = traitlets.Float(1000.0)           # voltage limit of the supply [V]

    MODELS = MODEL_CHOICES

    def __init__(self, **kwargs):
        params = kwargs.pop("shape_params", None)
        size = kwargs.pop("size", None)
        super().__init__(**kwargs)
        self.shape_params = dict(shape_defaults(self.shape), **(params or {}))
        if size is not None:
            self.size = size

    @traitlets.observe("shape")
    def _shape_changed(self, change):
        """A new shape starts from its defaults but keeps the sizes the user set
        where it has them: parameters of the same name, a slit's gap as the
        depth (and the slit width as the width), and otherwise the main size."""
        new, old = change["new"], change["old"]
        if new not in ek.channels.SHAPES:
            return  # reported by channel()
        cls = ek.channels.SHAPES[new]
        defaults = shape_defaults(new)
        before = dict(self.shape_params)
        main_old = before.get(size_parameter(old)) if old in ek.channels.SHAPES else None
        main_new = size_parameter(new)
        # the new shape's default proportions, scaled to the size the user set
        params = dict(defaults)
        if main_old:
            f = float(main_old) / defaults[main_new]
            params = {k: (v * f if cls.parameter_info[k].kind == "length" else v)
                      for k, v in defaults.items()}
        # then the user's own sizes under the same name (a slit's gap is a depth)
        if old == "Slit":
            before.setdefault("depth", before.get("gap"))
            before.setdefault("width", self.width)
        if new == "Slit" and "depth" in before:
            before["gap"] = before["depth"]
        kept = dict(params, **{k: float(v) for k, v in before.items()
                               if k in params and v is not None})
        for candidate in (kept, params, defaults):
            try:
                cls(**candidate)
            except ValueError:
                continue
            params = candidate
            break
        self.shape_params = params

    # -- the size slider --------------------------------------------------------
    @property
    def size_name(self):
        return size_parameter(self.shape)

    @property
    def size(self):
        """The main size of the shape [m] (gap, diameter, width...)."""
        return self.shape_params[self.size_name]

    @size.setter
    def size(self, value):
        self.shape_params = dict(self.shape_params, **{self.size_name: float(value)})

    def set_param(self, name, value):
        """Set one shape parameter (replacing the dict, so observers fire)."""
        self.shape_params = dict(self.shape_params, **{name: float(value)})

    # -- physics objects through the public API ---------------------------------
    def electrolyte(self, concentration=None):
        c = self.concentration if concentration is None else concentration
        if self.salt == CUSTOM:
            return ek.Electrolyte.symmetric(int(self.valence), c, temperature=self.temperature)
        return ek.Electrolyte.salt(self.salt, c, temperature=self.temperature)

    def wall(self, zeta=None):
        if self.wall_mode == "zeta" or zeta is not None:
            return ek.Wall(zeta=self.zeta if zeta is None else zeta,
                           stern_conductance=self.stern_conductance)
        if self.wall_mode == "charge":
            return ek.Wall(charge_density=self.charge_density,
                           stern_conductance=self.stern_conductance)
        raise ValueError(f"wall mode {self.wall_mode!r} must be 'zeta' or 'charge'")

    def channel(self, size=None):
        if self.shape not in ek.channels.SHAPES:
            raise ValueError(f"shape {self.shape!r} is not registered; choose one of "
                             f"{', '.join(ek.channels.SHAPES)}")
        params = dict(self.shape_params)
        if size is not None:
            params[self.size_name] = size
        if self.shape == "Slit":
            params["width"] = self.width
        return ek.channels.SHAPES[self.shape](**params)

    @property
    def narrow_slit(self):
        """True when a slit is under ten gaps wide: its side walls matter."""
        return self.shape == "Slit" and self.width < 10.0 * self.size

    def copy(self):
        """An independent snapshot (for a computation running on a thread)."""
        values = self.trait_values()
        params = values.pop("shape_params")
        return State(shape_params=params, **values)

    @property
    def is_section(self):
        """True for 2D cross-sections (slow: computed in the background)."""
        cls = ek.channels.SHAPES.get(self.shape)
        return cls is not None and cls.kind == "section"

    def solve_options(self):
        """Extra keyword arguments of ek.solve for this shape."""
        return {"accuracy": SECTION_ACCURACY} if self.is_section else {}

    def check_model(self, model=None):
        model = self.model if model is None else model
        if model not in self.MODELS:
            raise ValueError(f"model {model!r} must be one of {', '.join(self.MODELS)}")
        return model

    def solve(self, model=None, **overrides):
        """``ek.solve`` at this state; ``overrides`` may give concentration,
        size or zeta arrays for batch maps."""
        return ek.solve(self.channel(overrides.get("size")),
                        self.electrolyte(overrides.get("concentration")),
                        self.wall(overrides.get("zeta")),
                        model=self.check_model(model), **self.solve_options())

    def ionic_strength_factor(self):
        """Ionic strength per unit salt concentration [-] of the chosen electrolyte."""
        return float(np.asarray(self.electrolyte(1.0).ionic_strength))

    # -- export -----------------------------------------------------------------
    def code(self):
        """A short runnable Python cell that reproduces the computation.

        Every name taken from the state is written as a quoted string literal
        (or checked to be a plain registered identifier), and every number as
        a Python float, so the cell reads cleanly and a crafted state cannot
        inject code into it.
        """
        def f(v):
            return repr(float(v))

        def q(v):
            return repr(str(v))

        if self.salt == CUSTOM:
            el = (f"ek.Electrolyte.symmetric({int(self.valence)}, {f(self.concentration)}, "
                  f"temperature={f(self.temperature)})")
        else:
            el = (f"ek.Electrolyte.salt({q(self.salt)}, {f(self.concentration)}, "
                  f"temperature={f(self.temperature)})")
        if self.wall_mode == "zeta":
            wall = f"ek.Wall(zeta={f(self.zeta)}"
        else:
            wall = f"ek.Wall(charge_density={f(self.charge_density)}"
        wall += (f", stern_conductance={f(self.stern_conductance)})" if self.stern_conductance
                 else ")")
        cls = ek.channels.SHAPES.get(self.shape)
        params = {str(k): float(v) for k, v in self.shape_params.items()}
        if self.shape == "Slit":
            params["width"] = float(self.width)
        plain = cls is not None and all(
            k.isidentifier() and not keyword.iskeyword(k) and
            (k in cls.parameters or (self.shape == "Slit" and k == "width"))
            for k in params)
        if plain:
            args = ", ".join(f"{k}={f(v)}" for k, v in params.items())
        else:   # names that are not plain parameters: passed as quoted keys
            args = "**{" + ", ".join(f"{q(k)}: {f(v)}" for k, v in params.items()) + "}"
        if (cls is not None and self.shape.isidentifier()
                and getattr(ek, self.shape, None) is cls):
            ch = f"ek.{self.shape}({args})"
        else:
            ch = f"ek.channels.SHAPES[{q(self.shape)}]({args})"
        acc = "".join(f", {k}={f(v)}" for k, v in self.solve_options().items())
        return "\n".join([
            "import ekexplore as ek",
            "",
            f"electrolyte = {el}",
            f"wall = {wall}",
            f"channel = {ch}",
            f"result = ek.solve(channel, electrolyte, wall, model={q(self.model)}{acc})",
            "print(result.matrix)  # [<u>, <j>] = matrix @ [-dp/dx, E], SI per unit area",
            "",
            "# driving, as on the screen",
            f"length = {f(self.length)}  # channel length [m]",
            f"voltage = {f(self.voltage)}  # applied voltage [V]",
            f"pressure_drop = {f(self.pressure_drop)}  # applied pressure drop [Pa]",
            f"channels = {int(self.channels)}  # identical channels in parallel",
            "c = result.conductances(length)  # one whole channel, SI",
            "flow = channels * (c['flow_per_pressure'] * pressure_drop"
            " + c['flow_per_volt'] * voltage)  # [m^3/s]",
            "current = channels * (c['current_per_pressure'] * pressure_drop"
            " + c['conductance'] * voltage)  # [A]",
            "print(f'flow rate {float(flow) * 6e4 * 1e6:.4g} uL/min, "
            "current {float(current) * 1e9:.4g} nA')",
        ]) + "\n"
