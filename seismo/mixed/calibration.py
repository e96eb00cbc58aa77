"""False-alarm calibration of the mixed-mode score thresholds: shuffled peak lists.

The peaks of a real spectrum (same number, same S/B) are moved to random bins of the
dipole region, which keeps the density of peaks and the masking of l = 0, 2, 3 but
destroys any period spacing; the whole search is then run on each list. Used by
`benchmarks/mixed_accuracy.py --null N` and the tests; not part of an analysis.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..spectrum import PowerSpectrum
from .setup import _find_peaks, _validate
from .stage import _region, _solve
from .types import _DEEP, _DEEP_FALSE_ALARM, _FIRST, _MIN_PEAKS, _TYPICAL_LINEWIDTH

__all__: list[str] = []


def _shuffled_scores(ps: PowerSpectrum, background: Any, numax: float, pattern: Any,
                     n_shuffles: int, rng: np.random.Generator | int | None = None,
                     false_alarm: float = 0.9, extended: bool = False) -> list[float]:
    """Winning mixture scores of the star's peak list moved to random dipole bins.

    The false-alarm calibration of `_MIN_SCORE`: the peaks of the real
    spectrum (same number, same S/B) are placed on distinct bins drawn
    uniformly from the dipole region, which keeps the density of peaks and
    the masking of l = 0, 2, 3 but destroys any period spacing; the whole
    search and refinement is then run on each list. Returns one score per
    shuffle (an empty list when the real list is too short to be searched).
    With ``extended`` it returns instead, per shuffle, the best score of the
    solutions found only by the extended rotation search (the calibration of
    `_MIN_SCORE_EXTENDED`; −inf when there is none); `_shuffled_both` gives
    both from the same shuffles.
    """
    both = _shuffled_both(ps, background, numax, pattern, n_shuffles, rng, false_alarm)
    return [b[1] if extended else b[0] for b in both]


def _shuffled_both(ps: PowerSpectrum, background: Any, numax: float, pattern: Any,
                   n_shuffles: int, rng: np.random.Generator | int | None = None,
                   false_alarm: float = 0.9, length: int | None = None,
                   deep: bool = False) -> list[tuple[float, ...]]:
    """Per shuffle of `_shuffled_scores`: (best ordinary score, best extended score,
    best score of the grid scan (−inf when the scan did not run), how far the best
    solution of all is above the score threshold of the search that found it, its peak
    equivalents (`_MIN_PEAK_EQUIVALENTS`), 1.0 if a ΔΠ1 was reported else 0.0).

    With ``length``, each shuffled list has that many peaks (at most the real
    number): the list of a fainter star of the same kind. With ``deep``, the lists
    are those of the second pass (`_DEEP_FALSE_ALARM`, thresholds `_DEEP`).
    """
    numax, bg = _validate(ps, background, numax, pattern, false_alarm)
    rng = np.random.default_rng(rng)
    levels = _DEEP if deep else _FIRST
    false_alarm = _DEEP_FALSE_ALARM if deep else false_alarm
    inputs: dict[str, Any] = {"numax": numax, "false_alarm": float(false_alarm)}
    mask = _region(ps, numax, pattern, inputs)
    threshold = -np.log(false_alarm / max(int(mask.sum()), 1))
    freq, snr = _find_peaks(ps.freq, ps.density / bg, mask, threshold,
                            max(2.5 * ps.df, 0.5 * _TYPICAL_LINEWIDTH))
    if freq.size < _MIN_PEAKS:
        return []
    bins = ps.freq[mask]
    size = freq.size if length is None else max(_MIN_PEAKS, min(int(length), freq.size))
    scores = []
    for _ in range(n_shuffles):  # a loop over shuffles, each a full search
        fake = np.sort(rng.choice(bins, size=size, replace=False))
        heights = rng.permutation(snr) if size == freq.size else rng.choice(snr, size)
        result = _solve(fake, heights, ps.df, dict(inputs), levels)
        ordinary = [c["score"] for c in result.candidates
                    if not c["extended"] and not c["scan"]]
        extra = [c["score"] for c in result.candidates if c["extended"]]
        scores.append((max(ordinary, default=-np.inf), max(extra, default=-np.inf),
                       result.inputs.get("scan_score", -np.inf),
                       result.inputs.get("top_score", -np.inf)
                       - result.inputs.get("top_min_score", 0.0),
                       result.inputs.get("top_peak_equivalents", float("nan")),
                       float(result.dpi1 is not None)))
    return scores
