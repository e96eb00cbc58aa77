"""Tests of seismo.scaling against the scaling relations, IAU constants and
first-order error propagation.

Each check names its source; REFERENCES.md flags are carried over ("CALC",
"CONF", "from memory").
"""

from __future__ import annotations

import dataclasses
import json
import math

import numpy as np
import pytest
from reference_cases import SCALING_CASES

from seismo import scaling
from seismo.errors import OptionError
from seismo.results import StarResult
from seismo.scaling import (
    SOLAR_REFERENCES,
    SUN,
    SolarReference,
    scaling_density,
    scaling_estimates,
    scaling_logg,
    scaling_luminosity,
    scaling_mass,
    scaling_radius,
)

CASES = [(name, *case) for name, cases in SCALING_CASES.items() for case in cases]
STAR = {"numax": 30.0, "dnu": 4.0, "teff": 4750.0}


@pytest.mark.parametrize(
    ("name", "source", "inputs", "expected", "rtol"),
    CASES,
    ids=[f"{c[0]}-{c[2]['reference']}-{c[2]['numax']:g}" for c in CASES],
)
def test_worked_vectors(name, source, inputs, expected, rtol):
    result = getattr(scaling, name)(**inputs)
    np.testing.assert_allclose(result, expected, rtol=rtol, err_msg=source)


def test_iau_constants():
    # IAU 2015 B3 (Prša et al. 2016, CONF) with G from CODATA 2018; derived values CALC
    # in REFERENCES §1a.
    assert SUN.logg == pytest.approx(4.4381, abs=5e-5)
    assert SUN.density == pytest.approx(1.40978, rel=1e-5)
    assert SUN.mass_kg == pytest.approx(1.98841e30, rel=1e-5)
    # The set is self-consistent: 4πR²σT⁴ = L☉ (REFERENCES §1a, CALC; σ_SB CODATA).
    sigma_sb = 5.670374419e-8
    lum = 4 * math.pi * SUN.radius_m**2 * sigma_sb * SUN.teff**4
    assert lum == pytest.approx(SUN.luminosity_w, rel=1e-3)


@pytest.mark.parametrize("key", sorted(SOLAR_REFERENCES))
def test_solar_inputs_give_the_sun(key):
    # CALC: x = y = t = 1 gives exactly 1 M☉, 1 R☉, 1 L☉, log g☉ and ρ̄☉ (IAU 2015 B3).
    ref = SOLAR_REFERENCES[key]
    args = (ref.numax, ref.dnu, ref.teff)
    assert scaling_mass(*args, reference=key) == pytest.approx(1.0, rel=1e-12)
    assert scaling_radius(*args, reference=key) == pytest.approx(1.0, rel=1e-12)
    assert scaling_luminosity(*args, reference=key) == pytest.approx(1.0, rel=1e-12)
    assert scaling_logg(ref.numax, ref.teff, reference=key) == pytest.approx(4.4381, abs=5e-5)
    assert scaling_density(ref.dnu, reference=key) == pytest.approx(1.40978, rel=1e-5)


def test_luminosity_is_r2_t4():
    # REFERENCES §2a, CALC: L = R² t⁴ = x² y⁻⁴ t⁵.
    rng = np.random.default_rng(3)
    numax, dnu, teff = rng.uniform(10, 200, 50), rng.uniform(2, 15, 50), rng.uniform(4000, 5200, 50)
    ref = SOLAR_REFERENCES["huber2011"]
    t = teff / ref.teff
    lum = scaling_luminosity(numax, dnu, teff)
    np.testing.assert_allclose(lum, scaling_radius(numax, dnu, teff) ** 2 * t**4, rtol=1e-12)
    x, y = numax / ref.numax, dnu / ref.dnu
    np.testing.assert_allclose(lum, x**2 * y**-4 * t**5, rtol=1e-12)


def test_mass_from_gravity_and_density():
    # REFERENCES §2a, CALC: M/M☉ = (g/g☉)³ (ρ̄/ρ̄☉)⁻².
    g = 10 ** (scaling_logg(STAR["numax"], STAR["teff"]) - SUN.logg)
    rho = scaling_density(STAR["dnu"]) / SUN.density
    assert scaling_mass(**STAR) == pytest.approx(g**3 / rho**2, rel=1e-12)


