"""Benchmark: a 24-megapixel (6000 x 4000) JPEG beam photo, decode vs analysis, peak memory.

Renders a scene with beamwall.synth (once, cached in the output folder), then, in a fresh
child process so that the peak resident memory belongs to the measurement alone:

* decode: ``images.read_frame`` (JPEG decode + EXIF + SHA-256);
* analysis: everything after decoding for one shot with its dark frame: linearisation,
  exposure normalisation, cos^4, wall resampling, axis, distribution, figures.

Usage::

    .venv/bin/python benchmarks/bench_24mp.py [--repeat 3] [--folder /tmp/beamwall-bench]

Prints a table and the machine it ran on; docs/performance.md records the figures.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import subprocess
import sys
import time
from pathlib import Path

W, H = 6000, 4000


def render(folder: Path) -> None:
    import numpy as np

    from beamwall import synth
    from beamwall.images import write_image
    from beamwall.linear import Exposure

    folder.mkdir(parents=True, exist_ok=True)
    if (folder / "beam.jpg").exists():
        return
    pose = synth.CameraPose(position_m=(0.5, -0.3, 3.4), yaw_deg=-8.4, pitch_deg=5.0,
                            focal_length_px=3600.0, width_px=W, height_px=H)
    beam = synth.HotspotSpill(hotspot_cd=12000.0, hotspot_half_angle_deg=5.0, spill_cd=400.0,
                              spill_half_angle_deg=25.0)
    scene = synth.Scene(beam=beam, distance_m=3.0, camera=pose, ambient_lx=0.2)
    t = synth.nominal_shutter_s(synth.auto_exposure_s(scene, f_number=4.0, iso=100.0))
    e = Exposure(t, 4.0, 100.0)
    for name, on in (("beam.jpg", True), ("dark.jpg", False)):
        px = synth.render(scene, exposure=e, seed=1, beam_on=on)
        write_image(folder / name, px, exposure_s=t, f_number=4.0, iso=100.0,
                    focal_length_mm=5.0, focal_plane_px_per_mm=3600.0 / 5.0)
    marks = np.array([[-1500.0, 1000.0], [1500.0, 1000.0], [1500.0, -1000.0],
                      [-1500.0, -1000.0]])
    pix = synth.wall_to_pixel(pose, marks)
    (folder / "points.json").write_text(json.dumps(np.hstack([pix, marks]).tolist()))


def child(folder: Path, repeat: int) -> None:
    import numpy as np

    from beamwall import images, linear, wall
    from beamwall.pipeline import MAX_WALL_CELLS, ShotSignal, analyse_shot

    pts = np.array(json.loads((folder / "points.json").read_text()))
    mapping = wall.fit_homography(pts[:, :2], pts[:, 2:])
    decode_s, analysis_s = [], []
    for _ in range(repeat):
        t0 = time.perf_counter()
        frame = images.read_frame(folder / "beam.jpg")
        dark = images.read_frame(folder / "dark.jpg")
        t1 = time.perf_counter()
        exp = linear.Exposure(frame.exposure_s, frame.f_number, frame.iso)
        sig = linear.normalise([frame.pixels], [exp], darks=[dark.pixels], encoding="srgb",
                               focal_length_px=images.focal_length_px(frame))
        grid = wall.resample_to_wall(sig.value, sig.saturated, mapping,
                                     max_cells=MAX_WALL_CELLS)
        shot = ShotSignal(grid=grid, first_frame=frame, encoding="srgb", focal_length_px=None,
                          exposures=(exp,), source_pixels_per_cell=1.0, inputs=(),
                          warnings=())
        res = analyse_shot(shot, label="bench", zoom=None, mode=None, distance_m=3.0,
                           distance_sigma_m=0.0, axis_mm=None, calibration=None, file="bench",
                           where="bench")
        t2 = time.perf_counter()
        decode_s.append(t1 - t0)
        analysis_s.append(t2 - t1)
        del frame, dark, sig, grid, shot
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    print(json.dumps({
        "decode_s": min(decode_s) / 2.0,  # two files (beam + dark): per file
        "decode_two_files_s": min(decode_s),
        "analysis_s": min(analysis_s),
        "peak_rss_mb": peak_mb,
        "beam_angle_deg": res.beam_angle_deg,
        "grid_cells": int(res.intensity_map.values.size),
    }))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--folder", type=Path, default=Path("/tmp/beamwall-bench"))
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--child", action="store_true", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.child:
        child(args.folder, args.repeat)
        return
    t0 = time.perf_counter()
    render(args.folder)
    print(f"scene ready in {time.perf_counter() - t0:.1f} s ({args.folder})")
    out = subprocess.run(
        [sys.executable, __file__, "--child", "--folder", str(args.folder),
         "--repeat", str(args.repeat)],
        check=True, capture_output=True, text=True,
    )
    r = json.loads(out.stdout.strip().splitlines()[-1])
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, "
          f"{platform.python_implementation()} {platform.python_version()}")
    print(f"decode, per 24 MP JPEG   : {r['decode_s']:.3f} s")
    print(f"decode, beam + dark      : {r['decode_two_files_s']:.3f} s")
    print(f"analysis (one shot)      : {r['analysis_s']:.3f} s "
          f"({r['analysis_s'] / r['decode_two_files_s']:.2f} x the decode of beam + dark)")
    print(f"peak resident memory     : {r['peak_rss_mb']:.0f} MB")
    print(f"wall grid                : {r['grid_cells'] / 1e6:.2f} M cells; "
          f"beam angle {r['beam_angle_deg']:.2f} deg")


if __name__ == "__main__":
    main()
