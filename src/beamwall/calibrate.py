"""The photometric calibration: lux per unit of exposure-normalised camera signal.

A matte wall photographed with a fixed camera gives a signal proportional to its luminance,
hence (Lambertian wall, L = rho E / pi) to its illuminance. One reference fixes the constant
K [lx per signal unit]:

* a lamp of known luminous intensity I_ref aimed square at the wall from d_ref: the wall's
  illuminance near the lamp axis is E = I_ref cos^3(theta) / d_ref^2 [Ryer];
* a lux-meter reading E_ref at one wall point.

K is the ratio of the expected illuminance to the measured signal averaged over a small disc
(2 deg half angle around the lamp axis; 15 mm radius around a lux-meter point, about a meter's
sensor). A symmetric disc cancels a linear gradient of the signal.

Uncertainty (standard, k=1) combines in quadrature [GUM]: the reference's own (u(I)/I, or
u(E)/E), twice the relative distance uncertainty (I = E d^2), and the scatter of the per-cell
ratio inside the disc divided by the square root of the number of independent source pixels.

References
----------
.. [Ryer] A. Ryer, *Light Measurement Handbook* (1997), ch. 6, inverse-square and cosine laws.
.. [GUM] JCGM 100:2008, *Evaluation of measurement data - Guide to the expression of uncertainty
   in measurement*, 5.1.2 (law of propagation for uncorrelated inputs).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field
from typing import Any

import numpy as np

from beamwall.distribution import grid_coordinates_mm, grid_cos3
from beamwall.errors import CalibrationError
from beamwall.wall import WallGrid

__all__ = [
    "Calibration",
    "ReferenceFit",
    "fit_lamp_reference",
    "fit_lux_reference",
    "calibration_from_dict",
    "LAMP_DISC_HALF_ANGLE_DEG",
    "LUX_DISC_RADIUS_MM",
]

#: Half angle of the disc around the lamp axis over which the constant is averaged, deg.
#: A reference lamp is even within a few degrees of its axis (common practice, no source).
LAMP_DISC_HALF_ANGLE_DEG: float = 2.0

#: Radius of the disc around a lux-meter reading, mm: about a handheld meter's sensor
#: (common practice, no source).
LUX_DISC_RADIUS_MM: float = 15.0


@dataclass(frozen=True)
class ReferenceFit:
    """The constant from one reference photo and how it was obtained."""

    lux_per_signal: float
    lux_per_signal_sigma: float
    cells: int
    scatter_fraction: float      # std of the per-cell ratio / mean, inside the disc
    budget: dict[str, float]     # relative standard uncertainties by source


@dataclass(frozen=True)
class Calibration:
    """A camera's calibration, as stored in calibration/NAME.json."""

    lux_per_signal: float
    lux_per_signal_sigma: float
    encoding: str
    luminance_weights: tuple[float, float, float]
    camera_make: str | None = None
    camera_model: str | None = None
    image_size_px: tuple[int, int] | None = None        # (width, height)
    focal_length_px: float | None = None
    exposure: dict[str, Any] = field(default_factory=dict)  # settings of the reference photo
    reference: dict[str, Any] = field(default_factory=dict)
    budget: dict[str, float] = field(default_factory=dict)
    warnings: tuple[str, ...] = ()
    created_utc: str | None = None
    beamwall_version: str | None = None
    inputs: tuple[dict[str, str], ...] = ()
    reference_spectrum: dict[str, Any] | None = None   # spectral.spectrum_to_dict of the ref.
    spectral: dict[str, Any] | None = None   # fitted weights' f1' against Rec. 709's

    @property
    def relative_sigma(self) -> float:
        """Relative standard uncertainty of the constant."""
        return self.lux_per_signal_sigma / self.lux_per_signal

    def to_dict(self) -> dict[str, Any]:
        """The JSON-ready mapping (lists for tuples)."""
        d = asdict(self)
        d["luminance_weights"] = list(self.luminance_weights)
        d["image_size_px"] = None if self.image_size_px is None else list(self.image_size_px)
        d["warnings"] = list(self.warnings)
        d["inputs"] = [dict(i) for i in self.inputs]
        return d


