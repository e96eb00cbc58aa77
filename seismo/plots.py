"""Figures for vetting a star. matplotlib is imported only here, when used."""

from __future__ import annotations

import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from .lightcurve import LightCurve
from .spectrum import PowerSpectrum

__all__ = ["log_binned", "plot_lightcurve_spectrum", "plot_star", "plot_population",
           "draw_state_diagram", "draw_state_regions", "draw_by_state", "table_column",
           "agg_pyplot"]

# Our own palette: slate for data, amber for smoothed curves, teal for markers.
_DATA = "#4a5568"
_DATA_ALT = "#8a97ab"
_SMOOTH = "#d97706"
_MARK = "#0f766e"


def agg_pyplot() -> Any:
    """matplotlib.pyplot on the file-only Agg backend (figures need no display)."""
    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError as exc:  # pragma: no cover - matplotlib is a dependency
        raise ImportError("figures need matplotlib: pip install matplotlib") from exc
    return plt


def log_binned(
    freq: np.ndarray, density: np.ndarray, n_bins: int = 400
) -> tuple[np.ndarray, np.ndarray]:
    """Mean density in logarithmically spaced frequency bins.

    Parameters
    ----------
    freq : ndarray, shape (n_freq,)
        Frequencies, μHz (the zero bin is ignored).
    density : ndarray, shape (n_freq,)
        Power density, ppm²/μHz.
    n_bins : int
        Number of bins between the lowest non-zero and the highest frequency.

    Returns
    -------
    centres, mean_density : ndarray
        Geometric bin centres (μHz) and mean density (ppm²/μHz) of the
        non-empty bins.
    """
    pos = freq > 0
    f, p = freq[pos], density[pos]
    edges = np.geomspace(f[0], f[-1] * (1 + 1e-12), n_bins + 1)
    idx = np.clip(np.searchsorted(edges, f, side="right") - 1, 0, n_bins - 1)
    counts = np.bincount(idx, minlength=n_bins)
    sums = np.bincount(idx, p, minlength=n_bins)
    good = counts > 0
    centres = np.sqrt(edges[:-1] * edges[1:])
    return centres[good], sums[good] / counts[good]


def plot_lightcurve_spectrum(
    lc: LightCurve, ps: PowerSpectrum, path: str | os.PathLike[str], title: str | None = None
) -> Path:
    """Write a two-panel figure: the conditioned light curve and its spectrum.

    Parameters
    ----------
    lc : LightCurve
        Conditioned light curve (days, ppm).
    ps : PowerSpectrum
        Its power density spectrum (μHz, ppm²/μHz).
    path : str or path-like
        Output image file (PNG recommended).
    title : str, optional
        Figure title; default the star's id.

    Returns
    -------
    Path
        The file written.
    """
    plt = agg_pyplot()
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fig, (ax_lc, ax_ps) = plt.subplots(2, 1, figsize=(10, 8), constrained_layout=True)

    _draw_lightcurve(ax_lc, lc)

    pos = ps.freq > 0
    ax_ps.loglog(ps.freq[pos], ps.density[pos], color="#c8ced8", lw=0.3, rasterized=True,
                 label="power density")
    centres, smooth = log_binned(ps.freq, ps.density)
    ax_ps.loglog(centres, smooth, color=_SMOOTH, lw=1.5, label="mean in log-spaced bins")
    ax_ps.axvline(ps.nyquist, color=_MARK, ls="--", lw=1, label=f"Nyquist {ps.nyquist:.1f} μHz")
    highpass = lc.meta.get("conditioning", {}).get("highpass_uhz")
    if highpass:
        ax_ps.axvline(highpass, color=_MARK, ls=":", lw=1,
                      label=f"high-pass protects above {highpass:g} μHz")
    ax_ps.set_xlim(max(ps.freq[pos][0], ps.resolution), ps.freq[-1])
    finite = ps.density[pos][ps.density[pos] > 0]
    if finite.size:
        ax_ps.set_ylim(np.percentile(finite, 0.5), finite.max() * 2)
    ax_ps.set_xlabel("Frequency (μHz)")
    ax_ps.set_ylabel("Power density (ppm²/μHz)")
    ax_ps.set_title(
        f"Power density spectrum ({ps.method}); resolution {ps.resolution:.4g} μHz", fontsize=10
    )
    ax_ps.legend(loc="lower left", fontsize=8, frameon=False)
    fig.suptitle(title or str(lc.id or ""), fontsize=12)
    fig.savefig(path, dpi=110)
    plt.close(fig)
    return path


