"""Real channel cross-sections solved in 2D.

:class:`Rectangle`, :class:`Trapezoid`, :class:`IsotropicEtch`,
:class:`Ellipse` and :class:`Polygon` plug into :func:`ekexplore.solve`
like the slit and the tube. Their kernel solves the flow, the Debye-Hueckel
or Poisson-Boltzmann potential and the electro-osmotic flow with linear
finite elements on graded mapped meshes (see ``METHOD.md``).

Validity: as for :func:`ekexplore.solve` (continuum point-ion
electrokinetics, Stokes flow, no slip at the wall, a long straight channel).
The ``accuracy`` option of ``solve`` sets the 2D resolution; the result's
``error_estimate`` reports what was achieved.

Examples
--------
>>> import ekexplore as ek
>>> r = ek.solve(Rectangle(width=400e-9, depth=100e-9), ek.Electrolyte.salt("KCl", 1.0),
...              ek.Wall(zeta=-0.05), model="pb", accuracy=1e-3)
>>> bool(r.electroosmotic > 0), float(r.reciprocity_residual) < 1e-8
(True, True)
>>> float(r.error_estimate) < 1e-3
True
"""
from .shapes import KOH_SIDEWALL_ANGLE, Ellipse, IsotropicEtch, Polygon, Rectangle, Trapezoid
from .profiles import SectionProfiles

__all__ = ["Rectangle", "Trapezoid", "IsotropicEtch", "Ellipse", "Polygon",
           "KOH_SIDEWALL_ANGLE", "SectionProfiles"]
