"""Physical constants for the structure interface, in cgs.

The solar values are the IAU 2015 nominal values (Resolution B3, Prša et al.
2016, AJ 152, 41), the same as those used by :mod:`seismo.scaling`; G is
CODATA 2018.
"""

from __future__ import annotations

#: Newtonian constant of gravitation, cm³ g⁻¹ s⁻² (CODATA 2018).
G_CGS = 6.67430e-8
#: Nominal solar mass parameter GM☉, cm³ s⁻² (IAU 2015 B3).
GM_SUN_CGS = 1.3271244e26
#: Solar mass, g, as GM☉ / G.
M_SUN_G = GM_SUN_CGS / G_CGS
#: Nominal solar radius, cm (IAU 2015 B3).
R_SUN_CM = 6.957e10
#: Nominal solar luminosity, erg s⁻¹ (IAU 2015 B3).
L_SUN_CGS = 3.828e33
#: Stefan–Boltzmann constant, erg cm⁻² s⁻¹ K⁻⁴ (CODATA 2018).
SIGMA_SB_CGS = 5.670374419e-5
#: Seconds per year (Julian year), s.
YEAR_S = 365.25 * 86400.0
