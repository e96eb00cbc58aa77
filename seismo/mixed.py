"""Dipole mixed modes: period spacing ΔΠ1, coupling q, ε_g and core rotation.

The stage works on the signal-to-noise spectrum ``ps.density / background``
of one red giant whose radial pattern (Δν, ε, α, δν02) is already known.

Public names
------------
measure_mixed_modes  ΔΠ1, q, ε_g and the core rotational splitting from the
                     l=1 mixed modes of a spectrum.
stretched_period     Stretched period τ of given frequencies (Mosser et al. 2015).
PeriodSpacing        Result of `measure_mixed_modes` (frozen dataclass).
DipolePeaks          The significant l=1 peaks (aligned arrays).
FLAGS                Flags the stage may set, with their meaning.

"Cannot measure" is a result, not an exception: the field is ``None`` and a
flag from `FLAGS` says why.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from . import relations
from .errors import OptionError
from .relations import FWHM_TO_SIGMA
from .relations.mixed import _p_phase  # same θp convention as the forward model
from .results import Measurement
from .spectrum import PowerSpectrum

__all__ = [
    "resolves_period_spacing",
    "measure_mixed_modes",
    "stretched_period",
    "PeriodSpacing",
    "DipolePeaks",
    "FLAGS",
]

#: Flags `measure_mixed_modes` may set, with their meaning.
FLAGS: dict[str, str] = {
    "dpi1_no_pattern": "Δν or ε_p of the radial pattern is missing: the dipole region "
                       "cannot be located",
    "dpi1_resolution": "the frequency resolution is too coarse for the g-mode spacing "
                       "ν_max² ΔΠ1 of the smallest plausible ΔΠ1",
    "dpi1_few_peaks": "too few significant peaks in the dipole region",
    "dpi1_no_periodicity": "no significant periodicity in the stretched periods",
    "dpi1_ambiguous": "ΔΠ1 candidates fit about equally well, or the best fit is poor",
    "dpi1_rotation": "the rotational multiplets cannot be disentangled from the period "
                     "spacing",
    "rot_core_unstable": "the core splitting differs between the peaks below and above "
                         "numax: not reported",
    "rot_core_not_detected": "no significant rotational splitting of the mixed modes",
}

# Plausible ΔΠ1 range searched, s (REFERENCES §5d, from memory).
_DPI1_RANGE = (40.0, 400.0)
# The g-mode spacing ν_max² ΔΠ1,min must span at least this many resolutions.
_MIN_RESOLUTIONS = 4.0
# Half-width of the analysis window in Gaussian σ of the envelope (as pmodes).
_WINDOW_SIGMAS = 2.5
# Typical radial-mode linewidth Γ0, μHz (Vrard et al. 2018; value from memory).
_TYPICAL_LINEWIDTH = 0.12
# Excluded half-widths around l=0, 2, 3: a fraction of Δν and a multiple of Γ0.
_EXCLUDE_DNU = {0: 0.045, 2: 0.045, 3: 0.02}
_EXCLUDE_WIDTHS = {0: 2.0, 2: 2.0, 3: 1.0}
_MIN_PEAKS = 10
_MIN_INLIERS = 8
# Trial couplings of the stretched-period search (dimensionless).
_Q_GRID = np.array([0.04, 0.08, 0.12, 0.17, 0.23, 0.3, 0.4, 0.52])
# Trial rotation shifts of the m = ±1 ridges at ν_max, in units of ΔΠ1
# (δτ = δν_rot,core / ν², Mosser et al. 2015, from memory).
_ROT_CYCLES = np.linspace(0.04, 0.7, 23)
_N_CANDIDATES = 4
# Mixture log-likelihood margins (natural log units) to prefer a candidate or
# to keep rotation.
_AMBIGUITY_MARGIN = 8.0
# The winner must reach this score. Calibration: the peak lists of the four
# oscillating demo stars at false_alarm 0.9, with the peaks moved to random
# dipole-region bins (48 shuffles), never scored above 18.3; real lists score
# 28–160.
_MIN_SCORE = 22.0
# Rotation is kept when it explains this many more peaks (count and fraction
# of all peaks) without lowering the mixture score by more than the loss.
_ROTATION_GAIN = 4
_ROTATION_FRACTION = 0.15
_ROTATION_SCORE_LOSS = 5.0


# ---------------------------------------------------------------- result types

@dataclass(frozen=True, eq=False)
class DipolePeaks:
    """Significant peaks of the dipole region, aligned arrays of shape (n_peaks,).

    Attributes
    ----------
    frequency : ndarray
        Peak frequency, μHz.
    snr : ndarray
        Signal-to-noise ratio S/B of the peak bin (1 = noise level).
    m : ndarray of int
        Azimuthal order assigned by the best fit (0 without rotation).
    inlier : ndarray of bool
        Whether the best fit explains the peak as a mixed mode.
    zeta : ndarray
        ζ of the peak in the best fit (NaN without a fit).
    """

    frequency: np.ndarray
    snr: np.ndarray
    m: np.ndarray
    inlier: np.ndarray
    zeta: np.ndarray

    def __len__(self) -> int:
        return int(self.frequency.size)

    def __repr__(self) -> str:
        return f"<DipolePeaks n={len(self)} n_inliers={int(np.sum(self.inlier))}>"


@dataclass(frozen=True, eq=False)
class PeriodSpacing:
    """Result of `measure_mixed_modes`.

    Attributes
    ----------
    dpi1 : Measurement or None
        Asymptotic dipole period spacing ΔΠ1, s.
    q : Measurement or None
        Coupling factor (dimensionless).
    eps_g : Measurement or None
        g-mode offset in [0, 1) (dimensionless), in the convention of
        `seismo.relations.mixed_mode_frequencies`: pure g modes at
        1/ν = (n_g + 1/2 + ε_g) ΔΠ1.
    rot_core : Measurement or None
        Rotational splitting of pure g modes δν_rot,core, μHz; a mode of
        trapped fraction ζ is split by ζ δν_rot,core.
    flags : tuple of str
        Keys of `FLAGS`.
    peaks : DipolePeaks
        The significant l=1 peaks used.
    candidates : list of dict
        Each ΔΠ1 candidate of the stretched-period search: ``dpi1`` (s),
        ``q``, ``rotation`` (μHz, 0 without), ``power`` (normalised
        stretched-period power), and after refinement ``fit_dpi1``,
        ``fit_q``, ``score`` (mixture log-likelihood of the peaks), and
        ``n_inliers``.
    inputs : dict
        ``numax``, ``dnu``, ``eps_p``, ``alpha``, ``window`` (μHz),
        ``threshold`` (S/B), ``false_alarm``, ``n_bins``, ``d01`` (the fitted
        offset of the nominal l=1 p modes in units of Δν, relation value
        included), ``nu_p`` (list of nominal l=1 p modes, μHz),
        ``residual_rms`` (μHz, inliers against `mixed_mode_frequencies`).
    """

    dpi1: Measurement | None
    q: Measurement | None
    eps_g: Measurement | None
    rot_core: Measurement | None
    flags: tuple[str, ...]
    peaks: DipolePeaks
    candidates: list[dict[str, Any]] = field(default_factory=list)
    inputs: dict[str, Any] = field(default_factory=dict)

    def model_frequencies(self) -> tuple[np.ndarray, np.ndarray]:
        """Mode frequencies of the best fit in the analysis window.

        Returns
        -------
        frequency : ndarray, shape (n_modes,)
            Mixed-mode component frequencies, μHz, from
            `seismo.relations.mixed_mode_frequencies` split by m ζ δν_rot.
        m : ndarray of int, shape (n_modes,)
            Azimuthal order of each component (only 0 without rotation).
        """
        if self.dpi1 is None or self.q is None or self.eps_g is None:
            return np.empty(0), np.empty(0, dtype=np.int64)
        nu_p = np.asarray(self.inputs["nu_p"], dtype=np.float64)
        lo, hi = self.inputs["window"]
        dnu = self.inputs["dnu"]
        centre = relations.mixed_mode_frequencies(
            nu_p, dnu, self.dpi1.value, self.q.value, self.eps_g.value, lo, hi)
        rot = 0.0 if self.rot_core is None else self.rot_core.value
        orders = np.array([-1, 0, 1]) if rot > 0 else np.array([0])
        if centre.size == 0:
            return centre, np.empty(0, dtype=np.int64)
        z = np.asarray(relations.zeta(centre, nu_p, dnu, self.dpi1.value, self.q.value))
        freq = (centre[:, None] + orders[None, :] * z[:, None] * rot).ravel()
        m = np.broadcast_to(orders, (centre.size, orders.size)).ravel()
        return freq, m.copy()

    def echelle(self) -> dict[str, np.ndarray] | None:
        """Stretched-period échelle coordinates of the peaks and the fitted modes.

        Returns
        -------
        dict or None
            ``None`` without a ΔΠ1. Otherwise ``peak_x`` (τ mod ΔΠ1, s) and
            ``peak_freq`` (μHz) for the m = 0-equivalent peaks, shape
            (n_peaks,), ``peak_m``; ``model_x``, ``model_freq``, ``model_m``
            for the fitted components, shape (n_modes,). τ is computed at
            the frequency corrected for rotation (ν − m ζ δν_rot), so all
            azimuthal orders of a mode fall on one vertical ridge at
            x ≈ ε_g ΔΠ1.
        """
        if self.dpi1 is None or self.q is None:
            return None
        nu_p = np.asarray(self.inputs["nu_p"], dtype=np.float64)
        dnu, dpi1, q = self.inputs["dnu"], self.dpi1.value, self.q.value
        rot = 0.0 if self.rot_core is None else self.rot_core.value

        def coords(freq: np.ndarray, m: np.ndarray) -> np.ndarray:
            if freq.size == 0:
                return np.empty(0)
            centre = _unsplit(freq, m, nu_p, dnu, dpi1, q, rot)
            return np.mod(stretched_period(centre, nu_p, dnu, dpi1, q), dpi1)

        model_freq, model_m = self.model_frequencies()
        return {
            "peak_x": coords(self.peaks.frequency, self.peaks.m),
            "peak_freq": self.peaks.frequency.copy(),
            "peak_m": self.peaks.m.copy(),
            "model_x": coords(model_freq, model_m),
            "model_freq": model_freq,
            "model_m": model_m,
        }

    def as_dict(self) -> dict[str, Any]:
        """JSON-able summary: measurements, flags, peaks, candidates and inputs."""

        def meas(x: Measurement | None) -> dict[str, Any] | None:
            return None if x is None else x.to_dict()

        peaks = [
            {"frequency": float(f), "snr": float(s), "m": int(m), "inlier": bool(i)}
            for f, s, m, i in zip(self.peaks.frequency, self.peaks.snr, self.peaks.m,
                                  self.peaks.inlier, strict=True)
        ]
        return {
            "dpi1": meas(self.dpi1), "q": meas(self.q), "eps_g": meas(self.eps_g),
            "rot_core": meas(self.rot_core), "flags": list(self.flags), "peaks": peaks,
            "candidates": [{k: float(v) for k, v in c.items()} for c in self.candidates],
            "inputs": {k: (list(v) if isinstance(v, (list, tuple)) else v)
                       for k, v in self.inputs.items()},
        }

    def __repr__(self) -> str:
        def show(x: Measurement | None) -> str:
            return "None" if x is None else f"{x.value:.5g}±{x.error:.2g}"

        return (f"<PeriodSpacing dpi1={show(self.dpi1)} q={show(self.q)} "
                f"eps_g={show(self.eps_g)} rot_core={show(self.rot_core)} "
                f"n_peaks={len(self.peaks)} flags={list(self.flags)}>")


# ---------------------------------------------------------------- stretched periods

def _unwrapped_arctan(theta_p: np.ndarray, q: Any) -> np.ndarray:
    """U(θp) = kπ + arctan(tan r / q), θp = kπ + r, r in [−π/2, π/2); continuous."""
    k = np.floor(theta_p / np.pi + 0.5)
    r = theta_p - np.pi * k
    return np.pi * k + np.arctan2(np.sin(r), q * np.cos(r))


def stretched_period(freq: Any, nu_p: Any, dnu: float, dpi1: float, q: float) -> np.ndarray:
    """Stretched period τ, s, with dτ = dP / ζ integrated in closed form.

    Parameters
    ----------
    freq : array_like, shape (n,)
        Frequencies, μHz.
    nu_p : array_like, shape (n_p,)
        Nominal l=1 p modes, μHz (as for `seismo.relations.zeta`).
    dnu : float
        Large separation, μHz.
    dpi1 : float
        Trial period spacing ΔΠ1, s.
    q : float
        Trial coupling factor.

    Returns
    -------
    ndarray, shape (n,)
        τ = P − (ΔΠ1/π) U(θp), s, with P = 1/ν and U the continuous
        arctan(tan θp / q); decreasing with frequency.

    Raises
    ------
    OptionError
        If ``dnu``, ``dpi1``, ``q`` or a frequency is not positive.

    Notes
    -----
    With ζ in the smooth form of `seismo.relations.zeta`,
    1/ζ = 1 + (q ν² ΔΠ1/Δν) / (q² cos²θp + sin²θp) and dθp = π dν/Δν, so
    ∫ dP/ζ = P − (ΔΠ1/π) arctan(tan θp/q). At an exact solution of
    tan θp = q tan θg, arctan(tan θp/q) ≡ θg (mod π), hence
    τ = (ε_g − j) ΔΠ1 for an integer j: the stretched periods of consecutive
    mixed modes are spaced by exactly ΔΠ1 and τ mod ΔΠ1 = ε_g ΔΠ1.

    References
    ----------
    Mosser B. et al. 2015, A&A 584, A50; Vrard M. et al. 2016, A&A 588, A87
    (stretched periods; the closed form is our derivation, checked in tests).
    """
    f = np.asarray(freq, dtype=np.float64)
    if np.any(~np.isfinite(f)) or np.any(f <= 0):
        raise OptionError("freq must be finite and > 0 μHz")
    for name, value in (("dnu", dnu), ("dpi1", dpi1), ("q", q)):
        if not (np.isfinite(value) and value > 0):
            raise OptionError(f"{name} must be finite and > 0; got {value!r}")
    nu_p = np.sort(np.atleast_1d(np.asarray(nu_p, dtype=np.float64)))
    theta_p, _ = _p_phase(f, nu_p, float(dnu))
    return 1e6 / f - dpi1 / np.pi * _unwrapped_arctan(theta_p, q)


def _zeta_fast(freq: np.ndarray, nu_p: np.ndarray, dnu: float, dpi1: float, q: float
               ) -> tuple[np.ndarray, np.ndarray]:
    """ζ (smooth form of `seismo.relations.zeta`) and θp, without checks (bare arrays)."""
    theta_p, spacing = _p_phase(freq, nu_p, dnu)
    n_g = spacing / (freq**2 * 1e-6 * dpi1)
    denom = q**2 * np.cos(theta_p) ** 2 + np.sin(theta_p) ** 2
    return 1.0 / (1.0 + (q / n_g) / denom), theta_p


def _unsplit(freq: np.ndarray, m: np.ndarray, nu_p: np.ndarray, dnu: float, dpi1: float,
             q: float, rot: float) -> np.ndarray:
    """m = 0 frequency of a component at ``freq``: ν − m ζ δν_rot (two fixed-point steps)."""
    if rot == 0 or not np.any(m):
        return freq
    centre = freq
    for _ in range(2):
        centre = freq - m * _zeta_fast(centre, nu_p, dnu, dpi1, q)[0] * rot
    return centre


# ---------------------------------------------------------------- validation and setup

def _validate(ps: Any, background: Any, numax: Any, pattern: Any,
              false_alarm: Any) -> tuple[float, np.ndarray]:
    if not isinstance(ps, PowerSpectrum):
        raise TypeError(f"ps must be a PowerSpectrum; got {type(ps).__name__}")
    if ps.freq.size < 16:
        raise OptionError(f"ps must have at least 16 frequency bins; got {ps.freq.size}")
    if isinstance(numax, bool) or not isinstance(numax, (int, float, np.integer, np.floating)) \
            or not np.isfinite(numax) or numax <= 0:
        raise OptionError(f"numax must be a finite number > 0 μHz; got {numax!r}")
    if numax >= ps.freq[-1]:
        raise OptionError(f"numax ({numax:.4g} μHz) must lie below the top of the spectrum "
                          f"({ps.freq[-1]:.4g} μHz)")
    bg = np.asarray(background, dtype=np.float64)
    if bg.ndim == 0:
        bg = np.full(ps.freq.shape, float(bg))
    if bg.shape != ps.freq.shape:
        raise OptionError(f"background must be a scalar or have the shape of ps.freq "
                          f"{ps.freq.shape}; got shape {bg.shape}")
    if not np.all(np.isfinite(bg)) or np.any(bg <= 0):
        raise OptionError("background must be finite and > 0 ppm²/μHz everywhere")
    if not all(hasattr(pattern, a) for a in ("dnu", "eps_p", "alpha", "d02")):
        raise TypeError("pattern must be a RadialPattern (with dnu, eps_p, alpha, d02); "
                        f"got {type(pattern).__name__}")
    if not (isinstance(false_alarm, (int, float)) and 0 < false_alarm < 1):
        raise OptionError(f"false_alarm must be a probability in (0, 1); got {false_alarm!r}")
    return float(numax), bg


def _dipole_mask(freq: np.ndarray, lo: float, hi: float, numax: float, dnu: float,
                 eps: float, alpha: float, d02: float, df: float) -> np.ndarray:
    """True on the bins of [lo, hi] outside the l=0, 2 and 3 windows."""
    n = np.arange(np.floor(lo / dnu - eps) - 2, np.ceil(hi / dnu - eps) + 2)
    mask = (freq >= lo) & (freq <= hi)
    d0l = {0: 0.0, 2: d02, 3: float(relations.d03_from_dnu(dnu))}
    for l, d in d0l.items():  # three degrees, each masked at once over all orders
        centres = np.asarray(relations.universal_pattern(n, l, dnu, numax, eps, alpha, d))
        half = max(_EXCLUDE_DNU[l] * dnu, _EXCLUDE_WIDTHS[l] * _TYPICAL_LINEWIDTH, 3.0 * df)
        idx = np.searchsorted(centres, freq)
        near = np.minimum(np.abs(freq - centres[np.clip(idx - 1, 0, n.size - 1)]),
                          np.abs(freq - centres[np.clip(idx, 0, n.size - 1)]))
        mask &= near > half
    return mask


def _find_peaks(freq: np.ndarray, snr: np.ndarray, mask: np.ndarray, threshold: float,
                merge: float) -> tuple[np.ndarray, np.ndarray]:
    """Local maxima above ``threshold`` in the masked bins, merged within ``merge`` μHz."""
    inner = np.zeros(snr.size, dtype=bool)
    inner[1:-1] = (snr[1:-1] >= snr[:-2]) & (snr[1:-1] > snr[2:])
    idx = np.flatnonzero(inner & mask & (snr > threshold))
    if idx.size == 0:
        return np.empty(0), np.empty(0)
    # Group peaks closer than `merge`; keep the highest of each group.
    group = np.concatenate([[0], np.cumsum(np.diff(freq[idx]) > merge)])
    order = np.lexsort((-snr[idx], group))
    first = np.concatenate([[True], np.diff(group[order]) > 0])
    keep = idx[order[first]]
    return freq[keep], snr[keep]


# ---------------------------------------------------------------- candidate search

def _search(freq: np.ndarray, nu_p: np.ndarray, dnu: float, numax: float
            ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, float]:
    """Stretched-period power over (ΔΠ1, q, rotation hypothesis).

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
    q_h = np.repeat(_Q_GRID, 1 + 2 * _ROT_CYCLES.size)
    u_h = np.tile(np.concatenate([[0.0], _ROT_CYCLES, _ROT_CYCLES]), _Q_GRID.size)
    a_h = np.tile(np.concatenate([[1.0], np.ones(_ROT_CYCLES.size),
                                  np.zeros(_ROT_CYCLES.size)]), _Q_GRID.size)
    shift = _unwrapped_arctan(theta_p[:, None], q_h[None, :]) / np.pi  # (n_peaks, n_hyp)
    beta = 2.0 * np.pi * u_h[None, :] * (numax / freq[:, None]) ** 2
    kernel = np.where(u_h[None, :] > 0, a_h[None, :] + 2.0 * np.cos(beta), 1.0)
    weights = (kernel * np.exp(-2j * np.pi * shift)).astype(np.complex64)
    comb = np.exp(2j * np.pi * (period[None, :] / dpi1[:, None])).astype(np.complex64)
    power = np.abs(comb @ weights) ** 2 / np.sum(kernel**2, axis=0)[None, :]
    best = np.argmax(power, axis=1)
    hyp = np.column_stack([q_h, u_h, a_h])
    # Independent trials: ΔΠ1 grid oversampled 3×, about 3 independent q and
    # one per 0.15 cycle of rotation (our estimate).
    n_trials = dpi1.size / 3.0 * 3.0 * (1.0 + 2.0 * np.ptp(_ROT_CYCLES) / 0.15)
    return dpi1, power, best, hyp, float(n_trials)


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


