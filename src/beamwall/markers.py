r"""Printed fiducial markers: find them in the setup photo and map the photo to the wall.

The user tapes printed ArUco markers (OpenCV's ``DICT_4X4_50``, as ``beamwall target``
prints them) on the wall, measures each marker's centre with a tape from a common origin
(wall mm, x right, y up, as seen from the torch), and takes one photo with the room lit from
the tripod position of the beam photos. This room finds the markers in that photo and fits
the pixel-to-wall homography to all their corners. It is pure: arrays in, a
:class:`beamwall.wall.WallMapping` out.

Assumption: each marker is taped **upright, square to the wall's axes** (its edges parallel
to the wall's x and y). Its four corners then follow from its centre ``(cx, cy)`` and side
``s``; in OpenCV's corner order (the marker image's top-left, top-right, bottom-right,
bottom-left [OCV-ARUCO]_) they are, with the wall's y **up**::

    (cx - s/2, cy + s/2), (cx + s/2, cy + s/2), (cx + s/2, cy - s/2), (cx - s/2, cy - s/2)

A marker taped at a slant of a degrees moves its corners by about ``s/sqrt(2) * a_rad`` mm
(3 mm at 2 deg for a 120 mm marker), which shows in the fit's reprojection error.

Fit: the corners go through ``cv2.findHomography`` with RANSAC [OCV-H]_ to reject a bad
corner (glare, a fold in the paper); a marker with two or more rejected corners is dropped as
a whole (wrong id or a mis-measured centre) with a warning; the inliers are then fitted by
:func:`beamwall.wall.fit_homography` (normalised DLT [HZ]_) for the vetting and the RMS
reprojection error on the wall in mm. With a distorting lens, pass the camera profile's
distortion: the corners are undistorted first and the mapping refers to ideal pixels.

A moved camera: the mapping holds for the beam photos only if the tripod did not move.
:func:`camera_shift` compares the setup photo with another photo of the same wall by phase
correlation of their edge images [Kuglin]_; see its notes for what is comparable.

References
----------
.. [OCV-ARUCO] OpenCV 4.7+/5.x documentation, "Detection of ArUco Markers" (objdetect module):
   ``cv2.aruco.ArucoDetector``, ``DetectorParameters.cornerRefinementMethod =
   CORNER_REFINE_SUBPIX``; each marker's corners are returned clockwise from its top-left.
.. [OCV-H] OpenCV documentation, calib3d: ``cv2.findHomography(src, dst, cv2.RANSAC,
   ransacReprojThreshold)``, the threshold in destination (pixel) units, and its inlier mask.
.. [HZ] R. Hartley and A. Zisserman, *Multiple View Geometry in Computer Vision*, 2nd ed.,
   Cambridge University Press, 2003: Algorithm 4.2 (normalised DLT) and 4.7 (RANSAC).
.. [Kuglin] C. D. Kuglin and D. C. Hines, "The phase correlation image alignment method",
   Proc. IEEE Int. Conf. on Cybernetics and Society, 1975, pp. 163-165; OpenCV's
   ``cv2.phaseCorrelate`` (sub-pixel peak, normalised response).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import cv2
import numpy as np
from numpy.typing import ArrayLike

from beamwall import wall
from beamwall.errors import GeometryError, ImageError
from beamwall.linear import srgb_decode
from beamwall.profile import LensDistortion, undistort_points

__all__ = [
    "MIN_MARKERS_FOUND",
    "MarkerDetection",
    "CameraShift",
    "to_grey_u8",
    "detect_markers",
    "marker_corners_mm",
    "wall_mapping_from_markers",
    "camera_shift",
    "moved_camera_warning",
]

#: Fewest listed markers that must be found: three markers give 12 corners over a triangle
#: of the wall, enough to fit and check a homography (common practice, no source).
MIN_MARKERS_FOUND: int = 3

#: RANSAC threshold of a corner's reprojection, px [OCV-H]_. Sub-pixel corners sit within
#: about 0.3 px; 3 px also absorbs a few mm of tape error at typical scales (common
#: practice, no source).
RANSAC_THRESHOLD_PX: float = 3.0

#: Default bound on the RMS reprojection error on the wall: the larger of this many mm ...
DEFAULT_MAX_RMS_MM: float = 5.0
#: ... and this fraction of the markers' extent (common practice, no source).
DEFAULT_MAX_RMS_FRACTION: float = 0.005

#: A marker whose fitted side differs from marker_size_mm by more than this fraction gets a
#: warning (a sheet printed at another scale; common practice, no source).
SIZE_WARNING_FRACTION: float = 0.03

#: Camera shift (px) above which :func:`moved_camera_warning` warns (common practice, no
#: source: a 1.5 px shift moves wall positions by 1.5 px times the scale, a few mm).
MAX_SHIFT_PX: float = 1.5

#: Lowest normalised phase-correlation response taken as a real match [Kuglin]_; below it
#: the two photos share too little structure (measured on rendered scenes: unrelated noise
#: gives about 0.01-0.03; common practice, no source).
MIN_SHIFT_RESPONSE: float = 0.08

#: Longest side of the images compared by :func:`camera_shift`, px (speed).
SHIFT_MAX_SIDE_PX: int = 1000


@dataclass(frozen=True)
class MarkerDetection:
    """Markers found in a photo.

    Attributes
    ----------
    ids : tuple of int
        Marker ids, in the order found (may repeat: a duplicated sheet).
    corners_px : (n, 4, 2) ndarray
        Each marker's corners, px (x right, y down), in OpenCV's order: the marker's
        top-left, top-right, bottom-right, bottom-left [OCV-ARUCO]_.
    """

    ids: tuple[int, ...]
    corners_px: np.ndarray

    @property
    def centres_px(self) -> np.ndarray:
        """(n, 2) mean of each marker's corners, px (the centre up to perspective)."""
        return self.corners_px.mean(axis=1)


