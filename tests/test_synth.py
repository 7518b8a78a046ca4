"""Tests of the ground-truth renderer, ``beamwall.synth``.

What is checked against what (outside sources named beside each check):

- flux in a cone: a uniform cone of intensity I gives 2 pi I (1 - cos alpha) lm (IESNA Lighting
  Handbook, 9th ed., ch. 2); a second, independent path sums the illuminance over the wall
  disc (dOmega = cos^3(theta) dA / d^2, same handbook); tolerance 1e-9 relative for the
  closed form, 2e-4 for the wall sum (its midpoint rule on a 0.2 mm grid);
- beam angle of a Gaussian beam: FWHM = 2 sigma sqrt(2 ln 2) (definition of the full width at
  half maximum of a Gaussian), to 1e-6 deg; an elliptic beam's azimuth mean against
  scipy.integrate.quad of its closed-form half angle;
- throw: 10 000 cd gives 200 m (ANSI/PLATO FL 1 beam distance, worked value as reproduced in
  /work/shared/reference/photometry.md section 1);
- geometry: wall-to-pixel against OpenCV's cv2.projectPoints and cv2.perspectiveTransform
  (same pose), to 1e-7 px;
- rendering: pixel values against the cos^3 law on the wall times the cos^4 natural falloff
  (handbook inverse-square/cosine law; camera radiometry), to the 16-bit quantisation
  (< 2e-4 relative), and against an independent evaluation written in this file;
- noise: the variance of a flat patch against Poisson shot noise plus Gaussian read noise plus
  1/12 DN^2 of rounding (5 % relative, the sampling error of a variance over 10^4 pixels being
  about 1.4 %);
- sRGB: our encoder against colour-science's ``cctf_encoding(..., function="sRGB")``
  (IEC 61966-2-1), to 1e-12.

Frames: wall mm x right, y up; pixels x right, y down, centres at integers (OpenCV).
"""

from __future__ import annotations

import math

import cv2
import numpy as np
import pytest
from scipy import integrate, optimize

from beamwall.errors import BeamwallError, InputError
from beamwall.linear import Exposure
from beamwall.synth import (
    COOL_WHITE_LED_RGB,
    TUNGSTEN_RGB,
    CameraPose,
    EllipticGaussian,
    FlatFlood,
    HotspotSpill,
    ReferenceLamp,
    RingBeam,
    ScaledBeam,
    Scene,
    SensorModel,
    SquareSpot,
    UniformSource,
    auto_exposure_s,
    bracket,
    camera_matrix,
    demo_scenario,
    flux_in_cone_lm,
    nominal_shutter_s,
    normalise_colour,
    pixel_to_wall,
    render,
    render_signal,
    srgb_encode,
    truth,
    wall_illuminance_lx,
    wall_to_pixel,
    wall_to_px_homography,
    world_to_camera,
)

EXP = Exposure(exposure_s=0.01, f_number=4.0, iso=100.0)

ALL_BEAMS = [
    HotspotSpill(hotspot_cd=5000.0, hotspot_half_angle_deg=4.0, spill_cd=300.0,
                 spill_half_angle_deg=25.0, spill_edge_deg=2.0, hotspot_shape=3.0),
    FlatFlood(plateau_cd=300.0, half_angle_deg=30.0, edge_power=8.0),
    FlatFlood(plateau_cd=300.0, half_angle_deg=30.0, edge_power=8.0, hole_depth=0.3),
    SquareSpot(spot_cd=20000.0, half_side_deg=3.0, blur_deg=0.4, halo_cd=200.0,
               halo_sigma_deg=12.0, rotation_deg=20.0),
    RingBeam(ring_cd=2000.0, ring_radius_deg=10.0, ring_sigma_deg=2.5, centre_cd=400.0),
    ReferenceLamp(axial_intensity_cd=120.0),
    EllipticGaussian(peak_intensity_cd=800.0, sigma_x_deg=12.0, sigma_y_deg=6.0),
]


def _scene(beam, pose, **kw):
    return Scene(beam=beam, distance_m=kw.pop("distance_m", 2.0), camera=pose, **kw)


# --------------------------------------------------------------------------------------------
# Ground truth
# --------------------------------------------------------------------------------------------


