"""Accuracy of the global seismic parameters on simulated stars with known truth.

Simulates 4-year long-cadence red giants (RGB and clump, numax 20–220 μHz, a range of
noise levels) and noise-only stars, writes each as a FITS file, runs the whole analysis
(`seismo.pipeline.analyze`) and compares with the injected truth. Prints one row per star
and a summary table against the targets of issue 3:

- numax: median |relative error| ≤ 3 %, and the fraction within 1σ (≈ 68 % expected);
- Δν: median |relative error| ≤ 0.5 %;
- no detection for the noise-only stars; a detection for every star whose
  height-to-background ratio exceeds 2;
- scaling mass and radius recovered to the precision their errors imply (fraction of
  |error| / σ below 1; statistical errors only, the truth uses the same solar reference).

Run:  python benchmarks/accuracy.py [--stars 36] [--quiet-stars 20] [--seed 7]
"""

from __future__ import annotations

import argparse
import tempfile
import time
from dataclasses import replace
from pathlib import Path

import numpy as np

from seismo.config import AnalysisConfig, ScalingOptions, StarInputs
from seismo.pipeline import analyze
from seismo.relations import dnu_from_numax
from seismo.scaling import scaling_mass, scaling_radius
from seismo.simulate import OBSERVATIONS, PRESETS, model_psd, simulate, write_simulation


def star_sample(n: int, rng: np.random.Generator) -> list:
    """RGB and clump stars over numax 20–220 μHz with varied noise and amplitude."""
    stars = []
    for i in range(n):
        kind = ("rgb", "rgb", "clump")[i % 3]
        if kind == "clump":
            numax = float(rng.uniform(25.0, 60.0))
            base = PRESETS["clump"]
            dnu = float(dnu_from_numax(numax)) * float(rng.uniform(0.97, 1.03))
        else:
            numax = float(np.exp(rng.uniform(np.log(20.0), np.log(220.0))))
            base = PRESETS["rgb-mid"]
            dnu = None
        amp_scale = float(rng.uniform(0.5, 1.2))
        star = replace(
            base, id=f"SIM-{i:03d}", numax=numax, dnu=dnu,
            amplitude=amp_scale * 200.0 * (numax / 10.0) ** -0.7,
            white_noise=float(np.exp(rng.uniform(np.log(30.0), np.log(250.0)))),
            teff=float(rng.uniform(4500.0, 5100.0)),
        )
        stars.append(star)
    return stars


def quiet_sample(n: int, rng: np.random.Generator) -> list:
    base = PRESETS["quiet"]
    return [
        replace(base, id=f"QUIET-{i:03d}",
                numax=float(np.exp(rng.uniform(np.log(15), np.log(200)))),
                white_noise=float(np.exp(rng.uniform(np.log(30.0), np.log(250.0)))))
        for i in range(n)
    ]


def true_height_to_background(star, observation) -> float:
    """Mode power averaged over one Δν at numax, over the background there (limit spectra)."""
    dnu = star.resolved()["dnu"]
    freq = np.linspace(star.numax - dnu / 2, star.numax + dnu / 2, 4001)
    total = model_psd(star, observation, freq)
    background = model_psd(replace(star, oscillations=False), observation, freq)
    return float(np.mean(total - background) / np.mean(background))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--stars", type=int, default=36)
    parser.add_argument("--quiet-stars", type=int, default=20)
    parser.add_argument("--seed", type=int, default=7)
    args = parser.parse_args()
    rng = np.random.default_rng(args.seed)
    observation = OBSERVATIONS["long-cadence-4yr"]
    config = AnalysisConfig(scaling=ScalingOptions(systematic=False))
    rows = []
    start = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        for star in star_sample(args.stars, rng) + quiet_sample(args.quiet_stars, rng):
            sim = simulate(star, observation, rng=int(rng.integers(2**31)))
            path, _ = write_simulation(sim, Path(tmp) / f"{star.id}.fits")
            truth = sim.truth
            inputs = StarInputs(teff=truth["teff"], teff_err=80.0)
            t0 = time.perf_counter()
            res = analyze(path, config, inputs).result
            elapsed = time.perf_counter() - t0
            row = {"id": star.id, "osc": star.oscillations, "detected": res.detected,
                   "seconds": elapsed}
            if star.oscillations:
                row["hbr_true"] = true_height_to_background(star, observation)
                row["numax_true"], row["dnu_true"] = truth["numax"], truth["dnu"]
                m_true = scaling_mass(truth["numax"], truth["dnu"], truth["teff"])
                r_true = scaling_radius(truth["numax"], truth["dnu"], truth["teff"])
                row["mass_true"], row["radius_true"] = m_true, r_true
            for name in ("numax", "dnu", "mass", "radius"):
                m = getattr(res, name)
                row[name] = None if m is None else (m.value, m.error)
            rows.append(row)
            print(_row_text(row), flush=True)
    _summary(rows, time.perf_counter() - start)


