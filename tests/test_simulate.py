"""Tests of seismo.simulate: injected truth, statistics of the signal, writers.

Each physics check names its source (REFERENCES.md flags carried over); the
statistical checks use the χ² distribution of periodogram bins (common
practice) with tolerances derived from it.
"""

from __future__ import annotations

import dataclasses
import json

import numpy as np
import pytest
from scipy import stats

from seismo.errors import OptionError
from seismo.lightcurve.core import LightCurve
from seismo.simulate import (
    OBSERVATIONS,
    PRESETS,
    QUALITY_BITS,
    Observation,
    StarParameters,
    damped_oscillation,
    mode_table,
    model_psd,
    simulate,
    truth_path,
    write_simulation,
)
from seismo.spectrum import power_spectrum

SECTOR = OBSERVATIONS["sector-30min"]


def _gapless(days: float, cadence: float = 29.4244) -> Observation:
    return Observation(cadence=cadence, duration=days, layout="continuous").without_instrument()


def _modes(sim, l):
    return [m for m in sim.truth["modes"] if m["l"] == l]


# --- injected frequencies ---------------------------------------------------


def test_radial_and_quadrupole_follow_universal_pattern():
    # Universal pattern, Mosser et al. 2011 (from memory), written out here
    # independently of seismo.relations: ν = (n + l/2 + ε − d0l + α/2 (n − n_max)²) Δν.
    star = StarParameters(id="HLD-T01", numax=60.0, dpi1=75.0)
    sim = simulate(star, SECTOR, 1)
    dnu = 0.263 * 60.0**0.772  # Stello et al. 2009 (α from memory)
    eps = 0.634 + 0.546 * np.log10(dnu)
    alpha = 0.015 * dnu**-0.32
    d02 = 0.121 + 0.035 * np.log10(dnu)
    n_max = 60.0 / dnu - eps
    for l, d0l in ((0, 0.0), (2, d02)):
        modes = _modes(sim, l)
        assert len(modes) >= 6
        n = np.array([m["n_p"] for m in modes])
        expected = (n + l / 2 + eps - d0l + alpha / 2 * (n - n_max) ** 2) * dnu
        np.testing.assert_allclose([m["frequency"] for m in modes], expected, rtol=1e-12)
        assert all(m["zeta"] == 0 and m["m"] == 0 for m in modes)
    assert sim.truth["dnu"] == pytest.approx(dnu)
    assert sim.truth["eps_p"] == pytest.approx(eps)


def test_dipole_modes_solve_resonance_condition():
    # REFERENCES §5a (Mosser et al. 2012/2015, from memory): tan θp = q tan θg with
    # θp = π(ν − ν_p)/Δν (nearest nominal p mode), θg = π/(ν ΔΠ1) − π ε_g, ν in Hz.
    # No curvature, so the nominal p modes are evenly spaced by Δν.
    dnu, dpi1, q, eps_g = 6.0, 80.0, 0.14, 0.3
    star = StarParameters(id="HLD-T02", numax=70.0, dnu=dnu, alpha=0.0, dpi1=dpi1, q=q,
                          eps_g=eps_g)
    modes = _modes(simulate(star, SECTOR, 2), 1)
    freq = np.array([m["frequency"] for m in modes])
    assert freq.size > 30
    eps = 0.634 + 0.546 * np.log10(dnu)
    d01 = -0.056 - 0.002 * np.log10(dnu)
    n = np.arange(0, 40)
    nu_p = (n + 0.5 + eps - d01) * dnu
    nearest = nu_p[np.argmin(np.abs(freq[:, None] - nu_p[None, :]), axis=1)]
    theta_p = np.pi * (freq - nearest) / dnu
    theta_g = np.pi / (freq * 1e-6 * dpi1) - np.pi * eps_g
    residual = np.sin(theta_p) * np.cos(theta_g) - q * np.cos(theta_p) * np.sin(theta_g)
    np.testing.assert_allclose(residual, 0.0, atol=1e-6)
    # ζ from REFERENCES §5b: [1 + (q/𝒩)/(q² cos²θp + sin²θp)]⁻¹, 𝒩 = Δν/(ν² ΔΠ1).
    n_g = dnu / (freq**2 * dpi1) * 1e6
    zeta = 1 / (1 + (q / n_g) / (q**2 * np.cos(theta_p) ** 2 + np.sin(theta_p) ** 2))
    np.testing.assert_allclose([m["zeta"] for m in modes], zeta, rtol=1e-9)
    # Linewidth Γ0 (1 − ζ) (REFERENCES §5b, from memory).
    np.testing.assert_allclose([m["linewidth"] for m in modes], 0.1 * (1 - zeta), rtol=1e-12)