@pytest.mark.parametrize("alpha_deg", [2.0, 15.0, 45.0, 90.0])
def test_uniform_cone_flux_is_two_pi_i_one_minus_cos(alpha_deg):
    # IESNA Lighting Handbook, 9th ed., ch. 2: Phi = 2 pi I (1 - cos alpha) for a uniform cone.
    expected = 2 * math.pi * 250.0 * (1 - math.cos(math.radians(alpha_deg)))
    assert flux_in_cone_lm(UniformSource(uniform_cd=250.0), alpha_deg) == pytest.approx(
        expected, rel=1e-9
    )


def test_uniform_cone_flux_on_the_azimuth_path():
    # Same handbook formula, through the 2-D (non-symmetric) quadrature: an elliptic Gaussian
    # so wide that it is flat to 1e-9 over the cone.
    wide = EllipticGaussian(peak_intensity_cd=100.0, sigma_x_deg=1e6, sigma_y_deg=1e6)
    expected = 2 * math.pi * 100.0 * (1 - math.cos(math.radians(30.0)))
    assert flux_in_cone_lm(wide, 30.0) == pytest.approx(expected, rel=1e-8)


def test_cone_flux_matches_a_sum_of_illuminance_over_the_wall_disc():
    # Independent path: flux through the wall disc = integral of E dA, with
    # E = I cos^3(theta) / d^2 (IESNA Lighting Handbook, 9th ed., ch. 2). Midpoint rule.
    beam = ALL_BEAMS[3]  # the square spot: not rotationally symmetric
    d, alpha = 1.0, 8.0
    radius = d * math.tan(math.radians(alpha))
    step = 0.0002
    c = np.arange(-radius + step / 2, radius, step)
    x, y = np.meshgrid(c, c)
    r = np.hypot(x, y)
    inside = r <= radius
    theta = np.degrees(np.arctan2(r, d))[inside]
    phi = np.mod(np.degrees(np.arctan2(y, x)), 360.0)[inside]
    e = beam.intensity_cd(theta, phi) * (d / np.sqrt(d * d + r[inside] ** 2)) ** 3 / d**2
    wall_sum = float(e.sum()) * step * step
    assert flux_in_cone_lm(beam, alpha) == pytest.approx(wall_sum, rel=2e-4)


def test_gaussian_beam_angle_is_its_fwhm():
    # FWHM of exp(-x^2 / (2 s^2)) is 2 s sqrt(2 ln 2) (definition of a Gaussian's FWHM).
    s = 5.0
    t = truth(EllipticGaussian(peak_intensity_cd=1000.0, sigma_x_deg=s, sigma_y_deg=s),
              distance_m=3.0, n_phi=72)
    assert t.beam_angle_deg == pytest.approx(2 * s * math.sqrt(2 * math.log(2)), abs=1e-6)
    # 10 %: exp(-x^2/(2 s^2)) = 0.1 at x = s sqrt(2 ln 10).
    assert t.field_angle_deg == pytest.approx(2 * s * math.sqrt(2 * math.log(10)), abs=1e-6)


def test_elliptic_beam_angle_is_the_azimuth_mean_of_the_outermost_crossing():
    sx, sy = 12.0, 6.0
    beam = EllipticGaussian(peak_intensity_cd=800.0, sigma_x_deg=sx, sigma_y_deg=sy)
    t = truth(beam, distance_m=2.0, n_phi=720)

    def half(phi_rad):
        return math.sqrt(2 * math.log(2)) / math.sqrt(
            math.cos(phi_rad) ** 2 / sx**2 + math.sin(phi_rad) ** 2 / sy**2
        )

    mean_half, _ = integrate.quad(half, 0.0, 2 * math.pi, limit=200)
    assert t.beam_angle_deg == pytest.approx(2 * mean_half / (2 * math.pi), abs=1e-6)
    assert t.beam_angle_max_deg == pytest.approx(2 * sx * math.sqrt(2 * math.log(2)), abs=1e-6)
    assert t.beam_angle_min_deg == pytest.approx(2 * sy * math.sqrt(2 * math.log(2)), abs=1e-6)


