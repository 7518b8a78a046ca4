"""Tests for beamwall.electrical: Ohm's law, P = V I, efficacy ceilings, the discharge model.

Outside checks, named beside each: Ohm's law I = U / R and P = U I (any physics handbook,
e.g. Halliday, Resnick & Walker, "Current and Resistance"); the 683 lm/W ceiling (BIPM SI
Brochure, 9th ed., definition of the candela); a constant-current discharge lasts
capacity / current (definition of the ampere-hour, 1 Ah = 3600 C); the contract's worked
example in /work/shared/spec/interface.md (0.40 V over 0.50 ohm, 3.0 V, 90-130 lm/W).
"""

from __future__ import annotations

import ast
import inspect
import math

import numpy as np
import pytest

from beamwall import compare, electrical
from beamwall.electrical import (
    CAUTIONS,
    DEFAULT_OCV_TABLE,
    MAX_LUMINOUS_EFFICACY_LM_PER_W,
    WHITE_LED_MAX_EFFICACY_LM_PER_W,
    cross_check,
    electrical_estimate,
    ohms_law_amps,
    plausibility_bound,
    predict_output_over_time,
)
from beamwall.errors import BeamwallError, InputError
from beamwall.session import ElectricalSpec

FLAT_TABLE = ((0.0, 3.7), (1.0, 3.7))   # a constant-voltage cell (invented for the test)


# --- Ohm's law and P = V I ------------------------------------------------------------


def test_ohms_law_worked_examples():
    # I = U / R: 12 V across 4 ohm is 3 A; 0.40 V across 0.50 ohm is 0.8 A (Ohm's law).
    assert ohms_law_amps(12.0, 4.0) == pytest.approx(3.0, rel=1e-12)
    assert ohms_law_amps(0.40, 0.50) == pytest.approx(0.8, rel=1e-12)
    assert ohms_law_amps(0.0, 1.0) == 0.0


@pytest.mark.parametrize("volts, ohms, field", [(1.0, 0.0, "sense_ohms"),
                                                (1.0, -2.0, "sense_ohms"),
                                                (-0.1, 1.0, "sense_volts")])
def test_ohms_law_rejects_bad_values(volts, ohms, field):
    with pytest.raises(InputError, match=field):
        ohms_law_amps(volts, ohms)


def test_contract_example_power_and_flux_estimate():
    # The contract's example: 0.40 V / 0.50 ohm = 0.80 A; P = 3.0 V x 0.80 A = 2.40 W;
    # flux 2.40 W x [90, 130] lm/W = [216, 312] lm (Ohm's law, P = U I).
    est = electrical_estimate(ElectricalSpec(led_volts=3.0, sense_volts=0.40, sense_ohms=0.50,
                                             efficacy_lm_per_w=(90.0, 130.0), pwm_duty=1.0))
    d = est.to_dict()
    assert d["led_amps"] == pytest.approx(0.80, rel=1e-12)
    assert d["led_watts"] == pytest.approx(2.40, rel=1e-12)
    assert d["average_watts"] == pytest.approx(2.40, rel=1e-12)
    assert d["flux_estimate_lm"] == pytest.approx([216.0, 312.0], rel=1e-12)
    assert d["current_source"] == "sense resistor"
    assert est.warnings == ()


def test_direct_current_and_pwm_average():
    # P = U I = 3.2 V x 2.5 A = 8 W on; average 8 W x 0.25 = 2 W; flux 2 W x [100, 150].
    est = electrical_estimate(ElectricalSpec(led_volts=3.2, led_amps=2.5, pwm_duty=0.25,
                                             efficacy_lm_per_w=(100.0, 150.0)))
    assert est.led_watts == pytest.approx(8.0)
    assert est.average_watts == pytest.approx(2.0)
    assert est.flux_estimate_lm == pytest.approx((200.0, 300.0))
    assert est.current_source == "direct"


def test_direct_reading_wins_and_disagreement_warns():
    est = electrical_estimate(ElectricalSpec(led_volts=3.0, led_amps=1.0, sense_volts=0.4,
                                             sense_ohms=0.5))
    assert est.led_amps == 1.0
    assert any("differ" in w for w in est.warnings)


