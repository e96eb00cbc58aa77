"""The ``seismo`` command line: a thin layer over the library.

Exit status: 0 success; 1 when at least one input could not be analysed;
2 for usage errors; 3 for an unexpected internal error.
"""

from __future__ import annotations

import argparse
import sys
import warnings
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from . import __version__
from .errors import OptionError, SeismoError

__all__ = ["main", "build_parser", "LIGHTCURVE_SUFFIXES"]

#: File suffixes taken as light curves when a folder is given.
LIGHTCURVE_SUFFIXES = (".fits", ".fit", ".fts", ".fits.gz", ".csv", ".ecsv", ".txt", ".dat")

EXIT_OK, EXIT_INPUT, EXIT_USAGE, EXIT_INTERNAL = 0, 1, 2, 3


def _add_read_options(parser: argparse.ArgumentParser) -> None:
    from .lightcurve.readers import FLUX_UNITS

    group = parser.add_argument_group("reading")
    group.add_argument("--format", default="auto",
                       choices=["auto", "fits", "ecsv", "csv", "text"],
                       help="input format (default: sniffed from the file)")
    group.add_argument("--time-column", help="name of the time column, if detection fails")
    group.add_argument("--flux-column", help="name of the flux column, if detection fails")
    group.add_argument("--error-column", help="name of the flux-error column")
    group.add_argument("--quality-column", help="name of the quality-flag column")
    group.add_argument("--quality-bitmask", type=int, default=None, metavar="INT",
                       help="drop rows whose quality has any of these bits set "
                            "(default: drop every non-zero quality; 0 keeps all rows)")
    group.add_argument("--flux-unit", default="auto", choices=list(FLUX_UNITS),
                       help="how to interpret the flux (default: inferred and reported)")
    group.add_argument("--time-unit", default="auto", choices=["auto", "d", "h", "min", "s"],
                       help="unit of the time column (default: the file's unit, else days)")
    group.add_argument("--hdu", help="FITS extension (name or index) holding the light curve")
    group.add_argument("--id", dest="star_id", help="star identifier to record")


def _add_condition_options(parser: argparse.ArgumentParser) -> None:
    group = parser.add_argument_group("conditioning")
    group.add_argument("--gap-days", type=float, default=0.5, metavar="D",
                       help="start a new segment at gaps longer than D days (default 0.5)")
    group.add_argument("--clip-sigma", type=float, default=5.0, metavar="K",
                       help="clip points K robust sigmas from the median of their neighbours; "
                            "0 disables (default 5)")
    group.add_argument("--highpass", type=float, default=3.0, metavar="UHZ",
                       help="remove trends; signal above UHZ μHz keeps 99%% of its amplitude; "
                            "0 disables (default 3)")
    group.add_argument("--min-points", type=int, default=300, metavar="N",
                       help="fewest valid points accepted (default 300)")
    group.add_argument("--min-baseline", type=float, default=3.0, metavar="D",
                       help="shortest accepted time span in days (default 3)")


def _add_spectrum_options(parser: argparse.ArgumentParser) -> None:
    group = parser.add_argument_group("spectrum")
    group.add_argument("--method", default="auto",
                       choices=["auto", "fft", "nufft", "lombscargle", "direct"],
                       help="transform (default: fft on a regular cadence grid, else nufft)")
    group.add_argument("--oversample", type=float, default=1.0, metavar="X",
                       help="frequency grid finer than 1/T by this factor (default 1)")
    group.add_argument("--fmax", type=float, default=None, metavar="UHZ",
                       help="highest frequency in μHz (default Nyquist)")


