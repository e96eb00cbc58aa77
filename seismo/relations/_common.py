"""Shared helpers of `seismo.relations` (bare float64 handling, input checks)."""

from __future__ import annotations

from typing import Any

import numpy as np

from ..errors import OptionError

__all__: list[str] = []

# A frequency in μHz times a period in s times this is dimensionless.
_UHZ_S = 1e-6


def _out(value: np.ndarray) -> Any:
    """Return a Python float for 0-d results, the array otherwise."""
    value = np.asarray(value)
    return float(value) if value.ndim == 0 else value


def _positive(name: str, value: Any) -> np.ndarray:
    arr = np.asarray(value, dtype=np.float64)
    if not np.all(np.isfinite(arr)) or np.any(arr <= 0):
        raise OptionError(f"{name} must be finite and > 0; got {value!r}")
    return arr
