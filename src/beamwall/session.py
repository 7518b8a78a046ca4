"""Read session, calibration-session and camera-profile TOML files into frozen dataclasses.

The loaders check every field of the contract (``interface.md``: "The session file", "The
calibration session file", "The camera profile file") and raise
:class:`beamwall.errors.InputError` on the first fault, with a one-line message naming the
file and the field::

    session.toml: [rig] distance_m: must be positive, got -3.0

They read no image: a referenced file (image, dark frame, setup image, calibration, profile,
CSV) is only checked to exist. Paths inside a file are relative to that file's folder and are
returned absolute (resolved).

How fields are spelled in messages
----------------------------------
Fields are written as they appear in the file, so the user can find them:

- a key of a table: ``[rig] distance_m``, ``[camera] encoding``, ``[reference] intensity_cd``;
- a top-level key or table: ``title``, ``[rig]``, ``[[shot]]``;
- an element of an array, by its 0-based index: ``[wall] points[2]``,
  ``[wall] points[2][1]``, ``[electrical] efficacy_lm_per_w[0]``;
- an entry of an inline table, by its key in TOML's quoting: ``[wall] markers_mm."3"``;
- a shot, by its position among the ``[[shot]]`` tables counted from 1 as a reader counts
  them, and its label once the label is known: ``[[shot]] 2 ("min zoom, high") images[0]``,
  ``[[shot]] 2 label``; its sub-table: ``[[shot]] 2 ("low") [shot.electrical] led_amps``.

Decisions beyond the written contract
-------------------------------------
- Unknown keys and tables are errors everywhere (a misspelt key must not be ignored); the
  message lists the expected keys and suggests the nearest one.
- Numbers are TOML integers or floats, never booleans or strings, and must be finite. Distances,
  exposure times, f-numbers, ISO speeds, sizes, resistances, voltages, currents, intensities,
  illuminances and claims must be positive; standard uncertainties (``*_sigma_*``) may be zero
  but not negative.
- ``images`` may be one string or an array of strings; ``dark`` likewise, with one file for all
  images or one per image.
- A shot may not give both ``exposure_s`` and ``exposures_s`` (ambiguous for its first image).
- ``[wall]`` takes either ``points`` or ``setup_image`` with ``marker_size_mm`` and
  ``markers_mm``, never both. At least four points, each ``[pixel_x, pixel_y, wall_x_mm,
  wall_y_mm]``; no two with the same pixel or the same wall position (whether three lie on a
  line is judged by the wall fit, with its tolerance). Marker ids are the keys of
  ``markers_mm``: integers 0 to 49 (OpenCV's ``DICT_4X4_50`` holds 50 markers [OCV]); at least
  three markers (the pre-flight check needs three found), no two at the same wall position.
- ``[camera]``: ``encoding`` is ``"srgb"`` or ``"linear"``; ``black_level >= 0``,
  ``white_level > 0`` and, when both are given, ``black_level < white_level`` (defaults are
  applied by the image loader, not here).
- Colour of a source: at most one of ``source_cct_k``, ``source_spectrum_csv`` and
  ``source_cie_illuminant`` (``cct_k`` / ``spectrum_csv`` for a reference); a colour
  temperature lies within 1000 K to 25000 K (a plausible range for lamps and daylight, common
  practice, no source). A CIE illuminant name is kept as a string; whether colour-science
  knows it is checked where the spectrum is built.
- ``[electrical]``: ``efficacy_lm_per_w`` is ``[low, high]`` with ``0 < low <= high <= 683``
  (683 lm/W is the largest luminous efficacy any radiation has [SI]); ``pwm_duty`` in
  ``(0, 1]``. The current is ``led_amps``, or ``sense_volts`` with ``sense_ohms`` (I = V / R);
  giving both forms is ambiguous and an error, in one table or after merging. A shot's
  ``[shot.electrical]`` is merged over the session's ``[electrical]`` key by key into
  :attr:`ShotSpec.electrical`; every merged table must then give ``led_volts`` and a complete
  current. The session's own table is kept as written in :attr:`Session.electrical` and may be
  partial when every shot's table completes it.
- ``[reference]``: either the intensity form (``intensity_cd``, ``distance_m`` and ``axis_mm``
  all required, ``intensity_sigma_cd`` and ``distance_sigma_m`` optional) or the illuminance
  form (``illuminance_lx`` and ``at_mm`` required, ``illuminance_sigma_lx`` optional), never
  keys of both. ``axis_mm`` has no default: the wall origin is wherever the user put it, so
  guessing would silently bias the calibration. A calibration session's ``[wall]`` may not
  carry ``axis_mm`` (the lamp's axis is ``[reference] axis_mm``). A reference may carry its own
  ``exposures_s`` or ``exposure_s``, ``f_number``, ``iso``, as a shot does.
- Shot labels are non-blank and unique, also when compared without case and with runs of
  white space collapsed (they name output files).
- Profile file: ``[response]`` needs at least two images (a bracket) and may give
  ``exposures_s``; ``[flat_field]`` and ``[distortion]`` need at least one image;
  ``[distortion]`` needs ``inner_corners = [columns, rows]``, integers >= 2, and ``square_mm``;
  ``[camera] profile`` is not allowed there; at least one of the three tables must be given.

References
----------
.. [SI] BIPM, *The International System of Units*, 9th edition (2019), section 2.3.1: the
   luminous efficacy of 540 THz radiation is exactly 683 lm/W, the maximum of V(lambda).
.. [OCV] OpenCV documentation, ``cv::aruco::PredefinedDictionaryType``: ``DICT_4X4_50``,
   4x4 bit markers, 50 markers (ids 0 to 49).
"""

from __future__ import annotations

import datetime
import difflib
import json
import math
import os
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any, cast

from beamwall.constants import MAX_LUMINOUS_EFFICACY_LM_PER_W
from beamwall.errors import InputError

__all__ = [
    "Rig",
    "WallSpec",
    "CameraSpec",
    "ElectricalSpec",
    "ShotSpec",
    "Session",
    "Reference",
    "CalibrationSession",
    "ProfileSession",
    "load_session",
    "load_calibration_session",
    "load_profile_session",
    "shot_field",
    "ENCODINGS",
    "CCT_RANGE_K",
    "ARUCO_4X4_50_IDS",
]

#: Valid values of ``[camera] encoding``.
ENCODINGS: tuple[str, ...] = ("srgb", "linear")

#: Accepted colour temperatures, K, inclusive (plausible lamps and daylight; common practice,
#: no source).
CCT_RANGE_K: tuple[float, float] = (1000.0, 25000.0)

