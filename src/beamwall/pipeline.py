"""Orchestration: call the rooms in order for a calibration or a measuring session.

Reads photos through :mod:`beamwall.images`, normalises them (:mod:`beamwall.linear`), maps
them to the wall (:mod:`beamwall.wall`), builds the distribution
(:mod:`beamwall.distribution`), derives the figures (:mod:`beamwall.figures`) and applies the
calibration (:mod:`beamwall.calibrate`). Warnings are collected into the results; progress is
reported through a callback; nothing is printed here.

Uncertainty (k=1) until the full budget lands: the peak intensity combines the calibration's
relative uncertainty with twice the relative distance uncertainty (I = E d^2); throw half of
that (throw ~ sqrt(I)); flux the calibration's alone (the wall's areas come from the mapping,
not the distance); the angles the distance term (d theta = -sin(theta) cos(theta) dd / d) and
the grid's resolution (a rectangular half-cell, u = step / (2 sqrt 3)) [GUM].

References
----------
.. [GUM] JCGM 100:2008, 5.1.2 (propagation for uncorrelated inputs) and 4.3.7 (rectangular
   distribution, u = a / sqrt 3).
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Callable, Sequence
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

import numpy as np

from beamwall import __version__, linear, markers, spectra_io, spectral, wall
from beamwall import images as img
from beamwall.calibrate import (
    Calibration,
    ReferenceFit,
    fit_lamp_reference,
    fit_lux_reference,
)
from beamwall.camera_geometry import focal_length_from_homography
from beamwall.compare import session_comparisons
from beamwall.constants import REC709_LUMINANCE_WEIGHTS
from beamwall.distribution import (
    find_axis,
    grid_cos3,
    intensity_map,
    polar_distribution,
    smooth_nan,
    smoothed_intensity,
)
from beamwall.errors import CalibrationError, ImageError, InputError
from beamwall.figures import (
    angle_summary,
    clipped_peak_fraction,
    cumulative_cone_flux,
    largest_cone_half_angle_deg,
    saturated_fraction,
    throw_m,
    total_flux_upper_bound,
)
from beamwall.profile_io import check_frame, load_profile, session_points_px
from beamwall.provenance import relative_path, sha256_file
from beamwall.results import InputFile, SessionResult, ShotResult
from beamwall.session import (
    CalibrationSession,
    CameraSpec,
    Session,
    ShotSpec,
    WallSpec,
    shot_field,
)
from beamwall.uncertainty import (
    DEFAULT_POINTS_SIGMA_PX,
    EXPOSURE_RATIO_SIGMA_FRACTION,
    FLAT_FIELD_SIGMA_FRACTION,
    UncertaintyInputs,
    propagate,
    sample_profiles,
)

__all__ = ["measure_session", "calibrate_session", "ProgressCallback", "ShotSignal"]

#: progress(stage, done, total): e.g. ("shot 'wide, high'", 1, 4).
ProgressCallback = Callable[[str, int, int], None]

#: Share of the 50 % region that may be clipped before the peak is refused (common practice,
#: no source: beyond this the hidden core can hold a markedly higher maximum).
MAX_CLIPPED_PEAK_FRACTION: float = 0.01


#: Cells of the wall grid at most. 1.5 M cells over a photo's footprint keep a 4 deg spot at
#: 3 m some 50 cells across (its crossings interpolate to ~0.1 cell) while holding a 24 MP
#: photo's analysis near its decode time (docs/performance.md).
MAX_WALL_CELLS: int = 1_500_000


def _noop(stage: str, done: int, total: int) -> None:
    return None


def _utc_now() -> str:
    return _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


@dataclass(frozen=True)
class ShotSignal:
    """A shot's signal on the wall, with what it was made from."""

    grid: Any                      # wall.WallGrid of exposure-normalised signal
    first_frame: img.Frame
    encoding: str
    focal_length_px: float | None
    exposures: tuple[linear.Exposure, ...]
    source_pixels_per_cell: float
    inputs: tuple[InputFile, ...]
    warnings: tuple[str, ...]
    assumed: frozenset[str] = frozenset()     # exposure keys found nowhere (f_number, iso)


def _resolve_exposure(
    frame: img.Frame,
    index: int,
    *,
    camera: CameraSpec,
    own: dict[str, Any],
    where: str,
    file: str,
    fallback: dict[str, float | None],
    warnings: list[str],
    assumed: set[str],
) -> linear.Exposure:
    """Exposure of one image: the shot's own values, then EXIF, then ``[camera]``.

    The exposure time is required. An f-number or ISO found nowhere is taken as the
    ``fallback`` (the calibration's, so that the ratio is 1), or as f/1 and ISO 100 when the
    calibration did not know it either; a warning says so.
    """
    exposures_s = own.get("exposures_s")
    t = exposures_s[index] if exposures_s else own.get("exposure_s")
    if t is None:
        t = frame.exposure_s if frame.exposure_s else camera.exposure_s
    if t is None:
        raise InputError(
            f"no exposure time for {frame.path.name}: the photo carries no EXIF ExposureTime; "
            f"give 'exposure_s' in [camera] or in the {where}",
            file=file,
            field=f"{where} exposure_s",
        )
    values: dict[str, float] = {}
    for key, nominal in (("f_number", 1.0), ("iso", 100.0)):
        v = own.get(key)
        if v is None:
            v = getattr(frame, key) or getattr(camera, key)
        if v is None:
            assumed.add(key)
            known = fallback.get(key)
            v = known if known is not None else nominal
            note = (f"the calibration's {known:g}" if known is not None
                    else "unknown in the calibration too")
            msg = (f"{frame.path.name}: no {key} (no EXIF, none in [camera] or the "
                   f"{where}): assumed unchanged since the calibration ({note})")
            if msg not in warnings:
                warnings.append(msg)
        values[key] = float(v)
    return linear.Exposure(exposure_s=float(t), f_number=values["f_number"],
                           iso=values["iso"])


