"""Spectral mismatch: factor F*, f1', fitted weights, spectra, CSV readers.

Outside references: the CIE tables as colour-science ships them (CIE 1924 V(lambda), CIE
illuminant A and the LED illuminants of CIE 015:2018, the CIE 1931 observer), CIE 015's
defining formula of illuminant A, and the definitions of F* (CIE S 017:2020 ILV 17-25-115) and
f1' (ISO/CIE 19476:2014). The independent computations below use plain numpy trapezoid sums on
the tables' own 5 nm samples, not the module's 1 nm resampling; the two agree to about 1e-4,
so factors are compared at 1e-3 relative.
"""

from __future__ import annotations

import ast
import inspect

import colour
import numpy as np
import pytest
from colour.colorimetry import SDS_LEFS_PHOTOPIC

from beamwall import spectra_io, spectral
from beamwall.errors import InputError
from beamwall.spectral import (
    WAVELENGTHS_NM,
    cie_illuminant_spectrum,
    default_camera_sensitivity,
    f1_prime,
    led_white_spectrum,
    luminance_sensitivity,
    optimal_weights,
    photopic_efficiency,
    planckian_spectrum,
    shot_spectral_correction,
    spectral_mismatch_factor,
    spectrum_from_table,
)

REC709 = (0.2126, 0.7152, 0.0722)      # ITU-R BT.709-6, item 3.2
WL5 = np.arange(380.0, 781.0, 5.0)


def _table5(sd) -> np.ndarray:
    """A colour table's own samples at 380, 385, ..., 780 nm (no interpolation)."""
    wl = np.asarray(sd.wavelengths)
    idx = np.searchsorted(wl, WL5)
    assert np.array_equal(wl[idx], WL5)
    return np.asarray(sd.values)[idx]


def _v5() -> np.ndarray:
    return _table5(SDS_LEFS_PHOTOPIC["CIE 1924 Photopic Standard Observer"])


def _factor5(s, ref, src) -> float:
    """F* = [int S_t V / int S_t s][int S_ref s / int S_ref V] (CIE S 017 ILV 17-25-115)."""
    v = _v5()
    t = np.trapezoid
    return (t(src * v, WL5) / t(src * s, WL5)) * (t(ref * s, WL5) / t(ref * v, WL5))


def _cie_a_formula(wl_nm: np.ndarray) -> np.ndarray:
    # CIE 015:2018, eq. 1: S_A = 100 (560/l)^5 (exp(1.435e7/(2848*560)) - 1) /
    # (exp(1.435e7/(2848 l)) - 1), l in nm.
    c = 1.435e7 / 2848.0
    return 100.0 * (560.0 / wl_nm) ** 5 * np.expm1(c / 560.0) / np.expm1(c / wl_nm)


# --- the factor against independent sums on the CIE tables -----------------------------


def test_factor_tungsten_to_cie_led_matches_independent_sum():
    cam5 = _table5(colour.MSDS_CAMERA_SENSITIVITIES["Nikon 5100 (NPL)"])
    s5 = cam5 @ np.array(REC709)
    a5 = _cie_a_formula(WL5)                                   # CIE 015 formula for A
    b3 = _table5(colour.SDS_ILLUMINANTS["LED-B3"])             # CIE 015:2018 table 11
    expected = _factor5(s5, a5, b3)
    cam = default_camera_sensitivity(processing="raw")
    got = spectral_mismatch_factor(cam, REC709, cie_illuminant_spectrum("A"),
                                   cie_illuminant_spectrum("LED-B3"))
    assert got == pytest.approx(expected, rel=1e-3)
    assert abs(got - 1.0) > 0.02          # a raw RGB sensor: several percent off


def test_factor_planckian_reference_matches_independent_sum():
    cam5 = _table5(colour.MSDS_CAMERA_SENSITIVITIES["Nikon 5100 (NPL)"])
    s5 = cam5 @ np.array(REC709)
    # Planck's law with c2 = 1.4388e-2 m K (CODATA second radiation constant).
    planck = lambda wl, t: wl ** -5.0 / np.expm1(1.4388e7 / (wl * t))  # noqa: E731
    expected = _factor5(s5, planck(WL5, 2700.0), planck(WL5, 6500.0))
    got = spectral_mismatch_factor(default_camera_sensitivity(processing="raw"), REC709,
                                   planckian_spectrum(2700), planckian_spectrum(6500))
    assert got == pytest.approx(expected, rel=1e-3)


def test_tungsten_reference_and_white_led_differ_by_a_few_percent():
    cam = default_camera_sensitivity()
    a = cie_illuminant_spectrum("A")
    for led in (cie_illuminant_spectrum("LED-B3"), led_white_spectrum(6500)):
        f = spectral_mismatch_factor(cam, REC709, a, led)
        assert 1.01 < f < 1.15, (led.description, f)


