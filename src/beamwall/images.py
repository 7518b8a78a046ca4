"""Decode photos (JPEG, PNG, TIFF; 8/16 bit; grey or RGB) and their EXIF into a Frame.

This is the load room: it reads files and corrects nothing. Pixels come back as stored in the
file (RGB order, no EXIF orientation applied, no tone curve undone); the EXIF fields that the
measurement needs come back as plain numbers in the units their names carry.

Where the metadata is looked for:

====== ============================================ ==========================================
format pixels decoded by                            EXIF read from
====== ============================================ ==========================================
JPEG   OpenCV (``cv2.imdecode``, unchanged)         APP1 segment [EXIF]_
PNG    OpenCV (``cv2.imdecode``, unchanged)         ``eXIf`` chunk [PNG]_
TIFF   tifffile (OpenCV when tifffile lacks codecs) Exif sub-IFD [EXIF]_, else IFD0 [TIFFEP]_
====== ============================================ ==========================================

Camera raw files (DNG, NEF, CR2, ...) are not read yet: convert them to a linear 16-bit TIFF.

References
----------
.. [EXIF] CIPA DC-008-2019 / JEITA CP-3451E, *Exchangeable image file format for digital still
   cameras: Exif Version 2.32* (2019), section 4.6: tags ExposureTime (0x829A, s), FNumber
   (0x829D), PhotographicSensitivity (0x8827; ISOSpeedRatings before Version 2.3), FocalLength
   (0x920A, mm), FocalPlaneXResolution (0xA20E, pixels per FocalPlaneResolutionUnit),
   FocalPlaneResolutionUnit (0xA210; 2 = inch, the default, 3 = cm), FocalLengthIn35mmFilm
   (0xA405, mm; 0 = unknown), Make (0x010F), Model (0x0110), Orientation (0x0112), Exif IFD
   pointer (0x8769).
.. [TIFFEP] ISO 12234-2:2001, *Electronic still-picture imaging - Removable memory - Part 2:
   TIFF/EP image data format*: the same exposure tags in IFD0, and FocalPlaneResolutionUnit
   4 = mm, 5 = micrometre (from memory, to confirm).
.. [PNG] W3C, *Portable Network Graphics (PNG) Specification (Third Edition)* (2025),
   section 11.3.6 ``eXIf``: an Exif profile that starts with the TIFF header ("II" or "MM"),
   placed before the first IDAT chunk; section 5.3: chunk layout (length, type, data, CRC-32).
.. [JPEG] ITU-T T.81 (1992), *Digital compression and coding of continuous-tone still
   images*, annex B: markers SOS (0xFFDA) and EOI (0xFFD9).
"""

from __future__ import annotations

import hashlib
import io
import logging
import math
import struct
import zlib
from dataclasses import dataclass
from fractions import Fraction
from os import PathLike
from pathlib import Path
from typing import Any

import cv2
import exifread
import numpy as np
import tifffile
from PIL import Image
from PIL.TiffImagePlugin import IFDRational

from beamwall.constants import FULL_FRAME_DIAGONAL_MM
from beamwall.errors import ImageError

__all__ = ["Frame", "read_frame", "write_image", "focal_length_px"]

# exifread logs "file does not have exif data" at WARNING level and tifffile logs oddities of
# unusual files; without a handler, Python's last-resort handler would print them. A library
# attaches a NullHandler and leaves the choice to the application.
for _name in ("exifread", "tifffile"):
    logging.getLogger(_name).addHandler(logging.NullHandler())

_PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
_TIFF_MAGICS = (b"II*\x00", b"MM\x00*", b"II+\x00", b"MM\x00+")
_JPEG_SOI = b"\xff\xd8\xff"
_JPEG_SOS = b"\xff\xda"
_JPEG_EOI = b"\xff\xd9"

#: TIFF-based camera raw formats, recognised by extension and refused (their first IFD is
#: often a small preview, which must not be measured by mistake).
_RAW_SUFFIXES = frozenset(
    {".dng", ".nef", ".nrw", ".cr2", ".arw", ".srf", ".sr2", ".orf", ".rw2", ".pef", ".srw",
     ".erf", ".kdc", ".dcr", ".mos", ".iiq", ".3fr", ".fff", ".raw", ".rwl"}
)

