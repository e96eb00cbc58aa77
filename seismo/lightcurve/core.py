"""The `LightCurve` container and its boundary checks."""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ..errors import (
    BaselineTooShortError,
    ConstantFluxError,
    NoFiniteDataError,
    OptionError,
    TimeUnitError,
    TooFewPointsError,
)

__all__ = ["LightCurve", "TIME_UNITS_IN_DAYS"]

#: Conversion factors from accepted time units to days.
TIME_UNITS_IN_DAYS = {
    "d": 1.0,
    "day": 1.0,
    "days": 1.0,
    "h": 1.0 / 24.0,
    "hour": 1.0 / 24.0,
    "hours": 1.0 / 24.0,
    "min": 1.0 / 1440.0,
    "minute": 1.0 / 1440.0,
    "minutes": 1.0 / 1440.0,
    "s": 1.0 / 86400.0,
    "second": 1.0 / 86400.0,
    "seconds": 1.0 / 86400.0,
}

# Plausibility limits for times given in days: one second to one day between
# samples, and no more than a few decades of baseline.
_MIN_CADENCE_DAYS = 1.0 / 86400.0
_MAX_MEDIAN_CADENCE_DAYS = 1.0
_MAX_BASELINE_DAYS = 2.0e4


@dataclass(frozen=True, eq=False)
class LightCurve:
    """A photometric time series in seismo's canonical units.

    Parameters
    ----------
    time : ndarray, shape (n_points,)
        Observation times, days (any zero point).
    flux : ndarray, shape (n_points,)
        Relative flux, ppm about the mean level.
    flux_err : ndarray, shape (n_points,), optional
        One-sigma flux uncertainties, ppm.
    segment : ndarray of int, shape (n_points,), optional
        Label of the observing segment each point belongs to (e.g. a
        spacecraft quarter or sector). Set by conditioning.
    meta : dict
        Free-form provenance: ``id``, ``source``, ``format``,
        ``flux_assumed`` (how the flux was interpreted), and a
        ``conditioning`` record once conditioned.

    Notes
    -----
    The object is immutable; every stage returns a new one.
    """

    time: np.ndarray
    flux: np.ndarray
    flux_err: np.ndarray | None = None
    segment: np.ndarray | None = None
    meta: dict[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        time = np.asarray(self.time, dtype=np.float64)
        flux = np.asarray(self.flux, dtype=np.float64)
        if time.ndim != 1 or flux.ndim != 1:
            raise OptionError(
                f"time and flux must be 1-D arrays; got shapes {time.shape} and {flux.shape}"
            )
        if time.shape != flux.shape:
            raise OptionError(
                f"time and flux must have the same length; got {time.size} and {flux.size}"
            )
        object.__setattr__(self, "time", time)
        object.__setattr__(self, "flux", flux)
        if self.flux_err is not None:
            err = np.asarray(self.flux_err, dtype=np.float64)
            if err.shape != time.shape:
                raise OptionError(
                    f"flux_err must match time in length; got {err.size} and {time.size}"
                )
            object.__setattr__(self, "flux_err", err)
        if self.segment is not None:
            seg = np.asarray(self.segment, dtype=np.int64)
            if seg.shape != time.shape:
                raise OptionError(
                    f"segment must match time in length; got {seg.size} and {time.size}"
                )
            object.__setattr__(self, "segment", seg)
        object.__setattr__(self, "meta", dict(self.meta))

    @classmethod
    def from_arrays(
        cls,
        time: Any,
        flux: Any,
        flux_err: Any = None,
        *,
        time_unit: str = "d",
        meta: dict[str, Any] | None = None,
    ) -> LightCurve:
        """Build a light curve from arrays, astropy Quantities or Times.

        Parameters
        ----------
        time : array_like, `~astropy.units.Quantity` or `~astropy.time.Time`
            Observation times. Quantities are converted to days; a `Time`
            is taken as its Julian date; plain arrays are in ``time_unit``.
        flux : array_like or `~astropy.units.Quantity`
            Flux relative to the mean, ppm. A dimensionless Quantity (for
            instance in ppt or ``u.dimensionless_unscaled``) is converted.
        flux_err : array_like or Quantity, optional
            One-sigma uncertainties, in the same unit as ``flux``.
        time_unit : str
            Unit of plain-array times; one of `TIME_UNITS_IN_DAYS`.
        meta : dict, optional
            Provenance to keep with the light curve.

        Returns
        -------
        LightCurve
        """
        time_days = _time_to_days(time, time_unit)
        flux_ppm = _flux_to_ppm(flux)
        err_ppm = None if flux_err is None else _flux_to_ppm(flux_err)
        return cls(time_days, flux_ppm, err_ppm, None, dict(meta or {}))

    @property
    def id(self) -> str | None:
        """Identifier of the star, if known."""
        return self.meta.get("id")

    @property
    def n_points(self) -> int:
        """Number of samples."""
        return int(self.time.size)

    @property
    def baseline(self) -> float:
        """Time from first to last sample, days."""
        return float(self.time.max() - self.time.min()) if self.time.size else 0.0

    @property
    def cadence(self) -> float:
        """Median time between consecutive samples, days."""
        if self.time.size < 2:
            return float("nan")
        steps = np.diff(np.sort(self.time))
        steps = steps[steps > 0]
        return float(np.median(steps)) if steps.size else float("nan")

    def replace(self, **changes: Any) -> LightCurve:
        """Return a copy with some fields replaced (``meta`` is merged)."""
        if "meta" in changes:
            merged = dict(self.meta)
            merged.update(changes["meta"])
            changes["meta"] = merged
        return replace(self, **changes)

    def __repr__(self) -> str:
        segs = "none" if self.segment is None else str(np.unique(self.segment).size)
        return (
            f"<LightCurve id={self.id!r} n_points={self.n_points} "
            f"baseline={self.baseline:.2f} d cadence={self.cadence * 1440.0:.3g} min "
            f"segments={segs}>"
        )


def _time_to_days(time: Any, time_unit: str) -> np.ndarray:
    try:
        from astropy.time import Time
        from astropy.units import Quantity
    except ImportError:  # pragma: no cover - astropy is a hard dependency
        Time = Quantity = ()  # type: ignore[assignment]
    if Time and isinstance(time, Time):
        return np.asarray(time.jd, dtype=np.float64)
    if Quantity and isinstance(time, Quantity):
        return np.asarray(time.to_value("day"), dtype=np.float64)
    try:
        factor = TIME_UNITS_IN_DAYS[time_unit]
    except KeyError:
        raise OptionError(
            f"unknown time unit {time_unit!r}; allowed units are "
            f"{sorted(set(TIME_UNITS_IN_DAYS))}"
        ) from None
    return np.asarray(time, dtype=np.float64) * factor


def _flux_to_ppm(flux: Any) -> np.ndarray:
    try:
        from astropy.units import Quantity
    except ImportError:  # pragma: no cover
        Quantity = ()  # type: ignore[assignment]
    if Quantity and isinstance(flux, Quantity):
        import astropy.units as u

        try:
            return np.asarray(flux.to_value(u.dimensionless_unscaled), dtype=np.float64) * 1e6
        except u.UnitConversionError:
            raise OptionError(
                f"flux given as a Quantity must be dimensionless (ppm, ppt, %); got unit "
                f"{flux.unit}"
            ) from None
    return np.asarray(flux, dtype=np.float64)


def check_usable(
    lc: LightCurve,
    *,
    min_points: int,
    min_baseline_days: float,
) -> None:
    """Raise the matching `InputError` if ``lc`` cannot be analysed.

    Parameters
    ----------
    lc : LightCurve
        Light curve whose non-finite rows have already been removed.
    min_points : int
        Fewest valid points accepted.
    min_baseline_days : float
        Shortest accepted time span, days.

    Raises
    ------
    NoFiniteDataError
        No finite sample is left.
    TimeUnitError
        The median step or the baseline is implausible for times in days.
    TooFewPointsError
        Fewer than ``min_points`` valid samples.
    BaselineTooShortError
        Baseline below ``min_baseline_days``.
    ConstantFluxError
        The flux has no scatter at all.
    """
    n = lc.n_points
    if n == 0:
        raise NoFiniteDataError(
            "no valid samples: every time or flux value is NaN/inf or flagged",
            hint="check the flux column (--flux-column) and the quality mask (--quality-bitmask)",
        )
    cadence = lc.cadence
    if n >= 2 and np.isfinite(cadence):
        baseline = lc.baseline
        if cadence > _MAX_MEDIAN_CADENCE_DAYS or baseline > _MAX_BASELINE_DAYS or (
            cadence < _MIN_CADENCE_DAYS
        ):
            raise TimeUnitError(
                f"times do not look like days (median step {cadence:.4g}, baseline "
                f"{baseline:.4g} in file units)",
                hint="convert times to days or pass --time-unit s|min|h",
            )
    if n < min_points:
        raise TooFewPointsError(
            f"only {n} valid points, fewer than the {min_points} needed",
            hint="supply a longer light curve or relax the quality mask",
        )
    if lc.baseline < min_baseline_days:
        raise BaselineTooShortError(
            f"baseline is {lc.baseline:.3g} d, shorter than the {min_baseline_days:g} d needed "
            "to resolve red-giant oscillations",
            hint="supply a longer light curve",
        )
    if np.ptp(lc.flux) == 0.0:
        raise ConstantFluxError(
            "the flux is constant: there is no signal to analyse",
            hint="check that the right flux column was read (--flux-column)",
        )
