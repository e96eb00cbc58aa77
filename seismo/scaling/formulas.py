"""The plain scaling relations, vectorised, and the spread over reference sets.

Part of `seismo.scaling`; the public names are re-exported there.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..errors import OptionError
from .references import DEFAULT_REFERENCE, SOLAR_REFERENCES, SUN, SolarReference, _resolve_reference

__all__ = [
    "scaling_radius",
    "scaling_mass",
    "scaling_logg",
    "scaling_density",
    "scaling_luminosity",
    "reference_systematics",
]


# ---------------------------------------------------------------------------
# Validation and unit-free kernels
# ---------------------------------------------------------------------------


def _positive(name: str, value: Any) -> np.ndarray:
    arr = np.asarray(value, dtype=np.float64)
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
        raise OptionError(f"{name} must be finite and > 0; got {value!r}")
    return arr


def _error(name: str, value: Any) -> float:
    try:
        number = float(value)
    except (TypeError, ValueError):
        number = math.nan
    if not math.isfinite(number) or number < 0:
        raise OptionError(f"{name} must be a finite number >= 0; got {value!r}")
    return number


def _scalar(name: str, value: Any) -> float:
    arr = _positive(name, value)
    if arr.ndim != 0:
        raise OptionError(f"{name} must be a single number for one star; got shape {arr.shape}")
    return float(arr)


def _out(value: np.ndarray) -> Any:
    value = np.asarray(value)
    return float(value) if value.ndim == 0 else value


def _ratios(
    numax: Any, dnu: Any, teff: Any, ref: SolarReference, f_numax: float, f_dnu: float
) -> tuple[Any, Any, Any]:
    """x, y, t of the scaling relations (None passes through for a missing input)."""
    x = None if numax is None else numax / (f_numax * ref.numax)
    y = None if dnu is None else dnu / (f_dnu * ref.dnu)
    t = None if teff is None else teff / ref.teff
    return x, y, t


def _prepare(
    reference: str | SolarReference, f_numax: float, f_dnu: float
) -> tuple[SolarReference, float, float]:
    ref = _resolve_reference(reference)
    return ref, _scalar("f_numax", f_numax), _scalar("f_dnu", f_dnu)


# Unit-free kernels on bare float64 ratios x, y, t (no checks).


def _radius(x: Any, y: Any, t: Any) -> Any:
    return x * y**-2 * np.sqrt(t)


def _mass(x: Any, y: Any, t: Any) -> Any:
    return x**3 * y**-4 * t**1.5


def _logg(x: Any, t: Any) -> Any:
    return SUN.logg + np.log10(x * np.sqrt(t))


def _density(y: Any) -> Any:
    return SUN.density * y**2


def _luminosity(x: Any, y: Any, t: Any) -> Any:
    return _radius(x, y, t) ** 2 * t**4


# ---------------------------------------------------------------------------
# The plain relations
# ---------------------------------------------------------------------------

_COMMON_DOC = """
    reference : str or SolarReference
        Key of `SOLAR_REFERENCES` (default ``"huber2011"``) or a set of one's own.
    f_dnu : float
        Correction factor of the Δν relation, y = Δν/(f_Δν Δν☉) (default 1).
    f_numax : float
        Correction factor of the ν_max relation, x = ν_max/(f_νmax ν_max☉) (default 1).
