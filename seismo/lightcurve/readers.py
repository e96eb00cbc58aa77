"""Reading light curves: options, column detection, units, and the entry point.

The file formats (FITS binary tables, ECSV, CSV, whitespace text) are read in
:mod:`seismo.lightcurve.formats` into a `_Table` of named columns; one shared
step here then picks the time, flux, error and quality columns, drops flagged
rows and converts the flux to ppm.
"""

from __future__ import annotations

import os
import warnings
from collections.abc import Callable
from dataclasses import dataclass, fields
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import (
    ColumnError,
    ConstantFluxError,
    MissingFileError,
    NoFiniteDataError,
    OptionError,
    SeismoError,
    UnreadableFileError,
)
from .core import TIME_UNITS_IN_DAYS, LightCurve
from .formats import _TIME_NAMES, READERS, _Table, sniff_format

__all__ = ["ReadOptions", "read_lightcurve", "READERS", "FLUX_UNITS", "sniff_format"]

#: Accepted values of ``ReadOptions.flux_unit``.
FLUX_UNITS = ("auto", "counts", "fractional", "percent", "ppt", "ppm", "mag")

_QUALITY_NAMES = ("quality", "qual", "flag", "flags", "quality_flag", "qflag", "sap_quality")
_SEGMENT_NAMES = ("segment", "quarter", "sector", "season", "campaign")
_ERROR_WORDS = ("err", "unc", "sig", "sd")
_NOT_FLUX_WORDS = ("err", "unc", "sig", "bkg", "background", "centr", "pos", "quality", "sd")

_COUNT_UNITS = ("e-/s", "electron/s", "electrons/s", "e/s", "count", "counts", "adu", "dn", "e-")
_RELATIVE_UNITS = {"ppm": 1.0, "ppt": 1e3, "%": 1e4, "percent": 1e4}


@dataclass(frozen=True)
class ReadOptions:
    """How to read a light-curve file.

    Parameters
    ----------
    format : str
        ``"auto"`` (sniffed from content and suffix), ``"fits"``, ``"ecsv"``,
        ``"csv"`` or ``"text"``.
    time_column, flux_column, error_column, quality_column : str, optional
        Column names, when detection cannot decide (case-insensitive).
    quality_bitmask : int, optional
        Rows with ``quality & quality_bitmask != 0`` are dropped. ``None``
        (default) drops every row with a non-zero quality; ``0`` keeps all.
    flux_unit : str
        One of `FLUX_UNITS`. ``"auto"`` infers counts (or flux normalised to
        one) from a positive level much larger than the scatter, and
        otherwise relative flux in fractional units, ppt or ppm from the
        size of the scatter; the assumption is recorded in ``meta``.
    time_unit : str
        ``"auto"`` (the file's unit if it names one, else days) or a key of
        `TIME_UNITS_IN_DAYS`.
    hdu : int or str, optional
        FITS extension to read; default the first table with a time column.
    star_id : str, optional
        Identifier to record; default from the file (OBJECT keyword, meta
        ``id``) or its name.
    """

    format: str = "auto"
    time_column: str | None = None
    flux_column: str | None = None
    error_column: str | None = None
    quality_column: str | None = None
    quality_bitmask: int | None = None
    flux_unit: str = "auto"
    time_unit: str = "auto"
    hdu: int | str | None = None
    star_id: str | None = None

    def __post_init__(self) -> None:
        if self.format not in ("auto", *READERS):
            raise OptionError(
                f"unknown light-curve format {self.format!r}; allowed formats are "
                f"{['auto', *READERS]}"
            )
        if self.flux_unit not in FLUX_UNITS:
            raise OptionError(
                f"unknown flux unit {self.flux_unit!r}; allowed units are {list(FLUX_UNITS)}"
            )
        if self.time_unit != "auto" and self.time_unit not in TIME_UNITS_IN_DAYS:
            raise OptionError(
                f"unknown time unit {self.time_unit!r}; allowed units are "
                f"{['auto', 'd', 'h', 'min', 's']}"
            )
        if self.quality_bitmask is not None and self.quality_bitmask < 0:
            raise OptionError(
                f"quality_bitmask must be a non-negative integer; got {self.quality_bitmask}"
            )

    def to_dict(self) -> dict[str, Any]:
        """Plain dict of the options (for configuration hashes)."""
        return {f.name: getattr(self, f.name) for f in fields(self)}


# ---------------------------------------------------------------- columns


