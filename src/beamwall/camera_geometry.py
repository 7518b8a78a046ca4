"""What the wall mapping tells about the camera: its focal length and its tilt to the wall.

A homography from a plane to an image is H ~ K [r1 r2 t], with K the camera matrix and r1, r2
the first two columns of a rotation. Since r1 . r2 = 0 and |r1| = |r2|, the image of the
absolute conic w = K^-T K^-1 satisfies two equations in H's first two columns h1, h2
[Zhang]:

    h1^T w h2 = 0,        h1^T w h1 = h2^T w h2.

With square pixels and the principal point at the image centre (the contract's assumption),
w = diag(a, a, 1) after shifting the principal point to the origin, a = 1 / f^2: two linear
equations in a, solved by least squares. The estimate needs the camera tilted to the wall
(a camera square to the wall leaves f undetermined): below ``MIN_TILT_DEG`` it is refused.

References
----------
.. [Zhang] Z. Zhang, "A flexible new technique for camera calibration", IEEE Trans. PAMI
   22(11), 1330-1334 (2000), section 2.3 (constraints on the intrinsic parameters).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["FocalEstimate", "focal_length_from_homography", "MIN_TILT_DEG"]

#: Smallest camera tilt to the wall (deg) at which the focal length is taken from the mapping
#: (common practice, no source: below it, half a pixel of error in the points moves f by tens
#: of percent).
MIN_TILT_DEG: float = 8.0


@dataclass(frozen=True)
class FocalEstimate:
    """A focal length from the wall mapping, or why there is none."""

    focal_length_px: float | None
    tilt_deg: float | None
    reason: str


def focal_length_from_homography(
    wall_to_px: np.ndarray, image_shape: tuple[int, int], *, min_tilt_deg: float = MIN_TILT_DEG
) -> FocalEstimate:
    """Estimate the focal length (px) from a wall-to-pixel homography [Zhang].

    Parameters
    ----------
    wall_to_px : (3, 3) array
        Wall (mm, y up) to pixel (x right, y down) homography.
    image_shape : (height, width)
        Of the photo, px; the principal point is taken at its centre.
    min_tilt_deg : float, keyword-only
        Refuse the estimate when the camera is tilted less than this to the wall.

    Returns
    -------
    FocalEstimate
        ``focal_length_px`` None when the equations give no positive solution or the tilt is
        too small, with the reason.

    Examples
    --------
    >>> f, cx, cy = 1000.0, 399.5, 299.5
    >>> yaw = np.radians(20.0)
    >>> R = np.array([[np.cos(yaw), 0, np.sin(yaw)], [0, 1, 0], [-np.sin(yaw), 0, np.cos(yaw)]])
    >>> K = np.array([[f, 0, cx], [0, f, cy], [0, 0, 1]])
    >>> H = K @ np.column_stack([R[:, 0], -R[:, 1], [0.0, 0.0, 2000.0]])
    >>> est = focal_length_from_homography(H, (600, 800))
    >>> round(est.focal_length_px, 3), round(est.tilt_deg, 3)
    (1000.0, 20.0)
    """
    h, w = int(image_shape[0]), int(image_shape[1])
    cx, cy = (w - 1) / 2.0, (h - 1) / 2.0
    shift = np.array([[1.0, 0.0, -cx], [0.0, 1.0, -cy], [0.0, 0.0, 1.0]])
    hm = shift @ np.asarray(wall_to_px, dtype=np.float64)
    hm = hm / np.linalg.norm(hm)
    h1, h2 = hm[:, 0], hm[:, 1]
    b = np.array([h1[0] * h2[0] + h1[1] * h2[1],
                  h1[0] ** 2 + h1[1] ** 2 - h2[0] ** 2 - h2[1] ** 2])
    c = np.array([h1[2] * h2[2], h1[2] ** 2 - h2[2] ** 2])
    den = float(b @ b)
    if den <= 0:
        return FocalEstimate(None, None, "the mapping gives no constraint on the focal length")
    a = -float(b @ c) / den
    if not np.isfinite(a) or a <= 0:
        return FocalEstimate(None, None, "the mapping gives no positive focal length (camera "
                                         "nearly square to the wall?)")
    f = 1.0 / np.sqrt(a)
    # Tilt: angle between the optical axis and the wall's normal, from r3 = r1 x r2.
    kinv = np.diag([1.0 / f, 1.0 / f, 1.0])
    r1 = kinv @ h1
    r2 = kinv @ h2
    scale = 0.5 * (np.linalg.norm(r1) + np.linalg.norm(r2))
    r3 = np.cross(r1 / scale, r2 / scale)
    tilt = float(np.degrees(np.arccos(min(1.0, abs(r3[2]) / max(np.linalg.norm(r3), 1e-300)))))
    if tilt < min_tilt_deg:
        return FocalEstimate(None, tilt, f"the camera is tilted only {tilt:.1f} deg to the "
                                         f"wall (at least {min_tilt_deg:g} needed)")
    if not 0.2 * max(h, w) <= f <= 20.0 * max(h, w):
        return FocalEstimate(None, tilt, f"implausible focal length {f:.0f} px")
    return FocalEstimate(float(f), tilt, "from the wall mapping")