def test_flat_flood_angles_follow_its_formula():
    # 1 / (1 + (t/t0)^n) is 1/2 at t0 and 1/10 at t0 * 9^(1/n) (algebra on the model).
    t = truth(FlatFlood(plateau_cd=300.0, half_angle_deg=30.0, edge_power=8.0), distance_m=1.5)
    assert t.beam_angle_deg == pytest.approx(60.0, abs=1e-7)
    assert t.field_angle_deg == pytest.approx(60.0 * 9 ** (1 / 8), abs=1e-7)
    assert t.field_radius_mm == pytest.approx(1500.0 * math.tan(math.radians(30 * 9 ** 0.125)))


def test_ring_beam_is_measured_across_its_ring():
    beam = ALL_BEAMS[4]
    # scipy's own optimiser and root finder on the 1-D profile, independent of synth's search.
    prof = lambda th: float(beam.intensity_cd(np.array(th), np.array(0.0)))  # noqa: E731
    res = optimize.minimize_scalar(lambda th: -prof(th), bounds=(5.0, 15.0), method="bounded",
                                   options={"xatol": 1e-10})
    peak = -res.fun
    assert beam.peak_cd == pytest.approx(peak, rel=1e-9)
    assert prof(0.0) < 0.5 * peak  # a dark centre
    outer = optimize.brentq(lambda th: prof(th) - 0.5 * peak, res.x, 40.0, xtol=1e-12)
    t = truth(beam, distance_m=2.0, n_phi=36)
    assert t.beam_angle_deg == pytest.approx(2 * outer, abs=1e-6)
    assert t.peak_intensity_cd == pytest.approx(peak, rel=1e-9)


@pytest.mark.parametrize("beam", ALL_BEAMS, ids=lambda b: type(b).__name__)
def test_peak_is_the_true_maximum(beam):
    theta = np.linspace(0.0, 89.0, 891)
    phi = np.arange(0.0, 360.0, 2.5)
    dense = beam.intensity_cd(theta[:, None], phi[None, :])
    assert beam.peak_cd >= dense.max() * (1 - 1e-12)
    assert beam.peak_cd <= dense.max() * 1.01  # and not above it by more than grid loss


def test_throw_is_the_fl1_beam_distance():
    # ANSI/PLATO FL 1 beam distance: 10 000 cd -> 200 m (d = sqrt(I / 0.25)).
    t = truth(UniformSource(uniform_cd=10000.0), distance_m=2.0, n_phi=4)
    assert t.throw_m == pytest.approx(200.0, rel=1e-12)
    assert math.isnan(t.beam_angle_deg)  # never falls to 50 %: no crossing


def test_square_spot_is_widest_along_its_diagonals():
    beam = ALL_BEAMS[3]  # rotation 20 deg
    t = truth(beam, distance_m=2.0, n_phi=360)
    widest = t.phi_deg[np.argmax(t.beam_half_angle_deg)]
    narrowest = t.phi_deg[np.argmin(t.beam_half_angle_deg)]
    assert (widest - 20.0 - 45.0) % 90.0 == pytest.approx(0.0, abs=1.0)
    assert (narrowest - 20.0) % 90.0 in (pytest.approx(0.0, abs=1.0), pytest.approx(90, abs=1))
    assert t.beam_angle_max_deg > 1.15 * t.beam_angle_min_deg


def test_hotspot_half_angle_and_spill_field():
    bare = HotspotSpill(hotspot_cd=1000.0, hotspot_half_angle_deg=5.0, spill_cd=0.0,
                        spill_half_angle_deg=30.0)
    assert truth(bare, distance_m=2.0, n_phi=8).beam_angle_deg == pytest.approx(10.0, abs=1e-7)
    # A spill at 20 % of the peak moves the 10 % field out to about the spill edge.
    t = truth(HotspotSpill(hotspot_cd=800.0, hotspot_half_angle_deg=5.0, spill_cd=200.0,
                           spill_half_angle_deg=30.0, spill_edge_deg=1.0), distance_m=2.0,
              n_phi=8)
    assert 29.0 < t.field_angle_deg / 2 < 31.0


def test_truth_flux_method_and_scaled_beam():
    beam = ALL_BEAMS[0]
    t = truth(beam, distance_m=2.0, flux_half_angle_deg=20.0, n_phi=16)
    assert t.flux_lm == pytest.approx(t.flux_in_cone_lm(20.0), rel=1e-12)
    low = truth(ScaledBeam(beam, 0.25), distance_m=2.0, flux_half_angle_deg=20.0, n_phi=16)
    assert low.flux_lm == pytest.approx(0.25 * t.flux_lm, rel=1e-12)
    assert low.beam_angle_deg == pytest.approx(t.beam_angle_deg, abs=1e-9)
    assert t.total_flux_lm > t.flux_lm


