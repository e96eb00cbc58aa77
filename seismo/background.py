"""Detection of solar-like oscillations, and the background + envelope fit.

The model of the power density spectrum is

.. math::

    M(\\nu) = T^2(\\nu)\\,\\Big[\\eta^2(\\nu)\\Big(\\sum_{i=1}^{2}
      \\frac{\\xi a_i^2/b_i}{1+(\\nu/b_i)^4}
      + H\\,e^{-(\\nu-\\nu_\\mathrm{max})^2/2w^2}\\Big) + W\\Big],

two granulation components with exponent 4 (Kallinger et al. 2014, A&A 570,
A41), a Gaussian oscillation envelope of height ``H`` and width ``w`` at
``numax``, white noise ``W``; η² = sinc²(πν/2ν_Nyq) is the attenuation from
integrating over each exposure (Chaplin et al. 2011; REFERENCES.md §3d) and
T² the power transmission of seismo's own high-pass filter, so the model
describes the conditioned series exactly. ξ = 2√2/π makes ``a_i`` the rms
amplitude of component ``i``.

The fit is by maximum likelihood with the statistics of a power spectrum:
each bin is χ² with 2 degrees of freedom about the model (Anderson, Duvall &
Jefferies 1990, ApJ 364, 699; Toutain & Appourchaux 1994). To make it fast the
spectrum is averaged in logarithmically spaced bins of ``n_k`` original bins,
whose mean follows a gamma distribution of shape ``n_k``, so

.. math:: -\\ln L = \\sum_k n_k\\,(\\ln M_k + \\bar P_k / M_k) + \\mathrm{const}.

Uncertainties come from the inverse Hessian of −ln L (the observed Fisher
information), widened by the over-dispersion of the binned spectrum about the
model near numax: individual modes are not the smooth Gaussian the model
assumes, so the χ² statistics understate the scatter there (a quasi-likelihood
correction, McCullagh & Nelder 1989, common practice).

Detection is a likelihood-ratio test of the model with the envelope against
the background alone, with a false-alarm probability that accounts for the
number of independent trial numax over the searched range (a Bonferroni
look-elsewhere correction, common practice).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy import optimize, stats

from .errors import OptionError
from .lightcurve.conditioning import highpass_transmission
from .relations import (
    FWHM_TO_SIGMA,
    dnu_from_numax,
    envelope_fwhm,
    granulation_parameters,
    harvey_norm,
)
from .spectrum import PowerSpectrum

__all__ = [
    "Granulation",
    "GaussianEnvelope",
    "WhiteNoise",
    "ComponentSum",
    "BinnedSpectrum",
    "bin_spectrum",
    "BackgroundFit",
    "fit_background",
    "Detection",
    "detect_oscillations",
    "DetectionOptions",
    "sample_posterior",
]

_XI4 = float(harvey_norm(4.0))


# ---------------------------------------------------------------- components
#
# Each component declares its parameter names, which are fitted in log space
# (all but frequencies that may be compared linearly), its bounds given a
# numax guess, and psd / jacobian. The jacobian is with respect to the fitted
# (transformed) parameters. A ComponentSum is itself a component.


@dataclass(frozen=True)
class Granulation:
    """Harvey-like granulation component with exponent 4 (Kallinger et al. 2014).

    Parameters: ``a`` (rms amplitude, ppm; fitted as ln a) and ``b``
    (characteristic frequency, μHz; fitted as ln b).
    """

    label: str = "granulation"
    scale_b: float = 1.0

    param_names: tuple[str, ...] = ("a", "b")
    log_params: tuple[bool, ...] = (True, True)
    attenuated: bool = True

    def psd(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """Power density, ppm²/μHz, at ``freq`` (μHz); ``params`` = (a, b)."""
        a, b = params
        return _XI4 * a**2 / b / (1.0 + (freq / b) ** 4)

    def jacobian(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """d psd / d(ln a, ln b), shape (2, n_freq)."""
        a, b = params
        s = (freq / b) ** 4
        g = _XI4 * a**2 / b / (1.0 + s)
        return np.stack([2.0 * g, g * (-1.0 + 4.0 * s / (1.0 + s))])


@dataclass(frozen=True)
class GaussianEnvelope:
    """Gaussian oscillation envelope: height (ppm²/μHz), numax (μHz), width σ (μHz)."""

    label: str = "envelope"
    param_names: tuple[str, ...] = ("height", "numax", "width")
    log_params: tuple[bool, ...] = (True, False, True)
    attenuated: bool = True

    def psd(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """Power density, ppm²/μHz; ``params`` = (height, numax, width)."""
        h, nu0, w = params
        return h * np.exp(-0.5 * ((freq - nu0) / w) ** 2)

    def jacobian(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """d psd / d(ln height, numax, ln width), shape (3, n_freq)."""
        h, nu0, w = params
        z = (freq - nu0) / w
        g = h * np.exp(-0.5 * z**2)
        return np.stack([g, g * z / w, g * z**2])


@dataclass(frozen=True)
class WhiteNoise:
    """Frequency-independent noise level, ppm²/μHz (not attenuated: it is added after
    the exposure integration)."""

    label: str = "white noise"
    param_names: tuple[str, ...] = ("level",)
    log_params: tuple[bool, ...] = (True,)
    attenuated: bool = False

    def psd(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """Constant density, ppm²/μHz."""
        return params[0] * np.ones_like(freq)

    def jacobian(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """d psd / d ln level, shape (1, n_freq)."""
        return np.full((1, freq.size), params[0])


@dataclass(frozen=True)
class ComponentSum:
    """Sum of components, attenuated by η²(ν) where they are physical signal and by the
    high-pass filter's power transmission everywhere."""

    components: tuple[Any, ...]
    nyquist: float
    highpass_uhz: float = 0.0
    _cache: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)

    @property
    def param_names(self) -> tuple[str, ...]:
        """Qualified names ``"<label>:<param>"`` in fitting order."""
        return tuple(f"{c.label}:{p}" for c in self.components for p in c.param_names)

    @property
    def log_params(self) -> tuple[bool, ...]:
        """Which parameters are fitted as logarithms."""
        return tuple(flag for c in self.components for flag in c.log_params)

    def _slices(self) -> list[slice]:
        out, start = [], 0
        for c in self.components:
            out.append(slice(start, start + len(c.param_names)))
            start += len(c.param_names)
        return out

    def _weights(self, freq: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        # The fit evaluates the model hundreds of times on the same bins: keep the
        # attenuation factors of the last frequency array seen.
        key = (freq.shape, float(freq.flat[0]), float(freq.flat[-1]), float(freq.sum()))
        cached = self._cache.get("weights")
        if cached is not None and cached[0] == key:
            return cached[1]
        eta2 = np.sinc(freq / (2.0 * self.nyquist)) ** 2
        t2 = highpass_transmission(freq, self.highpass_uhz) ** 2
        self._cache["weights"] = (key, (eta2, t2))
        return eta2, t2

    def parts(self, freq: np.ndarray, params: np.ndarray) -> dict[str, np.ndarray]:
        """Each component as it appears in the observed spectrum, ppm²/μHz."""
        eta2, t2 = self._weights(freq)
        out: dict[str, np.ndarray] = {}
        for c, sl in zip(self.components, self._slices(), strict=True):
            value = c.psd(freq, params[sl]) * t2
            out[c.label] = value * eta2 if c.attenuated else value
        return out

    def psd(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """Total model density, ppm²/μHz."""
        return np.sum(list(self.parts(freq, params).values()), axis=0)

    def jacobian(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """d psd / d(fitted parameters), shape (n_params, n_freq)."""
        eta2, t2 = self._weights(freq)
        rows = []
        for c, sl in zip(self.components, self._slices(), strict=True):
            jac = c.jacobian(freq, params[sl]) * t2
            rows.append(jac * eta2 if c.attenuated else jac)
        return np.concatenate(rows, axis=0)


# ---------------------------------------------------------------- binning


@dataclass(frozen=True)
class BinnedSpectrum:
    """Spectrum averaged in logarithmic bins.

    Attributes
    ----------
    freq : ndarray, shape (n_bins,)
        Mean frequency of each bin, μHz.
    power : ndarray, shape (n_bins,)
        Mean density in each bin, ppm²/μHz.
    count : ndarray, shape (n_bins,)
        Number of original bins averaged (the gamma shape ``n_k``).
    """

    freq: np.ndarray
    power: np.ndarray
    count: np.ndarray


def bin_spectrum(
    ps: PowerSpectrum, fmin: float, fmax: float, log_step: float = 0.005
) -> BinnedSpectrum:
    """Average a spectrum in bins of constant width in ln ν.

    Parameters
    ----------
    ps : PowerSpectrum
        Spectrum (μHz, ppm²/μHz).
    fmin, fmax : float
        Frequency range, μHz.
    log_step : float
        Bin width in ln ν (0.005 is 0.5% of the frequency).

    Returns
    -------
    BinnedSpectrum
        Bins holding at least one original bin. With oversampled spectra the
        counts are divided by the oversampling factor, since neighbouring bins
        are then not independent.
    """
    sel = (ps.freq >= fmin) & (ps.freq <= fmax) & (ps.freq > 0)
    f, p = ps.freq[sel], ps.density[sel]
    if f.size == 0:
        raise OptionError(f"no frequencies between {fmin:.4g} and {fmax:.4g} μHz")
    idx = np.floor(np.log(f / f[0]) / log_step).astype(np.int64)
    counts = np.bincount(idx)
    good = counts > 0
    fsum = np.bincount(idx, f)[good]
    psum = np.bincount(idx, p)[good]
    n = counts[good].astype(np.float64)
    return BinnedSpectrum(fsum / n, psum / n, np.maximum(n / max(ps.oversample, 1.0), 1.0))


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


# ---------------------------------------------------------------- detection


@dataclass(frozen=True)
class DetectionOptions:
    """Settings of `detect_oscillations`.

    Parameters
    ----------
    false_alarm : float
        Largest false-alarm probability accepted as a detection. Default 1e-4.
    numax_min, numax_max : float, optional
        Search range for numax, μHz; default from twice the fitted range's
        lower edge to 0.9 × Nyquist.
    """

    false_alarm: float = 1e-4
    numax_min: float | None = None
    numax_max: float | None = None

    def __post_init__(self) -> None:
        if not 0 < self.false_alarm < 1:
            raise OptionError(f"false_alarm must lie in (0, 1); got {self.false_alarm!r}")


@dataclass(frozen=True, eq=False)
class Detection:
    """Outcome of the search for an oscillation excess.

    Attributes
    ----------
    detected : bool
        True when the false-alarm probability is below the threshold and the
        fitted envelope is plausible.
    false_alarm : float
        Look-elsewhere-corrected false-alarm probability of the excess.
    statistic : float
        Likelihood-ratio statistic 2 (ln L_envelope − ln L_background).
    numax_guess : float or None
        Frequency of the strongest excess, μHz.
    fit : BackgroundFit or None
        Fit with the envelope at the best trial (None if none converged).
    null_fit : BackgroundFit
        Fit of the background alone.
    trial_numax, trial_score : ndarray
        The coarse search: trial numax (μHz) and matched-filter score (σ).
    flags : tuple of str
        Why nothing was detected, or what was odd.
    """

    detected: bool
    false_alarm: float
    statistic: float
    numax_guess: float | None
    fit: BackgroundFit | None
    null_fit: BackgroundFit
    trial_numax: np.ndarray = field(repr=False)
    trial_score: np.ndarray = field(repr=False)
    flags: tuple[str, ...] = ()


def _matched_filter(
    binned: BinnedSpectrum, background: np.ndarray, trial: np.ndarray
) -> np.ndarray:
    """Score test for an envelope B·(1 + h g_t) at each trial numax, in σ.

    For gamma-distributed bin means the score for h at h = 0 is
    Σ n g (P/B − 1) with variance Σ n g²; their ratio is N(0, 1) under the null.
    """
    width = np.asarray(envelope_fwhm(trial)) * FWHM_TO_SIGMA
    g = np.exp(-0.5 * ((binned.freq[None, :] - trial[:, None]) / width[:, None]) ** 2)
    resid = binned.count * (binned.power / background - 1.0)
    score = g @ resid
    info = (g**2) @ binned.count
    return score / np.sqrt(np.maximum(info, 1e-300))


def detect_oscillations(
    ps: PowerSpectrum, options: DetectionOptions | None = None, *,
    highpass_uhz: float | None = None,
) -> Detection:
    """Decide whether a solar-like oscillation excess is present, and where.

    Steps: fit the background alone; scan trial numax with a matched filter
    (the score test of a Gaussian envelope of the published width,
    Mosser et al. 2012) to find candidate excesses; fit the full model from
    the best candidates; compare likelihoods.

    Parameters
    ----------
    ps : PowerSpectrum
        Spectrum of the conditioned light curve.
    options : DetectionOptions, optional
        Threshold and search range.
    highpass_uhz : float, optional
        The conditioning high-pass frequency, μHz (see `fit_background`).

    Returns
    -------
    Detection

    Notes
    -----
    The false-alarm probability is ``min(1, N_trials · p)``, where ``p`` is
    the tail probability of the likelihood ratio for two extra free
    parameters (height and width; χ²₂, Wilks 1938) and ``N_trials`` the
    number of independent envelope positions in the searched range, ln of
    its extent over the envelope's relative width.
    """
    options = options or DetectionOptions()
    highpass = ps.meta.get("highpass_uhz", 0.0) if highpass_uhz is None else highpass_uhz
    lo, hi = _fit_range(ps, None, None, highpass)
    binned = bin_spectrum(ps, lo, hi)
    null = min(
        (fit_background(ps, None, binned=binned, highpass_uhz=highpass),
         _refit_null_from(ps, binned, highpass, 10.0),
         _refit_null_from(ps, binned, highpass, 150.0)),
        key=lambda f: f.neg_log_like,
    )
    nu_lo = options.numax_min or max(2.0 * lo, 3.0)
    nu_hi = options.numax_max or 0.9 * min(hi, ps.nyquist)
    flags: list[str] = []
    if not nu_hi > nu_lo * 1.2:
        return Detection(False, 1.0, 0.0, None, None, null, np.zeros(0), np.zeros(0),
                         ("no_detection:frequency_range_too_small",))
    trial = np.geomspace(nu_lo, nu_hi, 200)
    score = _matched_filter(binned, null.background(binned.freq), trial)
    candidates = _local_maxima(trial, score, 3)

    best: BackgroundFit | None = None
    for guess in candidates:  # at most three starts
        fit = fit_background(ps, float(guess), binned=binned, highpass_uhz=highpass)
        if best is None or fit.neg_log_like < best.neg_log_like:
            best = fit
    if best is None:
        return Detection(False, 1.0, 0.0, None, None, null, trial, score,
                         ("no_detection:no_candidate",))

    statistic = max(0.0, 2.0 * (null.neg_log_like - best.neg_log_like))
    rel_width = float(np.median(np.asarray(envelope_fwhm(trial)) * FWHM_TO_SIGMA / trial))
    n_trials = max(1.0, np.log(nu_hi / nu_lo) / rel_width)
    false_alarm = float(min(1.0, n_trials * stats.chi2.sf(statistic, 2)))
    numax = best.value("envelope:numax")
    width = best.value("envelope:width")
    expected_width = float(envelope_fwhm(numax)) * FWHM_TO_SIGMA

    detected = false_alarm < options.false_alarm
    if not detected:
        flags.append("no_detection:false_alarm_above_threshold")
    elif not (nu_lo <= numax <= nu_hi):
        detected = False
        flags.append("no_detection:excess_outside_search_range")
    elif not (expected_width / 3.0 < width < expected_width * 3.0) or any(
        f.startswith("at_bound:envelope") for f in best.flags
    ):
        detected = False
        flags.append("no_detection:excess_not_an_oscillation_envelope")
    if detected and numax > 0.8 * ps.nyquist:
        flags.append("numax_near_nyquist")
    return Detection(detected, false_alarm, statistic, float(numax), best, null, trial, score,
                     tuple(flags))


def _refit_null_from(
    ps: PowerSpectrum, binned: BinnedSpectrum, highpass: float, numax_like: float
) -> BackgroundFit:
    model = _model(False, ps.nyquist, highpass)
    start, bounds = _start_and_bounds(numax_like, binned, False, ps.nyquist)
    return _finish(_minimise(start, bounds, model, binned), bounds, model, binned)


def _local_maxima(x: np.ndarray, y: np.ndarray, n: int) -> np.ndarray:
    """Positions of the ``n`` highest local maxima of ``y`` (highest first)."""
    inner = np.flatnonzero((y[1:-1] > y[:-2]) & (y[1:-1] >= y[2:])) + 1
    if inner.size == 0:
        inner = np.array([int(np.argmax(y))])
    order = inner[np.argsort(y[inner])[::-1]]
    return x[order[:n]]


def sample_posterior(
    fit: BackgroundFit,
    *,
    n_walkers: int = 24,
    n_steps: int = 600,
    burn: int = 200,
    rng: np.random.Generator | int | None = None,
) -> np.ndarray:
    """Short random-walk Metropolis sample of the background-fit likelihood.

    A cross-check of the Hessian errors: independent chains, vectorised over
    walkers, with Gaussian proposals scaled from the Hessian covariance
    (2.38²/d of it, the optimal random-walk scale of Gelman, Roberts & Gilks
    1996) and flat priors in the fitted (log) parameters.

    Parameters
    ----------
    fit : BackgroundFit
        A converged fit (its ``binned`` spectrum is reused).
    n_walkers, n_steps, burn : int
        Chains, steps per chain, and steps discarded at the start.
    rng : numpy.random.Generator, int or None
        Random generator.

    Returns
    -------
    ndarray, shape (n_walkers * (n_steps - burn), n_params)
        Samples in natural units (same order as ``fit.names``); the
        over-dispersion factor of the fit is not applied.
    """
    rng = np.random.default_rng(rng)
    if fit.binned is None or not np.all(np.isfinite(fit.covariance)):
        raise OptionError("sample_posterior needs a fit with a binned spectrum and finite errors")
    if burn >= n_steps:
        raise OptionError(f"burn ({burn}) must be smaller than n_steps ({n_steps})")
    log_flags = np.array(fit.model.log_params)
    centre = np.where(log_flags, np.log(fit.params), fit.params)
    cov = fit.covariance / fit.overdispersion
    dim = centre.size
    chol = np.linalg.cholesky(cov * 2.38**2 / dim + 1e-12 * np.eye(dim))
    binned = fit.binned

    def nll(u: np.ndarray) -> np.ndarray:
        params = np.where(log_flags, np.exp(np.clip(u, -700, 700)), u).T[..., None]
        m = np.maximum(fit.model.psd(binned.freq, params), 1e-300)
        return np.sum(binned.count * (np.log(m) + binned.power / m), axis=-1)

    current = centre + (rng.standard_normal((n_walkers, dim)) @ chol.T) * 0.3
    current_nll = nll(current)
    kept = []
    for step in range(n_steps):  # loop over steps of the chains (vectorised over walkers)
        proposal = current + rng.standard_normal((n_walkers, dim)) @ chol.T
        proposal_nll = nll(proposal)
        accept = np.log(rng.random(n_walkers)) < current_nll - proposal_nll
        current = np.where(accept[:, None], proposal, current)
        current_nll = np.where(accept, proposal_nll, current_nll)
        if step >= burn:
            kept.append(current.copy())
    samples = np.concatenate(kept)
    return np.where(log_flags, np.exp(samples), samples)
