"""figures.csv: read back with the csv module as a spreadsheet would (RFC 4180 quoting)."""

from __future__ import annotations

import csv
import math

from _report_fixtures import gaussian_shot, session_of, zoom_session

from beamwall.report.csvfile import CSV_COLUMNS, write_csv


def _read(path):
    with open(path, encoding="utf-8-sig", newline="") as handle:
        return list(csv.reader(handle))


def test_one_row_per_shot_with_unit_headers(tmp_path):
    session = zoom_session(4)
    rows = _read(write_csv(session, tmp_path / "figures.csv"))
    assert rows[0] == list(CSV_COLUMNS)
    assert len(rows) == 1 + 4
    header = rows[0]
    for name in header[3:-1]:   # every figure column names its unit (or is a ratio/fraction)
        assert name.endswith(("_deg", "_cd", "_m", "_lm", "_mm", "_intensity", "_flux",
                              "_fraction", "_factor")), name
    record = dict(zip(header, rows[1]))
    shot = session.shots[0]
    assert math.isclose(float(record["beam_angle_deg"]), shot.beam_angle_deg, rel_tol=1e-6)
    assert math.isclose(float(record["peak_intensity_cd"]), shot.peak_intensity_cd, rel_tol=1e-6)
    assert record["label"] == shot.label


def test_commas_quotes_and_newlines_survive_quoting(tmp_path):
    label = 'zoom "max", turbo\nsecond line'
    session = session_of([gaussian_shot(label)])
    path = write_csv(session, tmp_path / "figures.csv")
    raw = path.read_bytes()
    # RFC 4180 section 2: CRLF line ends; a field with a comma/quote/line break is quoted and
    # its quotes doubled.
    assert raw.startswith(b"\xef\xbb\xbf")
    assert b'"zoom ""max"", turbo\nsecond line"' in raw
    assert raw.endswith(b"\r\n")
    rows = _read(path)
    assert rows[1][0] == label
    assert len(rows) == 2 and all(len(r) == len(CSV_COLUMNS) for r in rows)


def test_none_is_an_empty_cell(tmp_path):
    session = session_of([gaussian_shot("rel", calibrated=False)], calibrated=False)
    record = dict(zip(*_read(write_csv(session, tmp_path / "f.csv"))))
    assert record["peak_intensity_cd"] == "" and record["throw_m"] == ""
    assert record["flux_lm"] == "" and record["field_angle_sigma_deg"] == ""
    assert float(record["relative_peak_intensity"]) == 1.0
