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
                    verdict=verdict(r, thin, state), derived=derived(r, state))


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
        ("electroviscous ratio", num(scalar(r.electroviscous_ratio)),
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
        f"L11 hydraulic,{m[0, 0]!r},m^2/(Pa s)",
        f"L12 electroosmotic,{m[0, 1]!r},m^2/(V s)",
        f"L21 streaming,{m[1, 0]!r},A/(m Pa)",
        f"L22 conductive,{m[1, 1]!r},S/m",
        f"channel length,{state.length!r},m",
    ]
    units = {"flow_per_pressure": "m^3/(s Pa)", "flow_per_volt": "m^3/(s V)",
             "current_per_pressure": "A/Pa", "conductance": "S"}
    rows += [f"{k},{v!r},{units.get(k, '')}" for k, v in ex.conductances.items()]
    rows.append(f"model,{ex.model},")
    rows.append(f"reciprocity residual,{scalar(ex.result.reciprocity_residual)!r},-")
    return "\n".join(rows) + "\n"


def profiles_csv(ex):
    """The profiles as CSV text (SI units in the column names)."""
    frame = ex.profiles.to_frame()
    buf = io.StringIO()
    frame.to_csv(buf, index=False)
    return buf.getvalue()
