"""Fallback search: the mixture score itself over a grid of (ΔΠ1, q, rotation, ε_g).

The stretched-period power of `search._search` ranks candidates by a linear
sum over the peaks. With a core splitting of about half to one g-mode
spacing ν_max²ΔΠ1 (fast-rotating clump stars) its triplet kernel
1 + 2 cos β nearly vanishes or turns negative, the m = ±1 ridges cancel the
m = 0 ridge, and the true ΔΠ1 is not among the candidates at all, although a
fit started from it explains the peaks well. This search drops the linear
statistic: every trial assigns each peak the azimuthal order that fits it
best and evaluates the same mixture log-likelihood as `fit._Model.score`,
on a grid fine enough that the refinement starts inside the basin of the
right solution. It costs about ten times the ordinary search, so the stage
runs it only when that search gives no ΔΠ1.
"""

from __future__ import annotations

import numpy as np

from .fit import _Fit, _Model, _refine
from .stretched import _unwrapped_arctan
from .types import (
    _DPI1_RANGE,
    _M_ROUNDS_EXTENDED,
    _TYPICAL_LINEWIDTH,
)

__all__ = []

# Trial couplings, rotation shifts of the m = ±1 ridges at ν_max (cycles of
# ΔΠ1; 0 = no rotation) and g-mode phases ε_g of the grid.
_SCAN_Q = np.array([0.08, 0.2, 0.35])
_SCAN_CYCLES = np.linspace(0.0, 1.2, 9)
_SCAN_EPS = np.arange(8) / 8.0
# Grid points per ΔΠ1 resolution element (search._resolution), the number of
# best grid solutions refined and their smallest separation (resolution
# elements: one-cycle aliases are about one element apart).
_SCAN_OVERSAMPLE = 2.0
_SCAN_TOP = 6
_SCAN_SEPARATION = 0.6
# Smallest peak uncertainty in the grid score, cycles of the local mode
# spacing: a grid point is up to 1/16 cycle off in ε_g and about as much in
# the drift of ΔΠ1 across the peaks, so tighter (g-dominated, resolved to
# the frequency bin) peaks would score the grid's misalignment, not the fit.
_SCAN_TOLERANCE = 0.1
# Best starts refined by the local scan at twice the splitting of the best
# rotating solution.
_SCAN_ROT_REFINE = 3
# ΔΠ1 values per vectorised block (bounds the memory of the trial arrays).
_SCAN_BLOCK = 24


def _scan_grid(model: _Model) -> np.ndarray:
    """ΔΠ1 grid, s: steps of 1/(`_SCAN_OVERSAMPLE` N) in ln ΔΠ1, with N the number
    of ΔΠ1 cycles the stretched periods of the peaks span (as search._resolution:
    the period range over ΔΠ1 plus one cycle per nominal p mode)."""
    period = 1e6 / model.freq
    span = float(period.max() - period.min())
    n_p = float(model.orders.size)
    out = [np.log(_DPI1_RANGE[0])]
    while out[-1] < np.log(_DPI1_RANGE[1]):  # a loop over grid values, not data
        d = np.exp(out[-1])
        out.append(out[-1] + d / (_SCAN_OVERSAMPLE * (span + n_p * d)))
    return np.exp(np.array(out))