def _add_science_options(parser: argparse.ArgumentParser) -> None:
    from .scaling import CORRECTIONS, SOLAR_REFERENCES

    group = parser.add_argument_group("detection and scaling relations")
    group.add_argument("--false-alarm", type=float, default=1e-4, metavar="P",
                       help="largest false-alarm probability accepted as a detection "
                            "(default 1e-4)")
    group.add_argument("--teff", type=float, metavar="K",
                       help="effective temperature in K (needed for mass and radius)")
    group.add_argument("--teff-err", type=float, metavar="K",
                       help="1-sigma error of --teff in K (default 100 K when --teff is given)")
    group.add_argument("--reference", default="huber2011", choices=sorted(SOLAR_REFERENCES),
                       help="solar reference values of the scaling relations (default "
                            "huber2011; see docs/guide.md)")
    group.add_argument("--correction", default="none", choices=["none", *CORRECTIONS],
                       help="empirical correction of scaling masses and radii (default none)")
    group.add_argument("--f-dnu", type=float, default=1.0, metavar="F",
                       help="model-based correction factor of the Δν scaling relation "
                            "(default 1)")
    group.add_argument("--feh", type=float, metavar="DEX",
                       help="metallicity [Fe/H] in dex (used by --grid)")
    group.add_argument("--feh-err", type=float, metavar="DEX",
                       help="1-sigma error of --feh in dex (default 0.1)")
    _add_grid_options(group)


def _add_grid_options(group: Any) -> None:
    from .structure.grid import MASS_PRIORS

    group.add_argument("--grid", metavar="GRID",
                       help="grid of model tracks (.ecsv, .csv, .fits; see docs/structure.md) "
                            "for grid-based mass, radius and age, or 'demo' for the bundled "
                            "demo grid (invented for illustration)")
    group.add_argument("--mass-prior", default=None, choices=sorted(MASS_PRIORS),
                       help="prior on the mass of the grid models (default flat)")


def build_parser() -> argparse.ArgumentParser:
    """Return the argument parser of the ``seismo`` command."""
    parser = argparse.ArgumentParser(
        prog="seismo",
        description="Red-giant asteroseismology from raw light curves.",
    )
    parser.add_argument("--version", action="version", version=f"seismo {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")

    analyze = sub.add_parser(
        "analyze", help="analyse light curves (files or folders)",
        description="Read, condition and transform light curves; print a summary and "
                    "optionally write vetting figures.",
    )
    analyze.add_argument("inputs", nargs="+", metavar="PATH",
                         help="light-curve file(s), or folders searched for "
                              + ", ".join(LIGHTCURVE_SUFFIXES))
    analyze.add_argument("--plot", metavar="DIR", help="write one figure per star into DIR")
    analyze.add_argument("--json", action="store_true",
                         help="print the result of each star as one JSON object per line "
                              "(the schema of docs/guide.md) instead of the summary")
    analyze.add_argument("--debug", action="store_true",
                         help="show the traceback of unexpected errors")
    _add_read_options(analyze)
    _add_condition_options(analyze)
    _add_spectrum_options(analyze)
    _add_science_options(analyze)

    simulate = sub.add_parser(
        "simulate", help="write a synthetic red-giant light curve with its truth",
        description="Simulate a red giant (stochastic modes, granulation, noise, instrument) "
                    "and write the light curve with a .truth.json beside it.",
    )
    from .simulate import OBSERVATIONS, PRESETS

    simulate.add_argument("output", metavar="FILE",
                          help="output file: .fits, .csv or .txt (truth written beside it)")
    simulate.add_argument("--preset", default="rgb-low", choices=sorted(PRESETS),
                          help="kind of star (default rgb-low)")
    simulate.add_argument("--observation", default="long-cadence-4yr",
                          choices=sorted(OBSERVATIONS),
                          help="cadence and window (default long-cadence-4yr)")
    simulate.add_argument("--seed", type=int, default=None, help="random seed")
    simulate.add_argument("--id", dest="star_id", help="star identifier")
    simulate.add_argument("--numax", type=float, help="frequency of maximum power, μHz")
    simulate.add_argument("--dnu", type=float, help="large frequency separation, μHz")
    simulate.add_argument("--dpi1", type=float, help="dipole period spacing, s")
    simulate.add_argument("--q", type=float, help="mixed-mode coupling factor")
    simulate.add_argument("--rot-core", type=float, help="core rotational splitting, μHz")
    simulate.add_argument("--inclination", type=float, help="inclination, degrees")
    simulate.add_argument("--white-noise", type=float, help="white noise per cadence, ppm")
    simulate.add_argument("--duration", type=float, help="observing span, days")
    simulate.add_argument("--no-oscillations", action="store_true",
                          help="granulation and noise only")
    _add_survey_parsers(sub)
    from .cli_structure import add_structure_parsers

    add_structure_parsers(sub)
    return parser


