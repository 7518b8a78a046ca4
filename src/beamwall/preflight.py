r"""Pre-flight check of a session's photos, before the user leaves the setup.

A fast look at every photo: is the wall mapping there (points or markers), is every image's
exposure known and the bracket consistent, is the hotspot clipped, does the beam stand out of
the dark frame's noise, is the 10 % field inside the frame, how large a cone the photo
covers, and is the torch far enough from the wall for its peak intensity. Each finding says
what to change. Pure: the caller reads the photos (:func:`session_paths` lists them) and
passes them in as :class:`beamwall.images.Frame` objects.

Speed: every photo is subsampled by an integer stride to at most ``max_side_px`` on its long
side (a stride keeps clipped codes and per-pixel noise as they are, where averaging would
hide both); the computation then costs milliseconds per photo and decoding dominates.

Severities: ``fail`` (the session is not usable as it is: ``beamwall check`` exits 1),
``warn`` (usable, with a caveat) and ``ok`` (a passed check worth stating).

Far field (the distance rule). No clause of ANSI/PLATO FL 1 gives the distance for the peak
intensity; general photometry asks for at least 5 times the largest luminous dimension, and a
reflector's far field starts near ``D / theta`` (D its aperture, theta the full beam angle in
radians) [PHOT]_. Since ``d >= D / theta`` is ``d theta >= D``, and ``d theta`` is about the
width of the 50 % spot on the wall, the rule reads: **the 50 % spot on the wall must be wider
than the torch's front lens**. The session gives no lens size, so the check reports the spot's
width and fails when it is below 20 mm (narrower than any torch head's lens), warns below
60 mm (a mid-size head's lens; both thresholds common practice, no source) and, given the
lens's diameter (``lens_mm``), checks both rules exactly.

References
----------
.. [PHOT] EN 13032-1 as quoted by a lighting-lab note (distance at least 5 times the largest
   luminous dimension; 10:1 for distributions far from cosine); the reflector crossover
   ("far field from about D / theta") as derived in the project's reference notes on
   photometry, section 1 (from memory, to confirm).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import asdict, dataclass, field
from pathlib import Path
from typing import Any

import cv2
import numpy as np

from beamwall import images as img
from beamwall import linear, markers, wall
from beamwall.distribution import smooth_nan
from beamwall.errors import BeamwallError
from beamwall.session import CameraSpec, Session, ShotSpec

__all__ = [
    "Finding",
    "ShotCheck",
    "CheckReport",
    "session_paths",
    "check_session",
    "MAX_CLIPPED_PEAK_FRACTION",
]

#: Share of the 50 % region that may be clipped in every exposure (as ``measure`` allows).
MAX_CLIPPED_PEAK_FRACTION: float = 0.01
#: Per-pixel signal-to-noise ratio at the 10 % level below which the field edge is lost (fail)
#: and below which it is marginal (warn). Common practice, no source.
MIN_FIELD_SNR_FAIL: float = 2.0
MIN_FIELD_SNR_WARN: float = 5.0
#: Brightest usable exposure's peak below this fraction of full scale: lengthen it (warn).
LOW_PEAK_FRACTION: float = 0.25
#: Peak target when suggesting a new exposure, fraction of full scale.
TARGET_PEAK_FRACTION: float = 0.7
#: Room light (dark frame) above this fraction of the peak: warn.
AMBIENT_WARN_FRACTION: float = 0.10
#: Background without a dark frame above this fraction of the peak: warn.
BACKGROUND_WARN_FRACTION: float = 0.02
#: 50 % spot widths (mm) below which the far-field rule fails / warns without a lens size.
SPOT_FAIL_MM: float = 20.0
SPOT_WARN_MM: float = 60.0
#: Bracket neighbours more than this many stops apart: thin overlap for merging (warn).
MAX_BRACKET_GAP_STOPS: float = 4.0
#: Dark frame settings differing from the image's by more than this fraction: warn.
DARK_SETTINGS_TOLERANCE: float = 0.05


@dataclass(frozen=True)
class Finding:
    """One result of the check.

    Attributes
    ----------
    code : str
        Stable identifier: ``mapping``, ``markers``, ``setup-size``, ``camera-moved``,
        ``image-size``, ``exposure-missing``, ``bracket``, ``dark-settings``,
        ``hotspot-clipped``, ``signal-low``, ``exposure-low``, ``ambient``, ``field-cut``,
        ``cone``, ``far-field``.
    severity : {"fail", "warn", "ok"}
    message : str
        What was found.
    fix : str or None
        What to do about it.
    shot : str or None
        The shot's label (None for the session's wall and setup).
    """

    code: str
    severity: str
    message: str
    fix: str | None = None
    shot: str | None = None

    def to_dict(self) -> dict[str, Any]:
        """As a JSON-ready dict."""
        return asdict(self)


@dataclass(frozen=True)
class ShotCheck:
    """Numbers the check measured on one shot (approximate: subsampled, no calibration).

    Attributes
    ----------
    label : str
    stride : int
        Subsampling stride used, px.
    peak_fraction : float or None
        The best unclipped exposure's peak, fraction of full scale.
    clipped_fraction : float
        Share of the 50 % region clipped in every exposure.
    field_snr : float or None
        Per-pixel signal-to-noise ratio at 10 % of the peak.
    field_cut_sides : tuple of str
        Photo sides the 10 % field touches (``left``, ``right``, ``top``, ``bottom``).
    field_half_angle_max_deg : float or None
        Widest polar angle of the 10 % region, deg (a lower bound when cut).
    beam_angle_approx_deg : float or None
        Full angle of the circle with the 50 % region's area, deg.
    spot_width_mm : float or None
        Diameter of that circle on the wall, mm.
    cone_half_angle_deg : float or None
        Half angle of the largest cone about the axis whose circle lies in the photo, deg.
    axis_mm : (float, float) or None
    """

    label: str
    stride: int
    peak_fraction: float | None = None
    clipped_fraction: float = 0.0
    field_snr: float | None = None
    field_cut_sides: tuple[str, ...] = ()
    field_half_angle_max_deg: float | None = None
    beam_angle_approx_deg: float | None = None
    spot_width_mm: float | None = None
    cone_half_angle_deg: float | None = None
    axis_mm: tuple[float, float] | None = None

    def to_dict(self) -> dict[str, Any]:
        """As a JSON-ready dict."""
        d = asdict(self)
        d["field_cut_sides"] = list(self.field_cut_sides)
        d["axis_mm"] = None if self.axis_mm is None else list(self.axis_mm)
        return d


@dataclass(frozen=True)
class CheckReport:
    """All findings of a session's pre-flight check."""

    findings: tuple[Finding, ...]
    shots: tuple[ShotCheck, ...] = ()
    mapping_rms_mm: float | None = None
    markers_found: tuple[int, ...] | None = None
    warnings: tuple[str, ...] = field(default=())

    @property
    def usable(self) -> bool:
        """True when no finding fails."""
        return not any(f.severity == "fail" for f in self.findings)

    def to_dict(self) -> dict[str, Any]:
        """As a JSON-ready dict (``usable``, ``findings``, ``shots``, ...)."""
        return {
            "usable": self.usable,
            "findings": [f.to_dict() for f in self.findings],
            "shots": [s.to_dict() for s in self.shots],
            "mapping_rms_mm": self.mapping_rms_mm,
            "markers_found": None if self.markers_found is None else list(self.markers_found),
        }