#: Number of markers in OpenCV's 4x4_50 ArUco dictionary; ids run from 0 to this minus 1 [OCV].
ARUCO_4X4_50_IDS: int = 50

#: Fewest markers a marker-based wall lists (the pre-flight check needs three found).
MIN_MARKERS: int = 3

#: Fewest point correspondences a homography needs.
MIN_POINTS: int = 4


# --------------------------------------------------------------------------------------------
# Dataclasses
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Rig:
    """The torch's distance to the wall.

    Attributes
    ----------
    distance_m : float
        Torch front lens to the wall along the beam axis, m, > 0.
    distance_sigma_m : float or None
        Its standard uncertainty, m, >= 0.
    """

    distance_m: float
    distance_sigma_m: float | None = None


@dataclass(frozen=True)
class WallSpec:
    """The pixel-to-wall mapping: point pairs, or fiducial markers on a setup photo.

    Attributes
    ----------
    points : tuple of (pixel_x, pixel_y, wall_x_mm, wall_y_mm) or None
        At least four correspondences (px, y down; mm, y up). None when markers are used.
    setup_image : Path or None
        Absolute path of the photo of the markers.
    marker_size_mm : float or None
        Side of each marker's black square, mm, > 0.
    markers_mm : dict of int to (x_mm, y_mm), or None
        Wall position of each marker's centre by its id (0 to 49).
    points_sigma_px : float or None
        Standard uncertainty of each pixel coordinate, px, >= 0.
    axis_mm : (x_mm, y_mm) or None
        Where the beam axis meets the wall; None: found from the beam.
    """

    # Each point: (pixel_x, pixel_y, wall_x_mm, wall_y_mm). None when markers are used.
    points: tuple[tuple[float, float, float, float], ...] | None = None
    setup_image: Path | None = None            # absolute path
    marker_size_mm: float | None = None
    markers_mm: dict[int, tuple[float, float]] | None = None
    points_sigma_px: float | None = None
    points_sigma_mm: float | None = None         # extension: tape uncertainty of wall positions
    axis_mm: tuple[float, float] | None = None


@dataclass(frozen=True)
class CameraSpec:
    """Camera defaults for images without metadata, and processing settings.

    Attributes
    ----------
    exposure_s, f_number, iso : float or None
        Defaults under EXIF, each > 0.
    encoding : {"srgb", "linear"} or None
        None: decided per file by the image loader.
    black_level, white_level : float or None
        Linear files' black and clipping values (>= 0, > 0, black < white when both given).
    focal_length_px : float or None
        The lens's focal length, px, > 0.
    profile : Path or None
        Absolute path of a camera profile.
    """

    exposure_s: float | None = None
    f_number: float | None = None
    iso: float | None = None
    encoding: str | None = None                # "srgb", "linear" or None (decided per file)
    black_level: float | None = None
    white_level: float | None = None
    focal_length_px: float | None = None
    profile: Path | None = None


@dataclass(frozen=True)
class ElectricalSpec:
    """An electrical estimate's inputs (any may be None in a session's partial table).

    Attributes
    ----------
    led_volts : float or None
        Forward voltage across the LED, V, > 0.
    sense_volts, sense_ohms : float or None
        Voltage across a sense resistor, V, and its resistance, ohm, both > 0.
    led_amps : float or None
        The LED current, A, > 0 (exclusive with the sense pair).
    efficacy_lm_per_w : (low, high) or None
        Plausible efficacy range, lm/W, 0 < low <= high <= 683.
    pwm_duty : float or None
        Duty cycle of a pulse-width-modulated mode, in (0, 1]; None means 1.
    """

    led_volts: float | None = None
    sense_volts: float | None = None
    sense_ohms: float | None = None
    led_amps: float | None = None
    efficacy_lm_per_w: tuple[float, float] | None = None
    pwm_duty: float | None = None


@dataclass(frozen=True)
class ShotSpec:
    """One shot: a photo (or an exposure bracket) of one torch setting.

    Attributes
    ----------
    label : str
        Non-blank, unique within the session.
    images : tuple of Path
        Absolute paths, at least one.
    darks : tuple of Path
        () none; one for all images; or one per image.
    exposures_s : tuple of float or None
        Per-image exposure times, s, one per image.
    number : int
        Position among the file's ``[[shot]]`` tables, from 1 (for messages, see
        :func:`shot_field`).

    Other attributes are as in the session file; ``electrical`` is the shot's own
    ``[shot.electrical]`` merged over the session's ``[electrical]``, or None when neither
    exists.
    """

    label: str
    images: tuple[Path, ...]                   # absolute paths, at least one
    darks: tuple[Path, ...] = ()               # () none; 1 for all images; or len(images)
    exposures_s: tuple[float, ...] | None = None
    exposure_s: float | None = None
    f_number: float | None = None
    iso: float | None = None
    zoom: str | None = None
    mode: str | None = None
    source_cct_k: float | None = None
    source_spectrum_csv: Path | None = None
    source_cie_illuminant: str | None = None
    claimed_lm: float | None = None
    claimed_cd: float | None = None
    claimed_throw_m: float | None = None
    electrical: ElectricalSpec | None = None   # the shot's own table merged over the session's
    number: int = 0


@dataclass(frozen=True)
class Session:
    """A measurement session as read from its TOML file (``path`` absolute)."""

    path: Path
    rig: Rig
    wall: WallSpec
    camera: CameraSpec
    shots: tuple[ShotSpec, ...]
    title: str | None = None
    calibration_file: Path | None = None
    camera_sensitivity_csv: Path | None = None
    electrical: ElectricalSpec | None = None


@dataclass(frozen=True)
class Reference:
    """A calibration reference: a lamp of known intensity, or a lux-meter reading.

    Exactly one form is set: (``intensity_cd``, ``distance_m``, ``axis_mm``) or
    (``illuminance_lx``, ``at_mm``).
    """

    images: tuple[Path, ...]
    darks: tuple[Path, ...] = ()
    exposures_s: tuple[float, ...] | None = None
    intensity_cd: float | None = None
    intensity_sigma_cd: float | None = None
    distance_m: float | None = None
    distance_sigma_m: float | None = None
    axis_mm: tuple[float, float] | None = None
    illuminance_lx: float | None = None
    illuminance_sigma_lx: float | None = None
    at_mm: tuple[float, float] | None = None
    cct_k: float | None = None
    spectrum_csv: Path | None = None
    exposure_s: float | None = None
    f_number: float | None = None
    iso: float | None = None


@dataclass(frozen=True)
class CalibrationSession:
    """A calibration session as read from its TOML file (``path`` absolute)."""

    path: Path
    wall: WallSpec
    camera: CameraSpec
    reference: Reference
    title: str | None = None
    camera_sensitivity_csv: Path | None = None


