"""One star: a file or `LightCurve` through the stages to a `StarResult`.

Stages are composed here; none of them reads files (except the reader at the
edge), prints or plots::

    read → condition → spectrum → detection → background + numax
         → Δν and the radial pattern → scaling relations → mixed modes
         → evolutionary state → [grid of models] → StarResult
"""

from __future__ import annotations

import dataclasses
import functools
import hashlib
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from . import __version__
from .background import BackgroundFit, Detection, detect_oscillations
from .config import AnalysisConfig, StarInputs
from .lightcurve import LightCurve, condition, read_lightcurve
from .results import Measurement, StarResult
from .spectrum import PowerSpectrum, power_spectrum

__all__ = ["Prepared", "prepare", "summarize", "file_checksum", "Analysis", "analyze",
           "grid_stage"]


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


@dataclass(frozen=True, eq=False)
class Analysis:
    """Everything the analysis of one star produced.

    Attributes
    ----------
    prepared : Prepared
        Light curves and spectrum.
    detection : Detection
        The search for an oscillation excess (with the background fits).
    pattern : object or None
        The radial-mode pattern (`seismo.pmodes.RadialPattern`), if measured.
    mixed : object or None
        The dipole mixed-mode measurement (`seismo.mixed.PeriodSpacing`).
    state : object or None
        The evolutionary-state classification (`seismo.state.StateResult`).
    scaling : object or None
        Scaling-relation estimates (`seismo.scaling.ScalingEstimates`).
    result : StarResult
        The schema-level result.
    grid : object or None
        Grid-based estimates (`seismo.structure.GridEstimate`), when the
        configuration names a grid.
    """

    prepared: Prepared
    detection: Detection
    pattern: Any
    scaling: Any
    result: StarResult
    mixed: Any = None
    state: Any = None
    grid: Any = None

    @property
    def background(self) -> BackgroundFit:
        """The background fit to show: with the envelope if detected, else alone."""
        if self.detection.detected and self.detection.fit is not None:
            return self.detection.fit
        return self.detection.null_fit


def _seed_from(*parts: str) -> int:
    digest = hashlib.sha256("|".join(parts).encode()).digest()
    return int.from_bytes(digest[:8], "little")


