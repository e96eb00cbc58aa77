"""seismo: red-giant asteroseismology from raw light curves.

Stage functions and result types
--------------------------------
read_lightcurve
    Read a light-curve file (FITS table, ECSV, CSV, text) into a `LightCurve`.
condition
    Clean, segment, normalise, clip and high-pass filter a `LightCurve`.
power_spectrum
    Calibrated single-sided power density spectrum (ppm²/μHz).
detect_oscillations
    Search for the oscillation excess; background + envelope fit with numax.
large_separation, fit_radial_pattern
    Δν from the autocorrelation; the universal-pattern fit (Δν, ε, l=0/2 modes).
measure_mixed_modes
    ΔΠ1, q, ε_g and core rotation from the dipole mixed modes.
scaling_estimates
    Mass, radius, log g, density, luminosity with Monte Carlo errors.
classify_state
    RGB / RC / 2CL / unknown with a probability.
analyze
    All of the above for one star: file or `LightCurve` → `Analysis` with a `StarResult`.
LightCurve, PowerSpectrum, Measurement, StarResult
    The canonical containers (days/ppm, μHz/ppm²/μHz) and the result schema.
"""

__version__ = "0.1.0"

from .background import detect_oscillations  # noqa: E402
from .lightcurve import (  # noqa: E402
    ConditionOptions,
    LightCurve,
    ReadOptions,
    condition,
    read_lightcurve,
)
from .mixed import measure_mixed_modes  # noqa: E402
from .pipeline import analyze  # noqa: E402
from .pmodes import fit_radial_pattern, large_separation  # noqa: E402
from .results import Measurement, StarResult  # noqa: E402
from .scaling import scaling_estimates  # noqa: E402
from .spectrum import PowerSpectrum, power_spectrum  # noqa: E402
from .state import classify_state  # noqa: E402

__all__ = [
    "LightCurve",
    "ReadOptions",
    "ConditionOptions",
    "read_lightcurve",
    "condition",
    "PowerSpectrum",
    "power_spectrum",
    "detect_oscillations",
    "large_separation",
    "fit_radial_pattern",
    "measure_mixed_modes",
    "scaling_estimates",
    "classify_state",
    "analyze",
    "Measurement",
    "StarResult",
    "__version__",
]
