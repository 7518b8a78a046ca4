"""The one exception family for beamwall.

Every failure caused by the user's input (a session file, a photo, a calibration) raises a
subclass of :class:`BeamwallError`. Its message reads as one line naming the file and the
field at fault, e.g. ``session.toml: [rig] distance_m: must be positive, got -3.0``. The
command layer catches :class:`BeamwallError` only, prints that line and exits with status 2;
any other exception is a bug and keeps its traceback.
"""

from __future__ import annotations

from os import PathLike

__all__ = [
    "BeamwallError",
    "InputError",
    "ImageError",
    "GeometryError",
    "CalibrationError",
]


class BeamwallError(Exception):
    """Base of all errors caused by bad input to beamwall.

    Parameters
    ----------
    message : str
        What is wrong, in words a user can act on.
    file : str or path-like, optional
        The file at fault (shown by its name as given).
    field : str, optional
        The field at fault, written as in the file, e.g. ``"[rig] distance_m"``.

    Examples
    --------
    >>> str(InputError("must be positive, got -3.0", file="session.toml",
    ...                field="[rig] distance_m"))
    'session.toml: [rig] distance_m: must be positive, got -3.0'
    """

    def __init__(
        self,
        message: str,
        *,
        file: str | PathLike[str] | None = None,
        field: str | None = None,
    ) -> None:
        self.message = message
        self.file = None if file is None else str(file)
        self.field = field
        super().__init__(self.__str__())

    def __str__(self) -> str:
        parts = [p for p in (self.file, self.field) if p]
        parts.append(self.message)
        return ": ".join(parts)


class InputError(BeamwallError, ValueError):
    """A session, calibration or profile file holds a missing, malformed or invalid field."""


class ImageError(BeamwallError):
    """A photo cannot be read or cannot be measured (unreadable, clipped hotspot, no signal)."""


class GeometryError(BeamwallError):
    """The pixel-to-wall mapping cannot be fitted or fails its checks."""


class CalibrationError(BeamwallError):
    """A calibration cannot be made, or does not apply to the session it is used with."""
