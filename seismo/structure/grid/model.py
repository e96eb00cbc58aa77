"""Model grids: the table of tracks, its validation, interpolation in mass, refinement along
tracks and priors."""

from __future__ import annotations

import hashlib
import math
import os
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any

import numpy as np
from scipy import stats

from ...errors import ColumnError, InputError, MissingFileError, OptionError, UnreadableFileError

__all__ = [
    "GRID_COLUMNS",
    "GRID_STATES",
    "MASS_PRIORS",
    "ModelGrid",
    "read_grid",
    "demo_grid_path",
    "load_demo_grid",
    "weighted_quantiles",
]

#: Required grid columns and their units.
GRID_COLUMNS: dict[str, str] = {
    "track": "identifier",
    "mass": "M☉ (initial)",
    "age": "Gyr",
    "feh": "dex",
    "teff": "K",
    "radius": "R☉",
    "dnu": "μHz",
    "numax": "μHz",
    "dpi1": "s (NaN allowed)",
    "state": "RGB/RC/2CL/other",
}
_OPTIONAL_COLUMNS: dict[str, str] = {"logg": "dex (cgs)", "luminosity": "L☉"}

#: Evolutionary states a grid model may carry.
GRID_STATES: tuple[str, ...] = ("RGB", "RC", "2CL", "other")

_READ_FORMATS = {".ecsv": "ascii.ecsv", ".csv": "ascii.csv", ".fits": "fits", ".fit": "fits",
                 ".fits.gz": "fits"}

# 16th and 84th percentiles of a normal distribution (±1σ).
_LOW = 0.5 * math.erfc(1.0 / math.sqrt(2.0))
_HIGH = 1.0 - _LOW
_QUANTILES = np.array([_LOW, 0.5, _HIGH])
_OUTPUT = ("mass", "radius", "age", "logg")
_UNITS = {"mass": "M☉", "radius": "R☉", "age": "Gyr", "logg": "dex"}
# Points below this fraction of the largest weight are dropped: at most n_points × 1e-10
# of the total weight, far below any quoted percentile.
_NEGLIGIBLE = 1e-10
# χ² of the best model above this tail probability (3σ) means the star is outside the grid.
_OUTSIDE_TAIL = 0.0027
_OUTSIDE_CHI2 = stats.chi2.isf(_OUTSIDE_TAIL, np.arange(1, 6))  # by number of observables
_LOG_G_SUN = 4.438067627  # log10(GM☉/R☉²) in cgs, IAU 2015 nominal values (CALC)
# Default interpolation in mass: parts of at most 0.02 M☉, so that the number of tracks
# follows the mass range covered (range / 0.02 M☉ per [Fe/H]), not the grid's own spacing;
# at most 25 parts per grid step (0.02 M☉ up to steps of 0.5 M☉) bound the memory.
_MASS_STEP = 0.02
_MAX_MASS_PARTS = 25
# Fractional ages closer than this are one node of the common phase grid.
_SAME_PHASE = 1e-9


def _salpeter(mass: np.ndarray) -> np.ndarray:
    return mass**-2.35


def _kroupa(mass: np.ndarray) -> np.ndarray:
    # Continuous at 0.5 M☉; every red giant is above it, where the slope is 2.3.
    return np.where(mass < 0.5, (mass / 0.5) ** -1.3, (mass / 0.5) ** -2.3)


#: Mass priors by name: density dN/dM up to a constant, of the initial mass in M☉.
#: ``"salpeter"``: M^−2.35 (Salpeter 1955, ApJ 121, 161); ``"kroupa"``: broken
#: power law with slopes 1.3 below and 2.3 above 0.5 M☉ (Kroupa 2001, MNRAS 322,
#: 231; slopes from memory). A callable taking masses (M☉) is accepted too.
MASS_PRIORS: dict[str, Callable[[np.ndarray], np.ndarray] | None] = {
    "flat": None,
    "salpeter": _salpeter,
    "kroupa": _kroupa,
}


