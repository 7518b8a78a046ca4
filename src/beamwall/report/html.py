"""``report.html``: one self-contained page showing a session's measurements.

Everything is inside the file: images are PNG embedded as base64 ``data:`` URIs, the CSS is
inline, there is no script, and a Content-Security-Policy meta tag forbids any network load.
The CSS stacks the plots on a phone (images never wider than the screen, wide tables scroll
sideways) and has print rules (one shot per page, nothing cut across a page break).

Plot style: matplotlib's perceptually uniform, colour-blind-safe ``cividis`` map for the wall
image [CIV]_; lines told apart by style as well as by colour (Okabe-Ito colours [OI]_); every
axis labelled with its unit. The numbers behind the plots come from the pure functions of this
module (:func:`contour_levels`, :func:`azimuthal_profile`, :func:`plane_profiles`,
:func:`wall_offset_to_angle_deg`, :func:`zoom_chart_points`, :func:`mode_ratio_rows`), which
are tested on their own.

References
----------
.. [CIV] J. R. Nuñez, C. R. Anderton, R. S. Renslow, "Optimizing colormaps with consideration
   for color vision deficiency to enable accurate interpretation of scientific data",
   PLoS ONE 13(7): e0199239 (2018).
.. [OI] M. Okabe, K. Ito, *Color Universal Design (CUD): how to make figures and presentations
   that are friendly to colorblind people* (2002/2008).
.. [IESDEF] IES definitions of beam angle (50 % of maximum intensity) and field angle (10 %),
   as in ``beamwall.constants``.
"""

from __future__ import annotations

import base64
import html
import io
import math
from dataclasses import dataclass
from os import PathLike
from pathlib import Path
from typing import Any, Iterable, Sequence

import matplotlib
import matplotlib.lines
import matplotlib.ticker
import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from beamwall.constants import BEAM_LEVEL_FRACTION, FIELD_LEVEL_FRACTION, THROW_ILLUMINANCE_LX
from beamwall.results import Distribution, InputFile, SessionResult, ShotResult
from beamwall.wall import WallGrid

__all__ = [
    "AzimuthalProfile",
    "contour_levels",
    "azimuthal_profile",
    "plane_profiles",
    "wall_extent_mm",
    "wall_offset_to_angle_deg",
    "zoom_chart_points",
    "mode_ratio_rows",
    "figure_rows",
    "render_html",
    "write_html",
    "CAUTIONS",
]

#: Safety cautions printed in every report (see reference notes, "Safety cautions to show").
CAUTIONS: tuple[str, ...] = (
    "Never look into the beam, and never aim a torch at anyone's eyes, at drivers or at "
    "aircraft. Photos of a wall cannot give a photobiological risk group (IEC 62471 needs "
    "radiance and spectrum): treat any bright torch as able to dazzle or harm.",
    "Li-ion cells: charge only with a suitable CC/CV charger, never unattended and never below "
    "0 °C; do not use swollen or damaged cells; do not mix cells of different make, age or "
    "charge; carry loose cells in a case, away from keys and coins.",
    "A torch head can get hot in high modes; do not leave it lit lens-down on fabric.",
    "Local laws and codes on lights, lasers and batteries take precedence over anything here.",
)

_DPI = 100
_CMAP = "cividis"
_BLUE, _VERMILLION, _GREEN, _ORANGE = "#0072B2", "#D55E00", "#009E73", "#E69F00"
_MAX_IMAGE_PX = 360  # wall grids are thinned to about this many samples a side for display
_RC = {
    "font.size": 9.0,
    "axes.titlesize": 10.0,
    "axes.labelsize": 9.0,
    "legend.fontsize": 8.0,
    "xtick.labelsize": 8.0,
    "ytick.labelsize": 8.0,
    "axes.grid": False,
    "svg.fonttype": "none",
}


# --------------------------------------------------------------------------------------------
# Plot data: pure functions
# --------------------------------------------------------------------------------------------

def contour_levels(
    peak: float, *, fractions: Sequence[float] = (FIELD_LEVEL_FRACTION, BEAM_LEVEL_FRACTION)
) -> tuple[float, ...]:
    """Return the contour levels drawn on the wall image: fractions of the peak, ascending.

    Parameters
    ----------
    peak : float
        The shot's peak intensity, in the unit of the map (cd or relative), > 0.
    fractions : sequence of float, optional
        Fractions of the peak; default the field (10 %) and beam (50 %) levels [IESDEF]_.

    Returns
    -------
    tuple of float
        ``fraction * peak`` for each fraction, ascending (as matplotlib's ``contour`` needs).

    Examples
    --------
    >>> contour_levels(2000.0)
    (200.0, 1000.0)
    """
    if not (math.isfinite(peak) and peak > 0):
        return ()
    return tuple(sorted(float(f) * float(peak) for f in fractions))


@dataclass(frozen=True)
class AzimuthalProfile:
    """Intensity against polar angle, summarised over azimuth.

    theta_deg : (n,) polar angle from the beam axis, deg.
    mean, std, minimum, maximum : (n,) over the azimuths with a value at that angle, in the
        distribution's unit; NaN where no azimuth has a value (std: population, ddof = 0).
    n_valid : (n,) number of azimuths with a value.
    """

    theta_deg: np.ndarray
    mean: np.ndarray
    std: np.ndarray
    minimum: np.ndarray
    maximum: np.ndarray
    n_valid: np.ndarray


def azimuthal_profile(dist: Distribution) -> AzimuthalProfile:
    """Summarise I(theta, phi) over azimuth phi at each polar angle theta.

    Parameters
    ----------
    dist : Distribution
        ``intensity`` of shape (n_theta, n_phi); NaN where not measured.

    Returns
    -------
    AzimuthalProfile
        Mean, standard deviation (ddof = 0), minimum and maximum over the finite values of each
        row, and their count. Plain arithmetic, common practice, no source.

    Examples
    --------
    >>> import numpy as np
    >>> from beamwall.results import Distribution
    >>> d = Distribution(np.array([0.0, 1.0]), np.array([0.0, 180.0]),
    ...                  np.array([[4.0, 4.0], [1.0, np.nan]]), "cd", 4.0,
    ...                  np.full(2, np.nan), np.full(2, np.nan))
    >>> p = azimuthal_profile(d)
    >>> p.mean.tolist(), p.std.tolist(), p.n_valid.tolist()
    ([4.0, 1.0], [0.0, 0.0], [2, 1])
    """
    values = np.asarray(dist.intensity, dtype=float)
    finite = np.isfinite(values)
    count = finite.sum(axis=1)
    filled = np.where(finite, values, 0.0)
    safe = np.maximum(count, 1)
    mean = np.where(count > 0, filled.sum(axis=1) / safe, np.nan)
    dev = np.where(finite, values - mean[:, None], 0.0)
    std = np.where(count > 0, np.sqrt((dev ** 2).sum(axis=1) / safe), np.nan)
    minimum = np.where(count > 0, np.where(finite, values, np.inf).min(axis=1), np.nan)
    maximum = np.where(count > 0, np.where(finite, values, -np.inf).max(axis=1), np.nan)
    return AzimuthalProfile(np.asarray(dist.theta_deg, dtype=float), mean, std, minimum,
                            maximum, count)


