"""Conditioning: trends and level jumps go, oscillations stay, nothing crosses a gap."""

from __future__ import annotations

import numpy as np
import pytest
from conftest import LONG_CADENCE_DAYS, kepler_like_times

from seismo.errors import OptionError
from seismo.lightcurve import ConditionOptions, LightCurve, condition
from seismo.lightcurve.conditioning import highpass_sigma_days, highpass_transmission


def _amplitude(t_days: np.ndarray, x: np.ndarray, freq_uhz: float) -> float:
    """Least-squares amplitude of a sinusoid of known frequency (with a constant)."""
    arg = 2 * np.pi * freq_uhz * 1e-6 * t_days * 86400.0
    design = np.column_stack([np.sin(arg), np.cos(arg), np.ones_like(arg)])
    coef, *_ = np.linalg.lstsq(design, x, rcond=None)
    return float(np.hypot(coef[0], coef[1]))


def _jumps_and_trend(t: np.ndarray) -> np.ndarray:
    segment = np.floor(t / 93.0)
    return 4000.0 * (segment % 3) - 2500.0 + 1500.0 * np.sin(2 * np.pi * t / 70.0) + 8.0 * t


@pytest.mark.parametrize("freq", [5.0, 7.5, 20.0, 120.0])
def test_sinusoid_above_5uhz_keeps_amplitude_while_trend_and_jumps_go(rng, freq):
    # Requirement of the conditioning: amplitude within 1% above 5 μHz (common practice:
    # a high-pass filter must not touch the oscillations), trend and jumps removed.
    t = kepler_like_times(400.0)
    amplitude, sigma = 150.0, 60.0
    signal = amplitude * np.sin(2 * np.pi * freq * 1e-6 * t * 86400.0 + 0.3)
    noise = rng.normal(0.0, sigma, t.size)
    lc = LightCurve(t, signal + noise + _jumps_and_trend(t),
                    meta={"flux_normalisation": "subtract"})
    out = condition(lc)
    measured = _amplitude(out.time, out.flux, freq)
    # Noise adds a fitting error of about sigma*sqrt(2/N) ≈ 0.5 ppm: well inside 1%.
    assert abs(measured / amplitude - 1) < 0.01
    kept = np.isin(t, out.time)
    leftover = out.flux - signal[kept] - noise[kept]
    trend = _jumps_and_trend(t)
    # Less than 3% of the instrumental rms (jumps + drift, ~3000 ppm) survives.
    assert np.std(leftover) < 0.03 * np.std(trend)


def test_filter_response_matches_its_transfer_function(rng):
    # The Gaussian smoother's transfer function exp(-2π²σ²ν²) (CALC) predicts the
    # transmission of a slow sinusoid on a long gapless segment.
    t = np.arange(0.0, 300.0, LONG_CADENCE_DAYS)
    freq = 1.2
    signal = 1000.0 * np.sin(2 * np.pi * freq * 1e-6 * t * 86400.0)
    out = condition(LightCurve(t, signal + rng.normal(0, 10, t.size)), clip_sigma=0)
    inner = (out.time > 10) & (out.time < 290)  # away from the segment edges
    measured = _amplitude(out.time[inner], out.flux[inner], freq) / 1000.0
    expected = float(highpass_transmission(np.array([freq]), 3.0)[0])
    assert 0.2 < expected < 0.9  # the test frequency sits on the filter's slope
    assert measured == pytest.approx(expected, abs=0.01)


def test_filter_width_protects_the_stated_frequency():
    # 99% of the amplitude kept at the protected frequency, by construction (CALC).
    for nu in (1.0, 3.0, 10.0):
        assert highpass_transmission(np.array([nu]), nu)[0] == pytest.approx(0.99, rel=1e-12)
    assert highpass_sigma_days(3.0) == pytest.approx(1.8635, rel=1e-3)


def test_segments_are_filtered_independently(rng):
    t = kepler_like_times(200.0)
    x = rng.normal(0.0, 100.0, t.size)
    lc_a = LightCurve(t, x)
    changed = x.copy()
    late = t > 100.0  # everything after the first 93-d gap
    changed[late] += 5000.0 * np.sin(t[late])
    out_a = condition(lc_a, clip_sigma=0)
    out_b = condition(LightCurve(t, changed), clip_sigma=0)
    early = out_a.time < 93.0
    # The first segment's output may differ only by the global mean removed at the end.
    diff = out_a.flux[early] - out_b.flux[early]
    np.testing.assert_allclose(diff - diff.mean(), 0.0, atol=1e-8)
    assert out_a.meta["conditioning"]["n_segments"] == 4  # gaps at 40.0, 93 and 186 d


def test_counts_are_renormalised_per_segment():
    # A gain change between segments scales counts; relative variability must not change.
    t = kepler_like_times(200.0)
    rel = 1e-6 * 300.0 * np.sin(2 * np.pi * 30e-6 * t * 86400.0)
    gain = np.where(t > 93.0, 1.07, 1.0)
    counts = 2.0e5 * gain * (1 + rel)
    level = np.median(counts)
    lc = LightCurve(t, (counts / level - 1) * 1e6, meta={"flux_normalisation": "divide"})
    out = condition(lc, clip_sigma=0)
    first, second = out.time < 93.0, out.time > 95.0
    a1 = _amplitude(out.time[first], out.flux[first], 30.0)
    a2 = _amplitude(out.time[second], out.flux[second], 30.0)
    assert a1 == pytest.approx(300.0, rel=2e-3)
    assert a2 == pytest.approx(300.0, rel=2e-3)


def test_outliers_are_clipped_and_counted(rng):
    t = kepler_like_times(100.0)
    x = 100.0 * np.sin(2 * np.pi * 40e-6 * t * 86400.0) + rng.normal(0, 30.0, t.size)
    bad = rng.choice(t.size, 25, replace=False)
    x[bad] += rng.choice([-1, 1], 25) * rng.uniform(20, 50, 25) * 30.0
    out = condition(LightCurve(t, x))
    record = out.meta["conditioning"]
    assert not np.isin(t[bad], out.time).any()
    assert 25 <= record["n_outliers_clipped"] < 25 + 0.001 * t.size


def test_nonfinite_dropped_sorted_and_duplicates_merged(rng):
    t = kepler_like_times(30.0)
    x = rng.normal(0, 50.0, t.size)
    x[5:15] = np.nan
    order = rng.permutation(t.size)
    t2 = np.concatenate([t[order], t[:20]])
    x2 = np.concatenate([x[order], x[:20] + 2.0])
    out = condition(LightCurve(t2, x2), clip_sigma=0, highpass_uhz=0)
    record = out.meta["conditioning"]
    assert np.all(np.diff(out.time) > 0)
    assert record["n_nonfinite_dropped"] == 20  # 10 NaNs, each present twice
    assert record["n_duplicates_merged"] == 10  # the finite repeated stamps
    assert out.n_points == t.size - 10


def test_record_is_complete():
    t = kepler_like_times(60.0)
    out = condition(LightCurve(t, np.sin(t * 50.0)))
    keys = {"n_input", "n_nonfinite_dropped", "n_duplicates_merged", "n_outliers_clipped",
            "n_output", "n_segments", "gap_days", "highpass_uhz", "highpass_sigma_days"}
    assert keys <= set(out.meta["conditioning"])


def test_invalid_options_are_refused():
    with pytest.raises(OptionError, match="gap_days"):
        ConditionOptions(gap_days=-1)
    with pytest.raises(OptionError, match="highpass_uhz"):
        ConditionOptions(highpass_uhz=float("nan"))
