"""Fit and vet the pixel-to-wall homography; resample the signal onto a wall grid.

Frames (the contract's conventions):

- wall: millimetres, x to the right, y **up**, as seen standing at the torch facing the wall;
- pixels: x to the right, y **down**, pixel centres at integer coordinates, so the photo's
  outer edges lie at -0.5 and W - 0.5 (H - 0.5) (OpenCV's convention);
- arrays index ``[row, col]``; a :class:`WallGrid`'s row 0 is its top (largest y).

The mapping is stored as the 3 x 3 homography ``wall_to_px`` taking homogeneous wall points
``(x_mm, y_mm, 1)`` to homogeneous pixels ``(w u, w v, w)``. Its sign is fixed so that
``w > 0`` for wall points in front of the camera, and its scale so that ``w`` averages 1 over
the fitted points. Points with ``w <= 0`` lie behind the camera: they have no image.

References
----------
.. [HZ] R. Hartley and A. Zisserman, *Multiple View Geometry in Computer Vision*, 2nd ed.,
   Cambridge University Press, 2003: Algorithm 4.2, "The normalized DLT for 2D homographies"
   (section 4.4.4, p. 109); degenerate configurations in section 4.1 (no three of four points
   collinear).
.. [IESHB] D. DiLaura, K. Houser, R. Mistrick, G. Steffy (eds.), *The Lighting Handbook*,
   10th ed., Illuminating Engineering Society, 2011: point-source illuminance
   E = I cos(xi) / D^2 (inverse-square and cosine laws), in the chapter on lighting
   calculations (chapter from memory, to confirm). On a plane at perpendicular distance d from
   the source, D = d / cos(theta) and xi = theta, so E = I cos^3(theta) / d^2.
.. [OCV] OpenCV 4.x/5.x documentation: ``cv2.warpPerspective`` (with ``WARP_INVERSE_MAP`` the
   matrix maps destination to source pixels), ``cv2.resize`` with ``INTER_AREA`` (area
   averaging; an exact block mean for an integer factor), pixel centres at integer
   coordinates.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import cv2
import numpy as np
from numpy.typing import ArrayLike

from beamwall.errors import GeometryError, ImageError

__all__ = [
    "WallMapping",
    "WallGrid",
    "fit_homography",
    "wall_to_pixel",
    "pixel_to_wall",
    "footprint_mm",
    "mm_per_px",
    "resample_to_wall",
    "obliquity_cos3",
    "polar_angles_deg",
    "largest_inscribed_radius_mm",
]

#: A point whose triangle with two others has an area below this fraction of s^2 (s: the
#: points' mean distance from their centroid) counts as lying on their line. For a triangle
#: whose base spans about 2 s, this is a point nearer to the line than about 2 % of s.
#: Common practice, no source (the value is our choice).
COLLINEAR_AREA_RATIO: float = 0.02

#: Two points nearer to each other than this fraction of s count as the same point.
#: Common practice, no source.
DUPLICATE_DISTANCE_RATIO: float = 1e-3

#: The normalised DLT system is rank-deficient when its 8th singular value falls below this
#: fraction of its first. Common practice, no source.
DLT_RANK_RATIO: float = 1e-9

#: Default bound on the RMS wall reprojection error: the larger of this many mm ...
DEFAULT_MAX_RMS_MM: float = 5.0
#: ... and this fraction of the largest distance between two of the wall points.
#: Common practice, no source.
DEFAULT_MAX_RMS_FRACTION: float = 0.01

# OpenCV's remap stores integer source coordinates as 16-bit integers.
_CV_MAX_SIDE = 32767


@dataclass(frozen=True)
class WallMapping:
    """A vetted homography from wall millimetres to photo pixels.

    Attributes
    ----------
    wall_to_px : (3, 3) float64
        Homography, wall mm (x right, y up) -> pixel (x right, y down); sign such that
        ``w > 0`` in front of the camera, scale such that ``w`` averages 1 over the points.
    rms_error_mm : float
        RMS reprojection error of the fitted points on the wall (pixels mapped through the
        inverse, compared with the given wall positions), mm. Always 0 for four points, which
        a homography fits exactly.
    n_points : int
        Number of fitted points.
    point_errors_mm : (n_points,) float64
        Each point's reprojection error on the wall, mm.
    max_rms_mm : float
        The bound the RMS error was checked against, mm.
    warnings : tuple of str
        Soft problems, e.g. a mapping that mirrors the wall.
    """

    wall_to_px: np.ndarray     # (3, 3) wall mm (x right, y up) -> pixel (x right, y down)
    rms_error_mm: float        # reprojection error of the fitted points, on the wall
    n_points: int
    point_errors_mm: np.ndarray = field(default_factory=lambda: np.zeros(0))
    max_rms_mm: float = math.inf
    warnings: tuple[str, ...] = ()

    @property
    def px_to_wall(self) -> np.ndarray:
        """(3, 3) inverse homography, pixel -> wall mm (same sign convention)."""
        return np.linalg.inv(self.wall_to_px)


@dataclass(frozen=True)
class WallGrid:
    """A quantity sampled on a regular wall grid.

    values[i, j] is at x = x0_mm + j*step_mm, y = y0_mm - i*step_mm (row 0 is the top: y up).
    Each value stands for the cell of side ``step_mm`` centred there.
    """

    values: np.ndarray         # (ny, nx) float32; NaN outside the photo or clipped
    saturated: np.ndarray      # (ny, nx) bool: clipped in every exposure
    inside: np.ndarray         # (ny, nx) bool: inside the photo's footprint on the wall
    x0_mm: float
    y0_mm: float
    step_mm: float
    footprint_mm: np.ndarray   # (4, 2) the photo's corners on the wall, mm
    shrink_factor: int = 1     # source pixels per side averaged before sampling (INTER_AREA)
    warnings: tuple[str, ...] = ()

    @property
    def x_mm(self) -> np.ndarray:
        """(nx,) wall x of the grid's columns, mm."""
        return self.x0_mm + self.step_mm * np.arange(self.values.shape[1])

    @property
    def y_mm(self) -> np.ndarray:
        """(ny,) wall y of the grid's rows, mm (decreasing: row 0 is the top)."""
        return self.y0_mm - self.step_mm * np.arange(self.values.shape[0])

    @property
    def bounds_mm(self) -> tuple[float, float, float, float]:
        """(x_min, x_max, y_min, y_max) of the grid's outer cell edges, mm."""
        ny, nx = self.values.shape
        h = 0.5 * self.step_mm
        return (
            self.x0_mm - h,
            self.x0_mm + (nx - 1) * self.step_mm + h,
            self.y0_mm - (ny - 1) * self.step_mm - h,
            self.y0_mm + h,
        )


