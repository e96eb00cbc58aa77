"""Large separation Δν, the radial-mode pattern (ε, α, δν02) and échelle data.

Every function works on the signal-to-noise spectrum ``ps.density /
background``, where ``background`` is the granulation + white-noise model
on ``ps.freq`` (ppm²/μHz) that the background stage fitted. The analysis
window is ν_max ± 2.5 σ_env, with σ_env the Gaussian width of the
oscillation envelope (`relations.envelope_fwhm`, Mosser et al. 2012),
truncated at the top of the spectrum (the Nyquist frequency).

Public names
------------
large_separation    Coarse Δν from the autocorrelation of the SNR spectrum.
fit_radial_pattern  (Δν, ε, α, d02) and the l=0/l=2 mode list from the
                    universal red-giant pattern.
echelle_image       Smoothed SNR folded modulo Δν (data for a figure).
echelle_coordinates Échelle coordinates (x, y) of given frequencies.
DnuEstimate, RadialPattern, PModeList, EchelleImage   Result types.

"Cannot measure" is a result, not an exception: the field is ``None`` and a
flag from `FLAGS` says why (``FLAGS`` maps each flag to its meaning).
"""


from __future__ import annotations

from .autocorrelation import large_separation
from .echelle import echelle_coordinates, echelle_image
from .pattern import fit_radial_pattern, reconcile
from .types import FLAGS, DnuEstimate, EchelleImage, PModeList, RadialPattern

__all__ = [
    "large_separation",
    "fit_radial_pattern",
    "echelle_image",
    "echelle_coordinates",
    "reconcile",
    "DnuEstimate",
    "RadialPattern",
    "PModeList",
    "EchelleImage",
    "FLAGS",
]
