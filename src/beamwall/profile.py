"""A camera as a characterised instrument: response curve, flat field, lens distortion.

The profile room. Pure: arrays and small frozen dataclasses in and out, no files (OpenCV's
array functions only). :mod:`beamwall.profile_io` reads the photos a profile file lists and
writes the profile JSON; :mod:`beamwall.linear` applies the response curve and the flat
field; :mod:`beamwall.wall` composes the lens distortion into the wall resampling.

Coordinates are those of a :class:`beamwall.images.Frame`'s ``pixels`` (x right, y down,
pixel centres at integers; for a binned raw frame, the binned image's pixels).

References
----------
.. [DM97] P. E. Debevec and J. Malik, "Recovering high dynamic range radiance maps from
   photographs", Proc. ACM SIGGRAPH 1997, pp. 369-378: the response g(Z) = ln f^-1(Z) from
   g(Z_ij) = ln E_i + ln t_j, a second-difference smoothness term and the hat weighting
   w(z) = z - Z_min for z <= (Z_min + Z_max) / 2, else Z_max - z; g(Z_mid) = 0 fixes the scale.
.. [ZHANG] Z. Zhang, "A flexible new technique for camera calibration", IEEE Trans. PAMI 22(11)
   (2000), pp. 1330-1334: intrinsics and distortion from views of a planar pattern, as
   OpenCV's ``calibrateCamera`` implements it.
.. [OCVCAL] OpenCV documentation, "Camera Calibration and 3D Reconstruction": the distortion
   model x' = x (1 + k1 r^2 + k2 r^4 + k3 r^6) + 2 p1 x y + p2 (r^2 + 2 x^2),
   y' = y (1 + k1 r^2 + k2 r^4 + k3 r^6) + p1 (r^2 + 2 y^2) + 2 p2 x y on normalised
   coordinates (x, y) = ((u - cx) / fx, (v - cy) / fy).
.. [GOLDMAN] D. B. Goldman, "Vignette and exposure calibration and compensation", IEEE Trans.
   PAMI 32(12) (2010), pp. 2276-2288: vignetting as a smooth even polynomial in the radius
   about an optical centre.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import cv2
import numpy as np
from scipy import optimize, sparse  # type: ignore[import-untyped]
from scipy.sparse import linalg as sparse_linalg  # type: ignore[import-untyped]

from beamwall.errors import CalibrationError, InputError

__all__ = [
    "PROFILE_FORMAT",
    "ResponseCurve",
    "FlatField",
    "LensDistortion",
    "CameraProfile",
    "recover_response",
    "fit_flat_field",
    "find_board_corners",
    "board_object_points",
    "calibrate_distortion",
    "undistort_points",
    "distort_points",
    "check_profile_camera",
]

#: ``format`` key of a profile JSON.
PROFILE_FORMAT = "beamwall camera profile 1"

#: A bracket image whose exposure, as the recovered curve reads it, differs from its stated
#: exposure by more than this fraction draws a warning (common practice, no source).
EXPOSURE_RATIO_TOLERANCE_FRACTION: float = 0.08

#: Flat-field fit residual (RMS, fraction of the model) above which a warning says the flat
#: photos are not of an even surface or the falloff is not radial (common practice, no source).
FLAT_RESIDUAL_WARN_FRACTION: float = 0.01

#: Debevec-Malik smoothness weight, per unit of the hat weight (common practice, no source:
#: chosen so a 5-image bracket of 8-bit codes keeps the curve's shape to about 1 %).
RESPONSE_SMOOTHNESS: float = 20.0

#: Degree in rho^2 of the flat-field polynomial (common practice, no source).
FLAT_DEGREE: int = 6


def _exact(values: Any) -> list[float]:
    return [float(v) for v in np.asarray(values, dtype=np.float64).ravel()]


# --------------------------------------------------------------------------------------------
# Response curve
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ResponseCurve:
    """A camera's 8-bit response: the relative linear exposure of each code.

    Attributes
    ----------
    linear : (256,) float64
        Relative linear value of codes 0..255, increasing, 1.0 at code 255.
    exposure_ratio_errors : tuple of float
        Per bracket image, (exposure read by the curve) / (stated exposure) - 1.
    warnings : tuple of str
    """

    linear: np.ndarray
    exposure_ratio_errors: tuple[float, ...] = ()
    warnings: tuple[str, ...] = ()

    def decode(self, codes: np.typing.ArrayLike) -> np.ndarray:
        """Linear values of 8-bit codes (uint8 array) through the curve, float32.

        Examples
        --------
        >>> c = ResponseCurve(linear=np.linspace(0.0, 1.0, 256))
        >>> c.decode(np.array([0, 51, 255], np.uint8)).astype(float).round(3).tolist()
        [0.0, 0.2, 1.0]
        """
        return self.linear.astype(np.float32)[np.asarray(codes, dtype=np.uint8)]

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dict."""
        return {"linear": _exact(self.linear),
                "exposure_ratio_errors": list(self.exposure_ratio_errors),
                "warnings": list(self.warnings)}

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> ResponseCurve:
        """Inverse of :meth:`to_dict`; raises InputError on a malformed table."""
        lin = np.asarray(d.get("linear"), dtype=np.float64)
        if lin.shape != (256,) or not np.all(np.isfinite(lin)) or np.any(np.diff(lin) < 0):
            raise InputError("must be 256 finite, non-decreasing numbers",
                             field="response.linear")
        return cls(linear=lin, exposure_ratio_errors=tuple(d.get("exposure_ratio_errors", ())),
                   warnings=tuple(d.get("warnings", ())))


