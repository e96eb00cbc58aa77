"""Tests of profile reading, profile checks and the derived buoyancy frequency.

Profiles are analytic polytropes (seismo.structure.polytrope) written in each
format with astropy or numpy; the expected values are the model itself
(round trip), unit definitions (astropy, IAU 2015 nominal values) and the
exact polytropic N² (closed form).
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from seismo.errors import (
    ColumnError,
    InputError,
    MissingFileError,
    OptionError,
    TooFewPointsError,
    UnreadableFileError,
)
from seismo.structure import (
    ProfileWarning,
    StellarProfile,
    buoyancy_from_structure,
    check_profile,
    polytrope,
    read_profile,
)
from seismo.structure.constants import M_SUN_G, R_SUN_CM

COLUMNS = ("r", "m", "rho", "p", "gamma1", "n2")


@pytest.fixture(scope="module")
def model():
    return polytrope(3.0, mass=1.1, radius=1.3, points=301)


def _table(model, temperature=True):
    data = {name: getattr(model, name) for name in COLUMNS}
    if temperature:
        # An extra column (invented) that must be kept under its own name.
        data["temperature"] = 1e7 * (model.p / model.p[0]) ** 0.25
    return data


def _write_text(path, data, delimiter, meta=None, header="line"):
    names = list(data)
    rows = np.column_stack([data[n] for n in names])
    lines = [f"# {k} = {v}" for k, v in (meta or {}).items()]
    sep = "," if delimiter == "," else " "
    if header == "comment":
        lines.append("# " + " ".join(names))
    elif header == "line":
        lines.append(sep.join(names))
    lines += [sep.join(f"{x:.17g}" for x in row) for row in rows]
    path.write_text("\n".join(lines) + "\n")
    return path


def _assert_same(profile, model):
    for name in ("r", "m", "rho", "p", "gamma1"):
        np.testing.assert_allclose(getattr(profile, name), getattr(model, name), rtol=1e-14)
    np.testing.assert_array_equal(profile.n2, model.n2)


# ------------------------------------------------------------------ round trips


def test_round_trip_ecsv_with_units_and_meta(tmp_path, model):
    from astropy import units as u
    from astropy.table import Table

    table = Table(_table(model))
    # Units other than cgs must be converted (astropy unit definitions; IAU 2015 R☉, M☉).
    table["r"] = (model.r / R_SUN_CM) * u.R_sun
    table["m"] = (model.m / 1e3) * u.kg
    table["p"].unit = u.dyn / u.cm**2
    table["temperature"].unit = u.K
    table.meta.update({"mass": 1.1 * u.M_sun, "teff": 4800.0, "age": "3 Gyr"})
    path = tmp_path / "model.ecsv"
    table.write(path, format="ascii.ecsv")
    profile = read_profile(path)
    np.testing.assert_allclose(profile.r, model.r, rtol=1e-12)
    np.testing.assert_allclose(profile.m, model.m, rtol=1e-12)
    np.testing.assert_allclose(profile.p, model.p, rtol=1e-14)
    np.testing.assert_array_equal(profile.n2, model.n2)
    assert profile.mass == pytest.approx(1.1 * M_SUN_G, rel=1e-4)  # astropy M☉ vs IAU GM☉/G
    assert profile.teff == 4800.0
    assert profile.age == pytest.approx(3e9)
    assert profile.radius == pytest.approx(model.r[-1], rel=1e-12)
    assert profile.meta["sources"] == {
        "mass": "metadata", "radius": "last mesh point", "teff": "metadata", "age": "metadata",
    }
    np.testing.assert_allclose(profile.columns["temperature"], _table(model)["temperature"])
    assert profile.name == "model" and profile.meta["format"] == "ecsv"


def test_round_trip_csv_with_comment_metadata(tmp_path, model):
    path = _write_text(tmp_path / "model.csv", _table(model), ",",
                       meta={"mass": model.mass, "radius": model.radius, "luminosity": 3.828e33})
    profile = read_profile(path)
    _assert_same(profile, model)
    assert profile.meta["format"] == "csv"
    assert profile.mass == pytest.approx(model.mass, rel=1e-12)
    assert profile.luminosity_solar == pytest.approx(1.0)  # IAU 2015 L☉ (REFERENCES §1a)
    assert set(profile.columns) == {"temperature"}


@pytest.mark.parametrize("header", ["line", "comment"])
def test_round_trip_whitespace_text(tmp_path, model, header):
    path = _write_text(tmp_path / "model.txt", _table(model), None, header=header)
    profile = read_profile(path)
    _assert_same(profile, model)
    assert profile.meta["format"] == "text"


def test_round_trip_fits_with_header_keywords(tmp_path, model):
    from astropy.io import fits

    data = _table(model)
    cols = [fits.Column(name=n.upper(), format="D", array=v) for n, v in data.items()]
    cols[0] = fits.Column(name="R", format="D", unit="km", array=model.r / 1e5)
    hdu = fits.BinTableHDU.from_columns(cols)
    primary = fits.PrimaryHDU()
    primary.header["MASS"] = model.mass
    hdu.header["RADIUS"] = model.radius * 1.01
    hdu.header["LUMINOS"] = 2e34
    path = tmp_path / "model.fits"
    fits.HDUList([primary, fits.ImageHDU(np.zeros(3)), hdu]).writeto(path)
    profile = read_profile(path)
    np.testing.assert_allclose(profile.r, model.r, rtol=1e-14)  # km → cm (definition)
    np.testing.assert_allclose(profile.rho, model.rho, rtol=1e-14)
    assert profile.mass == pytest.approx(model.mass, rel=1e-14)
    assert profile.radius == pytest.approx(model.radius * 1.01, rel=1e-14)
    assert profile.luminosity == 2e34
    assert "TEMPERATURE" in profile.columns


def test_column_mapping_and_argument_override(tmp_path, model):
    data = _table(model)
    renamed = {"radius_cm": data["r"], "mass_g": data["m"], "density": data["rho"],
               "pressure": data["p"], "G1": data["gamma1"], "T": data["temperature"]}
    path = _write_text(tmp_path / "other.dat", renamed, None, meta={"mass": 1.0})
    profile = read_profile(
        path,
        columns={"r": "radius_cm", "m": "mass_g", "rho": "density", "p": "pressure",
                 "gamma1": "g1", "temperature": "T"},
        mass=model.mass, name="renamed",
    )
    np.testing.assert_allclose(profile.r, model.r, rtol=1e-14)
    np.testing.assert_allclose(profile.gamma1, model.gamma1, rtol=1e-14)
    assert profile.n2 is None  # the model then derives N² (buoyancy_from_structure)
    assert profile.meta["sources"]["mass"] == "argument"  # beats "# mass = 1.0"
    assert profile.mass == model.mass and profile.name == "renamed"
    assert set(profile.columns) == {"temperature"}


def test_surface_to_centre_rows_are_reversed(tmp_path, model):
    data = {k: v[::-1] for k, v in _table(model).items()}
    profile = read_profile(_write_text(tmp_path / "flip.csv", data, ","))
    _assert_same(profile, model)
    assert profile.meta["reversed"] is True
    np.testing.assert_allclose(profile.columns["temperature"], _table(model)["temperature"])


# ------------------------------------------------------------------ errors


def test_missing_file(tmp_path):
    with pytest.raises(MissingFileError, match="no such profile file"):
        read_profile(tmp_path / "absent.csv")


def test_unreadable_files(tmp_path):
    binary = tmp_path / "blob.bin"
    binary.write_bytes(bytes(range(256)) * 4)
    with pytest.raises(UnreadableFileError, match="binary content"):
        read_profile(binary)
    from astropy.io import fits

    image = tmp_path / "image.fits"
    fits.PrimaryHDU(np.zeros((4, 4))).writeto(image)
    with pytest.raises(UnreadableFileError, match="holds no table extension"):
        read_profile(image)
    broken = tmp_path / "broken.ecsv"
    broken.write_text("# %ECSV 1.0\n# ---\n# garbage: [\n1 2\n")
    with pytest.raises(UnreadableFileError, match="not a readable ecsv profile table"):
        read_profile(broken)
    with pytest.raises(OptionError, match="unknown profile format 'hdf5'"):
        read_profile(broken, format="hdf5")


def test_missing_column_lists_found_columns(tmp_path, model):
    data = _table(model)
    del data["gamma1"]
    path = _write_text(tmp_path / "nog1.csv", data, ",")
    with pytest.raises(ColumnError, match=r"required column 'gamma1' not found; the file has "
                       r"columns \['r', 'm', 'rho', 'p', 'n2', 'temperature'\].*columns="):
        read_profile(path)
    with pytest.raises(ColumnError, match="'rho' mapped to 'dens'"):
        read_profile(path, columns={"rho": "dens"})


def test_too_few_rows_nan_and_failed_checks(tmp_path, model):
    data = {k: v[:2] for k, v in _table(model).items()}
    with pytest.raises(TooFewPointsError, match="at least 3 rows, the file has 2"):
        read_profile(_write_text(tmp_path / "short.csv", data, ","))
    data = _table(model)
    data["rho"] = data["rho"].copy()
    data["rho"][7] = np.nan
    with pytest.raises(InputError, match=r"column 'rho' has NaN .*first at row 7"):
        read_profile(_write_text(tmp_path / "nan.csv", data, ","))
    data = _table(model)
    data["r"] = data["r"].copy()
    data["r"][10] = data["r"][12]
    with pytest.raises(InputError, match="fails its checks: radius is not strictly increasing"):
        read_profile(_write_text(tmp_path / "bad.csv", data, ","))


def test_header_and_unit_errors(tmp_path, model):
    path = _write_text(tmp_path / "nohead.txt", _table(model), None, header="none")
    with pytest.raises(ColumnError, match="no header line naming the columns"):
        read_profile(path)
    from astropy import units as u
    from astropy.table import Table

    table = Table(_table(model))
    table["rho"].unit = u.K
    table.write(tmp_path / "unit.ecsv", format="ascii.ecsv")
    with pytest.raises(ColumnError, match="'rho' has unit 'K'"):
        read_profile(tmp_path / "unit.ecsv")


# ------------------------------------------------------------------ checks


def _variant(model, **changes):
    fields = {k: getattr(model, k) for k in ("r", "m", "rho", "p", "gamma1", "n2")}
    fields.update(changes)
    return StellarProfile(**fields, mass=model.mass, radius=model.radius, name="variant")


def test_check_accepts_analytic_surface_zeros(model):
    # The n = 3 polytrope has ρ = p = 0 exactly at its surface point (closed form).
    assert model.rho[-1] == 0.0 and model.p[-1] == 0.0
    check = check_profile(model)
    assert check.ok, check.errors
    assert check.hydrostatic_median < 1e-3 and check.mass_mismatch < 1e-3


def test_check_errors(model):
    rho = model.rho.copy()
    rho[5] = -1.0
    gamma1 = model.gamma1.copy()
    gamma1[3] = 1.0
    m = model.m.copy()
    m[100] = 0.5 * m[99]
    p = model.p.copy()
    p[-2] = 0.0
    check = check_profile(_variant(model, rho=rho, gamma1=gamma1, m=m, p=p), warn=False)
    assert not check.ok
    text = " | ".join(check.errors)
    assert "density is not positive (1 point(s), first at row 5)" in text
    assert "gamma1 is not above 1" in text
    assert "mass decreases outward (1 point(s), first at row 99)" in text
    assert "pressure is not positive (1 point(s), first at row 299)" in text


def test_check_warns_on_mass_inconsistency(model):
    # ρ 5% too high: ∫4πr²ρ dr exceeds m by 5% of M (CALC).
    with pytest.warns(ProfileWarning, match="differs from the integral of 4 pi r\\^2 rho dr by 5"):
        check = check_profile(_variant(model, rho=1.05 * model.rho))
    assert check.ok and check.mass_mismatch == pytest.approx(0.05, rel=1e-2)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert check_profile(model).warnings == ()


def test_hydrostatic_residual_is_reported_not_enforced(model):
    # p scaled by 1.2 breaks dp/dr = −Gmρ/r² by 20% everywhere (CALC).
    check = check_profile(_variant(model, p=1.2 * model.p), warn=False)
    assert check.ok
    assert check.hydrostatic_median == pytest.approx(0.2, rel=0.01)


# ------------------------------------------------------------------ N² derived


@pytest.mark.parametrize("n, gamma1", [(1.5, 1.4), (1.5, 2.0), (3.0, 5.0 / 3.0), (3.0, 1.4)])
def test_buoyancy_matches_exact_polytrope(n, gamma1):
    exact = polytrope(n, gamma1=gamma1)
    derived = buoyancy_from_structure(_variant(exact, n2=None))
    # Closed form N² = g dlnp/dr [1/Γ1 − n/(n+1)]. d ln ρ/d ln p = n/(n+1) is recovered
    # exactly by the ratio scheme, so only round-off remains: ln p changes by ~ξΔξ per step
    # near the centre, leaving ~1e-8 relative for 1e-3 < r/R < 0.999 (CALC: 4e-8 seen).
    inside = (exact.x > 1e-3) & (exact.x < 0.999)
    np.testing.assert_allclose(derived[inside], exact.n2[inside], rtol=2e-7)
    assert derived[0] == 0.0 and derived[-1] == 0.0


def test_buoyancy_zero_for_adiabatic_polytrope():
    # n = 1.5 with Γ1 = 5/3 is exactly neutral: N² = 0 (closed form); relative to the
    # scale ρg²/p, the round-off is as in the test above (CALC: 4e-8 for r/R > 1e-3).
    exact = polytrope(1.5, gamma1=5.0 / 3.0)
    derived = buoyancy_from_structure(_variant(exact, n2=None))
    inside = (exact.x > 1e-3) & (exact.x < 0.999)
    scale = exact.rho[inside] * exact.g[inside] ** 2 / exact.p[inside]
    assert np.max(np.abs(derived[inside]) / scale) < 2e-7
