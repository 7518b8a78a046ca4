"""Tests of the normalise room: sRGB curve, linear levels, clipping, darks, brackets, falloff.

References beside the checks: colour-science (``colour.models.eotf_sRGB`` and
``eotf_inverse_sRGB``, IEC 61966-2-1) for the sRGB curve; ITU-R BT.709-6 item 3.2 for the
luminance weights; OpenCV's ``cv2.undistortPoints`` for the ray angle of a pixel.

Tolerances: float64 sRGB against colour-science to 1e-12 relative; float32 paths to 1e-6
relative; a quantised 8-bit bracket to the quantisation bound computed per pixel (half a code
each side, decoded) plus float32 rounding.
"""

from __future__ import annotations

import math
import re

import cv2
import numpy as np
import pytest

from beamwall.constants import REC709_LUMINANCE_WEIGHTS
from beamwall.errors import InputError
from beamwall.linear import (
    BRACKET_TOLERANCE_FRACTION,
    Exposure,
    exposure_factor,
    linear_luminance,
    linearise,
    natural_falloff,
    normalise,
    srgb_decode,
    srgb_encode,
)

with np.printoptions():
    # colour-science switches numpy to its 1.13 legacy printing on import (colour/__init__.py);
    # keep the suite's doctests printing as everywhere else.
    import colour

SHORT = Exposure(exposure_s=0.01, f_number=2.0, iso=100)   # factor 0.0025
LONG = Exposure(exposure_s=0.04, f_number=2.0, iso=100)    # factor 0.01, 2 stops more


# ---------------------------------------------------------------------------- sRGB curve


def test_srgb_against_colour_science():
    v = np.linspace(-0.1, 1.1, 1200).reshape(3, 400, 1)      # n-dimensional, both segments
    # colour-science: colour.models.eotf_sRGB / eotf_inverse_sRGB (IEC 61966-2-1).
    np.testing.assert_allclose(srgb_decode(v), colour.models.eotf_sRGB(v), rtol=1e-12,
                               atol=1e-15)
    np.testing.assert_allclose(srgb_encode(v), colour.models.eotf_inverse_sRGB(v),
                               rtol=1e-12, atol=1e-15)


def test_srgb_thresholds_and_float32():
    # IEC 61966-2-1: the two segments meet at V = 0.04045 / L = 0.0031308.
    assert srgb_decode(0.04045) == pytest.approx(0.04045 / 12.92, rel=1e-12)
    assert srgb_encode(0.0031308) == pytest.approx(12.92 * 0.0031308, rel=1e-12)
    v32 = np.linspace(0, 1, 256, dtype=np.float32)
    assert srgb_decode(v32).dtype == np.float32
    np.testing.assert_allclose(srgb_encode(srgb_decode(v32)), v32, atol=2e-6)


def test_srgb_nan_passes_through(recwarn):
    out = srgb_decode(np.array([np.nan, 0.5]))
    assert np.isnan(out[0]) and out[1] == pytest.approx(0.214041140482232, rel=1e-12)
    assert np.isnan(srgb_encode(np.array([np.nan]))[0])
    assert len(recwarn) == 0


# ---------------------------------------------------------------------------- linearising


def test_linear_levels():
    codes = np.array([[64, 1064, 4064, 65535]], np.uint16)
    out = linearise(codes, encoding="linear", black_level=64, white_level=4064)
    np.testing.assert_allclose(out, [[0.0, 0.25, 1.0, (65535 - 64) / 4000]], rtol=1e-6)
    eight = np.arange(256, dtype=np.uint8).reshape(16, 16)
    np.testing.assert_allclose(linearise(eight, encoding="linear", black_level=16),
                               (eight - 16.0) / (255 - 16), rtol=1e-6, atol=1e-7)


def test_srgb_linearise_8_and_16_bit_against_colour_science():
    codes8 = np.arange(256, dtype=np.uint8).reshape(16, 16)
    codes16 = codes8.astype(np.uint16) * 257              # the same levels in 16 bits
    # colour-science: colour.models.eotf_sRGB
    expected = colour.models.eotf_sRGB(codes8 / 255)
    np.testing.assert_allclose(linearise(codes8), expected, rtol=1e-6, atol=1e-9)
    np.testing.assert_allclose(linearise(codes16), expected, rtol=1e-6, atol=1e-9)


