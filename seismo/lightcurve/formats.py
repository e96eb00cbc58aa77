"""File formats of light curves: FITS binary tables, ECSV, CSV and whitespace text.

Each reader returns a `_Table` of named columns (with units where the file
gives them) and metadata; :mod:`seismo.lightcurve.readers` then picks the
columns and converts the units.
"""

from __future__ import annotations

import os
import warnings
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import (
    ColumnError,
    SeismoError,
    UnreadableFileError,
)

if TYPE_CHECKING:
    from .readers import ReadOptions

__all__ = ["READERS", "sniff_format"]

#: Column names taken as time (lower case).
_TIME_NAMES = ("time", "t", "bjd", "btjd", "bkjd", "hjd", "mjd", "jd", "bjd_tdb", "date", "times")

@dataclass
class _Table:
    """Columns read from a file: name → float array, plus units and meta."""

    columns: dict[str, np.ndarray]
    units: dict[str, str | None] = field(default_factory=dict)
    meta: dict[str, Any] = field(default_factory=dict)
    has_names: bool = True


# ---------------------------------------------------------------- readers


def _read_fits(path: Path, options: ReadOptions) -> _Table:
    from astropy.io import fits

    try:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            with fits.open(path, memmap=False) as hdul:
                hdul.verify("silentfix")
                hdul.readall()
                damaged = [
                    str(w.message).splitlines()[0] for w in caught
                    if any(k in str(w.message).lower() for k in ("truncat", "corrupt", "2880"))
                ]
                # FITS files are whole 2880-byte records (FITS standard 4.0, §3.1).
                if damaged or path.stat().st_size % 2880:
                    reason = damaged[0] if damaged else "size is not a whole number of records"
                    raise UnreadableFileError(
                        f"not a readable FITS light curve: {reason}",
                        path=str(path), hint="the file looks truncated; fetch it again",
                    )
                hdu = _pick_fits_hdu(hdul, options, path)
                data = hdu.data
                cols = hdu.columns
                table = _Table({}, {}, {})
                for col in cols:
                    values = np.asarray(data[col.name])
                    if values.ndim != 1 or values.dtype.kind not in "fiub":
                        continue
                    table.columns[col.name] = values.astype(np.float64)
                    table.units[col.name] = col.unit
                header = {**hdul[0].header, **hdu.header}
                table.meta["id"] = header.get("OBJECT") or header.get("TARGETID")
                table.meta["hdu"] = hdu.name or hdul.index_of(hdu)
    except SeismoError:
        raise
    except Exception as exc:
        raise UnreadableFileError(
            f"not a readable FITS light curve ({type(exc).__name__}: {exc})",
            path=str(path),
            hint="check that the file is complete and is a FITS table",
        ) from None
    return table


def _pick_fits_hdu(hdul: Any, options: ReadOptions, path: Path) -> Any:
    from astropy.io import fits

    tables = [h for h in hdul if isinstance(h, fits.BinTableHDU | fits.TableHDU)]
    if options.hdu is not None:
        try:
            hdu = hdul[options.hdu]
        except (KeyError, IndexError):
            raise UnreadableFileError(
                f"no extension {options.hdu!r} in the FITS file",
                path=str(path),
                hint=f"it has {[h.name for h in hdul]}",
            ) from None
        if hdu not in tables:
            raise UnreadableFileError(
                f"extension {options.hdu!r} is not a table", path=str(path)
            )
        return hdu
    if not tables:
        raise UnreadableFileError(
            "the FITS file holds no table extension, so it is not a light curve",
            path=str(path),
            hint="give a FITS file with a binary table of time and flux",
        )
    for hdu in tables:
        names = [n.lower() for n in hdu.columns.names]
        wanted = (options.time_column or "").lower()
        if (wanted and wanted in names) or any(n in _TIME_NAMES for n in names):
            return hdu
    raise ColumnError(
        "no FITS table has a time column",
        path=str(path),
        hint=f"tables have columns {[h.columns.names for h in tables]}; pass --time-column",
    )


def _read_ecsv(path: Path, options: ReadOptions) -> _Table:
    from astropy.table import Table

    try:
        tab = Table.read(path, format="ascii.ecsv")
    except Exception as exc:
        raise UnreadableFileError(
            f"not a readable ECSV table ({type(exc).__name__}: {exc})", path=str(path)
        ) from None
    table = _Table({}, {}, {"id": tab.meta.get("id") or tab.meta.get("object")})
    for name in tab.colnames:
        col = tab[name]
        values = np.asarray(getattr(col, "value", col))
        if values.ndim != 1 or values.dtype.kind not in "fiub":
            continue
        table.columns[name] = values.astype(np.float64)
        table.units[name] = None if col.unit is None else str(col.unit)
    return table


