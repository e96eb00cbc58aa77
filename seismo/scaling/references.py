"""Solar constants, solar reference sets and empirical corrections of the scaling relations.

Part of `seismo.scaling`; the public names are re-exported there.
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import OptionError

__all__ = [
    "NominalSun",
    "SUN",
    "SolarReference",
    "SOLAR_REFERENCES",
    "DEFAULT_REFERENCE",
    "BIAS_NOTE",
    "CORRECTIONS",
    "ASSUMED_GIANT_TEFF",
]


def _is_real(value: Any) -> bool:
    return isinstance(value, numbers.Real) and not isinstance(value, (bool, np.bool_))


# ---------------------------------------------------------------------------
# Solar constants and reference sets
# ---------------------------------------------------------------------------


@dataclass(frozen=True)
class NominalSun:
    """IAU 2015 Resolution B3 nominal solar values and quantities derived from them.

    Parameters
    ----------
    radius_m : float
        Nominal solar radius, m (6.957e8).
    luminosity_w : float
        Nominal solar luminosity, W (3.828e26).
    teff : float
        Nominal solar effective temperature, K (5772).
    gm_si : float
        Nominal solar mass parameter GM☉, m³ s⁻² (1.3271244e20).
    gravitational_constant : float
        G, m³ kg⁻¹ s⁻² (CODATA 2018, 6.67430e-11).

    References
    ----------
    Prša A. et al. 2016, AJ 152, 41 (IAU 2015 Resolution B3); Mamajek E. E.
    et al. 2015, arXiv:1510.07674.
    """

    radius_m: float = 6.957e8
    luminosity_w: float = 3.828e26
    teff: float = 5772.0
    gm_si: float = 1.3271244e20
    gravitational_constant: float = 6.67430e-11

    @property
    def mass_kg(self) -> float:
        """M☉ = GM☉ / G, kg (1.98841e30)."""
        return self.gm_si / self.gravitational_constant

    @property
    def logg(self) -> float:
        """log10 of the surface gravity GM☉/R☉² in cm s⁻² (4.4381)."""
        return math.log10(100.0 * self.gm_si / self.radius_m**2)

    @property
    def density(self) -> float:
        """Mean density 3M☉ / (4π R☉³), g cm⁻³ (1.40978)."""
        return 1e-3 * self.mass_kg / (4.0 / 3.0 * math.pi * self.radius_m**3)


#: The nominal Sun used for log g☉ and ρ̄☉ throughout seismo.
SUN = NominalSun()


@dataclass(frozen=True)
class SolarReference:
    """One set of solar reference values for the scaling relations.

    Parameters
    ----------
    key : str
        Short name used to select the set.
    numax : float
        ν_max☉, μHz.
    dnu : float
        Δν☉, μHz.
    teff : float
        T_eff☉, K.
    source : str
        The paper the values come from.
    note : str
        One line on how reliable the values are and how to use them.
    dnu_kind : str
        ``"observed"`` (Δν fitted to the radial modes, as seismo measures it)
        or ``"asymptotic"`` (Δν of the asymptotic relation, about 3–4 % larger
        in red giants); only observed sets enter `reference_systematics`.
    """

    key: str
    numax: float
    dnu: float
    teff: float
    source: str
    note: str
    dnu_kind: str = "observed"

    def __post_init__(self) -> None:
        for name in ("numax", "dnu", "teff"):
            value = getattr(self, name)
            if not (_is_real(value) and math.isfinite(value) and value > 0):
                raise OptionError(f"SolarReference {name} must be finite and > 0; got {value!r}")
        if self.dnu_kind not in ("observed", "asymptotic"):
            raise OptionError(
                f"SolarReference dnu_kind must be 'observed' or 'asymptotic'; got "
                f"{self.dnu_kind!r}"
            )


def _reference_table() -> dict[str, SolarReference]:
    rows = [
        SolarReference(
            "kb1995", 3050.0, 134.9, 5777.0, "Kjeldsen & Bedding 1995, A&A 293, 87",
            "the original calibration (values from memory)",
        ),
        SolarReference(
            "kallinger2010", 3120.0, 134.88, 5772.0,
            "Kallinger et al. 2010, A&A 509, A77 and A&A 522, A1",
            "values from memory; T_eff☉ quoted as 5777 or 5772 K, 5772 K used here",
        ),
        SolarReference(
            "huber2011", 3090.0, 135.1, 5777.0, "Huber et al. 2011, ApJ 743, 143",
            "±30 and ±0.1 μHz; also used by Chaplin et al. 2014 and Yu et al. 2018 "
            "(values from memory)",
        ),
        SolarReference(
            "mosser2013", 3050.0, 135.5, 5777.0, "Mosser et al. 2011, 2013 (observed scale)",
            "observed-Δν scale of the Mosser et al. papers (values from memory)",
        ),
        SolarReference(
            "mosser2013_asymptotic", 3104.0, 138.8, 5777.0,
            "Mosser et al. 2013, A&A 550, A126",
            "for asymptotic Δν only, after Δν_as ≈ (1 + 0.038) Δν_obs; from memory, low "
            "confidence",
            dnu_kind="asymptotic",
        ),
        SolarReference(
            "apokasc2", 3076.0, 135.146, 5772.0, "Pinsonneault et al. 2018, ApJS 239, 32",
            "APOKASC-2 consolidated scale (values from memory, low confidence)",
        ),
    ]
    return {row.key: row for row in rows}


#: Published solar reference sets by key (REFERENCES.md §1b). To use other
#: values, pass a `SolarReference` as ``reference`` rather than editing this.
SOLAR_REFERENCES: dict[str, SolarReference] = _reference_table()

# Huber et al. 2011 is the most widely shared canonical set (Chaplin et al.
# 2014, Yu et al. 2018), lies mid-way in the spread of the others, and Hekker
# et al. 2013 found canonical rather than method-specific references avoid a
# log g bias of the size of the errors.
DEFAULT_REFERENCE = "huber2011"

BIAS_NOTE = (
    "Scaling relations without corrections overestimate red-giant masses by about 10-15% "
    "and radii by about 5% (Gaulme et al. 2016, ApJ 832, 121; Brogaard et al. 2018, "
    "MNRAS 476, 3729); treat uncorrected masses as upper-biased."
)

#: Empirical corrections: quantity -> (divisor, 1σ uncertainty of the divisor).
#: "eclipsing-binary": the mean offsets of Gaulme et al. 2016 (M/1.15, R/1.05;
#: abstract). Their uncertainties are our reading of the scatter among the
#: published offsets (Brogaard et al. 2018: 11.7-18.9 % in mass; modelling of
#: 3642 giants: about 15 % and 7 %): ±0.05 in mass and ±0.02 in radius.
#: L = R² t⁴ follows the radius.
CORRECTIONS: dict[str, dict[str, tuple[float, float]]] = {
    "none": {},
    "eclipsing-binary": {
        "mass": (1.15, 0.05),
        "radius": (1.05, 0.02),
        "luminosity": (1.05**2, 2 * 1.05 * 0.02),
    },
}

#: (T_eff, σ) in K assumed for log g when no T_eff is given: a typical red giant
#: (common practice; Kepler red giants mostly lie between 4000 and 5200 K).
ASSUMED_GIANT_TEFF = (4800.0, 400.0)


def _resolve_reference(reference: str | SolarReference) -> SolarReference:
    if isinstance(reference, SolarReference):
        return reference
    if isinstance(reference, str) and reference in SOLAR_REFERENCES:
        return SOLAR_REFERENCES[reference]
    raise OptionError(
        f"unknown solar reference {reference!r}; allowed references are "
        f"{sorted(SOLAR_REFERENCES)} or a SolarReference"
    )
