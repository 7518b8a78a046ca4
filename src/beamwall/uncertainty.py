"""Uncertainty of every figure by Monte Carlo propagation through the cheap stages [JCGM101].

The expensive stages (decoding, normalising, resampling onto the wall) run once. What they
leave, the smoothed illuminance along rays from the beam axis and the flux inside circles
around it, is enough to recompute every figure with perturbed inputs, through the same pure
functions the measurement uses (:func:`beamwall.distribution.outermost_crossing_deg`,
:func:`beamwall.figures.angle_summary`, :func:`beamwall.figures.throw_m`):

* **torch distance** d ~ N(d, u_d): theta = atan(r / d) and I = E d^2 / cos^3(theta);
* **calibration constant** K: the reference's own uncertainty (lamp intensity or lux reading),
  the reference distance (K ~ 1 / d_ref^2, drawn exactly), the pixel noise at the reference,
  the exposure ratio between the reference photo and the shot (nominal versus true shutter
  times and ISO steps), the residual flat field and the spectral mismatch: one multiplicative
  draw each;
* **wall mapping**: the points' pixel positions (``points_sigma_px``, or estimated from the
  fit's residuals) and wall positions (``points_sigma_mm``) are perturbed and the homography
  refitted; every sample position on the wall moves by that trial's mapping;
* **pixel noise** of the shot, estimated from the image itself (the residual of the raw map
  about its smoothed version, as a function of signal level), propagated to the peak and to
  the crossings (linearised: sigma_r = sigma_E / |dE/dr| at each crossing, averaged over the
  azimuths that are independent at the smoothing scale);
* **grid resolution**: the crossings' radius is known to a fraction of a wall cell, alike at
  all azimuths (rectangular distributions of half widths ``RESOLUTION_HALF_WIDTH_CELLS``).

Each figure's standard uncertainty (k=1) is the standard deviation of its trials; the budget
gives each input's contribution from one-at-a-time trials with the same seeds (their squares
need not add up exactly to the total's: the model is not linear).

References
----------
.. [JCGM101] JCGM 101:2008, *Evaluation of measurement data - Supplement 1 to the "Guide to
   the expression of uncertainty in measurement" - Propagation of distributions using a Monte
   Carlo method*, sections 5-7.
.. [GUM] JCGM 100:2008, 4.3.7 (a rectangular distribution of half width a has u = a / sqrt 3).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import cv2
import numpy as np

from beamwall import wall
from beamwall.constants import BEAM_LEVEL_FRACTION, FIELD_LEVEL_FRACTION
from beamwall.distribution import grid_coordinates_mm, outermost_crossing_deg
from beamwall.figures import angle_summary, throw_m
from beamwall.results import Distribution
from beamwall.wall import WallGrid

__all__ = [
    "NoiseModel",
    "estimate_noise",
    "BeamProfiles",
    "sample_profiles",
    "UncertaintyInputs",
    "UncertaintyResult",
    "propagate",
    "FIGURES",
    "EXPOSURE_RATIO_SIGMA_FRACTION",
    "FLAT_FIELD_SIGMA_FRACTION",
    "DEFAULT_POINTS_SIGMA_PX",
]

FIGURES: tuple[str, ...] = ("beam_angle_deg", "field_angle_deg", "peak_intensity_cd",
                            "flux_lm", "throw_m")

#: Relative standard uncertainty of the ratio of two exposure factors taken at different
#: settings (nominal against true shutter times and ISO gains). Marked shutter times are
#: rounded (1/125 s is 1/128 s, 1/60 is 1/64: up to about 7 %), but a camera reporting the same
#: series for reference and shot repeats most of it; 1 % is common practice, no source.
EXPOSURE_RATIO_SIGMA_FRACTION: float = 0.01

#: Relative standard uncertainty left by the natural cos^4 falloff model where no measured
#: flat field replaces it (common practice, no source: residual vignetting of a good lens
#: between two parts of the frame).
FLAT_FIELD_SIGMA_FRACTION: float = 0.005

#: Half width (wall cells) of the rectangular distribution of the crossings' radius, for the
#: 50 % and the 10 % crossing: linear interpolation between samples of a lightly smoothed map
#: places a crossing to a fraction of a cell; the 10 % crossing, on the dimmer, flatter tail,
#: less well. Set from the spread measured against ground truth over 300 rendered scenes
#: (docs/uncertainty.md); common practice, no source.
RESOLUTION_HALF_WIDTH_CELLS: tuple[float, float] = (0.2, 0.4)

#: Standard uncertainty of a hand-clicked point's pixel coordinates when the session gives
#: none and exactly four points leave no residual to estimate it from (common practice, no
#: source).
DEFAULT_POINTS_SIGMA_PX: float = 0.5


@dataclass(frozen=True)
class NoiseModel:
    """Pixel noise of a wall map, sigma^2(E) = a + b E at the cell level.

    ``smoothing_factor`` turns a cell's noise into the smoothed map's.
    """

    a: float
    b: float
    smoothing_factor: float

    def sigma_smoothed(self, level: np.ndarray | float) -> np.ndarray:
        """Standard deviation of the smoothed map at a signal level (same units)."""
        v = np.maximum(self.a + self.b * np.asarray(level, dtype=np.float64), 0.0)
        return np.sqrt(v) * self.smoothing_factor


def estimate_noise(
    raw: np.ndarray, smoothed: np.ndarray, *, sigma_cells: float, source_pixels_per_cell: float
) -> NoiseModel:
    """Estimate the pixel noise of a map from its residual about its smoothed version.

    The residual raw - smoothed is binned by the smoothed level (10 quantile bins of the
    cells above 2 % of the maximum); in each bin the robust standard deviation
    (1.4826 x median absolute deviation) estimates sigma at that level; sigma^2 = a + b E is
    fitted by least squares (shot noise grows with the signal, read noise does not).

    The smoothed map's noise is sigma times sqrt(sum of squared kernel weights) =
    1 / (2 sqrt(pi) s) for a Gaussian of s cells on independent cells; cells finer than the
    photo's pixels are correlated over 1 / pixels-per-cell cells, which the factor allows for.

    Parameters
    ----------
    raw, smoothed : (ny, nx) arrays, NaN where not measured
    sigma_cells : float, keyword-only
        Width of the smoothing kernel, cells.
    source_pixels_per_cell : float, keyword-only

    Returns
    -------
    NoiseModel

    Examples
    --------
    >>> rng = np.random.default_rng(0)
    >>> truth = np.tile(np.linspace(10, 100, 400), (400, 1))
    >>> raw = truth + rng.normal(0, 1, truth.shape) * np.sqrt(0.5 + 0.02 * truth)
    >>> m = estimate_noise(raw, truth, sigma_cells=2.0, source_pixels_per_cell=1.0)
    >>> bool(abs(np.sqrt(m.a + m.b * 50) - np.sqrt(0.5 + 0.02 * 50)) < 0.03)
    True
    """
    r = np.asarray(raw, dtype=np.float64)
    s = np.asarray(smoothed, dtype=np.float64)
    ok = np.isfinite(r) & np.isfinite(s)
    factor = 1.0 / (2.0 * np.sqrt(np.pi) * max(sigma_cells, 0.5))
    factor *= np.sqrt(max(1.0, 1.0 / max(source_pixels_per_cell, 1e-6)))
    if ok.sum() < 100:
        return NoiseModel(0.0, 0.0, factor)
    vmax = float(np.max(s[ok]))
    sel = ok & (s > 0.02 * vmax)
    if sel.sum() < 100:
        sel = ok
    res = (r - s)[sel]
    lev = s[sel]
    if res.size > 400_000:  # a regular subsample is plenty for ten bins
        step = res.size // 400_000 + 1
        res, lev = res[::step], lev[::step]
    edges = np.quantile(lev, np.linspace(0, 1, 11))
    xs, ys = [], []
    for lo, hi in zip(edges[:-1], edges[1:]):
        m = (lev >= lo) & (lev <= hi)
        if m.sum() < 30:
            continue
        rr = res[m]
        xs.append(float(np.median(lev[m])))
        ys.append(float((1.4826 * np.median(np.abs(rr - np.median(rr)))) ** 2))
    if len(xs) < 2:
        v = float(np.var(res))
        return NoiseModel(v, 0.0, factor)
    x = np.array(xs)
    y = np.array(ys)
    design = np.column_stack([np.ones_like(x), x])
    (a, b), *_ = np.linalg.lstsq(design, y, rcond=None)
    if b < 0:
        a, b = float(np.mean(y)), 0.0
    a = max(float(a), 0.0)
    return NoiseModel(a, float(b), factor)


@dataclass(frozen=True)
class BeamProfiles:
    """What the Monte Carlo needs of one shot, sampled once from its wall maps.

    Illuminance values are in the shot's signal units before the calibration constant (so K
    multiplies them); positions in wall mm of the nominal mapping.
    """

    axis_mm: tuple[float, float]
    distance_m: float
    phi_rad: np.ndarray                 # (m,)
    beam_r_mm: np.ndarray               # (nb, m) radii of the samples around the 50 % crossing
    beam_e: np.ndarray                  # (nb, m) smoothed illuminance there (+inf clipped)
    field_r_mm: np.ndarray              # (nf, m)
    field_e: np.ndarray                 # (nf, m)
    peak_r_mm: float                    # radius of the peak from the axis
    peak_xy_mm: tuple[float, float]     # where the peak is on the wall
    peak_e: float                       # smoothed illuminance at the peak
    cum_r_mm: np.ndarray                # (n,) radii
    cum_flux: np.ndarray                # (n,) integral of E dA inside each radius (units x m^2)
    flux_half_angle_deg: float | None
    beam_noise_deg: float               # noise of the mean beam half angle, deg (k=1)
    field_noise_deg: float
    peak_noise_fraction: float          # noise of the peak, relative
    cell_mm: float = 0.0                # wall grid step: the crossings' resolution
    k_sigma_fraction: float = 0.0       # this shot's own relative uncertainty of K (spectral)
    k_factor: float = 1.0               # this shot's own factor on K (spectral correction)


def _profile_window(
    e_map: np.ndarray, grid: WallGrid, axis: tuple[float, float], phi: np.ndarray,
    r_lo: float, r_hi: float, n: int, saturated: np.ndarray,
) -> tuple[np.ndarray, np.ndarray]:
    r = np.linspace(max(r_lo, 0.0), r_hi, n)
    x = axis[0] + r[:, None] * np.cos(phi)[None, :]
    y = axis[1] + r[:, None] * np.sin(phi)[None, :]
    mx = ((x - grid.x0_mm) / grid.step_mm).astype(np.float32)
    my = ((grid.y0_mm - y) / grid.step_mm).astype(np.float32)
    vals = cv2.remap(np.where(saturated, 0.0, e_map).astype(np.float32), mx, my,
                     interpolation=cv2.INTER_LINEAR, borderMode=cv2.BORDER_CONSTANT,
                     borderValue=float("nan"))
    clip = cv2.remap(saturated.astype(np.float32), mx, my, interpolation=cv2.INTER_LINEAR,
                     borderMode=cv2.BORDER_CONSTANT, borderValue=0.0)
    vals = np.where(clip > 0, np.inf, vals)
    return np.broadcast_to(r[:, None], vals.shape).copy(), vals


def _crossing_noise_deg(
    r_win: np.ndarray, e_win: np.ndarray, half_deg: np.ndarray, level_e: float,
    noise: NoiseModel, *, distance_m: float, corr_mm: float,
) -> float:
    """Noise of the mean crossing half angle: sigma_r = sigma_E / |dE/dr| per azimuth."""
    d_mm = distance_m * 1000.0
    found = np.isfinite(half_deg)
    if not found.any():
        return 0.0
    rc = d_mm * np.tan(np.radians(half_deg[found]))
    cols = np.nonzero(found)[0]
    sig = []
    for j, r_c in zip(cols, rc):
        rr = r_win[:, j]
        ee = e_win[:, j]
        ok = np.isfinite(ee)
        if ok.sum() < 3:
            continue
        k = int(np.clip(np.searchsorted(rr, r_c), 1, len(rr) - 1))
        slope = np.gradient(np.where(ok, ee, np.nan), rr)[k]
        if not np.isfinite(slope) or slope == 0:
            continue
        s_r = float(noise.sigma_smoothed(level_e)) / abs(slope)
        theta = np.arctan(r_c / d_mm)
        sig.append(s_r * np.cos(theta) ** 2 / d_mm)
    if not sig:
        return 0.0
    per = float(np.sqrt(np.mean(np.square(sig))))
    r_mean = float(np.mean(rc))
    n_eff = float(np.clip(2 * np.pi * r_mean / max(corr_mm, 1e-9), 1.0, len(sig)))
    return float(np.degrees(per / np.sqrt(n_eff)))


def sample_profiles(
    illuminance: WallGrid,
    smoothed_e: np.ndarray,
    *,
    axis_mm: tuple[float, float],
    distance_m: float,
    dist: Distribution,
    flux_half_angle_deg: float | None,
    sigma_cells: float,
    source_pixels_per_cell: float,
    n_phi: int = 120,
    n_r: int = 48,
    k_sigma_fraction: float = 0.0,
    k_factor: float = 1.0,
) -> BeamProfiles:
    """Sample once what the Monte Carlo recomputes the figures from.

    Parameters
    ----------
    illuminance : WallGrid
        The shot's raw illuminance map in signal units before the calibration constant.
    smoothed_e : (ny, nx) array
        The same smoothed as for the figures (NaN where the raw map is).
    axis_mm, distance_m : the shot's axis and torch distance
    dist : Distribution
        The measured distribution (per-azimuth crossings set the sampling windows).
    flux_half_angle_deg : float or None
    sigma_cells, source_pixels_per_cell : float
        The smoothing width and the photo pixels per cell, for the noise model.
    n_phi, n_r : int, keyword-only
        Azimuths and radii per window.
    """
    d_mm = distance_m * 1000.0
    sat = illuminance.saturated
    stride = max(1, int(np.sqrt(illuminance.values.size / 250_000)))
    noise = estimate_noise(illuminance.values[::stride, ::stride],
                           smoothed_e[::stride, ::stride], sigma_cells=sigma_cells,
                           source_pixels_per_cell=source_pixels_per_cell)
    phi = np.linspace(0.0, 2 * np.pi, n_phi, endpoint=False)
    # Each window spans the azimuths' crossings with a margin; NaN half angles are skipped.
    windows = []
    for half in (dist.beam_half_angle_deg, dist.field_half_angle_deg):
        h = half[np.isfinite(half)]
        if h.size:
            r_lo = d_mm * np.tan(np.radians(max(0.0, 0.7 * float(h.min()))))
            r_hi = d_mm * np.tan(np.radians(min(89.0, 1.3 * float(h.max()) + 0.2)))
        else:
            r_lo, r_hi = 0.0, illuminance.step_mm
        windows.append(_profile_window(smoothed_e, illuminance, axis_mm, phi, r_lo, r_hi,
                                       n_r, sat))
    (br, be), (fr, fe) = windows

    x_mm, y_mm = grid_coordinates_mm(illuminance)
    r_cells = np.sqrt((x_mm - axis_mm[0]) ** 2 + (y_mm - axis_mm[1]) ** 2)
    cos3 = wall.obliquity_cos3(r_cells, 0.0, axis_mm=(0.0, 0.0), distance_m=distance_m)
    i_rel = np.where(np.isfinite(smoothed_e) & ~sat, smoothed_e / cos3, -np.inf)
    idx = int(np.argmax(i_rel))
    peak_r = float(r_cells.flat[idx])
    row, col = divmod(idx, smoothed_e.shape[1])
    peak_xy = (float(x_mm[0, col]), float(y_mm[row, 0]))
    peak_e = float(smoothed_e.flat[idx])

    # Flux inside circles: integral of E dA, cells counted at their centre's radius.
    e = np.nan_to_num(np.where(np.isfinite(illuminance.values), illuminance.values,
                               smoothed_e), nan=0.0)
    r_max = float(r_cells.max())
    n_bins = 2048
    bins = np.minimum((r_cells / r_max * n_bins).astype(np.int64), n_bins - 1)
    area_m2 = (illuminance.step_mm * 1e-3) ** 2
    sums = np.bincount(bins.ravel(), weights=(e * area_m2).ravel(), minlength=n_bins)
    cum_r = np.arange(n_bins + 1) * (r_max / n_bins)
    cum = np.concatenate([[0.0], np.cumsum(sums)])

    corr_mm = 2.5 * sigma_cells * illuminance.step_mm
    rel_peak_noise = float(noise.sigma_smoothed(peak_e)) / peak_e if peak_e > 0 else 0.0
    # Level of the crossings in illuminance units: frac * peak * cos^3 at the crossing.
    beam_noise = _crossing_noise_deg(
        br, be, dist.beam_half_angle_deg[:: max(1, len(dist.phi_deg) // n_phi)][:n_phi],
        BEAM_LEVEL_FRACTION * peak_e, noise, distance_m=distance_m, corr_mm=corr_mm)
    field_noise = _crossing_noise_deg(
        fr, fe, dist.field_half_angle_deg[:: max(1, len(dist.phi_deg) // n_phi)][:n_phi],
        FIELD_LEVEL_FRACTION * peak_e, noise, distance_m=distance_m, corr_mm=corr_mm)
    return BeamProfiles(
        axis_mm=axis_mm, distance_m=distance_m, phi_rad=phi,
        beam_r_mm=br, beam_e=be, field_r_mm=fr, field_e=fe,
        peak_r_mm=peak_r, peak_xy_mm=peak_xy, peak_e=peak_e, cum_r_mm=cum_r, cum_flux=cum,
        flux_half_angle_deg=flux_half_angle_deg,
        beam_noise_deg=beam_noise, field_noise_deg=field_noise,
        peak_noise_fraction=rel_peak_noise,
        cell_mm=float(illuminance.step_mm),
        k_sigma_fraction=float(k_sigma_fraction),
        k_factor=float(k_factor),
    )


@dataclass(frozen=True)
class UncertaintyInputs:
    """Standard uncertainties (k=1) of the inputs, and the wall points they apply to.

    ``calibration_rel`` maps each calibration source to its relative standard uncertainty
    (drawn as independent multiplicative factors on K), except the reference distance, which
    is drawn exactly (K ~ 1 / d_ref^2) from ``reference_distance_m`` / ``_sigma_m``.
    """

    lux_per_signal: float
    distance_sigma_m: float = 0.0
    calibration_rel: dict[str, float] = field(default_factory=dict)
    reference_distance_m: float | None = None
    reference_distance_sigma_m: float = 0.0
    points_px: np.ndarray | None = None
    points_mm: np.ndarray | None = None
    points_sigma_px: float = 0.0
    points_sigma_mm: float = 0.0


@dataclass(frozen=True)
class UncertaintyResult:
    """Monte Carlo result per figure: standard uncertainty, 95 % interval, budget."""

    sigma: dict[str, float | None]
    interval95: dict[str, tuple[float, float] | None]
    budget: dict[str, dict[str, float]]          # figure -> input -> contribution (k=1)
    trials: int
    seed: int


def _figures_for(
    prof: BeamProfiles,
    *,
    k: float,
    distance_m: float,
    g: np.ndarray | None,
    peak_z: float,
    beam_z: float,
    field_z: float,
    calibrated: bool,
    shift_cells: float = 0.0,
) -> dict[str, float | None]:
    d_mm = distance_m * 1000.0
    ax, ay = prof.axis_mm
    cphi, sphi = np.cos(prof.phi_rad)[None, :], np.sin(prof.phi_rad)[None, :]

    def trial_radii(r: np.ndarray) -> np.ndarray:
        if g is None:
            return r
        pts = np.stack([ax + r * cphi, ay + r * sphi], axis=-1).reshape(-1, 1, 2)
        out = cv2.perspectiveTransform(pts, g).reshape(r.shape + (2,))
        a2 = cv2.perspectiveTransform(np.array([[[ax, ay]]], float), g).reshape(2)
        return np.hypot(out[..., 0] - a2[0], out[..., 1] - a2[1])

    def intensity(e: np.ndarray, r: np.ndarray) -> np.ndarray:
        cos3 = wall.obliquity_cos3(r, 0.0, axis_mm=(0.0, 0.0), distance_m=distance_m)
        return e * (distance_m**2) / cos3

    peak_r = prof.peak_r_mm
    if g is not None:
        q = cv2.perspectiveTransform(np.array([[prof.peak_xy_mm], [prof.axis_mm]], float), g)
        peak_r = float(np.hypot(*(q[0, 0] - q[1, 0])))
    peak_rel = float(intensity(np.array(prof.peak_e), np.array(peak_r))) * (
        1.0 + prof.peak_noise_fraction * peak_z)
    out: dict[str, float | None] = {}
    for name, r, e, frac, z, noise in (
        ("beam_angle_deg", prof.beam_r_mm, prof.beam_e, BEAM_LEVEL_FRACTION, beam_z,
         prof.beam_noise_deg),
        ("field_angle_deg", prof.field_r_mm, prof.field_e, FIELD_LEVEL_FRACTION, field_z,
         prof.field_noise_deg),
    ):
        level = 0 if name == "beam_angle_deg" else 1
        rt = trial_radii(r) + shift_cells * RESOLUTION_HALF_WIDTH_CELLS[level] * prof.cell_mm
        theta = np.degrees(np.arctan(rt / d_mm))
        prof_i = np.where(np.isinf(e), np.inf, intensity(e, rt))
        half = outermost_crossing_deg(theta, prof_i, frac * peak_rel)
        s = angle_summary(half)
        out[name] = None if s.mean_deg is None else s.mean_deg + 2.0 * noise * z
    out["peak_intensity_cd"] = k * peak_rel if calibrated else None
    out["throw_m"] = throw_m(k * peak_rel) if calibrated else None
    flux = None
    if calibrated and prof.flux_half_angle_deg:
        r_alpha = d_mm * np.tan(np.radians(prof.flux_half_angle_deg))
        area_scale = 1.0
        if g is not None:
            # Local area scale of the trial mapping at the axis (Jacobian by differences).
            h = 10.0
            p = np.array([[[ax, ay]], [[ax + h, ay]], [[ax, ay + h]]], float)
            q = cv2.perspectiveTransform(p, g).reshape(3, 2)
            jac = np.column_stack([(q[1] - q[0]) / h, (q[2] - q[0]) / h])
            area_scale = abs(float(np.linalg.det(jac)))
        r_nom = r_alpha / np.sqrt(area_scale)
        flux = k * area_scale * float(np.interp(r_nom, prof.cum_r_mm, prof.cum_flux))
    out["flux_lm"] = flux
    return out


def _trial_mapping(
    inp: UncertaintyInputs, rng: np.random.Generator, nominal: np.ndarray
) -> np.ndarray | None:
    """G = H_trial^-1 H_nominal: nominal wall mm -> this trial's wall mm."""
    if inp.points_px is None or inp.points_mm is None:
        return None
    if inp.points_sigma_px <= 0 and inp.points_sigma_mm <= 0:
        return None
    px = inp.points_px + rng.normal(0.0, inp.points_sigma_px, inp.points_px.shape)
    mm = inp.points_mm + rng.normal(0.0, inp.points_sigma_mm, inp.points_mm.shape)
    try:
        h_t = wall.fit_homography(px, mm, max_rms_mm=1e9).wall_to_px
    except Exception:  # noqa: BLE001 - a degenerate draw is redrawn by the caller
        return None
    return np.linalg.inv(h_t) @ nominal


