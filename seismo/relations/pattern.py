"""The universal red-giant p-mode pattern (Mosser et al. 2011, 2013)."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import OptionError
from ._common import _out, _positive

__all__ = [
    "eps_p_from_dnu",
    "curvature_from_dnu",
    "d02_from_dnu",
    "d01_from_dnu",
    "d03_from_dnu",
    "universal_pattern",
]


def eps_p_from_dnu(dnu: Any) -> Any:
    """Offset ε of the universal red-giant pattern.

    Parameters
    ----------
    dnu : float or array_like
        Large separation, μHz.

    Returns
    -------
    float or ndarray
        ε = 0.634 + 0.546 log10 Δν (dimensionless).

    References
    ----------
    Mosser B. et al. 2011, A&A 525, L9 (coefficients from memory).
    """
    return _out(0.634 + 0.546 * np.log10(_positive("dnu", dnu)))


def curvature_from_dnu(dnu: Any) -> Any:
    """Curvature α of the radial-mode pattern.

    Parameters
    ----------
    dnu : float or array_like
        Large separation, μHz.

    Returns
    -------
    float or ndarray
        α = 0.015 Δν^-0.32 (dimensionless).

    References
    ----------
    Mosser B. et al. 2013, A&A 550, A126 (coefficients from memory).
    """
    return _out(0.015 * _positive("dnu", dnu) ** -0.32)


def d02_from_dnu(dnu: Any) -> Any:
    """Small separation δν₀₂ in units of Δν.

    Parameters
    ----------
    dnu : float or array_like
        Large separation, μHz.

    Returns
    -------
    float or ndarray
        d₀₂ = 0.121 + 0.035 log10 Δν (dimensionless).

    References
    ----------
    Mosser B. et al. 2010, 2011 (coefficients from memory).
    """
    return _out(0.121 + 0.035 * np.log10(_positive("dnu", dnu)))


def d01_from_dnu(dnu: Any) -> Any:
    """Offset d₀₁ of the nominal dipole p modes in units of Δν.

    Parameters
    ----------
    dnu : float or array_like
        Large separation, μHz.

    Returns
    -------
    float or ndarray
        d₀₁ = −0.056 − 0.002 log10 Δν (dimensionless). The nominal l=1 p mode
        of order n sits at (n + 1/2 + ε − d₀₁) Δν, i.e. slightly above the
        midpoint between radial modes.

    References
    ----------
    Mosser B. et al. 2011, A&A 525, L9 (coefficients and sign convention from
    memory).
    """
    return _out(-0.056 - 0.002 * np.log10(_positive("dnu", dnu)))


def d03_from_dnu(dnu: Any) -> Any:
    """Offset d₀₃ of the octupole modes in units of Δν.

    Parameters
    ----------
    dnu : float or array_like
        Large separation, μHz (the value is taken as constant).

    Returns
    -------
    float or ndarray
        d₀₃ ≈ 0.28 (dimensionless).

    References
    ----------
    Mosser B. et al. 2011, A&A 525, L9 (from memory, low confidence).
    """
    return _out(np.full_like(_positive("dnu", dnu), 0.28))


_D0L_DEFAULTS = (None, d01_from_dnu, d02_from_dnu, d03_from_dnu)


def universal_pattern(
    n: Any,
    l: Any,
    dnu: float,
    numax: float,
    eps_p: float | None = None,
    alpha: float | None = None,
    d0l: Any = None,
) -> Any:
    """Frequencies of p modes in the universal red-giant pattern.

    Parameters
    ----------
    n : int or array_like of int
        Radial order (of the radial mode the degree-l mode is attached to).
    l : int or array_like of int
        Angular degree, 0 to 3.
    dnu : float
        Large separation, μHz.
    numax : float
        Frequency of maximum oscillation power, μHz.
    eps_p : float, optional
        Offset ε; default `eps_p_from_dnu`.
    alpha : float, optional
        Curvature; default `curvature_from_dnu`.
    d0l : float or array_like, optional
        Offset d₀ₗ in units of Δν, broadcast with ``l``. Default: 0 for
        l=0, `d01_from_dnu`, `d02_from_dnu`, `d03_from_dnu` for l=1, 2, 3.

    Returns
    -------
    float or ndarray
        ν_{n,l} = (n + l/2 + ε − d₀ₗ + (α/2)(n − n_max)²) Δν, μHz, with
        n_max = ν_max/Δν − ε.

    Raises
    ------
    OptionError
        If ``l`` is outside 0–3 while ``d0l`` is not given, or ``dnu`` or
        ``numax`` is not positive.

    Notes
    -----
    The curvature term uses the radial order n for every degree, as in the
    published form.

    References
    ----------
    Mosser B. et al. 2011, A&A 525, L9 (form; details from memory);
    curvature α from Mosser et al. 2013, A&A 550, A126 (from memory).
    """
    dnu = float(_positive("dnu", dnu))
    numax = float(_positive("numax", numax))
    n = np.asarray(n, dtype=np.float64)
    l_arr = np.asarray(l)
    eps = eps_p_from_dnu(dnu) if eps_p is None else float(eps_p)
    alp = curvature_from_dnu(dnu) if alpha is None else float(alpha)
    if d0l is None:
        if np.any((l_arr < 0) | (l_arr > 3)):
            raise OptionError(f"l must be 0, 1, 2 or 3 when d0l is not given; got {l!r}")
        table = np.array([0.0] + [f(dnu) for f in _D0L_DEFAULTS[1:]])
        d = table[l_arr.astype(np.int64)]
    else:
        d = np.asarray(d0l, dtype=np.float64)
    n_max = numax / dnu - eps
    return _out((n + l_arr / 2.0 + eps - d + 0.5 * alp * (n - n_max) ** 2) * dnu)
