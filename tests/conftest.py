"""Shared fixtures: small synthetic series written in each supported format.

These series are invented for the tests only; the checks they feed compare
against closed forms or outside libraries named in each test.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

LONG_CADENCE_DAYS = 29.4244 / 1440.0  # Kepler long cadence (REFERENCES.md §9, CONF)


def kepler_like_times(days: float = 200.0, rng: np.random.Generator | None = None) -> np.ndarray:
    """Long-cadence times with ~93-d segment gaps and a few short gaps."""
    t = np.arange(0.0, days, LONG_CADENCE_DAYS)
    keep = np.ones(t.size, dtype=bool)
    for start in np.arange(93.0, days, 93.0):
        keep &= ~((t > start) & (t < start + 1.2))
    keep &= ~((t > 40.0) & (t < 40.6))
    return t[keep]


def write_csv(path: Path, columns: dict[str, np.ndarray], header: bool = True) -> Path:
    names = list(columns)
    data = np.column_stack([np.asarray(columns[n], dtype=float) for n in names])
    np.savetxt(path, data, delimiter=",", header=",".join(names) if header else "",
               comments="", fmt="%.10g")
    return path


def write_fits(path: Path, columns: dict[str, np.ndarray], units: dict[str, str] | None = None,
               extname: str = "LIGHTCURVE") -> Path:
    from astropy.io import fits

    units = units or {}
    cols = [
        fits.Column(name=n, format="J" if n.lower() == "quality" else "D", unit=units.get(n),
                    array=np.asarray(v))
        for n, v in columns.items()
    ]
    hdu = fits.BinTableHDU.from_columns(cols, name=extname)
    hdu.header["OBJECT"] = "TEST-STAR"
    fits.HDUList([fits.PrimaryHDU(), hdu]).writeto(path, overwrite=True)
    return path


@pytest.fixture
def rng() -> np.random.Generator:
    return np.random.default_rng(20261202)


@pytest.fixture
def simple_series(rng):
    """Counts-like series: 200 d long cadence, a 10-μHz sinusoid, white noise."""
    t = kepler_like_times(200.0)
    signal = 200.0 * np.sin(2 * np.pi * 10e-6 * t * 86400.0)
    noise = rng.normal(0.0, 80.0, t.size)
    counts = 5.0e4 * (1.0 + 1e-6 * (signal + noise))
    return t, counts, signal
