"""Tests for beamwall.compare: zoom range, mode ratios, the session electrical check, claims.

Shots are built by hand with uniform cones: a source of intensity I within half angle alpha
gives the cumulative flux Phi(theta) = 2 pi I (1 - cos theta) for theta <= alpha (solid angle
of a cone, any photometry handbook), constant beyond. Throw d = sqrt(I / 0.25 lx) (ANSI/PLATO
FL 1, 1.2.1). The claim verdict rule (k = 2 interval plus tolerance) follows the GUM's
expanded uncertainty U = 2 u (JCGM 100:2008). Tolerances: exact to floating point unless
stated.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from beamwall.compare import (
    DEFAULT_CLAIM_TOLERANCE_FRACTION,
    audit_claim,
    audit_claims,
    audit_shot,
    best_flux,
    common_half_angle_deg,
    flux_in_cone,
    mode_ratios,
    session_comparisons,
    session_electrical,
    zoom_summary,
)
from beamwall.electrical import electrical_estimate
from beamwall.errors import InputError
from beamwall.results import ShotResult
from beamwall.session import ElectricalSpec, ShotSpec


def cone_flux_lm(intensity_cd, beam_half_angle_deg, theta_deg):
    """Uniform cone: 2 pi I (1 - cos theta) up to its edge (solid angle of a cone)."""
    t = np.radians(np.minimum(theta_deg, beam_half_angle_deg))
    return 2.0 * math.pi * intensity_cd * (1.0 - np.cos(t))


def make_shot(label, *, intensity_cd, beam_half_angle_deg, photo_half_angle_deg=40.0,
              zoom=None, mode=None, calibrated=True, relative_scale=1e-3,
              flux_sigma_fraction=0.03, peak_sigma_fraction=0.03):
    ang = np.round(np.arange(0.0, photo_half_angle_deg + 0.05, 0.1), 1)
    flux = cone_flux_lm(intensity_cd, beam_half_angle_deg, ang)
    total = float(flux[-1])
    return ShotResult(
        label=label, zoom=zoom, mode=mode, beam_angle_deg=2.0 * beam_half_angle_deg,
        field_angle_deg=2.0 * beam_half_angle_deg,
        peak_intensity_cd=intensity_cd if calibrated else None,
        throw_m=math.sqrt(intensity_cd / 0.25) if calibrated else None,
        flux_lm=total if calibrated else None, flux_half_angle_deg=photo_half_angle_deg,
        axis_mm=(0.0, 0.0), saturated_fraction=0.0,
        relative_peak_intensity=intensity_cd * relative_scale,
        relative_flux=total * relative_scale,
        peak_intensity_sigma_cd=intensity_cd * peak_sigma_fraction if calibrated else None,
        flux_sigma_lm=total * flux_sigma_fraction if calibrated else None,
        cone_half_angle_deg=ang, cone_flux=flux if calibrated else flux * relative_scale)


def zoom_pair(calibrated=True):
    # Wide: 300 cd in a 30 deg half-angle cone; narrow: 20000 cd within 3 deg (invented).
    wide = make_shot("min zoom, high", intensity_cd=300.0, beam_half_angle_deg=30.0,
                     photo_half_angle_deg=40.0, zoom="min", mode="high", calibrated=calibrated)
    narrow = make_shot("max zoom, high", intensity_cd=20000.0, beam_half_angle_deg=3.0,
                       photo_half_angle_deg=35.0, zoom="max", mode="high",
                       calibrated=calibrated)
    return wide, narrow


# --- zoom -----------------------------------------------------------------------------


@pytest.mark.parametrize("calibrated", [True, False])
def test_zoom_summary_on_uniform_cones(calibrated):
    wide, narrow = zoom_pair(calibrated)
    z = zoom_summary([wide, narrow])
    phi_wide = 2 * math.pi * 300.0 * (1 - math.cos(math.radians(30.0)))   # 252.5 lm
    phi_narrow = 2 * math.pi * 20000.0 * (1 - math.cos(math.radians(3.0)))  # 172.2 lm
    assert z.beam_angle_min_deg == 6.0 and z.beam_angle_max_deg == 60.0
    assert z.beam_angle_ratio == pytest.approx(10.0)
    assert z.narrow_label == "max zoom, high" and z.wide_label == "min zoom, high"
    assert z.common_half_angle_deg == pytest.approx(35.0)
    assert z.flux_ratio_narrow_to_wide == pytest.approx(phi_narrow / phi_wide, rel=1e-9)
    assert z.flux_loss_fraction == pytest.approx(1 - phi_narrow / phi_wide, rel=1e-9)
    assert z.flux_loss_end == "narrow" and z.flux_loss_label == "max zoom, high"
    assert z.peak_ratio_narrow_to_wide == pytest.approx(20000.0 / 300.0)
    # throw = 2 sqrt(I) (FL 1), so the throw ratio is the square root of the peak ratio
    assert z.throw_ratio_narrow_to_wide == pytest.approx(math.sqrt(20000.0 / 300.0))
    assert z.intensity_beam_angle_exponent == pytest.approx(
        math.log(20000.0 / 300.0) / math.log(10.0))
    assert z.flux_unit == ("lm" if calibrated else "relative")
    d = z.to_dict()
    for key in ("beam_angle_min_deg", "beam_angle_max_deg", "flux_ratio_narrow_to_wide",
                "beam_angle_ratio", "flux_loss_fraction", "settings"):
        assert key in d
    assert [s["label"] for s in d["settings"]] == ["max zoom, high", "min zoom, high"]
    assert d["settings"][1]["flux_kept_fraction"] == pytest.approx(1.0)


def test_zoom_compares_one_mode_and_lists_range_over_all():
    wide, narrow = zoom_pair()
    wide_low = make_shot("min zoom, low", intensity_cd=75.0, beam_half_angle_deg=31.0,
                         zoom="min", mode="low")
    z = zoom_summary([wide, wide_low, narrow])
    assert z.compared_mode == "high"
    assert z.beam_angle_max_deg == 62.0          # over all shots, low mode included
    assert z.wide_label == "min zoom, low"
    assert [s.label for s in z.settings] == ["max zoom, high", "min zoom, high"]
    assert any("mode ratios" in w for w in z.warnings)


def test_zoom_single_shot_and_errors():
    wide, _ = zoom_pair()
    z = zoom_summary([wide])
    assert z.beam_angle_ratio == 1.0 and z.flux_ratio_narrow_to_wide is None
    with pytest.raises(InputError, match="shots"):
        zoom_summary([])


def test_flux_in_cone_and_common_cone():
    wide, narrow = zoom_pair()
    assert common_half_angle_deg([wide, narrow]) == pytest.approx(35.0)
    # 2 pi 300 (1 - cos 10 deg) within 10 deg
    assert flux_in_cone(wide, 10.0, calibrated=True) == pytest.approx(
        2 * math.pi * 300.0 * (1 - math.cos(math.radians(10.0))), rel=1e-9)
    assert flux_in_cone(narrow, 38.0, calibrated=True) is None   # beyond its photo
    no_curve = ShotResult(label="x", zoom=None, mode=None, beam_angle_deg=10.0,
                          field_angle_deg=20.0, peak_intensity_cd=1.0, throw_m=2.0,
                          flux_lm=5.0, flux_half_angle_deg=30.0, axis_mm=(0.0, 0.0),
                          saturated_fraction=0.0, relative_peak_intensity=1.0,
                          relative_flux=0.5)
    assert flux_in_cone(no_curve, 30.0, calibrated=True) == 5.0
    assert flux_in_cone(no_curve, 30.0, calibrated=False) == 0.5
    assert flux_in_cone(no_curve, 20.0, calibrated=True) is None


# --- modes ----------------------------------------------------------------------------


@pytest.mark.parametrize("calibrated", [True, False])
def test_mode_ratios_relative_to_brightest_at_same_zoom(calibrated):
    wide, narrow = zoom_pair(calibrated)
    wide_low = make_shot("min zoom, low", intensity_cd=75.0, beam_half_angle_deg=30.0,
                         zoom="min", mode="low", calibrated=calibrated)
    narrow_mid = make_shot("max zoom, mid", intensity_cd=8000.0, beam_half_angle_deg=3.0,
                           photo_half_angle_deg=35.0, zoom="max", mode="mid",
                           calibrated=calibrated)
    summary = mode_ratios([wide_low, narrow_mid, wide, narrow])
    got = {e.label: e for e in summary.entries}
    assert [e.label for e in summary.entries] == ["min zoom, low", "max zoom, mid",
                                                  "min zoom, high", "max zoom, high"]
    assert got["min zoom, low"].reference_label == "min zoom, high"
    assert got["min zoom, low"].peak_ratio == pytest.approx(0.25)
    assert got["min zoom, low"].flux_ratio == pytest.approx(0.25)
    assert got["max zoom, mid"].reference_mode == "high"
    assert got["max zoom, mid"].peak_ratio == pytest.approx(0.4)
    assert got["max zoom, mid"].flux_ratio == pytest.approx(0.4)
    assert got["max zoom, high"].peak_ratio == 1.0 and got["max zoom, high"].flux_ratio == 1.0
    d = summary.to_dict()
    assert len(d["modes"]) == 4


# --- session electrical -----------------------------------------------------------------


def test_session_electrical_uses_largest_flux():
    wide, narrow = zoom_pair()
    est = electrical_estimate(ElectricalSpec(led_volts=3.0, led_amps=0.8,
                                             efficacy_lm_per_w=(90.0, 130.0)))
    chk = session_electrical(est, [narrow, wide])
    assert chk.flux_label == "min zoom, high"
    assert chk.implied_efficacy_lm_per_w == pytest.approx(wide.flux_lm / 2.4)
    d = chk.to_dict()
    for key in ("led_amps", "led_watts", "flux_estimate_lm", "implied_efficacy_lm_per_w",
                "verdict", "average_watts", "flux_basis", "reasons"):
        assert key in d
    assert d["flux_basis"] == "flux_lm"
    w_un, n_un = zoom_pair(calibrated=False)
    assert best_flux([w_un, n_un]) is None
    assert session_electrical(est, [w_un, n_un]).verdict == "not checked"


# --- claims ---------------------------------------------------------------------------


def test_claim_rule_boundaries():
    # measured 1000 +/- 50 (k=1): consistent within 1000 +/- (2 x 50 + 10 % x 1000) = 800-1200
    m, u, t = 1000.0, 50.0, DEFAULT_CLAIM_TOLERANCE_FRACTION
    hi = m + 2 * u + t * m
    lo = m - 2 * u - t * m
    assert audit_claim("s", "flux_lm", hi, m, measured_sigma=u).verdict == "consistent"
    assert audit_claim("s", "flux_lm", hi * 1.001, m, measured_sigma=u).verdict == "overstated"
    assert audit_claim("s", "flux_lm", lo, m, measured_sigma=u).verdict == "consistent"
    assert audit_claim("s", "flux_lm", lo * 0.999, m,
                       measured_sigma=u).verdict == "understated"
    c = audit_claim("s", "flux_lm", 1200.0, 250.0, measured_sigma=10.0)
    assert c.ratio == pytest.approx(250.0 / 1200.0)   # the contract's ratio: measured/claimed
    assert c.consistent_range == pytest.approx((250 - 45.0, 250 + 45.0))


def test_claim_errors():
    with pytest.raises(InputError, match="figure"):
        audit_claim("s", "beam_angle_deg", 10.0, 10.0)
    with pytest.raises(InputError, match="claimed_cd"):
        audit_claim("s", "peak_intensity_cd", 0.0, 10.0)
    with pytest.raises(InputError, match="tolerance_fraction"):
        audit_claim("s", "flux_lm", 10.0, 10.0, tolerance_fraction=-0.1)


def test_audit_honest_inflated_and_impossible():
    wide, narrow = zoom_pair()          # narrow: 20000 cd, 282.8 m, 172.2 lm
    est = electrical_estimate(ElectricalSpec(led_volts=3.0, led_amps=0.8))   # 2.4 W
    honest = audit_claims(narrow, claimed_lm=180.0, claimed_cd=21000.0, claimed_throw_m=285.0,
                          electrical=est)
    assert [c.verdict for c in honest] == ["consistent"] * 3
    assert [c.figure for c in honest] == ["flux_lm", "peak_intensity_cd", "throw_m"]
    inflated = audit_claims(narrow, claimed_lm=400.0, claimed_cd=40000.0,
                            claimed_throw_m=400.0, electrical=est)
    assert [c.verdict for c in inflated] == ["overstated"] * 3
    assert inflated[1].ratio == pytest.approx(0.5)
    assert inflated[2].ratio == pytest.approx(math.sqrt(20000 / 0.25) / 400.0)
    # 2.4 W x 1.1 x 300 lm/W = 792 lm: a 3000 lm claim needs four times the power drawn
    impossible = audit_claims(narrow, claimed_lm=3000.0, electrical=est)[0]
    assert impossible.verdict == "physically impossible"
    assert impossible.physical_limit == pytest.approx(792.0)
    # the measured beam shape turns the flux limit into an intensity limit:
    # I_max = 792 lm x 20000 cd / 172.2 lm
    cd = audit_claims(narrow, claimed_cd=200000.0, electrical=est)[0]
    assert cd.physical_limit == pytest.approx(792.0 * 20000.0 / narrow.flux_lm)
    assert cd.verdict == "physically impossible"
    throw = audit_claims(narrow, claimed_throw_m=1000.0, electrical=est)[0]
    assert throw.physical_limit == pytest.approx(math.sqrt(cd.physical_limit / 0.25))
    assert throw.verdict == "physically impossible"


def test_audit_without_photos_or_calibration():
    _, narrow = zoom_pair(calibrated=False)
    checks = audit_claims(narrow, claimed_lm=500.0, claimed_cd=30000.0)
    assert [c.verdict for c in checks] == ["not measured", "not measured"]
    assert checks[0].measured is None and checks[0].ratio is None
    # one cell at most 4.2 V x 30 A x 300 lm/W = 37800 lm
    assert audit_claims(narrow, claimed_lm=50000.0)[0].verdict == "physically impossible"
    assert audit_claims(narrow, claimed_lm=50000.0, n_cells=2)[0].verdict == "not measured"
    assert audit_claims(narrow, claimed_lm=50000.0, n_cells=None)[0].physical_limit is None


def test_throw_sigma_from_peak_and_total_flux_basis():
    _, narrow = zoom_pair()
    c = audit_claims(narrow, claimed_throw_m=283.0)[0]
    # d = 2 sqrt(I): u_d = d u_I / (2 I) = 282.8 x 0.03 / 2
    assert c.measured_sigma == pytest.approx(math.sqrt(20000 / 0.25) * 0.03 / 2)
    t = audit_claims(narrow, claimed_lm=200.0, total_flux_lm=190.0, total_flux_sigma_lm=5.0)
    assert t[0].measured == 190.0 and t[0].flux_basis == "total_flux_lm"


def test_audit_shot_reads_the_claims_from_the_spec():
    _, narrow = zoom_pair()
    spec = ShotSpec(label=narrow.label, images=(Path("/tmp/x.jpg"),), claimed_lm=172.0,
                    claimed_cd=90000.0)
    checks = audit_shot(narrow, spec)
    assert [(c.figure, c.verdict) for c in checks] == [("flux_lm", "consistent"),
                                                       ("peak_intensity_cd", "overstated")]
    d = checks[0].to_dict()
    for key in ("label", "figure", "claimed", "measured", "ratio", "verdict"):
        assert key in d


# --- the whole session ----------------------------------------------------------------


def test_session_comparisons_one_call():
    wide, narrow = zoom_pair()
    low = make_shot("max zoom, low", intensity_cd=5000.0, beam_half_angle_deg=3.0,
                    photo_half_angle_deg=35.0, zoom="max", mode="low")
    session_el = ElectricalSpec(led_volts=3.0, sense_volts=0.40, sense_ohms=0.50,
                                efficacy_lm_per_w=(90.0, 130.0))
    low_el = ElectricalSpec(led_volts=2.8, led_amps=0.2, efficacy_lm_per_w=(90.0, 130.0))
    img = (Path("/tmp/x.jpg"),)
    specs = [
        ShotSpec(label=wide.label, images=img, zoom="min", mode="high", electrical=session_el,
                 claimed_lm=260.0),                                 # honest (252.5 lm)
        ShotSpec(label=narrow.label, images=img, zoom="max", mode="high",
                 electrical=session_el, claimed_cd=60000.0),        # inflated (20000 cd)
        # low: 2.8 V x 0.2 A = 0.56 W; x 1.1 x 300 lm/W = 184.8 lm at most
        ShotSpec(label=low.label, images=img, zoom="max", mode="low", electrical=low_el,
                 claimed_lm=400.0),                                 # impossible
    ]
    res = session_comparisons([wide, narrow, low], specs, session_electrical_spec=session_el)
    assert [c.verdict for c in res.claims] == ["consistent", "overstated",
                                               "physically impossible"]
    # the session table is checked against the best flux of the shots that use it
    assert res.electrical.flux_label == wide.label
    assert res.electrical.implied_efficacy_lm_per_w == pytest.approx(wide.flux_lm / 2.4)
    (label, own), = res.shot_electrical
    assert label == low.label
    assert own.implied_efficacy_lm_per_w == pytest.approx(low.flux_lm / 0.56)
    d = res.to_dict()
    assert set(d) == {"zoom", "modes", "electrical", "claims"}
    assert d["zoom"]["beam_angle_min_deg"] == 6.0
    assert {m["label"]: m["peak_ratio"] for m in d["modes"]}[low.label] == pytest.approx(0.25)
    with pytest.raises(InputError, match="one to one"):
        session_comparisons([wide], specs)


def test_zoom_tie_between_modes_goes_to_the_brightest():
    wide, narrow = zoom_pair()
    wide_low = make_shot("min zoom, low", intensity_cd=75.0, beam_half_angle_deg=30.5,
                         zoom="min", mode="low")
    narrow_low = make_shot("max zoom, low", intensity_cd=5000.0, beam_half_angle_deg=2.9,
                           photo_half_angle_deg=35.0, zoom="max", mode="low")
    z = zoom_summary([wide_low, narrow_low, wide, narrow])
    assert z.compared_mode == "high"
    assert z.narrow_label == "max zoom, low" and z.wide_label == "min zoom, low"


def test_flux_claim_between_cone_flux_and_total_bound_is_consistent():
    # The cone flux is a lower bound of a total-flux claim; up to the bound (plus the same
    # margin, scaled) the claim cannot be called overstated.
    m, u, upper = 800.0, 10.0, 1000.0
    margin = 2 * u + 0.1 * m
    inside = audit_claim("s", "flux_lm", 1050.0, m, measured_sigma=u, measured_upper=upper)
    assert inside.verdict == "consistent"
    assert inside.consistent_range[1] == pytest.approx(upper + margin * upper / m)
    assert inside.ratio == pytest.approx(m / 1050.0)  # ratio stays measured / claimed
    above = audit_claim("s", "flux_lm", 1300.0, m, measured_sigma=u, measured_upper=upper)
    assert above.verdict == "overstated"
    without = audit_claim("s", "flux_lm", 1050.0, m, measured_sigma=u)
    assert without.verdict == "overstated"
