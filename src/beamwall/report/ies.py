"""IES LM-63-2002 photometric files, one per shot, for lighting-design software.

Layout written (field order of LM-63-2002 [LM63]_, as summarised in [ASH]_):

1. ``IESNA:LM-63-2002``
2. keyword lines ``[KEY] text``: ``[TEST] [TESTLAB] [ISSUEDATE] [MANUFAC] [LUMCAT]
   [LUMINAIRE] [LAMP]``, then ``[_BEAMWALL]`` and further user keywords (user keywords start
   with ``_``, from memory, to confirm) stating that the data were measured from photos of the
   beam on a wall, the zero region, and any filled directions; ``[MORE]`` continues a line.
3. ``TILT=NONE``
4. ``1 -1 1 n_vert n_horiz 1 2 0 0 0``: one lamp, absolute photometry (lumens per lamp -1),
   candela multiplier 1, photometric type C (1), units metres (2), a point source (the
   luminous opening is not measured, so its dimensions are 0).
5. ``1 1 0``: ballast factor 1, the 2002 "ballast-lamp photometric factor / future use" field 1,
   input watts 0 (not measured).
6. vertical angles, then horizontal angles, then one block of candela values per horizontal
   angle, vertical angles low to high. Lines are at most 132 characters, ASCII, CRLF ends.

Angles. The beam axis is vertical angle 0 (as if the torch shone straight down). The
horizontal angle C is our azimuth phi unchanged: C = 0 along the wall's +x (right, seen standing
at the torch), increasing towards +y (up). Seen from behind the torch, looking along the beam,
that is counter-clockwise, which is how Type C horizontal angles turn when a downlight is seen
from above (from memory, to confirm).

Vertical range. LM-63 Type C vertical angles run 0..90 deg here. The measured part ends at the
largest polar angle measured at *every* azimuth (the largest cone wholly inside the photo),
``theta_max``; a 0 cd angle one grid step beyond it and one at 90 deg follow, and a keyword line
says that the candela is 0 (not measured) beyond ``theta_max``. Inside that cone a direction
without a value (clipped, a masked pixel) is filled by linear interpolation along the polar
angle at its azimuth (or, for a whole missing azimuth, across the neighbouring azimuths), and a
keyword line gives their number; a negative value (noise after dark subtraction) is written as 0.
The vertical angle 0 is one direction for all azimuths: its value is the mean over azimuth.

Uncalibrated shots. Lighting software reads every LM-63 candela value as absolute when the
lumens per lamp are -1, so by default an uncalibrated shot gets **no** file (the functions
return ``None``). With ``relative=True`` a file is written whose values are scaled so that the
peak reads 1000, with a keyword line saying they are relative and how to scale them.

References
----------
.. [LM63] IESNA LM-63-2002, *IESNA Standard File Format for the Electronic Transfer of
   Photometric Data and Related Information*, Illuminating Engineering Society of North America.
.. [ASH] I. Ashdown, "Parsing the IESNA LM-63 Photometric Data File" (1998).
"""

from __future__ import annotations

import datetime as _dt
import re
import textwrap
import unicodedata
from os import PathLike
from pathlib import Path

import numpy as np

from beamwall import __version__
from beamwall.errors import InputError
from beamwall.results import Distribution, ShotResult

__all__ = ["ies_slug", "slug", "ies_text", "write_ies", "MAX_LINE_CHARS"]

#: Longest line written, characters (LM-63's limit [LM63]_).
MAX_LINE_CHARS: int = 132
_KEYWORD_LINE_CHARS = 80     # keyword lines kept shorter still, for old readers (no source)
_NUMBER_LINE_CHARS = 100
_RELATIVE_PEAK = 1000.0
_EOL = "\r\n"


def ies_slug(label: str) -> str:
    """Return the file-name stem for a shot's IES file: the label in lower-case ASCII words.

    Parameters
    ----------
    label : str
        The shot's label.

    Returns
    -------
    str
        Letters and digits joined by ``-``; ``"shot"`` when nothing is left.

    Examples
    --------
    >>> ies_slug("min zoom, high")
    'min-zoom-high'
    >>> ies_slug("Zoom ½ – Turbo!")
    'zoom-12-turbo'
    """
    text = unicodedata.normalize("NFKD", label).encode("ascii", "ignore").decode("ascii")
    text = re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-")
    return text or "shot"


#: Alias of :func:`ies_slug`, the name the command layer uses.
slug = ies_slug


def _ascii(text: str) -> str:
    text = unicodedata.normalize("NFKD", str(text)).encode("ascii", "replace").decode("ascii")
    return re.sub(r"[\x00-\x1f\x7f]+", " ", text).strip()


