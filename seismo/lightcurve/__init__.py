"""Light curves: the `LightCurve` container, file readers and conditioning.

Public names
------------
LightCurve
    Time series in days and ppm with segment labels and provenance.
read_lightcurve
    Read a FITS table, ECSV, CSV or whitespace-text light curve.
ReadOptions
    Column names, quality mask, time and flux units for the readers.
condition
    Clean, segment, normalise, clip and high-pass filter a light curve.
ConditionOptions
    Settings of `condition`.
"""

from .conditioning import ConditionOptions, condition
from .core import TIME_UNITS_IN_DAYS, LightCurve
from .readers import READERS, ReadOptions, read_lightcurve

__all__ = [
    "LightCurve",
    "TIME_UNITS_IN_DAYS",
    "read_lightcurve",
    "ReadOptions",
    "READERS",
    "condition",
    "ConditionOptions",
]
