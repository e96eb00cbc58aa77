"""Figures for vetting a star. matplotlib is imported only here, when used."""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

import numpy as np

from .lightcurve import LightCurve
from .spectrum import PowerSpectrum

__all__ = ["log_binned", "plot_lightcurve_spectrum"]

# Our own palette: slate for data, amber for smoothed curves, teal for markers.
_DATA = "#4a5568"
_DATA_ALT = "#8a97ab"
_SMOOTH = "#d97706"
_MARK = "#0f766e"


def _pyplot() -> Any:
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
    plt = _pyplot()
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fig, (ax_lc, ax_ps) = plt.subplots(2, 1, figsize=(10, 8), constrained_layout=True)

    t0 = float(lc.time.min())
    segments = lc.segment if lc.segment is not None else np.zeros(lc.n_points, dtype=int)
    marker, size = ("o", 1.2) if lc.n_points < 20000 else (",", 1.0)
    for parity, colour in ((0, _DATA), (1, _DATA_ALT)):
        sel = segments % 2 == parity
        ax_lc.plot(lc.time[sel] - t0, lc.flux[sel], marker, ms=size, ls="none", color=colour,
                   rasterized=True)
    ax_lc.set_xlabel(f"Time − {t0:.2f} (d)")
    ax_lc.set_ylabel("Relative flux (ppm)")
    n_seg = int(segments.max()) + 1 if segments.size else 0
    ax_lc.set_title(
        f"Conditioned light curve: {lc.n_points:,} points, {n_seg} segments "
        f"(shades alternate by segment)",
        fontsize=10,
    )
    spread = np.percentile(lc.flux, [0.1, 99.9])
    pad = 0.1 * (spread[1] - spread[0])
    ax_lc.set_ylim(spread[0] - pad, spread[1] + pad)

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
