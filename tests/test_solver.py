"""Tests of seismo.structure.solver against closed forms and asymptotic theory.

Outside sources, named beside each check:
- the homogeneous compressible sphere, Pekeris 1938 (ApJ 88, 189), closed form
  and sample values via REFERENCES.md §8b (CALC);
- asymptotic p-mode spacing π/τ_c (REFERENCES.md §8c; Tassoul 1980, ApJS 43,
  469, from memory) and g-mode period spacing 2π²/√(l(l+1)) (∫N/r dr)⁻¹
  (Tassoul 1980, from memory), with the integrals computed here from an
  independent dense Lane–Emden solution (scipy DOP853 + quad);
- convergence of a second-order scheme under mesh halving (common practice).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import quad, solve_ivp

from seismo.errors import InputError, OptionError
from seismo.structure.polytropes import homogeneous_sphere, polytrope
from seismo.structure.profiles import StellarProfile
from seismo.structure.solver import (
    Mode,
    dnu_from_radial_modes,
    modes,
    modes_by_sigma2,
    nonradial_modes,
    radial_modes,
)
from seismo.structure.solver import system as solver_system

GAMMA1 = 5.0 / 3.0


def pekeris_sigma2(l: int, n: int, gamma1: float = GAMMA1) -> float:
    """p_n (n ≥ 1) of the homogeneous sphere; Pekeris 1938 via REFERENCES.md §8b (CALC)."""
    d = gamma1 * n * (2 * n + 2 * l + 1) - 4.0
    return d / 2.0 + np.sqrt(d * d / 4.0 + l * (l + 1))


# ------------------------------------------------------------ fixtures
@pytest.fixture(scope="module")
def sphere():
    return homogeneous_sphere(points=2001)


@pytest.fixture(scope="module")
def sphere_modes(sphere):
    return {l: modes_by_sigma2(sphere, l, 0.3, 60.0) for l in (0, 1, 2, 3)}


@pytest.fixture(scope="module")
def poly3():
    return {pts: polytrope(3.0, points=pts) for pts in (501, 1001, 2001)}


@pytest.fixture(scope="module")
def lane_emden3():
    """Independent dense Lane–Emden n = 3 solution (scipy DOP853, rtol 1e-12)."""
    n, x0 = 3.0, 1e-6

    def rhs(xi, y):
        return [y[1], -np.abs(y[0]) ** n * np.sign(y[0]) - 2.0 * y[1] / xi]

    def edge(xi, y):
        return y[0]

    edge.terminal = True
    sol = solve_ivp(rhs, (x0, 20.0), [1.0 - x0**2 / 6.0, -x0 / 3.0], method="DOP853",
                    rtol=1e-12, atol=1e-14, events=edge, dense_output=True)
    xi1, dtheta1 = sol.t_events[0][0], sol.y_events[0][0][1]

    def state(x):
        xi = x * xi1
        return sol.sol(xi) if xi > x0 else (1.0 - xi**2 / 6.0, -xi / 3.0)

    def inv_c(x):  # R/c·√(GM/R³)... i.e. 1/c in units √(R/(GM))
        theta, _ = state(x)
        return 1.0 / np.sqrt(GAMMA1 * theta / ((n + 1.0) * (-xi1 * dtheta1)))

    def n_over_x(x):  # N/r in units √(GM/R³)/R
        theta, dtheta = state(x)
        g = (x * xi1) ** 2 * dtheta / (xi1**2 * dtheta1) / x**2
        n2 = g * (n + 1.0) * dtheta * xi1 / theta * (1.0 / GAMMA1 - n / (n + 1.0))
        return np.sqrt(n2) / x

    def integral(f):
        # x = 1 − t² removes the (1 − x)^−½ surface singularity of 1/c and N.
        return (quad(f, 0.0, 0.5, limit=200)[0]
                + quad(lambda t: 2.0 * t * f(1.0 - t * t), 1e-12, np.sqrt(0.5), limit=200)[0])

    return {"tau": integral(inv_c), "buoyancy": integral(n_over_x)}


# ------------------------------------------------ homogeneous sphere (Pekeris)
PEKERIS_CASES = [(0, n) for n in (1, 2, 3, 4)] + [(1, n) for n in (1, 2, 3)] + [
    (2, n) for n in (1, 2, 3)
] + [(3, 1), (3, 2)]


@pytest.mark.parametrize(("l", "n"), PEKERIS_CASES)
def test_homogeneous_sphere_p_modes(sphere_modes, l, n):
    # Pekeris 1938 via REFERENCES.md §8b (CALC); radial: σ² = Γ₁ n(2n+1) − 4.
    expected = GAMMA1 * n * (2 * n + 1) - 4.0 if l == 0 else pekeris_sigma2(l, n)
    (mode,) = [m for m in sphere_modes[l] if m.n == n]
    assert mode.sigma2 == pytest.approx(expected, rel=1e-4)
    assert mode.n_g == 0 and mode.n_p == (n - 1 if l == 0 else n)
    assert not mode.cowling
    # The error estimate is honest: it bounds the true error of the mesh value.
    exact_uhz = mode.frequency * np.sqrt(expected / mode.sigma2)
    assert abs(mode.frequency_mesh - exact_uhz) < 4.0 * mode.error


@pytest.mark.parametrize(("l", "expected"), [(2, 0.8), (3, 12.0 / 7.0)])
def test_homogeneous_sphere_f_mode(sphere_modes, l, expected):
    # Kelvin mode σ² = 2l(l−1)/(2l+1); Pekeris 1938 via REFERENCES.md §8b (CALC).
    (f_mode,) = [m for m in sphere_modes[l] if m.n == 0]
    assert f_mode.sigma2 == pytest.approx(expected, rel=1e-4)
    assert f_mode.n_p == f_mode.n_g == 0


def test_homogeneous_sphere_sample_table(sphere_modes):
    # Sample values printed in REFERENCES.md §8b (CALC), Γ₁ = 5/3.
    table = {0: [1.0, 12.6667, 31.0, 56.0], 1: [4.75403, 19.43623, 41.04872],
             2: [0.8, 8.38245, 26.22876, 51.11738], 3: [1.714286, 12.0, 33.02997]}
    for l, values in table.items():
        got = [m.sigma2 for m in sphere_modes[l]][: len(values)]
        np.testing.assert_allclose(got, values, rtol=5e-5)


def test_homogeneous_sphere_orders_consecutive(sphere_modes):
    # Labels of REFERENCES.md §8b: radial fundamental n = 1, no l = 1 f mode, f = 0 for l ≥ 2.
    assert [m.n for m in sphere_modes[0]] == [1, 2, 3, 4]
    assert [m.n for m in sphere_modes[1]] == [1, 2, 3]
    assert [m.n for m in sphere_modes[2]] == [0, 1, 2, 3]
    assert [m.n for m in sphere_modes[3]] == [0, 1, 2]


def test_homogeneous_sphere_radial_fundamental_is_homologous(sphere_modes):
    # σ² = 3Γ₁ − 4 belongs to ξ ∝ r (Pekeris 1938 via REFERENCES.md §8b; ξ_r = r
    # solves the radial equation with δp/p = −3Γ₁ constant, checked by hand).
    fundamental = sphere_modes[0][0]
    np.testing.assert_allclose(fundamental.xi_r, fundamental.x, atol=1e-6)
    assert np.all(fundamental.xi_h == 0)
    # Inertia 4π∫ρ x⁴ dx / M with ρ = 3M/(4πR³): 3/5 (same closed form).
    assert fundamental.inertia == pytest.approx(0.6, rel=1e-5)


def test_cowling_differs_and_says_so(sphere):
    # The Cowling approximation does not reproduce Pekeris (REFERENCES.md §8b):
    # dropping Φ′ shifts low-order modes by far more than the 1e-4 tolerance.
    full = modes_by_sigma2(sphere, 2, 5.0, 30.0)
    cow = modes_by_sigma2(sphere, 2, 5.0, 30.0, cowling=True)
    assert all(m.cowling for m in cow) and not any(m.cowling for m in full)
    for n in (1, 2):
        (c,) = [m for m in cow if m.n == n]
        assert abs(c.sigma2 / pekeris_sigma2(2, n) - 1.0) > 1e-3


# ----------------------------------------------------------- n = 3 polytrope
def _by_order(mode_list):
    return {m.n: m for m in mode_list}


@pytest.mark.parametrize(("l", "window"), [(0, (5.0, 90.0)), (2, (0.9, 40.0))])
def test_polytrope3_second_order_convergence(poly3, l, window):
    # Second-order scheme: halving the mesh divides the error by ~4 (common practice;
    # REFERENCES.md §8c asks for convergence under refinement).
    runs = [_by_order(modes_by_sigma2(poly3[p], l, *window)) for p in (501, 1001, 2001)]
    common = sorted(set(runs[0]) & set(runs[1]) & set(runs[2]))
    assert len(common) >= 5
    for n in common:
        f = [r[n].frequency_mesh for r in runs]
        ratio = (f[0] - f[1]) / (f[1] - f[2])
        assert 3.5 < ratio < 4.6, (n, ratio)
        # Richardson values agree far better than the raw mesh values.
        assert abs(runs[1][n].frequency - runs[2][n].frequency) < 0.1 * abs(f[1] - f[2])
        assert abs(runs[2][n].frequency - runs[1][n].frequency) < 3.0 * runs[1][n].error


def test_polytrope3_orders(poly3):
    # Labels: consecutive; radial from 1; l = 1 with full Φ′ skips 0 (no f mode,
    # REFERENCES.md §8b convention); l = 2 has an f mode n = 0 between g and p.
    p = poly3[1001]
    radial = [m.n for m in modes_by_sigma2(p, 0, 1.0, 100.0)]
    assert radial == list(range(1, len(radial) + 1)) and len(radial) >= 6
    dipole = [m.n for m in modes_by_sigma2(p, 1, 0.5, 40.0)]
    assert dipole == [-4, -3, -2, -1, 1, 2, 3]
    quad_ = modes_by_sigma2(p, 2, 0.5, 20.0)
    assert [m.n for m in quad_] == list(range(-7, 2))
    assert all((m.n_g == 0) == (m.n >= 0) for m in quad_)


def test_polytrope3_radial_spacing_tends_to_asymptotic(poly3, lane_emden3):
    # High-order radial spacing → π/τ_c, τ_c = ∫dr/c (REFERENCES.md §8c; Tassoul 1980,
    # from memory); τ_c computed here from an independent Lane–Emden solution.
    found = modes_by_sigma2(poly3[2001], 0, 600.0, 3000.0)
    sigma = np.sqrt([m.sigma2 for m in found])
    assert np.all(np.diff([m.n for m in found]) == 1)
    spacing = np.diff(sigma) / (np.pi / lane_emden3["tau"])
    assert abs(spacing[-1] - 1.0) < 3e-3
    # ... approached from above, monotonically, as the order grows.
    assert np.all(np.diff(spacing) < 0) and np.all(spacing > 1.0)


def test_polytrope3_dipole_period_spacing(poly3, lane_emden3):
    # High-order l = 1 g modes (n_g ≈ 30–55): ΔP → 2π²/√2 (∫N/r dr)⁻¹
    # (Tassoul 1980, from memory) to 1 %, full Φ′ problem.
    found = modes_by_sigma2(poly3[2001], 1, 0.006, 0.02)
    assert len(found) >= 15 and np.all(np.diff([m.n for m in found]) == 1)
    assert all(np.isfinite(m.error) for m in found)
    period = 2.0 * np.pi / np.sqrt([m.sigma2 for m in found])
    delta_pi1 = 2.0 * np.pi**2 / np.sqrt(2.0) / lane_emden3["buoyancy"]
    np.testing.assert_allclose(-np.diff(period) / delta_pi1, 1.0, atol=0.01)


# ------------------------------------------------------------ physical units
def test_units_and_wrappers(poly3):
    # ν = σ √(GM/R³) / 2π (definition); the μHz wrappers select the same modes.
    p = polytrope(3.0, 1.2, 8.0, points=1001)
    found = radial_modes(p, 30.0, 90.0)
    to_uhz = p.dynamical_frequency / (2.0 * np.pi) * 1e6
    for m in found:
        assert m.frequency == pytest.approx(np.sqrt(m.sigma2) * to_uhz, rel=1e-12)
        assert 30.0 <= m.frequency_mesh <= 90.0
        assert m.xi_r[-1] == pytest.approx(1.0) and m.inertia > 0
    # Dimensionless σ² is independent of mass and radius (homology).
    ref = modes_by_sigma2(poly3[1001], 0, found[0].sigma2 * 0.99, found[-1].sigma2 * 1.01)
    np.testing.assert_allclose([m.sigma2 for m in ref], [m.sigma2 for m in found], rtol=1e-9)
    both = modes(p, (0, 2), 30.0, 60.0)
    assert {m.l for m in both} == {0, 2}
    dip = nonradial_modes(p, 1, 40.0, 60.0, cowling=True)
    assert dip and all(m.cowling and m.l == 1 for m in dip)


def test_dnu_fit_recovers_exact_pattern():
    # A pattern ν_n = Δν (n + ε) exactly: the weighted line returns it (identity).
    dnu, eps = 5.5, 1.3
    x = np.linspace(0.0, 1.0, 3)
    fake = [Mode(0, n, n - 1, 0, dnu * (n + eps), 1.0, 0.0, dnu * (n + eps), 1.0, x, x, x)
            for n in range(2, 20)]
    fit = dnu_from_radial_modes(fake, numax_uhz=dnu * (10 + eps))
    assert fit.dnu == pytest.approx(dnu, rel=1e-10)
    assert fit.eps_p == pytest.approx(eps, abs=1e-9)
    fit = dnu_from_radial_modes(fake, numax_uhz=60.0, orders=(8, 9, 10))
    assert fit.dnu == pytest.approx(dnu, rel=1e-10)


def test_dnu_fit_on_polytrope_near_asymptotic(lane_emden3):
    # Δν fitted around numax lies within a few % of (2τ_c)⁻¹ (REFERENCES.md §8c),
    # above it as the spacing approaches from above.
    p = polytrope(3.0, 1.2, 8.0, points=1001)
    asym = 1e6 * p.dynamical_frequency / (2.0 * np.pi) * np.pi / lane_emden3["tau"]
    found = radial_modes(p, 30.0, 100.0)
    fit = dnu_from_radial_modes(found, numax_uhz=63.5)
    assert 1.0 < fit.dnu / asym < 1.03
    assert 0.0 < fit.eps_p < 3.0


# ------------------------------------------------------------- kernel check
def test_banded_determinant_matches_dense():
    # LAPACK banded LU determinant against numpy's dense slogdet (reference library).
    p = polytrope(3.0, points=15)
    st = solver_system._structure(p)
    for l, kind in ((0, "radial"), (2, "cowling"), (1, "full"), (3, "full")):
        system = solver_system._BandedSystem(st, np.arange(15), l, kind)
        ab = system.matrix(3.7)
        dense = np.zeros((system.size, system.size))
        rows = system._band_rows - system.kl - system.ku + system._band_cols
        dense[rows, system._band_cols] = ab[system._band_rows, system._band_cols]
        sign, logdet = system.sign_logdet(3.7)
        ref_sign, ref_logdet = np.linalg.slogdet(dense)
        assert sign == ref_sign and logdet == pytest.approx(ref_logdet, rel=1e-10)


# ------------------------------------------------------------------- errors
def test_errors(sphere):
    with pytest.raises(OptionError, match="non-negative integer"):
        modes_by_sigma2(sphere, -1, 1.0, 2.0)
    with pytest.raises(OptionError, match="non-negative integer"):
        modes_by_sigma2(sphere, 1.5, 1.0, 2.0)
    with pytest.raises(OptionError, match="l >= 1"):
        nonradial_modes(sphere, 0, 10.0, 20.0)
    with pytest.raises(OptionError, match="empty"):
        radial_modes(sphere, 50.0, 50.0)
    with pytest.raises(OptionError, match="empty"):
        nonradial_modes(sphere, 2, 60.0, 50.0)
    with pytest.raises(OptionError, match="above 0"):
        radial_modes(sphere, 0.0, 50.0)
    with pytest.raises(OptionError, match="finite"):
        radial_modes(sphere, 1.0, np.inf)
    with pytest.raises(OptionError, match="radial"):
        modes_by_sigma2(sphere, 0, 1.0, 2.0, cowling=True)
    with pytest.raises(OptionError, match="degrees is empty"):
        modes(sphere, (), 10.0, 20.0)
    with pytest.raises(OptionError, match="max_modes"):
        modes_by_sigma2(sphere, 0, 1.0, 2.0, max_modes=0)
    with pytest.raises(InputError, match="at least 3 radial modes"):
        dnu_from_radial_modes([], 50.0)
    with pytest.raises(OptionError, match="numax"):
        dnu_from_radial_modes([], -1.0)


def test_too_many_g_modes_refused():
    # Dense g-mode spectra (thousands per Δν in red giants) need an explicit limit.
    p = polytrope(3.0, points=501)
    with pytest.raises(OptionError, match="max_modes=20"):
        modes_by_sigma2(p, 1, 1e-4, 1.0, max_modes=20)


def test_profile_without_centre_refused():
    # An envelope-only model has finite gravity at its inner edge: no regular centre.
    p = polytrope(3.0, points=501)
    cut = slice(100, None)
    envelope = StellarProfile(r=p.r[cut], m=p.m[cut], rho=p.rho[cut], p=p.p[cut],
                              gamma1=p.gamma1[cut], n2=p.n2[cut], mass=p.mass,
                              radius=p.radius)
    with pytest.raises(InputError, match="reaching the centre"):
        radial_modes(envelope, 10.0, 200.0)
    bad = StellarProfile(r=p.r, m=p.m, rho=np.where(p.r > 0.5 * p.radius, -1.0, p.rho),
                         p=p.p, gamma1=p.gamma1, mass=p.mass, radius=p.radius)
    with pytest.raises(InputError, match="rho and p > 0"):
        radial_modes(bad, 10.0, 200.0)


def test_dipole_g_modes_of_a_red_giant_like_model_follow_the_buoyancy_integral():
    # Tassoul 1980 (from memory): P_n ≈ (n + ε) ΔΠ1 with ΔΠ1 = 2π²/√2 (∫N/r dr)⁻¹. In the
    # illustrative composite model (q ~ 1e-4) the g-dominated dipole modes near numax have
    # ζ ≈ 1, so their period spacing is ΔΠ1 itself; the p-dominated mode among them makes
    # the one larger gap.
    from seismo.structure import composite_polytrope, period_spacing

    profile = composite_polytrope()
    found = nonradial_modes(profile, 1, 41.0, 41.8)
    periods = np.sort([m.period for m in found])
    spacings = np.diff(periods)
    dpi1 = period_spacing(profile)
    g_like = spacings[np.abs(spacings / dpi1 - 1.0) < 0.1]
    assert g_like.size >= 3
    assert np.allclose(g_like, dpi1, rtol=0.01)
    assert np.median(spacings) == pytest.approx(dpi1, rel=0.01)
