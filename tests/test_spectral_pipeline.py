"""Spectral data through the chain: fitted luminance weights and the mismatch factor.

Outside check: the mismatch factor F* = [int S_t V / int S_t s][int S_ref s / int S_ref V]
(CIE S 017:2020, ILV 17-25-115) is recomputed here with plain trapezoid sums on colour-science's
CIE tables; the pipeline must multiply the calibrated peak intensity by exactly that factor.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from test_accuracy import CASES, write_case

from beamwall import spectral
from beamwall.constants import REC709_LUMINANCE_WEIGHTS
from beamwall.pipeline import calibrate_session, measure_session
from beamwall.session import load_calibration_session, load_session


def _write_sensitivity(path: Path) -> np.ndarray:
    # The raw sensor curves (non-negative), as a user's CSV would hold them.
    rgb = np.round(np.clip(spectral.default_camera_sensitivity(processing="raw").rgb, 0, None),
                   6)
    rows = ["wavelength_nm,r,g,b"] + [
        f"{w:.0f},{r:.6f},{g:.6f},{b:.6f}"
        for w, (r, g, b) in zip(spectral.WAVELENGTHS_NM, rgb)]
    path.write_text("\n".join(rows) + "\n")
    return rgb


@pytest.fixture(scope="module")
def scene(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("spec")
    cal_toml, session_toml = write_case(CASES[1], tmp)
    rgb = _write_sensitivity(tmp / "camera_rgb.csv")
    return tmp, cal_toml, session_toml, rgb


def test_fitted_weights_used_by_calibration_and_measurement(scene):
    tmp, cal_toml, session_toml, rgb = scene
    text = cal_toml.read_text()
    (tmp / "cal_spec.toml").write_text(text + '\n[spectral]\ncamera_sensitivity_csv = '
                                       '"camera_rgb.csv"\n')
    cal = calibrate_session(load_calibration_session(tmp / "cal_spec.toml"))
    fit = spectral.optimal_weights(rgb)
    assert cal.luminance_weights == pytest.approx(tuple(fit.weights), abs=1e-6)
    assert not np.allclose(cal.luminance_weights, REC709_LUMINANCE_WEIGHTS, atol=1e-3)
    assert cal.spectral["f1_prime"] <= cal.spectral["rec709_f1_prime"]
    shot = measure_session(load_session(session_toml), cal).shots[0]
    assert shot.luminance_weights == pytest.approx(cal.luminance_weights)


def test_source_cct_applies_the_mismatch_factor(scene):
    tmp, cal_toml, session_toml, rgb = scene
    cal = calibrate_session(load_calibration_session(cal_toml))
    plain = measure_session(load_session(session_toml), cal).shots[0]
    (tmp / "session_led.toml").write_text(
        session_toml.read_text().replace("[[shot]]", "[[shot]]\nsource_cie_illuminant = "
                                         '"LED-B3"'))
    led = measure_session(load_session(tmp / "session_led.toml"), cal).shots[0]
    # Independent F*: trapezoid sums on colour-science's tables (CIE A reference, LED-B3).
    import colour

    wl = np.arange(380, 781, 1.0)
    shape = colour.SpectralShape(380, 780, 1)
    v = colour.colorimetry.SDS_LEFS_PHOTOPIC["CIE 1924 Photopic Standard Observer"].copy().align(
        shape)
    a = colour.SDS_ILLUMINANTS["A"].copy().align(shape)
    led_sd = colour.SDS_ILLUMINANTS["LED-B3"].copy().align(shape)
    s = spectral.default_camera_sensitivity().rgb @ np.asarray(REC709_LUMINANCE_WEIGHTS)
    trap = np.trapezoid if hasattr(np, "trapezoid") else np.trapz
    f_star = (trap(led_sd.values * v.values, wl) / trap(led_sd.values * s, wl)) * (
        trap(a.values * s, wl) / trap(a.values * v.values, wl))
    assert led.spectral_correction_factor == pytest.approx(f_star, rel=2e-3)
    assert led.peak_intensity_cd / plain.peak_intensity_cd == pytest.approx(
        led.spectral_correction_factor, rel=1e-5)  # float32 maps
    assert led.beam_angle_deg == pytest.approx(plain.beam_angle_deg)
