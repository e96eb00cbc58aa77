"""Speed of the structure tools, one section per function, ratios to the targets side by side.

Section ``radial``: all radial modes of a 2,000-point profile in the window
numax ± 4Δν, timed as the median of several runs (time.perf_counter), for an
n = 3 polytrope (Γ₁ = 5/3) scaled to a red giant of 1.2 M☉ and 8 R☉ and for the
illustrative composite (core–envelope) polytrope. numax comes from the scaling
relation numax = numax☉ (g/g☉)(Teff/Teff☉)^−½ with numax☉ = 3090 μHz,
Teff☉ = 5772 K and Teff = 4800 K (common practice; a polytrope has no acoustic
cut-off to take it from). Δν for the window is the asymptotic (2∫dr/c)⁻¹ of
the model. Section ``observables``: `seismic_observables` of the same profile.
Target for modes + observables: under 1 s.

Section ``grid``: `grid_estimate` per star on an invented 10^5-model grid
(500 tracks × 200 models), stars drawn from the grid with 1 % Δν, 2 % numax
and 80 K errors. Target: under 50 ms per star.

Run:  python benchmarks/structure.py [--repeat 5] [--points 2000] [--stars 200]
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np

NUMAX_SUN_UHZ = 3090.0
TEFF_SUN_K = 5772.0
TARGET_RADIAL_S = 1.0
TARGET_GRID_S = 0.050


def _asymptotic_dnu_uhz(profile) -> float:
    """(2∫dr/c)⁻¹ in μHz with midpoint values, so the c = 0 surface point is not used."""
    c = np.sqrt(profile.c2)
    mid = 0.5 * (c[1:] + c[:-1])
    tau = np.sum(np.diff(profile.r) / mid)
    return 1e6 / (2.0 * tau)


def bench_radial(points: int = 2000, repeat: int = 5, teff: float = 4800.0,
                 model: str = "polytrope") -> dict[str, float]:
    """Time `radial_modes` over numax ± 4Δν, and `seismic_observables`, of one model."""
    from seismo.structure.composite import composite_polytrope
    from seismo.structure.observables import seismic_observables
    from seismo.structure.polytropes import polytrope
    from seismo.structure.solver import radial_modes

    if model == "composite":
        profile = composite_polytrope(1.2, 8.0, points=points)
        title = f"composite polytrope, {profile.size} points (1.2 Msun, 8 Rsun)"
    else:
        profile = polytrope(3.0, 1.2, 8.0, points=points)
        title = f"n=3 polytrope, {profile.size} points (1.2 Msun, 8 Rsun)"
    g_ratio = profile.mass_solar / profile.radius_solar**2
    numax = NUMAX_SUN_UHZ * g_ratio * (teff / TEFF_SUN_K) ** -0.5
    dnu = _asymptotic_dnu_uhz(profile)
    fmin, fmax = numax - 4.0 * dnu, numax + 4.0 * dnu
    times, obs_times = [], []
    for _ in range(repeat):
        start = time.perf_counter()
        found = radial_modes(profile, fmin, fmax)
        times.append(time.perf_counter() - start)
        start = time.perf_counter()
        seismic_observables(profile, teff=teff, radial_frequencies=[m.frequency for m in found])
        obs_times.append(time.perf_counter() - start)
    median = statistics.median(times)
    obs_median = statistics.median(obs_times)
    print(f"radial modes + observables, {title}")
    print(f"  numax {numax:.2f} uHz, asymptotic dnu {dnu:.3f} uHz, window "
          f"[{fmin:.2f}, {fmax:.2f}] uHz, {len(found)} modes "
          f"(n = {found[0].n}..{found[-1].n})" if found else "  no modes found")
    worst = max((m.error / m.frequency for m in found), default=float("nan"))
    print(f"  largest relative error estimate {worst:.1e}")
    total = median + obs_median
    print(f"  median of {repeat}: modes {median:.3f} s + observables {obs_median:.3f} s = "
          f"{total:.3f} s; target {TARGET_RADIAL_S:.1f} s; ratio {total / TARGET_RADIAL_S:.2f}")
    return {"seconds": total, "target": TARGET_RADIAL_S, "modes": float(len(found))}


def _synthetic_grid(n_tracks: int = 500, n_models: int = 200):
    """An invented 10^5-model grid: RGB + clump tracks from scaling relations (timing only)."""
    from seismo.scaling import DEFAULT_REFERENCE, SOLAR_REFERENCES
    from seismo.structure.grid import ModelGrid

    ref = SOLAR_REFERENCES[DEFAULT_REFERENCE]
    masses = np.linspace(0.8, 3.0, n_tracks // 5)
    fehs = np.linspace(-0.6, 0.4, 5)
    m, fe, tau = np.meshgrid(masses, fehs, np.linspace(0.0, 1.0, n_models), indexing="ij")
    track = np.broadcast_to(np.arange(m.shape[0] * m.shape[1]).reshape(m.shape[:2])[..., None],
                            m.shape)
    rgb = tau < 0.8
    radius = np.where(rgb, 4.0 * 8.0 ** (tau / 0.8), 11.0 * m**0.3)
    teff = 4800.0 * (radius / 10.0) ** -0.1 * m**0.05 * 10.0 ** (-0.07 * fe)
    age = 10.0 * m**-2.5 * (1.0 + 0.1 * tau) * 10.0 ** (0.1 * fe)
    state = np.where(rgb, "RGB", np.where(m < 2.0, "RC", "2CL"))
    data = {
        "track": track.ravel(), "mass": m.ravel(), "age": age.ravel(), "feh": fe.ravel(),
        "teff": teff.ravel(), "radius": radius.ravel(),
        "dnu": (ref.dnu * np.sqrt(m / radius**3)).ravel(),
        "numax": (ref.numax * m / radius**2 / np.sqrt(teff / ref.teff)).ravel(),
        "dpi1": np.where(rgb, 90.0 - 30.0 * tau, 250.0 + 60.0 * tau).ravel(),
        "state": state.ravel(),
    }
    return ModelGrid(data)


def bench_grid(stars: int = 200, seed: int = 3) -> dict[str, float]:
    """Time `grid_estimate` per star on a 10^5-model grid."""
    from seismo.structure.grid import grid_estimate

    start = time.perf_counter()
    grid = _synthetic_grid()
    build = time.perf_counter() - start
    pts = grid.points()
    rng = np.random.default_rng(seed)
    picks = rng.choice(grid.n_points, size=stars)
    times = []
    for i in picks:
        dnu, numax, teff = pts["dnu"][i], pts["numax"][i], pts["teff"][i]
        start = time.perf_counter()
        grid_estimate(grid, dnu=dnu * (1 + 0.01 * rng.normal()), dnu_err=0.01 * dnu,
                      numax=numax * (1 + 0.02 * rng.normal()), numax_err=0.02 * numax,
                      teff=teff + 80.0 * rng.normal(), teff_err=80.0)
        times.append(time.perf_counter() - start)
    median, p95 = statistics.median(times), float(np.percentile(times, 95))
    print(f"grid estimate, {grid.n_models:,} models ({grid.n_points:,} refined points, built "
          f"in {build:.1f} s), {stars} stars")
    print(f"  per star: median {1e3 * median:.1f} ms, 95th percentile {1e3 * p95:.1f} ms; "
          f"target {1e3 * TARGET_GRID_S:.0f} ms; ratio {median / TARGET_GRID_S:.2f}")
    return {"seconds": median, "target": TARGET_GRID_S}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=2000, help="mesh points of the model")
    parser.add_argument("--repeat", type=int, default=5, help="timed runs per section")
    parser.add_argument("--stars", type=int, default=200, help="stars for the grid section")
    args = parser.parse_args(argv)
    rows = [
        ("radial modes + observables, n=3 polytrope",
         bench_radial(points=args.points, repeat=args.repeat)),
        ("radial modes + observables, composite",
         bench_radial(points=args.points, repeat=args.repeat, model="composite")),
        ("grid estimate per star, 10^5 models", bench_grid(stars=args.stars)),
    ]
    print()
    print(f"{'section':48s}{'time':>10s}{'target':>10s}{'ratio':>8s}")
    for label, row in rows:
        print(f"{label:48s}{row['seconds']:9.3f}s{row['target']:9.3f}s"
              f"{row['seconds'] / row['target']:8.2f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
