"""Renderer additions for camera fidelity: tone curves, vignetting, lens distortion, raw mosaics.

Builds on :mod:`beamwall.synth` (its noiseless focal-plane signal, :func:`synth.render_signal`)
and adds what a real camera does around it, in this order:

1. lens distortion: the photo's pixel (u, v) shows the ray of the ideal (pinhole) pixel
   ``undistort(u, v)`` in OpenCV's model [OCVCAL]_ with the pose's camera matrix; the ideal
   signal is rendered on a padded canvas and sampled there (bilinear);
2. vignetting: the signal times ``1 + sum_k c_k rho^(2k)``, rho the distance from the image
   centre over half the diagonal (an invented lens; the natural cos^4 falloff is already in
   the ideal signal);
3. the sensor, as :func:`synth.render`: Poisson shot noise, Gaussian read noise, black level,
   gain, rounding, clipping at the white level;
4. output: ``"tone"``: 8-bit codes through a tone curve (``"srgb"`` [IEC]_ or ``"filmic"``, an
   S-curve of our own design); ``"linear"``: 16-bit digital numbers; ``"raw"``: a Bayer
   mosaic (RGGB), each photosite the digital number of its colour's channel.

Pure: arrays and frozen dataclasses; files are written with :func:`beamwall.images.write_dng`
and :func:`beamwall.images.write_image`.

References
----------
.. [OCVCAL] OpenCV documentation, "Camera Calibration and 3D Reconstruction" (the pinhole model
   with radial and tangential distortion).
.. [IEC] IEC 61966-2-1:1999, sRGB encoding curve.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import cv2
import numpy as np

from beamwall import synth
from beamwall.errors import InputError
from beamwall.linear import Exposure
from beamwall.profile import LensDistortion, distort_points, undistort_points

__all__ = [
    "TONE_CURVES",
    "CameraModel",
    "PHONE_WIDE_DISTORTION",
    "tone_encode",
    "tone_decode",
    "lens_distortion",
    "vignetting_gain",
    "photo_wall_to_pixel",
    "camera_signal",
    "expose",
    "render_camera",
    "flat_field_signal",
    "BoardView",
    "render_boards",
]

TONE_CURVES: tuple[str, ...] = ("srgb", "filmic")

#: Barrel distortion of a phone's wide lens, (k1, k2, p1, p2, k3) (invented for the demo: some
#: 4 % at the corners of a 4:3 frame at f = 0.8 x width; typical in size, common practice, no
#: source).
PHONE_WIDE_DISTORTION: tuple[float, float, float, float, float] = (-0.12, 0.03, 0.0, 0.0, 0.0)

#: Strength of the filmic S-curve (our design), in (0, 1).
_FILMIC_A = 0.55


@dataclass(frozen=True)
class CameraModel:
    """What a camera does beyond the pinhole and the sensor.

    Parameters
    ----------
    tone : {"srgb", "filmic"}
        Tone curve of its 8-bit output.
    vignetting : tuple of float
        c_1.. of ``1 + sum c_k rho^(2k)`` (rho: distance from the image centre over half the
        diagonal); () none.
    distortion : (k1, k2, p1, p2, k3) or None
        OpenCV's model with the pose's camera matrix; None: a pinhole.
    make, model : str
        EXIF identity of its photos.
    """

    tone: str = "srgb"
    vignetting: tuple[float, ...] = ()
    distortion: tuple[float, float, float, float, float] | None = None
    make: str = "Synthetic"
    model: str = "Camera"

    def __post_init__(self) -> None:
        if self.tone not in TONE_CURVES:
            raise InputError(f"must be one of {TONE_CURVES}, got {self.tone!r}", field="tone")
        if self.distortion is not None and len(self.distortion) != 5:
            raise InputError("must be (k1, k2, p1, p2, k3)", field="distortion")


# --------------------------------------------------------------------------------------------
# Tone curves
# --------------------------------------------------------------------------------------------


def _filmic_from_gamma(p: np.ndarray) -> np.ndarray:
    return p - _FILMIC_A * np.sin(2 * math.pi * p) / (2 * math.pi)


def tone_encode(linear: np.typing.ArrayLike, tone: str) -> np.ndarray:
    """Encode linear values [0, 1] to [0, 1] with a tone curve.

    ``"srgb"``: the IEC 61966-2-1 encoding [IEC]_. ``"filmic"``: p = x^(1/2.2) then the
    S-curve s(p) = p - a sin(2 pi p) / (2 pi), a = 0.55 (our design: slope 1 - a at the ends,
    1 + a in the middle, strictly increasing).

    Examples
    --------
    >>> tone_encode([0.0, 1.0], "filmic").round(6).tolist()
    [0.0, 1.0]
    >>> round(float(tone_encode(0.5 ** 2.2, "filmic")), 6)
    0.5
    """
    x = np.clip(np.asarray(linear, dtype=np.float64), 0.0, 1.0)
    if tone == "srgb":
        return synth.srgb_encode(x)
    if tone == "filmic":
        return _filmic_from_gamma(x ** (1 / 2.2))
    raise InputError(f"must be one of {TONE_CURVES}, got {tone!r}", field="tone")


def tone_decode(encoded: np.typing.ArrayLike, tone: str) -> np.ndarray:
    """Inverse of :func:`tone_encode` (the filmic curve by bisection, to 1e-12).

    Examples
    --------
    >>> v = np.array([0.1, 0.5, 0.9])
    >>> bool(np.allclose(tone_encode(tone_decode(v, "filmic"), "filmic"), v))
    True
    """
    v = np.clip(np.asarray(encoded, dtype=np.float64), 0.0, 1.0)
    if tone == "srgb":
        return np.where(v <= 0.04045, v / 12.92, ((v + 0.055) / 1.055) ** 2.4)
    if tone != "filmic":
        raise InputError(f"must be one of {TONE_CURVES}, got {tone!r}", field="tone")
    lo, hi = np.zeros_like(v), np.ones_like(v)
    for _ in range(45):
        mid = 0.5 * (lo + hi)
        below = _filmic_from_gamma(mid) < v
        lo = np.where(below, mid, lo)
        hi = np.where(below, hi, mid)
    return (0.5 * (lo + hi)) ** 2.2


# --------------------------------------------------------------------------------------------
# Lens
# --------------------------------------------------------------------------------------------


def lens_distortion(pose: synth.CameraPose, camera: CameraModel) -> LensDistortion | None:
    """The true :class:`~beamwall.profile.LensDistortion` of a posed camera (None: pinhole)."""
    if camera.distortion is None:
        return None
    k = synth.camera_matrix(pose)
    return LensDistortion(camera_matrix=np.asarray(k, np.float64),
                          coefficients=np.asarray(camera.distortion, np.float64),
                          image_size_px=(pose.width_px, pose.height_px))


def vignetting_gain(shape: tuple[int, int], coefficients: Sequence[float]) -> np.ndarray:
    """``1 + sum c_k rho^(2k)`` on an (H, W) grid about the image centre, float64.

    Examples
    --------
    >>> vignetting_gain((1, 3), (-0.5,)).round(3).tolist()
    [[0.8, 1.0, 0.8]]
    """
    h, w = shape
    half_diag = 0.5 * math.hypot(w, h)
    x = (np.arange(w) - (w - 1) / 2) / half_diag
    y = (np.arange(h) - (h - 1) / 2) / half_diag
    rho2 = np.add.outer(y * y, x * x)
    out = np.ones_like(rho2)
    for i, c in enumerate(coefficients, start=1):
        out += c * rho2**i
    return out


def photo_wall_to_pixel(scene_or_pose: synth.Scene | synth.CameraPose, camera: CameraModel,
                        xy_mm: np.typing.ArrayLike) -> np.ndarray:
    """Where wall points appear in the (distorted) photo, px (what a user would click)."""
    pose = scene_or_pose.camera if isinstance(scene_or_pose, synth.Scene) else scene_or_pose
    ideal = synth.wall_to_pixel(pose, np.asarray(xy_mm, np.float64))
    dist = lens_distortion(pose, camera)
    return ideal if dist is None else distort_points(dist, ideal)


def _ideal_positions(pose: synth.CameraPose, dist: LensDistortion) -> np.ndarray:
    """(H, W, 2) ideal pixel position of each photo pixel."""
    yy, xx = np.mgrid[0:pose.height_px, 0:pose.width_px].astype(np.float64)
    pts = np.column_stack([xx.ravel(), yy.ravel()])
    return undistort_points(dist, pts).reshape(pose.height_px, pose.width_px, 2)


def _through_lens(render_ideal, pose: synth.CameraPose, camera: CameraModel) -> np.ndarray:
    """Apply distortion and vignetting to ``render_ideal(pose) -> (H, W[, C]) float``."""
    dist = lens_distortion(pose, camera)
    if dist is None:
        sig = np.asarray(render_ideal(pose), np.float32)
    else:
        ideal = _ideal_positions(pose, dist)
        pad = int(math.ceil(max(
            -ideal[..., 0].min(), ideal[..., 0].max() - (pose.width_px - 1),
            -ideal[..., 1].min(), ideal[..., 1].max() - (pose.height_px - 1), 0.0))) + 2
        big = replace(pose, width_px=pose.width_px + 2 * pad, height_px=pose.height_px + 2 * pad)
        canvas = np.asarray(render_ideal(big), np.float32)
        sig = cv2.remap(canvas, (ideal[..., 0] + pad).astype(np.float32),
                        (ideal[..., 1] + pad).astype(np.float32), cv2.INTER_LINEAR,
                        borderMode=cv2.BORDER_REPLICATE)
    if camera.vignetting:
        gain = vignetting_gain(sig.shape[:2], camera.vignetting).astype(np.float32)
        sig = sig * (gain[:, :, None] if sig.ndim == 3 else gain)
    return sig


def camera_signal(scene: synth.Scene, *, exposure: Exposure, camera: CameraModel,
                  beam_on: bool = True, supersample: int = 1) -> np.ndarray:
    """Noiseless focal-plane signal through the lens, (H, W, 3) float32, fraction of full scale.

    :func:`beamwall.synth.render_signal` on the ideal (padded) pose, then distortion and
    vignetting (module docstring).
    """
    def ideal(pose: synth.CameraPose) -> np.ndarray:
        return synth.render_signal(replace(scene, camera=pose), exposure=exposure,
                                   beam_on=beam_on, supersample=supersample)

    return _through_lens(ideal, scene.camera, camera)


def flat_field_signal(pose: synth.CameraPose, camera: CameraModel, *,
                      level: float = 0.5) -> np.ndarray:
    """Noiseless signal of an evenly lit surface (or a diffuser) filling the frame, (H, W, 3).

    The ideal image is ``level x cos^4`` of each ray's angle off the axis (the natural falloff,
    as :mod:`beamwall.synth` renders it), then distortion and vignetting.
    """
    def ideal(p: synth.CameraPose) -> np.ndarray:
        cx, cy = p.principal_point_px
        yy, xx = np.mgrid[0:p.height_px, 0:p.width_px].astype(np.float64)
        r2 = ((xx - cx) ** 2 + (yy - cy) ** 2) / p.focal_length_px**2
        g = level / (1.0 + r2) ** 2
        return np.repeat(g[:, :, None], 3, axis=2)

    return _through_lens(ideal, pose, camera)


# --------------------------------------------------------------------------------------------
# Sensor and output
# --------------------------------------------------------------------------------------------


def expose(signal: np.ndarray, sensor: synth.SensorModel, *, output: str, tone: str = "srgb",
           seed: int | None = 0, noise: bool = True, gain: float = 1.0) -> np.ndarray:
    """Turn a focal-plane signal (H, W, 3) into what the camera stores.

    Parameters
    ----------
    signal : (H, W, 3) float
        Fraction of full scale per channel.
    sensor : beamwall.synth.SensorModel
    output : {"tone", "linear", "raw"}
        8-bit tone-mapped RGB, 16-bit linear RGB DN, or an RGGB mosaic (H, W) uint16 DN.
    tone : str
        Tone curve for ``"tone"``.
    seed : int or None
    noise : bool
        Shot and read noise (as :func:`beamwall.synth.render`).
    gain : float
        Extra brightening after the sensor (a camera's auto exposure or HDR left on; 1: none).

    Examples
    --------
    >>> s = np.full((2, 2, 3), 0.25, np.float32)
    >>> expose(s, synth.SensorModel(), output="raw", noise=False).tolist()
    [[17152, 17152], [17152, 17152]]
    """
    if output not in ("tone", "linear", "raw"):
        raise InputError(f"must be 'tone', 'linear' or 'raw', got {output!r}", field="output")
    sig = np.asarray(signal, np.float64)
    if output == "raw":
        mosaic = np.empty(sig.shape[:2])
        mosaic[0::2, 0::2] = sig[0::2, 0::2, 0]
        mosaic[0::2, 1::2] = sig[0::2, 1::2, 1]
        mosaic[1::2, 0::2] = sig[1::2, 0::2, 1]
        mosaic[1::2, 1::2] = sig[1::2, 1::2, 2]
        sig = mosaic
    dn = synth.sensor_dn(sig, sensor, np.random.default_rng(seed), noise=noise, gain=gain)
    black, white = float(sensor.black_level_dn), float(sensor.white_level_dn)
    if output in ("raw", "linear"):
        return dn.astype(np.uint16)
    lin = np.clip((dn - black) / (white - black), 0.0, 1.0)
    return np.rint(255.0 * tone_encode(lin, tone)).astype(np.uint8)


def render_camera(scene: synth.Scene, *, exposure: Exposure, camera: CameraModel,
                  output: str = "tone", seed: int | None = 0, beam_on: bool = True,
                  supersample: int = 1, gain: float = 1.0) -> np.ndarray:
    """Render the photo this camera would store of the scene (see :func:`expose`)."""
    sig = camera_signal(scene, exposure=exposure, camera=camera, beam_on=beam_on,
                        supersample=supersample)
    return expose(sig, scene.sensor, output=output, tone=camera.tone, seed=seed, gain=gain)


# --------------------------------------------------------------------------------------------
# Checkerboard photos
# --------------------------------------------------------------------------------------------


def _rotation(rx_deg: float, ry_deg: float, rz_deg: float) -> np.ndarray:
    rvec = np.radians([rx_deg, ry_deg, rz_deg]).reshape(3, 1)
    return cv2.Rodrigues(rvec)[0]


@dataclass(frozen=True)
class BoardView:
    """One pose of the printed board.

    In front of the camera at ``distance_mm`` on its axis, moved by ``shift_mm`` (x right,
    y down in the camera's frame) and turned by ``tilt_deg`` (rotation vector components about
    x, y, z, degrees).
    """

    distance_mm: float
    tilt_deg: tuple[float, float, float] = (0.0, 0.0, 0.0)
    shift_mm: tuple[float, float] = (0.0, 0.0)


def render_boards(
    pose: synth.CameraPose,
    camera: CameraModel,
    views: Sequence[BoardView],
    *,
    inner_corners: tuple[int, int],
    square_mm: float,
    supersample: int = 2,
    seed: int = 0,
) -> list[np.ndarray]:
    """8-bit photos of a printed checkerboard (grey (H, W) uint8, the camera's tone curve).

    The board (``inner_corners`` + 1 squares each way, black and white, inside a white margin
    of one square) is placed as each :class:`BoardView` says; rays through ``supersample`` x
    ``supersample`` points of each photo pixel are traced back through the lens
    (:func:`~beamwall.profile.undistort_points`) to the board's plane. Brightness falls with
    the camera's vignetting; sensor noise as :func:`expose`, seed ``seed + i`` for view i.
    """
    k = synth.camera_matrix(pose)
    dist = lens_distortion(pose, camera)
    h, w = pose.height_px, pose.width_px
    offs = (np.arange(supersample) + 0.5) / supersample - 0.5
    cols, rows = inner_corners
    half = np.array([(cols + 3) * square_mm / 2.0, (rows + 3) * square_mm / 2.0])
    yy, xx = np.mgrid[0:h, 0:w].astype(np.float64)
    rays = []
    for oy in offs:
        for ox in offs:
            pts = np.column_stack([(xx + ox).ravel(), (yy + oy).ravel()])
            ideal = pts if dist is None else undistort_points(dist, pts)
            rays.append(np.column_stack([(ideal[:, 0] - k[0, 2]) / k[0, 0],
                                         (ideal[:, 1] - k[1, 2]) / k[1, 1],
                                         np.ones(len(pts))]))
    vign = vignetting_gain((h, w), camera.vignetting) if camera.vignetting else 1.0
    photos = []
    for i, view in enumerate(views):
        rot = _rotation(*view.tilt_deg)
        centre = np.array([view.shift_mm[0], view.shift_mm[1], view.distance_mm])
        normal = rot[:, 2]
        acc = np.zeros(h * w)
        for ray in rays:
            s = (centre @ normal) / (ray @ normal)
            hit = ray * s[:, None] - centre
            bx, by = hit @ rot[:, 0] + half[0], hit @ rot[:, 1] + half[1]
            on = (s > 0) & (bx >= 0) & (bx < 2 * half[0]) & (by >= 0) & (by < 2 * half[1])
            inner = ((bx >= square_mm) & (bx < 2 * half[0] - square_mm)
                     & (by >= square_mm) & (by < 2 * half[1] - square_mm))
            parity = (np.floor(bx / square_mm) + np.floor(by / square_mm)) % 2 == 0
            acc += np.where(on, np.where(inner & parity, 0.08, 0.85), 0.45)
        sig = (acc.reshape(h, w) / len(rays) * 0.8) * vign
        sig3 = np.repeat(sig[:, :, None], 3, axis=2)
        photos.append(expose(sig3, synth.SensorModel(), output="tone", tone=camera.tone,
                             seed=seed + i)[:, :, 1])
    return photos
