"""Linearise, dark-subtract, weight to luminance, normalise exposure, merge brackets.

The normalise room: pixel codes in, a shot's exposure-normalised luminance out. Pure: arrays
and small frozen dataclasses only, no files.

Transfer functions of [IEC61966]_, as :func:`srgb_decode` and :func:`srgb_encode` take them:

========================  ===============  =================================================
quantity                  expected range   note
========================  ===============  =================================================
encoded value ``v``       [0, 1]           code / max code (8-bit: code / 255)
linear value ``x``        [0, 1]           relative to the display white
========================  ===============  =================================================

Values outside [0, 1] are mapped by the same formulas (negatives on the linear segment);
NaN passes through.

Linearisation of a photo (:func:`linearise`), by ``encoding``:

``"srgb"``
    code / max code through :func:`srgb_decode` (camera JPEG and 8-bit PNG).
``"linear"``
    (code - black_level) / (white_level - black_level) (linear TIFF/PNG, raw conversions).

References
----------
.. [IEC61966] IEC 61966-2-1:1999, *Multimedia systems and equipment - Colour measurement
   and management - Part 2-1: Colour management - Default RGB colour space - sRGB*: the
   transfer function, decoding V <= 0.04045 -> V / 12.92, else ((V + 0.055) / 1.055)^2.4;
   encoding L <= 0.0031308 -> 12.92 L, else 1.055 L^(1/2.4) - 0.055.
.. [BT709] ITU-R Recommendation BT.709-6 (2015), item 3.2: luminance
   Y = 0.2126 R + 0.7152 G + 0.0722 B on linear RGB.
.. [ISO2720] ISO 2720:1974, *General purpose photographic exposure meters (photoelectric
   type) - Guide to product specification*: the reflected-light exposure equation
   N^2 / t = L S / K, so that at a fixed sensor signal L is proportional to N^2 / (t S).
.. [GRANADOS] M. Granados, B. Ajdin, M. Wand, C. Theobalt, H.-P. Seidel, H. P. A. Lensch,
   "Optimal HDR reconstruction with linear digital cameras", Proc. IEEE CVPR 2010,
   pp. 215-222: for linear data with photon noise dominant, weighting each exposure's
   normalised value in proportion to its exposure is optimal.
.. [SMITH] W. J. Smith, *Modern Optical Engineering*, 4th ed., McGraw-Hill (2008),
   "Image illumination" (the cos^4 law of off-axis image illuminance; chapter from memory,
   to confirm).
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import cv2
import numpy as np

from beamwall.constants import REC709_LUMINANCE_WEIGHTS, REFERENCE_ISO
from beamwall.errors import InputError

__all__ = [
    "Exposure",
    "Signal",
    "ENCODINGS",
    "SRGB_CLIP_FRACTION",
    "LINEAR_CLIP_FRACTION",
    "NEAR_BLACK_FRACTION",
    "BRACKET_TOLERANCE_FRACTION",
    "srgb_decode",
    "srgb_encode",
    "linearise",
    "linear_luminance",
    "exposure_factor",
    "natural_falloff",
    "normalise",
]

#: Encodings a photo's pixel codes may carry.
ENCODINGS: tuple[str, ...] = ("srgb", "linear")

#: sRGB-encoded codes at or above this fraction of the max code count as clipped (8-bit: code
#: 250 and up): camera tone curves roll off before 255 (common practice, no source).
SRGB_CLIP_FRACTION: float = 250.0 / 255.0

#: Linear codes at or above black + this fraction of (white - black) count as clipped
#: (common practice, no source).
LINEAR_CLIP_FRACTION: float = 0.98

#: In a bracket, linear luminance below this fraction of full scale is too close to black to
#: be used where another exposure has a usable value (common practice, no source).
NEAR_BLACK_FRACTION: float = 0.002

#: A bracket whose images' normalised values differ by more than this fraction (median ratio
#: over pixels usable in both) draws a warning (common practice, no source).
BRACKET_TOLERANCE_FRACTION: float = 0.10

#: Fewest pixels usable in two images of a bracket for their agreement to be checked (common
#: practice, no source).
_MIN_OVERLAP_PX = 50

#: Rows per strip when linearising: keeps the float32 RGB temporary small (6000 px wide:
#: 256 rows x 6000 x 3 x 4 B = 18 MB).
_STRIP_ROWS = 256

_FALLOFF_WARNING = "focal length unknown: natural cos^4 falloff not corrected"


@dataclass(frozen=True)
class Exposure:
    """Camera settings of one photo.

    Attributes
    ----------
    exposure_s : float
        Exposure time, s, > 0.
    f_number : float
        Aperture f-number N, > 0.
    iso : float
        ISO speed, > 0.
    """

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
    warnings : tuple of str. Soft problems (bracket disagreement, falloff not corrected).
    """

    value: np.ndarray
    saturated: np.ndarray
    warnings: tuple[str, ...] = ()


