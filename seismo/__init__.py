"""seismo: red-giant asteroseismology from raw light curves.

Stage functions and result types
--------------------------------
read_lightcurve
    Read a light-curve file (FITS table, ECSV, CSV, text) into a `LightCurve`.
condition
    Clean, segment, normalise, clip and high-pass filter a `LightCurve`.
power_spectrum
    Calibrated single-sided power density spectrum (ppm²/μHz).
LightCurve, PowerSpectrum
    The canonical containers (days/ppm and μHz/ppm²/μHz).
"""

from .lightcurve import ConditionOptions, LightCurve, ReadOptions, condition, read_lightcurve
from .spectrum import PowerSpectrum, power_spectrum

__version__ = "0.1.0"

__all__ = [
    "LightCurve",
    "ReadOptions",
    "ConditionOptions",
    "read_lightcurve",
    "condition",
    "PowerSpectrum",
    "power_spectrum",
    "__version__",
]