def _hat(z: np.ndarray) -> np.ndarray:
    """Debevec-Malik hat weight for 8-bit codes [DM97]_, 0 at 0 and 255."""
    z = np.asarray(z, dtype=np.float64)
    return np.where(z <= 127.5, z, 255.0 - z)


def _response_samples(images: list[np.ndarray], per_channel: int) -> np.ndarray:
    """(N, P) codes at pixels chosen to span the middle image's codes, every channel."""
    mid = images[len(images) // 2]
    chans = [mid] if mid.ndim == 2 else [mid[:, :, c] for c in range(3)]
    rows = []
    for c, plane in enumerate(chans):
        flat = plane.ravel()
        order = np.argsort(flat, kind="stable")
        picks = order[np.linspace(0, flat.size - 1, per_channel).round().astype(int)]
        for idx in np.unique(picks):
            rows.append([(im if im.ndim == 2 else im[:, :, c]).ravel()[idx] for im in images])
    return np.asarray(rows, dtype=np.int64)


def recover_response(
    images: Sequence[np.ndarray],
    exposure_factors: Sequence[float],
    *,
    smoothness: float = RESPONSE_SMOOTHNESS,
    samples_per_channel: int = 400,
) -> ResponseCurve:
    """Recover an 8-bit camera response from an exposure bracket of a static scene.

    Parameters
    ----------
    images : sequence of (H, W) or (H, W, 3) uint8
        Two or more photos of the same still scene, same framing, different exposures.
    exposure_factors : sequence of float
        Each image's relative exposure, > 0 (t ISO / N^2, or just t), parallel to ``images``.
    smoothness : float, keyword-only
        Weight of the second-difference smoothness term.
    samples_per_channel : int, keyword-only
        Pixels sampled per channel, chosen to span the middle exposure's codes.

    Returns
    -------
    ResponseCurve
        ``linear[z]`` = exp(g(z)), made non-decreasing, scaled to 1 at code 255; warnings when
        an image's exposure, as the curve reads it, disagrees with the stated one by more than
        ``EXPOSURE_RATIO_TOLERANCE_FRACTION`` (auto exposure, tone mapping or HDR left on).

    Raises
    ------
    CalibrationError
        Fewer than two images, unequal shapes, not uint8, a non-positive exposure, or
        exposures that are all equal.

    Notes
    -----
    Debevec-Malik least squares [DM97]_: unknowns g(0..255) and ln E_i per sample; rows
    w(Z_ij) (g(Z_ij) - ln E_i) = w(Z_ij) ln t_j, plus smoothness * w(z) (g(z-1) - 2 g(z) +
    g(z+1)) = 0 and g(128) = 0; solved with sparse LSQR. All channels share one curve.
    Afterwards each image's median residual g(Z_ij) - ln E_i - ln t_j (over samples with
    w >= 16) gives its exposure error as the curve reads it.

    References
    ----------
    [DM97]_

    Examples
    --------
    A linear camera (code = 255 x exposure, clipped) seen through a 4-image bracket:

    >>> scene = np.linspace(0.004, 1.0, 4000).reshape(40, 100)
    >>> ts = [0.125, 0.25, 0.5, 1.0]
    >>> imgs = [np.clip(np.rint(255 * scene * t), 0, 255).astype(np.uint8) for t in ts]
    >>> c = recover_response(imgs, ts)
    >>> round(float(c.linear[64] / c.linear[128]), 2), c.warnings
    (0.5, ())
    """
    if len(images) < 2:
        raise CalibrationError(
            f"a response curve needs a bracket of at least 2 exposures, got {len(images)}",
            field="[response] images")
    if len(exposure_factors) != len(images):
        raise CalibrationError(f"{len(exposure_factors)} exposures for {len(images)} images",
                               field="[response] exposures_s")
    imgs = [np.asarray(im) for im in images]
    for i, im in enumerate(imgs):
        if im.dtype != np.uint8:
            raise CalibrationError(f"image {i + 1} is {im.dtype}: a response curve is for 8-bit "
                                   "camera files", field="[response] images")
        if im.shape != imgs[0].shape:
            raise CalibrationError(f"image {i + 1} has shape {im.shape}, the first "
                                   f"{imgs[0].shape}", field="[response] images")
    t = np.asarray(exposure_factors, dtype=np.float64)
    if not (np.all(np.isfinite(t)) and np.all(t > 0)):
        raise CalibrationError(f"exposures must be positive, got {list(t)}",
                               field="[response] exposures_s")
    if np.ptp(np.log(t)) < 0.1:
        raise CalibrationError("the bracket's exposures are (nearly) equal: take them at least "
                               "one stop apart", field="[response] exposures_s")
    order = np.argsort(t, kind="stable")
    imgs = [imgs[i] for i in order]
    t = t[order]
    z = _response_samples(imgs, samples_per_channel)          # (N, P)
    n, p = z.shape
    lnt = np.log(t)
    w = _hat(z)
    rows, cols, vals, rhs = [], [], [], []
    eq = 0
    for j in range(p):
        wj = w[:, j]
        keep = np.flatnonzero(wj > 0)
        k = keep.size
        r = eq + np.arange(k)
        rows += [r, r]
        cols += [z[keep, j], 256 + keep]
        vals += [wj[keep], -wj[keep]]
        rhs.append(wj[keep] * lnt[j])
        eq += k
    # g(128) = 0
    rows.append(np.array([eq]))
    cols.append(np.array([128]))
    vals.append(np.array([1.0]))
    rhs.append(np.array([0.0]))
    eq += 1
    zz = np.arange(1, 255)
    ws = smoothness * _hat(zz)
    r = eq + np.arange(zz.size)
    rows += [r, r, r]
    cols += [zz - 1, zz, zz + 1]
    vals += [ws, -2 * ws, ws]
    rhs.append(np.zeros(zz.size))
    eq += zz.size
    a = sparse.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                          shape=(eq, 256 + n))
    sol = sparse_linalg.lsqr(a, np.concatenate(rhs), atol=1e-12, btol=1e-12,
                             iter_lim=20000)[0]
    g = sol[:256]
    ln_e = sol[256:]
    # Codes never seen carry only the smoothness prior; keep the curve non-decreasing.
    lin = np.maximum.accumulate(np.exp(g - g.max()))
    lin = lin / lin[255]

    residual = g[z] - ln_e[:, None] - lnt[None, :]
    errors = []
    warnings = []
    for j in range(p):
        good = w[:, j] >= 16
        off = float(np.median(residual[good, j])) if np.count_nonzero(good) >= 10 else 0.0
        errors.append(off)
    errors_arr = np.exp(np.asarray(errors) - np.median(errors)) - 1.0
    out_errors = [0.0] * p
    for rank, j in enumerate(order):
        out_errors[j] = float(errors_arr[rank])
    for i, e in enumerate(out_errors):
        if abs(e) > EXPOSURE_RATIO_TOLERANCE_FRACTION:
            warnings.append(
                f"bracket image {i + 1} reads {100 * e:+.0f} % against its stated exposure: "
                "auto exposure, tone mapping or HDR left on?")
    return ResponseCurve(linear=lin, exposure_ratio_errors=tuple(out_errors),
                         warnings=tuple(warnings))


