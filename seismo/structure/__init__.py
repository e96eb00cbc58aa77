"""Stellar-structure interface: model profiles, seismic observables, oscillation modes.

Modellers compare observed (Δν, ΔΠ1) with stellar-structure predictions; this
package reads model profiles (`StellarProfile`), builds analytic models
(polytropes), and computes the seismic observables from them.
"""

from .builtin import BUILTIN_MODELS, builtin_model, is_builtin_model
from .composite import composite_polytrope
from .dipole import PredictedDipoleModes, predicted_dipole_modes
from .grid import (
    GridEstimate,
    ModelGrid,
    grid_details,
    grid_estimate,
    grid_estimate_for_result,
    load_demo_grid,
    read_grid,
)
from .observables import (
    Cavities,
    ModelObservables,
    asymptotic_dnu,
    mode_cavities,
    period_spacing,
    seismic_observables,
)
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
from .solver import Mode, dnu_from_radial_modes, modes, nonradial_modes, radial_modes
from .tracks import Track, read_track_table, read_tracks, track_from_profiles, tracks_table

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
    "seismic_observables",
    "ModelObservables",
    "Cavities",
    "asymptotic_dnu",
    "period_spacing",
    "mode_cavities",
    "PredictedDipoleModes",
    "predicted_dipole_modes",
    "Mode",
    "modes",
    "radial_modes",
    "nonradial_modes",
    "dnu_from_radial_modes",
    "Track",
    "read_tracks",
    "read_track_table",
    "track_from_profiles",
    "tracks_table",
    "BUILTIN_MODELS",
    "builtin_model",
    "is_builtin_model",
    "ModelGrid",
    "GridEstimate",
    "read_grid",
    "load_demo_grid",
    "grid_estimate",
    "grid_estimate_for_result",
    "grid_details",
]