def plane_profiles(
    dist: Distribution, *, planes_deg: Sequence[float] = (0.0, 90.0)
) -> list[tuple[float, np.ndarray, np.ndarray]]:
    """Cut the distribution along planes through the beam axis, for a polar intensity diagram.

    Parameters
    ----------
    dist : Distribution
        The distribution.
    planes_deg : sequence of float, optional
        Azimuths phi of the planes (the plane also holds phi + 180).

    Returns
    -------
    list of (plane_deg, signed_theta_deg, intensity)
        ``signed_theta_deg`` (2 n_theta - 1,) runs from -theta_max (the phi + 180 half, taken at
        the nearest measured azimuth) to +theta_max (the phi half); ``intensity`` matches it.

    Examples
    --------
    >>> import numpy as np
    >>> from beamwall.results import Distribution
    >>> d = Distribution(np.array([0.0, 1.0]), np.array([0.0, 90.0, 180.0, 270.0]),
    ...                  np.array([[5.0] * 4, [1.0, 2.0, 3.0, 4.0]]), "cd", 5.0,
    ...                  np.full(4, np.nan), np.full(4, np.nan))
    >>> plane, t, i = plane_profiles(d)[0]
    >>> t.tolist(), i.tolist()
    ([-1.0, 0.0, 1.0], [3.0, 5.0, 1.0])
    """
    theta = np.asarray(dist.theta_deg, dtype=float)
    phi = np.asarray(dist.phi_deg, dtype=float)
    values = np.asarray(dist.intensity, dtype=float)

    def nearest(angle: float) -> int:
        gap = np.abs((phi - angle + 180.0) % 360.0 - 180.0)
        return int(np.argmin(gap))

    out = []
    for plane in planes_deg:
        forward = values[:, nearest(plane)]
        backward = values[:, nearest(plane + 180.0)]
        signed = np.concatenate([-theta[:0:-1], theta])
        intensity = np.concatenate([backward[:0:-1], forward])
        out.append((float(plane), signed, intensity))
    return out


def wall_extent_mm(grid: WallGrid) -> tuple[float, float, float, float]:
    """Return (left, right, bottom, top) of a wall grid's outer pixel edges, mm.

    Parameters
    ----------
    grid : WallGrid
        ``values[i, j]`` at x = x0 + j step, y = y0 - i step (row 0 at the top).

    Returns
    -------
    tuple of float
        For matplotlib's ``imshow(..., origin="upper", extent=...)``: sample centres land on
        their wall coordinates.

    Examples
    --------
    >>> import numpy as np
    >>> g = WallGrid(np.zeros((2, 3)), np.zeros((2, 3), bool), np.ones((2, 3), bool),
    ...              x0_mm=-10.0, y0_mm=5.0, step_mm=10.0, footprint_mm=np.zeros((4, 2)))
    >>> wall_extent_mm(g)
    (-15.0, 15.0, -10.0, 10.0)
    """
    ny, nx = np.shape(grid.values)
    half = 0.5 * grid.step_mm
    return (grid.x0_mm - half, grid.x0_mm + (nx - 1) * grid.step_mm + half,
            grid.y0_mm - (ny - 1) * grid.step_mm - half, grid.y0_mm + half)


def wall_offset_to_angle_deg(offset_mm: Any, distance_m: float) -> np.ndarray:
    """Angle from the beam axis of a wall point, along one wall axis through the axis point.

    Parameters
    ----------
    offset_mm : array_like
        Offset on the wall from where the beam axis meets it, mm (signed).
    distance_m : float
        Torch to wall along the axis, m (> 0); the axis is square to the wall.

    Returns
    -------
    ndarray
        ``degrees(arctan(offset / distance))``, signed; right-triangle geometry.

    Examples
    --------
    >>> wall_offset_to_angle_deg([1000.0, -1000.0, 0.0], 1.0).round(6).tolist()
    [45.0, -45.0, 0.0]
    """
    return np.degrees(np.arctan(np.asarray(offset_mm, dtype=float) / (1000.0 * distance_m)))


def _angle_to_wall_offset_mm(angle_deg: Any, distance_m: float) -> np.ndarray:
    clipped = np.clip(np.asarray(angle_deg, dtype=float), -89.0, 89.0)
    return 1000.0 * distance_m * np.tan(np.radians(clipped))


def _peak_of(shot: ShotResult, calibrated: bool) -> tuple[float | None, str]:
    if calibrated and shot.peak_intensity_cd is not None:
        return float(shot.peak_intensity_cd), "cd"
    return float(shot.relative_peak_intensity), "relative"


def zoom_chart_points(session: SessionResult) -> list[dict[str, Any]]:
    """Points of the zoom comparison chart: beam angle against peak intensity, one per shot.

    Parameters
    ----------
    session : SessionResult
        The session.

    Returns
    -------
    list of dict
        ``label``, ``zoom``, ``mode``, ``beam_angle_deg``, ``peak`` and ``unit`` (``"cd"`` when
        every plotted shot is calibrated, else ``"relative"``, the first shot reading 1);
        shots without a beam angle are left out.

    Examples
    --------
    >>> from beamwall.results import SessionResult, ShotResult
    >>> s = ShotResult(label="a", zoom="min", mode="high", beam_angle_deg=50.0,
    ...     field_angle_deg=80.0, peak_intensity_cd=300.0, throw_m=None, flux_lm=None,
    ...     flux_half_angle_deg=None, axis_mm=(0, 0), saturated_fraction=0.0,
    ...     relative_peak_intensity=1.0, relative_flux=None)
    >>> p = zoom_chart_points(SessionResult("0", True, (s,)))[0]
    >>> p["beam_angle_deg"], p["peak"], p["unit"]
    (50.0, 300.0, 'cd')
    """
    shots = [s for s in session.shots if s.beam_angle_deg is not None]
    calibrated = session.calibrated and all(s.peak_intensity_cd is not None for s in shots)
    points = []
    for shot in shots:
        peak, unit = _peak_of(shot, calibrated)
        points.append({"label": shot.label, "zoom": shot.zoom, "mode": shot.mode,
                       "beam_angle_deg": float(shot.beam_angle_deg),  # type: ignore[arg-type]
                       "peak": peak, "unit": unit})
    return points