def session_paths(session: Session) -> tuple[Path, ...]:
    """Every photo the check reads: the setup photo, then each shot's images and darks.

    Examples
    --------
    >>> from beamwall.session import Rig, WallSpec
    >>> s = Session(path=Path("/s.toml"), rig=Rig(2.0), wall=WallSpec(points=()),
    ...             camera=CameraSpec(), shots=(ShotSpec("a", (Path("/a.jpg"),)),))
    >>> session_paths(s)
    (PosixPath('/a.jpg'),)
    """
    out: list[Path] = []
    if session.wall.setup_image is not None:
        out.append(session.wall.setup_image)
    for shot in session.shots:
        out.extend(shot.images)
        out.extend(shot.darks)
    seen: set[Path] = set()
    return tuple(p for p in out if not (p in seen or seen.add(p)))  # type: ignore[func-returns-value]


# ---------------------------------------------------------------------------------------------


def _resolve(frame: img.Frame, index: int, shot: ShotSpec, camera: CameraSpec
             ) -> tuple[linear.Exposure | None, list[str]]:
    """Exposure as ``measure`` resolves it (shot, then EXIF, then [camera]); missing names."""
    values: dict[str, float | None] = {}
    t = shot.exposures_s[index] if shot.exposures_s else shot.exposure_s
    values["exposure_s"] = t if t is not None else (frame.exposure_s or camera.exposure_s)
    for key in ("f_number", "iso"):
        v = getattr(shot, key)
        values[key] = v if v is not None else (getattr(frame, key) or getattr(camera, key))
    missing = [k for k, v in values.items() if v is None]
    if missing:
        return None, missing
    return linear.Exposure(float(values["exposure_s"]), float(values["f_number"]),  # type: ignore[arg-type]
                           float(values["iso"])), []  # type: ignore[arg-type]


