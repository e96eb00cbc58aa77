"""Checks of a rotating solution: its splitting's aliases, and its two halves.

A core splitting is inferred from which peaks the fit assigns to m = ±1. Several
splittings can explain nearly the same peaks: half or twice the true one (a doublet
of m = ±1 read as m = 0 and m = +1), or the true one shifted by the g-mode spacing
ν_max²ΔΠ1 (the m = ±1 ridges then move by a whole ΔΠ1 at ν_max), and, for a star
that does not rotate, the stochastic structure of broad p-dominated modes read as
satellites. `_splitting_alternatives` refits these aliases so that the stage reports
a splitting only when it beats all of them clearly; `_split_rotation` refits the
two halves of the spectrum separately.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..results import Measurement
from .fit import _UPPER, _Fit, _Model, _refine
from .scan import _local_starts
from .types import _MIN_INLIERS, _SPLITTING_MARGIN

__all__: list[str] = []

# Phases ε_g tried per alias start (the refinement's basin in ε_g is about ±0.1,
# scan._local_starts) and starts refined per alias of the splitting.
_ALIAS_PHASES = 8
_ALIAS_STARTS = 2
# Largest relative distance of a freely refitted alias splitting from the alias tried
# (the aliases are at least a factor 1.5 or one g-mode spacing from the winner's).
_ALIAS_DRIFT = 0.25


def _splitting_alternatives(model: _Model, win: _Fit, numax: float) -> list[_Fit]:
    """Refits of a rotating solution without rotation and at the aliases of its splitting.

    With δν the fitted splitting and g = ν_max²ΔΠ1 the g-mode spacing at ν_max (μHz),
    the aliases tried are δν/2, 2δν, δν + g and |δν − g|. Each moves the m = 0 ridge as
    well, and may pair with a one-cycle alias of ΔΠ1, so for each the starts are
    `_ALIAS_PHASES` phases ε_g at ΔΠ1 and at ΔΠ1 moved by one resolution element
    either way (`scan._local_starts`: the stretched periods of the peaks span N
    cycles of ΔΠ1, so ln ΔΠ1 resolves to 1/N); they are scored and the best
    `_ALIAS_STARTS` refined
    with the azimuthal orders re-assigned (the quick score of a start does not always
    rank the basins right), first with the splitting held at the alias, then free.
    A free refit that runs back to the winner's splitting (beyond `_ALIAS_DRIFT` of
    the alias) says nothing about the alias; the held fit stands for it then. Returns
    the fit without rotation first, then one fit per alias (tens of milliseconds in
    all).
    """
    rot = float(win.params[4])
    spacing = numax**2 * float(win.params[0]) * 1e-6
    out = [_refine(model, win.params, False)]
    trials = (0.5 * rot, 2.0 * rot, rot + spacing, abs(rot - spacing))
    for trial in trials:  # a loop over four aliases
        if not 2.0 * model.df < trial <= _UPPER[4]:
            continue
        # ΔΠ1 one resolution element (four quarters) to either side, and at the winner's.
        starts = _local_starts(model, win, np.array([-4, 0, 4]), trial / rot, _ALIAS_PHASES)
        held = max((_refine(model, p, True, hold_rotation=True)
                    for p in starts[:_ALIAS_STARTS]), key=lambda f: f.score)
        free = _refine(model, held.params, True)
        near = abs(float(free.params[4]) / trial - 1.0) <= _ALIAS_DRIFT
        out.append(free if near and free.score >= held.score else held)
    return out


def _splitting_ties(win: _Fit, alternatives: list[_Fit]) -> list[_Fit]:
    """The alternatives that fit about as well as ``win`` with another splitting.

    A fit without rotation, or a rotating fit whose splitting differs from that of
    ``win`` by more than 10 %, within `_SPLITTING_MARGIN` of its score.
    """
    rot = float(win.params[4])
    return [f for f in alternatives
            if f.score > win.score - _SPLITTING_MARGIN
            and (not f.rotating or abs(f.params[4] / rot - 1.0) > 0.1)]


def _better_alias(win: _Fit, alternatives: list[_Fit]) -> _Fit | None:
    """A rotating alternative that scores higher than ``win`` and is itself usable
    (a covariance with the splitting free and at least `_MIN_INLIERS` inliers), the
    best such; else None."""
    usable = [f for f in alternatives
              if f.rotating and f.score > win.score and f.cov is not None
              and np.isfinite(f.cov[4, 4])
              and int(np.sum(f.inlier)) >= _MIN_INLIERS]
    return max(usable, key=lambda f: f.score) if usable else None


def _tie_errors(win: _Fit, err: np.ndarray, ties: list[_Fit]) -> np.ndarray:
    """Errors of (ΔΠ1, q, ε_g, …) widened by the largest difference to the tied fits.

    When the splitting cannot be told from its aliases, the period spacing and the
    coupling of the tied fits differ by a few tenths of a per cent, often many of
    the statistical errors: that spread is added in quadrature. ε_g differences are
    taken modulo 1.
    """
    out = err.copy()
    for k in (0, 1):
        spread = max(abs(float(f.params[k] - win.params[k])) for f in ties)
        out[k] = float(np.hypot(out[k], spread))
    phase = max(abs(float((f.params[2] - win.params[2] + 0.5) % 1.0 - 0.5)) for f in ties)
    out[2] = float(np.hypot(out[2], phase))
    return out


def _split_rotation(model: _Model, win: _Fit, numax: float) -> list[list[float]] | None:
    """Refit the rotating solution on the peaks below and above numax separately.

    A splitting that is real is found by both halves; one that only fits the
    m-assignment of an alias (splittings close to the mode spacing, or slow
    clump rotation blended with the linewidths) moves between them.
    Returns ``[[rot, err], [rot, err]]`` or None when a half has too few peaks.
    """
    out = []
    for half in (model.freq < numax, model.freq >= numax):
        if half.sum() < 2 * _MIN_INLIERS:
            return None
        sub = _Model(model.freq[half], model.dnu, model.numax, model.eps, model.alpha,
                     model.d01, model.orders, model.df)
        fit = _refine(sub, win.params, True)
        if fit.cov is None:
            return None
        out.append([float(fit.params[4]), float(np.sqrt(fit.cov[4, 4]))])
    return out


def _holds_without_rotation(model: _Model, win: _Fit, dpi1_error: float,
                            inputs: dict[str, Any], min_score: float) -> bool:
    """Whether the ΔΠ1 of a rotating fit whose splitting is unstable stands without it.

    The rotating solution is refitted with no splitting (every peak m = 0). Its
    ΔΠ1 is kept only if that fit alone passes ``min_score`` (the ordinary threshold
    of the pass) and agrees with the rotating ΔΠ1 within 3 combined sigmas; otherwise
    the period spacing rests on an m-assignment the split-half check has rejected. ``inputs`` gets
    ``dpi1_without_rotation`` = [ΔΠ1 (s), error (s), score].
    """
    still = _refine(model, win.params, False)
    if still.cov is None:
        inputs["dpi1_without_rotation"] = [float(still.params[0]), float("nan"), still.score]
        return False
    still_error = float(np.sqrt(still.cov[0, 0]))
    inputs["dpi1_without_rotation"] = [float(still.params[0]), still_error, still.score]
    tolerance = 3.0 * float(np.hypot(still_error, dpi1_error))
    return bool(still.score >= min_score
                and abs(still.params[0] - win.params[0]) <= tolerance)


def _unstable_rivals(win: _Fit, dpi1_error: float, inputs: dict[str, Any]
                     ) -> tuple[Measurement, ...]:
    """ΔΠ1 (s) of a significant rotating winner withdrawn by the split-half check, and
    of its refit without rotation (`_holds_without_rotation`), for the state.

    The two bracket the period spacing when only the m-assignment is in doubt: the
    aliases such an assignment makes lie a resolution element (about 1 %) away, the
    state regions a factor of two to three apart. A refit without a covariance gets
    a 1 % error. Recorded in ``inputs["dpi1_rivals"]``.
    """
    value, error, _ = inputs["dpi1_without_rotation"]
    still_error = error if np.isfinite(error) else 0.01 * value
    out = (Measurement(float(win.params[0]), float(dpi1_error)),
           Measurement(float(value), float(still_error)))
    inputs["dpi1_rivals"] = [[m.value, m.error] for m in out]
    return out


def _halves_agree(halves: list[list[float]], rot: float, err: float) -> bool:
    """Both halves within 3 combined sigmas of each other and of the whole."""
    (r1, e1), (r2, e2) = halves
    tolerance = 3.0 * float(np.hypot(e1, e2))
    return abs(r1 - r2) <= tolerance and max(abs(r1 - rot), abs(r2 - rot)) <= tolerance
