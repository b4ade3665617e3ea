"""Compute for the dashboards: plain functions of a :class:`State`.

Only the public ``ekexplore`` API is used. Each function returns plain
numbers, arrays and strings that a view shows as they are, so tests can
compare them with ``ekexplore.solve`` directly.
"""
from __future__ import annotations

import io
from dataclasses import dataclass, field

import numpy as np
from scipy import constants

import ekexplore as ek

from .units import eng, num

__all__ = ["Explored", "explore", "verdict", "matrix_csv", "profiles_csv"]


def scalar(x):
    """A 0-d result as a Python float (first element of an array)."""
    return float(np.asarray(x, dtype=float).reshape(-1)[0])


def text(x):
    """A 0-d string result (e.g. the model used) as a Python str."""
    return str(np.asarray(x).reshape(-1)[0])


@dataclass
class Curves:
    """Fields along one line across the section, for the profile plots."""

    x: np.ndarray                  # position along the line [m]
    from_wall: bool                # x measured from the wall (2D cut) or from the centre (1D)
    label: str                     # what x is
    potential: np.ndarray          # [V]
    concentrations: np.ndarray     # (n_ions, n) [mol/m^3]
    ion_names: tuple
    charge_density: np.ndarray     # [C/m^3]
    velocity_pressure: np.ndarray  # [m/s]
    velocity_electroosmotic: np.ndarray
    current_migration: np.ndarray  # [A/m^2]
    current_convective: np.ndarray
    debye_length: float            # [m]
    wall: float                    # x of the wall [m]


def curves(prof):
    """Profile curves of a 1D ``Profiles`` or, for a 2D section, along the cut
    from the wall point nearest the centre to the centre."""
    f = lambda a: np.asarray(a, dtype=float).reshape(-1)  # noqa: E731
    if hasattr(prof, "wall_normal"):
        cut = prof.wall_normal()
        conc = np.stack([f(cut[f"c_{n}"]) for n in prof.ion_names])
        return Curves(x=f(cut["distance"]), from_wall=True,
                      label="distance from the nearest wall, along the cut to the centre",
                      potential=f(cut["potential"]), concentrations=conc,
                      ion_names=tuple(prof.ion_names), charge_density=f(cut["charge_density"]),
                      velocity_pressure=f(cut["velocity_pressure"]),
                      velocity_electroosmotic=f(cut["velocity_electroosmotic"]),
                      current_migration=f(cut["current_migration"]),
                      current_convective=f(cut["current_convective"]),
                      debye_length=float(prof.debye_length), wall=0.0)
    x = f(prof.coordinate)
    name = "mid-plane" if prof.coordinate_name == "y" else "axis"
    conc = np.asarray(prof.concentrations, dtype=float).reshape(len(prof.ion_names), -1)
    return Curves(x=x, from_wall=False, label=f"distance from the {name} {prof.coordinate_name}",
                  potential=f(prof.potential), concentrations=conc,
                  ion_names=tuple(prof.ion_names), charge_density=f(prof.charge_density),
                  velocity_pressure=f(prof.velocity_pressure),
                  velocity_electroosmotic=f(prof.velocity_electroosmotic),
                  current_migration=f(prof.current_migration),
                  current_convective=f(prof.current_convective),
                  debye_length=scalar(prof.debye_length), wall=float(np.max(x)))


def field_images(prof, n=140):
    """Images of a 2D section's fields on a regular grid, and two cuts."""
    if not hasattr(prof, "on_grid"):
        return None
    W = float(np.ptp(prof.x))
    H = float(np.ptp(prof.y))
    nx = n if W >= H else max(24, int(round(n * W / H)))
    ny = n if H > W else max(24, int(round(n * H / W)))
    g = prof.on_grid(nx, ny)
    normal = prof.wall_normal(n=50)
    centre = prof.centreline()
    return dict(x0=float(g["x"][0]), y0=float(g["y"][0]), width=W, height=H,
                potential=np.asarray(g["potential"], dtype=float),
                velocity_electroosmotic=np.asarray(g["velocity_electroosmotic"], dtype=float),
                velocity_pressure=np.asarray(g["velocity_pressure"], dtype=float),
                charge_density=np.asarray(g["charge_density"], dtype=float),
                normal=(np.asarray(normal["x"], dtype=float), np.asarray(normal["y"], dtype=float)),
                centre=dict((k, np.asarray(v, dtype=float)) for k, v in centre.items()))


@dataclass
class Explored:
    """Everything the explorer shows for one state."""

    result: object                  # ek.solve at the chosen model
    thin: object                    # ek.solve at model="thin" (for the verdict)
    profiles: object                # result.profiles(G, E)
    pressure_gradient: float        # -dp/dx [Pa/m] used for the profiles
    field: float                    # E [V/m] used for the profiles
    matrix: np.ndarray              # (2, 2) SI per unit area
    conductances: dict              # whole channel, SI
    model: str
    verdict: str
    derived: list = field(default_factory=list)   # (name, value text, meaning)
    curves: Curves | None = None
    images: dict | None = None


