"""Result types of seismo and their JSON form (the stable schema of DESIGN.md).

`Measurement` is a value with an optional error; `StarResult` is everything
the analysis of one star produced. ``StarResult.to_dict()`` gives exactly the
keys of `SCHEMA_FIELDS` (the stable schema, in order) followed by
`EXTRA_FIELDS` (``eps_g``, ``rot_core`` and the free-form ``details``), and
contains only JSON-safe values: non-finite numbers become ``null``.

Pipelines that parse the JSON can check it with `validate_result_dict`.

Schema stability: a field that is ever renamed keeps its old name as an
alias, announced by a `DeprecationWarning` (``_RENAMED_FIELDS`` maps old to
new names; it is empty because nothing has been renamed yet).
"""

from __future__ import annotations

import dataclasses
import json
import math
import numbers
import warnings
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .errors import OptionError

__all__ = [
    "Measurement",
    "StarResult",
    "SCHEMA_FIELDS",
    "EXTRA_FIELDS",
    "MEASUREMENT_FIELDS",
    "STATES",
    "PROVENANCE_KEYS",
    "validate_result_dict",
]

#: Keys of the stable result schema of DESIGN.md, in output order.
SCHEMA_FIELDS: tuple[str, ...] = (
    "id",
    "detected",
    "numax",
    "dnu",
    "eps_p",
    "dpi1",
    "q",
    "mass",
    "radius",
    "logg",
    "state",
    "state_probability",
    "flags",
    "provenance",
)

#: Keys written after the stable ones: two measurements still being built and
#: ``details``, a free-form dict outside the stable schema.
EXTRA_FIELDS: tuple[str, ...] = ("eps_g", "rot_core", "details")

#: Fields that hold a `Measurement` or ``None``, with their units.
MEASUREMENT_FIELDS: dict[str, str] = {
    "numax": "μHz",
    "dnu": "μHz",
    "eps_p": "dimensionless",
    "dpi1": "s",
    "q": "dimensionless",
    "mass": "M☉",
    "radius": "R☉",
    "logg": "dex (cgs)",
    "eps_g": "dimensionless",
    "rot_core": "μHz",
}

#: Allowed evolutionary states: hydrogen-shell burning, red clump, secondary clump.
STATES: tuple[str, ...] = ("RGB", "RC", "2CL", "unknown")

#: Keys every result's provenance carries (``None`` when not known).
PROVENANCE_KEYS: tuple[str, ...] = ("version", "config_hash", "input_checksum")

# Old field name -> new field name, for renames of the stable schema.
_RENAMED_FIELDS: dict[str, str] = {}


def _is_number(value: Any) -> bool:
    """True for real numbers (Python or NumPy), False for bools and everything else."""
    return isinstance(value, numbers.Real) and not isinstance(value, (bool, np.bool_))


def _json_safe(value: Any, where: str) -> Any:
    """Return ``value`` as plain JSON types; non-finite floats become ``None``.

    Accepts None, bool, str, real numbers, NumPy scalars and arrays, lists,
    tuples, mappings with string keys and `Measurement`. ``where`` names the
    location for the error message.
    """
    if value is None or isinstance(value, str):
        return value
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, numbers.Integral):
        return int(value)
    if _is_number(value):
        number = float(value)
        return number if math.isfinite(number) else None
    if isinstance(value, Measurement):
        return value.to_dict()
    if isinstance(value, np.ndarray):
        return _json_safe(value.tolist(), where)
    if isinstance(value, Mapping):
        out = {}
        for key, item in value.items():
            if not isinstance(key, str):
                raise OptionError(
                    f"{where} keys must be strings; got {type(key).__name__} key {key!r}"
                )
            out[key] = _json_safe(item, f"{where}[{key!r}]")
        return out
    if isinstance(value, (list, tuple)):
        return [_json_safe(item, f"{where}[{i}]") for i, item in enumerate(value)]
    raise OptionError(
        f"{where} must hold JSON-compatible values (None, bool, str, number, list, dict, "
        f"ndarray or Measurement); got an object of type {type(value).__name__}"
    )


