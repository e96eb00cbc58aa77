"""Conditioning: from a raw light curve to a clean series in ppm.

Steps, in order (each recorded in ``meta["conditioning"]``):

1. drop rows whose time or flux is NaN/inf; sort by time; merge samples with
   the same time stamp;
2. check the series is usable at all (units, length, baseline, variation);
3. split into segments at gaps longer than ``gap_days`` (and wherever the
   file's own segment label changes), and normalise each segment on its own,
   since space photometry jumps in level between observing segments;
4. clip outliers: points further than ``clip_sigma`` robust standard
   deviations from the median of their ``clip_neighbours`` neighbours on each
   side (the point itself excluded, so an isolated spike cannot hide in its
   own median, while oscillations slower than a few cadences are followed);
5. high-pass filter: subtract a Gaussian-weighted running mean computed
   within each segment, never across a gap. Its width is set so that signal
   above ``highpass_uhz`` keeps at least 99% of its amplitude.

The Gaussian smoother has the transfer function
exp(-2π²σ²ν²), so the high-pass keeps ``1 - exp(-2π²σ²ν²)`` of the
amplitude at frequency ν; asking for 99% at ν_c gives
σ = sqrt(ln(100)/2) / (π ν_c) (common practice: Gaussian filter response).
"""

from __future__ import annotations

from dataclasses import dataclass, fields
from typing import Any

import numpy as np
from scipy.ndimage import gaussian_filter1d

from ..errors import OptionError
from .core import LightCurve, check_usable

__all__ = ["ConditionOptions", "condition", "highpass_sigma_days", "highpass_transmission"]

_SECONDS_PER_DAY = 86400.0
# Fraction of amplitude kept at the protected frequency.
_KEEP_AT_CUTOFF = 0.99
# Segments with fewer points cannot be normalised robustly and are dropped.
_MIN_SEGMENT_POINTS = 10


@dataclass(frozen=True)
class ConditionOptions:
    """Settings of `condition`.

    Parameters
    ----------
    gap_days : float
        A gap longer than this (days) starts a new segment. Default 0.5.
    clip_sigma : float
        Outlier threshold in robust standard deviations (1.4826 × MAD, per
        segment) of the residual from the neighbours' median; ``0`` disables
        clipping. Default 5.
    clip_neighbours : int
        Neighbours on each side whose median predicts a point. Default 2.
    highpass_uhz : float
        Oscillations above this frequency (μHz) keep at least 99% of their
        amplitude; slower trends are removed. ``0`` disables the filter.
        Default 3 μHz, suited to numax down to about 10 μHz.
    min_points : int
        Fewest valid samples accepted. Default 300.
    min_baseline_days : float
        Shortest accepted time span, days. Default 3.
    merge_seconds : float
        Samples closer in time than this (s) are merged into one. Default 1.
    """

    gap_days: float = 0.5
    clip_sigma: float = 5.0
    clip_neighbours: int = 2
    highpass_uhz: float = 3.0
    min_points: int = 300
    min_baseline_days: float = 3.0
    merge_seconds: float = 1.0

    def __post_init__(self) -> None:
        checks = {
            "gap_days": self.gap_days > 0,
            "clip_sigma": self.clip_sigma >= 0,
            "clip_neighbours": self.clip_neighbours >= 1,
            "highpass_uhz": self.highpass_uhz >= 0,
            "min_points": self.min_points >= 3,
            "min_baseline_days": self.min_baseline_days >= 0,
            "merge_seconds": self.merge_seconds >= 0,
        }
        for name, ok in checks.items():
            value = getattr(self, name)
            if not ok or not np.isfinite(value):
                raise OptionError(f"invalid conditioning option {name}={value!r}")

    def to_dict(self) -> dict[str, Any]:
        """Plain dict of the options (for configuration hashes)."""
        return {f.name: getattr(self, f.name) for f in fields(self)}


def highpass_sigma_days(highpass_uhz: float) -> float:
    """Width of the Gaussian smoother that protects signal above a frequency.

    Parameters
    ----------
    highpass_uhz : float
        Frequency above which at least 99% of the amplitude is kept, μHz.

    Returns
    -------
    float
        Standard deviation of the Gaussian kernel, days.
    """
    nu_hz = highpass_uhz * 1e-6
    return float(np.sqrt(-np.log(1.0 - _KEEP_AT_CUTOFF) / 2.0) / (np.pi * nu_hz)) / (
        _SECONDS_PER_DAY
    )


