"""Calibration constant from the two reference forms, on analytic wall grids.

Outside checks: the reference lamp's wall illuminance E = I cos^3(theta) / d^2 (inverse-square
and cosine laws, Ryer, *Light Measurement Handbook*, ch. 6); uncertainty by the GUM law of
propagation (JCGM 100:2008, 5.1.2): u_rel(K)^2 = u_rel(I)^2 + (2 u_rel(d))^2 + ... .
"""

from __future__ import annotations

import json
from dataclasses import replace

import numpy as np
import pytest
from conftest import analytic_grid

from beamwall.calibrate import fit_lamp_reference, fit_lux_reference
from beamwall.errors import BeamwallError, CalibrationError
from beamwall.pipeline import calibrate_session  # noqa: F401  (import check)
from beamwall.report.jsonfile import read_calibration, write_calibration

K_TRUE = 37.5  # lx per signal unit (invented for the test)


def lamp_signal(i_cd=120.0, d=2.0, axis=(40.0, -25.0), noise=0.0, seed=0):
    grid = analytic_grid(lambda t, p: np.full_like(t, i_cd), distance_m=d,
                         half_width_mm=400.0, step_mm=2.0, axis_mm=axis,
                         noise_fraction=noise, seed=seed)
    return replace(grid, values=(grid.values / K_TRUE).astype(np.float32))


def test_lamp_reference_recovers_constant():
    fit = fit_lamp_reference(lamp_signal(), intensity_cd=120.0, distance_m=2.0,
                             axis_mm=(40.0, -25.0))
    assert fit.lux_per_signal == pytest.approx(K_TRUE, rel=1e-5)


def test_lamp_reference_uncertainty_budget_gum():
    fit = fit_lamp_reference(lamp_signal(), intensity_cd=120.0, distance_m=2.0,
                             axis_mm=(40.0, -25.0), intensity_sigma_cd=2.4,
                             distance_sigma_m=0.005)
    # GUM 5.1.2 on K = I / (d^2 S): u_rel = sqrt(0.02^2 + (2 * 0.0025)^2) (noise-free signal).
    assert fit.lux_per_signal_sigma / fit.lux_per_signal == pytest.approx(
        np.hypot(0.02, 2 * 0.0025), rel=1e-3)


def test_lux_reference_on_a_gradient():
    # A linear gradient in the signal averages out over a symmetric disc.
    grid = lamp_signal(noise=0.0)
    x = grid.x0_mm + grid.step_mm * np.arange(grid.values.shape[1])
    ramp = (1.0 + 0.001 * (x - 100.0))[None, :]
    g = replace(grid, values=(np.full(grid.values.shape, 2.0) * ramp).astype(np.float32))
    fit = fit_lux_reference(g, illuminance_lx=50.0, at_mm=(100.0, 0.0))
    assert fit.lux_per_signal == pytest.approx(25.0, rel=1e-4)


def test_noise_gives_statistical_term():
    fit = fit_lamp_reference(lamp_signal(noise=0.05, seed=2), intensity_cd=120.0,
                             distance_m=2.0, axis_mm=(40.0, -25.0))
    assert fit.lux_per_signal == pytest.approx(K_TRUE, rel=0.01)
    assert 0 < fit.budget["pixel_noise"] < 0.01


def test_reference_outside_photo_and_clipped():
    g = lamp_signal()
    with pytest.raises(CalibrationError, match="not inside the photo"):
        fit_lux_reference(g, illuminance_lx=10.0, at_mm=(2000.0, 0.0))
    sat = np.zeros_like(g.saturated)
    sat[200, 220] = True
    with pytest.raises(CalibrationError, match="clipped"):
        fit_lamp_reference(replace(g, saturated=sat), intensity_cd=120.0, distance_m=2.0,
                           axis_mm=(40.0, -25.0))


def test_calibration_json_round_trip_and_errors(tmp_path):
    from beamwall.calibrate import Calibration

    cal = Calibration(lux_per_signal=12.5, lux_per_signal_sigma=0.3, encoding="srgb",
                      luminance_weights=(0.2126, 0.7152, 0.0722), camera_make="Maker",
                      camera_model="Cam", image_size_px=(640, 480))
    p = tmp_path / "cal.json"
    write_calibration(cal, p)
    back = read_calibration(p)
    assert back.lux_per_signal == 12.5 and back.image_size_px == (640, 480)
    data = json.loads(p.read_text())
    data["encoding"] = "gamma"
    p.write_text(json.dumps(data))
    with pytest.raises(CalibrationError, match=r"cal\.json: encoding: must be"):
        read_calibration(p)
    p.write_text("{not json")
    with pytest.raises(BeamwallError, match="not JSON"):
        read_calibration(p)
    del data["lux_per_signal"]
    p.write_text(json.dumps(data))
    with pytest.raises(CalibrationError, match="lux_per_signal: missing"):
        read_calibration(p)