@dataclass(frozen=True)
class Measurement:
    """A measured quantity: a finite value and its 1σ error.

    Parameters
    ----------
    value : float
        The value, in the unit of the field that holds it (see
        `MEASUREMENT_FIELDS`). Must be finite.
    error : float or None
        Its 1σ uncertainty in the same unit, >= 0, or ``None`` when not
        known. A NaN or infinite error is stored as ``None`` (no usable
        error bar).

    Raises
    ------
    OptionError
        If ``value`` is not a finite real number, or ``error`` is negative
        or not a number.

    Examples
    --------
    >>> Measurement(30.2, 0.4).to_dict()
    {'value': 30.2, 'error': 0.4}
    """

    value: float
    error: float | None = None

    def __post_init__(self) -> None:
        if not _is_number(self.value) or not math.isfinite(float(self.value)):
            raise OptionError(
                f"Measurement value must be a finite real number; got {self.value!r} "
                "(use None for the whole field when nothing was measured)"
            )
        object.__setattr__(self, "value", float(self.value))
        error = self.error
        if error is not None:
            if not _is_number(error):
                raise OptionError(
                    f"Measurement error must be a real number >= 0 or None; got {error!r}"
                )
            error = float(error)
            if not math.isfinite(error):
                error = None
            elif error < 0:
                raise OptionError(f"Measurement error must be >= 0 or None; got {error!r}")
        object.__setattr__(self, "error", error)

    @property
    def relative_error(self) -> float | None:
        """``error / |value|``, or ``None`` if the error is unknown or the value is 0."""
        if self.error is None or self.value == 0:
            return None
        return self.error / abs(self.value)

    def to_dict(self) -> dict[str, float | None]:
        """Return ``{"value": value, "error": error}`` (error may be ``None``)."""
        return {"value": self.value, "error": self.error}

    @classmethod
    def from_dict(cls, data: Mapping[str, Any]) -> Measurement:
        """Build from ``{"value": x, "error": e}``, as written by `to_dict`.

        Raises
        ------
        OptionError
            If ``data`` is not a mapping with exactly the keys ``value`` and
            ``error``, or the numbers are not acceptable (see the class).
        """
        if not isinstance(data, Mapping) or set(data) != {"value", "error"}:
            got = sorted(data) if isinstance(data, Mapping) else type(data).__name__
            raise OptionError(
                f"a measurement must be a mapping with keys ['error', 'value']; got {got!r}"
            )
        if data["value"] is None:
            raise OptionError(
                "a measurement must have a value; got value null (write null for the "
                "whole field instead)"
            )
        return cls(data["value"], data["error"])

    @classmethod
    def or_none(cls, value: Any, error: Any = None) -> Measurement | None:
        """Return a `Measurement`, or ``None`` when ``value`` is None or not finite.

        Convenience for stages whose estimate may have failed (NaN).
        """
        if value is None or not _is_number(value) or not math.isfinite(float(value)):
            return None
        return cls(value, error)

    def __str__(self) -> str:
        return f"{self.value:.6g}" + ("" if self.error is None else f" ± {self.error:.2g}")


def _field_names() -> tuple[str, ...]:
    return SCHEMA_FIELDS + EXTRA_FIELDS


