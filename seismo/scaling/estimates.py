"""Monte Carlo scaling-relation estimates for one star.

Part of `seismo.scaling`; the public names are re-exported there.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import OptionError
from ..results import Measurement
from .formulas import (
    _density,
    _error,
    _logg,
    _luminosity,
    _mass,
    _prepare,
    _radius,
    _ratios,
    _scalar,
    reference_systematics,
)
from .references import (
    ASSUMED_GIANT_TEFF,
    CORRECTIONS,
    DEFAULT_REFERENCE,
    SolarReference,
    _is_real,
)

__all__ = ["ScalingEstimates", "scaling_estimates"]

# Largest fraction of draws with a non-positive input before the estimate is given up.
_MAX_DROPPED = 0.1

_QUANTITIES = ("mass", "radius", "logg", "density", "luminosity")

# Percentiles of a normal distribution at -1σ and +1σ (15.87 and 84.13).
_LOW = 50.0 * math.erfc(1.0 / math.sqrt(2.0))
_HIGH = 100.0 - _LOW


# ---------------------------------------------------------------------------
# Monte Carlo estimates for one star
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class ScalingEstimates:
    """Scaling-relation estimates for one star.

    Attributes
    ----------
    mass : Measurement or None
        Mass, M☉ (None without T_eff).
    radius : Measurement or None
        Radius, R☉ (None without T_eff).
    logg : Measurement or None
        Surface gravity, dex (cgs).
    density : Measurement or None
        Mean density, g cm⁻³.
    luminosity : Measurement or None
        Luminosity, L☉ (None without T_eff).
    flags : list of str
        ``"logg_teff_assumed"``, ``"mass_radius_need_teff"``,
        ``"eclipsing_binary_correction_approximate"``,
        ``"nonpositive_draws_dropped"``, ``"input_errors_too_large"``.
    details : dict
        ``reference`` (key and values), ``statistical_error`` and
        ``systematic_error`` (per quantity, in its unit), ``correction_error``,
        ``percentiles`` (16, 50, 84 of the draws), ``n_draws_used``, and the
        options used. JSON-compatible.
    """

    mass: Measurement | None
    radius: Measurement | None
    logg: Measurement | None
    density: Measurement | None
    luminosity: Measurement | None
    flags: list[str] = field(default_factory=list)
    details: dict[str, Any] = field(default_factory=dict)

    def __repr__(self) -> str:
        parts = [f"{name}={getattr(self, name)}" for name in _QUANTITIES]
        return f"ScalingEstimates({', '.join(parts)}, flags={self.flags})"


def _draw_inputs(
    rng: np.random.Generator,
    n_draws: int,
    numax: float,
    numax_err: float,
    dnu: float,
    dnu_err: float,
    correlation: float,
    teff: float,
    teff_err: float,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Draws of (ν_max, Δν) from a correlated bivariate normal and independent T_eff.

    Returns three arrays of shape (n_draws,).
    """
    z = rng.standard_normal((3, n_draws))
    # Cholesky factor of [[1, ρ], [ρ, 1]].
    z_dnu = correlation * z[0] + math.sqrt(1.0 - correlation**2) * z[1]
    return numax + numax_err * z[0], dnu + dnu_err * z_dnu, teff + teff_err * z[2]