def highpass_transmission(freq_uhz: np.ndarray, highpass_uhz: float) -> np.ndarray:
    """Amplitude transmission of the high-pass filter.

    Parameters
    ----------
    freq_uhz : ndarray
        Frequencies, μHz.
    highpass_uhz : float
        The filter's protected frequency, μHz (0 means no filter).

    Returns
    -------
    ndarray
        ``1 - exp(-2π²σ²ν²)``, dimensionless, same shape as ``freq_uhz``.
    """
    freq = np.asarray(freq_uhz, dtype=np.float64)
    if highpass_uhz <= 0:
        return np.ones_like(freq)
    sigma_s = highpass_sigma_days(highpass_uhz) * _SECONDS_PER_DAY
    return 1.0 - np.exp(-2.0 * np.pi**2 * (sigma_s * freq * 1e-6) ** 2)


def condition(lc: LightCurve, options: ConditionOptions | None = None, **kwargs: Any) -> LightCurve:
    """Clean, segment, normalise, clip and high-pass filter a light curve.

    Parameters
    ----------
    lc : LightCurve
        Light curve as read (days, ppm about the median level).
    options : ConditionOptions, optional
        Settings; keyword arguments override single fields.
    **kwargs
        Fields of `ConditionOptions`.

    Returns
    -------
    LightCurve
        Sorted, segmented light curve in ppm about its mean, with
        ``meta["conditioning"]`` recording every step.

    Raises
    ------
    NoFiniteDataError, TimeUnitError, TooFewPointsError, BaselineTooShortError, ConstantFluxError
        When the series cannot be analysed (see `check_usable`).
    """
    base = options.to_dict() if options else {}
    options = ConditionOptions(**{**base, **kwargs})
    record: dict[str, Any] = {"n_input": lc.n_points}

    time, flux = lc.time, lc.flux
    err = lc.flux_err
    finite = np.isfinite(time) & np.isfinite(flux)
    record["n_nonfinite_dropped"] = int((~finite).sum())
    order = np.argsort(time[finite], kind="stable")
    time = time[finite][order]
    flux = flux[finite][order]
    labels = None if lc.segment is None else lc.segment[finite][order]
    if err is not None:
        err = err[finite][order]
        bad = ~np.isfinite(err) | (err <= 0)
        if bad.all():
            err = None
        elif bad.any():
            err = np.where(bad, np.median(err[~bad]), err)

    time, flux, err, labels, n_merged = _merge_duplicates(
        time, flux, err, labels, options.merge_seconds / _SECONDS_PER_DAY
    )
    record["n_duplicates_merged"] = n_merged
    check_usable(
        LightCurve(time, flux), min_points=options.min_points,
        min_baseline_days=options.min_baseline_days,
    )

    segment = _segments(time, labels, options.gap_days)
    sizes = np.bincount(segment)
    small = sizes[segment] < _MIN_SEGMENT_POINTS
    record["n_small_segment_dropped"] = int(small.sum())
    if small.any():
        time, flux, segment = time[~small], flux[~small], segment[~small]
        err = None if err is None else err[~small]
        segment = np.unique(segment, return_inverse=True)[1]

    divide = lc.meta.get("flux_normalisation", "subtract") == "divide"
    flux, err = _normalise_segments(flux, err, segment, divide)

    n_clipped = 0
    if options.clip_sigma > 0:
        keep = _clip_outliers(flux, segment, options.clip_sigma, options.clip_neighbours)
        n_clipped = int((~keep).sum())
        time, flux, segment = time[keep], flux[keep], segment[keep]
        err = None if err is None else err[keep]
    record["n_outliers_clipped"] = n_clipped

    sigma_days = 0.0
    if options.highpass_uhz > 0:
        sigma_days = highpass_sigma_days(options.highpass_uhz)
        flux = flux - _gaussian_smooth(time, flux, segment, sigma_days)
    flux = flux - flux.mean()

    record.update(
        {
            "n_output": int(time.size),
            "n_segments": int(segment.max()) + 1 if segment.size else 0,
            "gap_days": options.gap_days,
            "clip_sigma": options.clip_sigma,
            "clip_neighbours": options.clip_neighbours,
            "highpass_uhz": options.highpass_uhz,
            "highpass_sigma_days": sigma_days,
            "normalisation": "divide by segment median" if divide else "subtract segment median",
        }
    )
    out = LightCurve(time, flux, err, segment, {**lc.meta, "conditioning": record})
    check_usable(out, min_points=options.min_points, min_baseline_days=options.min_baseline_days)
    return out


