"""The command layer: exit codes, one-line errors, no overwriting, results.json per contract.

The contract (docs/contract.md, from the shared interface): exit 0 on success, 2 on a usage or
input error with a one-line reason naming file and field, never a traceback; no output
overwritten without --force; results.json keys as listed there.
"""

from __future__ import annotations

import json
import re
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from test_accuracy import Case, _pose, write_case

from beamwall import synth
from beamwall.cli import main

CONTRACT_SHOT_KEYS = {
    "label", "zoom", "mode", "beam_angle_deg", "beam_angle_sigma_deg", "field_angle_deg",
    "peak_intensity_cd", "peak_intensity_sigma_cd", "throw_m", "flux_lm",
    "flux_half_angle_deg", "axis_mm", "saturated_fraction", "warnings",
    "relative_peak_intensity", "relative_flux", "spectral_correction_factor",
    "luminance_weights",
}

SMALL = Case("small", synth.HotspotSpill(hotspot_cd=3000.0, hotspot_half_angle_deg=8.0,
                                         spill_cd=200.0, spill_half_angle_deg=25.0),
             1.5, _pose(0.3, -0.2, 1.9, f_px=330.0, w=480, h=320))


@pytest.fixture(scope="module")
def scene_dir(tmp_path_factory):
    d = tmp_path_factory.mktemp("scene")
    write_case(SMALL, d)
    return d


def run(*args):
    return CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)


def one_line_error(res, pattern):
    assert res.exit_code == 2, res.output
    err = res.stderr.strip()
    assert "Traceback" not in err
    assert len(err.splitlines()) == 1, err
    assert re.search(pattern, err), err


def test_calibrate_then_measure_writes_contract_json(scene_dir, tmp_path):
    cal = tmp_path / "cal.json"
    res = run("calibrate", scene_dir / "cal.toml", "-o", cal)
    assert res.exit_code == 0, res.output
    assert json.loads(cal.read_text())["lux_per_signal"] > 0
    out = tmp_path / "out"
    res = run("measure", scene_dir / "session.toml", "-o", out, "-c", cal)
    assert res.exit_code == 0, res.output
    data = json.loads((out / "results.json").read_text())
    assert data["calibrated"] is True and data["beamwall_version"]
    shot = data["shots"][0]
    assert CONTRACT_SHOT_KEYS <= set(shot)
    assert shot["relative_peak_intensity"] == 1.0 and shot["relative_flux"] == 1.0
    # throw = sqrt(I / 0.25 lx) (ANSI/PLATO FL1), as written in the file
    assert shot["throw_m"] == pytest.approx(np.sqrt(shot["peak_intensity_cd"] / 0.25), rel=1e-4)
    assert "small" in res.output  # the table
    # No overwrite without --force, for results and calibration alike.
    one_line_error(run("measure", scene_dir / "session.toml", "-o", out, "-c", cal),
                   r"results\.json.*--force")
    one_line_error(run("calibrate", scene_dir / "cal.toml", "-o", cal), r"--force")
    assert run("measure", scene_dir / "session.toml", "-o", out, "-c", cal,
               "--force").exit_code == 0


def test_uncalibrated_reports_angles_and_relative_only(scene_dir, tmp_path):
    res = run("measure", scene_dir / "session.toml", "-o", tmp_path / "o")
    assert res.exit_code == 0, res.output
    shot = json.loads((tmp_path / "o" / "results.json").read_text())["shots"][0]
    assert shot["peak_intensity_cd"] is None and shot["throw_m"] is None
    assert shot["flux_lm"] is None
    assert shot["beam_angle_deg"] > 0 and shot["relative_peak_intensity"] == 1.0


def _edit(scene_dir: Path, tmp_path: Path, old: str, new: str, name="session.toml") -> Path:
    text = (scene_dir / name).read_text()
    assert old in text, old
    for f in scene_dir.iterdir():
        if f.suffix != ".toml":
            (tmp_path / f.name).write_bytes(f.read_bytes())
    p = tmp_path / name
    p.write_text(text.replace(old, new))
    return p


