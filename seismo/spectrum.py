"""Calibrated power density spectra of light curves.

One normalisation everywhere: single-sided power density in ppm²/μHz, such
that the integral from 0 to the Nyquist frequency equals the variance of the
series (Parseval). For a series of ``N`` samples the density at frequency
``f`` is

.. math:: S(f) = \\frac{|\\sum_k x_k e^{-2\\pi i f t_k}|^2}{N\\,\\nu_\\mathrm{Nyq}},

so white noise of variance σ² has a mean level σ²/ν_Nyq. On a regular
cadence grid (with gaps) this is exact Parseval for the zero-filled series.

Methods (one registry, same signature):

``fft``
    Samples placed on the integer cadence grid, zero-filled, ``scipy.fft``.
    Exact discrete Fourier transform of the gapped series.
``nufft``
    Exact fast non-uniform transform (type 1, optional ``finufft`` package)
    for irregular sampling.
``lombscargle``
    astropy's fast Lomb–Scargle, converted to the same normalisation; the
    fallback for irregular sampling without ``finufft``. The Lomb–Scargle
    periodogram differs from the classical one by terms in the spectral
    window at twice the frequency (Scargle 1982, ApJ 263, 835).
``direct``
    The plain O(N·M) sum, kept as the reference the others are tested
    against.
``auto``
    ``fft`` when the times sit on a regular cadence grid, else ``nufft`` if
    installed, else ``lombscargle``.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field, replace
from functools import cached_property
from typing import Any

import numpy as np
import scipy.fft
from scipy.ndimage import gaussian_filter1d, uniform_filter1d

from .errors import OptionError
from .lightcurve.core import LightCurve

__all__ = [
    "PowerSpectrum",
    "power_spectrum",
    "cadence_grid",
    "smooth_boxcar",
    "smooth_gaussian",
    "METHODS",
]

_SECONDS_PER_DAY = 86400.0
_UHZ = 1e-6
# Largest offset from the cadence grid, in cadences, accepted as "regular".
_GRID_TOLERANCE = 0.05


@dataclass(frozen=True, eq=False)
class PowerSpectrum:
    """Single-sided power density spectrum.

    Attributes
    ----------
    freq : ndarray, shape (n_freq,)
        Frequencies, μHz, uniformly spaced from 0.
    density : ndarray, shape (n_freq,)
        Power density, ppm²/μHz (single-sided; integral to Nyquist = variance).
    nyquist : float
        Nyquist frequency 1/(2 Δt) of the median cadence, μHz.
    resolution : float
        Frequency resolution 1/T of the time span T, μHz.
    oversample : float
        Ratio of ``resolution`` to the grid spacing.
    method : str
        Kernel used (``fft``, ``nufft``, ``lombscargle`` or ``direct``).
    meta : dict
        ``n_points``, ``variance`` (ppm²), ``cadence_s``, the light-curve id.
    sample_times : ndarray, shape (n_points,)
        Sorted sample times, days (kept for the spectral window).
    window_extent : float
        Half-width of the tabulated spectral window, μHz.
    window_freq, window_power : ndarray, shape (n_window,)
        Spectral window (computed on first access): frequency offset from a
        pure sinusoid, μHz, and its power normalised to 1 at zero offset.
    """

    freq: np.ndarray
    density: np.ndarray
    nyquist: float
    resolution: float
    oversample: float
    method: str
    meta: dict[str, Any] = field(default_factory=dict)
    sample_times: np.ndarray = field(default_factory=lambda: np.zeros(0), repr=False)
    window_extent: float = 5.0

    @cached_property
    def _window(self) -> tuple[np.ndarray, np.ndarray]:
        return _spectral_window(self.sample_times, self.df, self.window_extent, self.method)

    @property
    def window_freq(self) -> np.ndarray:
        """Offsets of the tabulated spectral window, μHz (computed on first use)."""
        return self._window[0]

    @property
    def window_power(self) -> np.ndarray:
        """Spectral window power at `window_freq`, normalised to 1 at zero offset."""
        return self._window[1]

    @property
    def df(self) -> float:
        """Grid spacing, μHz."""
        return float(self.freq[1] - self.freq[0]) if self.freq.size > 1 else float("nan")

    def band(self, fmin: float, fmax: float) -> PowerSpectrum:
        """Return the part of the spectrum with ``fmin <= freq <= fmax`` (μHz)."""
        keep = (self.freq >= fmin) & (self.freq <= fmax)
        return replace(self, freq=self.freq[keep], density=self.density[keep],
                       meta=dict(self.meta))

    def integral(self, fmin: float = 0.0, fmax: float | None = None) -> float:
        """Integrated power between ``fmin`` and ``fmax`` (μHz), ppm².

        With the default limits this is the variance of the series.
        """
        fmax = self.nyquist if fmax is None else fmax
        keep = (self.freq >= fmin) & (self.freq <= fmax)
        return float(np.sum(self.density[keep]) * self.df)

    def __repr__(self) -> str:
        return (
            f"<PowerSpectrum method={self.method!r} n_freq={self.freq.size} "
            f"nyquist={self.nyquist:.4g} μHz resolution={self.resolution:.4g} μHz "
            f"oversample={self.oversample:g}>"
        )


def cadence_grid(
    time_days: np.ndarray, tolerance: float = _GRID_TOLERANCE
) -> tuple[np.ndarray, float] | None:
    """Place times on an integer cadence grid if they sit on one.

    Parameters
    ----------
    time_days : ndarray, shape (n_points,)
        Sorted observation times, days.
    tolerance : float
        Largest accepted offset from the grid, in cadences.

    Returns
    -------
    (index, cadence_days) or None
        Integer grid index of each sample (starting at 0) and the cadence
        fitted by least squares, days; ``None`` when the sampling is not
        regular within ``tolerance``.
    """
    t = np.asarray(time_days, dtype=np.float64)
    if t.size < 3:
        return None
    dt = _typical_step(t)
    if not dt > 0:
        return None
    scaled = t - t[0]
    scaled *= 1.0 / dt
    index = np.rint(scaled)
    # Least-squares cadence on the integer index: scaled ≈ c·index with c = dt_fit/dt.
    # Offsets from that grid are (scaled − index) + scaled·(1/c − 1); the bound below
    # avoids a second pass over the data unless it is needed.
    c = float(np.dot(index, scaled) / np.dot(index, index))
    last = float(scaled[-1])
    dev = np.subtract(scaled, index, out=scaled)  # reuse the buffer: fewer page faults
    spread = max(dev.max(), -dev.min())
    if spread + last * abs(1.0 / c - 1.0) > tolerance:
        offset = (t - t[0]) * (1.0 / (dt * c)) - index
        if max(offset.max(), -offset.min()) > tolerance:
            return None
    index = index.astype(np.int64)
    if np.any(index[1:] <= index[:-1]):
        return None
    return index, dt * c


def _typical_step(t: np.ndarray) -> float:
    """Median positive step between adjacent samples (from about 4,000 of them)."""
    stride = max(1, (t.size - 1) // 4000)
    at = np.arange(0, t.size - 1, stride)
    steps = t[at + 1] - t[at]
    positive = steps[steps > 0]
    return float(np.median(positive)) if positive.size else float("nan")


def _density_scale(n_points: int, nyquist_uhz: float) -> float:
    return 1.0 / (n_points * nyquist_uhz)


def _psd_fft(
    t: np.ndarray, x: np.ndarray, df_uhz: float, n_freq: int, grid: tuple[np.ndarray, float]
) -> np.ndarray:
    """|DFT|² of ``x`` zero-filled on its cadence grid (bare float64 arrays).

    ``df_uhz`` must equal 1/(n_fft · cadence); ``n_fft`` is recovered from it.
    """
    index, dt_days = grid
    dt_s = dt_days * _SECONDS_PER_DAY
    n_fft = int(round(1.0 / (df_uhz * _UHZ * dt_s)))
    filled = np.zeros(n_fft, dtype=np.float64)
    filled[index] = x
    spec = scipy.fft.rfft(filled, overwrite_x=True)[:n_freq]
    power = np.abs(spec, out=filled[:n_freq])  # reuse the input buffer
    return np.square(power, out=power)


def _psd_nufft(
    t: np.ndarray, x: np.ndarray, df_uhz: float, n_freq: int, grid: Any = None
) -> np.ndarray:
    """|Σ x e^{-2πi f t}|² on f = k·df, k = 0..n_freq-1, by a type-1 NUFFT."""
    try:
        import finufft
    except ImportError:
        raise OptionError(
            "method 'nufft' needs the optional package finufft; install seismo[fast] or "
            "use method='lombscargle'"
        ) from None
    t_s = (t - t[0]) * _SECONDS_PER_DAY
    phase = np.mod(2.0 * np.pi * df_uhz * _UHZ * t_s + np.pi, 2.0 * np.pi) - np.pi
    # Type 1 returns modes k = -n..n-1 (for 2n modes) with sign exp(isign·i·k·x).
    spec = finufft.nufft1d1(phase, x.astype(np.complex128), 2 * n_freq, isign=-1, eps=1e-12)
    spec = spec[n_freq:]
    return spec.real**2 + spec.imag**2


def _psd_direct(
    t: np.ndarray, x: np.ndarray, df_uhz: float, n_freq: int, grid: Any = None
) -> np.ndarray:
    """The plain O(N·M) sum, evaluated in blocks of frequencies (reference kernel)."""
    t_s = (t - t[0]) * _SECONDS_PER_DAY
    freq_hz = np.arange(n_freq) * df_uhz * _UHZ
    out = np.empty(n_freq)
    block = max(1, int(2_000_000 // max(t.size, 1)))
    for start in range(0, n_freq, block):
        arg = 2.0 * np.pi * np.outer(freq_hz[start : start + block], t_s)
        re = np.cos(arg) @ x
        im = np.sin(arg) @ x
        out[start : start + block] = re**2 + im**2
    return out


def _psd_lombscargle(
    t: np.ndarray, x: np.ndarray, df_uhz: float, n_freq: int, grid: Any = None
) -> np.ndarray:
    """astropy's fast Lomb–Scargle in 'psd' normalisation, times N (≈ |DFT|²)."""
    from astropy.timeseries import LombScargle

    t_s = (t - t[0]) * _SECONDS_PER_DAY
    freq_hz = np.arange(n_freq) * df_uhz * _UHZ
    out = np.zeros(n_freq)
    ls = LombScargle(t_s, x, fit_mean=False, center_data=False, normalization="psd")
    # astropy's 'psd' power equals |DFT|²/N when the window term vanishes.
    out[1:] = x.size * ls.power(freq_hz[1:], method="fast", assume_regular_frequency=True)
    out[0] = x.sum() ** 2
    return out


