"""Fit and vet the pixel-to-wall homography; resample the signal onto a wall grid.

(Interface skeleton.)
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class WallMapping:
    wall_to_px: np.ndarray     # (3, 3) homography, wall mm (x right, y up) -> pixel (x right, y down)
    rms_error_mm: float        # reprojection error of the fitted points, on the wall
    n_points: int


@dataclass(frozen=True)
class WallGrid:
    """A quantity sampled on a regular wall grid.

    values[i, j] is at x = x0_mm + j*step_mm, y = y0_mm - i*step_mm (row 0 is the top: y up).
    """

    values: np.ndarray         # (ny, nx) float32; NaN outside the photo or clipped
    saturated: np.ndarray      # (ny, nx) bool: clipped in every exposure
    inside: np.ndarray         # (ny, nx) bool: inside the photo's footprint on the wall
    x0_mm: float
    y0_mm: float
    step_mm: float
    footprint_mm: np.ndarray   # (4, 2) the photo's corners on the wall, mm