def analyze(
    source: str | os.PathLike[str] | LightCurve,
    config: AnalysisConfig | None = None,
    inputs: StarInputs | None = None,
    *,
    rng: np.random.Generator | int | None = None,
) -> Analysis:
    """Analyse one star: from a light curve to every global seismic parameter.

    Parameters
    ----------
    source : path or LightCurve
        Light-curve file or `LightCurve` (days, ppm).
    config : AnalysisConfig, optional
        Settings of every stage.
    inputs : StarInputs, optional
        Teff (K) and its error, [Fe/H], for the scaling relations.
    rng : numpy.random.Generator, int or None
        Random generator for the Monte Carlo error propagation; default a
        seed derived from the input checksum and configuration hash, so the
        same input gives the same result on every run.

    Returns
    -------
    Analysis

    Raises
    ------
    InputError
        When the light curve cannot be analysed at all. Measurements that
        fail are flags in ``result.flags``, not exceptions.
    """
    from .mixed import measure_mixed_modes, resolves_period_spacing
    from .pmodes import fit_radial_pattern, large_separation, reconcile
    from .scaling import scaling_estimates
    from .state import classify_state

    config = config or AnalysisConfig()
    inputs = inputs or StarInputs()
    prepared = prepare(source, config)
    ps = prepared.spectrum
    provenance = dict(prepared.provenance)
    if rng is None:
        seed = _seed_from(provenance["input_checksum"], provenance["config_hash"])
        provenance["seed"] = seed
        rng = np.random.default_rng(seed)
    else:
        rng = np.random.default_rng(rng)

    detection = detect_oscillations(ps, config.detection)
    flags: list[str] = list(detection.flags)
    details: dict[str, Any] = {
        "detection": {"false_alarm": detection.false_alarm, "statistic": detection.statistic},
        # The provenance is a top-level field of the result; not repeated here.
        "lightcurve": {k: v for k, v in summarize(prepared).items() if k != "provenance"},
        "inputs": inputs.to_dict(),
    }
    star_id = str(prepared.lightcurve.id or "unknown")
    if not detection.detected or detection.fit is None:
        result = StarResult(
            id=star_id, detected=False,
            flags=tuple(flags + ["numax_not_measured", "dnu_not_measured",
                                 "mass_radius_not_measured", "dpi1_not_measured",
                                 "state_needs_detection"]),
            provenance=provenance, details=details,
        )
        result, grid = grid_stage(result, config, inputs)
        return Analysis(prepared, detection, None, None, result, grid=grid)

    fit = detection.fit
    numax = Measurement.or_none(fit.value("envelope:numax"), fit.error("envelope:numax"))
    flags += list(fit.flags)
    details["background"] = {
        **fit.as_dict(),
        "height_to_background": fit.height_to_background(),
        "overdispersion": fit.overdispersion,
    }
    background = fit.background(ps.freq)
    coarse = large_separation(ps, numax.value, background, numax_err=numax.error)
    flags += list(coarse.flags)
    pattern = None
    dnu = eps_p = None
    if coarse.dnu is not None:
        pattern = reconcile(coarse, fit_radial_pattern(ps, numax.value, coarse.dnu, background))
        flags += [f for f in pattern.flags if f not in flags]
        dnu, eps_p = pattern.dnu, pattern.eps_p
        details["pattern"] = pattern.as_dict()
    if dnu is None:
        flags.append("dnu_not_measured")

    scaling = None
    mass = radius = logg = None
    if dnu is not None and numax.error is not None and dnu.error is not None:
        opts = config.scaling
        scaling = scaling_estimates(
            numax.value, numax.error, dnu.value, dnu.error, inputs.teff, inputs.teff_err,
            reference=opts.reference, correction=opts.correction, f_dnu=opts.f_dnu,
            systematic=opts.systematic, n_draws=opts.n_draws, rng=rng,
        )
        mass, radius, logg = scaling.mass, scaling.radius, scaling.logg
        flags += list(scaling.flags)
        details["scaling"] = {
            "density": None if scaling.density is None else scaling.density.to_dict(),
            "luminosity": None if scaling.luminosity is None else scaling.luminosity.to_dict(),
            **scaling.details,
        }
    else:
        flags.append("mass_radius_not_measured")

    mixed = None
    if not resolves_period_spacing(ps, numax.value):
        flags.append("dpi1_resolution")
    elif pattern is not None:
        mixed = measure_mixed_modes(ps, background, numax.value, pattern)
        flags += [f for f in mixed.flags if f not in flags]
        details["mixed"] = mixed.as_dict()
    else:
        flags.append("dpi1_no_pattern")
    dpi1 = None if mixed is None else mixed.dpi1
    if dpi1 is None:
        flags.append("dpi1_not_measured")

    state = classify_state(dnu, dpi1, mass,
                           dpi1_rivals=() if mixed is None else mixed.dpi1_rivals)
    flags += list(state.reasons)
    details["state"] = {"probabilities": state.probabilities, "reasons": list(state.reasons)}

    result = StarResult(
        id=star_id, detected=True, numax=numax, dnu=dnu, eps_p=eps_p, dpi1=dpi1,
        q=None if mixed is None else mixed.q, mass=mass, radius=radius, logg=logg,
        state=state.state, state_probability=state.probability, flags=tuple(flags),
        provenance=provenance, details=details,
        eps_g=None if mixed is None else mixed.eps_g,
        rot_core=None if mixed is None else mixed.rot_core,
    )
    result, grid = grid_stage(result, config, inputs)
    return Analysis(prepared, detection, pattern, scaling, result, mixed, state, grid)


@functools.lru_cache(maxsize=2)
def _load_grid(path: str, size: int, mtime_ns: int) -> Any:
    # One read per process and grid file version: reading and refining a grid
    # costs far more than one star's estimate.
    from .structure.grid import read_grid

    return read_grid(path)


def grid_stage(result: StarResult, config: AnalysisConfig, inputs: StarInputs
               ) -> tuple[StarResult, Any]:
    """Add grid-based mass, radius, age and log g to a result (when a grid is configured).

    Parameters
    ----------
    result : StarResult
        The result of the seismic stages (Δν and numax in μHz, ΔΠ1 in s, state).
    config : AnalysisConfig
        ``config.grid`` names the grid; without one the result is returned as is.
    inputs : StarInputs
        Teff (K), [Fe/H] (dex) and their errors; without Teff the grid is
        weighed by Δν, numax (and ΔΠ1, state) alone, with a flag.

    Returns
    -------
    (StarResult, GridEstimate or None)
        The result with ``details["grid"]`` (medians and 16/84 percentiles,
        see `seismo.structure.grid_details`) and the grid's flags added.
    """
    options = config.grid
    path = options.resolved_path()
    if path is None:
        return result, None
    from .structure.grid import grid_details, grid_estimate_for_result

    info = os.stat(path)
    grid = _load_grid(path, info.st_size, info.st_mtime_ns)
    feh_err = inputs.feh_err if inputs.feh_err is not None else options.feh_err
    estimate = grid_estimate_for_result(
        grid, result, teff=inputs.teff, teff_err=inputs.teff_err, feh=inputs.feh,
        feh_err=None if inputs.feh is None else feh_err, use_dpi1=options.use_dpi1,
        use_state=options.use_state, mass_prior=options.mass_prior,
    )
    details = {**result.details, "grid": grid_details(estimate)}
    flags = result.flags + tuple(f for f in estimate.flags if f not in result.flags)
    return dataclasses.replace(result, details=details, flags=flags), estimate