def mode_ratio_rows(session: SessionResult) -> list[dict[str, Any]]:
    """Each shot's peak and flux as a fraction of the brightest shot at the same zoom tag.

    Parameters
    ----------
    session : SessionResult
        The session; shots are grouped by ``zoom`` (``None`` is a group of its own).

    Returns
    -------
    list of dict
        ``label``, ``zoom``, ``mode``, ``peak_ratio`` and ``flux_ratio`` (None where a flux is
        missing), for every group with at least two shots. Ratios use the relative figures, so
        they hold with or without a calibration. Plain ratios, common practice, no source.

    Examples
    --------
    >>> from beamwall.results import SessionResult, ShotResult
    >>> def shot(label, mode, rel):
    ...     return ShotResult(label=label, zoom="min", mode=mode, beam_angle_deg=50.0,
    ...         field_angle_deg=80.0, peak_intensity_cd=None, throw_m=None, flux_lm=None,
    ...         flux_half_angle_deg=None, axis_mm=(0, 0), saturated_fraction=0.0,
    ...         relative_peak_intensity=rel, relative_flux=rel)
    >>> rows = mode_ratio_rows(SessionResult("0", False, (shot("h", "high", 1.0),
    ...                                                   shot("l", "low", 0.25))))
    >>> [(r["mode"], r["peak_ratio"]) for r in rows]
    [('high', 1.0), ('low', 0.25)]
    """
    groups: dict[str | None, list[ShotResult]] = {}
    for shot in session.shots:
        groups.setdefault(shot.zoom, []).append(shot)
    rows = []
    for zoom, shots in groups.items():
        if len(shots) < 2:
            continue
        ref = max(shots, key=lambda s: s.relative_peak_intensity)
        for shot in shots:
            flux_ratio = None
            if shot.relative_flux is not None and ref.relative_flux:
                flux_ratio = shot.relative_flux / ref.relative_flux
            peak_ratio = (shot.relative_peak_intensity / ref.relative_peak_intensity
                          if ref.relative_peak_intensity else None)
            rows.append({"label": shot.label, "zoom": zoom, "mode": shot.mode,
                         "peak_ratio": peak_ratio, "flux_ratio": flux_ratio})
    return rows


def _fmt(value: Any, decimals: int = 1) -> str:
    if value is None:
        return "—"
    try:
        number = float(value)
    except (TypeError, ValueError):
        return str(value)
    if not math.isfinite(number):
        return "—"
    return f"{number:,.{decimals}f}".replace(",", "\u2009")


def _fmt_sig(value: Any, significant: int = 3) -> str:
    """Round to ``significant`` digits, fixed-point (1234 -> '1 230', 0.01234 -> '0.0123')."""
    if value is None or not math.isfinite(float(value)):
        return "—"
    number = float(value)
    if number == 0:
        return "0"
    decimals = significant - 1 - int(math.floor(math.log10(abs(number))))
    return _fmt(round(number, decimals), max(0, decimals))


def figure_rows(shot: ShotResult) -> list[tuple[str, str, str, str]]:
    """Rows of a shot's figures table: (figure, value, standard uncertainty, unit).

    Parameters
    ----------
    shot : ShotResult
        The shot.

    Returns
    -------
    list of (str, str, str, str)
        Text cells; a figure or uncertainty that is ``None`` reads "—".

    Examples
    --------
    >>> from beamwall.results import ShotResult
    >>> s = ShotResult(label="a", zoom=None, mode=None, beam_angle_deg=12.34,
    ...     field_angle_deg=30.0, peak_intensity_cd=None, throw_m=None, flux_lm=None,
    ...     flux_half_angle_deg=None, axis_mm=(0, 0), saturated_fraction=0.0,
    ...     relative_peak_intensity=1.0, relative_flux=None, beam_angle_sigma_deg=0.26)
    >>> figure_rows(s)[0]
    ('Beam angle (50 % of peak)', '12.3', '0.3', 'deg')
    >>> figure_rows(s)[4][1]
    '—'
    """
    def spread(lo: float | None, hi: float | None) -> str:
        return "—" if lo is None or hi is None else f"{_fmt(lo)} to {_fmt(hi)}"

    flux_name = "Flux in the measured cone"
    if shot.flux_half_angle_deg is not None:
        flux_name = f"Flux within {_fmt(2 * shot.flux_half_angle_deg)}° full cone"
    return [
        ("Beam angle (50 % of peak)", _fmt(shot.beam_angle_deg), _fmt(shot.beam_angle_sigma_deg),
         "deg"),
        ("Beam angle, narrowest to widest azimuth",
         spread(shot.beam_angle_min_deg, shot.beam_angle_max_deg), "—", "deg"),
        ("Field angle (10 % of peak)", _fmt(shot.field_angle_deg),
         _fmt(shot.field_angle_sigma_deg), "deg"),
        ("Field angle, narrowest to widest azimuth",
         spread(shot.field_angle_min_deg, shot.field_angle_max_deg), "—", "deg"),
        ("Peak intensity", _fmt_sig(shot.peak_intensity_cd),
         _fmt_sig(shot.peak_intensity_sigma_cd, 2), "cd"),
        (f"Throw (to {THROW_ILLUMINANCE_LX} lx)", _fmt_sig(shot.throw_m),
         _fmt_sig(shot.throw_sigma_m, 2), "m"),
        (flux_name, _fmt_sig(shot.flux_lm), _fmt_sig(shot.flux_sigma_lm, 2), "lm"),
        ("Total flux, at most (edge intensity beyond the cone)",
         _fmt_sig(shot.flux_total_max_lm), "—", "lm"),
        ("Peak relative to the first shot", _fmt(shot.relative_peak_intensity, 3), "—", "1"),
        ("Flux relative to the first shot", _fmt(shot.relative_flux, 3), "—", "1"),
        ("Beam axis on the wall (x, y)",
         f"{_fmt(shot.axis_mm[0])}, {_fmt(shot.axis_mm[1])}", "—", "mm"),
        ("Torch to wall", _fmt(shot.distance_m, 2), "—", "m"),
        ("Clipped inside the field contour", _fmt(100.0 * shot.saturated_fraction, 2), "—", "%"),
        ("Spectral correction factor", _fmt(shot.spectral_correction_factor, 3), "—", "1"),
    ]


