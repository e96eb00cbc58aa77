"""Seismic observables of a stellar model: Δν, ΔΠ1, numax, cut-off, cavities and q.

`seismic_observables` turns one `StellarProfile` into a `ModelObservables`:
the asymptotic large separation and dipole period spacing integrated on the
model's own mesh, the scaling-relation numax and Δν with the solar reference
sets of :mod:`seismo.scaling` (so the model's own Δν correction
f_Δν = Δν_asym / Δν_scaling is reported), the acoustic cut-off frequency, the
l=1 propagation cavities at a chosen frequency and a weak-coupling estimate of
q (the integrals live in :mod:`seismo.structure.integrals`; the dipole
spectrum predicted from the model's radial modes, to lay over an observed
échelle, in :mod:`seismo.structure.dipole`).

The stage functions read no files and print nothing. Frequencies are in μHz,
periods in s, global quantities in solar units (log g in cgs dex).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field
from typing import Any

import numpy as np

from ..errors import OptionError
from ..relations import envelope_fwhm
from ..scaling import DEFAULT_REFERENCE, SUN, SolarReference
from ..scaling.references import _resolve_reference
from .constants import L_SUN_CGS, SIGMA_SB_CGS
from .integrals import Cavities, _to_surface, asymptotic_dnu, mode_cavities, period_spacing
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