@dataclass(frozen=True)
class ProfileSession:
    """A camera-profile description as read from its TOML file (``path`` absolute).

    Attributes
    ----------
    camera : CameraSpec
        As in a session (never with a ``profile``).
    response_images : tuple of Path
        An exposure bracket of a static, evenly lit scene; () or at least two.
    response_exposures_s : tuple of float or None
        Per-image exposure times, s, for files without EXIF.
    flat_field_images : tuple of Path
        Photos of an evenly lit surface.
    distortion_images : tuple of Path
        Photos of a checkerboard in varied poses.
    inner_corners : (columns, rows) or None
        Inner corners of the checkerboard, each >= 2; set when distortion images are.
    square_mm : float or None
        Side of one checkerboard square, mm, > 0; set when distortion images are.
    """

    path: Path
    camera: CameraSpec
    response_images: tuple[Path, ...] = ()
    response_exposures_s: tuple[float, ...] | None = None
    flat_field_images: tuple[Path, ...] = ()
    distortion_images: tuple[Path, ...] = ()
    inner_corners: tuple[int, int] | None = None
    square_mm: float | None = None
    title: str | None = None


# --------------------------------------------------------------------------------------------
# Field names
# --------------------------------------------------------------------------------------------


def shot_field(number: int, label: str | None = None, key: str | None = None) -> str:
    """Spell a shot's field as the loaders do in messages.

    Parameters
    ----------
    number : int
        The shot's position among the ``[[shot]]`` tables, counted from 1.
    label : str, optional
        Its label, when known.
    key : str, optional
        The key inside the shot (``"images[0]"``, ``"[shot.electrical] led_amps"``).

    Returns
    -------
    str
        E.g. ``[[shot]] 2 ("min zoom, high") images[0]``.

    Examples
    --------
    >>> shot_field(2, "min zoom, high", "images[0]")
    '[[shot]] 2 ("min zoom, high") images[0]'
    >>> shot_field(1, key="label")
    '[[shot]] 1 label'
    """
    parts = ["[[shot]]", str(number)]
    if label is not None:
        parts.append(f"({json.dumps(label, ensure_ascii=False)})")
    if key:
        parts.append(key)
    return " ".join(parts)


def _join(where: str, key: str) -> str:
    """Field name of ``key`` inside the table spelled ``where`` ('' for the top level)."""
    return f"{where} {key}" if where else key


def _top_name(key: str) -> str:
    """Spell a top-level name as in the file: ``title``, ``[rig]``, ``[[shot]]``."""
    if key == "title":
        return key
    return "[[shot]]" if key == "shot" else f"[{key}]"


def _count(n: int, noun: str) -> str:
    """Write ``n`` with the noun in singular or plural ("1 value", "3 values")."""
    return f"{n} {noun}" if n == 1 else f"{n} {noun}s"


def _toml_key(key: str) -> str:
    """Quote a key as TOML does (bare when it can be)."""
    if key and all(c.isascii() and (c.isalnum() or c in "_-") for c in key):
        return key
    return json.dumps(key, ensure_ascii=False)


def _describe(value: Any) -> str:
    """Describe a value with its TOML type, for 'got ...' in messages."""
    if isinstance(value, bool):
        return f"boolean {'true' if value else 'false'}"
    if isinstance(value, int):
        return f"integer {value}"
    if isinstance(value, float):
        return f"float {value!r}"
    if isinstance(value, str):
        return f"string {json.dumps(value, ensure_ascii=False)}"
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return f"an array of {len(value)} values"
    if isinstance(value, (datetime.date, datetime.time)):
        return f"date/time {value.isoformat()}"
    return type(value).__name__  # pragma: no cover - tomllib yields only the types above


# --------------------------------------------------------------------------------------------
# The reader: one per file, holds the name to show and the folder paths are relative to
# --------------------------------------------------------------------------------------------


