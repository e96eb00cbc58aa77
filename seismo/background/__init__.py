"""Detection of solar-like oscillations, and the background + envelope fit.

The model of the power density spectrum is

.. math::

    M(\\nu) = T^2(\\nu)\\,\\Big[\\eta^2(\\nu)\\Big(\\sum_{i=1}^{2}
      \\frac{\\xi a_i^2/b_i}{1+(\\nu/b_i)^4}
      + H\\,e^{-(\\nu-\\nu_\\mathrm{max})^2/2w^2}\\Big) + W\\Big],

two granulation components with exponent 4 (Kallinger et al. 2014, A&A 570,
A41), a Gaussian oscillation envelope of height ``H`` and width ``w`` at
``numax``, white noise ``W``; η² = sinc²(πν/2ν_Nyq) is the attenuation from
integrating over each exposure (Chaplin et al. 2011; REFERENCES.md §3d) and
T² the power transmission of seismo's own high-pass filter, so the model
describes the conditioned series exactly. ξ = 2√2/π makes ``a_i`` the rms
amplitude of component ``i``.

The fit is by maximum likelihood with the statistics of a power spectrum:
each bin is χ² with 2 degrees of freedom about the model (Anderson, Duvall &
Jefferies 1990, ApJ 364, 699; Toutain & Appourchaux 1994). To make it fast the
spectrum is averaged in logarithmically spaced bins of ``n_k`` original bins,
whose mean follows a gamma distribution of shape ``n_k``, so

.. math:: -\\ln L = \\sum_k n_k\\,(\\ln M_k + \\bar P_k / M_k) + \\mathrm{const}.

Uncertainties come from the inverse Hessian of −ln L (the observed Fisher
information), widened by the over-dispersion of the binned spectrum about the
model near numax: individual modes are not the smooth Gaussian the model
assumes, so the χ² statistics understate the scatter there (a quasi-likelihood
correction, McCullagh & Nelder 1989, common practice).

Detection is a likelihood-ratio test of the model with the envelope against
the background alone, with a false-alarm probability that accounts for the
number of independent trial numax over the searched range (a Bonferroni
look-elsewhere correction, common practice).
"""

from __future__ import annotations

from .binning import BinnedSpectrum, bin_spectrum
from .components import ComponentSum, GaussianEnvelope, Granulation, WhiteNoise
from .detection import Detection, DetectionOptions, detect_oscillations, sample_posterior
from .fit import BackgroundFit, fit_background

__all__ = [
    "Granulation",
    "GaussianEnvelope",
    "WhiteNoise",
    "ComponentSum",
    "BinnedSpectrum",
    "bin_spectrum",
    "BackgroundFit",
    "fit_background",
    "Detection",
    "detect_oscillations",
    "DetectionOptions",
    "sample_posterior",
]