def _mapping(spec: WallSpec, *, file: str, camera: CameraSpec | None = None) -> wall.WallMapping:
    """The wall mapping from the points, or from the markers in the setup photo.

    With markers and a camera profile that holds a lens distortion, the marker corners are
    undistorted before the fit, so the mapping refers to ideal pixels, as
    :func:`load_shot_signal` and :func:`beamwall.wall.resample_to_wall` expect. Given points
    are refitted by :func:`load_shot_signal` (they need the frame's binning too).
    """
    if spec.points is None:
        if spec.setup_image is None or spec.markers_mm is None or spec.marker_size_mm is None:
            raise InputError("give points, or setup_image with marker_size_mm and markers_mm",
                             file=file, field="[wall]")
        frame = img.read_frame(spec.setup_image)
        distortion = None
        if camera is not None and camera.profile is not None:
            profile = load_profile(camera.profile)
            check_frame(profile, frame, profile_file=camera.profile)
            distortion = profile.distortion
        return markers.wall_mapping_from_markers(
            frame.pixels, markers_mm=spec.markers_mm, marker_size_mm=spec.marker_size_mm,
            source="[wall] setup_image", distortion=distortion,
        )
    pts = np.asarray(spec.points, dtype=np.float64)
    return wall.fit_homography(pts[:, :2], pts[:, 2:])


def load_shot_signal(
    images: Sequence[Path],
    darks: Sequence[Path],
    *,
    camera: CameraSpec,
    own: dict[str, Any],
    mapping: wall.WallMapping,
    where: str,
    file: str,
    weights: tuple[float, float, float] = REC709_LUMINANCE_WEIGHTS,
    fallback: dict[str, float | None] | None = None,
    wall_points: Any = None,
) -> ShotSignal:
    """Read, normalise and map to the wall one shot (or the reference) of a session.

    ``fallback`` holds the calibration's f-number and ISO, assumed for photos that give none.
    ``wall_points`` (the session's ``[wall] points``) are refitted in the frame's pixels when
    a camera profile removes lens distortion or a raw file is binned. Without them (a marker
    session) ``mapping`` is used as given: :func:`_mapping` already fitted it to undistorted
    marker corners when the profile holds a lens distortion.
    """
    notes: list[str] = []
    assumed: set[str] = set()
    frames = [img.read_frame(p) for p in images]
    dark_frames = [img.read_frame(p) for p in darks]
    first = frames[0]
    for f in frames[1:] + dark_frames:
        if f.shape != first.shape:
            raise ImageError(
                f"size {f.shape[1]}x{f.shape[0]} differs from {first.path.name}'s "
                f"{first.shape[1]}x{first.shape[0]}",
                file=f.path,
            )
    encoding = camera.encoding or ("srgb" if first.bit_depth == 8 else "linear")
    profile = load_profile(camera.profile) if camera.profile is not None else None
    if profile is not None:
        check_frame(profile, first, profile_file=camera.profile)
    if (profile is not None or first.binning != 1) and wall_points is not None:
        pts = np.asarray(wall_points, dtype=np.float64)
        mapping = wall.fit_homography(session_points_px(pts[:, :2], first, profile),
                                      pts[:, 2:])
    if first.raw:
        encoding = "linear"
    exposures = tuple(
        _resolve_exposure(f, i, camera=camera, own=own, where=where, file=file,
                          fallback=fallback or {}, warnings=notes, assumed=assumed)
        for i, f in enumerate(frames)
    )
    if len(dark_frames) == 0:
        dark_arrays: list[np.ndarray | None] = [None] * len(frames)
    elif len(dark_frames) == 1:
        # One dark for a bracket is taken at the first image's settings (the contract): it
        # applies to that image; the others are taken as dark-free.
        dark_arrays = [dark_frames[0].pixels] + [None] * (len(frames) - 1)
    else:
        dark_arrays = [d.pixels for d in dark_frames]
    focal_px = img.focal_length_px(first, override_px=camera.focal_length_px)
    has_flat_field = profile is not None and profile.flat_field is not None
    if focal_px is None and not has_flat_field:
        est = focal_length_from_homography(mapping.wall_to_px, first.shape)
        if est.focal_length_px is not None:
            focal_px = est.focal_length_px
            notes.append(
                f"no focal length in EXIF or [camera]: {focal_px:.0f} px estimated from the "
                f"wall mapping (camera tilted {est.tilt_deg:.0f} deg to the wall) for the "
                "natural cos^4 falloff; give focal_length_px for a better correction"
            )
        else:
            notes.append(f"focal length unknown and not estimable ({est.reason})")
    signal = linear.normalise(
        [f.pixels for f in frames],
        exposures,
        darks=dark_arrays,
        encoding=encoding,
        black_level=0.0 if first.raw else (camera.black_level or 0.0),
        white_level=None if first.raw else camera.white_level,
        focal_length_px=focal_px,
        weights=weights,
        profile=profile,
    )
    grid = wall.resample_to_wall(signal.value, signal.saturated, mapping,
                                 max_cells=MAX_WALL_CELLS,
                                 distortion=None if profile is None else profile.distortion)
    fp = grid.footprint_mm
    # Photo pixels per grid cell (area), for the statistics of averages over the wall.
    wall_area_mm2 = 0.5 * abs(
        float(np.dot(fp[:, 0], np.roll(fp[:, 1], 1)) - np.dot(fp[:, 1], np.roll(fp[:, 0], 1)))
    )
    px_per_cell = first.shape[0] * first.shape[1] / max(wall_area_mm2 / grid.step_mm**2, 1.0)
    inputs = tuple(InputFile("image", str(f.path), f.sha256) for f in frames) + tuple(
        InputFile("dark", str(f.path), f.sha256) for f in dark_frames
    )
    if camera.profile is not None:
        inputs += (InputFile("camera profile", str(camera.profile),
                             sha256_file(camera.profile)),)
    return ShotSignal(
        grid=grid,
        first_frame=first,
        encoding=encoding,
        focal_length_px=focal_px,
        exposures=exposures,
        source_pixels_per_cell=float(px_per_cell),
        inputs=inputs,
        warnings=tuple(notes) + tuple(signal.warnings),
        assumed=frozenset(assumed),
    )


