"""The ``seismo model`` and ``seismo tracks`` commands: stellar models on the command line.

Thin over :mod:`seismo.structure`; called from :mod:`seismo.cli`, which owns
the exit codes and the error reporting.
"""

from __future__ import annotations

import argparse
import json
import math
from pathlib import Path
from typing import Any

from .errors import OptionError

__all__ = ["add_structure_parsers", "run_model", "run_tracks", "parse_degrees", "parse_columns"]

#: Default mode window without numax: up to this many asymptotic Δν.
_WINDOW_DNU = 10.0
#: ... and from this fraction of Δν (below it, g modes pile up towards zero frequency).
_WINDOW_LOW = 0.25


def parse_degrees(text: str) -> tuple[int, ...]:
    """``"0,1,2"`` → ``(0, 1, 2)``; raises `OptionError` for anything else."""
    try:
        degrees = tuple(sorted({int(part) for part in text.split(",") if part.strip()}))
    except ValueError:
        raise OptionError(f"--modes takes degrees separated by commas, as in 0,1,2; "
                          f"got {text!r}") from None
    if not degrees or min(degrees) < 0 or max(degrees) > 10:
        raise OptionError(f"--modes degrees must be between 0 and 10; got {text!r}")
    return degrees


def parse_columns(items: list[str] | None) -> dict[str, str]:
    """``["r=radius_cm", "rho=density"]`` → ``{"r": "radius_cm", "rho": "density"}``."""
    mapping: dict[str, str] = {}
    for item in items or []:
        ours, eq, theirs = item.partition("=")
        if not eq or not ours.strip() or not theirs.strip():
            raise OptionError(f"--column takes OURS=THEIRS, as in rho=density; got {item!r}")
        mapping[ours.strip()] = theirs.strip()
    return mapping


def add_structure_parsers(sub: Any) -> None:
    """Add the ``model`` and ``tracks`` sub-commands to the ``seismo`` parser."""
    from .scaling import SOLAR_REFERENCES
    from .structure.builtin import BUILTIN_MODELS

    builtins = "; ".join(f"{k}: {v[1]}" for k, v in BUILTIN_MODELS.items())
    model = sub.add_parser(
        "model", help="seismic observables and oscillation modes of a stellar model",
        description="Read a stellar-model profile (or build a built-in model) and print its "
                    "asymptotic Δν and ΔΠ1, scaling numax and Δν, acoustic cut-off, mode "
                    "cavities and, with --modes, its adiabatic oscillation frequencies. "
                    f"Built-in models: {builtins}.",
    )
    model.add_argument("profile", metavar="PROFILE",
                       help="profile table (.ecsv, .csv, .txt, .fits; cgs columns r, m, rho, "
                            "p, gamma1 [, n2]) or a built-in model such as polytrope:3, "
                            "polytrope:1.5,mass=1.2,radius=8, homogeneous, composite")
    model.add_argument("--json", action="store_true",
                       help="print one JSON object (observables and modes) instead of text")
    model.add_argument("--modes", metavar="DEGREES",
                       help="compute the modes of these degrees, e.g. 0,1,2")
    model.add_argument("--fmin", type=float, metavar="UHZ",
                       help="lowest mode frequency, μHz (default numax − 4Δν, or Δν/4)")
    model.add_argument("--fmax", type=float, metavar="UHZ",
                       help="highest mode frequency, μHz (default numax + 4Δν, or 10Δν)")
    model.add_argument("--cowling", action="store_true",
                       help="non-radial modes in the Cowling approximation (Φ′ = 0; "
                            "approximate, and said so in the output)")
    model.add_argument("--max-modes", type=int, default=500, metavar="N",
                       help="refuse a window expected to hold more than N modes per degree "
                            "(default 500)")
    model.add_argument("--teff", type=float, metavar="K",
                       help="effective temperature, K (overrides the profile's)")
    model.add_argument("--mass", type=float, metavar="MSUN",
                       help="total mass, M☉ (overrides the profile's metadata)")
    model.add_argument("--radius", type=float, metavar="RSUN",
                       help="photospheric radius, R☉ (overrides the profile's metadata)")
    model.add_argument("--column", action="append", metavar="OURS=THEIRS",
                       help="read our column OURS from the file's column THEIRS "
                            "(repeatable), e.g. --column rho=density")
    model.add_argument("--reference", default="huber2011", choices=sorted(SOLAR_REFERENCES),
                       help="solar reference values of the scaling relations")
    model.add_argument("--plot", metavar="FILE",
                       help="write a figure (.png): the propagation diagram and, with --modes, "
                            "the échelle of the modes with the asymptotic dipole spectrum")

    tracks = sub.add_parser(
        "tracks", help="draw model tracks over an observed (Δν, ΔΠ1) diagram",
        description="Read model tracks (folders of profiles, or tables of global quantities "
                    "per model) and draw them over the (Δν, ΔΠ1) and numax–Δν diagrams of a "
                    "survey catalog. 'demo' names three tracks of the bundled demo grid "
                    "(invented for illustration).",
    )
    tracks.add_argument("tracks", nargs="+", metavar="TRACKS",
                        help="folder of profile files, track table (.ecsv, .csv, .fits), "
                             "or 'demo'")
    tracks.add_argument("--catalog", metavar="FILE",
                        help="survey catalog to draw under the tracks (from seismo survey)")
    tracks.add_argument("--plot", required=True, metavar="FILE", help="figure to write (.png)")
    tracks.add_argument("--column", action="append", metavar="OURS=THEIRS",
                        help="column mapping for track tables (repeatable)")
    tracks.add_argument("--pattern", default="*", metavar="GLOB",
                        help="profile files to take from a folder (default all)")


