"""Seismic observables of stellar models against closed forms and independent quadrature."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy.integrate import quad, solve_ivp

from seismo.errors import InputError, OptionError
from seismo.relations import d01_from_dnu
from seismo.scaling import SOLAR_REFERENCES, SUN
from seismo.structure import StellarProfile, homogeneous_sphere, polytrope
from seismo.structure.constants import G_CGS, L_SUN_CGS, M_SUN_G, R_SUN_CM, SIGMA_SB_CGS
from seismo.structure.dipole import predicted_dipole_modes
from seismo.structure.observables import (
    asymptotic_dnu,
    mode_cavities,
    period_spacing,
    seismic_observables,
)

GAMMA1 = 5.0 / 3.0


def _emden(n: float):
    """Independent Lane–Emden solution: ξ₁, θ′(ξ₁) and a dense θ(ξ), θ′(ξ) (DOP853)."""
    x0 = 1e-4
    theta0 = 1.0 - x0**2 / 6.0 + n * x0**4 / 120.0
    dtheta0 = -x0 / 3.0 + n * x0**3 / 30.0

    def rhs(x, y):
        return [y[1], -np.abs(y[0]) ** n * np.sign(y[0]) - 2.0 * y[1] / x]

    def surface(x, y):
        return y[0]

    surface.terminal = True
    sol = solve_ivp(rhs, (x0, 100.0), [theta0, dtheta0], method="DOP853", rtol=1e-12,
                    atol=1e-14, events=surface, dense_output=True)
    xi1 = float(sol.t_events[0][0])
    dtheta1 = float(sol.y_events[0][0][1])

    def dense(xi):
        """θ′(ξ) and (ξ₁ − ξ)/θ(ξ)."""
        theta, dtheta = sol.sol(xi)
        u = xi1 - xi
        if u < 1e-4:
            # Taylor at the surface (θ = 0, θ″ = −2θ′/ξ): θ = −θ′₁u(1 + u/ξ₁) + O(u³),
            # so the ratio (ξ₁ − ξ)/θ stays accurate where both vanish.
            return dtheta, 1.0 / (-dtheta1 * (1.0 + u / xi1))
        return dtheta, u / theta

    return xi1, dtheta1, dense, x0


def _polytrope_constants(n: float, mass: float, radius: float):
    xi1, dtheta1, dense, x0 = _emden(n)
    alpha = radius * R_SUN_CM / xi1
    rho_c = mass * M_SUN_G / (4.0 * np.pi * alpha**3 * (-(xi1**2) * dtheta1))
    return xi1, alpha, rho_c, dense, x0


def _quad_dnu(n: float, mass: float = 1.0, radius: float = 1.0) -> float:
    """(2∫dr/c)⁻¹ in μHz with c² = Γ1 (p_c/ρ_c) θ, by quad with the (ξ₁−ξ)^-½ weight."""
    xi1, alpha, rho_c, dense, x0 = _polytrope_constants(n, mass, radius)
    k = GAMMA1 * 4.0 * np.pi * G_CGS * alpha**2 * rho_c / (n + 1.0)

    def smooth(xi):
        if xi <= x0:
            return math.sqrt((xi1 - xi) / (1.0 - xi**2 / 6.0))
        return math.sqrt(dense(xi)[1])

    value, _ = quad(smooth, 0.0, xi1, weight="alg", wvar=(0.0, -0.5), epsabs=0, epsrel=1e-10,
                    limit=200)
    return 1e6 / (2.0 * alpha * value / math.sqrt(k))


def _quad_dpi1(n: float, mass: float = 1.0, radius: float = 1.0) -> float:
    """√2π² (∫N/r dr)⁻¹ in s with N² = 4πGρ_c (n+1)(n/(n+1) − 1/Γ1) θ′²/θ, by quad."""
    xi1, alpha, rho_c, dense, x0 = _polytrope_constants(n, mass, radius)
    amp = math.sqrt(4.0 * np.pi * G_CGS * rho_c * (n + 1.0) * (n / (n + 1.0) - 1.0 / GAMMA1))

    def smooth(xi):
        if xi <= x0:
            return 1.0 / 3.0 * math.sqrt(xi1 - xi)
        dtheta, ratio = dense(xi)
        return abs(dtheta) / xi * math.sqrt(ratio)

    value, _ = quad(smooth, 0.0, xi1, weight="alg", wvar=(0.0, -0.5), epsabs=0, epsrel=1e-10,
                    limit=200)
    return math.sqrt(2.0) * np.pi**2 / (amp * value)


# ----------------------------------------------------------------- Δν_asym


def test_dnu_of_homogeneous_sphere_matches_closed_form():
    # closed form: c² = (2π/3)GρΓ1(R² − r²), so ∫dr/c = (π/2) R / √((2π/3)GρΓ1R²)
    for mass, radius in ((1.0, 1.0), (1.3, 11.0)):
        model = homogeneous_sphere(mass, radius)
        rho = model.rho[0]
        tau = 0.5 * np.pi / math.sqrt(2.0 * np.pi / 3.0 * G_CGS * rho * GAMMA1)
        assert asymptotic_dnu(model) == pytest.approx(1e6 / (2.0 * tau), rel=1e-6)


@pytest.mark.parametrize("n", [1.0, 1.5, 3.0, 4.0])
def test_dnu_of_polytropes_matches_quadrature_on_lane_emden(n):
    # CALC: independent Lane–Emden integration + scipy quad with the surface singularity weight
    model = polytrope(n, 1.2, 10.0, points=2001)
    assert asymptotic_dnu(model) == pytest.approx(_quad_dnu(n, 1.2, 10.0), rel=2e-6)


def test_dnu_converges_under_mesh_refinement_at_second_order():
    # common practice: the error of a second-order rule drops by ~4 when the mesh doubles
    exact = _quad_dnu(3.0)
    errors = [abs(asymptotic_dnu(polytrope(3.0, points=p)) - exact) for p in (251, 501, 1001)]
    assert errors[0] / errors[1] > 3.0 and errors[1] / errors[2] > 3.0


def test_dnu_ignores_points_above_the_photosphere():
    # closed form for the homogeneous sphere; an atmosphere point beyond R must not count
    model = homogeneous_sphere()
    extended = StellarProfile(
        r=np.append(model.r, 1.05 * model.radius), m=np.append(model.m, model.mass),
        rho=np.append(model.rho, 1e-9), p=np.append(model.p, 1e-3),
        gamma1=np.append(model.gamma1, GAMMA1), n2=np.append(model.n2, -1.0),
        mass=model.mass, radius=model.radius)
    assert asymptotic_dnu(extended) == pytest.approx(asymptotic_dnu(model), rel=1e-3)


def test_dnu_rejects_a_profile_without_sound_speed():
    model = homogeneous_sphere(points=11)
    dead = StellarProfile(r=model.r, m=model.m, rho=model.rho, p=np.zeros(11),
                          gamma1=model.gamma1, mass=model.mass, radius=model.radius)
    with pytest.raises(InputError, match="sound speed is zero"):
        asymptotic_dnu(dead)


# ----------------------------------------------------------------- ΔΠ1


@pytest.mark.parametrize("n", [3.0, 4.0])
def test_dpi1_of_radiative_polytropes_matches_quadrature(n):
    # CALC: Tassoul 1980 (from memory) integral, independent quad on the Lane–Emden solution
    model = polytrope(n, 1.0, 1.0, points=4001)
    assert period_spacing(model, 1) == pytest.approx(_quad_dpi1(n), rel=5e-5)


def test_dpi_l_scales_as_one_over_root_l_l_plus_one():
    # closed form (Tassoul 1980, from memory): ΔΠ2 = ΔΠ1/√3
    model = polytrope(3.0)
    assert period_spacing(model, 2) == pytest.approx(period_spacing(model, 1) / math.sqrt(3.0),
                                                     rel=1e-12)


def test_dpi1_is_null_without_buoyancy_cavity():
    # closed form: the n = 0 (and n = 1 with Γ1 = 5/3) models have N² < 0 everywhere
    for model in (homogeneous_sphere(), polytrope(1.0)):
        assert period_spacing(model) is None
        obs = seismic_observables(model, teff=5000.0)
        assert obs.dpi1 is None and "dpi1:no_buoyancy_cavity" in obs.flags


def test_dpi1_regular_centre_with_and_without_r_zero():
    # CALC: cutting the centre point off the mesh changes ∫N/r dr only by O(r0²)
    model = polytrope(3.0, points=4001)
    keep = slice(1, None)
    cut = StellarProfile(r=model.r[keep], m=model.m[keep], rho=model.rho[keep],
                         p=model.p[keep], gamma1=model.gamma1[keep], n2=model.n2[keep],
                         mass=model.mass, radius=model.radius)
    assert period_spacing(cut) == pytest.approx(period_spacing(model), rel=1e-6)


def test_dpi1_rejects_nan_buoyancy_and_bad_degree():
    model = polytrope(3.0, points=51)
    n2 = model.n2.copy()
    n2[10] = np.nan
    bad = StellarProfile(r=model.r, m=model.m, rho=model.rho, p=model.p, gamma1=model.gamma1,
                         n2=n2, mass=model.mass, radius=model.radius)
    with pytest.raises(InputError, match="N² is NaN"):
        period_spacing(bad)
    with pytest.raises(OptionError, match="l must be an integer >= 1"):
        period_spacing(model, 0)


# ----------------------------------------------------------------- scaling numax, Δν


@pytest.mark.parametrize("key", sorted(SOLAR_REFERENCES))
def test_solar_model_gives_the_solar_reference_values(key):
    # Kjeldsen & Bedding 1995 scaling: a model with M☉, R☉, Teff☉ gives numax☉ and Δν☉ exactly
    ref = SOLAR_REFERENCES[key]
    obs = seismic_observables(polytrope(3.0, 1.0, 1.0, points=501), reference=key,
                              teff=ref.teff)
    assert obs.numax == pytest.approx(ref.numax, rel=1e-12)
    assert obs.dnu_scaling == pytest.approx(ref.dnu, rel=1e-12)
    assert obs.logg == pytest.approx(SUN.logg, abs=1e-10)
    assert obs.f_dnu == pytest.approx(obs.dnu_asym / ref.dnu, rel=1e-12)


def test_scaling_follows_g_and_teff_like_kjeldsen_bedding():
    # Brown et al. 1991 / Kjeldsen & Bedding 1995: numax ∝ M R⁻² Teff^-½, Δν ∝ (M/R³)^½
    ref = SOLAR_REFERENCES["huber2011"]
    obs = seismic_observables(polytrope(3.0, 1.2, 10.0, points=501), teff=4800.0)
    assert obs.numax == pytest.approx(ref.numax * 1.2 / 100.0 * (4800.0 / ref.teff) ** -0.5,
                                      rel=1e-4)
    assert obs.dnu_scaling == pytest.approx(ref.dnu * math.sqrt(1.2 / 1000.0), rel=1e-4)
    # homology (closed form): f_Δν of a polytrope does not depend on M and R
    sun_like = seismic_observables(polytrope(3.0, 1.0, 1.0, points=501), teff=5777.0)
    assert obs.f_dnu == pytest.approx(sun_like.f_dnu, rel=1e-6)


def test_teff_from_luminosity_by_stefan_boltzmann_and_null_without():
    # closed form: L = 4πR²σT⁴
    base = polytrope(3.0, 1.0, 10.0, points=201)
    lum = 4.0 * np.pi * base.radius**2 * SIGMA_SB_CGS * 4700.0**4
    model = StellarProfile(r=base.r, m=base.m, rho=base.rho, p=base.p, gamma1=base.gamma1,
                           n2=base.n2, mass=base.mass, radius=base.radius, luminosity=lum)
    obs = seismic_observables(model)
    assert obs.teff == pytest.approx(4700.0, rel=1e-10)
    assert obs.luminosity == pytest.approx(lum / L_SUN_CGS, rel=1e-12)
    assert "teff:from_luminosity_and_radius" in obs.flags
    bare = seismic_observables(base)
    assert bare.numax is None and "numax:no_teff_nor_luminosity" in bare.flags
    assert bare.cavities is None and "cavities:no_frequency" in bare.flags
    with pytest.raises(OptionError, match="teff must be finite"):
        seismic_observables(base, teff=-1.0)
    with pytest.raises(OptionError, match="unknown solar reference"):
        seismic_observables(base, teff=4700.0, reference="nope")


def test_dnu_from_radial_modes_recovers_an_exact_comb():
    # closed form: equally spaced radial modes have slope Δν exactly
    model = polytrope(3.0, 1.2, 10.0, points=501)
    modes = 4.1 * (np.arange(5, 15) + 0.9)
    obs = seismic_observables(model, teff=4800.0, radial_frequencies=modes)
    assert obs.dnu_modes == pytest.approx(4.1, rel=1e-10)
    assert obs.f_dnu_modes == pytest.approx(4.1 / obs.dnu_scaling, rel=1e-10)
    with pytest.raises(OptionError, match="at least 2 finite"):
        seismic_observables(model, teff=4800.0, radial_frequencies=[30.0])


# ----------------------------------------------------------------- acoustic cut-off


def test_acoustic_cutoff_isothermal_values():
    # closed form: c/(4πH_p) with H_p = p/(ρg); a polytrope has no atmosphere (null)
    base = polytrope(3.0, 1.0, 10.0, points=201)
    obs = seismic_observables(base, teff=4800.0)
    assert obs.nu_ac_model is None and "nu_ac_model:no_atmosphere" in obs.flags
    # the scaling value ∝ g Teff^-½ (isothermal ideal gas at Teff, μ = 1.3)
    hotter = seismic_observables(base, teff=4 * 4800.0)
    assert hotter.nu_ac_scaling == pytest.approx(obs.nu_ac_scaling / 2.0, rel=1e-12)
    # an isothermal photosphere at Teff with μ = 1.3 reproduces the scaling value exactly
    g = base.surface_gravity
    rho_s = 1e-9
    p_s = rho_s * 1.380649e-16 * 4800.0 / (1.3 * 1.66053906660e-24)
    rho, p = base.rho.copy(), base.p.copy()
    rho[-1], p[-1] = rho_s, p_s
    with_atm = StellarProfile(r=base.r, m=base.m, rho=rho, p=p, gamma1=base.gamma1,
                              n2=base.n2, mass=base.mass, radius=base.radius)
    both = seismic_observables(with_atm, teff=4800.0)
    expected = math.sqrt(GAMMA1 * p_s / rho_s) * rho_s * g / p_s / (4 * np.pi) * 1e6
    assert both.nu_ac_model == pytest.approx(expected, rel=1e-12)
    assert both.nu_ac_model == pytest.approx(both.nu_ac_scaling, rel=1e-6)


# ----------------------------------------------------------------- cavities and q


def _toy_profile(r_b: float, n_core2: float, c: float, points: int = 20001) -> StellarProfile:
    """A non-hydrostatic test profile: constant c, N² = n_core² inside r_b, 0 outside."""
    radius = R_SUN_CM
    r = np.linspace(0.0, radius, points)
    rho = np.full(points, 1.0)
    p = rho * c**2 / GAMMA1
    n2 = np.where(r <= r_b, n_core2, 0.0)
    m = M_SUN_G * (r / radius) ** 3
    return StellarProfile(r=r, m=m, rho=rho, p=p, gamma1=np.full(points, GAMMA1), n2=n2,
                          mass=M_SUN_G, radius=radius)


def _toy_integral(r_b: float, omega: float, c: float) -> float:
    """Closed form of ∫_{r_b}^{√2c/ω} √(2/r² − ω²/c²) dr (N = 0 in the zone, l = 1)."""
    a, k = math.sqrt(2.0), omega / c
    s = math.sqrt(a**2 - (k * r_b) ** 2)
    return a * math.log((a + s) / (k * r_b)) - s


def test_evanescent_integral_and_q_match_closed_form():
    # closed form (CALC): with c constant and N = 0 in the zone, κ² = 2/r² − ω²/c²
    c = 2.0e6
    freq = 50.0  # μHz
    omega = 2 * np.pi * freq * 1e-6
    r2 = math.sqrt(2.0) * c / omega
    previous_q = 0.25
    for r_b in (0.9 * r2, 0.6 * r2, 0.3 * r2):
        cav = mode_cavities(_toy_profile(r_b, (10 * omega) ** 2, c), freq)
        t_exact = _toy_integral(r_b, omega, c)
        assert cav.evanescent_zone[0] == pytest.approx(r_b / R_SUN_CM, abs=1e-4)
        assert cav.evanescent_zone[1] == pytest.approx(r2 / R_SUN_CM, rel=1e-6)
        assert cav.evanescent_integral == pytest.approx(t_exact, rel=2e-3)
        # Takata 2016 / Unno et al. 1989 weak coupling (from memory): q = exp(−2T)/4
        assert 0.0 < cav.q_weak < 0.25
        assert cav.q_weak == pytest.approx(0.25 * math.exp(-2 * t_exact), rel=5e-3)
        assert cav.q_weak < previous_q  # a wider evanescent zone couples more weakly
        previous_q = cav.q_weak
        assert cav.g_cavity[1] == cav.evanescent_zone[0]
        assert cav.p_cavity[0] == cav.evanescent_zone[1]
        assert cav.p_cavity[1] == pytest.approx(1.0)


def test_cavities_reported_in_observables_and_flagged_approximate():
    c = 2.0e6
    model = _toy_profile(2.0e10, 1e-4, c, points=4001)
    obs = seismic_observables(model, teff=5000.0, frequency=50.0)
    assert obs.q_weak == obs.cavities.q_weak and "q_weak:approximate" in obs.flags
    with pytest.raises(OptionError, match="frequency must be finite"):
        mode_cavities(model, 0.0)


def test_to_dict_is_json_safe_with_units():
    model = _toy_profile(2.0e10, 1e-4, 2.0e6, points=2001)
    out = seismic_observables(model, teff=5000.0, frequency=50.0).to_dict()
    text = json.dumps(out, allow_nan=False)
    back = json.loads(text)
    assert back["units"]["dnu_asym"] == "μHz" and back["units"]["dpi1"] == "s"
    assert isinstance(back["evanescent_zone"], list) and len(back["evanescent_zone"]) == 2
    assert back["mass"] == pytest.approx(1.0) and back["radius"] == pytest.approx(1.0)
    assert back["flags"] == list(seismic_observables(model, teff=5000.0, frequency=50.0).flags)


# ----------------------------------------------------------------- predicted dipole modes


def test_predicted_modes_reduce_to_p_modes_as_q_vanishes():
    # CALC: tan θp = q tan θg gives ν − ν_p ≈ (Δν/π) q tan θg(ν_p), which → 0 with q
    dnu, dpi1 = 4.0, 80.0
    radial = dnu * (np.arange(5, 10) + 0.93)
    nominal = radial + dnu * (0.5 - float(d01_from_dnu(dnu)))
    theta_g = np.pi / (nominal * 1e-6 * dpi1)
    far = np.abs(np.cos(theta_g)) > 0.3  # not close to a pure g mode
    assert far.sum() >= 2
    for q in (1e-4, 1e-6):
        pred = predicted_dipole_modes(radial, dnu, dpi1, q)
        nearest = pred.frequency[np.abs(pred.frequency[None, :] - nominal[:, None]).argmin(1)]
        shift = nearest - nominal
        predicted = dnu / np.pi * q * np.tan(theta_g)
        assert np.allclose(shift[far], predicted[far], rtol=0.05, atol=1e-9)
        assert np.all(np.abs(shift[far]) < 50 * q * dnu)


def test_predicted_modes_period_spacing_tends_to_zeta_dpi1():
    # REFERENCES §5b (Mosser et al. 2015, CALC check): ΔP ≈ ζ(ν_mid) ΔΠ1 to about 1e-3
    dnu, dpi1, q = 4.0, 80.0, 0.15
    radial = dnu * (np.arange(5, 10) + 0.93)
    pred = predicted_dipole_modes(radial, dnu, dpi1, q, eps_g=0.28, freq_min=25.0,
                                  freq_max=36.0)
    period = pred.period
    spacing = period[:-1] - period[1:]
    mid = 0.5 * (pred.frequency[:-1] + pred.frequency[1:])
    from seismo.relations import zeta

    expected = np.asarray(zeta(mid, pred.nominal_p, dnu, dpi1, q)) * dpi1
    assert np.allclose(spacing, expected, rtol=5e-3)
    assert np.all((pred.zeta > 0) & (pred.zeta < 1))
    # most modes are g-dominated: ζ near 1 between the p modes (Mosser et al. 2015)
    assert np.median(pred.zeta) > 0.9


def test_predicted_modes_use_project_d01_and_validate():
    # Mosser et al. 2011 (from memory) d01 through seismo.relations
    radial = np.array([20.0, 24.0, 28.0])
    pred = predicted_dipole_modes(radial, 4.0, 80.0, 0.1)
    assert pred.d01 == pytest.approx(float(d01_from_dnu(4.0)))
    assert np.allclose(pred.nominal_p, radial + 4.0 * (0.5 - pred.d01))
    custom = predicted_dipole_modes(radial, 4.0, 80.0, 0.1, d01=0.0)
    assert np.allclose(custom.nominal_p, radial + 2.0)
    with pytest.raises(OptionError, match="q must be finite"):
        predicted_dipole_modes(radial, 4.0, 80.0, 0.0)
    with pytest.raises(OptionError, match="radial_frequencies must be"):
        predicted_dipole_modes([], 4.0, 80.0, 0.1)
