"""Background model, likelihood fit, errors and detection.

Spectra here are drawn from a known limit spectrum with the χ² 2-d.o.f. statistics of
a power spectrum (each bin = model × Exp(1); Anderson, Duvall & Jefferies 1990, from
memory), so the fit can be checked against the truth it was drawn from.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate

from seismo.background import (
    ComponentSum,
    GaussianEnvelope,
    Granulation,
    WhiteNoise,
    detect_oscillations,
    fit_background,
    sample_posterior,
)
from seismo.relations import FWHM_TO_SIGMA, envelope_fwhm, granulation_parameters
from seismo.spectrum import PowerSpectrum

NYQUIST = 283.21  # Kepler long cadence (REFERENCES.md §9, CALC)
DF = 0.0079  # 4-year resolution, μHz (REFERENCES.md §9, CALC)


def truth_params(numax: float, hbr: float | None, white: float = 20.0) -> tuple:
    b1, b2, a = granulation_parameters(numax)
    model = ComponentSum(
        (Granulation("granulation 1"), Granulation("granulation 2"))
        + ((GaussianEnvelope(),) if hbr else ()) + (WhiteNoise(),),
        NYQUIST, 0.0)
    params = [a, b1, a, b2]
    if hbr:
        width = envelope_fwhm(numax) * FWHM_TO_SIGMA
        bg_model = ComponentSum((Granulation("granulation 1"), Granulation("granulation 2"),
                                 WhiteNoise()), NYQUIST, 0.0)
        bg = bg_model.psd(np.array([numax]), np.array([a, b1, a, b2, white]))[0]
        eta2 = np.sinc(numax / (2 * NYQUIST)) ** 2
        params += [hbr * bg / eta2, numax, width]
    params += [white]
    return model, np.array(params, dtype=float)


def drawn_spectrum(model, params, rng, df=DF) -> PowerSpectrum:
    freq = np.arange(0.0, NYQUIST, df)
    density = model.psd(freq, params) * rng.exponential(1.0, freq.size)
    return PowerSpectrum(freq, density, NYQUIST, df, 1.0, "fft", {"highpass_uhz": 0.0})


def test_granulation_profile_integrates_to_amplitude_squared():
    # ξ = (c/π) sin(π/c) makes ∫ P dν = a² (REFERENCES.md §3c, CALC).
    value, _ = integrate.quad(
        lambda f: Granulation().psd(np.array([f]), np.array([300.0, 20.0]))[0], 0, np.inf)
    assert value == pytest.approx(300.0**2, rel=1e-8)


@pytest.mark.parametrize("component,params", [
    (Granulation(), np.array([250.0, 12.0])),
    (GaussianEnvelope(), np.array([900.0, 40.0, 5.0])),
    (WhiteNoise(), np.array([15.0])),
])
def test_jacobians_match_finite_differences(component, params):
    freq = np.linspace(1.0, 100.0, 50)
    jac = component.jacobian(freq, params)
    for i, is_log in enumerate(component.log_params):
        step = 1e-6
        up, down = params.copy(), params.copy()
        if is_log:
            up[i] *= np.exp(step)
            down[i] *= np.exp(-step)
        else:
            up[i] += step
            down[i] -= step
        numeric = (component.psd(freq, up) - component.psd(freq, down)) / (2 * step)
        np.testing.assert_allclose(jac[i], numeric, rtol=1e-5, atol=1e-9 * np.abs(numeric).max())


def test_model_includes_sinc_attenuation():
    # At Nyquist the attenuated components are multiplied by (2/π)² (REFERENCES.md §3d).
    model, params = truth_params(100.0, None)
    parts = model.parts(np.array([NYQUIST]), params)
    raw = Granulation().psd(np.array([NYQUIST]), params[:2])[0]
    assert parts["granulation 1"][0] == pytest.approx(raw * 4 / np.pi**2, rel=1e-9)
    assert parts["white noise"][0] == pytest.approx(params[-1])


@pytest.mark.parametrize("numax", [30.0, 120.0])
def test_fit_recovers_the_limit_spectrum_it_was_drawn_from(numax):
    rng = np.random.default_rng(int(numax))
    model, params = truth_params(numax, hbr=3.0)
    fit = fit_background(drawn_spectrum(model, params, rng), numax * 1.1)
    for name, truth in zip(fit.names, params, strict=True):
        pull = (fit.value(name) - truth) / fit.error(name)
        assert abs(pull) < 4, (name, fit.value(name), truth, fit.error(name))
    assert fit.value("envelope:numax") == pytest.approx(numax, rel=0.02)
    assert fit.height_to_background() == pytest.approx(3.0, rel=0.2)


def test_hessian_errors_are_calibrated_and_agree_with_mcmc():
    # Over independent realisations the pulls (value - truth)/error have unit spread
    # (common practice); a short Metropolis sample of the same likelihood agrees with
    # the inverse-Hessian error (the cross-check of the errors).
    numax = 60.0
    model, params = truth_params(numax, hbr=2.5)
    pulls = []
    fits = []
    for seed in range(12):
        fit = fit_background(drawn_spectrum(model, params, np.random.default_rng(seed), df=0.03),
                             numax)
        fits.append(fit)
        pulls.append((fit.value("envelope:numax") - numax) / fit.error("envelope:numax"))
    assert 0.5 < np.std(pulls) < 1.6
    fit = fits[0]
    samples = sample_posterior(fit, n_steps=500, burn=150, rng=3)
    index = fit.names.index("envelope:numax")
    mcmc_error = np.std(samples[:, index])
    hessian_error = fit.error("envelope:numax") / np.sqrt(fit.overdispersion)
    assert mcmc_error == pytest.approx(hessian_error, rel=0.3)


def test_noise_only_spectra_are_not_detected():
    for seed in range(6):
        model, params = truth_params(float(15 + 30 * seed), None)
        det = detect_oscillations(drawn_spectrum(model, params, np.random.default_rng(seed),
                                                 df=0.03))
        assert not det.detected, (seed, det.false_alarm)
        assert any(f.startswith("no_detection") for f in det.flags)


@pytest.mark.parametrize("numax", [25.0, 80.0, 200.0])
def test_excess_with_height_to_background_two_is_detected(numax):
    model, params = truth_params(numax, hbr=2.0)
    det = detect_oscillations(drawn_spectrum(model, params, np.random.default_rng(1), df=0.03))
    assert det.detected
    assert det.false_alarm < 1e-6
    assert det.fit.value("envelope:numax") == pytest.approx(numax, rel=0.05)
