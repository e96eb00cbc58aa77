"""Reading model profiles from files: ECSV, CSV, whitespace text and FITS tables.

The format is documented in docs/structure.md: one row per mesh point from
centre to surface, cgs columns ``r``, ``m``, ``rho``, ``p``, ``gamma1`` (and
optionally ``n2`` and anything else), and the global quantities as metadata.
"""

from __future__ import annotations

import os
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import (
    ColumnError,
    InputError,
    MissingFileError,
    OptionError,
    TooFewPointsError,
    UnreadableFileError,
)
from .profiles import (
    _CGS_UNITS,
    _GLOBALS,
    PROFILE_FORMATS,
    REQUIRED_COLUMNS,
    StellarProfile,
    _first_bad,
    check_profile,
)

__all__ = ["read_profile"]



@dataclass
class _Table:
    """Columns read from a file (name → array), their units, and metadata."""

    columns: dict[str, np.ndarray]
    units: dict[str, str | None]
    meta: dict[str, Any]


def _sniff(path: Path) -> str:
    with open(path, "rb") as handle:
        head = handle.read(4096)
    suffix = path.suffix.lower()
    if head.startswith(b"SIMPLE  =") or suffix in (".fits", ".fit", ".fts"):
        return "fits"
    if head.lstrip().startswith(b"# %ECSV") or suffix == ".ecsv":
        return "ecsv"
    try:
        text = head.decode("utf-8")
    except UnicodeDecodeError:
        raise UnreadableFileError(
            "not a profile table: binary content that is not FITS", path=str(path),
            hint=f"give one of the formats {list(PROFILE_FORMATS[1:])}",
        ) from None
    for line in text.splitlines():
        if line.strip() and not line.lstrip().startswith("#"):
            return "csv" if "," in line else "text"
    return "csv" if suffix == ".csv" else "text"


def _from_astropy(table: Any, meta: Mapping[str, Any]) -> _Table:
    columns, units = {}, {}
    for name in table.colnames:
        column = table[name]
        values = np.asarray(getattr(column, "value", column))
        if values.ndim != 1 or values.dtype.kind not in "fiub":
            continue
        columns[name] = values.astype(np.float64)
        units[name] = None if column.unit is None else str(column.unit)
    return _Table(columns, units, {str(k).lower(): v for k, v in meta.items()})


def _read_ecsv(path: Path) -> _Table:
    from astropy.table import Table

    table = Table.read(path, format="ascii.ecsv")
    return _from_astropy(table, table.meta)


def _read_fits(path: Path) -> _Table:
    from astropy.io import fits
    from astropy.table import Table

    with fits.open(path, memmap=False) as hdul:
        tables = [h for h in hdul if isinstance(h, fits.BinTableHDU | fits.TableHDU)]
        if not tables:
            raise UnreadableFileError(
                "the FITS file holds no table extension", path=str(path),
                hint="write the profile as a binary table, one row per mesh point",
            )
        header = {**hdul[0].header, **tables[0].header}
        table = Table.read(tables[0])
    return _from_astropy(table, header)


def _is_number(token: str) -> bool:
    try:
        float(token)
    except ValueError:
        return False
    return True


def _read_delimited(path: Path, delimiter: str | None) -> _Table:
    try:
        lines = path.read_text(encoding="utf-8").splitlines()
    except UnicodeDecodeError:
        raise UnreadableFileError("not a text table (binary content)", path=str(path)) from None
    meta: dict[str, Any] = {}
    comments: list[str] = []
    rows: list[str] = []
    for line in lines:
        text = line.strip()
        if not text:
            continue
        if text.startswith("#"):
            body = text.lstrip("#").strip()
            if "=" in body:  # "# name = value" carries a global quantity
                key, value = body.split("=", 1)
                meta[key.strip().lower()] = value.strip()
            elif not rows:
                comments.append(body)
            continue
        rows.append(text)

    def split(line: str) -> list[str]:
        parts = line.split(delimiter) if delimiter else line.split()
        return [t.strip().strip('"') for t in parts if t.strip()]

    if not rows:
        raise UnreadableFileError("the file holds no data rows", path=str(path))
    names: list[str] | None = None
    if not all(_is_number(t) for t in split(rows[0])):
        names, rows = split(rows[0]), rows[1:]
    elif comments:
        candidate = comments[-1].replace(",", " ").split()
        if len(candidate) == len(split(rows[0])) and not any(_is_number(t) for t in candidate):
            names = candidate
    if names is None:
        raise ColumnError(
            "no header line naming the columns", path=str(path),
            hint="add a first line (or a '# r m rho p gamma1 ...' comment) of column names",
        )
    try:
        values = np.loadtxt(rows, delimiter=delimiter, dtype=np.float64, ndmin=2)
    except ValueError as exc:
        raise UnreadableFileError(
            f"rows are not all numeric with {len(names)} columns ({exc})", path=str(path)
        ) from None
    if values.shape[1] != len(names):
        raise UnreadableFileError(
            f"header names {len(names)} columns but rows have {values.shape[1]}", path=str(path)
        )
    return _Table({n: values[:, i] for i, n in enumerate(names)}, dict.fromkeys(names), meta)


