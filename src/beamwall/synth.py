r"""Fictional measurement scenes as arrays, and their true figures.

This room renders what a camera would record of a torch's beam on a matte wall, from a
physical model, and computes the beam's true figures (beam and field angle, peak intensity,
throw, flux in a cone) by dense numeric evaluation of the same model. It is the ground truth
the measuring chain is tested against, and the source of the bundled demo. It is pure: arrays
and small frozen dataclasses in and out, no files.

Frames
------
Wall
    x to the right, y **up** (as seen standing at the torch, facing the wall), z out of the
    wall towards the torch. Public positions on the wall are in millimetres (``_mm``); the
    rig (torch, camera) is in metres (``_m``). The wall is the plane z = 0.
Torch
    Its front lens is at ``(axis_x, axis_y, distance_m)``; its axis is perpendicular to the
    wall and meets it at ``axis_mm``. For a wall point at offset ``(dx, dy)`` from the axis
    point and radius ``r = hypot(dx, dy)``, the direction of the light that reaches it has polar
    angle ``theta = atan(r / d)`` and azimuth ``phi = atan2(dy, dx)`` in degrees on
    [0, 360), measured on the wall from +x towards +y.
Camera
    A pinhole at ``position_m = (x, y, z)`` (z > 0, in front of the wall). At rest it looks
    straight at the wall (along -z) with its image x along wall +x and its image y along wall
    -y. ``yaw_deg`` turns it about the wall's y axis, positive looking towards +x;
    ``pitch_deg`` about its own x axis, positive looking up (towards +y); ``roll_deg`` about its
    own optical axis, positive turning its right-hand side down (clockwise as seen from behind
    the camera, so the scene turns counter-clockwise in the image). The rotations are applied
    in the order yaw, then pitch, then roll (intrinsic). Pixel coordinates: x right, y down,
    pixel centres at integer coordinates, principal point at the image centre
    ``((W - 1)/2, (H - 1)/2)``, focal length ``focal_length_px`` (square pixels, no
    distortion). This is OpenCV's camera model [OCV]_: a wall point X (m) goes to camera
    coordinates ``R @ (X - C)`` and to pixels through ``K``; the wall-to-pixel map is the
    homography ``H = K [r1/1000, r2/1000, t]`` (wall mm to pixels).

Physics
-------
Illuminance on the wall from the torch (inverse-square law with the cosine of incidence,
[Rea]_)::

    E = I(theta, phi) * cos(theta)**3 / d**2          (lx; I in cd, d in m)

plus a uniform ambient illuminance. The wall is Lambertian with reflectance rho, so its
luminance (the same from every viewing direction) is ``L = rho * E / pi`` (cd/m^2) [Rea]_.
The focal-plane signal of a pixel whose ray makes the angle ``alpha`` with the optical axis is
(camera radiometry, natural cos^4 falloff [Ray]_)::

    s = k * L * t * (ISO / 100) / N**2 * cos(alpha)**4

as a fraction of full scale, with ``k = SensorModel.signal_per_lux_s``. The light's colour is
a linear RGB triple normalised to unit Rec. 709 luminance (0.2126 R + 0.7152 G + 0.0722 B = 1
[BT709]_), so the luminance-weighted sum of the three channel signals is ``s`` itself; the
ambient light is neutral (1, 1, 1). Each channel becomes electrons (``s * full_well_e``), gets
Poisson shot noise and Gaussian read noise, then digital numbers
``black + e * (white - black) / full_well_e``, rounded and clipped at 0 and the white level.
The ``"srgb"`` encoding takes ``(DN - black) / (white - black)``, clipped to [0, 1], through the
sRGB encoding curve [IEC]_ to 8 bits; ``"linear"`` returns the digital numbers as uint16.

Figures (the public contract's definitions)
-------------------------------------------
Beam (field) angle: twice the mean over azimuth of the outermost polar angle at which
I >= 50 % (10 %) of the peak; peak: the maximum of I over all directions; throw:
``sqrt(peak / 0.25 lx)`` [FL1]_; flux in a cone of half angle alpha:
``integral_0^2pi integral_0^alpha I sin(theta) dtheta dphi`` [Rea]_.

References
----------
.. [Rea] M. S. Rea (ed.), *The IESNA Lighting Handbook*, 9th edition, IESNA (2000), chapter 2
   "Measurement of light": inverse-square and cosine laws (E = I cos(theta) / D^2), Lambertian
   luminance L = rho E / pi, luminous flux of a source as the solid-angle integral of its
   intensity (a uniform cone gives 2 pi I (1 - cos alpha)).
.. [Ray] S. F. Ray, *Applied Photographic Optics*, 3rd edition, Focal Press (2002), section
   on illumination in the image: focal-plane illuminance proportional to L T cos^4 / N^2
   (from memory, to confirm the section number).
.. [BT709] ITU-R Recommendation BT.709-6 (2015), item 3.2: Y = 0.2126 R + 0.7152 G + 0.0722 B.
.. [IEC] IEC 61966-2-1:1999, *Default RGB colour space - sRGB*, encoding: 12.92 L for
   L <= 0.0031308, else 1.055 L^(1/2.4) - 0.055.
.. [FL1] ANSI/PLATO FL 1-2019, section 1.2.1 "Beam distance": the distance at which the peak
   beam intensity gives 0.25 lx.
.. [OCV] OpenCV documentation, "Camera Calibration and 3D Reconstruction" (calib3d module):
   the pinhole model s [u, v, 1]^T = K [R | t] [X, Y, Z, 1]^T, pixel centres at integers.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from functools import cached_property, lru_cache
from typing import ClassVar, Protocol, runtime_checkable

import numpy as np
from scipy import optimize, special  # type: ignore[import-untyped]

from beamwall.constants import REC709_LUMINANCE_WEIGHTS, THROW_ILLUMINANCE_LX
from beamwall.errors import GeometryError, InputError
from beamwall.linear import Exposure

__all__ = [
    "Beam",
    "HotspotSpill",
    "FlatFlood",
    "SquareSpot",
    "RingBeam",
    "ReferenceLamp",
    "EllipticGaussian",
    "UniformSource",
    "ScaledBeam",
    "SensorModel",
    "CameraPose",
    "Scene",
    "Truth",
    "truth",
    "flux_in_cone_lm",
    "outermost_half_angles_deg",
    "normalise_colour",
    "COOL_WHITE_LED_RGB",
    "TUNGSTEN_RGB",
    "NEUTRAL_RGB",
    "srgb_encode",
    "camera_matrix",
    "world_to_camera",
    "wall_to_px_homography",
    "wall_to_pixel",
    "pixel_to_wall",
    "wall_illuminance_lx",
    "render_signal",
    "render",
    "bracket",
    "auto_exposure_s",
    "nominal_shutter_s",
    "DemoElectrical",
    "DemoShot",
    "DemoReference",
    "DemoScenario",
    "demo_scenario",
]

_LUMA = np.asarray(REC709_LUMINANCE_WEIGHTS, dtype=np.float64)

#: Largest polar angle the wall can receive light at, degrees (the wall is a plane).
_THETA_MAX_DEG = 89.9

#: Pixels per rendering chunk (bounds the working memory; common practice, no source).
_CHUNK_PIXELS = 1 << 18


# --------------------------------------------------------------------------------------------
# Colours
# --------------------------------------------------------------------------------------------


def normalise_colour(rgb: Sequence[float]) -> tuple[float, float, float]:
    """Scale a linear RGB triple to unit Rec. 709 luminance.

    Parameters
    ----------
    rgb : sequence of 3 float
        Linear RGB, non-negative, not all zero (any scale).

    Returns
    -------
    tuple of 3 float
        ``rgb / (0.2126 R + 0.7152 G + 0.0722 B)`` [BT709]_.

    Raises
    ------
    InputError
        Wrong length, negative or non-finite values, or zero luminance.

    Examples
    --------
    >>> normalise_colour((2.0, 2.0, 2.0))
    (1.0, 1.0, 1.0)
    """
    arr = np.asarray(rgb, dtype=np.float64)
    if arr.shape != (3,) or not np.all(np.isfinite(arr)) or np.any(arr < 0):
        raise InputError(f"must be 3 finite non-negative numbers, got {rgb!r}", field="colour_rgb")
    y = float(_LUMA @ arr)
    if y <= 0:
        raise InputError(f"has zero luminance, got {rgb!r}", field="colour_rgb")
    out = arr / y
    return (float(out[0]), float(out[1]), float(out[2]))


#: A cool-white LED, slightly blue (invented for the demo).
COOL_WHITE_LED_RGB: tuple[float, float, float] = normalise_colour((0.90, 1.0, 1.18))
#: A tungsten lamp, reddish (invented for the demo).
TUNGSTEN_RGB: tuple[float, float, float] = normalise_colour((1.30, 0.96, 0.58))
#: Neutral white.
NEUTRAL_RGB: tuple[float, float, float] = (1.0, 1.0, 1.0)


def srgb_encode(linear: np.ndarray) -> np.ndarray:
    """Encode linear values with the sRGB transfer curve.

    Written apart from :func:`beamwall.linear.srgb_encode` on purpose: the renderer is the
    ground truth the measuring chain is tested against, so it shares none of its code (both
    are checked against colour-science).

    Parameters
    ----------
    linear : array_like, any shape
        Linear values; meaningful on [0, 1] (values are clipped to it).

    Returns
    -------
    ndarray, same shape, float64 on [0, 1]
        ``12.92 L`` for ``L <= 0.0031308``, else ``1.055 L^(1/2.4) - 0.055`` [IEC]_.

    Examples
    --------
    >>> [round(float(v), 6) for v in srgb_encode(np.array([0.0, 0.0031308, 0.18, 1.0]))]
    [0.0, 0.04045, 0.461356, 1.0]
    """
    lin = np.clip(np.asarray(linear, dtype=np.float64), 0.0, 1.0)
    return np.where(
        lin <= 0.0031308, 12.92 * lin, 1.055 * np.power(lin, 1.0 / 2.4) - 0.055
    )


# --------------------------------------------------------------------------------------------
# Beam models
# --------------------------------------------------------------------------------------------


@runtime_checkable
class Beam(Protocol):
    """A far-field luminous intensity distribution I(theta, phi) in candela."""

    def intensity_cd(self, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
        """Luminous intensity, cd, broadcast over ``theta_deg`` and ``phi_deg``."""
        ...

    @property
    def peak_cd(self) -> float:
        """The maximum of I over all directions, cd."""
        ...


def _check_positive(value: float, name: str, *, allow_zero: bool = False) -> None:
    ok = value >= 0 if allow_zero else value > 0
    if not (math.isfinite(value) and ok):
        need = "non-negative" if allow_zero else "positive"
        raise InputError(f"must be finite and {need}, got {value!r}", field=name)


def _symmetric_peak_cd(beam: Beam, *, hint_deg: float | None = None) -> float:
    """Maximum over theta of a rotationally symmetric beam (dense grid, then refined)."""
    theta = np.linspace(0.0, _THETA_MAX_DEG, 18001)
    values = np.asarray(beam.intensity_cd(theta, np.zeros_like(theta)), dtype=np.float64)
    k = int(np.argmax(values))
    lo = theta[max(k - 1, 0)]
    hi = theta[min(k + 1, theta.size - 1)]
    res = optimize.minimize_scalar(
        lambda t: -float(beam.intensity_cd(np.array([t]), np.array([0.0]))[0]),
        bounds=(lo, hi),
        method="bounded",
        options={"xatol": 1e-10},
    )
    return float(max(values[k], -res.fun))


def _logistic_step(x: np.ndarray) -> np.ndarray:
    """1 / (1 + exp(x)), computed without overflow."""
    return special.expit(-x)


@dataclass(frozen=True)
class HotspotSpill:
    """A reflector torch: a bright smooth hotspot over a wide, dimmer spill with a soft edge.

    ``I = hotspot_cd * 2**(-(theta / hotspot_half_angle_deg)**hotspot_shape)
    + spill_cd * S(theta)``, where the spill step
    ``S = (1 + exp(-e/w)) / (1 + exp((theta - e)/w))`` (``e = spill_half_angle_deg``,
    ``w = spill_edge_deg``) is 1 on the axis and falls to about one half at the spill edge.
    A ``hotspot_shape`` of 2 is a Gaussian; larger values flatten the top (super-Gaussian).
    Invented model (common practice, no source).

    Parameters
    ----------
    hotspot_cd, spill_cd : float
        On-axis intensity of each term, cd (> 0, >= 0).
    hotspot_half_angle_deg : float
        Polar angle at which the hotspot term falls to half, deg.
    spill_half_angle_deg, spill_edge_deg : float
        Spill edge position and softness, deg.
    hotspot_shape : float
        Super-Gaussian exponent (>= 1).

    Examples
    --------
    >>> b = HotspotSpill(hotspot_cd=1000.0, hotspot_half_angle_deg=5.0,
    ...                  spill_cd=50.0, spill_half_angle_deg=30.0, spill_edge_deg=2.0)
    >>> round(b.peak_cd, 3)
    1050.0
    >>> round(float(b.intensity_cd(np.array(5.0), np.array(0.0))), 1)
    550.0
    """

    hotspot_cd: float
    hotspot_half_angle_deg: float
    spill_cd: float
    spill_half_angle_deg: float
    spill_edge_deg: float = 2.0
    hotspot_shape: float = 2.0
    rotationally_symmetric: ClassVar[bool] = True

    def __post_init__(self) -> None:
        _check_positive(self.hotspot_cd, "hotspot_cd")
        _check_positive(self.hotspot_half_angle_deg, "hotspot_half_angle_deg")
        _check_positive(self.spill_cd, "spill_cd", allow_zero=True)
        _check_positive(self.spill_half_angle_deg, "spill_half_angle_deg")
        _check_positive(self.spill_edge_deg, "spill_edge_deg")
        if not self.hotspot_shape >= 1:
            raise InputError(f"must be >= 1, got {self.hotspot_shape!r}", field="hotspot_shape")

    def _spill(self, theta_deg: np.ndarray) -> np.ndarray:
        e, w = self.spill_half_angle_deg, self.spill_edge_deg
        return _logistic_step((theta_deg - e) / w) / _logistic_step(np.asarray(-e / w))

    def intensity_cd(self, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
        """Luminous intensity, cd; see the class docstring for the formula."""
        th = np.abs(np.asarray(theta_deg, dtype=np.float64))
        th, _ = np.broadcast_arrays(th, np.asarray(phi_deg, dtype=np.float64))
        hot = self.hotspot_cd * np.exp2(
            -np.power(th / self.hotspot_half_angle_deg, self.hotspot_shape)
        )
        return hot + self.spill_cd * self._spill(th)

    @property
    def peak_cd(self) -> float:
        """On-axis intensity, cd (both terms fall monotonically with theta)."""
        return float(self.hotspot_cd + self.spill_cd)


@dataclass(frozen=True)
class FlatFlood:
    """A flat-topped wide flood with a soft edge, optionally with a dip on the axis.

    ``I = plateau_cd / (1 + (theta / half_angle_deg)**edge_power)
    * (1 - hole_depth * exp(-(theta / hole_half_width_deg)**2 / 2))``. Without a hole its beam
    angle is exactly ``2 * half_angle_deg`` and its field angle
    ``2 * half_angle_deg * 9**(1/edge_power)``. Invented model (common practice, no source).

    Parameters
    ----------
    plateau_cd : float
        Plateau (on-axis without a hole) intensity, cd.
    half_angle_deg : float
        Polar angle at which the plateau term is at half, deg.
    edge_power : float
        Edge steepness (> 1; larger is sharper).
    hole_depth : float
        Relative depth of the dip on the axis, [0, 1).
    hole_half_width_deg : float
        Gaussian width (sigma) of the dip, deg.

    Examples
    --------
    >>> b = FlatFlood(plateau_cd=300.0, half_angle_deg=30.0, edge_power=8.0)
    >>> float(b.intensity_cd(np.array(30.0), np.array(0.0)))
    150.0
    """

    plateau_cd: float
    half_angle_deg: float
    edge_power: float = 8.0
    hole_depth: float = 0.0
    hole_half_width_deg: float = 3.0
    rotationally_symmetric: ClassVar[bool] = True

    def __post_init__(self) -> None:
        _check_positive(self.plateau_cd, "plateau_cd")
        _check_positive(self.half_angle_deg, "half_angle_deg")
        _check_positive(self.hole_half_width_deg, "hole_half_width_deg")
        if not self.edge_power > 1:
            raise InputError(f"must be > 1, got {self.edge_power!r}", field="edge_power")
        if not 0 <= self.hole_depth < 1:
            raise InputError(f"must be in [0, 1), got {self.hole_depth!r}", field="hole_depth")

    def intensity_cd(self, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
        """Luminous intensity, cd; see the class docstring for the formula."""
        th = np.abs(np.asarray(theta_deg, dtype=np.float64))
        th, _ = np.broadcast_arrays(th, np.asarray(phi_deg, dtype=np.float64))
        base = self.plateau_cd / (1.0 + np.power(th / self.half_angle_deg, self.edge_power))
        if self.hole_depth == 0:
            return base
        dip = 1.0 - self.hole_depth * np.exp(-0.5 * (th / self.hole_half_width_deg) ** 2)
        return base * dip

    @cached_property
    def peak_cd(self) -> float:
        """Maximum intensity, cd (on the axis without a hole; numeric with one)."""
        if self.hole_depth == 0:
            return float(self.plateau_cd)
        return _symmetric_peak_cd(self)


def _soft_box(u: np.ndarray, half_width: float, blur: float) -> np.ndarray:
    """Return a box of half width ``half_width`` convolved with a Gaussian of sigma ``blur``."""
    k = 1.0 / (math.sqrt(2.0) * blur)
    return 0.5 * (special.erf((half_width - u) * k) + special.erf((half_width + u) * k))


@dataclass(frozen=True)
class SquareSpot:
    """A narrow spot imaging a square emitter, blurred, over a weak wide halo.

    With ``u = tan(theta) cos(phi - rotation)`` and ``v = tan(theta) sin(phi - rotation)`` the
    direction's components in the square's frame,
    ``I = spot_cd * B(u) B(v) / B(0)**2 + halo_cd * exp(-(theta / halo_sigma_deg)**2 / 2)``
    where ``B`` is a box of half width ``tan(half_side_deg)`` convolved with a Gaussian of sigma
    ``tan(blur_deg)``. The 50 % contour is a rounded square, so the beam is wider along the
    square's diagonals (``rotation_deg + 45``) than along its sides. Invented model (common
    practice, no source).

    Parameters
    ----------
    spot_cd : float
        On-axis intensity of the spot term, cd.
    half_side_deg : float
        Half side of the square image, as an angle from the axis, deg.
    blur_deg : float
        Gaussian blur of its edge (sigma, as an angle), deg.
    halo_cd, halo_sigma_deg : float
        On-axis intensity (cd) and Gaussian width (deg) of the halo.
    rotation_deg : float
        Azimuth of one side's normal, deg, from +x towards +y.

    Examples
    --------
    >>> b = SquareSpot(spot_cd=20000.0, half_side_deg=3.0, blur_deg=0.4, halo_cd=300.0,
    ...                halo_sigma_deg=15.0)
    >>> round(b.peak_cd, 6)
    20300.0
    """

    spot_cd: float
    half_side_deg: float
    blur_deg: float = 0.4
    halo_cd: float = 0.0
    halo_sigma_deg: float = 15.0
    rotation_deg: float = 0.0
    rotationally_symmetric: ClassVar[bool] = False

    def __post_init__(self) -> None:
        _check_positive(self.spot_cd, "spot_cd")
        _check_positive(self.half_side_deg, "half_side_deg")
        _check_positive(self.blur_deg, "blur_deg")
        _check_positive(self.halo_cd, "halo_cd", allow_zero=True)
        _check_positive(self.halo_sigma_deg, "halo_sigma_deg")
        if self.half_side_deg >= 45:
            raise InputError(f"must be < 45, got {self.half_side_deg!r}", field="half_side_deg")

    def intensity_cd(self, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
        """Luminous intensity, cd; see the class docstring for the formula."""
        th = np.abs(np.asarray(theta_deg, dtype=np.float64))
        ph = np.asarray(phi_deg, dtype=np.float64)
        th, ph = np.broadcast_arrays(th, ph)
        a = math.tan(math.radians(self.half_side_deg))
        s = math.tan(math.radians(self.blur_deg))
        tan_t = np.tan(np.radians(np.minimum(th, _THETA_MAX_DEG)))
        rel = np.radians(ph - self.rotation_deg)
        norm = float(_soft_box(np.asarray(0.0), a, s)) ** 2
        spot = _soft_box(tan_t * np.cos(rel), a, s) * _soft_box(tan_t * np.sin(rel), a, s)
        halo = np.exp(-0.5 * (th / self.halo_sigma_deg) ** 2)
        return self.spot_cd * spot / norm + self.halo_cd * halo

    @property
    def peak_cd(self) -> float:
        """On-axis intensity, cd: each factor is log-concave and even, so largest at 0."""
        return float(self.spot_cd + self.halo_cd)


@dataclass(frozen=True)
class RingBeam:
    """A zoom setting with a dark centre: the peak lies on a ring.

    ``I = ring_cd * exp(-((theta - ring_radius_deg) / ring_sigma_deg)**2 / 2)
    + centre_cd * exp(-(theta / ring_radius_deg)**2 / 2)``. Invented model (common practice,
    no source). Its true peak is found numerically.

    Parameters
    ----------
    ring_cd : float
        Intensity of the ring term at its crest, cd.
    ring_radius_deg, ring_sigma_deg : float
        Polar angle of the ring's crest and its Gaussian width, deg.
    centre_cd : float
        Intensity of the fill at the centre, cd (below ``ring_cd`` for a dark centre).

    Examples
    --------
    >>> b = RingBeam(ring_cd=1000.0, ring_radius_deg=10.0, ring_sigma_deg=2.0,
    ...              centre_cd=200.0)
    >>> float(b.intensity_cd(np.array(0.0), np.array(0.0))) < 0.5 * b.peak_cd
    True
    """

    ring_cd: float
    ring_radius_deg: float
    ring_sigma_deg: float
    centre_cd: float = 0.0
    rotationally_symmetric: ClassVar[bool] = True

    def __post_init__(self) -> None:
        _check_positive(self.ring_cd, "ring_cd")
        _check_positive(self.ring_radius_deg, "ring_radius_deg")
        _check_positive(self.ring_sigma_deg, "ring_sigma_deg")
        _check_positive(self.centre_cd, "centre_cd", allow_zero=True)

    def intensity_cd(self, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
        """Luminous intensity, cd; see the class docstring for the formula."""
        th = np.abs(np.asarray(theta_deg, dtype=np.float64))
        th, _ = np.broadcast_arrays(th, np.asarray(phi_deg, dtype=np.float64))
        ring = np.exp(-0.5 * ((th - self.ring_radius_deg) / self.ring_sigma_deg) ** 2)
        fill = np.exp(-0.5 * (th / self.ring_radius_deg) ** 2)
        return self.ring_cd * ring + self.centre_cd * fill

    @cached_property
    def peak_cd(self) -> float:
        """Maximum intensity (on the ring), cd, found numerically."""
        return _symmetric_peak_cd(self)


@dataclass(frozen=True)
class ReferenceLamp:
    """A reference lamp of known axial intensity, even within a few degrees of its axis.

    ``I = axial_intensity_cd * exp(-(theta / falloff_deg)**2)``: within 3 deg of the axis it
    stays within 0.25 % of ``axial_intensity_cd`` at the default ``falloff_deg`` of 60.
    Invented model (common practice, no source).

    Examples
    --------
    >>> lamp = ReferenceLamp(axial_intensity_cd=120.0)
    >>> round(float(lamp.intensity_cd(np.array(3.0), np.array(0.0))), 2)
    119.7
    """

    axial_intensity_cd: float
    falloff_deg: float = 60.0
    rotationally_symmetric: ClassVar[bool] = True

    def __post_init__(self) -> None:
        _check_positive(self.axial_intensity_cd, "axial_intensity_cd")
        _check_positive(self.falloff_deg, "falloff_deg")

    def intensity_cd(self, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
        """Luminous intensity, cd; see the class docstring for the formula."""
        th = np.abs(np.asarray(theta_deg, dtype=np.float64))
        th, _ = np.broadcast_arrays(th, np.asarray(phi_deg, dtype=np.float64))
        return self.axial_intensity_cd * np.exp(-((th / self.falloff_deg) ** 2))

    @property
    def peak_cd(self) -> float:
        """Axial intensity, cd."""
        return float(self.axial_intensity_cd)


@dataclass(frozen=True)
class EllipticGaussian:
    """A Gaussian beam, optionally wider along one wall axis.

    ``I = peak_intensity_cd * exp(-((theta cos phi / sigma_x_deg)**2
    + (theta sin phi / sigma_y_deg)**2) / 2)``. With equal sigmas it is the round Gaussian
    beam whose full width at half maximum is ``2 sigma sqrt(2 ln 2)``; at azimuth phi the
    50 % half angle is ``sqrt(2 ln 2) / sqrt(cos^2 phi / sx^2 + sin^2 phi / sy^2)``.

    Examples
    --------
    >>> b = EllipticGaussian(peak_intensity_cd=100.0, sigma_x_deg=10.0, sigma_y_deg=5.0)
    >>> round(float(b.intensity_cd(np.array(10.0), np.array(0.0))), 4)
    60.6531
    """

    peak_intensity_cd: float
    sigma_x_deg: float
    sigma_y_deg: float
    rotationally_symmetric: ClassVar[bool] = False

    def __post_init__(self) -> None:
        _check_positive(self.peak_intensity_cd, "peak_intensity_cd")
        _check_positive(self.sigma_x_deg, "sigma_x_deg")
        _check_positive(self.sigma_y_deg, "sigma_y_deg")

    def intensity_cd(self, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
        """Luminous intensity, cd; see the class docstring for the formula."""
        th = np.asarray(theta_deg, dtype=np.float64)
        ph = np.radians(np.asarray(phi_deg, dtype=np.float64))
        q = (th * np.cos(ph) / self.sigma_x_deg) ** 2 + (th * np.sin(ph) / self.sigma_y_deg) ** 2
        return self.peak_intensity_cd * np.exp(-0.5 * q)

    @property
    def peak_cd(self) -> float:
        """On-axis intensity, cd."""
        return float(self.peak_intensity_cd)


@dataclass(frozen=True)
class UniformSource:
    """A source of the same intensity in every direction towards the wall (a test fixture).

    Examples
    --------
    >>> UniformSource(uniform_cd=10.0).peak_cd
    10.0
    """

    uniform_cd: float
    rotationally_symmetric: ClassVar[bool] = True

    def __post_init__(self) -> None:
        _check_positive(self.uniform_cd, "uniform_cd")

    def intensity_cd(self, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
        """Luminous intensity, cd: ``uniform_cd`` everywhere."""
        th, _ = np.broadcast_arrays(
            np.asarray(theta_deg, dtype=np.float64), np.asarray(phi_deg, dtype=np.float64)
        )
        return np.full(th.shape, float(self.uniform_cd))

    @property
    def peak_cd(self) -> float:
        """The intensity, cd."""
        return float(self.uniform_cd)


@dataclass(frozen=True)
class ScaledBeam:
    """Another beam times a constant factor (a lower mode of the same optics).

    Examples
    --------
    >>> low = ScaledBeam(UniformSource(uniform_cd=8.0), factor=0.25)
    >>> low.peak_cd
    2.0
    """

    beam: Beam
    factor: float

    def __post_init__(self) -> None:
        _check_positive(self.factor, "factor")

    @property
    def rotationally_symmetric(self) -> bool:
        """Whether the underlying beam is rotationally symmetric."""
        return bool(getattr(self.beam, "rotationally_symmetric", False))

    def intensity_cd(self, theta_deg: np.ndarray, phi_deg: np.ndarray) -> np.ndarray:
        """Luminous intensity, cd: the underlying beam's times ``factor``."""
        return self.factor * np.asarray(self.beam.intensity_cd(theta_deg, phi_deg))

    @property
    def peak_cd(self) -> float:
        """The underlying peak times ``factor``, cd."""
        return float(self.factor * self.beam.peak_cd)


