"""The oscillation modes of a synthetic star and their stochastic excitation."""

from __future__ import annotations

from typing import Any

import numpy as np
from scipy.signal import lfilter

from .. import relations
from ..errors import OptionError
from .parameters import StarParameters

__all__ = ["mode_table", "damped_oscillation", "MODE_COLUMNS", "ENVELOPE_HALF_WIDTH"]

#: Columns of a mode table (units: μHz, μHz, —, μHz, ppm, —).
MODE_COLUMNS = (
    "l", "m", "n_p", "frequency", "centre", "zeta", "linewidth", "amplitude", "attenuation",
)

#: Modes are drawn within ± this many Gaussian σ of the envelope around ν_max.
ENVELOPE_HALF_WIDTH = 4.0

# Components carrying less power than this fraction of A_max² are dropped: an
# unresolved dipole mode of 1e-4 A_max² peaks at ~0.2 % of a radial mode even
# in four years of data.
_MIN_RELATIVE_POWER = 1e-4


def _rng(rng: np.random.Generator | int | None) -> np.random.Generator:
    return np.random.default_rng(rng)


def _rotation_weights(inclination_deg: float) -> tuple[np.ndarray, np.ndarray]:
    """Azimuthal orders m = −1, 0, 1 and their power fractions.

    Gizon & Solanki 2003 (from memory): cos²i for m = 0, ½ sin²i for |m| = 1.
    """
    inc = np.deg2rad(inclination_deg)
    m = np.array([-1, 0, 1])
    w = np.array([0.5 * np.sin(inc) ** 2, np.cos(inc) ** 2, 0.5 * np.sin(inc) ** 2])
    keep = w > 1e-12
    return m[keep], w[keep]


