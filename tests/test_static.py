"""Static checks run as tests (as rawpy runs mypy in its suite): ruff and mypy are clean."""

from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _run(module: str, *args: str) -> subprocess.CompletedProcess[str]:
    return subprocess.run([sys.executable, "-m", module, *args], cwd=ROOT,
                          capture_output=True, text=True, timeout=600)


@pytest.mark.skipif(shutil.which("ruff") is None and not (ROOT / ".venv/bin/ruff").exists(),
                    reason="ruff not installed (pip install -e .[dev])")
def test_ruff_clean():
    res = _run("ruff", "check", "src", "tests")
    assert res.returncode == 0, res.stdout + res.stderr


def test_mypy_clean():
    pytest.importorskip("mypy", reason="mypy not installed (pip install -e .[dev])")
    res = _run("mypy", "src/beamwall")
    assert res.returncode == 0, res.stdout + res.stderr
