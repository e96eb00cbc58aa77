"""Averaging the spectrum in logarithmic bins (gamma-distributed means)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import OptionError
from ..spectrum import PowerSpectrum

__all__ = ["BinnedSpectrum", "bin_spectrum"]

# ---------------------------------------------------------------- binning


@dataclass(frozen=True)
class BinnedSpectrum:
    """Spectrum averaged in logarithmic bins.

    Attributes
    ----------
    freq : ndarray, shape (n_bins,)
        Mean frequency of each bin, μHz.
    power : ndarray, shape (n_bins,)
        Mean density in each bin, ppm²/μHz.
    count : ndarray, shape (n_bins,)
        Number of original bins averaged (the gamma shape ``n_k``).
    """

    freq: np.ndarray
    power: np.ndarray
    count: np.ndarray


def bin_spectrum(
    ps: PowerSpectrum, fmin: float, fmax: float, log_step: float = 0.005
) -> BinnedSpectrum:
    """Average a spectrum in bins of constant width in ln ν.

    Parameters
    ----------
    ps : PowerSpectrum
        Spectrum (μHz, ppm²/μHz).
    fmin, fmax : float
        Frequency range, μHz.
    log_step : float
        Bin width in ln ν (0.005 is 0.5% of the frequency).

    Returns
    -------
    BinnedSpectrum
        Bins holding at least one original bin. With oversampled spectra the
        counts are divided by the oversampling factor, since neighbouring bins
        are then not independent.
    """
    sel = (ps.freq >= fmin) & (ps.freq <= fmax) & (ps.freq > 0)
    f, p = ps.freq[sel], ps.density[sel]
    if f.size == 0:
        raise OptionError(f"no frequencies between {fmin:.4g} and {fmax:.4g} μHz")
    idx = np.floor(np.log(f / f[0]) / log_step).astype(np.int64)
    counts = np.bincount(idx)
    good = counts > 0
    fsum = np.bincount(idx, f)[good]
    psum = np.bincount(idx, p)[good]
    n = counts[good].astype(np.float64)
    return BinnedSpectrum(fsum / n, psum / n, np.maximum(n / max(ps.oversample, 1.0), 1.0))
