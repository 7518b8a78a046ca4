"""Rendered sessions that map the wall with printed markers (no points), written as files.

Shared by tests/test_markers.py and tests/test_preflight.py. Frames: the renderer and beamwall
share the contract's conventions (wall mm x right, y up; pixels x right, y down).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from beamwall import synth, synth_setup
from beamwall.images import write_image
from beamwall.linear import Exposure


def pose(x_m, y_m, z_m, *, f_px, w=640, h=428, roll=0.0, yaw_extra=0.0, pitch_extra=0.0):
    """A camera at (x, y, z) turned to look at the wall origin."""
    yaw = -np.degrees(np.arctan2(x_m, z_m)) + yaw_extra
    pitch = -np.degrees(np.arctan2(y_m, z_m)) + pitch_extra
    return synth.CameraPose(position_m=(x_m, y_m, z_m), yaw_deg=float(yaw),
                            pitch_deg=float(pitch), roll_deg=roll, focal_length_px=f_px,
                            width_px=w, height_px=h)


@dataclass
class MarkerCase:
    """A session: one shot (or a bracket) of ``beam`` at ``distance_m``, a setup photo."""

    beam: object = field(default_factory=lambda: synth.HotspotSpill(
        hotspot_cd=3000.0, hotspot_half_angle_deg=7.0, spill_cd=200.0,
        spill_half_angle_deg=22.0))
    distance_m: float = 1.5
    camera: synth.CameraPose = field(default_factory=lambda: pose(0.75, 0.1, 2.1, f_px=430.0))
    marker_size_mm: float = 180.0
    ids: tuple[int, ...] = (0, 1, 2, 3, 4)
    exposure_scale: float = 1.0          # x the auto exposure (8: clip the hotspot)
    bracket: tuple[float, ...] = ()      # further exposures, x the first
    exif: bool = True
    dark: bool = True
    setup_camera: synth.CameraPose | None = None   # another pose for the setup photo
    setup_size: tuple[int, int] | None = None      # (w, h) of the setup photo, if different
    listed_ids: dict[int, int] | None = None       # relabel listed ids (wrong ids)
    drop_markers: tuple[int, ...] = ()   # markers not taped (still listed)
    ambient_lx: float = 0.2
    encoding: str = "srgb"
    seed: int = 7
    sheets_in_beam_photos: bool = False  # the sheets left on the wall for the beam photos


def _write(path: Path, pixels: np.ndarray, exp: Exposure | None, pose_: synth.CameraPose):
    if exp is None:
        write_image(path, pixels)
        return
    write_image(path, pixels, exposure_s=exp.exposure_s, f_number=exp.f_number, iso=exp.iso,
                focal_length_mm=5.0, focal_plane_px_per_mm=pose_.focal_length_px / 5.0,
                make="Synthetic", model="Test camera")


def write_marker_session(case: MarkerCase, tmp: Path) -> Path:
    """Render the case into ``tmp``; return the session TOML's path."""
    cam = case.camera
    suffix = ".jpg" if case.encoding == "srgb" else ".png"
    layout = synth_setup.marker_layout_mm(cam, ids=case.ids)
    setup_pose = case.setup_camera or cam
    if case.setup_size is not None:
        setup_pose = synth.CameraPose(
            position_m=setup_pose.position_m, yaw_deg=setup_pose.yaw_deg,
            pitch_deg=setup_pose.pitch_deg, roll_deg=setup_pose.roll_deg,
            focal_length_px=setup_pose.focal_length_px * case.setup_size[0] / cam.width_px,
            width_px=case.setup_size[0], height_px=case.setup_size[1])
    taped = {i: xy for i, xy in layout.items() if i not in case.drop_markers}
    setup = synth_setup.render_setup_photo(setup_pose, markers_mm=taped,
                                           marker_size_mm=case.marker_size_mm,
                                           encoding=case.encoding, seed=case.seed)
    setup_exp = synth_setup.setup_exposure(setup_pose, room_lx=150.0)
    _write(tmp / f"setup{suffix}", setup, setup_exp, setup_pose)
    listed = dict(layout)
    if case.listed_ids:
        listed = {case.listed_ids.get(i, i): xy for i, xy in layout.items()}

    scene = synth.Scene(beam=case.beam, distance_m=case.distance_m, camera=cam,
                        ambient_lx=case.ambient_lx, colour_rgb=synth.COOL_WHITE_LED_RGB)
    t = synth.nominal_shutter_s(synth.auto_exposure_s(scene, f_number=4.0, iso=100.0))
    exps = [Exposure(t * case.exposure_scale, 4.0, 100.0)]
    exps += [Exposure(exps[0].exposure_s * b, 4.0, 100.0) for b in case.bracket]
    names = []
    for i, e in enumerate(exps):
        name = f"shot{i}{suffix}"
        if case.sheets_in_beam_photos:
            pix = synth_setup.render_setup_photo(
                cam, markers_mm=taped, marker_size_mm=case.marker_size_mm, room_lx=0.0,
                exposure=e, encoding=case.encoding, seed=case.seed + 10 + i, beam_scene=scene)
        else:
            pix = synth.render(scene, exposure=e, encoding=case.encoding,
                               seed=case.seed + 10 + i)
        _write(tmp / name, pix, e if case.exif else None, cam)
        names.append(f'"{name}"')
    lines = [f"[rig]\ndistance_m = {case.distance_m}\n",
             f'[wall]\nsetup_image = "setup{suffix}"\nmarker_size_mm = {case.marker_size_mm}',
             synth_setup.markers_mm_toml(listed) + "\n",
             f'[camera]\nencoding = "{case.encoding}"']
    if case.encoding == "linear":
        s = synth.SensorModel()
        lines.append(f"black_level = {s.black_level_dn}\nwhite_level = {s.white_level_dn}")
    lines.append(f'\n[[shot]]\nlabel = "test shot"\nimages = [{", ".join(names)}]')
    if case.dark:
        _write(tmp / f"dark{suffix}", synth.render(scene, exposure=exps[0],
                                                   encoding=case.encoding,
                                                   seed=case.seed + 30, beam_on=False),
               exps[0] if case.exif else None, cam)
        lines.append(f'dark = "dark{suffix}"')
    path = tmp / "session.toml"
    path.write_text("\n".join(lines) + "\n")
    return path
