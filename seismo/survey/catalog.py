"""Catalogs from a survey ledger: one row per star, units on every column.

The star table has one row per done star: ``id``, ``path``, ``detected``,
each measurement of `seismo.results.MEASUREMENT_FIELDS` as a column with its
astropy unit and its error as ``<name>_err``, ``state``,
``state_probability``, ``flags`` (joined with ``";"``) and the provenance
(``config_hash``, ``input_checksum``, ``seed``, ``version``); when the run used
a grid of models, ``grid_mass``, ``grid_radius``, ``grid_age``, ``grid_logg``
with ``_err_lo``/``_err_hi`` (distances to the 16th/84th percentiles) and
``grid_n_eff``. Quantities not measured are NaN. Failed stars go to a second
table (``path``, ``error_class``, ``error_message``, ``checksum``, ``seconds``,
``worker``) written beside the first as ``<stem>.failed<suffix>``.

Formats follow the suffix: ``.ecsv`` (units kept), ``.fits`` (units kept
except the function unit of ``logg``, written as plain ``dex`` in the column
description), ``.csv`` (no units), ``.parquet`` (needs pyarrow).
"""

from __future__ import annotations

from collections.abc import Iterable
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import OptionError
from ..results import MEASUREMENT_FIELDS
from .ledger import Ledger, StarRecord

__all__ = ["CATALOG_FORMATS", "catalog_tables", "write_catalog", "failed_path", "column_unit"]

#: Catalog suffix -> astropy format name.
CATALOG_FORMATS: dict[str, str] = {".ecsv": "ascii.ecsv", ".fits": "fits", ".csv": "ascii.csv",
                                   ".parquet": "parquet"}


def column_unit(name: str) -> Any:
    """The astropy unit of a measurement column (see `MEASUREMENT_FIELDS`).

    Parameters
    ----------
    name : str
        A key of `MEASUREMENT_FIELDS`.

    Returns
    -------
    astropy.units.UnitBase
    """
    import astropy.units as u

    text = MEASUREMENT_FIELDS[name]
    return {
        "μHz": u.uHz, "s": u.s, "M☉": u.Msun, "R☉": u.Rsun,
        "dex (cgs)": u.dex(u.cm / u.s**2), "dimensionless": u.dimensionless_unscaled,
    }[text]


def failed_path(path: str | Path) -> Path:
    """Where the table of failed stars goes: ``catalog.ecsv`` → ``catalog.failed.ecsv``."""
    path = Path(path)
    return path.with_name(f"{path.stem}.failed{path.suffix}")


def catalog_tables(records: Iterable[StarRecord]) -> tuple[Any, Any]:
    """Build the star table and the failed-star table from ledger records.

    Parameters
    ----------
    records : iterable of StarRecord
        Typically ``ledger.records()``; skipped stars are left out.

    Returns
    -------
    (astropy.table.QTable, astropy.table.Table)
        Stars (one row per done star, in path order) and failures.
    """
    from astropy.table import QTable, Table

    done: list[tuple[StarRecord, dict[str, Any]]] = []
    failed: list[StarRecord] = []
    for rec in sorted(records, key=lambda r: r.path):
        if rec.status == "done":
            done.append((rec, rec.result() or {}))
        elif rec.status == "failed":
            failed.append(rec)

    stars = QTable()
    stars["id"] = np.array([str(r.get("id") or "") for _, r in done], dtype=str)
    stars["path"] = np.array([rec.path for rec, _ in done], dtype=str)
    stars["detected"] = np.array([bool(r.get("detected")) for _, r in done], dtype=bool)
    for name in MEASUREMENT_FIELDS:
        values = np.full(len(done), np.nan)
        errors = np.full(len(done), np.nan)
        for i, (_, r) in enumerate(done):
            m = r.get(name)
            if m:
                values[i] = m["value"]
                errors[i] = np.nan if m.get("error") is None else m["error"]
        unit = column_unit(name)
        stars[name] = values * unit
        stars[f"{name}_err"] = errors * unit
        stars[name].info.description = f"{name} ({MEASUREMENT_FIELDS[name]})"
    stars["state"] = np.array([r.get("state") or "unknown" for _, r in done], dtype=str)
    stars["state_probability"] = np.array(
        [np.nan if r.get("state_probability") is None else r["state_probability"]
         for _, r in done], dtype=float)
    stars["flags"] = np.array([";".join(r.get("flags") or []) for _, r in done], dtype=str)
    for key in ("config_hash", "input_checksum", "seed", "run_seed", "version"):
        stars[key] = np.array([str((r.get("provenance") or {}).get(key) or "")
                               for _, r in done], dtype=str)
    stars["seconds"] = np.array([rec.seconds for rec, _ in done], dtype=float)
    _grid_columns(stars, [r for _, r in done])

    failures = Table()
    failures["path"] = np.array([rec.path for rec in failed], dtype=str)
    failures["error_class"] = np.array([rec.error_class or "" for rec in failed], dtype=str)
    failures["error_message"] = np.array([rec.error_message or "" for rec in failed], dtype=str)
    failures["checksum"] = np.array([rec.checksum or "" for rec in failed], dtype=str)
    failures["seconds"] = np.array([rec.seconds for rec in failed], dtype=float)
    failures["worker"] = np.array([rec.worker for rec in failed], dtype=str)
    return stars, failures


