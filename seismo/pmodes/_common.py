"""Shared validation and smoothing helpers (bare float64 arrays)."""

from __future__ import annotations

from typing import Any

import numpy as np
from scipy.ndimage import gaussian_filter1d, uniform_filter1d

from .. import relations
from ..errors import OptionError
from ..relations import FWHM_TO_SIGMA
from ..spectrum import PowerSpectrum
from .types import (
    _TYPICAL_LINEWIDTH,
    _WINDOW_SIGMAS,
)

__all__ = []

# ---------------------------------------------------------------- validation

def _validate(ps: Any, numax: Any, background: Any) -> tuple[float, np.ndarray]:
    if not isinstance(ps, PowerSpectrum):
        raise TypeError(f"ps must be a PowerSpectrum; got {type(ps).__name__}")
    if ps.freq.size < 16:
        raise OptionError(f"ps must have at least 16 frequency bins; got {ps.freq.size}")
    if not _finite_positive(numax):
        raise OptionError(f"numax must be a finite number > 0 μHz; got {numax!r}")
    numax = float(numax)
    if numax >= ps.freq[-1]:
        raise OptionError(
            f"numax ({numax:.4g} μHz) must lie below the top of the spectrum "
            f"({ps.freq[-1]:.4g} μHz)"
        )
    bg = np.asarray(background, dtype=np.float64)
    if bg.ndim == 0:
        bg = np.full(ps.freq.shape, float(bg))
    if bg.shape != ps.freq.shape:
        raise OptionError(
            f"background must be a scalar or have the shape of ps.freq {ps.freq.shape}; "
            f"got shape {bg.shape}"
        )
    if not np.all(np.isfinite(bg)) or np.any(bg <= 0):
        raise OptionError("background must be finite and > 0 ppm²/μHz everywhere")
    return numax, bg


def _finite_positive(value: Any) -> bool:
    return (isinstance(value, (int, float, np.integer, np.floating))
            and not isinstance(value, bool) and bool(np.isfinite(value)) and value > 0)


def _window(ps: PowerSpectrum, numax: float) -> tuple[float, float, float, list[str]]:
    """Analysis window (lo, hi) in μHz, the envelope σ, and flags."""
    sigma = float(relations.envelope_fwhm(numax)) * FWHM_TO_SIGMA
    lo = max(numax - _WINDOW_SIGMAS * sigma, float(ps.freq[1]))
    hi = numax + _WINDOW_SIGMAS * sigma
    top = min(float(ps.freq[-1]), float(ps.nyquist))
    flags = []
    if hi > top:
        hi = top
        flags.append("numax_near_nyquist")
    return lo, hi, sigma, flags


def _profile_width(ps: PowerSpectrum) -> float:
    """FWHM of the mode profiles looked for: resolution or a typical linewidth."""
    return max(float(ps.resolution), _TYPICAL_LINEWIDTH, 2.0 * ps.df)


def _smooth(values: np.ndarray, fwhm: float, df: float) -> np.ndarray:
    return gaussian_filter1d(values, sigma=max(fwhm * FWHM_TO_SIGMA / df, 1e-3), mode="nearest")


def _running_mean(values: np.ndarray, sigma_bins: float) -> np.ndarray:
    """Broad Gaussian-like running mean in O(n): three boxcars of equal width.

    Three passes of a boxcar of width w have the variance 3(w² − 1)/12 of a
    Gaussian (central limit theorem), so w = √(4σ² + 1); for narrow kernels
    the exact Gaussian is cheap and used instead.
    """
    if sigma_bins <= 30:
        return gaussian_filter1d(values, sigma=sigma_bins, mode="nearest")
    width = int(round(np.sqrt(4.0 * sigma_bins**2 + 1.0)))
    out = values
    for _ in range(3):  # three passes, not a loop over bins
        out = uniform_filter1d(out, size=width, mode="nearest")
    return out


def _interp_uniform(x: np.ndarray, x0: float, dx: float, y: np.ndarray) -> np.ndarray:
    """Linear interpolation on a uniform grid (clamped at the ends), no search."""
    pos = np.clip((x - x0) / dx, 0.0, y.size - 1.000001)
    i = pos.astype(np.int64)
    frac = pos - i
    return y[i] + frac * (y[i + 1] - y[i])


def _kernel_dof(fwhm: float, df: float, oversample: float) -> float:
    """Effective number of independent χ²₂ bins averaged by the smoothing kernel."""
    impulse = np.zeros(801)
    impulse[400] = 1.0
    k = _smooth(impulse, fwhm, df)
    return max(1.0 / float(np.sum(k**2)) / max(oversample, 1.0), 1.0)