# --------------------------------------------------------------------------------------------
# Flat field
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class FlatField:
    """The lens's whole falloff (natural cos^4 and vignetting) as a radial polynomial.

    ``V(x, y) = 1 + sum_k c_k rho^(2k)``, k = 1..degree, rho = hypot(x - cx, y - cy) /
    ``radius_px``; 1 at the centre. Divide a linear image by V to flatten it.

    Attributes
    ----------
    centre_px : (float, float)
        Optical centre (x, y), px, in the frame's pixel coordinates.
    radius_px : float
        Normalising radius (half the image diagonal), px.
    coefficients : tuple of float
        c_1 .. c_degree.
    image_size_px : (int, int)
        (W, H) of the frames it was made from, px.
    residual_fraction : float
        RMS of (flat / model - 1) over the fit, dimensionless.
    f_number : float or None
        Aperture of the flat photos (vignetting changes with it).
    """

    centre_px: tuple[float, float]
    radius_px: float
    coefficients: tuple[float, ...]
    image_size_px: tuple[int, int]
    residual_fraction: float = 0.0
    f_number: float | None = None

    def gain(self, shape: tuple[int, int] | None = None) -> np.ndarray:
        """V on the pixel grid, (H, W) float32 (``shape`` defaults to the profile's).

        Examples
        --------
        >>> ff = FlatField((1.0, 0.0), 1.0, (-0.5,), (3, 1))
        >>> ff.gain().round(3).tolist()
        [[0.5, 1.0, 0.5]]
        """
        h, w = shape if shape is not None else (self.image_size_px[1], self.image_size_px[0])
        x = (np.arange(w, dtype=np.float64) - self.centre_px[0]) / self.radius_px
        y = (np.arange(h, dtype=np.float64) - self.centre_px[1]) / self.radius_px
        rho2 = np.add.outer(y * y, x * x)
        return _poly(rho2, np.asarray(self.coefficients)).astype(np.float32)

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dict."""
        return {"model": "radial polynomial in rho^2", "centre_px": list(self.centre_px),
                "radius_px": self.radius_px, "coefficients": list(self.coefficients),
                "image_size_px": list(self.image_size_px),
                "residual_fraction": self.residual_fraction, "f_number": self.f_number}

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> FlatField:
        """Inverse of :meth:`to_dict`."""
        try:
            return cls(centre_px=(float(d["centre_px"][0]), float(d["centre_px"][1])),
                       radius_px=float(d["radius_px"]),
                       coefficients=tuple(float(c) for c in d["coefficients"]),
                       image_size_px=(int(d["image_size_px"][0]), int(d["image_size_px"][1])),
                       residual_fraction=float(d.get("residual_fraction", 0.0)),
                       f_number=None if d.get("f_number") is None else float(d["f_number"]))
        except (KeyError, TypeError, ValueError, IndexError) as exc:
            raise InputError(f"malformed: {exc}", field="flat_field") from None


def _poly(rho2: np.ndarray, c: np.ndarray) -> np.ndarray:
    out = np.zeros_like(rho2)
    for ck in c[::-1]:
        out = (out + ck) * rho2
    return out + 1.0


def fit_flat_field(
    luminance: np.typing.ArrayLike,
    *,
    degree: int = FLAT_DEGREE,
    f_number: float | None = None,
) -> tuple[FlatField, tuple[str, ...]]:
    """Fit the radial falloff model to a linear photo of an evenly lit surface.

    Parameters
    ----------
    luminance : (H, W) array_like of float
        Linear luminance (any scale; the mean of several flat photos); NaN ignored.
    degree : int, keyword-only
        Number of polynomial terms in rho^2.
    f_number : float, keyword-only
        Recorded with the model.

    Returns
    -------
    FlatField, warnings
        Model scaled to 1 at its centre; a warning when the residual RMS exceeds
        ``FLAT_RESIDUAL_WARN_FRACTION`` or the centre lies far off the image centre.

    Raises
    ------
    CalibrationError
        Not 2-D, too small, or without light.

    Notes
    -----
    The image is area-averaged to at most 96 px across; the centre (cx, cy) is found by
    nonlinear least squares with the polynomial coefficients solved linearly inside
    (variable projection); the model is smooth and radial as in [GOLDMAN]_.

    References
    ----------
    [GOLDMAN]_

    Examples
    --------
    >>> h, w = 60, 90
    >>> yy, xx = np.mgrid[0:h, 0:w]
    >>> rho2 = ((xx - 44.5) ** 2 + (yy - 29.5) ** 2) / (0.5 * np.hypot(w, h)) ** 2
    >>> ff, warn = fit_flat_field(0.7 * (1 - 0.4 * rho2))
    >>> round(ff.coefficients[0], 3), [round(c, 1) for c in ff.centre_px], warn
    (-0.4, [44.5, 29.5], ())
    """
    img = np.asarray(luminance, dtype=np.float32)
    if img.ndim != 2 or min(img.shape) < 8:
        raise CalibrationError(f"flat field needs a 2-D image of at least 8 x 8 px, got "
                               f"{img.shape}", field="[flat_field] images")
    h, w = img.shape
    k = max(1, int(math.ceil(max(h, w) / 96)))
    hs, ws = h // k, w // k
    valid = np.isfinite(img)
    core = np.where(valid, img, np.float32(0))[: hs * k, : ws * k]
    num = core.reshape(hs, k, ws, k).sum(axis=(1, 3), dtype=np.float64)
    cnt = valid[: hs * k, : ws * k].reshape(hs, k, ws, k).sum(axis=(1, 3))
    with np.errstate(invalid="ignore", divide="ignore"):
        small = np.where(cnt > 0, num / np.maximum(cnt, 1), np.nan)
    ys = (np.arange(hs) * k + (k - 1) / 2.0)[:, None] * np.ones((1, ws))
    xs = (np.arange(ws) * k + (k - 1) / 2.0)[None, :] * np.ones((hs, 1))
    ok = np.isfinite(small) & (small > 0)
    if np.count_nonzero(ok) < 2 * degree + 4 or not np.any(small[ok] > 0):
        raise CalibrationError("the flat-field photos hold no light",
                               field="[flat_field] images")
    v = small[ok]
    x, y = xs[ok], ys[ok]
    radius = 0.5 * math.hypot(w, h)

    def solve(c: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        rho2 = ((x - c[0]) ** 2 + (y - c[1]) ** 2) / radius**2
        basis = np.column_stack([rho2 ** i for i in range(degree + 1)])
        coef, *_ = np.linalg.lstsq(basis, v, rcond=None)
        return coef, basis @ coef - v

    centre0 = np.array([(w - 1) / 2.0, (h - 1) / 2.0])
    fit = optimize.least_squares(lambda c: solve(c)[1] / np.mean(v), centre0,
                                 x_scale=radius * 0.1, xtol=1e-10)
    coef, res = solve(fit.x)
    if coef[0] <= 0:
        raise CalibrationError("the flat-field fit failed (no light at the centre)",
                               field="[flat_field] images")
    model = res + v
    resid = float(np.sqrt(np.mean((v / model - 1.0) ** 2)))
    ff = FlatField(centre_px=(float(fit.x[0]), float(fit.x[1])), radius_px=float(radius),
                   coefficients=tuple(float(c / coef[0]) for c in coef[1:]),
                   image_size_px=(int(w), int(h)), residual_fraction=resid,
                   f_number=None if f_number is None else float(f_number))
    warnings = []
    if resid > FLAT_RESIDUAL_WARN_FRACTION:
        warnings.append(f"the flat-field photos depart from a smooth radial falloff by "
                        f"{100 * resid:.1f} % RMS: is the surface evenly lit and filling the "
                        "frame?")
    off = math.hypot(fit.x[0] - centre0[0], fit.x[1] - centre0[1]) / radius
    if off > 0.25:
        warnings.append(f"the flat field's centre lies {100 * off:.0f} % of the half diagonal "
                        "off the image centre: uneven lighting of the flat surface?")
    return ff, tuple(warnings)


# --------------------------------------------------------------------------------------------
# Lens distortion
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class LensDistortion:
    """Intrinsics and distortion of a lens in OpenCV's model [OCVCAL]_.

    Attributes
    ----------
    camera_matrix : (3, 3) float64
        [[fx, 0, cx], [0, fy, cy], [0, 0, 1]], px.
    coefficients : (5,) float64
        (k1, k2, p1, p2, k3).
    image_size_px : (int, int)
        (W, H) of the calibration photos, px.
    rms_px : float
        RMS reprojection error of the board corners, px.
    n_images : int
        Photos whose board was found and used.
    """

    camera_matrix: np.ndarray
    coefficients: np.ndarray
    image_size_px: tuple[int, int]
    rms_px: float = 0.0
    n_images: int = 0

    @property
    def focal_length_px(self) -> float:
        """Mean of fx and fy, px."""
        return float(0.5 * (self.camera_matrix[0, 0] + self.camera_matrix[1, 1]))

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dict."""
        return {"model": "opencv k1 k2 p1 p2 k3",
                "camera_matrix": [_exact(r) for r in np.asarray(self.camera_matrix)],
                "coefficients": _exact(self.coefficients),
                "image_size_px": list(self.image_size_px), "rms_px": self.rms_px,
                "n_images": self.n_images}

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> LensDistortion:
        """Inverse of :meth:`to_dict`."""
        k = np.asarray(d.get("camera_matrix"), dtype=np.float64)
        c = np.asarray(d.get("coefficients"), dtype=np.float64)
        if k.shape != (3, 3) or c.shape != (5,) or not (np.all(np.isfinite(k))
                                                       and np.all(np.isfinite(c))):
            raise InputError("camera_matrix must be 3 x 3 and coefficients 5 numbers",
                             field="distortion")
        size = d.get("image_size_px") or [0, 0]
        return cls(camera_matrix=k, coefficients=c, image_size_px=(int(size[0]), int(size[1])),
                   rms_px=float(d.get("rms_px", 0.0)), n_images=int(d.get("n_images", 0)))


