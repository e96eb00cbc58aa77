"""Finding the modes: scanning σ² for zeros of the determinant, refinement, labels.

See the package docstring for the method.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from ...errors import InputError, OptionError
from ..profiles import StellarProfile
from .system import _BandedSystem, _coarse_index, _order, _Structure, _structure

__all__ = [
    "Mode",
    "RadialSpacing",
    "modes_by_sigma2",
    "radial_modes",
    "nonradial_modes",
    "modes",
    "dnu_from_radial_modes",
]

#: Scan points per asymptotic mode spacing.
_POINTS_PER_MODE = 8


@dataclass(frozen=True, eq=False)
class Mode:
    """One adiabatic oscillation mode.

    Attributes
    ----------
    l : int
        Spherical degree.
    n : int
        Mode order (see the module notes for the convention per degree).
    n_p, n_g : int
        Numbers of p and g nodes of ξ_r (Eckart–Scuflaire–Osaki).
    frequency : float
        Cyclic frequency ν, μHz, Richardson-extrapolated from the mesh and
        the mesh of every other point.
    sigma2 : float
        Dimensionless squared frequency σ² = ω² R³/(G M) of ``frequency``.
    error : float
        Estimated error of ``frequency``, μHz (|ν_fine − ν_coarse| / 3); NaN if
        the mode could not be identified on the coarse mesh.
    frequency_mesh : float
        Frequency on the model's own mesh before extrapolation, μHz.
    inertia : float
        Mode inertia 4π∫(ξ_r² + l(l+1) ξ_h²) ρ r² dr / (M ξ_r(R)²),
        dimensionless (normalised at the surface point).
    x : numpy.ndarray, shape (n_points,)
        Fractional radius r/R of the mesh.
    xi_r, xi_h : numpy.ndarray, shape (n_points,)
        Radial and horizontal displacement on the mesh, dimensionless,
        normalised to ξ_r = 1 at the surface point.
    cowling : bool
        True if the mode was computed in the Cowling approximation (Φ′ = 0).
    """

    l: int
    n: int
    n_p: int
    n_g: int
    frequency: float
    sigma2: float
    error: float
    frequency_mesh: float
    inertia: float
    x: np.ndarray
    xi_r: np.ndarray
    xi_h: np.ndarray
    cowling: bool = False

    @property
    def period(self) -> float:
        """Period 1/ν, s."""
        return 1e6 / self.frequency

    def __repr__(self) -> str:
        tag = ", cowling" if self.cowling else ""
        return (
            f"Mode(l={self.l}, n={self.n}, n_p={self.n_p}, n_g={self.n_g}, "
            f"frequency={self.frequency:.6g} ± {self.error:.2g} μHz, "
            f"sigma2={self.sigma2:.6g}{tag})"
        )


class RadialSpacing(NamedTuple):
    """Δν and ε from a weighted fit ν_n = Δν (n + ε) of radial modes."""

    dnu: float
    """Large frequency separation, μHz."""
    eps_p: float
    """Offset ε, dimensionless, relative to this module's radial numbering."""




# --------------------------------------------------------------- scanning
def _asymptotic_scales(st: _Structure, l: int) -> tuple[float, float]:
    """Dimensionless acoustic radius τ̃ = ω_dyn ∫dr/c and buoyancy integral √L ∫N/r dr / ω_dyn."""
    h = np.diff(st.x)
    am = 0.5 * (st.a[:-1] + st.a[1:])
    vm = am / (1.0 - am)
    xm = 0.5 * (st.x[:-1] + st.x[1:])
    cm = 0.5 * (st.c1[:-1] + st.c1[1:])
    gm = 0.5 * (st.gamma1[:-1] + st.gamma1[1:])
    # c² / (G M / R) = Γ₁ x² / (V c₁) and N² R³/(G M) = A*/c₁.
    c2 = gm * xm**2 / (vm * cm)
    with np.errstate(divide="ignore"):
        tau = float(np.sum(h / np.sqrt(c2)))
    bm = 0.5 * (st.b[:-1] + st.b[1:])
    n2 = np.maximum(bm * (1.0 + vm) / cm, 0.0)
    buoy = float(np.sqrt(l * (l + 1)) * np.sum(h * np.sqrt(n2) / xm))
    return tau, buoy