# --------------------------------------------------------------------------------------------
# Drawing (matplotlib, object-oriented API only: no pyplot state)
# --------------------------------------------------------------------------------------------

class _Canvas:
    """One reusable figure of a fixed size, cleared before each drawing."""

    def __init__(self, width_in: float, height_in: float) -> None:
        self.figure = Figure(figsize=(width_in, height_in), dpi=_DPI)
        FigureCanvasAgg(self.figure)

    def new(self) -> Figure:
        self.figure.clear()
        return self.figure

    def png_data_uri(self) -> str:
        buffer = io.BytesIO()
        self.figure.savefig(buffer, format="png", dpi=_DPI, metadata={"Software": None})
        return "data:image/png;base64," + base64.b64encode(buffer.getvalue()).decode("ascii")


#: Words for the uncertainty budget's inputs (keys of ShotResult.uncertainty_budget).
BUDGET_INPUT_NAMES: dict[str, str] = {
    "distance": "torch distance",
    "reference_intensity": "reference lamp intensity",
    "reference_illuminance": "lux-meter reading",
    "reference_distance": "reference lamp distance",
    "calibration_pixel_noise": "pixel noise at the reference",
    "exposure_ratio": "exposure ratio (reference vs shot)",
    "flat_field": "residual flat field",
    "spectral": "spectral mismatch",
    "wall_mapping": "wall mapping",
    "pixel_noise": "pixel noise of the shot",
    "resolution": "grid resolution",
}

_BUDGET_FIGURES: tuple[tuple[str, str], ...] = (
    ("beam_angle_deg", "beam angle (deg)"),
    ("field_angle_deg", "field angle (deg)"),
    ("peak_intensity_cd", "peak (cd)"),
    ("flux_lm", "flux (lm)"),
    ("throw_m", "throw (m)"),
)


def budget_rows(shot: ShotResult) -> tuple[list[str], list[list[str]]]:
    """The uncertainty budget as a table: one row per input, one column per figure.

    Each cell is the input's contribution to the figure's standard uncertainty (k = 1, in the
    figure's unit) and, in brackets, its share of the summed variances. An empty list of rows
    when the shot has no budget.

    Examples
    --------
    >>> from beamwall.results import ShotResult
    >>> s = ShotResult("a", None, None, 10.0, 20.0, None, None, None, None, (0.0, 0.0), 0.0,
    ...                1.0, 1.0, uncertainty_budget={"beam_angle_deg": {"distance": 0.3,
    ...                                                                  "resolution": 0.4}})
    >>> header, rows = budget_rows(s)
    >>> header[:2]
    ['input', 'beam angle (deg)']
    >>> rows  # 0.3^2 / (0.3^2 + 0.4^2) = 36 %
    [['torch distance', '0.30 (36 %)'], ['grid resolution', '0.40 (64 %)']]
    """
    budget = shot.uncertainty_budget or {}
    figures = [(key, label) for key, label in _BUDGET_FIGURES if budget.get(key)]
    if not figures:
        return [], []
    inputs: list[str] = []
    for key, _ in figures:
        for name in budget[key]:
            if name not in inputs:
                inputs.append(name)
    header = ["input"] + [label for _, label in figures]
    rows = []
    for name in inputs:
        row = [BUDGET_INPUT_NAMES.get(name, name.replace("_", " "))]
        for key, _ in figures:
            contrib = budget[key].get(name)
            total = sum(v * v for v in budget[key].values())
            if contrib is None or total <= 0:
                row.append("—")
            else:
                row.append(f"{_fmt_sig(contrib, 2)} ({100 * contrib * contrib / total:.0f} %)")
        rows.append(row)
    return header, rows


def _view_box(shot: ShotResult, grid: WallGrid) -> tuple[float, float, float, float]:
    """Return the wall region to show, mm (left, right, bottom, top).

    About 1.6 field half angles around the axis when the distance is known (layout choice,
    no source), else the whole grid.
    """
    left, right, bottom, top = wall_extent_mm(grid)
    if shot.distance_m and shot.field_angle_deg:
        half_mm = float(_angle_to_wall_offset_mm(min(80.0, 0.8 * shot.field_angle_deg),
                                                  float(shot.distance_m)))
        half_mm = max(half_mm, 5.0 * grid.step_mm)
        ax_x, ax_y = float(shot.axis_mm[0]), float(shot.axis_mm[1])
        left, right = max(left, ax_x - half_mm), min(right, ax_x + half_mm)
        bottom, top = max(bottom, ax_y - half_mm), min(top, ax_y + half_mm)
    return left, right, bottom, top


def _crop_and_thin(grid: WallGrid, box: tuple[float, float, float, float]
                   ) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """Values inside ``box`` thinned to at most ``_MAX_IMAGE_PX`` a side; their x, y (mm)."""
    values = np.asarray(grid.values, dtype=float)
    ny, nx = values.shape
    xs = grid.x0_mm + np.arange(nx) * grid.step_mm
    ys = grid.y0_mm - np.arange(ny) * grid.step_mm
    cols = np.flatnonzero((xs >= box[0] - grid.step_mm) & (xs <= box[1] + grid.step_mm))
    rows = np.flatnonzero((ys >= box[2] - grid.step_mm) & (ys <= box[3] + grid.step_mm))
    if cols.size < 2 or rows.size < 2:
        cols, rows = np.arange(nx), np.arange(ny)
    stride = max(1, int(math.ceil(max(cols.size, rows.size) / _MAX_IMAGE_PX)))
    cols, rows = cols[::stride], rows[::stride]
    return values[np.ix_(rows, cols)], xs[cols], ys[rows], grid.step_mm * stride


