"""Stellar-model profiles: one row per mesh point from centre to surface, in cgs.

`StellarProfile` is the single object every structure stage takes: the
observables (:mod:`seismo.structure.observables`), the oscillation solver
(:mod:`seismo.structure.solver`) and the built-in analytic models
(:mod:`seismo.structure.polytropes`). Arrays are in cgs; the global mass,
radius and luminosity are in cgs too (g, cm, erg s⁻¹), Teff in K and age in
years.
"""

from __future__ import annotations

import warnings
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import (
    InputError,
)
from .constants import G_CGS, L_SUN_CGS, M_SUN_G, R_SUN_CM

__all__ = [
    "StellarProfile",
    "buoyancy_from_structure",
    "check_profile",
    "ProfileCheck",
    "ProfileWarning",
    "PROFILE_FORMATS",
    "REQUIRED_COLUMNS",
]

#: Per-point columns every profile file must have (our names), and their cgs units.
REQUIRED_COLUMNS = ("r", "m", "rho", "p", "gamma1")
_CGS_UNITS = {"r": "cm", "m": "g", "rho": "g / cm3", "p": "g / (cm s2)", "gamma1": "",
              "n2": "1 / s2"}
#: Formats `read_profile` understands.
PROFILE_FORMATS = ("auto", "ecsv", "csv", "text", "fits")
#: Global quantities read from metadata: accepted keys (case-insensitive) and cgs unit.
_GLOBALS = {
    "mass": (("mass", "mstar", "m_star"), "g"),
    "radius": (("radius", "rstar", "r_star"), "cm"),
    "luminosity": (("luminosity", "luminos", "lum", "lstar"), "erg / s"),
    "teff": (("teff",), "K"),
    "age": (("age",), "yr"),
}
#: Relative mass mismatch above which `check_profile` warns.
MASS_TOLERANCE = 0.01
#: Outward decrease of m, relative to the total, still taken as round-off.
_MASS_ROUNDOFF = 1e-12


