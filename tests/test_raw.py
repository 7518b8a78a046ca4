"""Camera raw input: small DNG files built from known data come back exactly.

Outside references: LibRaw (through rawpy) reads our DNG files, and the values it reports
(mosaic, per-channel black levels, white level, CFA pattern) must be the ones written
(Adobe DNG Specification 1.4: BlackLevelRepeatDim / BlackLevel / WhiteLevel / CFAPattern).
"""

from __future__ import annotations

import numpy as np
import pytest
import rawpy

from beamwall.constants import REC709_LUMINANCE_WEIGHTS
from beamwall.errors import ImageError
from beamwall.images import frame_pixel_xy, read_frame, write_dng
from beamwall.linear import Exposure, normalise

BLACKS = (512.0, 510.0, 508.0, 506.0)   # per photosite of the 2 x 2 block, row-major
WHITE = 4095.0


def _mosaic(seed=0, h=32, w=48):
    rng = np.random.default_rng(seed)
    return rng.integers(600, 3500, (h, w)).astype(np.uint16)


def _expected(mosaic, pattern="RGGB"):
    wts = dict(zip("RGB", REC709_LUMINANCE_WEIGHTS))
    out = np.zeros((mosaic.shape[0] // 2, mosaic.shape[1] // 2))
    for k, c in enumerate(pattern):
        dy, dx = divmod(k, 2)
        share = wts[c] / pattern.count(c)
        out += (mosaic[dy::2, dx::2] - BLACKS[k]) / (WHITE - BLACKS[k]) * share
    return out


@pytest.mark.parametrize("pattern", ["RGGB", "BGGR", "GRBG"])
def test_dng_values_come_back_exactly(tmp_path, pattern):
    mosaic = _mosaic()
    path = tmp_path / "a.dng"
    write_dng(path, mosaic, cfa_pattern=pattern, black_levels=BLACKS, white_level=WHITE,
              exposure_s=0.02, f_number=2.8, iso=200, make="Fictional", model="Cam R")
    with rawpy.imread(str(path)) as raw:     # LibRaw as the outside reader
        np.testing.assert_array_equal(raw.raw_image_visible, mosaic)
        assert raw.white_level == WHITE
    frame = read_frame(path)
    assert frame.raw and frame.binning == 2 and frame.shape == (16, 24)
    assert frame.cfa_pattern == pattern
    assert frame.black_levels == BLACKS and frame.white_level == WHITE
    assert (frame.exposure_s, frame.f_number, frame.iso) == (0.02, 2.8, 200.0)
    assert (frame.make, frame.model) == ("Fictional", "Cam R")
    assert frame.pixels.dtype == np.float32
    np.testing.assert_allclose(frame.pixels, _expected(mosaic, pattern), rtol=2e-6, atol=1e-7)


def test_uniform_grey_gives_luminance_without_white_balance(tmp_path):
    # Every photosite at half scale above its own black: luminance 0.5 whatever the colours
    # (the weights sum to 1; no white balance, brightening or gamma).
    mosaic = np.empty((24, 24), np.uint16)
    for k in range(4):
        dy, dx = divmod(k, 2)
        mosaic[dy::2, dx::2] = round(BLACKS[k] + 0.5 * (WHITE - BLACKS[k]))
    write_dng(tmp_path / "g.dng", mosaic, black_levels=BLACKS, white_level=WHITE)
    frame = read_frame(tmp_path / "g.dng")
    np.testing.assert_allclose(frame.pixels, 0.5, atol=2e-4)


def test_clipping_judged_against_raw_white(tmp_path):
    mosaic = np.full((24, 24), 1500, np.uint16)
    mosaic[4, 5] = 4095           # one green photosite at white: its block is clipped
    mosaic[10, 10] = int(512 + 0.975 * (4095 - 512))   # just under the clip fraction
    write_dng(tmp_path / "c.dng", mosaic, black_levels=BLACKS, white_level=WHITE)
    frame = read_frame(tmp_path / "c.dng")
    assert frame.pixels[2, 2] == 1.0 and frame.pixels[5, 5] < 0.98
    sig = normalise([frame.pixels], [Exposure(0.01, 2.0, 100.0)], darks=[None],
                    encoding="linear", focal_length_px=None)
    assert sig.saturated[2, 2] and np.isnan(sig.value[2, 2])
    assert sig.saturated.sum() == 1


def test_frame_pixels_of_session_points():
    frame = read_frame.__globals__["Frame"](path=None, pixels=np.zeros((2, 2), np.float32),
                                            bit_depth=16, sha256="", raw=True, binning=2)
    # A 2 x 2 block of sensor sites 0..1 has its centre at 0.5: binned pixel 0.
    np.testing.assert_allclose(frame_pixel_xy(frame, [[0.5, 0.5], [2.5, 0.5]]),
                               [[0.0, 0.0], [1.0, 0.0]])


def test_unreadable_raw_is_one_line_error(tmp_path):
    bad = tmp_path / "broken.nef"
    bad.write_bytes(b"II*\x00" + bytes(300))
    with pytest.raises(ImageError, match="LibRaw cannot read") as info:
        read_frame(bad)
    assert "\n" not in str(info.value) and str(info.value).startswith(str(bad))


def test_non_bayer_refused(tmp_path):
    with pytest.raises(ImageError, match="2 x 2 Bayer"):
        write_dng(tmp_path / "x.dng", _mosaic(), cfa_pattern="RGBG")
