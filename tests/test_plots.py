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


def test_population_figures_for_small_and_large_catalogs(tmp_path):
    # Markers for small samples, shaded densities for large ones (must not fail at 10^5).
    import numpy as np
    from astropy.table import Table

    from seismo.plots import plot_population

    rng = np.random.default_rng(0)
    for n in (50, 100_000):
        state = rng.choice(["RGB", "RC", "2CL", "unknown"], n)
        table = Table({"state": state, "dnu": rng.uniform(3, 15, n),
                       "dpi1": rng.uniform(60, 320, n), "numax": rng.uniform(20, 200, n),
                       "mass": rng.uniform(0.8, 2.5, n), "radius": rng.uniform(4, 15, n)})
        files = plot_population(table, tmp_path / str(n))
        assert len(files) == 3 and all(f.stat().st_size > 10_000 for f in files)


def test_state_diagram_marks_candidate_dpi1_values_without_dpi1():
    # Common practice: a withheld value's candidates are shown, marked as not reported.
    from seismo.plots import agg_pyplot, draw_state_diagram
    from seismo.results import Measurement

    plt = agg_pyplot()
    fig, ax = plt.subplots()
    rivals = (Measurement(298.7, 0.2), Measurement(295.2, 0.3))
    draw_state_diagram(ax, Measurement(4.36, 0.02), None, "RC", rivals)
    ys = [list(line.get_ydata()) for line in ax.get_lines()]
    assert [298.7, 295.2] in ys
    assert any("candidate" in t.get_text() for t in ax.get_legend().get_texts())
    plt.close(fig)


def test_period_echelle_says_when_the_splitting_is_withheld():
    # Common practice: a value that is not reported is not drawn as if it were. Peaks that
    # a withheld splitting had set to m = ±1 are shown apart, and the title says so.
    import numpy as np

    from seismo.mixed import DipolePeaks, PeriodSpacing
    from seismo.plots import _draw_period_echelle, agg_pyplot
    from seismo.relations import universal_pattern
    from seismo.results import Measurement

    nu_p = universal_pattern(np.arange(3, 10), 1, 4.0, 30.0, 0.9, 0.0)
    freq = np.array([25.1, 27.3, 29.8, 31.2, 33.9])
    m = np.array([0, 1, 0, -1, 0])
    peaks = DipolePeaks(freq, np.full(5, 10.0), m, np.ones(5, bool), np.full(5, 0.9))
    inputs = {"nu_p": list(nu_p), "window": (20.0, 40.0), "dnu": 4.0}
    mixed = PeriodSpacing(Measurement(80.0, 0.1), Measurement(0.15, 0.01),
                          Measurement(0.28, 0.02), None, ("rot_core_ambiguous",), peaks,
                          [], inputs)
    plt = agg_pyplot()
    fig, ax = plt.subplots()
    _draw_period_echelle(ax, mixed)
    assert "splitting withheld" in ax.get_title()
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert any("withheld" in label for label in labels)
    assert not any("m=+1" in label for label in labels)
    plt.close(fig)
