"""The rooms keep to their trades (STYLE.md, section 1): pure rooms import no file, print,
command-line or plotting machinery; only report/ imports matplotlib; only cli*.py print."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

SRC = Path(__file__).resolve().parents[1] / "src" / "beamwall"

PURE = ["linear", "wall", "distribution", "figures", "calibrate", "electrical", "compare",
        "synth", "synth_camera", "synth_setup", "uncertainty", "spectral", "camera_geometry",
        "markers", "preflight", "profile"]
FORBIDDEN_MODULES = {"click", "matplotlib", "PIL", "tifffile", "exifread", "rawpy"}
FORBIDDEN_CALLS = {"open", "print", "imread", "imwrite", "input"}


def _tree(name: str) -> ast.AST:
    return ast.parse((SRC / f"{name}.py").read_text(encoding="utf-8"))


@pytest.mark.parametrize("name", PURE)
def test_pure_room_has_no_io(name):
    tree = _tree(name)
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            mods = {a.name.split(".")[0] for a in node.names}
        elif isinstance(node, ast.ImportFrom) and node.module:
            mods = {node.module.split(".")[0]}
        else:
            mods = set()
        assert not (mods & FORBIDDEN_MODULES), f"{name}.py imports {mods & FORBIDDEN_MODULES}"
        if isinstance(node, ast.Call):
            f = node.func
            called = f.id if isinstance(f, ast.Name) else f.attr if isinstance(
                f, ast.Attribute) else None
            assert called not in FORBIDDEN_CALLS, f"{name}.py calls {called}()"


def test_only_report_imports_matplotlib():
    for path in SRC.rglob("*.py"):
        if "report" in path.parts:
            continue
        text = path.read_text(encoding="utf-8")
        assert "import matplotlib" not in text and "from matplotlib" not in text, path


def test_errors_hierarchy():
    from beamwall.errors import (
        BeamwallError,
        CalibrationError,
        GeometryError,
        ImageError,
        InputError,
    )

    for cls in (InputError, ImageError, GeometryError, CalibrationError):
        assert issubclass(cls, BeamwallError)
    assert issubclass(InputError, ValueError)
    e = InputError("must be positive, got -3.0", file="session.toml", field="[rig] distance_m")
    assert (e.file, e.field) == ("session.toml", "[rig] distance_m")
