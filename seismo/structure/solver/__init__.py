"""Adiabatic oscillation modes of a `StellarProfile` on the model's own mesh.

The linear adiabatic oscillation equations are written in the dimensionless
variables of Dziembowski (1971, Acta Astron. 21, 289) as given by Unno et al.
(1989, *Nonradial Oscillations of Stars*, 2nd ed., §18):

    y₁ = ξ_r / r,  y₂ = (p′/ρ + Φ′) / (g r),  y₃ = Φ′ / (g r),  y₄ = (1/g) dΦ′/dr,

with the structure entering only through

    V = −d ln p/d ln r,  V_g = V/Γ₁,  U = d ln m/d ln r,
    c₁ = (r/R)³ / (m/M),  A* = r N² / g,

and the frequency through σ² = ω² R³/(G M). With x = r/R and L = l(l+1),

    x dy/dx = A(x, σ²) y,

    A = | V_g − 3     L/(c₁σ²) − V_g   V_g          0  |
        | c₁σ² − A*   A* − U + 1       −A*          0  |
        | 0           0                1 − U        1  |
        | U A*        U V_g            L − U V_g   −U  |

* Non-radial modes (l ≥ 1) solve this fourth-order problem with the full
  perturbation Φ′ of the gravitational potential, or, on request, its upper
  left 2×2 block (the Cowling approximation, Φ′ = 0).
* Radial modes solve the exact second-order problem obtained by integrating
  Poisson's equation once (dΦ′/dr = −4πGρξ_r, i.e. y₄ = −U y₁) in the
  variables y₁ and z = y₂ − y₃ = p′/(ρ g r):
  x dy₁/dx = (V_g − 3) y₁ − V_g z,  x dz/dx = (c₁σ² + U − A*) y₁ + (A* + 1 − U) z.

Boundary conditions (Unno et al. 1989, §18.1)
---------------------------------------------
Centre (regular solution): c₁σ² y₁ − l y₂ = 0 and l y₃ − y₄ = 0 for l ≥ 1;
(V_g − 3) y₁ − V_g z = 0 for l = 0 (3 y₁ = 0 at r = 0 exactly). The variables
are scaled by x^(2−l), the behaviour of the regular solution, so that the
centre itself is an ordinary mesh point.

Surface: the Lagrangian pressure perturbation vanishes, δp = 0, i.e.
y₁ − y₂ + y₃ = 0 (z = y₁ for l = 0), and Φ′ joins the exterior solution
∝ r^−(l+1): dΦ′/dr + (l+1)Φ′/r + 4πGρξ_r = 0, i.e. U y₁ + (l+1) y₃ + y₄ = 0,
with ρ (hence U) taken just inside the surface so that a density jump, as in
the homogeneous sphere, is included. Where ρ, p → 0 (polytropes) V → ∞ and
δp = 0 is exactly the regularity condition of the singular surface.

Scheme
------
A centred box (midpoint) difference on the mesh:
(ỹ_{i+1} − ỹ_i)/h_i = M(x_{i+½}) (ỹ_i + ỹ_{i+1}) / (2 x_{i+½}), second order
on any mesh. The coefficients at the midpoints come from linear interpolation
of quantities that stay bounded at both singular ends (V/(1+V), A*/(1+V), U,
c₁, Γ₁), so V and A* are never needed where they are infinite. The
eigenfrequencies are the zeros of the determinant of the banded system
(LAPACK ``dgbtrf``), found by scanning σ² for sign changes and refining with
Brent's method. The scan step is a fraction of the asymptotic mode spacing
(Tassoul 1980, ApJS 43, 469), with extra subdivision wherever consecutive mode
orders skip. Every mode is then found again on the mesh made of every other
point, and the two are Richardson-extrapolated, σ = (4σ_fine − σ_coarse)/3,
with |σ_fine − σ_coarse|/3 reported as the error estimate.

Mode order
----------
Eckart–Scuflaire–Osaki (Scuflaire 1974, A&A 36, 107; Osaki 1975, PASJ 27,
237): going outwards, a zero of ξ_r at which the point (y₁, y₂) (or (y₁, z)
for l = 0) turns anticlockwise is a p node, clockwise a g node;
n = n_p − n_g. For l ≥ 2 the f mode is n = 0. Radial modes are numbered
n = n_p − n_g + 1 so that the fundamental is n = 1, as in REFERENCES.md §8b
and in Takata's scheme (Takata 2006, PASJ 58, 893, from memory). For l = 1 with
full Φ′ this module uses the same Eckart–Scuflaire–Osaki count,
n = n_p − n_g: it gives p1 = n = 1 for the lowest dipole p mode of the
homogeneous sphere and of the n = 3 polytrope, with no n = 0 (the l = 1 "f"
root σ = 0 is a translation), as in REFERENCES.md §8b. Takata's dipole
variables, which keep the count invariant in strongly condensed models
(red-giant cores), are NOT implemented: for such models the l = 1 labels may
skip or repeat, and the scan's missed-mode check may subdivide needlessly.
In the Cowling approximation l = 1 has an n = 0 mode like any l ≥ 2.
"""


from .search import (
    Mode,
    RadialSpacing,
    dnu_from_radial_modes,
    modes,
    modes_by_sigma2,
    nonradial_modes,
    radial_modes,
)

__all__ = [
    "Mode",
    "RadialSpacing",
    "modes_by_sigma2",
    "radial_modes",
    "nonradial_modes",
    "modes",
    "dnu_from_radial_modes",
]