@dataclass(frozen=True)
class CameraShift:
    """Translation between two photos of the same wall.

    Attributes
    ----------
    shift_px : (2,) tuple of float or None
        (dx, dy) to add to a point of the reference photo to find it in the other, px; None
        when the photos share too little structure to tell.
    response : float
        Normalised phase-correlation peak, 0..1 (higher: more trustworthy).
    comparable : bool
        Whether ``response`` reached :data:`MIN_SHIFT_RESPONSE`.
    """

    shift_px: tuple[float, float] | None
    response: float
    comparable: bool

    @property
    def magnitude_px(self) -> float | None:
        """Length of the shift, px (None when not comparable)."""
        if self.shift_px is None:
            return None
        return float(math.hypot(*self.shift_px))


# ---------------------------------------------------------------------------------------------
# Detection


def to_grey_u8(pixels: ArrayLike) -> np.ndarray:
    """Convert a photo's pixels to an 8-bit grey image for detection.

    Parameters
    ----------
    pixels : (H, W) or (H, W, 3) array_like, uint8 or uint16 (or float on [0, 1])
        RGB or grey. 8-bit data is taken as display-encoded (sRGB) and kept; 16-bit and float
        data as linear: scaled so that the 99.5th percentile maps to 1, then given a 1/2.2
        power (a display-like curve: the detector's thresholds work on perceived contrast).

    Returns
    -------
    (H, W) ndarray of uint8

    Raises
    ------
    ImageError
        Wrong shape or dtype, or an empty image.

    Examples
    --------
    >>> to_grey_u8(np.full((2, 3, 3), 200, np.uint8)).tolist()
    [[200, 200, 200], [200, 200, 200]]
    """
    a = np.asarray(pixels)
    if a.ndim == 3 and a.shape[2] in (3, 4):
        a = a[:, :, :3]
    elif a.ndim != 2:
        raise ImageError(f"pixels must be (H, W) or (H, W, 3), got shape {a.shape}")
    if a.size == 0:
        raise ImageError("pixels: empty image")
    if a.dtype == np.uint8:
        return a if a.ndim == 2 else cv2.cvtColor(np.ascontiguousarray(a), cv2.COLOR_RGB2GRAY)
    if a.dtype.kind not in "uif":
        raise ImageError(f"pixels must be uint8, uint16 or float, got {a.dtype}")
    f = a.astype(np.float32)
    if f.ndim == 3:
        f = cv2.cvtColor(np.ascontiguousarray(f), cv2.COLOR_RGB2GRAY)
    lo = float(np.percentile(f, 0.1))
    hi = float(np.percentile(f, 99.5))
    if not hi > lo:
        hi = lo + 1.0
    g = np.clip((f - lo) / (hi - lo), 0.0, 1.0) ** (1 / 2.2)
    return np.rint(255.0 * g).astype(np.uint8)


