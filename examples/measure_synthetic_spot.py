"""Measure a rendered spot beam through the public API and compare with its true figures.

A fictional narrow torch at 3 m, a camera 0.5 m to its right turned towards the beam, one
8-bit JPEG with EXIF and its dark frame, a reference lamp for the calibration. Run:

    .venv/bin/python examples/measure_synthetic_spot.py
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np

from beamwall import synth
from beamwall.images import write_image
from beamwall.linear import Exposure
from beamwall.pipeline import calibrate_session, measure_session
from beamwall.session import load_calibration_session, load_session


def main() -> dict[str, float]:
    pose = synth.CameraPose(position_m=(0.5, 0.0, 3.4), yaw_deg=-8.4, focal_length_px=1500.0,
                            width_px=960, height_px=640)
    beam = synth.HotspotSpill(hotspot_cd=20000.0, hotspot_half_angle_deg=3.0,
                              spill_cd=300.0, spill_half_angle_deg=12.0)
    scene = synth.Scene(beam=beam, distance_m=3.0, camera=pose, ambient_lx=0.2)
    lamp = synth.Scene(beam=synth.ReferenceLamp(axial_intensity_cd=100.0), distance_m=1.5,
                       camera=pose)
    marks = np.array([[-700.0, 450.0], [700.0, 450.0], [700.0, -450.0], [-700.0, -450.0]])
    px = synth.wall_to_pixel(pose, marks)
    points = ",\n".join(f"  [{a:.2f}, {b:.2f}, {c:.0f}, {d:.0f}]"
                        for (a, b), (c, d) in zip(px, marks))
    with tempfile.TemporaryDirectory() as tmp_s:
        tmp = Path(tmp_s)
        for name, sc, on in (("lamp.jpg", lamp, True), ("spot.jpg", scene, True),
                             ("dark.jpg", scene, False)):
            t = synth.nominal_shutter_s(synth.auto_exposure_s(sc, f_number=4.0, iso=100.0))
            write_image(tmp / name, synth.render(sc, exposure=Exposure(t, 4.0, 100.0), seed=3,
                                                 beam_on=on),
                        exposure_s=t, f_number=4.0, iso=100.0, focal_length_mm=5.0,
                        focal_plane_px_per_mm=pose.focal_length_px / 5.0)
        wall = f"[wall]\npoints = [\n{points}\n]\n"
        (tmp / "cal.toml").write_text(wall + '\n[reference]\nimages = ["lamp.jpg"]\n'
                                      "intensity_cd = 100.0\ndistance_m = 1.5\n"
                                      "axis_mm = [0.0, 0.0]\n")
        (tmp / "session.toml").write_text("[rig]\ndistance_m = 3.0\n\n" + wall +
                                          '\n[[shot]]\nlabel = "spot"\nimages = ["spot.jpg"]\n'
                                          'dark = "dark.jpg"\n')
        cal = calibrate_session(load_calibration_session(tmp / "cal.toml"))
        shot = measure_session(load_session(tmp / "session.toml"), cal).shots[0]
    true = synth.truth(beam, distance_m=3.0)
    errors = {
        "beam_angle_deg": shot.beam_angle_deg / true.beam_angle_deg - 1,
        "field_angle_deg": shot.field_angle_deg / true.field_angle_deg - 1,
        "peak_intensity_cd": shot.peak_intensity_cd / true.peak_intensity_cd - 1,
        "throw_m": shot.throw_m / true.throw_m - 1,
    }
    for key, e in errors.items():
        print(f"{key:18s} measured {getattr(shot, key):10.4g}  error {100 * e:+.2f} %")
    return errors


if __name__ == "__main__":
    main()