class _Reader:
    """Typed, checked access to a parsed TOML document; every failure is an InputError."""

    def __init__(self, path: str | os.PathLike[str]) -> None:
        self.shown = os.fspath(path)
        self.path = Path(path).expanduser().resolve()
        self.base = self.path.parent

    # -- errors ------------------------------------------------------------------------------

    def error(self, field: str | None, message: str) -> InputError:
        return InputError(message, file=self.shown, field=field or None)

    # -- the document ------------------------------------------------------------------------

    def load(self) -> dict[str, Any]:
        try:
            with open(self.path, "rb") as f:
                return tomllib.load(f)
        except FileNotFoundError:
            raise self.error(None, "no such file") from None
        except IsADirectoryError:
            raise self.error(None, "is a directory, not a TOML file") from None
        except PermissionError:
            raise self.error(None, "cannot read: permission denied") from None
        except UnicodeDecodeError as exc:
            raise self.error(None, f"not UTF-8 text (byte {exc.start})") from None
        except tomllib.TOMLDecodeError as exc:
            raise self.error(None, f"not valid TOML: {exc}") from None
        except OSError as exc:
            raise self.error(None, f"cannot read: {exc.strerror or exc}") from None

    # -- keys --------------------------------------------------------------------------------

    def check_keys(
        self,
        table: Mapping[str, Any],
        allowed: tuple[str, ...],
        where: str,
        *,
        hints: Mapping[str, str] | None = None,
    ) -> None:
        """Raise on the first key of ``table`` not in ``allowed``."""
        for key, value in table.items():
            if key in allowed:
                continue
            if where:
                field = _join(where, _toml_key(key))
                kind = "key"
            elif isinstance(value, dict):
                field, kind = f"[{_toml_key(key)}]", "table"
            elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
                field, kind = f"[[{_toml_key(key)}]]", "table"
            else:
                field, kind = _toml_key(key), "key"
            message = f"unknown {kind} {key!r}"
            if hints and key in hints:
                message += f" ({hints[key]})"
            else:
                near = difflib.get_close_matches(key, allowed, n=1, cutoff=0.7)
                if near:
                    message += f" (did you mean {near[0]!r}?)"
            shown = allowed if where else tuple(_top_name(k) for k in allowed)
            message += "; expected one of " + ", ".join(shown)
            raise self.error(field, message)

    def required_table(self, parent: Mapping[str, Any], key: str, field: str) -> dict[str, Any]:
        """Return a sub-table that must be present."""
        return cast(dict[str, Any], self.table(parent, key, field, required=True))

    def table(
        self, parent: Mapping[str, Any], key: str, field: str, *, required: bool = False
    ) -> dict[str, Any] | None:
        """Return a sub-table, or None when absent and not required."""
        if key not in parent:
            if required:
                raise self.error(field, "required table is missing")
            return None
        value = parent[key]
        if not isinstance(value, dict):
            raise self.error(field, f"must be a table, got {_describe(value)}")
        return value

    # -- scalars -----------------------------------------------------------------------------

    def number(
        self,
        table: Mapping[str, Any],
        key: str,
        where: str,
        *,
        required: bool = False,
        positive: bool = False,
        non_negative: bool = False,
        low: float | None = None,
        high: float | None = None,
        unit: str = "",
    ) -> float | None:
        """Return a finite float (from a TOML integer or float), or None when absent."""
        field = _join(where, key)
        if key not in table:
            if required:
                raise self.error(field, "required field is missing")
            return None
        return self.number_value(
            table[key], field, positive=positive, non_negative=non_negative,
            low=low, high=high, unit=unit,
        )

    def number_value(
        self,
        value: Any,
        field: str,
        *,
        positive: bool = False,
        non_negative: bool = False,
        low: float | None = None,
        high: float | None = None,
        unit: str = "",
    ) -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.error(field, f"must be a number, got {_describe(value)}")
        x = float(value)
        if not math.isfinite(x):
            raise self.error(field, f"must be finite, got {x!r}")
        suffix = f" {unit}" if unit else ""
        if positive and not x > 0:
            raise self.error(field, f"must be positive, got {value!r}")
        if non_negative and x < 0:
            raise self.error(field, f"must not be negative, got {value!r}")
        if (low is not None and x < low) or (high is not None and x > high):
            raise self.error(
                field, f"must lie within {low:g} to {high:g}{suffix}, got {value!r}{suffix}"
            )
        return x

    def integer_value(self, value: Any, field: str, *, minimum: int | None = None) -> int:
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.error(field, f"must be an integer, got {_describe(value)}")
        if minimum is not None and value < minimum:
            raise self.error(field, f"must be at least {minimum}, got {value}")
        return int(value)

    def string(
        self,
        table: Mapping[str, Any],
        key: str,
        where: str,
        *,
        required: bool = False,
        non_blank: bool = False,
        choices: tuple[str, ...] | None = None,
    ) -> str | None:
        field = _join(where, key)
        if key not in table:
            if required:
                raise self.error(field, "required field is missing")
            return None
        value = table[key]
        if not isinstance(value, str):
            raise self.error(field, f"must be a string, got {_describe(value)}")
        if non_blank and not value.strip():
            raise self.error(field, "must not be empty")
        if choices is not None and value not in choices:
            wanted = " or ".join(json.dumps(c) for c in choices)
            raise self.error(field, f"must be {wanted}, got {json.dumps(value)}")
        return value

    # -- arrays ------------------------------------------------------------------------------

    def array(self, value: Any, field: str, what: str) -> list[Any]:
        if not isinstance(value, list):
            raise self.error(field, f"must be an array ({what}), got {_describe(value)}")
        return value

    def numbers(
        self,
        table: Mapping[str, Any],
        key: str,
        where: str,
        *,
        length: int | None = None,
        what: str = "numbers",
        required: bool = False,
        positive: bool = False,
    ) -> tuple[float, ...] | None:
        field = _join(where, key)
        if key not in table:
            if required:
                raise self.error(field, "required field is missing")
            return None
        items = self.array(table[key], field, what)
        if length is not None and len(items) != length:
            raise self.error(field, f"must be {what}, got {_count(len(items), 'value')}")
        if not items:
            raise self.error(field, f"must not be empty ({what})")
        return tuple(
            self.number_value(v, f"{field}[{i}]", positive=positive)
            for i, v in enumerate(items)
        )

    def pair_mm(
        self, table: Mapping[str, Any], key: str, where: str, *, required: bool = False
    ) -> tuple[float, float] | None:
        values = self.numbers(
            table, key, where, length=2, what="[x_mm, y_mm], 2 numbers", required=required
        )
        return None if values is None else (values[0], values[1])

    # -- files -------------------------------------------------------------------------------

    def file_value(self, value: Any, field: str) -> Path:
        if not isinstance(value, str):
            raise self.error(field, f"must be a file name (string), got {_describe(value)}")
        if not value.strip():
            raise self.error(field, "must not be empty (a file name)")
        resolved = (self.base / Path(value).expanduser()).resolve()
        if not resolved.exists():
            raise self.error(field, f"no such file: {value} (looked for {resolved})")
        if not resolved.is_file():
            raise self.error(field, f"not a file: {value} ({resolved})")
        return resolved

    def file(
        self, table: Mapping[str, Any], key: str, where: str, *, required: bool = False
    ) -> Path | None:
        field = _join(where, key)
        if key not in table:
            if required:
                raise self.error(field, "required field is missing")
            return None
        return self.file_value(table[key], field)

    def files(
        self,
        table: Mapping[str, Any],
        key: str,
        where: str,
        *,
        required: bool = False,
        minimum: int = 1,
    ) -> tuple[Path, ...]:
        """One file name or an array of them, as absolute paths; () when absent."""
        field = _join(where, key)
        if key not in table:
            if required:
                raise self.error(field, "required field is missing")
            return ()
        value = table[key]
        if isinstance(value, str):
            return (self.file_value(value, field),)
        items = self.array(value, field, "file names")
        if len(items) < minimum:
            need = "one file name" if minimum == 1 else f"at least {minimum} file names"
            raise self.error(field, f"must give {need}, got {len(items)}")
        return tuple(self.file_value(v, f"{field}[{i}]") for i, v in enumerate(items))


# --------------------------------------------------------------------------------------------
# Tables shared by the three files
# --------------------------------------------------------------------------------------------

_RIG_KEYS = ("distance_m", "distance_sigma_m")
_WALL_KEYS = (
    "points", "setup_image", "marker_size_mm", "markers_mm", "points_sigma_px",
    "points_sigma_mm", "axis_mm",
)
_CAMERA_KEYS = (
    "exposure_s", "f_number", "iso", "encoding", "black_level", "white_level",
    "focal_length_px", "profile",
)
_ELECTRICAL_KEYS = (
    "led_volts", "sense_volts", "sense_ohms", "led_amps", "efficacy_lm_per_w", "pwm_duty",
)
_SHOT_KEYS = (
    "label", "images", "dark", "exposures_s", "exposure_s", "f_number", "iso", "zoom", "mode",
    "source_cct_k", "source_spectrum_csv", "source_cie_illuminant", "claimed_lm",
    "claimed_cd", "claimed_throw_m", "electrical",
)
_SOURCE_COLOUR_KEYS = ("source_cct_k", "source_spectrum_csv", "source_cie_illuminant")
_INTENSITY_FORM = ("intensity_cd", "intensity_sigma_cd", "distance_m", "distance_sigma_m",
                   "axis_mm")
