"""Shared fixtures: analytic wall grids (no renderer, no files)."""

from __future__ import annotations

import numpy as np

from beamwall.wall import WallGrid


def analytic_grid(
    intensity_cd,
    *,
    distance_m: float,
    half_width_mm: float,
    step_mm: float,
    axis_mm: tuple[float, float] = (0.0, 0.0),
    noise_fraction: float = 0.0,
    seed: int = 0,
) -> WallGrid:
    """Illuminance E = I(theta, phi) cos^3(theta) / d^2 on a square wall grid (lx)."""
    n = int(round(2 * half_width_mm / step_mm)) + 1
    x = -half_width_mm + step_mm * np.arange(n)
    y = half_width_mm - step_mm * np.arange(n)
    xx, yy = np.meshgrid(x, y)
    dx, dy = xx - axis_mm[0], yy - axis_mm[1]
    d_mm = distance_m * 1000.0
    r = np.hypot(dx, dy)
    theta = np.degrees(np.arctan(r / d_mm))
    phi = np.degrees(np.arctan2(dy, dx)) % 360.0
    cos_t = d_mm / np.sqrt(d_mm**2 + r**2)
    e = intensity_cd(theta, phi) * cos_t**3 / distance_m**2
    if noise_fraction:
        rng = np.random.default_rng(seed)
        e = e * (1 + noise_fraction * rng.standard_normal(e.shape))
    fp = np.array([[x[0], y[0]], [x[-1], y[0]], [x[-1], y[-1]], [x[0], y[-1]]])
    return WallGrid(
        values=e.astype(np.float32),
        saturated=np.zeros(e.shape, bool),
        inside=np.ones(e.shape, bool),
        x0_mm=float(x[0]),
        y0_mm=float(y[0]),
        step_mm=float(step_mm),
        footprint_mm=fp,
    )