def _detector() -> cv2.aruco.ArucoDetector:
    params = cv2.aruco.DetectorParameters()
    params.cornerRefinementMethod = cv2.aruco.CORNER_REFINE_NONE
    params.minMarkerPerimeterRate = 0.01   # small markers in a large photo
    d = cv2.aruco.getPredefinedDictionary(cv2.aruco.DICT_4X4_50)
    return cv2.aruco.ArucoDetector(d, params)


def _linear_grey(pixels: np.ndarray) -> np.ndarray:
    """(H, W) float32 grey proportional to light: sRGB-decoded 8-bit, or 16-bit/float as is."""
    a = pixels[:, :, :3] if pixels.ndim == 3 else pixels
    if a.dtype == np.uint8:
        lut = srgb_decode(np.arange(256) / 255.0).astype(np.float32)
        a = lut[a]
    f = a.astype(np.float32)
    if f.ndim == 3:
        f = cv2.cvtColor(np.ascontiguousarray(f), cv2.COLOR_RGB2GRAY)
    return f


def _refine_corners(linear: np.ndarray, corners: np.ndarray) -> np.ndarray:
    """Sub-pixel corners on the linear image (an edge blurred in linear light is unbiased)."""
    out = corners.copy()
    crit = (cv2.TERM_CRITERIA_EPS + cv2.TERM_CRITERIA_MAX_ITER, 50, 0.005)
    for k in range(len(out)):
        c = out[k]
        side = float(np.mean(np.hypot(*(np.roll(c, -1, axis=0) - c).T)))
        half = int(max(2, min(6, round(side / 14))))
        pts = c.reshape(-1, 1, 2).astype(np.float32)
        cv2.cornerSubPix(linear, pts, (half, half), (-1, -1), crit)
        out[k] = pts.reshape(4, 2)
    return out


def detect_markers(pixels: ArrayLike) -> MarkerDetection:
    """Find 4x4_50 ArUco markers, with sub-pixel corners.

    Parameters
    ----------
    pixels : (H, W) or (H, W, 3) array_like
        The photo as stored (see :func:`to_grey_u8` for the dtypes).

    Returns
    -------
    MarkerDetection
        Possibly empty.

    Notes
    -----
    ``cv2.aruco.ArucoDetector`` [OCV-ARUCO]_ finds the markers on a display-like grey image;
    ``cv2.cornerSubPix`` then refines each corner on a grey image linear in light (8-bit data
    decoded with the sRGB curve): a pixel half covered by black ink is half as bright in
    linear light, but about 0.73 of white once sRGB-encoded, so refining on encoded values
    pulls the corners some 0.3-0.5 px towards the marker's centre (measured on rendered
    photos; common practice, no source). Window: a 14th of the marker's side, 2 to 6 px.

    Examples
    --------
    >>> import cv2
    >>> d = cv2.aruco.getPredefinedDictionary(cv2.aruco.DICT_4X4_50)
    >>> img = np.full((120, 120), 255, np.uint8)
    >>> img[30:90, 30:90] = cv2.aruco.generateImageMarker(d, 7, 60)
    >>> det = detect_markers(img)
    >>> det.ids, bool(np.all(np.abs(det.corners_px[0, 0] - 29.5) < 0.2))  # edge at 29.5
    ((7,), True)
    """
    a = np.asarray(pixels)
    grey = to_grey_u8(a)
    corners, ids, _ = _detector().detectMarkers(grey)
    if ids is None or len(ids) == 0:
        return MarkerDetection(ids=(), corners_px=np.zeros((0, 4, 2)))
    c = np.asarray(corners, dtype=np.float64).reshape(-1, 4, 2)
    c = _refine_corners(_linear_grey(a), c)
    return MarkerDetection(ids=tuple(int(i) for i in np.asarray(ids).ravel()), corners_px=c)