# --------------------------------------------------------------------------------------------
# Geometry
# --------------------------------------------------------------------------------------------

POSES = [
    CameraPose(position_m=(0.0, 0.0, 2.0), focal_length_px=300.0, width_px=320, height_px=240),
    CameraPose(position_m=(0.35, -0.25, 2.0), yaw_deg=-10.0, pitch_deg=5.0, roll_deg=1.0,
               focal_length_px=300.0, width_px=320, height_px=240),
    CameraPose(position_m=(-0.5, 0.4, 1.2), yaw_deg=20.0, pitch_deg=-20.0, roll_deg=-3.0,
               focal_length_px=250.0, width_px=301, height_px=201),
]
WALL_PTS_MM = np.array([[0.0, 0.0], [300.0, 200.0], [-450.0, 120.0], [100.0, -380.0],
                        [-220.0, -260.0]])


@pytest.mark.parametrize("pose", POSES)
def test_wall_to_pixel_agrees_with_opencv(pose):
    # OpenCV calib3d pinhole model: cv2.projectPoints with the same R, t, K and no distortion.
    rot, t = world_to_camera(pose)
    rvec, _ = cv2.Rodrigues(rot)
    obj = np.column_stack([WALL_PTS_MM / 1000.0, np.zeros(len(WALL_PTS_MM))])
    ref, _ = cv2.projectPoints(obj, rvec, t, camera_matrix(pose), None)
    ours = wall_to_pixel(pose, WALL_PTS_MM)
    np.testing.assert_allclose(ours, ref.reshape(-1, 2), atol=1e-7)
    # ... and cv2.perspectiveTransform with our homography.
    via_h = cv2.perspectiveTransform(WALL_PTS_MM.reshape(-1, 1, 2), wall_to_px_homography(pose))
    np.testing.assert_allclose(via_h.reshape(-1, 2), ref.reshape(-1, 2), atol=1e-7)
    back = pixel_to_wall(pose, ours)
    np.testing.assert_allclose(back, WALL_PTS_MM, atol=1e-7)


def test_orientation_senses():
    # Positive yaw looks towards +x, positive pitch looks up (wall +y), positive roll turns the
    # camera's right side down so a point to the right appears rotated counter-clockwise.
    z = 2.0
    base = dict(position_m=(0.0, 0.0, z), focal_length_px=500.0, width_px=401, height_px=301)
    centre = [[200.0, 150.0]]
    x_mm = pixel_to_wall(CameraPose(yaw_deg=12.0, **base), centre)[0]
    np.testing.assert_allclose(x_mm, [1000 * z * math.tan(math.radians(12.0)), 0.0], atol=1e-9)
    y_mm = pixel_to_wall(CameraPose(pitch_deg=7.0, **base), centre)[0]
    np.testing.assert_allclose(y_mm, [0.0, 1000 * z * math.tan(math.radians(7.0))], atol=1e-9)
    u, v = wall_to_pixel(CameraPose(roll_deg=10.0, **base), [[500.0, 0.0]])[0]
    assert math.degrees(math.atan2(150.0 - v, u - 200.0)) == pytest.approx(10.0, abs=1e-9)


# --------------------------------------------------------------------------------------------
# Rendering
# --------------------------------------------------------------------------------------------


def _independent_signal(scene, exposure, u, v):
    """Noiseless focal-plane signal written out from the physics, via OpenCV's homography."""
    pose = scene.camera
    h_inv = np.linalg.inv(wall_to_px_homography(pose))
    xy = cv2.perspectiveTransform(np.array([[[u, v]]], dtype=np.float64), h_inv)[0, 0] / 1000.0
    d = scene.distance_m
    dx, dy = xy[0] - scene.axis_mm[0] / 1000, xy[1] - scene.axis_mm[1] / 1000
    r = math.hypot(dx, dy)
    theta = math.degrees(math.atan2(r, d))
    phi = math.degrees(math.atan2(dy, dx)) % 360
    e = float(scene.beam.intensity_cd(np.array(theta), np.array(phi))) * math.cos(
        math.radians(theta)) ** 3 / d**2 + scene.ambient_lx
    lum = scene.reflectance * e / math.pi
    cx, cy = pose.principal_point_px
    cos_a = pose.focal_length_px / math.sqrt(pose.focal_length_px**2 + (u - cx) ** 2
                                             + (v - cy) ** 2)
    k = scene.sensor.signal_per_lux_s * exposure.exposure_s * exposure.iso / 100
    return k / exposure.f_number**2 * lum * cos_a**4