def test_luminance_weights_rec709():
    # ITU-R BT.709-6 item 3.2: Y = 0.2126 R + 0.7152 G + 0.0722 B.
    rgb = np.array([[[255, 0, 0], [0, 255, 0], [0, 0, 255], [128, 128, 128]]], np.uint8)
    y, _ = linear_luminance(rgb)
    grey = colour.models.eotf_sRGB(128 / 255)
    np.testing.assert_allclose(y, [[0.2126, 0.7152, 0.0722, grey]], rtol=1e-6)
    y_custom, _ = linear_luminance(rgb, weights=(0.0, 1.0, 0.0))
    np.testing.assert_allclose(y_custom, [[0.0, 1.0, 0.0, grey]], rtol=1e-6)


def test_clipped_detection_srgb_any_channel():
    rgb = np.array([[[249, 249, 249], [250, 0, 0], [0, 250, 0], [0, 0, 255]]], np.uint8)
    _, clipped = linear_luminance(rgb)
    np.testing.assert_array_equal(clipped, [[False, True, True, True]])
    _, clipped_grey = linear_luminance(np.array([[249, 250]], np.uint8))
    np.testing.assert_array_equal(clipped_grey, [[False, True]])


def test_clipped_detection_linear():
    black, white = 64, 4064          # threshold black + 0.98 (white - black) = 3984
    rgb = np.zeros((1, 3, 3), np.uint16)
    rgb[0, 0] = (3983, 3983, 3983)
    rgb[0, 1] = (100, 3984, 100)
    rgb[0, 2] = (100, 100, 65535)
    _, clipped = linear_luminance(rgb, encoding="linear", black_level=black, white_level=white)
    np.testing.assert_array_equal(clipped, [[False, True, True]])


def test_clipped_detection_strips():
    # More rows than one strip: the mask and luminance are assembled without seams.
    image = np.zeros((700, 5, 3), np.uint8)
    image[::97, 2, 1] = 255
    y, clipped = linear_luminance(image)
    np.testing.assert_array_equal(np.flatnonzero(clipped.any(axis=1)), np.arange(0, 700, 97))
    assert np.count_nonzero(y) == clipped.sum()


# ---------------------------------------------------------------------------- one image


def _encode8(linear):
    return np.round(srgb_encode(np.clip(linear, 0, 1)) * 255).astype(np.uint8)


def test_dark_subtracted_in_linear_domain():
    rng = np.random.default_rng(1)
    torch = rng.uniform(0.05, 0.5, (6, 7, 3))
    ambient = rng.uniform(0.01, 0.1, (6, 7, 3))
    image = srgb_encode(torch + ambient).astype(np.float32)   # float codes: no quantisation
    dark = srgb_encode(ambient).astype(np.float32)
    signal = normalise([image], [SHORT], darks=[dark], encoding="srgb", focal_length_px=1e9)
    expected = (torch @ np.array(REC709_LUMINANCE_WEIGHTS)) / exposure_factor(SHORT)
    np.testing.assert_allclose(signal.value, expected, rtol=2e-5)
    # Subtracting in the code domain would be wrong by far more than that.
    wrong = linearise(image - dark) @ np.array(REC709_LUMINANCE_WEIGHTS)
    assert np.max(np.abs(wrong / exposure_factor(SHORT) / expected - 1)) > 0.05


def test_exposure_normalisation_invariance():
    # The exposure equation (ISO 2720): the sensor signal goes as t S / N^2, so the factor is
    # t (ISO / 100) / N^2, and the same scene at (t, N, ISO) and at (2t, N sqrt 2, ISO / 2),
    # half the exposure, reads the same once normalised.
    assert exposure_factor(Exposure(0.01, 2.0, 400)) == pytest.approx(0.01)
    a, b = Exposure(0.01, 2.8, 200), Exposure(0.02, 2.8 * math.sqrt(2), 100)
    k_a, k_b = exposure_factor(a), exposure_factor(b)
    assert k_b == pytest.approx(k_a / 2)
    scene = np.linspace(0.001, 0.3, 50).reshape(5, 10) / k_a
    s_a = normalise([(scene * k_a).astype(np.float32)], [a], darks=[None], encoding="linear",
                    focal_length_px=1e9)
    s_b = normalise([(scene * k_b).astype(np.float32)], [b], darks=[None], encoding="linear",
                    focal_length_px=1e9)
    np.testing.assert_allclose(s_a.value, scene, rtol=1e-6)
    np.testing.assert_allclose(s_b.value, scene, rtol=1e-6)


def test_nan_input():
    image = np.full((3, 4), 0.25, np.float32)
    image[1, 2] = np.nan
    signal = normalise([image], [SHORT], darks=[None], encoding="linear", focal_length_px=1e9)
    assert np.isnan(signal.value[1, 2]) and not signal.saturated[1, 2]
    assert np.count_nonzero(np.isnan(signal.value)) == 1


def test_falloff_warning_when_focal_length_unknown():
    signal = normalise([np.zeros((2, 2), np.uint8)], [SHORT], darks=[None], encoding="srgb")
    assert signal.warnings == ("focal length unknown: natural cos^4 falloff not corrected",)


