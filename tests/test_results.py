"""Tests of seismo.results: the stable result schema of DESIGN.md.

Schema stability (exact keys, their order and JSON types) is common practice
for output that pipelines parse.
"""

from __future__ import annotations

import copy
import dataclasses
import json
import pickle

import numpy as np
import pytest

from seismo import results
from seismo.errors import OptionError
from seismo.results import (
    EXTRA_FIELDS,
    PROVENANCE_KEYS,
    SCHEMA_FIELDS,
    Measurement,
    StarResult,
    validate_result_dict,
)

# The key list of DESIGN.md "Result schema", in its order (common practice: schema stability).
DESIGN_KEYS = (
    "id", "detected", "numax", "dnu", "eps_p", "dpi1", "q", "mass", "radius", "logg",
    "state", "state_probability", "flags", "provenance",
)


def _full_result() -> StarResult:
    return StarResult(
        id="halden-3",
        detected=True,
        numax=Measurement(30.1, 0.5),
        dnu=Measurement(4.02, 0.01),
        eps_p=Measurement(0.95, 0.03),
        dpi1=Measurement(75.2, 1.1),
        q=Measurement(0.14, None),
        mass=Measurement(np.float64(1.1), 0.1),
        radius=Measurement(10.2, 0.3),
        logg=Measurement(2.38, 0.01),
        state="RGB",
        state_probability=0.93,
        flags=["rot_core: not measured"],
        provenance={"version": "0.1.0", "config_hash": "abc123", "input_checksum": "f00d"},
        eps_g=Measurement(0.28, 0.05),
        details={"density": Measurement(0.00123, 1e-5), "background": np.array([1.0, np.nan]),
                 "n": np.int64(3)},
    )


def test_schema_fields_are_the_design_keys():
    assert SCHEMA_FIELDS == DESIGN_KEYS
    assert EXTRA_FIELDS == ("eps_g", "rot_core", "details")
    assert tuple(StarResult(id="a", detected=False).to_dict()) == DESIGN_KEYS + EXTRA_FIELDS


def test_json_round_trip():
    result = _full_result()
    text = result.to_json()
    # Strict JSON: no NaN/Infinity tokens (common practice for machine-read output).
    parsed = json.loads(text, parse_constant=lambda c: pytest.fail(f"non-JSON constant {c}"))
    validate_result_dict(parsed)
    back = StarResult.from_json(text)
    assert back == result
    assert back.flags == ("rot_core: not measured",)
    assert back.details == {"density": {"value": 0.00123, "error": 1e-5},
                            "background": [1.0, None], "n": 3}
    assert back.to_dict() == parsed


def test_measurement_dict_and_nulls():
    assert Measurement(3.0, 0.1).to_dict() == {"value": 3.0, "error": 0.1}
    assert Measurement.from_dict({"value": 3.0, "error": None}) == Measurement(3.0)
    assert Measurement(3.0, float("nan")).error is None
    assert Measurement(3.0, float("inf")).error is None
    assert Measurement.or_none(float("nan"), 1.0) is None
    assert Measurement.or_none(None) is None
    assert Measurement.or_none(np.float32(2.5), 0.1) == Measurement(2.5, 0.1)
    assert type(Measurement(np.float64(2.0), np.float32(0.5)).error) is float
    out = StarResult(id="a", detected=False, state_probability=float("nan")).to_dict()
    assert out["numax"] is None and out["state_probability"] is None
    assert out["provenance"] == dict.fromkeys(PROVENANCE_KEYS)
    assert out["flags"] == []


@pytest.mark.parametrize(
    ("args", "match"),
    [
        ((float("nan"), 1.0), r"value must be a finite real number; got nan"),
        ((float("inf"),), r"value must be a finite real number; got inf"),
        ((True, 1.0), r"value must be a finite real number; got True"),
        (("3", 1.0), r"value must be a finite real number; got '3'"),
        ((3.0, -0.1), r"error must be >= 0 or None; got -0\.1"),
        ((3.0, "0.1"), r"error must be a real number >= 0 or None; got '0\.1'"),
    ],
)
def test_measurement_refuses(args, match):
    with pytest.raises(OptionError, match=match):
        Measurement(*args)