@dataclass(frozen=True, eq=False)
class StellarProfile:
    """A spherically symmetric stellar model on its own mesh (cgs).

    Parameters
    ----------
    r : numpy.ndarray
        Radius of each mesh point, cm, strictly increasing from the centre
        (``r[0]`` may be 0) to the surface.
    m : numpy.ndarray
        Mass inside ``r``, g.
    rho : numpy.ndarray
        Density, g cm⁻³.
    p : numpy.ndarray
        Pressure, dyn cm⁻² (= g cm⁻¹ s⁻²).
    gamma1 : numpy.ndarray
        First adiabatic exponent Γ₁ = (∂ln p/∂ln ρ)_ad, dimensionless.
    n2 : numpy.ndarray or None
        Squared buoyancy (Brunt–Väisälä) frequency N², s⁻². ``None`` when the
        model does not provide it; :attr:`buoyancy2` then derives it.
    mass, radius : float
        Total mass (g) and photospheric radius (cm).
    luminosity : float or None
        Surface luminosity, erg s⁻¹.
    teff : float or None
        Effective temperature, K.
    age : float or None
        Age, yr.
    columns : Mapping[str, numpy.ndarray]
        Any further per-point columns (temperature, composition, ...), kept
        under their own names.
    meta : Mapping[str, Any]
        Free-form metadata (source file, column mapping, notes).
    name : str
        A label for figures and reports.
    """

    r: np.ndarray
    m: np.ndarray
    rho: np.ndarray
    p: np.ndarray
    gamma1: np.ndarray
    mass: float
    radius: float
    n2: np.ndarray | None = None
    luminosity: float | None = None
    teff: float | None = None
    age: float | None = None
    columns: Mapping[str, np.ndarray] = field(default_factory=dict)
    meta: Mapping[str, Any] = field(default_factory=dict)
    name: str = "model"

    def __post_init__(self) -> None:
        arrays = {}
        for key in ("r", "m", "rho", "p", "gamma1"):
            value = np.asarray(getattr(self, key), dtype=float)
            if value.ndim != 1:
                raise InputError(f"profile column {key!r} must be one-dimensional")
            arrays[key] = value
        size = arrays["r"].size
        if size < 3:
            raise InputError(
                f"a profile needs at least 3 mesh points, got {size}",
                hint="export the full model from centre to surface",
            )
        for key, value in arrays.items():
            if value.size != size:
                raise InputError(
                    f"profile column {key!r} has {value.size} points, 'r' has {size}"
                )
            object.__setattr__(self, key, value)
        if self.n2 is not None:
            n2 = np.asarray(self.n2, dtype=float)
            if n2.shape != (size,):
                raise InputError(f"profile column 'n2' has {n2.size} points, 'r' has {size}")
            object.__setattr__(self, "n2", n2)
        object.__setattr__(self, "mass", float(self.mass))
        object.__setattr__(self, "radius", float(self.radius))
        object.__setattr__(
            self, "columns", {k: np.asarray(v, dtype=float) for k, v in self.columns.items()}
        )
        object.__setattr__(self, "meta", dict(self.meta))

    # ---------------------------------------------------------------- derived
    @property
    def size(self) -> int:
        """Number of mesh points."""
        return int(self.r.size)

    @property
    def x(self) -> np.ndarray:
        """Fractional radius r/R, dimensionless."""
        return self.r / self.radius

    @property
    def g(self) -> np.ndarray:
        """Local gravity G m / r², cm s⁻² (0 at the centre)."""
        with np.errstate(divide="ignore", invalid="ignore"):
            out = G_CGS * self.m / self.r**2
        return np.where(self.r > 0, out, 0.0)

    @property
    def c2(self) -> np.ndarray:
        """Squared adiabatic sound speed Γ₁ p / ρ, cm² s⁻²."""
        with np.errstate(divide="ignore", invalid="ignore"):
            out = self.gamma1 * self.p / self.rho
        return np.where(self.rho > 0, out, 0.0)

    @property
    def buoyancy2(self) -> np.ndarray:
        """N², s⁻²: the model's own column, or derived from ρ, p and Γ₁."""
        if self.n2 is not None:
            return self.n2
        return buoyancy_from_structure(self)

    @property
    def mean_density(self) -> float:
        """Mean density 3M / (4πR³), g cm⁻³."""
        return 3.0 * self.mass / (4.0 * np.pi * self.radius**3)

    @property
    def surface_gravity(self) -> float:
        """Surface gravity G M / R², cm s⁻²."""
        return G_CGS * self.mass / self.radius**2

    @property
    def dynamical_frequency(self) -> float:
        """√(G M / R³), rad s⁻¹: the unit of the dimensionless frequency σ."""
        return float(np.sqrt(G_CGS * self.mass / self.radius**3))

    @property
    def mass_solar(self) -> float:
        """Total mass in solar masses."""
        return self.mass / M_SUN_G

    @property
    def radius_solar(self) -> float:
        """Photospheric radius in solar radii."""
        return self.radius / R_SUN_CM

    @property
    def luminosity_solar(self) -> float | None:
        """Luminosity in solar luminosities, or ``None``."""
        return None if self.luminosity is None else self.luminosity / L_SUN_CGS