def calibration_from_dict(data: dict[str, Any], *, file: str) -> Calibration:
    """Build a :class:`Calibration` from its JSON mapping, checking each field.

    Raises
    ------
    CalibrationError
        A missing or invalid field, naming the file and the field.
    """
    def need(key: str) -> Any:
        if key not in data:
            raise CalibrationError("missing; not a beamwall calibration file?", file=file,
                                   field=key)
        return data[key]

    k = need("lux_per_signal")
    s = need("lux_per_signal_sigma")
    for key, v in (("lux_per_signal", k), ("lux_per_signal_sigma", s)):
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not np.isfinite(v):
            raise CalibrationError(f"must be a finite number, got {v!r}", file=file, field=key)
    if k <= 0:
        raise CalibrationError(f"must be positive, got {k!r}", file=file, field="lux_per_signal")
    if s < 0:
        raise CalibrationError(f"must not be negative, got {s!r}", file=file,
                               field="lux_per_signal_sigma")
    enc = need("encoding")
    if enc not in ("srgb", "linear"):
        raise CalibrationError(f"must be 'srgb' or 'linear', got {enc!r}", file=file,
                               field="encoding")
    w = need("luminance_weights")
    if not (isinstance(w, list) and len(w) == 3 and all(isinstance(x, (int, float)) for x in w)):
        raise CalibrationError(f"must be three numbers, got {w!r}", file=file,
                               field="luminance_weights")
    size = data.get("image_size_px")
    return Calibration(
        lux_per_signal=float(k),
        lux_per_signal_sigma=float(s),
        encoding=str(enc),
        luminance_weights=(float(w[0]), float(w[1]), float(w[2])),
        camera_make=data.get("camera_make"),
        camera_model=data.get("camera_model"),
        image_size_px=None if size is None else (int(size[0]), int(size[1])),
        focal_length_px=data.get("focal_length_px"),
        exposure=dict(data.get("exposure") or {}),
        reference=dict(data.get("reference") or {}),
        budget=dict(data.get("budget") or {}),
        warnings=tuple(data.get("warnings") or ()),
        created_utc=data.get("created_utc"),
        beamwall_version=data.get("beamwall_version"),
        inputs=tuple(data.get("inputs") or ()),
        reference_spectrum=data.get("reference_spectrum"),
        spectral=data.get("spectral"),
    )


def _disc_fit(
    signal: WallGrid,
    expected_lx: np.ndarray,
    *,
    centre_mm: tuple[float, float],
    radius_mm: float,
    source_pixels_per_cell: float,
    what: str,
) -> tuple[float, float, int]:
    x_mm, y_mm = grid_coordinates_mm(signal)
    # At least a few cells across, whatever the grid step.
    radius = max(radius_mm, 2.5 * signal.step_mm)
    disc = (x_mm - centre_mm[0]) ** 2 + (y_mm - centre_mm[1]) ** 2 <= radius**2
    disc = np.broadcast_to(disc, signal.values.shape)
    if (disc & signal.saturated).any():
        raise CalibrationError(
            f"the {what} is clipped at the reference point: shorten the exposure"
        )
    inside = disc & signal.inside
    if inside.sum() < disc.sum() * 0.999 or not disc.any():
        raise CalibrationError(
            f"the reference point ({centre_mm[0]:g}, {centre_mm[1]:g}) mm is not inside the "
            "photo (or too close to its edge)"
        )
    s = signal.values[disc].astype(np.float64)
    e = np.broadcast_to(expected_lx, signal.values.shape)[disc].astype(np.float64)
    ok = np.isfinite(s)
    s, e = s[ok], e[ok]
    if s.size == 0 or s.mean() <= 0:
        raise CalibrationError(
            f"no signal above the dark frame at the reference point: is the {what} on, and "
            "the exposure long enough?"
        )
    k = float(e.sum() / s.sum())
    ratio = e / np.where(s > 0, s, np.nan)
    scatter = float(np.nanstd(ratio) / np.nanmean(ratio)) if s.size > 1 else 0.0
    # Cells finer than the photo's pixels are interpolated, hence correlated: count at most one
    # independent sample per source pixel.
    n_independent = max(1.0, s.size * min(1.0, source_pixels_per_cell))
    stat_rel = scatter / np.sqrt(n_independent)
    return k, stat_rel, int(s.size)