class _SpectralContext:
    """The session's spectra, read once, and each shot's correction from them."""

    def __init__(self, session: Session, calibration: Calibration | None,
                 calibration_file: str | None) -> None:
        self.enabled = calibration is not None
        self.session = session
        self.not_assessed: list[str] = []
        self.weights: tuple[float, float, float] = REC709_LUMINANCE_WEIGHTS
        self.camera = None
        self.reference = None
        if not self.enabled:
            return
        if calibration is not None and calibration.reference_spectrum:
            self.reference = spectral.spectrum_from_dict(calibration.reference_spectrum,
                                                         file=calibration_file)
        if session.camera_sensitivity_csv is not None:
            self.camera = spectra_io.read_camera_sensitivity_csv(
                session.camera_sensitivity_csv)
        self.weights = (calibration.luminance_weights if calibration is not None
                        else REC709_LUMINANCE_WEIGHTS)

    def warnings(self) -> tuple[str, ...]:
        """One session-level warning for the shots whose spectral mismatch was not assessed."""
        if not self.not_assessed:
            return ()
        which = ("every shot" if len(self.not_assessed) == len(self.session.shots)
                 else ", ".join(self.not_assessed))
        return (f"spectral mismatch not assessed for {which} (no source_cct_k, "
                "source_spectrum_csv or source_cie_illuminant, no camera sensitivity): factor "
                "1.0, left out of the uncertainty",)

    def correction(self, shot: ShotSpec, *, file: str) -> spectral.SpectralCorrection | None:
        """F* for this shot; None when there is no calibration or nothing spectral is given.

        With no spectral information at all (no source colour, no camera sensitivity), the
        factor stays 1.0 and its uncertainty is left out of the budget (a warning says so).
        """
        if not self.enabled:
            return None
        has_source = (shot.source_cct_k is not None or shot.source_spectrum_csv is not None
                      or shot.source_cie_illuminant is not None)
        if not has_source and self.camera is None:
            self.not_assessed.append(shot.label)
            return spectral.SpectralCorrection(
                spectral_correction_factor=1.0, spectral_correction_sigma=0.0,
                spectral_mismatch_f1_prime=None, luminance_weights=self.weights,
            )
        reference = self.reference if self.reference is not None \
            else spectral.reference_spectrum()
        try:
            return spectral.shot_spectral_correction(
                camera_sensitivity=self.camera, weights=self.weights, reference=reference,
                source_cct_k=shot.source_cct_k,
                source_sd=(spectra_io.read_spectrum_csv(shot.source_spectrum_csv)
                           if shot.source_spectrum_csv else None),
                source_cie_illuminant=shot.source_cie_illuminant,
            )
        except InputError as exc:
            if exc.file is not None:
                raise
            raise InputError(exc.message, file=file,
                             field=shot_field(shot.number, shot.label, exc.field)) from None


def _shot_own(shot: ShotSpec) -> dict[str, Any]:
    return {
        "exposures_s": shot.exposures_s,
        "exposure_s": shot.exposure_s,
        "f_number": shot.f_number,
        "iso": shot.iso,
    }


