"""Detection of the oscillation excess and the posterior cross-check of the errors.

A likelihood ratio with a look-elsewhere correction decides detection.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from scipy import stats

from ..errors import OptionError
from ..relations import (
    FWHM_TO_SIGMA,
    envelope_fwhm,
)
from ..spectrum import PowerSpectrum
from .binning import (
    BinnedSpectrum,
    bin_spectrum,
)
from .fit import (
    BackgroundFit,
    _finish,
    _fit_range,
    fit_background,
)
from .likelihood import (
    _minimise,
    _model,
    _start_and_bounds,
)

__all__ = ["Detection", "DetectionOptions", "detect_oscillations", "sample_posterior"]

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
