"""Result dataclasses shared by the pipeline and the report writers.

Field names follow the keys of ``results.json`` (see ``docs/contract.md``), so export is
mechanical: a field that is part of the contract keeps the contract's name and unit.
Calibrated-only figures (``peak_intensity_cd``, ``throw_m``, ``flux_lm``) are ``None`` without a
calibration; angles and ``relative_*`` figures are always present.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from beamwall.wall import WallGrid


@dataclass(frozen=True)
class InputFile:
    """One input file and its SHA-256, for provenance."""

    role: str          # "image", "dark", "session", "calibration", ...
    path: str          # as resolved, absolute
    sha256: str


@dataclass(frozen=True)
class Distribution:
    """Luminous intensity I(theta, phi) on a polar grid around the beam axis.

    theta_deg : (n_theta,) polar angle from the beam axis, ascending from 0.
    phi_deg : (n_phi,) azimuth, uniform on [0, 360), measured on the wall from +x towards +y
        (counter-clockwise as seen from the torch).
    intensity : (n_theta, n_phi) in ``unit`` ("cd" when calibrated, else "relative" signal
        units); NaN where the direction was not measured (outside the photo, clipped).
    beam_half_angle_deg, field_half_angle_deg : (n_phi,) the outermost polar angle at which the
        intensity is still at least 50 % (10 %) of the peak, per azimuth; NaN where the crossing
        lies outside the measured range.
    """

    theta_deg: np.ndarray
    phi_deg: np.ndarray
    intensity: np.ndarray
    unit: str
    peak: float
    beam_half_angle_deg: np.ndarray
    field_half_angle_deg: np.ndarray


@dataclass(frozen=True)
class ShotResult:
    """Everything measured for one shot."""

    label: str
    zoom: str | None
    mode: str | None
    beam_angle_deg: float | None
    field_angle_deg: float | None
    peak_intensity_cd: float | None
    throw_m: float | None
    flux_lm: float | None
    flux_half_angle_deg: float | None
    axis_mm: tuple[float, float]
    saturated_fraction: float
    relative_peak_intensity: float
    relative_flux: float | None
    warnings: tuple[str, ...] = ()
    beam_angle_sigma_deg: float | None = None
    field_angle_sigma_deg: float | None = None
    peak_intensity_sigma_cd: float | None = None
    throw_sigma_m: float | None = None
    flux_sigma_lm: float | None = None
    spectral_correction_factor: float = 1.0
    spectral_correction_sigma: float | None = None
    spectral_mismatch_f1_prime: float | None = None
    luminance_weights: tuple[float, float, float] = (0.2126, 0.7152, 0.0722)
    # Beyond the contract ---------------------------------------------------------------
    beam_angle_min_deg: float | None = None      # narrowest / widest azimuth, full angles
    beam_angle_max_deg: float | None = None
    field_angle_min_deg: float | None = None
    field_angle_max_deg: float | None = None
    relative_peak_signal: float | None = None    # peak in uncalibrated signal units * m^2
    flux_total_max_lm: float | None = None       # upper bound of the total flux (see figures)
    distance_m: float | None = None
    claims: tuple[dict[str, Any], ...] = ()
    electrical: dict[str, Any] | None = None
    uncertainty_budget: dict[str, dict[str, float]] | None = None  # figure -> input -> u (k=1)
    interval95: dict[str, Any] | None = None     # Monte Carlo 95 % intervals per figure
    # For the report and later comparisons (not written to results.json) -----------------
    cone_half_angle_deg: np.ndarray | None = field(default=None, repr=False)  # (n,) 0.1 deg steps
    cone_flux: np.ndarray | None = field(default=None, repr=False)  # (n,) lm (or relative)
    distribution: Distribution | None = field(default=None, repr=False)
    intensity_map: WallGrid | None = field(default=None, repr=False)  # I on the wall, cd/rel.
    inputs: tuple[InputFile, ...] = ()
    mc_profiles: Any = field(default=None, repr=False)   # uncertainty.BeamProfiles


@dataclass(frozen=True)
class SessionResult:
    """A whole session's results: the shots and the session-level comparisons."""

    beamwall_version: str
    calibrated: bool
    shots: tuple[ShotResult, ...]
    title: str | None = None
    session_file: str | None = None
    calibration: dict[str, Any] | None = None    # summary of the calibration used
    zoom: dict[str, Any] | None = None
    modes: tuple[dict[str, Any], ...] = ()       # each mode against the brightest, per zoom
    electrical: dict[str, Any] | None = None
    claims: tuple[dict[str, Any], ...] = ()
    warnings: tuple[str, ...] = ()
    inputs: tuple[InputFile, ...] = ()
    created_utc: str | None = None
    settings: dict[str, Any] = field(default_factory=dict)