# ---------------------------------------------------------------------------- natural falloff


def test_falloff_against_opencv_ray_angles():
    height, width, f = 400, 600, 500.0
    falloff = natural_falloff((height, width), f)
    cx, cy = (width - 1) / 2, (height - 1) / 2
    camera = np.array([[f, 0, cx], [0, f, cy], [0, 0, 1]])
    pixels = np.array([[[0, 0]], [[width - 1, height - 1]], [[17, 301]], [[cx, cy]]], float)
    # OpenCV: undistortPoints with no distortion gives each pixel's ray (x/z, y/z).
    rays = cv2.undistortPoints(pixels, camera, None).reshape(-1, 2)
    theta = np.arctan(np.hypot(rays[:, 0], rays[:, 1]))
    expected = np.cos(theta) ** 4
    got = [falloff[0, 0], falloff[-1, -1], falloff[301, 17], falloff[199, 299]]
    np.testing.assert_allclose(got, expected, rtol=1e-5)
    corner_deg = math.degrees(math.atan(math.hypot(cx, cy) / f))
    assert got[0] == pytest.approx(math.cos(math.radians(corner_deg)) ** 4, rel=1e-5)


def test_signal_divided_by_falloff():
    image = np.full((40, 60), 0.2, np.float32)
    signal = normalise([image], [SHORT], darks=[None], encoding="linear", focal_length_px=80.0)
    expected = 0.2 / exposure_factor(SHORT) / natural_falloff((40, 60), 80.0)
    np.testing.assert_allclose(signal.value, expected, rtol=1e-6)
    assert signal.warnings == ()


# ---------------------------------------------------------------------------- brackets


def _quantisation_bound(codes):
    """Largest linear error of an 8-bit sRGB code: half a code each side, decoded."""
    hi = srgb_decode(np.minimum(codes + 0.5, 255) / 255)
    lo = srgb_decode(np.maximum(codes - 0.5, 0) / 255)
    return hi - lo


def test_bracket_of_ramp_merges_and_fills_clipped():
    k_short, k_long = exposure_factor(SHORT), exposure_factor(LONG)
    # Scene signal (luminance / exposure factor) rising in log steps so that the short exposure
    # reaches 0.9 of white and the long one (4x) clips above 0.24 / 4 of it: the top ~23 %.
    scene = np.geomspace(0.003, 0.9, 2000) / k_short
    short = _encode8(scene * k_short)[None, :]
    long = _encode8(scene * k_long)[None, :]
    signal = normalise([short, long], [SHORT, LONG], darks=[None, None], encoding="srgb",
                       focal_length_px=1e9)
    value = signal.value[0]
    long_clipped = long[0] >= 250
    assert long_clipped.mean() > 0.2 and not (short[0] >= 250).any()
    assert np.all(np.isfinite(value)) and not signal.saturated.any()

    # Bound: value = sum(Y_i) / sum(k_i) over the images used, so its error is at most
    # sum(bound_i) / sum(k_i) <= sum over usable images of bound_i / k_i.
    bound = _quantisation_bound(short[0].astype(float)) / k_short
    bound += np.where(long_clipped, 0.0, _quantisation_bound(long[0].astype(float)) / k_long)
    error = np.abs(value - scene)
    assert np.all(error <= bound + 1e-6 * scene)
    # The clipped part of the long exposure is filled from the short one.
    np.testing.assert_allclose(value[long_clipped], scene[long_clipped],
                               atol=float(np.max(bound[long_clipped])))
    # Where both are usable, the merge beats the short exposure alone (weights ~ exposure).
    short_linear = linearise(short)[0]
    both = ~long_clipped & (short_linear >= 0.002)
    short_only = short_linear / k_short
    assert np.mean(error[both]) < 0.5 * np.mean(np.abs(short_only - scene)[both])
    assert not any("disagree" in w for w in signal.warnings)


def test_near_black_excluded_where_another_image_is_usable():
    k_short, k_long = exposure_factor(SHORT), exposure_factor(LONG)
    scene = np.array([[0.001, 0.1, 0.0004]]) / k_short
    short = (scene * k_short).astype(np.float32)
    long = (scene * k_long).astype(np.float32)
    short[0, 0] += 0.0005          # a near-black value with an error: must not be used
    short[0, 2] += 0.0001          # near black in both images: both are used
    signal = normalise([short, long], [SHORT, LONG], darks=[None, None], encoding="linear",
                       focal_length_px=1e9)
    np.testing.assert_allclose(signal.value[0, 0], scene[0, 0], rtol=1e-5)
    np.testing.assert_allclose(signal.value[0, 1], scene[0, 1], rtol=1e-5)
    np.testing.assert_allclose(signal.value[0, 2],
                               (short[0, 2] + long[0, 2]) / (k_short + k_long), rtol=1e-5)


