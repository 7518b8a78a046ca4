r"""Spectral mismatch between the camera's luminance signal and the CIE V(lambda) response.

A camera's luminance signal is Y_cam = sum_c w_c * rgb_c, so its spectral sensitivity is
s(lambda) = sum_c w_c * rgb_c(lambda), never exactly the photopic luminous efficiency
V(lambda). A calibration with one source (the reference lamp, spectrum S_ref) then reads a
source of another spectrum S_t wrong by the spectral mismatch correction factor [ILV]_::

    F* = [int S_t V / int S_t s] * [int S_ref s / int S_ref V]

Illuminance, intensity and flux measured on the test source are multiplied by F*. Equal
spectra give exactly 1, and so does s proportional to V, for any spectra. The general
quality index of s is f1' [CIE19476]_: with s normalised on CIE illuminant A,
s* = s int S_A V / int S_A s, f1' = int |s* - V| / int V.

Every spectrum lives on one grid, ``WAVELENGTHS_NM`` (380 nm to 780 nm in 1 nm steps);
integrals are trapezoid sums on it. Tabulated CIE data (illuminants at 5 nm, camera
sensitivities at 5 nm) are interpolated to 1 nm by colour-science's
``SpectralDistribution.interpolate`` (Sprague interpolation for uniform data, as CIE 167
recommends [C167]_); a user's table by linear interpolation inside its own range and **zero
outside it** (no extrapolation). V(lambda) outside 380-780 nm is below 4e-5 of its peak, and
its integral there is about 1e-5 of the whole: the grid's truncation is negligible.

Spectra (:class:`Spectrum`)
    Planckian radiator at a CCT (:func:`planckian_spectrum`, Planck's law via colour's
    ``sd_blackbody``); CIE illuminants by name, "A" the default reference and the CIE LED
    illuminants "LED-B1" ... "LED-V2" [C15]_ (:func:`cie_illuminant_spectrum`); a phosphor-white
    LED model at a CCT (:func:`led_white_spectrum`, see its Notes); a user table
    (:func:`spectrum_from_table`).

Camera sensitivity (:class:`CameraSensitivity`)
    A user table of wavelength_nm, r, g, b (:func:`camera_sensitivity_from_table`) or the
    default (:func:`default_camera_sensitivity`): the Nikon D5100 raw sensitivities measured
    at NPL [DARRODI]_ as shipped by colour-science (``MSDS_CAMERA_SENSITIVITIES["Nikon 5100
    (NPL)"]``), either as measured (``processing="raw"``) or taken through the 3 x 3 matrix that
    best maps them, by least squares, onto the CIE 1931 colour-matching functions in the sRGB
    primaries (``processing="srgb"``, the default: the colorimetric ideal a camera's colour
    matrix aims at when it writes an sRGB file; a real camera's matrix differs, common
    practice, no source).

References
----------
.. [ILV] CIE S 017:2020, *ILV: International Lighting Vocabulary*, term 17-25-115 "spectral
   mismatch correction factor" (F* as above, with S_A or another calibration source).
.. [CIE19476] ISO/CIE 19476:2014, *Characterization of the performance of illuminance meters
   and luminance meters*: the general V(lambda) mismatch index f1', normalised on CIE
   illuminant A.
.. [C15] CIE 015:2018, *Colorimetry*, 4th ed.: illuminant A, the LED illuminants (table 11),
   the CIE 1931 observer; CIE 1924 photopic V(lambda) (data as in colour-science).
.. [C167] CIE 167:2005, *Recommended practice for tabulating spectral data for use in
   colour computations*: Sprague interpolation of 5 nm data to 1 nm.
.. [OHNO2005] Y. Ohno, "Spectral design considerations for white LED color rendering",
   *Optical Engineering* 44(11), 111302 (2005): the single-LED spectral shape
   (g + 2 g^5) / 3, g a Gaussian (colour-science's ``sd_single_led``).
.. [OHNO2013] Y. Ohno, "Practical use and calculation of CCT and Duv", *LEUKOS* 10(1),
   47-55 (2014): CCT and Duv from CIE 1960 (u, v) (colour-science's ``uv_to_CCT``).
.. [DARRODI] M. M. Darrodi, G. Finlayson, T. Goodman, M. Mackiewicz, "Reference data set for
   camera spectral sensitivity estimation", *J. Opt. Soc. Am. A* 32(3), 381-391 (2015).
.. [BT709] ITU-R Recommendation BT.709-6 (2015), item 1.3 (primaries and white) and 3.2
   (luminance weights 0.2126, 0.7152, 0.0722).
"""

from __future__ import annotations

import functools
import math
import warnings as _warnings
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from beamwall.constants import REC709_LUMINANCE_WEIGHTS
from beamwall.errors import InputError

__all__ = [
    "WAVELENGTHS_NM",
    "MIN_TABLE_RANGE_NM",
    "LED_MODEL_CCT_RANGE_K",
    "DEFAULT_CAMERA",
    "UNCORRECTED_SIGMA_FRACTION",
    "TABLE_SIGMA_FRACTION",
    "Spectrum",
    "CameraSensitivity",
    "WeightFit",
    "SpectralCorrection",
    "photopic_efficiency",
    "planckian_spectrum",
    "cie_illuminant_names",
    "cie_illuminant_spectrum",
    "led_white_spectrum",
    "spectrum_from_table",
    "reference_spectrum",
    "source_spectrum",
    "camera_sensitivity_from_table",
    "default_camera_sensitivity",
    "luminance_sensitivity",
    "spectral_mismatch_factor",
    "f1_prime",
    "optimal_weights",
    "shot_spectral_correction",
    "spectrum_to_dict",
    "spectrum_from_dict",
]

