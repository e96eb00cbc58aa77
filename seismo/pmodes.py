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

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy import optimize, stats
from scipy.ndimage import gaussian_filter1d, uniform_filter1d

from . import relations
from .errors import OptionError
from .relations import FWHM_TO_SIGMA, STELLO_2009
from .results import Measurement
from .spectrum import PowerSpectrum

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

#: Flags the functions of this module may set, with their meaning.
FLAGS: dict[str, str] = {
    "numax_near_nyquist": "the analysis window is cut by the top of the spectrum (Nyquist)",
    "dnu_low_resolution": "Δν spans fewer than 50 frequency bins: l=0 and l=2 barely separate",
    "dnu_not_found": "no significant comb of modes near the Δν–ν_max relation",
    "dnu_alias_suspect": "the autocorrelation at 2Δν or Δν/2 is higher than at Δν",
    "dnu_from_pattern_only": "fewer than 3 radial modes detected: Δν, ε from the pattern fit",
    "eps_ambiguous": "the l=0/l=2 pair fits the dipole ridge almost as well (ε ± 0.5)",
    "alpha_fixed_at_prior": "fewer than 5 radial modes or low resolution: curvature fixed at "
                            "the Mosser et al. 2013 relation",
    "d02_not_measured": "fewer than 2 l=2 modes detected",
    "dnu_pattern_disagrees": "the pattern fit and the autocorrelation disagree by more than "
                             "2σ: Δν from the autocorrelation with an error covering both, "
                             "ε not reported",
}

# Half-width of the analysis window in Gaussian σ of the envelope.
_WINDOW_SIGMAS = 2.5
# Typical radial-mode linewidth Γ0, μHz (Vrard et al. 2018; value from memory).
_TYPICAL_LINEWIDTH = 0.12
# Fractional scatter of the Δν–ν_max relation (Stello et al. 2009) and the
# half-width of the search in units of it; the range stays inside a factor 2,
# so Δν and Δν/2 cannot both lie in it.
_RELATION_SCATTER = 0.15
_SEARCH_SIGMAS = 2.0
# Visibility of l=2 relative to l=0 (Mosser et al. 2012, from memory).
_VIS2 = 0.64
_FALSE_ALARM = 0.01
_LOW_RESOLUTION_RATIO = 50.0
_MIN_RADIAL_FOR_FIT = 3
_MIN_RADIAL_FOR_ALPHA = 5
_ONE_SIGMA = stats.norm.cdf(1.0)


@dataclass(frozen=True, eq=False)
class DnuEstimate:
    """Coarse large separation from `large_separation`.

    Attributes
    ----------
    dnu : Measurement or None
        Δν, μHz; ``None`` when no significant comb was found.
    significance : float or None
        Height of the autocorrelation peak in units of its standard deviation
        under the noise-only hypothesis.
    false_alarm : float or None
        Probability that noise alone gives a peak this high anywhere in the
        search range.
    predicted : float
        Δν from the Δν–ν_max relation, μHz.
    search_range : tuple of float
        Lags searched, μHz.
    window : tuple of float
        Frequencies used, μHz.
    lags, acf : ndarray, shape (n_lags,)
        Lag (μHz) and smoothed autocorrelation of the SNR spectrum, in units
        of the noise variance (noise level from the median SNR).
    flags : tuple of str
        Keys of `FLAGS`.
    inputs : dict
        ``numax``, ``numax_err``, ``resolution``, ``nyquist``.
    """

    dnu: Measurement | None
    significance: float | None
    false_alarm: float | None
    predicted: float
    search_range: tuple[float, float]
    window: tuple[float, float]
    lags: np.ndarray = field(repr=False)
    acf: np.ndarray = field(repr=False)
    flags: tuple[str, ...] = ()
    inputs: dict[str, Any] = field(default_factory=dict)

    def __repr__(self) -> str:
        value = "None" if self.dnu is None else f"{self.dnu.value:.4g}±{self.dnu.error:.2g}"
        sig = "None" if self.significance is None else f"{self.significance:.3g}"
        return f"<DnuEstimate dnu={value} μHz significance={sig} flags={list(self.flags)}>"


