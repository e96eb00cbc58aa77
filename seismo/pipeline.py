"""One star: a file or `LightCurve` through the stages to a summary.

Stages are composed here; none of them reads files (except the reader at the
edge), prints or plots.
"""

from __future__ import annotations

import hashlib
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from . import __version__
from .config import AnalysisConfig
from .lightcurve import LightCurve, condition, read_lightcurve
from .spectrum import PowerSpectrum, power_spectrum

__all__ = ["Prepared", "prepare", "summarize", "file_checksum"]


@dataclass(frozen=True, eq=False)
class Prepared:
    """A light curve read, conditioned and transformed.

    Attributes
    ----------
    raw : LightCurve
        As read (ppm about the median, not conditioned).
    lightcurve : LightCurve
        Conditioned.
    spectrum : PowerSpectrum
        Power density spectrum of ``lightcurve``.
    provenance : dict
        Package version, configuration hash, input checksum.
    """

    raw: LightCurve
    lightcurve: LightCurve
    spectrum: PowerSpectrum
    provenance: dict[str, Any]


def file_checksum(path: str | os.PathLike[str]) -> str:
    """SHA-256 of a file's bytes, hex.

    Parameters
    ----------
    path : str or path-like
        File to hash.

    Returns
    -------
    str
        ``"sha256:<hex>"``.
    """
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for chunk in iter(lambda: handle.read(1 << 20), b""):
            digest.update(chunk)
    return "sha256:" + digest.hexdigest()


def _array_checksum(lc: LightCurve) -> str:
    digest = hashlib.sha256(lc.time.tobytes())
    digest.update(lc.flux.tobytes())
    return "sha256:" + digest.hexdigest()


def prepare(source: str | os.PathLike[str] | LightCurve, config: AnalysisConfig | None = None
            ) -> Prepared:
    """Read (if needed), condition and transform one light curve.

    Parameters
    ----------
    source : path or LightCurve
        A light-curve file, or a `LightCurve` already in days and ppm.
    config : AnalysisConfig, optional
        Settings; defaults otherwise.

    Returns
    -------
    Prepared

    Raises
    ------
    InputError
        Any of its subclasses when the input cannot be analysed.
    """
    config = config or AnalysisConfig()
    if isinstance(source, LightCurve):
        raw = source
        checksum = _array_checksum(source)
    else:
        raw = read_lightcurve(source, config.read)
        checksum = file_checksum(Path(source))
    try:
        lc = condition(raw, config.condition)
    except Exception as err:
        if hasattr(err, "with_path") and raw.meta.get("source"):
            err.with_path(raw.meta["source"])
        raise
    spec = config.spectrum
    ps = power_spectrum(lc, method=spec.method, oversample=spec.oversample, fmax=spec.fmax)
    provenance = {
        "version": __version__,
        "config_hash": config.hash(),
        "input_checksum": checksum,
    }
    return Prepared(raw, lc, ps, provenance)


def summarize(prepared: Prepared) -> dict[str, Any]:
    """Short JSON-able summary of a prepared light curve.

    Parameters
    ----------
    prepared : Prepared

    Returns
    -------
    dict
        Identifier, source, points kept and dropped, segments, baseline
        (days), cadence (minutes), Nyquist and resolution (μHz), rms (ppm),
        the flux interpretation and the provenance.
    """
    lc, ps, raw = prepared.lightcurve, prepared.spectrum, prepared.raw
    cond = lc.meta.get("conditioning", {})
    return {
        "id": lc.id,
        "source": raw.meta.get("source"),
        "format": raw.meta.get("format"),
        "flux_assumed": raw.meta.get("flux_assumed"),
        "n_rows": raw.meta.get("n_rows", raw.n_points),
        "n_points": lc.n_points,
        "n_flagged_dropped": raw.meta.get("n_flagged_dropped", 0),
        "n_nonfinite_dropped": cond.get("n_nonfinite_dropped", 0),
        "n_outliers_clipped": cond.get("n_outliers_clipped", 0),
        "n_duplicates_merged": cond.get("n_duplicates_merged", 0),
        "n_segments": cond.get("n_segments"),
        "baseline_days": lc.baseline,
        "cadence_min": lc.cadence * 1440.0,
        "nyquist_uhz": ps.nyquist,
        "resolution_uhz": ps.resolution,
        "highpass_uhz": cond.get("highpass_uhz"),
        "rms_ppm": float(np.std(lc.flux)),
        "spectrum_method": ps.method,
        "provenance": prepared.provenance,
    }
