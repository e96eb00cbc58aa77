"""Figures of model tracks over the observed population. matplotlib only here, when used.

An I/O edge module, like :mod:`seismo.plots`, whose region and density helpers
it reuses so the model figures and the survey figures look alike.
"""

from __future__ import annotations

import os
from collections.abc import Iterable
from pathlib import Path
from typing import Any

import numpy as np

from .tracks import Track

__all__ = ["plot_tracks"]

# Our own track palette: ink blue, brick, olive, plum, ochre, steel (cycled).
_TRACK_COLOURS = ("#1e3a8a", "#b91c1c", "#4d7c0f", "#7e22ce", "#a16207", "#0e7490")
_DIAGRAM = (2.0, 21.0, 0.0, 400.0)
_NUMAX_DNU = (5.0, 300.0, 0.8, 25.0)


def _catalog_table(catalog: Any) -> Any:
    if catalog is None or hasattr(catalog, "colnames"):
        return catalog
    from astropy.table import Table

    return Table.read(catalog)


def _draw_track(ax: Any, x: np.ndarray, y: np.ndarray, colour: str, label: str,
                extent: tuple[float, float, float, float], state: np.ndarray) -> None:
    """A track as a line with markers, arrows in age order and a label at its end.

    The line is broken where the evolutionary state changes: the jump from the
    RGB to the clump (helium ignition) is not a path through the diagram.
    """
    good = np.isfinite(x) & np.isfinite(y)
    x, y, state = x[good], y[good], np.asarray(state)[good]
    if x.size == 0:
        ax.plot([], [], "-", color=colour, label=f"{label} (no values here)")
        return
    breaks = np.flatnonzero(state[1:] != state[:-1]) + 1
    ax.plot(np.insert(x, breaks, np.nan), np.insert(y, breaks, np.nan), "-", color=colour,
            lw=1.6, zorder=5, label=label)
    ax.plot(x, y, "o", color=colour, ms=3.5, zorder=6)
    ax.plot(x[:1], y[:1], "o", mfc="white", mec=colour, ms=7, mew=1.5, zorder=7)
    # Arrows at a few points along the track show the direction of increasing age.
    for i in np.unique(np.linspace(0, x.size - 2, min(4, max(x.size - 1, 0))).astype(int)):
        if x.size < 2:
            break
        if state[i] != state[i + 1]:
            continue
        ax.annotate("", xy=(x[i + 1], y[i + 1]), xytext=(x[i], y[i]), zorder=6,
                    arrowprops={"arrowstyle": "-|>", "color": colour, "lw": 1.4,
                                "mutation_scale": 14})
    x0, x1, y0, y1 = extent
    inside = (x >= x0) & (x <= x1) & (y >= y0) & (y <= y1)
    if inside.any():
        k = np.flatnonzero(inside)[-1]
        ax.annotate(label, (x[k], y[k]), xytext=(6, 4), textcoords="offset points",
                    color=colour, fontsize=8, fontweight="bold", zorder=8,
                    bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none",
                          "alpha": 0.8})


def plot_tracks(
    tracks: Iterable[Track],
    catalog: Any = None,
    *,
    path: str | os.PathLike[str],
    title: str | None = None,
) -> Path:
    """Write a two-panel figure of model tracks over an observed catalog.

    Left: the (Δν, ΔΠ1) diagram with the evolutionary regions of
    `seismo.state.STATE_REGIONS` (shaded, or outlined when a catalog is
    drawn), the catalog's stars by state and the tracks. Right: numax
    against Δν (log–log) with the power law Δν = 0.263 numax^0.772 (Stello
    et al. 2009), the catalog and the tracks.
    Tracks are lines with markers, an open circle at the youngest model and
    arrows pointing to older models; catalog stars are markers up to about
    1500 per state, shaded 2-D densities beyond (as `seismo.plots.plot_population`).

    Parameters
    ----------
    tracks : iterable of Track
        The model tracks (Δν μHz, ΔΠ1 s, numax μHz).
    catalog : astropy.table.Table, str or path-like, optional
        A survey catalog (`seismo.survey.catalog` format: columns ``dnu``,
        ``dpi1``, ``numax``, ``state``), or a file astropy can read.
    path : str or path-like
        Output image (PNG).
    title : str, optional
        Figure title.

    Returns
    -------
    Path
        The file written.
    """
    from ..plots import _by_state, _column, _draw_regions, _pyplot
    from ..relations import STELLO_2009, dnu_from_numax

    plt = _pyplot()
    tracks = list(tracks)
    table = _catalog_table(catalog)
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fig, (ax_d, ax_n) = plt.subplots(1, 2, figsize=(14, 6.2), constrained_layout=True)

    # Outlined regions when a catalog is drawn (its shading would hide the density layers).
    _draw_regions(ax_d, filled=table is None)
    n_stars = 0
    if table is not None:
        n_stars = len(table)
        states = (np.asarray(table["state"]).astype(str) if "state" in table.colnames
                  else np.full(n_stars, "unknown"))
        dnu, dpi1, numax = _column(table, "dnu"), _column(table, "dpi1"), _column(table, "numax")
        _by_state(ax_d, states, dnu, dpi1, _DIAGRAM)
        _by_state(ax_n, states, numax, dnu, _NUMAX_DNU, log_x=True, log_y=True)
    for i, track in enumerate(tracks):
        colour = _TRACK_COLOURS[i % len(_TRACK_COLOURS)]
        _draw_track(ax_d, track.dnu, track.dpi1, colour, track.label, _DIAGRAM, track.state)
        _draw_track(ax_n, track.numax, track.dnu, colour, track.label, _NUMAX_DNU, track.state)

    ax_d.set_xlim(*_DIAGRAM[:2])
    ax_d.set_ylim(*_DIAGRAM[2:])
    ax_d.set_xlabel("Δν (μHz)")
    ax_d.set_ylabel("ΔΠ1 (s)")
    kinds = sorted({t.dnu_kind for t in tracks})
    ax_d.set_title("Tracks in the seismic diagram (model Δν: " + ", ".join(kinds) + ")"
                   if tracks else "Seismic diagram", fontsize=10)
    ax_d.legend(loc="upper right", fontsize=7, frameon=True, framealpha=0.85)

    grid = np.geomspace(*_NUMAX_DNU[:2], 100)
    alpha, beta = STELLO_2009
    ax_n.plot(grid, dnu_from_numax(grid), color="#111827", lw=1.2, ls="--",
              label=f"Δν = {alpha} numax^{beta} (Stello et al. 2009)")
    ax_n.set_xscale("log")
    ax_n.set_yscale("log")
    ax_n.set_xlim(*_NUMAX_DNU[:2])
    ax_n.set_ylim(*_NUMAX_DNU[2:])
    ax_n.set_xlabel("numax (μHz)")
    ax_n.set_ylabel("Δν (μHz)")
    ax_n.set_title("Tracks in numax–Δν", fontsize=10)
    ax_n.legend(loc="upper left", fontsize=7, frameon=True, framealpha=0.85)
    caption = f"{len(tracks)} track(s); open circle = youngest model, arrows point to older"
    if table is not None:
        caption += f"; catalog of {n_stars:,} stars"
    fig.suptitle(title or caption, fontsize=12)
    fig.savefig(path, dpi=110)
    plt.close(fig)
    return path
