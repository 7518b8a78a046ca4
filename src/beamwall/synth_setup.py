r"""Rendered setup photos: the printed markers taped on a lit wall, seen by the tripod camera.

The wall-mapping path that uses printed fiducial markers needs a photo of the wall with the
room lit and the marker sheets taped on it, taken from the tripod position of the beam photos.
This room renders that photo for the demo and the tests, with the same camera model and
sensor model as :mod:`beamwall.synth` (pure: arrays and small dataclasses, no files).

Geometry (the contract's frames): a marker with centre ``(cx, cy)`` mm and side ``s`` mm is
taped upright, its edges parallel to the wall's x and y axes; its bitmap's top row is at wall
``y = cy + s/2`` (the wall's y is up). Each marker is the ArUco 4x4 pattern of OpenCV's
``DICT_4X4_50`` with its one-cell black border: 6 x 6 cells of side ``s / 6``
[OCV-ARUCO]_. Around it lies a white sheet (the paper's margin), ``sheet_margin_mm`` wide.

Radiometry: the room light gives an even illuminance ``room_lx`` on the wall; each wall point
has a reflectance (wall paint, paper, ink), Lambertian, so its luminance is
``L = rho E / pi`` [Rea]_; the camera adds the natural cos^4 falloff, shot and read noise and
the encoding exactly as :func:`beamwall.synth.render` does. Each pixel's reflectance is the
mean over ``supersample`` x ``supersample`` rays cast through the pixel onto the wall
(anti-aliasing by supersampling).

References
----------
.. [OCV-ARUCO] OpenCV documentation, "Detection of ArUco Markers" (objdetect module):
   ``cv2.aruco.getPredefinedDictionary(DICT_4X4_50)``, ``generateImageMarker`` (the marker
   with its black border, one cell per pixel at ``sidePixels = 6``).
.. [Rea] M. S. Rea (ed.), *The IESNA Lighting Handbook*, 9th edition, IESNA (2000), chapter 2:
   Lambertian luminance L = rho E / pi.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from functools import lru_cache

import cv2
import numpy as np

from beamwall import synth
from beamwall.errors import InputError
from beamwall.linear import Exposure

__all__ = [
    "MARKER_CELLS",
    "marker_bitmap",
    "reflectance_map",
    "render_setup_photo",
    "setup_exposure",
    "marker_layout_mm",
    "markers_mm_toml",
]

#: Cells along a 4x4 ArUco marker's side, its one-cell black border included [OCV-ARUCO]_.
MARKER_CELLS: int = 6

#: Reflectances of the rendered materials (invented for the demo): matte white paint, office
#: paper, laser-printer black.
WALL_REFLECTANCE: float = 0.8
PAPER_REFLECTANCE: float = 0.88
INK_REFLECTANCE: float = 0.04

_CHUNK_PIXELS = 1 << 18


@lru_cache(maxsize=64)
def marker_bitmap(marker_id: int) -> np.ndarray:
    """Return the 6 x 6 cell pattern of a 4x4_50 marker, True where the paper stays white.

    Parameters
    ----------
    marker_id : int
        0 to 49.

    Returns
    -------
    (6, 6) ndarray of bool
        Row 0 is the marker's top (wall y largest), column 0 its left [OCV-ARUCO]_.

    Examples
    --------
    >>> b = marker_bitmap(0)
    >>> b.shape, bool(b[0].any()), bool(b[:, 0].any())   # the border is black
    ((6, 6), False, False)
    """
    if int(marker_id) != marker_id or not 0 <= marker_id < 50:
        raise InputError(f"must be an integer 0 to 49, got {marker_id!r}", field="marker_id")
    d = cv2.aruco.getPredefinedDictionary(cv2.aruco.DICT_4X4_50)
    img = cv2.aruco.generateImageMarker(d, int(marker_id), MARKER_CELLS)
    out = img > 127
    out.setflags(write=False)
    return out


def _check_markers(markers_mm: Mapping[int, Sequence[float]], marker_size_mm: float) -> None:
    if not (math.isfinite(marker_size_mm) and marker_size_mm > 0):
        raise InputError(f"must be positive, got {marker_size_mm!r}", field="marker_size_mm")
    for k, xy in markers_mm.items():
        marker_bitmap(int(k))
        if len(xy) != 2 or not all(math.isfinite(float(v)) for v in xy):
            raise InputError(f"marker {k}: must be [x_mm, y_mm], got {xy!r}", field="markers_mm")


def reflectance_map(
    xy_mm: np.ndarray,
    *,
    markers_mm: Mapping[int, Sequence[float]],
    marker_size_mm: float,
    sheet_margin_mm: float | None = None,
    wall_reflectance: float = WALL_REFLECTANCE,
    paper_reflectance: float = PAPER_REFLECTANCE,
    ink_reflectance: float = INK_REFLECTANCE,
) -> np.ndarray:
    """Reflectance of wall points: paint, a sheet's white paper, or a marker's black cells.

    Parameters
    ----------
    xy_mm : (..., 2) ndarray
        Wall positions, mm (x right, y up); NaN gives the wall's reflectance.
    markers_mm : mapping of int to (x_mm, y_mm)
        Marker centres by id.
    marker_size_mm : float
        Side of each marker (its black border included), mm.
    sheet_margin_mm : float, optional
        White paper around each marker, mm (default: a quarter of the marker's side).
    wall_reflectance, paper_reflectance, ink_reflectance : float
        In (0, 1].

    Returns
    -------
    (...) ndarray of float64

    Examples
    --------
    >>> r = reflectance_map(np.array([[0.0, 0.0], [-55.0, 55.0], [0.0, 70.0], [500.0, 0.0]]),
    ...                     markers_mm={0: (0.0, 0.0)}, marker_size_mm=120.0)
    >>> r.tolist()   # centre cell of marker 0 is white; its corner is black; paper; wall
    [0.88, 0.04, 0.88, 0.8]
    """
    _check_markers(markers_mm, marker_size_mm)
    s = float(marker_size_mm)
    margin = 0.25 * s if sheet_margin_mm is None else float(sheet_margin_mm)
    p = np.asarray(xy_mm, dtype=np.float64)
    x, y = p[..., 0], p[..., 1]
    out = np.full(x.shape, float(wall_reflectance))
    for mid, (cx, cy) in markers_mm.items():
        u = (x - (float(cx) - s / 2)) / s          # 0..1 left to right
        v = ((float(cy) + s / 2) - y) / s          # 0..1 top to bottom (wall y up)
        half_sheet = 0.5 + margin / s
        on_sheet = (np.abs(u - 0.5) <= half_sheet) & (np.abs(v - 0.5) <= half_sheet)
        out = np.where(on_sheet, paper_reflectance, out)
        inside = (u >= 0) & (u < 1) & (v >= 0) & (v < 1)
        if not inside.any():
            continue
        bits = marker_bitmap(int(mid))
        col = np.clip(np.floor(u * MARKER_CELLS), 0, MARKER_CELLS - 1).astype(np.intp)
        row = np.clip(np.floor(v * MARKER_CELLS), 0, MARKER_CELLS - 1).astype(np.intp)
        white = bits[row, col]
        out = np.where(inside, np.where(white, paper_reflectance, ink_reflectance), out)
    return out


def _pixel_reflectance(
    pose: synth.CameraPose,
    *,
    markers_mm: Mapping[int, Sequence[float]],
    marker_size_mm: float,
    supersample: int,
    **kw: float | None,
) -> np.ndarray:
    """(H, W) mean reflectance seen by each pixel, supersampled."""
    h, w = pose.height_px, pose.width_px
    out = np.empty((h, w))
    offsets = (np.arange(supersample) + 0.5) / supersample - 0.5
    rows_per = max(1, _CHUNK_PIXELS // (w * supersample * supersample))
    cols = np.arange(w, dtype=np.float64)
    for r0 in range(0, h, rows_per):
        r1 = min(h, r0 + rows_per)
        rows = np.arange(r0, r1, dtype=np.float64)
        acc = np.zeros((r1 - r0, w))
        for oy in offsets:
            for ox in offsets:
                uu, vv = np.meshgrid(cols + ox, rows + oy)
                xy = synth.pixel_to_wall(pose, np.column_stack([uu.ravel(), vv.ravel()]))
                acc += reflectance_map(
                    xy.reshape(r1 - r0, w, 2), markers_mm=markers_mm,
                    marker_size_mm=marker_size_mm, **kw,  # type: ignore[arg-type]
                )
        out[r0:r1] = acc / supersample**2
    return out


def setup_exposure(
    pose: synth.CameraPose,
    *,
    room_lx: float,
    sensor: synth.SensorModel | None = None,
    f_number: float = 4.0,
    iso: float = 100.0,
    white_fraction: float = 0.7,
) -> Exposure:
    """An exposure that puts white paper at the image centre near ``white_fraction`` of full scale.

    Parameters
    ----------
    pose : CameraPose
    room_lx : float
        Illuminance of the room light on the wall, lx.
    sensor : SensorModel, optional
    f_number, iso : float
    white_fraction : float
        Target signal of the paper, fraction of full scale.

    Returns
    -------
    Exposure
        With a marked shutter time (:func:`beamwall.synth.nominal_shutter_s`).

    Examples
    --------
    >>> pose = synth.CameraPose(position_m=(0.0, 0.0, 2.0), width_px=8, height_px=6)
    >>> e = setup_exposure(pose, room_lx=200.0)
    >>> e.f_number, e.iso, 0.1 < e.exposure_s < 1.0
    (4.0, 100.0, True)
    """
    sensor = sensor or synth.SensorModel()
    if not (math.isfinite(room_lx) and room_lx > 0):
        raise InputError(f"must be positive, got {room_lx!r}", field="room_lx")
    per_s = sensor.signal_per_lux_s * PAPER_REFLECTANCE * room_lx / math.pi * (iso / 100) / (
        f_number**2)
    return Exposure(synth.nominal_shutter_s(white_fraction / per_s), float(f_number), float(iso))


def render_setup_photo(
    pose: synth.CameraPose,
    *,
    markers_mm: Mapping[int, Sequence[float]],
    marker_size_mm: float,
    room_lx: float = 150.0,
    exposure: Exposure | None = None,
    sensor: synth.SensorModel | None = None,
    encoding: str = "srgb",
    seed: int | None = 0,
    supersample: int = 3,
    noise: bool = True,
    grey: bool = False,
    beam_scene: synth.Scene | None = None,
    sheet_margin_mm: float | None = None,
) -> np.ndarray:
    """Render the lit-room photo of the wall with the marker sheets taped on it.

    Parameters
    ----------
    pose : CameraPose
        The tripod camera (the same as the beam photos').
    markers_mm : mapping of int to (x_mm, y_mm)
        Marker centres by id (0 to 49), mm.
    marker_size_mm : float
        Side of each marker, black border included, mm.
    room_lx : float
        Even illuminance of the room light on the wall, lx (0 for a dark room).
    exposure : Exposure, optional
        Default: :func:`setup_exposure` (paper near 70 % of full scale).
    sensor : SensorModel, optional
    encoding : {"srgb", "linear"}
        uint8 sRGB or uint16 linear digital numbers, as :func:`beamwall.synth.render`.
    seed : int or None
        Noise seed.
    supersample : int
        Rays per pixel along each axis for the reflectance (anti-aliasing).
    noise : bool
        False leaves out shot and read noise.
    grey : bool
        One channel, (H, W).
    beam_scene : Scene, optional
        Also light the wall with this scene's beam (and its ambient light), so that the
        markers show in a beam photo (a photo taken with the sheets left on the wall). Its
        camera must be ``pose``.
    sheet_margin_mm : float, optional
        As for :func:`reflectance_map`.

    Returns
    -------
    (H, W, 3) or (H, W) ndarray, uint8 or uint16

    Raises
    ------
    InputError
        Bad marker ids, size, encoding, or a beam scene with another camera.

    Examples
    --------
    >>> pose = synth.CameraPose(position_m=(0.0, 0.0, 1.0), focal_length_px=100.0,
    ...                         width_px=40, height_px=30)
    >>> img = render_setup_photo(pose, markers_mm={0: (0.0, 0.0)}, marker_size_mm=120.0)
    >>> img.shape, img.dtype.name, int(img[1, 1, 1]) > int(img[15, 15, 1])
    ((30, 40, 3), 'uint8', True)
    """
    if encoding not in ("srgb", "linear"):
        raise InputError(f"must be 'srgb' or 'linear', got {encoding!r}", field="encoding")
    if int(supersample) != supersample or supersample < 1:
        raise InputError(f"must be a positive integer, got {supersample!r}", field="supersample")
    if room_lx < 0 or not math.isfinite(room_lx):
        raise InputError(f"must be non-negative, got {room_lx!r}", field="room_lx")
    sensor = sensor or (beam_scene.sensor if beam_scene is not None else synth.SensorModel())
    if exposure is None:
        exposure = setup_exposure(pose, room_lx=max(room_lx, 1e-3), sensor=sensor)
    refl = _pixel_reflectance(pose, markers_mm=markers_mm, marker_size_mm=marker_size_mm,
                              supersample=int(supersample), sheet_margin_mm=sheet_margin_mm)
    # Luminance per unit reflectance and its falloff: a uniform grey scene lit by room_lx.
    room = synth.Scene(beam=synth.UniformSource(uniform_cd=1.0), distance_m=1.0, camera=pose,
                       sensor=sensor, reflectance=1.0, ambient_lx=room_lx)
    sig = synth.render_signal(room, exposure=exposure, beam_on=False, grey=grey)
    if sig.ndim == 2:
        sig = sig[:, :, None]
    sig = sig.astype(np.float64) * refl[:, :, None]
    if beam_scene is not None:
        if beam_scene.camera != pose:
            raise InputError("the beam scene's camera must be the setup photo's pose",
                             field="beam_scene")
        lit = replace_reflectance(beam_scene)
        beam_sig = synth.render_signal(lit, exposure=exposure, beam_on=True, grey=grey)
        if beam_sig.ndim == 2:
            beam_sig = beam_sig[:, :, None]
        sig = sig + beam_sig.astype(np.float64) * refl[:, :, None]
    return _sensor_output(sig, sensor, encoding=encoding, seed=seed, noise=noise, grey=grey)


def replace_reflectance(scene: synth.Scene) -> synth.Scene:
    """The scene with unit reflectance (the per-pixel reflectance is applied afterwards)."""
    from dataclasses import replace

    return replace(scene, reflectance=1.0)


def _sensor_output(sig: np.ndarray, sensor: synth.SensorModel, *, encoding: str,
                   seed: int | None, noise: bool, grey: bool) -> np.ndarray:
    """Electrons, noise, digital numbers and encoding, as :func:`beamwall.synth.render`."""
    dn = synth.sensor_dn(sig, sensor, np.random.default_rng(seed), noise=noise)
    out = synth.encode_dn(dn, sensor, encoding)
    return out[:, :, 0] if grey else out


def marker_layout_mm(
    pose: synth.CameraPose,
    *,
    ids: Sequence[int] = (0, 1, 2, 3),
    inset_fraction: float = 0.14,
    round_mm: float = 10.0,
) -> dict[int, tuple[float, float]]:
    """Place markers near the photo's corners (then its edges' middles) and return their centres.

    Parameters
    ----------
    pose : CameraPose
    ids : sequence of int
        Marker ids, 3 to 8 of them; the first four go near the corners (top-left, top-right,
        bottom-right, bottom-left of the photo), the next ones at the middles of the top,
        right, bottom and left edges.
    inset_fraction : float
        Distance of each centre from the photo's edges, fraction of its width and height.
    round_mm : float
        Centres rounded to this step, as a user would tape them at round tape readings.

    Returns
    -------
    dict of int to (x_mm, y_mm)
        The session's ``markers_mm`` (keys as integers; see :func:`markers_mm_toml`).

    Examples
    --------
    >>> pose = synth.CameraPose(position_m=(0.0, 0.0, 2.0), focal_length_px=500.0,
    ...                         width_px=400, height_px=300)
    >>> marker_layout_mm(pose)
    {0: (-570.0, 430.0), 1: (570.0, 430.0), 2: (570.0, -430.0), 3: (-570.0, -430.0)}
    """
    if not 3 <= len(ids) <= 8:
        raise InputError(f"needs 3 to 8 ids, got {len(ids)}", field="ids")
    w, h = pose.width_px, pose.height_px
    a, b = inset_fraction, 1.0 - inset_fraction
    spots = [(a, a), (b, a), (b, b), (a, b), (0.5, a), (b, 0.5), (0.5, b), (a, 0.5)]
    px = np.array([[fx * (w - 1), fy * (h - 1)] for fx, fy in spots[: len(ids)]])
    mm = synth.pixel_to_wall(pose, px)
    mm = np.round(mm / round_mm) * round_mm
    return {int(i): (float(x) + 0.0, float(y) + 0.0) for i, (x, y) in zip(ids, mm)}


def markers_mm_toml(markers_mm: Mapping[int, Sequence[float]]) -> str:
    """The session's ``markers_mm`` line, as TOML.

    Examples
    --------
    >>> markers_mm_toml({0: (-600.0, 400.0), 1: (600.0, 400.0)})
    'markers_mm = { "0" = [-600.0, 400.0], "1" = [600.0, 400.0] }'
    """
    items = ", ".join(f'"{int(k)}" = [{float(x)!r}, {float(y)!r}]'
                      for k, (x, y) in markers_mm.items())
    return f"markers_mm = {{ {items} }}"