def _draw_wall(canvas: _Canvas, shot: ShotResult, unit: str, peak: float) -> str | None:
    grid = shot.intensity_map
    if grid is None or np.size(grid.values) < 4:
        return None
    box = _view_box(shot, grid)
    values, xs, ys, step = _crop_and_thin(grid, box)
    extent = (xs[0] - step / 2, xs[-1] + step / 2, ys[-1] - step / 2, ys[0] + step / 2)
    fig = canvas.new()
    ax = fig.add_axes((0.15, 0.12, 0.56, 0.70))
    cax = fig.add_axes((0.86, 0.12, 0.025, 0.70))
    cmap = matplotlib.colormaps[_CMAP].with_extremes(bad="#d9d9d9")
    masked = np.ma.masked_invalid(values)
    image = ax.imshow(masked, cmap=cmap, origin="upper", extent=extent, vmin=0.0,
                      vmax=peak if peak > 0 else None, interpolation="nearest")
    finite = values[np.isfinite(values)]
    levels = [lv for lv in contour_levels(peak)
              if finite.size and finite.min() < lv < finite.max()]
    styles = {FIELD_LEVEL_FRACTION: ("white", "--"), BEAM_LEVEL_FRACTION: ("black", "-")}
    handles = []
    for level in levels:
        fraction = level / peak
        colour, style = styles.get(round(fraction, 6), ("white", ":"))
        ax.contour(xs, ys, masked, levels=[level], colors=[colour], linestyles=[style],
                   linewidths=1.3)
        handles.append(matplotlib.lines.Line2D([], [], color=colour, linestyle=style,
                                               label=f"{fraction:.0%} of peak"))
    ax.plot([shot.axis_mm[0]], [shot.axis_mm[1]], marker="+", color=_VERMILLION,
            markersize=12, markeredgewidth=2, linestyle="none")
    handles.append(matplotlib.lines.Line2D([], [], color=_VERMILLION, marker="+",
                                           linestyle="none", markersize=9, label="beam axis"))
    legend = ax.legend(handles=handles, loc="lower right", framealpha=0.85, fontsize=7)
    legend.get_frame().set_facecolor("#f0f0f0")
    ax.set_xlim(box[0], box[1])
    ax.set_ylim(box[2], box[3])
    ax.set_aspect("equal", adjustable="box")
    ax.set_xlabel("wall x (mm)")
    ax.set_ylabel("wall y (mm)")
    if shot.distance_m:
        d = float(shot.distance_m)
        ax_x, ax_y = float(shot.axis_mm[0]), float(shot.axis_mm[1])
        top = ax.secondary_xaxis(
            "top", functions=(lambda x: wall_offset_to_angle_deg(x - ax_x, d),
                              lambda a: _angle_to_wall_offset_mm(a, d) + ax_x))
        top.set_xlabel("angle from beam axis (deg)")
        right = ax.secondary_yaxis(
            "right", functions=(lambda y: wall_offset_to_angle_deg(y - ax_y, d),
                                lambda a: _angle_to_wall_offset_mm(a, d) + ax_y))
        right.set_ylabel("angle from beam axis (deg)")
    bar = fig.colorbar(image, cax=cax)
    bar.set_label("luminous intensity (cd)" if unit == "cd" else "intensity (relative)")
    return canvas.png_data_uri()


def _draw_profile(canvas: _Canvas, shot: ShotResult, unit: str, peak: float) -> str | None:
    dist = shot.distribution
    if dist is None:
        return None
    prof = azimuthal_profile(dist)
    ok = prof.n_valid > 0
    if not ok.any():
        return None
    fig = canvas.new()
    ax = fig.add_axes((0.14, 0.14, 0.82, 0.82))
    t = prof.theta_deg
    ax.fill_between(t[ok], prof.minimum[ok], prof.maximum[ok], color=_BLUE, alpha=0.12,
                    linewidth=0, label="min to max over azimuth")
    ax.fill_between(t[ok], (prof.mean - prof.std)[ok], (prof.mean + prof.std)[ok],
                    color=_BLUE, alpha=0.3, linewidth=0, label="mean ± 1 std over azimuth")
    ax.plot(t[ok], prof.mean[ok], color=_BLUE, linewidth=1.6, label="mean over azimuth")
    for fraction, style in ((BEAM_LEVEL_FRACTION, "-"), (FIELD_LEVEL_FRACTION, "--")):
        ax.axhline(fraction * peak, color="0.45", linestyle=style, linewidth=0.8)
        ax.annotate(f"{fraction:.0%}", (1.0, fraction * peak), xycoords=("axes fraction", "data"),
                    xytext=(-2, 2), textcoords="offset points", ha="right", fontsize=7,
                    color="0.3")
    for full, colour, style, name in ((shot.beam_angle_deg, _VERMILLION, "-", "beam"),
                                      (shot.field_angle_deg, _GREEN, "--", "field")):
        if full is not None and math.isfinite(full):
            ax.axvline(full / 2, color=colour, linestyle=style, linewidth=1.3,
                       label=f"{name} angle {full:.1f}° (half {full / 2:.1f}°)")
    upper = t[ok].max()
    if shot.field_angle_deg:
        upper = min(upper, max(1.6 * shot.field_angle_deg / 2, 5.0))
    ax.set_xlim(0, upper)
    ax.set_ylim(0, None)
    ax.set_xlabel("polar angle from beam axis θ (deg)")
    ax.set_ylabel("luminous intensity (cd)" if unit == "cd" else "intensity (relative)")
    ax.legend(loc="upper right")
    ax.grid(True, color="0.9")
    return canvas.png_data_uri()


def _draw_polar(canvas: _Canvas, shot: ShotResult, unit: str) -> str | None:
    dist = shot.distribution
    if dist is None:
        return None
    fig = canvas.new()
    ax = fig.add_axes((0.08, 0.13, 0.84, 0.72), projection="polar")
    limit = float(np.max(dist.theta_deg))
    if shot.field_angle_deg:
        limit = min(limit, max(shot.field_angle_deg, 30.0))
    limit = min(90.0, max(limit, 1.0))
    names = {0.0: ("plane 0–180° (wall x)", _BLUE, "-"),
             90.0: ("plane 90–270° (wall y)", _VERMILLION, "--")}
    drawn = False
    for plane, signed, intensity in plane_profiles(dist):
        keep = np.isfinite(intensity) & (np.abs(signed) <= limit)
        if not keep.any():
            continue
        label, colour, style = names[plane]
        ax.plot(np.radians(signed[keep]), intensity[keep], color=colour, linestyle=style,
                linewidth=1.5, label=label)
        drawn = True
    if not drawn:
        return None
    ax.set_theta_zero_location("N")
    ax.set_theta_direction(-1)      # +theta (the 0 deg / 90 deg half-plane) to the right
    ax.set_thetamin(-limit)
    ax.set_thetamax(limit)
    step = 5.0 if limit <= 30 else (10.0 if limit <= 60 else 15.0)
    ticks = np.arange(-math.floor(limit / step) * step, limit + 1e-9, step)
    ax.set_thetagrids(ticks, [f"{t:.0f}°".replace("-", "\u2212") for t in ticks])
    ax.set_rlim(0, None)
    fig.text(0.5, 0.985, "angle from the beam axis (deg); radius: luminous intensity ("
             + ("cd)" if unit == "cd" else "relative)"), ha="center", va="top", fontsize=9)
    fig.legend(loc="lower center", ncol=2, frameon=False)
    return canvas.png_data_uri()


