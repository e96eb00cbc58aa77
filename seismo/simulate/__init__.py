"""Synthetic red-giant light curves with known truth.

Public names
------------
StarParameters      The astrophysical truth of a synthetic star.
Observation         Sampling, window and instrument of an observation.
OBSERVATIONS        Observation presets ("long-cadence-4yr", "sector-2min", "sector-30min").
PRESETS             Star presets ("rgb-low", "rgb-mid", "rgb-high", "clump",
                    "secondary-clump", "quiet").
QUALITY_BITS        Bits set in the synthetic QUALITY column.
mode_table          Every mode component of a star (l, m, n_p, frequency, ζ, ...).
damped_oscillation  One stochastically excited mode on a regular grid.
simulate            Star + observation → `Simulation` (raw flux, truth, clean light curve).
model_psd           Limit spectrum of the simulated signal, ppm²/μHz.
Simulation          Result of `simulate`.
write_simulation    Write a simulation as FITS, CSV or text, with ``<stem>.truth.json``.
"""

from .modes import MODE_COLUMNS, damped_oscillation, mode_table
from .parameters import (
    LAYOUTS,
    OBSERVATIONS,
    PRESETS,
    QUALITY_BITS,
    STATES,
    Observation,
    StarParameters,
)
from .synthesis import Simulation, model_psd, simulate
from .writers import WRITE_FORMATS, truth_path, write_simulation

__all__ = [
    "StarParameters",
    "Observation",
    "OBSERVATIONS",
    "PRESETS",
    "QUALITY_BITS",
    "LAYOUTS",
    "STATES",
    "MODE_COLUMNS",
    "mode_table",
    "damped_oscillation",
    "simulate",
    "model_psd",
    "Simulation",
    "write_simulation",
    "truth_path",
    "WRITE_FORMATS",
]
