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
from typing import Any

import numpy as np
from numpy.typing import ArrayLike
from scipy.integrate import solve_ivp

from ..errors import OptionError
from .constants import G_CGS, M_SUN_G, R_SUN_CM
from .profiles import StellarProfile

__all__ = [
    "LaneEmdenSolution",
    "lane_emden",
    "emden_solution",
    "polytrope",
    "homogeneous_sphere",
]

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


def _emden_rhs(n: float):
    """Right-hand side of θ″ = −θⁿ − 2θ′/ξ as a first-order system."""

    def rhs(xi: float, y: np.ndarray) -> list[float]:
        theta, dtheta = y
        # |θ|ⁿ sign(θ) keeps non-integer n defined for the step that overshoots the zero.
        return [dtheta, -np.abs(theta) ** n * np.sign(theta) - 2.0 * dtheta / xi]

    return rhs


def _integrate_emden(
    n: float, xi0: float, theta0: float, dtheta0: float, xi_end: float, rtol: float
) -> tuple[Any, float | None, float | None]:
    """Integrate the Emden equation from (ξ₀, θ₀, θ′₀) towards ``xi_end``.

    Returns the dense-output solver result and the first zero of θ with θ′
    there (``None`` when θ stays positive up to ``xi_end``).
    """

    def surface(xi: float, y: np.ndarray) -> float:
        return y[0]

    surface.terminal = True
    surface.direction = -1
    sol = solve_ivp(
        _emden_rhs(n), (xi0, xi_end), [theta0, dtheta0], method="DOP853",
        rtol=rtol, atol=1e-300, events=surface, dense_output=True,
    )
    if sol.t_events[0].size == 0:
        return sol, None, None
    return sol, float(sol.t_events[0][0]), float(sol.y_events[0][0][1])


def _check_index(n: float, upper: float = np.inf) -> float:
    n = float(n)
    if not (np.isfinite(n) and 0.0 <= n < upper):
        bound = "n < 5" if upper == 5.0 else "n finite"
        raise OptionError(
            f"polytropic index must satisfy 0 <= n and {bound}, got {n}",
            hint="n = 5 and above have no finite radius" if upper == 5.0 else None,
        )
    return n


def emden_solution(
    n: float,
    xi: ArrayLike,
    *,
    start: tuple[float, float, float] | None = None,
    rtol: float = 1e-13,
) -> tuple[np.ndarray, np.ndarray]:
    """θ and θ′ of the Lane–Emden equation of index ``n`` at chosen ξ.

    Without ``start`` this is the centrally regular solution (θ(0) = 1,
    θ′(0) = 0, the Lane–Emden function); with ``start = (ξ₀, θ₀, θ′₀)`` it is
    the general (Emden) solution through that point, integrated outward, as
    used for the envelope of `composite_polytrope`. Unlike `lane_emden`, any
    n ≥ 0 is accepted, so n = 5 (no finite surface) can be sampled on a
    finite range.

    Parameters
    ----------
    n : float
        Polytropic index, n ≥ 0, dimensionless.
    xi : array_like, shape (n_xi,)
        Dimensionless radii ξ, non-decreasing, ≥ 0 (≥ ξ₀ with ``start``).
    start : tuple of float, optional
        (ξ₀ > 0, θ₀ > 0, θ′₀) of a general solution.
    rtol : float
        Relative tolerance of the DOP853 integrator.

    Returns
    -------
    theta, dtheta : numpy.ndarray, shape (n_xi,)
        θ(ξ) and dθ/dξ, dimensionless.

    Raises
    ------
    OptionError
        If ``n`` < 0, ``xi`` is not non-decreasing from the start, or θ
        reaches zero before the largest ξ requested.
    """
    n = _check_index(n)
    xi = np.asarray(xi, dtype=float)
    if xi.ndim != 1 or xi.size == 0 or np.any(np.diff(xi) < 0) or not np.all(np.isfinite(xi)):
        raise OptionError("xi must be a non-empty, finite, non-decreasing 1-D array")
    theta = np.empty_like(xi)
    dtheta = np.empty_like(xi)
    if start is None:
        if xi[0] < 0:
            raise OptionError(f"xi must be >= 0 for the central solution, got {xi[0]}")
        inner = xi < _XI_START
        theta[inner], dtheta[inner] = _series(n, xi[inner])
        xi0 = _XI_START
        y0 = [float(v) for v in _series(n, np.array(_XI_START))]
    else:
        xi0, theta0, dtheta0 = (float(v) for v in start)
        if not (xi0 > 0 and theta0 > 0) or xi[0] < xi0:
            raise OptionError(
                f"start needs xi0 > 0, theta0 > 0 and xi >= xi0; got {start} and xi[0] = {xi[0]}"
            )
        inner = np.zeros(xi.shape, dtype=bool)
        y0 = [theta0, dtheta0]
    outer = ~inner
    if np.any(outer):
        sol, xi_zero, _ = _integrate_emden(n, xi0, y0[0], y0[1], max(xi[-1], xi0), rtol)
        if xi_zero is not None and xi_zero < xi[-1]:
            raise OptionError(
                f"theta reaches zero at xi = {xi_zero:.6g}, before xi = {xi[-1]:.6g}",
                hint="request xi only up to the surface (see lane_emden for xi1)",
            )
        dense = sol.sol(xi[outer])
        theta[outer], dtheta[outer] = dense[0], dense[1]
    return theta, dtheta


def lane_emden(n: float, points: int = 2001, *, rtol: float = 1e-13) -> LaneEmdenSolution:
    """Integrate the Lane–Emden equation of index ``n`` to its first zero.

    Parameters
    ----------
    n : float
        Polytropic index, 0 ≤ n < 5 (for n ≥ 5 there is no finite surface;
        use `emden_solution` to sample those on a finite range).
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
    n = _check_index(n, 5.0)
    if points < 3:
        raise OptionError(f"points must be at least 3, got {points}")
    theta0, dtheta0 = _series(n, np.array(_XI_START))
    sol, xi1, dtheta1 = _integrate_emden(n, _XI_START, float(theta0), float(dtheta0), 1e4, rtol)
    if xi1 is None:  # pragma: no cover - n < 5 always has a zero
        raise OptionError(f"no surface found for n = {n}")
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