def _draw_zoom(canvas: _Canvas, points: list[dict[str, Any]]) -> str | None:
    if len(points) < 2:
        return None
    fig = canvas.new()
    ax = fig.add_axes((0.12, 0.13, 0.84, 0.82))
    markers = ["o", "s", "^", "D", "v", "P", "X"]
    colours = [_BLUE, _VERMILLION, _GREEN, _ORANGE, "#CC79A7", "#56B4E9", "#000000"]
    modes = list(dict.fromkeys(p["mode"] for p in points))
    for k, mode in enumerate(modes):
        group = sorted((p for p in points if p["mode"] == mode), key=lambda p: p["beam_angle_deg"])
        ax.plot([p["beam_angle_deg"] for p in group], [p["peak"] for p in group],
                marker=markers[k % len(markers)], color=colours[k % len(colours)],
                linestyle="-" if len(group) > 1 else "none", linewidth=1,
                label=f"mode: {mode}" if mode else "mode not stated")
        for p in group:
            ax.annotate(p["label"], (p["beam_angle_deg"], p["peak"]), xytext=(4, 4),
                        textcoords="offset points", fontsize=7)
    peaks = [p["peak"] for p in points if p["peak"] and p["peak"] > 0]
    if peaks and max(peaks) / min(peaks) > 10:
        ax.set_yscale("log")
        ax.yaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(lambda v, _: f"{v:g}"))
        ax.yaxis.set_minor_formatter(matplotlib.ticker.NullFormatter())
    ax.margins(x=0.15, y=0.1)
    unit = points[0]["unit"]
    ax.set_xlabel("beam angle (deg)")
    ax.set_ylabel("peak intensity (cd)" if unit == "cd" else "peak intensity (relative)")
    ax.grid(True, color="0.9")
    ax.legend()
    return canvas.png_data_uri()


# --------------------------------------------------------------------------------------------
# HTML
# --------------------------------------------------------------------------------------------

_CSS = """
:root{--fg:#1b1b1b;--muted:#5a5a5a;--line:#d0d0d0;--accent:#0b4f8a}
*{box-sizing:border-box}
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"DejaVu Sans",sans-serif;
 line-height:1.45;color:var(--fg);background:#fff;margin:0 auto;max-width:74rem;padding:1rem}
h1{font-size:1.5rem;margin:.2rem 0}h2{font-size:1.25rem;margin-top:2rem;
 border-bottom:2px solid var(--accent);padding-bottom:.2rem}h3{font-size:1.05rem}
p.meta{color:var(--muted);margin:.2rem 0 1rem}
a{color:var(--accent)}
img{max-width:100%;height:auto;display:block}
.plots{display:grid;grid-template-columns:repeat(auto-fit,minmax(min(100%,22rem),1fr));
 gap:1rem;align-items:start}
figure{margin:0}figcaption{font-size:.85rem;color:var(--muted);margin-top:.25rem}
.table-wrap{overflow-x:auto;-webkit-overflow-scrolling:touch;margin:.5rem 0}
table{border-collapse:collapse;font-size:.9rem}
th,td{padding:.3rem .55rem;border-bottom:1px solid var(--line);text-align:left;
 vertical-align:top}
th{background:#f3f5f8}
td:first-child{min-width:7.5rem}
td.num{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
.caution{border-left:5px solid #a64d00;background:#fff6ec;padding:.4rem 1rem;margin:1rem 0}
.caution ul{margin:.3rem 0;padding-left:1.2rem}
.warnings{border-left:5px solid #7a5c00;background:#fffbe6;padding:.4rem 1rem}
.warnings ul{margin:.3rem 0;padding-left:1.2rem}
nav ul{display:flex;flex-wrap:wrap;gap:.3rem 1rem;padding:0;list-style:none}
code{font-size:.85em}code.hash{word-break:break-all}
.empty{color:var(--muted)}
@media (max-width:600px){body{padding:.6rem}h1{font-size:1.25rem}table{font-size:.82rem}}
@media print{nav{display:none}body{max-width:none;padding:0;font-size:10pt}
 section.shot{break-before:page}figure,table,tr,.caution{break-inside:avoid}
 .plots{grid-template-columns:1fr 1fr}a{color:inherit;text-decoration:none}
 th{background:none}}
@page{margin:14mm}
"""

_CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"


def _e(text: Any) -> str:
    return html.escape("—" if text is None else str(text), quote=True)


def _table(header: Sequence[str], rows: Iterable[Sequence[Any]], *,
           numeric: Sequence[int] = ()) -> str:
    head = "".join(f"<th scope=\"col\">{_e(h)}</th>" for h in header)
    body = []
    for row in rows:
        cells = []
        for k, cell in enumerate(row):
            cls = " class=\"num\"" if k in numeric else ""
            cells.append(f"<td{cls}>{_e(cell)}</td>")
        body.append("<tr>" + "".join(cells) + "</tr>")
    return (f"<div class=\"table-wrap\"><table><thead><tr>{head}</tr></thead>"
            f"<tbody>{''.join(body)}</tbody></table></div>")


def _plain(value: Any) -> str:
    if value is None:
        return "—"
    if isinstance(value, float):
        return _fmt_sig(value, 4) if abs(value) >= 1 else f"{value:.4g}"
    if isinstance(value, (list, tuple)):
        return " to ".join(_plain(v) for v in value) if len(value) == 2 else \
            ", ".join(_plain(v) for v in value)
    if isinstance(value, dict):
        return "; ".join(f"{k}: {_plain(v)}" for k, v in value.items())
    return str(value)


def _dict_table(data: dict[str, Any]) -> str:
    return _table(("key", "value"), [(k, _plain(v)) for k, v in data.items()])


