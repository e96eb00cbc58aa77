"""Speed of the structure tools, one section per function.

Section ``radial``: all radial modes of a 2,000-point profile in the window
numax ± 4Δν, timed as the median of several runs (time.perf_counter). The
model is an n = 3 polytrope (Γ₁ = 5/3) scaled to a red giant of 1.2 M☉ and
8 R☉. numax comes from the scaling relation numax = numax☉ (g/g☉)
(Teff/Teff☉)^−½ with numax☉ = 3090 μHz, Teff☉ = 5772 K and Teff = 4800 K
(common practice; a polytrope has no acoustic cut-off to take it from). Δν for
the window is the asymptotic (2∫dr/c)⁻¹ of the model.

Target: under 1 s per call.

Run:  python benchmarks/structure.py [--repeat 5] [--points 2000]
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np

NUMAX_SUN_UHZ = 3090.0
TEFF_SUN_K = 5772.0
TARGET_RADIAL_S = 1.0


def _asymptotic_dnu_uhz(profile) -> float:
    """(2∫dr/c)⁻¹ in μHz with midpoint values, so the c = 0 surface point is not used."""
    c = np.sqrt(profile.c2)
    mid = 0.5 * (c[1:] + c[:-1])
    tau = np.sum(np.diff(profile.r) / mid)
    return 1e6 / (2.0 * tau)


def bench_radial(points: int = 2000, repeat: int = 5, teff: float = 4800.0) -> dict[str, float]:
    """Time `radial_modes` over numax ± 4Δν of a red-giant-scaled n = 3 polytrope."""
    from seismo.structure.polytropes import polytrope
    from seismo.structure.solver import radial_modes

    profile = polytrope(3.0, 1.2, 8.0, points=points)
    g_ratio = profile.mass_solar / profile.radius_solar**2
    numax = NUMAX_SUN_UHZ * g_ratio * (teff / TEFF_SUN_K) ** -0.5
    dnu = _asymptotic_dnu_uhz(profile)
    fmin, fmax = numax - 4.0 * dnu, numax + 4.0 * dnu
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        found = radial_modes(profile, fmin, fmax)
        times.append(time.perf_counter() - start)
    median = statistics.median(times)
    print(f"radial modes, {points}-point n=3 polytrope (1.2 Msun, 8 Rsun)")
    print(f"  numax {numax:.2f} uHz, asymptotic dnu {dnu:.3f} uHz, window "
          f"[{fmin:.2f}, {fmax:.2f}] uHz, {len(found)} modes "
          f"(n = {found[0].n}..{found[-1].n})" if found else "  no modes found")
    worst = max((m.error / m.frequency for m in found), default=float("nan"))
    print(f"  largest relative error estimate {worst:.1e}")
    print(f"  median of {repeat}: {median:.3f} s; target {TARGET_RADIAL_S:.1f} s; "
          f"ratio {median / TARGET_RADIAL_S:.2f}")
    return {"seconds": median, "target": TARGET_RADIAL_S, "modes": float(len(found))}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=2000, help="mesh points of the model")
    parser.add_argument("--repeat", type=int, default=5, help="timed runs per section")
    args = parser.parse_args(argv)
    bench_radial(points=args.points, repeat=args.repeat)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
