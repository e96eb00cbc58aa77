"""Readers: formats, column detection, quality masks, flux and time units."""

from __future__ import annotations

import numpy as np
import pytest
from conftest import kepler_like_times, write_csv, write_fits

from seismo.errors import ColumnError, OptionError
from seismo.lightcurve import LightCurve, ReadOptions, read_lightcurve
from seismo.lightcurve.readers import sniff_format


def test_fits_reader_picks_time_flux_error_quality(tmp_path, simple_series):
    t, counts, _ = simple_series
    quality = np.zeros(t.size, dtype=np.int32)
    quality[::97] = 8
    path = write_fits(
        tmp_path / "star.fits",
        {"TIME": t, "FLUX": counts, "FLUX_ERR": np.full(t.size, 4.0), "QUALITY": quality},
        {"TIME": "d", "FLUX": "e-/s"},
    )
    lc = read_lightcurve(path)
    assert sniff_format(path) == "fits"
    assert lc.meta["columns"] == {
        "time": "TIME", "flux": "FLUX", "error": "FLUX_ERR", "quality": "QUALITY",
        "segment": None,
    }
    assert lc.meta["n_flagged_dropped"] == int((quality != 0).sum())
    assert lc.n_points == t.size - int((quality != 0).sum())
    assert lc.meta["flux_assumed"] == "counts"
    assert lc.id == "TEST-STAR"
    # ppm about the median: (F/median - 1)·1e6, and errors scale the same way.
    expected = (counts[quality == 0] / np.median(counts[quality == 0]) - 1) * 1e6
    np.testing.assert_allclose(lc.flux, expected, rtol=0, atol=1e-6)
    np.testing.assert_allclose(lc.flux_err, 4.0 / np.median(counts[quality == 0]) * 1e6)


def test_quality_bitmask_keeps_unselected_bits(tmp_path, simple_series):
    t, counts, _ = simple_series
    quality = np.zeros(t.size, dtype=np.int32)
    quality[::50] = 1
    quality[1::50] = 4
    path = write_fits(tmp_path / "q.fits", {"TIME": t, "FLUX": counts, "QUALITY": quality})
    every = read_lightcurve(path)
    only_bit4 = read_lightcurve(path, quality_bitmask=4)
    none = read_lightcurve(path, quality_bitmask=0)
    assert every.n_points == t.size - int((quality != 0).sum())
    assert only_bit4.n_points == t.size - int((quality & 4 != 0).sum())
    assert none.n_points == t.size


def test_fits_picks_the_table_with_a_time_column(tmp_path, simple_series):
    from astropy.io import fits

    t, counts, _ = simple_series
    other = fits.BinTableHDU.from_columns(
        [fits.Column(name="APERTURE", format="D", array=np.arange(5.0))], name="APERTURE")
    lcext = fits.BinTableHDU.from_columns(
        [fits.Column(name="TIME", format="D", array=t),
         fits.Column(name="SAP_FLUX", format="D", array=counts),
         fits.Column(name="PDCSAP_FLUX", format="D", array=counts * 1.01),
         fits.Column(name="PDCSAP_FLUX_ERR", format="D", array=np.ones(t.size))],
        name="LIGHTCURVE")
    path = tmp_path / "two.fits"
    fits.HDUList([fits.PrimaryHDU(), other, lcext]).writeto(path)
    lc = read_lightcurve(path)
    # Two flux columns: the systematics-corrected one is preferred (documented rule).
    assert lc.meta["columns"]["flux"] == "PDCSAP_FLUX"
    assert lc.meta["columns"]["error"] == "PDCSAP_FLUX_ERR"
    assert lc.meta["hdu"] == "LIGHTCURVE"
    chosen = read_lightcurve(path, flux_column="sap_flux")
    assert chosen.meta["columns"]["flux"] == "SAP_FLUX"


def test_ambiguous_flux_columns_ask_for_an_option(tmp_path, simple_series):
    t, counts, _ = simple_series
    path = write_csv(tmp_path / "amb.csv", {"time": t, "flux_a": counts, "flux_b": counts})
    with pytest.raises(ColumnError, match="several candidate flux columns.*--flux-column"):
        read_lightcurve(path)
    assert read_lightcurve(path, flux_column="flux_b").meta["columns"]["flux"] == "flux_b"


def test_unknown_column_option_lists_available(tmp_path, simple_series):
    t, counts, _ = simple_series
    path = write_csv(tmp_path / "c.csv", {"time": t, "flux": counts})
    with pytest.raises(ColumnError, match=r"no column named 'nope'.*available columns"):
        read_lightcurve(path, flux_column="nope")


@pytest.mark.parametrize("header", [True, False])
def test_csv_with_and_without_header(tmp_path, simple_series, header):
    t, counts, _ = simple_series
    path = write_csv(tmp_path / "lc.csv", {"time": t, "flux": counts,
                                            "flux_err": np.ones(t.size)}, header=header)
    lc = read_lightcurve(path)
    assert lc.meta["format"] == "csv"
    assert lc.n_points == t.size
    assert lc.flux_err is not None


