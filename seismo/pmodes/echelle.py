"""Échelle-diagram data: the spectrum folded modulo Δν."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import OptionError
from ..spectrum import PowerSpectrum
from ._common import (
    _finite_positive,
    _profile_width,
    _smooth,
    _validate,
    _window,
)
from .types import (
    EchelleImage,
)

__all__ = ["echelle_coordinates", "echelle_image"]

# ---------------------------------------------------------------- échelle

def echelle_coordinates(freq: Any, dnu: float, *, offset: float = 0.0
                        ) -> tuple[np.ndarray, np.ndarray]:
    """Échelle coordinates of frequencies.

    Parameters
    ----------
    freq : array_like
        Frequencies, μHz (any shape).
    dnu : float
        Folding period (large separation), μHz.
    offset : float
        Frequency subtracted before folding, μHz.

    Returns
    -------
    x : ndarray, same shape as ``freq``
        (ν − offset) mod Δν, μHz, in [0, Δν).
    y : ndarray, same shape as ``freq``
        Frequency at the start of the order holding ν, offset + kΔν, μHz
        (the ``y`` of `echelle_image`).

    Raises
    ------
    OptionError
        If ``dnu`` is not positive or ``offset`` or ``freq`` is not finite.
    """
    if not _finite_positive(dnu):
        raise OptionError(f"dnu must be a finite number > 0 μHz; got {dnu!r}")
    if not np.isfinite(offset):
        raise OptionError(f"offset must be finite (μHz); got {offset!r}")
    nu = np.asarray(freq, dtype=np.float64)
    if not np.all(np.isfinite(nu)):
        raise OptionError("freq must be finite (μHz)")
    x = np.mod(nu - offset, dnu)
    return x, nu - x


def echelle_image(
    ps: PowerSpectrum,
    dnu: float,
    numax: float,
    background: Any,
    *,
    n_orders: int | None = None,
    offset: float = 0.0,
    smooth: float | None = None,
) -> EchelleImage:
    """Smoothed signal-to-noise spectrum folded modulo Δν (data, no plotting).

    Parameters
    ----------
    ps : PowerSpectrum
        Power density spectrum (μHz, ppm²/μHz).
    dnu : float
        Folding period, μHz.
    numax : float
        Frequency of maximum oscillation power, μHz (centre of the orders).
    background : float or array_like, shape (n_freq,)
        Background power density on ``ps.freq``, ppm²/μHz.
    n_orders : int, optional
        Number of orders (rows), centred on the order holding ν_max; default
        those covering ν_max ± 2.5 σ_env.
    offset : float
        Frequency subtracted before folding, μHz (e.g. ε Δν − 0.1 Δν puts the
        radial ridge near 0.1 Δν).
    smooth : float, optional
        FWHM of the Gaussian smoothing, μHz; default max(1/T, 0.12 μHz,
        2 δν). ``0`` leaves the spectrum unsmoothed.

    Returns
    -------
    EchelleImage
        ``image[i, j]`` is the SNR at ``y[i] + x[j]``; columns are one grid
        step wide (``ps.df``), NaN outside the spectrum.

    Raises
    ------
    TypeError
        If ``ps`` is not a `PowerSpectrum`.
    OptionError
        For a non-positive ``dnu``, ``dnu`` not below ``numax``, ``n_orders
        < 1``, a negative ``smooth`` or a bad ``numax`` or ``background``.
    """
    numax, bg = _validate(ps, numax, background)
    if not _finite_positive(dnu) or dnu >= numax:
        raise OptionError(f"dnu must be a finite number > 0 and below numax; got {dnu!r}")
    if n_orders is not None and (not isinstance(n_orders, (int, np.integer)) or n_orders < 1):
        raise OptionError(f"n_orders must be an integer >= 1 or None; got {n_orders!r}")
    if smooth is not None and not (_finite_positive(smooth) or smooth == 0):
        raise OptionError(f"smooth must be a FWHM >= 0 μHz or None; got {smooth!r}")
    if not np.isfinite(offset):
        raise OptionError(f"offset must be finite (μHz); got {offset!r}")
    dnu = float(dnu)
    fwhm = _profile_width(ps) if smooth is None else float(smooth)
    snr = ps.density / bg
    if fwhm > 0:
        snr = _smooth(snr, fwhm, ps.df)
    lo, hi, _, _ = _window(ps, numax)
    centre = np.floor((numax - offset) / dnu)
    if n_orders is None:
        first, last = np.floor((lo - offset) / dnu), np.floor((hi - offset) / dnu)
    else:
        first = centre - (n_orders - 1) // 2
        last = first + n_orders - 1
    y = offset + np.arange(first, last + 1) * dnu
    x = np.arange(0.0, dnu, ps.df)
    nu = y[:, None] + x[None, :]
    image = np.interp(nu, ps.freq, snr, left=np.nan, right=np.nan)
    return EchelleImage(x, y, image, dnu, float(offset))