def marker_corners_mm(centre_mm: ArrayLike, marker_size_mm: float) -> np.ndarray:
    """Wall positions of an upright marker's corners, in OpenCV's corner order.

    Parameters
    ----------
    centre_mm : (2,) or (n, 2) array_like
        Marker centre(s), mm (x right, y up).
    marker_size_mm : float
        Side, black border included, mm.

    Returns
    -------
    (4, 2) or (n, 4, 2) ndarray
        Top-left, top-right, bottom-right, bottom-left as seen from the torch; the wall's y
        is up, so "top" is ``cy + s/2``.

    Examples
    --------
    >>> marker_corners_mm([100.0, 50.0], 20.0).tolist()
    [[90.0, 60.0], [110.0, 60.0], [110.0, 40.0], [90.0, 40.0]]
    """
    c = np.asarray(centre_mm, dtype=np.float64)
    h = 0.5 * float(marker_size_mm)
    offsets = np.array([[-h, h], [h, h], [h, -h], [-h, -h]])
    return c[..., None, :] + offsets


def _ids_text(ids: Sequence[int]) -> str:
    return ", ".join(str(i) for i in sorted(ids)) if ids else "none"


def wall_mapping_from_markers(
    pixels: ArrayLike,
    *,
    markers_mm: Mapping[int, Sequence[float]],
    marker_size_mm: float,
    source: str = "[wall] setup_image",
    max_rms_mm: float | None = None,
    detection: MarkerDetection | None = None,
    distortion: LensDistortion | None = None,
) -> wall.WallMapping:
    """Fit the wall-to-pixel homography to the corners of the markers in a setup photo.

    Parameters
    ----------
    pixels : (H, W) or (H, W, 3) array_like
        The setup photo, as stored (uint8 sRGB or uint16 linear, RGB or grey).
    markers_mm : mapping of int to (x_mm, y_mm)
        Wall position of each marker's centre by id, mm (x right, y up).
    marker_size_mm : float
        Side of each marker, black border included, mm.
    source : str
        Field named in error messages.
    max_rms_mm : float, optional
        Largest acceptable RMS reprojection error on the wall, mm. Default: the larger of
        5 mm and 0.5 % of the largest distance between two corners (common practice, no
        source).
    detection : MarkerDetection, optional
        A detection already made on ``pixels`` (saves detecting twice), in the photo's own
        (distorted) pixels.
    distortion : beamwall.profile.LensDistortion, optional
        The lens's distortion, from the camera profile. The detected corners are then moved
        to their ideal (pinhole) positions with :func:`beamwall.profile.undistort_points`
        before the fit, and the mapping refers to ideal pixels: resample with
        ``distortion=`` in :func:`beamwall.wall.resample_to_wall`. Without it the
        homography is fitted to the photo's pixels as they are, and a distorting lens shows
        as a larger reprojection error and wall positions off by up to the distortion.

    Returns
    -------
    WallMapping
        Fitted to all inlier corners (ideal pixels when ``distortion`` is given); its
        ``warnings`` name listed markers not found, found
        markers not listed (ignored), corners or markers rejected by RANSAC, and a marker
        side that disagrees with ``marker_size_mm``.

    Raises
    ------
    GeometryError
        ``marker_size_mm`` not positive; a marker id found twice (two sheets with one id);
        fewer than three listed markers found (the message names the ids found and those
        missing); fewer than three markers left after RANSAC; a fit that fails
        :func:`beamwall.wall.fit_homography`'s vetting (e.g. RMS error above ``max_rms_mm``).

    Notes
    -----
    Unknown ids (found, not in ``markers_mm``) are ignored with a warning rather than refused:
    a stray sheet in the room should not stop a session; their corners are not used.

    Examples
    --------
    >>> import cv2
    >>> d = cv2.aruco.getPredefinedDictionary(cv2.aruco.DICT_4X4_50)
    >>> img = np.full((400, 600), 255, np.uint8)
    >>> for k, (r, c) in enumerate([(40, 40), (40, 460), (260, 460), (260, 40)]):
    ...     img[r:r + 100, c:c + 100] = cv2.aruco.generateImageMarker(d, k, 100)
    >>> mm = {0: (-210.0, 110.0), 1: (210.0, 110.0), 2: (210.0, -110.0), 3: (-210.0, -110.0)}
    >>> m = wall_mapping_from_markers(img, markers_mm=mm, marker_size_mm=100.0)
    >>> m.n_points, m.rms_error_mm < 0.5
    (16, True)
    >>> [abs(round(float(v), 0)) for v in wall.pixel_to_wall(m, [[299.5, 199.5]])[0]]
    [0.0, 0.0]
    """
    size = float(marker_size_mm)
    if not (math.isfinite(size) and size > 0):
        raise GeometryError(f"marker_size_mm must be positive, got {marker_size_mm!r}",
                            field=source)
    listed = {int(k): (float(v[0]), float(v[1])) for k, v in markers_mm.items()}
    det = detection if detection is not None else detect_markers(pixels)
    if distortion is not None and len(det.ids):
        ideal = undistort_points(distortion, det.corners_px.reshape(-1, 2))
        det = MarkerDetection(ids=det.ids, corners_px=ideal.reshape(-1, 4, 2))
    warnings: list[str] = []

    counts: dict[int, int] = {}
    for i in det.ids:
        counts[i] = counts.get(i, 0) + 1
    dup = sorted(i for i, n in counts.items() if n > 1)
    if dup:
        raise GeometryError(
            f"marker id(s) {_ids_text(dup)} found more than once in the setup photo: each "
            "sheet must carry its own id; remove the extra sheet or print another id",
            field=source)
    unknown = sorted(set(det.ids) - set(listed))
    if unknown:
        warnings.append(
            f"{source}: marker id(s) {_ids_text(unknown)} found in the photo but not listed "
            "in markers_mm: ignored (add their positions to use them)")
    found = [i for i in det.ids if i in listed]
    missing = sorted(set(listed) - set(found))
    if len(found) < MIN_MARKERS_FOUND:
        raise GeometryError(
            f"found {len(found)} of the listed markers (ids found: {_ids_text(found)}; "
            f"missing: {_ids_text(missing)}"
            + (f"; found but not listed: {_ids_text(unknown)}" if unknown else "")
            + f"); at least {MIN_MARKERS_FOUND} are needed: check that the sheets are in the "
            "frame, lit, in focus, flat, and not cut off, and that the ids match markers_mm",
            field=source)
    if missing:
        warnings.append(
            f"{source}: listed marker(s) {_ids_text(missing)} not found in the setup photo; "
            f"mapping from {len(found)} markers")

    index = {i: k for k, i in enumerate(det.ids)}
    px = np.concatenate([det.corners_px[index[i]] for i in found])           # (4n, 2)
    mm = np.concatenate([marker_corners_mm(listed[i], size) for i in found])  # (4n, 2)

    _, mask = cv2.findHomography(mm.astype(np.float64), px.astype(np.float64), cv2.RANSAC,
                                 RANSAC_THRESHOLD_PX, maxIters=4000, confidence=0.999)
    inlier = np.ones(len(px), bool) if mask is None else mask.ravel().astype(bool)
    per_marker = inlier.reshape(-1, 4)
    keep_marker = per_marker.sum(axis=1) >= 3
    dropped = [found[k] for k in np.flatnonzero(~keep_marker)]
    if dropped:
        warnings.append(
            f"{source}: marker(s) {_ids_text(dropped)} do not fit the others (two or more "
            "corners off by more than "
            f"{RANSAC_THRESHOLD_PX:g} px): dropped; check their ids and measured centres")
    single = [found[k] for k in np.flatnonzero(keep_marker & (per_marker.sum(axis=1) == 3))]
    if single:
        warnings.append(
            f"{source}: one corner of marker(s) {_ids_text(single)} rejected (glare, a fold "
            "or a curled sheet?)")
    n_kept = int(keep_marker.sum())
    if n_kept < MIN_MARKERS_FOUND:
        raise GeometryError(
            f"only {n_kept} of the {len(found)} markers found agree with each other "
            f"(dropped: {_ids_text(dropped)}); at least {MIN_MARKERS_FOUND} are needed: check "
            "the measured centres in markers_mm and marker_size_mm", field=source)
    use = inlier & np.repeat(keep_marker, 4)
    if max_rms_mm is None:
        pts = mm[use]
        extent = float(np.max(np.hypot(pts[:, None, 0] - pts[None, :, 0],
                                       pts[:, None, 1] - pts[None, :, 1])))
        max_rms_mm = max(DEFAULT_MAX_RMS_MM, DEFAULT_MAX_RMS_FRACTION * extent)
    try:
        mapping = wall.fit_homography(px[use], mm[use], max_rms_mm=max_rms_mm, source=source)
    except GeometryError as exc:
        raise GeometryError(
            f"{exc.message}; with markers this usually means a mis-measured centre, a "
            "marker_size_mm that differs from the printed size, or a sheet taped at a slant",
            field=source) from None

    # Printed scale: each kept marker's side on the wall through the fit.
    sides = []
    for k in np.flatnonzero(keep_marker):
        c = wall.pixel_to_wall(mapping, det.corners_px[index[found[k]]])
        sides.append(np.mean(np.hypot(*(np.roll(c, -1, axis=0) - c).T)))
    ratio = float(np.median(sides)) / size
    if abs(ratio - 1.0) > SIZE_WARNING_FRACTION:
        warnings.append(
            f"{source}: the markers measure about {ratio * size:.0f} mm on the wall, "
            f"marker_size_mm says {size:g} mm: was the sheet printed at another scale? "
            "(check the scale bar)")
    return wall.WallMapping(
        wall_to_px=mapping.wall_to_px,
        rms_error_mm=mapping.rms_error_mm,
        n_points=mapping.n_points,
        point_errors_mm=mapping.point_errors_mm,
        max_rms_mm=mapping.max_rms_mm,
        warnings=tuple(warnings) + mapping.warnings,
    )


