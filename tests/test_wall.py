"""Tests for beamwall.wall: homography fit and vetting, point mapping, resampling, obliquity.

Outside references:

- OpenCV (``cv2.findHomography`` with method 0, ``cv2.perspectiveTransform``,
  ``cv2.pointPolygonTest``) for the geometry;
- a pinhole camera built from first principles (x = K R (X - C), Hartley & Zisserman,
  *Multiple View Geometry*, 2nd ed., eq. 6.8) for the synthetic photos: the wall is the plane
  z = 0 of a frame with x right, y up, z towards the torch; the camera frame has x right,
  y down, z forward; the photo's pixel centres are at integer coordinates;
- the inverse-square cosine law E = I cos(xi) / D^2 (IES Lighting Handbook, 10th ed.) checked
  against a direct 3-D computation.

Tolerances: exact-point fits agree to 1e-9 (relative); the resampled analytic wall function is
recovered within 0.5 % of its local value at cells at least 3 cells inside the footprint;
noise checks use fixed seeds and about 5-sigma bands.
"""

from __future__ import annotations

import math
import warnings

import cv2
import numpy as np
import pytest

from beamwall.errors import BeamwallError, GeometryError, ImageError
from beamwall.wall import (
    WallGrid,
    WallMapping,
    fit_homography,
    footprint_mm,
    largest_inscribed_radius_mm,
    mm_per_px,
    obliquity_cos3,
    pixel_to_wall,
    polar_angles_deg,
    resample_to_wall,
    wall_to_pixel,
)

# ---------------------------------------------------------------------------------------------
# A synthetic pinhole camera looking at the wall


def camera_homography(
    *, yaw_deg: float = 20.0, pitch_deg: float = 0.0, distance_mm: float = 2000.0,
    f_px: float = 500.0, size_px: tuple[int, int] = (600, 400),
    aim_mm: tuple[float, float] = (0.0, 0.0),
) -> np.ndarray:
    """Wall mm -> pixel homography of a camera aimed at `aim_mm` from `distance_mm` away.

    H = K [r1 r2 -R C] for x_cam = R (X - C) (Hartley & Zisserman eq. 6.8), X = (x, y, 0).
    """
    w, h = size_px
    k = np.array([[f_px, 0.0, (w - 1) / 2.0], [0.0, f_px, (h - 1) / 2.0], [0.0, 0.0, 1.0]])
    # Facing the wall: camera x = wall x, camera y = -wall y, camera z = -wall z.
    r0 = np.diag([1.0, -1.0, -1.0])
    a, b = math.radians(yaw_deg), math.radians(pitch_deg)
    ry = np.array([[math.cos(a), 0, math.sin(a)], [0, 1, 0], [-math.sin(a), 0, math.cos(a)]])
    rx = np.array([[1, 0, 0], [0, math.cos(b), -math.sin(b)], [0, math.sin(b), math.cos(b)]])
    r = rx @ ry @ r0
    forward = r.T @ np.array([0.0, 0.0, 1.0])          # optical axis in wall coordinates
    c = np.array([aim_mm[0], aim_mm[1], 0.0]) - distance_mm * forward
    return k @ np.column_stack([r[:, 0], r[:, 1], -r @ c])


def project(h: np.ndarray, xy: np.ndarray) -> np.ndarray:
    p = np.column_stack([xy, np.ones(len(xy))]) @ h.T
    return p[:, :2] / p[:, 2:]


def unit_scale(h: np.ndarray) -> np.ndarray:
    return h / h[2, 2]


WALL_PTS = np.array([[-600.0, 400.0], [600.0, 400.0], [600.0, -400.0], [-600.0, -400.0]])
H_TRUE = camera_homography()


# ---------------------------------------------------------------------------------------------
# fit_homography