def board_object_points(inner_corners: tuple[int, int], square_mm: float) -> np.ndarray:
    """Board corners in the board's plane, mm: (columns x rows, 3) float32, z = 0.

    Examples
    --------
    >>> board_object_points((3, 2), 10.0)[:4].tolist()
    [[0.0, 0.0, 0.0], [10.0, 0.0, 0.0], [20.0, 0.0, 0.0], [0.0, 10.0, 0.0]]
    """
    cols, rows = inner_corners
    grid = np.zeros((rows * cols, 3), np.float32)
    grid[:, :2] = np.mgrid[0:cols, 0:rows].T.reshape(-1, 2) * float(square_mm)
    return grid


def find_board_corners(grey: np.typing.ArrayLike,
                       inner_corners: tuple[int, int]) -> np.ndarray | None:
    """Find a checkerboard's inner corners in an 8-bit grey image, to sub-pixel precision.

    Parameters
    ----------
    grey : (H, W) uint8
    inner_corners : (columns, rows)

    Returns
    -------
    (columns x rows, 2) float64 or None
        Corner positions, px, in OpenCV's order; None when the board is not found.

    Notes
    -----
    ``cv2.findChessboardCorners`` then ``cv2.cornerSubPix`` [OCVCAL]_.
    """
    img = np.ascontiguousarray(np.asarray(grey, dtype=np.uint8))
    size = (int(inner_corners[0]), int(inner_corners[1]))
    flags = cv2.CALIB_CB_ADAPTIVE_THRESH | cv2.CALIB_CB_NORMALIZE_IMAGE
    found, corners = cv2.findChessboardCorners(img, size, flags=flags)
    if not found or corners is None:
        return None
    crit = (cv2.TERM_CRITERIA_EPS + cv2.TERM_CRITERIA_MAX_ITER, 50, 1e-4)
    corners = cv2.cornerSubPix(img, corners, (5, 5), (-1, -1), crit)
    return corners.reshape(-1, 2).astype(np.float64)