def _warning_list(warnings: Sequence[str]) -> str:
    if not warnings:
        return ""
    items = "".join(f"<li>{_e(w)}</li>" for w in warnings)
    return f"<div class=\"warnings\" role=\"note\"><strong>Warnings</strong><ul>{items}</ul></div>"


def _figure(uri: str | None, alt: str, caption: str) -> str:
    if uri is None:
        return ""
    return (f"<figure><img src=\"{uri}\" alt=\"{_e(alt)}\">"
            f"<figcaption>{_e(caption)}</figcaption></figure>")


def _inputs_rows(inputs: Iterable[InputFile], owner: str) -> list[tuple[str, str, str, str]]:
    return [(owner, f.role, f.path, f.sha256) for f in inputs]


def _anchor(index: int) -> str:
    return f"shot-{index + 1}"


def _shot_section(index: int, shot: ShotResult, session: SessionResult,
                  canvases: dict[str, _Canvas]) -> str:
    dist = shot.distribution
    unit = dist.unit if dist is not None else ("cd" if session.calibrated else "relative")
    if dist is not None and math.isfinite(dist.peak) and dist.peak > 0:
        peak = float(dist.peak)
    elif shot.intensity_map is not None and np.isfinite(shot.intensity_map.values).any():
        peak = float(np.nanmax(shot.intensity_map.values))
    else:
        peak = float("nan")
    tags = " · ".join(f"{k}: {v}" for k, v in (("zoom", shot.zoom), ("mode", shot.mode)) if v)
    parts = [f"<section class=\"shot\" id=\"{_anchor(index)}\">",
             f"<h2>Shot {index + 1}: {_e(shot.label)}</h2>"]
    if tags:
        parts.append(f"<p class=\"meta\">{_e(tags)}</p>")
    parts.append(_warning_list(shot.warnings))
    parts.append("<h3>Figures</h3>")
    parts.append(_table(("figure", "value", "standard uncertainty (k = 1)", "unit"),
                        figure_rows(shot), numeric=(1, 2)))
    header, rows = budget_rows(shot)
    if rows:
        parts.append("<h3>Uncertainty budget</h3><p class=\"meta\">Each input's contribution "
                     "to the standard uncertainty (k = 1), and its share of the variance, by "
                     "Monte Carlo propagation (JCGM 101).</p>")
        parts.append(_table(header, rows, numeric=tuple(range(1, len(header)))))
    plots = []
    if math.isfinite(peak):
        wall = _draw_wall(canvases["wall"], shot, unit, peak)
        plots.append(_figure(
            wall, f"False-colour wall image of shot {shot.label}",
            "The beam on the wall, seen from the torch, in false colour (cividis). Solid black: "
            "50 % of the peak (beam); dashed white: 10 % (field); +: beam axis; grey: outside "
            "the photo. Scales in mm on the wall and, where the distance is known, in degrees "
            "from the beam axis."))
        prof = _draw_profile(canvases["profile"], shot, unit, peak)
        plots.append(_figure(
            prof, f"Intensity profile of shot {shot.label}",
            "Intensity against polar angle: mean over azimuth with its spread (±1 std and "
            "min–max band). Vertical lines: half of the beam and field angles."))
        polar = _draw_polar(canvases["polar"], shot, unit)
        plots.append(_figure(
            polar, f"Polar intensity diagram of shot {shot.label}",
            "Polar diagram of intensity in two planes through the beam axis (beam axis "
            "up): along the wall's x (0°/180°) and y (90°/270°) directions."))
    if any(plots):
        parts.append("<h3>Pictures</h3><div class=\"plots\">" + "".join(plots) + "</div>")
    else:
        parts.append("<p class=\"empty\">No intensity data to draw for this shot.</p>")
    if shot.claims:
        parts.append("<h3>Claims</h3>" + _claims_table(shot.claims))
    if shot.electrical:
        parts.append("<h3>Electrical cross-check (this shot)</h3>"
                     + _dict_table(shot.electrical))
    parts.append("</section>")
    return "".join(parts)


#: Claim audit columns shown in the table (the reasons follow as a list).
_CLAIM_COLUMNS: tuple[tuple[str, str], ...] = (
    ("label", "shot"), ("figure", "figure"), ("claimed", "claimed"),
    ("measured", "measured"), ("measured_sigma", "u (k = 1)"), ("ratio", "measured / claimed"),
    ("consistent_range", "consistent range"), ("physical_limit", "physical limit"),
    ("verdict", "verdict"),
)


def _claims_table(claims: Sequence[dict[str, Any]]) -> str:
    cols = [(k, h) for k, h in _CLAIM_COLUMNS if any(k in c for c in claims)]
    table = _table([h for _, h in cols], [[_plain(c.get(k)) for k, _ in cols] for c in claims],
                   numeric=tuple(i for i, (k, _) in enumerate(cols)
                                 if k in ("claimed", "measured", "measured_sigma", "ratio")))
    notes = []
    for c in claims:
        for reason in c.get("reasons") or ():
            notes.append(f"<li><strong>{_e(c.get('label'))}, {_e(c.get('figure'))}:</strong> "
                         f"{_e(reason)}</li>")
    return table + (f"<ul class=\"reasons\">{''.join(notes)}</ul>" if notes else "")


def _keyed_section(data: dict[str, Any], *, skip: Sequence[str] = ()) -> str:
    """A mapping as a key/value table, with its 'reasons' and 'warnings' as lists below."""
    rows = {k: v for k, v in data.items()
            if k not in ("reasons", "warnings", *skip) and not isinstance(v, list)
            or (isinstance(v, list) and v and not isinstance(v[0], dict)
                and k not in ("reasons", "warnings"))}
    out = _dict_table(rows)
    for key in ("reasons", "warnings"):
        items = data.get(key) or []
        if items:
            out += (f"<p class=\"meta\">{_e(key)}:</p><ul>"
                    + "".join(f"<li>{_e(i)}</li>" for i in items) + "</ul>")
    return out


def _summary_table(session: SessionResult) -> str:
    rows = []
    for k, s in enumerate(session.shots):
        rows.append((f"{k + 1}. {s.label}", s.zoom or "—", s.mode or "—", _fmt(s.beam_angle_deg),
                     _fmt(s.field_angle_deg), _fmt_sig(s.peak_intensity_cd),
                     _fmt_sig(s.throw_m), _fmt_sig(s.flux_lm),
                     _fmt(s.relative_peak_intensity, 3)))
    return _table(("shot", "zoom", "mode", "beam angle (deg)", "field angle (deg)",
                   "peak intensity (cd)", "throw (m)", "flux (lm)", "relative peak"),
                  rows, numeric=(3, 4, 5, 6, 7, 8))


