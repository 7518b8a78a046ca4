"""Decode photos (JPEG, PNG, TIFF; 8/16 bit; grey or RGB) and their EXIF into a Frame.

(Interface skeleton.)
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np


@dataclass(frozen=True)
class Frame:
    path: Path
    pixels: np.ndarray                 # (H, W) or (H, W, 3), RGB order, uint8 or uint16, as stored
    bit_depth: int                     # 8 or 16
    sha256: str                        # of the file's bytes
    exposure_s: float | None = None    # EXIF ExposureTime
    f_number: float | None = None      # EXIF FNumber
    iso: float | None = None           # EXIF ISOSpeedRatings / PhotographicSensitivity
    focal_length_mm: float | None = None          # EXIF FocalLength
    focal_plane_px_per_mm: float | None = None    # EXIF FocalPlaneXResolution in px/mm
    focal_length_35mm: float | None = None        # EXIF FocalLengthIn35mmFilm
    make: str | None = None
    model: str | None = None
    orientation: int | None = None

    @property
    def shape(self) -> tuple[int, int]:
        return int(self.pixels.shape[0]), int(self.pixels.shape[1])


def read_frame(path: Path) -> Frame:  # pragma: no cover - skeleton
    """Read one photo; raise ImageError(file=path) when it cannot be decoded."""
    raise NotImplementedError
