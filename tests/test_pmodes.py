"""Injection and recovery tests of seismo.pmodes on simulated red giants.

The truth (Δν, ε, α, d02 and the l=0/l=2 mode list) comes from the team's
simulator (seismo.simulate), whose pattern is the universal red-giant
pattern of Mosser et al. 2011 (A&A 525, L9; details from memory). The
background passed is the simulator's limit spectrum without oscillations
(`model_psd` with ``oscillations=False``). Each star is simulated once per
module.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from seismo import pmodes
from seismo.errors import OptionError
from seismo.relations import STELLO_2009
from seismo.simulate import OBSERVATIONS, PRESETS, model_psd, simulate
from seismo.spectrum import power_spectrum

LONG = OBSERVATIONS["long-cadence-4yr"]
ONE_YEAR = dataclasses.replace(LONG, duration=365.25)

# 4-year long-cadence stars: RGB across numax ~25-200 μHz and a clump star.
LONG_STARS = {
    "rgb-25": dataclasses.replace(PRESETS["rgb-low"], id="rgb-25", numax=25.0, dnu=None),
    "rgb-low": PRESETS["rgb-low"],
    "rgb-mid": PRESETS["rgb-mid"],
    "rgb-high": PRESETS["rgb-high"],
    "clump": PRESETS["clump"],
}


def _observe(star, obs, seed):
    sim = simulate(star, obs, seed)
    ps = power_spectrum(sim.lightcurve())
    background = model_psd(dataclasses.replace(star, oscillations=False), obs, ps.freq)
    return sim.truth, ps, background


@pytest.fixture(scope="module")
def long_stars():
    out = {}
    for i, (name, star) in enumerate(LONG_STARS.items()):
        truth, ps, bg = _observe(star, LONG, 100 + i)
        coarse = pmodes.large_separation(ps, star.numax, bg)
        fit = pmodes.fit_radial_pattern(ps, star.numax, coarse, bg)
        out[name] = (truth, ps, bg, coarse, fit)
    return out


@pytest.fixture(scope="module")
def sector_star():
    star = PRESETS["rgb-mid"]
    return (star, *_observe(star, OBSERVATIONS["sector-30min"], 3))


@pytest.mark.parametrize("name", list(LONG_STARS))
def test_coarse_dnu_near_truth(long_stars, name):
    truth, _, _, coarse, _ = long_stars[name]
    assert coarse.dnu is not None, coarse.flags
    assert coarse.false_alarm < 1e-3
    assert abs(coarse.dnu.value / truth["dnu"] - 1) < 0.02
    assert abs(coarse.dnu.value - truth["dnu"]) / coarse.dnu.error < 3
    assert coarse.search_range[0] < truth["dnu"] < coarse.search_range[1]


@pytest.mark.parametrize("name", list(LONG_STARS))
def test_dnu_and_eps_recovered(long_stars, name):
    truth, _, _, _, fit = long_stars[name]
    assert fit.dnu is not None and fit.eps_p is not None, fit.flags
    # Δν within 0.5 % and within a few reported σ (STYLE lesson 10)
    assert abs(fit.dnu.value / truth["dnu"] - 1) < 0.005
    assert abs(fit.dnu.value - truth["dnu"]) / fit.dnu.error < 3.5
    # ε measured, not taken from the relation: within 0.05 and covered by its error
    assert abs(fit.eps_p.value - truth["eps_p"]) < 0.05
    assert abs(fit.eps_p.value - truth["eps_p"]) / fit.eps_p.error < 3.5
    assert not {"dnu_low_resolution", "numax_near_nyquist", "dnu_not_found"} & set(fit.flags)


@pytest.mark.parametrize("name", list(LONG_STARS))
def test_curvature_and_small_separation(long_stars, name):
    truth, _, _, _, fit = long_stars[name]
    assert fit.alpha is not None and fit.d02 is not None, fit.flags
    assert abs(fit.alpha.value - truth["alpha"]) / fit.alpha.error < 4
    assert abs(fit.d02.value - truth["d02"]) < 0.015
    assert abs(fit.d02.value - truth["d02"]) / fit.d02.error < 4


@pytest.mark.parametrize("name", list(LONG_STARS))
def test_mode_list_matches_injected(long_stars, name):
    truth, _, _, _, fit = long_stars[name]
    injected = {(m["l"], m["n_p"]): m["frequency"] for m in truth["modes"] if m["l"] in (0, 2)}
    assert len(fit.modes.degree(0)) >= 5
    assert len(fit.modes.degree(2)) >= 4
    assert np.all(np.diff(fit.modes.frequency) > 0)
    for degree, tolerance in ((0, 1.0), (2, 0.8)):
        modes = fit.modes.degree(degree)
        pulls = []
        for n, f, e in zip(modes.n, modes.frequency, modes.error, strict=True):
            assert (degree, n) in injected, f"l={degree} n={n} not injected"
            assert abs(f - injected[(degree, n)]) < 0.05 * truth["dnu"]
            pulls.append(abs(f - injected[(degree, n)]) / e)
        # every radial mode (most quadrupole modes) within 4 of its errors
        assert np.mean(np.array(pulls) < 4.0) >= tolerance, pulls


def test_dnu_numax_relation_holds(long_stars):
    # Stello et al. 2009: exponent 0.772 (CONF), coefficient 0.263 (from memory), ~15 % scatter
    numax = np.array([LONG_STARS[k].numax for k in long_stars])
    dnu = np.array([v[4].dnu.value for v in long_stars.values()])
    ratio = dnu / (STELLO_2009[0] * numax ** STELLO_2009[1])
    assert np.all(np.abs(ratio - 1) < 0.15)
    rgb = [k != "clump" for k in long_stars]
    slope, _ = np.polyfit(np.log(numax[rgb]), np.log(dnu[rgb]), 1)
    assert abs(slope - STELLO_2009[1]) < 0.02


def test_sector_gives_wider_error_and_flag(long_stars, sector_star):
    star, truth, ps, bg = sector_star
    coarse = pmodes.large_separation(ps, star.numax, bg)
    assert "dnu_low_resolution" in coarse.flags
    if coarse.dnu is None:
        assert "dnu_not_found" in coarse.flags
        return
    fit = pmodes.fit_radial_pattern(ps, star.numax, coarse, bg)
    assert "dnu_low_resolution" in fit.flags
    assert fit.alpha is None and "alpha_fixed_at_prior" in fit.flags
    long_fit = long_stars["rgb-mid"][4]
    assert fit.dnu.error > 3 * long_fit.dnu.error
    assert abs(fit.dnu.value - truth["dnu"]) / fit.dnu.error < 3
    assert abs(fit.dnu.value / truth["dnu"] - 1) < 0.03


def test_noise_only_gives_none():
    star = PRESETS["quiet"]
    truth, ps, bg = _observe(star, ONE_YEAR, 7)
    coarse = pmodes.large_separation(ps, star.numax, bg)
    assert coarse.dnu is None
    assert "dnu_not_found" in coarse.flags
    assert coarse.false_alarm > 0.01
    with pytest.raises(OptionError, match="without a value"):
        pmodes.fit_radial_pattern(ps, star.numax, coarse, bg)
    # forcing a guess onto noise does not invent a pattern
    fit = pmodes.fit_radial_pattern(ps, star.numax, truth["dnu"], bg)
    assert fit.dnu is None and fit.eps_p is None
    assert "dnu_not_found" in fit.flags


def test_numax_near_nyquist_uses_what_is_there():
    star = dataclasses.replace(PRESETS["rgb-high"], id="near-nyquist", numax=255.0, dnu=None)
    truth, ps, bg = _observe(star, ONE_YEAR, 2)
    coarse = pmodes.large_separation(ps, star.numax, bg)
    assert "numax_near_nyquist" in coarse.flags
    assert coarse.window[1] <= ps.nyquist
    fit = pmodes.fit_radial_pattern(ps, star.numax, coarse, bg)
    assert "numax_near_nyquist" in fit.flags
    assert abs(fit.dnu.value / truth["dnu"] - 1) < 0.01
    assert abs(fit.dnu.value - truth["dnu"]) / fit.dnu.error < 3.5
    assert np.all(fit.modes.frequency <= ps.nyquist)


def test_echelle_image_and_coordinates(long_stars):
    truth, ps, bg, _, fit = long_stars["rgb-mid"]
    dnu, eps = fit.dnu.value, fit.eps_p.value
    offset = (eps - 0.2) * dnu
    image = pmodes.echelle_image(ps, dnu, truth["numax"], bg, n_orders=7, offset=offset)
    assert image.image.shape == (7, image.x.size)
    assert image.y.shape == (7,)
    assert np.all((image.x >= 0) & (image.x < dnu))
    np.testing.assert_allclose(np.diff(image.y), dnu)
    radial = fit.modes.degree(0)
    x, y = pmodes.echelle_coordinates(radial.frequency, dnu, offset=offset)
    np.testing.assert_allclose(x + y, radial.frequency)
    orders = (y - offset) / dnu
    np.testing.assert_allclose(orders, np.round(orders), atol=1e-9)
    # the radial ridge sits near 0.2 Δν (curvature bends it by a few per cent)
    assert np.all(np.abs(x - 0.2 * dnu) < 0.08 * dnu)
    # the brightest column of the summed image is on the l=0 or l=2 ridge
    column = np.nanargmax(np.nansum(image.image, axis=0))
    ridge = np.array([0.2, 0.2 - fit.d02.value]) * dnu
    assert np.min(np.abs(image.x[column] - ridge)) < 0.05 * dnu


def test_bad_arguments_raise(long_stars):
    _, ps, bg, _, _ = long_stars["rgb-mid"]
    with pytest.raises(OptionError, match="numax"):
        pmodes.large_separation(ps, -5.0, bg)
    with pytest.raises(OptionError, match="numax"):
        pmodes.large_separation(ps, 1e4, bg)
    with pytest.raises(OptionError, match="background"):
        pmodes.large_separation(ps, 100.0, bg[:-3])
    with pytest.raises(OptionError, match="background"):
        pmodes.large_separation(ps, 100.0, -bg)
    with pytest.raises(OptionError, match="numax_err"):
        pmodes.large_separation(ps, 100.0, bg, numax_err=-1.0)
    with pytest.raises(OptionError, match="dnu_guess"):
        pmodes.fit_radial_pattern(ps, 100.0, 150.0, bg)
    with pytest.raises(OptionError, match="dnu_guess"):
        pmodes.fit_radial_pattern(ps, 100.0, float("nan"), bg)
    with pytest.raises(OptionError, match="n_orders"):
        pmodes.echelle_image(ps, 9.2, 100.0, bg, n_orders=0)
    with pytest.raises(OptionError, match="dnu"):
        pmodes.echelle_coordinates([10.0], 0.0)
    with pytest.raises(TypeError, match="PowerSpectrum"):
        pmodes.large_separation(ps.density, 100.0, bg)