#: The common wavelength grid, nm: 380 to 780 in 1 nm steps (401 samples).
WAVELENGTHS_NM: np.ndarray = np.arange(380.0, 781.0, 1.0)
WAVELENGTHS_NM.setflags(write=False)

#: A user's table must cover at least this range, nm: V(lambda) outside it holds about 0.2 %
#: of its integral (CIE 1924 data), so a narrower table would drop visible light (common
#: practice, no source).
MIN_TABLE_RANGE_NM: tuple[float, float] = (400.0, 700.0)

#: Colour temperatures the phosphor-white LED model reaches on the Planckian locus, K
#: (the range of white LEDs on sale; common practice, no source).
LED_MODEL_CCT_RANGE_K: tuple[float, float] = (2200.0, 12000.0)

#: The camera of :func:`default_camera_sensitivity`, as named in colour-science [DARRODI]_.
DEFAULT_CAMERA: str = "Nikon 5100 (NPL)"

#: Relative standard uncertainty of an uncorrected shot (no source colour given): a
#: rectangular distribution of half-width 5 %, the size of the A-to-LED factor of an sRGB
#: camera (see docs/spectral.md; common practice, no source).
UNCORRECTED_SIGMA_FRACTION: float = 0.05 / math.sqrt(3.0)

#: With the user's own sensitivity table, the factor's standard uncertainty as a fraction of
#: |F* - 1| (the table's and the source spectrum's own errors; common practice, no source).
#: With the generic camera it is |F* - 1| / sqrt(3): the truth anywhere between no correction
#: and twice the correction.
TABLE_SIGMA_FRACTION: float = 0.2

# Phosphor-white LED model (see led_white_spectrum): blue pump and phosphor band.
_LED_PUMP_PEAK_NM = 450.0
_LED_PUMP_HALF_WIDTH_NM = 20.0     # Ohno's half spectral width: FWHM about 25 nm
_LED_PHOSPHOR_FWHM_NM = 120.0

# Linear sRGB from CIE XYZ (IEC 61966-2-1 / [BT709] primaries, D65 white), 4 decimals as
# printed in the sRGB standard.
_XYZ_TO_SRGB = np.array([
    [3.2406, -1.5372, -0.4986],
    [-0.9689, 1.8758, 0.0415],
    [0.0557, -0.2040, 1.0570],
])


# --------------------------------------------------------------------------------------------
# Data classes
# --------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class Spectrum:
    """A relative spectral distribution on ``WAVELENGTHS_NM``.

    Attributes
    ----------
    values : ndarray, shape (401,)
        Relative spectral power (any unit; the mismatch factor is scale-free), >= 0.
    description : str
        What it is, for results and reports, e.g. ``"CIE illuminant A"``.
    """

    values: np.ndarray
    description: str


@dataclass(frozen=True, eq=False)
class CameraSensitivity:
    """A camera's relative spectral sensitivities of its linear r, g, b on ``WAVELENGTHS_NM``.

    Attributes
    ----------
    rgb : ndarray, shape (401, 3)
        Columns r, g, b, in the relative units of the linear pixel values the luminance
        weights are applied to (so after any white balance the camera applies).
    description : str
        Its origin.
    """

    rgb: np.ndarray
    description: str


@dataclass(frozen=True)
class WeightFit:
    """Luminance weights fitted to V(lambda) (:func:`optimal_weights`).

    Attributes
    ----------
    weights : (float, float, float)
        Weights of linear r, g, b, summing to 1.
    f1_prime : float
        f1' of the camera with these weights (fraction, not %).
    rec709_f1_prime : float
        f1' with the Rec. 709 weights, for comparison.
    """

    weights: tuple[float, float, float]
    f1_prime: float
    rec709_f1_prime: float


@dataclass(frozen=True)
class SpectralCorrection:
    """A shot's spectral mismatch correction (:func:`shot_spectral_correction`).

    Attributes
    ----------
    spectral_correction_factor : float
        F*: multiply the shot's illuminance, intensity and flux by it; 1.0 when not computed.
    spectral_correction_sigma : float
        Its standard uncertainty (k=1, dimensionless), by the rules of
        ``UNCORRECTED_SIGMA_FRACTION`` and ``TABLE_SIGMA_FRACTION``.
    spectral_mismatch_f1_prime : float or None
        f1' of the camera's luminance sensitivity with the weights used (fraction); None when
        not computed.
    luminance_weights : (float, float, float)
        The weights of linear r, g, b the factor holds for.
    reference_description, source_description, camera_description : str or None
        The spectra used.
    warnings : tuple of str
        Soft problems (default sensitivity used, no source colour given).
    """

    spectral_correction_factor: float
    spectral_correction_sigma: float
    spectral_mismatch_f1_prime: float | None
    luminance_weights: tuple[float, float, float]
    reference_description: str | None = None
    source_description: str | None = None
    camera_description: str | None = None
    warnings: tuple[str, ...] = ()


# --------------------------------------------------------------------------------------------
# colour-science access (imported lazily: it takes about a second to import)
# --------------------------------------------------------------------------------------------


def _colour() -> Any:
    import colour  # noqa: PLC0415

    return colour


def _shape() -> Any:
    return _colour().SpectralShape(WAVELENGTHS_NM[0], WAVELENGTHS_NM[-1], 1.0)