def _stops(ratio: float) -> str:
    n = max(1, int(math.ceil(math.log2(ratio) - 0.2))) if ratio > 1 else 1
    return f"about {n} stop{'s' if n != 1 else ''}"


def _noise_sigma(value: np.ndarray, mask: np.ndarray) -> float | None:
    """Robust per-pixel noise from horizontal neighbour differences inside ``mask``."""
    d = value[:, 1:] - value[:, :-1]
    m = mask[:, 1:] & mask[:, :-1] & np.isfinite(d)
    if np.count_nonzero(m) < 50:
        return None
    dd = d[m]
    mad = float(np.median(np.abs(dd - np.median(dd))))
    sigma = 1.4826 * mad / math.sqrt(2.0)
    if sigma == 0:
        sigma = float(np.std(dd)) / math.sqrt(2.0)
    return sigma if sigma > 0 else None


def _component_with(region: np.ndarray, inten: np.ndarray, sat: np.ndarray) -> np.ndarray:
    """The 8-connected parts of ``region`` that hold the peak or a clipped pixel."""
    if not region.any():
        return region
    n, labels = cv2.connectedComponents(region.astype(np.uint8), connectivity=8)
    keep = np.zeros(n, bool)
    if np.any(np.isfinite(inten)):
        iy, ix = np.unravel_index(int(np.nanargmax(inten)), inten.shape)
        keep[labels[iy, ix]] = True
    keep[np.unique(labels[sat])] = True
    keep[0] = False
    return keep[labels]


def _turn_advice(sides: tuple[str, ...]) -> str:
    horiz = {"left", "right"} & set(sides)
    vert = {"top", "bottom"} & set(sides)
    if len(horiz) == 2 or len(vert) == 2:
        return ("move the camera back or use a wider lens setting (the field is cut on "
                "opposite sides)")
    turns = []
    if horiz:
        turns.append(f"turn it {'left' if 'left' in horiz else 'right'}")
    if vert:
        turns.append(f"tilt it {'up' if 'top' in vert else 'down'}")
    return "move the camera back or " + " and ".join(turns) + " (or use a wider lens setting)"


def _mapping_findings(
    session: Session, frames: Mapping[Path, img.Frame], shape: tuple[int, int] | None,
    distortion: Any = None,
) -> tuple[wall.WallMapping | None, list[Finding], tuple[int, ...] | None]:
    spec = session.wall
    out: list[Finding] = []
    if spec.points is not None:
        pts = np.asarray(spec.points, dtype=np.float64)
        try:
            m = wall.fit_homography(pts[:, :2], pts[:, 2:])
        except BeamwallError as exc:
            out.append(Finding("mapping", "fail", f"wall points: {exc.message}",
                               "check the pixel and wall positions in [wall] points"))
            return None, out, None
        out.append(Finding("mapping", "ok",
                           f"wall points: {m.n_points} points, RMS error {m.rms_error_mm:.2g} mm"))
        out.extend(Finding("mapping", "warn", w) for w in m.warnings)
        return m, out, None
    setup = frames[spec.setup_image]  # type: ignore[index]
    if shape is not None and setup.shape != shape:
        out.append(Finding(
            "setup-size", "fail",
            f"setup photo {setup.path.name} is {setup.shape[1]}x{setup.shape[0]} px, the beam "
            f"photos are {shape[1]}x{shape[0]} px: the marker mapping cannot apply to them",
            "take the setup photo with the same camera, lens, zoom and image size as the beam "
            "photos, from the same tripod position"))
        return None, out, None
    det = markers.detect_markers(setup.pixels)
    try:
        m = markers.wall_mapping_from_markers(
            setup.pixels, markers_mm=spec.markers_mm or {},
            marker_size_mm=float(spec.marker_size_mm or 0.0), detection=det,
            distortion=distortion)
    except BeamwallError as exc:
        out.append(Finding(
            "markers", "fail", f"setup photo {setup.path.name}: {exc.message}",
            "retake the setup photo with the room lit and every sheet in the frame, flat and "
            "in focus; check the ids and positions in markers_mm"))
        return None, out, det.ids
    listed = set((spec.markers_mm or {}).keys())
    found = tuple(sorted(i for i in det.ids if i in listed))
    out.append(Finding(
        "markers", "ok",
        f"markers found: {', '.join(map(str, found))} of {len(listed)}; wall mapping from "
        f"{m.n_points} corners, RMS error {m.rms_error_mm:.2g} mm"))
    out.extend(Finding("markers", "warn", w) for w in m.warnings)
    return m, out, det.ids