def test_render_signal_matches_an_independent_evaluation():
    pose = CameraPose(position_m=(0.3, -0.2, 1.8), yaw_deg=-15.0, pitch_deg=8.0, roll_deg=3.0,
                      focal_length_px=380.0, width_px=400, height_px=700)  # > one row chunk
    scene = _scene(ALL_BEAMS[3], pose, axis_mm=(-50.0, 30.0), ambient_lx=2.0, reflectance=0.7)
    sig = render_signal(scene, exposure=EXP, grey=True)
    ss = render_signal(scene, exposure=EXP, grey=True, supersample=2)
    rng = np.random.default_rng(3)
    pixels = list(zip(rng.integers(0, 400, 40), rng.integers(0, 700, 40)))
    pixels += [(200, 650), (201, 655), (199, 656)]  # across the chunk boundary
    # the spot itself
    pixels += [tuple(int(round(c)) for c in wall_to_pixel(pose, [[-50.0, 30.0]])[0])]
    for u, v in pixels:
        assert sig[v, u] == pytest.approx(_independent_signal(scene, EXP, u, v), rel=1e-5)
        sub = np.mean([_independent_signal(scene, EXP, u + ox, v + oy)
                       for ox in (-0.25, 0.25) for oy in (-0.25, 0.25)])
        assert ss[v, u] == pytest.approx(sub, rel=1e-5)


@pytest.mark.parametrize("camera_at", [(0.0, 0.0, 1.5), (0.3, 0.2, 1.2)])
def test_flat_wall_follows_cos3_times_cos4(camera_at):
    # Handbook inverse-square/cosine law E = I cos^3(theta) / d^2 on a flat wall, times the
    # natural cos^4 falloff of the camera; uniform lamp, frontal camera, no noise, linear DN.
    d = 1.5
    pose = CameraPose(position_m=camera_at, focal_length_px=200.0, width_px=300, height_px=240)
    sensor = SensorModel(black_level_dn=512)
    scene = _scene(UniformSource(uniform_cd=100.0), pose, distance_m=d, sensor=sensor)
    t = auto_exposure_s(scene, f_number=2.0, iso=100.0, headroom=0.9)
    img = render(scene, exposure=Exposure(t, 2.0, 100.0), encoding="linear", grey=True,
                 noise=False).astype(float) - 512
    ref_px = wall_to_pixel(pose, [[0.0, 0.0]])[0]
    ref = (int(round(ref_px[0])), int(round(ref_px[1])))
    cx, cy = pose.principal_point_px
    for u, v in [(0, 0), (299, 0), (150, 239), (40, 200), (260, 60)]:
        x, y = pixel_to_wall(pose, [[u, v]])[0] / 1000
        xr, yr = pixel_to_wall(pose, [ref])[0] / 1000
        cos_t = d / math.sqrt(d * d + x * x + y * y)
        cos_tr = d / math.sqrt(d * d + xr * xr + yr * yr)
        cos_a = 200.0 / math.sqrt(200.0**2 + (u - cx) ** 2 + (v - cy) ** 2)
        cos_ar = 200.0 / math.sqrt(200.0**2 + (ref[0] - cx) ** 2 + (ref[1] - cy) ** 2)
        expected = (cos_t**3 * cos_a**4) / (cos_tr**3 * cos_ar**4)
        assert img[v, u] / img[ref[1], ref[0]] == pytest.approx(expected, rel=2e-4)
    if camera_at[:2] == (0.0, 0.0):  # camera at the lamp: both angles equal, cos^7
        x, y = pixel_to_wall(pose, [[0, 0]])[0] / 1000
        assert img[0, 0] / img[ref[1], ref[0]] == pytest.approx(
            (d / math.sqrt(d * d + x * x + y * y)) ** 7, rel=2e-4)