def test_monochromatic_source_gives_ratio_of_sensitivities():
    # A narrow line at 530 nm: F* = [V(530) / s(530)] [int S_A s / int S_A V] (definition).
    cam = default_camera_sensitivity()
    s = luminance_sensitivity(cam, REC709)
    line = np.zeros(WAVELENGTHS_NM.size)
    line[150] = 1.0                               # 530 nm; trapezoid weight 1 nm, both sides
    a = cie_illuminant_spectrum("A").values
    v = photopic_efficiency()
    expected = (v[150] / s[150]) * (np.trapezoid(a * s, WAVELENGTHS_NM)
                                    / np.trapezoid(a * v, WAVELENGTHS_NM))
    assert spectral_mismatch_factor(cam, REC709, a, line) == pytest.approx(expected, rel=1e-12)


def test_equal_spectra_give_exactly_one():
    cam = default_camera_sensitivity()
    for sd in (cie_illuminant_spectrum("LED-B3"), planckian_spectrum(3100),
               led_white_spectrum(4000)):
        assert spectral_mismatch_factor(cam, (0.3, 0.6, 0.1), sd, sd) == 1.0


def test_v_lambda_as_sensitivity_gives_one_for_any_spectra_and_f1_zero():
    v = photopic_efficiency()
    cam = np.stack([v, 0.0 * v, 0.0 * v], axis=1)
    for ref, src in ((cie_illuminant_spectrum("A"), cie_illuminant_spectrum("LED-V1")),
                     (planckian_spectrum(2000), led_white_spectrum(9000))):
        assert spectral_mismatch_factor(cam, (1.0, 0.0, 0.0), ref, src) == pytest.approx(
            1.0, abs=1e-12)
    assert f1_prime(v) == pytest.approx(0.0, abs=1e-12)
    assert f1_prime(3.0 * v) == pytest.approx(0.0, abs=1e-12)


def test_v_lambda_is_the_cie_table():
    # CIE 1924 V(lambda): 1 at 555 nm, 0.5030 at 510 nm, 0.6310 at 600 nm (CIE 015 tables).
    v = photopic_efficiency()
    assert v[555 - 380] == 1.0
    assert v[510 - 380] == pytest.approx(0.5030, abs=1e-4)
    assert v[600 - 380] == pytest.approx(0.6310, abs=1e-4)


def test_f1_prime_matches_independent_sum():
    cam5 = _table5(colour.MSDS_CAMERA_SENSITIVITIES["Nikon 5100 (NPL)"])
    s5 = cam5 @ np.array(REC709)
    a5, v5 = _cie_a_formula(WL5), _v5()
    t = np.trapezoid
    s_star = s5 * t(a5 * v5, WL5) / t(a5 * s5, WL5)           # ISO/CIE 19476 normalisation
    expected = t(np.abs(s_star - v5), WL5) / t(v5, WL5)
    got = f1_prime(luminance_sensitivity(default_camera_sensitivity(processing="raw"), REC709))
    assert got == pytest.approx(expected, rel=0.02)   # |.| is not smooth: coarser grid differs


def test_f1_prime_of_a_shifted_curve_is_large():
    v = photopic_efficiency()
    shifted = np.roll(v, 20)                          # V moved 20 nm to the red
    assert 0.2 < f1_prime(shifted) < 0.8


# --- planckian, CIE and LED spectra ------------------------------------------------------


def test_planckian_2856_is_illuminant_a():
    # CIE A is a Planckian radiator at 2856 K (c2 = 1.4388e-2; CIE 015): F* = 1 to 1e-4.
    cam = default_camera_sensitivity()
    f = spectral_mismatch_factor(cam, REC709, cie_illuminant_spectrum("A"),
                                 planckian_spectrum(2856))
    assert f == pytest.approx(1.0, abs=1e-4)
    a = cie_illuminant_spectrum("A").values
    p = planckian_spectrum(2856).values
    assert np.allclose(p / p[180], a / a[180], rtol=1e-3)   # both scaled at 560 nm


def test_cie_illuminant_unknown_name_lists_valid_ones():
    with pytest.raises(InputError, match="unknown CIE illuminant 'LED-Z9'.*LED-B3"):
        cie_illuminant_spectrum("LED-Z9")


