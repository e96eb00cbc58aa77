"""Analysis configuration: one frozen object for a whole run, with a hash.

The hash goes into every result's provenance so that a result can be tied
to the exact settings that produced it. Per-star inputs (Teff, [Fe/H]) are
not configuration: they live in `StarInputs`.
"""

from __future__ import annotations

import functools
import hashlib
import json
from dataclasses import dataclass, field, fields
from typing import Any

import numpy as np

from .background import DetectionOptions
from .errors import OptionError
from .lightcurve import ConditionOptions, ReadOptions

__all__ = ["SpectrumOptions", "ScalingOptions", "GridOptions", "StarInputs", "AnalysisConfig"]


def _as_dict(obj: Any) -> dict[str, Any]:
    return {f.name: getattr(obj, f.name) for f in fields(obj)}


@dataclass(frozen=True)
class SpectrumOptions:
    """Settings of `seismo.spectrum.power_spectrum`.

    Parameters
    ----------
    method : str
        ``"auto"``, ``"fft"``, ``"nufft"``, ``"lombscargle"`` or ``"direct"``.
    oversample : float
        Grid spacing is the resolution divided by this (>= 1).
    fmax : float, optional
        Highest frequency, μHz (default the Nyquist frequency).
    """

    method: str = "auto"
    oversample: float = 1.0
    fmax: float | None = None

    def __post_init__(self) -> None:
        from .spectrum import METHODS

        if self.method not in ("auto", *METHODS):
            raise OptionError(
                f"unknown spectrum method {self.method!r}; allowed methods are "
                f"{['auto', *METHODS]}"
            )
        if not np.isfinite(self.oversample) or self.oversample < 1:
            raise OptionError(f"oversample must be >= 1; got {self.oversample!r}")
        if self.fmax is not None and not self.fmax > 0:
            raise OptionError(f"fmax must be a positive frequency in μHz; got {self.fmax!r}")

    def to_dict(self) -> dict[str, Any]:
        """Plain dict of the options."""
        return _as_dict(self)


@dataclass(frozen=True)
class ScalingOptions:
    """Settings of the scaling relations (see `seismo.scaling.scaling_estimates`).

    Parameters
    ----------
    reference : str
        Key of `seismo.scaling.SOLAR_REFERENCES`.
    correction : str
        ``"none"`` or ``"eclipsing-binary"``.
    f_dnu : float
        Model-based correction factor of the Δν relation (1 = none).
    systematic : bool
        Add the spread between solar reference sets to the errors.
    n_draws : int
        Monte Carlo draws.
    """

    reference: str = "huber2011"
    correction: str = "none"
    f_dnu: float = 1.0
    systematic: bool = True
    n_draws: int = 4000

    def __post_init__(self) -> None:
        from .scaling import CORRECTIONS, SOLAR_REFERENCES

        if self.reference not in SOLAR_REFERENCES:
            raise OptionError(
                f"unknown solar reference {self.reference!r}; allowed references are "
                f"{sorted(SOLAR_REFERENCES)}"
            )
        allowed = ["none", *CORRECTIONS]
        if self.correction not in allowed:
            raise OptionError(
                f"unknown correction {self.correction!r}; allowed corrections are {allowed}"
            )
        if not (np.isfinite(self.f_dnu) and self.f_dnu > 0):
            raise OptionError(f"f_dnu must be a positive factor; got {self.f_dnu!r}")
        if self.n_draws < 100:
            raise OptionError(f"n_draws must be at least 100; got {self.n_draws}")

    def to_dict(self) -> dict[str, Any]:
        """Plain dict of the options."""
        return _as_dict(self)