# Exif tag numbers [EXIF].
_TAG_MAKE = 0x010F
_TAG_MODEL = 0x0110
_TAG_ORIENTATION = 0x0112
_TAG_EXIF_IFD = 0x8769
_TAG_EXPOSURE_TIME = 0x829A
_TAG_F_NUMBER = 0x829D
_TAG_ISO = 0x8827
_TAG_FOCAL_LENGTH = 0x920A
_TAG_FOCAL_PLANE_X_RES = 0xA20E
_TAG_FOCAL_PLANE_Y_RES = 0xA20F
_TAG_FOCAL_PLANE_UNIT = 0xA210
_TAG_FOCAL_35MM = 0xA405

#: Millimetres per FocalPlaneResolutionUnit [EXIF] (2, 3) and [TIFFEP] (4, 5).
_MM_PER_RESOLUTION_UNIT = {2: 25.4, 3: 10.0, 4: 1.0, 5: 0.001}


@dataclass(frozen=True)
class Frame:
    """One decoded photo and the EXIF fields the measurement uses.

    Attributes
    ----------
    path : Path
        The file as given to :func:`read_frame`.
    pixels : ndarray, (H, W) or (H, W, 3), uint8 or uint16
        Pixel values as stored, RGB order, alpha dropped, no orientation applied.
    bit_depth : int
        8 or 16 (bits per sample of ``pixels``).
    sha256 : str
        Hex SHA-256 of the file's bytes.
    exposure_s : float or None
        Exposure time, s (EXIF ExposureTime).
    f_number : float or None
        Aperture f-number (EXIF FNumber).
    iso : float or None
        ISO speed (EXIF PhotographicSensitivity / ISOSpeedRatings).
    focal_length_mm : float or None
        Lens focal length, mm (EXIF FocalLength).
    focal_plane_px_per_mm : float or None
        Sensor pixels per mm along x (EXIF FocalPlaneXResolution with its unit).
    focal_length_35mm : float or None
        35 mm equivalent focal length, mm (EXIF FocalLengthIn35mmFilm).
    make, model : str or None
        Camera maker and model as written by the camera.
    orientation : int or None
        EXIF Orientation, 1 to 8, recorded only: ``pixels`` are not rotated.
    warnings : tuple of str
        Soft problems met while reading (e.g. an EXIF field that could not be parsed).
    """

    path: Path
    pixels: np.ndarray                 # (H, W) or (H, W, 3), RGB order, uint8 or uint16, as stored
    bit_depth: int                     # 8 or 16
    sha256: str                        # of the file's bytes
    exposure_s: float | None = None    # EXIF ExposureTime
    f_number: float | None = None      # EXIF FNumber
    iso: float | None = None           # EXIF ISOSpeedRatings / PhotographicSensitivity
    focal_length_mm: float | None = None          # EXIF FocalLength
    focal_plane_px_per_mm: float | None = None    # EXIF FocalPlaneXResolution in px/mm
    focal_length_35mm: float | None = None        # EXIF FocalLengthIn35mmFilm
    make: str | None = None
    model: str | None = None
    orientation: int | None = None
    warnings: tuple[str, ...] = ()

    @property
    def shape(self) -> tuple[int, int]:
        """(H, W) of the stored pixels, px."""
        return int(self.pixels.shape[0]), int(self.pixels.shape[1])


# --------------------------------------------------------------------------------------------
# Reading
# --------------------------------------------------------------------------------------------