_READERS = {
    "ecsv": _read_ecsv,
    "fits": _read_fits,
    "csv": lambda path: _read_delimited(path, ","),
    "text": lambda path: _read_delimited(path, None),
}


def _to_cgs(values: np.ndarray, unit: str | None, target: str | None, name: str) -> np.ndarray:
    """Convert a column to ``target`` (``None``: to astropy's cgs decomposition)."""
    if not unit:
        return values
    from astropy import units as u

    try:
        quantity = u.Quantity(values, u.Unit(unit))
        return quantity.cgs.value if target is None else quantity.to_value(u.Unit(target))
    except (ValueError, u.UnitsError, TypeError):
        if target is None:
            return values
        raise ColumnError(
            f"column {name!r} has unit {unit!r}, which does not convert to "
            f"{target or 'a pure number'}",
            hint="fix the unit in the file or map another column with `columns`",
        ) from None


def _global(key: str, meta: Mapping[str, Any]) -> float | None:
    """A global quantity from file metadata, in the cgs unit of `_GLOBALS`."""
    from astropy import units as u

    aliases, unit = _GLOBALS[key]
    for alias in aliases:
        if alias not in meta:
            continue
        value = meta[alias]
        try:
            if isinstance(value, u.Quantity):
                return float(value.to_value(unit))
            if isinstance(value, int | float | np.number):
                return float(value)
            text = str(value).strip()
            return float(text) if _is_number(text) else float(u.Quantity(text).to_value(unit))
        except (ValueError, TypeError, u.UnitsError):
            raise InputError(
                f"metadata {alias!r} = {value!r} is not a number or a quantity in {unit}",
                hint=f"write it in {unit} (cgs) or pass {key}= to read_profile",
            ) from None
    return None


def read_profile(
    path: str | os.PathLike[str],
    *,
    columns: Mapping[str, str] | None = None,
    format: str = "auto",
    mass: float | None = None,
    radius: float | None = None,
    luminosity: float | None = None,
    teff: float | None = None,
    age: float | None = None,
    name: str | None = None,
) -> StellarProfile:
    """Read a stellar-model profile table into a `StellarProfile`.

    The file holds one row per mesh point, in cgs unless units say
    otherwise, with the columns ``r`` (cm), ``m`` (g), ``rho`` (g cm⁻³),
    ``p`` (dyn cm⁻²) and ``gamma1`` (dimensionless), optionally ``n2``
    (s⁻²), and any others (temperature, composition, ...), which are kept in
    `StellarProfile.columns` under their file names. Column names match
    case-insensitively. Rows given from surface to centre are reversed (and
    ``meta["reversed"]`` is True). The profile is then checked with
    `check_profile`.

    Parameters
    ----------
    path : str or path-like
        The profile file.
    columns : Mapping[str, str], optional
        Our name → the file's name, for files that name columns otherwise,
        e.g. ``{"r": "radius_cm", "rho": "density"}``. Keys other than the
        required and ``n2`` rename extra columns.
    format : str
        One of `PROFILE_FORMATS`: ``"ecsv"`` (astropy ECSV; column units and
        meta honoured), ``"csv"`` (comma-separated with a header line),
        ``"text"`` (whitespace-separated, header as the first non-comment
        line or a last ``# r m rho p gamma1 ...`` comment line), ``"fits"``
        (first table HDU; TUNITn honoured) or ``"auto"`` (sniffed).
    mass, radius, luminosity, teff, age : float, optional
        Global mass (g), radius (cm), luminosity (erg s⁻¹), Teff (K) and age
        (yr). Each overrides the file's metadata: ECSV meta, FITS header
        keywords (primary and table HDU) or ``# name = value`` comment lines,
        under the keys ``mass``/``mstar``, ``radius``/``rstar``,
        ``luminosity``/``luminos``/``lum``, ``teff``, ``age``; a value there
        may be a number in the unit above or a quantity string such as
        ``"1.2 solMass"``. Mass and radius fall back to the last mesh point.
        ``meta["sources"]`` records where each came from.
    name : str, optional
        Label; default the file's stem.

    Returns
    -------
    StellarProfile
        The model in cgs, centre to surface.

    Raises
    ------
    MissingFileError
        If ``path`` is not a file.
    UnreadableFileError
        If the file is not a table in one of the formats.
    ColumnError
        If a required column is missing (the message lists the columns
        found), or a unit does not convert.
    TooFewPointsError
        If there are fewer than 3 rows.
    InputError
        If a required column or ``n2`` holds NaN (or infinities, except in
        ``n2`` at the surface), or the profile fails `check_profile`.
    OptionError
        If ``format`` or ``columns`` is not valid.
    """
    path = Path(path)
    if format not in PROFILE_FORMATS:
        raise OptionError(f"unknown profile format {format!r}; allowed are {list(PROFILE_FORMATS)}")
    mapping = dict(columns or {})
    if not all(isinstance(k, str) and isinstance(v, str) for k, v in mapping.items()):
        raise OptionError("columns must map our column names to the file's names, both strings")
    if not path.is_file():
        raise MissingFileError("no such profile file", path=str(path))
    kind = _sniff(path) if format == "auto" else format
    try:
        table = _READERS[kind](path)
    except (UnreadableFileError, ColumnError) as exc:
        raise exc.with_path(str(path)) from None
    except Exception as exc:
        raise UnreadableFileError(
            f"not a readable {kind} profile table ({type(exc).__name__}: {exc})", path=str(path),
            hint=f"give one of the formats {list(PROFILE_FORMATS[1:])} (or set format=)",
        ) from None
    try:
        return _build_profile(path, kind, table, mapping, name, mass=mass, radius=radius,
                              luminosity=luminosity, teff=teff, age=age)
    except InputError as exc:
        raise exc.with_path(str(path)) from None