# --------------------------------------------------------------------------------------------
# sRGB transfer function
# --------------------------------------------------------------------------------------------


def _float_array(v: np.typing.ArrayLike) -> np.ndarray:
    """As a float array, keeping float32 (and other float types) and promoting the rest."""
    arr = np.asarray(v)
    return arr if np.issubdtype(arr.dtype, np.floating) else arr.astype(np.float64)


def srgb_decode(v: np.typing.ArrayLike) -> np.ndarray:
    """Decode sRGB-encoded values to linear values (the sRGB EOTF).

    Parameters
    ----------
    v : array_like, any shape
        Encoded values, nominally [0, 1] (code / max code). NaN passes through.

    Returns
    -------
    ndarray, same shape
        Linear values, nominally [0, 1]; float32 for float32 input, else float64.

    Notes
    -----
    x = v / 12.92 for v <= 0.04045, else ((v + 0.055) / 1.055)^2.4 [IEC61966]_.

    References
    ----------
    [IEC61966]_

    Examples
    --------
    >>> srgb_decode([0.0, 0.04045, 0.5, 1.0]).round(6).tolist()
    [0.0, 0.003131, 0.214041, 1.0]
    """
    v = _float_array(v)
    # The power branch sees at least the threshold, so negatives never meet a fractional power.
    curve = ((np.maximum(v, 0.04045) + 0.055) / 1.055) ** 2.4
    return np.where(v <= 0.04045, v / 12.92, curve).astype(v.dtype, copy=False)


def srgb_encode(x: np.typing.ArrayLike) -> np.ndarray:
    """Encode linear values with the sRGB transfer function (inverse EOTF).

    Parameters
    ----------
    x : array_like, any shape
        Linear values, nominally [0, 1]. NaN passes through.

    Returns
    -------
    ndarray, same shape
        Encoded values, nominally [0, 1]; float32 for float32 input, else float64.

    Notes
    -----
    v = 12.92 x for x <= 0.0031308, else 1.055 x^(1/2.4) - 0.055 [IEC61966]_.

    References
    ----------
    [IEC61966]_

    Examples
    --------
    >>> srgb_encode([0.0, 0.0031308, 0.214041, 1.0]).round(6).tolist()
    [0.0, 0.04045, 0.5, 1.0]
    """
    x = _float_array(x)
    curve = 1.055 * np.maximum(x, 0.0031308) ** (1 / 2.4) - 0.055
    return np.where(x <= 0.0031308, 12.92 * x, curve).astype(x.dtype, copy=False)


# --------------------------------------------------------------------------------------------
# Linearisation and luminance
# --------------------------------------------------------------------------------------------


def _check_encoding(encoding: str) -> None:
    if encoding not in ENCODINGS:
        raise InputError(f"unknown encoding {encoding!r}; valid: {', '.join(ENCODINGS)}",
                         field="encoding")


def _levels(dtype: np.dtype, encoding: str, black_level: float,
            white_level: float | None) -> tuple[float, float]:
    """(black, white) in code units; sRGB uses (0, max code) whatever the levels say."""
    if np.issubdtype(dtype, np.integer):
        max_code = float(np.iinfo(dtype).max)
    else:
        max_code = 1.0
    if encoding == "srgb":
        return 0.0, max_code
    white = max_code if white_level is None else float(white_level)
    black = float(black_level)
    if not (math.isfinite(black) and math.isfinite(white) and white > black):
        raise InputError(f"white_level ({white}) must be above black_level ({black})",
                         field="white_level")
    return black, white


