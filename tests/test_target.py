"""Printable marker sheets: the printed marker is found by OpenCV's ArUco detector with its
id, and it measures its stated size against the page's own scale bar.

Outside references: OpenCV's ``cv2.aruco.ArucoDetector`` (DICT_4X4_50) reads the marker
back; the paper sizes are ISO 216's A4 (210 x 297 mm) and US Letter (215.9 x 279.4 mm).
Tolerance: the marker's side within 0.5 mm (one 150 dpi pixel is 0.17 mm).
"""

from __future__ import annotations

import shutil
import subprocess

import cv2
import numpy as np
import pytest
from click.testing import CliRunner

from beamwall.cli_target import check_ids, target
from beamwall.errors import InputError
from beamwall.report.target import write_target

DPI = 150


def _detect(path):
    grey = cv2.imread(str(path), cv2.IMREAD_GRAYSCALE)
    det = cv2.aruco.ArucoDetector(cv2.aruco.getPredefinedDictionary(cv2.aruco.DICT_4X4_50))
    corners, ids, _ = det.detectMarkers(grey)
    return grey, corners, ids


def _longest_black_run_px(grey, rows):
    best = 0
    for r in rows:
        dark = grey[r] < 100
        run = n = 0
        for v in dark:
            n = n + 1 if v else 0
            run = max(run, n)
        best = max(best, run)
    return best


def test_png_marker_id_and_size_against_scale_bar(tmp_path):
    out = write_target(tmp_path / "t.png", ids=[7], marker_size_mm=120.0, dpi=DPI)
    assert out == (tmp_path / "t.png",)
    grey, corners, ids = _detect(out[0])
    # A4 at 150 dpi: 210 mm x 297 mm (ISO 216) -> 1240 x 1753.9 px.
    assert abs(grey.shape[0] - 297 / 25.4 * DPI) <= 1
    assert abs(grey.shape[1] - 210 / 25.4 * DPI) <= 1
    assert ids is not None and ids.ravel().tolist() == [7]
    c = corners[0].reshape(4, 2)
    side_px = float(np.mean(np.hypot(*(np.roll(c, -1, axis=0) - c).T)))
    # The scale bar: the longest dark horizontal run below the marker, 100 mm long.
    below = range(int(c[:, 1].max()) + 5, grey.shape[0])
    bar_px = _longest_black_run_px(grey, below)
    assert abs(bar_px - 100 / 25.4 * DPI) <= 2
    assert abs(side_px / bar_px * 100.0 - 120.0) < 0.5
    # The centre of the detected square is the page's centre line (the cross).
    assert abs(c[:, 0].mean() - (grey.shape[1] - 1) / 2) < 1.0


def test_png_one_file_per_id_letter(tmp_path):
    out = write_target(tmp_path / "s.png", ids=[0, 3], marker_size_mm=150.0, paper="Letter",
                       dpi=100)
    assert [p.name for p in out] == ["s-0.png", "s-3.png"]
    for p, want in zip(out, (0, 3)):
        grey, _, ids = _detect(p)
        assert ids.ravel().tolist() == [want]
        assert grey.shape == (round(11 * 100), round(8.5 * 100))   # US Letter 8.5 x 11 in


@pytest.mark.skipif(shutil.which("pdftoppm") is None, reason="poppler-utils not installed")
def test_pdf_pages_render_and_detect(tmp_path):
    pdf = tmp_path / "t.pdf"
    write_target(pdf, ids=[1, 2], marker_size_mm=150.0)
    assert pdf.read_bytes()[:5] == b"%PDF-"
    subprocess.run(["pdftoppm", "-r", "100", "-png", "-gray", str(pdf), str(tmp_path / "p")],
                   check=True)
    pages = sorted(tmp_path.glob("p-*.png"))
    assert len(pages) == 2
    for page, want in zip(pages, (1, 2)):
        grey, corners, ids = _detect(page)
        assert ids.ravel().tolist() == [want]
        c = corners[0].reshape(4, 2)
        side_mm = float(np.mean(np.hypot(*(np.roll(c, -1, axis=0) - c).T))) * 25.4 / 100
        assert abs(side_mm - 150.0) < 1.0


def test_cli_target_refuses_overwrite_and_bad_input(tmp_path):
    runner = CliRunner()
    out = tmp_path / "m.pdf"
    r = runner.invoke(target, ["-o", str(out), "--ids", "4"])
    assert r.exit_code == 0 and out.exists()
    r = runner.invoke(target, ["-o", str(out), "--ids", "4"])
    assert r.exit_code == 2 and "--force" in r.output
    assert runner.invoke(target, ["-o", str(out), "--ids", "4", "--force"]).exit_code == 0
    r = runner.invoke(target, ["-o", str(tmp_path / "x.pdf"), "--marker-mm", "250"])
    assert r.exit_code == 2 and "at most 170 mm on A4" in r.output
    r = runner.invoke(target, ["-o", str(tmp_path / "x.svg")])
    assert r.exit_code == 2 and ".pdf or .png" in r.output


def test_ids_parsing():
    assert check_ids("0-3") == (0, 1, 2, 3)
    with pytest.raises(InputError, match="0 to 49"):
        check_ids("48-50")
    with pytest.raises(InputError, match="distinct"):
        check_ids("1,1")
    with pytest.raises(InputError, match="must look like"):
        check_ids("a")