def _shot_check(
    shot: ShotSpec,
    session: Session,
    frames: Mapping[Path, img.Frame],
    mapping: wall.WallMapping | None,
    *,
    lens_mm: float | None,
    max_side_px: int,
) -> tuple[ShotCheck, list[Finding]]:
    label = shot.label
    out: list[Finding] = []
    ims = [frames[p] for p in shot.images]
    darks = [frames[p] for p in shot.darks]
    first = ims[0]
    k = max(1, math.ceil(max(first.shape) / max_side_px))
    res = ShotCheck(label=label, stride=k)

    # Sizes.
    for f in ims[1:] + darks:
        if f.shape != first.shape:
            out.append(Finding(
                "image-size", "fail",
                f"{f.path.name} is {f.shape[1]}x{f.shape[0]} px, {first.path.name} "
                f"{first.shape[1]}x{first.shape[0]} px", "take every photo of a shot at one "
                "image size", label))
    if out:
        return res, out

    # Exposure metadata and the bracket.
    exps: list[linear.Exposure] = []
    for i, f in enumerate(ims):
        e, missing = _resolve(f, i, shot, session.camera)
        if e is None:
            out.append(Finding(
                "exposure-missing", "fail",
                f"{f.path.name}: no {', '.join(missing)} (no EXIF value, none in the session)",
                f"give {', '.join(missing)} in the shot or in [camera] (as set on the camera)",
                label))
        else:
            exps.append(e)
    if len(exps) != len(ims):
        return res, out
    if len(exps) > 1:
        fn = {e.f_number for e in exps}
        iso = {e.iso for e in exps}
        if len(fn) > 1 or len(iso) > 1:
            out.append(Finding(
                "bracket", "warn",
                f"the bracket mixes apertures {sorted(fn)} or ISO {sorted(iso)}",
                "bracket with the exposure time only (fixed aperture and ISO)", label))
        factors = sorted(linear.exposure_factor(e) for e in exps)
        gaps = [math.log2(b / a) for a, b in zip(factors, factors[1:])]
        if any(g < 0.1 for g in gaps):
            out.append(Finding("bracket", "warn", "two images of the bracket have the same "
                               "exposure", "check the exposure times (EXIF or exposures_s)",
                               label))
        if any(g > MAX_BRACKET_GAP_STOPS for g in gaps):
            out.append(Finding(
                "bracket", "warn",
                f"the bracket has a gap of {max(gaps):.1f} stops: little overlap to merge on",
                "add an exposure in between (steps of 2 to 3 stops)", label))
    for j, d in enumerate(darks):
        ref = ims[j] if len(darks) == len(ims) else ims[0]
        for key in ("exposure_s", "f_number", "iso"):
            a, b = getattr(d, key), getattr(ref, key)
            if a and b and abs(a / b - 1.0) > DARK_SETTINGS_TOLERANCE:
                out.append(Finding(
                    "dark-settings", "warn",
                    f"dark frame {d.path.name} has {key} {a:g}, {ref.path.name} {b:g}",
                    "take the dark frame at the image's settings, torch off", label))
                break

    # Signal on the subsampled photos.
    encoding = session.camera.encoding or ("srgb" if first.bit_depth == 8 else "linear")
    sub = [f.pixels[::k, ::k] for f in ims]
    dark_sub: list[np.ndarray | None]
    if not darks:
        dark_sub = [None] * len(ims)
    elif len(darks) == 1:
        dark_sub = [darks[0].pixels[::k, ::k]] + [None] * (len(ims) - 1)
    else:
        dark_sub = [d.pixels[::k, ::k] for d in darks]
    focal = img.focal_length_px(first, override_px=session.camera.focal_length_px)
    sig = linear.normalise(sub, exps, darks=dark_sub, encoding=encoding,
                           black_level=session.camera.black_level or 0.0,
                           white_level=session.camera.white_level,
                           focal_length_px=None if focal is None else focal / k)
    value = sig.value
    sat = sig.saturated
    h, w = value.shape
    vv, uu = np.mgrid[0:h, 0:w]
    upx = np.column_stack([(uu * k).ravel(), (vv * k).ravel()]).astype(np.float64)
    d_mm = 1000.0 * session.rig.distance_m
    if mapping is not None:
        wxy = wall.pixel_to_wall(mapping, upx).reshape(h, w, 2)
    else:
        wxy = None

    smooth = smooth_nan(value, 1.5)
    if not np.any(np.isfinite(smooth)) and not sat.any():
        out.append(Finding("signal-low", "fail", "no usable pixel in the photo",
                           "retake the photo", label))
        return res, out
    peak_sig = float(np.nanmax(smooth)) if np.any(np.isfinite(smooth)) else 0.0

    # Axis: the session's, else the intensity-weighted centroid of the 50 % region.
    axis_mm: tuple[float, float] | None = None
    if wxy is not None:
        if session.wall.axis_mm is not None:
            axis_mm = (float(session.wall.axis_mm[0]), float(session.wall.axis_mm[1]))
        else:
            reg = (smooth >= 0.5 * peak_sig) | sat
            wts = np.where(reg, np.nan_to_num(smooth, nan=peak_sig), 0.0)
            good = reg & np.all(np.isfinite(wxy), axis=2)
            if np.any(good):
                ww = wts[good]
                axis_mm = (float(np.sum(wxy[good][:, 0] * ww) / np.sum(ww)),
                           float(np.sum(wxy[good][:, 1] * ww) / np.sum(ww)))
    # Relative intensity I ~ E / cos^3(theta) (the wall's obliquity), else the signal.
    if wxy is not None and axis_mm is not None:
        r = np.hypot(wxy[..., 0] - axis_mm[0], wxy[..., 1] - axis_mm[1])
        cos3 = wall.obliquity_cos3(r, 0.0, axis_mm=(0.0, 0.0), distance_m=d_mm / 1000.0)
        inten = smooth / cos3
        theta = np.degrees(np.arctan2(r, d_mm))
    else:
        inten = smooth
        theta = None
    peak_i = float(np.nanmax(inten)) if np.any(np.isfinite(inten)) else 0.0

    # Hotspot clipping.
    region50 = ((inten >= 0.5 * peak_i) & np.isfinite(inten)) | sat
    n50 = int(np.count_nonzero(region50))
    clipped = float(np.count_nonzero(sat & region50)) / max(n50, 1)
    res_kw: dict[str, Any] = {"clipped_fraction": clipped}
    if clipped > MAX_CLIPPED_PEAK_FRACTION:
        # A Gaussian beam's region above level L has area ~ ln(P / L): with x = ln(P / C) the
        # clipped share of the 50 % region is x / (x + ln 2) (derived; common practice).
        rr = min(clipped, 0.95)
        over_stops = rr / (1.0 - rr)
        out.append(Finding(
            "hotspot-clipped", "fail",
            f"the hotspot is clipped in every exposure ({100 * clipped:.0f} % of the 50 % "
            "region)",
            f"shorten the exposure by {_stops(2.0 ** (over_stops + 0.5))} (or add a shorter "
            "exposure to the bracket)", label))
    elif clipped > 0:
        out.append(Finding(
            "hotspot-clipped", "warn",
            f"{100 * clipped:.2f} % of the 50 % region is clipped in every exposure",
            "shorten the exposure by about 1 stop for a safe margin", label))

    # Exposure level: the best unclipped exposure's peak, fraction of full scale.
    if peak_sig > 0:
        iy, ix = np.unravel_index(int(np.nanargmax(smooth)), smooth.shape)
        fall = 1.0
        if focal is not None:
            fall = float(linear.natural_falloff((h, w), focal / k)[iy, ix])
        levels = [peak_sig * linear.exposure_factor(e) * fall for e in exps]
        usable_levels = [v for v in levels if v < 1.0]
        pf = max(usable_levels) if usable_levels else min(levels)
        res_kw["peak_fraction"] = pf
        if pf < LOW_PEAK_FRACTION and clipped <= MAX_CLIPPED_PEAK_FRACTION:
            out.append(Finding(
                "exposure-low", "warn",
                f"the peak reaches only {100 * pf:.2g} % of full scale",
                f"lengthen the exposure by {_stops(TARGET_PEAK_FRACTION / pf)}", label))

    # Noise and the 10 % edge.
    if peak_i > 0:
        off = np.isfinite(inten) & (inten < 0.05 * peak_i)
        noise = _noise_sigma(value, off)
        if noise is None:
            noise = _noise_sigma(value, np.isfinite(value))
        if noise is not None:
            snr = 0.1 * peak_sig / noise
            res_kw["field_snr"] = snr
            if snr < MIN_FIELD_SNR_FAIL:
                gain = (MIN_FIELD_SNR_WARN / max(snr, 1e-6)) ** 2
                out.append(Finding(
                    "signal-low", "fail",
                    f"the beam is too faint above the dark frame's noise: at 10 % of the peak "
                    f"the signal is {snr:.1f} times the noise", f"lengthen the exposure by "
                    f"{_stops(gain)}, darken the room, or bracket a longer exposure", label))
            elif snr < MIN_FIELD_SNR_WARN:
                out.append(Finding(
                    "signal-low", "warn",
                    f"at 10 % of the peak the signal is only {snr:.1f} times the noise",
                    "lengthen the exposure by about 1 stop or bracket a longer one", label))
        if darks:
            dark_val = linear.normalise([darks[0].pixels[::k, ::k]], [exps[0]], darks=[None],
                                        encoding=encoding,
                                        black_level=session.camera.black_level or 0.0,
                                        white_level=session.camera.white_level).value
            amb = float(np.nanmedian(dark_val[region50])) if n50 else 0.0
            if amb > AMBIENT_WARN_FRACTION * peak_sig:
                out.append(Finding(
                    "ambient", "warn",
                    f"the room light is {100 * amb / peak_sig:.0f} % of the beam's peak",
                    "darken the room (the dark frame removes it, at the cost of noise)", label))
        else:
            bg = float(np.nanmedian(value[off])) if np.any(off) else 0.0
            if bg > BACKGROUND_WARN_FRACTION * peak_sig:
                out.append(Finding(
                    "ambient", "warn",
                    f"no dark frame, and the background is {100 * bg / peak_sig:.1f} % of the "
                    "peak: room light widens the field angle",
                    "take a dark frame (torch off, same settings) or darken the room", label))

    # The 10 % field inside the frame: the connected region around the peak (noise specks
    # elsewhere do not count); not judged when the 10 % level is lost in noise.
    region10 = ((inten >= 0.1 * peak_i) & np.isfinite(inten)) | sat
    region10 = _component_with(region10, inten, sat)
    if res_kw.get("field_snr") is not None and res_kw["field_snr"] < MIN_FIELD_SNR_FAIL:
        region10 = np.zeros_like(region10)
    sides = tuple(s for s, edge in (("left", region10[:, 0]), ("right", region10[:, -1]),
                                    ("top", region10[0, :]), ("bottom", region10[-1, :]))
                  if edge.any())
    res_kw["field_cut_sides"] = sides
    if sides:
        out.append(Finding(
            "field-cut", "fail",
            f"the 10 % field is cut by the photo's {' and '.join(sides)} "
            f"edge{'s' if len(sides) > 1 else ''}", _turn_advice(sides), label))
    if theta is not None and axis_mm is not None and mapping is not None:
        res_kw["axis_mm"] = axis_mm
        field_max = float(np.max(theta[region10])) if region10.any() else None
        res_kw["field_half_angle_max_deg"] = field_max
        # 50 % spot: the circle of the 50 % region's wall area.
        scale = wall.mm_per_px(mapping, upx).reshape(h, w) * k
        area = float(np.nansum(np.where(region50, scale**2, 0.0)))
        spot = 2.0 * math.sqrt(area / math.pi)
        beam_deg = 2.0 * math.degrees(math.atan(spot / 2.0 / d_mm))
        res_kw["spot_width_mm"] = spot
        res_kw["beam_angle_approx_deg"] = beam_deg
        try:
            foot = wall.footprint_mm(mapping, first.shape)
            radius = wall.largest_inscribed_radius_mm(foot, axis_mm)
        except BeamwallError:
            radius = 0.0
        cone = math.degrees(math.atan(radius / d_mm))
        res_kw["cone_half_angle_deg"] = cone
        if not sides and field_max is not None:
            if cone < field_max:
                out.append(Finding(
                    "cone", "warn",
                    f"the largest cone inside the photo has a half angle of {cone:.1f} deg; the "
                    f"field reaches {field_max:.1f} deg: the flux leaves part of the field out",
                    "move the camera back or use a wider lens setting, keeping the beam "
                    "centred", label))
            else:
                out.append(Finding(
                    "cone", "ok", f"the photo holds a {cone:.1f} deg cone, the field reaches "
                    f"{field_max:.1f} deg", None, label))
        # Far field.
        dist_m = session.rig.distance_m
        theta_rad = 2.0 * math.atan(spot / 2.0 / d_mm)
        if lens_mm is not None:
            need_m = max(5.0 * lens_mm, lens_mm / max(theta_rad, 1e-9)) / 1000.0
            if dist_m < need_m:
                out.append(Finding(
                    "far-field", "fail",
                    f"at {dist_m:g} m a {lens_mm:g} mm lens is not in its far field (the "
                    f"50 % spot is {spot:.0f} mm wide; needs at least {need_m:.2f} m)",
                    f"move the torch back to at least {need_m:.1f} m", label))
            else:
                out.append(Finding(
                    "far-field", "ok", f"a {lens_mm:g} mm lens is in its far field at "
                    f"{dist_m:g} m (needs {need_m:.2f} m)", None, label))
        else:
            need40 = 40.0 / max(theta_rad, 1e-9) / 1000.0
            msg = (f"the 50 % spot is {spot:.0f} mm wide: the peak intensity holds only for a "
                   f"front lens narrower than that (D / theta rule)")
            fix = (f"move the torch back (a 40 mm lens needs at least {need40:.1f} m), or give "
                   "the lens diameter (--lens-mm) for an exact check")
            if spot < SPOT_FAIL_MM:
                out.append(Finding("far-field", "fail", msg, fix, label))
            elif spot < SPOT_WARN_MM:
                out.append(Finding("far-field", "warn", msg, fix, label))
    from dataclasses import replace

    return replace(res, **res_kw), out


