"""The background fit and its result type; errors and over-dispersion."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import optimize

from ..errors import OptionError
from ..relations import (
    dnu_from_numax,
)
from ..spectrum import PowerSpectrum
from .binning import (
    BinnedSpectrum,
    bin_spectrum,
)
from .components import (
    ComponentSum,
    GaussianEnvelope,
)
from .likelihood import (
    _hessian,
    _minimise,
    _model,
    _start_and_bounds,
    _to_natural,
)

__all__ = ["BackgroundFit", "fit_background"]

# ---------------------------------------------------------------- results


@dataclass(frozen=True, eq=False)
class BackgroundFit:
    """Maximum-likelihood fit of granulation (+ envelope) + white noise.

    Attributes
    ----------
    model : ComponentSum
        The fitted model; evaluate with ``model.psd(freq, params)``.
    params : ndarray, shape (n_params,)
        Best-fit parameters in natural units (ppm, μHz, ppm²/μHz).
    errors : ndarray, shape (n_params,)
        One-sigma errors in natural units (NaN where not available).
    covariance : ndarray, shape (n_params, n_params)
        Covariance of the fitted (log-transformed where flagged) parameters.
    neg_log_like : float
        −ln L at the optimum (binned).
    overdispersion : float
        Factor applied to the covariance (≥ 1).
    flags : tuple of str
        Problems met (parameters at bounds, singular Hessian, …).
    """

    model: ComponentSum
    params: np.ndarray
    errors: np.ndarray
    covariance: np.ndarray
    neg_log_like: float
    overdispersion: float = 1.0
    flags: tuple[str, ...] = ()
    binned: BinnedSpectrum | None = None

    @property
    def names(self) -> tuple[str, ...]:
        """Qualified parameter names."""
        return self.model.param_names

    def value(self, name: str) -> float:
        """Best-fit value of a parameter by qualified name (e.g. ``"envelope:numax"``)."""
        return float(self.params[self.names.index(name)])

    def error(self, name: str) -> float:
        """One-sigma error of a parameter by qualified name."""
        return float(self.errors[self.names.index(name)])

    def parts(self, freq: np.ndarray) -> dict[str, np.ndarray]:
        """Each fitted component at ``freq`` (μHz), as seen in the spectrum, ppm²/μHz."""
        return self.model.parts(np.asarray(freq, dtype=np.float64), self.params)

    def background(self, freq: np.ndarray) -> np.ndarray:
        """Fitted background without the envelope at ``freq`` (μHz), ppm²/μHz.

        The high-pass filter's transmission vanishes at 0 μHz; the result is
        floored at its smallest positive value so that a signal-to-noise
        spectrum (density / background) is defined everywhere.
        """
        parts = self.parts(freq)
        total = np.sum([v for k, v in parts.items() if k != "envelope"], axis=0)
        positive = total[total > 0]
        return np.maximum(total, positive.min()) if positive.size else total

    @property
    def has_envelope(self) -> bool:
        """Whether the model includes the oscillation envelope."""
        return any(isinstance(c, GaussianEnvelope) for c in self.model.components)

    def height_to_background(self) -> float:
        """Envelope height over the background at numax (both as observed)."""
        if not self.has_envelope:
            return float("nan")
        numax = np.array([self.value("envelope:numax")])
        env = self.parts(numax)["envelope"][0]
        return float(env / self.background(numax)[0])

    def as_dict(self) -> dict[str, Any]:
        """Parameters and errors keyed by qualified name (JSON-able)."""
        return {
            name: {"value": float(v), "error": None if not np.isfinite(e) else float(e)}
            for name, v, e in zip(self.names, self.params, self.errors, strict=True)
        }

    def __repr__(self) -> str:
        if self.has_envelope:
            return (f"<BackgroundFit numax={self.value('envelope:numax'):.3f}"
                    f"±{self.error('envelope:numax'):.3f} μHz HBR="
                    f"{self.height_to_background():.3g} flags={list(self.flags)}>")
        return f"<BackgroundFit background only, flags={list(self.flags)}>"


def _finish(
    result: optimize.OptimizeResult, bounds: list[tuple[float, float]], model: ComponentSum,
    binned: BinnedSpectrum,
) -> BackgroundFit:
    log_flags = np.array(model.log_params)
    u = result.x
    params = _to_natural(u, log_flags)
    flags: list[str] = []
    if not result.success:
        flags.append("background_fit_not_converged")
    for name, value, (lo, hi) in zip(model.param_names, u, bounds, strict=True):
        span = hi - lo
        if value - lo < 1e-3 * span or hi - value < 1e-3 * span:
            flags.append(f"at_bound:{name}")
    hess = _hessian(u, model, log_flags, binned)
    try:
        cov = np.linalg.inv(hess)
        if not np.all(np.isfinite(cov)) or np.any(np.diag(cov) <= 0):
            raise np.linalg.LinAlgError
    except np.linalg.LinAlgError:
        cov = np.full_like(hess, np.nan)
        flags.append("background_errors_unavailable")
    phi = 1.0
    if any(isinstance(c, GaussianEnvelope) for c in model.components):
        phi = _overdispersion(binned, model, params)
        cov = cov * phi
    err_u = np.sqrt(np.diag(cov))
    errors = np.where(log_flags, params * err_u, err_u)
    return BackgroundFit(model, params, errors, cov, float(result.fun), phi, tuple(flags), binned)


def _overdispersion(binned: BinnedSpectrum, model: ComponentSum, params: np.ndarray) -> float:
    """Scatter of the spectrum about the model near numax, per unit of χ² expectation.

    Measured on groups one Δν wide (Δν from numax by Stello et al. 2009), so that the
    comb of individual modes averages out within a group and what remains is the
    realisation noise of the modes and any mismatch of the envelope's shape.
    """
    names = model.param_names
    numax = params[names.index("envelope:numax")]
    width = params[names.index("envelope:width")]
    near = np.abs(binned.freq - numax) < 2.0 * width
    if near.sum() < 5:
        return 1.0
    dnu = float(dnu_from_numax(numax))
    f = binned.freq[near]
    group = np.floor((f - f.min()) / dnu).astype(np.int64)
    count = np.bincount(group, binned.count[near])
    power = np.bincount(group, binned.count[near] * binned.power[near])
    expect = np.bincount(group, binned.count[near] * model.psd(f, params))
    good = count > 0
    if good.sum() < 3:
        return 1.0
    chi = count[good] * (power[good] / expect[good] - 1.0) ** 2
    return max(1.0, float(np.mean(chi)))


def fit_background(
    ps: PowerSpectrum,
    numax_guess: float | None,
    *,
    fmin: float | None = None,
    fmax: float | None = None,
    highpass_uhz: float | None = None,
    binned: BinnedSpectrum | None = None,
) -> BackgroundFit:
    """Fit granulation, white noise and (if ``numax_guess`` is given) the envelope.

    Parameters
    ----------
    ps : PowerSpectrum
        Spectrum of the conditioned light curve (μHz, ppm²/μHz).
    numax_guess : float or None
        Starting numax, μHz; ``None`` fits the background alone (start values
        from a typical numax of 40 μHz).
    fmin, fmax : float, optional
        Fitted range, μHz; default from the high-pass frequency (or 5 times
        the resolution) to the top of the spectrum.
    highpass_uhz : float, optional
        Protected frequency of the conditioning high-pass filter, μHz; taken
        from ``ps.meta["highpass_uhz"]`` when not given, else 0.
    binned : BinnedSpectrum, optional
        Pre-binned spectrum (to share between fits).

    Returns
    -------
    BackgroundFit

    References
    ----------
    Kallinger et al. 2014, A&A 570, A41 (two components with exponent 4 and
    their scaling with numax); Anderson, Duvall & Jefferies 1990, ApJ 364, 699
    (χ² 2-d.o.f. statistics).
    """
    highpass = ps.meta.get("highpass_uhz", 0.0) if highpass_uhz is None else highpass_uhz
    if binned is None:
        lo, hi = _fit_range(ps, fmin, fmax, highpass)
        binned = bin_spectrum(ps, lo, hi)
    with_env = numax_guess is not None
    model = _model(with_env, ps.nyquist, highpass or 0.0)
    start, bounds = _start_and_bounds(
        numax_guess if with_env else 40.0, binned, with_env, ps.nyquist
    )
    result = _minimise(start, bounds, model, binned)
    return _finish(result, bounds, model, binned)


def _fit_range(
    ps: PowerSpectrum, fmin: float | None, fmax: float | None, highpass: float
) -> tuple[float, float]:
    lo = fmin if fmin is not None else max(highpass or 0.0, 5.0 * ps.resolution, 1.0)
    hi = fmax if fmax is not None else float(ps.freq[-1])
    if not hi > lo:
        raise OptionError(f"fit range is empty: fmin {lo:.4g} ≥ fmax {hi:.4g} μHz")
    return lo, hi
