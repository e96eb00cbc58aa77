"""Published relations of red-giant asteroseismology as small vectorised functions.

Every function accepts scalars or arrays (broadcast with NumPy rules) and
returns ``float`` for scalar input, otherwise an ``ndarray``. Frequencies are
in μHz, period spacings in s, amplitudes in ppm and power densities in
ppm²/μHz (single-sided). The paper behind each formula is named in its
docstring; coefficients recalled rather than read from the paper are marked
"from memory" (REFERENCES.md flag MEM).

Functions
---------
dnu_from_numax            Δν from ν_max (Stello et al. 2009).
envelope_fwhm             FWHM of the oscillation envelope (Mosser et al. 2012).
granulation_parameters    Two-component granulation scalings (Kallinger et al. 2014).
harvey_norm               Normalisation ξ of a Harvey-like profile.
granulation_psd           One granulation component, ppm²/μHz.
sinc_attenuation          Power attenuation by the finite integration time.
eps_p_from_dnu            ε of the universal pattern (Mosser et al. 2011).
curvature_from_dnu        Curvature α (Mosser et al. 2013).
d02_from_dnu, d01_from_dnu, d03_from_dnu   Small separations in units of Δν.
universal_pattern         p-mode frequencies ν_{n,l} of the universal pattern.
mixed_mode_frequencies    Dipole mixed modes from the asymptotic relation.
zeta                      Trapped fraction ζ = I_core / I of dipole mixed modes.
"""

from __future__ import annotations

from .mixed import mixed_mode_frequencies, zeta
from .pattern import (
    curvature_from_dnu,
    d01_from_dnu,
    d02_from_dnu,
    d03_from_dnu,
    eps_p_from_dnu,
    universal_pattern,
)
from .scalings import (
    FWHM_TO_SIGMA,
    STELLO_2009,
    dnu_from_numax,
    envelope_fwhm,
    granulation_parameters,
    granulation_psd,
    harvey_norm,
    sinc_attenuation,
)

__all__ = [
    "STELLO_2009",
    "FWHM_TO_SIGMA",
    "dnu_from_numax",
    "envelope_fwhm",
    "granulation_parameters",
    "harvey_norm",
    "granulation_psd",
    "sinc_attenuation",
    "eps_p_from_dnu",
    "curvature_from_dnu",
    "d02_from_dnu",
    "d01_from_dnu",
    "d03_from_dnu",
    "universal_pattern",
    "mixed_mode_frequencies",
    "zeta",
]