def check_session(
    session: Session,
    frames: Mapping[Path, img.Frame],
    *,
    lens_mm: float | None = None,
    max_side_px: int = 800,
    camera_shift_check: bool = True,
    distortion: Any = None,
) -> CheckReport:
    """Check a session's photos before the user leaves the setup.

    Parameters
    ----------
    session : Session
        As read by :func:`beamwall.session.load_session`.
    frames : mapping of Path to Frame
        Every photo of :func:`session_paths`, decoded.
    lens_mm : float, optional
        The torch's front lens (reflector) diameter, mm, for an exact far-field check.
    max_side_px : int
        Photos are subsampled by a stride to at most this long side, px.
    camera_shift_check : bool
        Compare the setup photo with each shot's dark frame and first image
        (:func:`beamwall.markers.camera_shift`).
    distortion : beamwall.profile.LensDistortion, optional
        The camera profile's lens distortion: marker corners are undistorted before the fit.

    Returns
    -------
    CheckReport
        ``usable`` is False when a finding fails.

    Raises
    ------
    KeyError
        A photo of :func:`session_paths` is missing from ``frames``.
    """
    shape = frames[session.shots[0].images[0]].shape if session.shots else None
    mapping, findings, found = _mapping_findings(session, frames, shape, distortion)
    shots: list[ShotCheck] = []
    for shot in session.shots:
        res, f = _shot_check(shot, session, frames, mapping, lens_mm=lens_mm,
                             max_side_px=max_side_px)
        shots.append(res)
        findings.extend(f)
    setup = session.wall.setup_image
    if camera_shift_check and setup is not None and mapping is not None:
        ref = frames[setup]
        for shot in session.shots:
            for p in (*shot.darks[:1], shot.images[0]):
                fr = frames[p]
                if fr.shape != ref.shape:
                    continue
                msg = markers.moved_camera_warning(ref.pixels, fr.pixels, name=fr.path.name)
                if msg is not None:
                    findings.append(Finding(
                        "camera-moved", "warn", msg,
                        "put the camera back (or retake the setup photo from where it stands "
                        "now, then retake the beam photos)", shot.label))
                    break
    return CheckReport(
        findings=tuple(findings),
        shots=tuple(shots),
        mapping_rms_mm=None if mapping is None else mapping.rms_error_mm,
        markers_found=None if found is None else tuple(found),
    )