def _load_model(args: argparse.Namespace) -> Any:
    from .structure.builtin import builtin_model, is_builtin_model
    from .structure.constants import M_SUN_G, R_SUN_CM
    from .structure.reading import read_profile

    for name in ("mass", "radius", "teff"):
        value = getattr(args, name)
        if value is not None and not (math.isfinite(value) and value > 0):
            raise OptionError(f"--{name} must be positive; got {value}")
    if is_builtin_model(args.profile) and not Path(args.profile).exists():
        if args.column or args.mass or args.radius:
            raise OptionError("--column, --mass and --radius apply to profile files; give a "
                              "built-in model's mass and radius in its name, as in "
                              "polytrope:3,mass=1.2,radius=8")
        return builtin_model(args.profile)
    return read_profile(
        args.profile, columns=parse_columns(args.column) or None,
        mass=None if args.mass is None else args.mass * M_SUN_G,
        radius=None if args.radius is None else args.radius * R_SUN_CM,
    )


def _mode_window(args: argparse.Namespace, obs: Any) -> tuple[float, float]:
    dnu = obs.dnu_asym
    if obs.numax is not None:
        lo, hi = obs.numax - 4.0 * dnu, obs.numax + 4.0 * dnu
    else:
        lo, hi = _WINDOW_LOW * dnu, _WINDOW_DNU * dnu
    lo = args.fmin if args.fmin is not None else max(lo, _WINDOW_LOW * dnu)
    hi = args.fmax if args.fmax is not None else hi
    if not (lo > 0 and hi > lo):
        raise OptionError(f"the mode window must satisfy 0 < fmin < fmax; got {lo:g}–{hi:g} μHz")
    return lo, hi


def _mode_dict(mode: Any) -> dict[str, Any]:
    def num(x: float) -> float | None:
        return float(x) if math.isfinite(x) else None

    return {"l": int(mode.l), "n": int(mode.n), "n_p": int(mode.n_p), "n_g": int(mode.n_g),
            "frequency": num(mode.frequency), "error": num(mode.error),
            "sigma2": num(mode.sigma2), "period": num(mode.period),
            "inertia": num(mode.inertia), "cowling": bool(mode.cowling)}


def _fmt(value: Any, unit: str = "", digits: int = 5) -> str:
    if value is None:
        return "—"
    if isinstance(value, (list, tuple)):
        return "–".join(f"{v:.4g}" for v in value) + unit
    return f"{value:.{digits}g}{unit}"