def _find_column(
    table: _Table, wanted: str | None, role: str, candidates: Callable[[str], bool],
    prefer: Callable[[str], bool] | None = None, required: bool = True, path: str = "",
) -> str | None:
    by_lower = {name.lower(): name for name in table.columns}
    if wanted:
        if wanted.lower() in by_lower:
            return by_lower[wanted.lower()]
        raise ColumnError(
            f"no column named {wanted!r} for the {role}",
            path=path,
            hint=f"available columns: {list(table.columns)}",
        )
    found = [name for name in table.columns if candidates(name.lower())]
    if len(found) > 1 and prefer is not None:
        preferred = [name for name in found if prefer(name.lower())]
        if len(preferred) == 1:
            found = preferred
    if len(found) == 1:
        return found[0]
    if not required and not found:
        return None
    option = {"time": "--time-column", "flux": "--flux-column", "flux error": "--error-column",
              "quality": "--quality-column"}[role]
    if not found:
        raise ColumnError(
            f"no recognisable {role} column", path=path,
            hint=f"available columns: {list(table.columns)}; name one with {option}",
        )
    if not required:
        return None
    raise ColumnError(
        f"several candidate {role} columns {found}", path=path,
        hint=f"choose one with {option}",
    )


def _is_time(name: str) -> bool:
    return name in _TIME_NAMES or name.startswith("time")


def _is_flux(name: str) -> bool:
    if name in ("flux", "mag", "magnitude", "rel_flux", "ppm"):
        return True
    return ("flux" in name or name.startswith("mag")) and not any(
        w in name for w in _NOT_FLUX_WORDS
    )


def _is_error(name: str) -> bool:
    return name in ("err", "error", "sigma", "e_flux", "dflux", "e_mag") or (
        ("flux" in name or "mag" in name) and any(w in name for w in _ERROR_WORDS)
    )


# ---------------------------------------------------------------- units


def _time_factor(unit: str | None, option: str) -> tuple[float, str]:
    if option != "auto":
        return TIME_UNITS_IN_DAYS[option], option
    if unit:
        word = unit.strip().lower()
        if word in TIME_UNITS_IN_DAYS:
            return TIME_UNITS_IN_DAYS[word], word
        # Mission-style units such as "BJD - 2454833" are days with an offset.
        if any(w in word for w in ("jd", "day")):
            return 1.0, "d"
    return 1.0, "d (assumed)"


def _flux_to_ppm(
    flux: np.ndarray, err: np.ndarray | None, unit: str | None, option: str, name: str,
    path: str,
) -> tuple[np.ndarray, np.ndarray | None, dict[str, Any]]:
    finite = flux[np.isfinite(flux)]
    if finite.size == 0:
        raise NoFiniteDataError(
            f"every value of the flux column {name!r} is NaN or infinite (after dropping "
            "flagged rows)",
            path=path,
            hint="check --flux-column and --quality-bitmask",
        )
    level = float(np.median(finite))
    spread = 1.4826 * float(np.median(np.abs(finite - level)))
    if spread == 0.0:
        spread = float(np.std(finite))
    if spread == 0.0:
        raise ConstantFluxError(
            f"the flux column {name!r} is constant", path=path,
            hint="check that the right flux column was read (--flux-column)",
        )
    kind = option
    reason = "given"
    word = (unit or "").strip().lower()
    if kind == "auto":
        reason = f"file unit {unit!r}" if word else "inferred"
        if word in _RELATIVE_UNITS:
            kind = {"ppm": "ppm", "ppt": "ppt"}.get(word, "percent")
        elif word.startswith("mag") or name.lower().startswith("mag"):
            kind = "mag"
        elif any(word == u or word.startswith(u) for u in _COUNT_UNITS):
            kind = "counts"
        elif level > 20.0 * spread:
            kind = "counts"
            reason = (
                f"inferred: positive level {level:.6g} is {level / spread:.3g} times the scatter"
            )
        elif spread < 0.02:
            kind = "fractional"
            reason = f"inferred: zero-centred with scatter {spread:.3g}"
        elif spread < 20.0:
            kind = "ppt"
            reason = f"inferred: zero-centred with scatter {spread:.3g}"
        else:
            kind = "ppm"
            reason = f"inferred: zero-centred with scatter {spread:.3g}"
    if kind == "counts":
        if level <= 0:
            raise UnreadableFileError(
                f"flux treated as counts but its median level is {level:.4g}",
                path=path, hint="pass --flux-unit ppm|ppt|fractional",
            )
        ppm = (flux / level - 1.0) * 1e6
        err_ppm = None if err is None else err / level * 1e6
        label = "normalised to 1" if abs(level - 1.0) < 0.05 else "counts"
        normalisation = "divide"
    elif kind == "mag":
        ppm = (10.0 ** (-0.4 * (flux - level)) - 1.0) * 1e6
        err_ppm = None if err is None else err * 0.4 * np.log(10.0) * 1e6
        label = "magnitudes"
        normalisation = "divide"
    else:
        scale = {"fractional": 1e6, "percent": 1e4, "ppt": 1e3, "ppm": 1.0}[kind]
        ppm = flux * scale
        err_ppm = None if err is None else err * scale
        label = f"relative ({kind})"
        normalisation = "subtract"
    info = {
        "flux_assumed": label,
        "flux_assumed_reason": reason,
        "flux_level": level,
        "flux_normalisation": normalisation,
    }
    return ppm, err_ppm, info


