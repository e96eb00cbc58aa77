"""Mass, radius, log g, mean density and luminosity from the seismic scaling relations.

With x = ν_max / (f_νmax ν_max☉), y = Δν / (f_Δν Δν☉) and t = T_eff / T_eff☉
(Brown et al. 1991; Kjeldsen & Bedding 1995):

- R/R☉ = x y⁻² t^½
- M/M☉ = x³ y⁻⁴ t^{3/2}
- g/g☉ = x t^½
- ρ̄/ρ̄☉ = y²
- L/L☉ = (R/R☉)² t⁴

The solar seismic reference values (ν_max☉, Δν☉, T_eff☉) are not universal:
`SOLAR_REFERENCES` bundles the published sets, and changing from one to
another alone moves masses by about ±4 % and radii by about ±2 %. That spread
is added to the errors by default (see `reference_systematics`).

Known bias: uncorrected scaling relations overestimate red-giant masses by
about 10–15 % and radii by about 5 % (Gaulme et al. 2016, ApJ 832, 121, from
ten eclipsing binaries; similar offsets in Brogaard et al. 2018, MNRAS 476,
3729, and from detailed modelling of 3642 Kepler giants). The same text is in
`BIAS_NOTE`. A model-based Δν correction (Sharma et al. 2016, ApJ 822, 15)
enters through ``f_dnu``; the empirical eclipsing-binary offsets through
``correction="eclipsing-binary"``.

Functions
---------
scaling_radius, scaling_mass, scaling_logg, scaling_density, scaling_luminosity
    The plain relations, vectorised (arrays broadcast).
scaling_estimates
    All of them for one star with Monte Carlo errors and systematics.
reference_systematics
    Fractional spread of each quantity over the bundled reference sets.
SOLAR_REFERENCES, DEFAULT_REFERENCE, SolarReference
    The published solar reference sets (key -> values, paper, note).
SUN, NominalSun
    IAU 2015 B3 nominal solar values, log g☉ and ρ̄☉.

The package holds one concept per file: ``references.py`` (constants,
reference sets, corrections), ``formulas.py`` (the relations) and
``estimates.py`` (Monte Carlo propagation).

Solar constants are the IAU 2015 Resolution B3 nominal values (Prša et al.
2016, AJ 152, 41), with G from CODATA 2018; log g☉ and ρ̄☉ are derived from
them (4.4381 dex and 1.40978 g cm⁻³).
"""

from __future__ import annotations

from .estimates import ScalingEstimates, scaling_estimates
from .formulas import (
    reference_systematics,
    scaling_density,
    scaling_logg,
    scaling_luminosity,
    scaling_mass,
    scaling_radius,
)
from .references import (
    ASSUMED_GIANT_TEFF,
    BIAS_NOTE,
    CORRECTIONS,
    DEFAULT_REFERENCE,
    SOLAR_REFERENCES,
    SUN,
    NominalSun,
    SolarReference,
)

__all__ = [
    "NominalSun",
    "SUN",
    "SolarReference",
    "SOLAR_REFERENCES",
    "DEFAULT_REFERENCE",
    "BIAS_NOTE",
    "CORRECTIONS",
    "ASSUMED_GIANT_TEFF",
    "ScalingEstimates",
    "scaling_radius",
    "scaling_mass",
    "scaling_logg",
    "scaling_density",
    "scaling_luminosity",
    "reference_systematics",
    "scaling_estimates",
]
