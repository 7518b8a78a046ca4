"""Benchmark: a 24-megapixel (6000 x 4000) Bayer DNG, raw decode vs analysis.

Writes a DNG (RGGB, 14-bit levels) of a smooth beam on a wall once into the folder, then
times, in this process:

* decode: ``images.read_frame`` (file read, SHA-256, LibRaw unpack, per-site black level,
  2 x 2 binning to a 3000 x 2000 luminance frame, EXIF);
* analysis: ``linear.normalise`` with a dark frame and a profile's flat field, the wall
  mapping with the profile's lens distortion composed in, axis, distribution and figures
  (``pipeline.analyse_shot``).

Usage::

    .venv/bin/python benchmarks/bench_raw.py [--repeat 3] [--folder /tmp/beamwall-bench-raw]
"""

from __future__ import annotations

import argparse
import platform
import resource
import time
from pathlib import Path

import numpy as np

W, H = 6000, 4000


def render(folder: Path) -> None:
    from beamwall.images import write_dng

    folder.mkdir(parents=True, exist_ok=True)
    if (folder / "beam.dng").exists():
        return
    rng = np.random.default_rng(1)
    yy, xx = np.mgrid[0:H, 0:W].astype(np.float32)
    r2 = ((xx - 3100) ** 2 + (yy - 1900) ** 2) / 900.0**2
    sig = 0.6 * np.exp(-0.5 * r2) + 0.02
    for name, s in (("beam.dng", sig), ("dark.dng", np.full_like(sig, 0.002))):
        dn = 512 + s * (16383 - 512) + rng.normal(0, 3, s.shape).astype(np.float32)
        write_dng(folder / name, np.clip(np.rint(dn), 0, 16383).astype(np.uint16),
                  black_levels=512, white_level=16383, exposure_s=0.01, f_number=2.0, iso=100,
                  make="Synthetic", model="Bench")


def run(folder: Path, repeat: int) -> None:
    from beamwall import images, linear, wall
    from beamwall.pipeline import MAX_WALL_CELLS, ShotSignal, analyse_shot
    from beamwall.profile import CameraProfile, FlatField, LensDistortion, undistort_points

    fw, fh = W // 2, H // 2
    k = np.array([[2400.0, 0, (fw - 1) / 2], [0, 2400.0, (fh - 1) / 2], [0, 0, 1]])
    prof = CameraProfile("Synthetic", "Bench", (fw, fh), raw=True,
                         flat_field=FlatField(((fw - 1) / 2, (fh - 1) / 2),
                                              0.5 * float(np.hypot(fw, fh)), (-0.4, 0.05),
                                              (fw, fh)),
                         distortion=LensDistortion(k, np.array([-0.1, 0.02, 0, 0, 0]),
                                                   (fw, fh)))
    decode, analysis = [], []
    for _ in range(repeat):
        t0 = time.perf_counter()
        frame = images.read_frame(folder / "beam.dng")
        dark = images.read_frame(folder / "dark.dng")
        t1 = time.perf_counter()
        sig = linear.normalise([frame.pixels], [linear.Exposure(0.01, 2.0, 100.0)],
                               darks=[dark.pixels], encoding="linear", profile=prof)
        px = np.array([[500.0, 400], [5500, 420], [5480, 3600], [520, 3580]])
        mm = np.array([[-2000.0, 1500], [2000, 1500], [2000, -1500], [-2000, -1500]])
        pts = undistort_points(prof.distortion, images.frame_pixel_xy(frame, px))
        mapping = wall.fit_homography(pts, mm)
        grid = wall.resample_to_wall(sig.value, sig.saturated, mapping, max_cells=MAX_WALL_CELLS,
                                     distortion=prof.distortion)
        ss = ShotSignal(grid=grid, first_frame=frame, encoding="linear", focal_length_px=None,
                        exposures=(), source_pixels_per_cell=1.0, inputs=(), warnings=())
        analyse_shot(ss, label="bench", zoom=None, mode=None, distance_m=3.0,
                     distance_sigma_m=0.0, axis_mm=None, calibration=None, file="bench",
                     where="bench")
        t2 = time.perf_counter()
        decode.append(t1 - t0)
        analysis.append(t2 - t1)
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"24 MP DNG ({W} x {H}, binned to {W // 2} x {H // 2}), best of {repeat}:")
    print(f"  decode (beam + dark, read_frame): {min(decode):.2f} s "
          f"({min(decode) / 2:.2f} s per file)")
    print(f"  analysis (normalise, distorted wall resampling, figures): {min(analysis):.2f} s")
    print(f"  peak resident memory: {peak_mb:.0f} MB")
    print(f"  machine: {platform.machine()}, {platform.processor() or '?'}, "
          f"python {platform.python_version()}")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--folder", type=Path, default=Path("/tmp/beamwall-bench-raw"))
    args = ap.parse_args()
    render(args.folder)
    run(args.folder, args.repeat)


if __name__ == "__main__":
    main()