def _block_scores(model: _Model, dpi1: np.ndarray, numax: float
                  ) -> tuple[np.ndarray, np.ndarray]:
    """Best mixture score and its (q, cycles, ε_g) at each ΔΠ1 of a block, for two
    peak widths: each peak's own σ, and σ no tighter than `_SCAN_TOLERANCE`.

    The tight score finds solutions whose peaks are few or broad and whose
    rotation must be resolved; the loose one those with many sharp
    g-dominated peaks, which the grid cannot align to within their own σ.
    Returns the scores, shape (2, n_dpi1), and the parameters, shape
    (2, n_dpi1, 3).
    """
    f = model.freq[None, None, None, :]                       # (1, 1, 1, k)
    d = dpi1[:, None, None, None]                             # (D, 1, 1, 1)
    q = _SCAN_Q[None, :, None, None]                          # (1, Q, 1, 1)
    u = _SCAN_CYCLES[None, None, :, None]                     # (1, 1, U, 1)
    nu_p = model.nu_p(0.0)
    rot = u * numax**2 * d * 1e-6
    shape = (dpi1.size, _SCAN_Q.size, _SCAN_CYCLES.size, model.freq.size)
    phases, kappas = [], []
    for m in (-1, 0, 1):  # three azimuthal orders
        centre = f  # m = 0 does not depend on the rotation: computed once, broadcast
        if m:
            # One fixed-point step of stretched._unsplit: enough for a start.
            centre = f - m * model._zeta(np.broadcast_to(f, shape), nu_p, d, q)[0] * rot
        z, theta, *_ = model._zeta(centre, nu_p, d, q)
        phase = 1e6 / centre / d - _unwrapped_arctan(theta, q) / np.pi
        phase -= np.floor(phase)  # the fraction of a cycle is all the score needs
        # 1/σ in cycles of the local mode spacing ζ ν² ΔΠ1.
        kappa = d * z * f**2 * 1e-6 / np.hypot(model.df, 0.5 * _TYPICAL_LINEWIDTH * (1.0 - z))
        phases.append(np.broadcast_to(phase, shape).astype(np.float32))
        kappas.append(np.broadcast_to(kappa, shape).astype(np.float32))
    still = _SCAN_CYCLES == 0.0
    norm = np.float32(1.0 / np.sqrt(2.0 * np.pi))
    loose = np.float32(1.0 / _SCAN_TOLERANCE)

    best = np.full((2, dpi1.size), -np.inf)
    params = np.zeros((2, dpi1.size, 3))
    for eps in _SCAN_EPS.astype(np.float32):  # a loop over eight trial phases
        r = []
        for ph in phases:  # three orders; residual in cycles, in [0, ½]
            x = ph - eps
            r.append(np.abs(x - np.floor(x + np.float32(0.5))))
        # Without rotation every peak is m = 0; with it, the order that fits best.
        r[0][:, :, still] = np.inf
        r[2][:, :, still] = np.inf
        low = r[0] < r[1]
        rm = np.where(low, r[0], r[1])
        km = np.where(low, kappas[0], kappas[1])
        m = np.where(low, 0, 1).astype(np.int8)
        high = r[2] < rm
        rm = np.where(high, r[2], rm)
        km = np.where(high, kappas[2], km)
        m[high] = 2
        for k, kk in enumerate((km, np.minimum(km, loose))):  # the two widths
            x = rm * kk                                       # |residual| / σ
            inlier = x < 3.0
            counts = np.stack([np.sum(inlier & (m == j), axis=-1) for j in range(3)], -1)
            frac = ((counts + 1.0) / (counts.sum(-1, keepdims=True) + 3.0)).astype(np.float32)
            # m = ±1 equally visible, as in fit._Model.score.
            frac[..., 0] = frac[..., 2] = 0.5 * (frac[..., 0] + frac[..., 2])
            w = np.take_along_axis(frac, m.astype(np.intp), -1)
            w[:, :, still, :] = 1.0
            a = kk * w * np.exp(np.float32(-0.5) * x * x) * norm
            ll = np.sum(np.log(np.float32(0.5) + np.float32(0.5) * np.minimum(a, 1e6)),
                        axis=-1, dtype=np.float64)             # (D, Q, U)
            flat = ll.reshape(dpi1.size, -1)
            j = np.argmax(flat, axis=1)
            top = flat[np.arange(dpi1.size), j]
            better = top > best[k]
            qi, ui = np.unravel_index(j, ll.shape[1:])
            best[k] = np.where(better, top, best[k])
            params[k][better] = np.column_stack([_SCAN_Q[qi], _SCAN_CYCLES[ui],
                                                 np.full(dpi1.size, float(eps))])[better]
    return best, params


