"""The beam's luminous intensity distribution: its axis on the wall and I(theta, phi).

On a flat wall perpendicular to the torch's axis at distance d, a direction at polar angle
theta from the axis lands at r = d tan(theta) from the axis point, and the illuminance there is
E = I(theta, phi) cos^3(theta) / d^2 [Ryer]. So I = E d^2 / cos^3(theta): the wall's
illuminance map turns into the intensity map by one multiplication per cell.

The distribution is sampled on a polar grid (theta ascending from 0, phi uniform on [0, 360),
from the wall's +x towards +y) from a lightly smoothed intensity map: the smoothing width is a
few percent of the beam's 50 % radius, so it lowers pixel noise without moving the beam edges
(a symmetric blur leaves the half-height crossing of an edge in place) and biases a smooth
peak by well under 1 %.

References
----------
.. [Ryer] A. Ryer, *Light Measurement Handbook*, International Light (1997), ch. 6 "Inverse
   square law" and "Lambert's cosine law": E = I cos(theta) / D^2 with D = d / cos(theta).
.. [Knutsson] H. Knutsson and C.-F. Westin, "Normalized and differential convolution",
   Proc. IEEE CVPR (1993): smoothing with missing data as a ratio of two convolutions.
"""

from __future__ import annotations

from dataclasses import replace

import cv2
import numpy as np

from beamwall.constants import BEAM_LEVEL_FRACTION, FIELD_LEVEL_FRACTION
from beamwall.errors import ImageError
from beamwall.results import Distribution
from beamwall.wall import WallGrid, obliquity_cos3

__all__ = [
    "grid_coordinates_mm",
    "grid_cos3",
    "coarsen",
    "smoothed_intensity",
    "smooth_nan",
    "intensity_map",
    "find_axis",
    "peak_value",
    "beam_smoothing_sigma_cells",
    "polar_distribution",
    "outermost_crossing_deg",
]


def grid_coordinates_mm(grid: WallGrid) -> tuple[np.ndarray, np.ndarray]:
    """Wall coordinates of a grid's cell centres.

    Returns
    -------
    x_mm : (1, nx) ndarray
    y_mm : (ny, 1) ndarray
        Broadcastable; y decreases down the rows (y up on the wall).

    Examples
    --------
    >>> g = WallGrid(np.zeros((2, 3), np.float32), np.zeros((2, 3), bool),
    ...              np.ones((2, 3), bool), x0_mm=-10.0, y0_mm=5.0, step_mm=5.0,
    ...              footprint_mm=np.zeros((4, 2)))
    >>> x, y = grid_coordinates_mm(g)
    >>> x.ravel().tolist(), y.ravel().tolist()
    ([-10.0, -5.0, 0.0], [5.0, 0.0])
    """
    ny, nx = grid.values.shape
    x_mm = grid.x0_mm + grid.step_mm * np.arange(nx, dtype=np.float64)[None, :]
    y_mm = grid.y0_mm - grid.step_mm * np.arange(ny, dtype=np.float64)[:, None]
    return x_mm, y_mm


def grid_cos3(grid: WallGrid, *, axis_mm: tuple[float, float], distance_m: float) -> np.ndarray:
    """cos^3 of each cell's polar angle seen from the torch (:func:`wall.obliquity_cos3`).

    Returns
    -------
    (ny, nx) float32 ndarray

    Examples
    --------
    >>> g = WallGrid(np.zeros((1, 2), np.float32), np.zeros((1, 2), bool),
    ...              np.ones((1, 2), bool), x0_mm=0.0, y0_mm=0.0, step_mm=1000.0,
    ...              footprint_mm=np.zeros((4, 2)))
    >>> [round(float(v), 4) for v in grid_cos3(g, axis_mm=(0.0, 0.0), distance_m=1.0)[0]]
    [1.0, 0.3536]
    """
    x_mm, y_mm = grid_coordinates_mm(grid)
    return obliquity_cos3(x_mm, y_mm, axis_mm=axis_mm, distance_m=distance_m).astype(
        np.float32)