def _scan_grid(s2_min: float, s2_max: float, tau: float, buoy: float,
               points_per_mode: int) -> tuple[np.ndarray, float]:
    """σ² grid uniform in the asymptotic mode count s(σ) = στ̃/π − √L J̃/(πσ)."""
    def count(s: np.ndarray) -> np.ndarray:
        return s * tau / np.pi - buoy / (np.pi * s)

    lo, hi = np.sqrt(s2_min), np.sqrt(s2_max)
    c_lo, c_hi = count(lo), count(hi)
    expected = float(c_hi - c_lo)
    steps = max(int(np.ceil(expected * points_per_mode)), 8)
    c = np.linspace(c_lo, c_hi, steps + 1)
    a = tau / np.pi
    sig = (c + np.sqrt(c**2 + 4.0 * a * buoy / np.pi)) / (2.0 * a)
    sig[0], sig[-1] = lo, hi
    return np.unique(sig**2), expected


def _roots_on(system: _BandedSystem, grid: np.ndarray) -> list[float]:
    """All sign changes of the determinant between consecutive grid points, refined."""
    found = [system.sign_logdet(s2) for s2 in grid]
    out = []
    for k in range(grid.size - 1):
        (s_a, l_a), (s_b, l_b) = found[k], found[k + 1]
        if s_a == 0.0 or l_a == -np.inf:
            out.append(float(grid[k]))
        elif s_a * s_b < 0:
            out.append(system.root(grid[k], grid[k + 1], s_a, l_a, l_b))
    return out


def _classified(
    system: _BandedSystem, roots: list[float]
) -> list[tuple[float, int, int, int, np.ndarray]]:
    """(σ², n, n_p, n_g, eigenvector) of each root."""
    out = []
    for s2 in roots:
        y = system.eigenvector(s2)
        n_p, n_g = system.classify(y)
        out.append((s2, _order(system.l, system.kind, n_p, n_g), n_p, n_g, y))
    return out


def _coarse_roots(system: _BandedSystem, s2: float, gap: float):
    """Determinant zeros near ``s2`` (relative distance ≤ ``gap``), nearest first."""
    s0, l0 = system.sign_logdet(s2)
    if s0 == 0.0:
        yield s2
        return
    last = {-1.0: (s2, s0, l0), 1.0: (s2, s0, l0)}
    for delta in np.geomspace(min(1e-6, 0.1 * gap), gap, 20):
        for side in (-1.0, 1.0):
            t = s2 * (1.0 + side * delta)
            st, lt = system.sign_logdet(t)
            prev, sp, lp = last[side]
            if st * sp <= 0:
                lo, hi = sorted((prev, t))
                (sl, ll), lh = ((sp, lp), lt) if lo == prev else ((st, lt), lp)
                yield system.root(lo, hi, sl, ll, lh)
            last[side] = (t, st, lt)


def _solve(profile: StellarProfile, l: int, s2_min: float, s2_max: float,
           kind: str, max_modes: int) -> list[Mode]:
    st = _structure(profile)
    npts = st.x.size
    if npts < 5:
        raise InputError(f"the solver needs at least 5 mesh points, got {npts}")
    fine = _BandedSystem(st, np.arange(npts), l, kind)
    coarse = _BandedSystem(st, _coarse_index(npts), l, kind)
    tau, buoy = _asymptotic_scales(st, l if kind != "radial" else 0)
    grid, expected = _scan_grid(s2_min, s2_max, tau, buoy, _POINTS_PER_MODE)
    if expected > max_modes:
        raise OptionError(
            f"about {expected:.0f} modes of degree {l} expected in the range, more than "
            f"max_modes={max_modes}",
            hint="narrow the frequency range or raise max_modes",
        )
    found = _classified(fine, _roots_on(fine, grid))
    # Subdivide wherever consecutive orders skip: modes were missed there.
    for _ in range(4):
        extra = []
        for (s_a, n_a, *_), (s_b, n_b, *_) in zip(found[:-1], found[1:], strict=True):
            # Dipole modes with full Φ′ have no n = 0: −1 → 1 skips nothing.
            missing = abs(n_b - n_a) - 1 - int(kind == "full" and l == 1 and n_a < 0 < n_b)
            if missing > 0:
                sub = np.linspace(s_a, s_b, 4 * (missing + 1) * _POINTS_PER_MODE)[1:-1]
                extra += _roots_on(fine, sub)
        if not extra:
            break
        found = sorted(found + _classified(fine, extra), key=lambda t: t[0])
        if len(found) > max_modes:
            raise OptionError(f"more than max_modes={max_modes} modes of degree {l} found")

    sig2 = np.array([f[0] for f in found])
    out = []
    for k, (s2, n, n_p, n_g, y) in enumerate(found):
        neighbours = np.abs(np.delete(sig2, k) / s2 - 1.0)
        gap = min(0.9 * float(neighbours.min()) if neighbours.size else 0.5, 0.5)
        sig_f = np.sqrt(s2)
        sig, err_sig = sig_f, np.nan
        # The nearest coarse-mesh zero of the same order is the same mode.
        for s2_c in _coarse_roots(coarse, s2, gap):
            if _order(l, kind, *coarse.classify(coarse.eigenvector(s2_c))) == n:
                sig_c = np.sqrt(s2_c)
                sig = (4.0 * sig_f - sig_c) / 3.0
                err_sig = abs(sig_f - sig_c) / 3.0
                break
        out.append(_make_mode(fine, st, s2, sig, err_sig, n, n_p, n_g, y))
    return out