def mode_table(star: StarParameters, nyquist: float) -> dict[str, np.ndarray]:
    """List every mode component a synthetic star oscillates in.

    Parameters
    ----------
    star : StarParameters
        The star; unresolved defaults are taken from `StarParameters.resolved`.
    nyquist : float
        Nyquist frequency of the observation, μHz (for the attenuation).

    Returns
    -------
    dict of str to ndarray, each of shape (n_components,)
        Sorted by frequency, with columns `MODE_COLUMNS`: ``l``, ``m``,
        ``n_p`` (radial order of the attached p mode), ``frequency`` (of the
        component, μHz), ``centre`` (the m = 0 frequency, μHz), ``zeta``,
        ``linewidth`` (FWHM, μHz), ``amplitude`` (intrinsic rms, ppm) and
        ``attenuation`` (amplitude factor η of the integration time). Empty
        columns when ``star.oscillations`` is false.

    Notes
    -----
    - l = 0, 2, 3 modes follow `relations.universal_pattern` (Mosser et al.
      2011), within ±`ENVELOPE_HALF_WIDTH` σ of ν_max, with a Gaussian
      envelope of FWHM `relations.envelope_fwhm` (Mosser et al. 2012):
      A_l²(ν) = V_l² A_max² exp(−(ν − ν_max)²/(2σ²)). They are taken as pure p
      modes, unsplit (envelope rotation is neglected for l = 2, 3).
    - l = 1 modes are the roots of `relations.mixed_mode_frequencies` around
      the nominal l = 1 p modes, with linewidth Γ0 (1 − ζ) and power
      V1² A0²(ν)(1 − ζ) (REFERENCES §5b; Dupret et al. 2009, Grosjean et
      al. 2014, from memory): resolved heights are then independent of ζ and
      the power of one order sums to V1² A0². With ``dpi1=None`` they are
      pure p modes (ζ = 0).
    - Rotation splits l = 1 modes into m = −1, 0, +1 at
      ν + m (ζ rot_core + (1 − ζ) rot_env), positive m at higher frequency,
      with power fractions ½ sin²i, cos²i, ½ sin²i (Gizon & Solanki 2003,
      from memory).
    - Only modes whose m = 0 frequency lies within ±`ENVELOPE_HALF_WIDTH` σ
      of ν_max are kept, and components with power below 1e-4 A_max² are
      dropped.
    """
    columns: dict[str, list[np.ndarray]] = {name: [] for name in MODE_COLUMNS}
    if not star.oscillations:
        return {name: np.empty(0, dtype=np.int64 if name in ("l", "m", "n_p") else float)
                for name in MODE_COLUMNS}
    p = star.resolved()
    dnu, numax, eps = p["dnu"], p["numax"], p["eps_p"]
    sigma = relations.envelope_fwhm(numax) * relations.FWHM_TO_SIGMA
    f_lo = max(numax - ENVELOPE_HALF_WIDTH * sigma, 0.05 * numax)
    f_hi = numax + ENVELOPE_HALF_WIDTH * sigma
    orders = np.arange(np.floor(f_lo / dnu - eps) - 2, np.ceil(f_hi / dnu - eps) + 2)
    orders = orders[orders >= 0]
    a_max2 = p["amplitude"] ** 2

    def envelope(freq: np.ndarray) -> np.ndarray:
        return a_max2 * np.exp(-0.5 * ((freq - numax) / sigma) ** 2)

    def add(l: int, m: Any, n_p: Any, freq: Any, centre: Any, z: Any, width: Any,
            power: Any) -> None:
        shape = np.broadcast(freq, power).shape
        for name, value in zip(
            MODE_COLUMNS[:-2], (l, m, n_p, freq, centre, z, width), strict=True
        ):
            columns[name].append(np.broadcast_to(value, shape).astype(
                np.int64 if name in ("l", "m", "n_p") else float))
        columns["amplitude"].append(np.sqrt(np.broadcast_to(power, shape)))

    pattern = {"dnu": dnu, "numax": numax, "eps_p": eps, "alpha": p["alpha"]}
    for l, vis, d0l in ((0, 1.0, 0.0), (2, p["vis2"], p["d02"]), (3, p["vis3"], p["d03"])):
        if vis <= 0:
            continue
        freq = relations.universal_pattern(orders, l, d0l=d0l, **pattern)
        add(l, 0, orders, freq, freq, 0.0, p["linewidth"], vis * envelope(freq))

    nu_p = relations.universal_pattern(orders, 1, d0l=p["d01"], **pattern)
    if p["vis1"] > 0:
        if p["dpi1"] is None:
            centre, z = nu_p, np.zeros_like(nu_p)
        else:
            centre = relations.mixed_mode_frequencies(
                nu_p, dnu, p["dpi1"], p["q"], p["eps_g"], f_lo, f_hi
            )
            z = relations.zeta(centre, nu_p, dnu, p["dpi1"], p["q"])
        n_p = orders[np.argmin(np.abs(centre[:, None] - nu_p[None, :]), axis=1)]
        power = p["vis1"] * envelope(centre) * (1.0 - z)
        split = z * p["rot_core"] + (1.0 - z) * (p["rot_env"] or 0.0)
        if np.any(split != 0):
            m, weight = _rotation_weights(p["inclination"])
        else:
            m, weight = np.array([0]), np.array([1.0])
        add(1, m[None, :], n_p[:, None], centre[:, None] + m[None, :] * split[:, None],
            centre[:, None], z[:, None], (p["linewidth"] * (1.0 - z))[:, None],
            power[:, None] * weight[None, :])

    table = {name: np.concatenate([c.ravel() for c in columns[name]]) for name in
             MODE_COLUMNS[:-1]}
    keep = (
        (table["amplitude"] ** 2 >= _MIN_RELATIVE_POWER * a_max2)
        & (table["centre"] >= f_lo)
        & (table["centre"] <= f_hi)
        & (table["frequency"] > 0)
    )
    order = np.argsort(table["frequency"][keep], kind="stable")
    table = {name: value[keep][order] for name, value in table.items()}
    table["attenuation"] = np.sqrt(relations.sinc_attenuation(table["frequency"], nyquist))
    return table


