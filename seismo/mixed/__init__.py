"""Dipole mixed modes: period spacing ΔΠ1, coupling q, ε_g and core rotation.

The stage works on the signal-to-noise spectrum ``ps.density / background``
of one red giant whose radial pattern (Δν, ε, α, δν02) is already known.

Public names
------------
measure_mixed_modes  ΔΠ1, q, ε_g and the core rotational splitting from the
                     l=1 mixed modes of a spectrum.
stretched_period     Stretched period τ of given frequencies (Mosser et al. 2015).
PeriodSpacing        Result of `measure_mixed_modes` (frozen dataclass).
DipolePeaks          The significant l=1 peaks (aligned arrays).
FLAGS                Flags the stage may set, with their meaning.

"Cannot measure" is a result, not an exception: the field is ``None`` and a
flag from `FLAGS` says why.
"""

from __future__ import annotations

from .stage import measure_mixed_modes, resolves_period_spacing
from .stretched import stretched_period
from .types import FLAGS, DipolePeaks, PeriodSpacing

__all__ = [
    "resolves_period_spacing",
    "measure_mixed_modes",
    "stretched_period",
    "PeriodSpacing",
    "DipolePeaks",
    "FLAGS",
]