def calibrate_distortion(
    image_points: Sequence[np.ndarray],
    object_points: np.ndarray,
    image_size_px: tuple[int, int],
) -> LensDistortion:
    """Intrinsics and distortion from board corners in several photos [ZHANG]_.

    Parameters
    ----------
    image_points : sequence of (n, 2) float
        Each photo's corners, px, in the order of ``object_points``; at least 3 photos.
    object_points : (n, 3) float
        The board's corners in its plane, mm.
    image_size_px : (W, H)

    Returns
    -------
    LensDistortion
        k3 is held at 0 (a phone's or camera's lens is described by k1, k2, p1, p2 within the
        frame; a free k3 over-fits a few views; common practice, no source).

    Raises
    ------
    CalibrationError
        Fewer than 3 photos.

    References
    ----------
    [ZHANG]_, [OCVCAL]_
    """
    if len(image_points) < 3:
        raise CalibrationError(
            f"lens distortion needs the board found in at least 3 photos, got "
            f"{len(image_points)}", field="[distortion] images")
    obj = [np.asarray(object_points, np.float32)] * len(image_points)
    img = [np.asarray(p, np.float32).reshape(-1, 1, 2) for p in image_points]
    w, h = image_size_px
    f0 = 0.8 * max(w, h)
    k0 = np.array([[f0, 0, (w - 1) / 2], [0, f0, (h - 1) / 2], [0, 0, 1]], np.float64)
    flags = cv2.CALIB_FIX_K3 | cv2.CALIB_USE_INTRINSIC_GUESS
    rms, k, dist, _, _ = cv2.calibrateCamera(obj, img, (int(w), int(h)), k0, np.zeros(5),
                                             flags=flags)
    k = np.asarray(k, np.float64)
    k.setflags(write=False)
    d = np.asarray(dist, np.float64).ravel()[:5]
    d.setflags(write=False)
    return LensDistortion(camera_matrix=k, coefficients=d,
                          image_size_px=(int(w), int(h)), rms_px=float(rms),
                          n_images=len(image_points))


