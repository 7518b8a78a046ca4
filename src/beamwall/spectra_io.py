"""Read spectra and camera sensitivities from CSV files.

Two layouts, comma-separated, one row per wavelength:

* a spectrum: ``wavelength_nm,value`` (relative spectral power, any unit);
* a camera sensitivity: ``wavelength_nm,r,g,b`` (relative sensitivities of the linear r, g,
  b values the luminance weights apply to).

Rules (common practice, no source): UTF-8 text (a byte-order mark is accepted); blank lines
and lines starting with ``#`` are skipped; the first remaining line is a header when its first
cell is not a number, and it must then have the layout's number of columns; every other row
holds exactly that many finite numbers; values are >= 0; wavelengths strictly ascending (a
repeated wavelength is named as such); steps of at most ``MAX_STEP_NM``; the table covers at
least ``spectral.MIN_TABLE_RANGE_NM``. The first fault raises
:class:`beamwall.errors.InputError` naming the file and the line, e.g.
``led.csv: line 7: wavelength 455 nm repeats line 6``.

The table is then resampled onto the common grid by :mod:`beamwall.spectral` (linear
interpolation inside its range, zero outside it).
"""

from __future__ import annotations

import math
import os
from pathlib import Path

import numpy as np

from beamwall.errors import InputError
from beamwall.spectral import (
    MIN_TABLE_RANGE_NM,
    CameraSensitivity,
    Spectrum,
    camera_sensitivity_from_table,
    spectrum_from_table,
)

__all__ = ["MAX_STEP_NM", "read_table_csv", "read_spectrum_csv", "read_camera_sensitivity_csv"]

#: Largest step between two rows, nm: a coarser table misses an LED's blue peak (about 20 nm
#: wide; common practice, no source).
MAX_STEP_NM: float = 10.0


def read_table_csv(path: str | os.PathLike[str], *, columns: int,
                   names: tuple[str, ...]) -> tuple[np.ndarray, np.ndarray]:
    r"""Read a wavelength table: ``wavelength_nm`` and ``columns`` value columns.

    Parameters
    ----------
    path : str or path-like
    columns : int, keyword-only
        Value columns after the wavelength (1 for a spectrum, 3 for r, g, b).
    names : tuple of str, keyword-only
        The layout's column names, for messages, e.g. ``("wavelength_nm", "value")``.

    Returns
    -------
    wavelength_nm : ndarray, shape (n,)
    values : ndarray, shape (n, columns)

    Raises
    ------
    InputError
        Unreadable file, bad row, non-ascending or repeated wavelength, too coarse a step, too
        narrow a range; ``file`` is the path as given, ``field`` the line (``line 7``).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     f = pathlib.Path(tmp, "s.csv")
    ...     _ = f.write_text("wavelength_nm,value\n400,1\n400,2\n")
    ...     try:
    ...         read_table_csv(f, columns=1, names=("wavelength_nm", "value"))
    ...     except InputError as exc:
    ...         print(exc.field, "|", exc.message)
    line 3 | wavelength 400 nm repeats line 2
    """
    file = str(path)
    layout = ",".join(names)
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise InputError(f"cannot read ({exc.strerror or exc})", file=file) from None
    except UnicodeDecodeError:
        raise InputError("not UTF-8 text: expected a CSV file", file=file) from None

    rows: list[list[float]] = []
    lines: list[int] = []
    header_seen = False
    for number, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        cells = [c.strip() for c in line.split(",")]
        where = f"line {number}"
        if not rows and not header_seen and not _is_number(cells[0]):
            header_seen = True
            if len(cells) != columns + 1:
                raise InputError(f"header has {len(cells)} columns, expected {columns + 1} "
                                 f"({layout})", file=file, field=where)
            continue
        if len(cells) != columns + 1:
            raise InputError(f"expected {columns + 1} comma-separated numbers ({layout}), "
                             f"got {len(cells)} cells: {line!r}", file=file, field=where)
        values = []
        for name, cell in zip(names, cells, strict=True):
            if not _is_number(cell):
                raise InputError(f"{name}: not a number: {cell!r}", file=file, field=where)
            v = float(cell)
            if not math.isfinite(v):
                raise InputError(f"{name}: must be finite, got {cell!r}", file=file,
                                 field=where)
            values.append(v)
        if values[0] <= 0:
            raise InputError(f"wavelength_nm must be positive, got {values[0]:g}", file=file,
                             field=where)
        for name, v in zip(names[1:], values[1:], strict=True):
            if v < 0:
                raise InputError(f"{name} must not be negative, got {v:g}", file=file,
                                 field=where)
        if rows:
            prev = rows[-1][0]
            if values[0] == prev:
                raise InputError(f"wavelength {values[0]:g} nm repeats line {lines[-1]}",
                                 file=file, field=where)
            if values[0] < prev:
                raise InputError(f"wavelengths must ascend: {values[0]:g} nm after "
                                 f"{prev:g} nm on line {lines[-1]}", file=file, field=where)
            if values[0] - prev > MAX_STEP_NM:
                raise InputError(f"step of {values[0] - prev:g} nm from line {lines[-1]} is "
                                 f"coarser than {MAX_STEP_NM:g} nm", file=file, field=where)
        rows.append(values)
        lines.append(number)
    if len(rows) < 2:
        raise InputError(f"needs at least 2 rows of {layout}, got {len(rows)}", file=file)
    table = np.array(rows)
    lo, hi = MIN_TABLE_RANGE_NM
    if table[0, 0] > lo or table[-1, 0] < hi:
        raise InputError(
            f"covers {table[0, 0]:g} nm to {table[-1, 0]:g} nm (lines {lines[0]} to "
            f"{lines[-1]}); must cover at least {lo:g} nm to {hi:g} nm", file=file)
    return table[:, 0], table[:, 1:]


