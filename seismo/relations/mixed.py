"""Dipole mixed modes: asymptotic frequencies and the trapped fraction ζ."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import OptionError
from ._common import _UHZ_S, _out, _positive

__all__ = ["mixed_mode_frequencies", "zeta"]


def _check_mixed_inputs(nu_p: Any, dnu: float, dpi1: float, q: float) -> np.ndarray:
    nu_p = np.sort(np.atleast_1d(np.asarray(nu_p, dtype=np.float64)))
    if nu_p.ndim != 1 or nu_p.size == 0 or not np.all(np.isfinite(nu_p)):
        raise OptionError(
            f"nu_p must be a non-empty 1-D array of finite frequencies (μHz); got {nu_p!r}"
        )
    if nu_p.size > 1 and np.any(np.diff(nu_p) <= 0):
        raise OptionError("nu_p must not contain repeated frequencies")
    _positive("dnu", dnu)
    _positive("dpi1", dpi1)
    _positive("q", q)
    return nu_p


def _p_phase(freq: np.ndarray, nu_p: np.ndarray, dnu: float) -> tuple[np.ndarray, np.ndarray]:
    """Continuous p phase θp(ν) and the local spacing s(ν) it uses (μHz).

    θp = π(k + (ν − ν_{p,k}) / s_k) between the nominal p modes ν_{p,k} and
    ν_{p,k+1}, with s_k = ν_{p,k+1} − ν_{p,k}; beyond the first and last
    mode s = Δν. θp is therefore kπ at every nominal p mode, continuous and
    increasing. Bare float64 arrays.
    """
    last = nu_p.size - 1
    k = np.searchsorted(nu_p, freq, side="right") - 1
    kc = np.minimum(np.maximum(k, 0), last)  # np.clip is slow on small arrays
    inside = (k >= 0) & (k < last)
    upper = np.where(inside, nu_p[np.minimum(kc + 1, last)], nu_p[kc] + dnu)
    spacing = np.where(inside, upper - nu_p[kc], dnu)
    theta = np.pi * (kc + (freq - nu_p[kc]) / spacing)
    return theta, spacing


def _g_phase(freq: np.ndarray, dpi1: float, eps_g: float) -> np.ndarray:
    """θg = π / (ν ΔΠ1) − π ε_g with ν in μHz and ΔΠ1 in s (bare arrays)."""
    return np.pi / (freq * _UHZ_S * dpi1) - np.pi * eps_g


def _resonance_phase(
    freq: np.ndarray, nu_p: np.ndarray, dnu: float, dpi1: float, q: float, eps_g: float
) -> np.ndarray:
    """G(ν) = θp − arctan(q tan θg), unwrapped; increasing in ν.

    Mixed modes are the solutions of G(ν) = jπ for integer j, which are the
    roots of sin θp cos θg − q cos θp sin θg = 0 without its spurious zeros.
    """
    theta_p, _ = _p_phase(freq, nu_p, dnu)
    theta_g = _g_phase(freq, dpi1, eps_g)
    m = np.round(theta_g / np.pi)
    r = theta_g - np.pi * m  # in [-π/2, π/2], so cos r >= 0
    phi = np.pi * m + np.arctan2(q * np.sin(r), np.cos(r))
    return theta_p - phi


def mixed_mode_frequencies(
    nu_p_l1: Any,
    dnu: float,
    dpi1: float,
    q: float,
    eps_g: float,
    freq_min: float,
    freq_max: float,
    *,
    tol: float = 1e-9,
) -> np.ndarray:
    """Dipole mixed-mode frequencies from the asymptotic resonance condition.

    Parameters
    ----------
    nu_p_l1 : array_like, shape (n_p,)
        Nominal (pure) l=1 p-mode frequencies, μHz, e.g. from
        `universal_pattern` with ``l=1``. Give at least the modes around
        ``[freq_min, freq_max]``.
    dnu : float
        Large separation, μHz; used beyond the first and last nominal mode.
    dpi1 : float
        Asymptotic period spacing of the dipole g modes ΔΠ1, s.
    q : float
        Coupling factor, > 0 (dimensionless).
    eps_g : float
        Phase offset of the g modes (dimensionless); see Notes.
    freq_min, freq_max : float
        Search interval, μHz, 0 < ``freq_min`` < ``freq_max``.
    tol : float
        Absolute accuracy of the roots, μHz.

    Returns
    -------
    ndarray, shape (n_modes,)
        Increasing mixed-mode frequencies in ``[freq_min, freq_max]``, μHz.

    Raises
    ------
    OptionError
        If ``dnu``, ``dpi1``, ``q`` or ``tol`` is not positive, the interval
        is empty or not positive, or ``nu_p_l1`` is empty.

    Notes
    -----
    The modes solve tan θp = q tan θg, written without poles as
    sin θp cos θg − q cos θp sin θg = 0, with

    - θp = π(ν − ν_p)/Δν, ν_p the nearest nominal l=1 p mode. To keep the
      phase continuous when the supplied modes are not evenly spaced (pattern
      curvature), Δν is replaced by the local spacing of the two nominal
      modes around ν; for an evenly spaced ``nu_p_l1`` this is exactly
      π(ν − ν_p)/Δν.
    - θg = π/(ν ΔΠ1) − π ε_g with ν in Hz and ΔΠ1 in s. θg decreases with
      frequency. In the limit q → 0 the g-dominated modes tend to
      cos θg = 0, i.e. the pure g modes sit at periods
      1/ν = (n_g + 1/2 + ε_g) ΔΠ1 for integer n_g (the "+1/2" convention,
      with ε_g ≈ 0.28 on the RGB, Mosser et al. 2018, from memory).

    The function G(ν) = θp − arctan(q tan θg) (arctan unwrapped) increases
    strictly with ν and the modes are exactly the points where G = jπ. Each
    root is therefore bracketed on a coarse grid by a sorted search and
    refined by bisection, all roots at once; the pole-free form's spurious
    zeros (where tan θp and tan θg are both infinite) never appear.

    References
    ----------
    Shibahashi H. 1979, PASJ 31, 87; Mosser B. et al. 2012, A&A 540, A143;
    Mosser B. et al. 2015, A&A 584, A50 (conventions from memory).
    """
    nu_p = _check_mixed_inputs(nu_p_l1, dnu, dpi1, q)
    _positive("tol", tol)
    if not (np.isfinite(freq_min) and np.isfinite(freq_max) and 0 < freq_min < freq_max):
        raise OptionError(
            "freq_min and freq_max must satisfy 0 < freq_min < freq_max (μHz); "
            f"got {freq_min!r} and {freq_max!r}"
        )
    args = (nu_p, float(dnu), float(dpi1), float(q), float(eps_g))
    ends = _resonance_phase(np.array([freq_min, freq_max], dtype=np.float64), *args)
    j = np.arange(np.ceil(ends[0] / np.pi), np.floor(ends[1] / np.pi) + 1.0)
    if j.size == 0:
        return np.empty(0)
    targets = j * np.pi
    # A grid uniform in period: mode density is roughly uniform in 1/ν.
    n_grid = int(min(max(64, 4 * j.size), 200_000))
    grid = 1.0 / np.linspace(1.0 / freq_max, 1.0 / freq_min, n_grid)[::-1]
    grid[0], grid[-1] = freq_min, freq_max
    phase = _resonance_phase(grid, *args)
    upper = np.clip(np.searchsorted(phase, targets, side="left"), 1, n_grid - 1)
    lo, hi = grid[upper - 1], grid[upper]
    n_iter = int(np.ceil(np.log2(max(np.max(hi - lo), tol) / tol))) + 1
    for _ in range(n_iter):
        mid = 0.5 * (lo + hi)
        above = _resonance_phase(mid, *args) >= targets
        hi = np.where(above, mid, hi)
        lo = np.where(above, lo, mid)
    return 0.5 * (lo + hi)


def zeta(
    freq: Any,
    nu_p: Any,
    dnu: float,
    dpi1: float,
    q: float,
    eps_g: float | None = None,
) -> Any:
    """Fraction ζ = I_core / I of the mode inertia in the g cavity.

    Parameters
    ----------
    freq : float or array_like
        Frequency, μHz (usually the mixed-mode frequencies).
    nu_p : array_like, shape (n_p,)
        Nominal l=1 p-mode frequencies, μHz (as for `mixed_mode_frequencies`).
    dnu : float
        Large separation, μHz.
    dpi1 : float
        Dipole period spacing ΔΠ1, s.
    q : float
        Coupling factor, > 0.
    eps_g : float, optional
        g-mode phase offset. If given, the equivalent form with θg is used,
        which equals the default only at the mixed-mode frequencies and
        oscillates between them; leave it out for a smooth ζ(ν).

    Returns
    -------
    float or ndarray
        ζ in (0, 1) (dimensionless).

    Notes
    -----
    Default form: ζ = [1 + (q/𝒩) / (q² cos²θp + sin²θp)]⁻¹ with
    𝒩 = Δν/(ν² ΔΠ1), the number of g modes per Δν (ν and Δν in Hz, ΔΠ1
    in s; with ν, Δν in μHz, 𝒩 = 10⁶ Δν/(ν² ΔΠ1)). The form with θg is
    ζ = [1 + cos²θg / (q 𝒩 cos²θp)]⁻¹. θp and the local Δν follow
    `mixed_mode_frequencies`. ζ_min = [1 + 1/(q𝒩)]⁻¹ at θp = 0 and
    ζ_max = [1 + q/𝒩]⁻¹ at θp = π/2. The period spacing of consecutive
    mixed modes is ≈ ζ ΔΠ1.

    References
    ----------
    Mosser B. et al. 2015, A&A 584, A50; Deheuvels S. et al. 2015 (from memory).
    """
    nu_p = _check_mixed_inputs(nu_p, dnu, dpi1, q)
    f = _positive("freq", freq)
    theta_p, spacing = _p_phase(f, nu_p, float(dnu))
    n_g = spacing / (f**2 * _UHZ_S * dpi1)
    if eps_g is None:
        denom = q**2 * np.cos(theta_p) ** 2 + np.sin(theta_p) ** 2
        return _out(1.0 / (1.0 + (q / n_g) / denom))
    theta_g = _g_phase(f, float(dpi1), float(eps_g))
    return _out(1.0 / (1.0 + np.cos(theta_g) ** 2 / (q * n_g * np.cos(theta_p) ** 2)))