# ---------------------------------------------------------------------------
# Weighted quantiles
# ---------------------------------------------------------------------------


def weighted_quantiles(values: Any, weights: Any, q: Any) -> np.ndarray:
    """Quantiles of a weighted sample (the inverse of its cumulative distribution).

    For each q the result is the smallest value whose cumulative weight
    reaches q times the total weight. With integer weights this equals
    ``numpy.percentile(numpy.repeat(values, weights), 100 q,
    method="inverted_cdf")``.

    Parameters
    ----------
    values : array_like, shape (n,)
        Sample values (any unit; the result has the same unit).
    weights : array_like, shape (n,)
        Non-negative weights, not all zero.
    q : array_like, shape (n_q,)
        Probabilities in [0, 1].

    Returns
    -------
    ndarray, shape (n_q,)
        The quantiles, in the unit of ``values``.

    Raises
    ------
    OptionError
        If the shapes differ, a weight is negative or not finite, all are
        zero, or a q is outside [0, 1].
    """
    values = np.asarray(values, dtype=np.float64)
    weights = np.asarray(weights, dtype=np.float64)
    q = np.atleast_1d(np.asarray(q, dtype=np.float64))
    if values.ndim != 1 or values.shape != weights.shape or values.size == 0:
        raise OptionError(f"values and weights must be 1-D of the same non-zero length; got "
                          f"shapes {values.shape} and {weights.shape}")
    if not np.all(np.isfinite(weights)) or np.any(weights < 0) or not np.any(weights > 0):
        raise OptionError("weights must be finite, >= 0 and not all zero")
    if np.any((q < 0) | (q > 1)) or not np.all(np.isfinite(q)):
        raise OptionError(f"q must be probabilities in [0, 1]; got {q.tolist()}")
    return _quantiles(values, weights, q)


def _quantiles(values: np.ndarray, weights: np.ndarray, q: np.ndarray) -> np.ndarray:
    """Kernel of `weighted_quantiles` (float64 arrays, no checks)."""
    order = np.argsort(values, kind="stable")
    cum = np.cumsum(weights[order])
    # A tiny tolerance so that q·W equal to a partial sum (integer weights) hits it exactly.
    target = q * cum[-1] * (1.0 - 1e-12)
    index = np.minimum(np.searchsorted(cum, target, side="left"), cum.size - 1)
    # Zero-weight points never start a quantile: move to the next point with weight.
    positive = np.flatnonzero(weights[order] > 0)
    index = positive[np.minimum(np.searchsorted(positive, index), positive.size - 1)]
    return values[order][index]


# ---------------------------------------------------------------------------
# The grid
# ---------------------------------------------------------------------------


def _trapezoid_widths(nodes: np.ndarray, group: np.ndarray) -> np.ndarray:
    """Trapezoid widths of sorted ``nodes`` within each run of equal ``group``.

    A group with a single node gets the median width of the others (1 if none).
    """
    same_prev = np.r_[False, group[1:] == group[:-1]]
    same_next = np.r_[group[:-1] == group[1:], False]
    gap = np.diff(nodes)
    prev = np.where(same_prev, np.r_[0.0, gap], 0.0)
    nxt = np.where(same_next, np.r_[gap, 0.0], 0.0)
    width = 0.5 * (prev + nxt)
    alone = ~same_prev & ~same_next
    fill = float(np.median(width[~alone])) if np.any(~alone) else 1.0
    return np.where(alone, fill, width)


