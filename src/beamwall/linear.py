"""Linearise, dark-subtract, weight to luminance, normalise exposure, merge brackets.

(Interface skeleton.)
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Exposure:
    exposure_s: float
    f_number: float
    iso: float


@dataclass(frozen=True)
class Signal:
    """A shot's exposure-normalised luminance signal.

    value : (H, W) float32. Linear luminance (0..1 of the white level) divided by the exposure
        factor t * (ISO/100) / N^2 and by the natural cos^4 falloff; NaN where the pixel is
        clipped in every exposure of the bracket.
    saturated : (H, W) bool. Clipped in every exposure.
    """

    value: np.ndarray
    saturated: np.ndarray
    warnings: tuple[str, ...] = ()


def normalise(
    images: Sequence[np.ndarray],
    exposures: Sequence[Exposure],
    *,
    darks: Sequence[np.ndarray | None],
    encoding: str,
    black_level: float = 0.0,
    white_level: float | None = None,
    focal_length_px: float | None = None,
    weights: tuple[float, float, float] = (0.2126, 0.7152, 0.0722),
) -> Signal:  # pragma: no cover - skeleton
    raise NotImplementedError