def _on_grid(sd: Any) -> np.ndarray:
    """Put a colour SpectralDistribution (or multi) on the grid.

    Interpolated to 1 nm inside its range (colour's default, Sprague for uniform data),
    zero outside.
    """
    colour = _colour()
    lo, hi = float(sd.shape.start), float(sd.shape.end)
    start = max(lo, WAVELENGTHS_NM[0])
    end = min(hi, WAVELENGTHS_NM[-1])
    inner = sd.copy()
    if float(inner.shape.interval) != 1.0:
        inner.interpolate(colour.SpectralShape(lo, hi, 1.0))
    inner.trim(colour.SpectralShape(start, end, 1.0))
    out_shape = (WAVELENGTHS_NM.size,) + tuple(np.shape(inner.values)[1:])
    out = np.zeros(out_shape)
    first = int(round(start - WAVELENGTHS_NM[0]))
    out[first:first + len(inner.wavelengths)] = inner.values
    return out


def _frozen(a: np.ndarray) -> np.ndarray:
    a = np.array(a, dtype=np.float64)
    a.setflags(write=False)
    return a


@functools.cache
def photopic_efficiency() -> np.ndarray:
    """Return the CIE 1924 photopic luminous efficiency V(lambda) on ``WAVELENGTHS_NM``.

    Returns
    -------
    ndarray, shape (401,)
        Dimensionless, peak 1 at 555 nm; read-only.

    References
    ----------
    [C15]_ (colour-science's ``SDS_LEFS_PHOTOPIC["CIE 1924 Photopic Standard Observer"]``,
    tabulated at 1 nm).

    Examples
    --------
    >>> v = photopic_efficiency()
    >>> float(v[555 - 380])
    1.0
    """
    from colour.colorimetry import SDS_LEFS_PHOTOPIC  # noqa: PLC0415

    return _frozen(_on_grid(SDS_LEFS_PHOTOPIC["CIE 1924 Photopic Standard Observer"]))


@functools.cache
def _cmfs_1931() -> np.ndarray:
    return _frozen(_on_grid(_colour().MSDS_CMFS["CIE 1931 2 Degree Standard Observer"]))


def _integral(values: np.ndarray) -> Any:
    return np.trapezoid(values, WAVELENGTHS_NM, axis=0)


# --------------------------------------------------------------------------------------------
# Spectra
# --------------------------------------------------------------------------------------------


def _check_cct(cct_k: float, field: str) -> float:
    if isinstance(cct_k, bool) or not isinstance(cct_k, (int, float)) or not math.isfinite(
            cct_k) or cct_k <= 0:
        raise InputError(f"must be a positive colour temperature in K, got {cct_k!r}",
                         field=field)
    return float(cct_k)


def planckian_spectrum(cct_k: float) -> Spectrum:
    """Return a Planckian radiator's relative spectrum at a colour temperature.

    Parameters
    ----------
    cct_k : float
        Temperature, K, > 0.

    Returns
    -------
    Spectrum
        Planck's law (c2 = 1.4388e-2 m K, colour's ``sd_blackbody``), scaled to 1 at 560 nm.

    Raises
    ------
    InputError
        A temperature that is not a positive finite number (field ``cct_k``).

    References
    ----------
    [C15]_ (Planck's law; illuminant A is a Planckian radiator at about 2856 K).

    Examples
    --------
    >>> sd = planckian_spectrum(2856)
    >>> # CIE A at 380 nm: 9.795 against 100 at 560 nm [C15]_
    >>> round(float(sd.values[0]), 3), sd.description
    (0.098, 'Planckian radiator at 2856 K')
    """
    t = _check_cct(cct_k, "cct_k")
    values = _colour().sd_blackbody(t, _shape()).values
    values = values / values[560 - 380]
    return Spectrum(_frozen(values), f"Planckian radiator at {t:g} K")


def cie_illuminant_names() -> tuple[str, ...]:
    """Return the names of the CIE illuminants colour-science tabulates, sorted.

    Examples
    --------
    >>> names = cie_illuminant_names()
    >>> "A" in names and "LED-B3" in names
    True
    """
    return tuple(sorted(_colour().SDS_ILLUMINANTS.keys()))


def cie_illuminant_spectrum(name: str) -> Spectrum:
    """Return a CIE illuminant by name: "A", "D65", the LED illuminants "LED-B1" ... "LED-V2" ...

    Parameters
    ----------
    name : str
        As colour-science spells it (case-sensitive first, then ignoring case).

    Returns
    -------
    Spectrum
        The tabulated spectrum [C15]_ on the grid (Sprague to 1 nm), zero where the table
        does not reach.

    Raises
    ------
    InputError
        An unknown name (field ``source_cie_illuminant``), listing the valid ones.

    Examples
    --------
    >>> cie_illuminant_spectrum("led-b3").description
    'CIE illuminant LED-B3'
    >>> try:
    ...     cie_illuminant_spectrum("LED-X")
    ... except InputError as exc:
    ...     print(exc.message[:44])
    unknown CIE illuminant 'LED-X'; valid names:
    """
    table = _colour().SDS_ILLUMINANTS
    keys = list(table.keys())
    key = name if name in keys else next(
        (k for k in keys if isinstance(name, str) and k.casefold() == name.casefold()), None)
    if key is None:
        raise InputError(
            f"unknown CIE illuminant {name!r}; valid names: {', '.join(cie_illuminant_names())}",
            field="source_cie_illuminant")
    return Spectrum(_frozen(_on_grid(table[key])), f"CIE illuminant {key}")