def read_frame(path: str | PathLike[str]) -> Frame:
    """Read one photo: pixels as stored, EXIF exposure and lens fields, hash of the bytes.

    Parameters
    ----------
    path : str or path-like
        A JPEG, PNG or TIFF file; the format is recognised from the file's first bytes.

    Returns
    -------
    Frame
        ``pixels`` (H, W) or (H, W, 3) uint8/uint16 in RGB order, alpha dropped; EXIF fields as
        found (None when absent or invalid; zero and negative values count as absent).

    Raises
    ------
    ImageError
        The file cannot be read, is empty, truncated, not JPEG/PNG/TIFF, a camera raw file, or
        holds samples that are not 8- or 16-bit unsigned integers or not grey/RGB(A). The
        message is one line and names the file.

    Notes
    -----
    EXIF fields are parsed per [EXIF]_ (JPEG APP1, PNG ``eXIf`` [PNG]_, TIFF Exif sub-IFD)
    and, in TIFF files, also per [TIFFEP]_ from IFD0 when the sub-IFD lacks them.
    FocalPlaneXResolution is converted to px/mm with its unit: 2 = inch, 3 = cm, 4 = mm,
    5 = micrometre; a missing unit means inch, the Exif default.

    References
    ----------
    [EXIF]_, [TIFFEP]_, [PNG]_, [JPEG]_

    Examples
    --------
    >>> import tempfile, numpy as np
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     write_image(f"{tmp}/a.png", np.full((2, 3), 700, np.uint16), exposure_s=0.01)
    ...     frame = read_frame(f"{tmp}/a.png")
    >>> frame.shape, frame.bit_depth, frame.exposure_s, int(frame.pixels[0, 0])
    ((2, 3), 16, 0.01, 700)
    """
    path = Path(path)
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise ImageError(f"cannot read file: {exc.strerror or exc}", file=path) from None
    if not data:
        raise ImageError("empty file", file=path)
    kind = _sniff(data)
    if kind is None:
        raise ImageError("not a JPEG, PNG or TIFF file", file=path)
    if kind == "tiff" and path.suffix.lower() in _RAW_SUFFIXES:
        raise ImageError(
            f"camera raw files ({path.suffix}) are not read yet: convert to a linear 16-bit TIFF",
            file=path,
        )
    pixels = _decode_pixels(data, kind, path)
    fields, warnings = _read_exif(data, kind)
    return Frame(
        path=path,
        pixels=pixels,
        bit_depth=8 if pixels.dtype == np.uint8 else 16,
        sha256=hashlib.sha256(data).hexdigest(),
        warnings=warnings,
        **fields,
    )


def _sniff(data: bytes) -> str | None:
    """Name the format from the first bytes: "jpeg", "png", "tiff" or None."""
    if data.startswith(_JPEG_SOI):
        return "jpeg"
    if data.startswith(_PNG_SIGNATURE):
        return "png"
    if data[:4] in _TIFF_MAGICS:
        return "tiff"
    return None


def _decode_pixels(data: bytes, kind: str, path: Path) -> np.ndarray:
    """Decode to (H, W) or (H, W, 3) uint8/uint16 RGB, or raise ImageError."""
    if kind == "jpeg":
        # A complete file has an EOI marker after the last start-of-scan [JPEG]_; a thumbnail
        # in APP1 comes before the main scan, and bytes in the entropy-coded data are stuffed.
        if data.rfind(_JPEG_EOI) < data.rfind(_JPEG_SOS):
            raise ImageError("truncated JPEG: no end-of-image marker after the image data",
                             file=path)
        arr = _cv2_decode(data)
    elif kind == "png":
        if data.rfind(b"IEND") < 0:
            raise ImageError("truncated PNG: no IEND chunk", file=path)
        arr = _cv2_decode(data)
    else:
        arr = _tiff_decode(data, path)
    if arr is None:
        raise ImageError(f"cannot decode the {kind.upper()} data (corrupt file?)", file=path)
    return _grey_or_rgb(arr, path)


def _cv2_decode(data: bytes) -> np.ndarray | None:
    """Decode with OpenCV at unchanged depth; BGR(A) becomes RGB, alpha dropped; None: failed."""
    level = cv2.utils.logging.getLogLevel()
    cv2.utils.logging.setLogLevel(cv2.utils.logging.LOG_LEVEL_SILENT)
    try:
        arr = cv2.imdecode(np.frombuffer(data, np.uint8), cv2.IMREAD_UNCHANGED)
    except cv2.error:
        return None
    finally:
        cv2.utils.logging.setLogLevel(level)
    if arr is None:
        return None
    if arr.ndim == 3 and arr.shape[2] == 3:
        arr = cv2.cvtColor(arr, cv2.COLOR_BGR2RGB)
    elif arr.ndim == 3 and arr.shape[2] == 4:
        arr = cv2.cvtColor(arr, cv2.COLOR_BGRA2RGB)
    return arr


