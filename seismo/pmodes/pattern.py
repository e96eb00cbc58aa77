"""The universal red-giant pattern fit, individual l=0/l=2 modes, and the consistency check."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import optimize, stats

from .. import relations
from ..errors import OptionError
from ..results import Measurement
from ..spectrum import PowerSpectrum
from ._common import (
    _finite_positive,
    _interp_uniform,
    _kernel_dof,
    _profile_width,
    _running_mean,
    _smooth,
    _validate,
    _window,
)
from .types import (
    _FALSE_ALARM,
    _LOW_RESOLUTION_RATIO,
    _MIN_RADIAL_FOR_ALPHA,
    _MIN_RADIAL_FOR_FIT,
    _ONE_SIGMA,
    _VIS2,
    DnuEstimate,
    PModeList,
    RadialPattern,
)

__all__ = ["fit_radial_pattern", "reconcile"]

# ---------------------------------------------------------------- universal pattern

def _pattern(n: Any, l: Any, dnu: Any, eps: Any, alpha: Any, d02: Any, numax: float) -> Any:
    """ν_{n,l} = (n + l/2 + ε − d0l + α/2 (n − n_max)²) Δν, l in {0, 2}; broadcasts."""
    d0l = np.where(np.asarray(l) == 2, d02, 0.0)
    n_max = numax / dnu - eps
    return (n + 0.5 * np.asarray(l) + eps - d0l + 0.5 * alpha * (n - n_max) ** 2) * dnu


@dataclass(frozen=True)
class _Spectrum:
    """SNR spectrum around ν_max, smoothed by the mode profile (bare float64)."""

    freq: np.ndarray
    smooth: np.ndarray      # SNR averaged over the profile (noise mean 1)
    highpass: np.ndarray    # smooth minus a running mean over Δν
    numax: float
    sigma: float
    lo: float
    hi: float
    width: float
    dof: float
    resolution: float

    def weight(self, nu: np.ndarray, l: np.ndarray) -> np.ndarray:
        inside = (nu >= self.lo) & (nu <= self.hi)
        vis = np.where(l == 2, _VIS2, 1.0)
        return inside * vis * np.exp(-0.5 * ((nu - self.numax) / self.sigma) ** 2)

    def score(self, nu: np.ndarray, l: np.ndarray) -> np.ndarray:
        """Matched-filter statistic Σ h (ỹ(ν) ) over the last axis."""
        values = _interp_uniform(nu, self.freq[0], self.freq[1] - self.freq[0], self.highpass)
        return np.sum(self.weight(nu, l) * values, axis=-1)


def _prepare(ps: PowerSpectrum, numax: float, bg: np.ndarray, dnu: float,
             width: float) -> tuple[_Spectrum, list[str]]:
    lo, hi, sigma, flags = _window(ps, numax)
    margin = 1.5 * dnu
    sel = (ps.freq >= lo - margin) & (ps.freq <= hi + margin)
    snr = ps.density[sel] / bg[sel]
    smooth = _smooth(snr, width, ps.df)
    highpass = smooth - _running_mean(snr, dnu / ps.df)
    dof = _kernel_dof(width, ps.df, ps.oversample)
    return (_Spectrum(ps.freq[sel], smooth, highpass, numax, sigma, lo, hi, width, dof,
                      float(ps.resolution)), flags)


def _orders(spec: _Spectrum, dnu: float) -> tuple[np.ndarray, np.ndarray]:
    n = np.arange(np.floor(spec.lo / dnu) - 2, np.ceil(spec.hi / dnu) + 2)
    return np.concatenate([n, n]), np.repeat([0, 2], n.size)


def _grid_search(spec: _Spectrum, dnu0: float, span: float, alpha: float,
                 d02: float) -> tuple[float, float, np.ndarray, np.ndarray]:
    """Best (Δν, ε) of the l=0/l=2 template on a grid; also the ε profile."""
    reach = max(spec.hi - spec.numax, spec.numax - spec.lo)
    step = max(spec.width * dnu0 / (4.0 * reach), 1e-4 * dnu0)
    n_dnu = int(np.clip(2 * np.ceil(span / step) + 1, 3, 241))
    dnus = dnu0 + np.linspace(-span, span, n_dnu)
    n_eps = int(np.clip(np.ceil(6.0 * dnu0 / spec.width), 120, 1200))
    eps = np.arange(n_eps) / n_eps
    n, l = _orders(spec, dnu0)
    nu = _pattern(n, l, dnus[:, None, None], eps[None, :, None], alpha, d02, spec.numax)
    score = spec.score(nu, l)
    i, j = np.unravel_index(np.argmax(score), score.shape)
    return float(dnus[i]), float(eps[j]), eps, score[i]


def _refine(spec: _Spectrum, dnu: float, eps: float, alpha: float,
            d02: float) -> tuple[float, float]:
    n, l = _orders(spec, dnu)

    def cost(p: np.ndarray) -> float:
        return -float(spec.score(_pattern(n, l, p[0], p[1], alpha, d02, spec.numax), l))

    res = optimize.minimize(cost, [dnu, eps], method="Nelder-Mead",
                            options={"xatol": 1e-5 * dnu, "fatol": 1e-9, "maxiter": 400,
                                     "initial_simplex": [[dnu, eps], [dnu * 1.002, eps],
                                                         [dnu, eps + 0.01]]})
    return (float(res.x[0]), float(res.x[1])) if -res.fun >= -cost(np.array([dnu, eps])) \
        else (dnu, eps)


def _locate(spec: _Spectrum, expected: np.ndarray, half_box: float,
            df: float) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Highest smoothed-SNR peak within ± half_box of each expected frequency.

    Returns frequency (μHz), error (μHz), SNR and whether the peak passes
    the 1 % false-alarm test of a Gamma-distributed smoothed noise spectrum.
    The error is √(F(β) Γ / (4πT)), F(β) = √(1+β)(√(1+β)+√β)³, β the
    noise-to-mode height ratio, Γ the profile width (common practice; the
    form of Libbrecht 1992, ApJ 387, 712, recalled from memory).
    """
    half = max(int(half_box / df), 1)
    centre = np.searchsorted(spec.freq, expected)
    idx = np.clip(centre[:, None] + np.arange(-half, half + 1)[None, :], 1,
                  spec.freq.size - 2)
    vals = spec.smooth[idx]
    k = np.argmax(vals, axis=1)
    best = idx[np.arange(idx.shape[0]), k]
    y0, y1, y2 = spec.smooth[best - 1], spec.smooth[best], spec.smooth[best + 1]
    den = y0 - 2.0 * y1 + y2
    shift = np.where(den < 0, 0.5 * (y0 - y2) / np.where(den < 0, den, -1.0), 0.0)
    freq = spec.freq[best] + np.clip(shift, -1.0, 1.0) * df
    snr = y1
    n_trials = max((2 * half + 1) * df / spec.width, 1.0)
    tail = stats.gamma.sf(snr * spec.dof, spec.dof)
    detected = n_trials * tail < _FALSE_ALARM
    beta = 1.0 / np.maximum(snr - 1.0, 0.1)
    growth = np.sqrt(1.0 + beta) * (np.sqrt(1.0 + beta) + np.sqrt(beta)) ** 3
    error = np.maximum(np.sqrt(growth * spec.width * spec.resolution / (4.0 * np.pi)),
                       df / np.sqrt(12.0))
    return freq, error, snr, detected