@dataclass(frozen=True, eq=False)
class PModeList:
    """Individual radial and quadrupole modes, aligned arrays of shape (n_modes,).

    Attributes
    ----------
    l : ndarray of int
        Degree, 0 or 2.
    n : ndarray of int
        Radial order in the convention of the universal pattern: a radial mode
        of order n sits at ≈ (n + ε)Δν, and the l=2 mode of order n just below
        the radial mode of order n + 1.
    frequency, error : ndarray
        Frequency and its 1σ error, μHz.
    snr : ndarray
        Peak of the smoothed signal-to-noise spectrum (1 = noise level).
    """

    l: np.ndarray
    n: np.ndarray
    frequency: np.ndarray
    error: np.ndarray
    snr: np.ndarray

    def __len__(self) -> int:
        return int(self.l.size)

    def degree(self, l: int) -> PModeList:
        """Return the modes of degree ``l`` only."""
        keep = self.l == l
        return PModeList(self.l[keep], self.n[keep], self.frequency[keep], self.error[keep],
                         self.snr[keep])

    def __repr__(self) -> str:
        return (f"<PModeList n_l0={int(np.sum(self.l == 0))} "
                f"n_l2={int(np.sum(self.l == 2))}>")


@dataclass(frozen=True, eq=False)
class RadialPattern:
    """Result of `fit_radial_pattern`.

    Attributes
    ----------
    dnu : Measurement or None
        Large separation, μHz.
    eps_p : Measurement or None
        Offset ε of the radial modes (dimensionless), in [ε_rel − 0.5,
        ε_rel + 0.5) around the Mosser et al. 2011 relation (a labelling of
        the orders only; the value is measured).
    alpha : Measurement or None
        Curvature α (dimensionless); ``None`` when fixed at the prior.
    d02 : Measurement or None
        δν02/Δν (dimensionless).
    modes : PModeList
        Detected l=0 and l=2 modes.
    flags : tuple of str
        Keys of `FLAGS`.
    inputs : dict
        ``numax``, ``dnu_guess``, ``window`` (μHz), ``width`` (profile FWHM,
        μHz), ``resolution``, ``nyquist``, ``alpha_prior``, ``d02_prior``,
        ``reduced_chi2`` of the radial fit and ``pattern_dnu``, ``pattern_eps``
        of the template fit.
    """

    dnu: Measurement | None
    eps_p: Measurement | None
    alpha: Measurement | None
    d02: Measurement | None
    modes: PModeList
    flags: tuple[str, ...] = ()
    inputs: dict[str, Any] = field(default_factory=dict)

    def as_dict(self) -> dict[str, Any]:
        """JSON-able summary: α, d02, the mode list (l, n, frequency, error, SNR)."""

        def meas(m: Measurement | None) -> dict[str, Any] | None:
            return None if m is None else m.to_dict()

        modes = [
            {"l": int(l), "n": int(n), "frequency": float(f), "error": float(e),
             "snr": float(r)}
            for l, n, f, e, r in zip(self.modes.l, self.modes.n, self.modes.frequency,
                                     self.modes.error, self.modes.snr, strict=True)
        ]
        return {"alpha": meas(self.alpha), "d02": meas(self.d02), "modes": modes}

    def __repr__(self) -> str:
        def show(m: Measurement | None) -> str:
            return "None" if m is None else f"{m.value:.5g}±{m.error:.2g}"

        return (f"<RadialPattern dnu={show(self.dnu)} eps_p={show(self.eps_p)} "
                f"alpha={show(self.alpha)} d02={show(self.d02)} n_modes={len(self.modes)} "
                f"flags={list(self.flags)}>")


@dataclass(frozen=True, eq=False)
class EchelleImage:
    """Smoothed SNR spectrum folded modulo Δν.

    Attributes
    ----------
    x : ndarray, shape (n_x,)
        (ν − offset) mod Δν at the column centres, μHz, from 0 to Δν.
    y : ndarray, shape (n_orders,)
        Frequency at the start of each order (offset + kΔν), μHz.
    image : ndarray, shape (n_orders, n_x)
        Smoothed SNR at ν = y[i] + x[j] (NaN outside the spectrum).
    dnu, offset : float
        Folding period and offset, μHz.
    """

    x: np.ndarray
    y: np.ndarray
    image: np.ndarray
    dnu: float
    offset: float

    def __repr__(self) -> str:
        return (f"<EchelleImage dnu={self.dnu:.4g} μHz offset={self.offset:.4g} μHz "
                f"shape={self.image.shape}>")


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


