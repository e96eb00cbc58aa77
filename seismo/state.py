"""Evolutionary state: hydrogen-shell burning (RGB), red clump (RC), secondary clump (2CL).

The classification follows the published picture of the seismic diagram:
hydrogen-shell-burning giants have dipole period spacings ΔΠ1 of about 50–100 s,
core-helium-burning stars of about 150–350 s (Bedding et al. 2011, Nature 471,
608: bumped spacings ~50 s versus 100–300 s; Mosser et al. 2014, A&A 572, L5;
Vrard et al. 2016, A&A 588, A87). Among core-helium burners, red-clump stars
ignited helium in a degenerate core and sit at Δν ≈ 3–5.5 μHz with ΔΠ1 ≈
240–360 s; secondary-clump stars are the more massive ones (above about
1.8 M☉) that ignited helium without a degenerate core, at larger Δν
(≈ 4–9.5 μHz) and lower ΔΠ1 (≈ 140–260 s) (Girardi 1999, MNRAS 308, 818;
Stello et al. 2013, ApJL 765, L41; Mosser et al. 2014). No star below about
half a solar mass burns helium in its core. Region limits are from
REFERENCES.md §5d and §10 (values from memory, as flagged there).

Each state's region is a box in (Δν, ΔΠ1) and in mass, with soft edges: a
uniform density convolved with a Gaussian whose width combines the edge
softness with the measurement error, so the likelihood of a measurement is a
closed form (differences of error functions). With equal priors the
normalised likelihoods are the state probabilities. A state is reported only
when its probability reaches `REPORT_THRESHOLD`; otherwise ``"unknown"``.

The physical question behind the three labels is first RGB against core-helium
burning (RC or 2CL), then which clump. Where the clump regions overlap (ΔΠ1 about
240–260 s, Δν 4–5.5 μHz, mass near 2 M☉) neither clump may reach the threshold
while together they do: the state stays ``"unknown"`` and the reason
``state_core_helium_burning`` records that the star is certainly not on the RGB.
Every undecided star with a probability also names its most likely state
(``state_most_likely_RC`` etc.).

When ΔΠ1 is withheld because a few solutions a few per cent apart fit about
equally well, the state is still decided if every one of them gives the same
state: the regions are a factor of two to three apart in ΔΠ1.

Without ΔΠ1 (short series, unresolved mixed modes) the boxes are used only to
exclude states: a state is reported when Δν and the mass leave no other
state possible. The radial-mode offset ε is a discriminator in some
published work (Kallinger et al. 2012, A&A 541, A51) but not in others (a
single Δν–ε relation for both phases: Wang et al. 2026, arXiv:2604.01847);
seismo does not use it until that is settled, and says so in the reasons.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from scipy import stats
from scipy.special import erf

from .errors import OptionError
from .results import Measurement

__all__ = ["StateRegion", "STATE_REGIONS", "StateResult", "classify_state", "REPORT_THRESHOLD",
           "CORE_HELIUM_BURNING", "CORE_HELIUM_FLAG", "core_helium_burning", "describe_state"]

#: Smallest probability at which a state is reported rather than "unknown".
REPORT_THRESHOLD = 0.9
#: The core-helium-burning states; together against the RGB when neither alone is certain.
CORE_HELIUM_BURNING = ("RC", "2CL")
#: Reason (and result flag) of an undecided star that is certainly RC or 2CL.
CORE_HELIUM_FLAG = "state_core_helium_burning"


@dataclass(frozen=True)
class StateRegion:
    """Where an evolutionary state lies in the seismic diagram.

    Attributes
    ----------
    dnu : (float, float)
        Range of Δν, μHz.
    dpi1 : (float, float)
        Range of the asymptotic dipole period spacing, s.
    mass : (float, float)
        Range of (scaling) mass, M☉.
    softness : (float, float, float)
        Gaussian softness of the edges in Δν (μHz), ΔΠ1 (s) and mass (M☉).
    source : str
        Papers the ranges come from.
    """

    dnu: tuple[float, float]
    dpi1: tuple[float, float]
    mass: tuple[float, float]
    softness: tuple[float, float, float]
    source: str


#: The three regions (REFERENCES.md §5d, §10; values from memory).
STATE_REGIONS: dict[str, StateRegion] = {
    "RGB": StateRegion(
        (3.0, 20.0), (50.0, 100.0), (0.6, 4.0), (0.3, 4.0, 0.15),
        "Bedding et al. 2011; Mosser et al. 2014; Vrard et al. 2016",
    ),
    "RC": StateRegion(
        (3.0, 5.5), (240.0, 360.0), (0.5, 2.0), (0.3, 12.0, 0.15),
        "Mosser et al. 2014; Vrard et al. 2016; Girardi 1999",
    ),
    "2CL": StateRegion(
        (4.0, 9.5), (140.0, 260.0), (1.8, 4.0), (0.4, 12.0, 0.15),
        "Stello et al. 2013; Mosser et al. 2014; Girardi 1999; Montalbán et al. 2013",
    ),
}


@dataclass(frozen=True)
class StateResult:
    """Outcome of `classify_state`.

    Attributes
    ----------
    state : str
        ``"RGB"``, ``"RC"``, ``"2CL"`` or ``"unknown"``.
    probability : float or None
        Probability of the reported state (of the most likely state when
        ``"unknown"``), or None when nothing could be computed.
    probabilities : dict
        Probability of each state.
    reasons : tuple of str
        Short machine-readable reasons.
    """

    state: str
    probability: float | None
    probabilities: dict[str, float] = field(default_factory=dict)
    reasons: tuple[str, ...] = ()


def _box(x: float, err: float, lo: float, hi: float, soft: float) -> float:
    """Density at ``x`` of a uniform on [lo, hi] convolved with N(0, soft² + err²)."""
    s = float(np.hypot(soft, err)) * np.sqrt(2.0)
    return float(0.5 * (erf((x - lo) / s) - erf((x - hi) / s)) / (hi - lo))


def _distance(value: float, err: float, lo: float, hi: float, soft: float) -> float:
    """Distance of ``value`` outside [lo, hi] in combined sigmas (0 inside)."""
    s = float(np.hypot(soft, err))
    return max(lo - value, value - hi, 0.0) / s


def _check(m: Measurement | None, name: str) -> tuple[float, float] | None:
    if m is None:
        return None
    if not isinstance(m, Measurement):
        raise OptionError(f"{name} must be a Measurement or None; got {type(m).__name__}")
    return m.value, (m.error or 0.0)


def _probabilities(d: tuple[float, float], p: tuple[float, float],
                   m: tuple[float, float] | None, regions: dict[str, StateRegion]
                   ) -> dict[str, float] | None:
    """Normalised box likelihoods of (Δν, ΔΠ1[, mass]); None outside all regions."""
    like: dict[str, float] = {}
    for name, r in regions.items():
        value = _box(d[0], d[1], *r.dnu, r.softness[0]) * _box(p[0], p[1], *r.dpi1,
                                                                r.softness[1])
        if m is not None:
            value *= _box(m[0], m[1], *r.mass, r.softness[2])
        like[name] = value
    total = sum(like.values())
    if not total > 0:
        return None
    return {k: v / total for k, v in like.items()}


def _undecided(probs: list[dict[str, float]]) -> list[str]:
    """Reasons for an undecided star from the probabilities of its ΔΠ1 value(s): the most
    likely state (of the least certain value) and, when every value puts at least
    `REPORT_THRESHOLD` on RC and 2CL together, ``state_core_helium_burning``."""
    clump = [sum(pr.get(k, 0.0) for k in CORE_HELIUM_BURNING) for pr in probs]
    worst = min(probs, key=lambda pr: max(pr.values()))
    out = [f"state_most_likely_{max(worst, key=worst.get)}"]
    if min(clump) >= REPORT_THRESHOLD:
        out.append(CORE_HELIUM_FLAG)
    return out


def classify_state(
    dnu: Measurement | None,
    dpi1: Measurement | None = None,
    mass: Measurement | None = None,
    *,
    dpi1_rivals: Sequence[Measurement] = (),
    mass_bias: float = 0.15,
    regions: dict[str, StateRegion] | None = None,
) -> StateResult:
    """Classify a red giant as RGB, RC, 2CL or unknown, with a probability.

    Parameters
    ----------
    dnu : Measurement or None
        Large separation, μHz.
    dpi1 : Measurement or None
        Asymptotic dipole period spacing, s.
    mass : Measurement or None
        Scaling mass, M☉.
    dpi1_rivals : sequence of Measurement
        Used only without ``dpi1``: the ΔΠ1 (s) of the values that bracket the
        period spacing, i.e. solutions that fit about equally well, or a rotating
        solution and its refit without rotation
        (`seismo.mixed.PeriodSpacing.dpi1_rivals`). A state is
        reported when every one of them gives it with probability at least
        `REPORT_THRESHOLD`; its probability is then the lowest of theirs.
    mass_bias : float
        Fractional systematic error added to the mass error: uncorrected
        scaling masses of giants run high by about 10–15% (Gaulme et al. 2016).
    regions : dict, optional
        Replacement for `STATE_REGIONS`.

    Returns
    -------
    StateResult
    """
    regions = regions or STATE_REGIONS
    if not 0 <= mass_bias < 1:
        raise OptionError(f"mass_bias must be a fraction in [0, 1); got {mass_bias!r}")
    d = _check(dnu, "dnu")
    p = _check(dpi1, "dpi1")
    m = _check(mass, "mass")
    reasons: list[str] = ["state_eps_not_used"]
    if d is None:
        return StateResult("unknown", None, {}, ("state_needs_dnu", *reasons))
    if m is not None:
        m = (m[0], float(np.hypot(m[1], mass_bias * m[0])))

    if p is not None:
        probs = _probabilities(d, p, m, regions)
        if probs is None:
            return StateResult("unknown", None, {k: 0.0 for k in regions},
                               ("state_outside_all_regions", *reasons))
        best = max(probs, key=probs.get)
        reasons.append("state_from_dnu_dpi1" + ("_mass" if m is not None else ""))
        if probs[best] >= REPORT_THRESHOLD:
            return StateResult(best, probs[best], probs, tuple(reasons))
        return StateResult("unknown", probs[best], probs,
                           ("state_ambiguous", *_undecided([probs]), *reasons))

    rivals = [_check(x, "dpi1_rivals item") for x in dpi1_rivals]
    if rivals:
        # ΔΠ1 is ambiguous between solutions a few per cent apart; the state
        # regions differ by a factor of two to three in ΔΠ1, so they may still
        # agree. The state stands only if every rival gives it, at the lowest
        # of their probabilities.
        each = [_probabilities(d, r, m, regions) for r in rivals]
        states = {None if pr is None else max(pr, key=pr.get) for pr in each}
        if len(states) == 1 and None not in states:
            best = states.pop()
            worst = min(each, key=lambda pr: pr[best])
            if worst[best] >= REPORT_THRESHOLD:
                reasons.append("state_from_dnu_dpi1_rivals" + ("_mass" if m is not None else ""))
                return StateResult(best, worst[best], worst, tuple(reasons))
        reasons.append("state_dpi1_rivals_disagree")
        if all(pr is not None for pr in each):
            reasons += [r for r in _undecided(each) if r == CORE_HELIUM_FLAG]

    # No period spacing: use Δν and mass only to exclude states.
    distance = {
        name: max(_distance(d[0], d[1], *r.dnu, r.softness[0]),
                  0.0 if m is None else _distance(m[0], m[1], *r.mass, r.softness[2]))
        for name, r in regions.items()
    }
    allowed = [name for name, z in distance.items() if z < 3.0]
    reasons.append("state_without_dpi1")
    if len(allowed) == 1:
        reasons.append(f"state_only_{allowed[0]}_allowed_by_dnu" + ("_mass" if m else ""))
        # Each excluded state keeps the one-sided Gaussian tail beyond its distance.
        tails = {k: float(stats.norm.sf(z)) for k, z in distance.items() if k != allowed[0]}
        probs = {**tails, allowed[0]: 1.0 - sum(tails.values())}
        return StateResult(allowed[0], probs[allowed[0]], probs, tuple(reasons))
    reasons.append("state_not_separable_without_dpi1")
    if allowed and set(allowed) <= set(CORE_HELIUM_BURNING) \
            and CORE_HELIUM_FLAG not in reasons:
        reasons.append(CORE_HELIUM_FLAG)
    return StateResult("unknown", None, {}, tuple(reasons))


def core_helium_burning(state: str, flags: Sequence[str]) -> bool:
    """Whether a classified star burns helium in its core: state RC or 2CL, or undecided
    between them (`CORE_HELIUM_FLAG` among its reasons or result flags).

    Parameters
    ----------
    state : str
        ``"RGB"``, ``"RC"``, ``"2CL"`` or ``"unknown"``.
    flags : sequence of str
        `StateResult.reasons`, or the flags of a result (which include them).

    Returns
    -------
    bool
    """
    return state in CORE_HELIUM_BURNING or CORE_HELIUM_FLAG in flags


def describe_state(state: str, probability: float | None, reasons: Sequence[str]) -> str:
    """One line for people: the state and its probability; for an undecided star, its
    most likely state and whether it is certainly core-helium burning.

    Parameters
    ----------
    state : str
        ``"RGB"``, ``"RC"``, ``"2CL"`` or ``"unknown"``.
    probability : float or None
        `StateResult.probability`.
    reasons : sequence of str
        `StateResult.reasons` (or the flags of a result, which include them).

    Returns
    -------
    str
        E.g. ``"RC (probability 0.99)"``, ``"unknown (most likely 2CL, 0.88;
        core-helium burning: RC or 2CL)"``.
    """
    if state != "unknown":
        return state if probability is None else f"{state} (probability {probability:.2f})"
    notes = []
    likely = [r.removeprefix("state_most_likely_") for r in reasons
              if r.startswith("state_most_likely_")]
    if likely and probability is not None:
        notes.append(f"most likely {likely[0]}, {probability:.2f}")
    if CORE_HELIUM_FLAG in reasons:
        notes.append("core-helium burning: RC or 2CL")
    return "unknown" + (f" ({'; '.join(notes)})" if notes else "")