def _make_mode(system: _BandedSystem, st: _Structure, s2: float, sig: float, err_sig: float,
               n: int, n_p: int, n_g: int, y: np.ndarray) -> Mode:
    l, x = system.l, system.x
    with np.errstate(divide="ignore", invalid="ignore"):
        factor = np.power(x, float(l - 1))
    factor = np.where(np.isfinite(factor), factor, 0.0)
    xi_r = factor * y[:, 0]
    xi_h = np.zeros_like(xi_r) if l == 0 else factor * y[:, 1] / (system.c1_mesh * s2)
    surface = xi_r[-1] if xi_r[-1] != 0 else np.max(np.abs(xi_r))
    xi_r, xi_h = xi_r / surface, xi_h / surface
    integrand = system.rho * x**2 * (xi_r**2 + l * (l + 1) * xi_h**2)
    inertia = float(4.0 * np.pi * np.sum(0.5 * (integrand[1:] + integrand[:-1]) * np.diff(x)))
    to_uhz = st.omega_dyn / (2.0 * np.pi) * 1e6
    return Mode(
        l=l, n=n, n_p=n_p, n_g=n_g, frequency=float(sig * to_uhz), sigma2=float(sig**2),
        error=float(err_sig * to_uhz), frequency_mesh=float(np.sqrt(s2) * to_uhz),
        inertia=inertia, x=x.copy(), xi_r=xi_r, xi_h=xi_h, cowling=system.kind == "cowling",
    )


# ----------------------------------------------------------------- public
def _check_degree(l: object) -> int:
    if isinstance(l, bool) or not isinstance(l, (int, np.integer)) or l < 0:
        raise OptionError(f"degree l must be a non-negative integer, got {l!r}")
    return int(l)


def _check_range(lo: float, hi: float, what: str) -> tuple[float, float]:
    lo, hi = float(lo), float(hi)
    if not (np.isfinite(lo) and np.isfinite(hi)):
        raise OptionError(f"{what} range must be finite, got [{lo}, {hi}]")
    if lo <= 0:
        raise OptionError(f"{what} range must start above 0, got {lo}")
    if lo >= hi:
        raise OptionError(f"{what} range is empty: lower bound {lo} >= upper bound {hi}")
    return lo, hi


def _check_max_modes(max_modes: int) -> int:
    if isinstance(max_modes, bool) or not isinstance(max_modes, (int, np.integer)) or max_modes < 1:
        raise OptionError(f"max_modes must be a positive integer, got {max_modes!r}")
    return int(max_modes)