class ModelGrid:
    """A grid of evolutionary tracks, refined and weighted for fast per-star estimates.

    Parameters
    ----------
    data : mapping of str to array_like
        Columns named as in `GRID_COLUMNS` (plus optional ``logg`` and
        ``luminosity``), all of length n_models. Rows of a track need not
        be contiguous but must have strictly increasing age in the given
        order.
    source : str, optional
        Where the grid came from (a path), recorded in estimates.
    step_fraction : float
        Largest relative change of Δν, ν_max, T_eff or ΔΠ1 across one
        sub-step of the refinement (default 0.003).
    max_substeps : int
        Largest number of sub-steps per interval between two models.
    mass_substeps : int or None
        Number of equal parts each mass step between two adjacent tracks
        is cut into: ``mass_substeps − 1`` interpolated tracks per pair of
        tracks (1 turns the interpolation off). None (default) chooses
        per pair min(⌈Δm / 0.02 M☉⌉, 25) for a mass step Δm, so that the
        interpolated mass step is at most 0.02 M☉ (for grid steps up to
        0.5 M☉; Δm / 25 beyond): the number of tracks then follows the
        mass range covered, about range / 0.02 M☉ per [Fe/H], rather than
        the grid's spacing.

    Raises
    ------
    ColumnError
        If required columns are missing (all of them are listed).
    InputError
        If columns differ in length, hold non-finite or non-positive values
        where not allowed, a state is not one of `GRID_STATES`, a track has
        fewer than 2 models, its mass or [Fe/H] varies, or its age does not
        increase strictly (the first offending track is named).
    OptionError
        If ``step_fraction`` or ``max_substeps`` is not positive, or
        ``mass_substeps`` is not None or an integer >= 1.

    Notes
    -----
    Interpolation between tracks in mass, at fixed [Fe/H]: two tracks
    adjacent in mass among the tracks of one [Fe/H] are matched at the same
    evolutionary phase, and ``mass_substeps − 1`` tracks are placed between
    them. The phase is the fractional age τ ∈ [0, 1] within each state (a
    reduced form of equivalent evolutionary phases, EEPs; common practice,
    e.g. Dotter 2016, ApJS 222, 8, from memory): the n-th state of one
    track is matched with the n-th state of the other, both are resampled
    on the union of their τ nodes (linearly in τ), and age, T_eff, radius,
    Δν, ν_max, ΔΠ1 and log g are interpolated linearly in mass between
    them (log age when all ages of the two tracks are > 0, since ages fall
    steeply, roughly as a power of the mass; age otherwise). A pair is not
    interpolated when
    the two tracks' sequences of states differ (e.g. RGB → RC and RGB →
    2CL across the transition mass of helium ignition: there is no common
    phase to match), or when several tracks share a mass and [Fe/H] (other
    parameters varied: no single neighbour). Interpolated tracks are then
    refined along the track like the others, so their evolutionary-speed
    prior comes from their own interpolated ages, and the grid-spacing
    volume is the trapezoid width in mass among all tracks, grid and
    interpolated (a mass step cut into k parts gives each track 1/k of the
    volume). There is no interpolation in [Fe/H].

    Attributes ``n_models``, ``n_tracks`` (tracks of the grid),
    ``n_interpolated_tracks``, ``n_points`` (sample points after
    interpolation and refinement), ``source`` and ``hash`` (SHA-256 of the
    model columns, 16 hex digits) describe the grid. ``columns`` holds the
    validated model columns of the grid (not the interpolated tracks),
    sorted by track and age.
    """

    def __init__(self, data: Mapping[str, Any], *, source: str | None = None,
                 step_fraction: float = 0.003, max_substeps: int = 32,
                 mass_substeps: int | None = None) -> None:
        if not (np.isfinite(step_fraction) and step_fraction > 0):
            raise OptionError(f"step_fraction must be > 0; got {step_fraction!r}")
        if int(max_substeps) < 1:
            raise OptionError(f"max_substeps must be >= 1; got {max_substeps!r}")
        if mass_substeps is not None and (isinstance(mass_substeps, bool)
                                          or not isinstance(mass_substeps, (int, np.integer))
                                          or mass_substeps < 1):
            raise OptionError(f"mass_substeps must be None or an integer >= 1; got "
                              f"{mass_substeps!r}")
        self.source = None if source is None else str(source)
        cols = _validate_columns(data, self.source)
        self.columns = cols
        self.n_models = cols["mass"].size
        self.n_tracks = int(cols["track_index"].max()) + 1
        digest = hashlib.sha256()
        for name in ("track_index", "mass", "age", "feh", "teff", "radius", "dnu", "numax",
                     "dpi1", "state_code"):
            digest.update(np.ascontiguousarray(cols[name]).tobytes())
        self.hash = digest.hexdigest()[:16]
        models = _interpolate_in_mass(cols, self.n_tracks, mass_substeps)
        self.n_interpolated_tracks = int(models["track_index"][-1]) + 1 - self.n_tracks
        self._track_mass, self._log_volume = _track_volumes(models)
        self._refine(models, float(step_fraction), int(max_substeps))

    def _refine(self, c: dict[str, np.ndarray], step_fraction: float, max_substeps: int) -> None:
        tr = c["track_index"]
        inner = (tr[1:] == tr[:-1]) & (c["state_code"][1:] == c["state_code"][:-1])
        j = np.flatnonzero(inner)
        change = np.zeros(j.size)
        for name in ("dnu", "numax", "teff", "dpi1"):
            a, b = c[name][j], c[name][j + 1]
            with np.errstate(invalid="ignore", divide="ignore"):
                rel = np.abs(np.log(b / a))
            change = np.fmax(change, np.nan_to_num(rel, nan=0.0, posinf=0.0))
        k = np.clip(np.ceil(change / step_fraction), 1, max_substeps).astype(np.int64)
        interval = np.repeat(np.arange(j.size), k)
        starts = np.cumsum(k) - k
        sub = np.arange(interval.size) - starts[interval]
        frac = (sub + 0.5) / k[interval]
        lo, hi = j[interval], j[interval] + 1

        def lerp(x: np.ndarray) -> np.ndarray:
            return x[lo] + frac * (x[hi] - x[lo])

        duration = (c["age"][j + 1] - c["age"][j])[interval] / k[interval]
        point = {name: lerp(c[name]) for name in ("age", "teff", "radius", "dnu", "numax",
                                                    "dpi1", "logg")}
        point["mass"] = c["mass"][lo]
        point["feh"] = c["feh"][lo]
        # 32-bit indices: the point arrays are the grid's memory cost.
        point["track"] = tr[lo].astype(np.int32)
        point["state"] = c["state_code"][lo]
        point["model"] = c["origin"][np.where(frac < 0.5, lo, hi)].astype(np.int32)
        point["log_prior"] = np.log(duration) + self._log_volume[tr[lo]]
        # Sorted by Δν, so that the box cut of one star is a contiguous slice.
        order = np.argsort(point["dnu"], kind="stable")
        self._points = {name: np.ascontiguousarray(value[order]) for name, value in point.items()}
        self.n_points = int(order.size)
        # Global rank of every point in each output quantity: per star, sorting the int32
        # ranks of the weighted points is several times faster than argsort of their values.
        self._order: dict[str, np.ndarray] = {}
        self._rank: dict[str, np.ndarray] = {}
        for name in _OUTPUT:
            by_value = np.argsort(self._points[name], kind="stable").astype(np.int32)
            rank = np.empty(self.n_points, dtype=np.int32)
            rank[by_value] = np.arange(self.n_points, dtype=np.int32)
            self._order[name], self._rank[name] = by_value, rank
        # A grid of one mass has no mass range to be at the edge of.
        lo, hi = float(self.columns["mass"].min()), float(self.columns["mass"].max())
        self._mass_edges = np.array([lo, hi] if hi > lo else [])

    def points(self) -> dict[str, np.ndarray]:
        """Copies of the refined sample points (sorted by Δν).

        Returns
        -------
        dict of str to ndarray, each shape (n_points,)
            ``age`` (Gyr), ``teff`` (K), ``radius`` (R☉), ``dnu`` and
            ``numax`` (μHz), ``dpi1`` (s), ``logg`` (dex), ``mass`` (M☉),
            ``feh`` (dex), ``track`` (track index: 0 to n_tracks − 1 for the
            grid's tracks, then the interpolated ones), ``state`` (index into
            `GRID_STATES`), ``model`` (nearest model row of ``columns``; for
            an interpolated track, the nearest model of the nearer of its
            two grid tracks) and ``log_prior`` (log of duration × volume,
            flat mass prior).
        """
        return {name: value.copy() for name, value in self._points.items()}

    def track_ids(self) -> np.ndarray:
        """The original track identifiers, indexed by track index."""
        return self.columns["track_ids"].copy()

    def __repr__(self) -> str:
        return (f"ModelGrid(n_tracks={self.n_tracks}, n_models={self.n_models}, "
                f"n_points={self.n_points}, source={self.source!r}, hash={self.hash!r})")


