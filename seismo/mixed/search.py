"""ΔΠ1 candidates from the power of the stretched periods."""

from __future__ import annotations

import numpy as np

from ..relations.mixed import _p_phase  # same θp convention as the forward model
from .stretched import (
    _unwrapped_arctan,
)
from .types import (
    _ALIAS_RESOLUTIONS,
    _DPI1_RANGE,
    _Q_GRID,
    _ROT_CYCLES,
)

__all__ = []

# ---------------------------------------------------------------- candidate search

def _search(freq: np.ndarray, nu_p: np.ndarray, dnu: float, numax: float,
            cycles: np.ndarray = _ROT_CYCLES, still: bool = True
            ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, float]:
    """Stretched-period power over (ΔΠ1, q, rotation hypothesis).

    ``cycles`` are the trial rotation shifts (default `_ROT_CYCLES`); with
    ``still`` False the hypothesis without rotation is left out (the extended
    search, `_ROT_CYCLES_EXTENDED`, has only rotating hypotheses).

    Returns the ΔΠ1 grid (s), the normalised power, shape (n_grid, n_hyp),
    the index of the best hypothesis at each grid value, the hypothesis table (q, rotation in
    cycles of ΔΠ1 at ν_max, kernel constant a) and the number of
    effectively independent trials.
    """
    period = 1e6 / freq
    span = period.max() - period.min()
    n_span = span / _DPI1_RANGE[0] + 2.0 * (nu_p.size + 1)
    step = 1.0 / (3.0 * n_span)
    dpi1 = np.exp(np.arange(np.log(_DPI1_RANGE[0]), np.log(_DPI1_RANGE[1]), step))
    theta_p, _ = _p_phase(freq, nu_p, dnu)
    # Columns: (q, rotation cycles u, kernel a): c_k = a + 2 cos(2π u ν_max²/ν_k²)
    # for a triplet (a = 1) or a doublet (a = 0); u = 0 means no rotation.
    lead = [0.0] if still else []
    q_h = np.repeat(_Q_GRID, len(lead) + 2 * cycles.size)
    u_h = np.tile(np.concatenate([lead, cycles, cycles]), _Q_GRID.size)
    a_h = np.tile(np.concatenate([[1.0] * len(lead), np.ones(cycles.size),
                                  np.zeros(cycles.size)]), _Q_GRID.size)
    shift = _unwrapped_arctan(theta_p[:, None], q_h[None, :]) / np.pi  # (n_peaks, n_hyp)
    beta = 2.0 * np.pi * u_h[None, :] * (numax / freq[:, None]) ** 2
    kernel = np.where(u_h[None, :] > 0, a_h[None, :] + 2.0 * np.cos(beta), 1.0)
    weights = (kernel * np.exp(-2j * np.pi * shift)).astype(np.complex64)
    comb = _unit_phasors(period[None, :] / dpi1[:, None])
    power = np.abs(comb @ weights) ** 2 / np.sum(kernel**2, axis=0)[None, :]
    best = np.argmax(power, axis=1)
    hyp = np.column_stack([q_h, u_h, a_h])
    # Independent trials: ΔΠ1 grid oversampled 3×, about 3 independent q and
    # one per 0.15 cycle of rotation (our estimate).
    n_trials = dpi1.size / 3.0 * 3.0 * (float(still) + 2.0 * np.ptp(cycles) / 0.15)
    return dpi1, power, best, hyp, float(n_trials)


def _unit_phasors(cycles: np.ndarray) -> np.ndarray:
    """exp(2πi x) in complex64: the fraction of each cycle in float64, then cos and sin in
    float32 (about ten times faster than a complex128 exp, to the same complex64 result)."""
    frac = cycles - np.floor(cycles)
    angle = (2.0 * np.pi * frac).astype(np.float32)
    out = np.empty(angle.shape, dtype=np.complex64)
    out.real = np.cos(angle)
    out.imag = np.sin(angle)
    return out


def _local_maxima(y: np.ndarray, x: np.ndarray, n: int, min_sep: float) -> np.ndarray:
    """Indices of the ``n`` highest local maxima of y, at least ``min_sep`` apart in ln x."""
    inner = np.flatnonzero((y[1:-1] >= y[:-2]) & (y[1:-1] >= y[2:])) + 1
    out: list[int] = []
    for i in inner[np.argsort(y[inner])[::-1]]:  # a loop over candidates
        if all(abs(np.log(x[i] / x[j])) > min_sep for j in out):
            out.append(int(i))
        if len(out) == n:
            break
    return np.array(out, dtype=np.int64)


def _resolution(grid: np.ndarray, freq: np.ndarray, nu_p: np.ndarray, lo: float,
                hi: float) -> np.ndarray:
    """Resolution of the stretched-period power in ln ΔΠ1, shape (n_grid,).

    The stretched periods of the peaks span N = (P_max − P_min)/ΔΠ1 + n_p
    cycles of ΔΠ1 (each nominal p mode in the window adds one, through the
    arctan term), so the power resolves ln ΔΠ1 to about 1/N; a one-cycle
    alias of a period spacing lies 1/N away.
    """
    period = 1e6 / freq
    n_p = int(np.sum((nu_p > lo) & (nu_p < hi)))
    return 1.0 / ((period.max() - period.min()) / grid + n_p)


def _with_aliases(picks: np.ndarray, power: np.ndarray, grid: np.ndarray,
                  resolution: np.ndarray) -> np.ndarray:
    """The candidates followed by their one-cycle aliases.

    For each candidate, the highest local maximum of the power on either side
    between `_ALIAS_RESOLUTIONS` [0] and [1] resolution elements away is added.
    A splitting close to the g-mode spacing makes these aliases strong: the
    m = ±1 ridges are shifted by δν_rot,core/ν², which changes across the
    window, so they tilt in the stretched-period échelle and add power about
    one cycle to either side of the true ΔΠ1.
    """
    inner = np.flatnonzero((power[1:-1] >= power[:-2]) & (power[1:-1] >= power[2:])) + 1
    log_grid = np.log(grid)
    out = [int(i) for i in picks]
    for i in picks:  # a loop over a few candidates
        dist = (log_grid[inner] - log_grid[i]) / resolution[i]
        for side in (-1.0, 1.0):
            near = inner[(side * dist > _ALIAS_RESOLUTIONS[0])
                         & (side * dist <= _ALIAS_RESOLUTIONS[1])]
            if near.size:
                j = int(near[np.argmax(power[near])])
                if j not in out:
                    out.append(j)
    return np.array(out, dtype=np.int64)