def test_correction_factor_sensitivities():
    # REFERENCES §2a, CALC: M ∝ f_Δν⁴, R ∝ f_Δν², M ∝ f_νmax⁻³, R ∝ f_νmax⁻¹.
    m0, r0 = scaling_mass(**STAR), scaling_radius(**STAR)
    assert scaling_mass(**STAR, f_dnu=1.01) / m0 == pytest.approx(1.01**4, rel=1e-12)
    assert scaling_radius(**STAR, f_dnu=1.01) / r0 == pytest.approx(1.01**2, rel=1e-12)
    assert scaling_mass(**STAR, f_numax=1.02) / m0 == pytest.approx(1.02**-3, rel=1e-12)
    assert scaling_radius(**STAR, f_numax=1.02) / r0 == pytest.approx(1.02**-1, rel=1e-12)
    # "a 1% change in f_Δν changes M by about 4% and R by about 2%"
    assert scaling_mass(**STAR, f_dnu=1.01) / m0 - 1 == pytest.approx(0.04, abs=0.001)


def test_arrays_broadcast_and_scalars_give_floats():
    # Common practice: NumPy broadcasting; a grid keeps its shape.
    numax = np.linspace(20, 60, 6).reshape(2, 3)
    out = scaling_mass(numax, 4.0, np.array([4700.0, 4800.0, 4900.0]))
    assert out.shape == (2, 3)
    np.testing.assert_allclose(out[1, 2], scaling_mass(60.0, 4.0, 4900.0))
    assert isinstance(scaling_radius(30.0, 4.0, 4750.0), float)
    assert scaling_density(np.array([4.0, 9.0])).shape == (2,)


def test_own_reference_set():
    ref = SolarReference("mine", 3100.0, 135.0, 5772.0, "test", "a set of one's own")
    assert scaling_mass(3100.0, 135.0, 5772.0, reference=ref) == pytest.approx(1.0)
    with pytest.raises(dataclasses.FrozenInstanceError):
        SOLAR_REFERENCES["huber2011"].numax = 3000.0


# ---------------------------------------------------------------------------
# Monte Carlo propagation
# ---------------------------------------------------------------------------


def _analytic(sx, sy, st, rho):
    """First-order fractional errors (REFERENCES §2a exponents, CALC)."""
    cov = 2 * rho * sx * sy
    return {
        "mass": math.sqrt(9 * sx**2 + 16 * sy**2 + 2.25 * st**2 - 12 * cov),
        "radius": math.sqrt(sx**2 + 4 * sy**2 + 0.25 * st**2 - 2 * cov),
        "luminosity": math.sqrt(4 * sx**2 + 16 * sy**2 + 25 * st**2 - 8 * cov),
        "density": 2 * sy,
        # log g in dex: log10(e) times the fractional error of g.
        "logg": math.log10(math.e) * math.sqrt(sx**2 + 0.25 * st**2),
    }


@pytest.mark.parametrize("rho", [0.0, 0.6, -0.5])
def test_monte_carlo_matches_first_order_propagation(rho):
    # CALC: for small errors the 16–84 half-width equals the linear propagation,
    # including the −24ρσxσy term of the mass (σM/M = √(9σx² + 16σy² + 9σt²/4 − 24ρσxσy)).
    sx, sy, st = 0.008, 0.004, 0.01
    est = scaling_estimates(
        STAR["numax"], sx * STAR["numax"], STAR["dnu"], sy * STAR["dnu"],
        STAR["teff"], st * STAR["teff"],
        correlation=rho, systematic=False, n_draws=200_000, rng=11,
    )
    expected = _analytic(sx, sy, st, rho)
    for name in ("mass", "radius", "luminosity", "density"):
        got = getattr(est, name)
        assert got.error / got.value == pytest.approx(expected[name], rel=0.02), name
    assert est.logg.error == pytest.approx(expected["logg"], rel=0.02)