def explore(state):
    """Solve at the state's inputs; raises ValueError for bad inputs."""
    r = state.solve()
    thin = r if state.model == "thin" else state.solve("thin")
    G = state.pressure_drop / state.length
    E = state.voltage / state.length
    prof = r.profiles(pressure_gradient=G, field=E)
    matrix = np.asarray(r.matrix, dtype=float).reshape(2, 2)
    cond = {k: scalar(v) for k, v in r.conductances(state.length).items()}
    return Explored(result=r, thin=thin, profiles=prof, pressure_gradient=G, field=E,
                    matrix=matrix, conductances=cond, model=text(r.model),
                    verdict=verdict(r, thin, state), derived=derived(r, state),
                    curves=curves(prof), images=field_images(prof))


def eo_overestimate(r, thin):
    """Slip-model electroosmotic coefficient over the chosen model's [-]."""
    return scalar(thin.electroosmotic) / scalar(r.electroosmotic)


def verdict(r, thin, state):
    """The regime in words, from the numbers on screen (``ek.regime_verdict``)."""
    ratio = eo_overestimate(r, thin)
    words = ek.regime_verdict(scalar(r.kappa_size), ratio, scalar(r.dukhin),
                              scalar(r.counterion_share))
    phi = abs(scalar(r.wall_potential)) / (constants.k * scalar(r.temperature) / constants.e)
    if phi > 1:
        words += f"; |zeta| = {num(phi, 2)} kT/e, beyond the linear (Debye-Hueckel) range"
    return words


def derived(r, state):
    """(name, value with unit, one-line meaning) for each derived quantity."""
    L = state.length
    cond = r.conductances(L)
    rows = [
        ("electroosmotic mobility",
         f"{scalar(r.electroosmotic_mobility) * 1e8:.3g} µm·cm/(V·s)",
         "mean flow speed per unit applied field"),
        ("streaming potential coefficient",
         eng(scalar(r.streaming_potential_coefficient) * 1e3, "V") + " per kPa",
         "open-circuit voltage built up per unit pressure drop"),
        ("streaming current (whole channel)",
         eng(scalar(cond["current_per_pressure"]) * 1e3, "A") + " per kPa",
         "short-circuit current per unit pressure drop"),
        ("electroviscous ratio", num(scalar(r.electroviscous_ratio), 6),
         "apparent over true viscosity: the streaming potential slows pressure flow"),
        ("Dukhin number", num(scalar(r.dukhin)),
         "surface over bulk conduction"),
        ("coupling degree q²", num(scalar(r.coupling_degree)),
         "0: flow and current independent; 1: perfectly coupled"),
        ("maximum efficiency", f"{scalar(r.max_efficiency) * 100:.3g} %",
         "best electrical-to-mechanical (or back) energy conversion"),
        ("counter-ion share", f"{scalar(r.counterion_share) * 100:.3g} %",
         "fraction of the conduction current carried by counter-ions"),
        ("Debye length", eng(scalar(r.debye_length), "m"),
         "thickness of the diffuse charge layer"),
        ("κ·a", num(scalar(r.kappa_size)),
         "channel half-size in Debye lengths"),
        ("wall potential", eng(scalar(r.wall_potential), "V"),
         "potential at the shear plane (ζ)"),
        ("wall charge", f"{scalar(r.wall_charge) * 1e3:.3g} mC/m²",
         "surface charge balancing the diffuse layer"),
        ("bulk conductivity", f"{scalar(r.bulk_conductivity) * 10:.3g} mS/cm",
         "conductivity of the reservoir electrolyte"),
        ("reciprocity residual", num(scalar(r.reciprocity_residual), 2),
         "mismatch of streaming and electroosmotic coefficients (Onsager check)"),
    ]
    return rows


def matrix_csv(ex, state):
    """The matrix per area and the whole-channel figures as CSV text (SI)."""
    m = ex.matrix
    rows = [
        "quantity,value,unit",
        f"L11 hydraulic,{float(m[0, 0])!r},m^2/(Pa s)",
        f"L12 electroosmotic,{float(m[0, 1])!r},m^2/(V s)",
        f"L21 streaming,{float(m[1, 0])!r},A/(m Pa)",
        f"L22 conductive,{float(m[1, 1])!r},S/m",
        f"channel length,{float(state.length)!r},m",
    ]
    units = {"flow_per_pressure": "m^3/(s Pa)", "flow_per_volt": "m^3/(s V)",
             "current_per_pressure": "A/Pa", "conductance": "S"}
    rows += [f"{k},{float(v)!r},{units.get(k, '')}" for k, v in ex.conductances.items()]
    rows.append(f"model,{ex.model},")
    rows.append(f"reciprocity residual,{scalar(ex.result.reciprocity_residual)!r},-")
    return "\n".join(rows) + "\n"