@functools.cache
def _illuminant_a() -> Spectrum:
    return cie_illuminant_spectrum("A")


def _uv(spd: np.ndarray) -> np.ndarray:
    """CIE 1960 (u, v) of a spectrum on the grid [C15]_."""
    xyz = _cmfs_1931().T @ spd
    x, y, z = xyz
    d = x + 15.0 * y + 3.0 * z
    return np.array([4.0 * x / d, 6.0 * y / d])


def _cct_duv(spd: np.ndarray) -> tuple[float, float]:
    with np.errstate(invalid="ignore"), _warnings.catch_warnings():
        _warnings.simplefilter("ignore")
        cct, duv = _colour().uv_to_CCT(_uv(spd), method="Ohno 2013")
    return float(cct), float(duv)


@functools.cache
def _led_parts() -> tuple[np.ndarray, np.ndarray]:
    pump = _colour().sd_single_led(_LED_PUMP_PEAK_NM, _shape(),
                                   half_spectral_width=_LED_PUMP_HALF_WIDTH_NM).values
    return _frozen(pump), _frozen(WAVELENGTHS_NM)


def _phosphor(centre_nm: float) -> np.ndarray:
    sigma = _LED_PHOSPHOR_FWHM_NM / (2.0 * math.sqrt(2.0 * math.log(2.0)))
    return np.exp(-0.5 * ((WAVELENGTHS_NM - centre_nm) / sigma) ** 2)


@functools.cache
def _led_solution(cct_k: float) -> tuple[float, float, float, float]:
    from scipy.optimize import least_squares  # noqa: PLC0415

    pump, _ = _led_parts()

    def residual(p: np.ndarray) -> list[float]:
        cct, duv = _cct_duv(p[0] * pump + _phosphor(p[1]))
        return [100.0 * (cct - cct_k) / cct_k, 1000.0 * duv]

    fit = least_squares(residual, [1.0, 575.0], bounds=([0.0, 520.0], [50.0, 650.0]),
                        x_scale=[0.5, 10.0])
    cct, duv = _cct_duv(fit.x[0] * pump + _phosphor(fit.x[1]))
    return float(fit.x[0]), float(fit.x[1]), cct, duv


def led_white_spectrum(cct_k: float) -> Spectrum:
    """Model a phosphor-converted white LED's relative spectrum at a colour temperature.

    Parameters
    ----------
    cct_k : float
        Correlated colour temperature, K, within ``LED_MODEL_CCT_RANGE_K``.

    Returns
    -------
    Spectrum
        Pump plus phosphor, on the Planckian locus (Duv = 0) at ``cct_k``.

    Raises
    ------
    InputError
        A temperature outside the model's range (field ``source_cct_k``).

    Notes
    -----
    Our own model (common practice, no source for its parameters): a blue pump with Ohno's
    single-LED shape [OHNO2005]_ at 450 nm (half spectral width 20 nm, FWHM about 25 nm) plus
    a Gaussian phosphor band of 120 nm FWHM. The pump's weight and the band's centre are
    solved (least squares) so that the CCT is ``cct_k`` and Duv is 0, by Ohno's method
    [OHNO2013]_ on the CIE 1931 observer. At 6500 K the band sits near 565 nm, at 3000 K near
    593 nm. Real LEDs differ (a red phosphor, Duv off zero): give a measured spectrum when
    you have one.

    Examples
    --------
    >>> sd = led_white_spectrum(6500)
    >>> sd.description
    'phosphor-white LED model at 6500 K'
    >>> int(np.argmax(sd.values)) + 380
    450
    """
    t = _check_cct(cct_k, "source_cct_k")
    lo, hi = LED_MODEL_CCT_RANGE_K
    if not lo <= t <= hi:
        raise InputError(
            f"the phosphor-white LED model covers {lo:g} K to {hi:g} K, got {t:g} K; give "
            "source_spectrum_csv or source_cie_illuminant instead", field="source_cct_k")
    weight, centre, cct, duv = _led_solution(t)
    if abs(cct - t) > 1e-3 * t or abs(duv) > 1e-4:
        raise InputError(f"the phosphor-white LED model does not reach {t:g} K (got "
                         f"{cct:.0f} K, Duv {duv:.4f})", field="source_cct_k")
    pump, _ = _led_parts()
    values = weight * pump + _phosphor(centre)
    return Spectrum(_frozen(values / values.max()), f"phosphor-white LED model at {t:g} K")


def _check_table(wavelength_nm: Any, values: Any, columns: int, what: str
                 ) -> tuple[np.ndarray, np.ndarray]:
    wl = np.asarray(wavelength_nm, dtype=np.float64)
    v = np.asarray(values, dtype=np.float64)
    if columns == 1 and v.ndim == 1:
        v = v[:, None]
    if wl.ndim != 1 or v.ndim != 2 or v.shape != (wl.size, columns) or wl.size < 2:
        raise InputError(f"{what}: need matching wavelength and value columns "
                         f"({columns} value column(s)), at least 2 rows", field=what)
    if not (np.isfinite(wl).all() and np.isfinite(v).all()):
        raise InputError(f"{what}: values must be finite", field=what)
    if np.any(np.diff(wl) <= 0):
        raise InputError(f"{what}: wavelengths must be strictly ascending", field=what)
    if np.any(v < 0):
        raise InputError(f"{what}: values must not be negative", field=what)
    lo, hi = MIN_TABLE_RANGE_NM
    if wl[0] > lo or wl[-1] < hi:
        raise InputError(f"{what}: must cover at least {lo:g} nm to {hi:g} nm, covers "
                         f"{wl[0]:g} nm to {wl[-1]:g} nm", field=what)
    return wl, v


