"""Validation, the dipole region and its significant peaks."""

from __future__ import annotations

from typing import Any

import numpy as np

from .. import relations
from ..errors import OptionError
from ..spectrum import PowerSpectrum
from .types import (
    _EXCLUDE_DNU,
    _EXCLUDE_WIDTHS,
    _TYPICAL_LINEWIDTH,
)

__all__ = []

# ---------------------------------------------------------------- validation and setup

def _validate(ps: Any, background: Any, numax: Any, pattern: Any,
              false_alarm: Any) -> tuple[float, np.ndarray]:
    if not isinstance(ps, PowerSpectrum):
        raise TypeError(f"ps must be a PowerSpectrum; got {type(ps).__name__}")
    if ps.freq.size < 16:
        raise OptionError(f"ps must have at least 16 frequency bins; got {ps.freq.size}")
    if isinstance(numax, bool) or not isinstance(numax, (int, float, np.integer, np.floating)) \
            or not np.isfinite(numax) or numax <= 0:
        raise OptionError(f"numax must be a finite number > 0 μHz; got {numax!r}")
    if numax >= ps.freq[-1]:
        raise OptionError(f"numax ({numax:.4g} μHz) must lie below the top of the spectrum "
                          f"({ps.freq[-1]:.4g} μHz)")
    bg = np.asarray(background, dtype=np.float64)
    if bg.ndim == 0:
        bg = np.full(ps.freq.shape, float(bg))
    if bg.shape != ps.freq.shape:
        raise OptionError(f"background must be a scalar or have the shape of ps.freq "
                          f"{ps.freq.shape}; got shape {bg.shape}")
    if not np.all(np.isfinite(bg)) or np.any(bg <= 0):
        raise OptionError("background must be finite and > 0 ppm²/μHz everywhere")
    if not all(hasattr(pattern, a) for a in ("dnu", "eps_p", "alpha", "d02")):
        raise TypeError("pattern must be a RadialPattern (with dnu, eps_p, alpha, d02); "
                        f"got {type(pattern).__name__}")
    if not (isinstance(false_alarm, (int, float)) and 0 < false_alarm < 1):
        raise OptionError(f"false_alarm must be a probability in (0, 1); got {false_alarm!r}")
    return float(numax), bg


def _dipole_mask(freq: np.ndarray, lo: float, hi: float, numax: float, dnu: float,
                 eps: float, alpha: float, d02: float, df: float) -> np.ndarray:
    """True on the bins of [lo, hi] outside the l=0, 2 and 3 windows."""
    n = np.arange(np.floor(lo / dnu - eps) - 2, np.ceil(hi / dnu - eps) + 2)
    mask = (freq >= lo) & (freq <= hi)
    d0l = {0: 0.0, 2: d02, 3: float(relations.d03_from_dnu(dnu))}
    for l, d in d0l.items():  # three degrees, each masked at once over all orders
        centres = np.asarray(relations.universal_pattern(n, l, dnu, numax, eps, alpha, d))
        half = max(_EXCLUDE_DNU[l] * dnu, _EXCLUDE_WIDTHS[l] * _TYPICAL_LINEWIDTH, 3.0 * df)
        idx = np.searchsorted(centres, freq)
        near = np.minimum(np.abs(freq - centres[np.clip(idx - 1, 0, n.size - 1)]),
                          np.abs(freq - centres[np.clip(idx, 0, n.size - 1)]))
        mask &= near > half
    return mask


def _find_peaks(freq: np.ndarray, snr: np.ndarray, mask: np.ndarray, threshold: float,
                merge: float) -> tuple[np.ndarray, np.ndarray]:
    """Local maxima above ``threshold`` in the masked bins, merged within ``merge`` μHz."""
    inner = np.zeros(snr.size, dtype=bool)
    inner[1:-1] = (snr[1:-1] >= snr[:-2]) & (snr[1:-1] > snr[2:])
    idx = np.flatnonzero(inner & mask & (snr > threshold))
    if idx.size == 0:
        return np.empty(0), np.empty(0)
    # Group peaks closer than `merge`; keep the highest of each group.
    group = np.concatenate([[0], np.cumsum(np.diff(freq[idx]) > merge)])
    order = np.lexsort((-snr[idx], group))
    first = np.concatenate([[True], np.diff(group[order]) > 0])
    keep = idx[order[first]]
    return freq[keep], snr[keep]