def _validate_columns(data: Mapping[str, Any], source: str | None) -> dict[str, np.ndarray]:
    missing = [name for name in GRID_COLUMNS if name not in data]
    if missing:
        raise ColumnError(f"grid lacks the columns {missing}; present: {sorted(data)}",
                          path=source, hint="map file columns with columns={'mass': 'M', ...}")
    lengths = {name: np.size(data[name]) for name in GRID_COLUMNS}
    n = lengths["mass"]
    if len(set(lengths.values())) != 1:
        raise InputError(f"grid columns differ in length: {lengths}", path=source)
    if n < 2:
        raise InputError(f"grid has {n} models; it needs at least 2", path=source)
    cols: dict[str, np.ndarray] = {}
    for name in ("mass", "age", "feh", "teff", "radius", "dnu", "numax", "dpi1"):
        try:
            cols[name] = np.asarray(data[name], dtype=np.float64).ravel()
        except (TypeError, ValueError):
            raise InputError(f"grid column {name!r} is not numeric", path=source) from None
    for name in ("mass", "age", "feh", "teff", "radius", "dnu", "numax"):
        bad = ~np.isfinite(cols[name])
        if name not in ("age", "feh"):
            bad |= ~(cols[name] > 0)
        if np.any(bad):
            row = int(np.flatnonzero(bad)[0])
            kind = "finite" if name in ("age", "feh") else "finite and > 0"
            value = float(cols[name][row])
            raise InputError(f"grid column {name!r} must be {kind}; {int(bad.sum())} rows are "
                             f"not (first: row {row}, value {value!r})", path=source)
    bad_dpi1 = np.isfinite(cols["dpi1"]) & ~(cols["dpi1"] > 0)
    if np.any(bad_dpi1):
        raise InputError(f"grid column 'dpi1' must be > 0 or NaN; {int(bad_dpi1.sum())} rows "
                         "are not", path=source)
    state = np.char.strip(np.asarray(data["state"]).astype(str).ravel())
    unknown = sorted(set(np.unique(state).tolist()) - set(GRID_STATES))
    if unknown:
        raise InputError(f"grid column 'state' has labels {unknown[:5]}; allowed labels are "
                         f"{list(GRID_STATES)}", path=source)
    cols["state_code"] = np.argmax(state[:, None] == np.array(GRID_STATES)[None, :],
                                   axis=1).astype(np.int8)
    track_ids, track_index = np.unique(np.asarray(data["track"]).ravel(), return_inverse=True)
    order = np.argsort(track_index, kind="stable")
    cols = {name: value[order] for name, value in cols.items()}
    track_index = track_index[order].astype(np.int64)
    same = track_index[1:] == track_index[:-1]
    counts = np.bincount(track_index)
    if np.any(counts < 2):
        tid = track_ids[int(np.flatnonzero(counts < 2)[0])]
        raise InputError(f"track {tid!r} has a single model; a track needs at least 2",
                         path=source)
    for name, what in (("age", "age does not increase strictly"),
                       ("mass", "mass (initial) varies"), ("feh", "[Fe/H] varies")):
        diff = np.diff(cols[name])
        bad = same & ((diff <= 0) if name == "age" else (diff != 0))
        if np.any(bad):
            row = int(np.flatnonzero(bad)[0])
            tid = track_ids[track_index[row]]
            raise InputError(f"track {tid!r}: {what} along the track (at its rows "
                             f"{int(order[row])} and {int(order[row + 1])} of the input)",
                             path=source)
    cols["track_index"] = track_index
    cols["track_ids"] = track_ids
    if "logg" in data:
        cols["logg"] = np.asarray(data["logg"], dtype=np.float64).ravel()[order]
    else:
        cols["logg"] = _LOG_G_SUN + np.log10(cols["mass"]) - 2.0 * np.log10(cols["radius"])
    if "luminosity" in data:
        cols["luminosity"] = np.asarray(data["luminosity"], dtype=np.float64).ravel()[order]
    return cols