def smooth_nan(values: np.ndarray, sigma_cells: float) -> np.ndarray:
    """Gaussian smoothing that ignores NaN cells (normalised convolution [Knutsson]).

    Parameters
    ----------
    values : (H, W) array, NaN where missing.
    sigma_cells : float
        Standard deviation of the Gaussian, in cells; 0 returns a copy.

    Returns
    -------
    (H, W) float32 ndarray, NaN where the input is NaN.

    Examples
    --------
    >>> v = np.ones((5, 5), np.float32); v[2, 2] = np.nan
    >>> s = smooth_nan(v, 1.0)
    >>> bool(np.isnan(s[2, 2])), float(np.round(s[0, 0], 6))
    (True, 1.0)
    """
    v = np.asarray(values, dtype=np.float32)
    if sigma_cells <= 0:
        return v.copy()
    valid = np.isfinite(v)
    filled = np.where(valid, v, 0.0).astype(np.float32)
    weight = valid.astype(np.float32)
    ksize = int(2 * np.ceil(3.5 * sigma_cells) + 1)
    num = cv2.GaussianBlur(filled, (ksize, ksize), sigma_cells, borderType=cv2.BORDER_CONSTANT)
    den = cv2.GaussianBlur(weight, (ksize, ksize), sigma_cells, borderType=cv2.BORDER_CONSTANT)
    with np.errstate(invalid="ignore", divide="ignore"):
        out = num / den
    out[~valid] = np.nan
    return out.astype(np.float32)


def intensity_map(
    illuminance: WallGrid, *, axis_mm: tuple[float, float], distance_m: float
) -> WallGrid:
    """Luminous intensity on the wall grid, I = E d^2 / cos^3(theta) [Ryer].

    Parameters
    ----------
    illuminance : WallGrid
        Illuminance on the wall (lx, or relative signal units when uncalibrated).
    axis_mm : (x, y)
        Where the beam axis meets the wall, mm.
    distance_m : float
        Torch to wall along the axis, m (> 0).

    Returns
    -------
    WallGrid
        Same grid, values in cd (or relative units x m^2).

    Examples
    --------
    >>> g = WallGrid(np.full((1, 2), 4.0, np.float32), np.zeros((1, 2), bool),
    ...              np.ones((1, 2), bool), x0_mm=0.0, y0_mm=0.0, step_mm=1000.0,
    ...              footprint_mm=np.zeros((4, 2)))
    >>> im = intensity_map(g, axis_mm=(0.0, 0.0), distance_m=1.0)
    >>> [round(float(v), 3) for v in im.values[0]]  # on axis 4*1^2; at 45 deg 4/cos^3(45)
    [4.0, 11.314]
    """
    cos3 = grid_cos3(illuminance, axis_mm=axis_mm, distance_m=distance_m)
    values = illuminance.values * np.float32(distance_m**2) / cos3
    return replace(illuminance, values=values.astype(np.float32))


def beam_smoothing_sigma_cells(region: np.ndarray) -> float:
    """Smoothing width for a beam whose 50 % region is ``region`` (bool map).

    4 % of the region's thickness 2 A / P (area over half the perimeter: the radius of a disc,
    the width of a ring), between 1 and 6 cells (common practice, no source: chosen so the
    peak bias on a Gaussian hotspot or ring stays below 0.3 %).

    Examples
    --------
    >>> yy, xx = np.mgrid[-300:301, -300:301]
    >>> disc = xx**2 + yy**2 <= 100**2
    >>> round(beam_smoothing_sigma_cells(disc), 1)  # 4 % of ~100 cells
    4.0
    >>> beam_smoothing_sigma_cells(np.zeros((3, 3), bool))
    1.0
    """
    return float(np.clip(0.04 * _thickness_cells(np.asarray(region, dtype=bool)), 1.0, 6.0))