def _row_text(row: dict) -> str:
    def pair(name: str) -> str:
        m = row.get(name)
        return "—" if m is None else f"{m[0]:.4g}±{m[1]:.2g}"

    truth = (f"numax {row['numax_true']:.4g} Δν {row['dnu_true']:.4g} HBR {row['hbr_true']:.2f}"
             if row["osc"] else "noise only")
    return (f"{row['id']:10s} {truth:42s} detected={row['detected']!s:5s} numax {pair('numax'):16s}"
            f" Δν {pair('dnu'):16s} M {pair('mass'):12s} R {pair('radius'):12s}"
            f" {row['seconds']:.2f}s")


def _summary(rows: list[dict], wall: float) -> None:
    osc = [r for r in rows if r["osc"]]
    quiet = [r for r in rows if not r["osc"]]
    strong = [r for r in osc if r["hbr_true"] > 2]

    def rel(name: str) -> np.ndarray:
        return np.array([abs(r[name][0] / r[f"{name}_true"] - 1) for r in osc if r[name]])

    def within(name: str) -> float:
        z = [abs(r[name][0] - r[f"{name}_true"]) / r[name][1] for r in osc
             if r[name] and r[name][1]]
        return float(np.mean(np.array(z) < 1)) if z else float("nan")

    numax_rel, dnu_rel = rel("numax"), rel("dnu")
    print()
    print(f"{'quantity':34s}{'measured':>14s}{'target':>14s}")
    print(f"{'numax median |rel. error|':34s}{np.median(numax_rel):14.2%}{'<= 3%':>14s}")
    print(f"{'numax fraction within 1 sigma':34s}{within('numax'):14.0%}{'~68%':>14s}")
    print(f"{'Δν median |rel. error|':34s}{np.median(dnu_rel):14.3%}{'<= 0.5%':>14s}")
    print(f"{'Δν fraction within 1 sigma':34s}{within('dnu'):14.0%}{'~68%':>14s}")
    print(f"{'Δν reported':34s}{len(dnu_rel):>9d} of {len(osc):<3d}{'':>14s}")
    print(f"{'noise-only stars detected':34s}{sum(r['detected'] for r in quiet):>9d} of "
          f"{len(quiet):<3d}{'0':>13s}")
    print(f"{'HBR > 2 stars detected':34s}{sum(r['detected'] for r in strong):>9d} of "
          f"{len(strong):<3d}{'all':>13s}")
    print(f"{'all oscillating stars detected':34s}{sum(r['detected'] for r in osc):>9d} of "
          f"{len(osc):<3d}")
    print(f"{'mass fraction within 1 sigma':34s}{within('mass'):14.0%}{'~68%':>14s}")
    print(f"{'radius fraction within 1 sigma':34s}{within('radius'):14.0%}{'~68%':>14s}")
    print(f"{'mass median |rel. error|':34s}{np.median(rel('mass')):14.2%}")
    print(f"{'radius median |rel. error|':34s}{np.median(rel('radius')):14.2%}")
    print(f"{'analysis time per star (median)':34s}"
          f"{np.median([r['seconds'] for r in rows]):13.2f}s")
    print(f"total wall time {wall:.0f} s for {len(rows)} stars")


if __name__ == "__main__":
    main()