def _tiff_decode(data: bytes, path: Path) -> np.ndarray | None:
    """Decode the first image of a TIFF file with tifffile (OpenCV for codecs it lacks)."""
    try:
        with tifffile.TiffFile(io.BytesIO(data)) as tif:
            page = tif.pages.first
            photometric = int(page.photometric)
            if photometric not in (tifffile.PHOTOMETRIC.MINISBLACK, tifffile.PHOTOMETRIC.RGB):
                name = getattr(page.photometric, "name", str(photometric))
                raise ImageError(
                    f"unsupported TIFF photometric interpretation {name} (grey or RGB only)",
                    file=path,
                )
            planar_separate = int(page.planarconfig) == tifffile.PLANARCONFIG.SEPARATE
            arr = page.asarray()
    except ImageError:
        raise
    except Exception as exc:  # tifffile raises many types; report the reason in one line
        reason = " ".join(str(exc).split()) or type(exc).__name__
        if "imagecodecs" in reason:
            # Compressions tifffile cannot decode alone (LZW, JPEG): OpenCV's libtiff can.
            return _cv2_decode(data)
        raise ImageError(f"cannot decode the TIFF data: {reason}", file=path) from None
    if planar_separate and arr.ndim == 3:
        arr = np.moveaxis(arr, 0, -1)
    return arr


def _grey_or_rgb(arr: np.ndarray, path: Path) -> np.ndarray:
    """Check the sample type and reduce the channels to grey (H, W) or RGB (H, W, 3)."""
    if arr.dtype not in (np.uint8, np.uint16):
        raise ImageError(
            f"unsupported sample type {arr.dtype} (8- or 16-bit unsigned integers only)",
            file=path,
        )
    if arr.ndim == 3 and arr.shape[2] in (1, 2):        # grey, grey + alpha
        arr = arr[:, :, 0]
    elif arr.ndim == 3 and arr.shape[2] == 4:           # RGB + alpha
        arr = arr[:, :, :3]
    if not (arr.ndim == 2 or (arr.ndim == 3 and arr.shape[2] == 3)):
        raise ImageError(
            f"unsupported image layout {arr.shape} (grey or RGB, optionally with alpha)",
            file=path,
        )
    if arr.shape[0] == 0 or arr.shape[1] == 0:
        raise ImageError("image has no pixels", file=path)
    return np.ascontiguousarray(arr)


def _read_exif(data: bytes, kind: str) -> tuple[dict[str, Any], tuple[str, ...]]:
    """Parse the Frame's EXIF fields; unparseable metadata becomes a warning, never an error."""
    try:
        tags = exifread.process_file(
            io.BytesIO(data), details=False, extract_thumbnail=False
        )
    except Exception as exc:  # a broken EXIF block must not make the pixels unreadable
        reason = " ".join(str(exc).split()) or type(exc).__name__
        return {}, (f"EXIF metadata unreadable, ignored: {reason}",)
    warnings: list[str] = []

    def get(name: str) -> Any:
        # The Exif sub-IFD first [EXIF]_; IFD0 as TIFF/EP writes it [TIFFEP]_.
        for ifd in ("EXIF", "Image"):
            tag = tags.get(f"{ifd} {name}")
            if tag is not None:
                return tag.values
        return None

    def number(name: str, *aliases: str) -> float | None:
        for key in (name, *aliases):
            values = get(key)
            if values is None:
                continue
            try:
                value = float(values[0])
            except (TypeError, ValueError, IndexError, ZeroDivisionError):
                warnings.append(f"EXIF {key} not a number ({values!r}), ignored")
                return None
            return value if math.isfinite(value) and value > 0 else None
        return None

    def text(name: str) -> str | None:
        values = get(name)
        if values is None:
            return None
        value = (values if isinstance(values, str) else str(values)).strip().strip("\x00")
        return value or None

    px_per_mm = None
    resolution = number("FocalPlaneXResolution")
    if resolution is not None:
        unit = number("FocalPlaneResolutionUnit")
        unit_code = 2 if unit is None else int(unit)   # inch is the Exif default
        if unit_code in _MM_PER_RESOLUTION_UNIT:
            px_per_mm = resolution / _MM_PER_RESOLUTION_UNIT[unit_code]
        else:
            warnings.append(
                f"EXIF FocalPlaneResolutionUnit {unit_code} unknown: focal plane resolution "
                "ignored"
            )
    orientation = number("Orientation")
    iso = number("ISOSpeedRatings", "PhotographicSensitivity")
    if iso == 65535:
        # 65535 means "65535 or more": the value is then in RecommendedExposureIndex or
        # ISOSpeed [EXIF]_ (PhotographicSensitivity note; from memory, to confirm).
        iso = number("RecommendedExposureIndex", "ISOSpeed") or iso
    fields: dict[str, Any] = {
        "exposure_s": number("ExposureTime"),
        "f_number": number("FNumber"),
        "iso": iso,
        "focal_length_mm": number("FocalLength"),
        "focal_plane_px_per_mm": px_per_mm,
        "focal_length_35mm": number("FocalLengthIn35mmFilm"),
        "make": text("Make"),
        "model": text("Model"),
        "orientation": None if orientation is None else int(orientation),
    }
    return fields, tuple(warnings)