def _add_survey_parsers(sub: Any) -> None:
    survey = sub.add_parser(
        "survey", help="analyse many light curves into a resumable ledger and a catalog",
        description="Analyse every star of INPUTS with one configuration. Each star is "
                    "recorded in DIR/ledger.sqlite as it finishes; running the same command "
                    "again resumes where it stopped.",
    )
    survey.add_argument("inputs", metavar="INPUTS",
                        help="a folder (searched recursively), a text file listing one path "
                             "per line, or a table (.csv, .ecsv, .fits) with a 'path' column "
                             "and optional id, teff, teff_err, feh columns")
    survey.add_argument("--out", required=True, metavar="DIR",
                        help="survey folder for the ledger and the catalog")
    survey.add_argument("--config", metavar="FILE.toml",
                        help="analysis settings: sections [read], [condition], [spectrum], "
                             "[detection], [scaling] (default settings otherwise)")
    survey.add_argument("--workers", type=int, default=None, metavar="N",
                        help="worker processes (default: number of cores)")
    survey.add_argument("--timeout-per-star", type=float, default=None, metavar="S",
                        help="give up on a star after S seconds (recorded as failed)")
    survey.add_argument("--retry-failed", action="store_true",
                        help="analyse stars recorded as failed again")
    survey.add_argument("--dask", metavar="ADDRESS",
                        help="run on a Dask cluster: a scheduler address, or 'local' for a "
                             "local cluster (needs seismo[dask])")
    survey.add_argument("--catalog", metavar="FILE",
                        help="catalog to write at the end: .ecsv, .fits, .csv or .parquet "
                             "(default DIR/catalog.ecsv); failures go to FILE.failed.*")
    survey.add_argument("--pattern", metavar="GLOB",
                        help="file names to take from a folder (default: every light-curve "
                             "suffix)")
    survey.add_argument("--seed", type=int, default=0,
                        help="run seed; each star's seed derives from it and the file's "
                             "checksum (default 0)")
    survey.add_argument("--quiet", action="store_true",
                        help="no progress and no summary")
    _add_grid_options(survey)

    catalog = sub.add_parser(
        "catalog", help="export the catalog of a survey folder",
        description="Write one row per analysed star of DIR's ledger, and the failed stars "
                    "with their reasons beside it.",
    )
    catalog.add_argument("directory", metavar="DIR", help="survey folder (holds ledger.sqlite)")
    catalog.add_argument("--out", metavar="FILE",
                         help="catalog file: .ecsv, .fits, .csv or .parquet "
                              "(default DIR/catalog.ecsv)")


class _UsageError(Exception):
    pass


def _collect_inputs(paths: Sequence[str]) -> list[Path]:
    found: list[Path] = []
    for raw in paths:
        path = Path(raw)
        if path.is_dir():
            files = sorted(
                p for p in path.rglob("*")
                if p.is_file() and any(p.name.lower().endswith(s) for s in LIGHTCURVE_SUFFIXES)
            )
            if not files:
                raise _UsageError(f"{path}: folder holds no light-curve files "
                                  f"({', '.join(LIGHTCURVE_SUFFIXES)})")
            found.extend(files)
        else:
            found.append(path)
    return found