# ---------------------------------------------------------------------------------------------
# Fitting


def _points(a: Any, name: str, source: str) -> np.ndarray:
    arr = np.asarray(a, dtype=np.float64)
    if arr.ndim != 2 or arr.shape[1] != 2:
        raise GeometryError(f"{name} must have shape (n, 2), got {arr.shape}", field=source)
    if not np.all(np.isfinite(arr)):
        bad = np.flatnonzero(~np.all(np.isfinite(arr), axis=1)) + 1
        raise GeometryError(f"{name}: point(s) {_list(bad)} are not finite", field=source)
    return arr


def _list(idx: Any) -> str:
    """'#1, #2 and #4' for 1-based point numbers."""
    s = [f"#{int(i)}" for i in idx]
    return s[0] if len(s) == 1 else ", ".join(s[:-1]) + " and " + s[-1]


def _normaliser(p: np.ndarray) -> tuple[np.ndarray, float]:
    """Similarity T moving the points' centroid to 0 and their mean distance to sqrt(2) [HZ]."""
    c = p.mean(axis=0)
    s = float(np.mean(np.hypot(*(p - c).T)))
    k = math.sqrt(2.0) / s if s > 0 else 1.0
    t = np.array([[k, 0.0, -k * c[0]], [0.0, k, -k * c[1]], [0.0, 0.0, 1.0]])
    return t, s