def focal_length_px(frame: Frame, *, override_px: float | None = None) -> float | None:
    """Return the lens's focal length in pixels of ``frame``, for the natural cos^4 falloff.

    Parameters
    ----------
    frame : Frame
        A decoded photo.
    override_px : float, optional
        A focal length in px given by the user (session ``[camera] focal_length_px``); wins.

    Returns
    -------
    float or None
        Focal length, px; None when neither the override nor the EXIF fields give it.

    Raises
    ------
    ImageError
        ``override_px`` is not a positive finite number.

    Notes
    -----
    In order of preference:

    1. ``override_px``;
    2. FocalLength (mm) x FocalPlaneXResolution (px/mm) [EXIF]_ (valid when the stored image
       has the sensor's full resolution, as cameras write it);
    3. FocalLengthIn35mmFilm / 43.2666 mm x the image diagonal in px: the 35 mm frame's
       diagonal scaled to the photo's (common practice, no source; see
       ``FULL_FRAME_DIAGONAL_MM``).

    References
    ----------
    [EXIF]_

    Examples
    --------
    >>> import numpy as np
    >>> frame = Frame(path=Path("a.jpg"), pixels=np.zeros((3000, 4000), np.uint8), bit_depth=8,
    ...               sha256="", focal_length_mm=5.0, focal_plane_px_per_mm=800.0)
    >>> focal_length_px(frame)
    4000.0
    >>> round(focal_length_px(Frame(path=Path("b.jpg"), pixels=frame.pixels, bit_depth=8,
    ...                             sha256="", focal_length_35mm=43.2666)), 1)
    5000.0
    >>> focal_length_px(frame, override_px=3100.0)
    3100.0
    """
    if override_px is not None:
        if not (math.isfinite(override_px) and override_px > 0):
            raise ImageError(f"focal length must be a positive number of px, got {override_px}",
                             file=frame.path, field="focal_length_px")
        return float(override_px)
    if frame.focal_length_mm is not None and frame.focal_plane_px_per_mm is not None:
        return frame.focal_length_mm * frame.focal_plane_px_per_mm
    if frame.focal_length_35mm is not None:
        height_px, width_px = frame.shape
        return frame.focal_length_35mm / FULL_FRAME_DIAGONAL_MM * math.hypot(width_px, height_px)
    return None


# --------------------------------------------------------------------------------------------
# Writing (synthetic demo data and tests)
# --------------------------------------------------------------------------------------------