def _thickness_cells(r: np.ndarray) -> float:
    """2 A / P of a bool region, in cells (0 for an empty region)."""
    area = int(r.sum())
    if area == 0:
        return 0.0
    interior = r.copy()
    interior[1:, :] &= r[:-1, :]
    interior[:-1, :] &= r[1:, :]
    interior[:, 1:] &= r[:, :-1]
    interior[:, :-1] &= r[:, 1:]
    # A digital circle of radius r has about 4 sqrt(2) r cells lacking a 4-neighbour: scale
    # the count by 2 pi / (4 sqrt 2) to estimate the perimeter.
    perimeter = max(float((r & ~interior).sum()) * 2.0 * np.pi / (4.0 * np.sqrt(2.0)), 1.0)
    return 2.0 * area / perimeter


def _peak_region(smoothed: np.ndarray, saturated: np.ndarray, level: float) -> np.ndarray:
    return (smoothed >= level) | saturated


def peak_value(smoothed: np.ndarray, saturated: np.ndarray) -> tuple[float, tuple[int, int]]:
    """Largest value of a smoothed map and its cell; saturated cells are excluded.

    Returns
    -------
    peak : float
    cell : (row, col)
    """
    work = np.where(np.isfinite(smoothed) & ~saturated, smoothed, -np.inf)
    idx = int(np.argmax(work))
    peak = float(work.flat[idx])
    if not np.isfinite(peak) or peak <= 0:
        raise ImageError("no beam found: the photo holds no signal above the dark level")
    row, col = divmod(idx, work.shape[1])
    return peak, (row, col)


def coarsen(grid: WallGrid, factor: int) -> WallGrid:
    """Area-average a wall grid by an integer factor (NaN cells ignored; NaN where all are).

    Cell (i, j) of the result averages cells [i f:(i+1) f, j f:(j+1) f] of the input; its centre
    lies at the mean of theirs. ``saturated`` and ``inside`` become "any" and "all".

    Examples
    --------
    >>> v = np.arange(16, dtype=np.float32).reshape(4, 4); v[0, 0] = np.nan
    >>> g = WallGrid(v, np.zeros((4, 4), bool), np.ones((4, 4), bool), 0.0, 0.0, 1.0,
    ...              np.zeros((4, 2)))
    >>> c = coarsen(g, 2)
    >>> [[round(float(v), 3) for v in row] for row in c.values], c.x0_mm, c.y0_mm, c.step_mm
    ([[3.333, 4.5], [10.5, 12.5]], 0.5, -0.5, 2.0)
    """
    if factor <= 1:
        return grid
    ny, nx = grid.values.shape
    my, mx = ny // factor, nx // factor
    v = grid.values[: my * factor, : mx * factor]
    valid = np.isfinite(v)
    # Area averaging by an integer factor is an exact block mean (OpenCV's INTER_AREA).
    size = (mx, my)
    vs = cv2.resize(np.where(valid, v, 0.0).astype(np.float32), size,
                    interpolation=cv2.INTER_AREA)
    n = cv2.resize(valid.astype(np.float32), size, interpolation=cv2.INTER_AREA)
    with np.errstate(invalid="ignore", divide="ignore"):
        values = np.where(n > 0, vs / np.maximum(n, 1e-12), np.nan).astype(np.float32)

    def block(m: np.ndarray, how: str) -> np.ndarray:
        mean = cv2.resize(m[: my * factor, : mx * factor].astype(np.float32), size,
                          interpolation=cv2.INTER_AREA)
        return mean > 0 if how == "any" else mean >= 1.0 - 1e-6

    half = 0.5 * (factor - 1) * grid.step_mm
    return WallGrid(
        values=values,
        saturated=block(grid.saturated, "any"),
        inside=block(grid.inside, "all"),
        x0_mm=grid.x0_mm + half,
        y0_mm=grid.y0_mm - half,
        step_mm=grid.step_mm * factor,
        footprint_mm=grid.footprint_mm,
    )


#: Above-level runs along a ray narrower than this many smoothing widths (outside the
#: innermost run) count as noise, not as the beam's edge (common practice, no source).
MIN_RUN_SIGMAS: float = 4.0

#: Cells above which the axis and the smoothing width are found on a coarsened grid.
COARSE_CELLS: int = 400_000


def _coarse_factor(grid: WallGrid) -> int:
    return max(1, int(np.ceil(np.sqrt(grid.values.size / COARSE_CELLS))))


