"""``figures.csv``: one row per shot, one column per figure, for spreadsheets.

The file follows RFC 4180: comma separated, CRLF line ends, a field holding a comma, a double
quote or a line break is enclosed in double quotes and its quotes are doubled (Python's
:mod:`csv` module with ``QUOTE_MINIMAL`` does exactly this). It is UTF-8 with a byte-order mark
so that spreadsheet programs that guess the encoding read non-ASCII labels right (common
practice, no source). A figure that was not measured (``None``, or not finite) is an empty cell.
Numbers are written with a ``.`` decimal point and up to 7 significant digits, never in
exponent form for the magnitudes that occur here.

References
----------
.. [RFC4180] Y. Shafranovich, *Common Format and MIME Type for Comma-Separated Values (CSV)
   Files*, IETF RFC 4180 (2005), section 2.
"""

from __future__ import annotations

import csv
import io
import math
from os import PathLike
from pathlib import Path
from typing import Any

from beamwall.results import SessionResult, ShotResult

__all__ = ["CSV_COLUMNS", "csv_rows", "write_csv"]

#: Column names of ``figures.csv``, in order; each name carries its unit.
CSV_COLUMNS: tuple[str, ...] = (
    "label",
    "zoom",
    "mode",
    "beam_angle_deg",
    "beam_angle_sigma_deg",
    "beam_angle_min_deg",
    "beam_angle_max_deg",
    "field_angle_deg",
    "field_angle_sigma_deg",
    "field_angle_min_deg",
    "field_angle_max_deg",
    "peak_intensity_cd",
    "peak_intensity_sigma_cd",
    "throw_m",
    "throw_sigma_m",
    "flux_lm",
    "flux_sigma_lm",
    "flux_half_angle_deg",
    "flux_total_max_lm",
    "relative_peak_intensity",
    "relative_flux",
    "axis_x_mm",
    "axis_y_mm",
    "distance_m",
    "saturated_fraction",
    "spectral_correction_factor",
    "warnings",
)


def _cell(value: Any) -> str:
    """Format one value for a cell: '' for None / non-finite, numbers without exponent."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            return ""
        text = f"{value:.7g}"
        if "e" in text:  # very large or very small: spell it out
            text = f"{value:.7f}".rstrip("0").rstrip(".")
        return text
    return str(value)


def _shot_row(shot: ShotResult) -> list[str]:
    values: dict[str, Any] = {name: getattr(shot, name, None) for name in CSV_COLUMNS}
    values["axis_x_mm"] = float(shot.axis_mm[0])
    values["axis_y_mm"] = float(shot.axis_mm[1])
    values["warnings"] = "; ".join(shot.warnings)
    for name in ("beam_angle_deg", "field_angle_deg", "saturated_fraction"):
        if values[name] is not None:
            values[name] = float(values[name])
    return [_cell(values[name]) for name in CSV_COLUMNS]


def csv_rows(session: SessionResult) -> list[list[str]]:
    """Return the table of ``figures.csv`` as strings: the header row, then one row per shot.

    Parameters
    ----------
    session : SessionResult
        The session's results.

    Returns
    -------
    list of list of str
        ``len(session.shots) + 1`` rows of ``len(CSV_COLUMNS)`` cells; ``""`` where a figure is
        ``None`` or not finite.

    Examples
    --------
    >>> from beamwall.results import SessionResult, ShotResult
    >>> shot = ShotResult(label="wide, low", zoom=None, mode="low", beam_angle_deg=40.0,
    ...     field_angle_deg=70.25, peak_intensity_cd=None, throw_m=None, flux_lm=None,
    ...     flux_half_angle_deg=None, axis_mm=(1.5, -2.0), saturated_fraction=0.0,
    ...     relative_peak_intensity=1.0, relative_flux=1.0)
    >>> rows = csv_rows(SessionResult(beamwall_version="0", calibrated=False, shots=(shot,)))
    >>> dict(zip(rows[0], rows[1]))["field_angle_deg"], dict(zip(rows[0], rows[1]))["throw_m"]
    ('70.25', '')
    """
    return [list(CSV_COLUMNS)] + [_shot_row(shot) for shot in session.shots]


def write_csv(session: SessionResult, path: str | PathLike[str]) -> Path:
    """Write ``figures.csv``: one row per shot, one column per figure, units in the headers.

    Parameters
    ----------
    session : SessionResult
        The session's results.
    path : str or path-like
        The file to write (overwritten if it exists; the caller decides whether it may be).

    Returns
    -------
    pathlib.Path
        The path written.

    Notes
    -----
    Quoting and line ends per [RFC4180]_; see the module docstring for the encoding.
    """
    buffer = io.StringIO(newline="")
    writer = csv.writer(buffer, dialect="excel", lineterminator="\r\n",
                        quoting=csv.QUOTE_MINIMAL)
    writer.writerows(csv_rows(session))
    out = Path(path)
    with open(out, "w", encoding="utf-8-sig", newline="") as handle:
        handle.write(buffer.getvalue())
    return out
