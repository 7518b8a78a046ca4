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

Camera raw files (DNG, NEF, CR2, ARW, ...; recognised by their suffix) are read with rawpy
(LibRaw) [LIBRAW]_: the sensor's data as stored (``raw_image_visible``), each photosite's black
level subtracted and divided by (white level - black level), then each 2 x 2 Bayer block
summed with the luminance weights of its colours (R: w_R, each G: w_G / 2, B: w_B, Rec. 709's
by default [BT709]_) into one luminance sample. No demosaicing, white balance, brightening or
tone curve is applied. The frame is then half the sensor's size in each direction
(``Frame.binning`` = 2, ``Frame.raw`` = True), its ``pixels`` linear float32, 0 at black and 1
at white; a block with any photosite at or above black + 0.98 (white - black) (the linear clip
fraction) is set to exactly 1.0, so the linear room counts it as clipped. The camera's RGB is
not Rec. 709's RGB: the weights make a luminance-like signal whose scale the calibration
fixes (the same camera and weights for calibration and measurement). EXIF comes from the file
(exifread reads TIFF-based raw files, DNG included).

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
.. [LIBRAW] LibRaw API documentation (libraw.org), "Data structures": ``raw_image`` visible
   area, ``color.black`` + ``cblack`` per channel, ``color.maximum`` (white level), the CFA
   pattern; rawpy exposes them as ``raw_image_visible``, ``black_level_per_channel``,
   ``white_level``, ``raw_colors_visible`` and ``color_desc``.
.. [BT709] ITU-R Recommendation BT.709-6 (2015), item 3.2: Y = 0.2126 R + 0.7152 G + 0.0722 B.
.. [DNG] Adobe, *Digital Negative (DNG) Specification*, version 1.4.0.0 (2012): the CFA tags
   (CFARepeatPatternDim 33421, CFAPattern 33422, CFAPlaneColor 50710, CFALayout 50711), the
   black and white level tags (BlackLevelRepeatDim 50713, BlackLevel 50714, WhiteLevel 50717).
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
from collections.abc import Sequence
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

from beamwall.constants import FULL_FRAME_DIAGONAL_MM, REC709_LUMINANCE_WEIGHTS
from beamwall.errors import ImageError

__all__ = ["Frame", "read_frame", "write_image", "write_dng", "focal_length_px",
           "frame_pixel_xy",
           "RAW_SUFFIXES", "RAW_CLIP_FRACTION"]

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

#: Camera raw formats, recognised by extension and read with LibRaw (their first IFD is often
#: a small preview, which must not be measured by mistake).
RAW_SUFFIXES = frozenset(
    {".dng", ".nef", ".nrw", ".cr2", ".cr3", ".crw", ".arw", ".srf", ".sr2", ".orf", ".rw2",
     ".raf", ".pef", ".srw", ".erf", ".kdc", ".dcr", ".mos", ".iiq", ".3fr", ".fff", ".raw",
     ".rwl", ".x3f"}
)
_RAW_SUFFIXES = RAW_SUFFIXES

#: A raw photosite at or above black + this fraction of (white - black) is clipped (the same
#: fraction as ``linear.LINEAR_CLIP_FRACTION``; common practice, no source).
RAW_CLIP_FRACTION: float = 0.98

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
    pixels : ndarray, (H, W) or (H, W, 3), uint8 or uint16; raw: (H, W) float32
        Pixel values as stored, RGB order, alpha dropped, no orientation applied. For a raw
        file: binned linear luminance, 0 at black, 1 at white, clipped blocks exactly 1.0.
    bit_depth : int
        8 or 16 (bits per sample of ``pixels``; 16 for raw files).
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
    raw : bool
        A camera raw file: ``pixels`` are linear float32 already (decode as ``"linear"`` with
        black 0 and white 1.0).
    binning : int
        Sensor pixels per frame pixel along each axis (2 for raw files, else 1); see
        :func:`frame_pixel_xy`.
    black_levels : tuple of float or None
        Raw files: black level of each photosite of the 2 x 2 CFA block, row-major, DN.
    white_level : float or None
        Raw files: the sensor's white (clipping) level, DN.
    cfa_pattern : str or None
        Raw files: colours of the 2 x 2 CFA block, row-major, e.g. "RGGB".
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
    raw: bool = False
    binning: int = 1
    black_levels: tuple[float, ...] | None = None
    white_level: float | None = None
    cfa_pattern: str | None = None

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
        The file cannot be read, is empty, truncated, not JPEG/PNG/TIFF or a raw file LibRaw
        reads (a raw file: not a 2 x 2 Bayer sensor), or holds samples that are not 8- or
        16-bit unsigned integers or not grey/RGB(A). The
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
    if path.suffix.lower() in RAW_SUFFIXES:
        raw = _read_raw(data, path)
        fields, warnings = _read_exif(data, kind or "raw")
        return Frame(path=path, pixels=raw.pop("pixels"), bit_depth=16,
                     sha256=hashlib.sha256(data).hexdigest(), warnings=warnings, raw=True,
                     binning=2, **raw, **fields)
    if kind is None:
        raise ImageError("not a JPEG, PNG or TIFF file", file=path)
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