def _model_text(profile: Any, obs: Any, window: tuple[float, float] | None,
                mode_list: list[Any], cowling: bool) -> str:
    o = obs.to_dict()
    source = profile.meta.get("spec") or profile.meta.get("path")
    lines = [
        f"{profile.name}  ({profile.size:,} mesh points" + (f"; {source})" if source else ")"),
        f"  mass       {_fmt(o['mass'], ' M☉', 5)}    radius {_fmt(o['radius'], ' R☉', 5)}    "
        f"log g {_fmt(o['logg'], ' dex', 5)}    Teff {_fmt(o['teff'], ' K', 5)}",
        f"  Δν         asymptotic {_fmt(o['dnu_asym'], ' μHz')}   scaling "
        f"{_fmt(o['dnu_scaling'], ' μHz')}   f_Δν {_fmt(o['f_dnu'], '', 4)}",
    ]
    if o.get("dnu_modes") is not None:
        lines.append(f"  Δν modes   {_fmt(o['dnu_modes'], ' μHz')} (fit of the radial modes)   "
                     f"f_Δν {_fmt(o['f_dnu_modes'], '', 4)}")
    lines += [
        f"  numax      {_fmt(o['numax'], ' μHz')} (scaling relation, reference {o['reference']})",
        f"  ΔΠ1        {_fmt(o['dpi1'], ' s')} (asymptotic, buoyancy integral)",
        f"  cut-off    model {_fmt(o['nu_ac_model'], ' μHz')}   scaling "
        f"{_fmt(o['nu_ac_scaling'], ' μHz')}",
    ]
    if o.get("cavity_frequency") is not None:
        lines.append(
            f"  l=1 at {o['cavity_frequency']:.4g} μHz: g cavity {_fmt(o['g_cavity'], ' R')}, "
            f"evanescent {_fmt(o['evanescent_zone'], ' R')}, p cavity {_fmt(o['p_cavity'], ' R')}"
            f"; weak-coupling q ≈ {_fmt(o['q_weak'], '', 3)} (approximate)")
    if o["flags"]:
        lines.append(f"  flags      {', '.join(o['flags'])}")
    if window is not None:
        lines.append(f"  modes      {len(mode_list)} in {window[0]:.4g}–{window[1]:.4g} μHz"
                     + ("  (Cowling approximation: Φ′ neglected)" if cowling else ""))
        lines.append("      l     n   n_p   n_g    ν (μHz)      error      σ²=ω²R³/GM")
        for m in mode_list:
            err = "—" if not math.isfinite(m.error) else f"{m.error:.1e}"
            lines.append(f"    {m.l:3d} {m.n:5d} {m.n_p:5d} {m.n_g:5d} {m.frequency:12.6f} "
                         f"{err:>10s} {m.sigma2:14.8g}")
    return "\n".join(lines)


def order_flags(mode_list: list[Any]) -> list[str]:
    """Flags for degrees whose mode orders do not increase with frequency.

    The Eckart–Scuflaire–Osaki node count is not invariant in strongly
    condensed models (red-giant cores), where dipole modes need Takata's
    (2006) scheme, which `seismo.structure.solver` does not implement; the
    frequencies are unaffected, the labels are then unreliable.
    """
    flags = []
    for l in sorted({m.l for m in mode_list}):
        orders = [m.n for m in sorted((m for m in mode_list if m.l == l),
                                      key=lambda m: m.frequency)]
        if any(b <= a for a, b in zip(orders, orders[1:], strict=False)):
            flags.append(f"modes_l{l}_order_unreliable")
    return flags


def resolution_flags(mode_list: list[Any]) -> list[str]:
    """Flags for degrees with modes that have no error estimate.

    The estimate compares each mode with its counterpart on the mesh of every
    other point; where that coarser mesh cannot follow a mode (dense g-dominated
    modes with few points per node) the error is NaN and nothing vouches for
    the frequency: a composite model with 4 points per node of its g modes gave
    period spacings 17 % too large. Check convergence with a finer mesh.
    """
    return [f"modes_l{l}_no_error_estimate" for l in sorted({m.l for m in mode_list})
            if any(not math.isfinite(m.error) for m in mode_list if m.l == l)]


def _finite(x: float) -> float | None:
    return float(x) if math.isfinite(x) else None


