"""The stage: from a spectrum and a radial pattern to ΔΠ1, q, ε_g and core rotation."""

from __future__ import annotations

from dataclasses import replace
from typing import Any

import numpy as np

from .. import relations
from ..relations import FWHM_TO_SIGMA
from ..results import Measurement
from ..spectrum import PowerSpectrum
from .fit import (
    _Fit,
    _Model,
    _refine,
    _refine_candidate,
    _start,
)
from .scan import _scan_fits
from .search import (
    _local_maxima,
    _resolution,
    _search,
    _with_aliases,
)
from .setup import (
    _dipole_mask,
    _find_peaks,
    _validate,
)
from .splitting import (
    _better_alias,
    _halves_agree,
    _holds_without_rotation,
    _split_rotation,
    _splitting_alternatives,
    _splitting_ties,
    _tie_errors,
    _unstable_rivals,
)
from .types import (
    _AMBIGUITY_MARGIN,
    _DEEP,
    _DEEP_FALSE_ALARM,
    _DPI1_RANGE,
    _FIRST,
    _M_ROUNDS_EXTENDED,
    _MIN_INLIERS,
    _MIN_PEAK_EQUIVALENTS,
    _MIN_PEAKS,
    _MIN_RESOLUTIONS,
    _N_CANDIDATES,
    _ROT_CYCLES,
    _ROT_CYCLES_EXTENDED,
    _TYPICAL_LINEWIDTH,
    _WINDOW_SIGMAS,
    DipolePeaks,
    PeriodSpacing,
    _Levels,
)

__all__ = ["measure_mixed_modes", "resolves_period_spacing"]

# ---------------------------------------------------------------- the stage

def _empty(flags: list[str], inputs: dict[str, Any], freq: np.ndarray | None = None,
           snr: np.ndarray | None = None, candidates: list[dict[str, Any]] | None = None
           ) -> PeriodSpacing:
    freq = np.empty(0) if freq is None else freq
    snr = np.empty(0) if snr is None else snr
    peaks = DipolePeaks(freq, snr, np.zeros(freq.size, dtype=np.int64),
                        np.zeros(freq.size, dtype=bool), np.full(freq.size, np.nan))
    return PeriodSpacing(None, None, None, None, tuple(flags), peaks, candidates or [], inputs)


def resolves_period_spacing(ps: PowerSpectrum, numax: float) -> bool:
    """Whether the spectrum can resolve the g-mode spacing near numax.

    The frequency spacing of g modes is ν²ΔΠ1; for the smallest plausible
    ΔΠ1 (40 s) at numax it must span at least four resolution elements.

    Parameters
    ----------
    ps : PowerSpectrum
        The spectrum (its resolution and grid spacing, μHz).
    numax : float
        Frequency of maximum oscillation power, μHz.

    Returns
    -------
    bool
    """
    g_spacing = numax**2 * _DPI1_RANGE[0] * 1e-6  # μHz
    return bool(g_spacing >= _MIN_RESOLUTIONS * max(ps.resolution, ps.df))


