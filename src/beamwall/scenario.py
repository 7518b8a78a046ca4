"""Write the fictional demo scenario: photos with EXIF, camera profile, session, calibration TOML.

The scene itself (torch, camera pose, reference lamp, true figures) is data from
:func:`beamwall.synth.demo_scenario`; this module photographs it with the demo camera
(:data:`DEMO_CAMERA`: a lens with mild vignetting and a little barrel distortion, the sRGB tone
curve, after :mod:`beamwall.synth_camera`) and writes what a user would bring home:

- the camera's profile photos (``profile/flat_*.jpg``: an evenly lit surface;
  ``profile/board_*.jpg``: a printed checkerboard in varied poses) and ``profile.toml``;
- ``setup.jpg``: the wall with printed markers (:mod:`beamwall.synth_setup`), the room lit,
  from the tripod of the beam photos;
- the reference lamp and ``calibration.toml``; the torch shots, dark frames and
  ``session.toml``, both mapping the wall with the markers and naming the camera profile.

Everything in it is invented. The lens is applied as :func:`beamwall.synth_camera.camera_signal`
does (the ideal signal rendered on a padded canvas, sampled where each photo pixel's ray
lands, then the vignetting), with the ideal position of each photo pixel computed once for
all the photos (:class:`_Lens`).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

import cv2
import numpy as np

from beamwall import synth, synth_camera, synth_setup
from beamwall.images import write_image
from beamwall.linear import Exposure
from beamwall.profile import LensDistortion, undistort_points

__all__ = [
    "WrittenDemo",
    "write_demo",
    "truth_errors",
    "outside_tolerance",
    "format_truth_comparison",
    "TOLERANCES",
    "CAMERA_MAKE",
    "CAMERA_MODEL",
    "DEMO_CAMERA",
    "MARKER_SIZE_MM",
    "BOARD_INNER_CORNERS",
    "BOARD_SQUARE_MM",
    "lens_signal",
]

#: EXIF identity of the fictional demo camera.
CAMERA_MAKE = "Synthetic"
CAMERA_MODEL = "Demo camera"
#: Fictional lens: focal length in mm (the sensor's pixels per mm follow from the pose's
#: focal length in px).
LENS_FOCAL_MM = 4.0

#: The demo camera beyond the pinhole (invented for the demo): vignetting of 1 - 0.25 rho^2
#: + 0.05 rho^4 (rho: distance from the centre over half the diagonal; 80 % at the corners,
#: on top of the natural cos^4 falloff), a little barrel distortion (k1 = -0.05, k2 = 0.01:
#: about 6 % at the corners of this wide frame), the sRGB tone curve so that its JPEGs are
#: standard (no response curve needed).
DEMO_CAMERA = synth_camera.CameraModel(
    tone="srgb", vignetting=(-0.2, 0.04), distortion=(-0.03, 0.005, 0.0, 0.0, 0.0),
    make=CAMERA_MAKE, model=CAMERA_MODEL,
)

#: Printed markers: ids, side (black border included) and where they sit in the photo.
MARKER_IDS: tuple[int, ...] = (0, 1, 2, 3, 4, 5)
MARKER_SIZE_MM = 200.0
MARKER_INSET_FRACTION = 0.2
#: Room light on the wall for the setup photo, lx.
ROOM_LX = 150.0

#: The printed checkerboard of the profile photos: inner corners (columns, rows), square, mm.
BOARD_INNER_CORNERS: tuple[int, int] = (9, 6)
BOARD_SQUARE_MM = 30.0
#: Poses of the board: distance (mm), rotation vector (deg), shift (mm, x right, y down),
#: spread over the frame so that the edges and corners, where distortion is largest, are seen.
BOARD_VIEWS: tuple[synth_camera.BoardView, ...] = tuple(
    synth_camera.BoardView(d, t, s) for d, t, s in (
        (420.0, (0.0, 0.0, 0.0), (0.0, 0.0)),
        (420.0, (20.0, -15.0, 4.0), (-330.0, -190.0)),
        (420.0, (-18.0, 20.0, -6.0), (330.0, -190.0)),
        (420.0, (15.0, 18.0, 8.0), (330.0, 190.0)),
        (420.0, (-20.0, -18.0, -3.0), (-330.0, 190.0)),
        (460.0, (0.0, 28.0, 2.0), (-380.0, 0.0)),
        (460.0, (0.0, -28.0, -2.0), (380.0, 0.0)),
        (440.0, (25.0, 0.0, 5.0), (0.0, -230.0)),
        (440.0, (-25.0, 0.0, -5.0), (0.0, 230.0)),
    )
)
#: Settings of the profile photos (recorded in their EXIF).
PROFILE_EXPOSURE = Exposure(exposure_s=1 / 30, f_number=4.0, iso=100.0)

#: A shot of a beam whose field angle is under this many degrees is bracketed ...
SPOT_FIELD_DEG = 20.0
#: ... with a second exposure this many times the first (see :func:`_shot_exposures`).
SPOT_BRACKET_FACTOR = 16.0

#: Issue 2's tolerances on each figure against the truth, relative.
TOLERANCES: dict[str, float] = {
    "beam": 0.02, "field": 0.03, "peak": 0.03, "flux": 0.03, "throw": 0.02,
}

#: JPEG quality of the profile photos (smooth or two-tone: small files).
PROFILE_JPEG_QUALITY = 85


@dataclass(frozen=True)
class WrittenDemo:
    """Where the demo files went, and the true figures per shot label.

    Attributes
    ----------
    folder : Path
    session_toml, calibration_toml, profile_toml : Path
    calibration_json, profile_json : Path
        Where the TOML files expect the calibration and the profile (not written here).
    truth : dict of str to beamwall.synth.Truth
        True figures per shot label.
    markers_mm : dict of int to (x_mm, y_mm)
        Marker centres on the wall.
    distortion : beamwall.profile.LensDistortion or None
        The demo lens's true distortion (for checks).
    """

    folder: Path
    session_toml: Path
    calibration_toml: Path
    calibration_json: Path
    profile_toml: Path
    profile_json: Path
    truth: dict[str, Any]
    markers_mm: dict[int, tuple[float, float]]
    distortion: LensDistortion | None


# --------------------------------------------------------------------------------------------
# The lens, applied once per photo with the pixel map computed once


@dataclass(frozen=True)
class _Lens:
    """The demo camera's lens on a pose: the padded ideal pose and each photo pixel's ray."""

    pose: synth.CameraPose
    camera: synth_camera.CameraModel
    padded: synth.CameraPose
    map_x: np.ndarray | None     # (H, W) float32 position on the padded canvas, or None
    map_y: np.ndarray | None
    gain: np.ndarray | None      # (H, W) float32 vignetting, or None

    def apply(self, ideal: np.ndarray) -> np.ndarray:
        """Photo signal (H, W[, C]) from the ideal signal on :attr:`padded`."""
        sig: np.ndarray = np.asarray(ideal, np.float32)
        if self.map_x is not None and self.map_y is not None:
            sig = cv2.remap(sig, self.map_x, self.map_y, cv2.INTER_LINEAR,
                            borderMode=cv2.BORDER_REPLICATE)
        if self.gain is not None:
            sig = sig * (self.gain[:, :, None] if sig.ndim == 3 else self.gain)
        return sig


def _lens(pose: synth.CameraPose, camera: synth_camera.CameraModel) -> _Lens:
    dist = synth_camera.lens_distortion(pose, camera)
    gain = (synth_camera.vignetting_gain((pose.height_px, pose.width_px), camera.vignetting)
            .astype(np.float32) if camera.vignetting else None)
    if dist is None:
        return _Lens(pose, camera, pose, None, None, gain)
    yy, xx = np.mgrid[0:pose.height_px, 0:pose.width_px].astype(np.float64)
    ideal = undistort_points(dist, np.column_stack([xx.ravel(), yy.ravel()]))
    ideal = ideal.reshape(pose.height_px, pose.width_px, 2)
    pad = int(math.ceil(max(
        -ideal[..., 0].min(), ideal[..., 0].max() - (pose.width_px - 1),
        -ideal[..., 1].min(), ideal[..., 1].max() - (pose.height_px - 1), 0.0))) + 2
    padded = replace(pose, width_px=pose.width_px + 2 * pad, height_px=pose.height_px + 2 * pad)
    return _Lens(pose, camera, padded, (ideal[..., 0] + pad).astype(np.float32),
                 (ideal[..., 1] + pad).astype(np.float32), gain)


def lens_signal(
    pose: synth.CameraPose,
    camera: synth_camera.CameraModel,
    render_ideal: Callable[[synth.CameraPose], np.ndarray],
) -> np.ndarray:
    """Photo signal through a camera's lens, from an ideal renderer (one photo).

    Parameters
    ----------
    pose : CameraPose
    camera : CameraModel
    render_ideal : callable
        ``render_ideal(pose) -> (H, W[, C]) float``: the pinhole signal on any pose.

    Returns
    -------
    (H, W[, C]) float32
        As :func:`beamwall.synth_camera.camera_signal` for a scene (distortion, then
        vignetting).
    """
    lens = _lens(pose, camera)
    return lens.apply(render_ideal(lens.padded))


# --------------------------------------------------------------------------------------------
# Photos


def _slug(label: str) -> str:
    out = "".join(c if c.isalnum() else "-" for c in label.lower())
    while "--" in out:
        out = out.replace("--", "-")
    return out.strip("-")


def _write(path: Path, pixels: np.ndarray, exposure: Exposure, pose: synth.CameraPose, *,
           quality: int = 95) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    write_image(
        path,
        pixels,
        exposure_s=exposure.exposure_s,
        f_number=exposure.f_number,
        iso=exposure.iso,
        focal_length_mm=LENS_FOCAL_MM,
        focal_plane_px_per_mm=pose.focal_length_px / LENS_FOCAL_MM,
        make=CAMERA_MAKE,
        model=CAMERA_MODEL,
        jpeg_quality=quality,
    )


def _photo(lens: _Lens, scene: synth.Scene, exposure: Exposure, *, seed: int,
           beam_on: bool = True) -> np.ndarray:
    """The 8-bit photo of a scene through the demo camera."""
    ideal = synth.render_signal(replace(scene, camera=lens.padded), exposure=exposure,
                                beam_on=beam_on)
    return synth_camera.expose(lens.apply(ideal), scene.sensor, output="tone",
                               tone=lens.camera.tone, seed=seed)


def _setup_photo(lens: _Lens, sensor: synth.SensorModel, markers_mm: Mapping[int, Any], *,
                 seed: int) -> tuple[np.ndarray, Exposure]:
    """The lit wall with the marker sheets, through the lens."""
    exposure = synth_setup.setup_exposure(lens.pose, room_lx=ROOM_LX, sensor=sensor)
    dn = synth_setup.render_setup_photo(
        lens.padded, markers_mm=markers_mm, marker_size_mm=MARKER_SIZE_MM, room_lx=ROOM_LX,
        exposure=exposure, sensor=sensor, encoding="linear", noise=False, supersample=2)
    black, white = float(sensor.black_level_dn), float(sensor.white_level_dn)
    ideal = (dn.astype(np.float64) - black) / (white - black)
    sig = lens.apply(ideal)
    return synth_camera.expose(sig, sensor, output="tone", tone=lens.camera.tone,
                               seed=seed), exposure


def _flat_photo(lens: _Lens, sensor: synth.SensorModel, *, seed: int,
                level: float = 0.6) -> np.ndarray:
    """An evenly lit, neutral surface filling the frame (ideal image ``level x cos^4``), RGB."""
    p = lens.padded
    cx, cy = p.principal_point_px
    yy, xx = np.mgrid[0:p.height_px, 0:p.width_px].astype(np.float64)
    r2 = ((xx - cx) ** 2 + (yy - cy) ** 2) / p.focal_length_px**2
    grey = synth_camera.expose(lens.apply(level / (1.0 + r2) ** 2), sensor, output="tone",
                               tone=lens.camera.tone, seed=seed)
    return np.repeat(grey[:, :, None], 3, axis=2)


def _board_photo(lens: _Lens, view: synth_camera.BoardView, sensor: synth.SensorModel, *,
                 seed: int, supersample: int = 3, texture_px_per_mm: float = 8.0) -> np.ndarray:
    """An 8-bit photo (RGB, neutral) of the printed checkerboard in one pose, through the lens.

    The board as :func:`beamwall.synth_camera.render_boards` draws it (reflectance 0.08 black,
    0.85 white, a white margin of one square, background 0.45), projected onto the padded
    ideal canvas by its plane's homography ``K [r1 r2 t]`` (``cv2.warpPerspective`` at
    ``supersample`` times the resolution, then area-averaged), then the lens and the sensor.
    """
    cols, rows = BOARD_INNER_CORNERS
    sq = BOARD_SQUARE_MM
    w_mm, h_mm = (cols + 3) * sq, (rows + 3) * sq
    s = texture_px_per_mm
    tw, th = int(round(w_mm * s)), int(round(h_mm * s))
    bx = (np.arange(tw) + 0.5) / s
    by = (np.arange(th) + 0.5) / s
    inner_x = (bx >= sq) & (bx < w_mm - sq)
    inner_y = (by >= sq) & (by < h_mm - sq)
    parity = (np.floor(by / sq)[:, None] + np.floor(bx / sq)[None, :]) % 2 == 0
    texture = np.where(inner_y[:, None] & inner_x[None, :] & parity, 0.08, 0.85)
    rot = cv2.Rodrigues(np.radians(np.asarray(view.tilt_deg, np.float64)).reshape(3, 1))[0]
    centre = np.array([view.shift_mm[0], view.shift_mm[1], view.distance_mm])
    origin = centre - rot @ np.array([w_mm / 2, h_mm / 2, 0.0])
    k = synth.camera_matrix(lens.padded)
    board_to_px = k @ np.column_stack([rot[:, 0], rot[:, 1], origin])
    tex_to_board = np.array([[1 / s, 0, 0.5 / s], [0, 1 / s, 0.5 / s], [0, 0, 1]])
    q = supersample
    to_canvas = np.array([[q, 0, (q - 1) / 2], [0, q, (q - 1) / 2], [0, 0, 1]])
    m = to_canvas @ board_to_px @ tex_to_board
    w, h = lens.padded.width_px, lens.padded.height_px
    big = cv2.warpPerspective(texture.astype(np.float32), m, (w * q, h * q),
                              flags=cv2.INTER_LINEAR, borderMode=cv2.BORDER_CONSTANT,
                              borderValue=0.45)
    ideal = cv2.resize(big, (w, h), interpolation=cv2.INTER_AREA) * 0.8
    sig = lens.apply(ideal)
    grey = synth_camera.expose(sig, sensor, output="tone", tone=lens.camera.tone, seed=seed)
    return np.repeat(grey[:, :, None], 3, axis=2)


def _shot_exposures(shot: synth.DemoShot) -> tuple[Exposure, ...]:
    """The exposures the photographer takes of a shot.

    Those of the scenario, plus, for a single exposure of a narrow beam (field under
    :data:`SPOT_FIELD_DEG`), a second one :data:`SPOT_BRACKET_FACTOR` times longer: exposed
    for its hotspot, a spot leaves the rest of the wall in the JPEG's lowest codes, and that
    noise, multiplied by the lens falloff and 1/cos^3 at the frame's far corners, reaches the
    10 % level there (common practice, no source: bracket a spot's far field).
    """
    if len(shot.exposures) > 1 or shot.truth.field_angle_deg >= SPOT_FIELD_DEG:
        return shot.exposures
    first = shot.exposures[0]
    longer = synth.nominal_shutter_s(SPOT_BRACKET_FACTOR * first.exposure_s)
    return (first, replace(first, exposure_s=longer))


# --------------------------------------------------------------------------------------------
# TOML


def _toml_str(s: str) -> str:
    return '"' + s.replace("\\", "\\\\").replace('"', '\\"') + '"'


def _names(names: list[str]) -> str:
    return "[" + ", ".join(_toml_str(n) for n in names) + "]"


def _wall_toml(demo: synth.DemoScenario, markers_mm: Mapping[int, Any],
               camera: synth_camera.CameraModel) -> str:
    clicked = synth_camera.photo_wall_to_pixel(demo.camera, camera, demo.wall_points_mm)
    rows = "\n".join(f"#   [{px:.2f}, {py:.2f}, {wx:.1f}, {wy:.1f}],"
                     for (px, py), (wx, wy) in zip(clicked, demo.wall_points_mm))
    return (
        "[wall]\n"
        "# Printed markers (beamwall target), taped upright; their centres measured with a\n"
        "# tape from one origin (mm, x right, y up, seen from the torch). setup.jpg is the\n"
        "# lit room from the tripod of the beam photos.\n"
        'setup_image = "setup.jpg"\n'
        f"marker_size_mm = {MARKER_SIZE_MM}\n"
        f"{synth_setup.markers_mm_toml(markers_mm)}\n"
        "# Alternative without markers: tape marks typed in as [pixel x, pixel y, wall x mm,\n"
        "# wall y mm], where they appear in the photos (delete the three keys above):\n"
        f"# points = [\n{rows}\n# ]\n"
    )


def _camera_toml(demo: synth.DemoScenario, profile_json: str) -> str:
    return (
        "[camera]\n"
        f"encoding = {_toml_str(demo.encoding)}\n"
        f"profile = {_toml_str(profile_json)}\n"
    )


# --------------------------------------------------------------------------------------------


def write_demo(
    folder: Path,
    *,
    seed: int = 1,
    calibration_json: str = "calibration/demo-camera.json",
    profile_json: str = "calibration/demo-camera.profile.json",
) -> WrittenDemo:
    """Render the demo scenario into ``folder``.

    Parameters
    ----------
    folder : Path
        Created if missing; existing files of the same names are overwritten.
    seed : int, keyword-only
        Added to each photo's own noise seed.
    calibration_json : str, keyword-only
        The session's ``[calibration] file``, relative to the folder.
    profile_json : str, keyword-only
        ``[camera] profile`` of the session and the calibration session, relative to the
        folder (``beamwall profile profile.toml -o`` that file makes it).

    Returns
    -------
    WrittenDemo
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    demo = synth.demo_scenario()
    pose = demo.camera
    sensor = demo.sensor
    lens = _lens(pose, DEMO_CAMERA)
    markers_mm = synth_setup.marker_layout_mm(pose, ids=MARKER_IDS,
                                              inset_fraction=MARKER_INSET_FRACTION)

    # The camera profile: flat-field and checkerboard photos.
    flats = []
    for i in range(2):
        name = f"profile/flat_{i + 1}.jpg"
        _write(folder / name, _flat_photo(lens, sensor, seed=seed + 300 + i), PROFILE_EXPOSURE,
               pose, quality=PROFILE_JPEG_QUALITY)
        flats.append(name)
    boards = []
    for i, view in enumerate(BOARD_VIEWS):
        name = f"profile/board_{i + 1:02d}.jpg"
        _write(folder / name, _board_photo(lens, view, sensor, seed=seed + 400 + i),
               PROFILE_EXPOSURE, pose, quality=PROFILE_JPEG_QUALITY)
        boards.append(name)
    profile_toml = folder / "profile.toml"
    profile_toml.write_text(
        f"title = {_toml_str('The demo camera and its lens (fictional)')}\n\n"
        "[camera]\n"
        'encoding = "srgb"    # standard JPEGs: no [response] bracket needed\n\n'
        "[flat_field]         # a white surface, evenly lit, filling the frame\n"
        f"images = {_names(flats)}\n\n"
        "[distortion]         # a printed checkerboard, flat on a board, in varied poses\n"
        f"images = [\n" + "".join(f"  {_toml_str(n)},\n" for n in boards) + "]\n"
        f"inner_corners = [{BOARD_INNER_CORNERS[0]}, {BOARD_INNER_CORNERS[1]}]\n"
        f"square_mm = {BOARD_SQUARE_MM}\n",
        encoding="utf-8",
    )

    # The setup photo with the markers.
    setup, setup_exp = _setup_photo(lens, sensor, markers_mm, seed=seed + 500)
    _write(folder / "setup.jpg", setup, setup_exp, pose)

    wall = _wall_toml(demo, markers_mm, DEMO_CAMERA)
    camera = _camera_toml(demo, profile_json)

    # Reference lamp (calibration session).
    ref = demo.reference
    lamp_names = []
    for i, exp in enumerate(ref.exposures):
        name = f"lamp_{i + 1}.jpg" if len(ref.exposures) > 1 else "lamp.jpg"
        _write(folder / name, _photo(lens, ref.scene, exp, seed=ref.seed + seed + i), exp, pose)
        lamp_names.append(name)
    _write(folder / "lamp_dark.jpg",
           _photo(lens, ref.scene, ref.exposures[0], seed=ref.seed + seed + 50, beam_on=False),
           ref.exposures[0], pose)
    cal_toml = folder / "calibration.toml"
    cal_toml.write_text(
        f"title = {_toml_str('Reference lamp for the demo camera (fictional)')}\n\n"
        f"{wall}\n{camera}\n"
        "[reference]\n"
        f"images = {_names(lamp_names)}\n"
        'dark = "lamp_dark.jpg"\n'
        f"intensity_cd = {ref.intensity_cd}\n"
        f"intensity_sigma_cd = {ref.intensity_sigma_cd}\n"
        f"distance_m = {ref.distance_m}\n"
        f"distance_sigma_m = {ref.distance_sigma_m}\n"
        f"axis_mm = [{ref.axis_mm[0]}, {ref.axis_mm[1]}]\n"
        f"cct_k = {ref.cct_k}\n",
        encoding="utf-8",
    )

    shot_blocks = []
    truths: dict[str, Any] = {}
    for shot in demo.shots:
        base = _slug(shot.label)
        exposures = _shot_exposures(shot)
        names, darks = [], []
        for i, exp in enumerate(exposures):
            bracket = len(exposures) > 1
            name = f"{base}_{i + 1}.jpg" if bracket else f"{base}.jpg"
            _write(folder / name, _photo(lens, shot.scene, exp, seed=shot.seed + seed + 7 * i),
                   exp, pose)
            names.append(name)
            # A dark frame at each exposure of a bracket: the room's faint light, which
            # the longer exposure records, is then subtracted from it too.
            dark = f"{base}_dark_{i + 1}.jpg" if bracket else f"{base}_dark.jpg"
            _write(folder / dark,
                   _photo(lens, shot.scene, exp, seed=shot.seed + seed + 60 + 7 * i,
                          beam_on=False),
                   exp, pose)
            darks.append(dark)
        lines = [
            "[[shot]]",
            f"label = {_toml_str(shot.label)}",
            f"images = {_names(names)}",
            f"dark = {_names(darks) if len(darks) > 1 else _toml_str(darks[0])}",
            f"zoom = {_toml_str(shot.zoom)}",
            f"mode = {_toml_str(shot.mode)}",
        ]
        # No source_cct_k: the renderer works in RGB with colours of equal luminance, so it
        # simulates no spectral mismatch for the correction to remove.
        for key in ("claimed_lm", "claimed_cd", "claimed_throw_m"):
            v = getattr(shot, key)
            if v is not None:
                lines.append(f"{key} = {v:g}")
        if shot.electrical is not None:
            el = shot.electrical
            lines += [
                "",
                "[shot.electrical]",
                f"led_volts = {el.led_volts}",
                f"sense_volts = {el.sense_volts}",
                f"sense_ohms = {el.sense_ohms}",
                f"efficacy_lm_per_w = [{el.efficacy_lm_per_w[0]}, {el.efficacy_lm_per_w[1]}]",
            ]
        shot_blocks.append("\n".join(lines))
        truths[shot.label] = shot.truth

    el = demo.electrical
    session_toml = folder / "session.toml"
    session_toml.write_text(
        f"title = {_toml_str(demo.title)}\n\n"
        "[rig]\n"
        f"distance_m = {demo.distance_m}\n"
        "distance_sigma_m = 0.005\n\n"
        f"{wall}\n{camera}\n"
        "[calibration]\n"
        f"file = {_toml_str(calibration_json)}\n\n"
        "[electrical]\n"
        f"led_volts = {el.led_volts}\n"
        f"sense_volts = {el.sense_volts}\n"
        f"sense_ohms = {el.sense_ohms}\n"
        f"efficacy_lm_per_w = [{el.efficacy_lm_per_w[0]}, {el.efficacy_lm_per_w[1]}]\n\n"
        + "\n\n".join(shot_blocks)
        + "\n",
        encoding="utf-8",
    )
    return WrittenDemo(
        folder=folder,
        session_toml=session_toml,
        calibration_toml=cal_toml,
        calibration_json=(folder / calibration_json),
        truth=truths,
        profile_toml=profile_toml,
        profile_json=(folder / profile_json),
        markers_mm=dict(markers_mm),
        distortion=synth_camera.lens_distortion(pose, DEMO_CAMERA),
    )


# --------------------------------------------------------------------------------------------
# Against the truth


def truth_errors(result: Any, truth: Mapping[str, Any]) -> dict[str, dict[str, float | None]]:
    """Relative error of each measured figure against the renderer's truth, per shot.

    Parameters
    ----------
    result : beamwall.results.SessionResult
    truth : mapping of shot label to beamwall.synth.Truth

    Returns
    -------
    dict of label to dict of figure to float or None
        Keys ``beam``, ``field``, ``peak``, ``throw``, ``flux`` (the flux in the measured
        cone against the true flux in that cone); ``(measured - true) / true``, None when
        a figure was not measured. Shots without a truth are left out.
    """
    out: dict[str, dict[str, float | None]] = {}

    def rel(measured: float | None, true: float | None) -> float | None:
        if measured is None or true is None or not math.isfinite(true) or true == 0:
            return None
        return float((measured - true) / true)

    for s in result.shots:
        t = truth.get(s.label)
        if t is None:
            continue
        flux_true = (
            t.flux_in_cone_lm(s.flux_half_angle_deg) if s.flux_half_angle_deg else None
        )
        out[s.label] = {
            "beam": rel(s.beam_angle_deg, t.beam_angle_deg),
            "field": rel(s.field_angle_deg, t.field_angle_deg),
            "peak": rel(s.peak_intensity_cd, t.peak_intensity_cd),
            "throw": rel(s.throw_m, t.throw_m),
            "flux": rel(s.flux_lm, flux_true),
        }
    return out


def outside_tolerance(errors: Mapping[str, Mapping[str, float | None]]) -> tuple[str, ...]:
    """Figures missing or outside :data:`TOLERANCES`, as ``"label: figure +x.x %"`` strings.

    Examples
    --------
    >>> outside_tolerance({"a": {"beam": 0.01, "field": -0.05, "peak": None, "throw": 0.0,
    ...                          "flux": 0.0}})
    ('a: field -5.0 %', 'a: peak not measured')
    """
    bad = []
    for label, errs in errors.items():
        for key, tol in TOLERANCES.items():
            e = errs.get(key)
            if e is None:
                bad.append(f"{label}: {key} not measured")
            elif not abs(e) <= tol:
                bad.append(f"{label}: {key} {100 * e:+.1f} %")
    return tuple(bad)


def format_truth_comparison(result: Any, truth: Mapping[str, Any]) -> str:
    """Measured against true figures, per shot, as a plain-text table (percent errors)."""
    rows = [("shot", "beam", "field", "peak", "throw", "flux (cone)")]

    def pct(e: float | None) -> str:
        return "-" if e is None else f"{100 * e:+.1f} %"

    for label, e in truth_errors(result, truth).items():
        rows.append((label, pct(e["beam"]), pct(e["field"]), pct(e["peak"]), pct(e["throw"]),
                     pct(e["flux"])))
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    return "\n".join(
        "  ".join([r[0].ljust(widths[0])] + [c.rjust(w) for c, w in zip(r[1:], widths[1:])])
        for r in rows
    )