def _merge_duplicates(
    time: np.ndarray, flux: np.ndarray, err: np.ndarray | None, labels: np.ndarray | None,
    tol_days: float,
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None, np.ndarray | None, int]:
    if time.size < 2:
        return time, flux, err, labels, 0
    new_group = np.concatenate([[True], np.diff(time) > tol_days])
    if new_group.all():
        return time, flux, err, labels, 0
    group = np.cumsum(new_group) - 1
    counts = np.bincount(group)
    flux_m = np.bincount(group, flux) / counts
    time_m = np.bincount(group, time) / counts
    err_m = None if err is None else np.sqrt(np.bincount(group, err**2)) / counts
    labels_m = None if labels is None else labels[new_group]
    return time_m, flux_m, err_m, labels_m, int(time.size - counts.size)


def _segments(time: np.ndarray, labels: np.ndarray | None, gap_days: float) -> np.ndarray:
    starts = np.concatenate([[True], np.diff(time) > gap_days])
    if labels is not None:
        starts[1:] |= labels[1:] != labels[:-1]
    return np.cumsum(starts) - 1


def _normalise_segments(
    flux: np.ndarray, err: np.ndarray | None, segment: np.ndarray, divide: bool
) -> tuple[np.ndarray, np.ndarray | None]:
    n_seg = int(segment.max()) + 1
    medians = np.array([np.median(flux[segment == s]) for s in range(n_seg)])
    level = medians[segment]
    if divide:
        # Flux is (F/F_ref - 1)·1e6; re-reference to each segment's own level.
        scale = 1.0 / (1.0 + 1e-6 * level)
        return ((1.0 + 1e-6 * flux) * scale - 1.0) * 1e6, None if err is None else err * scale
    return flux - level, err


def _clip_outliers(
    flux: np.ndarray, segment: np.ndarray, clip_sigma: float, neighbours: int
) -> np.ndarray:
    keep = np.ones(flux.size, dtype=bool)
    for s in range(int(segment.max()) + 1):
        sel = np.flatnonzero(segment == s)
        x = flux[sel]
        k = min(neighbours, x.size - 1)
        padded = np.pad(x, k, mode="reflect")
        shifted = [padded[k + j : padded.size - k + j] for j in range(-k, k + 1) if j != 0]
        residual = x - np.median(np.stack(shifted), axis=0)
        scale = 1.4826 * np.median(np.abs(residual - np.median(residual)))
        if scale > 0:
            keep[sel] = np.abs(residual - np.median(residual)) <= clip_sigma * scale
    return keep


def _gaussian_smooth(
    time: np.ndarray, flux: np.ndarray, segment: np.ndarray, sigma_days: float
) -> np.ndarray:
    """Gaussian-weighted running mean within each segment (normalised convolution).

    Samples are summed into bins of σ/8, both the sums and the counts are
    convolved with the Gaussian, and their ratio is interpolated back to the
    sample times. Empty bins carry no weight, so nothing is interpolated
    across missing data.
    """
    width = sigma_days / 8.0
    out = np.empty_like(flux)
    for s in range(int(segment.max()) + 1):
        sel = np.flatnonzero(segment == s)
        t = time[sel]
        idx = np.floor((t - t[0]) / width).astype(np.int64)
        n_bins = int(idx[-1]) + 1
        sums = np.bincount(idx, flux[sel], minlength=n_bins)
        counts = np.bincount(idx, minlength=n_bins).astype(np.float64)
        tsum = np.bincount(idx, t - t[0], minlength=n_bins)
        sm_sum = gaussian_filter1d(sums, 8.0, mode="constant", truncate=5.0)
        sm_cnt = gaussian_filter1d(counts, 8.0, mode="constant", truncate=5.0)
        sm_t = gaussian_filter1d(tsum, 8.0, mode="constant", truncate=5.0)
        good = sm_cnt > 1e-9 * sm_cnt.max()
        centre = sm_t[good] / sm_cnt[good]
        order = np.argsort(centre)
        out[sel] = np.interp(t - t[0], centre[order], (sm_sum[good] / sm_cnt[good])[order])
    return out
