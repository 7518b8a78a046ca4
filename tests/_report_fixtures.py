"""Hand-made results for the report writers' tests: a fictional torch with a Gaussian beam.

A Gaussian beam I(theta) = I0 exp(-theta^2 / (2 s^2)) reaches 50 % of its peak at
theta = s sqrt(2 ln 2) and 10 % at s sqrt(2 ln 10) (algebra on the definition of the IES beam
and field angles). The wall map is the same beam seen on a wall at ``distance_m``: the wall point
(x, y) mm lies at polar angle atan(hypot(x, y) / (1000 d)) from the axis (right-triangle
geometry). All names and numbers are invented for the tests.
"""

from __future__ import annotations

import hashlib

import numpy as np

from beamwall.results import Distribution, InputFile, SessionResult, ShotResult
from beamwall.wall import WallGrid

LN2, LN10 = np.log(2.0), np.log(10.0)


def gaussian_half_angles_deg(sigma_deg: float) -> tuple[float, float]:
    """Half angles at 50 % and 10 % of the peak of a Gaussian beam."""
    return sigma_deg * np.sqrt(2 * LN2), sigma_deg * np.sqrt(2 * LN10)


def gaussian_shot(label: str = "narrow, high", *, sigma_deg: float = 6.0, peak: float = 8000.0,
                  calibrated: bool = True, zoom: str | None = "min", mode: str | None = "high",
                  distance_m: float = 3.0, theta_max_deg: float = 40.0,
                  theta_step_deg: float = 0.5, phi_step_deg: float = 5.0,
                  ellipticity: float = 1.0, wall_half_mm: float = 1500.0,
                  wall_step_mm: float = 10.0, photo_offset_mm: float = 0.0,
                  relative_peak: float = 1.0, nan_holes: bool = False) -> ShotResult:
    """A shot of a Gaussian beam (sigma along wall y scaled by ``ellipticity``)."""
    theta = np.arange(0.0, theta_max_deg + 1e-9, theta_step_deg)
    phi = np.arange(0.0, 360.0, phi_step_deg)
    # ellipse of semi-axes sigma (along wall x) and ellipticity * sigma (along wall y)
    sig = sigma_deg * np.hypot(ellipticity * np.cos(np.radians(phi)), np.sin(np.radians(phi)))
    sig = sigma_deg * sigma_deg * ellipticity / sig
    intensity = peak * np.exp(-0.5 * (theta[:, None] / sig[None, :]) ** 2)
    # the photo's edge: on the wall, the photo spans +/- wall_half_mm around photo_offset_mm
    d_mm = 1000.0 * distance_m
    tx = np.tan(np.radians(theta))[:, None] * d_mm
    x = tx * np.cos(np.radians(phi))[None, :]
    y = tx * np.sin(np.radians(phi))[None, :]
    outside = (np.abs(x - photo_offset_mm) > wall_half_mm) | (np.abs(y) > wall_half_mm)
    intensity = np.where(outside, np.nan, intensity)
    if nan_holes:
        intensity[3, 7] = np.nan      # e.g. a clipped pixel
        intensity[10, 20] = np.nan
    beam_half = sig * np.sqrt(2 * LN2)
    field_half = sig * np.sqrt(2 * LN10)
    unit = "cd" if calibrated else "relative"
    dist = Distribution(theta, phi, intensity, unit, peak, beam_half, field_half)

    xs = np.arange(-wall_half_mm, wall_half_mm + 1e-9, wall_step_mm) + photo_offset_mm
    ys = np.arange(wall_half_mm, -wall_half_mm - 1e-9, -wall_step_mm)
    gx, gy = np.meshgrid(xs, ys)
    th = np.degrees(np.arctan(np.hypot(gx, gy) / d_mm))
    ph = np.arctan2(gy, gx)
    s_local = sigma_deg * sigma_deg * ellipticity / np.hypot(
        sigma_deg * ellipticity * np.cos(ph), sigma_deg * np.sin(ph))
    values = (peak * np.exp(-0.5 * (th / s_local) ** 2)).astype(np.float32)
    corner = np.abs(gx - xs[0]) + np.abs(gy - ys[0]) < 200.0   # a corner outside the photo
    values[corner] = np.nan
    grid = WallGrid(values=values, saturated=np.zeros(values.shape, bool), inside=~corner,
                    x0_mm=float(xs[0]), y0_mm=float(ys[0]), step_mm=wall_step_mm,
                    footprint_mm=np.array([[xs[0], ys[0]], [xs[-1], ys[0]], [xs[-1], ys[-1]],
                                           [xs[0], ys[-1]]]))
    b50, f10 = gaussian_half_angles_deg(sigma_deg)
    throw = float(np.sqrt(peak / 0.25)) if calibrated else None
    return ShotResult(
        label=label, zoom=zoom, mode=mode,
        beam_angle_deg=float(2 * np.mean(beam_half)),
        field_angle_deg=float(2 * np.mean(field_half)),
        peak_intensity_cd=peak if calibrated else None, throw_m=throw,
        flux_lm=0.02 * peak if calibrated else None, flux_half_angle_deg=25.0,
        axis_mm=(0.0, 0.0), saturated_fraction=0.0, relative_peak_intensity=relative_peak,
        relative_flux=relative_peak * 0.9, warnings=("synthetic test shot",),
        beam_angle_sigma_deg=0.2, peak_intensity_sigma_cd=0.05 * peak if calibrated else None,
        beam_angle_min_deg=float(2 * beam_half.min()),
        beam_angle_max_deg=float(2 * beam_half.max()),
        distance_m=distance_m, distribution=dist, intensity_map=grid,
        inputs=(InputFile("image", f"/data/{label}.jpg",
                          hashlib.sha256(label.encode()).hexdigest()),))