def distort_points(distortion: LensDistortion, ideal_xy: np.typing.ArrayLike) -> np.ndarray:
    """Where ideal (pinhole) pixel positions appear in the photo.

    Parameters
    ----------
    distortion : LensDistortion
    ideal_xy : (..., 2) array_like, px
        Positions a distortion-free lens with the same camera matrix would give.

    Returns
    -------
    (..., 2) float64, px

    Notes
    -----
    The forward model of [OCVCAL]_ on (x, y) = K^-1 (u, v, 1).

    Examples
    --------
    >>> d = LensDistortion(np.array([[100.0, 0, 50], [0, 100.0, 50], [0, 0, 1]]),
    ...                    np.array([-0.1, 0, 0, 0, 0]), (101, 101))
    >>> distort_points(d, [[150.0, 50.0]]).round(6).tolist()
    [[140.0, 50.0]]
    """
    p = np.asarray(ideal_xy, dtype=np.float64)
    k = distortion.camera_matrix
    k1, k2, p1, p2, k3 = (float(c) for c in distortion.coefficients)
    x = (p[..., 0] - k[0, 2]) / k[0, 0]
    y = (p[..., 1] - k[1, 2]) / k[1, 1]
    r2 = x * x + y * y
    radial = 1 + r2 * (k1 + r2 * (k2 + r2 * k3))
    xd = x * radial + 2 * p1 * x * y + p2 * (r2 + 2 * x * x)
    yd = y * radial + p1 * (r2 + 2 * y * y) + 2 * p2 * x * y
    return np.stack([xd * k[0, 0] + k[0, 2], yd * k[1, 1] + k[1, 2]], axis=-1)


