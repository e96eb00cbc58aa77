"""An illustrative red-giant-like model: a composite (core–envelope) polytrope.

A dense polytropic core matched to an envelope polytrope of another index,
with continuous pressure, mass and radius and an optional density jump at the
interface. It has a radiative core (N² > 0: a g-mode cavity) under a
convective envelope, like a red giant, but it is NOT a stellar model: use it
to exercise the tools, not to infer anything about stars.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import OptionError
from .constants import G_CGS, M_SUN_G, R_SUN_CM
from .polytropes import _check_index, _integrate_emden, emden_solution, lane_emden
from .profiles import StellarProfile

__all__ = ["composite_polytrope"]


#: Relative radial offset between the last core point and the first envelope
#: point: keeps r strictly increasing across the density jump.
_INTERFACE_OFFSET = 1e-8
#: Largest envelope extent searched for its surface zero, in units of ξ₀.
_ENVELOPE_REACH = 1e9


@dataclass(frozen=True)
class _Composite:
    """Dimensionless composite model (G = 1, core ρ_c = 1, core α = 1)."""

    n_core: float
    n_env: float
    xi_core: float
    jump: float
    theta_i: float
    dtheta_i: float
    xi_env0: float
    dtheta_env0: float
    xi_env1: float
    dtheta_env1: float
    env_solution: Any

    @property
    def alpha_env(self) -> float:
        return self.xi_core / self.xi_env0

    @property
    def rho_env0(self) -> float:
        return self.theta_i**self.n_core / self.jump

    @property
    def p_interface(self) -> float:
        return 4.0 * np.pi / (self.n_core + 1.0) * self.theta_i ** (self.n_core + 1.0)

    @property
    def mass(self) -> float:
        scale = 4.0 * np.pi * self.alpha_env**3 * self.rho_env0
        return scale * (-(self.xi_env1**2) * self.dtheta_env1)

    @property
    def radius(self) -> float:
        return self.alpha_env * self.xi_env1

    @property
    def core_mass_fraction(self) -> float:
        return 4.0 * np.pi * (-self.xi_core**2 * self.dtheta_i) / self.mass

    @property
    def core_radius_fraction(self) -> float:
        return self.xi_core / self.radius


def _composite_kernel(
    n_core: float, n_env: float, xi_core: float, jump: float, rtol: float
) -> _Composite | None:
    """Match an envelope Emden solution to the core at ξ = ``xi_core``.

    With θ_env = 1 at the interface (the envelope's density unit is its own
    interface density), U = ξθⁿ/(−θ′) and V = −(n+1)ξθ′/θ give
    ξ₀ = √(U V/(n+1)) and θ′₀ = −V/((n+1) ξ₀). Returns ``None`` when the
    envelope never reaches θ = 0.
    """
    theta, dtheta = emden_solution(n_core, [xi_core], rtol=rtol)
    theta_i, dtheta_i = float(theta[0]), float(dtheta[0])
    # U and V are both ∝ ρ at fixed r, m, p, so both drop by the jump factor.
    u_env = xi_core * theta_i**n_core / (-dtheta_i) / jump
    v_env = -(n_core + 1.0) * xi_core * dtheta_i / theta_i / jump
    xi0 = float(np.sqrt(u_env * v_env / (n_env + 1.0)))
    dtheta0 = -v_env / ((n_env + 1.0) * xi0)
    sol, xi1, dtheta1 = _integrate_emden(n_env, xi0, 1.0, dtheta0, xi0 * _ENVELOPE_REACH, rtol)
    if xi1 is None:
        return None
    return _Composite(
        n_core, n_env, xi_core, jump, theta_i, dtheta_i, xi0, dtheta0, xi1, dtheta1, sol
    )


def _find_interface(
    n_core: float, n_env: float, jump: float, target: str, value: float
) -> _Composite:
    """Interface ξ in the core that gives the requested core mass or radius fraction.

    Scans ξ across the core, then refines the bracket by bisection
    (scipy ``brentq``). Of several solutions, the one with the smallest
    core radius fraction (for a mass target) or the largest core mass
    fraction (for a radius target) is taken: the more centrally condensed,
    giant-like model.
    """
    from scipy.optimize import brentq

    xi1 = lane_emden(n_core, 3).xi1
    grid = xi1 * np.linspace(0.02, 0.995, 60)

    def fraction(xi: float, rtol: float = 1e-9) -> float:
        model = _composite_kernel(n_core, n_env, xi, jump, rtol)
        if model is None:
            return np.nan
        return getattr(model, target)

    values = np.array([fraction(xi) for xi in grid])  # scalar root search: few ODE solves
    diff = values - value
    ok = np.isfinite(diff)
    crossings = np.flatnonzero(ok[:-1] & ok[1:] & (np.sign(diff[:-1]) != np.sign(diff[1:])))
    if crossings.size == 0:
        lo, hi = np.nanmin(values), np.nanmax(values)
        raise OptionError(
            f"no interface gives {target} = {value:g} with density_jump = {jump:g}, "
            f"n_core = {n_core:g}, n_env = {n_env:g} (reachable {lo:.3g} to {hi:.3g})",
            hint="change density_jump or the requested fraction",
        )
    models = []
    for k in crossings:
        xi = brentq(lambda x: fraction(x) - value, grid[k], grid[k + 1], xtol=1e-14, rtol=1e-13)
        models.append(_composite_kernel(n_core, n_env, xi, jump, 1e-13))
    models = [m for m in models if m is not None]
    if target == "core_mass_fraction":
        return min(models, key=lambda m: m.core_radius_fraction)
    return max(models, key=lambda m: m.core_mass_fraction)


def composite_polytrope(
    mass: float = 1.2,
    radius: float = 8.0,
    *,
    n_core: float = 3.0,
    n_env: float = 1.5,
    core_mass_fraction: float | None = 0.2,
    core_radius_fraction: float | None = None,
    density_jump: float = 10.0,
    gamma1: float = 5.0 / 3.0,
    points: int = 16001,
    core_share: float = 0.7,
) -> StellarProfile:
    """An illustrative core–envelope (composite) polytrope as a `StellarProfile`.

    A centrally regular Lane–Emden core of index ``n_core`` is matched, at an
    interface inside it, to an envelope of index ``n_env`` that is a general
    (not centrally regular) solution of θ″ + 2θ′/ξ + θⁿ = 0, integrated
    outward from the interface to its surface zero. Pressure, mass and radius
    are continuous at the interface; the density drops by ``density_jump``
    (as for a jump in mean molecular weight at fixed p and T), so the
    homology invariants U = d ln m/d ln r and V = −d ln p/d ln r both drop by
    that factor.

    With the defaults the core (n = 3, Γ₁ = 5/3) is radiative, N² > 0, and
    holds the g-mode cavity, while the n = 1.5 envelope with Γ₁ = 5/3 is
    exactly neutrally stratified (N² = 0), as a convective envelope. The
    model is **illustrative only, not a stellar model**: it has red-giant-like
    central condensation and seismic scales (see Notes) but no energy
    transport, composition profile or degenerate core physics.

    Parameters
    ----------
    mass : float
        Total mass, solar masses.
    radius : float
        Surface radius, solar radii.
    n_core, n_env : float
        Polytropic indices of the core (0 ≤ n < 5) and the envelope (0 ≤ n < 5).
    core_mass_fraction : float or None
        m(interface)/M, in (0, 1). Used unless ``core_radius_fraction`` is given.
    core_radius_fraction : float or None
        r(interface)/R, in (0, 1); overrides ``core_mass_fraction``.
    density_jump : float
        ρ(core side)/ρ(envelope side) at the interface, ≥ 1, dimensionless.
    gamma1 : float
        Constant first adiabatic exponent Γ₁ in both zones.
    points : int
        Total number of mesh points, ≥ 20. The default resolves the g-dominated
        dipole modes near numax of the default model (≈ 260 radial nodes in a
        core of 0.007 R): their period spacing then matches ΔΠ1 to 10⁻⁴; with
        4,001 points it was 17 % too large.
    core_share : float
        Fraction of the points placed in the core, in (0, 1).

    Returns
    -------
    StellarProfile
        The model in cgs. N² is exact in each zone,
        N² = g (d ln p/dr) [1/Γ₁ − n/(n+1)], with d ln p/dr = (n+1)θ′/(αθ).
        ``meta`` records the indices, the jump, the interface radius (cm),
        mass (g), ξ and mesh index (last core point) and both fractions.

    Raises
    ------
    OptionError
        If an argument is out of range, or no interface in the core gives the
        requested fraction (the message gives the reachable range).

    Notes
    -----
    The core is sampled as r = r_i (1 − cos πs)/2, s ∈ [0, 1]; the envelope
    uniformly in logit(r/R) = ln[r/(R − r)] from the interface to
    R − r = 10⁻⁶ R, plus the surface point: logarithmic in r near the small
    core and logarithmic in depth near the surface. The first envelope point
    sits 10⁻⁸ r_i above the last core point so that r is strictly increasing
    across the density jump.

    For the defaults (1.2 M☉, 8 R☉, q = 0.2, jump 10) the interface lies at
    r/R ≈ 0.0069 (0.055 R☉), ρ_c/ρ̄ ≈ 2 × 10⁷, the asymptotic large
    separation (2∫dr/c)⁻¹ is ≈ 7.4 μHz and the asymptotic dipole period
    spacing 2π²/√2 (∫N dr/r)⁻¹ ≈ 93 s (values from this implementation,
    CALC). Larger jumps or n_core give denser cores and smaller spacings.

    References
    ----------
    Chandrasekhar, S. 1939, *An Introduction to the Study of Stellar
    Structure* (Chicago), ch. IV (the Emden solutions and the homology
    invariants U, V).
    """
    if not (mass > 0 and radius > 0):
        raise OptionError(f"mass and radius must be positive, got {mass}, {radius}")
    n_core, n_env = _check_index(n_core, 5.0), _check_index(n_env, 5.0)
    if not (np.isfinite(density_jump) and density_jump >= 1.0):
        raise OptionError(f"density_jump must be >= 1 (core denser), got {density_jump}")
    if not gamma1 > 1.0:
        raise OptionError(f"gamma1 must exceed 1, got {gamma1}")
    if points < 20 or not 0.0 < core_share < 1.0:
        raise OptionError(
            f"need points >= 20 and 0 < core_share < 1, got {points} and {core_share}"
        )
    if core_radius_fraction is not None:
        target, value = "core_radius_fraction", float(core_radius_fraction)
    elif core_mass_fraction is not None:
        target, value = "core_mass_fraction", float(core_mass_fraction)
    else:
        raise OptionError("give core_mass_fraction or core_radius_fraction")
    if not 0.0 < value < 1.0:
        raise OptionError(f"{target} must lie in (0, 1), got {value}")
    model = _find_interface(n_core, n_env, float(density_jump), target, value)

    n_in = max(int(round(points * core_share)), 5)
    n_out = points - n_in
    s = np.linspace(0.0, 1.0, n_in)
    xi_c = model.xi_core * 0.5 * (1.0 - np.cos(np.pi * s))
    xi_c[-1] = model.xi_core
    theta_c, dtheta_c = emden_solution(n_core, xi_c)

    # Envelope mesh in logit(r/R) (in units of the envelope's ξ).
    xi0 = model.xi_env0 * (1.0 + _INTERFACE_OFFSET)
    x0, x1 = xi0 / model.xi_env1, 1.0 - 1e-6
    logit = np.linspace(np.log(x0 / (1 - x0)), np.log(x1 / (1 - x1)), n_out - 1)
    xi_e = np.append(model.xi_env1 / (1.0 + np.exp(-logit)), model.xi_env1)
    xi_e[0] = xi0
    dense = model.env_solution.sol(xi_e[:-1])
    theta_e = np.append(np.maximum(dense[0], 0.0), 0.0)
    dtheta_e = np.append(dense[1], model.dtheta_env1)

    a_env, rho_e0 = model.alpha_env, model.rho_env0
    r_d = np.concatenate([xi_c, a_env * xi_e])
    m_d = np.concatenate(
        [4.0 * np.pi * (-(xi_c**2) * dtheta_c),
         4.0 * np.pi * a_env**3 * rho_e0 * (-(xi_e**2) * dtheta_e)]
    )
    rho_d = np.concatenate([theta_c**n_core, rho_e0 * theta_e**n_env])
    p_d = np.concatenate(
        [4.0 * np.pi / (n_core + 1.0) * theta_c ** (n_core + 1.0),
         model.p_interface * theta_e ** (n_env + 1.0)]
    )
    # Homology scaling from G = 1, core ρ_c = α = 1 units to the requested M and R.
    m_tot, r_tot = mass * M_SUN_G, radius * R_SUN_CM
    m_unit, r_unit = m_tot / model.mass, r_tot / model.radius
    r = r_d * r_unit
    m = m_d * m_unit
    m[0], m[-1] = 0.0, m_tot
    r[-1] = r_tot
    rho = rho_d * m_unit / r_unit**3
    p = p_d * G_CGS * m_unit**2 / r_unit**4
    g = np.where(r > 0, G_CGS * m / np.where(r > 0, r, 1.0) ** 2, 0.0)

    coef = np.concatenate(
        [np.full(n_in, 1.0 / gamma1 - n_core / (n_core + 1.0)),
         np.full(n_out, 1.0 / gamma1 - n_env / (n_env + 1.0))]
    )
    # n = 1.5 with Γ₁ = 5/3 is neutral; round-off would otherwise leave ±1e-17 × g dlnp/dr.
    coef[np.abs(coef) < 1e-12] = 0.0
    n_zone = np.concatenate([np.full(n_in, n_core), np.full(n_out, n_env)])
    alpha = np.concatenate([np.full(n_in, r_unit), np.full(n_out, a_env * r_unit)])
    theta = np.concatenate([theta_c, theta_e])
    dtheta = np.concatenate([dtheta_c, dtheta_e])
    with np.errstate(divide="ignore", invalid="ignore"):
        dlnp = (n_zone + 1.0) * dtheta / (alpha * theta)
        n2 = g * dlnp * coef
    n2[0] = 0.0
    n2[-1] = 0.0 if coef[-1] == 0.0 else (-np.inf if coef[-1] > 0 else np.inf)

    r_i, m_i = float(r[n_in - 1]), float(m[n_in - 1])
    return StellarProfile(
        r=r, m=m, rho=rho, p=p, gamma1=np.full_like(r, gamma1), n2=n2,
        mass=m_tot, radius=r_tot,
        name=f"composite polytrope n={n_core:g}/{n_env:g}",
        meta={
            "kind": "composite polytrope", "illustrative": True,
            "n_core": n_core, "n_env": n_env, "density_jump": float(density_jump),
            "gamma1": float(gamma1), "xi_interface": model.xi_core,
            "interface_index": n_in - 1, "interface_radius": r_i, "interface_mass": m_i,
            "core_mass_fraction": m_i / m_tot, "core_radius_fraction": r_i / r_tot,
        },
    )