@pytest.mark.parametrize("cct_k", [2700.0, 4000.0, 6500.0, 10000.0])
def test_led_model_hits_its_cct_on_the_locus(cct_k):
    sd = led_white_spectrum(cct_k)
    # Independent path: trapezoid tristimulus sums on the CIE 1931 table (CIE 015), colour's
    # xy -> uv and Ohno 2013 CCT, and McCamy's 1992 approximation as a second opinion.
    table = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]
    wl = np.asarray(table.wavelengths)
    keep = (wl >= 380) & (wl <= 780)
    xyz = np.trapezoid(np.asarray(table.values)[keep] * sd.values[:, None], wl[keep], axis=0)
    xy = colour.XYZ_to_xy(xyz)
    with np.errstate(invalid="ignore"):
        cct, duv = colour.uv_to_CCT(colour.xy_to_UCS_uv(xy), method="Ohno 2013")
    assert cct == pytest.approx(cct_k, rel=3e-3)
    assert abs(duv) < 1e-3
    assert colour.xy_to_CCT(xy, method="McCamy 1992") == pytest.approx(cct_k, rel=0.02)
    pump = sd.values[440 - 380:461 - 380]
    assert int(np.argmax(pump)) + 440 == 450                  # the blue pump's peak
    assert sd.values[480 - 380] < pump.max()                  # the dip before the phosphor


def test_led_model_outside_range():
    with pytest.raises(InputError, match="covers 2200 K to 12000 K"):
        led_white_spectrum(1500)


def test_table_spectrum_zero_outside_range():
    sd = spectrum_from_table([400.0, 500.0, 700.0], [1.0, 2.0, 4.0])
    assert sd.values[:20].tolist() == [0.0] * 20
    assert sd.values[-80:].tolist() == [0.0] * 80
    assert sd.values[450 - 380] == pytest.approx(1.5)


# --- weights -----------------------------------------------------------------------------


def test_srgb_default_is_least_squares_fit_of_ybar():
    # Rec. 709 weights are the Y row of linear sRGB -> XYZ (IEC 61966-2-1), so on a camera
    # mapped to sRGB by least squares, Rec. 709 luminance is the least-squares fit of y-bar.
    raw = default_camera_sensitivity(processing="raw").rgb
    ybar = colour.MSDS_CMFS["CIE 1931 2 Degree Standard Observer"].copy().trim(
        colour.SpectralShape(380, 780, 1)).values[:, 1]
    fit = raw @ np.linalg.lstsq(raw, ybar, rcond=None)[0]
    s = luminance_sensitivity(default_camera_sensitivity(), REC709)
    assert np.allclose(s / s.max(), fit / fit.max(), atol=2e-3)


def test_optimal_weights_lower_f1_prime():
    cam = default_camera_sensitivity(processing="raw")
    fit = optimal_weights(cam, nonnegative=False)
    assert sum(fit.weights) == pytest.approx(1.0)
    assert fit.f1_prime < fit.rec709_f1_prime - 0.05
    assert fit.f1_prime == pytest.approx(
        f1_prime(luminance_sensitivity(cam, fit.weights)), rel=1e-12)
    bounded = optimal_weights(cam)
    assert min(bounded.weights) >= 0.0
    assert fit.f1_prime <= bounded.f1_prime <= bounded.rec709_f1_prime


def test_optimal_weights_recover_v_in_the_span():
    v = photopic_efficiency()
    rng = np.random.default_rng(7)
    mix = rng.uniform(0.5, 2.0, size=(3, 3))
    base = np.stack([v, np.roll(v, 40), np.roll(v, -60)], axis=1)
    fit = optimal_weights(base @ mix, nonnegative=False)
    assert fit.f1_prime < 1e-4


# --- the per-shot hook -------------------------------------------------------------------


def test_shot_without_source_is_one_and_says_why():
    c = shot_spectral_correction(camera_sensitivity=None, weights=REC709,
                                 reference=spectral.reference_spectrum())
    assert c.spectral_correction_factor == 1.0
    assert c.spectral_mismatch_f1_prime is None
    assert "no source_cct_k" in c.warnings[0]
    assert c.spectral_correction_sigma == pytest.approx(0.05 / np.sqrt(3.0))


def test_shot_with_source_and_default_camera_warns():
    c = shot_spectral_correction(camera_sensitivity=None, weights=REC709,
                                 reference=spectral.reference_spectrum(),
                                 source_cie_illuminant="LED-B3")
    assert c.spectral_correction_factor == pytest.approx(spectral_mismatch_factor(
        default_camera_sensitivity(), REC709, cie_illuminant_spectrum("A"),
        cie_illuminant_spectrum("LED-B3")), rel=1e-12)
    assert c.spectral_correction_factor != 1.0
    assert any("generic camera sensitivity" in w for w in c.warnings)
    assert c.source_description == "CIE illuminant LED-B3"
    assert 0.0 < c.spectral_mismatch_f1_prime < 1.0
    # Generic camera: rectangular between no correction and twice it, u = |F - 1| / sqrt(3).
    assert c.spectral_correction_sigma == pytest.approx(
        abs(c.spectral_correction_factor - 1.0) / np.sqrt(3.0))