def _resample(wl: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Linear interpolation inside the table's range, zero outside (no extrapolation)."""
    colour = _colour()
    out = np.zeros((WAVELENGTHS_NM.size, v.shape[1]))
    inside = (WAVELENGTHS_NM >= wl[0]) & (WAVELENGTHS_NM <= wl[-1])
    for c in range(v.shape[1]):
        sd = colour.SpectralDistribution(v[:, c], wl, interpolator=colour.LinearInterpolator)
        out[inside, c] = sd[WAVELENGTHS_NM[inside]]
    return out


def spectrum_from_table(wavelength_nm: Sequence[float] | np.ndarray,
                        values: Sequence[float] | np.ndarray, *,
                        description: str = "tabulated spectrum") -> Spectrum:
    """Build a spectrum from a table, resampled onto the grid.

    Parameters
    ----------
    wavelength_nm : array_like, shape (n,)
        Strictly ascending, nm, covering at least ``MIN_TABLE_RANGE_NM``.
    values : array_like, shape (n,)
        Relative spectral power, >= 0.
    description : str, keyword-only

    Returns
    -------
    Spectrum
        Linearly interpolated (colour's ``SpectralDistribution`` with ``LinearInterpolator``)
        inside the table's range, **zero outside it**.

    Raises
    ------
    InputError
        Mismatched lengths, non-finite or negative values, wavelengths not ascending, too
        narrow a range.

    Examples
    --------
    >>> sd = spectrum_from_table([400, 700], [1.0, 3.0])
    >>> float(sd.values[550 - 380]), float(sd.values[0]), float(sd.values[-1])
    (2.0, 0.0, 0.0)
    """
    wl, v = _check_table(wavelength_nm, values, 1, "spectrum")
    return Spectrum(_frozen(_resample(wl, v)[:, 0]), description)


def reference_spectrum(*, cct_k: float | None = None,
                       spectrum: Spectrum | None = None) -> Spectrum:
    """Return the calibration reference's spectrum: a given one, a Planckian at ``cct_k``, or CIE A.

    Parameters
    ----------
    cct_k : float, optional, keyword-only
        ``[reference] cct_k``, K: a tungsten lamp is near a Planckian radiator [C15]_.
    spectrum : Spectrum, optional, keyword-only
        ``[reference] spectrum_csv``, read.

    Returns
    -------
    Spectrum
        CIE illuminant A when neither is given (the photometric calibration standard
        [CIE19476]_).

    Examples
    --------
    >>> reference_spectrum().description
    'CIE illuminant A'
    >>> reference_spectrum(cct_k=3000).description
    'Planckian radiator at 3000 K'
    """
    if spectrum is not None and cct_k is not None:
        raise InputError("give cct_k or spectrum_csv, not both", field="[reference]")
    if spectrum is not None:
        return spectrum
    if cct_k is not None:
        return planckian_spectrum(cct_k)
    return cie_illuminant_spectrum("A")


def source_spectrum(*, cct_k: float | None = None, spectrum: Spectrum | None = None,
                    cie_illuminant: str | None = None) -> Spectrum | None:
    """Return a shot's source spectrum from the session's keys, or None when none is given.

    Parameters
    ----------
    cct_k : float, optional, keyword-only
        ``source_cct_k``: the phosphor-white LED model (:func:`led_white_spectrum`).
    spectrum : Spectrum, optional, keyword-only
        ``source_spectrum_csv``, read.
    cie_illuminant : str, optional, keyword-only
        ``source_cie_illuminant`` (:func:`cie_illuminant_spectrum`).

    Raises
    ------
    InputError
        More than one given; invalid values.

    Examples
    --------
    >>> source_spectrum() is None
    True
    >>> source_spectrum(cie_illuminant="LED-B3").description
    'CIE illuminant LED-B3'
    """
    given = [x is not None for x in (cct_k, spectrum, cie_illuminant)]
    if sum(given) > 1:
        raise InputError("give at most one of source_cct_k, source_spectrum_csv, "
                         "source_cie_illuminant", field="source_cct_k")
    if spectrum is not None:
        return spectrum
    if cct_k is not None:
        return led_white_spectrum(cct_k)
    if cie_illuminant is not None:
        return cie_illuminant_spectrum(cie_illuminant)
    return None


# --------------------------------------------------------------------------------------------
# Camera
# --------------------------------------------------------------------------------------------


def camera_sensitivity_from_table(wavelength_nm: Sequence[float] | np.ndarray,
                                  rgb: Sequence[Sequence[float]] | np.ndarray, *,
                                  description: str = "tabulated camera sensitivity",
                                  ) -> CameraSensitivity:
    """Build a camera's r, g, b sensitivities from a table, resampled onto the grid.

    Parameters
    ----------
    wavelength_nm : array_like, shape (n,)
        Strictly ascending, nm, covering at least ``MIN_TABLE_RANGE_NM``.
    rgb : array_like, shape (n, 3)
        Relative sensitivities, >= 0, in the units of the linear pixel values.
    description : str, keyword-only

    Returns
    -------
    CameraSensitivity
        Linear interpolation inside the table's range, zero outside.

    Raises
    ------
    InputError
        As :func:`spectrum_from_table`, or not three columns.

    Examples
    --------
    >>> cam = camera_sensitivity_from_table([380, 780], [[1, 2, 3], [1, 2, 3]])
    >>> cam.rgb.shape, cam.rgb[100].tolist()
    ((401, 3), [1.0, 2.0, 3.0])
    """
    wl, v = _check_table(wavelength_nm, rgb, 3, "camera sensitivity")
    return CameraSensitivity(_frozen(_resample(wl, v)), description)


@functools.cache
def default_camera_sensitivity(*, processing: str = "srgb") -> CameraSensitivity:
    """Return the generic camera: Nikon D5100 sensitivities measured at NPL [DARRODI]_.

    Parameters
    ----------
    processing : {"srgb", "raw"}, keyword-only
        ``"raw"``: the published sensor sensitivities (each channel peak 1), for linear files
        converted from raw without a colour matrix. ``"srgb"`` (default): the same through the
        3 x 3 matrix M minimising sum over lambda of |M rgb(lambda) - T xyz(lambda)|^2, with
        xyz the CIE 1931 colour-matching functions and T the XYZ-to-linear-sRGB matrix
        [BT709]_: what a camera writing sRGB files aims at (a real camera's matrix and white
        balance differ; common practice, no source). Scaled so g peaks at 1.

    Returns
    -------
    CameraSensitivity

    Raises
    ------
    InputError
        An unknown ``processing``.

    Examples
    --------
    >>> cam = default_camera_sensitivity()
    >>> cam.rgb.shape, cam.description[:21]
    ((401, 3), 'Nikon D5100 (NPL 2015')
    """
    if processing not in ("srgb", "raw"):
        raise InputError(f"unknown processing {processing!r}; valid: 'srgb', 'raw'",
                         field="processing")
    raw = _on_grid(_colour().MSDS_CAMERA_SENSITIVITIES[DEFAULT_CAMERA])
    raw = np.clip(raw, 0.0, None)
    origin = ("Nikon D5100 (NPL 2015 measurement, Darrodi et al., JOSA A 32(3) 381, as in "
              "colour-science)")
    if processing == "raw":
        return CameraSensitivity(_frozen(raw), origin + ", raw sensor channels")
    target = _cmfs_1931() @ _XYZ_TO_SRGB.T
    m, *_ = np.linalg.lstsq(raw, target, rcond=None)     # target ~ raw @ m
    rgb = raw @ m
    rgb = rgb / rgb[:, 1].max()
    return CameraSensitivity(_frozen(rgb), origin + ", through a least-squares sRGB matrix")


def _check_weights(weights: Sequence[float]) -> np.ndarray:
    w = np.asarray(weights, dtype=np.float64)
    if w.shape != (3,) or not np.isfinite(w).all():
        raise InputError(f"must be three finite numbers (r, g, b), got {weights!r}",
                         field="luminance_weights")
    return w


def _rgb(camera: CameraSensitivity | np.ndarray) -> np.ndarray:
    rgb = camera.rgb if isinstance(camera, CameraSensitivity) else np.asarray(camera, float)
    if rgb.shape != (WAVELENGTHS_NM.size, 3):
        raise InputError(f"camera sensitivity must have shape ({WAVELENGTHS_NM.size}, 3) "
                         f"on WAVELENGTHS_NM, got {rgb.shape}", field="camera sensitivity")
    return rgb


def _spd(sd: Spectrum | np.ndarray, what: str) -> np.ndarray:
    v = sd.values if isinstance(sd, Spectrum) else np.asarray(sd, float)
    if v.shape != WAVELENGTHS_NM.shape:
        raise InputError(f"must have shape ({WAVELENGTHS_NM.size},) on WAVELENGTHS_NM, got "
                         f"{v.shape}", field=what)
    if not np.isfinite(v).all() or _integral(v) <= 0:
        raise InputError("must be finite with a positive integral", field=what)
    return v


def luminance_sensitivity(camera: CameraSensitivity | np.ndarray,
                          weights: Sequence[float] = REC709_LUMINANCE_WEIGHTS) -> np.ndarray:
    """Return the spectral sensitivity of the luminance signal, s = sum_c w_c rgb_c.

    Parameters
    ----------
    camera : CameraSensitivity or ndarray, shape (401, 3)
    weights : sequence of 3 float, optional
        Luminance weights of linear r, g, b (Rec. 709's by default [BT709]_).

    Returns
    -------
    ndarray, shape (401,)

    Examples
    --------
    >>> s = luminance_sensitivity(np.ones((401, 3)), (0.25, 0.5, 0.25))
    >>> float(s[0])
    1.0
    """
    return _rgb(camera) @ _check_weights(weights)


# --------------------------------------------------------------------------------------------
# Mismatch
# --------------------------------------------------------------------------------------------


def _factor(s: np.ndarray, ref: np.ndarray, src: np.ndarray) -> float:
    v = photopic_efficiency()
    t_v, t_s = _integral(src * v), _integral(src * s)
    r_v, r_s = _integral(ref * v), _integral(ref * s)
    if t_s <= 0 or r_s <= 0:
        raise InputError("the camera's luminance signal is not positive for this spectrum",
                         field="luminance_weights")
    if np.array_equal(ref, src):
        return 1.0      # the same integrals, exactly
    return float((t_v / t_s) * (r_s / r_v))


def spectral_mismatch_factor(camera_rgb: CameraSensitivity | np.ndarray,
                             weights: Sequence[float],
                             reference_sd: Spectrum | np.ndarray,
                             source_sd: Spectrum | np.ndarray) -> float:
    """Compute the spectral mismatch correction factor F* of a camera calibrated on a source.

    Parameters
    ----------
    camera_rgb : CameraSensitivity or ndarray, shape (401, 3)
        The camera's r, g, b sensitivities on ``WAVELENGTHS_NM``.
    weights : sequence of 3 float
        Luminance weights of linear r, g, b.
    reference_sd, source_sd : Spectrum or ndarray, shape (401,)
        The calibration source's and the measured source's relative spectra.

    Returns
    -------
    float
        F* (dimensionless); the true illuminance is F* times the camera's reading. Exactly 1
        for equal spectra.

    Raises
    ------
    InputError
        Wrong shapes; a spectrum with no power; a signal that is not positive.

    Notes
    -----
    F* = [int S_t V / int S_t s] [int S_ref s / int S_ref V], s = sum_c w_c rgb_c, trapezoid
    sums on the 1 nm grid [ILV]_.

    Examples
    --------
    >>> a = cie_illuminant_spectrum("A")
    >>> spectral_mismatch_factor(default_camera_sensitivity(), (0.2126, 0.7152, 0.0722), a, a)
    1.0
    """
    s = luminance_sensitivity(camera_rgb, weights)
    return _factor(s, _spd(reference_sd, "reference spectrum"),
                   _spd(source_sd, "source spectrum"))


def f1_prime(s: np.ndarray, *, reference: Spectrum | np.ndarray | None = None) -> float:
    """Compute the general V(lambda) mismatch index f1' of a relative spectral sensitivity.

    Parameters
    ----------
    s : ndarray, shape (401,)
        Relative spectral sensitivity on ``WAVELENGTHS_NM``.
    reference : Spectrum or ndarray, optional, keyword-only
        The normalising source; CIE illuminant A by default [CIE19476]_.

    Returns
    -------
    float
        f1' as a fraction (0.03 is 3 %); 0 for s proportional to V.

    Notes
    -----
    s* = s int S_A V / int S_A s; f1' = int |s* - V| / int V [CIE19476]_.

    Examples
    --------
    >>> f1_prime(2.0 * photopic_efficiency())
    0.0
    """
    s = np.asarray(s, dtype=np.float64)
    if s.shape != WAVELENGTHS_NM.shape or not np.isfinite(s).all():
        raise InputError(f"must be finite with shape ({WAVELENGTHS_NM.size},)", field="s")
    ref = _spd(reference if reference is not None else _illuminant_a(), "reference spectrum")
    v = photopic_efficiency()
    ref_s = _integral(ref * s)
    if ref_s <= 0:
        raise InputError("the sensitivity gives no signal for the reference", field="s")
    s_star = s * (_integral(ref * v) / ref_s)
    return float(_integral(np.abs(s_star - v)) / _integral(v))


def optimal_weights(camera_rgb: CameraSensitivity | np.ndarray, *,
                    nonnegative: bool = True,
                    reference: Spectrum | None = None) -> WeightFit:
    """Fit luminance weights of r, g, b that bring the camera's luminance sensitivity closest to V.

    Parameters
    ----------
    camera_rgb : CameraSensitivity or ndarray, shape (401, 3)
    nonnegative : bool, keyword-only
        Keep every weight >= 0 (default): a negative weight subtracts a noisy channel and can
        make a saturated colour's luminance negative (common practice, no source).
    reference : Spectrum, optional, keyword-only
        Normalising source of f1' (CIE A by default).

    Returns
    -------
    WeightFit
        Weights summing to 1, their f1', and the Rec. 709 weights' f1'.

    Notes
    -----
    Two steps: the linear least-squares fit of V(lambda) by w . rgb (bounded at 0 when
    ``nonnegative``, scipy's ``lsq_linear``), then a Nelder-Mead search of f1' itself from
    there over the weights' two free ratios (f1' is scale-free). The result is kept only when
    it lowers f1' (common practice, no source).

    Examples
    --------
    >>> cam = np.stack([photopic_efficiency()] * 3, axis=1) * [0.5, 1.0, 0.25]
    >>> fit = optimal_weights(cam)
    >>> fit.f1_prime < 1e-9
    True
    """
    from scipy.optimize import lsq_linear, minimize  # noqa: PLC0415

    rgb = _rgb(camera_rgb)
    v = photopic_efficiency()
    bounds = (0.0, np.inf) if nonnegative else (-np.inf, np.inf)
    w0 = lsq_linear(rgb, v, bounds=bounds).x
    if w0.sum() <= 0:
        raise InputError("no positive combination of r, g, b fits V(lambda)",
                         field="camera sensitivity")

    def f1(w: np.ndarray) -> float:
        s = rgb @ w
        ref = reference if reference is not None else _illuminant_a()
        if _integral(_spd(ref, "reference spectrum") * s) <= 0:
            return 10.0
        return f1_prime(s, reference=ref)

    # Free ratios r/g and b/g (g carries the V peak); bounded by a penalty when nonnegative.
    g = w0[1] if w0[1] > 0 else 1.0

    def objective(p: np.ndarray) -> float:
        w = np.array([p[0], 1.0, p[1]]) * g
        if nonnegative and (w < 0).any():
            return 10.0 + float(-w[w < 0].sum())
        return f1(w)

    start = np.array([w0[0] / g, w0[2] / g])
    best = minimize(objective, start, method="Nelder-Mead",
                    options={"xatol": 1e-6, "fatol": 1e-9, "maxiter": 2000})
    w = np.array([best.x[0], 1.0, best.x[1]]) * g
    if not (objective(best.x) < f1(w0)):
        w = w0
    w = w / w.sum()
    if nonnegative:
        w = np.clip(w, 0.0, None)
        w = w / w.sum()
    return WeightFit(weights=(float(w[0]), float(w[1]), float(w[2])), f1_prime=f1(w),
                     rec709_f1_prime=f1(np.array(REC709_LUMINANCE_WEIGHTS)))


def shot_spectral_correction(*, camera_sensitivity: CameraSensitivity | None,
                             weights: Sequence[float],
                             reference: Spectrum,
                             source_cct_k: float | None = None,
                             source_sd: Spectrum | None = None,
                             source_cie_illuminant: str | None = None) -> SpectralCorrection:
    """Compute a shot's spectral correction factor from what the session says of its source.

    Parameters
    ----------
    camera_sensitivity : CameraSensitivity or None, keyword-only
        The camera's (``[spectral] camera_sensitivity_csv``, read); None: the default camera
        (:func:`default_camera_sensitivity`, ``processing="srgb"``), with a warning.
    weights : sequence of 3 float, keyword-only
        The luminance weights the calibration and the measurement use.
    reference : Spectrum, keyword-only
        The calibration source (:func:`reference_spectrum`).
    source_cct_k, source_sd, source_cie_illuminant : keyword-only
        At most one: the shot's source as a CCT (LED model), a read spectrum, a CIE name.

    Returns
    -------
    SpectralCorrection
        With no source information, factor 1.0, no f1', and a warning saying why.

    Raises
    ------
    InputError
        More than one source given; an unknown illuminant; a CCT outside the LED model.

    Examples
    --------
    >>> c = shot_spectral_correction(camera_sensitivity=None, weights=(0.2126, 0.7152, 0.0722),
    ...                              reference=reference_spectrum())
    >>> c.spectral_correction_factor, c.warnings[0][:27]
    (1.0, 'spectral correction not app')
    """
    w = _check_weights(weights)
    weights_t = (float(w[0]), float(w[1]), float(w[2]))
    source = source_spectrum(cct_k=source_cct_k, spectrum=source_sd,
                             cie_illuminant=source_cie_illuminant)
    if source is None:
        return SpectralCorrection(
            spectral_correction_factor=1.0, spectral_correction_sigma=UNCORRECTED_SIGMA_FRACTION,
            spectral_mismatch_f1_prime=None,
            luminance_weights=weights_t, reference_description=reference.description,
            warnings=("spectral correction not applied (factor 1.0): the shot gives no "
                      "source_cct_k, source_spectrum_csv or source_cie_illuminant",))
    notes: list[str] = []
    camera = camera_sensitivity
    if camera is None:
        camera = default_camera_sensitivity()
        notes.append("spectral correction uses a generic camera sensitivity (Nikon D5100, "
                     "sRGB processing): give [spectral] camera_sensitivity_csv for your "
                     "camera")
    s = luminance_sensitivity(camera, weights_t)
    factor = spectral_mismatch_factor(camera, weights_t, reference, source)
    spread = abs(factor - 1.0)
    sigma = spread / math.sqrt(3.0) if camera_sensitivity is None else TABLE_SIGMA_FRACTION * spread
    return SpectralCorrection(
        spectral_correction_factor=factor,
        spectral_correction_sigma=sigma,
        spectral_mismatch_f1_prime=f1_prime(s),
        luminance_weights=weights_t,
        reference_description=reference.description,
        source_description=source.description,
        camera_description=camera.description,
        warnings=tuple(notes),
    )


# --------------------------------------------------------------------------------------------
# Storage in a calibration file
# --------------------------------------------------------------------------------------------


def spectrum_to_dict(sd: Spectrum) -> dict[str, Any]:
    """Return a JSON-ready mapping of a spectrum (a calibration file's ``reference_spectrum``).

    Examples
    --------
    >>> d = spectrum_to_dict(planckian_spectrum(2856))
    >>> d["start_nm"], d["step_nm"], len(d["values"])
    (380.0, 1.0, 401)
    """
    return {"description": sd.description, "start_nm": float(WAVELENGTHS_NM[0]),
            "step_nm": 1.0, "values": [float(x) for x in sd.values]}


def spectrum_from_dict(data: dict[str, Any], *, file: str | None = None) -> Spectrum:
    """Read back :func:`spectrum_to_dict`'s mapping.

    Raises
    ------
    InputError
        Not the grid of this version, or bad values (field ``reference_spectrum``).

    Examples
    --------
    >>> sd = spectrum_from_dict(spectrum_to_dict(cie_illuminant_spectrum("A")))
    >>> sd.description
    'CIE illuminant A'
    """
    try:
        values = np.asarray(data["values"], dtype=np.float64)
        ok = (float(data["start_nm"]) == WAVELENGTHS_NM[0] and float(data["step_nm"]) == 1.0
              and values.shape == WAVELENGTHS_NM.shape and np.isfinite(values).all())
        description = str(data["description"])
    except (KeyError, TypeError, ValueError) as exc:
        raise InputError(f"malformed spectrum ({exc})", file=file,
                         field="reference_spectrum") from None
    if not ok:
        raise InputError("expected 401 finite values from 380 nm in 1 nm steps", file=file,
                         field="reference_spectrum")
    return Spectrum(_frozen(values), description)
