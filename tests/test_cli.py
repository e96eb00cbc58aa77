"""Command line: analyze on the demo stars, simulate, python -m seismo."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from seismo import __version__
from seismo.cli import main

DEMO = Path(__file__).resolve().parent.parent / "demo_lightcurves"


def test_analyze_demo_star_json(capsys):
    status = main(["analyze", str(DEMO / "HLD-0106.csv"), "--json"])
    out = capsys.readouterr().out
    assert status == 0
    summary = json.loads(out)
    assert summary["id"] == "HLD-0106"
    assert summary["provenance"]["version"] == __version__
    assert summary["provenance"]["input_checksum"].startswith("sha256:")
    # 30-min cadence: Nyquist 277.78 μHz; 27.4-d sector: 1/T ≈ 0.42 μHz (REFERENCES.md §9).
    assert summary["nyquist_uhz"] == pytest.approx(277.78, abs=0.01)
    assert summary["resolution_uhz"] == pytest.approx(0.42, abs=0.01)


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
    summary = json.loads(capsys.readouterr().out)
    assert summary["id"] == "mystar"
    assert summary["cadence_min"] == pytest.approx(2.0, rel=1e-6)


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