def measure_mixed_modes(
    ps: PowerSpectrum,
    background: Any,
    numax: float,
    pattern: Any,
    *,
    false_alarm: float = 0.9,
) -> PeriodSpacing:
    """Measure ΔΠ1, q, ε_g and the core rotation from the dipole mixed modes.

    Parameters
    ----------
    ps : PowerSpectrum
        Power density spectrum, ppm²/μHz, on a uniform grid (μHz).
    background : float or array_like, shape (n_freq,)
        Background density (granulation + white noise, no envelope) on
        ``ps.freq``, ppm²/μHz.
    numax : float
        Frequency of maximum oscillation power, μHz.
    pattern : seismo.pmodes.RadialPattern
        Radial pattern of the star; its ``dnu``, ``eps_p``, ``alpha`` and
        ``d02`` locate the l=0, 2 (and 3) modes to exclude and the nominal
        l=1 p modes.
    false_alarm : float
        Expected number of pure-noise bins of the dipole region that pass the
        peak threshold S/B > −ln(false_alarm / N) over its N bins (χ²₂
        statistics), i.e. about one noise peak per star at the default 0.9.
        A low level keeps too few peaks for the faint g-dominated modes of
        evolved RGB and clump stars; the few noise peaks admitted are absorbed
        by the mixture likelihood of the fit, and the periodicity must still
        pass `_MIN_SCORE`, calibrated on shuffled peak lists at this level.

    Returns
    -------
    PeriodSpacing
        ``dpi1`` (s), ``q``, ``eps_g``, ``rot_core`` (μHz) or ``None`` with
        flags from `FLAGS`.

    Raises
    ------
    TypeError
        If ``ps`` is not a `PowerSpectrum` or ``pattern`` lacks the pattern
        attributes.
    OptionError
        If ``numax`` is not positive or above the spectrum, ``background``
        has the wrong shape or is not positive, or ``false_alarm`` is not in
        (0, 1).

    Notes
    -----
    1. Window ν_max ± 2.5 σ_env. Bins within max(0.045 Δν, 2 Γ0, 3 δf) of the
       l=0 and l=2 modes of the pattern, and within max(0.02 Δν, Γ0, 3 δf) of
       the l=3 modes (d03 of `seismo.relations.d03_from_dnu`), are excluded.
    2. Peaks: local maxima of S/B = density/background above
       −ln(p/N), N the number of dipole bins and p = ``false_alarm``. For
       χ²₂ noise P(S/B > x) = e^{−x} per bin, so noise alone gives a peak
       with probability ≈ p. Peaks closer than max(2.5 δf, Γ0/2) are merged.
    3. Candidates: for trial (ΔΠ1, q) the stretched periods τ_k
       (`stretched_period`, Mosser et al. 2015; Vrard et al. 2016) give the
       normalised power |Σ_k c_k exp(2πi τ_k/ΔΠ1)|² / Σ c_k², exponentially
       distributed with mean 1 for random peaks. Rotation adds hypotheses in
       which each peak may be any component m of a multiplet: the m-ridge is
       shifted by δτ ≈ m δν_rot,core/ν², giving weights
       c_k = a + 2 cos(2π δν_rot,core/(ν_k² ΔΠ1)), a = 1 (triplet) or 0
       (doublet). The ΔΠ1 grid (40–400 s) is fine enough that adjacent
       trial values differ by a third of a cycle across the peaks.
    4. Refinement of each candidate (aliases included): robust (Cauchy)
       least squares of the frequency residuals δν_k = ζ ν² ΔΠ1 δτ_k of the
       implicit relation tan θp = q tan θg, with free ΔΠ1, q, ε_g, an offset
       of d01, and δν_rot,core when rotating (m of each peak re-assigned).
       The residual phase τ/ΔΠ1 − ε_g vanishes (mod 1) exactly on the roots
       computed by `seismo.relations.mixed_mode_frequencies`. Candidates are
       compared by a mixture log-likelihood of all peaks (mixed mode or
       uniform background); rotation is kept if it explains at least
       `_ROTATION_GAIN` (and 15 %) more peaks without lowering it by more than
       `_ROTATION_SCORE_LOSS` (fit._refine_candidate). Errors come from the
       Jacobian of the inliers, scaled by the reduced χ² when it exceeds 1.
    5. A rotating winner is refitted without rotation and at the aliases of
       its splitting δν (δν/2, 2δν, δν ± ν_max²ΔΠ1, each also with ΔΠ1 moved
       by one resolution element, and fitted first with the splitting held at
       the alias; `seismo.mixed.splitting`);
       an alias that scores higher replaces it. If the fit without rotation
       or an alias with another splitting comes within `_SPLITTING_MARGIN` of
       its score, δν_rot,core is not reported (``rot_core_ambiguous``) and the
       errors of ΔΠ1, q and ε_g are widened to cover those fits (ΔΠ1 is
       withheld, ``dpi1_rotation``, if they differ by more than 1 %).
       Otherwise the winner is refitted on the peaks below and above ν_max
       separately; if the two splittings disagree by more than 3σ,
       δν_rot,core is withdrawn (``rot_core_unstable``). ΔΠ1 then stays only
       if the fit without rotation, started from the winner, passes the same
       score threshold and gives the same ΔΠ1 within 3σ; otherwise ΔΠ1, q and
       ε_g rest on the rejected m-assignment and are withdrawn
       (``dpi1_rotation``); the two ΔΠ1 values are returned as ``dpi1_rivals``
       (for the state: the aliases lie about 1 % apart). A splitting close to
       the g-mode spacing ν²ΔΠ1 makes such aliases: the m = ±1 ridges then
       shift by a whole ΔΠ1.
    6. Extended rotation search: the same power over rotation shifts of
       0.7–1.5 cycles of ΔΠ1 at ν_max (`_ROT_CYCLES_EXTENDED`: splittings
       up to and past the g-mode spacing ν_max²ΔΠ1), candidates and the
       one-cycle aliases of the best one, refined with rotation. A fit whose
       splitting is at least 0.7 cycle replaces the ordinary winner only if it
       reaches the
       separate threshold `_MIN_SCORE_EXTENDED` (more hypotheses tried, so a
       higher false-alarm level) and beats every ordinary solution by the
       ambiguity margin; it then goes through checks 4–5 against the other
       extended solutions. Otherwise it is ignored, so it cannot make a clear
       ordinary winner ambiguous.
    7. Grid scan (`seismo.mixed.scan`), only when steps 3–6 give no ΔΠ1: the
       mixture score of step 4, with each peak's azimuthal order chosen freely,
       over a grid of ΔΠ1 (two points per resolution element), q, rotation
       shifts of 0–1.2 cycles and eight ε_g; the best distinct grid solutions
       are refined, with the one-cycle aliases of the best one and the
       solution at twice the splitting of the best rotating one. The triplet
       kernel of step 3 fades when the splitting is half to one g-mode
       spacing, and the true ΔΠ1 then is not among the power candidates at
       all. A scan solution is reported only if it reaches
       `_MIN_SCORE_SCAN` (more hypotheses: higher false-alarm threshold) and
       beats every other solution by the ambiguity margin; then checks 4–5.
       It costs about 0.1–0.9 s per star, paid only by stars that need it.
    8. Every winner must also be worth `_MIN_PEAK_EQUIVALENTS` peaks placed
       exactly on its model (`_Fit.peak_equivalents`): for high-numax stars a
       few chance alignments of a short list already reach the score
       thresholds. When ΔΠ1 is withheld only because solutions of different
       ΔΠ1 tie within the margin, their values are returned as
       ``dpi1_rivals`` (for `seismo.state.classify_state`), and the flags are
       those of the tie (``dpi1_ambiguous``, or ``dpi1_rotation`` when a tied
       solution rotates).
    9. Second pass, only when steps 2–8 give neither a ΔΠ1 nor tied solutions:
       steps 3–8 on the deeper peak list above −ln(`_DEEP_FALSE_ALARM`/N) (about
       eight noise peaks), against the higher thresholds `_DEEP` (two passes, twice
       the trials). Its result is used if it gives a ΔΠ1 or tied solutions, flagged
       ``dpi1_deep_peaks``; the faint g-dominated modes of clump stars often lie
       just below the first threshold.

    References
    ----------
    Mosser B. et al. 2012, A&A 540, A143 (asymptotic fit of mixed modes);
    Mosser B. et al. 2015, A&A 584, A50 (stretched periods, from memory);
    Vrard M. et al. 2016, A&A 588, A87 (automated ΔΠ1 from stretched
    periods); Goupil M.-J. et al. 2013, A&A 549, A75 (splitting ζ δν_rot).
    """
    numax, bg = _validate(ps, background, numax, pattern, false_alarm)
    inputs: dict[str, Any] = {"numax": numax, "false_alarm": float(false_alarm)}
    df = ps.df
    if not resolves_period_spacing(ps, numax):
        return _empty(["dpi1_resolution"], inputs)
    if pattern.dnu is None or pattern.eps_p is None:
        return _empty(["dpi1_no_pattern"], inputs)
    mask = _region(ps, numax, pattern, inputs)
    n_bins = int(mask.sum())
    threshold = -np.log(false_alarm / max(n_bins, 1))
    inputs.update(threshold=float(threshold), n_bins=n_bins)
    ratio = ps.density / bg
    merge = max(2.5 * df, 0.5 * _TYPICAL_LINEWIDTH)
    freq, snr = _find_peaks(ps.freq, ratio, mask, threshold, merge)
    if freq.size < _MIN_PEAKS:
        first = _empty(["dpi1_few_peaks"], inputs, freq, snr)
    else:
        first = _solve(freq, snr, df, inputs)
    if first.dpi1 is not None or first.dpi1_rivals or _DEEP_FALSE_ALARM <= false_alarm:
        return first
    return _deeper(first, ps.freq, ratio, mask, n_bins, merge, df)


