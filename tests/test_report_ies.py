"""IES LM-63-2002 files: read back by an independent reader, and checked field by field.

The independent reader is ``eulumdat-ies`` (PyPI, MIT licence; imports as ``eulumdat_ies``), a
Type C LM-63-2002 parser written by others. The structural check below follows the field order
of LM-63-2002 as summarised in I. Ashdown, "Parsing the IESNA LM-63 Photometric Data File"
(1998): version line, keyword lines, TILT line, ten numbers, three numbers, vertical angles,
horizontal angles, candela values per horizontal angle.
"""

from __future__ import annotations

import re
import warnings

import numpy as np
import pytest
from _report_fixtures import gaussian_shot

from beamwall.report.ies import MAX_LINE_CHARS, ies_slug, ies_text, write_ies

REQUIRED_KEYWORDS = ("TEST", "TESTLAB", "ISSUEDATE", "MANUFAC")   # LM-63-2019 required set


def parse_structure(text: str) -> dict:
    """Our own strict reader of the layout (field order per LM-63-2002, see module docstring)."""
    lines = text.split("\r\n")
    assert lines[-1] == "", "file ends with CRLF"
    lines = lines[:-1]
    if lines[0] != "IESNA:LM-63-2002":
        raise ValueError("version line")
    keywords: dict[str, list[str]] = {}
    k = 1
    while not lines[k].startswith("TILT="):
        m = re.fullmatch(r"\[([A-Z0-9_]+)\] (.*)", lines[k])
        if not m:
            raise ValueError(f"keyword line {k}: {lines[k]!r}")
        keywords.setdefault(m.group(1), []).append(m.group(2))
        k += 1
    if lines[k] != "TILT=NONE":
        raise ValueError("TILT")
    tokens = " ".join(lines[k + 1:]).split()
    numbers = [float(t) for t in tokens]
    head, second = numbers[:10], numbers[10:13]
    n_v, n_h = int(head[3]), int(head[4])
    rest = numbers[13:]
    if len(rest) != n_v + n_h + n_v * n_h:
        raise ValueError(f"{len(rest)} values after the header, expected {n_v + n_h + n_v * n_h}")
    return {"lines": lines, "keywords": keywords, "head": head, "second": second,
            "vertical": np.array(rest[:n_v]), "horizontal": np.array(rest[n_v:n_v + n_h]),
            "candela": np.array(rest[n_v + n_h:]).reshape(n_h, n_v)}


def read_independent(path):
    from eulumdat_ies import ies_to_ldt
    with warnings.catch_warnings():
        # the reader warns that absolute photometry (lumens -1) cannot be scaled to cd/klm
        warnings.simplefilter("ignore", UserWarning)
        return ies_to_ldt(path)


@pytest.fixture
def shot():
    # an elliptical Gaussian beam whose photo ends 1.1 m right of the axis at 3 m (20.1 deg)
    return gaussian_shot("min zoom, high", sigma_deg=6.0, ellipticity=1.4, peak=8000.0,
                         wall_half_mm=1100.0, theta_max_deg=40.0, nan_holes=True)


def test_structure_and_required_fields(shot):
    text = ies_text(shot, issue_date="2024-05-01")
    assert text.isascii()
    assert max(len(line) for line in text.split("\r\n")) <= MAX_LINE_CHARS   # LM-63 limit
    s = parse_structure(text)
    for key in REQUIRED_KEYWORDS + ("LUMCAT", "LUMINAIRE", "LAMP", "_BEAMWALL"):
        assert key in s["keywords"], key
    assert s["keywords"]["MANUFAC"] == ["not stated"]
    assert s["keywords"]["ISSUEDATE"] == ["2024-05-01"]
    assert "photos of the beam on a matte wall" in s["keywords"]["_BEAMWALL"][0]
    assert "candela is 0" in s["keywords"]["_BEAMWALL_BEYOND"][0]
    assert "_BEAMWALL_FILLED" in s["keywords"]     # the two NaN holes were filled, and said so
    # first numeric line: 1 lamp, absolute (-1), multiplier 1, type C (1), metres (2)
    head = s["head"]
    assert head[0] == 1 and head[1] == -1 and head[2] == 1 and head[5] == 1 and head[6] == 2
    v, h = s["vertical"], s["horizontal"]
    assert v[0] == 0 and v[-1] == 90 and np.all(np.diff(v) > 0)
    assert h[0] == 0 and h[-1] == 360 and np.all(np.diff(h) > 0)    # no symmetry: 0..360
    # zero beyond the last measured angle (the inscribed cone: atan(1100/3000) = 20.14 deg)
    theta_max = np.degrees(np.arctan(1100.0 / 3000.0))
    measured = v <= theta_max + 1e-9
    assert v[measured][-1] == pytest.approx(20.0)
    assert np.all(s["candela"][:, ~measured] == 0)
    assert np.all(s["candela"] >= 0)
    # vertical angle 0 is one direction: the same value in every plane
    assert np.ptp(s["candela"][:, 0]) == 0


