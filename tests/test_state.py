"""Evolutionary-state classification against the published regions."""

from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from seismo.errors import OptionError
from seismo.results import Measurement as M
from seismo.state import STATE_REGIONS, classify_state, describe_state

DEMO = Path(__file__).resolve().parent.parent / "demo_lightcurves"


def test_regions_follow_the_published_ranges():
    # REFERENCES.md §5d (Mosser et al. 2014; Vrard et al. 2016; values from memory):
    # RGB ΔΠ1 ≈ 50–100 s, RC ≈ 250–350 s, 2CL ≈ 150–300 s with Δν above the RC and
    # mass above ≈ 1.8 M☉ (Stello et al. 2013, from memory; Girardi 1999).
    rgb, rc, cl2 = STATE_REGIONS["RGB"], STATE_REGIONS["RC"], STATE_REGIONS["2CL"]
    assert rgb.dpi1 == (50.0, 100.0)
    assert rc.dpi1[0] <= 250 and rc.dpi1[1] >= 350
    assert 140 <= cl2.dpi1[0] <= 150 and cl2.dpi1[1] <= 300
    assert cl2.dnu[1] > rc.dnu[1] and cl2.mass[0] == pytest.approx(1.8)
    # No star below about half a solar mass burns helium in its core (REFERENCES §10).
    assert rc.mass[0] >= 0.5 and cl2.mass[0] >= 0.5


@pytest.mark.parametrize(("dnu", "dpi1", "mass", "state"), [
    (8.0, 75.0, 1.2, "RGB"),
    (4.0, 70.0, None, "RGB"),
    (4.1, 300.0, 1.2, "RC"),
    (3.8, 320.0, None, "RC"),
    (7.0, 200.0, 2.5, "2CL"),
])
def test_clear_cases_are_classified(dnu, dpi1, mass, state):
    result = classify_state(M(dnu, 0.01), M(dpi1, 2.0), None if mass is None else M(mass, 0.1))
    assert result.state == state
    assert result.probability >= 0.9
    assert sum(result.probabilities.values()) == pytest.approx(1.0)


def test_overlap_of_clump_regions_without_mass_is_unknown():
    # ΔΠ1 = 250 s at Δν = 4.5 μHz lies where RC and 2CL overlap: no confident answer.
    result = classify_state(M(4.5, 0.01), M(250.0, 5.0))
    assert result.state == "unknown"
    assert "state_ambiguous" in result.reasons


def test_without_dpi1_only_exclusion_decides():
    # Δν = 14 μHz is beyond every core-helium-burning region: RGB.
    high = classify_state(M(14.0, 0.1))
    assert high.state == "RGB" and high.probability > 0.99
    assert "state_without_dpi1" in high.reasons
    # Δν = 4 μHz is shared by all three: unknown rather than a guess.
    low = classify_state(M(4.0, 0.05))
    assert low.state == "unknown" and low.probability is None
    assert classify_state(None).state == "unknown"


def test_rival_dpi1_values_in_one_region_give_that_state():
    # Three solutions 240–245 s fit about equally well: each lies in the red-clump
    # region (ΔΠ1 ≈ 240–360 s, Δν ≈ 3–5.5 μHz, mass below ≈ 2 M☉; Mosser et al. 2014,
    # Vrard et al. 2016, from memory), so the state is RC although ΔΠ1 is not known to
    # better than a few per cent. The probability is that of the least favourable rival.
    dnu, mass = M(4.1, 0.01), M(1.2, 0.08)
    rivals = [M(245.0, 0.3), M(241.7, 0.4), M(262.0, 0.5)]
    result = classify_state(dnu, None, mass, dpi1_rivals=rivals)
    each = [classify_state(dnu, r, mass).probabilities["RC"] for r in rivals]
    assert result.state == "RC"
    assert result.probability == pytest.approx(min(each))
    assert "state_from_dnu_dpi1_rivals_mass" in result.reasons
    # A measured ΔΠ1 takes precedence over rivals.
    assert classify_state(dnu, M(75.0, 1.0), mass, dpi1_rivals=rivals).state == "RGB"


def test_rival_dpi1_values_in_different_regions_give_no_state_from_them():
    # 90 s is on the red-giant branch, 280 s in the red clump (Bedding et al. 2011:
    # bumped spacings ~50 s versus 100–300 s): the tie cannot decide. At Δν = 4 μHz all
    # three states are allowed, so the answer is unknown; at Δν = 14 μHz the Δν
    # exclusion alone still gives RGB.
    rivals = [M(90.0, 0.5), M(280.0, 1.0)]
    low = classify_state(M(4.0, 0.01), None, M(1.2, 0.1), dpi1_rivals=rivals)
    assert low.state == "unknown"
    assert "state_dpi1_rivals_disagree" in low.reasons
    high = classify_state(M(14.0, 0.05), None, None, dpi1_rivals=rivals)
    assert high.state == "RGB" and "state_without_dpi1" in high.reasons
    # Rivals that lie in one region but not confidently (RC/2CL overlap near 250 s at
    # Δν = 4.5 μHz without a mass) give no state either.
    overlap = classify_state(M(4.5, 0.01), None, None,
                             dpi1_rivals=[M(250.0, 1.0), M(255.0, 1.0)])
    assert overlap.state == "unknown"


