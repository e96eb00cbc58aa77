"""Power spectrum: calibration (Parseval), noise statistics, methods against each other
and against astropy's Lomb–Scargle."""

from __future__ import annotations

import numpy as np
import pytest
from conftest import LONG_CADENCE_DAYS, kepler_like_times
from scipy import stats

import seismo.spectrum as spectrum_module
from seismo.errors import OptionError
from seismo.lightcurve import LightCurve
from seismo.spectrum import cadence_grid, power_spectrum, smooth_boxcar, smooth_gaussian


def assert_not_strictly_equal(a: np.ndarray, b: np.ndarray) -> None:
    """Guard against a dispatcher that silently runs the same kernel twice."""
    assert not np.array_equal(a, b), "two methods gave bit-identical output"


def _white(t: np.ndarray, sigma: float, rng: np.random.Generator) -> LightCurve:
    return LightCurve(t, rng.normal(0.0, sigma, t.size))


def test_parseval_integral_equals_variance(rng):
    # Single-sided density integrates to the variance (DESIGN.md convention; exact
    # Parseval for the zero-filled cadence grid, so only the Nyquist bin is left over).
    lc = _white(kepler_like_times(300.0), 70.0, rng)
    ps = power_spectrum(lc)
    assert ps.method == "fft"
    assert ps.integral() == pytest.approx(np.var(lc.flux), rel=1e-3)


def test_white_noise_level_on_gapped_window(rng):
    # Common practice (single-sided normalisation): white noise of variance σ² gives a mean
    # density σ²/ν_Nyq. Requirement: within 2% on a gapped Kepler-like window.
    sigma = 120.0
    lc = _white(kepler_like_times(700.0), sigma, rng)
    ps = power_spectrum(lc)
    level = np.mean(ps.density[1:])
    assert level == pytest.approx(sigma**2 / ps.nyquist, rel=0.02)
    # The Kepler long-cadence Nyquist frequency is 283.21 μHz (REFERENCES.md §9, CALC).
    assert ps.nyquist == pytest.approx(283.21, abs=0.01)


def test_noise_bins_follow_chi2_with_two_degrees_of_freedom(rng):
    # Common practice: periodogram bins of Gaussian noise are χ²₂/2 (exponential) about the
    # mean level. KS test as in emcee's proposal tests, on a gapless series (independent bins).
    t = np.arange(20000) * LONG_CADENCE_DAYS
    sigma = 50.0
    ps = power_spectrum(_white(t, sigma, rng))
    ratio = ps.density[1:-1] / (sigma**2 / ps.nyquist)
    result = stats.kstest(ratio, "expon")
    assert result.pvalue > 1e-3
    assert np.mean(ratio) == pytest.approx(1.0, abs=4 / np.sqrt(ratio.size))


def test_sinusoid_power_is_half_the_squared_amplitude():
    # A sinusoid of amplitude A on a Fourier bin of a gapless series puts A²/2 (its
    # variance) into that one bin (common practice; Parseval).
    n = 4096
    t = np.arange(n) * LONG_CADENCE_DAYS
    ps0 = power_spectrum(LightCurve(t, np.sin(t)))
    j = 700
    freq = ps0.freq[j]
    amp = 90.0
    lc = LightCurve(t, amp * np.cos(2 * np.pi * freq * 1e-6 * t * 86400.0))
    ps = power_spectrum(lc)
    assert ps.density[j] * ps.df == pytest.approx(amp**2 / 2, rel=1e-9)


@pytest.mark.parametrize("oversample", [1.0, 3.0])
def test_methods_agree_on_a_regular_gapped_series(rng, oversample):
    t = kepler_like_times(60.0)
    x = 80 * np.sin(2 * np.pi * 55e-6 * t * 86400) + rng.normal(0, 30, t.size)
    lc = LightCurve(t, x)
    ref = power_spectrum(lc, method="direct", oversample=oversample)
    for method in ("fft", "nufft"):
        ps = power_spectrum(lc, method=method, oversample=oversample)
        np.testing.assert_allclose(ps.freq, ref.freq, rtol=1e-12)
        np.testing.assert_allclose(ps.density, ref.density, rtol=1e-7,
                                   atol=1e-9 * ref.density.max())
        assert_not_strictly_equal(ps.density, ref.density)
    # Lomb–Scargle differs from the classical periodogram by window terms (Scargle 1982):
    # it agrees to a fraction of a percent in the mean but not bin by bin.
    ls = power_spectrum(lc, method="lombscargle", oversample=oversample)
    assert np.median(ls.density[10:] / ref.density[10:]) == pytest.approx(1.0, abs=0.01)


