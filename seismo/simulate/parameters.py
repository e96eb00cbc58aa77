"""Parameters of a synthetic star and of the observation that records it."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import relations
from ..errors import OptionError

__all__ = [
    "StarParameters",
    "Observation",
    "LAYOUTS",
    "STATES",
    "QUALITY_BITS",
    "OBSERVATIONS",
    "PRESETS",
]

#: Window layouts understood by `Observation`.
LAYOUTS = ("long-cadence", "sector", "continuous")

#: Evolutionary-state labels a synthetic star may carry.
STATES = ("RGB", "RC", "2CL")

#: Bits the simulator sets in the synthetic QUALITY column (our own table).
QUALITY_BITS = {"pointing": 1, "thruster": 2, "cosmic_ray": 4, "stray_light": 8}


def _check(name: str, value: Any, ok: bool, expected: str) -> None:
    if not ok:
        raise OptionError(f"{name} must be {expected}; got {value!r}")


def _finite(value: Any) -> bool:
    return isinstance(value, (int, float, np.floating, np.integer)) and bool(np.isfinite(value))


@dataclass(frozen=True)
class StarParameters:
    """The astrophysical truth of a synthetic red giant.

    Parameters
    ----------
    id : str
        Identifier, e.g. ``"HLD-0101"``.
    numax : float
        Frequency of maximum oscillation power, μHz.
    dnu : float, optional
        Large separation, μHz; default `relations.dnu_from_numax`.
    eps_p, alpha, d01, d02, d03 : float, optional
        Universal-pattern offset, curvature and small separations (units of
        Δν); defaults from `seismo.relations` (Mosser et al. 2011, 2013).
    dpi1 : float, optional
        Dipole g-mode period spacing ΔΠ1, s. ``None`` makes the dipole modes
        pure p modes.
    q : float
        Coupling factor of the dipole mixed modes (dimensionless).
    eps_g : float
        g-mode phase offset (see `relations.mixed_mode_frequencies`).
    rot_core : float
        Rotational splitting of pure g modes, μHz. A dipole mode of trapped
        fraction ζ is split by ζ rot_core (+ (1 − ζ) rot_env).
    rot_env : float, optional
        Splitting of pure p modes by envelope rotation, μHz.
    inclination : float
        Inclination of the rotation axis, degrees (0 = pole-on).
    linewidth : float
        Radial-mode linewidth Γ0 (FWHM), μHz.
    amplitude : float, optional
        rms amplitude of a radial mode at ν_max, ppm. Default
        200 (ν_max/10 μHz)^-0.7 ppm, an illustrative scaling of the size seen
        in Kepler giants (REFERENCES §3b: A ∝ ν_max^-0.6…-0.8, from memory),
        not a calibration.
    vis1, vis2, vis3 : float
        Total visibilities V_l² relative to l=0 (Mosser et al. 2012, from
        memory: 1.35, 0.64, 0.071). ``vis3 = 0`` omits octupole modes.
    granulation : sequence of (float, float), optional
        ``(a, b)`` per component: rms amplitude (ppm) and characteristic
        frequency (μHz), exponent 4. Default: the two components of
        `relations.granulation_parameters` (Kallinger et al. 2014).
    white_noise : float
        Standard deviation of the white noise per cadence, ppm.
    oscillations : bool
        ``False`` simulates granulation and noise only.
    state : {"RGB", "RC", "2CL"} or None
        Evolutionary state label (a truth for classifiers; does not change
        the physics).
    teff : float
        Effective temperature, K.
    mass, radius : float, optional
        Mass (M☉) and radius (R☉) truths, if the star has them.

    Raises
    ------
    OptionError
        For a non-positive frequency, linewidth, ΔΠ1 or q, an inclination
        outside 0–90°, an unknown state or a malformed granulation list.
    """

    id: str
    numax: float
    dnu: float | None = None
    eps_p: float | None = None
    alpha: float | None = None
    d01: float | None = None
    d02: float | None = None
    d03: float | None = None
    dpi1: float | None = None
    q: float = 0.15
    eps_g: float = 0.28
    rot_core: float = 0.0
    rot_env: float | None = None
    inclination: float = 60.0
    linewidth: float = 0.1
    amplitude: float | None = None
    vis1: float = 1.35
    vis2: float = 0.64
    vis3: float = 0.071
    granulation: tuple[tuple[float, float], ...] | None = None
    white_noise: float = 60.0
    oscillations: bool = True
    state: str | None = None
    teff: float = 4800.0
    mass: float | None = None
    radius: float | None = None

    def __post_init__(self) -> None:
        _check("numax", self.numax, _finite(self.numax) and self.numax > 0, "> 0 μHz")
        for name in ("dnu", "dpi1", "amplitude"):
            value = getattr(self, name)
            if value is not None:
                _check(name, value, _finite(value) and value > 0, "> 0 or None")
        _check("q", self.q, _finite(self.q) and self.q > 0, "> 0")
        _check("linewidth", self.linewidth, _finite(self.linewidth) and self.linewidth > 0,
               "> 0 μHz")
        _check("inclination", self.inclination,
               _finite(self.inclination) and 0 <= self.inclination <= 90, "in [0, 90] degrees")
        for name in ("rot_core", "white_noise", "vis1", "vis2", "vis3"):
            value = getattr(self, name)
            _check(name, value, _finite(value) and value >= 0, ">= 0")
        _check("state", self.state, self.state is None or self.state in STATES,
               f"one of {list(STATES)} or None")
        if self.granulation is not None:
            pairs = tuple(tuple(float(x) for x in pair) for pair in self.granulation)
            _check("granulation", self.granulation,
                   all(len(p) == 2 and p[0] >= 0 and p[1] > 0 for p in pairs),
                   "a sequence of (amplitude ppm >= 0, frequency μHz > 0) pairs")
            object.__setattr__(self, "granulation", pairs)

    def resolved(self) -> dict[str, Any]:
        """Return every parameter with the defaults filled in.

        Returns
        -------
        dict
            The dataclass fields, with ``dnu``, ``eps_p``, ``alpha``, ``d01``,
            ``d02``, ``d03``, ``amplitude`` (ppm) and ``granulation`` (a list
            of ``{"amplitude": ppm, "frequency": μHz, "exponent": 4}``)
            computed from the relations when they were left as ``None``.
        """
        out = dataclasses.asdict(self)
        dnu = self.dnu if self.dnu is not None else relations.dnu_from_numax(self.numax)
        defaults = {
            "dnu": dnu,
            "eps_p": relations.eps_p_from_dnu(dnu),
            "alpha": relations.curvature_from_dnu(dnu),
            "d01": relations.d01_from_dnu(dnu),
            "d02": relations.d02_from_dnu(dnu),
            "d03": relations.d03_from_dnu(dnu),
            "amplitude": 200.0 * (self.numax / 10.0) ** -0.7,
        }
        for key, value in defaults.items():
            if out[key] is None:
                out[key] = float(value)
        if self.granulation is None:
            b1, b2, a = relations.granulation_parameters(self.numax)
            pairs = ((a, b1), (a, b2))
        else:
            pairs = self.granulation
        out["granulation"] = [
            {"amplitude": float(a), "frequency": float(b), "exponent": 4} for a, b in pairs
        ]
        return out


@dataclass(frozen=True)
class Observation:
    """How a synthetic star is observed: sampling, window and instrument.

    Parameters
    ----------
    cadence : float
        Time between samples (and integration time), minutes.
    duration : float
        Length of the observation, days.
    layout : {"long-cadence", "sector", "continuous"}
        ``"long-cadence"``: segments ("quarters") of ``segment_length`` days
        separated by gaps of ``gap_length`` days. ``"sector"``: two orbits
        of equal length separated by one gap of ``gap_length`` days.
        ``"continuous"``: a single gapless segment.
    start : float
        Time of the first cadence, days.
    segment_length : float
        Length of a long-cadence segment, days.
    gap_length : float
        Length of the gaps between segments, days.
    short_gaps : int
        Number of additional short gaps (0.1–0.6 d) per segment.
    level_jump : float
        rms fractional change of the flux level from segment to segment.
    drift : float
        rms amplitude of the slow multiplicative instrumental drift, ppm.
    drift_timescale : float
        Shortest period of the drift, days (the drift lies below
        1/drift_timescale; 15 d corresponds to 0.77 μHz).
    outlier_fraction : float
        Fraction of cadences with an outlier of 10–50 times the white noise.
    flagged_fraction : float
        Fraction of cadences with a non-zero QUALITY bit; their flux is
        corrupted by dips of 0.2–3 %.
    nan_count : int
        Number of cadences whose flux is NaN (QUALITY left at 0).
    flux_level : float
        Mean flux, electron/s.

    Raises
    ------
    OptionError
        For a non-positive cadence or duration, an unknown layout, or a
        fraction outside [0, 1).
    """

    cadence: float
    duration: float
    layout: str = "long-cadence"
    start: float = 1200.0
    segment_length: float = 93.0
    gap_length: float = 1.0
    short_gaps: int = 2
    level_jump: float = 0.03
    drift: float = 1000.0
    drift_timescale: float = 15.0
    outlier_fraction: float = 5e-4
    flagged_fraction: float = 0.01
    nan_count: int = 5
    flux_level: float = 1e5

    def __post_init__(self) -> None:
        for name in ("cadence", "duration", "segment_length", "drift_timescale", "flux_level"):
            value = getattr(self, name)
            _check(name, value, _finite(value) and value > 0, "> 0")
        _check("layout", self.layout, self.layout in LAYOUTS, f"one of {list(LAYOUTS)}")
        for name in ("gap_length", "level_jump", "drift"):
            value = getattr(self, name)
            _check(name, value, _finite(value) and value >= 0, ">= 0")
        for name in ("outlier_fraction", "flagged_fraction"):
            value = getattr(self, name)
            _check(name, value, _finite(value) and 0 <= value < 1, "in [0, 1)")
        for name in ("short_gaps", "nan_count"):
            value = getattr(self, name)
            _check(name, value, isinstance(value, (int, np.integer)) and value >= 0,
                   "an integer >= 0")
        if self.layout == "sector" and self.duration <= self.gap_length:
            raise OptionError(
                f"a sector needs duration > gap_length; got {self.duration} d and "
                f"{self.gap_length} d"
            )
        if self.n_cadences < 2:
            raise OptionError(
                f"duration ({self.duration} d) must hold at least two cadences of "
                f"{self.cadence} min"
            )

    @property
    def time_step(self) -> float:
        """Cadence, s."""
        return self.cadence * 60.0

    @property
    def nyquist(self) -> float:
        """Nyquist frequency 1/(2 Δt), μHz."""
        return 1e6 / (2.0 * self.time_step)

    @property
    def n_cadences(self) -> int:
        """Number of cadences on the regular grid, gaps included."""
        return int(np.floor(self.duration * 1440.0 / self.cadence + 1e-9))

    def without_instrument(self) -> Observation:
        """Return a copy with no level jumps, drift, outliers, flags or NaNs.

        Returns
        -------
        Observation
            Same sampling and gaps, ideal instrument.
        """
        return dataclasses.replace(
            self, level_jump=0.0, drift=0.0, outlier_fraction=0.0, flagged_fraction=0.0,
            nan_count=0,
        )


#: Observation presets: Kepler-like 4-yr long cadence and TESS-like sectors.
OBSERVATIONS: dict[str, Observation] = {
    "long-cadence-4yr": Observation(cadence=29.4244, duration=4 * 365.25, layout="long-cadence"),
    "sector-2min": Observation(cadence=2.0, duration=27.4, layout="sector", short_gaps=1),
    "sector-30min": Observation(cadence=30.0, duration=27.4, layout="sector", short_gaps=1),
}

#: Star presets with plausible values (REFERENCES §5d, from memory).
PRESETS: dict[str, StarParameters] = {
    "rgb-low": StarParameters(
        id="rgb-low", numax=35.0, dpi1=64.0, q=0.10, eps_g=0.28, linewidth=0.10,
        state="RGB", teff=4550.0, mass=1.1, white_noise=50.0,
    ),
    "rgb-mid": StarParameters(
        id="rgb-mid", numax=100.0, dpi1=78.0, q=0.14, eps_g=0.28, rot_core=0.35,
        inclination=70.0, linewidth=0.12, state="RGB", teff=4800.0, mass=1.3,
        white_noise=60.0,
    ),
    "rgb-high": StarParameters(
        id="rgb-high", numax=180.0, dpi1=86.0, q=0.16, eps_g=0.28, rot_core=0.6,
        inclination=50.0, linewidth=0.12, state="RGB", teff=4950.0, mass=1.25,
        white_noise=80.0,
    ),
    "clump": StarParameters(
        id="clump", numax=40.0, dnu=4.1, dpi1=300.0, q=0.30, eps_g=0.28, rot_core=0.10,
        inclination=45.0, linewidth=0.15, state="RC", teff=4700.0, mass=1.2,
        white_noise=50.0,
    ),
    "secondary-clump": StarParameters(
        id="secondary-clump", numax=90.0, dnu=7.5, dpi1=200.0, q=0.28, eps_g=0.28,
        rot_core=0.08, inclination=60.0, linewidth=0.18, state="2CL", teff=5050.0,
        mass=2.3, white_noise=60.0,
    ),
    "quiet": StarParameters(
        id="quiet", numax=60.0, oscillations=False, teff=4700.0, white_noise=70.0,
    ),
}
