"""Regenerate the synthetic demo stars of the (invented) Halden field.

Run from the repository root::

    python demo_lightcurves/generate.py

Each star is written with a fixed seed, so the files are reproducible, next
to its truth file ``<id>.truth.json``. All data are synthetic.
"""

from __future__ import annotations

import dataclasses
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent

try:
    import seismo  # noqa: F401
except ImportError:  # running from a source checkout without installation
    sys.path.insert(0, str(HERE.parent))

from seismo.simulate import OBSERVATIONS, PRESETS, simulate, write_simulation  # noqa: E402

__all__ = ["DEMO_STARS", "main"]

#: id → (star preset, observation preset, file suffix, seed, description).
DEMO_STARS = {
    "HLD-0101": ("rgb-low", "long-cadence-4yr", ".fits", 101, "low-numax RGB"),
    "HLD-0102": ("rgb-high", "long-cadence-4yr", ".fits", 102, "high-numax RGB"),
    "HLD-0103": ("clump", "long-cadence-4yr", ".csv", 103, "red clump, core rotation"),
    "HLD-0104": ("secondary-clump", "long-cadence-4yr", ".fits", 104, "secondary clump"),
    "HLD-0105": ("quiet", "long-cadence-4yr", ".txt", 105, "no oscillations"),
    "HLD-0106": ("rgb-mid", "sector-30min", ".csv", 106, "RGB, one 30-min sector"),
}


def main(out_dir: Path = HERE) -> list[Path]:
    """Write every demo star into ``out_dir`` and return the light-curve paths."""
    written = []
    for star_id, (preset, obs_name, suffix, seed, _) in DEMO_STARS.items():
        start = time.perf_counter()
        star = dataclasses.replace(PRESETS[preset], id=star_id)
        sim = simulate(star, OBSERVATIONS[obs_name], seed)
        path, truth = write_simulation(sim, out_dir / f"{star_id}{suffix}")
        size = (path.stat().st_size + truth.stat().st_size) / 1e6
        print(f"{star_id}: {len(sim.truth['modes'])} mode components, {sim.time.size} "
              f"cadences, {size:.2f} MB, {time.perf_counter() - start:.1f} s -> {path.name}")
        written.append(path)
    return written


if __name__ == "__main__":
    main()