def _apply(h: np.ndarray, p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Map (..., 2) points through h; return the dehomogenised points and w (no w check)."""
    x, y = p[..., 0], p[..., 1]
    w = h[2, 0] * x + h[2, 1] * y + h[2, 2]
    with np.errstate(divide="ignore", invalid="ignore"):
        u = (h[0, 0] * x + h[0, 1] * y + h[0, 2]) / w
        v = (h[1, 0] * x + h[1, 1] * y + h[1, 2]) / w
    return np.stack([u, v], axis=-1), w


def _tri_area(a: np.ndarray, b: np.ndarray, c: np.ndarray) -> np.ndarray:
    return 0.5 * np.abs((b[..., 0] - a[..., 0]) * (c[..., 1] - a[..., 1])
                        - (b[..., 1] - a[..., 1]) * (c[..., 0] - a[..., 0]))


def _check_configuration(p: np.ndarray, frame: str, source: str) -> None:
    """Duplicates and collinearity of one frame's point set, relative to its spread s."""
    n = len(p)
    c = p.mean(axis=0)
    s = float(np.mean(np.hypot(*(p - c).T)))
    d = np.hypot(p[:, None, 0] - p[None, :, 0], p[:, None, 1] - p[None, :, 1])
    iu = np.triu_indices(n, 1)
    close = d[iu] <= DUPLICATE_DISTANCE_RATIO * s
    if s == 0 or np.any(close):
        k = int(np.argmax(close)) if s > 0 else 0
        i, j = (iu[0][k], iu[1][k]) if s > 0 else (0, 1)
        raise GeometryError(
            f"points {_list([i + 1, j + 1])} coincide in the {frame} frame "
            f"({d[i, j]:.3g} apart); every point must be distinct", field=source)
    tol = COLLINEAR_AREA_RATIO * s * s
    if n == 4:
        for tri in ((0, 1, 2), (0, 1, 3), (0, 2, 3), (1, 2, 3)):
            if _tri_area(p[tri[0]], p[tri[1]], p[tri[2]]) < tol:
                raise GeometryError(
                    f"points {_list(np.array(tri) + 1)} lie on a line in the {frame} frame; "
                    "no three of four points may be collinear", field=source)
        return
    # n > 4: greedily find four points with no three on a line.
    i, j = np.unravel_index(int(np.argmax(d)), d.shape)
    area_ij = _tri_area(p[i], p[j], p)
    k = int(np.argmax(area_ij))
    if area_ij[k] < tol:
        raise GeometryError(
            f"all {n} points lie near one line in the {frame} frame", field=source)
    worst = np.minimum(np.minimum(area_ij, _tri_area(p[i], p[k], p)), _tri_area(p[j], p[k], p))
    if worst.max() < tol:
        raise GeometryError(
            f"fewer than four of the {n} points are in general position in the {frame} frame "
            "(all but two or three lie near one line); a homography needs four points with "
            "no three on a line", field=source)


def fit_homography(
    pixel_xy: ArrayLike,
    wall_xy_mm: ArrayLike,
    *,
    max_rms_mm: float | None = None,
    source: str = "[wall] points",
) -> WallMapping:
    """Fit the wall-to-pixel homography to point pairs by the normalised DLT, and vet it.

    Parameters
    ----------
    pixel_xy : (n, 2) array_like
        Pixel positions (x right, y down, pixel centres at integers), px; n >= 4.
    wall_xy_mm : (n, 2) array_like
        The same points' wall positions (x right, y up as seen from the torch), mm.
    max_rms_mm : float, optional
        Largest acceptable RMS reprojection error on the wall, mm. Default: the larger of
        5 mm and 1 % of the largest distance between two wall points (common practice, no
        source).
    source : str, optional
        Name of the input, used as the field in error messages.

    Returns
    -------
    WallMapping
        The homography with its RMS and per-point reprojection errors on the wall.

    Raises
    ------
    GeometryError
        Fewer than 4 points; non-finite or coinciding points; three of four points on a line
        (n > 4: fewer than four points in general position) in either frame; a rank-deficient
        system; a mapping that puts some points behind the camera or folds the wall
        (orientation flipping between points); an RMS reprojection error above
        ``max_rms_mm``.

    Notes
    -----
    Normalised DLT [HZ]_ (Alg. 4.2): each point set is moved to zero mean and scaled to mean
    distance sqrt(2) from the origin; each pair gives two rows of A h = 0; h is the right
    singular vector of the smallest singular value; the result is denormalised. The
    algebraic solution is not refined by an iterative least-squares step.

    A point is "on a line" with two others when their triangle's area is below
    ``COLLINEAR_AREA_RATIO`` times s^2, s being the frame's mean point distance from the
    centroid (about 2 % of s off the line); points closer than 0.1 % of s coincide. For more
    than four points a greedy search looks for four points with no three on a line, and the
    DLT matrix must have rank 8 (8th singular value above 1e-9 of the first).

    Orientation: the Jacobian determinant of a homography at a point is det(H) / w^3, so the
    wall keeps one orientation across the points exactly when w keeps one sign. A mapping
    that mirrors the wall everywhere (a camera behind a translucent screen, or a sign slip in
    the wall coordinates) is valid and returned with a warning.

    With exactly four points the fit is exact and the RMS check cannot fail; more points
    give a real check.

    Examples
    --------
    >>> px = [[100.0, 100.0], [300.0, 100.0], [300.0, 250.0], [100.0, 250.0]]
    >>> mm = [[-500.0, 375.0], [500.0, 375.0], [500.0, -375.0], [-500.0, -375.0]]
    >>> m = fit_homography(px, mm)
    >>> [round(float(c), 6) for c in wall_to_pixel(m, [[0.0, 0.0]])[0]]
    [200.0, 175.0]
    >>> m.rms_error_mm < 1e-9, m.n_points
    (True, 4)
    """
    px = _points(pixel_xy, "pixel positions", source)
    mm = _points(wall_xy_mm, "wall positions", source)
    if len(px) != len(mm):
        raise GeometryError(
            f"{len(px)} pixel positions but {len(mm)} wall positions", field=source)
    n = len(px)
    if n < 4:
        raise GeometryError(f"a homography needs at least 4 points, got {n}", field=source)
    _check_configuration(mm, "wall", source)
    _check_configuration(px, "photo", source)

    # Normalised DLT [HZ] Alg. 4.2.
    t_mm, _ = _normaliser(mm)
    t_px, _ = _normaliser(px)
    a = (t_mm @ np.column_stack([mm, np.ones(n)]).T).T
    b = (t_px @ np.column_stack([px, np.ones(n)]).T).T
    x, y = a[:, 0], a[:, 1]
    u, v = b[:, 0], b[:, 1]
    z, o = np.zeros(n), np.ones(n)
    rows = np.empty((2 * n, 9))
    rows[0::2] = np.column_stack([x, y, o, z, z, z, -u * x, -u * y, -u])
    rows[1::2] = np.column_stack([z, z, z, x, y, o, -v * x, -v * y, -v])
    _, sv, vt = np.linalg.svd(rows, full_matrices=True)
    if sv[7] < DLT_RANK_RATIO * sv[0]:
        raise GeometryError(
            "the points do not determine a homography (the normalised DLT system is "
            f"rank-deficient: singular value ratio {sv[7] / sv[0]:.1e})", field=source)
    hn = vt[-1].reshape(3, 3)
    h = np.linalg.inv(t_px) @ hn @ t_mm

    # Sign: w > 0 in front of the camera (the majority), then scale: mean w = 1.
    w = h[2, 0] * mm[:, 0] + h[2, 1] * mm[:, 1] + h[2, 2]
    if np.sum(np.sign(w)) < 0 or (np.sum(np.sign(w)) == 0 and w[0] < 0):
        h, w = -h, -w
    wmax = float(np.max(np.abs(w)))
    behind = w <= 1e-9 * wmax
    h_inv = np.linalg.inv(h)
    back, _ = _apply(h_inv, px)
    err = np.hypot(*(back - mm).T)
    rms = float(np.sqrt(np.mean(err**2)))
    if np.any(behind):
        raise GeometryError(
            f"the fitted mapping puts point(s) {_list(np.flatnonzero(behind) + 1)} behind the "
            "camera and flips the wall's orientation between points (RMS reprojection error "
            f"{rms:.3g} mm); check that each pixel position is paired with its own wall "
            "position", field=source)
    h = h / float(np.mean(w))

    extent = float(np.max(np.hypot(mm[:, None, 0] - mm[None, :, 0],
                                   mm[:, None, 1] - mm[None, :, 1])))
    if max_rms_mm is None:
        max_rms_mm = max(DEFAULT_MAX_RMS_MM, DEFAULT_MAX_RMS_FRACTION * extent)
    elif not (max_rms_mm > 0):
        raise GeometryError(f"max_rms_mm must be positive, got {max_rms_mm}", field=source)
    if rms > max_rms_mm:
        worst = int(np.argmax(err))
        raise GeometryError(
            f"RMS reprojection error on the wall is {rms:.3g} mm, above {max_rms_mm:.3g} mm; "
            f"worst point #{worst + 1} ({err[worst]:.3g} mm off); check that point's pixel "
            "and wall positions", field=source)

    warnings: list[str] = []
    if np.linalg.det(h) > 0:
        # wall (y up) -> pixels (y down) seen from the front has det J < 0.
        warnings.append(
            f"{source}: the mapping mirrors the wall (as if the camera looked at it from "
            "behind); check the signs of the wall x and y positions (x right, y up, as seen "
            "from the torch)")
    h.setflags(write=False)
    err.setflags(write=False)
    return WallMapping(
        wall_to_px=h,
        rms_error_mm=rms,
        n_points=n,
        point_errors_mm=err,
        max_rms_mm=float(max_rms_mm),
        warnings=tuple(warnings),
    )


# ---------------------------------------------------------------------------------------------
# Point mapping


def _xy(a: ArrayLike, name: str) -> np.ndarray:
    arr = np.asarray(a, dtype=np.float64)
    if arr.ndim < 1 or arr.shape[-1] != 2:
        raise GeometryError(f"{name} must have shape (..., 2), got {arr.shape}")
    return arr


def wall_to_pixel(mapping: WallMapping, xy_mm: ArrayLike) -> np.ndarray:
    """Map wall positions to pixel positions.

    Parameters
    ----------
    mapping : WallMapping
        From :func:`fit_homography`.
    xy_mm : (..., 2) array_like
        Wall positions (x right, y up), mm; typically (N, 2).

    Returns
    -------
    (..., 2) ndarray
        Pixel positions (x right, y down), px; NaN for points behind the camera (w <= 0).

    Notes
    -----
    (u, v) = (h1 . p, h2 . p) / (h3 . p) with p = (x, y, 1) [HZ]_.

    Examples
    --------
    >>> m = WallMapping(np.array([[1.0, 0, 10], [0, -1.0, 20], [0, 0, 1]]), 0.0, 4)
    >>> wall_to_pixel(m, [[0.0, 0.0], [5.0, 5.0]]).tolist()
    [[10.0, 20.0], [15.0, 15.0]]
    """
    p = _xy(xy_mm, "xy_mm")
    out, w = _apply(np.asarray(mapping.wall_to_px, dtype=np.float64), p)
    out[~(w > 0)] = np.nan
    return out


def pixel_to_wall(mapping: WallMapping, xy_px: ArrayLike) -> np.ndarray:
    """Map pixel positions to wall positions.

    Parameters
    ----------
    mapping : WallMapping
        From :func:`fit_homography`.
    xy_px : (..., 2) array_like
        Pixel positions (x right, y down, centres at integers), px; typically (N, 2).

    Returns
    -------
    (..., 2) ndarray
        Wall positions (x right, y up), mm; NaN for pixels at or above the wall's horizon
        (whose ray misses the wall in front of the camera).

    Notes
    -----
    Through the inverse homography [HZ]_. For H^-1 (u, v, 1) = c (x, y, 1), the wall point's
    w under H is 1/c, so the pixel sees the wall in front of the camera exactly when c > 0.

    Examples
    --------
    >>> m = WallMapping(np.array([[1.0, 0, 10], [0, -1.0, 20], [0, 0, 1]]), 0.0, 4)
    >>> pixel_to_wall(m, [[10.0, 20.0], [15.0, 15.0]]).tolist()
    [[0.0, 0.0], [5.0, 5.0]]
    """
    p = _xy(xy_px, "xy_px")
    out, c = _apply(np.linalg.inv(np.asarray(mapping.wall_to_px, dtype=np.float64)), p)
    out[~(c > 0)] = np.nan
    return out


def _image_hw(image_shape: Any) -> tuple[int, int]:
    shape = tuple(int(s) for s in image_shape)
    if len(shape) < 2 or shape[0] < 1 or shape[1] < 1:
        raise ImageError(f"image shape must be (H, W[, C]) with H, W >= 1, got {shape}")
    return shape[0], shape[1]


def footprint_mm(mapping: WallMapping, image_shape: Any) -> np.ndarray:
    """Map the photo's outline to the wall: its four outer corners in wall mm.

    Parameters
    ----------
    mapping : WallMapping
        From :func:`fit_homography`.
    image_shape : tuple
        ``(H, W)`` or ``(H, W, C)`` of the photo, px.

    Returns
    -------
    (4, 2) ndarray
        Wall positions, mm, of the pixel corners (-0.5, -0.5), (W - 0.5, -0.5),
        (W - 0.5, H - 0.5), (-0.5, H - 0.5): top-left, top-right, bottom-right, bottom-left of
        the photo. The quadrilateral is convex (a homography with no horizon in the photo maps
        the rectangle to a convex quadrilateral).

    Raises
    ------
    GeometryError
        A corner's ray misses the wall in front of the camera: the wall's horizon lies in the
        photo.

    Examples
    --------
    >>> m = WallMapping(np.array([[1.0, 0, 1.5], [0, -1.0, 0.5], [0, 0, 1]]), 0.0, 4)
    >>> footprint_mm(m, (2, 4)).tolist()
    [[-2.0, 1.0], [2.0, 1.0], [2.0, -1.0], [-2.0, -1.0]]
    """
    h_px, w_px = _image_hw(image_shape)
    corners = np.array([[-0.5, -0.5], [w_px - 0.5, -0.5], [w_px - 0.5, h_px - 0.5],
                        [-0.5, h_px - 0.5]])
    out, c = _apply(np.linalg.inv(np.asarray(mapping.wall_to_px, dtype=np.float64)), corners)
    if not np.all(c > 1e-12 * np.max(np.abs(c))):
        raise GeometryError(
            "the wall's horizon lies in the photo: some photo corners do not see the wall; "
            "aim the camera at the wall so that the wall fills the frame")
    return out


def mm_per_px(mapping: WallMapping, xy_px: ArrayLike) -> np.ndarray:
    """Local scale of the mapping at pixel positions: wall mm per pixel (geometric mean).

    Parameters
    ----------
    mapping : WallMapping
        From :func:`fit_homography`.
    xy_px : (..., 2) array_like
        Pixel positions, px.

    Returns
    -------
    (...) ndarray
        sqrt(|det J|) of the pixel -> wall map at each position, mm/px (the side of a square
        with the wall area one pixel covers); NaN beyond the horizon.

    Notes
    -----
    For a homography G (here pixel -> wall), det J(p) = det(G) / c(p)^3 with c = g3 . (u, v, 1)
    for G normalised as given (a standard property of plane projective maps, [HZ]_ ch. 2).

    Examples
    --------
    >>> m = WallMapping(np.array([[0.5, 0, 0], [0, -0.5, 0], [0, 0, 1]]), 0.0, 4)
    >>> mm_per_px(m, [[3.0, 4.0]]).tolist()
    [2.0]
    """
    p = _xy(xy_px, "xy_px")
    g = np.linalg.inv(np.asarray(mapping.wall_to_px, dtype=np.float64))
    c = g[2, 0] * p[..., 0] + g[2, 1] * p[..., 1] + g[2, 2]
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.sqrt(np.abs(np.linalg.det(g) / c**3))
    return np.where(c > 0, s, np.nan)


# ---------------------------------------------------------------------------------------------
# Resampling


def _row_intervals(poly: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Return the x extent of a convex polygon along lines at heights y (lo > hi if missed)."""
    lo = np.full(y.shape, np.inf)
    hi = np.full(y.shape, -np.inf)
    m = len(poly)
    for e in range(m):
        (x1, y1), (x2, y2) = poly[e], poly[(e + 1) % m]
        if y1 == y2:
            hit = y == y1
            lo = np.where(hit, np.minimum(lo, min(x1, x2)), lo)
            hi = np.where(hit, np.maximum(hi, max(x1, x2)), hi)
            continue
        t = (y - y1) / (y2 - y1)
        hit = (t >= 0) & (t <= 1)
        xe = x1 + t * (x2 - x1)
        lo = np.where(hit, np.minimum(lo, xe), lo)
        hi = np.where(hit, np.maximum(hi, xe), hi)
    return lo, hi


def _block_any(mask: np.ndarray, k: int, shape: tuple[int, int]) -> np.ndarray:
    """Logical OR over k x k blocks; output `shape` (the trailing partial blocks included)."""
    hs, ws = shape
    out_r = np.zeros((hs, mask.shape[1]), dtype=bool)
    for r in range(k):
        part = mask[r::k]
        out_r[: len(part)] |= part
    out = np.zeros((hs, ws), dtype=bool)
    for c in range(k):
        part = out_r[:, c::k]
        out[:, : part.shape[1]] |= part
    return out


def _area_mean(v: np.ndarray, k: int) -> np.ndarray:
    """Mean of the finite pixels in each k x k block (NaN if none); partial blocks kept.

    Full blocks go through ``cv2.resize(..., INTER_AREA)`` (an exact block mean for an
    integer factor [OCV]_; a non-finite pixel makes its block non-finite); those blocks and
    the partial ones at the right and bottom edges are then recomputed from their finite
    pixels; when more than 1 % of the blocks hold invalid pixels, the full blocks are
    computed instead as resize(value * valid) / resize(valid).
    """
    h, w = v.shape
    hf, wf = h // k, w // k
    hs, ws = -(-h // k), -(-w // k)
    out = np.full((hs, ws), np.nan, dtype=np.float32)
    redo = np.ones((hs, ws), dtype=bool)
    if hf and wf:
        full = cv2.resize(v[: hf * k, : wf * k], (wf, hf), interpolation=cv2.INTER_AREA)
        bad = ~np.isfinite(full)
        if np.count_nonzero(bad) > 0.01 * bad.size:
            # many invalid pixels: one pass with a weight image beats gathering blocks
            core = v[: hf * k, : wf * k]
            valid = np.isfinite(core)
            acc = cv2.resize(np.where(valid, core, np.float32(0)), (wf, hf),
                             interpolation=cv2.INTER_AREA)
            wgt = cv2.resize(valid.astype(np.float32), (wf, hf), interpolation=cv2.INTER_AREA)
            with np.errstate(divide="ignore", invalid="ignore"):
                full = np.where(wgt > 0, acc / wgt, np.float32(np.nan)).astype(np.float32)
            bad[:] = False
        out[:hf, :wf] = full
        redo[:hf, :wf] = bad
    bi, bj = np.nonzero(redo)
    if len(bi):
        d = np.arange(k)
        rows = bi[:, None, None] * k + d[None, :, None]
        cols = bj[:, None, None] * k + d[None, None, :]
        ok = (rows < h) & (cols < w)
        vals = v[np.minimum(rows, h - 1), np.minimum(cols, w - 1)]
        ok &= np.isfinite(vals)
        total = np.where(ok, vals, np.float32(0)).sum(axis=(1, 2), dtype=np.float64)
        count = ok.sum(axis=(1, 2))
        with np.errstate(divide="ignore", invalid="ignore"):
            out[bi, bj] = np.where(count > 0, total / count, np.nan)
    return out


def resample_to_wall(
    value: ArrayLike,
    saturated: ArrayLike,
    mapping: WallMapping,
    *,
    step_mm: float | None = None,
    bounds_mm: tuple[float, float, float, float] | None = None,
    max_cells: int = 4_000_000,
    distortion: Any = None,
) -> WallGrid:
    """Resample an image and its clipping mask onto a regular wall grid.

    Parameters
    ----------
    value : (H, W) array_like of float
        The signal per pixel (any unit); NaN (or inf) where invalid. Converted to float32.
    saturated : (H, W) array_like of bool
        Pixels clipped in every exposure.
    mapping : WallMapping
        From :func:`fit_homography`.
    step_mm : float, optional
        Grid step, mm. Default: the side of the wall area one pixel covers at the photo's
        centre (:func:`mm_per_px`), enlarged, if needed, so the grid has at most ``max_cells``
        cells.
    bounds_mm : (x_min, x_max, y_min, y_max), optional
        Wall region to cover, mm. Default: the bounding box of the photo's footprint.
    max_cells : int, optional
        Largest number of grid cells (default 4 000 000).
    distortion : beamwall.profile.LensDistortion, optional
        The lens's distortion. ``mapping`` then maps the wall to *ideal* (undistorted)
        pixels (fit it to the session's points passed through
        :func:`beamwall.profile.undistort_points`), and each cell is sampled where the
        distorted photo shows it: cell -> wall mm -> ideal px (``wall_to_px``) -> photo px
        (:func:`beamwall.profile.distort_points`), with ``cv2.remap`` instead of
        ``cv2.warpPerspective``. ``footprint_mm`` is then the photo's border (32 points per
        side) mapped to the wall, a polygon that need not be convex; ``inside`` is the cell
        centre falling inside the photo. None (default): the pinhole path above.

    Returns
    -------
    WallGrid
        ``values`` (float32) at the cell centres, NaN outside the photo and next to invalid
        pixels; ``saturated``: some clipped pixel contributed to the cell; ``inside``: the cell
        centre maps inside the photo. Cell centres sit at x_min + (j + 1/2) step,
        y_max - (i + 1/2) step, with ceil(width / step) x ceil(height / step) cells.

    Raises
    ------
    ImageError
        ``value`` is not 2-D, or ``saturated`` has another shape.
    GeometryError
        The wall's horizon lies in the photo; a non-positive step or empty bounds; an explicit
        ``step_mm`` giving more than ``max_cells`` cells; no cell centre inside the photo.

    Notes
    -----
    When the step spans k >= 2 source pixels at the photo's centre (k = floor(step / mm per
    px)), the image is first shrunk by k with area averaging (``cv2.resize``, ``INTER_AREA``
    [OCV]_), which keeps the mean and divides white noise's standard deviation by k. Invalid
    pixels get zero weight: a block's value is the mean of its valid pixels (NaN if none). The
    image is padded to a multiple of k with invalid pixels, so the last partial blocks are kept.
    A source pixel centre u maps to (u + 0.5) / k - 0.5 in the shrunk image.

    The grid is then sampled with ``cv2.warpPerspective`` (``WARP_INVERSE_MAP``,
    ``INTER_LINEAR``) through S H A, where A takes grid (col, row) to wall mm, H is
    ``wall_to_px`` and S the shrink. OpenCV quantises sub-pixel positions to 1/32 px and
    gives NaN where any of the four bilinear taps is NaN, so an invalid pixel makes at most
    the cells around it NaN (one cell in each direction). The border is replicated, then
    cells outside the photo are set to NaN (so cells within half a pixel of the photo's edge
    keep a value). ``saturated`` is the block-wise OR, sampled the same way and set where any
    tap with weight above about 1/500 is clipped.

    Resampling is common practice, no source for the choices above beyond [OCV]_.

    Examples
    --------
    >>> m = WallMapping(np.array([[1.0, 0, 0], [0, -1.0, 0], [0, 0, 1]]), 0.0, 4)
    >>> img = np.arange(16, dtype=np.float32).reshape(4, 4)
    >>> g = resample_to_wall(img, np.zeros((4, 4), bool), m, step_mm=2.0)
    >>> g.values.tolist()
    [[2.5, 4.5], [10.5, 12.5]]
    >>> g.x0_mm, g.y0_mm, g.shrink_factor
    (0.5, -0.5, 2)
    """
    v = np.asarray(value, dtype=np.float32)
    if v.ndim != 2:
        raise ImageError(f"value must be a 2-D (H, W) image, got shape {v.shape}")
    sat = np.asarray(saturated, dtype=bool)
    if sat.shape != v.shape:
        raise ImageError(f"saturated has shape {sat.shape}, value has {v.shape}")
    h_px, w_px = v.shape
    foot = footprint_mm(mapping, v.shape)
    hmat = np.asarray(mapping.wall_to_px, dtype=np.float64)
    if distortion is not None:
        foot = _distorted_footprint_mm(mapping, v.shape, distortion)

    if bounds_mm is None:
        x_min, y_min = foot.min(axis=0)
        x_max, y_max = foot.max(axis=0)
    else:
        x_min, x_max, y_min, y_max = (float(b) for b in bounds_mm)
    if not (np.isfinite([x_min, x_max, y_min, y_max]).all() and x_max > x_min
            and y_max > y_min):
        raise GeometryError(
            f"bounds_mm must be finite with x_min < x_max, y_min < y_max, got "
            f"{(x_min, x_max, y_min, y_max)}")
    width, height = x_max - x_min, y_max - y_min
    if max_cells < 1:
        raise GeometryError(f"max_cells must be at least 1, got {max_cells}")

    centre_scale = float(mm_per_px(mapping, [(w_px - 1) / 2.0, (h_px - 1) / 2.0]))
    if step_mm is None:
        step = max(centre_scale, math.sqrt(width * height / max_cells))
        while math.ceil(width / step) * math.ceil(height / step) > max_cells:
            step *= 1.001
    else:
        step = float(step_mm)
        if not (step > 0 and math.isfinite(step)):
            raise GeometryError(f"step_mm must be positive, got {step_mm}")
        if math.ceil(width / step) * math.ceil(height / step) > max_cells:
            raise GeometryError(
                f"step_mm {step:.4g} over {width:.4g} x {height:.4g} mm gives more than "
                f"max_cells = {max_cells} cells")
    nx, ny = math.ceil(width / step - 1e-9), math.ceil(height / step - 1e-9)
    if nx >= _CV_MAX_SIDE or ny >= _CV_MAX_SIDE:
        raise GeometryError(f"grid of {nx} x {ny} cells is too long a strip; enlarge step_mm")
    x0, y0 = x_min + 0.5 * step, y_max - 0.5 * step

    # Shrink by k with validity-weighted area averaging.
    k = max(1, int(math.floor(step / centre_scale + 1e-6)))
    hs, ws = -(-h_px // k), -(-w_px // k)
    if max(hs, ws) >= _CV_MAX_SIDE:
        raise ImageError(f"image of {w_px} x {h_px} px is too large to resample")
    src = v if k == 1 else _area_mean(v, k)
    shrink = np.array([[1.0 / k, 0.0, 0.5 / k - 0.5], [0.0, 1.0 / k, 0.5 / k - 0.5],
                       [0.0, 0.0, 1.0]])
    grid = np.array([[step, 0.0, x0], [0.0, -step, y0], [0.0, 0.0, 1.0]])
    m_dst_to_src = shrink @ hmat @ grid
    flags = cv2.INTER_LINEAR | cv2.WARP_INVERSE_MAP
    ys = y0 - step * np.arange(ny)
    xs = x0 + step * np.arange(nx)
    if distortion is None:
        vals = cv2.warpPerspective(src, m_dst_to_src, (nx, ny), flags=flags,
                                   borderMode=cv2.BORDER_REPLICATE)
        # inside: the cell centre lies in the (convex) footprint, row by row.
        lo, hi = _row_intervals(foot, ys)
        inside = (xs[None, :] >= lo[:, None]) & (xs[None, :] <= hi[:, None])
    else:
        map_x, map_y, inside = _distorted_maps(hmat, distortion, xs, ys, k, v.shape)
        vals = cv2.remap(src, map_x, map_y, cv2.INTER_LINEAR,
                         borderMode=cv2.BORDER_REPLICATE)
    if not inside.any():
        raise GeometryError("no grid cell lies inside the photo; check bounds_mm")
    np.copyto(vals, np.float32(np.nan), where=~(inside & np.isfinite(vals)))

    if sat.any():
        sat_s = _block_any(sat, k, (hs, ws)) if k > 1 else sat
        if distortion is None:
            sat_w = cv2.warpPerspective(sat_s.astype(np.uint8) * np.uint8(255), m_dst_to_src,
                                        (nx, ny), flags=flags,
                                        borderMode=cv2.BORDER_REPLICATE)
        else:
            sat_w = cv2.remap(sat_s.astype(np.uint8) * np.uint8(255), map_x, map_y,
                              cv2.INTER_LINEAR, borderMode=cv2.BORDER_REPLICATE)
        sat_grid = (sat_w > 0) & inside
    else:
        sat_grid = np.zeros((ny, nx), dtype=bool)

    foot.setflags(write=False)
    return WallGrid(
        values=vals,
        saturated=sat_grid,
        inside=inside,
        x0_mm=float(x0),
        y0_mm=float(y0),
        step_mm=float(step),
        footprint_mm=foot,
        shrink_factor=k,
    )


def _distorted_footprint_mm(mapping: WallMapping, shape: tuple[int, ...],
                            distortion: Any) -> np.ndarray:
    """The distorted photo's border (32 points a side) on the wall, mm, (128, 2)."""
    from beamwall.profile import undistort_points

    h_px, w_px = shape[:2]
    t = np.linspace(0.0, 1.0, 32, endpoint=False)
    x0, x1, y0, y1 = -0.5, w_px - 0.5, -0.5, h_px - 0.5
    border = np.concatenate([
        np.column_stack([x0 + t * (x1 - x0), np.full_like(t, y0)]),
        np.column_stack([np.full_like(t, x1), y0 + t * (y1 - y0)]),
        np.column_stack([x1 - t * (x1 - x0), np.full_like(t, y1)]),
        np.column_stack([np.full_like(t, x0), y1 - t * (y1 - y0)]),
    ])
    ideal = undistort_points(distortion, border)
    _, w = _apply(mapping.px_to_wall, ideal)
    if np.any(w <= 0):
        raise GeometryError("the wall's horizon lies in the photo: the camera looks too far "
                            "along the wall")
    foot = pixel_to_wall(mapping, ideal)
    if not np.all(np.isfinite(foot)):
        raise GeometryError("the photo's border does not map onto the wall")
    return foot