def test_shot_with_two_sources_is_refused():
    with pytest.raises(InputError, match="at most one"):
        shot_spectral_correction(camera_sensitivity=None, weights=REC709,
                                 reference=spectral.reference_spectrum(),
                                 source_cct_k=5000.0, source_cie_illuminant="LED-B3")


def test_reference_spectrum_round_trips_through_dict():
    sd = planckian_spectrum(3000)
    back = spectral.spectrum_from_dict(spectral.spectrum_to_dict(sd))
    assert np.array_equal(back.values, sd.values) and back.description == sd.description
    with pytest.raises(InputError, match="reference_spectrum"):
        spectral.spectrum_from_dict({"values": [1.0]}, file="cal.json")


# --- CSV files ---------------------------------------------------------------------------


def _write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_camera_csv_round_trip_matches_default(tmp_path):
    cam5 = _table5(colour.MSDS_CAMERA_SENSITIVITIES["Nikon 5100 (NPL)"])
    rows = "\n".join(f"{w:g},{r:.8g},{g:.8g},{b:.8g}" for w, (r, g, b) in zip(WL5, cam5))
    p = _write(tmp_path, "cam.csv", "# a comment\nwavelength_nm,r,g,b\n\n" + rows + "\n")
    cam = spectra_io.read_camera_sensitivity_csv(p)
    assert np.allclose(cam.rgb[::5], np.clip(cam5, 0, None), atol=1e-7)
    ref, src = cie_illuminant_spectrum("A"), cie_illuminant_spectrum("LED-B3")
    assert spectral_mismatch_factor(cam, REC709, ref, src) == pytest.approx(
        spectral_mismatch_factor(default_camera_sensitivity(processing="raw"), REC709,
                                 ref, src), rel=1e-3)


def test_spectrum_csv_reads_without_header(tmp_path):
    rows = "\n".join(f"{w:g},{v:.8g}" for w, v in zip(WL5, _cie_a_formula(WL5)))
    sd = spectra_io.read_spectrum_csv(_write(tmp_path, "a.csv", rows))
    assert sd.description == "spectrum from a.csv"
    a = cie_illuminant_spectrum("A").values
    assert np.allclose(sd.values[::5], a[::5], rtol=1e-4)


@pytest.mark.parametrize("text, line, message", [
    ("wavelength_nm,value\n400,1\n450,x\n", "line 3", "value: not a number"),
    ("wavelength_nm,value\n400,1\n450,1,2\n", "line 3", "expected 2 comma-separated"),
    ("wavelength_nm,value\n400,1\n\n# c\n400,2\n", "line 5", "repeats line 2"),
    ("400,1\n410,1\n405,1\n", "line 3", "must ascend"),
    ("400,1\n410,-1\n", "line 2", "must not be negative"),
    ("400,1\n430,1\n", "line 2", "coarser than 10 nm"),
    ("wavelength_nm\n400,1\n", "line 1", "header has 1 columns"),
    ("400,1\n410,nan\n", "line 2", "must be finite"),
])
def test_bad_spectrum_csv_names_file_and_line(tmp_path, text, line, message):
    p = _write(tmp_path, "bad.csv", text)
    with pytest.raises(InputError, match=message) as info:
        spectra_io.read_spectrum_csv(p)
    assert info.value.field == line
    assert info.value.file == str(p)


def test_narrow_csv_is_refused(tmp_path):
    p = _write(tmp_path, "narrow.csv", "\n".join(f"{w},1" for w in range(450, 701, 5)))
    with pytest.raises(InputError, match="must cover at least 400 nm to 700 nm") as info:
        spectra_io.read_spectrum_csv(p)
    assert "narrow.csv" in str(info.value)


def test_camera_csv_needs_three_channels(tmp_path):
    p = _write(tmp_path, "cam.csv", "wavelength_nm,value\n400,1\n")
    with pytest.raises(InputError, match=r"header has 2 columns, expected 4"):
        spectra_io.read_camera_sensitivity_csv(p)


def test_missing_csv(tmp_path):
    with pytest.raises(InputError, match="cannot read"):
        spectra_io.read_spectrum_csv(tmp_path / "none.csv")


def test_spectral_is_a_pure_room():
    tree = ast.parse(inspect.getsource(spectral))
    names = {n.id for n in ast.walk(tree) if isinstance(n, ast.Name)}
    assert not names & {"print", "open"}
    imported = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            imported |= {a.name.split(".")[0] for a in node.names}
        elif isinstance(node, ast.ImportFrom) and node.module:
            imported.add(node.module.split(".")[0])
    assert not imported & {"click", "matplotlib", "cv2"}
