"""Tests for beamwall.session: the session, calibration-session and profile TOML loaders.

Each malformed variant is one line: a set of changes to a valid document (dotted paths, list
indices as numbers, ``DELETE`` to remove a key) and a regular expression the one-line message
must match, naming the field as spelled in the module docstring. Files referenced by the
documents are tiny dummy files: the loaders only check that they exist.
"""

from __future__ import annotations

import copy
import json
import math
import re
from pathlib import Path
from typing import Any

import cv2
import pytest

from beamwall.constants import MAX_LUMINOUS_EFFICACY_LM_PER_W
from beamwall.errors import BeamwallError, InputError
from beamwall.session import (
    ARUCO_4X4_50_IDS,
    CalibrationSession,
    ElectricalSpec,
    ProfileSession,
    Session,
    load_calibration_session,
    load_profile_session,
    load_session,
    shot_field,
)

DELETE = object()

# ------------------------------------------------------------------------------------------
# A small TOML writer, enough for these documents (so each variant is a dict change)
# ------------------------------------------------------------------------------------------


def _key(key: str) -> str:
    if key and all(c.isascii() and (c.isalnum() or c in "_-") for c in key):
        return key
    return json.dumps(key)


def _value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, int):
        return str(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, list):
        return "[" + ", ".join(_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{_key(k)} = {_value(v)}" for k, v in value.items()) + "}"
    raise TypeError(type(value))


def _is_table_array(value: Any) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, dict) for v in value)


def _emit(table: dict[str, Any], prefix: str, lines: list[str]) -> None:
    for k, v in table.items():
        if not isinstance(v, dict) and not _is_table_array(v):
            lines.append(f"{_key(k)} = {_value(v)}")
    for k, v in table.items():
        name = f"{prefix}.{_key(k)}" if prefix else _key(k)
        if isinstance(v, dict):
            lines.append(f"\n[{name}]")
            _emit(v, name, lines)
        elif _is_table_array(v):
            for item in v:
                lines.append(f"\n[[{name}]]")
                _emit(item, name, lines)


def toml_text(doc: dict[str, Any]) -> str:
    """Write a document as TOML: tables as [headers], arrays of tables as [[headers]]."""
    lines: list[str] = []
    _emit(doc, "", lines)
    return "\n".join(lines) + "\n"


def changed(doc: dict[str, Any], changes: dict[str, Any]) -> dict[str, Any]:
    """Copy ``doc`` with each dotted path set to its value (``DELETE`` removes it).

    A path part indexes a list when the node is a list, else it is a table key (made when
    missing), so ``"shot.0.images"`` and ``"wall.markers_mm.50"`` both work.
    """
    out = copy.deepcopy(doc)
    for path, value in changes.items():
        *parents, last = path.split(".")
        node: Any = out
        for p in parents:
            if isinstance(node, list):
                node = node[int(p)]
            else:
                node = node.setdefault(p, {})
        key: Any = int(last) if isinstance(node, list) else last
        if value is DELETE:
            del node[key]
        else:
            node[key] = copy.deepcopy(value)
    return out


# ------------------------------------------------------------------------------------------
# Fixtures: a folder of dummy files and valid documents (a fictional rig)
# ------------------------------------------------------------------------------------------

DUMMY_FILES = (
    "img/wide_high.jpg", "img/wide_high_2.jpg", "img/tele_low.jpg", "img/dark.jpg",
    "img/dark_2.jpg", "img/setup.jpg", "img/lamp.jpg", "img/lamp_dark.jpg",
    "torch.csv", "lamp.csv", "camera_rgb.csv",
    "../calibration/demo-camera.json", "../calibration/demo-camera.profile.json",
    "bracket_1.jpg", "bracket_2.jpg", "flat_1.jpg", "board_01.jpg", "board_02.jpg",
)

POINTS = [
    [412.0, 300.5, -500.0, 400.0],
    [1630.2, 310.0, 500.0, 400.0],
    [1622.8, 1105.9, 500.0, -400.0],
    [420.1, 1098.3, -500.0, -400.0],
]