def fit_lamp_reference(
    signal: WallGrid,
    *,
    intensity_cd: float,
    distance_m: float,
    axis_mm: tuple[float, float],
    intensity_sigma_cd: float = 0.0,
    distance_sigma_m: float = 0.0,
    source_pixels_per_cell: float = 1.0,
) -> ReferenceFit:
    """Constant from a lamp of known intensity aimed square at the wall.

    Parameters
    ----------
    signal : WallGrid
        Exposure-normalised signal on the wall (relative units).
    intensity_cd, distance_m : float
        The lamp's axial intensity and its luminous centre's distance to the wall.
    axis_mm : (x, y)
        Where the lamp's axis meets the wall.
    intensity_sigma_cd, distance_sigma_m : float, keyword-only
        Standard uncertainties (0 when unknown).
    source_pixels_per_cell : float, keyword-only
        Photo pixels averaged into each grid cell (for the statistical term).

    Returns
    -------
    ReferenceFit

    Notes
    -----
    K = sum(E_expected) / sum(S) over the disc of half angle ``LAMP_DISC_HALF_ANGLE_DEG``,
    E_expected = I_ref cos^3(theta) / d_ref^2 [Ryer]; the lamp is taken as even within it.
    """
    d_mm = distance_m * 1000.0
    expected = intensity_cd * grid_cos3(signal, axis_mm=axis_mm, distance_m=distance_m) \
        / distance_m**2
    radius = d_mm * np.tan(np.radians(LAMP_DISC_HALF_ANGLE_DEG))
    k, stat_rel, cells = _disc_fit(
        signal, expected, centre_mm=axis_mm, radius_mm=radius,
        source_pixels_per_cell=source_pixels_per_cell, what="reference lamp",
    )
    budget = {
        "reference_intensity": intensity_sigma_cd / intensity_cd,
        "reference_distance": 2.0 * distance_sigma_m / distance_m,
        "pixel_noise": stat_rel,
    }
    rel = float(np.sqrt(sum(v * v for v in budget.values())))
    return ReferenceFit(k, k * rel, cells, stat_rel, budget)


def fit_lux_reference(
    signal: WallGrid,
    *,
    illuminance_lx: float,
    at_mm: tuple[float, float],
    illuminance_sigma_lx: float = 0.0,
    source_pixels_per_cell: float = 1.0,
) -> ReferenceFit:
    """Constant from a lux-meter reading at one wall point.

    K = E_ref / mean(S) over a disc of ``LUX_DISC_RADIUS_MM`` around the point.

    Parameters
    ----------
    signal : WallGrid
    illuminance_lx : float
    at_mm : (x, y)
    illuminance_sigma_lx : float, keyword-only
    source_pixels_per_cell : float, keyword-only

    Returns
    -------
    ReferenceFit
    """
    expected = np.full(signal.values.shape, illuminance_lx, dtype=np.float64)
    k, stat_rel, cells = _disc_fit(
        signal, expected, centre_mm=at_mm, radius_mm=LUX_DISC_RADIUS_MM,
        source_pixels_per_cell=source_pixels_per_cell, what="light",
    )
    budget = {
        "reference_illuminance": illuminance_sigma_lx / illuminance_lx,
        "pixel_noise": stat_rel,
    }
    rel = float(np.sqrt(sum(v * v for v in budget.values())))
    return ReferenceFit(k, k * rel, cells, stat_rel, budget)