@pytest.mark.parametrize("spec, field", [
    (ElectricalSpec(led_amps=1.0), "led_volts"),
    (ElectricalSpec(led_volts=3.0), "led_amps"),
    (ElectricalSpec(led_volts=3.0, sense_volts=0.4), "sense_ohms"),
    (ElectricalSpec(led_volts=-3.0, led_amps=1.0), "led_volts"),
    (ElectricalSpec(led_volts=3.0, led_amps=1.0, pwm_duty=0.0), "pwm_duty"),
    (ElectricalSpec(led_volts=3.0, led_amps=1.0, pwm_duty=1.5), "pwm_duty"),
    (ElectricalSpec(led_volts=3.0, led_amps=1.0, efficacy_lm_per_w=(130.0, 90.0)),
     "efficacy_lm_per_w"),
])
def test_estimate_rejects_bad_tables(spec, field):
    with pytest.raises(InputError, match=field) as info:
        electrical_estimate(spec, source="s.toml")
    assert str(info.value).startswith("s.toml: [electrical] ")
    assert isinstance(info.value, BeamwallError)


def test_efficacy_range_above_ceilings_warns():
    est = electrical_estimate(ElectricalSpec(led_volts=3.0, led_amps=1.0,
                                             efficacy_lm_per_w=(100.0, 700.0)))
    assert any("683" in w for w in est.warnings)
    est = electrical_estimate(ElectricalSpec(led_volts=3.0, led_amps=1.0,
                                             efficacy_lm_per_w=(100.0, 320.0)))
    assert any("white LEDs" in w for w in est.warnings)


# --- cross-check --------------------------------------------------------------------------


def _est(**kw):
    base = dict(led_volts=3.0, led_amps=0.8, efficacy_lm_per_w=(90.0, 130.0))
    base.update(kw)
    return electrical_estimate(ElectricalSpec(**base))


def test_cross_check_contract_example_consistent():
    # 249.6 lm from 2.4 W is 104 lm/W (the contract's example), inside 90-130 lm/W.
    chk = cross_check(_est(), 249.6, flux_sigma_lm=8.0, flux_half_angle_deg=45.0)
    d = chk.to_dict()
    assert d["implied_efficacy_lm_per_w"] == pytest.approx(104.0, rel=1e-12)
    assert d["verdict"] == "consistent"
    assert d["flux_basis"] == "flux_lm"
    assert d["led_amps"] == pytest.approx(0.8) and d["led_watts"] == pytest.approx(2.4)
    assert d["flux_estimate_lm"] == pytest.approx([216.0, 312.0])
    assert d["reasons"]


def test_cross_check_high_and_low():
    # 2.4 W: 500 lm is 208 lm/W (above 130); 120 lm is 50 lm/W (below 90).
    high = cross_check(_est(), 500.0, flux_sigma_lm=10.0)
    assert high.verdict == "implausibly high"
    low = cross_check(_est(), 120.0, flux_sigma_lm=5.0)
    assert low.verdict == "low"
    assert any("optics" in r for r in low.reasons)
    assert any("cone" in r for r in low.reasons)   # flux_lm is a lower bound of the total


def test_cross_check_uncertainty_widens_consistency():
    # 150 lm/W is above 130, but with u = 20 % the k=2 interval reaches down to 90 lm/W.
    assert cross_check(_est(), 360.0, flux_sigma_lm=1.0).verdict == "implausibly high"
    assert cross_check(_est(), 360.0, flux_sigma_lm=72.0).verdict == "consistent"


def test_above_683_lm_per_w_is_always_impossible():
    # No radiation exceeds 683 lm/W (SI definition of the candela), whatever the uncertainty.
    watts = 2.4
    flux = watts * MAX_LUMINOUS_EFFICACY_LM_PER_W * 1.01
    for sigma in (0.0, 0.5 * flux, 5.0 * flux):
        chk = cross_check(_est(), flux, flux_sigma_lm=sigma)
        assert chk.verdict == "impossible"
        assert chk.implied_efficacy_lm_per_w > MAX_LUMINOUS_EFFICACY_LM_PER_W
    # ... also without an efficacy range
    assert cross_check(_est(efficacy_lm_per_w=None), flux).verdict == "impossible"
    # just below the ceiling, with no range given: above the white-light limit only
    chk = cross_check(_est(efficacy_lm_per_w=None), watts * 600.0, flux_sigma_lm=1.0)
    assert chk.verdict == "implausibly high"