def _angle_sigma_deg(
    full_angle_deg: float | None, *, distance_m: float, distance_sigma_m: float, step_mm: float
) -> float | None:
    if full_angle_deg is None:
        return None
    half = np.radians(full_angle_deg / 2.0)
    d_mm = distance_m * 1000.0
    u_dist = np.sin(half) * np.cos(half) * distance_sigma_m / distance_m
    # Resolution: a rectangular half-cell on the wall, seen at the crossing's angle; averaged
    # over azimuths this bounds rather than adds (kept as a floor).
    u_res = (step_mm / (2.0 * np.sqrt(3.0))) * np.cos(half) ** 2 / d_mm
    return float(2.0 * np.degrees(np.hypot(u_dist, u_res)))


def analyse_shot(
    sig: ShotSignal,
    *,
    label: str,
    zoom: str | None,
    mode: str | None,
    distance_m: float,
    distance_sigma_m: float,
    axis_mm: tuple[float, float] | None,
    calibration: Calibration | None,
    file: str,
    where: str,
    spectral_correction: spectral.SpectralCorrection | None = None,
) -> ShotResult:
    """Figures of one shot from its signal on the wall.

    ``spectral_correction`` multiplies the calibrated illuminance (hence intensity and flux)
    by its factor F* for the spectral mismatch between the reference and this source.
    """
    warnings: list[str] = list(sig.warnings)
    f_spec = 1.0
    if spectral_correction is not None and calibration is not None:
        f_spec = spectral_correction.spectral_correction_factor
        warnings.extend(spectral_correction.warnings)
    k = calibration.lux_per_signal * f_spec if calibration is not None else 1.0
    grid = sig.grid
    illum = replace(grid, values=(grid.values * np.float32(k)).astype(np.float32))
    if axis_mm is None:
        axis = find_axis(illum, distance_m=distance_m)
    else:
        axis = (float(axis_mm[0]), float(axis_mm[1]))
    imap = intensity_map(illum, axis_mm=axis, distance_m=distance_m)
    unit = "cd" if calibration is not None else "relative"
    smoothed = smoothed_intensity(imap)
    dist = polar_distribution(imap, axis_mm=axis, distance_m=distance_m, unit=unit,
                              smoothed=smoothed)
    peak = dist.peak

    clipped = clipped_peak_fraction(imap, peak=peak, smoothed=smoothed[0])
    if clipped > MAX_CLIPPED_PEAK_FRACTION:
        raise ImageError(
            f"the hotspot is clipped in every exposure ({100 * clipped:.1f} % of the 50 % "
            "region): shorten the exposure, or add a shorter one to the bracket",
            file=file,
            field=where,
        )
    if clipped > 0:
        warnings.append(
            f"{100 * clipped:.2f} % of the 50 % region is clipped in every exposure: the peak "
            "may read slightly low"
        )
    sat_frac = saturated_fraction(imap, peak=peak, smoothed=smoothed[0])

    beam = angle_summary(dist.beam_half_angle_deg)
    field = angle_summary(dist.field_half_angle_deg)
    for name, s in (("beam angle (50 %)", beam), ("field angle (10 %)", field)):
        if s.mean_deg is None:
            warnings.append(
                f"{name}: the crossing lies outside the photo at every azimuth; not reported"
            )
        elif s.found_fraction < 1.0:
            warnings.append(
                f"{name}: the crossing lies outside the photo at "
                f"{100 * (1 - s.found_fraction):.0f} % of azimuths; mean of the others"
            )

    radius_mm = wall.largest_inscribed_radius_mm(grid.footprint_mm, axis) - grid.step_mm
    alpha = largest_cone_half_angle_deg(radius_mm, distance_m=distance_m)
    fill = None
    if grid.saturated.any():
        # Clipped cells carry no value: fill them from their smoothed neighbourhood (a lower
        # bound, since they are brighter than their surroundings).
        fill = np.nan_to_num(smooth_nan(illum.values, 3.0), nan=0.0)
    cone_deg, cone_flux = cumulative_cone_flux(
        illum, axis_mm=axis, distance_m=distance_m, max_half_angle_deg=max(alpha, 0.0),
        fill=fill,
    )
    flux = float(cone_flux[-1]) if alpha > 0 else None
    flux_max = None
    if flux is not None:
        # The cone edge's intensity, averaged over azimuth (smoothed map): with each azimuth
        # falling off beyond its edge value, the light outside is at most 2 pi <I_e> cos(a).
        k_edge = int(np.searchsorted(dist.theta_deg, alpha))
        rows = dist.intensity[max(k_edge - 1, 0):k_edge + 1]
        edge = float(np.nanmean(np.nanmax(rows, axis=0))) if np.isfinite(rows).any() else 0.0
        flux_max = total_flux_upper_bound(flux, edge, half_angle_deg=alpha)
    if alpha <= 0:
        warnings.append("the beam axis is at the photo's edge: no flux cone fits in the photo")

    # What the Monte Carlo needs, in signal units before the calibration constant.
    cos3 = grid_cos3(grid, axis_mm=axis, distance_m=distance_m)
    smoothed_e = (smoothed[0] * cos3 / (distance_m**2 * k)).astype(np.float32)
    profiles = sample_profiles(
        grid, smoothed_e, axis_mm=axis, distance_m=distance_m, dist=dist,
        flux_half_angle_deg=alpha if alpha > 0 else None, sigma_cells=smoothed[1],
        source_pixels_per_cell=sig.source_pixels_per_cell,
        k_sigma_fraction=(spectral_correction.spectral_correction_sigma / f_spec
                          if spectral_correction is not None and calibration is not None
                          else 0.0),
        k_factor=f_spec,
    )

    calibrated = calibration is not None
    cal_rel = calibration.relative_sigma if calibration is not None else 0.0
    d_rel = distance_sigma_m / distance_m
    peak_rel = float(np.hypot(cal_rel, 2.0 * d_rel))
    peak_cd = peak if calibrated else None
    thr = throw_m(peak) if calibrated else None
    return ShotResult(
        label=label,
        zoom=zoom,
        mode=mode,
        beam_angle_deg=beam.mean_deg,
        field_angle_deg=field.mean_deg,
        peak_intensity_cd=peak_cd,
        throw_m=thr,
        flux_lm=flux if calibrated else None,
        flux_half_angle_deg=alpha if alpha > 0 else None,
        axis_mm=axis,
        saturated_fraction=sat_frac,
        relative_peak_intensity=1.0,
        relative_flux=1.0,
        warnings=tuple(warnings),
        beam_angle_sigma_deg=_angle_sigma_deg(
            beam.mean_deg, distance_m=distance_m, distance_sigma_m=distance_sigma_m,
            step_mm=grid.step_mm,
        ),
        field_angle_sigma_deg=_angle_sigma_deg(
            field.mean_deg, distance_m=distance_m, distance_sigma_m=distance_sigma_m,
            step_mm=grid.step_mm,
        ),
        peak_intensity_sigma_cd=peak * peak_rel if calibrated else None,
        throw_sigma_m=(thr * 0.5 * peak_rel) if thr is not None else None,
        flux_sigma_lm=(flux * cal_rel) if (calibrated and flux is not None) else None,
        beam_angle_min_deg=beam.min_deg,
        beam_angle_max_deg=beam.max_deg,
        field_angle_min_deg=field.min_deg,
        field_angle_max_deg=field.max_deg,
        flux_total_max_lm=flux_max if calibrated else None,
        relative_peak_signal=peak * f_spec / k,  # signal units x m^2, spectral factor kept
        distance_m=distance_m,
        cone_half_angle_deg=cone_deg,
        cone_flux=cone_flux,
        distribution=dist,
        intensity_map=imap,
        inputs=sig.inputs,
        mc_profiles=profiles,
        spectral_correction_factor=f_spec,
        luminance_weights=(calibration.luminance_weights if calibration is not None
                           else REC709_LUMINANCE_WEIGHTS),
        spectral_mismatch_f1_prime=(
            spectral_correction.spectral_mismatch_f1_prime
            if spectral_correction is not None else None),
        spectral_correction_sigma=(
            spectral_correction.spectral_correction_sigma
            if spectral_correction is not None and calibration is not None else None),
    )