def _config_from_args(args: argparse.Namespace) -> Any:
    from .background import DetectionOptions
    from .config import AnalysisConfig, GridOptions, ScalingOptions, SpectrumOptions
    from .lightcurve import ConditionOptions, ReadOptions

    hdu: int | str | None = args.hdu
    if isinstance(hdu, str) and hdu.isdigit():
        hdu = int(hdu)
    return AnalysisConfig(
        read=ReadOptions(
            format=args.format, time_column=args.time_column, flux_column=args.flux_column,
            error_column=args.error_column, quality_column=args.quality_column,
            quality_bitmask=args.quality_bitmask, flux_unit=args.flux_unit,
            time_unit=args.time_unit, hdu=hdu, star_id=args.star_id,
        ),
        condition=ConditionOptions(
            gap_days=args.gap_days, clip_sigma=args.clip_sigma, highpass_uhz=args.highpass,
            min_points=args.min_points, min_baseline_days=args.min_baseline,
        ),
        spectrum=SpectrumOptions(method=args.method, oversample=args.oversample, fmax=args.fmax),
        detection=DetectionOptions(false_alarm=args.false_alarm),
        scaling=ScalingOptions(reference=args.reference, correction=args.correction,
                               f_dnu=args.f_dnu),
        grid=GridOptions(path=args.grid, mass_prior=args.mass_prior or "flat"),
    )


def _inputs_from_args(args: argparse.Namespace) -> Any:
    from .config import StarInputs

    if args.teff_err is not None and args.teff is None:
        raise OptionError("--teff-err was given without --teff")
    if args.feh_err is not None and args.feh is None:
        raise OptionError("--feh-err was given without --feh")
    teff_err = args.teff_err if args.teff_err is not None else (
        100.0 if args.teff is not None else None)
    return StarInputs(teff=args.teff, teff_err=teff_err, feh=args.feh, feh_err=args.feh_err)


def _fmt(m: Any, unit: str = "", digits: int = 4) -> str:
    if m is None:
        return "—"
    err = "" if m.error is None else f" ± {m.error:.{digits - 2}g}"
    return f"{m.value:.{digits}g}{err}{unit}"


def _rivals_text(r: Any) -> str:
    # ΔΠ1 withheld, but candidate values bracket it (tied solutions, or a rotating
    # solution and its refit without rotation): show them, the state may rest on them.
    rivals = (r.details.get("mixed") or {}).get("dpi1_rivals") or []
    if r.dpi1 is not None or not rivals:
        return ""
    return " (candidate values: " + ", ".join(f"{x['value']:.1f}" for x in rivals) + " s)"


def _human_summary(analysis: Any, figure: Path | None) -> str:
    from .scaling import BIAS_NOTE
    from .state import describe_state

    r = analysis.result
    s = r.details["lightcurve"]
    lines = [
        f"{r.id}  ({s['source']}, {s['format']}; flux read as {s['flux_assumed']})",
        f"  data       {s['n_points']:,} points kept of {s['n_rows']:,} (flagged "
        f"{s['n_flagged_dropped']:,}, non-finite {s['n_nonfinite_dropped']:,}, outliers "
        f"{s['n_outliers_clipped']:,}); {s['n_segments']} segments over "
        f"{s['baseline_days']:.1f} d at {s['cadence_min']:.3g}-min cadence",
        f"  spectrum   Nyquist {s['nyquist_uhz']:.2f} μHz, resolution "
        f"{s['resolution_uhz']:.3g} μHz ({s['spectrum_method']})",
    ]
    det = r.details["detection"]
    if not r.detected:
        lines.append(f"  detection  none: no oscillation excess (false-alarm probability "
                     f"{det['false_alarm']:.2g}); no seismic values are reported")
    else:
        bg = r.details.get("background", {})
        lines += [
            f"  detection  yes (false-alarm probability {det['false_alarm']:.2g}); "
            f"height/background {bg.get('height_to_background', float('nan')):.3g}",
            f"  numax      {_fmt(r.numax, ' μHz')}",
            f"  Δν         {_fmt(r.dnu, ' μHz', 5)}",
            f"  ε          {_fmt(r.eps_p, '', 3)}",
            f"  mass       {_fmt(r.mass, ' M☉', 3)}",
            f"  radius     {_fmt(r.radius, ' R☉', 3)}",
            f"  log g      {_fmt(r.logg, ' dex', 4)}",
            f"  ΔΠ1        {_fmt(r.dpi1, ' s', 5)}" + _rivals_text(r),
            f"  q          {_fmt(r.q, '', 3)}",
            f"  ε_g        {_fmt(r.eps_g, '', 3)}",
            f"  core rot.  {_fmt(r.rot_core, ' μHz', 3)}",
            f"  state      {describe_state(r.state, r.state_probability, r.flags)}",
        ]
        if r.mass is not None:
            lines.append(f"  note       {BIAS_NOTE}")
    grid = r.details.get("grid")
    if grid:
        lines.append(_grid_line(grid))
    if r.flags:
        lines.append(f"  flags      {', '.join(r.flags)}")
    if figure is not None:
        lines.append(f"  figure     {figure}")
    return "\n".join(lines)