def _clip_code(encoding: str, black: float, white: float) -> float:
    """Code at and above which a channel counts as clipped."""
    if encoding == "srgb":
        return SRGB_CLIP_FRACTION * white
    return black + LINEAR_CLIP_FRACTION * (white - black)


def _lut(dtype: np.dtype, encoding: str, black: float, white: float) -> np.ndarray | None:
    """float32 table from every code of an 8- or 16-bit type to its linear value; None: float."""
    if dtype == np.uint8:
        codes = np.arange(256, dtype=np.float64)
    elif dtype == np.uint16:
        codes = np.arange(65536, dtype=np.float64)
    else:
        return None
    if encoding == "srgb":
        return srgb_decode(codes / white).astype(np.float32)
    return ((codes - black) / (white - black)).astype(np.float32)


def _check_image(data: np.typing.ArrayLike, name: str) -> np.ndarray:
    image = np.asarray(data)
    if not (image.ndim == 2 or (image.ndim == 3 and image.shape[2] == 3)):
        raise InputError(f"must be (H, W) grey or (H, W, 3) RGB, got shape {image.shape}",
                         field=name)
    if not (image.dtype in (np.uint8, np.uint16) or np.issubdtype(image.dtype, np.floating)):
        raise InputError(f"must hold uint8, uint16 or float values, got {image.dtype}",
                         field=name)
    return image


def _linearise_rows(rows: np.ndarray, lut: np.ndarray | None, encoding: str, black: float,
                    white: float) -> np.ndarray:
    """Linear float32 values of a block of rows (a fresh array)."""
    if lut is not None and rows.dtype == np.uint8:
        return cv2.LUT(rows, lut)
    if lut is not None:
        return np.take(lut, rows)
    if encoding == "srgb":
        return srgb_decode(rows.astype(np.float32) / np.float32(white))
    out = rows.astype(np.float32)
    out -= np.float32(black)
    out *= np.float32(1.0 / (white - black))
    return out


def linearise(
    image: np.typing.ArrayLike,
    *,
    encoding: str = "srgb",
    black_level: float = 0.0,
    white_level: float | None = None,
) -> np.ndarray:
    """Linear values of a photo's pixel codes, channel by channel.

    Parameters
    ----------
    image : array_like, (H, W) or (H, W, 3)
        Pixel codes: uint8, uint16, or float (code / max code, i.e. [0, 1]).
    encoding : {"srgb", "linear"}, optional
        How the codes encode light (see the module notes).
    black_level, white_level : float, optional
        ``"linear"`` only: codes of black and of the sensor's clipping point; default 0 and
        the type's max code (1.0 for float). Ignored for ``"srgb"``.

    Returns
    -------
    ndarray, same shape, float32
        Linear values, 0 at black and 1 at white.

    Raises
    ------
    InputError
        Unknown encoding, white level not above black level, bad shape or type.

    Notes
    -----
    ``"srgb"``: srgb_decode(code / max code) [IEC61966]_, through a float32 look-up table for
    integer codes. ``"linear"``: (code - black) / (white - black).

    References
    ----------
    [IEC61966]_

    Examples
    --------
    >>> import numpy as np
    >>> linearise(np.array([[0, 128, 255]], np.uint8)).astype(float).round(4).tolist()
    [[0.0, 0.2159, 1.0]]
    >>> linearise(np.array([[64, 1064]], np.uint16), encoding="linear", black_level=64,
    ...           white_level=4064).tolist()
    [[0.0, 0.25]]
    """
    _check_encoding(encoding)
    image = _check_image(image, "image")
    black, white = _levels(image.dtype, encoding, black_level, white_level)
    return _linearise_rows(image, _lut(image.dtype, encoding, black, white), encoding, black,
                           white)


def _check_weights(weights: Sequence[float]) -> np.ndarray:
    w = np.asarray(weights, dtype=np.float64)
    if w.shape != (3,) or not np.all(np.isfinite(w)):
        raise InputError(f"must be three finite numbers (r, g, b), got {weights!r}",
                         field="weights")
    return w