def _keyword_lines(key: str, text: str) -> list[str]:
    """``[KEY] text``, continued on ``[MORE]`` lines so each stays short."""
    text = _ascii(text) or "not stated"
    head = f"[{key}] "
    first_width = max(20, _KEYWORD_LINE_CHARS - len(head))
    more_width = _KEYWORD_LINE_CHARS - len("[MORE] ")
    chunks = textwrap.wrap(text, width=first_width, break_long_words=True) or [text]
    lines = [head + chunks[0]]
    rest = " ".join(chunks[1:])
    for chunk in textwrap.wrap(rest, width=more_width, break_long_words=True):
        lines.append("[MORE] " + chunk)
    return lines


def _number(value: float, *, significant: int = 5) -> str:
    """Format with ``significant`` digits (at most 3 decimals), never in exponent form."""
    value = float(value)
    if value == 0.0 or not np.isfinite(value):
        return "0"
    decimals = min(3, max(0, significant - 1 - int(np.floor(np.log10(abs(value))))))
    text = f"{value:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return text


def _angle(value: float) -> str:
    text = f"{round(float(value), 4):.4f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _number_lines(tokens: list[str]) -> list[str]:
    lines: list[str] = []
    current = ""
    for token in tokens:
        candidate = token if not current else current + " " + token
        if len(candidate) > _NUMBER_LINE_CHARS and current:
            lines.append(current)
            current = token
        else:
            current = candidate
    if current:
        lines.append(current)
    return lines