METHODS: dict[str, Callable[..., np.ndarray]] = {
    "fft": _psd_fft,
    "nufft": _psd_nufft,
    "lombscargle": _psd_lombscargle,
    "direct": _psd_direct,
}


def _has_finufft() -> bool:
    try:
        import finufft  # noqa: F401
    except ImportError:
        return False
    return True


def _choose_method(method: str, grid: Any) -> str:
    allowed = ["auto", *METHODS]
    if method not in allowed:
        raise OptionError(f"unknown spectrum method {method!r}; allowed methods are {allowed}")
    if method == "auto":
        if grid is not None:
            return "fft"
        return "nufft" if _has_finufft() else "lombscargle"
    if method == "fft" and grid is None:
        raise OptionError(
            "method 'fft' needs times on a regular cadence grid (within "
            f"{_GRID_TOLERANCE:g} cadence); these are irregular: use method='nufft' or 'auto'"
        )
    return method


def power_spectrum(
    lc: LightCurve,
    *,
    method: str = "auto",
    oversample: float = 1.0,
    fmax: float | None = None,
    window_extent: float = 5.0,
) -> PowerSpectrum:
    """Compute the calibrated power density spectrum of a light curve.

    Parameters
    ----------
    lc : LightCurve
        Conditioned light curve (time in days, flux in ppm).
    method : str
        ``"auto"`` (default), ``"fft"``, ``"nufft"``, ``"lombscargle"`` or
        ``"direct"``; see the module docstring.
    oversample : float
        Grid spacing is resolution / ``oversample``; ``>= 1``. For the
        ``fft`` method the zero-filled grid is padded to match.
    fmax : float, optional
        Highest frequency, μHz; default the Nyquist frequency.
    window_extent : float
        Half-width of the tabulated spectral window, μHz.

    Returns
    -------
    PowerSpectrum
        Frequency in μHz, density in ppm²/μHz.

    Raises
    ------
    OptionError
        Unknown method, ``oversample < 1``, ``fmax <= 0``, fewer than 3
        points, or ``fft`` asked for irregular times.

    Notes
    -----
    The mean flux is removed first. The Nyquist frequency is that of the
    median cadence (for irregular sampling a pseudo-Nyquist frequency; the
    density normalisation uses it all the same).
    """
    if not np.isfinite(oversample) or oversample < 1:
        raise OptionError(f"oversample must be a finite number >= 1; got {oversample!r}")
    if fmax is not None and not fmax > 0:
        raise OptionError(f"fmax must be a positive frequency in μHz; got {fmax!r}")
    if lc.n_points < 3:
        raise OptionError(f"a spectrum needs at least 3 points; got {lc.n_points}")
    t, x = lc.time, lc.flux
    if np.any(t[1:] < t[:-1]):
        order = np.argsort(t, kind="stable")
        t, x = t[order], x[order]
    x = x - x.mean()
    grid = cadence_grid(t)
    chosen = _choose_method(method, grid)

    if grid is not None:
        dt_days = grid[1]
    else:
        dt_days = _typical_step(t)
    dt_s = dt_days * _SECONDS_PER_DAY
    nyquist = 0.5 / dt_s / _UHZ
    span_s = (t[-1] - t[0]) * _SECONDS_PER_DAY + dt_s
    resolution = 1.0 / span_s / _UHZ

    if grid is not None:
        # Every method uses the fft grid on regular data, so methods compare bin by bin.
        n_grid = int(grid[0][-1]) + 1
        n_fft = scipy.fft.next_fast_len(int(np.ceil(n_grid * oversample)), real=True)
        df = 1.0 / (n_fft * dt_s) / _UHZ
    else:
        df = resolution / oversample
    top = nyquist if fmax is None else fmax
    n_freq = int(np.floor(top / df + 1e-9)) + 1
    if chosen == "fft":
        n_freq = min(n_freq, n_fft // 2 + 1)

    density = METHODS[chosen](t, x, df, n_freq, grid)
    density *= _density_scale(x.size, nyquist)
    freq = np.arange(n_freq, dtype=np.float64)
    freq *= df
    meta = {
        "id": lc.id,
        "n_points": int(x.size),
        "variance": float(np.dot(x, x) / x.size),
        "cadence_s": dt_s,
        "regular_grid": grid is not None,
        "highpass_uhz": float(lc.meta.get("conditioning", {}).get("highpass_uhz", 0.0)),
    }
    return PowerSpectrum(
        freq, density, nyquist, resolution, resolution / df, chosen, meta, t, window_extent
    )


def _spectral_window(
    t: np.ndarray, df: float, extent: float, method: str
) -> tuple[np.ndarray, np.ndarray]:
    """Power of the sampling function near zero offset, normalised to 1."""
    n_win = int(np.floor(extent / df)) + 1 if np.isfinite(df) else 0
    if extent <= 0 or n_win < 2 or t.size < 3:
        return np.zeros(0), np.zeros(0)
    grid = cadence_grid(t) if method == "fft" else None
    ones = np.ones(t.size)
    if grid is not None:
        kernel = _psd_fft
    elif _has_finufft():
        kernel = _psd_nufft
    else:
        kernel = _psd_direct
    if kernel is _psd_direct and t.size * n_win > 5e7:
        # Keep the reference kernel affordable: coarser window sampling.
        df = extent / max(2, int(5e7 // t.size))
        n_win = int(np.floor(extent / df)) + 1
    power = kernel(t, ones, df, n_win, grid)
    power = power / power[0]
    offsets = np.arange(n_win) * df
    freq = np.concatenate([-offsets[:0:-1], offsets])
    return freq, np.concatenate([power[:0:-1], power])


def _validate_width(width: float, df: float) -> float:
    if not np.isfinite(width) or width <= 0:
        raise OptionError(f"smoothing width must be a positive frequency in μHz; got {width!r}")
    return width / df


def smooth_boxcar(ps: PowerSpectrum, width: float) -> np.ndarray:
    """Boxcar-smoothed density.

    Parameters
    ----------
    ps : PowerSpectrum
        Spectrum to smooth.
    width : float
        Full width of the boxcar, μHz.

    Returns
    -------
    ndarray, shape (n_freq,)
        Smoothed density, ppm²/μHz (edges reflect).
    """
    n = max(1, int(round(_validate_width(width, ps.df))))
    return uniform_filter1d(ps.density, size=n, mode="reflect")


def smooth_gaussian(ps: PowerSpectrum, sigma: float) -> np.ndarray:
    """Gaussian-smoothed density.

    Parameters
    ----------
    ps : PowerSpectrum
        Spectrum to smooth.
    sigma : float
        Standard deviation of the Gaussian kernel, μHz.

    Returns
    -------
    ndarray, shape (n_freq,)
        Smoothed density, ppm²/μHz (edges reflect).
    """
    return gaussian_filter1d(ps.density, sigma=_validate_width(sigma, ps.df), mode="reflect")
