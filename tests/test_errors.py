"""Bad input: each case raises its documented error, and the command line prints one
line naming the file, exits non-zero and shows no traceback."""

from __future__ import annotations

import numpy as np
import pytest
from conftest import LONG_CADENCE_DAYS, kepler_like_times, write_csv, write_fits

from seismo import errors
from seismo.cli import main
from seismo.pipeline import prepare


def _missing(tmp_path):
    return tmp_path / "nowhere.fits"


def _corrupt_fits(tmp_path):
    good = write_fits(tmp_path / "good.fits", {"TIME": np.arange(10.0), "FLUX": np.ones(10)})
    data = good.read_bytes()
    path = tmp_path / "corrupt.fits"
    path.write_bytes(data[: len(data) // 2 + 100])  # truncated download
    return path


def _fits_image(tmp_path):
    from astropy.io import fits

    path = tmp_path / "image.fits"
    fits.PrimaryHDU(np.zeros((8, 8))).writeto(path)
    return path


def _binary_garbage(tmp_path):
    path = tmp_path / "photo.dat"
    path.write_bytes(bytes(range(256)) * 40)
    return path


def _empty(tmp_path):
    path = tmp_path / "empty.csv"
    path.write_text("")
    return path


def _no_columns(tmp_path):
    t = kepler_like_times(30.0)
    return write_csv(tmp_path / "cols.csv", {"alpha": t, "beta": np.sin(t)})


def _all_nan(tmp_path):
    t = kepler_like_times(30.0)
    return write_csv(tmp_path / "nan.csv", {"time": t, "flux": np.full(t.size, np.nan)})


def _few_points(tmp_path, rng):
    t = np.arange(150) * 0.2
    return write_csv(tmp_path / "few.csv", {"time": t, "flux": 1e4 + rng.normal(0, 1, t.size)})


def _short_baseline(tmp_path, rng):
    t = np.arange(1000) * 1.0 / 1440.0  # 1000 one-minute cadences: 0.7 d
    return write_csv(tmp_path / "short.csv", {"time": t, "flux": 1e4 + rng.normal(0, 1, t.size)})


def _seconds(tmp_path, rng):
    t = kepler_like_times(60.0) * 86400.0  # times in seconds, labelled as nothing
    return write_csv(tmp_path / "secs.csv", {"time": t, "flux": 1e4 + rng.normal(0, 1, t.size)})


def _constant(tmp_path):
    t = kepler_like_times(30.0)
    return write_csv(tmp_path / "flat.csv", {"time": t, "flux": np.full(t.size, 1234.5)})


def _all_flagged(tmp_path, rng):
    t = kepler_like_times(30.0)
    return write_fits(tmp_path / "flagged.fits", {
        "TIME": t, "FLUX": 1e4 + rng.normal(0, 1, t.size),
        "QUALITY": np.full(t.size, 16, dtype=np.int32)})


CASES = [
    ("missing file", _missing, errors.MissingFileError, "file not found"),
    ("corrupt FITS", _corrupt_fits, errors.UnreadableFileError, "not a readable FITS"),
    ("FITS without a table", _fits_image, errors.UnreadableFileError, "no table extension"),
    ("not a light curve", _binary_garbage, errors.UnreadableFileError, "not a text table"),
    ("empty file", _empty, errors.UnreadableFileError, "empty"),
    ("no time/flux column", _no_columns, errors.ColumnError, "no recognisable time column"),
    ("all NaN", _all_nan, errors.NoFiniteDataError, "NaN"),
    ("all flagged", _all_flagged, errors.NoFiniteDataError, "quality flag"),
    ("too few points", _few_points, errors.TooFewPointsError, "only 150 valid points"),
    ("short baseline", _short_baseline, errors.BaselineTooShortError, "baseline is 0.69"),
    ("times in seconds", _seconds, errors.TimeUnitError, "do not look like days"),
    ("constant flux", _constant, errors.ConstantFluxError, "constant"),
]


def _build(builder, tmp_path, rng):
    try:
        return builder(tmp_path, rng)
    except TypeError:
        return builder(tmp_path)


@pytest.mark.parametrize(("name", "builder", "error", "text"), CASES, ids=[c[0] for c in CASES])
def test_bad_input_raises_documented_error(tmp_path, rng, name, builder, error, text):
    path = _build(builder, tmp_path, rng)
    with pytest.raises(error, match=text) as info:
        prepare(path)
    assert isinstance(info.value, errors.InputError)
    assert str(path) in str(info.value)
    assert info.value.hint  # every error says what to do


@pytest.mark.parametrize(("name", "builder", "error", "text"), CASES, ids=[c[0] for c in CASES])
def test_cli_prints_one_line_and_exits_nonzero(tmp_path, rng, capsys, name, builder, error, text):
    path = _build(builder, tmp_path, rng)
    status = main(["analyze", str(path)])
    captured = capsys.readouterr()
    assert status == 1
    lines = [line for line in captured.err.splitlines() if line.startswith("seismo: error")]
    assert len(lines) == 1
    assert str(path) in lines[0] and text.split()[0] in lines[0]
    assert "Traceback" not in captured.err
    assert captured.out == ""


def test_cli_keeps_going_after_a_bad_file(tmp_path, rng, capsys):
    t = np.arange(0, 20, LONG_CADENCE_DAYS)
    good = write_csv(tmp_path / "good.csv", {"time": t, "flux": 1e5 + rng.normal(0, 30, t.size)})
    bad = _constant(tmp_path)
    status = main(["analyze", str(bad), str(good)])
    captured = capsys.readouterr()
    assert status == 1
    assert "good" in captured.out  # the good star is still summarised
    assert captured.err.count("seismo: error") == 1


def test_error_message_is_single_line_with_hint():
    err = errors.ColumnError("no recognisable\nflux column", path="a.fits",
                             hint="use --flux-column")
    assert str(err) == "a.fits: no recognisable flux column; use --flux-column"


def test_usage_errors_exit_with_two(capsys):
    with pytest.raises(SystemExit) as info:
        main(["analyze", "x.csv", "--method", "wavelet"])
    assert info.value.code == 2
    assert main(["analyze", "x.csv", "--oversample", "0.1"]) == 2
    assert "oversample" in capsys.readouterr().err