def test_measurement_from_dict_refuses():
    with pytest.raises(OptionError, match=r"keys \['error', 'value'\]; got \['value'\]"):
        Measurement.from_dict({"value": 1.0})
    with pytest.raises(OptionError, match="value null"):
        Measurement.from_dict({"value": None, "error": 1.0})


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"state": "AGB"}, r"state must be one of \['RGB', 'RC', '2CL', 'unknown'\]; got 'AGB'"),
        ({"state_probability": 1.5}, r"state_probability must be in \[0, 1\]; got 1\.5"),
        ({"state_probability": "high"}, r"state_probability must be a number"),
        ({"flags": "no_dnu"}, r"flags must be a tuple or list of strings; got str"),
        ({"flags": ["ok", 3]}, r"flags must be non-empty strings; got \[3\]"),
        ({"id": 1234}, r"id must be a string; got int 1234"),
        ({"detected": "yes"}, r"detected must be True or False; got 'yes'"),
        ({"numax": {"value": 30.0, "error": 1.0}},
         r"numax must be a Measurement or None; got dict"),
        ({"rot_core": 0.3}, r"rot_core must be a Measurement or None; got float"),
        ({"provenance": ["v"]}, r"provenance must be a dict; got list"),
        ({"details": {"fit": object()}}, r"details\['fit'\] must hold JSON-compatible values"),
        ({"details": {1: 2}}, r"details keys must be strings; got int key 1"),
    ],
)
def test_star_result_validation(kwargs, match):
    # STYLE lesson 7: messages name the field, the expectation and what arrived.
    args = {"id": "a", "detected": True, **kwargs}
    with pytest.raises(OptionError, match=match):
        StarResult(**args)


def test_pickle_and_copy():
    # Survey workers send results between processes (STYLE lesson 13).
    result = _full_result()
    assert pickle.loads(pickle.dumps(result)) == result
    assert copy.deepcopy(result) == result


def test_frozen_and_replace():
    result = _full_result()
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.state = "RC"
    assert result.replace(state="RC").state == "RC"
    with pytest.raises(OptionError, match="state must be one of"):
        result.replace(state="tip")
    assert "halden-3" in repr(result) and "numax=30.1 ± 0.5" in repr(result)


def test_provenance_keeps_extras_and_fills_keys():
    result = StarResult(id="a", detected=False, provenance={"seed": 7, "version": "0.1.0"})
    assert result.provenance == {"version": "0.1.0", "config_hash": None,
                                 "input_checksum": None, "seed": 7}


def test_from_dict_checks_keys():
    data = _full_result().to_dict()
    with pytest.raises(OptionError, match=r"unknown result keys \['nu_max'\]; allowed keys"):
        StarResult.from_dict({**data, "nu_max": None})
    short = {k: v for k, v in data.items() if k != "logg"}
    with pytest.raises(OptionError, match=r"missing the schema keys \['logg'\]"):
        StarResult.from_dict(short)
    stable_only = {k: data[k] for k in SCHEMA_FIELDS}
    back = StarResult.from_dict(stable_only)
    assert back.eps_g is None and back.details == {}
    with pytest.raises(OptionError, match=r"numax: a measurement must be a mapping"):
        StarResult.from_dict({**data, "numax": [30.0, 0.5]})


def test_renamed_field_machinery(monkeypatch):
    # STYLE lesson 5: an old name keeps working with a DeprecationWarning.
    monkeypatch.setitem(results._RENAMED_FIELDS, "nu_max", "numax")
    data = _full_result().to_dict()
    data["nu_max"] = data.pop("numax")
    with pytest.warns(DeprecationWarning, match="'nu_max' is deprecated"):
        back = StarResult.from_dict(data)
    assert back.numax == Measurement(30.1, 0.5)
    with pytest.warns(DeprecationWarning, match="use StarResult.numax"):
        assert back.nu_max == back.numax
    with pytest.raises(AttributeError):
        back.no_such_field  # noqa: B018


def test_validate_result_dict_accepts_and_reports():
    good = _full_result().to_dict()
    validate_result_dict(good)
    validate_result_dict(json.loads(json.dumps(good)))
    bad = dict(good)
    del bad["q"]
    bad["extra"] = 1
    bad["detected"] = 1
    bad["numax"] = {"value": None, "error": 1.0}
    bad["dnu"] = {"value": 4.0, "error": -1.0}
    bad["state"] = "rgb"
    bad["state_probability"] = 2.0
    bad["flags"] = "x"
    bad["provenance"] = {"version": "0.1.0"}
    with pytest.raises(OptionError) as info:
        validate_result_dict(bad)
    message = str(info.value)
    for text in ["missing keys ['q']", "unknown keys ['extra']", "detected must be true or false",
                 "numax.value must be a finite number", "dnu.error must be null or a finite",
                 "state must be one of", "state_probability must be null or a number in [0, 1]",
                 "flags must be a list", "provenance is missing the keys ['config_hash',"]:
        assert text in message
    with pytest.raises(OptionError, match="must be a JSON object; got list"):
        validate_result_dict([good])