def _mass_pairs(cols: dict[str, np.ndarray],
                mass_substeps: int | None) -> list[tuple[int, int, int]]:
    """Pairs of tracks adjacent in mass at one [Fe/H] with the same state sequence, and parts."""
    tr, state = cols["track_index"], cols["state_code"]
    first = np.flatnonzero(np.r_[True, tr[1:] != tr[:-1]])
    mass = cols["mass"][first]
    feh, node_mass = np.round(cols["feh"][first], 6), np.round(mass, 6)
    order = np.lexsort((node_mass, feh))
    same_feh = feh[order][1:] == feh[order][:-1]
    same_node = same_feh & (node_mass[order][1:] == node_mass[order][:-1])
    shared = np.r_[same_node, False] | np.r_[False, same_node]
    run = np.flatnonzero(np.r_[True, (tr[1:] != tr[:-1]) | (state[1:] != state[:-1])])
    sequences = np.split(state[run], np.flatnonzero(np.diff(tr[run])) + 1)
    pairs = []
    for i in np.flatnonzero(same_feh & ~same_node & ~shared[:-1] & ~shared[1:]):
        a, b = int(order[i]), int(order[i + 1])
        if not np.array_equal(sequences[a], sequences[b]):
            continue
        if mass_substeps is None:
            step = (mass[b] - mass[a]) / _MASS_STEP
            parts = min(math.ceil(step * (1.0 - 1e-9)), _MAX_MASS_PARTS)
        else:
            parts = int(mass_substeps)
        if parts > 1:
            pairs.append((a, b, parts))
    return pairs


