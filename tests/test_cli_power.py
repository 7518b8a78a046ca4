"""Tests for the ``power`` command (click's CliRunner).

Outside checks: Ohm's law I = U / R and P = U I (physics handbook), the contract's worked
example (0.40 V over 0.50 ohm, 3.0 V, 90-130 lm/W -> 0.8 A, 2.4 W, 216-312 lm), and a
constant-current discharge lasting capacity / current (definition of the ampere-hour).
"""

from __future__ import annotations

import csv
import json

import pytest
from click.testing import CliRunner

from beamwall.cli_power import power, read_ocv_table
from beamwall.errors import InputError

BASE = ["--led-volts", "3.0", "--sense-volts", "0.40", "--sense-ohms", "0.50"]


def run(args):
    return CliRunner().invoke(power, args)


def test_table_output_contract_example():
    res = run(BASE + ["--efficacy", "90", "130"])
    assert res.exit_code == 0, res.output
    assert "0.8 A" in res.output and "2.4 W" in res.output      # I = U/R, P = U I
    assert "216-312 lm" in res.output
    assert "Cautions" in res.output and "protected cell" in res.output


def test_json_output_and_cross_check():
    res = run(BASE + ["--efficacy", "90", "130", "--measured-lm", "249.6",
                      "--measured-sigma-lm", "8", "--json"])
    assert res.exit_code == 0, res.output
    data = json.loads(res.output)
    el = data["electrical"]
    assert el["led_amps"] == pytest.approx(0.8)
    assert el["led_watts"] == pytest.approx(2.4)
    assert el["flux_estimate_lm"] == pytest.approx([216.0, 312.0])
    assert el["implied_efficacy_lm_per_w"] == pytest.approx(104.0)
    assert el["verdict"] == "consistent"
    assert data["output_over_time"] is None
    assert data["cautions"]


def test_impossible_claim_without_photos():
    # 2.4 W x 1.1 x 300 lm/W = 792 lm at most; 5000 lm is impossible.
    res = run(BASE + ["--claimed-lm", "5000", "--json"])
    assert res.exit_code == 0, res.output
    claim = json.loads(res.output)["claims"][0]
    assert claim["verdict"] == "physically impossible"
    assert claim["physical_limit"] == pytest.approx(792.0)
    res = run(BASE + ["--claimed-lm", "500", "--json"])
    assert json.loads(res.output)["claims"][0]["verdict"] == "not measured"


def test_bad_input_exits_2_with_one_line():
    res = CliRunner().invoke(power, ["--led-volts", "3.0"])
    assert res.exit_code == 2
    assert "led_amps" in res.stderr and "Traceback" not in res.output + res.stderr
    assert len(res.stderr.strip().splitlines()) == 1
    res = run(BASE + ["--duty", "1.5"])
    assert res.exit_code == 2 and "pwm_duty" in res.stderr


def test_runtime_with_flat_table_lasts_capacity_over_current(tmp_path):
    # A flat 3.7 V cell with no internal resistance holds 0.8 A until empty:
    # 2.0 Ah / 0.8 A = 2.5 h = 9000 s (1 Ah = 3600 C).
    table = tmp_path / "ocv.csv"
    table.write_text("soc_percent,volts\n0,3.7\n100,3.7\n", encoding="utf-8")
    out = tmp_path / "series.csv"
    args = BASE + ["--capacity-ah", "2.0", "--ocv-table", str(table), "--cell-ohms", "0",
                   "--measured-lm", "250", "-o", str(out), "--json"]
    res = run(args)
    assert res.exit_code == 0, res.output + res.stderr
    pred = json.loads(res.output)["output_over_time"]
    assert pred["runtime_s"] == pytest.approx(9000.0, rel=1e-9)
    assert pred["stop_reason"] == "cell empty"
    with out.open(encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert float(rows[-1]["time_s"]) == pytest.approx(9000.0, rel=1e-5)
    assert float(rows[0]["flux_lm"]) == pytest.approx(250.0, rel=1e-5)
    # no overwrite without --force
    res = run(args)
    assert res.exit_code == 2 and "--force" in res.stderr
    assert run(args + ["--force"]).exit_code == 0


def test_runtime_needs_a_ballast(tmp_path):
    res = run(["--led-volts", "3.0", "--led-amps", "1.0", "--capacity-ah", "3"])
    assert res.exit_code == 2 and "ballast" in res.stderr
    res = run(["--led-volts", "3.0", "--led-amps", "1.0", "--capacity-ah", "3",
               "--ballast-ohms", "0.4"])
    assert res.exit_code == 0 and "run time" in res.output


def test_read_ocv_table(tmp_path):
    p = tmp_path / "t.csv"
    p.write_text("# a note\n1.0,4.2\n0.0,3.0\n0.5,3.7\n", encoding="utf-8")
    assert read_ocv_table(p) == ((0.0, 3.0), (0.5, 3.7), (1.0, 4.2))
    p.write_text("soc,volts\n0,3.0\nx,4.2\n", encoding="utf-8")
    with pytest.raises(InputError, match="row 3"):
        read_ocv_table(p)
    with pytest.raises(InputError, match="cannot read"):
        read_ocv_table(tmp_path / "missing.csv")