def modes_by_sigma2(
    profile: StellarProfile,
    l: int,
    sigma2_min: float,
    sigma2_max: float,
    *,
    cowling: bool = False,
    max_modes: int = 500,
) -> list[Mode]:
    """All modes of degree ``l`` with dimensionless σ² = ω²R³/(GM) in a range.

    Parameters
    ----------
    profile : StellarProfile
        The model; it must reach the centre (m → 0).
    l : int
        Spherical degree, ≥ 0. l = 0 solves the exact radial problem.
    sigma2_min, sigma2_max : float
        Range of σ², dimensionless, 0 < ``sigma2_min`` < ``sigma2_max``.
    cowling : bool
        For l ≥ 1, neglect the perturbation of the gravitational potential
        (Φ′ = 0); the modes say so in ``Mode.cowling``. Not allowed for l = 0.
    max_modes : int
        Refuse ranges where the asymptotic relations predict more modes.

    Returns
    -------
    list of Mode
        Sorted by frequency; frequencies in μHz, Richardson-extrapolated.

    Raises
    ------
    OptionError
        Bad degree, empty or non-positive range, Cowling for l = 0, or more
        than ``max_modes`` modes expected.
    InputError
        The profile does not reach the centre or has unusable values.

    Notes
    -----
    Scheme, boundary conditions and mode order: see the module docstring.
    """
    l = _check_degree(l)
    lo, hi = _check_range(sigma2_min, sigma2_max, "sigma2")
    max_modes = _check_max_modes(max_modes)
    if l == 0 and cowling:
        raise OptionError("cowling=True has no meaning for radial modes (l = 0)")
    kind = "radial" if l == 0 else ("cowling" if cowling else "full")
    return _solve(profile, l, lo, hi, kind, max_modes)


def _sigma2_of(profile: StellarProfile, f_uhz: float) -> float:
    return (2.0 * np.pi * f_uhz * 1e-6 / profile.dynamical_frequency) ** 2


def radial_modes(
    profile: StellarProfile, fmin_uhz: float, fmax_uhz: float, *, max_modes: int = 500
) -> list[Mode]:
    """Radial (l = 0) modes with frequencies in [``fmin_uhz``, ``fmax_uhz``].

    Parameters
    ----------
    profile : StellarProfile
        The model; it must reach the centre.
    fmin_uhz, fmax_uhz : float
        Frequency range, μHz, 0 < ``fmin_uhz`` < ``fmax_uhz``.
    max_modes : int
        Refuse ranges with more modes than this.

    Returns
    -------
    list of Mode
        Sorted by frequency; n = 1 is the fundamental.

    Raises
    ------
    OptionError
        Empty or non-positive range, or too many modes.
    InputError
        Unusable profile.
    """
    lo, hi = _check_range(fmin_uhz, fmax_uhz, "frequency")
    return modes_by_sigma2(profile, 0, _sigma2_of(profile, lo), _sigma2_of(profile, hi),
                           max_modes=max_modes)


def nonradial_modes(
    profile: StellarProfile,
    l: int,
    fmin_uhz: float,
    fmax_uhz: float,
    *,
    cowling: bool = False,
    max_modes: int = 500,
) -> list[Mode]:
    """Non-radial modes of degree ``l`` ≥ 1 in [``fmin_uhz``, ``fmax_uhz``].

    Parameters
    ----------
    profile : StellarProfile
        The model; it must reach the centre.
    l : int
        Spherical degree, ≥ 1.
    fmin_uhz, fmax_uhz : float
        Frequency range, μHz, 0 < ``fmin_uhz`` < ``fmax_uhz``.
    cowling : bool
        Neglect Φ′ (Cowling approximation) instead of solving the full
        fourth-order problem.
    max_modes : int
        Refuse ranges with more modes than this (the g modes of red giants
        number thousands per Δν).

    Returns
    -------
    list of Mode
        Sorted by frequency.

    Raises
    ------
    OptionError
        l < 1 or not an integer, empty or non-positive range, too many modes.
    InputError
        Unusable profile.
    """
    l = _check_degree(l)
    if l < 1:
        raise OptionError(f"nonradial_modes needs l >= 1, got {l}; use radial_modes for l = 0")
    lo, hi = _check_range(fmin_uhz, fmax_uhz, "frequency")
    return modes_by_sigma2(profile, l, _sigma2_of(profile, lo), _sigma2_of(profile, hi),
                           cowling=cowling, max_modes=max_modes)


