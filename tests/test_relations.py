"""Tests of seismo.relations against published values and first principles.

Each check names its source; REFERENCES.md flags are carried over ("CALC",
"from memory", ...).
"""

from __future__ import annotations

import numpy as np
import pytest
from reference_cases import RELATION_CASES
from scipy import integrate, optimize

from seismo import relations
from seismo.errors import OptionError

CASES = [(name, *case) for name, cases in RELATION_CASES.items() for case in cases]


@pytest.mark.parametrize(
    ("name", "source", "inputs", "expected", "rtol"),
    CASES,
    ids=[f"{c[0]}-{i}" for i, c in enumerate(CASES)],
)
def test_reference_case(name, source, inputs, expected, rtol):
    result = getattr(relations, name)(**inputs)
    np.testing.assert_allclose(result, expected, rtol=rtol, err_msg=source)


@pytest.mark.parametrize("name", sorted(RELATION_CASES))
def test_vectorised_and_scalar(name):
    # Scalars give floats; arrays give arrays of the same shape (common practice).
    _, inputs, _, _ = RELATION_CASES[name][0]
    key = next(iter(inputs))
    scalars = getattr(relations, name)(**inputs)
    arrays = getattr(relations, name)(**dict(inputs, **{key: np.full((2, 3), inputs[key])}))
    if not isinstance(scalars, tuple):
        scalars, arrays = (scalars,), (arrays,)
    for scalar, array in zip(scalars, arrays, strict=True):
        assert isinstance(scalar, float)
        assert array.shape == (2, 3)
        np.testing.assert_allclose(array, scalar)


@pytest.mark.parametrize("exponent", [2.0, 4.0, 6.0])
def test_granulation_integral_is_a_squared(exponent):
    # REFERENCES §3c, CALC: with ξ = (c/π) sin(π/c) the profile integrates to a².
    a, b = 300.0, 20.0
    total, _ = integrate.quad(
        lambda f: relations.granulation_psd(f, a, b, exponent), 0, np.inf, limit=400
    )
    assert total == pytest.approx(a**2, rel=1e-6)


def test_sigma_from_fwhm():
    # REFERENCES §3b, CALC: σ = FWHM / 2.3548; numax = 30 gives σ = 5.59 μHz.
    assert relations.envelope_fwhm(30.0) * relations.FWHM_TO_SIGMA == pytest.approx(5.59, rel=1e-3)
    assert relations.envelope_fwhm(100.0) * relations.FWHM_TO_SIGMA == pytest.approx(
        16.13, rel=1e-3
    )


def test_universal_pattern_structure():
    # Mosser et al. 2011 (form from memory): ν_{n_max,0} = ν_max, spacing Δν
    # without curvature, δν02 = d02 Δν, l=1 at n + 1/2 + ε − d01.
    dnu, numax = 4.0, 30.0
    eps = relations.eps_p_from_dnu(dnu)
    n_max = numax / dnu - eps
    assert relations.universal_pattern(n_max, 0, dnu, numax) == pytest.approx(numax)
    n = np.arange(4, 10)
    radial = relations.universal_pattern(n, 0, dnu, numax, alpha=0.0)
    np.testing.assert_allclose(np.diff(radial), dnu)
    quad = relations.universal_pattern(n, 2, dnu, numax, alpha=0.0)
    np.testing.assert_allclose(radial[1:] - quad[:-1], relations.d02_from_dnu(dnu) * dnu)
    dip = relations.universal_pattern(n, 1, dnu, numax, alpha=0.0)
    np.testing.assert_allclose(dip, (n + 0.5 + eps - relations.d01_from_dnu(dnu)) * dnu)
    curved = relations.universal_pattern(n, 0, dnu, numax)
    alpha = relations.curvature_from_dnu(dnu)
    np.testing.assert_allclose(curved - radial, 0.5 * alpha * (n - n_max) ** 2 * dnu)


def test_universal_pattern_broadcasts_degrees():
    n = np.arange(5, 8)[:, None]
    l = np.arange(4)[None, :]
    nu = relations.universal_pattern(n, l, 4.0, 30.0)
    assert nu.shape == (3, 4)
    assert np.all(np.diff(nu, axis=1) > 0)  # l = 0 < 1 < 2 < 3 within one order
    with pytest.raises(OptionError, match="l must be 0, 1, 2 or 3"):
        relations.universal_pattern(5, 4, 4.0, 30.0)


# --- mixed modes: REFERENCES §5b numerical check (CALC) -----------------------
DNU, NUMAX, DPI1, Q, EPS_G = 4.0, 30.0, 80.0, 0.15, 0.28


