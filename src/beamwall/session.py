"""Read session, calibration-session and calibration files into frozen dataclasses.

(Interface skeleton: the dataclasses below are the contract other rooms rely on; the loaders
check every field and raise :class:`beamwall.errors.InputError` naming file and field.)
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path


@dataclass(frozen=True)
class Rig:
    distance_m: float
    distance_sigma_m: float | None = None


@dataclass(frozen=True)
class WallSpec:
    # Each point: (pixel_x, pixel_y, wall_x_mm, wall_y_mm). None when markers are used.
    points: tuple[tuple[float, float, float, float], ...] | None = None
    setup_image: Path | None = None            # absolute path
    marker_size_mm: float | None = None
    markers_mm: dict[int, tuple[float, float]] | None = None
    points_sigma_px: float | None = None
    axis_mm: tuple[float, float] | None = None


@dataclass(frozen=True)
class CameraSpec:
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
    led_volts: float | None = None
    sense_volts: float | None = None
    sense_ohms: float | None = None
    led_amps: float | None = None
    efficacy_lm_per_w: tuple[float, float] | None = None
    pwm_duty: float | None = None


@dataclass(frozen=True)
class ShotSpec:
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


@dataclass(frozen=True)
class Session:
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


@dataclass(frozen=True)
class CalibrationSession:
    path: Path
    wall: WallSpec
    camera: CameraSpec
    reference: Reference
    title: str | None = None
    camera_sensitivity_csv: Path | None = None