def test_fit_exact_points_matches_opencv():
    rng = np.random.default_rng(1)
    wall = np.vstack([WALL_PTS, rng.uniform(-500, 500, size=(6, 2))])
    px = project(H_TRUE, wall)
    m = fit_homography(px, wall)
    assert m.n_points == 10
    assert m.rms_error_mm < 1e-9
    assert m.point_errors_mm.shape == (10,)
    # OpenCV as the outside reference: findHomography with method 0 (all points, least
    # squares) on exact points gives the same mapping.
    # (OpenCV refines by Levenberg-Marquardt and stops near 1e-8 relative.)
    h_cv, _ = cv2.findHomography(wall, px, 0)
    np.testing.assert_allclose(unit_scale(m.wall_to_px), unit_scale(h_cv), rtol=1e-6,
                               atol=1e-7)
    probe = np.random.default_rng(11).uniform(-800, 800, size=(20, 2))
    np.testing.assert_allclose(project(m.wall_to_px, probe), project(h_cv, probe), atol=1e-5)
    np.testing.assert_allclose(unit_scale(m.wall_to_px), unit_scale(H_TRUE), rtol=1e-9,
                               atol=1e-12)
    assert m.warnings == ()


def test_fit_four_points_exact_and_sign_convention():
    px = project(H_TRUE, WALL_PTS)
    m = fit_homography(px, WALL_PTS)
    assert m.rms_error_mm < 1e-9
    h = m.wall_to_px
    w = np.column_stack([WALL_PTS, np.ones(4)]) @ h[2]
    assert np.all(w > 0)
    assert np.mean(w) == pytest.approx(1.0)
    # Seen from the front, wall y up -> pixel y down reverses orientation.
    assert np.linalg.det(h) < 0
    assert not h.flags.writeable


def test_fit_noisy_points_rms_and_per_point_errors():
    rng = np.random.default_rng(2)
    gx, gy = np.meshgrid(np.linspace(-600, 600, 4), np.linspace(-400, 400, 3))
    wall = np.column_stack([gx.ravel(), gy.ravel()])
    px = project(H_TRUE, wall) + rng.normal(0.0, 0.5, size=(12, 2))
    m = fit_homography(px, wall)
    # 0.5 px of noise at about 4-5 mm/px: a few mm on the wall, below the 14.4 mm default bound
    assert 0.3 < m.rms_error_mm < 6.0
    assert m.max_rms_mm == pytest.approx(0.01 * math.hypot(1200, 800))
    assert m.rms_error_mm == pytest.approx(math.sqrt(np.mean(m.point_errors_mm**2)))
    # per-point errors are the distances of the back-mapped pixels from the wall positions
    np.testing.assert_allclose(m.point_errors_mm,
                               np.hypot(*(pixel_to_wall(m, px) - wall).T), rtol=1e-9)


def test_fit_rejects_large_rms_with_worst_point():
    rng = np.random.default_rng(3)
    gx, gy = np.meshgrid(np.linspace(-600, 600, 3), np.linspace(-400, 400, 3))
    wall = np.column_stack([gx.ravel(), gy.ravel()])
    px = project(H_TRUE, wall) + rng.normal(0.0, 0.2, size=(9, 2))
    px[4] += (25.0, -10.0)  # the centre point is misplaced by ~27 px (~100 mm)
    with pytest.raises(GeometryError, match=r"RMS reprojection error on the wall is .* mm.*"
                                            r"worst point #5"):
        fit_homography(px, wall)
    # a looser explicit bound accepts it
    m = fit_homography(px, wall, max_rms_mm=500.0)
    assert int(np.argmax(m.point_errors_mm)) == 4


@pytest.mark.parametrize(
    ("px", "wall", "pattern"),
    [
        (WALL_PTS[:3], WALL_PTS[:3], r"at least 4 points, got 3"),
        (WALL_PTS, WALL_PTS[:3], r"4 pixel positions but 3 wall positions"),
        (np.zeros((4, 3)), WALL_PTS, r"shape \(n, 2\)"),
    ],
)
def test_fit_rejects_bad_shapes(px, wall, pattern):
    with pytest.raises(GeometryError, match=pattern):
        fit_homography(px, wall)


def test_fit_rejects_non_finite():
    px = project(H_TRUE, WALL_PTS)
    px[2, 0] = np.nan
    with pytest.raises(GeometryError, match=r"\[wall\] points: pixel positions: point\(s\) #3"):
        fit_homography(px, WALL_PTS)


