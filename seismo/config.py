"""Analysis configuration: one frozen object for a whole run, with a hash.

The hash goes into every result's provenance so that a result can be tied
to the exact settings that produced it.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass, field, fields
from typing import Any

import numpy as np

from .errors import OptionError
from .lightcurve import ConditionOptions, ReadOptions

__all__ = ["SpectrumOptions", "AnalysisConfig"]


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
        return {f.name: getattr(self, f.name) for f in fields(self)}


@dataclass(frozen=True)
class AnalysisConfig:
    """Every setting of one analysis (reading, conditioning, spectrum).

    Parameters
    ----------
    read : ReadOptions
    condition : ConditionOptions
    spectrum : SpectrumOptions
    """

    read: ReadOptions = field(default_factory=ReadOptions)
    condition: ConditionOptions = field(default_factory=ConditionOptions)
    spectrum: SpectrumOptions = field(default_factory=SpectrumOptions)

    def to_dict(self) -> dict[str, Any]:
        """Nested plain dict of every setting."""
        return {
            "read": self.read.to_dict(),
            "condition": self.condition.to_dict(),
            "spectrum": self.spectrum.to_dict(),
        }

    def hash(self) -> str:
        """Short SHA-256 of the settings that change results (not the star id)."""
        settings = self.to_dict()
        settings["read"].pop("star_id", None)
        text = json.dumps(settings, sort_keys=True, default=str)
        return hashlib.sha256(text.encode()).hexdigest()[:16]