def _deeper(first: PeriodSpacing, grid: np.ndarray, ratio: np.ndarray, mask: np.ndarray,
            n_bins: int, merge: float, df: float) -> PeriodSpacing:
    """The second pass: the same search on the deeper peak list of `_DEEP_FALSE_ALARM`.

    Returned only when it gives a ΔΠ1 or tied solutions (the first pass gave
    neither); it is then flagged ``dpi1_deep_peaks`` and its inputs keep the first
    pass's threshold and peak count (``first_threshold``, ``first_n_peaks``).
    """
    threshold = -np.log(_DEEP_FALSE_ALARM / max(n_bins, 1))
    freq, snr = _find_peaks(grid, ratio, mask, threshold, merge)
    if freq.size < _MIN_PEAKS or freq.size <= len(first.peaks):
        return first
    inputs = {key: value for key, value in first.inputs.items()
              if key in ("numax", "dnu", "eps_p", "alpha", "window", "n_bins")}
    inputs.update(threshold=float(threshold), false_alarm=_DEEP_FALSE_ALARM,
                  first_threshold=first.inputs["threshold"], first_n_peaks=len(first.peaks))
    second = _solve(freq, snr, df, inputs, _DEEP)
    if second.dpi1 is None and not second.dpi1_rivals:
        return first
    return replace(second, flags=("dpi1_deep_peaks", *second.flags))