def test_independent_reader_round_trip(shot, tmp_path):
    path = write_ies(shot, tmp_path / f"{ies_slug(shot.label)}.ies", issue_date="2024-05-01")
    assert path.name == "min-zoom-high.ies"
    ldt = read_independent(path)
    dist = shot.distribution
    g = np.array(ldt.header.g_angles)
    c = np.array(ldt.header.c_angles)     # the reader drops the repeated 360 deg plane
    np.testing.assert_allclose(c, dist.phi_deg)
    n = int(np.sum(dist.theta_deg <= 20.0 + 1e-9))
    np.testing.assert_allclose(g[:n], dist.theta_deg[:n])
    assert g[-1] == 90.0
    table = np.array(ldt.intensities)      # (n_c, n_g), candela as written (lumens -1)
    expected = dist.intensity[:n].T
    ok = np.isfinite(expected)
    ok[:, 0] = False                       # theta 0: the mean over azimuth, checked below
    # values are written with 5 significant digits (and at most 3 decimals)
    np.testing.assert_allclose(table[:, :n][ok], expected[ok], rtol=1e-4, atol=1e-3)
    assert table[0, 0] == pytest.approx(8000.0, rel=1e-6)
    assert np.all(table[:, n:] == 0)
    assert ldt.header.company == "not stated"


def test_filled_holes_are_interpolated_from_neighbours(shot):
    s = parse_structure(ies_text(shot, issue_date="2024-05-01"))
    dist = shot.distribution
    # hole at theta index 3, phi index 7: linear interpolation along theta at that azimuth
    expected = 0.5 * (dist.intensity[2, 7] + dist.intensity[4, 7])
    assert s["candela"][7, 3] == pytest.approx(expected, rel=1e-4)


def test_symmetric_option_writes_one_plane(tmp_path):
    shot = gaussian_shot("sym", sigma_deg=6.0, ellipticity=1.4, wall_half_mm=1100.0)
    text = ies_text(shot, issue_date="2024-05-01", symmetric=True)
    s = parse_structure(text)
    assert s["horizontal"].tolist() == [0.0]        # last horizontal angle 0: axial symmetry
    n = int(np.sum(shot.distribution.theta_deg <= 20.0 + 1e-9))
    mean = np.nanmean(shot.distribution.intensity[:n], axis=1)
    np.testing.assert_allclose(s["candela"][0, 1:n], mean[1:], rtol=1e-3)
    path = tmp_path / "sym.ies"
    path.write_text(text, encoding="ascii", newline="")
    ldt = read_independent(path)
    assert len(ldt.intensities) == 1


def test_uncalibrated_gives_no_file_unless_relative(tmp_path):
    shot = gaussian_shot("rel", calibrated=False, peak=3.5)
    assert ies_text(shot) is None
    assert write_ies(shot, tmp_path / "rel.ies") is None
    assert not (tmp_path / "rel.ies").exists()
    s = parse_structure(ies_text(shot, issue_date="2024-05-01", relative=True))
    assert "_BEAMWALL_RELATIVE" in s["keywords"]
    assert s["candela"].max() == pytest.approx(1000.0)


def test_long_and_odd_labels_stay_ascii_and_short():
    shot = gaussian_shot("Zoom ½ — " + "very long label " * 12 + "]\n[x")
    text = ies_text(shot, issue_date="2024-05-01")
    assert text.isascii()
    assert all(len(line) <= MAX_LINE_CHARS for line in text.split("\r\n"))
    parse_structure(text)


def test_bad_shapes_raise():
    from dataclasses import replace

    from beamwall.errors import InputError
    shot = gaussian_shot("bad")
    broken = replace(shot.distribution, intensity=shot.distribution.intensity[:, :3])
    with pytest.raises(InputError, match="expected"):
        ies_text(replace(shot, distribution=broken))
    assert ies_text(replace(shot, distribution=None)) is None