SESSION: dict[str, Any] = {
    "title": "Hallway test of a fictional zoom torch",
    "rig": {"distance_m": 3.0, "distance_sigma_m": 0.01},
    "wall": {"points": POINTS, "points_sigma_px": 0.5, "axis_mm": [0.0, 0.0]},
    "camera": {"exposure_s": 0.01, "f_number": 4.0, "iso": 100, "encoding": "srgb",
               "focal_length_px": 3100.0,
               "profile": "../calibration/demo-camera.profile.json"},
    "calibration": {"file": "../calibration/demo-camera.json"},
    "spectral": {"camera_sensitivity_csv": "camera_rgb.csv"},
    "electrical": {"led_volts": 3.0, "sense_volts": 0.40, "sense_ohms": 0.50,
                   "efficacy_lm_per_w": [90, 130], "pwm_duty": 1.0},
    "shot": [
        {"label": "min zoom, high", "images": ["img/wide_high.jpg", "img/wide_high_2.jpg"],
         "dark": "img/dark.jpg", "exposures_s": [0.01, 0.04], "zoom": "min", "mode": "high",
         "source_cct_k": 6500, "claimed_lm": 1200, "claimed_cd": 20000,
         "claimed_throw_m": 280},
        {"label": "max zoom, low", "images": "img/tele_low.jpg", "zoom": "max", "mode": "low",
         "exposure_s": 0.1, "f_number": 2.8, "iso": 400,
         "source_spectrum_csv": "torch.csv",
         "electrical": {"sense_volts": 0.1, "pwm_duty": 0.25}},
    ],
}

MARKER_WALL = {
    "setup_image": "img/setup.jpg", "marker_size_mm": 120.0,
    "markers_mm": {"0": [-600.0, 400.0], "1": [600.0, 400.0], "2": [600.0, -400.0],
                   "3": [-600.0, -400.0]},
}

CALIBRATION: dict[str, Any] = {
    "wall": {"points": POINTS},
    "camera": {"encoding": "linear", "black_level": 64, "white_level": 16383},
    "reference": {"images": ["img/lamp.jpg"], "dark": "img/lamp_dark.jpg",
                  "intensity_cd": 120.0, "intensity_sigma_cd": 2.4, "distance_m": 2.0,
                  "distance_sigma_m": 0.005, "axis_mm": [10.0, -5.0], "cct_k": 2856},
}

LUX_REFERENCE = {"images": ["img/lamp.jpg"], "illuminance_lx": 35.0,
                 "illuminance_sigma_lx": 1.0, "at_mm": [0.0, 0.0]}

PROFILE: dict[str, Any] = {
    "camera": {"encoding": "srgb"},
    "response": {"images": ["bracket_1.jpg", "bracket_2.jpg"], "exposures_s": [0.01, 0.02]},
    "flat_field": {"images": ["flat_1.jpg"]},
    "distortion": {"images": ["board_01.jpg", "board_02.jpg"], "inner_corners": [9, 6],
                   "square_mm": 25.0},
}


@pytest.fixture
def folder(tmp_path: Path) -> Path:
    """A session folder ``tmp/rig`` with the dummy files, some in ``tmp/calibration``."""
    rig = tmp_path / "rig"
    for name in DUMMY_FILES:
        f = rig / name
        f.parent.mkdir(parents=True, exist_ok=True)
        f.write_bytes(b"\x00")
    return rig


def write(folder: Path, doc: dict[str, Any] | str, name: str = "session.toml") -> Path:
    path = folder / name
    path.write_text(doc if isinstance(doc, str) else toml_text(doc), encoding="utf-8")
    return path


# ------------------------------------------------------------------------------------------
# Valid files
# ------------------------------------------------------------------------------------------


def test_full_session_parses_with_resolved_paths(folder: Path) -> None:
    session = load_session(write(folder, SESSION))
    assert isinstance(session, Session)
    assert session.path == (folder / "session.toml").resolve()
    assert session.title == "Hallway test of a fictional zoom torch"
    assert session.rig.distance_m == 3.0 and session.rig.distance_sigma_m == 0.01
    assert session.wall.points == tuple(tuple(p) for p in POINTS)
    assert session.wall.points_sigma_px == 0.5 and session.wall.axis_mm == (0.0, 0.0)
    assert session.wall.setup_image is None and session.wall.markers_mm is None
    cam = session.camera
    assert (cam.exposure_s, cam.f_number, cam.iso, cam.encoding) == (0.01, 4.0, 100.0, "srgb")
    assert cam.profile == (folder.parent / "calibration/demo-camera.profile.json").resolve()
    assert session.calibration_file == (folder.parent / "calibration/demo-camera.json")
    assert session.camera_sensitivity_csv == folder / "camera_rgb.csv"
    assert session.electrical == ElectricalSpec(
        led_volts=3.0, sense_volts=0.4, sense_ohms=0.5, efficacy_lm_per_w=(90.0, 130.0),
        pwm_duty=1.0,
    )

    first, second = session.shots
    assert first.label == "min zoom, high" and first.number == 1
    assert first.images == (folder / "img/wide_high.jpg", folder / "img/wide_high_2.jpg")
    assert all(p.is_absolute() for p in first.images + first.darks)
    assert first.darks == (folder / "img/dark.jpg",)
    assert first.exposures_s == (0.01, 0.04)
    assert (first.zoom, first.mode, first.source_cct_k) == ("min", "high", 6500.0)
    assert (first.claimed_lm, first.claimed_cd, first.claimed_throw_m) == (1200, 20000, 280)
    assert first.electrical == session.electrical  # no own table: the session's

    assert second.images == (folder / "img/tele_low.jpg",)  # one string is one image
    assert second.darks == () and second.exposures_s is None
    assert (second.exposure_s, second.f_number, second.iso) == (0.1, 2.8, 400.0)
    assert second.source_spectrum_csv == folder / "torch.csv"
    # [shot.electrical] merged over [electrical] key by key
    assert second.electrical == ElectricalSpec(
        led_volts=3.0, sense_volts=0.1, sense_ohms=0.5, efficacy_lm_per_w=(90.0, 130.0),
        pwm_duty=0.25,
    )


