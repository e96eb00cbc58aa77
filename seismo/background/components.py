"""Background components: granulation, Gaussian envelope, white noise, and their sum."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..lightcurve.conditioning import highpass_transmission
from ..relations import (
    harvey_norm,
)

__all__ = ["ComponentSum", "GaussianEnvelope", "Granulation", "WhiteNoise"]

_XI4 = float(harvey_norm(4.0))


# ---------------------------------------------------------------- components
#
# Each component declares its parameter names, which are fitted in log space
# (all but frequencies that may be compared linearly), its bounds given a
# numax guess, and psd / jacobian. The jacobian is with respect to the fitted
# (transformed) parameters. A ComponentSum is itself a component.


@dataclass(frozen=True)
class Granulation:
    """Harvey-like granulation component with exponent 4 (Kallinger et al. 2014).

    Parameters: ``a`` (rms amplitude, ppm; fitted as ln a) and ``b``
    (characteristic frequency, μHz; fitted as ln b).
    """

    label: str = "granulation"
    scale_b: float = 1.0

    param_names: tuple[str, ...] = ("a", "b")
    log_params: tuple[bool, ...] = (True, True)
    attenuated: bool = True

    def psd(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """Power density, ppm²/μHz, at ``freq`` (μHz); ``params`` = (a, b)."""
        a, b = params
        return _XI4 * a**2 / b / (1.0 + (freq / b) ** 4)

    def jacobian(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """d psd / d(ln a, ln b), shape (2, n_freq)."""
        a, b = params
        s = (freq / b) ** 4
        g = _XI4 * a**2 / b / (1.0 + s)
        return np.stack([2.0 * g, g * (-1.0 + 4.0 * s / (1.0 + s))])


@dataclass(frozen=True)
class GaussianEnvelope:
    """Gaussian oscillation envelope: height (ppm²/μHz), numax (μHz), width σ (μHz)."""

    label: str = "envelope"
    param_names: tuple[str, ...] = ("height", "numax", "width")
    log_params: tuple[bool, ...] = (True, False, True)
    attenuated: bool = True

    def psd(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """Power density, ppm²/μHz; ``params`` = (height, numax, width)."""
        h, nu0, w = params
        return h * np.exp(-0.5 * ((freq - nu0) / w) ** 2)

    def jacobian(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """d psd / d(ln height, numax, ln width), shape (3, n_freq)."""
        h, nu0, w = params
        z = (freq - nu0) / w
        g = h * np.exp(-0.5 * z**2)
        return np.stack([g, g * z / w, g * z**2])


@dataclass(frozen=True)
class WhiteNoise:
    """Frequency-independent noise level, ppm²/μHz (not attenuated: it is added after
    the exposure integration)."""

    label: str = "white noise"
    param_names: tuple[str, ...] = ("level",)
    log_params: tuple[bool, ...] = (True,)
    attenuated: bool = False

    def psd(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """Constant density, ppm²/μHz."""
        return params[0] * np.ones_like(freq)

    def jacobian(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """d psd / d ln level, shape (1, n_freq)."""
        return np.full((1, freq.size), params[0])


@dataclass(frozen=True)
class ComponentSum:
    """Sum of components, attenuated by η²(ν) where they are physical signal and by the
    high-pass filter's power transmission everywhere."""

    components: tuple[Any, ...]
    nyquist: float
    highpass_uhz: float = 0.0
    _cache: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)

    @property
    def param_names(self) -> tuple[str, ...]:
        """Qualified names ``"<label>:<param>"`` in fitting order."""
        return tuple(f"{c.label}:{p}" for c in self.components for p in c.param_names)

    @property
    def log_params(self) -> tuple[bool, ...]:
        """Which parameters are fitted as logarithms."""
        return tuple(flag for c in self.components for flag in c.log_params)

    def _slices(self) -> list[slice]:
        out, start = [], 0
        for c in self.components:
            out.append(slice(start, start + len(c.param_names)))
            start += len(c.param_names)
        return out

    def _weights(self, freq: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        # The fit evaluates the model hundreds of times on the same bins: keep the
        # attenuation factors of the last frequency array seen.
        key = (freq.shape, float(freq.flat[0]), float(freq.flat[-1]), float(freq.sum()))
        cached = self._cache.get("weights")
        if cached is not None and cached[0] == key:
            return cached[1]
        eta2 = np.sinc(freq / (2.0 * self.nyquist)) ** 2
        t2 = highpass_transmission(freq, self.highpass_uhz) ** 2
        self._cache["weights"] = (key, (eta2, t2))
        return eta2, t2

    def parts(self, freq: np.ndarray, params: np.ndarray) -> dict[str, np.ndarray]:
        """Each component as it appears in the observed spectrum, ppm²/μHz."""
        eta2, t2 = self._weights(freq)
        out: dict[str, np.ndarray] = {}
        for c, sl in zip(self.components, self._slices(), strict=True):
            value = c.psd(freq, params[sl]) * t2
            out[c.label] = value * eta2 if c.attenuated else value
        return out

    def psd(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """Total model density, ppm²/μHz."""
        return np.sum(list(self.parts(freq, params).values()), axis=0)

    def jacobian(self, freq: np.ndarray, params: np.ndarray) -> np.ndarray:
        """d psd / d(fitted parameters), shape (n_params, n_freq)."""
        eta2, t2 = self._weights(freq)
        rows = []
        for c, sl in zip(self.components, self._slices(), strict=True):
            jac = c.jacobian(freq, params[sl]) * t2
            rows.append(jac * eta2 if c.attenuated else jac)
        return np.concatenate(rows, axis=0)
