"""The electrical side: LED current and power, the flux they allow, and output over time.

What this room computes, from multimeter readings and a few cell and emitter facts:

* the LED current from Ohm's law across a sense or ballast resistor (or as read directly),
  the LED power P = V x I, the average power of a pulse-width-modulated mode (P x duty) and the
  flux estimate P x efficacy range (:func:`electrical_estimate`);
* the cross-check of a measured flux against that power: the efficacy the measurement
  implies, in lumens per LED watt, and a verdict with its reasons (:func:`cross_check`);
* a bound from physics alone on the flux a light can give: the power it draws (or a single
  Li-ion cell can deliver) times the best efficacy white light can reach
  (:func:`plausibility_bound`);
* for a light whose current is set by a resistor rather than a regulator, the current, power
  and output against time as the cell discharges, until the output falls to 10 % of its value
  at 30 s (:func:`predict_output_over_time`);
* the cautions a user with a multimeter and a high-drain cell should read (:data:`CAUTIONS`).

Verdict words
-------------
Cross-check (:func:`cross_check`): ``"consistent"``, ``"implausibly high"``, ``"low"``,
``"impossible"``, or ``"not checked"`` when no measured flux is available.

References
----------
.. [OHM] Ohm's law I = U / R and electrical power P = U I; any physics handbook, e.g.
   D. Halliday, R. Resnick, J. Walker, *Fundamentals of Physics*, chapter "Current and
   Resistance" (P = i V, R = V / i).
.. [SI] BIPM, *The International System of Units*, 9th edition (2019): the candela fixes the
   luminous efficacy of 540 THz radiation at 683 lm/W, the highest efficacy any radiation can
   have.
.. [WLED] Theoretical efficacy limit of white LEDs, 260-300 lm/W (a truncated 5800 K blackbody
   gives 251 lm/W), as tabulated in the luminous-efficacy table of primidi.com; about 250 lm/W
   for cool white per helecta.com. We take the upper end, 300 lm/W, as the ceiling for white
   light, so that a bound built on it is generous.
.. [CELL] Generic 18650 Li-ion data sheet (battsysbattery.com): 3.6 V nominal, charged to
   4.200 +/- 0.049 V, cut-off 2.75 V, internal resistance < 80 mOhm.
.. [FL1] ANSI/PLATO FL 1-2019, *Flashlight Basic Performance Standard*, section 1.2.3 "Run
   time" as reproduced by secondary sources: from the output at 30 s after switch-on with
   fresh batteries until the output falls to 10 % of that value.
.. [SHOCKLEY] Shockley diode equation I = I_s (exp(V / (n V_T)) - 1), with a series resistance
   added; any semiconductor textbook, e.g. S. M. Sze, K. K. Ng, *Physics of Semiconductor
   Devices*, 3rd ed., chapter 2. Above a few milliamperes, V = V_0 + n V_T ln(I / I_0) + R_s I.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from beamwall.constants import MAX_LUMINOUS_EFFICACY_LM_PER_W
from beamwall.errors import InputError
from beamwall.session import ElectricalSpec

__all__ = [
    "WHITE_LED_MAX_EFFICACY_LM_PER_W",
    "LI_ION_MAX_CHARGE_VOLTS",
    "LI_ION_TYPICAL_MAX_AMPS",
    "DEFAULT_OCV_TABLE",
    "DEFAULT_CELL_OHMS",
    "DEFAULT_LED_IDEALITY",
    "DEFAULT_LED_SERIES_OHMS",
    "THERMAL_VOLTAGE_V",
    "RUNTIME_END_FRACTION",
    "RUNTIME_REFERENCE_S",
    "CAUTIONS",
    "ElectricalEstimate",
    "ElectricalCheck",
    "PlausibilityBound",
    "RuntimePrediction",
    "ohms_law_amps",
    "electrical_estimate",
    "cross_check",
    "plausibility_bound",
    "predict_output_over_time",
]

#: Ceiling of the luminous efficacy of white light, lm/W: the upper end of the 260-300 lm/W
#: theoretical white-LED limit [WLED].
WHITE_LED_MAX_EFFICACY_LM_PER_W: float = 300.0

#: Charge voltage of a Li-ion cell, V (4.200 +/- 0.049 V) [CELL]: its highest open-circuit
#: voltage.
LI_ION_MAX_CHARGE_VOLTS: float = 4.2

#: A generous continuous-current rating of one high-drain cylindrical Li-ion cell, A. From
#: memory, to confirm: high-drain 18650 cells are rated about 20-30 A continuous; the cell
#: maker's data sheet rules.
LI_ION_TYPICAL_MAX_AMPS: float = 30.0

#: Open-circuit voltage of an NMC Li-ion cell against state of charge, as (soc_fraction, volts)
#: rows. From memory, to confirm: 100 % = 4.20 V, 80 % = 4.0 V, 50 % = 3.75 V, 20 % = 3.6 V,
#: 10 % = 3.5 V, a steep knee below 3.4 V; the 5 % and 0 % rows are guesses on that knee. The
#: curve slopes from 3.0 to 4.2 V [CELL]. Measure OCV after a long rest (hysteresis).
DEFAULT_OCV_TABLE: tuple[tuple[float, float], ...] = (
    (0.00, 3.00),
    (0.05, 3.30),
    (0.10, 3.50),
    (0.20, 3.60),
    (0.50, 3.75),
    (0.80, 4.00),
    (1.00, 4.20),
)

#: Internal (DC) resistance of a new high-drain cell, ohm. From memory, to confirm: AC
#: resistance about 12-30 mOhm, DC about 1.5-2 times that; a protection board adds 20-50 mOhm.
#: A generic data sheet gives < 80 mOhm [CELL].
DEFAULT_CELL_OHMS: float = 0.04

#: Ideality factor n of a white InGaN LED at torch currents. From memory, to confirm (values
#: of 2-4 are commonly quoted for InGaN at high injection).
DEFAULT_LED_IDEALITY: float = 3.0

#: Series resistance of a high-power LED, ohm. From memory, to confirm (0.05-0.2 ohm for a
#: 1-3 mm^2 die).
DEFAULT_LED_SERIES_OHMS: float = 0.1

#: Thermal voltage k T / q at 25 degC, V (k = 1.380649e-23 J/K, q = 1.602176634e-19 C, exact in
#: the SI [SI]; T = 298.15 K).
THERMAL_VOLTAGE_V: float = 1.380649e-23 * 298.15 / 1.602176634e-19

#: Fraction of the initial output at which the run time ends [FL1].
RUNTIME_END_FRACTION: float = 0.10

#: Time after switch-on at which the initial output is taken, s [FL1].
RUNTIME_REFERENCE_S: float = 30.0

_CONSISTENT = "consistent"
_HIGH = "implausibly high"
_LOW = "low"
_IMPOSSIBLE = "impossible"
_NOT_CHECKED = "not checked"

#: Cautions for anyone measuring a torch's current or running it on high-drain cells. General
#: notes: the cell maker's data sheet and local rules take precedence.
CAUTIONS: tuple[str, ...] = (
    "High-drain Li-ion cells: use genuine cells from a known maker, rated for the current the "
    "light draws; check the continuous-current rating in the cell maker's data sheet, not "
    "the wrap.",
    "A light whose current is set by a resistor has no low-voltage cutoff: use a protected "
    "cell, or stop when the output drops; recycle a cell that rested below 2.5 V.",
    "Never use a cell with a torn or damaged wrap, a dent or swelling: it can short against "
    "the tube. Do not carry loose cells with keys or coins.",
    "Measuring current with a meter in series: use the meter's high-current input and fused "
    "leads, keep the reading short, and never set the meter to a current range across a "
    "cell (a dead short). The meter and its leads add resistance, so a resistor-limited light "
    "reads low; the voltage across a known resistor disturbs the circuit less.",
    "Charge Li-ion cells with a CC/CV charger to 4.20 V +/- 0.05 V, at 0-45 degC, never "
    "unattended.",
    "Eye safety: do not look into the beam and never aim it at eyes, drivers or aircraft; a "
    "focused (narrow-zoom) beam concentrates the light. Photos of a wall cannot give a "
    "photobiological risk group (IEC 62471).",
    "Heads get hot in high modes (above 60 degC is possible) and a lens lying face-down on "
    "fabric can scorch it; lock the light out when it is carried.",
    "These notes are general: the cell maker's data and local rules (transport, disposal) "
    "take precedence.",
)


# ----------------------------------------------------------------------------------------
# Electrical estimate
# ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ElectricalEstimate:
    """LED current, power and the flux they allow.

    Attributes
    ----------
    led_volts : float
        Forward voltage across the LED, V.
    led_amps : float
        LED current while on, A.
    led_watts : float
        LED power while on, W (led_volts x led_amps).
    pwm_duty : float
        Fraction of time the LED is on, in (0, 1].
    average_watts : float
        Average LED power, W (led_watts x pwm_duty).
    efficacy_lm_per_w : tuple of float or None
        The plausible efficacy range (low, high) of the emitter at this drive, lm/W.
    flux_estimate_lm : tuple of float or None
        average_watts x efficacy range, lm.
    current_source : str
        ``"sense resistor"`` (I = U / R) or ``"direct"`` (read with a meter).
    sense_ohms : float or None
        The sense or ballast resistance, ohm, when the current came from it.
    warnings : tuple of str
        Soft problems with the readings.
    """

    led_volts: float
    led_amps: float
    led_watts: float
    pwm_duty: float
    average_watts: float
    efficacy_lm_per_w: tuple[float, float] | None
    flux_estimate_lm: tuple[float, float] | None
    current_source: str
    sense_ohms: float | None = None
    warnings: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Return the estimate under the results.json ``electrical`` key names."""
        return {
            "led_volts": self.led_volts,
            "led_amps": self.led_amps,
            "led_watts": self.led_watts,
            "pwm_duty": self.pwm_duty,
            "average_watts": self.average_watts,
            "efficacy_lm_per_w": _list_or_none(self.efficacy_lm_per_w),
            "flux_estimate_lm": _list_or_none(self.flux_estimate_lm),
            "current_source": self.current_source,
            "warnings": list(self.warnings),
        }