def _fill_nan(intensity: np.ndarray, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
    """Fill NaN along theta per azimuth, then across azimuth (circular) where a column is empty."""
    out = intensity.copy()
    for j in range(out.shape[1]):
        column = out[:, j]
        good = np.isfinite(column)
        if good.any() and not good.all():
            column[~good] = np.interp(theta_deg[~good], theta_deg[good], column[good])
    for i in range(out.shape[0]):
        row = out[i]
        good = np.isfinite(row)
        if good.any() and not good.all():
            row[~good] = np.interp(phi_deg[~good], phi_deg[good], row[good], period=360.0)
    return out


def _tabulate(dist: Distribution, *, symmetric: bool) -> dict[str, object]:
    """Vertical angles, horizontal angles and candela blocks (n_horiz, n_vert), plus counts."""
    theta = np.asarray(dist.theta_deg, dtype=float)
    phi = np.asarray(dist.phi_deg, dtype=float)
    intensity = np.asarray(dist.intensity, dtype=float)
    if theta.ndim != 1 or phi.ndim != 1 or intensity.shape != (theta.size, phi.size):
        raise InputError(
            f"intensity has shape {intensity.shape}, expected (n_theta, n_phi) = "
            f"({theta.size}, {phi.size})", field="distribution")
    if theta.size < 2 or phi.size < 1 or abs(theta[0]) > 1e-9 or np.any(np.diff(theta) <= 0):
        raise InputError("theta_deg must ascend from 0 with at least two angles",
                         field="distribution.theta_deg")
    finite = np.isfinite(intensity)
    has_any = finite.any(axis=0)
    if not has_any.any():
        raise InputError("no direction holds a value", field="distribution.intensity")
    last = np.array([np.flatnonzero(finite[:, j]).max() if has_any[j] else -1
                     for j in range(phi.size)])
    k_max = int(last[has_any].min())
    theta_in = theta[theta <= 90.0 + 1e-9][: k_max + 1]
    k_max = theta_in.size - 1
    if k_max < 1:
        raise InputError("fewer than two polar angles are measured at every azimuth",
                         field="distribution.intensity")
    block = intensity[: k_max + 1]
    n_missing = int(np.count_nonzero(~np.isfinite(block)))
    filled = _fill_nan(block, theta_in, phi)
    filled[0, :] = np.nanmean(block[0]) if np.isfinite(block[0]).any() else np.mean(filled[0])
    n_negative = int(np.count_nonzero(filled < 0))
    filled = np.clip(filled, 0.0, None)

    theta_max = float(theta_in[-1])
    step = float(theta_in[-1] - theta_in[-2])
    vertical = list(theta_in)
    if theta_max < 90.0:
        if theta_max + step < 90.0:
            vertical.append(theta_max + step)
        vertical.append(90.0)
    n_zero = len(vertical) - theta_in.size

    if symmetric:
        horizontal = np.array([0.0])
        blocks = np.nanmean(filled, axis=1)[None, :]
    else:
        c_step = 360.0 / phi.size
        horizontal_open = np.arange(phi.size) * c_step
        if np.allclose(horizontal_open, phi):
            grid = filled
        else:
            order = np.argsort(phi)
            grid = np.stack([np.interp(horizontal_open, phi[order], row[order], period=360.0)
                             for row in filled])
        horizontal = np.append(horizontal_open, 360.0)
        blocks = np.concatenate([grid, grid[:, :1]], axis=1).T   # (n_horiz, n_measured)
    blocks = np.concatenate([blocks, np.zeros((blocks.shape[0], n_zero))], axis=1)
    return {
        "vertical_deg": np.asarray(vertical),
        "horizontal_deg": horizontal,
        "candela": blocks,
        "theta_max_deg": theta_max,
        "n_missing": n_missing,
        "n_measured": int(block.size),
        "n_negative": n_negative,
    }


def ies_text(
    shot: ShotResult,
    *,
    issue_date: _dt.date | str | None = None,
    test_id: str | None = None,
    test_lab: str = "not stated",
    symmetric: bool = False,
    relative: bool = False,
    beamwall_version: str = __version__,
) -> str | None:
    """Return the IES LM-63-2002 text of one shot's intensity distribution.

    Parameters
    ----------
    shot : ShotResult
        The shot; its ``distribution`` (``unit`` ``"cd"`` when calibrated) is written.
    issue_date : datetime.date or str, optional
        For ``[ISSUEDATE]``, written ISO 8601 (``YYYY-MM-DD``). Default: today.
    test_id : str, optional
        For ``[TEST]``. Default: ``"beamwall <slug of the label>"``.
    test_lab : str, optional
        For ``[TESTLAB]``. Default ``"not stated"``.
    symmetric : bool, optional
        Write one horizontal angle (0 deg, rotational symmetry) holding the mean over azimuth,
        instead of the measured azimuths from 0 to 360 deg.
    relative : bool, optional
        For an uncalibrated shot: write values scaled to a peak of 1000 with a keyword line
        saying so, instead of returning ``None``. Ignored for a calibrated shot.
    beamwall_version : str, optional
        Version named in the ``[_BEAMWALL]`` line.

    Returns
    -------
    str or None
        The file's text (ASCII, CRLF line ends), or ``None`` when the shot has no distribution,
        or is uncalibrated and ``relative`` is false.

    Raises
    ------
    InputError
        When the distribution's arrays disagree in shape, or no polar angle beyond the axis is
        measured at every azimuth.

    Notes
    -----
    Layout, angle mapping and the treatment of unmeasured directions: see the module docstring
    and [LM63]_.

    Examples
    --------
    >>> import numpy as np
    >>> from beamwall.results import Distribution, ShotResult
    >>> theta = np.arange(0.0, 31.0, 1.0); phi = np.arange(0.0, 360.0, 90.0)
    >>> cd = np.repeat((5000.0 * np.exp(-0.5 * (theta / 8.0) ** 2))[:, None], 4, axis=1)
    >>> dist = Distribution(theta, phi, cd, "cd", 5000.0, np.full(4, 9.4), np.full(4, 17.2))
    >>> shot = ShotResult(label="narrow", zoom=None, mode=None, beam_angle_deg=18.8,
    ...     field_angle_deg=34.3, peak_intensity_cd=5000.0, throw_m=141.4, flux_lm=None,
    ...     flux_half_angle_deg=None, axis_mm=(0.0, 0.0), saturated_fraction=0.0,
    ...     relative_peak_intensity=1.0, relative_flux=None, distribution=dist)
    >>> lines = ies_text(shot, issue_date="2024-05-01").splitlines()
    >>> lines[0], lines[lines.index("TILT=NONE") + 1]
    ('IESNA:LM-63-2002', '1 -1 1 33 5 1 2 0 0 0')
    """
    dist = shot.distribution
    if dist is None:
        return None
    calibrated = dist.unit == "cd"
    if not calibrated and not relative:
        return None
    table = _tabulate(dist, symmetric=symmetric)
    candela = np.asarray(table["candela"], dtype=float)
    if not calibrated:
        peak = float(np.max(candela))
        candela = candela * (_RELATIVE_PEAK / peak) if peak > 0 else candela

    if issue_date is None:
        issue_date = _dt.date.today()
    date_text = issue_date.isoformat() if isinstance(issue_date, _dt.date) else str(issue_date)
    slug = ies_slug(shot.label)
    tags = ", ".join(f"{k} {v}" for k, v in (("zoom", shot.zoom), ("mode", shot.mode)) if v)
    luminaire = f"handheld torch, shot '{shot.label}'" + (f" ({tags})" if tags else "")
    how = (f"measured from photos of the beam on a matte wall with beamwall {beamwall_version}"
           + (f", torch {shot.distance_m:.3g} m from the wall" if shot.distance_m else "")
           + "; beam axis = vertical angle 0; horizontal angle = azimuth on the wall from +x"
           " (right, seen from the torch) towards +y (up)")
    figures = [f"beam angle {shot.beam_angle_deg:.1f} deg" if shot.beam_angle_deg else "",
               f"field angle {shot.field_angle_deg:.1f} deg" if shot.field_angle_deg else "",
               f"peak {shot.peak_intensity_cd:.0f} cd" if shot.peak_intensity_cd else ""]
    theta_max = float(table["theta_max_deg"])  # type: ignore[arg-type]
    lines = ["IESNA:LM-63-2002"]
    lines += _keyword_lines("TEST", test_id or f"beamwall {slug}")
    lines += _keyword_lines("TESTLAB", test_lab)
    lines += _keyword_lines("ISSUEDATE", date_text)
    lines += _keyword_lines("MANUFAC", "not stated")
    lines += _keyword_lines("LUMCAT", "not stated")
    lines += _keyword_lines("LUMINAIRE", luminaire)
    lines += _keyword_lines("LAMP", "not stated")
    lines += _keyword_lines("_BEAMWALL", how)
    if any(figures):
        lines += _keyword_lines("_BEAMWALL_FIGURES", "; ".join(f for f in figures if f))
    lines += _keyword_lines(
        "_BEAMWALL_BEYOND",
        f"candela is 0 (not measured) beyond vertical angle {_angle(theta_max)} deg, the"
        " largest angle measured at every horizontal angle")
    n_missing, n_negative = int(table["n_missing"]), int(table["n_negative"])  # type: ignore
    if n_missing or n_negative:
        lines += _keyword_lines(
            "_BEAMWALL_FILLED",
            f"{n_missing} of {table['n_measured']} directions within {_angle(theta_max)} deg had"
            " no value (clipped or masked) and were interpolated from neighbours; "
            f"{n_negative} negative values were set to 0")
    if symmetric:
        lines += _keyword_lines("_BEAMWALL_SYMMETRY",
                                "one horizontal angle: mean over all measured azimuths")
    if not calibrated:
        lines += _keyword_lines(
            "_BEAMWALL_RELATIVE",
            f"values are relative, not candela: scaled so the peak reads "
            f"{_RELATIVE_PEAK:.0f}; multiply by (peak intensity in cd)/{_RELATIVE_PEAK:.0f}")
    lines.append("TILT=NONE")
    vertical = np.asarray(table["vertical_deg"])
    horizontal = np.asarray(table["horizontal_deg"])
    lines.append(f"1 -1 1 {vertical.size} {horizontal.size} 1 2 0 0 0")
    lines.append("1 1 0")
    lines += _number_lines([_angle(v) for v in vertical])
    lines += _number_lines([_angle(h) for h in horizontal])
    for block in candela:
        lines += _number_lines([_number(v) for v in block])
    too_long = [line for line in lines if len(line) > MAX_LINE_CHARS]
    if too_long:  # cannot happen with the widths above; kept as a guard for edits
        raise InputError(f"line longer than {MAX_LINE_CHARS} characters: {too_long[0][:40]}...",
                         field="label")
    return _EOL.join(lines) + _EOL


def write_ies(
    shot: ShotResult,
    path: str | PathLike[str],
    *,
    issue_date: _dt.date | str | None = None,
    test_id: str | None = None,
    test_lab: str = "not stated",
    symmetric: bool = False,
    relative: bool = False,
    beamwall_version: str = __version__,
) -> Path | None:
    """Write one shot's IES LM-63-2002 file (see :func:`ies_text` for the arguments).

    Parameters
    ----------
    shot : ShotResult
        The shot.
    path : str or path-like
        The file to write (conventionally ``OUTDIR/<ies_slug(label)>.ies``).
    issue_date, test_id, test_lab, symmetric, relative, beamwall_version
        As for :func:`ies_text`.

    Returns
    -------
    pathlib.Path or None
        The path written, or ``None`` when nothing was written (no distribution, or an
        uncalibrated shot without ``relative=True``).
    """
    text = ies_text(shot, issue_date=issue_date, test_id=test_id, test_lab=test_lab,
                    symmetric=symmetric, relative=relative, beamwall_version=beamwall_version)
    if text is None:
        return None
    out = Path(path)
    with open(out, "w", encoding="ascii", newline="") as handle:
        handle.write(text)
    return out