def _region(ps: PowerSpectrum, numax: float, pattern: Any, inputs: dict[str, Any]
            ) -> np.ndarray:
    """Analysis window and dipole mask, shape (n_freq,); ``inputs`` updated in place."""
    dnu, eps = float(pattern.dnu.value), float(pattern.eps_p.value)
    alpha = float(pattern.alpha.value) if pattern.alpha is not None \
        else float(relations.curvature_from_dnu(dnu))
    d02 = float(pattern.d02.value) if pattern.d02 is not None \
        else float(relations.d02_from_dnu(dnu))
    sigma_env = float(relations.envelope_fwhm(numax)) * FWHM_TO_SIGMA
    lo = max(numax - _WINDOW_SIGMAS * sigma_env, float(ps.freq[1]))
    hi = min(numax + _WINDOW_SIGMAS * sigma_env, float(ps.freq[-1]), float(ps.nyquist))
    inputs.update(dnu=dnu, eps_p=eps, alpha=alpha, window=(lo, hi))
    return _dipole_mask(ps.freq, lo, hi, numax, dnu, eps, alpha, d02, ps.df)


def _solve(freq: np.ndarray, snr: np.ndarray, df: float, inputs: dict[str, Any],
           levels: _Levels = _FIRST) -> PeriodSpacing:
    """Candidates, refinement and checks for one list of dipole peaks.

    ``inputs`` must hold ``numax``, ``dnu``, ``eps_p``, ``alpha``, ``window`` and
    ``false_alarm`` (as set by `measure_mixed_modes`); it is updated in place.
    ``levels`` are the score thresholds of the pass (`_FIRST` or `_DEEP`).
    """
    numax, dnu, eps, alpha = inputs["numax"], inputs["dnu"], inputs["eps_p"], inputs["alpha"]
    lo, hi = inputs["window"]
    d01 = float(relations.d01_from_dnu(dnu))
    orders = np.arange(np.floor(lo / dnu - eps) - 2, np.ceil(hi / dnu - eps) + 2)
    model = _Model(freq, dnu, numax, eps, alpha, d01, orders, df)
    nu_p0 = model.nu_p(0.0)
    grid, power_all, best, hyp, n_trials = _search(freq, nu_p0, dnu, numax)
    power = power_all[np.arange(grid.size), best]
    inputs["search_level"] = float(np.log(n_trials / inputs["false_alarm"]))
    picks = _local_maxima(power, grid, _N_CANDIDATES, 0.02)
    if picks.size == 0:
        return _empty(["dpi1_no_periodicity"], inputs, freq, snr)

    fits: list[_Fit] = []
    candidates: list[dict[str, Any]] = []
    for i in picks:  # a loop over a few candidates
        fit = _refine_candidate(model, grid[i], power_all[i], hyp, numax)
        q0, u0, _ = hyp[best[i]]
        fits.append(fit)
        candidates.append({
            "dpi1": float(grid[i]), "q": float(q0),
            "rotation": float(u0 * numax**2 * grid[i] * 1e-6),
            "power": float(power[i]), "fit_dpi1": float(fit.params[0]),
            "fit_q": float(fit.params[1]), "fit_rotation": float(fit.params[4]),
            "score": fit.score, "n_inliers": float(np.sum(fit.inlier)), "extended": 0.0,
            "scan": 0.0,
        })

    order = np.argsort([-f.score for f in fits])
    win = fits[order[0]]
    # Every solution with the score threshold of the search that found it.
    pool = [(f, levels.score) for f in fits]
    extra = _extended_fits(model, freq, nu_p0, numax, lo, hi)
    candidates += [_describe(fit, True) for fit in extra]
    extra = [f for f in extra if _beyond_ordinary(f, numax)]
    pool += [(f, levels.extended) for f in extra]
    inputs["extended_score"] = max((f.score for f in extra), default=float("-inf"))
    if extra:
        best_extra = max(extra, key=lambda f: f.score)
        n_extra = int(np.sum(best_extra.inlier))
        if (best_extra.score >= levels.extended and n_extra >= _MIN_INLIERS
                and best_extra.score > win.score + _AMBIGUITY_MARGIN):
            # The extended solution wins clearly over every ordinary one; its rivals
            # are the other extended solutions (the ordinary ones are all far below).
            fits, win = extra, best_extra
            inputs["extended_win"] = True
    # Otherwise the extended solutions are not rivals: a clear ordinary winner stays.
    flags = _winner_flags(win, fits, levels.score, freq)
    inputs["scan_score"] = float("-inf")
    if flags:
        # No ΔΠ1 from the stretched-period power: the grid scan of the mixture score
        # (scan.py) looks for the solution that power cannot rank, e.g. splittings of
        # half to one g-mode spacing. It must pass its own threshold and beat every
        # solution found so far by the ambiguity margin.
        scanned = _scan_fits(model, numax)
        pool += [(f, levels.scan) for f in scanned]
        candidates += [_describe(fit, False, scan=True) for fit in scanned]
        best_scan = max(scanned, key=lambda f: f.score)
        inputs["scan_score"] = float(best_scan.score)
        everything = [*fits, *extra, *scanned]
        if (best_scan.score >= levels.scan
                and not _winner_flags(best_scan, everything, levels.scan, freq)):
            win, fits, flags = best_scan, everything, []
            inputs["scan_win"] = True
    top, top_min = max(pool, key=lambda entry: entry[0].score)
    inputs.update(top_score=float(top.score), top_min_score=float(top_min),
                  top_peak_equivalents=float(top.peak_equivalents(freq)))
    ties: list[_Fit] = []
    if not flags and win.rotating:
        # The splitting's aliases and the fit without rotation: a better alias replaces
        # the winner; those within the margin make the splitting ambiguous.
        alternatives = _splitting_alternatives(model, win, numax)
        better = _better_alias(win, alternatives)
        if better is not None and not _winner_flags(better, [], levels.score, freq):
            alternatives = [f for f in alternatives if f is not better] + [win]
            win = better
            inputs["splitting_alias_win"] = True
        ties = _splitting_ties(win, alternatives)
        inputs["splitting_ties"] = [[float(f.params[0]), float(f.params[4]) * f.rotating,
                                     float(f.score)] for f in ties]
    n_in = int(np.sum(win.inlier))

    nu_p = model.nu_p(win.params[3])
    rms = _residual_rms(model, win, lo, hi)
    inputs.update(d01=d01 + float(win.params[3]), nu_p=[float(x) for x in nu_p],
                  residual_rms=rms, n_inliers=n_in)
    if not _fits_well(win, rms):
        flags.append("dpi1_ambiguous")
    peaks = DipolePeaks(freq, snr, win.m if win.rotating else np.zeros(freq.size, np.int64),
                        win.inlier, win.zeta)
    if flags:
        rivals = _rivals(pool, model, lo, hi, inputs)
        if rivals:
            # Only the tie withholds ΔΠ1: the flags say that, not why the ordinary
            # winner (perhaps a weaker solution) failed.
            flags = _winner_flags(top, [f for f, _ in pool], top_min, freq)
        return PeriodSpacing(None, None, None, None, tuple(dict.fromkeys(flags)), peaks,
                             candidates, inputs, rivals)

    err = np.sqrt(np.diag(win.cov))
    dpi1, q, eps_g, _, rot = win.params
    rot_core = None
    if ties:
        flags.append("rot_core_ambiguous")
        if any(abs(f.params[0] / dpi1 - 1.0) > 0.01 for f in ties):
            # Beyond an alias tie of ΔΠ1: withheld, the values kept for the state.
            rivals = tuple(Measurement(float(f.params[0]), float(err[0])) for f in [win, *ties])
            inputs["dpi1_rivals"] = [[m.value, m.error] for m in rivals]
            return PeriodSpacing(None, None, None, None, ("dpi1_rotation", *flags), peaks,
                                 candidates, inputs, rivals)
        err = _tie_errors(win, err, ties)
    elif win.rotating:
        halves = _split_rotation(model, win, numax)
        inputs["rot_halves"] = halves
        if halves is not None and not _halves_agree(halves, rot, err[4]):
            flags.append("rot_core_unstable")
            if not _holds_without_rotation(model, win, err[0], inputs, levels.score):
                return PeriodSpacing(None, None, None, None, ("dpi1_rotation", *flags),
                                     peaks, candidates, inputs,
                                     _unstable_rivals(win, err[0], inputs))
        else:
            rot_core = Measurement.or_none(rot, err[4])
    else:
        flags.append("rot_core_not_detected")
    return PeriodSpacing(
        dpi1=Measurement.or_none(dpi1, err[0]), q=Measurement.or_none(q, err[1]),
        eps_g=Measurement.or_none(float(np.mod(eps_g, 1.0)), err[2]), rot_core=rot_core,
        flags=tuple(flags), peaks=peaks, candidates=candidates, inputs=inputs,
    )