"""


def scaling_radius(
    numax: Any,
    dnu: Any,
    teff: Any,
    *,
    reference: str | SolarReference = DEFAULT_REFERENCE,
    f_dnu: float = 1.0,
    f_numax: float = 1.0,
) -> Any:
    """Radius from the scaling relations, R/R☉ = x y⁻² t^½.

    Parameters
    ----------
    numax : float or array_like
        Frequency of maximum oscillation power, μHz.
    dnu : float or array_like
        Large frequency separation, μHz.
    teff : float or array_like
        Effective temperature, K.
    {common}
    Returns
    -------
    float or ndarray
        Radius, R☉ (arrays broadcast; a float for scalar input).

    Raises
    ------
    OptionError
        If an input or factor is not finite and positive, or the reference
        is unknown.

    Notes
    -----
    R ∝ f_Δν² and R ∝ f_νmax⁻¹.

    References
    ----------
    Brown T. M. et al. 1991, ApJ 368, 599; Kjeldsen H. & Bedding T. R. 1995,
    A&A 293, 87.
    """
    ref, f_numax, f_dnu = _prepare(reference, f_numax, f_dnu)
    x, y, t = _ratios(
        _positive("numax", numax), _positive("dnu", dnu), _positive("teff", teff),
        ref, f_numax, f_dnu,
    )
    return _out(_radius(x, y, t))


def scaling_mass(
    numax: Any,
    dnu: Any,
    teff: Any,
    *,
    reference: str | SolarReference = DEFAULT_REFERENCE,
    f_dnu: float = 1.0,
    f_numax: float = 1.0,
) -> Any:
    """Mass from the scaling relations, M/M☉ = x³ y⁻⁴ t^{{3/2}}.

    Parameters
    ----------
    numax : float or array_like
        Frequency of maximum oscillation power, μHz.
    dnu : float or array_like
        Large frequency separation, μHz.
    teff : float or array_like
        Effective temperature, K.
    {common}
    Returns
    -------
    float or ndarray
        Mass, M☉.

    Raises
    ------
    OptionError
        As `scaling_radius`.

    Notes
    -----
    Equivalent to M = (g/g☉)³ (ρ̄/ρ̄☉)⁻². M ∝ f_Δν⁴ and M ∝ f_νmax⁻³, so a
    1 % change in f_Δν moves the mass by about 4 %.

    References
    ----------
    Brown T. M. et al. 1991, ApJ 368, 599; Kjeldsen H. & Bedding T. R. 1995,
    A&A 293, 87.
    """
    ref, f_numax, f_dnu = _prepare(reference, f_numax, f_dnu)
    x, y, t = _ratios(
        _positive("numax", numax), _positive("dnu", dnu), _positive("teff", teff),
        ref, f_numax, f_dnu,
    )
    return _out(_mass(x, y, t))


def scaling_logg(
    numax: Any,
    teff: Any,
    *,
    reference: str | SolarReference = DEFAULT_REFERENCE,
    f_numax: float = 1.0,
) -> Any:
    """Surface gravity from ν_max, g/g☉ = x t^½.

    Parameters
    ----------
    numax : float or array_like
        Frequency of maximum oscillation power, μHz.
    teff : float or array_like
        Effective temperature, K.
    reference : str or SolarReference
        Key of `SOLAR_REFERENCES` (default ``"huber2011"``) or a set of one's own.
    f_numax : float
        Correction factor of the ν_max relation (default 1).

    Returns
    -------
    float or ndarray
        log10 g with g in cm s⁻² (dex), using log g☉ = `SUN.logg` = 4.4381.

    Raises
    ------
    OptionError
        As `scaling_radius`.

    References
    ----------
    Brown T. M. et al. 1991, ApJ 368, 599; Kjeldsen H. & Bedding T. R. 1995,
    A&A 293, 87; log g☉ from IAU 2015 B3 (Prša et al. 2016, AJ 152, 41).
    """
    ref, f_numax, _ = _prepare(reference, f_numax, 1.0)
    x, _, t = _ratios(_positive("numax", numax), None, _positive("teff", teff), ref, f_numax, 1.0)
    return _out(_logg(x, t))


def scaling_density(
    dnu: Any,
    *,
    reference: str | SolarReference = DEFAULT_REFERENCE,
    f_dnu: float = 1.0,
) -> Any:
    """Mean density from Δν, ρ̄/ρ̄☉ = y².

    Parameters
    ----------
    dnu : float or array_like
        Large frequency separation, μHz.
    reference : str or SolarReference
        Key of `SOLAR_REFERENCES` (default ``"huber2011"``) or a set of one's own.
    f_dnu : float
        Correction factor of the Δν relation (default 1).

    Returns
    -------
    float or ndarray
        Mean density, g cm⁻³, using ρ̄☉ = `SUN.density` = 1.40978 g cm⁻³.

    Raises
    ------
    OptionError
        As `scaling_radius`.

    References
    ----------
    Kjeldsen H. & Bedding T. R. 1995, A&A 293, 87 (Δν ∝ ρ̄^½, Ulrich 1986);
    ρ̄☉ from IAU 2015 B3 (Prša et al. 2016, AJ 152, 41).
    """
    ref, _, f_dnu = _prepare(reference, 1.0, f_dnu)
    _, y, _ = _ratios(None, _positive("dnu", dnu), None, ref, 1.0, f_dnu)
    return _out(_density(y))


def scaling_luminosity(
    numax: Any,
    dnu: Any,
    teff: Any,
    *,
    reference: str | SolarReference = DEFAULT_REFERENCE,
    f_dnu: float = 1.0,
    f_numax: float = 1.0,
) -> Any:
    """Luminosity from the scaling radius, L/L☉ = (R/R☉)² t⁴ = x² y⁻⁴ t⁵.

    Parameters
    ----------
    numax : float or array_like
        Frequency of maximum oscillation power, μHz.
    dnu : float or array_like
        Large frequency separation, μHz.
    teff : float or array_like
        Effective temperature, K.
    {common}
    Returns
    -------
    float or ndarray
        Luminosity, L☉.

    Raises
    ------
    OptionError
        As `scaling_radius`.

    References
    ----------
    Stefan–Boltzmann law with the radius of Brown et al. 1991 and Kjeldsen &
    Bedding 1995.
    """
    ref, f_numax, f_dnu = _prepare(reference, f_numax, f_dnu)
    x, y, t = _ratios(
        _positive("numax", numax), _positive("dnu", dnu), _positive("teff", teff),
        ref, f_numax, f_dnu,
    )
    return _out(_luminosity(x, y, t))


# The three-input relations share one description of the options (written once).
for _func in (scaling_radius, scaling_mass, scaling_luminosity):
    if _func.__doc__:  # None under python -OO
        _func.__doc__ = _func.__doc__.format(common=_COMMON_DOC.strip() + "\n")
del _func


def reference_systematics(references: Any = None) -> dict[str, float]:
    """Systematic error from the choice of solar reference set.

    Parameters
    ----------
    references : iterable of SolarReference or str, optional
        The sets to compare; default every ``"observed"`` set of
        `SOLAR_REFERENCES` (the asymptotic-Δν set measures a different Δν).

    Returns
    -------
    dict
        For ``mass``, ``radius``, ``density`` and ``luminosity`` the fractional
        systematic error (dimensionless); for ``logg`` the error in dex.

    Notes
    -----
    Each quantity is a power law in the solar values, so the ratio between two
    reference sets is the same for every star. The systematic error is half
    the full range of ln Q over the sets (for log g, half the range of
    log10 g). With the bundled sets this is 4.3 % in mass, 1.6 % in radius,
    0.005 dex in log g, 0.5 % in density and 3.3 % in luminosity, matching the
    "about ±5 % in mass and ±2 % in radius" of REFERENCES.md §1b.
    """
    if references is None:
        refs = [r for r in SOLAR_REFERENCES.values() if r.dnu_kind == "observed"]
    else:
        refs = [_resolve_reference(r) for r in references]
    if len(refs) < 2:
        raise OptionError(f"references must name at least two sets; got {len(refs)}")
    # Evaluate at the solar point of the default set: the ratios do not depend on the star.
    base = SOLAR_REFERENCES[DEFAULT_REFERENCE]
    x = base.numax / np.array([r.numax for r in refs])
    y = base.dnu / np.array([r.dnu for r in refs])
    t = base.teff / np.array([r.teff for r in refs])
    half_range = {
        "mass": np.ptp(np.log(_mass(x, y, t))) / 2,
        "radius": np.ptp(np.log(_radius(x, y, t))) / 2,
        "logg": np.ptp(_logg(x, t)) / 2,
        "density": np.ptp(np.log(_density(y))) / 2,
        "luminosity": np.ptp(np.log(_luminosity(x, y, t))) / 2,
    }
    return {key: float(value) for key, value in half_range.items()}