def _grid_line(grid: dict[str, Any]) -> str:
    parts = []
    for key, unit in (("mass", " M☉"), ("radius", " R☉"), ("age", " Gyr")):
        m = grid.get(key)
        if m and m.get("value") is not None:
            lo, hi = m.get("err_lo"), m.get("err_hi")
            spread = "" if lo is None or hi is None else f" −{lo:.2g}/+{hi:.2g}"
            parts.append(f"{key} {m['value']:.3g}{spread}{unit}")
    if not parts:
        return "  grid       no estimate (" + ", ".join(grid.get("flags") or ["no models"]) + ")"
    text = ", ".join(parts)
    n_eff = grid.get("n_eff")
    extra = "" if n_eff is None else f" ({n_eff:.0f} effective models)"
    return f"  grid       {text}{extra}"


def _run_analyze(args: argparse.Namespace) -> int:
    from .pipeline import analyze

    config = _config_from_args(args)
    inputs = _inputs_from_args(args)
    paths = _collect_inputs(args.inputs)
    status = EXIT_OK
    for path in paths:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            try:
                analysis = analyze(path, config, inputs)
                figure = None
                if args.plot:
                    from .plots import plot_star

                    name = str(analysis.result.id or path.stem).replace("/", "_")
                    figure = plot_star(analysis, Path(args.plot) / f"{name}.png")
            except SeismoError as err:
                err.with_path(str(path))
                print(f"seismo: error: {err.one_line()}", file=sys.stderr)
                status = EXIT_INPUT
                continue
            except Exception as exc:
                if args.debug:
                    raise
                print(f"seismo: internal error on {path}: {type(exc).__name__}: {exc} "
                      "(rerun with --debug for details, and please report it)", file=sys.stderr)
                status = max(status, EXIT_INTERNAL)
                continue
        for w in caught:
            if issubclass(w.category, UserWarning):
                print(f"seismo: note: {w.message}", file=sys.stderr)
        if args.json:
            print(analysis.result.to_json())
        else:
            print(_human_summary(analysis, figure))
    return status


def _run_simulate(args: argparse.Namespace) -> int:
    from dataclasses import replace

    from .simulate import OBSERVATIONS, PRESETS, simulate, write_simulation

    star = PRESETS[args.preset]
    changes = {
        name: getattr(args, attr)
        for name, attr in (
            ("numax", "numax"), ("dnu", "dnu"), ("dpi1", "dpi1"), ("q", "q"),
            ("rot_core", "rot_core"), ("inclination", "inclination"),
            ("white_noise", "white_noise"), ("id", "star_id"),
        )
        if getattr(args, attr) is not None
    }
    if args.no_oscillations:
        changes["oscillations"] = False
    if args.numax is not None and args.dnu is None:
        changes["dnu"] = None  # follow the new numax through the Δν–numax relation
    changes.setdefault("id", Path(args.output).name.split(".")[0])
    star = replace(star, **changes)
    observation = OBSERVATIONS[args.observation]
    if args.duration is not None:
        observation = replace(observation, duration=args.duration)
    output = Path(args.output)
    sim = simulate(star, observation, rng=args.seed)
    written = write_simulation(sim, output)
    for path in written if isinstance(written, list | tuple) else [written]:
        print(f"wrote {path}")
    return EXIT_OK