def buoyancy_from_structure(profile: StellarProfile) -> np.ndarray:
    """Squared buoyancy frequency N² from ρ, p and Γ₁, s⁻².

    The scheme is

        N² = (ρ g² / p) [ d ln ρ/d ln p − 1/Γ₁ ],

    which is N² = g [ (1/Γ₁) d ln p/dr − d ln ρ/dr ] with d ln p/dr = −ρg/p
    taken from hydrostatic equilibrium (so the prefactor involves no
    derivative). The local polytropic exponent d ln ρ/d ln p is the ratio of
    the second-order finite differences (`numpy.gradient` on the model's own
    non-uniform mesh) of ln ρ and of ln p: both use the same stencil, so the
    ratio is exact wherever ln ρ is locally linear in ln p (any polytropic
    stratification, whatever the mesh spacing), and the truncation errors of
    the two derivatives largely cancel elsewhere. Where d ln p is zero on the
    stencil the ratio is undefined and d ln ρ/dr is used directly. N² is
    set to 0 at the centre (r = 0, where it vanishes for a regular model)
    and at points where p or ρ is 0 (the surface of an analytic model),
    where it is not finite. A density discontinuity gives a large, localised
    N² on the two points that straddle it, the discrete form of its δ
    function.

    Parameters
    ----------
    profile : StellarProfile
        The model.

    Returns
    -------
    numpy.ndarray, shape (n_points,)
        N² at each mesh point, s⁻².
    """
    g = profile.g
    out = np.zeros(profile.size)
    # Only points with p, ρ > 0 enter the stencil (check_profile allows zeros at the surface).
    inside = (profile.p > 0) & (profile.rho > 0)
    if np.count_nonzero(inside) < 3:
        return out
    r = profile.r[inside]
    ln_rho = np.log(profile.rho[inside])
    ln_p = np.log(profile.p[inside])
    d_ln_rho = np.gradient(ln_rho, r)
    d_ln_p = np.gradient(ln_p, r)
    rho, p, gi, gamma1 = profile.rho[inside], profile.p[inside], g[inside], profile.gamma1[inside]
    hydro = -rho * gi / p
    with np.errstate(divide="ignore", invalid="ignore"):
        exponent = d_ln_rho / d_ln_p
        ratio_form = (rho * gi**2 / p) * (exponent - 1.0 / gamma1)
        direct_form = gi * (hydro / gamma1 - d_ln_rho)
    value = np.where(d_ln_p != 0.0, ratio_form, direct_form)
    out[inside] = np.where(np.isfinite(value) & (r > 0), value, 0.0)
    return out


# ------------------------------------------------------------------ checking


class ProfileWarning(UserWarning):
    """A profile passes its checks but looks inconsistent (e.g. mass vs density)."""


@dataclass(frozen=True)
class ProfileCheck:
    """Findings of `check_profile`.

    Attributes
    ----------
    errors : tuple of str
        Violations that make the profile unusable (one line each).
    warnings : tuple of str
        Inconsistencies worth a look (also issued as `ProfileWarning`).
    mass_mismatch : float
        max |m − (m₀ + ∫4πr²ρ dr)| / m_surface over the mesh, dimensionless.
    total_mass_mismatch : float
        |m_surface − M| / M for the global mass M, dimensionless.
    hydrostatic_median, hydrostatic_max : float
        Median and maximum over interior points (r > 0, ρ > 0, excluding the
        first and last point) of |dp/dr + Gmρ/r²| / (Gmρ/r²), dimensionless;
        reported, not enforced.
    """

    errors: tuple[str, ...]
    warnings: tuple[str, ...]
    mass_mismatch: float
    total_mass_mismatch: float
    hydrostatic_median: float
    hydrostatic_max: float

    @property
    def ok(self) -> bool:
        """True when there are no errors."""
        return not self.errors

    def __repr__(self) -> str:
        return (
            f"ProfileCheck(ok={self.ok}, errors={len(self.errors)}, "
            f"warnings={len(self.warnings)}, mass_mismatch={self.mass_mismatch:.2e}, "
            f"hydrostatic_median={self.hydrostatic_median:.2e})"
        )


def _first_bad(bad: np.ndarray) -> str:
    index = np.flatnonzero(bad)
    return f"{index.size} point(s), first at row {index[0]}"