_ILLUMINANCE_FORM = ("illuminance_lx", "illuminance_sigma_lx", "at_mm")
_REFERENCE_KEYS = (
    "images", "dark", "exposures_s", "exposure_s", "f_number", "iso",
    *_INTENSITY_FORM, *_ILLUMINANCE_FORM, "cct_k", "spectrum_csv",
)
_SPECTRAL_KEYS = ("camera_sensitivity_csv",)
_CALIBRATION_KEYS = ("file",)


def _read_rig(r: _Reader, doc: Mapping[str, Any]) -> Rig:
    table = r.required_table(doc, "rig", "[rig]")
    r.check_keys(table, _RIG_KEYS, "[rig]")
    distance = cast(float, r.number(table, "distance_m", "[rig]", required=True, positive=True))
    sigma = r.number(table, "distance_sigma_m", "[rig]", non_negative=True)
    return Rig(distance_m=distance, distance_sigma_m=sigma)


def _read_points(r: _Reader, table: Mapping[str, Any]) -> tuple[tuple[float, ...], ...]:
    field = "[wall] points"
    items = r.array(table["points"], field, "[pixel_x, pixel_y, wall_x_mm, wall_y_mm] each")
    if len(items) < MIN_POINTS:
        raise r.error(field, f"needs at least {MIN_POINTS} points, got {len(items)}")
    points = []
    for i, item in enumerate(items):
        f = f"{field}[{i}]"
        if not isinstance(item, list) or len(item) != 4:
            got = _count(len(item), "value") if isinstance(item, list) else _describe(item)
            raise r.error(f, f"must be [pixel_x, pixel_y, wall_x_mm, wall_y_mm], got {got}")
        points.append(tuple(r.number_value(v, f"{f}[{j}]") for j, v in enumerate(item)))
    for i, p in enumerate(points):
        for j in range(i):
            q = points[j]
            if p[:2] == q[:2]:
                raise r.error(f"{field}[{i}]", f"same pixel position as {field}[{j}]")
            if p[2:] == q[2:]:
                raise r.error(f"{field}[{i}]", f"same wall position as {field}[{j}]")
    return tuple(points)


def _read_markers(r: _Reader, table: Mapping[str, Any]) -> dict[int, tuple[float, float]]:
    field = "[wall] markers_mm"
    value = table["markers_mm"]
    if not isinstance(value, dict):
        raise r.error(
            field, f'must be a table of marker id to [x_mm, y_mm], got {_describe(value)}'
        )
    if len(value) < MIN_MARKERS:
        raise r.error(field, f"needs at least {MIN_MARKERS} markers, got {len(value)}")
    markers: dict[int, tuple[float, float]] = {}
    seen: dict[tuple[float, float], str] = {}
    for key, pos in value.items():
        f = f"{field}.{json.dumps(key, ensure_ascii=False)}"
        text = key.strip()
        if not (text.isascii() and text.isdigit()):
            raise r.error(f, f"marker id must be a non-negative integer, got {key!r}")
        marker_id = int(text)
        if marker_id >= ARUCO_4X4_50_IDS:
            raise r.error(
                f, f"marker id must be 0 to {ARUCO_4X4_50_IDS - 1} (4x4_50 dictionary), "
                f"got {marker_id}"
            )
        if marker_id in markers:
            raise r.error(f, f"marker id {marker_id} given twice")
        items = r.array(pos, f, "[x_mm, y_mm]")
        if len(items) != 2:
            raise r.error(f, f"must be [x_mm, y_mm], 2 numbers, got {_count(len(items), 'value')}")
        xy = (r.number_value(items[0], f"{f}[0]"), r.number_value(items[1], f"{f}[1]"))
        if xy in seen:
            raise r.error(f, f"same wall position as marker {seen[xy]}")
        seen[xy] = key
        markers[marker_id] = xy
    return markers


def _read_wall(r: _Reader, doc: Mapping[str, Any], *, axis_allowed: bool) -> WallSpec:
    table = r.required_table(doc, "wall", "[wall]")
    hints = None
    if not axis_allowed:
        hints = {"axis_mm": "a calibration session gives the lamp's axis as [reference] axis_mm"}
    allowed = _WALL_KEYS if axis_allowed else tuple(k for k in _WALL_KEYS if k != "axis_mm")
    r.check_keys(table, allowed, "[wall]", hints=hints)
    has_points = "points" in table
    has_setup = "setup_image" in table
    if has_points and has_setup:
        raise r.error(
            "[wall] setup_image",
            "give either points or setup_image (with markers), not both",
        )
    if not has_points and not has_setup:
        raise r.error(
            "[wall] points",
            "required: give points (at least 4) or setup_image with marker_size_mm and "
            "markers_mm",
        )
    sigma = r.number(table, "points_sigma_px", "[wall]", non_negative=True)
    sigma_mm = r.number(table, "points_sigma_mm", "[wall]", non_negative=True)
    axis = r.pair_mm(table, "axis_mm", "[wall]")
    if has_points:
        for key in ("marker_size_mm", "markers_mm"):
            if key in table:
                raise r.error(f"[wall] {key}", "only used with setup_image, not with points")
        return WallSpec(
            points=_read_points(r, table),  # type: ignore[arg-type]
            points_sigma_px=sigma,
            points_sigma_mm=sigma_mm,
            axis_mm=axis,
        )
    setup = r.file(table, "setup_image", "[wall]", required=True)
    for key in ("marker_size_mm", "markers_mm"):
        if key not in table:
            raise r.error(f"[wall] {key}", "required with setup_image")
    size = r.number(table, "marker_size_mm", "[wall]", required=True, positive=True)
    return WallSpec(
        setup_image=setup,
        marker_size_mm=size,
        markers_mm=_read_markers(r, table),
        points_sigma_px=sigma,
        points_sigma_mm=sigma_mm,
        axis_mm=axis,
    )


def _read_camera(r: _Reader, doc: Mapping[str, Any], *, profile_allowed: bool) -> CameraSpec:
    table = r.table(doc, "camera", "[camera]")
    if table is None:
        return CameraSpec()
    w = "[camera]"
    allowed = _CAMERA_KEYS if profile_allowed else tuple(k for k in _CAMERA_KEYS
                                                          if k != "profile")
    hints = None if profile_allowed else {"profile": "a profile file makes a profile; it "
                                          "cannot use one"}
    r.check_keys(table, allowed, w, hints=hints)
    black = r.number(table, "black_level", w, non_negative=True)
    white = r.number(table, "white_level", w, positive=True)
    if black is not None and white is not None and not black < white:
        raise r.error(
            f"{w} black_level",
            f"must be below white_level ({table['white_level']!r}), got {table['black_level']!r}",
        )
    return CameraSpec(
        exposure_s=r.number(table, "exposure_s", w, positive=True),
        f_number=r.number(table, "f_number", w, positive=True),
        iso=r.number(table, "iso", w, positive=True),
        encoding=r.string(table, "encoding", w, choices=ENCODINGS),
        black_level=black,
        white_level=white,
        focal_length_px=r.number(table, "focal_length_px", w, positive=True),
        profile=r.file(table, "profile", w) if profile_allowed else None,
    )


