"""Session-level comparisons: the zoom range, the modes, the electrical check, the claim audit.

All functions take the measured shots (:class:`beamwall.results.ShotResult`) and return small
frozen dataclasses whose ``to_dict()`` gives the session-level keys of ``results.json``
(``zoom``, ``modes``, ``electrical``, ``claims``).

Flux in a common cone
---------------------
Each shot's flux is measured within the largest cone its photo covers, so two shots' flux
figures are compared only within a cone both cover: the common half angle is the smallest of
the shots' largest cones, read off each shot's cumulative flux curve (``cone_half_angle_deg``,
``cone_flux``; lm when calibrated, relative units otherwise). A ratio of two fluxes is the same
in either unit.

Verdict words
-------------
Claims (:func:`audit_claim`): ``"consistent"``, ``"overstated"``, ``"understated"``,
``"physically impossible"``, ``"not measured"``.

References
----------
.. [FL1] ANSI/PLATO FL 1-2019, *Flashlight Basic Performance Standard*, as reproduced by
   secondary sources: peak beam intensity I = E d^2 (1.2.2); beam distance d = sqrt(I / 0.25 lx)
   = 2 sqrt(I) (1.2.1); light output is the total flux (1.2.4).
.. [GUM] JCGM 100:2008, *Evaluation of measurement data - Guide to the expression of
   uncertainty in measurement*: expanded uncertainty U = k u_c, k = 2 for about 95 %.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from beamwall.constants import THROW_ILLUMINANCE_LX
from beamwall.electrical import (
    ElectricalCheck,
    ElectricalEstimate,
    PlausibilityBound,
    cross_check,
    electrical_estimate,
    plausibility_bound,
)
from beamwall.errors import InputError
from beamwall.results import ShotResult
from beamwall.session import ElectricalSpec, ShotSpec

__all__ = [
    "DEFAULT_CLAIM_TOLERANCE_FRACTION",
    "ZoomSetting",
    "ZoomSummary",
    "ModeRatio",
    "ModeSummary",
    "FluxBasis",
    "ClaimCheck",
    "common_half_angle_deg",
    "flux_in_cone",
    "zoom_summary",
    "mode_ratios",
    "best_flux",
    "session_electrical",
    "audit_claim",
    "audit_claims",
    "audit_shot",
    "SessionComparison",
    "session_comparisons",
]

#: Tolerance allowed on a claim beyond the measurement's k=2 interval, as a fraction of the
#: measured value (common practice, no source: FL 1 states no tolerance; sample-to-sample
#: spread and the 30 s timing make 10 % a fair allowance).
DEFAULT_CLAIM_TOLERANCE_FRACTION: float = 0.10

_CONSISTENT = "consistent"
_OVER = "overstated"
_UNDER = "understated"
_IMPOSSIBLE = "physically impossible"
_NOT_MEASURED = "not measured"


# ----------------------------------------------------------------------------------------
# Flux within a common cone
# ----------------------------------------------------------------------------------------


def _calibrated(shots: Sequence[ShotResult]) -> bool:
    return all(s.peak_intensity_cd is not None for s in shots)


def _largest_cone_deg(shot: ShotResult) -> float | None:
    if shot.cone_half_angle_deg is not None and shot.cone_flux is not None:
        ang = np.asarray(shot.cone_half_angle_deg, dtype=float)
        flux = np.asarray(shot.cone_flux, dtype=float)
        ok = np.isfinite(ang) & np.isfinite(flux)
        if np.any(ok):
            return float(np.max(ang[ok]))
    return shot.flux_half_angle_deg


def common_half_angle_deg(shots: Sequence[ShotResult]) -> float | None:
    """Return the largest cone half angle every shot covers.

    Parameters
    ----------
    shots : sequence of ShotResult
        Shots with a cumulative flux curve or a ``flux_half_angle_deg``.

    Returns
    -------
    float or None
        The smallest of the shots' largest cones, deg; None when a shot has no flux at all.

    Examples
    --------
    >>> a = _demo_shot("a", flux_half_angle_deg=40.0)
    >>> b = _demo_shot("b", flux_half_angle_deg=35.5)
    >>> common_half_angle_deg([a, b])
    35.5
    """
    cones = [_largest_cone_deg(s) for s in shots]
    if not cones or any(c is None for c in cones):
        return None
    return float(min(c for c in cones if c is not None))


def flux_in_cone(shot: ShotResult, half_angle_deg: float, *, calibrated: bool) -> float | None:
    """Return a shot's flux within a cone of the given half angle.

    Parameters
    ----------
    shot : ShotResult
        The shot, with its cumulative flux curve (preferred) or its ``flux_lm`` /
        ``relative_flux`` within ``flux_half_angle_deg``.
    half_angle_deg : float
        Half angle of the cone, deg, within the shot's measured range.
    calibrated : bool
        True: lm (``cone_flux`` in lm, or ``flux_lm``); False: relative units (``cone_flux``
        in relative units, or ``relative_flux``).

    Returns
    -------
    float or None
        The flux, lm or relative; None when the shot's data cannot give it (no curve and a
        different cone).

    Notes
    -----
    Linear interpolation of the cumulative flux curve (0.1 deg steps). Without a curve, the
    shot's single figure is used only when its cone is the one asked for (to 0.05 deg).

    Examples
    --------
    >>> s = _demo_shot("a", flux_half_angle_deg=40.0, flux_lm=400.0)
    >>> round(flux_in_cone(s, 20.0, calibrated=True), 3)   # curve: 10 lm per degree
    200.0
    """
    if shot.cone_half_angle_deg is not None and shot.cone_flux is not None:
        ang = np.asarray(shot.cone_half_angle_deg, dtype=float)
        flux = np.asarray(shot.cone_flux, dtype=float)
        ok = np.isfinite(ang) & np.isfinite(flux)
        if np.any(ok) and half_angle_deg <= float(np.max(ang[ok])) + 1e-9:
            return float(np.interp(half_angle_deg, ang[ok], flux[ok]))
        return None
    if shot.flux_half_angle_deg is None or abs(shot.flux_half_angle_deg - half_angle_deg) > 0.05:
        return None
    return shot.flux_lm if calibrated else shot.relative_flux


def _peak(shot: ShotResult, calibrated: bool) -> float:
    if calibrated and shot.peak_intensity_cd is not None:
        return float(shot.peak_intensity_cd)
    return float(shot.relative_peak_intensity)


# ----------------------------------------------------------------------------------------
# Zoom
# ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ZoomSetting:
    """One shot of the mode compared across the zoom.

    Attributes
    ----------
    label, zoom, mode : str or None
        The shot's label and tags.
    beam_angle_deg : float
        Full beam angle, deg.
    peak : float
        Peak intensity, cd when calibrated, else relative.
    throw_m : float or None
        Throw, m (calibrated only).
    flux_in_common_cone : float or None
        Flux within the common cone, lm when calibrated, else relative units.
    flux_kept_fraction : float or None
        That flux over the largest of the compared shots'.
    """

    label: str
    zoom: str | None
    mode: str | None
    beam_angle_deg: float
    peak: float
    throw_m: float | None
    flux_in_common_cone: float | None
    flux_kept_fraction: float | None

    def to_dict(self) -> dict[str, Any]:
        """Return the setting as a plain dict."""
        return {
            "label": self.label, "zoom": self.zoom, "mode": self.mode,
            "beam_angle_deg": self.beam_angle_deg, "peak": self.peak, "throw_m": self.throw_m,
            "flux_in_common_cone": self.flux_in_common_cone,
            "flux_kept_fraction": self.flux_kept_fraction,
        }


@dataclass(frozen=True)
class ZoomSummary:
    """How the beam changes across the zoom.

    Attributes
    ----------
    beam_angle_min_deg, beam_angle_max_deg : float
        Narrowest and widest beam angle over all the session's shots, deg.
    beam_angle_ratio : float
        beam_angle_max_deg / beam_angle_min_deg.
    narrow_label, wide_label : str
        Labels of the shots with those angles.
    compared_mode : str or None
        The mode whose shots are compared across the zoom (flux and intensity trade).
    flux_ratio_narrow_to_wide : float or None
        Flux within the common cone of the compared mode's narrowest shot over its widest's.
    peak_ratio_narrow_to_wide : float or None
        Peak intensity of the narrowest over the widest shot.
    throw_ratio_narrow_to_wide : float or None
        Throw of the narrowest over the widest shot (sqrt of the peak ratio [FL1]).
    intensity_beam_angle_exponent : float or None
        k in peak proportional to beam_angle^-k, least squares in log-log over the compared
        shots (k = 2 when the zoom keeps all the flux and the beam keeps its shape at small
        angles, since the solid angle scales as the angle squared).
    common_half_angle_deg : float or None
        Half angle of the common cone, deg.
    flux_unit : str
        ``"lm"`` or ``"relative"``.
    flux_loss_fraction : float or None
        1 - (smallest flux in the common cone / largest), over the compared shots: how much
        light the zoom loses at its lossy end.
    flux_loss_label : str or None
        Label of the shot that keeps the least light.
    flux_loss_end : str or None
        ``"narrow"``, ``"wide"`` or ``"middle"``: where that shot lies in the zoom range.
    settings : tuple of ZoomSetting
        The compared shots, narrowest first.
    warnings : tuple of str
    """

    beam_angle_min_deg: float
    beam_angle_max_deg: float
    beam_angle_ratio: float
    narrow_label: str
    wide_label: str
    compared_mode: str | None
    flux_ratio_narrow_to_wide: float | None
    peak_ratio_narrow_to_wide: float | None
    throw_ratio_narrow_to_wide: float | None
    intensity_beam_angle_exponent: float | None
    common_half_angle_deg: float | None
    flux_unit: str
    flux_loss_fraction: float | None
    flux_loss_label: str | None
    flux_loss_end: str | None
    settings: tuple[ZoomSetting, ...]
    warnings: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Return the summary under the results.json ``zoom`` key names."""
        return {
            "beam_angle_min_deg": self.beam_angle_min_deg,
            "beam_angle_max_deg": self.beam_angle_max_deg,
            "beam_angle_ratio": self.beam_angle_ratio,
            "narrow_label": self.narrow_label,
            "wide_label": self.wide_label,
            "compared_mode": self.compared_mode,
            "flux_ratio_narrow_to_wide": self.flux_ratio_narrow_to_wide,
            "peak_intensity_ratio_narrow_to_wide": self.peak_ratio_narrow_to_wide,
            "throw_ratio_narrow_to_wide": self.throw_ratio_narrow_to_wide,
            "intensity_beam_angle_exponent": self.intensity_beam_angle_exponent,
            "common_half_angle_deg": self.common_half_angle_deg,
            "flux_unit": self.flux_unit,
            "flux_loss_fraction": self.flux_loss_fraction,
            "flux_loss_label": self.flux_loss_label,
            "flux_loss_end": self.flux_loss_end,
            "settings": [s.to_dict() for s in self.settings],
            "warnings": list(self.warnings),
        }