def test_dipole_power_shares_the_p_mode_power():
    # REFERENCES §5b (from memory): A1² = V1² A0²(ν)(1 − ζ); summed over one order
    # the dipole power equals V1² A0² at the nominal p mode (CALC, Σ(1 − ζ) ≈ 1).
    star = StarParameters(id="HLD-T03", numax=50.0, dpi1=70.0, q=0.12, amplitude=100.0)
    table = mode_table(star, SECTOR.nyquist)
    dip = table["l"] == 1
    p = star.resolved()
    sigma = 0.66 * 50.0**0.88 / 2.3548
    env = 100.0**2 * np.exp(-0.5 * ((table["centre"] - 50.0) / sigma) ** 2)
    np.testing.assert_allclose(table["amplitude"][dip] ** 2,
                               1.35 * env[dip] * (1 - table["zeta"][dip]), rtol=1e-3)
    central = dip & (table["n_p"] == np.round(50.0 / p["dnu"] - p["eps_p"]))
    ratio = np.sum(table["amplitude"][central] ** 2 / env[central]) / 1.35
    assert ratio == pytest.approx(1.0, abs=0.05)


def test_pure_p_dipoles_without_dpi1():
    star = StarParameters(id="HLD-T04", numax=60.0)
    table = mode_table(star, SECTOR.nyquist)
    dip = table["l"] == 1
    assert np.all(table["zeta"][dip] == 0)
    p = star.resolved()
    n = table["n_p"][dip]
    expected = (n + 0.5 + p["eps_p"] - p["d01"] + p["alpha"] / 2
                * (n - 60.0 / p["dnu"] + p["eps_p"]) ** 2) * p["dnu"]
    np.testing.assert_allclose(table["frequency"][dip], expected, rtol=1e-12)
    assert abs(np.sum(dip) - np.sum(table["l"] == 0)) <= 1


def test_rotational_components():
    # First-order splitting ζ rot_core + (1 − ζ) rot_env (Goupil et al. 2013,
    # REFERENCES §5b) and power fractions cos²i, ½ sin²i (Gizon & Solanki
    # 2003, from memory).
    inc, rot_core, rot_env = 40.0, 0.4, 0.05
    star = StarParameters(id="HLD-T05", numax=60.0, dpi1=80.0, rot_core=rot_core,
                          rot_env=rot_env, inclination=inc)
    modes = _modes(simulate(star, SECTOR, 3), 1)
    z = np.array([m["zeta"] for m in modes])
    m = np.array([m_["m"] for m_ in modes])
    offset = np.array([x["frequency"] - x["centre"] for x in modes])
    np.testing.assert_allclose(offset, m * (z * rot_core + (1 - z) * rot_env), atol=1e-12)
    assert set(m) == {-1, 0, 1}
    power = {}
    for x in modes:
        power.setdefault((x["centre"]), {})[x["m"]] = x["amplitude"] ** 2
    triplets = [v for v in power.values() if len(v) == 3]
    assert len(triplets) > 10
    expected = 0.5 * np.tan(np.deg2rad(inc)) ** 2
    for v in triplets:
        assert v[1] / v[0] == pytest.approx(expected, rel=1e-9)
        assert v[-1] == pytest.approx(v[1], rel=1e-12)


def test_no_oscillations_means_no_modes():
    sim = simulate(PRESETS["quiet"], SECTOR, 4)
    assert sim.truth["modes"] == []
    assert sim.truth["oscillations"] is False


# --- statistics of the synthetic signal -------------------------------------