def _echelle_colormap() -> Any:
    from matplotlib.colors import LinearSegmentedColormap

    # Our own map: paper white through slate to a deep ink blue.
    return LinearSegmentedColormap.from_list(
        "seismo_ink", ["#fbfaf7", "#c9d3df", "#6b7f99", "#2c3e5c", "#0b1426"]
    )


def plot_star(analysis: Any, path: str | os.PathLike[str]) -> Path:
    """Write the vetting figure of one analysed star.

    Panels: the conditioned light curve; the power density spectrum (raw and
    smoothed) with the fitted background components, envelope and numax; the
    spectrum around numax divided by the background, with the fitted l=0 and
    l=2 frequencies; and the échelle diagram with the fitted ridges. A star
    without a detection shows the background-only fit and says so.

    Parameters
    ----------
    analysis : seismo.pipeline.Analysis
        Result of `seismo.pipeline.analyze`.
    path : str or path-like
        Output image (PNG).

    Returns
    -------
    Path
        The file written.
    """
    from .state import describe_state

    plt = agg_pyplot()
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    lc = analysis.prepared.lightcurve
    ps = analysis.prepared.spectrum
    result = analysis.result
    fig = plt.figure(figsize=(13, 14), constrained_layout=True)
    grid = fig.add_gridspec(4, 2, height_ratios=[0.8, 1.2, 1.2, 1.3])
    ax_lc = fig.add_subplot(grid[0, :])
    ax_ps = fig.add_subplot(grid[1, 0])
    ax_zoom = fig.add_subplot(grid[1, 1])
    ax_ech = fig.add_subplot(grid[2, :])
    ax_period = fig.add_subplot(grid[3, 0])
    ax_state = fig.add_subplot(grid[3, 1])

    _draw_lightcurve(ax_lc, lc)
    fit = analysis.background
    _draw_spectrum(ax_ps, ps, fit, result)
    if result.detected and result.numax is not None:
        _draw_zoom(ax_zoom, ps, fit, analysis.pattern, result)
    else:
        _placeholder(ax_zoom, "No oscillation excess detected\n(false-alarm probability "
                     f"{result.details['detection']['false_alarm']:.2g})")
    if result.dnu is not None and analysis.pattern is not None:
        _draw_echelle(ax_ech, ps, fit, analysis.pattern, result)
    else:
        _placeholder(ax_ech, "Échelle diagram needs Δν: " + (
            "not measured" if result.detected else "no detection"))
    mixed = getattr(analysis, "mixed", None)
    if mixed is not None and mixed.dpi1 is not None:
        _draw_period_echelle(ax_period, mixed)
    else:
        reason = ", ".join(f for f in result.flags if f.startswith("dpi1_")) or "no detection"
        text = f"Period échelle needs ΔΠ1: not measured\n({reason})"
        if mixed is not None and mixed.dpi1_rivals:
            text += "\ncandidate values: " + ", ".join(
                f"{r.value:.1f}" for r in mixed.dpi1_rivals) + " s"
        _placeholder(ax_period, text)
    if result.detected:
        draw_state_diagram(ax_state, result.dnu, result.dpi1, result.state,
                           () if mixed is None else mixed.dpi1_rivals)
    else:
        _placeholder(ax_state, "No evolutionary state without a detection")
    title = f"{result.id}"
    if result.detected and result.numax is not None:
        title += f"   numax {result.numax.value:.3g} μHz"
        if result.dnu is not None:
            title += f"   Δν {result.dnu.value:.4g} μHz"
        if result.dpi1 is not None:
            title += f"   ΔΠ1 {result.dpi1.value:.4g} s"
        title += f"   state {describe_state(result.state, result.state_probability, result.flags)}"
    else:
        title += "   no oscillations detected"
    fig.suptitle(title, fontsize=13)
    fig.savefig(path, dpi=100)
    plt.close(fig)
    return path


