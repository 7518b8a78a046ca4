"""Figures of merit from the intensity distribution: beam and field angle, throw, flux.

References
----------
.. [IES] IES Lighting Handbook, 10th ed. (2011), ch. 10, and the IES nomenclature for
   floodlights: beam angle between the directions at 50 % of the maximum intensity, field
   angle at 10 %.
.. [FL1] ANSI/PLATO FL 1-2019 (formerly ANSI/NEMA FL 1-2009), 1.2.1 beam distance: the
   distance at which the peak beam intensity gives 0.25 lx, d = sqrt(I / 0.25 lx).
.. [Ryer] A. Ryer, *Light Measurement Handbook* (1997), ch. 6: the flux through a surface is
   the integral of its illuminance, Phi = integral of E dA; a uniform source of intensity I
   sends 2 pi I (1 - cos alpha) lumens into a cone of half angle alpha.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from beamwall.constants import (
    BEAM_LEVEL_FRACTION,
    FIELD_LEVEL_FRACTION,
    THROW_ILLUMINANCE_LX,
)
from beamwall.distribution import grid_coordinates_mm
from beamwall.wall import WallGrid

__all__ = [
    "AngleSummary",
    "angle_summary",
    "throw_m",
    "cumulative_cone_flux",
    "largest_cone_half_angle_deg",
    "saturated_fraction",
    "clipped_peak_fraction",
    "CONE_STEP_DEG",
    "total_flux_upper_bound",
]

#: Resolution of the flux cone's half angle (the contract reports it "to 0.1 deg").
CONE_STEP_DEG: float = 0.1


@dataclass(frozen=True)
class AngleSummary:
    """Full angle (degrees) from per-azimuth half angles.

    ``mean_deg`` is twice the mean over the azimuths where the crossing was found; ``min_deg``
    and ``max_deg`` twice the narrowest and widest; ``found_fraction`` the share of azimuths
    whose crossing lies inside the photo.
    """

    mean_deg: float | None
    min_deg: float | None
    max_deg: float | None
    found_fraction: float


def angle_summary(half_angles_deg: np.ndarray) -> AngleSummary:
    """Summarise per-azimuth half angles as full angles (the contract's beam/field angle).

    Parameters
    ----------
    half_angles_deg : (n_phi,) ndarray
        Outermost crossing per azimuth, NaN where not found.

    Examples
    --------
    >>> s = angle_summary(np.array([10.0, 12.0, np.nan, 14.0]))
    >>> s.mean_deg, s.min_deg, s.max_deg, s.found_fraction
    (24.0, 20.0, 28.0, 0.75)
    """
    h = np.asarray(half_angles_deg, dtype=np.float64)
    found = np.isfinite(h)
    frac = float(found.mean()) if h.size else 0.0
    if not found.any():
        return AngleSummary(None, None, None, frac)
    v = h[found]
    return AngleSummary(
        float(2.0 * v.mean()), float(2.0 * v.min()), float(2.0 * v.max()), frac
    )


def throw_m(peak_intensity_cd: float) -> float:
    """Beam distance: where the peak intensity gives 0.25 lx [FL1].

    d = sqrt(I / 0.25 lx) = 2 sqrt(I).

    Examples
    --------
    >>> throw_m(10000.0)  # FL1's worked example: 10 000 cd -> 200 m
    200.0
    """
    return float(np.sqrt(peak_intensity_cd / THROW_ILLUMINANCE_LX))


def cumulative_cone_flux(
    illuminance: WallGrid,
    *,
    axis_mm: tuple[float, float],
    distance_m: float,
    max_half_angle_deg: float,
    fill: np.ndarray | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Flux on the wall inside cones of growing half angle, Phi(alpha) = integral of E dA [Ryer].

    Parameters
    ----------
    illuminance : WallGrid
        lx (or relative units); NaN cells inside ``max_half_angle_deg`` (clipped) are filled
        from ``fill`` (e.g. a smoothed map) or, lacking it, count as 0.
    axis_mm : (x, y)
    distance_m : float
    max_half_angle_deg : float
    fill : (ny, nx) array, optional, keyword-only

    Returns
    -------
    half_angle_deg : (n,) 0, 0.1, ... up to max_half_angle_deg
    flux : (n,) flux inside each cone (lm when E is in lx; cell areas in m^2)

    Notes
    -----
    Each cell counts whole at its centre's polar angle; cells are small next to the cone's
    circle, so the boundary error averages out along it.
    """
    x_mm, y_mm = grid_coordinates_mm(illuminance)
    d_mm = distance_m * 1000.0
    r_mm = np.sqrt((x_mm - axis_mm[0]) ** 2 + (y_mm - axis_mm[1]) ** 2)
    theta_deg = np.degrees(np.arctan(r_mm / d_mm))
    e = illuminance.values.astype(np.float64)
    if fill is not None:
        e = np.where(np.isfinite(e), e, fill)
    e = np.nan_to_num(e, nan=0.0)
    n = int(np.floor(max_half_angle_deg / CONE_STEP_DEG + 1e-9)) + 1
    half_angle_deg = np.arange(n) * CONE_STEP_DEG
    bins = np.floor(theta_deg / CONE_STEP_DEG).astype(np.int64)  # cell in bin k: k*step<=t
    keep = bins < n - 1
    cell_area_m2 = (illuminance.step_mm * 1e-3) ** 2
    sums = np.bincount(bins[keep].ravel(), weights=(e[keep] * cell_area_m2).ravel(),
                       minlength=n - 1)
    flux = np.concatenate([[0.0], np.cumsum(sums[: n - 1])])
    return half_angle_deg, flux


def total_flux_upper_bound(
    cone_flux: float, edge_intensity: float, *, half_angle_deg: float
) -> float:
    """Upper bound of a torch's total flux from the flux inside a cone and its edge intensity.

    When, in every azimuth, the intensity beyond the cone stays at or below its value at the
    cone's edge, the light outside the cone (towards the wall's hemisphere) is at most
    integral of I_e(phi) sin(theta) dtheta dphi from alpha to 90 deg = 2 pi <I_e> cos(alpha),
    <I_e> the edge intensity averaged over azimuth [Ryer] (the uniform-cone formula over the
    annulus). The assumption holds for reflector and optic beams, whose spill falls off
    outwards (common practice, no source).

    Examples
    --------
    >>> round(total_flux_upper_bound(100.0, 10.0, half_angle_deg=60.0), 2)  # + 2 pi 10 0.5
    131.42
    """
    return float(cone_flux + 2.0 * np.pi * max(edge_intensity, 0.0)
                 * np.cos(np.radians(half_angle_deg)))


def largest_cone_half_angle_deg(radius_mm: float, *, distance_m: float) -> float:
    """Largest cone half angle, floored to 0.1 deg, whose circle of ``radius_mm`` fits.

    Examples
    --------
    >>> largest_cone_half_angle_deg(1000.0, distance_m=1.0)  # atan(1) = 45 deg
    45.0
    """
    alpha = np.degrees(np.arctan(max(radius_mm, 0.0) / (distance_m * 1000.0)))
    return round(float(np.floor(alpha / CONE_STEP_DEG + 1e-6) * CONE_STEP_DEG), 1)


def saturated_fraction(
    intensity: WallGrid, *, peak: float, smoothed: np.ndarray | None = None
) -> float:
    """Share of the cells inside the field-angle contour that are clipped in every exposure.

    Parameters
    ----------
    intensity : WallGrid
    peak : float
    smoothed : (ny, nx) array, optional, keyword-only
        The smoothed intensity the contour is drawn on (default: the raw values).

    Examples
    --------
    >>> v = np.array([[1.0, np.nan, 0.5, 0.01]], np.float32)
    >>> sat = np.array([[False, True, False, False]])
    >>> g = WallGrid(v, sat, np.ones_like(sat), 0.0, 0.0, 1.0, np.zeros((4, 2)))
    >>> round(saturated_fraction(g, peak=1.0), 3)
    0.333
    """
    s = intensity.values if smoothed is None else smoothed
    with np.errstate(invalid="ignore"):
        region = (s >= FIELD_LEVEL_FRACTION * peak) | intensity.saturated
    n = int(region.sum())
    return float((region & intensity.saturated).sum() / n) if n else 0.0


def clipped_peak_fraction(
    intensity: WallGrid, *, peak: float, smoothed: np.ndarray | None = None
) -> float:
    """Share of the cells inside the 50 % contour that are clipped in every exposure.

    A clipped hotspot hides the peak: the measured maximum is only a lower bound.
    """
    s = intensity.values if smoothed is None else smoothed
    with np.errstate(invalid="ignore"):
        region = (s >= BEAM_LEVEL_FRACTION * peak) | intensity.saturated
    n = int(region.sum())
    return float((region & intensity.saturated).sum() / n) if n else 0.0

