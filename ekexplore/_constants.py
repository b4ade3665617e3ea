"""Physical constants used across the package, from ``scipy.constants`` (CODATA).

The one place they are named, so every module uses the same values.
"""
from __future__ import annotations

import numpy as np
from scipy import constants

__all__ = ["F", "R", "thermal_voltage"]

#: Faraday constant [C/mol] (CODATA, via scipy.constants).
F = constants.physical_constants["Faraday constant"][0]
#: Molar gas constant [J/(mol K)] (CODATA, via scipy.constants).
R = constants.R


def thermal_voltage(temperature):
    """kT/e [V] at ``temperature`` [K]."""
    return constants.k * np.asarray(temperature) / constants.e