def check_profile(profile: StellarProfile, *, warn: bool = True) -> ProfileCheck:
    """Check a profile for physical consistency.

    Errors: r not strictly increasing or negative; ρ or p not positive
    (exactly 0 is allowed at the last, surface point); Γ₁ ≤ 1; m decreasing
    (by more than 10⁻¹² of the total, which is round-off) or negative;
    non-finite values. Warnings (above 1 % relative): the mass column
    disagrees with m₀ + ∫4πr²ρ dr, integrated by the cumulative trapezoid
    rule in r³ (dm = (4π/3) ρ d(r³), exact for uniform density), or the
    last mass point disagrees with the global mass. The
    hydrostatic-equilibrium residual is reported only, since exported
    models carry their own discretisation errors.

    Parameters
    ----------
    profile : StellarProfile
        The model.
    warn : bool
        Issue each warning as a `ProfileWarning` as well as recording it.

    Returns
    -------
    ProfileCheck
        The findings.
    """
    r, m, rho, p, gamma1 = profile.r, profile.m, profile.rho, profile.p, profile.gamma1
    errors: list[str] = []
    for key, value in (("r", r), ("m", m), ("rho", rho), ("p", p), ("gamma1", gamma1)):
        if not np.all(np.isfinite(value)):
            where = _first_bad(~np.isfinite(value))
            errors.append(f"column {key!r} has non-finite values ({where})")
    if np.any(np.diff(r) <= 0):
        errors.append(f"radius is not strictly increasing ({_first_bad(np.diff(r) <= 0)})")
    if r[0] < 0:
        errors.append(f"radius starts below zero ({r[0]:g} cm)")
    for key, value in (("density", rho), ("pressure", p)):
        bad = ~(value > 0)
        bad[-1] = not value[-1] >= 0  # an analytic surface has exactly ρ = p = 0
        if np.any(bad):
            errors.append(f"{key} is not positive ({_first_bad(bad)})")
    if np.any(~(gamma1 > 1)):
        errors.append(f"gamma1 is not above 1 ({_first_bad(~(gamma1 > 1))})")
    # Round-off in an exported mass column (constant near the surface) is not a decrease.
    falling = np.diff(m) < -_MASS_ROUNDOFF * np.max(np.abs(m))
    if np.any(falling):
        errors.append(f"mass decreases outward ({_first_bad(falling)})")
    if m[0] < 0:
        errors.append(f"mass starts below zero ({m[0]:g} g)")

    with np.errstate(all="ignore"):
        shells = 0.5 * (rho[1:] + rho[:-1]) * np.diff(r**3) * (4.0 * np.pi / 3.0)
        m_int = m[0] + np.concatenate([[0.0], np.cumsum(shells)])
        mass_mismatch = float(np.max(np.abs(m_int - m)) / m[-1]) if m[-1] > 0 else np.inf
        total = abs(m[-1] - profile.mass) / profile.mass if profile.mass > 0 else np.inf
        gravity = G_CGS * m * rho / np.where(r > 0, r, 1.0) ** 2
        residual = np.abs(np.gradient(p, r) + gravity) / gravity
    interior = np.zeros(r.size, dtype=bool)
    interior[1:-1] = True
    interior &= (r > 0) & (rho > 0) & (gravity > 0) & np.isfinite(residual)
    hydro = residual[interior]
    median = float(np.median(hydro)) if hydro.size else np.nan
    largest = float(np.max(hydro)) if hydro.size else np.nan

    found: list[str] = []
    if not mass_mismatch <= MASS_TOLERANCE:
        found.append(
            f"mass column differs from the integral of 4 pi r^2 rho dr by "
            f"{100 * mass_mismatch:.3g}% of the total; check the density and mass units"
        )
    if not total <= MASS_TOLERANCE:
        found.append(
            f"last mass point differs from the global mass by {100 * total:.3g}%; "
            "check the mass metadata"
        )
    if warn:
        for message in found:
            warnings.warn(f"{profile.name}: {message}", ProfileWarning, stacklevel=2)
    return ProfileCheck(tuple(errors), tuple(found), mass_mismatch, float(total), median, largest)
