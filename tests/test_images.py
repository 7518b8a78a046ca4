"""Tests of the load room: decoding photos and their EXIF, writing them back.

Independent readers and writers stand beside ours: Pillow decodes the same files (pixel order,
eXIf chunk), tifffile reads the TIFF tags we write, Pillow writes a TIFF with an Exif sub-IFD
and JPEGs with tag layouts our writer does not use, OpenCV writes BGRA and LZW files. Exif tag
numbers and units are from CIPA DC-008-2019 (Exif 2.32), section 4.6.
"""

from __future__ import annotations

import hashlib
import io
import math
from pathlib import Path

import cv2
import numpy as np
import pytest
import tifffile
from PIL import Image
from PIL.TiffImagePlugin import IFDRational, ImageFileDirectory_v2

from beamwall.constants import FULL_FRAME_DIAGONAL_MM
from beamwall.errors import BeamwallError, ImageError
from beamwall.images import Frame, focal_length_px, read_frame, write_image

EXIF = dict(
    exposure_s=1 / 125,
    f_number=2.8,
    iso=400,
    focal_length_mm=4.25,
    focal_plane_px_per_mm=1234.5,
    focal_length_35mm=26,
    make="Fictional Optics",
    model="Test Camera 1",
    orientation=6,
)


def _ramp(shape, dtype, seed=0):
    rng = np.random.default_rng(seed)
    top = np.iinfo(dtype).max
    return rng.integers(0, top + 1, size=shape, dtype=np.int64).astype(dtype)


def _check_exif(frame: Frame) -> None:
    assert frame.exposure_s == pytest.approx(1 / 125, rel=1e-12)
    assert frame.f_number == pytest.approx(2.8, rel=1e-12)
    assert frame.iso == 400
    assert frame.focal_length_mm == pytest.approx(4.25, rel=1e-12)
    assert frame.focal_plane_px_per_mm == pytest.approx(1234.5, rel=1e-9)
    assert frame.focal_length_35mm == 26
    assert (frame.make, frame.model, frame.orientation) == ("Fictional Optics",
                                                            "Test Camera 1", 6)
    assert frame.warnings == ()


@pytest.mark.parametrize("suffix", [".png", ".tif"])
@pytest.mark.parametrize("shape", [(37, 53), (37, 53, 3)])
@pytest.mark.parametrize("dtype", [np.uint8, np.uint16])
def test_lossless_round_trip(tmp_path, suffix, shape, dtype):
    pixels = _ramp(shape, dtype)
    path = tmp_path / f"photo{suffix}"
    write_image(path, pixels, **EXIF)
    frame = read_frame(path)
    np.testing.assert_array_equal(frame.pixels, pixels)
    assert frame.pixels.dtype == dtype
    assert frame.bit_depth == (8 if dtype == np.uint8 else 16)
    assert frame.shape == shape[:2]                      # orientation 6 recorded, not applied
    assert frame.sha256 == hashlib.sha256(path.read_bytes()).hexdigest()
    _check_exif(frame)


def test_jpeg_round_trip(tmp_path):
    yy, xx = np.mgrid[0:48, 0:64]
    pixels = np.stack([xx * 3, yy * 4, 255 - xx * 3], axis=-1).astype(np.uint8)
    path = tmp_path / "photo.jpg"
    write_image(path, pixels, jpeg_quality=95, **EXIF)
    frame = read_frame(path)
    assert frame.pixels.shape == (48, 64, 3) and frame.bit_depth == 8
    # Lossy: a smooth image at quality 95 comes back within a few codes.
    assert np.abs(frame.pixels.astype(int) - pixels).mean() < 2.0
    _check_exif(frame)
    grey = read_frame(_written(tmp_path / "grey.jpg", pixels[..., 1]))
    assert grey.pixels.shape == (48, 64)


def _written(path, pixels, **kw):
    write_image(path, pixels, **kw)
    return path


def test_rgb_order_matches_pillow(tmp_path):
    # Pillow decodes independently of OpenCV, in RGB order.
    pixels = _ramp((20, 30, 3), np.uint8, seed=1)
    for name in ("a.png", "a.jpg", "a.tif"):
        path = _written(tmp_path / name, pixels)
        with Image.open(path) as im:
            np.testing.assert_array_equal(read_frame(path).pixels, np.asarray(im))


def test_png_exif_chunk_read_by_pillow(tmp_path):
    path = _written(tmp_path / "a.png", _ramp((8, 9), np.uint16), **EXIF)
    with Image.open(path) as im:
        exif = im.getexif()
        sub = exif.get_ifd(0x8769)
    assert exif[0x010F] == "Fictional Optics" and exif[0x0112] == 6
    assert float(sub[0x829A]) == pytest.approx(1 / 125)
    assert sub[0x8827] == 400
    assert float(sub[0xA20E]) == pytest.approx(12345.0) and sub[0xA210] == 3  # px/cm