def _placeholder(ax: Any, text: str) -> None:
    ax.text(0.5, 0.5, text, ha="center", va="center", transform=ax.transAxes, fontsize=11,
            color=_DATA)
    ax.set_xticks([])
    ax.set_yticks([])


def _draw_lightcurve(ax: Any, lc: LightCurve) -> None:
    t0 = float(lc.time.min())
    segments = lc.segment if lc.segment is not None else np.zeros(lc.n_points, dtype=int)
    marker, size = ("o", 1.2) if lc.n_points < 20000 else (",", 1.0)
    for parity, colour in ((0, _DATA), (1, _DATA_ALT)):
        sel = segments % 2 == parity
        ax.plot(lc.time[sel] - t0, lc.flux[sel], marker, ms=size, ls="none", color=colour,
                rasterized=True)
    spread = np.percentile(lc.flux, [0.1, 99.9])
    pad = 0.1 * (spread[1] - spread[0])
    ax.set_ylim(spread[0] - pad, spread[1] + pad)
    ax.set_xlabel(f"Time − {t0:.2f} (d)")
    ax.set_ylabel("Relative flux (ppm)")
    n_seg = int(segments.max()) + 1 if segments.size else 0
    ax.set_title(f"Conditioned light curve: {lc.n_points:,} points in {n_seg} segments",
                 fontsize=10)


def _draw_spectrum(ax: Any, ps: PowerSpectrum, fit: Any, result: Any) -> None:
    pos = ps.freq > 0
    ax.loglog(ps.freq[pos], ps.density[pos], color="#d5dae2", lw=0.3, rasterized=True,
              label="power density")
    centres, smooth = log_binned(ps.freq, ps.density)
    ax.loglog(centres, smooth, color=_DATA, lw=1.0, label="mean in log-spaced bins")
    freq = np.geomspace(max(ps.freq[1], 0.5), ps.freq[-1], 800)
    parts = fit.parts(freq)
    styles = {"granulation 1": ("--", "#7c8da6"), "granulation 2": ("-.", "#7c8da6"),
              "white noise": (":", "#7c8da6"), "envelope": ("-", _MARK)}
    for label, values in parts.items():
        ls, colour = styles.get(label, ("-", "#999999"))
        ax.loglog(freq, values, ls=ls, color=colour, lw=1.2, label=label)
    ax.loglog(freq, fit.model.psd(freq, fit.params), color=_SMOOTH, lw=1.8,
              label="fitted model")
    if result.detected and result.numax is not None:
        ax.axvline(result.numax.value, color=_MARK, lw=1, ls="--",
                   label=f"numax {result.numax.value:.3g} μHz")
    finite = smooth[smooth > 0]
    if finite.size:
        ax.set_ylim(finite.min() / 3, finite.max() * 5)
    ax.set_xlim(max(ps.freq[pos][0], 0.5), ps.freq[-1])
    ax.set_xlabel("Frequency (μHz)")
    ax.set_ylabel("Power density (ppm²/μHz)")
    ax.set_title("Spectrum and fitted background", fontsize=10)
    ax.legend(loc="lower left", fontsize=7, frameon=False, ncol=2)