def test_session_is_frozen(folder: Path) -> None:
    session = load_session(write(folder, SESSION))
    with pytest.raises(AttributeError):
        session.rig.distance_m = 4.0  # type: ignore[misc]


def test_hand_written_shot_electrical_header(folder: Path) -> None:
    text = toml_text(changed(SESSION, {"shot": DELETE})) + (
        '\n[[shot]]\nlabel = "a"\nimages = ["img/tele_low.jpg"]\n'
        "[shot.electrical]\nled_amps = 0.2\nsense_volts = 0.1\n"
        '\n[[shot]]\nlabel = "b"\nimages = ["img/tele_low.jpg"]\n'
    )
    text = text.replace("sense_volts = 0.4\nsense_ohms = 0.5\n", "led_amps = 0.8\n")
    with pytest.raises(InputError, match=re.escape(
        'session.toml: [[shot]] 1 ("a") [shot.electrical] led_amps: ambiguous')):
        load_session(write(folder, text))
    session = load_session(write(folder, text.replace("sense_volts = 0.1\n", "")))
    assert session.shots[0].electrical is not None
    assert session.shots[0].electrical.led_amps == 0.2
    assert session.shots[1].electrical is not None
    assert session.shots[1].electrical.led_amps == 0.8


def test_marker_wall(folder: Path) -> None:
    doc = changed(SESSION, {"wall": MARKER_WALL})
    wall = load_session(write(folder, doc)).wall
    assert wall.points is None
    assert wall.setup_image == folder / "img/setup.jpg"
    assert wall.marker_size_mm == 120.0
    assert wall.markers_mm == {0: (-600.0, 400.0), 1: (600.0, 400.0), 2: (600.0, -400.0),
                               3: (-600.0, -400.0)}


def test_marker_id_range_matches_opencv() -> None:
    # OpenCV's predefined DICT_4X4_50 holds 50 markers (ids 0 to 49).
    dictionary = cv2.aruco.getPredefinedDictionary(cv2.aruco.DICT_4X4_50)
    assert dictionary.bytesList.shape[0] == ARUCO_4X4_50_IDS


def test_minimal_session(folder: Path) -> None:
    doc = {"rig": {"distance_m": 5}, "wall": {"points": POINTS},
           "shot": [{"label": "x", "images": ["img/wide_high.jpg"]}]}
    session = load_session(write(folder, doc))
    assert session.rig.distance_m == 5.0 and isinstance(session.rig.distance_m, float)
    assert session.camera.encoding is None and session.calibration_file is None
    assert session.electrical is None and session.shots[0].electrical is None
    assert session.title is None


def test_calibration_session_intensity_form(folder: Path) -> None:
    cal = load_calibration_session(write(folder, CALIBRATION, "cal.toml"))
    assert isinstance(cal, CalibrationSession)
    ref = cal.reference
    assert ref.images == (folder / "img/lamp.jpg",)
    assert ref.darks == (folder / "img/lamp_dark.jpg",)
    assert (ref.intensity_cd, ref.intensity_sigma_cd, ref.distance_m) == (120.0, 2.4, 2.0)
    assert ref.axis_mm == (10.0, -5.0) and ref.cct_k == 2856.0
    assert ref.illuminance_lx is None and ref.at_mm is None
    assert (cal.camera.black_level, cal.camera.white_level) == (64.0, 16383.0)


def test_calibration_session_illuminance_form(folder: Path) -> None:
    doc = changed(CALIBRATION, {"reference": LUX_REFERENCE})
    ref = load_calibration_session(write(folder, doc, "cal.toml")).reference
    assert (ref.illuminance_lx, ref.illuminance_sigma_lx, ref.at_mm) == (35.0, 1.0, (0.0, 0.0))
    assert ref.intensity_cd is None and ref.axis_mm is None


