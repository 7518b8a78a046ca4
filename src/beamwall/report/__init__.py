"""Writers that turn result dataclasses into files for people and other programs.

This is the only package of beamwall that imports matplotlib (in :mod:`beamwall.report.html`).

- :func:`write_csv`: ``figures.csv``, one row per shot (:mod:`beamwall.report.csvfile`).
- :func:`write_ies`, :func:`ies_text`: one IES LM-63-2002 file per shot
  (:mod:`beamwall.report.ies`).
- :func:`write_html`: the self-contained ``report.html`` (:mod:`beamwall.report.html`, imported
  on first use so that CSV and IES writing never loads matplotlib).
"""

from __future__ import annotations

from typing import Any

from beamwall.report.csvfile import CSV_COLUMNS, csv_rows, write_csv
from beamwall.report.ies import ies_slug, ies_text, write_ies

__all__ = [
    "CSV_COLUMNS",
    "csv_rows",
    "write_csv",
    "ies_slug",
    "ies_text",
    "write_ies",
    "write_html",
]


def write_html(*args: Any, **kwargs: Any) -> Any:
    """Write the HTML report; see :func:`beamwall.report.html.write_html`."""
    from beamwall.report.html import write_html as _write_html

    return _write_html(*args, **kwargs)
