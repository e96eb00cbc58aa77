"""What a survey runs on: the list of stars and the run's configuration.

INPUTS is one of

- a folder, searched recursively for files matching a pattern (default:
  every light-curve suffix of `seismo.cli.LIGHTCURVE_SUFFIXES`);
- a text list (any suffix other than the table ones): one path per line,
  ``#`` starts a comment;
- a table (``.csv``, ``.ecsv``, ``.fits``, ``.fit``) with a ``path`` column
  and optional ``id``, ``teff``, ``teff_err`` (K), ``feh`` and ``feh_err`` (dex)
  columns.

Relative paths in a list or table are taken relative to the folder holding
the list. The configuration comes from a TOML file whose sections
``[read]``, ``[condition]``, ``[spectrum]``, ``[detection]`` and
``[scaling]`` hold the fields of the matching options classes.
"""

from __future__ import annotations

import json
import math
import sys
from dataclasses import dataclass, field, fields
from pathlib import Path
from typing import Any

from ..config import AnalysisConfig, StarInputs
from ..errors import InputError, OptionError

__all__ = ["StarTask", "collect_stars", "load_config", "TABLE_SUFFIXES", "CONFIG_SECTIONS"]

#: Suffixes read as an inputs table rather than a text list.
TABLE_SUFFIXES = (".csv", ".ecsv", ".fits", ".fit")


def _sections() -> dict[str, type]:
    from ..background import DetectionOptions
    from ..config import GridOptions, ScalingOptions, SpectrumOptions
    from ..lightcurve import ConditionOptions, ReadOptions

    return {"read": ReadOptions, "condition": ConditionOptions, "spectrum": SpectrumOptions,
            "detection": DetectionOptions, "scaling": ScalingOptions, "grid": GridOptions}


#: Sections of a TOML configuration file, in the order of `AnalysisConfig`.
CONFIG_SECTIONS: tuple[str, ...] = ("read", "condition", "spectrum", "detection", "scaling",
                                   "grid")


@dataclass(frozen=True)
class StarTask:
    """One star of a survey.

    Attributes
    ----------
    path : str
        Absolute path of the light-curve file.
    star_id : str or None
        Identifier from the inputs table (default: from the file).
    inputs : StarInputs
        Teff (K), its error (K) and [Fe/H] (dex), when given.
    """

    path: str
    star_id: str | None = None
    inputs: StarInputs = field(default_factory=StarInputs)

    @property
    def key(self) -> str:
        """JSON of the id and inputs: a change means the star must be re-run."""
        return json.dumps({"id": self.star_id, **self.inputs.to_dict()}, sort_keys=True)


def _from_folder(folder: Path, pattern: str | None) -> list[StarTask]:
    if pattern is not None:
        files = [p for p in folder.rglob(pattern) if p.is_file()]
        wanted = f"matching {pattern!r}"
    else:
        from ..cli import LIGHTCURVE_SUFFIXES

        files = [p for p in folder.rglob("*")
                 if p.is_file() and p.name.lower().endswith(LIGHTCURVE_SUFFIXES)]
        wanted = "with a light-curve suffix (" + ", ".join(LIGHTCURVE_SUFFIXES) + ")"
    if not files:
        raise InputError(f"folder holds no files {wanted}", path=str(folder))
    return [StarTask(str(p.resolve())) for p in sorted(files)]


def _from_list(listing: Path) -> list[StarTask]:
    tasks = []
    with open(listing, encoding="utf-8", errors="replace") as handle:
        for line in handle:
            text = line.split("#", 1)[0].strip()
            if text:
                tasks.append(StarTask(str((listing.parent / text).resolve())))
    if not tasks:
        raise InputError("the list of light curves is empty", path=str(listing))
    if not any(Path(t.path).is_file() for t in tasks[:1000]):
        raise InputError(
            "none of the listed paths is a file; INPUTS must be a folder, a list of "
            "paths (one a line) or a table with a 'path' column", path=str(listing))
    return tasks


def _number(value: Any) -> float | None:
    if value is None or getattr(value, "mask", False) is True:
        return None
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    return number if math.isfinite(number) else None


