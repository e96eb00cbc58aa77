"""The discretised oscillation equations: structure coefficients and the banded system.

See the package docstring for the equations, the boundary conditions and the scheme.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.linalg.lapack import dgbtrf, dgbtrs
from scipy.optimize import brentq

from ...errors import InputError
from ..constants import G_CGS
from ..profiles import StellarProfile

#: Largest fraction of the mass allowed inside the innermost mesh point.
_CENTRE_MASS_FRACTION = 1e-6


# ----------------------------------------------------------------- structure
@dataclass(frozen=True)
class _Structure:
    """Bounded dimensionless coefficients at the mesh points (see module notes)."""

    x: np.ndarray
    a: np.ndarray  # V / (1 + V)
    b: np.ndarray  # A* / (1 + V)
    u: np.ndarray  # U
    c1: np.ndarray
    gamma1: np.ndarray
    rho: np.ndarray  # ρ R³ / M
    omega_dyn: float  # √(GM/R³), rad s⁻¹


def _structure(profile: StellarProfile) -> _Structure:
    """Check ``profile`` and compute the bounded coefficients on its mesh."""
    r, m, rho, p, gamma1 = profile.r, profile.m, profile.rho, profile.p, profile.gamma1
    big_r, big_m = profile.radius, profile.mass
    if not all(np.all(np.isfinite(v)) for v in (r, m, rho, p, gamma1)):
        raise InputError("profile has non-finite r, m, rho, p or gamma1 values")
    if np.any(np.diff(r) <= 0):
        raise InputError("profile radii must increase strictly from centre to surface")
    if r[0] < 0 or m[0] < 0:
        raise InputError("profile starts at negative radius or mass")
    if m[0] > _CENTRE_MASS_FRACTION * big_m or (r[0] == 0 and m[0] != 0):
        raise InputError(
            f"innermost mesh point (r/R = {r[0] / big_r:.3g}) encloses m/M = "
            f"{m[0] / big_m:.3g}: the solver needs a model reaching the centre "
            "(m -> 0, g -> 0)"
        )
    if np.any(m[1:] <= 0) or np.any(rho[:-1] <= 0) or np.any(p[:-1] <= 0):
        raise InputError("profile needs m, rho and p > 0 inside the surface point")
    if rho[-1] < 0 or p[-1] < 0 or np.any(gamma1 <= 0):
        raise InputError("profile has negative surface rho or p, or gamma1 <= 0")
    x = r / big_r
    q = m / big_m
    n2 = np.asarray(profile.buoyancy2, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        v = G_CGS * m * rho / (p * r)
        u = 4.0 * np.pi * rho * r**3 / m
        c1 = x**3 / q
        astar = r**3 * n2 / (G_CGS * m)
        # p = 0 (a polytrope's surface point) is V = ∞ whatever ρ is there.
        a = np.where((p == 0) | np.isinf(v), 1.0, v / (1.0 + v))
        b = np.where(p == 0, np.nan, astar / (1.0 + v))
    if r[0] == 0:
        # Limits at the centre: V, A* ∝ r², U → 3, c₁ → ρ̄/ρ_c.
        a[0], b[0], u[0] = 0.0, 0.0, 3.0
        c1[0] = profile.mean_density / rho[0]
    bad = ~np.isfinite(b)
    if np.any(bad[:-1]) or not np.all(np.isfinite(a)) or not np.all(np.isfinite(c1[1:])):
        raise InputError("profile gives non-finite V, U, c1 or A* inside the star")
    if bad[-1]:
        # Singular surface (p = 0, N² = ±∞): A*/(1+V) stays finite; extrapolate.
        b[-1] = b[-2] + (b[-2] - b[-3]) * (x[-1] - x[-2]) / (x[-2] - x[-3])
    return _Structure(
        x=x, a=a, b=b, u=u, c1=c1, gamma1=gamma1.copy(),
        rho=rho * big_r**3 / big_m, omega_dyn=profile.dynamical_frequency,
    )


# -------------------------------------------------------------- the system
class _BandedSystem:
    """The box-scheme difference equations on one mesh, as a banded matrix of σ².

    ``kind`` is ``"radial"`` (2 variables), ``"cowling"`` (2) or ``"full"`` (4).
    """

    def __init__(self, st: _Structure, index: np.ndarray, l: int, kind: str):
        self.l, self.kind = l, kind
        self.x = st.x[index]
        self.c1_mesh = st.c1[index]
        self.rho = st.rho[index]
        m = 4 if kind == "full" else 2
        nb = m // 2
        npts = index.size
        self.m, self.nb, self.npts, self.size = m, nb, npts, m * npts
        self.kl, self.ku = m - 1 + nb, 2 * m - 1 - nb

        mid = lambda f: 0.5 * (f[index[:-1]] + f[index[1:]])  # noqa: E731
        xm = 0.5 * (self.x[:-1] + self.x[1:])
        h = np.diff(self.x)
        am, bm, um, cm, gm = mid(st.a), mid(st.b), mid(st.u), mid(st.c1), mid(st.gamma1)
        v = am / (1.0 - am)
        vg = v / gm
        astar = bm * (1.0 + v)
        ell = float(l * (l + 1))
        nint = npts - 1
        m0 = np.zeros((nint, m, m))
        m1 = np.zeros((nint, m, m))
        m2 = np.zeros((nint, m, m))
        if kind == "radial":
            m0[:, 0, 0], m0[:, 0, 1] = vg - 3.0, -vg
            m0[:, 1, 0], m0[:, 1, 1] = um - astar, astar + 1.0 - um
            m1[:, 1, 0] = cm
        else:
            m0[:, 0, 0], m0[:, 0, 1] = vg - 3.0, -vg
            m0[:, 1, 0], m0[:, 1, 1] = -astar, astar - um + 1.0
            m1[:, 1, 0] = cm
            m2[:, 0, 1] = ell / cm
            if kind == "full":
                m0[:, 0, 2], m0[:, 1, 2] = vg, -astar
                m0[:, 2, 2], m0[:, 2, 3] = 1.0 - um, 1.0
                m0[:, 3, 0], m0[:, 3, 1] = um * astar, um * vg
                m0[:, 3, 2], m0[:, 3, 3] = ell - um * vg, -um
        # Scaling ỹ = x^(2−l) y shifts the diagonal by −(l − 2).
        m0 -= (l - 2) * np.eye(m)
        scale = (0.5 * h / xm)[:, None, None]
        self.k0, self.k1, self.k2 = scale * m0, scale * m1, scale * m2

        # Centre and surface rows; the centre row of the radial problem uses
        # V_g at the innermost point (exactly 0 at r = 0).
        i0 = index[0]
        v0 = st.a[i0] / (1.0 - st.a[i0])
        self.vg0 = v0 / st.gamma1[i0]
        self.c10 = st.c1[i0]
        us = st.u[index[-1]]
        if kind == "full":
            self.bottom = np.array([[1.0, -1.0, 1.0, 0.0], [us, 0.0, l + 1.0, 1.0]])
        else:
            self.bottom = np.array([[1.0, -1.0]])

        # Band positions of every entry, in the order values() concatenates them.
        j, k = np.meshgrid(np.arange(m), np.arange(m), indexing="ij")
        i = np.arange(nint)[:, None, None]
        rows_int = nb + m * i + j
        left_cols = m * i + k
        rows = [np.repeat(np.arange(nb), m), rows_int.ravel(), rows_int.ravel(),
                self.size - nb + np.repeat(np.arange(nb), m)]
        cols = [np.tile(np.arange(m), nb), left_cols.ravel(), (left_cols + m).ravel(),
                self.size - m + np.tile(np.arange(m), nb)]
        rows, cols = np.concatenate(rows), np.concatenate(cols)
        self._band_rows = self.kl + self.ku + rows - cols
        self._band_cols = cols
        self._eye = np.eye(m)

    def _top(self, s2: float) -> np.ndarray:
        l = self.l
        if self.kind == "radial":
            return np.array([[self.vg0 - 3.0, -self.vg0]])
        top = np.zeros((self.nb, self.m))
        top[0, 0], top[0, 1] = self.c10 * s2, -float(l)
        if self.kind == "full":
            top[1, 2], top[1, 3] = float(l), -1.0
        return top

    def matrix(self, s2: float) -> np.ndarray:
        """Banded storage (LAPACK gb layout with kl spare rows) at σ² = ``s2``."""
        kmat = self.k0 + s2 * self.k1 + self.k2 / s2
        vals = np.concatenate([
            self._top(s2).ravel(), (-self._eye - kmat).ravel(),
            (self._eye - kmat).ravel(), self.bottom.ravel(),
        ])
        ab = np.zeros((2 * self.kl + self.ku + 1, self.size))
        ab[self._band_rows, self._band_cols] = vals
        return ab

    def factor(self, s2: float) -> tuple[np.ndarray, np.ndarray, float, float]:
        """LU factors, pivots, sign and log|det| of the system at σ²."""
        lu, piv, _ = dgbtrf(self.matrix(s2), self.kl, self.ku)
        diag = lu[self.kl + self.ku]
        swaps = np.count_nonzero(piv != np.arange(self.size))
        sign = float(np.prod(np.sign(diag))) * (-1.0) ** swaps
        with np.errstate(divide="ignore"):
            logdet = float(np.sum(np.log(np.abs(diag))))
        return lu, piv, sign, logdet

    def sign_logdet(self, s2: float) -> tuple[float, float]:
        _, _, sign, logdet = self.factor(s2)
        return sign, logdet

    def root(self, lo: float, hi: float, sign_lo: float, ldet_lo: float,
             ldet_hi: float) -> float:
        """Refine a sign change of the determinant between ``lo`` and ``hi``."""
        ref = max(ldet_lo, ldet_hi)

        def f(s2: float) -> float:
            if s2 == lo:
                return sign_lo * np.exp(min(ldet_lo - ref, 700.0))
            sign, logdet = self.sign_logdet(s2)
            return sign * np.exp(min(logdet - ref, 700.0))

        return float(brentq(f, lo, hi, xtol=1e-14 * hi, rtol=4e-15, maxiter=200))

    def eigenvector(self, s2: float) -> np.ndarray:
        """Null vector at an eigenvalue by two steps of inverse iteration, shape (npts, m)."""
        lu, piv, _, _ = self.factor(s2)
        diag = lu[self.kl + self.ku]
        tiny = np.abs(diag) == 0
        if np.any(tiny):  # exactly singular: nudge the pivot so the solve is defined
            lu[self.kl + self.ku, tiny] = 1e-300
        y = np.ones(self.size)
        for _ in range(2):
            y, _ = dgbtrs(lu, self.kl, self.ku, y, piv)
            y /= np.max(np.abs(y))
        return y.reshape(self.npts, self.m)

    def classify(self, y: np.ndarray) -> tuple[int, int]:
        """Eckart–Scuflaire–Osaki node counts (n_p, n_g) of the scaled eigenvector."""
        y1, y2 = y[:, 0], y[:, 1]
        start = 1 if (self.x[0] == 0 and self.l != 1) else 0
        y1, y2 = y1[start:], y2[start:]
        pos = y1 >= 0
        at = np.nonzero(pos[:-1] != pos[1:])[0]
        if at.size == 0:
            return 0, 0
        # y₂ at the zero of y₁ by linear interpolation.
        w = y1[at] / (y1[at] - y1[at + 1])
        y2_node = y2[at] + w * (y2[at + 1] - y2[at])
        turn = y2_node * (y1[at + 1] - y1[at])
        return int(np.count_nonzero(turn < 0)), int(np.count_nonzero(turn > 0))


def _order(l: int, kind: str, n_p: int, n_g: int) -> int:
    """Mode order from the node counts (conventions in the module notes)."""
    if l == 0:
        return n_p - n_g + 1
    return n_p - n_g


def _coarse_index(npts: int) -> np.ndarray:
    """Every other mesh point, always keeping the centre and the surface point."""
    index = np.arange(0, npts, 2)
    if index[-1] != npts - 1:
        index = np.append(index, npts - 1)
    return index