def test_agrees_with_astropy_lombscargle_where_its_window_term_vanishes(rng):
    # astropy's LombScargle (general-purpose reference library). By Scargle 1982 (ApJ 263,
    # 835, from memory) the Lomb–Scargle power equals |DFT|²/N exactly when
    # Σcos 2ωt = Σsin 2ωt = 0. Chunks whose lengths are multiples of M = 120 cadences make
    # that hold at f = m/(2 M Δt); at the peaks of two injected sinusoids (m = 17, 43) the
    # two must agree to 1e-6 once astropy's 'psd' normalisation is divided by ν_Nyq.
    from astropy.timeseries import LombScargle

    dt = LONG_CADENCE_DAYS
    index = np.concatenate([np.arange(0, 240), np.arange(300, 540), np.arange(600, 720)])
    t = index * dt
    dt_s = dt * 86400.0
    f1, f2 = 17 / (240 * dt_s), 43 / (240 * dt_s)
    ts = t * 86400.0
    y = 50 * np.sin(2 * np.pi * f1 * ts + 0.4) + 20 * np.cos(2 * np.pi * f2 * ts)
    y = y + rng.normal(0, 5, t.size)
    y = y - y.mean()
    ps = power_spectrum(LightCurve(t, y), method="fft")
    peaks = [int(np.argmin(np.abs(ps.freq - f * 1e6))) for f in (f1, f2)]
    assert ps.freq[peaks] == pytest.approx([f1 * 1e6, f2 * 1e6], rel=1e-12)
    assert all(ps.density[p] > 50 * np.median(ps.density) for p in peaks)
    ls = LombScargle(ts, y, fit_mean=False, center_data=False, normalization="psd")
    reference = ls.power(np.array([f1, f2]), method="slow") / ps.nyquist
    np.testing.assert_allclose(ps.density[peaks], reference, rtol=1e-6)


def test_irregular_sampling_uses_the_nonuniform_transform(rng):
    t = np.sort(rng.uniform(0.0, 30.0, 1500))
    lc = LightCurve(t, rng.normal(0, 10, t.size))
    assert cadence_grid(t) is None
    auto = power_spectrum(lc)
    assert auto.method == "nufft"
    ref = power_spectrum(lc, method="direct")
    np.testing.assert_allclose(auto.density, ref.density, rtol=1e-7, atol=1e-9 * ref.density.max())
    with pytest.raises(OptionError, match="method 'fft' needs times on a regular cadence grid"):
        power_spectrum(lc, method="fft")


def test_falls_back_to_lombscargle_without_finufft(rng, monkeypatch):
    monkeypatch.setattr(spectrum_module, "_has_finufft", lambda: False)
    t = np.sort(rng.uniform(0.0, 30.0, 800))
    ps = power_spectrum(LightCurve(t, rng.normal(0, 10, t.size)))
    assert ps.method == "lombscargle"


def test_units_of_time_do_not_change_the_spectrum(rng):
    # Invariance (STYLE lesson 10): the same series given in seconds or in days.
    t = kepler_like_times(40.0)
    x = rng.normal(0, 40, t.size)
    in_days = power_spectrum(LightCurve(t, x))
    in_seconds = power_spectrum(LightCurve.from_arrays(t * 86400.0, x, time_unit="s"))
    np.testing.assert_allclose(in_seconds.density, in_days.density, rtol=1e-9)
    np.testing.assert_allclose(in_seconds.freq, in_days.freq, rtol=1e-9)


def test_spectral_window_and_resolution():
    n = 3000
    t = np.arange(n) * LONG_CADENCE_DAYS
    ps = power_spectrum(LightCurve(t, np.sin(t * 7.0)), oversample=4, window_extent=1.0)
    span_s = n * LONG_CADENCE_DAYS * 86400.0
    assert ps.resolution == pytest.approx(1e6 / span_s, rel=1e-9)
    centre = np.argmin(np.abs(ps.window_freq))
    assert ps.window_power[centre] == pytest.approx(1.0)
    # Gapless window = Dirichlet kernel: first zero at 1/T (CALC).
    first_zero = np.argmin(np.abs(ps.window_freq - ps.resolution))
    assert ps.window_power[first_zero] < 1e-3


def test_smoothing_helpers(rng):
    t = np.arange(5000) * LONG_CADENCE_DAYS
    ps = power_spectrum(_white(t, 10.0, rng))
    flat = smooth_boxcar(ps, 2.0)
    assert flat.shape == ps.density.shape
    assert np.std(flat[100:-100]) < 0.3 * np.std(ps.density)
    gauss = smooth_gaussian(ps, 1.0)
    assert np.mean(gauss) == pytest.approx(np.mean(ps.density), rel=0.02)
    with pytest.raises(OptionError, match="smoothing width"):
        smooth_boxcar(ps, -1.0)


def test_bad_options_are_refused(rng):
    lc = _white(kepler_like_times(10.0), 1.0, rng)
    with pytest.raises(OptionError, match="allowed methods are"):
        power_spectrum(lc, method="wavelet")
    with pytest.raises(OptionError, match="oversample"):
        power_spectrum(lc, oversample=0.5)