def linear_luminance(
    image: np.typing.ArrayLike,
    *,
    encoding: str = "srgb",
    black_level: float = 0.0,
    white_level: float | None = None,
    weights: Sequence[float] = REC709_LUMINANCE_WEIGHTS,
) -> tuple[np.ndarray, np.ndarray]:
    """Linear luminance of a photo and its clipped pixels.

    Parameters
    ----------
    image : array_like, (H, W) or (H, W, 3)
        Pixel codes: uint8, uint16, or float (code / max code).
    encoding, black_level, white_level
        As in :func:`linearise`.
    weights : sequence of 3 float, optional
        Weights of linear R, G, B; default Rec. 709's [BT709]_. Ignored for grey images,
        which are luminance already.

    Returns
    -------
    luminance : ndarray, (H, W), float32
        sum_c weight_c * linear_c; 0 at black, 1 at white for weights summing to 1.
    clipped : ndarray, (H, W), bool
        Any channel at or above the clip code: ``"srgb"``: code >= SRGB_CLIP_FRACTION x max
        code (8-bit: 250); ``"linear"``: code >= black + LINEAR_CLIP_FRACTION x
        (white - black). NaN is not clipped.

    Raises
    ------
    InputError
        As :func:`linearise`; weights not three finite numbers.

    Notes
    -----
    Works in strips of rows with a float32 look-up table (``cv2.LUT``) and ``cv2.transform``
    so no full-size float64 or RGB temporary is made.

    References
    ----------
    [IEC61966]_, [BT709]_

    Examples
    --------
    >>> import numpy as np
    >>> y, clipped = linear_luminance(np.array([[[255, 255, 255], [255, 0, 0]]], np.uint8))
    >>> y.astype(float).round(4).tolist(), clipped.tolist()
    ([[1.0, 0.2126]], [[True, True]])
    """
    _check_encoding(encoding)
    image = _check_image(image, "image")
    w = _check_weights(weights)
    black, white = _levels(image.dtype, encoding, black_level, white_level)
    return _luminance(image, encoding, black, white, w)


def _luminance(image: np.ndarray, encoding: str, black: float, white: float,
               weights: np.ndarray, response: np.ndarray | None = None
               ) -> tuple[np.ndarray, np.ndarray]:
    """:func:`linear_luminance` on checked arguments (``response``: an 8-bit code table)."""
    image = np.ascontiguousarray(image)   # OpenCV wants plain row-major strips
    height, width = image.shape[:2]
    rgb = image.ndim == 3
    lut = response if response is not None else _lut(image.dtype, encoding, black, white)
    clip_code = _clip_code(encoding, black, white)
    integer = np.issubdtype(image.dtype, np.integer)
    # Highest code that is not clipped, for cv2.inRange on integer codes.
    top_code = math.ceil(clip_code) - 1
    matrix = weights.astype(np.float32).reshape(1, 3)
    luminance = np.empty((height, width), np.float32)
    clipped = np.empty((height, width), bool)
    for r0 in range(0, height, _STRIP_ROWS):
        rows = image[r0:r0 + _STRIP_ROWS]
        linear = _linearise_rows(rows, lut, encoding, black, white)
        out = luminance[r0:r0 + _STRIP_ROWS]
        if rgb:
            out[...] = cv2.transform(linear, matrix).reshape(out.shape)
        else:
            out[...] = linear
        if integer:
            lower = (0,) * 3 if rgb else 0
            upper = (top_code,) * 3 if rgb else top_code
            not_clipped = cv2.inRange(rows, lower, upper)
            np.equal(not_clipped, 0, out=clipped[r0:r0 + _STRIP_ROWS])
        else:
            over = rows >= clip_code
            clipped[r0:r0 + _STRIP_ROWS] = over.any(axis=2) if rgb else over
    return luminance, clipped


# --------------------------------------------------------------------------------------------
# Exposure and falloff
# --------------------------------------------------------------------------------------------


def exposure_factor(exposure: Exposure) -> float:
    """Relative sensor exposure of a photo's settings: t (ISO / 100) / N^2.

    Parameters
    ----------
    exposure : Exposure
        Exposure time (s), f-number and ISO speed, all > 0.

    Returns
    -------
    float
        Factor, s; a pixel's linear value divided by it is proportional to scene luminance.

    Raises
    ------
    InputError
        A setting that is not a positive finite number.

    Notes
    -----
    From the exposure equation N^2 / t = L S / K [ISO2720]_: the signal at the sensor is
    proportional to L t S / N^2. ISO 100 (``REFERENCE_ISO``) has unit gain.

    References
    ----------
    [ISO2720]_

    Examples
    --------
    >>> exposure_factor(Exposure(exposure_s=0.01, f_number=2.0, iso=400))
    0.01
    """
    for name in ("exposure_s", "f_number", "iso"):
        value = getattr(exposure, name)
        if not (isinstance(value, numbers.Real) and math.isfinite(value) and float(value) > 0):
            raise InputError(f"must be a positive number, got {value!r}", field=name)
    return exposure.exposure_s * (exposure.iso / REFERENCE_ISO) / exposure.f_number**2