def undistort_points(distortion: LensDistortion, pixel_xy: np.typing.ArrayLike) -> np.ndarray:
    """Ideal (pinhole) positions of points as they appear in the photo.

    Parameters
    ----------
    distortion : LensDistortion
    pixel_xy : (n, 2) array_like, px
        Positions in the (distorted) photo, e.g. a session's ``[wall] points``.

    Returns
    -------
    (n, 2) float64, px
        The inverse of :func:`distort_points`, by Newton's method on the forward model (to
        1e-12 of a normalised unit).

    Examples
    --------
    >>> d = LensDistortion(np.array([[100.0, 0, 50], [0, 100.0, 50], [0, 0, 1]]),
    ...                    np.array([-0.1, 0, 0, 0, 0]), (101, 101))
    >>> undistort_points(d, [[140.0, 50.0]]).round(6).tolist()
    [[150.0, 50.0]]
    """
    p = np.asarray(pixel_xy, dtype=np.float64).reshape(-1, 2)
    k = distortion.camera_matrix
    target = np.stack([(p[:, 0] - k[0, 2]) / k[0, 0], (p[:, 1] - k[1, 2]) / k[1, 1]], axis=-1)
    x = target.copy()
    # Newton's method on the forward model, numeric 2 x 2 Jacobian (central differences).
    for _ in range(50):
        f = _distort_normalised(distortion, x) - target
        if float(np.max(np.abs(f), initial=0.0)) < 1e-12:
            break
        h = 1e-7
        jx = (_distort_normalised(distortion, x + [h, 0]) -
              _distort_normalised(distortion, x - [h, 0])) / (2 * h)
        jy = (_distort_normalised(distortion, x + [0, h]) -
              _distort_normalised(distortion, x - [0, h])) / (2 * h)
        det = jx[:, 0] * jy[:, 1] - jy[:, 0] * jx[:, 1]
        dx = (jy[:, 1] * f[:, 0] - jy[:, 0] * f[:, 1]) / det
        dy = (-jx[:, 1] * f[:, 0] + jx[:, 0] * f[:, 1]) / det
        x = x - np.stack([dx, dy], axis=-1)
    return np.stack([x[:, 0] * k[0, 0] + k[0, 2], x[:, 1] * k[1, 1] + k[1, 2]], axis=-1)


def _distort_normalised(distortion: LensDistortion, xy: np.ndarray) -> np.ndarray:
    k1, k2, p1, p2, k3 = (float(c) for c in distortion.coefficients)
    x, y = xy[..., 0], xy[..., 1]
    r2 = x * x + y * y
    radial = 1 + r2 * (k1 + r2 * (k2 + r2 * k3))
    return np.stack([x * radial + 2 * p1 * x * y + p2 * (r2 + 2 * x * x),
                     y * radial + p1 * (r2 + 2 * y * y) + 2 * p2 * x * y], axis=-1)