def _list_or_none(pair: tuple[float, float] | None) -> list[float] | None:
    return None if pair is None else [float(pair[0]), float(pair[1])]


def _positive(value: float | None, field_name: str, source: str | None) -> float:
    if value is None:
        raise InputError("missing", file=source, field=field_name)
    value = float(value)
    if not math.isfinite(value) or value <= 0.0:
        raise InputError(f"must be a positive number, got {value!r}", file=source,
                         field=field_name)
    return value


def ohms_law_amps(volts: float, ohms: float) -> float:
    """Return the current through a resistor from the voltage across it, I = U / R.

    Parameters
    ----------
    volts : float
        Voltage across the resistor, V, >= 0.
    ohms : float
        Its resistance, ohm, > 0.

    Returns
    -------
    float
        Current, A.

    Raises
    ------
    InputError
        If ``ohms`` is not positive or ``volts`` is negative or not finite.

    Notes
    -----
    Ohm's law [OHM].

    Examples
    --------
    >>> ohms_law_amps(0.40, 0.50)
    0.8
    """
    volts = float(volts)
    ohms = float(ohms)
    if not math.isfinite(ohms) or ohms <= 0.0:
        raise InputError(f"must be positive, got {ohms!r}", field="sense_ohms")
    if not math.isfinite(volts) or volts < 0.0:
        raise InputError(f"must be zero or positive, got {volts!r}", field="sense_volts")
    return volts / ohms


