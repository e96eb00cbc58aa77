"""Figures of stellar models and model tracks. matplotlib only here, when used.

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

__all__ = ["plot_model", "plot_tracks"]

# Our own track palette: ink blue, brick, olive, plum, ochre, steel (cycled).
_TRACK_COLOURS = ("#1e3a8a", "#b91c1c", "#4d7c0f", "#7e22ce", "#a16207", "#0e7490")
_DIAGRAM = (2.0, 21.0, 0.0, 400.0)
_NUMAX_DNU = (5.0, 300.0, 0.8, 25.0)
#: Markers of the computed modes by degree l (colours from `_TRACK_COLOURS`).
_DEGREE_MARKERS = ("o", "^", "s", "D", "v", "P", "X")
_INK = "#111827"
#: Shading of the l=1 cavities: g cavity, evanescent zone, p cavity.
_CAVITY_COLOURS = ("#0e7490", "#9ca3af", "#a16207")
#: q used for the asymptotic dipole spectrum when the model has no weak-coupling estimate.
_ASSUMED_Q = 0.1
_HZ_TO_UHZ = 1e6


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
    from ..plots import agg_pyplot, draw_by_state, draw_state_regions, table_column
    from ..relations import STELLO_2009, dnu_from_numax

    plt = agg_pyplot()
    tracks = list(tracks)
    table = _catalog_table(catalog)
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fig, (ax_d, ax_n) = plt.subplots(1, 2, figsize=(14, 6.2), constrained_layout=True)

    # Outlined regions when a catalog is drawn (its shading would hide the density layers).
    draw_state_regions(ax_d, filled=table is None)
    n_stars = 0
    if table is not None:
        n_stars = len(table)
        states = (np.asarray(table["state"]).astype(str) if "state" in table.colnames
                  else np.full(n_stars, "unknown"))
        dnu, dpi1, numax = (table_column(table, name) for name in ("dnu", "dpi1", "numax"))
        draw_by_state(ax_d, states, dnu, dpi1, _DIAGRAM)
        draw_by_state(ax_n, states, numax, dnu, _NUMAX_DNU, log_x=True, log_y=True)
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


def _degree_style(l: int) -> tuple[str, str]:
    return _TRACK_COLOURS[l % len(_TRACK_COLOURS)], _DEGREE_MARKERS[l % len(_DEGREE_MARKERS)]


def _characteristic_frequencies(
    profile: Any,
) -> tuple[np.ndarray, np.ndarray, dict[int, np.ndarray]]:
    """r/R, N/2π and S_l/2π (l = 1, 2) in μHz; NaN where N² ≤ 0, not finite, or r = 0."""
    x, r = profile.x, profile.r
    n2 = np.asarray(profile.buoyancy2, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        buoy = np.where(np.isfinite(n2) & (n2 > 0), np.sqrt(n2), np.nan)
        lamb = {l: np.where((r > 0) & (profile.c2 > 0),
                            np.sqrt(l * (l + 1.0) * profile.c2) / r, np.nan) for l in (1, 2)}
    scale = _HZ_TO_UHZ / (2.0 * np.pi)
    return x, buoy * scale, {l: s * scale for l, s in lamb.items()}


def _draw_propagation(ax: Any, profile: Any, obs: Any, modes: list[Any]) -> None:
    """N/2π and S_l/2π against r/R (log–log), numax, mode ticks and the l=1 cavities."""
    x, buoy, lamb = _characteristic_frequencies(profile)
    good = x > 0
    if np.any(np.isfinite(buoy[good])):
        ax.plot(x[good], buoy[good], color=_INK, lw=1.6, label="N/2π (where N² > 0)")
    else:
        ax.plot([], [], color=_INK, lw=1.6, label="N/2π: N² ≤ 0 everywhere (not drawn)")
    for l, style in ((1, "--"), (2, ":")):
        ax.plot(x[good], lamb[l][good], style, color=_degree_style(l)[0], lw=1.5,
                label=f"S_{l}/2π (Lamb, l={l})")

    refs = [obs.dnu_asym] + [m.frequency for m in modes if np.isfinite(m.frequency)]
    if obs.numax is not None:
        refs.append(obs.numax)
    curves = np.concatenate([buoy[good], lamb[1][good], lamb[2][good]])
    curves = curves[np.isfinite(curves) & (curves > 0)]
    lo, hi = min(refs) / 10.0, max(refs) * 10.0
    # Show the buoyancy peak of a radiative core (red giants); the surface rise of N is left out.
    core = good & (x < 0.9) & np.isfinite(buoy)
    if core.any() and buoy[core].max() < 100.0 * hi:
        hi = max(hi, 1.5 * buoy[core].max())
    if curves.size:
        lo, hi = max(lo, curves.min() / 1.5), min(hi, curves.max() * 1.5)
    lo, hi = min(lo, min(refs) / 1.5), max(hi, max(refs) * 1.5)
    # Start r/R where a curve enters the frequency range (or the l=1 g cavity begins).
    seen = np.zeros(x.size, dtype=bool)
    for curve in (buoy, lamb[1], lamb[2]):
        with np.errstate(invalid="ignore"):
            seen |= good & (curve >= lo) & (curve <= hi)
    x_lo = x[seen].min() / 2.0 if seen.any() else x[good].min()
    if obs.cavities is not None and obs.cavities.g_cavity is not None:
        x_lo = min(x_lo, obs.cavities.g_cavity[0] / 2.0)
    x_lo = max(x_lo, x[good].min())
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlim(x_lo, x.max())
    ax.set_ylim(lo, hi)

    cav = obs.cavities
    if cav is not None:
        regions = (("g cavity", cav.g_cavity), ("evanescent", cav.evanescent_zone),
                   ("p cavity", cav.p_cavity))
        for (name, span), colour in zip(regions, _CAVITY_COLOURS, strict=True):
            if span is None or not span[1] > span[0]:
                continue
            ax.axvspan(max(span[0], x[good].min()), span[1], color=colour, alpha=0.13, lw=0,
                       zorder=0, label=f"l=1 {name} at {cav.frequency:.4g} μHz "
                                       f"({span[0]:.2g}–{span[1]:.2g} R)")
            ax.plot([max(span[0], x[good].min()), span[1]], [cav.frequency] * 2, color=colour,
                    lw=4, alpha=0.8, solid_capstyle="butt", zorder=4)
    if obs.numax is not None:
        ax.axhline(obs.numax, color="#b45309", lw=1.0, ls="-.", zorder=3,
                   label=f"numax = {obs.numax:.4g} μHz")
    # The computed modes as short ticks along the right edge, one colour per degree.
    trans = ax.get_yaxis_transform()
    for l in sorted({m.l for m in modes}):
        freq = [m.frequency for m in modes if m.l == l and np.isfinite(m.frequency)]
        offset = 0.012 * (min(l, 3) - 3)
        ax.hlines(freq, 0.988 + offset, 1.0 + offset, transform=trans,
                  color=_degree_style(l)[0], lw=0.8, alpha=0.6, zorder=5,
                  label=f"computed l={l} modes ({len(freq)}, ticks at the right edge)")
    ax.set_xlabel("r/R")
    ax.set_ylabel("frequency (μHz)")
    ax.set_title("Propagation diagram", fontsize=10)
    ax.grid(True, which="major", color="#e5e7eb", lw=0.6)
    ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.1), ncol=2, fontsize=7.5,
              frameon=False)


def _draw_echelle(ax: Any, obs: Any, modes: list[Any]) -> None:
    """Échelle of the computed modes and, when possible, the asymptotic dipole spectrum."""
    from .dipole import predicted_dipole_modes

    dnu = obs.dnu_modes if obs.dnu_modes is not None else obs.dnu_asym
    dnu_kind = "radial-mode fit" if obs.dnu_modes is not None else "asymptotic"
    freq_all = np.array([m.frequency for m in modes if np.isfinite(m.frequency)])
    for l in sorted({m.l for m in modes}):
        freq = np.array([m.frequency for m in modes if m.l == l and np.isfinite(m.frequency)])
        colour, marker = _degree_style(l)
        ax.plot(freq % dnu, freq, marker, color=colour, ms=6 if l == 0 else 5, mew=0,
                alpha=0.9, ls="none", zorder=4, label=f"computed l={l} ({freq.size})")

    radial = np.sort([m.frequency for m in modes if m.l == 0 and np.isfinite(m.frequency)])
    note = None
    if obs.dpi1 is None:
        note = "no asymptotic l=1 spectrum: the model has no ΔΠ1"
    elif radial.size < 3:
        note = (f"no asymptotic l=1 spectrum: {radial.size} radial mode(s) computed, "
                "3 needed")
    else:
        model_q = obs.q_weak is not None and np.isfinite(obs.q_weak) and obs.q_weak > 0
        q = float(obs.q_weak) if model_q else _ASSUMED_Q
        lo = max(radial[0] - 0.5 * dnu, freq_all.min())
        hi = min(radial[-1] + dnu, freq_all.max())
        pred = predicted_dipole_modes(radial, dnu, obs.dpi1, q, freq_min=lo, freq_max=hi)
        q_text = f"q = {q:.2g} (model, weak coupling)" if model_q else f"q = {q:g} assumed"
        ax.plot(pred.frequency % dnu, pred.frequency, "o", mfc="none",
                mec=_degree_style(1)[0], ms=8, mew=0.9, ls="none", zorder=3,
                label=f"asymptotic l=1 ({pred.frequency.size}): ΔΠ1 = {obs.dpi1:.4g} s, "
                      f"{q_text}, ε_g = 0")
        ax.plot(pred.nominal_p % dnu, pred.nominal_p, "|", color=_degree_style(1)[0],
                ms=14, mew=1.2, ls="none", zorder=3, label="nominal l=1 p modes (asymptotic)")
    if freq_all.size:
        pad = 0.5 * dnu
        ax.set_ylim(freq_all.min() - pad, freq_all.max() + pad)
    else:
        note = "no modes in the window"
    ax.set_xlim(0.0, dnu)
    ax.set_xlabel(f"ν mod Δν (μHz), Δν = {dnu:.4g} μHz ({dnu_kind})")
    ax.set_ylabel("ν (μHz)")
    ax.set_title("Échelle of the computed modes", fontsize=10)
    ax.grid(True, color="#e5e7eb", lw=0.6)
    if note:
        ax.text(0.02, 0.02, note, transform=ax.transAxes, fontsize=8, color="#374151",
                bbox={"boxstyle": "round,pad=0.3", "fc": "white", "ec": "#d1d5db"})
    ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.1), ncol=2, fontsize=7.5,
              frameon=False)


def plot_model(
    profile: Any,
    observables: Any,
    modes: Iterable[Any] | None = None,
    *,
    path: str | os.PathLike[str],
    title: str | None = None,
) -> Path:
    """Write a figure of one stellar model for modellers.

    Left (or alone, without modes): the propagation diagram, N/2π and the
    Lamb frequencies S_1/2π, S_2/2π in μHz against r/R on log–log axes
    (drawn where positive: a region with N² ≤ 0 has no curve), numax as a
    horizontal line when known, the computed mode frequencies as ticks at
    the right edge, and the l=1 g cavity, evanescent zone and p cavity at the
    cavity frequency of ``observables`` shaded. Right, when modes are given:
    the échelle diagram (ν mod Δν against ν) of the computed modes, one
    marker per degree, and — when the model has ΔΠ1 and at least 3 radial
    modes were computed — the dipole mixed modes predicted by
    `seismo.structure.predicted_dipole_modes` from the radial modes as open
    circles, so the computed and asymptotic dipole spectra can be compared.

    Parameters
    ----------
    profile : StellarProfile
        The model (cgs).
    observables : ModelObservables
        Its observables (`seismo.structure.seismic_observables`): numax
        (μHz), dnu_modes or dnu_asym (μHz) for the échelle, dpi1 (s),
        cavities (r/R) and q_weak.
    modes : iterable of Mode, optional
        Computed oscillation modes (`seismo.structure.modes`; frequencies in
        μHz). None draws the propagation diagram alone.
    path : str or path-like
        Output image (PNG).
    title : str, optional
        Figure title; default the model's name and global quantities. The
        Cowling approximation is added to it when any mode used it.

    Returns
    -------
    Path
        The file written.

    Notes
    -----
    The échelle uses Δν = ``dnu_modes`` (fit of the radial modes) when
    present, else the asymptotic ``dnu_asym``. The asymptotic dipole spectrum
    takes the model's weak-coupling q when ``observables`` has one, else
    q = 0.1, which the legend then labels as assumed; ε_g = 0 in both cases,
    so the g-mode phase of the prediction is arbitrary, while its period
    spacing (≈ ζΔΠ1) is the model's.
    """
    from ..plots import agg_pyplot

    plt = agg_pyplot()
    mode_list = None if modes is None else list(modes)
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    if mode_list is None:
        fig, ax_p = plt.subplots(figsize=(8.5, 6.4), constrained_layout=True)
        ax_e = None
    else:
        fig, (ax_p, ax_e) = plt.subplots(1, 2, figsize=(15, 6.8), constrained_layout=True,
                                         gridspec_kw={"width_ratios": (1.15, 1.0)})
    _draw_propagation(ax_p, profile, observables, mode_list or [])
    if ax_e is not None:
        _draw_echelle(ax_e, observables, mode_list)

    o = observables
    caption = (f"{o.name}: {o.mass:.3g} M☉, {o.radius:.3g} R☉, Δν_asym = {o.dnu_asym:.4g} μHz"
               + (f", ΔΠ1 = {o.dpi1:.4g} s" if o.dpi1 is not None else ", no ΔΠ1")
               + (f", numax = {o.numax:.4g} μHz" if o.numax is not None else ""))
    text = title or caption
    if mode_list and any(getattr(m, "cowling", False) for m in mode_list):
        text += "\nnon-radial modes in the Cowling approximation (Φ′ = 0)"
    fig.suptitle(text, fontsize=11)
    fig.savefig(path, dpi=110)
    plt.close(fig)
    return path