def _residual_rms(model: _Model, fit: _Fit, lo: float, hi: float) -> float:
    """RMS distance of the inliers to the root-found model of ``fit``, μHz (NaN
    without inliers)."""
    if not np.any(fit.inlier):
        return float("nan")
    resid = _model_residuals(model.freq, fit, model.nu_p(fit.params[3]), model.dnu, lo, hi)
    return float(np.sqrt(np.mean(resid[fit.inlier] ** 2)))


def _fits_well(fit: _Fit, rms: float) -> bool:
    """Whether the root-found model of ``fit`` matches its inliers: RMS distance at
    most three times the median peak uncertainty."""
    return bool(np.isfinite(rms) and rms <= 3.0 * float(np.median(fit.sigma)))


def _rivals(pool: list[tuple[_Fit, float]], model: _Model, lo: float, hi: float,
            inputs: dict[str, Any]) -> tuple[Measurement, ...]:
    """ΔΠ1 of the solutions that tie with the best one, when only the tie stops ΔΠ1.

    ``pool`` holds every refined solution with the score threshold of the search
    that found it. The best solution must pass that threshold and
    `_MIN_PEAK_EQUIVALENTS`, have at least `_MIN_INLIERS` inliers and 30 % of the
    peaks, a covariance and a model that matches its inliers (`_fits_well`); then
    every solution within `_AMBIGUITY_MARGIN` of its score is a rival (at least one
    more than 1 % away in ΔΠ1, as in `_winner_flags`). Rivals need not pass a
    threshold themselves: more rivals only make the state harder to agree on.
    Returns their ΔΠ1 (s, error from the fit, or 1 % without a covariance), best
    first, one per group of solutions within 1 %, and records them in
    ``inputs["dpi1_rivals"]``; an empty tuple when the best solution fails a check.
    """
    top, min_score = max(pool, key=lambda entry: entry[0].score)
    n_in = int(np.sum(top.inlier))
    if (top.score < min_score or n_in < max(_MIN_INLIERS, 0.3 * top.inlier.size)
            or not top.peak_equivalents(model.freq) >= _MIN_PEAK_EQUIVALENTS
            or top.cov is None or not _fits_well(top, _residual_rms(model, top, lo, hi))):
        return ()
    tied = sorted((f for f, _ in pool if f.score > top.score - _AMBIGUITY_MARGIN),
                  key=lambda f: -f.score)
    distinct: list[_Fit] = []
    for f in tied:  # a loop over a few solutions; the same solution refined twice counts once
        if all(abs(f.params[0] / g.params[0] - 1.0) > 0.01 for g in distinct):
            distinct.append(f)
    if len(distinct) < 2:
        return ()  # no tie: ΔΠ1 was withheld for another reason
    out = tuple(Measurement(float(f.params[0]),
                            float(np.sqrt(f.cov[0, 0])) if f.cov is not None
                            else 0.01 * float(f.params[0]))
                for f in distinct)
    inputs["dpi1_rivals"] = [[m.value, m.error] for m in out]
    return out