def test_correlation_changes_the_mass_error():
    # CALC: a positive ν_max–Δν correlation partly cancels in M ∝ x³y⁻⁴.
    kwargs = dict(numax_err=0.3, dnu_err=0.02, teff=4750.0, teff_err=1.0, systematic=False,
                  n_draws=50_000, rng=2)
    free = scaling_estimates(30.0, dnu=4.0, **kwargs, correlation=0.0)
    tied = scaling_estimates(30.0, dnu=4.0, **kwargs, correlation=0.8)
    assert tied.mass.error < 0.7 * free.mass.error


def test_value_is_the_relation_at_the_central_inputs():
    est = scaling_estimates(30.0, 0.6, 4.0, 0.04, 4750.0, 80.0, rng=0)
    assert est.mass.value == scaling_mass(**STAR)
    assert est.radius.value == scaling_radius(**STAR)
    assert est.logg.value == scaling_logg(30.0, 4750.0)
    assert est.density.value == scaling_density(4.0)
    assert est.luminosity.value == scaling_luminosity(**STAR)
    assert est.flags == []


def test_reference_systematics_match_the_spread_of_the_worked_vectors():
    # REFERENCES §1b (CALC): half the range of the masses over the three sets of the worked
    # table (mosser2013 and kallinger2010 are the extremes of all observed-Δν sets).
    frac = scaling.reference_systematics()
    assert frac["mass"] == pytest.approx(0.5 * math.log(0.9343 / 0.8580), rel=3e-3)
    assert frac["radius"] == pytest.approx(0.5 * math.log(10.235 / 9.918), rel=3e-3)
    # "Changing the reference set alone moves masses by about ±5% and radii by about ±2%".
    assert 0.03 < frac["mass"] < 0.06
    assert 0.01 < frac["radius"] < 0.025


def test_systematic_widens_errors_by_the_documented_amount():
    args = (30.0, 0.3, 4.0, 0.02, 4750.0, 50.0)
    stat = scaling_estimates(*args, systematic=False, rng=5)
    full = scaling_estimates(*args, systematic=True, rng=5)
    frac = scaling.reference_systematics()
    for name in ("mass", "radius", "density", "luminosity"):
        a, b = getattr(stat, name), getattr(full, name)
        assert b.value == a.value
        assert b.error**2 - a.error**2 == pytest.approx((frac[name] * a.value) ** 2, rel=1e-9)
        assert full.details["statistical_error"][name] == pytest.approx(a.error, rel=1e-12)
    assert full.logg.error**2 - stat.logg.error**2 == pytest.approx(frac["logg"] ** 2, rel=1e-9)
    # The mass is never quoted better than the reference spread (REFERENCES §1b).
    assert full.mass.error / full.mass.value >= frac["mass"]


def test_without_teff():
    est = scaling_estimates(30.0, 0.3, 4.0, 0.02, rng=1)
    assert est.mass is None and est.radius is None and est.luminosity is None
    assert "mass_radius_need_teff" in est.flags and "logg_teff_assumed" in est.flags
    assert est.density.value == scaling_density(4.0)
    assert est.logg.value == scaling_logg(30.0, scaling.ASSUMED_GIANT_TEFF[0])
    # 400 K on 4800 K dominates the log g error: ≈ log10(e)·½·400/4800 (CALC).
    assert est.logg.error > 0.5 * math.log10(math.e) * 400 / 4800


def test_eclipsing_binary_correction():
    # Gaulme et al. 2016 (CONF, abstract): M overestimated by ~15%, R by ~5%.
    args = (30.0, 0.3, 4.0, 0.02, 4750.0, 50.0)
    plain = scaling_estimates(*args, rng=4)
    fixed = scaling_estimates(*args, correction="eclipsing-binary", rng=4)
    assert fixed.mass.value == pytest.approx(plain.mass.value / 1.15, rel=1e-12)
    assert fixed.radius.value == pytest.approx(plain.radius.value / 1.05, rel=1e-12)
    assert fixed.luminosity.value == pytest.approx(plain.luminosity.value / 1.05**2, rel=1e-12)
    assert fixed.logg == plain.logg and fixed.density == plain.density
    assert "eclipsing_binary_correction_approximate" in fixed.flags
    assert fixed.mass.error / fixed.mass.value > plain.mass.error / plain.mass.value
    assert fixed.radius.error / fixed.radius.value > plain.radius.error / plain.radius.value