def test_profile_session(folder: Path) -> None:
    prof = load_profile_session(write(folder, PROFILE, "cam.toml"))
    assert isinstance(prof, ProfileSession)
    assert prof.response_images == (folder / "bracket_1.jpg", folder / "bracket_2.jpg")
    assert prof.response_exposures_s == (0.01, 0.02)
    assert prof.flat_field_images == (folder / "flat_1.jpg",)
    assert prof.distortion_images[1] == folder / "board_02.jpg"
    assert prof.inner_corners == (9, 6) and prof.square_mm == 25.0
    only_flat = load_profile_session(write(folder, {"flat_field": PROFILE["flat_field"]}))
    assert only_flat.response_images == () and only_flat.inner_corners is None


# ------------------------------------------------------------------------------------------
# The exception family
# ------------------------------------------------------------------------------------------


def test_input_error_hierarchy(folder: Path) -> None:
    assert issubclass(InputError, BeamwallError) and issubclass(InputError, ValueError)
    with pytest.raises(InputError) as info:
        load_session(write(folder, changed(SESSION, {"rig.distance_m": -3.0})))
    err = info.value
    assert isinstance(err, BeamwallError) and isinstance(err, ValueError)
    assert err.field == "[rig] distance_m"
    assert err.file == str(folder / "session.toml")  # as the caller gave it
    assert str(err) == f"{folder / 'session.toml'}: [rig] distance_m: must be positive, got -3.0"
    assert "\n" not in str(err)