def _read_spectral(r: _Reader, doc: Mapping[str, Any]) -> Path | None:
    table = r.table(doc, "spectral", "[spectral]")
    if table is None:
        return None
    r.check_keys(table, _SPECTRAL_KEYS, "[spectral]")
    return r.file(table, "camera_sensitivity_csv", "[spectral]", required=True)


def _read_electrical_table(
    r: _Reader, table: Any, where: str
) -> dict[str, Any]:
    """Check one electrical table; return its given keys with checked values."""
    if not isinstance(table, dict):
        raise r.error(where, f"must be a table, got {_describe(table)}")
    hints: dict[str, str] = {}
    if where.endswith("[shot.electrical]"):
        hints = {k: "a [[shot]] key: keys below a [shot.electrical] header belong to that "
                 "table, so put the shot's keys above it" for k in _SHOT_KEYS}
    r.check_keys(table, _ELECTRICAL_KEYS, where, hints=hints)
    out: dict[str, Any] = {}
    for key in ("led_volts", "sense_volts", "sense_ohms", "led_amps"):
        value = r.number(table, key, where, positive=True)
        if value is not None:
            out[key] = value
    duty = r.number(table, "pwm_duty", where)
    if duty is not None:
        if not 0 < duty <= 1:
            raise r.error(_join(where, "pwm_duty"),
                          f"must lie in (0, 1], got {table['pwm_duty']!r}")
        out["pwm_duty"] = duty
    efficacy = r.numbers(table, "efficacy_lm_per_w", where, length=2,
                         what="[low, high], 2 numbers", positive=True)
    if efficacy is not None:
        low, high = efficacy
        field = _join(where, "efficacy_lm_per_w")
        if low > high:
            raise r.error(field, f"must be [low, high] with low <= high, got [{low:g}, {high:g}]")
        if high > MAX_LUMINOUS_EFFICACY_LM_PER_W:
            raise r.error(
                field,
                f"{high:g} lm/W exceeds the largest possible luminous efficacy, "
                f"{MAX_LUMINOUS_EFFICACY_LM_PER_W:g} lm/W",
            )
        out["efficacy_lm_per_w"] = (low, high)
    if "led_amps" in out and ("sense_volts" in out or "sense_ohms" in out):
        raise r.error(
            _join(where, "led_amps"),
            "ambiguous: give led_amps, or sense_volts with sense_ohms, not both",
        )
    return out


def _merge_electrical(
    r: _Reader,
    session: dict[str, Any] | None,
    own: dict[str, Any] | None,
    own_where: str | None,
) -> ElectricalSpec | None:
    """Merge a shot's table over the session's, key by key, and check the result is whole."""
    if session is None and own is None:
        return None
    merged = {**(session or {}), **(own or {})}

    def origin(key: str) -> str:
        if own is not None and key in own and own_where is not None:
            return _join(own_where, key)
        return _join("[electrical]", key)

    if "led_amps" in merged and ("sense_volts" in merged or "sense_ohms" in merged):
        other = "sense_volts" if "sense_volts" in merged else "sense_ohms"
        raise r.error(
            origin("led_amps"),
            f"ambiguous with {origin(other)}: give led_amps, or sense_volts with sense_ohms, "
            "not both (a shot's table is merged over [electrical] key by key)",
        )
    for key, other in (("sense_volts", "sense_ohms"), ("sense_ohms", "sense_volts")):
        if key in merged and other not in merged:
            raise r.error(origin(key), f"given without {other}; the current is "
                          "sense_volts / sense_ohms")
    target = own_where if own is not None and own_where is not None else "[electrical]"
    if "led_volts" not in merged:
        raise r.error(_join(target, "led_volts"), "required field is missing")
    if "led_amps" not in merged and "sense_volts" not in merged:
        raise r.error(_join(target, "led_amps"),
                      "required: give led_amps, or sense_volts with sense_ohms")
    return ElectricalSpec(**merged)


def _exposures(
    r: _Reader, table: Mapping[str, Any], where: str, n_images: int
) -> tuple[float, ...] | None:
    values = r.numbers(table, "exposures_s", where, what="exposure times in s, one per image",
                       positive=True)
    if values is None:
        return None
    if len(values) != n_images:
        raise r.error(
            _join(where, "exposures_s"),
            f"must give one exposure time per image ({n_images}), got {len(values)}",
        )
    if "exposure_s" in table:
        raise r.error(
            _join(where, "exposure_s"),
            "ambiguous with exposures_s: give exposure_s or exposures_s (one per image), "
            "not both",
        )
    return values


def _darks(
    r: _Reader, table: Mapping[str, Any], where: str, n_images: int
) -> tuple[Path, ...]:
    darks = r.files(table, "dark", where)
    if len(darks) not in (0, 1, n_images):
        raise r.error(
            _join(where, "dark"),
            f"must give one dark frame, or one per image ({n_images}), got {len(darks)}",
        )
    return darks


def _one_of(r: _Reader, table: Mapping[str, Any], keys: tuple[str, ...], where: str) -> None:
    given = [k for k in keys if k in table]
    if len(given) > 1:
        raise r.error(_join(where, given[1]),
                      f"give only one of {', '.join(keys)}; got {' and '.join(given)}")


# --------------------------------------------------------------------------------------------
# Session
# --------------------------------------------------------------------------------------------

_SESSION_TOP = ("title", "rig", "wall", "camera", "calibration", "shot", "spectral",
                "electrical")


def _top_hints(tables: Mapping[str, tuple[str, ...]]) -> dict[str, str]:
    hints: dict[str, str] = {}
    for name, keys in tables.items():
        for key in keys:
            hints.setdefault(key, f"did you mean it under {_top_name(name)}? a key belongs to "
                                  "the table header above it")
    return hints