def smoothed_intensity(intensity: WallGrid) -> tuple[np.ndarray, float, float]:
    """The intensity map smoothed for peak and crossings, with its width and peak.

    The width is :func:`beam_smoothing_sigma_cells` of the 50 % region, found on a coarsened
    copy for large grids (one fine smoothing pass only).

    Returns
    -------
    smoothed : (ny, nx) float32, NaN where the input is
    sigma_cells : float
    peak : float
        Largest smoothed value over cells that are not clipped.
    """
    f = _coarse_factor(intensity)
    coarse = coarsen(intensity, f)
    cs = smooth_nan(coarse.values, 1.0 if f > 1 else 2.0)
    cpeak, _ = peak_value(cs, coarse.saturated)
    region = (cs >= BEAM_LEVEL_FRACTION * cpeak) | coarse.saturated
    # The width rule of beam_smoothing_sigma_cells, with the thickness in fine cells.
    sigma = float(np.clip(0.04 * _thickness_cells(region) * f, 1.0, 6.0))
    smoothed = smooth_nan(intensity.values, sigma)
    peak, _ = peak_value(smoothed, intensity.saturated)
    return smoothed, sigma, peak


def find_axis(
    illuminance: WallGrid, *, distance_m: float, iterations: int = 4
) -> tuple[float, float]:
    """Where the beam axis meets the wall: the intensity-weighted centroid of the 50 % region.

    The region at or above 50 % of the peak of the smoothed intensity map, clipped cells
    included (they are the brightest), as the contract defines the default axis. Starts from the
    illuminance map (cos^3 taken as 1) and iterates, since the intensity depends on the axis.
    A ring-shaped beam (dark centre) gets the centre of its ring.

    Parameters
    ----------
    illuminance : WallGrid
    distance_m : float
    iterations : int, keyword-only

    Returns
    -------
    (x_mm, y_mm)
    """
    illuminance = coarsen(illuminance, _coarse_factor(illuminance))
    x_mm, y_mm = grid_coordinates_mm(illuminance)
    sat = illuminance.saturated
    current = illuminance
    sigma = 2.0

    def centroid(values: np.ndarray) -> tuple[tuple[float, float], float]:
        smoothed = smooth_nan(values, sigma)
        peak, _ = peak_value(smoothed, sat)
        region = _peak_region(smoothed, sat, BEAM_LEVEL_FRACTION * peak)
        w = np.where(region, np.where(sat, peak, np.nan_to_num(smoothed)), 0.0)
        total = float(w.sum())
        xy = (float((w * x_mm).sum() / total), float((w * y_mm).sum() / total))
        return xy, beam_smoothing_sigma_cells(region)

    axis, sigma = centroid(current.values)
    for _ in range(iterations):
        current = intensity_map(illuminance, axis_mm=axis, distance_m=distance_m)
        new_axis, sigma = centroid(current.values)
        moved = float(np.hypot(new_axis[0] - axis[0], new_axis[1] - axis[1]))
        axis = new_axis
        if moved < 0.05 * illuminance.step_mm:
            break
    return axis