def test_file_is_shown_as_given(folder: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    write(folder, changed(SESSION, {"rig.distance_m": -3.0}))
    monkeypatch.chdir(folder)
    with pytest.raises(InputError) as info:
        load_session("session.toml")
    assert str(info.value) == "session.toml: [rig] distance_m: must be positive, got -3.0"


def test_shot_field_spelling() -> None:
    assert shot_field(2, 'say "hi"', "dark") == '[[shot]] 2 ("say \\"hi\\"") dark'


# ------------------------------------------------------------------------------------------
# Malformed sessions: (changes, message pattern); each pattern names the field
# ------------------------------------------------------------------------------------------

S1 = r'\[\[shot\]\] 1 \("min zoom, high"\) '
S2 = r'\[\[shot\]\] 2 \("max zoom, low"\) '
S2E = S2 + r"\[shot\.electrical\] "

BAD_SESSIONS: list[tuple[dict[str, Any], str]] = [
    # [rig]
    ({"rig": DELETE}, r"\[rig\]: required table is missing"),
    ({"rig": 3}, r"\[rig\]: must be a table, got integer 3"),
    ({"rig.distance_m": DELETE}, r"\[rig\] distance_m: required field is missing"),
    ({"rig.distance_m": -3.0}, r"\[rig\] distance_m: must be positive, got -3.0"),
    ({"rig.distance_m": 0}, r"\[rig\] distance_m: must be positive, got 0"),
    ({"rig.distance_m": "3"}, r'\[rig\] distance_m: must be a number, got string "3"'),
    ({"rig.distance_m": True}, r"\[rig\] distance_m: must be a number, got boolean true"),
    ({"rig.distance_m": math.inf}, r"\[rig\] distance_m: must be finite, got inf"),
    ({"rig.distance_m": math.nan}, r"\[rig\] distance_m: must be finite, got nan"),
    ({"rig.distance_sigma_m": -0.01}, r"\[rig\] distance_sigma_m: must not be negative"),
    ({"rig.distnce_m": 3.0},
     r"\[rig\] distnce_m: unknown key 'distnce_m' \(did you mean 'distance_m'\?\); "
     r"expected one of distance_m, distance_sigma_m"),
    # top level
    ({"rigg": {"distance_m": 3.0}},
     r"\[rigg\]: unknown table 'rigg'.*expected one of title, \[rig\], \[wall\], "
     r"\[camera\], \[calibration\], \[\[shot\]\], \[spectral\], \[electrical\]$"),
    ({"distance_m": 3.0}, r"^[^:]*session\.toml: distance_m: unknown key.*under \[rig\]"),
    ({"title": 7}, r"title: must be a string, got integer 7"),
    # [wall]
    ({"wall": DELETE}, r"\[wall\]: required table is missing"),
    ({"wall.points": DELETE}, r"\[wall\] points: required: give points"),
    ({"wall.points": POINTS[:3]}, r"\[wall\] points: needs at least 4 points, got 3"),
    ({"wall.points.2": [1.0, 2.0, 3.0]},
     r"\[wall\] points\[2\]: must be \[pixel_x, pixel_y, wall_x_mm, wall_y_mm\], got 3 values"),
    ({"wall.points.2": 5}, r"\[wall\] points\[2\]: must be \[pixel_x.*got integer 5"),
    ({"wall.points.2.1": "a"}, r'\[wall\] points\[2\]\[1\]: must be a number, got string "a"'),
    ({"wall.points.3": [1630.2, 310.0, 0.0, 0.0]},
     r"\[wall\] points\[3\]: same pixel position as \[wall\] points\[1\]"),
    ({"wall.setup_image": "img/setup.jpg"},
     r"\[wall\] setup_image: give either points or setup_image"),
    ({"wall.marker_size_mm": 100.0},
     r"\[wall\] marker_size_mm: only used with setup_image"),
    ({"wall": MARKER_WALL, "wall.marker_size_mm": DELETE},
     r"\[wall\] marker_size_mm: required with setup_image"),
    ({"wall": MARKER_WALL, "wall.markers_mm": DELETE},
     r"\[wall\] markers_mm: required with setup_image"),
    ({"wall": MARKER_WALL, "wall.setup_image": "img/nope.jpg"},
     r"\[wall\] setup_image: no such file: img/nope\.jpg"),
    ({"wall": MARKER_WALL, "wall.marker_size_mm": -120.0},
     r"\[wall\] marker_size_mm: must be positive"),
    ({"wall": MARKER_WALL, "wall.markers_mm.a": [0.0, 0.0]},
     r'\[wall\] markers_mm\."a": marker id must be a non-negative integer'),
    ({"wall": MARKER_WALL, "wall.markers_mm.-1": [0.0, 0.0]},
     r'\[wall\] markers_mm\."-1": marker id must be a non-negative integer'),
    ({"wall": MARKER_WALL, "wall.markers_mm.50": [0.0, 0.0]},
     r'\[wall\] markers_mm\."50": marker id must be 0 to 49'),
    ({"wall": MARKER_WALL, "wall.markers_mm.1": [600.0]},
     r'\[wall\] markers_mm\."1": must be \[x_mm, y_mm\], 2 numbers'),
    ({"wall": MARKER_WALL, "wall.markers_mm": {"0": [0, 0], "1": [1, 0]}},
     r"\[wall\] markers_mm: needs at least 3 markers, got 2"),
    ({"wall.points_sigma_px": -0.5}, r"\[wall\] points_sigma_px: must not be negative"),
    ({"wall.axis_mm": [0.0]}, r"\[wall\] axis_mm: must be \[x_mm, y_mm\], 2 numbers"),
    # [camera]
    ({"camera.encoding": "sRGB"}, r'\[camera\] encoding: must be "srgb" or "linear"'),
    ({"camera.exposure_s": 0.0}, r"\[camera\] exposure_s: must be positive"),
    ({"camera.f_number": -4}, r"\[camera\] f_number: must be positive"),
    ({"camera.iso": 0}, r"\[camera\] iso: must be positive"),
    ({"camera.black_level": 70000, "camera.white_level": 65535},
     r"\[camera\] black_level: must be below white_level \(65535\), got 70000"),
    ({"camera.black_level": 1000, "camera.white_level": 1000},
     r"\[camera\] black_level: must be below white_level"),
    ({"camera.focal_length_px": -1.0}, r"\[camera\] focal_length_px: must be positive"),
    ({"camera.profile": "missing.json"}, r"\[camera\] profile: no such file: missing\.json"),
    ({"camera.profile": "img"}, r"\[camera\] profile: not a file: img"),
    ({"camera.gamma": 2.2}, r"\[camera\] gamma: unknown key 'gamma'"),
    # [calibration], [spectral]
    ({"calibration.file": "../calibration/other.json"},
     r"\[calibration\] file: no such file"),
    ({"calibration": {"fil": "x.json"}}, r"\[calibration\] fil: unknown key.*did you mean 'file'"),
    ({"spectral.camera_sensitivity_csv": ""},
     r"\[spectral\] camera_sensitivity_csv: must not be empty"),
    # [[shot]]
    ({"shot": DELETE}, r"\[\[shot\]\]: at least one \[\[shot\]\] table is required"),
    ({"shot": {"label": "a", "images": "img/tele_low.jpg"}},
     r"\[\[shot\]\]: must be an array of tables, each headed \[\[shot\]\]"),
    ({"shot.0.label": DELETE}, r"\[\[shot\]\] 1 label: required field is missing"),
    ({"shot.1.label": "  "}, r"\[\[shot\]\] 2 label: must not be empty"),
    ({"shot.1.label": 3}, r"\[\[shot\]\] 2 label: must be a string, got integer 3"),
    ({"shot.1.label": "Min  zoom, HIGH"},
     r'\[\[shot\]\] 2 \("Min  zoom, HIGH"\) label: duplicate label; \[\[shot\]\] 1'),
    ({"shot.0.images": DELETE}, S1 + r"images: required field is missing"),
    ({"shot.0.images": []}, S1 + r"images: must give one file name, got 0"),
    ({"shot.0.images.1": "img/nope.jpg"}, S1 + r"images\[1\]: no such file: img/nope\.jpg"),
    ({"shot.0.images.0": 5}, S1 + r"images\[0\]: must be a file name \(string\), got integer"),
    ({"shot.0.dark": ["img/dark.jpg", "img/dark_2.jpg", "img/dark.jpg"]},
     S1 + r"dark: must give one dark frame, or one per image \(2\), got 3"),
    ({"shot.0.exposures_s": [0.01]},
     S1 + r"exposures_s: must give one exposure time per image \(2\), got 1"),
    ({"shot.0.exposures_s.1": -0.04}, S1 + r"exposures_s\[1\]: must be positive"),
    ({"shot.0.exposure_s": 0.01}, S1 + r"exposure_s: ambiguous with exposures_s"),
    ({"shot.1.f_number": 0}, S2 + r"f_number: must be positive"),
    ({"shot.1.iso": "100"}, S2 + r'iso: must be a number, got string "100"'),
    ({"shot.0.zoom": 10}, S1 + r"zoom: must be a string, got integer 10"),
    ({"shot.0.source_cct_k": 500}, S1 + r"source_cct_k: must lie within 1000 to 25000 K"),
    ({"shot.0.source_cct_k": 30000}, S1 + r"source_cct_k: must lie within 1000 to 25000 K"),
    ({"shot.0.source_cie_illuminant": "LED-B3"},
     S1 + r"source_cie_illuminant: give only one of source_cct_k, source_spectrum_csv"),
    ({"shot.1.source_spectrum_csv": "nope.csv"}, S2 + r"source_spectrum_csv: no such file"),
    ({"shot.1.source_spectrum_csv": DELETE, "shot.1.source_cie_illuminant": 3},
     S2 + r"source_cie_illuminant: must be a string"),
    ({"shot.0.claimed_lm": -1200}, S1 + r"claimed_lm: must be positive"),
    ({"shot.0.claimed_throw_m": False}, S1 + r"claimed_throw_m: must be a number, got boolean"),
    ({"shot.0.led_amps": 0.8}, S1 + r"led_amps: unknown key.*under \[shot\.electrical\]"),
    ({"label": "x"}, r"session\.toml: label: unknown key 'label' \(did you mean it under "
     r"\[\[shot\]\]\?"),
    ({"shot.0.lable": "x"}, S1 + r"lable: unknown key 'lable' \(did you mean 'label'\?\)"),
    # [electrical] and [shot.electrical]
    ({"electrical.led_amps": 0.8},
     r"\[electrical\] led_amps: ambiguous: give led_amps, or sense_volts with sense_ohms"),
    ({"electrical.sense_ohms": DELETE},
     r"\[electrical\] sense_volts: given without sense_ohms"),
    ({"electrical.sense_ohms": 0.0}, r"\[electrical\] sense_ohms: must be positive"),
    ({"electrical.led_volts": DELETE}, r"\[electrical\] led_volts: required field is missing"),
    ({"electrical.efficacy_lm_per_w": [130, 90]},
     r"\[electrical\] efficacy_lm_per_w: must be \[low, high\] with low <= high"),
    ({"electrical.efficacy_lm_per_w": [0, 90]},
     r"\[electrical\] efficacy_lm_per_w\[0\]: must be positive"),
    ({"electrical.efficacy_lm_per_w": 100},
     r"\[electrical\] efficacy_lm_per_w: must be an array \(\[low, high\], 2 numbers\)"),
    ({"electrical.efficacy_lm_per_w": [90, 130, 150]},
     r"\[electrical\] efficacy_lm_per_w: must be \[low, high\], 2 numbers, got 3"),
    # 683 lm/W: the luminous efficacy of 540 THz radiation, the largest possible (SI
    # Brochure, 9th edition, 2019)
    ({"electrical.efficacy_lm_per_w": [90, 700]},
     r"\[electrical\] efficacy_lm_per_w: 700 lm/W exceeds .* 683 lm/W"),
    ({"electrical.pwm_duty": 0}, r"\[electrical\] pwm_duty: must lie in \(0, 1\], got 0"),
    ({"electrical.pwm_duty": 1.5}, r"\[electrical\] pwm_duty: must lie in \(0, 1\], got 1\.5"),
    ({"electrical.led_volt": 3.0}, r"\[electrical\] led_volt: unknown key.*'led_volts'"),
    ({"electrical": 3}, r"\[electrical\]: must be a table, got integer 3"),
    ({"shot.1.electrical.led_amps": 0.1},
     S2E + r"led_amps: ambiguous: give led_amps, or sense_volts"),
    ({"shot.1.electrical.sense_volts": DELETE, "shot.1.electrical.led_amps": 0.1},
     S2E + r"led_amps: ambiguous with \[electrical\] sense_volts"),
    ({"shot.1.electrical.pwm_duty": -0.25}, S2E + r"pwm_duty: must lie in \(0, 1\]"),
    ({"shot.1.electrical.mode": "low"},
     S2E + r"mode: unknown key 'mode' \(a \[\[shot\]\] key: keys below"),
    ({"electrical.sense_volts": DELETE},
     r"\[electrical\] sense_ohms: given without sense_volts"),
]


def _case_id(case: tuple[dict[str, Any], str]) -> str:
    return ",".join(case[0])[:60]


@pytest.mark.parametrize("changes, pattern", BAD_SESSIONS, ids=[_case_id(c) for c in BAD_SESSIONS])
def test_malformed_session(folder: Path, changes: dict[str, Any], pattern: str) -> None:
    path = write(folder, changed(SESSION, changes))
    with pytest.raises(InputError, match=pattern) as info:
        load_session(path)
    message = str(info.value)
    assert message.startswith(f"{path}: ") and "\n" not in message
    assert info.value.field  # every fault names its field


def test_session_level_partial_table_completed_by_every_shot(folder: Path) -> None:
    # The session's table gives only the resistor; each shot gives its own sense voltage.
    doc = changed(SESSION, {"electrical.sense_volts": DELETE,
                            "shot.0.electrical": {"sense_volts": 0.4}})
    session = load_session(write(folder, doc))
    assert session.electrical is not None and session.electrical.sense_volts is None
    assert [s.electrical.sense_volts for s in session.shots if s.electrical] == [0.4, 0.1]
    # ... and without the first shot's own table, the first shot's merged table is partial.
    doc = changed(doc, {"shot.0.electrical": DELETE})
    with pytest.raises(InputError, match=r"\[electrical\] sense_ohms: given without sense_volts"):
        load_session(write(folder, doc))


def test_toml_syntax_error_names_line(folder: Path) -> None:
    text = toml_text(SESSION).replace("distance_m = 3.0", "distance_m = = 3.0")
    line = text.splitlines().index("distance_m = = 3.0") + 1
    with pytest.raises(InputError, match=rf"session\.toml: not valid TOML: .*line {line}\b"):
        load_session(write(folder, text))


def test_missing_and_unreadable_session_file(folder: Path) -> None:
    with pytest.raises(InputError, match=r"nowhere\.toml: no such file"):
        load_session(folder / "nowhere.toml")
    with pytest.raises(InputError, match=r"img: is a directory"):
        load_session(folder / "img")
    (folder / "latin1.toml").write_bytes(b'title = "caf\xe9"\n')
    with pytest.raises(InputError, match=r"latin1\.toml: not UTF-8 text"):
        load_session(folder / "latin1.toml")


def test_duplicate_key_is_a_syntax_error(folder: Path) -> None:
    text = toml_text(SESSION).replace("distance_m = 3.0", "distance_m = 3.0\ndistance_m = 4.0")
    with pytest.raises(InputError, match=r"not valid TOML"):
        load_session(write(folder, text))


def test_maximum_efficacy_constant() -> None:
    # SI Brochure, 9th edition (2019), 2.3.1: K_cd = 683 lm/W at 540 THz.
    assert MAX_LUMINOUS_EFFICACY_LM_PER_W == 683.0


# ------------------------------------------------------------------------------------------
# Malformed calibration sessions and profiles
# ------------------------------------------------------------------------------------------

BAD_CALIBRATIONS: list[tuple[dict[str, Any], str]] = [
    ({"reference": DELETE}, r"\[reference\]: required table is missing"),
    ({"reference.images": DELETE}, r"\[reference\] images: required field is missing"),
    ({"reference.intensity_cd": -120.0}, r"\[reference\] intensity_cd: must be positive"),
    ({"reference.intensity_cd": DELETE},
     r"\[reference\] intensity_cd: required with distance_m and axis_mm"),
    ({"reference.axis_mm": DELETE}, r"\[reference\] axis_mm: required with intensity_cd"),
    ({"reference.distance_m": DELETE}, r"\[reference\] distance_m: required with intensity_cd"),
    ({"reference.distance_m": 0.0}, r"\[reference\] distance_m: must be positive"),
    ({"reference.intensity_sigma_cd": -2.4},
     r"\[reference\] intensity_sigma_cd: must not be negative"),
    ({"reference.illuminance_lx": 35.0},
     r"\[reference\] illuminance_lx: give either a lamp's intensity .* not both"),
    ({"reference": {"images": ["img/lamp.jpg"]}},
     r"\[reference\] intensity_cd: required: give a lamp's intensity_cd"),
    ({"reference": LUX_REFERENCE, "reference.at_mm": DELETE},
     r"\[reference\] at_mm: required with illuminance_lx"),
    ({"reference": LUX_REFERENCE, "reference.illuminance_lx": DELETE},
     r"\[reference\] illuminance_lx: required with at_mm"),
    ({"reference": LUX_REFERENCE, "reference.illuminance_sigma_lx": -1.0},
     r"\[reference\] illuminance_sigma_lx: must not be negative"),
    ({"reference.cct_k": 100}, r"\[reference\] cct_k: must lie within 1000 to 25000 K"),
    ({"reference.spectrum_csv": "lamp.csv"},
     r"\[reference\] spectrum_csv: give only one of cct_k, spectrum_csv"),
    ({"reference.dark": ["img/lamp_dark.jpg", "img/lamp_dark.jpg"]},
     r"\[reference\] dark: must give one dark frame, or one per image \(1\), got 2"),
    ({"reference.intensty_cd": 1.0}, r"\[reference\] intensty_cd: unknown key"),
    ({"wall.axis_mm": [0.0, 0.0]},
     r"\[wall\] axis_mm: unknown key 'axis_mm' \(a calibration session gives the lamp's axis"),
    ({"rig": {"distance_m": 2.0}}, r"\[rig\]: unknown table 'rig'"),
    ({"camera.encoding": "gamma"}, r'\[camera\] encoding: must be "srgb" or "linear"'),
    ({"wall": DELETE}, r"\[wall\]: required table is missing"),
]


@pytest.mark.parametrize("changes, pattern", BAD_CALIBRATIONS,
                         ids=[_case_id(c) for c in BAD_CALIBRATIONS])
def test_malformed_calibration_session(
    folder: Path, changes: dict[str, Any], pattern: str
) -> None:
    path = write(folder, changed(CALIBRATION, changes), "cal.toml")
    with pytest.raises(InputError, match=pattern):
        load_calibration_session(path)


BAD_PROFILES: list[tuple[dict[str, Any], str]] = [
    ({"response": DELETE, "flat_field": DELETE, "distortion": DELETE},
     r"cam\.toml: nothing to profile"),
    ({"response.images": ["bracket_1.jpg"]},
     r"\[response\] images: must give at least 2 file names, got 1"),
    ({"response.images": "bracket_1.jpg"}, r"\[response\] images: must give at least 2"),
    ({"response.exposures_s": [0.01]},
     r"\[response\] exposures_s: must give one exposure time per image \(2\), got 1"),
    ({"flat_field.images": ["flat_2.jpg"]}, r"\[flat_field\] images\[0\]: no such file"),
    ({"distortion.inner_corners": [9]},
     r"\[distortion\] inner_corners: must be \[columns, rows\], 2 integers, got 1 value"),
    ({"distortion.inner_corners": [9, 1]},
     r"\[distortion\] inner_corners\[1\]: must be at least 2, got 1"),
    ({"distortion.inner_corners": [9.0, 6]},
     r"\[distortion\] inner_corners\[0\]: must be an integer, got float 9\.0"),
    ({"distortion.inner_corners": DELETE},
     r"\[distortion\] inner_corners: required field is missing"),
    ({"distortion.square_mm": DELETE}, r"\[distortion\] square_mm: required field is missing"),
    ({"distortion.square_mm": -25.0}, r"\[distortion\] square_mm: must be positive"),
    ({"camera.profile": "../calibration/demo-camera.profile.json"},
     r"\[camera\] profile: unknown key 'profile' \(a profile file makes a profile"),
    ({"vignette": {"images": ["flat_1.jpg"]}}, r"\[vignette\]: unknown table"),
]


@pytest.mark.parametrize("changes, pattern", BAD_PROFILES, ids=[_case_id(c) for c in BAD_PROFILES])
def test_malformed_profile(folder: Path, changes: dict[str, Any], pattern: str) -> None:
    path = write(folder, changed(PROFILE, changes), "cam.toml")
    with pytest.raises(InputError, match=pattern):
        load_profile_session(path)
