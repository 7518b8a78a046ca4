"""``beamwall check``: each finding is triggered by a rendered session made to fail it, and a
good session passes (exit 0 usable, 1 not usable, 2 bad input).

Scenes come from beamwall.synth and beamwall.synth_setup (markers only, no points). The
far-field rule checked is d >= max(5 D, D / theta) (general photometry: 5 times the largest
luminous dimension, EN 13032-1 as quoted in the project's photometry notes; reflector
crossover D / theta, ibid., section 1).
"""

from __future__ import annotations

import json

import pytest
from _marker_scenes import MarkerCase, pose, write_marker_session
from click.testing import CliRunner

from beamwall import synth
from beamwall.cli_check import check


def _run(case, tmp_path, *args):
    path = write_marker_session(case, tmp_path)
    r = CliRunner().invoke(check, [str(path), "--json", *args])
    data = json.loads(r.output) if r.exit_code in (0, 1) else None
    return r, data


def _codes(data, severity):
    return {f["code"] for f in data["findings"] if f["severity"] == severity}


def test_good_session_passes(tmp_path):
    r, data = _run(MarkerCase(), tmp_path)
    assert r.exit_code == 0 and data["usable"]
    assert not _codes(data, "fail") and not _codes(data, "warn")
    assert data["markers_found"] == [0, 1, 2, 3, 4] or sorted(data["markers_found"]) == [
        0, 1, 2, 3, 4]
    shot = data["shots"][0]
    assert shot["field_cut_sides"] == [] and 0.25 < shot["peak_fraction"] < 1.0


def test_clipped_hotspot_fails_with_shorter_exposure(tmp_path):
    r, data = _run(MarkerCase(exposure_scale=16.0), tmp_path)
    assert r.exit_code == 1 and "hotspot-clipped" in _codes(data, "fail")
    fix = next(f["fix"] for f in data["findings"] if f["code"] == "hotspot-clipped")
    assert fix.startswith("shorten the exposure by about")


def test_bracket_rescues_clipping(tmp_path):
    r, data = _run(MarkerCase(exposure_scale=16.0, bracket=(1 / 16,)), tmp_path)
    assert "hotspot-clipped" not in _codes(data, "fail")


def test_faint_beam_fails(tmp_path):
    r, data = _run(MarkerCase(exposure_scale=1 / 256), tmp_path)
    assert r.exit_code == 1 and "signal-low" in _codes(data, "fail")
    assert "exposure-low" in _codes(data, "warn")
    assert "field-cut" not in _codes(data, "fail")   # not judged in the noise


def test_field_cut_names_the_side(tmp_path):
    flood = synth.FlatFlood(plateau_cd=400.0, half_angle_deg=18.0)
    # Turned 26 deg further right than the wall origin: the beam leaves by the left edge.
    case = MarkerCase(beam=flood, camera=pose(0.75, 0.1, 2.1, f_px=430.0, yaw_extra=26.0))
    r, data = _run(case, tmp_path)
    f = next(f for f in data["findings"] if f["code"] == "field-cut")
    assert r.exit_code == 1 and f["severity"] == "fail"
    assert "left" in f["message"] and "turn it left" in f["fix"]


def test_missing_exposure_metadata_fails(tmp_path):
    r, data = _run(MarkerCase(exif=False), tmp_path)
    assert r.exit_code == 1 and "exposure-missing" in _codes(data, "fail")


def test_far_field_with_and_without_lens_size(tmp_path):
    narrow = synth.HotspotSpill(hotspot_cd=30000.0, hotspot_half_angle_deg=0.5,
                                spill_cd=100.0, spill_half_angle_deg=10.0)
    r, data = _run(MarkerCase(beam=narrow), tmp_path)
    assert "far-field" in _codes(data, "warn")
    # A 1 deg beam at 1.5 m: the 50 % spot is about 26-35 mm; a 40 mm lens needs
    # d >= D / theta = 0.04 / 0.0175 rad = 2.3 m.
    r = CliRunner().invoke(check, [str(tmp_path / "session.toml"), "--json", "--lens-mm", "40"])
    data = json.loads(r.output)
    assert r.exit_code == 1 and "far-field" in _codes(data, "fail")
    r = CliRunner().invoke(check, [str(tmp_path / "session.toml"), "--json", "--lens-mm", "15"])
    assert "far-field" in _codes(json.loads(r.output), "ok")


@pytest.mark.parametrize("kind", ["one marker", "wrong ids", "no markers"])
def test_markers_not_found_fail(tmp_path, kind):
    case = {"one marker": MarkerCase(drop_markers=(1, 2, 3, 4)),
            "wrong ids": MarkerCase(listed_ids={0: 30, 1: 31, 2: 32}),
            "no markers": MarkerCase(drop_markers=(0, 1, 2, 3, 4))}[kind]
    r, data = _run(case, tmp_path)
    f = next(f for f in data["findings"] if f["code"] == "markers")
    assert r.exit_code == 1 and f["severity"] == "fail"
    assert "missing:" in f["message"]


def test_setup_photo_of_another_size_fails(tmp_path):
    r, data = _run(MarkerCase(setup_size=(800, 535)), tmp_path)
    assert r.exit_code == 1 and "setup-size" in _codes(data, "fail")


def test_moved_camera_warns_when_sheets_stay_up(tmp_path):
    flood = synth.FlatFlood(plateau_cd=400.0, half_angle_deg=15.0)
    moved = pose(0.75, 0.1, 2.1, f_px=430.0, yaw_extra=0.5)
    r, data = _run(MarkerCase(beam=flood, sheets_in_beam_photos=True, setup_camera=moved),
                   tmp_path)
    assert "camera-moved" in _codes(data, "warn")


def test_bad_input_exits_2(tmp_path):
    (tmp_path / "s.toml").write_text("[rig]\ndistance_m = -1\n")
    r = CliRunner().invoke(check, [str(tmp_path / "s.toml")])
    assert r.exit_code == 2 and "distance_m" in r.output


def test_text_output_lists_fixes(tmp_path):
    path = write_marker_session(MarkerCase(exposure_scale=16.0), tmp_path)
    r = CliRunner().invoke(check, [str(path)])
    assert r.exit_code == 1 and "fix: shorten the exposure" in r.output
    assert r.output.strip().endswith("NOT usable: fix the failures above")