def _widen(dof: int) -> float:
    """Student-t / normal ratio of the 1σ quantile: widens errors for few points."""
    return float(stats.t.ppf(_ONE_SIGMA, dof)) if dof > 0 else float("inf")


def _fit_radial(n: np.ndarray, nu: np.ndarray, err: np.ndarray, numax: float, dnu: float,
                eps: float, alpha: float, fit_alpha: bool) -> tuple[np.ndarray, np.ndarray,
                                                                    float]:
    """Weighted least squares of ν_n0 = (n + ε + α/2 (n − n_max)²)Δν.

    Returns parameters (Δν, ε, α), their 1σ errors (α error NaN when fixed)
    and the reduced χ². Errors are scaled by √χ²_red when above 1 and by the
    Student-t factor for the degrees of freedom.
    """
    def model(p: np.ndarray) -> np.ndarray:
        a = p[2] if fit_alpha else alpha
        return _pattern(n, 0, p[0], p[1], a, 0.0, numax)

    p0 = np.array([dnu, eps, alpha] if fit_alpha else [dnu, eps])
    res = optimize.least_squares(lambda p: (nu - model(p)) / err, p0, x_scale="jac")
    dof = n.size - p0.size
    chi2 = float(np.sum(res.fun**2) / dof) if dof > 0 else float("nan")
    try:
        cov = np.linalg.inv(res.jac.T @ res.jac)
    except np.linalg.LinAlgError:
        cov = np.full((p0.size, p0.size), np.nan)
    scale = np.sqrt(max(chi2, 1.0)) * _widen(dof) if dof > 0 else float("nan")
    sd = np.sqrt(np.diag(cov)) * scale
    if not fit_alpha:
        return np.r_[res.x, alpha], np.r_[sd, np.nan], chi2
    return res.x, sd, chi2


