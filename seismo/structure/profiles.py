"""Stellar-model profiles: one row per mesh point from centre to surface, in cgs.

`StellarProfile` is the single object every structure stage takes: the
observables (:mod:`seismo.structure.observables`), the oscillation solver
(:mod:`seismo.structure.solver`) and the built-in analytic models
(:mod:`seismo.structure.polytropes`). Arrays are in cgs; the global mass,
radius and luminosity are in cgs too (g, cm, erg s⁻¹), Teff in K and age in
years.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import InputError
from .constants import G_CGS, L_SUN_CGS, M_SUN_G, R_SUN_CM

__all__ = ["StellarProfile", "buoyancy_from_structure"]


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

    N² = g [ (1/Γ₁) d ln p/dr − d ln ρ/dr ], with d ln p/dr = −ρ g / p taken
    from hydrostatic equilibrium (so p is never differentiated) and d ln ρ/dr
    by second-order finite differences on the model's own (non-uniform) mesh.
    N² is set to 0 at the centre, where it vanishes for a regular model.

    Parameters
    ----------
    profile : StellarProfile
        The model.

    Returns
    -------
    numpy.ndarray
        N² at each mesh point, s⁻².
    """
    g = profile.g
    with np.errstate(divide="ignore", invalid="ignore"):
        dlnp = -profile.rho * g / profile.p
        dlnrho = np.gradient(np.log(profile.rho), profile.r)
        out = g * (dlnp / profile.gamma1 - dlnrho)
    out = np.where(profile.r > 0, out, 0.0)
    return np.where(np.isfinite(out), out, 0.0)