def _draw_zoom(ax: Any, ps: PowerSpectrum, fit: Any, pattern: Any, result: Any) -> None:
    numax = result.numax.value
    width = fit.value("envelope:width")
    lo, hi = max(numax - 3 * width, ps.freq[1]), min(numax + 3 * width, ps.freq[-1])
    sel = (ps.freq >= lo) & (ps.freq <= hi)
    snr = ps.density[sel] / fit.background(ps.freq[sel])
    ax.plot(ps.freq[sel], snr, color="#c3cad6", lw=0.4, rasterized=True,
            label="spectrum / background")
    step = max(1, int(round(max(0.1, 3 * ps.resolution) / ps.df)))
    kernel = np.ones(step) / step
    ax.plot(ps.freq[sel], np.convolve(snr, kernel, mode="same"), color=_DATA, lw=0.8,
            label="smoothed")
    if pattern is not None and "dnu_pattern_disagrees" not in pattern.flags:
        modes = pattern.modes
        for ell, colour, name in ((0, _SMOOTH, "l=0"), (2, _MARK, "l=2")):
            f = modes.frequency[modes.l == ell]
            f = f[(f >= lo) & (f <= hi)]
            for i, value in enumerate(f):
                ax.axvline(value, color=colour, lw=0.8, alpha=0.8,
                           label=f"fitted {name}" if i == 0 else None)
    ax.set_xlim(lo, hi)
    ax.set_ylim(0, max(10.0, np.percentile(snr, 99.9) * 1.1))
    ax.set_xlabel("Frequency (μHz)")
    ax.set_ylabel("Power / background")
    ax.set_title("Around numax", fontsize=10)
    ax.legend(loc="upper right", fontsize=7, frameon=False)


def _draw_echelle(ax: Any, ps: PowerSpectrum, fit: Any, pattern: Any, result: Any) -> None:
    from matplotlib.colors import PowerNorm

    from .pmodes import echelle_coordinates, echelle_image

    dnu = result.dnu.value
    background = fit.background(ps.freq)
    # Put the radial ridge at 0.65 Δν, so the l=2 ridge sits left of it and the dipole
    # forest near 0.15 Δν, none of them split across the edge.
    eps = result.eps_p.value if result.eps_p is not None else 1.0
    offset = float(((eps - 0.65) % 1.0) * dnu)
    image = echelle_image(ps, dnu, result.numax.value, background, offset=offset)
    finite = image.image[np.isfinite(image.image)]
    top = float(np.percentile(finite, 99.7)) if finite.size else 1.0
    ax.pcolormesh(image.x, image.y, image.image, cmap=_echelle_colormap(), shading="auto",
                  norm=PowerNorm(0.6, vmin=0.0, vmax=max(top, 1.0)), rasterized=True)
    rejected = "dnu_pattern_disagrees" in pattern.flags
    modes = pattern.modes
    for ell, marker, colour in ((0, "o", _SMOOTH), (2, "s", _MARK)):
        sel = (modes.l == ell) & (not rejected)
        if sel.any():
            x, y = echelle_coordinates(modes.frequency[sel], dnu, offset=image.offset)
            ax.plot(x, y, marker, mfc="none", mec=colour, ms=7, mew=1.5, ls="none",
                    label=f"fitted l={ell}")
    ax.set_xlabel(f"Frequency modulo Δν = {dnu:.4g} μHz (μHz)")
    ax.set_ylabel("Frequency (μHz)")
    note = ("; pattern fit rejected (disagrees with the autocorrelation Δν), no modes shown"
            if rejected else "")
    ax.set_title(f"Échelle diagram (power / background, smoothed){note}", fontsize=10)
    if not rejected:
        ax.legend(loc="upper right", fontsize=8, frameon=True)


# Region shades of our own choosing: slate for RGB, amber for RC, teal for 2CL.
_STATE_COLOURS = {"RGB": "#64748b", "RC": "#d97706", "2CL": "#0f766e"}


