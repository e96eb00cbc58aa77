"""Synthesis of a light curve from `StarParameters` and an `Observation`."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any

import numpy as np

from .. import relations
from ..errors import OptionError
from ..lightcurve.core import LightCurve
from .modes import _ar1_coefficients, _ar1_psd, damped_oscillation, mode_table
from .parameters import QUALITY_BITS, Observation, StarParameters

__all__ = ["Simulation", "simulate", "model_psd"]

# Flagged events last 1–12 cadences; their flux dips by 0.2–3 %.
_EVENT_LENGTHS = (1, 13)
_DIP_DEPTH = (0.002, 0.03)
# Outliers are 10–50 times the white noise; short gaps last 0.1–0.6 d.
_OUTLIER_SIGMA = (10.0, 50.0)
_SHORT_GAP_DAYS = (0.1, 0.6)
_DRIFT_TERMS = 4


@dataclass(frozen=True, eq=False)
class Simulation:
    """A synthetic light curve with its instrument effects and its truth.

    Attributes
    ----------
    time : ndarray, shape (n_points,)
        Times of the recorded cadences (gaps removed), days.
    flux : ndarray, shape (n_points,)
        Raw flux with level jumps, drift, outliers, corrupted flagged
        cadences and NaNs, electron/s.
    flux_err : ndarray, shape (n_points,)
        One-sigma white-noise uncertainty, electron/s.
    quality : ndarray of int32, shape (n_points,)
        Bitmask, non-zero on flagged cadences (bits: `QUALITY_BITS`).
    segment : ndarray of int, shape (n_points,)
        Segment (quarter or orbit) label of each cadence.
    clean_flux : ndarray, shape (n_points,)
        Astrophysical signal plus white noise, ppm, without instrument effects.
    truth : dict
        JSON-serialisable record of every parameter used (see `simulate`).
    """

    time: np.ndarray
    flux: np.ndarray
    flux_err: np.ndarray
    quality: np.ndarray
    segment: np.ndarray
    clean_flux: np.ndarray
    truth: dict[str, Any]

    @property
    def id(self) -> str:
        """Identifier of the star."""
        return str(self.truth["id"])

    def lightcurve(self) -> LightCurve:
        """Return the clean signal as a `LightCurve` in ppm.

        Returns
        -------
        LightCurve
            The astrophysical signal plus white noise on the recorded cadences,
            ppm, with the white-noise level as ``flux_err`` and the segment
            labels; no level jumps, drift, outliers, flags or NaNs.
        """
        err = np.full(self.time.shape, self.truth["white_noise"], dtype=float)
        meta = {"id": self.id, "source": "seismo.simulate", "synthetic": True,
                "format": "simulation"}
        return LightCurve(self.time, self.clean_flux, err, self.segment, meta)

    def __repr__(self) -> str:
        return (
            f"<Simulation id={self.id!r} n_points={self.time.size} "
            f"n_modes={len(self.truth['modes'])} cadence={self.truth['observation']['cadence']:.4g}"
            f" min>"
        )


def _to_json(value: Any) -> Any:
    if isinstance(value, dict):
        return {str(k): _to_json(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_to_json(v) for v in value]
    if isinstance(value, np.ndarray):
        return [_to_json(v) for v in value.tolist()]
    if isinstance(value, np.integer):
        return int(value)
    if isinstance(value, np.floating):
        return float(value)
    return value


def _mark_intervals(time: np.ndarray, starts: np.ndarray, ends: np.ndarray) -> np.ndarray:
    """Boolean mask of ``time`` inside any [start, end) interval (sorted ``time``)."""
    delta = np.zeros(time.size + 1, dtype=np.int64)
    np.add.at(delta, np.searchsorted(time, starts), 1)
    np.add.at(delta, np.searchsorted(time, ends), -1)
    return np.cumsum(delta)[:-1] > 0


def _window(
    time: np.ndarray, obs: Observation, gen: np.random.Generator
) -> tuple[np.ndarray, np.ndarray]:
    """Kept-cadence mask and segment labels on the full regular grid."""
    rel = time - obs.start
    if obs.layout == "continuous":
        segment = np.zeros(time.size, dtype=np.int64)
        return np.ones(time.size, dtype=bool), segment
    if obs.layout == "long-cadence":
        period = obs.segment_length + obs.gap_length
        segment = np.floor(rel / period).astype(np.int64)
        kept = rel - segment * period < obs.segment_length
    else:
        orbit = (obs.duration - obs.gap_length) / 2.0
        segment = (rel >= orbit).astype(np.int64)
        kept = (rel < orbit) | (rel >= orbit + obs.gap_length)
    labels, first = np.unique(segment[kept], return_index=True)
    last = np.r_[first[1:], kept.sum()] - 1
    seg_start, seg_end = time[kept][first], time[kept][last]
    n_gaps = obs.short_gaps * labels.size
    if n_gaps:
        length = gen.uniform(*_SHORT_GAP_DAYS, n_gaps)
        owner = np.repeat(np.arange(labels.size), obs.short_gaps)
        room = np.maximum(seg_end[owner] - seg_start[owner] - length, 0.0)
        start = seg_start[owner] + gen.uniform(0.0, 1.0, n_gaps) * room
        kept &= ~_mark_intervals(time, start, start + length)
    return kept, segment


def _granulation_series(
    n_points: int, time_step: float, components: list[dict], nyquist: float,
    gen: np.random.Generator,
) -> np.ndarray:
    """Granulation by Fourier synthesis on a grid twice as long (no periodic wrap).

    Bare arrays: ``time_step`` in s, result in ppm.
    """
    m = 2 * n_points
    freq = np.fft.rfftfreq(m, d=time_step) * 1e6
    psd = _granulation_psd(freq, components, nyquist)
    coeff = gen.standard_normal(2 * freq.size).view(np.complex128)
    coeff *= 0.5 * m * np.sqrt(psd * freq[1])
    coeff[0] = 0.0
    coeff[-1] = coeff[-1].real * np.sqrt(2.0)  # the Nyquist bin of an even grid is real
    return np.fft.irfft(coeff, n=m)[:n_points]


def _granulation_psd(freq: np.ndarray, components: list[dict], nyquist: float) -> np.ndarray:
    total = np.zeros_like(freq, dtype=float)
    for comp in components:
        total += relations.granulation_psd(freq, comp["amplitude"], comp["frequency"],
                                           comp["exponent"])
    return total * relations.sinc_attenuation(freq, nyquist)


def _instrument(
    signal: np.ndarray, time: np.ndarray, segment: np.ndarray, obs: Observation,
    white: float, gen: np.random.Generator,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, dict[str, Any]]:
    """Raw counts, their errors, QUALITY and a record of what was done."""
    n = signal.size
    labels, seg_index = np.unique(segment, return_inverse=True)
    levels = obs.flux_level * (1.0 + obs.level_jump * gen.standard_normal(labels.size))
    level = levels[seg_index]

    drift = np.zeros(n)
    if obs.drift > 0:
        periods = gen.uniform(obs.drift_timescale, 4.0 * obs.drift_timescale, _DRIFT_TERMS)
        phases = gen.uniform(0.0, 2.0 * np.pi, _DRIFT_TERMS)
        weights = gen.standard_normal(_DRIFT_TERMS)
        for p, ph, w in zip(periods, phases, weights, strict=True):
            drift += w * np.sin(2.0 * np.pi * (time - obs.start) / p + ph)
        drift *= obs.drift / max(np.std(drift), 1e-12)
    flux = level * (1.0 + 1e-6 * (signal + drift))

    scatter = white if white > 0 else float(np.std(signal))
    n_out = int(round(obs.outlier_fraction * n))
    out_idx = gen.choice(n, n_out, replace=False)
    size = gen.uniform(*_OUTLIER_SIGMA, n_out) * gen.choice([-1.0, 1.0], n_out)
    flux[out_idx] += level[out_idx] * 1e-6 * scatter * size

    quality = np.zeros(n, dtype=np.int32)
    n_events = int(round(obs.flagged_fraction * n / np.mean(_EVENT_LENGTHS)))
    if n_events:
        start = gen.integers(0, n, n_events)
        stop = np.minimum(start + gen.integers(*_EVENT_LENGTHS, n_events), n)
        flagged = _mark_intervals(np.arange(n), start, stop)
        bits = np.array(list(QUALITY_BITS.values()), dtype=np.int32)
        quality[flagged] = gen.choice(bits, int(flagged.sum()))
        flux[flagged] *= 1.0 - gen.uniform(*_DIP_DEPTH, int(flagged.sum()))

    nan_idx = gen.choice(n, min(obs.nan_count, n), replace=False)
    flux[nan_idx] = np.nan
    flux_err = level * 1e-6 * max(white, 1e-3)
    record = {
        "segment_levels": levels,
        "n_outliers": n_out,
        "n_flagged": int(np.count_nonzero(quality)),
        "n_nan": int(nan_idx.size),
    }
    return flux, flux_err, quality, record


def simulate(
    star: StarParameters,
    observation: Observation,
    rng: np.random.Generator | int | None = None,
) -> Simulation:
    """Simulate the light curve of a red giant with known truth.

    Parameters
    ----------
    star : StarParameters
        The star (see its docstring for defaults and units).
    observation : Observation
        Sampling, window and instrument, e.g. ``OBSERVATIONS["sector-30min"]``.
    rng : numpy.random.Generator, int or None
        Random generator or seed; the same seed gives identical output.

    Returns
    -------
    Simulation
        Times start at ``observation.start`` (days). ``truth`` holds the
        resolved star parameters at top level (``numax``, ``dnu``, ``eps_p``,
        ``alpha``, ``d01``, ``d02``, ``d03``, ``dpi1``, ``q``, ``eps_g``,
        rotation, ``linewidth``, ``amplitude``, visibilities, ``granulation``,
        ``white_noise``, ``state``, ...), ``observation`` (its fields plus
        ``nyquist``, ``n_cadences``, ``n_points`` and what the instrument did),
        ``modes`` (one dict per component with the columns of `mode_table`),
        ``seed`` (when ``rng`` was an int) and ``synthetic: true``.

    Raises
    ------
    TypeError
        If ``star`` or ``observation`` has the wrong type.

    Notes
    -----
    1. Every mode component is an exact complex Ornstein–Uhlenbeck process on
       the full cadence grid (`damped_oscillation`), with its amplitude
       multiplied by the integration attenuation η(ν).
    2. Granulation (exponent-4 components) is drawn by Fourier synthesis on a
       grid twice as long as the series, attenuated by η².
    3. White Gaussian noise of ``star.white_noise`` ppm is added.
    4. The window removes the gap cadences; the instrument then multiplies by
       a per-segment level and a slow drift, and adds outliers, corrupted
       flagged cadences and NaNs (raw flux in electron/s).

    The limit spectrum of steps 1–3 is `model_psd`.
    """
    if not isinstance(star, StarParameters):
        raise TypeError(f"star must be a StarParameters; got {type(star).__name__}")
    if not isinstance(observation, Observation):
        raise TypeError(f"observation must be an Observation; got {type(observation).__name__}")
    seed = rng if isinstance(rng, (int, np.integer)) else None
    gen = np.random.default_rng(rng)
    obs = observation
    n = obs.n_cadences
    time = obs.start + np.arange(n) * (obs.cadence / 1440.0)
    params = star.resolved()

    modes = mode_table(star, obs.nyquist)
    signal = np.zeros(n)
    for freq, width, amp, eta in zip(modes["frequency"], modes["linewidth"],
                                     modes["amplitude"], modes["attenuation"], strict=True):
        signal += damped_oscillation(n, obs.time_step, freq, width, amp * eta, gen)
    signal += _granulation_series(n, obs.time_step, params["granulation"], obs.nyquist, gen)
    signal += star.white_noise * gen.standard_normal(n)

    kept, segment = _window(time, obs, gen)
    time, signal, segment = time[kept], signal[kept], segment[kept]
    flux, flux_err, quality, record = _instrument(signal, time, segment, obs,
                                                  star.white_noise, gen)

    observation_record = dataclasses.asdict(obs)
    observation_record.update(nyquist=obs.nyquist, n_cadences=n, n_points=int(time.size),
                              **record)
    mode_list = [dict(zip(modes, row, strict=True)) for row in zip(*modes.values(),
                                                                     strict=True)]
    truth = dict(params)
    truth.update(
        synthetic=True,
        generator="seismo.simulate",
        observation=observation_record,
        modes=mode_list,
        seed=seed,
    )
    return Simulation(time, flux, flux_err, quality, segment, signal, _to_json(truth))


def model_psd(star: StarParameters, observation: Observation, freq: Any) -> np.ndarray:
    """Limit spectrum of the signal that `simulate` draws from.

    Parameters
    ----------
    star : StarParameters
        The star.
    observation : Observation
        The observation (its cadence sets the attenuation and the white level).
    freq : array_like
        Frequencies, μHz (any shape).

    Returns
    -------
    ndarray, same shape as ``freq``
        Power density, ppm²/μHz, single-sided: modes + granulation × η² +
        white level σ²/ν_Nyq.

    Notes
    -----
    Each mode contributes the exact spectrum of its sampled
    Ornstein–Uhlenbeck process, [S(ν) + S(−ν)]/2 with
    S(ν) = σ_w² Δt / |1 − a e^{−2πiνΔt}|², which near the mode is the
    Lorentzian of height 2A²η²/(πΓ) and FWHM Γ, and which also holds the
    mirror images at 2kν_Nyq ± ν that the sampling folds back. Instrument
    effects and the window are not included: this is the expectation of the
    periodogram of a gapless series.
    """
    if not isinstance(star, StarParameters) or not isinstance(observation, Observation):
        raise TypeError("model_psd needs a StarParameters and an Observation")
    f = np.asarray(freq, dtype=np.float64)
    if not np.all(np.isfinite(f)):
        raise OptionError("freq must be finite (μHz)")
    flat = f.ravel()
    params = star.resolved()
    nyq = observation.nyquist
    total = np.full(flat.shape, star.white_noise**2 / nyq)
    total += _granulation_psd(flat, params["granulation"], nyq)
    modes = mode_table(star, nyq)
    chunk = max(1, int(2e6 // max(flat.size, 1)))
    for i in range(0, modes["frequency"].size, chunk):
        sl = slice(i, i + chunk)
        coeff, sigma_w = _ar1_coefficients(
            observation.time_step, modes["frequency"][sl], modes["linewidth"][sl],
            modes["amplitude"][sl] * modes["attenuation"][sl],
        )
        total += _ar1_psd(flat, observation.time_step, coeff, sigma_w)
    return total.reshape(f.shape)