def test_tiff_tags_in_ifd0_read_by_tifffile(tmp_path):
    path = _written(tmp_path / "a.tif", _ramp((8, 9, 3), np.uint16), **EXIF)
    with tifffile.TiffFile(path) as tif:
        tags = tif.pages.first.tags
        assert tags[33434].value == (1, 125)           # ExposureTime, RATIONAL
        assert tags[34855].value == 400                # ISOSpeedRatings
        assert tags[271].value == "Fictional Optics"


def _pillow_exif(ifd0: dict, sub: dict) -> Image.Exif:
    exif = Image.Exif()
    for tag, value in ifd0.items():
        exif[tag] = value
    exif_ifd = exif.get_ifd(0x8769)
    for tag, value in sub.items():
        exif_ifd[tag] = value
    return exif


def test_tiff_exif_sub_ifd_written_by_pillow(tmp_path):
    info = ImageFileDirectory_v2()
    info[0x010F] = "Fictional Optics"
    info[0x8769] = {0x829A: IFDRational(1, 60), 0x829D: IFDRational(56, 10), 0x8827: 800}
    pixels = _ramp((10, 12), np.uint16)
    path = tmp_path / "camera.tif"
    Image.fromarray(pixels).save(path, format="TIFF", tiffinfo=info)
    frame = read_frame(path)
    assert frame.exposure_s == pytest.approx(1 / 60)
    assert frame.f_number == pytest.approx(5.6)
    assert frame.iso == 800 and frame.make == "Fictional Optics"
    np.testing.assert_array_equal(frame.pixels, pixels)


@pytest.mark.parametrize("unit, mm_per_unit", [(None, 25.4), (2, 25.4), (3, 10.0), (4, 1.0)])
def test_focal_plane_units(tmp_path, unit, mm_per_unit):
    # Exif 2.32: unit 2 = inch (also the default when absent), 3 = cm; TIFF/EP: 4 = mm.
    sub = {0xA20E: IFDRational(5000, 1), 0x920A: IFDRational(6, 1)}
    if unit is not None:
        sub[0xA210] = unit
    path = tmp_path / "a.jpg"
    Image.fromarray(np.zeros((8, 8, 3), np.uint8)).save(
        path, exif=_pillow_exif({}, sub).tobytes())
    frame = read_frame(path)
    assert frame.focal_plane_px_per_mm == pytest.approx(5000 / mm_per_unit)


def test_iso_above_65535_from_recommended_exposure_index(tmp_path):
    # Exif 2.32: PhotographicSensitivity 65535 means "65535 or more".
    path = tmp_path / "a.jpg"
    sub = {0x8827: 65535, 0x8832: 102400}
    Image.fromarray(np.zeros((8, 8), np.uint8)).save(path, exif=_pillow_exif({}, sub).tobytes())
    assert read_frame(path).iso == 102400


def test_zero_means_unknown(tmp_path):
    # Exif 2.32: FocalLengthIn35mmFilm 0 = unknown.
    path = tmp_path / "a.jpg"
    sub = {0xA405: 0, 0x829D: IFDRational(0, 1)}
    Image.fromarray(np.zeros((8, 8), np.uint8)).save(path, exif=_pillow_exif({}, sub).tobytes())
    frame = read_frame(path)
    assert frame.focal_length_35mm is None and frame.f_number is None


def test_no_exif_and_nothing_printed(tmp_path, capfd):
    path = tmp_path / "plain.png"
    cv2.imwrite(str(path), np.zeros((5, 6), np.uint8))
    frame = read_frame(path)
    assert frame.exposure_s is None and frame.make is None and frame.orientation is None
    out, err = capfd.readouterr()
    assert out == "" and err == ""


def test_alpha_dropped_and_bgra_reordered(tmp_path):
    path = tmp_path / "rgba.png"
    bgra = np.zeros((4, 5, 4), np.uint16)
    bgra[...] = (1000, 2000, 3000, 65535)             # OpenCV stores B, G, R, A
    cv2.imwrite(str(path), bgra)
    frame = read_frame(path)
    assert frame.pixels.shape == (4, 5, 3)
    np.testing.assert_array_equal(frame.pixels[0, 0], [3000, 2000, 1000])


def test_grey_alpha_png(tmp_path):
    path = tmp_path / "la.png"
    Image.fromarray(np.dstack([np.full((4, 5), 77, np.uint8), np.full((4, 5), 9, np.uint8)]),
                    "LA").save(path)
    frame = read_frame(path)
    assert frame.shape == (4, 5)
    assert np.all(frame.pixels == 77)               # alpha (9) dropped


def test_lzw_tiff_falls_back_to_opencv(tmp_path):
    # OpenCV writes LZW-compressed TIFF, which tifffile cannot decode without imagecodecs.
    pixels = _ramp((16, 20, 3), np.uint16, seed=2)
    path = tmp_path / "lzw.tif"
    cv2.imwrite(str(path), pixels[..., ::-1])
    np.testing.assert_array_equal(read_frame(path).pixels, pixels)