def test_clump_overlap_is_undecided_but_core_helium_burning():
    # ΔΠ1 = 245 s at Δν = 4.8 μHz and 2.0 M☉ lies where the red clump (ΔΠ1 ≈ 250–350 s,
    # below M_HeF ≈ 1.8–2.2 M☉) and the secondary clump (ΔΠ1 ≈ 150–300 s) meet
    # (REFERENCES §5d and §10: Mosser et al. 2014, Girardi 1999, from memory), and far
    # from the RGB (50–100 s): neither clump is certain, core-helium burning is.
    result = classify_state(M(4.8, 0.01), M(245.0, 0.1), M(2.0, 0.1))
    assert result.state == "unknown"
    assert result.probabilities["RGB"] < 1e-6
    leading = max(result.probabilities, key=result.probabilities.get)
    assert f"state_most_likely_{leading}" in result.reasons
    assert "state_core_helium_burning" in result.reasons
    text = describe_state(result.state, result.probability, result.reasons)
    assert text == (f"unknown (most likely {leading}, {result.probability:.2f}; "
                    "core-helium burning: RC or 2CL)")
    # Rival ΔΠ1 values that all lie in the clump overlap say the same.
    tied = classify_state(M(4.8, 0.01), None, M(2.0, 0.1),
                          dpi1_rivals=[M(245.0, 0.1), M(250.0, 0.1)])
    assert tied.state == "unknown" and "state_core_helium_burning" in tied.reasons
    # A star between the RGB (up to 100 s) and the secondary clump (from 140–150 s) is
    # not flagged as core-helium burning.
    between = classify_state(M(4.8, 0.01), M(115.0, 5.0), M(2.0, 0.1))
    assert between.state == "unknown" and 0.1 < between.probabilities["RGB"] < 0.9
    assert "state_core_helium_burning" not in between.reasons
    # A decided state reads as itself.
    clear = classify_state(M(4.1, 0.01), M(300.0, 1.0), M(1.2, 0.08))
    assert describe_state(clear.state, clear.probability, clear.reasons) == (
        f"RC (probability {clear.probability:.2f})")


def test_without_dpi1_a_star_excluded_from_the_rgb_is_core_helium_burning():
    # With an RGB region that starts at Δν = 6 μHz (a replacement set of regions), a star
    # at Δν = 4.5 μHz can only be RC or 2CL: undecided, but core-helium burning.
    regions = dict(STATE_REGIONS)
    regions["RGB"] = replace(STATE_REGIONS["RGB"], dnu=(6.0, 20.0))
    result = classify_state(M(4.5, 0.01), None, M(1.9, 0.05), regions=regions,
                            mass_bias=0.0)
    assert result.state == "unknown"
    assert "state_core_helium_burning" in result.reasons


def test_reasons_say_eps_is_not_used():
    assert "state_eps_not_used" in classify_state(M(8.0, 0.1), M(75.0, 1.0)).reasons


def test_bad_arguments():
    with pytest.raises(OptionError, match="Measurement"):
        classify_state(8.0)
    with pytest.raises(OptionError, match="dpi1_rivals"):
        classify_state(M(4.0, 0.01), dpi1_rivals=[250.0])
    with pytest.raises(OptionError, match="mass_bias"):
        classify_state(M(8.0, 0.1), mass_bias=2.0)


@pytest.mark.parametrize(("star", "low", "high"), [
    ("HLD-0101", 40, 70), ("HLD-0102", 40, 70), ("HLD-0103", 100, 300), ("HLD-0104", 100, 300),
])
def test_bumped_spacings_of_the_simulated_stars_match_the_2011_separation(star, low, high):
    # Bedding et al. 2011, Nature 471, 608 (CONF): observed (bumped) dipole period spacings
    # are mostly about 50 s for hydrogen-shell burners and 100–300 s for helium burners.
    # Measured here on the injected dipole modes near numax that carry appreciable power.
    truth = json.loads((DEMO / f"{star}.truth.json").read_text())
    modes = [m for m in truth["modes"] if m["l"] == 1 and m["m"] == 0
             and abs(m["frequency"] - truth["numax"]) < 2 * truth["dnu"]]
    freq = np.array([m["frequency"] for m in modes])
    power = np.array([m["amplitude"] for m in modes]) ** 2
    keep = power > 0.1 * power.max()
    periods = np.sort(1e6 / freq[keep])
    spacing = np.diff(periods)
    spacing = spacing[spacing < 1.5 * truth["dpi1"]]  # within an order
    assert low <= np.median(spacing) <= high