def _with_relative(shots: list[ShotResult]) -> list[ShotResult]:
    if not shots:
        return shots
    first = shots[0]
    out = []
    for s in shots:
        rel_peak = (s.relative_peak_signal or 0.0) / (first.relative_peak_signal or 1.0)
        rel_flux = None
        if (
            s.cone_flux is not None and first.cone_flux is not None
            and s.flux_half_angle_deg and first.flux_half_angle_deg
        ):
            n = min(len(s.cone_flux), len(first.cone_flux))
            base = float(first.cone_flux[n - 1])
            if base > 0:
                rel_flux = float(s.cone_flux[n - 1]) / base
        out.append(replace(s, relative_peak_intensity=float(rel_peak), relative_flux=rel_flux))
    return out


#: Floor of the pixel uncertainty of detected marker corners (sub-pixel refinement; common
#: practice, no source).
MARKER_CORNER_SIGMA_PX: float = 0.2


def _mapping_points(
    spec: WallSpec, mapping: wall.WallMapping
) -> tuple[np.ndarray, np.ndarray, float]:
    """The points the mapping rests on (px, mm) and their pixel uncertainty.

    Given points: ``points_sigma_px``, else the fit's residuals (more than 4 points), else a
    default for hand-placed points. Markers: every listed marker's corners, placed where the
    mapping puts them, with the fit's RMS error (in px) or a floor for refined corners.
    """
    if spec.points is not None:
        pts = np.asarray(spec.points, dtype=np.float64)
        px, mm = pts[:, :2], pts[:, 2:]
        if spec.points_sigma_px is not None:
            return px, mm, float(spec.points_sigma_px)
        n = len(pts)
        if n > 4:
            # Residuals in pixels of an 8-parameter fit to 2n coordinates.
            back = wall.wall_to_pixel(mapping, mm)
            ss = float(np.sum((back - px) ** 2))
            return px, mm, float(np.sqrt(ss / (2 * n - 8)))
        return px, mm, DEFAULT_POINTS_SIGMA_PX
    centres = spec.markers_mm or {}
    size = spec.marker_size_mm or 0.0
    mm = np.concatenate([markers.marker_corners_mm(c, size).reshape(-1, 2)
                         for c in centres.values()]) if centres else np.zeros((0, 2))
    px = wall.wall_to_pixel(mapping, mm)
    ok = np.all(np.isfinite(px), axis=1)
    mm, px = mm[ok], px[ok]
    scale = float(np.median(wall.mm_per_px(mapping, px))) if len(px) else 1.0
    sigma = spec.points_sigma_px
    if sigma is None:
        sigma = max(MARKER_CORNER_SIGMA_PX, mapping.rms_error_mm / max(scale, 1e-9))
    return px, mm, float(sigma)


