"""Stellar-structure interface: model profiles, seismic observables, oscillation modes.

Modellers compare observed (Δν, ΔΠ1) with stellar-structure predictions; this
package reads model profiles (`StellarProfile`), builds analytic models
(polytropes), and computes the seismic observables from them.
"""

from .polytropes import LaneEmdenSolution, homogeneous_sphere, lane_emden, polytrope
from .profiles import StellarProfile, buoyancy_from_structure

__all__ = [
    "StellarProfile",
    "buoyancy_from_structure",
    "LaneEmdenSolution",
    "lane_emden",
    "polytrope",
    "homogeneous_sphere",
]