def test_fit_rejects_collinear_wall_points():
    wall = WALL_PTS.copy()
    wall[1] = (0.0, 0.0)  # on the line through points #1 and #3
    px = project(H_TRUE, WALL_PTS)
    with pytest.raises(GeometryError, match=r"points #1, #2 and #3 lie on a line in the wall"):
        fit_homography(px, wall)


def test_fit_rejects_collinear_photo_points_and_names_source():
    px = project(H_TRUE, WALL_PTS)
    px[3] = 0.5 * (px[2] + px[0]) + 1.0  # about on the diagonal, 1 px off
    with pytest.raises(GeometryError, match=r"^markers: points .* lie on a line in the photo"):
        fit_homography(px, WALL_PTS, source="markers")


def test_fit_rejects_duplicates():
    wall = np.vstack([WALL_PTS, WALL_PTS[2] + 1e-4])
    px = project(H_TRUE, wall)
    with pytest.raises(GeometryError, match=r"points #3 and #5 coincide in the wall frame"):
        fit_homography(px, wall)


def test_fit_rejects_all_points_on_one_line():
    wall = np.column_stack([np.linspace(-500, 500, 6), np.linspace(-100, 300, 6)])
    px = np.column_stack([np.linspace(0, 500, 6), np.linspace(50, 80, 6)]) + [[0, 0], [0, 1],
                                                                              [0, 0], [1, 0],
                                                                              [0, 0], [0, 0]]
    with pytest.raises(GeometryError, match=r"all 6 points lie near one line in the wall"):
        fit_homography(px, wall)


def test_fit_rejects_fewer_than_four_in_general_position():
    # five points on one line plus one off it: the homography is not determined
    wall = np.vstack([np.column_stack([np.linspace(-500, 500, 5), np.zeros(5)]),
                      [[0.0, 400.0]]])
    px = project(H_TRUE, wall)
    with pytest.raises(GeometryError, match=r"fewer than four of the 6 points are in general"):
        fit_homography(px, wall)


def test_fit_rejects_points_behind_camera():
    # swapping two pixel positions folds the mapping: an exact homography still exists, but it
    # puts a point behind the camera
    px = project(H_TRUE, WALL_PTS)[[0, 1, 3, 2]]
    with pytest.raises(GeometryError, match=r"behind the camera and flips the wall's "
                                            r"orientation.*RMS reprojection error"):
        fit_homography(px, WALL_PTS)


def test_fit_warns_on_mirrored_wall():
    wall = WALL_PTS * [-1.0, 1.0]  # x measured to the left
    m = fit_homography(project(H_TRUE, WALL_PTS), wall)
    assert len(m.warnings) == 1 and "mirrors the wall" in m.warnings[0]


def test_geometry_error_is_a_beamwall_error():
    with pytest.raises(BeamwallError):
        fit_homography(WALL_PTS[:2], WALL_PTS[:2])


# ---------------------------------------------------------------------------------------------
# Point mapping