def _build_profile(
    path: Path, kind: str, table: _Table, mapping: dict[str, str], name: str | None,
    **given: float | None,
) -> StellarProfile:
    by_lower = {n.lower(): n for n in table.columns}
    found = list(table.columns)
    picked: dict[str, str] = {}
    for ours in (*REQUIRED_COLUMNS, "n2", *(k for k in mapping if k not in REQUIRED_COLUMNS)):
        wanted = mapping.get(ours, ours)
        if wanted.lower() in by_lower:
            picked[ours] = by_lower[wanted.lower()]
        elif ours in REQUIRED_COLUMNS or ours in mapping:
            how = f"mapped to {wanted!r}" if ours in mapping else "not found"
            raise ColumnError(
                f"required column {ours!r} {how}; the file has columns {found}",
                hint="name the file's column with columns={" + repr(ours) + ": 'its_name'}",
            )
    n_rows = table.columns[picked["r"]].size
    if n_rows < 3:
        raise TooFewPointsError(
            f"a profile needs at least 3 rows, the file has {n_rows}",
            hint="export the full model from centre to surface",
        )
    data = {
        ours: _to_cgs(table.columns[theirs], table.units.get(theirs), _CGS_UNITS.get(ours), ours)
        for ours, theirs in picked.items()
    }
    for ours in (*REQUIRED_COLUMNS, "n2"):
        if ours not in data:
            continue
        bad = np.isnan(data[ours]) if ours == "n2" else ~np.isfinite(data[ours])
        if ours == "n2":
            bad[1:-1] |= np.isinf(data[ours][1:-1])
        if np.any(bad):
            raise InputError(
                f"column {ours!r} has NaN or infinite values ({_first_bad(bad)})",
                hint="export finite values at every mesh point",
            )
    reverse = bool(data["r"][0] > data["r"][-1])
    order = slice(None, None, -1) if reverse else slice(None)
    extras = {
        theirs: _to_cgs(values, table.units.get(theirs), None, theirs)[order]
        for theirs, values in table.columns.items() if theirs not in picked.values()
    }
    extras.update({k: v[order] for k, v in data.items() if k not in (*REQUIRED_COLUMNS, "n2")})
    data = {k: v[order] for k, v in data.items()}

    sources: dict[str, str] = {}
    values: dict[str, float | None] = {}
    for key in _GLOBALS:
        if given.get(key) is not None:
            values[key], sources[key] = float(given[key]), "argument"
        elif (value := _global(key, table.meta)) is not None:
            values[key], sources[key] = value, "metadata"
        elif key in ("mass", "radius"):
            column = data["m" if key == "mass" else "r"]
            values[key], sources[key] = float(column[-1]), "last mesh point"
        else:
            values[key] = None
    profile = StellarProfile(
        r=data["r"], m=data["m"], rho=data["rho"], p=data["p"], gamma1=data["gamma1"],
        n2=data.get("n2"), mass=values["mass"], radius=values["radius"],
        luminosity=values["luminosity"], teff=values["teff"], age=values["age"],
        columns=extras, name=name or path.stem,
        meta={
            "source": str(path), "format": kind, "columns": picked, "reversed": reverse,
            "sources": sources,
            "units": {k: v for k, v in table.units.items() if v},
        },
    )
    check = check_profile(profile)
    if not check.ok:
        raise InputError(
            "profile fails its checks: " + "; ".join(check.errors),
            hint="fix the export (units, order, surface rows) and read again",
        )
    return profile