def session_of(shots: list[ShotResult], *, calibrated: bool = True, **kw) -> SessionResult:
    return SessionResult(
        beamwall_version="0.1.0", calibrated=calibrated, shots=tuple(shots),
        title="Hallway test of a fictional zoom torch", session_file="/data/session.toml",
        calibration={"method": "reference lamp", "constant_cd_per_signal": 1.234e-3,
                     "constant_sigma_rel": 0.03} if calibrated else None,
        inputs=(InputFile("session", "/data/session.toml", "ab" * 32),),
        created_utc="2024-05-01T12:00:00", **kw)


def zoom_session(n_shots: int = 4, *, calibrated: bool = True, **shot_kw) -> SessionResult:
    """n shots: zoom settings from narrow to wide, alternating high and low modes."""
    shots = []
    for k in range(n_shots):
        zoom = f"z{k // 2}"
        mode = "high" if k % 2 == 0 else "low"
        sigma = 3.0 + 4.0 * (k // 2)
        scale = 1.0 if mode == "high" else 0.3
        peak = 40000.0 * scale * (3.0 / sigma) ** 2
        shots.append(gaussian_shot(f"zoom {zoom}, {mode}", sigma_deg=sigma, peak=peak,
                                   zoom=zoom, mode=mode, calibrated=calibrated,
                                   relative_peak=peak / 40000.0, **shot_kw))
    return session_of(shots, calibrated=calibrated,
                      zoom={"beam_angle_min_deg": shots[0].beam_angle_deg,
                            "beam_angle_max_deg": shots[-1].beam_angle_deg,
                            "flux_ratio_narrow_to_wide": 0.93},
                      electrical={"led_amps": 0.8, "led_watts": 2.4,
                                  "flux_estimate_lm": [216.0, 312.0],
                                  "implied_efficacy_lm_per_w": 104.0, "verdict": "consistent"},
                      claims=({"label": shots[0].label, "figure": "peak_intensity_cd",
                               "claimed": 60000, "measured": 40000.0, "ratio": 0.67,
                               "verdict": "overstated"},),
                      warnings=("demo warning: <b>not bold</b>, & escaped",))
