"""Stellar-structure interface: model profiles, seismic observables, oscillation modes.

Modellers compare observed (Δν, ΔΠ1) with stellar-structure predictions; this
package reads model profiles (`StellarProfile`), builds analytic models
(polytropes), and computes the seismic observables from them.
"""

from .composite import composite_polytrope
from .polytropes import (
    LaneEmdenSolution,
    emden_solution,
    homogeneous_sphere,
    lane_emden,
    polytrope,
)
from .profiles import (
    ProfileCheck,
    ProfileWarning,
    StellarProfile,
    buoyancy_from_structure,
    check_profile,
)
from .reading import read_profile

__all__ = [
    "StellarProfile",
    "buoyancy_from_structure",
    "read_profile",
    "check_profile",
    "ProfileCheck",
    "ProfileWarning",
    "LaneEmdenSolution",
    "lane_emden",
    "polytrope",
    "homogeneous_sphere",
    "emden_solution",
    "composite_polytrope",
]
