"""Real channel cross-sections solved in 2D.

:class:`Rectangle`, :class:`Trapezoid`, :class:`IsotropicEtch`,
:class:`Ellipse` and :class:`Polygon` plug into :func:`ekexplore.solve`
like the slit and the tube. Their kernel solves the flow, the Debye-Hueckel
or Poisson-Boltzmann potential and the electro-osmotic flow with linear
finite elements on graded mapped meshes (see ``METHOD.md``).
"""
from .shapes import KOH_SIDEWALL_ANGLE, Ellipse, IsotropicEtch, Polygon, Rectangle, Trapezoid
from .profiles import SectionProfiles

__all__ = ["Rectangle", "Trapezoid", "IsotropicEtch", "Ellipse", "Polygon",
           "KOH_SIDEWALL_ANGLE", "SectionProfiles"]