def _flat_patch_scene(**sensor_kw):
    pose = CameraPose(position_m=(0.0, 0.0, 2.0), focal_length_px=1e5, width_px=100,
                      height_px=100)
    return _scene(UniformSource(uniform_cd=100.0), pose, sensor=SensorModel(**sensor_kw))


def test_noise_of_a_flat_patch_is_poisson_plus_read_noise():
    # Photon transfer: var(DN) = g^2 (mean_e + read_e^2) + 1/12 (rounding), Poisson statistics
    # of photo-electrons (common practice of sensor characterisation, e.g. EMVA 1288).
    scene = _flat_patch_scene(full_well_e=20000.0, read_noise_e=12.0, black_level_dn=1000)
    sensor = scene.sensor
    t = 0.3 / float(render_signal(scene, exposure=EXP, grey=True).mean()) * EXP.exposure_s
    exp = Exposure(t, EXP.f_number, EXP.iso)
    img = render(scene, exposure=exp, encoding="linear", seed=7).astype(float)
    mean_e = float(render_signal(scene, exposure=exp).mean(axis=(0, 1))[1]) * sensor.full_well_e
    g = sensor.gain_dn_per_e
    for ch in range(3):
        patch = img[:, :, ch]
        mean_e_ch = (float(render_signal(scene, exposure=exp)[:, :, ch].mean())
                     * sensor.full_well_e)
        assert patch.mean() == pytest.approx(1000 + g * mean_e_ch, rel=2e-3)
        expected_var = g**2 * (mean_e_ch + 12.0**2) + 1 / 12
        assert patch.var(ddof=1) == pytest.approx(expected_var, rel=0.05)
    assert mean_e == pytest.approx(6000.0, rel=1e-3)


def test_dark_frame_is_black_plus_read_noise():
    scene = _flat_patch_scene(read_noise_e=5.0, black_level_dn=2048)
    dark = render(scene, exposure=EXP, encoding="linear", beam_on=False, grey=True, seed=2)
    g = scene.sensor.gain_dn_per_e
    assert dark.mean() == pytest.approx(2048, abs=0.3)
    assert dark.std() == pytest.approx(math.sqrt((g * 5.0) ** 2 + 1 / 12), rel=0.05)
    # with ambient light only: the ambient's luminance rho E / pi, neutral in all channels
    amb = _scene(scene.beam, scene.camera, ambient_lx=50.0, sensor=scene.sensor)
    sig = render_signal(amb, exposure=EXP, beam_on=False)
    expected = 0.8 * 50.0 / math.pi * EXP.exposure_s / EXP.f_number**2
    np.testing.assert_allclose(sig[50, 50], [expected] * 3, rtol=1e-6)


def test_seeded_noise_is_reproducible():
    scene = _flat_patch_scene()
    a = render(scene, exposure=EXP, encoding="linear", seed=11)
    b = render(scene, exposure=EXP, encoding="linear", seed=11)
    c = render(scene, exposure=EXP, encoding="linear", seed=12)
    assert np.array_equal(a, b) and not np.array_equal(a, c)
    imgs = bracket(scene, exposures=[EXP, Exposure(0.04, 4.0, 100.0)], encoding="linear")
    assert imgs[1].mean() > 3.5 * (imgs[0].mean() - 1024) + 1024


def test_srgb_encoder_matches_colour_science():
    colour = pytest.importorskip("colour")
    x = np.concatenate([np.linspace(0, 0.01, 101), np.geomspace(1e-6, 1, 200)])
    # IEC 61966-2-1 as implemented by colour-science.
    np.testing.assert_allclose(srgb_encode(x), colour.cctf_encoding(x, function="sRGB"),
                               atol=1e-12)


def test_srgb_render_is_the_encoded_linear_signal():
    pose = CameraPose(position_m=(0.1, 0.0, 1.0), focal_length_px=120.0, width_px=64,
                      height_px=48)
    scene = _scene(ALL_BEAMS[1], pose, distance_m=1.0, colour_rgb=COOL_WHITE_LED_RGB)
    srgb = render(scene, exposure=EXP, encoding="srgb", noise=False)
    lin = render(scene, exposure=EXP, encoding="linear", noise=False).astype(float)
    s = scene.sensor
    frac = np.clip((lin - s.black_level_dn) / (s.white_level_dn - s.black_level_dn), 0, 1)
    assert srgb.dtype == np.uint8 and srgb.shape == (48, 64, 3)
    assert np.array_equal(srgb, np.rint(255 * srgb_encode(frac)).astype(np.uint8))