def write_image(
    path: str | PathLike[str],
    pixels: np.ndarray,
    *,
    exposure_s: float | None = None,
    f_number: float | None = None,
    iso: float | None = None,
    focal_length_mm: float | None = None,
    focal_plane_px_per_mm: float | None = None,
    focal_length_35mm: float | None = None,
    make: str | None = None,
    model: str | None = None,
    orientation: int | None = None,
    jpeg_quality: int = 95,
) -> None:
    """Write a photo with EXIF that :func:`read_frame` reads back; overwrites ``path``.

    Parameters
    ----------
    path : str or path-like
        ``.jpg``/``.jpeg``, ``.png`` or ``.tif``/``.tiff``; the suffix picks the format.
    pixels : ndarray, (H, W) or (H, W, 3), RGB order
        uint8 for JPEG; uint8 or uint16 for PNG and TIFF.
    exposure_s, f_number, iso, focal_length_mm, focal_length_35mm : float, optional
        EXIF ExposureTime (s), FNumber, PhotographicSensitivity, FocalLength (mm),
        FocalLengthIn35mmFilm (mm); ISO and the 35 mm focal length are rounded to integers.
    focal_plane_px_per_mm : float, optional
        Written as FocalPlaneXResolution and FocalPlaneYResolution in px/cm (unit 3).
    make, model : str, optional
        EXIF Make and Model.
    orientation : int, optional
        EXIF Orientation, 1 to 8 (recorded only; the pixels are written as given).
    jpeg_quality : int, optional
        JPEG quality, 1 to 100 (Pillow's scale); chroma is not subsampled (4:4:4).

    Raises
    ------
    ImageError
        Unknown suffix, or pixels of a type or layout the format cannot hold.

    Notes
    -----
    JPEG: Pillow, EXIF in APP1 with the exposure tags in the Exif sub-IFD [EXIF]_.
    PNG: OpenCV writes the pixels; an ``eXIf`` chunk [PNG]_ with the same Exif profile is
    inserted after IHDR. TIFF: tifffile, uncompressed, with every tag in IFD0 as TIFF/EP
    places them [TIFFEP]_ (tifffile does not write an Exif sub-IFD). Rational values are
    written as the nearest fraction with a denominator up to 10^6.

    References
    ----------
    [EXIF]_, [PNG]_, [TIFFEP]_

    Examples
    --------
    >>> import tempfile, numpy as np
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     write_image(f"{tmp}/a.jpg", np.zeros((8, 8, 3), np.uint8), f_number=2.8, iso=200)
    ...     frame = read_frame(f"{tmp}/a.jpg")
    >>> frame.f_number, frame.iso, frame.exposure_s
    (2.8, 200.0, None)
    """
    path = Path(path)
    pixels = np.asarray(pixels)
    suffix = path.suffix.lower()
    formats = {".jpg": "jpeg", ".jpeg": "jpeg", ".png": "png", ".tif": "tiff", ".tiff": "tiff"}
    if suffix not in formats:
        raise ImageError(f"cannot write {suffix or 'files without a suffix'}: "
                         "use .jpg, .png or .tif", file=path)
    kind = formats[suffix]
    if not (pixels.ndim == 2 or (pixels.ndim == 3 and pixels.shape[2] == 3)) or pixels.size == 0:
        raise ImageError(f"pixels must be (H, W) or (H, W, 3), got shape {pixels.shape}",
                         file=path)
    allowed = (np.uint8,) if kind == "jpeg" else (np.uint8, np.uint16)
    if pixels.dtype not in allowed:
        names = " or ".join(np.dtype(t).name for t in allowed)
        raise ImageError(f"{kind.upper()} pixels must be {names}, got {pixels.dtype}", file=path)
    if orientation is not None and orientation not in range(1, 9):
        raise ImageError(f"orientation must be 1 to 8, got {orientation}", file=path)

    ifd0: dict[int, Any] = {}
    exif: dict[int, Any] = {}
    if make is not None:
        ifd0[_TAG_MAKE] = make
    if model is not None:
        ifd0[_TAG_MODEL] = model
    if orientation is not None:
        ifd0[_TAG_ORIENTATION] = int(orientation)
    if exposure_s is not None:
        exif[_TAG_EXPOSURE_TIME] = _rational(exposure_s, "exposure_s", path)
    if f_number is not None:
        exif[_TAG_F_NUMBER] = _rational(f_number, "f_number", path)
    if iso is not None:
        exif[_TAG_ISO] = _short(iso, "iso", path)
    if focal_length_mm is not None:
        exif[_TAG_FOCAL_LENGTH] = _rational(focal_length_mm, "focal_length_mm", path)
    if focal_plane_px_per_mm is not None:
        per_cm = _rational(focal_plane_px_per_mm * 10.0, "focal_plane_px_per_mm", path)
        exif[_TAG_FOCAL_PLANE_X_RES] = per_cm
        exif[_TAG_FOCAL_PLANE_Y_RES] = per_cm
        exif[_TAG_FOCAL_PLANE_UNIT] = 3
    if focal_length_35mm is not None:
        exif[_TAG_FOCAL_35MM] = _short(focal_length_35mm, "focal_length_35mm", path)

    try:
        if kind == "tiff":
            _write_tiff(path, pixels, ifd0, exif)
        else:
            profile = Image.Exif()
            for tag, value in ifd0.items():
                profile[tag] = value
            if exif:
                sub_ifd = profile.get_ifd(_TAG_EXIF_IFD)
                for tag, value in exif.items():
                    sub_ifd[tag] = value
            if kind == "jpeg":
                Image.fromarray(pixels).save(path, format="JPEG", quality=int(jpeg_quality),
                                             subsampling=0, exif=profile.tobytes())
            else:
                _write_png(path, pixels, profile.tobytes() if (ifd0 or exif) else None)
    except OSError as exc:
        raise ImageError(f"cannot write file: {exc.strerror or exc}", file=path) from None