# ---------------------------------------------------------------- refinement

@dataclass
class _Fit:
    params: np.ndarray  # dpi1, q, eps_g, d01 shift (Δν), rot (μHz)
    m: np.ndarray
    score: float
    inlier: np.ndarray
    sigma: np.ndarray
    zeta: np.ndarray
    cov: np.ndarray | None
    rotating: bool


class _Model:
    """Phase residuals of peaks against tan θp = q tan θg (bare float64 arrays)."""

    def __init__(self, freq: np.ndarray, dnu: float, numax: float, eps: float, alpha: float,
                 d01: float, orders: np.ndarray, df: float):
        self.freq, self.dnu, self.numax, self.eps, self.alpha = freq, dnu, numax, eps, alpha
        self.d01, self.orders = d01, orders
        self.df = df
        self._nu_p0 = np.asarray(relations.universal_pattern(orders, 1, dnu, numax, eps,
                                                             alpha, d01))

    def nu_p(self, shift: float) -> np.ndarray:
        """Nominal l=1 p modes with d01 offset by ``shift`` (units of Δν), μHz."""
        return self._nu_p0 - shift * self.dnu

    def phase(self, p: np.ndarray, m: np.ndarray, jacobian: bool = False
              ) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
        """Residual in cycles wrapped to [−½, ½), ζ at each peak, and optionally
        the derivatives of the residual, shape (n_peaks, 5).

        r = τ/ΔΠ1 − ε_g = P/ΔΠ1 − U(θp)/π − ε_g at the m = 0 frequency.
        """
        dpi1, q, eps_g, shift, rot = p
        nu_p = self.nu_p(shift)
        centre = _unsplit(self.freq, m, nu_p, self.dnu, dpi1, q, rot)
        z, theta_p = _zeta_fast(centre, nu_p, self.dnu, dpi1, q)
        period = 1e6 / centre
        r = period / dpi1 - _unwrapped_arctan(theta_p, q) / np.pi - eps_g
        r = r - np.floor(r + 0.5)
        if not jacobian:
            return r, z, None
        _, spacing = _p_phase(centre, nu_p, self.dnu)
        sin2, cos2 = np.sin(theta_p) ** 2, np.cos(theta_p) ** 2
        den = sin2 + q**2 * cos2
        jac = np.empty((r.size, 5))
        jac[:, 0] = -period / dpi1**2
        jac[:, 1] = np.sin(theta_p) * np.cos(theta_p) / den / np.pi
        jac[:, 2] = -1.0
        jac[:, 3] = -q * self.dnu / (spacing * den)
        jac[:, 4] = m * 1e6 / (centre**2 * dpi1)
        return r, z, jac

    def sigma(self, z: np.ndarray) -> np.ndarray:
        """Frequency uncertainty of a peak, μHz: resolution and half its linewidth."""
        return np.hypot(self.df, 0.5 * _TYPICAL_LINEWIDTH * (1.0 - z))

    def residual(self, p: np.ndarray, m: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Frequency residuals, μHz (δν = ζ ν² ΔΠ1 δτ), and ζ."""
        r, z, _ = self.phase(p, m)
        return r * p[0] * z * self.freq**2 * 1e-6, z

    def best_m(self, p: np.ndarray) -> np.ndarray:
        """Azimuthal order of each peak that minimises its phase residual."""
        trials = [np.abs(self.phase(p, np.full(self.freq.size, m))[0]) for m in (-1, 0, 1)]
        return np.argmin(np.array(trials), axis=0) - 1

    def score(self, p: np.ndarray, m: np.ndarray, rotating: bool
              ) -> tuple[float, np.ndarray, np.ndarray, np.ndarray]:
        """Mixture log-likelihood of the peaks: mixed mode or uniform background.

        Per peak, log(½ + ½ s w_m g), with g the Gaussian density of the
        residual, s the local mode spacing ζ ν² ΔΠ1 (the background density
        is 1/s) and w_m the fraction of peaks of that azimuthal order.
        """
        res, z = self.residual(p, m)
        sig = self.sigma(z)
        spacing = p[0] * z * self.freq**2 * 1e-6
        g = np.exp(-0.5 * (res / sig) ** 2) / (np.sqrt(2 * np.pi) * sig)
        inlier = np.abs(res) < 3.0 * sig
        w = np.ones(self.freq.size)
        if rotating:
            counts = np.array([np.sum(inlier & (m == k)) for k in (-1, 0, 1)], dtype=float)
            frac = (counts + 1.0) / (counts.sum() + 3.0)
            w = frac[m + 1]
        ll = np.sum(np.log(0.5 + 0.5 * np.minimum(spacing * w * g, 1e6)))
        return float(ll), inlier, sig, z


_LOWER = np.array([_DPI1_RANGE[0] * 0.8, 0.01, -np.inf, -0.08, 0.0])
_UPPER = np.array([_DPI1_RANGE[1] * 1.2, 0.8, np.inf, 0.08, 3.0])
# Scale of the Cauchy loss, in units of each peak's frequency uncertainty.
_LOSS_SCALE = 1.5


def _robust_steps(model: _Model, p: np.ndarray, m: np.ndarray, free: np.ndarray,
                  n_iter: int = 25) -> np.ndarray:
    """Damped Gauss–Newton with Cauchy weights (iteratively reweighted).

    Residuals are phases converted to frequency and divided by each peak's
    uncertainty; the conversion factor ζ ν² ΔΠ1/σ is held fixed within a step.
    """
    c2 = _LOSS_SCALE**2

    def state(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, float]:
        r, z, jac = model.phase(x, m, jacobian=True)
        scale = x[0] * z * model.freq**2 * 1e-6 / model.sigma(z)
        e = r * scale
        return e, jac[:, free] * scale[:, None], float(np.sum(np.log1p(e**2 / c2)))

    e, j, cost = state(p)
    damping = 1e-3
    for _ in range(n_iter):  # a loop over iterations, each fully vectorised
        w = 1.0 / (1.0 + e**2 / c2)
        a = j.T @ (w[:, None] * j)
        g = j.T @ (w * e)
        try:
            step = -np.linalg.solve(a + damping * np.diag(np.diag(a) + 1e-12), g)
        except np.linalg.LinAlgError:
            break
        trial = p.copy()
        trial[free] += step
        trial = np.clip(trial, _LOWER, _UPPER)
        e_new, j_new, cost_new = state(trial)
        if cost_new < cost:
            converged = cost - cost_new < 1e-6 * max(cost, 1.0)
            p, e, j, cost = trial, e_new, j_new, cost_new
            damping = max(damping / 3.0, 1e-6)
            if converged:
                break
        else:
            damping *= 10.0
            if damping > 1e6:
                break
    return p


def _refine(model: _Model, start: np.ndarray, rotating: bool) -> _Fit:
    """Robust fit of the implicit relation, azimuthal orders re-assigned."""
    free = np.array([True, True, True, True, rotating])
    p = np.clip(start.copy(), _LOWER, _UPPER)
    m = model.best_m(p) if rotating else np.zeros(model.freq.size, dtype=np.int64)
    for _ in range(3):  # alternate the fit and the assignment of m
        p = _robust_steps(model, p, m, free)
        if not rotating:
            break
        new_m = model.best_m(p)
        if np.array_equal(new_m, m):
            break
        m = new_m
    score, inlier, sig, z = model.score(p, m, rotating)
    cov = _covariance(model, p, m, free, inlier, sig)
    return _Fit(p, m, score, inlier, sig, z, cov, rotating)


def _covariance(model: _Model, p: np.ndarray, m: np.ndarray, free: np.ndarray,
                inlier: np.ndarray, sig: np.ndarray) -> np.ndarray | None:
    """Covariance of the free parameters from the inliers' Jacobian.

    (Jᵀ J)⁻¹ of the normalised frequency residuals, scaled by the reduced χ²
    when it exceeds 1.
    """
    n_free = int(free.sum())
    if inlier.sum() <= n_free + 1:
        return None
    r, z, jac = model.phase(p, m, jacobian=True)
    scale = (p[0] * z * model.freq**2 * 1e-6 / sig)[inlier]
    e = r[inlier] * scale
    j = jac[inlier][:, free] * scale[:, None]
    try:
        cov = np.linalg.inv(j.T @ j)
    except np.linalg.LinAlgError:
        return None
    chi2 = float(np.sum(e**2)) / max(e.size - n_free, 1)
    full = np.full((5, 5), np.nan)
    full[np.ix_(free, free)] = cov * max(chi2, 1.0)
    return full


def _start(model: _Model, dpi1: float, hyp_row: np.ndarray, numax: float) -> np.ndarray:
    """Start (ΔΠ1, q, ε_g, 0, δν_rot) of a search hypothesis; ε_g from the phase of
    the weighted stretched-period sum."""
    q, u, a = hyp_row
    zero = np.zeros(model.freq.size, dtype=np.int64)
    r, _, _ = model.phase(np.array([dpi1, q, 0.0, 0.0, 0.0]), zero)
    c = a + 2.0 * np.cos(2.0 * np.pi * u * (numax / model.freq) ** 2) if u > 0 else 1.0
    eps_g = np.mod(np.angle(np.sum(c * np.exp(2j * np.pi * r))) / (2.0 * np.pi), 1.0)
    return np.array([dpi1, q, eps_g, 0.0, u * numax**2 * dpi1 * 1e-6])


def _refine_candidate(model: _Model, dpi1: float, power_row: np.ndarray, hyp: np.ndarray,
                      numax: float) -> _Fit:
    """Best fit near one ΔΠ1 candidate: without rotation, and with the two best
    rotation hypotheses; rotation is kept when it raises the score enough."""
    rotating = hyp[:, 1] > 0
    still = np.flatnonzero(~rotating)[np.argmax(power_row[~rotating])]
    fit = _refine(model, _start(model, dpi1, hyp[still], numax), rotating=False)
    order = np.flatnonzero(rotating)[np.argsort(power_row[rotating])[::-1]]
    tried: list[float] = []
    best_rot: _Fit | None = None
    for k in order:  # a loop over the few best rotation hypotheses
        if any(abs(hyp[k, 1] - u) < 0.08 for u in tried):
            continue
        tried.append(float(hyp[k, 1]))
        trial = _refine(model, _start(model, dpi1, hyp[k], numax), rotating=True)
        if best_rot is None or trial.score > best_rot.score:
            best_rot = trial
        if len(tried) == 2:
            break
    if best_rot is None or best_rot.params[4] <= 2.0 * model.df:
        return fit
    gained = int(best_rot.inlier.sum()) - int(fit.inlier.sum())
    if (gained >= max(_ROTATION_GAIN, _ROTATION_FRACTION * model.freq.size)
            and best_rot.score > fit.score - _ROTATION_SCORE_LOSS):
        return best_rot
    return fit


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
       uniform background); rotation is kept if it improves it by more than
       12. Errors come from the Jacobian of the inliers, scaled by the
       reduced χ² when it exceeds 1.

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
    dnu, eps = float(pattern.dnu.value), float(pattern.eps_p.value)
    alpha = float(pattern.alpha.value) if pattern.alpha is not None \
        else float(relations.curvature_from_dnu(dnu))
    d02 = float(pattern.d02.value) if pattern.d02 is not None \
        else float(relations.d02_from_dnu(dnu))
    sigma_env = float(relations.envelope_fwhm(numax)) * FWHM_TO_SIGMA
    lo = max(numax - _WINDOW_SIGMAS * sigma_env, float(ps.freq[1]))
    hi = min(numax + _WINDOW_SIGMAS * sigma_env, float(ps.freq[-1]), float(ps.nyquist))
    inputs.update(dnu=dnu, eps_p=eps, alpha=alpha, window=(lo, hi))

    mask = _dipole_mask(ps.freq, lo, hi, numax, dnu, eps, alpha, d02, df)
    n_bins = int(mask.sum())
    threshold = -np.log(false_alarm / max(n_bins, 1))
    inputs.update(threshold=float(threshold), n_bins=n_bins)
    freq, snr = _find_peaks(ps.freq, ps.density / bg, mask, threshold,
                            max(2.5 * df, 0.5 * _TYPICAL_LINEWIDTH))
    if freq.size < _MIN_PEAKS:
        return _empty(["dpi1_few_peaks"], inputs, freq, snr)

    d01 = float(relations.d01_from_dnu(dnu))
    orders = np.arange(np.floor(lo / dnu - eps) - 2, np.ceil(hi / dnu - eps) + 2)
    model = _Model(freq, dnu, numax, eps, alpha, d01, orders, df)
    nu_p0 = model.nu_p(0.0)
    grid, power_all, best, hyp, n_trials = _search(freq, nu_p0, dnu, numax)
    power = power_all[np.arange(grid.size), best]
    inputs["search_level"] = float(np.log(n_trials / false_alarm))
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
            "score": fit.score, "n_inliers": float(np.sum(fit.inlier)),
        })

    order = np.argsort([-f.score for f in fits])
    win = fits[order[0]]
    flags: list[str] = []
    rivals = [fits[j] for j in order[1:]
              if abs(fits[j].params[0] / win.params[0] - 1.0) > 0.01]
    if rivals and rivals[0].score > win.score - _AMBIGUITY_MARGIN:
        flags.append("dpi1_rotation" if win.rotating or rivals[0].rotating
                     else "dpi1_ambiguous")
    n_in = int(np.sum(win.inlier))
    if n_in < _MIN_INLIERS or win.score < _MIN_SCORE:
        flags.append("dpi1_no_periodicity")
    elif n_in < 0.3 * freq.size or win.cov is None:
        flags.append("dpi1_ambiguous")

    nu_p = model.nu_p(win.params[3])
    resid = _model_residuals(freq, win, nu_p, dnu, lo, hi)
    rms = float(np.sqrt(np.mean(resid[win.inlier] ** 2))) if n_in else float("nan")
    inputs.update(d01=d01 + float(win.params[3]), nu_p=[float(x) for x in nu_p],
                  residual_rms=rms, n_inliers=n_in)
    if not np.isfinite(rms) or rms > 3.0 * float(np.median(win.sigma)):
        flags.append("dpi1_ambiguous")
    peaks = DipolePeaks(freq, snr, win.m if win.rotating else np.zeros(freq.size, np.int64),
                        win.inlier, win.zeta)
    if flags:
        return PeriodSpacing(None, None, None, None, tuple(dict.fromkeys(flags)), peaks,
                             candidates, inputs)

    err = np.sqrt(np.diag(win.cov))
    dpi1, q, eps_g, _, rot = win.params
    rot_core = None
    if win.rotating:
        halves = _split_rotation(model, win, numax)
        inputs["rot_halves"] = halves
        if halves is not None and not _halves_agree(halves, rot, err[4]):
            flags.append("rot_core_unstable")
        else:
            rot_core = Measurement.or_none(rot, err[4])
    else:
        flags.append("rot_core_not_detected")
    return PeriodSpacing(
        dpi1=Measurement.or_none(dpi1, err[0]), q=Measurement.or_none(q, err[1]),
        eps_g=Measurement.or_none(float(np.mod(eps_g, 1.0)), err[2]), rot_core=rot_core,
        flags=tuple(flags), peaks=peaks, candidates=candidates, inputs=inputs,
    )


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


def _halves_agree(halves: list[list[float]], rot: float, err: float) -> bool:
    """Both halves within 3 combined sigmas of each other and of the whole."""
    (r1, e1), (r2, e2) = halves
    tolerance = 3.0 * float(np.hypot(e1, e2))
    return abs(r1 - r2) <= tolerance and max(abs(r1 - rot), abs(r2 - rot)) <= tolerance


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