def draw_state_regions(ax: Any, filled: bool) -> None:
    """The evolutionary regions of `seismo.state.STATE_REGIONS` in the (Δν, ΔΠ1) plane."""
    from matplotlib.patches import Rectangle

    from .state import STATE_REGIONS

    for name, region in STATE_REGIONS.items():
        (x0, x1), (y0, y1) = region.dnu, region.dpi1
        colour = _STATE_COLOURS[name]
        if filled:
            patch = Rectangle((x0, y0), x1 - x0, y1 - y0, color=colour, alpha=0.18, lw=0,
                              label=f"{name} region")
        else:
            patch = Rectangle((x0, y0), x1 - x0, y1 - y0, fill=False, lw=1.2, ls="--", ec=colour)
        ax.add_patch(patch)
        ax.text(x1, y1, f" {name}" if filled else f" {name} region", color=colour,
                fontsize=9 if filled else 8, va="top", ha="right")


def draw_state_diagram(ax: Any, dnu: Any, dpi1: Any, state: str | None = None,
                       rivals: Sequence[Any] = ()) -> None:
    """Draw the (Δν, ΔΠ1) diagram with the evolutionary regions and one star.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        Target axes.
    dnu, dpi1 : Measurement or None
        The star's large separation (μHz) and period spacing (s); with ΔΠ1
        missing, the star's Δν is drawn as a vertical band.
    state : str, optional
        The star's classified state, for the legend.
    rivals : sequence of Measurement
        Candidate ΔΠ1 values (s) when ΔΠ1 is withheld
        (`seismo.mixed.PeriodSpacing.dpi1_rivals`), drawn as open markers at
        the star's Δν.
    """
    draw_state_regions(ax, filled=True)
    label = "this star" + (f" ({state})" if state else "")
    if dnu is not None and dpi1 is not None:
        ax.errorbar([dnu.value], [dpi1.value], xerr=[dnu.error or 0], yerr=[dpi1.error or 0],
                    fmt="o", color="#111827", ms=6, capsize=3, label=label)
    elif dnu is not None and len(rivals):
        values = [r.value for r in rivals]
        ax.plot(np.full(len(values), dnu.value), values, "o", mfc="none", mec="#111827",
                mew=1.5, ms=8, label=label + ": candidate ΔΠ1, not reported")
        ax.errorbar([dnu.value], [float(np.mean(values))], xerr=[dnu.error or 0], fmt="none",
                    ecolor="#111827", capsize=3)
    elif dnu is not None:
        ax.axvspan(dnu.value - (dnu.error or 0), dnu.value + (dnu.error or 0),
                   color="#111827", alpha=0.35, label=label + ": Δν only (no ΔΠ1)")
        ax.axvline(dnu.value, color="#111827", lw=1)
    ax.set_xlim(2.0, 21.0)
    ax.set_ylim(0.0, 400.0)
    ax.set_xlabel("Δν (μHz)")
    ax.set_ylabel("ΔΠ1 (s)")
    ax.set_title("Seismic diagram and evolutionary regions", fontsize=10)
    ax.legend(loc="upper right", fontsize=7, frameon=False)