def _with_uncertainty(
    shots: list[ShotResult],
    session: Session,
    mapping: wall.WallMapping,
    calibration: Calibration | None,
    exposures: list[linear.Exposure],
) -> list[ShotResult]:
    """Monte Carlo standard uncertainties for every figure (see beamwall.uncertainty)."""
    profiles = [s.mc_profiles for s in shots]
    if not profiles or any(p is None for p in profiles):
        return shots
    cal_rel: dict[str, float] = {}
    ref_d = ref_d_sigma = None
    if calibration is not None:
        for key, v in calibration.budget.items():
            if key == "reference_distance":
                continue
            cal_rel["calibration_pixel_noise" if key == "pixel_noise" else key] = float(v)
        ref_d = calibration.reference.get("distance_m")
        ref_d_sigma = calibration.reference.get("distance_sigma_m") or 0.0
        ref_exp = calibration.exposure
        differs = any(
            abs(e.exposure_s - (ref_exp.get("exposure_s") or e.exposure_s)) > 1e-12
            or abs(e.iso - (ref_exp.get("iso") or e.iso)) > 1e-9
            for e in exposures
        )
        if differs:
            cal_rel["exposure_ratio"] = EXPOSURE_RATIO_SIGMA_FRACTION
        cal_rel["flat_field"] = FLAT_FIELD_SIGMA_FRACTION
    px_all, mm_all, sigma_px = _mapping_points(session.wall, mapping)
    pts_px, pts_mm = (px_all, mm_all) if len(px_all) >= 4 else (None, None)
    inputs = UncertaintyInputs(
        lux_per_signal=calibration.lux_per_signal if calibration is not None else 1.0,
        distance_sigma_m=session.rig.distance_sigma_m or 0.0,
        calibration_rel=cal_rel,
        reference_distance_m=ref_d,
        reference_distance_sigma_m=float(ref_d_sigma or 0.0),
        points_px=pts_px,
        points_mm=pts_mm,
        points_sigma_px=sigma_px,
        points_sigma_mm=session.wall.points_sigma_mm or 0.0,
    )
    mc = propagate(profiles, inputs, calibrated=calibration is not None)
    out = []
    for s, u in zip(shots, mc):
        sig = u.sigma
        out.append(replace(
            s,
            beam_angle_sigma_deg=sig.get("beam_angle_deg") if s.beam_angle_deg else None,
            field_angle_sigma_deg=sig.get("field_angle_deg") if s.field_angle_deg else None,
            peak_intensity_sigma_cd=sig.get("peak_intensity_cd") if s.peak_intensity_cd else None,
            throw_sigma_m=sig.get("throw_m") if s.throw_m else None,
            flux_sigma_lm=sig.get("flux_lm") if s.flux_lm else None,
            uncertainty_budget=u.budget,
            interval95={k: (None if v is None else list(v)) for k, v in u.interval95.items()},
        ))
    return out


def check_calibration(
    calibration: Calibration, sig: ShotSignal, *, force: bool, file: str
) -> list[str]:
    """Refuse (or, with ``force``, warn about) a calibration made for another camera."""
    problems = []
    f = sig.first_frame
    if calibration.encoding != sig.encoding:
        problems.append(
            f"made for encoding '{calibration.encoding}', the photos are '{sig.encoding}'"
        )
    for key, have in (("camera_make", f.make), ("camera_model", f.model)):
        want = getattr(calibration, key)
        if want and have and want.strip() != have.strip():
            problems.append(f"made for {key.split('_')[1]} '{want}', the photos are '{have}'")
    warnings = []
    size = (f.shape[1], f.shape[0])
    if calibration.image_size_px and tuple(calibration.image_size_px) != size:
        warnings.append(
            f"calibration photos were {calibration.image_size_px[0]}x"
            f"{calibration.image_size_px[1]} px, these are {size[0]}x{size[1]}: same lens and "
            "processing?"
        )
    if problems:
        msg = "; ".join(problems)
        if not force:
            raise CalibrationError(msg + " (use --force to apply it anyway)", file=file)
        warnings.append("calibration applied with --force although " + msg)
    return warnings