def _check_shots(shots: Sequence[ShotResult]) -> list[ShotResult]:
    shots = list(shots)
    if not shots:
        raise InputError("no shots to compare", field="shots")
    return shots


def zoom_summary(shots: Sequence[ShotResult]) -> ZoomSummary:
    """Summarise the zoom range and what the zoom trades across it.

    Parameters
    ----------
    shots : sequence of ShotResult
        The session's shots (tags ``zoom`` and ``mode`` optional).

    Returns
    -------
    ZoomSummary

    Raises
    ------
    InputError
        If no shot has a beam angle.

    Notes
    -----
    The beam-angle range covers all shots (the contract). The flux and intensity comparison
    needs one mode across the zoom: the shots are grouped by ``mode`` and the group covering
    the most zoom settings (distinct ``zoom`` tags) is compared; ties go to the group holding
    the brightest shot (largest peak), then to the wider span of beam angles.
    Within it, each shot's flux is taken within the common cone (see the module notes); the
    throw ratio is sqrt(peak ratio), as throw = 2 sqrt(I) [FL1].

    Examples
    --------
    >>> wide = _demo_shot("wide", beam_angle_deg=40.0, peak=100.0, flux_lm=400.0)
    >>> narrow = _demo_shot("narrow", beam_angle_deg=10.0, peak=1500.0, flux_lm=300.0)
    >>> z = zoom_summary([wide, narrow])
    >>> z.beam_angle_ratio, round(z.flux_ratio_narrow_to_wide, 3), z.flux_loss_end
    (4.0, 0.75, 'narrow')
    """
    shots = _check_shots(shots)
    warnings: list[str] = []
    angled = [s for s in shots if s.beam_angle_deg is not None
              and math.isfinite(s.beam_angle_deg)]
    if not angled:
        raise InputError("no shot has a beam angle", field="shots")
    if len(angled) < len(shots):
        warnings.append(f"{len(shots) - len(angled)} shot(s) without a beam angle left out")
    calibrated = _calibrated(angled)
    narrow = min(angled, key=lambda s: float(s.beam_angle_deg))  # type: ignore[arg-type]
    wide = max(angled, key=lambda s: float(s.beam_angle_deg))  # type: ignore[arg-type]
    a_min = float(narrow.beam_angle_deg)  # type: ignore[arg-type]
    a_max = float(wide.beam_angle_deg)  # type: ignore[arg-type]

    groups: dict[str | None, list[ShotResult]] = {}
    for s in angled:
        groups.setdefault(s.mode, []).append(s)

    def rank(item: tuple[str | None, list[ShotResult]]) -> tuple[int, float, float]:
        members = item[1]
        angles = [float(m.beam_angle_deg) for m in members]  # type: ignore[arg-type]
        n_settings = len({m.zoom for m in members})
        return (n_settings, max(_peak(m, calibrated) for m in members),
                max(angles) / min(angles))

    mode, members = max(groups.items(), key=rank)
    if len(groups) > 1:
        others = sorted(str(k) for k in groups if k != mode)
        warnings.append(f"flux and intensity compared across the zoom in mode {mode!r}; "
                        f"other modes ({', '.join(others)}) are in the mode ratios")
    members = sorted(members, key=lambda s: float(s.beam_angle_deg))  # type: ignore[arg-type]
    cone = common_half_angle_deg(members)
    fluxes: list[float | None] = []
    for s in members:
        f = None if cone is None else flux_in_cone(s, cone, calibrated=calibrated)
        if f is None:
            warnings.append(f"shot {s.label!r}: no flux within the common cone")
        fluxes.append(f)
    known = [f for f in fluxes if f is not None]
    f_max = max(known) if known else None
    settings = tuple(
        ZoomSetting(
            label=s.label, zoom=s.zoom, mode=s.mode,
            beam_angle_deg=float(s.beam_angle_deg),  # type: ignore[arg-type]
            peak=_peak(s, calibrated), throw_m=s.throw_m, flux_in_common_cone=f,
            flux_kept_fraction=(None if f is None or not f_max else f / f_max))
        for s, f in zip(members, fluxes))

    flux_ratio = peak_ratio = throw_ratio = exponent = None
    loss = None
    loss_label = loss_end = None
    if len(members) >= 2:
        n, w = settings[0], settings[-1]
        if n.flux_in_common_cone is not None and w.flux_in_common_cone:
            flux_ratio = n.flux_in_common_cone / w.flux_in_common_cone
        if w.peak > 0:
            peak_ratio = n.peak / w.peak
            throw_ratio = math.sqrt(peak_ratio)
        ang = np.array([st.beam_angle_deg for st in settings])
        pk = np.array([st.peak for st in settings])
        ok = (ang > 0) & (pk > 0)
        if np.unique(ang[ok]).size >= 2:
            slope = np.polyfit(np.log(ang[ok]), np.log(pk[ok]), 1)[0]
            exponent = float(-slope)
        if len(known) == len(settings) and f_max:
            kept = [float(f) for f in known]
            i_min = int(np.argmin(kept))
            loss = 1.0 - kept[i_min] / f_max
            loss_label = settings[i_min].label
            loss_end = ("narrow" if i_min == 0 else "wide" if i_min == len(settings) - 1
                        else "middle")
    else:
        warnings.append("one shot in the compared mode: no flux or intensity trade")
    return ZoomSummary(
        beam_angle_min_deg=a_min,
        beam_angle_max_deg=a_max,
        beam_angle_ratio=a_max / a_min if a_min > 0 else math.inf,
        narrow_label=narrow.label,
        wide_label=wide.label,
        compared_mode=mode,
        flux_ratio_narrow_to_wide=flux_ratio,
        peak_ratio_narrow_to_wide=peak_ratio,
        throw_ratio_narrow_to_wide=throw_ratio,
        intensity_beam_angle_exponent=exponent,
        common_half_angle_deg=cone,
        flux_unit="lm" if calibrated else "relative",
        flux_loss_fraction=loss,
        flux_loss_label=loss_label,
        flux_loss_end=loss_end,
        settings=settings,
        warnings=tuple(warnings),
    )