def test_single_mode_rms_amplitude():
    # A resolved stochastic mode has variance A² (definition of the rms amplitude,
    # common practice); check the mean of 40 sample variances and the stationary
    # start (variance of the first sample over many short draws).
    rng = np.random.default_rng(11)
    amp, width, dt = 50.0, 0.5, 1765.5  # lifetime 1/(πΓ) = 7.4 d
    variances = [np.var(damped_oscillation(20000, dt, 60.0, width, amp, rng))
                 for _ in range(40)]
    mean, err = np.mean(variances), np.std(variances) / np.sqrt(40)
    assert abs(mean - amp**2) < 4 * err
    assert err < 0.05 * amp**2
    first = np.array([damped_oscillation(1, dt, 60.0, width, amp, rng)[0] for _ in range(3000)])
    assert np.var(first) == pytest.approx(amp**2, rel=4 * np.sqrt(2 / 3000))


def test_single_mode_lorentzian_height():
    # Lorentzian of height 2A²/(πΓ) (single-sided, ppm²/μHz) for a resolved mode
    # (common practice; REFERENCES §5b heights): mean periodogram over ±Γ/4.
    rng = np.random.default_rng(12)
    amp, width, dt, n = 30.0, 0.4, 1765.5, 40000
    x = damped_oscillation(n, dt, 80.0, width, amp, rng)
    ps = power_spectrum(LightCurve(np.arange(n) * dt / 86400.0, x))
    core = np.abs(ps.freq - 80.0) < width / 4
    expected = 2 * amp**2 / (np.pi * width) / (1 + (2 * (ps.freq[core] - 80.0) / width) ** 2)
    assert np.mean(ps.density[core] / expected) == pytest.approx(1.0, abs=4 / np.sqrt(core.sum()))


def _band_check(ps, model, edges):
    """Band means of the periodogram against the model, in units of χ² scatter."""
    z = []
    for lo, hi in zip(edges[:-1], edges[1:], strict=True):
        sel = (ps.freq >= lo) & (ps.freq < hi)
        mean_model = model[sel].mean()
        # Independent bins with P ~ model χ²₂/2: std of the band mean.
        scatter = np.sqrt(np.sum(model[sel] ** 2)) / sel.sum()
        z.append((ps.density[sel].mean() - mean_model) / scatter)
    return np.array(z)


def test_mean_spectrum_matches_model_psd():
    # The mean power density of a gapless simulation equals model_psd within the
    # χ² scatter of the band means (common practice: bins ~ χ²₂/2 about the limit).
    star = PRESETS["rgb-mid"]
    obs = _gapless(600.0)
    ps = power_spectrum(simulate(star, obs, 5).lightcurve())
    model = model_psd(star, obs, ps.freq)
    edges = np.array([2.0, 10, 30, 50, 70, 90, 100, 110, 130, 160, 200, 283])
    z = _band_check(ps, model, edges)
    assert np.all(np.abs(z) < 4), z


def test_noise_only_spectrum_is_chi2():
    # KS test of PSD/model against the χ²₂/2 exponential distribution on a
    # granulation-and-noise star (common practice).
    star = PRESETS["quiet"]
    obs = _gapless(200.0)
    ps = power_spectrum(simulate(star, obs, 6).lightcurve())
    sel = ps.freq > 2.0
    ratio = ps.density[sel] / model_psd(star, obs, ps.freq[sel])
    assert stats.kstest(ratio, "expon").pvalue > 1e-3
    assert np.mean(ratio) == pytest.approx(1.0, abs=4 / np.sqrt(sel.sum()))


def test_white_level_of_model():
    # White noise of variance σ² has the single-sided level σ²/ν_Nyq (DESIGN.md).
    star = StarParameters(id="HLD-T06", numax=50.0, oscillations=False, granulation=(),
                          white_noise=80.0)
    np.testing.assert_allclose(model_psd(star, SECTOR, [1.0, 100.0, 270.0]),
                               80.0**2 / SECTOR.nyquist)