def test_whitespace_text_with_comment_header_and_four_columns(tmp_path, simple_series):
    t, counts, _ = simple_series
    quality = np.zeros(t.size)
    quality[:10] = 1
    data = np.column_stack([t, counts, np.ones(t.size), quality])
    path = tmp_path / "lc.txt"
    np.savetxt(path, data, header="time flux flux_err quality", fmt="%.10g")
    lc = read_lightcurve(path)
    assert lc.meta["format"] == "text"
    assert lc.meta["columns"]["quality"] == "quality"
    assert lc.n_points == t.size - 10


def test_headerless_text_with_five_columns_is_refused(tmp_path):
    path = tmp_path / "five.txt"
    np.savetxt(path, np.ones((400, 5)))
    with pytest.raises(ColumnError, match="2 to 4 columns"):
        read_lightcurve(path)


def test_ecsv_units_are_honoured(tmp_path, simple_series):
    import astropy.units as u
    from astropy.table import Table

    t, counts, signal = simple_series
    rel = (counts / counts.mean() - 1) * 1e3  # ppt
    tab = Table({"time": t * 86400.0 * u.s, "flux": rel * u.dimensionless_unscaled})
    tab["flux"].unit = "ppt"
    tab.meta["id"] = "ECSV-STAR"
    path = tmp_path / "lc.ecsv"
    tab.write(path, format="ascii.ecsv")
    lc = read_lightcurve(path)
    assert lc.meta["format"] == "ecsv"
    assert lc.id == "ECSV-STAR"
    np.testing.assert_allclose(lc.time, t, atol=1e-9)  # seconds converted to days
    np.testing.assert_allclose(lc.flux, rel * 1e3, rtol=1e-12)  # ppt → ppm
    assert lc.meta["flux_assumed"] == "relative (ppt)"


@pytest.mark.parametrize(
    ("transform", "label"),
    [
        (lambda x: 1.0 + 1e-6 * x, "normalised to 1"),
        (lambda x: 1e-6 * x, "relative (fractional)"),
        (lambda x: 1e-3 * x, "relative (ppt)"),
        (lambda x: x, "relative (ppm)"),
    ],
)
def test_flux_scale_inference(tmp_path, rng, transform, label):
    t = kepler_like_times(50.0)
    ppm = rng.normal(0.0, 300.0, t.size)
    path = write_csv(tmp_path / "f.csv", {"time": t, "flux": transform(ppm)})
    with pytest.warns(UserWarning) if "relative" in label else _nothing():
        lc = read_lightcurve(path)
    assert lc.meta["flux_assumed"] == label
    # Whatever the input scale, the result is the same series in ppm (about its median).
    np.testing.assert_allclose(lc.flux - np.median(lc.flux), ppm - np.median(ppm), atol=1e-3,
                               rtol=1e-3)


def test_explicit_flux_unit_overrides_inference(tmp_path, rng):
    t = kepler_like_times(50.0)
    path = write_csv(tmp_path / "f.csv", {"time": t, "flux": rng.normal(0, 0.5, t.size)})
    lc = read_lightcurve(path, flux_unit="ppm")
    assert lc.meta["flux_assumed"] == "relative (ppm)"
    assert np.std(lc.flux) < 1.0


def test_magnitudes_by_column_name(tmp_path, rng):
    t = kepler_like_times(50.0)
    mag = 11.0 + rng.normal(0, 1e-3, t.size)
    path = write_csv(tmp_path / "m.csv", {"time": t, "mag": mag})
    lc = read_lightcurve(path)
    assert lc.meta["flux_assumed"] == "magnitudes"
    # Brighter (smaller magnitude) means positive relative flux.
    assert np.corrcoef(lc.flux, -mag)[0, 1] > 0.999


def test_time_unit_option_converts(tmp_path, simple_series):
    t, counts, _ = simple_series
    path = write_csv(tmp_path / "s.csv", {"time": t * 24.0, "flux": counts})
    lc = read_lightcurve(path, time_unit="h")
    np.testing.assert_allclose(lc.time, t, rtol=1e-9)


def test_from_arrays_accepts_quantities_and_times():
    import astropy.units as u
    from astropy.time import Time

    t = np.linspace(0, 10, 500)
    lc = LightCurve.from_arrays(t * 24 * u.h, np.sin(t) * u.percent)
    np.testing.assert_allclose(lc.time, t)
    np.testing.assert_allclose(lc.flux, np.sin(t) * 1e4)
    lc2 = LightCurve.from_arrays(Time(2455000.0 + t, format="jd"), np.sin(t))
    np.testing.assert_allclose(lc2.time - 2455000.0, t, atol=1e-6)
    with pytest.raises(OptionError, match="dimensionless"):
        LightCurve.from_arrays(t, np.sin(t) * u.m)


def test_option_validation_names_allowed_values():
    with pytest.raises(OptionError, match="allowed units are"):
        ReadOptions(flux_unit="jansky")
    with pytest.raises(OptionError, match="allowed formats are"):
        ReadOptions(format="xlsx")


class _nothing:
    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return False