def test_all_clipped_is_nan_and_saturated():
    short = np.full((4, 4), 100, np.uint8)
    long = np.full((4, 4), 200, np.uint8)
    short[1, 1] = long[1, 1] = 255
    short[2, 2] = 252
    long[2, 2] = 251
    long[3, 3] = 255                                      # clipped in one only
    signal = normalise([short, long], [SHORT, LONG], darks=[None, None], encoding="srgb",
                       focal_length_px=1e9)
    expected = np.zeros((4, 4), bool)
    expected[1, 1] = expected[2, 2] = True
    np.testing.assert_array_equal(signal.saturated, expected)
    np.testing.assert_array_equal(np.isnan(signal.value), expected)


def test_single_image_clipped_is_nan():
    signal = normalise([np.array([[10, 255]], np.uint8)], [SHORT], darks=[None],
                       encoding="srgb", focal_length_px=1e9)
    assert np.isfinite(signal.value[0, 0]) and np.isnan(signal.value[0, 1])
    np.testing.assert_array_equal(signal.saturated, [[False, True]])


def test_bracket_disagreement_warns():
    k_short, k_long = exposure_factor(SHORT), exposure_factor(LONG)
    scene = np.tile(np.linspace(0.01, 0.2, 100), (20, 1)) / k_long
    short = (scene * k_short).astype(np.float32)
    consistent = (scene * k_long).astype(np.float32)
    fine = normalise([short, consistent], [SHORT, LONG], darks=[None, None], encoding="linear",
                     focal_length_px=1e9)
    assert fine.warnings == ()
    brighter = consistent * np.float32(1 + 1.5 * BRACKET_TOLERANCE_FRACTION)
    off = normalise([short, brighter], [SHORT, LONG], darks=[None, None], encoding="linear",
                    focal_length_px=1e9)
    assert len(off.warnings) == 1 and "images 0 and 1 disagree" in off.warnings[0]
    assert "1.150" in off.warnings[0]


def test_bracket_darks_parallel():
    ambient = np.full((3, 3), 0.05, np.float32)
    torch = np.full((3, 3), 0.1, np.float32)
    short = torch * 0.25 + ambient * 0.25
    long = torch + ambient
    signal = normalise([short, long], [SHORT, LONG], darks=[ambient * 0.25, ambient],
                       encoding="linear", focal_length_px=1e9)
    np.testing.assert_allclose(signal.value, 0.1 / exposure_factor(LONG), rtol=1e-5)


# ---------------------------------------------------------------------------- errors


@pytest.mark.parametrize(
    "kwargs, field, message",
    [
        (dict(images=[np.zeros((4, 4), np.uint8), np.zeros((4, 5), np.uint8)]),
         "images[1]", "differs from images[0]"),
        (dict(images=[np.zeros((4, 4), np.uint8), np.zeros((4, 4), np.uint16)]),
         "images[1]", "type uint16 differs"),
        (dict(darks=[np.zeros((4, 4, 3), np.uint8), None]), "darks[0]", "differs"),
        (dict(darks=[None]), "darks", "1 darks for 2 images"),
        (dict(exposures=[SHORT]), "exposures", "1 exposures for 2 images"),
        (dict(exposures=[SHORT, Exposure(0.01, 0.0, 100)]), "exposures[1].f_number",
         "positive"),
        (dict(encoding="log"), "encoding", "valid: srgb, linear"),
        (dict(encoding="linear", black_level=300.0, white_level=255.0), "white_level",
         "must be above"),
        (dict(images=[np.zeros((4, 4, 4), np.uint8)] * 2), "images[0]", "(H, W, 3) RGB"),
        (dict(images=[], exposures=[], darks=[]), "images", "no image"),
    ],
)
def test_errors_name_the_argument(kwargs, field, message):
    arguments = dict(images=[np.zeros((4, 4), np.uint8)] * 2, exposures=[SHORT, LONG],
                     darks=[None, None], encoding="srgb")
    arguments.update(kwargs)
    with pytest.raises(InputError, match=re.escape(message)) as info:
        normalise(**arguments)
    assert info.value.field == field


def test_falloff_errors():
    with pytest.raises(InputError, match="positive number of px"):
        natural_falloff((4, 4), 0.0)
    with pytest.raises(InputError, match="positive number of px"):
        normalise([np.zeros((2, 2), np.uint8)], [SHORT], darks=[None], encoding="srgb",
                  focal_length_px=float("nan"))
