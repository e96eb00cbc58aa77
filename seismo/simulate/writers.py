"""Writing a `Simulation` to disk: FITS, CSV or whitespace text, plus truth JSON."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np

from ..errors import OptionError
from .synthesis import Simulation

__all__ = ["write_simulation", "WRITE_FORMATS", "truth_path"]

#: File suffixes understood by `write_simulation` and the format each selects.
WRITE_FORMATS = {".fits": "fits", ".csv": "csv", ".txt": "text", ".dat": "text"}

_NOTE = "Synthetic light curve made by seismo.simulate; not an observation."


def truth_path(path: str | Path) -> Path:
    """Path of the truth file written beside a light curve: ``<stem>.truth.json``.

    Parameters
    ----------
    path : str or Path
        Light-curve file.

    Returns
    -------
    Path
    """
    path = Path(path)
    return path.with_name(f"{path.stem}.truth.json")


def write_simulation(sim: Simulation, path: str | Path) -> tuple[Path, Path]:
    """Write a simulated light curve and its truth.

    Parameters
    ----------
    sim : Simulation
        Output of `simulate`.
    path : str or Path
        Destination; the suffix picks the format (`WRITE_FORMATS`):

        - ``.fits``: a binary-table HDU named ``LIGHTCURVE`` with columns
          TIME [d], FLUX [electron/s], FLUX_ERR [electron/s], QUALITY, and
          header keywords OBJECT, CADENCE [min], SYNTHETC = T and a COMMENT.
        - ``.csv``: a header line ``time,flux,flux_err,quality``.
        - ``.txt``, ``.dat``: whitespace-separated columns after ``#``
          comment lines naming the star, the units and the columns.

    Returns
    -------
    (Path, Path)
        The light-curve file and the truth JSON ``<stem>.truth.json``.

    Raises
    ------
    OptionError
        If the suffix is not one of `WRITE_FORMATS`.
    """
    path = Path(path)
    fmt = WRITE_FORMATS.get(path.suffix.lower())
    if fmt is None:
        raise OptionError(
            f"path suffix must be one of {sorted(WRITE_FORMATS)}; got {path.suffix!r}"
        )
    path.parent.mkdir(parents=True, exist_ok=True)
    cadence = float(sim.truth["observation"]["cadence"])
    if fmt == "fits":
        _write_fits(sim, path, cadence)
    else:
        table = np.column_stack([sim.time, sim.flux, sim.flux_err, sim.quality])
        formats = ["%.7f", "%.4f", "%.4f", "%d"]
        if fmt == "csv":
            np.savetxt(path, table, fmt=formats, delimiter=",",
                       header="time,flux,flux_err,quality", comments="")
        else:
            header = "\n".join([
                f"{sim.id}: {_NOTE}",
                f"cadence {cadence:.6g} min",
                "columns: time [d]  flux [electron/s]  flux_err [electron/s]  quality",
                "time flux flux_err quality",
            ])
            np.savetxt(path, table, fmt=formats, delimiter=" ", header=header, comments="# ")
    truth_file = truth_path(path)
    with open(truth_file, "w", encoding="utf-8") as handle:
        json.dump(sim.truth, handle, indent=1, allow_nan=True)
        handle.write("\n")
    return path, truth_file


def _write_fits(sim: Simulation, path: Path, cadence: float) -> None:
    from astropy.io import fits

    columns = [
        fits.Column(name="TIME", format="D", unit="d", array=sim.time),
        fits.Column(name="FLUX", format="D", unit="electron/s", array=sim.flux),
        fits.Column(name="FLUX_ERR", format="E", unit="electron/s", array=sim.flux_err),
        fits.Column(name="QUALITY", format="J", array=sim.quality.astype(np.int32)),
    ]
    table = fits.BinTableHDU.from_columns(columns, name="LIGHTCURVE")
    primary = fits.PrimaryHDU()
    for hdu in (primary, table):
        hdu.header["OBJECT"] = (sim.id, "synthetic star")
        hdu.header["CADENCE"] = (cadence, "[min] time between samples")
        hdu.header["SYNTHETC"] = (True, "simulated data")
        hdu.header["COMMENT"] = _NOTE
    table.header["TIMEUNIT"] = ("d", "unit of TIME")
    fits.HDUList([primary, table]).writeto(path, overwrite=True)