def modes(
    profile: StellarProfile,
    degrees: tuple[int, ...] = (0, 1, 2),
    fmin_uhz: float = 1.0,
    fmax_uhz: float = 100.0,
    *,
    cowling: bool = False,
    max_modes: int = 500,
) -> list[Mode]:
    """Modes of several degrees in one frequency range.

    Parameters
    ----------
    profile : StellarProfile
        The model.
    degrees : tuple of int
        Degrees to compute; 0 uses the radial problem.
    fmin_uhz, fmax_uhz : float
        Frequency range, μHz.
    cowling : bool
        Cowling approximation for the non-radial degrees.
    max_modes : int
        Limit per degree.

    Returns
    -------
    list of Mode
        Sorted by degree, then frequency.

    Raises
    ------
    OptionError, InputError
        As for `radial_modes` and `nonradial_modes`; also an empty ``degrees``.
    """
    degrees = tuple(_check_degree(l) for l in degrees)
    if not degrees:
        raise OptionError("degrees is empty; give at least one degree, e.g. (0, 1, 2)")
    out: list[Mode] = []
    for l in sorted(set(degrees)):
        if l == 0:
            out += radial_modes(profile, fmin_uhz, fmax_uhz, max_modes=max_modes)
        else:
            out += nonradial_modes(profile, l, fmin_uhz, fmax_uhz, cowling=cowling,
                                   max_modes=max_modes)
    return out


def dnu_from_radial_modes(
    mode_list: list[Mode],
    numax_uhz: float,
    *,
    orders: tuple[int, ...] | None = None,
    fwhm_fraction: float = 0.25,
) -> RadialSpacing:
    """Δν and ε as an observer would fit them: weighted line through ν_n against n.

    Fits ν_n = Δν (n + ε) to the radial modes with Gaussian weights centred
    on numax of FWHM ``fwhm_fraction`` × numax (0.25 numax is common
    practice), using the modes within numax ± 4Δν (Δν iterated from a first
    guess) or the orders given.

    Parameters
    ----------
    mode_list : list of Mode
        Modes; only l = 0 entries are used.
    numax_uhz : float
        Frequency of maximum oscillation power, μHz.
    orders : tuple of int, optional
        Radial orders to fit instead of the numax ± 4Δν window.
    fwhm_fraction : float
        FWHM of the Gaussian weights as a fraction of numax.

    Returns
    -------
    RadialSpacing
        ``dnu`` in μHz and ``eps_p`` (dimensionless, for this module's
        radial numbering, fundamental n = 1).

    Raises
    ------
    OptionError
        Non-positive numax or fwhm_fraction.
    InputError
        Fewer than 3 radial modes to fit.
    """
    numax = float(numax_uhz)
    if not (np.isfinite(numax) and numax > 0):
        raise OptionError(f"numax_uhz must be positive, got {numax_uhz}")
    if not (fwhm_fraction > 0):
        raise OptionError(f"fwhm_fraction must be positive, got {fwhm_fraction}")
    radial = sorted((m for m in mode_list if m.l == 0), key=lambda m: m.frequency)
    n = np.array([m.n for m in radial], dtype=float)
    nu = np.array([m.frequency for m in radial])
    sigma = fwhm_fraction * numax / (2.0 * np.sqrt(2.0 * np.log(2.0)))

    def fit(mask: np.ndarray) -> tuple[float, float]:
        if np.count_nonzero(mask) < 3:
            raise InputError(
                f"need at least 3 radial modes to fit dnu, got {np.count_nonzero(mask)}"
            )
        w = np.exp(-0.5 * ((nu[mask] - numax) / sigma) ** 2)
        slope, icpt = np.polyfit(n[mask], nu[mask], 1, w=np.sqrt(w))
        return float(slope), float(icpt / slope)

    if orders is not None:
        return RadialSpacing(*fit(np.isin(n, np.asarray(orders, dtype=float))))
    if nu.size < 3:
        raise InputError(f"need at least 3 radial modes to fit dnu, got {nu.size}")
    near = np.argsort(np.abs(nu - numax))[:3]
    dnu = float(np.median(np.abs(np.diff(np.sort(nu[near])) / np.diff(np.sort(n[near])))))
    eps = 0.0
    for _ in range(3):
        dnu, eps = fit(np.abs(nu - numax) <= 4.0 * dnu)
    return RadialSpacing(dnu, eps)
