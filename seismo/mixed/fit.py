"""Refinement: robust fit of the implicit asymptotic relation, rotation included."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import relations
from .stretched import (
    _unwrapped_arctan,
)
from .types import (
    _DPI1_RANGE,
    _ROTATION_FRACTION,
    _ROTATION_GAIN,
    _ROTATION_SCORE_LOSS,
    _TYPICAL_LINEWIDTH,
)

__all__ = []

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

    def peak_equivalents(self, freq: np.ndarray) -> float:
        """The score in units of the mean gain of one peak placed exactly on the model.

        A peak at zero residual adds log(½ + ½ s/(√(2π) σ)) to the mixture score
        (`_Model.score` with w_m = 1), s = ζ ν² ΔΠ1 the local mode spacing and σ the
        peak's frequency uncertainty: the score divided by the mean of this over the
        peaks is roughly how many peaks the solution places exactly.
        """
        spacing = self.params[0] * self.zeta * freq**2 * 1e-6
        gain = float(np.mean(np.log(0.5 + 0.5 * spacing / (np.sqrt(2 * np.pi) * self.sigma))))
        return self.score / gain if gain > 0 else float("nan")


class _Model:
    """Phase residuals of peaks against tan θp = q tan θg (bare float64 arrays)."""

    def __init__(self, freq: np.ndarray, dnu: float, numax: float, eps: float, alpha: float,
                 d01: float, orders: np.ndarray, df: float):
        self.freq, self.dnu, self.numax, self.eps, self.alpha = freq, dnu, numax, eps, alpha
        self.d01, self.orders = d01, orders
        self.df = df
        self._nu_p0 = np.asarray(relations.universal_pattern(orders, 1, dnu, numax, eps,
                                                             alpha, d01))
        # Tables of `relations.mixed._p_phase` indexed by k + 1 (k = −1 below the
        # first nominal mode, k = last above the last one); the local spacings do
        # not change with the d01 shift. The fit calls this thousands of times on
        # small arrays, where every numpy call counts.
        last = self._nu_p0.size - 1
        self._kc = np.concatenate([[0], np.arange(last + 1)])
        self._spacing = np.concatenate([[dnu], np.diff(self._nu_p0), [dnu]])

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
        centre = self.freq
        if rot != 0 and np.any(m):
            for _ in range(2):  # the fixed-point steps of stretched._unsplit
                centre = self.freq - m * self._zeta(centre, nu_p, dpi1, q)[0] * rot
        z, theta_p, spacing, sin, cos = self._zeta(centre, nu_p, dpi1, q)
        period = 1e6 / centre
        r = period / dpi1 - _unwrapped_arctan(theta_p, q) / np.pi - eps_g
        r = r - np.floor(r + 0.5)
        if not jacobian:
            return r, z, None
        den = sin * sin + q**2 * (cos * cos)
        jac = np.empty((r.size, 5))
        jac[:, 0] = -period / dpi1**2
        jac[:, 1] = sin * cos / den / np.pi
        jac[:, 2] = -1.0
        jac[:, 3] = -q * self.dnu / (spacing * den)
        jac[:, 4] = m * 1e6 / (centre**2 * dpi1)
        return r, z, jac

    def _zeta(self, freq: np.ndarray, nu_p: np.ndarray, dpi1: float, q: float
              ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """ζ, θp, local p spacing (μHz), sin θp and cos θp at ``freq``: the values of
        `stretched._zeta_fast` from the tables of ``__init__``."""
        j = np.searchsorted(nu_p, freq, side="right")
        kc, spacing = self._kc[j], self._spacing[j]
        theta = np.pi * (kc + (freq - nu_p[kc]) / spacing)
        sin, cos = np.sin(theta), np.cos(theta)
        n_g = spacing / (freq**2 * 1e-6 * dpi1)
        z = 1.0 / (1.0 + (q / n_g) / (q**2 * (cos * cos) + sin * sin))
        return z, theta, spacing, sin, cos

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
        is 1/s) and w_m the fraction of peaks of that azimuthal order, the
        same for m = +1 and m = −1: at any inclination i both have visibility
        ½ sin²i (m = 0: cos²i; Gizon & Solanki 2003, ApJ 589, 1009, from
        memory). Free weights for each side would reward a one-sided doublet,
        the pattern of a splitting read at half or twice its value.
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
            # m = ±1 have the same visibility at any inclination (Gizon & Solanki 2003).
            frac[0] = frac[2] = 0.5 * (frac[0] + frac[2])
            w = frac[m + 1]
        ll = np.sum(np.log(0.5 + 0.5 * np.minimum(spacing * w * g, 1e6)))
        return float(ll), inlier, sig, z


_LOWER = np.array([_DPI1_RANGE[0] * 0.8, 0.01, -np.inf, -0.08, 0.0])
_UPPER = np.array([_DPI1_RANGE[1] * 1.2, 0.8, np.inf, 0.08, 3.0])
# Scale of the Cauchy loss, in units of each peak's frequency uncertainty.
_LOSS_SCALE = 1.5
# A step that lowers the cost by less than this fraction ends the fit. The cost is
# a sum of log(1 + e²/c²) over tens of peaks, a few tens in all; a parameter moved
# by one error changes it by about one, so 1e-4 stops at a few thousandths of an
# error. (1e-6 before: 15–30 % more time in the mixed stage, and winners of the
# demo stars identical to within 1 % of their errors.)
_CONVERGED = 1e-4


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
            damped = a.copy()
            damped.flat[:: a.shape[0] + 1] += damping * (a.diagonal() + 1e-12)
            step = -np.linalg.solve(damped, g)
        except np.linalg.LinAlgError:
            break
        trial = p.copy()
        trial[free] += step
        trial = np.minimum(np.maximum(trial, _LOWER), _UPPER)  # np.clip is slower here
        e_new, j_new, cost_new = state(trial)
        if cost_new < cost:
            converged = cost - cost_new < _CONVERGED * max(cost, 1.0)
            p, e, j, cost = trial, e_new, j_new, cost_new
            damping = max(damping / 3.0, 1e-6)
            if converged:
                break
        else:
            damping *= 10.0
            if damping > 1e6:
                break
    return p


def _refine(model: _Model, start: np.ndarray, rotating: bool, rounds: int = 3,
            hold_rotation: bool = False) -> _Fit:
    """Robust fit of the implicit relation, azimuthal orders re-assigned
    (up to ``rounds`` alternations of the fit and the assignment); with
    ``hold_rotation`` the splitting stays at its start value (its error is NaN)."""
    free = np.array([True, True, True, True, rotating and not hold_rotation])
    p = np.clip(start.copy(), _LOWER, _UPPER)
    m = model.best_m(p) if rotating else np.zeros(model.freq.size, dtype=np.int64)
    for _ in range(rounds):  # alternate the fit and the assignment of m
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