def _describe(fit: _Fit, extended: bool, scan: bool = False) -> dict[str, Any]:
    """Candidate entry of a refined fit (no search values)."""
    return {"dpi1": float("nan"), "q": float("nan"), "rotation": float("nan"),
            "power": float("nan"), "fit_dpi1": float(fit.params[0]),
            "fit_q": float(fit.params[1]), "fit_rotation": float(fit.params[4]),
            "score": fit.score, "n_inliers": float(np.sum(fit.inlier)),
            "extended": float(extended), "scan": float(scan)}


def _winner_flags(win: _Fit, fits: list[_Fit], min_score: float, freq: np.ndarray
                  ) -> list[str]:
    """Reasons why ``win`` cannot be reported as ΔΠ1 (empty when it can).

    A rival more than 1 % away in ΔΠ1 within `_AMBIGUITY_MARGIN` of its score
    (``dpi1_rotation`` when either is rotating, else ``dpi1_ambiguous``); a score
    below ``min_score``, fewer than `_MIN_INLIERS` inliers or fewer than
    `_MIN_PEAK_EQUIVALENTS` peak equivalents (``dpi1_no_periodicity``); inliers
    below 30 % of the peaks or no covariance (``dpi1_ambiguous``). ``freq`` are the
    peak frequencies, μHz.
    """
    flags: list[str] = []
    rivals = sorted((f for f in fits if f is not win
                     and abs(f.params[0] / win.params[0] - 1.0) > 0.01),
                    key=lambda f: -f.score)
    if rivals and rivals[0].score > win.score - _AMBIGUITY_MARGIN:
        flags.append("dpi1_rotation" if win.rotating or rivals[0].rotating
                     else "dpi1_ambiguous")
    n_in = int(np.sum(win.inlier))
    if (n_in < _MIN_INLIERS or win.score < min_score
            or not win.peak_equivalents(freq) >= _MIN_PEAK_EQUIVALENTS):
        flags.append("dpi1_no_periodicity")
    elif n_in < 0.3 * win.inlier.size or win.cov is None:
        flags.append("dpi1_ambiguous")
    return flags