@dataclass(frozen=True, repr=False)
class StarResult:
    """Everything the analysis of one star produced (DESIGN.md result schema).

    Parameters
    ----------
    id : str
        Identifier of the star (from the file or given by the user).
    detected : bool
        Whether an oscillation excess was detected.
    numax : Measurement or None
        Frequency of maximum oscillation power, μHz.
    dnu : Measurement or None
        Large frequency separation Δν, μHz.
    eps_p : Measurement or None
        Phase offset ε of the radial modes (dimensionless).
    dpi1 : Measurement or None
        Asymptotic period spacing of dipole g modes ΔΠ1, s.
    q : Measurement or None
        Coupling factor of the dipole mixed modes (dimensionless).
    mass : Measurement or None
        Mass, M☉ (scaling relations).
    radius : Measurement or None
        Radius, R☉ (scaling relations).
    logg : Measurement or None
        Surface gravity, log10 of cm s⁻² (dex).
    state : str
        Evolutionary state, one of `STATES`: ``"RGB"``, ``"RC"``, ``"2CL"``
        or ``"unknown"`` (default).
    state_probability : float or None
        Probability of ``state``, in [0, 1]; NaN is stored as ``None``.
    flags : tuple of str
        Short machine-readable strings saying what could not be measured and
        why. A list is accepted and stored as a tuple.
    provenance : dict
        Package ``version``, ``config_hash``, ``input_checksum`` and any other
        facts about how the result was made. The keys of `PROVENANCE_KEYS`
        are always present (``None`` when not given).
    eps_g : Measurement or None
        Phase offset ε_g of the g modes (dimensionless). Written after the
        stable fields; not yet part of the stable schema.
    rot_core : Measurement or None
        Mean core rotational splitting, μHz. As ``eps_g``.
    details : dict
        Free-form extras (background parameters, density, luminosity, error
        budgets, ...). **Outside the stable schema**: keys may change between
        versions. Values must be JSON-compatible (numbers, strings, lists,
        dicts, arrays, `Measurement`); they are stored as plain JSON types
        (arrays become lists, `Measurement` a dict, NaN ``None``), as is
        ``provenance``.

    Raises
    ------
    OptionError
        If a field has a value of the wrong kind or outside its allowed set;
        the message names the field, what was expected and what arrived.
    """

    id: str
    detected: bool
    numax: Measurement | None = None
    dnu: Measurement | None = None
    eps_p: Measurement | None = None
    dpi1: Measurement | None = None
    q: Measurement | None = None
    mass: Measurement | None = None
    radius: Measurement | None = None
    logg: Measurement | None = None
    state: str = "unknown"
    state_probability: float | None = None
    flags: tuple[str, ...] = ()
    provenance: dict[str, Any] = field(default_factory=dict)
    eps_g: Measurement | None = None
    rot_core: Measurement | None = None
    details: dict[str, Any] = field(default_factory=dict)

    def __post_init__(self) -> None:
        if not isinstance(self.id, str):
            raise OptionError(
                f"id must be a string; got {type(self.id).__name__} {self.id!r} (use str(...))"
            )
        if not isinstance(self.detected, (bool, np.bool_)):
            raise OptionError(f"detected must be True or False; got {self.detected!r}")
        object.__setattr__(self, "detected", bool(self.detected))
        for name in MEASUREMENT_FIELDS:
            value = getattr(self, name)
            if value is not None and not isinstance(value, Measurement):
                raise OptionError(
                    f"{name} must be a Measurement or None; got {type(value).__name__} "
                    f"{value!r} (Measurement.from_dict converts a dict)"
                )
        if self.state not in STATES:
            raise OptionError(f"state must be one of {list(STATES)}; got {self.state!r}")
        object.__setattr__(self, "state_probability", _check_probability(self.state_probability))
        object.__setattr__(self, "flags", _check_flags(self.flags))
        # Both are stored as JSON-safe copies, so that equality, pickling and the JSON
        # round trip are exact.
        for name in ("provenance", "details"):
            value = getattr(self, name)
            if not isinstance(value, Mapping):
                raise OptionError(f"{name} must be a dict; got {type(value).__name__}")
            object.__setattr__(self, name, _json_safe(value, name))
        object.__setattr__(
            self, "provenance", {**dict.fromkeys(PROVENANCE_KEYS), **self.provenance}
        )

    def __getattr__(self, name: str) -> Any:
        # Only reached for names that are not attributes: old names of renamed fields.
        if name in _RENAMED_FIELDS:
            new = _RENAMED_FIELDS[name]
            warnings.warn(
                f"StarResult.{name} is deprecated; use StarResult.{new}",
                DeprecationWarning,
                stacklevel=2,
            )
            return getattr(self, new)
        raise AttributeError(f"{type(self).__name__!r} object has no attribute {name!r}")

    def to_dict(self) -> dict[str, Any]:
        """Return the result as plain JSON-safe types, keys in schema order.

        The keys are `SCHEMA_FIELDS` followed by `EXTRA_FIELDS`. Measurements
        become ``{"value": x, "error": e}`` or ``None``; flags a list;
        non-finite numbers in ``provenance`` and ``details`` become ``None``.
        """
        out: dict[str, Any] = {}
        for name in _field_names():
            value = getattr(self, name)
            if name in MEASUREMENT_FIELDS:
                out[name] = None if value is None else value.to_dict()
            elif name == "flags":
                out[name] = list(value)
            elif name in ("provenance", "details"):
                out[name] = _json_safe(value, name)
            else:
                out[name] = value
        return out

    def to_json(self, indent: int | None = None) -> str:
        """Return `to_dict` as a JSON string (strict JSON: never NaN or Infinity)."""
        return json.dumps(self.to_dict(), indent=indent, allow_nan=False, ensure_ascii=False)

    @classmethod
    def from_dict(cls, data: Mapping[str, Any]) -> StarResult:
        """Rebuild a result from `to_dict` output (or a parsed JSON object).

        Missing `EXTRA_FIELDS` take their defaults, so a catalog row with only
        the stable fields is accepted. Old names of renamed fields are mapped
        to the new ones with a `DeprecationWarning`.

        Raises
        ------
        OptionError
            If ``data`` is not a mapping, a stable field is missing, a key is
            unknown, or a value is unacceptable.
        """
        if not isinstance(data, Mapping):
            raise OptionError(f"a result must be a mapping; got {type(data).__name__}")
        data = dict(data)
        for old, new in _RENAMED_FIELDS.items():
            if old in data:
                warnings.warn(
                    f"result key {old!r} is deprecated; it is read as {new!r}",
                    DeprecationWarning,
                    stacklevel=2,
                )
                data.setdefault(new, data.pop(old))
        unknown = sorted(set(data) - set(_field_names()))
        if unknown:
            raise OptionError(
                f"unknown result keys {unknown}; allowed keys are {list(_field_names())}"
            )
        missing = [name for name in SCHEMA_FIELDS if name not in data]
        if missing:
            raise OptionError(f"result is missing the schema keys {missing}")
        kwargs: dict[str, Any] = {}
        for name, value in data.items():
            if name in MEASUREMENT_FIELDS:
                kwargs[name] = None if value is None else _measurement_field(name, value)
            elif name == "flags":
                if not isinstance(value, (list, tuple)):
                    raise OptionError(f"flags must be a list of strings; got {value!r}")
                kwargs[name] = tuple(value)
            else:
                kwargs[name] = value
        return cls(**kwargs)

    @classmethod
    def from_json(cls, text: str) -> StarResult:
        """Rebuild a result from the output of `to_json`."""
        return cls.from_dict(json.loads(text))

    def replace(self, **changes: Any) -> StarResult:
        """Return a copy with some fields changed (validated again)."""
        return dataclasses.replace(self, **changes)

    def __repr__(self) -> str:
        parts = [f"id={self.id!r}", f"detected={self.detected}"]
        parts += [
            f"{name}={getattr(self, name)}"
            for name in MEASUREMENT_FIELDS
            if getattr(self, name) is not None
        ]
        parts.append(f"state={self.state!r}")
        if self.flags:
            parts.append(f"flags={len(self.flags)}")
        return f"StarResult({', '.join(parts)})"


