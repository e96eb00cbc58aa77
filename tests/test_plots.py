"""Figures are written for a detected star, a star without detection, and the simple
light-curve/spectrum view (they must not fail; their content is vetted by eye)."""

from __future__ import annotations

from pathlib import Path

from seismo.pipeline import analyze, prepare
from seismo.plots import log_binned, plot_lightcurve_spectrum, plot_star

DEMO = Path(__file__).resolve().parent.parent / "demo_lightcurves"


def test_star_figures(tmp_path):
    for name in ("HLD-0106.csv", "HLD-0105.txt"):
        out = plot_star(analyze(DEMO / name), tmp_path / f"{name}.png")
        assert out.stat().st_size > 20_000


def test_lightcurve_spectrum_figure(tmp_path):
    prepared = prepare(DEMO / "HLD-0106.csv")
    out = plot_lightcurve_spectrum(prepared.lightcurve, prepared.spectrum, tmp_path / "a.png")
    assert out.stat().st_size > 20_000


def test_log_binned_keeps_the_mean_of_a_flat_spectrum():
    import numpy as np

    freq = np.linspace(0, 100, 10001)
    centres, mean = log_binned(freq, np.full(freq.size, 3.0), n_bins=50)
    assert np.allclose(mean, 3.0)
    assert np.all(np.diff(centres) > 0)