def render_html(session: SessionResult) -> str:
    """Return the report page of a session as one self-contained HTML string.

    Parameters
    ----------
    session : SessionResult
        The session's results; optional parts (zoom, electrical, claims, calibration, warnings,
        inputs) are shown when present.

    Returns
    -------
    str
        An HTML5 document with PNG images embedded as base64, inline CSS and no script.
    """
    canvases = {"wall": _Canvas(5.6, 4.6), "profile": _Canvas(5.6, 3.8),
                "polar": _Canvas(5.0, 4.4), "zoom": _Canvas(6.0, 4.0)}
    title = session.title or "Torch beam measurement"
    meta = [f"beamwall {session.beamwall_version}",
            "calibrated (absolute candela)" if session.calibrated
            else "not calibrated: intensities are relative; no candela, throw or lumens"]
    if session.created_utc:
        meta.append(f"created {session.created_utc} UTC")
    if session.session_file:
        meta.append(f"session file {session.session_file}")

    out = ["<!DOCTYPE html><html lang=\"en\"><head><meta charset=\"utf-8\">",
           f"<meta http-equiv=\"Content-Security-Policy\" content=\"{_CSP}\">",
           "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">",
           f"<title>{_e(title)}</title><style>{_CSS}</style></head><body>",
           f"<header><h1>{_e(title)}</h1><p class=\"meta\">{_e(' · '.join(meta))}</p></header>"]
    out.append("<aside class=\"caution\" role=\"note\"><strong>Caution:</strong> never look "
               "into the beam or aim it at eyes, drivers or aircraft. "
               "<a href=\"#cautions\">All cautions</a></aside>")
    if session.shots:
        links = "".join(f"<li><a href=\"#{_anchor(k)}\">{k + 1}. {_e(s.label)}</a></li>"
                        for k, s in enumerate(session.shots))
        out.append(f"<nav aria-label=\"shots\"><ul>{links}<li><a href=\"#provenance\">"
                   f"calibration and inputs</a></li></ul></nav>")
    out.append("<section><h2>Summary</h2>")
    out.append(_summary_table(session) if session.shots
               else "<p class=\"empty\">No shots.</p>")
    out.append(_warning_list(session.warnings))
    out.append("</section>")

    with matplotlib.rc_context(_RC):
        points = zoom_chart_points(session)
        zoom_uri = _draw_zoom(canvases["zoom"], points)
        if zoom_uri or session.zoom:
            out.append("<section><h2>Zoom comparison</h2>")
            out.append(_figure(zoom_uri, "Beam angle against peak intensity for every shot",
                               "Beam angle against peak intensity, one point per shot; "
                               "lines join shots of the same mode."))
            if session.zoom:
                out.append(_keyed_section(session.zoom))
                settings = session.zoom.get("settings") or []
                if settings and isinstance(settings[0], dict):
                    keys = list(dict.fromkeys(k for r in settings for k in r))
                    out.append(_table(keys, [[_plain(r.get(k)) for k in keys]
                                             for r in settings]))
            out.append("</section>")
        ratios = mode_ratio_rows(session)
        if ratios:
            out.append("<section><h2>Mode ratios</h2><p>Each shot against the brightest shot "
                       "at the same zoom setting.</p>")
            out.append(_table(("shot", "zoom", "mode", "peak ratio", "flux ratio"),
                              [(r["label"], r["zoom"] or "—", r["mode"] or "—",
                                _fmt(r["peak_ratio"], 3), _fmt(r["flux_ratio"], 3))
                               for r in ratios], numeric=(3, 4)))
            out.append("</section>")
        if session.electrical:
            out.append("<section><h2>Electrical cross-check</h2>"
                       + _keyed_section(session.electrical) + "</section>")
        if session.claims:
            out.append("<section><h2>Claim audit</h2>" + _claims_table(session.claims)
                       + "</section>")
        for k, shot in enumerate(session.shots):
            out.append(_shot_section(k, shot, session, canvases))

    out.append("<section id=\"provenance\"><h2>Calibration used</h2>")
    out.append(_dict_table(session.calibration) if session.calibration
               else "<p class=\"empty\">None: results are relative.</p>")
    rows = _inputs_rows(session.inputs, "session")
    for shot in session.shots:
        rows += _inputs_rows(shot.inputs, shot.label)
    out.append("<h2>Inputs</h2>")
    if rows:
        head = ("used by", "role", "path", "SHA-256")
        body = "".join(
            f"<tr><td>{_e(a)}</td><td>{_e(b)}</td><td><code>{_e(c)}</code></td>"
            f"<td><code class=\"hash\">{_e(d)}</code></td></tr>" for a, b, c, d in rows)
        out.append("<div class=\"table-wrap\"><table><thead><tr>"
                   + "".join(f"<th scope=\"col\">{h}</th>" for h in head)
                   + f"</tr></thead><tbody>{body}</tbody></table></div>")
    else:
        out.append("<p class=\"empty\">No input files recorded.</p>")
    if session.settings:
        out.append("<h2>Settings</h2>" + _dict_table(session.settings))
    cautions = "".join(f"<li>{_e(c)}</li>" for c in CAUTIONS)
    out.append(f"</section><section id=\"cautions\"><h2>Cautions</h2>"
               f"<div class=\"caution\"><ul>{cautions}</ul></div>")
    out.append("</section><footer><p class=\"meta\">Made with beamwall "
               f"{_e(session.beamwall_version)}. Beam angle and field angle: full angles at 50 %"
               " and 10 % of the peak intensity; uncertainties are standard uncertainties "
               "(k = 1).</p></footer></body></html>")
    return "".join(out)


def write_html(session: SessionResult, path: str | PathLike[str]) -> Path:
    """Write ``report.html`` for a session.

    Parameters
    ----------
    session : SessionResult
        The session's results.
    path : str or path-like
        The file to write (overwritten if it exists; the caller decides whether it may be).

    Returns
    -------
    pathlib.Path
        The path written.
    """
    text = render_html(session)
    out = Path(path)
    with open(out, "w", encoding="utf-8") as handle:
        handle.write(text)
    return out