def measure_session(
    session: Session,
    calibration: Calibration | None,
    *,
    force: bool = False,
    progress: ProgressCallback = _noop,
    calibration_file: str | None = None,
    uncertainty: bool = True,
) -> SessionResult:
    """Measure every shot of a session.

    Parameters
    ----------
    session : Session
    calibration : Calibration or None
        Without one, angles and ``relative_*`` figures only.
    force : bool, keyword-only
        Apply a calibration made for another camera or encoding (with a warning).
    progress : callable, keyword-only
    uncertainty : bool, keyword-only
        Run the Monte Carlo uncertainty (default); without it the sigmas are the first-order
        estimate of :func:`analyse_shot` (calibration, distances, grid resolution).

    Returns
    -------
    SessionResult
    """
    file = str(session.path)
    mapping = _mapping(session.wall, file=file, camera=session.camera)
    total = len(session.shots)
    results: list[ShotResult] = []
    inputs: list[InputFile] = [InputFile("session", file, sha256_file(session.path))]
    exposures_seen: list[linear.Exposure] = []
    spectral_ctx = _SpectralContext(session, calibration, calibration_file)
    # With markers, each shot's photos are compared with the setup photo: a camera moved
    # since then makes the mapping wrong (detectable where the photos share fixed structure).
    setup_pixels = (img.read_frame(session.wall.setup_image).pixels
                    if session.wall.setup_image is not None else None)
    for i, shot in enumerate(session.shots):
        progress(shot.label, i, total)
        where = shot_field(shot.number, shot.label)
        sig = load_shot_signal(
            shot.images, shot.darks, camera=session.camera, own=_shot_own(shot),
            mapping=mapping, where=where, file=file,
            fallback=dict(calibration.exposure) if calibration is not None else None,
            wall_points=session.wall.points,
            weights=(calibration.luminance_weights if calibration is not None
                     else REC709_LUMINANCE_WEIGHTS),
        )
        extra: list[str] = []
        if setup_pixels is not None and setup_pixels.shape[:2] == sig.first_frame.shape:
            moved = markers.moved_camera_warning(setup_pixels, sig.first_frame.pixels,
                                                 name=sig.first_frame.path.name)
            if moved:
                extra.append(moved)
        if calibration is not None:
            extra = check_calibration(calibration, sig, force=force, file=calibration_file or "")
        corr = spectral_ctx.correction(shot, file=file)
        res = analyse_shot(
            sig, label=shot.label, zoom=shot.zoom, mode=shot.mode,
            distance_m=session.rig.distance_m,
            distance_sigma_m=session.rig.distance_sigma_m or 0.0,
            axis_mm=session.wall.axis_mm, calibration=calibration, file=file, where=where,
            spectral_correction=corr,
        )
        if extra:
            res = replace(res, warnings=tuple(extra) + res.warnings)
        results.append(res)
        inputs.extend(sig.inputs)
        exposures_seen.extend(sig.exposures)
    progress("done", total, total)
    results = _with_relative(results)
    if uncertainty:
        results = _with_uncertainty(results, session, mapping, calibration, exposures_seen)
    comparison = session_comparisons(
        results, session.shots, session_electrical_spec=session.electrical, source=file
    )
    own_checks = dict(comparison.shot_electrical)
    results = [
        replace(r, electrical=own_checks[r.label].to_dict()) if r.label in own_checks else r
        for r in results
    ]
    cmp = comparison.to_dict()
    cal_summary = None
    if calibration is not None:
        cal_summary = {
            "file": calibration_file,
            "lux_per_signal": calibration.lux_per_signal,
            "lux_per_signal_sigma": calibration.lux_per_signal_sigma,
            "camera_make": calibration.camera_make,
            "camera_model": calibration.camera_model,
            "encoding": calibration.encoding,
            "reference": calibration.reference,
            "created_utc": calibration.created_utc,
        }
        if calibration_file:
            inputs.append(
                InputFile("calibration", calibration_file, sha256_file(Path(calibration_file)))
            )
    base = session.path.parent
    inputs = [replace(i, path=relative_path(i.path, base)) for i in inputs]
    results = [replace(r, inputs=tuple(replace(i, path=relative_path(i.path, base))
                                       for i in r.inputs)) for r in results]
    return SessionResult(
        beamwall_version=__version__,
        calibrated=calibration is not None,
        shots=tuple(results),
        title=session.title,
        session_file=file,
        calibration=cal_summary,
        zoom=cmp.get("zoom"),
        modes=tuple(cmp.get("modes") or ()),
        electrical=cmp.get("electrical"),
        claims=tuple(cmp.get("claims") or ()),
        warnings=tuple(mapping.warnings) + tuple(comparison.warnings) + spectral_ctx.warnings(),
        inputs=tuple(inputs),
        created_utc=_utc_now(),
        settings={
            "distance_m": session.rig.distance_m,
            "distance_sigma_m": session.rig.distance_sigma_m,
            "wall_rms_error_mm": mapping.rms_error_mm,
            "wall_points": mapping.n_points,
            "axis_mm": None if session.wall.axis_mm is None else list(session.wall.axis_mm),
        },
    )