def _beyond_ordinary(fit: _Fit, numax: float) -> bool:
    """Whether a rotating fit's splitting is at least the upper limit of `_ROT_CYCLES`
    (in cycles of ΔΠ1 at ν_max), i.e. outside what the ordinary search covers."""
    cycles = fit.params[4] / (numax**2 * fit.params[0] * 1e-6)
    return bool(fit.rotating and cycles >= _ROT_CYCLES[-1])


def _extended_fits(model: _Model, freq: np.ndarray, nu_p: np.ndarray, numax: float,
                   lo: float, hi: float) -> list[_Fit]:
    """Rotating fits of the extended search (`_ROT_CYCLES_EXTENDED`).

    Candidates are the best local maxima of the stretched-period power over
    the extended rotation hypotheses, and the one-cycle aliases of the best
    one (search._with_aliases); each is refined with rotation from its best
    hypothesis (one refinement per candidate keeps the stage fast).
    """
    grid, power_all, best, hyp, _ = _search(freq, nu_p, model.dnu, numax,
                                            _ROT_CYCLES_EXTENDED, still=False)
    power = power_all[np.arange(grid.size), best]
    picks = _local_maxima(power, grid, _N_CANDIDATES, 0.02)
    if picks.size == 0:
        return []
    aliased = _with_aliases(picks[:1], power, grid, _resolution(grid, freq, nu_p, lo, hi))
    picks = list(dict.fromkeys([*aliased.tolist(), *picks.tolist()]))
    return [_refine(model, _start(model, grid[i], hyp[best[i]], numax), True,
                    _M_ROUNDS_EXTENDED) for i in picks]  # a loop over a few candidates


def _model_residuals(freq: np.ndarray, fit: _Fit, nu_p: np.ndarray, dnu: float, lo: float,
                     hi: float) -> np.ndarray:
    """Distance of each peak to the nearest component of the root-found model, μHz."""
    dpi1, q, eps_g, _, rot = fit.params
    centre = relations.mixed_mode_frequencies(nu_p, dnu, dpi1, q, eps_g, lo - dnu, hi + dnu)
    if centre.size == 0:
        return np.full(freq.size, np.inf)
    z = np.asarray(relations.zeta(centre, nu_p, dnu, dpi1, q))
    comps = np.sort((centre[:, None] + np.array([-1, 0, 1])[None, :] * z[:, None]
                     * (rot if fit.rotating else 0.0)).ravel())
    idx = np.clip(np.searchsorted(comps, freq), 1, comps.size - 1)
    return np.minimum(np.abs(freq - comps[idx - 1]), np.abs(freq - comps[idx]))