def _read_delimited(path: Path, delimiter: str | None) -> _Table:
    try:
        with open(path, encoding="utf-8") as handle:
            lines = handle.read().splitlines()
    except UnicodeDecodeError:
        raise UnreadableFileError(
            "not a text table (binary content)",
            path=str(path),
            hint="give a FITS, ECSV, CSV or whitespace-separated text light curve",
        ) from None
    comments: list[str] = []
    data_lines: list[str] = []
    for line in lines:
        stripped = line.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            if not data_lines:
                comments.append(stripped.lstrip("#").strip())
            continue
        data_lines.append(stripped)
    if not data_lines:
        raise UnreadableFileError(
            "the file holds no data rows", path=str(path), hint="is it empty?"
        )

    def split(line: str) -> list[str]:
        parts = line.split(delimiter) if delimiter else line.split()
        return [p.strip().strip('"') for p in parts]

    first = split(data_lines[0])
    names: list[str] | None = None
    if not all(_is_number(tok) for tok in first):
        names = first
        data_lines = data_lines[1:]
    elif comments:
        # A trailing comment line with one word per column is taken as a header.
        last = split(comments[-1].replace(",", " ") if delimiter else comments[-1])
        if len(last) == len(first) and not any(_is_number(tok) for tok in last):
            names = last
    if not data_lines:
        raise UnreadableFileError("the file has a header but no data rows", path=str(path))
    n_cols = len(split(data_lines[0]))
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            values = np.loadtxt(
                data_lines, delimiter=delimiter, dtype=np.float64, ndmin=2,
                converters=None, comments="#",
            )
    except ValueError as exc:
        raise UnreadableFileError(
            f"rows are not all numeric with {n_cols} columns ({exc})",
            path=str(path),
            hint="each row must hold time, flux, [error], [quality] as numbers",
        ) from None
    if names is None:
        if not 2 <= values.shape[1] <= 4:
            raise ColumnError(
                f"a table without a header must have 2 to 4 columns (time, flux, [error], "
                f"[quality]); this one has {values.shape[1]}",
                path=str(path),
                hint="add a header line naming the columns",
            )
        names = ["time", "flux", "flux_err", "quality"][: values.shape[1]]
        has_names = False
    else:
        has_names = True
        if len(names) != values.shape[1]:
            raise UnreadableFileError(
                f"header names {len(names)} columns but rows have {values.shape[1]}",
                path=str(path),
            )
    units: dict[str, str | None] = {}
    clean_names = []
    for name in names:
        base, unit = _split_unit(name)
        clean_names.append(base)
        units[base] = unit
    columns = {name: values[:, i] for i, name in enumerate(clean_names)}
    return _Table(columns, units, {}, has_names)


def _split_unit(name: str) -> tuple[str, str | None]:
    """``"time[d]"`` or ``"time (d)"`` → ("time", "d")."""
    for open_, close in (("[", "]"), ("(", ")")):
        if name.endswith(close) and open_ in name:
            base, unit = name[:-1].split(open_, 1)
            return base.strip(), unit.strip()
    return name, None


def _read_csv(path: Path, options: ReadOptions) -> _Table:
    return _read_delimited(path, ",")


def _read_text(path: Path, options: ReadOptions) -> _Table:
    return _read_delimited(path, None)


#: Readers keyed by format name.
READERS: dict[str, Callable[[Path, ReadOptions], _Table]] = {
    "fits": _read_fits,
    "ecsv": _read_ecsv,
    "csv": _read_csv,
    "text": _read_text,
}


def _is_number(token: str) -> bool:
    try:
        float(token)
    except ValueError:
        return False
    return True


def sniff_format(path: str | os.PathLike[str]) -> str:
    """Guess the format of a light-curve file from its first bytes and suffix.

    Parameters
    ----------
    path : str or path-like
        File to inspect.

    Returns
    -------
    str
        A key of `READERS`.
    """
    path = Path(path)
    with open(path, "rb") as handle:
        head = handle.read(4096)
    suffixes = "".join(path.suffixes).lower()
    if head.startswith(b"SIMPLE  =") or any(s in suffixes for s in (".fits", ".fit", ".fts")):
        return "fits"
    if head.startswith(b"\x1f\x8b"):
        return "fits"
    if head.lstrip().startswith(b"# %ECSV") or suffixes.endswith(".ecsv"):
        return "ecsv"
    try:
        text = head.decode("utf-8")
    except UnicodeDecodeError:
        text = ""
    for line in text.splitlines():
        if line.strip() and not line.lstrip().startswith("#"):
            return "csv" if "," in line else "text"
    return "csv" if suffixes.endswith(".csv") else "text"