def _from_table(table_path: Path) -> list[StarTask]:
    from astropy.table import Table

    try:
        table = Table.read(table_path, format="ascii.csv" if table_path.suffix.lower() == ".csv"
                           else None)
    except Exception as err:
        raise InputError(f"cannot read the inputs table ({type(err).__name__}: {err})",
                         path=str(table_path)) from None
    names = {name.lower(): name for name in table.colnames}
    if "path" not in names:
        raise InputError(
            f"inputs table has no 'path' column; columns are {table.colnames} (a single "
            "light curve is analysed with 'seismo analyze')", path=str(table_path))
    tasks = []
    for i, row in enumerate(table, start=1):
        raw = row[names["path"]]
        if getattr(raw, "mask", False) is True or not str(raw).strip():
            raise InputError(f"row {i} of the inputs table has an empty path",
                             path=str(table_path))
        values = {key: _number(row[names[key]]) if key in names else None
                  for key in ("teff", "teff_err", "feh", "feh_err")}
        if values["teff"] is not None and values["teff_err"] is None:
            values["teff_err"] = 100.0
        try:
            inputs = StarInputs(**values)
        except OptionError as err:
            raise InputError(f"row {i} of the inputs table: {err.message}",
                             path=str(table_path)) from None
        star_id = None
        if "id" in names and getattr(row[names["id"]], "mask", False) is not True:
            star_id = str(row[names["id"]]).strip() or None
        tasks.append(StarTask(str((table_path.parent / str(raw).strip()).resolve()),
                              star_id, inputs))
    return tasks


def collect_stars(source: str | Path, pattern: str | None = None) -> list[StarTask]:
    """List the stars of a survey.

    Parameters
    ----------
    source : str or Path
        A folder, a text list of paths, or an inputs table (see the module
        docstring).
    pattern : str, optional
        Glob matched against file names when ``source`` is a folder (e.g.
        ``"*.fits"``); default every light-curve suffix.

    Returns
    -------
    list of StarTask
        One per distinct path (the first entry wins), in input order.

    Raises
    ------
    InputError
        If ``source`` does not exist, the folder holds no matching file, the
        list is empty or names no existing file, or the table has no
        ``path`` column or an unusable row.
    """
    source = Path(source)
    if source.is_dir():
        tasks = _from_folder(source, pattern)
    elif not source.is_file():
        raise InputError("no such file or folder", path=str(source))
    elif source.suffix.lower() in TABLE_SUFFIXES:
        tasks = _from_table(source)
    else:
        tasks = _from_list(source)
    seen: set[str] = set()
    unique = []
    for task in tasks:
        if task.path not in seen:
            seen.add(task.path)
            unique.append(task)
    return unique


def _read_toml(path: Path) -> dict[str, Any]:
    if sys.version_info >= (3, 11):
        import tomllib
    else:  # pragma: no cover - Python 3.10
        import tomli as tomllib
    try:
        with open(path, "rb") as handle:
            return tomllib.load(handle)
    except FileNotFoundError:
        raise OptionError("configuration file not found", path=str(path)) from None
    except tomllib.TOMLDecodeError as err:
        raise OptionError(f"not valid TOML ({err})", path=str(path)) from None


def load_config(path: str | Path) -> AnalysisConfig:
    """Read an `AnalysisConfig` from a TOML file.

    Parameters
    ----------
    path : str or Path
        TOML file with any of the sections of `CONFIG_SECTIONS`, each holding
        fields of the matching options class, e.g.::

            [condition]
            highpass_uhz = 3.0
            [scaling]
            reference = "huber2011"

    Returns
    -------
    AnalysisConfig
        Defaults for every section or field not given.

    Raises
    ------
    OptionError
        If the file is missing or not TOML, a section or key is unknown (the
        message lists the allowed ones), or a value is not accepted.
    """
    path = Path(path)
    data = _read_toml(path)
    classes = _sections()
    unknown = sorted(set(data) - set(classes))
    if unknown:
        raise OptionError(f"unknown configuration sections {unknown}; allowed sections are "
                          f"{list(CONFIG_SECTIONS)}", path=str(path))
    parts = {}
    for name, cls in classes.items():
        section = data.get(name, {})
        if not isinstance(section, dict):
            raise OptionError(f"[{name}] must be a table of settings; got {section!r}",
                              path=str(path))
        allowed = [f.name for f in fields(cls)]
        bad = sorted(set(section) - set(allowed))
        if bad:
            raise OptionError(f"unknown keys {bad} in [{name}]; allowed keys are {allowed}",
                              path=str(path))
        try:
            parts[name] = cls(**section)
        except OptionError as err:
            raise OptionError(f"[{name}]: {err.message}", path=str(path)) from None
        except TypeError as err:
            raise OptionError(f"[{name}]: {err}", path=str(path)) from None
    return AnalysisConfig(**parts)
