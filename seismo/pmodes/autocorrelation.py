"""Δν from the autocorrelation of the signal-to-noise spectrum."""

from __future__ import annotations

from typing import Any

import numpy as np
from scipy import stats

from .. import relations
from ..errors import OptionError
from ..relations import STELLO_2009
from ..results import Measurement
from ..spectrum import PowerSpectrum
from ._common import (
    _finite_positive,
    _kernel_dof,
    _profile_width,
    _running_mean,
    _smooth,
    _validate,
    _window,
)
from .types import (
    _FALSE_ALARM,
    _LOW_RESOLUTION_RATIO,
    _RELATION_SCATTER,
    _SEARCH_SIGMAS,
    DnuEstimate,
)

__all__ = ["large_separation"]

# ---------------------------------------------------------------- Δν from the ACF

def large_separation(
    ps: PowerSpectrum,
    numax: float,
    background: Any,
    *,
    numax_err: float | None = None,
) -> DnuEstimate:
    """Coarse large separation from the autocorrelation of the SNR spectrum.

    Parameters
    ----------
    ps : PowerSpectrum
        Power density spectrum (μHz, ppm²/μHz).
    numax : float
        Frequency of maximum oscillation power, μHz.
    background : float or array_like, shape (n_freq,)
        Background power density (granulation + white noise) on ``ps.freq``,
        ppm²/μHz.
    numax_err : float, optional
        1σ error of ``numax``, μHz; widens the search range.

    Returns
    -------
    DnuEstimate
        ``dnu`` is ``None`` with flag ``dnu_not_found`` when the highest
        autocorrelation peak in the search range has a false-alarm
        probability above 1 %.

    Raises
    ------
    TypeError
        If ``ps`` is not a `PowerSpectrum`.
    OptionError
        If ``numax`` is not positive or lies above the spectrum, ``numax_err``
        is negative, or ``background`` has the wrong shape or non-positive
        values.

    Notes
    -----
    The SNR spectrum in ν_max ± 2.5 σ_env is high-pass filtered (a Gaussian
    running mean of width Δν_pred is subtracted, which removes the envelope
    and background mismatch but not the comb), weighted by the Gaussian
    envelope, and autocorrelated with an FFT. The autocorrelation is chosen
    over the power spectrum of the power spectrum because it is searched
    directly in lag (μHz) near Δν, where the radial, dipole and quadrupole
    ridges all add at the same lag; the power spectrum of the power spectrum
    has its strongest peak at the Δν/2 harmonic (radial and dipole ridges
    interleaved) and needs the harmonic sorted out afterwards.

    The search covers Δν_pred exp(±2 s), s = √(0.15² + (0.772 σ_ν_max/ν_max)²),
    around the relation of Stello et al. (predicts Δν to ~15 %), which stays
    inside a factor 2 so the Δν/2 alias (dipole modes halfway between radial
    ones) is not in range; the autocorrelation at Δν/2 and 2Δν is checked
    as well and a higher peak there sets ``dnu_alias_suspect``. The
    significance uses the null distribution of the autocorrelation of
    independent χ²₂ bins (Gaussian, variance Σw⁴ terms), with a
    look-elsewhere factor for the number of independent lags searched.
    The error is the half width at half maximum of the peak divided by
    √(n_orders − 1): coarse, for the start of `fit_radial_pattern`.

    References
    ----------
    Stello D. et al. 2009, MNRAS 400, L80 (Δν–ν_max relation; exponent 0.772
    seen in the abstract, coefficient 0.263 from memory). Mosser B. et al.
    2012, A&A 537, A30 (envelope width, from memory).
    """
    numax, bg = _validate(ps, numax, background)
    if numax_err is not None and not (_finite_positive(numax_err) or numax_err == 0):
        raise OptionError(f"numax_err must be a finite number >= 0 μHz or None; got {numax_err!r}")
    lo, hi, sigma, flags = _window(ps, numax)
    predicted = float(relations.dnu_from_numax(numax))
    rel = np.hypot(_RELATION_SCATTER, STELLO_2009[1] * (numax_err or 0.0) / numax)
    search = (predicted * np.exp(-_SEARCH_SIGMAS * rel), predicted * np.exp(_SEARCH_SIGMAS * rel))
    search = (max(search[0], 0.55 * predicted), min(search[1], 1.8 * predicted))
    inputs = {"numax": numax, "numax_err": numax_err, "resolution": float(ps.resolution),
              "nyquist": float(ps.nyquist)}
    df = ps.df
    if predicted / ps.resolution < _LOW_RESOLUTION_RATIO:
        flags.append("dnu_low_resolution")

    sel = (ps.freq >= lo) & (ps.freq <= hi)
    freq = ps.freq[sel]
    snr = ps.density[sel] / bg[sel]
    x = snr - _running_mean(snr, predicted / df)
    w = np.exp(-0.5 * ((freq - numax) / sigma) ** 2)
    y = w * x
    max_lag = int(min(2.2 * search[1] / df, freq.size - 1))
    if max_lag < search[1] / df:
        flags.append("dnu_not_found")
        return DnuEstimate(None, None, None, predicted, search, (lo, hi), np.zeros(0),
                           np.zeros(0), tuple(flags), inputs)
    raw = _autocorrelation(y, max_lag)
    null_var = _autocorrelation(w**2, max_lag)
    acf_width = max(_profile_width(ps), 0.015 * predicted)
    noise_level = float(np.median(snr)) / np.log(2.0)  # χ²₂ median is ln 2 × mean
    acf = _smooth(raw, acf_width, df) / (np.sum(w**2) * noise_level**2)
    kernel_power = 1.0 / _kernel_dof(acf_width, df, 1.0)
    null_sd = np.sqrt(null_var * kernel_power * max(ps.oversample, 1.0)) / np.sum(w**2)
    lags = np.arange(max_lag + 1) * df

    inside = (lags >= search[0]) & (lags <= search[1])
    idx = np.flatnonzero(inside)
    best = idx[np.argmax(acf[idx])]
    z = float(acf[best] / null_sd[best])
    n_trials = max((search[1] - search[0]) / (2.5 * acf_width), 1.0)
    false_alarm = float(min(1.0, n_trials * stats.norm.sf(z)))
    if false_alarm > _FALSE_ALARM or acf[best] <= 0:
        flags.append("dnu_not_found")
        return DnuEstimate(None, z, false_alarm, predicted, search, (lo, hi), lags, acf,
                           tuple(flags), inputs)

    lag = _parabolic_peak(lags, acf, best)
    for factor in (0.5, 2.0):
        near = np.abs(lags - factor * lag) <= 0.04 * factor * lag
        if near.any() and acf[near].max() > acf[best]:
            flags.append("dnu_alias_suspect")
    above = acf < 0.5 * acf[best]
    left = np.flatnonzero(above[:best])
    right = np.flatnonzero(above[best:])
    left_edge = lags[left[-1]] if left.size else lags[0]
    right_edge = lags[best + right[0]] if right.size else lags[-1]
    hwhm = 0.5 * (right_edge - left_edge)
    n_orders = max((hi - lo) / lag, 2.0)
    error = max(hwhm, df) / np.sqrt(n_orders - 1.0)
    return DnuEstimate(Measurement(lag, error), z, false_alarm, predicted, search, (lo, hi),
                       lags, acf, tuple(flags), inputs)


def _autocorrelation(y: np.ndarray, max_lag: int) -> np.ndarray:
    """Σ_i y_i y_{i+k} for k = 0..max_lag (bare float64, zero-padded FFT)."""
    n = y.size
    size = 1 << int(np.ceil(np.log2(2 * n)))
    spec = np.fft.rfft(y, size)
    return np.fft.irfft(spec * np.conj(spec), size)[: max_lag + 1]


def _parabolic_peak(x: np.ndarray, y: np.ndarray, i: int) -> float:
    """Vertex of the parabola through the maximum at index ``i`` and its neighbours."""
    if i <= 0 or i >= y.size - 1:
        return float(x[i])
    den = y[i - 1] - 2.0 * y[i] + y[i + 1]
    if den >= 0:
        return float(x[i])
    shift = 0.5 * (y[i - 1] - y[i + 1]) / den
    return float(x[i] + np.clip(shift, -1.0, 1.0) * (x[1] - x[0]))
