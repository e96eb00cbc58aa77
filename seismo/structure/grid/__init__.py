"""Grid-based estimates of mass, radius, age and log g from global seismic observables.

A `ModelGrid` holds a grid of evolutionary tracks as one table of global
quantities per model. `grid_estimate` weights every model by the likelihood
of the observed Δν, ν_max, T_eff (and [Fe/H], ΔΠ1, evolutionary state when
measured) times a prior, and returns weighted percentiles of the mass,
radius, age and log g (`GridEstimate`).

The method is the standard grid-based ("likelihood-weighted") approach used
for red giants, e.g. Gai et al. 2011, ApJ 730, 63 and Basu et al. 2010, ApJ
710, 1596 (references from memory); everything here is written from that
description.

Grid columns and units
----------------------
==========  ==============================================================
track       track identifier (any hashable value; one track = one star)
mass        **initial** mass, M☉ — constant along a track (the IMF prior
            and the grid-spacing volume apply to it)
age         age, **Gyr**, strictly increasing along a track
feh         [Fe/H], dex — constant along a track
teff        effective temperature, K
radius      radius, R☉
dnu         large separation Δν, μHz
numax       frequency of maximum power ν_max, μHz
dpi1        asymptotic dipole period spacing ΔΠ1, s (NaN where unknown)
state       ``RGB``, ``RC``, ``2CL`` or ``other``
logg        optional: log10 surface gravity, dex (cgs); derived from mass
            and radius when absent (log g☉ of the IAU 2015 nominal Sun)
luminosity  optional: L☉
==========  ==============================================================

Prior and refinement (precomputed once, in `ModelGrid`)
-------------------------------------------------------
Consecutive models of a track in the same state bound an interval. Each
interval is cut into sub-steps, enough that no observable (Δν, ν_max,
T_eff, ΔΠ1) changes by more than ``step_fraction`` (relative) across one,
and each sub-step becomes a sample point at its midpoint with quantities
linearly interpolated in age. A point's prior weight is

    (duration of its sub-step) × (grid-spacing volume of its track) × IMF(mass)

The duration is the evolutionary-speed prior: a star is more often found in
a slow phase (uniform star-formation rate). The volume is the trapezoid
width of the track's mass among the tracks of its [Fe/H], times the
trapezoid width of its [Fe/H] among the grid's [Fe/H] values, so that an
irregular grid does not over-weight densely sampled regions (a flat prior
over the covered range). An interval where the state changes (helium flash,
ignition) is a transition and gets no sample points: its observables are
not those of either state.

Per star, the cost is one search of the points (sorted by Δν) for a box of
±``box_sigma`` Δν errors, then a few numpy operations on that slice and
weighted percentiles of the points that carry weight.
"""


from .estimate import (
    MODEL_ERRORS,
    GridEstimate,
    grid_details,
    grid_estimate,
    grid_estimate_for_result,
)
from .model import (
    GRID_COLUMNS,
    GRID_STATES,
    MASS_PRIORS,
    ModelGrid,
    demo_grid_path,
    load_demo_grid,
    read_grid,
    weighted_quantiles,
)

__all__ = [
    "GRID_COLUMNS",
    "MODEL_ERRORS",
    "GRID_STATES",
    "MASS_PRIORS",
    "ModelGrid",
    "GridEstimate",
    "read_grid",
    "demo_grid_path",
    "load_demo_grid",
    "grid_estimate",
    "grid_estimate_for_result",
    "grid_details",
    "weighted_quantiles",
]