def profiles_csv(ex):
    """The profiles as CSV text (SI units in the column names)."""
    frame = ex.profiles.to_frame()
    buf = io.StringIO()
    frame.to_csv(buf, index=False)
    return buf.getvalue()


# ---------------------------------------------------------------------------
# regime maps
# ---------------------------------------------------------------------------
#: colour layers of the regime maps: key -> (title, colour scale, low, high)
LAYERS = {
    "eo_fraction": ("electroosmotic coefficient / slip value [-]", "linear", 0.0, 1.0),
    "thin_error": ("relative error of the thin (slip) model vs pb, electroosmotic [-]",
                   "log", 1e-4, 10.0),
    "dh_error": ("relative error of the Debye–Hückel model vs pb, electroosmotic [-]",
                 "log", 1e-4, 10.0),
    "dukhin": ("Dukhin number Du [-]", "log", 1e-3, 1e3),
    "counterion_share": ("counter-ion share of the conduction current [-]", "linear", 0.5, 1.0),
}
#: kappa*half-size range the solver accepts (ek.solve raises outside it)
KAPPA_SIZE_RANGE = (1e-3, 1e5)
#: contour levels of kappa*half-size
KAPPA_LEVELS = (1.0, 10.0, 100.0)


def _edges_log(lo, hi, n):
    e = np.logspace(np.log10(lo), np.log10(hi), n + 1)
    return e[:-1], e[1:], np.sqrt(e[:-1] * e[1:])


def _edges_lin(lo, hi, n):
    e = np.linspace(lo, hi, n + 1)
    return e[:-1], e[1:], 0.5 * (e[:-1] + e[1:])


def half_size_ratio(state):
    """Half-size over the size slider's parameter for the current shape [-]."""
    ch = state.channel()
    return scalar(ch.half_size) / state.size


def map_proxy(state):
    """The state whose channel the maps solve, and the factor from the state's
    size to that channel's size. A 2D section is mapped as the slit of the same
    half-size: one 2D solve per pixel would take minutes."""
    if not state.is_section:
        return state, 1.0
    ratio = half_size_ratio(state)
    proxy = state.copy()
    proxy.shape = "Slit"
    return proxy, 2.0 * ratio


def _layers(state, concentration, size, zeta=None):
    """Every colour layer at flat arrays of points: one batch solve per model."""
    state, factor = map_proxy(state)
    kw = dict(concentration=concentration, size=size * factor)
    if zeta is not None:
        kw["zeta"] = zeta
    pb = state.solve("pb", **kw)
    thin = state.solve("thin", **kw)
    dh = state.solve("dh", **kw)
    ref = np.asarray(pb.electroosmotic, dtype=float)
    return {
        "eo_fraction": ref / np.asarray(thin.electroosmotic, dtype=float),
        "thin_error": np.abs(np.asarray(thin.electroosmotic) - ref) / np.abs(ref),
        "dh_error": np.abs(np.asarray(dh.electroosmotic) - ref) / np.abs(ref),
        "dukhin": np.asarray(pb.dukhin, dtype=float),
        "counterion_share": np.asarray(pb.counterion_share, dtype=float),
        "kappa_size": np.asarray(pb.kappa_size, dtype=float),
    }


def map_size(state, n=36):
    """Map over ionic strength [mol/m^3] x channel size [m] at the state's wall.

    Returns a dict of flat arrays over the valid cells (cell edges and
    centres, each layer), the kappa*size contour lines and the operating point.
    """
    from .state import CONCENTRATION_RANGE, SIZE_RANGE
    factor = state.ionic_strength_factor()
    i0, i1, ic = _edges_log(CONCENTRATION_RANGE[0], CONCENTRATION_RANGE[1], n)
    s0, s1, sc = _edges_log(SIZE_RANGE[0], SIZE_RANGE[1], n)
    I, S = np.meshgrid(ic, sc, indexing="ij")
    lam = ek.debye_length(I, state.temperature)
    ratio = half_size_ratio(state)
    ka = ratio * S / lam
    ok = (ka >= KAPPA_SIZE_RANGE[0] * 1.01) & (ka <= KAPPA_SIZE_RANGE[1] * 0.99)
    layers = _layers(state, I[ok] / factor, S[ok])
    ii, ss = np.nonzero(ok)
    out = dict(left=i0[ii], right=i1[ii], bottom=s0[ss], top=s1[ss], x=ic[ii], y=sc[ss],
               **layers)
    # contours kappa*half-size = level: size = level * lambda_D / ratio
    Ic = np.logspace(np.log10(CONCENTRATION_RANGE[0]), np.log10(CONCENTRATION_RANGE[1]), 60)
    lam_c = np.asarray(ek.debye_length(Ic, state.temperature), dtype=float)
    contours = {lev: (Ic, lev * lam_c / ratio) for lev in KAPPA_LEVELS}
    point = (state.concentration * factor, state.size)
    return {"cells": out, "contours": contours, "point": point, "n_valid": int(ok.sum()),
            "n_cells": n * n}