def _distorted_maps(hmat: np.ndarray, distortion: Any, xs: np.ndarray, ys: np.ndarray,
                    k: int, shape: tuple[int, ...]
                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """cv2.remap maps (shrunk-image px) of grid cells seen through a distorting lens."""
    from beamwall.profile import distort_points, undistort_points

    h_px, w_px = shape[:2]
    # A barrel model folds back beyond some radius: only ideal points within the photo's
    # own largest ideal radius (its corners', with 5 % margin) can be in it.
    kmat = np.asarray(distortion.camera_matrix, np.float64)
    corners = undistort_points(distortion, [[-0.5, -0.5], [w_px - 0.5, -0.5],
                                            [w_px - 0.5, h_px - 0.5], [-0.5, h_px - 0.5]])
    r2_max = 1.05 * float(np.max(((corners[:, 0] - kmat[0, 2]) / kmat[0, 0]) ** 2
                                 + ((corners[:, 1] - kmat[1, 2]) / kmat[1, 1]) ** 2))
    map_x = np.empty((ys.size, xs.size), np.float32)
    map_y = np.empty((ys.size, xs.size), np.float32)
    inside = np.empty((ys.size, xs.size), bool)
    rows = max(1, 262_144 // max(xs.size, 1))
    for r0 in range(0, ys.size, rows):
        yy = ys[r0:r0 + rows]
        wall = np.stack(np.broadcast_arrays(xs[None, :], yy[:, None]), axis=-1)
        ideal, w = _apply(hmat, wall)
        ok = w > 0
        ideal = np.where(ok[..., None], ideal, 0.0)
        ok &= (((ideal[..., 0] - kmat[0, 2]) / kmat[0, 0]) ** 2
               + ((ideal[..., 1] - kmat[1, 2]) / kmat[1, 1]) ** 2) <= r2_max
        px = distort_points(distortion, ideal)
        inside[r0:r0 + rows] = (ok & (px[..., 0] >= -0.5) & (px[..., 0] <= w_px - 0.5)
                                & (px[..., 1] >= -0.5) & (px[..., 1] <= h_px - 0.5))
        map_x[r0:r0 + rows] = (px[..., 0] + 0.5) / k - 0.5
        map_y[r0:r0 + rows] = (px[..., 1] + 0.5) / k - 0.5
    return map_x, map_y, inside


# ---------------------------------------------------------------------------------------------
# Photometric geometry


def _offsets(x_mm: ArrayLike, y_mm: ArrayLike, axis_mm: ArrayLike, distance_m: float
             ) -> tuple[np.ndarray, np.ndarray, float]:
    ax = np.asarray(axis_mm, dtype=np.float64)
    if ax.shape != (2,) or not np.all(np.isfinite(ax)):
        raise GeometryError(f"axis_mm must be two finite numbers, got {axis_mm!r}")
    d = float(distance_m)
    if not (d > 0 and math.isfinite(d)):
        raise GeometryError(f"distance_m must be positive, got {distance_m!r}")
    dx = np.asarray(x_mm, dtype=np.float64) - ax[0]
    dy = np.asarray(y_mm, dtype=np.float64) - ax[1]
    return dx, dy, 1000.0 * d


def obliquity_cos3(
    x_mm: ArrayLike, y_mm: ArrayLike, *, axis_mm: ArrayLike, distance_m: float
) -> np.ndarray:
    """cos^3 of the polar angle of wall points seen from the torch.

    Parameters
    ----------
    x_mm, y_mm : array_like
        Wall positions, mm (broadcast together).
    axis_mm : (2,) array_like
        Where the torch axis (perpendicular to the wall) meets the wall, mm.
    distance_m : float
        Torch to wall along the axis, m; > 0.

    Returns
    -------
    ndarray
        cos^3(theta), in (0, 1]; 1 on the axis.

    Raises
    ------
    GeometryError
        A non-positive distance or a malformed axis.

    Notes
    -----
    A source of intensity I at distance d from a plane it faces square lights the plane at
    polar angle theta with E = I cos^3(theta) / d^2 [IESHB]_, with
    cos(theta) = d / sqrt(d^2 + r^2) and r the point's distance from the axis on the wall.
    So I(theta) = E d^2 / cos^3(theta).

    Examples
    --------
    >>> float(obliquity_cos3(1000.0, 0.0, axis_mm=(0.0, 0.0), distance_m=1.0))
    0.3535533905932737
    """
    dx, dy, d_mm = _offsets(x_mm, y_mm, axis_mm, distance_m)
    r2 = dx * dx + dy * dy
    return (d_mm / np.sqrt(d_mm * d_mm + r2)) ** 3


def polar_angles_deg(
    x_mm: ArrayLike, y_mm: ArrayLike, *, axis_mm: ArrayLike, distance_m: float
) -> tuple[np.ndarray, np.ndarray]:
    """Direction of wall points from the torch: polar angle and azimuth.

    Parameters
    ----------
    x_mm, y_mm : array_like
        Wall positions, mm (broadcast together).
    axis_mm : (2,) array_like
        Where the torch axis meets the wall, mm.
    distance_m : float
        Torch to wall along the axis, m; > 0.

    Returns
    -------
    theta_deg : ndarray
        Polar angle from the beam axis, degrees, in [0, 90).
    phi_deg : ndarray
        Azimuth on the wall around the axis, degrees, in [0, 360), from +x towards +y
        (counter-clockwise as seen from the torch); 0 on the axis.

    Raises
    ------
    GeometryError
        A non-positive distance or a malformed axis.

    Notes
    -----
    theta = atan2(r, d), phi = atan2(dy, dx) mod 360; plain geometry (common practice, no
    source).

    Examples
    --------
    >>> t, p = polar_angles_deg([1000.0, 0.0], [0.0, -1000.0], axis_mm=(0, 0), distance_m=1.0)
    >>> np.round(t, 6).tolist(), np.round(p, 6).tolist()
    ([45.0, 45.0], [0.0, 270.0])
    """
    dx, dy, d_mm = _offsets(x_mm, y_mm, axis_mm, distance_m)
    theta = np.degrees(np.arctan2(np.hypot(dx, dy), d_mm))
    phi = np.mod(np.degrees(np.arctan2(dy, dx)), 360.0)
    phi = np.where(phi >= 360.0, 0.0, phi)  # -tiny mod 360 rounds to 360.0
    return theta, phi


def _point_segment_distance(p: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    ab = b - a
    ap = p - a
    den = np.sum(ab * ab, axis=-1)
    t = np.clip(np.sum(ap * ab, axis=-1) / np.where(den > 0, den, 1.0), 0.0, 1.0)
    q = a + t[..., None] * ab
    return np.hypot(*(p - q).T)


def _inside_polygon(p: np.ndarray, poly: np.ndarray) -> bool:
    """Crossing-number test (boundary points may go either way; their distance is 0)."""
    x, y = p
    inside = False
    m = len(poly)
    for e in range(m):
        (x1, y1), (x2, y2) = poly[e], poly[(e + 1) % m]
        if (y1 > y) != (y2 > y):
            xc = x1 + (y - y1) * (x2 - x1) / (y2 - y1)
            if x < xc:
                inside = not inside
    return inside


def largest_inscribed_radius_mm(
    region: WallGrid | ArrayLike, centre_mm: ArrayLike
) -> float:
    """Radius of the largest circle around a wall point that lies wholly inside a region.

    Parameters
    ----------
    region : WallGrid or (n, 2) array_like
        A simple polygon on the wall, mm (e.g. :func:`footprint_mm`), vertices in order,
        either orientation; or a :class:`WallGrid`, whose region is its footprint clipped to
        the grid's outer cell edges.
    centre_mm : (2,) array_like
        The circle's centre on the wall, mm.

    Returns
    -------
    float
        The smallest distance from the centre to the region's edges, mm; 0 if the centre lies
        outside (or on the edge).

    Notes
    -----
    Exact point-to-segment distances; inside test by crossing number. Plain geometry (common
    practice, no source).

    Examples
    --------
    >>> largest_inscribed_radius_mm([[0, 0], [40, 0], [40, 30], [0, 30]], (10.0, 20.0))
    10.0
    >>> largest_inscribed_radius_mm([[0, 0], [40, 0], [40, 30], [0, 30]], (50.0, 20.0))
    0.0
    """
    c = np.asarray(centre_mm, dtype=np.float64)
    if c.shape != (2,) or not np.all(np.isfinite(c)):
        raise GeometryError(f"centre_mm must be two finite numbers, got {centre_mm!r}")
    if isinstance(region, WallGrid):
        x_lo, x_hi, y_lo, y_hi = region.bounds_mm
        rect = np.array([[x_lo, y_hi], [x_hi, y_hi], [x_hi, y_lo], [x_lo, y_lo]])
        polys = [np.asarray(region.footprint_mm, dtype=np.float64), rect]
    else:
        poly = np.asarray(region, dtype=np.float64)
        if poly.ndim != 2 or poly.shape[1] != 2 or len(poly) < 3 or not np.all(
                np.isfinite(poly)):
            raise GeometryError(
                f"region must be a polygon of shape (n >= 3, 2), got shape {poly.shape}")
        polys = [poly]
    radius = math.inf
    for poly in polys:
        if not _inside_polygon(c, poly):
            return 0.0
        a, b = poly, np.roll(poly, -1, axis=0)
        radius = min(radius, float(np.min(_point_segment_distance(c, a, b))))
    return radius