def _draw_period_echelle(ax: Any, mixed: Any) -> None:
    """Stretched period modulo ΔΠ1 against frequency, peaks and fitted modes.

    Without a measured core rotation every peak is on one ridge. With one, the
    observed components are shown, so the m = −1, 0, +1 ridges of the fit appear
    side by side, each tilting as δν_rot/ν².
    """
    data = mixed.echelle()
    dpi1 = mixed.dpi1.value
    rotating = mixed.rot_core is not None
    suffix = "_observed" if rotating else ""
    # Shift so that the m = 0 ridge (at ε_g ΔΠ1) sits in the middle of the panel.
    shift = 0.5 * dpi1 - (mixed.eps_g.value * dpi1 if mixed.eps_g is not None else 0.0)
    model_x = np.mod(data["model_x" + suffix] + shift, dpi1)
    peak_x = np.mod(data["peak_x" + suffix] + shift, dpi1)
    colours = {-1: "#2563eb", 0: "#111827", 1: "#dc2626"}
    for m, colour in colours.items():
        order = (f" m={m:+d}" if m else " m=0") if rotating else ""
        sel = data["model_m"] == m
        if sel.any():
            ax.plot(model_x[sel], data["model_freq"][sel], ".", color=colour, ms=2.5,
                    alpha=0.45, label="fitted ridge" + order)
        sel = data["peak_m"] == m
        if sel.any() and (rotating or m == 0):
            ax.plot(peak_x[sel], data["peak_freq"][sel], "o", mfc="none", mec=colour,
                    ms=5, label="peaks" + order)
    withheld = not rotating and bool(np.any(data["peak_m"] != 0))
    if withheld:
        # A splitting was fitted but not reported: its m = ±1 peaks stay off the ridge.
        sel = data["peak_m"] != 0
        ax.plot(peak_x[sel], data["peak_freq"][sel], "o", mfc="none", mec="#9ca3af", ms=5,
                label="peaks set m = ±1 by the withheld splitting")
    ax.set_xlim(0, dpi1)
    frame = "observed components" if rotating else "m = 0 ridge centred"
    ax.set_xlabel(f"Stretched period modulo ΔΠ1 = {dpi1:.4g} s ({frame}) (s)")
    ax.set_ylabel("Frequency (μHz)")
    q = mixed.q.value if mixed.q is not None else float("nan")
    title = f"Period échelle of the dipole modes (q = {q:.3g}"
    if rotating:
        title += f", δν_rot,core = {mixed.rot_core.value:.3g} μHz"
    elif withheld:
        title += ", core splitting withheld"
    ax.set_title(title + ")", fontsize=10)
    ax.legend(loc="upper right", fontsize=7, frameon=True, ncol=2)


def _density_or_points(ax: Any, x: np.ndarray, y: np.ndarray, colour: str, label: str,
                       extent: tuple[float, float, float, float], log_x: bool = False,
                       log_y: bool = False) -> None:
    """Markers for a few hundred stars; shaded 2-D density beyond (readable at 10^5)."""
    good = np.isfinite(x) & np.isfinite(y)
    x, y = x[good], y[good]
    if x.size == 0:
        return
    if x.size <= 1500:
        ax.plot(x, y, "o", ms=3, color=colour, alpha=0.7, ls="none", label=f"{label} ({x.size})")
        return
    from matplotlib.colors import LinearSegmentedColormap

    cmap = LinearSegmentedColormap.from_list(f"density_{label}", ["#ffffff00", colour])
    tx = np.log10 if log_x else (lambda v: v)
    ty = np.log10 if log_y else (lambda v: v)
    xb = np.linspace(tx(extent[0]), tx(extent[1]), 160)
    yb = np.linspace(ty(extent[2]), ty(extent[3]), 160)
    hist, _, _ = np.histogram2d(tx(x), ty(y), bins=[xb, yb])
    hist = np.where(hist > 0, np.log10(hist + 1.0), np.nan)
    ex = 10**xb if log_x else xb
    ey = 10**yb if log_y else yb
    ax.pcolormesh(ex, ey, hist.T, cmap=cmap, shading="auto", rasterized=True)
    ax.plot([], [], "s", color=colour, label=f"{label} ({x.size:,}, log density)")


def draw_by_state(ax: Any, states: np.ndarray, x: np.ndarray, y: np.ndarray,
                  extent: tuple[float, float, float, float], **scales: bool) -> None:
    """One layer of markers or density per evolutionary state (unknown in grey)."""
    for name, colour in {**_STATE_COLOURS, "unknown": "#9ca3af"}.items():
        sel = states == name
        _density_or_points(ax, x[sel], y[sel], colour, name, extent, **scales)


def _save(plt: Any, fig: Any, path: Path) -> Path:
    fig.savefig(path, dpi=110)
    plt.close(fig)
    return path


def table_column(table: Any, name: str) -> np.ndarray:
    """Column ``name`` of a catalog table as bare floats in its own unit (NaN if absent)."""
    if name not in table.colnames:
        return np.full(len(table), np.nan)
    col = table[name]
    values = np.ma.filled(np.ma.asarray(getattr(col, "value", col), dtype=np.float64), np.nan)
    return np.asarray(values, dtype=np.float64)