def _rational(value: float, name: str, path: Path) -> IFDRational:
    """Return a positive EXIF RATIONAL close to ``value`` (denominator up to 10^6)."""
    if not (math.isfinite(value) and value > 0):
        raise ImageError(f"{name} must be a positive number, got {value}", file=path)
    fraction = Fraction(value).limit_denominator(1_000_000)
    if fraction.numerator >= 2**32:
        raise ImageError(f"{name} too large for EXIF, got {value}", file=path)
    return IFDRational(fraction.numerator, fraction.denominator)


def _short(value: float, name: str, path: Path) -> int:
    """Return the EXIF SHORT (1 to 65535) nearest to ``value``."""
    if not (math.isfinite(value) and 1 <= round(value) <= 65535):
        raise ImageError(f"{name} must be 1 to 65535, got {value}", file=path)
    return int(round(value))


def _write_png(path: Path, pixels: np.ndarray, exif_bytes: bytes | None) -> None:
    """Encode with OpenCV and insert an eXIf chunk right after IHDR [PNG]_."""
    bgr = cv2.cvtColor(pixels, cv2.COLOR_RGB2BGR) if pixels.ndim == 3 else pixels
    ok, encoded = cv2.imencode(".png", bgr)
    if not ok:
        raise ImageError("OpenCV could not encode the PNG", file=path)
    data = encoded.tobytes()
    if exif_bytes is not None:
        payload = exif_bytes.removeprefix(b"Exif\x00\x00")   # eXIf holds the TIFF header on
        chunk = (struct.pack(">I", len(payload)) + b"eXIf" + payload
                 + struct.pack(">I", zlib.crc32(b"eXIf" + payload)))
        ihdr_end = len(_PNG_SIGNATURE) + 8 + 13 + 4          # length, type, 13 data, CRC
        data = data[:ihdr_end] + chunk + data[ihdr_end:]
    path.write_bytes(data)


def _write_tiff(path: Path, pixels: np.ndarray, ifd0: dict[int, Any],
                exif: dict[int, Any]) -> None:
    """Uncompressed TIFF with tifffile, every tag in IFD0 [TIFFEP]_."""
    extratags: list[tuple[int, Any, int, Any, bool]] = []
    for tag, value in sorted({**ifd0, **exif}.items()):
        if isinstance(value, str):
            extratags.append((tag, "s", 0, value, True))
        elif isinstance(value, IFDRational):
            extratags.append((tag, 5, 1, (value.numerator, value.denominator), True))
        else:
            extratags.append((tag, "H", 1, int(value), True))
    tifffile.imwrite(
        path,
        pixels,
        photometric="rgb" if pixels.ndim == 3 else "minisblack",
        metadata=None,
        software=False,
        extratags=extratags,
    )
