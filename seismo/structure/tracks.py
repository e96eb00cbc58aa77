"""Evolutionary tracks: ordered sequences of models with their seismic observables.

A `Track` holds one array per quantity, one entry per model, in age order.
It comes from either

- a folder (or list) of profile files, read with
  `seismo.structure.read_profile`, whose observables are computed with
  `seismo.structure.observables.seismic_observables`; or
- a table of global quantities, one row per model (ECSV, CSV or FITS), with
  the columns of `TRACK_COLUMNS`; a table holding several tracks is split by
  its ``track`` column.

This is an I/O edge module: it reads files; the observables stage does not.
"""

from __future__ import annotations

import os
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import ColumnError, InputError, MissingFileError, OptionError, UnreadableFileError
from ..scaling import DEFAULT_REFERENCE, SolarReference

__all__ = [
    "TRACK_COLUMNS",
    "Track",
    "track_from_profiles",
    "read_track_table",
    "read_tracks",
    "tracks_from_table",
    "demo_tracks",
    "tracks_table",
]

#: Columns of a track table: our name -> (unit as astropy parses it, meaning).
#: Only ``dnu`` and one of ``age``/``model`` are required; the others may be absent.
TRACK_COLUMNS: dict[str, tuple[str, str]] = {
    "track": ("", "track label; a table with several tracks is split by it (alias 'label')"),
    "model": ("", "model number along the track (integer)"),
    "age": ("yr", "age"),
    "mass": ("solMass", "mass, M☉"),
    "radius": ("solRad", "photospheric radius, R☉"),
    "teff": ("K", "effective temperature"),
    "numax": ("uHz", "frequency of maximum power, μHz"),
    "dnu": ("uHz", "large separation, μHz"),
    "dpi1": ("s", "asymptotic dipole period spacing, s"),
    "q": ("", "coupling factor (dimensionless)"),
    "state": ("", "evolutionary state: RGB, RC, 2CL or unknown"),
}
_NUMERIC = ("age", "mass", "radius", "teff", "numax", "dnu", "dpi1", "q")
_TABLE_FORMATS = {".ecsv": "ascii.ecsv", ".csv": "ascii.csv", ".fits": "fits", ".fit": "fits",
                  ".fts": "fits"}