def _read_raw(data: bytes, path: Path) -> dict[str, Any]:
    """Bin a raw file's Bayer data to linear luminance (see the module docstring)."""
    try:
        import rawpy
    except ImportError:  # pragma: no cover - the "raw" extra
        raise ImageError("camera raw files need the rawpy package (pip install rawpy)",
                         file=path) from None
    if path.suffix.lower() == ".dng":
        # LibRaw takes any grey TIFF for a raw file; a DNG names its version in IFD0 [DNG]_.
        try:
            with tifffile.TiffFile(io.BytesIO(data)) as tif:
                is_dng = 50706 in tif.pages.first.tags
        except Exception:
            is_dng = False
        if not is_dng:
            raise ImageError("not a DNG file (no DNGVersion tag)", file=path)
    try:
        with rawpy.imread(io.BytesIO(data)) as raw:
            mosaic = np.array(raw.raw_image_visible, copy=True)
            colours = np.array(raw.raw_colors_visible[:2, :2], copy=True)
            desc = raw.color_desc.decode("ascii", "replace")
            blacks = [float(b) for b in raw.black_level_per_channel]
            white = float(raw.white_level)
    except Exception as exc:  # LibRaw's errors share no useful base; report the reason
        reason = " ".join(str(exc).strip("b'\"").split()) or type(exc).__name__
        raise ImageError(f"LibRaw cannot read this raw file: {reason}", file=path) from None
    letters = "".join(desc[int(c)] if int(c) < len(desc) else "?" for c in colours.ravel())
    if mosaic.ndim != 2 or letters not in ("RGGB", "BGGR", "GRBG", "GBRG"):
        raise ImageError(f"only 2 x 2 Bayer sensors (R, G, G, B) are read; this one's CFA "
                         f"block is {letters!r}", file=path)
    h, w = (mosaic.shape[0] // 2) * 2, (mosaic.shape[1] // 2) * 2
    if h < 2 or w < 2:
        raise ImageError("raw image has no pixels", file=path)
    weights = dict(zip("RGB", REC709_LUMINANCE_WEIGHTS))
    out = np.zeros((h // 2, w // 2), np.float32)
    clipped = np.zeros((h // 2, w // 2), bool)
    site_blacks = []
    for k, letter in enumerate(letters):
        dy, dx = divmod(k, 2)
        black = blacks[int(colours[dy, dx])]
        site_blacks.append(black)
        if not white > black:
            raise ImageError(f"white level {white:g} not above black level {black:g}",
                             file=path)
        sub = mosaic[dy:h:2, dx:w:2]
        clipped |= sub >= black + RAW_CLIP_FRACTION * (white - black)
        share = weights[letter] / letters.count(letter)
        out += (sub.astype(np.float32) - np.float32(black)) * np.float32(share / (white - black))
    out[clipped] = 1.0
    return {"pixels": out, "black_levels": tuple(site_blacks), "white_level": white,
            "cfa_pattern": letters}


def frame_pixel_xy(frame: Frame, pixel_xy: np.typing.ArrayLike) -> np.ndarray:
    """Turn positions in the photo as stored (e.g. a session's points) into frame pixels.

    Parameters
    ----------
    frame : Frame
    pixel_xy : (..., 2) array_like
        Positions in the file's full-resolution pixels (for raw files, sensor photosites of
        the visible area), px.

    Returns
    -------
    (..., 2) float64
        Positions in ``frame.pixels``, px: (u - (b - 1) / 2) / b with b = ``frame.binning``
        (a b x b block's centre lands on its binned pixel's centre).

    Examples
    --------
    >>> f = Frame(path=Path("a.dng"), pixels=np.zeros((2, 2), np.float32), bit_depth=16,
    ...           sha256="", raw=True, binning=2)
    >>> frame_pixel_xy(f, [[0.5, 0.5], [3.5, 1.5]]).tolist()
    [[0.0, 0.0], [1.5, 0.5]]
    """
    p = np.asarray(pixel_xy, dtype=np.float64)
    b = float(frame.binning)
    return (p - (b - 1.0) / 2.0) / b


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
        Focal length, px of ``frame.pixels`` (a binned raw frame's: the sensor's divided by
        ``frame.binning``); None when neither the override nor the EXIF fields give it.

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
        return float(override_px) / frame.binning
    if frame.focal_length_mm is not None and frame.focal_plane_px_per_mm is not None:
        return frame.focal_length_mm * frame.focal_plane_px_per_mm / frame.binning
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


#: CFAPattern colour codes of TIFF/EP and DNG: 0 red, 1 green, 2 blue [DNG]_.
_CFA_CODES = {"R": 0, "G": 1, "B": 2}


def write_dng(
    path: str | PathLike[str],
    mosaic: np.ndarray,
    *,
    cfa_pattern: str = "RGGB",
    black_levels: float | Sequence[float] = 0.0,
    white_level: float = 65535.0,
    exposure_s: float | None = None,
    f_number: float | None = None,
    iso: float | None = None,
    focal_length_mm: float | None = None,
    focal_plane_px_per_mm: float | None = None,
    make: str | None = None,
    model: str | None = None,
) -> None:
    """Write a minimal, uncompressed Bayer DNG that LibRaw reads; overwrites ``path``.

    Parameters
    ----------
    path : str or path-like
        The file (``.dng``).
    mosaic : (H, W) uint16
        The sensor's data, one value per photosite; H, W even and at least 22 (LibRaw refuses
        smaller images).
    cfa_pattern : str, keyword-only
        Colours of the 2 x 2 block, row-major: "RGGB", "BGGR", "GRBG" or "GBRG".
    black_levels : float or 4 floats, keyword-only
        Black level, DN: one for all, or one per photosite of the 2 x 2 block, row-major.
    white_level : float, keyword-only
        The value at which the sensor clips, DN.
    exposure_s, f_number, iso, focal_length_mm, focal_plane_px_per_mm, make, model
        As for :func:`write_image` (EXIF tags in IFD0, as TIFF/EP places them [TIFFEP]_).

    Raises
    ------
    ImageError
        A mosaic that is not 2-D uint16 with even sides of at least 22, or a bad pattern.

    Notes
    -----
    Tags per the DNG specification [DNG]_: NewSubFileType 0, PhotometricInterpretation
    32803 (CFA), CFARepeatPatternDim (2, 2), CFAPattern, CFAPlaneColor (0, 1, 2), CFALayout 1,
    DNGVersion 1.4, UniqueCameraModel, BlackLevelRepeatDim (2, 2), BlackLevel, WhiteLevel, an
    identity ColorMatrix1 and AsShotNeutral (1, 1, 1) (colour is not used by beamwall).

    References
    ----------
    [DNG]_, [TIFFEP]_

    Examples
    --------
    >>> import tempfile
    >>> cfa = np.full((24, 24), 1000, np.uint16)
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     write_dng(f"{tmp}/a.dng", cfa, black_levels=200, white_level=4095, iso=100)
    ...     frame = read_frame(f"{tmp}/a.dng")
    >>> frame.shape, frame.raw, frame.iso, round(float(frame.pixels[0, 0]), 6)
    ((12, 12), True, 100.0, 0.205392)
    """
    path = Path(path)
    mosaic = np.asarray(mosaic)
    if (mosaic.ndim != 2 or mosaic.dtype != np.uint16 or min(mosaic.shape) < 22
            or mosaic.shape[0] % 2 or mosaic.shape[1] % 2):
        raise ImageError(f"mosaic must be (H, W) uint16 with even sides >= 22, got "
                         f"{mosaic.shape} {mosaic.dtype}", file=path)
    if cfa_pattern not in ("RGGB", "BGGR", "GRBG", "GBRG"):
        raise ImageError(f"cfa_pattern must be a 2 x 2 Bayer block such as 'RGGB', got "
                         f"{cfa_pattern!r}", file=path)
    blacks = np.broadcast_to(np.asarray(black_levels, np.float64), (4,))
    if not (np.all(np.isfinite(blacks)) and np.all(blacks >= 0) and white_level > blacks.max()
            and white_level <= 65535):
        raise ImageError(f"need 0 <= black levels < white level <= 65535, got {list(blacks)}, "
                         f"{white_level}", file=path)
    tags: list[tuple[int, Any, int, Any, bool]] = [
        (50706, "B", 4, (1, 4, 0, 0), True),                          # DNGVersion
        (50707, "B", 4, (1, 1, 0, 0), True),                          # DNGBackwardVersion
        (50708, "s", 0, f"{make or 'Synthetic'} {model or 'camera'}", True),
        (33421, "H", 2, (2, 2), True),                                # CFARepeatPatternDim
        (33422, "B", 4, tuple(_CFA_CODES[c] for c in cfa_pattern), True),
        (50710, "B", 3, (0, 1, 2), True),                             # CFAPlaneColor
        (50711, "H", 1, 1, True),                                     # CFALayout
        (50713, "H", 2, (2, 2), True),                                # BlackLevelRepeatDim
        (50714, "2I", 4, tuple(v for b in blacks
                               for v in (Fraction(float(b)).limit_denominator(1000).numerator,
                                         Fraction(float(b)).limit_denominator(1000).denominator)),
         True),                                                       # BlackLevel
        (50717, "I", 1, int(round(white_level)), True),               # WhiteLevel
        (50721, "2i", 9, (1, 1, 0, 1, 0, 1, 0, 1, 1, 1, 0, 1, 0, 1, 0, 1, 1, 1), True),
        (50728, "2I", 3, (1, 1, 1, 1, 1, 1), True),                   # AsShotNeutral
        (50778, "H", 1, 21, True),                                    # CalibrationIlluminant1
    ]
    values: dict[int, Any] = {}
    if make is not None:
        values[_TAG_MAKE] = make
    if model is not None:
        values[_TAG_MODEL] = model
    if exposure_s is not None:
        values[_TAG_EXPOSURE_TIME] = _rational(exposure_s, "exposure_s", path)
    if f_number is not None:
        values[_TAG_F_NUMBER] = _rational(f_number, "f_number", path)
    if iso is not None:
        values[_TAG_ISO] = _short(iso, "iso", path)
    if focal_length_mm is not None:
        values[_TAG_FOCAL_LENGTH] = _rational(focal_length_mm, "focal_length_mm", path)
    if focal_plane_px_per_mm is not None:
        per_cm = _rational(focal_plane_px_per_mm * 10.0, "focal_plane_px_per_mm", path)
        values[_TAG_FOCAL_PLANE_X_RES] = per_cm
        values[_TAG_FOCAL_PLANE_Y_RES] = per_cm
        values[_TAG_FOCAL_PLANE_UNIT] = 3
    for tag, value in sorted(values.items()):
        if isinstance(value, str):
            tags.append((tag, "s", 0, value, True))
        elif isinstance(value, IFDRational):
            tags.append((tag, 5, 1, (value.numerator, value.denominator), True))
        else:
            tags.append((tag, "H", 1, int(value), True))
    try:
        tifffile.imwrite(path, mosaic, photometric=32803, subfiletype=0, metadata=None,
                         software=False, extratags=sorted(tags, key=lambda t: t[0]))
    except OSError as exc:
        raise ImageError(f"cannot write file: {exc.strerror or exc}", file=path) from None
