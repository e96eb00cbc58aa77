"""Command line and pipeline wiring of the structure interface: model, tracks, --grid.

Frequencies are checked against the closed form of Pekeris (1938) as written in
REFERENCES.md §8b (CALC there); the rest is behaviour (exit codes, files, flags).
"""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
from astropy.table import Table

from seismo.cli import main
from seismo.cli_structure import order_flags
from seismo.config import AnalysisConfig, GridOptions
from seismo.errors import MissingFileError, OptionError
from seismo.structure import polytrope, seismic_observables
from seismo.structure.builtin import builtin_model
from seismo.structure.constants import M_SUN_G, R_SUN_CM
from seismo.survey import load_config, open_ledger, run_survey, write_catalog

DEMO = Path(__file__).resolve().parent.parent / "demo_lightcurves"


def _pekeris(n: int, l: int, gamma1: float = 5.0 / 3.0) -> float:
    # Pekeris 1938 via REFERENCES.md §8b (CALC): D = Γ1 n(2n+2l+1) − 4, σ² = D/2 + √(D²/4 + L)
    d = gamma1 * n * (2 * n + 2 * l + 1) - 4.0
    return d / 2.0 + math.sqrt(d * d / 4.0 + l * (l + 1))


def test_model_json_modes_of_the_homogeneous_sphere(capsys):
    assert main(["model", "homogeneous", "--modes", "0,1,2", "--fmax", "500", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    modes = out["modes"]
    assert {m["l"] for m in modes} == {0, 1, 2}
    for m in modes:
        assert set(m) >= {"l", "n", "frequency"}
        if m["n"] >= 1:
            expected = _pekeris(m["n"], m["l"])
            assert m["sigma2"] == pytest.approx(expected, rel=1e-4)
        elif m["l"] >= 2:  # the Kelvin f mode, σ² = 2l(l−1)/(2l+1) (REFERENCES.md §8b)
            assert m["sigma2"] == pytest.approx(2 * m["l"] * (m["l"] - 1) / (2 * m["l"] + 1),
                                                rel=1e-4)
    # ν = σ √(GM/R³) / 2π for the 1 M☉, 1 R☉ sphere (definition of σ)
    dyn = math.sqrt(6.67430e-8 * M_SUN_G / R_SUN_CM**3)
    for m in modes:
        assert m["frequency"] == pytest.approx(math.sqrt(m["sigma2"]) * dyn / (2 * math.pi) * 1e6,
                                               rel=1e-9)
    assert out["observables"]["dpi1"] is None  # N² < 0 everywhere: no buoyancy cavity
    assert out["mode_flags"] == []


def test_model_text_of_a_polytrope(capsys):
    assert main(["model", "polytrope:3,mass=1.2,radius=8", "--teff", "4800"]) == 0
    text = capsys.readouterr().out
    obs = seismic_observables(polytrope(3, 1.2, 8.0), teff=4800.0)
    assert f"{obs.dnu_asym:.5g} μHz" in text
    assert f"{obs.dpi1:.5g} s" in text
    assert f"{obs.numax:.5g} μHz" in text


def test_model_reads_a_profile_file_with_a_column_mapping(tmp_path, capsys):
    p = polytrope(1.5, 1.0, 2.0, points=801)
    table = Table({"radius_cm": p.r, "mass_g": p.m, "density": p.rho, "pressure": p.p,
                   "gamma1": p.gamma1})
    table.meta = {"mass": p.mass, "radius": p.radius}
    path = tmp_path / "model.ecsv"
    table.write(path)
    argv = ["model", str(path), "--json", "--column", "r=radius_cm", "--column", "m=mass_g",
            "--column", "rho=density", "--column", "p=pressure"]
    assert main(argv) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["observables"]["dnu_asym"] == pytest.approx(seismic_observables(p).dnu_asym,
                                                           rel=1e-3)


@pytest.mark.parametrize("argv, status, words", [
    (["model", "cepheid:2"], 1, "no such profile file"),
    (["model", "polytrope:7"], 2, "0 <= n"),
    (["model", "polytrope:3,foo=1"], 2, "no setting 'foo'"),
    (["model", "polytrope:3", "--modes", "zero"], 2, "--modes"),
    (["model", "polytrope:3", "--modes", "1", "--fmin", "0.5", "--fmax", "300",
      "--max-modes", "5"], 2, "modes"),
    (["model", "some.ecsv", "--column", "nonsense"], 2, "OURS=THEIRS"),
    (["model", "polytrope:3", "--column", "r=x"], 2, "apply to profile files"),
    (["tracks", "demo", "--catalog", "nowhere.ecsv", "--plot", "x.png"], 1, "catalog not found"),
])
def test_structure_command_errors(argv, status, words, capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(argv) == status
    err = capsys.readouterr().err
    assert err.startswith("seismo: error:") and words in err
    assert len(err.strip().splitlines()) == 1


def test_builtin_models_by_name():
    p = builtin_model("polytrope:n=2,mass=1.5,radius=5/2")
    assert p.mass / M_SUN_G == pytest.approx(1.5) and p.radius / R_SUN_CM == pytest.approx(2.5)
    assert p.meta["n"] == 2
    with pytest.raises(OptionError):
        builtin_model("polytrope")
    with pytest.raises(OptionError):
        builtin_model("homogeneous:mass=heavy")


def test_order_flags_catch_labels_out_of_frequency_order():
    def mode(l, n, f):
        return SimpleNamespace(l=l, n=n, frequency=f)

    good = [mode(1, -2, 10.0), mode(1, -1, 20.0), mode(1, 1, 30.0), mode(0, 1, 5.0)]
    assert order_flags(good) == []
    bad = good + [mode(1, -40, 25.0)]
    assert order_flags(bad) == ["modes_l1_order_unreliable"]


def test_tracks_demo_over_a_catalog(tmp_path, capsys):
    catalog = Table({"dnu": [4.1, 7.5, 12.0], "dpi1": [300.0, 200.0, 80.0],
                     "numax": [40.0, 90.0, 150.0], "state": ["RC", "2CL", "RGB"]})
    catalog.write(tmp_path / "cat.ecsv")
    figure = tmp_path / "tracks.png"
    assert main(["tracks", "demo", "--catalog", str(tmp_path / "cat.ecsv"),
                 "--plot", str(figure)]) == 0
    out = capsys.readouterr().out
    assert figure.stat().st_size > 10_000
    assert out.count("  track    ") == 3 and "(3 stars)" in out


def test_model_plot_without_modes(tmp_path, capsys):
    figure = tmp_path / "model.png"
    assert main(["model", "homogeneous", "--plot", str(figure)]) == 0
    assert f"  figure     {figure}" in capsys.readouterr().out
    assert figure.stat().st_size > 10_000


def test_model_plot_with_modes_and_json(tmp_path, capsys):
    figure = tmp_path / "sub" / "modes.png"
    argv = ["model", "polytrope:3", "--modes", "0,1", "--fmax", "700", "--plot", str(figure),
            "--json"]
    assert main(argv) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["figure"] == str(figure)
    assert figure.stat().st_size > 10_000


def test_model_json_without_plot_has_a_null_figure(capsys):
    assert main(["model", "polytrope:3", "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["figure"] is None


def test_model_plot_in_the_cowling_approximation(tmp_path, capsys):
    figure = tmp_path / "cowling.png"
    assert main(["model", "homogeneous", "--modes", "0,1", "--fmax", "800", "--cowling",
                 "--plot", str(figure)]) == 0
    assert figure.stat().st_size > 10_000


# --- grid-based estimates in the pipeline ----------------------------------------------------

def test_analyze_with_the_demo_grid(capsys):
    assert main(["analyze", str(DEMO / "HLD-0104.fits"), "--grid", "demo", "--json"]) == 0
    result = json.loads(capsys.readouterr().out)
    grid = result["details"]["grid"]
    truth = json.loads((DEMO / "HLD-0104.truth.json").read_text())
    # The demo grid and star are both invented; the check is that the stage runs on the
    # measured Δν, numax, ΔΠ1 and state and brackets the injected mass within a few bands.
    lo = grid["mass"]["value"] - 3 * max(grid["mass"]["err_lo"], 0.1)
    hi = grid["mass"]["value"] + 3 * max(grid["mass"]["err_hi"], 0.1)
    assert lo <= truth["mass"] <= hi
    assert grid["n_eff"] > 1
    assert "grid_teff_not_used" in result["flags"]
    assert "grid_outside" not in result["flags"]


def test_grid_options_enter_the_configuration_hash(tmp_path):
    plain = AnalysisConfig()
    with_grid = AnalysisConfig(grid=GridOptions(path="demo"))
    assert plain.hash() != with_grid.hash()
    assert "grid" not in plain.to_dict()  # runs without a grid keep their old hash
    copy = tmp_path / "grid.ecsv"
    shutil.copy(with_grid.grid.resolved_path(), copy)
    a = AnalysisConfig(grid=GridOptions(path=str(copy))).hash()
    copy.write_text(copy.read_text().replace("RGB", "RGB ", 1))
    assert AnalysisConfig(grid=GridOptions(path=str(copy))).hash() != a  # content changed
    with pytest.raises(MissingFileError):
        GridOptions(path=str(tmp_path / "missing.ecsv"))
    with pytest.raises(OptionError):
        GridOptions(path="demo", mass_prior="uniformish")


def test_survey_with_a_grid_writes_grid_columns(tmp_path):
    stars = tmp_path / "stars"
    stars.mkdir()
    shutil.copy(DEMO / "HLD-0104.fits", stars)
    shutil.copy(DEMO / "HLD-0105.txt", stars)
    config_file = tmp_path / "run.toml"
    config_file.write_text('[grid]\npath = "demo"\nmass_prior = "salpeter"\n')
    config = load_config(config_file)
    assert config.grid.mass_prior == "salpeter"
    catalog = tmp_path / "out" / "catalog.ecsv"
    run_survey(stars, tmp_path / "out", config, executor="serial", progress=False,
               catalog=catalog)
    table = Table.read(catalog)
    for name in ("grid_mass", "grid_mass_err_lo", "grid_mass_err_hi", "grid_age",
                 "grid_radius", "grid_logg", "grid_n_eff"):
        assert name in table.colnames
    by_id = {row["id"]: row for row in table}
    assert np.isfinite(by_id["HLD-0104"]["grid_mass"])
    assert str(table["grid_age"].unit) == "Gyr"
    assert not np.isfinite(by_id["HLD-0105"]["grid_mass"])  # no detection, no estimate
    # FITS holds no function units (dex): the log g columns go as plain numbers.
    with open_ledger(tmp_path / "out", readonly=True) as ledger:
        fits_path, _, n_stars, _ = write_catalog(ledger, tmp_path / "catalog.fits")
    fits = Table.read(fits_path)
    assert n_stars == 2 and fits["grid_logg"][0] == pytest.approx(by_id["HLD-0104"]["grid_logg"])
    assert str(fits["grid_age"].unit) == "Gyr"


def test_model_reports_the_profile_checks(capsys):
    # Closed form: the homogeneous sphere has m = 4/3 π r³ ρ and p = (2π/3)Gρ²(R² − r²)
    # exactly, so both consistency checks are at round-off level (CALC).
    assert main(["model", "homogeneous", "--json"]) == 0
    checks = json.loads(capsys.readouterr().out)["profile_check"]
    assert checks["mass_mismatch"] < 1e-10
    assert checks["hydrostatic_median"] < 1e-8
    assert checks["warnings"] == []