@dataclass(frozen=True, eq=False)
class Track:
    """A sequence of stellar models in age order.

    Parameters
    ----------
    label : str
        Name of the track (legend text).
    model : numpy.ndarray of int, shape (n_models,)
        Model number along the track.
    age : numpy.ndarray, shape (n_models,)
        Age, yr (NaN when unknown).
    mass, radius, teff : numpy.ndarray, shape (n_models,)
        M☉, R☉ and K (NaN when unknown).
    numax, dnu : numpy.ndarray, shape (n_models,)
        μHz.
    dpi1 : numpy.ndarray, shape (n_models,)
        s (NaN where the model has no buoyancy cavity).
    q : numpy.ndarray, shape (n_models,)
        Coupling factor (weak-coupling estimate for profiles), NaN when unknown.
    state : numpy.ndarray of str, shape (n_models,)
        Evolutionary state per model (``"unknown"`` when not given).
    dnu_kind : str
        ``"asymptotic"`` (Δν = (2∫dr/c)⁻¹ of the profiles) or ``"table"``
        (whatever the table's ``dnu`` column holds).
    meta : Mapping[str, Any]
        Where the track came from and how it was ordered.

    Notes
    -----
    The models are put in age order on construction (a stable sort, so
    models of equal age keep their order); when any age is unknown they are
    ordered by model number instead and ``meta["order"]`` says so.
    """

    label: str
    model: np.ndarray
    age: np.ndarray
    mass: np.ndarray
    radius: np.ndarray
    teff: np.ndarray
    numax: np.ndarray
    dnu: np.ndarray
    dpi1: np.ndarray
    q: np.ndarray
    state: np.ndarray
    dnu_kind: str = "table"
    meta: Mapping[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        size = np.asarray(self.model).size
        arrays: dict[str, np.ndarray] = {"model": np.asarray(self.model, dtype=np.int64).ravel()}
        for name in _NUMERIC:
            arrays[name] = np.asarray(getattr(self, name), dtype=float).ravel()
        arrays["state"] = np.asarray(self.state, dtype=str).ravel()
        for name, value in arrays.items():
            if value.size != size:
                raise InputError(f"track {self.label!r}: {name} has {value.size} models, "
                                 f"model has {size}")
        meta = dict(self.meta)
        if size and np.all(np.isfinite(arrays["age"])):
            order = np.argsort(arrays["age"], kind="stable")
            meta.setdefault("order", "age")
        else:
            order = np.argsort(arrays["model"], kind="stable")
            meta.setdefault("order", "model number (some ages unknown)")
        for name, value in arrays.items():
            object.__setattr__(self, name, value[order])
        object.__setattr__(self, "meta", meta)
        object.__setattr__(self, "label", str(self.label))

    def __len__(self) -> int:
        return int(self.model.size)

    def __repr__(self) -> str:
        return f"Track({self.label!r}, {len(self)} models, dnu_kind={self.dnu_kind!r})"


# ---------------------------------------------------------------------------
# (a) from profile files
# ---------------------------------------------------------------------------


def _profile_paths(source: str | os.PathLike[str] | Iterable[Any], pattern: str) -> list[Path]:
    if isinstance(source, (str, os.PathLike)):
        folder = Path(source)
        if not folder.is_dir():
            raise MissingFileError("no such folder of profiles", path=str(folder))
        paths = sorted(p for p in folder.glob(pattern) if p.is_file())
        if not paths:
            raise MissingFileError(f"no profile files matching {pattern!r}", path=str(folder),
                                   hint="check the folder or pass pattern=")
        return paths
    paths = [Path(p) for p in source]
    if not paths:
        raise OptionError("the list of profile files is empty")
    return paths


def track_from_profiles(
    source: str | os.PathLike[str] | Iterable[str | os.PathLike[str]],
    *,
    label: str | None = None,
    pattern: str = "*",
    reference: str | SolarReference = DEFAULT_REFERENCE,
    read_options: Mapping[str, Any] | None = None,
) -> Track:
    """A track from the profile files of one evolutionary sequence.

    Parameters
    ----------
    source : str, path-like or iterable of them
        A folder (its files matching ``pattern``) or a list of profile files.
    label : str, optional
        Track label; default the folder's name (or the first file's parent).
    pattern : str
        Glob pattern of the profile files inside a folder (default all files).
    reference : str or SolarReference
        Solar reference set for numax (see `seismic_observables`).
    read_options : Mapping, optional
        Keyword arguments for `seismo.structure.read_profile` (``columns``,
        ``format``, ...), the same for every file.

    Returns
    -------
    Track
        One model per file in age order, with ``dnu`` the asymptotic Δν,
        ``dpi1`` the asymptotic ΔΠ1 (NaN without buoyancy cavity), ``q`` the
        weak-coupling estimate at numax and ``state`` from the profile's
        ``meta["state"]`` (else ``"unknown"``). ``meta["observables"]`` keeps
        each model's `ModelObservables.to_dict()`.

    Raises
    ------
    MissingFileError
        If the folder does not exist or holds no matching file.
    SeismoError
        Whatever `read_profile` or `seismic_observables` raises for a file,
        with the file's path attached.
    """
    from .observables import seismic_observables
    from .reading import read_profile

    paths = _profile_paths(source, pattern)
    options = dict(read_options or {})
    rows = []
    for path in paths:
        profile = read_profile(path, **options)
        try:
            obs = seismic_observables(profile, reference=reference)
        except InputError as exc:
            raise exc.with_path(str(path)) from None
        rows.append((profile, obs))

    def column(getter: Any) -> np.ndarray:
        return np.array([np.nan if (v := getter(p, o)) is None else v for p, o in rows], float)

    if label is None:
        single = isinstance(source, (str, os.PathLike))
        label = Path(source).name if single else paths[0].parent.name
    return Track(
        label=label,
        model=np.arange(len(rows)),
        age=column(lambda p, o: o.age),
        mass=column(lambda p, o: o.mass),
        radius=column(lambda p, o: o.radius),
        teff=column(lambda p, o: o.teff),
        numax=column(lambda p, o: o.numax),
        dnu=column(lambda p, o: o.dnu_asym),
        dpi1=column(lambda p, o: o.dpi1),
        q=column(lambda p, o: o.q_weak),
        state=np.array([str(p.meta.get("state", "unknown")) for p, _ in rows]),
        dnu_kind="asymptotic",
        meta={"source": "profiles", "files": [str(p) for p in paths],
              "observables": [o.to_dict() for _, o in rows]},
    )


# ---------------------------------------------------------------------------
# (b) from a table of global quantities
# ---------------------------------------------------------------------------


def _read_table(path: Path) -> Any:
    from astropy.table import Table

    if not path.is_file():
        raise MissingFileError("no such track table", path=str(path))
    fmt = _TABLE_FORMATS.get(path.suffix.lower())
    if fmt is None:
        raise UnreadableFileError(
            f"unknown track table suffix {path.suffix!r}", path=str(path),
            hint=f"use one of {sorted(_TABLE_FORMATS)}",
        )
    try:
        return Table.read(path, format=fmt)
    except Exception as exc:
        raise UnreadableFileError(f"not a readable {fmt} table ({type(exc).__name__}: {exc})",
                                  path=str(path)) from None


def _find(table: Any, ours: str, mapping: Mapping[str, str]) -> str | None:
    """The table's name for our column: the mapping, else a case-insensitive match."""
    if ours in mapping:
        if mapping[ours] not in table.colnames:
            raise ColumnError(f"column {mapping[ours]!r} (given for {ours!r}) is not in the "
                              f"table; it has {table.colnames}")
        return mapping[ours]
    lower = {name.lower(): name for name in table.colnames}
    for candidate in (ours, "label") if ours == "track" else (ours,):
        if candidate in lower:
            return lower[candidate]
    return None


def _values(table: Any, name: str, ours: str) -> np.ndarray:
    """A numeric column in our unit; a column with a unit is converted."""
    import astropy.units as u

    col = table[name]
    unit = getattr(col, "unit", None)
    data = np.ma.filled(np.ma.asarray(getattr(col, "value", col), dtype=float), np.nan)
    target = TRACK_COLUMNS[ours][0]
    if unit is None or str(unit) in ("", "dimensionless") or not target:
        return np.asarray(data, dtype=float)
    try:
        return np.asarray((data * u.Unit(unit)).to_value(target), dtype=float)
    except u.UnitConversionError:
        raise ColumnError(f"column {name!r} has unit {unit}, which does not convert to "
                          f"{target} for {ours!r}") from None


def read_track_table(
    path: str | os.PathLike[str],
    *,
    columns: Mapping[str, str] | None = None,
    label: str | None = None,
) -> list[Track]:
    """Tracks from a table of global quantities, one row per model.

    Parameters
    ----------
    path : str or path-like
        An ``.ecsv``, ``.csv`` or ``.fits`` table with the columns of
        `TRACK_COLUMNS` (names matched case-insensitively): ``track`` (or
        ``label``), ``model``, ``age`` (yr), ``mass`` (M☉), ``radius`` (R☉),
        ``teff`` (K), ``numax`` (μHz), ``dnu`` (μHz), ``dpi1`` (s), ``q`` and
        ``state``. Columns with astropy units (ECSV, FITS) are converted to
        these units; unitless columns are taken to be in them.
    columns : Mapping[str, str], optional
        Our name -> the table's name, e.g. ``{"dpi1": "DeltaPi1", "age": "star_age"}``.
    label : str, optional
        Label of a table without a ``track`` column (default the file stem).

    Returns
    -------
    list of Track
        One track per distinct ``track`` value, in order of first appearance,
        each in age order.

    Raises
    ------
    MissingFileError, UnreadableFileError
        If the file is missing or not a table.
    ColumnError
        If ``dnu`` or both ``age`` and ``model`` are missing, a mapped column
        is absent, or a unit does not convert.
    OptionError
        If ``columns`` names a key that is not one of `TRACK_COLUMNS`.
    """
    path = Path(path)
    table = _read_table(path)
    try:
        return tracks_from_table(table, columns=columns, label=label or path.stem,
                                 source=str(path))
    except ColumnError as exc:
        raise exc.with_path(str(path)) from None


def tracks_from_table(
    table: Any,
    *,
    columns: Mapping[str, str] | None = None,
    label: str = "track",
    source: str | None = None,
) -> list[Track]:
    """Tracks from an astropy table of global quantities (see `read_track_table`).

    Parameters
    ----------
    table : astropy.table.Table
        One row per model, columns of `TRACK_COLUMNS`.
    columns : Mapping[str, str], optional
        Our name -> the table's name.
    label : str
        Label of a table without a ``track`` column.
    source : str, optional
        Where the table came from, recorded in each track's meta.

    Returns
    -------
    list of Track

    Raises
    ------
    ColumnError, OptionError
        As `read_track_table`.
    """
    mapping = dict(columns or {})
    unknown = sorted(set(mapping) - set(TRACK_COLUMNS))
    if unknown:
        raise OptionError(f"columns has unknown keys {unknown}; allowed are {list(TRACK_COLUMNS)}")
    names = {ours: _find(table, ours, mapping) for ours in TRACK_COLUMNS}
    if names["dnu"] is None or (names["age"] is None and names["model"] is None):
        raise ColumnError(
            f"a track table needs 'dnu' and 'age' or 'model' columns; it has "
            f"{table.colnames}", hint="rename them or pass columns={our_name: file_name}")
    n_rows = len(table)
    data = {ours: (_values(table, names[ours], ours) if names[ours] else
                   np.full(n_rows, np.nan)) for ours in _NUMERIC}
    model = (np.asarray(table[names["model"]], dtype=np.int64) if names["model"]
             else np.arange(n_rows))
    state = (np.char.strip(np.asarray(table[names["state"]]).astype(str)) if names["state"]
             else np.full(n_rows, "unknown"))
    labels = (np.asarray(table[names["track"]]).astype(str) if names["track"]
              else np.full(n_rows, label))
    _, first = np.unique(labels, return_index=True)
    tracks = []
    for name in labels[np.sort(first)]:
        sel = labels == name
        tracks.append(Track(
            label=str(name), model=model[sel], state=state[sel], dnu_kind="table",
            meta={"source": "table", "file": source},
            **{key: value[sel] for key, value in data.items()},
        ))
    return tracks


def demo_tracks(masses: Iterable[float] = (1.0, 1.5, 2.5), feh: float = 0.1) -> list[Track]:
    """A few tracks of the bundled demo grid (INVENTED FOR ILLUSTRATION).

    Parameters
    ----------
    masses : iterable of float
        Initial masses, M☉, each matched to the nearest track mass of the grid.
    feh : float
        [Fe/H], dex, matched to the nearest of the grid.

    Returns
    -------
    list of Track
        Labelled ``"<mass> M☉ (demo)"``; see `seismo.structure.make_demo_grid`
        for the invented prescriptions behind them.
    """
    from astropy.table import Table

    from .grid import demo_grid_path

    path = demo_grid_path()
    table = Table.read(path, format="ascii.ecsv")
    grid_feh = np.asarray(table["feh"], dtype=float)
    grid_mass = np.asarray(table["mass"], dtype=float)
    levels = np.unique(grid_feh)
    near_feh = levels[np.argmin(np.abs(levels - feh))]
    keep = np.zeros(len(table), dtype=bool)
    labels = np.empty(len(table), dtype=object)
    for mass in masses:
        options = np.unique(grid_mass[grid_feh == near_feh])
        chosen = options[np.argmin(np.abs(options - mass))]
        sel = (grid_feh == near_feh) & (grid_mass == chosen)
        keep |= sel
        labels[sel] = f"{chosen:g} M☉ (demo)"
    picked = table[keep]
    picked["track"] = np.asarray(labels[keep], dtype=str)
    return tracks_from_table(picked, source=f"{path} (demo grid, [Fe/H] = {near_feh:+.1f})")


def read_tracks(
    paths: str | os.PathLike[str] | Iterable[str | os.PathLike[str]],
    *,
    columns: Mapping[str, str] | None = None,
    pattern: str = "*",
    reference: str | SolarReference = DEFAULT_REFERENCE,
    read_options: Mapping[str, Any] | None = None,
) -> list[Track]:
    """Read tracks from folders of profiles and from track tables.

    Parameters
    ----------
    paths : str, path-like or iterable of them
        Each a folder of profile files (one track, see `track_from_profiles`)
        or a track table (one or more tracks, see `read_track_table`).
    columns : Mapping[str, str], optional
        Column mapping for the tables.
    pattern : str
        Glob pattern of profile files inside folders.
    reference : str or SolarReference
        Solar reference for the numax of profile tracks.
    read_options : Mapping, optional
        Keyword arguments for `read_profile`.

    Returns
    -------
    list of Track
        In the order of ``paths``.

    Raises
    ------
    SeismoError
        As `track_from_profiles` and `read_track_table`.
    """
    items = [paths] if isinstance(paths, (str, os.PathLike)) else list(paths)
    tracks: list[Track] = []
    for item in items:
        path = Path(item)
        if path.is_dir():
            tracks.append(track_from_profiles(path, pattern=pattern, reference=reference,
                                              read_options=read_options))
        else:
            tracks.extend(read_track_table(path, columns=columns))
    return tracks


def tracks_table(tracks: Iterable[Track]) -> Any:
    """One table of global quantities for several tracks, in `TRACK_COLUMNS` form.

    Parameters
    ----------
    tracks : iterable of Track
        The tracks.

    Returns
    -------
    astropy.table.QTable
        One row per model with the columns of `TRACK_COLUMNS` and their
        units; write it with ``.write(path)`` and read it back with
        `read_track_table`.
    """
    import astropy.units as u
    from astropy.table import QTable

    tracks = list(tracks)
    table = QTable()
    table["track"] = np.concatenate([np.full(len(t), t.label) for t in tracks]).astype(str) \
        if tracks else np.array([], dtype=str)
    table["model"] = np.concatenate([t.model for t in tracks]) if tracks else np.array([], int)
    for name in _NUMERIC:
        values = np.concatenate([getattr(t, name) for t in tracks]) if tracks else np.array([])
        unit = TRACK_COLUMNS[name][0]
        table[name] = values * u.Unit(unit) if unit else values
    table["state"] = np.concatenate([t.state for t in tracks]) if tracks else np.array([], str)
    return table