def _is_number(cell: str) -> bool:
    try:
        float(cell)
    except ValueError:
        return False
    return True


def read_spectrum_csv(path: str | os.PathLike[str]) -> Spectrum:
    r"""Read a relative spectrum (``wavelength_nm,value``) onto the common grid.

    Parameters
    ----------
    path : str or path-like

    Returns
    -------
    Spectrum
        Described as ``"spectrum from <file name>"``; zero outside the table's range.

    Raises
    ------
    InputError
        As :func:`read_table_csv`; also a table of zeros only.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     f = pathlib.Path(tmp, "lamp.csv")
    ...     _ = f.write_text("wavelength_nm,value\n" + "\n".join(
    ...         f"{w},{w / 100}" for w in range(380, 781, 5)))
    ...     sd = read_spectrum_csv(f)
    >>> sd.description, float(sd.values[600 - 380])
    ('spectrum from lamp.csv', 6.0)
    """
    wl, v = read_table_csv(path, columns=1, names=("wavelength_nm", "value"))
    if not (v > 0).any():
        raise InputError("all values are zero", file=str(path))
    return spectrum_from_table(wl, v[:, 0], description=f"spectrum from {Path(path).name}")


def read_camera_sensitivity_csv(path: str | os.PathLike[str]) -> CameraSensitivity:
    """Read a camera's r, g, b sensitivities (``wavelength_nm,r,g,b``) onto the common grid.

    Parameters
    ----------
    path : str or path-like

    Returns
    -------
    CameraSensitivity
        Described as ``"camera sensitivity from <file name>"``; zero outside the table.

    Raises
    ------
    InputError
        As :func:`read_table_csv`; also a channel that is zero everywhere.
    """
    wl, rgb = read_table_csv(path, columns=3, names=("wavelength_nm", "r", "g", "b"))
    for c, name in enumerate("rgb"):
        if not (rgb[:, c] > 0).any():
            raise InputError(f"channel {name} is zero everywhere", file=str(path))
    return camera_sensitivity_from_table(
        wl, rgb, description=f"camera sensitivity from {Path(path).name}")