def electrical_estimate(
    spec: ElectricalSpec,
    *,
    source: str | None = None,
    table: str = "[electrical]",
) -> ElectricalEstimate:
    """LED current, power and flux estimate from an ``[electrical]`` table.

    Parameters
    ----------
    spec : ElectricalSpec
        ``led_volts`` (V, > 0); the current as ``sense_volts`` (V) over ``sense_ohms`` (ohm) or
        as ``led_amps`` (A); optional ``efficacy_lm_per_w`` (low, high) in (0, 683] lm/W and
        ``pwm_duty`` in (0, 1] (default 1).
    source : str, optional
        The file the table came from, for error messages.
    table : str, optional
        The table's name as written in the file, for error messages.

    Returns
    -------
    ElectricalEstimate

    Raises
    ------
    InputError
        If the voltage or the current is missing or not positive, the duty cycle is outside
        (0, 1], or the efficacy range is not 0 < low <= high.

    Notes
    -----
    I = U_sense / R_sense [OHM]; P = V_LED I [OHM]; P_avg = P x duty; flux = P_avg x efficacy.
    When both a direct current and a sense reading are given, the direct reading is used and
    a warning is raised if they differ by more than 5 % (common practice, no source). An
    efficacy above the white-light ceiling (300 lm/W [WLED]) or the 683 lm/W ceiling [SI]
    raises a warning: no white emitter reaches it.

    Examples
    --------
    >>> est = electrical_estimate(ElectricalSpec(led_volts=3.0, sense_volts=0.40,
    ...                                          sense_ohms=0.50, efficacy_lm_per_w=(90, 130)))
    >>> round(est.led_amps, 3), round(est.led_watts, 3), [round(x, 1) for x in
    ...                                                    est.flux_estimate_lm]
    (0.8, 2.4, [216.0, 312.0])
    """
    warnings: list[str] = []
    led_volts = _positive(spec.led_volts, f"{table} led_volts", source)
    sense_amps: float | None = None
    sense_ohms: float | None = None
    if spec.sense_volts is not None or spec.sense_ohms is not None:
        if spec.sense_volts is None or spec.sense_ohms is None:
            missing = "sense_volts" if spec.sense_volts is None else "sense_ohms"
            raise InputError("sense_volts and sense_ohms go together; one is missing",
                             file=source, field=f"{table} {missing}")
        sense_ohms = _positive(spec.sense_ohms, f"{table} sense_ohms", source)
        sense_volts = _positive(spec.sense_volts, f"{table} sense_volts", source)
        sense_amps = sense_volts / sense_ohms
    if spec.led_amps is not None:
        led_amps = _positive(spec.led_amps, f"{table} led_amps", source)
        current_source = "direct"
        if sense_amps is not None and abs(sense_amps - led_amps) > 0.05 * led_amps:
            warnings.append(
                f"led_amps {led_amps:.3g} A and sense_volts/sense_ohms {sense_amps:.3g} A "
                "differ by more than 5 %; the direct reading led_amps is used")
    elif sense_amps is not None:
        led_amps = sense_amps
        current_source = "sense resistor"
    else:
        raise InputError("give led_amps, or sense_volts and sense_ohms", file=source,
                         field=f"{table} led_amps")
    duty = 1.0 if spec.pwm_duty is None else float(spec.pwm_duty)
    if not math.isfinite(duty) or not 0.0 < duty <= 1.0:
        raise InputError(f"must be in (0, 1], got {duty!r}", file=source,
                         field=f"{table} pwm_duty")
    efficacy: tuple[float, float] | None = None
    flux: tuple[float, float] | None = None
    led_watts = led_volts * led_amps
    average_watts = led_watts * duty
    if spec.efficacy_lm_per_w is not None:
        lo, hi = (float(v) for v in spec.efficacy_lm_per_w)
        if not (math.isfinite(lo) and math.isfinite(hi) and 0.0 < lo <= hi):
            raise InputError(f"must be [low, high] with 0 < low <= high, got [{lo}, {hi}]",
                             file=source, field=f"{table} efficacy_lm_per_w")
        if hi > MAX_LUMINOUS_EFFICACY_LM_PER_W:
            warnings.append(
                f"efficacy_lm_per_w high end {hi:g} lm/W is above "
                f"{MAX_LUMINOUS_EFFICACY_LM_PER_W:g} lm/W, the highest efficacy any light can "
                "have (SI definition of the candela)")
        elif hi > WHITE_LED_MAX_EFFICACY_LM_PER_W:
            warnings.append(
                f"efficacy_lm_per_w high end {hi:g} lm/W is above "
                f"{WHITE_LED_MAX_EFFICACY_LM_PER_W:g} lm/W, the theoretical limit of white LEDs")
        efficacy = (lo, hi)
        flux = (average_watts * lo, average_watts * hi)
    if led_volts > 6.5:
        warnings.append(
            f"led_volts {led_volts:g} V is high for one white LED (about 2.8-3.8 V, from "
            "memory, to confirm); for LEDs in series the efficacy range is per total watt")
    return ElectricalEstimate(
        led_volts=led_volts,
        led_amps=led_amps,
        led_watts=led_watts,
        pwm_duty=duty,
        average_watts=average_watts,
        efficacy_lm_per_w=efficacy,
        flux_estimate_lm=flux,
        current_source=current_source,
        sense_ohms=sense_ohms,
        warnings=tuple(warnings),
    )