def _is_symmetric(beam: Beam) -> bool:
    return bool(getattr(beam, "rotationally_symmetric", False))


# --------------------------------------------------------------------------------------------
# Ground truth
# --------------------------------------------------------------------------------------------


def outermost_half_angles_deg(
    beam: Beam,
    level_fraction: float,
    phi_deg: np.ndarray,
    *,
    theta_step_deg: float = 0.1,
    theta_max_deg: float = _THETA_MAX_DEG,
) -> np.ndarray:
    """Per azimuth, the largest polar angle at which I >= ``level_fraction`` of the peak.

    Parameters
    ----------
    beam : Beam
        The intensity model.
    level_fraction : float
        Level as a fraction of ``beam.peak_cd``, in (0, 1).
    phi_deg : (n,) array_like
        Azimuths, deg.
    theta_step_deg : float
        Spacing of the dense search grid, deg (features narrower than this beyond the last
        crossing would be missed); each crossing is then refined by bisection to about 1e-9 deg.
    theta_max_deg : float
        Upper end of the search, deg.

    Returns
    -------
    (n,) ndarray of float
        Half angles, deg; NaN where I stays at or above the level up to ``theta_max_deg``.

    Notes
    -----
    The contract's "outermost crossing": a beam with a dark centre is measured across its ring.

    Examples
    --------
    >>> b = FlatFlood(plateau_cd=1.0, half_angle_deg=20.0, edge_power=6.0)
    >>> [round(float(v), 9) for v in outermost_half_angles_deg(b, 0.5, np.array([0.0, 90.0]))]
    [20.0, 20.0]
    """
    if not 0 < level_fraction < 1:
        raise InputError(f"must be in (0, 1), got {level_fraction!r}", field="level_fraction")
    phi = np.atleast_1d(np.asarray(phi_deg, dtype=np.float64))
    level = level_fraction * beam.peak_cd
    theta = np.arange(0.0, theta_max_deg + 0.5 * theta_step_deg, theta_step_deg)
    theta[-1] = min(theta[-1], theta_max_deg)
    out = np.empty(phi.size)
    chunk = max(1, 500_000 // theta.size)
    for start in range(0, phi.size, chunk):
        ph = phi[start : start + chunk]
        vals = beam.intensity_cd(theta[:, None], ph[None, :])  # (n_theta, n_phi)
        above = vals >= level
        # last index at or above the level, per azimuth
        rev = above[::-1]
        last = theta.size - 1 - np.argmax(rev, axis=0)
        never = ~above.any(axis=0)
        at_end = last == theta.size - 1
        lo = theta[last]
        hi = theta[np.minimum(last + 1, theta.size - 1)]
        for _ in range(60):
            mid = 0.5 * (lo + hi)
            ok = beam.intensity_cd(mid, ph) >= level
            lo = np.where(ok, mid, lo)
            hi = np.where(ok, hi, mid)
        res = 0.5 * (lo + hi)
        res[at_end | never] = np.nan
        out[start : start + chunk] = res
    return out


def flux_in_cone_lm(
    beam: Beam,
    half_angle_deg: float,
    *,
    panel_deg: float = 0.5,
    n_phi: int = 720,
) -> float:
    """Luminous flux within the cone of half angle ``half_angle_deg`` about the axis.

    Parameters
    ----------
    beam : Beam
        The intensity model.
    half_angle_deg : float
        Cone half angle, deg, in [0, 90].
    panel_deg : float
        Width of the composite Gauss-Legendre panels in theta (8 nodes each), deg.
    n_phi : int
        Azimuths of the periodic trapezoidal rule (ignored for rotationally symmetric beams).

    Returns
    -------
    float
        ``integral_0^2pi integral_0^alpha I(theta, phi) sin(theta) dtheta dphi``, lm [Rea]_.

    Examples
    --------
    A uniform cone: 2 pi I (1 - cos alpha) [Rea]_.

    >>> round(flux_in_cone_lm(UniformSource(uniform_cd=100.0), 60.0), 6)
    314.159265
    """
    if not (math.isfinite(half_angle_deg) and 0 <= half_angle_deg <= 90):
        raise InputError(f"must be in [0, 90], got {half_angle_deg!r}", field="half_angle_deg")
    if half_angle_deg == 0:
        return 0.0
    n_panels = max(1, math.ceil(half_angle_deg / panel_deg))
    x, w = np.polynomial.legendre.leggauss(8)
    edges = np.linspace(0.0, math.radians(half_angle_deg), n_panels + 1)
    half = 0.5 * np.diff(edges)
    mid = 0.5 * (edges[1:] + edges[:-1])
    theta_rad = (mid[:, None] + half[:, None] * x[None, :]).ravel()
    weights = (half[:, None] * w[None, :]).ravel() * np.sin(theta_rad)
    theta_deg = np.degrees(theta_rad)
    if _is_symmetric(beam):
        vals = beam.intensity_cd(theta_deg, np.zeros_like(theta_deg))
        return float(2.0 * math.pi * np.sum(weights * vals))
    phi_deg = np.arange(n_phi) * (360.0 / n_phi)
    total = 0.0
    chunk = max(1, 2_000_000 // n_phi)
    for start in range(0, theta_deg.size, chunk):
        vals = beam.intensity_cd(theta_deg[start : start + chunk, None], phi_deg[None, :])
        total += float(np.sum(weights[start : start + chunk] * vals.mean(axis=1)))
    return 2.0 * math.pi * total


@dataclass(frozen=True, eq=False)
class Truth:
    """A beam's true figures, per the public contract's definitions.

    Attributes
    ----------
    beam_angle_deg, field_angle_deg : float
        Twice the mean over azimuth of the outermost 50 % (10 %) half angle, deg (NaN if the
        level is never crossed before 89.9 deg).
    beam_angle_min_deg, beam_angle_max_deg, field_angle_min_deg, field_angle_max_deg : float
        Narrowest and widest per-azimuth full angles, deg.
    peak_intensity_cd : float
        Maximum of I over all directions, cd.
    throw_m : float
        ``sqrt(peak / 0.25 lx)``, m [FL1]_.
    distance_m : float
        Torch-to-wall distance the figures were asked for, m.
    field_radius_mm : float
        Radius on the wall, at ``distance_m``, of the widest 10 % direction, mm.
    flux_half_angle_deg : float or None
        Half angle of the cone ``flux_lm`` was computed in, deg.
    flux_lm : float or None
        Flux in that cone, lm.
    total_flux_lm : float
        Flux in the hemisphere towards the wall (cone of 90 deg half angle), lm.
    phi_deg, beam_half_angle_deg, field_half_angle_deg : (n_phi,) ndarray
        The per-azimuth detail, deg.
    beam : Beam
        The model, so that :meth:`flux_in_cone_lm` can integrate any cone.
    """

    beam_angle_deg: float
    field_angle_deg: float
    beam_angle_min_deg: float
    beam_angle_max_deg: float
    field_angle_min_deg: float
    field_angle_max_deg: float
    peak_intensity_cd: float
    throw_m: float
    distance_m: float
    field_radius_mm: float
    flux_half_angle_deg: float | None
    flux_lm: float | None
    total_flux_lm: float
    phi_deg: np.ndarray = field(repr=False)
    beam_half_angle_deg: np.ndarray = field(repr=False)
    field_half_angle_deg: np.ndarray = field(repr=False)
    beam: Beam = field(repr=False)

    def flux_in_cone_lm(self, half_angle_deg: float) -> float:
        """Flux in the cone of half angle ``half_angle_deg`` about the axis, lm [Rea]_."""
        return flux_in_cone_lm(self.beam, half_angle_deg)


def truth(
    beam: Beam,
    *,
    distance_m: float,
    flux_half_angle_deg: float | None = None,
    n_phi: int = 3600,
    theta_step_deg: float = 0.1,
) -> Truth:
    """Compute a beam's true figures from its model, by dense numeric evaluation.

    Parameters
    ----------
    beam : Beam
        The intensity model.
    distance_m : float
        Torch-to-wall distance, m (> 0); used for ``field_radius_mm`` only, the other figures
        are far-field and independent of it.
    flux_half_angle_deg : float, optional
        Cone for ``flux_lm``, deg.
    n_phi : int
        Azimuths, uniform on [0, 360), over which the angles are averaged.
    theta_step_deg : float
        Dense search grid for the crossings, deg (refined by bisection).

    Returns
    -------
    Truth

    Notes
    -----
    Beam angle ``= 2 mean_phi theta_50(phi)`` with ``theta_50`` the outermost crossing of
    50 % of the peak; field angle likewise at 10 %; throw ``= sqrt(I_peak / 0.25)`` [FL1]_.

    Examples
    --------
    >>> t = truth(FlatFlood(plateau_cd=400.0, half_angle_deg=25.0), distance_m=2.0,
    ...           n_phi=36)
    >>> round(t.beam_angle_deg, 6), round(t.throw_m, 3)
    (50.0, 40.0)
    """
    _check_positive(distance_m, "distance_m")
    if n_phi < 1:
        raise InputError(f"must be at least 1, got {n_phi!r}", field="n_phi")
    phi = np.arange(n_phi) * (360.0 / n_phi)
    phi.flags.writeable = False
    step = theta_step_deg
    if _is_symmetric(beam):
        one = np.array([0.0])
        b50 = np.full(n_phi, outermost_half_angles_deg(beam, 0.5, one, theta_step_deg=step)[0])
        b10 = np.full(n_phi, outermost_half_angles_deg(beam, 0.1, one, theta_step_deg=step)[0])
    else:
        b50 = outermost_half_angles_deg(beam, 0.5, phi, theta_step_deg=step)
        b10 = outermost_half_angles_deg(beam, 0.1, phi, theta_step_deg=step)
    b50.flags.writeable = False
    b10.flags.writeable = False
    peak = float(beam.peak_cd)
    flux = None if flux_half_angle_deg is None else flux_in_cone_lm(beam, flux_half_angle_deg)
    field_max = float(np.max(b10)) if np.all(np.isfinite(b10)) else float("nan")
    return Truth(
        beam_angle_deg=float(2.0 * np.mean(b50)),
        field_angle_deg=float(2.0 * np.mean(b10)),
        beam_angle_min_deg=float(2.0 * np.min(b50)),
        beam_angle_max_deg=float(2.0 * np.max(b50)),
        field_angle_min_deg=float(2.0 * np.min(b10)),
        field_angle_max_deg=float(2.0 * np.max(b10)),
        peak_intensity_cd=peak,
        throw_m=math.sqrt(peak / THROW_ILLUMINANCE_LX),
        distance_m=float(distance_m),
        field_radius_mm=1000.0 * distance_m * math.tan(math.radians(field_max)),
        flux_half_angle_deg=None if flux_half_angle_deg is None else float(flux_half_angle_deg),
        flux_lm=flux,
        total_flux_lm=flux_in_cone_lm(beam, 90.0),
        phi_deg=phi,
        beam_half_angle_deg=b50,
        field_half_angle_deg=b10,
        beam=beam,
    )


# --------------------------------------------------------------------------------------------
# Scene: sensor, camera, geometry
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class SensorModel:
    """The camera sensor: sensitivity, noise and digital levels.

    Parameters
    ----------
    full_well_e : float
        Electrons at full scale (the signal that reaches the white level), e-.
    read_noise_e : float
        Standard deviation of the Gaussian read noise, e-.
    signal_per_lux_s : float
        Fraction of full scale per unit of wall luminance times time, i.e. per (cd/m^2 * s),
        at ISO 100 and f/1, on the optical axis. The default 1.0 puts an 18 % grey card under
        the ISO 2720 reflected-light exposure (K = 12.5) near 12 % of full scale (derived,
        common practice, no source).
    black_level_dn, white_level_dn : int
        Digital value of black and the value at which the output clips, DN.
    bit_depth : int
        Bits of the linear output (8 to 16).

    Examples
    --------
    >>> SensorModel().gain_dn_per_e > 3
    True
    """

    full_well_e: float = 20000.0
    read_noise_e: float = 3.0
    signal_per_lux_s: float = 1.0
    black_level_dn: int = 1024
    white_level_dn: int = 65535
    bit_depth: int = 16

    def __post_init__(self) -> None:
        _check_positive(self.full_well_e, "full_well_e")
        _check_positive(self.read_noise_e, "read_noise_e", allow_zero=True)
        _check_positive(self.signal_per_lux_s, "signal_per_lux_s")
        if not 8 <= self.bit_depth <= 16:
            raise InputError(f"must be 8 to 16, got {self.bit_depth!r}", field="bit_depth")
        if not 0 <= self.black_level_dn < self.white_level_dn <= 2**self.bit_depth - 1:
            raise InputError(
                f"need 0 <= black < white <= 2**bit_depth - 1, got {self.black_level_dn!r}, "
                f"{self.white_level_dn!r}",
                field="black_level_dn, white_level_dn",
            )

    @property
    def gain_dn_per_e(self) -> float:
        """Digital numbers per electron, DN/e-."""
        return (self.white_level_dn - self.black_level_dn) / self.full_well_e


@dataclass(frozen=True)
class CameraPose:
    """A pinhole camera's position, orientation and image size (see the module's frames).

    Parameters
    ----------
    position_m : (3,) tuple of float
        Centre of projection in wall coordinates, m; z > 0.
    yaw_deg, pitch_deg, roll_deg : float
        Orientation, deg (positive yaw looks towards +x, positive pitch looks up).
    focal_length_px : float
        Focal length, px.
    width_px, height_px : int
        Image size, px.

    Examples
    --------
    >>> CameraPose(position_m=(0.0, 0.0, 2.0), focal_length_px=500.0, width_px=300,
    ...            height_px=200).principal_point_px
    (149.5, 99.5)
    """

    position_m: tuple[float, float, float]
    yaw_deg: float = 0.0
    pitch_deg: float = 0.0
    roll_deg: float = 0.0
    focal_length_px: float = 1000.0
    width_px: int = 400
    height_px: int = 300

    def __post_init__(self) -> None:
        pos = tuple(float(v) for v in self.position_m)
        if len(pos) != 3 or not all(math.isfinite(v) for v in pos):
            raise InputError(
                f"must be 3 finite numbers, got {self.position_m!r}", field="position_m"
            )
        if pos[2] <= 0:
            raise InputError(f"z must be positive (in front of the wall), got {pos[2]!r}",
                             field="position_m")
        object.__setattr__(self, "position_m", pos)
        for name in ("yaw_deg", "pitch_deg", "roll_deg"):
            value = getattr(self, name)
            if not (math.isfinite(value) and abs(value) < 80):
                raise InputError(f"must be finite and within +-80, got {value!r}", field=name)
        _check_positive(self.focal_length_px, "focal_length_px")
        for name in ("width_px", "height_px"):
            value = getattr(self, name)
            if int(value) != value or value < 2:
                raise InputError(f"must be an integer >= 2, got {value!r}", field=name)

    @property
    def principal_point_px(self) -> tuple[float, float]:
        """Image centre ``((W - 1)/2, (H - 1)/2)``, px."""
        return ((self.width_px - 1) / 2.0, (self.height_px - 1) / 2.0)


@dataclass(frozen=True)
class Scene:
    """One photo's world: a beam on a wall, the light's colour, the camera and its sensor.

    Parameters
    ----------
    beam : Beam
        The torch (or lamp) intensity model.
    distance_m : float
        Front lens to the wall along the axis, m.
    axis_mm : (2,) tuple of float
        Where the axis meets the wall, mm (x right, y up).
    camera : CameraPose
    sensor : SensorModel
    reflectance : float
        Lambertian reflectance of the wall, (0, 1].
    colour_rgb : (3,) tuple of float
        The light's linear RGB, with unit Rec. 709 luminance (see :func:`normalise_colour`).
    ambient_lx : float
        Uniform, neutral ambient illuminance on the wall, lx.
    """

    beam: Beam
    distance_m: float
    camera: CameraPose
    axis_mm: tuple[float, float] = (0.0, 0.0)
    sensor: SensorModel = field(default_factory=SensorModel)
    reflectance: float = 0.8
    colour_rgb: tuple[float, float, float] = NEUTRAL_RGB
    ambient_lx: float = 0.0

    def __post_init__(self) -> None:
        _check_positive(self.distance_m, "distance_m")
        axis = tuple(float(v) for v in self.axis_mm)
        if len(axis) != 2 or not all(math.isfinite(v) for v in axis):
            raise InputError(f"must be 2 finite numbers, got {self.axis_mm!r}", field="axis_mm")
        object.__setattr__(self, "axis_mm", axis)
        if not (math.isfinite(self.reflectance) and 0 < self.reflectance <= 1):
            raise InputError(f"must be in (0, 1], got {self.reflectance!r}", field="reflectance")
        _check_positive(self.ambient_lx, "ambient_lx", allow_zero=True)
        rgb = np.asarray(self.colour_rgb, dtype=np.float64)
        if rgb.shape != (3,) or np.any(rgb < 0) or abs(float(_LUMA @ rgb) - 1.0) > 1e-6:
            raise InputError(
                f"must be 3 non-negative numbers with 0.2126 R + 0.7152 G + 0.0722 B = 1, "
                f"got {self.colour_rgb!r} (use normalise_colour)",
                field="colour_rgb",
            )
        object.__setattr__(self, "colour_rgb", tuple(float(v) for v in rgb))
        if not isinstance(self.beam, Beam):
            raise InputError("must have intensity_cd() and peak_cd", field="beam")


def _pose(scene_or_pose: Scene | CameraPose) -> CameraPose:
    return scene_or_pose.camera if isinstance(scene_or_pose, Scene) else scene_or_pose


def camera_matrix(scene_or_pose: Scene | CameraPose) -> np.ndarray:
    """Return the intrinsic matrix K.

    Parameters
    ----------
    scene_or_pose : Scene or CameraPose

    Returns
    -------
    (3, 3) ndarray
        ``[[f, 0, cx], [0, f, cy], [0, 0, 1]]`` with ``(cx, cy) = ((W-1)/2, (H-1)/2)`` [OCV]_.

    Examples
    --------
    >>> camera_matrix(CameraPose(position_m=(0, 0, 1), focal_length_px=800.0, width_px=101,
    ...                          height_px=51)).tolist()
    [[800.0, 0.0, 50.0], [0.0, 800.0, 25.0], [0.0, 0.0, 1.0]]
    """
    pose = _pose(scene_or_pose)
    cx, cy = pose.principal_point_px
    f = float(pose.focal_length_px)
    return np.array([[f, 0.0, cx], [0.0, f, cy], [0.0, 0.0, 1.0]])


def _camera_to_wall_rotation(pose: CameraPose) -> np.ndarray:
    """Columns: the camera's x (right), y (down) and z (forward) axes in wall coordinates."""
    y, p, r = (math.radians(v) for v in (pose.yaw_deg, pose.pitch_deg, pose.roll_deg))
    # At rest: right = +x, down = -y, forward = -z.
    rest = np.array([[1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, -1.0]])
    # Intrinsic rotations, each about the camera's current axis, applied to the rest frame.
    cy_, sy_ = math.cos(y), math.sin(y)
    cp, sp = math.cos(p), math.sin(p)
    cr, sr = math.cos(r), math.sin(r)
    # yaw about the camera's down axis (wall -y): forward (0,0,1)_cam -> (sin y, 0, -cos y)
    yaw = np.array([[cy_, 0.0, sy_], [0.0, 1.0, 0.0], [-sy_, 0.0, cy_]])
    # pitch about the camera's right axis: forward turns towards up (-down)
    pitch = np.array([[1.0, 0.0, 0.0], [0.0, cp, -sp], [0.0, sp, cp]])
    # roll about the camera's forward axis: right turns towards down
    roll = np.array([[cr, -sr, 0.0], [sr, cr, 0.0], [0.0, 0.0, 1.0]])
    return rest @ yaw @ pitch @ roll


def world_to_camera(scene_or_pose: Scene | CameraPose) -> tuple[np.ndarray, np.ndarray]:
    """Return the extrinsics: wall (m) to camera coordinates, ``X_c = R X + t``.

    Parameters
    ----------
    scene_or_pose : Scene or CameraPose

    Returns
    -------
    R : (3, 3) ndarray
        Rotation, wall to camera (OpenCV's camera axes: x right, y down, z forward) [OCV]_.
    t : (3,) ndarray
        Translation, m (``-R C`` with C the camera position).

    Examples
    --------
    >>> R, t = world_to_camera(CameraPose(position_m=(0.0, 0.0, 2.0)))
    >>> R.round(12).tolist(), t.round(12).tolist()
    ([[1.0, 0.0, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, -1.0]], [0.0, 0.0, 2.0])
    """
    pose = _pose(scene_or_pose)
    rot = _camera_to_wall_rotation(pose).T
    centre = np.asarray(pose.position_m, dtype=np.float64)
    return rot, -rot @ centre


def wall_to_px_homography(scene_or_pose: Scene | CameraPose) -> np.ndarray:
    """Return the homography from wall mm (x right, y up) to pixels (x right, y down).

    Parameters
    ----------
    scene_or_pose : Scene or CameraPose

    Returns
    -------
    (3, 3) ndarray
        ``H = K [r1 / 1000, r2 / 1000, t]``, normalised so that ``H[2, 2] = 1``; use it with
        ``cv2.perspectiveTransform`` [OCV]_.

    Examples
    --------
    >>> pose = CameraPose(position_m=(0.0, 0.0, 2.0), focal_length_px=1000.0, width_px=401,
    ...                   height_px=301)
    >>> (wall_to_px_homography(pose) @ [100.0, 100.0, 1.0]).round(9).tolist()
    [250.0, 100.0, 1.0]
    """
    rot, t = world_to_camera(scene_or_pose)
    h = camera_matrix(scene_or_pose) @ np.column_stack([rot[:, 0] / 1000.0, rot[:, 1] / 1000.0, t])
    if abs(h[2, 2]) < 1e-12:
        raise GeometryError("the wall origin lies in the camera's focal plane", field="camera")
    return h / h[2, 2]


def wall_to_pixel(scene_or_pose: Scene | CameraPose, xy_mm: np.ndarray) -> np.ndarray:
    """Project wall points to pixel coordinates.

    Parameters
    ----------
    scene_or_pose : Scene or CameraPose
    xy_mm : (N, 2) array_like
        Wall points, mm (x right, y up).

    Returns
    -------
    (N, 2) ndarray
        Pixel coordinates (x right, y down, centres at integers); NaN for points behind the
        camera.

    Examples
    --------
    >>> pose = CameraPose(position_m=(0.0, 0.0, 2.0), focal_length_px=1000.0, width_px=401,
    ...                   height_px=301)
    >>> wall_to_pixel(pose, [[0.0, 0.0], [200.0, -100.0]]).round(9).tolist()
    [[200.0, 150.0], [300.0, 200.0]]
    """
    pts = np.asarray(xy_mm, dtype=np.float64).reshape(-1, 2)
    rot, t = world_to_camera(scene_or_pose)
    cam = pts @ (rot[:, :2].T / 1000.0) + t  # (N, 3)
    k = camera_matrix(scene_or_pose)
    with np.errstate(divide="ignore", invalid="ignore"):
        u = k[0, 0] * cam[:, 0] / cam[:, 2] + k[0, 2]
        v = k[1, 1] * cam[:, 1] / cam[:, 2] + k[1, 2]
    out = np.column_stack([u, v])
    out[cam[:, 2] <= 0] = np.nan
    return out


def _pixel_rays(pose: CameraPose, u: np.ndarray, v: np.ndarray) -> tuple[np.ndarray, ...]:
    """Wall-frame ray directions through pixel positions, and their cos to the optical axis."""
    cx, cy = pose.principal_point_px
    f = float(pose.focal_length_px)
    a = (u - cx) / f
    b = (v - cy) / f
    m = _camera_to_wall_rotation(pose)
    dx = m[0, 0] * a + m[0, 1] * b + m[0, 2]
    dy = m[1, 0] * a + m[1, 1] * b + m[1, 2]
    dz = m[2, 0] * a + m[2, 1] * b + m[2, 2]
    cos_axis = 1.0 / np.sqrt(1.0 + a * a + b * b)
    return dx, dy, dz, cos_axis


def pixel_to_wall(scene_or_pose: Scene | CameraPose, xy_px: np.ndarray) -> np.ndarray:
    """Cast pixel rays onto the wall.

    Parameters
    ----------
    scene_or_pose : Scene or CameraPose
    xy_px : (N, 2) array_like
        Pixel coordinates (x right, y down).

    Returns
    -------
    (N, 2) ndarray
        Wall points, mm (x right, y up); NaN where the ray misses the wall.

    Examples
    --------
    >>> pose = CameraPose(position_m=(0.0, 0.0, 2.0), focal_length_px=1000.0, width_px=401,
    ...                   height_px=301)
    >>> pixel_to_wall(pose, [[300.0, 200.0]]).round(9).tolist()
    [[200.0, -100.0]]
    """
    pts = np.asarray(xy_px, dtype=np.float64).reshape(-1, 2)
    pose = _pose(scene_or_pose)
    dx, dy, dz, _ = _pixel_rays(pose, pts[:, 0], pts[:, 1])
    cxm, cym, czm = pose.position_m
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.where(dz < 0, -czm / dz, np.nan)
    return 1000.0 * np.column_stack([cxm + s * dx, cym + s * dy])


def _beam_illuminance_lx(scene: Scene, x_m: np.ndarray, y_m: np.ndarray) -> np.ndarray:
    d = float(scene.distance_m)
    ex = x_m - scene.axis_mm[0] / 1000.0
    ey = y_m - scene.axis_mm[1] / 1000.0
    r = np.hypot(ex, ey)
    theta_deg = np.degrees(np.arctan2(r, d))
    phi_deg = np.mod(np.degrees(np.arctan2(ey, ex)), 360.0)
    cos_t = d / np.sqrt(d * d + r * r)
    return np.asarray(scene.beam.intensity_cd(theta_deg, phi_deg)) * cos_t**3 / (d * d)


def wall_illuminance_lx(
    scene: Scene, xy_mm: np.ndarray, *, beam_on: bool = True
) -> np.ndarray:
    """Illuminance on the wall (beam plus ambient), lx.

    Parameters
    ----------
    scene : Scene
    xy_mm : (N, 2) array_like
        Wall points, mm.
    beam_on : bool
        False leaves only the ambient light.

    Returns
    -------
    (N,) ndarray
        ``I(theta, phi) cos^3(theta) / d^2 + ambient_lx`` [Rea]_.

    Examples
    --------
    >>> s = Scene(beam=UniformSource(uniform_cd=100.0), distance_m=2.0,
    ...           camera=CameraPose(position_m=(0.0, 0.0, 2.0)))
    >>> wall_illuminance_lx(s, [[0.0, 0.0], [2000.0, 0.0]]).round(6).tolist()
    [25.0, 8.838835]
    """
    pts = np.asarray(xy_mm, dtype=np.float64).reshape(-1, 2)
    e = np.zeros(pts.shape[0])
    if beam_on:
        e = _beam_illuminance_lx(scene, pts[:, 0] / 1000.0, pts[:, 1] / 1000.0)
    return e + float(scene.ambient_lx)


# --------------------------------------------------------------------------------------------
# Rendering
# --------------------------------------------------------------------------------------------


def _exposure_factor(exposure: Exposure) -> float:
    # Apart from beamwall.linear.exposure_factor on purpose (see srgb_encode).
    for name in ("exposure_s", "f_number", "iso"):
        _check_positive(float(getattr(exposure, name)), name)
    t, iso, n = float(exposure.exposure_s), float(exposure.iso), float(exposure.f_number)
    return t * (iso / 100.0) / n**2


def _row_chunks(pose: CameraPose, supersample: int) -> range:
    rows = max(1, _CHUNK_PIXELS // (pose.width_px * supersample * supersample))
    return range(0, pose.height_px, rows)


def _signal_rows(
    scene: Scene,
    row0: int,
    row1: int,
    *,
    scale: float,
    beam_on: bool,
    supersample: int,
    grey: bool,
) -> np.ndarray:
    """Noiseless signal (fraction of full scale) of rows [row0, row1): (n, W, C) float64."""
    pose = scene.camera
    cols = np.arange(pose.width_px, dtype=np.float64)
    rows = np.arange(row0, row1, dtype=np.float64)
    offsets = (np.arange(supersample) + 0.5) / supersample - 0.5
    acc_beam = np.zeros((rows.size, cols.size))
    acc_amb = np.zeros((rows.size, cols.size))
    cxm, cym, czm = pose.position_m
    for oy in offsets:
        for ox in offsets:
            u = (cols + ox)[None, :]
            v = (rows + oy)[:, None]
            dx, dy, dz, cos_axis = _pixel_rays(pose, u, v)
            hit = dz < 0
            with np.errstate(divide="ignore", invalid="ignore"):
                s = np.where(hit, -czm / dz, 0.0)
            falloff = np.where(hit, cos_axis**4, 0.0)
            if beam_on:
                e = _beam_illuminance_lx(scene, cxm + s * dx, cym + s * dy)
                acc_beam += np.where(hit, e, 0.0) * falloff
            acc_amb += falloff
    k = scale * scene.reflectance / math.pi / supersample**2
    beam_part = k * acc_beam
    amb_part = k * scene.ambient_lx * acc_amb
    if grey:
        return (beam_part + amb_part)[:, :, None]
    rgb = np.asarray(scene.colour_rgb)
    return beam_part[:, :, None] * rgb + amb_part[:, :, None]


def sensor_dn(
    signal: np.ndarray,
    sensor: SensorModel,
    rng: np.random.Generator,
    *,
    noise: bool = True,
    gain: float = 1.0,
) -> np.ndarray:
    """The sensor's digital numbers for a focal-plane signal: electrons, noise, levels.

    Parameters
    ----------
    signal : ndarray, any shape
        Fraction of full scale (1 = ``full_well_e`` electrons), >= 0.
    sensor : SensorModel
    rng : numpy.random.Generator
        Draws the Poisson shot noise, then the Gaussian read noise.
    noise : bool, keyword-only
        False: the expected electrons, no noise.
    gain : float, keyword-only
        Extra gain after the sensor (1: none).

    Returns
    -------
    ndarray, float64, same shape
        DN = black + gain x electrons x DN-per-electron, rounded and clipped to [0, white].

    Examples
    --------
    >>> s = SensorModel()
    >>> float(sensor_dn(np.array([0.0]), s, np.random.default_rng(0), noise=False)[0])
    1024.0
    >>> float(sensor_dn(np.array([2.0]), s, np.random.default_rng(0), noise=False)[0])
    65535.0
    """
    lam = np.minimum(np.maximum(signal, 0.0) * sensor.full_well_e, 4.0 * sensor.full_well_e)
    if noise:
        electrons = rng.poisson(lam).astype(np.float64)
        if sensor.read_noise_e > 0:
            electrons += rng.normal(0.0, sensor.read_noise_e, size=lam.shape)
    else:
        electrons = lam
    black, white = float(sensor.black_level_dn), float(sensor.white_level_dn)
    return np.clip(np.rint(black + gain * electrons * sensor.gain_dn_per_e), 0.0, white)


def encode_dn(dn: np.ndarray, sensor: SensorModel, encoding: str) -> np.ndarray:
    """A photo's stored values from the sensor's DN: 16-bit linear, or 8-bit sRGB.

    ``"linear"``: the DN as uint16; ``"srgb"``: (DN - black) / (white - black) through the
    sRGB curve [IEC]_, 8 bits.

    Examples
    --------
    >>> s = SensorModel()
    >>> encode_dn(np.array([1024.0, 65535.0]), s, "srgb").tolist()
    [0, 255]
    """
    if encoding == "linear":
        return dn.astype(np.uint16)
    black, white = float(sensor.black_level_dn), float(sensor.white_level_dn)
    lin = np.clip((dn - black) / (white - black), 0.0, 1.0)
    return np.rint(255.0 * srgb_encode(lin)).astype(np.uint8)


def _check_render_args(supersample: int) -> None:
    if int(supersample) != supersample or supersample < 1:
        raise InputError(f"must be a positive integer, got {supersample!r}", field="supersample")


def render_signal(
    scene: Scene,
    *,
    exposure: Exposure,
    beam_on: bool = True,
    supersample: int = 1,
    grey: bool = False,
) -> np.ndarray:
    """Render the noiseless, unclipped focal-plane signal, as a fraction of full scale.

    Parameters
    ----------
    scene : Scene
    exposure : beamwall.linear.Exposure
        Exposure time (s), f-number and ISO.
    beam_on : bool
        False renders the ambient light only.
    supersample : int
        Rays per pixel along each axis (1: one ray through the pixel centre).
    grey : bool
        One luminance channel instead of RGB.

    Returns
    -------
    (H, W, 3) or (H, W) float32
        ``k rho E / pi * t (ISO/100) / N^2 * cos^4(alpha)`` per channel (module docstring);
        0 where a pixel's ray misses the wall.

    Notes
    -----
    Rendered in row chunks of about 2**18 rays, so the working memory beyond the output stays
    near 100 MB whatever the image size (a 6000 x 4000 RGB render peaks near 220 MB).

    Examples
    --------
    >>> s = Scene(beam=UniformSource(uniform_cd=100.0), distance_m=2.0, reflectance=1.0,
    ...           camera=CameraPose(position_m=(0.0, 0.0, 2.0), width_px=3, height_px=3))
    >>> sig = render_signal(s, exposure=Exposure(0.01, 1.0, 100.0), grey=True)
    >>> round(float(sig[1, 1]) * math.pi, 6)   # 25 lx * 0.01 s
    0.25
    """
    _check_render_args(supersample)
    scale = scene.sensor.signal_per_lux_s * _exposure_factor(exposure)
    pose = scene.camera
    nch = 1 if grey else 3
    out = np.empty((pose.height_px, pose.width_px, nch), dtype=np.float32)
    for r0 in _row_chunks(pose, supersample):
        r1 = min(r0 + _row_chunks(pose, supersample).step, pose.height_px)
        out[r0:r1] = _signal_rows(
            scene, r0, r1, scale=scale, beam_on=beam_on, supersample=supersample, grey=grey
        )
    return out[:, :, 0] if grey else out


_ENCODINGS = ("srgb", "linear")


def render(
    scene: Scene,
    *,
    exposure: Exposure,
    encoding: str = "srgb",
    seed: int | None = 0,
    beam_on: bool = True,
    supersample: int = 1,
    grey: bool = False,
    noise: bool = True,
) -> np.ndarray:
    """Render the photo a camera would record of the scene.

    Parameters
    ----------
    scene : Scene
    exposure : beamwall.linear.Exposure
        Exposure time (s), f-number and ISO the photo is taken with.
    encoding : {"srgb", "linear"}
        ``"srgb"``: uint8, the linear signal over [black, white] through the sRGB curve
        [IEC]_; ``"linear"``: uint16 digital numbers with the sensor's black and white levels.
    seed : int or None
        Seed of the noise generator (``numpy.random.default_rng``).
    beam_on : bool
        False renders the dark frame (torch off, same settings): ambient, noise and black.
    supersample : int
        Rays per pixel along each axis.
    grey : bool
        A monochrome sensor: one luminance channel, (H, W).
    noise : bool
        False leaves out shot and read noise (quantisation and clipping stay).

    Returns
    -------
    (H, W, 3) or (H, W) ndarray, uint8 (``"srgb"``) or uint16 (``"linear"``)

    Raises
    ------
    InputError
        Unknown encoding, bad supersample or exposure.

    Notes
    -----
    Per channel: electrons ``e ~ Poisson(s * full_well) + Normal(0, read_noise)``;
    ``DN = round(black + e * gain)`` clipped to [0, white]. The generator draws chunk by chunk
    in row order, so a seed gives the same image every time.

    Examples
    --------
    >>> s = Scene(beam=UniformSource(uniform_cd=100.0), distance_m=2.0,
    ...           camera=CameraPose(position_m=(0.0, 0.0, 2.0), width_px=4, height_px=3))
    >>> img = render(s, exposure=Exposure(0.01, 2.0, 100.0), encoding="srgb", seed=1)
    >>> img.shape, img.dtype.name
    ((3, 4, 3), 'uint8')
    """
    if encoding not in _ENCODINGS:
        raise InputError(f"must be one of {_ENCODINGS}, got {encoding!r}", field="encoding")
    _check_render_args(supersample)
    sensor = scene.sensor
    scale = sensor.signal_per_lux_s * _exposure_factor(exposure)
    pose = scene.camera
    rng = np.random.default_rng(seed)
    nch = 1 if grey else 3
    dtype = np.uint8 if encoding == "srgb" else np.uint16
    out = np.empty((pose.height_px, pose.width_px, nch), dtype=dtype)
    chunks = _row_chunks(pose, supersample)
    for r0 in chunks:
        r1 = min(r0 + chunks.step, pose.height_px)
        sig = _signal_rows(
            scene, r0, r1, scale=scale, beam_on=beam_on, supersample=supersample, grey=grey
        )
        out[r0:r1] = encode_dn(sensor_dn(sig, sensor, rng, noise=noise), sensor, encoding)
    return out[:, :, 0] if grey else out


def bracket(
    scene: Scene,
    *,
    exposures: Sequence[Exposure],
    encoding: str = "srgb",
    seed: int | None = 0,
    beam_on: bool = True,
    supersample: int = 1,
    grey: bool = False,
) -> tuple[np.ndarray, ...]:
    """Render the same scene at several exposures (an exposure bracket).

    Parameters
    ----------
    scene : Scene
    exposures : sequence of Exposure
    encoding, beam_on, supersample, grey
        As for :func:`render`.
    seed : int or None
        Image k uses ``seed + k`` (independent noise), or fresh entropy when None.

    Returns
    -------
    tuple of ndarray
        One image per exposure, in order.

    Examples
    --------
    >>> s = Scene(beam=UniformSource(uniform_cd=1.0), distance_m=1.0,
    ...           camera=CameraPose(position_m=(0.0, 0.0, 1.0), width_px=2, height_px=2))
    >>> len(bracket(s, exposures=[Exposure(0.1, 2.0, 100.0), Exposure(0.4, 2.0, 100.0)]))
    2
    """
    return tuple(
        render(
            scene,
            exposure=exp,
            encoding=encoding,
            seed=None if seed is None else seed + k,
            beam_on=beam_on,
            supersample=supersample,
            grey=grey,
        )
        for k, exp in enumerate(exposures)
    )


def auto_exposure_s(
    scene: Scene,
    *,
    f_number: float,
    iso: float,
    headroom: float = 0.8,
    supersample: int = 1,
) -> float:
    """Find the exposure time that puts the brightest pixel at ``headroom`` of full scale.

    Parameters
    ----------
    scene : Scene
    f_number, iso : float
        The other exposure settings.
    headroom : float
        Target of the brightest channel of the brightest pixel, fraction of full scale, (0, 1].
    supersample : int
        As for :func:`render`.

    Returns
    -------
    float
        Exposure time, s (noiseless signal; round it with :func:`nominal_shutter_s`).

    Raises
    ------
    InputError
        Headroom out of range, or a scene with no light.

    Examples
    --------
    >>> s = Scene(beam=UniformSource(uniform_cd=100.0), distance_m=2.0, reflectance=1.0,
    ...           camera=CameraPose(position_m=(0.0, 0.0, 2.0), width_px=3, height_px=3))
    >>> t = auto_exposure_s(s, f_number=1.0, iso=100.0, headroom=0.5)
    >>> round(t * 25.0 / math.pi, 9)   # L t at f/1, ISO 100 reaches 0.5 of full scale
    0.5
    """
    if not 0 < headroom <= 1:
        raise InputError(f"must be in (0, 1], got {headroom!r}", field="headroom")
    _check_render_args(supersample)
    ref = Exposure(exposure_s=1.0, f_number=float(f_number), iso=float(iso))
    scale = scene.sensor.signal_per_lux_s * _exposure_factor(ref)
    peak = 0.0
    chunks = _row_chunks(scene.camera, supersample)
    for r0 in chunks:
        r1 = min(r0 + chunks.step, scene.camera.height_px)
        sig = _signal_rows(
            scene, r0, r1, scale=scale, beam_on=True, supersample=supersample, grey=False
        )
        peak = max(peak, float(sig.max()))
    if peak <= 0:
        raise InputError("the scene has no light in the frame", field="scene")
    return headroom / peak


#: Marked shutter times in 1/3-stop steps, s (camera marking, common practice, no source).
_SHUTTER_S = tuple(
    sorted(
        [30, 25, 20, 15, 13, 10, 8, 6, 5, 4, 3.2, 2.5, 2, 1.6, 1.3, 1, 0.8, 0.6, 0.5, 0.4, 0.3]
        + [1 / n for n in (4, 5, 6, 8, 10, 13, 15, 20, 25, 30, 40, 50, 60, 80, 100, 125, 160,
                           200, 250, 320, 400, 500, 640, 800, 1000, 1250, 1600, 2000, 2500,
                           3200, 4000, 5000, 6400, 8000)]
    )
)


def nominal_shutter_s(exposure_s: float) -> float:
    """Round down to a marked shutter time (1/3-stop series) not longer than ``exposure_s``.

    Parameters
    ----------
    exposure_s : float
        Exposure time, s, >= 1/8000.

    Returns
    -------
    float
        A marked value (30 s ... 1/8000 s), s (common practice, no source).

    Examples
    --------
    >>> nominal_shutter_s(0.0095) == 1 / 125
    True
    """
    _check_positive(exposure_s, "exposure_s")
    fits = [t for t in _SHUTTER_S if t <= exposure_s * (1 + 1e-12)]
    if not fits:
        raise InputError(f"shorter than 1/8000 s, got {exposure_s!r}", field="exposure_s")
    return float(fits[-1])


# --------------------------------------------------------------------------------------------
# The fictional demo scenario
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class DemoElectrical:
    """Electrical readings of the demo torch (field names as in the session's [electrical])."""

    led_volts: float
    sense_volts: float
    sense_ohms: float
    efficacy_lm_per_w: tuple[float, float]
    pwm_duty: float = 1.0

    @property
    def led_amps(self) -> float:
        """LED current from the sense resistor, A (Ohm's law)."""
        return self.sense_volts / self.sense_ohms


@dataclass(frozen=True)
class DemoShot:
    """One shot of the demo: its scene, the exposures of its images, and the true figures.

    ``exposures`` has one entry per image (two or more: a bracket); ``dark_exposure`` is the
    dark frame's settings (those of the first image). ``claimed_*`` are the fictional maker's
    claims (None when not claimed); ``electrical`` is the shot's own [shot.electrical] table,
    if any.
    """

    label: str
    zoom: str
    mode: str
    scene: Scene
    exposures: tuple[Exposure, ...]
    truth: Truth
    seed: int
    source_cct_k: float | None = None
    claimed_lm: float | None = None
    claimed_cd: float | None = None
    claimed_throw_m: float | None = None
    electrical: DemoElectrical | None = None

    @property
    def dark_exposure(self) -> Exposure:
        """Settings of the dark frame (the first image's)."""
        return self.exposures[0]


@dataclass(frozen=True)
class DemoReference:
    """The calibration shot: a reference lamp of known axial intensity."""

    label: str
    scene: Scene
    exposures: tuple[Exposure, ...]
    intensity_cd: float
    intensity_sigma_cd: float
    distance_m: float
    distance_sigma_m: float
    axis_mm: tuple[float, float]
    cct_k: float
    seed: int


@dataclass(frozen=True, eq=False)
class DemoScenario:
    """The bundled fictional scenario, as data (files are written elsewhere).

    Attributes
    ----------
    title, torch_name : str
    distance_m : float
        Torch-to-wall distance of every torch shot, m.
    camera : CameraPose
        The tripod camera, the same for the torch shots and the reference.
    sensor : SensorModel
    encoding : str
        Encoding of every photo ("srgb").
    wall_points_mm : (N, 2) ndarray
        Tape marks on the wall, mm.
    wall_points_px : (N, 2) ndarray
        Where they appear in every photo, px (exact projection).
    shots : tuple of DemoShot
    reference : DemoReference
    electrical : DemoElectrical
        The session's [electrical] values (high mode).
    """

    title: str
    torch_name: str
    distance_m: float
    camera: CameraPose
    sensor: SensorModel
    encoding: str
    wall_points_mm: np.ndarray
    wall_points_px: np.ndarray
    shots: tuple[DemoShot, ...]
    reference: DemoReference
    electrical: DemoElectrical


def _demo_exposure(scene: Scene, *, f_number: float, iso: float) -> Exposure:
    t = nominal_shutter_s(auto_exposure_s(scene, f_number=f_number, iso=iso, headroom=0.8))
    return Exposure(exposure_s=t, f_number=f_number, iso=iso)


@lru_cache(maxsize=1)
def demo_scenario() -> DemoScenario:
    """Describe the fictional demo: a zoom torch at both zoom ends, two modes, a reference lamp.

    All names and numbers are invented for the demo. The "Model Z-1 test torch" stands 1.5 m
    from the wall; a camera on a tripod stands 0.35 m to the right of and 0.25 m below the
    torch axis, 0.5 m behind the torch's lens, turned 10 deg left and 5 deg up, with a wide
    lens so that the flood's 10 % field fits in the frame. At minimum zoom the torch is a
    flat-topped flood (beam about 60 deg), at maximum zoom a square-emitter spot (about 7 deg);
    low mode is 25 % of high. The maximum-zoom high shot is a two-image bracket. The reference
    lamp (120 cd, tungsten) is photographed from the same tripod at 2.0 m. The result is
    computed once per process and cached; its arrays are read-only.

    Returns
    -------
    DemoScenario

    Examples
    --------
    >>> demo = demo_scenario()
    >>> [s.label for s in demo.shots]
    ['min zoom, high', 'min zoom, low', 'max zoom, high', 'max zoom, low']
    """
    distance_m = 1.5
    camera = CameraPose(
        position_m=(0.35, -0.25, 2.0),
        yaw_deg=-10.0,
        pitch_deg=5.0,
        roll_deg=0.4,
        focal_length_px=640.0,
        width_px=1600,
        height_px=1068,
    )
    sensor = SensorModel()
    f_number, iso = 4.0, 100.0
    ambient_lx = 0.3
    flood = FlatFlood(plateau_cd=260.0, half_angle_deg=30.0, edge_power=8.0)
    spot = SquareSpot(
        spot_cd=16500.0,
        half_side_deg=3.0,
        blur_deg=0.5,
        halo_cd=160.0,
        halo_sigma_deg=12.0,
        rotation_deg=20.0,
    )
    low = 0.25
    flux_half_angle_deg = 45.0
    high_el = DemoElectrical(
        led_volts=3.05, sense_volts=0.40, sense_ohms=0.5, efficacy_lm_per_w=(90.0, 130.0)
    )
    low_el = replace(high_el, led_volts=2.80, sense_volts=0.10, efficacy_lm_per_w=(95.0, 150.0))

    def scene_for(beam: Beam) -> Scene:
        return Scene(
            beam=beam,
            distance_m=distance_m,
            axis_mm=(0.0, 0.0),
            camera=camera,
            sensor=sensor,
            reflectance=0.8,
            colour_rgb=COOL_WHITE_LED_RGB,
            ambient_lx=ambient_lx,
        )

    plans: list[tuple[str, str, str, Beam, int, DemoElectrical | None]] = [
        ("min zoom, high", "min", "high", flood, 1, None),
        ("min zoom, low", "min", "low", ScaledBeam(flood, low), 1, low_el),
        ("max zoom, high", "max", "high", spot, 2, None),
        ("max zoom, low", "max", "low", ScaledBeam(spot, low), 1, low_el),
    ]
    shots = []
    for k, (label, zoom, mode, beam, n_images, el) in enumerate(plans):
        scene = scene_for(beam)
        first = _demo_exposure(scene, f_number=f_number, iso=iso)
        exposures = [first]
        if n_images == 2:
            exposures.append(replace(first, exposure_s=nominal_shutter_s(16.0 * first.exposure_s)))
        tr = truth(
            beam, distance_m=distance_m, flux_half_angle_deg=flux_half_angle_deg, n_phi=1440
        )
        claims: dict[str, float] = {}
        if label == "min zoom, high":
            # honest: within a few per cent of the truth
            claims["claimed_lm"] = float(round(tr.total_flux_lm, -1))
        if label == "max zoom, high":
            # inflated: three times the true peak
            claims["claimed_cd"] = float(round(3.0 * tr.peak_intensity_cd, -3))
            claims["claimed_throw_m"] = float(round(2.0 * math.sqrt(claims["claimed_cd"])))
            claims["claimed_lm"] = float(round(2.0 * tr.total_flux_lm, -1))
        shots.append(
            DemoShot(
                label=label,
                zoom=zoom,
                mode=mode,
                scene=scene,
                exposures=tuple(exposures),
                truth=tr,
                seed=100 + k,
                source_cct_k=6500.0,
                electrical=el,
                **claims,
            )
        )

    lamp = ReferenceLamp(axial_intensity_cd=120.0)
    lamp_scene = Scene(
        beam=lamp,
        distance_m=2.0,
        axis_mm=(0.0, 0.0),
        camera=camera,
        sensor=sensor,
        reflectance=0.8,
        colour_rgb=TUNGSTEN_RGB,
        ambient_lx=ambient_lx,
    )
    reference = DemoReference(
        label="reference lamp",
        scene=lamp_scene,
        exposures=(_demo_exposure(lamp_scene, f_number=f_number, iso=iso),),
        intensity_cd=120.0,
        intensity_sigma_cd=2.4,
        distance_m=2.0,
        distance_sigma_m=0.005,
        axis_mm=(0.0, 0.0),
        cct_k=2856.0,
        seed=99,
    )
    points_mm = np.array(
        [[-1000.0, 600.0], [1000.0, 600.0], [1000.0, -600.0], [-1000.0, -600.0], [0.0, 600.0]]
    )
    points_px = wall_to_pixel(camera, points_mm)
    points_mm.flags.writeable = False
    points_px.flags.writeable = False
    return DemoScenario(
        title="Hallway test of a fictional zoom torch",
        torch_name="Model Z-1 test torch",
        distance_m=distance_m,
        camera=camera,
        sensor=sensor,
        encoding="srgb",
        wall_points_mm=points_mm,
        wall_points_px=points_px,
        shots=tuple(shots),
        reference=reference,
        electrical=high_el,
    )
