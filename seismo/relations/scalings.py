"""Global scalings: Δν(ν_max), envelope width, granulation, integration attenuation."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import OptionError
from ._common import _out, _positive

__all__ = [
    "STELLO_2009",
    "FWHM_TO_SIGMA",
    "dnu_from_numax",
    "envelope_fwhm",
    "granulation_parameters",
    "harvey_norm",
    "granulation_psd",
    "sinc_attenuation",
]

#: (α, β) of Δν = α ν_max^β, Stello et al. 2009 (β seen in the abstract, α from memory).
STELLO_2009 = (0.263, 0.772)

#: Gaussian σ of an envelope per unit FWHM, 1 / (2 √(2 ln 2)).
FWHM_TO_SIGMA = 1.0 / (2.0 * np.sqrt(2.0 * np.log(2.0)))


def dnu_from_numax(numax: Any, alpha: float = STELLO_2009[0], beta: float = STELLO_2009[1]) -> Any:
    """Large separation predicted from ν_max by a power law.

    Parameters
    ----------
    numax : float or array_like
        Frequency of maximum oscillation power, μHz.
    alpha : float
        Coefficient of the power law, μHz (default 0.263, Stello et al. 2009,
        from memory).
    beta : float
        Exponent (default 0.772, Stello et al. 2009).

    Returns
    -------
    float or ndarray
        Δν = α ν_max^β, μHz.

    Raises
    ------
    OptionError
        If ``numax`` is not finite and positive.

    References
    ----------
    Stello D. et al. 2009, MNRAS 400, L80.
    """
    return _out(alpha * _positive("numax", numax) ** beta)


def envelope_fwhm(numax: Any) -> Any:
    """Full width at half maximum of the Gaussian oscillation envelope.

    Parameters
    ----------
    numax : float or array_like
        Frequency of maximum oscillation power, μHz.

    Returns
    -------
    float or ndarray
        δν_env = 0.66 ν_max^0.88, μHz. Multiply by `FWHM_TO_SIGMA` for the
        Gaussian σ.

    References
    ----------
    Mosser B. et al. 2012, A&A 537, A30 (formula from memory).
    """
    return _out(0.66 * _positive("numax", numax) ** 0.88)


def granulation_parameters(numax: Any) -> tuple[Any, Any, Any]:
    """Characteristic frequencies and amplitude of the two granulation components.

    Parameters
    ----------
    numax : float or array_like
        Frequency of maximum oscillation power, μHz.

    Returns
    -------
    b1 : float or ndarray
        Characteristic frequency of the low-frequency component, 0.317 ν_max^0.970, μHz.
    b2 : float or ndarray
        Characteristic frequency of the high-frequency component, 0.948 ν_max^0.992, μHz.
    a : float or ndarray
        rms amplitude of each component, 3382 ν_max^-0.609, ppm.

    Notes
    -----
    Both components use exponent 4 in `granulation_psd`.

    References
    ----------
    Kallinger T. et al. 2014, A&A 570, A41 (two components confirmed in the
    abstract; the coefficients are from memory).
    """
    nm = _positive("numax", numax)
    return _out(0.317 * nm**0.970), _out(0.948 * nm**0.992), _out(3382.0 * nm**-0.609)


def harvey_norm(exponent: Any) -> Any:
    """Normalisation ξ that makes a Harvey-like profile integrate to a².

    Parameters
    ----------
    exponent : float or array_like
        Exponent c of the profile, > 1 (dimensionless).

    Returns
    -------
    float or ndarray
        ξ = (c/π) sin(π/c): 2√2/π for c = 4, 2/π for c = 2.

    Notes
    -----
    ∫₀^∞ dν / (1 + (ν/b)^c) = b (π/c) / sin(π/c), hence ξ.

    References
    ----------
    Harvey J. 1985 (c = 2); Kallinger T. et al. 2014, A&A 570, A41 (c = 4).
    """
    c = np.asarray(exponent, dtype=np.float64)
    if not np.all(np.isfinite(c)) or np.any(c <= 1):
        raise OptionError(f"exponent must be > 1 for a finite integral; got {exponent!r}")
    return _out(c / np.pi * np.sin(np.pi / c))


def granulation_psd(freq: Any, a: Any, b: Any, exponent: Any = 4) -> Any:
    """Power density of one granulation component.

    Parameters
    ----------
    freq : float or array_like
        Frequency, μHz.
    a : float or array_like
        rms amplitude of the component, ppm.
    b : float or array_like
        Characteristic frequency, μHz.
    exponent : float
        Exponent c of the profile (default 4).

    Returns
    -------
    float or ndarray
        P(ν) = ξ a²/b / (1 + (ν/b)^c), ppm²/μHz, single-sided, so that
        ∫₀^∞ P dν = a².

    References
    ----------
    Kallinger T. et al. 2014, A&A 570, A41.
    """
    b = _positive("b", b)
    f = np.asarray(freq, dtype=np.float64)
    a = np.asarray(a, dtype=np.float64)
    return _out(harvey_norm(exponent) * a**2 / b / (1.0 + (f / b) ** exponent))


def sinc_attenuation(freq: Any, nyquist: float) -> Any:
    """Power attenuation caused by integrating the flux over each cadence.

    Parameters
    ----------
    freq : float or array_like
        Frequency, μHz.
    nyquist : float
        Nyquist frequency 1/(2 Δt) of the cadence, μHz.

    Returns
    -------
    float or ndarray
        η² with η = sinc(πν / (2 ν_Nyq)) = sin(x)/x (dimensionless). Amplitudes
        are attenuated by η, power densities by η². At ν_Nyq, η² = 4/π².

    References
    ----------
    Chaplin W. J. et al. 2011, ApJ 732, 54; Kallinger et al. 2014 (from
    memory). The form itself follows from a boxcar integration over Δt.
    """
    nyq = _positive("nyquist", nyquist)
    # np.sinc(x) = sin(πx)/(πx), so πν/(2ν_Nyq) corresponds to x = ν/(2ν_Nyq).
    eta = np.sinc(np.asarray(freq, dtype=np.float64) / (2.0 * nyq))
    return _out(eta**2)
