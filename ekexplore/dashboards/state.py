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
           "MATERIALS", "listed_shapes"]

#: Name of the custom symmetric electrolyte in the preset list.
CUSTOM = "custom z:z"
#: Range of the size slider [m].
SIZE_RANGE = (5e-9, 1e-3)
#: Range of the concentration slider [mol/m^3] (1 uM to 1 M).
CONCENTRATION_RANGE = (1e-3, 1e3)
#: Wall materials whose charge follows the chemistry: key -> (screen label,
#: source of the site parameters). "custom" is the user's own sites.
MATERIALS = {
    "silica": ("silica / glass", "Behrens & Grier 2001, J. Chem. Phys. 115, 6716: pK 7.5, "
               "8 sites/nm², Stern capacitance 2.9 F/m²"),
    "alumina": ("alumina (Al₂O₃)", "van Hal, Eijkel & Bergveld 1996, Adv. Colloid Interface "
                "Sci. 69, 31 (from memory): pK 6 and 10, 8 sites/nm²; its surface potential "
                "follows the pH by 42-55 mV/pH, below the 57.8 mV/pH measured on alumina "
                "gates (Nano Lett. 11, 2334, 2011): an estimate"),
    "tantalum pentoxide": ("tantalum pentoxide (Ta₂O₅)",
                           "van Hal, Eijkel & Bergveld 1996 (from memory): pK 2 and 4, "
                           "10 sites/nm²; near-Nernstian and hardly salt dependent, as "
                           "measured on Ta₂O₅ gates (Sens. Actuators B 24-25, 201, 1995)"),
    "custom": ("your own sites", "the pK, site density and Stern capacitance you type"),
}
#: pH the wall sees when the salt has no buffer and is not in air [-]: typed by
#: the user, default neutral water (7); in air, unbuffered water sits near 5.6.
SALT_PH_DEFAULT = 7.0
#: Stern capacitance shown first for the amphoteric oxides [F/m²]: no published
#: value was found for these site sets, so this is an example value from no
#: source, for the user to replace.
OXIDE_STERN_EXAMPLE = 0.8
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
    buffer = traitlets.Unicode("")                  # "" (none) or a key of ek.chemistry.BUFFERS
    buffer_concentration = traitlets.Float(10.0)    # buffer total [mol/m^3]
    pH = traitlets.Float(7.4)                       # buffer target pH [-]
    in_air = traitlets.Bool(False)                  # equilibrated with CO2 of air (420 ppm)
    wall_mode = traitlets.Unicode("zeta")           # "zeta" | "charge" | "material"
    material = traitlets.Unicode("silica")          # a key of MATERIALS
    salt_pH = traitlets.Float(SALT_PH_DEFAULT)      # pH at the wall, unbuffered salt [-]
    stern_capacitance = traitlets.Float(OXIDE_STERN_EXAMPLE)  # oxides, own sites [F/m^2]
    site_amphoteric = traitlets.Bool(False)         # own sites: two pK (amphoteric)
    site_pK = traitlets.Float(7.5)                  # own sites: (first) pK [-]
    site_pK2 = traitlets.Float(10.0)                # own sites: second pK [-]
    site_density = traitlets.Float(8e18)            # own sites [1/m^2]
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
    def electrolyte(self, concentration=None, pH=None):
        """The electrolyte: the salt at ``concentration`` [mol/m^3] (default the
        state's), with the buffer titrated to ``pH`` (default the state's) and
        CO2 from air if chosen. Arrays broadcast (the maps)."""
        c = self.concentration if concentration is None else concentration
        target = self.pH if pH is None else pH
        co2 = "air" if self.in_air else None
        if self.buffer or self.in_air:
            if self.salt == CUSTOM:
                raise ValueError("electrolyte: a custom z:z salt cannot be mixed with a buffer "
                                 "or air; choose a listed salt")
        if self.buffer:
            return ek.Electrolyte.buffer(self.buffer, self.buffer_concentration, pH=target,
                                         salt={self.salt: c}, temperature=self.temperature,
                                         co2=co2)
        if self.in_air:
            return ek.Electrolyte.mix({self.salt: c}, temperature=self.temperature, co2=co2)
        if self.salt == CUSTOM:
            return ek.Electrolyte.symmetric(int(self.valence), c, temperature=self.temperature)
        return ek.Electrolyte.salt(self.salt, c, temperature=self.temperature)

    def electrolyte_summary(self):
        """pH, ionic strength, conductivity and Debye length of the electrolyte, in
        screen units (one line of text)."""
        e = self.electrolyte()
        pH = e.pH
        if pH is not None:
            parts = [f"pH {float(pH):.2f}"]
        elif self.wall_mode == "material":
            parts = [f"pH {float(self.salt_pH):.2f} (typed: no buffer; sets the wall charge "
                     "only)"]
        else:
            parts = ["pH not set (unbuffered)"]
        parts.append(f"ionic strength {float(e.ionic_strength):.4g} mM")
        parts.append(f"conductivity {float(e.conductivity()) * 10:.4g} mS/cm")
        parts.append(f"Debye length {float(e.debye_length) * 1e9:.3g} nm")
        if e.titrant is not None:
            sub, amount = e.titrant
            parts.append(f"titrant {float(amount):.3g} mM {sub}")
        return " · ".join(parts)

    @property
    def ph_from_electrolyte(self):
        """True when the electrolyte has a pH of its own (a buffer, or air's CO2);
        otherwise the wall sees the typed ``salt_pH``."""
        return bool(self.buffer) or bool(self.in_air)

    def surface(self):
        """The wall material as an ``ek.Surface`` (for ``wall_mode == "material"``)."""
        m = self.material
        if m == "silica":
            return ek.Surface.silica()
        if m == "alumina":
            return ek.Surface.alumina(self.stern_capacitance)
        if m == "tantalum pentoxide":
            return ek.Surface.tantalum_pentoxide(self.stern_capacitance)
        if m == "custom":
            if self.site_amphoteric:
                return ek.Surface.amphoteric(self.site_pK, self.site_pK2, self.site_density,
                                             self.stern_capacitance, name="your sites")
            return ek.Surface(ek.Site(self.site_pK, self.site_density, name="your sites"),
                              self.stern_capacitance, name="your sites")
        raise ValueError(f"material {m!r} must be one of {', '.join(MATERIALS)}")

    def wall_pH(self):
        """The pH the wall's sites see [-]: the electrolyte's own (buffer or air),
        else the typed ``salt_pH``."""
        if self.ph_from_electrolyte:
            return float(np.asarray(self.electrolyte().pH))
        return float(self.salt_pH)

    def material_label(self):
        """Screen name of the chosen material."""
        return MATERIALS.get(self.material, (self.material,))[0]

    def material_summary(self):
        """The wall material in words: its sites, source, point of zero charge
        and the pH its sites see (one line of text)."""
        label, source = MATERIALS.get(self.material, (self.material, ""))
        surf = self.surface()
        parts = [f"{label}: {source}" if self.material != "custom" else label]
        if self.material == "custom":
            pk = (f"pK {self.site_pK:g} and {self.site_pK2:g}" if self.site_amphoteric
                  else f"pK {self.site_pK:g}")
            parts.append(f"{pk}, {self.site_density * 1e-18:.3g} sites/nm², Stern "
                         f"capacitance {self.stern_capacitance:.3g} F/m²")
        elif self.material != "silica":
            parts.append(f"Stern capacitance {self.stern_capacitance:.3g} F/m² (no published "
                         f"value was found for these sites: {OXIDE_STERN_EXAMPLE:g} is an "
                         "example from no source; type yours)")
        pzc = float(np.asarray(surf.point_of_zero_charge))
        if np.isfinite(pzc):
            parts.append(f"point of zero charge pH {pzc:.2f}")
        where = ("the electrolyte's" if self.ph_from_electrolyte
                 else "typed above, no buffer")
        parts.append(f"the sites see pH {self.wall_pH():.2f} ({where})")
        return " · ".join(parts)

    def wall(self, zeta=None, pH=None):
        """The wall; ``zeta`` (array) gives a constant-potential wall for the maps,
        ``pH`` (array) the pH a material wall sees (default: the electrolyte's,
        else the typed one)."""
        if self.wall_mode == "zeta" or zeta is not None:
            return ek.Wall(zeta=self.zeta if zeta is None else zeta,
                           stern_conductance=self.stern_conductance)
        if self.wall_mode == "charge":
            return ek.Wall(charge_density=self.charge_density,
                           stern_conductance=self.stern_conductance)
        if self.wall_mode == "material":
            if pH is None and not self.ph_from_electrolyte:
                pH = self.salt_pH
            return ek.Wall(surface=self.surface(), pH=pH,
                           stern_conductance=self.stern_conductance)
        raise ValueError(f"wall mode {self.wall_mode!r} must be 'zeta', 'charge' or "
                         "'material'")

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
        size, zeta, the pH a material wall sees (``pH``) or the buffer's pH
        (``electrolyte_pH``) as arrays for batch maps."""
        return ek.solve(self.channel(overrides.get("size")),
                        self.electrolyte(overrides.get("concentration"),
                                         overrides.get("electrolyte_pH")),
                        self.wall(overrides.get("zeta"), overrides.get("pH")),
                        model=self.check_model(model), **self.solve_options())

    @property
    def pure_salt(self):
        """True when the electrolyte is the salt alone (no buffer, not in air):
        its ionic strength is then proportional to the salt concentration."""
        return not (self.buffer or self.in_air)

    def buffer_pH_range(self):
        """The buffer's useful pH range at the state's temperature (pK ± 1, as
        ``ek.Electrolyte.buffer`` accepts), or None without a buffer."""
        if not self.buffer:
            return None
        start, _, k = ek.chemistry.BUFFERS[self.buffer]
        _, entry = ek.chemistry.lookup_substance(start)
        acid = ek.chemistry.ACIDS[next(iter(entry["acids"]))]
        pks = [float(np.asarray(p)) for p in acid.pKs(self.temperature)]
        mid = (pks[0], pks[-1]) if k is None else (pks[k], pks[k])
        return mid[0] - 1.0, mid[1] + 1.0

    def ionic_strength(self, concentration=None, pH=None):
        """The electrolyte's real ionic strength [mol/m^3], every ion counted
        (buffer ions, titrant, H+, OH-, carbonate from air)."""
        return np.asarray(self.electrolyte(concentration, pH).ionic_strength, dtype=float)

    #: salt concentrations [mol/m^3] over which the ionic strength is inverted
    SALT_GRID = np.logspace(-6.0, np.log10(5e3), 241)

    def salt_for_ionic_strength(self, ionic_strength, pH=None):
        """The salt concentration [mol/m^3] that brings the electrolyte to
        ``ionic_strength`` [mol/m^3] (buffer ions included), at the buffer pH
        ``pH`` (array, broadcast against ``ionic_strength``; default the
        state's). NaN where the ionic strength is out of reach: below that of
        the buffer (or carbonate) alone, or above 5 M of salt.

        A salt alone is exact (ionic strength proportional to it); otherwise
        log c is interpolated in log I on a grid of 241 salt concentrations
        (1 nM to 5 M), then corrected by one Newton step (the ionic strength
        reached is then within 1e-6 relative of the target).
        """
        I = np.asarray(ionic_strength, dtype=float)
        if self.pure_salt:
            return I / float(self.ionic_strength(1.0))
        pH = np.asarray(self.pH if pH is None else pH, dtype=float)
        I, pH = np.broadcast_arrays(I, pH)
        rows, inv = np.unique(pH.ravel(), return_inverse=True)
        grid = self.SALT_GRID
        table = self.ionic_strength(grid[None, :], rows[:, None])    # (rows, grid)
        out = np.empty(I.size)
        flat = I.ravel()
        for k in range(rows.size):   # one interpolation per pH row (a few dozen)
            sel = inv.ravel() == k
            logI = np.log(table[k])
            x = np.log(flat[sel])
            c = np.exp(np.interp(x, logI, np.log(grid)))
            out[sel] = np.where((x >= logI[0]) & (x <= logI[-1]), c, np.nan)
        out = out.reshape(I.shape)
        # one Newton step, dI/dc taken as the salt's own ionic strength per unit
        # concentration (the buffer barely moves as salt is added)
        ok = np.isfinite(out)
        if np.any(ok):
            f = float(np.asarray(ek.Electrolyte.salt(self.salt, 1.0).ionic_strength))
            got = self.ionic_strength(out[ok], pH[ok])
            out[ok] = np.maximum(out[ok] + (I[ok] - got) / f, 0.5 * out[ok])
        return out

    def ionic_strength_factor(self):
        """Ionic strength per unit salt concentration [-] of the chosen electrolyte."""
        if (self.buffer or self.in_air) and self.salt in ek.SALTS:
            # the maps vary the added salt; the buffer's own ionic strength is
            # not in this factor
            return float(np.asarray(ek.Electrolyte.salt(self.salt, 1.0).ionic_strength))
        return float(np.asarray(self.electrolyte(1.0).ionic_strength))

    # -- export -----------------------------------------------------------------
    def surface_code(self):
        """The Python expression that builds :meth:`surface` (numbers as floats)."""
        def f(v):
            return repr(float(v))
        m = self.material
        if m == "silica":
            return "ek.Surface.silica()"
        if m == "alumina":
            return f"ek.Surface.alumina({f(self.stern_capacitance)})"
        if m == "tantalum pentoxide":
            return f"ek.Surface.tantalum_pentoxide({f(self.stern_capacitance)})"
        if self.site_amphoteric:
            return (f"ek.Surface.amphoteric({f(self.site_pK)}, {f(self.site_pK2)}, "
                    f"{f(self.site_density)}, {f(self.stern_capacitance)}, name='your sites')")
        return (f"ek.Surface(ek.Site({f(self.site_pK)}, {f(self.site_density)}, "
                f"name='your sites'), {f(self.stern_capacitance)}, name='your sites')")

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

        co2 = ", co2='air'" if self.in_air else ""
        if self.buffer and self.buffer in ek.chemistry.BUFFERS:
            el = (f"ek.Electrolyte.buffer({q(self.buffer)}, {f(self.buffer_concentration)}, "
                  f"pH={f(self.pH)}, salt={{{q(self.salt)}: {f(self.concentration)}}}, "
                  f"temperature={f(self.temperature)}{co2})")
        elif self.in_air and self.salt in ek.SALTS:
            el = (f"ek.Electrolyte.mix({{{q(self.salt)}: {f(self.concentration)}}}, "
                  f"temperature={f(self.temperature)}{co2})")
        elif self.salt == CUSTOM:
            el = (f"ek.Electrolyte.symmetric({int(self.valence)}, {f(self.concentration)}, "
                  f"temperature={f(self.temperature)})")
        else:
            el = (f"ek.Electrolyte.salt({q(self.salt)}, {f(self.concentration)}, "
                  f"temperature={f(self.temperature)})")
        surface, note = [], ""
        if self.wall_mode == "zeta":
            wall = f"ek.Wall(zeta={f(self.zeta)}"
        elif self.wall_mode == "charge":
            wall = f"ek.Wall(charge_density={f(self.charge_density)}"
        else:
            surface = [f"surface = {self.surface_code()}"]
            if self.ph_from_electrolyte:
                wall = "ek.Wall(surface=surface"
                note = "  # the pH is the electrolyte's own"
            else:
                wall = f"ek.Wall(surface=surface, pH={f(self.salt_pH)}"
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
            *surface,
            f"wall = {wall}{note}",
            f"channel = {ch}",
            f"result = ek.solve(channel, electrolyte, wall, model={q(self.model)}{acc})",
            "print(result.matrix)  # [<u>, <j>] = matrix @ [-dp/dx, E], SI per unit area",
            *(["print(f'zeta {float(result.wall_potential) * 1e3:.4g} mV, sigma "
               "{float(result.wall_charge) * 1e3:.4g} mC/m^2, charged sites "
               "{float(result.charged_fraction) * 100:.4g} %')"]
              if self.wall_mode == "material" else []),
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