def test_sinc_attenuation_near_nyquist():
    # REFERENCES §3d (CALC): power attenuated by η² = sinc²(πν/(2ν_Nyq)), 4/π² at
    # Nyquist. Granulation without white noise, compared with and without η².
    star = StarParameters(id="HLD-T07", numax=120.0, oscillations=False, white_noise=0.0)
    obs = _gapless(120.0, cadence=30.0)
    ps = power_spectrum(simulate(star, obs, 7).lightcurve())
    p = star.resolved()["granulation"]
    raw = sum(0.900316 * g["amplitude"] ** 2 / g["frequency"]
              / (1 + (ps.freq / g["frequency"]) ** 4) for g in p)
    x = np.pi * ps.freq / (2 * obs.nyquist)
    eta2 = np.where(x > 0, np.sin(x) / np.where(x > 0, x, 1), 1.0) ** 2
    top = (ps.freq > 0.8 * obs.nyquist) & (ps.freq < obs.nyquist)
    ratio = np.mean(ps.density[top] / raw[top])
    assert ratio == pytest.approx(np.mean(eta2[top]), rel=4 / np.sqrt(top.sum()))
    assert ratio < 0.6  # unattenuated would be 1
    # The mode amplitudes carry η too (a star with ν_max near Nyquist).
    table = mode_table(StarParameters(id="HLD-T08", numax=240.0), obs.nyquist)
    xm = np.pi * table["frequency"] / (2 * obs.nyquist)
    np.testing.assert_allclose(table["attenuation"], np.sin(xm) / xm, rtol=1e-12)


# --- window, instrument, reproducibility, writers ---------------------------


@pytest.fixture(scope="module")
def long_sim():
    obs = dataclasses.replace(OBSERVATIONS["long-cadence-4yr"], duration=200.0)
    return simulate(PRESETS["rgb-high"], obs, 8), obs


def test_long_cadence_window(long_sim):
    sim, obs = long_sim
    steps = np.diff(sim.time)
    big = steps > 0.9
    assert np.sum(big) == 2  # two ~1-d gaps between three segments in 200 d
    assert np.all(np.diff(sim.segment) >= 0)
    assert np.unique(sim.segment).tolist() == [0, 1, 2]
    np.testing.assert_allclose(np.median(steps), obs.cadence / 1440.0, rtol=1e-9)
    assert sim.time[0] == pytest.approx(1200.0)
    levels = [np.nanmedian(sim.flux[sim.segment == s]) for s in range(3)]
    assert np.ptp(levels) / np.mean(levels) > 0.001  # level jumps between segments
    assert np.sum(np.isnan(sim.flux)) == obs.nan_count
    flagged = sim.quality != 0
    assert 0.004 < flagged.mean() < 0.02
    assert set(np.unique(sim.quality[flagged])) <= set(QUALITY_BITS.values())
    clean = sim.lightcurve()
    assert isinstance(clean, LightCurve)
    assert clean.n_points == sim.time.size and np.all(np.isfinite(clean.flux))
    # Flagged cadences are corrupted (dips) relative to the clean signal.
    rel = 1e6 * (sim.flux / np.nanmedian(sim.flux) - 1) - clean.flux
    assert np.nanmedian(rel[flagged]) < np.nanmedian(rel[~flagged]) - 1000


def test_sector_window():
    sim = simulate(PRESETS["rgb-mid"], OBSERVATIONS["sector-30min"], 9)
    assert np.unique(sim.segment).tolist() == [0, 1]
    assert np.max(np.diff(sim.time)) == pytest.approx(1.0, abs=0.05)
    assert sim.time[-1] - sim.time[0] < 27.4


def test_drift_stays_at_low_frequency():
    # Instrument drift below ~1 μHz: a quiet star with only drift on top.
    star = StarParameters(id="HLD-T09", numax=100.0, oscillations=False, granulation=(),
                          white_noise=1.0)
    obs = dataclasses.replace(_gapless(300.0), drift=1000.0)
    sim = simulate(star, obs, 10)
    rel = 1e6 * (sim.flux / np.mean(sim.flux) - 1)
    assert np.std(rel) == pytest.approx(1000.0, rel=0.05)
    ps = power_spectrum(LightCurve(sim.time, rel))
    assert ps.integral(0.0, 1.0) > 0.98 * ps.integral()