def natural_falloff(shape: tuple[int, int], focal_length_px: float) -> np.ndarray:
    """Compute the natural illuminance falloff: cos^4 of each pixel's angle off the axis.

    Parameters
    ----------
    shape : (int, int)
        (H, W) of the image, px.
    focal_length_px : float
        Focal length, px, > 0. The principal point is taken at the image centre,
        ((W - 1) / 2, (H - 1) / 2) in pixel coordinates.

    Returns
    -------
    ndarray, (H, W), float32
        cos^4(theta), 1 at the centre, in (0, 1].

    Raises
    ------
    InputError
        Focal length not a positive finite number, or a shape that is not two positive ints.

    Notes
    -----
    tan(theta) = r / f with r the pixel's distance from the principal point, so
    cos^4(theta) = (1 / (1 + r^2 / f^2))^2 [SMITH]_. The real falloff of a lens (vignetting)
    is larger off axis; a camera profile's flat field replaces this model.

    References
    ----------
    [SMITH]_

    Examples
    --------
    >>> natural_falloff((1, 3), 1.0).astype(float).round(4).tolist()
    [[0.25, 1.0, 0.25]]
    """
    f = float(focal_length_px)
    if not (math.isfinite(f) and f > 0):
        raise InputError(f"must be a positive number of px, got {focal_length_px!r}",
                         field="focal_length_px")
    if len(shape) != 2 or min(shape) < 1:
        raise InputError(f"must be (H, W) with H, W >= 1, got {shape!r}", field="shape")
    height, width = int(shape[0]), int(shape[1])
    x = (np.arange(width, dtype=np.float64) - (width - 1) / 2) / f
    y = (np.arange(height, dtype=np.float64) - (height - 1) / 2) / f
    out = np.add.outer((y * y).astype(np.float32), (1.0 + x * x).astype(np.float32))
    np.reciprocal(out, out=out)
    out *= out
    return out


# --------------------------------------------------------------------------------------------
# A shot: darks, exposures, bracket merge
# --------------------------------------------------------------------------------------------


