"""ekexplore: electrokinetic transport in micro- and nanofluidic channels.

The package reads like the physics: medium -> electrolyte -> wall -> channel
-> double layer -> transport -> regimes.
"""
from .medium import water_relative_permittivity, water_permittivity, water_viscosity, water_density
from .electrolyte import Ion, ION_TABLE, SALTS, Electrolyte, debye_length
from . import chemistry, conductivity
from .chemistry import AcidBase
from .wall import (Wall, grahame_charge, grahame_potential, diffuse_layer_conductance,
                   bikerman_conductance)
from .surface import Surface, Site

from .channels import Channel, Slit, Tube, SHAPES, register_shape
from .doublelayer import ConvergenceError
from .transport import solve, Result
from .profiles import Profiles
from .models import estimated_model_errors
from .regimes import regime_verdict
from .sweep import sweep, design_table, read_sweep, SweepError, SweepWarning
from .sections import Rectangle, Trapezoid, IsotropicEtch, Ellipse, Polygon

__all__ = [
    "Channel", "Slit", "Tube", "SHAPES", "register_shape", "ConvergenceError",
    "solve", "Result", "Profiles", "estimated_model_errors", "regime_verdict",
    "sweep", "design_table", "read_sweep", "SweepError", "SweepWarning",
    "Rectangle", "Trapezoid", "IsotropicEtch", "Ellipse", "Polygon",
    "water_relative_permittivity", "water_permittivity", "water_viscosity", "water_density",
    "Ion", "ION_TABLE", "SALTS", "Electrolyte", "debye_length", "AcidBase",
    "Wall", "grahame_charge", "grahame_potential", "diffuse_layer_conductance",
    "bikerman_conductance", "Surface", "Site",
]
__version__ = "0.1.0"
