"""The binned χ² 2-d.o.f. likelihood, its gradient and Hessian, and the optimiser."""

from __future__ import annotations

from typing import Any

import numpy as np
from scipy import optimize

from ..relations import (
    FWHM_TO_SIGMA,
    envelope_fwhm,
    granulation_parameters,
)
from .binning import (
    BinnedSpectrum,
)
from .components import (
    _XI4,
    ComponentSum,
    GaussianEnvelope,
    Granulation,
    WhiteNoise,
)

__all__ = []

# ---------------------------------------------------------------- likelihood


def _to_natural(u: np.ndarray, log_flags: np.ndarray) -> np.ndarray:
    return np.where(log_flags, np.exp(np.clip(u, -700, 700)), u)


def _nll_and_grad(
    u: np.ndarray, model: ComponentSum, log_flags: np.ndarray, binned: BinnedSpectrum
) -> tuple[float, np.ndarray]:
    params = _to_natural(u, log_flags)
    m = model.psd(binned.freq, params)
    m = np.maximum(m, 1e-300)
    ratio = binned.power / m
    nll = float(np.sum(binned.count * (np.log(m) + ratio)))
    jac = model.jacobian(binned.freq, params)
    grad = jac @ (binned.count * (1.0 - ratio) / m)
    return nll, grad


def _hessian(
    u: np.ndarray, model: ComponentSum, log_flags: np.ndarray, binned: BinnedSpectrum
) -> np.ndarray:
    """Observed information by central differences of the analytic gradient."""
    n = u.size
    hess = np.empty((n, n))
    for i in range(n):  # loop over parameters (≤ 10), not data
        step = 1e-4 * max(1.0, abs(u[i]))
        up, down = u.copy(), u.copy()
        up[i] += step
        down[i] -= step
        hess[i] = (_nll_and_grad(up, model, log_flags, binned)[1]
                   - _nll_and_grad(down, model, log_flags, binned)[1]) / (2 * step)
    return 0.5 * (hess + hess.T)


def _minimise(
    start: np.ndarray, bounds: list[tuple[float, float]], model: ComponentSum,
    binned: BinnedSpectrum,
) -> optimize.OptimizeResult:
    log_flags = np.array(model.log_params)
    return optimize.minimize(
        _nll_and_grad, start, args=(model, log_flags, binned), jac=True, method="L-BFGS-B",
        bounds=bounds, options={"maxiter": 500, "ftol": 1e-12, "gtol": 1e-8},
    )


def _start_and_bounds(
    numax: float, binned: BinnedSpectrum, with_envelope: bool, nyquist: float
) -> tuple[np.ndarray, list[tuple[float, float]]]:
    b1, b2, a = granulation_parameters(numax)
    white = float(np.median(binned.power[binned.freq > 0.8 * binned.freq.max()]))
    white = max(white, 1e-12)
    # Kallinger's amplitudes describe a typical star; scale them to this spectrum's level.
    level = float(np.median(binned.power[np.abs(np.log(binned.freq / b1)) < 0.3])) \
        if np.any(np.abs(np.log(binned.freq / b1)) < 0.3) else _XI4 * a**2 / b1
    a_start = float(np.sqrt(max(level - white, 1e-6 * level) * b1 / _XI4 * 2.0))
    start = [np.log(a_start), np.log(b1), np.log(a_start), np.log(b2)]
    lo_f, hi_f = float(binned.freq.min()), float(binned.freq.max())
    bounds = [
        (np.log(a_start) - 6, np.log(a_start) + 6),
        (np.log(max(b1 / 5, 0.2)), np.log(b1 * 2.5)),
        (np.log(a_start) - 6, np.log(a_start) + 6),
        (np.log(b2 / 2.5), np.log(min(b2 * 5, 2 * nyquist))),
    ]
    if with_envelope:
        width = float(envelope_fwhm(numax)) * FWHM_TO_SIGMA
        near = np.abs(binned.freq - numax) < width
        excess = float(np.median(binned.power[near])) if near.any() else level
        start += [np.log(max(excess * 0.5, 1e-6)), numax, np.log(width)]
        bounds += [
            (np.log(max(excess, 1e-6)) - 12, np.log(max(excess, 1e-6)) + 5),
            (max(lo_f, 0.6 * numax), min(hi_f, 1.5 * numax)),
            (np.log(width / 3.0), np.log(width * 3.0)),
        ]
    start += [np.log(white)]
    bounds += [(np.log(white) - 8, np.log(white) + 4)]
    start_arr = np.array([min(max(s, lo), hi) for s, (lo, hi) in zip(start, bounds, strict=True)])
    return start_arr, bounds


def _model(with_envelope: bool, nyquist: float, highpass: float) -> ComponentSum:
    parts: list[Any] = [Granulation("granulation 1"), Granulation("granulation 2")]
    if with_envelope:
        parts.append(GaussianEnvelope())
    parts.append(WhiteNoise())
    return ComponentSum(tuple(parts), nyquist, highpass)