def normalise(
    images: Sequence[np.ndarray],
    exposures: Sequence[Exposure],
    *,
    darks: Sequence[np.ndarray | None],
    encoding: str,
    black_level: float = 0.0,
    white_level: float | None = None,
    focal_length_px: float | None = None,
    weights: tuple[float, float, float] = REC709_LUMINANCE_WEIGHTS,
    profile: Any = None,
) -> Signal:
    """Compute a shot's exposure-normalised luminance from one image or a merged bracket.

    Parameters
    ----------
    images : sequence of ndarray, each (H, W) or (H, W, 3)
        One photo, or several exposures of the same scene (a bracket); same shape and type.
        uint8, uint16, or float (code / max code).
    exposures : sequence of Exposure
        Settings of each image, parallel to ``images``.
    darks : sequence of (ndarray or None)
        Parallel to ``images``: a photo with the torch off at the same settings, subtracted
        in the linear domain, or None. A pixel clipped in the dark counts as clipped.
    encoding : {"srgb", "linear"}
        How the codes encode light (see :func:`linearise`).
    black_level, white_level : float, optional
        ``"linear"`` only, in codes; see :func:`linearise`.
    focal_length_px : float, optional
        Focal length, px, for the natural cos^4 falloff; None leaves it uncorrected (with a
        warning).
    weights : (float, float, float), optional
        Luminance weights of linear R, G, B; default Rec. 709's [BT709]_.
    profile : beamwall.profile.CameraProfile, optional
        The camera's profile. Its ``response`` (if any) decodes 8-bit ``"srgb"`` images in
        place of the sRGB curve; its ``flat_field`` (if any) divides the merged value in place
        of the cos^4 falloff (``focal_length_px`` is then not used). Its distortion is not
        applied here (see :func:`beamwall.wall.resample_to_wall`).

    Returns
    -------
    Signal
        ``value`` (H, W) float32: luminance (0..1 of white) / exposure factor / cos^4 (or the
        profile's flat field), NaN
        where clipped in every image; ``saturated`` (H, W) bool: clipped in every image;
        ``warnings``.

    Raises
    ------
    InputError
        Empty or unequal lists; an image or dark of another shape or type than the first
        image (the message names it, e.g. ``images[1]``); a bad exposure, encoding, level or
        weight.

    Notes
    -----
    Each image i gives dark-subtracted linear luminance Y_i and its exposure factor
    k_i = t_i (ISO_i / 100) / N_i^2 (:func:`exposure_factor`). Its normalised value is
    Y_i / k_i. A bracket merges them per pixel as a mean weighted by k_i [GRANADOS]_:

        value = sum_i m_i Y_i / sum_i m_i k_i

    where m_i = 1 for the images in which the pixel is usable: not clipped, finite, and
    Y_i >= NEAR_BLACK_FRACTION; where no image is usable so, any unclipped finite value
    is used (near-black included). The merged value is then divided by the cos^4 falloff.
    Neighbouring exposures (sorted by k) are compared: if the median of
    (Y_b / k_b) / (Y_a / k_a) over pixels usable in both (sampled on every 4th row and
    column) differs from 1 by more than BRACKET_TOLERANCE_FRACTION, a warning says so
    (auto exposure or a camera tone curve left on).

    References
    ----------
    [GRANADOS]_, [ISO2720]_, [IEC61966]_, [BT709]_

    Examples
    --------
    A two-image bracket of a grey pixel and a bright pixel (clipped in the long exposure):

    >>> import numpy as np
    >>> short = np.array([[10, 200]], np.uint16) * 64
    >>> long = np.array([[40, 1023]], np.uint16) * 64
    >>> signal = normalise([short, long], [Exposure(0.01, 2.0, 100), Exposure(0.04, 2.0, 100)],
    ...                    darks=[None, None], encoding="linear", white_level=65472)
    >>> (signal.value * 0.0025 * 1023).astype(float).round(3).tolist(), signal.saturated.tolist()
    ([[10.0, 200.0]], [[False, False]])
    """
    n_images = len(images)
    if n_images == 0:
        raise InputError("no image given", field="images")
    if len(exposures) != n_images:
        raise InputError(f"{len(exposures)} exposures for {n_images} images", field="exposures")
    if len(darks) != n_images:
        raise InputError(f"{len(darks)} darks for {n_images} images (use None for none)",
                         field="darks")
    _check_encoding(encoding)
    w = _check_weights(weights)
    first = _check_image(images[0], "images[0]")
    checked = [first]
    for i, image in enumerate(images[1:], start=1):
        checked.append(_same_as_first(image, first, f"images[{i}]"))
    factors = []
    for i, exposure in enumerate(exposures):
        try:
            factors.append(exposure_factor(exposure))
        except InputError as exc:
            raise InputError(exc.message, field=f"exposures[{i}].{exc.field}") from None
    black, white = _levels(first.dtype, encoding, black_level, white_level)
    response, flat, profile_warnings = _profile_parts(profile, first, encoding, exposures)

    luminances, clipped_masks, unusable, usable_good = [], [], [], []
    for i, image in enumerate(checked):
        y, clipped = _luminance(image, encoding, black, white, w, response)
        if (dark_codes := darks[i]) is not None:
            dark = _same_as_first(dark_codes, first, f"darks[{i}]")
            dark_y, dark_clipped = _luminance(dark, encoding, black, white, w, response)
            y -= dark_y
            clipped |= dark_clipped   # a clipped dark leaves no value to subtract
        clipped_masks.append(clipped)
        # Integer codes always decode to finite values; float input may carry NaN.
        bad = clipped if np.issubdtype(first.dtype, np.integer) else clipped | ~np.isfinite(y)
        luminances.append(y)
        unusable.append(bad)
        if n_images > 1:
            usable_good.append((y >= NEAR_BLACK_FRACTION) & ~bad)

    warnings: list[str] = []
    if n_images == 1:
        value = luminances[0]
        value *= np.float32(1.0 / factors[0])
        np.copyto(value, np.float32(np.nan), where=unusable[0])
    else:
        warnings += _bracket_warnings(luminances, usable_good, factors)
        none_good = ~np.logical_or.reduce(usable_good)
        numerator = np.zeros(first.shape[:2], np.float32)
        denominator = np.zeros(first.shape[:2], np.float32)
        for y, bad, good, k in zip(luminances, unusable, usable_good, factors):
            use = good | (none_good & ~bad)
            np.add(numerator, y, out=numerator, where=use)
            np.add(denominator, np.float32(k), out=denominator, where=use)
        value = np.full(first.shape[:2], np.nan, np.float32)
        np.divide(numerator, denominator, out=value, where=denominator > 0)

    warnings += profile_warnings
    if flat is not None:
        value /= flat
    elif focal_length_px is None:
        warnings.append(_FALLOFF_WARNING)
    else:
        value /= natural_falloff(first.shape[:2], focal_length_px)
    saturated = np.logical_and.reduce(clipped_masks) if n_images > 1 else clipped_masks[0]
    return Signal(value=value, saturated=saturated, warnings=tuple(warnings))