def run_model(args: argparse.Namespace) -> int:
    """``seismo model``: print the observables (and modes) of one stellar model."""
    from .structure.observables import seismic_observables
    from .structure.profiles import check_profile
    from .structure.solver import modes

    profile = _load_model(args)
    degrees = parse_degrees(args.modes) if args.modes else ()
    if args.max_modes < 1:
        raise OptionError(f"--max-modes must be at least 1; got {args.max_modes}")
    obs = seismic_observables(profile, teff=args.teff, reference=args.reference)
    window = None
    mode_list: list[Any] = []
    if degrees:
        window = _mode_window(args, obs)
        mode_list = modes(profile, degrees, *window, cowling=args.cowling,
                          max_modes=args.max_modes)
        radial = [m.frequency for m in mode_list if m.l == 0]
        if len(radial) >= 3:
            obs = seismic_observables(profile, teff=args.teff, reference=args.reference,
                                      radial_frequencies=radial)
    flags = order_flags(mode_list) + resolution_flags(mode_list)
    check = check_profile(profile, warn=False)
    checks = {"mass_mismatch": _finite(check.mass_mismatch),
              "total_mass_mismatch": _finite(check.total_mass_mismatch),
              "hydrostatic_median": _finite(check.hydrostatic_median),
              "hydrostatic_max": _finite(check.hydrostatic_max),
              "warnings": list(check.warnings)}
    figure = None
    if args.plot:
        from .structure.figures import plot_model

        figure = plot_model(profile, obs, mode_list if degrees else None, path=args.plot)
    if args.json:
        out = {
            "model": profile.name,
            "source": profile.meta.get("spec") or profile.meta.get("path"),
            "mesh_points": profile.size,
            "observables": obs.to_dict(),
            "modes": [_mode_dict(m) for m in mode_list],
            "mode_window": None if window is None else list(window),
            "mode_units": {"frequency": "μHz", "error": "μHz", "sigma2": "ω²R³/(GM)",
                           "period": "s", "inertia": "M ξ_r(R)²"},
            "cowling": bool(args.cowling) if degrees else None,
            "mode_flags": flags,
            "profile_check": checks,
            "figure": None if figure is None else str(figure),
        }
        print(json.dumps(out, ensure_ascii=False))
    else:
        print(_model_text(profile, obs, window, mode_list, args.cowling))
        print(f"  checks     m against ∫4πr²ρ dr {_fmt(checks['mass_mismatch'], '', 2)}, "
              f"hydrostatic residual median {_fmt(checks['hydrostatic_median'], '', 2)} / "
              f"max {_fmt(checks['hydrostatic_max'], '', 2)} (relative)")
        for warning in check.warnings:
            print(f"  warning    {warning}")
        for flag in flags:
            if flag.endswith("_no_error_estimate"):
                print(f"  note       {flag}: the coarser mesh of the error estimate cannot "
                      "follow some modes (—); check that their frequencies converge on a "
                      "finer mesh (e.g. points=32001 for a built-in model)")
            else:
                print(f"  note       {flag}: the node count does not order these modes "
                      "(strongly condensed core; Takata's dipole scheme is not implemented); "
                      "the frequencies stand, the orders n do not")
        if figure is not None:
            print(f"  figure     {figure}")
    return 0


def run_tracks(args: argparse.Namespace) -> int:
    """``seismo tracks``: draw tracks over a survey catalog."""
    from .errors import MissingFileError
    from .structure.figures import plot_tracks
    from .structure.tracks import demo_tracks, read_tracks

    columns = parse_columns(args.column) or None
    tracks: list[Any] = []
    for item in args.tracks:
        if item == "demo" and not Path(item).exists():
            tracks += demo_tracks()
        else:
            tracks += read_tracks([item], columns=columns, pattern=args.pattern)
    catalog = None
    if args.catalog:
        if not Path(args.catalog).is_file():
            raise MissingFileError("catalog not found", path=args.catalog,
                                   hint="write one with 'seismo survey' or 'seismo catalog'")
        from astropy.table import Table

        catalog = Table.read(args.catalog)
    figure = plot_tracks(tracks, catalog, path=args.plot)
    for track in tracks:
        print(f"  track    {track.label}: {len(track)} models")
    if catalog is not None:
        print(f"  catalog  {args.catalog} ({len(catalog)} stars)")
    print(f"  figure   {figure}")
    return 0
