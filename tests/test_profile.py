"""Camera profile: response-curve recovery, flat field, lens distortion, JSON, the command.

Outside references: colour-science's sRGB decoding (IEC 61966-2-1) for the recovered sRGB
response; OpenCV's calibrateCamera / projectPoints model for distortion. Tolerances: response
within 3 % of the true curve over codes 20-235 (relative to code 128); flat field within 1 %;
undistorted positions within 1 px over the frame.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from click.testing import CliRunner

from beamwall import synth
from beamwall import synth_camera as sc
from beamwall.cli_profile import profile as profile_cmd
from beamwall.errors import CalibrationError, InputError
from beamwall.images import write_image
from beamwall.profile import (
    CameraProfile,
    check_profile_camera,
    fit_flat_field,
    recover_response,
    undistort_points,
)
from beamwall.profile_io import load_profile

POSE = synth.CameraPose(position_m=(0.0, 0.0, 1.2), focal_length_px=190.0, width_px=240,
                        height_px=180)
FACTORS = [1.0, 2.0, 4.0, 8.0, 16.0]


def _bracket(tone, gains=(1, 1, 1, 1, 1)):
    """A static scene (a smooth ramp of 3.5 decades) at five exposures, one stop apart."""
    yy, xx = np.mgrid[0:120, 0:160]
    field = 10 ** (-3.5 + 3.5 * (xx / 159.0)) * (1 + 0.2 * np.sin(yy / 9.0))
    sig = np.repeat(field[:, :, None], 3, axis=2) * np.array([0.9, 1.0, 1.1])
    return [sc.expose(sig * f / 16.0, synth.SensorModel(), output="tone", tone=tone, seed=i,
                      gain=g) for i, (f, g) in enumerate(zip(FACTORS, gains))]


@pytest.mark.parametrize("tone", ["srgb", "filmic"])
def test_response_recovered_against_known_curve(tone):
    curve = recover_response(_bracket(tone), FACTORS)
    codes = np.arange(20, 236)
    if tone == "srgb":
        colour = pytest.importorskip("colour")
        truth = colour.models.eotf_sRGB(np.arange(256) / 255.0)   # IEC 61966-2-1
    else:
        truth = sc.tone_decode(np.arange(256) / 255.0, "filmic")
    got = curve.linear / curve.linear[128]
    want = truth / truth[128]
    err = np.abs(got[codes] / want[codes] - 1)
    assert err.max() < 0.03, f"{tone}: worst {100 * err.max():.2f} % at code {codes[err.argmax()]}"
    assert curve.warnings == ()


def test_srgb_curve_would_misread_filmic_camera():
    # Why a response curve matters: the sRGB curve is off by far more than 3 % on filmic codes.
    srgb = ((np.arange(256) / 255.0 + 0.055) / 1.055) ** 2.4
    filmic = sc.tone_decode(np.arange(256) / 255.0, "filmic")
    ratio = (srgb / srgb[128]) / (filmic / filmic[128])
    assert np.abs(ratio[40:220] - 1).max() > 0.15


def test_bracket_disagreeing_with_exif_warns():
    curve = recover_response(_bracket("srgb", gains=(1, 1, 1.5, 1, 1)), FACTORS)
    assert any("image 3" in w and "stated exposure" in w for w in curve.warnings)


def test_one_frame_bracket_refused():
    with pytest.raises(CalibrationError, match="at least 2"):
        recover_response(_bracket("srgb")[:1], FACTORS[:1])


def test_flat_field_recovers_vignetting_and_cos4():
    cam = sc.CameraModel(vignetting=(-0.35, 0.08))
    sig = sc.flat_field_signal(POSE, cam, level=0.6)[:, :, 0]
    ff, warnings = fit_flat_field(sig)
    model = ff.gain((180, 240))
    np.testing.assert_allclose(model, sig / sig[89:91, 119:121].mean(), rtol=0.01)
    assert warnings == ()
    assert ff.coefficients[0] < -0.5       # strong: cos^4 and the lens together


def test_flat_field_warns_on_uneven_light():
    yy, xx = np.mgrid[0:90, 0:120]
    _, warnings = fit_flat_field(1.0 + 0.5 * (xx / 119.0) + 0.1 * np.sin(yy / 5.0))
    assert warnings


def _boards(cam, pose=POSE):
    v = sc.BoardView
    views = [v(260), v(300, (25, 0, 5), (-40, 15)), v(300, (0, 25, -5), (45, -20)),
             v(320, (-20, 15, 10), (-30, -30)), v(290, (15, -20, 0), (40, 30)),
             v(310, (-25, -10, 3), (-50, 20))]
    return sc.render_boards(pose, cam, views, inner_corners=(7, 5), square_mm=25.0)


def _write_profile_scene(tmp_path, *, boards=True, blank_boards=False):
    cam = sc.CameraModel(tone="filmic", vignetting=(-0.3,),
                         distortion=sc.PHONE_WIDE_DISTORTION, model="Wide one")
    exif = dict(make=cam.make, model=cam.model, f_number=2.0, iso=100)
    names = []
    for i, (img, f) in enumerate(zip(_bracket("filmic"), FACTORS)):
        write_image(tmp_path / f"b{i}.jpg", img, exposure_s=f / 100.0, **exif)
        names.append(f'"b{i}.jpg"')
    flat = sc.expose(sc.flat_field_signal(synth.CameraPose(position_m=(0, 0, 1), width_px=160,
                                                           height_px=120, focal_length_px=130.0),
                                          cam, level=0.5),
                     synth.SensorModel(), output="tone", tone="filmic", seed=3)
    write_image(tmp_path / "flat.jpg", flat, exposure_s=0.01, **exif)
    text = (f"[response]\nimages = [{', '.join(names)}]\n\n"
            "[flat_field]\nimages = [\"flat.jpg\"]\n")
    if boards:
        pose = synth.CameraPose(position_m=(0, 0, 1), width_px=160, height_px=120,
                                focal_length_px=130.0)
        imgs = _boards(cam, pose) if not blank_boards else [np.full((120, 160), 128, np.uint8)] * 3
        bnames = []
        for i, img in enumerate(imgs):
            write_image(tmp_path / f"board{i}.jpg", np.repeat(img[:, :, None], 3, axis=2), **exif)
            bnames.append(f'"board{i}.jpg"')
        text += (f"\n[distortion]\nimages = [{', '.join(bnames)}]\ninner_corners = [7, 5]\n"
                 "square_mm = 25.0\n")
    (tmp_path / "cam.toml").write_text(text)
    return tmp_path / "cam.toml"


def test_distortion_from_rendered_boards():
    cam = sc.CameraModel(distortion=sc.PHONE_WIDE_DISTORTION)
    from beamwall.profile import board_object_points, calibrate_distortion, find_board_corners

    corners = [c for c in (find_board_corners(b, (7, 5)) for b in _boards(cam)) if c is not None]
    assert len(corners) >= 5
    got = calibrate_distortion(corners, board_object_points((7, 5), 25.0), (240, 180))
    true = sc.lens_distortion(POSE, cam)
    gx, gy = np.meshgrid(np.linspace(0, 239, 7), np.linspace(0, 179, 5))
    grid = np.column_stack([gx.ravel(), gy.ravel()])
    assert np.abs(undistort_points(got, grid) - undistort_points(true, grid)).max() < 1.0
    assert got.rms_px < 0.5


def test_profile_command_writes_a_profile(tmp_path):
    toml = _write_profile_scene(tmp_path)
    out = tmp_path / "calibration" / "wide.profile.json"
    res = CliRunner().invoke(profile_cmd, [str(toml), "-o", str(out)])
    assert res.exit_code == 0, res.output
    prof = load_profile(out)
    assert (prof.make, prof.model, prof.image_size_px) == ("Synthetic", "Wide one", (160, 120))
    assert prof.response is not None and prof.flat_field is not None
    assert prof.distortion is not None and prof.distortion.coefficients[0] < -0.05
    assert json.loads(out.read_text())["format"] == "beamwall camera profile 1"
    res = CliRunner().invoke(profile_cmd, [str(toml), "-o", str(out)])
    assert res.exit_code == 2 and "--force" in res.output


def test_board_not_found_is_one_line_error_and_nothing_written(tmp_path):
    toml = _write_profile_scene(tmp_path, blank_boards=True)
    out = tmp_path / "p.json"
    res = CliRunner().invoke(profile_cmd, [str(toml), "-o", str(out)])
    assert res.exit_code == 2
    line = res.output.strip()
    assert "\n" not in line and "checkerboard" in line and "found in 0 of 3" in line
    assert not out.exists() and not list(tmp_path.glob(".p.json*"))


def test_unreadable_raw_in_profile_is_exit_2(tmp_path):
    (tmp_path / "f.dng").write_bytes(b"II*\x00" + bytes(64))
    (tmp_path / "cam.toml").write_text('[flat_field]\nimages = ["f.dng"]\n')
    res = CliRunner().invoke(profile_cmd, [str(tmp_path / "cam.toml"), "-o",
                                           str(tmp_path / "p.json")])
    assert res.exit_code == 2 and "f.dng" in res.output and not (tmp_path / "p.json").exists()


def test_json_round_trip_and_camera_check(tmp_path):
    p = CameraProfile("Synthetic", "Wide one", (160, 120))
    assert CameraProfile.from_dict(json.loads(json.dumps(p.to_dict()))) == p
    with pytest.raises(CalibrationError, match="model 'Wide one'.*'Other'"):
        check_profile_camera(p, make="Synthetic", model="Other", image_size_px=(160, 120),
                             raw=False)
    with pytest.raises(CalibrationError, match="160x120"):
        check_profile_camera(p, make="Synthetic", model="Wide one", image_size_px=(320, 240),
                             raw=False)
    (tmp_path / "x.json").write_text('{"format": "something else"}')
    with pytest.raises(InputError, match="x.json: format: not a camera profile"):
        load_profile(tmp_path / "x.json")