def _profile_parts(profile: Any, first: np.ndarray, encoding: str,
                   exposures: Sequence[Exposure]
                   ) -> tuple[np.ndarray | None, np.ndarray | None, list[str]]:
    """The profile's 8-bit response table and flat-field gain for these images, if any."""
    if profile is None:
        return None, None, []
    warnings: list[str] = []
    response = None
    curve = getattr(profile, "response", None)
    if curve is not None and encoding == "srgb":
        if first.dtype != np.uint8:
            raise InputError("the profile's response curve is for 8-bit images, these are "
                             f"{first.dtype}", field="profile")
        response = np.asarray(curve.linear, dtype=np.float32)
    flat = None
    ff = getattr(profile, "flat_field", None)
    if ff is not None:
        height, width = first.shape[:2]
        if tuple(ff.image_size_px) != (width, height):
            raise InputError(f"the profile's flat field is for {ff.image_size_px[0]}x"
                             f"{ff.image_size_px[1]} px images, these are {width}x{height}",
                             field="profile")
        flat = ff.gain((height, width))
        n = exposures[0].f_number
        if ff.f_number is not None and abs(n / ff.f_number - 1.0) > 0.05:
            warnings.append(f"flat field taken at f/{ff.f_number:g}, this photo at f/{n:g}: "
                            "vignetting changes with the aperture")
    return response, flat, warnings


def _same_as_first(image: np.typing.ArrayLike, first: np.ndarray, name: str) -> np.ndarray:
    """Check that ``image`` has the first image's shape and type; return it as an array."""
    checked = _check_image(image, name)
    if checked.shape != first.shape:
        raise InputError(f"shape {checked.shape} differs from images[0]'s {first.shape}",
                         field=name)
    if checked.dtype != first.dtype:
        raise InputError(f"type {checked.dtype} differs from images[0]'s {first.dtype}",
                         field=name)
    return checked


def _bracket_warnings(luminances: list[np.ndarray], usable: list[np.ndarray],
                      factors: list[float]) -> list[str]:
    """Compare neighbouring exposures' normalised values over pixels usable in both."""
    warnings = []
    order = sorted(range(len(factors)), key=lambda i: factors[i])
    step = (slice(None, None, 4), slice(None, None, 4))
    for a, b in zip(order, order[1:]):
        both = usable[a][step] & usable[b][step]
        if np.count_nonzero(both) < _MIN_OVERLAP_PX:
            warnings.append(
                f"bracket images {a} and {b} share fewer than {_MIN_OVERLAP_PX} usable pixels: "
                "their agreement was not checked (exposures too far apart?)"
            )
            continue
        ratio = float(np.median(
            (luminances[b][step][both] / np.float32(factors[b]))
            / (luminances[a][step][both] / np.float32(factors[a]))
        ))
        if abs(ratio - 1.0) > BRACKET_TOLERANCE_FRACTION:
            warnings.append(
                f"bracket images {a} and {b} disagree: median ratio of their "
                f"exposure-normalised values {ratio:.3f} (auto exposure or a tone curve left "
                "on?)"
            )
    return warnings