def calibrate_session(
    cs: CalibrationSession, *, progress: ProgressCallback = _noop
) -> Calibration:
    """Make a calibration from a calibration session (a reference lamp or a lux reading)."""
    file = str(cs.path)
    ref = cs.reference
    progress("reference", 0, 1)
    mapping = _mapping(cs.wall, file=file, camera=cs.camera)
    own = {"exposures_s": ref.exposures_s, "exposure_s": ref.exposure_s,
           "f_number": ref.f_number, "iso": ref.iso}
    # With the camera's spectral sensitivity, the luminance signal uses the channel weights
    # that bring it closest to V(lambda) (lowest f1'); measurements then use the same weights.
    weights = REC709_LUMINANCE_WEIGHTS
    spectral_note: dict[str, Any] | None = None
    if cs.camera_sensitivity_csv is not None:
        sens = spectra_io.read_camera_sensitivity_csv(cs.camera_sensitivity_csv)
        wfit = spectral.optimal_weights(sens)
        weights = (float(wfit.weights[0]), float(wfit.weights[1]), float(wfit.weights[2]))
        spectral_note = {"camera_sensitivity": sens.description,
                         "f1_prime": wfit.f1_prime, "rec709_f1_prime": wfit.rec709_f1_prime}
    sig = load_shot_signal(
        ref.images, ref.darks, camera=cs.camera, own=own, mapping=mapping,
        where="[reference]", file=file, wall_points=cs.wall.points, weights=weights,
    )
    fit: ReferenceFit
    if ref.intensity_cd is not None:
        if ref.distance_m is None or ref.axis_mm is None:
            raise InputError("needs distance_m and axis_mm with intensity_cd", file=file,
                             field="[reference]")
        fit = fit_lamp_reference(
            sig.grid, intensity_cd=ref.intensity_cd, distance_m=ref.distance_m,
            axis_mm=ref.axis_mm, intensity_sigma_cd=ref.intensity_sigma_cd or 0.0,
            distance_sigma_m=ref.distance_sigma_m or 0.0,
            source_pixels_per_cell=sig.source_pixels_per_cell,
        )
        reference = {
            "form": "lamp", "intensity_cd": ref.intensity_cd,
            "intensity_sigma_cd": ref.intensity_sigma_cd, "distance_m": ref.distance_m,
            "distance_sigma_m": ref.distance_sigma_m, "axis_mm": list(ref.axis_mm),
            "cct_k": ref.cct_k,
        }
    elif ref.illuminance_lx is not None and ref.at_mm is not None:
        fit = fit_lux_reference(
            sig.grid, illuminance_lx=ref.illuminance_lx, at_mm=ref.at_mm,
            illuminance_sigma_lx=ref.illuminance_sigma_lx or 0.0,
            source_pixels_per_cell=sig.source_pixels_per_cell,
        )
        reference = {
            "form": "lux", "illuminance_lx": ref.illuminance_lx,
            "illuminance_sigma_lx": ref.illuminance_sigma_lx, "at_mm": list(ref.at_mm),
            "cct_k": ref.cct_k,
        }
    else:
        raise InputError("give intensity_cd with distance_m and axis_mm, or illuminance_lx "
                         "with at_mm", file=file, field="[reference]")
    progress("reference", 1, 1)
    ref_sd = spectral.reference_spectrum(
        cct_k=ref.cct_k,
        spectrum=None if ref.spectrum_csv is None
        else spectra_io.read_spectrum_csv(ref.spectrum_csv),
    )
    f = sig.first_frame
    e0 = sig.exposures[0]
    warnings = list(sig.warnings)
    if fit.scatter_fraction > 0.05:
        warnings.append(
            f"the reference disc varies by {100 * fit.scatter_fraction:.1f} % (std): is the "
            "reference lamp even near its axis, and the wall matte?"
        )
    inputs = (
        {"role": "calibration session", "path": cs.path.name, "sha256": sha256_file(cs.path)},
        *({"role": i.role, "path": relative_path(i.path, cs.path.parent), "sha256": i.sha256}
          for i in sig.inputs),
    )
    return Calibration(
        lux_per_signal=fit.lux_per_signal,
        lux_per_signal_sigma=fit.lux_per_signal_sigma,
        encoding=sig.encoding,
        luminance_weights=weights,
        camera_make=f.make,
        camera_model=f.model,
        image_size_px=(f.shape[1], f.shape[0]),
        focal_length_px=sig.focal_length_px,
        exposure={
            "exposure_s": e0.exposure_s,
            "f_number": None if "f_number" in sig.assumed else e0.f_number,
            "iso": None if "iso" in sig.assumed else e0.iso,
        },
        reference=reference,
        budget=fit.budget,
        warnings=tuple(warnings),
        created_utc=_utc_now(),
        beamwall_version=__version__,
        inputs=inputs,
        reference_spectrum=spectral.spectrum_to_dict(ref_sd),
        spectral=spectral_note,
    )