@pytest.fixture(scope="module")
def pattern():
    nu_p = relations.universal_pattern(np.arange(2, 13), 1, DNU, NUMAX)
    freq = relations.mixed_mode_frequencies(nu_p, DNU, DPI1, Q, EPS_G, 15.0, 45.0)
    return nu_p, freq


def _residual(freq, nu_p, dnu, dpi1, q, eps_g):
    """Pole-free residual with θp from the local spacing of the nominal modes."""
    k = np.clip(np.searchsorted(nu_p, freq) - 1, 0, nu_p.size - 2)
    theta_p = np.pi * (freq - nu_p[k]) / (nu_p[k + 1] - nu_p[k])
    theta_g = np.pi / (freq * 1e-6 * dpi1) - np.pi * eps_g
    return np.sin(theta_p) * np.cos(theta_g) - q * np.cos(theta_p) * np.sin(theta_g)


def test_number_of_g_modes_per_order():
    # REFERENCES §5b, CALC: 𝒩(ν_max) = Δν/(ν_max² ΔΠ1) = 55.6.
    n_g = DNU / ((NUMAX * 1e-6) ** 2 * DPI1) * 1e-6
    assert n_g == pytest.approx(55.6, rel=1e-3)


def test_mixed_modes_solve_the_resonance(pattern):
    # REFERENCES §5a (Mosser et al. 2012/2015, from memory): tan θp = q tan θg.
    nu_p, freq = pattern
    assert np.all(np.diff(freq) > 0)
    assert freq.min() >= 15.0 and freq.max() <= 45.0
    np.testing.assert_allclose(_residual(freq, nu_p, DNU, DPI1, Q, EPS_G), 0.0, atol=1e-6)


