"""Write the fictional demo scenario to files: photos with EXIF, session and calibration TOML.

The scene itself (torch, camera, reference lamp, true figures) is data from
:func:`beamwall.synth.demo_scenario`; this module renders it with :func:`beamwall.synth.render`
and writes what a user would bring home from a measuring evening. Everything in it is invented.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from beamwall import synth
from beamwall.images import write_image

__all__ = ["WrittenDemo", "write_demo", "format_truth_comparison", "CAMERA_MAKE", "CAMERA_MODEL"]

#: EXIF identity of the fictional demo camera.
CAMERA_MAKE = "Synthetic"
CAMERA_MODEL = "Demo camera"
#: Fictional lens: focal length in mm and the sensor's pixels per mm (focal length in px / mm).
LENS_FOCAL_MM = 4.0


@dataclass(frozen=True)
class WrittenDemo:
    """Where the demo files went, and the true figures per shot label."""

    folder: Path
    session_toml: Path
    calibration_toml: Path
    calibration_json: Path
    truth: dict[str, Any]


def _slug(label: str) -> str:
    out = "".join(c if c.isalnum() else "-" for c in label.lower())
    while "--" in out:
        out = out.replace("--", "-")
    return out.strip("-")


def _write(path: Path, pixels: np.ndarray, exposure: Any, pose: synth.CameraPose) -> None:
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
    )


def _toml_str(s: str) -> str:
    return '"' + s.replace("\\", "\\\\").replace('"', '\\"') + '"'


def _points_toml(demo: synth.DemoScenario) -> str:
    rows = []
    for (px, py), (wx, wy) in zip(demo.wall_points_px, demo.wall_points_mm):
        rows.append(f"  [{px:.2f}, {py:.2f}, {wx:.1f}, {wy:.1f}],")
    return "points = [\n" + "\n".join(rows) + "\n]"


def write_demo(
    folder: Path, *, seed: int = 1, calibration_json: str = "calibration/demo-camera.json"
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

    Returns
    -------
    WrittenDemo
    """
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    demo = synth.demo_scenario()
    pose = demo.camera
    wall = _points_toml(demo)
    camera = (
        "[camera]\n"
        f'encoding = "{demo.encoding}"\n'
    )

    # Reference lamp (calibration session).
    ref = demo.reference
    lamp_names = []
    for i, exp in enumerate(ref.exposures):
        name = f"lamp_{i + 1}.jpg" if len(ref.exposures) > 1 else "lamp.jpg"
        _write(folder / name, synth.render(ref.scene, exposure=exp, seed=ref.seed + seed + i),
               exp, pose)
        lamp_names.append(name)
    _write(folder / "lamp_dark.jpg",
           synth.render(ref.scene, exposure=ref.exposures[0], seed=ref.seed + seed + 50,
                        beam_on=False), ref.exposures[0], pose)
    cal_toml = folder / "calibration.toml"
    cal_toml.write_text(
        f"title = {_toml_str('Reference lamp for the demo camera (fictional)')}\n\n"
        f"[wall]\n{wall}\n\n{camera}\n"
        "[reference]\n"
        f"images = [{', '.join(_toml_str(n) for n in lamp_names)}]\n"
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
        names = []
        for i, exp in enumerate(shot.exposures):
            name = f"{base}_{i + 1}.jpg" if len(shot.exposures) > 1 else f"{base}.jpg"
            _write(folder / name,
                   synth.render(shot.scene, exposure=exp, seed=shot.seed + seed + 7 * i),
                   exp, pose)
            names.append(name)
        dark = f"{base}_dark.jpg"
        _write(folder / dark,
               synth.render(shot.scene, exposure=shot.dark_exposure,
                            seed=shot.seed + seed + 60, beam_on=False),
               shot.dark_exposure, pose)
        lines = [
            "[[shot]]",
            f"label = {_toml_str(shot.label)}",
            f"images = [{', '.join(_toml_str(n) for n in names)}]",
            f"dark = {_toml_str(dark)}",
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
        f"[wall]\n{wall}\n\n{camera}\n"
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
    )


def format_truth_comparison(result: Any, truth: dict[str, Any]) -> str:
    """Measured against true figures, per shot, as a plain-text table (percent errors)."""
    rows = [("shot", "beam", "field", "peak", "throw", "flux (cone)")]

    def err(measured: float | None, true: float | None) -> str:
        if measured is None or true is None or not np.isfinite(true) or true == 0:
            return "-"
        return f"{100 * (measured - true) / true:+.1f} %"

    for s in result.shots:
        t = truth.get(s.label)
        if t is None:
            continue
        flux_true = (
            t.flux_in_cone_lm(s.flux_half_angle_deg) if s.flux_half_angle_deg else None
        )
        rows.append((
            s.label,
            err(s.beam_angle_deg, t.beam_angle_deg),
            err(s.field_angle_deg, t.field_angle_deg),
            err(s.peak_intensity_cd, t.peak_intensity_cd),
            err(s.throw_m, t.throw_m),
            err(s.flux_lm, flux_true),
        ))
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    return "\n".join(
        "  ".join([r[0].ljust(widths[0])] + [c.rjust(w) for c, w in zip(r[1:], widths[1:])])
        for r in rows
    )