def _measure(value: float, error: float) -> Measurement | None:
    if not np.isfinite(value):
        return None
    return Measurement(float(value), float(error) if np.isfinite(error) else None)


def fit_radial_pattern(
    ps: PowerSpectrum,
    numax: float,
    dnu_guess: float | Measurement | DnuEstimate,
    background: Any,
) -> RadialPattern:
    """Fit the universal red-giant pattern and measure Δν, ε, α and δν02.

    Parameters
    ----------
    ps : PowerSpectrum
        Power density spectrum (μHz, ppm²/μHz).
    numax : float
        Frequency of maximum oscillation power, μHz.
    dnu_guess : float, Measurement or DnuEstimate
        Starting large separation, μHz (e.g. from `large_separation`).
    background : float or array_like, shape (n_freq,)
        Background power density on ``ps.freq``, ppm²/μHz.

    Returns
    -------
    RadialPattern
        ``dnu`` and ``eps_p`` are ``None`` with ``dnu_not_found`` when fewer
        than 3 radial modes are detected and the template fit is not
        significant either.

    Raises
    ------
    TypeError
        If ``ps`` is not a `PowerSpectrum`.
    OptionError
        For a non-positive ``numax`` or ``dnu_guess``, ``dnu_guess`` not
        below ``numax``, ``numax`` above the spectrum, or a bad
        ``background`` (see `large_separation`).

    Notes
    -----
    1. Template: l=0 and l=2 profiles of FWHM max(1/T, Γ_typ = 0.12 μHz)
       at the universal-pattern frequencies, heights the Gaussian envelope
       times V_l² (V_2² = 0.64), α and d02 at their Mosser et al. relations.
       Smoothing the SNR spectrum by the profile turns the cross-correlation
       into a sum of the smoothed SNR at the mode frequencies, evaluated on
       a (Δν, ε) grid (Δν within ±3 % or ±3σ of the guess, ε over [0, 1))
       and then refined by Nelder–Mead. The dense dipole forest fits the
       l=0/l=2 pair badly (no partner at −δν02), which picks the radial
       ridge; if the best ε + 0.5 scores within 15 %, ``eps_ambiguous``.
    2. Each radial and quadrupole mode is the highest smoothed-SNR peak
       within ±5 % (l=0) or ±4 % (l=2) of Δν of its predicted frequency,
       kept at a 1 % false-alarm probability; error √(F(β) Γ/(4πT)) with β
       the noise-to-height ratio (see `_locate`), at least δν/√12. The
       l=2 mode farthest from the mean d02 is dropped when more than 4σ off.
    3. ν_n0 = (n + ε + α/2 (n − n_max)²)Δν with n_max = ν_max/Δν − ε is
       fitted by weighted least squares to the radial modes (α free with 5
       or more modes); errors are scaled by √χ²_red when above 1 and by the
       Student-t 1σ factor for the degrees of freedom (wider with few
       orders). ε is free: the relation only labels the orders.
    4. d02 is the weighted mean of (ν_{n+1,0}^fit − ν_{n,2})/Δν − α(n −
       n_max + ½), errors as in 3.

    References
    ----------
    Mosser B. et al. 2011, A&A 525, L9 (universal pattern; form confirmed,
    details and the ε and d02 relations from memory). Mosser B. et al.
    2013, A&A 550, A126 (curvature α, from memory). Mosser B. et al. 2012,
    A&A 537, A30 (visibilities and envelope width, from memory). Kallinger
    T. et al. 2012, A&A 541, A51 (why ε must be measured: RGB and clump
    differ at the same Δν). Vrard M. et al. 2018, A&A 616, A94 (typical
    linewidth, value from memory).
    """
    guess_err = None
    if isinstance(dnu_guess, DnuEstimate):
        if dnu_guess.dnu is None:
            raise OptionError("dnu_guess is a DnuEstimate without a value (dnu_not_found)")
        dnu_guess = dnu_guess.dnu
    if isinstance(dnu_guess, Measurement):
        guess_err = dnu_guess.error
        dnu_guess = dnu_guess.value
    numax, bg = _validate(ps, numax, background)
    if not _finite_positive(dnu_guess) or dnu_guess >= numax:
        raise OptionError(
            f"dnu_guess must be a finite number > 0 μHz and below numax ({numax:.4g} μHz); "
            f"got {dnu_guess!r}"
        )
    dnu0 = float(dnu_guess)
    width = _profile_width(ps)
    spec, flags = _prepare(ps, numax, bg, dnu0, width)
    if dnu0 / ps.resolution < _LOW_RESOLUTION_RATIO:
        flags.append("dnu_low_resolution")
    alpha0 = float(relations.curvature_from_dnu(dnu0))
    d020 = float(relations.d02_from_dnu(dnu0))
    eps_rel = float(relations.eps_p_from_dnu(dnu0))
    inputs: dict[str, Any] = {
        "numax": numax, "dnu_guess": dnu0, "window": (spec.lo, spec.hi), "width": width,
        "resolution": float(ps.resolution), "nyquist": float(ps.nyquist),
        "alpha_prior": alpha0, "d02_prior": d020,
    }
    empty = PModeList(*(np.zeros(0, dtype=int),) * 2, *(np.zeros(0),) * 3)

    span = max(0.03 * dnu0, 3.0 * (guess_err or 0.0))
    dnu_p, eps_p, eps_grid, profile = _grid_search(spec, dnu0, span, alpha0, d020)
    opposite = np.abs(((eps_grid - eps_p + 0.5) % 1.0) - 0.5) > 0.35
    best, other = profile.max(), profile[opposite].max() if opposite.any() else -np.inf
    if other > 0.85 * best:
        flags.append("eps_ambiguous")
    dnu_p, eps_p = _refine(spec, dnu_p, eps_p, alpha0, d020)
    eps_p = (eps_p - (eps_rel - 0.5)) % 1.0 + eps_rel - 0.5
    inputs.update(pattern_dnu=dnu_p, pattern_eps=eps_p, pattern_score=float(best))

    # individual radial modes
    n_all = np.arange(np.floor(spec.lo / dnu_p - eps_p), np.ceil(spec.hi / dnu_p - eps_p) + 1)
    nu0 = _pattern(n_all, 0, dnu_p, eps_p, alpha0, d020, numax)
    keep = (nu0 >= spec.lo) & (nu0 <= spec.hi)
    n0, nu0 = n_all[keep], nu0[keep]
    # boxes stop halfway to the neighbouring l=0/l=2 partner
    partner = 0.5 * d020 * dnu_p
    f0, e0, s0, ok0 = _locate(spec, nu0, min(max(0.05 * dnu_p, 1.5 * width), partner), ps.df)
    n0, f0, e0, s0 = n0[ok0], f0[ok0], e0[ok0], s0[ok0]

    if n0.size < _MIN_RADIAL_FOR_FIT:
        flags.append("dnu_from_pattern_only" if n0.size else "dnu_not_found")
        alpha = d02 = None
        if n0.size == 0 or best <= 0:
            if "dnu_not_found" not in flags:
                flags[-1] = "dnu_not_found"
            modes = empty
            return RadialPattern(None, None, None, None, modes, tuple(flags), inputs)
        lever = max(spec.hi - numax, numax - spec.lo) / dnu_p
        dnu_m = Measurement(dnu_p, 0.5 * width / lever)
        eps_m = Measurement(eps_p, 0.5 * width / dnu_p)
        modes = PModeList(np.zeros(n0.size, dtype=int), n0.astype(int), f0, e0, s0)
        flags += ["alpha_fixed_at_prior", "d02_not_measured"]
        return RadialPattern(dnu_m, eps_m, alpha, d02, modes, tuple(flags), inputs)

    low_res = "dnu_low_resolution" in flags
    fit_alpha = n0.size >= _MIN_RADIAL_FOR_ALPHA and not low_res
    if not fit_alpha:
        flags.append("alpha_fixed_at_prior")
    p, sd, chi2 = _fit_radial(n0, f0, e0, numax, dnu_p, eps_p, alpha0, fit_alpha)
    resid = np.abs(f0 - _pattern(n0, 0, p[0], p[1], p[2], 0.0, numax)) / e0
    worst = int(np.argmax(resid))
    if n0.size > _MIN_RADIAL_FOR_FIT + 1 and resid[worst] > 5.0 * np.sqrt(max(chi2, 1.0)):
        drop = np.arange(n0.size) != worst
        n0, f0, e0, s0 = n0[drop], f0[drop], e0[drop], s0[drop]
        fit_alpha = n0.size >= _MIN_RADIAL_FOR_ALPHA and not low_res
        p, sd, chi2 = _fit_radial(n0, f0, e0, numax, p[0], p[1], p[2], fit_alpha)
    dnu, eps, alpha = p
    inflate = np.sqrt(max(chi2, 1.0)) if np.isfinite(chi2) else 1.0
    e0 = e0 * inflate
    inputs["reduced_chi2"] = chi2

    # quadrupole modes and d02
    n2 = n0 - 1
    nu2 = _pattern(n2, 2, dnu, eps, alpha, d020, numax)
    f2, e2, s2, ok2 = _locate(spec, nu2, min(max(0.04 * dnu, 1.5 * width), partner), ps.df)
    n2, f2, e2, s2 = n2[ok2], f2[ok2], e2[ok2] * inflate, s2[ok2]
    d02 = None
    if n2.size >= 2:
        n_max = numax / dnu - eps
        d_n = (_pattern(n2 + 1, 0, dnu, eps, alpha, 0.0, numax) - f2) / dnu \
            - alpha * (n2 - n_max + 0.5)
        wts = 1.0 / (e2 / dnu) ** 2
        mean = float(np.sum(wts * d_n) / np.sum(wts))
        chi2_2 = float(np.sum(wts * (d_n - mean) ** 2) / (n2.size - 1))
        resid = np.abs(d_n - np.median(d_n)) * np.sqrt(wts) / np.sqrt(max(chi2_2, 1.0))
        worst = int(np.argmax(resid))
        if n2.size > 3 and resid[worst] > 4.0:
            keep2 = np.arange(n2.size) != worst
            n2, f2, e2, s2, d_n, wts = (a[keep2] for a in (n2, f2, e2, s2, d_n, wts))
            mean = float(np.sum(wts * d_n) / np.sum(wts))
            chi2_2 = float(np.sum(wts * (d_n - mean) ** 2) / (n2.size - 1))
        err = np.sqrt(max(chi2_2, 1.0) / np.sum(wts)) * _widen(n2.size - 1)
        d02 = Measurement(mean, err)
    else:
        flags.append("d02_not_measured")

    modes = PModeList(
        np.r_[np.zeros(n0.size, dtype=int), np.full(n2.size, 2)],
        np.r_[n0, n2].astype(int), np.r_[f0, f2], np.r_[e0, e2], np.r_[s0, s2],
    )
    order = np.argsort(modes.frequency)
    modes = PModeList(*(getattr(modes, k)[order] for k in ("l", "n", "frequency", "error",
                                                          "snr")))
    return RadialPattern(_measure(dnu, sd[0]), _measure(eps, sd[1]),
                         _measure(alpha, sd[2]) if fit_alpha else None, d02, modes,
                         tuple(flags), inputs)