def plot_population(table: Any, out_dir: str | os.PathLike[str]) -> list[Path]:
    """Write the survey's population figures.

    Three figures: the (Δν, ΔΠ1) diagram coloured by state with the
    evolutionary regions; numax against Δν with the published power law
    (Stello et al. 2009); and the scaling mass–radius diagram. Up to about
    1500 stars per state are drawn as markers, larger samples as shaded 2-D
    densities, so the figures stay readable for 10^5 stars.

    Parameters
    ----------
    table : astropy.table.Table
        A survey catalog with columns ``numax``, ``dnu``, ``dpi1``, ``mass``,
        ``radius`` (μHz, μHz, s, M☉, R☉) and ``state``.
    out_dir : str or path-like
        Folder for ``population_dnu_dpi1.png``, ``population_numax_dnu.png`` and
        ``population_mass_radius.png``.

    Returns
    -------
    list of Path
        The files written.
    """
    from .relations import STELLO_2009

    plt = agg_pyplot()
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    states = np.asarray(table["state"]).astype(str) if "state" in table.colnames else \
        np.full(len(table), "unknown")
    numax, dnu, dpi1 = (table_column(table, name) for name in ("numax", "dnu", "dpi1"))
    mass, radius = table_column(table, "mass"), table_column(table, "radius")
    written = []

    fig, ax = plt.subplots(figsize=(8, 6), constrained_layout=True)
    draw_state_regions(ax, filled=False)
    draw_by_state(ax, states, dnu, dpi1, (2.0, 21.0, 0.0, 400.0))
    ax.set_xlim(2.0, 21.0)
    ax.set_ylim(0.0, 400.0)
    ax.set_xlabel("Δν (μHz)")
    ax.set_ylabel("ΔΠ1 (s)")
    n_dpi1 = int(np.sum(np.isfinite(dpi1)))
    ax.set_title(f"Seismic diagram: {n_dpi1:,} of {len(table):,} stars with ΔΠ1", fontsize=10)
    if ax.get_legend_handles_labels()[0]:
        ax.legend(loc="upper right", fontsize=8, frameon=False)
    written.append(_save(plt, fig, out / "population_dnu_dpi1.png"))

    fig, ax = plt.subplots(figsize=(8, 6), constrained_layout=True)
    draw_by_state(ax, states, numax, dnu, (5.0, 300.0, 0.8, 25.0), log_x=True,
              log_y=True)
    grid = np.geomspace(5.0, 300.0, 100)
    alpha, beta = STELLO_2009
    ax.plot(grid, alpha * grid**beta, color="#111827", lw=1.2,
            label=f"Δν = {alpha} numax^{beta} (Stello et al. 2009)")
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlim(5.0, 300.0)
    ax.set_ylim(0.8, 25.0)
    ax.set_xlabel("numax (μHz)")
    ax.set_ylabel("Δν (μHz)")
    ax.set_title("numax and Δν", fontsize=10)
    ax.legend(loc="upper left", fontsize=8, frameon=False)
    written.append(_save(plt, fig, out / "population_numax_dnu.png"))

    fig, ax = plt.subplots(figsize=(8, 6), constrained_layout=True)
    draw_by_state(ax, states, mass, radius, (0.3, 4.0, 2.0, 40.0), log_y=True)
    ax.set_yscale("log")
    ax.set_xlim(0.3, 4.0)
    ax.set_ylim(2.0, 40.0)
    ax.set_xlabel("Scaling mass (M☉; uncorrected scaling masses run high by ~10–15%)")
    ax.set_ylabel("Scaling radius (R☉)")
    n_mass = int(np.sum(np.isfinite(mass)))
    ax.set_title(f"Mass and radius: {n_mass:,} stars with Teff", fontsize=10)
    if n_mass:
        ax.legend(loc="upper left", fontsize=8, frameon=False)
    else:
        _placeholder(ax, "No star has a mass: give Teff (a teff column in the input table)")
    written.append(_save(plt, fig, out / "population_mass_radius.png"))
    return written
