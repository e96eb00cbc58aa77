"""Dipole mixed modes predicted from a model's radial modes, for an observed échelle.

The nominal dipole p modes sit at ν_{n,0} + Δν(½ − d01); the mixed modes
follow from the asymptotic relation tan θp = q tan θg with the model's ΔΠ1
(Shibahashi 1979; Mosser et al. 2012, A&A 540, A143), computed by
:func:`seismo.relations.mixed_mode_frequencies`.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import OptionError
from ..relations import d01_from_dnu, mixed_mode_frequencies, zeta

__all__ = ["PredictedDipoleModes", "predicted_dipole_modes"]

_HZ_TO_UHZ = 1e6



@dataclass(frozen=True)
class PredictedDipoleModes:
    """Dipole mixed modes predicted from a model's radial modes.

    Attributes
    ----------
    frequency : numpy.ndarray, shape (n_modes,)
        Mixed-mode frequencies, μHz, increasing.
    zeta : numpy.ndarray, shape (n_modes,)
        Trapped fraction ζ = I_core/I of each mode (dimensionless).
    nominal_p : numpy.ndarray, shape (n_radial,)
        The nominal pure l=1 p modes used, μHz.
    dnu, dpi1, q, eps_g, d01 : float
        The inputs (μHz, s, dimensionless ×3; d01 in units of Δν).
    """

    frequency: np.ndarray
    zeta: np.ndarray
    nominal_p: np.ndarray
    dnu: float
    dpi1: float
    q: float
    eps_g: float
    d01: float

    @property
    def period(self) -> np.ndarray:
        """Mode periods 1/ν, s."""
        return _HZ_TO_UHZ / self.frequency


def predicted_dipole_modes(
    radial_frequencies: Any,
    dnu: float,
    dpi1: float,
    q: float,
    *,
    eps_g: float = 0.0,
    d01: float | None = None,
    freq_min: float | None = None,
    freq_max: float | None = None,
) -> PredictedDipoleModes:
    """Dipole mixed-mode spectrum predicted from a model's radial modes.

    Parameters
    ----------
    radial_frequencies : array_like, shape (n_radial,)
        Radial-mode frequencies of the model, μHz (e.g. from the oscillation
        solver).
    dnu : float
        Large separation, μHz.
    dpi1 : float
        Dipole period spacing ΔΠ1, s (e.g. `ModelObservables.dpi1`).
    q : float
        Coupling factor, > 0 (e.g. `ModelObservables.q_weak`).
    eps_g : float
        g-mode phase offset (dimensionless, convention of
        `seismo.relations.mixed_mode_frequencies`; default 0).
    d01 : float, optional
        Offset d₀₁ of the nominal dipole p modes in units of Δν; default
        `seismo.relations.d01_from_dnu` (Mosser et al. 2011, from memory).
    freq_min, freq_max : float, optional
        Frequency range, μHz; default from half a Δν below the lowest radial
        mode to one Δν above the highest (so its dipole p mode is inside).

    Returns
    -------
    PredictedDipoleModes
        Frequencies and ζ of the mixed modes, and the nominal p modes.

    Raises
    ------
    OptionError
        If the radial frequencies are empty or not finite, or dnu, dpi1, q
        are not positive, or the range is empty.

    Notes
    -----
    The nominal l=1 p modes are ν_{n,1} = ν_{n,0} + Δν/2 − d₀₁Δν, as in the
    universal pattern; the mixed modes solve tan θp = q tan θg
    (`seismo.relations.mixed_mode_frequencies`) and ζ is the smooth form of
    `seismo.relations.zeta`. Consecutive period spacings are ≈ ζ ΔΠ1.

    References
    ----------
    Mosser B. et al. 2011, A&A 525, L9; Mosser B. et al. 2012, A&A 540,
    A143; Mosser B. et al. 2015, A&A 584, A50 (from memory).
    """
    radial = np.sort(np.atleast_1d(np.asarray(radial_frequencies, dtype=float)))
    if radial.ndim != 1 or radial.size == 0 or not np.all(np.isfinite(radial)):
        raise OptionError("radial_frequencies must be a non-empty 1-D array of finite μHz values")
    for name, value in (("dnu", dnu), ("dpi1", dpi1), ("q", q)):
        if not (np.isfinite(value) and value > 0):
            raise OptionError(f"{name} must be finite and > 0, got {value!r}")
    d01_value = float(d01_from_dnu(dnu)) if d01 is None else float(d01)
    nominal = radial + dnu * (0.5 - d01_value)
    lo = float(radial[0] - 0.5 * dnu) if freq_min is None else float(freq_min)
    hi = float(radial[-1] + dnu) if freq_max is None else float(freq_max)
    lo = max(lo, 1e-3 * dnu)
    freq = mixed_mode_frequencies(nominal, dnu, dpi1, q, eps_g, lo, hi)
    trapped = np.asarray(zeta(freq, nominal, dnu, dpi1, q), dtype=float) if freq.size else \
        np.empty(0)
    return PredictedDipoleModes(
        frequency=freq, zeta=np.atleast_1d(trapped), nominal_p=nominal, dnu=float(dnu),
        dpi1=float(dpi1), q=float(q), eps_g=float(eps_g), d01=d01_value,
    )