def test_mapping_matches_opencv_perspective_transform():
    m = fit_homography(project(H_TRUE, WALL_PTS), WALL_PTS)
    rng = np.random.default_rng(4)
    wall = rng.uniform(-800, 800, size=(50, 2))
    # OpenCV as the outside reference for applying a homography to points
    ref_px = cv2.perspectiveTransform(wall.reshape(-1, 1, 2), m.wall_to_px).reshape(-1, 2)
    np.testing.assert_allclose(wall_to_pixel(m, wall), ref_px, rtol=1e-12, atol=1e-9)
    px = rng.uniform(0, 600, size=(50, 2))
    ref_mm = cv2.perspectiveTransform(px.reshape(-1, 1, 2),
                                      np.linalg.inv(m.wall_to_px)).reshape(-1, 2)
    np.testing.assert_allclose(pixel_to_wall(m, px), ref_mm, rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(pixel_to_wall(m, wall_to_pixel(m, wall)), wall, atol=1e-9)


def test_mapping_behind_camera_is_nan():
    m = fit_homography(project(H_TRUE, WALL_PTS), WALL_PTS)
    # The camera (yawed 20 deg about a vertical axis) sees the wall's horizon as the line
    # where w = 0; beyond it, to the far side, wall points are behind the camera.
    h = m.wall_to_px
    x_horizon = -h[2, 2] / h[2, 0]  # on y = 0
    far = np.array([[x_horizon + math.copysign(100.0, -h[2, 0]), 0.0]])
    assert np.isnan(wall_to_pixel(m, far)).all()
    # a pixel above the horizon line in the image plane
    h_inv = np.linalg.inv(h)
    u_horizon = -h_inv[2, 2] / h_inv[2, 0]
    beyond = np.array([[u_horizon + math.copysign(50.0, -h_inv[2, 0]), 200.0]])
    assert np.isnan(pixel_to_wall(m, beyond)).all()


def test_footprint_corners_and_horizon():
    m = fit_homography(project(H_TRUE, WALL_PTS), WALL_PTS)
    fp = footprint_mm(m, (400, 600, 3))
    corners = np.array([[-0.5, -0.5], [599.5, -0.5], [599.5, 399.5], [-0.5, 399.5]])
    np.testing.assert_allclose(wall_to_pixel(m, fp), corners, atol=1e-8)
    # top-left corner is up and left on the wall (x right, y up)
    assert fp[0, 1] > 0 > fp[3, 1]
    assert fp[0, 0] < 0 < fp[1, 0]
    # a camera pitched up by 60 deg with a 100 deg vertical field of view sees the horizon
    h_up = camera_homography(yaw_deg=0.0, pitch_deg=60.0, f_px=150.0, size_px=(600, 400))
    m_up = fit_homography(project(h_up, WALL_PTS * 0.2), WALL_PTS * 0.2)
    with pytest.raises(GeometryError, match=r"horizon lies in the photo"):
        footprint_mm(m_up, (400, 600))


def test_mm_per_px_matches_finite_differences():
    m = fit_homography(project(H_TRUE, WALL_PTS), WALL_PTS)
    p = np.array([[150.0, 120.0]])
    e = 1e-3
    du = (pixel_to_wall(m, p + [e, 0]) - pixel_to_wall(m, p - [e, 0]))[0] / (2 * e)
    dv = (pixel_to_wall(m, p + [0, e]) - pixel_to_wall(m, p - [0, e]))[0] / (2 * e)
    det = abs(du[0] * dv[1] - du[1] * dv[0])
    assert mm_per_px(m, p)[0] == pytest.approx(math.sqrt(det), rel=1e-6)


# ---------------------------------------------------------------------------------------------
# Resampling


def wall_function(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """A smooth Gaussian blob off the centre plus a linear ramp; positive everywhere used."""
    blob = 2.0 * np.exp(-((x - 150.0) ** 2 + (y + 80.0) ** 2) / (2 * 350.0**2))
    return (blob + 1.0 + 2e-4 * x + 4e-4 * y).astype(np.float64)


def render(h: np.ndarray, size_px: tuple[int, int], f=wall_function) -> np.ndarray:
    """Photo of f: each pixel centre's wall point, through the inverse homography."""
    w, hh = size_px
    u, v = np.meshgrid(np.arange(w, dtype=np.float64), np.arange(hh, dtype=np.float64))
    xy = project(np.linalg.inv(h), np.column_stack([u.ravel(), v.ravel()]))
    return f(xy[:, 0], xy[:, 1]).reshape(hh, w).astype(np.float32)


def interior(grid: WallGrid, margin_cells: float) -> np.ndarray:
    """Cells whose centre lies at least `margin_cells` cells inside the (convex) footprint.

    For a convex polygon, an inside point's distance to the boundary is its smallest distance
    to the edges' lines.
    """
    yy, xx = np.meshgrid(grid.y_mm, grid.x_mm, indexing="ij")
    fp = grid.footprint_mm
    dist = np.full(xx.shape, np.inf)
    for a, b in zip(fp, np.roll(fp, -1, axis=0), strict=True):
        n = np.array([a[1] - b[1], b[0] - a[0]]) / np.hypot(*(b - a))
        dist = np.minimum(dist, np.abs((xx - a[0]) * n[0] + (yy - a[1]) * n[1]))
    return grid.inside & (dist >= margin_cells * grid.step_mm)


@pytest.mark.parametrize("step_factor", [1.0, 3.0])
def test_resample_recovers_analytic_wall_function(step_factor):
    size = (600, 400)
    m = fit_homography(project(H_TRUE, WALL_PTS), WALL_PTS)
    img = render(H_TRUE, size)
    scale = mm_per_px(m, [[299.5, 199.5]])[0]
    step = None if step_factor == 1.0 else step_factor * scale
    g = resample_to_wall(img, np.zeros(img.shape, bool), m, step_mm=step)
    assert g.shrink_factor == (1 if step is None else 3)
    yy, xx = np.meshgrid(g.y_mm, g.x_mm, indexing="ij")
    truth = wall_function(xx, yy)
    core = interior(g, 3.0)
    assert core.sum() > 0.5 * g.inside.sum()
    rel = np.abs(g.values[core] - truth[core]) / truth[core]
    assert np.nanmax(rel) < 0.005
    assert np.isfinite(g.values[core]).all()
    assert np.isnan(g.values[~g.inside]).all()


def test_resample_default_step_and_inside():
    m = fit_homography(project(H_TRUE, WALL_PTS), WALL_PTS)
    img = render(H_TRUE, (600, 400))
    g = resample_to_wall(img, np.zeros(img.shape, bool), m)
    assert g.step_mm == pytest.approx(mm_per_px(m, [[299.5, 199.5]])[0])
    x_lo, x_hi, y_lo, y_hi = g.bounds_mm
    fp = g.footprint_mm
    # default bounds: the footprint's bounding box (the grid may overhang by < 1 step)
    assert x_lo == pytest.approx(fp[:, 0].min()) and y_hi == pytest.approx(fp[:, 1].max())
    assert 0 <= x_hi - fp[:, 0].max() < g.step_mm and 0 <= fp[:, 1].min() - y_lo < g.step_mm
    # inside <=> the cell centre maps inside the photo
    yy, xx = np.meshgrid(g.y_mm, g.x_mm, indexing="ij")
    px = wall_to_pixel(m, np.column_stack([xx.ravel(), yy.ravel()]))
    in_photo = ((px[:, 0] >= -0.5) & (px[:, 0] <= 599.5) & (px[:, 1] >= -0.5)
                & (px[:, 1] <= 399.5)).reshape(g.inside.shape)
    assert np.mean(in_photo == g.inside) > 0.999  # cells on the very edge may go either way
    # the footprint of a yawed camera is a trapezoid: part of its bounding box is outside
    assert 0.6 < g.inside.mean() < 0.99


def test_resample_max_cells_enlarges_step():
    m = fit_homography(project(H_TRUE, WALL_PTS), WALL_PTS)
    img = render(H_TRUE, (600, 400))
    g = resample_to_wall(img, np.zeros(img.shape, bool), m, max_cells=20_000)
    assert g.values.size <= 20_000
    assert g.values.size > 19_000
    assert g.shrink_factor >= 2
    with pytest.raises(GeometryError, match=r"more than max_cells = 100 cells"):
        resample_to_wall(img, np.zeros(img.shape, bool), m, step_mm=1.0, max_cells=100)


def identity_mapping(scale_mm_per_px: float = 1.0) -> WallMapping:
    """Wall (x, y) mm -> pixel (x / s, -y / s): the photo is the wall, seen square."""
    s = scale_mm_per_px
    px = np.array([[0.0, 0.0], [100.0, 0.0], [100.0, 80.0], [0.0, 80.0]])
    wall = px * [s, -s]
    return fit_homography(px, wall)


def test_resample_y_up_with_asymmetric_pattern():
    m = fit_homography(project(H_TRUE, WALL_PTS), WALL_PTS)

    def spot(x, y):  # a narrow spot up and to the left on the wall
        return np.exp(-((x + 300.0) ** 2 + (y - 200.0) ** 2) / (2 * 40.0**2))

    img = render(H_TRUE, (600, 400), spot)
    g = resample_to_wall(img, np.zeros(img.shape, bool), m)
    i, j = np.unravel_index(np.nanargmax(g.values), g.values.shape)
    assert g.x_mm[j] == pytest.approx(-300.0, abs=2 * g.step_mm)
    assert g.y_mm[i] == pytest.approx(200.0, abs=2 * g.step_mm)
    # in the photo the spot is above the centre (small row) and left of it
    u, v = wall_to_pixel(m, [[-300.0, 200.0]])[0]
    assert u < 299.5 and v < 199.5
    # and on the grid it is in the upper half (small row index)
    assert i < g.values.shape[0] / 2


def test_resample_nan_stays_local():
    m = identity_mapping()
    rng = np.random.default_rng(5)
    img = (1.0 + 0.01 * rng.standard_normal((80, 100))).astype(np.float32)
    bad = np.zeros(img.shape, bool)
    bad[20, 30] = bad[50:53, 60:64] = True
    img[bad] = np.nan
    g = resample_to_wall(img, np.zeros(img.shape, bool), m)
    assert g.values.shape == (80, 100) and g.shrink_factor == 1
    nan = np.isnan(g.values)
    # every invalid pixel's cell is NaN; NaN spreads by at most one cell
    assert nan[bad].all()
    grown = cv2.dilate(bad.astype(np.uint8), np.ones((3, 3), np.uint8)).astype(bool)
    assert not (nan & ~grown).any()
    assert nan.sum() < grown.sum()


def test_resample_nan_in_area_average():
    m = identity_mapping()
    img = np.full((80, 100), 2.0, dtype=np.float32)
    img[0, 0] = np.nan                      # one invalid pixel in block (0, 0)
    img[10, 1] = 6.0                        # block (5, 0) = mean(2, 6, 2, 2)
    img[40:42, 40:42] = np.nan              # block (20, 20) entirely invalid
    g = resample_to_wall(img, np.zeros(img.shape, bool), m, step_mm=2.0)
    assert g.shrink_factor == 2 and g.values.shape == (40, 50)
    assert g.values[0, 0] == pytest.approx(2.0)  # mean of the three valid pixels
    assert g.values[5, 0] == pytest.approx(3.0)
    nan = np.isnan(g.values)
    assert nan[20, 20]
    # spreads at most one cell around the invalid block
    assert nan.sum() <= 9 and not nan[:18].any() and not nan[23:].any()


@pytest.mark.parametrize("nan_fraction", [0.002, 0.3])
def test_resample_area_average_partial_blocks_and_many_nans(nan_fraction):
    # 0.2 % invalid pixels: the invalid blocks are gathered one by one; 30 %: a weight image.
    # 80 x 101 px in 3 x 3 blocks: the last block row and column are partial (2 px).
    m = identity_mapping()
    rng = np.random.default_rng(9)
    img = rng.uniform(1.0, 2.0, size=(80, 101)).astype(np.float32)
    img[rng.random(img.shape) < nan_fraction] = np.nan
    g = resample_to_wall(img, np.zeros(img.shape, bool), m, step_mm=3.0)
    assert g.shrink_factor == 3 and g.values.shape == (27, 34)
    padded = np.full((81, 102), np.nan, np.float32)
    padded[:80, :101] = img
    blocks = padded.reshape(27, 3, 34, 3).transpose(0, 2, 1, 3).reshape(27, 34, 9)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # all-NaN blocks
        expected = np.nanmean(blocks, axis=2)  # the mean of each block's valid pixels
    ok = np.isfinite(g.values) & g.inside
    assert g.inside.all() and ok.sum() > 0.8 * g.values.size
    assert ok[-1].sum() > 20 and ok[:, -1].sum() > 15
    np.testing.assert_allclose(g.values[ok], expected[ok], rtol=1e-6)


def test_resample_area_average_keeps_mean_and_lowers_noise():
    m = identity_mapping()
    rng = np.random.default_rng(6)
    sigma, k = 0.1, 4
    img = (1.0 + sigma * rng.standard_normal((400, 600))).astype(np.float32)
    g = resample_to_wall(img, np.zeros(img.shape, bool), m, step_mm=float(k))
    assert g.shrink_factor == k and g.values.shape == (100, 150)
    v = g.values[g.inside]
    assert np.isfinite(v).all()
    # the grid is aligned with the k x k blocks, so each cell is one block mean: the mean is
    # kept and the noise falls by k (the mean of k^2 independent samples)
    assert abs(v.mean() - 1.0) < 5 * sigma / math.sqrt(img.size)
    assert np.std(v) == pytest.approx(sigma / k, rel=0.05)
    block = img[:k, :k].mean()
    assert g.values[0, 0] == pytest.approx(block, rel=1e-5)


def test_resample_saturated_mask():
    m = identity_mapping()
    img = np.ones((80, 100), dtype=np.float32)
    sat = np.zeros(img.shape, bool)
    sat[30:34, 40:44] = True
    img[sat] = np.nan
    g = resample_to_wall(img, sat, m)
    assert g.saturated.dtype == bool
    assert g.saturated[sat].all()
    grown = cv2.dilate(sat.astype(np.uint8), np.ones((3, 3), np.uint8)).astype(bool)
    assert not (g.saturated & ~grown).any()
    # with area averaging: a block holding one clipped pixel is flagged
    sat2 = np.zeros(img.shape, bool)
    sat2[11, 21] = True
    g2 = resample_to_wall(np.ones_like(img), sat2, m, step_mm=2.0)
    assert g2.saturated[5, 10]
    assert g2.saturated.sum() <= 4


def test_resample_bounds_and_errors():
    m = identity_mapping()
    img = np.ones((80, 100), dtype=np.float32)
    sat = np.zeros(img.shape, bool)
    g = resample_to_wall(img, sat, m, step_mm=2.0, bounds_mm=(-20.0, 20.0, -10.0, 10.0))
    assert g.values.shape == (10, 20)
    assert g.x0_mm == -19.0 and g.y0_mm == 9.0
    # the photo covers x in [-0.5, 99.5], y in [-79.5, 0.5]: cells at x >= 1 and y <= -1
    expected = np.zeros((10, 20), bool)
    expected[5:, 10:] = True
    np.testing.assert_array_equal(g.inside, expected)
    assert np.isnan(g.values[~g.inside]).all() and (g.values[g.inside] == 1.0).all()
    with pytest.raises(GeometryError, match="no grid cell lies inside the photo"):
        resample_to_wall(img, sat, m, bounds_mm=(500.0, 600.0, 0.0, 100.0))
    with pytest.raises(GeometryError, match="bounds_mm"):
        resample_to_wall(img, sat, m, bounds_mm=(5.0, 1.0, 0.0, 100.0))
    with pytest.raises(GeometryError, match="step_mm must be positive"):
        resample_to_wall(img, sat, m, step_mm=0.0)
    with pytest.raises(ImageError, match="saturated has shape"):
        resample_to_wall(img, sat[1:], m)
    with pytest.raises(ImageError, match="2-D"):
        resample_to_wall(img[None], sat[None], m)


# ---------------------------------------------------------------------------------------------
# Obliquity and polar angles


def test_cos3_law_against_3d_geometry():
    rng = np.random.default_rng(7)
    axis, d_m = np.array([120.0, -40.0]), 2.5
    x, y = rng.uniform(-3000, 3000, 40), rng.uniform(-3000, 3000, 40)
    # 3-D: torch at (axis, d) above the wall plane z = 0, aimed along -z.
    torch = np.array([axis[0], axis[1], 1000.0 * d_m])
    ray = np.column_stack([x, y, np.zeros_like(x)]) - torch
    dist = np.linalg.norm(ray, axis=1)
    cos_theta = -ray[:, 2] / dist                      # angle from the torch axis (0, 0, -1)
    cos_xi = -ray[:, 2] / dist                         # incidence on the wall (normal +z)
    # inverse-square cosine law (IES Lighting Handbook): E = I cos(xi) / D^2
    e_per_i = cos_xi / dist**2
    d_mm = 1000.0 * d_m
    np.testing.assert_allclose(obliquity_cos3(x, y, axis_mm=axis, distance_m=d_m),
                               e_per_i * d_mm**2, rtol=1e-12)
    theta, phi = polar_angles_deg(x, y, axis_mm=axis, distance_m=d_m)
    np.testing.assert_allclose(np.cos(np.radians(theta)), cos_theta, rtol=1e-12)
    np.testing.assert_allclose(phi, np.degrees(np.arctan2(y - axis[1], x - axis[0])) % 360,
                               atol=1e-9)


def test_polar_angles_quadrants_and_axis():
    x = np.array([0.0, 1000.0, 0.0, -1000.0, 0.0, 1000.0])
    y = np.array([0.0, 0.0, 1000.0, 0.0, -1000.0, -1e-13])
    theta, phi = polar_angles_deg(x, y, axis_mm=(0.0, 0.0), distance_m=1.0)
    np.testing.assert_allclose(theta, [0, 45, 45, 45, 45, 45], atol=1e-12)
    np.testing.assert_allclose(phi[:5], [0, 0, 90, 180, 270], atol=1e-12)
    assert 0.0 <= phi[5] < 360.0
    assert obliquity_cos3(0.0, 0.0, axis_mm=(0.0, 0.0), distance_m=3.0) == 1.0
    with pytest.raises(GeometryError, match="distance_m must be positive"):
        obliquity_cos3(0.0, 0.0, axis_mm=(0.0, 0.0), distance_m=0.0)
    with pytest.raises(GeometryError, match="axis_mm"):
        polar_angles_deg(0.0, 0.0, axis_mm=(0.0,), distance_m=1.0)


# ---------------------------------------------------------------------------------------------
# Largest inscribed circle


def test_inscribed_radius_rectangle():
    rect = [[-500.0, 300.0], [500.0, 300.0], [500.0, -300.0], [-500.0, -300.0]]
    # analytic: the distance to the nearest side
    assert largest_inscribed_radius_mm(rect, (0.0, 0.0)) == 300.0
    assert largest_inscribed_radius_mm(rect, (450.0, -100.0)) == 50.0
    assert largest_inscribed_radius_mm(rect[::-1], (-480.0, 290.0)) == pytest.approx(10.0)
    assert largest_inscribed_radius_mm(rect, (600.0, 0.0)) == 0.0
    assert largest_inscribed_radius_mm(rect, (500.0, 0.0)) == 0.0


def test_inscribed_radius_perspective_quad_against_opencv():
    m = fit_homography(project(H_TRUE, WALL_PTS), WALL_PTS)
    fp = footprint_mm(m, (400, 600))
    contour = fp.astype(np.float32).reshape(-1, 1, 2)
    rng = np.random.default_rng(8)
    lo, hi = fp.min(axis=0), fp.max(axis=0)
    for c in rng.uniform(lo, hi, size=(40, 2)):
        # OpenCV as the outside reference: signed distance to the nearest contour edge
        ref = cv2.pointPolygonTest(contour, (float(c[0]), float(c[1])), True)
        r = largest_inscribed_radius_mm(fp, c)
        assert r == pytest.approx(max(ref, 0.0), abs=1e-3)


def test_inscribed_radius_of_grid_includes_its_bounds():
    m = identity_mapping()
    g = resample_to_wall(np.ones((80, 100), np.float32), np.zeros((80, 100), bool), m,
                         step_mm=1.0, bounds_mm=(-0.5, 39.5, -79.5, 0.5))
    # footprint x in [-0.5, 99.5]; grid x in [-0.5, 39.5]: the grid's right edge is nearer
    assert largest_inscribed_radius_mm(g, (30.0, -40.0)) == pytest.approx(9.5)
    assert largest_inscribed_radius_mm(g.footprint_mm, (30.0, -40.0)) == pytest.approx(30.5)
    assert largest_inscribed_radius_mm(g, (50.0, -40.0)) == 0.0