@dataclass(frozen=True)
class GridOptions:
    """Settings of the grid-based estimates (:mod:`seismo.structure.grid`).

    Parameters
    ----------
    path : str, optional
        Grid of model tracks (ECSV, CSV or FITS table), or ``"demo"`` for the
        bundled demo grid (invented for illustration). None: no grid stage.
    mass_prior : str
        ``"flat"``, ``"salpeter"`` or ``"kroupa"`` (see
        `seismo.structure.grid.MASS_PRIORS`).
    use_dpi1, use_state : bool
        Let a measured ΔΠ1 (s) and evolutionary state weigh the models.
    feh_err : float
        1σ error of [Fe/H] (dex) used when a star's [Fe/H] comes without one.

    Notes
    -----
    The grid file's checksum is part of `to_dict`, hence of the configuration
    hash: editing the grid makes a survey analyse its stars again.
    """

    path: str | None = None
    mass_prior: str = "flat"
    use_dpi1: bool = True
    use_state: bool = True
    feh_err: float = 0.1

    def __post_init__(self) -> None:
        from .structure.grid import MASS_PRIORS

        if self.path is not None:
            object.__setattr__(self, "path", str(self.path))
            self.resolved_path()  # fails early on a missing file
        if self.mass_prior not in MASS_PRIORS:
            raise OptionError(f"mass_prior must be one of {sorted(MASS_PRIORS)}; "
                              f"got {self.mass_prior!r}")
        if not (np.isfinite(self.feh_err) and self.feh_err > 0):
            raise OptionError(f"feh_err must be a positive number of dex; got {self.feh_err!r}")

    def resolved_path(self) -> str | None:
        """The grid file (the bundled one for ``"demo"``), or None without a grid."""
        import os

        from .errors import MissingFileError

        if self.path is None:
            return None
        if self.path == "demo":
            from .structure.grid import demo_grid_path

            return str(demo_grid_path())
        if not os.path.isfile(self.path):
            raise MissingFileError("grid file not found", path=self.path,
                                   hint="give a table of model tracks, or 'demo'")
        return os.path.abspath(self.path)

    def to_dict(self) -> dict[str, Any]:
        """Plain dict of the options, with the grid file's checksum."""
        out = _as_dict(self)
        resolved = self.resolved_path()
        out["checksum"] = None if resolved is None else _file_digest(resolved)
        return out


def _file_digest(path: str) -> str:
    import os

    info = os.stat(path)
    return _cached_digest(path, info.st_size, info.st_mtime_ns)


@functools.lru_cache(maxsize=16)
def _cached_digest(path: str, size: int, mtime_ns: int) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return f"sha256:{digest.hexdigest()}"


@dataclass(frozen=True)
class StarInputs:
    """What is known about one star besides its light curve.

    Parameters
    ----------
    teff, teff_err : float, optional
        Effective temperature and its 1σ error, K (give both).
    feh : float, optional
        Metallicity [Fe/H], dex (not used by the scaling relations; used by
        the grid-based estimates).
    feh_err : float, optional
        1σ error of ``feh``, dex (default: the grid options' ``feh_err``).
    """

    teff: float | None = None
    teff_err: float | None = None
    feh: float | None = None
    feh_err: float | None = None

    def __post_init__(self) -> None:
        if self.teff is not None and not (np.isfinite(self.teff) and 2500 < self.teff < 10000):
            raise OptionError(f"teff must be a temperature in K between 2500 and 10000; "
                              f"got {self.teff!r}")
        if self.teff_err is not None and not (np.isfinite(self.teff_err) and self.teff_err > 0):
            raise OptionError(f"teff_err must be a positive number of K; got {self.teff_err!r}")
        if self.feh is not None and not (np.isfinite(self.feh) and -5 < self.feh < 2):
            raise OptionError(f"feh must be a metallicity in dex between -5 and 2; "
                              f"got {self.feh!r}")
        if self.feh_err is not None and not (np.isfinite(self.feh_err) and self.feh_err > 0):
            raise OptionError(f"feh_err must be a positive number of dex; got {self.feh_err!r}")

    def to_dict(self) -> dict[str, Any]:
        """Plain dict of the inputs."""
        return _as_dict(self)


@dataclass(frozen=True)
class AnalysisConfig:
    """Every setting of one analysis.

    Parameters
    ----------
    read : ReadOptions
    condition : ConditionOptions
    spectrum : SpectrumOptions
    detection : DetectionOptions
    scaling : ScalingOptions
    grid : GridOptions
    """

    read: ReadOptions = field(default_factory=ReadOptions)
    condition: ConditionOptions = field(default_factory=ConditionOptions)
    spectrum: SpectrumOptions = field(default_factory=SpectrumOptions)
    detection: DetectionOptions = field(default_factory=DetectionOptions)
    scaling: ScalingOptions = field(default_factory=ScalingOptions)
    grid: GridOptions = field(default_factory=GridOptions)

    def to_dict(self) -> dict[str, Any]:
        """Nested plain dict of every setting."""
        return {
            "read": self.read.to_dict(),
            "condition": self.condition.to_dict(),
            "spectrum": self.spectrum.to_dict(),
            "detection": _as_dict(self.detection),
            "scaling": self.scaling.to_dict(),
            **({"grid": self.grid.to_dict()} if self.grid.path is not None else {}),
        }

    def hash(self) -> str:
        """Short SHA-256 of the settings that change results (not the star id)."""
        settings = self.to_dict()
        settings["read"].pop("star_id", None)
        text = json.dumps(settings, sort_keys=True, default=str)
        return hashlib.sha256(text.encode()).hexdigest()[:16]