def test_planar_tiff(tmp_path):
    pixels = _ramp((16, 20, 3), np.uint16, seed=3)
    path = tmp_path / "planar.tif"
    tifffile.imwrite(path, np.moveaxis(pixels, -1, 0), photometric="rgb",
                     planarconfig="separate", metadata=None)
    np.testing.assert_array_equal(read_frame(path).pixels, pixels)


def test_big_endian_tiff(tmp_path):
    pixels = _ramp((6, 7), np.uint16, seed=4)
    path = tmp_path / "motorola.tif"
    tifffile.imwrite(path, pixels, byteorder=">", metadata=None)
    frame = read_frame(path)
    np.testing.assert_array_equal(frame.pixels, pixels)
    assert frame.pixels.dtype == np.uint16


def _bad_files(tmp_path):
    good_jpg = _written(tmp_path / "good.jpg", _ramp((32, 32, 3), np.uint8)).read_bytes()
    good_png = _written(tmp_path / "good.png", _ramp((32, 32), np.uint16)).read_bytes()
    good_tif = _written(tmp_path / "good.tif", _ramp((32, 32), np.uint16)).read_bytes()
    float_tif = io.BytesIO()
    tifffile.imwrite(float_tif, np.zeros((4, 4), np.float32))
    five = io.BytesIO()
    tifffile.imwrite(five, np.zeros((4, 4, 5), np.uint8), photometric="minisblack",
                     planarconfig="contig")
    return {
        "empty.jpg": (b"", "empty file"),
        "text.jpg": (b"not an image at all\n", "not a JPEG, PNG or TIFF"),
        "cut.jpg": (good_jpg[: len(good_jpg) // 2], "truncated JPEG"),
        "cut.png": (good_png[: len(good_png) // 2], "truncated PNG"),
        "cut.tif": (good_tif[: len(good_tif) // 2], "cannot decode the TIFF"),
        "junk.jpg": (b"\xff\xd8\xff" + bytes(200) + b"\xff\xda\xff\xd9", "cannot decode"),
        "float.tif": (float_tif.getvalue(), "unsupported sample type float32"),
        "five.tif": (five.getvalue(), "unsupported image layout"),
        "raw.dng": (good_tif, "not a DNG"),
    }


def test_bad_files_raise_one_line_image_error(tmp_path):
    for name, (data, reason) in _bad_files(tmp_path).items():
        path = tmp_path / name
        path.write_bytes(data)
        with pytest.raises(ImageError, match=reason) as info:
            read_frame(path)
        assert info.value.file == str(path)
        assert "\n" not in str(info.value)
        assert str(info.value).startswith(str(path))


def test_missing_file(tmp_path):
    with pytest.raises(ImageError, match="cannot read file") as info:
        read_frame(tmp_path / "absent.jpg")
    assert isinstance(info.value, BeamwallError)


def test_write_errors(tmp_path):
    with pytest.raises(ImageError, match="use .jpg, .png or .tif"):
        write_image(tmp_path / "a.bmp", np.zeros((2, 2), np.uint8))
    with pytest.raises(ImageError, match="JPEG pixels must be uint8"):
        write_image(tmp_path / "a.jpg", np.zeros((2, 2), np.uint16))
    with pytest.raises(ImageError, match=r"must be \(H, W\) or \(H, W, 3\)"):
        write_image(tmp_path / "a.png", np.zeros((2, 2, 4), np.uint8))
    with pytest.raises(ImageError, match="exposure_s must be a positive number"):
        write_image(tmp_path / "a.png", np.zeros((2, 2), np.uint8), exposure_s=-1.0)


def _frame(shape, **fields):
    return Frame(path=Path("frame.jpg"), pixels=np.zeros(shape, np.uint8), bit_depth=8,
                 sha256="", **fields)


def test_focal_length_px_paths_agree_for_full_frame_sensor():
    # Geometry: a 36 mm x 24 mm sensor of 6000 x 4000 px has 6000 / 36 px per mm, and its
    # 35 mm equivalent focal length is the focal length itself.
    f_mm = 50.0
    by_plane = focal_length_px(_frame((4000, 6000), focal_length_mm=f_mm,
                                      focal_plane_px_per_mm=6000 / 36))
    by_35mm = focal_length_px(_frame((4000, 6000), focal_length_35mm=f_mm))
    assert by_plane == pytest.approx(f_mm * 6000 / 36, rel=1e-12)
    assert by_35mm == pytest.approx(by_plane, rel=1e-9)
    assert by_35mm == pytest.approx(f_mm / FULL_FRAME_DIAGONAL_MM * math.hypot(6000, 4000))


def test_focal_length_px_precedence_and_errors():
    frame = _frame((30, 40), focal_length_mm=4.0, focal_plane_px_per_mm=250.0,
                   focal_length_35mm=28.0)
    assert focal_length_px(frame) == 1000.0                     # plane resolution over 35 mm
    assert focal_length_px(frame, override_px=321.0) == 321.0   # the override wins
    assert focal_length_px(_frame((30, 40), focal_length_mm=4.0)) is None
    with pytest.raises(ImageError, match="positive number of px"):
        focal_length_px(frame, override_px=-5.0)
