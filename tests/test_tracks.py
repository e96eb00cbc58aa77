"""Tracks read from profile folders and from tables, and the track figure."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from seismo.errors import ColumnError, MissingFileError, OptionError
from seismo.structure import composite_polytrope, polytrope
from seismo.structure.observables import seismic_observables
from seismo.structure.tracks import (
    Track,
    read_track_table,
    read_tracks,
    track_from_profiles,
    tracks_table,
)

#: (radius R☉, core mass fraction, Teff K, age yr) of an illustrative ascending sequence.
_SEQUENCE = [(6.0, 0.18, 4900.0, 4.1e9), (8.0, 0.22, 4800.0, 4.3e9), (11.0, 0.27, 4700.0, 4.4e9)]


def _write_profile(path: Path, profile, teff: float, age: float) -> None:
    from astropy.table import Table

    table = Table({"r": profile.r, "m": profile.m, "rho": profile.rho, "p": profile.p,
                   "gamma1": profile.gamma1, "n2": profile.n2})
    table.meta.update({"mass": profile.mass, "radius": profile.radius, "teff": teff,
                       "age": age})
    table.write(path, format="ascii.ecsv", overwrite=True)


@pytest.fixture(scope="module")
def sequence():
    return [composite_polytrope(1.2, radius, core_mass_fraction=cmf, points=801)
            for radius, cmf, _, _ in _SEQUENCE]


@pytest.fixture(scope="module")
def profile_folder(tmp_path_factory, sequence):
    folder = tmp_path_factory.mktemp("track_1p2")
    # File names deliberately out of age order: the track must sort by age.
    for name, model, (_, _, teff, age) in zip(("c.ecsv", "a.ecsv", "b.ecsv"), sequence,
                                              _SEQUENCE, strict=True):
        _write_profile(folder / name, model, teff, age)
    return folder


def test_track_from_profile_folder_is_in_age_order_and_matches_observables(
        profile_folder, sequence):
    # CALC: each model's values equal seismic_observables of the profile itself
    track = track_from_profiles(profile_folder)
    assert len(track) == 3 and track.label == profile_folder.name
    assert np.all(np.diff(track.age) > 0) and track.meta["order"] == "age"
    assert track.dnu_kind == "asymptotic"
    for i, (model, (radius, _, teff, age)) in enumerate(zip(sequence, _SEQUENCE, strict=True)):
        obs = seismic_observables(model, teff=teff)
        assert track.age[i] == pytest.approx(age)
        assert track.radius[i] == pytest.approx(radius, rel=1e-9)
        assert track.dnu[i] == pytest.approx(obs.dnu_asym, rel=1e-9)
        assert track.dpi1[i] == pytest.approx(obs.dpi1, rel=1e-9)
        assert track.numax[i] == pytest.approx(obs.numax, rel=1e-9)
    # the illustrative models climb the RGB: Δν falls and numax falls with age
    assert np.all(np.diff(track.dnu) < 0) and np.all(np.diff(track.numax) < 0)
    assert np.all(track.state == "unknown")


def test_track_from_a_list_of_files_and_missing_folder(profile_folder, tmp_path):
    files = sorted(profile_folder.glob("*.ecsv"))
    track = track_from_profiles(files, label="listed")
    assert track.label == "listed" and np.all(np.diff(track.age) > 0)
    with pytest.raises(MissingFileError, match="no such folder"):
        track_from_profiles(tmp_path / "absent")
    with pytest.raises(MissingFileError, match="no profile files matching"):
        track_from_profiles(tmp_path, pattern="*.ecsv")


def _two_track_table():
    rng = np.random.default_rng(3)
    rows = []
    for label, mass, offset in (("1.0 Msun", 1.0, 0.0), ("2.0 Msun", 2.0, 1.0)):
        ages = np.sort(rng.uniform(1e9, 2e9, 5)) + offset * 1e9
        for k in rng.permutation(5):  # rows shuffled within the file
            rows.append((label, k, ages[k], mass, 8.0 + k, 4800.0 - 30 * k,
                         mass * (60.0 - 8 * k), mass * (6.0 - 0.6 * k), 80.0 - 3 * k, 0.12,
                         "RGB"))
    return rows


def _write_table(path: Path, rows, units: bool) -> None:
    import astropy.units as u
    from astropy.table import QTable

    cols = list(zip(*rows, strict=True))
    table = QTable()
    table["track"] = np.array(cols[0])
    table["model"] = np.array(cols[1])
    unit = {"age": u.yr, "mass": u.Msun, "radius": u.Rsun, "teff": u.K, "numax": u.uHz,
            "dnu": u.uHz, "dpi1": u.s}
    for i, name in enumerate(("age", "mass", "radius", "teff", "numax", "dnu", "dpi1"), 2):
        values = np.array(cols[i], dtype=float)
        table[name] = values * unit[name] if units else values
    table["q"] = np.array(cols[9])
    table["state"] = np.array(cols[10])
    if path.suffix == ".csv":
        table.write(path, format="ascii.csv", overwrite=True)
    else:
        table.write(path, overwrite=True)


@pytest.mark.parametrize("suffix,units", [(".ecsv", True), (".csv", False), (".fits", True)])
def test_table_with_two_tracks_is_split_and_sorted(tmp_path, suffix, units):
    # common practice: one row per model, a label column names the track
    rows = _two_track_table()
    path = tmp_path / f"grid{suffix}"
    _write_table(path, rows, units)
    tracks = read_track_table(path)
    assert [t.label for t in tracks] == ["1.0 Msun", "2.0 Msun"]
    for track in tracks:
        assert len(track) == 5 and np.all(np.diff(track.age) > 0)
        assert np.array_equal(track.model, np.arange(5))  # ages were drawn sorted by model
        assert np.allclose(track.dnu, track.mass * (6.0 - 0.6 * track.model))
        assert np.all(track.state == "RGB") and track.dnu_kind == "table"
    assert tracks[1].mass[0] == pytest.approx(2.0)


def test_table_units_are_converted_and_columns_can_be_mapped(tmp_path):
    import astropy.units as u
    from astropy.table import QTable

    table = QTable()
    table["star_age"] = np.array([2.0, 1.0]) * u.Gyr
    table["Dnu"] = np.array([4.0, 5.0]) * u.mHz / 1000.0
    table["DeltaPi1"] = np.array([1.2, 1.3]) * u.min
    path = tmp_path / "mapped.ecsv"
    table.write(path)
    (track,) = read_track_table(path, columns={"age": "star_age", "dpi1": "DeltaPi1"})
    # closed form unit conversions; 'Dnu' is found case-insensitively
    assert np.allclose(track.age, [1e9, 2e9])
    assert np.allclose(track.dnu, [5.0, 4.0])
    assert np.allclose(track.dpi1, [78.0, 72.0])
    assert track.label == "mapped" and np.all(np.isnan(track.mass))
    with pytest.raises(OptionError, match="unknown keys"):
        read_track_table(path, columns={"Age": "star_age"})
    with pytest.raises(ColumnError, match="is not in the table"):
        read_track_table(path, columns={"age": "nope"})
    bad = QTable({"age": [1.0, 2.0], "numax": [1.0, 2.0]})
    bad.write(tmp_path / "bad.ecsv")
    with pytest.raises(ColumnError, match="needs 'dnu'"):
        read_track_table(tmp_path / "bad.ecsv")
    wrong = QTable({"age": [1.0, 2.0] * u.yr, "dnu": [1.0, 2.0] * u.s})
    wrong.write(tmp_path / "wrong.ecsv")
    with pytest.raises(ColumnError, match="does not convert"):
        read_track_table(tmp_path / "wrong.ecsv")


def test_read_tracks_takes_folders_and_tables_and_round_trips(tmp_path, profile_folder):
    rows = _two_track_table()
    table_path = tmp_path / "grid.ecsv"
    _write_table(table_path, rows, True)
    tracks = read_tracks([profile_folder, table_path])
    assert [t.label for t in tracks] == [profile_folder.name, "1.0 Msun", "2.0 Msun"]
    out = tmp_path / "back.ecsv"
    tracks_table(tracks).write(out)
    again = read_track_table(out)
    assert [t.label for t in again] == [t.label for t in tracks]
    for a, b in zip(tracks, again, strict=True):
        assert np.allclose(a.dnu, b.dnu) and np.allclose(a.age, b.age)
        assert np.allclose(a.dpi1, b.dpi1, equal_nan=True)


def test_track_without_ages_is_ordered_by_model_number():
    track = Track(label="x", model=[2, 0, 1], age=[np.nan] * 3, mass=[1.0] * 3,
                  radius=[1.0] * 3, teff=[1.0] * 3, numax=[1.0] * 3, dnu=[3.0, 1.0, 2.0],
                  dpi1=[1.0] * 3, q=[0.1] * 3, state=["RGB"] * 3)
    assert np.array_equal(track.dnu, [1.0, 2.0, 3.0]) and "model number" in track.meta["order"]


def test_plot_tracks_writes_a_png(tmp_path, profile_folder):
    from astropy.table import Table

    from seismo.structure.figures import plot_tracks

    rng = np.random.default_rng(7)
    n_rgb, n_rc = 2500, 900  # RGB above the density threshold, RC as markers
    dnu = np.concatenate([rng.uniform(3.5, 16, n_rgb), rng.normal(4.1, 0.4, n_rc)])
    dpi1 = np.concatenate([60 + 2.0 * dnu[:n_rgb] + rng.normal(0, 4, n_rgb),
                           rng.normal(300, 25, n_rc)])
    numax = (dnu / 0.263) ** (1 / 0.772) * rng.lognormal(0, 0.05, dnu.size)
    catalog = Table({"dnu": dnu, "dpi1": dpi1, "numax": numax,
                     "state": np.array(["RGB"] * n_rgb + ["RC"] * n_rc)})
    catalog_path = tmp_path / "catalog.ecsv"
    catalog.write(catalog_path)
    tracks = [track_from_profiles(profile_folder, label="composite 1.2 M☉")]
    tracks += read_track_table(_make_grid(tmp_path))
    out = plot_tracks(tracks, catalog_path, path=tmp_path / "tracks.png")
    assert out.exists() and out.stat().st_size > 30_000
    # also without a catalog
    bare = plot_tracks(tracks[:1], path=tmp_path / "bare.png")
    assert bare.exists()


def _make_grid(tmp_path: Path) -> Path:
    path = tmp_path / "grid_for_figure.ecsv"
    _write_table(path, _two_track_table(), True)
    return path


def test_polytrope_profiles_without_teff_give_nan_numax(tmp_path):
    # a profile without Teff or L: numax is null, so the track holds NaN there
    folder = tmp_path / "bare"
    folder.mkdir()
    from astropy.table import Table

    for i, radius in enumerate((5.0, 6.0)):
        model = polytrope(3.0, 1.0, radius, points=201)
        table = Table({"r": model.r, "m": model.m, "rho": model.rho, "p": model.p,
                       "gamma1": model.gamma1})
        table.meta.update({"mass": model.mass, "radius": model.radius, "age": 1e9 * (i + 1)})
        table.write(folder / f"m{i}.ecsv")
    track = track_from_profiles(folder)
    assert np.all(np.isnan(track.numax)) and np.all(np.isfinite(track.dnu))