def _measurement_field(name: str, value: Any) -> Measurement:
    try:
        return Measurement.from_dict(value)
    except OptionError as err:
        raise OptionError(f"{name}: {err.message}") from None


def _check_probability(value: Any) -> float | None:
    if value is None:
        return None
    if not _is_number(value):
        raise OptionError(f"state_probability must be a number in [0, 1] or None; got {value!r}")
    value = float(value)
    if math.isnan(value):
        return None
    if not 0.0 <= value <= 1.0:
        raise OptionError(f"state_probability must be in [0, 1]; got {value!r}")
    return value


def _check_flags(flags: Any) -> tuple[str, ...]:
    if isinstance(flags, str) or not isinstance(flags, Iterable):
        raise OptionError(
            f"flags must be a tuple or list of strings; got {type(flags).__name__} {flags!r}"
        )
    flags = tuple(flags)
    bad = [flag for flag in flags if not isinstance(flag, str) or not flag]
    if bad:
        raise OptionError(f"flags must be non-empty strings; got {bad!r}")
    return flags


def _schema_problems(data: Any) -> list[str]:
    """Every way ``data`` departs from the JSON result schema (empty if none)."""
    if not isinstance(data, Mapping):
        return [f"a result must be a JSON object; got {type(data).__name__}"]
    problems = []
    missing = [name for name in SCHEMA_FIELDS if name not in data]
    if missing:
        problems.append(f"missing keys {missing}")
    unknown = sorted(set(data) - set(_field_names()))
    if unknown:
        problems.append(f"unknown keys {unknown}; allowed keys are {list(_field_names())}")
    if "id" in data and not isinstance(data["id"], str):
        problems.append(f"id must be a string; got {data['id']!r}")
    if "detected" in data and not isinstance(data["detected"], bool):
        problems.append(f"detected must be true or false; got {data['detected']!r}")
    for name in MEASUREMENT_FIELDS:
        value = data.get(name)
        if value is None:
            continue
        if not isinstance(value, Mapping) or set(value) != {"value", "error"}:
            problems.append(f"{name} must be null or {{'value': x, 'error': e}}; got {value!r}")
            continue
        number, error = value["value"], value["error"]
        if not _is_number(number) or not math.isfinite(number):
            problems.append(f"{name}.value must be a finite number; got {number!r}")
        if error is not None and not (_is_number(error) and math.isfinite(error) and error >= 0):
            problems.append(f"{name}.error must be null or a finite number >= 0; got {error!r}")
    if "state" in data and data["state"] not in STATES:
        problems.append(f"state must be one of {list(STATES)}; got {data['state']!r}")
    prob = data.get("state_probability")
    if prob is not None and not (_is_number(prob) and 0.0 <= prob <= 1.0):
        problems.append(f"state_probability must be null or a number in [0, 1]; got {prob!r}")
    if "flags" in data:
        flags = data["flags"]
        if not isinstance(flags, list) or not all(isinstance(f, str) and f for f in flags):
            problems.append(f"flags must be a list of non-empty strings; got {flags!r}")
    if "provenance" in data:
        prov = data["provenance"]
        if not isinstance(prov, Mapping):
            problems.append(f"provenance must be an object; got {prov!r}")
        else:
            lacking = [key for key in PROVENANCE_KEYS if key not in prov]
            if lacking:
                problems.append(f"provenance is missing the keys {lacking}")
    if "details" in data and not isinstance(data["details"], Mapping):
        problems.append(f"details must be an object; got {type(data['details']).__name__}")
    return problems


def validate_result_dict(data: Any) -> None:
    """Check a parsed JSON object against the result schema.

    Parameters
    ----------
    data : dict
        For example ``json.loads(output_of_seismo_analyze_json)``.

    Raises
    ------
    OptionError
        Listing every departure from the schema: missing or unknown keys,
        ``id`` not a string, ``detected`` not a bool, a measurement that is
        neither null nor ``{"value": finite, "error": finite >= 0 or null}``,
        ``state`` outside `STATES`, ``state_probability`` outside [0, 1],
        ``flags`` not a list of strings, ``provenance`` without the keys of
        `PROVENANCE_KEYS`, ``details`` not an object.

    Examples
    --------
    >>> validate_result_dict(StarResult(id="star-1", detected=False).to_dict())
    """
    problems = _schema_problems(data)
    if problems:
        raise OptionError("result does not follow the schema: " + "; ".join(problems))