def outermost_crossing_deg(
    theta_deg: np.ndarray, profiles: np.ndarray, level: float, *, min_run: int = 1
) -> np.ndarray:
    """The largest polar angle at which each profile is still at or above ``level``.

    Parameters
    ----------
    theta_deg : (n,) or (n, m) ascending polar angles (one column per azimuth when 2-D).
    profiles : (n, m) values along theta for m azimuths. NaN marks the end of the measured
        range (outside the photo); +inf marks a clipped (known bright) sample.
    level : float
    min_run : int, keyword-only
        Runs of fewer than ``min_run`` consecutive samples at or above the level, outside the
        innermost run, are taken as noise and ignored (a speck of noise far out, amplified by
        the 1 / cos^3 and falloff corrections, must not become the beam's edge; a real ring
        or spill is wider). 1 keeps every run.

    Returns
    -------
    (m,) ndarray
        Linear interpolation between the last sample at or above the level and the next one;
        NaN where the profile is still above the level where its measured range ends (the
        crossing lies outside the photo) or never reaches it.

    Examples
    --------
    >>> t = np.array([0.0, 1.0, 2.0, 3.0])
    >>> p = np.array([[1.0, 0.2], [0.8, 0.9], [0.2, 0.9], [0.1, np.nan]])
    >>> outermost_crossing_deg(t, p, 0.5).tolist()  # 2nd: ring, still bright at the edge
    [1.5, nan]
    """
    p = np.asarray(profiles, dtype=np.float64)
    n, m = p.shape
    # Measured range per azimuth: up to the first NaN.
    nan_rows = np.isnan(p)
    first_nan = np.where(nan_rows.any(axis=0), nan_rows.argmax(axis=0), n)
    rows = np.arange(n)[:, None]
    in_range = rows < first_nan[None, :]
    above = (p >= level) & in_range
    if min_run > 1:
        above = _drop_short_runs(above, min_run)
    any_above = above.any(axis=0)
    last = n - 1 - np.argmax(above[::-1, :], axis=0)
    out = np.full(m, np.nan)
    ok = any_above & (last + 1 < first_nan)
    k = last[ok]
    cols = np.nonzero(ok)[0]
    p0 = p[k, cols]
    p1 = p[k + 1, cols]
    p0 = np.where(np.isinf(p0), level, p0)
    with np.errstate(invalid="ignore", divide="ignore"):
        frac = np.where(p0 > p1, (p0 - level) / (p0 - p1), 0.0)
    frac = np.clip(frac, 0.0, 1.0)
    t = np.asarray(theta_deg, dtype=np.float64)
    if t.ndim == 1:
        t0, t1 = t[k], t[k + 1]
    else:
        t0, t1 = t[k, cols], t[k + 1, cols]
    out[cols] = t0 + frac * (t1 - t0)
    return out


def _drop_short_runs(above: np.ndarray, min_run: int) -> np.ndarray:
    """Clear runs of True shorter than ``min_run`` along axis 0, except each column's first.

    Examples
    --------
    >>> a = np.array([1, 1, 0, 0, 1, 0, 1, 1, 1, 0], bool)[:, None]
    >>> _drop_short_runs(a, 3)[:, 0].astype(int).tolist()
    [1, 1, 0, 0, 0, 0, 1, 1, 1, 0]
    """
    out = above.copy()
    n = above.shape[0]
    for j in np.nonzero(above.any(axis=0))[0]:
        idx = np.flatnonzero(above[:, j])
        breaks = np.flatnonzero(np.diff(idx) > 1)
        starts = np.concatenate([[idx[0]], idx[breaks + 1]])
        ends = np.concatenate([idx[breaks], [idx[-1]]])
        for a, b in zip(starts[1:], ends[1:]):
            if b - a + 1 < min_run and b < n - 1:
                out[a:b + 1, j] = False
    return out


def _sample_polar(
    grid_values: np.ndarray,
    grid: WallGrid,
    *,
    axis_mm: tuple[float, float],
    distance_m: float,
    theta_deg: np.ndarray,
    phi_deg: np.ndarray,
) -> np.ndarray:
    d_mm = distance_m * 1000.0
    r_mm = d_mm * np.tan(np.radians(theta_deg))[:, None]
    phi = np.radians(phi_deg)[None, :]
    x = axis_mm[0] + r_mm * np.cos(phi)
    y = axis_mm[1] + r_mm * np.sin(phi)
    map_x = ((x - grid.x0_mm) / grid.step_mm).astype(np.float32)
    map_y = ((grid.y0_mm - y) / grid.step_mm).astype(np.float32)
    return cv2.remap(
        grid_values.astype(np.float32),
        map_x,
        map_y,
        interpolation=cv2.INTER_LINEAR,
        borderMode=cv2.BORDER_CONSTANT,
        borderValue=float("nan"),
    )