# ---------------------------------------------------------------- universal pattern

def _pattern(n: Any, l: Any, dnu: Any, eps: Any, alpha: Any, d02: Any, numax: float) -> Any:
    """ν_{n,l} = (n + l/2 + ε − d0l + α/2 (n − n_max)²) Δν, l in {0, 2}; broadcasts."""
    d0l = np.where(np.asarray(l) == 2, d02, 0.0)
    n_max = numax / dnu - eps
    return (n + 0.5 * np.asarray(l) + eps - d0l + 0.5 * alpha * (n - n_max) ** 2) * dnu


@dataclass(frozen=True)
class _Spectrum:
    """SNR spectrum around ν_max, smoothed by the mode profile (bare float64)."""

    freq: np.ndarray
    smooth: np.ndarray      # SNR averaged over the profile (noise mean 1)
    highpass: np.ndarray    # smooth minus a running mean over Δν
    numax: float
    sigma: float
    lo: float
    hi: float
    width: float
    dof: float
    resolution: float

    def weight(self, nu: np.ndarray, l: np.ndarray) -> np.ndarray:
        inside = (nu >= self.lo) & (nu <= self.hi)
        vis = np.where(l == 2, _VIS2, 1.0)
        return inside * vis * np.exp(-0.5 * ((nu - self.numax) / self.sigma) ** 2)

    def score(self, nu: np.ndarray, l: np.ndarray) -> np.ndarray:
        """Matched-filter statistic Σ h (ỹ(ν) ) over the last axis."""
        values = _interp_uniform(nu, self.freq[0], self.freq[1] - self.freq[0], self.highpass)
        return np.sum(self.weight(nu, l) * values, axis=-1)


def _prepare(ps: PowerSpectrum, numax: float, bg: np.ndarray, dnu: float,
             width: float) -> tuple[_Spectrum, list[str]]:
    lo, hi, sigma, flags = _window(ps, numax)
    margin = 1.5 * dnu
    sel = (ps.freq >= lo - margin) & (ps.freq <= hi + margin)
    snr = ps.density[sel] / bg[sel]
    smooth = _smooth(snr, width, ps.df)
    highpass = smooth - _running_mean(snr, dnu / ps.df)
    dof = _kernel_dof(width, ps.df, ps.oversample)
    return (_Spectrum(ps.freq[sel], smooth, highpass, numax, sigma, lo, hi, width, dof,
                      float(ps.resolution)), flags)


def _orders(spec: _Spectrum, dnu: float) -> tuple[np.ndarray, np.ndarray]:
    n = np.arange(np.floor(spec.lo / dnu) - 2, np.ceil(spec.hi / dnu) + 2)
    return np.concatenate([n, n]), np.repeat([0, 2], n.size)


def _grid_search(spec: _Spectrum, dnu0: float, span: float, alpha: float,
                 d02: float) -> tuple[float, float, np.ndarray, np.ndarray]:
    """Best (Δν, ε) of the l=0/l=2 template on a grid; also the ε profile."""
    reach = max(spec.hi - spec.numax, spec.numax - spec.lo)
    step = max(spec.width * dnu0 / (4.0 * reach), 1e-4 * dnu0)
    n_dnu = int(np.clip(2 * np.ceil(span / step) + 1, 3, 241))
    dnus = dnu0 + np.linspace(-span, span, n_dnu)
    n_eps = int(np.clip(np.ceil(6.0 * dnu0 / spec.width), 120, 1200))
    eps = np.arange(n_eps) / n_eps
    n, l = _orders(spec, dnu0)
    nu = _pattern(n, l, dnus[:, None, None], eps[None, :, None], alpha, d02, spec.numax)
    score = spec.score(nu, l)
    i, j = np.unravel_index(np.argmax(score), score.shape)
    return float(dnus[i]), float(eps[j]), eps, score[i]


def _refine(spec: _Spectrum, dnu: float, eps: float, alpha: float,
            d02: float) -> tuple[float, float]:
    n, l = _orders(spec, dnu)

    def cost(p: np.ndarray) -> float:
        return -float(spec.score(_pattern(n, l, p[0], p[1], alpha, d02, spec.numax), l))

    res = optimize.minimize(cost, [dnu, eps], method="Nelder-Mead",
                            options={"xatol": 1e-5 * dnu, "fatol": 1e-9, "maxiter": 400,
                                     "initial_simplex": [[dnu, eps], [dnu * 1.002, eps],
                                                         [dnu, eps + 0.01]]})
    return (float(res.x[0]), float(res.x[1])) if -res.fun >= -cost(np.array([dnu, eps])) \
        else (dnu, eps)


