"""Tests of seismo.structure.grid: grid-based mass, radius and age estimates.

Each check names its outside source beside it: "CALC" (derived here from the
construction of the test grid), "common practice" (statistical checks of a
posterior), "numpy as reference", or REFERENCES.md for the scaling relations.
The small grids built here are invented for the tests; the bundled demo grid
is invented for illustration (seismo/structure/make_demo_grid.py).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import stats

from seismo.errors import (
    ColumnError,
    InputError,
    MissingFileError,
    OptionError,
    UnreadableFileError,
)
from seismo.results import Measurement, StarResult
from seismo.scaling import DEFAULT_REFERENCE, SOLAR_REFERENCES, scaling_mass
from seismo.structure.grid import (
    GRID_STATES,
    MODEL_ERRORS,
    ModelGrid,
    demo_grid_path,
    grid_details,
    grid_estimate,
    grid_estimate_for_result,
    load_demo_grid,
    read_grid,
    weighted_quantiles,
)
from seismo.structure.make_demo_grid import make_demo_grid

REF = SOLAR_REFERENCES[DEFAULT_REFERENCE]


def toy_grid(masses, n_models=25, fehs=(0.0,), **options) -> ModelGrid:
    """RGB-only tracks (invented): ln R linear in age from 4 to 20 R☉; scaling Δν and ν_max."""
    masses = np.asarray(masses, dtype=float)
    m, fe, tau = np.meshgrid(masses, np.asarray(fehs, dtype=float),
                             np.linspace(0.0, 1.0, n_models), indexing="ij")
    track = np.broadcast_to(np.arange(m.shape[0] * m.shape[1]).reshape(m.shape[:2])[..., None],
                            m.shape)
    radius = 4.0 * 5.0**tau
    teff = 4800.0 * (radius / 10.0) ** -0.1 * m**0.05 * 10.0 ** (-0.07 * fe)
    age = 10.0 * m**-2.5 + 0.8 * m**-2.5 * tau
    data = {
        "track": track.ravel(), "mass": m.ravel(), "age": age.ravel(), "feh": fe.ravel(),
        "teff": teff.ravel(), "radius": radius.ravel(),
        "dnu": (REF.dnu * np.sqrt(m / radius**3)).ravel(),
        "numax": (REF.numax * m / radius**2 / np.sqrt(teff / REF.teff)).ravel(),
        "dpi1": (90.0 - 30.0 * tau).ravel(), "state": np.full(m.size, "RGB"),
    }
    return ModelGrid(data, **options)


def two_phase_track(n_rgb=5, n_rc=50, t_rgb=1.0, t_rc=0.1) -> ModelGrid:
    """One track crossing Δν = 4–5 μHz twice: slowly on the RGB, fast in the clump (invented)."""
    age = np.r_[np.linspace(0.0, t_rgb, n_rgb), t_rgb + 0.001 + np.linspace(0.0, t_rc, n_rc)]
    dnu = np.r_[np.linspace(5.0, 4.0, n_rgb), np.linspace(4.0, 5.0, n_rc)]
    n = age.size
    return ModelGrid({
        "track": np.zeros(n, int), "mass": np.full(n, 1.2), "age": age, "feh": np.zeros(n),
        "teff": np.full(n, 4700.0), "radius": np.full(n, 11.0), "dnu": dnu,
        "numax": np.full(n, 30.0), "dpi1": np.r_[np.full(n_rgb, 70.0), np.full(n_rc, 300.0)],
        "state": np.r_[np.full(n_rgb, "RGB"), np.full(n_rc, "RC")],
    })


def _linear(mass, tau):
    """Track quantities linear in mass at fixed phase τ, log age too (invented).

    Δν follows mostly the phase and ν_max mostly the mass, so that the two are not
    degenerate: a star's mass is then known to a few 0.01 M☉ (CALC).
    """
    return {"age": np.exp(1.0 - 0.5 * mass) * (1.0 + 0.1 * tau),
            "teff": 4700.0 + 300.0 * (mass - 1.0) - 100.0 * tau,
            "radius": 10.0 + tau + 2.0 * (mass - 1.0),
            "dnu": 5.0 - tau + 0.5 * (mass - 1.0),
            "numax": 40.0 - 10.0 * tau + 25.0 * (mass - 1.0),
            "dpi1": 80.0 - 10.0 * tau + 5.0 * (mass - 1.0)}


def linear_grid(masses, states=None, n_models=30, **options) -> ModelGrid:
    """Tracks from `_linear` (invented): one RGB phase each (τ from 0 to 1 over its models),
    or with ``states[i] = (first, second)`` two phases of n_models / 2 models, 1 Myr apart."""
    parts = []
    for i, mass in enumerate(masses):
        phases = [("RGB", n_models)] if states is None else [(s, n_models // 2) for s in states[i]]
        end = None
        for label, n in phases:
            q = _linear(mass, np.linspace(0.0, 1.0, n))
            if end is not None:
                q["age"] = q["age"] - q["age"][0] + end + 0.001
            end = q["age"][-1]
            q.update(track=np.full(n, i), mass=np.full(n, mass), feh=np.zeros(n),
                     state=np.full(n, label))
            parts.append(q)
    return ModelGrid({k: np.concatenate([q[k] for q in parts]) for k in parts[0]}, **options)


# ---------------------------------------------------------------------------
# Weighted quantiles
# ---------------------------------------------------------------------------


def test_weighted_quantiles_match_numpy_on_replicated_samples():
    # numpy as reference: integer weights are replicated samples, same inverted-CDF definition.
    rng = np.random.default_rng(11)
    q = np.array([0.0, 0.05, 0.1587, 0.25, 0.5, 0.75, 0.8413, 0.99, 1.0])
    for _ in range(30):
        n = int(rng.integers(1, 40))
        values = rng.normal(size=n).round(2)  # rounding makes ties, which must also agree
        weights = rng.integers(0, 6, size=n)
        weights[rng.integers(n)] += 1
        expected = np.percentile(np.repeat(values, weights), 100 * q, method="inverted_cdf")
        np.testing.assert_array_equal(weighted_quantiles(values, weights, q), expected)


def test_weighted_quantiles_reject_bad_weights():
    with pytest.raises(OptionError, match="weights must be finite"):
        weighted_quantiles([1.0, 2.0], [0.0, 0.0], [0.5])
    with pytest.raises(OptionError, match=r"q must be probabilities"):
        weighted_quantiles([1.0, 2.0], [1.0, 1.0], [1.5])


# ---------------------------------------------------------------------------
# The posterior
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("step", [0.01, 0.1])
def test_coverage_of_the_16_84_band(step):
    # Common practice: a star drawn from the prior (time-weighted grid points) and observed
    # with Gaussian errors falls inside its 16-84 % credible band in ~68 % of draws. The
    # simulated scatter includes the models' own systematic error (MODEL_ERRORS), which the
    # estimate adds in quadrature. A 0.01 M☉ grid is not interpolated in mass; a 0.1 M☉
    # grid gets 4 tracks per step, drawn from like the others.
    grid = toy_grid(np.round(np.arange(0.9, 1.9001, step), 3))
    assert grid.n_interpolated_tracks == (0 if step == 0.01 else 40)
    pts = grid.points()
    prior = np.exp(pts["log_prior"] - pts["log_prior"].max())
    rng = np.random.default_rng(20240611)
    draws = rng.choice(grid.n_points, size=300, p=prior / prior.sum())
    inside = {"mass": 0, "radius": 0, "age": 0}
    for i in draws:
        errs = {"dnu": 0.01 * pts["dnu"][i], "numax": 0.02 * pts["numax"][i], "teff": 60.0}
        total = {k: math.hypot(e, MODEL_ERRORS[k] * (pts[k][i] if k != "teff" else 1.0))
                 for k, e in errs.items()}
        obs = {k: pts[k][i] + e * rng.normal() for k, e in total.items()}
        est = grid_estimate(grid, dnu=obs["dnu"], dnu_err=errs["dnu"], numax=obs["numax"],
                            numax_err=errs["numax"], teff=obs["teff"], teff_err=errs["teff"])
        for name in inside:
            lo, _, hi = getattr(est, name)
            inside[name] += bool(lo <= pts[name][i] <= hi)
    # Binomial σ for 300 draws is 2.7 %; the bands allow about ±3σ.
    for name, count in inside.items():
        assert 0.60 <= count / draws.size <= 0.76, (name, count)


def test_evolutionary_speed_prior_favours_the_slow_phase():
    # CALC: the RGB crosses Δν 5→4 μHz in 1 Gyr, the clump 4→5 μHz in 0.1 Gyr with the same
    # other observables, so P(RGB) = 1 / (1 + 0.1) whatever the number of models per phase.
    grid = two_phase_track(n_rgb=5, n_rc=50)
    est = grid_estimate(grid, dnu=4.5, dnu_err=0.05, numax=30.0, numax_err=1.0,
                        teff=4700.0, teff_err=80.0)
    p_rgb = 1.0 / 1.1
    assert est.state_probabilities["RGB"] == pytest.approx(p_rgb, abs=1e-3)
    # CALC: on the RGB age = 5 − Δν (Gyr), so its age posterior is N(0.5, 0.05); the median
    # of the mixture is that Gaussian's quantile 0.5 / P(RGB).
    median_age = 0.5 + 0.05 * stats.norm.ppf(0.5 / p_rgb)
    assert est.median("age") == pytest.approx(median_age, abs=2e-3)


def test_interpolation_along_a_sparse_track():
    # CALC: a two-model track, linear in age; the star sits at a fifth of the way.
    data = {"track": [0, 0], "mass": [1.0, 1.0], "age": [0.0, 1.0], "feh": [0.0, 0.0],
            "teff": [4800.0, 4800.0], "radius": [5.0, 8.0], "dnu": [10.0, 5.0],
            "numax": [100.0, 40.0], "dpi1": [80.0, 60.0], "state": ["RGB", "RGB"]}
    star = {"dnu": 9.0, "dnu_err": 0.02, "numax": 88.0, "numax_err": 0.5,
            "teff": 4800.0, "teff_err": 50.0}
    # The interval changes Δν by 69 %: 256 sub-steps bring each below 0.3 %.
    est = grid_estimate(ModelGrid(data, max_substeps=256), **star)
    assert est.median("age") == pytest.approx(0.2, abs=3e-3)
    assert est.median("radius") == pytest.approx(5.6, abs=1e-2)
    assert est.flags == ("grid_few_models",)  # both weight-carrying models are the two rows
    # Without refinement the only sample point is the midpoint (age 0.5): far from the star.
    coarse = grid_estimate(ModelGrid(data, max_substeps=1), **star)
    assert "grid_outside" in coarse.flags


def test_interpolated_track_equals_the_exact_track():
    # CALC: every quantity (and log age) is linear in mass at fixed τ, so the track
    # interpolated half way between 1.0 and 1.4 M☉ is the exact 1.2 M☉ track.
    grid = linear_grid([1.0, 1.4], mass_substeps=2)
    assert grid.n_tracks == 2 and grid.n_interpolated_tracks == 1
    pts = grid.points()
    mid = np.isclose(pts["mass"], 1.2, rtol=0, atol=1e-12)
    assert 0 < mid.sum() < pts["mass"].size
    assert set(np.round(pts["mass"], 9)) == {1.0, 1.2, 1.4}
    tau = (pts["age"][mid] / math.exp(1.0 - 0.6) - 1.0) / 0.1
    assert tau.min() >= 0.0 and tau.max() <= 1.0
    exact = _linear(1.2, tau)
    for name in ("teff", "radius", "dnu", "numax", "dpi1"):
        np.testing.assert_allclose(pts[name][mid], exact[name], rtol=1e-9, err_msg=name)
    # CALC: the evolutionary-speed prior of the 1.2 M☉ track is its own duration, and its
    # mass width is the step 0.2 M☉ (the grid tracks at the edges get 0.1 M☉ each).
    duration = {m: 0.1 * math.exp(1.0 - 0.5 * m) for m in (1.0, 1.2, 1.4)}
    width = {1.0: 0.1, 1.2: 0.2, 1.4: 0.1}
    for m in (1.0, 1.2, 1.4):
        on = np.isclose(pts["mass"], m, rtol=0, atol=1e-12)
        total = np.exp(pts["log_prior"][on]).sum()
        assert total == pytest.approx(duration[m] * width[m], rel=1e-9), m


def test_mass_between_two_tracks_is_resolved():
    # CALC: a star on the exact 1.2 M☉ track, between grid tracks at 1.0 and 1.4 M☉
    # (observables linear in mass): interpolation in mass (20 parts of 0.02 M☉ by default)
    # puts the median within 0.02 M☉ of 1.2 with a band that has width.
    grid = linear_grid([1.0, 1.4])
    coarse = linear_grid([1.0, 1.4], mass_substeps=1)
    assert grid.n_interpolated_tracks == 19 and coarse.n_interpolated_tracks == 0
    for tau in (0.2, 0.5, 0.8):
        truth = _linear(1.2, tau)
        star = {"dnu": truth["dnu"], "dnu_err": 0.01 * truth["dnu"], "numax": truth["numax"],
                "numax_err": 0.02 * truth["numax"], "teff": truth["teff"], "teff_err": 80.0}
        est = grid_estimate(grid, **star)
        lo, median, hi = est.mass
        assert median == pytest.approx(1.2, abs=0.02), tau
        assert lo < median - 0.01 and hi > median + 0.01, tau
        assert "grid_outside" not in est.flags
        # Without the interpolation the percentiles can only be the two track masses.
        assert set(np.round(grid_estimate(coarse, **star).mass, 9)) <= {1.0, 1.4}


def test_tracks_with_different_state_sequences_are_not_interpolated():
    # CALC: RGB → RC at 1.0 M☉ and RGB → 2CL at 1.4 and 1.8 M☉ (a helium-ignition
    # transition mass between 1.0 and 1.4): no common phase, no tracks between them.
    grid = linear_grid([1.0, 1.4, 1.8], states=[("RGB", "RC"), ("RGB", "2CL"), ("RGB", "2CL")],
                       mass_substeps=4)
    assert grid.n_interpolated_tracks == 3
    masses = np.round(np.unique(grid.points()["mass"]), 9)
    np.testing.assert_array_equal(masses, [1.0, 1.4, 1.5, 1.6, 1.7, 1.8])
    pts = grid.points()
    between = (pts["mass"] > 1.4) & (pts["mass"] < 1.8)
    assert set(pts["state"][between]) == {GRID_STATES.index("RGB"), GRID_STATES.index("2CL")}
    with pytest.raises(OptionError, match="mass_substeps must be None or an integer >= 1"):
        linear_grid([1.0, 1.4], mass_substeps=0)


def test_dpi1_and_state_break_the_rgb_clump_degeneracy():
    # CALC on the demo grid: a clump model whose Δν, ν_max, T_eff are matched by RGB models.
    grid = load_demo_grid()
    cols = grid.columns
    rc = np.flatnonzero((cols["state_code"] == GRID_STATES.index("RC"))
                        & (cols["mass"] == 1.2) & (cols["feh"] == 0.1))[12]
    star = {"dnu": cols["dnu"][rc], "dnu_err": 0.01 * cols["dnu"][rc],
            "numax": cols["numax"][rc], "numax_err": 0.02 * cols["numax"][rc],
            "teff": cols["teff"][rc], "teff_err": 100.0}
    base = grid_estimate(grid, **star)
    p_rc = base.state_probabilities["RC"]
    assert 0.05 < p_rc < 0.95  # degenerate without ΔΠ1
    with_rc_dpi1 = grid_estimate(grid, **star, dpi1=cols["dpi1"][rc], dpi1_err=10.0)
    assert with_rc_dpi1.state_probabilities["RC"] > 0.999
    lo, _, hi = with_rc_dpi1.mass
    assert lo <= 1.2 <= hi
    with_rgb_dpi1 = grid_estimate(grid, **star, dpi1=70.0, dpi1_err=5.0)
    assert with_rgb_dpi1.state_probabilities["RGB"] > 0.999
    # CALC (Bayes): a state label with probability p multiplies the state's weight by p and
    # the others' by 1 − p, so P'(RC) = p P / (p P + (1 − p)(1 − P)).
    for label, p in (("RC", 0.8), ("RGB", 0.7)):
        est = grid_estimate(grid, **star, state=label, state_probability=p)
        prior_p = base.state_probabilities[label]
        expected = p * prior_p / (p * prior_p + (1 - p) * (1 - prior_p))
        assert est.state_probabilities[label] == pytest.approx(expected, rel=1e-9)


def test_mass_prior_and_grid_spacing_volume():
    # CALC: observables independent of mass, so the posterior in mass is the prior alone.
    def flat_grid(masses):
        masses = np.asarray(masses, dtype=float)
        n = 10
        m = np.repeat(masses, n)
        tau = np.tile(np.linspace(0.0, 1.0, n), masses.size)
        return ModelGrid({
            "track": np.repeat(np.arange(masses.size), n), "mass": m, "age": 1.0 + tau,
            "feh": np.zeros(m.size), "teff": np.full(m.size, 4700.0), "radius": 10.0 + tau,
            "dnu": 5.0 - tau, "numax": 40.0 - 10.0 * tau, "dpi1": np.full(m.size, np.nan),
            "state": np.full(m.size, "RGB"),
        })

    star = {"dnu": 4.5, "dnu_err": 0.05, "numax": 35.0, "numax_err": 0.5,
            "teff": 4700.0, "teff_err": 80.0}
    # Irregular masses: dense on 1.0–1.5, sparse on 1.5–2.0; a flat prior on [1, 2] has its
    # median at 1.5, while counting tracks would put it near 1.3.
    irregular = flat_grid(np.r_[np.arange(1.0, 1.5, 0.01), np.arange(1.5, 2.0001, 0.1)])
    assert grid_estimate(irregular, **star).median("mass") == pytest.approx(1.5, abs=0.011)
    # Salpeter (dN/dM ∝ M^-2.35): median of the truncated power law on [1, 2].
    regular = flat_grid(np.arange(1.0, 2.0001, 0.01))
    k = 1.35
    expected = (0.5 * (1.0 + 2.0**-k)) ** (-1.0 / k)
    est = grid_estimate(regular, **star, mass_prior="salpeter")
    assert est.median("mass") == pytest.approx(expected, abs=0.011)
    assert grid_estimate(regular, **star).median("mass") == pytest.approx(1.5, abs=0.011)
    # dpi1 NaN in every model: a measured ΔΠ1 leaves nothing to compare with.
    none = grid_estimate(regular, **star, dpi1=80.0, dpi1_err=5.0)
    assert "grid_no_dpi1_models" in none.flags and np.isnan(none.median("mass"))


def test_outside_the_grid_is_flagged():
    # Common practice: a star no model can match gets a flag, not a number that looks fine.
    grid = load_demo_grid()
    far = grid_estimate(grid, dnu=60.0, dnu_err=0.3, numax=600.0, numax_err=10.0,
                        teff=5000.0, teff_err=80.0)
    assert "grid_outside" in far.flags and np.all(np.isnan(far.mass)) and far.n_eff == 0.0
    hot = grid_estimate(grid, dnu=4.0, dnu_err=0.04, numax=30.0, numax_err=0.6,
                        teff=6800.0, teff_err=80.0)
    assert "grid_outside" in hot.flags and np.isfinite(hot.median("mass"))
    inside = grid_estimate(grid, dnu=4.0, dnu_err=0.04, numax=30.0, numax_err=0.6,
                           teff=4700.0, teff_err=80.0)
    assert "grid_outside" not in inside.flags


def test_too_few_effective_models_flagged():
    # Common practice: errors far smaller than the grid spacing leave one or two models.
    grid = toy_grid([1.0, 1.5], n_models=10)
    pts = grid.points()
    i = pts["dnu"].size // 2
    est = grid_estimate(grid, dnu=pts["dnu"][i], dnu_err=1e-4, numax=pts["numax"][i],
                        numax_err=1e-3, teff=pts["teff"][i], teff_err=1.0)
    assert est.n_eff < 10 and "grid_few_models" in est.flags


def test_option_errors():
    grid = toy_grid([1.0, 1.2])
    base = {"dnu": 5.0, "dnu_err": 0.05, "numax": 40.0, "numax_err": 0.8,
            "teff": 4700.0, "teff_err": 80.0}
    with pytest.raises(OptionError, match="feh and feh_err must be given together"):
        grid_estimate(grid, **base, feh=0.1)
    with pytest.raises(OptionError, match="needs a state_probability"):
        grid_estimate(grid, **base, state="RC")
    with pytest.raises(OptionError, match="state must be one of"):
        grid_estimate(grid, **base, state="AGB", state_probability=0.9)
    with pytest.raises(OptionError, match="mass_prior must be one of"):
        grid_estimate(grid, **base, mass_prior="chabrier")
    with pytest.raises(OptionError, match="dnu_err finite and > 0"):
        grid_estimate(grid, **{**base, "dnu_err": 0.0})


# ---------------------------------------------------------------------------
# Reading and validation
# ---------------------------------------------------------------------------


def _toy_table():
    from astropy.table import Table

    grid = toy_grid([1.0, 1.3], n_models=6)
    c = grid.columns
    table = Table({name: c[name] for name in ("mass", "age", "feh", "teff", "radius", "dnu",
                                              "numax", "dpi1")})
    table["track"] = c["track_ids"][c["track_index"]]
    table["state"] = np.array(GRID_STATES)[c["state_code"]]
    return grid, table


@pytest.mark.parametrize("suffix", [".ecsv", ".csv", ".fits"])
def test_read_formats_round_trip(tmp_path, suffix):
    # CALC: writing the columns and reading them back gives the same grid (same hash).
    grid, table = _toy_table()
    path = tmp_path / f"grid{suffix}"
    table.write(path, format={".ecsv": "ascii.ecsv", ".csv": "ascii.csv", ".fits": "fits"}[suffix])
    assert read_grid(path).hash == grid.hash


def test_read_with_column_mapping(tmp_path):
    grid, table = _toy_table()
    table.rename_column("mass", "M_init")
    table.rename_column("dnu", "Delta_nu")
    table.rename_column("teff", "TEFF")  # matched ignoring case
    path = tmp_path / "grid.csv"
    table.write(path, format="ascii.csv")
    with pytest.raises(ColumnError, match=r"lacks the columns \['mass', 'dnu'\]"):
        read_grid(path)
    got = read_grid(path, columns={"mass": "M_init", "dnu": "Delta_nu"})
    assert got.hash == grid.hash
    with pytest.raises(ColumnError, match="mapped columns"):
        read_grid(path, columns={"mass": "nothing"})


def test_read_errors(tmp_path):
    _, table = _toy_table()
    with pytest.raises(MissingFileError, match="grid file not found"):
        read_grid(tmp_path / "absent.ecsv")
    (tmp_path / "grid.txt").write_text("a b\n1 2\n")
    with pytest.raises(UnreadableFileError, match="unknown grid file type"):
        read_grid(tmp_path / "grid.txt")
    (tmp_path / "broken.fits").write_text("not fits")
    with pytest.raises(UnreadableFileError, match="cannot read the grid"):
        read_grid(tmp_path / "broken.fits")
    swapped = table.copy()
    swapped["age"][[2, 3]] = swapped["age"][[3, 2]]
    swapped.write(tmp_path / "swapped.csv", format="ascii.csv")
    with pytest.raises(InputError, match="age does not increase strictly"):
        read_grid(tmp_path / "swapped.csv")
    labels = table.copy()
    labels["state"] = labels["state"].astype("<U5")
    labels["state"][0] = "HB"
    labels.write(tmp_path / "labels.csv", format="ascii.csv")
    with pytest.raises(InputError, match=r"labels \['HB'\]; allowed labels"):
        read_grid(tmp_path / "labels.csv")


def test_validation_of_values():
    _, table = _toy_table()
    data = {name: np.array(table[name]) for name in table.colnames}
    bad_mass = dict(data, mass=np.where(np.arange(data["mass"].size) == 1, 1.05, data["mass"]))
    with pytest.raises(InputError, match=r"mass \(initial\) varies"):
        ModelGrid(bad_mass)
    with pytest.raises(InputError, match="'radius' must be finite and > 0"):
        ModelGrid(dict(data, radius=-data["radius"]))
    single = dict(data, track=np.r_[data["track"][:-1], 99])
    with pytest.raises(InputError, match="single model"):
        ModelGrid(single)


# ---------------------------------------------------------------------------
# The demo grid and the pipeline hooks
# ---------------------------------------------------------------------------


def test_demo_grid_is_regenerated_exactly_and_says_it_is_invented():
    from astropy.table import Table

    shipped = Table.read(demo_grid_path(), format="ascii.ecsv")
    fresh = make_demo_grid()
    assert shipped.colnames == fresh.colnames
    for name in fresh.colnames:
        np.testing.assert_array_equal(np.asarray(shipped[name]), np.asarray(fresh[name]), name)
    assert "INVENTED FOR ILLUSTRATION" in demo_grid_path().read_text()[:2000]
    assert set(np.unique(shipped["state"])) == {"RGB", "RC", "2CL"}
    assert demo_grid_path().stat().st_size < 1_500_000


def test_demo_grid_follows_the_scaling_relations():
    # REFERENCES.md §2a (standard relations): the demo's Δν, ν_max and T_eff give back its
    # mass through seismo.scaling (within the file's 6-digit rounding).
    grid = load_demo_grid()
    c = grid.columns
    mass = scaling_mass(c["numax"], c["dnu"], c["teff"])
    np.testing.assert_allclose(mass, c["mass"], rtol=1e-4)


def test_pipeline_hooks_from_star_result():
    grid = load_demo_grid()
    result = StarResult(
        id="star-1", detected=True, numax=Measurement(30.0, 0.6), dnu=Measurement(4.0, 0.04),
        dpi1=Measurement(300.0, 8.0), state="RC", state_probability=0.95,
    )
    est = grid_estimate_for_result(grid, result, teff=4700.0, teff_err=80.0)
    direct = grid_estimate(grid, dnu=4.0, dnu_err=0.04, numax=30.0, numax_err=0.6,
                           teff=4700.0, teff_err=80.0, dpi1=300.0, dpi1_err=8.0,
                           state="RC", state_probability=0.95)
    np.testing.assert_array_equal(est.mass, direct.mass)
    details = grid_details(est)
    json.dumps(details, allow_nan=False)
    assert set(details["mass"]) == {"value", "err_lo", "err_hi"}
    assert details["grid"]["hash"] == grid.hash and details["n_eff"] == pytest.approx(est.n_eff)
    again = StarResult.from_json(result.replace(details={"grid": details}).to_json())
    assert again.details["grid"]["mass"]["value"] == pytest.approx(est.median("mass"))
    missing = grid_estimate_for_result(grid, StarResult(id="x", detected=False))
    assert missing.flags == ("grid_needs_dnu_numax",)
    empty = grid_details(missing)
    assert empty["mass"] is None and empty["n_eff"] == 0.0
    json.dumps(empty, allow_nan=False)
