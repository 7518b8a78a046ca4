"""The examples/ scripts run and stay within issue 2's tolerances (ground truth: synth)."""

from __future__ import annotations

import runpy
from pathlib import Path

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def test_measure_synthetic_spot(capsys):
    ns = runpy.run_path(str(EXAMPLES / "measure_synthetic_spot.py"))
    errors = ns["main"]()
    assert abs(errors["beam_angle_deg"]) < 0.02 and abs(errors["field_angle_deg"]) < 0.03
    assert abs(errors["peak_intensity_cd"]) < 0.03 and abs(errors["throw_m"]) < 0.02
    assert "peak_intensity_cd" in capsys.readouterr().out