def test_colour_channels_weight_to_the_grey_signal():
    # Rec. 709 luminance weights (ITU-R BT.709-6, item 3.2) of the RGB signal give the grey one.
    pose = CameraPose(position_m=(0.0, 0.0, 1.0), focal_length_px=120.0, width_px=40,
                      height_px=30)
    scene = _scene(ALL_BEAMS[0], pose, distance_m=1.0, colour_rgb=TUNGSTEN_RGB, ambient_lx=3.0)
    rgb = render_signal(scene, exposure=EXP).astype(float)
    grey = render_signal(scene, exposure=EXP, grey=True).astype(float)
    np.testing.assert_allclose(rgb @ [0.2126, 0.7152, 0.0722], grey, rtol=1e-6)
    assert TUNGSTEN_RGB[0] > TUNGSTEN_RGB[2] and COOL_WHITE_LED_RGB[2] > COOL_WHITE_LED_RGB[0]


def test_clipping_at_the_white_level_per_channel():
    scene = _flat_patch_scene()
    scene = _scene(scene.beam, scene.camera, colour_rgb=COOL_WHITE_LED_RGB)
    # expose the green (luminance) channel at 95 %: blue, brighter for a cool LED, clips
    t = 0.95 / float(render_signal(scene, exposure=EXP, grey=True).mean()) * EXP.exposure_s
    img = render(scene, exposure=Exposure(t, 4.0, 100.0), encoding="linear", seed=1)
    assert np.all(img[:, :, 2] == 65535)
    assert img[:, :, 0].max() < 65535


def test_auto_exposure_puts_the_brightest_pixel_at_the_headroom():
    pose = POSES[1]
    scene = _scene(ALL_BEAMS[3], pose, colour_rgb=COOL_WHITE_LED_RGB)
    t = auto_exposure_s(scene, f_number=4.0, iso=200.0, headroom=0.7)
    sig = render_signal(scene, exposure=Exposure(t, 4.0, 200.0))
    assert float(sig.max()) == pytest.approx(0.7, rel=1e-5)
    assert nominal_shutter_s(t) <= t
    assert nominal_shutter_s(1 / 100) == pytest.approx(1 / 100)


# --------------------------------------------------------------------------------------------
# Errors
# --------------------------------------------------------------------------------------------


def test_errors_name_the_field():
    pose = POSES[0]
    with pytest.raises(InputError, match="encoding"):
        render(_scene(ALL_BEAMS[0], pose), exposure=EXP, encoding="jpeg")
    with pytest.raises(InputError, match="colour_rgb"):
        _scene(ALL_BEAMS[0], pose, colour_rgb=(1.0, 1.0, 2.0))
    with pytest.raises(InputError, match="colour_rgb"):
        normalise_colour((0.0, 0.0, 0.0))
    with pytest.raises(InputError, match="position_m"):
        CameraPose(position_m=(0.0, 0.0, -1.0))
    with pytest.raises(InputError, match="headroom"):
        auto_exposure_s(_scene(ALL_BEAMS[0], pose), f_number=4.0, iso=100.0, headroom=1.5)
    with pytest.raises(InputError, match="supersample"):
        render_signal(_scene(ALL_BEAMS[0], pose), exposure=EXP, supersample=0)
    with pytest.raises(InputError, match="white"):
        SensorModel(black_level_dn=70000)
    with pytest.raises(InputError, match="half_angle_deg"):
        flux_in_cone_lm(ALL_BEAMS[0], 95.0)
    with pytest.raises(InputError, match="exposure_s"):
        render(_scene(ALL_BEAMS[0], pose), exposure=Exposure(0.0, 4.0, 100.0))
    with pytest.raises(BeamwallError, match="hole_depth"):
        FlatFlood(plateau_cd=1.0, half_angle_deg=10.0, hole_depth=1.0)


