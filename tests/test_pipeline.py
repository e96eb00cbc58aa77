"""Whole analysis on simulated stars with injected truth (a small version of
benchmarks/accuracy.py, so a regression fails CI), plus invariance checks."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest

from seismo.config import AnalysisConfig, ScalingOptions, StarInputs
from seismo.lightcurve import LightCurve
from seismo.pipeline import analyze
from seismo.relations import STELLO_2009
from seismo.scaling import scaling_mass, scaling_radius
from seismo.simulate import OBSERVATIONS, PRESETS, simulate

ONE_YEAR = replace(OBSERVATIONS["long-cadence-4yr"], duration=365.0)


@pytest.fixture(scope="module")
def analysed():
    stars = {
        "rgb-mid": replace(PRESETS["rgb-mid"], id="T-RGB"),
        "clump": replace(PRESETS["clump"], id="T-RC"),
        "rgb-high": replace(PRESETS["rgb-high"], id="T-RGBH"),
    }
    config = AnalysisConfig(scaling=ScalingOptions(systematic=False))
    out = {}
    for seed, (name, star) in enumerate(stars.items()):
        sim = simulate(star, ONE_YEAR, rng=100 + seed)
        truth = sim.truth
        analysis = analyze(sim.lightcurve(), config, StarInputs(truth["teff"], 80.0), rng=seed)
        out[name] = (truth, analysis.result)
    return out


@pytest.mark.parametrize("name", ["rgb-mid", "clump", "rgb-high"])
def test_global_parameters_recover_the_injected_truth(analysed, name):
    # Injection and recovery on the project's simulator (issue 3 targets: numax within 3 %,
    # Δν within 0.5 %), with the error bars covering the truth (|value - truth|/error small).
    truth, result = analysed[name]
    assert result.detected
    assert result.numax.value == pytest.approx(truth["numax"], rel=0.03)
    assert abs(result.numax.value - truth["numax"]) < 3.5 * result.numax.error
    assert result.dnu.value == pytest.approx(truth["dnu"], rel=0.005)
    assert abs(result.dnu.value - truth["dnu"]) < 3.5 * result.dnu.error
    assert abs(result.eps_p.value - truth["eps_p"]) < max(3.5 * result.eps_p.error, 0.03)


@pytest.mark.parametrize("name", ["rgb-mid", "clump", "rgb-high"])
def test_scaling_mass_and_radius_within_their_errors(analysed, name):
    # The scaling relations (Kjeldsen & Bedding 1995) evaluated on the injected numax, Δν
    # and Teff are the truth for the recovered scaling mass and radius.
    truth, result = analysed[name]
    m_true = scaling_mass(truth["numax"], truth["dnu"], truth["teff"])
    r_true = scaling_radius(truth["numax"], truth["dnu"], truth["teff"])
    assert abs(result.mass.value - m_true) < 3.5 * result.mass.error
    assert abs(result.radius.value - r_true) < 3.5 * result.radius.error


def test_recovered_values_follow_the_dnu_numax_power_law(analysed):
    # Stello et al. 2009 (exponent CONF, prefactor from memory): Δν predicted to ~15 %.
    alpha, beta = STELLO_2009
    for _, result in analysed.values():
        predicted = alpha * result.numax.value**beta
        assert result.dnu.value == pytest.approx(predicted, rel=0.15)


def test_noise_only_star_gives_no_numax():
    sim = simulate(replace(PRESETS["quiet"], id="T-Q", numax=80.0), ONE_YEAR, rng=5)
    result = analyze(sim.lightcurve()).result
    assert not result.detected
    assert result.numax is None and result.dnu is None and result.mass is None
    assert "numax_not_measured" in result.flags


def test_results_do_not_depend_on_units_or_order():
    # Invariance (STYLE lesson 10): days vs seconds, ppm vs ppt, shuffled rows.
    sim = simulate(replace(PRESETS["rgb-high"], id="T-INV"), replace(ONE_YEAR, duration=200.0),
                   rng=9)
    lc = sim.lightcurve()
    base = analyze(lc, rng=1).result
    rng = np.random.default_rng(0)
    order = rng.permutation(lc.n_points)
    import astropy.units as u

    ppt = u.Unit(1e-3)  # parts per thousand, a scaled dimensionless unit
    other = LightCurve.from_arrays(lc.time[order] * 86400.0, lc.flux[order] / 1e3 * ppt,
                                   time_unit="s", meta={"id": "T-INV"})
    moved = analyze(other, rng=1).result
    assert moved.numax.value == pytest.approx(base.numax.value, rel=1e-6)
    assert moved.dnu.value == pytest.approx(base.dnu.value, rel=1e-6)

