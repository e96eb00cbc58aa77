"""Stretched periods and the ζ function."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import OptionError
from ..relations.mixed import _p_phase  # same θp convention as the forward model

__all__ = ["stretched_period"]

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


def _zeta_fast(freq: np.ndarray, nu_p: np.ndarray, dnu: float, dpi1: float, q: float,
               spacing: bool = False) -> tuple[np.ndarray, ...]:
    """ζ (smooth form of `seismo.relations.zeta`) and θp, without checks (bare arrays);
    with ``spacing`` also the local p-mode spacing of `_p_phase`, μHz."""
    theta_p, local = _p_phase(freq, nu_p, dnu)
    n_g = local / (freq**2 * 1e-6 * dpi1)
    denom = q**2 * np.cos(theta_p) ** 2 + np.sin(theta_p) ** 2
    z = 1.0 / (1.0 + (q / n_g) / denom)
    return (z, theta_p, local) if spacing else (z, theta_p)


def _unsplit(freq: np.ndarray, m: np.ndarray, nu_p: np.ndarray, dnu: float, dpi1: float,
             q: float, rot: float) -> np.ndarray:
    """m = 0 frequency of a component at ``freq``: ν − m ζ δν_rot (two fixed-point steps)."""
    if rot == 0 or not np.any(m):
        return freq
    centre = freq
    for _ in range(2):
        centre = freq - m * _zeta_fast(centre, nu_p, dnu, dpi1, q)[0] * rot
    return centre
