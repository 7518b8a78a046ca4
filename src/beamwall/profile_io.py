"""Build a camera profile from the photos a profile TOML lists; read and write its JSON.

The profile's I/O room: it reads photos (:mod:`beamwall.images`) and files, and hands arrays
to the pure :mod:`beamwall.profile` room. The command layer (:mod:`beamwall.cli_profile`)
writes the JSON through a temporary file, so a failed run leaves nothing behind.
"""

from __future__ import annotations

import datetime as _dt
import json
from collections.abc import Sequence
from os import PathLike
from pathlib import Path
from typing import Any

import cv2
import numpy as np

from beamwall import __version__, linear
from beamwall import images as img
from beamwall.errors import BeamwallError, CalibrationError, InputError
from beamwall.profile import (
    CameraProfile,
    board_object_points,
    calibrate_distortion,
    check_profile_camera,
    find_board_corners,
    fit_flat_field,
    recover_response,
)
from beamwall.session import ProfileSession

__all__ = ["build_profile", "load_profile", "write_profile", "check_frame", "board_grey",
           "session_points_px"]


def _exposure(frame: img.Frame, camera: Any, override_s: float | None, file: str,
              where: str) -> linear.Exposure:
    t = override_s or frame.exposure_s or camera.exposure_s
    n = frame.f_number or camera.f_number or 1.0
    iso = frame.iso or camera.iso or 100.0
    if t is None:
        raise InputError(f"no exposure time for {frame.path.name}: the photo carries no EXIF "
                         f"value; give exposures_s in {where} or exposure_s in [camera]",
                         file=file, field=f"{where} exposures_s")
    return linear.Exposure(float(t), float(n), float(iso))


def board_grey(frame: img.Frame) -> np.ndarray:
    """An 8-bit grey image of a frame for corner finding (raw/16-bit frames gamma-encoded)."""
    pix = frame.pixels
    if pix.dtype == np.uint8:
        return pix if pix.ndim == 2 else cv2.cvtColor(pix, cv2.COLOR_RGB2GRAY)
    v = pix.astype(np.float32)
    if v.ndim == 3:
        v = v.mean(axis=2)
    top = float(np.nanpercentile(v, 99.5)) or 1.0
    return np.rint(255 * np.clip(v / top, 0, 1) ** (1 / 2.2)).astype(np.uint8)