def map_kappa_zeta(state, n=36, phi_max=8.0):
    """Map over kappa*half-size x dimensionless wall potential e|zeta|/kT.

    The salt concentration is the state's; the size and zeta vary. The sign
    of zeta is the state's (or of the computed wall potential for a
    constant-charge wall).
    """
    k0, k1, kc = _edges_log(0.1, 1000.0, n)
    p0, p1, pc = _edges_lin(0.0, phi_max, n)
    pc = np.maximum(pc, 1e-3)
    K, P = np.meshgrid(kc, pc, indexing="ij")
    lam = scalar(state.electrolyte().debye_length)
    ratio = half_size_ratio(state)
    VT = constants.k * state.temperature / constants.e
    here = state.solve("thin" if state.wall_mode == "zeta" else state.model)
    sign = -1.0 if scalar(here.wall_potential) <= 0 else 1.0
    size = K * lam / ratio
    ok = (size >= ek.channels.SIZE_MIN * 1.001) & (size <= ek.channels.SIZE_MAX * 0.999)
    layers = _layers(state, state.concentration, size[ok], zeta=sign * P[ok] * VT)
    kk, pp = np.nonzero(ok)
    out = dict(left=k0[kk], right=k1[kk], bottom=p0[pp], top=p1[pp], x=kc[kk], y=pc[pp],
               **layers)
    point = (scalar(here.kappa_size), abs(scalar(here.wall_potential)) / VT)
    return {"cells": out, "point": point, "debye_length": lam, "ratio": ratio,
            "sign": sign, "thermal_voltage": VT, "n_valid": int(ok.sum()), "n_cells": n * n}


# ---------------------------------------------------------------------------
# device calculator
# ---------------------------------------------------------------------------
@dataclass
class Device:
    """Whole-channel figures of a device at the state's length, voltage, pressure."""

    result: object
    conductances: dict            # SI
    flow: float                   # Q [m^3/s]
    current: float                # I [A]
    power: float                  # V I [W]
    stall_pressure: float         # [Pa]
    free_flow: float              # [m^3/s]
    streaming_voltage: float      # open-circuit voltage at the pressure drop [V]
    streaming_current: float      # short-circuit current at the pressure drop [A]
    max_efficiency: float         # [-]
    load: np.ndarray              # load resistances [ohm]
    load_power: np.ndarray        # [W]
    load_efficiency: np.ndarray   # [-]
    best_load: float              # load of maximum efficiency [ohm]


def device(state, n_load=121):
    """Flow, current and power of the channel; pump and generator curves.

    Whole channel (Q = a dp + b V, I = c dp + g V with the conductances of
    ``Result.conductances``). Generator: the pressure drop drives the channel
    into a load R; the current I = c dp + g V returns through R, so
    V = -c dp R / (1 + g R), load power V^2/R and efficiency
    V^2/R / (Q dp).
    """
    r = state.solve()
    c = {k: scalar(v) for k, v in r.conductances(state.length).items()}
    a, b, cc, g = (c["flow_per_pressure"], c["flow_per_volt"], c["current_per_pressure"],
                   c["conductance"])
    dp, V = state.pressure_drop, state.voltage
    Q = a * dp + b * V
    I = cc * dp + g * V
    stall, free = (scalar(x) for x in r.pump_limits(V, state.length))
    Rc = 1.0 / g
    R = Rc * np.logspace(-3, 3, n_load)
    Vl = -cc * dp * R / (1.0 + g * R)
    Pl = Vl**2 / R
    Ql = a * dp + b * Vl
    with np.errstate(divide="ignore", invalid="ignore"):
        eff = np.where(Ql * dp > 0, Pl / (Ql * dp), 0.0)
    q2 = scalar(r.coupling_degree)
    best = Rc / np.sqrt(max(1.0 - q2, 1e-300))
    return Device(result=r, conductances=c, flow=Q, current=I, power=V * I,
                  stall_pressure=stall, free_flow=free, streaming_voltage=-cc * dp / g,
                  streaming_current=cc * dp, max_efficiency=scalar(r.max_efficiency),
                  load=R, load_power=Pl, load_efficiency=eff, best_load=best)