def test_cross_check_pwm_uses_average_power():
    # 2.4 W on at duty 0.5 = 1.2 W average; 120 lm / 1.2 W = 100 lm/W.
    chk = cross_check(_est(pwm_duty=0.5), 120.0, flux_sigma_lm=3.0)
    assert chk.implied_efficacy_lm_per_w == pytest.approx(100.0)
    assert chk.to_dict()["average_watts"] == pytest.approx(1.2)
    assert chk.verdict == "consistent"


def test_cross_check_without_flux_and_bad_flux():
    chk = cross_check(_est(), None)
    assert chk.verdict == "not checked" and chk.implied_efficacy_lm_per_w is None
    with pytest.raises(InputError, match="measured_flux_lm"):
        cross_check(_est(), -1.0)
    with pytest.raises(InputError, match="flux_sigma_lm"):
        cross_check(_est(), 10.0, flux_sigma_lm=-1.0)


# --- physics-only bound -------------------------------------------------------------------


def test_plausibility_bound_values():
    b = plausibility_bound(average_watts=2.4, power_margin_fraction=0.0)
    assert b.max_flux_lm == pytest.approx(2.4 * WHITE_LED_MAX_EFFICACY_LM_PER_W)
    assert b.hard_max_flux_lm == pytest.approx(2.4 * 683.0)   # SI candela definition
    assert b.power_basis == "measured LED power"
    cell = plausibility_bound()
    # one cell: 4.2 V (full charge, generic 18650 data sheet) x 30 A x 300 lm/W
    assert cell.max_watts == pytest.approx(4.2 * 30.0)
    assert cell.max_flux_lm == pytest.approx(37800.0)
    assert plausibility_bound(n_cells=3).max_flux_lm == pytest.approx(3 * 37800.0)
    with pytest.raises(InputError, match="efficacy_ceiling_lm_per_w"):
        plausibility_bound(efficacy_ceiling_lm_per_w=700.0)
    with pytest.raises(InputError, match="n_cells"):
        plausibility_bound(n_cells=0)
    assert WHITE_LED_MAX_EFFICACY_LM_PER_W < MAX_LUMINOUS_EFFICACY_LM_PER_W


# --- output over time ---------------------------------------------------------------------


@pytest.mark.parametrize("capacity_ah, amps, duty", [(2.0, 1.0, 1.0), (3.0, 1.5, 1.0),
                                                     (3.0, 1.5, 0.5)])
def test_constant_current_discharge_lasts_capacity_over_current(capacity_ah, amps, duty):
    # A constant-voltage cell with no internal resistance holds the current constant, so the
    # cell empties after capacity / (current x duty) (1 Ah = 3600 C, definition).
    p = predict_output_over_time(led_volts=3.0, led_amps=amps, ballast_ohms=0.4,
                                 capacity_ah=capacity_ah, cell_ocv_table=FLAT_TABLE,
                                 cell_ohms=0.0, pwm_duty=duty)
    expected_s = capacity_ah * 3600.0 / (amps * duty)
    assert p.stop_reason == "cell empty"
    assert p.end_time_s == pytest.approx(expected_s, rel=1e-9)
    assert p.runtime_s == pytest.approx(expected_s, rel=1e-9)
    assert np.allclose(p.current_a, amps, rtol=1e-9)
    assert np.allclose(p.relative_output, 1.0)
    assert any("emptied" in w for w in p.warnings)