def test_same_seed_same_output():
    star, obs = PRESETS["secondary-clump"], OBSERVATIONS["sector-30min"]
    a, b, c = simulate(star, obs, 42), simulate(star, obs, 42), simulate(star, obs, 43)
    np.testing.assert_array_equal(a.flux, b.flux)
    np.testing.assert_array_equal(a.quality, b.quality)
    assert a.truth == b.truth
    assert not np.array_equal(np.nan_to_num(a.flux), np.nan_to_num(c.flux))
    d = simulate(star, obs, np.random.default_rng(42))
    np.testing.assert_array_equal(a.flux, d.flux)
    assert a.truth["seed"] == 42 and d.truth["seed"] is None


def test_truth_is_json_and_complete(long_sim):
    sim, _ = long_sim
    truth = json.loads(json.dumps(sim.truth))
    for key in ("numax", "dnu", "eps_p", "alpha", "d01", "d02", "dpi1", "q", "eps_g",
                "rot_core", "inclination", "linewidth", "amplitude", "granulation",
                "white_noise", "state", "observation", "modes"):
        assert key in truth
    assert set(truth["modes"][0]) >= {"l", "m", "n_p", "frequency", "zeta", "linewidth",
                                      "amplitude"}
    assert truth["observation"]["n_points"] == sim.time.size
    assert truth["synthetic"] is True


@pytest.mark.parametrize("suffix", [".fits", ".csv", ".txt"])
def test_writers_round_trip(long_sim, tmp_path, suffix):
    sim, _ = long_sim
    path, tpath = write_simulation(sim, tmp_path / f"HLD-0199{suffix}")
    assert tpath == truth_path(path) == tmp_path / "HLD-0199.truth.json"
    assert json.loads(tpath.read_text()) == json.loads(json.dumps(sim.truth))
    if suffix == ".fits":
        from astropy.io import fits

        with fits.open(path) as hdul:
            hdu = hdul["LIGHTCURVE"]
            assert hdu.columns.names == ["TIME", "FLUX", "FLUX_ERR", "QUALITY"]
            assert hdu.columns["TIME"].unit == "d"
            assert hdu.columns["FLUX"].unit == "electron/s"
            assert hdu.header["OBJECT"] == sim.id
            assert hdu.header["CADENCE"] == pytest.approx(29.4244)
            data = {name: np.asarray(hdu.data[name]) for name in hdu.columns.names}
    else:
        if suffix == ".csv":
            assert path.read_text().splitlines()[0] == "time,flux,flux_err,quality"
            raw = np.loadtxt(path, delimiter=",", skiprows=1)
        else:
            assert path.read_text().startswith("# ")
            raw = np.loadtxt(path)
        data = dict(zip(["TIME", "FLUX", "FLUX_ERR", "QUALITY"], raw.T, strict=True))
    np.testing.assert_allclose(data["TIME"], sim.time, atol=1e-7)
    np.testing.assert_allclose(data["FLUX"], sim.flux, atol=1e-4)  # NaNs compare equal
    np.testing.assert_array_equal(data["QUALITY"], sim.quality)


def test_write_rejects_unknown_suffix(long_sim, tmp_path):
    with pytest.raises(OptionError, match="suffix must be one of"):
        write_simulation(long_sim[0], tmp_path / "star.h5")


def test_parameter_errors():
    with pytest.raises(OptionError, match="numax must be > 0"):
        StarParameters(id="x", numax=-5.0)
    with pytest.raises(OptionError, match="inclination must be in"):
        StarParameters(id="x", numax=50.0, inclination=120.0)
    with pytest.raises(OptionError, match="state must be one of"):
        StarParameters(id="x", numax=50.0, state="AGB")
    with pytest.raises(OptionError, match="layout must be one of"):
        Observation(cadence=30.0, duration=10.0, layout="daily")
    with pytest.raises(OptionError, match="flagged_fraction must be in"):
        Observation(cadence=30.0, duration=10.0, flagged_fraction=1.5)
    with pytest.raises(TypeError, match="star must be a StarParameters"):
        simulate({"numax": 50}, SECTOR)