# ----------------------------------------------------------------------------------------
# Cross-check
# ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ElectricalCheck:
    """The electrical estimate set against a measured flux.

    Attributes
    ----------
    estimate : ElectricalEstimate
    measured_flux_lm : float or None
        The flux the check used, lm (None: nothing to check).
    measured_flux_sigma_lm : float or None
        Its standard uncertainty (k=1), lm.
    flux_basis : str or None
        The key the flux came from: ``"flux_lm"`` (the flux within ``flux_half_angle_deg``, a
        lower bound of the total) or the caller's name for an extrapolated total.
    flux_half_angle_deg : float or None
        Half angle of the cone the flux was measured in, deg.
    flux_label : str or None
        Label of the shot the flux came from.
    implied_efficacy_lm_per_w : float or None
        measured_flux_lm / average_watts, lm/W.
    implied_efficacy_sigma_lm_per_w : float or None
        Its standard uncertainty (k=1), lm/W.
    verdict : str
        ``"consistent"``, ``"implausibly high"``, ``"low"``, ``"impossible"`` or
        ``"not checked"``.
    reasons : tuple of str
        The verdict in words.
    warnings : tuple of str
    """

    estimate: ElectricalEstimate
    measured_flux_lm: float | None
    measured_flux_sigma_lm: float | None
    flux_basis: str | None
    flux_half_angle_deg: float | None
    flux_label: str | None
    implied_efficacy_lm_per_w: float | None
    implied_efficacy_sigma_lm_per_w: float | None
    verdict: str
    reasons: tuple[str, ...]
    warnings: tuple[str, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        """Return the check under the results.json ``electrical`` key names."""
        out = self.estimate.to_dict()
        out.update({
            "measured_flux_lm": self.measured_flux_lm,
            "measured_flux_sigma_lm": self.measured_flux_sigma_lm,
            "flux_basis": self.flux_basis,
            "flux_half_angle_deg": self.flux_half_angle_deg,
            "flux_label": self.flux_label,
            "implied_efficacy_lm_per_w": self.implied_efficacy_lm_per_w,
            "implied_efficacy_sigma_lm_per_w": self.implied_efficacy_sigma_lm_per_w,
            "verdict": self.verdict,
            "reasons": list(self.reasons),
            "warnings": list(self.estimate.warnings) + list(self.warnings),
        })
        return out


def cross_check(
    estimate: ElectricalEstimate,
    measured_flux_lm: float | None,
    *,
    flux_sigma_lm: float | None = None,
    flux_basis: str = "flux_lm",
    flux_half_angle_deg: float | None = None,
    flux_label: str | None = None,
    power_sigma_fraction: float = 0.02,
) -> ElectricalCheck:
    """Set a measured flux against the electrical estimate and give a verdict.

    Parameters
    ----------
    estimate : ElectricalEstimate
        From :func:`electrical_estimate`.
    measured_flux_lm : float or None
        The measured flux, lm, >= 0; None when there is none (uncalibrated, no photos): the
        verdict is then ``"not checked"``.
    flux_sigma_lm : float, optional
        Its standard uncertainty (k=1), lm; taken as 0 when not given.
    flux_basis : str, optional
        Name of the key the flux came from (default ``"flux_lm"``, the flux within a cone,
        which is a lower bound of the total).
    flux_half_angle_deg : float, optional
        Half angle of that cone, deg, for the reasons.
    flux_label : str, optional
        Label of the shot the flux came from.
    power_sigma_fraction : float, optional
        Relative standard uncertainty of the LED power from the meter readings (default 0.02:
        handheld multimeters read DC volts and amps to about 1-2 %; from memory, to confirm).

    Returns
    -------
    ElectricalCheck

    Raises
    ------
    InputError
        If the flux or its uncertainty is negative or not finite.

    Notes
    -----
    Implied efficacy e = flux / P_avg, with u(e) = e sqrt((u_flux/flux)^2 + u_P^2). The rule
    (k = 2 interval [e - 2u, e + 2u]):

    * e > 683 lm/W [SI]: ``"impossible"``, whatever the uncertainty (no radiation has a higher
      efficacy, so the flux or the electrical readings are wrong);
    * with an efficacy range [lo, hi]: ``"implausibly high"`` when e - 2u > hi, ``"low"`` when
      e + 2u < lo, otherwise ``"consistent"``;
    * without a range: ``"implausibly high"`` when e - 2u > 300 lm/W (white-light ceiling
      [WLED]), otherwise ``"consistent"``.

    The range is for the emitter, while the measured flux is out of the front and within a
    cone: optics losses (a lens or reflector passes about 80-92 %; from memory, to confirm)
    and light outside the cone pull e below the emitter's range, which the reasons say.

    Examples
    --------
    >>> est = electrical_estimate(ElectricalSpec(led_volts=3.0, led_amps=0.8,
    ...                                          efficacy_lm_per_w=(90, 130)))
    >>> chk = cross_check(est, 249.6, flux_sigma_lm=10.0)
    >>> round(chk.implied_efficacy_lm_per_w, 1), chk.verdict
    (104.0, 'consistent')
    """
    warnings: list[str] = []
    reasons: list[str] = []
    p_avg = estimate.average_watts
    duty_note = (f" (average over the PWM duty cycle {estimate.pwm_duty:g})"
                 if estimate.pwm_duty < 1.0 else "")
    if measured_flux_lm is None:
        reasons.append("no measured flux (no photos or no calibration): only the estimate "
                       "from the electrical readings is given")
        return ElectricalCheck(estimate, None, None, None, flux_half_angle_deg, flux_label,
                               None, None, _NOT_CHECKED, tuple(reasons), ())
    flux = float(measured_flux_lm)
    if not math.isfinite(flux) or flux < 0.0:
        raise InputError(f"must be zero or positive, got {flux!r}", field="measured_flux_lm")
    sigma = 0.0 if flux_sigma_lm is None else float(flux_sigma_lm)
    if not math.isfinite(sigma) or sigma < 0.0:
        raise InputError(f"must be zero or positive, got {sigma!r}", field="flux_sigma_lm")
    if flux_sigma_lm is None:
        warnings.append("no uncertainty for the measured flux; the verdict uses the power's "
                        "uncertainty alone")
    e = flux / p_avg
    rel_flux = sigma / flux if flux > 0 else 0.0
    u_e = e * math.hypot(rel_flux, power_sigma_fraction)
    lo_k2, hi_k2 = e - 2.0 * u_e, e + 2.0 * u_e
    cone = (f" within a cone of half angle {flux_half_angle_deg:g} deg"
            if flux_half_angle_deg is not None else "")
    reasons.append(
        f"measured {flux:.4g} lm{cone} ({flux_basis}) from {p_avg:.4g} W{duty_note} implies "
        f"{e:.4g} lm/W (k=2 interval {max(lo_k2, 0.0):.4g}-{hi_k2:.4g} lm/W)")
    rng = estimate.efficacy_lm_per_w
    if e > MAX_LUMINOUS_EFFICACY_LM_PER_W:
        verdict = _IMPOSSIBLE
        reasons.append(
            f"{e:.4g} lm/W exceeds {MAX_LUMINOUS_EFFICACY_LM_PER_W:g} lm/W, the efficacy of "
            "monochromatic 555 nm light and the highest any light can have: the measured flux "
            "or the electrical readings are wrong")
    elif rng is not None and lo_k2 > rng[1]:
        verdict = _HIGH
        reasons.append(
            f"above the emitter's plausible range {rng[0]:g}-{rng[1]:g} lm/W even at the low "
            "end of its interval: check the calibration, the distance, and that the current "
            "was read in the mode photographed")
    elif rng is None and lo_k2 > WHITE_LED_MAX_EFFICACY_LM_PER_W:
        verdict = _HIGH
        reasons.append("no efficacy range given: checked against the white-light ceiling only")
    elif rng is not None and hi_k2 < rng[0]:
        verdict = _LOW
        reasons.append(
            f"below the emitter's plausible range {rng[0]:g}-{rng[1]:g} lm/W even at the high "
            "end of its interval: losses in the optics (a zoom head at its narrow end spills "
            "light onto the tube), a weak or overdriven, hot emitter, or a measurement problem "
            "(calibration, a sagging cell, a current read in another mode)")
        if flux_basis == "flux_lm":
            reasons.append("flux_lm counts only the light within the measured cone: light "
                           "outside it is missing from the implied efficacy")
    else:
        verdict = _CONSISTENT
        if rng is not None:
            reasons.append(f"within the emitter's plausible range {rng[0]:g}-{rng[1]:g} lm/W")
        else:
            reasons.append("no efficacy range given: below the white-light ceiling of "
                           f"{WHITE_LED_MAX_EFFICACY_LM_PER_W:g} lm/W")
    if verdict != _IMPOSSIBLE and lo_k2 > WHITE_LED_MAX_EFFICACY_LM_PER_W:
        reasons.append(
            f"above {WHITE_LED_MAX_EFFICACY_LM_PER_W:g} lm/W, the theoretical limit of white "
            "LEDs")
    return ElectricalCheck(
        estimate=estimate,
        measured_flux_lm=flux,
        measured_flux_sigma_lm=None if flux_sigma_lm is None else sigma,
        flux_basis=flux_basis,
        flux_half_angle_deg=flux_half_angle_deg,
        flux_label=flux_label,
        implied_efficacy_lm_per_w=e,
        implied_efficacy_sigma_lm_per_w=u_e,
        verdict=verdict,
        reasons=tuple(reasons),
        warnings=tuple(warnings),
    )


# ----------------------------------------------------------------------------------------
# Physics-only bound
# ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class PlausibilityBound:
    """The most flux a light could give, from physics alone.

    Attributes
    ----------
    max_watts : float
        The most electrical power the light can put into its LED, W.
    power_basis : str
        ``"measured LED power"`` or ``"cell limit"``.
    max_flux_lm : float
        max_watts x the white-light efficacy ceiling, lm: a claim above it is physically
        impossible for a white light.
    hard_max_flux_lm : float
        max_watts x 683 lm/W, lm: no light of any colour can exceed it.
    efficacy_ceiling_lm_per_w : float
        The white-light ceiling used, lm/W.
    reasons : tuple of str
        How the bound was built, with the values used and where they come from.
    """

    max_watts: float
    power_basis: str
    max_flux_lm: float
    hard_max_flux_lm: float
    efficacy_ceiling_lm_per_w: float
    reasons: tuple[str, ...]

    def to_dict(self) -> dict[str, Any]:
        """Return the bound as a plain dict."""
        return {
            "max_watts": self.max_watts,
            "power_basis": self.power_basis,
            "max_flux_lm": self.max_flux_lm,
            "hard_max_flux_lm": self.hard_max_flux_lm,
            "efficacy_ceiling_lm_per_w": self.efficacy_ceiling_lm_per_w,
            "reasons": list(self.reasons),
        }


def plausibility_bound(
    *,
    average_watts: float | None = None,
    power_margin_fraction: float = 0.10,
    n_cells: int = 1,
    cell_volts: float = LI_ION_MAX_CHARGE_VOLTS,
    cell_max_amps: float = LI_ION_TYPICAL_MAX_AMPS,
    efficacy_ceiling_lm_per_w: float = WHITE_LED_MAX_EFFICACY_LM_PER_W,
) -> PlausibilityBound:
    """Upper bound on a light's flux from the power it can draw and the best white efficacy.

    Parameters
    ----------
    average_watts : float, optional
        The LED's measured average power in the mode the claim is for, W (from
        :func:`electrical_estimate`). When given, the bound uses it (plus the margin);
        otherwise the cells' limit.
    power_margin_fraction : float, optional
        Allowance on the measured power for meter error and a fresher cell, >= 0 (default 0.10,
        common practice, no source).
    n_cells : int, optional
        Number of Li-ion cells in series or parallel (default 1); the cells' limit is
        n_cells x cell_volts x cell_max_amps.
    cell_volts : float, optional
        Highest cell voltage, V (default 4.2 V, a full Li-ion cell [CELL]).
    cell_max_amps : float, optional
        Highest continuous current of one cell, A (default 30 A: from memory, to confirm;
        use the cell maker's rating).
    efficacy_ceiling_lm_per_w : float, optional
        The efficacy ceiling of white light, lm/W, in (0, 683] (default 300 lm/W [WLED]).

    Returns
    -------
    PlausibilityBound

    Raises
    ------
    InputError
        If a number is out of range.

    Notes
    -----
    Phi_max = P_max x eta_max, with P_max = P_avg (1 + margin) when the LED power was measured,
    else n V_cell I_cell,max (a deliberately generous limit: it takes all of the cells' power
    to the LED). The hard bound uses 683 lm/W [SI].

    Examples
    --------
    >>> b = plausibility_bound(average_watts=2.4)
    >>> round(b.max_watts, 2), round(b.max_flux_lm, 1), round(b.hard_max_flux_lm, 1)
    (2.64, 792.0, 1803.1)
    >>> round(plausibility_bound().max_flux_lm)   # one cell, 4.2 V x 30 A x 300 lm/W
    37800
    """
    if not math.isfinite(power_margin_fraction) or power_margin_fraction < 0.0:
        raise InputError(f"must be zero or positive, got {power_margin_fraction!r}",
                         field="power_margin_fraction")
    eta = float(efficacy_ceiling_lm_per_w)
    if not math.isfinite(eta) or not 0.0 < eta <= MAX_LUMINOUS_EFFICACY_LM_PER_W:
        raise InputError(f"must be in (0, {MAX_LUMINOUS_EFFICACY_LM_PER_W:g}], got {eta!r}",
                         field="efficacy_ceiling_lm_per_w")
    reasons: list[str] = []
    if average_watts is not None:
        p = _positive(average_watts, "average_watts", None)
        max_watts = p * (1.0 + power_margin_fraction)
        basis = "measured LED power"
        reasons.append(f"measured LED power {p:.4g} W plus {100 * power_margin_fraction:g} % "
                       "for meter error and a fresher cell")
    else:
        if int(n_cells) != n_cells or n_cells < 1:
            raise InputError(f"must be a whole number >= 1, got {n_cells!r}", field="n_cells")
        v = _positive(cell_volts, "cell_volts", None)
        i = _positive(cell_max_amps, "cell_max_amps", None)
        max_watts = int(n_cells) * v * i
        basis = "cell limit"
        reasons.append(f"{int(n_cells)} cell(s) x {v:g} V x {i:g} A = {max_watts:.4g} W, all "
                       "of it taken to the LED (cell current rating from memory, to confirm)")
    reasons.append(f"times {eta:g} lm/W, the efficacy ceiling of white light")
    return PlausibilityBound(
        max_watts=max_watts,
        power_basis=basis,
        max_flux_lm=max_watts * eta,
        hard_max_flux_lm=max_watts * MAX_LUMINOUS_EFFICACY_LM_PER_W,
        efficacy_ceiling_lm_per_w=eta,
        reasons=tuple(reasons),
    )


# ----------------------------------------------------------------------------------------
# Output over time
# ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class RuntimePrediction:
    """Current, power and output against time for a resistor-limited light.

    Attributes
    ----------
    time_s : (n,) ndarray
        Time since switch-on, s.
    current_a : (n,) ndarray
        LED current while on, A.
    led_volts : (n,) ndarray
        LED forward voltage, V.
    cell_volts : (n,) ndarray
        Cell terminal voltage under load, V.
    soc_fraction : (n,) ndarray
        State of charge, 0..1.
    power_w : (n,) ndarray
        Average LED power, W (V x I x duty).
    relative_output : (n,) ndarray
        Output relative to the output at 30 s.
    flux_lm, intensity_cd : (n,) ndarray or None
        The output scaled to the flux and intensity measured at the operating point.
    runtime_s : float or None
        Time from switch-on until the output falls to 10 % of its value at 30 s, or until the
        cell empties or a cutoff acts (the output then drops to zero; see ``stop_reason``).
    stop_reason : str
        ``"output at 10 %"``, ``"cell empty"``, ``"cutoff voltage"`` or ``"LED off"`` (the
        cell's voltage no longer lights the LED).
    end_time_s : float
        When the simulation stopped, s.
    assumptions : tuple of str
        Every model value used and where it comes from.
    warnings : tuple of str
    """

    time_s: np.ndarray
    current_a: np.ndarray
    led_volts: np.ndarray
    cell_volts: np.ndarray
    soc_fraction: np.ndarray
    power_w: np.ndarray
    relative_output: np.ndarray
    flux_lm: np.ndarray | None
    intensity_cd: np.ndarray | None
    runtime_s: float
    stop_reason: str
    end_time_s: float
    assumptions: tuple[str, ...]
    warnings: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        """Return the prediction as plain lists and numbers."""
        def arr(a: np.ndarray | None) -> list[float] | None:
            return None if a is None else [float(x) for x in a]

        return {
            "time_s": arr(self.time_s),
            "current_a": arr(self.current_a),
            "led_volts": arr(self.led_volts),
            "cell_volts": arr(self.cell_volts),
            "soc_fraction": arr(self.soc_fraction),
            "power_w": arr(self.power_w),
            "relative_output": arr(self.relative_output),
            "flux_lm": arr(self.flux_lm),
            "intensity_cd": arr(self.intensity_cd),
            "runtime_s": self.runtime_s,
            "stop_reason": self.stop_reason,
            "end_time_s": self.end_time_s,
            "assumptions": list(self.assumptions),
            "warnings": list(self.warnings),
        }


def _check_ocv_table(table: Sequence[Sequence[float]]) -> tuple[np.ndarray, np.ndarray]:
    arr = np.asarray(table, dtype=float)
    if arr.ndim != 2 or arr.shape[1] != 2 or arr.shape[0] < 2:
        raise InputError("must be at least two rows of [soc_fraction, volts]",
                         field="cell_ocv_table")
    soc, volts = arr[:, 0], arr[:, 1]
    if not np.all(np.isfinite(arr)):
        raise InputError("holds a value that is not a finite number", field="cell_ocv_table")
    if np.any(np.diff(soc) <= 0):
        raise InputError("soc_fraction must increase strictly from row to row",
                         field="cell_ocv_table")
    if soc[0] < 0.0 or soc[-1] > 1.0:
        raise InputError("soc_fraction must lie in [0, 1]", field="cell_ocv_table")
    if np.any(volts <= 0):
        raise InputError("volts must be positive", field="cell_ocv_table")
    return soc, volts


def predict_output_over_time(
    *,
    led_volts: float,
    led_amps: float,
    ballast_ohms: float,
    capacity_ah: float,
    cell_ocv_table: Sequence[Sequence[float]] | None = None,
    cell_ohms: float | None = None,
    driver_drop_volts: float | None = None,
    measured_at_soc_fraction: float = 1.0,
    measured_cell_volts: float | None = None,
    led_ideality: float | None = None,
    led_series_ohms: float | None = None,
    flux_current_exponent: float = 1.0,
    pwm_duty: float = 1.0,
    flux_lm: float | None = None,
    intensity_cd: float | None = None,
    cutoff_volts: float | None = None,
    n_points: int = 2001,
) -> RuntimePrediction:
    """Predict output against time for a light whose LED current is set by a resistor.

    Parameters
    ----------
    led_volts, led_amps : float
        The measured operating point: LED forward voltage, V, and current, A (both > 0).
    ballast_ohms : float
        The ballast (or sense) resistance in the loop, ohm, >= 0.
    capacity_ah : float
        The cell's capacity, Ah, > 0 (from its data sheet, or measured).
    cell_ocv_table : sequence of (soc_fraction, volts), optional
        The cell's open-circuit voltage against state of charge, soc_fraction strictly
        increasing in [0, 1]; outside the table the end rows hold. Default
        :data:`DEFAULT_OCV_TABLE` (from memory, to confirm).
    cell_ohms : float, optional
        The cell's internal resistance, ohm (default :data:`DEFAULT_CELL_OHMS`, from memory).
    driver_drop_volts : float, optional
        Voltage lost in the switch, springs, wiring and any driver FET, V. Default: inferred so
        that the model passes through the measured point at ``measured_at_soc_fraction``.
    measured_at_soc_fraction : float, optional
        State of charge of the cell when the point was measured (default 1.0, a fresh cell),
        and the state of charge the simulation starts from.
    measured_cell_volts : float, optional
        The cell's open-circuit voltage read when the point was measured, V; when given, it
        sets ``measured_at_soc_fraction`` through the OCV table (which must then rise
        strictly).
    led_ideality, led_series_ohms : float, optional
        The LED model's ideality factor and series resistance (defaults
        :data:`DEFAULT_LED_IDEALITY`, :data:`DEFAULT_LED_SERIES_OHMS`, from memory).
    flux_current_exponent : float, optional
        Output taken as proportional to I^gamma (default 1: output proportional to current,
        common practice, no source; droop makes gamma < 1 at high current densities).
    pwm_duty : float, optional
        Fraction of time the LED is on, (0, 1] (default 1); the cell's charge is drawn at the
        average current, its voltage sags under the on-current.
    flux_lm, intensity_cd : float, optional
        Flux and peak intensity measured at the operating point, to scale the output.
    cutoff_volts : float, optional
        A low-voltage cutoff (a protected cell's board, or the light's own), V; None: none.
    n_points : int, optional
        Number of state-of-charge steps from the start to an empty cell (default 2001).

    Returns
    -------
    RuntimePrediction

    Raises
    ------
    InputError
        If a value is out of range or the OCV table is malformed.

    Notes
    -----
    Each step solves, for the on-current I [OHM][SHOCKLEY]:

        V_ocv(SOC) - I (R_cell + R_ballast) - V_drop = V_LED(I),
        V_LED(I) = V_m + n V_T ln(I / I_m) + R_s (I - I_m),

    the LED model being pinned to the measured point (V_m, I_m), on a grid of states of charge
    from the start to 0. As dSOC/dt = -I duty / (3600 C), the time is the integral
    t(SOC) = int 3600 C / (I(s) duty) ds (trapezoids), which ends exactly when the cell is
    empty (a constant current gives t = C / I). The run time is the first time at or after
    30 s at which the output falls to 10 % of its value at 30 s, measured from switch-on [FL1]
    (interpolated between grid points); when the cell empties, a cutoff acts or the LED stops
    conducting first, the output drops to zero there and the run time ends there.

    Examples
    --------
    >>> flat = ((0.0, 3.7), (1.0, 3.7))   # a constant-voltage cell: constant current
    >>> p = predict_output_over_time(led_volts=3.0, led_amps=1.0, ballast_ohms=0.5,
    ...                              capacity_ah=2.0, cell_ocv_table=flat, cell_ohms=0.0)
    >>> p.stop_reason, round(p.end_time_s / 3600, 3)   # 2 Ah / 1 A = 2 h
    ('cell empty', 2.0)
    """
    assumptions: list[str] = []
    warnings: list[str] = []
    v_m = _positive(led_volts, "led_volts", None)
    i_m = _positive(led_amps, "led_amps", None)
    capacity = _positive(capacity_ah, "capacity_ah", None)
    r_b = float(ballast_ohms)
    if not math.isfinite(r_b) or r_b < 0:
        raise InputError(f"must be zero or positive, got {r_b!r}", field="ballast_ohms")
    if cell_ocv_table is None:
        soc_tab, ocv_tab = _check_ocv_table(DEFAULT_OCV_TABLE)
        assumptions.append("open-circuit voltage against state of charge: a typical NMC "
                           "Li-ion curve, from memory, to confirm")
    else:
        soc_tab, ocv_tab = _check_ocv_table(cell_ocv_table)
        assumptions.append("open-circuit voltage against state of charge: the table given")
        if soc_tab[0] > 0.0 or soc_tab[-1] < 1.0:
            warnings.append("the OCV table does not span 0-1 state of charge; its end rows "
                            "are held beyond it")
    if cell_ohms is None:
        r_c = DEFAULT_CELL_OHMS
        assumptions.append(f"cell internal resistance {r_c * 1000:g} mOhm, typical of a new "
                           "high-drain cell, from memory, to confirm")
    else:
        r_c = float(cell_ohms)
        if not math.isfinite(r_c) or r_c < 0:
            raise InputError(f"must be zero or positive, got {r_c!r}", field="cell_ohms")
        assumptions.append(f"cell internal resistance {r_c * 1000:g} mOhm, as given")
    n = DEFAULT_LED_IDEALITY if led_ideality is None else float(led_ideality)
    r_s = DEFAULT_LED_SERIES_OHMS if led_series_ohms is None else float(led_series_ohms)
    if not math.isfinite(n) or n <= 0:
        raise InputError(f"must be positive, got {n!r}", field="led_ideality")
    if not math.isfinite(r_s) or r_s < 0:
        raise InputError(f"must be zero or positive, got {r_s!r}", field="led_series_ohms")
    assumptions.append(
        f"LED: V = {v_m:g} V + {n:g} x {THERMAL_VOLTAGE_V * 1000:.2f} mV x ln(I / {i_m:g} A) + "
        f"{r_s:g} ohm x (I - {i_m:g} A), through the measured point; ideality "
        f"{'given' if led_ideality is not None else 'from memory, to confirm'}, series "
        f"resistance {'given' if led_series_ohms is not None else 'from memory, to confirm'}")
    if measured_cell_volts is not None:
        v_cell = _positive(measured_cell_volts, "measured_cell_volts", None)
        if np.any(np.diff(ocv_tab) <= 0):
            raise InputError("the OCV table must rise strictly to find the state of charge "
                             "from a voltage", field="measured_cell_volts")
        if not ocv_tab[0] <= v_cell <= ocv_tab[-1]:
            warnings.append(f"measured cell voltage {v_cell:g} V lies outside the OCV table "
                            f"({ocv_tab[0]:g}-{ocv_tab[-1]:g} V); the nearest end is used")
        measured_at_soc_fraction = float(np.interp(v_cell, ocv_tab, soc_tab))
        assumptions.append(f"starting state of charge {measured_at_soc_fraction:.3g}, from "
                           f"the measured cell voltage {v_cell:g} V")
    if not 0.0 <= measured_at_soc_fraction <= 1.0:
        raise InputError(f"must be in [0, 1], got {measured_at_soc_fraction!r}",
                         field="measured_at_soc_fraction")
    if not math.isfinite(pwm_duty) or not 0.0 < pwm_duty <= 1.0:
        raise InputError(f"must be in (0, 1], got {pwm_duty!r}", field="pwm_duty")
    if not math.isfinite(flux_current_exponent) or flux_current_exponent <= 0:
        raise InputError(f"must be positive, got {flux_current_exponent!r}",
                         field="flux_current_exponent")
    assumptions.append(f"output proportional to current^{flux_current_exponent:g}"
                       + (" (common practice, no source)" if flux_current_exponent == 1.0
                          else ""))
    r_loop = r_c + r_b

    def ocv(soc: float) -> float:
        return float(np.interp(soc, soc_tab, ocv_tab))

    if driver_drop_volts is None:
        v_drop = ocv(measured_at_soc_fraction) - i_m * r_loop - v_m
        if v_drop < 0:
            warnings.append(
                f"the cell model cannot push {i_m:g} A through {r_loop:.3g} ohm at "
                f"{v_m:g} V from {ocv(measured_at_soc_fraction):.3g} V (short by "
                f"{-v_drop:.3g} V); the driver drop is set to 0 and the start current is lower "
                "than measured")
            v_drop = 0.0
        assumptions.append(f"driver, switch and wiring drop {v_drop:.3g} V, inferred from the "
                           "measured point")
    else:
        v_drop = float(driver_drop_volts)
        if not math.isfinite(v_drop) or v_drop < 0:
            raise InputError(f"must be zero or positive, got {v_drop!r}",
                             field="driver_drop_volts")
        assumptions.append(f"driver, switch and wiring drop {v_drop:g} V, as given")
    a = n * THERMAL_VOLTAGE_V

    def led_v(i: float) -> float:
        return v_m + a * math.log(i / i_m) + r_s * (i - i_m)

    i_floor = i_m * 1e-9
    cutoff = None if cutoff_volts is None else _positive(cutoff_volts, "cutoff_volts", None)
    if int(n_points) != n_points or n_points < 10:
        raise InputError(f"must be a whole number >= 10, got {n_points!r}", field="n_points")
    soc0 = float(measured_at_soc_fraction)
    soc_arr = np.linspace(soc0, 0.0, int(n_points))
    head = np.interp(soc_arr, soc_tab, ocv_tab) - v_drop

    def f(i: np.ndarray) -> np.ndarray:
        return head - i * r_loop - (v_m + a * np.log(i / i_m) + r_s * (i - i_m))

    # f falls monotonically with I: bisect, in log I, between a floor and a doubled ceiling.
    lo = np.full_like(head, i_floor)
    hi = np.full_like(head, i_m)
    while np.any(f(hi) > 0):
        hi = np.where(f(hi) > 0, hi * 2.0, hi)
    conducting = f(lo) > 0
    for _ in range(80):
        mid = np.sqrt(lo * hi)
        pos = f(mid) > 0
        lo = np.where(pos, mid, lo)
        hi = np.where(pos, hi, mid)
    current = np.where(conducting, np.sqrt(lo * hi), 0.0)
    # dSOC/dt = -I duty / (3600 C), so t(SOC) = integral of 3600 C / (I duty) dSOC.
    with np.errstate(divide="ignore"):
        dt_dsoc = np.where(current > 0, 3600.0 * capacity / (np.maximum(current, i_floor)
                                                             * pwm_duty), np.inf)
    step = np.abs(np.diff(soc_arr))
    time_s = np.concatenate([[0.0], np.cumsum(0.5 * (dt_dsoc[1:] + dt_dsoc[:-1]) * step)])
    cell_v = head + v_drop - current * r_c
    led_v_arr = np.where(current > 0, v_m + a * np.log(np.maximum(current, i_floor) / i_m)
                         + r_s * (current - i_m), 0.0)
    stop = "cell empty"
    end = len(soc_arr)
    dead = np.nonzero(~np.isfinite(time_s) | (current <= 0))[0]
    if dead.size:
        end = int(dead[0])
        stop = "LED off"
    if cutoff is not None:
        below = np.nonzero(cell_v[:end] < cutoff)[0]
        if below.size:
            end = int(below[0]) + 1
            stop = "cutoff voltage"
    if end < 2:
        raise InputError("the cell model cannot light the LED at the starting state of "
                         "charge", field="measured_at_soc_fraction")
    time_s, current, soc_arr, cell_v, led_v_arr = (
        x[:end] for x in (time_s, current, soc_arr, cell_v, led_v_arr))
    power = led_v_arr * current * pwm_duty
    raw = np.power(current / i_m, flux_current_exponent)
    if time_s[-1] >= RUNTIME_REFERENCE_S:
        ref = float(np.interp(RUNTIME_REFERENCE_S, time_s, raw))
    else:
        ref = float(raw[0])
        warnings.append("the run ended before 30 s; output relative to switch-on")
    relative = raw / ref
    runtime: float
    level = RUNTIME_END_FRACTION
    after = np.nonzero((time_s >= RUNTIME_REFERENCE_S) & (relative <= level))[0]
    if after.size:
        k = int(after[0])
        if k > 0 and relative[k - 1] > level:
            t0, t1, y0, y1 = time_s[k - 1], time_s[k], relative[k - 1], relative[k]
            runtime = max(float(t0 + (y0 - level) * (t1 - t0) / (y0 - y1)),
                          RUNTIME_REFERENCE_S)
        else:
            runtime = float(time_s[k])
        stop = "output at 10 %"
        time_s, current, soc_arr, cell_v, led_v_arr, power, relative = (
            x[:k + 1] for x in (time_s, current, soc_arr, cell_v, led_v_arr, power, relative))
    else:
        runtime = float(time_s[-1])
        if stop == "cutoff voltage":
            warnings.append(f"the cutoff at {cutoff:g} V ended the run before the output fell "
                            "to 10 %")
        else:
            warnings.append("the cell emptied before the output fell to 10 %: the run time "
                            "ends with the cell (over-discharge; see the cautions)")
    flux = None if flux_lm is None else relative * ref * float(flux_lm)
    inten = None if intensity_cd is None else relative * ref * float(intensity_cd)
    return RuntimePrediction(
        time_s=time_s,
        current_a=current,
        led_volts=led_v_arr,
        cell_volts=cell_v,
        soc_fraction=soc_arr,
        power_w=power,
        relative_output=relative,
        flux_lm=flux,
        intensity_cd=inten,
        runtime_s=runtime,
        stop_reason=stop,
        end_time_s=float(time_s[-1]),
        assumptions=tuple(assumptions),
        warnings=tuple(warnings),
    )
