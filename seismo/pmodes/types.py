"""Result types and flags of the radial-pattern stage."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy import stats

from ..results import Measurement

__all__ = ["DnuEstimate", "EchelleImage", "FLAGS", "PModeList", "RadialPattern"]

FLAGS: dict[str, str] = {
    "numax_near_nyquist": "the analysis window is cut by the top of the spectrum (Nyquist)",
    "dnu_low_resolution": "Δν spans fewer than 50 frequency bins: l=0 and l=2 barely separate",
    "dnu_not_found": "no significant comb of modes near the Δν–ν_max relation",
    "dnu_alias_suspect": "the autocorrelation at 2Δν or Δν/2 is higher than at Δν",
    "dnu_from_pattern_only": "fewer than 3 radial modes detected: Δν, ε from the pattern fit",
    "eps_ambiguous": "the l=0/l=2 pair fits the dipole ridge almost as well (ε ± 0.5)",
    "alpha_fixed_at_prior": "fewer than 5 radial modes or low resolution: curvature fixed at "
                            "the Mosser et al. 2013 relation",
    "d02_not_measured": "fewer than 2 l=2 modes detected",
    "dnu_pattern_disagrees": "the pattern fit and the autocorrelation disagree by more than "
                             "2σ: Δν from the autocorrelation with an error covering both, "
                             "ε not reported",
}

# Half-width of the analysis window in Gaussian σ of the envelope.
_WINDOW_SIGMAS = 2.5
# Typical radial-mode linewidth Γ0, μHz (Vrard et al. 2018; value from memory).
_TYPICAL_LINEWIDTH = 0.12
# Fractional scatter of the Δν–ν_max relation (Stello et al. 2009) and the
# half-width of the search in units of it; the range stays inside a factor 2,
# so Δν and Δν/2 cannot both lie in it.
_RELATION_SCATTER = 0.15
_SEARCH_SIGMAS = 2.0
# Visibility of l=2 relative to l=0 (Mosser et al. 2012, from memory).
_VIS2 = 0.64
_FALSE_ALARM = 0.01
_LOW_RESOLUTION_RATIO = 50.0
_MIN_RADIAL_FOR_FIT = 3
_MIN_RADIAL_FOR_ALPHA = 5
_ONE_SIGMA = stats.norm.cdf(1.0)


@dataclass(frozen=True, eq=False)
class DnuEstimate:
    """Coarse large separation from `large_separation`.

    Attributes
    ----------
    dnu : Measurement or None
        Δν, μHz; ``None`` when no significant comb was found.
    significance : float or None
        Height of the autocorrelation peak in units of its standard deviation
        under the noise-only hypothesis.
    false_alarm : float or None
        Probability that noise alone gives a peak this high anywhere in the
        search range.
    predicted : float
        Δν from the Δν–ν_max relation, μHz.
    search_range : tuple of float
        Lags searched, μHz.
    window : tuple of float
        Frequencies used, μHz.
    lags, acf : ndarray, shape (n_lags,)
        Lag (μHz) and smoothed autocorrelation of the SNR spectrum, in units
        of the noise variance (noise level from the median SNR).
    flags : tuple of str
        Keys of `FLAGS`.
    inputs : dict
        ``numax``, ``numax_err``, ``resolution``, ``nyquist``.
    """

    dnu: Measurement | None
    significance: float | None
    false_alarm: float | None
    predicted: float
    search_range: tuple[float, float]
    window: tuple[float, float]
    lags: np.ndarray = field(repr=False)
    acf: np.ndarray = field(repr=False)
    flags: tuple[str, ...] = ()
    inputs: dict[str, Any] = field(default_factory=dict)

    def __repr__(self) -> str:
        value = "None" if self.dnu is None else f"{self.dnu.value:.4g}±{self.dnu.error:.2g}"
        sig = "None" if self.significance is None else f"{self.significance:.3g}"
        return f"<DnuEstimate dnu={value} μHz significance={sig} flags={list(self.flags)}>"


@dataclass(frozen=True, eq=False)
class PModeList:
    """Individual radial and quadrupole modes, aligned arrays of shape (n_modes,).

    Attributes
    ----------
    l : ndarray of int
        Degree, 0 or 2.
    n : ndarray of int
        Radial order in the convention of the universal pattern: a radial mode
        of order n sits at ≈ (n + ε)Δν, and the l=2 mode of order n just below
        the radial mode of order n + 1.
    frequency, error : ndarray
        Frequency and its 1σ error, μHz.
    snr : ndarray
        Peak of the smoothed signal-to-noise spectrum (1 = noise level).
    """

    l: np.ndarray
    n: np.ndarray
    frequency: np.ndarray
    error: np.ndarray
    snr: np.ndarray

    def __len__(self) -> int:
        return int(self.l.size)

    def degree(self, l: int) -> PModeList:
        """Return the modes of degree ``l`` only."""
        keep = self.l == l
        return PModeList(self.l[keep], self.n[keep], self.frequency[keep], self.error[keep],
                         self.snr[keep])

    def __repr__(self) -> str:
        return (f"<PModeList n_l0={int(np.sum(self.l == 0))} "
                f"n_l2={int(np.sum(self.l == 2))}>")


@dataclass(frozen=True, eq=False)
class RadialPattern:
    """Result of `fit_radial_pattern`.

    Attributes
    ----------
    dnu : Measurement or None
        Large separation, μHz.
    eps_p : Measurement or None
        Offset ε of the radial modes (dimensionless), in [ε_rel − 0.5,
        ε_rel + 0.5) around the Mosser et al. 2011 relation (a labelling of
        the orders only; the value is measured).
    alpha : Measurement or None
        Curvature α (dimensionless); ``None`` when fixed at the prior.
    d02 : Measurement or None
        δν02/Δν (dimensionless).
    modes : PModeList
        Detected l=0 and l=2 modes.
    flags : tuple of str
        Keys of `FLAGS`.
    inputs : dict
        ``numax``, ``dnu_guess``, ``window`` (μHz), ``width`` (profile FWHM,
        μHz), ``resolution``, ``nyquist``, ``alpha_prior``, ``d02_prior``,
        ``reduced_chi2`` of the radial fit and ``pattern_dnu``, ``pattern_eps``
        of the template fit.
    """

    dnu: Measurement | None
    eps_p: Measurement | None
    alpha: Measurement | None
    d02: Measurement | None
    modes: PModeList
    flags: tuple[str, ...] = ()
    inputs: dict[str, Any] = field(default_factory=dict)

    def as_dict(self) -> dict[str, Any]:
        """JSON-able summary: α, d02, the mode list (l, n, frequency, error, SNR)."""

        def meas(m: Measurement | None) -> dict[str, Any] | None:
            return None if m is None else m.to_dict()

        modes = [
            {"l": int(l), "n": int(n), "frequency": float(f), "error": float(e),
             "snr": float(r)}
            for l, n, f, e, r in zip(self.modes.l, self.modes.n, self.modes.frequency,
                                     self.modes.error, self.modes.snr, strict=True)
        ]
        return {"alpha": meas(self.alpha), "d02": meas(self.d02), "modes": modes}

    def __repr__(self) -> str:
        def show(m: Measurement | None) -> str:
            return "None" if m is None else f"{m.value:.5g}±{m.error:.2g}"

        return (f"<RadialPattern dnu={show(self.dnu)} eps_p={show(self.eps_p)} "
                f"alpha={show(self.alpha)} d02={show(self.d02)} n_modes={len(self.modes)} "
                f"flags={list(self.flags)}>")


@dataclass(frozen=True, eq=False)
class EchelleImage:
    """Smoothed SNR spectrum folded modulo Δν.

    Attributes
    ----------
    x : ndarray, shape (n_x,)
        (ν − offset) mod Δν at the column centres, μHz, from 0 to Δν.
    y : ndarray, shape (n_orders,)
        Frequency at the start of each order (offset + kΔν), μHz.
    image : ndarray, shape (n_orders, n_x)
        Smoothed SNR at ν = y[i] + x[j] (NaN outside the spectrum).
    dnu, offset : float
        Folding period and offset, μHz.
    """

    x: np.ndarray
    y: np.ndarray
    image: np.ndarray
    dnu: float
    offset: float

    def __repr__(self) -> str:
        return (f"<EchelleImage dnu={self.dnu:.4g} μHz offset={self.offset:.4g} μHz "
                f"shape={self.image.shape}>")
