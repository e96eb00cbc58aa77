"""Built-in analytic models: Lane–Emden polytropes and the homogeneous sphere.

A polytrope p = K ρ^(1+1/n) in hydrostatic equilibrium obeys the Lane–Emden
equation (Lane 1870; Emden 1907; Chandrasekhar 1939, *An Introduction to the
Study of Stellar Structure*, ch. IV)

    (1/ξ²) d/dξ (ξ² dθ/dξ) = −θⁿ,   θ(0) = 1, θ′(0) = 0,

with ρ = ρ_c θⁿ and r = α ξ. These models are the oscillation solver's
checks and the demo models.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.integrate import solve_ivp

from ..errors import OptionError
from .constants import G_CGS, M_SUN_G, R_SUN_CM
from .profiles import StellarProfile

__all__ = ["LaneEmdenSolution", "lane_emden", "polytrope", "homogeneous_sphere"]

#: Start of the numerical integration; the series below is exact to O(ξ⁸) there.
_XI_START = 1e-3


@dataclass(frozen=True)
class LaneEmdenSolution:
    """A solution of the Lane–Emden equation of index ``n``.

    Attributes
    ----------
    n : float
        Polytropic index.
    xi1 : float
        First zero ξ₁ of θ (the surface).
    dtheta1 : float
        θ′(ξ₁) (negative).
    xi, theta, dtheta : numpy.ndarray
        The solution sampled from ξ = 0 to ξ₁ inclusive.
    """

    n: float
    xi1: float
    dtheta1: float
    xi: np.ndarray
    theta: np.ndarray
    dtheta: np.ndarray

    @property
    def mass_constant(self) -> float:
        """−ξ₁² θ′(ξ₁), dimensionless (M = 4π α³ ρ_c times this)."""
        return -self.xi1**2 * self.dtheta1

    @property
    def central_condensation(self) -> float:
        """ρ_c / ρ̄ = ξ₁ / (3 |θ′(ξ₁)|), dimensionless."""
        return self.xi1 / (3.0 * abs(self.dtheta1))


def _series(n: float, xi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """θ and θ′ near the centre from the power series (Chandrasekhar 1939, eq. IV.80)."""
    x2 = xi**2
    a2, a4, a6 = -1.0 / 6.0, n / 120.0, -n * (8.0 * n - 5.0) / 15120.0
    theta = 1.0 + a2 * x2 + a4 * x2**2 + a6 * x2**3
    dtheta = xi * (2.0 * a2 + 4.0 * a4 * x2 + 6.0 * a6 * x2**2)
    return theta, dtheta


def lane_emden(n: float, points: int = 2001, *, rtol: float = 1e-13) -> LaneEmdenSolution:
    """Integrate the Lane–Emden equation of index ``n`` to its first zero.

    Parameters
    ----------
    n : float
        Polytropic index, 0 ≤ n < 5 (for n ≥ 5 there is no finite surface).
    points : int
        Number of samples returned from centre to surface; they are spaced
        as r/R = (1 − cos πs)/2 in s ∈ [0, 1], denser at both ends where the
        structure changes fastest relative to its scale.
    rtol : float
        Relative tolerance of the DOP853 integrator.

    Returns
    -------
    LaneEmdenSolution
        ξ₁, θ′(ξ₁) and the sampled solution.

    Raises
    ------
    OptionError
        If ``n`` is outside [0, 5) or ``points`` < 3.
    """
    n = float(n)
    if not (0.0 <= n < 5.0) or not np.isfinite(n):
        raise OptionError(
            f"polytropic index must satisfy 0 <= n < 5, got {n}",
            hint="n = 5 and above have no finite radius",
        )
    if points < 3:
        raise OptionError(f"points must be at least 3, got {points}")

    def rhs(xi: float, y: np.ndarray) -> list[float]:
        theta, dtheta = y
        # |θ|ⁿ keeps non-integer n defined for the step that overshoots the zero.
        return [dtheta, -np.abs(theta) ** n * np.sign(theta) - 2.0 * dtheta / xi]

    def surface(xi: float, y: np.ndarray) -> float:
        return y[0]

    surface.terminal = True
    surface.direction = -1
    theta0, dtheta0 = _series(n, np.array(_XI_START))
    sol = solve_ivp(
        rhs, (_XI_START, 1e4), [float(theta0), float(dtheta0)], method="DOP853",
        rtol=rtol, atol=1e-300, events=surface, dense_output=True,
    )
    if sol.t_events[0].size == 0:  # pragma: no cover - n < 5 always has a zero
        raise OptionError(f"no surface found for n = {n}")
    xi1 = float(sol.t_events[0][0])
    dtheta1 = float(sol.y_events[0][0][1])
    s = np.linspace(0.0, 1.0, points)
    xi = xi1 * 0.5 * (1.0 - np.cos(np.pi * s))
    theta = np.empty_like(xi)
    dtheta = np.empty_like(xi)
    inner = xi < _XI_START
    theta[inner], dtheta[inner] = _series(n, xi[inner])
    dense = sol.sol(xi[~inner])
    theta[~inner], dtheta[~inner] = dense[0], dense[1]
    theta[-1], dtheta[-1] = 0.0, dtheta1
    return LaneEmdenSolution(n, xi1, dtheta1, xi, np.maximum(theta, 0.0), dtheta)


def polytrope(
    n: float,
    mass: float = 1.0,
    radius: float = 1.0,
    *,
    gamma1: float = 5.0 / 3.0,
    points: int = 2001,
) -> StellarProfile:
    """A Lane–Emden polytrope of index ``n`` as a `StellarProfile`.

    Parameters
    ----------
    n : float
        Polytropic index, 0 ≤ n < 5.
    mass : float
        Total mass, solar masses.
    radius : float
        Radius, solar radii.
    gamma1 : float
        Constant first adiabatic exponent Γ₁ of the perturbations (need not
        equal 1 + 1/n; when it does not, N² ≠ 0).
    points : int
        Number of mesh points from centre to surface inclusive.

    Returns
    -------
    StellarProfile
        The model in cgs, with N² from the exact polytropic relation
        N² = g (d ln p/dr) [1/Γ₁ − n/(n+1)]; ρ and p are exactly 0 at the
        surface point for n > 0.
    """
    if not (mass > 0 and radius > 0):
        raise OptionError(f"mass and radius must be positive, got {mass}, {radius}")
    sol = lane_emden(n, points)
    m_tot, r_tot = mass * M_SUN_G, radius * R_SUN_CM
    alpha = r_tot / sol.xi1
    rho_c = m_tot / (4.0 * np.pi * alpha**3 * sol.mass_constant)
    p_c = 4.0 * np.pi * G_CGS * alpha**2 * rho_c**2 / (n + 1.0)
    r = alpha * sol.xi
    m = 4.0 * np.pi * alpha**3 * rho_c * (-(sol.xi**2) * sol.dtheta)
    m[0], m[-1] = 0.0, m_tot
    rho = rho_c * sol.theta**n if n > 0 else np.full_like(r, rho_c)
    p = p_c * sol.theta ** (n + 1.0)
    g = np.where(r > 0, G_CGS * m / np.where(r > 0, r, 1.0) ** 2, 0.0)
    # d ln p/dr = (n+1) θ′/(α θ); N² = g d ln p/dr [1/Γ₁ − n/(n+1)] (finite inside).
    with np.errstate(divide="ignore", invalid="ignore"):
        dlnp = (n + 1.0) * sol.dtheta / (alpha * sol.theta)
    n2 = g * dlnp * (1.0 / gamma1 - n / (n + 1.0))
    n2[0] = 0.0
    if n > 0:
        n2[-1] = -np.inf if (1.0 / gamma1 - n / (n + 1.0)) > 0 else np.inf
    return StellarProfile(
        r=r, m=m, rho=rho, p=p, gamma1=np.full_like(r, gamma1), n2=n2,
        mass=m_tot, radius=r_tot, name=f"polytrope n={n:g}",
        meta={"kind": "polytrope", "n": n, "xi1": sol.xi1, "dtheta1": sol.dtheta1},
    )


def homogeneous_sphere(
    mass: float = 1.0, radius: float = 1.0, *, gamma1: float = 5.0 / 3.0, points: int = 2001
) -> StellarProfile:
    """The homogeneous compressible sphere (the n = 0 polytrope) as a `StellarProfile`.

    ρ is constant, m = M (r/R)³ and p = (2π/3) G ρ² (R² − r²); its
    eigenfrequencies are known in closed form (Pekeris 1938, ApJ 88, 189).

    Parameters
    ----------
    mass, radius : float
        Solar masses and solar radii.
    gamma1 : float
        Constant Γ₁.
    points : int
        Number of mesh points.

    Returns
    -------
    StellarProfile
        The model in cgs; N² = −g²ρ/(Γ₁ p) < 0 (convectively unstable).
    """
    profile = polytrope(0.0, mass, radius, gamma1=gamma1, points=points)
    return StellarProfile(
        r=profile.r, m=profile.m, rho=profile.rho, p=profile.p, gamma1=profile.gamma1,
        n2=profile.n2, mass=profile.mass, radius=profile.radius,
        name="homogeneous sphere", meta={**profile.meta, "kind": "homogeneous sphere"},
    )