def scaling_estimates(
    numax: float,
    numax_err: float,
    dnu: float,
    dnu_err: float,
    teff: float | None = None,
    teff_err: float | None = None,
    *,
    reference: str | SolarReference = DEFAULT_REFERENCE,
    correlation: float = 0.0,
    f_dnu: float = 1.0,
    f_numax: float = 1.0,
    correction: str = "none",
    systematic: bool = True,
    n_draws: int = 4000,
    rng: np.random.Generator | int | None = None,
) -> ScalingEstimates:
    """Mass, radius, log g, density and luminosity of one star with errors.

    Parameters
    ----------
    numax, numax_err : float
        Frequency of maximum oscillation power and its 1σ error, μHz.
    dnu, dnu_err : float
        Large frequency separation and its 1σ error, μHz.
    teff, teff_err : float, optional
        Effective temperature and its 1σ error, K. Give both or neither.
        Without them, mass, radius and luminosity are ``None`` and log g
        uses `ASSUMED_GIANT_TEFF` (4800 ± 400 K).
    reference : str or SolarReference
        Key of `SOLAR_REFERENCES` (default ``"huber2011"``) or a set of one's own.
    correlation : float
        Correlation coefficient of the ν_max and Δν errors, in (−1, 1).
    f_dnu : float
        Correction factor of the Δν relation, e.g. model-based (Sharma et
        al. 2016); y = Δν/(f_Δν Δν☉). Its uncertainty is not propagated.
    f_numax : float
        Correction factor of the ν_max relation (default 1).
    correction : str
        ``"none"`` or ``"eclipsing-binary"`` (see `CORRECTIONS`): divide M by
        1.15 and R by 1.05, the mean offsets of Gaulme et al. 2016. The
        correction is approximate; its uncertainty is added to the error and
        the flag ``"eclipsing_binary_correction_approximate"`` is set.
    systematic : bool
        Add in quadrature the spread from the choice of solar reference set
        (`reference_systematics`); default True, so that a scaling mass is
        never presented as more accurate than the calibration allows.
    n_draws : int
        Number of Monte Carlo draws, >= 100.
    rng : numpy.random.Generator, int or None
        Random generator or seed for the draws.

    Returns
    -------
    ScalingEstimates
        Each value is the relation at the central inputs (after the
        correction); each error is the half-width of the 16–84 percentile
        range of the draws, combined in quadrature with the systematic and
        correction errors when they apply.

    Raises
    ------
    OptionError
        If ``numax``, ``dnu`` or ``teff`` is not finite and positive, an error
        is negative or not finite, only one of ``teff`` and ``teff_err`` is
        given, ``reference`` or ``correction`` is unknown (the message lists
        the allowed ones), ``correlation`` is outside (−1, 1), a factor is not
        positive, or ``n_draws`` < 100.

    Notes
    -----
    Draws with a non-positive ν_max, Δν or T_eff (only possible for errors of
    tens of per cent) are dropped and flagged ``"nonpositive_draws_dropped"``;
    if more than 10 % are dropped every quantity is ``None`` and the flag
    ``"input_errors_too_large"`` is added.
    To first order the fractional errors are σM/M = √(9σx² + 16σy² +
    (9/4)σt² − 24ρσxσy) and σR/R = √(σx² + 4σy² + σt²/4 − 4ρσxσy), with σx,
    σy, σt the fractional input errors and ρ the correlation.

    References
    ----------
    Brown T. M. et al. 1991, ApJ 368, 599; Kjeldsen H. & Bedding T. R. 1995,
    A&A 293, 87; Gaulme P. et al. 2016, ApJ 832, 121 (eclipsing-binary
    offsets); Sharma S. et al. 2016, ApJ 822, 15 (f_Δν).

    Examples
    --------
    >>> est = scaling_estimates(30.0, 0.6, 4.0, 0.02, 4750.0, 80.0, rng=1)
    >>> round(est.mass.value, 4)
    0.8879
    """
    numax = _scalar("numax", numax)
    dnu = _scalar("dnu", dnu)
    numax_err = _error("numax_err", numax_err)
    dnu_err = _error("dnu_err", dnu_err)
    if (teff is None) != (teff_err is None):
        raise OptionError(
            f"teff and teff_err must be given together; got teff={teff!r} and "
            f"teff_err={teff_err!r}"
        )
    ref, f_numax, f_dnu = _prepare(reference, f_numax, f_dnu)
    if not (_is_real(correlation) and -1.0 < correlation < 1.0):
        raise OptionError(f"correlation must be a number in (-1, 1); got {correlation!r}")
    if correction not in CORRECTIONS:
        raise OptionError(
            f"unknown correction {correction!r}; allowed corrections are {list(CORRECTIONS)}"
        )
    if isinstance(n_draws, bool) or not isinstance(n_draws, (int, np.integer)) or n_draws < 100:
        raise OptionError(f"n_draws must be an integer >= 100; got {n_draws!r}")
    rng = np.random.default_rng(rng)

    flags: list[str] = []
    have_teff = teff is not None
    if have_teff:
        teff, teff_err = _scalar("teff", teff), _error("teff_err", teff_err)
    else:
        teff, teff_err = ASSUMED_GIANT_TEFF
        flags += ["logg_teff_assumed", "mass_radius_need_teff"]

    nm, dn, tf = _draw_inputs(
        rng, int(n_draws), numax, numax_err, dnu, dnu_err, float(correlation), teff, teff_err
    )
    keep = (nm > 0) & (dn > 0) & (tf > 0)
    if not np.all(keep):
        flags.append("nonpositive_draws_dropped")
        if np.count_nonzero(keep) < (1.0 - _MAX_DROPPED) * n_draws:
            # A result, not misuse: errors this large leave nothing to estimate.
            flags.append("input_errors_too_large")
            details = {"n_draws_used": int(np.count_nonzero(keep)), "n_draws": int(n_draws)}
            return ScalingEstimates(None, None, None, None, None, flags=flags, details=details)
        nm, dn, tf = nm[keep], dn[keep], tf[keep]

    x0, y0, t0 = _ratios(numax, dnu, teff, ref, f_numax, f_dnu)
    xd, yd, td = _ratios(nm, dn, tf, ref, f_numax, f_dnu)
    central = {
        "mass": _mass(x0, y0, t0),
        "radius": _radius(x0, y0, t0),
        "logg": _logg(x0, t0),
        "density": _density(y0),
        "luminosity": _luminosity(x0, y0, t0),
    }
    draws = np.stack(
        [_mass(xd, yd, td), _radius(xd, yd, td), _logg(xd, td), _density(yd),
         _luminosity(xd, yd, td)]
    )
    low, mid, high = np.percentile(draws, [_LOW, 50.0, _HIGH], axis=1)
    stat = dict(zip(_QUANTITIES, (high - low) / 2, strict=True))

    fractions = reference_systematics() if systematic else dict.fromkeys(_QUANTITIES, 0.0)
    divisors = CORRECTIONS[correction]
    if divisors:
        flags.append("eclipsing_binary_correction_approximate")

    wanted = _QUANTITIES if have_teff else ("logg", "density")
    out: dict[str, Measurement | None] = dict.fromkeys(_QUANTITIES)
    sys_err: dict[str, float] = {}
    corr_err: dict[str, float] = {}
    scale = dict.fromkeys(_QUANTITIES, 1.0)
    for name in wanted:
        divisor, divisor_err = divisors.get(name, (1.0, 0.0))
        scale[name] = 1.0 / divisor
        value = float(central[name]) / divisor
        # log g's systematic is already in dex; the others are fractions of the value.
        sys_err[name] = fractions[name] * (1.0 if name == "logg" else value)
        corr_err[name] = value * divisor_err / divisor
        total = math.hypot(stat[name] / divisor, sys_err[name], corr_err[name])
        out[name] = Measurement(value, total)

    details = {
        "reference": {
            "key": ref.key, "numax": ref.numax, "dnu": ref.dnu, "teff": ref.teff,
            "source": ref.source,
        },
        "statistical_error": {name: float(stat[name] * scale[name]) for name in wanted},
        "systematic_error": sys_err,
        "correction_error": corr_err,
        "percentiles": {
            name: [float(v) * scale[name] for v in (low[i], mid[i], high[i])]
            for i, name in enumerate(_QUANTITIES)
            if name in wanted
        },
        "n_draws_used": int(nm.size),
        "correlation": float(correlation),
        "f_dnu": f_dnu,
        "f_numax": f_numax,
        "correction": correction,
        "systematic": bool(systematic),
        "teff_used": [float(teff), float(teff_err)],
    }
    return ScalingEstimates(flags=flags, details=details, **out)