def reconcile(coarse: DnuEstimate, pattern: RadialPattern) -> RadialPattern:
    """Check the pattern fit against the autocorrelation Δν it started from.

    The two are independent enough to catch a pattern fit that has locked onto
    the wrong comb (seen on 27-day sectors, where l=0 and l=2 barely separate
    and the dipole forest can pull the template). When they differ by more
    than twice their combined error, the autocorrelation Δν is reported with
    an error widened to cover the difference, ε is withdrawn, and the flag
    ``dnu_pattern_disagrees`` says so: a wrong confident number is worse than
    a wide one.

    Parameters
    ----------
    coarse : DnuEstimate
        Result of `large_separation`.
    pattern : RadialPattern
        Result of `fit_radial_pattern` started from ``coarse``.

    Returns
    -------
    RadialPattern
        ``pattern`` itself when consistent, else a corrected copy.
    """
    from dataclasses import replace

    if coarse.dnu is None or pattern.dnu is None or coarse.dnu.error is None:
        return pattern
    diff = abs(pattern.dnu.value - coarse.dnu.value)
    combined = float(np.hypot(coarse.dnu.error, pattern.dnu.error or 0.0))
    if diff <= 2.0 * combined:
        return pattern
    widened = Measurement(coarse.dnu.value, float(np.hypot(coarse.dnu.error, diff)))
    inputs = {**pattern.inputs, "pattern_fit_dnu": pattern.dnu.to_dict()}
    return replace(pattern, dnu=widened, eps_p=None, alpha=None,
                   flags=(*pattern.flags, "dnu_pattern_disagrees"), inputs=inputs)
