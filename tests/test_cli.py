"""Command line: analyze on the demo stars, simulate, python -m seismo."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from seismo import __version__
from seismo.cli import main
from seismo.results import SCHEMA_FIELDS, validate_result_dict

DEMO = Path(__file__).resolve().parent.parent / "demo_lightcurves"


def test_analyze_json_follows_the_schema(capsys):
    status = main(["analyze", str(DEMO / "HLD-0104.fits"), "--json", "--teff", "4900"])
    out = capsys.readouterr().out
    assert status == 0
    assert len(out.strip().splitlines()) == 1  # only the JSON object on stdout
    result = json.loads(out)
    validate_result_dict(result)  # the DESIGN.md schema (common practice: stable schema)
    assert list(result)[: len(SCHEMA_FIELDS)] == list(SCHEMA_FIELDS)
    assert result["id"] == "HLD-0104"
    assert result["detected"] is True
    for name in ("numax", "dnu", "eps_p", "dpi1", "q", "mass", "radius", "logg"):
        assert set(result[name]) == {"value", "error"}
    truth = json.loads((DEMO / "HLD-0104.truth.json").read_text())
    assert result["dpi1"]["value"] == pytest.approx(truth["dpi1"], rel=0.02)
    assert result["state"] == truth["state"] == "2CL"
    assert result["state_probability"] > 0.9
    assert result["provenance"]["version"] == __version__
    assert result["provenance"]["input_checksum"].startswith("sha256:")
    assert len(result["provenance"]["config_hash"]) == 16


def test_noise_only_star_is_reported_as_not_detected(capsys):
    status = main(["analyze", str(DEMO / "HLD-0105.txt"), "--json"])
    result = json.loads(capsys.readouterr().out)
    assert status == 0
    assert result["detected"] is False
    assert all(result[name] is None for name in ("numax", "dnu", "eps_p", "mass", "radius"))
    assert any(flag.startswith("no_detection") for flag in result["flags"])


def test_sector_star_summary(capsys):
    status = main(["analyze", str(DEMO / "HLD-0106.csv"), "--json"])
    result = json.loads(capsys.readouterr().out)
    assert status == 0
    lc = result["details"]["lightcurve"]
    # 30-min cadence: Nyquist 277.78 μHz; 27.4-d sector: 1/T ≈ 0.42 μHz (REFERENCES.md §9).
    assert lc["nyquist_uhz"] == pytest.approx(277.78, abs=0.01)
    assert lc["resolution_uhz"] == pytest.approx(0.42, abs=0.01)
    assert "dnu_low_resolution" in result["flags"]


def test_human_summary_states_the_scaling_bias(capsys):
    assert main(["analyze", str(DEMO / "HLD-0102.fits"), "--teff", "4800"]) == 0
    out = capsys.readouterr().out
    assert "numax" in out and "overestimate" in out


def test_analyze_folder_writes_one_figure_per_star(tmp_path, capsys):
    status = main(["analyze", str(DEMO), "--plot", str(tmp_path)])
    out = capsys.readouterr().out
    assert status == 0
    stars = sorted(p.stem for p in tmp_path.glob("*.png"))
    assert stars == [f"HLD-010{i}" for i in range(1, 7)]
    assert all((tmp_path / f"{s}.png").stat().st_size > 20_000 for s in stars)
    assert out.count("figure") == 6


def test_simulate_then_analyze(tmp_path, capsys):
    target = tmp_path / "mystar.fits"
    assert main(["simulate", str(target), "--preset", "rgb-high", "--observation",
                 "sector-2min", "--seed", "4"]) == 0
    assert target.exists() and (tmp_path / "mystar.truth.json").exists()
    truth = json.loads((tmp_path / "mystar.truth.json").read_text())
    assert truth["id"] == "mystar"
    capsys.readouterr()
    assert main(["analyze", str(target), "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    assert result["id"] == "mystar"
    assert result["details"]["lightcurve"]["cadence_min"] == pytest.approx(2.0, rel=1e-6)


def test_simulate_numax_override_rederives_dnu(tmp_path, capsys):
    target = tmp_path / "s.csv"
    assert main(["simulate", str(target), "--preset", "clump", "--numax", "100",
                 "--observation", "sector-30min", "--seed", "1"]) == 0
    truth = json.loads((tmp_path / "s.truth.json").read_text())
    # Δν from numax by Stello et al. 2009: 0.263·100^0.772 = 9.204 μHz (REFERENCES.md §3a, CALC)
    assert truth["dnu"] == pytest.approx(9.204, rel=1e-3)


def test_python_dash_m_and_version():
    result = subprocess.run([sys.executable, "-m", "seismo", "--version"], capture_output=True,
                            text=True, check=False)
    assert result.returncode == 0
    assert __version__ in result.stdout


def test_no_command_prints_help(capsys):
    assert main([]) == 2
    assert "analyze" in capsys.readouterr().out


def test_summary_shows_tied_dpi1_solutions_only_without_dpi1():
    # Common practice: a withheld value is shown with the reason it was withheld.
    from types import SimpleNamespace

    from seismo.cli import _rivals_text
    from seismo.results import Measurement

    mixed = {"dpi1_rivals": [{"value": 245.04, "error": 0.1}, {"value": 241.65, "error": 0.2}]}
    tied = SimpleNamespace(dpi1=None, details={"mixed": mixed})
    assert _rivals_text(tied) == " (candidate values: 245.0, 241.7 s)"
    measured = SimpleNamespace(dpi1=Measurement(245.0, 0.1), details={"mixed": mixed})
    assert _rivals_text(measured) == ""
    assert _rivals_text(SimpleNamespace(dpi1=None, details={})) == ""