def _scan_fits(model: _Model, numax: float) -> list[_Fit]:
    """Refined fits of the best distinct solutions of the grid scan.

    The grid is `_scan_grid` × `_SCAN_Q` × `_SCAN_CYCLES` × `_SCAN_EPS`; for
    each of the two grid scores of `_block_scores`, the `_SCAN_TOP` best grid
    solutions at least `_SCAN_SEPARATION` resolution elements apart in ΔΠ1 are
    refined (with rotation when their cycles are non-zero).
    """
    grid = _scan_grid(model)
    scores = np.empty((2, grid.size))
    params = np.empty((2, grid.size, 3))
    for start in range(0, grid.size, _SCAN_BLOCK):  # a loop over blocks of the grid
        block = slice(start, start + _SCAN_BLOCK)
        scores[:, block], params[:, block] = _block_scores(model, grid[block], numax)
    period = 1e6 / model.freq
    element = grid / (float(period.max() - period.min()) + model.orders.size * grid)
    starts: list[tuple[float, np.ndarray, int]] = []
    for k in range(2):  # the two widths
        picks: list[int] = []
        for i in np.argsort(-scores[k]):  # a loop until a few distinct solutions
            if all(abs(np.log(grid[i] / grid[j])) > _SCAN_SEPARATION * element[i]
                   for j in picks):
                picks.append(int(i))
            if len(picks) == _SCAN_TOP:
                break
        starts += [(float(grid[i]), params[k, i], rank) for rank, i in enumerate(picks)]
    fits = []
    for dpi1, (q, cycles, eps), rank in starts:  # a loop over a few refinements
        rot = cycles * numax**2 * dpi1 * 1e-6
        # The grid's coarse rotation steps can land on a splitting half or twice
        # the true one; the best two solutions are also refined from those.
        factors = (1.0, 0.5, 2.0) if cycles > 0 and rank < 2 else (1.0,)
        trials = [_refine(model, np.array([dpi1, q, eps, 0.0, k * rot]), bool(cycles > 0),
                          _M_ROUNDS_EXTENDED) for k in factors]
        fits.append(max(trials, key=lambda f: f.score))
    # One-cycle aliases of the best refined solution, and of the best rotating one when
    # the best does not rotate (the grid may favour the wrong one of a pair, and a
    # still solution and a rotating one a cycle apart may each hold half the truth):
    # a fine local scan, ±1.5 resolution elements in ΔΠ1 by quarters × 16 phases ε_g
    # (the refinement's basin in ε_g is about ±0.1), and the best start on each side
    # refined.
    best = max(fits, key=lambda f: f.score)
    bases = [best]
    if not best.rotating and any(f.rotating for f in fits):
        bases.append(max((f for f in fits if f.rotating), key=lambda f: f.score))
    for base in bases:  # one or two solutions
        for side in (-1.0, 1.0):  # two sides
            starts = _local_starts(model, base, side * np.arange(2, 7), 1.0)
            fits.append(_refine(model, starts[0], base.rotating, _M_ROUNDS_EXTENDED))
    # Twice the splitting of the best rotating solution: the grid steps and the
    # refinement can settle on half the true splitting with ΔΠ1 and ε_g slightly off,
    # where the factor-2 start from the grid point above misses the true basin. The
    # same local scan (±1.5 elements, centre included) at twice its splitting; the
    # best few starts refined. (Half the splitting is not tried: it made confident
    # half-splitting aliases of correct solutions, docs/accuracy.md.)
    spinning = [f for f in fits if f.rotating]
    if spinning:
        best = max(spinning, key=lambda f: f.score)
        for start in _local_starts(model, best, np.arange(-6, 7), 2.0)[:_SCAN_ROT_REFINE]:
            fits.append(_refine(model, start, True, _M_ROUNDS_EXTENDED))
    return fits


def _local_starts(model: _Model, fit: _Fit, quarters: np.ndarray, rot_factor: float,
                  phases: int = 16) -> list[np.ndarray]:
    """Starts around ``fit``: ΔΠ1 moved by ``quarters`` quarter resolution elements,
    ``phases`` phases ε_g, the splitting times ``rot_factor``; best mixture score first."""
    d0, q0, _, shift0, rot0 = fit.params
    period = 1e6 / model.freq
    step = d0 / (float(period.max() - period.min()) + model.orders.size * d0)
    trials = [np.array([d0 * np.exp(j * step / 4.0), q0, e, shift0, rot0 * rot_factor])
              for j in quarters for e in np.arange(phases) / phases]
    quick = []
    for t in trials:  # a loop over cheap evaluations (``phases`` per ΔΠ1 step)
        m = model.best_m(t) if fit.rotating else np.zeros(model.freq.size, np.int64)
        quick.append(model.score(t, m, fit.rotating)[0])
    return [trials[k] for k in np.argsort(-np.asarray(quick), kind="stable")]