def _phase_nodes(age: np.ndarray, start: int, end: int, tau: np.ndarray
                 ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Rows bracketing the fractional ages ``tau`` in rows start..end, and the upper weight."""
    if end == start:
        lo = np.full(tau.size, start)
        return lo, lo, np.zeros(tau.size)
    own = (age[start:end + 1] - age[start]) / (age[end] - age[start])
    i = np.clip(np.searchsorted(own, tau, side="right") - 1, 0, end - start - 1)
    w = np.clip((tau - own[i]) / (own[i + 1] - own[i]), 0.0, 1.0)
    return start + i, start + i + 1, w


def _interpolate_in_mass(cols: dict[str, np.ndarray], n_tracks: int,
                         mass_substeps: int | None) -> dict[str, np.ndarray]:
    """The grid's models followed by the tracks interpolated in mass (see `ModelGrid`, Notes).

    Returns the columns used by the refinement, with ``origin``: the nearest model row of
    the grid (a model's own row for the grid's tracks).
    """
    names = ("mass", "age", "feh", "teff", "radius", "dnu", "numax", "dpi1", "logg")
    out = {name: cols[name] for name in (*names, "track_index", "state_code")}
    out["origin"] = np.arange(cols["mass"].size)
    pairs = _mass_pairs(cols, mass_substeps)
    if not pairs:
        return out
    tr, state, age = cols["track_index"], cols["state_code"], cols["age"]
    run = np.flatnonzero(np.r_[True, (tr[1:] != tr[:-1]) | (state[1:] != state[:-1])])
    run_end = np.r_[run[1:], tr.size] - 1
    runs_of = np.split(np.arange(run.size), np.flatnonzero(np.diff(tr[run])) + 1)
    positive = np.minimum.reduceat(age, run[np.r_[True, np.diff(tr[run]) != 0]]) > 0
    parts_a, parts_b, fraction, log_age, track = [], [], [], [], []
    next_track = n_tracks
    # A loop over pairs of tracks and their states; everything per model is vectorised.
    for a, b, parts in pairs:
        rows_a, rows_b = [], []
        for ra, rb in zip(runs_of[a], runs_of[b], strict=True):
            own = [(age[run[r]:run_end[r] + 1] - age[run[r]])
                   / max(age[run_end[r]] - age[run[r]], np.finfo(float).tiny) for r in (ra, rb)]
            tau = np.unique(np.concatenate(own))
            tau = tau[np.r_[True, np.diff(tau) > _SAME_PHASE]]
            rows_a.append(_phase_nodes(age, run[ra], run_end[ra], tau))
            rows_b.append(_phase_nodes(age, run[rb], run_end[rb], tau))
        node_a = [np.concatenate(x) for x in zip(*rows_a, strict=True)]
        node_b = [np.concatenate(x) for x in zip(*rows_b, strict=True)]
        n, k = node_a[0].size, parts - 1
        parts_a.append([np.tile(x, k) for x in node_a])
        parts_b.append([np.tile(x, k) for x in node_b])
        f = np.repeat(np.arange(1, parts) / parts, n)
        fraction.append(f)
        log_age.append(np.full(f.size, positive[a] & positive[b]))
        track.append(np.repeat(np.arange(next_track, next_track + k), n))
        next_track += k
    lo_a, hi_a, w_a = (np.concatenate(x) for x in zip(*parts_a, strict=True))
    lo_b, hi_b, w_b = (np.concatenate(x) for x in zip(*parts_b, strict=True))
    f, log_age = np.concatenate(fraction), np.concatenate(log_age)

    def at(x: np.ndarray, lo: np.ndarray, hi: np.ndarray, w: np.ndarray) -> np.ndarray:
        # Exact node values where w is 0 or 1, so that a NaN ΔΠ1 does not leak to a neighbour.
        with np.errstate(invalid="ignore"):
            mid = x[lo] + w * (x[hi] - x[lo])
        return np.where(w <= 0.0, x[lo], np.where(w >= 1.0, x[hi], mid))

    new: dict[str, np.ndarray] = {}
    for name in names:
        xa, xb = at(cols[name], lo_a, hi_a, w_a), at(cols[name], lo_b, hi_b, w_b)
        new[name] = (1.0 - f) * xa + f * xb
        if name == "age":
            with np.errstate(divide="ignore", invalid="ignore"):
                logs = np.exp((1.0 - f) * np.log(xa) + f * np.log(xb))
            new[name] = np.where(log_age, logs, new[name])
    new["track_index"] = np.concatenate(track)
    new["state_code"] = state[lo_a]
    nearer_a = f <= 0.5
    new["origin"] = np.where(nearer_a, np.where(w_a < 0.5, lo_a, hi_a),
                             np.where(w_b < 0.5, lo_b, hi_b))
    return {name: np.concatenate([out[name], new[name]]) for name in out}


def _track_volumes(cols: dict[str, np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Mass and log of the trapezoid volume (mass width × [Fe/H] width) of each track."""
    first = np.r_[True, cols["track_index"][1:] != cols["track_index"][:-1]]
    mass = cols["mass"][first]
    feh = np.round(cols["feh"][first], 6)
    fehs, feh_group = np.unique(feh, return_inverse=True)
    feh_width = _trapezoid_widths(fehs, np.zeros(fehs.size))
    # Unique (feh, mass) nodes; tracks sharing a node (other parameters varied) share its width.
    nodes, node_of, mult = np.unique(np.stack([feh_group, np.round(mass, 6)]), axis=1,
                                     return_inverse=True, return_counts=True)
    node_of = node_of.ravel()
    mass_width = _trapezoid_widths(nodes[1], nodes[0])
    volume = mass_width[node_of] / mult[node_of] * feh_width[feh_group]
    return mass, np.log(volume)


# ---------------------------------------------------------------------------
# Reading
# ---------------------------------------------------------------------------


def read_grid(path: str | os.PathLike[str], *, columns: Mapping[str, str] | None = None,
              **options: Any) -> ModelGrid:
    """Read a model grid from an ECSV, CSV or FITS table.

    Parameters
    ----------
    path : str or path-like
        File ending in ``.ecsv``, ``.csv``, ``.fits``, ``.fit`` or
        ``.fits.gz``; one row per model.
    columns : mapping of str to str, optional
        Grid column name (keys of `GRID_COLUMNS`, ``logg``, ``luminosity``)
        to the column name in the file, for columns named differently.
        Unmapped names are matched exactly, then ignoring case.
    **options
        Passed to `ModelGrid` (``step_fraction``, ``max_substeps``).

    Returns
    -------
    ModelGrid

    Raises
    ------
    MissingFileError
        If the file does not exist.
    UnreadableFileError
        If the suffix is not one of the above or the file cannot be parsed.
    ColumnError
        If a mapped column is not in the file, or required columns are missing.
    InputError
        For invalid values (see `ModelGrid`).
    """
    from astropy.table import Table

    path = Path(path)
    if not path.is_file():
        raise MissingFileError("grid file not found", path=str(path))
    name = path.name.lower()
    suffix = next((s for s in sorted(_READ_FORMATS, key=len, reverse=True)
                   if name.endswith(s)), None)
    if suffix is None:
        raise UnreadableFileError(f"unknown grid file type; allowed suffixes are "
                                  f"{sorted(_READ_FORMATS)}", path=str(path))
    try:
        table = Table.read(path, format=_READ_FORMATS[suffix])
    except Exception as err:  # astropy raises many kinds; all mean "not a table we read"
        raise UnreadableFileError(f"cannot read the grid as {_READ_FORMATS[suffix]}: "
                                  f"{type(err).__name__}", path=str(path)) from None
    mapping = dict(columns or {})
    wanted = {**GRID_COLUMNS, **_OPTIONAL_COLUMNS}
    unknown = sorted(set(mapping) - set(wanted))
    if unknown:
        raise OptionError(f"columns keys {unknown} are not grid columns; allowed: "
                          f"{list(wanted)}")
    absent = sorted(v for v in mapping.values() if v not in table.colnames)
    if absent:
        raise ColumnError(f"mapped columns {absent} are not in the file; it has "
                          f"{table.colnames}", path=str(path))
    lower = {n.lower(): n for n in table.colnames}
    data: dict[str, Any] = {}
    for key in wanted:
        file_name = mapping.get(key, key if key in table.colnames else lower.get(key))
        if file_name is not None:
            data[key] = _unmasked(table[file_name])
    try:
        return ModelGrid(data, source=str(path), **options)
    except InputError as err:
        raise err.with_path(str(path)) from None


def _unmasked(column: Any) -> np.ndarray:
    """Column values with empty cells as NaN (numbers) or "" (labels), which validation reports."""
    mask = np.ma.getmaskarray(column)
    values = np.asarray(column.data if np.ma.isMaskedArray(column) else column)
    if not mask.any():
        return values
    if values.dtype.kind in "fiu":
        return np.where(mask, np.nan, values.astype(np.float64))
    return np.where(mask, "", values.astype(str))


def demo_grid_path() -> Path:
    """Path of the bundled demonstration grid (INVENTED FOR ILLUSTRATION).

    See `seismo.structure.make_demo_grid` for what it contains.
    """
    from importlib.resources import files

    return Path(str(files("seismo") / "data" / "demo_grid.ecsv"))


def load_demo_grid(**options: Any) -> ModelGrid:
    """Read the bundled demonstration grid (INVENTED FOR ILLUSTRATION, not for science).

    Parameters
    ----------
    **options
        Passed to `ModelGrid`.
    """
    return read_grid(demo_grid_path(), **options)