def test_points_behind_the_camera_are_nan():
    pose = CameraPose(position_m=(0.0, 0.0, 0.5), yaw_deg=60.0, focal_length_px=100.0,
                      width_px=50, height_px=50)
    px = wall_to_pixel(pose, [[-5000.0, 0.0], [800.0, 0.0]])
    assert np.all(np.isnan(px[0])) and np.all(np.isfinite(px[1]))
    assert wall_illuminance_lx(_scene(UniformSource(uniform_cd=4.0), pose), [[0, 0]])[0] == 1.0


# --------------------------------------------------------------------------------------------
# The demo scenario
# --------------------------------------------------------------------------------------------


def _circle_in_frame(pose, radius_mm, margin_px=5.0):
    ang = np.linspace(0, 2 * np.pi, 721)
    px = wall_to_pixel(pose, np.column_stack([radius_mm * np.cos(ang), radius_mm * np.sin(ang)]))
    return bool(np.all(px >= margin_px) and np.all(px[:, 0] <= pose.width_px - 1 - margin_px)
                and np.all(px[:, 1] <= pose.height_px - 1 - margin_px))


def test_demo_scenario_is_consistent():
    demo = demo_scenario()
    cam = demo.camera
    labels = [s.label for s in demo.shots]
    assert len(set(labels)) == len(labels) == 4
    assert {(s.zoom, s.mode) for s in demo.shots} == {("min", "high"), ("min", "low"),
                                                      ("max", "high"), ("max", "low")}
    by = {(s.zoom, s.mode): s for s in demo.shots}
    wide, narrow = by["min", "high"].truth, by["max", "high"].truth
    assert 55 < wide.beam_angle_deg < 65 and 6 < narrow.beam_angle_deg < 8
    for zoom in ("min", "max"):
        assert by[zoom, "low"].truth.peak_intensity_cd == pytest.approx(
            0.25 * by[zoom, "high"].truth.peak_intensity_cd)
    assert any(len(s.exposures) >= 2 for s in demo.shots)
    # wall marks, the widest field and the flux cone inside the frame
    px = demo.wall_points_px
    assert len(px) >= 4 and np.all(px > 0) and np.all(px[:, 0] < cam.width_px - 1)
    assert np.all(px[:, 1] < cam.height_px - 1)
    for shot in demo.shots:
        assert shot.scene.camera == cam
        assert _circle_in_frame(cam, shot.truth.field_radius_mm)
        cone_mm = 1000 * demo.distance_m * math.tan(math.radians(shot.truth.flux_half_angle_deg))
        assert _circle_in_frame(cam, cone_mm)
        # the first exposure does not clip the brightest pixel; exposure times are marked values
        sig = render_signal(shot.scene, exposure=shot.exposures[0])
        assert 0.4 < float(sig.max()) < 0.81
        assert all(e.exposure_s == nominal_shutter_s(e.exposure_s) for e in shot.exposures)
    ref = demo.reference
    assert ref.scene.beam.peak_cd == ref.intensity_cd == 120.0 and ref.distance_m == 2.0
    # claims: one honest (within 5 %), one inflated (over 1.5 x)
    honest = by["min", "high"]
    assert honest.claimed_lm == pytest.approx(honest.truth.total_flux_lm, rel=0.05)
    inflated = by["max", "high"]
    assert inflated.claimed_cd > 1.5 * inflated.truth.peak_intensity_cd
    # the electrical range brackets the true flux in high mode
    el = demo.electrical
    lo, hi = (el.led_volts * el.led_amps * e for e in el.efficacy_lm_per_w)
    assert lo < wide.total_flux_lm < hi and lo < narrow.total_flux_lm < hi
    assert "Z-1" in demo.torch_name


def test_rendering_works_in_bounded_memory():
    # Row chunks: the working memory beyond the output array stays bounded (here < 120 MB),
    # so a 6000 x 4000 frame fits in about 2 GB. Measured with the standard library's tracer.
    import tracemalloc

    pose = CameraPose(position_m=(0.1, 0.0, 2.0), focal_length_px=1500.0, width_px=1500,
                      height_px=1000)
    scene = _scene(ALL_BEAMS[0], pose)
    tracemalloc.start()
    try:
        img = render(scene, exposure=EXP, encoding="linear", seed=0)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert img.shape == (1000, 1500, 3) and img.dtype == np.uint16
    assert peak - img.nbytes < 120e6