# ---------------------------------------------------------------------------------------------
# A moved camera


def _edge_image(pixels: ArrayLike, k: int) -> np.ndarray:
    """Band-pass edge image of a display-like grey version, float32, downsampled by k."""
    g = to_grey_u8(pixels).astype(np.float32) / 255.0
    if k > 1:
        g = cv2.resize(g, (g.shape[1] // k, g.shape[0] // k), interpolation=cv2.INTER_AREA)
    fine = cv2.GaussianBlur(g, (0, 0), 1.0)
    coarse = cv2.GaussianBlur(g, (0, 0), 4.0)
    e = fine - coarse
    # Compress strong edges so that no single feature (the beam's rim) dominates.
    s = float(np.std(e)) or 1.0
    return np.tanh(e / (3.0 * s)).astype(np.float32)


def camera_shift(reference: ArrayLike, other: ArrayLike) -> CameraShift:
    """Estimate the translation between two photos of the same wall by phase correlation.

    Parameters
    ----------
    reference : (H, W) or (H, W, 3) array_like
        The setup photo.
    other : array_like, same height and width
        A photo taken later from (supposedly) the same tripod position.

    Returns
    -------
    CameraShift

    Raises
    ------
    ImageError
        The photos differ in size.

    Notes
    -----
    Both photos are made display-like grey (:func:`to_grey_u8`), downsampled by an integer
    factor to at most 1000 px on the long side, band-passed (difference of Gaussians,
    sigma 1 and 4 px) and squashed (tanh of the value over three standard deviations, so that
    edges count alike whatever their contrast), then ``cv2.phaseCorrelate`` with a Hanning
    window [Kuglin]_ gives the sub-pixel shift and a normalised response.

    What is comparable: a photo that shows the same fixed structure as the setup photo. A
    second lit photo taken after the beam photos, with the sheets still up, is the reliable
    check (shifts of 0.2 px are seen). A beam photo or a dark frame works only where the
    markers (or other edges: a door frame, a socket) are left up and lit enough to show
    above the noise; an even wall in a dark room shows nothing to compare, and the result is
    then "not comparable" rather than a false alarm. A rotation about the optical axis or a
    change of zoom is not a translation; small ones lower the response.

    Examples
    --------
    >>> rng = np.random.default_rng(0)
    >>> a = (rng.random((128, 128)) * 255).astype(np.uint8)
    >>> b = np.roll(a, (3, -2), axis=(0, 1))
    >>> s = camera_shift(a, b)
    >>> s.comparable, [round(v, 1) for v in s.shift_px]
    (True, [-2.0, 3.0])
    """
    a = np.asarray(reference)
    b = np.asarray(other)
    if a.shape[:2] != b.shape[:2]:
        raise ImageError(
            f"photos differ in size: {a.shape[1]}x{a.shape[0]} and {b.shape[1]}x{b.shape[0]}")
    k = max(1, math.ceil(max(a.shape[:2]) / SHIFT_MAX_SIDE_PX))
    ea, eb = _edge_image(a, k), _edge_image(b, k)
    win = cv2.createHanningWindow((ea.shape[1], ea.shape[0]), cv2.CV_32F)
    (dx, dy), response = cv2.phaseCorrelate(ea, eb, win)
    ok = bool(response >= MIN_SHIFT_RESPONSE)
    return CameraShift(shift_px=(float(dx) * k, float(dy) * k) if ok else None,
                       response=float(response), comparable=ok)


def moved_camera_warning(
    setup_pixels: ArrayLike,
    other_pixels: ArrayLike,
    *,
    name: str = "photo",
    max_shift_px: float = MAX_SHIFT_PX,
) -> str | None:
    """A warning when another photo is shifted against the setup photo, else None.

    Parameters
    ----------
    setup_pixels, other_pixels : array_like
        The setup photo and a later photo (a lit frame, a dark frame or a beam photo).
    name : str
        The other photo's name, for the message.
    max_shift_px : float
        Largest shift accepted, px.

    Returns
    -------
    str or None
        The warning, or None when the shift is small or cannot be measured (see
        :func:`camera_shift`).

    Examples
    --------
    >>> rng = np.random.default_rng(1)
    >>> a = (rng.random((96, 96)) * 255).astype(np.uint8)
    >>> moved_camera_warning(a, a) is None
    True
    >>> moved_camera_warning(a, np.roll(a, 4, axis=1), name="dark.jpg")[:40]
    'dark.jpg is shifted by 4.0 px against th'
    """
    s = camera_shift(setup_pixels, other_pixels)
    mag = s.magnitude_px
    if mag is None or mag <= max_shift_px:
        return None
    dx, dy = s.shift_px  # type: ignore[misc]
    return (f"{name} is shifted by {mag:.1f} px against the setup photo (dx {dx:+.1f}, "
            f"dy {dy:+.1f} px): the camera or tripod moved, so the marker mapping does not "
            "hold for it; retake the setup photo from the current position")
