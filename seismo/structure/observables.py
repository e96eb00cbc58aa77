"""Seismic observables of a stellar model: Δν, ΔΠ1, numax, cut-off, cavities and q.

`seismic_observables` turns one `StellarProfile` into a `ModelObservables`:
the asymptotic large separation and dipole period spacing integrated on the
model's own mesh, the scaling-relation numax and Δν with the solar reference
sets of :mod:`seismo.scaling` (so the model's own Δν correction
f_Δν = Δν_asym / Δν_scaling is reported), the acoustic cut-off frequency, the
l=1 propagation cavities at a chosen frequency and a weak-coupling estimate of
q. `predicted_dipole_modes` lays the dipole mixed-mode spectrum predicted
from the model's radial modes over an observed échelle.

The stage functions read no files and print nothing. Frequencies are in μHz,
periods in s, global quantities in solar units (log g in cgs dex).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field
from typing import Any

import numpy as np

from ..errors import InputError, OptionError
from ..relations import envelope_fwhm
from ..scaling import DEFAULT_REFERENCE, SUN, SolarReference
from ..scaling.references import _resolve_reference
from .constants import L_SUN_CGS, SIGMA_SB_CGS
from .profiles import StellarProfile

__all__ = [
    "OBSERVABLE_UNITS",
    "ModelObservables",
    "Cavities",
    "seismic_observables",
    "asymptotic_dnu",
    "period_spacing",
    "mode_cavities",
]

_HZ_TO_UHZ = 1e6
#: Atomic mass unit (g) and Boltzmann constant (erg K⁻¹), CODATA 2018.
_AMU_G = 1.66053906660e-24
_K_B_CGS = 1.380649e-16

#: Unit of each numeric field of `ModelObservables` (as in its ``to_dict``).
OBSERVABLE_UNITS: dict[str, str] = {
    "mass": "M☉", "radius": "R☉", "logg": "dex (cgs)", "luminosity": "L☉", "teff": "K",
    "age": "yr", "mean_density": "g cm-3", "dnu_asym": "μHz", "dnu_scaling": "μHz",
    "f_dnu": "dimensionless", "dnu_modes": "μHz", "f_dnu_modes": "dimensionless",
    "numax": "μHz", "dpi1": "s", "nu_ac_model": "μHz", "nu_ac_scaling": "μHz",
    "cavity_frequency": "μHz", "g_cavity": "r/R", "evanescent_zone": "r/R",
    "p_cavity": "r/R", "evanescent_integral": "dimensionless", "q_weak": "dimensionless",
}


@dataclass(frozen=True)
class Cavities:
    """The l-mode propagation regions of a model at one frequency.

    Attributes
    ----------
    frequency : float
        Cyclic frequency ν, μHz (ω = 2πν).
    degree : int
        Angular degree l of the Lamb frequency S_l.
    g_cavity : (float, float) or None
        Inner and outer fractional radius r/R of the innermost g-mode cavity
        (ω < N and ω < S_l).
    evanescent_zone : (float, float) or None
        Fractional radii (r1/R, r2/R) of the evanescent zone between that g
        cavity and the next p-mode cavity outside it.
    p_cavity : (float, float) or None
        Inner and outer fractional radius of that p-mode cavity (ω > N and
        ω > S_l).
    evanescent_integral : float or None
        T = ∫_{r1}^{r2} κ dr, dimensionless.
    q_weak : float or None
        Weak-coupling estimate q = exp(−2T)/4, dimensionless (approximate:
        valid for a thick evanescent zone, T ≳ 1).
    """

    frequency: float
    degree: int
    g_cavity: tuple[float, float] | None
    evanescent_zone: tuple[float, float] | None
    p_cavity: tuple[float, float] | None
    evanescent_integral: float | None
    q_weak: float | None


@dataclass(frozen=True)
class ModelObservables:
    """Seismic and global observables of one stellar model.

    Attributes
    ----------
    name : str
        The profile's label.
    mass, radius : float
        M☉ and R☉.
    logg : float
        log10 of the surface gravity GM/R² in cm s⁻² (dex).
    luminosity : float or None
        L☉: the profile's, else 4πR²σTeff⁴ when Teff is known.
    teff : float or None
        Effective temperature used for numax, K.
    age : float or None
        yr.
    mean_density : float
        3M/(4πR³), g cm⁻³.
    dnu_asym : float
        Asymptotic large separation (2 ∫₀^R dr/c)⁻¹, μHz.
    dnu_scaling : float
        Δν☉ (ρ̄/ρ̄☉)^½ with the chosen solar reference, μHz.
    f_dnu : float
        dnu_asym / dnu_scaling (dimensionless).
    dnu_modes, f_dnu_modes : float or None
        Δν fitted to the given radial modes (μHz) and its ratio to
        dnu_scaling; None when no modes were given.
    numax : float or None
        ν_max☉ (g/g☉)(Teff/Teff☉)^-½, μHz; None without Teff.
    dpi1 : float or None
        Asymptotic dipole period spacing, s; None without a buoyancy cavity.
    nu_ac_model : float or None
        c/(4π H_p) at the photosphere, μHz; None when the model has no
        atmosphere (p or ρ is 0 at r = R, as for a polytrope).
    nu_ac_scaling : float or None
        The same isothermal formula evaluated with T = Teff (∝ g Teff^-½), μHz.
    cavities : Cavities or None
        l=1 cavities and the weak-coupling q at ``cavity_frequency``.
    reference : str
        Key (or source) of the solar reference set.
    flags : tuple of str
        Machine-readable ``"field:reason"`` strings for null or approximate
        values.
    """

    name: str
    mass: float
    radius: float
    logg: float
    luminosity: float | None
    teff: float | None
    age: float | None
    mean_density: float
    dnu_asym: float
    dnu_scaling: float
    f_dnu: float
    dnu_modes: float | None
    f_dnu_modes: float | None
    numax: float | None
    dpi1: float | None
    nu_ac_model: float | None
    nu_ac_scaling: float | None
    cavities: Cavities | None
    reference: str
    flags: tuple[str, ...] = field(default_factory=tuple)

    @property
    def q_weak(self) -> float | None:
        """Weak-coupling q at the cavity frequency, or None (dimensionless)."""
        return None if self.cavities is None else self.cavities.q_weak

    def to_dict(self) -> dict[str, Any]:
        """JSON-safe flat dictionary in the units of `OBSERVABLE_UNITS`.

        Returns
        -------
        dict
            Every field; the cavity fields are flattened (``cavity_frequency``,
            ``g_cavity``, ``evanescent_zone``, ``p_cavity`` as two-element lists
            of r/R, ``evanescent_integral``, ``q_weak``); tuples become lists,
            non-finite numbers None; ``units`` maps each numeric key to its unit.
        """
        out = asdict(self)
        cav = out.pop("cavities") or {}
        out["cavity_frequency"] = cav.get("frequency")
        for key in ("g_cavity", "evanescent_zone", "p_cavity", "evanescent_integral", "q_weak"):
            out[key] = cav.get(key)
        out["flags"] = list(self.flags)
        out = {key: _json_safe(value) for key, value in out.items()}
        out["units"] = dict(OBSERVABLE_UNITS)
        return out


def _json_safe(value: Any) -> Any:
    if isinstance(value, (tuple, list)):
        return [_json_safe(v) for v in value]
    if isinstance(value, (float, np.floating)):
        return float(value) if math.isfinite(value) else None
    if isinstance(value, np.integer):
        return int(value)
    return value


# ---------------------------------------------------------------------------
# Integrals on the model mesh (bare float64 kernels)
# ---------------------------------------------------------------------------


def _to_surface(profile: StellarProfile, *arrays: np.ndarray) -> tuple[np.ndarray, ...]:
    """Mesh and arrays cut at r = R, with a linearly interpolated point at R.

    Models that carry an atmosphere above the photosphere (r > R) are
    integrated to the photospheric radius only, as Δν = (2∫₀^R dr/c)⁻¹ asks.
    """
    r, radius = profile.r, profile.radius
    if r[-1] <= radius * (1.0 + 1e-12):
        return (r, *arrays)
    inside = r < radius
    at_r = [np.interp(radius, r, a) for a in arrays]
    cut = [np.append(a[inside], v) for a, v in zip(arrays, at_r, strict=True)]
    return (np.append(r[inside], radius), *cut)


def _acoustic_radius(profile: StellarProfile) -> float:
    """τ = ∫₀^R dr/c in s, exact for c² linear in r on each mesh interval.

    On an interval of length h with end values c0, c1, c² linear in r gives
    ∫ dr/c = 2h/(c0 + c1). This stays finite when c = 0 at the surface point
    (at a polytrope's surface c² ∝ R − r to leading order, where the rule is
    exact) and is second-order accurate elsewhere.
    """
    r, c2 = _to_surface(profile, profile.c2)
    c = np.sqrt(np.clip(c2, 0.0, None))
    pair = c[:-1] + c[1:]
    if np.any(pair <= 0) or not np.all(np.isfinite(pair)):
        raise InputError(
            "sound speed is zero or not finite on a whole mesh interval",
            hint="check the p, rho and gamma1 columns of the profile",
        )
    return float(np.sum(2.0 * np.diff(r) / pair))


def asymptotic_dnu(profile: StellarProfile) -> float:
    """Asymptotic large frequency separation of a model.

    Parameters
    ----------
    profile : StellarProfile
        The model (cgs).

    Returns
    -------
    float
        Δν_asym = (2 ∫₀^R dr/c)⁻¹, μHz.

    Raises
    ------
    InputError
        If c is zero or not finite over a whole mesh interval.

    Notes
    -----
    The integral uses the rule exact for c² linear in r on each mesh
    interval, 2h/(c_i + c_{i+1}); it handles the c → 0 surface of a polytrope
    (c ∝ (R − r)^½, integrable) without special cases. Points above r = R
    are left out.

    References
    ----------
    Tassoul M. 1980, ApJS 43, 469 (from memory).
    """
    return _HZ_TO_UHZ / (2.0 * _acoustic_radius(profile))


def _buoyancy_integral(profile: StellarProfile) -> float:
    """∫ N/r dr over N² > 0, rad s⁻¹ (dimensionless per unit ln r).

    Trapezoid rule on the mesh with N = √max(N², 0). At r = 0, N/r is its
    limit for a regular centre (N/r = a + b r²), extrapolated in r² from the
    next two points; a mesh that starts at r0 > 0 gets r0 · (N/r)(r0) for the
    missing centre. A surface value N² = +∞ (a polytrope, where d ln p/dr
    diverges) is integrated analytically over the last interval assuming
    N² ∝ 1/(R − r): ∫ N dr = 2 N_k h.
    """
    r, n2 = profile.r, profile.buoyancy2
    if np.any(np.isnan(n2)) or np.any(np.isposinf(n2[:-1])):
        raise InputError(
            "N² is NaN, or +inf below the surface point",
            hint="give a finite n2 column (s^-2) or let seismo derive it",
        )
    surface_inf = bool(np.isposinf(n2[-1]))
    n2 = np.where(np.isneginf(n2), 0.0, n2)
    if surface_inf:
        r, n2 = r[:-1], n2[:-1]
    buoy = np.sqrt(np.clip(n2, 0.0, None))
    with np.errstate(divide="ignore", invalid="ignore"):
        f = buoy / r
    if r[0] == 0.0:
        r1, r2 = r[1] ** 2, r[2] ** 2
        f[0] = max(f[1] - (f[2] - f[1]) * r1 / (r2 - r1), 0.0)
        centre = 0.0
    else:
        centre = r[0] * f[0]
    total = centre + float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(r)))
    if surface_inf:
        h = profile.r[-1] - r[-1]
        total += 2.0 * buoy[-1] * h / (r[-1] + 0.5 * h)
    return total


def period_spacing(profile: StellarProfile, l: int = 1) -> float | None:
    """Asymptotic period spacing of the g modes of degree l.

    Parameters
    ----------
    profile : StellarProfile
        The model (cgs).
    l : int
        Angular degree, ≥ 1.

    Returns
    -------
    float or None
        ΔΠ_l = 2π² / √(l(l+1)) · (∫ N/r dr)⁻¹ over the region where N² > 0,
        s; None when N² ≤ 0 everywhere (no buoyancy cavity).

    Raises
    ------
    OptionError
        If ``l`` < 1.
    InputError
        If N² is NaN anywhere or +∞ below the surface point.

    Notes
    -----
    Trapezoid rule on the model mesh with N = √max(N², 0). At r = 0, N/r
    takes its finite limit for a regular centre (N ∝ r), extrapolated in r²
    from the next two points; a mesh that starts at r0 > 0 adds r0 · N/r at
    r0 for the missing centre. An infinite surface N² (a polytrope, where
    d ln p/dr diverges as p → 0) is integrated analytically over the last
    interval assuming N² ∝ 1/(R − r) there. Because N/r ∝ (R − r)^-½ below
    such a surface, the rule converges at first order in the mesh spacing
    for polytropes (3·10⁻⁵ relative at 2001 points for n = 3) and at
    second order for models with a finite surface N². For a red giant the
    integral is dominated by the radiative core.

    References
    ----------
    Tassoul M. 1980, ApJS 43, 469 (from memory).
    """
    if int(l) != l or l < 1:
        raise OptionError(f"l must be an integer >= 1 for g modes, got {l!r}")
    integral = _buoyancy_integral(profile)
    if not integral > 0:
        return None
    return float(2.0 * np.pi**2 / np.sqrt(l * (l + 1.0)) / integral)


def _crossing(r: np.ndarray, d: np.ndarray, i: int) -> float:
    """Radius between mesh points i and i+1 where d changes sign (linear)."""
    d0, d1 = d[i], d[i + 1]
    if not (np.isfinite(d0) and np.isfinite(d1)) or d0 == d1:
        return float(r[i] if np.isfinite(d0) and d0 >= 0 else r[i + 1])
    return float(r[i] + (r[i + 1] - r[i]) * d0 / (d0 - d1))


def _region(
    r: np.ndarray, radius: float, inside: np.ndarray, edge: np.ndarray, start: int
) -> tuple[float, float]:
    """(inner, outer) r/R of the run of ``inside`` points that begins at ``start``.

    The edges are interpolated linearly in ``edge``, which changes sign
    there, or are the mesh ends.
    """
    after = np.flatnonzero(~inside[start:])
    end = int(after[0]) + start - 1 if after.size else r.size - 1
    inner = r[0] if start == 0 else _crossing(r, edge, start - 1)
    outer = r[-1] if end == r.size - 1 else _crossing(r, -edge, end)
    return float(inner / radius), float(outer / radius)


def mode_cavities(profile: StellarProfile, frequency: float, l: int = 1) -> Cavities:
    """Propagation cavities of l modes at one frequency and the weak-coupling q.

    Parameters
    ----------
    profile : StellarProfile
        The model (cgs).
    frequency : float
        Cyclic frequency ν, μHz.
    l : int
        Angular degree, ≥ 1 (default 1).

    Returns
    -------
    Cavities
        The innermost g cavity, the evanescent zone above it, the p cavity
        above that (fractional radii), T and q. Regions that do not exist
        are None.

    Raises
    ------
    OptionError
        If ``frequency`` is not finite and positive or ``l`` < 1.

    Notes
    -----
    With ω = 2πν, the Lamb frequency S_l² = l(l+1)c²/r² and N², a point is in
    a g cavity where ω² < N² and ω² < S_l², in a p cavity where ω² > both,
    and evanescent otherwise. Turning points are interpolated linearly in
    ω² − min(N², S_l²) (r1) and ω² − max(N², S_l²) (r2) between mesh points.
    In the evanescent zone the local radial wavenumber is imaginary,
    κ² = −(ω²/c²)(S_l²/ω² − 1)(N²/ω² − 1) > 0, and T = ∫_{r1}^{r2} κ dr
    (trapezoid rule with κ = 0 at the turning points). The weak-coupling
    estimate q = exp(−2T)/4 holds for a thick zone; for a thin one it
    underestimates the strong coupling of early RGB stars.

    References
    ----------
    Unno W. et al. 1989, *Nonradial Oscillations of Stars*, 2nd ed.;
    Takata M. 2016, PASJ 68, 109 (weak-coupling form from memory).
    """
    if not (np.isfinite(frequency) and frequency > 0):
        raise OptionError(f"frequency must be finite and > 0 (μHz), got {frequency!r}")
    if int(l) != l or l < 1:
        raise OptionError(f"l must be an integer >= 1, got {l!r}")
    omega2 = (2.0 * np.pi * frequency / _HZ_TO_UHZ) ** 2
    r, c2, n2 = _to_surface(profile, profile.c2, profile.buoyancy2)
    with np.errstate(divide="ignore", invalid="ignore"):
        s2 = np.where(r > 0, l * (l + 1.0) * c2 / r**2, np.inf)
    lo, hi = np.minimum(n2, s2), np.maximum(n2, s2)
    in_g, in_p = omega2 < lo, omega2 > hi
    g_idx = np.flatnonzero(in_g)
    if g_idx.size == 0:
        p_only = _region(r, profile.radius, in_p, hi - omega2, int(np.argmax(in_p)))
        return Cavities(float(frequency), int(l), None, None, p_only if in_p.any() else None,
                        None, None)
    g_start = int(g_idx[0])
    g_cav = _region(r, profile.radius, in_g, omega2 - lo, g_start)
    p_after = np.flatnonzero(in_p[g_start:]) + g_start
    if p_after.size == 0:
        return Cavities(float(frequency), int(l), g_cav, None, None, None, None)
    ip = int(p_after[0])
    ig = int(np.flatnonzero(in_g[:ip])[-1])
    r1 = _crossing(r, omega2 - lo, ig)
    r2 = _crossing(r, omega2 - hi, ip - 1)
    p_cav = _region(r, profile.radius, in_p, hi - omega2, ip)
    inside = (r > r1) & (r < r2)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        kappa2 = -(omega2 / c2[inside]) * (s2[inside] / omega2 - 1.0) * (n2[inside] / omega2 - 1.0)
    kappa = np.sqrt(np.clip(np.nan_to_num(kappa2, nan=0.0, posinf=0.0), 0.0, None))
    rr = np.concatenate(([r1], r[inside], [r2]))
    kk = np.concatenate(([0.0], kappa, [0.0]))
    t_int = float(np.sum(0.5 * (kk[1:] + kk[:-1]) * np.diff(rr)))
    radius = profile.radius
    return Cavities(
        frequency=float(frequency), degree=int(l),
        g_cavity=(g_cav[0], r1 / radius),
        evanescent_zone=(r1 / radius, r2 / radius),
        p_cavity=(r2 / radius, p_cav[1]),
        evanescent_integral=t_int, q_weak=0.25 * math.exp(-2.0 * t_int),
    )


# ---------------------------------------------------------------------------
# The stage function
# ---------------------------------------------------------------------------


def _teff(profile: StellarProfile, teff: float | None) -> tuple[float | None, str | None]:
    if teff is not None:
        if not (np.isfinite(teff) and teff > 0):
            raise OptionError(f"teff must be finite and > 0 (K), got {teff!r}")
        return float(teff), "argument"
    if profile.teff is not None and np.isfinite(profile.teff) and profile.teff > 0:
        return float(profile.teff), "profile"
    if profile.luminosity is not None and profile.luminosity > 0:
        value = (profile.luminosity / (4.0 * np.pi * profile.radius**2 * SIGMA_SB_CGS)) ** 0.25
        return float(value), "stefan_boltzmann"
    return None, None


def _photosphere_cutoff(profile: StellarProfile) -> float | None:
    """c/(4π H_p) with H_p = p/(ρ g) at r = R, μHz; None without an atmosphere."""
    r, p, rho, gamma1 = _to_surface(profile, profile.p, profile.rho, profile.gamma1)
    if not (p[-1] > 0 and rho[-1] > 0):
        return None
    scale_height = p[-1] / (rho[-1] * profile.surface_gravity)
    return float(np.sqrt(gamma1[-1] * p[-1] / rho[-1]) / (4.0 * np.pi * scale_height)
                 * _HZ_TO_UHZ)


def _fitted_dnu(radial: np.ndarray, numax: float | None) -> float:
    """Slope of ν_n against consecutive n, Gaussian-weighted around numax (μHz)."""
    order = np.arange(radial.size, dtype=float)
    if numax is None:
        weights = np.ones_like(radial)
    else:
        sigma = float(envelope_fwhm(numax)) / (2.0 * np.sqrt(2.0 * np.log(2.0)))
        weights = np.exp(-0.5 * ((radial - numax) / sigma) ** 2) + 1e-12
    slope, _ = np.polyfit(order, radial, 1, w=np.sqrt(weights))
    return float(slope)


def seismic_observables(
    profile: StellarProfile,
    *,
    reference: str | SolarReference = DEFAULT_REFERENCE,
    teff: float | None = None,
    frequency: float | None = None,
    radial_frequencies: Any = None,
    mean_molecular_weight: float = 1.3,
) -> ModelObservables:
    """Seismic observables of a stellar model.

    Parameters
    ----------
    profile : StellarProfile
        The model (cgs).
    reference : str or SolarReference
        Solar reference set for the scaling relations: a key of
        `seismo.scaling.SOLAR_REFERENCES` (default ``"huber2011"``) or one's own.
    teff : float, optional
        Effective temperature, K. Default: the profile's, else from L and R by
        Stefan–Boltzmann, L = 4πR²σT⁴; without either, numax is None.
    frequency : float, optional
        Frequency at which the cavities and q are evaluated, μHz; default numax.
    radial_frequencies : array_like, shape (n_modes,), optional
        Radial-mode frequencies of consecutive orders from the oscillation
        solver, μHz; Δν is then also fitted to them (least squares of ν_n on
        n, Gaussian-weighted around numax with the envelope width of
        `seismo.relations.envelope_fwhm`) and f_dnu_modes reported.
    mean_molecular_weight : float
        μ of the atmosphere for the isothermal cut-off at T = Teff (default
        1.3, a neutral solar mixture; common practice).

    Returns
    -------
    ModelObservables
        Every observable, with flags for the null and approximate ones.

    Raises
    ------
    OptionError
        For an unknown reference, a non-positive teff or frequency, or
        fewer than 2 radial frequencies.
    InputError
        For a profile whose c or N² cannot be integrated.

    Notes
    -----
    - numax = ν_max☉ (g/g☉)(Teff/Teff☉)^-½ and Δν_scaling = Δν☉ (ρ̄/ρ̄☉)^½,
      with ν_max☉, Δν☉ and Teff☉ of the reference set and g☉, ρ̄☉ of the
      nominal Sun (`seismo.scaling.SUN`); f_dnu = Δν_asym / Δν_scaling. A
      reference of the "observed" Δν kind compares an asymptotic with an
      observed scale (red giants: Δν_as ≈ 1.04 Δν_obs, Mosser et al. 2013).
    - The acoustic cut-off reported as ``nu_ac_model`` is the isothermal-
      atmosphere value c/(4πH_p), H_p = p/(ρg), at the photosphere r = R.
      ``nu_ac_scaling`` evaluates the same formula for an isothermal ideal gas
      at T = Teff: ν_ac = g √(Γ1 μ m_u / (k Teff)) / (4π) with Γ1 = 5/3, which
      is the scaling ν_ac ∝ g Teff^-½ with its constant from physics rather
      than from the Sun.
    - The cavities are those of l = 1; q is the weak-coupling estimate and is
      flagged ``q_weak:approximate``.

    References
    ----------
    Brown T. M. et al. 1991, ApJ 368, 599; Kjeldsen H. & Bedding T. R. 1995,
    A&A 293, 87 (scaling relations); Tassoul M. 1980, ApJS 43, 469 (Δν and
    ΔΠ_l, from memory); Unno W. et al. 1989; Takata M. 2016, PASJ 68, 109
    (weak coupling, from memory).
    """
    ref = _resolve_reference(reference)
    flags: list[str] = []
    t_eff, teff_source = _teff(profile, teff)
    if teff_source == "stefan_boltzmann":
        flags.append("teff:from_luminosity_and_radius")
    g = profile.surface_gravity
    g_sun = 10.0**SUN.logg
    numax = None
    nu_ac_scaling = None
    if t_eff is None:
        flags.append("numax:no_teff_nor_luminosity")
    else:
        numax = ref.numax * (g / g_sun) * (t_eff / ref.teff) ** -0.5
        nu_ac_scaling = (g * np.sqrt(5.0 / 3.0 * mean_molecular_weight * _AMU_G
                                     / (_K_B_CGS * t_eff)) / (4.0 * np.pi) * _HZ_TO_UHZ)
    dnu_asym = asymptotic_dnu(profile)
    dnu_scaling = ref.dnu * math.sqrt(profile.mean_density / SUN.density)
    dnu_modes = f_modes = None
    if radial_frequencies is not None:
        radial = np.sort(np.asarray(radial_frequencies, dtype=float).ravel())
        if radial.size < 2 or not np.all(np.isfinite(radial)) or np.any(radial <= 0):
            raise OptionError(
                f"radial_frequencies needs at least 2 finite positive values (μHz), got "
                f"{radial.size}"
            )
        dnu_modes = _fitted_dnu(radial, numax)
        f_modes = dnu_modes / dnu_scaling
    dpi1 = period_spacing(profile, 1)
    if dpi1 is None:
        flags.append("dpi1:no_buoyancy_cavity")
    nu_ac_model = _photosphere_cutoff(profile)
    if nu_ac_model is None:
        flags.append("nu_ac_model:no_atmosphere")
    cav_freq = numax if frequency is None else frequency
    cavities = None
    if cav_freq is None:
        flags.append("cavities:no_frequency")
    else:
        cavities = mode_cavities(profile, float(cav_freq), 1)
        if cavities.q_weak is None:
            flags.append("q_weak:no_evanescent_zone")
        else:
            flags.append("q_weak:approximate")
    lum = profile.luminosity_solar
    if lum is None and t_eff is not None and teff_source != "stefan_boltzmann":
        lum = float(4.0 * np.pi * profile.radius**2 * SIGMA_SB_CGS * t_eff**4 / L_SUN_CGS)
    return ModelObservables(
        name=profile.name, mass=profile.mass_solar, radius=profile.radius_solar,
        logg=float(np.log10(g)), luminosity=lum, teff=t_eff, age=profile.age,
        mean_density=profile.mean_density, dnu_asym=dnu_asym, dnu_scaling=dnu_scaling,
        f_dnu=dnu_asym / dnu_scaling, dnu_modes=dnu_modes, f_dnu_modes=f_modes,
        numax=None if numax is None else float(numax), dpi1=dpi1, nu_ac_model=nu_ac_model,
        nu_ac_scaling=None if nu_ac_scaling is None else float(nu_ac_scaling),
        cavities=cavities, reference=ref.key, flags=tuple(flags),
    )