def build_profile(ps: ProfileSession) -> CameraProfile:
    """Characterise a camera from a profile session's photos.

    Parameters
    ----------
    ps : ProfileSession
        From :func:`beamwall.session.load_profile_session`.

    Returns
    -------
    CameraProfile
        Identity from the first photo's EXIF and size; a response curve (8-bit photos only),
        a flat field and a lens distortion for each table given.

    Raises
    ------
    ImageError
        A photo cannot be read (a raw file LibRaw cannot read, ...).
    CalibrationError
        Photos of different cameras or sizes; a bracket of raw or 16-bit files; a bracket of
        one frame; the checkerboard found in fewer than three photos.
    """
    file = str(ps.path)
    frames: dict[str, list[img.Frame]] = {
        "response": [img.read_frame(p) for p in ps.response_images],
        "flat_field": [img.read_frame(p) for p in ps.flat_field_images],
        "distortion": [img.read_frame(p) for p in ps.distortion_images],
    }
    every = [f for group in frames.values() for f in group]
    first = every[0]
    size = (first.shape[1], first.shape[0])
    for f in every[1:]:
        have = (f.shape[1], f.shape[0])
        if have != size or f.raw != first.raw:
            raise CalibrationError(f"{have[0]}x{have[1]} px{' raw' if f.raw else ''}, the "
                                   f"first photo {first.path.name} is {size[0]}x{size[1]} px"
                                   f"{' raw' if first.raw else ''}: one camera and setting "
                                   "per profile", file=f.path)
        for key in ("make", "model"):
            a, b = getattr(first, key), getattr(f, key)
            if a and b and a.strip() != b.strip():
                raise CalibrationError(f"camera {key} '{b}' differs from {first.path.name}'s "
                                       f"'{a}': one camera per profile", file=f.path)
    warnings: list[str] = []

    response = None
    if frames["response"]:
        group = frames["response"]
        if len(group) < 2:
            raise CalibrationError("a response curve needs a bracket of at least 2 exposures",
                                   file=file, field="[response] images")
        if any(f.raw or f.bit_depth != 8 for f in group):
            raise CalibrationError("the bracket is raw or 16-bit: a response curve is only "
                                   "for 8-bit camera files (raw files are linear already)",
                                   file=file, field="[response] images")
        overrides = ps.response_exposures_s or [None] * len(group)
        exps = [_exposure(f, ps.camera, o, file, "[response]") for f, o in zip(group, overrides)]
        try:
            response = recover_response([f.pixels for f in group],
                                        [linear.exposure_factor(e) for e in exps])
        except BeamwallError as exc:
            raise CalibrationError(exc.message, file=file, field=exc.field) from None
        warnings += [f"[response] {w}" for w in response.warnings]

    flat = None
    if frames["flat_field"]:
        group = frames["flat_field"]
        partial = CameraProfile(first.make, first.model, size, raw=first.raw,
                                response=response)
        exps = [_exposure(f, ps.camera, None, file, "[flat_field]") if f.exposure_s
                or ps.camera.exposure_s else linear.Exposure(1.0, f.f_number or 1.0, 100.0)
                for f in group]
        enc = "linear" if (first.raw or first.bit_depth == 16) else (
            ps.camera.encoding or "srgb")
        values = []
        for f, e in zip(group, exps):
            sig = linear.normalise(
                [f.pixels], [e], darks=[None], encoding=enc,
                black_level=0.0 if f.raw else (ps.camera.black_level or 0.0),
                white_level=None if f.raw else ps.camera.white_level, profile=partial)
            values.append(sig.value)
        mean = np.nanmean(np.stack(values), axis=0) if len(values) > 1 else values[0]
        try:
            flat, flat_warnings = fit_flat_field(mean, f_number=group[0].f_number)
        except BeamwallError as exc:
            raise CalibrationError(exc.message, file=file, field=exc.field) from None
        warnings += [f"[flat_field] {w}" for w in flat_warnings]

    distortion = None
    if frames["distortion"]:
        corners_shape = ps.inner_corners or (0, 0)
        found: list[Any] = []
        missing: list[Any] = []
        for f in frames["distortion"]:
            c = find_board_corners(board_grey(f), corners_shape)
            (found if c is not None else missing).append(c if c is not None else f.path.name)
        if len(found) < 3:
            raise CalibrationError(
                f"checkerboard of {corners_shape[0]}x{corners_shape[1]} inner corners found in "
                f"{len(found)} of {len(frames['distortion'])} photos (not found in "
                f"{', '.join(missing)}); need at least 3: check inner_corners and the photos",
                file=file, field="[distortion] images")
        if missing:
            warnings.append(f"[distortion] checkerboard not found in {', '.join(missing)}; "
                            "those photos were left out")
        distortion = calibrate_distortion(found, board_object_points(corners_shape,
                                                                     ps.square_mm or 1.0),
                                          size)
        if distortion.rms_px > 1.0:
            warnings.append(f"[distortion] board corners reproject with {distortion.rms_px:.2f}"
                            " px RMS: a board not flat, or blurred photos?")

    from beamwall.provenance import relative_path, sha256_file

    inputs = ({"role": "profile session", "path": ps.path.name,
               "sha256": sha256_file(ps.path)},) + \
        tuple({"role": role, "path": relative_path(f.path, ps.path.parent), "sha256": f.sha256}
              for role, group in frames.items() for f in group)
    return CameraProfile(
        make=first.make, model=first.model, image_size_px=size, raw=first.raw,
        response=response, flat_field=flat, distortion=distortion, warnings=tuple(warnings),
        inputs=inputs,
        created_utc=_dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ"),
        beamwall_version=__version__,
    )


def write_profile(profile: CameraProfile, path: str | PathLike[str]) -> None:
    """Write the profile JSON (UTF-8, indented) to ``path`` (overwrites)."""
    Path(path).write_text(json.dumps(profile.to_dict(), indent=1) + "\n", encoding="utf-8")


def load_profile(path: str | PathLike[str]) -> CameraProfile:
    """Read a camera profile JSON.

    Raises
    ------
    InputError
        Missing or unreadable file, not JSON, not a profile, a malformed table; the message
        names the file and the key.
    """
    path = Path(path)
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise InputError(f"cannot read the profile: {exc.strerror or exc}", file=path) from None
    except ValueError as exc:
        raise InputError(f"not JSON: {exc}", file=path) from None
    try:
        return CameraProfile.from_dict(doc)
    except InputError as exc:
        raise InputError(exc.message, file=path, field=exc.field) from None


def check_frame(profile: CameraProfile, frame: img.Frame, *,
                profile_file: str | PathLike[str] | None = None) -> None:
    """Refuse a profile made for another camera than the one that took ``frame``.

    Raises
    ------
    CalibrationError
        One line naming the profile file and what differs (make, model, size, raw).
    """
    check_profile_camera(profile, make=frame.make, model=frame.model,
                         image_size_px=(frame.shape[1], frame.shape[0]), raw=frame.raw,
                         file=None if profile_file is None else str(profile_file))


def session_points_px(points_px: Sequence[Sequence[float]] | np.ndarray, frame: img.Frame,
                      profile: CameraProfile | None) -> np.ndarray:
    """A session's wall-point pixel positions as the wall mapping wants them.

    File pixels (where the points appear in the photos) -> frame pixels (binned raw frames,
    :func:`beamwall.images.frame_pixel_xy`) -> ideal pinhole pixels when the profile has a
    lens distortion (:func:`beamwall.profile.undistort_points`). Fit the homography to these
    and pass ``distortion=profile.distortion`` to :func:`beamwall.wall.resample_to_wall`.
    """
    from beamwall.profile import undistort_points

    pts = img.frame_pixel_xy(frame, np.asarray(points_px, dtype=np.float64))
    if profile is not None and profile.distortion is not None:
        pts = undistort_points(profile.distortion, pts)
    return pts