#: Grid-estimate columns: quantity → astropy unit name (see `seismo.structure.grid_details`).
_GRID_UNITS = {"mass": "solMass", "radius": "solRad", "age": "Gyr", "logg": "dex(cm / s2)"}


def _grid_columns(stars: Any, results: list[dict[str, Any]]) -> None:
    """Add ``grid_<q>``, ``grid_<q>_err_lo/_hi`` and ``grid_n_eff`` when a run used a grid."""
    import astropy.units as u

    grids = [((r.get("details") or {}).get("grid") or {}) for r in results]
    if not any(grids):
        return
    for name, unit_name in _GRID_UNITS.items():
        unit = u.Unit(unit_name)
        for suffix, key in (("", "value"), ("_err_lo", "err_lo"), ("_err_hi", "err_hi")):
            picked = [(g.get(name) or {}).get(key) for g in grids]
            values = np.array([np.nan if v is None else v for v in picked], dtype=float)
            stars[f"grid_{name}{suffix}"] = values * unit
        stars[f"grid_{name}"].info.description = (
            f"grid-based {name}: median of the posterior; _err_lo/_err_hi to the 16/84 "
            "percentiles")
    stars["grid_n_eff"] = np.array([np.nan if g.get("n_eff") is None else g["n_eff"]
                                    for g in grids], dtype=float)


def _write(table: Any, path: Path) -> None:
    fmt = CATALOG_FORMATS[path.suffix.lower()]
    if fmt == "parquet":
        try:
            import pyarrow  # noqa: F401
        except ImportError:
            raise OptionError("writing a .parquet catalog needs pyarrow (pip install "
                              "pyarrow); .ecsv, .fits and .csv need nothing else") from None
    if fmt == "fits":
        import astropy.units as u

        # FITS cannot hold function units such as dex(cm/s2) (logg, logg_err, grid_logg…):
        # write plain numbers and say so in the column description.
        logs = [col for col in table.colnames
                if isinstance(getattr(table[col], "unit", None), u.FunctionUnitBase)]
        if logs:
            table = table.copy()
        for col in logs:
            table[col] = np.asarray(table[col].value, dtype=float)
            table[col].info.description = "log10 of surface gravity in cm s-2 (dex)"
    table.write(path, format=fmt, overwrite=True)


def write_catalog(ledger: Ledger, path: str | Path) -> tuple[Path, Path, int, int]:
    """Export a ledger as a catalog of done stars plus a table of failures.

    Parameters
    ----------
    ledger : Ledger
        The survey's ledger.
    path : str or Path
        Catalog file; its suffix picks the format (`CATALOG_FORMATS`).

    Returns
    -------
    (Path, Path, int, int)
        Catalog path, failed-table path, number of stars, number of failures.

    Raises
    ------
    OptionError
        For an unknown suffix, or ``.parquet`` without pyarrow.
    """
    path = Path(path)
    if path.suffix.lower() not in CATALOG_FORMATS:
        raise OptionError(f"unknown catalog format {path.suffix!r} of {path}; allowed "
                          f"suffixes are {list(CATALOG_FORMATS)}")
    stars, failures = catalog_tables(ledger.records())
    path.parent.mkdir(parents=True, exist_ok=True)
    _write(stars, path)
    other = failed_path(path)
    _write(failures, other)
    return path, other, len(stars), len(failures)