def _column_std(trials: np.ndarray) -> np.ndarray:
    """Standard deviation over axis 0, NaN where fewer than two trials are finite."""
    ok = np.isfinite(trials)
    n = ok.sum(axis=0)
    filled = np.where(ok, trials, 0.0)
    mean = filled.sum(axis=0) / np.maximum(n, 1)
    var = np.where(ok, (trials - mean) ** 2, 0.0).sum(axis=0) / np.maximum(n - 1, 1)
    return np.where(n >= 2, np.sqrt(var), np.nan)


def propagate(
    profiles: Sequence[BeamProfiles],
    inputs: UncertaintyInputs,
    *,
    calibrated: bool,
    n_trials: int = 200,
    seed: int = 20261202,
) -> list[UncertaintyResult]:
    """Monte Carlo propagation for every shot of a session at once [JCGM101].

    The session-wide inputs (distance, calibration, mapping) take the same draw for every
    shot of a trial, as they do in reality; each shot's pixel noise is its own.

    Parameters
    ----------
    profiles : sequence of BeamProfiles
        One per shot (from :func:`sample_profiles`).
    inputs : UncertaintyInputs
    calibrated : bool, keyword-only
    n_trials : int, keyword-only
    seed : int, keyword-only

    Returns
    -------
    list of UncertaintyResult
        Parallel to ``profiles``.
    """
    nominal_h = None
    if inputs.points_px is not None and inputs.points_mm is not None:
        nominal_h = wall.fit_homography(inputs.points_px, inputs.points_mm,
                                        max_rms_mm=1e9).wall_to_px
    d0 = profiles[0].distance_m if profiles else 1.0
    sources = ["distance"] + sorted(inputs.calibration_rel) + [
        "reference_distance", "wall_mapping", "pixel_noise", "resolution"]
    if any(p.k_sigma_fraction > 0 for p in profiles):
        sources.append("spectral")

    def draw(rng: np.random.Generator, active: set[str], z_fixed: float | None = None
             ) -> tuple[float, float, Any, Any]:
        """One trial's inputs; with ``z_fixed``, the active scalar inputs sit at z sigma."""

        def z() -> float:
            return float(rng.standard_normal()) if z_fixed is None else z_fixed

        d = d0 + (inputs.distance_sigma_m * z() if "distance" in active else 0.0)
        k = inputs.lux_per_signal
        for name, rel in inputs.calibration_rel.items():
            if name in active:
                k *= 1.0 + rel * z()
        if "reference_distance" in active and inputs.reference_distance_m:
            dr = inputs.reference_distance_m
            k *= (dr / (dr + inputs.reference_distance_sigma_m * z())) ** 2
        g = None
        if "wall_mapping" in active and nominal_h is not None:
            for _ in range(5):
                g = _trial_mapping(inputs, rng, nominal_h)
                if g is not None:
                    break
        noise = np.zeros((len(profiles), 5))
        if "spectral" in active:
            noise[:, 4] = (rng.standard_normal(len(profiles)) if z_fixed is None else z_fixed)
        if "pixel_noise" in active:
            noise[:, :3] = (rng.standard_normal((len(profiles), 3)) if z_fixed is None
                            else z_fixed)
        if "resolution" in active:
            # The crossings' position is known to a fraction of a wall cell, the same way at
            # every azimuth (interpolation and smoothing on the grid): a rectangular draw in
            # units of each level's half width [GUM 4.3.7]; +-1 sigma of it for the budget.
            noise[:, 3] = (rng.uniform(-1.0, 1.0, len(profiles)) if z_fixed is None
                           else z_fixed / np.sqrt(3.0))
        return d, k, g, noise

    def evaluate(d: float, k: float, g: Any, noise: np.ndarray) -> np.ndarray:
        vals = np.full((len(profiles), len(FIGURES)), np.nan)
        for i, prof in enumerate(profiles):
            f = _figures_for(prof, k=k * prof.k_factor * (1.0 + prof.k_sigma_fraction
                                                          * noise[i, 4]),
                             distance_m=d, g=g, peak_z=noise[i, 0],
                             beam_z=noise[i, 1], field_z=noise[i, 2], calibrated=calibrated,
                             shift_cells=noise[i, 3])
            vals[i] = [np.nan if f[name] is None else f[name] for name in FIGURES]
        return vals

    def run(active: set[str], n: int) -> np.ndarray:
        rng = np.random.default_rng(seed)
        return np.stack([evaluate(*draw(rng, active)) for _ in range(n)])

    everything = run(set(sources), n_trials)
    # Budget: each input alone. Scalar inputs by central differences at +-1 sigma (exact for
    # a linear response, and cheap); the wall mapping, a 2n-dimensional input, by its own
    # short Monte Carlo.
    contributions: dict[str, np.ndarray] = {}
    rng0 = np.random.default_rng(seed)
    for src in sources:
        if src == "wall_mapping":
            contributions[src] = _column_std(run({src}, max(20, n_trials // 8)))
        else:
            hi = evaluate(*draw(rng0, {src}, 1.0))
            lo = evaluate(*draw(rng0, {src}, -1.0))
            contributions[src] = np.abs(hi - lo) / 2.0
    results = []
    for i in range(len(profiles)):
        sigma: dict[str, float | None] = {}
        interval: dict[str, tuple[float, float] | None] = {}
        budget: dict[str, dict[str, float]] = {}
        for j, name in enumerate(FIGURES):
            col = everything[:, i, j]
            col = col[np.isfinite(col)]
            if col.size < max(10, n_trials // 2):
                sigma[name] = None
                interval[name] = None
                continue
            sigma[name] = float(np.std(col, ddof=1))
            lo, hi = np.quantile(col, [0.025, 0.975])
            interval[name] = (float(lo), float(hi))
            floor = 1e-9 * max(abs(float(np.median(col))), 1e-300)
            budget[name] = {s: float(contributions[s][i, j]) for s in sources
                            if np.isfinite(contributions[s][i, j])
                            and contributions[s][i, j] > floor}
        results.append(UncertaintyResult(sigma, interval, budget, n_trials, seed))
    return results