def test_rng_reproducible():
    # STYLE lesson 12: a seed or a Generator gives the same draws; no global state.
    args = (30.0, 0.6, 4.0, 0.04, 4750.0, 80.0)
    a = scaling_estimates(*args, rng=123)
    b = scaling_estimates(*args, rng=np.random.default_rng(123))
    c = scaling_estimates(*args, rng=124)
    assert a == b
    assert a.mass.error != c.mass.error


def test_nonpositive_draws():
    est = scaling_estimates(30.0, 12.0, 4.0, 0.1, 4750.0, 80.0, rng=0)
    assert "nonpositive_draws_dropped" in est.flags
    assert est.details["n_draws_used"] < 4000
    # A failed estimate is a flag, not an exception (STYLE lesson 6).
    lost = scaling_estimates(30.0, 30.0, 4.0, 0.1, 4750.0, 80.0, rng=0)
    assert "input_errors_too_large" in lost.flags
    assert all(getattr(lost, name) is None for name in ("mass", "radius", "logg", "density"))


def test_details_are_json_safe():
    est = scaling_estimates(30.0, 0.6, 4.0, 0.04, 4750.0, 80.0, rng=0)
    json.dumps(est.details, allow_nan=False)
    StarResult(id="x", detected=True, mass=est.mass, details={"scaling": est.details})
    assert est.details["reference"]["key"] == scaling.DEFAULT_REFERENCE
    low, mid, high = est.details["percentiles"]["mass"]
    assert low < mid < high


def test_bias_note():
    # REFERENCES §2b (Gaulme et al. 2016, CONF): masses ~10–15% and radii ~5% too high.
    assert "10-15%" in scaling.BIAS_NOTE and "5%" in scaling.BIAS_NOTE
    assert "Gaulme" in scaling.__doc__


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"numax": -30.0}, r"numax must be finite and > 0; got -30\.0"),
        ({"dnu": float("nan")}, r"dnu must be finite and > 0"),
        ({"numax_err": -1.0}, r"numax_err must be a finite number >= 0; got -1\.0"),
        ({"reference": "sun2020"}, r"unknown solar reference 'sun2020'; allowed references "
                                   r"are \['apokasc2', 'huber2011'"),
        ({"correlation": 1.0}, r"correlation must be a number in \(-1, 1\); got 1\.0"),
        ({"correlation": -1.5}, r"correlation must be a number in \(-1, 1\); got -1\.5"),
        ({"correction": "binary"}, r"unknown correction 'binary'; allowed corrections are "
                                   r"\['none', 'eclipsing-binary'\]"),
        ({"teff_err": None}, r"teff and teff_err must be given together"),
        ({"teff": -10.0}, r"teff must be finite and > 0"),
        ({"f_dnu": 0.0}, r"f_dnu must be finite and > 0; got 0\.0"),
        ({"n_draws": 10}, r"n_draws must be an integer >= 100; got 10"),
    ],
)
def test_bad_arguments(kwargs, match):
    # STYLE lesson 7: the message names the argument, the expectation and what arrived.
    args = dict(numax=30.0, numax_err=0.6, dnu=4.0, dnu_err=0.04, teff=4750.0, teff_err=80.0)
    args.update(kwargs)
    with pytest.raises(OptionError, match=match):
        scaling_estimates(**args)


def test_bad_arguments_plain_functions():
    with pytest.raises(OptionError, match="numax must be finite and > 0"):
        scaling_mass(np.array([30.0, -1.0]), 4.0, 4750.0)
    with pytest.raises(OptionError, match="unknown solar reference"):
        scaling_density(4.0, reference="nope")
    with pytest.raises(OptionError, match="dnu_kind"):
        SolarReference("x", 3000.0, 135.0, 5777.0, "s", "n", dnu_kind="other")