def damped_oscillation(
    n_points: int,
    time_step: float,
    freq: float,
    linewidth: float,
    amplitude: float,
    rng: np.random.Generator | int | None = None,
) -> np.ndarray:
    """One stochastically excited, damped mode sampled on a regular grid.

    Parameters
    ----------
    n_points : int
        Number of samples.
    time_step : float
        Sampling interval Δt, s.
    freq : float
        Mode frequency ν, μHz.
    linewidth : float
        Linewidth Γ (FWHM of the Lorentzian), μHz, > 0.
    amplitude : float
        rms amplitude A of the mode, ppm (the variance of the series is A²).
    rng : numpy.random.Generator, int or None
        Random generator or seed.

    Returns
    -------
    ndarray, shape (n_points,)
        The mode signal x_k = Re z_k, ppm.

    Raises
    ------
    OptionError
        If ``n_points`` < 1 or ``time_step`` or ``linewidth`` is not positive.

    Notes
    -----
    z is the complex Ornstein–Uhlenbeck process sampled exactly:
    z_{k+1} = z_k exp((2πiν − η)Δt) + w_k with η = πΓ, complex Gaussian w_k of
    variance s²(1 − e^{−2ηΔt}) and s² = 2A², started from its stationary
    distribution. Its limit spectrum is, near ν, the Lorentzian of height
    2A²/(πΓ) (single-sided, ppm²/μHz) and FWHM Γ; the exact sampled spectrum
    is in `model_psd`. This is exact at every Δt, without a small-step
    approximation (common practice for damped stochastic oscillators).
    """
    if n_points < 1:
        raise OptionError(f"n_points must be >= 1; got {n_points!r}")
    if not time_step > 0 or not linewidth > 0:
        raise OptionError(
            f"time_step and linewidth must be > 0; got {time_step!r} and {linewidth!r}"
        )
    gen = _rng(rng)
    coeff, sigma_w = _ar1_coefficients(time_step, freq, linewidth, amplitude)
    drive = gen.standard_normal(2 * n_points).view(np.complex128) * (sigma_w / np.sqrt(2.0))
    drive[0] *= np.sqrt(2.0) * amplitude / sigma_w if sigma_w > 0 else 0.0
    return lfilter([1.0], [1.0, -coeff], drive).real


def _ar1_coefficients(
    time_step: float, freq: Any, linewidth: Any, amplitude: Any
) -> tuple[Any, Any]:
    """AR(1) coefficient a = exp((2πiν − πΓ)Δt) and the drive rms σ_w (bare floats)."""
    dt = time_step * 1e-6  # s → μHz⁻¹
    decay = np.pi * np.asarray(linewidth) * dt
    coeff = np.exp(2j * np.pi * np.asarray(freq) * dt - decay)
    sigma_w = np.sqrt(2.0 * np.asarray(amplitude) ** 2 * -np.expm1(-2.0 * decay))
    return coeff, sigma_w


def _ar1_psd(
    freq: np.ndarray, time_step: float, coeff: np.ndarray, sigma_w: np.ndarray
) -> np.ndarray:
    """Single-sided density of Re z for AR(1) modes, summed over modes (bare arrays).

    S_z(f) = σ_w² Δt / |1 − a e^{−2πifΔt}|² (two-sided) and
    P_x(f) = [S_z(f) + S_z(−f)] / 2, in ppm²/μHz with f in μHz.
    """
    dt = time_step * 1e-6
    phase = np.exp(-2j * np.pi * freq * dt)[None, :]
    a = coeff[:, None]
    w2 = (sigma_w**2 * dt)[:, None]
    s_pos = w2 / np.abs(1.0 - a * phase) ** 2
    s_neg = w2 / np.abs(1.0 - a * np.conj(phase)) ** 2
    return 0.5 * np.sum(s_pos + s_neg, axis=0)