def test_mixed_modes_agree_with_brentq(pattern):
    # Reference library (scipy.optimize.brentq) on the pole-free form.
    nu_p, freq = pattern
    for f0 in freq[:: max(1, freq.size // 15)]:
        half = 1e-3 * f0**2 * 1e-6 * DPI1  # far below the mode spacing ζ ν² ΔΠ1
        root = optimize.brentq(
            lambda f: _residual(np.array([f]), nu_p, DNU, DPI1, Q, EPS_G)[0],
            f0 - half,
            f0 + half,
            xtol=1e-12,
        )
        assert root == pytest.approx(f0, abs=1e-8)


def test_mixed_mode_count(pattern):
    # CALC: about 𝒩 + 1 modes per order, Σ over the band of Δν/(ν² ΔΠ1) + orders.
    nu_p, freq = pattern
    inside = nu_p[(nu_p > 15.0) & (nu_p < 45.0)]
    g_modes = (1.0 / (15e-6 * DPI1) - 1.0 / (45e-6 * DPI1))
    assert abs(freq.size - (g_modes + inside.size)) <= 2


def test_period_spacing_equals_zeta_dpi1(pattern):
    # REFERENCES §5b, CALC: ΔP = ζ(ν_mid) ΔΠ1 "to about 1e-3". Here 95 % of
    # the spacings agree to 3e-4; the largest deviations (2.5e-3 within
    # [22, 38] μHz, 3.4e-3 near 42 μHz) sit beside the p-dominated modes,
    # where ζ changes within one spacing.
    nu_p, freq = pattern
    spacing = -np.diff(1e6 / freq)
    mid = 0.5 * (freq[1:] + freq[:-1])
    error = np.abs(spacing / (relations.zeta(mid, nu_p, DNU, DPI1, Q) * DPI1) - 1)
    assert np.median(error) < 1e-4
    assert np.percentile(error, 95) < 1e-3
    assert np.max(error[(mid > 22.0) & (mid < 38.0)]) < 3e-3


def test_minimum_period_spacing(pattern):
    # REFERENCES §5b, CALC: the smallest ΔP/ΔΠ1 of an order sits at its p-dominated mode and
    # approaches ζ_min = [1 + 1/(q𝒩)]⁻¹ there, with 𝒩 = Δν/(ν²ΔΠ1). Within 1 %: a spacing
    # between two modes cannot sample θp = 0 exactly, and with the pattern's curvature the
    # local spacing of p modes differs slightly from Δν. Checked order by order, so no
    # frequency window has to be chosen. REFERENCES quotes 0.865 as "the minimum";
    # that is the value of ζ_min at the p mode near 34 μHz, checked as well.
    nu_p, freq = pattern
    spacing = -np.diff(1e6 / freq) / DPI1
    mid = 0.5 * (freq[1:] + freq[:-1])
    checked = 0
    for centre in nu_p[(nu_p > 18.0) & (nu_p < 42.0)]:  # a loop over a few radial orders
        near = np.abs(mid - centre) < 0.3 * DNU
        n_g = DNU / (centre**2 * DPI1) * 1e6
        zeta_min = 1.0 / (1.0 + 1.0 / (Q * n_g))
        assert spacing[near].min() == pytest.approx(zeta_min, rel=0.01)
        checked += 1
        if abs(centre - 34.0) < 0.5:
            assert spacing[near].min() == pytest.approx(0.865, rel=5e-3)
    assert checked >= 5


def test_zeta_extremes(pattern):
    # REFERENCES §5b, CALC: ζ_min = [1 + 1/(q𝒩)]⁻¹ at θp = 0, ζ_max = [1 + q/𝒩]⁻¹
    # at θp = π/2 (evenly spaced nominal modes so that θp = π/2 at the midpoint).
    nu_p = relations.universal_pattern(np.arange(2, 13), 1, DNU, NUMAX, alpha=0.0)
    n_g = DNU / (nu_p**2 * DPI1) * 1e6
    np.testing.assert_allclose(
        relations.zeta(nu_p, nu_p, DNU, DPI1, Q), 1 / (1 + 1 / (Q * n_g)), rtol=1e-12
    )
    mid = nu_p[:-1] + DNU / 2
    n_mid = DNU / (mid**2 * DPI1) * 1e6
    np.testing.assert_allclose(
        relations.zeta(mid, nu_p, DNU, DPI1, Q), 1 / (1 + Q / n_mid), rtol=1e-12
    )


def test_zeta_forms_agree_at_modes(pattern):
    # REFERENCES §5b, CALC: the θg form equals the θp form at the eigenfrequencies.
    nu_p, freq = pattern
    np.testing.assert_allclose(
        relations.zeta(freq, nu_p, DNU, DPI1, Q, EPS_G),
        relations.zeta(freq, nu_p, DNU, DPI1, Q),
        rtol=1e-5,
    )


def test_zeta_sum_per_order(pattern):
    # CALC: Σ(1 − ζ) over the modes of one order is about 1 (the dipole p
    # power is shared, not created).
    nu_p, freq = pattern
    z = relations.zeta(freq, nu_p, DNU, DPI1, Q)
    lo, hi = 0.5 * (nu_p[4] + nu_p[5]), 0.5 * (nu_p[5] + nu_p[6])
    sel = (freq > lo) & (freq < hi)
    assert np.sum(1 - z[sel]) == pytest.approx(1.0, abs=0.03)


def test_weak_coupling_limit():
    # Convention check (documented in mixed_mode_frequencies): as q → 0 the
    # g-dominated modes tend to 1/ν = (n_g + 1/2 + ε_g) ΔΠ1 and one mode per
    # order tends to the nominal p mode.
    nu_p = relations.universal_pattern(np.arange(2, 13), 1, DNU, NUMAX, alpha=0.0)
    freq = relations.mixed_mode_frequencies(nu_p, DNU, DPI1, 1e-6, EPS_G, 25.0, 35.0)
    phase = 1e6 / (freq * DPI1) - 0.5 - EPS_G
    off_g = np.abs(phase - np.round(phase))
    near_p = np.min(np.abs(freq[:, None] - nu_p[None, :]), axis=1)
    assert np.all((off_g < 1e-3) | (near_p < 1e-4))
    assert np.sum(near_p < 1e-4) == np.sum((nu_p > 25) & (nu_p < 35))


def test_mixed_mode_option_errors():
    nu_p = [20.0, 24.0]
    with pytest.raises(OptionError, match="dpi1 must be finite and > 0"):
        relations.mixed_mode_frequencies(nu_p, 4.0, -80.0, 0.15, 0.28, 15, 30)
    with pytest.raises(OptionError, match="q must be finite and > 0"):
        relations.mixed_mode_frequencies(nu_p, 4.0, 80.0, 0.0, 0.28, 15, 30)
    with pytest.raises(OptionError, match="freq_min < freq_max"):
        relations.mixed_mode_frequencies(nu_p, 4.0, 80.0, 0.15, 0.28, 30, 15)
    with pytest.raises(OptionError, match="nu_p must be a non-empty"):
        relations.mixed_mode_frequencies([], 4.0, 80.0, 0.15, 0.28, 15, 30)
    with pytest.raises(OptionError, match="numax must be finite and > 0"):
        relations.dnu_from_numax(-1.0)
    with pytest.raises(OptionError, match="exponent must be > 1"):
        relations.harvey_norm(1.0)