def test_resistor_limited_light_on_default_cell():
    p = predict_output_over_time(led_volts=3.0, led_amps=0.8, ballast_ohms=0.5,
                                 capacity_ah=3.0, flux_lm=250.0, intensity_cd=2000.0)
    # starts at the measured point (the driver drop is inferred from it)
    assert p.current_a[0] == pytest.approx(0.8, rel=1e-6)
    assert p.flux_lm[0] == pytest.approx(250.0, rel=1e-6)
    assert p.intensity_cd[0] == pytest.approx(2000.0, rel=1e-6)
    # the current falls as the cell discharges; the output is 1 at 30 s, 10 % at the end
    assert np.all(np.diff(p.current_a) <= 1e-12)
    assert np.interp(30.0, p.time_s, p.relative_output) == pytest.approx(1.0, rel=1e-9)
    assert p.stop_reason == "output at 10 %"
    assert p.relative_output[-1] <= 0.1 < p.relative_output[-2]
    assert p.time_s[-2] < p.runtime_s <= p.time_s[-1]
    # charge conservation: integral of I dt equals capacity x state of charge used
    charge_ah = np.trapezoid(p.current_a, p.time_s) / 3600.0
    assert charge_ah == pytest.approx(3.0 * (1.0 - p.soc_fraction[-1]), rel=1e-3)
    # power = V I
    assert np.allclose(p.power_w, p.led_volts * p.current_a)
    assert any("from memory" in a for a in p.assumptions)
    d = p.to_dict()
    assert len(d["time_s"]) == len(d["current_a"]) == len(d["flux_lm"])


def test_runtime_given_table_cell_voltage_and_cutoff():
    table = ((0.0, 3.0), (0.5, 3.6), (1.0, 4.2))
    start = predict_output_over_time(led_volts=3.0, led_amps=1.0, ballast_ohms=0.3,
                                     capacity_ah=2.5, cell_ocv_table=table,
                                     measured_cell_volts=3.9)
    assert start.soc_fraction[0] == pytest.approx(0.75)
    assert any("the table given" in a for a in start.assumptions)
    cut = predict_output_over_time(led_volts=3.0, led_amps=1.0, ballast_ohms=0.3,
                                   capacity_ah=2.5, cell_ocv_table=table, cutoff_volts=3.5)
    assert cut.stop_reason in ("cutoff voltage", "output at 10 %")
    assert np.all(cut.cell_volts[:-1] >= 3.5)
    with pytest.raises(InputError, match="cell_ocv_table"):
        predict_output_over_time(led_volts=3.0, led_amps=1.0, ballast_ohms=0.3,
                                 capacity_ah=2.5, cell_ocv_table=((0.5, 3.6), (0.2, 3.5)))
    with pytest.raises(InputError, match="capacity_ah"):
        predict_output_over_time(led_volts=3.0, led_amps=1.0, ballast_ohms=0.3,
                                 capacity_ah=0.0)


def test_default_ocv_table_is_monotonic_and_spans_li_ion_range():
    soc, volts = np.array(DEFAULT_OCV_TABLE).T
    assert soc[0] == 0.0 and soc[-1] == 1.0
    assert np.all(np.diff(volts) > 0)
    assert volts[-1] == pytest.approx(4.2)   # generic 18650 data sheet: charged to 4.200 V


# --- cautions and purity --------------------------------------------------------------


def test_cautions_cover_the_topics():
    text = " ".join(CAUTIONS).lower()
    for word in ("high-drain", "protected", "wrap", "in series", "eye", "cell maker",
                 "local rules"):
        assert word in text, word
    assert all(isinstance(c, str) and c for c in CAUTIONS)


@pytest.mark.parametrize("module", [electrical, compare])
def test_pure_rooms_do_no_io(module):
    tree = ast.parse(inspect.getsource(module))
    names = {n.id for n in ast.walk(tree) if isinstance(n, ast.Name)}
    assert not names & {"print", "open"}
    imported = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            imported |= {a.name.split(".")[0] for a in node.names}
        elif isinstance(node, ast.ImportFrom) and node.module:
            imported.add(node.module.split(".")[0])
    assert not imported & {"click", "matplotlib", "cv2"}


def test_thermal_voltage():
    # k T / q at 298.15 K = 25.69 mV (CODATA constants, exact in the SI).
    assert electrical.THERMAL_VOLTAGE_V == pytest.approx(0.025693, abs=1e-6)
    assert math.isfinite(electrical.THERMAL_VOLTAGE_V)