def _read_shot(
    r: _Reader,
    table: Any,
    number: int,
    session_electrical: dict[str, Any] | None,
) -> ShotSpec:
    if not isinstance(table, dict):
        raise r.error(shot_field(number), f"must be a table, got {_describe(table)}")
    label = cast(str, r.string(table, "label", shot_field(number), required=True,
                               non_blank=True))
    w = shot_field(number, label)
    r.check_keys(table, _SHOT_KEYS, w, hints={
        k: "did you mean it under [shot.electrical]? write that header below the shot's keys"
        for k in _ELECTRICAL_KEYS})
    images = r.files(table, "images", w, required=True)
    _one_of(r, table, _SOURCE_COLOUR_KEYS, w)
    cie = r.string(table, "source_cie_illuminant", w, non_blank=True)
    own_where = f"{w} [shot.electrical]"
    own = (_read_electrical_table(r, table["electrical"], own_where)
           if "electrical" in table else None)
    return ShotSpec(
        label=label,
        images=images,
        darks=_darks(r, table, w, len(images)),
        exposures_s=_exposures(r, table, w, len(images)),
        exposure_s=r.number(table, "exposure_s", w, positive=True),
        f_number=r.number(table, "f_number", w, positive=True),
        iso=r.number(table, "iso", w, positive=True),
        zoom=r.string(table, "zoom", w),
        mode=r.string(table, "mode", w),
        source_cct_k=r.number(table, "source_cct_k", w, low=CCT_RANGE_K[0],
                              high=CCT_RANGE_K[1], unit="K"),
        source_spectrum_csv=r.file(table, "source_spectrum_csv", w),
        source_cie_illuminant=None if cie is None else cie.strip(),
        claimed_lm=r.number(table, "claimed_lm", w, positive=True),
        claimed_cd=r.number(table, "claimed_cd", w, positive=True),
        claimed_throw_m=r.number(table, "claimed_throw_m", w, positive=True),
        electrical=_merge_electrical(r, session_electrical, own, own_where),
        number=number,
    )


def _label_key(label: str) -> str:
    return " ".join(label.split()).casefold()


def load_session(path: str | os.PathLike[str]) -> Session:
    r"""Read and check a measurement session file.

    Parameters
    ----------
    path : str or path-like
        The session TOML file. Paths inside it are relative to its folder.

    Returns
    -------
    Session
        Every field checked; paths absolute; each shot's ``electrical`` merged over the
        session's.

    Raises
    ------
    InputError
        On the first fault, naming the file (as given) and the field, as spelled in the
        module docstring. The rules are the contract's plus the decisions listed there
        (common practice, no source).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     f = pathlib.Path(tmp, "session.toml")
    ...     _ = f.write_text("[rig]\ndistance_m = -3.0\n")
    ...     try:
    ...         load_session(f)
    ...     except InputError as exc:
    ...         print(exc.field, "|", exc.message)
    [rig] distance_m | must be positive, got -3.0
    """
    r = _Reader(path)
    doc = r.load()
    r.check_keys(doc, _SESSION_TOP, "", hints=_top_hints({
        "rig": _RIG_KEYS, "wall": _WALL_KEYS, "camera": _CAMERA_KEYS,
        "electrical": _ELECTRICAL_KEYS, "spectral": _SPECTRAL_KEYS, "shot": _SHOT_KEYS,
    }))
    title = r.string(doc, "title", "")
    rig = _read_rig(r, doc)
    wall = _read_wall(r, doc, axis_allowed=True)
    camera = _read_camera(r, doc, profile_allowed=True)

    calibration_file = None
    cal = r.table(doc, "calibration", "[calibration]")
    if cal is not None:
        r.check_keys(cal, _CALIBRATION_KEYS, "[calibration]")
        calibration_file = r.file(cal, "file", "[calibration]", required=True)
    sensitivity = _read_spectral(r, doc)

    session_electrical = None
    if "electrical" in doc:
        session_electrical = _read_electrical_table(r, doc["electrical"], "[electrical]")

    if "shot" not in doc:
        raise r.error("[[shot]]", "at least one [[shot]] table is required")
    shots_value = doc["shot"]
    if not isinstance(shots_value, list):
        raise r.error(
            "[[shot]]",
            f"must be an array of tables, each headed [[shot]] (double brackets), got "
            f"{_describe(shots_value)}",
        )
    if not shots_value:
        raise r.error("[[shot]]", "at least one [[shot]] table is required")
    shots: list[ShotSpec] = []
    seen: dict[str, ShotSpec] = {}
    for number, table in enumerate(shots_value, start=1):
        shot = _read_shot(r, table, number, session_electrical)
        key = _label_key(shot.label)
        if key in seen:
            first = seen[key]
            raise r.error(
                shot_field(number, shot.label, "label"),
                f"duplicate label; {shot_field(first.number, first.label)} has the same "
                "(labels are compared ignoring case and repeated spaces)",
            )
        seen[key] = shot
        shots.append(shot)

    return Session(
        path=r.path,
        rig=rig,
        wall=wall,
        camera=camera,
        shots=tuple(shots),
        title=title,
        calibration_file=calibration_file,
        camera_sensitivity_csv=sensitivity,
        electrical=None if session_electrical is None else ElectricalSpec(**session_electrical),
    )


# --------------------------------------------------------------------------------------------
# Calibration session
# --------------------------------------------------------------------------------------------

_CALIBRATION_TOP = ("title", "wall", "camera", "reference", "spectral")


def _read_reference(r: _Reader, doc: Mapping[str, Any]) -> Reference:
    w = "[reference]"
    table = r.required_table(doc, "reference", w)
    r.check_keys(table, _REFERENCE_KEYS, w)
    images = r.files(table, "images", w, required=True)
    _one_of(r, table, ("cct_k", "spectrum_csv"), w)

    intensity_keys = [k for k in _INTENSITY_FORM if k in table]
    illuminance_keys = [k for k in _ILLUMINANCE_FORM if k in table]
    if intensity_keys and illuminance_keys:
        raise r.error(
            _join(w, illuminance_keys[0]),
            f"give either a lamp's intensity (intensity_cd, distance_m, axis_mm) or a "
            f"lux reading (illuminance_lx, at_mm), not both; got {intensity_keys[0]} and "
            f"{illuminance_keys[0]}",
        )
    if not intensity_keys and not illuminance_keys:
        raise r.error(
            _join(w, "intensity_cd"),
            "required: give a lamp's intensity_cd with distance_m and axis_mm, or a lux "
            "reading illuminance_lx with at_mm",
        )
    common = dict(
        images=images,
        darks=_darks(r, table, w, len(images)),
        exposures_s=_exposures(r, table, w, len(images)),
        exposure_s=r.number(table, "exposure_s", w, positive=True),
        f_number=r.number(table, "f_number", w, positive=True),
        iso=r.number(table, "iso", w, positive=True),
        cct_k=r.number(table, "cct_k", w, low=CCT_RANGE_K[0], high=CCT_RANGE_K[1], unit="K"),
        spectrum_csv=r.file(table, "spectrum_csv", w),
    )
    if intensity_keys:
        for key in ("intensity_cd", "distance_m", "axis_mm"):
            if key not in table:
                raise r.error(_join(w, key), "required with intensity_cd (the lamp form)"
                              if key != "intensity_cd" else
                              "required with distance_m and axis_mm (the lamp form)")
        return Reference(
            intensity_cd=r.number(table, "intensity_cd", w, required=True, positive=True),
            intensity_sigma_cd=r.number(table, "intensity_sigma_cd", w, non_negative=True),
            distance_m=r.number(table, "distance_m", w, required=True, positive=True),
            distance_sigma_m=r.number(table, "distance_sigma_m", w, non_negative=True),
            axis_mm=r.pair_mm(table, "axis_mm", w, required=True),
            **common,  # type: ignore[arg-type]
        )
    for key in ("illuminance_lx", "at_mm"):
        if key not in table:
            other = "at_mm" if key == "illuminance_lx" else "illuminance_lx"
            raise r.error(_join(w, key), f"required with {other} (the lux-meter form)")
    return Reference(
        illuminance_lx=r.number(table, "illuminance_lx", w, required=True, positive=True),
        illuminance_sigma_lx=r.number(table, "illuminance_sigma_lx", w, non_negative=True),
        at_mm=r.pair_mm(table, "at_mm", w, required=True),
        **common,  # type: ignore[arg-type]
    )