@pytest.mark.parametrize("old,new,pattern", [
    ("distance_m = 1.5", "distance_m = -1.5", r"session\.toml: \[rig\] distance_m: .*positive"),
    ("distance_m = 1.5", 'distance_m = "far"', r"\[rig\] distance_m"),
    ('encoding = "srgb"', 'encoding = "gamma"', r"\[camera\] encoding"),
    ('images = ["shot0.jpg"]', 'images = ["missing.jpg"]', r"images\[0\].*missing\.jpg"),
    ("[rig]", "[rig]\ndistnce = 3", r"distnce"),
    ('label = "small"', 'label = ""', r"label"),
])
def test_bad_session_fields_exit_2(scene_dir, tmp_path, old, new, pattern):
    p = _edit(scene_dir, tmp_path, old, new)
    one_line_error(run("measure", p, "-o", tmp_path / "out"), pattern)
    assert not (tmp_path / "out" / "results.json").exists()


def test_collinear_points_geometry_error(scene_dir, tmp_path):
    text = (scene_dir / "session.toml").read_text()
    pts = re.search(r"points = \[\n(.*?)\n\]", text, re.S).group(1)
    bad = "  [10.0, 10.0, 0, 0],\n  [20.0, 20.0, 100, 100],\n  [30.0, 30.0, 200, 200],\n" \
          "  [40.0, 40.0, 300, 300]"
    p = _edit(scene_dir, tmp_path, pts, bad)
    one_line_error(run("measure", p, "-o", tmp_path / "out"), r"line|collinear")


def test_unreadable_image_is_image_error(scene_dir, tmp_path):
    p = _edit(scene_dir, tmp_path, "[rig]", "[rig]")
    (tmp_path / "shot0.jpg").write_bytes(b"not a jpeg at all")
    one_line_error(run("measure", p, "-o", tmp_path / "out"), r"shot0\.jpg")


def test_calibration_for_another_camera_refused_unless_forced(scene_dir, tmp_path):
    cal = tmp_path / "cal.json"
    assert run("calibrate", scene_dir / "cal.toml", "-o", cal).exit_code == 0
    data = json.loads(cal.read_text())
    data["camera_model"] = "Another camera"
    cal.write_text(json.dumps(data))
    one_line_error(run("measure", scene_dir / "session.toml", "-o", tmp_path / "o", "-c", cal),
                   r"Another camera.*--force")
    res = run("measure", scene_dir / "session.toml", "-o", tmp_path / "o", "-c", cal, "--force")
    assert res.exit_code == 0
    shot = json.loads((tmp_path / "o" / "results.json").read_text())["shots"][0]
    assert any("force" in w for w in shot["warnings"])


def test_clipped_hotspot_in_every_exposure_exit_2(tmp_path):
    case = replace(SMALL, name="clipped")
    write_case(case, tmp_path)
    # Re-render the shot 30x over-exposed: the hotspot clips.
    from beamwall.images import read_frame, write_image
    from beamwall.linear import Exposure

    f = read_frame(tmp_path / "shot0.jpg")
    scene = synth.Scene(beam=case.beam, distance_m=case.distance_m, camera=case.camera)
    e = Exposure(f.exposure_s * 30, f.f_number, f.iso)
    write_image(tmp_path / "shot0.jpg", synth.render(scene, exposure=e, seed=3),
                exposure_s=e.exposure_s, f_number=e.f_number, iso=e.iso)
    one_line_error(run("measure", tmp_path / "session.toml", "-o", tmp_path / "o"),
                   r"clipped in every exposure")


def test_help_describes_commands():
    res = run("--help")
    assert res.exit_code == 0
    for cmd in ("calibrate", "measure", "demo"):
        assert cmd in res.output