def polar_distribution(
    intensity: WallGrid,
    *,
    axis_mm: tuple[float, float],
    distance_m: float,
    unit: str,
    n_phi: int = 360,
    max_theta_samples: int = 4000,
    smoothed: tuple[np.ndarray, float, float] | None = None,
) -> Distribution:
    """Sample I(theta, phi) on a polar grid and find the beam and field crossings.

    Parameters
    ----------
    intensity : WallGrid
        Intensity on the wall (from :func:`intensity_map`); NaN outside the photo and where
        clipped (``intensity.saturated``).
    axis_mm : (x, y)
    distance_m : float
    unit : str
        "cd" or "relative", carried into the result.
    n_phi : int, keyword-only
        Azimuths, uniform on [0, 360).
    max_theta_samples : int, keyword-only
    smoothed : (map, sigma, peak), keyword-only
        The result of :func:`smoothed_intensity` when the caller already has it.

    Returns
    -------
    Distribution
        With ``peak`` the maximum of the smoothed map (no single-pixel maximum) and the
        per-azimuth outermost 50 % and 10 % crossings (half angles, degrees).

    Notes
    -----
    The theta step is about half a grid cell at the axis (``0.5 step / d`` rad), so the
    crossings of a 4 deg spot are resolved to a few hundredths of a degree; the crossing between
    samples is interpolated linearly.
    """
    sat = intensity.saturated
    smooth_map, sigma, peak = smoothed if smoothed is not None else smoothed_intensity(intensity)

    # Angular extent: the farthest measured cell from the axis.
    x_mm, y_mm = grid_coordinates_mm(intensity)
    r_mm = np.sqrt((x_mm - axis_mm[0]) ** 2 + (y_mm - axis_mm[1]) ** 2)
    inside = intensity.inside
    r_max_mm = float(np.max(np.where(inside, r_mm, 0.0))) + intensity.step_mm
    d_mm = distance_m * 1000.0
    theta_max_deg = float(np.degrees(np.arctan(r_max_mm / d_mm)))
    step_deg = float(np.degrees(0.5 * intensity.step_mm / d_mm))
    n_theta = int(min(max_theta_samples, np.ceil(theta_max_deg / step_deg) + 1))
    theta_deg = np.linspace(0.0, theta_max_deg, max(n_theta, 2))
    phi_deg = np.arange(n_phi, dtype=np.float64) * (360.0 / n_phi)

    # Clipped cells are known to be bright: mark them +inf for the crossing search.
    work = np.where(sat, np.inf, smooth_map).astype(np.float32)
    work = np.where(inside | sat, work, np.nan).astype(np.float32)
    # remap interpolates inf into neighbours as inf or nan; sample a finite stand-in instead.
    big = np.float32(peak * 1e3)
    sampled = _sample_polar(
        np.where(np.isinf(work), big, work),
        intensity,
        axis_mm=axis_mm,
        distance_m=distance_m,
        theta_deg=theta_deg,
        phi_deg=phi_deg,
    )
    clipped_mask = _sample_polar(
        sat.astype(np.float32),
        intensity,
        axis_mm=axis_mm,
        distance_m=distance_m,
        theta_deg=theta_deg,
        phi_deg=phi_deg,
    )
    crossing_profiles = np.where(clipped_mask > 0, np.inf, sampled)
    # Noise specks: shorter than a few smoothing widths along the ray (theta steps are about
    # half a cell at the axis, and never shorter in wall distance further out).
    min_run = max(2, int(np.ceil(MIN_RUN_SIGMAS * sigma / 0.5)))
    beam_half = outermost_crossing_deg(theta_deg, crossing_profiles,
                                       BEAM_LEVEL_FRACTION * peak, min_run=min_run)
    field_half = outermost_crossing_deg(theta_deg, crossing_profiles,
                                        FIELD_LEVEL_FRACTION * peak, min_run=min_run)
    intensity_polar = np.where(clipped_mask > 0, np.nan, sampled).astype(np.float32)
    return Distribution(
        theta_deg=theta_deg,
        phi_deg=phi_deg,
        intensity=intensity_polar,
        unit=unit,
        peak=peak,
        beam_half_angle_deg=beam_half,
        field_half_angle_deg=field_half,
    )