def load_calibration_session(path: str | os.PathLike[str]) -> CalibrationSession:
    r"""Read and check a calibration session file (``[wall]``, ``[camera]``, ``[reference]``).

    Parameters
    ----------
    path : str or path-like
        The calibration session TOML file. Paths inside it are relative to its folder.

    Returns
    -------
    CalibrationSession
        Every field checked; paths absolute; the reference in exactly one of its two forms.

    Raises
    ------
    InputError
        On the first fault, naming the file and the field (see the module docstring).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     f = pathlib.Path(tmp, "cal.toml")
    ...     _ = f.write_text("[wall]\npoints = []\n")
    ...     try:
    ...         load_calibration_session(f)
    ...     except InputError as exc:
    ...         print(exc.field, "|", exc.message)
    [wall] points | needs at least 4 points, got 0
    """
    r = _Reader(path)
    doc = r.load()
    r.check_keys(doc, _CALIBRATION_TOP, "", hints=_top_hints({
        "reference": _REFERENCE_KEYS, "wall": _WALL_KEYS, "camera": _CAMERA_KEYS,
        "spectral": _SPECTRAL_KEYS,
    }))
    title = r.string(doc, "title", "")
    wall = _read_wall(r, doc, axis_allowed=False)
    camera = _read_camera(r, doc, profile_allowed=True)
    sensitivity = _read_spectral(r, doc)
    reference = _read_reference(r, doc)
    return CalibrationSession(
        path=r.path, wall=wall, camera=camera, reference=reference, title=title,
        camera_sensitivity_csv=sensitivity,
    )


# --------------------------------------------------------------------------------------------
# Camera profile
# --------------------------------------------------------------------------------------------

_PROFILE_TOP = ("title", "camera", "response", "flat_field", "distortion")
_RESPONSE_KEYS = ("images", "exposures_s")
_FLAT_KEYS = ("images",)
_DISTORTION_KEYS = ("images", "inner_corners", "square_mm")


def load_profile_session(path: str | os.PathLike[str]) -> ProfileSession:
    r"""Read and check a camera profile file.

    Its tables are ``[camera]``, ``[response]``, ``[flat_field]`` and ``[distortion]``.

    Parameters
    ----------
    path : str or path-like
        The profile TOML file. Paths inside it are relative to its folder.

    Returns
    -------
    ProfileSession
        Every field checked; paths absolute; tables not given are empty.

    Raises
    ------
    InputError
        On the first fault, naming the file and the field (see the module docstring).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     f = pathlib.Path(tmp, "cam.toml")
    ...     _ = f.write_text('[camera]\nencoding = "srgb"\n')
    ...     try:
    ...         load_profile_session(f)
    ...     except InputError as exc:
    ...         print(exc.message)
    nothing to profile: give at least one of [response], [flat_field], [distortion]
    """
    r = _Reader(path)
    doc = r.load()
    r.check_keys(doc, _PROFILE_TOP, "", hints=_top_hints({
        "camera": _CAMERA_KEYS, "distortion": _DISTORTION_KEYS,
    }))
    title = r.string(doc, "title", "")
    camera = _read_camera(r, doc, profile_allowed=False)

    response_images: tuple[Path, ...] = ()
    response_exposures = None
    response = r.table(doc, "response", "[response]")
    if response is not None:
        r.check_keys(response, _RESPONSE_KEYS, "[response]")
        response_images = r.files(response, "images", "[response]", required=True, minimum=2)
        if len(response_images) < 2:
            raise r.error("[response] images",
                          "must give at least 2 file names (an exposure bracket), got 1")
        response_exposures = _exposures(r, response, "[response]", len(response_images))

    flat_images: tuple[Path, ...] = ()
    flat = r.table(doc, "flat_field", "[flat_field]")
    if flat is not None:
        r.check_keys(flat, _FLAT_KEYS, "[flat_field]")
        flat_images = r.files(flat, "images", "[flat_field]", required=True)

    distortion_images: tuple[Path, ...] = ()
    corners = None
    square = None
    distortion = r.table(doc, "distortion", "[distortion]")
    if distortion is not None:
        w = "[distortion]"
        r.check_keys(distortion, _DISTORTION_KEYS, w)
        distortion_images = r.files(distortion, "images", w, required=True)
        if "inner_corners" not in distortion:
            raise r.error(f"{w} inner_corners", "required field is missing")
        items = r.array(distortion["inner_corners"], f"{w} inner_corners", "[columns, rows]")
        if len(items) != 2:
            raise r.error(f"{w} inner_corners",
                          f"must be [columns, rows], 2 integers, got {_count(len(items), 'value')}")
        cols, rows = (r.integer_value(v, f"{w} inner_corners[{i}]", minimum=2)
                      for i, v in enumerate(items))
        corners = (cols, rows)
        square = r.number(distortion, "square_mm", w, required=True, positive=True)

    if response is None and flat is None and distortion is None:
        raise r.error(None, "nothing to profile: give at least one of [response], "
                      "[flat_field], [distortion]")
    return ProfileSession(
        path=r.path,
        camera=camera,
        response_images=response_images,
        response_exposures_s=response_exposures,
        flat_field_images=flat_images,
        distortion_images=distortion_images,
        inner_corners=corners,
        square_mm=square,
        title=title,
    )