# --------------------------------------------------------------------------------------------
# The profile
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class CameraProfile:
    """What characterises one camera: identity, response, flat field, distortion.

    Attributes
    ----------
    make, model : str or None
        From the profile photos' EXIF.
    image_size_px : (int, int)
        (W, H) of the frames, px (a raw file's binned frame).
    raw : bool
        Made from camera raw files (so for raw sessions).
    response : ResponseCurve or None
    flat_field : FlatField or None
    distortion : LensDistortion or None
    warnings, inputs, created_utc, beamwall_version
        Provenance.
    """

    make: str | None
    model: str | None
    image_size_px: tuple[int, int]
    raw: bool = False
    response: ResponseCurve | None = None
    flat_field: FlatField | None = None
    distortion: LensDistortion | None = None
    warnings: tuple[str, ...] = ()
    inputs: tuple[dict[str, str], ...] = field(default_factory=tuple)
    created_utc: str | None = None
    beamwall_version: str | None = None

    def to_dict(self) -> dict[str, Any]:
        """JSON-ready dict (the profile file's content).

        Examples
        --------
        >>> p = CameraProfile("Maker", "One", (40, 30))
        >>> CameraProfile.from_dict(p.to_dict()) == p
        True
        """
        return {
            "format": PROFILE_FORMAT,
            "camera_make": self.make,
            "camera_model": self.model,
            "image_size_px": list(self.image_size_px),
            "raw": self.raw,
            "response": None if self.response is None else self.response.to_dict(),
            "flat_field": None if self.flat_field is None else self.flat_field.to_dict(),
            "distortion": None if self.distortion is None else self.distortion.to_dict(),
            "warnings": list(self.warnings),
            "inputs": [dict(i) for i in self.inputs],
            "created_utc": self.created_utc,
            "beamwall_version": self.beamwall_version,
        }

    @classmethod
    def from_dict(cls, d: dict[str, Any]) -> CameraProfile:
        """Inverse of :meth:`to_dict`; raises InputError naming the bad key."""
        if not isinstance(d, dict) or d.get("format") != PROFILE_FORMAT:
            got = d.get("format") if isinstance(d, dict) else type(d).__name__
            raise InputError(f"not a camera profile (format {got!r}, want {PROFILE_FORMAT!r})",
                             field="format")
        size = d.get("image_size_px")
        if not (isinstance(size, list) and len(size) == 2 and all(isinstance(v, int) and v > 0
                                                                  for v in size)):
            raise InputError(f"must be [width, height] in px, got {size!r}",
                             field="image_size_px")
        return cls(
            make=d.get("camera_make"),
            model=d.get("camera_model"),
            image_size_px=(size[0], size[1]),
            raw=bool(d.get("raw", False)),
            response=None if d.get("response") is None
            else ResponseCurve.from_dict(d["response"]),
            flat_field=None if d.get("flat_field") is None
            else FlatField.from_dict(d["flat_field"]),
            distortion=None if d.get("distortion") is None
            else LensDistortion.from_dict(d["distortion"]),
            warnings=tuple(d.get("warnings", ())),
            inputs=tuple(dict(i) for i in d.get("inputs", ())),
            created_utc=d.get("created_utc"),
            beamwall_version=d.get("beamwall_version"),
        )

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, CameraProfile):
            return NotImplemented
        return self.to_dict() == other.to_dict()

    __hash__ = None  # type: ignore[assignment]


def check_profile_camera(
    profile: CameraProfile,
    *,
    make: str | None,
    model: str | None,
    image_size_px: tuple[int, int],
    raw: bool,
    file: str | None = None,
) -> None:
    """Refuse a profile made for another camera (make, model, image size or raw/not raw).

    Raises
    ------
    CalibrationError
        One line naming what differs.

    Examples
    --------
    >>> p = CameraProfile("Maker", "One", (40, 30))
    >>> check_profile_camera(p, make="Maker", model="One", image_size_px=(40, 30), raw=False)
    >>> try:
    ...     check_profile_camera(p, make="Maker", model="Two", image_size_px=(40, 30),
    ...                          raw=False, file="cam.profile.json")
    ... except CalibrationError as exc:
    ...     print(exc)
    cam.profile.json: profile made for model 'One', the photos are from 'Two'
    """
    problems = []
    for key, want, have in (("make", profile.make, make), ("model", profile.model, model)):
        if want and have and want.strip() != have.strip():
            problems.append(f"made for {key} '{want}', the photos are from '{have}'")
    if tuple(profile.image_size_px) != tuple(image_size_px):
        problems.append(f"made for {profile.image_size_px[0]}x{profile.image_size_px[1]} px "
                        f"frames, the photos give {image_size_px[0]}x{image_size_px[1]}")
    if profile.raw != raw:
        problems.append("made from " + ("raw" if profile.raw else "non-raw")
                        + " files, the photos are " + ("raw" if raw else "not raw"))
    if problems:
        raise CalibrationError("profile " + "; ".join(problems), file=file)