# ----------------------------------------------------------------------------------------
# Modes
# ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ModeRatio:
    """One shot's output relative to the brightest mode at its zoom setting.

    Attributes
    ----------
    label, zoom, mode : str or None
        The shot's label and tags.
    reference_label, reference_mode : str or None
        The brightest shot at the same zoom setting (largest flux in the common cone; the
        largest peak when a flux is missing).
    peak_ratio : float
        Peak intensity over the reference's.
    flux_ratio : float or None
        Flux within the group's common cone over the reference's.
    common_half_angle_deg : float or None
        That cone's half angle, deg.
    """

    label: str
    zoom: str | None
    mode: str | None
    reference_label: str
    reference_mode: str | None
    peak_ratio: float
    flux_ratio: float | None
    common_half_angle_deg: float | None

    def to_dict(self) -> dict[str, Any]:
        """Return the ratio as a plain dict."""
        return {
            "label": self.label, "zoom": self.zoom, "mode": self.mode,
            "reference_label": self.reference_label, "reference_mode": self.reference_mode,
            "peak_ratio": self.peak_ratio, "flux_ratio": self.flux_ratio,
            "common_half_angle_deg": self.common_half_angle_deg,
        }


@dataclass(frozen=True)
class ModeSummary:
    """Each shot's output relative to the brightest mode at the same zoom setting."""

    entries: tuple[ModeRatio, ...]
    warnings: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Return ``{"modes": [...], "warnings": [...]}``."""
        return {"modes": [e.to_dict() for e in self.entries],
                "warnings": list(self.warnings)}


def mode_ratios(shots: Sequence[ShotResult]) -> ModeSummary:
    """Relate each shot's peak and flux to the brightest mode at the same zoom setting.

    Parameters
    ----------
    shots : sequence of ShotResult
        The session's shots; grouped by their ``zoom`` tag (untagged shots form one group).

    Returns
    -------
    ModeSummary
        One entry per shot, in the order given.

    Notes
    -----
    Within a group the flux is compared within the group's common cone (module notes); the
    brightest shot is the one with the largest such flux, or the largest peak when a flux is
    missing. Uncalibrated shots are compared through ``relative_peak_intensity`` and their
    relative cumulative flux; the ratios are the same in either unit.

    Examples
    --------
    >>> hi = _demo_shot("high", mode="high", peak=1000.0, flux_lm=500.0)
    >>> lo = _demo_shot("low", mode="low", peak=250.0, flux_lm=125.0)
    >>> [(e.label, e.peak_ratio, e.flux_ratio) for e in mode_ratios([lo, hi]).entries]
    [('low', 0.25, 0.25), ('high', 1.0, 1.0)]
    """
    shots = _check_shots(shots)
    calibrated = _calibrated(shots)
    warnings: list[str] = []
    groups: dict[str | None, list[ShotResult]] = {}
    for s in shots:
        groups.setdefault(s.zoom, []).append(s)
    by_label: dict[int, ModeRatio] = {}
    for zoom, members in groups.items():
        cone = common_half_angle_deg(members)
        fluxes = [None if cone is None else flux_in_cone(s, cone, calibrated=calibrated)
                  for s in members]
        if all(f is not None for f in fluxes):
            ref_i = int(np.argmax([float(f) for f in fluxes]))  # type: ignore[arg-type]
        else:
            ref_i = int(np.argmax([_peak(s, calibrated) for s in members]))
            warnings.append(f"zoom {zoom!r}: a shot has no flux in the common cone; the "
                            "brightest mode is the one with the largest peak")
        ref = members[ref_i]
        ref_peak = _peak(ref, calibrated)
        ref_flux = fluxes[ref_i]
        for s, f in zip(members, fluxes):
            by_label[id(s)] = ModeRatio(
                label=s.label, zoom=s.zoom, mode=s.mode,
                reference_label=ref.label, reference_mode=ref.mode,
                peak_ratio=_peak(s, calibrated) / ref_peak if ref_peak > 0 else math.nan,
                flux_ratio=(None if f is None or not ref_flux else f / ref_flux),
                common_half_angle_deg=cone)
    return ModeSummary(entries=tuple(by_label[id(s)] for s in shots),
                       warnings=tuple(warnings))


# ----------------------------------------------------------------------------------------
# Electrical check at session level
# ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class FluxBasis:
    """The best estimate of a light's total flux, and where it came from.

    Attributes
    ----------
    flux_lm : float
        The flux, lm.
    flux_sigma_lm : float or None
        Its standard uncertainty (k=1), lm.
    flux_basis : str
        The key it came from (``"flux_lm"``: within a cone, a lower bound of the total).
    flux_half_angle_deg : float or None
        The cone's half angle, deg.
    label : str
        The shot it came from.
    """

    flux_lm: float
    flux_sigma_lm: float | None
    flux_basis: str
    flux_half_angle_deg: float | None
    label: str


def best_flux(shots: Sequence[ShotResult]) -> FluxBasis | None:
    """Pick the best estimate of the total flux among shots of one electrical state.

    Parameters
    ----------
    shots : sequence of ShotResult
        Shots taken with the same current (e.g. one mode at several zoom settings).

    Returns
    -------
    FluxBasis or None
        The shot with the largest ``flux_lm`` (the zoom setting that loses the least light
        and the widest cone); None when no shot is calibrated.

    Notes
    -----
    ``flux_lm`` counts the light within the shot's cone only, so every candidate is a lower
    bound of the total; the largest is the tightest.

    Examples
    --------
    >>> a = _demo_shot("a", flux_lm=300.0)
    >>> b = _demo_shot("b", flux_lm=400.0)
    >>> best_flux([a, b]).label
    'b'
    """
    cal = [s for s in shots if s.flux_lm is not None and math.isfinite(s.flux_lm)]
    if not cal:
        return None
    s = max(cal, key=lambda x: float(x.flux_lm))  # type: ignore[arg-type]
    return FluxBasis(float(s.flux_lm), s.flux_sigma_lm, "flux_lm",  # type: ignore[arg-type]
                     s.flux_half_angle_deg, s.label)


def session_electrical(
    estimate: ElectricalEstimate,
    shots: Sequence[ShotResult],
    *,
    power_sigma_fraction: float = 0.02,
) -> ElectricalCheck:
    """Cross-check an electrical table against the best flux among the shots it applies to.

    Parameters
    ----------
    estimate : ElectricalEstimate
        From :func:`beamwall.electrical.electrical_estimate`.
    shots : sequence of ShotResult
        The shots this table applies to (for the session table: those without their own
        ``[shot.electrical]``; for a shot's own table: that shot).
    power_sigma_fraction : float, optional
        Relative standard uncertainty of the LED power (see
        :func:`beamwall.electrical.cross_check`).

    Returns
    -------
    ElectricalCheck
        Its ``to_dict()`` is the results.json ``electrical`` object.

    Examples
    --------
    >>> from beamwall.electrical import electrical_estimate
    >>> from beamwall.session import ElectricalSpec
    >>> est = electrical_estimate(ElectricalSpec(led_volts=3.0, led_amps=0.8,
    ...                                          efficacy_lm_per_w=(90, 130)))
    >>> chk = session_electrical(est, [_demo_shot("a", flux_lm=249.6)])
    >>> round(chk.implied_efficacy_lm_per_w, 1), chk.flux_basis, chk.flux_label
    (104.0, 'flux_lm', 'a')
    """
    basis = best_flux(shots)
    if basis is None:
        return cross_check(estimate, None)
    return cross_check(estimate, basis.flux_lm, flux_sigma_lm=basis.flux_sigma_lm,
                       flux_basis=basis.flux_basis,
                       flux_half_angle_deg=basis.flux_half_angle_deg, flux_label=basis.label,
                       power_sigma_fraction=power_sigma_fraction)


# ----------------------------------------------------------------------------------------
# Claims
# ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ClaimCheck:
    """One claimed figure set against the measurement and the physical limit.

    Attributes
    ----------
    label : str
        The shot's label.
    figure : str
        ``"flux_lm"``, ``"peak_intensity_cd"`` or ``"throw_m"``.
    claimed : float
        The maker's figure.
    measured : float or None
        The measured figure (None: not measured, e.g. uncalibrated).
    ratio : float or None
        measured / claimed (below 1: the claim exceeds the measurement).
    verdict : str
        See :func:`audit_claim`.
    measured_sigma : float or None
        Standard uncertainty (k=1) of the measured figure.
    tolerance_fraction : float
        The tolerance allowed beyond the k=2 interval, fraction of the measured value.
    consistent_range : tuple of float or None
        The claims that count as consistent, (low, high).
    physical_limit : float or None
        The largest value physics allows for this figure, same unit; None when unknown.
    flux_basis : str or None
        For ``flux_lm``: the key the measured flux came from.
    reasons : tuple of str
    """

    label: str
    figure: str
    claimed: float
    measured: float | None
    ratio: float | None
    verdict: str
    measured_sigma: float | None
    tolerance_fraction: float
    consistent_range: tuple[float, float] | None
    physical_limit: float | None
    flux_basis: str | None
    reasons: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        """Return the check under the results.json ``claims`` entry key names."""
        return {
            "label": self.label, "figure": self.figure, "claimed": self.claimed,
            "measured": self.measured, "ratio": self.ratio, "verdict": self.verdict,
            "measured_sigma": self.measured_sigma,
            "tolerance_fraction": self.tolerance_fraction,
            "consistent_range": (None if self.consistent_range is None
                                 else [self.consistent_range[0], self.consistent_range[1]]),
            "physical_limit": self.physical_limit,
            "flux_basis": self.flux_basis,
            "reasons": list(self.reasons),
        }


_UNITS = {"flux_lm": "lm", "peak_intensity_cd": "cd", "throw_m": "m"}
_CLAIM_KEYS = {"flux_lm": "claimed_lm", "peak_intensity_cd": "claimed_cd",
               "throw_m": "claimed_throw_m"}


def audit_claim(
    label: str,
    figure: str,
    claimed: float,
    measured: float | None,
    *,
    measured_sigma: float | None = None,
    tolerance_fraction: float = DEFAULT_CLAIM_TOLERANCE_FRACTION,
    physical_limit: float | None = None,
    limit_reason: str | None = None,
    flux_basis: str | None = None,
    measured_upper: float | None = None,
) -> ClaimCheck:
    """Judge one claimed figure against its measurement and the physical limit.

    Parameters
    ----------
    label : str
        The shot's label.
    figure : str
        ``"flux_lm"``, ``"peak_intensity_cd"`` or ``"throw_m"``.
    claimed : float
        The maker's figure, > 0, in the figure's unit.
    measured : float or None
        The measured figure (None when not measured).
    measured_sigma : float, optional
        Its standard uncertainty (k=1); 0 when not given.
    tolerance_fraction : float, optional
        Allowance beyond the k=2 interval, as a fraction of the measured value, >= 0
        (default :data:`DEFAULT_CLAIM_TOLERANCE_FRACTION`).
    physical_limit : float, optional
        The largest value physics allows for the figure (see :func:`audit_claims`).
    limit_reason : str, optional
        How that limit was found, for the reasons.
    flux_basis : str, optional
        For a flux claim, the key the measured flux came from.
    measured_upper : float, optional
        When the measurement is a lower bound (the flux inside the photographed cone of a
        total-flux claim), an upper bound of the true figure: the consistent range then
        reaches up to it (plus the same margin, scaled).

    Returns
    -------
    ClaimCheck

    Raises
    ------
    InputError
        If the figure name is unknown, the claim is not positive, or the tolerance or the
        uncertainty is negative.

    Notes
    -----
    The rule, in this order:

    1. claimed > physical_limit: ``"physically impossible"`` (with or without photos);
    2. no measurement: ``"not measured"``;
    3. with margin M = 2 u + t m (u the standard uncertainty, so 2 u is the k = 2 expanded
       uncertainty [GUM]; t the tolerance; m the measured value): ``"consistent"`` when
       m - M <= claimed <= m + M, ``"overstated"`` above, ``"understated"`` below.

    ratio = measured / claimed.

    Examples
    --------
    >>> c = audit_claim("high", "flux_lm", 1200.0, 250.0, measured_sigma=10.0)
    >>> round(c.ratio, 2), c.verdict
    (0.21, 'overstated')
    >>> audit_claim("high", "flux_lm", 260.0, 250.0, measured_sigma=10.0).verdict
    'consistent'
    """
    if figure not in _UNITS:
        raise InputError(f"unknown figure {figure!r}; valid: {', '.join(_UNITS)}",
                         field="figure")
    unit = _UNITS[figure]
    claimed = float(claimed)
    if not math.isfinite(claimed) or claimed <= 0:
        raise InputError(f"must be positive, got {claimed!r}",
                         field=f"[[shot]] {_CLAIM_KEYS[figure]}")
    if not math.isfinite(tolerance_fraction) or tolerance_fraction < 0:
        raise InputError(f"must be zero or positive, got {tolerance_fraction!r}",
                         field="tolerance_fraction")
    reasons: list[str] = []
    sigma = None if measured_sigma is None else float(measured_sigma)
    if sigma is not None and (not math.isfinite(sigma) or sigma < 0):
        raise InputError(f"must be zero or positive, got {sigma!r}", field="measured_sigma")
    limit = None if physical_limit is None else float(physical_limit)
    rng: tuple[float, float] | None = None
    ratio: float | None = None
    m: float | None = None
    if measured is not None and math.isfinite(measured):
        m = float(measured)
        margin = 2.0 * (sigma or 0.0) + tolerance_fraction * abs(m)
        rng = (m - margin, m + margin)
        if measured_upper is not None and math.isfinite(measured_upper) and measured_upper > m:
            rng = (m - margin, measured_upper + margin * measured_upper / max(abs(m), 1e-300))
        ratio = m / claimed
    if limit is not None and claimed > limit:
        verdict = _IMPOSSIBLE
        reasons.append(f"claimed {claimed:.4g} {unit} exceeds the physical limit "
                       f"{limit:.4g} {unit}" + (f" ({limit_reason})" if limit_reason else ""))
    elif m is None or rng is None:
        verdict = _NOT_MEASURED
        reasons.append("not measured (no calibration)")
    elif claimed > rng[1]:
        verdict = _OVER
    elif claimed < rng[0]:
        verdict = _UNDER
    else:
        verdict = _CONSISTENT
    if m is not None and rng is not None:
        sig = "no uncertainty given" if sigma is None else f"u = {sigma:.3g} {unit}"
        reasons.append(
            f"measured {m:.4g} {unit} ({sig}); claims within {max(rng[0], 0.0):.4g}-"
            f"{rng[1]:.4g} {unit} (k=2 interval plus {100 * tolerance_fraction:g} %) count as "
            f"consistent; measured/claimed = {ratio:.3g}")
        if measured_upper is not None and figure == "flux_lm":
            reasons.append(
                f"the measured flux counts the light within the photographed cone only; the "
                f"total is at most {measured_upper:.4g} {unit} (the cone's edge intensity "
                "spread over the rest of the hemisphere), so claims up to that count as "
                "consistent")
        elif figure == "flux_lm" and flux_basis == "flux_lm" and verdict == _OVER:
            reasons.append("the measured flux counts the light within the measured cone "
                           "only; light outside it would add to the total")
    return ClaimCheck(label=label, figure=figure, claimed=claimed, measured=m, ratio=ratio,
                      verdict=verdict, measured_sigma=sigma,
                      tolerance_fraction=float(tolerance_fraction), consistent_range=rng,
                      physical_limit=limit,
                      flux_basis=flux_basis if figure == "flux_lm" else None,
                      reasons=tuple(reasons))


def audit_claims(
    shot: ShotResult,
    *,
    claimed_lm: float | None = None,
    claimed_cd: float | None = None,
    claimed_throw_m: float | None = None,
    electrical: ElectricalEstimate | None = None,
    bound: PlausibilityBound | None = None,
    n_cells: int | None = 1,
    total_flux_lm: float | None = None,
    total_flux_sigma_lm: float | None = None,
    total_flux_basis: str = "total_flux_lm",
    tolerance_fraction: float = DEFAULT_CLAIM_TOLERANCE_FRACTION,
) -> tuple[ClaimCheck, ...]:
    """Audit a shot's claimed flux, intensity and throw.

    Parameters
    ----------
    shot : ShotResult
        The measured shot.
    claimed_lm, claimed_cd, claimed_throw_m : float, optional
        The maker's claims for this shot (lm, cd, m).
    electrical : ElectricalEstimate, optional
        The shot's electrical estimate: its average LED power sets the physical limit.
    bound : PlausibilityBound, optional
        A limit built by the caller; wins over ``electrical`` and ``n_cells``.
    n_cells : int or None, optional
        Without ``electrical``, the limit is that of this many Li-ion cells (default 1: the
        light is taken as single-cell); None: no limit without electrical readings.
    total_flux_lm, total_flux_sigma_lm : float, optional
        A better estimate of the total flux than ``flux_lm`` (e.g. extrapolated beyond the
        cone), lm; used for the flux claim, named by ``total_flux_basis``.
    total_flux_basis : str, optional
        The key name of that estimate.
    tolerance_fraction : float, optional
        See :func:`audit_claim`.

    Returns
    -------
    tuple of ClaimCheck
        One per claim given, in the order flux, intensity, throw.

    Notes
    -----
    Physical limits. Flux: the bound of :func:`beamwall.electrical.plausibility_bound` (the
    power the light draws, or a single cell can deliver, times 300 lm/W). Intensity: the
    measured beam shape turns a claimed intensity into the flux it needs,
    Phi = I_claim x (flux_lm / peak_intensity_cd) (flux_lm being within a cone, this
    understates the need, so the limit is generous): I_max = Phi_max peak / flux. Throw:
    d_max = sqrt(I_max / 0.25 lx) [FL1]. The intensity and throw limits need a calibrated
    shot. Throw's uncertainty, when not given, is u_d = d u_I / (2 I) (as d = 2 sqrt(I)).

    Examples
    --------
    >>> from beamwall.electrical import electrical_estimate
    >>> from beamwall.session import ElectricalSpec
    >>> est = electrical_estimate(ElectricalSpec(led_volts=3.0, led_amps=0.8))
    >>> s = _demo_shot("high", flux_lm=250.0, peak=310.0)
    >>> [c.verdict for c in audit_claims(s, claimed_lm=260.0, claimed_cd=500.0,
    ...                                  claimed_throw_m=80.0, electrical=est)]
    ['consistent', 'overstated', 'physically impossible']
    >>> audit_claims(s, claimed_lm=5000.0, electrical=est)[0].verdict
    'physically impossible'
    """
    if bound is None:
        if electrical is not None:
            bound = plausibility_bound(average_watts=electrical.average_watts)
        elif n_cells is not None:
            bound = plausibility_bound(n_cells=n_cells)
    limit_reason = None if bound is None else "; ".join(bound.reasons)
    out: list[ClaimCheck] = []
    peak = shot.peak_intensity_cd
    ratio_sr: float | None = None      # flux per peak candela, sr
    if shot.flux_lm is not None and peak is not None and peak > 0 and shot.flux_lm > 0:
        ratio_sr = float(shot.flux_lm) / float(peak)
    if claimed_lm is not None:
        m: float | None
        u: float | None
        if total_flux_lm is not None:
            m, u, basis = total_flux_lm, total_flux_sigma_lm, total_flux_basis
        else:
            m, u, basis = shot.flux_lm, shot.flux_sigma_lm, "flux_lm"
        upper = shot.flux_total_max_lm if basis == "flux_lm" else None
        out.append(audit_claim(
            shot.label, "flux_lm", claimed_lm, m, measured_sigma=u,
            tolerance_fraction=tolerance_fraction,
            physical_limit=None if bound is None else bound.max_flux_lm,
            limit_reason=limit_reason, flux_basis=basis, measured_upper=upper))
    i_max = None
    i_reason = None
    if bound is not None and ratio_sr is not None:
        i_max = bound.max_flux_lm / ratio_sr
        i_reason = (f"{bound.max_flux_lm:.4g} lm at most, spread as the measured beam "
                    f"({ratio_sr:.4g} lm per peak cd within the cone)")
    if claimed_cd is not None:
        out.append(audit_claim(
            shot.label, "peak_intensity_cd", claimed_cd, peak,
            measured_sigma=shot.peak_intensity_sigma_cd, tolerance_fraction=tolerance_fraction,
            physical_limit=i_max, limit_reason=i_reason))
    if claimed_throw_m is not None:
        throw: float | None = shot.throw_m
        if throw is None and peak is not None:
            throw = math.sqrt(float(peak) / THROW_ILLUMINANCE_LX)
        u_throw = shot.throw_sigma_m
        if (u_throw is None and throw is not None and peak
                and shot.peak_intensity_sigma_cd is not None):
            u_throw = throw * float(shot.peak_intensity_sigma_cd) / (2.0 * float(peak))
        d_max = None if i_max is None else math.sqrt(i_max / THROW_ILLUMINANCE_LX)
        out.append(audit_claim(
            shot.label, "throw_m", claimed_throw_m, throw, measured_sigma=u_throw,
            tolerance_fraction=tolerance_fraction, physical_limit=d_max,
            limit_reason=None if i_reason is None else i_reason + ", at 0.25 lx"))
    return tuple(out)


def audit_shot(shot: ShotResult, spec: ShotSpec, **kwargs: Any) -> tuple[ClaimCheck, ...]:
    """Audit the claims written in a shot's table (``claimed_lm``, ``claimed_cd``, ...).

    Parameters
    ----------
    shot : ShotResult
        The measured shot.
    spec : ShotSpec
        Its table from the session file.
    **kwargs
        Passed on to :func:`audit_claims` (``electrical``, ``bound``, ``n_cells``, ...).

    Returns
    -------
    tuple of ClaimCheck
    """
    return audit_claims(shot, claimed_lm=spec.claimed_lm, claimed_cd=spec.claimed_cd,
                        claimed_throw_m=spec.claimed_throw_m, **kwargs)


# ----------------------------------------------------------------------------------------
# Doctest helper
# ----------------------------------------------------------------------------------------


def _demo_shot(
    label: str,
    *,
    zoom: str | None = None,
    mode: str | None = None,
    beam_angle_deg: float = 20.0,
    peak: float = 1000.0,
    flux_lm: float = 400.0,
    flux_half_angle_deg: float = 40.0,
) -> ShotResult:
    """Build a calibrated shot whose cumulative flux grows linearly to ``flux_lm``."""
    ang = np.round(np.arange(0.0, flux_half_angle_deg + 0.05, 0.1), 1)
    return ShotResult(
        label=label, zoom=zoom, mode=mode, beam_angle_deg=beam_angle_deg,
        field_angle_deg=2 * beam_angle_deg, peak_intensity_cd=peak,
        throw_m=math.sqrt(peak / THROW_ILLUMINANCE_LX), flux_lm=flux_lm,
        flux_half_angle_deg=flux_half_angle_deg, axis_mm=(0.0, 0.0), saturated_fraction=0.0,
        relative_peak_intensity=1.0, relative_flux=1.0,
        cone_half_angle_deg=ang, cone_flux=flux_lm * ang / flux_half_angle_deg)


# ----------------------------------------------------------------------------------------
# The whole session in one call
# ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class SessionComparison:
    """The session-level keys of results.json, and each shot's own electrical check.

    Attributes
    ----------
    zoom : ZoomSummary or None
        Present when a shot carries a ``zoom`` tag.
    modes : ModeSummary or None
        Present when a shot carries a ``mode`` tag.
    electrical : ElectricalCheck or None
        The session's ``[electrical]`` table, checked against the shots that use it as it is.
    shot_electrical : tuple of (str, ElectricalCheck)
        (label, check) for each shot whose merged table differs from the session's.
    claims : tuple of ClaimCheck
        Every claim of every shot, in shot order.
    warnings : tuple of str
    """

    zoom: ZoomSummary | None
    modes: ModeSummary | None
    electrical: ElectricalCheck | None
    shot_electrical: tuple[tuple[str, ElectricalCheck], ...]
    claims: tuple[ClaimCheck, ...]
    warnings: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Return the session-level keys present (``zoom``, ``modes``, ``electrical``, ...).

        ``modes`` is the list of :class:`ModeRatio` dicts; ``claims`` is always present (an
        empty list when nothing is claimed).
        """
        out: dict[str, Any] = {}
        if self.zoom is not None:
            out["zoom"] = self.zoom.to_dict()
        if self.modes is not None:
            out["modes"] = self.modes.to_dict()["modes"]
        if self.electrical is not None:
            out["electrical"] = self.electrical.to_dict()
        out["claims"] = [c.to_dict() for c in self.claims]
        return out


def session_comparisons(
    shots: Sequence[ShotResult],
    specs: Sequence[ShotSpec],
    *,
    session_electrical_spec: ElectricalSpec | None = None,
    source: str | None = None,
    tolerance_fraction: float = DEFAULT_CLAIM_TOLERANCE_FRACTION,
    n_cells: int | None = 1,
) -> SessionComparison:
    """Compute the zoom summary, mode ratios, electrical checks and claim audit of a session.

    Parameters
    ----------
    shots : sequence of ShotResult
        The measured shots.
    specs : sequence of ShotSpec
        Their tables from the session file, parallel to ``shots`` (``electrical`` merged over
        the session's table, as the session reader gives it).
    session_electrical_spec : ElectricalSpec, optional
        The session's own ``[electrical]`` table as written (it may be partial when every
        shot's table completes it; it is then left out of the session-level check).
    source : str, optional
        The session file, for messages.
    tolerance_fraction : float, optional
        See :func:`audit_claim`.
    n_cells : int or None, optional
        The cell limit used for the claims of shots without electrical readings (see
        :func:`audit_claims`).

    Returns
    -------
    SessionComparison

    Raises
    ------
    InputError
        If ``shots`` and ``specs`` differ in length or order (labels), or a shot's merged
        electrical table is incomplete.

    Notes
    -----
    A shot uses the session's table as it is when its merged table equals the session's
    (it has no ``[shot.electrical]`` of its own); the session-level check takes the largest
    ``flux_lm`` among those shots (:func:`best_flux`). A shot with its own table is checked
    against its own flux. Each claim's physical limit comes from the shot's merged table.
    """
    shots = list(shots)
    specs = list(specs)
    if len(shots) != len(specs) or any(a.label != b.label for a, b in zip(shots, specs)):
        raise InputError("shots and their specs must match one to one, in order",
                         file=source, field="shots")
    warnings: list[str] = []
    zoom = modes = None
    if any(s.zoom is not None for s in shots):
        try:
            zoom = zoom_summary(shots)
            warnings.extend(zoom.warnings)
        except InputError as exc:
            warnings.append(f"no zoom summary: {exc.message}")
    if any(s.mode is not None for s in shots):
        modes = mode_ratios(shots)
        warnings.extend(modes.warnings)

    session_check: ElectricalCheck | None = None
    session_est: ElectricalEstimate | None = None
    if session_electrical_spec is not None:
        try:
            session_est = electrical_estimate(session_electrical_spec, source=source)
        except InputError as exc:
            warnings.append(f"[electrical] is partial, no session-level check: {exc.message}")
    users = [s for s, sp in zip(shots, specs)
             if sp.electrical is None or sp.electrical == session_electrical_spec]
    if session_est is not None:
        session_check = session_electrical(session_est, users)
    per_shot: list[tuple[str, ElectricalCheck]] = []
    estimates: dict[str, ElectricalEstimate | None] = {}
    for s, sp in zip(shots, specs):
        if sp.electrical is None:
            estimates[s.label] = None
        elif sp.electrical == session_electrical_spec:
            estimates[s.label] = session_est
        else:
            where = f"[[shot]] {s.label!r} [shot.electrical]"
            est = electrical_estimate(sp.electrical, source=source, table=where)
            estimates[s.label] = est
            per_shot.append((s.label, session_electrical(est, [s])))
    claims: list[ClaimCheck] = []
    for s, sp in zip(shots, specs):
        claims.extend(audit_shot(s, sp, electrical=estimates[s.label],
                                 tolerance_fraction=tolerance_fraction, n_cells=n_cells))
    return SessionComparison(zoom=zoom, modes=modes, electrical=session_check,
                             shot_electrical=tuple(per_shot), claims=tuple(claims),
                             warnings=tuple(warnings))