# ---------------------------------------------------------------- entry point


def read_lightcurve(
    path: str | os.PathLike[str], options: ReadOptions | None = None, **kwargs: Any
) -> LightCurve:
    """Read a light-curve file into a `LightCurve` (days, ppm).

    Parameters
    ----------
    path : str or path-like
        FITS binary table, ECSV, CSV or whitespace-separated text file.
    options : ReadOptions, optional
        Reading options; keyword arguments override single fields.
    **kwargs
        Fields of `ReadOptions`.

    Returns
    -------
    LightCurve
        Time in days, flux in ppm about the median level (not yet
        conditioned). Rows with NaN time or flux are kept for conditioning to
        count and drop; flagged rows are dropped here. ``meta`` records the
        source, format, columns, units assumed and rows dropped.

    Raises
    ------
    MissingFileError
        ``path`` does not exist or is not a file.
    UnreadableFileError
        The file is corrupt or not a table.
    ColumnError
        No time or flux column can be identified, or several could be.
    NoFiniteDataError
        The flux column holds no finite value.
    ConstantFluxError
        The flux column is constant.
    """
    options = ReadOptions(**{**(options.to_dict() if options else {}), **kwargs})
    path = Path(path)
    where = str(path)
    if not path.exists():
        raise MissingFileError("file not found", path=where, hint="check the path")
    if not path.is_file():
        raise MissingFileError("not a regular file", path=where, hint="give a light-curve file")
    if path.stat().st_size == 0:
        raise UnreadableFileError("the file is empty", path=where, hint="is the download complete?")
    fmt = sniff_format(path) if options.format == "auto" else options.format
    try:
        table = READERS[fmt](path, options)
    except SeismoError as err:
        raise err.with_path(where) from None

    time_name = _find_column(table, options.time_column, "time", _is_time, path=where)
    flux_name = _find_column(
        table, options.flux_column, "flux",
        lambda n: _is_flux(n) and n != time_name.lower(),
        prefer=lambda n: "pdc" in n or n == "flux", path=where,
    )
    error_name = _find_column(
        table, options.error_column, "flux error", _is_error,
        prefer=lambda n: flux_name.lower() in n, required=False, path=where,
    )
    quality_name = _find_column(
        table, options.quality_column, "quality", lambda n: n in _QUALITY_NAMES,
        required=False, path=where,
    )
    segment_name = next((n for n in table.columns if n.lower() in _SEGMENT_NAMES), None)

    time = table.columns[time_name]
    flux = table.columns[flux_name]
    err = table.columns[error_name] if error_name else None
    n_rows = int(time.size)

    keep = np.ones(n_rows, dtype=bool)
    n_flagged = 0
    if quality_name is not None:
        quality = np.nan_to_num(table.columns[quality_name], nan=0.0).astype(np.int64)
        mask = -1 if options.quality_bitmask is None else options.quality_bitmask
        flagged = (quality & mask) != 0
        n_flagged = int(flagged.sum())
        keep &= ~flagged
    time, flux = time[keep], flux[keep]
    err = None if err is None else err[keep]
    segment = None if segment_name is None else table.columns[segment_name][keep]
    if n_flagged == n_rows:
        raise NoFiniteDataError(
            f"all {n_rows} rows carry a non-zero quality flag",
            path=where,
            hint="relax the mask with --quality-bitmask (0 keeps every row)",
        )
    if not np.any(np.isfinite(time)):
        raise NoFiniteDataError(
            f"every value of the time column {time_name!r} is NaN", path=where,
            hint="check --time-column",
        )

    factor, time_unit = _time_factor(table.units.get(time_name), options.time_unit)
    ppm, err_ppm, flux_info = _flux_to_ppm(
        flux, err, table.units.get(flux_name), options.flux_unit, flux_name, where
    )
    if flux_info["flux_assumed_reason"].startswith("inferred: zero-centred"):
        warnings.warn(
            f"{where}: flux taken as {flux_info['flux_assumed']} "
            f"({flux_info['flux_assumed_reason']}); pass --flux-unit if that is wrong",
            stacklevel=2,
        )
    star_id = options.star_id or table.meta.get("id") or path.name.split(".")[0]
    meta = {
        "id": str(star_id),
        "source": where,
        "format": fmt,
        "columns": {
            "time": time_name, "flux": flux_name, "error": error_name,
            "quality": quality_name, "segment": segment_name,
        },
        "time_unit": time_unit,
        "n_rows": n_rows,
        "n_flagged_dropped": n_flagged,
        "quality_bitmask": options.quality_bitmask,
        **flux_info,
    }
    if "hdu" in table.meta:
        meta["hdu"] = table.meta["hdu"]
    lc = LightCurve(time * factor, ppm, err_ppm, None, meta)
    if segment is not None and np.all(np.isfinite(segment)):
        lc = lc.replace(segment=segment.astype(np.int64))
    return lc