def _run_survey(args: argparse.Namespace) -> int:
    from .survey import load_config, run_survey

    config = load_config(args.config) if args.config else None
    if args.grid is not None or args.mass_prior is not None:
        from dataclasses import replace

        from .config import AnalysisConfig

        base = config or AnalysisConfig()  # the command line overrides the [grid] section
        changes = {k: v for k, v in (("path", args.grid), ("mass_prior", args.mass_prior))
                   if v is not None}
        config = replace(base, grid=replace(base.grid, **changes))
    if args.workers is not None and args.workers < 1:
        raise OptionError(f"--workers must be at least 1; got {args.workers}")
    if args.timeout_per_star is not None and not args.timeout_per_star > 0:
        raise OptionError(f"--timeout-per-star must be positive; got {args.timeout_per_star}")
    executor = "local" if args.dask is None else f"dask:{args.dask}"
    catalog = Path(args.catalog) if args.catalog else Path(args.out) / "catalog.ecsv"
    summary = run_survey(
        args.inputs, args.out, config, workers=args.workers, executor=executor,
        timeout=args.timeout_per_star, retry_failed=args.retry_failed,
        progress="quiet" if args.quiet else "auto", seed=args.seed, pattern=args.pattern,
        catalog=catalog,
    )
    figures = _population_figures(catalog, Path(args.out) / "figures")
    if not args.quiet:
        print(summary.to_text())
        print(f"  catalog  {catalog}")
        for path in figures:
            print(f"  figure   {path}")
    return EXIT_INPUT if summary.by_status.get("failed") else EXIT_OK


def _population_figures(catalog: Path, out_dir: Path) -> list[Path]:
    """Population figures from a written catalog (none when it holds no star)."""
    from astropy.table import Table

    from .plots import plot_population

    if not catalog.exists():
        return []
    table = Table.read(catalog)
    return plot_population(table, out_dir) if len(table) else []


def _run_catalog(args: argparse.Namespace) -> int:
    from .survey import open_ledger, write_catalog

    out = Path(args.out) if args.out else Path(args.directory) / "catalog.ecsv"
    with open_ledger(args.directory, readonly=True) as ledger:
        path, failed, n_stars, n_failed = write_catalog(ledger, out)
    print(f"wrote {path} ({n_stars} stars) and {failed} ({n_failed} failed)")
    return EXIT_OK


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line.

    Parameters
    ----------
    argv : sequence of str, optional
        Arguments (default ``sys.argv[1:]``).

    Returns
    -------
    int
        Exit status.
    """
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return EXIT_USAGE
    try:
        if args.command == "analyze":
            return _run_analyze(args)
        if args.command == "survey":
            return _run_survey(args)
        if args.command == "catalog":
            return _run_catalog(args)
        if args.command in ("model", "tracks"):
            from .cli_structure import run_model, run_tracks

            return (run_model if args.command == "model" else run_tracks)(args)
        return _run_simulate(args)
    except _UsageError as err:
        print(f"seismo: error: {err}", file=sys.stderr)
        return EXIT_USAGE
    except (OptionError, SeismoError) as err:
        print(f"seismo: error: {err.one_line()}", file=sys.stderr)
        return EXIT_USAGE if isinstance(err, OptionError) else EXIT_INPUT
    except KeyboardInterrupt:
        print("seismo: interrupted", file=sys.stderr)
        return 130
    except Exception as exc:
        if args.command not in ("survey", "catalog", "model", "tracks"):
            raise
        print(f"seismo: internal error: {type(exc).__name__}: {exc} (please report it)",
              file=sys.stderr)
        return EXIT_INTERNAL
