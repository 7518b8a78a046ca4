"""The camera renderer's additions: tone curves, vignetting, distortion, raw mosaics.

Outside references: colour-science's sRGB encoding (IEC 61966-2-1); OpenCV's
``projectPoints`` for the distortion model; LibRaw (rawpy) reading the rendered DNG.
"""

from __future__ import annotations

import cv2
import numpy as np
import pytest

from beamwall import synth
from beamwall import synth_camera as sc
from beamwall.images import read_frame, write_dng
from beamwall.linear import Exposure
from beamwall.profile import distort_points, undistort_points

POSE = synth.CameraPose(position_m=(0.1, 0.0, 1.5), yaw_deg=-3.0, focal_length_px=200.0,
                        width_px=160, height_px=120)


def test_srgb_tone_matches_colour_science():
    colour = pytest.importorskip("colour")
    x = np.linspace(0, 1, 101)
    # IEC 61966-2-1 encoding, as colour-science implements it.
    np.testing.assert_allclose(sc.tone_encode(x, "srgb"), colour.models.eotf_inverse_sRGB(x),
                               atol=1e-12)
    np.testing.assert_allclose(sc.tone_decode(sc.tone_encode(x, "srgb"), "srgb"), x, atol=1e-12)


def test_filmic_is_a_monotone_s_curve_with_exact_inverse():
    x = np.linspace(0, 1, 2001)
    v = sc.tone_encode(x, "filmic")
    assert np.all(np.diff(v) > 0)
    np.testing.assert_allclose(sc.tone_decode(v, "filmic"), x, atol=1e-9)
    p = np.linspace(0, 1, 2001)                      # gamma-encoded value
    slope = np.gradient(sc.tone_encode(p ** 2.2, "filmic"), p)
    assert slope[1000] > 1.5 and slope[5] < 0.5     # steeper mid-tones, flatter ends


def test_distortion_model_matches_opencv():
    d = sc.lens_distortion(POSE, sc.CameraModel(distortion=(-0.12, 0.03, 0.001, -0.002, 0.0)))
    pts = np.array([[0.0, 0.0], [159.0, 119.0], [30.0, 90.0]])
    k = d.camera_matrix
    # OpenCV's projectPoints applies the same model to normalised rays (z = 1).
    rays = np.column_stack([(pts[:, 0] - k[0, 2]) / k[0, 0], (pts[:, 1] - k[1, 2]) / k[1, 1],
                            np.ones(3)])
    ref, _ = cv2.projectPoints(rays, np.zeros(3), np.zeros(3), k, d.coefficients)
    np.testing.assert_allclose(distort_points(d, pts), ref.reshape(-1, 2), atol=1e-9)
    np.testing.assert_allclose(undistort_points(d, distort_points(d, pts)), pts, atol=1e-8)


def test_flat_signal_is_cos4_times_vignetting_without_distortion():
    cam = sc.CameraModel(vignetting=(-0.3, 0.05))
    sig = sc.flat_field_signal(POSE, cam, level=0.5)[:, :, 0]
    cx, cy = POSE.principal_point_px
    r2 = (119 - cy) ** 2 / 200.0**2 + (159 - cx) ** 2 / 200.0**2
    want = 0.5 / (1 + r2) ** 2 * sc.vignetting_gain((120, 160), (-0.3, 0.05))[119, 159]
    assert sig[119, 159] == pytest.approx(want, rel=1e-5)


def test_distorted_render_puts_wall_points_where_the_model_says():
    # A narrow spot: its centroid in the distorted photo sits at the distorted projection.
    cam = sc.CameraModel(distortion=sc.PHONE_WIDE_DISTORTION)
    scene = synth.Scene(beam=synth.EllipticGaussian(peak_intensity_cd=500.0, sigma_x_deg=1.0,
                                                    sigma_y_deg=1.0),
                        distance_m=1.5, camera=POSE, axis_mm=(-500.0, 250.0))
    sig = sc.camera_signal(scene, exposure=Exposure(0.01, 2.0, 100.0), camera=cam)[:, :, 1]
    yy, xx = np.mgrid[0:120, 0:160]
    c = np.array([(sig * xx).sum(), (sig * yy).sum()]) / sig.sum()
    want = sc.photo_wall_to_pixel(scene, cam, [[-500.0, 250.0]])[0]
    ideal = synth.wall_to_pixel(POSE, np.array([[-500.0, 250.0]]))[0]
    assert np.hypot(*(c - want)) < 0.3 < np.hypot(*(ideal - want))


def test_raw_output_round_trips_through_dng(tmp_path):
    scene = synth.Scene(beam=synth.UniformSource(uniform_cd=50.0), distance_m=1.5,
                        camera=POSE, colour_rgb=synth.COOL_WHITE_LED_RGB)
    exp = Exposure(0.02, 2.0, 100.0)
    sig = sc.camera_signal(scene, exposure=exp, camera=sc.CameraModel())
    mosaic = sc.expose(sig, scene.sensor, output="raw", noise=False)
    s = scene.sensor
    write_dng(tmp_path / "r.dng", mosaic, black_levels=s.black_level_dn,
              white_level=s.white_level_dn, exposure_s=0.02)
    frame = read_frame(tmp_path / "r.dng")
    # Binned luminance = the luminance signal (colour normalised to unit Rec. 709 Y).
    lum = sig @ np.asarray((0.2126, 0.7152, 0.0722))
    block = lum.reshape(60, 2, 80, 2).mean(axis=(1, 3))
    np.testing.assert_allclose(frame.pixels, block, rtol=2e-3, atol=2e-5)