def _locate(spec: _Spectrum, expected: np.ndarray, half_box: float,
            df: float) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Highest smoothed-SNR peak within ± half_box of each expected frequency.

    Returns frequency (μHz), error (μHz), SNR and whether the peak passes
    the 1 % false-alarm test of a Gamma-distributed smoothed noise spectrum.
    The error is √(F(β) Γ / (4πT)), F(β) = √(1+β)(√(1+β)+√β)³, β the
    noise-to-mode height ratio, Γ the profile width (common practice; the
    form of Libbrecht 1992, ApJ 387, 712, recalled from memory).
    """
    half = max(int(half_box / df), 1)
    centre = np.searchsorted(spec.freq, expected)
    idx = np.clip(centre[:, None] + np.arange(-half, half + 1)[None, :], 1,
                  spec.freq.size - 2)
    vals = spec.smooth[idx]
    k = np.argmax(vals, axis=1)
    best = idx[np.arange(idx.shape[0]), k]
    y0, y1, y2 = spec.smooth[best - 1], spec.smooth[best], spec.smooth[best + 1]
    den = y0 - 2.0 * y1 + y2
    shift = np.where(den < 0, 0.5 * (y0 - y2) / np.where(den < 0, den, -1.0), 0.0)
    freq = spec.freq[best] + np.clip(shift, -1.0, 1.0) * df
    snr = y1
    n_trials = max((2 * half + 1) * df / spec.width, 1.0)
    tail = stats.gamma.sf(snr * spec.dof, spec.dof)
    detected = n_trials * tail < _FALSE_ALARM
    beta = 1.0 / np.maximum(snr - 1.0, 0.1)
    growth = np.sqrt(1.0 + beta) * (np.sqrt(1.0 + beta) + np.sqrt(beta)) ** 3
    error = np.maximum(np.sqrt(growth * spec.width * spec.resolution / (4.0 * np.pi)),
                       df / np.sqrt(12.0))
    return freq, error, snr, detected


def _widen(dof: int) -> float:
    """Student-t / normal ratio of the 1σ quantile: widens errors for few points."""
    return float(stats.t.ppf(_ONE_SIGMA, dof)) if dof > 0 else float("inf")


def _fit_radial(n: np.ndarray, nu: np.ndarray, err: np.ndarray, numax: float, dnu: float,
                eps: float, alpha: float, fit_alpha: bool) -> tuple[np.ndarray, np.ndarray,
                                                                    float]:
    """Weighted least squares of ν_n0 = (n + ε + α/2 (n − n_max)²)Δν.

    Returns parameters (Δν, ε, α), their 1σ errors (α error NaN when fixed)
    and the reduced χ². Errors are scaled by √χ²_red when above 1 and by the
    Student-t factor for the degrees of freedom.
    """
    def model(p: np.ndarray) -> np.ndarray:
        a = p[2] if fit_alpha else alpha
        return _pattern(n, 0, p[0], p[1], a, 0.0, numax)

    p0 = np.array([dnu, eps, alpha] if fit_alpha else [dnu, eps])
    res = optimize.least_squares(lambda p: (nu - model(p)) / err, p0, x_scale="jac")
    dof = n.size - p0.size
    chi2 = float(np.sum(res.fun**2) / dof) if dof > 0 else float("nan")
    try:
        cov = np.linalg.inv(res.jac.T @ res.jac)
    except np.linalg.LinAlgError:
        cov = np.full((p0.size, p0.size), np.nan)
    scale = np.sqrt(max(chi2, 1.0)) * _widen(dof) if dof > 0 else float("nan")
    sd = np.sqrt(np.diag(cov)) * scale
    if not fit_alpha:
        return np.r_[res.x, alpha], np.r_[sd, np.nan], chi2
    return res.x, sd, chi2


def _measure(value: float, error: float) -> Measurement | None:
    if not np.isfinite(value):
        return None
    return Measurement(float(value), float(error) if np.isfinite(error) else None)


def fit_radial_pattern(
    ps: PowerSpectrum,
    numax: float,
    dnu_guess: float | Measurement | DnuEstimate,
    background: Any,
) -> RadialPattern:
    """Fit the universal red-giant pattern and measure Δν, ε, α and δν02.

    Parameters
    ----------
    ps : PowerSpectrum
        Power density spectrum (μHz, ppm²/μHz).
    numax : float
        Frequency of maximum oscillation power, μHz.
    dnu_guess : float, Measurement or DnuEstimate
        Starting large separation, μHz (e.g. from `large_separation`).
    background : float or array_like, shape (n_freq,)
        Background power density on ``ps.freq``, ppm²/μHz.

    Returns
    -------
    RadialPattern
        ``dnu`` and ``eps_p`` are ``None`` with ``dnu_not_found`` when fewer
        than 3 radial modes are detected and the template fit is not
        significant either.

    Raises
    ------
    TypeError
        If ``ps`` is not a `PowerSpectrum`.
    OptionError
        For a non-positive ``numax`` or ``dnu_guess``, ``dnu_guess`` not
        below ``numax``, ``numax`` above the spectrum, or a bad
        ``background`` (see `large_separation`).

    Notes
    -----
    1. Template: l=0 and l=2 profiles of FWHM max(1/T, Γ_typ = 0.12 μHz)
       at the universal-pattern frequencies, heights the Gaussian envelope
       times V_l² (V_2² = 0.64), α and d02 at their Mosser et al. relations.
       Smoothing the SNR spectrum by the profile turns the cross-correlation
       into a sum of the smoothed SNR at the mode frequencies, evaluated on
       a (Δν, ε) grid (Δν within ±3 % or ±3σ of the guess, ε over [0, 1))
       and then refined by Nelder–Mead. The dense dipole forest fits the
       l=0/l=2 pair badly (no partner at −δν02), which picks the radial
       ridge; if the best ε + 0.5 scores within 15 %, ``eps_ambiguous``.
    2. Each radial and quadrupole mode is the highest smoothed-SNR peak
       within ±5 % (l=0) or ±4 % (l=2) of Δν of its predicted frequency,
       kept at a 1 % false-alarm probability; error √(F(β) Γ/(4πT)) with β
       the noise-to-height ratio (see `_locate`), at least δν/√12. The
       l=2 mode farthest from the mean d02 is dropped when more than 4σ off.
    3. ν_n0 = (n + ε + α/2 (n − n_max)²)Δν with n_max = ν_max/Δν − ε is
       fitted by weighted least squares to the radial modes (α free with 5
       or more modes); errors are scaled by √χ²_red when above 1 and by the
       Student-t 1σ factor for the degrees of freedom (wider with few
       orders). ε is free: the relation only labels the orders.
    4. d02 is the weighted mean of (ν_{n+1,0}^fit − ν_{n,2})/Δν − α(n −
       n_max + ½), errors as in 3.

    References
    ----------
    Mosser B. et al. 2011, A&A 525, L9 (universal pattern; form confirmed,
    details and the ε and d02 relations from memory). Mosser B. et al.
    2013, A&A 550, A126 (curvature α, from memory). Mosser B. et al. 2012,
    A&A 537, A30 (visibilities and envelope width, from memory). Kallinger
    T. et al. 2012, A&A 541, A51 (why ε must be measured: RGB and clump
    differ at the same Δν). Vrard M. et al. 2018, A&A 616, A94 (typical
    linewidth, value from memory).
    """
    guess_err = None
    if isinstance(dnu_guess, DnuEstimate):
        if dnu_guess.dnu is None:
            raise OptionError("dnu_guess is a DnuEstimate without a value (dnu_not_found)")
        dnu_guess = dnu_guess.dnu
    if isinstance(dnu_guess, Measurement):
        guess_err = dnu_guess.error
        dnu_guess = dnu_guess.value
    numax, bg = _validate(ps, numax, background)
    if not _finite_positive(dnu_guess) or dnu_guess >= numax:
        raise OptionError(
            f"dnu_guess must be a finite number > 0 μHz and below numax ({numax:.4g} μHz); "
            f"got {dnu_guess!r}"
        )
    dnu0 = float(dnu_guess)
    width = _profile_width(ps)
    spec, flags = _prepare(ps, numax, bg, dnu0, width)
    if dnu0 / ps.resolution < _LOW_RESOLUTION_RATIO:
        flags.append("dnu_low_resolution")
    alpha0 = float(relations.curvature_from_dnu(dnu0))
    d020 = float(relations.d02_from_dnu(dnu0))
    eps_rel = float(relations.eps_p_from_dnu(dnu0))
    inputs: dict[str, Any] = {
        "numax": numax, "dnu_guess": dnu0, "window": (spec.lo, spec.hi), "width": width,
        "resolution": float(ps.resolution), "nyquist": float(ps.nyquist),
        "alpha_prior": alpha0, "d02_prior": d020,
    }
    empty = PModeList(*(np.zeros(0, dtype=int),) * 2, *(np.zeros(0),) * 3)

    span = max(0.03 * dnu0, 3.0 * (guess_err or 0.0))
    dnu_p, eps_p, eps_grid, profile = _grid_search(spec, dnu0, span, alpha0, d020)
    opposite = np.abs(((eps_grid - eps_p + 0.5) % 1.0) - 0.5) > 0.35
    best, other = profile.max(), profile[opposite].max() if opposite.any() else -np.inf
    if other > 0.85 * best:
        flags.append("eps_ambiguous")
    dnu_p, eps_p = _refine(spec, dnu_p, eps_p, alpha0, d020)
    eps_p = (eps_p - (eps_rel - 0.5)) % 1.0 + eps_rel - 0.5
    inputs.update(pattern_dnu=dnu_p, pattern_eps=eps_p, pattern_score=float(best))

    # individual radial modes
    n_all = np.arange(np.floor(spec.lo / dnu_p - eps_p), np.ceil(spec.hi / dnu_p - eps_p) + 1)
    nu0 = _pattern(n_all, 0, dnu_p, eps_p, alpha0, d020, numax)
    keep = (nu0 >= spec.lo) & (nu0 <= spec.hi)
    n0, nu0 = n_all[keep], nu0[keep]
    # boxes stop halfway to the neighbouring l=0/l=2 partner
    partner = 0.5 * d020 * dnu_p
    f0, e0, s0, ok0 = _locate(spec, nu0, min(max(0.05 * dnu_p, 1.5 * width), partner), ps.df)
    n0, f0, e0, s0 = n0[ok0], f0[ok0], e0[ok0], s0[ok0]

    if n0.size < _MIN_RADIAL_FOR_FIT:
        flags.append("dnu_from_pattern_only" if n0.size else "dnu_not_found")
        alpha = d02 = None
        if n0.size == 0 or best <= 0:
            if "dnu_not_found" not in flags:
                flags[-1] = "dnu_not_found"
            modes = empty
            return RadialPattern(None, None, None, None, modes, tuple(flags), inputs)
        lever = max(spec.hi - numax, numax - spec.lo) / dnu_p
        dnu_m = Measurement(dnu_p, 0.5 * width / lever)
        eps_m = Measurement(eps_p, 0.5 * width / dnu_p)
        modes = PModeList(np.zeros(n0.size, dtype=int), n0.astype(int), f0, e0, s0)
        flags += ["alpha_fixed_at_prior", "d02_not_measured"]
        return RadialPattern(dnu_m, eps_m, alpha, d02, modes, tuple(flags), inputs)

    low_res = "dnu_low_resolution" in flags
    fit_alpha = n0.size >= _MIN_RADIAL_FOR_ALPHA and not low_res
    if not fit_alpha:
        flags.append("alpha_fixed_at_prior")
    p, sd, chi2 = _fit_radial(n0, f0, e0, numax, dnu_p, eps_p, alpha0, fit_alpha)
    resid = np.abs(f0 - _pattern(n0, 0, p[0], p[1], p[2], 0.0, numax)) / e0
    worst = int(np.argmax(resid))
    if n0.size > _MIN_RADIAL_FOR_FIT + 1 and resid[worst] > 5.0 * np.sqrt(max(chi2, 1.0)):
        drop = np.arange(n0.size) != worst
        n0, f0, e0, s0 = n0[drop], f0[drop], e0[drop], s0[drop]
        fit_alpha = n0.size >= _MIN_RADIAL_FOR_ALPHA and not low_res
        p, sd, chi2 = _fit_radial(n0, f0, e0, numax, p[0], p[1], p[2], fit_alpha)
    dnu, eps, alpha = p
    inflate = np.sqrt(max(chi2, 1.0)) if np.isfinite(chi2) else 1.0
    e0 = e0 * inflate
    inputs["reduced_chi2"] = chi2

    # quadrupole modes and d02
    n2 = n0 - 1
    nu2 = _pattern(n2, 2, dnu, eps, alpha, d020, numax)
    f2, e2, s2, ok2 = _locate(spec, nu2, min(max(0.04 * dnu, 1.5 * width), partner), ps.df)
    n2, f2, e2, s2 = n2[ok2], f2[ok2], e2[ok2] * inflate, s2[ok2]
    d02 = None
    if n2.size >= 2:
        n_max = numax / dnu - eps
        d_n = (_pattern(n2 + 1, 0, dnu, eps, alpha, 0.0, numax) - f2) / dnu \
            - alpha * (n2 - n_max + 0.5)
        wts = 1.0 / (e2 / dnu) ** 2
        mean = float(np.sum(wts * d_n) / np.sum(wts))
        chi2_2 = float(np.sum(wts * (d_n - mean) ** 2) / (n2.size - 1))
        resid = np.abs(d_n - np.median(d_n)) * np.sqrt(wts) / np.sqrt(max(chi2_2, 1.0))
        worst = int(np.argmax(resid))
        if n2.size > 3 and resid[worst] > 4.0:
            keep2 = np.arange(n2.size) != worst
            n2, f2, e2, s2, d_n, wts = (a[keep2] for a in (n2, f2, e2, s2, d_n, wts))
            mean = float(np.sum(wts * d_n) / np.sum(wts))
            chi2_2 = float(np.sum(wts * (d_n - mean) ** 2) / (n2.size - 1))
        err = np.sqrt(max(chi2_2, 1.0) / np.sum(wts)) * _widen(n2.size - 1)
        d02 = Measurement(mean, err)
    else:
        flags.append("d02_not_measured")

    modes = PModeList(
        np.r_[np.zeros(n0.size, dtype=int), np.full(n2.size, 2)],
        np.r_[n0, n2].astype(int), np.r_[f0, f2], np.r_[e0, e2], np.r_[s0, s2],
    )
    order = np.argsort(modes.frequency)
    modes = PModeList(*(getattr(modes, k)[order] for k in ("l", "n", "frequency", "error",
                                                          "snr")))
    return RadialPattern(_measure(dnu, sd[0]), _measure(eps, sd[1]),
                         _measure(alpha, sd[2]) if fit_alpha else None, d02, modes,
                         tuple(flags), inputs)


# ---------------------------------------------------------------- échelle

def echelle_coordinates(freq: Any, dnu: float, *, offset: float = 0.0
                        ) -> tuple[np.ndarray, np.ndarray]:
    """Échelle coordinates of frequencies.

    Parameters
    ----------
    freq : array_like
        Frequencies, μHz (any shape).
    dnu : float
        Folding period (large separation), μHz.
    offset : float
        Frequency subtracted before folding, μHz.

    Returns
    -------
    x : ndarray, same shape as ``freq``
        (ν − offset) mod Δν, μHz, in [0, Δν).
    y : ndarray, same shape as ``freq``
        Frequency at the start of the order holding ν, offset + kΔν, μHz
        (the ``y`` of `echelle_image`).

    Raises
    ------
    OptionError
        If ``dnu`` is not positive or ``offset`` or ``freq`` is not finite.
    """
    if not _finite_positive(dnu):
        raise OptionError(f"dnu must be a finite number > 0 μHz; got {dnu!r}")
    if not np.isfinite(offset):
        raise OptionError(f"offset must be finite (μHz); got {offset!r}")
    nu = np.asarray(freq, dtype=np.float64)
    if not np.all(np.isfinite(nu)):
        raise OptionError("freq must be finite (μHz)")
    x = np.mod(nu - offset, dnu)
    return x, nu - x


def echelle_image(
    ps: PowerSpectrum,
    dnu: float,
    numax: float,
    background: Any,
    *,
    n_orders: int | None = None,
    offset: float = 0.0,
    smooth: float | None = None,
) -> EchelleImage:
    """Smoothed signal-to-noise spectrum folded modulo Δν (data, no plotting).

    Parameters
    ----------
    ps : PowerSpectrum
        Power density spectrum (μHz, ppm²/μHz).
    dnu : float
        Folding period, μHz.
    numax : float
        Frequency of maximum oscillation power, μHz (centre of the orders).
    background : float or array_like, shape (n_freq,)
        Background power density on ``ps.freq``, ppm²/μHz.
    n_orders : int, optional
        Number of orders (rows), centred on the order holding ν_max; default
        those covering ν_max ± 2.5 σ_env.
    offset : float
        Frequency subtracted before folding, μHz (e.g. ε Δν − 0.1 Δν puts the
        radial ridge near 0.1 Δν).
    smooth : float, optional
        FWHM of the Gaussian smoothing, μHz; default max(1/T, 0.12 μHz,
        2 δν). ``0`` leaves the spectrum unsmoothed.

    Returns
    -------
    EchelleImage
        ``image[i, j]`` is the SNR at ``y[i] + x[j]``; columns are one grid
        step wide (``ps.df``), NaN outside the spectrum.

    Raises
    ------
    TypeError
        If ``ps`` is not a `PowerSpectrum`.
    OptionError
        For a non-positive ``dnu``, ``dnu`` not below ``numax``, ``n_orders
        < 1``, a negative ``smooth`` or a bad ``numax`` or ``background``.
    """
    numax, bg = _validate(ps, numax, background)
    if not _finite_positive(dnu) or dnu >= numax:
        raise OptionError(f"dnu must be a finite number > 0 and below numax; got {dnu!r}")
    if n_orders is not None and (not isinstance(n_orders, (int, np.integer)) or n_orders < 1):
        raise OptionError(f"n_orders must be an integer >= 1 or None; got {n_orders!r}")
    if smooth is not None and not (_finite_positive(smooth) or smooth == 0):
        raise OptionError(f"smooth must be a FWHM >= 0 μHz or None; got {smooth!r}")
    if not np.isfinite(offset):
        raise OptionError(f"offset must be finite (μHz); got {offset!r}")
    dnu = float(dnu)
    fwhm = _profile_width(ps) if smooth is None else float(smooth)
    snr = ps.density / bg
    if fwhm > 0:
        snr = _smooth(snr, fwhm, ps.df)
    lo, hi, _, _ = _window(ps, numax)
    centre = np.floor((numax - offset) / dnu)
    if n_orders is None:
        first, last = np.floor((lo - offset) / dnu), np.floor((hi - offset) / dnu)
    else:
        first = centre - (n_orders - 1) // 2
        last = first + n_orders - 1
    y = offset + np.arange(first, last + 1) * dnu
    x = np.arange(0.0, dnu, ps.df)
    nu = y[:, None] + x[None, :]
    image = np.interp(nu, ps.freq, snr, left=np.nan, right=np.nan)
    return EchelleImage(x, y, image, dnu, float(offset))


def reconcile(coarse: DnuEstimate, pattern: RadialPattern) -> RadialPattern:
    """Check the pattern fit against the autocorrelation Δν it started from.

    The two are independent enough to catch a pattern fit that has locked onto
    the wrong comb (seen on 27-day sectors, where l=0 and l=2 barely separate
    and the dipole forest can pull the template). When they differ by more
    than twice their combined error, the autocorrelation Δν is reported with
    an error widened to cover the difference, ε is withdrawn, and the flag
    ``dnu_pattern_disagrees`` says so: a wrong confident number is worse than
    a wide one.

    Parameters
    ----------
    coarse : DnuEstimate
        Result of `large_separation`.
    pattern : RadialPattern
        Result of `fit_radial_pattern` started from ``coarse``.

    Returns
    -------
    RadialPattern
        ``pattern`` itself when consistent, else a corrected copy.
    """
    from dataclasses import replace

    if coarse.dnu is None or pattern.dnu is None or coarse.dnu.error is None:
        return pattern
    diff = abs(pattern.dnu.value - coarse.dnu.value)
    combined = float(np.hypot(coarse.dnu.error, pattern.dnu.error or 0.0))
    if diff <= 2.0 * combined:
        return pattern
    widened = Measurement(coarse.dnu.value, float(np.hypot(coarse.dnu.error, diff)))
    inputs = {**pattern.inputs, "pattern_fit_dnu": pattern.dnu.to_dict()}
    return replace(pattern, dnu=widened, eps_p=None, alpha=None,
                   flags=(*pattern.flags, "dnu_pattern_disagrees"), inputs=inputs)
